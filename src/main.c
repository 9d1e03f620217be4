/* main.c: the cpdomain command line: global options, the command table, exit status. */
#include "commands.h"
#include "cpdomain/suggest.h"
#include "cpdomain/units.h"
#include "cpdomain/version.h"

#include <errno.h>
#include <gsl/gsl_errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>
#include <time.h>

static const cli_command commands[] = {
    {"init", cmd_init, "create or upgrade the store", NULL},
    {"athlete", cmd_athlete, "add, list, show, change or remove athletes", NULL},
    {"squad", cmd_squad, "squads of athletes; on PostgreSQL, which roles see which squad", NULL},
    {"trial", cmd_trial, "time-to-exhaustion trials and time trials", NULL},
    {"ramp", cmd_ramp, "ramp incremental tests: VO2peak, GET, RCP, gain, MRT", NULL},
    {"lactate", cmd_lactate, "blood-lactate step tests: LT1, Dmax, modified Dmax, 4 mmol/L", NULL},
    {"bout", cmd_bout, "constant-power bouts: VO2 kinetics, slow component, domain from the response", NULL},
    {"session", cmd_session, "recorded training and race sessions: cleaning, mean-maximal curves", NULL},
    {"allout", cmd_allout, "3-minute all-out tests: end power and work above it", NULL},
    {"energy", cmd_energy, "the O2, energy and fuel cost of a recorded power session from the athlete's kinetics", NULL},
    {"curve", cmd_curve, "the mean-maximal power (speed) curve over an athlete's sessions", NULL},
    {"fit", cmd_fit, "fit CP and W' (CS and D') with uncertainty; saved for the history", NULL},
    {"domains", cmd_domains, "the four intensity domains, their boundaries and training targets", NULL},
    {"history", cmd_history, "the season: every estimate over time and which changes are meaningful", NULL},
    {"predict", cmd_predict, "time to task failure, power for a duration, W' balance of a session", NULL},
    {"solve", cmd_solve, "the one unknown intensity of a session for a chosen end balance", NULL},
    {"export", cmd_export, "the whole store as one JSON document", NULL},
    {"import", cmd_import, "a document written by export, into a new store", NULL},
    {"server", cmd_server, "PostgreSQL: the lab and coach group roles", NULL},
    {"sheet", cmd_sheet, "the per-athlete domain sheet (HTML, CSV, JSON, text) and the team's index", NULL},
};

static void usage(FILE *out)
{
    fputs("usage: cpdomain [--db FILE|URI] [--json | --csv] [--quiet] [--busy-timeout MS] COMMAND [SUBCOMMAND] [ARGS...]\n\n"
          "Critical power, W' and the intensity domains from an athlete's tests.\n\ncommands:\n",
          out);
    for (size_t i = 0; i < sizeof commands / sizeof commands[0]; i++)
        fprintf(out, "  %-9s %s\n", commands[i].name, commands[i].summary);
    fputs("\noptions:\n"
          "  --db FILE|URI\n"
          "             the store: a SQLite file, or a PostgreSQL server's database as a libpq URI\n"
          "             (postgresql://[user@]host[:port]/database; the password from ~/.pgpass or\n"
          "             $PGPASSWORD); default: $CPDOMAIN_DB, else ./cpdomain.db\n"
          "  --json     machine-readable output: one JSON document on stdout\n"
          "  --csv      the table as CSV for a spreadsheet (fit, curve, history, domains, the lists,\n"
          "             energy, sheet --all --format csv)\n"
          "  --quiet    no informational messages on stderr\n"
          "  --busy-timeout MS\n"
          "             how long to wait for another process that is writing to the store, in\n"
          "             milliseconds (default: $CPDOMAIN_BUSY_TIMEOUT, else 5000); then fail\n"
          "             (on a server: how long a write waits for another writer's lock)\n"
          "  --help     this text; 'cpdomain COMMAND --help' for a command\n"
          "  --version  the version\n\n"
          "example:\n  cpdomain --db lab.db init\n  cpdomain --db lab.db athlete add R07 --name \"Ines Varga\" --mass 64.5\n",
          out);
}

