/* cmd_ramp.c: 'ramp add|list|show|set|plot|remove' and 'lactate add|list|show|plot'. */
#include "cli_energy.h"
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
    "usage: cpdomain ramp add CODE FILE.csv --date D [--rate RATE] [--start W] [--onset T] [--end T]\n"
    "                         [--protocol ramp|steps] [--baseline W] [--mrt S] [--modality power|speed]\n"
    "                         [--map ...] [--note TEXT]\n\n"
    "Stores a graded test (a ramp or a step test) with breath-by-breath (or averaged) gas exchange.\n"
    "Columns: time_s,vo2_ml_min (or vo2_l_min) required; vco2_ml_min, ve_l_min needed for thresholds;\n"
    "optional hr_bpm, power_w, speed_m_s, peto2_mmhg, petco2_mmhg. time_s in s or h:mm:ss, negative\n"
    "for a baseline recorded before the onset at 0. Commas, semicolons or tabs separate the columns.\n"
    "With a power_w (speed_m_s) column the recorded intensity is used: --rate and --start are then\n"
    "optional and only checked against it; whether the test is a ramp or steps is read from it\n"
    "(--protocol says it instead), and so is the end of exercise (--end T, file time, overrides it;\n"
    "the recovery after it is stored, not analysed). Without the column --rate is required: W/min\n"
    "(or (m/s)/min for a treadmill, --modality speed; the default follows the file, then the sport).\n"
    "--onset the file time at which exercise began in a file starting at 0 (default 0; data before it\n"
    "are the baseline); --baseline the intensity before onset; --mrt the VO2 mean response time in s\n"
    "if known. Heart rates outside 30-230 beats/min and blank optional cells are dropped and counted.\n\n"
    "examples:\n"
    "  cpdomain ramp add C03 c03_ramp.csv --date 2026-10-06 --rate 25 --start 50 --onset 3:00\n"
    "  cpdomain ramp add C03 c03_steps.csv --date 2026-09-15\n"
    "  cpdomain ramp add R01 r01_ramp.csv --date 2026-09-22 --rate 0.3 --start 2.2 --modality speed\n";
static const char HELP_LIST[] = "usage: cpdomain ramp list CODE\n\nLists the athlete's ramp tests.\n\n"
                                "example:\n  cpdomain --json ramp list C03\n";
static const char HELP_SHOW[] =
    "usage: cpdomain ramp show ID [--window S] [--outlier-sd K] [--mrt S]\n\n"
    "Analyses a stored ramp: VO2peak (highest rolling mean over --window, default 30 s), plateau,\n"
    "the gas exchange threshold by the V-slope method with a ventilatory-equivalent cross-check,\n"
    "the respiratory compensation point, the VO2-power gain, the mean response time and the\n"
    "constant-power equivalent of each threshold (ramp power - rate x MRT). Breaths beyond\n"
    "--outlier-sd (default 4) SD of their neighbours are dropped and counted. A threshold that\n"
    "cannot be found is reported as not found, with the reason. A step test shows its stages: the\n"
    "steady state of each (mean of the final 30 s, SD, stable or not), the gain from the stage means\n"
    "and each threshold's steady-state power; VO2peak covers the whole exercise, the last stage too.\n"
    "With VCO2 a step test also shows each stage's RER, energy (Weir 1949) and carbohydrate and fat\n"
    "oxidation (Jeukendrup & Wallis 2005; 'not valid' above RER 1.00 or when the stage is not stable),\n"
    "and the peak fat oxidation (Achten et al. 2002 cubic against %VO2peak, bootstrap intervals over\n"
    "stages, the range within 10 % of the peak; at least 5 complete stages).\n"
    "A VO2-only file gives VO2peak, peak power, the gain and (a ramp) the MRT.\n\n"
    "examples:\n  cpdomain ramp show 3\n  cpdomain --json ramp show 3 --window 20\n";
static const char HELP_SET[] =
    "usage: cpdomain ramp set ID (--get-vo2 ML_MIN | --rcp-vo2 ML_MIN | --get-power W | --rcp-power W\n"
    "                         | --clear-get | --clear-rcp)\n\n"
    "Records a reviewer's choice of the GET or RCP, as VO2 in mL/min or as an intensity (W, or m/s\n"
    "for a treadmill test: --get-speed, --rcp-speed); the VO2 of an intensity is read from the record\n"
    "(a ramp: when the intensity reaches it; steps: the stage steady states). It is kept beside the\n"
    "automatic value and marked as manual wherever it is used.\n\n"
    "examples:\n  cpdomain ramp set 3 --get-vo2 2450\n  cpdomain ramp set 4 --get-power 180\n";
static const char HELP_PLOT[] =
    "usage: cpdomain ramp plot ID [--kind vslope|veq] -o FILE.svg\n\n"
    "Writes the V-slope plot (VCO2 against VO2 with both lines) or the ventilatory equivalents over\n"
    "time as an SVG file.\n\nexample:\n  cpdomain ramp plot 4 --kind vslope -o c03_vslope.svg\n";
static const char HELP_REMOVE[] = "usage: cpdomain ramp remove ID\n\nDeletes a stored ramp test.\n\nexample:\n"
                                  "  cpdomain ramp remove 3\n";

