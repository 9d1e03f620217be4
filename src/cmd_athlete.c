/* cmd_athlete.c: 'init' and 'athlete add|list|show|set|remove'. */
#include "cli_squad.h"
#include "commands.h"
#include "cpdomain/import.h"
#include "cpdomain/units.h"
#include "cpdomain/validate.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>

static const char HELP_INIT[] =
    "usage: cpdomain [--db FILE|URI] init\n\n"
    "Creates the store, or upgrades an older one to this version. Safe to run again.\n"
    "On a PostgreSQL server the database must exist (createdb, by its owner): init makes the\n"
    "tables in it, as the role that will own them (README: 'Sharing a store on a server').\n\n"
    "example:\n  cpdomain --db lab.db init\n";

static int no_opt(int opt, const char *arg, void *ud)
{
    (void)opt;
    (void)arg;
    (void)ud;
    return EX_USAGE;
}

static const struct option help_only[] = {{"help", no_argument, NULL, 'h'}, {NULL, 0, NULL, 0}};

int cmd_init(cli_ctx *c, int argc, char **argv)
{
    int first = 0, done = 0;
    int rc = cli_getopt(argc, argv, "h", help_only, HELP_INIT, no_opt, NULL, &first, &done);
    if (rc || done)
        return rc;
    if (first < argc)
        return cli_usage("init", "unexpected argument '%s'", argv[first]);
    if ((rc = cli_open(c, 1)))
        return rc;
    if (c->json) {
        cli_json *d = cj_obj();
        cj_str(d, "store", cpd_store_where(c->store));
        cj_int(d, "version", cpd_store_version(c->store));
        return cj_print(d);
    }
    cli_note(c, "store %s is ready (version %d)", cpd_store_where(c->store), cpd_store_version(c->store));
    return 0;
}

/* ---- athlete ---- */

static const char HELP_ADD[] =
    "usage: cpdomain athlete add CODE --name NAME [--sport SPORT] [--mass KG] [--notes TEXT] [--squad NAME]\n\n"
    "Adds an athlete. CODE is a short unique identifier (letters, digits, - _ .).\n"
    "SPORT is cycling (default), running, rowing, swimming or other; body mass in kg (20-250).\n"
    "--squad puts the athlete in a squad made with 'cpdomain squad add'.\n\n"
    "examples:\n  cpdomain athlete add C06 --name \"Ilse Brandvold\" --sport cycling --mass 66.0\n"
    "  cpdomain squad add track\n"
    "  cpdomain athlete add C07 --name \"Teodor Nakashima\" --squad track\n";
static const char HELP_LIST[] = "usage: cpdomain athlete list [--squad NAME]\n\n"
                                "Lists every athlete, or with --squad the athletes of one squad. The squad column\n"
                                "shows when some athlete listed is in a squad.\n\nexamples:\n"
                                "  cpdomain --json athlete list\n"
                                "  cpdomain squad add track\n"
                                "  cpdomain squad assign C03 track\n"
                                "  cpdomain athlete list --squad track\n";
static const char HELP_SHOW[] = "usage: cpdomain athlete show CODE\n\nShows one athlete.\n\nexample:\n"
                                "  cpdomain athlete show C03\n";
static const char HELP_SET[] =
    "usage: cpdomain athlete set CODE [--name NAME] [--sport SPORT] [--mass KG|none] [--notes TEXT]\n\n"
    "Changes the given fields; the others stay as they are. '--mass none' forgets the body mass.\n\n"
    "example:\n  cpdomain athlete set C03 --mass 70.8\n";
static const char HELP_IMPORT[] =
    "usage: cpdomain athlete import FILE.csv [--map NAME=HEADER[,...]]\n\n"
    "Adds the athletes of a CSV file with the columns code,name and optional sport, mass_kg,\n"
    "notes. A code already in the store is skipped and counted; a bad row rejects the file.\n\n"
    "example:\n  cpdomain athlete import squad.csv\n";
static const char HELP_REMOVE[] =
    "usage: cpdomain athlete remove CODE --yes\n\n"
    "Removes the athlete and every test, fit and session of the athlete, in one transaction.\n"
    "--yes confirms; without it nothing is removed.\n\nexample:\n  cpdomain athlete remove C03 --yes\n";

typedef struct {
    const char *name, *sport, *mass, *notes, *map, *squad;
    int yes;
} athlete_opts;

