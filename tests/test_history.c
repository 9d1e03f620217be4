/* test_history.c: blocks of trials, fits per block and the verdict on changes, on data generated
 * from known CP and W' (the 2-parameter identity t = W'/(P - CP), the 2-parameter identity (derived)). */
#include "cpdomain/history.h"
#include "cpdomain/status.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>
#include "near.h"
#include <gsl/gsl_cdf.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

/* Trials of CP cp and W' w at the given powers; durations perturbed by +-factor (deterministic). */
static void make_block(double cp, double w, const double *p, size_t n, int day0, double noise, int *day, double *x,
                       double *t)
{
    for (size_t i = 0; i < n; i++) {
        day[i] = day0 + 3 * (int)i;
        x[i] = p[i];
        t[i] = w / (p[i] - cp) * (1 + noise * ((i % 2) ? 1 : -1) * (1 + 0.37 * (double)i));
    }
}

static void two_blocks_and_a_meaningful_change(void **state)
{
    (void)state;
    static const double P[5] = {420, 370, 335, 310, 295};
    int day[10];
    double x[10], t[10];
    make_block(250, 20000, P, 5, 20000, 0.01, day, x, t);
    make_block(272.5, 19500, P, 5, 20070, 0.01, day + 5, x + 5, t + 5);
    cpd_pd_ws *w = cpd_pd_alloc();
    cpd_history *h = calloc(1, sizeof *h);
    assert_int_equal(cpd_history_build(w, CPD_PD_POWER, day, x, t, 10, 0, 1, CPD_PD_HYPERBOLIC, h), CPD_OK);
    assert_int_equal(h->nblocks, 2);
    assert_int_equal(h->block[0].n, 5);
    assert_int_equal(h->block[1].first, 5);
    assert_int_equal(h->block[1].from_day, 20070);
    assert_true(h->block[0].fitted && h->block[1].fitted);
    assert_near(h->block[0].cp, 250, 5);
    assert_near(h->block[1].cp, 272.5, 5);
    const cpd_history_change *c = &h->block[1].d_cp;
    assert_true(c->valid);
    assert_near(c->delta, h->block[1].cp - h->block[0].cp, 1e-12);
    /* issue 12: Student's t with the Welch-Satterthwaite dof (Welch 1947) of the combined SE, the
     * same model in both blocks */
    double s1 = h->block[0].cp_se, s2 = h->block[1].cp_se, se = hypot(s1, s2);
    double df = pow(s1 * s1 + s2 * s2, 2) / (pow(s1, 4) / 3 + pow(s2, 4) / 3); /* 5 trials - 2 parameters */
    assert_near(c->df, df, 1e-9);
    assert_true(c->df >= 3 && c->df <= 6);
    assert_true(c->model_valid && c->model == CPD_PD_HYPERBOLIC);
    assert_near(c->ci95[1] - c->ci95[0], 2 * gsl_cdf_tdist_Pinv(0.975, df) * se, 1e-9);
    assert_near(c->swc, CPD_HISTORY_SWC_PCT / 100 * h->block[0].cp, 1e-9);
    assert_true(c->meaningful && c->excludes_zero);
    assert_false(h->block[0].d_cp.valid); /* the first block has nothing to compare with */

    /* the same athlete twice: a change within the noise */
    make_block(250, 20000, P, 5, 20070, 0.012, day + 5, x + 5, t + 5);
    assert_int_equal(cpd_history_build(w, CPD_PD_POWER, day, x, t, 10, 0, 1, CPD_PD_HYPERBOLIC, h), CPD_OK);
    assert_true(h->block[1].d_cp.valid);
    assert_false(h->block[1].d_cp.meaningful);

    /* a wider window makes one block of all ten */
    assert_int_equal(cpd_history_build(w, CPD_PD_POWER, day, x, t, 10, 90, 1, CPD_PD_HYPERBOLIC, h), CPD_OK);
    assert_int_equal(h->nblocks, 1);

    /* ramps attach to the nearest block; their change uses the stated typical error */
    assert_int_equal(cpd_history_build(w, CPD_PD_POWER, day, x, t, 10, 0, 1, CPD_PD_HYPERBOLIC, h), CPD_OK);
    cpd_history_attach_ramp(h, 19995, 1, 180, 1, 3500, 0);
    cpd_history_attach_ramp(h, 20080, 1, 200, 1, 3520, 0);
    cpd_history_attach_ramp(h, 21000, 1, 999, 1, 9999, 0); /* far from every block: ignored */
    cpd_history_changes(h);
    assert_near(h->block[1].d_get.delta, 20, 1e-12);
    /* TE = 6 % of the mean 190 W; the difference of two tests has sqrt(2) TE: +-1.96 x 16.1 W */
    assert_near(h->block[1].d_get.ci95[1] - 20, 1.959963984540054 * sqrt(2.0) * 0.06 * 190, 1e-9);
    assert_false(h->block[1].d_get.meaningful);
    assert_near(h->block[1].vo2peak_ml_min, 3520, 0);
    assert_false(h->block[1].d_vo2peak.meaningful); /* 20 mL/min is inside a 3 % typical error */
    cpd_history_attach_tau(h, 20001, 31, 1.5, 0);
    cpd_history_attach_tau(h, 20075, 24, 1.2, 0);
    cpd_history_changes(h);
    assert_near(h->block[1].d_tau.delta, -7, 1e-12);
    assert_true(h->block[1].d_tau.meaningful);
    cpd_pd_free(w);
    free(h);
}

