/* store.c: transactions, savepoints and the statement helpers the store's files share (opening
 * and migrations: store_open.c). Every SQL statement of cpdomain lives in store*.c and is prepared
 * with bound parameters. */
#include "store_int.h"
#include "cpdomain/suggest.h"

#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

int cpd_st_err(cpd_store *s, int rc, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(s->err, sizeof s->err, fmt, ap);
    va_end(ap);
    return rc;
}

/* The message of a lock another process kept past the busy timeout. */
static int busy_err(cpd_store *s, const char *what)
{
    return cpd_st_err(s, CPD_ESTORE,
                      "%s: another process holds the store (its write lock was not released within %g s): try "
                      "again when it has finished, or wait longer with --busy-timeout MS",
                      what, s->busy_ms / 1000.0);
}

int cpd_st_fail(cpd_store *s, const char *what)
{
    switch (s->errcode) {
    case CPD_DB_NOMEM:
        return cpd_st_err(s, CPD_ENOMEM, "%s: out of memory", what);
    case CPD_DB_BUSY:
        return busy_err(s, what);
    case CPD_DB_RETRY:
        return cpd_st_err(s, CPD_ETEMP, "%s: %s; nothing of this command was kept: run it again", what,
                          cpd_db_errmsg(s));
    case CPD_DB_PERM:
        return cpd_st_err(s, CPD_ENOPERM,
                          "%s: the server refused: %s (a coach's role reaches only the athletes of its squads; "
                          "the lab role only reads)",
                          what, cpd_db_errmsg(s));
    default:
        return cpd_st_err(s, CPD_ESTORE, "%s: %s", what, cpd_db_errmsg(s));
    }
}

int cpd_st_prepare(cpd_store *s, const char *sql, cpd_stmt **st)
{
    if (cpd_db_prepare(s, sql, st) == CPD_DB_OK)
        return CPD_OK;
    return cpd_st_fail(s, "preparing a statement");
}

void cpd_st_text(cpd_stmt *st, int col, char *dst, size_t n)
{
    const char *t = cpd_db_text(st, col);
    snprintf(dst, n, "%s", t ? (const char *)t : "");
}

int cpd_st_bind_text(cpd_stmt *st, int idx, const char *v, int empty_is_null)
{
    if (!v || (empty_is_null && !*v))
        return cpd_db_bind_null(st, idx);
    return cpd_db_bind_text(st, idx, v, (size_t)-1);
}

/* Samples are IEEE-754 binary64 in little-endian order whatever the host's order. */
static int host_is_le(void)
{
    const unsigned one = 1;
    return *(const char *)&one == 1;
}

void cpd_st_encode_f64(const double *v, size_t n, unsigned char *out)
{
    if (host_is_le()) {
        memcpy(out, v, 8 * n);
        return;
    }
    for (size_t i = 0; i < n; i++) {
        unsigned char b[8];
        memcpy(b, &v[i], 8);
        for (int k = 0; k < 8; k++)
            out[8 * i + (size_t)k] = b[7 - k];
    }
}

void cpd_st_decode_f64(const unsigned char *in, size_t n, double *v)
{
    if (host_is_le()) {
        memcpy(v, in, 8 * n);
        return;
    }
    for (size_t i = 0; i < n; i++) {
        unsigned char b[8];
        for (int k = 0; k < 8; k++)
            b[k] = in[8 * i + 7 - (size_t)k];
        memcpy(&v[i], b, 8);
    }
}

void cpd_st_bind_stamp(cpd_stmt *st, int idx, const char *v)
{
    char now[32];
    if (!v || !*v) {
        time_t t = time(NULL);
        struct tm tm;
        if (gmtime_r(&t, &tm) && strftime(now, sizeof now, "%Y-%m-%dT%H:%M:%SZ", &tm) > 0)
            v = now;
        else
            v = "1970-01-01T00:00:00Z";
    }
    cpd_db_bind_text(st, idx, v, (size_t)-1);
}

void cpd_st_bind_opt(cpd_stmt *st, int idx, int valid, double v)
{
    if (valid)
        cpd_db_bind_double(st, idx, v);
    else
        cpd_db_bind_null(st, idx);
}

