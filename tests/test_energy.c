/* test_energy.c: energy and substrate equations against worked values from the published
 * coefficients, peak fat oxidation against numpy (tests/ref/pfo_ref.py), the oxygen deficit against
 * closed forms of the exponential model, the accumulated deficit against the textbook prediction
 * variance, and the session VO2 model against the kinetics model and against fitted bouts. */
#include "cpdomain/energy.h"
#include "cpdomain/kinetics.h"
#include "cpdomain/status.h"
#include "pyref.h"
#include "synth_bout.h"

#include <gsl/gsl_errno.h>
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>
#include <cmocka.h>
#include "near.h"

/* Worked values, VO2 2.000 and VCO2 1.800 L/min (RER 0.90), computed by hand from the coefficients:
 * Weir 1949 J Physiol 109:1: 3.941 * 2 + 1.106 * 1.8 = 9.8728 kcal/min = 41.3078 kJ/min (4.184 kJ/kcal).
 * Jeukendrup & Wallis 2005 Int J Sports Med 26 S1:S28 (50-75 %): CHO 4.210 * 1.8 - 2.962 * 2 = 1.654,
 *   fat 1.695 * 2 - 1.701 * 1.8 = 0.3282 g/min; (40-50 %): CHO 4.344 * 1.8 - 3.061 * 2 = 1.6972.
 * Frayn 1983 J Appl Physiol 55:628: CHO 4.55 * 1.8 - 3.21 * 2 = 1.77, fat 1.67 * 0.2 = 0.334 g/min. */
static void assert_worked_jw_high(const cpd_energy_substrate *s)
{
    assert_near(s->rer, 0.9, 1e-15);
    assert_near(s->ee_kcal_min, 9.8728, 1e-12);
    assert_near(s->ee_kj_min, 41.3077952, 1e-9);
    assert_true(s->rates_valid);
    assert_near(s->cho_g_min, 1.654, 1e-12);
    assert_near(s->fat_g_min, 0.3282, 1e-12);
}

static void test_worked_values(void **state)
{
    (void)state;
    cpd_energy_substrate s;
    char msg[CPD_MSG_MAX];
    assert_int_equal(cpd_energy_substrate_calc(2000, 1800, 1, CPD_ENERGY_EQ_JW_HIGH, &s, msg), CPD_OK);
    assert_worked_jw_high(&s);
    assert_int_equal(cpd_energy_substrate_calc(2000, 1800, 1, CPD_ENERGY_EQ_JW_LOW, &s, msg), CPD_OK);
    assert_near(s.cho_g_min, 1.6972, 1e-12);
    assert_near(s.fat_g_min, 0.3282, 1e-12);
    assert_int_equal(cpd_energy_substrate_calc(2000, 1800, 1, CPD_ENERGY_EQ_FRAYN, &s, msg), CPD_OK);
    assert_near(s.cho_g_min, 1.77, 1e-12);
    assert_near(s.fat_g_min, 0.334, 1e-12);
    assert_near(cpd_energy_weir_kcal_min(0.25, 0.2), 1.20645, 1e-12); /* rest: 3.941/4 + 1.106/5 */
    assert_int_equal(cpd_energy_eqset_find("frayn1983"), CPD_ENERGY_EQ_FRAYN);
    assert_int_equal(cpd_energy_eqset_find("nope"), -1);
    assert_null(cpd_energy_eqset_get(CPD_ENERGY_NEQ));
}

