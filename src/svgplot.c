/* svgplot.c: generic SVG plots for the domain sheets. All output goes through one growable string
 * builder; every number written is a clipped finite pixel coordinate or a checked style value,
 * every user text passes through the XML escaper. */
#include "cpdomain/svgplot.h"
#include "cpdomain/status.h"
#include "cpdomain/units.h"

#include <math.h>
#include <stdarg.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define BIG 1e300       /* larger magnitudes are treated as non-finite, so spans and padding cannot overflow */
#define NMAX 100000000u /* most values per series; keeps n * sizeof(double) far from overflow */
#define PX_LIMIT 1e6    /* pixel coordinates are clamped here: far-away points stay short in %.2f */
#define AX_TICKS 16     /* room for the ticks of one axis (at most 12 are asked for) */
#define LAB_MAX 32      /* one tick label */

/* Text sizes (px) and the average advance of a sans-serif glyph (em), used to estimate text widths
 * because the renderer's font is unknown; 0.62 em lies between Liberation Sans digits (0.56 em) and
 * DejaVu Sans digits (0.64 em), the common defaults (from memory). */
#define FS_TITLE 14.0
#define FS_LABEL 12.0
#define FS_TICK 11.0
#define FS_LEGEND 11.0
#define FS_NOTE 10.0
#define CHAR_EM 0.62

static const char *const palette[CPD_SVGPLOT_NCOLORS] = {
    "#1b5e9e", "#cf6a0e", "#1a9477", "#a8281c", "#c76fb8", "#3d3d3d", "#5fb3e3", "#e5c440",
    "#f2effe", "#d4ceec", "#b4abd6", "#9489c1",
};
/* Default colours of series added without a style: the line colours only. */
#define NLINECOLORS 6
static const char *const dash_array[CPD_SVGPLOT_NDASH] = {NULL, "6 4", "1 3", "8 3 1 3"};

enum { L_LINE, L_POINTS, L_BAND, L_STEP, L_HREGION, L_VLINE, L_HLINE };

/* Series carry data and legend entries; the other kinds are annotations. */
static int is_series(int kind)
{
    return kind == L_LINE || kind == L_POINTS || kind == L_BAND || kind == L_STEP;
}

typedef struct {
    int kind;
    cpd_svgplot_style st;
    char *label;                          /* owned; NULL for none */
    size_t n;                             /* values per array */
    double *x, *y, *y2;                   /* data units; band: y = lower, y2 = upper edge */
    double *ey_lo, *ey_hi, *ex_lo, *ex_hi; /* error offsets, data units, or NULL */
    double v0, v1;                        /* region bounds or reference-line position, data units */
    double *mem;                          /* one block holding every array above */
} layer;

struct cpd_svgplot {
    int width_px, height_px;
    char *title;
    char *label[CPD_SVGPLOT_NAXES];
    double fix_lo[CPD_SVGPLOT_NAXES], fix_hi[CPD_SVGPLOT_NAXES]; /* NAN = automatic */
    int format[CPD_SVGPLOT_NAXES];
    layer *layer;
    size_t nlayer, cap;
    size_t nseries; /* series added so far, for default colours */
};

/* ---- string builder ---------------------------------------------------------------------- */

typedef struct {
    char *s;
    size_t len, cap;
    int oom; /* sticky: once an allocation failed every later call does nothing */
} sbuf;

static void sb_reserve(sbuf *b, size_t extra)
{
    if (b->oom)
        return;
    if (extra > SIZE_MAX / 2 - b->len) {
        b->oom = 1;
        return;
    }
    size_t need = b->len + extra + 1;
    if (need <= b->cap)
        return;
    size_t cap = b->cap ? b->cap : 4096;
    while (cap < need)
        cap *= 2;
    char *s = realloc(b->s, cap);
    if (!s) {
        b->oom = 1;
        return;
    }
    b->s = s;
    b->cap = cap;
}

static void sb_add(sbuf *b, const char *s, size_t n)
{
    sb_reserve(b, n);
    if (b->oom)
        return;
    memcpy(b->s + b->len, s, n);
    b->len += n;
    b->s[b->len] = '\0';
}

static void sb_puts(sbuf *b, const char *s)
{
    sb_add(b, s, strlen(s));
}

#if defined(__GNUC__)
__attribute__((format(printf, 2, 3)))
#endif
static void sb_printf(sbuf *b, const char *fmt, ...)
{
    char tmp[256];
    va_list ap;
    va_start(ap, fmt);
    int k = vsnprintf(tmp, sizeof tmp, fmt, ap);
    va_end(ap);
    if (k < 0) {
        b->oom = 1;
        return;
    }
    if ((size_t)k < sizeof tmp) {
        sb_add(b, tmp, (size_t)k);
        return;
    }
    sb_reserve(b, (size_t)k);
    if (b->oom)
        return;
    va_start(ap, fmt);
    vsnprintf(b->s + b->len, (size_t)k + 1, fmt, ap);
    va_end(ap);
    b->len += (size_t)k;
}

/* A coordinate with at most two decimals and no trailing zeros: "12.5", "100", never "-0". */
static void sb_num(sbuf *b, double v)
{
    if (!(v > -PX_LIMIT))
        v = -PX_LIMIT;
    if (!(v < PX_LIMIT))
        v = PX_LIMIT;
    char t[32];
    int k = snprintf(t, sizeof t, "%.2f", v);
    while (k > 0 && t[k - 1] == '0')
        k--;
    if (k > 0 && t[k - 1] == '.')
        k--;
    if (k == 2 && t[0] == '-' && t[1] == '0')
        sb_add(b, "0", 1);
    else
        sb_add(b, t, (size_t)k);
}

/* " x y": one point of a path. */
static void sb_pt(sbuf *b, double x, double y)
{
    sb_add(b, " ", 1);
    sb_num(b, x);
    sb_add(b, " ", 1);
    sb_num(b, y);
}

/* Length of the valid UTF-8 sequence at u that encodes an XML 1.0 character, or 0. */
static size_t utf8_char(const unsigned char *u)
{
    unsigned c = u[0], cp;
    size_t len;
    if (c >= 0xC2 && c <= 0xDF) {
        len = 2;
        cp = c & 0x1Fu;
    } else if (c >= 0xE0 && c <= 0xEF) {
        len = 3;
        cp = c & 0x0Fu;
    } else if (c >= 0xF0 && c <= 0xF4) {
        len = 4;
        cp = c & 0x07u;
    } else {
        return 0;
    }
    for (size_t i = 1; i < len; i++) {
        if ((u[i] & 0xC0u) != 0x80u) /* also stops at the terminating NUL */
            return 0;
        cp = (cp << 6) | (u[i] & 0x3Fu);
    }
    if ((len == 3 && cp < 0x800) || (len == 4 && (cp < 0x10000 || cp > 0x10FFFF)))
        return 0; /* overlong or beyond Unicode */
    if ((cp >= 0xD800 && cp <= 0xDFFF) || cp == 0xFFFE || cp == 0xFFFF)
        return 0; /* not XML characters */
    return len;
}

/* User text as XML character data or attribute value: the five markup characters escaped
 * (&#39; rather than &apos; so the result is also valid HTML 4), control characters as spaces
 * (XML 1.0 forbids most of them and a line break cannot show in one <text>), and bytes that are
 * not UTF-8 as U+FFFD, so that any C string gives well-formed output. */
static void sb_text(sbuf *b, const char *s)
{
    const unsigned char *u = (const unsigned char *)s;
    while (*u) {
        unsigned c = *u;
        if (c < 0x80) {
            switch (c) {
            case '&': sb_puts(b, "&amp;"); break;
            case '<': sb_puts(b, "&lt;"); break;
            case '>': sb_puts(b, "&gt;"); break;
            case '"': sb_puts(b, "&quot;"); break;
            case '\'': sb_puts(b, "&#39;"); break;
            default: sb_add(b, c < 0x20 ? " " : (const char *)u, 1); break;
            }
            u++;
            continue;
        }
        size_t len = utf8_char(u);
        if (len) {
            sb_add(b, (const char *)u, len);
            u += len;
        } else {
            sb_puts(b, "\xEF\xBF\xBD");
            u++;
        }
    }
}

/* Estimated rendered width of s at font size fs, px: code points times an average advance. */
static double text_px(const char *s, double fs)
{
    size_t n = 0;
    for (const unsigned char *u = (const unsigned char *)s; *u; u++)
        if ((*u & 0xC0u) != 0x80u)
            n++;
    return (double)n * CHAR_EM * fs;
}

/* ---- numbers, ticks and labels ----------------------------------------------------------- */

static int usable(double v)
{
    return isfinite(v) && fabs(v) <= BIG;
}

/* Heckbert's nicenum: a 1, 2 or 5 x 10^e near x (rounded) or at or above x (not rounded). */
static void nicenum(double x, int round_, int *m, int *e)
{
    int ee = (int)floor(log10(x));
    double f = x / pow(10.0, ee);
    if (f < 1.0) {
        ee--;
        f *= 10.0;
    } else if (f >= 10.0) {
        ee++;
        f /= 10.0;
    }
    int mm;
    if (round_)
        mm = f < 1.5 ? 1 : f < 3.0 ? 2 : f < 7.0 ? 5 : 10;
    else
        mm = f <= 1.0 ? 1 : f <= 2.0 ? 2 : f <= 5.0 ? 5 : 10;
    if (mm == 10) {
        mm = 1;
        ee++;
    }
    *m = mm;
    *e = ee;
}

/* k m 10^e with one rounding: dividing by an exact power of ten keeps 3 x 0.1 at 0.3. */
static double scaled(double k, int m, int e)
{
    return e >= 0 ? k * m * pow(10.0, e) : k * m / pow(10.0, -e);
}

