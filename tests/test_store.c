/* test_store.c: the store on temporary files: migrations, versions, athletes, trials, cascades,
 * transactions. */
#include "tmpstore.h"
#include "cpdomain/status.h"
#include "cpdomain/store.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>
#include "near.h"
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

typedef struct {
    char path[TMPSTORE_MAX];
    cpd_store *s;
} fixture;

static int setup(void **state)
{
    fixture *f = calloc(1, sizeof *f);
    if (tmpstore_open(f->path, sizeof f->path, "store", &f->s))
        return -1;
    *state = f;
    return 0;
}

static int teardown(void **state)
{
    fixture *f = *state;
    tmpstore_close(f->path, f->s);
    free(f);
    return 0;
}

static cpd_athlete athlete(const char *code, double mass)
{
    cpd_athlete a;
    memset(&a, 0, sizeof a);
    snprintf(a.code, sizeof a.code, "%s", code);
    snprintf(a.name, sizeof a.name, "Name of %s", code);
    snprintf(a.sport, sizeof a.sport, "rowing");
    a.mass_kg = mass;
    a.has_mass = mass > 0;
    return a;
}

static cpd_trial trial(const char *code, const char *date, double p, double t)
{
    cpd_trial tr;
    memset(&tr, 0, sizeof tr);
    snprintf(tr.athlete, sizeof tr.athlete, "%s", code);
    snprintf(tr.date, sizeof tr.date, "%s", date);
    tr.kind = CPD_TRIAL_POWER;
    tr.value = p;
    tr.duration_s = t;
    return tr;
}

static void fresh_store_is_latest_version(void **state)
{
    fixture *f = *state;
    assert_int_equal(cpd_store_version(f->s), cpd_store_latest_version());
    assert_true(cpd_store_latest_version() >= 1);
    /* a missing file without create is ENOENT with a hint to init */
    cpd_store *s = NULL;
    char msg[CPD_MSG_MAX];
    assert_int_equal(cpd_store_open("/tmp/cpd_no_such_store.db", 0, &s, msg), CPD_ENOENT);
    assert_null(s);
    assert_non_null(strstr(msg, "init"));
    cpd_store_close(NULL);
}

static void newer_store_is_refused(void **state)
{
    fixture *f = *state;
    cpd_store_close(f->s);
    f->s = NULL;
    /* the version: SQLite's PRAGMA user_version, the table cpd_version on PostgreSQL */
    const char *set = tmpstore_pg() ? "UPDATE cpd_version SET version = %d" : "PRAGMA user_version = %d";
    char sql[64];
    snprintf(sql, sizeof sql, set, 4242);
    assert_int_equal(tmpstore_exec(f->path, sql), 0);
    char msg[CPD_MSG_MAX];
    assert_int_equal(cpd_store_open(f->path, 0, &f->s, msg), CPD_ESTORE);
    assert_non_null(strstr(msg, "version 4242"));
    assert_null(f->s);
    /* put it back so teardown can close cleanly */
    snprintf(sql, sizeof sql, set, cpd_store_latest_version());
    assert_int_equal(tmpstore_exec(f->path, sql), 0);
    assert_int_equal(cpd_store_open(f->path, 0, &f->s, msg), CPD_OK);
}

static void athletes_crud(void **state)
{
    fixture *f = *state;
    cpd_athlete a = athlete("W01", 82.35), b = athlete("C09", 0);
    int64_t id1 = 0, id2 = 0;
    assert_int_equal(cpd_store_athlete_add(f->s, &a, &id1), CPD_OK);
    assert_int_equal(cpd_store_athlete_add(f->s, &b, &id2), CPD_OK);
    assert_true(id2 > id1);
    assert_int_equal(cpd_store_athlete_add(f->s, &a, &id1), CPD_EEXIST);
    assert_non_null(strstr(cpd_store_errmsg(f->s), "already exists"));
    cpd_athlete g;
    assert_int_equal(cpd_store_athlete_get(f->s, "W01", &g), CPD_OK);
    assert_string_equal(g.name, "Name of W01");
    assert_string_equal(g.sport, "rowing");
    assert_int_equal(g.has_mass, 1);
    assert_near(g.mass_kg, 82.35, 0);
    g.has_mass = 0;
    snprintf(g.notes, sizeof g.notes, "it's \"quoted\"; DROP TABLE athlete; --");
    assert_int_equal(cpd_store_athlete_update(f->s, &g), CPD_OK);
    cpd_athlete *v = NULL;
    size_t n = 0;
    assert_int_equal(cpd_store_athlete_list(f->s, &v, &n), CPD_OK);
    assert_int_equal(n, 2);
    assert_string_equal(v[0].code, "C09");
    assert_string_equal(v[1].notes, "it's \"quoted\"; DROP TABLE athlete; --");
    assert_int_equal(v[1].has_mass, 0);
    free(v);
    assert_int_equal(cpd_store_athlete_get(f->s, "nope", &g), CPD_ENOENT);
    assert_int_equal(cpd_store_athlete_remove(f->s, "nope"), CPD_ENOENT);
    cpd_athlete bad = athlete("BAD", 300); /* the schema's CHECK is a last line of defence */
    assert_int_equal(cpd_store_athlete_add(f->s, &bad, &id1), CPD_ESTORE);
}

