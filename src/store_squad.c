/* store_squad.c: squads (db/008_squads.sql), the athletes in them, and on a PostgreSQL store the
 * access that squads grant (db/pg/008_squads_access.sql). Plain portable SQL: ?N parameters,
 * COALESCE, ON CONFLICT DO NOTHING, RETURNING id. */
#include "store_int.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define SQUAD_COLS "q.id, q.name, q.note, (SELECT COUNT(*) FROM athlete a WHERE a.squad_id = q.id)"

static void read_squad(cpd_stmt *st, void *dst)
{
    cpd_squad *q = dst;
    memset(q, 0, sizeof *q);
    q->id = cpd_db_int64(st, 0);
    cpd_st_text(st, 1, q->name, sizeof q->name);
    cpd_st_text(st, 2, q->note, sizeof q->note);
    q->athletes = (size_t)cpd_db_int64(st, 3);
}

int cpd_store_squad_add(cpd_store *s, const char *name, const char *note, int64_t *id)
{
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "INSERT INTO squad (name, note) VALUES (?1, ?2) RETURNING id", &st);
    if (rc)
        return rc;
    cpd_db_bind_text(st, 1, name, (size_t)-1);
    cpd_db_bind_text(st, 2, note ? note : "", (size_t)-1);
    int r = cpd_db_step(st);
    if (r == CPD_DB_ROW) {
        *id = cpd_db_int64(st, 0);
        r = cpd_db_step(st);
    }
    if (r == CPD_DB_CONSTRAINT_UNIQUE)
        rc = cpd_st_err(s, CPD_EEXIST, "a squad named '%s' already exists", name);
    else if (r != CPD_DB_DONE)
        rc = cpd_st_fail(s, "adding a squad");
    cpd_db_finalize(st);
    return rc;
}

/* The message for an unknown squad: the closest name, or where to find the names. */
static int no_squad(cpd_store *s, const char *name)
{
    char best[CPD_SQUAD_MAX + 1];
    size_t n = 0;
    int rc = cpd_st_closest(s, "SELECT name FROM squad ORDER BY name", name, best, sizeof best, &n);
    if (rc)
        return rc;
    if (best[0])
        return cpd_st_err(s, CPD_ENOENT, "no squad named '%s' (did you mean '%s'?)", name, best);
    if (n)
        return cpd_st_err(s, CPD_ENOENT, "no squad named '%s' ('cpdomain squad list' shows the names)", name);
    return cpd_st_err(s, CPD_ENOENT, "no squad named '%s': the store has no squads yet ('cpdomain squad add NAME')",
                      name);
}

int cpd_store_squad_get(cpd_store *s, const char *name, cpd_squad *q)
{
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "SELECT " SQUAD_COLS " FROM squad q WHERE q.name = ?1", &st);
    if (rc)
        return rc;
    cpd_db_bind_text(st, 1, name, (size_t)-1);
    int r = cpd_db_step(st);
    if (r == CPD_DB_ROW)
        read_squad(st, q);
    else if (r != CPD_DB_DONE)
        rc = cpd_st_fail(s, "reading a squad");
    cpd_db_finalize(st);
    if (r == CPD_DB_DONE)
        rc = no_squad(s, name);
    return rc;
}

int cpd_store_squad_list(cpd_store *s, cpd_squad **out, size_t *n)
{
    *out = NULL;
    *n = 0;
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "SELECT " SQUAD_COLS " FROM squad q ORDER BY q.name", &st);
    if (rc)
        return rc;
    void *v = NULL;
    rc = cpd_st_collect(s, st, sizeof **out, read_squad, &v, n, "squads");
    cpd_db_finalize(st);
    *out = v;
    return rc;
}

int cpd_store_squad_remove(cpd_store *s, const char *name)
{
    cpd_squad q;
    int rc = cpd_store_squad_get(s, name, &q);
    if (rc)
        return rc;
    if (q.athletes > 0)
        return cpd_st_err(s, CPD_EDATA,
                          "squad '%s' still has %zu athlete%s: move them first ('cpdomain squad assign CODE "
                          "OTHER' or 'cpdomain squad assign CODE --none')",
                          name, q.athletes, q.athletes == 1 ? "" : "s");
    cpd_stmt *st = NULL;
    if ((rc = cpd_st_prepare(s, "DELETE FROM squad WHERE id = ?1", &st)))
        return rc;
    cpd_db_bind_int64(st, 1, q.id);
    int r = cpd_db_step(st);
    /* athletes this user may not see (row-level security) still hold the squad: ON DELETE RESTRICT */
    if (r == CPD_DB_CONSTRAINT_FOREIGNKEY)
        rc = cpd_st_err(s, CPD_EDATA, "squad '%s' still has athletes: move them first", name);
    else if (r != CPD_DB_DONE)
        rc = cpd_st_fail(s, "removing a squad");
    cpd_db_finalize(st);
    return rc;
}

