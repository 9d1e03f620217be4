/* test_session.c: session cleaning by hand-computed cases: gap filling arithmetic, splits, spikes,
 * zeros kept, resampling of non-integer times, every refusal, a 24-h file, and the FNV-1a hash
 * against its published test vectors. */
#include "cpdomain/session.h"
#include "cpdomain/status.h"
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

/* Linear interpolation written out for the expectations. */
static double lerp(double ta, double va, double tb, double vb, double t)
{
    return va + (vb - va) * (t - ta) / (tb - ta);
}

static int clean(cpd_session_ws *w, const double *t, const double *v, size_t n, const cpd_session_opts *o,
                 cpd_session *s)
{
    char msg[CPD_MSG_MAX];
    return cpd_session_clean(w, t, v, n, o, s, msg);
}

static void one_hertz_unchanged(void **state)
{
    (void)state;
    /* a clean 1-Hz file with a non-zero time origin lands on the grid unchanged */
    const double t[6] = {3600, 3601, 3602, 3603, 3604, 3605};
    const double v[6] = {187.3, 0, 241.9, 0, 0, 312.6};
    cpd_session_ws *w = cpd_session_alloc(6);
    cpd_session s;
    assert_int_equal(clean(w, t, v, 6, NULL, &s), CPD_OK);
    assert_int_equal(s.error, CPD_SESSION_ERR_NONE);
    assert_int_equal(s.n_segments, 1);
    assert_int_equal(s.segments[0].start_s, 0);
    assert_int_equal(s.segments[0].length_s, 6);
    for (int i = 0; i < 6; i++)
        assert_true(s.segments[0].value[i] == v[i]); /* recorded zeros stay zeros */
    assert_true(s.value == s.segments[0].value);
    assert_true(s.elapsed_s == 5);
    assert_int_equal(s.grid_s, 6);
    assert_int_equal(s.recorded_s, 6);
    assert_int_equal(s.longest_s, 6);
    assert_int_equal(s.missing_s, 0);
    assert_int_equal(s.n_dropouts + s.filled_s + s.resampled_s + s.n_splits + s.n_spikes + s.n_merged, 0);
    assert_true(s.spike_limit == CPD_SESSION_SPIKE_POWER_W);
    cpd_session_free(w);
}

static void gap_filled(void **state)
{
    (void)state;
    /* seconds 4, 5, 6 missing between 213.7 W at 3 s and 291.3 W at 7 s: filled on the line */
    const double t[8] = {0, 1, 2, 3, 7, 8, 9, 10};
    const double v[8] = {150.2, 160.4, 170.9, 213.7, 291.3, 280.0, 0, 275.5};
    cpd_session_ws *w = cpd_session_alloc(2); /* grows */
    cpd_session s;
    assert_int_equal(clean(w, t, v, 8, NULL, &s), CPD_OK);
    assert_int_equal(s.n_segments, 1);
    assert_int_equal(s.segments[0].length_s, 11);
    const double *x = s.segments[0].value;
    assert_true(x[3] == 213.7 && x[7] == 291.3 && x[9] == 0);
    for (int k = 4; k <= 6; k++)
        assert_true(fabs(x[k] - lerp(3, 213.7, 7, 291.3, k)) <= 1e-12 * 300);
    assert_true(fabs(x[4] - (213.7 + (291.3 - 213.7) / 4)) <= 1e-12 * 300); /* by hand: 233.1 */
    assert_int_equal(s.n_dropouts, 1);
    assert_int_equal(s.dropout_s, 3);
    assert_int_equal(s.filled_s, 3);
    assert_int_equal(s.n_splits, 0);
    assert_int_equal(s.recorded_s, 11);
    cpd_session_free(w);
}