/* The validity rule: rates only at a steady state with 0.70 <= RER <= 1.00, never negative. */
static void test_validity(void **state)
{
    (void)state;
    cpd_energy_substrate s;
    char msg[CPD_MSG_MAX];
    assert_int_equal(cpd_energy_substrate_calc(3000, 3150, 1, CPD_ENERGY_EQ_JW_HIGH, &s, msg), CPD_OK);
    assert_false(s.rates_valid);
    assert_int_equal(s.reason, CPD_ENERGY_R_RER_HIGH);
    assert_near(s.fat_g_min, 0, 0);
    assert_near(s.ee_kcal_min, 3.941 * 3 + 1.106 * 3.15, 1e-12); /* energy still given */
    assert_int_equal(cpd_energy_substrate_calc(3000, 2700, 0, CPD_ENERGY_EQ_JW_HIGH, &s, msg), CPD_OK);
    assert_false(s.rates_valid);
    assert_int_equal(s.reason, CPD_ENERGY_R_NOT_STEADY);
    assert_int_equal(cpd_energy_substrate_calc(3000, 2000, 1, CPD_ENERGY_EQ_JW_HIGH, &s, msg), CPD_OK);
    assert_int_equal(s.reason, CPD_ENERGY_R_RER_LOW);
    /* RER 0.999: 1.695 - 1.701 * 0.999 < 0 by the coefficients' rounding: reported as 0 */
    assert_int_equal(cpd_energy_substrate_calc(3000, 2997, 1, CPD_ENERGY_EQ_JW_HIGH, &s, msg), CPD_OK);
    assert_true(s.rates_valid);
    assert_near(s.fat_g_min, 0, 0);
    assert_near(s.cho_g_min, 4.210 * 2.997 - 2.962 * 3, 1e-12);
    /* RER 0.701: CHO 4.210 * 0.701 - 2.962 < 0: reported as 0 */
    assert_int_equal(cpd_energy_substrate_calc(2000, 1402, 1, CPD_ENERGY_EQ_JW_HIGH, &s, msg), CPD_OK);
    assert_near(s.cho_g_min, 0, 0);
    /* far outside 0.7-1.2, a missing VCO2, a bad VO2: no number */
    assert_int_equal(cpd_energy_substrate_calc(2000, 2800, 1, CPD_ENERGY_EQ_JW_HIGH, &s, msg), CPD_EDATA);
    assert_non_null(strstr(msg, "far outside"));
    assert_near(s.ee_kcal_min, 0, 0);
    assert_int_equal(cpd_energy_substrate_calc(2000, 1000, 1, CPD_ENERGY_EQ_JW_HIGH, &s, msg), CPD_EDATA);
    assert_int_equal(cpd_energy_substrate_calc(2000, 0, 1, CPD_ENERGY_EQ_JW_HIGH, &s, msg), CPD_EDATA);
    assert_non_null(strstr(msg, "VCO2 is missing"));
    assert_int_equal(cpd_energy_substrate_calc(2000, NAN, 1, CPD_ENERGY_EQ_JW_HIGH, &s, msg), CPD_EDATA);
    assert_int_equal(cpd_energy_substrate_calc(-5, 1800, 1, CPD_ENERGY_EQ_JW_HIGH, &s, msg), CPD_EDATA);
    assert_int_equal(cpd_energy_substrate_calc(2000, 1800, 1, 7, &s, msg), CPD_EUSAGE);
}

/* Nine stages of a step test with an invented RER course (0.82 rising to 1.03). */
static const double PW[] = {60, 90, 120, 150, 180, 210, 240, 270, 300};
static const double VO2[] = {1437, 1741, 2078, 2383, 2688, 3012, 3297, 3640, 3938};
static const double RERS[] = {0.823, 0.838, 0.851, 0.873, 0.889, 0.918, 0.951, 0.987, 1.031};
static const double HR[] = {101, 109, 118, 128, 137, 147, 158, 169, 178};

