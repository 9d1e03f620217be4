/* cmd_trial.c: 'trial add|list|import|exclude|include|remove'. */
#include "commands.h"
#include "cpdomain/import.h"
#include "cpdomain/units.h"
#include "cpdomain/validate.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>

static const char HELP_ADD[] =
    "usage: cpdomain trial add CODE --date D (--power W | --speed M_S | --distance M) --duration T [--note TEXT]\n\n"
    "Adds one time-to-exhaustion trial (constant power or speed held to task failure) or one time\n"
    "trial (a distance and the time it took). Durations: 390, 390s, 6:30, 6min, 1:02:00.\n\n"
    "examples:\n"
    "  cpdomain trial add C03 --date 2026-10-14 --power 312 --duration 7:05\n"
    "  cpdomain trial add R01 --date 2026-10-15 --distance 3600 --duration 12:40 --note \"track, 12 C\"\n";
static const char HELP_LIST[] = "usage: cpdomain trial list CODE\n\nLists the athlete's trials, oldest first.\n\n"
                                "example:\n  cpdomain --json trial list C03\n";
static const char HELP_IMPORT[] =
    "usage: cpdomain trial import FILE.csv [--map NAME=HEADER[,...]] [--create-athletes]\n\n"
    "Imports trials from CSV with the columns athlete,date,duration_s and one of power_w,\n"
    "speed_m_s, distance_m (optional: note). Header names are case-insensitive; --map reads\n"
    "another header as one of these names. A trial already stored is skipped and counted.\n"
    "Any bad row rejects the whole file (exit 65) and nothing is stored. Athletes must exist\n"
    "unless --create-athletes (they are then added with their code as name).\n\n"
    "examples:\n"
    "  cpdomain trial import trials.csv\n"
    "  cpdomain trial import lab.csv --map athlete=Subject,power_w=Watts,duration_s=Tlim\n";
static const char HELP_EXCLUDE[] = "usage: cpdomain trial exclude ID --reason TEXT\n\n"
                                   "Leaves a trial out of fits, with the reason kept beside it.\n\n"
                                   "example:\n  cpdomain trial exclude 12 --reason \"stopped by a chain drop\"\n";
static const char HELP_INCLUDE[] = "usage: cpdomain trial include ID\n\nTakes an excluded trial back into fits.\n\n"
                                   "example:\n  cpdomain trial include 12\n";
static const char HELP_REMOVE[] = "usage: cpdomain trial remove ID\n\nDeletes a trial.\n\nexample:\n"
                                  "  cpdomain trial remove 12\n";

typedef struct {
    const char *date, *power, *speed, *distance, *duration, *note, *reason, *map;
    int create;
} trial_opts;

static int trial_opt(int opt, const char *arg, void *ud)
{
    trial_opts *o = ud;
    switch (opt) {
    case 'd': o->date = arg; break;
    case 'p': o->power = arg; break;
    case 's': o->speed = arg; break;
    case 'D': o->distance = arg; break;
    case 't': o->duration = arg; break;
    case 'n': o->note = arg; break;
    case 'r': o->reason = arg; break;
    case 'm': o->map = arg; break;
    case 'c': o->create = 1; break;
    default: return EX_USAGE;
    }
    return 0;
}

static const struct option trial_longopts[] = {
    {"date", required_argument, NULL, 'd'},     {"power", required_argument, NULL, 'p'},
    {"speed", required_argument, NULL, 's'},    {"distance", required_argument, NULL, 'D'},
    {"duration", required_argument, NULL, 't'}, {"note", required_argument, NULL, 'n'},
    {"reason", required_argument, NULL, 'r'},   {"map", required_argument, NULL, 'm'},
    {"create-athletes", no_argument, NULL, 'c'}, {"help", no_argument, NULL, 'h'},
    {NULL, 0, NULL, 0},
};

