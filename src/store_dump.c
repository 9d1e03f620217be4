/* store_dump.c: the whole store as typed values and back, driven by the schema the store itself
 * reports (SQLite's sqlite_master and pragmas, PostgreSQL's catalogue, read the same way). Table and
 * column names are quoted as identifiers; every value travels through a bound parameter. */
#include "store_int.h"
#include "cpdomain/store_dump.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

/* ---- the dump structure ---- */

cpd_dump *cpd_dump_alloc(void)
{
    return calloc(1, sizeof(cpd_dump));
}

static void value_clear(cpd_value *v)
{
    free(v->p);
    memset(v, 0, sizeof *v);
}

void cpd_dump_free(cpd_dump *d)
{
    if (!d)
        return;
    for (size_t k = 0; k < d->ntables; k++) {
        cpd_dump_table *t = &d->table[k];
        for (size_t i = 0; i < t->nrows * t->ncols; i++)
            free(t->val[i].p);
        for (size_t j = 0; j < t->ncols; j++) {
            free(t->col[j].name);
            free(t->col[j].decl_type);
        }
        free(t->val);
        free(t->col);
        free(t->name);
    }
    free(d->table);
    free(d);
}

int cpd_dump_add_table(cpd_dump *d, const char *name, cpd_dump_table **t)
{
    cpd_dump_table *nt = realloc(d->table, (d->ntables + 1) * sizeof *nt);
    if (!nt)
        return CPD_ENOMEM;
    d->table = nt;
    cpd_dump_table *x = &nt[d->ntables];
    memset(x, 0, sizeof *x);
    if (!(x->name = strdup(name)))
        return CPD_ENOMEM;
    d->ntables++;
    *t = x;
    return CPD_OK;
}

cpd_affinity cpd_dump_affinity(const char *decl)
{
    /* The rules apply in this order, so "CHARINT" is INTEGER and "FLOATING POINT" is INTEGER too. */
    if (!decl || !*decl)
        return CPD_AFF_BLOB;
    char up[128];
    size_t n = strlen(decl) < sizeof up - 1 ? strlen(decl) : sizeof up - 1;
    for (size_t i = 0; i < n; i++)
        up[i] = (char)((decl[i] >= 'a' && decl[i] <= 'z') ? decl[i] - 'a' + 'A' : decl[i]);
    up[n] = '\0';
    if (strstr(up, "INT"))
        return CPD_AFF_INTEGER;
    if (strstr(up, "CHAR") || strstr(up, "CLOB") || strstr(up, "TEXT"))
        return CPD_AFF_TEXT;
    if (strstr(up, "BLOB"))
        return CPD_AFF_BLOB;
    if (strstr(up, "REAL") || strstr(up, "FLOA") || strstr(up, "DOUB"))
        return CPD_AFF_REAL;
    return CPD_AFF_NUMERIC;
}

int cpd_dump_add_column(cpd_dump_table *t, const char *name, const char *decl_type, int notnull, int pk)
{
    if (t->nrows || t->cap_rows)
        return CPD_EUSAGE;
    cpd_dump_column *nc = realloc(t->col, (t->ncols + 1) * sizeof *nc);
    if (!nc)
        return CPD_ENOMEM;
    t->col = nc;
    cpd_dump_column *c = &nc[t->ncols];
    memset(c, 0, sizeof *c);
    c->name = strdup(name);
    c->decl_type = strdup(decl_type ? decl_type : "");
    if (!c->name || !c->decl_type) {
        free(c->name);
        free(c->decl_type);
        return CPD_ENOMEM;
    }
    c->affinity = cpd_dump_affinity(decl_type);
    c->notnull = notnull != 0;
    c->pk = pk;
    t->ncols++;
    return CPD_OK;
}

int cpd_dump_add_row(cpd_dump_table *t, cpd_value **row)
{
    if (t->nrows == t->cap_rows) {
        size_t cap = t->cap_rows ? 2 * t->cap_rows : 16;
        size_t width = t->ncols ? t->ncols : 1;
        if (cap > SIZE_MAX / width / sizeof(cpd_value))
            return CPD_ENOMEM;
        cpd_value *nv = realloc(t->val, cap * width * sizeof *nv);
        if (!nv)
            return CPD_ENOMEM;
        t->val = nv;
        t->cap_rows = cap;
    }
    cpd_value *r = &t->val[t->nrows * t->ncols];
    memset(r, 0, t->ncols * sizeof *r);
    t->nrows++;
    *row = r;
    return CPD_OK;
}

