/* cmd_lactate.c: 'lactate add|list|show|plot': blood-lactate step tests. */
#include "commands.h"
#include "cpdomain/import.h"
#include "cpdomain/lactate.h"
#include "cpdomain/plots.h"
#include "cpdomain/units.h"
#include "cpdomain/validate.h"

#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>

static const char HELP_ADD[] =
    "usage: cpdomain lactate add CODE FILE.csv --date D [--map NAME=HEADER,...] [--note TEXT]\n\n"
    "Stores a blood-lactate step test: one row per stage with lactate_mmol_l and one of power_w or\n"
    "speed_m_s (optional hr_bpm, stage_s), stages in rising order.\n\n"
    "example:\n  cpdomain lactate add C01 c01_lactate.csv --date 2026-10-01\n";
static const char HELP_LIST[] = "usage: cpdomain lactate list CODE\n\nLists the athlete's lactate tests.\n\n"
                                "example:\n  cpdomain --json lactate list C01\n";
static const char HELP_SHOW[] =
    "usage: cpdomain lactate show ID\n\n"
    "The lactate thresholds of a step test: LT1 by the log-log method (Beaver, Wasserman & Whipp 1985),\n"
    "Dmax (Cheng et al. 1992) and modified Dmax (Bishop, Jenkins & Mackinnon 1998) on a least-squares\n"
    "cubic, and the fixed 4 mmol/L (Sjodin & Jacobs 1981), each with the heart rate at it when given.\n"
    "Stage length changes the thresholds: compare tests with the same protocol.\n\n"
    "example:\n  cpdomain lactate show 2\n";
static const char HELP_PLOT[] = "usage: cpdomain lactate plot ID -o FILE.svg\n\nWrites the lactate curve as SVG.\n\n"
                                "example:\n  cpdomain lactate plot 2 -o r02_lactate.svg\n";

typedef struct {
    const char *date, *map, *note, *out;
} lac_opts;

static int lac_opt(int opt, const char *arg, void *ud)
{
    lac_opts *o = ud;
    switch (opt) {
    case 'd': o->date = arg; break;
    case 'm': o->map = arg; break;
    case 'n': o->note = arg; break;
    case 'o': o->out = arg; break;
    default: return EX_USAGE;
    }
    return 0;
}

static int parse(int argc, char **argv, const char *help, lac_opts *o, int want, const char *what, int *first)
{
    static const struct option lo[] = {
        {"date", required_argument, NULL, 'd'}, {"map", required_argument, NULL, 'm'},
        {"note", required_argument, NULL, 'n'}, {"help", no_argument, NULL, 'h'},
        {NULL, 0, NULL, 0},
    };
    int done = 0;
    memset(o, 0, sizeof *o);
    int rc = cli_getopt(argc, argv, "ho:", lo, help, lac_opt, o, first, &done);
    if (rc)
        return rc;
    if (done)
        return -1;
    if (argc - *first != want)
        return argc - *first < want ? cli_usage(argv[0], "missing argument %s", what)
                                    : cli_usage(argv[0], "unexpected argument '%s'", argv[*first + want]);
    return 0;
}

static int lactate_add(cli_ctx *c, int argc, char **argv)
{
    lac_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_ADD, &o, 2, "CODE FILE.csv", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    char msg[CPD_MSG_MAX];
    if (!o.date)
        return cli_usage("lactate add", "--date is required");
    if (strlen(o.date) != 10 || cpd_validate_date(o.date, c->today, msg))
        return cli_usage("lactate add", "--date: %s", strlen(o.date) != 10 ? "use YYYY-MM-DD" : msg);
    if ((rc = cli_open(c, 0)))
        return rc;
    cpd_athlete a;
    if ((rc = cpd_store_athlete_get(c->store, argv[first], &a)))
        return cli_store_fail(c, rc);
    cpd_lactate_test *t = calloc(1, sizeof *t);
    if (!t)
        return cli_fail(c, CPD_ENOMEM, "out of memory");
    if ((rc = cpd_import_lactate(argv[first + 1], o.map, t, msg))) {
        free(t);
        return cli_fail(c, rc, "%s", msg);
    }
    snprintf(t->athlete, sizeof t->athlete, "%s", a.code);
    snprintf(t->date, sizeof t->date, "%s", o.date);
    if (o.note)
        snprintf(t->note, sizeof t->note, "%s", o.note);
    int64_t id = 0;
    const char *bad_field = NULL;
    size_t bad_stage = 0;
    if (cpd_validate_lactate(t, c->today, &bad_field, &bad_stage, msg)) { /* the record gate every path passes */
        free(t);
        return cli_fail(c, CPD_EDATA, "stage %zu, %s: %s", bad_stage + 1, bad_field, msg);
    }
    rc = cpd_store_lactate_add(c->store, t, &id);
    size_t n = t->n;
    free(t);
    if (rc)
        return cli_store_fail(c, rc);
    if (c->json) {
        cli_json *d = cj_obj();
        cj_int(d, "id", id);
        cj_str(d, "athlete", a.code);
        cj_int(d, "stages", (long long)n);
        return cj_print(d);
    }
    cli_note(c, "stored lactate test %lld for %s: %zu stages", (long long)id, a.code, n);
    return 0;
}