static void test_pfo_numpy(void **state)
{
    (void)state;
    double vco2[9];
    char text[2048];
    int off = snprintf(text, sizeof text, "4250 1.695 1.701\n");
    for (int i = 0; i < 9; i++) {
        vco2[i] = VO2[i] * RERS[i];
        off += snprintf(text + off, sizeof text - (size_t)off, "%.17g %.17g %.17g\n", PW[i], VO2[i], vco2[i]);
    }
    cpd_pfo_input in = {9, PW, VO2, vco2, HR, 4250, CPD_ENERGY_EQ_JW_HIGH, 500, 20261202};
    cpd_pfo_result r;
    char msg[CPD_MSG_MAX];
    assert_int_equal(cpd_energy_pfo(&in, &r, msg), CPD_OK);
    assert_int_equal(r.n_rer_above, 1);
    assert_near(r.fat[8], 0, 0);
    /* numpy.polyfit and numpy.roots at test time (Debian python3-numpy) */
    double ref[9];
    assert_int_equal(pyref_run("pfo_ref.py", text, ref, 9, NAN), 9);
    for (int k = 0; k < 4; k++)
        assert_near(r.coef[k], ref[k], 1e-9 * fmax(1.0, fabs(ref[k])));
    assert_near(r.peak_pct, ref[4], 1e-6);
    assert_near(r.peak_g_min, ref[5], 1e-9);
    /* numpy's zone is on a 2e6-point grid over the range: step ~3e-5 % */
    assert_near(r.zone_pct[0], ref[6], 1e-4);
    assert_near(r.zone_pct[1], ref[7], 1e-4);
    assert_near(r.peak_power_w, ref[8], 1e-6);
    assert_true(r.peak_g_min > 0.3 && r.peak_g_min < 0.7);
    assert_true(r.zone_pct[0] < r.peak_pct && r.peak_pct < r.zone_pct[1]);
    assert_true(r.has_hr && r.peak_hr_bpm > 101 && r.peak_hr_bpm < 178);
    /* the bootstrap interval brackets the estimate */
    assert_true(r.n_boot > 400);
    assert_true(r.peak_ci95[0] <= r.peak_g_min && r.peak_g_min <= r.peak_ci95[1]);
    assert_true(r.pct_ci95[0] <= r.peak_pct && r.peak_pct <= r.pct_ci95[1]);
    assert_true(r.power_ci95[0] < r.power_ci95[1]);
    /* deterministic: the same seed gives the same interval */
    cpd_pfo_result r2;
    assert_int_equal(cpd_energy_pfo(&in, &r2, msg), CPD_OK);
    assert_near(r2.peak_ci95[0], r.peak_ci95[0], 0);
    /* refusals */
    in.n = 4;
    assert_int_equal(cpd_energy_pfo(&in, &r, msg), CPD_ENODATA);
    in.n = 9;
    double bad[9];
    memcpy(bad, vco2, sizeof bad);
    bad[3] = VO2[3] * 1.45;
    in.vco2_ml_min = bad;
    assert_int_equal(cpd_energy_pfo(&in, &r, msg), CPD_EDATA);
    assert_non_null(strstr(msg, "stage 4"));
    in.vco2_ml_min = vco2;
    in.vo2peak_ml_min = 0;
    assert_int_equal(cpd_energy_pfo(&in, &r, msg), CPD_EUSAGE);
}

/* A step test's stages (steps.h) into substrate use and peak fat oxidation: a stage at VO2 2.000,
 * VCO2 1.800 L/min gives the worked values above (Weir 1949, Jeukendrup & Wallis 2005, Frayn 1983). */
