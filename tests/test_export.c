/* test_export.c: the export module on synthetic dumps: base64 against RFC 4648 and Python, exact
 * round trips of every storage class and awkward value, and each parse error with its JSON path. */
#include "cpdomain/export.h"
#include "cpdomain/status.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>
#include "rng.h"
#include <float.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

/* ---- base64 ---- */

static void b64_rfc4648_vectors(void **state)
{
    (void)state;
    /* RFC 4648 (Josefsson 2006), section 10: the test vectors, lengths 0 to 6. */
    static const char *const plain[] = {"", "f", "fo", "foo", "foob", "fooba", "foobar"};
    static const char *const coded[] = {"", "Zg==", "Zm8=", "Zm9v", "Zm9vYg==", "Zm9vYmE=", "Zm9vYmFy"};
    for (int k = 0; k < 7; k++) {
        size_t n = strlen(plain[k]);
        char out[16];
        assert_int_equal(cpd_export_b64_len(n), strlen(coded[k]));
        cpd_export_b64_encode((const unsigned char *)plain[k], n, out);
        assert_string_equal(out, coded[k]);
        unsigned char back[16];
        size_t got = 99, bad = 99;
        assert_int_equal(cpd_export_b64_decode(coded[k], strlen(coded[k]), back, &got, &bad), CPD_OK);
        assert_int_equal(got, n);
        assert_memory_equal(back, plain[k], n);
    }
}

static void b64_all_byte_values(void **state)
{
    (void)state;
    unsigned char all[256];
    for (int b = 0; b < 256; b++)
        all[b] = (unsigned char)b;
    /* Python 3.11: base64.b64encode(bytes(range(256))), an implementation independent of ours. */
    static const char python[] =
        "AAECAwQFBgcICQoLDA0ODxAREhMUFRYXGBkaGxwdHh8gISIjJCUmJygpKissLS4vMDEyMzQ1Njc4OTo7PD0+P0BBQkNERUZHSElKS0xNTk9Q"
        "UVJTVFVWV1hZWltcXV5fYGFiY2RlZmdoaWprbG1ub3BxcnN0dXZ3eHl6e3x9fn+AgYKDhIWGh4iJiouMjY6PkJGSk5SVlpeYmZqbnJ2en6Ch"
        "oqOkpaanqKmqq6ytrq+wsbKztLW2t7i5uru8vb6/wMHCw8TFxsfIycrLzM3Oz9DR0tPU1dbX2Nna29zd3t/g4eLj5OXm5+jp6uvs7e7v8PHy"
        "8/T19vf4+fr7/P3+/w==";
    char out[400];
    cpd_export_b64_encode(all, 256, out);
    assert_string_equal(out, python);
    unsigned char back[300];
    size_t n = 0, bad = 0;
    assert_int_equal(cpd_export_b64_decode(out, strlen(out), back, &n, &bad), CPD_OK);
    assert_int_equal(n, 256);
    assert_memory_equal(back, all, 256);

    /* Every byte value at every position of every length 1-5 (the three padding cases and two full
     * groups), with the other bytes random: encode, decode, compare. */
    rng r = {0x5eed2026u};
    for (size_t len = 1; len <= 5; len++)
        for (size_t pos = 0; pos < len; pos++)
            for (int b = 0; b < 256; b++) {
                unsigned char in[5];
                for (size_t i = 0; i < len; i++)
                    in[i] = (unsigned char)(rng_next(&r) >> 56);
                in[pos] = (unsigned char)b;
                char txt[16];
                cpd_export_b64_encode(in, len, txt);
                assert_int_equal(strlen(txt), cpd_export_b64_len(len));
                unsigned char dec[8];
                assert_int_equal(cpd_export_b64_decode(txt, strlen(txt), dec, &n, &bad), CPD_OK);
                assert_int_equal(n, len);
                assert_memory_equal(dec, in, len);
            }
}

