/* store_db.c: the statement layer over the two engines. SQLite is served here; PostgreSQL by
 * store_pg.c. The store's other files see only cpd_db_* and never an engine's own API. */
#include "store_pg.h"

#include <sqlite3.h>

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

struct cpd_stmt {
    cpd_store *s;
    sqlite3_stmt *lite; /* SQLite */
    cpd_pgstmt *pg;     /* PostgreSQL */
};

/* SQLite's result as the layer's code; a failure records the engine's message and code. */
static int lite_code(cpd_store *s, int r)
{
    if (r == SQLITE_ROW || r == SQLITE_DONE)
        return r;
    if (r == SQLITE_OK)
        return CPD_DB_OK;
    int m;
    switch (r) { /* the extended constraint codes keep their SQLite values */
    case SQLITE_CONSTRAINT_CHECK:
        m = CPD_DB_CONSTRAINT_CHECK;
        break;
    case SQLITE_CONSTRAINT_FOREIGNKEY:
        m = CPD_DB_CONSTRAINT_FOREIGNKEY;
        break;
    case SQLITE_CONSTRAINT_NOTNULL:
        m = CPD_DB_CONSTRAINT_NOTNULL;
        break;
    case SQLITE_CONSTRAINT_UNIQUE:
    case SQLITE_CONSTRAINT_PRIMARYKEY:
        m = CPD_DB_CONSTRAINT_UNIQUE;
        break;
    default:
        m = (r & 0xff) == SQLITE_CONSTRAINT                         ? CPD_DB_CONSTRAINT
            : ((r & 0xff) == SQLITE_BUSY || (r & 0xff) == SQLITE_LOCKED) ? CPD_DB_BUSY
                                                                       : CPD_DB_ERROR;
    }
    s->errcode = m;
    snprintf(s->dberr, sizeof s->dberr, "%s", sqlite3_errmsg(s->db));
    return m;
}

static int no_memory(cpd_store *s)
{
    snprintf(s->dberr, sizeof s->dberr, "out of memory");
    return (s->errcode = CPD_DB_NOMEM);
}

int cpd_db_prepare(cpd_store *s, const char *sql, cpd_stmt **out)
{
    *out = NULL;
    cpd_stmt *st = calloc(1, sizeof *st);
    if (!st)
        return no_memory(s);
    st->s = s;
    if (s->engine == CPD_ENGINE_PG) {
        int r = cpd_pgs_prepare(s, sql, &st->pg);
        if (r != CPD_DB_OK) {
            free(st);
            return r;
        }
    } else if (sqlite3_prepare_v2(s->db, sql, -1, &st->lite, NULL) != SQLITE_OK) {
        lite_code(s, sqlite3_extended_errcode(s->db));
        sqlite3_finalize(st->lite);
        free(st);
        return s->errcode;
    }
    *out = st;
    return CPD_OK;
}

int cpd_db_bind_int64(cpd_stmt *st, int idx, int64_t v)
{
    if (st->pg) {
        char b[32];
        int n = snprintf(b, sizeof b, "%lld", (long long)v);
        return cpd_pgs_bind(st->pg, idx, CPD_PG_INT8, b, (size_t)n, 0);
    }
    return lite_code(st->s, sqlite3_bind_int64(st->lite, idx, v));
}

int cpd_db_bind_double(cpd_stmt *st, int idx, double v)
{
    if (st->pg) {
        char b[40];
        int n = snprintf(b, sizeof b, "%.17g", v); /* 17 significant digits: the same double back */
        return cpd_pgs_bind(st->pg, idx, CPD_PG_FLOAT8, b, (size_t)n, 0);
    }
    return lite_code(st->s, sqlite3_bind_double(st->lite, idx, v));
}

int cpd_db_bind_text(cpd_stmt *st, int idx, const char *v, size_t n)
{
    if (!v)
        return cpd_db_bind_null(st, idx);
    if (n == (size_t)-1)
        n = strlen(v);
    if (st->pg)
        return cpd_pgs_bind(st->pg, idx, CPD_PG_UNKNOWN, v, n, 0);
    return lite_code(st->s, sqlite3_bind_text64(st->lite, idx, v, n, SQLITE_TRANSIENT, SQLITE_UTF8));
}

int cpd_db_bind_blob(cpd_stmt *st, int idx, const void *v, size_t n)
{
    if (st->pg)
        return cpd_pgs_bind(st->pg, idx, CPD_PG_BYTEA, n ? v : "", n, 1);
    /* sqlite3_bind_blob with a NULL pointer would bind NULL, not an empty blob */
    if (n == 0)
        return lite_code(st->s, sqlite3_bind_zeroblob(st->lite, idx, 0));
    return lite_code(st->s, sqlite3_bind_blob64(st->lite, idx, v, n, SQLITE_TRANSIENT));
}

int cpd_db_bind_null(cpd_stmt *st, int idx)
{
    if (st->pg)
        return cpd_pgs_bind(st->pg, idx, CPD_PG_UNKNOWN, NULL, 0, 0);
    return lite_code(st->s, sqlite3_bind_null(st->lite, idx));
}

int cpd_db_step(cpd_stmt *st)
{
    if (st->pg)
        return cpd_pgs_step(st->pg);
    int r = sqlite3_step(st->lite);
    if (r == SQLITE_DONE)
        st->s->changes = sqlite3_changes64(st->s->db);
    return lite_code(st->s, r);
}

void cpd_db_reset(cpd_stmt *st)
{
    if (st->pg)
        cpd_pgs_reset(st->pg);
    else
        sqlite3_reset(st->lite);
}

