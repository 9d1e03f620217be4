/* cmd_bout.c: 'bout add|list|show|plot|remove': constant-power (or constant-speed) bouts with gas
 * exchange and their VO2 kinetics. Repeats of one transition given as ID,ID,... are ensemble-averaged;
 * the domain comes from the response and is checked against the athlete's GET and CP when known. */
#include "cli_energy.h"
#include "cli_gx.h"
#include "commands.h"
#include "cpdomain/import.h"
#include "cpdomain/kinetics.h"
#include "cpdomain/plots.h"
#include "cpdomain/units.h"
#include "cpdomain/validate.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>

#define BOUT_MIN_SAMPLES 20 /* fewest rows a bout file may have: below it no baseline and phase II fit */

static const char HELP_ADD[] =
    "usage: cpdomain bout add CODE FILE.csv --date D (--power W | --speed M_S) [--baseline W] [--onset T]\n"
    "                         [--map NAME=HEADER,...] [--note TEXT]\n\n"
    "Stores a constant-power bout (or a constant-speed treadmill bout with --speed) with its\n"
    "breath-by-breath gas exchange: time_s,vo2_ml_min (or vo2_l_min) required; vco2_ml_min,\n"
    "ve_l_min, hr_bpm, power_w, speed_m_s, peto2_mmhg, petco2_mmhg optional. --onset is the file time\n"
    "of the step to the bout's intensity (default 0); the breaths in the 60 s before it are the\n"
    "baseline, so record at least a minute of baseline. --baseline is the intensity before the step\n"
    "(unloaded pedalling, a walk); without it the gain is taken against 0.\n\n"
    "examples:\n"
    "  cpdomain bout add C01 c01_bout1.csv --date 2026-10-22 --power 150 --baseline 20 --onset 3:00\n"
    "  cpdomain bout add R01 r01_bout.csv --date 2026-10-23 --speed 3.4 --baseline 1.5 --onset 180\n";
static const char HELP_LIST[] = "usage: cpdomain bout list CODE\n\nLists the athlete's bouts.\n\n"
                                "example:\n  cpdomain --json bout list C01\n";
static const char HELP_SHOW[] =
    "usage: cpdomain bout show ID[,ID...] [--phase1 S] [--fit-end T] [--bin S] [--outlier-sd K]\n"
    "                          [--primary auto|mono-end|window] [--baseline-window S]\n"
    "                          [--baseline-vo2 ML_MIN] [--vo2peak ML_MIN]\n\n"
    "The VO2 on-kinetics of a bout: baseline (mean of the 60 s before onset, --baseline-window), the\n"
    "primary component (amplitude, time constant tau with its 95 % CI counting breaths, delay, gain),\n"
    "the slow component when the bi-exponential model is supported (F-test at p < 0.01), delta\n"
    "VO2(6-3), end VO2, MRT, O2 deficit, the residuals, and the intensity domain judged from the\n"
    "response (Hill, Poole & Smith 2002). With a ramp on file the end VO2 is also compared with\n"
    "VO2peak; with a power-duration fit and a GET the domain is checked against them.\n"
    "Several ids, comma-separated, are repeats of the same transition (same athlete, intensities\n"
    "within 5 %): they are aligned at their onsets and averaged second by second (ensemble).\n"
    "  --phase1 S        phase I excluded from the fits, s (default 20)\n"
    "  --fit-end T       end of exercise to analyse, from onset (default: the end of the data)\n"
    "  --bin S           fit S-s bin means of the 1-s series instead of the breaths (1-60 s)\n"
    "  --outlier-sd K    breaths more than K local SDs from their neighbours are removed (default 4)\n"
    "  --primary WHICH   with a slow component: the bi-exponential's primary (auto), a mono-exponential\n"
    "                    to 3 min (mono-end) or the windowed fit (window)\n"
    "  --baseline-window S  the pre-onset window of the baseline, s (default 60)\n"
    "  --baseline-vo2 ML_MIN  use this baseline VO2 instead of the pre-onset breaths\n"
    "  --vo2peak ML_MIN  use this VO2peak instead of the newest ramp's\n"
    "When the response does not decide the domain (a bout under 5 min below VO2peak), it is shown as\n"
    "undetermined; in JSON \"domain\" is then null and \"domain_note\" says why.\n\n"
    "examples:\n  cpdomain bout show 13\n  cpdomain --json bout show 12,15,16 --bin 5\n";
static const char HELP_PLOT[] =
    "usage: cpdomain bout plot ID[,ID...] -o FILE.svg [the options of 'bout show']\n\n"
    "Writes the bout's VO2 against time from onset as SVG: the breaths (and the 1-s ensemble or bin\n"
    "means that were fitted), the fitted model and its primary component, the baseline and the end\n"
    "of phase I, with the residuals of the fit in a panel below.\n\n"
    "examples:\n  cpdomain bout plot 13 -o c01_bout13.svg\n  cpdomain bout plot 12,15,16 --bin 5 -o c01_ensemble.svg\n";
static const char HELP_REMOVE[] = "usage: cpdomain bout remove ID\n\nDeletes a stored bout.\n\nexample:\n"
                                  "  cpdomain bout remove 13\n";

typedef struct {
    const char *date, *power, *speed, *baseline, *onset, *map, *note, *phase1, *fit_end, *bin, *outlier, *primary,
        *base_window, *base_vo2, *vo2peak, *out;
} bout_opts;

static int bout_opt(int opt, const char *arg, void *ud)
{
    bout_opts *o = ud;
    switch (opt) {
    case 'd': o->date = arg; break;
    case 'P': o->power = arg; break;
    case 'S': o->speed = arg; break;
    case 'b': o->baseline = arg; break;
    case 'O': o->onset = arg; break;
    case 'p': o->map = arg; break;
    case 'n': o->note = arg; break;
    case '1': o->phase1 = arg; break;
    case 'e': o->fit_end = arg; break;
    case 'B': o->bin = arg; break;
    case 'k': o->outlier = arg; break;
    case 'r': o->primary = arg; break;
    case 'w': o->base_window = arg; break;
    case 'v': o->base_vo2 = arg; break;
    case 'V': o->vo2peak = arg; break;
    case 'o': o->out = arg; break;
    default: return EX_USAGE;
    }
    return 0;
}

