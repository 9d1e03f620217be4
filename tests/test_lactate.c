/* test_lactate.c: lactate thresholds on hand-checkable stage data, the cubic and Dmax against numpy
 * computed at test time (tests/ref/dmax.py), and every refusal. */
#include "cpdomain/lactate.h"
#include "cpdomain/status.h"
#include "pyref.h"

#include <gsl/gsl_errno.h>
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <string.h>
#include <cmocka.h>
#include "near.h"
#include "rng.h"


/* Every double of a result is finite (the "never NaN" rule). */
static void assert_finite(const cpd_lactate_result *r)
{
    const cpd_lactate_value *v[4] = {&r->lt1, &r->dmax, &r->dmax_mod, &r->obla};
    for (int k = 0; k < 4; k++) {
        assert_true(isfinite(v[k]->intensity) && isfinite(v[k]->lactate_mmol_l) && isfinite(v[k]->hr_bpm));
        if (v[k]->status == CPD_LACTATE_NOT_FOUND) {
            assert_int_not_equal(v[k]->reason, CPD_LACTATE_R_NONE);
            assert_true(v[k]->why[0] != '\0');
            assert_near(v[k]->intensity, 0, 0);
        }
    }
    const double w[] = {r->cubic[0], r->cubic[1], r->cubic[2], r->cubic[3], r->dmax_line[0], r->dmax_line[1],
                        r->dmax_mod_line[0], r->dmax_mod_line[1], r->loglog.s1, r->loglog.s2, r->loglog.b1,
                        r->loglog.b2, r->loglog.x_cross, r->loglog.y_cross, r->loglog.z};
    for (size_t i = 0; i < sizeof w / sizeof w[0]; i++)
        assert_true(isfinite(w[i]));
}

/* Stages on an exact cubic: la = 1 + 2 u^3 with u = (x - 100) / 200, x = 100..300 W.
 * Values: 1, 1.03125, 1.25, 1.84375, 3. The least-squares cubic is the curve itself.
 * Dmax (by hand): the line through (100, 1) and (300, 3) has slope 0.01 per W; la' = 0.03 u^2 per W,
 * so 0.03 u^2 = 0.01, u = 1/sqrt(3), x = 100 + 200/sqrt(3) = 215.470 W, la = 1 + 2/(3 sqrt 3) = 1.38490.
 * Modified Dmax: rises 0.031, 0.219, 0.594: the first above 0.4 is 200 -> 250 W, so the line starts at
 * (200, 1.25) and ends at (300, 3): slope 0.0175, 0.03 u^2 = 0.0175, u = 0.763763, x = 252.753 W.
 * HR 110, 124, ..., 166 (14 per stage): at 215.470 W, 138 + 14 * 15.470 / 50 = 142.332 beats/min. */
static void dmax_on_an_exact_cubic(void **state)
{
    (void)state;
    const double x[5] = {100, 150, 200, 250, 300};
    double la[5];
    for (int i = 0; i < 5; i++) {
        double u = (x[i] - 100) / 200;
        la[i] = 1 + 2 * u * u * u;
    }
    const double hr[5] = {110, 124, 138, 152, 166};
    cpd_lactate_result r;
    char msg[CPD_MSG_MAX];
    assert_int_equal(cpd_lactate_analyse(x, la, hr, 5, &r, msg), CPD_OK);
    assert_finite(&r);
    assert_int_equal(r.n, 5);
    assert_int_equal(r.has_cubic, 1);
    /* the SVD reproduces an exact cubic to ~1e-12 relative at these scales */
    const double c[4] = {1 - 2 * 0.125, 2 * 3 * 0.25 / 200, -2 * 3 * 0.5 / 40000, 2 / 8e6};
    for (int k = 0; k < 4; k++)
        assert_near(r.cubic[k], c[k], 1e-9 * fabs(c[k]));
    assert_int_equal(r.dmax.status, CPD_LACTATE_FOUND);
    assert_near(r.dmax.intensity, 100 + 200 / sqrt(3), 1e-6);
    assert_near(r.dmax.lactate_mmol_l, 1 + 2 / (3 * sqrt(3)), 1e-9);
    assert_near(r.dmax_line[1], 0.01, 1e-12);
    assert_near(r.dmax_line[0], 0, 1e-10);
    assert_int_equal(r.dmax.has_hr, 1);
    assert_near(r.dmax.hr_bpm, 138 + 14 * (200 / sqrt(3) - 100) / 50, 1e-6);
    assert_int_equal(r.mod_start, 2);
    assert_int_equal(r.dmax_mod.status, CPD_LACTATE_FOUND);
    assert_near(r.dmax_mod.intensity, 100 + 200 * sqrt(0.0175 / 0.03), 1e-6);
    assert_near(r.dmax_mod_line[1], 0.0175, 1e-12);
    assert_near(r.dmax_mod.hr_bpm, 152 + 14 * (200 * sqrt(0.0175 / 0.03) - 150) / 50, 1e-6);
    assert_true(r.dmax_mod.intensity > r.dmax.intensity);
    /* 3 mmol/L at most: no OBLA */
    assert_int_equal(r.obla.status, CPD_LACTATE_NOT_FOUND);
    assert_int_equal(r.obla.reason, CPD_LACTATE_R_NOT_REACHED);
    assert_near(r.obla.intensity, 0, 0);
    assert_string_equal(msg, "");
}