static void test_steps_stages(void **state)
{
    (void)state;
    cpd_steps_stage st;
    memset(&st, 0, sizeof st);
    st.complete = 1;
    st.stable = 1;
    st.has_vco2 = 1;
    st.vo2_ml_min = 2000;
    st.vco2_ml_min = 1800;
    cpd_energy_substrate s;
    char msg[CPD_MSG_MAX];
    assert_int_equal(cpd_energy_stage_substrate(&st, CPD_ENERGY_EQ_JW_HIGH, &s, msg), CPD_OK);
    assert_worked_jw_high(&s);
    assert_int_equal(cpd_energy_stage_substrate(&st, CPD_ENERGY_EQ_FRAYN, &s, msg), CPD_OK);
    assert_near(s.cho_g_min, 1.770, 1e-12);
    assert_near(s.fat_g_min, 0.334, 1e-12);
    /* a drifting stage, or one too short to judge, is no steady state: energy yes, rates not valid */
    st.stable = 0;
    assert_int_equal(cpd_energy_stage_substrate(&st, CPD_ENERGY_EQ_JW_HIGH, &s, msg), CPD_OK);
    assert_false(s.rates_valid);
    assert_int_equal(s.reason, CPD_ENERGY_R_NOT_STEADY);
    assert_near(s.ee_kcal_min, 9.8728, 1e-9);
    st.stable = -1;
    assert_int_equal(cpd_energy_stage_substrate(&st, CPD_ENERGY_EQ_JW_HIGH, &s, msg), CPD_OK);
    assert_false(s.rates_valid);
    /* above RER 1.00: not valid, never negative fat */
    st.stable = 1;
    st.vco2_ml_min = 2100;
    assert_int_equal(cpd_energy_stage_substrate(&st, CPD_ENERGY_EQ_JW_HIGH, &s, msg), CPD_OK);
    assert_false(s.rates_valid);
    assert_int_equal(s.reason, CPD_ENERGY_R_RER_HIGH);
    assert_true(cpd_energy_pfo_stage_ok(&st)); /* enters PFO at 0 g/min even when not stable */
    st.stable = 0;
    assert_true(cpd_energy_pfo_stage_ok(&st));
    st.vco2_ml_min = 1800;
    assert_false(cpd_energy_pfo_stage_ok(&st)); /* drifting below RER 1.00: left out */
    st.stable = 1;
    st.complete = 0;
    assert_false(cpd_energy_pfo_stage_ok(&st)); /* cut short: left out */
    st.complete = 1;
    /* a VO2-only test */
    st.has_vco2 = 0;
    assert_int_equal(cpd_energy_stage_substrate(&st, CPD_ENERGY_EQ_JW_HIGH, &s, msg), CPD_EDATA);
    assert_non_null(strstr(msg, "needs VCO2"));
    assert_false(cpd_energy_pfo_stage_ok(&st));

    /* peak fat oxidation from stages = cpd_energy_pfo on the stages that qualify: the nine stages
     * above, a tenth cut short and an unstable one below RER 1.00 inserted (both left out) */
    cpd_steps_result r;
    memset(&r, 0, sizeof r);
    size_t k = 0;
    for (int i = 0; i < 9; i++) {
        cpd_steps_stage *g = &r.stage[k++];
        g->complete = 1;
        g->stable = 1;
        g->has_vco2 = g->has_hr = 1;
        g->intensity = PW[i];
        g->vo2_ml_min = VO2[i];
        g->vco2_ml_min = VO2[i] * RERS[i];
        g->hr_bpm = HR[i];
        if (i == 2) { /* an unstable stage between 120 and 150 W */
            cpd_steps_stage *u = &r.stage[k++];
            *u = *g;
            u->intensity = 135;
            u->vo2_ml_min = 2230;
            u->vco2_ml_min = 2230 * 0.80;
            u->stable = 0;
        }
    }
    r.stage[k] = r.stage[k - 1];
    r.stage[k].intensity = 330;
    r.stage[k].complete = 0;
    r.n = k + 1;
    double vco2[9];
    for (int i = 0; i < 9; i++)
        vco2[i] = VO2[i] * RERS[i];
    cpd_pfo_input in = {9, PW, VO2, vco2, HR, 4250, CPD_ENERGY_EQ_JW_HIGH, 200, 7};
    cpd_pfo_result a, b;
    int used[CPD_STEPS_MAX];
    assert_int_equal(cpd_energy_pfo(&in, &a, msg), CPD_OK);
    assert_int_equal(cpd_energy_pfo_steps(&r, 4250, CPD_ENERGY_EQ_JW_HIGH, 200, 7, &b, used, msg), CPD_OK);
    assert_int_equal(b.n, 9);
    assert_int_equal(used[3], 0);  /* the unstable stage */
    assert_int_equal(used[10], 0); /* the stage cut short */
    assert_int_equal(used[0] + used[1] + used[2] + used[4] + used[9], 5);
    assert_near(b.peak_g_min, a.peak_g_min, 0);
    assert_near(b.peak_pct, a.peak_pct, 0);
    assert_near(b.peak_hr_bpm, a.peak_hr_bpm, 0);
    assert_near(b.peak_ci95[0], a.peak_ci95[0], 0);
    /* one stage without HR: no HR for the peak */
    r.stage[0].has_hr = 0;
    assert_int_equal(cpd_energy_pfo_steps(&r, 4250, CPD_ENERGY_EQ_JW_HIGH, 0, 7, &b, NULL, msg), CPD_OK);
    assert_false(b.has_hr);
    /* too few: four stages qualify */
    for (size_t i = 4; i < r.n; i++) {
        r.stage[i].stable = 0;
        r.stage[i].vco2_ml_min = r.stage[i].vo2_ml_min * 0.95;
    }
    assert_int_equal(cpd_energy_pfo_steps(&r, 4250, CPD_ENERGY_EQ_JW_HIGH, 0, 7, &b, NULL, msg), CPD_ENODATA);
    assert_non_null(strstr(msg, "at least 5"));
    /* VO2 only */
    for (size_t i = 0; i < r.n; i++)
        r.stage[i].has_vco2 = 0;
    assert_int_equal(cpd_energy_pfo_steps(&r, 4250, CPD_ENERGY_EQ_JW_HIGH, 0, 7, &b, NULL, msg), CPD_ENODATA);
    assert_non_null(strstr(msg, "no VCO2"));
}

/* Oxygen deficit against the closed forms of the exponential model:
 *   integral_0^T (A1 - A1 (1 - e^-(t-TD)/tau) u(t-TD)) dt = A1 TD + A1 tau (1 - e^-(T-TD)/tau),
 *   integral_0^T A2 (1 - e^-(t-TD2)/tau2) u(t-TD2) dt = A2 ((T-TD2) - tau2 (1 - e^-(T-TD2)/tau2)). */
