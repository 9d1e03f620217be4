/* mmp.c: exact mean-maximal curves by scanning every window of every segment (method in mmp.h),
 * and the season curve as a pointwise maximum over stored curves. */
#include "cpdomain/mmp.h"
#include "cpdomain/status.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

struct cpd_mmp_ws {
    size_t cap_len;  /* room for segments of this many seconds */
    double *c;       /* cap_len + 1 prefix sums of value - segment mean */
    double *hi;      /* cap_len + 1 compensated prefix sums: leading part */
    double *lo;      /* cap_len + 1 compensated prefix sums: accumulated rounding error */
    size_t cap_pts;  /* room for this many curve points */
    double *dur;
    double *val;
    double *start;
};

size_t cpd_mmp_duration_s(size_t i)
{
    if (i < CPD_MMP_FINE_S)
        return i + 1;
    return CPD_MMP_FINE_S + CPD_MMP_COARSE_STEP_S * (i - CPD_MMP_FINE_S + 1);
}

size_t cpd_mmp_points(size_t longest_s)
{
    if (longest_s <= CPD_MMP_FINE_S)
        return longest_s;
    size_t n = CPD_MMP_FINE_S + (longest_s - CPD_MMP_FINE_S) / CPD_MMP_COARSE_STEP_S;
    return n < CPD_MMP_NMAX ? n : CPD_MMP_NMAX;
}

static int grow(double **p, size_t need)
{
    double *q = realloc(*p, need * sizeof *q);
    if (!q)
        return CPD_ENOMEM;
    *p = q;
    return CPD_OK;
}

static int reserve(cpd_mmp_ws *w, size_t len, size_t pts)
{
    if (len > w->cap_len) {
        if (grow(&w->c, len + 1) || grow(&w->hi, len + 1) || grow(&w->lo, len + 1))
            return CPD_ENOMEM;
        w->cap_len = len;
    }
    if (pts > w->cap_pts) {
        if (grow(&w->dur, pts) || grow(&w->val, pts) || grow(&w->start, pts))
            return CPD_ENOMEM;
        w->cap_pts = pts;
    }
    return CPD_OK;
}

cpd_mmp_ws *cpd_mmp_alloc(size_t longest_hint_s)
{
    cpd_mmp_ws *w = calloc(1, sizeof *w);
    if (!w)
        return NULL;
    size_t len = longest_hint_s ? longest_hint_s : 1;
    if (len > (size_t)CPD_SESSION_MAX_SPAN_S)
        len = (size_t)CPD_SESSION_MAX_SPAN_S;
    size_t pts = cpd_mmp_points(len);
    if (reserve(w, len, pts ? pts : 1)) {
        cpd_mmp_free(w);
        return NULL;
    }
    return w;
}

void cpd_mmp_free(cpd_mmp_ws *w)
{
    if (!w)
        return;
    free(w->c);
    free(w->hi);
    free(w->lo);
    free(w->dur);
    free(w->val);
    free(w->start);
    free(w);
}

/* Knuth's TwoSum: s + e == a + b exactly. */
static void two_sum(double a, double b, double *s, double *e)
{
    double x = a + b, bv = x - a;
    *e = (a - (x - bv)) + (b - bv);
    *s = x;
}

static void prefix(cpd_mmp_ws *w, const double *x, size_t L)
{
    double h = 0, l = 0;
    for (size_t i = 0; i < L; i++) {
        double e;
        two_sum(h, x[i], &h, &e);
        l += e;
        w->hi[i + 1] = h;
        w->lo[i + 1] = l;
    }
    w->hi[0] = w->lo[0] = 0;
    double mean = (h + l) / (double)L, c = 0;
    w->c[0] = 0;
    for (size_t i = 0; i < L; i++) {
        c += x[i] - mean;
        w->c[i + 1] = c;
    }
}

/* Sum of x[i .. j-1] from the compensated prefix sums. */
static double window_sum(const cpd_mmp_ws *w, size_t i, size_t j)
{
    double s, e;
    two_sum(w->hi[j], -w->hi[i], &s, &e);
    return s + (e + (w->lo[j] - w->lo[i]));
}

/* Start of the window of length d with the largest sum of the centred values: the first of the
 * largest. Four interleaved running maxima keep the comparisons independent of each other, so the
 * loop is not one long dependency chain. */
static size_t best_start(const double *c, size_t L, size_t d)
{
    const double *a = c, *b = c + d;
    size_t m = L - d + 1, i = 0;
    double m0 = b[0] - a[0], m1 = m0, m2 = m0, m3 = m0;
    size_t i0 = 0, i1 = 0, i2 = 0, i3 = 0;
    for (; i + 4 <= m; i += 4) {
        double x0 = b[i] - a[i], x1 = b[i + 1] - a[i + 1], x2 = b[i + 2] - a[i + 2], x3 = b[i + 3] - a[i + 3];
        if (x0 > m0) {
            m0 = x0;
            i0 = i;
        }
        if (x1 > m1) {
            m1 = x1;
            i1 = i + 1;
        }
        if (x2 > m2) {
            m2 = x2;
            i2 = i + 2;
        }
        if (x3 > m3) {
            m3 = x3;
            i3 = i + 3;
        }
    }
    for (; i < m; i++) {
        double x = b[i] - a[i];
        if (x > m0) {
            m0 = x;
            i0 = i;
        }
    }
    /* lanes 1-3 start at index 0 too, so a lane that never improved holds window 0: the merge
     * below still picks the earliest among equal maxima */
    double best = m0;
    size_t at = i0;
    const double mv[3] = {m1, m2, m3};
    const size_t iv[3] = {i1, i2, i3};
    for (int k = 0; k < 3; k++)
        if (mv[k] > best || (mv[k] == best && iv[k] < at)) {
            best = mv[k];
            at = iv[k];
        }
    return at;
}