int cpd_svgplot_ticks(double lo, double hi, size_t max_ticks, double *out, size_t *n, double *step)
{
    if (!out || !n || !step || !isfinite(lo) || !isfinite(hi) || !(lo < hi) || max_ticks < 3 ||
        max_ticks > CPD_SVGPLOT_TICKS_MAX)
        return CPD_EUSAGE;
    double span = hi - lo;
    if (!isfinite(span) || !(span > 1e-12 * fmax(fabs(lo), fabs(hi))) || span < 1e-280)
        return CPD_EUSAGE;
    int m, e, rm, re;
    nicenum(span, 0, &rm, &re);
    nicenum(scaled(1, rm, re) / (double)(max_ticks - 1), 1, &m, &e);
    double k0, k1, d;
    /* a step at least the span gives three ticks at most, so this ends */
    for (;;) {
        d = scaled(1, m, e);
        /* 1e-7 of a step absorbs rounding in lo/d (0.3 / 0.1 = 2.9999999999999996) */
        k0 = floor(lo / d + 1e-7);
        k1 = ceil(hi / d - 1e-7);
        if (k1 - k0 + 1 <= (double)max_ticks)
            break;
        if (m == 1)
            m = 2;
        else if (m == 2)
            m = 5;
        else {
            m = 1;
            e++;
        }
    }
    size_t cnt = (size_t)(k1 - k0 + 1);
    for (size_t i = 0; i < cnt; i++)
        out[i] = scaled(k0 + (double)i, m, e);
    *n = cnt;
    *step = d;
    return CPD_OK;
}

/* Removes a minus sign from a label that shows only zeros ("-0", "-0.00", "-0e0"). */
static void drop_negative_zero(char *t)
{
    if (t[0] != '-')
        return;
    for (const char *c = t + 1; *c && *c != 'e'; c++)
        if (*c >= '1' && *c <= '9')
            return;
    memmove(t, t + 1, strlen(t));
}

static void fmt_number(double v, double step, char *buf, size_t n)
{
    char t[LAB_MAX];
    if (!(step > 0) || !isfinite(step))
        step = fabs(v) > 0 ? fabs(v) : 1.0;
    if (step >= 1e6 || step < 1e-4) {
        int e = (int)floor(log10(step) + 1e-9);
        if (fabs(v) < step * 1e-6) {
            snprintf(t, sizeof t, "0");
        } else {
            int sig = (int)floor(log10(fabs(v)) + 1e-9) - e + 1;
            sig = sig < 1 ? 1 : sig > 17 ? 17 : sig;
            snprintf(t, sizeof t, "%.*e", sig - 1, v);
            /* "2.50e+07" -> "2.5e7", "1.0e-05" -> "1e-5": mantissas differ in length, but a
             * shared exponent would need an axis-wide multiplier, which these plots never need */
            char *x = strchr(t, 'e');
            if (x) {
                char *z = x;
                while (z > t && z[-1] == '0')
                    z--;
                if (z > t && z[-1] == '.')
                    z--;
                memmove(z, x, strlen(x) + 1);
                x = z;
                char *r = x + 1, *w = x + 1;
                if (*r == '+')
                    r++;
                else if (*r == '-')
                    *w++ = *r++;
                while (*r == '0' && r[1])
                    r++;
                memmove(w, r, strlen(r) + 1);
            }
        }
    } else {
        /* the fewest decimals that write the step exactly: 0.25 needs two, 20 none */
        int dec = 0;
        double s = step;
        while (dec < 10 && fabs(s - nearbyint(s)) > 1e-6 * s) {
            s *= 10.0;
            dec++;
        }
        snprintf(t, sizeof t, "%.*f", dec, v);
    }
    drop_negative_zero(t);
    snprintf(buf, n, "%s", t);
}

static void fmt_time(double v, double step, char *buf, size_t n)
{
    double a = fabs(v);
    if (a > 1e9) { /* beyond what m:ss can sensibly show (and what a 32-bit long holds) */
        fmt_number(v, step, buf, n);
        return;
    }
    char t[LAB_MAX];
    cpd_format_duration(a, t, sizeof t);
    snprintf(buf, n, "%s%s", v < 0 && lround(a) != 0 ? "-" : "", t);
}

#define DAY_1900 (-25567) /* 1900-01-01, the first date cpd_parse_date accepts */
#define DAY_2999 376199   /* 2999-12-31, the last */

static const char *const month_abbr[12] = {"Jan", "Feb", "Mar", "Apr", "May", "Jun",
                                           "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"};

/* Year and month of a day number in range, through the one date formatter of units.c. */
static void ymd(int day, int *y, int *m)
{
    char iso[11];
    cpd_format_date(day, iso);
    *y = (iso[0] - '0') * 1000 + (iso[1] - '0') * 100 + (iso[2] - '0') * 10 + (iso[3] - '0');
    *m = (iso[5] - '0') * 10 + (iso[6] - '0');
}

/* Day number of the first of month m of year y (1900..2999), through cpd_parse_date. */
static int month_start(int y, int m)
{
    char iso[16];
    int d = 0;
    snprintf(iso, sizeof iso, "%04d-%02d-01", y, m);
    return cpd_parse_date(iso, &d) == CPD_OK ? d : DAY_2999 + 1;
}

static void fmt_date(double v, double step, int with_year, char *buf, size_t n)
{
    double r = floor(v + 0.5);
    if (!(r >= DAY_1900 && r <= DAY_2999)) {
        fmt_number(v, step, buf, n);
        return;
    }
    int day = (int)r, y, m;
    if (step < 28) {
        char iso[11];
        cpd_format_date(day, iso);
        snprintf(buf, n, "%s", iso);
        return;
    }
    ymd(day, &y, &m);
    if (step < 365 && !with_year)
        snprintf(buf, n, "%s", month_abbr[m - 1]);
    else if (step < 365)
        snprintf(buf, n, "%s %d", month_abbr[m - 1], y);
    else
        snprintf(buf, n, "%d", y);
}

void cpd_svgplot_tick_label(int format, double v, double step, char *buf, size_t n)
{
    if (!buf || n == 0)
        return;
    if (!isfinite(v) || format < 0 || format >= CPD_SVGPLOT_NFORMAT) {
        snprintf(buf, n, "-");
        return;
    }
    if (format == CPD_SVGPLOT_TIME_S || format == CPD_SVGPLOT_LOG_TIME_S)
        fmt_time(v, step, buf, n);
    else if (format == CPD_SVGPLOT_DATE)
        fmt_date(v, step, 1, buf, n);
    else
        fmt_number(v, step, buf, n);
}

/* ---- the plot object ----------------------------------------------------------------------- */

cpd_svgplot *cpd_svgplot_alloc(int width_px, int height_px)
{
    if (width_px < 160 || width_px > 8192 || height_px < 160 || height_px > 8192)
        return NULL;
    cpd_svgplot *p = calloc(1, sizeof *p);
    if (!p)
        return NULL;
    p->width_px = width_px;
    p->height_px = height_px;
    for (int a = 0; a < CPD_SVGPLOT_NAXES; a++) {
        p->fix_lo[a] = NAN;
        p->fix_hi[a] = NAN;
        p->format[a] = CPD_SVGPLOT_NUMBER;
    }
    return p;
}

void cpd_svgplot_free(cpd_svgplot *p)
{
    if (!p)
        return;
    for (size_t i = 0; i < p->nlayer; i++) {
        free(p->layer[i].label);
        free(p->layer[i].mem);
    }
    free(p->layer);
    free(p->title);
    for (int a = 0; a < CPD_SVGPLOT_NAXES; a++)
        free(p->label[a]);
    free(p);
}

void cpd_svgplot_style_init(cpd_svgplot_style *st, int color)
{
    if (!st)
        return;
    st->color = color >= 0 && color < CPD_SVGPLOT_NCOLORS ? color : CPD_SVGPLOT_BLUE;
    st->stroke_px = 1.6;
    st->dash = CPD_SVGPLOT_SOLID;
    st->fill_opacity = 0.25;
    st->marker = CPD_SVGPLOT_CIRCLE;
    st->marker_px = 3.2;
    st->y_axis = CPD_SVGPLOT_Y;
}

const char *cpd_svgplot_color_hex(int color)
{
    return color >= 0 && color < CPD_SVGPLOT_NCOLORS ? palette[color] : NULL;
}

/* Replaces *dst by a copy of text (NULL for NULL or ""). */
static int set_text(char **dst, const char *text)
{
    char *c = NULL;
    if (text && *text) {
        size_t n = strlen(text) + 1;
        c = malloc(n);
        if (!c)
            return CPD_ENOMEM;
        memcpy(c, text, n);
    }
    free(*dst);
    *dst = c;
    return CPD_OK;
}

int cpd_svgplot_set_title(cpd_svgplot *p, const char *text)
{
    if (!p)
        return CPD_EUSAGE;
    return set_text(&p->title, text);
}

int cpd_svgplot_set_label(cpd_svgplot *p, int axis, const char *text)
{
    if (!p || axis < 0 || axis >= CPD_SVGPLOT_NAXES)
        return CPD_EUSAGE;
    return set_text(&p->label[axis], text);
}

int cpd_svgplot_set_range(cpd_svgplot *p, int axis, double lo, double hi)
{
    if (!p || axis < 0 || axis >= CPD_SVGPLOT_NAXES)
        return CPD_EUSAGE;
    if ((!isnan(lo) && !usable(lo)) || (!isnan(hi) && !usable(hi)))
        return CPD_EUSAGE;
    /* both ends fixed must leave a span the tick algorithm can divide */
    if (!isnan(lo) && !isnan(hi) &&
        (!(lo < hi) || !(hi - lo > 1e-9 * fmax(fabs(lo), fabs(hi))) || hi - lo < 1e-250))
        return CPD_EUSAGE;
    p->fix_lo[axis] = lo;
    p->fix_hi[axis] = hi;
    return CPD_OK;
}

int cpd_svgplot_set_format(cpd_svgplot *p, int axis, int format)
{
    if (!p || axis < 0 || axis >= CPD_SVGPLOT_NAXES || format < 0 || format >= CPD_SVGPLOT_NFORMAT)
        return CPD_EUSAGE;
    p->format[axis] = format;
    return CPD_OK;
}

static int style_ok(const cpd_svgplot_style *st)
{
    return st->color >= 0 && st->color < CPD_SVGPLOT_NCOLORS && st->stroke_px >= 0 && st->stroke_px <= 20 &&
           st->dash >= 0 && st->dash < CPD_SVGPLOT_NDASH && st->fill_opacity >= 0 && st->fill_opacity <= 1 &&
           st->marker >= 0 && st->marker < CPD_SVGPLOT_NMARKER && st->marker_px >= 0 && st->marker_px <= 30 &&
           (st->y_axis == CPD_SVGPLOT_Y || st->y_axis == CPD_SVGPLOT_Y2);
}

