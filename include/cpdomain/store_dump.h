/* store_dump.h: the whole store as plain typed values, and back into an empty store. Schema-driven:
 * the tables, their columns and their order come from the store itself (sqlite_master,
 * pragma_table_info, pragma_foreign_key_list), so a new migration needs no change here. */
#ifndef CPDOMAIN_STORE_DUMP_H
#define CPDOMAIN_STORE_DUMP_H

#include "cpdomain/store.h"

#include <stddef.h>
#include <stdint.h>

/* SQLite's five storage classes. */
typedef enum { CPD_VAL_NULL, CPD_VAL_INTEGER, CPD_VAL_REAL, CPD_VAL_TEXT, CPD_VAL_BLOB } cpd_value_type;

/* A column's type affinity, from its declared type by SQLite's rules (sqlite.org/datatype3.html
 * section 3.1). It decides what a value becomes on insert, so it decides what the dump may hold. */
typedef enum { CPD_AFF_BLOB, CPD_AFF_TEXT, CPD_AFF_NUMERIC, CPD_AFF_INTEGER, CPD_AFF_REAL } cpd_affinity;

typedef struct {
    cpd_value_type type;
    int64_t i;        /* CPD_VAL_INTEGER */
    double r;         /* CPD_VAL_REAL */
    unsigned char *p; /* CPD_VAL_TEXT: n bytes and a NUL; CPD_VAL_BLOB: n bytes (NULL when n == 0); owned by the dump */
    size_t n;         /* bytes of p, without the NUL */
} cpd_value;

typedef struct {
    char *name;            /* column name as in the schema */
    char *decl_type;       /* declared type as written ("" when none) */
    cpd_affinity affinity; /* from decl_type */
    int notnull;           /* 1 for a NOT NULL column */
    int pk;                /* 1-based position in the primary key, 0 when not part of it */
} cpd_dump_column;

typedef struct {
    char *name;           /* table name */
    size_t ncols;
    cpd_dump_column *col; /* in the table's column order */
    size_t nrows;
    cpd_value *val;       /* nrows x ncols, row after row */
    size_t cap_rows;      /* rows allocated in val */
} cpd_dump_table;

typedef struct {
    int schema_version;    /* PRAGMA user_version of the store */
    size_t ntables;
    cpd_dump_table *table; /* parents before children (foreign keys), else in creation order */
} cpd_dump;

/* The store's tables and columns without rows: every table of sqlite_master except SQLite's own
 * (sqlite_*), ordered so that a table comes after every table its foreign keys refer to (ties in
 * creation order; a cycle of foreign keys, which has no such order, is broken at its first table
 * in creation order). The caller frees *out with cpd_dump_free. */
int cpd_store_dump_schema(cpd_store *s, cpd_dump **out);
/* The same with every row, read in one transaction (a consistent snapshot). Rows in rowid order
 * (primary-key order for a WITHOUT ROWID table), which is the order they were stored in; the hidden
 * rowid of a table without an INTEGER PRIMARY KEY is not kept (restore renumbers it in the same
 * order). The caller frees *out with cpd_dump_free. */
int cpd_store_dump(cpd_store *s, cpd_dump **out);
/* CPD_OK when no table of the store holds a row; else CPD_EEXIST with the reason in the store's
 * message ("the store is not empty (table 'athlete' has 3 rows): import into a new store, made with
 * init"). */
int cpd_store_check_empty(cpd_store *s);
/* Inserts every row of d into an empty store, parents first, all or nothing (a savepoint: it nests
 * in the caller's transaction). Tables and columns are matched by name; a column absent from d gets
 * its default. Values are bound as typed, every statement with bound parameters. Foreign keys are
 * checked after the last row (so self-references and cycles load too). Returns CPD_OK; CPD_EEXIST
 * for a store that is not empty; CPD_EUSAGE when d's schema_version differs from the store's or d
 * names a table or column the store lacks; CPD_EDATA when a row breaks a constraint (NOT NULL,
 * CHECK, UNIQUE, foreign key), with *bad_table and *bad_row its position in d (*bad_row SIZE_MAX
 * when the row of a WITHOUT ROWID table cannot be told); CPD_ESTORE, CPD_ENOMEM. The detail is
 * in cpd_store_errmsg. */
int cpd_store_restore(cpd_store *s, const cpd_dump *d, size_t *bad_table, size_t *bad_row);

/* ---- building and freeing a dump (no SQL: for the store and for parsers of dump formats) ---- */

/* A new empty dump; NULL when out of memory. cpd_dump_free accepts NULL and frees every string and
 * value the dump holds. */
cpd_dump *cpd_dump_alloc(void);
void cpd_dump_free(cpd_dump *d);
/* Appends a table named name (copied) without columns; *t receives it (valid until the next
 * cpd_dump_add_table). CPD_ENOMEM. */
int cpd_dump_add_table(cpd_dump *d, const char *name, cpd_dump_table **t);
/* Appends a column (name and declared type copied, affinity derived from decl_type). Only before
 * the first row. CPD_EUSAGE after rows, CPD_ENOMEM. */
int cpd_dump_add_column(cpd_dump_table *t, const char *name, const char *decl_type, int notnull, int pk);
/* Appends a row of ncols NULL values; *row receives them (valid until the next row is added).
 * CPD_ENOMEM. */
int cpd_dump_add_row(cpd_dump_table *t, cpd_value **row);
/* Sets v to a copy of n bytes of text or of a blob (freeing what v held). CPD_ENOMEM. */
int cpd_value_set_text(cpd_value *v, const void *p, size_t n);
int cpd_value_set_blob(cpd_value *v, const void *p, size_t n);
/* The affinity of a declared column type by SQLite's rules: INT -> INTEGER; CHAR, CLOB, TEXT ->
 * TEXT; BLOB or no type -> BLOB; REAL, FLOA, DOUB -> REAL; anything else NUMERIC. */
cpd_affinity cpd_dump_affinity(const char *decl_type);
/* The index of the table or column with this name, or -1. */
long cpd_dump_find_table(const cpd_dump *d, const char *name);
long cpd_dump_find_column(const cpd_dump_table *t, const char *name);

#endif