int cpd_store_squad_assign(cpd_store *s, const char *code, const char *squad)
{
    int64_t aid = 0;
    int rc = cpd_st_athlete_id(s, code, &aid);
    if (rc)
        return rc;
    cpd_squad q = {0};
    if (squad && (rc = cpd_store_squad_get(s, squad, &q)))
        return rc;
    cpd_stmt *st = NULL;
    if ((rc = cpd_st_prepare(s, "UPDATE athlete SET squad_id = ?2 WHERE id = ?1", &st)))
        return rc;
    cpd_db_bind_int64(st, 1, aid);
    if (squad)
        cpd_db_bind_int64(st, 2, q.id);
    else
        cpd_db_bind_null(st, 2);
    if (cpd_db_step(st) != CPD_DB_DONE)
        rc = cpd_st_fail(s, "moving an athlete to a squad");
    else if (s->changes == 0)
        rc = cpd_st_err(s, CPD_ENOENT, "no athlete with code '%s'", code);
    cpd_db_finalize(st);
    return rc;
}

int cpd_store_athlete_add_to(cpd_store *s, const cpd_athlete *a, const char *squad, int64_t *id)
{
    cpd_squad q = {0};
    int rc = squad ? cpd_store_squad_get(s, squad, &q) : CPD_OK;
    if (rc)
        return rc;
    /* its own savepoint: a code already taken is refused without spoiling the command's transaction
     * (on PostgreSQL a failed statement would abort it), so an import can skip it and go on */
    if ((rc = cpd_st_savepoint(s)))
        return rc;
    cpd_stmt *st = NULL;
    if ((rc = cpd_st_prepare(s,
                             "INSERT INTO athlete (code, name, sport, mass_kg, notes, squad_id) "
                             "VALUES (?1, ?2, ?3, ?4, ?5, ?6) RETURNING id",
                             &st)))
        return cpd_st_release(s, rc);
    cpd_db_bind_text(st, 1, a->code, (size_t)-1);
    cpd_db_bind_text(st, 2, a->name, (size_t)-1);
    cpd_db_bind_text(st, 3, a->sport[0] ? a->sport : "cycling", (size_t)-1);
    cpd_st_bind_opt(st, 4, a->has_mass, a->mass_kg);
    cpd_db_bind_text(st, 5, a->notes, (size_t)-1);
    if (squad)
        cpd_db_bind_int64(st, 6, q.id);
    else
        cpd_db_bind_null(st, 6);
    int r = cpd_db_step(st);
    if (r == CPD_DB_ROW) {
        *id = cpd_db_int64(st, 0);
        r = cpd_db_step(st);
    }
    if (r == CPD_DB_CONSTRAINT_UNIQUE)
        rc = cpd_st_err(s, CPD_EEXIST, "an athlete with code '%s' already exists", a->code);
    else if (r != CPD_DB_DONE)
        rc = cpd_st_fail(s, "adding an athlete");
    cpd_db_finalize(st);
    return cpd_st_release(s, rc);
}

int cpd_store_athlete_squad(cpd_store *s, const char *code, char squad[CPD_SQUAD_MAX + 1])
{
    squad[0] = '\0';
    int64_t aid = 0;
    int rc = cpd_st_athlete_id(s, code, &aid);
    if (rc)
        return rc;
    cpd_stmt *st = NULL;
    if ((rc = cpd_st_prepare(s, "SELECT q.name FROM athlete a JOIN squad q ON q.id = a.squad_id WHERE a.id = ?1", &st)))
        return rc;
    cpd_db_bind_int64(st, 1, aid);
    int r = cpd_db_step(st);
    if (r == CPD_DB_ROW)
        cpd_st_text(st, 0, squad, CPD_SQUAD_MAX + 1);
    else if (r != CPD_DB_DONE)
        rc = cpd_st_fail(s, "reading an athlete's squad");
    cpd_db_finalize(st);
    return rc;
}

static void read_pair(cpd_stmt *st, void *dst)
{
    cpd_athlete_squad *p = dst;
    memset(p, 0, sizeof *p);
    cpd_st_text(st, 0, p->code, sizeof p->code);
    cpd_st_text(st, 1, p->squad, sizeof p->squad);
}

