/* sheet.c: the domain sheet's tables and suggested session, and its HTML, CSV and text renderers.
 * Key rule: every user text goes through esc() (HTML) or csv_cell() (CSV); every number through
 * fmt() or csv_num(), which never write NaN or infinity. */
#include "cpdomain/sheet.h"
#include "cpdomain/csvin.h"
#include "cpdomain/plots.h"
#include "cpdomain/protocol.h"
#include "cpdomain/status.h"
#include "cpdomain/svgplot.h"
#include "cpdomain/units.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* ---------------------------------------------------------------- tables and session */

static const double FOR_TIMES_S[CPD_SHEET_NTIMES] = {120, 180, 300, 480, 720, 1200};

/* Round steps, finest first, with the preferred one (25 W, 0.1 m/s) marked by index. */
static const double STEP_W[] = {5, 10, 25, 50, 100};
static const double STEP_MS[] = {0.01, 0.02, 0.05, 0.1, 0.2, 0.5};
enum { PREF_W = 2, PREF_MS = 3, AT_MIN_ROWS = 5, AT_MAX_ROWS = 20 };

static int model_valid(const cpd_pd_model_fit *m)
{
    return m->ok && isfinite(m->cp) && isfinite(m->w_prime) && m->cp > 0 && m->w_prime > 0;
}

/* Multiples of step strictly above lo and at most hi: the first index and the count. */
static long at_count(double lo, double hi, double step, long *first)
{
    /* the 1e-9 keeps a boundary that is itself a multiple (e.g. 250.0000001 W) from flipping rows */
    *first = (long)floor(lo / step + 1e-9) + 1;
    long last = (long)floor(hi / step + 1e-9);
    return last >= *first ? last - *first + 1 : 0;
}

int cpd_sheet_tables_compute(const cpd_pd_model_fit *m, const cpd_domains_result *d, cpd_sheet_tables *out)
{
    if (!m || !out)
        return CPD_EUSAGE;
    memset(out, 0, sizeof *out);
    if (!model_valid(m))
        return CPD_ENODATA;
    for (int k = 0; k < CPD_SHEET_NTIMES; k++) {
        out->for_time[k].duration_s = FOR_TIMES_S[k];
        int rc = cpd_pd_predict_intensity(m, FOR_TIMES_S[k], &out->for_time[k].pred);
        if (rc)
            return rc;
    }
    double lo = m->cp + m->w_prime / CPD_SHEET_AT_LONGEST_S;
    double hi = d && d->b[CPD_BND_SEVERE_EXTREME].valid ? d->b[CPD_BND_SEVERE_EXTREME].value
                : out->for_time[0].pred.valid ? out->for_time[0].pred.value
                                              : m->cp + m->w_prime / FOR_TIMES_S[0];
    if (!(hi > lo) || !isfinite(hi))
        return CPD_OK;
    const double *steps = m->modality == CPD_PD_SPEED ? STEP_MS : STEP_W;
    int nsteps = m->modality == CPD_PD_SPEED ? (int)(sizeof STEP_MS / sizeof STEP_MS[0]) : (int)(sizeof STEP_W / sizeof STEP_W[0]);
    int i = m->modality == CPD_PD_SPEED ? PREF_MS : PREF_W;
    long first = 0;
    while (i > 0 && at_count(lo, hi, steps[i], &first) < AT_MIN_ROWS)
        i--;
    while (i < nsteps - 1 && at_count(lo, hi, steps[i], &first) > AT_MAX_ROWS)
        i++;
    long cnt = at_count(lo, hi, steps[i], &first);
    if (cnt > CPD_SHEET_NAT_MAX)
        cnt = CPD_SHEET_NAT_MAX;
    out->step = steps[i];
    for (long j = 0; j < cnt; j++) {
        cpd_sheet_at_intensity *a = &out->at[out->n_at];
        a->intensity = (double)(first + j) * steps[i];
        int rc = cpd_pd_predict_time(m, a->intensity, &a->pred);
        if (rc)
            return rc;
        /* inside CP's interval the time has a lower bound, no upper one and no point value */
        if (cpd_pd_time_near_cp(m, a->intensity, &a->near_cp, &a->at_least_s) == CPD_OK && a->near_cp)
            a->pred.valid = a->pred.ci_valid = 0;
        out->n_at++;
    }
    return CPD_OK;
}

int cpd_sheet_session_build(const cpd_pd_model_fit *m, cpd_sheet_session *out)
{
    if (!m || !out)
        return CPD_EUSAGE;
    memset(out, 0, sizeof *out);
    if (!model_valid(m))
        return CPD_ENODATA;
    cpd_pd_pred p5;
    int rc = cpd_pd_predict_intensity(m, 300, &p5);
    if (rc)
        return rc;
    if (!p5.valid || !(p5.value > m->cp))
        return CPD_ENODATA;
    int spd = m->modality == CPD_PD_SPEED;
    double x = m->cp + 0.9 * (p5.value - m->cp);
    /* rounded down, so that the margin below the 5-min intensity only grows */
    x = spd ? floor(x * 100) / 100 : floor(x);
    if (!(x > m->cp))
        return CPD_ENODATA;
    if (spd)
        snprintf(out->protocol, sizeof out->protocol, "10min@60%%CS; 5x(3min@%.2fm/s, 3min@50%%CS)", x);
    else
        snprintf(out->protocol, sizeof out->protocol, "10min@60%%CP; 5x(3min@%.0fW, 3min@50%%CP)", x);
    cpd_protocol *p = NULL;
    char msg[CPD_MSG_MAX];
    if ((rc = cpd_protocol_parse(out->protocol, &p, msg)))
        return rc;
    if (p->total_s != CPD_SHEET_SESSION_S) {
        cpd_protocol_free(p);
        return CPD_EINTERNAL;
    }
    rc = cpd_protocol_expand(p, m->cp, 0, out->intensity, CPD_SHEET_SESSION_S);
    cpd_protocol_free(p);
    if (rc)
        return rc;
    cpd_balance_params bp = {CPD_BALANCE_DIFFERENTIAL, m->cp, m->w_prime};
    if ((rc = cpd_balance_run(&bp, out->intensity, CPD_SHEET_SESSION_S, out->balance, &out->res)))
        return rc;
    out->n = CPD_SHEET_SESSION_S;
    out->warmup = 0.6 * m->cp;
    out->interval = x;
    out->recovery = 0.5 * m->cp;
    out->interval_pct_cp = 100 * x / m->cp;
    out->interval_spend_pct = 100 * 180 * (x - m->cp) / m->w_prime;
    return CPD_OK;
}

/* ---------------------------------------------------------------- string building */

static const char UNCERTAINTY[] =
    "Every number here is a model estimate from a few tests. Ranges are 95 % intervals from the fit's "
    "covariance; a boundary without one rests on a single test whose own error is not shown. Day-to-day "
    "variation, fatigue, heat and altitude move the true values.";


typedef struct {
    char *s;
    size_t len, cap;
    int oom;
} sb;

static void sb_putn(sb *b, const char *t, size_t n)
{
    if (b->oom)
        return;
    if (b->len + n + 1 > b->cap) {
        size_t cap = b->cap ? b->cap : 4096;
        while (b->len + n + 1 > cap)
            cap *= 2;
        char *s = realloc(b->s, cap);
        if (!s) {
            b->oom = 1;
            return;
        }
        b->s = s;
        b->cap = cap;
    }
    memcpy(b->s + b->len, t, n);
    b->len += n;
    b->s[b->len] = '\0';
}

static void sb_puts(sb *b, const char *t)
{
    sb_putn(b, t, strlen(t));
}