typedef struct {
    const char *date, *rate, *start, *onset, *baseline, *mrt, *modality, *map, *note, *window, *outlier, *get, *rcp,
        *kind, *out, *end, *protocol, *get_int, *rcp_int;
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
    case 'E': o->end = arg; break;
    case 'P': o->protocol = arg; break;
    case 'x': o->get_int = arg; break;
    case 'y': o->rcp_int = arg; break;
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
    {"end", required_argument, NULL, 'E'},      {"protocol", required_argument, NULL, 'P'},
    {"get-power", required_argument, NULL, 'x'}, {"rcp-power", required_argument, NULL, 'y'},
    {"get-speed", required_argument, NULL, 'x'}, {"rcp-speed", required_argument, NULL, 'y'},
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

/* The intensity options of 'ramp add' into t, checked against the file g: --rate is required only
 * when the file has no column for the modality. Returns 0 or an exit code. */
static int ramp_add_opts(const ramp_opts *o, cpd_gx_test *t, const cpd_gx_series *g)
{
    int rc;
    const char *u = t->speed ? "m/s" : "W";
    double maxi = t->speed ? 15 : 3000;
    int col = t->speed ? CPD_GX_SPEED : CPD_GX_POWER;
    if ((!o->rate || !o->start) && !g->ch[col])
        return cli_usage("ramp add", "--rate and --start are required: the file has no %s column to read the intensity "
                         "from", cpd_gx_channel_name(col));
    if (o->rate && (rc = cli_ranged("--rate", o->rate, t->speed ? 0.005 : 1, t->speed ? 2 : 200,
                                    t->speed ? "(m/s)/min" : "W/min", 0, &t->rate_per_min)))
        return rc;
    t->has_rate = o->rate != NULL;
    if (o->start && (rc = cli_ranged("--start", o->start, 0, maxi, u, 0, &t->start)))
        return rc;
    t->has_start = o->start != NULL;
    if (o->onset && (rc = cli_ranged("--onset", o->onset, 0, 7200, "s", 1, &t->onset_s)))
        return rc;
    if (o->end) {
        if ((rc = cli_ranged("--end", o->end, 0, 86400, "s", 1, &t->end_s)))
            return rc;
        t->has_end = 1;
    }
    if (o->protocol) {
        if (strcmp(o->protocol, "steps") == 0 && !g->ch[col])
            return cli_usage("ramp add", "--protocol steps: a step test is read from the recorded intensity, and the "
                             "file has no %s column", cpd_gx_channel_name(col));
        t->protocol = strcmp(o->protocol, "steps") == 0 ? 2 : 1;
    }
    if (o->baseline) {
        if ((rc = cli_ranged("--baseline", o->baseline, 0, maxi, u, 0, &t->baseline)))
            return rc;
        t->has_baseline = 1;
    }
    if (o->mrt) {
        if ((rc = cli_ranged("--mrt", o->mrt, 0, 300, "s", 1, &t->mrt_s)))
            return rc;
        t->has_mrt = 1;
    }
    return 0;
}

/* What the analysis will read from the file, said once at 'ramp add': the protocol found in the
 * record, and a nominal rate that disagrees with it. Returns 0, or 64 when the options cannot
 * describe the file (a flat intensity column and no --rate); a file too short to analyse is still
 * stored ('ramp show' says why). */
static int add_preview(cli_ctx *c, const cpd_gx_test *t, const cpd_athlete *a, const cpd_gx_series *g)
{
    cpd_ramp_opts ro;
    cpd_ramp_opts_init(&ro);
    cpd_athlete_ramp_opts(t, a, &ro);
    cpd_ramp_ws *w = cpd_ramp_alloc();
    cpd_ramp_result *r = calloc(1, sizeof *r);
    char msg[CPD_MSG_MAX];
    const char *u = t->speed ? "m/s" : "W";
    int rc = w && r ? cpd_ramp_analyse(w, g, &ro, r, msg) : CPD_ENOMEM;
    if (rc == CPD_OK) {
        char st[24];
        cpd_format_duration(r->steps.step_s, st, sizeof st);
        if (r->protocol == CPD_RAMP_PROTO_STEPS)
            cli_note(c, "read as a step test: %zu stages of %s, +%.4g %s each", r->steps.n, st, r->steps.increment, u);
        if (r->has_nominal && r->nominal_mismatch)
            cli_note(c, "warning: the nominal rate %g %s/min disagrees with the recorded intensity (%.3g %s/min, mean "
                     "difference %.3g %s); the record is used", r->nominal_rate, u, r->record_rate, u, r->column_mad, u);
    }
    cpd_ramp_free(w);
    free(r);
    return rc == CPD_EUSAGE ? cli_usage("ramp add", "%s", msg) : 0;
}

static int ramp_add(cli_ctx *c, int argc, char **argv)
{
    ramp_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_ADD, &o, 2, "CODE FILE.csv", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    if (!o.date)
        return cli_usage("ramp add", "--date is required");
    if (o.protocol && strcmp(o.protocol, "ramp") && strcmp(o.protocol, "steps"))
        return cli_usage("ramp add", "--protocol must be ramp or steps");
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
    cpd_gx_series *g = NULL;
    cpd_gx_import_report rep;
    if ((rc = cpd_import_gx_report(argv[first + 1], o.map, CPD_RAMP_MIN_SAMPLES, &g, &rep, msg)))
        return cli_fail(c, rc, "%s", msg);
    /* the modality: as given, else the file's one intensity column, else the athlete's sport */
    int has_p = g->ch[CPD_GX_POWER] != NULL, has_v = g->ch[CPD_GX_SPEED] != NULL;
    t.speed = o.modality ? strcmp(o.modality, "speed") == 0
              : has_p != has_v ? has_v
                               : strcmp(a.sport, "running") == 0 || strcmp(a.sport, "swimming") == 0;
    rc = ramp_add_opts(&o, &t, g);
    if (!rc && t.onset_s >= g->t_s[g->n - 1])
        rc = cli_usage("ramp add", "--onset %g s lies outside the file's times (%g to %g s)", t.onset_s, g->t_s[0],
                       g->t_s[g->n - 1]);
    if (!rc && t.has_end && !(t.end_s > t.onset_s && t.end_s <= g->t_s[g->n - 1]))
        rc = cli_usage("ramp add", "--end %g s lies outside the exercise (onset %g s, last sample %g s)", t.end_s,
                       t.onset_s, g->t_s[g->n - 1]);
    if (rc) {
        cpd_gx_free(g);
        return rc;
    }
    t.hr_dropped = rep.hr_dropped;
    t.blank_cells = rep.blank_total;
    if ((rc = add_preview(c, &t, &a, g))) {
        cpd_gx_free(g);
        return rc;
    }
    if (o.note)
        snprintf(t.note, sizeof t.note, "%s", o.note);
    snprintf(t.source_file, sizeof t.source_file, "%s", argv[first + 1]);
    int64_t id = 0;
    t.n_samples = g->n;
    const char *bad_field = NULL;
    if (cpd_validate_gx_test(&t, c->today, &bad_field, msg)) { /* the record gate every path passes */
        cpd_gx_free(g);
        return cli_fail(c, CPD_EDATA, "%s: %s", bad_field, msg);
    }
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
        cj_int(d, "hr_dropped", (long long)rep.hr_dropped);
        cj_int(d, "blank_cells_dropped", (long long)rep.blank_total);
        return cj_print(d);
    }
    cli_note(c, "stored ramp %lld for %s: %zu samples", (long long)id, a.code, n);
    if (rep.hr_dropped || rep.blank_total)
        cli_note(c, "dropped: %zu heart-rate sample(s) as artefacts (outside %.0f-%.0f beats/min), %zu blank cell(s)",
                 rep.hr_dropped, CPD_GX_HR_MIN, CPD_GX_HR_MAX, rep.blank_total);
    return 0;
}