double cpd_st_opt(cpd_stmt *st, int col, int *has)
{
    int h = cpd_db_type(st, col) != CPD_DB_NULL;
    if (has)
        *has = h;
    return h ? cpd_db_double(st, col) : 0.0;
}

int cpd_st_collect(cpd_store *s, cpd_stmt *st, size_t elem, void (*read)(cpd_stmt *, void *), void **out,
                   size_t *n, const char *what)
{
    *out = NULL;
    *n = 0;
    size_t cap = 0;
    unsigned char *v = NULL;
    int r, rc = CPD_OK;
    while ((r = cpd_db_step(st)) == CPD_DB_ROW) {
        if (*n == cap) {
            cap = cap ? 2 * cap : 16;
            unsigned char *nv = realloc(v, cap * elem);
            if (!nv) {
                rc = CPD_ENOMEM;
                break;
            }
            v = nv;
        }
        read(st, v + elem * (*n)++);
    }
    if (!rc && r != CPD_DB_DONE) {
        char w[96];
        snprintf(w, sizeof w, "listing %s", what);
        rc = cpd_st_fail(s, w);
    }
    if (rc) {
        free(v);
        *n = 0;
        return rc;
    }
    *out = v;
    return CPD_OK;
}

/* COMMIT; on failure the transaction is rolled back. A connection lost during COMMIT is not
 * retried: the server may have committed before it went, and running the command again could
 * apply it twice, so the user looks instead. */
static int commit_txn(cpd_store *s, const char *what)
{
    s->lost = 0;
    if (cpd_db_exec(s, "COMMIT") == CPD_DB_OK)
        return CPD_OK;
    if (s->lost) {
        s->retryable = 0;
        cpd_db_exec(s, "ROLLBACK");
        return cpd_st_err(s, CPD_ETEMP,
                          "the connection to the server was lost while committing: the command may or may not "
                          "have been applied; look (a list or show command) before running it again");
    }
    int rc = cpd_st_fail(s, what);
    cpd_db_exec(s, "ROLLBACK");
    return rc;
}

/* SQLite starts a transaction at a savepoint outside one; PostgreSQL needs BEGIN first, so there
 * the outermost savepoint is the transaction itself. */
int cpd_st_savepoint(cpd_store *s)
{
    int begins = s->engine == CPD_ENGINE_PG && !cpd_db_in_txn(s);
    if (s->sp_depth >= 31)
        return cpd_st_err(s, CPD_EINTERNAL, "savepoints nested too deep");
    if (cpd_db_exec(s, begins ? "BEGIN ISOLATION LEVEL SERIALIZABLE" : "SAVEPOINT cpd_write") != CPD_DB_OK)
        return cpd_st_fail(s, "starting a write");
    if (begins)
        s->sp_begun |= 1u << s->sp_depth;
    else
        s->sp_begun &= ~(1u << s->sp_depth);
    s->sp_depth++;
    return CPD_OK;
}

int cpd_st_release(cpd_store *s, int rc)
{
    int began = s->sp_depth > 0 && (s->sp_begun >> (s->sp_depth - 1) & 1u);
    if (s->sp_depth > 0)
        s->sp_depth--;
    if (rc != CPD_OK) {
        cpd_db_exec(s, began ? "ROLLBACK" : "ROLLBACK TO cpd_write; RELEASE cpd_write");
        return rc;
    }
    if (began)
        return commit_txn(s, "finishing a write");
    if (cpd_db_exec(s, "RELEASE cpd_write") != CPD_DB_OK)
        return cpd_st_fail(s, "finishing a write");
    return CPD_OK;
}

/* One name of at most 255 bytes per row, as the statement lists them. */
typedef struct {
    char v[256];
} name_row;

static void read_name_row(cpd_stmt *st, void *out)
{
    cpd_st_text(st, 0, ((name_row *)out)->v, sizeof((name_row *)out)->v);
}

