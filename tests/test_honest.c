/* test_honest.c: Monte Carlo coverage of the intervals cpdomain prints, on synthetic tests whose
 * truth is known: each simulated test is generated, analysed by the real code path, and its 95 %
 * interval checked against the generating value. Each prints "coverage N %" (target 95 +- 3). */
#include "cpdomain/domains.h"
#include "cpdomain/kinetics.h"
#include "cpdomain/pd.h"
#include "cpdomain/status.h"
#include "synth_bout.h"

#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define MC_N 200 /* simulated tests per interval: the binomial SE of a 95 % coverage is 1.5 % */

static void report(const char *what, int hit, int n)
{
    double pct = 100.0 * hit / n;
    printf("%s: coverage %.1f %% (%d of %d simulated tests; target 95 +- 3)\n", what, pct, hit, n);
    assert_true(n >= MC_N);
    assert_true(pct >= 92.0 && pct <= 98.0);
}

/* Four time-to-exhaustion trials on the hyperbola CP 250 W, W' 20 kJ with 5 % lognormal error on
 * the duration (a typical test-retest CV of time to exhaustion, common practice). */
static void trials(synth_rng *r, double *P, double *t)
{
    static const double p[4] = {400, 350, 310, 280};
    for (int i = 0; i < 4; i++) {
        P[i] = p[i];
        t[i] = 20000.0 / (p[i] - 250.0) * exp(0.05 * synth_normal(r));
    }
}

/* A severe bout as in the issue: primary tau 33 s after a 12-s delay and a real 300 mL/min slow
 * component from 100 s (Barstow & Mole 1991: 105 +- 46 s) that the F-test often misses. */
static synth_params severe_bout(void)
{
    synth_params p = synth_severe();
    p.tau1 = 33.0;
    p.td1 = 12.0;
    p.a2 = 300.0;
    p.td2 = 100.0;
    p.tau2 = 150.0;
    p.dur_s = 360.0;
    return p;
}

/* The slow component must not inflate tau: on the bout the whole-bout mono-exponential
 * gives about 41-45 s, the rule of cpd_kinetics_time_to_vo2max about the generating 33 s. */
static void primary_tau_not_inflated(void **state)
{
    (void)state;
    cpd_kinetics_ws *w = cpd_kinetics_alloc();
    assert_non_null(w);
    synth_params p = severe_bout();
    synth_rng r;
    synth_seed(&r, 4242);
    double sum_rule = 0, sum_mono = 0;
    int n = 0;
    for (int k = 0; k < 20; k++) {
        cpd_gx_series *s = synth_bout(&p, &r, NULL);
        cpd_kinetics_input in = {s, p.onset_s};
        cpd_kinetics_result res;
        assert_int_equal(cpd_kinetics_analyse(w, &in, 1, NULL, &res), CPD_OK);
        cpd_kinetics_tvo2max tv;
        assert_int_equal(cpd_kinetics_time_to_vo2max(&res, &tv), CPD_OK);
        assert_true(tv.valid && tv.se_s > 0);
        assert_true(fabs(tv.t_s - (tv.delay_s + 4 * tv.tau_s)) < 1e-9);
        sum_rule += tv.tau_s;
        sum_mono += res.mono.b[CPD_KIN_TAU1];
        n++;
        cpd_gx_free(s);
    }
    sum_rule /= n;
    sum_mono /= n;
    printf("primary tau over 20 severe bouts (truth 33 s): rule %.1f s, whole-bout mono-exponential %.1f s\n",
           sum_rule, sum_mono);
    assert_true(fabs(sum_rule - 33.0) < 2.5);
    assert_true(sum_mono > 38.0); /* the bias the rule removes */
    cpd_kinetics_free(w);
}

/* The severe-extreme boundary's interval: trials and a bout simulated for each test; the truth is
 * CP + W'/(TD1 + 4 tau1) = 250 + 20000/144 W. */
static void severe_extreme_coverage(void **state)
{
    (void)state;
    cpd_kinetics_ws *kw = cpd_kinetics_alloc();
    cpd_pd_ws *pw = cpd_pd_alloc();
    cpd_pd_result *pr = calloc(1, sizeof *pr);
    assert_true(kw && pw && pr);
    synth_params p = severe_bout();
    double truth = 250.0 + 20000.0 / (p.td1 + 4 * p.tau1);
    synth_rng r;
    synth_seed(&r, 90210);
    int hit = 0, n = 0, hit_t = 0;
    double width = 0, t_truth = p.td1 + 4 * p.tau1;
    for (int k = 0; k < MC_N; k++) {
        double P[4], t[4];
        trials(&r, P, t);
        assert_int_equal(cpd_pd_fit(pw, CPD_PD_POWER, P, t, 4, NULL, pr, NULL), CPD_OK);
        const cpd_pd_model_fit *m = &pr->models[CPD_PD_HYPERBOLIC];
        assert_true(m->ok && m->has_se);
        cpd_gx_series *s = synth_bout(&p, &r, NULL);
        cpd_kinetics_input in = {s, p.onset_s};
        cpd_kinetics_result res;
        assert_int_equal(cpd_kinetics_analyse(kw, &in, 1, NULL, &res), CPD_OK);
        cpd_gx_free(s);
        cpd_kinetics_tvo2max tv;
        assert_int_equal(cpd_kinetics_time_to_vo2max(&res, &tv), CPD_OK);
        hit_t += fabs(tv.t_s - t_truth) <= 1.96 * tv.se_s;
        cpd_domains_input di;
        memset(&di, 0, sizeof di);
        di.modality = CPD_PD_POWER;
        di.fit = m;
        di.has_tau = di.has_t_vo2max = 1;
        di.tau_s = tv.tau_s;
        di.delay_s = tv.delay_s;
        di.t_vo2max_s = tv.t_s;
        di.t_vo2max_se_s = tv.se_s;
        cpd_domains_result d;
        assert_int_equal(cpd_domains_compute(&di, &d), CPD_OK);
        const cpd_boundary *b = &d.b[CPD_BND_SEVERE_EXTREME];
        assert_true(b->valid && b->has_ci);
        hit += b->ci95[0] <= truth && truth <= b->ci95[1];
        width += b->ci95[1] - b->ci95[0];
        n++;
    }
    printf("severe-extreme boundary (truth %.1f W), mean 95 %% interval width %.0f W\n", truth, width / n);
    /* the kinetics part alone is reported, not held to 95 +- 3: about 1 bout in 10 lands the
     * bi-exponential in a local minimum (slow-component delay near 50 s or near 200 s) that even a
     * wider SE does not reach; the boundary's interval, which also carries CP and W', covers */
    printf("time to reach VO2max, delay + 4 tau (+-1.96 SE): coverage %.1f %% (%d of %d; a known shortfall)\n",
           100.0 * hit_t / n, hit_t, n);
    assert_true(hit_t >= 0.85 * n);
    report("severe-extreme boundary", hit, n);
    free(pr);
    cpd_pd_free(pw);
    cpd_kinetics_free(kw);
}

