/* cmd_sheet.c: 'sheet CODE' and 'sheet --all -o DIR': the per-athlete domain sheet (HTML, CSV,
 * JSON or text) and the team's index page. The store is only read. */
#include "cli_domains_json.h"
#include "cli_energy.h"
#include "cli_gx.h"
#include "cli_history.h"
#include "cli_squad.h"
#include "commands.h"
#include "cpdomain/csvin.h"
#include "cpdomain/plots.h"
#include "cpdomain/sheet.h"
#include "cpdomain/units.h"
#include "cpdomain/validate.h"
#include "cpdomain/version.h"

#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>
#include <sys/stat.h>
#include <sysexits.h>

static const char HELP[] =
    "usage: cpdomain sheet CODE [--format html|csv|json|txt] [-o FILE] [--model NAME] [--from D] [--to D]\n"
    "                           [--stale-days N]\n"
    "       cpdomain sheet --all -o DIR [--squad NAME] [--format html|csv|json|txt] [...]\n\n"
    "The athlete's intensity-domain sheet: the boundaries with their uncertainty and sources, targets\n"
    "per domain (W, % of CP, W/kg, pace, heart rate), power for target times to failure and time to\n"
    "failure at round powers with 95 % intervals, a suggested interval session with its W' balance,\n"
    "the model comparison, quality notes in words, and plots (power-duration curve with the domains,\n"
    "the session's W' balance, the ramp's V-slope).\n"
    "  --format   html (default; one self-contained page, printable), csv (section,item,key,value,unit\n"
    "             rows), json, or txt (for the terminal). Without --format the extension of -o FILE\n"
    "             decides, and --json means json.\n"
    "  -o FILE    write the sheet to FILE instead of stdout\n"
    "  --all      every athlete: DIR/index.html (the team's table, linking the sheets) and one\n"
    "             DIR/CODE.<format> per athlete; athletes without enough data are listed without a link\n"
    "  --squad    with --all: the athletes of this squad only\n"
    "  --model, --from, --to, --stale-days: as for 'cpdomain domains'\n\n"
    "examples:\n"
    "  cpdomain sheet C03 -o c03.html\n"
    "  cpdomain sheet R01 --format txt\n"
    "  cpdomain sheet --all -o sheets/\n"
    "  cpdomain squad add track\n"
    "  cpdomain squad assign R01 track\n"
    "  cpdomain sheet --all --squad track -o track/\n";

typedef struct {
    const char *model, *from, *to, *stale, *format, *out, *squad;
    int all;
} sheet_opts;

static int sheet_opt(int opt, const char *arg, void *ud)
{
    sheet_opts *o = ud;
    switch (opt) {
    case 'm': o->model = arg; break;
    case 'f': o->from = arg; break;
    case 't': o->to = arg; break;
    case 's': o->stale = arg; break;
    case 'F': o->format = arg; break;
    case 'o': o->out = arg; break;
    case 'a': o->all = 1; break;
    case 'S': o->squad = arg; break;
    default: return EX_USAGE;
    }
    return 0;
}

typedef enum { FMT_HTML, FMT_CSV, FMT_JSON, FMT_TXT } out_format;
static const char *const FMT_EXT[] = {"html", "csv", "json", "txt"};

static int parse_format(const char *s, out_format *f)
{
    /* any letter case: 'sheet -o X.CSV' is CSV */
    for (int k = 0; k < 4; k++)
        if (strcasecmp(s, FMT_EXT[k]) == 0) {
            *f = (out_format)k;
            return 0;
        }
    if (strcasecmp(s, "htm") == 0) {
        *f = FMT_HTML;
        return 0;
    }
    return -1;
}

/* Everything one sheet holds; the cpd_sheet borrows from the rest. */
typedef struct {
    cli_domains d;
    int has_d;
    cpd_sheet_tables tables;
    cpd_sheet_session *session; /* NULL when none could be built */
    char *svg_pd, *svg_balance, *svg_vslope, *svg_kinetics, *svg_trend;
    char kinetics_text[600], trend_text[600], field_text[900];
    char fuel_text[1200];
    char test_what[CPD_SHEET_MAX_TESTS][CPD_DOMAINS_TEXT + 32];
    char test_date[CPD_SHEET_MAX_TESTS][32];
    char ramp_label[200];
    char skipped_note[200];
    char date[11];
    cpd_sheet s;
} sheet_build;

static void build_free(sheet_build *b)
{
    if (!b)
        return;
    if (b->has_d)
        cli_domains_free(&b->d);
    free(b->session);
    free(b->svg_pd);
    free(b->svg_balance);
    free(b->svg_vslope);
    free(b->svg_kinetics);
    free(b->svg_trend);
    free(b);
}

static void add_test(sheet_build *b, const char *what, const char *date)
{
    cpd_sheet *s = &b->s;
    if (s->ntests >= CPD_SHEET_MAX_TESTS)
        return;
    size_t i = s->ntests++;
    snprintf(b->test_what[i], sizeof b->test_what[i], "%s", what);
    snprintf(b->test_date[i], sizeof b->test_date[i], "%s", date ? date : "");
    s->tests[i].what = b->test_what[i];
    s->tests[i].date = b->test_date[i];
}

/* The ramp the domains rest on (the library keeps its analysis): VO2peak with its interval and
 * the V-slope plot. */