/* Appends a layer of kind with `narr` arrays of n values; the arrays are left for the caller to
 * fill through the returned layer. Series take the next default colour when st is NULL. */
static int add_layer(cpd_svgplot *p, int kind, const cpd_svgplot_style *st, const char *label, size_t n,
                     size_t narr, layer **out)
{
    if (!p)
        return CPD_EUSAGE;
    cpd_svgplot_style s;
    int series = is_series(kind);
    if (st)
        s = *st;
    else
        cpd_svgplot_style_init(&s, series ? (int)(p->nseries % NLINECOLORS) : CPD_SVGPLOT_GREY);
    if (!style_ok(&s) || n > NMAX)
        return CPD_EUSAGE;
    if (p->nlayer == p->cap) {
        size_t cap = p->cap ? 2 * p->cap : 8;
        layer *l = realloc(p->layer, cap * sizeof *l);
        if (!l)
            return CPD_ENOMEM;
        p->layer = l;
        p->cap = cap;
    }
    int rc = CPD_OK;
    layer L;
    memset(&L, 0, sizeof L);
    L.kind = kind;
    L.st = s;
    L.n = n;
    if (n > 0 && narr > 0 && !(L.mem = malloc(n * narr * sizeof(double)))) {
        rc = CPD_ENOMEM;
        goto done;
    }
    rc = set_text(&L.label, label);
    if (rc)
        goto done;
    p->layer[p->nlayer] = L;
    *out = &p->layer[p->nlayer++];
    if (series)
        p->nseries++;
done:
    if (rc)
        free(L.mem);
    return rc;
}

/* Copies src (n values) into the next free slice of the layer's block, or leaves *dst NULL. */
static void take(layer *L, size_t *slot, const double *src, double **dst)
{
    *dst = NULL;
    if (!src || L->n == 0)
        return;
    *dst = L->mem + *slot * L->n;
    memcpy(*dst, src, L->n * sizeof(double));
    (*slot)++;
}

static int add_xy(cpd_svgplot *p, int kind, const double *x, const double *y, size_t n,
                  const cpd_svgplot_style *st, const char *label)
{
    if (n > 0 && (!x || !y))
        return CPD_EUSAGE;
    layer *L;
    int rc = add_layer(p, kind, st, label, n, 2, &L);
    if (rc)
        return rc;
    size_t slot = 0;
    take(L, &slot, x, &L->x);
    take(L, &slot, y, &L->y);
    return CPD_OK;
}

int cpd_svgplot_line(cpd_svgplot *p, const double *x, const double *y, size_t n, const cpd_svgplot_style *st,
                     const char *label)
{
    return add_xy(p, L_LINE, x, y, n, st, label);
}

int cpd_svgplot_step(cpd_svgplot *p, const double *x, const double *y, size_t n, const cpd_svgplot_style *st,
                     const char *label)
{
    return add_xy(p, L_STEP, x, y, n, st, label);
}

int cpd_svgplot_points(cpd_svgplot *p, const double *x, const double *y, size_t n, const cpd_svgplot_errors *err,
                       const cpd_svgplot_style *st, const char *label)
{
    if (!p || (n > 0 && (!x || !y)) || n > NMAX)
        return CPD_EUSAGE;
    const double *e[4] = {NULL, NULL, NULL, NULL};
    if (err) {
        e[0] = err->y_minus;
        e[1] = err->y_plus ? err->y_plus : err->y_minus;
        e[2] = err->x_minus;
        e[3] = err->x_plus ? err->x_plus : err->x_minus;
    }
    size_t narr = 2;
    for (int k = 0; k < 4; k++) {
        if (!e[k])
            continue;
        narr++;
        for (size_t i = 0; i < n; i++)
            if (e[k][i] < 0) /* NAN compares false: it only hides its bar */
                return CPD_EDATA;
    }
    layer *L;
    int rc = add_layer(p, L_POINTS, st, label, n, narr, &L);
    if (rc)
        return rc;
    size_t slot = 0;
    take(L, &slot, x, &L->x);
    take(L, &slot, y, &L->y);
    take(L, &slot, e[0], &L->ey_lo);
    take(L, &slot, e[1], &L->ey_hi);
    take(L, &slot, e[2], &L->ex_lo);
    take(L, &slot, e[3], &L->ex_hi);
    return CPD_OK;
}

int cpd_svgplot_band(cpd_svgplot *p, const double *x, const double *lo, const double *hi, size_t n,
                     const cpd_svgplot_style *st, const char *label)
{
    if (n > 0 && (!x || !lo || !hi))
        return CPD_EUSAGE;
    layer *L;
    int rc = add_layer(p, L_BAND, st, label, n, 3, &L);
    if (rc)
        return rc;
    size_t slot = 0;
    take(L, &slot, x, &L->x);
    take(L, &slot, lo, &L->y);
    take(L, &slot, hi, &L->y2);
    return CPD_OK;
}

int cpd_svgplot_hregion(cpd_svgplot *p, double y0, double y1, const cpd_svgplot_style *st, const char *label)
{
    if (isnan(y0) || isnan(y1) || (isfinite(y0) && !usable(y0)) || (isfinite(y1) && !usable(y1)) || y0 == y1)
        return CPD_EUSAGE;
    layer *L;
    int rc = add_layer(p, L_HREGION, st, label, 0, 0, &L);
    if (rc)
        return rc;
    L->v0 = fmin(y0, y1);
    L->v1 = fmax(y0, y1);
    return CPD_OK;
}

static int add_refline(cpd_svgplot *p, int kind, double v, const cpd_svgplot_style *st, const char *label)
{
    if (!usable(v))
        return CPD_EUSAGE;
    layer *L;
    int rc = add_layer(p, kind, st, label, 0, 0, &L);
    if (rc)
        return rc;
    L->v0 = v;
    return CPD_OK;
}

int cpd_svgplot_vline(cpd_svgplot *p, double x, const cpd_svgplot_style *st, const char *label)
{
    return add_refline(p, L_VLINE, x, st, label);
}

int cpd_svgplot_hline(cpd_svgplot *p, double y, const cpd_svgplot_style *st, const char *label)
{
    return add_refline(p, L_HLINE, y, st, label);
}

/* ---- rendering: ranges and axes ----------------------------------------------------------- */

typedef struct {
    int used;              /* drawn at all (Y2 only when a layer uses it or it has a label) */
    int fmt;               /* label format actually used (time and date fall back to NUMBER) */
    double lo, hi;         /* range, data units */
    double px0, px1;       /* pixel positions of lo and hi */
    int log;               /* logarithmic (CPD_SVGPLOT_LOG_TIME_S) */
    size_t nt;             /* ticks inside the range */
    double t[AX_TICKS];    /* tick values, data units */
    double step;           /* tick step, data units (days 30 / 365 for month / year ticks) */
    char lab[AX_TICKS][LAB_MAX];
    double labw;           /* widest label, px */
} axis;

typedef struct {
    double *x, *y;
    size_t n, cap;
} pbuf;

typedef struct {
    size_t layer;
    int row;
    double x; /* left edge of the entry, px */
} legend_item;

typedef struct {
    const cpd_svgplot *p;
    sbuf sb;
    axis ax[CPD_SVGPLOT_NAXES];
    double left, top, w, h; /* plot area, px */
    double legend_top;      /* baseline of the first legend row minus its font size, px */
    legend_item *leg;
    size_t nleg;
    pbuf a, b, c; /* scratch polylines, px, reused by every layer */
    int oom;
} ctx;

static void pb_push(ctx *c, pbuf *b, double x, double y)
{
    if (c->oom)
        return;
    if (b->n == b->cap) {
        size_t cap = b->cap ? 2 * b->cap : 256;
        double *nx = realloc(b->x, cap * sizeof *nx);
        if (!nx) {
            c->oom = 1;
            return;
        }
        b->x = nx;
        double *ny = realloc(b->y, cap * sizeof *ny);
        if (!ny) {
            c->oom = 1;
            return;
        }
        b->y = ny;
        b->cap = cap;
    }
    b->x[b->n] = x;
    b->y[b->n] = y;
    b->n++;
}

typedef struct {
    double lo, hi;
    int any;
} extent;

static void ext_add(extent *e, double v)
{
    if (!usable(v))
        return;
    if (!e->any) {
        e->lo = e->hi = v;
        e->any = 1;
    } else {
        e->lo = fmin(e->lo, v);
        e->hi = fmax(e->hi, v);
    }
}

static int inside(double v, double lo, double hi)
{
    return v >= lo && v <= hi;
}

/* The data extent of one axis. For a y axis only points whose x lies in the x range count, so a
 * fixed x window also fits y to what is shown. */
static void gather(const cpd_svgplot *p, int axis_id, double xlo, double xhi, extent *e)
{
    int isx = axis_id == CPD_SVGPLOT_X;
    for (size_t k = 0; k < p->nlayer; k++) {
        const layer *L = &p->layer[k];
        if (!isx && L->st.y_axis != axis_id)
            continue;
        switch (L->kind) {
        case L_VLINE:
            if (isx)
                ext_add(e, L->v0);
            break;
        case L_HLINE:
            if (!isx)
                ext_add(e, L->v0);
            break;
        case L_HREGION:
            if (!isx) {
                ext_add(e, L->v0);
                ext_add(e, L->v1);
            }
            break;
        default:
            for (size_t i = 0; i < L->n; i++) {
                double x = L->x[i], y = L->y[i];
                if (!usable(x) || !usable(y) || (L->kind == L_BAND && !usable(L->y2[i])))
                    continue;
                if (isx) {
                    ext_add(e, x);
                    if (L->ex_lo && usable(L->ex_lo[i]))
                        ext_add(e, x - L->ex_lo[i]);
                    if (L->ex_hi && usable(L->ex_hi[i]))
                        ext_add(e, x + L->ex_hi[i]);
                    continue;
                }
                if (!inside(x, xlo, xhi))
                    continue;
                ext_add(e, y);
                if (L->kind == L_BAND)
                    ext_add(e, L->y2[i]);
                if (L->ey_lo && usable(L->ey_lo[i]))
                    ext_add(e, y - L->ey_lo[i]);
                if (L->ey_hi && usable(L->ey_hi[i]))
                    ext_add(e, y + L->ey_hi[i]);
            }
            break;
        }
    }
}

