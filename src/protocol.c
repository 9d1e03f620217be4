/* protocol.c: recursive-descent parser for typed exercise protocols. Repeats are expanded while
 * parsing, so the result is a flat segment list whose length is bounded by CPD_PROTOCOL_MAX_S. */
#include "cpdomain/protocol.h"
#include "cpdomain/status.h"
#include "cpdomain/units.h"

#include <ctype.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* Bounds on typed intensities; rest at 0 W or standing still is a legitimate segment, so the lower
 * bounds are 0, unlike the measurement ranges of units.h (common practice). */
#define POWER_MAX_W 3000.0
#define SPEED_MAX_M_S 15.0
#define PCT_MAX 500.0

typedef struct {
    const char *text;   /* the whole input, for positions */
    const char *p;      /* cursor */
    char *msg;          /* CPD_MSG_MAX bytes */
    cpd_protocol *out;  /* segments being built */
    size_t cap;         /* allocated segments */
    int depth;          /* open groups */
    size_t mod_pos;     /* character position of the intensity that fixed the modality */
    const char *unk_at; /* the first '?' that carried a unit */
    size_t unk_len;     /* length of that unknown's text */
} parser;

/* 1-based character position of 'at': UTF-8 continuation bytes do not start a character. */
static size_t charpos(const parser *ps, const char *at)
{
    size_t n = 1;
    for (const char *c = ps->text; c < at; c++)
        if (((unsigned char)*c & 0xC0) != 0x80)
            n++;
    return n;
}

static int fail(parser *ps, const char *at, const char *fmt, ...)
{
    int k = snprintf(ps->msg, CPD_MSG_MAX, "position %zu: ", charpos(ps, at));
    if (k > 0 && k < CPD_MSG_MAX) {
        va_list ap;
        va_start(ap, fmt);
        vsnprintf(ps->msg + k, CPD_MSG_MAX - (size_t)k, fmt, ap);
        va_end(ap);
    }
    return CPD_EDATA;
}

/* "'c'" (a whole UTF-8 character) or "the end of the text", for "found ..." in messages. */
static const char *found(const char *at, char *buf, size_t n)
{
    if (*at == '\0')
        return "the end of the text";
    size_t L = 1;
    while (L < 4 && ((unsigned char)at[L] & 0xC0) == 0x80)
        L++;
    snprintf(buf, n, "'%.*s'", (int)L, at);
    return buf;
}

static const char *skip_ws(const char *s)
{
    while (*s == ' ' || *s == '\t' || *s == '\n' || *s == '\r')
        s++;
    return s;
}

static int is_num_char(char c)
{
    return isdigit((unsigned char)c) || c == '.' || c == ':';
}

/* Length of the repeat sign at s: 'x', 'X' or the UTF-8 multiplication sign U+00D7; else 0. */
static size_t times_sign(const char *s)
{
    if (*s == 'x' || *s == 'X')
        return 1;
    if ((unsigned char)s[0] == 0xC3 && (unsigned char)s[1] == 0x97)
        return 2;
    return 0;
}

static const struct {
    const char *word;
    cpd_protocol_unit unit;
} units_tab[] = {
    {"%CP", CPD_PROTOCOL_UNIT_PCT_CP}, {"%CS", CPD_PROTOCOL_UNIT_PCT_CS},  {"m/s", CPD_PROTOCOL_UNIT_M_S},
    {"km/h", CPD_PROTOCOL_UNIT_KM_H},  {"/km", CPD_PROTOCOL_UNIT_PACE_KM}, {"/100m", CPD_PROTOCOL_UNIT_PACE_100M},
    {"W", CPD_PROTOCOL_UNIT_W},
};

/* The unit written at s (case-insensitive, not followed by a letter or digit) and its length. */
static size_t match_unit(const char *s, cpd_protocol_unit *u)
{
    for (size_t i = 0; i < sizeof units_tab / sizeof units_tab[0]; i++) {
        const char *w = units_tab[i].word;
        size_t L = strlen(w);
        size_t k = 0;
        while (k < L && s[k] && tolower((unsigned char)s[k]) == tolower((unsigned char)w[k]))
            k++;
        if (k == L && !isalnum((unsigned char)s[L])) {
            *u = units_tab[i].unit;
            return L;
        }
    }
    return 0;
}