static void test_json(cli_json *o, const cpd_gx_test *t)
{
    cj_int(o, "id", t->id);
    cj_str(o, "athlete", t->athlete);
    cj_str(o, "date", t->date);
    cj_str(o, "modality", t->speed ? "speed" : "power");
    if (t->kind == CPD_GXT_RAMP) {
        cj_num(o, t->speed ? "rate_m_s_per_min" : "rate_w_per_min", t->has_rate ? t->rate_per_min : NAN);
        cj_num(o, t->speed ? "start_m_s" : "start_w", t->has_start || t->has_rate ? t->start : NAN);
        cj_str(o, "protocol", t->protocol == 2 ? "steps" : t->protocol == 1 ? "ramp" : "from the record");
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
        if (!v[i].has_rate)
            snprintf(rate, sizeof rate, "%s", v[i].protocol == 2 ? "steps" : "recorded");
        if (!v[i].has_rate && !v[i].has_start)
            snprintf(st, sizeof st, "recorded");
        snprintf(ns, sizeof ns, "%zu", v[i].n_samples);
        snprintf(man, sizeof man, "%s%s", v[i].has_get_manual ? "GET " : "", v[i].has_rcp_manual ? "RCP" : "");
        const char *row[] = {id, v[i].date, rate, st, ns, man[0] ? man : "-", v[i].note};
        cli_table_row(t, row);
    }
    cli_table_print(t);
    free(v);
    return 0;
}

/* Ramp id analysed with its stored options into a new *r (the caller frees *r and *w). Returns 0 or
 * an exit code after printing why. */
