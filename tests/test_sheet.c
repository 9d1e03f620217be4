/* test_sheet.c: the domain sheet's tables and session against closed forms of the 2-parameter model
 * and of the differential W' balance, and its renderers: escaping of hostile text, CSV layout and
 * quoting, no NaN or infinity in any output, document structure; the sheet's two plots. */
#include "cpdomain/plots.h"
#include "cpdomain/sheet.h"
#include "cpdomain/status.h"
#include "cpdomain/units.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>
#include "near.h"
#include <ctype.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

#include <gsl/gsl_errno.h>

/* Four trials on the hyperbola CP 250 W, W' 20 000 J (one 1.5 % long, so the fit has a standard
 * error), or the same shape in m/s and m for speed (cs, d). */
static cpd_pd_result *fit_of(cpd_pd_modality md, double cp, double w)
{
    double x[4], t[4];
    static const double over[4] = {0.6, 0.4, 0.24, 0.12}; /* (P - CP) / CP */
    for (int i = 0; i < 4; i++) {
        x[i] = cp * (1 + over[i]);
        t[i] = w / (x[i] - cp);
    }
    t[2] *= 1.015;
    cpd_pd_ws *ws = cpd_pd_alloc();
    cpd_pd_result *r = calloc(1, sizeof *r);
    assert_non_null(ws);
    assert_non_null(r);
    assert_int_equal(cpd_pd_fit(ws, md, x, t, 4, NULL, r, NULL), CPD_OK);
    cpd_pd_free(ws);
    return r;
}

typedef struct {
    cpd_pd_result *fit;
    cpd_domains_result dom;
    cpd_sheet_tables tables;
    cpd_sheet_session *session;
    char *svg_pd, *svg_bal;
    double x[4], t[4];
    cpd_sheet s;
} fixture;

/* A complete power sheet of model CPD_PD_LINEAR_TOTAL with a GET at 182.5 W and heart rates. */
static fixture *fixture_new(cpd_pd_modality md, double cp, double w, int with_get)
{
    fixture *f = calloc(1, sizeof *f);
    assert_non_null(f);
    f->fit = fit_of(md, cp, w);
    const cpd_pd_model_fit *m = &f->fit->models[CPD_PD_LINEAR_TOTAL];
    assert_true(m->ok && m->has_se);
    cpd_domains_input in;
    memset(&in, 0, sizeof in);
    in.modality = md;
    in.fit = m;
    snprintf(in.fit_date, sizeof in.fit_date, "2026-11-20");
    assert_int_equal(cpd_parse_date("2026-12-01", &in.today), CPD_OK);
    if (with_get) {
        in.has_get = 1;
        in.get = 0.73 * cp;
        snprintf(in.get_source, sizeof in.get_source, "ramp 4");
        snprintf(in.get_date, sizeof in.get_date, "2026-11-02");
        in.has_peak = 1;
        in.peak = 1.45 * cp;
        in.has_hr_get = in.has_hr_rcp = 1;
        in.hr_get = 142;
        in.hr_rcp = 171;
        in.has_rcp = 1; /* below the heavy ceiling: heavy ends at the RCP's heart rate */
        in.rcp = 0.9 * cp;
    }
    in.has_mass = md == CPD_PD_POWER;
    in.mass_kg = 72.5;
    assert_int_equal(cpd_domains_compute(&in, &f->dom), CPD_OK);
    assert_int_equal(cpd_sheet_tables_compute(m, &f->dom, &f->tables), CPD_OK);
    f->session = malloc(sizeof *f->session);
    assert_non_null(f->session);
    assert_int_equal(cpd_sheet_session_build(m, f->session), CPD_OK);
    for (int i = 0; i < 4; i++) {
        f->x[i] = cp * (1.1 + 0.13 * i);
        f->t[i] = w / (f->x[i] - cp);
    }
    assert_int_equal(cpd_plot_pd(m, f->x, f->t, 4, &f->dom, &f->svg_pd), CPD_OK);
    assert_int_equal(cpd_plot_balance(f->session->intensity, f->session->balance, f->session->n, md == CPD_PD_SPEED, m->cp,
                                      m->w_prime, &f->svg_bal),
                     CPD_OK);
    cpd_sheet *s = &f->s;
    s->code = "C07";
    s->name = "Maren Oyelaran-Kask";
    s->sport = md == CPD_PD_SPEED ? "running" : "cycling";
    s->notes = "sprint track, 27";
    s->has_mass = in.has_mass;
    s->mass_kg = 72.5;
    s->date = "2026-12-01";
    s->ntests = 2;
    s->tests[0].what = "4 power-duration trials";
    s->tests[0].date = "2026-11-03 to 2026-11-20";
    s->tests[1].what = "ramp 4 (gas exchange)";
    s->tests[1].date = "2026-11-02";
    s->modality = md;
    s->pace_m = 1000;
    s->pace_label = "/km";
    s->fit = f->fit;
    s->model = CPD_PD_LINEAR_TOTAL;
    s->dom = &f->dom;
    s->tables = &f->tables;
    s->session = f->session;
    s->has_vo2peak = 1;
    s->vo2peak_ml_min = 4137.5;
    s->has_vo2peak_rel = 1;
    s->vo2peak_ml_kg_min = 57.07;
    s->ramp_label = "ramp 4 of 2026-11-02: VO2peak 4.14 L/min";
    s->svg_pd = f->svg_pd;
    s->svg_balance = f->svg_bal;
    s->hr_caution = "Heart rate drifts.";
    s->caution = "Caution: estimates, not guarantees.";
    s->generator = "cpdomain test";
    return f;
}