static cpd_protocol_modality unit_modality(cpd_protocol_unit u)
{
    switch (u) {
    case CPD_PROTOCOL_UNIT_W:
        return CPD_PROTOCOL_POWER;
    case CPD_PROTOCOL_UNIT_PCT_CS:
    case CPD_PROTOCOL_UNIT_M_S:
    case CPD_PROTOCOL_UNIT_KM_H:
    case CPD_PROTOCOL_UNIT_PACE_KM:
    case CPD_PROTOCOL_UNIT_PACE_100M:
        return CPD_PROTOCOL_SPEED;
    default:
        return CPD_PROTOCOL_UNSPECIFIED;
    }
}

const char *cpd_protocol_modality_name(cpd_protocol_modality m)
{
    return m == CPD_PROTOCOL_POWER ? "power" : m == CPD_PROTOCOL_SPEED ? "speed" : "unspecified";
}

static int set_modality(parser *ps, cpd_protocol_modality m, const char *at, size_t len)
{
    if (m == CPD_PROTOCOL_UNSPECIFIED)
        return CPD_OK;
    if (ps->out->modality == CPD_PROTOCOL_UNSPECIFIED) {
        ps->out->modality = m;
        ps->mod_pos = charpos(ps, at);
        return CPD_OK;
    }
    if (ps->out->modality == m)
        return CPD_OK;
    return fail(ps, at,
                "'%.*s' is a %s, but the protocol is in %s since position %zu (power and speed cannot be mixed)",
                (int)len, at, m == CPD_PROTOCOL_POWER ? "power" : "speed",
                cpd_protocol_modality_name(ps->out->modality), ps->mod_pos);
}

static int grow(parser *ps, size_t need)
{
    if (need <= ps->cap)
        return CPD_OK;
    size_t cap = ps->cap ? ps->cap : 16;
    while (cap < need)
        cap *= 2;
    cpd_protocol_segment *s = realloc(ps->out->seg, cap * sizeof *s);
    if (!s)
        return CPD_ENOMEM;
    ps->out->seg = s;
    ps->cap = cap;
    return CPD_OK;
}

/* Parses INTENSITY at the cursor into seg. */
static int parse_intensity(parser *ps, cpd_protocol_segment *seg)
{
    char fb[8];
    const char *at = ps->p;
    if (*at == '?') {
        const char *t = skip_ws(at + 1);
        cpd_protocol_unit u = CPD_PROTOCOL_UNIT_NONE;
        size_t L = match_unit(t, &u);
        const char *end = L ? t + L : at + 1;
        seg->kind = CPD_PROTOCOL_UNKNOWN;
        seg->unit = u;
        seg->value = 0.0;
        if (u != CPD_PROTOCOL_UNIT_NONE) {
            if (!ps->unk_at) {
                ps->unk_at = at;
                ps->unk_len = (size_t)(end - at);
            } else if (ps->out->unknown_unit != u) {
                return fail(
                    ps, at,
                    "a second, different unknown '%.*s' (the first is '%.*s' at position %zu); a protocol has one "
                    "unknown intensity, written alike wherever it appears",
                    (int)(end - at), at, (int)ps->unk_len, ps->unk_at, charpos(ps, ps->unk_at));
            }
            ps->out->unknown_unit = u;
        }
        ps->out->has_unknown = 1;
        ps->p = end;
        return set_modality(ps, unit_modality(u), at, (size_t)(end - at));
    }

    const char *q = at;
    if (*q == '+' || *q == '-')
        q++;
    const char *digits = q;
    while (is_num_char(*q))
        q++;
    if (q == digits)
        return fail(ps, at, "expected an intensity (e.g. 350W, 105%%CP, 4.6m/s, 3:35/km, 1:20/100m or ?), found %s",
                    found(at, fb, sizeof fb));
    size_t numlen = (size_t)(q - at);
    const char *t = skip_ws(q);
    cpd_protocol_unit u;
    size_t L = match_unit(t, &u);
    if (!L)
        return fail(ps, t, "expected a unit after '%.*s' (W, %%CP, %%CS, m/s, km/h, /km or /100m), found %s",
                    (int)numlen, at, found(t, fb, sizeof fb));
    char num[64];
    if (numlen >= sizeof num)
        return fail(ps, at, "number too long in the intensity");
    memcpy(num, at, numlen);
    num[numlen] = '\0';
    const char *end = t + L;
    int tlen = (int)(end - at);

    double v;
    if (u == CPD_PROTOCOL_UNIT_PACE_KM || u == CPD_PROTOCOL_UNIT_PACE_100M) {
        double pace_s;
        if (cpd_parse_duration(num, &pace_s) != CPD_OK || !(pace_s > 0))
            return fail(ps, at, "bad pace '%s' in '%.*s' (expected m:ss, e.g. 3:35/km or 1:20/100m)", num, tlen, at);
        v = (u == CPD_PROTOCOL_UNIT_PACE_KM ? 1000.0 : 100.0) / pace_s;
    } else {
        if (cpd_parse_number(num, &v) != CPD_OK)
            return fail(ps, at, "bad number '%s' in the intensity '%.*s'", num, tlen, at);
        if (u == CPD_PROTOCOL_UNIT_KM_H)
            v /= 3.6;
    }
    switch (u) {
    case CPD_PROTOCOL_UNIT_W:
        if (!(v >= 0 && v <= POWER_MAX_W))
            return fail(ps, at, "power must be between 0 and %g W (got '%.*s')", POWER_MAX_W, tlen, at);
        seg->kind = CPD_PROTOCOL_ABS_POWER;
        break;
    case CPD_PROTOCOL_UNIT_PCT_CP:
    case CPD_PROTOCOL_UNIT_PCT_CS:
        if (!(v >= 0 && v <= PCT_MAX))
            return fail(ps, at, "percentage must be between 0 and %g (got '%.*s')", PCT_MAX, tlen, at);
        seg->kind = CPD_PROTOCOL_PCT_CP;
        ps->out->has_pct = 1;
        break;
    default:
        if (!(v >= 0 && v <= SPEED_MAX_M_S))
            return fail(ps, at, "speed must be between 0 and %g m/s (got %.4g m/s from '%.*s')", SPEED_MAX_M_S, v, tlen,
                        at);
        seg->kind = CPD_PROTOCOL_ABS_SPEED;
        break;
    }
    seg->unit = u;
    seg->value = v;
    ps->p = end;
    return set_modality(ps, unit_modality(u), at, (size_t)tlen);
}

