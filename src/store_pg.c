/* store_pg.c: the PostgreSQL engine of the store, through libpq. Everything PostgreSQL says or
 * needs differently from SQLite is here: connecting, ?N parameters as $N, the migrations' types,
 * the server's error codes as the statement layer's, and which failures may pass on a retry. */
#include "store_pg.h"

#include <libpq-fe.h>

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

struct cpd_pgstmt {
    cpd_store *s;
    char *sql;     /* with $N parameters */
    int nparams;   /* the highest N */
    char **val;    /* per parameter: the bytes (owned), NULL for NULL */
    int *len;
    int *fmt;      /* 1: binary (bytea), 0: text */
    Oid *oid;
    PGresult *res; /* after the first step */
    int row;       /* the current row, -1 before the first */
    int ran;
    unsigned char **blob; /* per column: the current row's bytea, decoded at first use */
    size_t *blob_n;
    int ncols;
};

static PGconn *conn(cpd_store *s)
{
    return (PGconn *)s->db;
}

int cpd_pg_is_uri(const char *path)
{
    return path && (strncmp(path, "postgresql://", 13) == 0 || strncmp(path, "postgres://", 11) == 0);
}

/* ---- connecting ---- */

/* The URI as it may be shown: a password in "user:password@" or "password=" becomes ***. */
static void redact(const char *uri, char *out, size_t n)
{
    char buf[CPD_MSG_MAX];
    snprintf(buf, sizeof buf, "%s", uri);
    char *scheme = strstr(buf, "://");
    char *at = scheme ? strchr(scheme + 3, '@') : NULL;
    char *slash = scheme ? strchr(scheme + 3, '/') : NULL;
    if (at && (!slash || at < slash)) {
        char *colon = memchr(scheme + 3, ':', (size_t)(at - (scheme + 3)));
        if (colon) {
            memmove(colon + 4, at, strlen(at) + 1);
            memcpy(colon, ":***", 4);
        }
    }
    char *pw = strstr(buf, "password=");
    while (pw) {
        char *v = pw + 9, *end = v + strcspn(v, "& ");
        if (end - v > 3 || strncmp(v, "***", 3) != 0) {
            memmove(v + 3, end, strlen(end) + 1);
            memcpy(v, "***", 3);
        }
        pw = strstr(v, "password=");
    }
    snprintf(out, n, "%s", buf);
}

static void quiet_notices(void *arg, const char *message)
{
    (void)arg;
    (void)message; /* the server's NOTICEs (an object that already exists, ...) are not the user's news */
}

/* libpq's message on one line, without its "FATAL:  " or "ERROR:  " prefix and final newline. */
static void one_line(const char *m, char *out, size_t n)
{
    if (!m)
        m = "";
    for (const char *p; (p = strstr(m, "FATAL:  ")) || (p = strstr(m, "ERROR:  "));)
        if (p == m)
            m += 8;
        else
            break;
    size_t k = 0;
    for (; *m && k + 1 < n; m++) {
        char ch = (*m == '\n' || *m == '\r' || *m == '\t') ? ' ' : *m;
        if (ch != ' ' || (k > 0 && out[k - 1] != ' '))
            out[k++] = ch;
    }
    while (k > 0 && out[k - 1] == ' ')
        k--;
    out[k] = '\0';
}