static void fixture_free(fixture *f)
{
    free(f->fit);
    free(f->session);
    free(f->svg_pd);
    free(f->svg_bal);
    free(f);
}

/* noinline: inlined, gcc 12 mistakes the returned buffer for the address of the local "out" */
__attribute__((noinline)) static char *render(const cpd_sheet *s, cpd_sheet_format fm)
{
    char *out = NULL;
    assert_int_equal(cpd_sheet_render(s, fm, &out), CPD_OK);
    assert_non_null(out);
    return out;
}

static size_t count(const char *hay, const char *needle)
{
    size_t n = 0, L = strlen(needle);
    for (const char *p = strstr(hay, needle); p; p = strstr(p + L, needle))
        n++;
    return n;
}

/* 1 when text holds "nan" or "inf" as a whole word in any case (the printf spellings of NaN and
 * infinity; "information", "influence" or the word "infinity" in a sentence do not count). */
static int has_nonfinite_word(const char *text)
{
    for (const char *p = text; *p; p++) {
        if (p > text && isalpha((unsigned char)p[-1]))
            continue;
        const char *w[] = {"nan", "inf"};
        for (int k = 0; k < 2; k++)
            if (strncasecmp(p, w[k], 3) == 0 && !isalpha((unsigned char)p[3]))
                return 1;
    }
    return 0;
}

static void tables_follow_the_hyperbola(void **state)
{
    (void)state;
    fixture *f = fixture_new(CPD_PD_POWER, 250, 20000, 1);
    const cpd_pd_model_fit *m = &f->fit->models[CPD_PD_LINEAR_TOTAL];
    static const double ts[CPD_SHEET_NTIMES] = {120, 180, 300, 480, 720, 1200};
    for (int k = 0; k < CPD_SHEET_NTIMES; k++) {
        const cpd_sheet_for_time *x = &f->tables.for_time[k];
        assert_near(x->duration_s, ts[k], 0);
        assert_true(x->pred.valid && x->pred.ci_valid);
        /* P = CP + W'/t, the 2-parameter identity (Moritani et al. 1981) */
        assert_near(x->pred.value, m->cp + m->w_prime / ts[k], 1e-9 * m->cp);
        assert_true(x->pred.ci95[0] < x->pred.value && x->pred.value < x->pred.ci95[1]);
    }
    /* 25 W steps from above CP + W'/1800 (about CP + 11 W) up to the severe-extreme boundary */
    const cpd_sheet_tables *tb = &f->tables;
    assert_near(tb->step, 25, 0);
    assert_true(tb->n_at >= 5 && tb->n_at <= 20);
    double lo = m->cp + m->w_prime / CPD_SHEET_AT_LONGEST_S, hi = f->dom.b[CPD_BND_SEVERE_EXTREME].value;
    assert_true(tb->at[0].intensity > lo && tb->at[0].intensity - 25 <= lo);
    assert_true(tb->at[tb->n_at - 1].intensity <= hi && tb->at[tb->n_at - 1].intensity + 25 > hi);
    for (size_t k = 0; k < tb->n_at; k++) {
        const cpd_sheet_at_intensity *a = &tb->at[k];
        assert_near(fmod(a->intensity, 25), 0, 0);
        assert_true(a->pred.valid && a->pred.ci_valid);
        /* t = W'/(P - CP) */
        assert_near(a->pred.value, m->w_prime / (a->intensity - m->cp), 1e-9 * a->pred.value);
        assert_true(a->pred.value <= CPD_SHEET_AT_LONGEST_S);
    }
    fixture_free(f);
}

