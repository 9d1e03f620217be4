/* store_int.h: internals shared by the store's source files (not API). Only store_*.c include it. */
#ifndef CPDOMAIN_STORE_INT_H
#define CPDOMAIN_STORE_INT_H

#include "cpdomain/status.h"
#include "cpdomain/store.h"

#include <sqlite3.h>

/* The schema and migrations, embedded at build time by tools/embed.c from db/:
 * entry k brings a store from version k to version k + 1. */
extern const char *const cpd_store_migrations[];
extern const char *const cpd_store_migration_files[];
extern const int cpd_store_migration_count;

struct cpd_store {
    sqlite3 *db;
    struct cpd_codec *codec; /* the sample codec's workspace (store_codec.h), made at first use */
    char err[CPD_MSG_MAX]; /* detail of the last failure */
    int busy_ms;           /* how long a write waits for another process's lock (cpd_store_open_wait) */
};

/* Prepares sql; on failure records the reason and returns CPD_ESTORE. */
int cpd_st_prepare(cpd_store *s, const char *sql, sqlite3_stmt **st);
/* Records "what: sqlite's message" and returns CPD_ESTORE. */
int cpd_st_fail(cpd_store *s, const char *what);
/* Records a formatted message and returns rc. */
int cpd_st_err(cpd_store *s, int rc, const char *fmt, ...);
/* Copies column col of the current row as text into dst of size n ("" for NULL). */
void cpd_st_text(sqlite3_stmt *st, int col, char *dst, size_t n);
/* Binds text, or NULL when v is NULL or empty and empty_is_null is set. */
int cpd_st_bind_text(sqlite3_stmt *st, int idx, const char *v, int empty_is_null);
/* A savepoint around a multi-statement write, so each public write is atomic on its own and
 * nests inside the command's transaction. */
int cpd_st_savepoint(cpd_store *s);
int cpd_st_release(cpd_store *s, int rc);
/* Binds a double, or NULL when valid is 0. */
void cpd_st_bind_opt(sqlite3_stmt *st, int idx, int valid, double v);
/* Reads column col as a double; *has (may be NULL) receives 0 for NULL (the value is then 0). */
double cpd_st_opt(sqlite3_stmt *st, int col, int *has);
/* Steps st to its end, appending one element of elem bytes per row, filled by read(st, element).
 * On success *out (free()) holds *n elements; on failure nothing is kept and the status says
 * why ("listing WHAT"). st stays owned by the caller. */
int cpd_st_collect(cpd_store *s, sqlite3_stmt *st, size_t elem, void (*read)(sqlite3_stmt *, void *), void **out,
                   size_t *n, const char *what);
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