/* Log-log on exact power laws: la = 1.2 for 100-160 W, la = 1.2 (x/180)^3 for 200-320 W.
 * In logs: a flat line at ln 1.2 and a line of slope 3 through (ln 180, ln 1.2): they cross at
 * 180 W exactly (Beaver, Wasserman & Whipp 1985). Only the split after 160 W fits both segments
 * exactly (RSS 0), so it is the one chosen.
 * OBLA (by hand): 240 W gives 1.2 (4/3)^3 = 2.8444, 280 W gives 1.2 (14/9)^3 = 4.5169, so
 * 240 + 40 (4 - 2.8444) / (4.5169 - 2.8444) = 267.64 W. */
static void loglog_and_obla_by_hand(void **state)
{
    (void)state;
    const double x[8] = {100, 120, 140, 160, 200, 240, 280, 320};
    double la[8];
    for (int i = 0; i < 8; i++)
        la[i] = x[i] < 180 ? 1.2 : 1.2 * pow(x[i] / 180, 3);
    cpd_lactate_result r;
    assert_int_equal(cpd_lactate_analyse(x, la, NULL, 8, &r, NULL), CPD_OK);
    assert_int_equal(r.has_loglog, 1);
    assert_int_equal(r.loglog.split, 4);
    assert_near(r.loglog.s1, 0, 1e-12);
    assert_near(r.loglog.s2, 3, 1e-10);
    assert_int_equal(r.lt1.status, CPD_LACTATE_FOUND);
    assert_near(r.lt1.intensity, 180, 1e-8);
    assert_near(r.lt1.lactate_mmol_l, 1.2, 1e-10);
    assert_int_equal(r.lt1.has_hr, 0);
    double l240 = 1.2 * pow(240.0 / 180, 3), l280 = 1.2 * pow(280.0 / 180, 3);
    assert_int_equal(r.obla.status, CPD_LACTATE_FOUND);
    assert_near(r.obla.intensity, 240 + 40 * (4 - l240) / (l280 - l240), 1e-10);
    assert_near(r.obla.intensity, 267.64, 0.005);
    assert_near(r.obla.lactate_mmol_l, 4, 0);
}

/* OBLA and HR by hand: 240 W 2.8 and 270 W 4.6 mmol/L bracket 4: 240 + 30 (1.2 / 1.8) = 260 W;
 * HR 156 and 168 there: 156 + 12 (2/3) = 164 beats/min (Sjodin & Jacobs 1981: the 4 mmol/L level).
 * Modified Dmax starts at 180 W (1.3 -> 1.9 is the first rise above 0.4). The cubic, Dmax and
 * modified Dmax against numpy's polyfit and roots, computed now. */