int cpd_pg_open(cpd_store *s, const char *uri, char *msg)
{
    redact(uri, s->where, sizeof s->where);
    char *perr = NULL;
    PQconninfoOption *opts = PQconninfoParse(uri, &perr);
    if (!opts) {
        char line[CPD_MSG_MAX];
        one_line(perr ? perr : "out of memory", line, sizeof line);
        snprintf(msg, CPD_MSG_MAX,
                 "--db %s: not a PostgreSQL connection URI (%s); the form is "
                 "postgresql://[user@][host][:port]/database[?param=value&...]",
                 s->where, line);
        PQfreemem(perr);
        return CPD_EUSAGE;
    }
    PQconninfoFree(opts);
    /* connect_timeout and the application name are defaults the URI may override */
    const char *const keys[] = {"connect_timeout", "fallback_application_name", "dbname", NULL};
    const char *const vals[] = {"10", "cpdomain", uri, NULL};
    PGconn *c = PQconnectdbParams(keys, vals, 1);
    if (!c) {
        snprintf(msg, CPD_MSG_MAX, "connecting to %s: out of memory", s->where);
        return CPD_ENOMEM;
    }
    s->db = c;
    if (PQstatus(c) != CONNECTION_OK) {
        char line[CPD_MSG_MAX];
        one_line(PQerrorMessage(c), line, sizeof line);
        int rc;
        const char *what, *hint;
        char *fatal = strstr(line, "FATAL: ");
        if (fatal)
            memmove(fatal, fatal + 7, strlen(fatal + 7) + 1);
        if (strstr(line, "password authentication failed") || strstr(line, "no password supplied") ||
            strstr(line, "authentication failed") || strstr(line, "pg_hba.conf")) {
            rc = CPD_ENOPERM;
            what = "the PostgreSQL server refused the login to";
            hint = "check the user name and the password (libpq reads it from ~/.pgpass or $PGPASSWORD; "
                   "cpdomain never stores one)";
        } else if (strstr(line, "role \"") && strstr(line, "does not exist")) {
            rc = CPD_ENOPERM;
            what = "the PostgreSQL server refused the login to";
            hint = "ask the database's owner for a login role (README: 'Sharing a store on a server')";
        } else if (strstr(line, "database \"") && strstr(line, "does not exist")) {
            rc = CPD_ENOENT;
            what = "no such database for the store";
            hint = "create the database first (createdb NAME, as its owner), then run 'cpdomain --db URI init'";
        } else {
            rc = CPD_ETEMP;
            what = "cannot reach the PostgreSQL server at";
            hint = "check the host, port and socket directory in the URI, then try again";
        }
        snprintf(msg, CPD_MSG_MAX, "%s %s: %s; %s", what, s->where, line, hint);
        return rc;
    }
    PQsetNoticeProcessor(c, quiet_notices, NULL);
    char set[128];
    /* a write waits this long for another session's row lock, as SQLite waits for the file lock */
    /* (0 would be "wait for ever" to PostgreSQL; SQLite's 0 is "do not wait") */
    snprintf(set, sizeof set, "SET lock_timeout = %d; SET client_min_messages = warning", s->busy_ms > 0 ? s->busy_ms : 1);
    PGresult *r = PQexec(c, set);
    int ok = PQresultStatus(r) == PGRES_COMMAND_OK;
    PQclear(r);
    if (!ok) {
        one_line(PQerrorMessage(c), msg, CPD_MSG_MAX);
        return CPD_ESTORE;
    }
    return CPD_OK;
}

void cpd_pg_close(cpd_store *s)
{
    if (s->db)
        PQfinish(conn(s));
    s->db = NULL;
}

int cpd_pg_in_txn(cpd_store *s)
{
    if (!s->db || PQstatus(conn(s)) != CONNECTION_OK)
        return 0;
    return PQtransactionStatus(conn(s)) != PQTRANS_IDLE;
}

/* ---- errors ---- */

/* A failed constraint in the words SQLite uses ("UNIQUE constraint failed: athlete.code"), so a
 * message reads the same on both engines; the server's own words follow in brackets. */