static int parse(int argc, char **argv, const char *help, trial_opts *o, int want, const char *what, int *first)
{
    int done = 0;
    memset(o, 0, sizeof *o);
    int rc = cli_getopt(argc, argv, "h", trial_longopts, help, trial_opt, o, first, &done);
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

static void trial_json(cli_json *o, const cpd_trial *t)
{
    cj_int(o, "id", t->id);
    cj_str(o, "athlete", t->athlete);
    cj_str(o, "date", t->date);
    cj_num(o, "duration_s", t->duration_s);
    cj_num(o, cpd_trial_kind_name(t->kind), t->value);
    cj_str(o, "note", t->note);
    cj_bool(o, "excluded", t->excluded);
    cj_str(o, "exclude_reason", t->excluded ? t->exclude_reason : NULL);
    cj_str(o, "source_file", t->source_file[0] ? t->source_file : NULL);
    cj_str(o, "imported_at", t->imported_at);
}

static int trial_add(cli_ctx *c, int argc, char **argv)
{
    trial_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_ADD, &o, 1, "CODE", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    if (!o.date)
        return cli_usage("trial add", "--date is required (YYYY-MM-DD)");
    if (!o.duration)
        return cli_usage("trial add", "--duration is required");
    int nv = (o.power != NULL) + (o.speed != NULL) + (o.distance != NULL);
    if (nv != 1)
        return cli_usage("trial add", "give exactly one of --power, --speed and --distance");
    cpd_trial t = {0};
    snprintf(t.athlete, sizeof t.athlete, "%.32s", argv[first]);
    snprintf(t.date, sizeof t.date, "%.10s", o.date);
    t.kind = o.power ? CPD_TRIAL_POWER : o.speed ? CPD_TRIAL_SPEED : CPD_TRIAL_DISTANCE;
    const char *vopt = o.power ? "--power" : o.speed ? "--speed" : "--distance";
    if ((rc = cli_quantity(vopt, o.power ? o.power : o.speed ? o.speed : o.distance,
                           o.power ? "W" : o.speed ? "m/s" : "m", &t.value)) ||
        (rc = cli_duration("--duration", o.duration, &t.duration_s)))
        return rc;
    if (o.note) {
        if (strlen(o.note) > CPD_NOTE_MAX)
            return cli_usage("trial add", "--note: at most %d bytes", CPD_NOTE_MAX);
        snprintf(t.note, sizeof t.note, "%s", o.note);
    }
    char msg[CPD_MSG_MAX];
    const char *field = NULL;
    if (strlen(argv[first]) > CPD_CODE_MAX || strlen(o.date) != 10)
        return cli_usage("trial add", "%s", strlen(o.date) != 10 ? "--date: use YYYY-MM-DD" : "athlete code too long");
    if (cpd_validate_trial(&t, c->today, &field, msg)) {
        const char *opt = strcmp(field, "date") == 0 ? "--date" : strcmp(field, "duration_s") == 0 ? "--duration"
                          : strcmp(field, "athlete") == 0 ? "CODE" : vopt;
        return cli_usage("trial add", "%s: %s", opt, msg);
    }
    if ((rc = cli_open(c, 0)))
        return rc;
    int dup = 0; /* an exact duplicate is skipped, as 'trial import' does */
    if ((rc = cpd_store_trial_exists(c->store, &t, &dup)))
        return cli_store_fail(c, rc);
    if (dup) {
        if (c->json) {
            cli_json *d = cj_obj();
            cj_str(d, "athlete", t.athlete);
            cj_bool(d, "skipped_duplicate", 1);
            return cj_print(d);
        }
        cli_note(c, "%s already has this trial (same date, duration and value): skipped as a duplicate", t.athlete);
        return 0;
    }
    int64_t id = 0;
    if ((rc = cpd_store_trial_add(c->store, &t, &id)))
        return cli_store_fail(c, rc);
    if (c->json) {
        if ((rc = cpd_store_trial_get(c->store, id, &t)))
            return cli_store_fail(c, rc);
        cli_json *d = cj_obj();
        trial_json(d, &t);
        return cj_print(d);
    }
    cli_note(c, "added trial %lld for %s", (long long)id, t.athlete);
    return 0;
}

static int trial_list(cli_ctx *c, int argc, char **argv)
{
    trial_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_LIST, &o, 1, "CODE", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    if ((rc = cli_open(c, 0)))
        return rc;
    cpd_athlete a;
    if ((rc = cpd_store_athlete_get(c->store, argv[first], &a)))
        return cli_store_fail(c, rc);
    cpd_trial *v = NULL;
    size_t n = 0;
    if ((rc = cpd_store_trial_list(c->store, a.code, &v, &n)))
        return cli_store_fail(c, rc);
    if (c->json || c->csv) {
        cli_json *d = cj_obj();
        cli_json *arr = cj_add_arr(d, "trials");
        for (size_t i = 0; i < n; i++) {
            cli_json *t = cj_obj();
            trial_json(t, &v[i]);
            cj_push(arr, t);
        }
        free(v);
        return c->csv ? cj_print_csv(d, "trials", NULL) : cj_print(d);
    }
    static const char *const head[] = {"id", "date", "intensity", "duration", "mean speed", "status", "note"};
    cli_table *t = cli_table_new(7, head, "rlrrrll");
    for (size_t i = 0; i < n; i++) {
        char id[24], val[48], dur[24], sp[48], st[CPD_NOTE_MAX + 16];
        snprintf(id, sizeof id, "%lld", (long long)v[i].id);
        char num[32];
        const char *unit = v[i].kind == CPD_TRIAL_POWER ? "W" : v[i].kind == CPD_TRIAL_SPEED ? "m/s" : "m";
        snprintf(val, sizeof val, "%s %s", cli_num(num, sizeof num, v[i].value, v[i].kind == CPD_TRIAL_SPEED ? 2 : 0), unit);
        cli_duration_text(v[i].duration_s, dur, sizeof dur);
        if (v[i].kind == CPD_TRIAL_DISTANCE)
            snprintf(sp, sizeof sp, "%s m/s", cli_num(num, sizeof num, v[i].value / v[i].duration_s, 2));
        else
            snprintf(sp, sizeof sp, "-");
        if (v[i].excluded)
            snprintf(st, sizeof st, "excluded: %s", v[i].exclude_reason);
        else
            snprintf(st, sizeof st, "in fits");
        const char *row[] = {id, v[i].date, val, dur, sp, st, v[i].note};
        cli_table_row(t, row);
    }
    cli_table_print(t);
    free(v);
    return 0;
}

static int trial_import(cli_ctx *c, int argc, char **argv)
{
    trial_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_IMPORT, &o, 1, "FILE.csv", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    if ((rc = cli_open(c, 0)))
        return rc;
    cpd_trial_batch b;
    char msg[CPD_MSG_MAX];
    if ((rc = cpd_import_trials(argv[first], o.map, c->today, &b, msg)))
        return cli_fail(c, rc, "%s", msg);
    size_t added = 0, skipped = 0, created = 0;
    if ((rc = cpd_store_begin(c->store)))
        goto fail;
    for (size_t i = 0; i < b.n; i++) {
        cpd_athlete a;
        rc = cpd_store_athlete_get(c->store, b.trial[i].athlete, &a);
        if (rc == CPD_ENOENT && o.create) {
            memset(&a, 0, sizeof a);
            snprintf(a.code, sizeof a.code, "%s", b.trial[i].athlete);
            snprintf(a.name, sizeof a.name, "%s", b.trial[i].athlete);
            snprintf(a.sport, sizeof a.sport, "%s", b.trial[i].kind == CPD_TRIAL_POWER ? "cycling" : "running");
            int64_t aid = 0;
            rc = cpd_store_athlete_add(c->store, &a, &aid);
            created += rc == CPD_OK;
        } else if (rc == CPD_ENOENT) {
            cpd_store_rollback(c->store);
            int ex = cli_fail(c, CPD_EDATA,
                              "%s:%ld:%d: column 'athlete': no athlete with code '%s' (add it with 'cpdomain athlete add', "
                              "or import with --create-athletes)",
                              argv[first], b.line[i], b.athlete_col, b.trial[i].athlete);
            cpd_trial_batch_free(&b);
            return ex;
        }
        if (rc)
            goto fail;
        int dup = 0;
        if ((rc = cpd_store_trial_exists(c->store, &b.trial[i], &dup)))
            goto fail;
        if (dup) {
            skipped++;
            continue;
        }
        int64_t id = 0;
        if ((rc = cpd_store_trial_add(c->store, &b.trial[i], &id)))
            goto fail;
        added++;
    }
    if ((rc = cpd_store_commit(c->store)))
        goto fail;
    cpd_trial_batch_free(&b);
    if (c->json) {
        cli_json *d = cj_obj();
        cj_str(d, "file", argv[first]);
        cj_int(d, "added", (long long)added);
        cj_int(d, "skipped_duplicates", (long long)skipped);
        cj_int(d, "athletes_created", (long long)created);
        return cj_print(d);
    }
    cli_note(c, "%s: %zu trials added, %zu duplicates skipped%s", argv[first], added, skipped,
             created ? ", new athletes created" : "");
    return 0;
fail:
    cpd_trial_batch_free(&b);
    return cli_store_fail(c, rc);
}

static int set_excluded(cli_ctx *c, int argc, char **argv, const char *help, int exclude)
{
    trial_opts o;
    int first = 0;
    int rc = parse(argc, argv, help, &o, 1, "ID", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    long long id = 0;
    if ((rc = cli_id(argv[0], argv[first], &id)))
        return rc;
    if (exclude && (!o.reason || !*o.reason))
        return cli_usage("trial exclude", "--reason is required: say why the trial is left out");
    if (o.reason && strlen(o.reason) > CPD_NOTE_MAX)
        return cli_usage(argv[0], "--reason: at most %d bytes", CPD_NOTE_MAX);
    if ((rc = cli_open(c, 0)))
        return rc;
    if ((rc = cpd_store_trial_set_excluded(c->store, id, exclude, o.reason)))
        return cli_store_fail(c, rc);
    if (c->json) {
        cpd_trial t;
        if ((rc = cpd_store_trial_get(c->store, id, &t)))
            return cli_store_fail(c, rc);
        cli_json *d = cj_obj();
        trial_json(d, &t);
        return cj_print(d);
    }
    cli_note(c, "trial %lld %s", id, exclude ? "excluded from fits" : "included in fits");
    return 0;
}

static int trial_exclude(cli_ctx *c, int argc, char **argv)
{
    return set_excluded(c, argc, argv, HELP_EXCLUDE, 1);
}

static int trial_include(cli_ctx *c, int argc, char **argv)
{
    return set_excluded(c, argc, argv, HELP_INCLUDE, 0);
}

static int trial_remove(cli_ctx *c, int argc, char **argv)
{
    trial_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_REMOVE, &o, 1, "ID", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    long long id = 0;
    if ((rc = cli_id(argv[0], argv[first], &id)))
        return rc;
    if ((rc = cli_open(c, 0)))
        return rc;
    if ((rc = cpd_store_trial_remove(c->store, id)))
        return cli_store_fail(c, rc);
    if (c->json) {
        cli_json *d = cj_obj();
        cj_int(d, "removed", id);
        return cj_print(d);
    }
    cli_note(c, "removed trial %lld", id);
    return 0;
}

static const cli_command trial_table[] = {
    {"add", trial_add, "add one trial", HELP_ADD},
    {"list", trial_list, "list an athlete's trials", HELP_LIST},
    {"import", trial_import, "import trials from a CSV file", HELP_IMPORT},
    {"exclude", trial_exclude, "leave a trial out of fits, with a reason", HELP_EXCLUDE},
    {"include", trial_include, "take an excluded trial back", HELP_INCLUDE},
    {"remove", trial_remove, "delete a trial", HELP_REMOVE},
};

int cmd_trial(cli_ctx *c, int argc, char **argv)
{
    return cli_dispatch(c, "trial", trial_table, sizeof trial_table / sizeof trial_table[0], argc, argv);
}
