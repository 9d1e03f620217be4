/* csvfast.c: plain numeric CSV straight into arrays (csvfast.h); any doubt returns -1 and the
 * full parser takes the file. Numbers of up to 15 significant digits and 22 decimals are the
 * exact quotient of two exact doubles (one correctly rounded division, as strtod rounds); longer
 * ones go to strtod itself. */
#include "csvfast.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

#define MAXCOLS 256

static const double POW10[23] = {1e0,  1e1,  1e2,  1e3,  1e4,  1e5,  1e6,  1e7,  1e8,  1e9,  1e10, 1e11,
                                 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22};

size_t cpd_csvfast_rows_bound(const char *buf, size_t len)
{
    size_t n = 1;
    for (const char *p = buf, *end = buf + len; (p = memchr(p, '\n', (size_t)(end - p))) != NULL; p++)
        n++;
    return n;
}

static int blank(char c)
{
    return c == ' ' || c == '\t';
}

/* One number field from *pp, up to ',' or the line end; *pp is left on that delimiter. */
static int number(const char **pp, const char *end, double *out)
{
    const char *p = *pp;
    while (p < end && blank(*p))
        p++;
    const char *start = p;
    int neg = 0;
    if (p < end && (*p == '+' || *p == '-'))
        neg = *p++ == '-';
    uint64_t m = 0;
    int digits = 0, frac = 0, sig = 0;
    for (; p < end && *p >= '0' && *p <= '9'; p++, digits++) {
        sig += sig || *p != '0';
        if (sig <= 18)
            m = m * 10 + (uint64_t)(*p - '0');
    }
    if (p < end && *p == '.') {
        for (p++; p < end && *p >= '0' && *p <= '9'; p++, frac++) {
            sig += sig || *p != '0';
            if (sig <= 18)
                m = m * 10 + (uint64_t)(*p - '0');
        }
    }
    const char *stop = p;
    while (p < end && blank(*p))
        p++;
    if (digits + frac == 0 || (p < end && *p != ',' && *p != '\n' && *p != '\r'))
        return -1;
    double v;
    if (sig <= 15 && frac <= 22) {
        v = (double)m / POW10[frac];
    } else {
        char tmp[64];
        size_t L = (size_t)(stop - start);
        if (L >= sizeof tmp)
            return -1;
        memcpy(tmp, start, L);
        tmp[L] = '\0';
        v = strtod(tmp, NULL);
        neg = 0; /* strtod read the sign */
        if (!isfinite(v))
            return -1;
    }
    *out = neg ? -v : v;
    *pp = p;
    return 0;
}

/* Skips one field that is not wanted: up to ',' or the line end; NULL at a '\r' that does not
 * end a line (the full parser reads it as a line end of its own). */
static const char *skip(const char *p, const char *end)
{
    while (p < end && *p != ',' && *p != '\n') {
        if (*p == '\r' && (p + 1 == end || p[1] != '\n'))
            return NULL;
        p++;
    }
    return p;
}

/* At a line end: past "\n" or "\r\n"; NULL for a lone '\r' or anything else. */
static const char *eol(const char *p, const char *end)
{
    if (p == end)
        return p;
    if (*p == '\r')
        p++;
    return p < end && *p == '\n' ? p + 1 : NULL;
}

long cpd_csvfast_numbers(const char *buf, size_t len, size_t nwant, const char *const *want, int *col,
                         double *const *dst, size_t cap)
{
    for (size_t k = 0; k < nwant; k++)
        col[k] = -1;
    if (memchr(buf, '"', len) || memchr(buf, '\0', len))
        return -1;
    const char *p = buf, *end = buf + len;
    if (len >= 3 && memcmp(p, "\xEF\xBB\xBF", 3) == 0)
        p += 3;
    /* the header: which wanted name each column holds (-1: none) */
    int of[MAXCOLS];
    size_t ncols = 0;
    for (;;) {
        if (ncols == MAXCOLS)
            return -1;
        const char *a = p;
        if (!(p = skip(p, end)))
            return -1;
        const char *b = p;
        while (a < b && blank(*a))
            a++;
        while (b > a && (blank(b[-1]) || b[-1] == '\r'))
            b--;
        of[ncols] = -1;
        for (size_t k = 0; k < nwant; k++)
            if (col[k] < 0 && strlen(want[k]) == (size_t)(b - a) && strncasecmp(a, want[k], (size_t)(b - a)) == 0) {
                col[k] = (int)ncols;
                of[ncols] = (int)k;
                break;
            }
        ncols++;
        if (p < end && *p == ',') {
            p++;
            continue;
        }
        break;
    }
    if (!(p = eol(p, end)))
        return -1;
    size_t row = 0;
    while (p < end) {
        if (row == cap || *p == '\n' || *p == '\r')
            return -1; /* a blank line, or more rows than room */
        for (size_t j = 0; j < ncols; j++) {
            if (j > 0) {
                if (p == end || *p != ',')
                    return -1; /* a short row */
                p++;
            }
            if (of[j] < 0) {
                if (!(p = skip(p, end)))
                    return -1;
            } else if (number(&p, end, &dst[of[j]][row])) {
                return -1;
            }
        }
        if (p < end && *p == ',')
            return -1; /* a long row */
        if (!(p = eol(p, end)))
            return -1;
        row++;
    }
    return (long)row;
}
