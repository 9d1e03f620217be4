/* cli_out.c: the CLI's shared plumbing: exit codes, messages, option parsing, tables, JSON.
 * The only CLI file that includes cJSON.h; it turns every non-finite number into null. */
#include "cli.h"
#include "cpdomain/safefile.h"
#include "cpdomain/csvin.h"
#include "cpdomain/suggest.h"
#include "cpdomain/units.h"

#include <cJSON.h>
#include <errno.h>
#include <float.h>
#include <limits.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>
#include <sys/stat.h>
#include <sysexits.h>

int cli_exit_code(int rc)
{
    switch (rc) {
    case CPD_OK:
        return EX_OK;
    case CPD_EUSAGE:
        return EX_USAGE;
    case CPD_EDATA:
    case CPD_ENOENT:
    case CPD_EEXIST:
        return EX_DATAERR;
    case CPD_EIO:
        return EX_NOINPUT;
    case CPD_ENODATA:
    case CPD_ENOCONV:
        return EX_UNAVAILABLE;
    case CPD_ECREATE:
        return EX_CANTCREAT;
    case CPD_ESTORE:
        return EX_IOERR;
    case CPD_ETEMP:
        return EX_TEMPFAIL;
    case CPD_ENOPERM:
        return EX_NOPERM;
    default:
        return EX_SOFTWARE;
    }
}

int cli_fail(cli_ctx *c, int rc, const char *fmt, ...)
{
    if (c && c->mute > 0)
        return cli_exit_code(rc);
    va_list ap;
    va_start(ap, fmt);
    fputs("cpdomain: ", stderr);
    vfprintf(stderr, fmt, ap);
    fputc('\n', stderr);
    va_end(ap);
    return cli_exit_code(rc);
}

/* The family of the subcommand being run ("trial" for 'trial list'), so that messages name the real
 * command. One command runs per process: set once by cli_dispatch. */
static const char *dispatched_family;

int cli_usage(const char *cmd, const char *fmt, ...)
{
    /* a subcommand's own name (argv[0] after dispatch: "list") gets its family: "session list" */
    char full[96];
    if (dispatched_family && !strchr(cmd, ' ') && strcmp(cmd, dispatched_family) != 0)
        snprintf(full, sizeof full, "%s %s", dispatched_family, cmd);
    else
        snprintf(full, sizeof full, "%s", cmd);
    va_list ap;
    va_start(ap, fmt);
    fprintf(stderr, "cpdomain %s: ", full);
    vfprintf(stderr, fmt, ap);
    fprintf(stderr, "\nTry 'cpdomain %s --help'.\n", full);
    va_end(ap);
    return EX_USAGE;
}

void cli_note(cli_ctx *c, const char *fmt, ...)
{
    if (c->quiet)
        return;
    va_list ap;
    va_start(ap, fmt);
    vfprintf(stderr, fmt, ap);
    fputc('\n', stderr);
    va_end(ap);
}

int cli_open(cli_ctx *c, int create)
{
    char msg[CPD_MSG_MAX];
    int rc = cpd_store_open_wait(c->db_path, create, c->busy_ms, &c->store, msg);
    if (rc == CPD_ENOENT) { /* a missing store is a missing input (SPEC: exit 66) */
        cli_fail(c, rc, "%s", msg);
        return EX_NOINPUT;
    }
    if (rc)
        return cli_fail(c, rc, "%s", msg);
    return 0;
}

int cli_store_fail(cli_ctx *c, int rc)
{
    cpd_store_rollback(c->store);
    return cli_fail(c, rc, "%s", cpd_store_errmsg(c->store));
}

int cli_dispatch(cli_ctx *c, const char *family, const cli_command *table, size_t n, int argc, char **argv)
{
    dispatched_family = family;
    if (argc < 2 || strcmp(argv[1], "--help") == 0 || strcmp(argv[1], "-h") == 0) {
        FILE *out = argc < 2 ? stderr : stdout;
        fprintf(out, "usage: cpdomain %s SUBCOMMAND [ARGS...]\n\n", family);
        for (size_t i = 0; i < n; i++)
            fprintf(out, "  %-10s %s\n", table[i].name, table[i].summary);
        fprintf(out, "\n'cpdomain %s SUBCOMMAND --help' shows each one with examples.\n", family);
        return argc < 2 ? EX_USAGE : EX_OK;
    }
    for (size_t i = 0; i < n; i++)
        if (strcmp(argv[1], table[i].name) == 0)
            return table[i].run(c, argc - 1, argv + 1);
    const char *names[32];
    size_t k = 0;
    for (; k < n && k < 32; k++)
        names[k] = table[k].name;
    const char *near = cpd_suggest(argv[1], names, k);
    if (near)
        return cli_usage(family, "unknown subcommand '%s' (did you mean '%s'?)", argv[1], near);
    return cli_usage(family, "unknown subcommand '%s'", argv[1]);
}