static void b64_rejects_non_canonical(void **state)
{
    (void)state;
    static const struct {
        const char *text;
        size_t bad; /* offset of the offending character; the length for a bad length */
    } cases[] = {
        {"Zg=", 3},       /* length not a multiple of 4 */
        {"Zm9vY", 5},     /* the same */
        {"Zg=a", 2},      /* '=' before a character */
        {"Z===", 1},      /* three '=' */
        {"====", 0},      /* nothing but padding */
        {"Zh==", 1},      /* non-zero bits under '==' ('h' leaves 0001) */
        {"Zm9=", 2},      /* non-zero bits under '=' */
        {"Zg==Zg==", 2},  /* padding inside the text */
        {"Zm9v*A==", 4},  /* outside the alphabet */
        {"Zm9v\nZm9v", 9}, /* a line break: length 9 */
        {"Zm 9", 2},      /* a space */
        {"Zm-_", 2},      /* the URL-safe alphabet is not this one */
    };
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        unsigned char out[16];
        size_t n = 7, bad = 99;
        int rc = cpd_export_b64_decode(cases[k].text, strlen(cases[k].text), out, &n, &bad);
        if (rc != CPD_EDATA || bad != cases[k].bad)
            fail_msg("'%s': rc %d, bad %zu (wanted %zu)", cases[k].text, rc, bad, cases[k].bad);
        assert_int_equal(n, 0);
    }
}

/* ---- a synthetic schema ---- */

/* Two tables in the shape of the store's (trial with its REAL and TEXT columns, a BLOB table), and
 * one of every affinity with a column that has no declared type. */
static cpd_dump *schema(int version)
{
    cpd_dump *d = cpd_dump_alloc();
    cpd_dump_table *t = NULL;
    d->schema_version = version;
    assert_int_equal(cpd_dump_add_table(d, "trial", &t), CPD_OK);
    cpd_dump_add_column(t, "id", "INTEGER", 0, 1);
    cpd_dump_add_column(t, "athlete_id", "INTEGER", 1, 0);
    cpd_dump_add_column(t, "date", "TEXT", 1, 0);
    cpd_dump_add_column(t, "kind", "TEXT", 1, 0);
    cpd_dump_add_column(t, "value", "REAL", 1, 0);
    cpd_dump_add_column(t, "duration_s", "REAL", 1, 0);
    cpd_dump_add_column(t, "note", "TEXT", 1, 0);
    assert_int_equal(cpd_dump_add_table(d, "gx", &t), CPD_OK);
    cpd_dump_add_column(t, "id", "INTEGER", 0, 1);
    cpd_dump_add_column(t, "data", "BLOB", 1, 0);
    assert_int_equal(cpd_dump_add_table(d, "mixed", &t), CPD_OK);
    cpd_dump_add_column(t, "i", "INTEGER", 0, 0);
    cpd_dump_add_column(t, "r", "DOUBLE PRECISION", 0, 0);
    cpd_dump_add_column(t, "t", "VARCHAR(20)", 0, 0);
    cpd_dump_add_column(t, "b", "BLOB", 0, 0);
    cpd_dump_add_column(t, "n", "DECIMAL(10,5)", 0, 0);
    cpd_dump_add_column(t, "u", "", 0, 0);
    return d;
}

static void affinities(void **state)
{
    (void)state;
    /* SQLite's rules, sqlite.org/datatype3.html section 3.1.1, with its own examples. */
    assert_int_equal(cpd_dump_affinity("INTEGER"), CPD_AFF_INTEGER);
    assert_int_equal(cpd_dump_affinity("UNSIGNED BIG INT"), CPD_AFF_INTEGER);
    assert_int_equal(cpd_dump_affinity("int8"), CPD_AFF_INTEGER);
    assert_int_equal(cpd_dump_affinity("VARYING CHARACTER(255)"), CPD_AFF_TEXT);
    assert_int_equal(cpd_dump_affinity("CLOB"), CPD_AFF_TEXT);
    assert_int_equal(cpd_dump_affinity("BLOB"), CPD_AFF_BLOB);
    assert_int_equal(cpd_dump_affinity(""), CPD_AFF_BLOB);
    assert_int_equal(cpd_dump_affinity("DOUBLE PRECISION"), CPD_AFF_REAL);
    assert_int_equal(cpd_dump_affinity("FLOAT"), CPD_AFF_REAL);
    assert_int_equal(cpd_dump_affinity("DECIMAL(10,5)"), CPD_AFF_NUMERIC);
    assert_int_equal(cpd_dump_affinity("BOOLEAN"), CPD_AFF_NUMERIC);
    /* the order of the rules matters: "FLOATING POINT" contains "INT" */
    assert_int_equal(cpd_dump_affinity("FLOATING POINT"), CPD_AFF_INTEGER);
    assert_int_equal(cpd_dump_affinity("STRING"), CPD_AFF_NUMERIC);
}