static void round_steps_adapt(void **state)
{
    (void)state;
    /* a runner: CS 4.5 m/s, D' 200 m: 0.1 m/s gives 19 rows from 4.7 m/s */
    cpd_pd_result *r = fit_of(CPD_PD_SPEED, 4.5, 200);
    cpd_sheet_tables tb;
    assert_int_equal(cpd_sheet_tables_compute(&r->models[CPD_PD_LINEAR_TOTAL], NULL, &tb), CPD_OK);
    /* without domains the upper end is the 2-min speed, CS + D'/120 = 6.17 m/s */
    assert_near(tb.step, 0.1, 0);
    assert_near(tb.at[0].intensity, 4.7, 1e-12);
    assert_near(tb.at[tb.n_at - 1].intensity, 6.1, 1e-12);
    free(r);
    /* a swimmer: CS 1.30 m/s, D' 25 m: two rows at 0.1 m/s, so 0.05 m/s steps */
    r = fit_of(CPD_PD_SPEED, 1.3, 25);
    assert_int_equal(cpd_sheet_tables_compute(&r->models[CPD_PD_LINEAR_TOTAL], NULL, &tb), CPD_OK);
    assert_true(tb.step < 0.1);
    assert_true(tb.n_at >= 5 || tb.step == 0.01);
    free(r);
    /* a large W': coarser steps keep the table at most 20 rows */
    r = fit_of(CPD_PD_POWER, 310, 60000);
    assert_int_equal(cpd_sheet_tables_compute(&r->models[CPD_PD_LINEAR_TOTAL], NULL, &tb), CPD_OK);
    assert_true(tb.step >= 25 && tb.n_at <= 20);
    /* errors */
    assert_int_equal(cpd_sheet_tables_compute(NULL, NULL, &tb), CPD_EUSAGE);
    assert_int_equal(cpd_sheet_tables_compute(&r->models[CPD_PD_LINEAR_TOTAL], NULL, NULL), CPD_EUSAGE);
    cpd_pd_model_fit bad = r->models[CPD_PD_LINEAR_TOTAL];
    bad.ok = 0;
    assert_int_equal(cpd_sheet_tables_compute(&bad, NULL, &tb), CPD_ENODATA);
    bad.ok = 1;
    bad.w_prime = -5;
    assert_int_equal(cpd_sheet_tables_compute(&bad, NULL, &tb), CPD_ENODATA);
    free(r);
}

static void session_follows_the_differential_balance(void **state)
{
    (void)state;
    cpd_pd_result *r = fit_of(CPD_PD_POWER, 250, 20000);
    const cpd_pd_model_fit *m = &r->models[CPD_PD_LINEAR_TOTAL];
    cpd_sheet_session *x = malloc(sizeof *x);
    assert_int_equal(cpd_sheet_session_build(m, x), CPD_OK);
    double p5 = m->cp + m->w_prime / 300;
    double want = floor(m->cp + 0.9 * (p5 - m->cp));
    assert_near(x->interval, want, 0);
    char text[CPD_SHEET_PROTOCOL_MAX];
    snprintf(text, sizeof text, "10min@60%%CP; 5x(3min@%.0fW, 3min@50%%CP)", want);
    assert_string_equal(x->protocol, text);
    assert_int_equal((int)x->n, CPD_SHEET_SESSION_S);
    assert_near(x->warmup, 0.6 * m->cp, 1e-12);
    assert_near(x->recovery, 0.5 * m->cp, 1e-12);
    assert_near(x->intensity[0], 0.6 * m->cp, 1e-12);
    assert_near(x->intensity[600], want, 0);
    assert_near(x->intensity[780], 0.5 * m->cp, 1e-12);
    /* differential model (Skiba et al. 2015 EJAP 115:703), closed forms: below CP from a full
     * balance nothing changes; above CP the balance falls by (P - CP) each second; below CP it
     * recovers as W' - (W' - B0) exp(-(CP - P) t / W'). */
    assert_near(x->balance[599], m->w_prime, 1e-9);
    double b0 = m->w_prime - 180 * (want - m->cp);
    assert_near(x->balance[779], b0, 1e-6);
    double b1 = m->w_prime - (m->w_prime - b0) * exp(-(m->cp - x->recovery) * 180 / m->w_prime);
    assert_near(x->balance[959], b1, 1e-6);
    assert_near(x->interval_spend_pct, 100 * (m->w_prime - b0) / m->w_prime, 1e-9);
    assert_near(x->interval_pct_cp, 100 * want / m->cp, 1e-12);
    assert_false(x->res.failed);
    /* the lowest balance ends the fifth interval: 10 min + 4 x 6 min + 3 min = 2220 s */
    assert_int_equal((int)x->res.min_at_s, 2220);
    assert_near(x->res.min_balance, x->balance[2219], 0);
    assert_near(x->res.end_balance, x->balance[CPD_SHEET_SESSION_S - 1], 0);
    /* speed: the interval is rounded down to 0.01 m/s and typed in m/s */
    free(r);
    r = fit_of(CPD_PD_SPEED, 4.5, 200);
    assert_int_equal(cpd_sheet_session_build(&r->models[CPD_PD_LINEAR_TOTAL], x), CPD_OK);
    assert_non_null(strstr(x->protocol, "m/s, 3min@50%CS)")); /* a runner's session in %CS */
    assert_near(x->interval * 100, floor(x->interval * 100 + 1e-9), 1e-6);
    /* errors */
    assert_int_equal(cpd_sheet_session_build(NULL, x), CPD_EUSAGE);
    assert_int_equal(cpd_sheet_session_build(&r->models[CPD_PD_LINEAR_TOTAL], NULL), CPD_EUSAGE);
    cpd_pd_model_fit bad = r->models[CPD_PD_LINEAR_TOTAL];
    bad.ok = 0;
    assert_int_equal(cpd_sheet_session_build(&bad, x), CPD_ENODATA);
    free(x);
    free(r);
}

