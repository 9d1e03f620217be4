/* csvin.c: CSV tables via libcsv (Debian libcsv-dev). The file is fed to the parser one
 * physical line at a time so that every field knows the line it opened on. */
#include "cpdomain/csvin.h"
#include "cpdomain/status.h"

#include <csv.h>
#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

struct cpd_csv {
    char *path;
    char *pool;      /* all field texts, NUL-terminated, back to back */
    size_t pool_len, pool_cap;
    size_t *field;   /* offset into pool of each field of each record, header first */
    size_t nfield, field_cap;
    struct rec {
        size_t first; /* index into field of the record's first field */
        size_t n;     /* fields in the record */
        long line;    /* physical line where the record opened */
    } *rec;
    size_t nrec, rec_cap;
    /* parse state */
    long line;        /* physical line being fed */
    long open_line;   /* line where the current record opened; 0 before its first field */
    size_t cur_n;     /* fields so far in the current record */
    int oom;
    size_t grows;     /* growths of libcsv's field buffer (cpd_csv_parser_grows) */
};

/* libcsv grows its field buffer by a fixed block (128 bytes by default), which makes a long field
 * quadratic. Before each line the block is set to the larger of the line and the buffer, so the
 * buffer at least doubles at each growth and a field of n bytes costs O(n). The growths are
 * counted through libcsv's realloc hook (which takes no user data: a thread-local counter). */
static _Thread_local size_t parser_grows;

static void *counting_realloc(void *p, size_t n)
{
    parser_grows++;
    return realloc(p, n);
}

static int grow(void **p, size_t *cap, size_t need, size_t elem)
{
    if (need <= *cap)
        return 0;
    size_t nc = *cap ? *cap : 64;
    while (nc < need)
        nc *= 2;
    void *np = realloc(*p, nc * elem);
    if (!np)
        return -1;
    *p = np;
    *cap = nc;
    return 0;
}

static void on_field(void *s, size_t len, void *data)
{
    cpd_csv *c = data;
    if (c->oom)
        return;
    const char *t = s ? s : "";
    long nl = 0;
    for (size_t i = 0; i < len; i++)
        nl += t[i] == '\n';
    if (c->cur_n == 0)
        c->open_line = c->line - nl;
    if (grow((void **)&c->pool, &c->pool_cap, c->pool_len + len + 1, 1) ||
        grow((void **)&c->field, &c->field_cap, c->nfield + 1, sizeof *c->field))
        goto oom;
    /* libcsv drops blanks (spaces, tabs) around unquoted fields; what a quoted field holds is kept
     * exactly (RFC 4180) */
    memcpy(c->pool + c->pool_len, t, len);
    c->field[c->nfield++] = c->pool_len;
    c->pool_len += len;
    c->pool[c->pool_len++] = '\0';
    c->cur_n++;
    return;
oom:
    c->oom = 1;
}

static void on_record(int ch, void *data)
{
    (void)ch;
    cpd_csv *c = data;
    if (c->oom || c->cur_n == 0)
        return;
    size_t first = c->nfield - c->cur_n;
    int blank = 1;
    for (size_t i = first; i < c->nfield && blank; i++)
        blank = c->pool[c->field[i]] == '\0';
    if (blank) { /* a line of blanks only: skipped like an empty line */
        c->nfield = first;
        c->cur_n = 0;
        return;
    }
    if (grow((void **)&c->rec, &c->rec_cap, c->nrec + 1, sizeof *c->rec)) {
        c->oom = 1;
        return;
    }
    c->rec[c->nrec].first = first;
    c->rec[c->nrec].n = c->cur_n;
    c->rec[c->nrec].line = c->open_line;
    c->nrec++;
    c->cur_n = 0;
}

/* The separator of a file whose header line holds no comma but semicolons or tabs (exports of
 * spreadsheets in locales with a decimal comma, and tab-separated text): ';' or '\t', else ','. */
static unsigned char sniff_delim(const char *b, size_t n)
{
    const char *nl = memchr(b, '\n', n);
    size_t L = nl ? (size_t)(nl - b) : n;
    if (memchr(b, ',', L))
        return ',';
    if (memchr(b, ';', L))
        return ';';
    if (memchr(b, '\t', L))
        return '\t';
    return ',';
}

static int space_only(unsigned char ch)
{
    return ch == ' ';
}

void cpd_csv_free(cpd_csv *c)
{
    if (!c)
        return;
    free(c->path);
    free(c->pool);
    free(c->field);
    free(c->rec);
    free(c);
}

