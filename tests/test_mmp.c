/* test_mmp.c: mean-maximal curves against a brute-force numpy computation run now on seeded random
 * sessions with dropouts, splits and spikes (tests/ref/mmp_ref.py, which cleans the raw samples
 * itself), hand-computed curves, the season curve and every refusal. */
#include "cpdomain/mmp.h"
#include "cpdomain/session.h"
#include "cpdomain/status.h"
#include "pyref.h"
#include "rng.h"

#include <gsl/gsl_errno.h>
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <cmocka.h>

static cpd_session_segment seg(size_t start, const double *v, size_t n)
{
    cpd_session_segment g = {start, n, v};
    return g;
}

static void grid(void **state)
{
    (void)state;
    /* SPEC.md: every whole second to 3600 s, then the stated 60-s grid */
    assert_int_equal(cpd_mmp_duration_s(0), 1);
    assert_int_equal(cpd_mmp_duration_s(3599), 3600);
    assert_int_equal(cpd_mmp_duration_s(3600), 3660);
    assert_int_equal(cpd_mmp_duration_s(3601), 3720);
    assert_int_equal(cpd_mmp_points(0), 0);
    assert_int_equal(cpd_mmp_points(1), 1);
    assert_int_equal(cpd_mmp_points(3600), 3600);
    assert_int_equal(cpd_mmp_points(3659), 3600);
    assert_int_equal(cpd_mmp_points(3660), 3601);
    assert_int_equal(cpd_mmp_points(7200), 3660);
    assert_int_equal(CPD_MMP_NMAX, 13620);
    assert_int_equal(cpd_mmp_duration_s(CPD_MMP_NMAX - 1), (size_t)CPD_SESSION_MAX_SPAN_S);
    assert_int_equal(cpd_mmp_points(100000000), CPD_MMP_NMAX);
}

static void hand_computed(void **state)
{
    (void)state;
    cpd_mmp_ws *w = cpd_mmp_alloc(0); /* grows on first use */
    assert_non_null(w);
    /* one segment 101.5, 347.25, 212.0, 0, 289.75 placed at second 7 */
    const double v[5] = {101.5, 347.25, 212.0, 0, 289.75};
    cpd_session_segment g = seg(7, v, 5);
    cpd_mmp_curve c;
    assert_int_equal(cpd_mmp_segments(w, &g, 1, &c), CPD_OK);
    assert_int_equal(c.n, 5);
    const double want[5] = {347.25, (347.25 + 212.0) / 2, (101.5 + 347.25 + 212.0) / 3,
                            (347.25 + 212.0 + 0 + 289.75) / 4, (101.5 + 347.25 + 212.0 + 289.75) / 5};
    const double at[5] = {8, 8, 7, 8, 7};
    for (int i = 0; i < 5; i++) {
        assert_true(c.duration_s[i] == i + 1);
        assert_true(fabs(c.value[i] - want[i]) <= 1e-12 * want[i]);
        assert_true(c.start_s[i] == at[i]);
    }
    cpd_mmp_free(w);
}

static void no_effort_spans_a_split(void **state)
{
    (void)state;
    cpd_mmp_ws *w = cpd_mmp_alloc(16);
    /* 412.5 W for 2 s, a gap at second 2, then 3 s at 118.25 W: spanning the gap would give
     * (2·412.5 + 118.25)/3 = 314.4 W for 3 s; the only real 3-s effort is 118.25 W at second 3 */
    const double a[2] = {412.5, 412.5}, b[3] = {118.25, 118.25, 118.25};
    cpd_session_segment g[2] = {seg(0, a, 2), seg(3, b, 3)};
    cpd_mmp_curve c;
    assert_int_equal(cpd_mmp_segments(w, g, 2, &c), CPD_OK);
    assert_int_equal(c.n, 3);
    assert_true(c.value[0] == 412.5 && c.start_s[0] == 0);
    assert_true(c.value[1] == 412.5 && c.start_s[1] == 0);
    assert_true(c.value[2] == 118.25 && c.start_s[2] == 3);
    cpd_mmp_free(w);
}