int cpd_store_athlete_squads(cpd_store *s, const char *squad, cpd_athlete_squad **out, size_t *n)
{
    *out = NULL;
    *n = 0;
    cpd_squad q;
    int rc = squad ? cpd_store_squad_get(s, squad, &q) : CPD_OK;
    if (rc)
        return rc;
    cpd_stmt *st = NULL;
    /* CAST: PostgreSQL needs the parameter's type where it is only compared with NULL */
    if ((rc = cpd_st_prepare(s,
                             "SELECT a.code, COALESCE(q.name, '') FROM athlete a LEFT JOIN squad q ON q.id = a.squad_id "
                             "WHERE CAST(?1 AS TEXT) IS NULL OR q.name = CAST(?1 AS TEXT) ORDER BY a.code",
                             &st)))
        return rc;
    cpd_st_bind_text(st, 1, squad, 0);
    void *v = NULL;
    rc = cpd_st_collect(s, st, sizeof **out, read_pair, &v, n, "the athletes' squads");
    cpd_db_finalize(st);
    *out = v;
    return rc;
}

/* ---- access control (PostgreSQL only) ---- */

static int pg_only(cpd_store *s)
{
    if (cpd_store_engine(s) == CPD_ENGINE_PG)
        return CPD_OK;
    return cpd_st_err(s, CPD_EUSAGE,
                      "access control needs a PostgreSQL store: a SQLite file is protected by its file's permissions");
}

/* A role name the tool accepts: 1 to 63 of [a-z0-9_], not starting with a digit. Such a name is
 * the same quoted or not, so it may stand in SQL as a quoted identifier. */
static int check_role(cpd_store *s, const char *role)
{
    size_t n = role ? strlen(role) : 0;
    int ok = n >= 1 && n <= 63 && !(role[0] >= '0' && role[0] <= '9');
    for (size_t i = 0; ok && i < n; i++)
        ok = (role[i] >= 'a' && role[i] <= 'z') || (role[i] >= '0' && role[i] <= '9') || role[i] == '_';
    if (!ok)
        return cpd_st_err(s, CPD_EUSAGE,
                          "'%s' is not a role name this tool accepts: 1 to 63 lower-case letters, digits or _, "
                          "not starting with a digit",
                          role ? role : "");
    return CPD_OK;
}

/* Runs one statement without parameters that returns no rows. */
static int exec1(cpd_store *s, const char *sql, const char *what)
{
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s, sql, &st);
    if (rc)
        return rc;
    if (cpd_db_step(st) != CPD_DB_DONE)
        rc = cpd_st_fail(s, what);
    cpd_db_finalize(st);
    return rc;
}

/* *found = 1 when a role of this name exists on the server. */
static int role_exists(cpd_store *s, const char *role, int *found)
{
    cpd_stmt *st = NULL;
    int rc = cpd_st_prepare(s, "SELECT 1 FROM pg_roles WHERE rolname = ?1", &st);
    if (rc)
        return rc;
    cpd_db_bind_text(st, 1, role, (size_t)-1);
    int r = cpd_db_step(st);
    *found = r == CPD_DB_ROW;
    if (r != CPD_DB_ROW && r != CPD_DB_DONE)
        rc = cpd_st_fail(s, "looking up a role");
    cpd_db_finalize(st);
    return rc;
}

/* The grant's squad: its id, or 0 for every squad (squad NULL), as the unique index counts it. */
static int grant_target(cpd_store *s, const char *squad, const char *role, int64_t *sid)
{
    int rc = pg_only(s);
    if (!rc)
        rc = check_role(s, role);
    cpd_squad q = {0};
    if (!rc && squad)
        rc = cpd_store_squad_get(s, squad, &q);
    *sid = q.id;
    return rc;
}

int cpd_store_squad_grant(cpd_store *s, const char *squad, const char *role)
{
    int64_t sid = 0;
    int found = 0;
    int rc = grant_target(s, squad, role, &sid);
    if (!rc)
        rc = role_exists(s, role, &found);
    if (rc)
        return rc;
    if (!found)
        return cpd_st_err(s, CPD_ENOENT,
                          "no role '%s' on the server: the database administrator creates it first (psql: CREATE "
                          "ROLE %s LOGIN IN ROLE cpdomain_coach)",
                          role, role);
    cpd_stmt *st = NULL;
    if ((rc = cpd_st_prepare(s,
                             "INSERT INTO cpd_squad_grant (squad_id, role_name) VALUES (?1, ?2) ON CONFLICT DO NOTHING",
                             &st)))
        return rc;
    if (sid)
        cpd_db_bind_int64(st, 1, sid);
    else
        cpd_db_bind_null(st, 1);
    cpd_db_bind_text(st, 2, role, (size_t)-1);
    if (cpd_db_step(st) != CPD_DB_DONE)
        rc = cpd_st_fail(s, "granting a squad");
    cpd_db_finalize(st);
    return rc;
}

