/* test_squad.c: squads in the store (store_squad.c, db/008_squads.sql) on a real SQLite store:
 * add, get with "did you mean", list with counts, assign and take out, remove only when empty,
 * an athlete added into a squad, each athlete's squad, the cascade of an athlete's removal, and
 * the PostgreSQL-only access functions refused on a SQLite store. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include "tmpstore.h"
#include "cpdomain/status.h"
#include "cpdomain/store.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

typedef struct {
    char path[TMPSTORE_MAX];
    cpd_store *s;
    int64_t track, road;
} fixture;

static int64_t add_athlete(cpd_store *s, const char *code, const char *squad)
{
    cpd_athlete a;
    memset(&a, 0, sizeof a);
    snprintf(a.code, sizeof a.code, "%s", code);
    snprintf(a.name, sizeof a.name, "Invented %s", code);
    snprintf(a.sport, sizeof a.sport, "running");
    a.mass_kg = 57.3;
    a.has_mass = 1;
    int64_t id = 0;
    assert_int_equal(cpd_store_athlete_add_to(s, &a, squad, &id), CPD_OK);
    return id;
}

static int setup(void **state)
{
    fixture *f = calloc(1, sizeof *f);
    if (tmpstore_open(f->path, sizeof f->path, "squad", &f->s))
        return -1;
    if (cpd_store_squad_add(f->s, "track", "800 m to 5 km", &f->track) ||
        cpd_store_squad_add(f->s, "road", "", &f->road))
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

static void add_get_list(void **state)
{
    fixture *f = *state;
    assert_true(f->track > 0 && f->road > f->track);
    int64_t id = 0;
    assert_int_equal(cpd_store_squad_add(f->s, "track", "again", &id), CPD_EEXIST);
    assert_non_null(strstr(cpd_store_errmsg(f->s), "a squad named 'track' already exists"));

    add_athlete(f->s, "T1", "track");
    add_athlete(f->s, "T2", "track");
    add_athlete(f->s, "N1", NULL);
    cpd_squad q;
    assert_int_equal(cpd_store_squad_get(f->s, "track", &q), CPD_OK);
    assert_int_equal(q.id, f->track);
    assert_string_equal(q.name, "track");
    assert_string_equal(q.note, "800 m to 5 km");
    assert_int_equal(q.athletes, 2);

    /* exact names: another letter case is a "did you mean" */
    assert_int_equal(cpd_store_squad_get(f->s, "Track", &q), CPD_ENOENT);
    assert_string_equal(cpd_store_errmsg(f->s), "no squad named 'Track' (did you mean 'track'?)");
    assert_int_equal(cpd_store_squad_get(f->s, "raod", &q), CPD_ENOENT);
    assert_string_equal(cpd_store_errmsg(f->s), "no squad named 'raod' (did you mean 'road'?)");
    assert_int_equal(cpd_store_squad_get(f->s, "swimming", &q), CPD_ENOENT);
    assert_string_equal(cpd_store_errmsg(f->s), "no squad named 'swimming' ('cpdomain squad list' shows the names)");

    cpd_squad *v = NULL;
    size_t n = 0;
    assert_int_equal(cpd_store_squad_list(f->s, &v, &n), CPD_OK);
    assert_int_equal(n, 2);
    assert_string_equal(v[0].name, "road"); /* by name */
    assert_int_equal(v[0].athletes, 0);
    assert_string_equal(v[1].name, "track");
    assert_int_equal(v[1].athletes, 2);
    free(v);
}

static void athletes_and_their_squads(void **state)
{
    fixture *f = *state;
    int64_t t1 = add_athlete(f->s, "T1", "track");
    int64_t r1 = add_athlete(f->s, "R1", "road");
    add_athlete(f->s, "N1", NULL);
    assert_true(r1 > t1);

    /* the athlete itself is stored as cpd_store_athlete_add stores it */
    cpd_athlete a;
    assert_int_equal(cpd_store_athlete_get(f->s, "R1", &a), CPD_OK);
    assert_int_equal(a.id, r1);
    assert_string_equal(a.sport, "running");
    assert_true(a.has_mass && a.mass_kg == 57.3);

    char sq[CPD_SQUAD_MAX + 1];
    assert_int_equal(cpd_store_athlete_squad(f->s, "R1", sq), CPD_OK);
    assert_string_equal(sq, "road");
    assert_int_equal(cpd_store_athlete_squad(f->s, "N1", sq), CPD_OK);
    assert_string_equal(sq, "");
    assert_int_equal(cpd_store_athlete_squad(f->s, "r1", sq), CPD_OK); /* letter case resolved as for athletes */
    assert_string_equal(sq, "road");
    assert_int_equal(cpd_store_athlete_squad(f->s, "X9", sq), CPD_ENOENT);

    cpd_athlete_squad *p = NULL;
    size_t n = 0;
    assert_int_equal(cpd_store_athlete_squads(f->s, NULL, &p, &n), CPD_OK);
    assert_int_equal(n, 3);
    assert_string_equal(p[0].code, "N1");
    assert_string_equal(p[0].squad, "");
    assert_string_equal(p[1].code, "R1");
    assert_string_equal(p[1].squad, "road");
    assert_string_equal(p[2].code, "T1");
    assert_string_equal(p[2].squad, "track");
    free(p);
    assert_int_equal(cpd_store_athlete_squads(f->s, "track", &p, &n), CPD_OK);
    assert_int_equal(n, 1);
    assert_string_equal(p[0].code, "T1");
    free(p);
    assert_int_equal(cpd_store_athlete_squads(f->s, "trak", &p, &n), CPD_ENOENT);
    assert_null(p);
    assert_int_equal(n, 0);

    /* an unknown squad or a taken code adds nothing */
    cpd_athlete b;
    memset(&b, 0, sizeof b);
    snprintf(b.code, sizeof b.code, "Z1");
    snprintf(b.name, sizeof b.name, "Nobody");
    int64_t id = 0;
    assert_int_equal(cpd_store_athlete_add_to(f->s, &b, "nowhere", &id), CPD_ENOENT);
    assert_int_equal(cpd_store_athlete_get(f->s, "Z1", &a), CPD_ENOENT);
    snprintf(b.code, sizeof b.code, "T1");
    assert_int_equal(cpd_store_athlete_add_to(f->s, &b, "road", &id), CPD_EEXIST);
    assert_int_equal(cpd_store_athlete_squad(f->s, "T1", sq), CPD_OK);
    assert_string_equal(sq, "track");
}