/* Appends a parsed segment. */
static int append(parser *ps, const cpd_protocol_segment *seg)
{
    int rc = grow(ps, ps->out->n + 1);
    if (rc)
        return rc;
    ps->out->seg[ps->out->n++] = *seg;
    ps->out->total_s += seg->duration_s;
    return CPD_OK;
}

/* Parses DISTANCE@SPEED at the cursor (the number from at to num_end, in metres x scale; the unit
 * ends at end) and appends it, lasting distance/speed rounded to whole seconds. */
static int parse_distance_segment(parser *ps, const char *at, const char *num_end, double scale, const char *end)
{
    char fb[8], num[64];
    size_t L = (size_t)(num_end - at);
    if (L >= sizeof num)
        return fail(ps, at, "distance too long");
    memcpy(num, at, L);
    num[L] = '\0';
    double dist;
    if (cpd_parse_number(num, &dist) != CPD_OK || !(dist > 0) || dist * scale > 1e6)
        return fail(ps, at, "bad distance '%.*s' (expected e.g. 400m or 1.5km, up to 1000 km)", (int)(end - at), at);
    dist *= scale;
    const char *a = skip_ws(end);
    if (*a != '@')
        return fail(ps, a, "expected '@' after the distance, found %s", found(a, fb, sizeof fb));
    ps->p = skip_ws(a + 1);
    const char *iat = ps->p;
    cpd_protocol_segment seg = {.distance_m = dist, .pos = charpos(ps, at)};
    int rc = parse_intensity(ps, &seg);
    if (rc)
        return rc;
    if (seg.kind != CPD_PROTOCOL_ABS_SPEED)
        return fail(ps, iat, "a distance is held at a speed (m/s, km/h or a pace such as 3:35/km): with %s its time "
                             "is not known before the fit or the answer",
                    seg.kind == CPD_PROTOCOL_ABS_POWER ? "a power" : seg.kind == CPD_PROTOCOL_UNKNOWN ? "'?'" : "%CS");
    if (!(seg.value > 0))
        return fail(ps, iat, "a distance needs a speed above 0");
    double t = floor(dist / seg.value + 0.5);
    if (t < 1)
        t = 1;
    if (t > CPD_PROTOCOL_MAX_S || ps->out->total_s + (size_t)t > CPD_PROTOCOL_MAX_S)
        return fail(ps, at, "the protocol lasts more than 24 h (%d s)", CPD_PROTOCOL_MAX_S);
    seg.duration_s = (size_t)t;
    return append(ps, &seg);
}

