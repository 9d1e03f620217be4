/* export.c: the "cpdomain-store" JSON document (docs/export-format.md): rendering a dump of the
 * store and parsing one back, checked against the store's schema. cJSON builds and parses each
 * value; numbers are printed here, because cJSON's own printing does not promise exact reals. */
#include "cpdomain/export.h"
#include "cpdomain/validate_dump.h"
#include "cpdomain/status.h"

#include <cJSON.h>
#include <errno.h>
#include <math.h>
#include <stdarg.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* Integers up to 2^53 in magnitude are exact in the binary64 that JSON readers (cJSON, Python's
 * float for a number with a fraction, JavaScript) use; larger ones travel as decimal strings. */
#define EXACT_INT 9007199254740992.0
#define EXACT_INT_I INT64_C(9007199254740992)

static int fail(char *msg, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
static int fail(char *msg, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(msg, CPD_MSG_MAX, fmt, ap);
    va_end(ap);
    return CPD_EDATA;
}

/* ---- base64 ---- */

static const char B64[] = "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";

size_t cpd_export_b64_len(size_t n)
{
    return (n + 2) / 3 * 4;
}

void cpd_export_b64_encode(const unsigned char *in, size_t n, char *out)
{
    size_t o = 0, i = 0;
    for (; i + 2 < n; i += 3) {
        unsigned long w = (unsigned long)in[i] << 16 | (unsigned long)in[i + 1] << 8 | in[i + 2];
        out[o++] = B64[w >> 18 & 63];
        out[o++] = B64[w >> 12 & 63];
        out[o++] = B64[w >> 6 & 63];
        out[o++] = B64[w & 63];
    }
    if (i < n) {
        unsigned long w = (unsigned long)in[i] << 16 | (i + 1 < n ? (unsigned long)in[i + 1] << 8 : 0);
        out[o++] = B64[w >> 18 & 63];
        out[o++] = B64[w >> 12 & 63];
        out[o++] = i + 1 < n ? B64[w >> 6 & 63] : '=';
        out[o++] = '=';
    }
    out[o] = '\0';
}

static int b64_digit(char c)
{
    if (c >= 'A' && c <= 'Z')
        return c - 'A';
    if (c >= 'a' && c <= 'z')
        return c - 'a' + 26;
    if (c >= '0' && c <= '9')
        return c - '0' + 52;
    if (c == '+')
        return 62;
    if (c == '/')
        return 63;
    return -1;
}

int cpd_export_b64_decode(const char *in, size_t len, unsigned char *out, size_t *n, size_t *bad)
{
    *n = 0;
    *bad = 0;
    if (len % 4) {
        *bad = len;
        return CPD_EDATA;
    }
    size_t o = 0;
    for (size_t i = 0; i < len; i += 4) {
        int last = i + 4 == len;
        /* Padding may only end the text: "xx==" or "xxx=". */
        int pad = last && in[i + 3] == '=' ? (in[i + 2] == '=' ? 2 : 1) : 0;
        int d[4] = {0, 0, 0, 0};
        for (int k = 0; k < 4 - pad; k++)
            if ((d[k] = b64_digit(in[i + (size_t)k])) < 0) {
                *bad = i + (size_t)k;
                return CPD_EDATA;
            }
        unsigned long w = (unsigned long)d[0] << 18 | (unsigned long)d[1] << 12 | (unsigned long)d[2] << 6 |
                          (unsigned long)d[3];
        /* The bits under the padding must be zero, or two texts would decode to the same bytes. */
        if ((pad == 2 && (w & 0xFFFF)) || (pad == 1 && (w & 0xFF))) {
            *bad = i + (size_t)(3 - pad);
            return CPD_EDATA;
        }
        out[o++] = (unsigned char)(w >> 16);
        if (pad < 2)
            out[o++] = (unsigned char)(w >> 8 & 0xFF);
        if (pad < 1)
            out[o++] = (unsigned char)(w & 0xFF);
    }
    *n = o;
    return CPD_OK;
}

/* ---- UTF-8 (RFC 3629: no overlong forms, no surrogates, nothing above U+10FFFF) ---- */

static int utf8_valid(const unsigned char *s, size_t n)
{
    size_t i = 0;
    while (i < n) {
        unsigned c = s[i];
        size_t len;
        unsigned cp, min;
        if (c < 0x80) {
            if (c == 0)
                return 0; /* a NUL cannot live in a JSON string read back through C strings */
            i++;
            continue;
        } else if ((c & 0xE0) == 0xC0) {
            len = 2, cp = c & 0x1F, min = 0x80;
        } else if ((c & 0xF0) == 0xE0) {
            len = 3, cp = c & 0x0F, min = 0x800;
        } else if ((c & 0xF8) == 0xF0) {
            len = 4, cp = c & 0x07, min = 0x10000;
        } else
            return 0;
        if (i + len > n)
            return 0;
        for (size_t k = 1; k < len; k++) {
            if ((s[i + k] & 0xC0) != 0x80)
                return 0;
            cp = cp << 6 | (s[i + k] & 0x3F);
        }
        if (cp < min || cp > 0x10FFFF || (cp >= 0xD800 && cp <= 0xDFFF))
            return 0;
        i += len;
    }
    return 1;
}

/* ---- rendering ---- */

/* The shortest of 15, 16 or 17 significant digits that reads back as the same double: 17 always
 * suffice for binary64 (IEEE 754-2008 section 5.12.2), fewer keep 71.4 from printing as
 * 71.400000000000006. A '.0' is added to an integral value so that readers see a real. The C
 * locale is assumed (the CLI never calls setlocale). */
static void format_real(double v, char *buf, size_t n)
{
    for (int prec = 15; prec <= 17; prec++) {
        snprintf(buf, n, "%.*g", prec, v);
        if (strtod(buf, NULL) == v)
            break;
    }
    if (!strpbrk(buf, ".eE"))
        strncat(buf, ".0", n - strlen(buf) - 1);
}

static cJSON *typed(const char *key, const char *text)
{
    cJSON *o = cJSON_CreateObject();
    if (o && !cJSON_AddStringToObject(o, key, text)) {
        cJSON_Delete(o);
        return NULL;
    }
    return o;
}

static cJSON *b64_item(const char *key, const unsigned char *p, size_t n)
{
    char *s = malloc(cpd_export_b64_len(n) + 1);
    if (!s)
        return NULL;
    cpd_export_b64_encode(p, n, s);
    cJSON *o = typed(key, s);
    free(s);
    return o;
}

/* What a column takes in the document: numbers (INTEGER, REAL or NUMERIC affinity), strings (TEXT),
 * blobs (a declared BLOB type), or anything (no declared type). SQLite itself would let a BLOB
 * column hold text, but the declared type says what cpdomain keeps there. */
typedef enum { TAKES_NUMBER, TAKES_TEXT, TAKES_BLOB, TAKES_ANY } takes;

static takes column_takes(const cpd_dump_column *c)
{
    switch (c->affinity) {
    case CPD_AFF_INTEGER:
    case CPD_AFF_REAL:
    case CPD_AFF_NUMERIC:
        return TAKES_NUMBER;
    case CPD_AFF_TEXT:
        return TAKES_TEXT;
    default:
        return c->decl_type[0] ? TAKES_BLOB : TAKES_ANY;
    }
}

static const char *class_name(cpd_value_type t)
{
    static const char *const names[] = {"null", "an integer", "a real", "text", "a blob"};
    return names[t];
}

/* One value as a cJSON item; *item NULL when out of memory. CPD_EDATA for a value that import would
 * refuse in this column. */
static int render_value(const cpd_value *v, const cpd_dump_column *c, cJSON **item)
{
    char num[40];
    *item = NULL;
    takes k = column_takes(c);
    if ((k == TAKES_NUMBER && (v->type == CPD_VAL_TEXT || v->type == CPD_VAL_BLOB)) ||
        (k == TAKES_TEXT && v->type != CPD_VAL_TEXT && v->type != CPD_VAL_NULL) ||
        (k == TAKES_BLOB && v->type != CPD_VAL_BLOB && v->type != CPD_VAL_NULL))
        return CPD_EDATA;
    switch (v->type) {
    case CPD_VAL_INTEGER:
        snprintf(num, sizeof num, "%lld", (long long)v->i);
        /* compared as integers: (double)v->i would round 2^53 + 1 down to 2^53 */
        *item = v->i >= -EXACT_INT_I && v->i <= EXACT_INT_I ? cJSON_CreateRaw(num) : typed("integer", num);
        break;
    case CPD_VAL_REAL:
        if (!isfinite(v->r))
            *item = typed("real", v->r > 0 ? "inf" : "-inf");
        else {
            format_real(v->r, num, sizeof num);
            /* In a column without affinity an integral plain number would come back as an integer. */
            int integral = v->r == floor(v->r) && fabs(v->r) <= EXACT_INT;
            *item = k == TAKES_ANY && integral ? typed("real", num) : cJSON_CreateRaw(num);
        }
        break;
    case CPD_VAL_TEXT:
        if (utf8_valid(v->p, v->n))
            *item = cJSON_CreateString((const char *)v->p);
        else
            *item = b64_item("text_base64", v->p, v->n);
        break;
    case CPD_VAL_BLOB:
        *item = b64_item("base64", v->p, v->n);
        break;
    default:
        *item = cJSON_CreateNull();
    }
    return CPD_OK;
}

/* Writes s as a JSON string (cJSON does the escaping). */
static int put_string(FILE *f, const char *s)
{
    cJSON *it = cJSON_CreateString(s);
    char *txt = it ? cJSON_PrintUnformatted(it) : NULL;
    cJSON_Delete(it);
    if (!txt)
        return CPD_ENOMEM;
    fputs(txt, f);
    cJSON_free(txt);
    return CPD_OK;
}

static int render_table(FILE *f, const cpd_dump_table *t, char *msg)
{
    int rc = CPD_OK;
    fputs("    ", f);
    if ((rc = put_string(f, t->name)))
        return rc;
    fputs(": {\n      \"columns\": [", f);
    for (size_t j = 0; j < t->ncols; j++) {
        if (j)
            fputs(", ", f);
        if ((rc = put_string(f, t->col[j].name)))
            return rc;
    }
    fputs("],\n      \"rows\": [", f);
    for (size_t i = 0; i < t->nrows; i++) {
        cJSON *row = cJSON_CreateArray();
        if (!row)
            return CPD_ENOMEM;
        for (size_t j = 0; j < t->ncols && rc == CPD_OK; j++) {
            const cpd_value *v = &t->val[i * t->ncols + j];
            cJSON *item = NULL;
            if (render_value(v, &t->col[j], &item))
                rc = fail(msg,
                          "tables.%s.rows[%zu][%zu]: the store holds %s in column '%s' (%s), which import would "
                          "refuse: correct that row first",
                          t->name, i, j, class_name(v->type), t->col[j].name,
                          t->col[j].decl_type[0] ? t->col[j].decl_type : "no type");
            else if (!item || !cJSON_AddItemToArray(row, item)) {
                cJSON_Delete(item);
                rc = CPD_ENOMEM;
            }
        }
        char *txt = rc ? NULL : cJSON_PrintUnformatted(row);
        cJSON_Delete(row);
        if (rc)
            return rc;
        if (!txt)
            return CPD_ENOMEM;
        fprintf(f, "%s\n        %s", i ? "," : "", txt);
        cJSON_free(txt);
    }
    fputs(t->nrows ? "\n      ]\n    }" : "]\n    }", f);
    return CPD_OK;
}

int cpd_export_render(const cpd_dump *d, const char *tool_version, char **out, size_t *len, char *msg)
{
    *out = NULL;
    *len = 0;
    msg[0] = '\0';
    char *buf = NULL;
    size_t n = 0;
    FILE *f = open_memstream(&buf, &n);
    if (!f)
        return CPD_ENOMEM;
    int rc = CPD_OK;
    fprintf(f, "{\n  \"format\": \"%s\",\n  \"schema_version\": %d,\n  \"tool_version\": ", CPD_EXPORT_FORMAT,
            d->schema_version);
    rc = put_string(f, tool_version ? tool_version : "");
    if (rc == CPD_OK)
        fputs(",\n  \"tables\": {", f);
    for (size_t k = 0; k < d->ntables && rc == CPD_OK; k++) {
        fputs(k ? ",\n" : "\n", f);
        rc = render_table(f, &d->table[k], msg);
    }
    if (rc == CPD_OK)
        fputs(d->ntables ? "\n  }\n}\n" : "}\n}\n", f);
    if (ferror(f) && rc == CPD_OK)
        rc = CPD_ENOMEM;
    if (fclose(f) != 0 && rc == CPD_OK)
        rc = CPD_ENOMEM;
    if (rc) {
        free(buf);
        return rc;
    }
    *out = buf;
    *len = n;
    return CPD_OK;
}

/* ---- parsing ---- */

static const char *kind(const cJSON *it)
{
    if (cJSON_IsNull(it))
        return "null";
    if (cJSON_IsBool(it))
        return cJSON_IsTrue(it) ? "true" : "false";
    if (cJSON_IsNumber(it))
        return "a number";
    if (cJSON_IsString(it))
        return "a string";
    if (cJSON_IsArray(it))
        return "an array";
    return "an object";
}

static const char *expected(takes k)
{
    static const char *const what[] = {"a number", "a string", "{\"base64\": \"...\"}",
                                       "a value (null, a number, a string or {\"base64\": ...})"};
    return what[k];
}

/* 1-based line and column (in characters) of byte offset off. */
static void locate(const char *text, size_t off, long *line, long *col)
{
    *line = 1;
    *col = 1;
    for (size_t i = 0; i < off; i++) {
        if (text[i] == '\n') {
            ++*line;
            *col = 1;
        } else if (((unsigned char)text[i] & 0xC0) != 0x80)
            ++*col;
    }
}

/* A typed value {"KEY": "TEXT"} (docs/export-format.md); *key and *text NULL when it is not one. */
static void typed_parts(const cJSON *it, const char **key, const char **text)
{
    *key = *text = NULL;
    const cJSON *m = it->child;
    if (m && !m->next && cJSON_IsString(m) && m->string) {
        *key = m->string;
        *text = m->valuestring;
    }
}

static int parse_b64(const char *path, const char *key, const char *text, cpd_value *v, int as_text, char *msg)
{
    size_t len = strlen(text), n = 0, bad = 0;
    unsigned char *buf = malloc(len / 4 * 3 + 1);
    if (!buf)
        return CPD_ENOMEM;
    int rc = cpd_export_b64_decode(text, len, buf, &n, &bad);
    if (rc) {
        if (bad == len)
            fail(msg, "%s.%s: not base64: the length %zu is not a multiple of 4", path, key, len);
        else
            fail(msg, "%s.%s: not base64 (character %zu, '%c')", path, key, bad + 1, text[bad]);
    } else
        rc = as_text ? cpd_value_set_text(v, buf, n) : cpd_value_set_blob(v, buf, n);
    free(buf);
    return rc;
}

static int parse_typed(const cJSON *it, const cpd_dump_column *c, const char *path, cpd_value *v, char *msg)
{
    const char *key, *text;
    typed_parts(it, &key, &text);
    takes k = column_takes(c);
    int number = k == TAKES_NUMBER || k == TAKES_ANY;
    if (key && strcmp(key, "base64") == 0 && (k == TAKES_BLOB || k == TAKES_ANY))
        return parse_b64(path, key, text, v, 0, msg);
    if (key && strcmp(key, "text_base64") == 0 && (k == TAKES_TEXT || k == TAKES_ANY))
        return parse_b64(path, key, text, v, 1, msg);
    if (key && strcmp(key, "integer") == 0 && number) {
        char *end = NULL;
        errno = 0;
        long long x = strtoll(text, &end, 10);
        if (!*text || *end || errno || !(text[0] == '-' || (text[0] >= '0' && text[0] <= '9')))
            return fail(msg, "%s.integer: '%s' is not a whole number between -2^63 and 2^63 - 1", path, text);
        v->type = CPD_VAL_INTEGER;
        v->i = x;
        return CPD_OK;
    }
    if (key && strcmp(key, "real") == 0 && number) {
        char *end = NULL;
        double x = strtod(text, &end);
        int inf = strcmp(text, "inf") == 0 || strcmp(text, "-inf") == 0;
        if (!*text || *end || isnan(x) || (!inf && !isfinite(x)) || (!inf && !strpbrk(text, "0123456789")))
            return fail(msg, "%s.real: '%s' is not a number, inf or -inf", path, text);
        v->type = CPD_VAL_REAL;
        v->r = x;
        return CPD_OK;
    }
    return fail(msg, "%s: expected %s (column '%s', %s), got %s%s%s%s", path, expected(k), c->name,
                c->decl_type[0] ? c->decl_type : "no type", key ? "{\"" : "an object", key ? key : "",
                key ? "\": ...}" : "", key ? ", which this column does not take" : "");
}

static int parse_value(const cJSON *it, const cpd_dump_column *c, const char *path, cpd_value *v, char *msg)
{
    takes k = column_takes(c);
    const char *col_type = c->decl_type[0] ? c->decl_type : "no type";
    if (cJSON_IsNull(it)) {
        if (c->notnull)
            return fail(msg, "%s: expected %s, got null (column '%s' is NOT NULL)", path, expected(k), c->name);
        v->type = CPD_VAL_NULL;
        return CPD_OK;
    }
    if (cJSON_IsNumber(it) && (k == TAKES_NUMBER || k == TAKES_ANY)) {
        double x = it->valuedouble;
        if (!isfinite(x))
            return fail(msg, "%s: the number is out of the range of a double", path);
        /* A plain integral number is an integer (the writer sends larger ones and integral reals in
         * untyped columns as typed values); a REAL column makes every number a real, as SQLite would. */
        if (c->affinity != CPD_AFF_REAL && x == floor(x) && fabs(x) <= EXACT_INT && !(x == 0 && signbit(x))) {
            v->type = CPD_VAL_INTEGER;
            v->i = (int64_t)x;
        } else {
            v->type = CPD_VAL_REAL;
            v->r = x;
        }
        return CPD_OK;
    }
    if (cJSON_IsString(it) && (k == TAKES_TEXT || k == TAKES_ANY)) {
        size_t n = strlen(it->valuestring);
        if (!utf8_valid((const unsigned char *)it->valuestring, n))
            return fail(msg, "%s: the string is not valid UTF-8", path);
        return cpd_value_set_text(v, it->valuestring, n);
    }
    if (cJSON_IsObject(it))
        return parse_typed(it, c, path, v, msg);
    return fail(msg, "%s: expected %s (column '%s', %s), got %s", path, expected(k), c->name, col_type, kind(it));
}

/* Fills table t of out from the document's table object. */
static int parse_table(const cJSON *obj, const cpd_dump_table *schema_t, cpd_dump_table *t, char *msg)
{
    const char *name = schema_t->name;
    if (!cJSON_IsObject(obj))
        return fail(msg, "tables.%s: expected an object with \"columns\" and \"rows\", got %s", name, kind(obj));
    const cJSON *cols = NULL, *rows = NULL;
    for (const cJSON *m = obj->child; m; m = m->next) {
        if (strcmp(m->string, "columns") == 0 && !cols)
            cols = m;
        else if (strcmp(m->string, "rows") == 0 && !rows)
            rows = m;
        else
            return fail(msg, "tables.%s.%s: %s", name, m->string,
                        strcmp(m->string, "columns") == 0 || strcmp(m->string, "rows") == 0 ? "given twice"
                                                                                             : "unknown key");
    }
    if (!cols || !cJSON_IsArray(cols))
        return fail(msg, "tables.%s.columns: %s", name, cols ? "expected an array of column names" : "missing");
    if (!rows || !cJSON_IsArray(rows))
        return fail(msg, "tables.%s.rows: %s", name, rows ? "expected an array of rows" : "missing");

    size_t ncols = (size_t)cJSON_GetArraySize(cols);
    int rc = CPD_OK;
    long *map = malloc((ncols ? ncols : 1) * sizeof *map); /* document column -> schema column */
    char *seen = calloc(schema_t->ncols, 1);
    if (!map || !seen) {
        rc = CPD_ENOMEM;
        goto done;
    }
    size_t j = 0;
    for (const cJSON *c = cols->child; c; c = c->next, j++) {
        if (!cJSON_IsString(c)) {
            rc = fail(msg, "tables.%s.columns[%zu]: expected a column name, got %s", name, j, kind(c));
            goto done;
        }
        long sj = cpd_dump_find_column(schema_t, c->valuestring);
        if (sj < 0) {
            rc = fail(msg, "tables.%s.columns[%zu]: unknown column '%s'", name, j, c->valuestring);
            goto done;
        }
        if (seen[sj]) {
            rc = fail(msg, "tables.%s.columns[%zu]: column '%s' is given twice", name, j, c->valuestring);
            goto done;
        }
        seen[sj] = 1;
        map[j] = sj;
    }
    for (size_t q = 0; q < schema_t->ncols; q++)
        if (!seen[q]) {
            rc = fail(msg, "tables.%s.columns: missing column '%s'", name, schema_t->col[q].name);
            goto done;
        }
    size_t i = 0;
    for (const cJSON *r = rows->child; r; r = r->next, i++) {
        size_t got = cJSON_IsArray(r) ? (size_t)cJSON_GetArraySize(r) : 0;
        if (!cJSON_IsArray(r) || got != ncols) {
            if (cJSON_IsArray(r))
                rc = fail(msg, "tables.%s.rows[%zu]: expected %zu values (one per column), got %zu", name, i, ncols,
                          got);
            else
                rc = fail(msg, "tables.%s.rows[%zu]: expected an array of %zu values, got %s", name, i, ncols,
                          kind(r));
            goto done;
        }
        cpd_value *row = NULL;
        if ((rc = cpd_dump_add_row(t, &row)))
            goto done;
        size_t k = 0;
        for (const cJSON *v = r->child; v; v = v->next, k++) {
            char path[CPD_MSG_MAX / 2];
            snprintf(path, sizeof path, "tables.%s.rows[%zu][%zu]", name, i, k);
            if ((rc = parse_value(v, &schema_t->col[map[k]], path, &row[map[k]], msg)))
                goto done;
        }
    }
done:
    free(map);
    free(seen);
    return rc;
}

static int parse_root(const cJSON *root, const cpd_dump *schema, cpd_dump *out, char *msg)
{
    if (!cJSON_IsObject(root))
        return fail(msg, "expected a JSON object at the top, got %s: this is not a cpdomain export", kind(root));
    const cJSON *fmt = cJSON_GetObjectItemCaseSensitive(root, "format");
    if (!fmt)
        return fail(msg, "format: missing: this is not a cpdomain export");
    if (!cJSON_IsString(fmt) || strcmp(fmt->valuestring, CPD_EXPORT_FORMAT) != 0)
        return fail(msg, "format: expected \"%s\", got %s%s%s: this is not a cpdomain export", CPD_EXPORT_FORMAT,
                    cJSON_IsString(fmt) ? "\"" : kind(fmt), cJSON_IsString(fmt) ? fmt->valuestring : "",
                    cJSON_IsString(fmt) ? "\"" : "");
    const cJSON *tool = cJSON_GetObjectItemCaseSensitive(root, "tool_version");
    if (!tool || !cJSON_IsString(tool))
        return fail(msg, "tool_version: %s", tool ? "expected a string" : "missing");
    const cJSON *ver = cJSON_GetObjectItemCaseSensitive(root, "schema_version");
    if (!ver)
        return fail(msg, "schema_version: missing");
    double v = cJSON_IsNumber(ver) ? ver->valuedouble : -1;
    if (!cJSON_IsNumber(ver))
        return fail(msg, "schema_version: expected a whole number, got %s", kind(ver));
    if (v != floor(v) || v < 1 || v > 1e6)
        return fail(msg, "schema_version: %.17g is not a store version", v);
    int want = schema->schema_version;
    if ((int)v < want)
        return fail(msg,
                    "schema_version: the document is of store version %d (written by cpdomain %s) but this cpdomain "
                    "uses version %d, and import does not upgrade: import it with cpdomain %s into a store made with "
                    "its init, open that store once with this cpdomain (which upgrades it), and export again",
                    (int)v, tool->valuestring, want, tool->valuestring);
    if ((int)v > want)
        return fail(msg,
                    "schema_version: the document is of store version %d (written by cpdomain %s) but this cpdomain "
                    "knows versions up to %d: use a newer cpdomain",
                    (int)v, tool->valuestring, want);
    out->schema_version = want;
    const cJSON *tables = cJSON_GetObjectItemCaseSensitive(root, "tables");
    if (!tables || !cJSON_IsObject(tables))
        return fail(msg, "tables: %s", tables ? "expected an object of tables" : "missing");

    int rc = CPD_OK;
    char *seen = calloc(schema->ntables ? schema->ntables : 1, 1);
    if (!seen)
        return CPD_ENOMEM;
    for (const cJSON *m = tables->child; m && rc == CPD_OK; m = m->next) {
        long k = cpd_dump_find_table(schema, m->string);
        if (k < 0)
            rc = fail(msg, "tables.%s: unknown table (store version %d has no such table)", m->string, want);
        else if (seen[k])
            rc = fail(msg, "tables.%s: given twice", m->string);
        else {
            seen[k] = 1;
            rc = parse_table(m, &schema->table[k], &out->table[k], msg);
        }
    }
    for (size_t k = 0; k < schema->ntables && rc == CPD_OK; k++)
        if (!seen[k])
            rc = fail(msg, "tables: missing table '%s'", schema->table[k].name);
    free(seen);
    return rc;
}

/* out gets the schema's tables and columns, no rows. */
static int copy_schema(const cpd_dump *schema, cpd_dump **out)
{
    cpd_dump *d = cpd_dump_alloc();
    int rc = d ? CPD_OK : CPD_ENOMEM;
    for (size_t k = 0; rc == CPD_OK && k < schema->ntables; k++) {
        const cpd_dump_table *s = &schema->table[k];
        cpd_dump_table *t = NULL;
        rc = cpd_dump_add_table(d, s->name, &t);
        for (size_t j = 0; rc == CPD_OK && j < s->ncols; j++)
            rc = cpd_dump_add_column(t, s->col[j].name, s->col[j].decl_type, s->col[j].notnull, s->col[j].pk);
    }
    if (rc) {
        cpd_dump_free(d);
        d = NULL;
    }
    *out = d;
    return rc;
}

static int only_space(const char *s, size_t n)
{
    for (size_t i = 0; i < n; i++)
        if (!strchr(" \t\r\n", s[i]))
            return 0;
    return 1;
}

/* The record gate (validate_dump.h) on a parsed document, whose JSON tree root is still at hand to
 * turn the column at fault into its place in the document's own column order. */
static int check_records(const cJSON *root, const cpd_dump *d, int today_days, char *msg)
{
    cpd_dump_at at;
    char why[CPD_MSG_MAX];
    if (cpd_validate_dump(d, today_days, &at, why) == CPD_OK)
        return CPD_OK;
    const cpd_dump_table *t = &d->table[at.table];
    const cJSON *cols = cJSON_GetObjectItemCaseSensitive(cJSON_GetObjectItemCaseSensitive(
                                                             cJSON_GetObjectItemCaseSensitive(root, "tables"), t->name),
                                                         "columns");
    size_t k = 0, doc_col = at.col;
    for (const cJSON *c = cols ? cols->child : NULL; c; c = c->next, k++)
        if (cJSON_IsString(c) && strcmp(c->valuestring, t->col[at.col].name) == 0)
            doc_col = k;
    return fail(msg, "tables.%s.rows[%zu][%zu]: %s", t->name, at.row, doc_col, why);
}

static int parse_doc(const char *text, size_t len, const cpd_dump *schema, int today_days, cpd_dump **out, char *msg);

int cpd_export_parse(const char *text, size_t len, const cpd_dump *schema, cpd_dump **out, char *msg)
{
    return parse_doc(text, len, schema, -1, out, msg);
}

int cpd_export_parse_checked(const char *text, size_t len, const cpd_dump *schema, int today_days, cpd_dump **out,
                             char *msg)
{
    return parse_doc(text, len, schema, today_days < 0 ? 0 : today_days, out, msg);
}

/* today_days < 0: the format only, no record gate. */
static int parse_doc(const char *text, size_t len, const cpd_dump *schema, int today_days, cpd_dump **out, char *msg)
{
    *out = NULL;
    msg[0] = '\0';
    long line, col;
    const char *nul = memchr(text, '\0', len);
    if (nul) {
        locate(text, (size_t)(nul - text), &line, &col);
        return fail(msg, "not JSON: a NUL byte at line %ld, column %ld", line, col);
    }
    if (only_space(text, len))
        return fail(msg, "not JSON: the document is empty");
    const char *end = NULL;
    cJSON *root = cJSON_ParseWithLengthOpts(text, len, &end, 0);
    if (!root) {
        size_t off = end && end >= text && end <= text + len ? (size_t)(end - text) : 0;
        locate(text, off, &line, &col);
        /* cJSON reports where it gave up, which can be a character past the fault: "near". */
        return fail(msg, "not JSON: syntax error near line %ld, column %ld", line, col);
    }
    size_t used = end && end >= text && end <= text + len ? (size_t)(end - text) : len;
    cpd_dump *d = NULL;
    int rc = CPD_OK;
    if (!only_space(text + used, len - used)) {
        while (strchr(" \t\r\n", text[used]))
            used++;
        locate(text, used, &line, &col);
        rc = fail(msg, "not JSON: more text after the document, at line %ld, column %ld", line, col);
        goto done;
    }
    if ((rc = copy_schema(schema, &d)))
        goto done;
    rc = parse_root(root, schema, d, msg);
    if (rc == CPD_OK && today_days >= 0)
        rc = check_records(root, d, today_days, msg);
done:
    cJSON_Delete(root);
    if (rc)
        cpd_dump_free(d);
    else
        *out = d;
    return rc;
}

static int read_doc(const char *path, const cpd_dump *schema, int today_days, cpd_dump **out, char *msg);

int cpd_export_read(const char *path, const cpd_dump *schema, cpd_dump **out, char *msg)
{
    return read_doc(path, schema, -1, out, msg);
}

int cpd_export_read_checked(const char *path, const cpd_dump *schema, int today_days, cpd_dump **out, char *msg)
{
    return read_doc(path, schema, today_days < 0 ? 0 : today_days, out, msg);
}

static int read_doc(const char *path, const cpd_dump *schema, int today_days, cpd_dump **out, char *msg)
{
    *out = NULL;
    msg[0] = '\0';
    int is_stdin = strcmp(path, "-") == 0;
    FILE *f = is_stdin ? stdin : fopen(path, "rb");
    if (!f) {
        snprintf(msg, CPD_MSG_MAX, "%s: cannot open: %s", path, strerror(errno));
        return CPD_EIO;
    }
    int rc = CPD_OK;
    char *buf = NULL;
    size_t len = 0, cap = 0;
    for (;;) {
        if (len == cap) {
            size_t ncap = cap ? 2 * cap : 65536;
            char *nb = realloc(buf, ncap);
            if (!nb) {
                rc = CPD_ENOMEM;
                goto done;
            }
            buf = nb;
            cap = ncap;
        }
        size_t got = fread(buf + len, 1, cap - len, f);
        len += got;
        if (got == 0)
            break;
    }
    if (ferror(f)) {
        snprintf(msg, CPD_MSG_MAX, "%s: cannot read: %s", path, strerror(errno));
        rc = CPD_EIO;
        goto done;
    }
    char inner[CPD_MSG_MAX];
    rc = parse_doc(buf, len, schema, today_days, out, inner);
    if (rc)
        snprintf(msg, CPD_MSG_MAX, "%s: %s", is_stdin ? "standard input" : path, inner);
done:
    free(buf);
    if (!is_stdin)
        fclose(f);
    return rc;
}

void cpd_export_row_path(const cpd_dump *d, size_t table, size_t row, char *buf, size_t n)
{
    if (table < d->ntables && row != SIZE_MAX)
        snprintf(buf, n, "tables.%s.rows[%zu]", d->table[table].name, row);
    else if (table < d->ntables)
        snprintf(buf, n, "tables.%s", d->table[table].name);
    else
        snprintf(buf, n, "tables");
}
