/* test_store_dump.c: the store's schema-driven dump and restore on temporary stores: table order
 * from the foreign keys, exact values, all-or-nothing restore, refusals, odd names and WITHOUT
 * ROWID tables, foreign-key cycles. */
#include "cpdomain/status.h"
#include "cpdomain/store.h"
#include "cpdomain/store_dump.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>
#include "tmpstore.h"
#include <sqlite3.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

typedef struct {
    char path[2][TMPSTORE_MAX];
    cpd_store *s[2]; /* a source store and an empty one */
} fixture;

static int setup(void **state)
{
    fixture *f = calloc(1, sizeof *f);
    for (int k = 0; k < 2; k++)
        if (tmpstore_open(f->path[k], sizeof f->path[k], "dump", &f->s[k]))
            return -1;
    *state = f;
    return 0;
}

static int teardown(void **state)
{
    fixture *f = *state;
    for (int k = 0; k < 2; k++)
        tmpstore_close(f->path[k], f->s[k]);
    free(f);
    return 0;
}

/* Runs sql on the store file through a connection of its own (the store closed meanwhile). */
static void exec_sql(fixture *f, int k, const char *sql)
{
    cpd_store_close(f->s[k]);
    f->s[k] = NULL;
    if (tmpstore_exec(f->path[k], sql))
        fail_msg("%s: failed", sql);
    char msg[CPD_MSG_MAX];
    assert_int_equal(cpd_store_open(f->path[k], 0, &f->s[k], msg), CPD_OK);
}

/* One text result of sql on the store file. */
static void query1(fixture *f, int k, const char *sql, char *out, size_t n)
{
    if (tmpstore_pg()) {
        assert_int_equal(tmpstore_query1(f->path[k], sql, out, n), 0);
        return;
    }
    sqlite3 *db = NULL;
    sqlite3_stmt *st = NULL;
    assert_int_equal(sqlite3_open_v2(f->path[k], &db, SQLITE_OPEN_READONLY, NULL), SQLITE_OK);
    assert_int_equal(sqlite3_prepare_v2(db, sql, -1, &st, NULL), SQLITE_OK);
    out[0] = '\0';
    if (sqlite3_step(st) == SQLITE_ROW)
        snprintf(out, n, "%s", sqlite3_column_text(st, 0) ? (const char *)sqlite3_column_text(st, 0) : "NULL");
    sqlite3_finalize(st);
    sqlite3_close(db);
}

static void assert_same_dump(const cpd_dump *a, const cpd_dump *b)
{
    assert_int_equal(a->schema_version, b->schema_version);
    assert_int_equal(a->ntables, b->ntables);
    for (size_t k = 0; k < a->ntables; k++) {
        const cpd_dump_table *x = &a->table[k], *y = &b->table[k];
        assert_string_equal(x->name, y->name);
        assert_int_equal(x->ncols, y->ncols);
        if (x->nrows != y->nrows)
            fail_msg("%s: %zu rows, then %zu", x->name, x->nrows, y->nrows);
        for (size_t i = 0; i < x->nrows * x->ncols; i++) {
            const cpd_value *p = &x->val[i], *q = &y->val[i];
            if (p->type != q->type)
                fail_msg("%s value %zu: class %d, then %d", x->name, i, p->type, q->type);
            if (p->type == CPD_VAL_INTEGER)
                assert_true(p->i == q->i);
            else if (p->type == CPD_VAL_REAL)
                assert_memory_equal(&p->r, &q->r, sizeof p->r);
            else if (p->type == CPD_VAL_TEXT || p->type == CPD_VAL_BLOB) {
                assert_int_equal(p->n, q->n);
                if (p->n)
                    assert_memory_equal(p->p, q->p, p->n);
            }
        }
    }
}

static long table_index(const cpd_dump *d, const char *name)
{
    long k = cpd_dump_find_table(d, name);
    if (k < 0)
        fail_msg("no table %s in the dump", name);
    return k;
}

