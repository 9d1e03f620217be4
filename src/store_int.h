/* store_int.h: internals shared by the store's source files (not API). Only store_*.c include it. */
#ifndef CPDOMAIN_STORE_INT_H
#define CPDOMAIN_STORE_INT_H

#include "cpdomain/status.h"
#include "cpdomain/store.h"

#include <stddef.h>
#include <stdint.h>

/* The schema and migrations, embedded at build time by tools/embed.c from db/:
 * entry k brings a store from version k to version k + 1. */
extern const char *const cpd_store_migrations[];
extern const char *const cpd_store_migration_files[];
extern const int cpd_store_migration_count;
/* Entry k: what PostgreSQL runs after migration k (db/pg/NNN_*.sql with the same number), or NULL. */
extern const char *const cpd_store_migrations_pg[];

/* ---- The statement layer: one interface over the two engines (store_db.c: SQLite;
 * store_pg.c: PostgreSQL through libpq). Every SQL statement of cpdomain goes through it, written
 * once with ?N parameters; the PostgreSQL side rewrites ?N as $N. Step results and error codes
 * keep SQLite's values, so both engines answer alike. ---- */
enum {
    CPD_DB_OK = 0,
    CPD_DB_ERROR = 1,
    CPD_DB_BUSY = 5,        /* a lock held past the busy timeout (SQLite) or a lock timeout (PostgreSQL) */
    CPD_DB_NOMEM = 7,       /* out of memory */
    CPD_DB_PERM = 23,       /* the server refused: privilege or row-level security */
    CPD_DB_CONSTRAINT = 19, /* a constraint failed; the extended codes below say which */
    CPD_DB_ROW = 100,
    CPD_DB_DONE = 101,
    CPD_DB_CONSTRAINT_CHECK = 19 | (1 << 8),
    CPD_DB_CONSTRAINT_FOREIGNKEY = 19 | (3 << 8),
    CPD_DB_CONSTRAINT_NOTNULL = 19 | (5 << 8),
    CPD_DB_CONSTRAINT_UNIQUE = 19 | (8 << 8),
    CPD_DB_RETRY = 1000,    /* PostgreSQL: serialization failure, deadlock or a lost connection:
                             * the whole command may be run again (cpd_store_retryable) */
};
/* Column types as cpd_db_type reports them. */
enum { CPD_DB_INTEGER = 1, CPD_DB_FLOAT = 2, CPD_DB_TEXT = 3, CPD_DB_BLOB = 4, CPD_DB_NULL = 5 };

typedef struct cpd_stmt cpd_stmt;

struct cpd_store {
    int engine;                /* CPD_ENGINE_SQLITE or CPD_ENGINE_PG (store.h) */
    void *db;                  /* sqlite3 * or PGconn * */
    struct cpd_codec *codec;   /* the sample codec's workspace (store_codec.h), made at first use */
    char err[CPD_MSG_MAX];     /* detail of the last failure */
    char dberr[CPD_MSG_MAX];   /* the engine's own message for the last failed statement */
    int errcode;               /* its code (CPD_DB_*) */
    int64_t changes;           /* rows changed by the last statement */
    int busy_ms;               /* how long a write waits for another process's lock (cpd_store_open_wait) */
    int retryable;             /* the last failure may pass if the whole command runs again */
    int lost;                  /* PostgreSQL: the connection was lost (the server may have gone away) */
    unsigned sp_begun;         /* PostgreSQL: bit k set when savepoint level k opened the transaction */
    int sp_depth;
    char where[CPD_MSG_MAX];   /* the store as the user names it (a file, or a URI without password) */
};

/* CPD_DB_OK, or an error code with the message in s->dberr (cpd_st_prepare reports it). */
int cpd_db_prepare(cpd_store *s, const char *sql, cpd_stmt **st);
int cpd_db_bind_int64(cpd_stmt *st, int idx, int64_t v);
int cpd_db_bind_double(cpd_stmt *st, int idx, double v);
/* n: bytes, or (size_t)-1 for a NUL-terminated string; the text is copied. */
int cpd_db_bind_text(cpd_stmt *st, int idx, const char *v, size_t n);
/* The bytes are copied; an empty blob (n 0) is bound as an empty value, not NULL. */
int cpd_db_bind_blob(cpd_stmt *st, int idx, const void *v, size_t n);
int cpd_db_bind_null(cpd_stmt *st, int idx);
/* CPD_DB_ROW, CPD_DB_DONE, or an error code (the message in s->dberr). */
int cpd_db_step(cpd_stmt *st);
/* Makes st ready to step again, keeping its bindings. */
void cpd_db_reset(cpd_stmt *st);
void cpd_db_finalize(cpd_stmt *st);
int cpd_db_type(cpd_stmt *st, int col);
int64_t cpd_db_int64(cpd_stmt *st, int col);
int cpd_db_int(cpd_stmt *st, int col);
double cpd_db_double(cpd_stmt *st, int col);
/* NULL for a NULL value; valid until the next step, reset or finalize. */
const char *cpd_db_text(cpd_stmt *st, int col);
const void *cpd_db_blob(cpd_stmt *st, int col);
size_t cpd_db_bytes(cpd_stmt *st, int col);
/* Runs one or more statements without parameters; CPD_DB_OK or an error code. */
int cpd_db_exec(cpd_store *s, const char *sql);
/* The engine's message for the last failure. */
const char *cpd_db_errmsg(const cpd_store *s);
/* Nonzero inside a transaction. */
int cpd_db_in_txn(cpd_store *s);