static void trials_and_cascade(void **state)
{
    fixture *f = *state;
    cpd_athlete a = athlete("R02", 61);
    int64_t aid = 0, t1 = 0, t2 = 0;
    assert_int_equal(cpd_store_athlete_add(f->s, &a, &aid), CPD_OK);
    cpd_trial x = trial("R02", "2026-09-14", 4.85, 371.5);
    x.kind = CPD_TRIAL_SPEED;
    snprintf(x.note, sizeof x.note, "treadmill 1 %% grade");
    assert_int_equal(cpd_store_trial_add(f->s, &x, &t1), CPD_OK);
    cpd_trial y = trial("R02", "2026-09-10", 3000, 611);
    y.kind = CPD_TRIAL_DISTANCE;
    snprintf(y.imported_at, sizeof y.imported_at, "2026-09-10T08:15:00Z");
    assert_int_equal(cpd_store_trial_add(f->s, &y, &t2), CPD_OK);
    int found = 0;
    assert_int_equal(cpd_store_trial_exists(f->s, &x, &found), CPD_OK);
    assert_int_equal(found, 1);
    x.duration_s = 371.6;
    assert_int_equal(cpd_store_trial_exists(f->s, &x, &found), CPD_OK);
    assert_int_equal(found, 0);
    cpd_trial *v = NULL;
    size_t n = 0;
    assert_int_equal(cpd_store_trial_list(f->s, "R02", &v, &n), CPD_OK);
    assert_int_equal(n, 2);
    assert_string_equal(v[0].date, "2026-09-10"); /* ordered by date */
    assert_int_equal(v[0].kind, CPD_TRIAL_DISTANCE);
    assert_string_equal(v[0].imported_at, "2026-09-10T08:15:00Z");
    assert_int_equal(strlen(v[1].imported_at), 20); /* set by the store */
    assert_string_equal(v[1].note, "treadmill 1 % grade");
    free(v);
    assert_int_equal(cpd_store_trial_set_excluded(f->s, t1, 1, "belt slipped"), CPD_OK);
    cpd_trial g;
    assert_int_equal(cpd_store_trial_get(f->s, t1, &g), CPD_OK);
    assert_int_equal(g.excluded, 1);
    assert_string_equal(g.exclude_reason, "belt slipped");
    assert_int_equal(cpd_store_trial_set_excluded(f->s, 99999, 1, "x"), CPD_ENOENT);
    cpd_trial z = trial("NOBODY", "2026-09-10", 300, 300);
    assert_int_equal(cpd_store_trial_add(f->s, &z, &t2), CPD_ENOENT);
    /* removing the athlete removes the trials (foreign keys are on) */
    assert_int_equal(cpd_store_athlete_remove(f->s, "R02"), CPD_OK);
    assert_int_equal(cpd_store_trial_get(f->s, t1, &g), CPD_ENOENT);
    assert_int_equal(cpd_store_trial_remove(f->s, t1), CPD_ENOENT);
}

static void rollback_discards_everything(void **state)
{
    fixture *f = *state;
    cpd_athlete a = athlete("T01", 70), b = athlete("T02", 70);
    int64_t id = 0;
    assert_int_equal(cpd_store_begin(f->s), CPD_OK);
    assert_int_equal(cpd_store_athlete_add(f->s, &a, &id), CPD_OK);
    cpd_trial t = trial("T01", "2026-08-01", 333, 222);
    assert_int_equal(cpd_store_trial_add(f->s, &t, &id), CPD_OK);
    cpd_store_rollback(f->s);
    cpd_athlete g;
    assert_int_equal(cpd_store_athlete_get(f->s, "T01", &g), CPD_ENOENT);
    assert_int_equal(cpd_store_begin(f->s), CPD_OK);
    assert_int_equal(cpd_store_athlete_add(f->s, &b, &id), CPD_OK);
    assert_int_equal(cpd_store_commit(f->s), CPD_OK);
    assert_int_equal(cpd_store_athlete_get(f->s, "T02", &g), CPD_OK);
    cpd_store_rollback(f->s); /* outside a transaction: harmless */
    assert_string_equal(cpd_trial_kind_name(CPD_TRIAL_SPEED), "speed_m_s");
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test_setup_teardown(fresh_store_is_latest_version, setup, teardown),
        cmocka_unit_test_setup_teardown(newer_store_is_refused, setup, teardown),
        cmocka_unit_test_setup_teardown(athletes_crud, setup, teardown),
        cmocka_unit_test_setup_teardown(trials_and_cascade, setup, teardown),
        cmocka_unit_test_setup_teardown(rollback_discards_everything, setup, teardown),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