static int set_bytes(cpd_value *v, cpd_value_type type, const void *p, size_t n)
{
    value_clear(v);
    if (type == CPD_VAL_TEXT || n > 0) {
        v->p = malloc(n + 1);
        if (!v->p)
            return CPD_ENOMEM;
        if (n)
            memcpy(v->p, p, n);
        v->p[n] = '\0';
    }
    v->type = type;
    v->n = n;
    return CPD_OK;
}

int cpd_value_set_text(cpd_value *v, const void *p, size_t n)
{
    return set_bytes(v, CPD_VAL_TEXT, p, n);
}

int cpd_value_set_blob(cpd_value *v, const void *p, size_t n)
{
    return set_bytes(v, CPD_VAL_BLOB, p, n);
}

long cpd_dump_find_table(const cpd_dump *d, const char *name)
{
    for (size_t k = 0; k < d->ntables; k++)
        if (strcmp(d->table[k].name, name) == 0)
            return (long)k;
    return -1;
}

long cpd_dump_find_column(const cpd_dump_table *t, const char *name)
{
    for (size_t j = 0; j < t->ncols; j++)
        if (strcmp(t->col[j].name, name) == 0)
            return (long)j;
    return -1;
}

/* ---- SQL text built from schema names ---- */

typedef struct {
    char *p;
    size_t n, cap;
    int oom;
} sbuf;

static void sb_put(sbuf *b, const char *s, size_t n)
{
    if (b->oom)
        return;
    if (b->n + n + 1 > b->cap) {
        size_t cap = b->cap ? b->cap : 256;
        while (cap < b->n + n + 1)
            cap *= 2;
        char *np = realloc(b->p, cap);
        if (!np) {
            b->oom = 1;
            return;
        }
        b->p = np;
        b->cap = cap;
    }
    memcpy(b->p + b->n, s, n);
    b->n += n;
    b->p[b->n] = '\0';
}

static void sb_str(sbuf *b, const char *s)
{
    sb_put(b, s, strlen(s));
}

/* An identifier in double quotes with embedded quotes doubled (sqlite.org/lang_keywords.html). */
static void sb_ident(sbuf *b, const char *name)
{
    sb_put(b, "\"", 1);
    for (const char *q = name; *q; q++) {
        sb_put(b, q, 1);
        if (*q == '"')
            sb_put(b, q, 1);
    }
    sb_put(b, "\"", 1);
}

/* Prepares the statement built in b, and frees b. */
static int sb_prepare(cpd_store *s, sbuf *b, cpd_stmt **st)
{
    *st = NULL;
    int rc = b->oom ? CPD_ENOMEM : cpd_st_prepare(s, b->p, st);
    free(b->p);
    b->p = NULL;
    return rc;
}

/* ---- reading the schema ---- */

typedef struct {
    size_t nparents;
    long *parent; /* indices of the tables its foreign keys refer to */
} deps;

/* PostgreSQL's column types under the names the migrations declare (cpd_pg_ddl's inverse), so a
 * dump describes the same schema on both engines. */
static const char *declared_type(const char *pg)
{
    static const char *const map[][2] = {
        {"bigint", "INTEGER"}, {"integer", "INTEGER"}, {"double precision", "REAL"}, {"text", "TEXT"}, {"bytea", "BLOB"},
    };
    for (size_t k = 0; k < sizeof map / sizeof map[0]; k++)
        if (strcmp(pg, map[k][0]) == 0)
            return map[k][1];
    return pg;
}