int cli_getopt(int argc, char **argv, const char *shortopts, const struct option *longopts, const char *help,
               cli_opt_fn fn, void *ud, int *first_arg, int *done)
{
    *done = 0;
    optind = 0; /* glibc: full re-initialisation for each subcommand */
    opterr = 0;
    int o;
    int idx = 0;
    while ((o = getopt_long(argc, argv, shortopts, longopts, &idx)) != -1) {
        if (o == 'h') {
            fputs(help, stdout);
            *done = 1;
            return 0;
        }
        if (o == '?' || o == ':') {
            const char *bad = argv[optind - 1];
            const char *cmd = argv[0]; /* cli_usage adds the family */
            if (o == ':' || (optopt && strchr(shortopts, optopt)))
                return cli_usage(cmd, "option '%s' needs a value", bad);
            /* "did you mean": the closest long option, compared without its leading dashes and value */
            char word[64];
            snprintf(word, sizeof word, "%s", bad + strspn(bad, "-"));
            word[strcspn(word, "=")] = '\0';
            const char *names[64];
            size_t k = 0;
            for (; longopts && longopts[k].name && k < 64; k++)
                names[k] = longopts[k].name;
            const char *near = bad[0] == '-' && bad[1] == '-' ? cpd_suggest(word, names, k) : NULL;
            if (near)
                return cli_usage(cmd, "unknown option '%s' (did you mean '--%s'?)", bad, near);
            return cli_usage(cmd, "unknown option '%s'", bad);
        }
        int rc = fn(o, optarg, ud);
        if (rc)
            return rc;
    }
    *first_arg = optind;
    return 0;
}

int cli_number(const char *opt, const char *arg, double *out)
{
    if (cpd_parse_number(arg, out) != CPD_OK) {
        fprintf(stderr, "cpdomain: option %s: '%s' is not a number\n", opt, arg);
        return EX_USAGE;
    }
    return 0;
}

/* A trailing unit (any letter case, with or without a space) that names the option's own unit is
 * accepted: "300W", "300 W", "4.6m/s", "5km" for metres. */
int cli_quantity(const char *opt, const char *arg, const char *unit, double *out)
{
    char buf[64];
    snprintf(buf, sizeof buf, "%s", arg);
    size_t L = strlen(buf), u = unit ? strlen(unit) : 0;
    double scale = 1;
    if (u && strcmp(unit, "m") == 0 && L > 2 && strcasecmp(buf + L - 2, "km") == 0) {
        buf[L - 2] = '\0';
        scale = 1000;
    } else if (u && L > u && strcasecmp(buf + L - u, unit) == 0)
        buf[L - u] = '\0';
    L = strlen(buf);
    while (L > 0 && buf[L - 1] == ' ')
        buf[--L] = '\0';
    if (cpd_parse_number(buf, out) != CPD_OK) {
        if (u)
            fprintf(stderr, "cpdomain: option %s: '%s' is not a number of %s\n", opt, arg, unit);
        else
            fprintf(stderr, "cpdomain: option %s: '%s' is not a number\n", opt, arg);
        return EX_USAGE;
    }
    *out *= scale;
    return 0;
}

int cli_duration(const char *opt, const char *arg, double *out)
{
    if (cpd_parse_duration(arg, out) != CPD_OK) {
        fprintf(stderr, "cpdomain: option %s: '%s' is not a duration (use 390, 390s, 6:30, 6min or 1:02:00)\n", opt,
                arg);
        return EX_USAGE;
    }
    return 0;
}