static void test_deficit_closed_form(void **state)
{
    (void)state;
    double b[CPD_KIN_NPAR] = {812.3, 1437.6, 11.4, 27.9, 0, 0, 1};
    cpd_energy_deficit d;
    double T = 360.0;
    assert_int_equal(cpd_energy_bout_deficit(CPD_KIN_MONO, b, T, 130.0, &d), CPD_OK);
    double closed = (1437.6 * 11.4 + 1437.6 * 27.9 * (1 - exp(-(T - 11.4) / 27.9))) / 60.0;
    assert_near(d.deficit_ml, closed, 1e-6);
    assert_near(d.deficit_mrt_ml, 1437.6 * (11.4 + 27.9) / 60.0, 1e-9);
    assert_false(d.has_slow);
    /* a short bout: the closed form, not A1 MRT */
    assert_int_equal(cpd_energy_bout_deficit(CPD_KIN_MONO, b, 40.0, 130.0, &d), CPD_OK);
    assert_near(d.deficit_ml, (1437.6 * 11.4 + 1437.6 * 27.9 * (1 - exp(-(40 - 11.4) / 27.9))) / 60.0, 1e-6);

    double bi[CPD_KIN_NPAR] = {845.0, 2214.0, 9.8, 29.3, 437.0, 104.5, 96.2};
    assert_int_equal(cpd_energy_bout_deficit(CPD_KIN_BI, bi, T, 220.0, &d), CPD_OK);
    assert_true(d.has_slow);
    double ex = 437.0 * ((T - 104.5) - 96.2 * (1 - exp(-(T - 104.5) / 96.2))) / 60.0;
    assert_near(d.slow_excess_ml, ex, 1e-6);
    double end = 437.0 * (1 - exp(-(T - 104.5) / 96.2));
    assert_near(d.slow_end_ml_min, end, 1e-9);
    assert_near(d.slow_extra_gain_ml_min_w, end / 220.0, 1e-12);
    assert_near(d.deficit_ml, (2214.0 * 9.8 + 2214.0 * 29.3 * (1 - exp(-(T - 9.8) / 29.3))) / 60.0, 1e-6);
    /* refusals */
    bi[CPD_KIN_TAU1] = 0;
    assert_int_equal(cpd_energy_bout_deficit(CPD_KIN_BI, bi, T, 220.0, &d), CPD_EUSAGE);
    assert_int_equal(cpd_energy_bout_deficit(CPD_KIN_MONO, b, 0, 130.0, &d), CPD_EUSAGE);
    assert_int_equal(cpd_energy_bout_deficit(9, b, T, 130.0, &d), CPD_EUSAGE);
}

/* AOD: the prediction variance of an OLS line, s^2 (1/n + (x0 - xbar)^2 / Sxx) (any regression text,
 * e.g. Draper & Smith 1998 Applied Regression Analysis, Wiley), and t(0.975, 2) = 4.302652729911275. */
static void test_aod(void **state)
{
    (void)state;
    const double p[] = {100, 150, 200, 250};
    const double v[] = {1688.0, 2231.0, 2753.0, 3311.0};
    cpd_energy_line L;
    assert_int_equal(cpd_energy_line_fit(p, v, 4, &L), CPD_OK);
    double xbar = 175, sxx = 0, sxy = 0, ybar = (1688.0 + 2231.0 + 2753.0 + 3311.0) / 4;
    for (int i = 0; i < 4; i++) {
        sxx += (p[i] - xbar) * (p[i] - xbar);
        sxy += (p[i] - xbar) * (v[i] - ybar);
    }
    double b = sxy / sxx, a = ybar - b * xbar, rss = 0;
    for (int i = 0; i < 4; i++)
        rss += pow(v[i] - a - b * p[i], 2);
    assert_near(L.b_ml_min_w, b, 1e-10);
    assert_near(L.a_ml_min, a, 1e-8);
    assert_int_equal(L.dof, 2);
    double P = 380.0, dur = 143.0, s2 = rss / 2;
    double se = sqrt(s2 * (0.25 + (P - xbar) * (P - xbar) / sxx));
    cpd_energy_aod r;
    assert_int_equal(cpd_energy_aod_calc(&L, P, dur, 7400.0, 61.0, 250.0, &r), CPD_OK);
    assert_near(r.demand_ml_min, a + b * P, 1e-8);
    assert_near(r.demand_se_ml_min, se, 1e-8);
    assert_near(r.demand_ml, (a + b * P) * dur / 60, 1e-8);
    assert_near(r.aod_ml, (a + b * P) * dur / 60 - 7400.0, 1e-8);
    assert_near(r.aod_ci95_ml[1] - r.aod_ml, 4.302652729911275 * se * dur / 60, 1e-6);
    assert_near(r.aod_ml_kg, r.aod_ml / 61.0, 1e-10);
    assert_int_equal(r.extrapolation_pct, 152);
    assert_int_equal(cpd_energy_aod_calc(&L, -1, dur, 7400.0, 61.0, 250.0, &r), CPD_EUSAGE);
    const double same[] = {200, 200};
    assert_int_equal(cpd_energy_line_fit(same, v, 2, &L), CPD_ENODATA);
    assert_int_equal(cpd_energy_line_fit(p, v, 1, &L), CPD_ENODATA);
    assert_non_null(strstr(cpd_energy_aod_cautions(), "Medbo"));
}

