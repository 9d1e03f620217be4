/* store_open.c: opening and closing a store on either engine, its schema version, and the
 * migrations that bring an older store up to this version in one transaction. */
#include "store_codec.h"
#include "store_int.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

int cpd_store_version(const cpd_store *cs)
{
    cpd_store *s = (cpd_store *)cs; /* reading the version changes nothing but the last-error fields */
    cpd_stmt *st = NULL;
    int v = -1;
    if (s->engine == CPD_ENGINE_PG) { /* a database without the table has no store yet: version 0 */
        if (cpd_db_prepare(s, "SELECT to_regclass('cpd_version') IS NOT NULL", &st) == CPD_OK &&
            cpd_db_step(st) == CPD_DB_ROW)
            v = cpd_db_int(st, 0) ? -2 : 0;
        cpd_db_finalize(st);
        st = NULL;
        if (v != -2)
            return v;
    }
    if (cpd_db_prepare(s, s->engine == CPD_ENGINE_PG ? "SELECT max(version) FROM cpd_version" : "PRAGMA user_version",
                       &st) == CPD_OK &&
        cpd_db_step(st) == CPD_DB_ROW)
        v = cpd_db_int(st, 0);
    cpd_db_finalize(st);
    return v;
}

static int set_version(cpd_store *s, int v)
{
    char sql[160];
    if (s->engine == CPD_ENGINE_PG)
        snprintf(sql, sizeof sql,
                 "CREATE TABLE IF NOT EXISTS cpd_version (version INTEGER NOT NULL); DELETE FROM cpd_version; "
                 "INSERT INTO cpd_version VALUES (%d)",
                 v);
    else
        snprintf(sql, sizeof sql, "PRAGMA user_version = %d", v);
    return cpd_db_exec(s, sql);
}

/* Migration k in the engine's words: as written for SQLite; for PostgreSQL with its types
 * translated (cpd_pg_ddl) and followed by db/pg/'s file of the same number, if any. */
static int run_migration(cpd_store *s, int k)
{
    if (s->engine != CPD_ENGINE_PG)
        return cpd_db_exec(s, cpd_store_migrations[k]);
    char *ddl = cpd_pg_ddl(cpd_store_migrations[k]);
    if (!ddl)
        return cpd_st_err(s, CPD_ENOMEM, "out of memory"), CPD_DB_ERROR;
    int r = cpd_db_exec(s, ddl);
    free(ddl);
    if (r == CPD_DB_OK && cpd_store_migrations_pg[k])
        r = cpd_db_exec(s, cpd_store_migrations_pg[k]);
    return r;
}

static int migrate(cpd_store *s, int create)
{
    int v = cpd_store_version(s);
    if (v < 0)
        return cpd_st_fail(s, "reading the store version");
    if (v > cpd_store_migration_count)
        return cpd_st_err(s, CPD_ESTORE,
                          "the store is version %d but this cpdomain knows versions up to %d: "
                          "use a newer cpdomain",
                          v, cpd_store_migration_count);
    if (v == cpd_store_migration_count)
        return CPD_OK;
    if (v == 0 && !create && s->engine == CPD_ENGINE_PG)
        return cpd_st_err(s, CPD_ENOENT, "no cpdomain store in the database %s: create it with 'cpdomain --db URI init'",
                          s->where);
    int pg = s->engine == CPD_ENGINE_PG;
    if (cpd_db_exec(s, pg ? "BEGIN ISOLATION LEVEL SERIALIZABLE" : "BEGIN IMMEDIATE") != CPD_DB_OK)
        return cpd_st_fail(s, "starting the upgrade");
    if (pg) {
        /* two first commands at once: the second waits here, then finds the work done */
        if (cpd_db_exec(s, "SELECT pg_advisory_xact_lock(4242018)") != CPD_DB_OK) {
            int rc = cpd_st_fail(s, "starting the upgrade");
            cpd_db_exec(s, "ROLLBACK");
            return rc;
        }
        if ((v = cpd_store_version(s)) == cpd_store_migration_count) {
            cpd_db_exec(s, "COMMIT");
            return CPD_OK;
        }
    }
    for (int k = v; k < cpd_store_migration_count; k++) {
        if (run_migration(s, k) != CPD_DB_OK) {
            int rc = s->errcode == CPD_DB_PERM
                         ? cpd_st_err(s, CPD_ENOPERM,
                                      "the store needs upgrading to version %d, which only its owner may do: ask "
                                      "them to run 'cpdomain --db URI init' (%s)",
                                      cpd_store_migration_count, cpd_db_errmsg(s))
                     : s->errcode == CPD_DB_RETRY
                         ? cpd_st_fail(s, "upgrading the store")
                         : cpd_st_err(s, CPD_ESTORE, "upgrading the store with %s: %s", cpd_store_migration_files[k],
                                      cpd_db_errmsg(s));
            cpd_db_exec(s, "ROLLBACK");
            return rc;
        }
        /* 007 adds the compact encoding; the samples already stored are re-encoded now */
        if (strstr(cpd_store_migration_files[k], "007_") && cpd_st_session_pack(s)) {
            cpd_db_exec(s, "ROLLBACK");
            return CPD_ESTORE;
        }
    }
    if (set_version(s, cpd_store_migration_count) != CPD_DB_OK || cpd_db_exec(s, "COMMIT") != CPD_DB_OK) {
        int rc = cpd_st_fail(s, "finishing the upgrade");
        cpd_db_exec(s, "ROLLBACK");
        return rc;
    }
    return CPD_OK;
}

int cpd_store_open(const char *path, int create, cpd_store **out, char *msg)
{
    return cpd_store_open_wait(path, create, CPD_STORE_BUSY_MS, out, msg);
}

const char *cpd_store_where(const cpd_store *s)
{
    return s ? s->where : "";
}

int cpd_store_is_server(const char *path)
{
    return cpd_pg_is_uri(path);
}

int cpd_store_open_wait(const char *path, int create, int busy_ms, cpd_store **out, char *msg)
{
    *out = NULL;
    msg[0] = '\0';
    int pg = cpd_pg_is_uri(path);
    struct stat sb;
    if (!pg && !create && stat(path, &sb) != 0) {
        snprintf(msg, CPD_MSG_MAX, "no store at '%s': create it with 'cpdomain --db %s init'", path, path);
        return CPD_ENOENT;
    }
    cpd_store *s = calloc(1, sizeof *s);
    if (!s)
        return CPD_ENOMEM;
    s->busy_ms = busy_ms > 0 ? busy_ms : 0;
    s->engine = pg ? CPD_ENGINE_PG : CPD_ENGINE_SQLITE;
    int rc = pg ? cpd_pg_open(s, path, msg) : cpd_lite_open(s, path, create, msg);
    if (rc && s->errcode == CPD_DB_BUSY)
        snprintf(msg, CPD_MSG_MAX, "%s", (cpd_st_fail(s, path), s->err));
    else if (rc == CPD_OK && (rc = migrate(s, create)) != CPD_OK)
        snprintf(msg, CPD_MSG_MAX, "%s", s->err);
    if (rc) {
        cpd_store_close(s);
        return rc;
    }
    *out = s;
    return CPD_OK;
}

void cpd_store_close(cpd_store *s)
{
    if (!s)
        return;
    if (s->engine == CPD_ENGINE_PG)
        cpd_pg_close(s);
    else
        cpd_lite_close(s);
    cpd_codec_free(s->codec);
    free(s);
}

