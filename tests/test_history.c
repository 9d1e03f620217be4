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
    /* the interval is +-1.96 times the combined standard error */
    double se = hypot(h->block[0].cp_se, h->block[1].cp_se);
    assert_near(c->ci95[1] - c->ci95[0], 2 * 1.959963984540054 * se, 1e-9);
    assert_true(c->meaningful);
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

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(two_blocks_and_a_meaningful_change),
        cmocka_unit_test(small_blocks_and_bad_input),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