static const struct option add_longopts[] = {
    {"date", required_argument, NULL, 'd'},     {"power", required_argument, NULL, 'P'},
    {"speed", required_argument, NULL, 'S'},    {"baseline", required_argument, NULL, 'b'},
    {"onset", required_argument, NULL, 'O'},    {"map", required_argument, NULL, 'p'},
    {"note", required_argument, NULL, 'n'},     {"help", no_argument, NULL, 'h'},
    {NULL, 0, NULL, 0},
};

static const struct option show_longopts[] = {
    {"phase1", required_argument, NULL, '1'},       {"fit-end", required_argument, NULL, 'e'},
    {"bin", required_argument, NULL, 'B'},          {"outlier-sd", required_argument, NULL, 'k'},
    {"primary", required_argument, NULL, 'r'},      {"baseline-window", required_argument, NULL, 'w'},
    {"baseline-vo2", required_argument, NULL, 'v'}, {"vo2peak", required_argument, NULL, 'V'},
    {"help", no_argument, NULL, 'h'},               {NULL, 0, NULL, 0},
};

static const struct option no_longopts[] = {{"help", no_argument, NULL, 'h'}, {NULL, 0, NULL, 0}};

/* Parses options and exactly `want` arguments; returns 0, -1 after --help, or an exit code. */
static int parse(int argc, char **argv, const char *help, const char *shortopts, const struct option *lo, bout_opts *o,
                 int want, const char *what, int *first)
{
    int done = 0;
    memset(o, 0, sizeof *o);
    int rc = cli_getopt(argc, argv, shortopts, lo, help, bout_opt, o, first, &done);
    if (rc)
        return rc;
    if (done)
        return -1;
    if (argc - *first < want)
        return cli_usage(argv[0], "missing argument %s", what);
    if (argc - *first > want)
        return cli_usage(argv[0], "unexpected argument '%s'", argv[*first + want]);
    return 0;
}

static const char *unit_of(int speed) { return speed ? "m/s" : "W"; }

/* "150 W" or "3.40 m/s". */
static const char *fmt_int(char *buf, size_t n, double v, int speed)
{
    char num[32];
    snprintf(buf, n, "%s %s", cli_num(num, sizeof num, v, speed ? 2 : 0), unit_of(speed));
    return buf;
}

static int bout_add(cli_ctx *c, int argc, char **argv)
{
    bout_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_ADD, "h", add_longopts, &o, 2, "CODE FILE.csv", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    if (!o.date)
        return cli_usage("bout add", "--date is required");
    if (!o.power == !o.speed)
        return cli_usage("bout add", "give one of --power W or --speed M_S (a treadmill bout)");
    char msg[CPD_MSG_MAX];
    if (strlen(o.date) != 10 || cpd_validate_date(o.date, c->today, msg))
        return cli_usage("bout add", "--date: %s", strlen(o.date) != 10 ? "use YYYY-MM-DD" : msg);
    cpd_gx_test t;
    memset(&t, 0, sizeof t);
    t.kind = CPD_GXT_BOUT;
    t.speed = o.speed != NULL;
    const cpd_range *rg = t.speed ? &CPD_RANGE_SPEED : &CPD_RANGE_POWER;
    const char *u = unit_of(t.speed);
    if ((rc = cli_ranged(t.speed ? "--speed" : "--power", t.speed ? o.speed : o.power, rg->lo, rg->hi, u, 0, &t.intensity)))
        return rc;
    if (o.baseline) {
        if ((rc = cli_ranged("--baseline", o.baseline, 0, rg->hi, u, 0, &t.baseline)))
            return rc;
        if (t.baseline >= t.intensity)
            return cli_usage("bout add", "--baseline (%g %s) must be below the bout's %s (%g %s): the bout is the step up from it",
                             t.baseline, u, t.speed ? "speed" : "power", t.intensity, u);
        t.has_baseline = 1;
    }
    if (o.onset && (rc = cli_ranged("--onset", o.onset, 0, 7200, "s", 1, &t.onset_s)))
        return rc;
    if (o.note)
        snprintf(t.note, sizeof t.note, "%s", o.note);
    if ((rc = cli_open(c, 0)))
        return rc;
    cpd_athlete a;
    if ((rc = cpd_store_athlete_get(c->store, argv[first], &a)))
        return cli_store_fail(c, rc);
    snprintf(t.athlete, sizeof t.athlete, "%s", a.code);
    snprintf(t.date, sizeof t.date, "%s", o.date);
    snprintf(t.source_file, sizeof t.source_file, "%s", argv[first + 1]);
    cpd_gx_series *g = NULL;
    cpd_gx_import_report rep;
    if ((rc = cpd_import_gx_report(argv[first + 1], o.map, BOUT_MIN_SAMPLES, &g, &rep, msg)))
        return cli_fail(c, rc, "%s", msg);
    t.hr_dropped = rep.hr_dropped;
    t.blank_cells = rep.blank_total;
    if (t.onset_s >= g->t_s[g->n - 1]) {
        int ex = cli_usage("bout add", "--onset %g s lies outside the file's times (%g to %g s)", t.onset_s, g->t_s[0],
                           g->t_s[g->n - 1]);
        cpd_gx_free(g);
        return ex;
    }
    int64_t id = 0;
    t.n_samples = g->n;
    const char *bad_field = NULL;
    if (cpd_validate_gx_test(&t, c->today, &bad_field, msg)) { /* the record gate every path passes */
        cpd_gx_free(g);
        return cli_fail(c, CPD_EDATA, "%s: %s", bad_field, msg);
    }
    rc = cpd_store_gx_add(c->store, &t, g, &id);
    size_t n = g->n;
    double after = g->t_s[n - 1] - t.onset_s;
    cpd_gx_free(g);
    if (rc)
        return cli_store_fail(c, rc);
    if (c->json) {
        cli_json *d = cj_obj();
        cj_int(d, "id", id);
        cj_str(d, "athlete", a.code);
        cj_str(d, "date", t.date);
        cj_str(d, "modality", t.speed ? "speed" : "power");
        cj_num(d, t.speed ? "speed_m_s" : "power_w", t.intensity);
        cj_num(d, t.speed ? "baseline_m_s" : "baseline_w", t.has_baseline ? t.baseline : NAN);
        cj_num(d, "onset_s", t.onset_s);
        cj_num(d, "exercise_s", after);
        cj_int(d, "samples", (long long)n);
        cj_int(d, "hr_dropped", (long long)t.hr_dropped);
        cj_int(d, "blank_cells_dropped", (long long)t.blank_cells);
        return cj_print(d);
    }
    if (t.hr_dropped || t.blank_cells)
        cli_note(c, "dropped: %zu heart-rate sample(s) as artefacts (outside %.0f-%.0f beats/min), %zu blank cell(s)",
                 t.hr_dropped, CPD_GX_HR_MIN, CPD_GX_HR_MAX, t.blank_cells);
    char iv[48], dur[24];
    cpd_format_duration(after, dur, sizeof dur);
    cli_note(c, "stored bout %lld for %s: %s, %zu samples, %s after the onset", (long long)id, a.code,
             fmt_int(iv, sizeof iv, t.intensity, t.speed), n, dur);
    return 0;
}