int cpd_store_squad_revoke(cpd_store *s, const char *squad, const char *role)
{
    int64_t sid = 0;
    int rc = grant_target(s, squad, role, &sid);
    if (rc)
        return rc;
    cpd_stmt *st = NULL;
    if ((rc = cpd_st_prepare(s, "DELETE FROM cpd_squad_grant WHERE COALESCE(squad_id, 0) = ?1 AND role_name = ?2", &st)))
        return rc;
    cpd_db_bind_int64(st, 1, sid);
    cpd_db_bind_text(st, 2, role, (size_t)-1);
    if (cpd_db_step(st) != CPD_DB_DONE)
        rc = cpd_st_fail(s, "revoking a squad");
    else if (s->changes == 0)
        rc = cpd_st_err(s, CPD_ENOENT, "role '%s' holds no grant on %s%s%s", role, squad ? "squad '" : "all squads",
                        squad ? squad : "", squad ? "'" : "");
    cpd_db_finalize(st);
    return rc;
}

static void read_table(cpd_stmt *st, void *dst)
{
    cpd_st_text(st, 0, dst, 64);
}

int cpd_store_server_setup(cpd_store *s, const char *lab_role, const char *coach_role, int *created)
{
    *created = 0;
    int rc = pg_only(s);
    if (!rc)
        rc = check_role(s, lab_role);
    if (!rc)
        rc = check_role(s, coach_role);
    if (rc)
        return rc;
    if (strcmp(lab_role, coach_role) == 0)
        return cpd_st_err(s, CPD_EUSAGE, "the lab role and the coach role must differ (both are '%s')", lab_role);
    /* role names checked above: [a-z0-9_] only, so "%s" as a quoted identifier cannot break out */
    char sql[1024];
    const char *roles[2] = {lab_role, coach_role};
    for (int k = 0; k < 2; k++) {
        int found = 0;
        if ((rc = role_exists(s, roles[k], &found)))
            return rc;
        if (found)
            continue;
        snprintf(sql, sizeof sql, "CREATE ROLE \"%s\" NOLOGIN", roles[k]);
        if ((rc = exec1(s, sql, "creating a group role (the owner needs CREATEROLE)")))
            return rc;
        ++*created;
    }
    /* every table of the store's schema: read by both groups */
    cpd_stmt *st = NULL;
    char schema[64] = "";
    if ((rc = cpd_st_prepare(s, "SELECT current_schema()", &st)))
        return rc;
    if (cpd_db_step(st) == CPD_DB_ROW)
        cpd_st_text(st, 0, schema, sizeof schema);
    cpd_db_finalize(st);
    for (const char *p = schema; *p; p++)
        if (*p == '"')
            return cpd_st_err(s, CPD_EUSAGE, "the store's schema name '%s' holds a double quote", schema);
    if (!schema[0])
        return cpd_st_err(s, CPD_ESTORE, "the store has no current schema");
    snprintf(sql, sizeof sql, "GRANT USAGE ON SCHEMA \"%s\" TO \"%s\", \"%s\"", schema, lab_role, coach_role);
    if ((rc = exec1(s, sql, "granting the schema")))
        return rc;
    snprintf(sql, sizeof sql, "GRANT SELECT ON ALL TABLES IN SCHEMA \"%s\" TO \"%s\", \"%s\"", schema, lab_role,
             coach_role);
    if ((rc = exec1(s, sql, "granting reading")))
        return rc;
    snprintf(sql, sizeof sql, "GRANT USAGE ON ALL SEQUENCES IN SCHEMA \"%s\" TO \"%s\"", schema, coach_role);
    if ((rc = exec1(s, sql, "granting the sequences")))
        return rc;
    /* the coaches write exactly the tables under row-level security: the athletes and their data */
    if ((rc = cpd_st_prepare(s,
                             "SELECT c.relname FROM pg_class c JOIN pg_namespace n ON n.oid = c.relnamespace "
                             "WHERE n.nspname = current_schema() AND c.relkind = 'r' AND c.relrowsecurity "
                             "ORDER BY c.relname",
                             &st)))
        return rc;
    char(*tab)[64] = NULL;
    size_t nt = 0;
    rc = cpd_st_collect(s, st, sizeof *tab, read_table, (void **)&tab, &nt, "the tables under row-level security");
    cpd_db_finalize(st);
    if (rc)
        return rc;
    if (nt == 0) {
        free(tab);
        return cpd_st_err(s, CPD_ESTORE, "no table of the store is under row-level security: the store's access "
                                         "migration (db/pg/008_squads_access.sql) has not run");
    }
    for (size_t i = 0; i < nt && !rc; i++) {
        if (strchr(tab[i], '"'))
            continue;
        snprintf(sql, sizeof sql, "GRANT INSERT, UPDATE, DELETE ON \"%s\".\"%s\" TO \"%s\"", schema, tab[i], coach_role);
        rc = exec1(s, sql, "granting writing");
    }
    free(tab);
    if (rc)
        return rc;
    /* the lab sees every squad; granting twice is no error */
    return cpd_store_squad_grant(s, NULL, lab_role);
}