static cpd_value *row_of(cpd_dump *d, const char *table)
{
    cpd_value *row = NULL;
    assert_int_equal(cpd_dump_add_row(&d->table[cpd_dump_find_table(d, table)], &row), CPD_OK);
    return row;
}

static void set_int(cpd_value *v, int64_t i)
{
    v->type = CPD_VAL_INTEGER;
    v->i = i;
}
static void set_real(cpd_value *v, double r)
{
    v->type = CPD_VAL_REAL;
    v->r = r;
}
static void set_text(cpd_value *v, const char *s, size_t n)
{
    assert_int_equal(cpd_value_set_text(v, s, n), CPD_OK);
}

/* Exact equality: the storage class, an integer's value, a real's bits, the bytes. */
static void assert_same_dump(const cpd_dump *a, const cpd_dump *b)
{
    assert_int_equal(a->schema_version, b->schema_version);
    assert_int_equal(a->ntables, b->ntables);
    for (size_t k = 0; k < a->ntables; k++) {
        const cpd_dump_table *x = &a->table[k], *y = &b->table[k];
        assert_string_equal(x->name, y->name);
        assert_int_equal(x->ncols, y->ncols);
        assert_int_equal(x->nrows, y->nrows);
        for (size_t i = 0; i < x->nrows * x->ncols; i++) {
            const cpd_value *p = &x->val[i], *q = &y->val[i];
            if (p->type != q->type)
                fail_msg("%s value %zu: type %d, wanted %d", x->name, i, q->type, p->type);
            if (p->type == CPD_VAL_INTEGER)
                assert_true(p->i == q->i);
            else if (p->type == CPD_VAL_REAL) {
                if (memcmp(&p->r, &q->r, sizeof p->r) != 0)
                    fail_msg("%s value %zu: %.17g read back as %.17g", x->name, i, p->r, q->r);
            } else if (p->type == CPD_VAL_TEXT || p->type == CPD_VAL_BLOB) {
                assert_int_equal(p->n, q->n);
                if (p->n)
                    assert_memory_equal(p->p, q->p, p->n);
            }
        }
    }
}

static char *render(const cpd_dump *d, size_t *len)
{
    char *text = NULL, msg[CPD_MSG_MAX];
    int rc = cpd_export_render(d, "9.8.7", &text, len, msg);
    if (rc)
        fail_msg("render: %d %s", rc, msg);
    assert_int_equal(strlen(text), *len);
    return text;
}