static void five_filled_six_split(void **state)
{
    (void)state;
    cpd_session_ws *w = cpd_session_alloc(8);
    cpd_session s;
    /* SPEC.md: up to 5 missing seconds are filled ... */
    const double t5[4] = {10, 11, 17, 18}, v[4] = {201.5, 222.5, 281.0, 275.25};
    assert_int_equal(clean(w, t5, v, 4, NULL, &s), CPD_OK);
    assert_int_equal(s.n_segments, 1);
    assert_int_equal(s.segments[0].length_s, 9);
    assert_int_equal(s.filled_s, 5);
    assert_int_equal(s.dropout_s, 5);
    assert_int_equal(s.n_splits, 0);
    assert_true(fabs(s.segments[0].value[6] - lerp(11, 222.5, 17, 281.0, 16)) <= 1e-12 * 300);
    /* ... 6 missing split the session: two segments, nothing filled, 6 s in no segment */
    const double t6[4] = {10, 11, 18, 19};
    assert_int_equal(clean(w, t6, v, 4, NULL, &s), CPD_OK);
    assert_int_equal(s.n_segments, 2);
    assert_int_equal(s.n_splits, 1);
    assert_int_equal(s.n_dropouts, 1);
    assert_int_equal(s.dropout_s, 6);
    assert_int_equal(s.filled_s, 0);
    assert_int_equal(s.segments[0].start_s, 0);
    assert_int_equal(s.segments[0].length_s, 2);
    assert_int_equal(s.segments[1].start_s, 8);
    assert_int_equal(s.segments[1].length_s, 2);
    assert_true(s.segments[1].value[0] == 281.0 && s.segments[1].value[1] == 275.25);
    assert_true(s.segments[1].value == s.segments[0].value + 2);
    assert_int_equal(s.grid_s, 10);
    assert_int_equal(s.recorded_s, 4);
    assert_int_equal(s.missing_s, 6);
    assert_int_equal(s.longest_s, 2);
    /* a long pause and a lone sample between two splits: a 1-s segment of its own */
    const double tp[5] = {0, 1, 400, 900, 901}, vp[5] = {180.5, 190.5, 0, 205.5, 210.5};
    assert_int_equal(clean(w, tp, vp, 5, NULL, &s), CPD_OK);
    assert_int_equal(s.n_segments, 3);
    assert_int_equal(s.n_splits, 2);
    assert_int_equal(s.segments[1].start_s, 400);
    assert_int_equal(s.segments[1].length_s, 1);
    assert_true(s.segments[1].value[0] == 0);
    assert_int_equal(s.segments[2].start_s, 900);
    assert_int_equal(s.missing_s, 902 - 5);
    cpd_session_free(w);
}