static int read_columns(cpd_store *s, cpd_dump_table *t)
{
    cpd_stmt *st = NULL;
    int pg = s->engine == CPD_ENGINE_PG;
    int rc = cpd_st_prepare(
        s,
        pg ? "SELECT a.attname, format_type(a.atttypid, a.atttypmod), a.attnotnull::int, "
             "COALESCE((SELECT k.n FROM pg_index i, unnest(i.indkey::int2[]) WITH ORDINALITY AS k(att, n) "
             "WHERE i.indrelid = a.attrelid AND i.indisprimary AND k.att = a.attnum), 0) "
             "FROM pg_attribute a WHERE a.attrelid = to_regclass(quote_ident(?1)) AND a.attnum > 0 AND NOT "
             "a.attisdropped ORDER BY a.attnum"
           : "SELECT name, type, \"notnull\", pk FROM pragma_table_info(?1) ORDER BY cid",
        &st);
    if (rc)
        return rc;
    cpd_db_bind_text(st, 1, t->name, (size_t)-1);
    int r;
    while (rc == CPD_OK && (r = cpd_db_step(st)) == CPD_DB_ROW) {
        const char *name = cpd_db_text(st, 0);
        const char *type = cpd_db_text(st, 1);
        if (pg && type)
            type = declared_type(type);
        rc = cpd_dump_add_column(t, name ? name : "", type ? type : "", cpd_db_int(st, 2), cpd_db_int(st, 3));
    }
    if (rc == CPD_OK && r != CPD_DB_DONE)
        rc = cpd_st_fail(s, "reading the columns of a table");
    cpd_db_finalize(st);
    if (rc == CPD_OK && t->ncols == 0)
        rc = cpd_st_err(s, CPD_EINTERNAL, "table '%s' has no columns", t->name);
    return rc;
}

static int read_parents(cpd_store *s, const cpd_dump *d, size_t k, deps *dp)
{
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s,
                            s->engine == CPD_ENGINE_PG
                                ? "SELECT DISTINCT confrelid::regclass::text FROM pg_constraint WHERE conrelid = "
                                  "to_regclass(quote_ident(?1)) AND contype = 'f'"
                                : "SELECT DISTINCT \"table\" FROM pragma_foreign_key_list(?1)",
                            &st);
    if (rc)
        return rc;
    cpd_db_bind_text(st, 1, d->table[k].name, (size_t)-1);
    int r;
    while ((r = cpd_db_step(st)) == CPD_DB_ROW) {
        const char *parent = cpd_db_text(st, 0);
        long p = -1;
        /* The parent's name in a foreign key is case-insensitive, as SQLite resolves it. */
        for (size_t j = 0; parent && j < d->ntables; j++)
            if (strcasecmp(d->table[j].name, parent) == 0)
                p = (long)j;
        if (p < 0 || (size_t)p == k) /* a missing parent fails on insert; a self-reference orders nothing */
            continue;
        long *np = realloc(dp->parent, (dp->nparents + 1) * sizeof *np);
        if (!np) {
            rc = CPD_ENOMEM;
            break;
        }
        dp->parent = np;
        dp->parent[dp->nparents++] = p;
    }
    if (rc == CPD_OK && r != CPD_DB_DONE)
        rc = cpd_st_fail(s, "reading the foreign keys of a table");
    cpd_db_finalize(st);
    return rc;
}

/* Kahn's topological sort: repeatedly take the first table (in creation order) whose parents are
 * all placed, so the order is deterministic and parents come first. Tables in a cycle of foreign
 * keys have no such order: the first of them in creation order breaks it (restore defers the
 * foreign-key checks to its end, so any order loads). */
static int order_tables(cpd_dump *d, deps *dp)
{
    size_t n = d->ntables;
    int rc = CPD_OK;
    size_t *order = malloc((n ? n : 1) * sizeof *order);
    char *placed = calloc(n ? n : 1, 1);
    cpd_dump_table *sorted = malloc((n ? n : 1) * sizeof *sorted);
    if (!order || !placed || !sorted) {
        rc = CPD_ENOMEM;
        goto done;
    }
    for (size_t got = 0; got < n; got++) {
        size_t pick = n;
        for (size_t k = 0; k < n && pick == n; k++) {
            if (placed[k])
                continue;
            int ready = 1;
            for (size_t q = 0; q < dp[k].nparents; q++)
                ready &= placed[dp[k].parent[q]];
            if (ready)
                pick = k;
        }
        for (size_t k = 0; k < n && pick == n; k++)
            if (!placed[k])
                pick = k;
        placed[pick] = 1;
        order[got] = pick;
    }
    for (size_t i = 0; i < n; i++)
        sorted[i] = d->table[order[i]];
    memcpy(d->table, sorted, n * sizeof *sorted);
done:
    free(order);
    free(placed);
    free(sorted);
    return rc;
}