static void schema_order_and_columns(void **state)
{
    fixture *f = *state;
    cpd_dump *d = NULL;
    assert_int_equal(cpd_store_dump_schema(f->s[0], &d), CPD_OK);
    assert_int_equal(d->schema_version, cpd_store_latest_version());
    char count[32];
    if (tmpstore_pg()) {
        /* PostgreSQL: the tables of the store's schema (less the server's own cpd_* tables: the
         * version, the squads' grants), and every foreign key from the catalog */
        query1(f, 0, "SELECT count(*) FROM information_schema.tables WHERE table_schema = current_schema()"
                     " AND table_type = 'BASE TABLE' AND table_name NOT LIKE 'cpd\\_%'", count, sizeof count);
        assert_int_equal(d->ntables, strtoul(count, NULL, 10));
        assert_string_equal(d->table[0].name, "squad");
        assert_string_equal(d->table[1].name, "athlete");
        size_t pg_edges = 0;
        for (size_t k = 0; k < d->ntables; k++) {
            char q[512], parents[1024];
            snprintf(q, sizeof q, "SELECT coalesce(string_agg(confrelid::regclass::text, ','), '') FROM pg_constraint"
                     " WHERE contype = 'f' AND conrelid = '\"%s\"'::regclass", d->table[k].name);
            query1(f, 0, q, parents, sizeof parents);
            for (char *p = strtok(parents, ","); p; p = strtok(NULL, ",")) {
                long pi = table_index(d, p);
                if ((size_t)pi >= k)
                    fail_msg("%s comes before its parent %s", d->table[k].name, d->table[pi].name);
                pg_edges++;
            }
            assert_int_equal(d->table[k].nrows, 0);
        }
        assert_true(pg_edges >= 7);
    } else {
    query1(f, 0, "SELECT count(*) FROM sqlite_master WHERE type = 'table' AND name NOT LIKE 'sqlite%'", count,
           sizeof count);
    assert_int_equal(d->ntables, strtoul(count, NULL, 10));
    assert_string_equal(d->table[0].name, "squad"); /* db/008: athlete refers to squad */
    assert_string_equal(d->table[1].name, "athlete");
    /* every table after each table its foreign keys name, by SQLite's own report of them */
    sqlite3 *db = NULL;
    assert_int_equal(sqlite3_open_v2(f->path[0], &db, SQLITE_OPEN_READONLY, NULL), SQLITE_OK);
    size_t edges = 0;
    for (size_t k = 0; k < d->ntables; k++) {
        sqlite3_stmt *st = NULL;
        assert_int_equal(sqlite3_prepare_v2(db, "SELECT \"table\" FROM pragma_foreign_key_list(?1)", -1, &st, NULL),
                         SQLITE_OK);
        sqlite3_bind_text(st, 1, d->table[k].name, -1, SQLITE_STATIC);
        while (sqlite3_step(st) == SQLITE_ROW) {
            long p = table_index(d, (const char *)sqlite3_column_text(st, 0));
            if ((size_t)p >= k)
                fail_msg("%s comes before its parent %s", d->table[k].name, d->table[p].name);
            edges++;
        }
        sqlite3_finalize(st);
        assert_int_equal(d->table[k].nrows, 0);
    }
    sqlite3_close(db);
    assert_true(edges >= 7); /* trial, fit_run, fit_model, fit_trial, gx_test, gx_channel, lactate_* */
    }
    const cpd_dump_table *a = &d->table[1];
    static const char *const names[] = {"id", "code", "name", "sport", "mass_kg", "notes", "squad_id"};
    static const cpd_affinity aff[] = {CPD_AFF_INTEGER, CPD_AFF_TEXT, CPD_AFF_TEXT,   CPD_AFF_TEXT,
                                       CPD_AFF_REAL,    CPD_AFF_TEXT, CPD_AFF_INTEGER};
    static const int notnull[] = {0, 1, 1, 1, 0, 1, 0};
    assert_int_equal(a->ncols, 7);
    for (size_t j = 0; j < 7; j++) {
        assert_string_equal(a->col[j].name, names[j]);
        assert_int_equal(a->col[j].affinity, aff[j]);
        /* PostgreSQL reports the primary key NOT NULL, as it is; SQLite's rowid alias says 0 */
        assert_int_equal(a->col[j].notnull, notnull[j] || (tmpstore_pg() && j == 0));
        assert_int_equal(a->col[j].pk, j == 0);
    }
    const cpd_dump_table *ch = &d->table[table_index(d, "gx_channel")];
    assert_string_equal(ch->col[2].name, "data");
    assert_string_equal(ch->col[2].decl_type, "BLOB");
    assert_int_equal(ch->col[0].pk, 1);
    assert_int_equal(ch->col[1].pk, 2);
    assert_int_equal(cpd_store_check_empty(f->s[0]), CPD_OK);
    cpd_dump_free(d);
}