static void ties_take_the_earliest(void **state)
{
    (void)state;
    /* all equal: every duration's best is the first window, in the first segment; 37 values
     * exercise the interleaved lanes and the tail of the scan */
    double v[37];
    for (int i = 0; i < 37; i++)
        v[i] = 233.125;
    cpd_mmp_ws *w = cpd_mmp_alloc(37);
    cpd_session_segment g[2] = {seg(5, v, 37), seg(50, v, 37)};
    cpd_mmp_curve c;
    assert_int_equal(cpd_mmp_segments(w, g, 2, &c), CPD_OK);
    assert_int_equal(c.n, 37);
    for (size_t i = 0; i < c.n; i++) {
        assert_true(c.value[i] == 233.125);
        assert_true(c.start_s[i] == 5);
    }
    /* a later equal maximum in another lane does not displace an earlier one */
    for (int i = 0; i < 37; i++)
        v[i] = 100 + (i % 5 == 1 || i % 5 == 3 ? 50 : 0); /* 150 at 1, 3, 6, 8, ... */
    assert_int_equal(cpd_mmp_segments(w, g, 1, &c), CPD_OK);
    assert_true(c.value[0] == 150 && c.start_s[0] == 6);
    assert_true(c.value[2] == (150 + 100 + 150) / 3.0 && c.start_s[2] == 6);
    /* equal maxima in the same lane (windows 4 and 8) */
    for (int i = 0; i < 37; i++)
        v[i] = 100;
    v[4] = v[8] = 175.5;
    assert_int_equal(cpd_mmp_segments(w, g, 1, &c), CPD_OK);
    assert_true(c.value[0] == 175.5 && c.start_s[0] == 5 + 4);
    /* and in the tail of the scan: 39 one-second windows, the last three after the unrolled part */
    double u[39];
    for (int i = 0; i < 39; i++)
        u[i] = i >= 37 ? 120 : 100;
    cpd_session_segment gu = seg(0, u, 39);
    assert_int_equal(cpd_mmp_segments(w, &gu, 1, &c), CPD_OK);
    assert_true(c.value[0] == 120 && c.start_s[0] == 37);
    assert_true(c.value[1] == 120 && c.start_s[1] == 37);
    assert_true(c.value[2] == 340 / 3.0 && c.start_s[2] == 36);
    cpd_mmp_free(w);
}

/* Runs tests/ref/mmp_exact.py on n_seg segments of integer counts q (value q / scale) and checks
 * the curve point by point: the same value to the last bit and the same start. */
static void exact_against_numpy(const size_t *start, const size_t *len, const int32_t *const *q, size_t n_seg,
                                int scale)
{
    size_t total = 0, longest = 0;
    for (size_t g = 0; g < n_seg; g++) {
        total += len[g];
        longest = len[g] > longest ? len[g] : longest;
    }
    size_t cap = 32 * (total + n_seg) + 64, used = 0;
    char *text = malloc(cap);
    double *vals = malloc(total * sizeof *vals);
    int maxout = 3 * (int)cpd_mmp_points(longest) + 1;
    double *ref = malloc((size_t)maxout * sizeof *ref);
    cpd_session_segment *gs = malloc(n_seg * sizeof *gs);
    assert_non_null(text);
    assert_non_null(vals);
    assert_non_null(ref);
    assert_non_null(gs);
    for (size_t g = 0, o = 0; g < n_seg; g++) {
        used += (size_t)snprintf(text + used, cap - used, "segment %zu %d\n", start[g], scale);
        gs[g] = seg(start[g], vals + o, len[g]);
        for (size_t i = 0; i < len[g]; i++, o++) {
            used += (size_t)snprintf(text + used, cap - used, "%d\n", (int)q[g][i]);
            vals[o] = (double)q[g][i] / scale; /* what a file's "4.37" parses to */
        }
    }
    /* numpy int64 brute force, run now (tests/ref/mmp_exact.py, numpy 1.24) */
    int got = pyref_run("mmp_exact.py", text, ref, maxout, -1);
    assert_int_equal(got, maxout);
    cpd_mmp_ws *w = cpd_mmp_alloc(0);
    cpd_mmp_curve c;
    assert_int_equal(cpd_mmp_segments(w, gs, n_seg, &c), CPD_OK);
    assert_int_equal(c.n, (size_t)ref[0]);
    size_t wrong_value = 0, wrong_start = 0;
    for (size_t i = 0; i < c.n; i++) {
        assert_true(c.duration_s[i] == ref[1 + 3 * i]);
        wrong_value += c.value[i] != ref[2 + 3 * i];
        wrong_start += c.start_s[i] != ref[3 + 3 * i];
    }
    /* 0 W difference and the earliest start at every point */
    assert_int_equal(wrong_value, 0);
    assert_int_equal(wrong_start, 0);
    cpd_mmp_free(w);
    free(gs);
    free(ref);
    free(vals);
    free(text);
}

