/* store_athlete.c: athletes and their trials in the store. */
#include "store_int.h"

#include <stdlib.h>
#include <string.h>

static void read_athlete(cpd_stmt *st, cpd_athlete *a)
{
    memset(a, 0, sizeof *a);
    a->id = cpd_db_int64(st, 0);
    cpd_st_text(st, 1, a->code, sizeof a->code);
    cpd_st_text(st, 2, a->name, sizeof a->name);
    cpd_st_text(st, 3, a->sport, sizeof a->sport);
    a->has_mass = cpd_db_type(st, 4) != CPD_DB_NULL;
    a->mass_kg = a->has_mass ? cpd_db_double(st, 4) : 0.0;
    cpd_st_text(st, 5, a->notes, sizeof a->notes);
}

#define ATHLETE_COLS "id, code, name, sport, mass_kg, notes"

int cpd_store_athlete_add(cpd_store *s, const cpd_athlete *a, int64_t *id)
{
    return cpd_store_athlete_add_to(s, a, NULL, id); /* store_squad.c: in no squad */
}

int cpd_store_athlete_get(cpd_store *s, const char *code, cpd_athlete *a)
{
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "SELECT " ATHLETE_COLS " FROM athlete WHERE code = ?1", &st);
    if (rc)
        return rc;
    cpd_db_bind_text(st, 1, code, (size_t)-1);
    int r = cpd_db_step(st);
    if (r == CPD_DB_ROW)
        read_athlete(st, a);
    else if (r != CPD_DB_DONE)
        rc = cpd_st_fail(s, "reading an athlete");
    cpd_db_finalize(st);
    char canon[CPD_CODE_MAX + 1];
    if (r == CPD_DB_DONE && (rc = cpd_st_athlete_resolve(s, code, canon)) == CPD_OK)
        rc = cpd_store_athlete_get(s, canon, a);
    return rc;
}

int cpd_store_athlete_update(cpd_store *s, const cpd_athlete *a)
{
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "UPDATE athlete SET name = ?2, sport = ?3, mass_kg = ?4, notes = ?5 WHERE code = ?1", &st);
    if (rc)
        return rc;
    cpd_db_bind_text(st, 1, a->code, (size_t)-1);
    cpd_db_bind_text(st, 2, a->name, (size_t)-1);
    cpd_db_bind_text(st, 3, a->sport, (size_t)-1);
    if (a->has_mass)
        cpd_db_bind_double(st, 4, a->mass_kg);
    else
        cpd_db_bind_null(st, 4);
    cpd_db_bind_text(st, 5, a->notes, (size_t)-1);
    if (cpd_db_step(st) != CPD_DB_DONE)
        rc = cpd_st_fail(s, "updating an athlete");
    else if (s->changes == 0)
        rc = cpd_st_err(s, CPD_ENOENT, "no athlete with code '%s'", a->code);
    cpd_db_finalize(st);
    return rc;
}

int cpd_store_athlete_remove(cpd_store *s, const char *code)
{
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "DELETE FROM athlete WHERE code = ?1", &st);
    if (rc)
        return rc;
    cpd_db_bind_text(st, 1, code, (size_t)-1);
    /* ON DELETE CASCADE takes every table that refers to the athlete with it, in this statement */
    if (cpd_db_step(st) != CPD_DB_DONE)
        rc = cpd_st_fail(s, "removing an athlete");
    else if (s->changes == 0)
        rc = cpd_st_err(s, CPD_ENOENT, "no athlete with code '%s'", code);
    cpd_db_finalize(st);
    return rc;
}

static void read_athlete_row(cpd_stmt *st, void *dst)
{
    read_athlete(st, dst);
}

int cpd_store_athlete_list(cpd_store *s, cpd_athlete **out, size_t *n)
{
    *out = NULL;
    *n = 0;
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "SELECT " ATHLETE_COLS " FROM athlete ORDER BY code", &st);
    if (rc)
        return rc;
    void *v = NULL;
    rc = cpd_st_collect(s, st, sizeof **out, read_athlete_row, &v, n, "athletes");
    cpd_db_finalize(st);
    *out = v;
    return rc;
}

/* ---- trials ---- */

const char *cpd_trial_kind_name(cpd_trial_kind k)
{
    switch (k) {
    case CPD_TRIAL_POWER:
        return "power_w";
    case CPD_TRIAL_SPEED:
        return "speed_m_s";
    case CPD_TRIAL_DISTANCE:
        return "distance_m";
    }
    return "power_w";
}

static const char *kind_sql(cpd_trial_kind k)
{
    return k == CPD_TRIAL_SPEED ? "speed" : k == CPD_TRIAL_DISTANCE ? "distance" : "power";
}

#define TRIAL_COLS                                                                                              \
    "t.id, a.code, t.date, t.kind, t.value, t.duration_s, t.excluded, t.exclude_reason, t.note, t.source_file, " \
    "t.imported_at"

static void read_trial(cpd_stmt *st, cpd_trial *t)
{
    memset(t, 0, sizeof *t);
    t->id = cpd_db_int64(st, 0);
    cpd_st_text(st, 1, t->athlete, sizeof t->athlete);
    cpd_st_text(st, 2, t->date, sizeof t->date);
    const char *k = cpd_db_text(st, 3);
    t->kind = k && strcmp((const char *)k, "speed") == 0      ? CPD_TRIAL_SPEED
              : k && strcmp((const char *)k, "distance") == 0 ? CPD_TRIAL_DISTANCE
                                                              : CPD_TRIAL_POWER;
    t->value = cpd_db_double(st, 4);
    t->duration_s = cpd_db_double(st, 5);
    t->excluded = cpd_db_int(st, 6);
    cpd_st_text(st, 7, t->exclude_reason, sizeof t->exclude_reason);
    cpd_st_text(st, 8, t->note, sizeof t->note);
    cpd_st_text(st, 9, t->source_file, sizeof t->source_file);
    cpd_st_text(st, 10, t->imported_at, sizeof t->imported_at);
}