static void sb_printf(sb *b, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
static void sb_printf(sb *b, const char *fmt, ...)
{
    char small[512];
    va_list ap;
    va_start(ap, fmt);
    int n = vsnprintf(small, sizeof small, fmt, ap);
    va_end(ap);
    if (n < 0) {
        b->oom = 1;
        return;
    }
    if ((size_t)n < sizeof small) {
        sb_putn(b, small, (size_t)n);
        return;
    }
    char *big = malloc((size_t)n + 1);
    if (!big) {
        b->oom = 1;
        return;
    }
    va_start(ap, fmt);
    vsnprintf(big, (size_t)n + 1, fmt, ap);
    va_end(ap);
    sb_putn(b, big, (size_t)n);
    free(big);
}

/* The one HTML escape: text content and attribute values alike. */
static void esc(sb *b, const char *t)
{
    if (!t)
        return;
    for (const char *p = t; *p; p++) {
        switch (*p) {
        case '&': sb_puts(b, "&amp;"); break;
        case '<': sb_puts(b, "&lt;"); break;
        case '>': sb_puts(b, "&gt;"); break;
        case '"': sb_puts(b, "&quot;"); break;
        case '\'': sb_puts(b, "&#39;"); break;
        default: sb_putn(b, p, 1);
        }
    }
}

static int sb_finish(sb *b, char **out)
{
    if (!b->oom && !b->s)
        sb_puts(b, "");
    if (b->oom) {
        free(b->s);
        *out = NULL;
        return CPD_ENOMEM;
    }
    *out = b->s;
    return CPD_OK;
}

const char *cpd_sheet_uncertainty(void)
{
    return UNCERTAINTY;
}

int cpd_sheet_escape_html(const char *text, char **out)
{
    if (!out)
        return CPD_EUSAGE;
    sb b = {0};
    esc(&b, text);
    return sb_finish(&b, out);
}

/* ---------------------------------------------------------------- number words */

static const char *fmt(char *buf, size_t n, double v, int dec)
{
    if (!isfinite(v))
        snprintf(buf, n, "-");
    else {
        snprintf(buf, n, "%.*f", dec, v);
        if (strcmp(buf, "-0") == 0 || (buf[0] == '-' && strspn(buf + 1, "0.") == strlen(buf + 1)))
            memmove(buf, buf + 1, strlen(buf));
    }
    return buf;
}

static int is_speed(const cpd_sheet *s)
{
    return s->modality == CPD_PD_SPEED;
}

/* "287 W" or "4.52 m/s" */
static const char *inten(int spd, double v, char *buf, size_t n)
{
    char t[48];
    if (isfinite(v))
        snprintf(buf, n, "%s %s", fmt(t, sizeof t, v, spd ? 2 : 0), spd ? "m/s" : "W");
    else
        snprintf(buf, n, "-");
    return buf;
}

/* "3:41/km" */
static const char *pace(double pace_m, const char *label, double v, char *buf, size_t n)
{
    char t[32];
    if (!isfinite(v) || v <= 0 || !(pace_m > 0)) {
        snprintf(buf, n, "-");
        return buf;
    }
    cpd_format_pace(v, pace_m, t, sizeof t);
    snprintf(buf, n, "%s%s", t, label ? label : "");
    return buf;
}

/* "15.74 kJ" or "203 m" */
static const char *capac(int spd, double v, char *buf, size_t n)
{
    char t[48];
    if (!isfinite(v))
        snprintf(buf, n, "-");
    else if (spd)
        snprintf(buf, n, "%s m", fmt(t, sizeof t, v, 0));
    else
        snprintf(buf, n, "%s kJ", fmt(t, sizeof t, v / 1000, 2));
    return buf;
}

static const char *dur(double s, char *buf, size_t n)
{
    if (!isfinite(s) || s < 0)
        snprintf(buf, n, "-");
    else
        cpd_format_duration(s, buf, n);
    return buf;
}

static const char *cp_word(const cpd_sheet *s)
{
    return is_speed(s) ? "CS" : "CP";
}

static const cpd_pd_model_fit *used_model(const cpd_sheet *s)
{
    return &s->fit->models[s->model];
}

static int sheet_ok(const cpd_sheet *s)
{
    return s && s->code && s->name && s->date && s->fit && s->dom && s->tables && (unsigned)s->model < CPD_PD_NMODELS &&
           s->ntests <= CPD_SHEET_MAX_TESTS && s->nextra <= CPD_SHEET_MAX_EXTRA && s->nnotes <= CPD_SHEET_MAX_NOTES &&
           s->tables->n_at <= CPD_SHEET_NAT_MAX && (s->modality == CPD_PD_POWER || s->modality == CPD_PD_SPEED);
}

enum { TXT_WORD = 64 };

static const char *const DOMAIN_WORDS[CPD_DOM_N] = {
    "below the GET: lactate and VO2 settle within minutes; hours can be sustained",
    "from the GET to CP: VO2 and lactate rise, then settle late at an elevated steady state",
    "from CP to the severe-extreme boundary: VO2 climbs to its maximum and W' is spent until task failure",
    "above it: task failure comes before VO2 can reach its maximum",
};
static const char *const DOMAIN_WORDS_SPEED[CPD_DOM_N] = {
    "below the GET: lactate and VO2 settle within minutes; hours can be sustained",
    "from the GET to CS: VO2 and lactate rise, then settle late at an elevated steady state",
    "from CS to the severe-extreme boundary: VO2 climbs to its maximum and D' is spent until task failure",
    "above it: task failure comes before VO2 can reach its maximum",
};


/* "at least about 16 min": the lower bound of a time to failure inside CP's interval, whole
 * minutes rounded down (a bound, not an estimate). */
static const char *at_least(double s_lo, char *buf, size_t n)
{
    if (s_lo >= 120)
        snprintf(buf, n, "at least about %.0f min", floor(s_lo / 60));
    else if (s_lo > 0)
        snprintf(buf, n, "at least about %.0f s", floor(s_lo));
    else
        snprintf(buf, n, "no bound");
    return buf;
}

/* "173 W to 220 W", "below 173 W", "above 391 W" */
static const char *range_words(double lo, int has_lo, double hi, int has_hi, char *buf, size_t n,
                               const char *(*f)(double, char *, size_t, const void *), const void *ud)
{
    char a[64], b[64];
    if (has_lo && has_hi)
        snprintf(buf, n, "%s to %s", f(lo, a, sizeof a, ud), f(hi, b, sizeof b, ud));
    else if (has_hi)
        snprintf(buf, n, "below %s", f(hi, b, sizeof b, ud));
    else if (has_lo)
        snprintf(buf, n, "above %s", f(lo, a, sizeof a, ud));
    else
        snprintf(buf, n, "unknown");
    return buf;
}

/* Pace runs the other way: a higher speed is a faster (smaller) pace. */
static const char *pace_range(const cpd_sheet *s, const cpd_domain_range *r, char *buf, size_t n)
{
    char a[48], c[48];
    if (r->has_lo && r->has_hi)
        snprintf(buf, n, "%s to %s", pace(s->pace_m, s->pace_label, r->lo, a, sizeof a),
                 pace(s->pace_m, s->pace_label, r->hi, c, sizeof c));
    else if (r->has_hi)
        snprintf(buf, n, "slower than %s", pace(s->pace_m, s->pace_label, r->hi, c, sizeof c));
    else if (r->has_lo)
        snprintf(buf, n, "faster than %s", pace(s->pace_m, s->pace_label, r->lo, a, sizeof a));
    else
        snprintf(buf, n, "unknown");
    return buf;
}

static const char *f_inten(double v, char *buf, size_t n, const void *ud)
{
    return inten(is_speed(ud), v, buf, n);
}
static const char *f_pct(double v, char *buf, size_t n, const void *ud)
{
    (void)ud;
    char t[32];
    snprintf(buf, n, "%s %%", fmt(t, sizeof t, v, 0));
    return buf;
}
static const char *f_wkg(double v, char *buf, size_t n, const void *ud)
{
    (void)ud;
    char t[32];
    snprintf(buf, n, "%s W/kg", fmt(t, sizeof t, v, 2));
    return buf;
}
static const char *f_hr(double v, char *buf, size_t n, const void *ud)
{
    (void)ud;
    return fmt(buf, n, v, 0);
}

/* The model's status in words: "best", "ok", "flagged", or "failed: why". */
static void model_status(const cpd_pd_result *r, int k, char *buf, size_t n)
{
    const cpd_pd_model_fit *m = &r->models[k];
    if (!m->ok)
        snprintf(buf, n, "failed: %s", cpd_pd_fail_text(m->fail));
    else
        snprintf(buf, n, "%s", m->flags & ~(CPD_PD_FLAG_FEW_TRIALS | CPD_PD_FLAG_TWO_TRIALS_EXACT) ? "flagged" : "ok");
}


/* ---------------------------------------------------------------- HTML */

/* Our own look: a deep blue accent, light grey panels, the svgplot palette for the domains. Print:
 * browser-chosen paper (A4 or Letter) with fixed margins, colours kept, no break inside a plot,
 * table or panel. */
static void css(sb *b)
{
    sb_puts(b, "<style>\n"
               ":root{--ink:#1d2430;--mute:#566070;--line:#d3d9e0;--accent:#1b5e9e;--soft:#f2f5f8}\n"
               "*{box-sizing:border-box}\n"
               "html{-webkit-text-size-adjust:100%;text-size-adjust:100%}\n"
               "body{margin:0;background:#fff;color:var(--ink);font:15px/1.45 system-ui,-apple-system,\"Segoe UI\","
               "Roboto,\"DejaVu Sans\",sans-serif;-webkit-print-color-adjust:exact;print-color-adjust:exact}\n"
               ".page{max-width:60rem;margin:0 auto;padding:1rem}\n"
               ".top{display:flex;flex-wrap:wrap;justify-content:space-between;align-items:flex-end;gap:.4rem 1.5rem;"
               "border-bottom:3px solid var(--accent);padding-bottom:.6rem}\n"
               "h1{font-size:1.65rem;line-height:1.2;margin:0}\n"
               "h2{font-size:1.15rem;color:var(--accent);margin:1.7rem 0 .5rem;padding-bottom:.2rem;"
               "border-bottom:1px solid var(--line);break-after:avoid;page-break-after:avoid}\n"
               "h3{font-size:1rem;margin:1rem 0 .3rem;break-after:avoid;page-break-after:avoid}\n"
               "p{margin:.4rem 0}\n"
               ".who{margin:.25rem 0 0;color:var(--mute)}\n"
               ".when{text-align:right;color:var(--mute)}\n"
               ".when b{color:var(--ink);font-size:1.1rem}\n"
               ".rests{margin:.6rem 0 0;padding:0;list-style:none;font-size:.9rem}\n"
               ".rests li{display:inline-block;margin:0 1.2rem .2rem 0}\n"
               ".rests b{font-weight:600}\n"
               ".cards{display:flex;flex-wrap:wrap;gap:.6rem;margin:1rem 0 .6rem}\n"
               ".card{flex:1 1 10.5rem;border:1px solid var(--line);border-top:4px solid var(--accent);"
               "border-radius:4px;padding:.45rem .7rem;background:var(--soft);break-inside:avoid;page-break-inside:avoid}\n"
               ".card .k{font-size:.78rem;color:var(--mute);text-transform:uppercase;letter-spacing:.04em}\n"
               ".card .v{font-size:1.35rem;font-weight:650;white-space:nowrap}\n"
               ".card .s{font-size:.82rem;color:var(--mute)}\n"
               ".lead{font-size:.9rem;color:var(--mute)}\n"
               ".scroll{overflow-x:auto;-webkit-overflow-scrolling:touch;margin:.4rem 0 .6rem}\n"
               "table{border-collapse:collapse;width:100%;font-size:.92em;break-inside:avoid;page-break-inside:avoid}\n"
               "th,td{padding:.32rem .55rem;border-bottom:1px solid var(--line);text-align:left;vertical-align:top}\n"
               "th{background:var(--soft);font-weight:600;white-space:nowrap}\n"
               "td.n,th.n{text-align:right;white-space:nowrap;font-variant-numeric:tabular-nums}\n"
               "td.w{min-width:12rem}\n"
               "td.r{text-align:right;font-variant-numeric:tabular-nums}\n"
               "td:first-child{white-space:nowrap}\n"
               "td small{color:var(--mute)}\n"
               "tr.best td{font-weight:600}\n"
               ".sw{display:inline-block;width:.85em;height:.85em;border-radius:2px;margin-right:.4em;vertical-align:-.08em;"
               "border:1px solid rgba(0,0,0,.25)}\n");
    for (int k = 0; k < CPD_DOM_N; k++)
        sb_printf(b, ".d%d{background:%s}\n", k, cpd_svgplot_color_hex(cpd_plot_domain_color(k)));
    sb_puts(b, ".keep{break-inside:avoid;page-break-inside:avoid}\n"
               ".plot{margin:.6rem 0 1rem;break-inside:avoid;page-break-inside:avoid}\n"
               ".plot svg{display:block;width:100%;max-width:42rem;height:auto;margin:0 auto}\n"
               ".cap{font-size:.85rem;color:var(--mute);max-width:42rem;margin:.3rem auto 0}\n"
               ".note{font-size:.88rem;color:var(--mute)}\n"
               ".flags{padding-left:1.2rem}\n"
               ".flags li{margin:.3rem 0}\n"
               ".stale{color:#a8281c;font-weight:600}\n"
               ".caution{border:2px solid #a8281c;border-radius:4px;padding:.6rem .85rem;margin:1.6rem 0 .8rem;"
               "background:#fbf0ee;break-inside:avoid;page-break-inside:avoid}\n"
               ".caution p{margin:.3rem 0}\n"
               "code{font-family:ui-monospace,\"DejaVu Sans Mono\",Menlo,monospace;font-size:.84em;background:var(--soft);"
               "padding:.05em .25em;border-radius:3px;overflow-wrap:anywhere}\n"
               "a{color:var(--accent)}\n"
               ".foot{font-size:.8rem;color:var(--mute);border-top:1px solid var(--line);padding-top:.4rem;margin-top:1.4rem}\n"
               ".bounds{margin:.5rem 0}\n"
               /* a phone: everything fits the width; cells wrap, plots scale, nothing scrolls sideways */
               "@media (max-width:32rem){body{font-size:14px}.page{padding:.5rem}.when{text-align:left}h1{font-size:1.4rem}"
               "table{font-size:.82em}th,td{padding:.25rem .3rem;white-space:normal}td.n,th.n,td:first-child{white-space:normal}"
               "td.w{min-width:0}.card{flex-basis:8rem}.card .v{font-size:1.15rem;white-space:normal}"
               ".rests li{display:inline}"
               /* the domains table: equal columns, and what happens on a full-width line below */
               "table.dom tr{display:flex;flex-wrap:wrap;border-bottom:1px solid var(--line)}"
               "table.dom th,table.dom td{flex:1 1 0;min-width:0;border:0}"
               "table.dom td.w,table.dom th:last-child{flex-basis:100%;padding-top:0}"
               "table.dom th:last-child{display:none}}\n"
               "@page{margin:12mm 12mm}\n"
               /* print: page one is the summary and fits one A4 or Letter page; details after a break */
               "@media print{body{font-size:8.5pt;line-height:1.25}.page{max-width:none;padding:0}.scroll{overflow:visible}"
               ".plot svg{max-width:15cm;max-height:11.5cm}a{color:inherit;text-decoration:none}h1{font-size:1.35rem}"
               ".top{border-bottom-width:2px;padding-bottom:.3rem}h2{font-size:1rem;margin:.5rem 0 .25rem}"
               ".cards{margin:.4rem 0 .2rem;gap:.4rem}.card{padding:.2rem .45rem}.card .v{font-size:1rem}"
               ".card .k,.card .s{font-size:.72rem}.rests,.note,.lead,.cap{font-size:.8rem}.rests{margin-top:.3rem}"
               "p{margin:.25rem 0}th,td{padding:.12rem .35rem}.caution{margin:.4rem 0 0;padding:.25rem .5rem;font-size:.85em}"
               ".caution p{margin:.15rem 0}.summary .plot{margin:.2rem 0}.summary .plot svg{max-height:5cm}"
               ".summary .foot{display:none}.details{break-before:page;page-break-before:always}}\n"
               "</style>\n");
}

static void html_head(sb *b, const char *title_a, const char *title_b)
{
    sb_puts(b, "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n"
               "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n<title>");
    esc(b, title_a);
    esc(b, title_b);
    sb_puts(b, "</title>\n");
    css(b);
    sb_puts(b, "</head>\n<body>\n<div class=\"page\">\n");
}

static void td(sb *b, const char *cls, const char *text)
{
    if (cls)
        sb_printf(b, "<td class=\"%s\">", cls);
    else
        sb_puts(b, "<td>");
    esc(b, text);
    sb_puts(b, "</td>");
}

static void th_row(sb *b, const char *const *h, const char *cls, size_t n)
{
    sb_puts(b, "<thead><tr>");
    for (size_t i = 0; i < n; i++) {
        if (cls && cls[i] == 'n')
            sb_puts(b, "<th class=\"n\">");
        else
            sb_puts(b, "<th>");
        esc(b, h[i]);
        sb_puts(b, "</th>");
    }
    sb_puts(b, "</tr></thead>\n<tbody>\n");
}

static void table_open(sb *b)
{
    sb_puts(b, "<div class=\"scroll\"><table>\n");
}

static void table_close(sb *b)
{
    sb_puts(b, "</tbody></table></div>\n");
}

static void h2(sb *b, const char *text)
{
    sb_puts(b, "<h2>");
    esc(b, text);
    sb_puts(b, "</h2>\n");
}

static void para(sb *b, const char *cls, const char *text)
{
    if (cls)
        sb_printf(b, "<p class=\"%s\">", cls);
    else
        sb_puts(b, "<p>");
    esc(b, text);
    sb_puts(b, "</p>\n");
}

static void plot(sb *b, const char *svg, const char *caption)
{
    if (!svg)
        return;
    sb_puts(b, "<div class=\"plot\">\n");
    sb_puts(b, svg);
    if (caption) {
        sb_puts(b, "\n<p class=\"cap\">");
        esc(b, caption);
        sb_puts(b, "</p>");
    }
    sb_puts(b, "\n</div>\n");
}

static void card(sb *b, const char *k, const char *v, const char *sub)
{
    sb_puts(b, "<div class=\"card\"><div class=\"k\">");
    esc(b, k);
    sb_puts(b, "</div><div class=\"v\">");
    esc(b, v);
    sb_puts(b, "</div><div class=\"s\">");
    esc(b, sub && *sub ? sub : "\xc2\xa0");
    sb_puts(b, "</div></div>\n");
}

static const char *ci_words(int spd, int ok, const double ci[2], char *buf, size_t n)
{
    char a[48], c[48];
    if (!ok || !isfinite(ci[0]) || !isfinite(ci[1]))
        snprintf(buf, n, "-");
    else
        snprintf(buf, n, "%s to %s", inten(spd, ci[0], a, sizeof a), inten(spd, ci[1], c, sizeof c));
    return buf;
}

static void html_header(sb *b, const cpd_sheet *s)
{
    char t[256];
    sb_puts(b, "<div class=\"top\">\n<div><h1>");
    esc(b, s->name);
    sb_puts(b, "</h1>\n<p class=\"who\">");
    esc(b, s->code);
    if (s->sport && *s->sport) {
        sb_puts(b, " &middot; ");
        esc(b, s->sport);
    }
    if (s->has_mass && isfinite(s->mass_kg)) {
        sb_puts(b, " &middot; ");
        esc(b, fmt(t, sizeof t, s->mass_kg, 1));
        sb_puts(b, " kg");
    }
    sb_puts(b, "</p>\n</div>\n<div class=\"when\">Intensity-domain sheet<br><b>");
    esc(b, s->date);
    sb_puts(b, "</b></div>\n</div>\n");
    if (s->notes && *s->notes) {
        sb_puts(b, "<p class=\"note\">Notes: ");
        esc(b, s->notes);
        sb_puts(b, "</p>\n");
    }
    if (s->ntests) {
        sb_puts(b, "<ul class=\"rests\"><li><b>Rests on:</b></li>");
        for (size_t i = 0; i < s->ntests; i++) {
            sb_puts(b, "<li>");
            esc(b, s->tests[i].what);
            if (s->tests[i].date && *s->tests[i].date) {
                sb_puts(b, ", ");
                esc(b, s->tests[i].date);
            }
            sb_puts(b, "</li>");
        }
        sb_puts(b, "</ul>\n");
    }
}

static void html_cards(sb *b, const cpd_sheet *s)
{
    int spd = is_speed(s);
    const cpd_pd_model_fit *m = used_model(s);
    char v[64], sub[160], a[64], c[64];
    sb_puts(b, "<div class=\"cards\">\n");
    if (spd)
        snprintf(sub, sizeof sub, "%s; 95 %%: %s", pace(s->pace_m, s->pace_label, m->cp, a, sizeof a),
                 ci_words(spd, m->has_se, m->cp_ci95, c, sizeof c));
    else if (s->has_mass && s->mass_kg > 0)
        snprintf(sub, sizeof sub, "%s W/kg; 95 %%: %s", fmt(a, sizeof a, m->cp / s->mass_kg, 2),
                 ci_words(spd, m->has_se, m->cp_ci95, c, sizeof c));
    else
        snprintf(sub, sizeof sub, "95 %%: %s", ci_words(spd, m->has_se, m->cp_ci95, c, sizeof c));
    card(b, spd ? "Critical speed" : "Critical power", inten(spd, m->cp, v, sizeof v), sub);
    if (m->has_se)
        snprintf(sub, sizeof sub, "95 %%: %s to %s", capac(spd, m->w_prime_ci95[0], a, sizeof a),
                 capac(spd, m->w_prime_ci95[1], c, sizeof c));
    else
        snprintf(sub, sizeof sub, "no interval (exact fit)");
    card(b, spd ? "D\xe2\x80\xb2 (distance above CS)" : "W\xe2\x80\xb2 (work above CP)", capac(spd, m->w_prime, v, sizeof v), sub);
    const cpd_boundary *g = &s->dom->b[CPD_BND_MOD_HEAVY];
    if (g->valid) {
        if (spd)
            snprintf(sub, sizeof sub, "%s; %s %% of CS", pace(s->pace_m, s->pace_label, g->value, a, sizeof a),
                     fmt(c, sizeof c, 100 * g->value / m->cp, 0));
        else
            snprintf(sub, sizeof sub, "%s %% of CP", fmt(c, sizeof c, 100 * g->value / m->cp, 0));
        if (g->has_ci) {
            size_t L = strlen(sub);
            snprintf(sub + L, sizeof sub - L, "; 95 %%: %s to %s", inten(spd, g->ci95[0], a, sizeof a),
                     inten(spd, g->ci95[1], c, sizeof c));
        }
        card(b, s->dom->flags & CPD_DOMAINS_F_GET_FROM_LT1 ? "Lactate LT1 (for the GET)" : "GET equivalent",
             inten(spd, g->value, v, sizeof v), sub);
    } else
        card(b, "GET equivalent", "unknown", "no ramp or lactate test");
    if (s->has_vo2peak && isfinite(s->vo2peak_ml_min)) {
        snprintf(v, sizeof v, "%s L/min", fmt(a, sizeof a, s->vo2peak_ml_min / 1000, 2));
        if (s->has_vo2peak_rel && isfinite(s->vo2peak_ml_kg_min))
            snprintf(sub, sizeof sub, "%s mL/kg/min", fmt(c, sizeof c, s->vo2peak_ml_kg_min, 1));
        else
            sub[0] = '\0';
        if (s->has_vo2peak_ci) {
            char e[32];
            size_t L = strlen(sub);
            snprintf(sub + L, sizeof sub - L, "%s95 %%: %s to %s L/min", L ? "; " : "",
                     fmt(a, sizeof a, s->vo2peak_ci95[0] / 1000, 2), fmt(e, sizeof e, s->vo2peak_ci95[1] / 1000, 2));
        }
        card(b, "VO2peak", v, sub);
    } else
        card(b, "VO2peak", "unknown", "no ramp test");
    sb_puts(b, "</div>\n");
    sb_puts(b, "<p class=\"lead\">Every number below is a model estimate; ranges are 95 % intervals. Read the "
               "caution below before maximal or severe-domain work.</p>\n");
}

/* A range cell: lines may break only around "to", never between a number and its unit. */
static void td_range(sb *b, const char *text)
{
    sb_puts(b, "<td class=\"r\">");
    const char *p = text;
    while (*p) {
        const char *sp = strchr(p, ' ');
        size_t L = sp ? (size_t)(sp - p) : strlen(p);
        char word[TXT_WORD];
        snprintf(word, sizeof word, "%.*s", (int)(L < sizeof word ? L : sizeof word - 1), p);
        esc(b, word);
        if (!sp)
            break;
        const char *next = sp + 1;
        /* breaks around "to" and after "below"/"above", never inside "2.84 W/kg" */
        int brk = (L == 2 && strncmp(p, "to", 2) == 0) || strncmp(next, "to ", 3) == 0 ||
                  (L == 5 && (strncmp(p, "below", 5) == 0 || strncmp(p, "above", 5) == 0));
        sb_puts(b, brk ? " " : "&nbsp;");
        p = next;
    }
    sb_puts(b, "</td>");
}

static void html_domains(sb *b, const cpd_sheet *s)
{
    int spd = is_speed(s);
    const cpd_domains_result *d = s->dom;
    char t[160];
    h2(b, "Intensity domains and training targets");
    sb_puts(b, "<div class=\"scroll\"><table class=\"dom\">\n");
    int wkg = !spd && s->has_mass, hr = 0;
    for (int k = 0; k < CPD_DOM_N; k++)
        hr |= d->range[k].has_hr_lo || d->range[k].has_hr_hi;
    const char *h[6] = {"Domain", spd ? "Speed" : "Power"};
    char al[7] = "ln";
    int nc = 2;
    if (spd)
        h[nc++] = "Pace";
    h[nc++] = spd ? "% of CS" : "% of CP";
    if (wkg)
        h[nc++] = "W/kg";
    if (hr)
        h[nc++] = "Heart rate (bpm)";
    h[nc++] = "What happens";
    for (int k = 2; k < nc; k++)
        al[k] = k == nc - 1 ? 'l' : 'n';
    al[nc] = '\0';
    th_row(b, h, al, (size_t)nc);
    for (int k = 0, band = 0; k < CPD_DOM_N; k += !band) {
        /* after heavy: CP's 95 % interval, where the data cannot tell heavy from severe */
        band = !band && k == CPD_DOM_SEVERE && d->has_uncertain;
        const cpd_domain_range *r = band ? &d->uncertain : &d->range[k];
        if (band)
            sb_puts(b, "<tr><td>heavy or severe");
        else {
            sb_printf(b, "<tr><td><span class=\"sw d%d\"></span>", k);
            esc(b, cpd_domain_name((cpd_domain)k));
        }
        sb_puts(b, "</td>");
        td_range(b, range_words(r->lo, r->has_lo, r->hi, r->has_hi, t, sizeof t, f_inten, s));
        if (spd)
            td_range(b, pace_range(s, r, t, sizeof t));
        td_range(b, range_words(r->lo_pct_cp, r->has_lo, r->hi_pct_cp, r->has_hi, t, sizeof t, f_pct, s));
        if (wkg)
            td_range(b, r->has_mass ? range_words(r->lo_w_kg, r->has_lo, r->hi_w_kg, r->has_hi, t, sizeof t, f_wkg, s) : "-");
        if (hr)
            td_range(b, r->has_hr_lo || r->has_hr_hi ? range_words(r->hr_lo, r->has_hr_lo, r->hr_hi, r->has_hr_hi, t, sizeof t, f_hr, s)
                                                     : "-");
        td(b, "w", band ? (spd ? "inside CS's 95 % interval: heavy or severe, the data cannot tell"
                               : "inside CP's 95 % interval: heavy or severe, the data cannot tell")
                        : (spd ? DOMAIN_WORDS_SPEED : DOMAIN_WORDS)[k]);
        sb_puts(b, "</tr>\n");
    }
    table_close(b);
    char a[64], p[64];
    if (d->flags & CPD_DOMAINS_F_NO_CP_CI)
        snprintf(t, sizeof t, "Keep heavy-domain work at or below %s (95 %% of %s: the fit has no interval).",
                 inten(spd, d->heavy_ceiling, a, sizeof a), cp_word(s));
    else
        snprintf(t, sizeof t, "Keep heavy-domain work at or below %s, the lower 95 %% bound of %s.",
                 inten(spd, d->heavy_ceiling, a, sizeof a), cp_word(s));
    para(b, NULL, t);
    if (d->has_delta) {
        sb_puts(b, "<p>%delta between the GET and VO2peak equivalents: ");
        for (int k = 0; k < CPD_DOMAINS_NDELTA; k++) {
            char q[64]; /* the pace in its own buffer: sharing p's printed the percentage twice */
            snprintf(t, sizeof t, "%s%s %%: %s%s%s%s", k ? ", " : "", fmt(p, sizeof p, d->delta_pct[k], 0),
                     inten(spd, d->delta_value[k], a, sizeof a), spd ? " (" : "",
                     spd ? pace(s->pace_m, s->pace_label, d->delta_value[k], q, sizeof q) : "", spd ? ")" : "");
            esc(b, t);
        }
        sb_puts(b, ".</p>\n");
    }
    if (s->hr_caution)
        para(b, "note", s->hr_caution);
}

static void html_boundaries(sb *b, const cpd_sheet *s)
{
    int spd = is_speed(s);
    char v[96], a[96], pc[48];
    h2(b, "Boundaries and what they rest on");
    table_open(b);
    const char *h[] = {"Boundary", spd ? "Speed" : "Power", "95 % interval", "Rests on", "Status"};
    th_row(b, h, "lnnll", 5);
    for (int k = 0; k < CPD_BND_N; k++) {
        const cpd_boundary *x = &s->dom->b[k];
        sb_puts(b, "<tr>");
        td(b, NULL, cpd_boundary_name((cpd_boundary_id)k));
        if (!x->valid) {
            td(b, "n", "unknown");
            td(b, "n", "-");
            td(b, "w", x->why);
            td(b, NULL, "-");
            sb_puts(b, "</tr>\n");
            continue;
        }
        inten(spd, x->value, v, sizeof v);
        if (spd) {
            size_t L = strlen(v);
            snprintf(v + L, sizeof v - L, " (%s)", pace(s->pace_m, s->pace_label, x->value, pc, sizeof pc));
        }
        td(b, "n", v);
        td(b, "n", ci_words(spd, x->has_ci, x->ci95, a, sizeof a));
        sb_puts(b, "<td class=\"w\">");
        esc(b, x->source);
        if (x->date[0]) {
            sb_puts(b, ", ");
            esc(b, x->date);
        }
        sb_puts(b, "<br><small>");
        esc(b, x->method);
        sb_puts(b, "</small></td>");
        if (x->stale) {
            sb_puts(b, "<td><span class=\"stale\">stale</span><br><small>");
            esc(b, x->stale_why);
            sb_puts(b, "</small></td>");
        } else
            td(b, NULL, x->manual ? "current (reviewer's choice)" : "current");
        sb_puts(b, "</tr>\n");
    }
    table_close(b);
}

static void html_predictions(sb *b, const cpd_sheet *s)
{
    int spd = is_speed(s);
    const cpd_sheet_tables *tb = s->tables;
    const cpd_pd_model_fit *m = used_model(s);
    char a[64], c[300], t[32], p[48];
    h2(b, "Severe-domain predictions");
    snprintf(c, sizeof c, "From the %s model. Times to failure shorter than 2 min or longer than 15 min extrapolate beyond "
             "the range the model fits best.", cpd_pd_model_name(s->model));
    para(b, "note", c);
    sb_puts(b, "<h3>");
    esc(b, spd ? "Speed for a time to task failure" : "Power for a time to task failure");
    sb_puts(b, "</h3>\n");
    table_open(b);
    int third = spd || s->has_mass;
    const char *h[] = {"Time to failure", spd ? "Speed" : "Power", "95 % interval", spd ? "Pace" : "W/kg", "% of CP"};
    const char *hcs[] = {"Time to failure", "Speed", "95 % interval", "Pace", "% of CS"};
    if (third)
        th_row(b, spd ? hcs : h, "nnnnn", 5);
    else {
        const char *h4[] = {"Time to failure", "Power", "95 % interval", "% of CP"};
        th_row(b, h4, "nnnn", 4);
    }
    for (int k = 0; k < CPD_SHEET_NTIMES; k++) {
        const cpd_sheet_for_time *f = &tb->for_time[k];
        int ok = f->pred.valid && isfinite(f->pred.value);
        sb_puts(b, "<tr>");
        td(b, "n", dur(f->duration_s, t, sizeof t));
        td(b, "n", ok ? inten(spd, f->pred.value, a, sizeof a) : "-");
        td(b, "n", ok ? ci_words(spd, f->pred.ci_valid, f->pred.ci95, c, sizeof c) : "-");
        if (spd)
            td(b, "n", ok ? pace(s->pace_m, s->pace_label, f->pred.value, p, sizeof p) : "-");
        else if (s->has_mass)
            td(b, "n", ok && s->mass_kg > 0 ? fmt(p, sizeof p, f->pred.value / s->mass_kg, 2) : "-");
        td(b, "n", ok ? fmt(p, sizeof p, 100 * f->pred.value / m->cp, 0) : "-");
        sb_puts(b, "</tr>\n");
    }
    table_close(b);
    sb_puts(b, "<h3>");
    esc(b, spd ? "Time to task failure at a speed" : "Time to task failure at a power");
    sb_puts(b, "</h3>\n");
    table_open(b);
    const char *h2p[] = {spd ? "Speed" : "Power", spd ? "Pace" : "% of CP", "Time to failure", "95 % interval"};
    th_row(b, h2p, "nnnn", 4);
    for (size_t k = 0; k < tb->n_at; k++) {
        const cpd_sheet_at_intensity *x = &tb->at[k];
        int ok = x->pred.valid && isfinite(x->pred.value);
        sb_puts(b, "<tr>");
        td(b, "n", inten(spd, x->intensity, a, sizeof a));
        td(b, "n", spd ? pace(s->pace_m, s->pace_label, x->intensity, p, sizeof p) : fmt(p, sizeof p, 100 * x->intensity / m->cp, 0));
        if (x->near_cp) {
            char lb[48];
            td(b, "n", at_least(x->at_least_s, lb, sizeof lb));
            td(b, "n", CPD_SHEET_CANNOT_TELL);
            sb_puts(b, "</tr>\n");
            continue;
        }
        td(b, "n", ok ? dur(x->pred.value, t, sizeof t) : cpd_pd_pred_text(x->pred.status));
        if (ok && x->pred.ci_valid) {
            char lo[32], hi[32];
            snprintf(c, sizeof c, "%s to %s", dur(x->pred.ci95[0], lo, sizeof lo), dur(x->pred.ci95[1], hi, sizeof hi));
        } else
            snprintf(c, sizeof c, "-");
        td(b, "n", c);
        sb_puts(b, "</tr>\n");
    }
    if (!tb->n_at)
        sb_puts(b, "<tr><td colspan=\"4\">no round value lies in the severe domain</td></tr>\n");
    table_close(b);
}

static void session_words(const cpd_sheet *s, char *buf, size_t n)
{
    const cpd_sheet_session *x = s->session;
    int spd = is_speed(s);
    char a[48], w[48], r[48], lo[48], at[32], end[48], pi[32], sp[32], pl[32];
    snprintf(buf, n,
             "10 min warm-up at %s (60 %% of %s), then 5 x (3 min at %s (%s %% of %s), 3 min at %s (50 %%)). "
             "Each interval spends about %s %% of a full %s. Lowest balance %s (%s %%) at %s; it ends at %s. %s",
             inten(spd, x->warmup, w, sizeof w), cp_word(s), inten(spd, x->interval, a, sizeof a),
             fmt(pi, sizeof pi, x->interval_pct_cp, 0), cp_word(s), inten(spd, x->recovery, r, sizeof r),
             fmt(sp, sizeof sp, x->interval_spend_pct, 0), spd ? "D'" : "W'", capac(spd, x->res.min_balance, lo, sizeof lo),
             fmt(pl, sizeof pl, 100 * x->res.min_balance / used_model(s)->w_prime, 0),
             dur((double)x->res.min_at_s, at, sizeof at), capac(spd, x->res.end_balance, end, sizeof end),
             x->res.failed ? "Task failure is predicted: shorten the intervals." : "No task failure is predicted.");
}

static void html_session(sb *b, const cpd_sheet *s)
{
    if (!s->session)
        return;
    char t[1024];
    h2(b, "A suggested interval session");
    sb_puts(b, "<div class=\"keep\">\n");
    session_words(s, t, sizeof t);
    para(b, NULL, t);
    plot(b, s->svg_balance,
         is_speed(s) ? "D\xe2\x80\xb2 balance (differential model, Skiba et al. 2015) through the session; speed on the right axis."
                     : "W\xe2\x80\xb2 balance (differential model, Skiba et al. 2015) through the session; power on the right axis.");
    sb_puts(b, "<p class=\"note\">Reproduce or vary it: <code>cpdomain predict ");
    esc(b, s->code);
    sb_puts(b, " --protocol &quot;");
    esc(b, s->session->protocol);
    sb_puts(b, "&quot;</code></p>\n</div>\n");
}

static void html_ramp(sb *b, const cpd_sheet *s)
{
    if (!s->ramp_label && !s->svg_vslope)
        return;
    h2(b, "Ramp test");
    sb_puts(b, "<div class=\"keep\">\n");
    if (s->ramp_label)
        para(b, NULL, s->ramp_label);
    plot(b, s->svg_vslope, "V-slope (Beaver, Wasserman & Whipp 1986): the GET is where VCO2 starts to rise faster than VO2.");
    sb_puts(b, "</div>\n");
}

static void html_extra(sb *b, const cpd_sheet *s)
{
    for (size_t i = 0; i < s->nextra; i++) {
        const cpd_sheet_section *x = &s->extra[i];
        h2(b, x->title ? x->title : x->key);
        sb_puts(b, "<div class=\"keep\">\n");
        if (x->text)
            para(b, NULL, x->text);
        plot(b, x->svg, NULL);
        sb_puts(b, "</div>\n");
    }
}

static void html_models(sb *b, const cpd_sheet *s)
{
    int spd = is_speed(s);
    const cpd_pd_result *r = s->fit;
    char a[48], c[48], e[48], f[48], st[300];
    h2(b, "Model comparison");
    table_open(b);
    const char *h[] = {"Model", spd ? "CS" : "CP", spd ? "D\xe2\x80\xb2" : "W\xe2\x80\xb2", spd ? "%SEE CS" : "%SEE CP",
                       spd ? "%SEE D\xe2\x80\xb2" : "%SEE W\xe2\x80\xb2", "Status"};
    th_row(b, h, "lnnnnl", 6);
    for (int k = 0; k < CPD_PD_NMODELS; k++) {
        const cpd_pd_model_fit *m = &r->models[k];
        int best = r->has_best && r->best == (cpd_pd_model)k, used = s->model == (cpd_pd_model)k;
        sb_puts(b, best || used ? "<tr class=\"best\">" : "<tr>");
        snprintf(st, sizeof st, "%s%s", cpd_pd_model_name((cpd_pd_model)k), best ? " (best)" : used ? " (used)" : "");
        td(b, NULL, st);
        td(b, "n", m->ok ? inten(spd, m->cp, a, sizeof a) : "-");
        td(b, "n", m->ok ? capac(spd, m->w_prime, c, sizeof c) : "-");
        td(b, "n", m->ok && m->see_valid ? fmt(e, sizeof e, m->see_cp_pct, 1) : "-");
        td(b, "n", m->ok && m->see_valid ? fmt(f, sizeof f, m->see_w_prime_pct, 1) : "-");
        model_status(r, k, st, sizeof st);
        td(b, "w", st);
        sb_puts(b, "</tr>\n");
    }
    table_close(b);
    para(b, "note", is_speed(s) ? "The best model has the lowest %SEE of CS plus %SEE of D' among the valid fits (Patoz et "
                                  "al. 2021 Front Physiol 12:613066); flagged fits are explained under quality notes."
                                : "The best model has the lowest %SEE of CP plus %SEE of W' among the valid fits (Patoz et "
                                  "al. 2021 Front Physiol 12:613066); flagged fits are explained under quality notes.");
}

static void html_flags(sb *b, const cpd_sheet *s)
{
    h2(b, "Quality notes");
    sb_puts(b, "<ul class=\"flags\">\n");
    int any = 0;
    for (unsigned k = 0; k < CPD_DOMAINS_NFLAGS; k++)
        if (s->dom->flags & (1u << k)) {
            sb_puts(b, "<li>");
            esc(b, cpd_domains_flag_text(1u << k));
            sb_puts(b, "</li>\n");
            any = 1;
        }
    for (unsigned k = 0; k < CPD_PD_NFLAGS; k++)
        if (s->fit->flags & (1u << k)) {
            sb_puts(b, "<li>");
            esc(b, cpd_pd_flag_text(1u << k, s->modality));
            sb_puts(b, "</li>\n");
            any = 1;
        }
    for (size_t i = 0; i < s->nnotes; i++) {
        sb_puts(b, "<li>");
        esc(b, s->notes_more[i]);
        sb_puts(b, "</li>\n");
        any = 1;
    }
    if (!any)
        sb_puts(b, "<li>No quality flags: the trials, the fit and the boundaries pass every check.</li>\n");
    sb_puts(b, "</ul>\n");
}

static void html_caution(sb *b, const cpd_sheet *s)
{
    sb_puts(b, "<div class=\"caution\">\n");
    if (s->caution)
        para(b, NULL, s->caution);
    para(b, NULL, UNCERTAINTY);
    sb_puts(b, "</div>\n");
}

static void html_foot(sb *b, const char *generator, const char *date)
{
    sb_puts(b, "<p class=\"foot\">Made ");
    esc(b, date);
    if (generator) {
        sb_puts(b, " with ");
        esc(b, generator);
    }
    sb_puts(b, ".</p>\n</div>\n</body>\n</html>\n");
}

/* The three boundaries in one line, each with its 95 % interval: the summary's short form of
 * "Boundaries and what they rest on" (the details page). */
static void html_boundary_line(sb *b, const cpd_sheet *s)
{
    int spd = is_speed(s);
    char v[64], a[64], c[64];
    sb_puts(b, "<p class=\"bounds\"><b>Boundaries:</b> ");
    for (int k = 0; k < CPD_BND_N; k++) {
        const cpd_boundary *x = &s->dom->b[k];
        if (k)
            sb_puts(b, "; ");
        esc(b, cpd_boundary_name((cpd_boundary_id)k));
        sb_puts(b, "&nbsp;");
        if (!x->valid) {
            sb_puts(b, "unknown");
            continue;
        }
        sb_puts(b, "<b>");
        esc(b, inten(spd, x->value, v, sizeof v));
        sb_puts(b, "</b>");
        if (x->has_ci) {
            sb_puts(b, " (95&nbsp;%: ");
            esc(b, inten(spd, x->ci95[0], a, sizeof a));
            sb_puts(b, " to ");
            esc(b, inten(spd, x->ci95[1], c, sizeof c));
            sb_puts(b, ")");
        }
        if (x->stale)
            sb_puts(b, " <span class=\"stale\">stale</span>");
    }
    sb_puts(b, ".</p>\n");
}

/* Page one is the coach's summary (boundaries with intervals, targets, the power-duration plot,
 * the cautions) and prints on one A4 or Letter page; the details follow after a page break. */
static void render_html(sb *b, const cpd_sheet *s)
{
    char title[96];
    snprintf(title, sizeof title, ": intensity-domain sheet of %s", s->date);
    html_head(b, s->name, title);
    sb_puts(b, "<div class=\"summary\">\n");
    html_header(b, s);
    html_cards(b, s);
    html_domains(b, s);
    html_boundary_line(b, s);
    char cap[300];
    snprintf(cap, sizeof cap, "Trials (points), the %s model's curve with its 95 %% band, and the four domains as bands.",
             cpd_pd_model_name(s->model));
    if (s->svg_pd) {
        h2(b, is_speed(s) ? "Speed-duration relationship" : "Power-duration relationship");
        plot(b, s->svg_pd, cap);
    }
    html_caution(b, s);
    sb_puts(b, "</div><!-- /summary -->\n<div class=\"details\">\n");
    html_predictions(b, s);
    html_session(b, s);
    html_boundaries(b, s);
    html_ramp(b, s);
    html_extra(b, s);
    html_models(b, s);
    html_flags(b, s);
    sb_puts(b, "</div><!-- /details -->\n");
    html_foot(b, s->generator, s->date);
}

/* ---------------------------------------------------------------- CSV */

/* A text cell through cpd_csv_field: quoted as RFC 4180 asks, formula-like text neutralised. */
static void csv_cell(sb *b, const char *t)
{
    if (!t)
        return;
    char *q = cpd_csv_field(t);
    if (q)
        sb_puts(b, q);
    free(q);
}

static void csv_row(sb *b, const char *section, const char *item, const char *key, const char *value, const char *unit)
{
    csv_cell(b, section);
    sb_puts(b, ",");
    csv_cell(b, item);
    sb_puts(b, ",");
    csv_cell(b, key);
    sb_puts(b, ",");
    csv_cell(b, value);
    sb_puts(b, ",");
    csv_cell(b, unit);
    sb_puts(b, "\r\n");
}

/* Numbers with 10 significant digits (round trips to within 5e-10 relative); empty when not finite. */
static const char *g10(char *buf, size_t n, double v)
{
    if (isfinite(v))
        snprintf(buf, n, "%.10g", v);
    else if (n)
        buf[0] = '\0';
    return buf;
}

static void csv_num(sb *b, const char *section, const char *item, const char *key, double v, const char *unit)
{
    char t[40];
    csv_row(b, section, item, key, g10(t, sizeof t, v), unit);
}

static void csv_int(sb *b, const char *section, const char *item, const char *key, long long v, const char *unit)
{
    char t[32];
    snprintf(t, sizeof t, "%lld", v);
    csv_row(b, section, item, key, t, unit);
}

static void render_csv(sb *b, const cpd_sheet *s)
{
    int spd = is_speed(s);
    const char *iu = spd ? "m/s" : "W", *cu = spd ? "m" : "J";
    const char *kcp = spd ? "cs" : "cp", *kw = spd ? "d_prime" : "w_prime", *kpct = spd ? "pct_cs" : "pct_cp";
    char k[64], item[48];
    const cpd_pd_model_fit *m = used_model(s);
    sb_puts(b, "section,item,key,value,unit\r\n");
    csv_row(b, "athlete", "", "code", s->code, "");
    csv_row(b, "athlete", "", "name", s->name, "");
    csv_row(b, "athlete", "", "sport", s->sport, "");
    csv_num(b, "athlete", "", "mass_kg", s->has_mass ? s->mass_kg : NAN, "kg");
    csv_row(b, "athlete", "", "notes", s->notes, "");
    csv_row(b, "sheet", "", "date", s->date, "");
    csv_row(b, "sheet", "", "modality", spd ? "speed" : "power", "");
    csv_row(b, "sheet", "", "model", cpd_pd_model_name(s->model), "");
    csv_row(b, "sheet", "", "generator", s->generator, "");
    for (size_t i = 0; i < s->ntests; i++) {
        snprintf(item, sizeof item, "%zu", i + 1);
        csv_row(b, "test", item, "what", s->tests[i].what, "");
        csv_row(b, "test", item, "date", s->tests[i].date, "");
    }
    csv_num(b, "fit", "", kcp, m->cp, iu);
    snprintf(k, sizeof k, "%s_ci95_lo", kcp);
    csv_num(b, "fit", "", k, m->has_se ? m->cp_ci95[0] : NAN, iu);
    snprintf(k, sizeof k, "%s_ci95_hi", kcp);
    csv_num(b, "fit", "", k, m->has_se ? m->cp_ci95[1] : NAN, iu);
    csv_num(b, "fit", "", kw, m->w_prime, cu);
    snprintf(k, sizeof k, "%s_ci95_lo", kw);
    csv_num(b, "fit", "", k, m->has_se ? m->w_prime_ci95[0] : NAN, cu);
    snprintf(k, sizeof k, "%s_ci95_hi", kw);
    csv_num(b, "fit", "", k, m->has_se ? m->w_prime_ci95[1] : NAN, cu);
    csv_int(b, "fit", "", "n", (long long)m->n, "trials");
    csv_num(b, "ramp", "", "vo2peak_ml_min", s->has_vo2peak ? s->vo2peak_ml_min : NAN, "mL/min");
    csv_num(b, "ramp", "", "vo2peak_ml_kg_min", s->has_vo2peak_rel ? s->vo2peak_ml_kg_min : NAN, "mL/kg/min");
    csv_num(b, "ramp", "", "vo2peak_ci95_lo", s->has_vo2peak_ci ? s->vo2peak_ci95[0] : NAN, "mL/min");
    csv_num(b, "ramp", "", "vo2peak_ci95_hi", s->has_vo2peak_ci ? s->vo2peak_ci95[1] : NAN, "mL/min");
    csv_row(b, "ramp", "", "label", s->ramp_label, "");
    for (int j = 0; j < CPD_BND_N; j++) {
        const cpd_boundary *x = &s->dom->b[j];
        const char *nm = cpd_boundary_name((cpd_boundary_id)j);
        csv_num(b, "boundary", nm, "value", x->valid ? x->value : NAN, iu);
        csv_num(b, "boundary", nm, "ci95_lo", x->valid && x->has_ci ? x->ci95[0] : NAN, iu);
        csv_num(b, "boundary", nm, "ci95_hi", x->valid && x->has_ci ? x->ci95[1] : NAN, iu);
        csv_row(b, "boundary", nm, "source", x->valid ? x->source : "", "");
        csv_row(b, "boundary", nm, "method", x->valid ? x->method : "", "");
        csv_row(b, "boundary", nm, "date", x->valid ? x->date : "", "");
        csv_int(b, "boundary", nm, "stale", x->stale, "");
        csv_row(b, "boundary", nm, "stale_why", x->stale ? x->stale_why : "", "");
        csv_row(b, "boundary", nm, "reason", x->valid ? "" : x->why, "");
    }
    for (int j = 0, band = 0; j < CPD_DOM_N; j += !band) {
        band = !band && j == CPD_DOM_SEVERE && s->dom->has_uncertain; /* CP's interval, after heavy */
        const cpd_domain_range *r = band ? &s->dom->uncertain : &s->dom->range[j];
        const char *nm = band ? "heavy_or_severe" : cpd_domain_name((cpd_domain)j);
        csv_num(b, "target", nm, "lo", r->has_lo ? r->lo : NAN, iu);
        csv_num(b, "target", nm, "hi", r->has_hi ? r->hi : NAN, iu);
        snprintf(k, sizeof k, "lo_%s", kpct);
        csv_num(b, "target", nm, k, r->has_lo ? r->lo_pct_cp : NAN, "%");
        snprintf(k, sizeof k, "hi_%s", kpct);
        csv_num(b, "target", nm, k, r->has_hi ? r->hi_pct_cp : NAN, "%");
        if (!spd && r->has_mass) {
            csv_num(b, "target", nm, "lo_w_kg", r->has_lo ? r->lo_w_kg : NAN, "W/kg");
            csv_num(b, "target", nm, "hi_w_kg", r->has_hi ? r->hi_w_kg : NAN, "W/kg");
        }
        csv_num(b, "target", nm, "lo_hr_bpm", r->has_hr_lo ? r->hr_lo : NAN, "bpm");
        csv_num(b, "target", nm, "hi_hr_bpm", r->has_hr_hi ? r->hr_hi : NAN, "bpm");
    }
    csv_num(b, "target", "", "heavy_ceiling", s->dom->heavy_ceiling, iu);
    csv_num(b, "target", "", "time_to_vo2max_s", s->dom->t_vo2max_s, "s");
    for (int j = 0; s->dom->has_delta && j < CPD_DOMAINS_NDELTA; j++) {
        g10(item, sizeof item, s->dom->delta_pct[j]);
        csv_num(b, "delta", item, "value", s->dom->delta_value[j], iu);
    }
    const char *sec_ft = spd ? "speed_for_time" : "power_for_time";
    for (int j = 0; j < CPD_SHEET_NTIMES; j++) {
        const cpd_sheet_for_time *f = &s->tables->for_time[j];
        int ok = f->pred.valid;
        g10(item, sizeof item, f->duration_s);
        csv_num(b, sec_ft, item, "value", ok ? f->pred.value : NAN, iu);
        csv_num(b, sec_ft, item, "ci95_lo", ok && f->pred.ci_valid ? f->pred.ci95[0] : NAN, iu);
        csv_num(b, sec_ft, item, "ci95_hi", ok && f->pred.ci_valid ? f->pred.ci95[1] : NAN, iu);
    }
    const char *sec_at = spd ? "time_at_speed" : "time_at_power";
    for (size_t j = 0; j < s->tables->n_at; j++) {
        const cpd_sheet_at_intensity *a = &s->tables->at[j];
        int ok = a->pred.valid;
        g10(item, sizeof item, a->intensity);
        csv_num(b, sec_at, item, "value", ok ? a->pred.value : NAN, "s");
        csv_num(b, sec_at, item, "ci95_lo", ok && a->pred.ci_valid ? a->pred.ci95[0] : NAN, "s");
        csv_num(b, sec_at, item, "ci95_hi", ok && a->pred.ci_valid ? a->pred.ci95[1] : NAN, "s");
        if (a->near_cp) {
            csv_num(b, sec_at, item, "at_least", a->at_least_s > 0 ? a->at_least_s : NAN, "s");
            csv_row(b, sec_at, item, "status", CPD_SHEET_CANNOT_TELL, "");
        } else if (!ok)
            csv_row(b, sec_at, item, "status", cpd_pd_pred_text(a->pred.status), "");
    }
    if (s->session) {
        const cpd_sheet_session *x = s->session;
        csv_row(b, "session", "", "protocol", x->protocol, "");
        csv_row(b, "session", "", "balance_model", "differential", "");
        csv_num(b, "session", "", "warmup", x->warmup, iu);
        csv_num(b, "session", "", "interval", x->interval, iu);
        csv_num(b, "session", "", "recovery", x->recovery, iu);
        snprintf(k, sizeof k, "interval_%s", kpct);
        csv_num(b, "session", "", k, x->interval_pct_cp, "%");
        csv_num(b, "session", "", "interval_spend_pct", x->interval_spend_pct, "%");
        csv_num(b, "session", "", "min_balance", x->res.min_balance, cu);
        csv_int(b, "session", "", "min_balance_at_s", (long long)x->res.min_at_s, "s");
        csv_num(b, "session", "", "end_balance", x->res.end_balance, cu);
        csv_num(b, "session", "", "failure_at_s", x->res.failed ? (double)x->res.failure_at_s : NAN, "s");
    }
    for (int j = 0; j < CPD_PD_NMODELS; j++) {
        const cpd_pd_model_fit *x = &s->fit->models[j];
        const char *nm = cpd_pd_model_name((cpd_pd_model)j);
        char st[300];
        csv_num(b, "model", nm, kcp, x->ok ? x->cp : NAN, iu);
        csv_num(b, "model", nm, kw, x->ok ? x->w_prime : NAN, cu);
        snprintf(k, sizeof k, "see_%s_pct", kcp);
        csv_num(b, "model", nm, k, x->ok && x->see_valid ? x->see_cp_pct : NAN, "%");
        snprintf(k, sizeof k, "see_%s_pct", kw);
        csv_num(b, "model", nm, k, x->ok && x->see_valid ? x->see_w_prime_pct : NAN, "%");
        model_status(s->fit, j, st, sizeof st);
        csv_row(b, "model", nm, "status", st, "");
        csv_int(b, "model", nm, "best", s->fit->has_best && s->fit->best == (cpd_pd_model)j, "");
    }
    for (unsigned j = 0; j < CPD_DOMAINS_NFLAGS; j++)
        if (s->dom->flags & (1u << j))
            csv_row(b, "flag", cpd_domains_flag_name(1u << j), "text", cpd_domains_flag_text(1u << j), "");
    for (unsigned j = 0; j < CPD_PD_NFLAGS; j++)
        if (s->fit->flags & (1u << j))
            csv_row(b, "flag", cpd_pd_flag_name(1u << j, s->modality), "text", cpd_pd_flag_text(1u << j, s->modality), "");
    for (size_t j = 0; j < s->nnotes; j++) {
        snprintf(item, sizeof item, "%zu", j + 1);
        csv_row(b, "note", item, "text", s->notes_more[j], "");
    }
    for (size_t j = 0; j < s->nextra; j++) {
        csv_row(b, "extra", s->extra[j].key, "title", s->extra[j].title, "");
        csv_row(b, "extra", s->extra[j].key, "text", s->extra[j].text, "");
    }
    csv_row(b, "caution", "", "hr", s->hr_caution, "");
    csv_row(b, "caution", "", "safety", s->caution, "");
    csv_row(b, "caution", "", "uncertainty", UNCERTAINTY, "");
}

/* ---------------------------------------------------------------- text */

enum { TXT_COLS = 7, TXT_ROWS = 32, TXT_CELL = 160 };

typedef struct {
    int ncols, nrows;
    const char *align; /* 'l' or 'r' per column */
    char cell[TXT_ROWS + 1][TXT_COLS][TXT_CELL];
} txt_table;

/* Display width of UTF-8 text: one column per code point (names like "Lucía" stay aligned). */
static size_t u8width(const char *t)
{
    size_t w = 0;
    for (; *t; t++)
        w += ((unsigned char)*t & 0xC0) != 0x80;
    return w;
}

static void tt_row(txt_table *t, const char *const *cells)
{
    if (t->nrows > TXT_ROWS)
        return;
    for (int i = 0; i < t->ncols; i++)
        snprintf(t->cell[t->nrows][i], TXT_CELL, "%s", cells[i] ? cells[i] : "");
    t->nrows++;
}

static void tt_print(sb *b, const txt_table *t)
{
    size_t w[TXT_COLS] = {0};
    for (int r = 0; r < t->nrows; r++)
        for (int i = 0; i < t->ncols; i++)
            if (u8width(t->cell[r][i]) > w[i])
                w[i] = u8width(t->cell[r][i]);
    for (int r = 0; r < t->nrows; r++) {
        sb_puts(b, " ");
        for (int i = 0; i < t->ncols; i++) {
            const char *c = t->cell[r][i];
            size_t pad = w[i] - u8width(c);
            sb_puts(b, " ");
            if (t->align[i] == 'r')
                for (size_t k = 0; k < pad; k++)
                    sb_puts(b, " ");
            sb_puts(b, c);
            if (t->align[i] != 'r' && i < t->ncols - 1)
                for (size_t k = 0; k < pad; k++)
                    sb_puts(b, " ");
            if (i < t->ncols - 1)
                sb_puts(b, " ");
        }
        sb_puts(b, "\n");
    }
}

static void render_txt(sb *b, const cpd_sheet *s)
{
    int spd = is_speed(s);
    const cpd_pd_model_fit *m = used_model(s);
    const cpd_domains_result *d = s->dom;
    char a[96], c[96], e[96], f[96], g[96], h[96];
    txt_table *t = malloc(sizeof *t);
    if (!t) {
        b->oom = 1;
        return;
    }
    sb_printf(b, "%s %s", s->code, s->name);
    if (s->sport && *s->sport)
        sb_printf(b, ", %s", s->sport);
    if (s->has_mass && isfinite(s->mass_kg))
        sb_printf(b, ", %s kg", fmt(a, sizeof a, s->mass_kg, 1));
    sb_printf(b, ": intensity-domain sheet of %s (%s model)\n", s->date, cpd_pd_model_name(s->model));
    if (s->notes && *s->notes)
        sb_printf(b, "notes: %s\n", s->notes);
    for (size_t i = 0; i < s->ntests; i++)
        sb_printf(b, "%s %s%s%s\n", i ? "        " : "rests on", s->tests[i].what, s->tests[i].date && *s->tests[i].date ? ", " : "",
                  s->tests[i].date ? s->tests[i].date : "");
    sb_printf(b, "\n%s %s", cp_word(s), inten(spd, m->cp, a, sizeof a));
    if (spd)
        sb_printf(b, " (%s)", pace(s->pace_m, s->pace_label, m->cp, c, sizeof c));
    if (m->has_se)
        sb_printf(b, ", 95 %% CI %s", ci_words(spd, 1, m->cp_ci95, c, sizeof c));
    sb_printf(b, "; %s %s", spd ? "D'" : "W'", capac(spd, m->w_prime, a, sizeof a));
    if (m->has_se)
        sb_printf(b, ", 95 %% CI %s to %s", capac(spd, m->w_prime_ci95[0], c, sizeof c), capac(spd, m->w_prime_ci95[1], e, sizeof e));
    sb_puts(b, "\n");
    if (d->b[CPD_BND_MOD_HEAVY].valid) {
        sb_printf(b, "GET equivalent %s", inten(spd, d->b[CPD_BND_MOD_HEAVY].value, a, sizeof a));
        if (d->b[CPD_BND_MOD_HEAVY].has_ci)
            sb_printf(b, ", 95 %% CI %s to %s", inten(spd, d->b[CPD_BND_MOD_HEAVY].ci95[0], c, sizeof c),
                      inten(spd, d->b[CPD_BND_MOD_HEAVY].ci95[1], e, sizeof e));
    } else
        sb_puts(b, "GET equivalent unknown");
    if (s->has_vo2peak)
        sb_printf(b, "; VO2peak %s L/min", fmt(a, sizeof a, s->vo2peak_ml_min / 1000, 2));
    if (s->has_vo2peak_ci)
        sb_printf(b, ", 95 %% CI %s to %s L/min", fmt(c, sizeof c, s->vo2peak_ci95[0] / 1000, 2),
                  fmt(e, sizeof e, s->vo2peak_ci95[1] / 1000, 2));
    if (s->has_vo2peak_rel)
        sb_printf(b, " (%s mL/kg/min)", fmt(a, sizeof a, s->vo2peak_ml_kg_min, 1));
    sb_puts(b, "\n\ndomains and targets:\n");

    memset(t, 0, sizeof *t);
    t->ncols = 5;
    t->align = "lllll";
    const char *hd[] = {"domain", spd ? "speed" : "power", spd ? "pace" : "% of CP", spd ? "% of CS" : "W/kg", "HR (bpm)"};
    tt_row(t, hd);
    for (int k = 0, band = 0; k < CPD_DOM_N; k += !band) {
        band = !band && k == CPD_DOM_SEVERE && d->has_uncertain; /* CP's interval, after heavy */
        const cpd_domain_range *r = band ? &d->uncertain : &d->range[k];
        range_words(r->lo, r->has_lo, r->hi, r->has_hi, a, sizeof a, f_inten, s);
        if (spd)
            pace_range(s, r, c, sizeof c);
        else
            range_words(r->lo_pct_cp, r->has_lo, r->hi_pct_cp, r->has_hi, c, sizeof c, f_pct, s);
        if (spd)
            range_words(r->lo_pct_cp, r->has_lo, r->hi_pct_cp, r->has_hi, e, sizeof e, f_pct, s);
        else if (r->has_mass)
            range_words(r->lo_w_kg, r->has_lo, r->hi_w_kg, r->has_hi, e, sizeof e, f_wkg, s);
        else
            snprintf(e, sizeof e, "-");
        if (r->has_hr_lo || r->has_hr_hi)
            range_words(r->hr_lo, r->has_hr_lo, r->hr_hi, r->has_hr_hi, f, sizeof f, f_hr, s);
        else
            snprintf(f, sizeof f, "-");
        const char *row[] = {band ? "heavy or severe (the data cannot tell)" : cpd_domain_name((cpd_domain)k), a, c, e, f};
        tt_row(t, row);
    }
    tt_print(b, t);
    sb_printf(b, "  heavy-domain work at or below %s (%s)\n", inten(spd, d->heavy_ceiling, a, sizeof a),
              d->flags & CPD_DOMAINS_F_NO_CP_CI ? "95 % of the exact fit's value" : spd ? "the lower 95 % bound of CS"
                                                                                       : "the lower 95 % bound of CP");
    if (d->has_delta) {
        sb_puts(b, "  %delta:");
        for (int k = 0; k < CPD_DOMAINS_NDELTA; k++)
            sb_printf(b, "  %s%%: %s", fmt(c, sizeof c, d->delta_pct[k], 0), inten(spd, d->delta_value[k], a, sizeof a));
        sb_puts(b, "\n");
    }

    sb_puts(b, "\nboundaries:\n");
    for (int k = 0; k < CPD_BND_N; k++) {
        const cpd_boundary *x = &d->b[k];
        if (!x->valid) {
            sb_printf(b, "  %-15s unknown: %s\n", cpd_boundary_name((cpd_boundary_id)k), x->why);
            continue;
        }
        sb_printf(b, "  %-15s %s", cpd_boundary_name((cpd_boundary_id)k), inten(spd, x->value, a, sizeof a));
        if (x->has_ci)
            sb_printf(b, " (95 %% CI %s)", ci_words(spd, 1, x->ci95, c, sizeof c));
        sb_printf(b, "\n  %-15s %s, %s%s\n", "", x->source, x->date, x->stale ? "  [STALE]" : "");
        if (x->stale)
            sb_printf(b, "  %-15s stale: %s\n", "", x->stale_why);
    }

    sb_printf(b, "\n%s for a time to task failure:\n", spd ? "speed" : "power");
    memset(t, 0, sizeof *t);
    t->ncols = 4;
    t->align = "rrrr";
    const char *hf[] = {"time", spd ? "speed" : "power", "95 % CI", spd ? "pace" : "% of CP"};
    tt_row(t, hf);
    for (int k = 0; k < CPD_SHEET_NTIMES; k++) {
        const cpd_sheet_for_time *x = &s->tables->for_time[k];
        int ok = x->pred.valid;
        dur(x->duration_s, a, sizeof a);
        snprintf(c, sizeof c, "%s", ok ? inten(spd, x->pred.value, g, sizeof g) : "-");
        snprintf(e, sizeof e, "%s", ok ? ci_words(spd, x->pred.ci_valid, x->pred.ci95, h, sizeof h) : "-");
        if (spd)
            pace(s->pace_m, s->pace_label, ok ? x->pred.value : NAN, f, sizeof f);
        else
            fmt(f, sizeof f, ok ? 100 * x->pred.value / m->cp : NAN, 0);
        const char *row[] = {a, c, e, f};
        tt_row(t, row);
    }
    tt_print(b, t);

    sb_printf(b, "\ntime to task failure at a %s:\n", spd ? "speed" : "power");
    memset(t, 0, sizeof *t);
    t->ncols = 4;
    t->align = "rrrr";
    const char *ha[] = {spd ? "speed" : "power", spd ? "pace" : "% of CP", "time", "95 % CI"};
    tt_row(t, ha);
    for (size_t k = 0; k < s->tables->n_at; k++) {
        const cpd_sheet_at_intensity *x = &s->tables->at[k];
        int ok = x->pred.valid;
        inten(spd, x->intensity, a, sizeof a);
        if (spd)
            pace(s->pace_m, s->pace_label, x->intensity, c, sizeof c);
        else
            fmt(c, sizeof c, 100 * x->intensity / m->cp, 0);
        snprintf(e, sizeof e, "%s", ok ? dur(x->pred.value, g, sizeof g) : "-");
        if (x->near_cp) {
            at_least(x->at_least_s, e, sizeof e);
            snprintf(f, sizeof f, "%s", CPD_SHEET_CANNOT_TELL);
        } else if (ok && x->pred.ci_valid) {
            char lo[32], hi[32];
            snprintf(f, sizeof f, "%s to %s", dur(x->pred.ci95[0], lo, sizeof lo), dur(x->pred.ci95[1], hi, sizeof hi));
        } else
            snprintf(f, sizeof f, "-");
        const char *row[] = {a, c, e, f};
        tt_row(t, row);
    }
    tt_print(b, t);

    if (s->session) {
        char w[1024];
        session_words(s, w, sizeof w);
        sb_printf(b, "\nsuggested session: %s\n  cpdomain predict %s --protocol \"%s\"\n", w, s->code, s->session->protocol);
    }
    if (s->ramp_label)
        sb_printf(b, "\nramp: %s\n", s->ramp_label);
    for (size_t i = 0; i < s->nextra; i++)
        sb_printf(b, "\n%s:\n  %s\n", s->extra[i].title ? s->extra[i].title : s->extra[i].key,
                  s->extra[i].text ? s->extra[i].text : "(a plot: see the HTML sheet)");

    sb_puts(b, "\nmodels:\n");
    memset(t, 0, sizeof *t);
    t->ncols = 6;
    t->align = "lrrrrl";
    const char *hm[] = {"model", cp_word(s), spd ? "D'" : "W'", spd ? "%SEE CS" : "%SEE CP", spd ? "%SEE D'" : "%SEE W'", "status"};
    tt_row(t, hm);
    for (int k = 0; k < CPD_PD_NMODELS; k++) {
        const cpd_pd_model_fit *x = &s->fit->models[k];
        int best = s->fit->has_best && s->fit->best == (cpd_pd_model)k;
        snprintf(a, sizeof a, "%s%s", cpd_pd_model_name((cpd_pd_model)k), best ? " *" : s->model == (cpd_pd_model)k ? " (used)" : "");
        snprintf(c, sizeof c, "%s", x->ok ? inten(spd, x->cp, g, sizeof g) : "-");
        snprintf(e, sizeof e, "%s", x->ok ? capac(spd, x->w_prime, g, sizeof g) : "-");
        fmt(f, sizeof f, x->ok && x->see_valid ? x->see_cp_pct : NAN, 1);
        fmt(g, sizeof g, x->ok && x->see_valid ? x->see_w_prime_pct : NAN, 1);
        char st[TXT_CELL];
        model_status(s->fit, k, st, sizeof st);
        const char *row[] = {a, c, e, f, g, st};
        tt_row(t, row);
    }
    tt_print(b, t);
    free(t);

    int any = 0;
    for (unsigned k = 0; k < CPD_DOMAINS_NFLAGS; k++)
        if (d->flags & (1u << k))
            sb_printf(b, "%s  - %s\n", any++ ? "" : "\nquality notes:\n", cpd_domains_flag_text(1u << k));
    for (unsigned k = 0; k < CPD_PD_NFLAGS; k++)
        if (s->fit->flags & (1u << k))
            sb_printf(b, "%s  - %s\n", any++ ? "" : "\nquality notes:\n", cpd_pd_flag_text(1u << k, s->modality));
    for (size_t i = 0; i < s->nnotes; i++)
        sb_printf(b, "%s  - %s\n", any++ ? "" : "\nquality notes:\n", s->notes_more[i]);
    sb_puts(b, "\n");
    if (s->hr_caution)
        sb_printf(b, "%s\n", s->hr_caution);
    if (s->caution)
        sb_printf(b, "%s\n", s->caution);
    sb_printf(b, "%s\n", UNCERTAINTY);
}

int cpd_sheet_render(const cpd_sheet *s, cpd_sheet_format f, char **out)
{
    if (!out)
        return CPD_EUSAGE;
    *out = NULL;
    if (!sheet_ok(s) || (f != CPD_SHEET_HTML && f != CPD_SHEET_CSV && f != CPD_SHEET_TXT))
        return CPD_EUSAGE;
    const cpd_pd_model_fit *m = used_model(s);
    if (!model_valid(m))
        return CPD_EUSAGE;
    sb b = {0};
    if (f == CPD_SHEET_HTML)
        render_html(&b, s);
    else if (f == CPD_SHEET_CSV)
        render_csv(&b, s);
    else
        render_txt(&b, s);
    return sb_finish(&b, out);
}

/* ---------------------------------------------------------------- index */

int cpd_sheet_index_html(const char *title, const char *date, const cpd_sheet_index_row *rows, size_t n,
                         const char *caution, const char *generator, char **out)
{
    if (!out)
        return CPD_EUSAGE;
    *out = NULL;
    if (!title || !date || (n && !rows))
        return CPD_EUSAGE;
    for (size_t i = 0; i < n; i++)
        if (!rows[i].code || !rows[i].name)
            return CPD_EUSAGE;
    sb b = {0};
    html_head(&b, title, "");
    sb_puts(&b, "<div class=\"top\">\n<div><h1>");
    esc(&b, title);
    sb_printf(&b, "</h1>\n<p class=\"who\">%zu athlete%s</p>\n</div>\n<div class=\"when\">Intensity-domain sheets<br><b>", n,
              n == 1 ? "" : "s");
    esc(&b, date);
    sb_puts(&b, "</b></div>\n</div>\n");
    sb_puts(&b, "<p class=\"lead\">Critical power (speed) with its 95 % interval, W\xe2\x80\xb2 (D\xe2\x80\xb2), the GET "
                "equivalent and VO2peak of each athlete; the name opens the athlete's sheet.</p>\n");
    table_open(&b);
    const char *h[] = {"Athlete", "CP / CS", "W\xe2\x80\xb2 / D\xe2\x80\xb2", "GET equivalent", "VO2peak", "Tests", "Status"};
    th_row(&b, h, "lnnnnll", 7);
    for (size_t i = 0; i < n; i++) {
        const cpd_sheet_index_row *r = &rows[i];
        int spd = r->modality == CPD_PD_SPEED;
        char a[96], c[96], p[48];
        sb_puts(&b, "<tr><td>");
        if (r->href) {
            sb_puts(&b, "<a href=\"");
            esc(&b, r->href);
            sb_puts(&b, "\">");
            esc(&b, r->name);
            sb_puts(&b, "</a>");
        } else
            esc(&b, r->name);
        sb_puts(&b, "<br><small>");
        esc(&b, r->code);
        if (r->sport && *r->sport) {
            sb_puts(&b, " &middot; ");
            esc(&b, r->sport);
        }
        sb_puts(&b, "</small></td>");
        if (r->has_fit) {
            sb_puts(&b, "<td class=\"n\">");
            esc(&b, inten(spd, r->cp, a, sizeof a));
            if (spd) {
                sb_puts(&b, " <small>");
                esc(&b, pace(r->pace_m, r->pace_label, r->cp, p, sizeof p));
                sb_puts(&b, "</small>");
            }
            if (r->has_cp_ci && isfinite(r->cp_ci95[0]) && isfinite(r->cp_ci95[1])) {
                sb_puts(&b, "<br><small>95 %: ");
                esc(&b, ci_words(spd, 1, r->cp_ci95, c, sizeof c));
                sb_puts(&b, "</small>");
            } else
                sb_puts(&b, "<br><small>no interval</small>");
            sb_puts(&b, "</td>");
            td(&b, "n", capac(spd, r->w_prime, a, sizeof a));
        } else {
            td(&b, "n", "-");
            td(&b, "n", "-");
        }
        td(&b, "n", r->has_get ? inten(spd, r->get, a, sizeof a) : "-");
        if (r->has_vo2peak && isfinite(r->vo2peak_ml_min)) {
            snprintf(a, sizeof a, "%s L/min", fmt(c, sizeof c, r->vo2peak_ml_min / 1000, 2));
            td(&b, "n", a);
        } else
            td(&b, "n", "-");
        sb_puts(&b, "<td><small>");
        if (r->fit_dates) {
            sb_puts(&b, "trials ");
            esc(&b, r->fit_dates);
        }
        if (r->ramp_date) {
            sb_puts(&b, r->fit_dates ? "<br>ramp " : "ramp ");
            esc(&b, r->ramp_date);
        }
        if (!r->fit_dates && !r->ramp_date)
            sb_puts(&b, "-");
        sb_puts(&b, "</small></td>");
        if (!r->href) {
            sb_puts(&b, "<td class=\"w\">no sheet: ");
            esc(&b, r->why ? r->why : "not enough data");
            sb_puts(&b, "</td>");
        } else if (r->stale)
            sb_puts(&b, "<td><span class=\"stale\">a boundary is stale</span></td>");
        else
            td(&b, NULL, "current");
        sb_puts(&b, "</tr>\n");
    }
    if (!n)
        sb_puts(&b, "<tr><td colspan=\"7\">no athletes</td></tr>\n");
    table_close(&b);
    sb_puts(&b, "<div class=\"caution\">\n");
    if (caution)
        para(&b, NULL, caution);
    para(&b, NULL, UNCERTAINTY);
    sb_puts(&b, "</div>\n");
    html_foot(&b, generator, date);
    return sb_finish(&b, out);
}