/* --busy-timeout or $CPDOMAIN_BUSY_TIMEOUT: whole milliseconds, 0 to 3 600 000. */
static int busy_timeout(const char *what, const char *arg, int *ms)
{
    char *e = NULL;
    errno = 0;
    long v = strtol(arg, &e, 10);
    if (!*arg || *e || errno || v < 0 || v > 3600000) {
        fprintf(stderr, "cpdomain: %s must be a whole number of milliseconds from 0 to 3600000 (got '%s')\n", what, arg);
        return EX_USAGE;
    }
    *ms = (int)v;
    return 0;
}

/* --csv goes with the commands that print one table: the lists, fit, curve, history, domains and
 * the team table of 'sheet --all --format csv'. Otherwise it is refused before anything runs. */
static int csv_capable(int argc, char **argv)
{
    static const char *const single[] = {"fit", "curve", "history", "domains", "sheet", "energy"};
    static const char *const lists[] = {"athlete", "trial", "ramp", "lactate", "bout", "session", "allout", "squad"};
    for (size_t i = 0; i < sizeof single / sizeof single[0]; i++)
        if (strcmp(argv[0], single[i]) == 0)
            return 1;
    for (size_t i = 0; i < sizeof lists / sizeof lists[0]; i++)
        if (strcmp(argv[0], lists[i]) == 0 && (argc < 2 || strcmp(argv[1], "list") == 0 || argv[1][0] == '-'))
            return 1;
    fprintf(stderr, "cpdomain: --csv: '%s%s%s' prints no table; use --json for machine-readable output\n", argv[0],
            argc > 1 ? " " : "", argc > 1 ? argv[1] : "");
    return 0;
}

/* Today's local date, or $CPDOMAIN_TODAY (YYYY-MM-DD) for reproducible reports and tests. */
static int today(void)
{
    const char *env = getenv("CPDOMAIN_TODAY");
    int d = 0;
    if (env && cpd_parse_date(env, &d) == CPD_OK)
        return d;
    time_t now = time(NULL);
    struct tm tmv;
    localtime_r(&now, &tmv);
    char buf[16];
    strftime(buf, sizeof buf, "%Y-%m-%d", &tmv);
    cpd_parse_date(buf, &d);
    return d;
}

/* Moves the global options given after the command (--json, --csv, --quiet, --db FILE, --db=FILE,
 * --busy-timeout MS) into c and
 * out of argv, up to a "--"; *argc shrinks. Returns 0, or 64 when --db lacks its value. */
static int late_globals(cli_ctx *c, int *argc, char **argv, int from)
{
    int w = from;
    for (int r = from; r < *argc; r++) {
        const char *a = argv[r];
        if (strcmp(a, "--") == 0) {
            while (r < *argc)
                argv[w++] = argv[r++];
            break;
        }
        if (strcmp(a, "--json") == 0)
            c->json = 1;
        else if (strcmp(a, "--csv") == 0)
            c->csv = 1;
        else if (strcmp(a, "--quiet") == 0)
            c->quiet = 1;
        else if (strncmp(a, "--db=", 5) == 0)
            c->db_path = a + 5;
        else if (strncmp(a, "--busy-timeout=", 15) == 0) {
            if (busy_timeout("--busy-timeout", a + 15, &c->busy_ms))
                return EX_USAGE;
        } else if (strcmp(a, "--busy-timeout") == 0) {
            if (r + 1 >= *argc || busy_timeout("--busy-timeout", argv[r + 1], &c->busy_ms)) {
                if (r + 1 >= *argc)
                    fprintf(stderr, "cpdomain: option '--busy-timeout' needs a value\nTry 'cpdomain --help'.\n");
                return EX_USAGE;
            }
            r++;
        }
        else if (strcmp(a, "--db") == 0) {
            if (r + 1 >= *argc) {
                fprintf(stderr, "cpdomain: option '--db' needs a value\nTry 'cpdomain --help'.\n");
                return EX_USAGE;
            }
            c->db_path = argv[++r];
        } else
            argv[w++] = argv[r];
    }
    *argc = w;
    argv[w] = NULL;
    return 0;
}

