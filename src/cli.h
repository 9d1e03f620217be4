/* cli.h: what the command files share: the context of one run, error reporting, output helpers.
 * Internal to the CLI; never part of the library. */
#ifndef CPDOMAIN_CLI_H
#define CPDOMAIN_CLI_H

#include "cpdomain/status.h"
#include "cpdomain/store.h"

#include <getopt.h>
#include <stddef.h>
#include <stdio.h>

typedef struct {
    const char *db_path; /* --db, $CPDOMAIN_DB or cpdomain.db */
    int json;            /* --json */
    int csv;             /* --csv: the command's table as CSV (commands that have one) */
    int quiet;           /* --quiet */
    int mute;            /* internal: a fallback lookup is running; its failures are not errors (nests) */
    int today;           /* days since 1970-01-01 (local date, or $CPDOMAIN_TODAY) */
    int busy_ms;         /* --busy-timeout or $CPDOMAIN_BUSY_TIMEOUT, ms (main sets CPD_STORE_BUSY_MS) */
    cpd_store *store;    /* open store, or NULL */
} cli_ctx;

/* One command or subcommand: name, handler, one-line summary, full help with examples. */
typedef struct {
    const char *name;
    int (*run)(cli_ctx *c, int argc, char **argv); /* argv[0] is the command's name; returns an exit code */
    const char *summary;
    const char *help;
} cli_command;