/* Time trials over set distances (the demo swimmer's design: 200, 400, 800 and 1500 m; CS 1.32 m/s,
 * D' 16 m). cv = 0: timing noise of sd_s seconds; else a proportional noise of cv (e.g. 0.01 = 1 %).
 * Counts the simulations whose CS interval covers 1.32 m/s, by the distance-time model (the one
 * cpd_pd_best_for_time_trials picks) and by the hyperbola on the mean speed D/t. */
static int sim_time_trials(double sd_s, double cv, int *hit_dt, int *hit_h, int *refused)
{
    static const double D[4] = {200, 400, 800, 1500};
    cpd_pd_ws *w = cpd_pd_alloc();
    cpd_pd_result *r = calloc(1, sizeof *r);
    assert_true(w && r);
    synth_rng g;
    synth_seed(&g, 1500);
    int n = 0;
    *hit_dt = *hit_h = *refused = 0;
    for (int k = 0; n < MC_N && k < 2 * MC_N; k++) {
        double v[4], t[4];
        for (int i = 0; i < 4; i++) {
            double t0 = (D[i] - 16.0) / 1.32;
            t[i] = cv > 0 ? t0 * exp(cv * synth_normal(&g)) : t0 + sd_s * synth_normal(&g);
            v[i] = D[i] / t[i];
        }
        assert_int_equal(cpd_pd_fit(w, CPD_PD_SPEED, v, t, 4, NULL, r, NULL), CPD_OK);
        if (cpd_pd_best_for_time_trials(r) == CPD_ENODATA) {
            /* D' at or below 0: not a valid fit, and the rule leaves the best as it was */
            assert_false(r->models[CPD_PD_LINEAR_TOTAL].w_prime > 0 && r->models[CPD_PD_LINEAR_TOTAL].cp > 0 &&
                         !(r->models[CPD_PD_LINEAR_TOTAL].flags & CPD_PD_FLAG_TRIAL_AT_OR_BELOW_CP));
            (*refused)++;
            continue;
        }
        assert_true(r->has_best && r->best == CPD_PD_LINEAR_TOTAL);
        const cpd_pd_model_fit *dt = &r->models[CPD_PD_LINEAR_TOTAL], *h = &r->models[CPD_PD_HYPERBOLIC];
        *hit_dt += dt->cp_ci95[0] <= 1.32 && 1.32 <= dt->cp_ci95[1];
        *hit_h += h->ok && h->has_se && h->cp_ci95[0] <= 1.32 && 1.32 <= h->cp_ci95[1];
        n++;
    }
    r->modality = CPD_PD_POWER; /* a power fit is refused */
    assert_int_equal(cpd_pd_best_for_time_trials(r), CPD_EUSAGE);
    free(r);
    cpd_pd_free(w);
    return n;
}

static void time_trials_cover_cs(void **state)
{
    (void)state;
    int dt, h, refused;
    /* timing noise of 3 s (touch pads and pacing, common practice): the error model OLS assumes */
    int n = sim_time_trials(3.0, 0, &dt, &h, &refused);
    printf("time trials, 3-s timing noise: CS coverage %.1f %% (distance-time), %.1f %% (hyperbola on D/t)\n",
           100.0 * dt / n, 100.0 * h / n);
    report("critical speed from time trials (distance-time model)", dt, n);
    assert_true(h < dt);
    /* a 1 % day-to-day performance CV makes the errors grow with the distance: OLS intervals then
     * fall short (reported, a known limitation), the hyperbola's more so */
    n = sim_time_trials(0, 0.01, &dt, &h, &refused);
    printf("time trials, 1 %% performance CV: CS coverage %.1f %% (distance-time), %.1f %% (hyperbola on D/t); "
           "%d fits without a positive D' left out (a known shortfall of unweighted least squares)\n",
           100.0 * dt / n, 100.0 * h / n, refused);
    assert_true(h < dt);
}

int main(void)
{
    (void)synth_heavy; /* the shared generator's other presets */
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(primary_tau_not_inflated),
        cmocka_unit_test(severe_extreme_coverage),
        cmocka_unit_test(time_trials_cover_cs),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