int cli_ranged(const char *opt, const char *arg, double lo, double hi, const char *unit, int duration, double *out)
{
    int rc = duration ? cli_duration(opt, arg, out) : cli_quantity(opt, arg, unit, out);
    if (rc)
        return rc;
    if (!(*out >= lo && *out <= hi)) {
        fprintf(stderr, "cpdomain: option %s must be between %g and %g %s (got %g)\n", opt, lo, hi, unit, *out);
        return EX_USAGE;
    }
    return 0;
}

/* Writes text to path through cpd_safe_write: never through a symbolic link, and a failed write
 * leaves the old file as it was. */
int cli_write_file(cli_ctx *c, const char *path, const char *text, size_t len)
{
    char msg[CPD_MSG_MAX];
    int rc = cpd_safe_write(path, text, len, msg);
    if (rc)
        return cli_fail(c, rc, "%s", rc == CPD_ENOMEM ? cpd_strerror(rc) : msg);
    return 0;
}

int cli_plot_path(const char *cmd, const char *path)
{
    size_t L = strlen(path);
    if (L < 5 || strcasecmp(path + L - 4, ".svg") != 0)
        return cli_usage(cmd, "-o '%s': plots are written as SVG: name the file FILE.svg", path);
    return 0;
}

int cli_id(const char *opt, const char *arg, long long *out)
{
    char *e = NULL;
    errno = 0;
    long long v = strtoll(arg, &e, 10);
    if (!*arg || *e || errno || v <= 0) {
        fprintf(stderr, "cpdomain: %s: '%s' is not an id (a positive whole number)\n", opt, arg);
        return EX_USAGE;
    }
    *out = v;
    return 0;
}

const char *cli_duration_text(double s, char *buf, size_t n)
{
    if (isfinite(s) && s >= 0 && s < 60)
        snprintf(buf, n, "%g s", s);
    else
        cpd_format_duration(s, buf, n);
    return buf;
}

const char *cli_num(char *buf, size_t n, double v, int decimals)
{
    if (!isfinite(v))
        snprintf(buf, n, "-");
    else {
        snprintf(buf, n, "%.*f", decimals, v);
        if (strcmp(buf, "-0") == 0 || (buf[0] == '-' && strspn(buf + 1, "0.") == strlen(buf + 1)))
            memmove(buf, buf + 1, strlen(buf)); /* no "-0.0" */
    }
    return buf;
}

/* ---- tables ---- */
struct cli_table {
    int ncols;
    char align[16];
    char **cells; /* rows x ncols, header first */
    size_t nrows, cap;
};

cli_table *cli_table_new(int ncols, const char *const *headers, const char *align)
{
    cli_table *t = calloc(1, sizeof *t);
    if (!t)
        return NULL;
    t->ncols = ncols < 16 ? ncols : 15;
    snprintf(t->align, sizeof t->align, "%s", align);
    cli_table_row(t, headers);
    return t;
}

void cli_table_row(cli_table *t, const char *const *cells)
{
    if (!t)
        return;
    if (t->nrows == t->cap) {
        size_t nc = t->cap ? 2 * t->cap : 16;
        char **ncells = realloc(t->cells, nc * (size_t)t->ncols * sizeof *ncells);
        if (!ncells)
            return;
        t->cells = ncells;
        t->cap = nc;
    }
    for (int j = 0; j < t->ncols; j++)
        t->cells[t->nrows * (size_t)t->ncols + (size_t)j] = strdup(cells[j] ? cells[j] : "");
    t->nrows++;
}

/* Display width of UTF-8 text: code points, not bytes (names and units like W′ are UTF-8). */
static size_t width(const char *s)
{
    size_t w = 0;
    for (; *s; s++)
        w += ((unsigned char)*s & 0xC0) != 0x80;
    return w;
}

/* Text tables stay within about 100 columns: the widest left-aligned columns (a status with its
 * reason, a note) narrow to no less than TABLE_COL_MIN and wrap at spaces, each cell on as many
 * lines as it needs, the rest of the row blank on those lines. */
#define TABLE_WIDTH 100
#define TABLE_COL_MIN 24

/* The next line of s that fits in `room` display columns: its length in bytes through *len and its
 * width through *cols; returns where the following line starts. A word longer than room is cut. */