static int bout_list(cli_ctx *c, int argc, char **argv)
{
    bout_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_LIST, "h", no_longopts, &o, 1, "CODE", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    if ((rc = cli_open(c, 0)))
        return rc;
    cpd_athlete a;
    if ((rc = cpd_store_athlete_get(c->store, argv[first], &a)))
        return cli_store_fail(c, rc);
    cpd_gx_test *v = NULL;
    size_t n = 0;
    if ((rc = cpd_store_gx_list(c->store, a.code, CPD_GXT_BOUT, &v, &n)))
        return cli_store_fail(c, rc);
    if (c->json || c->csv) {
        cli_json *d = cj_obj();
        cli_json *arr = cj_add_arr(d, "bouts");
        for (size_t i = 0; i < n; i++) {
            const cpd_gx_test *t = &v[i];
            cli_json *b = cj_obj();
            cj_int(b, "id", t->id);
            cj_str(b, "athlete", t->athlete);
            cj_str(b, "date", t->date);
            cj_str(b, "modality", t->speed ? "speed" : "power");
            cj_num(b, t->speed ? "speed_m_s" : "power_w", t->intensity);
            cj_num(b, t->speed ? "baseline_m_s" : "baseline_w", t->has_baseline ? t->baseline : NAN);
            cj_num(b, "onset_s", t->onset_s);
            cj_int(b, "samples", (long long)t->n_samples);
            cj_str(b, "note", t->note);
            cj_str(b, "source_file", t->source_file[0] ? t->source_file : NULL);
            cj_push(arr, b);
        }
        free(v);
        return c->csv ? cj_print_csv(d, "bouts", NULL) : cj_print(d);
    }
    static const char *const head[] = {"id", "date", "intensity", "baseline", "onset", "samples", "note"};
    cli_table *tb = cli_table_new(7, head, "rlrrrrl");
    for (size_t i = 0; i < n; i++) {
        char id[24], iv[48], bl[48], on[24], ns[24];
        snprintf(id, sizeof id, "%lld", (long long)v[i].id);
        fmt_int(iv, sizeof iv, v[i].intensity, v[i].speed);
        if (v[i].has_baseline)
            fmt_int(bl, sizeof bl, v[i].baseline, v[i].speed);
        else
            snprintf(bl, sizeof bl, "-");
        cpd_format_duration(v[i].onset_s, on, sizeof on);
        snprintf(ns, sizeof ns, "%zu", v[i].n_samples);
        const char *row[] = {id, v[i].date, iv, bl, on, ns, v[i].note};
        cli_table_row(tb, row);
    }
    cli_table_print(tb);
    free(v);
    return 0;
}

/* ---- analysis of one bout or an ensemble ---- */

/* One 'bout show' or 'bout plot': the analysis of the library (athlete.h) and the check of the
 * domain against the athlete's boundaries. */
typedef struct {
    const char *cmd;                     /* "bout show" or "bout plot", for messages */
    const char *ids_text;                /* the ids as typed */
    cpd_athlete_bouts b;                 /* the repeats, what the analysis was given, its result */
    cpd_athlete_bout_check k;            /* the domain checked against the athlete's boundaries */
} bout_run;

static void run_free(bout_run *r)
{
    if (!r)
        return;
    cpd_athlete_bouts_free(&r->b);
    free(r);
}

/* The analysis options of 'bout show' and 'bout plot' into *k; returns 0 or 64. */
static int analysis_opts(const char *cmd, cpd_kinetics_opts *k, const bout_opts *o)
{
    cpd_kinetics_opts_init(k);
    int rc;
    /* phase I must end before the first window end (60 s) and the 3-min primary window */
    if (o->phase1 && (rc = cli_ranged("--phase1", o->phase1, 0, 50, "s", 1, &k->phase1_s)))
        return rc;
    if (o->fit_end && (rc = cli_ranged("--fit-end", o->fit_end, CPD_KIN_MIN_BOUT_S, 7200, "s", 1, &k->end_s)))
        return rc;
    if (o->bin && (rc = cli_ranged("--bin", o->bin, 1, 60, "s", 1, &k->bin_s)))
        return rc;
    if (o->outlier && (rc = cli_ranged("--outlier-sd", o->outlier, 2, 10, "SD", 0, &k->outlier_sd)))
        return rc;
    if (o->base_window && (rc = cli_ranged("--baseline-window", o->base_window, 20, 600, "s", 1, &k->baseline_s)))
        return rc;
    if (o->base_vo2 &&
        (rc = cli_ranged("--baseline-vo2", o->base_vo2, CPD_RANGE_VO2.lo, CPD_RANGE_VO2.hi, "mL/min", 0, &k->baseline_ml_min)))
        return rc;
    if (o->vo2peak &&
        (rc = cli_ranged("--vo2peak", o->vo2peak, CPD_RANGE_VO2.lo, CPD_RANGE_VO2.hi, "mL/min", 0, &k->vo2peak_ml_min)))
        return rc;
    if (o->primary) {
        if (strcmp(o->primary, "auto") == 0)
            k->primary = CPD_KIN_PRIMARY_AUTO;
        else if (strcmp(o->primary, "mono-end") == 0)
            k->primary = CPD_KIN_PRIMARY_MONO_END;
        else if (strcmp(o->primary, "window") == 0)
            k->primary = CPD_KIN_PRIMARY_WINDOW;
        else
            return cli_usage(cmd, "--primary must be auto, mono-end or window");
    }
    return 0;
}