/* Every awkward value of every storage class, rendered, parsed, rendered again. */
static void round_trip_exact(void **state)
{
    (void)state;
    cpd_dump *d = schema(3);
    rng r = {20261201u};
    /* reals from random bit patterns: every exponent, subnormals, both signs */
    for (int i = 0; i < 3000; i++) {
        uint64_t bits = rng_next(&r);
        double x;
        memcpy(&x, &bits, sizeof x);
        if (!isfinite(x))
            continue;
        cpd_value *row = row_of(d, "trial");
        set_int(&row[0], i + 1);
        set_int(&row[1], 7);
        set_text(&row[2], "2026-10-14", 10);
        set_text(&row[3], "power", 5);
        set_real(&row[4], x);
        set_real(&row[5], rng_uniform(&r) * 3600);
        set_text(&row[6], "", 0);
    }
    static const double special[] = {0.0, -0.0, 71.4, 0.1, 312.0, 1e20, 5e-324, DBL_MIN, DBL_MAX, -DBL_MAX,
                                     2.2250738585072009e-308, 9007199254740993.0, 1.0 / 3.0, INFINITY, -INFINITY};
    for (size_t i = 0; i < sizeof special / sizeof special[0]; i++) {
        cpd_value *row = row_of(d, "mixed");
        set_real(&row[1], special[i]);
        set_real(&row[5], special[i]); /* untyped: integral reals must stay reals */
    }
    static const int64_t ints[] = {0, 1, -1, 9007199254740992, -9007199254740992, 9007199254740993,
                                   -9007199254740993, INT64_MAX, INT64_MIN, 312};
    for (size_t i = 0; i < sizeof ints / sizeof ints[0]; i++) {
        cpd_value *row = row_of(d, "mixed");
        set_int(&row[0], ints[i]);
        set_int(&row[4], ints[i]);
        set_int(&row[5], ints[i]);
    }
    static const char *const texts[] = {"", "plain", "quote \" and backslash \\", "comma, and\nnew line\r\ttab",
                                        "control \x01\x1f and DEL \x7f", "Ålesund – W′ ≥ 0.5 😀",
                                        "bad UTF-8 \xff\xfe", "overlong \xc0\xaf", "surrogate \xed\xa0\x80",
                                        "cut \xe2\x82"};
    for (size_t i = 0; i < sizeof texts / sizeof texts[0]; i++) {
        cpd_value *row = row_of(d, "mixed");
        set_text(&row[2], texts[i], strlen(texts[i]));
        set_text(&row[5], texts[i], strlen(texts[i]));
    }
    cpd_value *row = row_of(d, "mixed");
    set_text(&row[2], "NUL\0inside", 10); /* a NUL byte cannot live in a JSON string read through C */
    unsigned char all[256];
    for (int b = 0; b < 256; b++)
        all[b] = (unsigned char)(255 - b);
    for (size_t len = 0; len <= 6; len++) {
        row = row_of(d, "gx");
        set_int(&row[0], (int64_t)len + 1);
        assert_int_equal(cpd_value_set_blob(&row[1], all, len), CPD_OK);
        row = row_of(d, "mixed");
        assert_int_equal(cpd_value_set_blob(&row[3], all + 100, len), CPD_OK);
        assert_int_equal(cpd_value_set_blob(&row[5], all + 7, len), CPD_OK);
    }
    row = row_of(d, "gx");
    set_int(&row[0], 99);
    assert_int_equal(cpd_value_set_blob(&row[1], all, 256), CPD_OK);
    row_of(d, "mixed"); /* a row of nulls */

    size_t len = 0, len2 = 0;
    char *text = render(d, &len);
    cpd_dump *sch = schema(3), *back = NULL;
    char msg[CPD_MSG_MAX];
    int rc = cpd_export_parse(text, len, sch, &back, msg);
    if (rc)
        fail_msg("parse: %s", msg);
    assert_same_dump(d, back);
    char *again = render(back, &len2);
    assert_int_equal(len, len2);
    assert_memory_equal(text, again, len); /* byte for byte */

    /* The shortest exact form, with a mark of a real (the writer's documented choices). */
    assert_non_null(strstr(text, "[null,71.4,null,null,null,71.4]"));
    assert_non_null(strstr(text, "[null,312.0,null,null,null,{\"real\":\"312.0\"}]"));
    assert_non_null(strstr(text, "[null,-0.0,null,null,null,{\"real\":\"-0.0\"}]"));
    assert_non_null(strstr(text, "[null,1e+20,null,null,null,1e+20]"));
    assert_non_null(strstr(text, "[null,4.94065645841247e-324,"));
    assert_non_null(strstr(text, "[null,{\"real\":\"inf\"},null,null,null,{\"real\":\"inf\"}]"));
    assert_non_null(strstr(text, "[9007199254740992,null,null,null,9007199254740992,9007199254740992]"));
    assert_non_null(strstr(text, "[{\"integer\":\"-9223372036854775808\"},"));
    assert_non_null(strstr(text, "\"Ålesund – W′ ≥ 0.5 😀\""));
    assert_non_null(strstr(text, "\"comma, and\\nnew line\\r\\ttab\""));
    assert_non_null(strstr(text, "{\"text_base64\":\"YmFkIFVURi04IP/+\"}")); /* "bad UTF-8 \xff\xfe" */
    assert_non_null(strstr(text, "[4,{\"base64\":\"//79\"}]"));
    assert_non_null(strstr(text, "[1,{\"base64\":\"\"}]"));
    assert_non_null(strstr(text, "\"format\": \"cpdomain-store\",\n  \"schema_version\": 3,\n  \"tool_version\": \"9.8.7\""));
    free(text);
    free(again);
    cpd_dump_free(back);
    cpd_dump_free(sch);
    cpd_dump_free(d);
}

static void empty_store_renders_and_parses(void **state)
{
    (void)state;
    cpd_dump *d = schema(5);
    size_t len = 0;
    char *text = render(d, &len);
    assert_non_null(strstr(text, "\"rows\": []"));
    cpd_dump *back = NULL;
    char msg[CPD_MSG_MAX];
    assert_int_equal(cpd_export_parse(text, len, d, &back, msg), CPD_OK);
    assert_same_dump(d, back);
    free(text);
    cpd_dump_free(back);
    cpd_dump_free(d);
}