int cpd_store_trial_add(cpd_store *s, const cpd_trial *t, int64_t *id)
{
    int64_t aid = 0;
    int rc = cpd_st_athlete_id(s, t->athlete, &aid);
    if (rc)
        return rc;
    cpd_stmt *st = NULL;
    rc = cpd_st_prepare(s,
                        "INSERT INTO trial (athlete_id, date, kind, value, duration_s, excluded, exclude_reason, note, "
                        "source_file, imported_at) VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, "
                        "?10) RETURNING id",
                        &st);
    if (rc)
        return rc;
    cpd_db_bind_int64(st, 1, aid);
    cpd_db_bind_text(st, 2, t->date, (size_t)-1);
    cpd_db_bind_text(st, 3, kind_sql(t->kind), (size_t)-1);
    cpd_db_bind_double(st, 4, t->value);
    cpd_db_bind_double(st, 5, t->duration_s);
    cpd_db_bind_int64(st, 6, t->excluded ? 1 : 0);
    cpd_st_bind_text(st, 7, t->excluded ? t->exclude_reason : NULL, 0);
    cpd_db_bind_text(st, 8, t->note, (size_t)-1);
    cpd_st_bind_text(st, 9, t->source_file, 1);
    cpd_st_bind_stamp(st, 10, t->imported_at);
    if (cpd_db_step(st) == CPD_DB_ROW)
        *id = cpd_db_int64(st, 0);
    else
        rc = cpd_st_fail(s, "adding a trial");
    cpd_db_finalize(st);
    return rc;
}

int cpd_store_trial_exists(cpd_store *s, const cpd_trial *t, int *found)
{
    *found = 0;
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s,
                            "SELECT 1 FROM trial t JOIN athlete a ON a.id = t.athlete_id WHERE a.code = ?1 AND "
                            "t.date = ?2 AND t.kind = ?3 AND t.value = ?4 AND t.duration_s = ?5 LIMIT 1",
                            &st);
    if (rc)
        return rc;
    cpd_db_bind_text(st, 1, t->athlete, (size_t)-1);
    cpd_db_bind_text(st, 2, t->date, (size_t)-1);
    cpd_db_bind_text(st, 3, kind_sql(t->kind), (size_t)-1);
    cpd_db_bind_double(st, 4, t->value);
    cpd_db_bind_double(st, 5, t->duration_s);
    int r = cpd_db_step(st);
    if (r == CPD_DB_ROW)
        *found = 1;
    else if (r != CPD_DB_DONE)
        rc = cpd_st_fail(s, "looking for a duplicate trial");
    cpd_db_finalize(st);
    return rc;
}

int cpd_store_trial_get(cpd_store *s, int64_t id, cpd_trial *t)
{
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "SELECT " TRIAL_COLS " FROM trial t JOIN athlete a ON a.id = t.athlete_id WHERE t.id = ?1", &st);
    if (rc)
        return rc;
    cpd_db_bind_int64(st, 1, id);
    int r = cpd_db_step(st);
    if (r == CPD_DB_ROW)
        read_trial(st, t);
    else if (r == CPD_DB_DONE)
        rc = cpd_st_err(s, CPD_ENOENT, "no trial with id %lld", (long long)id);
    else
        rc = cpd_st_fail(s, "reading a trial");
    cpd_db_finalize(st);
    return rc;
}

static void read_trial_row(cpd_stmt *st, void *dst)
{
    read_trial(st, dst);
}

int cpd_store_trial_list(cpd_store *s, const char *code, cpd_trial **out, size_t *n)
{
    *out = NULL;
    *n = 0;
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s,
                            "SELECT " TRIAL_COLS " FROM trial t JOIN athlete a ON a.id = t.athlete_id "
                            "WHERE CAST(?1 AS TEXT) IS NULL OR a.code = ?1 ORDER BY a.code, t.date, t.id",
                            &st);
    if (rc)
        return rc;
    cpd_st_bind_text(st, 1, code, 0);
    void *v = NULL;
    rc = cpd_st_collect(s, st, sizeof **out, read_trial_row, &v, n, "trials");
    cpd_db_finalize(st);
    *out = v;
    return rc;
}

int cpd_store_trial_set_excluded(cpd_store *s, int64_t id, int excluded, const char *reason)
{
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "UPDATE trial SET excluded = ?2, exclude_reason = ?3 WHERE id = ?1", &st);
    if (rc)
        return rc;
    cpd_db_bind_int64(st, 1, id);
    cpd_db_bind_int64(st, 2, excluded ? 1 : 0);
    cpd_st_bind_text(st, 3, excluded ? reason : NULL, 0);
    if (cpd_db_step(st) != CPD_DB_DONE)
        rc = cpd_st_fail(s, "updating a trial");
    else if (s->changes == 0)
        rc = cpd_st_err(s, CPD_ENOENT, "no trial with id %lld", (long long)id);
    cpd_db_finalize(st);
    return rc;
}

int cpd_store_trial_remove(cpd_store *s, int64_t id)
{
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "DELETE FROM trial WHERE id = ?1", &st);
    if (rc)
        return rc;
    cpd_db_bind_int64(st, 1, id);
    if (cpd_db_step(st) != CPD_DB_DONE)
        rc = cpd_st_fail(s, "removing a trial");
    else if (s->changes == 0)
        rc = cpd_st_err(s, CPD_ENOENT, "no trial with id %lld", (long long)id);
    cpd_db_finalize(st);
    return rc;
}
