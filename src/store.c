/* store.c: opening the store, migrations, transactions and shared statement helpers.
 * Every SQL statement of cpdomain lives in store*.c and is prepared with bound parameters. */
#include "store_codec.h"
#include "store_int.h"
#include "cpdomain/suggest.h"

#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

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
    if ((sqlite3_errcode(s->db) & 0xff) == SQLITE_BUSY)
        return busy_err(s, what);
    return cpd_st_err(s, CPD_ESTORE, "%s: %s", what, sqlite3_errmsg(s->db));
}

int cpd_st_prepare(cpd_store *s, const char *sql, sqlite3_stmt **st)
{
    if (sqlite3_prepare_v2(s->db, sql, -1, st, NULL) != SQLITE_OK) {
        *st = NULL;
        return cpd_st_fail(s, "preparing a statement");
    }
    return CPD_OK;
}

void cpd_st_text(sqlite3_stmt *st, int col, char *dst, size_t n)
{
    const unsigned char *t = sqlite3_column_text(st, col);
    snprintf(dst, n, "%s", t ? (const char *)t : "");
}

int cpd_st_bind_text(sqlite3_stmt *st, int idx, const char *v, int empty_is_null)
{
    if (!v || (empty_is_null && !*v))
        return sqlite3_bind_null(st, idx);
    return sqlite3_bind_text(st, idx, v, -1, SQLITE_TRANSIENT);
}