static const char *next_line(const char *s, size_t room, size_t *len, size_t *cols)
{
    const char *p = s, *brk = NULL;
    size_t c = 0, cbrk = 0;
    while (*p && c < room) {
        if (*p == ' ') {
            brk = p;
            cbrk = c;
        }
        p++;
        while (((unsigned char)*p & 0xC0) == 0x80)
            p++;
        c++;
    }
    if (*p && *p != ' ' && brk) { /* break at the last space instead of inside a word */
        p = brk;
        c = cbrk;
    }
    *len = (size_t)(p - s);
    *cols = c;
    while (*p == ' ')
        p++;
    return p;
}

void cli_table_print(cli_table *t)
{
    if (!t)
        return;
    size_t w[16] = {0};
    for (size_t r = 0; r < t->nrows; r++)
        for (int j = 0; j < t->ncols; j++) {
            const char *s = t->cells[r * (size_t)t->ncols + (size_t)j];
            size_t L = s ? width(s) : 0;
            if (L > w[j])
                w[j] = L;
        }
    /* narrow the widest left-aligned column, one column at a time, until the table fits */
    for (;;) {
        size_t total = 0;
        int widest = -1;
        for (int j = 0; j < t->ncols; j++) {
            total += w[j] + (j ? 2 : 0);
            if (t->align[j] != 'r' && w[j] > TABLE_COL_MIN && (widest < 0 || w[j] > w[widest]))
                widest = j;
        }
        if (total <= TABLE_WIDTH || widest < 0)
            break;
        size_t over = total - TABLE_WIDTH;
        w[widest] = w[widest] - over >= TABLE_COL_MIN && w[widest] > over ? w[widest] - over : TABLE_COL_MIN;
    }
    for (size_t r = 0; r < t->nrows; r++) {
        const char *rest[16];
        for (int j = 0; j < t->ncols; j++)
            rest[j] = t->cells[r * (size_t)t->ncols + (size_t)j] ? t->cells[r * (size_t)t->ncols + (size_t)j] : "";
        for (int line = 0;; line++) {
            int more = 0;
            for (int j = 0; j < t->ncols; j++)
                more |= *rest[j] != '\0';
            if (line && !more)
                break;
            /* the printed line without trailing blanks: the last non-empty cell ends it */
            int lastj = -1;
            for (int j = 0; j < t->ncols; j++)
                if (*rest[j] || (line == 0 && t->align[j] == 'r'))
                    lastj = j;
            for (int j = 0; j < t->ncols && j <= lastj; j++) {
                size_t len, cols;
                const char *next = next_line(rest[j], w[j], &len, &cols);
                int right = t->align[j] == 'r';
                if (j)
                    fputs("  ", stdout);
                size_t pad = w[j] > cols ? w[j] - cols : 0;
                if (right)
                    printf("%*s", (int)pad, "");
                fwrite(rest[j], 1, len, stdout);
                if (!right && j < lastj)
                    printf("%*s", (int)pad, "");
                rest[j] = next;
            }
            fputc('\n', stdout);
        }
    }
    for (size_t i = 0; i < t->nrows * (size_t)t->ncols; i++)
        free(t->cells[i]);
    free(t->cells);
    free(t);
}

/* ---- CSV ---- */
void cli_csv_row(const char *const *cells, int n)
{
    for (int j = 0; j < n; j++) {
        char *q = cpd_csv_field(cells[j]);
        if (j)
            fputc(',', stdout);
        fputs(q ? q : "", stdout);
        free(q);
    }
    fputs("\r\n", stdout);
}

const char *cli_csv_num(char *buf, size_t n, double v)
{
    if (isfinite(v))
        snprintf(buf, n, "%.10g", v);
    else if (n)
        buf[0] = '\0';
    return buf;
}

/* ---- JSON ---- */
#define J(x) ((cJSON *)(void *)(x))
#define CJ(x) ((cli_json *)(void *)(x))