int cpd_store_dump_schema(cpd_store *s, cpd_dump **out)
{
    *out = NULL;
    deps *dp = NULL;
    cpd_stmt *st = NULL;
    cpd_dump *d = cpd_dump_alloc();
    int rc = d ? CPD_OK : CPD_ENOMEM;
    if (rc)
        goto done;
    d->schema_version = cpd_store_version(s);
    if (d->schema_version < 0) {
        rc = cpd_st_fail(s, "reading the store version");
        goto done;
    }
    /* the tables in the order they were made, without the engine's own (and PostgreSQL's cpd_
     * tables: the schema version and the squads' access grants belong to the server, not the data) */
    rc = cpd_st_prepare(s,
                        s->engine == CPD_ENGINE_PG
                            ? "SELECT c.relname FROM pg_class c JOIN pg_namespace n ON n.oid = c.relnamespace "
                              "WHERE n.nspname = current_schema() AND c.relkind = 'r' AND c.relname NOT LIKE "
                              "'cpd\\_%' ESCAPE '\\' ORDER BY c.oid"
                            : "SELECT name FROM sqlite_master WHERE type = 'table' AND name NOT LIKE 'sqlite\\_%' "
                              "ESCAPE '\\' ORDER BY rowid",
                        &st);
    if (rc)
        goto done;
    int r;
    while (rc == CPD_OK && (r = cpd_db_step(st)) == CPD_DB_ROW) {
        cpd_dump_table *t = NULL;
        const char *name = cpd_db_text(st, 0);
        rc = cpd_dump_add_table(d, name ? name : "", &t);
    }
    if (rc == CPD_OK && r != CPD_DB_DONE)
        rc = cpd_st_fail(s, "listing the tables of the store");
    cpd_db_finalize(st);
    st = NULL;
    if (rc)
        goto done;
    dp = calloc(d->ntables ? d->ntables : 1, sizeof *dp);
    if (!dp) {
        rc = CPD_ENOMEM;
        goto done;
    }
    for (size_t k = 0; k < d->ntables && rc == CPD_OK; k++) {
        rc = read_columns(s, &d->table[k]);
        if (rc == CPD_OK)
            rc = read_parents(s, d, k, &dp[k]);
    }
    if (rc == CPD_OK)
        rc = order_tables(d, dp);
done:
    for (size_t k = 0; dp && k < d->ntables; k++)
        free(dp[k].parent);
    free(dp);
    if (rc)
        cpd_dump_free(d);
    else
        *out = d;
    return rc;
}

/* ---- rows out ---- */

/* "SELECT "a", "b" FROM "t" ORDER BY <primary key>" (every column, for a table without one): an
 * order both engines keep, whatever order the rows went in. */
static char *select_sql(const cpd_dump_table *t)
{
    sbuf b = {0};
    sb_str(&b, "SELECT ");
    for (size_t j = 0; j < t->ncols; j++) {
        if (j)
            sb_str(&b, ", ");
        sb_ident(&b, t->col[j].name);
    }
    sb_str(&b, " FROM ");
    sb_ident(&b, t->name);
    sb_str(&b, " ORDER BY ");
    int first = 1;
    for (int k = 1; k <= (int)t->ncols; k++)
        for (size_t j = 0; j < t->ncols; j++)
            if (t->col[j].pk == k) {
                if (!first)
                    sb_str(&b, ", ");
                sb_ident(&b, t->col[j].name);
                first = 0;
            }
    for (size_t j = 0; first && j < t->ncols; j++) {
        if (j)
            sb_str(&b, ", ");
        sb_ident(&b, t->col[j].name);
    }
    if (b.oom) {
        free(b.p);
        return NULL;
    }
    return b.p;
}

static int read_value(cpd_stmt *st, int j, cpd_value *v)
{
    switch (cpd_db_type(st, j)) {
    case CPD_DB_INTEGER:
        v->type = CPD_VAL_INTEGER;
        v->i = cpd_db_int64(st, j);
        return CPD_OK;
    case CPD_DB_FLOAT:
        v->type = CPD_VAL_REAL;
        v->r = cpd_db_double(st, j);
        return CPD_OK;
    case CPD_DB_TEXT: {
        const char *p = cpd_db_text(st, j);
        size_t n = cpd_db_bytes(st, j);
        return p ? cpd_value_set_text(v, p, n) : CPD_ENOMEM;
    }
    case CPD_DB_BLOB: {
        const void *p = cpd_db_blob(st, j);
        size_t n = (size_t)cpd_db_bytes(st, j);
        if (!p && n)
            return CPD_ENOMEM;
        return cpd_value_set_blob(v, p, n);
    }
    default:
        v->type = CPD_VAL_NULL;
        return CPD_OK;
    }
}