/* Samples are IEEE-754 binary64 in little-endian order whatever the host's order. */
static int host_is_le(void)
{
    const unsigned one = 1;
    return *(const unsigned char *)&one == 1;
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

void cpd_st_bind_opt(sqlite3_stmt *st, int idx, int valid, double v)
{
    if (valid)
        sqlite3_bind_double(st, idx, v);
    else
        sqlite3_bind_null(st, idx);
}

double cpd_st_opt(sqlite3_stmt *st, int col, int *has)
{
    int h = sqlite3_column_type(st, col) != SQLITE_NULL;
    if (has)
        *has = h;
    return h ? sqlite3_column_double(st, col) : 0.0;
}

int cpd_st_collect(cpd_store *s, sqlite3_stmt *st, size_t elem, void (*read)(sqlite3_stmt *, void *), void **out,
                   size_t *n, const char *what)
{
    *out = NULL;
    *n = 0;
    size_t cap = 0;
    unsigned char *v = NULL;
    int r, rc = CPD_OK;
    while ((r = sqlite3_step(st)) == SQLITE_ROW) {
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
    if (!rc && r != SQLITE_DONE)
        rc = cpd_st_err(s, CPD_ESTORE, "listing %s: %s", what, sqlite3_errmsg(s->db));
    if (rc) {
        free(v);
        *n = 0;
        return rc;
    }
    *out = v;
    return CPD_OK;
}

int cpd_st_savepoint(cpd_store *s)
{
    if (sqlite3_exec(s->db, "SAVEPOINT cpd_write", NULL, NULL, NULL) != SQLITE_OK)
        return cpd_st_fail(s, "starting a write");
    return CPD_OK;
}

int cpd_st_release(cpd_store *s, int rc)
{
    if (rc != CPD_OK) {
        sqlite3_exec(s->db, "ROLLBACK TO cpd_write; RELEASE cpd_write", NULL, NULL, NULL);
        return rc;
    }
    if (sqlite3_exec(s->db, "RELEASE cpd_write", NULL, NULL, NULL) != SQLITE_OK)
        return cpd_st_fail(s, "finishing a write");
    return CPD_OK;
}

static void read_code(sqlite3_stmt *st, void *out)
{
    snprintf(out, CPD_CODE_MAX + 1, "%s", (const char *)sqlite3_column_text(st, 0));
}

int cpd_st_athlete_resolve(cpd_store *s, const char *code, char canon[CPD_CODE_MAX + 1])
{
    sqlite3_stmt *st = NULL;
    /* the same code in other letter case, when exactly one athlete has it */
    int rc = cpd_st_prepare(s, "SELECT code FROM athlete WHERE code = ?1 COLLATE NOCASE ORDER BY code LIMIT 3", &st);
    if (rc)
        return rc;
    sqlite3_bind_text(st, 1, code, -1, SQLITE_TRANSIENT);
    char found[3][CPD_CODE_MAX + 1];
    int n = 0, r;
    while ((r = sqlite3_step(st)) == SQLITE_ROW && n < 3)
        snprintf(found[n++], sizeof found[0], "%s", (const char *)sqlite3_column_text(st, 0));
    sqlite3_finalize(st);
    if (r != SQLITE_DONE && r != SQLITE_ROW)
        return cpd_st_fail(s, "looking up an athlete");
    if (n == 1) {
        snprintf(canon, CPD_CODE_MAX + 1, "%s", found[0]);
        return CPD_OK;
    }
    if (n > 1)
        return cpd_st_err(s, CPD_ENOENT, "no athlete with code '%s'; %s and %s differ from it only in letter case: "
                          "give the code exactly", code, found[0], found[1]);
    /* none: the closest code, for "did you mean" */
    char (*all)[CPD_CODE_MAX + 1] = NULL;
    size_t na = 0;
    if ((rc = cpd_st_prepare(s, "SELECT code FROM athlete ORDER BY code", &st)))
        return rc;
    rc = cpd_st_collect(s, st, sizeof *all, read_code, (void **)&all, &na, "athlete codes");
    sqlite3_finalize(st);
    if (rc)
        return rc;
    const char **ptr = na ? malloc(na * sizeof *ptr) : NULL;
    for (size_t i = 0; ptr && i < na; i++)
        ptr[i] = all[i];
    const char *best = ptr ? cpd_suggest(code, ptr, na) : NULL;
    if (best)
        rc = cpd_st_err(s, CPD_ENOENT, "no athlete with code '%s' (did you mean '%s'?)", code, best);
    else
        rc = cpd_st_err(s, CPD_ENOENT, "no athlete with code '%s' ('cpdomain athlete list' shows the codes)", code);
    free(ptr);
    free(all);
    return rc;
}

int cpd_st_athlete_id(cpd_store *s, const char *code, int64_t *id)
{
    sqlite3_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "SELECT id FROM athlete WHERE code = ?1", &st);
    if (rc)
        return rc;
    sqlite3_bind_text(st, 1, code, -1, SQLITE_TRANSIENT);
    int r = sqlite3_step(st);
    if (r == SQLITE_ROW)
        *id = sqlite3_column_int64(st, 0);
    else if (r != SQLITE_DONE)
        rc = cpd_st_fail(s, "looking up an athlete");
    sqlite3_finalize(st);
    char canon[CPD_CODE_MAX + 1];
    if (r == SQLITE_DONE && (rc = cpd_st_athlete_resolve(s, code, canon)) == CPD_OK)
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

int cpd_store_version(const cpd_store *s)
{
    sqlite3_stmt *st = NULL;
    int v = -1;
    if (sqlite3_prepare_v2(s->db, "PRAGMA user_version", -1, &st, NULL) == SQLITE_OK && sqlite3_step(st) == SQLITE_ROW)
        v = sqlite3_column_int(st, 0);
    sqlite3_finalize(st);
    return v;
}

static int migrate(cpd_store *s)
{
    int v = cpd_store_version(s);
    if (v < 0)
        return cpd_st_fail(s, "reading the store version");
    if (v > cpd_store_migration_count)
        return cpd_st_err(s, CPD_ESTORE,
                          "the store is version %d but this cpdomain knows versions up to %d: "
                          "use a newer cpdomain",
                          v, cpd_store_migration_count);
    if (v == cpd_store_migration_count)
        return CPD_OK;
    if (sqlite3_exec(s->db, "BEGIN IMMEDIATE", NULL, NULL, NULL) != SQLITE_OK)
        return cpd_st_fail(s, "starting the upgrade");
    for (int k = v; k < cpd_store_migration_count; k++) {
        char *e = NULL;
        if (sqlite3_exec(s->db, cpd_store_migrations[k], NULL, NULL, &e) != SQLITE_OK) {
            cpd_st_err(s, CPD_ESTORE, "upgrading the store with %s: %s", cpd_store_migration_files[k],
                       e ? e : "unknown error");
            sqlite3_free(e);
            sqlite3_exec(s->db, "ROLLBACK", NULL, NULL, NULL);
            return CPD_ESTORE;
        }
        /* 007 adds the compact encoding; the samples already stored are re-encoded now */
        if (strstr(cpd_store_migration_files[k], "007_") && cpd_st_session_pack(s)) {
            sqlite3_exec(s->db, "ROLLBACK", NULL, NULL, NULL);
            return CPD_ESTORE;
        }
    }
    char sql[64];
    snprintf(sql, sizeof sql, "PRAGMA user_version = %d", cpd_store_migration_count);
    if (sqlite3_exec(s->db, sql, NULL, NULL, NULL) != SQLITE_OK ||
        sqlite3_exec(s->db, "COMMIT", NULL, NULL, NULL) != SQLITE_OK) {
        int rc = cpd_st_fail(s, "finishing the upgrade");
        sqlite3_exec(s->db, "ROLLBACK", NULL, NULL, NULL);
        return rc;
    }
    return CPD_OK;
}

int cpd_store_open(const char *path, int create, cpd_store **out, char *msg)
{
    return cpd_store_open_wait(path, create, CPD_STORE_BUSY_MS, out, msg);
}

int cpd_store_open_wait(const char *path, int create, int busy_ms, cpd_store **out, char *msg)
{
    *out = NULL;
    msg[0] = '\0';
    struct stat sb;
    if (!create && stat(path, &sb) != 0) {
        snprintf(msg, CPD_MSG_MAX, "no store at '%s': create it with 'cpdomain --db %s init'", path, path);
        return CPD_ENOENT;
    }
    cpd_store *s = calloc(1, sizeof *s);
    if (!s)
        return CPD_ENOMEM;
    int flags = SQLITE_OPEN_READWRITE | (create ? SQLITE_OPEN_CREATE : 0);
    int rc = CPD_OK;
    if (sqlite3_open_v2(path, &s->db, flags, NULL) != SQLITE_OK) {
        snprintf(msg, CPD_MSG_MAX, "cannot open the store '%s': %s", path,
                 s->db ? sqlite3_errmsg(s->db) : "out of memory");
        rc = CPD_ESTORE;
        goto done;
    }
    s->busy_ms = busy_ms > 0 ? busy_ms : 0;
    sqlite3_busy_timeout(s->db, s->busy_ms);
    sqlite3_extended_result_codes(s->db, 1);
    /* A file that is not SQLite fails here, at the first read. */
    if (sqlite3_exec(s->db, "PRAGMA foreign_keys = ON; PRAGMA journal_mode = WAL; PRAGMA synchronous = NORMAL",
                     NULL, NULL, NULL) != SQLITE_OK) {
        if ((sqlite3_errcode(s->db) & 0xff) == SQLITE_BUSY)
            snprintf(msg, CPD_MSG_MAX, "%s", (busy_err(s, path), s->err));
        else
            snprintf(msg, CPD_MSG_MAX, "'%s' is not a cpdomain store: %s", path, sqlite3_errmsg(s->db));
        rc = CPD_ESTORE;
        goto done;
    }
    /* A command does not checkpoint the WAL when it closes: the write-ahead log is copied into the
     * database once it holds more than WAL_KEEP_BYTES (cpd_store_close; README, "Durability and
     * storage size"), not rewritten by every small command. */
    sqlite3_db_config(s->db, SQLITE_DBCONFIG_NO_CKPT_ON_CLOSE, 1, NULL);
    rc = migrate(s);
    if (rc)
        snprintf(msg, CPD_MSG_MAX, "%s", s->err);
done:
    if (rc) {
        cpd_store_close(s);
        return rc;
    }
    *out = s;
    return CPD_OK;
}

/* The write-ahead log a command leaves behind, bytes: the next process reads it whole when it
 * opens the store, so a longer one is copied into the database and emptied at close. */
#define WAL_KEEP_BYTES (1 << 20)

void cpd_store_close(cpd_store *s)
{
    if (!s)
        return;
    const char *wal = s->db ? sqlite3_filename_wal(sqlite3_db_filename(s->db, "main")) : NULL;
    struct stat sb;
    if (wal && *wal && stat(wal, &sb) == 0 && sb.st_size > WAL_KEEP_BYTES)
        sqlite3_wal_checkpoint_v2(s->db, NULL, SQLITE_CHECKPOINT_TRUNCATE, NULL, NULL); /* best effort */
    sqlite3_close(s->db); /* every statement is finalized by its owner before this */
    cpd_codec_free(s->codec);
    free(s);
}

int cpd_store_begin(cpd_store *s)
{
    if (sqlite3_exec(s->db, "BEGIN IMMEDIATE", NULL, NULL, NULL) != SQLITE_OK)
        return cpd_st_fail(s, "starting a transaction");
    return CPD_OK;
}

int cpd_store_commit(cpd_store *s)
{
    if (sqlite3_exec(s->db, "COMMIT", NULL, NULL, NULL) != SQLITE_OK) {
        int rc = cpd_st_fail(s, "committing");
        sqlite3_exec(s->db, "ROLLBACK", NULL, NULL, NULL);
        return rc;
    }
    return CPD_OK;
}

void cpd_store_rollback(cpd_store *s)
{
    if (s && !sqlite3_get_autocommit(s->db))
        sqlite3_exec(s->db, "ROLLBACK", NULL, NULL, NULL);
}
