/* cmd_squad.c: 'squad add|list|remove|assign' (any store) and 'squad grant|revoke' (PostgreSQL
 * stores: which database roles see which squads). */
#include "commands.h"
#include "cpdomain/validate.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>

#define PG_EXAMPLE "postgresql://admin@db.lab.example/cpdomain"

static const char HELP_ADD[] =
    "usage: cpdomain squad add NAME [--note TEXT]\n\n"
    "Adds a squad, a group of athletes (a team, a training group). NAME is unique, 1 to 64 bytes.\n"
    "Put athletes in it with 'athlete add --squad' or 'squad assign'.\n\n"
    "example:\n  cpdomain squad add track --note \"middle-distance group\"\n";
static const char HELP_LIST[] =
    "usage: cpdomain squad list\n\n"
    "Lists the squads with the number of athletes in each (on a PostgreSQL store: those you may see).\n\n"
    "examples:\n  cpdomain squad add track\n  cpdomain squad list\n  cpdomain --json squad list\n";
static const char HELP_REMOVE[] =
    "usage: cpdomain squad remove NAME\n\n"
    "Removes an empty squad. A squad with athletes in it is kept: move them first ('squad assign').\n\n"
    "examples:\n  cpdomain squad add juniors\n  cpdomain squad remove juniors\n";
static const char HELP_ASSIGN[] =
    "usage: cpdomain squad assign CODE SQUAD\n"
    "       cpdomain squad assign CODE --none\n\n"
    "Puts the athlete in the squad (out of the one it was in); --none takes the athlete out of any squad.\n\n"
    "examples:\n  cpdomain squad add track\n  cpdomain squad assign C03 track\n  cpdomain squad assign C03 --none\n";
static const char HELP_GRANT[] =
    "usage: cpdomain squad grant SQUAD ROLE\n"
    "       cpdomain squad grant --all ROLE\n\n"
    "PostgreSQL stores only: the members of database role ROLE may see and change the athletes of\n"
    "SQUAD (--all: of every squad, and the athletes in none) with all their tests, fits and sessions;\n"
    "other athletes do not exist for them. Run by the store's owner. The role must exist: the\n"
    "database administrator makes one login per person in a group role of 'cpdomain server setup'\n"
    "(psql: CREATE ROLE ines LOGIN IN ROLE cpdomain_coach; \\password ines); cpdomain never\n"
    "handles passwords. On a SQLite store the file's permissions decide who reads it (exit 64).\n\n"
    "examples:\n"
    "  cpdomain --db \"" PG_EXAMPLE "\" squad grant track ines\n"
    "  cpdomain --db \"" PG_EXAMPLE "\" squad grant --all cpdomain_lab\n";
static const char HELP_REVOKE[] =
    "usage: cpdomain squad revoke SQUAD ROLE\n"
    "       cpdomain squad revoke --all ROLE\n\n"
    "PostgreSQL stores only: takes back a grant of 'cpdomain squad grant'.\n\n"
    "example:\n  cpdomain --db \"" PG_EXAMPLE "\" squad revoke track ines\n";

typedef struct {
    const char *note;
    int none, all;
} squad_opts;

static int squad_opt(int opt, const char *arg, void *ud)
{
    squad_opts *o = ud;
    switch (opt) {
    case 'n':
        o->note = arg;
        break;
    case '0':
        o->none = 1;
        break;
    case 'a':
        o->all = 1;
        break;
    default:
        return EX_USAGE;
    }
    return 0;
}

/* Parses options (those in allowed: 'n' --note, '0' --none, 'a' --all) and exactly want
 * positional arguments named by names; returns -1 when --help was shown. */