static void add_ramp(sheet_build *b)
{
    cpd_sheet *s = &b->s;
    const cpd_ramp_result *r = b->d.ramp;
    cpd_ramp_ws *w = b->d.ramp_ws;
    if (!r)
        return;
    s->has_vo2peak = 1;
    s->vo2peak_ml_min = r->vo2peak_ml_min;
    s->has_vo2peak_rel = r->has_relative;
    s->vo2peak_ml_kg_min = r->vo2peak_ml_kg_min;
    cpd_ramp_opts ro; /* the default window and smoothing, as the stored analysis without overrides */
    cpd_ramp_opts_init(&ro);
    cpd_ramp_ci ci;
    if (cpd_ramp_ci_compute(w, r, &ro, CPD_RAMP_CI_BOOT, CPD_RAMP_CI_SEED, &ci) == CPD_OK && ci.has_vo2peak_ci) {
        s->has_vo2peak_ci = 1;
        s->vo2peak_ci95[0] = ci.vo2peak_ci95[0];
        s->vo2peak_ci95[1] = ci.vo2peak_ci95[1];
    }
    char get[64] = "no GET found";
    if (r->get.status != CPD_THR_NOT_FOUND)
        snprintf(get, sizeof get, "GET at VO2 %.2f L/min (%.0f %% of VO2peak)", r->get.vo2_ml_min / 1000, r->get.pct_vo2peak);
    snprintf(b->ramp_label, sizeof b->ramp_label, "ramp %lld of %s: VO2peak %.2f L/min, %s", b->d.ramp_id, b->d.ramp_date,
             r->vo2peak_ml_min / 1000, get);
    s->ramp_label = b->ramp_label;
    if (cpd_plot_vslope(w, r, &b->svg_vslope) == CPD_OK)
        s->svg_vslope = b->svg_vslope;
}

/* The newest bout of the fit's modality: its VO2 kinetics chart and a sentence, as an optional
 * section. Quiet when there is none or it cannot be analysed. */
static void add_kinetics(cli_ctx *c, sheet_build *b)
{
    cpd_sheet *s = &b->s;
    cpd_gx_test *v = NULL;
    size_t n = 0;
    if (s->nextra >= CPD_SHEET_MAX_EXTRA || cpd_store_gx_list(c->store, s->code, CPD_GXT_BOUT, &v, &n))
        return;
    int want_speed = s->modality == CPD_PD_SPEED;
    for (size_t i = n; i-- > 0;) {
        if (v[i].speed != want_speed)
            continue;
        char id[32];
        snprintf(id, sizeof id, "%lld", (long long)v[i].id);
        int quiet = c->quiet;
        c->quiet = 1;
        c->mute++;
        int rc = cli_bout_plot(c, id, &b->svg_kinetics, b->kinetics_text, sizeof b->kinetics_text);
        c->mute--;
        c->quiet = quiet;
        if (rc == 0) {
            add_test(b, "constant-power bout (gas exchange)", v[i].date);
            s->extra[s->nextra++] = (cpd_sheet_section){"kinetics", "VO2 kinetics of the newest bout", b->kinetics_text,
                                                        b->svg_kinetics};
        }
        break;
    }
    free(v);
}

/* The field estimate beside the lab estimate: the models fitted to the season's mean-maximal
 * curve of recorded sessions (fit --source curve), when the athlete has sessions. */
/* Energy and carbohydrate per hour at each domain's target (cli_energy.c), as an optional section. */
static void add_fuel(cli_ctx *c, sheet_build *b)
{
    cpd_sheet *s = &b->s;
    if (s->nextra < CPD_SHEET_MAX_EXTRA && s->modality == CPD_PD_POWER &&
        cli_energy_fuel_text(c, s->code, s->dom, b->fuel_text, sizeof b->fuel_text) == 0)
        s->extra[s->nextra++] = (cpd_sheet_section){"fuel", "Energy and carbohydrate at the domains' targets", b->fuel_text,
                                                    NULL};
}

static void add_field(cli_ctx *c, sheet_build *b)
{
    cpd_sheet *s = &b->s;
    if (s->nextra >= CPD_SHEET_MAX_EXTRA)
        return;
    cpd_session_rec *v = NULL;
    size_t n = 0;
    if (cpd_store_session_list(c->store, s->code, 0, &v, &n) || n == 0) {
        free(v);
        return;
    }
    free(v);
    cli_pd_fit g;
    int quiet = c->quiet;
    c->quiet = 1;
    c->mute++;
    int rc = cli_pd_load_curve_fit(c, s->code, NULL, NULL, NULL, CPD_PD_ALL_MODELS, &g);
    c->mute--;
    c->quiet = quiet;
    if (rc)
        return;
    const cpd_pd_result *r = g.res;
    if (r->has_best) {
        const cpd_pd_model_fit *m = &r->models[r->best], *lab = &b->d.fit.res->models[b->d.model];
        int spd = s->modality == CPD_PD_SPEED;
        char ci[96] = "";
        if (m->has_se)
            snprintf(ci, sizeof ci, " (95 %% CI %.*f to %.*f)", spd ? 2 : 0, m->cp_ci95[0], spd ? 2 : 0, m->cp_ci95[1]);
        snprintf(b->field_text, sizeof b->field_text,
                 "Field estimate from the best efforts of %zu recorded session points (%s, %s model, sessions %s to %s): "
                 "%s %.*f %s%s, %s %.*f %s. The lab estimate from the trials: %s %.*f %s, %s %.*f %s. %s",
                 g.n, CLI_CURVE_DURATIONS, cpd_pd_model_name(r->best), g.trials[0].date, g.trials[g.n - 1].date,
                 spd ? "CS" : "CP", spd ? 2 : 0, m->cp, spd ? "m/s" : "W", ci, spd ? "D'" : "W'", spd ? 0 : 1,
                 spd ? m->w_prime : m->w_prime / 1000, spd ? "m" : "kJ", spd ? "CS" : "CP", spd ? 2 : 0, lab->cp,
                 spd ? "m/s" : "W", spd ? "D'" : "W'", spd ? 0 : 1, spd ? lab->w_prime : lab->w_prime / 1000,
                 spd ? "m" : "kJ", CLI_FIELD_ESTIMATE);
        s->extra[s->nextra++] = (cpd_sheet_section){"field_estimate", "Field estimate from recorded sessions", b->field_text,
                                                    NULL};
    }
    cli_pd_fit_free(&g);
}