/* Loads the bouts of ids_text and analyses them. Returns 0, or an exit code after printing why;
 * the caller frees *out with run_free either way. */
static int run_load(cli_ctx *c, const char *cmd, const char *ids_text, const bout_opts *o, bout_run **out)
{
    bout_run *r = *out = calloc(1, sizeof **out);
    if (!r)
        return cli_fail(c, CPD_ENOMEM, "out of memory");
    r->cmd = cmd;
    r->ids_text = ids_text;
    long long ids[CPD_ATHLETE_BOUTS_MAX];
    size_t n = 0;
    cpd_kinetics_opts ko;
    int rc;
    if ((rc = cli_bout_ids(cmd, ids_text, ids, &n)) || (rc = analysis_opts(cmd, &ko, o)))
        return rc;
    if (!c->store && (rc = cli_open(c, 0)))
        return rc;
    return cli_bouts_load(c, cmd, ids, n, &ko, &r->b);
}

/* Checks the domain from the response against the athlete's boundaries (the library's check). */
static void run_check(cli_ctx *c, bout_run *r)
{
    cpd_athlete_bouts_check(c->store, &r->b, c->today, &r->k);
    cli_athlete_notes(c, &r->k.notes);
}

/* The rule behind the domain in words. */
static void criteria_text(const bout_run *r, char *buf, size_t n)
{
    const cpd_kinetics_result *k = &r->b.res;
    const cpd_kinetics_opts *o = &r->b.ko;
    char slope[160] = "", delta[96] = "", sc[200];
    if (k->slope_valid)
        snprintf(slope, sizeof slope, "the final-2-min slope is %.0f mL/min per min (95 %% CI %.0f to %.0f)",
                 k->end_slope_ml_min_per_min, k->end_slope_ci95[0], k->end_slope_ci95[1]);
    if (k->delta_valid)
        snprintf(delta, sizeof delta, "delta VO2(6-3) is %.0f mL/min", k->delta_6_3_ml_min);
    if (k->sc_tested)
        snprintf(sc, sizeof sc, "F = %.2f, p = %.2g against the level %.2g", k->sc_test.f, k->sc_test.p_value, o->sc_alpha);
    else
        snprintf(sc, sizeof sc, "not tested");
    switch (k->domain_rule) {
    case CPD_KIN_RULE_PEAK:
        snprintf(buf, n, "end VO2 %.0f mL/min is %.1f %% of VO2peak (%.0f mL/min), at or above %.0f %%: severe",
                 k->end_vo2_ml_min, k->end_pct_vo2peak, o->vo2peak_ml_min, 100.0 * o->peak_fraction);
        break;
    case CPD_KIN_RULE_TOO_SHORT:
        snprintf(buf, n, "the analysed bout lasts %.0f s, shorter than the %.0f s needed to test for a slow component, and its end "
                 "VO2 %s: the response does not decide the domain",
                 k->end_s, CPD_KIN_SC_MIN_S,
                 k->end_pct_valid ? "is below 95 % of VO2peak" : "cannot be compared with VO2peak (no ramp on file)");
        break;
    case CPD_KIN_RULE_RISING:
        snprintf(buf, n, "VO2 still rising at the end: %s, above %.0f: severe", slope, o->rising_slope_ml_min_per_min);
        break;
    case CPD_KIN_RULE_SLOW:
        snprintf(buf, n, "a slow component is supported (%s; %.0f mL/min by the end of exercise) and VO2 levels off (%s, "
                 "at most %.0f)%s: heavy",
                 sc, k->slow.amplitude_ml_min, slope[0] ? slope : "slope not known", o->rising_slope_ml_min_per_min,
                 k->end_pct_valid ? " below 95 % of VO2peak" : "");
        break;
    case CPD_KIN_RULE_DELTA:
        snprintf(buf, n, "no slow component supported (%s), but %s, at or above %.0f: heavy", sc, delta,
                 o->steady_delta_ml_min);
        break;
    case CPD_KIN_RULE_STEADY: {
        char dp[160], sp[200];
        if (k->delta_valid)
            snprintf(dp, sizeof dp, "%s, below %.0f", delta, o->steady_delta_ml_min);
        else
            snprintf(dp, sizeof dp, "no delta VO2(6-3) (bout shorter than 6 min)");
        if (k->slope_valid)
            snprintf(sp, sizeof sp, ", and %s, at most %.0f", slope, o->rising_slope_ml_min_per_min);
        else
            sp[0] = '\0';
        snprintf(buf, n, "no slow component (%s), %s%s: steady by 3 min, moderate", sc, dp, sp);
        break;
    }
    default:
        snprintf(buf, n, "no rule applied");
    }
}

static const char *rule_name(int rule)
{
    switch (rule) {
    case CPD_KIN_RULE_TOO_SHORT: return "too_short";
    case CPD_KIN_RULE_PEAK: return "end_vo2_at_vo2peak";
    case CPD_KIN_RULE_RISING: return "still_rising";
    case CPD_KIN_RULE_SLOW: return "slow_component";
    case CPD_KIN_RULE_DELTA: return "delta_6_3";
    case CPD_KIN_RULE_STEADY: return "steady";
    default: return NULL;
    }
}

/* The model that describes the whole bout: the bi-exponential when its slow component is supported. */
static const cpd_kinetics_fitres *final_fit(const cpd_kinetics_result *k)
{
    return k->sc_supported && k->bi.valid ? &k->bi : &k->mono;
}

