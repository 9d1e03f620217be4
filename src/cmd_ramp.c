/* cmd_ramp.c: 'ramp add|list|show|set|plot|remove' and 'lactate add|list|show|plot'. */
#include "cli_gx.h"
#include "commands.h"
#include "cpdomain/import.h"
#include "cpdomain/lactate.h"
#include "cpdomain/plots.h"
#include "cpdomain/ramp.h"
#include "cpdomain/units.h"
#include "cpdomain/validate.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>

static const char HELP_ADD[] =
    "usage: cpdomain ramp add CODE FILE.csv --date D --rate RATE [--start W] [--onset T]\n"
    "                         [--baseline W] [--mrt S] [--modality power|speed] [--map ...] [--note TEXT]\n\n"
    "Stores a ramp incremental test with breath-by-breath (or averaged) gas exchange. Columns:\n"
    "time_s,vo2_ml_min (or vo2_l_min) required; vco2_ml_min, ve_l_min needed for thresholds;\n"
    "optional hr_bpm, power_w, speed_m_s, peto2_mmhg, petco2_mmhg. time_s in s or h:mm:ss.\n"
    "--rate is W/min (or (m/s)/min for a treadmill ramp, --modality speed; the default follows the\n"
    "athlete's sport); --start the intensity at onset; --onset the file time at which the ramp\n"
    "began (default 0; data before it are the baseline); --baseline the intensity before onset;\n"
    "--mrt the VO2 mean response time in s if known (else it is estimated from the data).\n\n"
    "examples:\n"
    "  cpdomain ramp add C03 c03_ramp.csv --date 2026-10-02 --rate 30 --start 50 --onset 3:00\n"
    "  cpdomain ramp add R07 r07_ramp.csv --date 2026-10-05 --rate 0.2 --start 2.5 --modality speed\n";
static const char HELP_LIST[] = "usage: cpdomain ramp list CODE\n\nLists the athlete's ramp tests.\n\n"
                                "example:\n  cpdomain --json ramp list C03\n";
static const char HELP_SHOW[] =
    "usage: cpdomain ramp show ID [--window S] [--outlier-sd K] [--mrt S]\n\n"
    "Analyses a stored ramp: VO2peak (highest rolling mean over --window, default 30 s), plateau,\n"
    "the gas exchange threshold by the V-slope method with a ventilatory-equivalent cross-check,\n"
    "the respiratory compensation point, the VO2-power gain, the mean response time and the\n"
    "constant-power equivalent of each threshold (ramp power - rate x MRT). Breaths beyond\n"
    "--outlier-sd (default 4) SD of their neighbours are dropped and counted. A threshold that\n"
    "cannot be found is reported as not found, with the reason.\n\n"
    "examples:\n  cpdomain ramp show 3\n  cpdomain --json ramp show 3 --window 20\n";
static const char HELP_SET[] =
    "usage: cpdomain ramp set ID (--get-vo2 ML_MIN | --rcp-vo2 ML_MIN | --clear-get | --clear-rcp)\n\n"
    "Records a reviewer's choice of the GET or RCP (VO2 in mL/min). It is kept beside the automatic\n"
    "value and marked as manual wherever it is used.\n\n"
    "example:\n  cpdomain ramp set 3 --get-vo2 2450\n";
static const char HELP_PLOT[] =
    "usage: cpdomain ramp plot ID [--kind vslope|veq] -o FILE.svg\n\n"
    "Writes the V-slope plot (VCO2 against VO2 with both lines) or the ventilatory equivalents over\n"
    "time as an SVG file.\n\nexample:\n  cpdomain ramp plot 3 --kind vslope -o c03_vslope.svg\n";
static const char HELP_REMOVE[] = "usage: cpdomain ramp remove ID\n\nDeletes a stored ramp test.\n\nexample:\n"
                                  "  cpdomain ramp remove 3\n";