/* Athletes, trials, a ramp with its sample blobs, a lactate test and a saved fit. */
static void fill(cpd_store *s)
{
    cpd_athlete a = {0};
    int64_t id = 0;
    snprintf(a.code, sizeof a.code, "C01");
    snprintf(a.name, sizeof a.name, "Amara Nwachukwu");
    snprintf(a.sport, sizeof a.sport, "cycling");
    a.mass_kg = 61.37;
    a.has_mass = 1;
    snprintf(a.notes, sizeof a.notes, "left-leg meter, \"fresh\"; café Ålesund – W′");
    assert_int_equal(cpd_store_athlete_add(s, &a, &id), CPD_OK);
    snprintf(a.code, sizeof a.code, "R02");
    a.has_mass = 0; /* NULL mass */
    a.notes[0] = '\0';
    assert_int_equal(cpd_store_athlete_add(s, &a, &id), CPD_OK);
    static const double p[] = {412.3, 355.75, 301.1 / 3};
    static const double t[] = {151.2, 302.9, 1105.5};
    int64_t tid[3];
    for (int k = 0; k < 3; k++) {
        cpd_trial tr = {0};
        snprintf(tr.athlete, sizeof tr.athlete, "C01");
        snprintf(tr.date, sizeof tr.date, "2026-10-%02d", 10 + k);
        tr.kind = CPD_TRIAL_POWER;
        tr.value = p[k];
        tr.duration_s = t[k];
        snprintf(tr.note, sizeof tr.note, "note %d, with\na line break", k);
        snprintf(tr.imported_at, sizeof tr.imported_at, "2026-10-%02dT08:00:00Z", 10 + k);
        assert_int_equal(cpd_store_trial_add(s, &tr, &tid[k]), CPD_OK);
    }
    assert_int_equal(cpd_store_trial_set_excluded(s, tid[1], 1, "wind"), CPD_OK);
    cpd_gx_series *g = cpd_gx_alloc(40, CPD_GX_BIT(CPD_GX_VO2) | CPD_GX_BIT(CPD_GX_VCO2));
    assert_non_null(g);
    for (size_t i = 0; i < g->n; i++) {
        g->t_s[i] = 3.7 * (double)i;
        g->ch[CPD_GX_VO2][i] = 800 + 29.3 * (double)i + 1.0 / (double)(i + 3);
        g->ch[CPD_GX_VCO2][i] = 700 + 31.1 * (double)i;
    }
    cpd_gx_test gt = {0};
    snprintf(gt.athlete, sizeof gt.athlete, "C01");
    gt.kind = CPD_GXT_RAMP;
    snprintf(gt.date, sizeof gt.date, "2026-09-29");
    gt.rate_per_min = 25;
    gt.start = 30;
    gt.onset_s = 180;
    snprintf(gt.imported_at, sizeof gt.imported_at, "2026-09-29T09:00:00Z");
    assert_int_equal(cpd_store_gx_add(s, &gt, g, &id), CPD_OK);
    cpd_gx_free(g);
    cpd_lactate_test lt = {0};
    snprintf(lt.athlete, sizeof lt.athlete, "C01");
    snprintf(lt.date, sizeof lt.date, "2026-09-30");
    lt.n = 4;
    for (size_t i = 0; i < lt.n; i++) {
        lt.intensity[i] = 100 + 40 * (double)i;
        lt.lactate[i] = 0.9 + 0.37 * (double)(i * i);
    }
    snprintf(lt.imported_at, sizeof lt.imported_at, "2026-09-30T09:00:00Z");
    assert_int_equal(cpd_store_lactate_add(s, &lt, &id), CPD_OK);
    cpd_fit_run run = {0};
    snprintf(run.athlete, sizeof run.athlete, "C01");
    snprintf(run.created_at, sizeof run.created_at, "2026-10-13T10:00:00Z");
    snprintf(run.source, sizeof run.source, "trials");
    snprintf(run.modality, sizeof run.modality, "power");
    snprintf(run.date_from, sizeof run.date_from, "2026-10-10");
    snprintf(run.date_to, sizeof run.date_to, "2026-10-12");
    run.n = 2;
    snprintf(run.tool_version, sizeof run.tool_version, "0.1.0");
    cpd_fit_model_rec m[2] = {{"linear-total", 1, 281.5, 3.2, 19234.5, 611.1, 0, 0, 1, 0, "{\"model\":\"linear-total\"}"},
                              {"hyperbolic", 0, 0, 0, 0, 0, 0, 0, 0, 0, "{}"}};
    int64_t used[2] = {tid[0], tid[2]};
    assert_int_equal(cpd_store_fit_save(s, &run, m, 2, used, 2), CPD_OK);
}