int cpd_csv_read(const char *path, cpd_csv **out, char *msg)
{
    *out = NULL;
    msg[0] = '\0';
    int rc = CPD_OK;
    char *buf = NULL;
    FILE *f = fopen(path, "rb");
    if (!f) {
        snprintf(msg, CPD_MSG_MAX, "%s: cannot open: %s", path, strerror(errno));
        return CPD_EIO;
    }
    size_t cap = 0, len = 0;
    for (;;) {
        if (grow((void **)&buf, &cap, len + 65536, 1)) {
            rc = CPD_ENOMEM;
            goto done;
        }
        size_t got = fread(buf + len, 1, cap - len, f);
        len += got;
        if (got == 0)
            break;
    }
    if (ferror(f)) {
        snprintf(msg, CPD_MSG_MAX, "%s: read error", path);
        rc = CPD_EIO;
        goto done;
    }
    rc = cpd_csv_parse(path, buf, len, out, msg);
done:
    fclose(f);
    free(buf);
    return rc;
}

int cpd_csv_parse(const char *path, const char *buf, size_t len, cpd_csv **out, char *msg)
{
    *out = NULL;
    msg[0] = '\0';
    int rc = CPD_OK;
    struct csv_parser p;
    int parser_ready = 0;
    cpd_csv *c = calloc(1, sizeof *c);
    if (!c || !(c->path = strdup(path))) {
        rc = CPD_ENOMEM;
        goto done;
    }
    if (len && memchr(buf, '\0', len)) {
        snprintf(msg, CPD_MSG_MAX, "%s: not a text file (it contains NUL bytes)", path);
        rc = CPD_EDATA;
        goto done;
    }
    size_t pos = 0;
    if (len >= 3 && memcmp(buf, "\xEF\xBB\xBF", 3) == 0)
        pos = 3;
    if (csv_init(&p, CSV_STRICT | CSV_STRICT_FINI | CSV_APPEND_NULL) != 0) {
        rc = CPD_ENOMEM;
        goto done;
    }
    parser_ready = 1;
    unsigned char delim = sniff_delim(buf + pos, len - pos);
    csv_set_delim(&p, delim);
    if (delim == '\t') /* a tab separates: only spaces are blanks */
        csv_set_space_func(&p, space_only);
    csv_set_realloc_func(&p, counting_realloc);
    parser_grows = 0;
    c->line = 1;
    while (pos < len) {
        const char *nl = memchr(buf + pos, '\n', len - pos);
        size_t chunk = nl ? (size_t)(nl - (buf + pos)) + 1 : len - pos;
        size_t blk = p.entry_size > chunk ? p.entry_size : chunk;
        csv_set_blk_size(&p, blk > 128 ? blk : 128);
        if (csv_parse(&p, buf + pos, chunk, on_field, on_record, c) != chunk) {
            snprintf(msg, CPD_MSG_MAX, "%s:%ld:%zu: malformed CSV: %s (quote a field that contains a quote, "
                     "a comma or a line break, and double the quotes inside it)",
                     path, c->line, c->cur_n + 1, csv_strerror(csv_error(&p)));
            rc = CPD_EDATA;
            goto done;
        }
        if (c->oom) {
            rc = CPD_ENOMEM;
            goto done;
        }
        pos += chunk;
        if (nl)
            c->line++;
    }
    long open_line = c->cur_n ? c->open_line : c->line;
    size_t col = c->cur_n + 1;
    if (csv_fini(&p, on_field, on_record, c) != 0) {
        snprintf(msg, CPD_MSG_MAX, "%s:%ld:%zu: malformed CSV: a quoted field is never closed", path,
                 open_line, col);
        rc = CPD_EDATA;
        goto done;
    }
    if (c->oom) {
        rc = CPD_ENOMEM;
        goto done;
    }
    if (c->nrec == 0) {
        snprintf(msg, CPD_MSG_MAX, "%s:1:1: the file is empty: a header row is needed", path);
        rc = CPD_EDATA;
        goto done;
    }
    size_t ncol = c->rec[0].n;
    for (size_t j = 0; j < ncol; j++) {
        char *h = c->pool + c->field[c->rec[0].first + j];
        if (!*h) {
            snprintf(msg, CPD_MSG_MAX, "%s:%ld:%zu: empty column name in the header", path, c->rec[0].line,
                     j + 1);
            rc = CPD_EDATA;
            goto done;
        }
        for (size_t k = 0; k < j; k++)
            if (strcasecmp(h, c->pool + c->field[c->rec[0].first + k]) == 0) {
                snprintf(msg, CPD_MSG_MAX, "%s:%ld:%zu: column '%s' appears twice in the header", path,
                         c->rec[0].line, j + 1, h);
                rc = CPD_EDATA;
                goto done;
            }
    }
    for (size_t r = 1; r < c->nrec; r++)
        if (c->rec[r].n > ncol) {
            snprintf(msg, CPD_MSG_MAX, "%s:%ld:%zu: this row has %zu fields but the header has %zu", path,
                     c->rec[r].line, ncol + 1, c->rec[r].n, ncol);
            rc = CPD_EDATA;
            goto done;
        }
done:
    if (parser_ready)
        csv_free(&p);
    if (c)
        c->grows = parser_grows;
    if (rc) {
        cpd_csv_free(c);
        return rc;
    }
    *out = c;
    return CPD_OK;
}

size_t cpd_csv_nrows(const cpd_csv *c)
{
    return c->nrec - 1;
}