void cpd_db_finalize(cpd_stmt *st)
{
    if (!st)
        return;
    if (st->pg)
        cpd_pgs_finalize(st->pg);
    else
        sqlite3_finalize(st->lite);
    free(st);
}

int cpd_db_type(cpd_stmt *st, int col)
{
    if (st->pg)
        return cpd_pgs_type(st->pg, col);
    switch (sqlite3_column_type(st->lite, col)) {
    case SQLITE_INTEGER:
        return CPD_DB_INTEGER;
    case SQLITE_FLOAT:
        return CPD_DB_FLOAT;
    case SQLITE_TEXT:
        return CPD_DB_TEXT;
    case SQLITE_BLOB:
        return CPD_DB_BLOB;
    default:
        return CPD_DB_NULL;
    }
}

int64_t cpd_db_int64(cpd_stmt *st, int col)
{
    if (st->pg) {
        const char *t = cpd_pgs_text(st->pg, col);
        if (!t)
            return 0;
        if (cpd_pgs_is_bool(st->pg, col))
            return t[0] == 't';
        return strtoll(t, NULL, 10);
    }
    return sqlite3_column_int64(st->lite, col);
}

int cpd_db_int(cpd_stmt *st, int col)
{
    return (int)cpd_db_int64(st, col);
}

double cpd_db_double(cpd_stmt *st, int col)
{
    if (st->pg) {
        const char *t = cpd_pgs_text(st->pg, col);
        return t ? strtod(t, NULL) : 0.0;
    }
    return sqlite3_column_double(st->lite, col);
}

const char *cpd_db_text(cpd_stmt *st, int col)
{
    if (st->pg)
        return cpd_pgs_text(st->pg, col);
    return (const char *)sqlite3_column_text(st->lite, col);
}

const void *cpd_db_blob(cpd_stmt *st, int col)
{
    if (st->pg) {
        size_t n;
        return cpd_pgs_blob(st->pg, col, &n);
    }
    return sqlite3_column_blob(st->lite, col);
}

size_t cpd_db_bytes(cpd_stmt *st, int col)
{
    if (st->pg)
        return cpd_pgs_bytes(st->pg, col);
    return (size_t)sqlite3_column_bytes(st->lite, col);
}

int cpd_db_exec(cpd_store *s, const char *sql)
{
    if (s->engine == CPD_ENGINE_PG)
        return cpd_pg_exec(s, sql);
    char *e = NULL;
    int r = sqlite3_exec(s->db, sql, NULL, NULL, &e);
    if (r != SQLITE_OK) {
        r = lite_code(s, sqlite3_extended_errcode(s->db));
        if (e)
            snprintf(s->dberr, sizeof s->dberr, "%s", e);
    }
    sqlite3_free(e);
    return r;
}

const char *cpd_db_errmsg(const cpd_store *s)
{
    return s->dberr[0] ? s->dberr : "unknown error";
}

int cpd_db_in_txn(cpd_store *s)
{
    if (s->engine == CPD_ENGINE_PG)
        return cpd_pg_in_txn(s);
    return s->db && !sqlite3_get_autocommit(s->db);
}

/* ---- opening and closing a SQLite file ---- */

int cpd_lite_open(cpd_store *s, const char *path, int create, char *msg)
{
    snprintf(s->where, sizeof s->where, "%s", path);
    int flags = SQLITE_OPEN_READWRITE | (create ? SQLITE_OPEN_CREATE : 0);
    sqlite3 *db = NULL;
    int r = sqlite3_open_v2(path, &db, flags, NULL);
    s->db = db;
    if (r != SQLITE_OK) {
        snprintf(msg, CPD_MSG_MAX, "cannot open the store '%s': %s", path, db ? sqlite3_errmsg(db) : "out of memory");
        return CPD_ESTORE;
    }
    sqlite3_busy_timeout(db, s->busy_ms);
    sqlite3_extended_result_codes(db, 1);
    /* A file that is not SQLite fails here, at the first read. */
    if (cpd_db_exec(s, "PRAGMA foreign_keys = ON; PRAGMA journal_mode = WAL; PRAGMA synchronous = NORMAL") !=
        CPD_DB_OK) {
        /* a lock held too long is the caller's to word (cpd_st_fail), as for any statement */
        if (s->errcode != CPD_DB_BUSY)
            snprintf(msg, CPD_MSG_MAX, "'%s' is not a cpdomain store: %s", path, cpd_db_errmsg(s));
        return CPD_ESTORE;
    }
    /* A command does not checkpoint the WAL when it closes: the write-ahead log is copied into the
     * database once it holds more than WAL_KEEP_BYTES (cpd_lite_close; README, "Durability and
     * storage size"), not rewritten by every small command. */
    sqlite3_db_config(db, SQLITE_DBCONFIG_NO_CKPT_ON_CLOSE, 1, NULL);
    return CPD_OK;
}

/* The write-ahead log a command leaves behind, bytes: the next process reads it whole when it
 * opens the store, so a longer one is copied into the database and emptied at close. */
#define WAL_KEEP_BYTES (1 << 20)

void cpd_lite_close(cpd_store *s)
{
    sqlite3 *db = s->db;
    const char *wal = db ? sqlite3_filename_wal(sqlite3_db_filename(db, "main")) : NULL;
    struct stat sb;
    if (wal && *wal && stat(wal, &sb) == 0 && sb.st_size > WAL_KEEP_BYTES)
        sqlite3_wal_checkpoint_v2(db, NULL, SQLITE_CHECKPOINT_TRUNCATE, NULL, NULL); /* best effort */
    sqlite3_close(db); /* every statement is finalized by its owner before this */
    s->db = NULL;
}