/* The range of an axis: fixed ends as set, automatic ends at the data plus 4 % padding. A span
 * too small to divide (all-equal data) is widened around the data: 7 days on a date axis, 10 %
 * (at least 30 s) on a time axis, 10 % (1 around zero) on a number axis. */
static void resolve(const extent *e, double flo, double fhi, int fmt, double *out_lo, double *out_hi)
{
    int alo = isnan(flo), ahi = isnan(fhi);
    double lo, hi;
    if (e->any) {
        lo = e->lo;
        hi = e->hi;
    } else {
        lo = hi = !alo ? flo : !ahi ? fhi : 0.0;
    }
    if (!alo)
        lo = flo;
    if (!ahi)
        hi = fhi;
    if (alo || ahi) {
        double mag = fmax(fabs(lo), fabs(hi));
        if (!(hi - lo > fmax(1e-9 * mag, 1e-250))) {
            double c = alo && ahi ? 0.5 * (lo + hi) : alo ? hi : lo;
            double half = fmt == CPD_SVGPLOT_DATE     ? 7.0
                          : fmt == CPD_SVGPLOT_TIME_S ? fmax(30.0, 0.1 * fabs(c))
                          : fabs(c) > 1e-249          ? 0.1 * fabs(c)
                                                      : 1.0;
            if (alo && ahi) {
                lo = c - half;
                hi = c + half;
            } else if (alo) {
                lo = c - 2 * half;
            } else {
                hi = c + 2 * half;
            }
        }
        double pad = 0.04 * (hi - lo);
        if (alo)
            lo -= pad;
        if (ahi)
            hi += pad;
    }
    if (fmt == CPD_SVGPLOT_LOG_TIME_S) { /* a logarithmic axis: positive ends, padding as a factor */
        lo = e->any ? e->lo : 1;
        hi = e->any ? e->hi : 3600;
        lo = !alo ? flo : lo / 1.1;
        hi = !ahi ? fhi : hi * 1.1;
        if (!(lo > 0))
            lo = 1;
        if (!(hi > lo * 1.5))
            hi = lo * 10;
    }
    *out_lo = lo;
    *out_hi = hi;
}

static double map(const axis *a, double v)
{
    double px = a->log ? (v > 0 ? a->px0 + log(v / a->lo) / log(a->hi / a->lo) * (a->px1 - a->px0) : -PX_LIMIT)
                       : a->px0 + (v - a->lo) / (a->hi - a->lo) * (a->px1 - a->px0);
    return px < -PX_LIMIT ? -PX_LIMIT : px > PX_LIMIT ? PX_LIMIT : px;
}

static void add_tick(axis *a, double v, double step, int with_year)
{
    if (a->nt >= AX_TICKS)
        return;
    a->t[a->nt] = v;
    if (a->fmt == CPD_SVGPLOT_DATE)
        fmt_date(v, step, with_year, a->lab[a->nt], LAB_MAX);
    else
        cpd_svgplot_tick_label(a->fmt, v, step, a->lab[a->nt], LAB_MAX);
    a->nt++;
}

/* Loose ticks (cpd_svgplot_ticks) usually put one tick beyond each end of the range, so the
 * count asked for is not the count shown. Of the tick sets for every count asked up to 2 max + 2,
 * take the finest showing 2..max ticks inside the range, else the coarsest showing at least 2
 * (a short axis then gets -40, -20, 0, 20, 40 rather than a lone 0). */
static void number_ticks(axis *a, size_t max)
{
    double t[CPD_SVGPLOT_TICKS_MAX], pick[CPD_SVGPLOT_TICKS_MAX], step, pick_step = 0;
    double tol = 1e-9 * (a->hi - a->lo);
    size_t n, npick = 0;
    int have = 0; /* 1: a set with too many ticks, 2: one within max */
    a->fmt = CPD_SVGPLOT_NUMBER;
    /* asking for more ticks never gives a coarser step, so the last set within max is the finest */
    for (size_t m = 3; m <= 2 * max + 2 && m <= CPD_SVGPLOT_TICKS_MAX; m++) {
        if (cpd_svgplot_ticks(a->lo, a->hi, m, t, &n, &step) != CPD_OK)
            return; /* a range the widening in resolve() should have prevented: draw no ticks */
        size_t in = 0;
        for (size_t i = 0; i < n; i++)
            in += t[i] >= a->lo - tol && t[i] <= a->hi + tol;
        if (in < 2 || (in > max && have))
            continue;
        memcpy(pick, t, n * sizeof t[0]);
        npick = n;
        pick_step = step;
        have = in <= max ? 2 : 1;
    }
    a->step = pick_step;
    for (size_t i = 0; i < npick; i++)
        if (pick[i] >= a->lo - tol && pick[i] <= a->hi + tol)
            add_tick(a, pick[i], pick_step, 0);
}

/* Ticks on round clock times: the first step of the list giving at most max ticks. */
static int time_ticks(axis *a, size_t max)
{
    static const double steps[] = {1,    2,    5,    10,    15,    20,    30,    60,    120,   300,
                                   600,  900,  1200, 1800,  3600,  7200,  10800, 21600, 43200, 86400};
    if (a->hi - a->lo < 2 || fmax(fabs(a->lo), fabs(a->hi)) > 1e9)
        return 0;
    for (size_t s = 0; s < sizeof steps / sizeof steps[0]; s++) {
        double d = steps[s];
        double k0 = ceil(a->lo / d - 1e-9), k1 = floor(a->hi / d + 1e-9);
        if (k1 - k0 + 1 > (double)max)
            continue;
        a->step = d;
        for (double k = k0; k <= k1; k++)
            add_tick(a, k * d, d, 0);
        return 1;
    }
    return 0;
}

/* Ticks on calendar days: every day, 2 days, Monday, other Monday; month starts every 1, 2, 3, 6
 * months; years every 1, 2, 5, 10 ... Month labels carry the year on the first tick and in January. */
static int date_ticks(axis *a, size_t max)
{
    if (a->hi - a->lo < 2 || a->lo < DAY_1900 || a->hi > DAY_2999)
        return 0;
    static const int dsteps[] = {1, 2, 7, 14};
    for (size_t s = 0; s < sizeof dsteps / sizeof dsteps[0]; s++) {
        double d = dsteps[s], off = d >= 7 ? 4.0 : 0.0; /* day 4, 1970-01-05, was a Monday */
        double k0 = ceil((a->lo - off) / d), k1 = floor((a->hi - off) / d);
        if (k1 - k0 + 1 > (double)max)
            continue;
        a->step = d;
        for (double k = k0; k <= k1; k++)
            add_tick(a, off + k * d, d, 1);
        return 1;
    }
    int y0, m0, y1, m1;
    ymd((int)ceil(a->lo), &y0, &m0);
    ymd((int)floor(a->hi), &y1, &m1);
    static const int msteps[] = {1, 2, 3, 6};
    for (size_t s = 0; s < sizeof msteps / sizeof msteps[0]; s++) {
        int k = msteps[s];
        if ((a->hi - a->lo) / (30.4 * k) > (double)max + 1)
            continue;
        double t[AX_TICKS];
        size_t n = 0;
        int over = 0;
        for (int y = y0, m = m0; y < y1 || (y == y1 && m <= m1); m = m % 12 + 1, y += m == 1) {
            int ds = month_start(y, m);
            if ((m - 1) % k || ds < a->lo || ds > a->hi)
                continue;
            if (n == max || n == AX_TICKS) {
                over = 1;
                break;
            }
            t[n++] = ds;
        }
        if (over)
            continue;
        a->step = 30.0 * k;
        for (size_t i = 0; i < n; i++) {
            int yy, mm;
            ymd((int)t[i], &yy, &mm);
            add_tick(a, t[i], a->step, i == 0 || mm == 1);
        }
        return 1;
    }
    static const int ysteps[] = {1, 2, 5, 10, 20, 50, 100, 200, 500};
    for (size_t s = 0; s < sizeof ysteps / sizeof ysteps[0]; s++) {
        int k = ysteps[s];
        double t[AX_TICKS];
        size_t n = 0;
        int over = 0;
        for (int y = y0 + (y0 % k ? k - y0 % k : 0); y <= y1; y += k) {
            int ds = month_start(y, 1);
            if (ds < a->lo || ds > a->hi)
                continue;
            if (n == max || n == AX_TICKS) {
                over = 1;
                break;
            }
            t[n++] = ds;
        }
        if (over)
            continue;
        a->step = 365.0 * k;
        for (size_t i = 0; i < n; i++)
            add_tick(a, t[i], a->step, 1);
        return 1;
    }
    return 0;
}

/* Ticks of a logarithmic time axis: the first of a few sets of round clock times, finest first,
 * that puts at most max ticks in the range. */
static int log_time_ticks(axis *a, size_t max)
{
    static const double fine[] = {1,   2,    5,    10,   15,   30,    60,    120,   300,   600,
                                  1200, 1800, 3600, 7200, 21600, 43200, 86400, 0};
    static const double mid[] = {1, 5, 15, 30, 60, 300, 600, 1800, 3600, 21600, 86400, 0};
    static const double coarse[] = {1, 10, 60, 600, 3600, 36000, 86400, 0};
    const double *sets[] = {fine, mid, coarse};
    for (int s = 0; s < 3; s++) {
        size_t n = 0;
        for (const double *v = sets[s]; *v; v++)
            n += *v >= a->lo * (1 - 1e-9) && *v <= a->hi * (1 + 1e-9);
        if (n > max && s < 2)
            continue;
        a->step = 1;
        for (const double *v = sets[s]; *v; v++)
            if (*v >= a->lo * (1 - 1e-9) && *v <= a->hi * (1 + 1e-9))
                add_tick(a, *v, *v < 60 ? 1 : 60, 0);
        return 1;
    }
    return 0;
}

static void axis_ticks(axis *a, int fmt, size_t max)
{
    a->nt = 0;
    a->fmt = fmt;
    if (fmt == CPD_SVGPLOT_LOG_TIME_S)
        log_time_ticks(a, max);
    else if (!((fmt == CPD_SVGPLOT_DATE && date_ticks(a, max)) || (fmt == CPD_SVGPLOT_TIME_S && time_ticks(a, max))))
        number_ticks(a, max);
    a->labw = 0;
    for (size_t i = 0; i < a->nt; i++)
        a->labw = fmax(a->labw, text_px(a->lab[i], FS_TICK));
}