static void exact_and_earliest(void **state)
{
    (void)state;
    /* whole watts over a narrow range, so that many windows tie: the earliest start among equal
     * windows is the rule of mmp.h (the scan before this test returned a later one at some
     * points); two segments, the second longer than an hour (coarse grid) */
    enum { A = 1900, B = 3790 };
    int32_t *a = malloc(A * sizeof *a), *b = malloc(B * sizeof *b);
    assert_non_null(a);
    assert_non_null(b);
    rng r = {0x71e5};
    for (int i = 0; i < A; i++)
        a[i] = 231 + (int32_t)(4 * rng_uniform(&r));
    for (int i = 0; i < B; i++)
        b[i] = 229 + (int32_t)(5 * rng_uniform(&r)) + (i % 600 < 20 ? 150 : 0);
    const size_t st[2] = {3, A + 40}, ln[2] = {A, B};
    const int32_t *const q[2] = {a, b};
    exact_against_numpy(st, ln, q, 2, 1);
    /* speeds to 0.01 m/s (scale 100), values 4.12 to 4.15 m/s */
    for (int i = 0; i < A; i++)
        a[i] = 412 + (int32_t)(4 * rng_uniform(&r));
    exact_against_numpy(st, ln, q, 1, 100);
    free(a);
    free(b);
}

static void all_zero(void **state)
{
    (void)state;
    /* recorded zeros are real: a session of coasting has a curve of zeros, not "no data" */
    const double z[4] = {0, 0, 0, 0};
    cpd_session_segment g = seg(0, z, 4);
    cpd_mmp_ws *w = cpd_mmp_alloc(4);
    cpd_mmp_curve c;
    assert_int_equal(cpd_mmp_segments(w, &g, 1, &c), CPD_OK);
    assert_int_equal(c.n, 4);
    for (size_t i = 0; i < 4; i++)
        assert_true(c.value[i] == 0 && c.start_s[i] == 0);
    cpd_mmp_free(w);
}

/* A raw 1-Hz session with integer times from t0: short dropouts (1-5 missing seconds, filled),
 * long gaps (6-40 missing, splits), spikes above 'spike' and the odd recorded zero. */
static size_t raw_session(rng *r, size_t seconds, double t0, double spike, size_t long_at, double p_long, double *t,
                          double *v)
{
    size_t n = 0;
    double clock = t0;
    for (size_t k = 0; k < seconds; k++) {
        double u = rng_uniform(r);
        if (k == long_at || (u < p_long && k > 0))
            clock += 6 + (double)(int)(35 * rng_uniform(r));
        else if (u < p_long + 0.02 && k > 0)
            clock += 1 + (double)(int)(5 * rng_uniform(r));
        double x = 210 + 85 * rng_normal(r);
        if (x < 0 || rng_uniform(r) < 0.01)
            x = 0;
        if (rng_uniform(r) < 0.002)
            x = spike + 1 + 900 * rng_uniform(r);
        t[n] = clock;
        v[n] = x;
        n++;
        clock += 1;
    }
    return n;
}