static void spikes(void **state)
{
    (void)state;
    cpd_session_ws *w = cpd_session_alloc(8);
    cpd_session s;
    /* a 3017 W spike at 3 s is dropped and its second filled from its neighbours */
    const double t[6] = {0, 1, 2, 3, 4, 5}, v[6] = {250.5, 262.5, 244.0, 3017.0, 256.0, 248.5};
    assert_int_equal(clean(w, t, v, 6, NULL, &s), CPD_OK);
    assert_int_equal(s.n_spikes, 1);
    assert_true(s.spike_max == 3017.0);
    assert_true(s.first_spike_s == 3);
    assert_int_equal(s.n_segments, 1);
    assert_true(s.segments[0].value[3] == (244.0 + 256.0) / 2);
    assert_int_equal(s.n_dropouts, 1);
    assert_int_equal(s.filled_s, 1);
    /* exactly at the limit is kept; a caller's ceiling replaces the default both ways */
    const double v2[6] = {2500.0, 2100.0, 2600.0, 240.0, 3300.0, 230.0};
    assert_int_equal(clean(w, t, v2, 6, NULL, &s), CPD_OK);
    assert_int_equal(s.n_spikes, 2);
    assert_true(s.spike_max == 3300.0 && s.first_spike_s == 2);
    assert_true(s.segments[0].value[0] == 2500.0);
    cpd_session_opts o;
    cpd_session_opts_init(&o, CPD_SESSION_POWER);
    o.ceiling = 2000;
    assert_int_equal(clean(w, t, v2, 6, &o, &s), CPD_OK);
    assert_int_equal(s.n_spikes, 4);
    assert_true(s.spike_limit == 2000);
    /* the first two seconds are gone: the segment starts at second 3 */
    assert_int_equal(s.segments[0].start_s, 3);
    assert_int_equal(s.missing_s, 3);
    o.ceiling = 3500; /* a sprinter's real 3300 W is kept */
    assert_int_equal(clean(w, t, v2, 6, &o, &s), CPD_OK);
    assert_int_equal(s.n_spikes, 0);
    assert_true(s.segments[0].value[4] == 3300.0);
    /* six spikes in a row leave a 7-s gap: a split, not a fill */
    const double t7[8] = {0, 1, 2, 3, 4, 5, 6, 7}, v7[8] = {200, 2600, 2700, 2800, 2900, 3000, 3100, 210};
    assert_int_equal(clean(w, t7, v7, 8, NULL, &s), CPD_OK);
    assert_int_equal(s.n_spikes, 6);
    assert_int_equal(s.n_splits, 1);
    assert_int_equal(s.n_segments, 2);
    /* speed: 12 m/s by default */
    cpd_session_opts_init(&o, CPD_SESSION_SPEED);
    const double vs[4] = {4.25, 11.9, 12.5, 5.5}, ts[4] = {0, 1, 2, 3};
    assert_int_equal(clean(w, ts, vs, 4, &o, &s), CPD_OK);
    assert_true(s.spike_limit == CPD_SESSION_SPIKE_SPEED_M_S);
    assert_int_equal(s.n_spikes, 1);
    assert_true(s.segments[0].value[1] == 11.9);
    assert_true(s.segments[0].value[2] == (11.9 + 5.5) / 2);
    /* nothing but spikes */
    const double vx[3] = {2600, 2700, 2800};
    assert_int_equal(clean(w, ts, vx, 3, NULL, &s), CPD_ENODATA);
    assert_int_equal(s.error, CPD_SESSION_ERR_NO_DATA);
    assert_int_equal(s.n_spikes, 3);
    cpd_session_free(w);
}