/* The sysexits.h code for a status code. */
int cli_exit_code(int rc);
/* Prints "cpdomain: MESSAGE" to stderr and returns cli_exit_code(rc). */
int cli_fail(cli_ctx *c, int rc, const char *fmt, ...) __attribute__((format(printf, 3, 4)));
/* Prints a usage error with a pointer to --help and returns 64. */
int cli_usage(const char *cmd, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
/* Prints an informational line to stderr unless --quiet. */
void cli_note(cli_ctx *c, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
/* Opens the store (create: init only). On failure prints why and returns the exit code, else 0. */
int cli_open(cli_ctx *c, int create);
/* Rolls back and reports a store failure (or the status rc with the store's message). */
int cli_store_fail(cli_ctx *c, int rc);

/* Runs cmd with argv and closes the store it opened. On a PostgreSQL store a run that failed
 * with a retryable store failure (exit 75: a serialization conflict, deadlock or lost connection)
 * runs again, up to $CPDOMAIN_RETRIES times (default 8) with growing pauses; only the last
 * attempt's output is written (cli_retry.c). */
int cli_run_retrying(cli_ctx *c, const cli_command *cmd, int argc, char **argv);

/* Runs the subcommand of argv[1] from table (n rows); prints the family's help for --help or no
 * subcommand. */
int cli_dispatch(cli_ctx *c, const char *family, const cli_command *table, size_t n, int argc, char **argv);
/* Parses argv with getopt_long (argv[0] the command); handles --help by printing help and
 * setting *done. Returns the getopt result of each option through the callback. Returns 0 or 64. */
typedef int (*cli_opt_fn)(int opt, const char *arg, void *ud); /* returns 0, or an exit code */
int cli_getopt(int argc, char **argv, const char *shortopts, const struct option *longopts, const char *help,
               cli_opt_fn fn, void *ud, int *first_arg, int *done);

/* Typed option values with messages naming the option. Each returns 0 or 64 after printing. */
int cli_number(const char *opt, const char *arg, double *out);
int cli_duration(const char *opt, const char *arg, double *out);
/* A number that may carry the option's own unit: "300", "300W", "300 w"; for unit "m" also "5km"
 * (x 1000). unit NULL: a plain number. */
int cli_quantity(const char *opt, const char *arg, const char *unit, double *out);
int cli_id(const char *opt, const char *arg, long long *out);
/* A number (or a duration when duration is set) that must lie in [lo, hi] unit. */
int cli_ranged(const char *opt, const char *arg, double lo, double hi, const char *unit, int duration, double *out);
/* Writes every output file the user names (sheets, exports, traces, -o FILE.svg plots) through
 * cpd_safe_write: a temporary file in the target folder, then a rename; a symbolic link at the
 * target is refused and a failed write keeps the old file. Returns 0, or 73 after printing why. */
int cli_write_file(cli_ctx *c, const char *path, const char *text, size_t len);
/* -o FILE for a plot: the name must end in .svg (any letter case). Returns 0, or 64 after saying so. */
int cli_plot_path(const char *cmd, const char *path);

/* Units and rounding in text output, one rule per quantity (README "Units and rounding"): an
 * intensity (CP, a boundary, a target, a prediction, a solved '?') to 1 W or 0.01 m/s, with the
 * pace beside a speed; W' in kJ to 0.01 kJ, D' to 1 m; durations as m:ss (h:mm:ss), under a minute
 * as "8 s"; VO2 in L/min to 0.01 on cards and in mL/min to 1 in tables; intervals as "95 % CI a to
 * b". JSON keeps full precision with the unit in the key (power_w, w_prime_j in SPEC's w_prime). */
#define CLI_DEC_INTENSITY(spd) ((spd) ? 2 : 0)

/* A duration for text output: "8 s" under a minute, else m:ss or h:mm:ss (cpd_format_duration). */
const char *cli_duration_text(double s, char *buf, size_t n);

/* Number formatting for tables: "-" for a non-finite value. */
const char *cli_num(char *buf, size_t n, double v, int decimals);

/* ---- human tables ---- */
typedef struct cli_table cli_table;
cli_table *cli_table_new(int ncols, const char *const *headers, const char *align); /* align: 'l'/'r' per column */
void cli_table_row(cli_table *t, const char *const *cells);
void cli_table_print(cli_table *t); /* prints to stdout and frees */

/* ---- CSV tables (--csv): one header row, then data; every cell through cpd_csv_field (quoted
 * as RFC 4180 asks, formula-like text neutralised); rows end in CRLF ---- */
void cli_csv_row(const char *const *cells, int n);
/* A number for a CSV cell: 10 significant digits, "" when not finite. */
const char *cli_csv_num(char *buf, size_t n, double v);

/* ---- JSON documents (cJSON underneath; only cli_out.c sees it) ---- */
typedef struct cli_json cli_json;
cli_json *cj_obj(void);
cli_json *cj_arr(void);
cli_json *cj_add_obj(cli_json *o, const char *key);
cli_json *cj_add_arr(cli_json *o, const char *key);
void cj_str(cli_json *o, const char *key, const char *v); /* NULL v: null */
void cj_num(cli_json *o, const char *key, double v);      /* non-finite v: null */
void cj_int(cli_json *o, const char *key, long long v);
void cj_bool(cli_json *o, const char *key, int v);
void cj_null(cli_json *o, const char *key);
void cj_pair(cli_json *o, const char *key, double lo, double hi); /* [lo, hi] */
void cj_push(cli_json *arr, cli_json *item);
/* Adds item (an object or array the caller built) under key; o takes ownership. */
void cj_set(cli_json *o, const char *key, cli_json *item);
void cj_push_str(cli_json *arr, const char *v);
void cj_push_num(cli_json *arr, double v);
/* Prints the document to stdout followed by a newline, frees it, returns 0 or 74 on failure. */
int cj_print(cli_json *doc);
void cj_free(cli_json *doc);
/* Prints doc[key], an array of objects (or an object of objects: one row each, its name first), as
 * a CSV table (--csv) and frees doc: one column per member (flattened: a [lo, hi] pair as KEY_lo
 * and KEY_hi, a member object's values as KEY_MEMBER), a list of words as "a; b". Keys that carry
 * no unit (cp, w_prime) get it from units, a NULL-ended list {KEY, UNIT, ...} (NULL: none), as
 * "cp (W)" for KEY and every KEY_... column. Returns 0, or 74. */
int cj_print_csv(cli_json *doc, const char *key, const char *const *units);
/* The units of the fit's unit-less keys (SPEC: cp in W, w_prime in J; cs in m/s, d_prime in m). */
extern const char *const CLI_CSV_UNITS_POWER[];
extern const char *const CLI_CSV_UNITS_SPEED[];
/* The document as compact JSON text (the document stays owned by the caller); free it with
 * cj_render_free. NULL when out of memory. */
char *cj_render(const cli_json *doc);
void cj_render_free(char *s);
/* Streaming for long documents (no nodes built): a number or a string written to f exactly as
 * cj_print writes it, so a streamed document reads byte for byte like one built with cj_*.
 * Numbers: non-finite as null, whole numbers in int range as integers, others with 15
 * significant digits when they read back within cJSON's tolerance, else 17. NULL s: null. */
void cj_write_num(FILE *f, double v);
void cj_write_str(FILE *f, const char *s);

#endif