/* Ticks of an axis laid along its pixel span, thinned until neighbouring labels keep a gap:
 * side by side on the x axis, one text line apart on a y axis. */
static void fit_ticks(const cpd_svgplot *p, int id, axis *a)
{
    double len = fabs(a->px1 - a->px0);
    int fmt = p->format[id];
    double per = id == CPD_SVGPLOT_X ? (fmt == CPD_SVGPLOT_DATE ? 80.0 : 60.0) : 32.0;
    size_t cap = id == CPD_SVGPLOT_X ? 12 : 10, max = (size_t)(len / per);
    if (max < 3)
        max = 3;
    if (max > cap)
        max = cap;
    for (;;) {
        axis_ticks(a, fmt, max);
        int crowded = 0;
        for (size_t i = 1; i < a->nt && !crowded; i++) {
            double gap = fabs(map(a, a->t[i]) - map(a, a->t[i - 1]));
            double need = id == CPD_SVGPLOT_X
                              ? 0.5 * (text_px(a->lab[i], FS_TICK) + text_px(a->lab[i - 1], FS_TICK)) + 8.0
                              : FS_TICK + 4.0;
            crowded = gap < need;
        }
        if (!crowded || max == 3)
            break;
        max--;
    }
}

/* ---- rendering: layout ----------------------------------------------------------------------- */

#define LEG_SAMPLE 22.0 /* width of a legend sample, px */
#define LEG_ROW 16.0    /* legend row height, px */

/* Places the legend entries in rows from the plot's left edge; returns the rows used. Entries
 * beyond max_rows are left out so the plot area keeps its minimum height. */
static int legend_layout(ctx *c, double width, int max_rows)
{
    const cpd_svgplot *p = c->p;
    int row = 0;
    double x = 0;
    c->nleg = 0;
    for (size_t k = 0; k < p->nlayer; k++) {
        const layer *L = &p->layer[k];
        if (!is_series(L->kind) || !L->label)
            continue;
        double w = LEG_SAMPLE + 5 + text_px(L->label, FS_LEGEND);
        if (x > 0 && x + w > width) {
            row++;
            x = 0;
        }
        if (row >= max_rows)
            break;
        c->leg[c->nleg].layer = k;
        c->leg[c->nleg].row = row;
        c->leg[c->nleg].x = x;
        c->nleg++;
        x += w + 16;
    }
    return c->nleg ? c->leg[c->nleg - 1].row + 1 : 0;
}

static void layout(ctx *c)
{
    const cpd_svgplot *p = c->p;
    double W = p->width_px, H = p->height_px;
    double left = 50, right = 16;
    double bottom = 24 + (p->label[CPD_SVGPLOT_X] ? 18 : 0);
    double top0 = 8 + (p->title ? 22 : 0);
    for (int iter = 0; iter < 4; iter++) {
        double w = fmax(40.0, W - left - right);
        int max_rows = (int)((H - top0 - bottom - 8 - 60) / LEG_ROW);
        int rows = legend_layout(c, w, max_rows < 0 ? 0 : max_rows);
        double top = top0 + (rows ? rows * LEG_ROW + 4 : 0) + 8;
        double h = fmax(40.0, H - top - bottom);
        for (int id = CPD_SVGPLOT_Y; id <= CPD_SVGPLOT_Y2; id++) {
            axis *a = &c->ax[id];
            a->px0 = top + h;
            a->px1 = top;
            if (a->used)
                fit_ticks(p, id, a);
        }
        axis *ax = &c->ax[CPD_SVGPLOT_X];
        ax->px0 = left;
        ax->px1 = left + w;
        fit_ticks(p, CPD_SVGPLOT_X, ax);
        double nl = 8 + (p->label[CPD_SVGPLOT_Y] ? 18 : 0) + c->ax[CPD_SVGPLOT_Y].labw + 8;
        double nr = c->ax[CPD_SVGPLOT_Y2].used
                        ? 8 + (p->label[CPD_SVGPLOT_Y2] ? 18 : 0) + c->ax[CPD_SVGPLOT_Y2].labw + 8
                        : 16;
        /* room for the halves of the outermost x labels that stick out of the plot area */
        if (ax->nt) {
            double first = map(ax, ax->t[0]) - left, last = left + w - map(ax, ax->t[ax->nt - 1]);
            nl = fmax(nl, 0.5 * text_px(ax->lab[0], FS_TICK) - first + 4);
            nr = fmax(nr, 0.5 * text_px(ax->lab[ax->nt - 1], FS_TICK) - last + 4);
        }
        nl = ceil(nl);
        nr = ceil(nr);
        c->left = left;
        c->top = top;
        c->w = w;
        c->h = h;
        c->legend_top = top0;
        if (nl == left && nr == right)
            break;
        left = nl;
        right = nr;
    }
}

/* ---- rendering: geometry ------------------------------------------------------------------------ */

/* Liang and Barsky 1984 (ACM Trans Graph 3:1) clipping of a segment to the plot area; 0 when none
 * of it is inside. */
static int clip_segment(const ctx *c, double *x0, double *y0, double *x1, double *y1)
{
    double dx = *x1 - *x0, dy = *y1 - *y0, t0 = 0, t1 = 1;
    double pk[4] = {-dx, dx, -dy, dy};
    double qk[4] = {*x0 - c->left, c->left + c->w - *x0, *y0 - c->top, c->top + c->h - *y0};
    for (int k = 0; k < 4; k++) {
        if (pk[k] == 0) {
            if (qk[k] < 0)
                return 0;
            continue;
        }
        double r = qk[k] / pk[k];
        if (pk[k] < 0) {
            if (r > t1)
                return 0;
            t0 = fmax(t0, r);
        } else {
            if (r < t0)
                return 0;
            t1 = fmin(t1, r);
        }
    }
    double ax = *x0, ay = *y0;
    *x0 = ax + t0 * dx;
    *y0 = ay + t0 * dy;
    *x1 = ax + t1 * dx;
    *y1 = ay + t1 * dy;
    return 1;
}

/* M4 (Jugel et al. 2014): for a run whose x never decreases keep, per pixel column, the first,
 * lowest, highest and last point in their order. In place: each column writes at most as many
 * points as it holds, never ahead of what is still to be read. */
static void m4(pbuf *b)
{
    size_t w = 0, s = 0, n = b->n;
    while (s < n) {
        double col = floor(b->x[s]);
        size_t e = s + 1, imin = s, imax = s;
        for (; e < n && floor(b->x[e]) == col; e++) {
            if (b->y[e] < b->y[imin])
                imin = e;
            if (b->y[e] > b->y[imax])
                imax = e;
        }
        size_t idx[4] = {s, imin, imax, e - 1};
        for (int i = 1; i < 4; i++)
            for (int j = i; j > 0 && idx[j - 1] > idx[j]; j--) {
                size_t t = idx[j];
                idx[j] = idx[j - 1];
                idx[j - 1] = t;
            }
        for (int i = 0; i < 4; i++) {
            if (i > 0 && idx[i] == idx[i - 1])
                continue;
            b->x[w] = b->x[idx[i]];
            b->y[w] = b->y[idx[i]];
            w++;
        }
        s = e;
    }
    b->n = w;
}

static void maybe_m4(const ctx *c, pbuf *b)
{
    if ((double)b->n <= 4.0 * c->w)
        return;
    for (size_t i = 1; i < b->n; i++)
        if (b->x[i] < b->x[i - 1])
            return;
    m4(b);
}

/* Writes the visible part of polyline b as path data: "M x y x y ..." per visible stretch,
 * skipping points that would print at the same place as the last one. */
static void emit_polyline(ctx *c, const pbuf *b)
{
    double lx = 0, ly = 0;
    int pen = 0;
    for (size_t i = 1; i < b->n; i++) {
        double x0 = b->x[i - 1], y0 = b->y[i - 1], x1 = b->x[i], y1 = b->y[i];
        if (!clip_segment(c, &x0, &y0, &x1, &y1)) {
            pen = 0;
            continue;
        }
        if (!pen || fabs(x0 - lx) > 0.005 || fabs(y0 - ly) > 0.005) {
            sb_puts(&c->sb, "M");
            sb_num(&c->sb, x0);
            sb_puts(&c->sb, " ");
            sb_num(&c->sb, y0);
            lx = x0;
            ly = y0;
            pen = 1;
        }
        if (fabs(x1 - lx) >= 0.005 || fabs(y1 - ly) >= 0.005) {
            sb_pt(&c->sb, x1, y1);
            lx = x1;
            ly = y1;
        }
    }
}

/* One Sutherland and Hodgman 1974 (Commun ACM 17:32) pass: the polygon in `in` cut by one edge of
 * the plot area (edge 0 left, 1 right, 2 top, 3 bottom) into `out`. */
static void clip_edge(ctx *c, const pbuf *in, pbuf *out, int edge)
{
    double v = edge == 0 ? c->left : edge == 1 ? c->left + c->w : edge == 2 ? c->top : c->top + c->h;
    out->n = 0;
    for (size_t i = 0; i < in->n; i++) {
        size_t j = i ? i - 1 : in->n - 1;
        double cx = in->x[i], cy = in->y[i], px = in->x[j], py = in->y[j];
        double cv = edge < 2 ? cx : cy, pv = edge < 2 ? px : py;
        int cin = edge % 2 == 0 ? cv >= v : cv <= v;
        int pin = edge % 2 == 0 ? pv >= v : pv <= v;
        if (cin != pin) {
            double t = (v - pv) / (cv - pv);
            if (edge < 2)
                pb_push(c, out, v, py + t * (cy - py));
            else
                pb_push(c, out, px + t * (cx - px), v);
        }
        if (cin)
            pb_push(c, out, cx, cy);
    }
}

/* ---- rendering: layers ------------------------------------------------------------------------ */

static void stroke_attrs(ctx *c, const cpd_svgplot_style *st)
{
    sb_printf(&c->sb, " fill=\"none\" stroke=\"%s\" stroke-width=\"", palette[st->color]);
    sb_num(&c->sb, st->stroke_px);
    sb_puts(&c->sb, "\" stroke-linejoin=\"round\" stroke-linecap=\"round\"");
    if (dash_array[st->dash])
        sb_printf(&c->sb, " stroke-dasharray=\"%s\"", dash_array[st->dash]);
}

