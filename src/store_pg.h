/* store_pg.h: the PostgreSQL side of the statement layer (store_pg.c), called by store_db.c only.
 * Internal: only store_db.c and store_pg.c include it. */
#ifndef CPDOMAIN_STORE_PG_H
#define CPDOMAIN_STORE_PG_H

#include "store_int.h"

typedef struct cpd_pgstmt cpd_pgstmt;

/* A statement's life on the server: prepared (SQL rewritten), parameters kept, run at the first
 * step, rows read from the result. */
int cpd_pgs_prepare(cpd_store *s, const char *sql, cpd_pgstmt **out);
int cpd_pgs_bind(cpd_pgstmt *p, int idx, unsigned oid, const void *v, size_t n, int binary);
int cpd_pgs_step(cpd_pgstmt *p);
void cpd_pgs_reset(cpd_pgstmt *p);
void cpd_pgs_finalize(cpd_pgstmt *p);
int cpd_pgs_type(cpd_pgstmt *p, int col);
const char *cpd_pgs_text(cpd_pgstmt *p, int col);
const void *cpd_pgs_blob(cpd_pgstmt *p, int col, size_t *n);
size_t cpd_pgs_bytes(cpd_pgstmt *p, int col);
int cpd_pgs_is_bool(cpd_pgstmt *p, int col);

/* PostgreSQL's type identifiers for the parameters cpdomain binds (pg_type.oid). */
enum { CPD_PG_UNKNOWN = 0, CPD_PG_BYTEA = 17, CPD_PG_INT8 = 20, CPD_PG_FLOAT8 = 701 };

#endif