typedef struct {
    const char *date, *rate, *start, *onset, *baseline, *mrt, *modality, *map, *note, *window, *outlier, *get, *rcp,
        *kind, *out;
    int clear_get, clear_rcp;
} ramp_opts;

static int ramp_opt(int opt, const char *arg, void *ud)
{
    ramp_opts *o = ud;
    switch (opt) {
    case 'd': o->date = arg; break;
    case 'r': o->rate = arg; break;
    case 's': o->start = arg; break;
    case 'O': o->onset = arg; break;
    case 'b': o->baseline = arg; break;
    case 'M': o->mrt = arg; break;
    case 'm': o->modality = arg; break;
    case 'p': o->map = arg; break;
    case 'n': o->note = arg; break;
    case 'w': o->window = arg; break;
    case 'k': o->outlier = arg; break;
    case 'g': o->get = arg; break;
    case 'c': o->rcp = arg; break;
    case 'G': o->clear_get = 1; break;
    case 'C': o->clear_rcp = 1; break;
    case 'K': o->kind = arg; break;
    case 'o': o->out = arg; break;
    default: return EX_USAGE;
    }
    return 0;
}

static const struct option ramp_longopts[] = {
    {"date", required_argument, NULL, 'd'},     {"rate", required_argument, NULL, 'r'},
    {"start", required_argument, NULL, 's'},    {"onset", required_argument, NULL, 'O'},
    {"baseline", required_argument, NULL, 'b'}, {"mrt", required_argument, NULL, 'M'},
    {"modality", required_argument, NULL, 'm'}, {"map", required_argument, NULL, 'p'},
    {"note", required_argument, NULL, 'n'},     {"window", required_argument, NULL, 'w'},
    {"outlier-sd", required_argument, NULL, 'k'}, {"get-vo2", required_argument, NULL, 'g'},
    {"rcp-vo2", required_argument, NULL, 'c'},  {"clear-get", no_argument, NULL, 'G'},
    {"clear-rcp", no_argument, NULL, 'C'},      {"kind", required_argument, NULL, 'K'},
    {"help", no_argument, NULL, 'h'},           {NULL, 0, NULL, 0},
};