/* Columns may come in any order; values land in the schema's columns. */
static void columns_in_any_order(void **state)
{
    (void)state;
    static const char doc[] =
        "{\"format\":\"cpdomain-store\",\"schema_version\":3,\"tool_version\":\"0.1.0\",\"tables\":{"
        "\"gx\":{\"rows\":[[{\"base64\":\"AQID\"},4]],\"columns\":[\"data\",\"id\"]},"
        "\"mixed\":{\"columns\":[\"u\",\"n\",\"b\",\"t\",\"r\",\"i\"],\"rows\":[]},"
        "\"trial\":{\"columns\":[\"note\",\"duration_s\",\"value\",\"kind\",\"date\",\"athlete_id\",\"id\"],"
        "\"rows\":[[\"ramp-calibrated, \\\"fresh\\\"\",190,355.5,\"power\",\"2026-10-20\",2,11]]}},"
        "\"exported_by\":\"a future key, ignored\"}";
    cpd_dump *sch = schema(3), *d = NULL;
    char msg[CPD_MSG_MAX];
    int rc = cpd_export_parse(doc, strlen(doc), sch, &d, msg);
    if (rc)
        fail_msg("%s", msg);
    const cpd_dump_table *t = &d->table[0];
    assert_string_equal(t->name, "trial"); /* the schema's order, not the document's */
    assert_int_equal(t->nrows, 1);
    assert_int_equal(t->val[0].type, CPD_VAL_INTEGER);
    assert_true(t->val[0].i == 11);
    assert_true(t->val[1].i == 2);
    assert_string_equal((const char *)t->val[2].p, "2026-10-20");
    assert_int_equal(t->val[4].type, CPD_VAL_REAL);
    assert_true(t->val[4].r == 355.5);
    assert_int_equal(t->val[5].type, CPD_VAL_REAL); /* 190 in a REAL column is a real, as SQLite makes it */
    assert_true(t->val[5].r == 190.0);
    assert_string_equal((const char *)t->val[6].p, "ramp-calibrated, \"fresh\"");
    const cpd_dump_table *g = &d->table[1];
    assert_true(g->val[0].i == 4);
    assert_int_equal(g->val[1].type, CPD_VAL_BLOB);
    assert_int_equal(g->val[1].n, 3);
    assert_memory_equal(g->val[1].p, "\x01\x02\x03", 3);
    cpd_dump_free(d);
    cpd_dump_free(sch);
}

/* ---- every parse error names its place ---- */

#define HEAD "{\"format\":\"cpdomain-store\",\"schema_version\":3,\"tool_version\":\"0.1.0\","
#define TRIAL_COLS "\"columns\":[\"id\",\"athlete_id\",\"date\",\"kind\",\"value\",\"duration_s\",\"note\"]"
#define OTHERS \
    "\"gx\":{\"columns\":[\"id\",\"data\"],\"rows\":[]}," \
    "\"mixed\":{\"columns\":[\"i\",\"r\",\"t\",\"b\",\"n\",\"u\"],\"rows\":[]}"
#define GOOD_ROW "[1,1,\"2026-10-14\",\"power\",312,425,\"\"]"
/* A document whose trial rows are ROWS (a JSON array's inside). */
#define WITH_TRIAL_ROWS(ROWS) HEAD "\"tables\":{\"trial\":{" TRIAL_COLS ",\"rows\":[" ROWS "]}," OTHERS "}}"
#define WITH_GX_ROWS(ROWS) \
    HEAD "\"tables\":{\"trial\":{" TRIAL_COLS ",\"rows\":[]},\"gx\":{\"columns\":[\"id\",\"data\"],\"rows\":[" ROWS \
         "]},\"mixed\":{\"columns\":[\"i\",\"r\",\"t\",\"b\",\"n\",\"u\"],\"rows\":[]}}}"