/* Parses DURATION@INTENSITY at the cursor and appends it. */
static int parse_segment(parser *ps)
{
    char fb[8];
    const char *at = ps->p;
    const char *q = at;
    while (is_num_char(*q))
        q++;
    if (q == at)
        return fail(ps, at, "expected a duration (e.g. 390, 6:30, 6min) or a repeat Nx( ... ), found %s",
                    found(at, fb, sizeof fb));
    const char *end = q;
    const char *t = skip_ws(q);
    if (isalpha((unsigned char)*t)) {
        end = t;
        while (isalpha((unsigned char)*end))
            end++;
    }
    int dlen = (int)(end - at);
    char buf[64];
    double d;
    if ((size_t)dlen >= sizeof buf)
        return fail(ps, at, "duration too long");
    memcpy(buf, at, (size_t)dlen);
    buf[dlen] = '\0';
    size_t ul = (size_t)(end - t);
    if ((ul == 1 && *t == 'm') || (ul == 2 && strncmp(t, "km", 2) == 0))
        return parse_distance_segment(ps, at, q, ul == 2 ? 1000.0 : 1.0, end);
    if (cpd_parse_duration(buf, &d) != CPD_OK)
        return fail(ps, at, "bad duration '%s' (expected e.g. 390, 390s, 6:30, 6min or 1:02:00)", buf);
    if (d < 1)
        return fail(ps, at, "duration '%s' is shorter than 1 s", buf);
    if (d > CPD_PROTOCOL_MAX_S)
        return fail(ps, at, "duration '%s' is longer than 24 h", buf);
    if (d != floor(d))
        return fail(ps, at, "duration '%s' is not a whole number of seconds (the balance runs on 1-s steps)", buf);
    size_t dur = (size_t)d;
    if (ps->out->total_s + dur > CPD_PROTOCOL_MAX_S)
        return fail(ps, at, "the protocol lasts more than 24 h (%d s)", CPD_PROTOCOL_MAX_S);

    const char *a = skip_ws(end);
    if (*a != '@')
        return fail(ps, a, "expected '@' after the duration, found %s", found(a, fb, sizeof fb));
    ps->p = skip_ws(a + 1);

    cpd_protocol_segment seg = {.duration_s = dur, .pos = charpos(ps, at)};
    int rc = parse_intensity(ps, &seg);
    if (rc)
        return rc;
    return append(ps, &seg);
}

static int parse_list(parser *ps, const char *open);

/* Parses Nx( ... ) at the cursor (which is at N) and appends N copies of the group. */
static int parse_repeat(parser *ps)
{
    char fb[8];
    const char *at = ps->p;
    const char *q = at;
    while (isdigit((unsigned char)*q))
        q++;
    size_t ndig = (size_t)(q - at);
    const char *x = skip_ws(q);
    size_t xl = times_sign(x);
    unsigned long count = 0;
    for (size_t i = 0; i < ndig && count <= CPD_PROTOCOL_MAX_S; i++)
        count = count * 10 + (unsigned long)(at[i] - '0');
    if (count == 0)
        return fail(ps, at, "repeat count must be at least 1 (got '%.*s')", (int)(x + xl - at), at);
    if (count > CPD_PROTOCOL_MAX_S)
        return fail(ps, at, "the protocol lasts more than 24 h (%d s)", CPD_PROTOCOL_MAX_S);
    const char *open = skip_ws(x + xl);
    if (*open != '(')
        return fail(ps, open, "expected '(' after '%.*s', found %s", (int)(x + xl - at), at,
                    found(open, fb, sizeof fb));
    if (ps->depth == CPD_PROTOCOL_MAX_DEPTH)
        return fail(ps, open, "repeats nested more than %d deep", CPD_PROTOCOL_MAX_DEPTH);

    size_t n0 = ps->out->n, t0 = ps->out->total_s;
    ps->p = open + 1;
    ps->depth++;
    int rc = parse_list(ps, open);
    ps->depth--;
    if (rc)
        return rc;
    ps->p++; /* parse_list stops on the closing ')' */

    size_t gn = ps->out->n - n0, gd = ps->out->total_s - t0;
    if (gd > 0 && count - 1 > (CPD_PROTOCOL_MAX_S - ps->out->total_s) / gd)
        return fail(ps, at, "the protocol lasts more than 24 h (%d s) once repeats are expanded", CPD_PROTOCOL_MAX_S);
    rc = grow(ps, ps->out->n + (count - 1) * gn);
    if (rc)
        return rc;
    for (unsigned long k = 1; k < count; k++) {
        memcpy(ps->out->seg + ps->out->n, ps->out->seg + n0, gn * sizeof *ps->out->seg);
        ps->out->n += gn;
    }
    ps->out->total_s = t0 + count * gd;
    return CPD_OK;
}