/* The season: CP (CS) of every block of trials with its interval, and the verdict on the newest
 * change, as an optional section when there are two blocks or more. */
static void add_trend(cli_ctx *c, sheet_build *b)
{
    cpd_sheet *s = &b->s;
    if (s->nextra >= CPD_SHEET_MAX_EXTRA)
        return;
    cli_history a; /* an optional section: the library's messages are not shown */
    if (cpd_athlete_history_build(c->store, s->code, CPD_HISTORY_WINDOW_DAYS, 0, CPD_PD_HYPERBOLIC, &a, NULL))
        return;
    size_t nb = a.h->nblocks;
    if (nb >= 2) {
        int spd = s->modality == CPD_PD_SPEED;
        if (cli_history_plot(&a, &b->svg_trend) == CPD_OK) {
            const cpd_history_change *ch = &a.h->block[nb - 1].d_cp;
            if (ch->valid)
                snprintf(b->trend_text, sizeof b->trend_text,
                         "%zu blocks of trials within %d days. Newest change of %s: %+.*f %s (95 %% CI %+.*f to "
                         "%+.*f %s, %s model in both blocks, Student's t with Welch-Satterthwaite dof): %s (smallest "
                         "worthwhile change %.*f %s, %.1f %% of the earlier value: Hopkins 2004).",
                         nb, a.win, spd ? "CS" : "CP", CLI_DEC_INTENSITY(spd), ch->delta, spd ? "m/s" : "W",
                         CLI_DEC_INTENSITY(spd), ch->ci95[0], CLI_DEC_INTENSITY(spd), ch->ci95[1], spd ? "m/s" : "W",
                         ch->model_valid ? cpd_pd_model_name(ch->model) : "the same",
                         ch->meaningful ? "meaningful" : ch->excludes_zero ? "a change, not clearly worthwhile"
                                                                          : "within the noise",
                         CLI_DEC_INTENSITY(spd), ch->swc, spd ? "m/s" : "W", CPD_HISTORY_SWC_PCT);
            else
                snprintf(b->trend_text, sizeof b->trend_text, "%zu blocks of trials within %d days.", nb, a.win);
            s->extra[s->nextra++] = (cpd_sheet_section){"season", "The season", b->trend_text, b->svg_trend};
        }
    }
    cli_history_free(&a);
}

/* Builds the sheet of athlete code. Returns 0 or an exit code after printing why. */
static int build_sheet(cli_ctx *c, const char *code, const sheet_opts *o, int stale, sheet_build **out)
{
    *out = NULL;
    sheet_build *b = calloc(1, sizeof *b);
    if (!b)
        return cli_fail(c, CPD_ENOMEM, "out of memory");
    int rc = cli_domains_build(c, code, o->from, o->to, o->model, stale, &b->d);
    if (rc) {
        free(b);
        return rc;
    }
    b->has_d = 1;
    const cli_domains *d = &b->d;
    const cli_pd_fit *f = &d->fit;
    const cpd_pd_model_fit *m = &f->res->models[d->model];
    cpd_sheet *s = &b->s;
    if ((rc = cpd_sheet_tables_compute(m, &d->res, &b->tables))) {
        build_free(b);
        return cli_fail(c, rc, "%s: the prediction tables cannot be computed: %s", code, cpd_strerror(rc));
    }
    b->session = malloc(sizeof *b->session);
    if (!b->session) {
        build_free(b);
        return cli_fail(c, CPD_ENOMEM, "out of memory");
    }
    if (cpd_sheet_session_build(m, b->session) != CPD_OK) {
        free(b->session);
        b->session = NULL;
    }
    cpd_format_date(c->today, b->date);
    s->code = f->athlete.code;
    s->name = f->athlete.name;
    s->sport = f->athlete.sport;
    s->notes = f->athlete.notes;
    s->has_mass = f->athlete.has_mass;
    s->mass_kg = f->athlete.mass_kg;
    s->date = b->date;
    s->modality = f->modality;
    s->pace_m = cli_pd_pace_m(&f->athlete, &s->pace_label);
    s->fit = f->res;
    s->model = d->model;
    s->dom = &d->res;
    s->tables = &b->tables;
    s->session = b->session;
    s->hr_caution = CLI_HR_CAUTION;
    s->caution = CLI_CAUTION;
    s->generator = "cpdomain " CPDOMAIN_VERSION;

    char what[CPD_DOMAINS_TEXT + 32], when[32];
    snprintf(what, sizeof what, "%zu %s trial%s", f->n, f->modality == CPD_PD_SPEED ? "speed-duration" : "power-duration",
             f->n == 1 ? "" : "s");
    if (strcmp(f->trials[0].date, f->trials[f->n - 1].date))
        snprintf(when, sizeof when, "%s to %s", f->trials[0].date, f->trials[f->n - 1].date);
    else
        snprintf(when, sizeof when, "%s", f->trials[0].date);
    add_test(b, what, when);
    if (d->has_ramp) {
        snprintf(what, sizeof what, "ramp %lld (gas exchange)", d->ramp_id);
        add_test(b, what, d->ramp_date);
        add_ramp(b);
    }
    if (d->res.flags & CPD_DOMAINS_F_GET_FROM_LT1)
        add_test(b, d->in.lt1_source, d->in.lt1_date);
    if (d->in.has_tau)
        add_test(b, d->in.tau_source, d->in.tau_date);
    if (d->ramp_mrt_missing && s->nnotes < CPD_SHEET_MAX_NOTES)
        s->notes_more[s->nnotes++] = CLI_MRT_MISSING_NOTE;
    if (d->ramp_no_vco2 && s->nnotes < CPD_SHEET_MAX_NOTES)
        s->notes_more[s->nnotes++] = CLI_NO_VCO2_NOTE;
    if (f->skipped_other && s->nnotes < CPD_SHEET_MAX_NOTES) {
        snprintf(b->skipped_note, sizeof b->skipped_note, "%zu %s trial(s) were left out: one fit uses one modality.",
                 f->skipped_other, f->modality == CPD_PD_SPEED ? "power" : "speed or distance");
        s->notes_more[s->nnotes++] = b->skipped_note;
    }

    if ((rc = cpd_plot_pd(m, f->x, f->t, f->n, &d->res, &b->svg_pd)) == CPD_OK)
        s->svg_pd = b->svg_pd;
    else if (rc == CPD_ENOMEM) {
        build_free(b);
        return cli_fail(c, rc, "out of memory");
    }
    if (b->session && cpd_plot_balance(b->session->intensity, b->session->balance, b->session->n, f->modality == CPD_PD_SPEED,
                                       m->cp, m->w_prime, &b->svg_balance) == CPD_OK)
        s->svg_balance = b->svg_balance;
    add_kinetics(c, b);
    add_trend(c, b);
    add_field(c, b);
    add_fuel(c, b);
    *out = b;
    return 0;
}

