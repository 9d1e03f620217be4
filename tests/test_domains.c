/* test_domains.c: boundaries, targets and flags of the domains module on fits whose answers are
 * known in closed form (2-parameter identities: P = CP + W'/t). */
#include "cpdomain/domains.h"
#include "cpdomain/status.h"
#include "cpdomain/units.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>
#include "near.h"
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* Four trials on the exact hyperbola CP 250 W, W' 20 000 J, one of them 1.5 % long so that the
 * fit has a (small) standard error. */
static cpd_pd_result *fit_exactish(void)
{
    static const double P[4] = {400, 350, 310, 280};
    double t[4] = {20000.0 / 150, 20000.0 / 100, 20000.0 / 60, 20000.0 / 30};
    t[2] *= 1.015;
    cpd_pd_ws *w = cpd_pd_alloc();
    cpd_pd_result *r = calloc(1, sizeof *r);
    assert_int_equal(cpd_pd_fit(w, CPD_PD_POWER, P, t, 4, NULL, r, NULL), CPD_OK);
    cpd_pd_free(w);
    return r;
}

static void input_for(cpd_domains_input *in, const cpd_pd_model_fit *m)
{
    memset(in, 0, sizeof *in);
    in->modality = CPD_PD_POWER;
    in->fit = m;
    snprintf(in->fit_date, sizeof in->fit_date, "2026-11-20");
    assert_int_equal(cpd_parse_date("2026-12-01", &in->today), CPD_OK);
}

static void boundaries_follow_the_model(void **state)
{
    (void)state;
    cpd_pd_result *r = fit_exactish();
    const cpd_pd_model_fit *m = &r->models[CPD_PD_LINEAR_TOTAL];
    assert_true(m->ok && m->has_se);
    cpd_domains_input in;
    input_for(&in, m);
    in.has_get = 1;
    in.get = 182.5;
    snprintf(in.get_source, sizeof in.get_source, "ramp 4");
    snprintf(in.get_date, sizeof in.get_date, "2026-11-02");
    in.has_peak = 1;
    in.peak = 362.5;
    in.has_mass = 1;
    in.mass_kg = 72.5;
    in.has_hr_get = in.has_hr_rcp = 1;
    in.hr_get = 142;
    in.hr_rcp = 171;
    in.has_rcp = 1;
    in.rcp = 270.5;
    cpd_domains_result d;
    assert_int_equal(cpd_domains_compute(&in, &d), CPD_OK);
    assert_near(d.b[CPD_BND_MOD_HEAVY].value, 182.5, 0);
    assert_near(d.b[CPD_BND_HEAVY_SEVERE].value, m->cp, 0);
    assert_true(d.b[CPD_BND_HEAVY_SEVERE].has_ci);
    /* no kinetics: t_lim = 100 s, so P = CP + W'/100 (the 2-parameter identity) */
    assert_near(d.t_vo2max_s, 100, 0);
    assert_near(d.b[CPD_BND_SEVERE_EXTREME].value, m->cp + m->w_prime / 100, 1e-9);
    assert_true(d.flags & CPD_DOMAINS_F_TAU_ASSUMED);
    assert_false(d.flags & CPD_DOMAINS_F_STALE);
    /* heavy work below CP's lower 95 % bound */
    assert_near(d.heavy_ceiling, m->cp_ci95[0], 0);
    assert_near(d.range[CPD_DOM_HEAVY].hi, m->cp_ci95[0], 0);
    assert_near(d.range[CPD_DOM_HEAVY].lo, 182.5, 0);
    assert_near(d.range[CPD_DOM_MODERATE].hi_w_kg, 182.5 / 72.5, 1e-12);
    /* severe targets start at CP's upper bound (issue 12: between the bounds the data cannot tell) */
    assert_near(d.range[CPD_DOM_SEVERE].lo_pct_cp, 100 * m->cp_ci95[1] / m->cp, 1e-12);
    /* heart rates inside their domain: linear between (GET, 142) and (RCP, 171), so the heavy top is
     * the heart rate at the heavy ceiling and severe starts at the heart rate at CP (derived) */
    double slope = (171.0 - 142) / (270.5 - 182.5);
    assert_true(d.range[CPD_DOM_HEAVY].has_hr_hi && d.range[CPD_DOM_SEVERE].has_hr_lo);
    assert_near(d.range[CPD_DOM_HEAVY].hr_hi, 142 + slope * (m->cp_ci95[0] - 182.5), 1e-9);
    assert_near(d.range[CPD_DOM_SEVERE].hr_lo, 142 + slope * (m->cp - 182.5), 1e-9);
    assert_true(d.range[CPD_DOM_HEAVY].hr_hi < 171 && d.range[CPD_DOM_SEVERE].hr_lo < 171);
    assert_near(d.range[CPD_DOM_MODERATE].hr_hi, 142, 0);
    /* an RCP below CP: heavy ends at the RCP's heart rate; no heart rate is known to mark CP, so the
     * severe domain gets none rather than one that reaches down into heavy intensities */
    cpd_domains_result d2;
    in.rcp = 240.25;
    assert_int_equal(cpd_domains_compute(&in, &d2), CPD_OK);
    assert_near(d2.range[CPD_DOM_HEAVY].hr_hi, 171, 1e-9);
    assert_false(d2.range[CPD_DOM_SEVERE].has_hr_lo);
    /* no RCP intensity (no MRT): only the GET's heart rate is placed */
    in.has_rcp = 0;
    assert_int_equal(cpd_domains_compute(&in, &d2), CPD_OK);
    assert_false(d2.range[CPD_DOM_HEAVY].has_hr_hi);
    assert_false(d2.range[CPD_DOM_SEVERE].has_hr_lo);
    assert_true(d2.range[CPD_DOM_HEAVY].has_hr_lo);
    in.has_rcp = 1;
    in.rcp = 270.5;
    /* severe efforts: P = CP + W'/t for 2, 3, 5, 8, 12 min */
    static const double ts[5] = {120, 180, 300, 480, 720};
    for (int k = 0; k < 5; k++) {
        assert_true(d.effort[k].valid && d.effort[k].has_ci);
        assert_near(d.effort[k].value, m->cp + m->w_prime / ts[k], 1e-9);
        assert_true(d.effort[k].ci95[0] < d.effort[k].value && d.effort[k].value < d.effort[k].ci95[1]);
    }
    /* 50 %delta halfway between the GET and the peak equivalents (common practice) */
    assert_true(d.has_delta);
    assert_near(d.delta_value[1], 272.5, 1e-12);
    assert_int_equal(cpd_domains_classify(&d, 150), CPD_DOM_MODERATE);
    assert_int_equal(cpd_domains_classify(&d, 200), CPD_DOM_HEAVY);
    assert_int_equal(cpd_domains_classify(&d, 300), CPD_DOM_SEVERE);
    assert_int_equal(cpd_domains_classify(&d, 500), CPD_DOM_EXTREME);
    assert_string_equal(cpd_boundary_name(CPD_BND_SEVERE_EXTREME), "severe-extreme");
    assert_string_equal(cpd_domain_name(CPD_DOM_HEAVY), "heavy");

    /* with kinetics: 4 tau = 120 s gives P = CP + W'/120 */
    in.has_tau = 1;
    in.tau_s = 30;
    assert_int_equal(cpd_domains_compute(&in, &d), CPD_OK);
    assert_near(d.b[CPD_BND_SEVERE_EXTREME].value, m->cp + m->w_prime / 120, 1e-9);
    assert_false(d.flags & CPD_DOMAINS_F_TAU_ASSUMED);
    free(r);
}