typedef struct {
    size_t seconds;
    double t0;
    double ceiling; /* 0: the default 2500 W */
    size_t long_at; /* where a forced split goes */
    double p_long;  /* chance of a long gap at each second */
} spec;

static void against_numpy(void **state)
{
    (void)state;
    /* four sessions: two ordinary, one with a segment of more than an hour (coarse grid), one with
     * a caller's ceiling of 1500 W instead of the default spike limit */
    const spec sp[4] = {
        {1600, 1000, 0, 700, 0.0015}, {950, 0, 1500, 400, 0.003}, {4500, 37, 0, 4380, 0}, {240, 5, 0, 120, 0}};
    enum { MAXN = 4600, MAXOUT = 4 * (3 * 3700 + 1) + 5 * 3700 + 1 };
    double *t[4], *v[4];
    size_t n[4];
    rng r = {0x5e55101};
    size_t text_cap = 4 * MAXN * 64 + 1024, len = 0;
    char *text = malloc(text_cap);
    double *ref = malloc(MAXOUT * sizeof *ref);
    assert_non_null(text);
    assert_non_null(ref);
    for (int s = 0; s < 4; s++) {
        t[s] = malloc(MAXN * sizeof *t[s]);
        v[s] = malloc(MAXN * sizeof *v[s]);
        assert_non_null(t[s]);
        assert_non_null(v[s]);
        double limit = sp[s].ceiling > 0 ? sp[s].ceiling : CPD_SESSION_SPIKE_POWER_W;
        n[s] = raw_session(&r, sp[s].seconds, sp[s].t0, limit, sp[s].long_at, sp[s].p_long, t[s], v[s]);
        len += (size_t)snprintf(text + len, text_cap - len, "session %d %d %.17g\n", 11 + s, 19000 + 3 * s, limit);
        for (size_t i = 0; i < n[s]; i++)
            len += (size_t)snprintf(text + len, text_cap - len, "%.17g %.17g\n", t[s][i], v[s][i]);
    }
    /* numpy brute force, run now (tests/ref/mmp_ref.py, numpy 1.24) */
    int got = pyref_run("mmp_ref.py", text, ref, MAXOUT, -1);
    assert_true(got > 0);

    cpd_session_ws *sw = cpd_session_alloc(0);
    cpd_mmp_ws *mw = cpd_mmp_alloc(0);
    cpd_mmp_season *season = cpd_mmp_season_alloc();
    assert_non_null(sw);
    assert_non_null(mw);
    assert_non_null(season);
    int k = 0;
    for (int s = 0; s < 4; s++) {
        cpd_session_opts o;
        cpd_session_opts_init(&o, CPD_SESSION_POWER);
        o.ceiling = sp[s].ceiling;
        cpd_session cs;
        char msg[CPD_MSG_MAX];
        assert_int_equal(cpd_session_clean(sw, t[s], v[s], n[s], &o, &cs, msg), CPD_OK);
        /* the data really have what the test is about */
        assert_true(cs.filled_s > 0);
        assert_true(cs.n_splits >= 1);
        assert_true(cs.n_spikes >= 1 || s == 3);
        if (s == 2)
            assert_true(cs.longest_s > 3660);
        cpd_mmp_curve c;
        assert_int_equal(cpd_mmp_session(mw, &cs, &c), CPD_OK);
        assert_true(k < got);
        assert_int_equal(c.n, (size_t)ref[k]);
        k++;
        for (size_t i = 0; i < c.n; i++, k += 3) {
            assert_true(c.duration_s[i] == ref[k]);
            /* both sides are exact sums to ~1e-15; the filled seconds are the same linear
             * interpolation written twice, so 1e-9 relative leaves room only for rounding */
            assert_true(fabs(c.value[i] - ref[k + 1]) <= 1e-9 * fabs(ref[k + 1]));
            assert_true(c.start_s[i] == ref[k + 2]);
        }
        assert_int_equal(cpd_mmp_season_add(season, &c, 11 + s, 19000 + 3 * s), CPD_OK);
    }
    assert_int_equal(season->n, (size_t)ref[k]);
    k++;
    for (size_t i = 0; i < season->n; i++, k += 5) {
        assert_true(season->duration_s[i] == ref[k]);
        assert_true(fabs(season->value[i] - ref[k + 1]) <= 1e-9 * fabs(ref[k + 1]));
        assert_true(season->start_s[i] == ref[k + 2]);
        assert_true(season->session[i] == (int64_t)ref[k + 3]);
        assert_true(season->date_days[i] == (int)ref[k + 4]);
    }
    assert_int_equal(k, got);
    cpd_mmp_season_free(season);
    cpd_mmp_free(mw);
    cpd_session_free(sw);
    for (int s = 0; s < 4; s++) {
        free(t[s]);
        free(v[s]);
    }
    free(ref);
    free(text);
}

