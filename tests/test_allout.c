/* test_allout.c: the 3-minute all-out test on synthetic power whose end power, work above it,
 * slope and variation are computed by hand; the all-out checks on paced, fading, stopped and
 * uneven tests; the session path; every refusal. End power as the mean of the final 30 s follows
 * Burnley, Doust & Vanhatalo 2006 Med Sci Sports Exerc 38:1995 (SPEC.md). */
#include "cpdomain/allout.h"
#include "cpdomain/session.h"
#include "cpdomain/status.h"

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
#include "rng.h"

/* Tolerance for sums of up to 180 values of a few hundred W: rounding is below 1e-10 J. */
#define TOL 1e-9

/* Fills p[from .. to-1] with w. */
static void fill(double *p, int from, int to, double w)
{
    for (int i = from; i < to; i++)
        p[i] = w;
}

static void brief_example(void **state)
{
    (void)state;
    /* constant 300 W for 150 s then 250 W: end power 250 W, work above = 50 W · 150 s */
    double p[180];
    fill(p, 0, 150, 300);
    fill(p, 150, 180, 250);
    cpd_allout_result r;
    char msg[CPD_MSG_MAX];
    assert_int_equal(cpd_allout_analyse(p, 180, 0, &r, msg), CPD_OK);
    assert_true(r.end_power_w == 250);
    assert_true(fabs(r.work_above_end_j - 50.0 * 150) <= TOL);
    assert_true(fabs(r.total_work_j - (300.0 * 150 + 250.0 * 30)) <= TOL);
    assert_true(fabs(r.mean_power_w - (300.0 * 150 + 250.0 * 30) / 180) <= TOL);
    assert_true(r.peak_power_w == 300 && r.peak_at_s == 0);
    /* 300 W is not 1.5 × 250 W: a paced effort, not all-out */
    assert_int_equal(r.flags, CPD_ALLOUT_FLAG_PACED);
    assert_int_equal(r.all_out, 0);
}

/* A stepped all-out profile: 912.4 W for 10 s, 503.7 W to 60 s, 347.9 W to 120 s, 291.6 W to
 * 150 s, then 278.3 W, with +-delta alternating over the final 30 s (+ first). */
static void stepped(double *p, double delta)
{
    fill(p, 0, 10, 912.4);
    fill(p, 10, 60, 503.7);
    fill(p, 60, 120, 347.9);
    fill(p, 120, 150, 291.6);
    for (int i = 150; i < 180; i++)
        p[i] = 278.3 + ((i - 150) % 2 == 0 ? delta : -delta);
}

static void all_out_profile(void **state)
{
    (void)state;
    double p[180];
    stepped(p, 0);
    cpd_allout_result r;
    assert_int_equal(cpd_allout_analyse(p, 180, 0, &r, NULL), CPD_OK);
    assert_true(fabs(r.end_power_w - 278.3) <= TOL);
    double above = 10 * (912.4 - 278.3) + 50 * (503.7 - 278.3) + 60 * (347.9 - 278.3) + 30 * (291.6 - 278.3);
    assert_true(fabs(r.work_above_end_j - above) <= TOL); /* 22186 J by hand */
    assert_true(fabs(above - 22186) <= 1e-9);
    assert_true(fabs(r.first30_mean_w - (10 * 912.4 + 20 * 503.7) / 30) <= TOL);
    assert_true(fabs(r.mean_120_150_w - 291.6) <= TOL);
    assert_true(fabs(r.end_slope_w_s) <= TOL);
    assert_true(r.has_end_cv && fabs(r.end_cv_pct) <= 1e-9);
    assert_true(r.peak_power_w == 912.4 && r.peak_at_s == 0);
    assert_int_equal(r.zero_s, 0);
    assert_int_equal(r.flags, 0);
    assert_int_equal(r.all_out, 1);

    /* +-6.1 W over the final 30 s: the mean is unchanged, the 15 upper seconds add 15 · 6.1 J,
     * CV = 6.1/278.3, and the least-squares slope of the alternation is -15·6.1/Sxx with
     * Sxx = sum of (i - 164.5)^2 over i = 150..179 = 2247.5 */
    stepped(p, 6.1);
    assert_int_equal(cpd_allout_analyse(p, 180, 0, &r, NULL), CPD_OK);
    assert_true(fabs(r.end_power_w - 278.3) <= TOL);
    assert_true(fabs(r.work_above_end_j - (above + 15 * 6.1)) <= TOL);
    assert_true(fabs(r.end_cv_pct - 100 * 6.1 / 278.3) <= 1e-9);
    assert_true(fabs(r.end_slope_w_s - (-15 * 6.1 / 2247.5)) <= 1e-12);
    assert_true(fabs(r.end_drift_w - 30 * (-15 * 6.1 / 2247.5)) <= 1e-10);
    assert_int_equal(r.flags, 0);

    /* +-40 W: CV 14.4 % > 10 %: uneven */
    stepped(p, 40);
    assert_int_equal(cpd_allout_analyse(p, 180, 0, &r, NULL), CPD_OK);
    assert_true(fabs(r.end_cv_pct - 100 * 40 / 278.3) <= 1e-9);
    assert_int_equal(r.flags, CPD_ALLOUT_FLAG_UNEVEN_END);
    assert_int_equal(r.all_out, 0);
}