int cpd_st_closest(cpd_store *s, const char *sql, const char *name, char *best, size_t n, size_t *count)
{
    best[0] = '\0';
    *count = 0;
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s, sql, &st);
    if (rc)
        return rc;
    name_row *all = NULL;
    rc = cpd_st_collect(s, st, sizeof *all, read_name_row, (void **)&all, count, "names");
    cpd_db_finalize(st);
    if (rc)
        return rc;
    const char **ptr = *count ? malloc(*count * sizeof *ptr) : NULL;
    for (size_t i = 0; ptr && i < *count; i++)
        ptr[i] = all[i].v;
    const char *near = ptr ? cpd_suggest(name, ptr, *count) : NULL;
    if (near)
        snprintf(best, n, "%s", near);
    free(ptr);
    free(all);
    return CPD_OK;
}

int cpd_st_athlete_resolve(cpd_store *s, const char *code, char canon[CPD_CODE_MAX + 1])
{
    cpd_stmt *st = NULL;
    /* the same code in other letter case, when exactly one athlete has it */
    int rc = cpd_st_prepare(s, "SELECT code FROM athlete WHERE lower(code) = lower(?1) ORDER BY code LIMIT 3", &st);
    if (rc)
        return rc;
    cpd_db_bind_text(st, 1, code, (size_t)-1);
    char found[3][CPD_CODE_MAX + 1];
    int n = 0, r;
    while ((r = cpd_db_step(st)) == CPD_DB_ROW && n < 3)
        snprintf(found[n++], sizeof found[0], "%s", cpd_db_text(st, 0));
    cpd_db_finalize(st);
    if (r != CPD_DB_DONE && r != CPD_DB_ROW)
        return cpd_st_fail(s, "looking up an athlete");
    if (n == 1) {
        snprintf(canon, CPD_CODE_MAX + 1, "%s", found[0]);
        return CPD_OK;
    }
    if (n > 1)
        return cpd_st_err(s, CPD_ENOENT, "no athlete with code '%s'; %s and %s differ from it only in letter case: "
                          "give the code exactly", code, found[0], found[1]);
    /* none: the closest code, for "did you mean" */
    char best[CPD_CODE_MAX + 1];
    size_t na = 0;
    if ((rc = cpd_st_closest(s, "SELECT code FROM athlete ORDER BY code", code, best, sizeof best, &na)))
        return rc;
    if (best[0])
        return cpd_st_err(s, CPD_ENOENT, "no athlete with code '%s' (did you mean '%s'?)", code, best);
    return cpd_st_err(s, CPD_ENOENT, "no athlete with code '%s' ('cpdomain athlete list' shows the codes)", code);
}

int cpd_st_athlete_id(cpd_store *s, const char *code, int64_t *id)
{
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "SELECT id FROM athlete WHERE code = ?1", &st);
    if (rc)
        return rc;
    cpd_db_bind_text(st, 1, code, (size_t)-1);
    int r = cpd_db_step(st);
    if (r == CPD_DB_ROW)
        *id = cpd_db_int64(st, 0);
    else if (r != CPD_DB_DONE)
        rc = cpd_st_fail(s, "looking up an athlete");
    cpd_db_finalize(st);
    char canon[CPD_CODE_MAX + 1];
    if (r == CPD_DB_DONE && (rc = cpd_st_athlete_resolve(s, code, canon)) == CPD_OK)
        rc = cpd_st_athlete_id(s, canon, id);
    return rc;
}

const char *cpd_store_errmsg(const cpd_store *s)
{
    return s ? s->err : "";
}

int cpd_store_latest_version(void)
{
    return cpd_store_migration_count;
}


int cpd_store_begin(cpd_store *s)
{
    s->sp_depth = 0;
    if (cpd_db_exec(s, s->engine == CPD_ENGINE_PG ? "BEGIN ISOLATION LEVEL SERIALIZABLE" : "BEGIN IMMEDIATE") !=
        CPD_DB_OK)
        return cpd_st_fail(s, "starting a transaction");
    return CPD_OK;
}

int cpd_store_commit(cpd_store *s)
{
    return commit_txn(s, "committing");
}

void cpd_store_rollback(cpd_store *s)
{
    if (s && cpd_db_in_txn(s))
        cpd_db_exec(s, "ROLLBACK");
}

int cpd_store_engine(const cpd_store *s)
{
    return s->engine;
}

int cpd_store_retryable(const cpd_store *s)
{
    return s && s->retryable;
}
