/* mmp.c: exact mean-maximal curves by scanning every window of every segment (method in mmp.h),
 * and the season curve as a pointwise maximum over stored curves. The scan is the hot loop of
 * every import: it is written as blocked maxima the compiler vectorises, and built (this file
 * only, see the Makefile) with -O3 -fopenmp-simd and an AVX2 clone beside the portable code. */
#include "cpdomain/mmp.h"
#include "cpdomain/status.h"

#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

/* One clone of each scan for AVX2 (x86-64-v3) beside the portable one, chosen once at load time
 * by the processor (GCC's function multiversioning, glibc's ifunc); the binary itself stays
 * portable x86-64. An AVX-512 (x86-64-v4) clone measured slower than the AVX2 one on the AMD
 * processor of the benchmarks (0.90 against 0.78 ms per two-hour ride), so there is none. */
#if defined(__x86_64__) && defined(__GNUC__) && defined(__has_attribute)
#if __has_attribute(target_clones) && !defined(CPD_MMP_NO_CLONES)
#define CPD_MMP_CLONES 1
#if defined(__clang__) /* clang names features, not x86-64 levels, in clones and in its CPU checks */
#define CLONES __attribute__((target_clones("avx2", "default")))
#else
#define CLONES __attribute__((target_clones("arch=x86-64-v3", "default")))
#endif
#endif
#endif
#ifndef CLONES
#define CLONES
#endif

/* Windows per block of the scan: long enough for the vector loop, short enough to rescan. */
#define BLK 256
/* Windows per block of the pruned scan: short, so that a block's bound is close to its windows. */
#define PBLK 128

/* Scales tried, in order, to read every value as an integer count of 1/scale: whole numbers,
 * decimals, and the sixtieths that the linear fill of a gap of 2 to 6 s produces from whole
 * numbers (session.h rule 5). */
static const double SCALES[] = {1, 60, 10, 100, 1000, 600, 6000, 60000, 10000};
#define NSCALES (sizeof SCALES / sizeof SCALES[0])
#define EXACT_MAX 9007199254740992.0 /* 2^53: every integer up to here is a double */