static void fill_attrs(ctx *c, const cpd_svgplot_style *st)
{
    sb_printf(&c->sb, " fill=\"%s\" fill-opacity=\"", palette[st->color]);
    sb_num(&c->sb, st->fill_opacity);
    sb_puts(&c->sb, "\"");
}

/* Path data of a line or step layer: each run of finite points mapped to pixels, a step run
 * expanded to its corners, long runs reduced by M4, everything clipped. */
static void line_path(ctx *c, const layer *L)
{
    const axis *ax = &c->ax[CPD_SVGPLOT_X], *ay = &c->ax[L->st.y_axis];
    size_t i = 0;
    while (i < L->n) {
        while (i < L->n && !(usable(L->x[i]) && usable(L->y[i])))
            i++;
        c->a.n = 0;
        for (; i < L->n && usable(L->x[i]) && usable(L->y[i]); i++) {
            double px = map(ax, L->x[i]), py = map(ay, L->y[i]);
            if (L->kind == L_STEP && c->a.n > 0)
                pb_push(c, &c->a, px, c->a.y[c->a.n - 1]);
            pb_push(c, &c->a, px, py);
        }
        if (c->oom)
            return;
        maybe_m4(c, &c->a);
        emit_polyline(c, &c->a);
    }
}

static void draw_line(ctx *c, const layer *L)
{
    size_t mark = c->sb.len;
    sb_puts(&c->sb, "<path d=\"");
    size_t start = c->sb.len;
    line_path(c, L);
    if (c->sb.len == start) { /* nothing visible: drop the element */
        c->sb.len = mark;
        if (c->sb.s)
            c->sb.s[mark] = '\0';
        return;
    }
    sb_puts(&c->sb, "\"");
    stroke_attrs(c, &L->st);
    sb_puts(&c->sb, "/>\n");
}

static void draw_band(ctx *c, const layer *L)
{
    const axis *ax = &c->ax[CPD_SVGPLOT_X], *ay = &c->ax[L->st.y_axis];
    size_t mark = c->sb.len;
    sb_puts(&c->sb, "<path d=\"");
    size_t start = c->sb.len;
    size_t i = 0;
    while (i < L->n) {
        while (i < L->n && !(usable(L->x[i]) && usable(L->y[i]) && usable(L->y2[i])))
            i++;
        c->a.n = c->b.n = 0;
        for (; i < L->n && usable(L->x[i]) && usable(L->y[i]) && usable(L->y2[i]); i++) {
            double px = map(ax, L->x[i]);
            pb_push(c, &c->a, px, map(ay, L->y2[i]));
            pb_push(c, &c->b, px, map(ay, L->y[i]));
        }
        if (c->oom)
            return;
        if (c->a.n < 2)
            continue;
        maybe_m4(c, &c->a);
        maybe_m4(c, &c->b);
        for (size_t k = c->b.n; k-- > 0;)
            pb_push(c, &c->a, c->b.x[k], c->b.y[k]);
        for (int edge = 0; edge < 4; edge++) {
            clip_edge(c, &c->a, &c->c, edge);
            pbuf t = c->a;
            c->a = c->c;
            c->c = t;
        }
        if (c->oom || c->a.n < 3)
            continue;
        sb_puts(&c->sb, "M");
        sb_num(&c->sb, c->a.x[0]);
        sb_puts(&c->sb, " ");
        sb_num(&c->sb, c->a.y[0]);
        for (size_t k = 1; k < c->a.n; k++)
            sb_pt(&c->sb, c->a.x[k], c->a.y[k]);
        sb_puts(&c->sb, "Z");
    }
    if (c->sb.len == start) {
        c->sb.len = mark;
        if (c->sb.s)
            c->sb.s[mark] = '\0';
        return;
    }
    sb_puts(&c->sb, "\"");
    fill_attrs(c, &L->st);
    sb_puts(&c->sb, " stroke=\"none\"/>\n");
}

/* A marker centred at (x, y) of radius r, in the group's colours. */
static void marker(ctx *c, int shape, double x, double y, double r)
{
    sbuf *b = &c->sb;
    switch (shape) {
    case CPD_SVGPLOT_CIRCLE:
        sb_puts(b, "<circle cx=\"");
        sb_num(b, x);
        sb_puts(b, "\" cy=\"");
        sb_num(b, y);
        sb_puts(b, "\" r=\"");
        sb_num(b, r);
        sb_puts(b, "\"/>");
        break;
    case CPD_SVGPLOT_SQUARE: /* side 1.8 r: about the area of the circle */
        sb_puts(b, "<rect x=\"");
        sb_num(b, x - 0.9 * r);
        sb_puts(b, "\" y=\"");
        sb_num(b, y - 0.9 * r);
        sb_puts(b, "\" width=\"");
        sb_num(b, 1.8 * r);
        sb_puts(b, "\" height=\"");
        sb_num(b, 1.8 * r);
        sb_puts(b, "\"/>");
        break;
    case CPD_SVGPLOT_TRIANGLE:
        sb_puts(b, "<path d=\"M");
        sb_pt(b, x, y - 1.3 * r);
        sb_pt(b, x + 1.15 * r, y + 0.7 * r);
        sb_pt(b, x - 1.15 * r, y + 0.7 * r);
        sb_puts(b, "Z\"/>");
        break;
    case CPD_SVGPLOT_DIAMOND:
        sb_puts(b, "<path d=\"M");
        sb_pt(b, x, y - 1.3 * r);
        sb_pt(b, x + 1.3 * r, y);
        sb_pt(b, x, y + 1.3 * r);
        sb_pt(b, x - 1.3 * r, y);
        sb_puts(b, "Z\"/>");
        break;
    case CPD_SVGPLOT_CROSS:
        sb_puts(b, "<path d=\"M");
        sb_pt(b, x - r, y - r);
        sb_pt(b, x + r, y + r);
        sb_puts(b, "M");
        sb_pt(b, x - r, y + r);
        sb_pt(b, x + r, y - r);
        sb_puts(b, "\"/>");
        break;
    default:
        break;
    }
}

/* One error bar from (x0, y0) to (x1, y1), clipped, with a cap across each end that is inside. */
static void error_bar(ctx *c, double x0, double y0, double x1, double y1, int vertical, double cap)
{
    double a0 = x0, b0 = y0, a1 = x1, b1 = y1;
    if (!clip_segment(c, &a0, &b0, &a1, &b1))
        return;
    sb_puts(&c->sb, "M");
    sb_pt(&c->sb, a0, b0);
    sb_pt(&c->sb, a1, b1);
    double ends[2][2] = {{x0, y0}, {x1, y1}};
    for (int k = 0; k < 2 && cap > 0; k++) {
        double ex = ends[k][0], ey = ends[k][1];
        if (!(inside(ex, c->left, c->left + c->w) && inside(ey, c->top, c->top + c->h)))
            continue;
        sb_puts(&c->sb, "M");
        if (vertical) {
            sb_pt(&c->sb, ex - cap, ey);
            sb_pt(&c->sb, ex + cap, ey);
        } else {
            sb_pt(&c->sb, ex, ey - cap);
            sb_pt(&c->sb, ex, ey + cap);
        }
    }
}

static void draw_points(ctx *c, const layer *L)
{
    const axis *ax = &c->ax[CPD_SVGPLOT_X], *ay = &c->ax[L->st.y_axis];
    const cpd_svgplot_style *st = &L->st;
    if (L->ey_lo || L->ey_hi || L->ex_lo || L->ex_hi) {
        size_t mark = c->sb.len;
        sb_puts(&c->sb, "<path d=\"");
        size_t start = c->sb.len;
        double cap = st->marker == CPD_SVGPLOT_MARKER_NONE ? 3.0 : fmin(3.0, st->marker_px + 1);
        for (size_t i = 0; i < L->n; i++) {
            double x = L->x[i], y = L->y[i];
            if (!usable(x) || !usable(y))
                continue;
            double px = map(ax, x), py = map(ay, y);
            int lo = L->ey_lo && usable(L->ey_lo[i]), hi = L->ey_hi && usable(L->ey_hi[i]);
            if (lo || hi)
                error_bar(c, px, lo ? map(ay, y - L->ey_lo[i]) : py, px, hi ? map(ay, y + L->ey_hi[i]) : py, 1,
                          cap);
            lo = L->ex_lo && usable(L->ex_lo[i]);
            hi = L->ex_hi && usable(L->ex_hi[i]);
            if (lo || hi)
                error_bar(c, lo ? map(ax, x - L->ex_lo[i]) : px, py, hi ? map(ax, x + L->ex_hi[i]) : px, py, 0,
                          cap);
        }
        if (c->sb.len == start) {
            c->sb.len = mark;
            if (c->sb.s)
                c->sb.s[mark] = '\0';
        } else {
            sb_printf(&c->sb, "\" fill=\"none\" stroke=\"%s\" stroke-width=\"", palette[st->color]);
            sb_num(&c->sb, fmax(1.0, 0.75 * st->stroke_px));
            sb_puts(&c->sb, "\"/>\n");
        }
    }
    if (st->marker == CPD_SVGPLOT_MARKER_NONE || st->marker_px <= 0)
        return;
    sb_puts(&c->sb, "<g");
    fill_attrs(c, st);
    sb_printf(&c->sb, " stroke=\"%s\" stroke-width=\"", palette[st->color]);
    sb_num(&c->sb, st->stroke_px);
    sb_puts(&c->sb, "\">");
    for (size_t i = 0; i < L->n; i++) {
        if (!usable(L->x[i]) || !usable(L->y[i]))
            continue;
        double px = map(ax, L->x[i]), py = map(ay, L->y[i]);
        /* half a pixel of slack keeps points that sit exactly on the frame */
        if (!inside(px, c->left - 0.5, c->left + c->w + 0.5) || !inside(py, c->top - 0.5, c->top + c->h + 0.5))
            continue;
        marker(c, st->marker, px, py, st->marker_px);
    }
    sb_puts(&c->sb, "</g>\n");
}