static void sc_reason(const cpd_kinetics_result *k, char *buf, size_t n)
{
    if (k->sc_tested)
        snprintf(buf, n, "tested");
    else if (!(k->end_s >= CPD_KIN_SC_MIN_S - CPD_KIN_END_TOL_S))
        snprintf(buf, n, "the bout is shorter than %.0f s", CPD_KIN_SC_MIN_S);
    else if (!k->bi.valid)
        snprintf(buf, n, "the bi-exponential fit failed: %s", cpd_kinetics_reason_text(k->bi.reason));
    else
        snprintf(buf, n, "the bi-exponential parameters are not identifiable from these data");
}

static void fit_json(cli_json *o, const cpd_kinetics_fitres *f)
{
    cj_bool(o, "valid", f->valid);
    if (!f->valid) {
        cj_str(o, "reason", cpd_kinetics_reason_text(f->reason));
        return;
    }
    cj_str(o, "model", f->model == CPD_KIN_BI ? "bi-exponential" : "mono-exponential");
    cj_num(o, "from_s", f->from_s);
    cj_num(o, "to_s", f->to_s);
    cj_num(o, "baseline_ml_min", f->b[CPD_KIN_BASE]);
    cj_num(o, "amplitude_ml_min", f->b[CPD_KIN_A1]);
    cj_num(o, "tau_s", f->b[CPD_KIN_TAU1]);
    if (f->has_se)
        cj_pair(o, "tau_ci95", f->ci95_lo[CPD_KIN_TAU1], f->ci95_hi[CPD_KIN_TAU1]);
    else
        cj_null(o, "tau_ci95");
    cj_num(o, "delay_s", f->b[CPD_KIN_TD1]);
    if (f->model == CPD_KIN_BI) {
        cj_num(o, "slow_asymptote_ml_min", f->b[CPD_KIN_A2]);
        cj_num(o, "slow_delay_s", f->b[CPD_KIN_TD2]);
        cj_num(o, "slow_tau_s", f->b[CPD_KIN_TAU2]);
    }
    cj_int(o, "n", (long long)f->n);
    cj_int(o, "n_breaths", (long long)f->n_eff);
    cj_num(o, "rss", f->rss_eff);
    cj_num(o, "aicc", f->aicc_valid ? f->aicc : NAN);
}

static void residual_json(cli_json *o, const cpd_kinetics_fitres *f)
{
    cj_str(o, "model", f->model == CPD_KIN_BI ? "bi-exponential" : "mono-exponential");
    cj_num(o, "sd_ml_min", f->resid_sd_ml_min);
    cj_num(o, "mean_ml_min", f->resid_mean_ml_min);
    cj_num(o, "max_abs_ml_min", f->resid_max_abs_ml_min);
    cj_int(o, "runs", (long long)f->runs);
    cj_int(o, "n_positive", (long long)f->n_pos);
    cj_int(o, "n_negative", (long long)f->n_neg);
    cj_num(o, "runs_z", f->runs_valid ? f->runs_z : NAN);
    cj_num(o, "runs_p", f->runs_valid ? f->runs_p : NAN);
    cj_num(o, "chi2_reduced", f->chi2_valid ? f->chi2_red : NAN);
}

static void check_json(cli_json *o, const bout_run *r)
{
    const char *u = r->b.speed ? "_m_s" : "_w";
    char key[32];
    cj_str(o, "basis", r->k.checked ? "boundaries" : "response");
    snprintf(key, sizeof key, "get%s", u);
    cj_num(o, key, r->k.get > 0 ? r->k.get : NAN);
    cj_str(o, "get_source", r->k.get > 0 ? r->k.get_source : NULL);
    snprintf(key, sizeof key, "%s%s", r->b.speed ? "cs" : "cp", u);
    cj_num(o, key, r->k.cp > 0 ? r->k.cp : NAN);
    cj_str(o, r->b.speed ? "cs_source" : "cp_source", r->k.cp > 0 ? r->k.cp_source : NULL);
    if (!r->k.checked) {
        cj_null(o, "predicted");
        cj_add_arr(o, "allowed");
        cj_null(o, "agrees");
        cj_str(o, "message", r->k.why_unchecked);
        return;
    }
    int ok = r->k.check_rc == CPD_OK;
    cj_str(o, "predicted", ok && r->k.chk.predicted != CPD_KIN_UNDETERMINED ? cpd_kinetics_domain_name(r->k.chk.predicted) : NULL);
    cli_json *al = cj_add_arr(o, "allowed");
    for (int dm = CPD_KIN_MODERATE; ok && dm <= CPD_KIN_SEVERE; dm++)
        if (r->k.chk.predicted_mask & (1u << dm))
            cj_push_str(al, cpd_kinetics_domain_name(dm));
    if (ok && r->k.chk.agreement >= 0)
        cj_bool(o, "agrees", r->k.chk.agreement);
    else
        cj_null(o, "agrees");
    cj_str(o, "message", r->k.chk.message);
}

/* Substrate use at the steady state, the oxygen deficit and the accumulated O2 deficit (cli_energy.c). */
static void energy_block(cli_ctx *c, const bout_run *r, cli_json *d)
{
    const cpd_gx_series *g[CPD_ATHLETE_BOUTS_MAX];
    double on[CPD_ATHLETE_BOUTS_MAX];
    for (size_t i = 0; i < r->b.n; i++) {
        g[i] = r->b.g[i];
        on[i] = r->b.t[i].onset_s;
    }
    cli_energy_bout_report(c, r->b.a.code, r->b.t[0].id, g, on, r->b.n, r->b.speed, r->b.intensity, r->b.baseline, &r->b.res,
                           r->b.ko.vo2peak_ml_min, d);
}

