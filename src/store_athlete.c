/* store_athlete.c: athletes and their trials in the store. */
#include "store_int.h"

#include <stdlib.h>
#include <string.h>

static void read_athlete(sqlite3_stmt *st, cpd_athlete *a)
{
    memset(a, 0, sizeof *a);
    a->id = sqlite3_column_int64(st, 0);
    cpd_st_text(st, 1, a->code, sizeof a->code);
    cpd_st_text(st, 2, a->name, sizeof a->name);
    cpd_st_text(st, 3, a->sport, sizeof a->sport);
    a->has_mass = sqlite3_column_type(st, 4) != SQLITE_NULL;
    a->mass_kg = a->has_mass ? sqlite3_column_double(st, 4) : 0.0;
    cpd_st_text(st, 5, a->notes, sizeof a->notes);
}

#define ATHLETE_COLS "id, code, name, sport, mass_kg, notes"

int cpd_store_athlete_add(cpd_store *s, const cpd_athlete *a, int64_t *id)
{
    sqlite3_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "INSERT INTO athlete (code, name, sport, mass_kg, notes) VALUES (?1, ?2, ?3, ?4, ?5)", &st);
    if (rc)
        return rc;
    sqlite3_bind_text(st, 1, a->code, -1, SQLITE_TRANSIENT);
    sqlite3_bind_text(st, 2, a->name, -1, SQLITE_TRANSIENT);
    sqlite3_bind_text(st, 3, a->sport[0] ? a->sport : "cycling", -1, SQLITE_TRANSIENT);
    if (a->has_mass)
        sqlite3_bind_double(st, 4, a->mass_kg);
    else
        sqlite3_bind_null(st, 4);
    sqlite3_bind_text(st, 5, a->notes, -1, SQLITE_TRANSIENT);
    int r = sqlite3_step(st);
    if (r == SQLITE_DONE)
        *id = sqlite3_last_insert_rowid(s->db);
    else if (r == SQLITE_CONSTRAINT_UNIQUE)
        rc = cpd_st_err(s, CPD_EEXIST, "an athlete with code '%s' already exists", a->code);
    else
        rc = cpd_st_fail(s, "adding an athlete");
    sqlite3_finalize(st);
    return rc;
}

int cpd_store_athlete_get(cpd_store *s, const char *code, cpd_athlete *a)
{
    sqlite3_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "SELECT " ATHLETE_COLS " FROM athlete WHERE code = ?1", &st);
    if (rc)
        return rc;
    sqlite3_bind_text(st, 1, code, -1, SQLITE_TRANSIENT);
    int r = sqlite3_step(st);
    if (r == SQLITE_ROW)
        read_athlete(st, a);
    else if (r != SQLITE_DONE)
        rc = cpd_st_fail(s, "reading an athlete");
    sqlite3_finalize(st);
    char canon[CPD_CODE_MAX + 1];
    if (r == SQLITE_DONE && (rc = cpd_st_athlete_resolve(s, code, canon)) == CPD_OK)
        rc = cpd_store_athlete_get(s, canon, a);
    return rc;
}

int cpd_store_athlete_update(cpd_store *s, const cpd_athlete *a)
{
    sqlite3_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "UPDATE athlete SET name = ?2, sport = ?3, mass_kg = ?4, notes = ?5 WHERE code = ?1", &st);
    if (rc)
        return rc;
    sqlite3_bind_text(st, 1, a->code, -1, SQLITE_TRANSIENT);
    sqlite3_bind_text(st, 2, a->name, -1, SQLITE_TRANSIENT);
    sqlite3_bind_text(st, 3, a->sport, -1, SQLITE_TRANSIENT);
    if (a->has_mass)
        sqlite3_bind_double(st, 4, a->mass_kg);
    else
        sqlite3_bind_null(st, 4);
    sqlite3_bind_text(st, 5, a->notes, -1, SQLITE_TRANSIENT);
    if (sqlite3_step(st) != SQLITE_DONE)
        rc = cpd_st_fail(s, "updating an athlete");
    else if (sqlite3_changes(s->db) == 0)
        rc = cpd_st_err(s, CPD_ENOENT, "no athlete with code '%s'", a->code);
    sqlite3_finalize(st);
    return rc;
}