static void non_integer_times(void **state)
{
    (void)state;
    cpd_session_ws *w = cpd_session_alloc(0);
    cpd_session s;
    /* 1 Hz at a constant half-second offset: the grid starts at the first sample, so no change */
    const double th[4] = {0.5, 1.5, 2.5, 3.5}, v[4] = {201.3, 215.8, 0, 226.4};
    assert_int_equal(clean(w, th, v, 4, NULL, &s), CPD_OK);
    assert_int_equal(s.segments[0].length_s, 4);
    assert_int_equal(s.resampled_s, 0);
    for (int i = 0; i < 4; i++)
        assert_true(s.segments[0].value[i] == v[i]);
    /* jittered 1 Hz: seconds 1, 2 and 4 are interpolated, 0 and 3 are taken as recorded */
    const double tj[5] = {0, 0.97, 2.02, 3.0, 4.01}, vj[5] = {180.4, 196.2, 204.8, 211.1, 199.9};
    assert_int_equal(clean(w, tj, vj, 5, NULL, &s), CPD_OK);
    assert_int_equal(s.n_segments, 1);
    const double *x = s.segments[0].value;
    assert_int_equal(s.segments[0].length_s, 5);
    assert_true(x[0] == 180.4 && x[3] == 211.1);
    assert_true(fabs(x[1] - lerp(0.97, 196.2, 2.02, 204.8, 1)) <= 1e-12 * 300);
    assert_true(fabs(x[2] - lerp(0.97, 196.2, 2.02, 204.8, 2)) <= 1e-12 * 300);
    assert_true(fabs(x[4] - lerp(3.0, 211.1, 4.01, 199.9, 4)) <= 1e-12 * 300);
    assert_int_equal(s.resampled_s, 3);
    assert_int_equal(s.filled_s + s.n_dropouts, 0);
    /* faster than 1 Hz at irregular times: a linear signal is sampled exactly at whole seconds */
    const double tf[9] = {0, 0.3, 0.7, 1.1, 1.45, 1.9, 2.35, 2.8, 3.3};
    double vf[9];
    for (int i = 0; i < 9; i++)
        vf[i] = 150 + 37.5 * tf[i];
    assert_int_equal(clean(w, tf, vf, 9, NULL, &s), CPD_OK);
    assert_int_equal(s.segments[0].length_s, 4);
    for (int k = 0; k < 4; k++)
        assert_true(fabs(s.segments[0].value[k] - (150 + 37.5 * k)) <= 1e-12 * 300);
    assert_int_equal(s.resampled_s, 3);
    /* a 3.5-s gap at fractional times: 3, 4 and 5 filled, 6 resampled */
    const double tg[5] = {0, 1, 2, 5.5, 6.5}, vg[5] = {220.5, 231.5, 242.5, 205.0, 199.0};
    assert_int_equal(clean(w, tg, vg, 5, NULL, &s), CPD_OK);
    assert_int_equal(s.segments[0].length_s, 7);
    for (int k = 3; k <= 5; k++)
        assert_true(fabs(s.segments[0].value[k] - lerp(2, 242.5, 5.5, 205.0, k)) <= 1e-12 * 300);
    assert_true(fabs(s.segments[0].value[6] - 202.0) <= 1e-12 * 300); /* halfway 205 -> 199 */
    assert_int_equal(s.filled_s, 3);
    assert_int_equal(s.resampled_s, 1);
    assert_int_equal(s.n_dropouts, 1);
    assert_int_equal(s.dropout_s, 3);
    /* 6.4 s is more than 5 + 1: a split; the next segment starts at the first whole second 9 */
    const double ts[5] = {0, 1, 2, 8.4, 9.4}, vs[5] = {220.5, 231.5, 242.5, 205.0, 199.0};
    assert_int_equal(clean(w, ts, vs, 5, NULL, &s), CPD_OK);
    assert_int_equal(s.n_segments, 2);
    assert_int_equal(s.n_splits, 1);
    assert_int_equal(s.segments[1].start_s, 9);
    assert_int_equal(s.segments[1].length_s, 1);
    assert_true(fabs(s.segments[1].value[0] - lerp(8.4, 205.0, 9.4, 199.0, 9)) <= 1e-12 * 300);
    /* a lone sample at a fractional time between two splits covers no whole second */
    const double ti[6] = {0, 1, 2, 10.5, 20, 21}, vi[6] = {200, 210, 220, 230, 240, 250};
    assert_int_equal(clean(w, ti, vi, 6, NULL, &s), CPD_OK);
    assert_int_equal(s.n_segments, 2);
    assert_int_equal(s.n_splits, 2);
    assert_int_equal(s.n_isolated, 1);
    assert_int_equal(s.segments[1].start_s, 20);
    assert_int_equal(s.recorded_s, 5);
    assert_int_equal(s.missing_s, 22 - 5);
    cpd_session_free(w);
}

static void same_instant(void **state)
{
    (void)state;
    cpd_session_ws *w = cpd_session_alloc(4);
    cpd_session s;
    /* two samples at 1 s (one of them 0.4 µs late) are one instant: their mean */
    const double t[5] = {0, 1, 1, 1 + 4e-7, 2}, v[5] = {200.5, 212.25, 230.75, 219.5, 240.0};
    assert_int_equal(clean(w, t, v, 5, NULL, &s), CPD_OK);
    assert_int_equal(s.n_merged, 2);
    assert_int_equal(s.segments[0].length_s, 3);
    assert_true(fabs(s.segments[0].value[1] - (212.25 + 230.75 + 219.5) / 3) <= 1e-12 * 300);
    /* every sample at one instant spans no time */
    const double t1[3] = {7, 7, 7};
    assert_int_equal(clean(w, t1, v, 3, NULL, &s), CPD_ENODATA);
    assert_int_equal(s.error, CPD_SESSION_ERR_ONE_SAMPLE);
    cpd_session_free(w);
}

static void check_error(cpd_session_ws *w, const double *t, const double *v, size_t n, int rc,
                        cpd_session_error e, size_t idx, const char *words)
{
    cpd_session s;
    char msg[CPD_MSG_MAX];
    assert_int_equal(cpd_session_clean(w, t, v, n, NULL, &s, msg), rc);
    assert_int_equal(s.error, e);
    assert_int_equal(s.error_index, idx);
    assert_int_equal(s.n_segments, 0);
    assert_non_null(strstr(msg, words));
    assert_non_null(strstr(msg, cpd_session_error_text(e)));
    /* msg may be NULL */
    assert_int_equal(cpd_session_clean(w, t, v, n, NULL, &s, NULL), rc);
}