static int read_rows(cpd_store *s, cpd_dump_table *t)
{
    cpd_stmt *st = NULL;
    char *sql = select_sql(t);
    if (!sql)
        return CPD_ENOMEM;
    int prc = cpd_st_prepare(s, sql, &st);
    free(sql);
    if (prc)
        return prc;
    int rc = CPD_OK, r;
    while (rc == CPD_OK && (r = cpd_db_step(st)) == CPD_DB_ROW) {
        cpd_value *row = NULL;
        rc = cpd_dump_add_row(t, &row);
        for (size_t j = 0; rc == CPD_OK && j < t->ncols; j++)
            rc = read_value(st, (int)j, &row[j]);
    }
    if (rc == CPD_OK && r != CPD_DB_DONE)
        rc = cpd_st_fail(s, "reading the rows of a table");
    cpd_db_finalize(st);
    return rc;
}

int cpd_store_dump(cpd_store *s, cpd_dump **out)
{
    *out = NULL;
    cpd_dump *d = NULL;
    int rc = cpd_st_savepoint(s); /* one read transaction: every table from the same snapshot */
    if (rc)
        return rc;
    rc = cpd_store_dump_schema(s, &d);
    for (size_t k = 0; rc == CPD_OK && k < d->ntables; k++)
        rc = read_rows(s, &d->table[k]);
    rc = cpd_st_release(s, rc);
    if (rc)
        cpd_dump_free(d);
    else
        *out = d;
    return rc;
}

/* ---- rows in ---- */

static int count_rows(cpd_store *s, const char *table, int64_t *n)
{
    sbuf b = {0};
    sb_str(&b, "SELECT count(*) FROM ");
    sb_ident(&b, table);
    cpd_stmt *st = NULL;
    int rc = sb_prepare(s, &b, &st);
    if (rc)
        return rc;
    if (cpd_db_step(st) == CPD_DB_ROW)
        *n = cpd_db_int64(st, 0);
    else
        rc = cpd_st_fail(s, "counting the rows of a table");
    cpd_db_finalize(st);
    return rc;
}

int cpd_store_check_empty(cpd_store *s)
{
    cpd_dump *d = NULL;
    int rc = cpd_store_dump_schema(s, &d);
    for (size_t k = 0; rc == CPD_OK && k < d->ntables; k++) {
        int64_t n = 0;
        rc = count_rows(s, d->table[k].name, &n);
        if (rc == CPD_OK && n > 0)
            rc = cpd_st_err(s, CPD_EEXIST,
                            "the store is not empty (table '%s' has %lld row%s): import into a new store, made with "
                            "init",
                            d->table[k].name, (long long)n, n == 1 ? "" : "s");
    }
    cpd_dump_free(d);
    return rc;
}

static int bind_value(cpd_stmt *st, int idx, const cpd_value *v)
{
    switch (v->type) {
    case CPD_VAL_INTEGER:
        return cpd_db_bind_int64(st, idx, v->i);
    case CPD_VAL_REAL:
        return cpd_db_bind_double(st, idx, v->r);
    case CPD_VAL_TEXT:
        return cpd_db_bind_text(st, idx, v->p ? (const char *)v->p : "", v->n);
    case CPD_VAL_BLOB:
        return cpd_db_bind_blob(st, idx, v->p, v->n);
    default:
        return cpd_db_bind_null(st, idx);
    }
}

/* "INSERT INTO "t" ("a", "b") VALUES (?1, ?2)" with the columns of src; on SQLite with
 * "RETURNING rowid", to locate a foreign-key violation found at the end. */
static char *insert_sql(const cpd_dump_table *src, int rowid)
{
    sbuf b = {0};
    sb_str(&b, "INSERT INTO ");
    sb_ident(&b, src->name);
    sb_str(&b, " (");
    for (size_t j = 0; j < src->ncols; j++) {
        if (j)
            sb_str(&b, ", ");
        sb_ident(&b, src->col[j].name);
    }
    sb_str(&b, ") VALUES (");
    for (size_t j = 0; j < src->ncols; j++) {
        char q[24];
        snprintf(q, sizeof q, "%s?%zu", j ? ", " : "", j + 1);
        sb_str(&b, q);
    }
    sb_str(&b, rowid ? ") RETURNING rowid" : ")");
    if (b.oom) {
        free(b.p);
        return NULL;
    }
    return b.p;
}