static int athlete_opt(int opt, const char *arg, void *ud)
{
    athlete_opts *o = ud;
    switch (opt) {
    case 'n':
        o->name = arg;
        break;
    case 's':
        o->sport = arg;
        break;
    case 'm':
        o->mass = arg;
        break;
    case 'N':
        o->notes = arg;
        break;
    case 'y':
        o->yes = 1;
        break;
    case 'M':
        o->map = arg;
        break;
    case 'S':
        o->squad = arg;
        break;
    default:
        return EX_USAGE;
    }
    return 0;
}

static const struct option athlete_longopts[] = {
    {"name", required_argument, NULL, 'n'}, {"sport", required_argument, NULL, 's'},
    {"mass", required_argument, NULL, 'm'}, {"notes", required_argument, NULL, 'N'},
    {"yes", no_argument, NULL, 'y'},        {"help", no_argument, NULL, 'h'},
    {"map", required_argument, NULL, 'M'},  {"squad", required_argument, NULL, 'S'},
    {NULL, 0, NULL, 0},
};

/* Parses options and exactly want positional arguments; returns -1 when --help was shown. */
static int parse(int argc, char **argv, const char *help, athlete_opts *o, int want, int *first)
{
    int done = 0;
    memset(o, 0, sizeof *o);
    int rc = cli_getopt(argc, argv, "h", athlete_longopts, help, athlete_opt, o, first, &done);
    if (rc)
        return rc;
    if (done)
        return -1;
    if (o->squad && help != HELP_ADD && help != HELP_LIST)
        return cli_usage(argv[0], "--squad goes with 'athlete add' and 'athlete list'; to move an athlete: "
                                  "'cpdomain squad assign CODE SQUAD'");
    if (argc - *first < want)
        return cli_usage(argv[0], "missing argument %s", want && strcmp(argv[0], "import") == 0 ? "FILE.csv" : "CODE");
    if (argc - *first > want)
        return cli_usage(argv[0], "unexpected argument '%s'", argv[*first + want]);
    return 0;
}

/* Applies the options to a; returns 0 or an exit code after printing. */
static int apply(cli_ctx *c, const athlete_opts *o, cpd_athlete *a)
{
    if (o->name) {
        if (strlen(o->name) > CPD_NAME_MAX)
            return cli_fail(c, CPD_EUSAGE, "--name: a name has at most %d bytes", CPD_NAME_MAX);
        snprintf(a->name, sizeof a->name, "%s", o->name);
    }
    if (o->sport)
        snprintf(a->sport, sizeof a->sport, "%.15s", o->sport);
    if (o->notes) {
        if (strlen(o->notes) > CPD_NOTE_MAX)
            return cli_fail(c, CPD_EUSAGE, "--notes: at most %d bytes", CPD_NOTE_MAX);
        snprintf(a->notes, sizeof a->notes, "%s", o->notes);
    }
    if (o->mass) {
        if (strcmp(o->mass, "none") == 0)
            a->has_mass = 0;
        else {
            int rc = cli_number("--mass", o->mass, &a->mass_kg);
            if (rc)
                return rc;
            a->has_mass = 1;
        }
    }
    char msg[CPD_MSG_MAX];
    if (o->sport && cpd_validate_sport(o->sport, msg))
        return cli_fail(c, CPD_EUSAGE, "--sport: %s", msg);
    if (a->has_mass && !cpd_in_range(&CPD_RANGE_MASS, a->mass_kg)) {
        cpd_range_msg(&CPD_RANGE_MASS, a->mass_kg, msg, sizeof msg);
        return cli_fail(c, CPD_EUSAGE, "--mass: %s", msg);
    }
    if (cpd_validate_athlete(a, msg))
        return cli_fail(c, CPD_EUSAGE, "%s", msg);
    return 0;
}

/* squad: the athlete's squad, "" (null in JSON) when in none */
static void athlete_json(cli_json *o, const cpd_athlete *a, const char *squad)
{
    cj_int(o, "id", a->id);
    cj_str(o, "code", a->code);
    cj_str(o, "name", a->name);
    cj_str(o, "sport", a->sport);
    if (a->has_mass)
        cj_num(o, "mass_kg", a->mass_kg);
    else
        cj_null(o, "mass_kg");
    cj_str(o, "notes", a->notes);
    cj_str(o, "squad", squad && squad[0] ? squad : NULL);
}