static void parse_errors_name_the_path(void **state)
{
    (void)state;
    static const struct {
        const char *doc;
        const char *want; /* the message must contain this */
    } cases[] = {
        {"", "not JSON: the document is empty"},
        {" \n\t ", "not JSON: the document is empty"},
        /* cJSON stops at or just after the fault, hence "near" */
        {"{\n  \"format\": \"cpdomain-store\",\n  oops: 1\n}", "not JSON: syntax error near line 3, column 4"},
        {"{\"a\": [1, 2,, 3]}", "not JSON: syntax error near line 1, column 13"},
        {"{\"ä\": \"W′ ≥ 5\", \"b\": tru}", "not JSON: syntax error near line 1, column 22"}, /* columns in characters */
        {"{} x", "not JSON: more text after the document, at line 1, column 4"},
        {"{\"a\":\0 1}", "not JSON: a NUL byte at line 1, column 6"},
        {"[1, 2]", "expected a JSON object at the top, got an array: this is not a cpdomain export"},
        {"{}", "format: missing: this is not a cpdomain export"},
        {"{\"format\": \"golden-cheetah\"}", "format: expected \"cpdomain-store\", got \"golden-cheetah\""},
        {"{\"format\": 3}", "format: expected \"cpdomain-store\", got a number"},
        {"{\"format\":\"cpdomain-store\",\"schema_version\":3}", "tool_version: missing"},
        {"{\"format\":\"cpdomain-store\",\"schema_version\":3,\"tool_version\":1}", "tool_version: expected a string"},
        {"{\"format\":\"cpdomain-store\",\"tool_version\":\"0.1.0\"}", "schema_version: missing"},
        {"{\"format\":\"cpdomain-store\",\"schema_version\":\"3\",\"tool_version\":\"0.1.0\"}",
         "schema_version: expected a whole number, got a string"},
        {"{\"format\":\"cpdomain-store\",\"schema_version\":2.5,\"tool_version\":\"0.1.0\"}",
         "schema_version: 2.5 is not a store version"},
        {"{\"format\":\"cpdomain-store\",\"schema_version\":2,\"tool_version\":\"0.0.9\"}",
         "schema_version: the document is of store version 2 (written by cpdomain 0.0.9) but this cpdomain uses "
         "version 3, and import does not upgrade: import it with cpdomain 0.0.9"},
        {"{\"format\":\"cpdomain-store\",\"schema_version\":4,\"tool_version\":\"0.2.0\"}",
         "knows versions up to 3: use a newer cpdomain"},
        {HEAD "\"x\":1}", "tables: missing"},
        {HEAD "\"tables\":[]}", "tables: expected an object of tables"},
        {HEAD "\"tables\":{\"trial\":{" TRIAL_COLS ",\"rows\":[]}}}", "tables: missing table 'gx'"},
        {HEAD "\"tables\":{\"session\":{}}}", "tables.session: unknown table (store version 3 has no such table)"},
        {HEAD "\"tables\":{\"gx\":{\"columns\":[\"id\",\"data\"],\"rows\":[]},\"gx\":{}}}", "tables.gx: given twice"},
        {HEAD "\"tables\":{\"trial\":[]}}", "tables.trial: expected an object with \"columns\" and \"rows\", got an array"},
        {HEAD "\"tables\":{\"trial\":{" TRIAL_COLS ",\"rows\":[],\"extra\":1}}}", "tables.trial.extra: unknown key"},
        {HEAD "\"tables\":{\"trial\":{" TRIAL_COLS "," TRIAL_COLS ",\"rows\":[]}}}", "tables.trial.columns: given twice"},
        {HEAD "\"tables\":{\"trial\":{\"rows\":[]}}}", "tables.trial.columns: missing"},
        {HEAD "\"tables\":{\"trial\":{\"columns\":{},\"rows\":[]}}}", "tables.trial.columns: expected an array of column names"},
        {HEAD "\"tables\":{\"trial\":{" TRIAL_COLS "}}}", "tables.trial.rows: missing"},
        {HEAD "\"tables\":{\"trial\":{" TRIAL_COLS ",\"rows\":{}}}}", "tables.trial.rows: expected an array of rows"},
        {HEAD "\"tables\":{\"trial\":{\"columns\":[\"id\",\"athlete_id\",7],\"rows\":[]}}}",
         "tables.trial.columns[2]: expected a column name, got a number"},
        {HEAD "\"tables\":{\"trial\":{\"columns\":[\"id\",\"athlete_id\",\"date\",\"kind\",\"value\",\"notes\"],"
              "\"rows\":[]}}}",
         "tables.trial.columns[5]: unknown column 'notes'"},
        {HEAD "\"tables\":{\"trial\":{\"columns\":[\"id\",\"id\"],\"rows\":[]}}}",
         "tables.trial.columns[1]: column 'id' is given twice"},
        {HEAD "\"tables\":{\"trial\":{\"columns\":[\"id\",\"athlete_id\",\"date\",\"kind\",\"value\",\"duration_s\"],"
              "\"rows\":[]}}}",
         "tables.trial.columns: missing column 'note'"},
        {WITH_TRIAL_ROWS("{}"), "tables.trial.rows[0]: expected an array of 7 values, got an object"},
        {WITH_TRIAL_ROWS(GOOD_ROW ",[1,1,\"2026-10-14\",\"power\",312,425]"),
         "tables.trial.rows[1]: expected 7 values (one per column), got 6"},
        {WITH_TRIAL_ROWS(GOOD_ROW "," GOOD_ROW "," GOOD_ROW ",[4,1,\"2026-10-14\",\"power\",312,\"7:05\",\"\"]"),
         "tables.trial.rows[3][5]: expected a number (column 'duration_s', REAL), got a string"},
        {WITH_TRIAL_ROWS("[1,1,20261014,\"power\",312,425,\"\"]"),
         "tables.trial.rows[0][2]: expected a string (column 'date', TEXT), got a number"},
        {WITH_TRIAL_ROWS("[1,1,\"2026-10-14\",\"power\",null,425,\"\"]"),
         "tables.trial.rows[0][4]: expected a number, got null (column 'value' is NOT NULL)"},
        {WITH_TRIAL_ROWS("[1,true,\"2026-10-14\",\"power\",312,425,\"\"]"),
         "tables.trial.rows[0][1]: expected a number (column 'athlete_id', INTEGER), got true"},
        {WITH_TRIAL_ROWS("[[1],1,\"2026-10-14\",\"power\",312,425,\"\"]"),
         "tables.trial.rows[0][0]: expected a number (column 'id', INTEGER), got an array"},
        {WITH_TRIAL_ROWS("[1,1,\"2026-10-14\",\"power\",1e999,425,\"\"]"),
         "tables.trial.rows[0][4]: the number is out of the range of a double"},
        {WITH_TRIAL_ROWS("[1,1,\"2026-10-14\",\"power\",312,425,\"Latin-1 caf\xe9\"]"),
         "tables.trial.rows[0][6]: the string is not valid UTF-8"},
        {WITH_TRIAL_ROWS("[{\"integer\":\"12x\"},1,\"2026-10-14\",\"power\",312,425,\"\"]"),
         "tables.trial.rows[0][0].integer: '12x' is not a whole number between -2^63 and 2^63 - 1"},
        {WITH_TRIAL_ROWS("[{\"integer\":\"9223372036854775808\"},1,\"2026-10-14\",\"power\",312,425,\"\"]"),
         "tables.trial.rows[0][0].integer: '9223372036854775808' is not a whole number"},
        {WITH_TRIAL_ROWS("[1,1,\"2026-10-14\",\"power\",{\"real\":\"nan\"},425,\"\"]"),
         "tables.trial.rows[0][4].real: 'nan' is not a number, inf or -inf"},
        {WITH_TRIAL_ROWS("[1,1,\"2026-10-14\",\"power\",{\"base64\":\"AAAA\"},425,\"\"]"),
         "tables.trial.rows[0][4]: expected a number (column 'value', REAL), got {\"base64\": ...}, which this column "
         "does not take"},
        {WITH_TRIAL_ROWS("[1,1,\"2026-10-14\",\"power\",{\"real\":\"1\",\"x\":2},425,\"\"]"),
         "tables.trial.rows[0][4]: expected a number (column 'value', REAL), got an object"},
        {WITH_TRIAL_ROWS("[1,1,\"2026-10-14\",{\"integer\":\"5\"},312,425,\"\"]"),
         "tables.trial.rows[0][3]: expected a string (column 'kind', TEXT), got {\"integer\": ...}"},
        {WITH_GX_ROWS("[1,{\"base64\":\"AQ!D\"}]"), "tables.gx.rows[0][1].base64: not base64 (character 3, '!')"},
        {WITH_GX_ROWS("[1,{\"base64\":\"AQI\"}]"), "tables.gx.rows[0][1].base64: not base64: the length 3 is not a multiple of 4"},
        {WITH_GX_ROWS("[1,\"AQID\"]"), "tables.gx.rows[0][1]: expected {\"base64\": \"...\"} (column 'data', BLOB), got a string"},
        {WITH_GX_ROWS("[1,{\"text_base64\":\"AQID\"}]"), "tables.gx.rows[0][1]: expected {\"base64\": \"...\"}"},
    };
    cpd_dump *sch = schema(3);
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        char msg[CPD_MSG_MAX];
        cpd_dump *d = (cpd_dump *)&k; /* must come back NULL */
        /* the NUL case carries its length in its size; the others are C strings */
        size_t len = strstr(cases[k].want, "NUL byte") ? 9 : strlen(cases[k].doc);
        int rc = cpd_export_parse(cases[k].doc, len, sch, &d, msg);
        if (rc != CPD_EDATA || !strstr(msg, cases[k].want))
            fail_msg("case %zu: rc %d, message\n  '%s'\nlacks\n  '%s'", k, rc, msg, cases[k].want);
        assert_null(d);
    }
    cpd_dump_free(sch);
}