/* Trapezoid accumulation: constant and linear VO2 have exact integrals. */
static void test_accumulate(void **state)
{
    (void)state;
    double t[50], v[50], w[50];
    for (int i = 0; i < 50; i++) {
        t[i] = 3.7 * i;
        v[i] = 3000;
        w[i] = 1000 + 10 * t[i];
    }
    double ml;
    assert_int_equal(cpd_energy_accumulate(t, v, 50, 20.0, 140.0, &ml), CPD_OK);
    assert_near(ml, 3000 * 120 / 60.0, 1e-9);
    /* integral of 1000 + 10 t from 20 to 140: 1000 * 120 + 5 (140^2 - 20^2) = 216000 mL/min * s */
    assert_int_equal(cpd_energy_accumulate(t, w, 50, 20.0, 140.0, &ml), CPD_OK);
    assert_near(ml, 216000.0 / 60.0, 1e-8);
    assert_int_equal(cpd_energy_accumulate(t, v, 50, 20.0, 400.0, &ml), CPD_ENODATA);
    assert_int_equal(cpd_energy_accumulate(t, v, 50, 20.0, 10.0, &ml), CPD_EUSAGE);
}

static cpd_vo2model model_a(void)
{
    cpd_vo2model m = {830.0, 10.2, 27.4, 11.3, 180.0, 260.0, 7.0, 95.0, 108.0, 4200.0};
    return m;
}

/* A step through the model reproduces the kinetics model: mono-exponential below the GET,
 * bi-exponential with A2 = sc_gain (P - GET) in the heavy domain (output at the end of each second). */
static void test_model_steps(void **state)
{
    (void)state;
    cpd_vo2model m = model_a();
    enum { PRE = 120, DUR = 480 };
    double p[PRE + DUR], v[PRE + DUR];
    for (int k = 0; k < PRE + DUR; k++)
        p[k] = k < PRE ? 30.0 : 150.0;
    assert_int_equal(cpd_vo2model_run(&m, p, PRE + DUR, v), CPD_OK);
    double b[CPD_KIN_NPAR] = {830 + 10.2 * 30, 10.2 * 120, 11.3, 27.4, 0, 0, 1};
    for (int k = 0; k < PRE + DUR; k++)
        assert_near(v[k], cpd_kinetics_eval(CPD_KIN_MONO, b, k + 1 - PRE), 1e-9);
    for (int k = PRE; k < PRE + DUR; k++)
        p[k] = 225.0;
    assert_int_equal(cpd_vo2model_run(&m, p, PRE + DUR, v), CPD_OK);
    double bi[CPD_KIN_NPAR] = {830 + 10.2 * 30, 10.2 * 195, 11.3, 27.4, 7.0 * 45, 108.0, 95.0};
    for (int k = 0; k < PRE + DUR; k++)
        assert_near(v[k], cpd_kinetics_eval(CPD_KIN_BI, bi, k + 1 - PRE), 1e-9);
    /* severe: VO2 is driven to VO2peak and capped there */
    for (int k = PRE; k < PRE + DUR; k++)
        p[k] = 300.0;
    assert_int_equal(cpd_vo2model_run(&m, p, PRE + DUR, v), CPD_OK);
    assert_near(v[PRE + DUR - 1], 4200.0, 30.0);
    for (int k = 0; k < PRE + DUR; k++)
        assert_true(v[k] <= 4200.0);
    assert_int_equal(cpd_vo2model_domain(&m, 1500), CPD_KIN_MODERATE);
    assert_int_equal(cpd_vo2model_domain(&m, 3000), CPD_KIN_HEAVY);
    assert_int_equal(cpd_vo2model_domain(&m, 4100), CPD_KIN_SEVERE);
    m.tau_s = 0;
    assert_int_equal(cpd_vo2model_run(&m, p, PRE + DUR, v), CPD_EUSAGE);
    m = model_a();
    p[5] = -1;
    assert_int_equal(cpd_vo2model_run(&m, p, PRE + DUR, v), CPD_EUSAGE);
}