static void dump_and_restore_exact(void **state)
{
    fixture *f = *state;
    fill(f->s[0]);
    cpd_dump *a = NULL, *b = NULL;
    assert_int_equal(cpd_store_dump(f->s[0], &a), CPD_OK);
    const cpd_dump_table *tr = &a->table[table_index(a, "trial")];
    assert_int_equal(tr->nrows, 3);
    long value = cpd_dump_find_column(tr, "value");
    assert_int_equal(tr->val[2 * tr->ncols + (size_t)value].type, CPD_VAL_REAL);
    double want = 301.1 / 3;
    assert_memory_equal(&tr->val[2 * tr->ncols + (size_t)value].r, &want, sizeof want);
    const cpd_dump_table *ath = &a->table[table_index(a, "athlete")];
    assert_int_equal(ath->val[ath->ncols + 4].type, CPD_VAL_NULL); /* R02's mass */
    const cpd_dump_table *ch = &a->table[table_index(a, "gx_channel")];
    assert_int_equal(ch->nrows, 3); /* time_s, vo2, vco2 */
    assert_int_equal(ch->val[2].type, CPD_VAL_BLOB);
    assert_int_equal(ch->val[2].n, 40 * 8);
    assert_int_equal(cpd_store_check_empty(f->s[0]), CPD_EEXIST);
    assert_non_null(strstr(cpd_store_errmsg(f->s[0]),
                           "the store is not empty (table 'athlete' has 2 rows): import into a new store, made with "
                           "init"));

    size_t bt = 0, br = 0;
    assert_int_equal(cpd_store_restore(f->s[1], a, &bt, &br), CPD_OK);
    assert_int_equal(cpd_store_dump(f->s[1], &b), CPD_OK);
    assert_same_dump(a, b);
    /* the restored store reads back through the ordinary functions */
    cpd_gx_test gt;
    cpd_gx_series *g = NULL;
    assert_int_equal(cpd_store_gx_get(f->s[1], 1, CPD_GXT_RAMP, &gt, &g), CPD_OK);
    assert_int_equal(g->n, 40);
    double vo2 = 800 + 29.3 * 17 + 1.0 / 20;
    assert_memory_equal(&g->ch[CPD_GX_VO2][17], &vo2, sizeof vo2);
    cpd_gx_free(g);
    cpd_athlete at;
    assert_int_equal(cpd_store_athlete_get(f->s[1], "C01", &at), CPD_OK);
    assert_string_equal(at.notes, "left-leg meter, \"fresh\"; café Ålesund – W′");
    char cls[64];
    if (tmpstore_pg()) { /* the columns' types hold the values */
        query1(f, 1, "SELECT pg_typeof(mass_kg)::text || ',' || pg_typeof(notes)::text FROM athlete WHERE code = 'C01'",
               cls, sizeof cls);
        assert_string_equal(cls, "double precision,text");
    } else {
    query1(f, 1, "SELECT typeof(mass_kg) || ',' || typeof(notes) FROM athlete WHERE code = 'C01'", cls, sizeof cls);
    assert_string_equal(cls, "real,text");
    }
    /* rows travel in primary-key order, whatever order they were stored in: the same on both engines
     * (the order rows were stored in: SQLite's rowid, PostgreSQL's ctid in a table never updated) */
    const char *stored_order = tmpstore_pg()
        ? "SELECT string_agg(model, ',' ORDER BY ctid) FROM fit_model"
        : "SELECT group_concat(model) FROM (SELECT model FROM fit_model ORDER BY rowid)";
    query1(f, 0, stored_order, cls, sizeof cls);
    assert_string_equal(cls, "linear-total,hyperbolic");
    query1(f, 1, stored_order, cls, sizeof cls);
    assert_string_equal(cls, "hyperbolic,linear-total");

    /* a second restore into the now-full store is refused and changes nothing */
    assert_int_equal(cpd_store_restore(f->s[1], a, &bt, &br), CPD_EEXIST);
    assert_non_null(strstr(cpd_store_errmsg(f->s[1]), "import into a new store, made with init"));
    cpd_dump *c = NULL;
    assert_int_equal(cpd_store_dump(f->s[1], &c), CPD_OK);
    assert_same_dump(a, c);
    cpd_dump_free(a);
    cpd_dump_free(b);
    cpd_dump_free(c);
}