static int parse(int argc, char **argv, const char *help, const char *allowed, squad_opts *o, int want,
                 const char *names, int *first)
{
    static const struct option lo[] = {
        {"note", required_argument, NULL, 'n'}, {"none", no_argument, NULL, '0'},
        {"all", no_argument, NULL, 'a'},        {"help", no_argument, NULL, 'h'},
        {NULL, 0, NULL, 0},
    };
    int done = 0;
    memset(o, 0, sizeof *o);
    int rc = cli_getopt(argc, argv, "h", lo, help, squad_opt, o, first, &done);
    if (rc)
        return rc;
    if (done)
        return -1;
    if ((o->note && !strchr(allowed, 'n')) || (o->none && !strchr(allowed, '0')) || (o->all && !strchr(allowed, 'a')))
        return cli_usage(argv[0], "%s is not an option of this command", o->note ? "--note" : o->none ? "--none" : "--all");
    if (argc - *first < want)
        return cli_usage(argv[0], "missing argument: give %s", names);
    if (argc - *first > want)
        return cli_usage(argv[0], "unexpected argument '%s'", argv[*first + want]);
    return 0;
}

/* A squad name by the rule of validate.h. */
static int check_name(const char *cmd, const char *name)
{
    char msg[CPD_MSG_MAX];
    return cpd_validate_squad(name, msg) ? cli_usage(cmd, "%s", msg) : 0;
}

static void squad_json(cli_json *o, const cpd_squad *q)
{
    cj_int(o, "id", q->id);
    cj_str(o, "name", q->name);
    cj_str(o, "note", q->note);
    cj_int(o, "athletes", (long long)q->athletes);
}

static int squad_add(cli_ctx *c, int argc, char **argv)
{
    squad_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_ADD, "n", &o, 1, "NAME", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    const char *name = argv[first];
    if ((rc = check_name("squad add", name)))
        return rc;
    if (o.note && strlen(o.note) > CPD_NOTE_MAX)
        return cli_usage("squad add", "--note: at most %d bytes", CPD_NOTE_MAX);
    if ((rc = cli_open(c, 0)))
        return rc;
    int64_t id = 0;
    if ((rc = cpd_store_squad_add(c->store, name, o.note, &id)))
        return cli_store_fail(c, rc);
    if (c->json) {
        cpd_squad q = {.id = id};
        snprintf(q.name, sizeof q.name, "%s", name);
        snprintf(q.note, sizeof q.note, "%s", o.note ? o.note : "");
        cli_json *d = cj_obj();
        squad_json(d, &q);
        return cj_print(d);
    }
    cli_note(c, "added squad %s, id %lld", name, (long long)id);
    return 0;
}

static int squad_list(cli_ctx *c, int argc, char **argv)
{
    squad_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_LIST, "", &o, 0, "", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    if ((rc = cli_open(c, 0)))
        return rc;
    cpd_squad *v = NULL;
    size_t n = 0;
    if ((rc = cpd_store_squad_list(c->store, &v, &n)))
        return cli_store_fail(c, rc);
    if (c->json || c->csv) {
        cli_json *d = cj_obj();
        cli_json *arr = cj_add_arr(d, "squads");
        for (size_t i = 0; i < n; i++) {
            cli_json *o2 = cj_obj();
            squad_json(o2, &v[i]);
            cj_push(arr, o2);
        }
        free(v);
        return c->csv ? cj_print_csv(d, "squads", NULL) : cj_print(d);
    }
    if (n == 0)
        cli_note(c, "no squads yet: 'cpdomain squad add NAME' makes one");
    else {
        static const char *const head[] = {"squad", "athletes", "note"};
        cli_table *t = cli_table_new(3, head, "lrl");
        for (size_t i = 0; i < n; i++) {
            char k[32];
            snprintf(k, sizeof k, "%zu", v[i].athletes);
            const char *row[] = {v[i].name, k, v[i].note[0] ? v[i].note : "-"};
            cli_table_row(t, row);
        }
        cli_table_print(t);
    }
    free(v);
    return 0;
}