static void flags_and_staleness(void **state)
{
    (void)state;
    cpd_pd_result *r = fit_exactish();
    const cpd_pd_model_fit *m = &r->models[CPD_PD_LINEAR_TOTAL];
    cpd_domains_input in;
    input_for(&in, m);
    cpd_domains_result d;
    assert_int_equal(cpd_domains_compute(&in, &d), CPD_OK);
    assert_true(d.flags & CPD_DOMAINS_F_NO_GET);
    assert_false(d.b[CPD_BND_MOD_HEAVY].valid);
    assert_int_equal(cpd_domains_classify(&d, 200), CPD_DOM_N); /* below CP but no GET: unknown */
    assert_int_equal(cpd_domains_classify(&d, 300), CPD_DOM_SEVERE);

    in.has_lt1 = 1;
    in.lt1 = 171;
    snprintf(in.lt1_date, sizeof in.lt1_date, "2026-03-10"); /* 266 days before today */
    assert_int_equal(cpd_domains_compute(&in, &d), CPD_OK);
    assert_true(d.flags & CPD_DOMAINS_F_GET_FROM_LT1);
    assert_true(d.b[CPD_BND_MOD_HEAVY].stale);
    assert_non_null(strstr(d.b[CPD_BND_MOD_HEAVY].stale_why, "266 days old"));
    assert_true(d.flags & CPD_DOMAINS_F_STALE);

    in.has_get = 1;
    in.get = 262; /* above CP: inconsistent */
    in.has_recent = 1;
    in.recent_cp = m->cp_ci95[1] + 5;
    assert_int_equal(cpd_domains_compute(&in, &d), CPD_OK);
    assert_true(d.flags & CPD_DOMAINS_F_GET_ABOVE_CP);
    assert_true(d.b[CPD_BND_HEAVY_SEVERE].stale);
    assert_non_null(strstr(d.b[CPD_BND_HEAVY_SEVERE].stale_why, "outside this fit's 95 % interval"));

    in.stale_days = 400; /* a longer window makes the LT1 date fresh */
    in.has_get = 0;
    in.has_recent = 0;
    assert_int_equal(cpd_domains_compute(&in, &d), CPD_OK);
    assert_false(d.b[CPD_BND_MOD_HEAVY].stale);
    for (unsigned b = 0; b < CPD_DOMAINS_NFLAGS; b++) {
        assert_non_null(cpd_domains_flag_name(1u << b));
        assert_non_null(cpd_domains_flag_text(1u << b));
    }
    assert_null(cpd_domains_flag_name(1u << 20));
    free(r);
}