static int show_json(cli_ctx *c, const bout_run *r)
{
    const cpd_kinetics_result *k = &r->b.res;
    const cpd_kinetics_opts *ko = &r->b.ko;
    const char *ik = r->b.speed ? "speed_m_s" : "power_w";
    cli_json *d = cj_obj();
    if (r->b.n == 1)
        cj_int(d, "id", r->b.t[0].id);
    else
        cj_null(d, "id");
    cli_json *ids = cj_add_arr(d, "ids");
    for (size_t i = 0; i < r->b.n; i++)
        cj_push_num(ids, (double)r->b.t[i].id);
    cj_str(d, "athlete", r->b.a.code);
    cj_str(d, "date", r->b.n == 1 ? r->b.t[0].date : NULL);
    cli_json *dates = cj_add_arr(d, "dates");
    for (size_t i = 0; i < r->b.n; i++)
        cj_push_str(dates, r->b.t[i].date);
    cj_str(d, "modality", r->b.speed ? "speed" : "power");
    cj_num(d, ik, r->b.intensity);
    cj_num(d, r->b.speed ? "baseline_speed_m_s" : "baseline_power_w", r->b.baseline);
    cj_bool(d, "baseline_intensity_given", r->b.baseline_given);
    cj_int(d, "repeats", (long long)k->n_repeats);
    cj_str(d, "points", r->b.ko.bin_s > 0 ? "bins" : r->b.n > 1 ? "1-s ensemble" : "breaths");
    cj_num(d, "bin_s", r->b.ko.bin_s > 0 ? r->b.ko.bin_s : NAN);
    cj_num(d, "phase1_s", ko->phase1_s);
    cj_num(d, "exercise_s", k->end_s);

    int undetermined = k->domain == CPD_KIN_UNDETERMINED;
    cj_str(d, "domain", undetermined ? NULL : cpd_kinetics_domain_name(k->domain));
    char crit[600];
    criteria_text(r, crit, sizeof crit);
    if (undetermined) {
        char note[700];
        snprintf(note, sizeof note, "undetermined: %s", crit);
        cj_str(d, "domain_note", note);
    } else
        cj_null(d, "domain_note");
    cj_str(d, "domain_rule", rule_name(k->domain_rule));
    cj_str(d, "domain_criteria", crit);

    cj_num(d, "baseline_ml_min", k->baseline_ml_min);
    cj_num(d, "baseline_sd_ml_min", ko->baseline_ml_min > 0 ? NAN : k->baseline_sd_ml_min);
    cj_bool(d, "baseline_vo2_given", ko->baseline_ml_min > 0);
    cj_int(d, "baseline_breaths", (long long)k->n_baseline);

    cli_json *p = cj_add_obj(d, "primary");
    cj_num(p, "amplitude_ml_min", k->primary.amplitude_ml_min);
    cj_num(p, "tau_s", k->primary.tau_s);
    cj_pair(p, "tau_ci95", k->primary.tau_ci95_s[0], k->primary.tau_ci95_s[1]);
    cj_num(p, "tau_se_s", k->primary.tau_se_s);
    cj_num(p, "delay_s", k->primary.delay_s);
    cj_num(p, r->b.speed ? "gain_ml_min_per_m_s" : "gain_ml_min_w", k->primary.gain_valid ? k->primary.gain_ml_min_w : NAN);
    cj_num(p, "mrt_s", k->primary.mrt_s);
    cj_str(p, "fit", k->primary.fit);
    if (k->slow.present) {
        cli_json *s = cj_add_obj(d, "slow");
        cj_num(s, "amplitude_ml_min", k->slow.amplitude_ml_min);
        cj_num(s, "amplitude_se_ml_min", k->slow.amplitude_se_ml_min);
        cj_num(s, "delay_s", k->slow.delay_s);
        cj_num(s, "tau_s", k->slow.tau_s);
        cj_num(s, "asymptote_ml_min", k->slow.asymptote_ml_min);
    } else
        cj_null(d, "slow");
    cpd_kinetics_tvo2max tv;
    if (k->domain == CPD_KIN_SEVERE && cpd_kinetics_time_to_vo2max(k, &tv) == CPD_OK) {
        /* what the severe-extreme boundary uses (cpd_kinetics_time_to_vo2max) */
        cli_json *v = cj_add_obj(d, "time_to_vo2max");
        cj_str(v, "fit", tv.fit);
        cj_num(v, "tau_s", tv.tau_s);
        cj_num(v, "tau_se_s", tv.tau_se_s);
        cj_num(v, "delay_s", tv.delay_s);
        cj_num(v, "time_s", tv.t_s);
        cj_num(v, "se_s", tv.se_s);
    } else
        cj_null(d, "time_to_vo2max");
    cj_num(d, "delta_6_3_ml_min", k->delta_valid ? k->delta_6_3_ml_min : NAN);
    cj_num(d, "end_vo2_ml_min", k->end_vo2_ml_min);
    cj_num(d, "mrt_s", k->primary.mrt_s);
    cj_num(d, "o2_deficit_ml", k->primary.o2_deficit_ml);
    cj_num(d, "end_vo2_pct_vo2peak", k->end_pct_valid ? k->end_pct_vo2peak : NAN);
    if (r->b.vo2peak_src) {
        cli_json *v = cj_add_obj(d, "vo2peak");
        cj_num(v, "ml_min", ko->vo2peak_ml_min);
        cj_str(v, "source", r->b.vo2peak_src == 2 ? "given" : "ramp");
        if (r->b.vo2peak_src == 1) {
            cj_int(v, "ramp_id", r->b.ramp_id);
            cj_str(v, "ramp_date", r->b.ramp_date);
        }
    } else
        cj_null(d, "vo2peak");
    cj_num(d, "end_minus_primary_ml_min", k->end_minus_primary_ml_min);
    cj_num(d, "end_slope_ml_min_per_min", k->slope_valid ? k->end_slope_ml_min_per_min : NAN);
    if (k->slope_valid)
        cj_pair(d, "end_slope_ci95", k->end_slope_ci95[0], k->end_slope_ci95[1]);
    else
        cj_null(d, "end_slope_ci95");

    cli_json *sc = cj_add_obj(d, "slow_component_test");
    char why[200];
    sc_reason(k, why, sizeof why);
    cj_bool(sc, "tested", k->sc_tested);
    cj_num(sc, "f", k->sc_tested ? k->sc_test.f : NAN);
    if (k->sc_tested) {
        cj_int(sc, "df1", (long long)k->sc_test.df1);
        cj_int(sc, "df2", (long long)k->sc_test.df2);
    } else {
        cj_null(sc, "df1");
        cj_null(sc, "df2");
    }
    cj_num(sc, "p", k->sc_tested ? k->sc_test.p_value : NAN);
    cj_num(sc, "alpha", ko->sc_alpha);
    cj_num(sc, "delta_aicc", k->sc_tested && k->sc_test.aicc_valid ? k->sc_test.delta_aicc : NAN);
    cj_bool(sc, "supported", k->sc_supported);
    cj_str(sc, "reason", k->sc_tested ? NULL : why);

    residual_json(cj_add_obj(d, "residuals"), final_fit(k));
    check_json(cj_add_obj(d, "verification"), r);

    cli_json *fits = cj_add_obj(d, "fits");
    fit_json(cj_add_obj(fits, "mono"), &k->mono);
    fit_json(cj_add_obj(fits, "mono_end"), &k->mono_end);
    fit_json(cj_add_obj(fits, "bi"), &k->bi);
    cli_json *w = cj_add_obj(fits, "window");
    if (k->window.valid) {
        fit_json(w, &k->window.fit);
        cj_num(w, "window_end_s", k->window.end_s[k->window.chosen]);
    } else {
        cj_bool(w, "valid", 0);
        cj_str(w, "reason", cpd_kinetics_reason_text(k->window.reason));
    }
    cj_int(d, "breaths", (long long)k->n_breaths);
    cj_int(d, "outliers_removed", (long long)k->n_outliers);
    size_t hr_dropped = 0, blank = 0;
    for (size_t i = 0; i < r->b.n; i++) {
        hr_dropped += r->b.t[i].hr_dropped;
        blank += r->b.t[i].blank_cells;
    }
    cj_int(d, "hr_dropped", (long long)hr_dropped);
    cj_int(d, "blank_cells_dropped", (long long)blank);
    cli_json *bl = cj_add_arr(d, "bouts");
    for (size_t i = 0; i < r->b.n; i++) {
        cli_json *b = cj_obj();
        cj_int(b, "id", r->b.t[i].id);
        cj_str(b, "date", r->b.t[i].date);
        cj_num(b, ik, r->b.t[i].intensity);
        cj_num(b, "onset_s", r->b.t[i].onset_s);
        cj_push(bl, b);
    }
    energy_block(c, r, d);
    return cj_print(d);
}

