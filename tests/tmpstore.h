/* tmpstore.h: temporary stores for the C tests, on either engine.
 * SQLite (default): a reserved name /tmp/cpd_TAG_XXXXXX (the file itself removed, so the store
 * creates it), removed afterwards with its WAL and shared-memory files.
 * PostgreSQL: when CPDOMAIN_TEST_PG holds the URI of a server's superuser (make test-pg), a fresh
 * empty database on that server (through libpq), dropped afterwards; the "path" is its URI.
 * tmpstore_exec runs SQL on a store through a connection of its own (sqlite3 or libpq). */
#ifndef CPDOMAIN_TESTS_TMPSTORE_H
#define CPDOMAIN_TESTS_TMPSTORE_H

#include "cpdomain/status.h"
#include "cpdomain/store.h"

#include <libpq-fe.h>
#include <sqlite3.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#define TMPSTORE_MAX 512 /* room for a path or a URI */

/* In a cmocka test: a check of the SQLite file itself (its bytes, pragmas, SQLite-only DDL) is
 * skipped on PostgreSQL, saying why (cmocka counts it; tests/run.sh shows it). */
#define TMPSTORE_SQLITE_ONLY(why)                                                                  \
    do {                                                                                           \
        if (tmpstore_pg()) {                                                                       \
            print_message("[  SKIP    ] SQLite file only: %s\n", why);                             \
            skip();                                                                                \
        }                                                                                          \
    } while (0)

/* The base URI of the PostgreSQL test server, or NULL in SQLite mode. */
static inline const char *tmpstore_pg(void)
{
    const char *b = getenv("CPDOMAIN_TEST_PG");
    return b && *b ? b : NULL;
}

/* out: base with its database (the path after the authority) replaced by db. */
static inline int tmpstore_pg_uri(const char *base, const char *db, char *out, size_t n)
{
    const char *auth = strstr(base, "://");
    if (!auth)
        return -1;
    auth += 3;
    size_t a = strcspn(auth, "/?"); /* the authority: user:password@host:port, or nothing */
    const char *rest = auth + a;
    if (*rest == '/')
        rest += strcspn(rest, "?"); /* skip the old database name */
    int w = snprintf(out, n, "%.*s/%s%s", (int)(auth + a - base), base, db, rest);
    return w > 0 && (size_t)w < n ? 0 : -1;
}

/* Runs one statement on the server's base database (CREATE/DROP DATABASE). */
static inline int tmpstore_pg_admin(const char *sql)
{
    PGconn *c = PQconnectdb(tmpstore_pg());
    int ok = PQstatus(c) == CONNECTION_OK;
    if (ok) {
        PGresult *r = PQexec(c, "SET client_min_messages = warning");
        PQclear(r);
        r = PQexec(c, sql);
        ok = PQresultStatus(r) == PGRES_COMMAND_OK;
        if (!ok)
            fprintf(stderr, "tmpstore: %s: %s", sql, PQerrorMessage(c));
        PQclear(r);
    } else {
        fprintf(stderr, "tmpstore: cannot connect to CPDOMAIN_TEST_PG: %s", PQerrorMessage(c));
    }
    PQfinish(c);
    return ok ? 0 : -1;
}

/* The database name of a store URI made by tmpstore_new (into name, n bytes). */
static inline void tmpstore_pg_dbname(const char *uri, char *name, size_t n)
{
    const char *p = strstr(uri, "://");
    p = p ? p + 3 : uri;
    p += strcspn(p, "/?");
    if (*p == '/')
        p++;
    else
        p = "";
    snprintf(name, n, "%.*s", (int)strcspn(p, "?"), p);
}

/* A new temporary store location in path (TMPSTORE_MAX bytes), not yet a store: cpd_store_open
 * with create makes it. tag names it (letters, digits, underscores). 0 or -1. */
static inline int tmpstore_new(char *path, size_t n, const char *tag)
{
    if (!tmpstore_pg()) {
        snprintf(path, n, "/tmp/cpd_%s_XXXXXX", tag);
        int fd = mkstemp(path);
        if (fd < 0)
            return -1;
        close(fd);
        unlink(path); /* the store must create it */
        return 0;
    }
    static unsigned serial;
    char db[64], sql[160];
    snprintf(db, sizeof db, "cpdu_%ld_%u_%s", (long)getpid(), serial++, tag);
    snprintf(sql, sizeof sql, "DROP DATABASE IF EXISTS \"%s\" WITH (FORCE)", db);
    if (tmpstore_pg_admin(sql))
        return -1;
    snprintf(sql, sizeof sql, "CREATE DATABASE \"%s\"", db);
    if (tmpstore_pg_admin(sql))
        return -1;
    return tmpstore_pg_uri(tmpstore_pg(), db, path, n);
}