static void workspace_reuse(void **state)
{
    (void)state;
    /* a long segment, then a short one through the same workspace, equals a fresh workspace */
    enum { LONG = 5000, SHORT = 300 };
    double *x = malloc(LONG * sizeof *x);
    assert_non_null(x);
    rng r = {77};
    for (int i = 0; i < LONG; i++)
        x[i] = 180 + 60 * rng_uniform(&r);
    cpd_mmp_ws *w = cpd_mmp_alloc(10), *fresh = cpd_mmp_alloc(SHORT);
    cpd_session_segment gl = seg(0, x, LONG), gs = seg(4, x + 1234, SHORT);
    cpd_mmp_curve c, f;
    assert_int_equal(cpd_mmp_segments(w, &gl, 1, &c), CPD_OK);
    assert_int_equal(c.n, cpd_mmp_points(LONG));
    /* in one segment of values >= 0 extending the best window never loses work, so the best work
     * never falls as the duration grows (the best mean can: 5, 0, 5) */
    for (size_t i = 1; i < c.n; i++)
        assert_true(c.value[i] * c.duration_s[i] >= c.value[i - 1] * c.duration_s[i - 1] * (1 - 1e-12));
    assert_int_equal(cpd_mmp_segments(w, &gs, 1, &c), CPD_OK);
    assert_int_equal(cpd_mmp_segments(fresh, &gs, 1, &f), CPD_OK);
    assert_int_equal(c.n, SHORT);
    assert_int_equal(f.n, SHORT);
    for (size_t i = 0; i < SHORT; i++) {
        assert_true(c.value[i] == f.value[i]);
        assert_true(c.start_s[i] == f.start_s[i]);
        assert_true(c.start_s[i] >= 4);
    }
    cpd_mmp_free(w);
    cpd_mmp_free(fresh);
    free(x);
}