static int lactate_list(cli_ctx *c, int argc, char **argv)
{
    lac_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_LIST, &o, 1, "CODE", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    if ((rc = cli_open(c, 0)))
        return rc;
    cpd_athlete a;
    if ((rc = cpd_store_athlete_get(c->store, argv[first], &a)))
        return cli_store_fail(c, rc);
    cpd_lactate_test *v = NULL;
    size_t n = 0;
    if ((rc = cpd_store_lactate_list(c->store, a.code, &v, &n)))
        return cli_store_fail(c, rc);
    if (c->json || c->csv) {
        cli_json *d = cj_obj();
        cli_json *arr = cj_add_arr(d, "lactates");
        for (size_t i = 0; i < n; i++) {
            cli_json *t = cj_obj();
            cj_int(t, "id", v[i].id);
            cj_str(t, "date", v[i].date);
            cj_str(t, "modality", v[i].speed ? "speed" : "power");
            cj_int(t, "stages", (long long)v[i].n);
            cj_str(t, "note", v[i].note);
            cj_push(arr, t);
        }
        free(v);
        return c->csv ? cj_print_csv(d, "lactates", NULL) : cj_print(d);
    }
    static const char *const head[] = {"id", "date", "stages", "range", "note"};
    cli_table *t = cli_table_new(5, head, "rlrrl");
    for (size_t i = 0; i < n; i++) {
        char id[24], ns[16], range[64], a1[32], a2[32];
        snprintf(id, sizeof id, "%lld", (long long)v[i].id);
        snprintf(ns, sizeof ns, "%zu", v[i].n);
        snprintf(range, sizeof range, "%s-%s %s", cli_num(a1, sizeof a1, v[i].intensity[0], v[i].speed ? 2 : 0),
                 cli_num(a2, sizeof a2, v[i].intensity[v[i].n ? v[i].n - 1 : 0], v[i].speed ? 2 : 0), v[i].speed ? "m/s" : "W");
        const char *row[] = {id, v[i].date, ns, range, v[i].note};
        cli_table_row(t, row);
    }
    cli_table_print(t);
    free(v);
    return 0;
}

/* Loads and analyses lactate test id; returns 0 or an exit code. */
static int analyse(cli_ctx *c, long long id, cpd_lactate_test *t, cpd_lactate_result *r)
{
    int rc = cpd_store_lactate_get(c->store, id, t);
    if (rc)
        return cli_store_fail(c, rc);
    char msg[CPD_MSG_MAX] = "";
    if ((rc = cpd_lactate_analyse(t->intensity, t->lactate, t->has_hr ? t->hr : NULL, t->n, r, msg)))
        return cli_fail(c, rc, "lactate test %lld: %s", id, msg[0] ? msg : cpd_strerror(rc));
    return 0;
}

static void value_json(cli_json *d, const char *key, const cpd_lactate_value *v, int speed)
{
    char k[48];
    snprintf(k, sizeof k, "%s_%s", key, speed ? "m_s" : "w");
    int ok = v->status == CPD_LACTATE_FOUND;
    cj_num(d, k, ok ? v->intensity : NAN);
    snprintf(k, sizeof k, "%s_mmol_l", key);
    cj_num(d, k, ok ? v->lactate_mmol_l : NAN);
    snprintf(k, sizeof k, "%s_hr_bpm", key);
    cj_num(d, k, ok && v->has_hr ? v->hr_bpm : NAN);
    snprintf(k, sizeof k, "%s_reason", key);
    cj_str(d, k, ok ? NULL : v->why);
}