static void paced_test(void **state)
{
    (void)state;
    /* held at 300 W and a 330 W finish: paced, peak at 150 s, and a rise at the end */
    double p[180];
    fill(p, 0, 150, 300);
    fill(p, 150, 180, 330);
    cpd_allout_result r;
    assert_int_equal(cpd_allout_analyse(p, 180, 0, &r, NULL), CPD_OK);
    assert_true(r.end_power_w == 330);
    assert_true(r.work_above_end_j == 0);
    assert_true(r.peak_power_w == 330 && r.peak_at_s == 150);
    assert_int_equal(r.flags, CPD_ALLOUT_FLAG_PACED | CPD_ALLOUT_FLAG_LATE_PEAK | CPD_ALLOUT_FLAG_END_RISE);
    /* just under 5 % above the 120-150 s mean is allowed; just over is not */
    fill(p, 150, 180, 300 * 1.049);
    assert_int_equal(cpd_allout_analyse(p, 180, 0, &r, NULL), CPD_OK);
    assert_false(r.flags & CPD_ALLOUT_FLAG_END_RISE);
    fill(p, 150, 180, 300 * 1.051);
    assert_int_equal(cpd_allout_analyse(p, 180, 0, &r, NULL), CPD_OK);
    assert_true(r.flags & CPD_ALLOUT_FLAG_END_RISE);
    /* a peak at 14 s is early enough, at 15 s it is late */
    double q[180];
    stepped(q, 0);
    q[14] = 1000;
    assert_int_equal(cpd_allout_analyse(q, 180, 0, &r, NULL), CPD_OK);
    assert_true(r.peak_at_s == 14 && r.flags == 0);
    q[14] = 503.7;
    q[15] = 1000;
    assert_int_equal(cpd_allout_analyse(q, 180, 0, &r, NULL), CPD_OK);
    assert_true(r.peak_at_s == 15 && r.flags == CPD_ALLOUT_FLAG_LATE_PEAK);
}

static void still_falling(void **state)
{
    (void)state;
    /* power still falling 1 W each second over the final 30 s: slope -1 W/s exactly, a drift of
     * 30 W against 5 % of end power (300 - 14.5 = 285.5 W, so 14.3 W): no plateau */
    double p[180];
    stepped(p, 0);
    for (int i = 150; i < 180; i++)
        p[i] = 300 - (i - 150);
    cpd_allout_result r;
    assert_int_equal(cpd_allout_analyse(p, 180, 0, &r, NULL), CPD_OK);
    assert_true(fabs(r.end_power_w - 285.5) <= TOL);
    assert_true(fabs(r.end_slope_w_s + 1) <= 1e-12);
    assert_true(fabs(r.end_drift_w + 30) <= 1e-10);
    assert_int_equal(r.flags, CPD_ALLOUT_FLAG_NO_PLATEAU);
}