static int squad_remove(cli_ctx *c, int argc, char **argv)
{
    squad_opts o;
    int first = 0;
    int rc = parse(argc, argv, HELP_REMOVE, "", &o, 1, "NAME", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    if ((rc = cli_open(c, 0)))
        return rc;
    if ((rc = cpd_store_begin(c->store)) || (rc = cpd_store_squad_remove(c->store, argv[first])) ||
        (rc = cpd_store_commit(c->store)))
        return cli_store_fail(c, rc);
    if (c->json) {
        cli_json *d = cj_obj();
        cj_str(d, "removed", argv[first]);
        return cj_print(d);
    }
    cli_note(c, "removed squad %s", argv[first]);
    return 0;
}

static int squad_assign(cli_ctx *c, int argc, char **argv)
{
    squad_opts o;
    int first = 0;
    /* CODE SQUAD, or CODE --none */
    int none = 0;
    for (int i = 1; i < argc; i++)
        none |= strcmp(argv[i], "--none") == 0;
    int rc = parse(argc, argv, HELP_ASSIGN, "0", &o, none ? 1 : 2, none ? "CODE" : "CODE and SQUAD (or CODE --none)",
                   &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    const char *code = argv[first], *squad = o.none ? NULL : argv[first + 1];
    if ((rc = cli_open(c, 0)))
        return rc;
    char before[CPD_SQUAD_MAX + 1];
    if ((rc = cpd_store_begin(c->store)) || (rc = cpd_store_athlete_squad(c->store, code, before)) ||
        (rc = cpd_store_squad_assign(c->store, code, squad)) || (rc = cpd_store_commit(c->store)))
        return cli_store_fail(c, rc);
    if (c->json) {
        cli_json *d = cj_obj();
        cj_str(d, "athlete", code);
        cj_str(d, "squad", squad);
        cj_str(d, "was", before[0] ? before : NULL);
        return cj_print(d);
    }
    char was[CPD_SQUAD_MAX + 16] = "";
    if (before[0])
        snprintf(was, sizeof was, " (was in %s)", before);
    if (squad)
        cli_note(c, "athlete %s is in squad %s%s", code, squad, was);
    else
        cli_note(c, "athlete %s is in no squad%s", code, was);
    return 0;
}

/* grant and revoke: SQUAD ROLE, or --all ROLE */
static int grant_or_revoke(cli_ctx *c, int argc, char **argv, const char *help, int grant)
{
    squad_opts o;
    int first = 0;
    int all = 0;
    for (int i = 1; i < argc; i++)
        all |= strcmp(argv[i], "--all") == 0;
    int rc = parse(argc, argv, help, "a", &o, all ? 1 : 2, all ? "ROLE" : "SQUAD and ROLE (or --all ROLE)", &first);
    if (rc)
        return rc < 0 ? 0 : rc;
    const char *squad = o.all ? NULL : argv[first], *role = argv[first + (o.all ? 0 : 1)];
    if ((rc = cli_open(c, 0)))
        return rc;
    if ((rc = cpd_store_begin(c->store)) ||
        (rc = grant ? cpd_store_squad_grant(c->store, squad, role) : cpd_store_squad_revoke(c->store, squad, role)) ||
        (rc = cpd_store_commit(c->store)))
        return cli_store_fail(c, rc);
    if (c->json) {
        cli_json *d = cj_obj();
        cj_str(d, grant ? "granted" : "revoked", role);
        cj_str(d, "squad", squad);
        return cj_print(d);
    }
    cli_note(c, "role %s %s %s%s", role, grant ? "may see" : "may no longer see", squad ? "squad " : "every squad",
             squad ? squad : "");
    return 0;
}

static int squad_grant(cli_ctx *c, int argc, char **argv)
{
    return grant_or_revoke(c, argc, argv, HELP_GRANT, 1);
}

static int squad_revoke(cli_ctx *c, int argc, char **argv)
{
    return grant_or_revoke(c, argc, argv, HELP_REVOKE, 0);
}

static const cli_command squad_table[] = {
    {"add", squad_add, "add a squad", HELP_ADD},
    {"list", squad_list, "list the squads with their athlete counts", HELP_LIST},
    {"remove", squad_remove, "remove an empty squad", HELP_REMOVE},
    {"assign", squad_assign, "put an athlete in a squad, or in none", HELP_ASSIGN},
    {"grant", squad_grant, "PostgreSQL: let a database role see a squad", HELP_GRANT},
    {"revoke", squad_revoke, "PostgreSQL: take such a grant back", HELP_REVOKE},
};

int cmd_squad(cli_ctx *c, int argc, char **argv)
{
    return cli_dispatch(c, "squad", squad_table, sizeof squad_table / sizeof squad_table[0], argc, argv);
}