static void show_text(const bout_run *r)
{
    const cpd_kinetics_result *k = &r->b.res;
    const cpd_kinetics_opts *ko = &r->b.ko;
    char iv[48], bl[48], tm[24], tm2[24];
    fmt_int(iv, sizeof iv, r->b.intensity, r->b.speed);
    fmt_int(bl, sizeof bl, r->b.baseline, r->b.speed);
    if (r->b.n == 1) {
        cpd_format_duration(r->b.t[0].onset_s, tm, sizeof tm);
        printf("bout %lld: %s %s, %s, %s from %s%s, onset %s\n", (long long)r->b.t[0].id, r->b.a.code, r->b.a.name,
               r->b.t[0].date, iv, bl, r->b.baseline_given ? "" : " (not given)", tm);
    } else {
        printf("bouts %s (ensemble of %zu repeats): %s %s,", r->ids_text, r->b.n, r->b.a.code, r->b.a.name);
        for (size_t i = 0; i < r->b.n; i++)
            printf(" %s%s", r->b.t[i].date, i + 1 < r->b.n ? "," : "");
        printf("; %s from %s%s\n", iv, bl, r->b.baseline_given ? "" : " (not given for every repeat)");
    }
    putchar('\n');
    char crit[600];
    criteria_text(r, crit, sizeof crit);
    printf("domain     %s\n", k->domain == CPD_KIN_UNDETERMINED ? "undetermined" : cpd_kinetics_domain_name(k->domain));
    printf("           criteria: %s\n", crit);
    if (!r->k.checked)
        printf("           check: %s\n", r->k.why_unchecked);
    else {
        char g[64] = "", p[64] = "";
        if (r->k.get > 0)
            fmt_int(g, sizeof g, r->k.get, r->b.speed);
        if (r->k.cp > 0)
            fmt_int(p, sizeof p, r->k.cp, r->b.speed);
        printf("           check: %s", r->k.chk.message);
        if (r->k.check_rc == CPD_OK && r->k.chk.agreement == 0)
            printf(" [DISAGREES]");
        printf("\n           boundaries: GET %s%s%s%s, %s %s%s%s%s\n", g[0] ? g : "unknown", g[0] ? " (" : "",
               g[0] ? r->k.get_source : "", g[0] ? ")" : "", r->b.speed ? "CS" : "CP", p[0] ? p : "unknown", p[0] ? " (" : "",
               p[0] ? r->k.cp_source : "", p[0] ? ")" : "");
    }
    if (ko->baseline_ml_min > 0)
        printf("baseline   %.0f mL/min (given)\n", k->baseline_ml_min);
    else
        printf("baseline   %.0f mL/min (SD %.0f, %zu breaths in the %.0f s before onset)\n", k->baseline_ml_min,
               k->baseline_sd_ml_min, k->n_baseline, ko->baseline_s);
    printf("primary    %.0f mL/min, tau %.1f s (95 %% CI %.1f to %.1f), delay %.1f s", k->primary.amplitude_ml_min,
           k->primary.tau_s, k->primary.tau_ci95_s[0], k->primary.tau_ci95_s[1], k->primary.delay_s);
    if (k->primary.gain_valid)
        printf(", gain %.1f mL/min per %s", k->primary.gain_ml_min_w, unit_of(r->b.speed));
    const char *pf = strcmp(k->primary.fit, "bi") == 0         ? "bi-exponential"
                     : strcmp(k->primary.fit, "mono_end") == 0 ? "mono-exponential to 3 min"
                     : strcmp(k->primary.fit, "window") == 0   ? "windowed mono-exponential"
                                                               : "mono-exponential";
    printf("\n           MRT %.1f s, O2 deficit %.0f mL (%s)\n", k->primary.mrt_s, k->primary.o2_deficit_ml, pf);
    char sc[200];
    if (k->sc_tested)
        snprintf(sc, sizeof sc, "F = %.2f, p = %.2g (level %.2g)", k->sc_test.f, k->sc_test.p_value, ko->sc_alpha);
    else
        sc_reason(k, sc, sizeof sc);
    if (k->slow.present)
        printf("slow       %.0f mL/min (SE %.0f) by the end, delay %.0f s, tau %.0f s; %s\n", k->slow.amplitude_ml_min,
               k->slow.amplitude_se_ml_min, k->slow.delay_s, k->slow.tau_s, sc);
    else
        printf("slow       none supported: %s\n", sc);
    cpd_kinetics_tvo2max tv;
    if (k->domain == CPD_KIN_SEVERE && cpd_kinetics_time_to_vo2max(k, &tv) == CPD_OK)
        printf("VO2max     reached after about delay + 4 tau = %.0f s (SE %.0f s; tau %.1f s, delay %.1f s of the %s "
               "primary): sets the severe-extreme boundary\n", tv.t_s, tv.se_s, tv.tau_s, tv.delay_s,
               strcmp(tv.fit, "bi") == 0 ? "bi-exponential" : "mono-exponential");
    if (k->delta_valid)
        printf("delta 6-3  %.0f mL/min\n", k->delta_6_3_ml_min);
    else
        printf("delta 6-3  - (bout shorter than 6 min)\n");
    printf("end VO2    %.0f mL/min (last 30 s)", k->end_vo2_ml_min);
    if (k->end_pct_valid) {
        if (r->b.vo2peak_src == 1)
            printf(", %.1f %% of VO2peak %.0f mL/min (ramp %lld, %s)", k->end_pct_vo2peak, ko->vo2peak_ml_min, r->b.ramp_id,
                   r->b.ramp_date);
        else
            printf(", %.1f %% of the given VO2peak %.0f mL/min", k->end_pct_vo2peak, ko->vo2peak_ml_min);
    } else
        printf(", no VO2peak on file");
    putchar('\n');
    if (k->slope_valid)
        printf("end slope  %.0f mL/min per min over the final 2 min (95 %% CI %.0f to %.0f)\n", k->end_slope_ml_min_per_min,
               k->end_slope_ci95[0], k->end_slope_ci95[1]);
    const cpd_kinetics_fitres *f = final_fit(k);
    printf("residuals  %s: SD %.0f mL/min, mean %.1f, largest %.0f", f->model == CPD_KIN_BI ? "bi-exponential" : "mono-exponential",
           f->resid_sd_ml_min, f->resid_mean_ml_min, f->resid_max_abs_ml_min);
    if (f->runs_valid)
        printf(", runs test z = %.2f (p = %.2g)%s", f->runs_z, f->runs_p, f->runs_p < 0.05 ? ": systematic misfit" : "");
    if (f->chi2_valid)
        printf(", reduced chi-square %.2f", f->chi2_red);
    putchar('\n');
    cpd_format_duration(f->from_s, tm, sizeof tm);
    cpd_format_duration(f->to_s, tm2, sizeof tm2);
    char pts[48];
    if (ko->bin_s > 0)
        snprintf(pts, sizeof pts, "%g-s bin means", ko->bin_s);
    else
        snprintf(pts, sizeof pts, "%s", r->b.n > 1 ? "1-s ensemble means" : "breaths");
    printf("data       %zu breaths, %zu outliers removed; fitted on %s from %s to %s\n", k->n_breaths, k->n_outliers, pts,
           tm, tm2);
    size_t hr_dropped = 0, blank = 0;
    for (size_t i = 0; i < r->b.n; i++) {
        hr_dropped += r->b.t[i].hr_dropped;
        blank += r->b.t[i].blank_cells;
    }
    if (hr_dropped || blank)
        printf("dropped    %zu heart-rate sample%s as artefacts, %zu blank cell%s\n", hr_dropped, hr_dropped == 1 ? "" : "s",
               blank, blank == 1 ? "" : "s");
}