static int parse_item(parser *ps)
{
    const char *q = ps->p;
    while (isdigit((unsigned char)*q))
        q++;
    if (q > ps->p && times_sign(skip_ws(q)))
        return parse_repeat(ps);
    return parse_segment(ps);
}

/* Parses items separated by ';' or ',' until the end of the text (open == NULL) or the ')' that
 * closes the '(' at open, on which it leaves the cursor. */
static int parse_list(parser *ps, const char *open)
{
    char fb[8];
    for (;;) {
        ps->p = skip_ws(ps->p);
        char c = *ps->p;
        if (c == '\0' && !open && ps->out->n == 0)
            return fail(ps, ps->p, "empty protocol; expected a segment such as 10min@150W");
        if (c == '\0' || c == ')' || c == ';' || c == ',')
            return fail(ps, ps->p, "expected a segment (DURATION@INTENSITY) or a repeat Nx( ... ), found %s",
                        found(ps->p, fb, sizeof fb));
        int rc = parse_item(ps);
        if (rc)
            return rc;
        ps->p = skip_ws(ps->p);
        c = *ps->p;
        if (c == ';' || c == ',') {
            ps->p = skip_ws(ps->p + 1);
            c = *ps->p;
            if (c != '\0' && c != ')')
                continue;
        }
        if (c == '\0') {
            if (open)
                return fail(ps, ps->p, "expected ')' to close the '(' at position %zu", charpos(ps, open));
            return CPD_OK;
        }
        if (c == ')') {
            if (!open)
                return fail(ps, ps->p, "unmatched ')'");
            return CPD_OK;
        }
        return fail(ps, ps->p, "expected ';' or ',' between segments, found %s", found(ps->p, fb, sizeof fb));
    }
}

int cpd_protocol_parse(const char *text, cpd_protocol **out, char *msg)
{
    int rc = CPD_OK;
    char dummy[CPD_MSG_MAX];
    if (!msg)
        msg = dummy;
    msg[0] = '\0';
    if (!out || !text) {
        snprintf(msg, CPD_MSG_MAX, "no protocol given");
        return CPD_EUSAGE;
    }
    *out = NULL;
    parser ps = {.text = text, .p = text, .msg = msg};
    ps.out = calloc(1, sizeof *ps.out);
    if (!ps.out) {
        rc = CPD_ENOMEM;
        goto done;
    }
    rc = parse_list(&ps, NULL);
    if (rc)
        goto done;
    for (size_t i = 0; i < ps.out->n; i++)
        if (ps.out->seg[i].kind == CPD_PROTOCOL_UNKNOWN)
            ps.out->unknown_s += ps.out->seg[i].duration_s;
    *out = ps.out;
    ps.out = NULL;
done:
    if (rc == CPD_ENOMEM)
        snprintf(msg, CPD_MSG_MAX, "out of memory");
    cpd_protocol_free(ps.out);
    return rc;
}

void cpd_protocol_free(cpd_protocol *p)
{
    if (!p)
        return;
    free(p->seg);
    free(p);
}

int cpd_protocol_expand(const cpd_protocol *p, double cp, double unknown, double *intensity, size_t n)
{
    if (!p || !intensity || n < p->total_s)
        return CPD_EUSAGE;
    if (p->has_pct && !(isfinite(cp) && cp > 0))
        return CPD_EUSAGE;
    if (p->has_unknown && !(isfinite(unknown) && unknown >= 0))
        return CPD_EUSAGE;
    size_t k = 0;
    for (size_t i = 0; i < p->n; i++) {
        const cpd_protocol_segment *s = &p->seg[i];
        double v = s->kind == CPD_PROTOCOL_UNKNOWN  ? unknown
                   : s->kind == CPD_PROTOCOL_PCT_CP ? s->value / 100.0 * cp
                                                    : s->value;
        for (size_t j = 0; j < s->duration_s; j++)
            intensity[k++] = v;
    }
    return CPD_OK;
}