static int lactate_show(cli_ctx *c, int argc, char **argv)
{
    lac_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_SHOW, &o, 1, "ID", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    long long id = 0;
    if ((rc = cli_id("lactate show", argv[first], &id)))
        return rc;
    if ((rc = cli_open(c, 0)))
        return rc;
    cpd_lactate_test *t = calloc(1, sizeof *t);
    cpd_lactate_result *r = calloc(1, sizeof *r);
    if (!t || !r) {
        free(t);
        free(r);
        return cli_fail(c, CPD_ENOMEM, "out of memory");
    }
    if ((rc = analyse(c, id, t, r)))
        goto done;
    cpd_lactate_ci ci; /* issue 12: every threshold with its interval */
    if (cpd_lactate_ci_compute(t->intensity, t->lactate, t->n, r, 200, (uint64_t)id, &ci) != CPD_OK)
        memset(&ci, 0, sizeof ci);
    const struct {
        const char *key, *name;
        const cpd_lactate_value *v;
    } vals[] = {{"lt1", "LT1 (log-log)", &r->lt1},
                {"dmax", "Dmax", &r->dmax},
                {"dmax_mod", "modified Dmax", &r->dmax_mod},
                {"obla", "4 mmol/L", &r->obla}};
    if (c->json) {
        cli_json *d = cj_obj();
        cj_int(d, "id", t->id);
        cj_str(d, "athlete", t->athlete);
        cj_str(d, "date", t->date);
        cj_str(d, "modality", t->speed ? "speed" : "power");
        cj_int(d, "stages", (long long)t->n);
        for (size_t k = 0; k < 4; k++) {
            value_json(d, vals[k].key, vals[k].v, t->speed);
            char ck[48];
            snprintf(ck, sizeof ck, "%s_%s_ci95", vals[k].key, t->speed ? "m_s" : "w");
            cj_pair(d, ck, ci.valid[k] ? ci.ci95[k][0] : NAN, ci.ci95[k][1]);
        }
        cj_str(d, "ci_method", "residual bootstrap about the least-squares cubic, 200 resamples, each analysed by "
                               "the same rules; percentile interval");
        rc = cj_print(d);
    } else {
        printf("lactate test %lld: %s, %s, %zu stages\n\n", id, t->athlete, t->date, t->n);
        for (size_t k = 0; k < 4; k++) {
            const cpd_lactate_value *v = vals[k].v;
            char n1[32];
            if (v->status == CPD_LACTATE_FOUND) {
                printf("%-14s %s %s at %.2f mmol/L", vals[k].name, cli_num(n1, sizeof n1, v->intensity, t->speed ? 2 : 0),
                       t->speed ? "m/s" : "W", v->lactate_mmol_l);
                if (v->has_hr)
                    printf(", HR %.0f bpm", v->hr_bpm);
                if (ci.valid[k]) {
                    char a1[32], a2[32];
                    printf(" (95 %% CI %s to %s %s)", cli_num(a1, sizeof a1, ci.ci95[k][0], t->speed ? 2 : 0),
                           cli_num(a2, sizeof a2, ci.ci95[k][1], t->speed ? 2 : 0), t->speed ? "m/s" : "W");
                }
                printf("\n");
            } else
                printf("%-14s not found: %s\n", vals[k].name, v->why);
        }
        printf("\nintervals: residual bootstrap about the least-squares cubic (200 resamples, each analysed by the "
               "same rules)\n");
    }
done:
    free(t);
    free(r);
    return rc;
}

static int lactate_plot(cli_ctx *c, int argc, char **argv)
{
    lac_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_PLOT, &o, 1, "ID", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    long long id = 0;
    if ((rc = cli_id("lactate plot", argv[first], &id)))
        return rc;
    if (!o.out)
        return cli_usage("lactate plot", "-o FILE.svg is required");
    if ((rc = cli_open(c, 0)))
        return rc;
    cpd_lactate_test *t = calloc(1, sizeof *t);
    cpd_lactate_result *r = calloc(1, sizeof *r);
    char *svg = NULL;
    if (!t || !r)
        rc = cli_fail(c, CPD_ENOMEM, "out of memory");
    else if (!(rc = analyse(c, id, t, r))) {
        if ((rc = cpd_plot_lactate(t->intensity, t->lactate, t->n, t->speed, r, &svg)))
            rc = cli_fail(c, rc, "lactate plot: %s", cpd_strerror(rc));
        else {
            rc = cli_write_file(c, o.out, svg, strlen(svg));
        }
    }
    free(svg);
    free(t);
    free(r);
    return rc;
}

static const cli_command lactate_table[] = {
    {"add", lactate_add, "store a lactate step test", HELP_ADD},
    {"list", lactate_list, "list an athlete's lactate tests", HELP_LIST},
    {"show", lactate_show, "LT1, Dmax, modified Dmax and 4 mmol/L", HELP_SHOW},
    {"plot", lactate_plot, "write the lactate curve as SVG", HELP_PLOT},
};

int cmd_lactate(cli_ctx *c, int argc, char **argv)
{
    return cli_dispatch(c, "lactate", lactate_table, sizeof lactate_table / sizeof lactate_table[0], argc, argv);
}