static int bout_show(cli_ctx *c, int argc, char **argv)
{
    bout_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_SHOW, "h", show_longopts, &o, 1, "ID[,ID...]", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    bout_run *r = NULL;
    if (!(rc = run_load(c, "bout show", argv[first], &o, &r))) {
        run_check(c, r);
        if (c->json)
            rc = show_json(c, r);
        else {
            show_text(r);
            energy_block(c, r, NULL);
        }
    }
    run_free(r);
    return rc;
}

static int bout_plot(cli_ctx *c, int argc, char **argv)
{
    bout_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_PLOT, "ho:", show_longopts, &o, 1, "ID[,ID...]", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    if (!o.out)
        return cli_usage("bout plot", "-o FILE.svg is required");
    char *svg = NULL;
    bout_run *r = NULL;
    if (!(rc = run_load(c, "bout plot", argv[first], &o, &r)) &&
        !(rc = cli_bout_plot_of(c, argv[first], &r->b, &svg, NULL, 0)) &&
        !(rc = cli_write_file(c, o.out, svg, strlen(svg))))
        cli_note(c, "wrote %s", o.out);
    run_free(r);
    free(svg);
    return rc;
}

static int bout_remove(cli_ctx *c, int argc, char **argv)
{
    bout_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_REMOVE, "h", no_longopts, &o, 1, "ID", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    long long id = 0;
    if ((rc = cli_id("bout remove", argv[first], &id)))
        return rc;
    if ((rc = cli_open(c, 0)))
        return rc;
    if ((rc = cpd_store_gx_remove(c->store, id, CPD_GXT_BOUT)))
        return cli_store_fail(c, rc);
    if (c->json) {
        cli_json *d = cj_obj();
        cj_int(d, "id", id);
        cj_bool(d, "removed", 1);
        return cj_print(d);
    }
    cli_note(c, "removed bout %lld", id);
    return 0;
}

static const cli_command bout_table[] = {
    {"add", bout_add, "store a constant-power (or constant-speed) bout with its gas exchange", HELP_ADD},
    {"list", bout_list, "list an athlete's bouts", HELP_LIST},
    {"show", bout_show, "VO2 kinetics: primary and slow components, domain; ID,ID,... averages repeats", HELP_SHOW},
    {"plot", bout_plot, "write the kinetics plot with its residuals as SVG", HELP_PLOT},
    {"remove", bout_remove, "delete a bout", HELP_REMOVE},
};

int cmd_bout(cli_ctx *c, int argc, char **argv)
{
    return cli_dispatch(c, "bout", bout_table, sizeof bout_table / sizeof bout_table[0], argc, argv);
}