static void obla_hr_and_numpy_dmax(void **state)
{
    (void)state;
    const double x[6] = {150, 180, 210, 240, 270, 300};
    const double la[6] = {1.1, 1.3, 1.9, 2.8, 4.6, 7.2};
    const double hr[6] = {120, 132, 144, 156, 168, 180};
    cpd_lactate_result r;
    assert_int_equal(cpd_lactate_analyse(x, la, hr, 6, &r, NULL), CPD_OK);
    assert_int_equal(r.obla.status, CPD_LACTATE_FOUND);
    assert_near(r.obla.intensity, 260, 1e-10);
    assert_near(r.obla.hr_bpm, 164, 1e-10);
    assert_int_equal(r.mod_start, 1);

    char text[512] = "";
    for (int i = 0; i < 6; i++)
        snprintf(text + strlen(text), sizeof text - strlen(text), "%.17g %.17g\n", x[i], la[i]);
    double ref[6];
    assert_int_equal(pyref_run("dmax.py", text, ref, 6, -1), 6);
    /* numpy's Vandermonde lstsq and our column-scaled SVD agree to ~1e-10 relative on a cubic in
     * x ~ 300 (condition ~1e9 before scaling); Dmax, a root of the fitted derivative, inherits it */
    for (int k = 0; k < 4; k++)
        assert_near(r.cubic[k], ref[k], 1e-8 * fabs(ref[k]));
    assert_int_equal(r.dmax.status, CPD_LACTATE_FOUND);
    assert_near(r.dmax.intensity, ref[4], 1e-8 * ref[4]);
    assert_int_equal(r.dmax_mod.status, CPD_LACTATE_FOUND);
    assert_near(r.dmax_mod.intensity, ref[5], 1e-8 * ref[5]);
    /* the order a coach expects: LT1 below modified Dmax below OBLA */
    assert_int_equal(r.lt1.status, CPD_LACTATE_FOUND);
    assert_true(r.lt1.intensity < r.dmax_mod.intensity && r.dmax_mod.intensity < r.obla.intensity);
}

/* A second numpy check on invented but realistic 7-stage data (the linfit test's set). */
static void numpy_dmax_on_seven_stages(void **state)
{
    (void)state;
    const double x[7] = {100, 140, 180, 220, 260, 300, 340};
    const double la[7] = {1.12, 1.08, 1.31, 1.77, 2.64, 4.21, 7.03};
    cpd_lactate_result r;
    assert_int_equal(cpd_lactate_analyse(x, la, NULL, 7, &r, NULL), CPD_OK);
    char text[512] = "";
    for (int i = 0; i < 7; i++)
        snprintf(text + strlen(text), sizeof text - strlen(text), "%.17g %.17g\n", x[i], la[i]);
    double ref[6];
    assert_int_equal(pyref_run("dmax.py", text, ref, 6, -1), 6);
    for (int k = 0; k < 4; k++)
        assert_near(r.cubic[k], ref[k], 1e-8 * fabs(ref[k]));
    assert_near(r.dmax.intensity, ref[4], 1e-8 * ref[4]);
    assert_near(r.dmax_mod.intensity, ref[5], 1e-8 * ref[5]);
    assert_int_equal(r.mod_start, 2); /* 1.31 -> 1.77 is the first rise above 0.4: start at 180 W */
}

