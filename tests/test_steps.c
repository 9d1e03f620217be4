/* test_steps.c: stages of a step test from a recorded intensity, their steady states and the gain from
 * the stage means, on hand-made records whose answers can be checked by hand, against numpy at test
 * time (tests/ref/linefit.py: least squares), and every refusal. */
#include "cpdomain/gx.h"
#include "cpdomain/status.h"
#include "cpdomain/steps.h"
#include "pyref.h"

#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>
#include <cmocka.h>
#include "near.h"

/* A record every 2.5 s from onset: stages of step_s at first + inc k, then the recovery at 40 W. */
static size_t record(double *t, double *x, size_t cap, double first, double inc, double step_s, int n_stages,
                     double end_s, double rec_s)
{
    size_t n = 0;
    for (double u = 0.4; u <= end_s + rec_s && n < cap; u += 2.5) {
        t[n] = u;
        int k = (int)floor(u / step_s);
        x[n] = u > end_s ? 40.0 : first + inc * (k < n_stages ? k : n_stages - 1);
        n++;
    }
    return n;
}

static void stages_are_found_in_the_record(void **state)
{
    (void)state;
    double t[1200], x[1200];
    size_t n = record(t, x, 1200, 100, 25, 180, 8, 7 * 180 + 50, 120);
    cpd_steps_result r;
    assert_int_equal(cpd_steps_find(t, x, n, 7 * 180 + 50, CPD_STEPS_TOL_W, &r), CPD_OK);
    assert_int_equal(r.n, 8);
    assert_true(cpd_steps_is_steps(&r));
    assert_near(r.increment, 25, 1e-12);
    assert_near(r.step_s, 180, 2.5);
    for (size_t k = 0; k < r.n; k++) {
        assert_near(r.stage[k].intensity, 100 + 25.0 * (double)k, 1e-12);
        assert_int_equal(r.stage[k].complete, k + 1 < r.n); /* the last, 50 s, is cut short */
    }
    assert_true(r.stage[7].t_end_s <= 7 * 180 + 50 && r.stage[7].t_end_s > 7 * 180 + 47);
    /* a short dip (an unclipped shoe) inside stage 3 keeps it one stage */
    for (size_t i = 0; i < n; i++)
        if (t[i] > 400 && t[i] < 406)
            x[i] = 60;
    assert_int_equal(cpd_steps_find(t, x, n, 7 * 180 + 50, CPD_STEPS_TOL_W, &r), CPD_OK);
    assert_int_equal(r.n, 8);
    assert_near(r.stage[2].t_start_s, 360.4, 1e-9);
}

/* A measured power that wanders around its target (SD 4 W): the same stages. */
static void a_noisy_record_gives_the_same_stages(void **state)
{
    (void)state;
    double t[1200], x[1200];
    size_t n = record(t, x, 1200, 100, 25, 180, 8, 7 * 180 + 50, 120);
    uint64_t z = 0x1234567ULL;
    for (size_t i = 0; i < n; i++) {
        double s = 0; /* sum of 12 uniforms - 6: unit variance */
        for (int k = 0; k < 12; k++) {
            z = z * 6364136223846793005ULL + 1442695040888963407ULL;
            s += (double)(z >> 11) * 0x1.0p-53;
        }
        if (t[i] <= 7 * 180 + 50)
            x[i] += 4.0 * (s - 6.0);
    }
    cpd_steps_result r;
    assert_int_equal(cpd_steps_find(t, x, n, 7 * 180 + 50, CPD_STEPS_TOL_W, &r), CPD_OK);
    assert_near(r.noise, 4.0, 1.0);
    assert_int_equal(r.n, 8);
    assert_true(cpd_steps_is_steps(&r));
    for (size_t k = 0; k < r.n; k++)
        assert_near(r.stage[k].intensity, 100 + 25.0 * (double)k, 1.5);
}

static void a_slow_ramp_is_not_steps(void **state)
{
    (void)state;
    double t[600], x[600];
    size_t n = 0;
    for (double u = 0.3; u < 1200; u += 2.5) { /* 5 W/min: each 5-W band lasts a minute */
        t[n] = u;
        x[n++] = 50 + 5.0 * u / 60;
    }
    cpd_steps_result r;
    assert_int_equal(cpd_steps_find(t, x, n, 1200, CPD_STEPS_TOL_W, &r), CPD_OK);
    assert_int_equal(cpd_steps_is_steps(&r), 0);
    assert_true(r.within_rise > 0.5 * r.increment); /* it rises inside every band */
    n = 0;
    for (double u = 0.3; u < 600; u += 2.5) { /* 30 W/min: no stage at all */
        t[n] = u;
        x[n++] = 50 + 30.0 * u / 60;
    }
    assert_int_equal(cpd_steps_find(t, x, n, 600, CPD_STEPS_TOL_W, &r), CPD_OK);
    assert_int_equal(r.n, 0);
    assert_int_equal(cpd_steps_is_steps(&r), 0);
}

/* Steady states on a 1-s grid where VO2 is known: stage k holds 1000 + 250 k, except a drift of
 * 4 mL/min per s in stage 4 (not stable) and an alternating +-50 in stage 2 (SD by hand). */