/* SQLite (store_db.c): opening a file, and closing it (checkpointing a long write-ahead log). */
int cpd_lite_open(cpd_store *s, const char *path, int create, char *msg);
void cpd_lite_close(cpd_store *s);

/* PostgreSQL (store_pg.c): connecting, the dialect, and the statements of store_db.c's other side. */
int cpd_pg_is_uri(const char *path);
int cpd_pg_open(cpd_store *s, const char *uri, char *msg);
void cpd_pg_close(cpd_store *s);
int cpd_pg_prepare(cpd_store *s, const char *sql, cpd_stmt **st);
int cpd_pg_exec(cpd_store *s, const char *sql);
int cpd_pg_in_txn(cpd_store *s);
/* A migration's DDL in PostgreSQL's words: INTEGER -> BIGINT, REAL -> DOUBLE PRECISION,
 * BLOB -> BYTEA, "id INTEGER PRIMARY KEY" -> an identity column. malloc()ed; NULL when out of memory. */
char *cpd_pg_ddl(const char *sql);

/* Prepares sql; on failure records the reason and returns CPD_ESTORE. */
int cpd_st_prepare(cpd_store *s, const char *sql, cpd_stmt **st);
/* Records "what: the engine's message" and returns CPD_ESTORE (CPD_ENOPERM for a refusal,
 * CPD_ETEMP for a failure that may pass when the command runs again). */
int cpd_st_fail(cpd_store *s, const char *what);
/* Records a formatted message and returns rc. */
int cpd_st_err(cpd_store *s, int rc, const char *fmt, ...);
/* Copies column col of the current row as text into dst of size n ("" for NULL). */
void cpd_st_text(cpd_stmt *st, int col, char *dst, size_t n);
/* Binds text, or NULL when v is NULL or empty and empty_is_null is set. */
int cpd_st_bind_text(cpd_stmt *st, int idx, const char *v, int empty_is_null);
/* A savepoint around a multi-statement write, so each public write is atomic on its own and
 * nests inside the command's transaction. */
int cpd_st_savepoint(cpd_store *s);
int cpd_st_release(cpd_store *s, int rc);
/* Binds v, or the current UTC time as ISO 8601 (2026-12-02T17:45:00Z) when v is NULL or empty. */
void cpd_st_bind_stamp(cpd_stmt *st, int idx, const char *v);
/* Binds a double, or NULL when valid is 0. */
void cpd_st_bind_opt(cpd_stmt *st, int idx, int valid, double v);
/* Reads column col as a double; *has (may be NULL) receives 0 for NULL (the value is then 0). */
double cpd_st_opt(cpd_stmt *st, int col, int *has);
/* Steps st to its end, appending one element of elem bytes per row, filled by read(st, element).
 * On success *out (free()) holds *n elements; on failure nothing is kept and the status says
 * why ("listing WHAT"). st stays owned by the caller. */
int cpd_st_collect(cpd_store *s, cpd_stmt *st, size_t elem, void (*read)(cpd_stmt *, void *), void **out,
                   size_t *n, const char *what);
/* The name closest to name (cpd_suggest) among those sql lists (one text column), into best
 * ("" when none is close); *count receives how many there are. */
int cpd_st_closest(cpd_store *s, const char *sql, const char *name, char *best, size_t n, size_t *count);
/* The id of the athlete with this code, or CPD_ENOENT. */
int cpd_st_athlete_id(cpd_store *s, const char *code, int64_t *id);
/* The stored code that matches code in other letter case, when exactly one does, into canon.
 * Otherwise CPD_ENOENT with a message naming the closest code ("did you mean") or the clash. */
int cpd_st_athlete_resolve(cpd_store *s, const char *code, char canon[CPD_CODE_MAX + 1]);

/* Samples as IEEE-754 binary64 in little-endian order whatever the host's order: n values to or
 * from 8n bytes (store_session.c; store_gx.c keeps its own static copy). */
void cpd_st_encode_f64(const double *v, size_t n, unsigned char *out);
void cpd_st_decode_f64(const unsigned char *in, size_t n, double *v);

/* The upgrade that comes with db/007_compact_samples.sql: re-encodes every session channel and
 * curve still in the binary64 layout of 004 (store_codec.h), inside the upgrade's transaction. */
int cpd_st_session_pack(cpd_store *s);
/* The store's codec workspace, made at first use; NULL when out of memory. */
struct cpd_codec *cpd_st_codec(cpd_store *s);

#endif