static void pred_json(cli_json *o, const char *vkey, double v, const cpd_pd_pred *p, const char *pkey)
{
    cj_num(o, vkey, v);
    cj_num(o, pkey, p->valid ? p->value : NAN);
    cj_pair(o, "ci95", p->valid && p->ci_valid ? p->ci95[0] : NAN, p->ci95[1]);
    cj_str(o, "status", p->valid ? NULL : cpd_pd_pred_text(p->status));
}

/* The sheet as one JSON document: the same numbers as the CSV, under SPEC-style keys. */
static cli_json *sheet_json(const sheet_build *b)
{
    const cpd_sheet *s = &b->s;
    int spd = s->modality == CPD_PD_SPEED;
    const char *ikey = spd ? "speed_m_s" : "power_w", *ckey = spd ? "balance_m" : "balance_j";
    char k[48];
    cli_json *doc = cj_obj();
    cli_json *a = cj_add_obj(doc, "athlete");
    cj_str(a, "code", s->code);
    cj_str(a, "name", s->name);
    cj_str(a, "sport", s->sport);
    cj_num(a, "mass_kg", s->has_mass ? s->mass_kg : NAN);
    cj_str(a, "notes", s->notes);
    cj_str(doc, "date", s->date);
    cj_str(doc, "modality", spd ? "speed" : "power");
    cj_str(doc, "model", cpd_pd_model_name(s->model));
    cli_json *ts = cj_add_arr(doc, "tests");
    for (size_t i = 0; i < s->ntests; i++) {
        cli_json *t = cj_obj();
        cj_str(t, "what", s->tests[i].what);
        cj_str(t, "date", s->tests[i].date);
        cj_push(ts, t);
    }
    const cpd_pd_model_fit *m = &s->fit->models[s->model];
    cli_json *fj = cj_add_obj(doc, "fit");
    cj_str(fj, "model", cpd_pd_model_name(s->model));
    cj_num(fj, cli_pd_key(s->modality, "cp", k, sizeof k), m->cp);
    cj_pair(fj, cli_pd_key(s->modality, "cp_ci95", k, sizeof k), m->has_se ? m->cp_ci95[0] : NAN, m->cp_ci95[1]);
    cj_num(fj, cli_pd_key(s->modality, "w_prime", k, sizeof k), m->w_prime);
    cj_pair(fj, cli_pd_key(s->modality, "w_prime_ci95", k, sizeof k), m->has_se ? m->w_prime_ci95[0] : NAN, m->w_prime_ci95[1]);
    cj_int(fj, "n", (long long)m->n);
    cj_str(doc, "best", s->fit->has_best ? cpd_pd_model_name(s->fit->best) : NULL);
    cli_json *ms = cj_add_arr(doc, "models");
    for (int j = 0; j < CPD_PD_NMODELS; j++) {
        const cpd_pd_model_fit *x = &s->fit->models[j];
        cli_json *o = cj_obj();
        cj_str(o, "model", cpd_pd_model_name((cpd_pd_model)j));
        cj_bool(o, "ok", x->ok);
        cj_num(o, cli_pd_key(s->modality, "cp", k, sizeof k), x->ok ? x->cp : NAN);
        cj_num(o, cli_pd_key(s->modality, "w_prime", k, sizeof k), x->ok ? x->w_prime : NAN);
        cj_num(o, cli_pd_key(s->modality, "see_cp_pct", k, sizeof k), x->ok && x->see_valid ? x->see_cp_pct : NAN);
        cj_num(o, cli_pd_key(s->modality, "see_w_prime_pct", k, sizeof k), x->ok && x->see_valid ? x->see_w_prime_pct : NAN);
        cj_str(o, "failure", x->ok ? NULL : cpd_pd_fail_text(x->fail));
        cli_pd_flags_json(cj_add_arr(o, "flags"), x->flags, s->modality);
        cj_push(ms, o);
    }
    cli_domains_json(cj_add_obj(doc, "domains"), &b->d);
    cli_json *ft = cj_add_arr(doc, spd ? "speed_for_time" : "power_for_time");
    for (int j = 0; j < CPD_SHEET_NTIMES; j++) {
        cli_json *o = cj_obj();
        pred_json(o, "time_to_failure_s", s->tables->for_time[j].duration_s, &s->tables->for_time[j].pred, ikey);
        cj_push(ft, o);
    }
    cli_json *at = cj_add_arr(doc, spd ? "time_at_speed" : "time_at_power");
    for (size_t j = 0; j < s->tables->n_at; j++) {
        cli_json *o = cj_obj();
        const cpd_sheet_at_intensity *x = &s->tables->at[j];
        if (x->near_cp) { /* inside CP's interval: a lower bound only */
            cj_num(o, ikey, x->intensity);
            cj_null(o, "time_to_failure_s");
            cj_null(o, "ci95");
            cj_num(o, "time_to_failure_at_least_s", x->at_least_s > 0 ? x->at_least_s : NAN);
            cj_str(o, "status", CPD_SHEET_CANNOT_TELL);
        } else
            pred_json(o, ikey, x->intensity, &x->pred, "time_to_failure_s");
        cj_push(at, o);
    }
    if (s->session) {
        const cpd_sheet_session *x = s->session;
        cli_json *o = cj_add_obj(doc, "session");
        cj_str(o, "protocol", x->protocol);
        cj_str(o, "balance_model", "differential");
        cj_num(o, spd ? "warmup_m_s" : "warmup_w", x->warmup);
        cj_num(o, spd ? "interval_m_s" : "interval_w", x->interval);
        cj_num(o, spd ? "recovery_m_s" : "recovery_w", x->recovery);
        cj_num(o, spd ? "interval_pct_cs" : "interval_pct_cp", x->interval_pct_cp);
        cj_num(o, "interval_spend_pct", x->interval_spend_pct);
        snprintf(k, sizeof k, "min_%s", ckey);
        cj_num(o, k, x->res.min_balance);
        cj_int(o, "min_balance_at_s", (long long)x->res.min_at_s);
        snprintf(k, sizeof k, "end_%s", ckey);
        cj_num(o, k, x->res.end_balance);
        if (x->res.failed)
            cj_int(o, "failure_at_s", (long long)x->res.failure_at_s);
        else
            cj_null(o, "failure_at_s");
    } else
        cj_null(doc, "session");
    if (b->d.has_ramp) {
        cli_json *o = cj_add_obj(doc, "ramp");
        cj_int(o, "id", b->d.ramp_id);
        cj_str(o, "date", b->d.ramp_date);
        cj_num(o, "vo2peak_ml_min", s->has_vo2peak ? s->vo2peak_ml_min : NAN);
        cj_pair(o, "vo2peak_ci95", s->has_vo2peak_ci ? s->vo2peak_ci95[0] : NAN, s->vo2peak_ci95[1]);
        cj_num(o, "vo2peak_ml_kg_min", s->has_vo2peak_rel ? s->vo2peak_ml_kg_min : NAN);
    } else
        cj_null(doc, "ramp");
    cli_json *fl = cj_add_arr(doc, "flags");
    for (unsigned j = 0; j < CPD_DOMAINS_NFLAGS; j++)
        if (s->dom->flags & (1u << j)) {
            cli_json *o = cj_obj();
            cj_str(o, "name", cpd_domains_flag_name(1u << j));
            cj_str(o, "text", cpd_domains_flag_text(1u << j));
            cj_push(fl, o);
        }
    for (unsigned j = 0; j < CPD_PD_NFLAGS; j++)
        if (s->fit->flags & (1u << j)) {
            cli_json *o = cj_obj();
            cj_str(o, "name", cpd_pd_flag_name(1u << j, s->modality));
            cj_str(o, "text", cpd_pd_flag_text(1u << j, s->modality));
            cj_push(fl, o);
        }
    cli_json *nt = cj_add_arr(doc, "notes");
    for (size_t j = 0; j < s->nnotes; j++)
        cj_push_str(nt, s->notes_more[j]);
    cli_json *sec = cj_add_arr(doc, "sections");
    for (size_t j = 0; j < s->nextra; j++) {
        cli_json *o = cj_obj();
        cj_str(o, "key", s->extra[j].key);
        cj_str(o, "title", s->extra[j].title);
        cj_str(o, "text", s->extra[j].text);
        cj_push(sec, o);
    }
    cj_str(doc, "hr_caution", s->hr_caution);
    cj_str(doc, "caution", s->caution);
    cj_str(doc, "uncertainty", cpd_sheet_uncertainty());
    return doc;
}

