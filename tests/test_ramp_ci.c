/* test_ramp_ci.c: the intervals of ramp_ci.c on synthetic ramps with a known GET, RCP and VO2peak
 * (tests/synth_ramp.h): Monte Carlo coverage over 200 simulated ramps each, printed as
 * "coverage N %" (target 95 +- 3). */
#include "cpdomain/ramp.h"
#include "cpdomain/status.h"
#include "synth_ramp.h"

#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>
#include <stdio.h>
#include <stdlib.h>

#define MC_N 200    /* simulated ramps: the binomial SE of a 95 % coverage is 1.5 % */
#define BOOT_N 200  /* bootstrap resamples per ramp */

static void report(const char *what, int hit, int n)
{
    double pct = 100.0 * hit / n;
    printf("%s: coverage %.1f %% (%d of %d simulated tests; target 95 +- 3)\n", what, pct, hit, n);
    assert_true(n >= MC_N);
    assert_true(pct >= 92.0 && pct <= 98.0);
}

/* The true VO2peak of the recorded ramp: the highest noise-free 30-s mean up to the end of the
 * ramp as recorded (the last breath at the peak power, r.duration_s; the seconds after the last
 * breath are not in the record), i.e. the final 30 one-second values of a ramp without a plateau. */
static double true_peak(const synth_ramp *p, double end_s)
{
    double s = 0;
    for (int k = 0; k < 30; k++)
        s += synth_vo2(p, floor(end_s) - k);
    return s / 30;
}

static void coverage_on_random_ramps(void **state)
{
    (void)state;
    synth_rng rng = {.s = 0xc0ffee12ULL};
    cpd_ramp_ws *w = cpd_ramp_alloc();
    assert_non_null(w);
    int n_peak = 0, hit_peak = 0, n_get = 0, hit_get = 0, n_rcp = 0, hit_rcp = 0, tries = 0;
    double wget = 0, wpeak = 0;
    while ((n_get < MC_N || n_peak < MC_N) && tries < 2 * MC_N) {
        tries++;
        synth_ramp p;
        synth_draw(&rng, &p);
        cpd_gx_series *s = synth_make(&p, &rng, NULL);
        assert_non_null(s);
        cpd_ramp_opts o;
        cpd_ramp_opts_init(&o);
        o.rate_per_min = p.rate;
        o.start = p.start;
        o.onset_s = p.onset_s;
        cpd_ramp_result r;
        assert_int_equal(cpd_ramp_analyse(w, s, &o, &r, NULL), CPD_OK);
        cpd_ramp_ci ci;
        assert_int_equal(cpd_ramp_ci_compute(w, &r, &o, BOOT_N, 0x1234u + (uint64_t)tries, &ci), CPD_OK);
        if (ci.has_vo2peak_ci && n_peak < MC_N) {
            double t = true_peak(&p, r.duration_s);
            n_peak++;
            hit_peak += ci.vo2peak_ci95[0] <= t && t <= ci.vo2peak_ci95[1];
            wpeak += ci.vo2peak_ci95[1] - ci.vo2peak_ci95[0];
            assert_true(ci.vo2peak_ci95[0] < r.vo2peak_ml_min && r.vo2peak_ml_min < ci.vo2peak_ci95[1]);
        }
        if (ci.get.valid && n_get < MC_N) {
            n_get++;
            hit_get += ci.get.vo2_ci95[0] <= p.get_vo2 && p.get_vo2 <= ci.get.vo2_ci95[1];
            wget += ci.get.vo2_ci95[1] - ci.get.vo2_ci95[0];
            assert_true(ci.get.time_ci95_s[0] <= ci.get.time_ci95_s[1]);
            if (ci.get.has_equiv)
                assert_true(ci.get.equiv_ci95[0] <= r.get.equiv_intensity && r.get.equiv_intensity <= ci.get.equiv_ci95[1]);
        }
        if (ci.rcp.valid) {
            n_rcp++;
            hit_rcp += ci.rcp.vo2_ci95[0] <= p.rcp_vo2 && p.rcp_vo2 <= ci.rcp.vo2_ci95[1];
        }
        cpd_gx_free(s);
    }
    printf("mean 95 %% interval width: GET %.0f mL/min, VO2peak %.0f mL/min; RCP coverage %.1f %% of %d (reported)\n",
           wget / n_get, wpeak / n_peak, 100.0 * hit_rcp / (n_rcp ? n_rcp : 1), n_rcp);
    report("GET (V-slope, pairs bootstrap)", hit_get, n_get);
    report("VO2peak (SE of the 30-s mean)", hit_peak, n_peak);
    cpd_ramp_free(w);
}

int main(void)
{
    (void)synth_time_at_vo2; /* the shared generator's other helpers */
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(coverage_on_random_ramps),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