/* One synthetic bout of the invented athlete of model_a at power_w from 20 W, analysed. */
static int fit_bout(double power_w, uint64_t seed, cpd_kinetics_result *res)
{
    cpd_vo2model m = model_a();
    synth_params sp = synth_moderate();
    sp.base = m.base_ml_min + m.gain_ml_min_w * 20.0;
    sp.a1 = m.gain_ml_min_w * (power_w - 20.0);
    sp.td1 = m.delay_s;
    sp.tau1 = m.tau_s;
    sp.a2 = power_w > m.get_w ? m.sc_gain_ml_min_w * (power_w - m.get_w) : 0.0;
    sp.td2 = m.sc_delay_s;
    sp.tau2 = m.sc_tau_s;
    synth_rng r;
    synth_seed(&r, seed);
    cpd_gx_series *s = synth_bout(&sp, &r, NULL);
    cpd_kinetics_ws *w = cpd_kinetics_alloc();
    cpd_kinetics_opts o;
    cpd_kinetics_opts_init(&o);
    o.power_w = power_w;
    o.baseline_power_w = 20.0;
    cpd_kinetics_input in = {s, sp.onset_s};
    int rc = cpd_kinetics_analyse(w, &in, 1, &o, res);
    cpd_kinetics_free(w);
    cpd_gx_free(s);
    return rc;
}

/* The session model built from one moderate and one heavy bout (as the energy command builds it)
 * predicts a second heavy bout at another power: the RMSE between the model driven by that bout's
 * power and the bout's own fitted curve, phase I to the end. */
static void test_model_against_bout_fits(void **state)
{
    (void)state;
    cpd_kinetics_result mod, hv, hv2;
    assert_int_equal(fit_bout(110.0, 0x5eed01, &mod), CPD_OK);
    assert_int_equal(fit_bout(222.0, 0x5eed02, &hv), CPD_OK);
    assert_int_equal(fit_bout(246.0, 0x5eed03, &hv2), CPD_OK);
    assert_true(hv.sc_supported && hv2.sc_supported);
    cpd_vo2model m = model_a();
    m.gain_ml_min_w = mod.primary.gain_ml_min_w;
    m.base_ml_min = mod.baseline_ml_min - m.gain_ml_min_w * 20.0;
    m.tau_s = mod.primary.tau_s;
    m.delay_s = mod.primary.delay_s;
    m.sc_gain_ml_min_w = hv.slow.asymptote_ml_min / (222.0 - m.get_w);
    m.sc_tau_s = hv.slow.tau_s;
    m.sc_delay_s = hv.slow.delay_s;
    enum { PRE = 120, DUR = 360 };
    double p[PRE + DUR], v[PRE + DUR];
    for (int k = 0; k < PRE + DUR; k++)
        p[k] = k < PRE ? 20.0 : 246.0;
    assert_int_equal(cpd_vo2model_run(&m, p, PRE + DUR, v), CPD_OK);
    double ss = 0;
    int cnt = 0;
    for (int k = PRE + 20; k < PRE + DUR; k++) {
        double f = cpd_kinetics_eval(CPD_KIN_BI, hv2.bi.b, k + 1 - PRE);
        ss += (v[k] - f) * (v[k] - f);
        cnt++;
    }
    double rmse = sqrt(ss / cnt);
    print_message("session model vs the fitted 246-W bout: RMSE %.1f mL/min over %d s\n", rmse, cnt);
    /* breath noise 60 mL/min propagates into the parameters; 100 mL/min is ~3 % of the bout's VO2 */
    assert_true(rmse < 100.0);
    assert_true(rmse > 0.0);
}