int cpd_mmp_segments(cpd_mmp_ws *w, const cpd_session_segment *seg, size_t n_seg, cpd_mmp_curve *out)
{
    memset(out, 0, sizeof *out);
    if (!w || (n_seg > 0 && !seg))
        return CPD_EUSAGE;
    size_t longest = 0;
    for (size_t k = 0; k < n_seg; k++) {
        if (seg[k].length_s > (size_t)CPD_SESSION_MAX_SPAN_S || (seg[k].length_s > 0 && !seg[k].value))
            return CPD_EUSAGE;
        if (k > 0 && seg[k].start_s < seg[k - 1].start_s + seg[k - 1].length_s)
            return CPD_EUSAGE;
        for (size_t i = 0; i < seg[k].length_s; i++)
            if (!isfinite(seg[k].value[i]) || seg[k].value[i] < 0)
                return CPD_EUSAGE;
        if (seg[k].length_s > longest)
            longest = seg[k].length_s;
    }
    if (longest == 0)
        return CPD_ENODATA;
    size_t np = cpd_mmp_points(longest);
    int rc = reserve(w, longest, np);
    if (rc)
        return rc;
    for (size_t p = 0; p < np; p++) {
        w->dur[p] = (double)cpd_mmp_duration_s(p);
        w->val[p] = -1; /* below any value, so the first segment long enough always sets the point */
        w->start[p] = 0;
    }
    for (size_t k = 0; k < n_seg; k++) {
        size_t L = seg[k].length_s;
        if (L == 0)
            continue;
        prefix(w, seg[k].value, L);
        size_t npk = cpd_mmp_points(L);
        for (size_t p = 0; p < npk; p++) {
            size_t d = cpd_mmp_duration_s(p);
            size_t at = best_start(w->c, L, d);
            double v = window_sum(w, at, at + d) / (double)d;
            /* a tiny negative from rounding over all-zero data would read as "no effort" */
            if (v < 0)
                v = 0;
            if (v > w->val[p]) {
                w->val[p] = v;
                w->start[p] = (double)(seg[k].start_s + at);
            }
        }
    }
    out->n = np;
    out->duration_s = w->dur;
    out->value = w->val;
    out->start_s = w->start;
    return CPD_OK;
}

int cpd_mmp_session(cpd_mmp_ws *w, const cpd_session *s, cpd_mmp_curve *out)
{
    if (!s) {
        memset(out, 0, sizeof *out);
        return CPD_EUSAGE;
    }
    return cpd_mmp_segments(w, s->segments, s->n_segments, out);
}

cpd_mmp_season *cpd_mmp_season_alloc(void)
{
    cpd_mmp_season *s = calloc(1, sizeof *s);
    if (!s)
        return NULL;
    s->duration_s = malloc(CPD_MMP_NMAX * sizeof *s->duration_s);
    s->value = malloc(CPD_MMP_NMAX * sizeof *s->value);
    s->start_s = malloc(CPD_MMP_NMAX * sizeof *s->start_s);
    s->session = malloc(CPD_MMP_NMAX * sizeof *s->session);
    s->date_days = malloc(CPD_MMP_NMAX * sizeof *s->date_days);
    if (!s->duration_s || !s->value || !s->start_s || !s->session || !s->date_days) {
        cpd_mmp_season_free(s);
        return NULL;
    }
    return s;
}

void cpd_mmp_season_free(cpd_mmp_season *s)
{
    if (!s)
        return;
    free(s->duration_s);
    free(s->value);
    free(s->start_s);
    free(s->session);
    free(s->date_days);
    free(s);
}

void cpd_mmp_season_reset(cpd_mmp_season *s)
{
    s->n = 0;
}

int cpd_mmp_season_add(cpd_mmp_season *s, const cpd_mmp_curve *c, int64_t session, int date_days)
{
    if (!s || !c || c->n > CPD_MMP_NMAX || (c->n > 0 && (!c->duration_s || !c->value || !c->start_s)))
        return CPD_EUSAGE;
    for (size_t i = 0; i < c->n; i++)
        if (c->duration_s[i] != (double)cpd_mmp_duration_s(i) || !isfinite(c->value[i]) || c->value[i] < 0 ||
            !isfinite(c->start_s[i]) || c->start_s[i] < 0)
            return CPD_EUSAGE;
    size_t common = c->n < s->n ? c->n : s->n;
    for (size_t i = 0; i < common; i++)
        if (c->value[i] > s->value[i]) {
            s->value[i] = c->value[i];
            s->start_s[i] = c->start_s[i];
            s->session[i] = session;
            s->date_days[i] = date_days;
        }
    for (size_t i = common; i < c->n; i++) {
        s->duration_s[i] = c->duration_s[i];
        s->value[i] = c->value[i];
        s->start_s[i] = c->start_s[i];
        s->session[i] = session;
        s->date_days[i] = date_days;
    }
    if (c->n > s->n)
        s->n = c->n;
    return CPD_OK;
}