static void season_rules(void **state)
{
    (void)state;
    const double d[4] = {1, 2, 3, 4};
    const double a_v[3] = {512.5, 401.25, 377.0}, a_s[3] = {10, 11, 11};
    const double b_v[4] = {498.0, 401.25, 390.5, 350.75}, b_s[4] = {3, 4, 5, 5};
    cpd_mmp_curve a = {3, d, a_v, a_s}, b = {4, d, b_v, b_s};
    cpd_mmp_season *s = cpd_mmp_season_alloc();
    assert_non_null(s);
    assert_int_equal(s->n, 0);
    assert_int_equal(cpd_mmp_season_add(s, &a, 41, 20100), CPD_OK);
    assert_int_equal(cpd_mmp_season_add(s, &b, 42, 20107), CPD_OK);
    assert_int_equal(s->n, 4);
    /* 1 s: a is higher; 2 s: equal, the session added first keeps it; 3 s: b higher; 4 s: only b */
    assert_true(s->value[0] == 512.5 && s->session[0] == 41 && s->date_days[0] == 20100 && s->start_s[0] == 10);
    assert_true(s->value[1] == 401.25 && s->session[1] == 41 && s->start_s[1] == 11);
    assert_true(s->value[2] == 390.5 && s->session[2] == 42 && s->date_days[2] == 20107 && s->start_s[2] == 5);
    assert_true(s->value[3] == 350.75 && s->session[3] == 42);
    for (int i = 0; i < 4; i++)
        assert_true(s->duration_s[i] == i + 1);

    /* damaged stored curves are refused and leave the season as it was */
    const double bad_d[3] = {1, 2, 4}, neg[3] = {600, -1, 300}, nanv[3] = {600, NAN, 300}, bad_s[3] = {0, -3, 0};
    const double inf_s[3] = {0, INFINITY, 0}, inf_v[3] = {INFINITY, 1, 1};
    cpd_mmp_curve bad[6] = {{3, bad_d, a_v, a_s}, {3, d, neg, a_s},   {3, d, nanv, a_s},
                            {3, d, a_v, bad_s},   {3, d, a_v, inf_s}, {3, d, inf_v, a_s}};
    for (int i = 0; i < 6; i++)
        assert_int_equal(cpd_mmp_season_add(s, &bad[i], 99, 1), CPD_EUSAGE);
    cpd_mmp_curve too_long = {CPD_MMP_NMAX + 1, d, a_v, a_s}, null_arr = {3, d, NULL, a_s};
    assert_int_equal(cpd_mmp_season_add(s, &too_long, 99, 1), CPD_EUSAGE);
    assert_int_equal(cpd_mmp_season_add(s, &null_arr, 99, 1), CPD_EUSAGE);
    assert_int_equal(cpd_mmp_season_add(s, NULL, 99, 1), CPD_EUSAGE);
    assert_int_equal(cpd_mmp_season_add(NULL, &a, 99, 1), CPD_EUSAGE);
    assert_int_equal(s->n, 4);
    assert_true(s->value[0] == 512.5 && s->session[0] == 41);
    assert_true(s->value[2] == 390.5 && s->session[2] == 42);

    /* an empty curve changes nothing; reset empties */
    cpd_mmp_curve empty = {0, NULL, NULL, NULL};
    assert_int_equal(cpd_mmp_season_add(s, &empty, 7, 7), CPD_OK);
    assert_int_equal(s->n, 4);
    cpd_mmp_season_reset(s);
    assert_int_equal(s->n, 0);
    assert_int_equal(cpd_mmp_season_add(s, &b, 42, 20107), CPD_OK);
    assert_true(s->value[0] == 498.0 && s->session[0] == 42);
    cpd_mmp_season_free(s);
    cpd_mmp_season_free(NULL);
}

static void merge_in_any_order(void **state)
{
    (void)state;
    /* five curves with many equal points, dates out of id order: merged in every rotation of the
     * order they equal the season added in date (then id) order */
    enum { K = 5, P = 40 };
    double d[P], v[K][P], st[K][P];
    const int64_t id[K] = {14, 11, 12, 15, 13};
    const int date[K] = {20105, 20101, 20101, 20099, 20110};
    rng r = {0x3e46e};
    for (int i = 0; i < P; i++)
        d[i] = i + 1;
    for (int k = 0; k < K; k++)
        for (int i = 0; i < P; i++) {
            v[k][i] = 200 + (int)(3 * rng_uniform(&r)); /* few values: ties everywhere */
            st[k][i] = k * 100 + i;
        }
    const size_t n[K] = {P, P - 7, P, P - 3, P - 12};
    const int order[K] = {3, 1, 2, 0, 4}; /* by date, then id */
    cpd_mmp_season *want = cpd_mmp_season_alloc(), *got = cpd_mmp_season_alloc();
    assert_non_null(want);
    assert_non_null(got);
    for (int j = 0; j < K; j++) {
        int k = order[j];
        cpd_mmp_curve c = {n[k], d, v[k], st[k]};
        assert_int_equal(cpd_mmp_season_add(want, &c, id[k], date[k]), CPD_OK);
    }
    for (int rot = 0; rot < K; rot++) {
        cpd_mmp_season_reset(got);
        for (int j = 0; j < K; j++) {
            int k = (j + rot) % K;
            cpd_mmp_curve c = {n[k], d, v[k], st[k]};
            assert_int_equal(cpd_mmp_season_merge(got, &c, id[k], date[k]), CPD_OK);
        }
        assert_int_equal(got->n, want->n);
        for (size_t i = 0; i < got->n; i++) {
            assert_true(got->value[i] == want->value[i]);
            assert_true(got->session[i] == want->session[i]);
            assert_true(got->date_days[i] == want->date_days[i]);
            assert_true(got->start_s[i] == want->start_s[i]);
        }
    }
    cpd_mmp_curve bad = {2, d, (const double[]){1, NAN}, st[0]};
    assert_int_equal(cpd_mmp_season_merge(got, &bad, 1, 1), CPD_EUSAGE);
    cpd_mmp_season_free(want);
    cpd_mmp_season_free(got);
}