static int parse(int argc, char **argv, const char *help, ramp_opts *o, int want, const char *what, int *first)
{
    int done = 0;
    memset(o, 0, sizeof *o);
    int rc = cli_getopt(argc, argv, "ho:", ramp_longopts, help, ramp_opt, o, first, &done);
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

static int ramp_add(cli_ctx *c, int argc, char **argv)
{
    ramp_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_ADD, &o, 2, "CODE FILE.csv", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    if (!o.date || !o.rate)
        return cli_usage("ramp add", "--date and --rate are required");
    char msg[CPD_MSG_MAX];
    if (strlen(o.date) != 10 || cpd_validate_date(o.date, c->today, msg))
        return cli_usage("ramp add", "--date: %s", strlen(o.date) != 10 ? "use YYYY-MM-DD" : msg);
    if ((rc = cli_open(c, 0)))
        return rc;
    cpd_athlete a;
    if ((rc = cpd_store_athlete_get(c->store, argv[first], &a)))
        return cli_store_fail(c, rc);
    cpd_gx_test t;
    memset(&t, 0, sizeof t);
    t.kind = CPD_GXT_RAMP;
    snprintf(t.athlete, sizeof t.athlete, "%s", a.code);
    snprintf(t.date, sizeof t.date, "%s", o.date);
    if (o.modality && strcmp(o.modality, "power") && strcmp(o.modality, "speed"))
        return cli_usage("ramp add", "--modality must be power or speed");
    t.speed = o.modality ? strcmp(o.modality, "speed") == 0
                         : strcmp(a.sport, "running") == 0 || strcmp(a.sport, "swimming") == 0;
    const char *u = t.speed ? "m/s" : "W";
    double maxi = t.speed ? 15 : 3000;
    if ((rc = cli_ranged("--rate", o.rate, t.speed ? 0.005 : 1, t.speed ? 2 : 200, t.speed ? "(m/s)/min" : "W/min", 0, &t.rate_per_min)))
        return rc;
    if (o.start && (rc = cli_ranged("--start", o.start, 0, maxi, u, 0, &t.start)))
        return rc;
    if (o.onset && (rc = cli_ranged("--onset", o.onset, 0, 7200, "s", 1, &t.onset_s)))
        return rc;
    if (o.baseline) {
        if ((rc = cli_ranged("--baseline", o.baseline, 0, maxi, u, 0, &t.baseline)))
            return rc;
        t.has_baseline = 1;
    }
    if (o.mrt) {
        if ((rc = cli_ranged("--mrt", o.mrt, 0, 300, "s", 1, &t.mrt_s)))
            return rc;
        t.has_mrt = 1;
    }
    if (o.note)
        snprintf(t.note, sizeof t.note, "%s", o.note);
    snprintf(t.source_file, sizeof t.source_file, "%s", argv[first + 1]);
    cpd_gx_series *g = NULL;
    if ((rc = cpd_import_gx(argv[first + 1], o.map, CPD_RAMP_MIN_SAMPLES, &g, msg)))
        return cli_fail(c, rc, "%s", msg);
    if (t.onset_s >= g->t_s[g->n - 1]) {
        int ex = cli_usage("ramp add", "--onset %g s lies outside the file's times (%g to %g s)", t.onset_s, g->t_s[0],
                           g->t_s[g->n - 1]);
        cpd_gx_free(g);
        return ex;
    }
    int64_t id = 0;
    rc = cpd_store_gx_add(c->store, &t, g, &id);
    size_t n = g->n;
    cpd_gx_free(g);
    if (rc)
        return cli_store_fail(c, rc);
    if (c->json) {
        cli_json *d = cj_obj();
        cj_int(d, "id", id);
        cj_str(d, "athlete", a.code);
        cj_str(d, "date", t.date);
        cj_int(d, "samples", (long long)n);
        return cj_print(d);
    }
    cli_note(c, "stored ramp %lld for %s: %zu samples", (long long)id, a.code, n);
    return 0;
}

static void test_json(cli_json *o, const cpd_gx_test *t)
{
    cj_int(o, "id", t->id);
    cj_str(o, "athlete", t->athlete);
    cj_str(o, "date", t->date);
    cj_str(o, "modality", t->speed ? "speed" : "power");
    if (t->kind == CPD_GXT_RAMP) {
        cj_num(o, t->speed ? "rate_m_s_per_min" : "rate_w_per_min", t->rate_per_min);
        cj_num(o, t->speed ? "start_m_s" : "start_w", t->start);
    } else
        cj_num(o, t->speed ? "speed_m_s" : "power_w", t->intensity);
    cj_num(o, "onset_s", t->onset_s);
    cj_int(o, "samples", (long long)t->n_samples);
    cj_str(o, "note", t->note);
    cj_str(o, "source_file", t->source_file[0] ? t->source_file : NULL);
}

static int ramp_list(cli_ctx *c, int argc, char **argv)
{
    ramp_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_LIST, &o, 1, "CODE", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    if ((rc = cli_open(c, 0)))
        return rc;
    cpd_athlete a;
    if ((rc = cpd_store_athlete_get(c->store, argv[first], &a)))
        return cli_store_fail(c, rc);
    cpd_gx_test *v = NULL;
    size_t n = 0;
    if ((rc = cpd_store_gx_list(c->store, a.code, CPD_GXT_RAMP, &v, &n)))
        return cli_store_fail(c, rc);
    if (c->json || c->csv) {
        cli_json *d = cj_obj();
        cli_json *arr = cj_add_arr(d, "ramps");
        for (size_t i = 0; i < n; i++) {
            cli_json *t = cj_obj();
            test_json(t, &v[i]);
            cj_push(arr, t);
        }
        free(v);
        return c->csv ? cj_print_csv(d, "ramps", NULL) : cj_print(d);
    }
    static const char *const head[] = {"id", "date", "rate", "start", "samples", "manual", "note"};
    cli_table *t = cli_table_new(7, head, "rlrrrll");
    for (size_t i = 0; i < n; i++) {
        char id[24], rate[32], st[32], ns[24], man[32], num[32];
        snprintf(id, sizeof id, "%lld", (long long)v[i].id);
        snprintf(rate, sizeof rate, "%s %s", cli_num(num, sizeof num, v[i].rate_per_min, v[i].speed ? 3 : 0),
                 v[i].speed ? "(m/s)/min" : "W/min");
        snprintf(st, sizeof st, "%s %s", cli_num(num, sizeof num, v[i].start, v[i].speed ? 2 : 0), v[i].speed ? "m/s" : "W");
        snprintf(ns, sizeof ns, "%zu", v[i].n_samples);
        snprintf(man, sizeof man, "%s%s", v[i].has_get_manual ? "GET " : "", v[i].has_rcp_manual ? "RCP" : "");
        const char *row[] = {id, v[i].date, rate, st, ns, man[0] ? man : "-", v[i].note};
        cli_table_row(t, row);
    }
    cli_table_print(t);
    free(v);
    return 0;
}

/* Loads ramp id and analyses it; the caller frees *w and *g. Returns 0 or an exit code. */
int cli_ramp_analyse(cli_ctx *c, long long id, const char *window, const char *outlier, const char *mrt,
                     cpd_gx_test *t, cpd_athlete *a, cpd_ramp_ws **w, cpd_ramp_result *r)
{
    *w = NULL;
    cpd_ramp_opts ro;
    cpd_ramp_opts_init(&ro);
    int rc;
    double v = 0;
    if (window) {
        if ((rc = cli_ranged("--window", window, 5, 120, "s", 1, &v)))
            return rc;
        ro.peak_window_s = v;
    }
    if (outlier) {
        if ((rc = cli_ranged("--outlier-sd", outlier, 2, 10, "SD", 0, &v)))
            return rc;
        ro.outlier_k = v;
    }
    cpd_gx_series *g = NULL;
    if ((rc = cpd_store_gx_get(c->store, id, CPD_GXT_RAMP, t, &g)))
        return cli_store_fail(c, rc);
    if ((rc = cpd_store_athlete_get(c->store, t->athlete, a))) {
        cpd_gx_free(g);
        return cli_store_fail(c, rc);
    }
    ro.modality = t->speed ? CPD_RAMP_SPEED : CPD_RAMP_POWER;
    ro.rate_per_min = t->rate_per_min;
    ro.start = t->start;
    ro.onset_s = t->onset_s;
    if (t->has_baseline) {
        ro.baseline_given = 1;
        ro.baseline_intensity = t->baseline;
    }
    if (mrt) {
        if ((rc = cli_ranged("--mrt", mrt, 0, 300, "s", 1, &v))) {
            cpd_gx_free(g);
            return rc;
        }
        ro.mrt_given = 1;
        ro.mrt_s = v;
    } else if (t->has_mrt) {
        ro.mrt_given = 1;
        ro.mrt_s = t->mrt_s;
    }
    if (a->has_mass)
        ro.mass_kg = a->mass_kg;
    if (t->has_get_manual)
        ro.manual_get_vo2_ml_min = t->get_vo2_manual;
    if (t->has_rcp_manual)
        ro.manual_rcp_vo2_ml_min = t->rcp_vo2_manual;
    *w = cpd_ramp_alloc();
    char msg[CPD_MSG_MAX] = "";
    rc = *w ? cpd_ramp_analyse(*w, g, &ro, r, msg) : CPD_ENOMEM;
    cpd_gx_free(g);
    if (rc) {
        cpd_ramp_free(*w);
        *w = NULL;
        return cli_fail(c, rc, "ramp %lld: %s", id, msg[0] ? msg : cpd_strerror(rc));
    }
    return 0;
}

static const char *status_word(int st)
{
    return st == CPD_THR_FOUND ? "found" : st == CPD_THR_MANUAL ? "manual" : "not found";
}

static void threshold_json(cli_json *o, const cpd_ramp_threshold *th, const cpd_ramp_threshold *autov, int speed)
{
    cj_str(o, "status", status_word(th->status));
    int ok = th->status != CPD_THR_NOT_FOUND;
    cj_num(o, "vo2_ml_min", ok ? th->vo2_ml_min : NAN);
    cj_num(o, "pct_vo2peak", ok ? th->pct_vo2peak : NAN);
    cj_num(o, "time_s", ok ? th->time_s : NAN);
    cj_num(o, speed ? "ramp_speed_m_s" : "ramp_power_w", ok ? th->ramp_intensity : NAN);
    cj_num(o, speed ? "speed_m_s" : "power_w", ok && th->has_equiv ? th->equiv_intensity : NAN);
    cj_num(o, "hr_bpm", ok && th->has_hr ? th->hr_bpm : NAN);
    cj_str(o, "method", ok ? th->method : NULL);
    cj_str(o, "reason", ok ? NULL : th->why);
    if (th->status == CPD_THR_MANUAL) {
        cli_json *a = cj_add_obj(o, "automatic");
        threshold_json(a, autov, autov, speed);
    }
}

static void print_threshold(const char *name, const cpd_ramp_threshold *th, const cpd_ramp_threshold *autov, int speed)
{
    const char *u = speed ? "m/s" : "W";
    int dec = speed ? 2 : 0;
    if (th->status == CPD_THR_NOT_FOUND) {
        printf("%-4s not found: %s\n", name, th->why);
        return;
    }
    char t[24], n1[32], n2[32];
    cpd_format_duration(th->time_s, t, sizeof t);
    printf("%-4s %s%.0f mL/min (%.0f %% of VO2peak) at %s, ramp %s %s", name, th->status == CPD_THR_MANUAL ? "[manual] " : "",
           th->vo2_ml_min, th->pct_vo2peak, t, cli_num(n1, sizeof n1, th->ramp_intensity, dec), u);
    if (th->has_equiv)
        printf(", constant-%s equivalent %s %s", speed ? "speed" : "power", cli_num(n2, sizeof n2, th->equiv_intensity, dec), u);
    if (th->has_hr)
        printf(", HR %.0f", th->hr_bpm);
    printf("\n     method: %s\n", th->method);
    if (th->status == CPD_THR_MANUAL) {
        if (autov->status == CPD_THR_NOT_FOUND)
            printf("     automatic: not found (%s)\n", autov->why);
        else
            printf("     automatic: %.0f mL/min, ramp %s %s\n", autov->vo2_ml_min, cli_num(n1, sizeof n1, autov->ramp_intensity, dec), u);
    }
}

static int ramp_show(cli_ctx *c, int argc, char **argv)
{
    ramp_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_SHOW, &o, 1, "ID", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    long long id = 0;
    if ((rc = cli_id("ramp show", argv[first], &id)))
        return rc;
    if ((rc = cli_open(c, 0)))
        return rc;
    cpd_gx_test t;
    cpd_athlete a;
    cpd_ramp_ws *w = NULL;
    cpd_ramp_result *r = calloc(1, sizeof *r);
    if (!r)
        return cli_fail(c, CPD_ENOMEM, "out of memory");
    if ((rc = cli_ramp_analyse(c, id, o.window, o.outlier, o.mrt, &t, &a, &w, r))) {
        free(r);
        return rc;
    }
    int spd = t.speed;
    const char *u = spd ? "m/s" : "W";
    if (c->json) {
        cli_json *d = cj_obj();
        cj_int(d, "id", t.id);
        cj_str(d, "athlete", t.athlete);
        cj_str(d, "date", t.date);
        cj_str(d, "modality", spd ? "speed" : "power");
        cj_num(d, "vo2peak_ml_min", r->vo2peak_ml_min);
        cj_num(d, "vo2peak_time_s", r->vo2peak_time_s);
        cj_num(d, spd ? "vo2peak_speed_m_s" : "vo2peak_power_w", r->vo2peak_intensity);
        cj_num(d, "vo2peak_ml_kg_min", r->has_relative ? r->vo2peak_ml_kg_min : NAN);
        cj_num(d, spd ? "peak_speed_m_s" : "peak_power_w", r->peak_intensity);
        if (r->plateau < 0)
            cj_null(d, "plateau");
        else
            cj_bool(d, "plateau", r->plateau);
        cj_num(d, spd ? "gain_ml_min_per_m_s" : "gain_ml_min_w", r->gain_status == CPD_THR_FOUND ? r->gain : NAN);
        if (r->gain_in_range < 0)
            cj_null(d, "gain_in_typical_range");
        else
            cj_bool(d, "gain_in_typical_range", r->gain_in_range);
        cj_num(d, "mrt_s", r->mrt_status != CPD_THR_NOT_FOUND ? r->mrt_s : NAN);
        cj_str(d, "mrt_source", r->mrt_status == CPD_THR_MANUAL ? "given" : r->mrt_status == CPD_THR_FOUND ? "estimated (lagged-linear)" : NULL);
        cj_str(d, "mrt_reason", r->mrt_status == CPD_THR_NOT_FOUND ? r->mrt_why : NULL);
        threshold_json(cj_add_obj(d, "get"), &r->get, &r->get_auto, spd);
        threshold_json(cj_add_obj(d, "rcp"), &r->rcp, &r->rcp_auto, spd);
        cli_json *vs = cj_add_obj(d, "vslope");
        cj_num(vs, "s1", r->has_vslope ? r->vslope.s1 : NAN);
        cj_num(vs, "s2", r->has_vslope ? r->vslope.s2 : NAN);
        cli_json *vq = cj_add_obj(d, "ventilatory_check");
        cj_str(vq, "status", r->veq.status == CPD_THR_FOUND ? "found" : "not found");
        cj_num(vq, "vo2_ml_min", r->veq.status == CPD_THR_FOUND ? r->veq.vo2_ml_min : NAN);
        if (r->veq.agree < 0)
            cj_null(vq, "agrees_with_vslope");
        else
            cj_bool(vq, "agrees_with_vslope", r->veq.agree);
        cj_str(vq, "reason", r->veq.status == CPD_THR_FOUND ? NULL : r->veq.why);
        cj_int(d, "samples", (long long)r->n_samples);
        cj_int(d, "outliers_removed", (long long)r->n_outliers);
        rc = cj_print(d);
    } else {
        char n1[32], tm[24];
        printf("ramp %lld: %s %s, %s, %s %s/min from %s %s\n\n", id, a.code, a.name, t.date,
               cli_num(n1, sizeof n1, t.rate_per_min, spd ? 3 : 0), u, cli_num(tm, sizeof tm, t.start, spd ? 2 : 0), u);
        cpd_format_duration(r->vo2peak_time_s, tm, sizeof tm);
        printf("VO2peak  %.0f mL/min", r->vo2peak_ml_min);
        if (r->has_relative)
            printf(" (%.1f mL/kg/min)", r->vo2peak_ml_kg_min);
        printf(" at %s, %s; peak %s %s\n", tm, r->plateau == 1 ? "with a plateau" : r->plateau == 0 ? "no plateau" : "plateau unknown",
               cli_num(n1, sizeof n1, r->peak_intensity, spd ? 2 : 0), u);
        print_threshold("GET", &r->get, &r->get_auto, spd);
        if (r->veq.status == CPD_THR_FOUND)
            printf("     ventilatory equivalents: %.0f mL/min, %s the V-slope\n", r->veq.vo2_ml_min,
                   r->veq.agree == 1 ? "agrees with" : r->veq.agree == 0 ? "DISAGREES with" : "compared with");
        else
            printf("     ventilatory equivalents: not found (%s)\n", r->veq.why);
        print_threshold("RCP", &r->rcp, &r->rcp_auto, spd);
        if (r->gain_status == CPD_THR_FOUND)
            printf("gain     %.1f mL/min per %s below the GET%s\n", r->gain, u,
                   r->gain_in_range == 0 ? " (outside the usual 8-12 mL/min/W for cycling: check calibration)" : "");
        else
            printf("gain     not found: %s\n", r->gain_why);
        if (r->mrt_status == CPD_THR_NOT_FOUND)
            printf("MRT      not estimated: %s (give --mrt for constant-power equivalents)\n", r->mrt_why);
        else
            printf("MRT      %.0f s (%s)\n", r->mrt_s, r->mrt_status == CPD_THR_MANUAL ? "given" : "estimated, lagged-linear model");
        printf("samples  %zu, %zu outlier breaths removed\n", r->n_samples, r->n_outliers);
    }
    cpd_ramp_free(w);
    free(r);
    return rc;
}

static int ramp_set(cli_ctx *c, int argc, char **argv)
{
    ramp_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_SET, &o, 1, "ID", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    long long id = 0;
    if ((rc = cli_id("ramp set", argv[first], &id)))
        return rc;
    if (!o.get && !o.rcp && !o.clear_get && !o.clear_rcp)
        return cli_usage("ramp set", "give --get-vo2, --rcp-vo2, --clear-get or --clear-rcp");
    if ((o.get && o.clear_get) || (o.rcp && o.clear_rcp))
        return cli_usage("ramp set", "a value and its --clear together make no sense");
    double g = 0, r = 0;
    if (o.get && (rc = cli_ranged("--get-vo2", o.get, CPD_RANGE_VO2.lo, CPD_RANGE_VO2.hi, "mL/min", 0, &g)))
        return rc;
    if (o.rcp && (rc = cli_ranged("--rcp-vo2", o.rcp, CPD_RANGE_VO2.lo, CPD_RANGE_VO2.hi, "mL/min", 0, &r)))
        return rc;
    if ((rc = cli_open(c, 0)))
        return rc;
    /* a choice the ramp never reaches would be stored and then silently unused: check it against
     * the test itself (above the pre-onset baseline, below VO2peak, RCP above GET) */
    if (o.get || o.rcp) {
        cpd_gx_test t;
        cpd_athlete a;
        cpd_ramp_ws *w = NULL;
        cpd_ramp_result *rr = calloc(1, sizeof *rr);
        if (!rr)
            return cli_fail(c, CPD_ENOMEM, "out of memory");
        if ((rc = cli_ramp_analyse(c, id, NULL, NULL, NULL, &t, &a, &w, rr))) {
            free(rr);
            return rc;
        }
        double lo = rr->has_baseline ? rr->baseline_vo2_ml_min : 0, hi = rr->vo2peak_ml_min;
        double gv = o.get ? g : rr->get.status != CPD_THR_NOT_FOUND ? rr->get.vo2_ml_min : lo;
        cpd_ramp_free(w);
        free(rr);
        const char *bad = NULL;
        double val = 0;
        if (o.get && !(g > lo && g < hi)) {
            bad = "--get-vo2";
            val = g;
        } else if (o.rcp && !(r > lo && r < hi)) {
            bad = "--rcp-vo2";
            val = r;
        }
        if (bad)
            return cli_fail(c, CPD_EDATA, "%s %g mL/min: ramp %lld runs from %.0f (baseline) to %.0f mL/min (VO2peak); "
                            "a threshold must lie between", bad, val, id, lo, hi);
        if (o.rcp && !(r > gv))
            return cli_fail(c, CPD_EDATA, "--rcp-vo2 %g mL/min is not above the GET (%.0f mL/min)", r, gv);
    }
    if ((rc = cpd_store_begin(c->store)))
        return cli_store_fail(c, rc);
    if ((o.get || o.clear_get) && (rc = cpd_store_gx_set_manual(c->store, id, 0, o.get != NULL, g)))
        return cli_store_fail(c, rc);
    if ((o.rcp || o.clear_rcp) && (rc = cpd_store_gx_set_manual(c->store, id, 1, o.rcp != NULL, r)))
        return cli_store_fail(c, rc);
    if ((rc = cpd_store_commit(c->store)))
        return cli_store_fail(c, rc);
    if (c->json) {
        cli_json *d = cj_obj();
        cj_int(d, "id", id);
        if (o.get || o.clear_get)
            cj_num(d, "get_vo2_manual", o.get ? g : NAN);
        if (o.rcp || o.clear_rcp)
            cj_num(d, "rcp_vo2_manual", o.rcp ? r : NAN);
        return cj_print(d);
    }
    cli_note(c, "ramp %lld: reviewer's choice recorded (the automatic values are kept)", id);
    return 0;
}

static int ramp_plot(cli_ctx *c, int argc, char **argv)
{
    ramp_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_PLOT, &o, 1, "ID", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    long long id = 0;
    if ((rc = cli_id("ramp plot", argv[first], &id)))
        return rc;
    if (!o.out)
        return cli_usage("ramp plot", "-o FILE.svg is required");
    int veq = o.kind && strcmp(o.kind, "veq") == 0;
    if (o.kind && !veq && strcmp(o.kind, "vslope"))
        return cli_usage("ramp plot", "--kind must be vslope or veq");
    if ((rc = cli_open(c, 0)))
        return rc;
    cpd_gx_test t;
    cpd_athlete a;
    cpd_ramp_ws *w = NULL;
    cpd_ramp_result *r = calloc(1, sizeof *r);
    if (!r)
        return cli_fail(c, CPD_ENOMEM, "out of memory");
    if ((rc = cli_ramp_analyse(c, id, NULL, NULL, NULL, &t, &a, &w, r))) {
        free(r);
        return rc;
    }
    char *svg = NULL;
    rc = veq ? cpd_plot_veq(w, r, &svg) : cpd_plot_vslope(w, r, &svg);
    if (rc)
        rc = cli_fail(c, rc, "ramp %lld: no %s plot: %s", id, veq ? "ventilatory-equivalent" : "V-slope",
                      rc == CPD_ENODATA ? "the data for it are missing (VCO2 and VE are needed)" : cpd_strerror(rc));
    else
        rc = cli_write_file(c, o.out, svg, strlen(svg));
    free(svg);
    cpd_ramp_free(w);
    free(r);
    if (!rc)
        cli_note(c, "wrote %s", o.out);
    return rc;
}

static int ramp_remove(cli_ctx *c, int argc, char **argv)
{
    ramp_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_REMOVE, &o, 1, "ID", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    long long id = 0;
    if ((rc = cli_id("ramp remove", argv[first], &id)))
        return rc;
    if ((rc = cli_open(c, 0)))
        return rc;
    if ((rc = cpd_store_gx_remove(c->store, id, CPD_GXT_RAMP)))
        return cli_store_fail(c, rc);
    cli_note(c, "removed ramp %lld", id);
    return 0;
}

static const cli_command ramp_table[] = {
    {"add", ramp_add, "store a ramp test with its gas exchange", HELP_ADD},
    {"list", ramp_list, "list an athlete's ramp tests", HELP_LIST},
    {"show", ramp_show, "VO2peak, GET, RCP, gain, MRT and constant-power equivalents", HELP_SHOW},
    {"set", ramp_set, "record a reviewer's GET or RCP", HELP_SET},
    {"plot", ramp_plot, "write the V-slope or ventilatory-equivalent plot as SVG", HELP_PLOT},
    {"remove", ramp_remove, "delete a ramp test", HELP_REMOVE},
};

int cmd_ramp(cli_ctx *c, int argc, char **argv)
{
    return cli_dispatch(c, "ramp", ramp_table, sizeof ramp_table / sizeof ramp_table[0], argc, argv);
}