int main(int argc, char **argv)
{
    gsl_set_error_handler_off(); /* every GSL status is checked where it is returned */
    cli_ctx c = {0};
    c.db_path = getenv("CPDOMAIN_DB");
    if (!c.db_path || !*c.db_path)
        c.db_path = "cpdomain.db";
    c.today = today();
    c.busy_ms = CPD_STORE_BUSY_MS;

    static const struct option opts[] = {
        {"db", required_argument, NULL, 'd'}, {"json", no_argument, NULL, 'j'},    {"quiet", no_argument, NULL, 'q'},
        {"help", no_argument, NULL, 'h'},     {"version", no_argument, NULL, 'V'}, {"csv", no_argument, NULL, 'c'},
        {"busy-timeout", required_argument, NULL, 'b'}, {NULL, 0, NULL, 0},
    };
    const char *env_busy = getenv("CPDOMAIN_BUSY_TIMEOUT");
    if (env_busy && *env_busy && busy_timeout("CPDOMAIN_BUSY_TIMEOUT", env_busy, &c.busy_ms))
        return EX_USAGE;
    opterr = 0;
    int o;
    while ((o = getopt_long(argc, argv, "+", opts, NULL)) != -1) {
        switch (o) {
        case 'd':
            c.db_path = optarg;
            break;
        case 'j':
            c.json = 1;
            break;
        case 'c':
            c.csv = 1;
            break;
        case 'q':
            c.quiet = 1;
            break;
        case 'h':
            usage(stdout);
            return EX_OK;
        case 'b':
            if (busy_timeout("--busy-timeout", optarg, &c.busy_ms))
                return EX_USAGE;
            break;
        case 'V':
            printf("cpdomain %s\n", CPDOMAIN_VERSION);
            return EX_OK;
        default:
            fprintf(stderr, "cpdomain: unknown or incomplete option '%s'\nTry 'cpdomain --help'.\n", argv[optind - 1]);
            return EX_USAGE;
        }
    }
    if (optind >= argc) {
        usage(stderr);
        return EX_USAGE;
    }
    const char *name = argv[optind];
    const cli_command *cmd = NULL;
    for (size_t i = 0; i < sizeof commands / sizeof commands[0]; i++)
        if (strcmp(name, commands[i].name) == 0)
            cmd = &commands[i];
    if (!cmd) {
        const char *names[sizeof commands / sizeof commands[0]];
        for (size_t i = 0; i < sizeof commands / sizeof commands[0]; i++)
            names[i] = commands[i].name;
        const char *near = cpd_suggest(name, names, sizeof commands / sizeof commands[0]);
        if (near)
            fprintf(stderr, "cpdomain: unknown command '%s' (did you mean '%s'?)\nTry 'cpdomain --help'.\n", name, near);
        else
            fprintf(stderr, "cpdomain: unknown command '%s'\nTry 'cpdomain --help'.\n", name);
        return EX_USAGE;
    }
    int rc = late_globals(&c, &argc, argv, optind + 1);
    if (rc)
        return rc;
    if (c.csv && c.json) {
        fputs("cpdomain: --csv and --json: choose one\n", stderr);
        return EX_USAGE;
    }
    if (c.csv && !csv_capable(argc - optind, argv + optind))
        return EX_USAGE;
    rc = cli_run_retrying(&c, cmd, argc - optind, argv + optind);
    if (fclose(stdout) != 0 && rc == 0) {
        perror("cpdomain: writing the output");
        rc = EX_IOERR;
    }
    return rc;
}