static void two_trials_use_a_margin(void **state)
{
    (void)state;
    const double P[2] = {360, 275}, t[2] = {184, 800};
    cpd_pd_ws *w = cpd_pd_alloc();
    cpd_pd_result *r = calloc(1, sizeof *r);
    assert_int_equal(cpd_pd_fit(w, CPD_PD_POWER, P, t, 2, NULL, r, NULL), CPD_OK);
    cpd_domains_input in;
    input_for(&in, &r->models[CPD_PD_HYPERBOLIC]);
    cpd_domains_result d;
    assert_int_equal(cpd_domains_compute(&in, &d), CPD_OK);
    assert_true(d.flags & CPD_DOMAINS_F_NO_CP_CI);
    assert_near(d.heavy_ceiling, 0.95 * r->models[CPD_PD_HYPERBOLIC].cp, 1e-9);
    assert_false(d.b[CPD_BND_HEAVY_SEVERE].has_ci);
    /* bad input */
    in.fit = NULL;
    assert_int_equal(cpd_domains_compute(&in, &d), CPD_EUSAGE);
    in.fit = &r->models[CPD_PD_THREE_PARAMETER]; /* not fitted with 2 trials */
    assert_int_equal(cpd_domains_compute(&in, &d), CPD_EUSAGE);
    cpd_pd_free(w);
    free(r);
}

/* Issue 12: with a 150-s time to VO2max the 2-min effort (P = CP + W'/120) lies above the boundary
 * (CP + W'/150) and is not listed; the band between CP's bounds is reported as uncertain and the
 * severe targets start at CP's upper bound. */
static void efforts_stay_in_the_severe_domain(void **state)
{
    (void)state;
    cpd_pd_result *r = fit_exactish();
    const cpd_pd_model_fit *m = &r->models[CPD_PD_LINEAR_TOTAL];
    cpd_domains_input in;
    input_for(&in, m);
    in.has_tau = in.has_t_vo2max = 1;
    in.tau_s = 34.5;
    in.delay_s = 12.0;
    in.t_vo2max_s = 150.0;
    in.t_vo2max_se_s = 12.5;
    cpd_domains_result d;
    assert_int_equal(cpd_domains_compute(&in, &d), CPD_OK);
    const cpd_boundary *se = &d.b[CPD_BND_SEVERE_EXTREME];
    assert_near(se->value, m->cp + m->w_prime / 150.0, 1e-9);
    assert_true(d.effort[0].beyond_severe && !d.effort[0].valid);
    for (int k = 1; k < CPD_DOMAINS_NEFFORTS; k++)
        assert_true(d.effort[k].valid && d.effort[k].value <= se->value);
    /* the interval combines the model's half-width and 1.96 W'/T^2 SE(T) in quadrature */
    cpd_pd_pred p;
    assert_int_equal(cpd_pd_predict_intensity(m, 150.0, &p), CPD_OK);
    double hp = 0.5 * (p.ci95[1] - p.ci95[0]), hk = 1.96 * m->w_prime / (150.0 * 150.0) * 12.5;
    assert_near(se->ci95[1] - se->value, sqrt(hp * hp + hk * hk), 1e-9);
    assert_true(d.has_uncertain);
    assert_near(d.uncertain.lo, m->cp_ci95[0], 1e-9);
    assert_near(d.uncertain.hi, m->cp_ci95[1], 1e-9);
    assert_near(d.range[CPD_DOM_SEVERE].lo, m->cp_ci95[1], 1e-9);
    assert_near(d.range[CPD_DOM_HEAVY].hi, m->cp_ci95[0], 1e-9);
    free(r);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(boundaries_follow_the_model),
        cmocka_unit_test(flags_and_staleness),
        cmocka_unit_test(two_trials_use_a_margin),
        cmocka_unit_test(efforts_stay_in_the_severe_domain),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