/* The store's column names must include every column of src. */
static int check_columns(cpd_store *s, const cpd_dump_table *have, const cpd_dump_table *src)
{
    for (size_t j = 0; j < src->ncols; j++) {
        if (cpd_dump_find_column(have, src->col[j].name) < 0)
            return cpd_st_err(s, CPD_EUSAGE, "table '%s' of the store has no column '%s'", src->name,
                              src->col[j].name);
        for (size_t q = 0; q < j; q++)
            if (strcmp(src->col[q].name, src->col[j].name) == 0)
                return cpd_st_err(s, CPD_EUSAGE, "column '%s' of table '%s' is given twice", src->col[j].name,
                                  src->name);
    }
    return CPD_OK;
}

/* Inserts the rows of src; rowid[i] receives the rowid of row i (for locating a foreign-key
 * violation later). */
static int insert_rows(cpd_store *s, const cpd_dump_table *src, int64_t *rowid, size_t *bad_row)
{
    int lite = s->engine != CPD_ENGINE_PG;
    char *sql = insert_sql(src, lite);
    if (!sql)
        return CPD_ENOMEM;
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s, sql, &st);
    free(sql);
    if (rc && lite) { /* a WITHOUT ROWID table has no rowid to return */
        lite = 0;
        if (!(sql = insert_sql(src, 0)))
            return CPD_ENOMEM;
        rc = cpd_st_prepare(s, sql, &st);
        free(sql);
    }
    for (size_t i = 0; rc == CPD_OK && i < src->nrows; i++) {
        const cpd_value *row = &src->val[i * src->ncols];
        cpd_db_reset(st);
        for (size_t j = 0; rc == CPD_OK && j < src->ncols; j++)
            if (bind_value(st, (int)j + 1, &row[j]) != CPD_DB_OK)
                rc = cpd_st_fail(s, "binding a value");
        if (rc)
            break;
        int r = cpd_db_step(st);
        if (r != (lite ? CPD_DB_ROW : CPD_DB_DONE)) {
            *bad_row = i;
            rc = (r & 0xff) == CPD_DB_CONSTRAINT ? cpd_st_err(s, CPD_EDATA, "%s", cpd_db_errmsg(s))
                                                 : cpd_st_fail(s, "inserting a row");
        }
        rowid[i] = lite && r == CPD_DB_ROW ? cpd_db_int64(st, 0) : -1;
    }
    cpd_db_finalize(st);
    return rc;
}

/* The first row of table h that breaks a foreign key (SQLite's foreign_key_check), located by its
 * rowid among the rows just inserted; *bad_row stays SIZE_MAX for a WITHOUT ROWID table. */
static int check_foreign_keys(cpd_store *s, const char *table, const int64_t *rowid, size_t nrows, size_t *bad_row)
{
    if (s->engine == CPD_ENGINE_PG) /* PostgreSQL checked each row as it went in */
        return CPD_OK;
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "SELECT rowid, parent FROM pragma_foreign_key_check(?1)", &st);
    if (rc)
        return rc;
    cpd_db_bind_text(st, 1, table, (size_t)-1);
    int r = cpd_db_step(st);
    if (r == CPD_DB_ROW) {
        int has_rowid = cpd_db_type(st, 0) != CPD_DB_NULL;
        int64_t id = cpd_db_int64(st, 0);
        for (size_t i = 0; has_rowid && i < nrows && *bad_row == SIZE_MAX; i++)
            if (rowid[i] == id)
                *bad_row = i;
        const char *parent = cpd_db_text(st, 1);
        rc = cpd_st_err(s, CPD_EDATA, "FOREIGN KEY constraint failed: no row of '%s' that it refers to",
                        parent ? (const char *)parent : "?");
    } else if (r != CPD_DB_DONE)
        rc = cpd_st_fail(s, "checking foreign keys");
    cpd_db_finalize(st);
    return rc;
}

/* PostgreSQL: rows that came in with their ids leave an identity column's sequence behind; it
 * continues after the highest id, as SQLite's next rowid does. */