static void stopped(void **state)
{
    (void)state;
    double p[180];
    stepped(p, 0);
    fill(p, 100, 105, 0); /* 5 s of zeros: a real zero, pedalling stopped */
    cpd_allout_result r;
    assert_int_equal(cpd_allout_analyse(p, 180, 0, &r, NULL), CPD_OK);
    assert_int_equal(r.zero_s, 5);
    assert_int_equal(r.flags, CPD_ALLOUT_FLAG_STOPPED);
    assert_true(fabs(r.work_above_end_j - (10 * (912.4 - 278.3) + 50 * (503.7 - 278.3) + 55 * (347.9 - 278.3) +
                                           30 * (291.6 - 278.3))) <= TOL);
    /* nothing at all: every number finite, no CV, and the flags say why */
    fill(p, 0, 180, 0);
    assert_int_equal(cpd_allout_analyse(p, 180, 0, &r, NULL), CPD_OK);
    assert_true(r.end_power_w == 0 && r.work_above_end_j == 0 && r.end_slope_w_s == 0);
    assert_int_equal(r.has_end_cv, 0);
    assert_true(r.end_cv_pct == 0);
    assert_int_equal(r.zero_s, 180);
    assert_int_equal(r.flags, CPD_ALLOUT_FLAG_STOPPED | CPD_ALLOUT_FLAG_PACED);
}

static void start_offset(void **state)
{
    (void)state;
    /* 95 s of warm-up at 120.5 W before the test and 40 s of cool-down after: same result */
    double p[95 + 180 + 40], q[180];
    fill(p, 0, 95, 120.5);
    stepped(q, 6.1);
    memcpy(p + 95, q, sizeof q);
    fill(p, 95 + 180, 95 + 180 + 40, 1500);
    cpd_allout_result a, b;
    assert_int_equal(cpd_allout_analyse(q, 180, 0, &a, NULL), CPD_OK);
    assert_int_equal(cpd_allout_analyse(p, 95 + 180 + 40, 95, &b, NULL), CPD_OK);
    assert_true(a.end_power_w == b.end_power_w && a.work_above_end_j == b.work_above_end_j);
    assert_true(b.peak_at_s == 0 && b.flags == 0);
}

static void from_session(void **state)
{
    (void)state;
    /* a file: 60 s of warm-up, a 4-s dropout, the test from 120 s, 3 s of cool-down, then a long
     * pause and more riding */
    enum { N = 400 };
    double t[N], v[N], q[180];
    stepped(q, 6.1);
    size_t n = 0;
    for (int k = 0; k < 303; k++) {
        if (k >= 40 && k < 44)
            continue; /* dropout, filled */
        t[n] = 1000 + k;
        v[n] = k < 120 ? 135.25 : k < 300 ? q[k - 120] : 101.0;
        n++;
    }
    for (int k = 0; k < 50; k++) {
        t[n] = 1000 + 400 + k;
        v[n] = 150;
        n++;
    }
    cpd_session_ws *w = cpd_session_alloc(N);
    cpd_session s;
    assert_int_equal(cpd_session_clean(w, t, v, n, NULL, &s, NULL), CPD_OK);
    assert_int_equal(s.n_segments, 2);
    cpd_allout_result a, b;
    char msg[CPD_MSG_MAX];
    assert_int_equal(cpd_allout_analyse(q, 180, 0, &a, NULL), CPD_OK);
    assert_int_equal(cpd_allout_session(&s, 120, &b, msg), CPD_OK);
    assert_true(a.end_power_w == b.end_power_w && a.work_above_end_j == b.work_above_end_j && b.flags == 0);
    /* the window must not run into the pause or past the file, nor start in a gap */
    assert_int_equal(cpd_allout_session(&s, 150, &b, msg), CPD_ENODATA);
    assert_non_null(strstr(msg, "from 150 s; the data break off in a gap after 153 s"));
    assert_int_equal(cpd_allout_session(&s, 350, &b, msg), CPD_ENODATA);
    assert_non_null(strstr(msg, "no power was recorded at 350 s"));
    assert_int_equal(cpd_allout_session(&s, 420, &b, msg), CPD_ENODATA);
    assert_non_null(strstr(msg, "from 420 s; the data end after 30 s"));
    assert_int_equal(cpd_allout_session(NULL, 0, &b, msg), CPD_EUSAGE);
    cpd_session_free(w);
}