static cpd_value *cell(cpd_dump *d, const char *table, size_t row, const char *col)
{
    cpd_dump_table *t = &d->table[table_index(d, table)];
    long j = cpd_dump_find_column(t, col);
    assert_true(j >= 0 && row < t->nrows);
    return &t->val[row * t->ncols + (size_t)j];
}

/* Each broken row fails the whole restore, is located, and leaves the store empty. */
static void constraint_failures_name_the_row(void **state)
{
    fixture *f = *state;
    fill(f->s[0]);
    static const struct {
        const char *table, *col;
        size_t row;
        int kind; /* 0: text "hockey"; 1: integer 99; 2: NULL; 3: text "C01"; 4: text "hyperbolic" */
        const char *want;
    } cases[] = {
        {"athlete", "sport", 1, 0, "CHECK constraint failed"},
        {"athlete", "code", 1, 3, "UNIQUE constraint failed: athlete.code"},
        {"trial", "athlete_id", 2, 1, "FOREIGN KEY constraint failed"},
        {"trial", "date", 1, 2, "NOT NULL constraint failed: trial.date"},
        {"lactate_stage", "test_id", 3, 1, "FOREIGN KEY constraint failed"},
        /* a two-column key, in SQLite's words on both engines (rows in key order: hyperbolic first) */
        {"fit_model", "model", 1, 4, "UNIQUE constraint failed: fit_model.run_id, fit_model.model"},
    };
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        cpd_dump *d = NULL;
        assert_int_equal(cpd_store_dump(f->s[0], &d), CPD_OK);
        cpd_value *v = cell(d, cases[k].table, cases[k].row, cases[k].col);
        if (cases[k].kind == 0)
            assert_int_equal(cpd_value_set_text(v, "hockey", 6), CPD_OK);
        else if (cases[k].kind == 3)
            assert_int_equal(cpd_value_set_text(v, "C01", 3), CPD_OK);
        else if (cases[k].kind == 4)
            assert_int_equal(cpd_value_set_text(v, "hyperbolic", 10), CPD_OK);
        else if (cases[k].kind == 1) {
            free(v->p);
            memset(v, 0, sizeof *v);
            v->type = CPD_VAL_INTEGER;
            v->i = 99;
        } else {
            free(v->p);
            memset(v, 0, sizeof *v);
        }
        size_t bt = 0, br = 0;
        int rc = cpd_store_restore(f->s[1], d, &bt, &br);
        if (rc != CPD_EDATA || !strstr(cpd_store_errmsg(f->s[1]), cases[k].want))
            fail_msg("case %zu: rc %d, '%s'", k, rc, cpd_store_errmsg(f->s[1]));
        assert_int_equal(bt, (size_t)table_index(d, cases[k].table));
        assert_int_equal(br, cases[k].row);
        assert_int_equal(cpd_store_check_empty(f->s[1]), CPD_OK); /* all or nothing */
        cpd_dump_free(d);
    }
}