/* The sheet in format fm as a new string (free with free() or cj_render_free for JSON: both free). */
static int render(cli_ctx *c, const sheet_build *b, out_format fm, char **text)
{
    *text = NULL;
    int rc;
    if (fm == FMT_JSON) {
        cli_json *doc = sheet_json(b);
        char *j = cj_render(doc);
        cj_free(doc);
        if (!j)
            return cli_fail(c, CPD_ENOMEM, "out of memory");
        size_t L = strlen(j);
        *text = malloc(L + 2);
        if (*text) {
            memcpy(*text, j, L);
            memcpy(*text + L, "\n", 2);
        }
        cj_render_free(j);
        return *text ? 0 : cli_fail(c, CPD_ENOMEM, "out of memory");
    }
    cpd_sheet_format sf = fm == FMT_HTML ? CPD_SHEET_HTML : fm == FMT_CSV ? CPD_SHEET_CSV : CPD_SHEET_TXT;
    if ((rc = cpd_sheet_render(&b->s, sf, text)))
        return cli_fail(c, rc, "%s: the sheet cannot be rendered: %s", b->s.code, cpd_strerror(rc));
    return 0;
}

static int one_sheet(cli_ctx *c, const char *code, const sheet_opts *o, int stale, out_format fm)
{
    sheet_build *b = NULL;
    int rc = build_sheet(c, code, o, stale, &b);
    if (rc)
        return rc;
    char *text = NULL;
    if (!(rc = render(c, b, fm, &text))) {
        if (o->out) {
            if (!(rc = cli_write_file(c, o->out, text, strlen(text)))) {
                if (c->json) {
                    cli_json *doc = cj_obj();
                    cj_str(doc, "athlete", code);
                    cj_str(doc, "format", FMT_EXT[fm]);
                    cj_str(doc, "file", o->out);
                    rc = cj_print(doc);
                }
                cli_note(c, "wrote %s", o->out);
            }
        } else if (fputs(text, stdout) < 0)
            rc = cli_fail(c, CPD_ESTORE, "writing the sheet to stdout failed");
    }
    free(text);
    build_free(b);
    return rc;
}