static void constraint_words(const PGresult *r, int code, char *line, size_t n)
{
    if ((code & 0xff) != CPD_DB_CONSTRAINT)
        return;
    const char *table = PQresultErrorField(r, PG_DIAG_TABLE_NAME);
    const char *column = PQresultErrorField(r, PG_DIAG_COLUMN_NAME);
    const char *name = PQresultErrorField(r, PG_DIAG_CONSTRAINT_NAME);
    const char *detail = PQresultErrorField(r, PG_DIAG_MESSAGE_DETAIL);
    char what[CPD_MSG_MAX / 2] = "";
    if (code == CPD_DB_CONSTRAINT_UNIQUE) {
        /* DETAIL: Key (athlete_id, kind, content_hash)=(...) already exists.
         * -> UNIQUE constraint failed: session.athlete_id, session.kind, session.content_hash */
        const char *k = detail ? strstr(detail, "Key (") : NULL;
        const char *e = k ? strstr(k, ")=") : NULL;
        const char *t = table ? table : "?";
        size_t m = (size_t)snprintf(what, sizeof what, "UNIQUE constraint failed:");
        for (const char *c = k ? k + 5 : NULL; c && c < e && m < sizeof what;) {
            size_t len = strcspn(c, ",)");
            m += (size_t)snprintf(what + m, sizeof what - m, "%s %s.%.*s", c == k + 5 ? "" : ",", t, (int)len, c);
            c += len;
            while (c < e && (*c == ',' || *c == ' '))
                c++;
        }
    } else if (code == CPD_DB_CONSTRAINT_FOREIGNKEY)
        snprintf(what, sizeof what, "FOREIGN KEY constraint failed");
    else if (code == CPD_DB_CONSTRAINT_NOTNULL)
        snprintf(what, sizeof what, "NOT NULL constraint failed: %s.%s", table ? table : "?", column ? column : "?");
    else if (code == CPD_DB_CONSTRAINT_CHECK)
        snprintf(what, sizeof what, "CHECK constraint failed: %s", name ? name : "?");
    else
        return;
    char server[CPD_MSG_MAX];
    snprintf(server, sizeof server, "%s", line);
    snprintf(line, n, "%s (the server: %s)", what, server);
}

/* Records the failure of result r (NULL: none came back) and returns the layer's code. */
static int pg_fail(cpd_store *s, const PGresult *r)
{
    const char *state = r ? PQresultErrorField(r, PG_DIAG_SQLSTATE) : NULL;
    const char *primary = r ? PQresultErrorField(r, PG_DIAG_MESSAGE_PRIMARY) : NULL;
    char line[CPD_MSG_MAX];
    one_line(primary ? primary : PQerrorMessage(conn(s)), line, sizeof line);
    int code = CPD_DB_ERROR;
    if (!state || PQstatus(conn(s)) != CONNECTION_OK || strncmp(state, "08", 2) == 0 ||
        strncmp(state, "57P", 3) == 0) {
        code = CPD_DB_RETRY;
        snprintf(s->dberr, sizeof s->dberr, "the connection to the PostgreSQL server was lost (%s)",
                 line[0] ? line : "no reply");
        s->retryable = 1;
        s->lost = 1;
        s->errcode = code;
        return code;
    }
    if (strcmp(state, "40001") == 0 || strcmp(state, "40P01") == 0) {
        code = CPD_DB_RETRY; /* serialization failure, deadlock: another writer won; run again */
        s->retryable = 1;
    } else if (strcmp(state, "23505") == 0)
        code = CPD_DB_CONSTRAINT_UNIQUE;
    else if (strcmp(state, "23503") == 0)
        code = CPD_DB_CONSTRAINT_FOREIGNKEY;
    else if (strcmp(state, "23514") == 0)
        code = CPD_DB_CONSTRAINT_CHECK;
    else if (strcmp(state, "23502") == 0)
        code = CPD_DB_CONSTRAINT_NOTNULL;
    else if (strncmp(state, "23", 2) == 0)
        code = CPD_DB_CONSTRAINT;
    else if (strcmp(state, "42501") == 0)
        code = CPD_DB_PERM;
    else if (strcmp(state, "55P03") == 0)
        code = CPD_DB_BUSY;
    constraint_words(r, code, line, sizeof line);
    snprintf(s->dberr, sizeof s->dberr, "%s", line);
    s->errcode = code;
    return code;
}