static void escape_function(void **state)
{
    (void)state;
    char *o = NULL;
    assert_int_equal(cpd_sheet_escape_html("<script>alert(1)</script>", &o), CPD_OK);
    assert_string_equal(o, "&lt;script&gt;alert(1)&lt;/script&gt;");
    free(o);
    assert_int_equal(cpd_sheet_escape_html("\"Tom\" & 'Jerry' <b>", &o), CPD_OK);
    assert_string_equal(o, "&quot;Tom&quot; &amp; &#39;Jerry&#39; &lt;b&gt;");
    free(o);
    assert_int_equal(cpd_sheet_escape_html("Lucía Álvarez &amp;", &o), CPD_OK);
    assert_string_equal(o, "Lucía Álvarez &amp;amp;");
    free(o);
    assert_int_equal(cpd_sheet_escape_html(NULL, &o), CPD_OK);
    assert_string_equal(o, "");
    free(o);
    assert_int_equal(cpd_sheet_escape_html("x", NULL), CPD_EUSAGE);
}

static const char HOSTILE[] = "<script>alert(1)</script>";

static void hostile_text_is_escaped_in_html(void **state)
{
    (void)state;
    fixture *f = fixture_new(CPD_PD_POWER, 250, 20000, 1);
    cpd_sheet *s = &f->s;
    s->name = HOSTILE;
    s->code = "\"C&1'";
    s->notes = "a<b & \"c\" 'd' </p><p onclick=x>";
    s->sport = "</td><td>";
    s->tests[1].what = "<img src=x onerror=alert(2)>";
    s->nextra = 1;
    s->extra[0].key = "kinetics";
    s->extra[0].title = "VO2 kinetics <i>later</i>";
    s->extra[0].text = "tau & \"delay\"";
    s->extra[0].svg = f->svg_bal;
    s->nnotes = 1;
    s->notes_more[0] = "<iframe src=//x>";
    char *h = render(s, CPD_SHEET_HTML);
    assert_null(strstr(h, "<script"));
    assert_null(strstr(h, "<img"));
    assert_null(strstr(h, "<iframe"));
    assert_null(strstr(h, "<i>"));
    assert_null(strstr(h, "onclick=x>"));
    assert_non_null(strstr(h, "&lt;script&gt;alert(1)&lt;/script&gt;"));
    assert_non_null(strstr(h, "&quot;C&amp;1&#39;"));
    assert_non_null(strstr(h, "a&lt;b &amp; &quot;c&quot; &#39;d&#39; &lt;/p&gt;&lt;p onclick=x&gt;"));
    assert_non_null(strstr(h, "&lt;/td&gt;&lt;td&gt;"));
    assert_non_null(strstr(h, "VO2 kinetics &lt;i&gt;later&lt;/i&gt;"));
    /* the name is also the page title */
    assert_non_null(strstr(h, "<title>&lt;script&gt;"));
    /* structure: one document, balanced containers, the three plots plus the extra section's */
    assert_int_equal(strncmp(h, "<!DOCTYPE html>\n<html lang=\"en\">", 32), 0);
    assert_int_equal(strcmp(h + strlen(h) - 8, "</html>\n"), 0);
    assert_int_equal(count(h, "<html"), 1);
    assert_int_equal(count(h, "<body>"), 1);
    assert_int_equal(count(h, "<div"), count(h, "</div>"));
    assert_int_equal(count(h, "<table"), count(h, "</table>"));
    assert_int_equal(count(h, "<tr"), count(h, "</tr>"));
    assert_int_equal(count(h, "<svg"), 3);
    assert_int_equal(count(h, "</svg>"), 3);
    /* self-contained: no scripts, no links to other files, no remote resources */
    assert_null(strstr(h, "<link"));
    assert_null(strstr(h, " src=\""));
    assert_null(strstr(h, "href=\""));
    assert_null(strstr(h, "url("));
    assert_null(strstr(h, "@import"));
    assert_int_equal(count(h, "http"), count(h, "http://www.w3.org/2000/svg"));
    assert_non_null(strstr(h, "@media print"));
    assert_non_null(strstr(h, "@page"));
    assert_non_null(strstr(h, "name=\"viewport\""));
    /* the caution and the note on uncertainty */
    assert_non_null(strstr(h, "Caution: estimates, not guarantees."));
    char *u = NULL;
    assert_int_equal(cpd_sheet_escape_html(cpd_sheet_uncertainty(), &u), CPD_OK);
    assert_non_null(strstr(h, u));
    free(u);
    assert_non_null(strstr(h, "Heart rate drifts."));
    assert_false(has_nonfinite_word(h));
    free(h);
    /* hostile text in the text and CSV renderers: CSV quotes and guards, text is verbatim */
    char *c = render(s, CPD_SHEET_CSV);
    assert_non_null(strstr(c, "athlete,,name,<script>alert(1)</script>,\r\n"));
    assert_non_null(strstr(c, "athlete,,code,\"\"\"C&1'\",\r\n"));
    free(c);
    s->name = "=HYPERLINK(\"http://x\"),\"y\"";
    c = render(s, CPD_SHEET_CSV);
    assert_non_null(strstr(c, "athlete,,name,\"'=HYPERLINK(\"\"http://x\"\"),\"\"y\"\"\",\r\n"));
    free(c);
    fixture_free(f);
}