static void refusals(void **state)
{
    (void)state;
    cpd_session_ws *w = cpd_session_alloc(4);
    const double t[4] = {0, 1, 2, 1.5}, v[4] = {200, 210, NAN, 230};
    check_error(w, t, v, 4, CPD_EDATA, CPD_SESSION_ERR_VALUE_NONFINITE, 2, "sample 3:");
    const double v2[4] = {200, 210, 220, 230};
    check_error(w, t, v2, 4, CPD_EDATA, CPD_SESSION_ERR_BACKWARDS, 3,
                "sample 4: time runs backwards (1.5 s after 2 s)");
    const double tn[3] = {0, NAN, 2}, ti[3] = {0, 1, INFINITY}, vi[3] = {200, -INFINITY, 1};
    check_error(w, tn, v2, 3, CPD_EDATA, CPD_SESSION_ERR_TIME_NONFINITE, 1, "sample 2:");
    check_error(w, ti, v2, 3, CPD_EDATA, CPD_SESSION_ERR_TIME_NONFINITE, 2, "sample 3:");
    check_error(w, t, vi, 3, CPD_EDATA, CPD_SESSION_ERR_VALUE_NONFINITE, 1, "sample 2:");
    const double vneg[3] = {200, 210, -0.5};
    check_error(w, t, vneg, 3, CPD_EDATA, CPD_SESSION_ERR_NEGATIVE, 2, "(-0.5)");
    check_error(w, NULL, NULL, 0, CPD_ENODATA, CPD_SESSION_ERR_EMPTY, 0, "no samples");
    check_error(w, t, v2, 1, CPD_ENODATA, CPD_SESSION_ERR_ONE_SAMPLE, 0, "single sample");
    const double tl[2] = {0, CPD_SESSION_MAX_SPAN_S + 1};
    check_error(w, tl, v2, 2, CPD_EDATA, CPD_SESSION_ERR_TOO_LONG, 1, "7 days");
    const double tx[2] = {0, 1e300};
    check_error(w, tx, v2, 2, CPD_EDATA, CPD_SESSION_ERR_TOO_LONG, 1, "sample 2:");
    /* exactly 7 days is accepted: two 1-s segments far apart */
    cpd_session s;
    const double t7[2] = {0, CPD_SESSION_MAX_SPAN_S};
    assert_int_equal(clean(w, t7, v2, 2, NULL, &s), CPD_OK);
    assert_int_equal(s.n_segments, 2);
    assert_int_equal(s.segments[1].start_s, (size_t)CPD_SESSION_MAX_SPAN_S);

    /* caller mistakes */
    cpd_session_opts o;
    char msg[CPD_MSG_MAX];
    const double bad_ceiling[3] = {NAN, -1, INFINITY};
    for (int i = 0; i < 3; i++) {
        cpd_session_opts_init(&o, CPD_SESSION_POWER);
        o.ceiling = bad_ceiling[i];
        assert_int_equal(cpd_session_clean(w, t, v2, 3, &o, &s, msg), CPD_EUSAGE);
        assert_non_null(strstr(msg, "ceiling"));
    }
    cpd_session_opts_init(&o, CPD_SESSION_POWER);
    o.modality = (cpd_session_modality)7;
    assert_int_equal(cpd_session_clean(w, t, v2, 3, &o, &s, msg), CPD_EUSAGE);
    assert_int_equal(cpd_session_clean(NULL, t, v2, 3, NULL, &s, msg), CPD_EUSAGE);
    assert_int_equal(cpd_session_clean(w, NULL, v2, 3, NULL, &s, msg), CPD_EUSAGE);
    assert_int_equal(cpd_session_clean(w, t, NULL, 3, NULL, &s, msg), CPD_EUSAGE);

    for (int e = 0; e <= CPD_SESSION_NERRS; e++)
        assert_non_null(cpd_session_error_text((cpd_session_error)e));
    assert_string_equal(cpd_session_error_text(CPD_SESSION_NERRS), "unknown session error");
    cpd_session_free(w);
    cpd_session_free(NULL);
}