static void render_refuses_values_import_would_refuse(void **state)
{
    (void)state;
    static const struct {
        const char *table;
        size_t col;
        int kind; /* 0 text, 1 blob, 2 integer */
        const char *want;
    } cases[] = {
        {"trial", 4, 0, "tables.trial.rows[0][4]: the store holds text in column 'value' (REAL), which import would refuse"},
        {"trial", 1, 1, "tables.trial.rows[0][1]: the store holds a blob in column 'athlete_id' (INTEGER)"},
        {"trial", 6, 1, "tables.trial.rows[0][6]: the store holds a blob in column 'note' (TEXT)"},
        {"gx", 1, 0, "tables.gx.rows[0][1]: the store holds text in column 'data' (BLOB)"},
        {"gx", 1, 2, "tables.gx.rows[0][1]: the store holds an integer in column 'data' (BLOB)"},
    };
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        cpd_dump *d = schema(3);
        cpd_value *row = row_of(d, cases[k].table);
        if (cases[k].kind == 0)
            set_text(&row[cases[k].col], "abc", 3);
        else if (cases[k].kind == 1)
            assert_int_equal(cpd_value_set_blob(&row[cases[k].col], "abc", 3), CPD_OK);
        else
            set_int(&row[cases[k].col], 5);
        char *text = (char *)"untouched", msg[CPD_MSG_MAX];
        size_t len = 7;
        int rc = cpd_export_render(d, "0.1.0", &text, &len, msg);
        if (rc != CPD_EDATA || !strstr(msg, cases[k].want))
            fail_msg("case %zu: rc %d, message '%s'", k, rc, msg);
        assert_null(text);
        assert_int_equal(len, 0);
        cpd_dump_free(d);
    }
}