static void restore_checks_its_input(void **state)
{
    fixture *f = *state;
    fill(f->s[0]);
    cpd_dump *d = NULL;
    size_t bt = 0, br = 0;
    assert_int_equal(cpd_store_dump(f->s[0], &d), CPD_OK);
    d->schema_version--;
    assert_int_equal(cpd_store_restore(f->s[1], d, &bt, &br), CPD_EUSAGE);
    assert_non_null(strstr(cpd_store_errmsg(f->s[1]), "schema version"));
    assert_true(bt == SIZE_MAX && br == SIZE_MAX);
    d->schema_version++;
    size_t tk = (size_t)table_index(d, "trial");
    free(d->table[tk].name);
    d->table[tk].name = strdup("team_roster");
    assert_int_equal(cpd_store_restore(f->s[1], d, &bt, &br), CPD_EUSAGE);
    assert_non_null(strstr(cpd_store_errmsg(f->s[1]), "the store has no table 'team_roster'"));
    free(d->table[tk].name);
    d->table[tk].name = strdup("athlete");
    assert_int_equal(cpd_store_restore(f->s[1], d, &bt, &br), CPD_EUSAGE);
    assert_non_null(strstr(cpd_store_errmsg(f->s[1]), "table 'athlete' is given twice"));
    cpd_dump_free(d);
    assert_int_equal(cpd_store_dump(f->s[0], &d), CPD_OK);
    size_t ak = (size_t)table_index(d, "athlete");
    free(d->table[ak].col[5].name);
    d->table[ak].col[5].name = strdup("remarks");
    assert_int_equal(cpd_store_restore(f->s[1], d, &bt, &br), CPD_EUSAGE);
    assert_non_null(strstr(cpd_store_errmsg(f->s[1]), "table 'athlete' of the store has no column 'remarks'"));
    assert_int_equal(cpd_store_check_empty(f->s[1]), CPD_OK);
    cpd_dump_free(d);

    /* a restore nests in the caller's transaction: rolled back with it */
    assert_int_equal(cpd_store_dump(f->s[0], &d), CPD_OK);
    assert_int_equal(cpd_store_begin(f->s[1]), CPD_OK);
    assert_int_equal(cpd_store_restore(f->s[1], d, &bt, &br), CPD_OK);
    assert_int_equal(cpd_store_check_empty(f->s[1]), CPD_EEXIST);
    cpd_store_rollback(f->s[1]);
    assert_int_equal(cpd_store_check_empty(f->s[1]), CPD_OK);
    cpd_dump_free(d);
}

/* Names with quotes and spaces, a child created before its parent, a WITHOUT ROWID parent, a
 * self-reference, an empty blob and a column without a declared type. */