static void values_that_cannot_be_found(void **state)
{
    (void)state;
    cpd_lactate_result r;
    /* three stages: OBLA only; 2.5 -> 5.0 between 150 and 200 W gives 150 + 50 (1.5 / 2.5) = 180 W */
    const double x3[3] = {100, 150, 200}, l3[3] = {1.0, 2.5, 5.0};
    assert_int_equal(cpd_lactate_analyse(x3, l3, NULL, 3, &r, NULL), CPD_OK);
    assert_finite(&r);
    assert_int_equal(r.lt1.reason, CPD_LACTATE_R_FEW_STAGES);
    assert_int_equal(r.dmax.reason, CPD_LACTATE_R_FEW_STAGES);
    assert_int_equal(r.dmax_mod.reason, CPD_LACTATE_R_FEW_STAGES);
    assert_int_equal(r.has_cubic, 0);
    assert_near(r.obla.intensity, 180, 1e-10);
    /* a concave curve: no log-log break (upper slope lower) and the cubic lies above the line */
    const double x[6] = {100, 130, 160, 190, 220, 250};
    const double conc[6] = {1.0, 2.0, 2.7, 3.2, 3.5, 3.7};
    assert_int_equal(cpd_lactate_analyse(x, conc, NULL, 6, &r, NULL), CPD_OK);
    assert_finite(&r);
    assert_int_equal(r.lt1.status, CPD_LACTATE_NOT_FOUND);
    assert_int_equal(r.lt1.reason, CPD_LACTATE_R_NO_BREAK);
    assert_int_equal(r.dmax.reason, CPD_LACTATE_R_NOT_CONVEX);
    assert_int_equal(r.obla.reason, CPD_LACTATE_R_NOT_REACHED);
    assert_true(r.dmax.why[0] != '\0');
    /* a jump between 120 and 130 W: log-log lines cross near 36 W, outside the stages (numpy) */
    const double xj[6] = {100, 110, 120, 130, 140, 150}, lj[6] = {1.0, 1.05, 1.1, 3.0, 3.3, 3.6};
    assert_int_equal(cpd_lactate_analyse(xj, lj, NULL, 6, &r, NULL), CPD_OK);
    assert_finite(&r);
    assert_int_equal(r.lt1.reason, CPD_LACTATE_R_OUTSIDE);
    /* an erratic sample (5.2 then 2.7): the fitted cubic's slope never equals the line's in range
     * (numpy.roots finds none either), so there is no Dmax */
    const double le[6] = {1.2, 1.7, 1.8, 5.2, 2.7, 5.3};
    assert_int_equal(cpd_lactate_analyse(x, le, NULL, 6, &r, NULL), CPD_OK);
    assert_finite(&r);
    assert_int_equal(r.dmax.reason, CPD_LACTATE_R_OUTSIDE);
    assert_int_equal(r.dmax_mod.reason, CPD_LACTATE_R_OUTSIDE);
    /* small rises only (largest 0.38): no modified Dmax; already 4.3 at the first stage: no OBLA */
    const double ls[6] = {1.0, 1.2, 1.45, 1.75, 2.1, 2.48};
    assert_int_equal(cpd_lactate_analyse(x, ls, NULL, 6, &r, NULL), CPD_OK);
    assert_int_equal(r.dmax_mod.reason, CPD_LACTATE_R_NO_RISE);
    assert_int_equal(r.dmax.status, CPD_LACTATE_FOUND);
    const double lh[6] = {4.3, 4.8, 5.6, 6.9, 8.8, 11.4};
    assert_int_equal(cpd_lactate_analyse(x, lh, NULL, 6, &r, NULL), CPD_OK);
    assert_finite(&r);
    assert_int_equal(r.obla.reason, CPD_LACTATE_R_ABOVE_AT_START);
    assert_string_equal(cpd_lactate_reason_text(CPD_LACTATE_R_NO_RISE), "no rise above 0.4 mmol/L between stages");
    assert_string_equal(cpd_lactate_reason_text(CPD_LACTATE_NREASONS), "unknown reason");
    assert_string_equal(cpd_lactate_reason_text(-2), "unknown reason");
}

static void bad_input_is_refused(void **state)
{
    (void)state;
    cpd_lactate_result r;
    char msg[CPD_MSG_MAX];
    double x[6] = {100, 130, 160, 190, 220, 250};
    double la[6] = {1.0, 1.1, 1.5, 2.3, 3.9, 6.2};
    double hr[6] = {120, 130, 141, 152, 163, 174};
    assert_int_equal(cpd_lactate_analyse(NULL, la, NULL, 6, &r, msg), CPD_EUSAGE);
    assert_int_equal(cpd_lactate_analyse(x, NULL, NULL, 6, &r, msg), CPD_EUSAGE);
    assert_int_equal(cpd_lactate_analyse(x, la, NULL, 6, NULL, msg), CPD_EUSAGE);
    assert_int_equal(cpd_lactate_analyse(x, la, NULL, 2, &r, msg), CPD_ENODATA);
    assert_non_null(strstr(msg, "2 stages"));
    double big[65];
    for (int i = 0; i < 65; i++)
        big[i] = 50 + 5.0 * i;
    assert_int_equal(cpd_lactate_analyse(big, big, NULL, 65, &r, msg), CPD_EDATA);
    /* each bad value, one at a time */
    struct { double *arr; int i; double v; } bad[] = {
        {x, 3, 160},  /* intensity does not increase */
        {x, 0, 0},    /* intensity not positive */
        {x, 2, NAN},
        {la, 4, 0},   /* lactate not positive */
        {la, 4, -1.5},
        {la, 5, 31},  /* above 30 mmol/L */
        {la, 1, INFINITY},
        {hr, 2, 15},  /* HR below 20 */
        {hr, 2, 260},
        {hr, 2, NAN},
    };
    for (size_t k = 0; k < sizeof bad / sizeof bad[0]; k++) {
        double old = bad[k].arr[bad[k].i];
        bad[k].arr[bad[k].i] = bad[k].v;
        assert_int_equal(cpd_lactate_analyse(x, la, hr, 6, &r, msg), CPD_EDATA);
        assert_true(msg[0] != '\0');
        bad[k].arr[bad[k].i] = old;
    }
    assert_int_equal(cpd_lactate_analyse(x, la, hr, 6, &r, msg), CPD_OK);
    assert_int_equal(r.obla.has_hr, 1);
}