/* ---- the team table of 'sheet --all --format csv': one row per athlete ---- */
typedef struct {
    char *s;
    size_t len, cap;
    int oom;
} team_buf;

static void team_add(team_buf *t, const char *cell, int last)
{
    char *q = cpd_csv_field(cell);
    size_t L = q ? strlen(q) : 0;
    if (!q || t->len + L + 3 > t->cap) {
        size_t nc = t->cap ? 2 * t->cap : 4096;
        while (nc < t->len + L + 3)
            nc *= 2;
        char *ns = q ? realloc(t->s, nc) : NULL;
        if (!ns) {
            t->oom = 1;
            free(q);
            return;
        }
        t->s = ns;
        t->cap = nc;
    }
    memcpy(t->s + t->len, q, L);
    t->len += L;
    memcpy(t->s + t->len, last ? "\r\n" : ",", last ? 2 : 1);
    t->len += last ? 2 : 1;
    t->s[t->len] = '\0';
    free(q);
}

static void team_num(team_buf *t, int ok, double v, int last)
{
    char b[40];
    team_add(t, ok ? cli_csv_num(b, sizeof b, v) : "", last);
}

/* Header: the intensity columns hold W for power athletes and m/s for speed athletes (the unit
 * column says which), the capacity J or m; every boundary with its 95 % interval, every domain's
 * range, and the dates the numbers rest on. Opens as it is in a spreadsheet. */
static const char *const TEAM_HEAD[] = {
    "code", "name", "sport", "modality", "intensity unit", "capacity unit", "model", "trials from", "trials to",
    "CP or CS", "CP or CS 95 % CI low", "CP or CS 95 % CI high", "W' or D'", "W' or D' 95 % CI low",
    "W' or D' 95 % CI high", "moderate-heavy", "heavy-severe", "heavy-severe 95 % CI low", "heavy-severe 95 % CI high",
    "severe-extreme", "severe-extreme 95 % CI low", "severe-extreme 95 % CI high", "moderate up to", "heavy from",
    "heavy up to", "heavy-domain ceiling", "severe from", "severe up to", "extreme from", "VO2peak (mL/min)",
    "ramp date", "stale data"};

static void team_row(team_buf *t, const cpd_athlete *a, const sheet_build *b)
{
    const cli_domains *d = &b->d;
    const cpd_pd_model_fit *m = &d->fit.res->models[d->model];
    const cpd_domains_result *r = &d->res;
    int spd = d->fit.modality == CPD_PD_SPEED;
    team_add(t, a->code, 0);
    team_add(t, a->name, 0);
    team_add(t, a->sport, 0);
    team_add(t, spd ? "speed" : "power", 0);
    team_add(t, spd ? "m/s" : "W", 0);
    team_add(t, spd ? "m" : "J", 0);
    team_add(t, cpd_pd_model_name(d->model), 0);
    team_add(t, d->fit.trials[0].date, 0);
    team_add(t, d->fit.trials[d->fit.n - 1].date, 0);
    team_num(t, 1, m->cp, 0);
    team_num(t, m->has_se, m->cp_ci95[0], 0);
    team_num(t, m->has_se, m->cp_ci95[1], 0);
    team_num(t, 1, m->w_prime, 0);
    team_num(t, m->has_se, m->w_prime_ci95[0], 0);
    team_num(t, m->has_se, m->w_prime_ci95[1], 0);
    const cpd_boundary *mh = &r->b[CPD_BND_MOD_HEAVY], *hs = &r->b[CPD_BND_HEAVY_SEVERE], *se = &r->b[CPD_BND_SEVERE_EXTREME];
    team_num(t, mh->valid, mh->value, 0);
    team_num(t, hs->valid, hs->value, 0);
    team_num(t, hs->valid && hs->has_ci, hs->ci95[0], 0);
    team_num(t, hs->valid && hs->has_ci, hs->ci95[1], 0);
    team_num(t, se->valid, se->value, 0);
    team_num(t, se->valid && se->has_ci, se->ci95[0], 0);
    team_num(t, se->valid && se->has_ci, se->ci95[1], 0);
    const cpd_domain_range *g = r->range;
    team_num(t, g[CPD_DOM_MODERATE].has_hi, g[CPD_DOM_MODERATE].hi, 0);
    team_num(t, g[CPD_DOM_HEAVY].has_lo, g[CPD_DOM_HEAVY].lo, 0);
    team_num(t, g[CPD_DOM_HEAVY].has_hi, g[CPD_DOM_HEAVY].hi, 0);
    team_num(t, isfinite(r->heavy_ceiling), r->heavy_ceiling, 0);
    team_num(t, g[CPD_DOM_SEVERE].has_lo, g[CPD_DOM_SEVERE].lo, 0);
    team_num(t, g[CPD_DOM_SEVERE].has_hi, g[CPD_DOM_SEVERE].hi, 0);
    team_num(t, g[CPD_DOM_EXTREME].has_lo, g[CPD_DOM_EXTREME].lo, 0);
    team_num(t, b->s.has_vo2peak, b->s.vo2peak_ml_min, 0);
    team_add(t, d->has_ramp ? d->ramp_date : "", 0);
    team_add(t, r->flags & CPD_DOMAINS_F_STALE ? "yes" : "no", 1);
}