static void read_files(void **state)
{
    (void)state;
    cpd_dump *sch = schema(3), *d = NULL;
    char msg[CPD_MSG_MAX];
    assert_int_equal(cpd_export_read("/nonexistent/dir/store.json", sch, &d, msg), CPD_EIO);
    assert_non_null(strstr(msg, "/nonexistent/dir/store.json: cannot open: No such file or directory"));
    assert_null(d);

    char path[] = "/tmp/cpd_export_XXXXXX";
    int fd = mkstemp(path);
    assert_true(fd >= 0);
    static const char bad[] = WITH_TRIAL_ROWS("[1,1,\"2026-10-14\",\"power\",312,425,null]");
    assert_int_equal(write(fd, bad, sizeof bad - 1), (ssize_t)(sizeof bad - 1));
    close(fd);
    assert_int_equal(cpd_export_read(path, sch, &d, msg), CPD_EDATA);
    char want[128];
    snprintf(want, sizeof want, "%s: tables.trial.rows[0][6]: expected a string, got null", path);
    assert_non_null(strstr(msg, want));

    static const char good[] = WITH_TRIAL_ROWS(GOOD_ROW);
    FILE *f = fopen(path, "w");
    assert_non_null(f);
    fputs(good, f);
    fclose(f);
    assert_int_equal(cpd_export_read(path, sch, &d, msg), CPD_OK);
    assert_int_equal(d->table[0].nrows, 1);
    char where[64];
    cpd_export_row_path(d, 0, 41, where, sizeof where);
    assert_string_equal(where, "tables.trial.rows[41]");
    cpd_export_row_path(d, 9, 0, where, sizeof where);
    assert_string_equal(where, "tables");
    cpd_dump_free(d);
    unlink(path);
    cpd_dump_free(sch);
}

int main(void)
{
    (void)rng_normal; /* rng.h's functions are static; this test needs only the uniform ones */
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(b64_rfc4648_vectors),
        cmocka_unit_test(b64_all_byte_values),
        cmocka_unit_test(b64_rejects_non_canonical),
        cmocka_unit_test(affinities),
        cmocka_unit_test(round_trip_exact),
        cmocka_unit_test(empty_store_renders_and_parses),
        cmocka_unit_test(columns_in_any_order),
        cmocka_unit_test(parse_errors_name_the_path),
        cmocka_unit_test(render_refuses_values_import_would_refuse),
        cmocka_unit_test(read_files),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