/* Splits one CSV record (RFC 4180) starting at *p into at most 8 fields; returns the field count
 * and moves *p past the CRLF. */
static int csv_record(const char **p, char fields[8][1200])
{
    int n = 0;
    size_t k = 0;
    int q = 0;
    const char *s = *p;
    fields[0][0] = '\0';
    for (;; s++) {
        if (q) {
            if (*s == '"' && s[1] == '"') {
                fields[n][k++] = '"';
                s++;
            } else if (*s == '"')
                q = 0;
            else if (*s == '\0')
                return -1;
            else
                fields[n][k++] = *s;
            continue;
        }
        if (*s == '"' && k == 0)
            q = 1;
        else if (*s == ',' || *s == '\r' || *s == '\0') {
            fields[n][k] = '\0';
            n++;
            k = 0;
            if (*s != ',') {
                if (*s == '\r')
                    s += s[1] == '\n' ? 2 : 1;
                *p = s;
                return n;
            }
            if (n == 8)
                return -1;
            fields[n][0] = '\0';
        } else
            fields[n][k++] = *s;
    }
}

static double csv_value(const char *csv, const char *section, const char *item, const char *key)
{
    char f[8][1200];
    const char *p = csv;
    while (*p) {
        int n = csv_record(&p, f);
        assert_int_equal(n, 5);
        if (!strcmp(f[0], section) && !strcmp(f[1], item) && !strcmp(f[2], key)) {
            if (!f[3][0])
                return NAN;
            char *end = NULL;
            double v = strtod(f[3], &end);
            assert_true(end && *end == '\0');
            return v;
        }
    }
    fail_msg("no CSV row %s,%s,%s", section, item, key);
    return NAN;
}

static void csv_layout(void **state)
{
    (void)state;
    fixture *f = fixture_new(CPD_PD_POWER, 250, 20000, 1);
    const cpd_pd_model_fit *m = &f->fit->models[CPD_PD_LINEAR_TOTAL];
    char *c = render(&f->s, CPD_SHEET_CSV);
    assert_int_equal(strncmp(c, "section,item,key,value,unit\r\n", 29), 0);
    /* every record has five fields and ends in CRLF */
    char fl[8][1200];
    const char *p = c;
    size_t rows = 0;
    while (*p) {
        assert_int_equal(csv_record(&p, fl), 5);
        rows++;
    }
    assert_true(rows > 100);
    assert_int_equal(count(c, "\r\n"), rows);
    /* 10 significant digits: the numbers come back within 5e-10 relative */
    assert_near(csv_value(c, "fit", "", "cp"), m->cp, 5e-10 * m->cp);
    assert_near(csv_value(c, "fit", "", "w_prime"), m->w_prime, 5e-10 * m->w_prime);
    assert_near(csv_value(c, "fit", "", "cp_ci95_lo"), m->cp_ci95[0], 5e-10 * m->cp);
    assert_near(csv_value(c, "boundary", "moderate-heavy", "value"), 0.73 * 250, 1e-9);
    assert_true(isnan(csv_value(c, "boundary", "moderate-heavy", "ci95_lo")));
    assert_near(csv_value(c, "boundary", "heavy-severe", "value"), m->cp, 5e-10 * m->cp);
    assert_near(csv_value(c, "boundary", "severe-extreme", "value"), f->dom.b[CPD_BND_SEVERE_EXTREME].value, 1e-7);
    assert_near(csv_value(c, "power_for_time", "300", "value"), m->cp + m->w_prime / 300, 1e-7);
    char item[32];
    snprintf(item, sizeof item, "%.10g", f->tables.at[0].intensity);
    assert_near(csv_value(c, "time_at_power", item, "value"), f->tables.at[0].pred.value, 1e-6);
    assert_near(csv_value(c, "target", "heavy", "hi_hr_bpm"), 171, 0);
    assert_true(isnan(csv_value(c, "target", "moderate", "lo")));
    assert_near(csv_value(c, "session", "", "min_balance_at_s"), 2220, 0);
    assert_true(isnan(csv_value(c, "session", "", "failure_at_s")));
    assert_near(csv_value(c, "ramp", "", "vo2peak_ml_min"), 4137.5, 0);
    assert_near(csv_value(c, "model", "linear-total", "best"), f->fit->best == CPD_PD_LINEAR_TOTAL, 0);
    assert_non_null(strstr(c, "\r\nflag,time_to_vo2max_assumed,text,"));
    assert_non_null(strstr(c, "\r\ncaution,,safety,\"Caution: estimates, not guarantees.\",\r\n"));
    free(c);
    /* speed: CS and D' keys, m/s and m units, pace in the text */
    fixture *g = fixture_new(CPD_PD_SPEED, 4.5, 200, 0);
    c = render(&g->s, CPD_SHEET_CSV);
    assert_near(csv_value(c, "fit", "", "cs"), g->fit->models[CPD_PD_LINEAR_TOTAL].cp, 5e-10 * 4.5);
    assert_near(csv_value(c, "fit", "", "d_prime"), g->fit->models[CPD_PD_LINEAR_TOTAL].w_prime, 5e-10 * 200);
    assert_non_null(strstr(c, "\r\nfit,,cs,"));
    assert_null(strstr(c, "\r\nfit,,cp,"));
    assert_non_null(strstr(c, ",m/s\r\n"));
    assert_non_null(strstr(c, "\r\nspeed_for_time,120,value,"));
    assert_true(isnan(csv_value(c, "boundary", "moderate-heavy", "value")));
    free(c);
    char *t = render(&g->s, CPD_SHEET_TXT);
    assert_non_null(strstr(t, "/km"));
    assert_non_null(strstr(t, "CS 4.5"));
    free(t);
    char *h = render(&g->s, CPD_SHEET_HTML);
    assert_non_null(strstr(h, "moderate or heavy (no GET)"));
    assert_non_null(strstr(h, "faster&nbsp;than&nbsp;"));
    free(h);
    fixture_free(g);
    fixture_free(f);
}