/* Visible pixel span [*p0, *p1] (top, bottom) of a y interval, or 0 when outside the area. */
static int y_span(const ctx *c, const axis *ay, double v0, double v1, double *p0, double *p1)
{
    double b = isinf(v0) ? c->top + c->h : map(ay, v0), t = isinf(v1) ? c->top : map(ay, v1);
    t = fmax(t, c->top);
    b = fmin(b, c->top + c->h);
    *p0 = t;
    *p1 = b;
    return b - t > 0.01;
}

static void draw_region(ctx *c, const layer *L)
{
    double t, b;
    if (!y_span(c, &c->ax[L->st.y_axis], L->v0, L->v1, &t, &b))
        return;
    sb_puts(&c->sb, "<rect x=\"");
    sb_num(&c->sb, c->left);
    sb_puts(&c->sb, "\" y=\"");
    sb_num(&c->sb, t);
    sb_puts(&c->sb, "\" width=\"");
    sb_num(&c->sb, c->w);
    sb_puts(&c->sb, "\" height=\"");
    sb_num(&c->sb, b - t);
    sb_puts(&c->sb, "\"");
    fill_attrs(c, &L->st);
    sb_puts(&c->sb, "/>\n");
}

static void draw_refline(ctx *c, const layer *L)
{
    double x0, y0, x1, y1;
    if (L->kind == L_VLINE) {
        x0 = x1 = map(&c->ax[CPD_SVGPLOT_X], L->v0);
        y0 = c->top;
        y1 = c->top + c->h;
    } else {
        y0 = y1 = map(&c->ax[L->st.y_axis], L->v0);
        x0 = c->left;
        x1 = c->left + c->w;
    }
    if (!clip_segment(c, &x0, &y0, &x1, &y1))
        return;
    sb_puts(&c->sb, "<path d=\"M");
    sb_pt(&c->sb, x0, y0);
    sb_pt(&c->sb, x1, y1);
    sb_puts(&c->sb, "\"");
    stroke_attrs(c, &L->st);
    sb_puts(&c->sb, "/>\n");
}

/* ---- rendering: text ----------------------------------------------------------------------------- */

/* <text> at (x, y) with anchor and size; halo draws a white outline under the glyphs so a label
 * stays readable over data. */
static void text_at(ctx *c, double x, double y, const char *anchor, double fs, const char *extra, const char *s,
                    int halo)
{
    sb_puts(&c->sb, "<text x=\"");
    sb_num(&c->sb, x);
    sb_puts(&c->sb, "\" y=\"");
    sb_num(&c->sb, y);
    sb_puts(&c->sb, "\"");
    if (anchor)
        sb_printf(&c->sb, " text-anchor=\"%s\"", anchor);
    if (fs != FS_TICK) {
        sb_puts(&c->sb, " font-size=\"");
        sb_num(&c->sb, fs);
        sb_puts(&c->sb, "\"");
    }
    if (extra)
        sb_puts(&c->sb, extra);
    if (halo)
        sb_puts(&c->sb, " stroke=\"#fff\" stroke-width=\"3\" stroke-linejoin=\"round\" paint-order=\"stroke\"");
    sb_puts(&c->sb, ">");
    sb_text(&c->sb, s);
    sb_puts(&c->sb, "</text>\n");
}

static void draw_annotation_labels(ctx *c)
{
    const cpd_svgplot *p = c->p;
    /* vertical-line labels that would overlap drop to the next of a few rows (greedy, by the
     * estimated text width), so thresholds close together stay readable */
    enum { ROWS = 4, SPANS = 32 };
    double span_lo[ROWS][SPANS], span_hi[ROWS][SPANS];
    size_t nspan[ROWS] = {0};
    for (size_t k = 0; k < p->nlayer; k++) {
        const layer *L = &p->layer[k];
        if (!L->label)
            continue;
        if (L->kind == L_HREGION) {
            double t, b;
            if (!y_span(c, &c->ax[L->st.y_axis], L->v0, L->v1, &t, &b))
                continue;
            /* centred in the visible part, but never above or below the area */
            double y = fmin(fmax(0.5 * (t + b) + 0.35 * FS_NOTE, c->top + FS_NOTE + 2), c->top + c->h - 3);
            text_at(c, c->left + 6, y, NULL, FS_NOTE, NULL, L->label, 1);
        } else if (L->kind == L_VLINE) {
            double x = map(&c->ax[CPD_SVGPLOT_X], L->v0);
            if (!inside(x, c->left, c->left + c->w))
                continue;
            double tw = text_px(L->label, FS_NOTE);
            /* a label that would run past the right edge ends at its line instead: never clipped */
            int right_half = x > c->left + 0.7 * c->w || x + 4 + tw > c->left + c->w;
            double lo = right_half ? x - 4 - tw : x + 4, hi = right_half ? x - 4 : x + 4 + tw;
            size_t row = 0;
            for (; row < ROWS; row++) {
                int clash = 0;
                for (size_t q = 0; q < nspan[row] && !clash; q++)
                    clash = lo < span_hi[row][q] + 3 && hi > span_lo[row][q] - 3;
                if (!clash)
                    break;
            }
            if (row == ROWS)
                row = ROWS - 1;
            if (nspan[row] < SPANS) {
                span_lo[row][nspan[row]] = lo;
                span_hi[row][nspan[row]] = hi;
                nspan[row]++;
            }
            char fill[32]; /* the label takes its line's colour, so a label beside another line is not misread */
            snprintf(fill, sizeof fill, " fill=\"%s\"", cpd_svgplot_color_hex(L->st.color));
            text_at(c, right_half ? x - 4 : x + 4, c->top + (FS_NOTE + 2) * (double)(row + 1), right_half ? "end" : NULL,
                    FS_NOTE, fill, L->label, 1);
        } else if (L->kind == L_HLINE) {
            double y = map(&c->ax[L->st.y_axis], L->v0);
            if (!inside(y, c->top, c->top + c->h))
                continue;
            /* below the line: a fitted curve above its asymptote (CP) keeps the label clear */
            text_at(c, c->left + c->w - 4, fmin(y + FS_NOTE + 3, c->top + c->h - 3), "end", FS_NOTE, NULL, L->label,
                    1);
        }
    }
}

static void draw_legend(ctx *c)
{
    if (!c->nleg)
        return;
    sb_puts(&c->sb, "<g class=\"cpd-legend\">\n");
    for (size_t i = 0; i < c->nleg; i++) {
        const layer *L = &c->p->layer[c->leg[i].layer];
        const cpd_svgplot_style *st = &L->st;
        double x = c->left + c->leg[i].x, base = c->legend_top + c->leg[i].row * LEG_ROW + FS_LEGEND;
        double mid = base - 0.35 * FS_LEGEND;
        if (L->kind == L_BAND) {
            sb_puts(&c->sb, "<rect x=\"");
            sb_num(&c->sb, x);
            sb_puts(&c->sb, "\" y=\"");
            sb_num(&c->sb, mid - 5);
            sb_puts(&c->sb, "\" width=\"22\" height=\"10\"");
            fill_attrs(c, st);
            sb_puts(&c->sb, "/>");
        } else if (L->kind == L_POINTS) {
            if (st->marker == CPD_SVGPLOT_MARKER_NONE || st->marker_px <= 0) {
                sb_puts(&c->sb, "<path d=\"M");
                sb_pt(&c->sb, x + 11, mid - 5);
                sb_pt(&c->sb, x + 11, mid + 5);
                sb_printf(&c->sb, "\" stroke=\"%s\" stroke-width=\"1.2\"/>", palette[st->color]);
            } else {
                sb_puts(&c->sb, "<g");
                fill_attrs(c, st);
                sb_printf(&c->sb, " stroke=\"%s\" stroke-width=\"", palette[st->color]);
                sb_num(&c->sb, st->stroke_px);
                sb_puts(&c->sb, "\">");
                marker(c, st->marker, x + 11, mid, fmin(st->marker_px, 5.0));
                sb_puts(&c->sb, "</g>");
            }
        } else {
            sb_puts(&c->sb, "<path d=\"M");
            sb_pt(&c->sb, x, mid);
            sb_pt(&c->sb, x + LEG_SAMPLE, mid);
            sb_puts(&c->sb, "\"");
            stroke_attrs(c, st);
            sb_puts(&c->sb, "/>");
        }
        sb_puts(&c->sb, "\n");
        text_at(c, x + LEG_SAMPLE + 5, base, NULL, FS_LEGEND, NULL, L->label, 0);
    }
    sb_puts(&c->sb, "</g>\n");
}

static void draw_axes(ctx *c)
{
    const cpd_svgplot *p = c->p;
    sbuf *b = &c->sb;
    double L = c->left, R = c->left + c->w, T = c->top, B = c->top + c->h;
    /* frame */
    sb_puts(b, "<rect class=\"cpd-plot-area\" x=\"");
    sb_num(b, L);
    sb_puts(b, "\" y=\"");
    sb_num(b, T);
    sb_puts(b, "\" width=\"");
    sb_num(b, c->w);
    sb_puts(b, "\" height=\"");
    sb_num(b, c->h);
    sb_puts(b, "\" fill=\"none\" stroke=\"#b0b0b0\"/>\n");
    /* axis lines and tick marks */
    const axis *ax = &c->ax[CPD_SVGPLOT_X], *ay = &c->ax[CPD_SVGPLOT_Y], *ay2 = &c->ax[CPD_SVGPLOT_Y2];
    sb_puts(b, "<path d=\"M");
    sb_pt(b, L, T);
    sb_pt(b, L, B);
    sb_pt(b, R, B);
    if (ay2->used)
        sb_pt(b, R, T);
    for (size_t i = 0; i < ax->nt; i++) {
        double x = map(ax, ax->t[i]);
        sb_puts(b, "M");
        sb_pt(b, x, B);
        sb_pt(b, x, B + 4);
    }
    for (int id = CPD_SVGPLOT_Y; id <= CPD_SVGPLOT_Y2; id++) {
        const axis *a = &c->ax[id];
        double x = id == CPD_SVGPLOT_Y ? L : R, d = id == CPD_SVGPLOT_Y ? -4 : 4;
        for (size_t i = 0; a->used && i < a->nt; i++) {
            sb_puts(b, "M");
            sb_pt(b, x, map(a, a->t[i]));
            sb_pt(b, x + d, map(a, a->t[i]));
        }
    }
    sb_puts(b, "\" fill=\"none\" stroke=\"#555\"/>\n");
    /* tick labels */
    sb_puts(b, "<g fill=\"#333\">\n");
    for (size_t i = 0; i < ax->nt; i++)
        text_at(c, map(ax, ax->t[i]), B + 6 + FS_TICK, "middle", FS_TICK, NULL, ax->lab[i], 0);
    for (size_t i = 0; i < ay->nt; i++)
        text_at(c, L - 7, map(ay, ay->t[i]) + 0.35 * FS_TICK, "end", FS_TICK, NULL, ay->lab[i], 0);
    for (size_t i = 0; ay2->used && i < ay2->nt; i++)
        text_at(c, R + 7, map(ay2, ay2->t[i]) + 0.35 * FS_TICK, NULL, FS_TICK, NULL, ay2->lab[i], 0);
    sb_puts(b, "</g>\n");
    /* axis labels */
    if (p->label[CPD_SVGPLOT_X])
        text_at(c, L + 0.5 * c->w, B + 6 + FS_TICK + 6 + FS_LABEL + 2, "middle", FS_LABEL, NULL,
                p->label[CPD_SVGPLOT_X], 0);
    char rot[96];
    double mid = T + 0.5 * c->h;
    if (p->label[CPD_SVGPLOT_Y]) {
        double x = 6 + FS_LABEL;
        snprintf(rot, sizeof rot, " transform=\"rotate(-90 %.2f %.2f)\"", x, mid);
        text_at(c, x, mid, "middle", FS_LABEL, rot, p->label[CPD_SVGPLOT_Y], 0);
    }
    if (ay2->used && p->label[CPD_SVGPLOT_Y2]) {
        double x = p->width_px - 6 - FS_LABEL;
        snprintf(rot, sizeof rot, " transform=\"rotate(90 %.2f %.2f)\"", x, mid);
        text_at(c, x, mid, "middle", FS_LABEL, rot, p->label[CPD_SVGPLOT_Y2], 0);
    }
}