/* Issue 12: the bootstrap intervals on 200 simulated step tests (8 stages of 25 W from 90 W, lactate
 * 0.7 + 0.09 e^((P - 90)/38) mmol/L, noise SD 0.15 mmol/L; tests/rng.h).
 * The truth of each method is its answer on the noise-free stages (what the method estimates). */
static void thresholds_have_intervals(void **state)
{
    (void)state;
    double x[8], y0[8], y[8];
    for (int i = 0; i < 8; i++) {
        x[i] = 90 + 25 * i;
        y0[i] = 0.7 + 0.09 * exp((x[i] - 90) / 38);
    }
    cpd_lactate_result r0, r;
    assert_int_equal(cpd_lactate_analyse(x, y0, NULL, 8, &r0, NULL), CPD_OK);
    const cpd_lactate_value *t0[4] = {&r0.lt1, &r0.dmax, &r0.dmax_mod, &r0.obla};
    rng g = {.s = 0x1ac7a7eull};
    int hit[4] = {0}, n[4] = {0};
    for (int k = 0; k < 200; k++) {
        for (int i = 0; i < 8; i++)
            y[i] = fmax(0.1, y0[i] + 0.15 * rng_normal(&g));
        assert_int_equal(cpd_lactate_analyse(x, y, NULL, 8, &r, NULL), CPD_OK);
        cpd_lactate_ci ci;
        assert_int_equal(cpd_lactate_ci_compute(x, y, 8, &r, 200, (uint64_t)k, &ci), CPD_OK);
        const cpd_lactate_value *e[4] = {&r.lt1, &r.dmax, &r.dmax_mod, &r.obla};
        for (int q = 0; q < 4; q++) {
            if (!ci.valid[q] || t0[q]->status != CPD_LACTATE_FOUND)
                continue;
            assert_true(ci.ci95[q][0] <= e[q]->intensity && e[q]->intensity <= ci.ci95[q][1]);
            n[q]++;
            hit[q] += ci.ci95[q][0] <= t0[q]->intensity && t0[q]->intensity <= ci.ci95[q][1];
        }
    }
    static const char *const nm[4] = {"LT1 (log-log)", "Dmax", "modified Dmax", "4 mmol/L"};
    for (int q = 0; q < 4; q++) {
        printf("lactate %s: coverage %.1f %% (%d of %d simulated tests)\n", nm[q], n[q] ? 100.0 * hit[q] / n[q] : 0,
               hit[q], n[q]);
        assert_true(n[q] >= 150);
        assert_true(hit[q] >= 0.85 * n[q]); /* reported; the target is 95 % */
    }
    cpd_lactate_ci ci;
    assert_int_equal(cpd_lactate_ci_compute(NULL, y, 8, &r, 200, 1, &ci), CPD_EUSAGE);
    assert_int_equal(cpd_lactate_ci_compute(x, y, 4, &r, 200, 1, &ci), CPD_ENODATA);
}

int main(void)
{
    gsl_set_error_handler_off();
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(thresholds_have_intervals),
        cmocka_unit_test(dmax_on_an_exact_cubic),
        cmocka_unit_test(loglog_and_obla_by_hand),
        cmocka_unit_test(obla_hr_and_numpy_dmax),
        cmocka_unit_test(numpy_dmax_on_seven_stages),
        cmocka_unit_test(values_that_cannot_be_found),
        cmocka_unit_test(bad_input_is_refused),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