static void text_structure(void **state)
{
    (void)state;
    fixture *f = fixture_new(CPD_PD_POWER, 250, 20000, 1);
    char *t = render(&f->s, CPD_SHEET_TXT);
    const char *parts[] = {"C07 Maren Oyelaran-Kask, cycling, 72.5 kg: intensity-domain sheet of 2026-12-01",
                           "domains and targets:", "boundaries:", "power for a time to task failure:",
                           "time to task failure at a power:", "suggested session:", "models:", "quality notes:",
                           "Heart rate drifts.", "Caution: estimates, not guarantees."};
    const char *prev = t;
    for (size_t k = 0; k < sizeof parts / sizeof parts[0]; k++) {
        const char *q = strstr(prev, parts[k]);
        assert_non_null(q);
        prev = q;
    }
    assert_non_null(strstr(t, "cpdomain predict C07 --protocol \"10min@60%CP; 5x(3min@310W, 3min@50%CP)\""));
    assert_false(has_nonfinite_word(t));
    free(t);
    fixture_free(f);
}

static void no_nan_or_infinity_anywhere(void **state)
{
    (void)state;
    fixture *f = fixture_new(CPD_PD_POWER, 250, 20000, 1);
    cpd_sheet *s = &f->s;
    /* poison every number a caller might get wrong */
    s->mass_kg = NAN;
    s->vo2peak_ml_min = INFINITY;
    s->vo2peak_ml_kg_min = NAN;
    f->tables.for_time[2].pred.value = NAN;
    f->tables.for_time[3].pred.ci95[1] = INFINITY;
    f->tables.at[0].pred.value = -INFINITY;
    f->tables.at[1].pred.ci95[0] = NAN;
    f->tables.at[2].intensity = NAN;
    f->session->res.min_balance = NAN;
    f->session->interval_pct_cp = INFINITY;
    f->dom.b[CPD_BND_MOD_HEAVY].value = NAN;
    f->dom.b[CPD_BND_SEVERE_EXTREME].ci95[0] = -INFINITY;
    f->dom.range[CPD_DOM_HEAVY].hi_w_kg = NAN;
    f->dom.range[CPD_DOM_SEVERE].hr_lo = INFINITY;
    f->dom.heavy_ceiling = NAN;
    f->dom.delta_value[1] = NAN;
    f->fit->models[CPD_PD_HYPERBOLIC].see_cp_pct = NAN;
    for (int k = 0; k < 3; k++) {
        char *o = render(s, (cpd_sheet_format)k);
        if (has_nonfinite_word(o)) {
            fputs(o, stderr);
            fail_msg("format %d holds nan or inf", k);
        }
        free(o);
    }
    /* a fit without standard errors (as many trials as parameters) renders without intervals */
    static const double P[2] = {400, 300}, T[2] = {180, 720};
    cpd_pd_ws *w = cpd_pd_alloc();
    cpd_pd_result *r = calloc(1, sizeof *r);
    assert_int_equal(cpd_pd_fit(w, CPD_PD_POWER, P, T, 2, NULL, r, NULL), CPD_OK);
    cpd_pd_free(w);
    s->fit = r;
    s->model = CPD_PD_HYPERBOLIC;
    assert_false(r->models[CPD_PD_HYPERBOLIC].has_se);
    cpd_sheet_tables tb;
    assert_int_equal(cpd_sheet_tables_compute(&r->models[CPD_PD_HYPERBOLIC], NULL, &tb), CPD_OK);
    assert_false(tb.for_time[0].pred.ci_valid);
    s->tables = &tb;
    for (int k = 0; k < 3; k++) {
        char *o = render(s, (cpd_sheet_format)k);
        assert_false(has_nonfinite_word(o));
        if (k == CPD_SHEET_HTML)
            assert_non_null(strstr(o, "no interval (exact fit)"));
        free(o);
    }
    free(r);
    fixture_free(f);
}