/* Session costing: from a steady state below the GET the modelled VO2 is base + gain P throughout,
 * so energy is the Weir sum of that VO2 (closed form), the fixed-efficiency estimate is work /
 * efficiency, and with no parameter uncertainty the interval collapses onto the estimate. */
static void test_session_cost(void **state)
{
    (void)state;
    enum { N = 1250 };
    double p[N];
    unsigned char rec[N];
    for (int i = 0; i < N; i++) {
        p[i] = 140.0;
        rec[i] = i < 1200; /* the last 50 s not recorded: not counted */
    }
    cpd_energy_params par;
    memset(&par, 0, sizeof par);
    par.m = model_a();
    par.rer[0] = 0.87;
    par.rer[1] = 0.93;
    par.rer[2] = 1.0;
    cpd_energy_session_result r;
    assert_int_equal(cpd_energy_session(&par, p, rec, N, CPD_ENERGY_EQ_JW_HIGH, 0.21, 50, 7, &r), CPD_OK);
    double v = (830 + 10.2 * 140) / 1000.0;
    double kj_s = (3.941 * v + 1.106 * 0.87 * v) * 4.184 / 60.0;
    assert_int_equal(r.n_min, 21);
    assert_near(r.rec_total_s, 1200, 0);
    assert_near(r.ee_total_kj, 1200 * kj_s, 1e-7);
    assert_near(r.ee_total_ci[0], r.ee_total_kj, 1e-7);
    assert_near(r.fixed_total_kj, 140.0 * 1200 / 0.21 / 1000.0, 1e-9);
    assert_near(r.work_total_kj, 168.0, 1e-9);
    assert_near(r.cho_total_g, 1200 * (4.210 * 0.87 * v - 2.962 * v) / 60.0, 1e-7);
    assert_near(r.fat_total_g, 1200 * (1.695 * v - 1.701 * 0.87 * v) / 60.0, 1e-7);
    assert_near(r.nosc_total_kj, r.ee_total_kj, 1e-9);
    assert_near(r.dom_s[0], 1200, 0);
    assert_near(r.ee_kj[3], 60 * kj_s, 1e-9);
    assert_near(r.rec_s[20], 0, 0);
    cpd_energy_session_free(&r);

    /* heavy intervals: the slow component costs energy, the intervals open with uncertainty */
    for (int i = 0; i < N; i++)
        p[i] = (i / 240) % 2 ? 235.0 : 90.0;
    par.sd.tau_s = 5;
    par.sd.gain_ml_min_w = 0.8;
    par.sd.sc_gain_ml_min_w = 3;
    par.rer_sd[1] = 0.03;
    assert_int_equal(cpd_energy_session(&par, p, rec, N, CPD_ENERGY_EQ_JW_HIGH, 0.21, 200, 7, &r), CPD_OK);
    assert_true(r.ee_total_kj > r.nosc_total_kj + 5.0);
    assert_true(r.ee_total_ci[0] < r.ee_total_kj && r.ee_total_kj < r.ee_total_ci[1]);
    assert_true(r.dom_s[1] > 0);
    for (size_t k = 0; k < r.n_min; k++)
        assert_true(r.ee_lo[k] <= r.ee_hi[k]);
    cpd_energy_session_free(&r);
    assert_int_equal(cpd_energy_session(&par, p, rec, N, CPD_ENERGY_EQ_JW_HIGH, 0.9, 200, 7, &r), CPD_EUSAGE);
    assert_int_equal(cpd_energy_session(&par, p, rec, N, CPD_ENERGY_EQ_JW_HIGH, 0.21, 3, 7, &r), CPD_EUSAGE);
    par.rer[0] = 2.0;
    assert_int_equal(cpd_energy_session(&par, p, rec, N, CPD_ENERGY_EQ_JW_HIGH, 0.21, 200, 7, &r), CPD_EUSAGE);
    cpd_energy_session_free(&r);
}

int main(void)
{
    (void)synth_heavy; /* the shared header's other cases are not used here */
    (void)synth_severe;
    gsl_set_error_handler_off();
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_worked_values),
        cmocka_unit_test(test_validity),
        cmocka_unit_test(test_pfo_numpy),
        cmocka_unit_test(test_steps_stages),
        cmocka_unit_test(test_deficit_closed_form),
        cmocka_unit_test(test_aod),
        cmocka_unit_test(test_accumulate),
        cmocka_unit_test(test_model_steps),
        cmocka_unit_test(test_model_against_bout_fits),
        cmocka_unit_test(test_session_cost),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