int cpd_pg_exec(cpd_store *s, const char *sql)
{
    PGresult *r = PQexec(conn(s), sql);
    ExecStatusType st = PQresultStatus(r);
    int rc = CPD_DB_OK;
    if (st != PGRES_COMMAND_OK && st != PGRES_TUPLES_OK)
        rc = pg_fail(s, r);
    else if (strcmp(PQcmdStatus(r), "ROLLBACK") == 0 && strncmp(sql, "COMMIT", 6) == 0) {
        /* COMMIT of a transaction that had failed is a ROLLBACK */
        snprintf(s->dberr, sizeof s->dberr, "the transaction had failed and was rolled back");
        s->errcode = rc = CPD_DB_ERROR;
    }
    PQclear(r);
    return rc;
}

/* ---- statements ---- */

/* sql with ?N (or ?) as $N, outside quotes; *np receives the highest N. */
static char *dollar_params(const char *sql, int *np)
{
    size_t n = strlen(sql);
    char *out = malloc(2 * n + 1);
    if (!out)
        return NULL;
    int next = 0, high = 0;
    char quote = 0;
    size_t k = 0;
    for (size_t i = 0; i < n; i++) {
        char ch = sql[i];
        if (quote) {
            if (ch == quote)
                quote = 0;
            out[k++] = ch;
        } else if (ch == '\'' || ch == '"') {
            quote = ch;
            out[k++] = ch;
        } else if (ch == '?') {
            int v = 0;
            size_t j = i + 1;
            while (j < n && sql[j] >= '0' && sql[j] <= '9' && v < 100000)
                v = 10 * v + (sql[j++] - '0');
            if (j == i + 1)
                v = ++next;
            else
                next = v;
            if (v > high)
                high = v;
            k += (size_t)sprintf(out + k, "$%d", v);
            i = j - 1;
        } else
            out[k++] = ch;
    }
    out[k] = '\0';
    *np = high;
    return out;
}

int cpd_pgs_prepare(cpd_store *s, const char *sql, cpd_pgstmt **out)
{
    *out = NULL;
    cpd_pgstmt *p = calloc(1, sizeof *p);
    if (!p)
        goto oom;
    p->s = s;
    p->row = -1;
    if (!(p->sql = dollar_params(sql, &p->nparams)))
        goto oom;
    if (p->nparams > 0) {
        size_t np = (size_t)p->nparams;
        p->val = calloc(np, sizeof *p->val);
        p->len = calloc(np, sizeof *p->len);
        p->fmt = calloc(np, sizeof *p->fmt);
        p->oid = calloc(np, sizeof *p->oid);
        if (!p->val || !p->len || !p->fmt || !p->oid)
            goto oom;
    }
    *out = p;
    return CPD_DB_OK;
oom:
    cpd_pgs_finalize(p);
    snprintf(s->dberr, sizeof s->dberr, "out of memory");
    return (s->errcode = CPD_DB_NOMEM);
}

static void clear_result(cpd_pgstmt *p)
{
    for (int j = 0; p->blob && j < p->ncols; j++) {
        PQfreemem(p->blob[j]);
        p->blob[j] = NULL;
    }
    free(p->blob);
    free(p->blob_n);
    p->blob = NULL;
    p->blob_n = NULL;
    PQclear(p->res);
    p->res = NULL;
    p->ran = 0;
    p->row = -1;
    p->ncols = 0;
}