int cpd_store_athlete_remove(cpd_store *s, const char *code)
{
    sqlite3_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "DELETE FROM athlete WHERE code = ?1", &st);
    if (rc)
        return rc;
    sqlite3_bind_text(st, 1, code, -1, SQLITE_TRANSIENT);
    /* ON DELETE CASCADE takes every table that refers to the athlete with it, in this statement */
    if (sqlite3_step(st) != SQLITE_DONE)
        rc = cpd_st_fail(s, "removing an athlete");
    else if (sqlite3_changes(s->db) == 0)
        rc = cpd_st_err(s, CPD_ENOENT, "no athlete with code '%s'", code);
    sqlite3_finalize(st);
    return rc;
}

static void read_athlete_row(sqlite3_stmt *st, void *dst)
{
    read_athlete(st, dst);
}

int cpd_store_athlete_list(cpd_store *s, cpd_athlete **out, size_t *n)
{
    *out = NULL;
    *n = 0;
    sqlite3_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "SELECT " ATHLETE_COLS " FROM athlete ORDER BY code", &st);
    if (rc)
        return rc;
    void *v = NULL;
    rc = cpd_st_collect(s, st, sizeof **out, read_athlete_row, &v, n, "athletes");
    sqlite3_finalize(st);
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

static void read_trial(sqlite3_stmt *st, cpd_trial *t)
{
    memset(t, 0, sizeof *t);
    t->id = sqlite3_column_int64(st, 0);
    cpd_st_text(st, 1, t->athlete, sizeof t->athlete);
    cpd_st_text(st, 2, t->date, sizeof t->date);
    const unsigned char *k = sqlite3_column_text(st, 3);
    t->kind = k && strcmp((const char *)k, "speed") == 0      ? CPD_TRIAL_SPEED
              : k && strcmp((const char *)k, "distance") == 0 ? CPD_TRIAL_DISTANCE
                                                              : CPD_TRIAL_POWER;
    t->value = sqlite3_column_double(st, 4);
    t->duration_s = sqlite3_column_double(st, 5);
    t->excluded = sqlite3_column_int(st, 6);
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
    sqlite3_stmt *st = NULL;
    rc = cpd_st_prepare(s,
                        "INSERT INTO trial (athlete_id, date, kind, value, duration_s, excluded, exclude_reason, note, "
                        "source_file, imported_at) VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, "
                        "COALESCE(?10, strftime('%Y-%m-%dT%H:%M:%SZ', 'now')))",
                        &st);
    if (rc)
        return rc;
    sqlite3_bind_int64(st, 1, aid);
    sqlite3_bind_text(st, 2, t->date, -1, SQLITE_TRANSIENT);
    sqlite3_bind_text(st, 3, kind_sql(t->kind), -1, SQLITE_STATIC);
    sqlite3_bind_double(st, 4, t->value);
    sqlite3_bind_double(st, 5, t->duration_s);
    sqlite3_bind_int(st, 6, t->excluded ? 1 : 0);
    cpd_st_bind_text(st, 7, t->excluded ? t->exclude_reason : NULL, 0);
    sqlite3_bind_text(st, 8, t->note, -1, SQLITE_TRANSIENT);
    cpd_st_bind_text(st, 9, t->source_file, 1);
    cpd_st_bind_text(st, 10, t->imported_at, 1);
    if (sqlite3_step(st) == SQLITE_DONE)
        *id = sqlite3_last_insert_rowid(s->db);
    else
        rc = cpd_st_fail(s, "adding a trial");
    sqlite3_finalize(st);
    return rc;
}