static int ramp_load(cli_ctx *c, long long id, cpd_gx_test *t, cpd_athlete *a, cpd_ramp_ws **w, cpd_ramp_result **r)
{
    *r = calloc(1, sizeof **r);
    if (!*r)
        return cli_fail(c, CPD_ENOMEM, "out of memory");
    int rc = cli_ramp_analyse(c, id, NULL, NULL, NULL, t, a, w, *r);
    if (rc) {
        free(*r);
        *r = NULL;
    }
    return rc;
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

static void print_threshold(const char *name, const cpd_ramp_threshold *th, const cpd_ramp_threshold *autov, int speed,
                            int steps)
{
    const char *u = speed ? "m/s" : "W";
    int dec = speed ? 2 : 0;
    if (th->status == CPD_THR_NOT_FOUND) {
        printf("%-4s not found: %s\n", name, th->why);
        return;
    }
    char t[24], n1[32], n2[32];
    cpd_format_duration(th->time_s, t, sizeof t);
    printf("%-4s %s%.0f mL/min (%.0f %% of VO2peak) at %s, %s %s %s", name, th->status == CPD_THR_MANUAL ? "[manual] " : "",
           th->vo2_ml_min, th->pct_vo2peak, t, steps ? "stage" : "ramp", cli_num(n1, sizeof n1, th->ramp_intensity, dec), u);
    if (th->has_equiv)
        printf(", %s %s %s", steps ? (speed ? "steady-state speed" : "steady-state power")
                                   : (speed ? "constant-speed equivalent" : "constant-power equivalent"),
               cli_num(n2, sizeof n2, th->equiv_intensity, dec), u);
    if (th->has_hr)
        printf(", HR %.0f bpm", th->hr_bpm);
    printf("\n     method: %s\n", th->method);
    if (th->status == CPD_THR_MANUAL) {
        if (autov->status == CPD_THR_NOT_FOUND)
            printf("     automatic: not found (%s)\n", autov->why);
        else
            printf("     automatic: %.0f mL/min, ramp %s %s\n", autov->vo2_ml_min, cli_num(n1, sizeof n1, autov->ramp_intensity, dec), u);
    }
}

static const char *protocol_word(int p)
{
    return p == CPD_RAMP_PROTO_STEPS ? "steps" : "ramp";
}

/* The record, the protocol, the stages and what import dropped, in the JSON of 'ramp show'. */
static void record_json(cli_json *d, const cpd_gx_test *t, const cpd_ramp_result *r)
{
    int spd = t->speed;
    cj_str(d, "protocol", protocol_word(r->protocol));
    cj_str(d, "protocol_source", r->protocol_from_record ? "recorded intensity" : "given");
    cj_str(d, "intensity_source", r->intensity_recorded ? "recorded" : "nominal");
    cli_json *rec = cj_add_obj(d, "intensity");
    cj_num(rec, spd ? "rate_m_s_per_min" : "rate_w_per_min", r->rate_used);
    cj_num(rec, spd ? "start_m_s" : "start_w", r->start_used);
    cj_num(rec, spd ? "recorded_rate_m_s_per_min" : "recorded_rate_w_per_min", r->has_record_line ? r->record_rate : NAN);
    cj_num(rec, spd ? "recorded_start_m_s" : "recorded_start_w", r->has_record_line ? r->record_start : NAN);
    cj_num(rec, spd ? "nominal_rate_m_s_per_min" : "nominal_rate_w_per_min", t->has_rate ? t->rate_per_min : NAN);
    cj_num(rec, spd ? "nominal_start_m_s" : "nominal_start_w", t->has_start ? t->start : NAN);
    if (r->has_nominal)
        cj_bool(rec, "nominal_disagrees", r->nominal_mismatch);
    else
        cj_null(rec, "nominal_disagrees");
    cj_num(rec, spd ? "mean_difference_m_s" : "mean_difference_w", r->has_nominal ? r->column_mad : NAN);
    cj_num(d, "exercise_s", r->duration_s);
    cj_str(d, "end_source", t->has_end ? "given" : r->end_from_record ? "recorded intensity" : "last sample");
    cj_str(d, "gain_basis", r->gain_basis == CPD_RAMP_GAIN_BELOW_GET ? "below the GET"
                            : r->gain_basis == CPD_RAMP_GAIN_BELOW_80PCT ? "below 80 % of peak (no GET)" : NULL);
    cj_str(d, "mrt_method", r->mrt_status != CPD_THR_FOUND ? NULL
                            : r->mrt_without_baseline ? "first-order fit to the recorded intensity (no baseline)"
                                                      : "lagged-linear with the pre-onset baseline");
    cj_int(d, "hr_dropped", (long long)t->hr_dropped);
    cj_int(d, "blank_cells_dropped", (long long)t->blank_cells);
    if (r->protocol != CPD_RAMP_PROTO_STEPS) {
        cj_null(d, "stages");
        return;
    }
    cli_json *sd = cj_add_obj(d, "steps");
    cj_num(sd, "step_s", r->steps.step_s);
    cj_num(sd, spd ? "increment_m_s" : "increment_w", r->steps.increment);
    cli_json *arr = cj_add_arr(d, "stages");
    for (size_t k = 0; k < r->steps.n; k++) {
        const cpd_steps_stage *g = &r->steps.stage[k];
        cli_json *o = cj_obj();
        cj_int(o, "stage", (long long)k + 1);
        cj_num(o, spd ? "speed_m_s" : "power_w", g->intensity);
        cj_num(o, "start_s", g->t_start_s);
        cj_num(o, "end_s", g->t_end_s);
        cj_bool(o, "complete", g->complete);
        cj_num(o, "vo2_ml_min", g->vo2_ml_min);
        cj_num(o, "vo2_sd_ml_min", g->vo2_sd);
        if (g->stable < 0)
            cj_null(o, "stable");
        else
            cj_bool(o, "stable", g->stable);
        cj_num(o, "drift_ml_min", g->stable < 0 ? NAN : g->drift_ml_min);
        cj_num(o, "vco2_ml_min", g->has_vco2 ? g->vco2_ml_min : NAN);
        cj_num(o, "rer", g->has_vco2 ? g->vco2_ml_min / g->vo2_ml_min : NAN);
        cj_num(o, "hr_bpm", g->has_hr ? g->hr_bpm : NAN);
        cj_bool(o, "in_gain", g->in_gain);
        cj_push(arr, o);
    }
}

/* The human lines of the same. */
static void print_record(const cpd_gx_test *t, const cpd_ramp_result *r)
{
    const char *u = t->speed ? "m/s" : "W";
    int dec = t->speed ? 2 : 0;
    char n1[32], n2[32], tm[24];
    cpd_format_duration(r->duration_s, tm, sizeof tm);
    printf("exercise %s from onset to the end (%s)%s\n", tm,
           t->has_end ? "given" : r->end_from_record ? "from the recorded intensity" : "the last sample",
           r->intensity_recorded ? "; intensities as recorded" : "; intensities from the nominal rate and start");
    if (r->has_nominal)
        printf("         nominal %s %s/min %s the record (%s %s/min)\n", cli_num(n1, sizeof n1, r->nominal_rate, dec + 1), u,
               r->nominal_mismatch ? "DISAGREES with" : "agrees with", cli_num(n2, sizeof n2, r->record_rate, dec + 1), u);
    if (t->hr_dropped || t->blank_cells)
        printf("dropped  %zu heart-rate sample%s as artefacts, %zu blank cell%s\n", t->hr_dropped,
               t->hr_dropped == 1 ? "" : "s", t->blank_cells, t->blank_cells == 1 ? "" : "s");
    if (r->protocol != CPD_RAMP_PROTO_STEPS)
        return;
    printf("\nstages (steady state: mean of the final 30 s)\n");
    static const char *const head[] = {"stage", "intensity", "from", "to", "VO2 (mL/min)", "SD", "stable",
                                       "VCO2 (mL/min)", "RER", "HR (bpm)", "gain"};
    cli_table *tb = cli_table_new(11, head, "rrrrrrlrrrl");
    for (size_t k = 0; k < r->steps.n; k++) {
        const cpd_steps_stage *g = &r->steps.stage[k];
        char sn[8], in[32], fr[24], to[24], vo[24], sd[24], vc[24], rer[24], hr[24];
        snprintf(sn, sizeof sn, "%zu", k + 1);
        snprintf(in, sizeof in, "%s %s%s", cli_num(n1, sizeof n1, g->intensity, dec), u, g->complete ? "" : "*");
        cpd_format_duration(g->t_start_s, fr, sizeof fr);
        cpd_format_duration(g->t_end_s, to, sizeof to);
        snprintf(vo, sizeof vo, "%.0f", g->vo2_ml_min);
        snprintf(sd, sizeof sd, "%.0f", g->vo2_sd);
        snprintf(vc, sizeof vc, g->has_vco2 ? "%.0f" : "-", g->vco2_ml_min);
        snprintf(rer, sizeof rer, g->has_vco2 ? "%.2f" : "-", g->vco2_ml_min / g->vo2_ml_min);
        snprintf(hr, sizeof hr, g->has_hr ? "%.0f" : "-", g->hr_bpm);
        const char *row[] = {sn, in, fr, to, vo, sd, g->stable < 0 ? "?" : g->stable ? "yes" : "no", vc, rer, hr,
                             g->in_gain ? "yes" : ""};
        cli_table_row(tb, row);
    }
    cli_table_print(tb);
    printf("(* cut short; SD of the VO2 in mL/min; stable: within %.0f mL/min of the 30 s before; ? stage under 60 s)\n",
           CPD_STEPS_STABLE_ML_MIN);
}

/* Issue 12: the intervals of ramp_ci.c for a ramp analysed by cli_ramp_analyse (the same options). */
#define RAMP_PLATEAU_NOTE "plateau not detected: a verification bout above the ramp's peak power confirms VO2max"
#define RAMP_RCP_EQUIV_CAUTION                                                                                      \
    "the MRT shift assumes VO2 follows the ramp with one lag (lagged-linear model, Whipp et al. 1981 J Appl "        \
    "Physiol 50:217), which holds below the GET; above it the slow component (Barstow & Mole 1991 J Appl Physiol " \
    "71:2099) makes the response nonlinear, so the RCP's constant-power equivalent is approximate"

static void ramp_ci_of(const cpd_ramp_ws *w, const cpd_ramp_result *r, const cpd_gx_test *t, const cpd_athlete *a,
                       const char *window, cpd_ramp_ci *ci)
{
    cpd_ramp_opts ro;
    cpd_ramp_opts_init(&ro);
    cpd_athlete_ramp_opts(t, a, &ro);
    double v = 0;
    if (window && cli_ranged("--window", window, 5, 120, "s", 1, &v) == 0)
        ro.peak_window_s = v;
    if (cpd_ramp_ci_compute(w, r, &ro, CPD_RAMP_CI_BOOT, CPD_RAMP_CI_SEED, ci) != CPD_OK)
        memset(ci, 0, sizeof *ci);
}

static void ci_json(cli_json *o, const cpd_ramp_thr_ci *ci, int speed)
{
    cj_pair(o, "vo2_ci95", ci->valid ? ci->vo2_ci95[0] : NAN, ci->vo2_ci95[1]);
    cj_pair(o, speed ? "ramp_speed_m_s_ci95" : "ramp_power_w_ci95", ci->valid ? ci->ramp_ci95[0] : NAN, ci->ramp_ci95[1]);
    cj_pair(o, speed ? "speed_m_s_ci95" : "power_w_ci95", ci->valid && ci->has_equiv ? ci->equiv_ci95[0] : NAN,
            ci->equiv_ci95[1]);
}

/* The interval line under a threshold, with the labels of its point line (a step test: the stage and
 * the steady-state intensity; a ramp: the ramp and the constant-intensity equivalent). */
static void print_ci(const cpd_ramp_thr_ci *ci, int speed, int steps)
{
    if (!ci->valid)
        return;
    const char *u = speed ? "m/s" : "W";
    int dec = speed ? 2 : 0;
    char a[32], b[32];
    printf("     95 %% CI %.0f to %.0f mL/min", ci->vo2_ci95[0], ci->vo2_ci95[1]);
    /* a step test's bounds often fall in one stage: its steady-state interval below says more */
    if (!steps || ci->ramp_ci95[0] != ci->ramp_ci95[1])
        printf(", %s %s to %s %s", steps ? "stage" : "ramp", cli_num(a, sizeof a, ci->ramp_ci95[0], dec),
               cli_num(b, sizeof b, ci->ramp_ci95[1], dec), u);
    if (ci->has_equiv)
        printf(", %s %s to %s %s", steps ? (speed ? "steady-state speed" : "steady-state power")
                                         : (speed ? "constant-speed equivalent" : "constant-power equivalent"),
               cli_num(a, sizeof a, ci->equiv_ci95[0], dec), cli_num(b, sizeof b, ci->equiv_ci95[1], dec), u);
    printf(" (bootstrap of the breakpoint fit, %zu resamples)\n", ci->n_used);
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
    cpd_ramp_ci ci;
    ramp_ci_of(w, r, &t, &a, o.window, &ci);
    if (c->json) {
        cli_json *d = cj_obj();
        cj_int(d, "id", t.id);
        cj_str(d, "athlete", t.athlete);
        cj_str(d, "date", t.date);
        cj_str(d, "modality", spd ? "speed" : "power");
        cj_num(d, "vo2peak_ml_min", r->vo2peak_ml_min);
        cj_pair(d, "vo2peak_ci95", ci.has_vo2peak_ci ? ci.vo2peak_ci95[0] : NAN, ci.vo2peak_ci95[1]);
        cj_num(d, "vo2peak_se_ml_min", ci.has_vo2peak_ci ? ci.vo2peak_se_ml_min : NAN);
        cj_num(d, "breath_noise_sd_ml_min", ci.has_vo2peak_ci ? ci.noise_sd_ml_min : NAN);
        cj_num(d, "vo2peak_time_s", r->vo2peak_time_s);
        cj_num(d, spd ? "vo2peak_speed_m_s" : "vo2peak_power_w", r->vo2peak_intensity);
        cj_num(d, "vo2peak_ml_kg_min", r->has_relative ? r->vo2peak_ml_kg_min : NAN);
        cj_num(d, spd ? "peak_speed_m_s" : "peak_power_w", r->peak_intensity);
        if (r->plateau < 0)
            cj_null(d, "plateau");
        else
            cj_bool(d, "plateau", r->plateau);
        cj_str(d, "plateau_note", r->plateau == 0 ? RAMP_PLATEAU_NOTE : NULL);
        cj_num(d, spd ? "gain_ml_min_per_m_s" : "gain_ml_min_w", r->gain_status == CPD_THR_FOUND ? r->gain : NAN);
        if (r->gain_in_range < 0)
            cj_null(d, "gain_in_typical_range");
        else
            cj_bool(d, "gain_in_typical_range", r->gain_in_range);
        cj_num(d, "mrt_s", r->mrt_status != CPD_THR_NOT_FOUND ? r->mrt_s : NAN);
        cj_str(d, "mrt_source", r->mrt_status == CPD_THR_MANUAL ? "given" : r->mrt_status == CPD_THR_FOUND ? "estimated (lagged-linear)" : NULL);
        cj_str(d, "mrt_reason", r->mrt_status == CPD_THR_NOT_FOUND ? r->mrt_why : NULL);
        cj_num(d, "mrt_se_s", r->mrt_status == CPD_THR_FOUND && r->has_mrt_est ? r->mrt_est_se_s : NAN);
        cli_json *gj = cj_add_obj(d, "get"), *rj = cj_add_obj(d, "rcp");
        threshold_json(gj, &r->get, &r->get_auto, spd);
        ci_json(gj, &ci.get, spd);
        threshold_json(rj, &r->rcp, &r->rcp_auto, spd);
        ci_json(rj, &ci.rcp, spd);
        cj_str(rj, "equivalent_caution", r->rcp.has_equiv ? RAMP_RCP_EQUIV_CAUTION : NULL);
        cj_int(d, "bootstrap_resamples", CPD_RAMP_CI_BOOT);
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
        record_json(d, &t, r);
        cli_energy_steps_report(&t, r, d);
        rc = cj_print(d);
    } else {
        char n1[32], n2[32], tm[24], st[24];
        cpd_format_duration(r->steps.step_s, st, sizeof st);
        if (r->protocol == CPD_RAMP_PROTO_STEPS)
            printf("ramp %lld: %s %s, %s, step test: %s %s every %s from %s %s\n\n", id, a.code, a.name, t.date,
                   cli_num(n1, sizeof n1, r->steps.increment, spd ? 2 : 0), u,
                   st,
                   cli_num(n2, sizeof n2, r->steps.stage[0].intensity, spd ? 2 : 0), u);
        else
            printf("ramp %lld: %s %s, %s, %s %s/min from %s %s%s\n\n", id, a.code, a.name, t.date,
                   cli_num(n1, sizeof n1, r->rate_used, spd ? 3 : 0), u, cli_num(tm, sizeof tm, r->start_used, spd ? 2 : 0),
                   u, r->intensity_recorded ? " (recorded)" : "");
        cpd_format_duration(r->vo2peak_time_s, tm, sizeof tm);
        printf("VO2peak  %.0f mL/min", r->vo2peak_ml_min);
        if (ci.has_vo2peak_ci)
            printf(" (95 %% CI %.0f to %.0f mL/min%s", ci.vo2peak_ci95[0], ci.vo2peak_ci95[1], r->has_relative ? "; " : ")");
        if (r->has_relative)
            printf("%s%.1f mL/kg/min)", ci.has_vo2peak_ci ? "" : " (", r->vo2peak_ml_kg_min);
        printf(" at %s, %s; peak %s %s\n", tm,
               r->plateau == 1 ? "with a plateau" : r->plateau == 0 ? "plateau not detected" : "plateau unknown",
               cli_num(n1, sizeof n1, r->peak_intensity, spd ? 2 : 0), u);
        if (ci.has_vo2peak_ci)
            printf("         interval: SE %.0f mL/min of the peak mean from the breath noise (SD %.0f mL/min, %zu breaths)\n",
                   ci.vo2peak_se_ml_min, ci.noise_sd_ml_min, ci.peak_breaths);
        if (r->plateau == 0)
            printf("         %s\n", RAMP_PLATEAU_NOTE);
        print_threshold("GET", &r->get, &r->get_auto, spd, r->protocol == CPD_RAMP_PROTO_STEPS);
        if (r->get.status == CPD_THR_FOUND)
            print_ci(&ci.get, spd, r->protocol == CPD_RAMP_PROTO_STEPS);
        if (r->veq.status == CPD_THR_FOUND)
            printf("     ventilatory equivalents: %.0f mL/min, %s the V-slope\n", r->veq.vo2_ml_min,
                   r->veq.agree == 1 ? "agrees with" : r->veq.agree == 0 ? "DISAGREES with" : "compared with");
        else
            printf("     ventilatory equivalents: not found (%s)\n", r->veq.why);
        print_threshold("RCP", &r->rcp, &r->rcp_auto, spd, r->protocol == CPD_RAMP_PROTO_STEPS);
        if (r->rcp.status == CPD_THR_FOUND)
            print_ci(&ci.rcp, spd, r->protocol == CPD_RAMP_PROTO_STEPS);
        if (r->rcp.has_equiv && r->protocol != CPD_RAMP_PROTO_STEPS)
            printf("     caution: %s\n", RAMP_RCP_EQUIV_CAUTION);
        if (r->gain_status == CPD_THR_FOUND)
            printf("gain     %.1f mL/min per %s %s%s\n", r->gain, u,
                   r->gain_basis == CPD_RAMP_GAIN_BELOW_80PCT ? "below 80 % of peak (no GET)"
                   : r->protocol == CPD_RAMP_PROTO_STEPS      ? "from the stages below the GET"
                                                              : "below the GET",
                   r->gain_in_range == 0 ? " (outside the usual 8-12 mL/min/W for cycling: check calibration)" : "");
        else
            printf("gain     not found: %s\n", r->gain_why);
        if (r->mrt_status == CPD_THR_NOT_FOUND)
            printf("MRT      not estimated: %s%s\n", r->mrt_why,
                   r->protocol == CPD_RAMP_PROTO_STEPS ? "" : " (give --mrt for constant-power equivalents)");
        else if (r->mrt_status == CPD_THR_FOUND && r->has_mrt_est)
            printf("MRT      %.0f s (SE %.0f s; estimated, %s)\n", r->mrt_s, r->mrt_est_se_s,
                   r->mrt_without_baseline ? "first-order fit to the recorded intensity, no baseline" : "lagged-linear model");
        else
            printf("MRT      %.0f s (%s)\n", r->mrt_s, r->mrt_status == CPD_THR_MANUAL ? "given" : "estimated, lagged-linear model");
        printf("samples  %zu, %zu outlier breaths removed\n", r->n_samples, r->n_outliers);
        print_record(&t, r);
        cli_energy_steps_report(&t, r, NULL);
    }
    if (r->has_nominal && r->nominal_mismatch)
        cli_note(c, "warning: ramp %lld: the nominal %s (%g %s/min) disagrees with the recorded intensity (%.3g %s/min, "
                 "mean difference %.3g %s); the record is used", id, "rate", r->nominal_rate, u, r->record_rate, u,
                 r->column_mad, u);
    cpd_ramp_free(w);
    free(r);
    return rc;
}

/* 'ramp set --get-power/--rcp-power': the reviewer's threshold as an intensity, checked against the
 * record (inside the test's intensities, GET below RCP) and its VO2 shown. */
static int ramp_set_intensity(cli_ctx *c, const ramp_opts *o, const char *ids)
{
    long long id = 0;
    int rc;
    if ((rc = cli_id("ramp set", ids, &id)))
        return rc;
    double g = 0, r = 0;
    if (o->get_int && (rc = cli_ranged("--get-power", o->get_int, 0, 3000, "W or m/s", 0, &g)))
        return rc;
    if (o->rcp_int && (rc = cli_ranged("--rcp-power", o->rcp_int, 0, 3000, "W or m/s", 0, &r)))
        return rc;
    if ((rc = cli_open(c, 0)))
        return rc;
    cpd_gx_test t;
    cpd_athlete a;
    cpd_ramp_ws *w = NULL;
    cpd_ramp_result *rr = NULL;
    if ((rc = ramp_load(c, id, &t, &a, &w, &rr)))
        return rc;
    double lo = rr->protocol == CPD_RAMP_PROTO_STEPS ? rr->steps.stage[0].intensity : rr->start_used;
    double hi = rr->peak_intensity, gi = g > 0 ? g : rr->get.status != CPD_THR_NOT_FOUND ? rr->get.ramp_intensity : lo;
    cpd_ramp_free(w);
    free(rr);
    const char *u = t.speed ? "m/s" : "W";
    const char *bad = o->get_int && !(g > lo && g < hi) ? "--get-power" : o->rcp_int && !(r > lo && r < hi) ? "--rcp-power" : NULL;
    if (bad)
        return cli_fail(c, CPD_EDATA, "%s %g %s: ramp %lld runs from %.4g to %.4g %s; a threshold must lie between", bad,
                        bad[2] == 'g' ? g : r, u, id, lo, hi, u);
    if (o->rcp_int && !(r > gi))
        return cli_fail(c, CPD_EDATA, "--rcp-power %g %s is not above the GET (%.4g %s)", r, u, gi, u);
    if ((rc = cpd_store_begin(c->store)))
        return cli_store_fail(c, rc);
    if (o->get_int && (rc = cpd_store_gx_set_manual(c->store, id, 2, 1, g)))
        return cli_store_fail(c, rc);
    if (o->rcp_int && (rc = cpd_store_gx_set_manual(c->store, id, 3, 1, r)))
        return cli_store_fail(c, rc);
    if ((rc = cpd_store_commit(c->store)))
        return cli_store_fail(c, rc);
    if (c->json) {
        cli_json *d = cj_obj();
        cj_int(d, "id", id);
        if (o->get_int)
            cj_num(d, t.speed ? "get_speed_manual" : "get_power_manual", g);
        if (o->rcp_int)
            cj_num(d, t.speed ? "rcp_speed_manual" : "rcp_power_manual", r);
        return cj_print(d);
    }
    cli_note(c, "ramp %lld: reviewer's choice recorded as an intensity (its VO2 is read from the record; the automatic "
             "values are kept)", id);
    return 0;
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
    if (!o.get && !o.rcp && !o.clear_get && !o.clear_rcp && !o.get_int && !o.rcp_int)
        return cli_usage("ramp set", "give --get-vo2, --rcp-vo2, --get-power, --rcp-power, --clear-get or --clear-rcp");
    if (((o.get || o.get_int) && o.clear_get) || ((o.rcp || o.rcp_int) && o.clear_rcp))
        return cli_usage("ramp set", "a value and its --clear together make no sense");
    if ((o.get && o.get_int) || (o.rcp && o.rcp_int))
        return cli_usage("ramp set", "give a threshold as VO2 or as an intensity, not both");
    if (o.get_int || o.rcp_int)
        return ramp_set_intensity(c, &o, argv[first]);
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
    cpd_ramp_result *r = NULL;
    if ((rc = ramp_load(c, id, &t, &a, &w, &r)))
        return rc;
    char *svg = NULL;
    const cpd_gx_series *cs = cpd_ramp_samples(w);
    if (!cs->ch[CPD_GX_VCO2] || (veq && !cs->ch[CPD_GX_VE])) {
        cli_note(c, "ramp %lld: %s plot skipped: it needs %s, which the file does not have", id,
                 veq ? "ventilatory-equivalent" : "V-slope", cs->ch[CPD_GX_VCO2] ? "VE" : "VCO2");
        cpd_ramp_free(w);
        free(r);
        return 0;
    }
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