int cpd_pgs_bind(cpd_pgstmt *p, int idx, unsigned oid, const void *v, size_t n, int binary)
{
    if (idx < 1 || idx > p->nparams) {
        snprintf(p->s->dberr, sizeof p->s->dberr, "parameter %d out of range", idx);
        return (p->s->errcode = CPD_DB_ERROR);
    }
    if (n > 0x7fffffff) {
        snprintf(p->s->dberr, sizeof p->s->dberr, "a value of %zu bytes is too long for the server", n);
        return (p->s->errcode = CPD_DB_ERROR);
    }
    size_t k = (size_t)idx - 1;
    free(p->val[k]);
    p->val[k] = NULL;
    if (v) {
        if (!(p->val[k] = malloc(n + 1))) {
            snprintf(p->s->dberr, sizeof p->s->dberr, "out of memory");
            return (p->s->errcode = CPD_DB_ERROR);
        }
        memcpy(p->val[k], v, n);
        p->val[k][n] = '\0';
    }
    p->len[k] = (int)n;
    p->fmt[k] = binary;
    p->oid[k] = oid;
    return CPD_DB_OK;
}

int cpd_pgs_step(cpd_pgstmt *p)
{
    cpd_store *s = p->s;
    if (!p->ran) {
        clear_result(p);
        p->ran = 1;
        p->res = PQexecParams(conn(s), p->sql, p->nparams, p->oid, (const char *const *)p->val, p->len, p->fmt, 0);
        ExecStatusType st = PQresultStatus(p->res);
        if (st != PGRES_COMMAND_OK && st != PGRES_TUPLES_OK) {
            int code = pg_fail(s, p->res);
            PQclear(p->res);
            p->res = NULL;
            return code;
        }
        const char *ct = PQcmdTuples(p->res);
        s->changes = ct && *ct ? strtoll(ct, NULL, 10) : 0;
        p->ncols = PQnfields(p->res);
        if (p->ncols > 0) {
            p->blob = calloc((size_t)p->ncols, sizeof *p->blob);
            p->blob_n = calloc((size_t)p->ncols, sizeof *p->blob_n);
            if (!p->blob || !p->blob_n) {
                snprintf(s->dberr, sizeof s->dberr, "out of memory");
                return (s->errcode = CPD_DB_ERROR);
            }
        }
    }
    for (int j = 0; p->blob && j < p->ncols; j++) {
        PQfreemem(p->blob[j]);
        p->blob[j] = NULL;
    }
    if (p->row + 1 < PQntuples(p->res)) {
        p->row++;
        return CPD_DB_ROW;
    }
    p->row = PQntuples(p->res);
    return CPD_DB_DONE;
}

void cpd_pgs_reset(cpd_pgstmt *p)
{
    clear_result(p);
}

void cpd_pgs_finalize(cpd_pgstmt *p)
{
    if (!p)
        return;
    clear_result(p);
    for (int k = 0; p->val && k < p->nparams; k++)
        free(p->val[k]);
    free(p->val);
    free(p->len);
    free(p->fmt);
    free(p->oid);
    free(p->sql);
    free(p);
}

static int has_cell(const cpd_pgstmt *p, int col)
{
    return p->res && p->row >= 0 && p->row < PQntuples(p->res) && col >= 0 && col < p->ncols;
}

int cpd_pgs_type(cpd_pgstmt *p, int col)
{
    if (!has_cell(p, col) || PQgetisnull(p->res, p->row, col))
        return CPD_DB_NULL;
    switch (PQftype(p->res, col)) {
    case 16: /* bool */
    case 20: /* int8 */
    case 21: /* int2 */
    case 23: /* int4 */
    case 26: /* oid */
        return CPD_DB_INTEGER;
    case 700:  /* float4 */
    case 701:  /* float8 */
    case 1700: /* numeric */
        return CPD_DB_FLOAT;
    case CPD_PG_BYTEA:
        return CPD_DB_BLOB;
    default:
        return CPD_DB_TEXT;
    }
}

int cpd_pgs_is_bool(cpd_pgstmt *p, int col)
{
    return has_cell(p, col) && PQftype(p->res, col) == 16;
}

const char *cpd_pgs_text(cpd_pgstmt *p, int col)
{
    if (!has_cell(p, col) || PQgetisnull(p->res, p->row, col))
        return NULL;
    return PQgetvalue(p->res, p->row, col);
}

