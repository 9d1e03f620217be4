/* cmd_server.c: 'server setup': the group roles of a PostgreSQL store. */
#include "commands.h"

#include <stdio.h>
#include <string.h>
#include <sysexits.h>

static const char HELP_SETUP[] =
    "usage: cpdomain server setup [--lab-role NAME] [--coach-role NAME]\n\n"
    "PostgreSQL stores only, run by the store's owner (who needs CREATEROLE): makes two group roles\n"
    "that cannot log in, and gives them their rights; running it again is harmless (and is the step\n"
    "after an upgrade):\n"
    "  --lab-role NAME    reads every table and sees every squad (default cpdomain_lab)\n"
    "  --coach-role NAME  reads and writes athletes and their data, but only of the squads granted\n"
    "                     to a role it is a member of ('cpdomain squad grant'; default cpdomain_coach)\n"
    "People log in with roles the database administrator makes in one of the groups, e.g. in psql:\n"
    "  CREATE ROLE ines LOGIN IN ROLE cpdomain_coach;  \\password ines\n"
    "cpdomain never handles passwords. A SQLite store is protected by its file's permissions (exit 64).\n\n"
    "example:\n  cpdomain --db \"postgresql://admin@db.lab.example/cpdomain\" server setup\n";

typedef struct {
    const char *lab, *coach;
} setup_opts;

static int setup_opt(int opt, const char *arg, void *ud)
{
    setup_opts *o = ud;
    switch (opt) {
    case 'l':
        o->lab = arg;
        break;
    case 'c':
        o->coach = arg;
        break;
    default:
        return EX_USAGE;
    }
    return 0;
}

static int server_setup(cli_ctx *c, int argc, char **argv)
{
    static const struct option lo[] = {
        {"lab-role", required_argument, NULL, 'l'},
        {"coach-role", required_argument, NULL, 'c'},
        {"help", no_argument, NULL, 'h'},
        {NULL, 0, NULL, 0},
    };
    setup_opts o = {"cpdomain_lab", "cpdomain_coach"};
    int first = 0, done = 0;
    int rc = cli_getopt(argc, argv, "h", lo, HELP_SETUP, setup_opt, &o, &first, &done);
    if (rc || done)
        return rc;
    if (first < argc)
        return cli_usage("server setup", "unexpected argument '%s'", argv[first]);
    if ((rc = cli_open(c, 0)))
        return rc;
    int created = 0;
    if ((rc = cpd_store_begin(c->store)) || (rc = cpd_store_server_setup(c->store, o.lab, o.coach, &created)) ||
        (rc = cpd_store_commit(c->store)))
        return cli_store_fail(c, rc);
    if (c->json) {
        cli_json *d = cj_obj();
        cj_str(d, "lab_role", o.lab);
        cj_str(d, "coach_role", o.coach);
        cj_int(d, "roles_created", created);
        return cj_print(d);
    }
    cli_note(c, "group roles %s (reads everything) and %s (its squads' athletes) are ready; %d created", o.lab, o.coach,
             created);
    return 0;
}

static const cli_command server_table[] = {
    {"setup", server_setup, "PostgreSQL: make the lab and coach group roles and their rights", HELP_SETUP},
};

int cmd_server(cli_ctx *c, int argc, char **argv)
{
    return cli_dispatch(c, "server", server_table, sizeof server_table / sizeof server_table[0], argc, argv);
}