static void steady_states_and_the_gain(void **state)
{
    (void)state;
    double t[1200], x[1200];
    size_t n = record(t, x, 1200, 100, 25, 180, 6, 6 * 180 - 3, 0);
    cpd_steps_result r;
    assert_int_equal(cpd_steps_find(t, x, n, 6 * 180, CPD_STEPS_TOL_W, &r), CPD_OK);
    assert_int_equal(r.n, 6);
    cpd_gx_series *g = cpd_gx_alloc(1080, CPD_GX_BIT(CPD_GX_VO2) | CPD_GX_BIT(CPD_GX_VCO2));
    assert_non_null(g);
    for (size_t i = 0; i < g->n; i++) {
        double u = (double)i;
        int k = (int)(u / 180);
        double v = 1000 + 250.0 * k;
        if (k == 1)
            v += (i % 2) ? 50 : -50;
        if (k == 3)
            v += 4.0 * (u - 540);
        g->t_s[i] = u;
        g->ch[CPD_GX_VO2][i] = v;
        g->ch[CPD_GX_VCO2][i] = 0.9 * v;
    }
    assert_int_equal(cpd_steps_means(&r, g), CPD_OK);
    assert_near(r.stage[0].vo2_ml_min, 1000, 1e-9);
    assert_near(r.stage[0].vco2_ml_min, 900, 1e-9);
    assert_int_equal(r.stage[0].stable, 1);
    assert_near(r.stage[1].vo2_ml_min, 1250, 1e-9);
    assert_near(r.stage[1].vo2_sd, 50 * sqrt(30.0 / 29.0), 1e-9); /* 30 values of +-50, n - 1 */
    assert_int_equal(r.stage[3].stable, 0);
    assert_near(r.stage[3].drift_ml_min, 4.0 * 30, 1e-9); /* two 30-s means 30 s apart */
    /* gain: below a GET of 1900 mL/min the first three stages (1000, 1250, 1500 at 100-150 W) */
    assert_int_equal(cpd_steps_gain(&r, 1900, 225), CPD_OK);
    assert_int_equal(r.gain_basis, CPD_STEPS_GAIN_BELOW_GET);
    assert_int_equal(r.gain_n, 3);
    char text[512];
    size_t len = 0;
    for (size_t k = 0; k < r.n; k++)
        if (r.stage[k].in_gain)
            len += (size_t)snprintf(text + len, sizeof text - len, "%.17g %.17g\n", r.stage[k].intensity,
                                    r.stage[k].vo2_ml_min);
    double ref[2];
    assert_int_equal(pyref_run("linefit.py", text, ref, 2, -1), 2); /* numpy.polyfit, degree 1 */
    assert_near(r.gain, 10.0, 1e-9);
    assert_near(r.gain, ref[0], 1e-9);
    assert_near(r.gain_icpt, ref[1], 1e-6);
    /* no GET: stages up to 80 % of 225 W = 180 W (100 to 175 W, four stages), said as such */
    assert_int_equal(cpd_steps_gain(&r, 0, 225), CPD_OK);
    assert_int_equal(r.gain_basis, CPD_STEPS_GAIN_BELOW_80PCT);
    assert_int_equal(r.gain_n, 4);
    /* a GET below the second stage leaves too few: the 80 % rule takes over */
    assert_int_equal(cpd_steps_gain(&r, 1100, 225), CPD_OK);
    assert_int_equal(r.gain_basis, CPD_STEPS_GAIN_BELOW_80PCT);
    /* VO2 of an intensity and back, linear between stages */
    double v = 0, p = 0;
    assert_int_equal(cpd_steps_at(&r, 112.5, 1, &v), CPD_OK);
    assert_near(v, 1125, 1e-9);
    assert_int_equal(cpd_steps_at(&r, 1125, 0, &p), CPD_OK);
    assert_near(p, 112.5, 1e-9);
    assert_int_equal(cpd_steps_at(&r, 90, 1, &v), CPD_ENODATA); /* no extrapolation */
    assert_int_equal(cpd_steps_at(&r, 9000, 0, &p), CPD_ENODATA);
    cpd_gx_free(g);
}

static void refusals(void **state)
{
    (void)state;
    double t[4] = {0, 1, 2, 3}, x[4] = {1, 1, 1, 1};
    cpd_steps_result r;
    assert_int_equal(cpd_steps_find(NULL, x, 4, 3, 5, &r), CPD_EUSAGE);
    assert_int_equal(cpd_steps_find(t, x, 4, 3, 0, &r), CPD_EUSAGE);
    assert_int_equal(cpd_steps_find(t, x, 4, 3, 5, &r), CPD_OK);
    assert_int_equal(r.n, 0); /* 3 s is no stage */
    assert_int_equal(cpd_steps_gain(&r, 2000, 300), CPD_ENODATA);
    assert_int_equal(r.gain_basis, CPD_STEPS_GAIN_NONE);
    double out;
    assert_int_equal(cpd_steps_at(&r, 1, 1, &out), CPD_ENODATA);
    assert_int_equal(cpd_steps_means(&r, NULL), CPD_EUSAGE);
    assert_int_equal(cpd_steps_is_steps(NULL), 0);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(stages_are_found_in_the_record),
        cmocka_unit_test(a_noisy_record_gives_the_same_stages),
        cmocka_unit_test(a_slow_ramp_is_not_steps),
        cmocka_unit_test(steady_states_and_the_gain),
        cmocka_unit_test(refusals),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