static void assign_and_remove(void **state)
{
    fixture *f = *state;
    add_athlete(f->s, "T1", "track");
    add_athlete(f->s, "N1", NULL);
    cpd_squad q;

    assert_int_equal(cpd_store_squad_remove(f->s, "track"), CPD_EDATA);
    assert_string_equal(cpd_store_errmsg(f->s), "squad 'track' still has 1 athlete: move them first ('cpdomain squad "
                                                "assign CODE OTHER' or 'cpdomain squad assign CODE --none')");
    assert_int_equal(cpd_store_squad_get(f->s, "track", &q), CPD_OK);

    assert_int_equal(cpd_store_squad_assign(f->s, "N1", "track"), CPD_OK);
    assert_int_equal(cpd_store_squad_assign(f->s, "T1", "road"), CPD_OK);
    char sq[CPD_SQUAD_MAX + 1];
    assert_int_equal(cpd_store_athlete_squad(f->s, "T1", sq), CPD_OK);
    assert_string_equal(sq, "road");
    assert_int_equal(cpd_store_squad_get(f->s, "track", &q), CPD_OK);
    assert_int_equal(q.athletes, 1);

    assert_int_equal(cpd_store_squad_assign(f->s, "Q7", "road"), CPD_ENOENT);
    assert_int_equal(cpd_store_squad_assign(f->s, "N1", "roads"), CPD_ENOENT);
    assert_string_equal(cpd_store_errmsg(f->s), "no squad named 'roads' (did you mean 'road'?)");
    assert_int_equal(cpd_store_athlete_squad(f->s, "N1", sq), CPD_OK);
    assert_string_equal(sq, "track"); /* unchanged by the refusal */

    assert_int_equal(cpd_store_squad_assign(f->s, "N1", NULL), CPD_OK);
    assert_int_equal(cpd_store_athlete_squad(f->s, "N1", sq), CPD_OK);
    assert_string_equal(sq, "");
    assert_int_equal(cpd_store_squad_remove(f->s, "track"), CPD_OK);
    assert_int_equal(cpd_store_squad_get(f->s, "track", &q), CPD_ENOENT);
    assert_int_equal(cpd_store_squad_remove(f->s, "track"), CPD_ENOENT);

    /* removing the athlete empties the squad */
    assert_int_equal(cpd_store_squad_remove(f->s, "road"), CPD_EDATA);
    assert_int_equal(cpd_store_athlete_remove(f->s, "T1"), CPD_OK);
    assert_int_equal(cpd_store_squad_remove(f->s, "road"), CPD_OK);
    assert_int_equal(cpd_store_squad_get(f->s, "road", &q), CPD_ENOENT);
    assert_string_equal(cpd_store_errmsg(f->s), "no squad named 'road': the store has no squads yet ('cpdomain squad add NAME')");

    /* the name is free again */
    int64_t id = 0;
    assert_int_equal(cpd_store_squad_add(f->s, "track", "", &id), CPD_OK);
    assert_int_equal(cpd_store_squad_assign(f->s, "N1", "track"), CPD_OK);
    assert_int_equal(cpd_store_squad_remove(f->s, "track"), CPD_EDATA);
}

static void access_needs_postgresql(void **state)
{
    TMPSTORE_SQLITE_ONLY("a SQLite store refuses squad grants (cli_access.sh grants them on PostgreSQL)");
    fixture *f = *state;
    static const char why[] =
        "access control needs a PostgreSQL store: a SQLite file is protected by its file's permissions";
    assert_int_equal(cpd_store_engine(f->s), CPD_ENGINE_SQLITE);
    assert_int_equal(cpd_store_squad_grant(f->s, "track", "coach_a"), CPD_EUSAGE);
    assert_string_equal(cpd_store_errmsg(f->s), why);
    assert_int_equal(cpd_store_squad_grant(f->s, NULL, "cpdomain_lab"), CPD_EUSAGE);
    assert_string_equal(cpd_store_errmsg(f->s), why);
    assert_int_equal(cpd_store_squad_revoke(f->s, "road", "coach_a"), CPD_EUSAGE);
    assert_string_equal(cpd_store_errmsg(f->s), why);
    int created = -1;
    assert_int_equal(cpd_store_server_setup(f->s, "cpdomain_lab", "cpdomain_coach", &created), CPD_EUSAGE);
    assert_string_equal(cpd_store_errmsg(f->s), why);
    assert_int_equal(created, 0);
    int v = cpd_store_version(f->s);
    assert_int_equal(v, cpd_store_latest_version());
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test_setup_teardown(add_get_list, setup, teardown),
        cmocka_unit_test_setup_teardown(athletes_and_their_squads, setup, teardown),
        cmocka_unit_test_setup_teardown(assign_and_remove, setup, teardown),
        cmocka_unit_test_setup_teardown(access_needs_postgresql, setup, teardown),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