static void refusals(void **state)
{
    (void)state;
    cpd_mmp_ws *w = cpd_mmp_alloc(8);
    cpd_mmp_curve c;
    const double ok[3] = {100, 200, 300}, nanv[3] = {100, NAN, 300}, neg[3] = {100, -0.5, 300};
    const double infv[3] = {100, INFINITY, 300};
    cpd_session_segment g = seg(0, ok, 3);
    assert_int_equal(cpd_mmp_segments(NULL, &g, 1, &c), CPD_EUSAGE);
    assert_int_equal(c.n, 0);
    assert_int_equal(cpd_mmp_segments(w, NULL, 1, &c), CPD_EUSAGE);
    assert_int_equal(cpd_mmp_segments(w, &g, 0, &c), CPD_ENODATA);
    cpd_session_segment zero = seg(0, ok, 0);
    assert_int_equal(cpd_mmp_segments(w, &zero, 1, &c), CPD_ENODATA);
    cpd_session_segment bad[3] = {seg(0, nanv, 3), seg(0, neg, 3), seg(0, infv, 3)};
    for (int i = 0; i < 3; i++)
        assert_int_equal(cpd_mmp_segments(w, &bad[i], 1, &c), CPD_EUSAGE);
    cpd_session_segment overlap[2] = {seg(10, ok, 3), seg(12, ok, 3)};
    assert_int_equal(cpd_mmp_segments(w, overlap, 2, &c), CPD_EUSAGE);
    cpd_session_segment unordered[2] = {seg(10, ok, 3), seg(2, ok, 3)};
    assert_int_equal(cpd_mmp_segments(w, unordered, 2, &c), CPD_EUSAGE);
    cpd_session_segment huge = seg(0, ok, (size_t)CPD_SESSION_MAX_SPAN_S + 1);
    assert_int_equal(cpd_mmp_segments(w, &huge, 1, &c), CPD_EUSAGE);
    cpd_session_segment nullv = seg(0, NULL, 3);
    assert_int_equal(cpd_mmp_segments(w, &nullv, 1, &c), CPD_EUSAGE);
    assert_int_equal(cpd_mmp_session(w, NULL, &c), CPD_EUSAGE);
    /* adjacent segments (no second between) are allowed: the caller split them on purpose */
    cpd_session_segment adjacent[2] = {seg(0, ok, 3), seg(3, ok, 3)};
    assert_int_equal(cpd_mmp_segments(w, adjacent, 2, &c), CPD_OK);
    assert_int_equal(c.n, 3);
    assert_true(c.value[2] == 200 && c.start_s[2] == 0);
    cpd_mmp_free(w);
    cpd_mmp_free(NULL);
}

int main(void)
{
    gsl_set_error_handler_off();
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(grid),
        cmocka_unit_test(hand_computed),
        cmocka_unit_test(no_effort_spans_a_split),
        cmocka_unit_test(ties_take_the_earliest),
        cmocka_unit_test(exact_and_earliest),
        cmocka_unit_test(all_zero),
        cmocka_unit_test(against_numpy),
        cmocka_unit_test(workspace_reuse),
        cmocka_unit_test(season_rules),
        cmocka_unit_test(merge_in_any_order),
        cmocka_unit_test(refusals),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