const void *cpd_pgs_blob(cpd_pgstmt *p, int col, size_t *n)
{
    *n = 0;
    if (!has_cell(p, col) || PQgetisnull(p->res, p->row, col))
        return NULL;
    if (PQftype(p->res, col) != CPD_PG_BYTEA) { /* text read as bytes, as SQLite allows */
        *n = (size_t)PQgetlength(p->res, p->row, col);
        return PQgetvalue(p->res, p->row, col);
    }
    if (!p->blob[col]) {
        size_t len = 0;
        p->blob[col] = PQunescapeBytea((const unsigned char *)PQgetvalue(p->res, p->row, col), &len);
        p->blob_n[col] = len;
    }
    *n = p->blob_n[col];
    /* an empty value is a valid, empty blob: a non-NULL pointer */
    return p->blob[col] ? (const void *)p->blob[col] : NULL;
}

size_t cpd_pgs_bytes(cpd_pgstmt *p, int col)
{
    size_t n;
    cpd_pgs_blob(p, col, &n);
    return n;
}

/* ---- the migrations' DDL ---- */

static int is_word(char ch)
{
    return (ch >= 'A' && ch <= 'Z') || (ch >= 'a' && ch <= 'z') || (ch >= '0' && ch <= '9') || ch == '_';
}

/* The next word of sql from i, skipping blanks; its start and length. */
static size_t next_word(const char *sql, size_t i, size_t *len)
{
    while (sql[i] == ' ' || sql[i] == '\t' || sql[i] == '\n' || sql[i] == '\r')
        i++;
    size_t j = i;
    while (is_word(sql[j]))
        j++;
    *len = j - i;
    return i;
}

static int word_is(const char *sql, size_t at, size_t len, const char *w)
{
    return strlen(w) == len && strncmp(sql + at, w, len) == 0;
}

char *cpd_pg_ddl(const char *sql)
{
    size_t n = strlen(sql);
    char *out = malloc(5 * n + 64);
    if (!out)
        return NULL;
    size_t k = 0;
    const char *prev = "";
    size_t prev_len = 0;
    for (size_t i = 0; i < n;) {
        char ch = sql[i];
        if (ch == '-' && sql[i + 1] == '-') { /* a comment, kept as it is */
            while (i < n && sql[i] != '\n')
                out[k++] = sql[i++];
            continue;
        }
        if (ch == '\'' || ch == '"') {
            out[k++] = sql[i++];
            while (i < n && sql[i] != ch)
                out[k++] = sql[i++];
            if (i < n)
                out[k++] = sql[i++];
            continue;
        }
        if (!is_word(ch)) {
            out[k++] = sql[i++];
            continue;
        }
        size_t j = i;
        while (j < n && is_word(sql[j]))
            j++;
        size_t len = j - i;
        const char *w = sql + i;
        const char *rep = NULL;
        size_t skip_to = j;
        if (word_is(sql, i, len, "INTEGER")) {
            size_t l1, l2;
            size_t a = next_word(sql, j, &l1);
            size_t b = next_word(sql, a + l1, &l2);
            if (prev_len == 2 && strncmp(prev, "id", 2) == 0 && word_is(sql, a, l1, "PRIMARY") &&
                word_is(sql, b, l2, "KEY")) {
                rep = "BIGINT GENERATED BY DEFAULT AS IDENTITY PRIMARY KEY";
                skip_to = b + l2;
            } else
                rep = "BIGINT";
        } else if (word_is(sql, i, len, "REAL"))
            rep = "DOUBLE PRECISION";
        else if (word_is(sql, i, len, "BLOB"))
            rep = "BYTEA";
        if (rep) {
            size_t rl = strlen(rep);
            memcpy(out + k, rep, rl);
            k += rl;
        } else {
            memcpy(out + k, w, len);
            k += len;
        }
        prev = w;
        prev_len = len;
        i = skip_to;
    }
    out[k] = '\0';
    return out;
}