static void day_long(void **state)
{
    (void)state;
    /* 24 h at 1 Hz from a clock time, three 3-s dropouts and a 10-min stop */
    enum { N = 86400 };
    double *t = malloc(N * sizeof *t), *v = malloc(N * sizeof *v);
    assert_non_null(t);
    assert_non_null(v);
    rng r = {86400};
    size_t n = 0;
    for (size_t k = 0; k < N; k++) {
        if ((k >= 1000 && k < 1003) || (k >= 30000 && k < 30003) || (k >= 70000 && k < 70003) ||
            (k >= 50000 && k < 50600))
            continue;
        t[n] = 43200 + (double)k;
        v[n] = fabs(160 + 45 * rng_normal(&r));
        n++;
    }
    cpd_session_ws *w = cpd_session_alloc(16); /* grows from a small hint */
    cpd_session s;
    assert_int_equal(clean(w, t, v, n, NULL, &s), CPD_OK);
    assert_int_equal(s.n_segments, 2);
    assert_int_equal(s.segments[0].length_s, 50000);
    assert_int_equal(s.segments[1].start_s, 50600);
    assert_int_equal(s.segments[1].length_s, N - 50600);
    assert_int_equal(s.grid_s, N);
    assert_int_equal(s.recorded_s, N - 600);
    assert_int_equal(s.missing_s, 600);
    assert_int_equal(s.filled_s, 9);
    assert_int_equal(s.n_dropouts, 4);
    assert_int_equal(s.dropout_s, 609);
    assert_int_equal(s.n_splits, 1);
    assert_int_equal(s.longest_s, 50000);
    assert_true(s.elapsed_s == N - 1);
    /* every recorded sample is where it was, in the back-to-back array too */
    for (size_t i = 0; i < n; i++) {
        size_t k = (size_t)(t[i] - 43200);
        const double *x = k < 50000 ? s.segments[0].value + k : s.segments[1].value + (k - 50600);
        assert_true(*x == v[i]);
    }
    assert_true(s.value[50000] == s.segments[1].value[0]);
    free(t);
    free(v);
    cpd_session_free(w);
}

static void hash(void **state)
{
    (void)state;
    /* FNV-1a 64-bit test vectors (Fowler, Noll & Vo, the FNV reference test suite; from memory,
     * confirmed by the reference algorithm) */
    assert_true(cpd_session_hash(CPD_SESSION_HASH_INIT, "", 0) == 0xcbf29ce484222325ull);
    assert_true(cpd_session_hash(CPD_SESSION_HASH_INIT, "a", 1) == 0xaf63dc4c8601ec8cull);
    assert_true(cpd_session_hash(CPD_SESSION_HASH_INIT, "foobar", 6) == 0x85944171f73967e8ull);
    /* in pieces equals in one go; one changed byte changes it */
    const char file[] = "time_s,power_w\n0,212.5\n1,230.25\n";
    uint64_t whole = cpd_session_hash(CPD_SESSION_HASH_INIT, file, sizeof file - 1);
    uint64_t h = cpd_session_hash(CPD_SESSION_HASH_INIT, file, 10);
    h = cpd_session_hash(h, file + 10, sizeof file - 1 - 10);
    assert_true(h == whole);
    char other[sizeof file];
    memcpy(other, file, sizeof file);
    other[20] = '6';
    assert_true(cpd_session_hash(CPD_SESSION_HASH_INIT, other, sizeof file - 1) != whole);
}

int main(void)
{
    gsl_set_error_handler_off();
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(one_hertz_unchanged),
        cmocka_unit_test(gap_filled),
        cmocka_unit_test(five_filled_six_split),
        cmocka_unit_test(spikes),
        cmocka_unit_test(non_integer_times),
        cmocka_unit_test(same_instant),
        cmocka_unit_test(refusals),
        cmocka_unit_test(day_long),
        cmocka_unit_test(hash),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