cli_json *cj_obj(void)
{
    return CJ(cJSON_CreateObject());
}
cli_json *cj_arr(void)
{
    return CJ(cJSON_CreateArray());
}
cli_json *cj_add_obj(cli_json *o, const char *key)
{
    return CJ(cJSON_AddObjectToObject(J(o), key));
}
cli_json *cj_add_arr(cli_json *o, const char *key)
{
    return CJ(cJSON_AddArrayToObject(J(o), key));
}
void cj_str(cli_json *o, const char *key, const char *v)
{
    if (v)
        cJSON_AddStringToObject(J(o), key, v);
    else
        cJSON_AddNullToObject(J(o), key);
}
void cj_num(cli_json *o, const char *key, double v)
{
    if (isfinite(v))
        cJSON_AddNumberToObject(J(o), key, v);
    else
        cJSON_AddNullToObject(J(o), key);
}
void cj_int(cli_json *o, const char *key, long long v)
{
    cJSON_AddNumberToObject(J(o), key, (double)v);
}
void cj_bool(cli_json *o, const char *key, int v)
{
    cJSON_AddBoolToObject(J(o), key, v ? 1 : 0);
}
void cj_null(cli_json *o, const char *key)
{
    cJSON_AddNullToObject(J(o), key);
}
void cj_pair(cli_json *o, const char *key, double lo, double hi)
{
    if (!isfinite(lo) || !isfinite(hi)) {
        cJSON_AddNullToObject(J(o), key);
        return;
    }
    cJSON *a = cJSON_AddArrayToObject(J(o), key);
    cJSON_AddItemToArray(a, cJSON_CreateNumber(lo));
    cJSON_AddItemToArray(a, cJSON_CreateNumber(hi));
}
void cj_push(cli_json *arr, cli_json *item)
{
    cJSON_AddItemToArray(J(arr), J(item));
}
void cj_set(cli_json *o, const char *key, cli_json *item)
{
    cJSON_AddItemToObject(J(o), key, J(item));
}
void cj_push_str(cli_json *arr, const char *v)
{
    cJSON_AddItemToArray(J(arr), v ? cJSON_CreateString(v) : cJSON_CreateNull());
}
void cj_push_num(cli_json *arr, double v)
{
    cJSON_AddItemToArray(J(arr), isfinite(v) ? cJSON_CreateNumber(v) : cJSON_CreateNull());
}
int cj_print(cli_json *doc)
{
    char *s = cJSON_Print(J(doc));
    cJSON_Delete(J(doc));
    if (!s) {
        fputs("cpdomain: out of memory while writing JSON\n", stderr);
        return EX_SOFTWARE;
    }
    int ok = fputs(s, stdout) >= 0 && fputc('\n', stdout) != EOF;
    cJSON_free(s);
    return ok ? 0 : EX_IOERR;
}
/* One cell of a flattened object: numbers with 10 significant digits, true/false, null as "". */
static void csv_value(const cJSON *v, char *buf, size_t n)
{
    buf[0] = '\0';
    if (cJSON_IsNumber(v))
        cli_csv_num(buf, n, v->valuedouble);
    else if (cJSON_IsString(v))
        snprintf(buf, n, "%s", v->valuestring);
    else if (cJSON_IsBool(v))
        snprintf(buf, n, "%s", cJSON_IsTrue(v) ? "true" : "false");
    else if (cJSON_IsArray(v)) { /* a list of words or numbers: "a; b" */
        size_t o = 0;
        for (const cJSON *e = v->child; e && o + 2 < n; e = e->next) {
            char t[256];
            csv_value(e, t, sizeof t);
            o += (size_t)snprintf(buf + o, n - o, "%s%s", o ? "; " : "", t);
        }
    }
}

static int is_pair(const cJSON *v)
{
    if (!cJSON_IsArray(v) || cJSON_GetArraySize(v) != 2)
        return 0;
    const cJSON *a = v->child, *b = v->child->next;
    return (cJSON_IsNumber(a) || cJSON_IsNull(a)) && (cJSON_IsNumber(b) || cJSON_IsNull(b));
}

/* The columns of a CSV table: flattened member names in order of first appearance. */
typedef struct {
    char (*name)[96];
    char (*val)[512];
    unsigned char seen[128]; /* a value other than null was met in the column */
    size_t n, cap;
} csv_cols;

static size_t col_of(csv_cols *t, const char *name, int add)
{
    for (size_t i = 0; i < t->n; i++)
        if (strcmp(t->name[i], name) == 0)
            return i;
    if (!add || t->n == t->cap)
        return (size_t)-1;
    snprintf(t->name[t->n], sizeof t->name[0], "%s", name);
    t->val[t->n][0] = '\0';
    t->seen[t->n] = 0;
    return t->n++;
}

/* Flattens member v named prefix: objects as PREFIX_MEMBER (any depth), a [lo, hi] pair (or an
 * interval's null) as PREFIX_lo and PREFIX_hi, other values as they are; arrays of objects are
 * left to --json. add: collect the names; else fill the values of the known columns. */