static int athlete_add(cli_ctx *c, int argc, char **argv)
{
    athlete_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_ADD, &o, 1, &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    if (!o.name)
        return cli_usage("athlete add", "--name is required");
    char smsg[CPD_MSG_MAX];
    if (o.squad && cpd_validate_squad(o.squad, smsg))
        return cli_usage("athlete add", "--squad: %s", smsg);
    cpd_athlete a = {0};
    snprintf(a.sport, sizeof a.sport, "cycling");
    char msg[CPD_MSG_MAX];
    if (cpd_validate_code(argv[first], msg))
        return cli_fail(c, CPD_EUSAGE, "%s", msg);
    snprintf(a.code, sizeof a.code, "%s", argv[first]);
    if ((rc = apply(c, &o, &a)))
        return rc;
    if ((rc = cli_open(c, 0)))
        return rc;
    int64_t id = 0;
    if ((rc = cpd_store_athlete_add_to(c->store, &a, o.squad, &id)))
        return cli_store_fail(c, rc);
    a.id = id;
    if (c->json) {
        cli_json *d = cj_obj();
        athlete_json(d, &a, o.squad);
        return cj_print(d);
    }
    if (o.squad)
        cli_note(c, "added athlete %s (%s) to squad %s, id %lld", a.code, a.name, o.squad, (long long)id);
    else
        cli_note(c, "added athlete %s (%s), id %lld", a.code, a.name, (long long)id);
    return 0;
}

static int athlete_list(cli_ctx *c, int argc, char **argv)
{
    athlete_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_LIST, &o, 0, &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    if ((rc = cli_open(c, 0)))
        return rc;
    cpd_athlete *v = NULL;
    cpd_athlete_squad *sq = NULL;
    size_t n = 0;
    int any = 0;
    if ((rc = cli_squad_athletes(c, o.squad, &v, &sq, &n, &any)))
        return rc;
    if (c->json || c->csv) {
        cli_json *d = cj_obj();
        cli_json *arr = cj_add_arr(d, "athletes");
        for (size_t i = 0; i < n; i++) {
            cli_json *o2 = cj_obj();
            athlete_json(o2, &v[i], sq[i].squad);
            cj_push(arr, o2);
        }
        free(v);
        free(sq);
        return c->csv ? cj_print_csv(d, "athletes", NULL) : cj_print(d);
    }
    /* the squad column only when some athlete listed is in a squad: a store without squads lists as before */
    static const char *const head[] = {"code", "name", "sport", "mass (kg)", "squad"};
    cli_table *t = cli_table_new(any ? 5 : 4, head, "lllrl");
    for (size_t i = 0; i < n; i++) {
        char m[32];
        const char *row[] = {v[i].code, v[i].name, v[i].sport, v[i].has_mass ? cli_num(m, sizeof m, v[i].mass_kg, 1) : "-",
                             sq[i].squad[0] ? sq[i].squad : "-"};
        cli_table_row(t, row);
    }
    cli_table_print(t);
    free(v);
    free(sq);
    return 0;
}

static int athlete_show(cli_ctx *c, int argc, char **argv)
{
    athlete_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_SHOW, &o, 1, &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    if ((rc = cli_open(c, 0)))
        return rc;
    cpd_athlete a;
    char squad[CPD_SQUAD_MAX + 1];
    if ((rc = cpd_store_athlete_get(c->store, argv[first], &a)) || (rc = cpd_store_athlete_squad(c->store, a.code, squad)))
        return cli_store_fail(c, rc);
    cpd_trial *tr = NULL;
    size_t nt = 0;
    if ((rc = cpd_store_trial_list(c->store, a.code, &tr, &nt)))
        return cli_store_fail(c, rc);
    size_t active = 0;
    for (size_t i = 0; i < nt; i++)
        active += !tr[i].excluded;
    free(tr);
    if (c->json) {
        cli_json *d = cj_obj();
        athlete_json(d, &a, squad);
        cj_int(d, "trials", (long long)nt);
        return cj_print(d);
    }
    char m[32];
    printf("code     %s\nname     %s\nsport    %s\nmass     %s%s\nnotes    %s\n", a.code, a.name, a.sport,
           a.has_mass ? cli_num(m, sizeof m, a.mass_kg, 1) : "-", a.has_mass ? " kg" : "", a.notes[0] ? a.notes : "-");
    if (squad[0]) /* only for an athlete in a squad: a store without squads shows as before */
        printf("squad    %s\n", squad);
    printf("trials   %zu (%zu in fits)\n", nt, active);
    return 0;
}