static int all_sheets(cli_ctx *c, const sheet_opts *o, int stale, out_format fm)
{
    cpd_athlete *as = NULL;
    cpd_athlete_squad *sq = NULL;
    size_t n = 0;
    int any = 0;
    int rc = cli_squad_athletes(c, o->squad, &as, &sq, &n, &any);
    if (rc)
        return rc;
    free(sq);
    if (n == 0) {
        free(as);
        if (o->squad)
            return cli_fail(c, CPD_ENODATA, "squad '%s' has no athletes: put some in with 'cpdomain squad assign'",
                            o->squad);
        return cli_fail(c, CPD_ENODATA, "the store has no athletes: add them with 'cpdomain athlete add'");
    }
    /* the folder once the athletes are known, so an unknown squad makes none */
    struct stat st;
    if ((mkdir(o->out, 0777) != 0 && errno != EEXIST) || stat(o->out, &st) != 0 || !S_ISDIR(st.st_mode)) {
        int e = errno;
        free(as);
        if (stat(o->out, &st) == 0 && !S_ISDIR(st.st_mode))
            return cli_fail(c, CPD_ECREATE, "'%s' is not a folder", o->out);
        return cli_fail(c, CPD_ECREATE, "cannot create the folder '%s': %s", o->out, strerror(e));
    }
    cpd_sheet_index_row *rows = calloc(n, sizeof *rows);
    char(*href)[CPD_CODE_MAX + 8] = calloc(n, sizeof *href);
    char(*dates)[32] = calloc(n, sizeof *dates);
    char(*ramp)[11] = calloc(n, sizeof *ramp);
    size_t plen = strlen(o->out) + CPD_CODE_MAX + 16;
    char *path = malloc(plen);
    cli_json *doc = c->json ? cj_obj() : NULL;
    cli_json *jsheets = doc ? cj_add_arr(doc, "sheets") : NULL, *jskip = doc ? cj_add_arr(doc, "skipped") : NULL;
    size_t written = 0;
    team_buf team = {0};
    for (size_t k = 0; fm == FMT_CSV && k < sizeof TEAM_HEAD / sizeof TEAM_HEAD[0]; k++)
        team_add(&team, TEAM_HEAD[k], k + 1 == sizeof TEAM_HEAD / sizeof TEAM_HEAD[0]);
    if (!rows || !href || !dates || !ramp || !path) {
        rc = cli_fail(c, CPD_ENOMEM, "out of memory");
        goto done;
    }
    for (size_t i = 0; i < n; i++) {
        const cpd_athlete *a = &as[i];
        cpd_sheet_index_row *r = &rows[i];
        r->code = a->code;
        r->name = a->name;
        r->sport = a->sport;
        char msg[CPD_MSG_MAX];
        /* the code becomes a file name: only the characters the store accepts, never a path */
        if (cpd_validate_code(a->code, msg) != CPD_OK) {
            r->why = "its code cannot be a file name";
            cli_note(c, "note: %s: no sheet: %s", a->code, msg);
            continue;
        }
        sheet_build *b = NULL;
        int brc = build_sheet(c, a->code, o, stale, &b);
        if (brc == EX_UNAVAILABLE) {
            r->why = "not enough data for a power-duration fit (see 'cpdomain fit')";
            if (jskip) {
                cli_json *s = cj_obj();
                cj_str(s, "athlete", a->code);
                cj_str(s, "reason", r->why);
                cj_push(jskip, s);
            }
            continue;
        }
        if (brc) {
            rc = brc;
            goto done;
        }
        char *text = NULL;
        if ((rc = render(c, b, fm, &text))) {
            build_free(b);
            goto done;
        }
        snprintf(href[i], sizeof href[i], "%s.%s", a->code, FMT_EXT[fm]);
        snprintf(path, plen, "%s/%s", o->out, href[i]);
        rc = cli_write_file(c, path, text, strlen(text));
        free(text);
        if (rc) {
            build_free(b);
            goto done;
        }
        written++;
        if (jsheets) {
            cli_json *s = cj_obj();
            cj_str(s, "athlete", a->code);
            cj_str(s, "file", path);
            cj_push(jsheets, s);
        }
        const cli_domains *d = &b->d;
        const cpd_pd_model_fit *m = &d->fit.res->models[d->model];
        r->href = href[i];
        r->modality = d->fit.modality;
        r->pace_m = cli_pd_pace_m(a, &r->pace_label);
        r->has_fit = 1;
        r->cp = m->cp;
        r->w_prime = m->w_prime;
        r->has_cp_ci = r->has_w_prime_ci = m->has_se;
        memcpy(r->cp_ci95, m->cp_ci95, sizeof r->cp_ci95);
        memcpy(r->w_prime_ci95, m->w_prime_ci95, sizeof r->w_prime_ci95);
        r->has_get = d->res.b[CPD_BND_MOD_HEAVY].valid;
        r->get = d->res.b[CPD_BND_MOD_HEAVY].value;
        r->has_vo2peak = b->s.has_vo2peak;
        r->vo2peak_ml_min = b->s.vo2peak_ml_min;
        snprintf(dates[i], sizeof dates[i], "%s", b->test_date[0]);
        r->fit_dates = dates[i];
        if (d->has_ramp) {
            snprintf(ramp[i], sizeof ramp[i], "%s", d->ramp_date);
            r->ramp_date = ramp[i];
        }
        r->stale = (d->res.flags & CPD_DOMAINS_F_STALE) != 0;
        if (fm == FMT_CSV)
            team_row(&team, a, b);
        build_free(b);
    }
    char today[11];
    cpd_format_date(c->today, today);
    char *index = NULL;
    if ((rc = cpd_sheet_index_html("Intensity-domain sheets", today, rows, n, CLI_CAUTION, "cpdomain " CPDOMAIN_VERSION,
                                   &index))) {
        rc = cli_fail(c, rc, "the index page cannot be rendered: %s", cpd_strerror(rc));
        goto done;
    }
    snprintf(path, plen, "%s/index.html", o->out);
    rc = cli_write_file(c, path, index, strlen(index));
    free(index);
    if (rc)
        goto done;
    if (fm == FMT_CSV) {
        if (team.oom) {
            rc = cli_fail(c, CPD_ENOMEM, "out of memory");
            goto done;
        }
        snprintf(path, plen, "%s/team.csv", o->out);
        if ((rc = cli_write_file(c, path, team.s, team.len)))
            goto done;
        if (c->csv)
            fputs(team.s, stdout);
        cli_note(c, "wrote %s: one row per athlete", path);
        snprintf(path, plen, "%s/index.html", o->out);
    }
    cli_note(c, "wrote %s and %zu sheet%s (%zu athlete%s without one)", path, written, written == 1 ? "" : "s", n - written,
             n - written == 1 ? "" : "s");
    if (doc) {
        cj_str(doc, "index", path);
        cj_str(doc, "format", FMT_EXT[fm]);
        rc = cj_print(doc);
        doc = NULL;
    }
done:
    free(team.s);
    cj_free(doc);
    free(as);
    free(rows);
    free(href);
    free(dates);
    free(ramp);
    free(path);
    return rc;
}