static void flatten(csv_cols *t, const char *prefix, const cJSON *v, int add)
{
    char name[96];
    if (cJSON_IsObject(v)) {
        for (const cJSON *m = v->child; m; m = m->next) {
            snprintf(name, sizeof name, "%s%s%s", prefix, *prefix ? "_" : "", m->string);
            flatten(t, name, m, add);
        }
        return;
    }
    if (is_pair(v) || (cJSON_IsNull(v) && strstr(prefix, "ci95"))) {
        for (int e = 0; e < 2; e++) {
            snprintf(name, sizeof name, "%s_%s", prefix, e ? "hi" : "lo");
            size_t k = col_of(t, name, add);
            if (!add && k != (size_t)-1 && is_pair(v))
                csv_value(e ? v->child->next : v->child, t->val[k], sizeof t->val[k]);
        }
        return;
    }
    if (cJSON_IsArray(v) && v->child && cJSON_IsObject(v->child))
        return;
    size_t k = col_of(t, prefix, add);
    if (add && k != (size_t)-1 && !cJSON_IsNull(v))
        t->seen[k] = 1;
    if (!add && k != (size_t)-1)
        csv_value(v, t->val[k], sizeof t->val[k]);
}

const char *const CLI_CSV_UNITS_POWER[] = {"cp", "W", "w_prime", "J", "p_max", "W", "change_cp", "W",
                                           "change_w_prime", "J", NULL};
const char *const CLI_CSV_UNITS_SPEED[] = {"cs", "m/s", "d_prime", "m", "v_max", "m/s", "change_cs", "m/s",
                                           "change_d_prime", "m", NULL};

/* Whether a column name ends in suffix. */
static int ends_with(const char *name, const char *suffix)
{
    size_t L = strlen(name), k = strlen(suffix);
    return L > k && strcmp(name + L - k, suffix) == 0;
}

/* " (W)" for a column whose name is KEY or begins KEY_ in the NULL-ended {KEY, UNIT, ...} list;
 * not for flags (_meaningful, _excludes_zero), percentages (_pct), degrees of freedom (_df) and
 * model names (_model), which carry no unit of the quantity. */
static void unit_of(const char *name, const char *const *units, char *buf, size_t n)
{
    static const char *const unitless[] = {"_meaningful", "_excludes_zero", "_pct", "_df", "_model"};
    snprintf(buf, n, "%s", name);
    if (!units)
        return;
    for (size_t i = 0; i < sizeof unitless / sizeof unitless[0]; i++)
        if (ends_with(name, unitless[i]))
            return;
    for (size_t i = 0; units[i] && units[i + 1]; i += 2) {
        size_t k = strlen(units[i]);
        if (strncmp(name, units[i], k) == 0 && (name[k] == '\0' || name[k] == '_')) {
            snprintf(buf, n, "%s (%s)", name, units[i + 1]);
            return;
        }
    }
}

int cj_print_csv(cli_json *doc, const char *key, const char *const *units)
{
    const cJSON *rows = cJSON_GetObjectItemCaseSensitive(J(doc), key);
    /* an object of objects ("targets": {"moderate": {...}}) gives one row per member, named */
    int named = cJSON_IsObject(rows);
    csv_cols t = {malloc(128 * sizeof *t.name), malloc(128 * sizeof *t.val), {0}, 0, 128};
    if (!t.name || !t.val) {
        free(t.name);
        free(t.val);
        cJSON_Delete(J(doc));
        return EX_SOFTWARE;
    }
    if (named)
        col_of(&t, "name", 1);
    for (const cJSON *o = rows ? rows->child : NULL; o; o = o->next)
        flatten(&t, "", o, 1);
    /* a member that is null in one row and an object in another: keep only the object's columns */
    for (size_t i = 0; i < t.n;) {
        size_t L = strlen(t.name[i]), j = 0;
        while (!t.seen[i] && j < t.n && !(j != i && strncmp(t.name[j], t.name[i], L) == 0 && t.name[j][L] == '_'))
            j++;
        if (!t.seen[i] && j < t.n) {
            memmove(t.name + i, t.name + i + 1, (t.n - i - 1) * sizeof *t.name);
            memmove(t.seen + i, t.seen + i + 1, t.n - i - 1);
            t.n--;
        } else
            i++;
    }
    const char *cells[128];
    char (*head)[112] = malloc(128 * sizeof *head);
    for (size_t j = 0; j < t.n; j++) {
        cells[j] = t.name[j];
        if (head) {
            unit_of(t.name[j], units, head[j], sizeof head[j]);
            if (head[j][0])
                cells[j] = head[j];
        }
    }
    if (t.n)
        cli_csv_row(cells, (int)t.n);
    free(head);
    for (const cJSON *o = rows ? rows->child : NULL; o; o = o->next) {
        for (size_t j = 0; j < t.n; j++)
            t.val[j][0] = '\0';
        if (named)
            snprintf(t.val[0], sizeof t.val[0], "%s", o->string);
        flatten(&t, "", o, 0);
        for (size_t j = 0; j < t.n; j++)
            cells[j] = t.val[j];
        cli_csv_row(cells, (int)t.n);
    }
    free(t.name);
    free(t.val);
    cJSON_Delete(J(doc));
    return ferror(stdout) ? EX_IOERR : 0;
}