static const char ODD[] =
    "CREATE TABLE \"kid \"\"q\"\"\" (id INTEGER PRIMARY KEY, parent TEXT REFERENCES \"zz parent\"(code),"
    " \"we\"\"ird col\" BLOB, up INTEGER REFERENCES \"kid \"\"q\"\"\"(id));"
    "CREATE TABLE \"zz parent\" (code TEXT PRIMARY KEY, n) WITHOUT ROWID;";

static void odd_schema(void **state)
{
    TMPSTORE_SQLITE_ONLY("SQLite DDL: WITHOUT ROWID, a column without a type, values of every class in it");
    fixture *f = *state;
    exec_sql(f, 0, ODD);
    exec_sql(f, 0,
             "INSERT INTO \"zz parent\" VALUES ('m', 1), ('c', 2.5), ('x', X'00ff'), ('a', 'text'), ('b', 3.0);"
             "INSERT INTO \"kid \"\"q\"\"\" VALUES (5, 'x', X'', NULL), (2, 'c', NULL, 5), (9, NULL, X'0102', 9);");
    exec_sql(f, 1, ODD);
    cpd_dump *a = NULL, *b = NULL;
    assert_int_equal(cpd_store_dump(f->s[0], &a), CPD_OK);
    long kid = table_index(a, "kid \"q\""), parent = table_index(a, "zz parent");
    assert_true(parent < kid); /* created after it, placed before it */
    const cpd_dump_table *p = &a->table[parent];
    assert_int_equal(p->nrows, 5);
    /* WITHOUT ROWID: primary-key order */
    for (size_t i = 0; i < 5; i++)
        assert_int_equal(p->val[i * 2].p[0], "abcmx"[i]);
    assert_int_equal(p->val[1 * 2 + 1].type, CPD_VAL_REAL); /* 'b' 3.0: no affinity, a real stays real */
    assert_true(p->val[1 * 2 + 1].r == 3.0);
    assert_int_equal(p->val[3 * 2 + 1].type, CPD_VAL_INTEGER); /* 'm' 1 */
    const cpd_dump_table *k = &a->table[kid];
    assert_true(k->val[0].i == 2); /* rowid order */
    assert_int_equal(k->val[1 * 4 + 2].type, CPD_VAL_BLOB);
    assert_int_equal(k->val[1 * 4 + 2].n, 0);
    size_t bt = 0, br = 0;
    int rc = cpd_store_restore(f->s[1], a, &bt, &br);
    if (rc)
        fail_msg("%s", cpd_store_errmsg(f->s[1]));
    assert_int_equal(cpd_store_dump(f->s[1], &b), CPD_OK);
    assert_same_dump(a, b);
    char got[64];
    query1(f, 1, "SELECT typeof(\"we\"\"ird col\") || length(\"we\"\"ird col\") FROM \"kid \"\"q\"\"\" WHERE id = 5", got,
           sizeof got);
    assert_string_equal(got, "blob0"); /* an empty blob, not NULL */
    query1(f, 1, "SELECT group_concat(typeof(n)) FROM (SELECT n FROM \"zz parent\" ORDER BY code)", got, sizeof got);
    assert_string_equal(got, "text,real,real,integer,blob");
    cpd_dump_free(a);
    cpd_dump_free(b);
}

/* A cycle of foreign keys has no parents-first order; restore defers the checks, so it loads,
 * and a row that breaks a key is still found afterwards. */