int cmd_sheet(cli_ctx *c, int argc, char **argv)
{
    static const struct option lo[] = {
        {"model", required_argument, NULL, 'm'},      {"from", required_argument, NULL, 'f'},
        {"to", required_argument, NULL, 't'},         {"stale-days", required_argument, NULL, 's'},
        {"format", required_argument, NULL, 'F'},     {"output", required_argument, NULL, 'o'},
        {"all", no_argument, NULL, 'a'},              {"help", no_argument, NULL, 'h'},
        {"squad", required_argument, NULL, 'S'},
        {NULL, 0, NULL, 0},
    };
    sheet_opts o = {0};
    int first = 0, done = 0;
    int rc = cli_getopt(argc, argv, "ho:", lo, HELP, sheet_opt, &o, &first, &done);
    if (rc || done)
        return rc;
    int nargs = argc - first;
    if (o.all && nargs > 0)
        return cli_usage("sheet", "--all takes no CODE (unexpected '%s')", argv[first]);
    if (!o.all && nargs != 1)
        return cli_usage("sheet", nargs < 1 ? "missing argument CODE (or --all)" : "unexpected argument '%s'", argv[first + 1]);
    if (o.squad && !o.all)
        return cli_usage("sheet", "--squad goes with --all (the sheets of a squad's athletes)");
    if (o.all && !o.out)
        return cli_usage("sheet", "--all needs -o DIR, the folder for index.html and the sheets");
    out_format fm = FMT_HTML;
    if (o.format) {
        if (parse_format(o.format, &fm))
            return cli_usage("sheet", "--format must be html, csv, json or txt (got '%s')", o.format);
    } else if (o.out && !o.all) {
        const char *dot = strrchr(o.out, '.');
        if (!dot || strchr(dot, '/') || parse_format(dot + 1, &fm))
            fm = c->json ? FMT_JSON : FMT_HTML;
    } else if (c->json && !o.all)
        fm = FMT_JSON;
    else if (c->csv)
        fm = FMT_CSV;
    if (c->json && !o.all && !o.out && fm != FMT_JSON)
        return cli_usage("sheet", "--json prints the sheet as JSON: drop --format %s or write it with -o FILE", o.format);
    int stale = 0;
    if (o.stale) {
        double v = 0;
        if ((rc = cli_number("--stale-days", o.stale, &v)))
            return rc;
        if (!(v >= 1 && v <= 3650) || v != floor(v))
            return cli_usage("sheet", "--stale-days must be a whole number of days from 1 to 3650");
        stale = (int)v;
    }
    int dd = 0;
    if ((o.from && cpd_parse_date(o.from, &dd)) || (o.to && cpd_parse_date(o.to, &dd)))
        return cli_usage("sheet", "--from/--to: use YYYY-MM-DD");
    if (o.model) {
        cpd_pd_model mm;
        if (cpd_pd_model_parse(o.model, &mm))
            return cli_usage("sheet", "--model: '%s' is not a model", o.model);
    }
    if ((rc = cli_open(c, 0)))
        return rc;
    return o.all ? all_sheets(c, &o, stale, fm) : one_sheet(c, argv[first], &o, stale, fm);
}