static void render_errors(void **state)
{
    (void)state;
    fixture *f = fixture_new(CPD_PD_POWER, 250, 20000, 1);
    char *o = (char *)"untouched";
    assert_int_equal(cpd_sheet_render(NULL, CPD_SHEET_HTML, &o), CPD_EUSAGE);
    assert_null(o);
    assert_int_equal(cpd_sheet_render(&f->s, CPD_SHEET_HTML, NULL), CPD_EUSAGE);
    assert_int_equal(cpd_sheet_render(&f->s, (cpd_sheet_format)7, &o), CPD_EUSAGE);
    cpd_sheet bad = f->s;
    bad.code = NULL;
    assert_int_equal(cpd_sheet_render(&bad, CPD_SHEET_CSV, &o), CPD_EUSAGE);
    bad = f->s;
    bad.tables = NULL;
    assert_int_equal(cpd_sheet_render(&bad, CPD_SHEET_TXT, &o), CPD_EUSAGE);
    bad = f->s;
    bad.model = CPD_PD_NMODELS;
    assert_int_equal(cpd_sheet_render(&bad, CPD_SHEET_HTML, &o), CPD_EUSAGE);
    bad = f->s;
    bad.model = CPD_PD_THREE_PARAMETER; /* not fitted: three parameters on an exact hyperbola */
    if (!f->fit->models[CPD_PD_THREE_PARAMETER].ok)
        assert_int_equal(cpd_sheet_render(&bad, CPD_SHEET_HTML, &o), CPD_EUSAGE);
    bad = f->s;
    bad.ntests = CPD_SHEET_MAX_TESTS + 1;
    assert_int_equal(cpd_sheet_render(&bad, CPD_SHEET_HTML, &o), CPD_EUSAGE);
    /* without session, ramp or plots the sections are left out */
    bad = f->s;
    bad.session = NULL;
    bad.svg_pd = bad.svg_balance = bad.svg_vslope = NULL;
    bad.ramp_label = NULL;
    o = render(&bad, CPD_SHEET_HTML);
    assert_null(strstr(o, "<svg"));
    assert_null(strstr(o, "suggested interval session"));
    assert_null(strstr(o, "Ramp test"));
    free(o);
    fixture_free(f);
}

static void index_page(void **state)
{
    (void)state;
    cpd_sheet_index_row rows[3];
    memset(rows, 0, sizeof rows);
    rows[0].code = "C01";
    rows[0].name = HOSTILE;
    rows[0].sport = "cycling";
    rows[0].href = "C01.html";
    rows[0].has_fit = 1;
    rows[0].cp = 234.08;
    rows[0].w_prime = 15739.2;
    rows[0].has_cp_ci = 1;
    rows[0].cp_ci95[0] = 220.28;
    rows[0].cp_ci95[1] = 247.89;
    rows[0].has_get = 1;
    rows[0].get = 173.43;
    rows[0].has_vo2peak = 1;
    rows[0].vo2peak_ml_min = 3284.6;
    rows[0].fit_dates = "2026-10-05 to 2026-10-19";
    rows[0].ramp_date = "2026-09-29";
    rows[0].stale = 1;
    rows[1].code = "R01";
    rows[1].name = "Devika \"Dev\" Ranganathan";
    rows[1].modality = CPD_PD_SPEED;
    rows[1].pace_m = 1000;
    rows[1].pace_label = "/km";
    rows[1].href = "R01.html";
    rows[1].has_fit = 1;
    rows[1].cp = 4.565;
    rows[1].w_prime = 203;
    rows[1].cp_ci95[0] = NAN; /* no interval flagged: must not print */
    rows[2].code = "X9";
    rows[2].name = "Nobody & Co";
    rows[2].why = "not enough data <yet>";
    char *h = NULL;
    assert_int_equal(cpd_sheet_index_html("Tarnbridge <Centre>", "2026-11-30", rows, 3, "Caution & care", "cpdomain test", &h), CPD_OK);
    assert_null(strstr(h, "<script"));
    assert_non_null(strstr(h, "<a href=\"C01.html\">&lt;script&gt;alert(1)&lt;/script&gt;</a>"));
    assert_non_null(strstr(h, "<a href=\"R01.html\">Devika &quot;Dev&quot; Ranganathan</a>"));
    assert_non_null(strstr(h, "Nobody &amp; Co"));
    assert_non_null(strstr(h, "no sheet: not enough data &lt;yet&gt;"));
    assert_non_null(strstr(h, "<h1>Tarnbridge &lt;Centre&gt;</h1>"));
    assert_non_null(strstr(h, "234 W"));
    assert_non_null(strstr(h, "220 W to 248 W"));
    assert_non_null(strstr(h, "15.74 kJ"));
    assert_non_null(strstr(h, "173 W"));
    assert_non_null(strstr(h, "3.28 L/min"));
    assert_non_null(strstr(h, "4.57 m/s <small>3:39/km</small>"));
    assert_non_null(strstr(h, "203 m"));
    assert_non_null(strstr(h, "a boundary is stale"));
    assert_non_null(strstr(h, "<p>Caution &amp; care</p>"));
    assert_int_equal(count(h, "<a href="), 2);
    assert_int_equal(count(h, "<tr"), count(h, "</tr>"));
    assert_int_equal(count(h, "<div"), count(h, "</div>"));
    assert_false(has_nonfinite_word(h));
    free(h);
    assert_int_equal(cpd_sheet_index_html("Empty", "2026-11-30", NULL, 0, NULL, NULL, &h), CPD_OK);
    assert_non_null(strstr(h, "no athletes"));
    free(h);
    assert_int_equal(cpd_sheet_index_html(NULL, "2026-11-30", rows, 3, NULL, NULL, &h), CPD_EUSAGE);
    assert_int_equal(cpd_sheet_index_html("t", NULL, rows, 3, NULL, NULL, &h), CPD_EUSAGE);
    assert_int_equal(cpd_sheet_index_html("t", "d", NULL, 2, NULL, NULL, &h), CPD_EUSAGE);
    assert_int_equal(cpd_sheet_index_html("t", "d", rows, 3, NULL, NULL, NULL), CPD_EUSAGE);
    rows[1].name = NULL;
    assert_int_equal(cpd_sheet_index_html("t", "d", rows, 3, NULL, NULL, &h), CPD_EUSAGE);
}