size_t cpd_csv_ncols(const cpd_csv *c)
{
    return c->rec[0].n;
}

const char *cpd_csv_path(const cpd_csv *c)
{
    return c->path;
}

const char *cpd_csv_header(const cpd_csv *c, size_t col)
{
    return col < c->rec[0].n ? c->pool + c->field[c->rec[0].first + col] : "";
}

const char *cpd_csv_get(const cpd_csv *c, size_t row, size_t col)
{
    size_t r = row + 1;
    if (r >= c->nrec || col >= c->rec[r].n)
        return "";
    return c->pool + c->field[c->rec[r].first + col];
}

size_t cpd_csv_parser_grows(const cpd_csv *c)
{
    return c->grows;
}

long cpd_csv_line(const cpd_csv *c, size_t row)
{
    return row + 1 < c->nrec ? c->rec[row + 1].line : 0;
}

int cpd_csv_find(const cpd_csv *c, const char *name)
{
    for (size_t j = 0; j < c->rec[0].n; j++)
        if (strcasecmp(cpd_csv_header(c, j), name) == 0)
            return (int)j;
    return -1;
}

void cpd_csv_where(const cpd_csv *c, size_t row, int col, char *buf, size_t n)
{
    snprintf(buf, n, "%s:%ld:%d: column '%s'", c->path, cpd_csv_line(c, row), col + 1,
             cpd_csv_header(c, (size_t)col));
}

int cpd_csv_map(cpd_csv *c, const char *map, char *msg)
{
    msg[0] = '\0';
    if (!map || !*map)
        return CPD_OK;
    const char *p = map;
    while (*p) {
        const char *comma = strchr(p, ',');
        size_t L = comma ? (size_t)(comma - p) : strlen(p);
        const char *eq = memchr(p, '=', L);
        if (!eq || eq == p || eq == p + L - 1) {
            snprintf(msg, CPD_MSG_MAX, "--map: expected NAME=HEADER, got '%.*s'", (int)L, p);
            return CPD_EUSAGE;
        }
        char name[128], header[256];
        const char *n0 = p, *n1 = eq, *h0 = eq + 1, *h1 = p + L; /* blanks around NAME and HEADER do not count */
        while (n0 < n1 && (*n0 == ' ' || *n0 == '\t'))
            n0++;
        while (n1 > n0 && (n1[-1] == ' ' || n1[-1] == '\t'))
            n1--;
        while (h0 < h1 && (*h0 == ' ' || *h0 == '\t'))
            h0++;
        while (h1 > h0 && (h1[-1] == ' ' || h1[-1] == '\t'))
            h1--;
        snprintf(name, sizeof name, "%.*s", (int)(n1 - n0), n0);
        snprintf(header, sizeof header, "%.*s", (int)(h1 - h0), h0);
        int j = cpd_csv_find(c, header);
        if (j < 0) {
            snprintf(msg, CPD_MSG_MAX, "--map: %s has no column '%s'", c->path, header);
            return CPD_EUSAGE;
        }
        int k = cpd_csv_find(c, name);
        if (k >= 0 && k != j) {
            snprintf(msg, CPD_MSG_MAX, "--map: %s already has a column '%s'", c->path, name);
            return CPD_EUSAGE;
        }
        /* rename in place when it fits, else append the new name to the pool */
        size_t off = c->field[c->rec[0].first + (size_t)j];
        size_t nl = strlen(name);
        if (nl <= strlen(c->pool + off)) {
            memcpy(c->pool + off, name, nl + 1);
        } else {
            if (grow((void **)&c->pool, &c->pool_cap, c->pool_len + nl + 1, 1))
                return CPD_ENOMEM;
            memcpy(c->pool + c->pool_len, name, nl + 1);
            c->field[c->rec[0].first + (size_t)j] = c->pool_len;
            c->pool_len += nl + 1;
        }
        p += L;
        if (*p == ',')
            p++;
    }
    return CPD_OK;
}

char *cpd_csv_field(const char *text)
{
    const char *t = text ? text : "";
    char *end = NULL;
    double v = t[0] ? strtod(t, &end) : 0;
    int number = t[0] && end && *end == '\0' && isfinite(v) && !isspace((unsigned char)t[0]);
    int guard = !number && t[0] != '\0' && strchr("=+-@\t\r", t[0]) != NULL;
    int quote = guard || strpbrk(t, ",\"\r\n") != NULL;
    size_t n = strlen(t), extra = 0;
    for (const char *q = t; *q; q++)
        extra += *q == '"';
    char *out = malloc(n + extra + 4);
    if (!out)
        return NULL;
    size_t o = 0;
    if (quote)
        out[o++] = '"';
    if (guard)
        out[o++] = '\'';
    for (const char *q = t; *q; q++) {
        if (*q == '"')
            out[o++] = '"';
        out[o++] = *q;
    }
    if (quote)
        out[o++] = '"';
    out[o] = '\0';
    return out;
}