int cpd_store_trial_exists(cpd_store *s, const cpd_trial *t, int *found)
{
    *found = 0;
    sqlite3_stmt *st = NULL;
    int rc = cpd_st_prepare(s,
                            "SELECT 1 FROM trial t JOIN athlete a ON a.id = t.athlete_id WHERE a.code = ?1 AND "
                            "t.date = ?2 AND t.kind = ?3 AND t.value = ?4 AND t.duration_s = ?5 LIMIT 1",
                            &st);
    if (rc)
        return rc;
    sqlite3_bind_text(st, 1, t->athlete, -1, SQLITE_TRANSIENT);
    sqlite3_bind_text(st, 2, t->date, -1, SQLITE_TRANSIENT);
    sqlite3_bind_text(st, 3, kind_sql(t->kind), -1, SQLITE_STATIC);
    sqlite3_bind_double(st, 4, t->value);
    sqlite3_bind_double(st, 5, t->duration_s);
    int r = sqlite3_step(st);
    if (r == SQLITE_ROW)
        *found = 1;
    else if (r != SQLITE_DONE)
        rc = cpd_st_fail(s, "looking for a duplicate trial");
    sqlite3_finalize(st);
    return rc;
}

int cpd_store_trial_get(cpd_store *s, int64_t id, cpd_trial *t)
{
    sqlite3_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "SELECT " TRIAL_COLS " FROM trial t JOIN athlete a ON a.id = t.athlete_id WHERE t.id = ?1", &st);
    if (rc)
        return rc;
    sqlite3_bind_int64(st, 1, id);
    int r = sqlite3_step(st);
    if (r == SQLITE_ROW)
        read_trial(st, t);
    else if (r == SQLITE_DONE)
        rc = cpd_st_err(s, CPD_ENOENT, "no trial with id %lld", (long long)id);
    else
        rc = cpd_st_fail(s, "reading a trial");
    sqlite3_finalize(st);
    return rc;
}

static void read_trial_row(sqlite3_stmt *st, void *dst)
{
    read_trial(st, dst);
}

int cpd_store_trial_list(cpd_store *s, const char *code, cpd_trial **out, size_t *n)
{
    *out = NULL;
    *n = 0;
    sqlite3_stmt *st = NULL;
    int rc = cpd_st_prepare(s,
                            "SELECT " TRIAL_COLS " FROM trial t JOIN athlete a ON a.id = t.athlete_id "
                            "WHERE ?1 IS NULL OR a.code = ?1 ORDER BY a.code, t.date, t.id",
                            &st);
    if (rc)
        return rc;
    cpd_st_bind_text(st, 1, code, 0);
    void *v = NULL;
    rc = cpd_st_collect(s, st, sizeof **out, read_trial_row, &v, n, "trials");
    sqlite3_finalize(st);
    *out = v;
    return rc;
}

int cpd_store_trial_set_excluded(cpd_store *s, int64_t id, int excluded, const char *reason)
{
    sqlite3_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "UPDATE trial SET excluded = ?2, exclude_reason = ?3 WHERE id = ?1", &st);
    if (rc)
        return rc;
    sqlite3_bind_int64(st, 1, id);
    sqlite3_bind_int(st, 2, excluded ? 1 : 0);
    cpd_st_bind_text(st, 3, excluded ? reason : NULL, 0);
    if (sqlite3_step(st) != SQLITE_DONE)
        rc = cpd_st_fail(s, "updating a trial");
    else if (sqlite3_changes(s->db) == 0)
        rc = cpd_st_err(s, CPD_ENOENT, "no trial with id %lld", (long long)id);
    sqlite3_finalize(st);
    return rc;
}

int cpd_store_trial_remove(cpd_store *s, int64_t id)
{
    sqlite3_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "DELETE FROM trial WHERE id = ?1", &st);
    if (rc)
        return rc;
    sqlite3_bind_int64(st, 1, id);
    if (sqlite3_step(st) != SQLITE_DONE)
        rc = cpd_st_fail(s, "removing a trial");
    else if (sqlite3_changes(s->db) == 0)
        rc = cpd_st_err(s, CPD_ENOENT, "no trial with id %lld", (long long)id);
    sqlite3_finalize(st);
    return rc;
}