static void refusals(void **state)
{
    (void)state;
    double p[200];
    fill(p, 0, 200, 250);
    cpd_allout_result r;
    char msg[CPD_MSG_MAX];
    /* too short from the start */
    assert_int_equal(cpd_allout_analyse(p, 179, 0, &r, msg), CPD_ENODATA);
    assert_non_null(strstr(msg, "179 s follow 0 s"));
    assert_int_equal(cpd_allout_analyse(p, 200, 21, &r, msg), CPD_ENODATA);
    assert_int_equal(cpd_allout_analyse(p, 200, 20, &r, msg), CPD_OK);
    assert_int_equal(cpd_allout_analyse(p, 200, 500, &r, msg), CPD_ENODATA);
    assert_non_null(strstr(msg, "0 s follow 500 s"));
    assert_int_equal(cpd_allout_analyse(NULL, 200, 0, &r, msg), CPD_EUSAGE);
    /* bad values inside the test are refused; outside it they are not read */
    p[37] = NAN;
    assert_int_equal(cpd_allout_analyse(p, 200, 0, &r, msg), CPD_EDATA);
    assert_non_null(strstr(msg, "second 37"));
    assert_int_equal(cpd_allout_analyse(p, 200, 38, &r, msg), CPD_ENODATA); /* only 162 s left */
    p[37] = -4;
    assert_int_equal(cpd_allout_analyse(p, 200, 0, &r, msg), CPD_EDATA);
    p[37] = INFINITY;
    assert_int_equal(cpd_allout_analyse(p, 200, 0, &r, NULL), CPD_EDATA);
    p[37] = 250;
    p[199] = NAN;
    assert_int_equal(cpd_allout_analyse(p, 200, 0, &r, msg), CPD_OK);
}

static void texts(void **state)
{
    (void)state;
    for (int b = 0; b < CPD_ALLOUT_NFLAGS; b++) {
        assert_non_null(cpd_allout_flag_name(1u << b));
        assert_non_null(cpd_allout_flag_text(1u << b));
        assert_true(strlen(cpd_allout_flag_text(1u << b)) > 40);
    }
    assert_null(cpd_allout_flag_name(1u << CPD_ALLOUT_NFLAGS));
    assert_null(cpd_allout_flag_text(0));
    assert_null(cpd_allout_flag_text(CPD_ALLOUT_FLAG_PACED | CPD_ALLOUT_FLAG_STOPPED));
    assert_string_equal(cpd_allout_flag_name(CPD_ALLOUT_FLAG_PACED), "paced");
    /* the caution names its sources (Vanhatalo, Doust & Burnley 2007) */
    const char *c = cpd_allout_caution();
    assert_non_null(strstr(c, "Wright"));
    assert_non_null(strstr(c, "Johnson"));
    assert_non_null(strstr(c, "28 %"));
}

/* Issue 12: the end power's interval covers the true end level: 200 simulated tests, an exponential
 * fall from 720 W to a true end level of 262.5 W with white noise of SD 14.5 W each second. */
static void end_power_interval_covers(void **state)
{
    (void)state;
    rng g = {.s = 0x9e3779b97f4a7c15ull};
    int hit = 0, n = 200;
    double p[180];
    for (int k = 0; k < n; k++) {
        for (int i = 0; i < 180; i++) {
            double e = rng_normal(&g);
            p[i] = 262.5 + 457.5 * exp(-i / 22.0) + 14.5 * e;
        }
        cpd_allout_result r;
        assert_int_equal(cpd_allout_analyse(p, 180, 0, &r, NULL), CPD_OK);
        double truth = 0;
        for (int i = 150; i < 180; i++)
            truth += (262.5 + 457.5 * exp(-i / 22.0)) / 30;
        hit += r.end_power_ci95[0] <= truth && truth <= r.end_power_ci95[1];
        assert_true(r.work_above_ci95[0] < r.work_above_end_j && r.work_above_end_j < r.work_above_ci95[1]);
    }
    printf("3-minute all-out end power: coverage %.1f %% (%d of %d simulated tests)\n", 100.0 * hit / n, hit, n);
    assert_true(hit >= 180 && hit <= 197);
}

int main(void)
{
    gsl_set_error_handler_off();
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(end_power_interval_covers),
        cmocka_unit_test(brief_example),
        cmocka_unit_test(all_out_profile),
        cmocka_unit_test(paced_test),
        cmocka_unit_test(still_falling),
        cmocka_unit_test(stopped),
        cmocka_unit_test(start_offset),
        cmocka_unit_test(from_session),
        cmocka_unit_test(refusals),
        cmocka_unit_test(texts),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