static void foreign_key_cycle_loads(void **state)
{
    TMPSTORE_SQLITE_ONLY("SQLite DDL and PRAGMA defer_foreign_keys");
    fixture *f = *state;
    static const char CYC[] = "CREATE TABLE cyc_a (id INTEGER PRIMARY KEY, b INTEGER REFERENCES cyc_b(id));"
                              "CREATE TABLE cyc_b (id INTEGER PRIMARY KEY, a INTEGER REFERENCES cyc_a(id));";
    exec_sql(f, 0, CYC);
    exec_sql(f, 0,
             "PRAGMA foreign_keys = ON; BEGIN; PRAGMA defer_foreign_keys = ON;"
             "INSERT INTO cyc_a VALUES (1, 10), (2, NULL); INSERT INTO cyc_b VALUES (10, 2); COMMIT;");
    exec_sql(f, 1, CYC);
    cpd_dump *a = NULL, *b = NULL;
    assert_int_equal(cpd_store_dump(f->s[0], &a), CPD_OK);
    assert_true(table_index(a, "cyc_a") < table_index(a, "cyc_b")); /* broken at the first created */
    size_t bt = 0, br = 0;
    int rc = cpd_store_restore(f->s[1], a, &bt, &br);
    if (rc)
        fail_msg("%s", cpd_store_errmsg(f->s[1]));
    assert_int_equal(cpd_store_dump(f->s[1], &b), CPD_OK);
    assert_same_dump(a, b);
    cpd_dump_free(b);
    /* the same with a dangling reference in the second row of cyc_a */
    exec_sql(f, 1, "DELETE FROM cyc_b; DELETE FROM cyc_a;");
    cpd_value *v = cell(a, "cyc_a", 1, "b");
    v->type = CPD_VAL_INTEGER;
    v->i = 77;
    assert_int_equal(cpd_store_restore(f->s[1], a, &bt, &br), CPD_EDATA);
    assert_non_null(strstr(cpd_store_errmsg(f->s[1]), "FOREIGN KEY constraint failed: no row of 'cyc_b'"));
    assert_int_equal(bt, (size_t)table_index(a, "cyc_a"));
    assert_int_equal(br, 1);
    assert_int_equal(cpd_store_check_empty(f->s[1]), CPD_OK);
    cpd_dump_free(a);
}

static void dump_builders(void **state)
{
    (void)state;
    cpd_dump_free(NULL);
    cpd_dump *d = cpd_dump_alloc();
    cpd_dump_table *t = NULL;
    assert_int_equal(cpd_dump_add_table(d, "t", &t), CPD_OK);
    assert_int_equal(cpd_dump_add_column(t, "a", "REAL", 1, 0), CPD_OK);
    cpd_value *row = NULL;
    assert_int_equal(cpd_dump_add_row(t, &row), CPD_OK);
    assert_int_equal(row[0].type, CPD_VAL_NULL);
    assert_int_equal(cpd_dump_add_column(t, "b", "TEXT", 0, 0), CPD_EUSAGE); /* no columns after rows */
    assert_int_equal(cpd_value_set_text(&row[0], "x", 1), CPD_OK);
    assert_int_equal(cpd_value_set_blob(&row[0], NULL, 0), CPD_OK); /* frees the text */
    assert_int_equal(row[0].type, CPD_VAL_BLOB);
    assert_null(row[0].p);
    for (int i = 0; i < 100; i++) /* growth */
        assert_int_equal(cpd_dump_add_row(t, &row), CPD_OK);
    assert_int_equal(d->table[0].nrows, 101);
    assert_int_equal(cpd_dump_find_table(d, "t"), 0);
    assert_int_equal(cpd_dump_find_table(d, "T"), -1);
    assert_int_equal(cpd_dump_find_column(t, "a"), 0);
    assert_int_equal(cpd_dump_find_column(t, "b"), -1);
    cpd_dump_free(d);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test_setup_teardown(schema_order_and_columns, setup, teardown),
        cmocka_unit_test_setup_teardown(dump_and_restore_exact, setup, teardown),
        cmocka_unit_test_setup_teardown(constraint_failures_name_the_row, setup, teardown),
        cmocka_unit_test_setup_teardown(restore_checks_its_input, setup, teardown),
        cmocka_unit_test_setup_teardown(odd_schema, setup, teardown),
        cmocka_unit_test_setup_teardown(foreign_key_cycle_loads, setup, teardown),
        cmocka_unit_test(dump_builders),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