static void small_blocks_and_bad_input(void **state)
{
    (void)state;
    int day[3] = {100, 200, 201};
    double x[3] = {330, 300, 280}, t[3] = {300, 420, 700};
    cpd_pd_ws *w = cpd_pd_alloc();
    cpd_history *h = calloc(1, sizeof *h);
    assert_int_equal(cpd_history_build(w, CPD_PD_POWER, day, x, t, 3, 0, 0, CPD_PD_HYPERBOLIC, h), CPD_OK);
    assert_int_equal(h->nblocks, 2);
    assert_false(h->block[0].fitted); /* one trial cannot be fitted */
    assert_true(h->block[1].fitted);  /* two trials: exact, no SE */
    assert_false(h->block[1].has_se);
    int back[3] = {100, 90, 95};
    assert_int_equal(cpd_history_build(w, CPD_PD_POWER, back, x, t, 3, 0, 0, CPD_PD_HYPERBOLIC, h), CPD_EUSAGE);
    assert_int_equal(cpd_history_build(NULL, CPD_PD_POWER, day, x, t, 3, 0, 0, CPD_PD_HYPERBOLIC, h), CPD_EUSAGE);
    cpd_pd_free(w);
    free(h);
}

/* Issue 12: a change that excludes zero but not the smallest worthwhile change is not meaningful;
 * without a model, both blocks are compared with the one model they share best. */
static void worthwhile_and_like_with_like(void **state)
{
    (void)state;
    static const double P[5] = {420, 370, 335, 310, 295};
    int day[10];
    double x[10], t[10];
    make_block(250, 20000, P, 5, 20000, 0.002, day, x, t);
    make_block(256.5, 20000, P, 5, 20070, 0.002, day + 5, x + 5, t + 5);
    cpd_pd_ws *w = cpd_pd_alloc();
    cpd_history *h = calloc(1, sizeof *h);
    assert_int_equal(cpd_history_build(w, CPD_PD_POWER, day, x, t, 10, 0, 0, CPD_PD_HYPERBOLIC, h), CPD_OK);
    const cpd_history_change *c = &h->block[1].d_cp;
    assert_true(c->valid && c->model_valid);
    /* the change is computed with one model for both blocks */
    assert_near(c->delta, h->block[1].models[c->model].cp - h->block[0].models[c->model].cp, 1e-9);
    /* +6.5 W is clear of zero with 0.2 % noise, but inside 4.6 % of 250 W = 11.5 W */
    assert_true(c->excludes_zero);
    assert_false(c->meaningful);
    /* a smaller stated SWC (2 %: 5 W) makes it worthwhile */
    h->swc_pct = 2.0;
    cpd_history_changes(h);
    assert_true(h->block[1].d_cp.meaningful);
    assert_near(h->block[1].d_cp.swc, 0.02 * h->block[0].models[c->model].cp, 1e-9);
    /* the smallest worthwhile change rests on CP's between-athlete spread (Hopkins 2004 with Johnson
     * et al. 2011): W', GET, VO2peak and tau get none, so their verdict is "excludes zero" */
    const cpd_history_change *cw = &h->block[1].d_w_prime;
    assert_true(cw->valid);
    assert_near(cw->swc, 0, 0);
    assert_int_equal(cw->meaningful, cw->excludes_zero);
    free(h);
    cpd_pd_free(w);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(worthwhile_and_like_with_like),
        cmocka_unit_test(two_blocks_and_a_meaningful_change),
        cmocka_unit_test(small_blocks_and_bad_input),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