static int advance_identity(cpd_store *s, const cpd_dump_table *t)
{
    for (size_t j = 0; j < t->ncols; j++) {
        if (t->col[j].pk != 1 || strcmp(t->col[j].decl_type, "INTEGER") != 0)
            continue;
        sbuf b = {0};
        sb_str(&b, "SELECT setval(pg_get_serial_sequence(quote_ident(?1), ?2), COALESCE(max(");
        sb_ident(&b, t->col[j].name);
        sb_str(&b, "), 1), max(");
        sb_ident(&b, t->col[j].name);
        sb_str(&b, ") IS NOT NULL) FROM ");
        sb_ident(&b, t->name);
        sb_str(&b, " WHERE pg_get_serial_sequence(quote_ident(?1), ?2) IS NOT NULL");
        cpd_stmt *st = NULL;
        int rc = sb_prepare(s, &b, &st);
        if (rc)
            return rc;
        cpd_db_bind_text(st, 1, t->name, (size_t)-1);
        cpd_db_bind_text(st, 2, t->col[j].name, (size_t)-1);
        int r;
        while ((r = cpd_db_step(st)) == CPD_DB_ROW)
            ;
        cpd_db_finalize(st);
        if (r != CPD_DB_DONE)
            return cpd_st_fail(s, "continuing the numbering of restored rows");
    }
    return CPD_OK;
}

int cpd_store_restore(cpd_store *s, const cpd_dump *d, size_t *bad_table, size_t *bad_row)
{
    *bad_table = SIZE_MAX;
    *bad_row = SIZE_MAX;
    cpd_dump *have = NULL;
    int64_t **rowids = NULL; /* per table of d, the rowid of each inserted row */
    int deferred = 0;
    int rc = cpd_st_savepoint(s);
    if (rc)
        return rc;
    if ((rc = cpd_store_dump_schema(s, &have)))
        goto done;
    if (d->schema_version != have->schema_version) {
        rc = cpd_st_err(s, CPD_EUSAGE, "the rows are of schema version %d but the store is version %d",
                        d->schema_version, have->schema_version);
        goto done;
    }
    for (size_t k = 0; k < d->ntables; k++) {
        long h = cpd_dump_find_table(have, d->table[k].name);
        if (h < 0) {
            rc = cpd_st_err(s, CPD_EUSAGE, "the store has no table '%s'", d->table[k].name);
            goto done;
        }
        for (size_t q = 0; q < k; q++)
            if (strcmp(d->table[q].name, d->table[k].name) == 0) {
                rc = cpd_st_err(s, CPD_EUSAGE, "table '%s' is given twice", d->table[k].name);
                goto done;
            }
        if ((rc = check_columns(s, &have->table[h], &d->table[k])))
            goto done;
    }
    if ((rc = cpd_store_check_empty(s)))
        goto done;
    rowids = calloc(d->ntables ? d->ntables : 1, sizeof *rowids);
    if (!rowids) {
        rc = CPD_ENOMEM;
        goto done;
    }
    /* Parents first, yet a self-reference or a cycle can still point forward: foreign keys are
     * checked once everything is in (defer_foreign_keys, reset when the transaction ends), table by
     * table, so that a failure still names its row. */
    if (s->engine != CPD_ENGINE_PG && cpd_db_exec(s, "PRAGMA defer_foreign_keys = ON") != CPD_DB_OK) {
        rc = cpd_st_fail(s, "deferring foreign keys");
        goto done;
    }
    deferred = 1;
    for (size_t h = 0; h < have->ntables && rc == CPD_OK; h++) {
        long k = cpd_dump_find_table(d, have->table[h].name);
        if (k < 0)
            continue;
        if (!(rowids[k] = malloc((d->table[k].nrows ? d->table[k].nrows : 1) * sizeof **rowids)))
            rc = CPD_ENOMEM;
        else if ((rc = insert_rows(s, &d->table[k], rowids[k], bad_row)) && *bad_row != SIZE_MAX)
            *bad_table = (size_t)k;
    }
    for (size_t h = 0; h < have->ntables && rc == CPD_OK; h++) {
        long k = cpd_dump_find_table(d, have->table[h].name);
        if (k >= 0 && (rc = check_foreign_keys(s, d->table[k].name, rowids[k], d->table[k].nrows, bad_row)) &&
            rc == CPD_EDATA)
            *bad_table = (size_t)k;
    }
    for (size_t h = 0; h < have->ntables && rc == CPD_OK && s->engine == CPD_ENGINE_PG; h++)
        rc = advance_identity(s, &have->table[h]);
done:
    for (size_t k = 0; rowids && k < d->ntables; k++)
        free(rowids[k]);
    free(rowids);
    cpd_dump_free(have);
    rc = cpd_st_release(s, rc);
    if (deferred && s->engine != CPD_ENGINE_PG)
        cpd_db_exec(s, "PRAGMA defer_foreign_keys = OFF");
    return rc;
}