void cj_free(cli_json *doc)
{
    cJSON_Delete(J(doc));
}
char *cj_render(const cli_json *doc)
{
    return cJSON_PrintUnformatted((const cJSON *)(const void *)doc);
}
void cj_render_free(char *s)
{
    cJSON_free(s);
}

/* Digits of x (< 10^16) into the end of buf; returns where they start. */
static char *digits(unsigned long long x, char *end)
{
    do
        *--end = (char)('0' + x % 10);
    while (x /= 10);
    return end;
}

void cj_write_num(FILE *f, double v)
{
    if (!isfinite(v)) {
        fputs("null", f);
        return;
    }
    char b[40];
    /* cJSON keeps (int)v clamped to the int range beside each number and prints it when equal */
    int vi = v >= INT_MAX ? INT_MAX : v <= INT_MIN ? INT_MIN : (int)v;
    if (v == (double)vi) {
        char *e = b + sizeof b, *p = digits((unsigned long long)(vi < 0 ? -(long long)vi : vi), e);
        if (vi < 0)
            *--p = '-';
        fwrite(p, 1, (size_t)(e - p), f);
        return;
    }
    /* a value that is the double nearest a decimal of at most 6 places and 15 digits prints as that
     * decimal under %1.15g (the double is far closer to it than half a unit of the 15th digit) */
    double a = fabs(v);
    if (a >= 1e-4 && a < 1e9) {
        double sc = 10;
        for (int k = 1; k <= 6; k++, sc *= 10) {
            double q = nearbyint(a * sc);
            if (q / sc != a)
                continue;
            unsigned long long u = (unsigned long long)q, ip = u / (unsigned long long)sc,
                               fp = u % (unsigned long long)sc;
            int places = k;
            for (; fp % 10 == 0; fp /= 10)
                places--;
            char *e = b + sizeof b, *p = digits(fp, e);
            while (e - p < places)
                *--p = '0';
            *--p = '.';
            p = digits(ip, p);
            if (v < 0)
                *--p = '-';
            fwrite(p, 1, (size_t)(e - p), f);
            return;
        }
    }
    snprintf(b, sizeof b, "%1.15g", v);
    double back = strtod(b, NULL), most = fabs(back) > fabs(v) ? fabs(back) : fabs(v);
    if (!(fabs(back - v) <= most * DBL_EPSILON))
        snprintf(b, sizeof b, "%1.17g", v);
    fputs(b, f);
}

void cj_write_str(FILE *f, const char *s)
{
    if (!s) {
        fputs("null", f);
        return;
    }
    putc('"', f);
    for (const unsigned char *p = (const unsigned char *)s; *p; p++) {
        static const char esc[] = {'\b', 'b', '\f', 'f', '\n', 'n', '\r', 'r', '\t', 't', '"', '"', '\\', '\\'};
        const char *hit = *p < 32 || *p == '"' || *p == '\\' ? memchr(esc, *p, sizeof esc) : NULL;
        if (hit && (hit - esc) % 2 == 0)
            fprintf(f, "\\%c", hit[1]);
        else if (*p < 32)
            fprintf(f, "\\u%04x", *p);
        else
            putc(*p, f);
    }
    putc('"', f);
}