static int athlete_set(cli_ctx *c, int argc, char **argv)
{
    athlete_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_SET, &o, 1, &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    if (!o.name && !o.sport && !o.mass && !o.notes)
        return cli_usage("athlete set", "nothing to change: give --name, --sport, --mass or --notes");
    if ((rc = cli_open(c, 0)))
        return rc;
    cpd_athlete a;
    if ((rc = cpd_store_athlete_get(c->store, argv[first], &a)))
        return cli_store_fail(c, rc);
    if ((rc = apply(c, &o, &a)))
        return rc;
    char squad[CPD_SQUAD_MAX + 1];
    if ((rc = cpd_store_athlete_update(c->store, &a)) || (rc = cpd_store_athlete_squad(c->store, a.code, squad)))
        return cli_store_fail(c, rc);
    if (c->json) {
        cli_json *d = cj_obj();
        athlete_json(d, &a, squad);
        return cj_print(d);
    }
    cli_note(c, "updated athlete %s", a.code);
    return 0;
}

static int athlete_remove(cli_ctx *c, int argc, char **argv)
{
    athlete_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_REMOVE, &o, 1, &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    if (!o.yes)
        return cli_usage("athlete remove", "removing %s deletes all of the athlete's data: add --yes to confirm",
                         argv[first]);
    if ((rc = cli_open(c, 0)))
        return rc;
    if ((rc = cpd_store_begin(c->store)) || (rc = cpd_store_athlete_remove(c->store, argv[first])) ||
        (rc = cpd_store_commit(c->store)))
        return cli_store_fail(c, rc);
    if (c->json) {
        cli_json *d = cj_obj();
        cj_str(d, "removed", argv[first]);
        return cj_print(d);
    }
    cli_note(c, "removed athlete %s and all of the athlete's data", argv[first]);
    return 0;
}

static int athlete_import(cli_ctx *c, int argc, char **argv)
{
    athlete_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_IMPORT, &o, 1, &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    if ((rc = cli_open(c, 0)))
        return rc;
    cpd_athlete_batch b;
    char msg[CPD_MSG_MAX];
    if ((rc = cpd_import_athletes(argv[first], o.map, &b, msg)))
        return cli_fail(c, rc, "%s", msg);
    size_t added = 0, skipped = 0;
    if ((rc = cpd_store_begin(c->store)))
        goto fail;
    for (size_t i = 0; i < b.n; i++) {
        int64_t id = 0;
        rc = cpd_store_athlete_add(c->store, &b.athlete[i], &id);
        if (rc == CPD_EEXIST) {
            skipped++;
            continue;
        }
        if (rc)
            goto fail;
        added++;
    }
    if ((rc = cpd_store_commit(c->store)))
        goto fail;
    cpd_athlete_batch_free(&b);
    if (c->json) {
        cli_json *d = cj_obj();
        cj_str(d, "file", argv[first]);
        cj_int(d, "added", (long long)added);
        cj_int(d, "skipped_existing", (long long)skipped);
        return cj_print(d);
    }
    cli_note(c, "%s: %zu athletes added, %zu already in the store", argv[first], added, skipped);
    return 0;
fail:
    cpd_athlete_batch_free(&b);
    return cli_store_fail(c, rc);
}

static const cli_command athlete_table[] = {
    {"add", athlete_add, "add an athlete", HELP_ADD},
    {"list", athlete_list, "list the athletes", HELP_LIST},
    {"show", athlete_show, "show one athlete", HELP_SHOW},
    {"set", athlete_set, "change an athlete's name, sport, mass or notes", HELP_SET},
    {"import", athlete_import, "add athletes from a CSV file", HELP_IMPORT},
    {"remove", athlete_remove, "remove an athlete and all of the athlete's data", HELP_REMOVE},
};

int cmd_athlete(cli_ctx *c, int argc, char **argv)
{
    return cli_dispatch(c, "athlete", athlete_table, sizeof athlete_table / sizeof athlete_table[0], argc, argv);
}