/* Removes a temporary store: the file with its WAL and shared-memory files, or the database. */
static inline void tmpstore_remove(const char *path)
{
    if (strstr(path, "://")) {
        char db[128], sql[192];
        tmpstore_pg_dbname(path, db, sizeof db);
        snprintf(sql, sizeof sql, "DROP DATABASE IF EXISTS \"%s\" WITH (FORCE)", db);
        tmpstore_pg_admin(sql);
        return;
    }
    char p[TMPSTORE_MAX + 8];
    unlink(path);
    snprintf(p, sizeof p, "%s-wal", path);
    unlink(p);
    snprintf(p, sizeof p, "%s-shm", path);
    unlink(p);
}

/* A new empty store made and opened at a fresh location (path, n bytes): 0, or -1 with the reason
 * on stderr. Closed and removed with tmpstore_close. */
static inline int tmpstore_open(char *path, size_t n, const char *tag, cpd_store **s)
{
    char msg[CPD_MSG_MAX];
    *s = NULL;
    if (tmpstore_new(path, n, tag))
        return -1;
    if (cpd_store_open(path, 1, s, msg) != CPD_OK) {
        fprintf(stderr, "tmpstore: %s\n", msg);
        return -1;
    }
    return 0;
}

static inline void tmpstore_close(const char *path, cpd_store *s)
{
    cpd_store_close(s);
    tmpstore_remove(path);
}

/* Runs sql on the PostgreSQL database at uri; with out, the first column of the first row into it
 * (n bytes; "" when there is no row). 0 or -1. */
static inline int tmpstore_pg_run(const char *uri, const char *sql, char *out, size_t n)
{
    PGconn *c = PQconnectdb(uri);
    int ok = PQstatus(c) == CONNECTION_OK;
    if (ok) {
        PGresult *r = PQexec(c, sql);
        ExecStatusType st = PQresultStatus(r);
        ok = st == PGRES_TUPLES_OK || (!out && st == PGRES_COMMAND_OK);
        if (ok && out && PQntuples(r) > 0)
            snprintf(out, n, "%s", PQgetvalue(r, 0, 0));
        PQclear(r);
    }
    if (!ok)
        fprintf(stderr, "tmpstore: %s: %s", sql, PQerrorMessage(c));
    PQfinish(c);
    return ok ? 0 : -1;
}

/* Runs sql (one or more statements) on the store at path through a connection of its own;
 * 0, or -1 with the reason on stderr. */
static inline int tmpstore_exec(const char *path, const char *sql)
{
    if (strstr(path, "://"))
        return tmpstore_pg_run(path, sql, NULL, 0);
    sqlite3 *db = NULL;
    char *e = NULL;
    int rc = sqlite3_open(path, &db) == SQLITE_OK ? sqlite3_exec(db, sql, NULL, NULL, &e) : SQLITE_ERROR;
    if (rc != SQLITE_OK)
        fprintf(stderr, "tmpstore: %s: %s\n", sql, e ? e : sqlite3_errmsg(db));
    sqlite3_free(e);
    sqlite3_close(db);
    return rc == SQLITE_OK ? 0 : -1;
}

/* The first column of the first row of a query on the store at path, as text (into out, n bytes;
 * "" when there is no row). 0 or -1. */
static inline int tmpstore_query1(const char *path, const char *sql, char *out, size_t n)
{
    out[0] = '\0';
    if (strstr(path, "://"))
        return tmpstore_pg_run(path, sql, out, n);
    sqlite3 *db = NULL;
    sqlite3_stmt *st = NULL;
    int ok = sqlite3_open(path, &db) == SQLITE_OK && sqlite3_prepare_v2(db, sql, -1, &st, NULL) == SQLITE_OK;
    if (ok) {
        int s = sqlite3_step(st);
        ok = s == SQLITE_ROW || s == SQLITE_DONE;
        if (s == SQLITE_ROW && sqlite3_column_text(st, 0))
            snprintf(out, n, "%s", (const char *)sqlite3_column_text(st, 0));
    }
    if (!ok)
        fprintf(stderr, "tmpstore: %s: %s\n", sql, sqlite3_errmsg(db));
    sqlite3_finalize(st);
    sqlite3_close(db);
    return ok ? 0 : -1;
}

#endif