struct cpd_mmp_ws {
    size_t cap_len;  /* room for segments of this many seconds */
    double *c;       /* cap_len + 1 prefix sums: exact integer counts, or value - segment mean */
    double *hi;      /* cap_len + 1 compensated prefix sums: leading part */
    double *lo;      /* cap_len + 1 compensated prefix sums: accumulated rounding error */
    int32_t *p32;    /* cap_len + 1 exact integer prefix sums when they fit 32 bits */
    double *bm;      /* cap_len / BLK + 2 block maxima of a double scan */
    int32_t *bi;     /* cap_len / PBLK + 2 block maxima of a pruned integer scan */
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

const char *cpd_mmp_kernel(void)
{
#ifdef CPD_MMP_CLONES
    __builtin_cpu_init();
#if defined(__clang__)
    if (__builtin_cpu_supports("avx2"))
        return "avx2 clone (clang)";
#else
    if (__builtin_cpu_supports("x86-64-v3"))
        return "x86-64-v3 (AVX2)";
#endif
    return "x86-64 baseline (sse2)";
#else
    return "portable C (no multiversioning)";
#endif
}

static int grow(void **p, size_t need, size_t size)
{
    void *q = realloc(*p, need * size);
    if (!q)
        return CPD_ENOMEM;
    *p = q;
    return CPD_OK;
}

static int reserve(cpd_mmp_ws *w, size_t len, size_t pts)
{
    if (len > w->cap_len) {
        if (grow((void **)&w->c, len + 1, sizeof *w->c) || grow((void **)&w->hi, len + 1, sizeof *w->hi) ||
            grow((void **)&w->lo, len + 1, sizeof *w->lo) || grow((void **)&w->p32, len + 1, sizeof *w->p32) ||
            grow((void **)&w->bm, len / BLK + 2, sizeof *w->bm) || grow((void **)&w->bi, 4 * (len / PBLK + 2), sizeof *w->bi))
            return CPD_ENOMEM;
        w->cap_len = len;
    }
    if (pts > w->cap_pts) {
        if (grow((void **)&w->dur, pts, sizeof *w->dur) || grow((void **)&w->val, pts, sizeof *w->val) ||
            grow((void **)&w->start, pts, sizeof *w->start))
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
    free(w->p32);
    free(w->bm);
    free(w->bi);
    free(w->dur);
    free(w->val);
    free(w->start);
    free(w);
}

/* ---- the scans: the largest window sum of length d and its first start ---- */

/* The first start of the largest window of length d over exact 32-bit prefix sums p (m windows).
 * Values are >= 0, so the prefix sums never fall and no window starting
 * in block [s, e) sums to more than p[e - 1 + d] - p[s]. A block whose bound does not exceed the
 * best sum known (at first the window at seed, the previous duration's answer) is skipped; the
 * maximum found, the first window that reaches it is looked for in the blocks that can hold it
 * (bi: each block's maximum, or a mark for a skipped block whose bound equalled the best then). */
CLONES static size_t scan_pruned(const int32_t *p, size_t m, size_t d, size_t seed, int32_t *bi)
{
    const int32_t *a = p, *b = p + d;
    const int32_t TIE = -1; /* a skipped block that might hold a window equal to the maximum */
    if (seed >= m)
        seed = m - 1;
    int32_t best = b[seed] - a[seed];
    size_t nb = (m + PBLK - 1) / PBLK;
    for (size_t k = 0; k < nb; k++) {
        size_t s = k * PBLK, e = s + PBLK < m ? s + PBLK : m;
        int32_t bound = b[e - 1] - a[s];
        if (bound <= best) {
            bi[k] = bound == best ? TIE : INT32_MIN;
            continue;
        }
        int32_t mx = INT32_MIN;
#pragma omp simd reduction(max : mx)
        for (size_t i = s; i < e; i++) {
            int32_t x = b[i] - a[i];
            mx = x > mx ? x : mx;
        }
        bi[k] = mx;
        best = mx > best ? mx : best;
    }
    for (size_t k = 0; k < nb; k++) {
        if (bi[k] != best && bi[k] != TIE)
            continue;
        size_t e = k * PBLK + PBLK < m ? k * PBLK + PBLK : m;
        for (size_t i = k * PBLK; i < e; i++)
            if (b[i] - a[i] == best)
                return i;
    }
    return seed; /* not reached: the seed's own block holds the maximum when nothing beat it */
}

/* scan_pruned for the four durations d .. d + 3 in one pass (L >= d + 3), seeded by seed[k];
 * bi holds 4 (L / PBLK + 2) block maxima. at[k] receives the answer for d + k. */
CLONES static void scan4_pruned(const int32_t *p, size_t L, size_t d, const size_t seed[4], int32_t *bi, size_t at[4])
{
    const int32_t TIE = -1;
    const int32_t *b0 = p + d, *b1 = p + d + 1, *b2 = p + d + 2, *b3 = p + d + 3;
    size_t m = L - d - 2, nb = (m + PBLK - 1) / PBLK, stride = L / PBLK + 2;
    int32_t best[4];
    for (size_t k = 0; k < 4; k++) {
        size_t s = seed[k] < m ? seed[k] : m - 1;
        best[k] = p[s + d + k] - p[s];
    }
    for (size_t j = 0; j < nb; j++) {
        size_t s = j * PBLK, e = s + PBLK < m ? s + PBLK : m;
        int32_t bound[4] = {b0[e - 1] - p[s], b1[e - 1] - p[s], b2[e - 1] - p[s], b3[e - 1] - p[s]};
        if (bound[0] <= best[0] && bound[1] <= best[1] && bound[2] <= best[2] && bound[3] <= best[3]) {
            for (size_t k = 0; k < 4; k++)
                bi[k * stride + j] = bound[k] == best[k] ? TIE : INT32_MIN;
            continue;
        }
        int32_t m0 = INT32_MIN, m1 = INT32_MIN, m2 = INT32_MIN, m3 = INT32_MIN;
#pragma omp simd reduction(max : m0, m1, m2, m3)
        for (size_t i = s; i < e; i++) {
            int32_t a = p[i], x0 = b0[i] - a, x1 = b1[i] - a, x2 = b2[i] - a, x3 = b3[i] - a;
            m0 = x0 > m0 ? x0 : m0;
            m1 = x1 > m1 ? x1 : m1;
            m2 = x2 > m2 ? x2 : m2;
            m3 = x3 > m3 ? x3 : m3;
        }
        const int32_t mk[4] = {m0, m1, m2, m3};
        for (size_t k = 0; k < 4; k++) {
            bi[k * stride + j] = mk[k];
            best[k] = mk[k] > best[k] ? mk[k] : best[k];
        }
    }
    for (size_t k = 0; k < 4; k++) {
        const int32_t *b = p + d + k, *bk = bi + k * stride;
        at[k] = SIZE_MAX;
        for (size_t j = 0; j < nb && at[k] == SIZE_MAX; j++) {
            if (bk[j] != best[k] && bk[j] != TIE)
                continue;
            size_t e = j * PBLK + PBLK < m ? j * PBLK + PBLK : m;
            for (size_t i = j * PBLK; i < e; i++)
                if (b[i] - p[i] == best[k]) {
                    at[k] = i;
                    break;
                }
        }
        if (at[k] == SIZE_MAX) /* the seed itself was the first maximum, in no block that was scanned */
            at[k] = seed[k] < m ? seed[k] : m - 1;
        /* the shorter durations' last windows, after the common ones */
        for (size_t j = m; j + d + k <= L; j++)
            if (b[j] - p[j] > b[at[k]] - p[at[k]])
                at[k] = j;
    }
}

/* Double prefix sums: the largest window sum, and in bm[k] the largest of windows k·BLK to
 * (k + 1)·BLK - 1, so the caller rescans only the blocks that can hold the answer. */
CLONES static double scan_f64(const double *p, size_t m, size_t d, double *bm)
{
    const double *a = p, *b = p + d;
    double best = -INFINITY;
    for (size_t s = 0, k = 0; s < m; s += BLK, k++) {
        size_t e = s + BLK < m ? s + BLK : m;
        double mx = -INFINITY;
#pragma omp simd reduction(max : mx)
        for (size_t i = s; i < e; i++) {
            double x = b[i] - a[i];
            mx = x > mx ? x : mx;
        }
        bm[k] = mx;
        best = mx > best ? mx : best;
    }
    return best;
}

/* Knuth's TwoSum: s + e == a + b exactly. */
static void two_sum(double a, double b, double *s, double *e)
{
    double x = a + b, bv = x - a;
    *e = (a - (x - bv)) + (b - bv);
    *s = x;
}

/* Sum of x[i .. j-1] from the compensated prefix sums. */
static double window_sum(const cpd_mmp_ws *w, size_t i, size_t j)
{
    double s, e;
    two_sum(w->hi[j], -w->hi[i], &s, &e);
    return s + (e + (w->lo[j] - w->lo[i]));
}

/* The scale (from SCALES) at which every value of every segment is an integer count q with
 * q / scale == value to the last bit and every segment's total below 2^53; 0 when none is. */
static double find_scale(const cpd_session_segment *seg, size_t n_seg)
{
    for (size_t k = 0; k < NSCALES; k++) {
        double sc = SCALES[k];
        int ok = 1;
        for (size_t g = 0; g < n_seg && ok; g++) {
            const double *x = seg[g].value;
            double tot = 0;
            for (size_t i = 0; i < seg[g].length_s; i++) {
                double q = nearbyint(x[i] * sc);
                ok &= q / sc == x[i];
                tot += q;
            }
            ok &= tot < EXACT_MAX / 2;
        }
        if (ok)
            return sc;
    }
    return 0;
}

/* Whole-number counts of one segment: 32-bit prefix sums when they fit (returns 1), otherwise
 * exact double prefix sums in w->c (returns 0). */
static int prefix_counts(cpd_mmp_ws *w, const double *x, size_t L, double sc)
{
    double tot = 0;
    w->c[0] = 0;
    for (size_t i = 0; i < L; i++) {
        tot += nearbyint(x[i] * sc);
        w->c[i + 1] = tot;
    }
    if (tot > (double)INT32_MAX)
        return 0;
    for (size_t i = 0; i <= L; i++)
        w->p32[i] = (int32_t)w->c[i];
    return 1;
}

/* Values that are no integer count: centred prefix sums for the scan, compensated ones for the
 * candidates; returns the bound on the scan's rounding in a window sum. */
static double prefix_real(cpd_mmp_ws *w, const double *x, size_t L)
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
    double mean = (h + l) / (double)L, c = 0, cmax = 0, dmax = 0;
    w->c[0] = 0;
    for (size_t i = 0; i < L; i++) {
        double dv = x[i] - mean;
        c += dv;
        w->c[i + 1] = c;
        cmax = fabs(c) > cmax ? fabs(c) : cmax;
        dmax = fabs(dv) > dmax ? fabs(dv) : dmax;
    }
    /* each centred sum carries at most i roundings of size u·(|c| + |x - mean|); a window two */
    return 4.0 * ((double)L + 2) * DBL_EPSILON * (cmax + dmax + fabs(mean)) + DBL_MIN;
}

/* Best window of length d among the real-valued candidates within tol of the scan's maximum:
 * compared by their compensated sums, ties (within the sums' own rounding) to the earliest. */
static size_t refine_real(const cpd_mmp_ws *w, size_t m, size_t d, const double *bm, double top, double tol)
{
    const double *a = w->c, *b = w->c + d;
    size_t at = 0;
    double best = -INFINITY, tie = 8 * DBL_EPSILON * DBL_EPSILON * (fabs(w->hi[m + d - 1]) + 1);
    for (size_t s = 0, k = 0; s < m; s += BLK, k++) {
        if (bm[k] < top - tol)
            continue;
        size_t e = s + BLK < m ? s + BLK : m;
        for (size_t i = s; i < e; i++) {
            if (b[i] - a[i] < top - tol)
                continue;
            double v = window_sum(w, i, i + d);
            if (v > best + tie) {
                best = v;
                at = i;
            }
        }
    }
    return at;
}

static void put(cpd_mmp_ws *w, size_t p, double v, size_t start)
{
    if (v > w->val[p]) {
        w->val[p] = v;
        w->start[p] = (double)start;
    }
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
    double sc = find_scale(seg, n_seg);
    for (size_t k = 0; k < n_seg; k++) {
        size_t L = seg[k].length_s;
        if (L == 0)
            continue;
        size_t npk = cpd_mmp_points(L), s0 = seg[k].start_s;
        if (sc > 0 && prefix_counts(w, seg[k].value, L, sc)) {
            const int32_t *q = w->p32;
            size_t p = 0, at[4] = {0, 0, 0, 0};
            /* the fine grid four durations at a time, each seeded by the answer four seconds shorter */
            for (; p + 4 <= npk && p + 4 <= CPD_MMP_FINE_S; p += 4) {
                size_t d = p + 1, seed[4] = {at[0], at[1], at[2], at[3]};
                scan4_pruned(q, L, d, seed, w->bi, at);
                for (size_t j = 0; j < 4; j++)
                    put(w, p + j, (double)(q[at[j] + d + j] - q[at[j]]) / (sc * (double)(d + j)), s0 + at[j]);
            }
            size_t a1 = at[3];
            for (; p < npk; p++) {
                size_t d = cpd_mmp_duration_s(p);
                a1 = scan_pruned(q, L - d + 1, d, a1, w->bi);
                put(w, p, (double)(q[a1 + d] - q[a1]) / (sc * (double)d), s0 + a1);
            }
        } else if (sc > 0) {
            for (size_t p = 0; p < npk; p++) {
                size_t d = cpd_mmp_duration_s(p), m = L - d + 1, at = 0;
                double top = scan_f64(w->c, m, d, w->bm);
                while (w->bm[at / BLK] != top)
                    at += BLK;
                while (w->c[at + d] - w->c[at] != top)
                    at++;
                put(w, p, top / (sc * (double)d), s0 + at);
            }
        } else {
            double tol = prefix_real(w, seg[k].value, L);
            for (size_t p = 0; p < npk; p++) {
                size_t d = cpd_mmp_duration_s(p), m = L - d + 1;
                double top = scan_f64(w->c, m, d, w->bm);
                size_t at = refine_real(w, m, d, w->bm, top, tol);
                double v = window_sum(w, at, at + d) / (double)d;
                /* a tiny negative from rounding over all-zero data would read as "no effort" */
                put(w, p, v < 0 ? 0 : v, s0 + at);
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

/* The checks of a curve before it joins a season. */
static int curve_ok(const cpd_mmp_season *s, const cpd_mmp_curve *c)
{
    if (!s || !c || c->n > CPD_MMP_NMAX || (c->n > 0 && (!c->duration_s || !c->value || !c->start_s)))
        return 0;
    for (size_t i = 0; i < c->n; i++)
        if (c->duration_s[i] != (double)cpd_mmp_duration_s(i) || !isfinite(c->value[i]) || c->value[i] < 0 ||
            !isfinite(c->start_s[i]) || c->start_s[i] < 0)
            return 0;
    return 1;
}

/* Point i of the season becomes c's. */
static void take(cpd_mmp_season *s, const cpd_mmp_curve *c, size_t i, int64_t session, int date_days)
{
    s->duration_s[i] = c->duration_s[i];
    s->value[i] = c->value[i];
    s->start_s[i] = c->start_s[i];
    s->session[i] = session;
    s->date_days[i] = date_days;
}

static int add(cpd_mmp_season *s, const cpd_mmp_curve *c, int64_t session, int date_days, int by_date)
{
    if (!curve_ok(s, c))
        return CPD_EUSAGE;
    size_t common = c->n < s->n ? c->n : s->n;
    for (size_t i = 0; i < common; i++)
        if (c->value[i] > s->value[i] ||
            (by_date && c->value[i] == s->value[i] &&
             (date_days < s->date_days[i] || (date_days == s->date_days[i] && session < s->session[i]))))
            take(s, c, i, session, date_days);
    for (size_t i = common; i < c->n; i++)
        take(s, c, i, session, date_days);
    if (c->n > s->n)
        s->n = c->n;
    return CPD_OK;
}

int cpd_mmp_season_add(cpd_mmp_season *s, const cpd_mmp_curve *c, int64_t session, int date_days)
{
    return add(s, c, session, date_days, 0);
}

int cpd_mmp_season_merge(cpd_mmp_season *s, const cpd_mmp_curve *c, int64_t session, int date_days)
{
    return add(s, c, session, date_days, 1);
}