static void sheet_plots(void **state)
{
    (void)state;
    fixture *f = fixture_new(CPD_PD_POWER, 250, 20000, 1);
    const char *svg = f->svg_pd;
    assert_int_equal(strncmp(svg, "<svg xmlns=\"http://www.w3.org/2000/svg\"", 39), 0);
    assert_non_null(strstr(svg, "<title>Power-duration relationship</title>"));
    const char *labels[] = {">moderate<", ">heavy<", ">severe<", ">extreme<", "95 % band", "linear-total model", ">trials<",
                            "CP 250 W"};
    for (size_t k = 0; k < sizeof labels / sizeof labels[0]; k++)
        if (!strstr(svg, labels[k]))
            fail_msg("the power-duration plot lacks '%s'", labels[k]);
    assert_false(has_nonfinite_word(svg));
    svg = f->svg_bal;
    assert_non_null(strstr(svg, "balance of the session</title>"));
    assert_non_null(strstr(svg, "power (right axis)"));
    assert_false(has_nonfinite_word(svg));
    const cpd_pd_model_fit *m = &f->fit->models[CPD_PD_LINEAR_TOTAL];
    char *o = (char *)"x";
    assert_int_equal(cpd_plot_pd(m, NULL, NULL, 0, NULL, &o), CPD_OK);
    assert_null(strstr(o, ">moderate<"));
    free(o);
    assert_int_equal(cpd_plot_pd(NULL, NULL, NULL, 0, NULL, &o), CPD_EUSAGE);
    assert_null(o);
    assert_int_equal(cpd_plot_pd(m, NULL, NULL, 3, NULL, &o), CPD_EUSAGE);
    assert_int_equal(cpd_plot_pd(m, NULL, NULL, 0, NULL, NULL), CPD_EUSAGE);
    cpd_pd_model_fit bad = *m;
    bad.ok = 0;
    assert_int_equal(cpd_plot_pd(&bad, NULL, NULL, 0, NULL, &o), CPD_ENODATA);
    double x[3] = {100, 300, 100}, b[3] = {20000, 19950, 19960};
    assert_int_equal(cpd_plot_balance(x, b, 0, 0, 250, 20000, &o), CPD_EUSAGE);
    assert_int_equal(cpd_plot_balance(x, b, 3, 0, 0, 20000, &o), CPD_EUSAGE);
    assert_int_equal(cpd_plot_balance(x, b, 3, 0, 250, NAN, &o), CPD_EUSAGE);
    assert_int_equal(cpd_plot_balance(NULL, b, 3, 0, 250, 20000, &o), CPD_EUSAGE);
    assert_int_equal(cpd_plot_balance(x, b, 3, 0, 250, 20000, NULL), CPD_EUSAGE);
    assert_int_equal(cpd_plot_balance(x, b, 3, 1, 4.5, 200, &o), CPD_OK);
    assert_non_null(strstr(o, "D\xe2\x80\xb2 balance (m)"));
    free(o);
    fixture_free(f);
}

int main(void)
{
    gsl_set_error_handler_off();
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(tables_follow_the_hyperbola),
        cmocka_unit_test(round_steps_adapt),
        cmocka_unit_test(session_follows_the_differential_balance),
        cmocka_unit_test(escape_function),
        cmocka_unit_test(hostile_text_is_escaped_in_html),
        cmocka_unit_test(csv_layout),
        cmocka_unit_test(text_structure),
        cmocka_unit_test(no_nan_or_infinity_anywhere),
        cmocka_unit_test(render_errors),
        cmocka_unit_test(index_page),
        cmocka_unit_test(sheet_plots),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