static void draw_grid(ctx *c)
{
    const axis *ax = &c->ax[CPD_SVGPLOT_X], *ay = &c->ax[CPD_SVGPLOT_Y];
    if (!ax->nt && !ay->nt)
        return;
    sb_puts(&c->sb, "<path d=\"");
    for (size_t i = 0; i < ax->nt; i++) {
        sb_puts(&c->sb, "M");
        sb_pt(&c->sb, map(ax, ax->t[i]), c->top);
        sb_pt(&c->sb, map(ax, ax->t[i]), c->top + c->h);
    }
    for (size_t i = 0; i < ay->nt; i++) {
        sb_puts(&c->sb, "M");
        sb_pt(&c->sb, c->left, map(ay, ay->t[i]));
        sb_pt(&c->sb, c->left + c->w, map(ay, ay->t[i]));
    }
    sb_puts(&c->sb, "\" fill=\"none\" stroke=\"#e4e4e4\"/>\n");
}

static int has_data(const cpd_svgplot *p)
{
    for (size_t k = 0; k < p->nlayer; k++) {
        const layer *L = &p->layer[k];
        if (!is_series(L->kind))
            continue;
        for (size_t i = 0; i < L->n; i++)
            if (usable(L->x[i]) && usable(L->y[i]) && (L->kind != L_BAND || usable(L->y2[i])))
                return 1;
    }
    return 0;
}

/* Renders p as a standalone <svg> (dy < 0) or, for a stack, as a <g> moved down by dy px inside
 * the stack's one <svg>: one root element, so the page holds no nested <svg>. */
static int render_part(const cpd_svgplot *p, int dy, char **out, size_t *len)
{
    int rc = CPD_OK;
    ctx c;
    memset(&c, 0, sizeof c);
    c.p = p;
    c.leg = malloc((p->nlayer ? p->nlayer : 1) * sizeof *c.leg);
    if (!c.leg) {
        rc = CPD_ENOMEM;
        goto done;
    }
    double W = p->width_px, H = p->height_px;
    const char *close = dy < 0 ? "</svg>\n" : "</g>\n";
    if (dy < 0) {
        sb_printf(&c.sb,
                  "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"%d\" height=\"%d\" viewBox=\"0 0 %d %d\" "
                  "role=\"img\" font-family=\"sans-serif\" font-size=\"%g\" fill=\"#222\">\n<title>",
                  p->width_px, p->height_px, p->width_px, p->height_px, FS_TICK);
        sb_text(&c.sb, p->title ? p->title : p->label[CPD_SVGPLOT_Y] ? p->label[CPD_SVGPLOT_Y] : "plot");
        sb_puts(&c.sb, "</title>\n<rect width=\"100%\" height=\"100%\" fill=\"#fff\"/>\n");
    } else
        sb_printf(&c.sb, "<g transform=\"translate(0,%d)\">\n<rect width=\"%d\" height=\"%d\" fill=\"#fff\"/>\n", dy,
                  p->width_px, p->height_px);
    if (p->title)
        text_at(&c, 0.5 * W, 8 + FS_TITLE, "middle", FS_TITLE, " font-weight=\"bold\" fill=\"#222\"", p->title, 0);

    if (!has_data(p)) {
        double top = 8 + (p->title ? 22 : 0) + 8;
        c.left = 16;
        c.top = top;
        c.w = W - 32;
        c.h = H - top - 16;
        sb_puts(&c.sb, "<rect class=\"cpd-plot-area\" x=\"16\" y=\"");
        sb_num(&c.sb, top);
        sb_printf(&c.sb, "\" width=\"%d\" height=\"", p->width_px - 32);
        sb_num(&c.sb, c.h);
        sb_puts(&c.sb, "\" fill=\"none\" stroke=\"#b0b0b0\"/>\n");
        text_at(&c, 0.5 * W, top + 0.5 * c.h + 5, "middle", FS_LABEL, " fill=\"#666\"", "no data", 0);
        sb_puts(&c.sb, close);
        goto finish;
    }

    /* ranges: x first, then each y axis fitted to what lies in the x range */
    extent e;
    memset(&e, 0, sizeof e);
    gather(p, CPD_SVGPLOT_X, 0, 0, &e);
    axis *ax = &c.ax[CPD_SVGPLOT_X];
    ax->used = 1;
    resolve(&e, p->fix_lo[CPD_SVGPLOT_X], p->fix_hi[CPD_SVGPLOT_X], p->format[CPD_SVGPLOT_X], &ax->lo, &ax->hi);
    ax->log = p->format[CPD_SVGPLOT_X] == CPD_SVGPLOT_LOG_TIME_S;
    for (int id = CPD_SVGPLOT_Y; id <= CPD_SVGPLOT_Y2; id++) {
        axis *a = &c.ax[id];
        a->used = id == CPD_SVGPLOT_Y || p->label[id] != NULL;
        for (size_t k = 0; k < p->nlayer; k++)
            if (p->layer[k].st.y_axis == id && p->layer[k].kind != L_VLINE)
                a->used = 1;
        memset(&e, 0, sizeof e);
        gather(p, id, ax->lo, ax->hi, &e);
        resolve(&e, p->fix_lo[id], p->fix_hi[id], p->format[id], &a->lo, &a->hi);
        a->log = p->format[id] == CPD_SVGPLOT_LOG_TIME_S;
    }
    layout(&c);

    draw_grid(&c);
    sb_puts(&c.sb, "<g class=\"cpd-data\">\n");
    for (size_t k = 0; k < p->nlayer && !c.oom; k++) {
        const layer *L = &p->layer[k];
        switch (L->kind) {
        case L_LINE:
        case L_STEP: draw_line(&c, L); break;
        case L_POINTS: draw_points(&c, L); break;
        case L_BAND: draw_band(&c, L); break;
        case L_HREGION: draw_region(&c, L); break;
        default: draw_refline(&c, L); break;
        }
    }
    sb_puts(&c.sb, "</g>\n");
    draw_axes(&c);
    draw_annotation_labels(&c);
    draw_legend(&c);
    sb_puts(&c.sb, close);

finish:
    if (c.oom || c.sb.oom) {
        rc = CPD_ENOMEM;
        goto done;
    }
    *out = c.sb.s;
    if (len)
        *len = c.sb.len;
    c.sb.s = NULL;
done:
    free(c.sb.s);
    free(c.leg);
    free(c.a.x);
    free(c.a.y);
    free(c.b.x);
    free(c.b.y);
    free(c.c.x);
    free(c.c.y);
    return rc;
}

int cpd_svgplot_render(const cpd_svgplot *p, char **out, size_t *len)
{
    if (out)
        *out = NULL;
    if (len)
        *len = 0;
    if (!p || !out)
        return CPD_EUSAGE;
    return render_part(p, -1, out, len);
}

int cpd_svgplot_render_stack(cpd_svgplot *const *plots, size_t n, const char *title, char **out, size_t *len)
{
    if (out)
        *out = NULL;
    if (len)
        *len = 0;
    if (!plots || !out || n == 0 || n > 16)
        return CPD_EUSAGE;
    int W = 0, H = 0;
    for (size_t i = 0; i < n; i++) {
        if (!plots[i])
            return CPD_EUSAGE;
        W = plots[i]->width_px > W ? plots[i]->width_px : W;
        H += plots[i]->height_px;
    }
    sbuf b;
    memset(&b, 0, sizeof b);
    sb_printf(&b,
              "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"%d\" height=\"%d\" viewBox=\"0 0 %d %d\" "
              "role=\"img\" font-family=\"sans-serif\" font-size=\"%g\" fill=\"#222\">\n<title>",
              W, H, W, H, FS_TICK);
    sb_text(&b, title && *title ? title : plots[0]->title ? plots[0]->title : "plot");
    sb_puts(&b, "</title>\n<rect width=\"100%\" height=\"100%\" fill=\"#fff\"/>\n");
    int rc = CPD_OK, dy = 0;
    for (size_t i = 0; i < n && rc == CPD_OK; i++) {
        char *part = NULL;
        size_t pl = 0;
        if ((rc = render_part(plots[i], dy, &part, &pl)) == CPD_OK)
            sb_add(&b, part, pl);
        free(part);
        dy += plots[i]->height_px;
    }
    sb_puts(&b, "</svg>\n");
    if (rc == CPD_OK && b.oom)
        rc = CPD_ENOMEM;
    if (rc) {
        free(b.s);
        return rc;
    }
    *out = b.s;
    if (len)
        *len = b.len;
    return CPD_OK;
}
