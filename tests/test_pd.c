/* test_pd.c: the power-duration module against scipy/numpy computed at test time, the exact-data
 * identities of the 2-parameter identity, hand-checked leave-one-out and prediction arithmetic, one test per
 * quality flag, interval coverage on synthetic athletes, and every error path. */
#include "cpdomain/pd.h"
#include "cpdomain/status.h"
#include "pyref.h"
#include "rng.h"

#include <ctype.h>
#include <gsl/gsl_errno.h>
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>
#include "near.h"

static cpd_pd_ws *ws;
static cpd_pd_result res; /* large: keep it off the stack */

static int fit(cpd_pd_modality mod, const double *x, const double *t, size_t n)
{
    char msg[CPD_MSG_MAX];
    return cpd_pd_fit(ws, mod, x, t, n, NULL, &res, msg);
}

static int close_rel(double got, double want, double rel)
{
    return fabs(got - want) <= rel * fabs(want);
}

/* Every number the result reports must be finite, whether or not it is valid. */
static void assert_all_finite(const cpd_pd_result *r)
{
    for (int m = 0; m < CPD_PD_NMODELS; m++) {
        const cpd_pd_model_fit *f = &r->models[m];
        const double v[] = {f->cp,
                            f->w_prime,
                            f->p_max,
                            f->t_offset_s,
                            f->cp_se,
                            f->w_prime_se,
                            f->p_max_se,
                            f->cp_ci95[0],
                            f->cp_ci95[1],
                            f->w_prime_ci95[0],
                            f->w_prime_ci95[1],
                            f->p_max_ci95[0],
                            f->p_max_ci95[1],
                            f->see_cp_pct,
                            f->see_w_prime_pct,
                            f->rss,
                            f->r2,
                            f->aic,
                            f->aicc};
        for (size_t k = 0; k < sizeof v / sizeof v[0]; k++)
            assert_true(isfinite(v[k]));
        for (int k = 0; k < 9; k++)
            assert_true(isfinite(f->cov[k]));
        for (size_t i = 0; i < r->n; i++) {
            assert_true(isfinite(f->resid_s[i]) && isfinite(f->resid_pct[i]));
            assert_true(isfinite(f->loo_d_cp[i]) && isfinite(f->loo_d_w_prime[i]));
        }
    }
}

/* ---- exact data of the 2-parameter identity ---------------------------------------------------------------- */

/* CP 250 W, W′ 20 000 J, P = 400, 350, 310, 280 W: t = W′/(P − CP) exactly (the 2-parameter identity,
 * derived identity). Every 2-parameter model must return the generating values; the tolerance
 * 1e-9 is rounding in t (stored to 17 digits) amplified by the fit's conditioning. */
static void exact_data_identities(void **state)
{
    (void)state;
    const double P[4] = {400, 350, 310, 280};
    double t[4];
    for (int i = 0; i < 4; i++)
        t[i] = 20000.0 / (P[i] - 250.0);
    assert_near(t[0], 133.333333333, 1e-6);
    assert_near(t[3], 666.666666667, 1e-6);
    assert_int_equal(fit(CPD_PD_POWER, P, t, 4), CPD_OK);
    assert_all_finite(&res);
    for (int m = 0; m < 3; m++) {
        const cpd_pd_model_fit *f = &res.models[m];
        assert_int_equal(f->ok, 1);
        assert_true(close_rel(f->cp, 250, 1e-9));
        assert_true(close_rel(f->w_prime, 20000, 1e-9));
        for (int i = 0; i < 4; i++)
            assert_true(fabs(f->resid_s[i]) < 1e-7);
        assert_true(f->cp_se < 1e-6 && f->w_prime_se < 1e-4);
        /* zero residual: AIC = n ln(0) is undefined, never -inf */
        assert_int_equal(f->aic_valid, 0);
        assert_int_equal(f->aicc_valid, 0);
        assert_false(f->flags & CPD_PD_FLAG_NEGATIVE_PARAMETER);
    }
    /* the three-parameter fit on 2-parameter data: Pmax -> infinity, reported as failed */
    const cpd_pd_model_fit *f3 = &res.models[CPD_PD_THREE_PARAMETER];
    assert_int_equal(f3->ok, 0);
    assert_int_equal(f3->fail, CPD_PD_FAIL_P_MAX_DEGENERATE);
    assert_true(f3->flags & CPD_PD_FLAG_FIT_FAILED);
    assert_true(f3->flags & CPD_PD_FLAG_P_MAX_UNIDENTIFIABLE);
    assert_int_equal(f3->has_p_max, 0);
    assert_near(f3->p_max, 0, 0);
    assert_int_equal(res.has_best, 1);
    assert_true(res.best != CPD_PD_THREE_PARAMETER);
    /* the same with a fifth exact trial (the 3-p fit gets dof 2 and leave-one-out runs) */
    const double P5[5] = {400, 350, 310, 280, 265.5};
    double t5[5];
    for (int i = 0; i < 5; i++)
        t5[i] = 20000.0 / (P5[i] - 250.0);
    assert_int_equal(fit(CPD_PD_POWER, P5, t5, 5), CPD_OK);
    assert_all_finite(&res);
    assert_int_equal(res.models[CPD_PD_THREE_PARAMETER].ok, 0);
    assert_int_equal(res.models[CPD_PD_THREE_PARAMETER].fail, CPD_PD_FAIL_P_MAX_DEGENERATE);
    assert_true(close_rel(res.models[CPD_PD_HYPERBOLIC].cp, 250, 1e-9));
}

/* ---- scipy / numpy at test time ------------------------------------------------------------ */

typedef struct {
    cpd_pd_modality mod;
    double cp, w, pmax; /* generating values; pmax 0 for the 2-parameter hyperbola */
    size_t n;
    double t0[8]; /* target durations, s */
    double cv;    /* multiplicative noise on the duration */
} synth;

/* Invented but typical athletes (typical published ranges): cyclists, runners, a swimmer;
 * 2- and 3-parameter generators, 3 to 8 trials, 1.5-8 % noise on the durations. */
static const synth sets[] = {
    {CPD_PD_POWER, 265.4, 18730, 0, 4, {134, 251, 413, 702}, 0.04},
    {CPD_PD_POWER, 247.9, 21460, 1015, 5, {68, 142, 287, 505, 811}, 0.03},
    {CPD_PD_POWER, 301.2, 16380, 0, 3, {182, 421, 718}, 0.025},
    {CPD_PD_POWER, 228.3, 19910, 870, 6, {52, 97, 163, 298, 477, 742}, 0.035},
    {CPD_PD_SPEED, 4.372, 187.4, 0, 4, {151, 268, 447, 699}, 0.03},
    {CPD_PD_SPEED, 3.918, 231.6, 7.41, 5, {61, 132, 246, 418, 655}, 0.025},
    {CPD_PD_POWER, 198.7, 14250, 0, 5, {125, 230, 390, 610, 870}, 0.08},
    {CPD_PD_POWER, 342.5, 24870, 1320, 8, {44, 71, 118, 186, 274, 391, 566, 853}, 0.02},
    {CPD_PD_SPEED, 1.384, 21.5, 0, 4, {118, 247, 395, 612}, 0.02},
    {CPD_PD_POWER, 412.6, 26310, 1480, 5, {75, 148, 263, 417, 688}, 0.03},
    {CPD_PD_POWER, 286.1, 17420, 851, 4, {83, 171, 312, 498}, 0.015},
    {CPD_PD_POWER, 173.8, 11960, 0, 5, {141, 212, 355, 540, 810}, 0.05},
};
#define NSETS (sizeof sets / sizeof sets[0])

/* Intensities from the generating model, durations with noise. */
static void make_set(const synth *s, rng *r, double *x, double *t)
{
    double a = s->pmax > 0 ? s->w / (s->pmax - s->cp) : 0;
    for (size_t i = 0; i < s->n; i++) {
        x[i] = s->cp + s->w / (s->t0[i] + a);
        t[i] = s->t0[i] * (1 + s->cv * rng_normal(r));
    }
}

/* scipy.optimize.curve_fit (nonlinear; ftol = xtol = gtol = 1e-12, "trf", analytic Jacobian) and
 * numpy.linalg.lstsq (linear)
 * on the same trials: estimates, SEs (curve_fit's default absolute_sigma=False scales by s^2 as we
 * do) and RSS must agree at 1e-6 relative, the bar; both converge to about 1e-12, so the
 * bar leaves room only for the conditioning of the SEs. */
static void against_scipy(void **state)
{
    (void)state;
    static double x[NSETS][8], t[NSETS][8];
    static char text[16384];
    text[0] = '\0';
    rng r = {0x5eed2385ull};
    for (size_t k = 0; k < NSETS; k++) {
        make_set(&sets[k], &r, x[k], t[k]);
        snprintf(text + strlen(text), sizeof text - strlen(text), "# set %zu\n", k);
        for (size_t i = 0; i < sets[k].n; i++)
            snprintf(text + strlen(text), sizeof text - strlen(text), "%.17g %.17g\n", x[k][i], t[k][i]);
    }
    static double ref[NSETS * 28];
    const double NUL = -12345.678;
    assert_int_equal(pyref_run("pd_ref.py", text, ref, (int)(NSETS * 28), NUL), (int)(NSETS * 28));
    int three_matched = 0;
    for (size_t k = 0; k < NSETS; k++) {
        assert_int_equal(fit(sets[k].mod, x[k], t[k], sets[k].n), CPD_OK);
        assert_all_finite(&res);
        for (int m = 0; m < CPD_PD_NMODELS; m++) {
            const double *q = ref + k * 28 + (size_t)m * 7;
            const cpd_pd_model_fit *f = &res.models[m];
            if (q[0] == NUL) {
                /* scipy fits every 2-parameter set; its 3-p fit fails where Pmax runs off */
                assert_true(m == CPD_PD_THREE_PARAMETER);
                if (f->ok)
                    assert_true(f->flags & CPD_PD_FLAG_P_MAX_UNIDENTIFIABLE);
                continue;
            }
            if (m == CPD_PD_THREE_PARAMETER)
                three_matched++; /* a finite reference optimum must be found here too */
            print_message("set %zu %s: cp %.10g/%.10g w %.10g/%.10g se %.8g/%.8g %.8g/%.8g\n", k,
                          cpd_pd_model_name((cpd_pd_model)m), f->cp, q[0], f->w_prime, q[1], f->cp_se, q[3],
                          f->w_prime_se, q[4]);
            assert_int_equal(f->ok, 1);
            assert_true(close_rel(f->cp, q[0], 1e-6));
            assert_true(close_rel(f->w_prime, q[1], 1e-6));
            assert_true(close_rel(f->cp_se, q[3], 1e-6));
            assert_true(close_rel(f->w_prime_se, q[4], 1e-6));
            assert_true(close_rel(f->rss, q[6], 1e-6));
            if (m == CPD_PD_THREE_PARAMETER) {
                assert_true(close_rel(f->p_max, q[2], 1e-6));
                assert_true(close_rel(f->p_max_se, q[5], 1e-6));
            }
        }
    }
    /* the 3-parameter comparison must not pass vacuously: six sets are 3-parameter generated */
    assert_true(three_matched >= 5);
}

/* ---- leave-one-out, by hand ---------------------------------------------------------------- */

/* Three trials: dropping one leaves two, through which every 2-parameter model passes exactly:
 * CP = (P_a t_a − P_b t_b)/(t_a − t_b), W′ = (P_a − CP) t_a. By hand for
 * (400 W, 150 s), (330 W, 300 s), (290 W, 620 s):
 *   drop 1: CP = (99000 − 179800)/(300 − 620) = 252.5,       W′ = 77.5·300  = 23250
 *   drop 2: CP = (60000 − 179800)/(150 − 620) = 254.893617…, W′ = 145.106383·150 = 21765.957…
 *   drop 3: CP = (60000 − 99000)/(150 − 300)  = 260,         W′ = 140·150   = 21000 */
static void loo_by_hand(void **state)
{
    (void)state;
    const double P[3] = {400, 330, 290}, t[3] = {150, 300, 620};
    const double cp_drop[3] = {252.5, 119800.0 / 470.0, 260};
    const double w_drop[3] = {23250, (400 - 119800.0 / 470.0) * 150, 21000};
    assert_int_equal(fit(CPD_PD_POWER, P, t, 3), CPD_OK);
    for (int m = 0; m < 3; m++) {
        const cpd_pd_model_fit *f = &res.models[m];
        assert_int_equal(f->has_loo, 1);
        for (int i = 0; i < 3; i++) {
            assert_int_equal(f->loo_valid[i], 1);
            assert_true(close_rel(f->cp + f->loo_d_cp[i], cp_drop[i], 1e-9));
            assert_true(close_rel(f->w_prime + f->loo_d_w_prime[i], w_drop[i], 1e-9));
        }
    }
    /* the three-parameter model needs 4 trials, so none of its refits exist at n = 3 or 4 */
    assert_int_equal(res.models[CPD_PD_THREE_PARAMETER].has_loo, 0);
    /* with leave-one-out switched off nothing is computed */
    cpd_pd_opts o;
    cpd_pd_opts_init(&o);
    o.loo = 0;
    assert_int_equal(cpd_pd_fit(ws, CPD_PD_POWER, P, t, 3, &o, &res, NULL), CPD_OK);
    assert_int_equal(res.models[CPD_PD_HYPERBOLIC].has_loo, 0);
    assert_near(res.models[CPD_PD_HYPERBOLIC].loo_d_cp[0], 0, 0);
}

/* Five trials from the three-parameter generator: each 3-p refit uses 4 trials, and its change
 * must equal a direct fit of the four trials. The refit starts from the all-trials answer and
 * stops at a relative change of 1e-10, the direct fit starts cold and stops at 1e-14: they agree to
 * a few 1e-10, so 1e-8 leaves room. */
static void loo_three_parameter_matches_direct_refits(void **state)
{
    (void)state;
    rng r = {77};
    double x[5], t[5];
    make_set(&sets[1], &r, x, t);
    assert_int_equal(fit(CPD_PD_POWER, x, t, 5), CPD_OK);
    cpd_pd_model_fit all = res.models[CPD_PD_THREE_PARAMETER];
    assert_int_equal(all.ok, 1);
    assert_int_equal(all.has_loo, 1);
    int valid = 0;
    for (size_t i = 0; i < 5; i++) {
        double sx[4], st[4];
        size_t j = 0;
        for (size_t l = 0; l < 5; l++)
            if (l != i) {
                sx[j] = x[l];
                st[j] = t[l];
                j++;
            }
        assert_int_equal(fit(CPD_PD_POWER, sx, st, 4), CPD_OK);
        const cpd_pd_model_fit *f = &res.models[CPD_PD_THREE_PARAMETER];
        assert_int_equal(all.loo_valid[i], f->ok);
        if (f->ok) {
            assert_true(close_rel(all.cp + all.loo_d_cp[i], f->cp, 1e-8));
            assert_true(close_rel(all.w_prime + all.loo_d_w_prime[i], f->w_prime, 1e-8));
            valid++;
        }
    }
    assert_true(valid >= 4);
}

/* ---- statistics by hand -------------------------------------------------------------------- */

/* AIC = n ln(RSS/n) + 2k, AICc = AIC + 2k(k+1)/(n−k−1) (Hurvich & Tsai 1989 Biometrika 76:297),
 * CI = estimate ± t(0.975, n−k)·SE with t(0.975, 2) = 4.302652729911275 (closed form for 2 dof:
 * t = 0.95 sqrt(2 / (1 − 0.95^2))); GSL's quantile is within 1e-10 of it, hence 1e-9 on the CI
 * half-width. %SEE = 100 SE/|est|. */
static void statistics_by_hand(void **state)
{
    (void)state;
    const double P[4] = {405.5, 352.1, 311.8, 283.4}, t[4] = {128.7, 207.3, 322.9, 681.2};
    assert_int_equal(fit(CPD_PD_POWER, P, t, 4), CPD_OK);
    for (int m = 0; m < 3; m++) {
        const cpd_pd_model_fit *f = &res.models[m];
        assert_int_equal(f->ok, 1);
        assert_int_equal(f->dof, 2);
        assert_int_equal(f->aicc_valid, 1);
        double aic = 4 * log(f->rss / 4) + 4;
        assert_true(close_rel(f->aic, aic, 1e-12));
        assert_true(close_rel(f->aicc, aic + 12.0, 1e-12));
        double q = 4.302652729911275;
        assert_true(close_rel(f->cp - f->cp_ci95[0], q * f->cp_se, 1e-9));
        assert_true(close_rel(f->w_prime_ci95[1] - f->w_prime, q * f->w_prime_se, 1e-9));
        assert_true(close_rel(f->see_cp_pct, 100 * f->cp_se / f->cp, 1e-12));
        assert_true(close_rel(f->cp_se * f->cp_se, f->cov[0], 1e-12));
        assert_true(fabs(f->cov[1] - f->cov[3]) <= 1e-12 * fabs(f->cov[1]));
        for (int i = 0; i < 4; i++) {
            double pred = f->w_prime / (P[i] - f->cp);
            assert_true(fabs(f->resid_s[i] - (t[i] - pred)) < 1e-9);
            assert_true(fabs(f->resid_pct[i] - 100 * (t[i] - pred) / t[i]) < 1e-9);
        }
    }
    assert_int_equal(res.models[CPD_PD_HYPERBOLIC].rss_var, CPD_PD_Y_DURATION);
    assert_int_equal(res.models[CPD_PD_LINEAR_TOTAL].rss_var, CPD_PD_Y_WORK);
    assert_int_equal(res.models[CPD_PD_LINEAR_INVERSE].rss_var, CPD_PD_Y_INTENSITY);
    /* the hyperbolic rss is the sum of its squared duration residuals */
    double ss = 0;
    for (int i = 0; i < 4; i++)
        ss += res.models[CPD_PD_HYPERBOLIC].resid_s[i] * res.models[CPD_PD_HYPERBOLIC].resid_s[i];
    assert_true(close_rel(res.models[CPD_PD_HYPERBOLIC].rss, ss, 1e-9));
    /* three-parameter with 4 trials: dof 1, AICc undefined (n − k − 1 = 0) */
    const cpd_pd_model_fit *f3 = &res.models[CPD_PD_THREE_PARAMETER];
    if (f3->ok) {
        assert_int_equal(f3->dof, 1);
        assert_int_equal(f3->aicc_valid, 0);
    }
    /* 3 trials, 2 parameters: AICc undefined too */
    assert_int_equal(fit(CPD_PD_POWER, P, t, 3), CPD_OK);
    assert_int_equal(res.models[CPD_PD_HYPERBOLIC].aic_valid, 1);
    assert_int_equal(res.models[CPD_PD_HYPERBOLIC].aicc_valid, 0);
}

/* The three-parameter covariance in (CP, W′, Pmax) must agree with the delta method done here
 * numerically: Pmax = CP + W′/a is checked against the fitted time offset, and SE(Pmax) against
 * the statement that Var(Pmax) >= 0 and the matrix is symmetric. */
static void three_parameter_consistency(void **state)
{
    (void)state;
    rng r = {4242};
    double x[8], t[8];
    make_set(&sets[7], &r, x, t);
    assert_int_equal(fit(CPD_PD_POWER, x, t, 8), CPD_OK);
    const cpd_pd_model_fit *f = &res.models[CPD_PD_THREE_PARAMETER];
    assert_int_equal(f->ok, 1);
    assert_true(close_rel(f->p_max, f->cp + f->w_prime / f->t_offset_s, 1e-12));
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++)
            assert_true(fabs(f->cov[i * 3 + j] - f->cov[j * 3 + i]) <= 1e-9 * sqrt(f->cov[i * 4] * f->cov[j * 4]));
    assert_true(close_rel(f->p_max_se, sqrt(f->cov[8]), 1e-12));
    /* with a 44-s trial and 2 % noise Pmax is identifiable and the 3-p fit is reported plainly */
    assert_false(f->flags & CPD_PD_FLAG_P_MAX_UNIDENTIFIABLE);
    assert_true(f->p_max > x[0]);
    for (size_t i = 0; i < 8; i++) {
        double pred = f->w_prime / (x[i] - f->cp) - f->w_prime / (f->p_max - f->cp);
        assert_true(fabs(f->resid_s[i] - (t[i] - pred)) < 1e-8);
    }
}

/* ---- flags ---------------------------------------------------------------------------------- */

static void flags_two_trials(void **state)
{
    (void)state;
    const double P[2] = {372.5, 291.3}, t[2] = {183.4, 612.9};
    assert_int_equal(fit(CPD_PD_POWER, P, t, 2), CPD_OK);
    assert_all_finite(&res);
    assert_true(res.data_flags & CPD_PD_FLAG_FEW_TRIALS);
    assert_true(res.data_flags & CPD_PD_FLAG_TWO_TRIALS_EXACT);
    assert_true(res.flags & CPD_PD_FLAG_MODELS_IDENTICAL);
    assert_int_equal(res.has_best, 1);
    assert_int_equal(res.best, CPD_PD_HYPERBOLIC);
    /* exact line through the two trials, by hand: CP = (P1 t1 − P2 t2)/(t1 − t2) */
    double cp = (372.5 * 183.4 - 291.3 * 612.9) / (183.4 - 612.9), w = (372.5 - cp) * 183.4;
    for (int m = 0; m < 3; m++) {
        const cpd_pd_model_fit *f = &res.models[m];
        assert_int_equal(f->ok, 1);
        assert_true(close_rel(f->cp, cp, 1e-9));
        assert_true(close_rel(f->w_prime, w, 1e-9));
        assert_true(f->flags & CPD_PD_FLAG_TWO_TRIALS_EXACT);
        assert_int_equal(f->has_se, 0);
        assert_int_equal(f->see_valid, 0);
        assert_int_equal(f->aic_valid, 0);
        assert_near(f->cp_se, 0, 0);
        assert_near(f->cp_ci95[0], 0, 0);
        assert_int_equal(f->has_loo, 0);
    }
    assert_int_equal(res.models[CPD_PD_THREE_PARAMETER].fail, CPD_PD_FAIL_TOO_FEW_TRIALS);
    /* predictions from an exact fit have a value but no interval */
    cpd_pd_pred p;
    assert_int_equal(cpd_pd_predict_time(&res.models[CPD_PD_HYPERBOLIC], 372.5, &p), CPD_OK);
    assert_true(close_rel(p.value, 183.4, 1e-9));
    assert_int_equal(p.ci_valid, 0);
}

static void flags_short_and_long_trials(void **state)
{
    (void)state;
    const double P[4] = {455.2, 362.7, 301.9, 268.4}, t1[4] = {94.8, 231.6, 487.1, 845.3};
    assert_int_equal(fit(CPD_PD_POWER, P, t1, 4), CPD_OK);
    assert_true(res.data_flags & CPD_PD_FLAG_SHORT_TRIAL);
    assert_false(res.data_flags & CPD_PD_FLAG_LONG_TRIAL);
    assert_false(res.data_flags & CPD_PD_FLAG_FEW_TRIALS);
    const double t2[4] = {128.4, 231.6, 487.1, 1105.8};
    assert_int_equal(fit(CPD_PD_POWER, P, t2, 4), CPD_OK);
    assert_false(res.data_flags & CPD_PD_FLAG_SHORT_TRIAL);
    assert_true(res.data_flags & CPD_PD_FLAG_LONG_TRIAL);
    assert_true(res.flags & CPD_PD_FLAG_LONG_TRIAL);
    /* exactly 120 s and 900 s are inside the window */
    const double t3[4] = {120, 231.6, 487.1, 900};
    assert_int_equal(fit(CPD_PD_POWER, P, t3, 4), CPD_OK);
    assert_false(res.data_flags & (CPD_PD_FLAG_SHORT_TRIAL | CPD_PD_FLAG_LONG_TRIAL));
}

static void flags_durations_close(void **state)
{
    (void)state;
    /* longest 1.6 x shortest */
    const double P[3] = {352.4, 327.9, 309.6}, t1[3] = {312.5, 398.7, 501.2};
    assert_int_equal(fit(CPD_PD_POWER, P, t1, 3), CPD_OK);
    assert_true(res.data_flags & CPD_PD_FLAG_DURATIONS_CLOSE);
    /* wide spread, but 402 and 431 s are within 10 % of each other */
    const double P4[4] = {420.1, 338.5, 333.2, 281.7}, t2[4] = {151.3, 402.0, 431.0, 861.2};
    assert_int_equal(fit(CPD_PD_POWER, P4, t2, 4), CPD_OK);
    assert_true(res.data_flags & CPD_PD_FLAG_DURATIONS_CLOSE);
    /* 3, 7 and 12 min: not close */
    const double t3[3] = {181.2, 419.5, 722.8};
    assert_int_equal(fit(CPD_PD_POWER, P, t3, 3), CPD_OK);
    assert_false(res.data_flags & CPD_PD_FLAG_DURATIONS_CLOSE);
}

static void flags_see_high(void **state)
{
    (void)state;
    /* a noisy set: the hyperbolic %SEEs exceed both limits */
    const double P[4] = {401.3, 352.8, 318.4, 291.5}, t[4] = {160.2, 171.9, 401.3, 512.8};
    assert_int_equal(fit(CPD_PD_POWER, P, t, 4), CPD_OK);
    const cpd_pd_model_fit *f = &res.models[CPD_PD_HYPERBOLIC];
    assert_int_equal(f->ok, 1);
    assert_true(f->see_cp_pct > 5.0);
    assert_true(f->see_w_prime_pct > 10.0);
    assert_true(f->flags & CPD_PD_FLAG_SEE_CP_HIGH);
    assert_true(f->flags & CPD_PD_FLAG_SEE_W_PRIME_HIGH);
    /* a tidy set: neither */
    const double t2[4] = {134.1, 199.2, 335.0, 664.1};
    const double P2[4] = {400, 350, 310, 280};
    assert_int_equal(fit(CPD_PD_POWER, P2, t2, 4), CPD_OK);
    f = &res.models[CPD_PD_HYPERBOLIC];
    assert_true(f->see_cp_pct < 5.0 && f->see_w_prime_pct < 10.0);
    assert_false(f->flags & (CPD_PD_FLAG_SEE_CP_HIGH | CPD_PD_FLAG_SEE_W_PRIME_HIGH));
}

static void flags_p_max_unidentifiable(void **state)
{
    (void)state;
    /* a 3-parameter athlete tested only between 2.5 and 14 min: even if the fit converges, Pmax is
     * extrapolated (the design note in pd.c), so it is flagged and never the best model */
    const double cp = 251.7, w = 20480, pmax = 940, a = w / (pmax - cp);
    const double t0[5] = {151, 236, 372, 560, 842};
    double P[5], t[5];
    rng r = {99};
    for (int i = 0; i < 5; i++) {
        P[i] = cp + w / (t0[i] + a);
        t[i] = t0[i] * (1 + 0.01 * rng_normal(&r));
    }
    assert_int_equal(fit(CPD_PD_POWER, P, t, 5), CPD_OK);
    const cpd_pd_model_fit *f = &res.models[CPD_PD_THREE_PARAMETER];
    assert_true(f->flags & CPD_PD_FLAG_P_MAX_UNIDENTIFIABLE);
    assert_int_equal(res.has_best, 1);
    assert_true(res.best != CPD_PD_THREE_PARAMETER);
}

static void flags_negative_and_no_valid_model(void **state)
{
    (void)state;
    /* durations barely change with power: every 2-parameter CP comes out negative */
    const double P[3] = {420, 360, 300}, t[3] = {200, 210, 230};
    assert_int_equal(fit(CPD_PD_POWER, P, t, 3), CPD_OK);
    assert_all_finite(&res);
    for (int m = 0; m < 3; m++) {
        assert_int_equal(res.models[m].ok, 1);
        assert_true(res.models[m].cp < 0);
        assert_true(res.models[m].flags & CPD_PD_FLAG_NEGATIVE_PARAMETER);
    }
    assert_int_equal(res.has_best, 0);
    assert_true(res.flags & CPD_PD_FLAG_NO_VALID_MODEL);
    /* a negative model cannot predict */
    cpd_pd_pred p;
    assert_int_equal(cpd_pd_predict_time(&res.models[CPD_PD_LINEAR_TOTAL], 500, &p), CPD_ENODATA);
    assert_int_equal(p.status, CPD_PD_PRED_INVALID_MODEL);
    assert_int_equal(p.valid, 0);
}

static void flags_diverged(void **state)
{
    (void)state;
    /* durations rise with power: the linear W′ is negative and the hyperbola's least-squares
     * optimum is at CP = −infinity, reported as a failure, not as a number like −3e16 */
    const double P[3] = {300, 350, 400}, t[3] = {200, 400, 700};
    assert_int_equal(fit(CPD_PD_POWER, P, t, 3), CPD_OK);
    assert_all_finite(&res);
    assert_int_equal(res.models[CPD_PD_HYPERBOLIC].ok, 0);
    assert_int_equal(res.models[CPD_PD_HYPERBOLIC].fail, CPD_PD_FAIL_DIVERGED);
    assert_true(res.models[CPD_PD_HYPERBOLIC].flags & CPD_PD_FLAG_FIT_FAILED);
    assert_true(res.models[CPD_PD_LINEAR_TOTAL].w_prime < 0);
    assert_true(res.models[CPD_PD_LINEAR_TOTAL].flags & CPD_PD_FLAG_NEGATIVE_PARAMETER);
    assert_true(res.flags & CPD_PD_FLAG_NO_VALID_MODEL);
    cpd_pd_pred p;
    assert_int_equal(cpd_pd_predict_time(&res.models[CPD_PD_HYPERBOLIC], 500, &p), CPD_ENODATA);
    assert_int_equal(p.status, CPD_PD_PRED_NO_FIT);
}

static void flags_implausible(void **state)
{
    (void)state;
    /* power typed in tenths of a watt by mistake: CP about 2500 "W" */
    const double P[3] = {4000, 3500, 3100}, t[3] = {133.3, 200.0, 333.3};
    assert_int_equal(fit(CPD_PD_POWER, P, t, 3), CPD_OK);
    assert_true(res.models[CPD_PD_HYPERBOLIC].cp > 700);
    assert_true(res.models[CPD_PD_HYPERBOLIC].flags & CPD_PD_FLAG_IMPLAUSIBLE_PARAMETER);
    assert_true(res.flags & CPD_PD_FLAG_IMPLAUSIBLE_PARAMETER);
    /* running speeds typed in km/h: CS about 15 "m/s" */
    const double v[3] = {19.8, 17.6, 16.2}, tv[3] = {181.0, 402.5, 790.4};
    assert_int_equal(fit(CPD_PD_SPEED, v, tv, 3), CPD_OK);
    assert_true(res.models[CPD_PD_HYPERBOLIC].flags & CPD_PD_FLAG_IMPLAUSIBLE_PARAMETER);
    /* the same speeds in m/s are plausible */
    double vm[3];
    for (int i = 0; i < 3; i++)
        vm[i] = v[i] / 3.6;
    assert_int_equal(fit(CPD_PD_SPEED, vm, tv, 3), CPD_OK);
    assert_false(res.models[CPD_PD_HYPERBOLIC].flags & CPD_PD_FLAG_IMPLAUSIBLE_PARAMETER);
    cpd_range rc, rw, rp;
    cpd_pd_ranges(CPD_PD_SPEED, &rc, &rw, &rp);
    assert_near(rc.lo, 0.3, 0);
    assert_near(rw.hi, 1500, 0);
    assert_near(rp.hi, 15, 0);
    cpd_pd_ranges(CPD_PD_POWER, &rc, NULL, &rp);
    assert_near(rc.hi, 700, 0);
    assert_near(rp.hi, 3000, 0);
}

static void flags_trial_at_or_below_cp(void **state)
{
    (void)state;
    /* the 310-W trial outlasted the 300-W one: the work-time line gets a slope of 301.8 W, above
     * the 300-W trial (by hand: slope = Sum dt dW / Sum dt^2 = 303833333/1006667 = 301.82) */
    const double P[3] = {400, 300, 310}, t[3] = {100, 1000, 1500};
    assert_int_equal(fit(CPD_PD_POWER, P, t, 3), CPD_OK);
    const cpd_pd_model_fit *f = &res.models[CPD_PD_LINEAR_TOTAL];
    assert_true(close_rel(f->cp, 303833333.33333333 / 1006666.6666666667, 1e-9));
    assert_true(f->flags & CPD_PD_FLAG_TRIAL_AT_OR_BELOW_CP);
    assert_int_equal(f->resid_valid[1], 0); /* no finite predicted duration at 300 W */
    assert_near(f->resid_s[1], 0, 0);
    assert_true(res.has_best);
    assert_true(res.best != CPD_PD_LINEAR_TOTAL);
}

static void flags_fit_failed(void **state)
{
    (void)state;
    /* all trials at one power: nothing is determined */
    const double P[3] = {310, 310, 310}, t[3] = {300.5, 342.1, 287.9};
    assert_int_equal(fit(CPD_PD_POWER, P, t, 3), CPD_OK);
    assert_all_finite(&res);
    for (int m = 0; m < CPD_PD_NMODELS; m++) {
        assert_int_equal(res.models[m].ok, 0);
        assert_true(res.models[m].flags & CPD_PD_FLAG_FIT_FAILED);
    }
    assert_int_equal(res.models[CPD_PD_HYPERBOLIC].fail, CPD_PD_FAIL_SINGULAR);
    assert_int_equal(res.models[CPD_PD_LINEAR_TOTAL].fail, CPD_PD_FAIL_SINGULAR);
    assert_int_equal(res.models[CPD_PD_THREE_PARAMETER].fail, CPD_PD_FAIL_TOO_FEW_TRIALS);
    assert_true(res.flags & CPD_PD_FLAG_NO_VALID_MODEL);
    /* all trials of one duration: likewise */
    const double P2[4] = {401, 352, 318, 290}, t2[4] = {300, 300, 300, 300};
    assert_int_equal(fit(CPD_PD_POWER, P2, t2, 4), CPD_OK);
    for (int m = 0; m < CPD_PD_NMODELS; m++)
        assert_int_equal(res.models[m].fail, CPD_PD_FAIL_SINGULAR);
}

static void flag_names_and_texts(void **state)
{
    (void)state;
    for (int i = 0; i < CPD_PD_NFLAGS; i++) {
        unsigned b = 1u << i;
        for (int mod = 0; mod < 2; mod++) {
            const char *nm = cpd_pd_flag_name(b, (cpd_pd_modality)mod);
            const char *tx = cpd_pd_flag_text(b, (cpd_pd_modality)mod);
            assert_non_null(nm);
            assert_non_null(tx);
            assert_true(strlen(tx) > 40);
            for (const char *c = nm; *c; c++)
                assert_true(islower((unsigned char)*c) || *c == '_');
            for (int j = 0; j < i; j++)
                assert_string_not_equal(nm, cpd_pd_flag_name(1u << j, (cpd_pd_modality)mod));
        }
    }
    assert_string_equal(cpd_pd_flag_name(CPD_PD_FLAG_SEE_CP_HIGH, CPD_PD_POWER), "see_cp_high");
    assert_string_equal(cpd_pd_flag_name(CPD_PD_FLAG_SEE_CP_HIGH, CPD_PD_SPEED), "see_cs_high");
    assert_string_equal(cpd_pd_flag_name(CPD_PD_FLAG_SEE_W_PRIME_HIGH, CPD_PD_SPEED), "see_d_prime_high");
    assert_non_null(strstr(cpd_pd_flag_text(CPD_PD_FLAG_LONG_TRIAL, CPD_PD_POWER), "15 min"));
    assert_null(cpd_pd_flag_name(0, CPD_PD_POWER));
    assert_null(cpd_pd_flag_name(3, CPD_PD_POWER));
    assert_null(cpd_pd_flag_text(1u << CPD_PD_NFLAGS, CPD_PD_POWER));
    for (int f = 0; f < CPD_PD_NFAILS; f++)
        assert_true(strlen(cpd_pd_fail_text((cpd_pd_fail)f)) > 5);
    assert_string_equal(cpd_pd_fail_text((cpd_pd_fail)99), "unknown failure");
    for (int s = 0; s < CPD_PD_NPREDS; s++)
        assert_true(strlen(cpd_pd_pred_text((cpd_pd_pred_status)s)) > 5);
    assert_string_equal(cpd_pd_pred_text((cpd_pd_pred_status)99), "unknown");
    assert_non_null(strstr(cpd_pd_best_rule(), "Patoz"));
    assert_non_null(strstr(cpd_pd_best_rule(), "Hill"));
}

/* ---- model selection ------------------------------------------------------------------------ */

static void best_is_lowest_combined_see(void **state)
{
    (void)state;
    rng r = {31337};
    double x[8], t[8];
    for (size_t k = 0; k < NSETS; k++) {
        make_set(&sets[k], &r, x, t);
        assert_int_equal(fit(sets[k].mod, x, t, sets[k].n), CPD_OK);
        if (!res.has_best)
            continue;
        const cpd_pd_model_fit *b = &res.models[res.best];
        double sb = b->see_cp_pct + b->see_w_prime_pct;
        for (int m = 0; m < CPD_PD_NMODELS; m++) {
            const cpd_pd_model_fit *f = &res.models[m];
            int eligible = f->ok && f->see_valid && f->cp > 0 && f->w_prime > 0 &&
                           !(f->flags & (CPD_PD_FLAG_TRIAL_AT_OR_BELOW_CP | CPD_PD_FLAG_P_MAX_UNIDENTIFIABLE));
            if (eligible)
                assert_true(sb <= (f->see_cp_pct + f->see_w_prime_pct) * (1 + 1e-6));
        }
        assert_int_equal(res.flags & ~(res.data_flags | b->flags), 0);
    }
}

static void model_mask(void **state)
{
    (void)state;
    const double P[4] = {405.5, 352.1, 311.8, 283.4}, t[4] = {128.7, 207.3, 322.9, 681.2};
    cpd_pd_opts o;
    cpd_pd_opts_init(&o);
    assert_int_equal(o.models, CPD_PD_ALL_MODELS);
    o.models = CPD_PD_MODEL_BIT(CPD_PD_LINEAR_INVERSE);
    assert_int_equal(cpd_pd_fit(ws, CPD_PD_POWER, P, t, 4, &o, &res, NULL), CPD_OK);
    assert_int_equal(res.models[CPD_PD_LINEAR_INVERSE].ok, 1);
    assert_int_equal(res.models[CPD_PD_HYPERBOLIC].fail, CPD_PD_FAIL_NOT_REQUESTED);
    assert_int_equal(res.models[CPD_PD_HYPERBOLIC].flags, 0);
    assert_int_equal(res.best, CPD_PD_LINEAR_INVERSE);
    /* three-parameter alone still gets its hyperbolic start */
    o.models = CPD_PD_MODEL_BIT(CPD_PD_THREE_PARAMETER);
    assert_int_equal(cpd_pd_fit(ws, CPD_PD_POWER, P, t, 4, &o, &res, NULL), CPD_OK);
    assert_int_equal(res.models[CPD_PD_HYPERBOLIC].ok, 0);
    double cp3 = res.models[CPD_PD_THREE_PARAMETER].cp;
    assert_int_equal(fit(CPD_PD_POWER, P, t, 4), CPD_OK);
    assert_true(res.models[CPD_PD_THREE_PARAMETER].cp == cp3);
}

static void model_names(void **state)
{
    (void)state;
    const char *names[4] = {"hyperbolic", "linear-total", "linear-inverse", "three-parameter"};
    for (int m = 0; m < 4; m++) {
        cpd_pd_model got;
        assert_string_equal(cpd_pd_model_name((cpd_pd_model)m), names[m]);
        assert_int_equal(cpd_pd_model_parse(names[m], &got), CPD_OK);
        assert_int_equal(got, m);
    }
    cpd_pd_model got;
    assert_int_equal(cpd_pd_model_parse("3p", &got), CPD_EUSAGE);
    assert_int_equal(cpd_pd_model_parse(NULL, &got), CPD_EUSAGE);
    assert_string_equal(cpd_pd_model_name((cpd_pd_model)7), "unknown");
}

/* ---- predictions ---------------------------------------------------------------------------- */

/* the 2-parameter identity: CP 250 W, W′ 20 kJ, P 400 W gives 133.3 s. */
static void predictions_arithmetic(void **state)
{
    (void)state;
    const double P[4] = {400, 350, 310, 280};
    double t[4];
    for (int i = 0; i < 4; i++)
        t[i] = 20000.0 / (P[i] - 250.0);
    assert_int_equal(fit(CPD_PD_POWER, P, t, 4), CPD_OK);
    const cpd_pd_model_fit *f = &res.models[CPD_PD_HYPERBOLIC];
    cpd_pd_pred p;
    assert_int_equal(cpd_pd_predict_time(f, 400, &p), CPD_OK);
    assert_int_equal(p.status, CPD_PD_PRED_OK);
    assert_int_equal(p.valid, 1);
    assert_true(close_rel(p.value, 400.0 / 3.0, 1e-9));
    assert_int_equal(p.ci_valid, 1);
    assert_true(p.ci95[0] <= p.value && p.value <= p.ci95[1]);
    assert_true(p.ci95[1] - p.ci95[0] < 1e-6); /* exact data: no uncertainty */
    /* at and below CP: no W′-limited failure, never a negative or infinite time */
    assert_int_equal(cpd_pd_predict_time(f, 250, &p), CPD_OK);
    assert_int_equal(p.status, CPD_PD_PRED_NOT_W_PRIME_LIMITED);
    assert_int_equal(p.valid, 0);
    assert_near(p.value, 0, 0);
    assert_int_equal(cpd_pd_predict_time(f, 180.5, &p), CPD_OK);
    assert_int_equal(p.status, CPD_PD_PRED_NOT_W_PRIME_LIMITED);
    /* power for 20 min: 250 + 20000/1200 */
    assert_int_equal(cpd_pd_predict_intensity(f, 1200, &p), CPD_OK);
    assert_true(close_rel(p.value, 250 + 20000.0 / 1200, 1e-9));
    /* speed: CS 4.0 m/s, D′ 200 m; 5000 m takes (5000 − 200)/4 = 1200 s */
    const double v[4] = {4.0 + 200.0 / 150, 4.0 + 200.0 / 300, 4.0 + 200.0 / 600, 4.0 + 200.0 / 900};
    const double tv[4] = {150, 300, 600, 900};
    assert_int_equal(fit(CPD_PD_SPEED, v, tv, 4), CPD_OK);
    f = &res.models[CPD_PD_LINEAR_TOTAL];
    assert_true(close_rel(f->cp, 4.0, 1e-9));
    assert_int_equal(cpd_pd_predict_distance_time(f, 5000, &p), CPD_OK);
    assert_true(close_rel(p.value, 1200, 1e-9));
    assert_int_equal(cpd_pd_predict_distance_time(f, 150, &p), CPD_OK);
    assert_int_equal(p.status, CPD_PD_PRED_WITHIN_D_PRIME);
    assert_int_equal(p.valid, 0);
    /* a power model has no distance */
    assert_int_equal(fit(CPD_PD_POWER, P, t, 4), CPD_OK);
    assert_int_equal(cpd_pd_predict_distance_time(&res.models[CPD_PD_HYPERBOLIC], 5000, &p), CPD_EUSAGE);
}

/* Three-parameter predictions: time, intensity and distance must invert one another, and the
 * time below the offset (intensity above Pmax) is refused. */
static void predictions_three_parameter(void **state)
{
    (void)state;
    rng r = {2024};
    double x[5], t[5];
    make_set(&sets[5], &r, x, t); /* a runner, 3-p generated with vmax 7.41 m/s */
    assert_int_equal(fit(CPD_PD_SPEED, x, t, 5), CPD_OK);
    const cpd_pd_model_fit *f = &res.models[CPD_PD_THREE_PARAMETER];
    assert_int_equal(f->ok, 1);
    cpd_pd_pred p, q, d;
    const double v = 5.137;
    assert_int_equal(cpd_pd_predict_time(f, v, &p), CPD_OK);
    double want = f->w_prime / (v - f->cp) - f->w_prime / (f->p_max - f->cp);
    assert_true(close_rel(p.value, want, 1e-12));
    assert_int_equal(cpd_pd_predict_intensity(f, p.value, &q), CPD_OK);
    assert_true(close_rel(q.value, v, 1e-12));
    assert_int_equal(cpd_pd_predict_distance_time(f, v * p.value, &d), CPD_OK);
    assert_true(close_rel(d.value, p.value, 1e-9));
    assert_true(p.ci_valid && d.ci_valid && q.ci_valid);
    /* the distance interval against the delta method with a numerical gradient of
     * t(D; CS, D′, vmax) from the closed form t = D′/(v − CS) − D′/(vmax − CS) solved by bisection */
    double D = v * p.value, th[3] = {f->cp, f->w_prime, f->p_max}, g[3];
    for (int j = 0; j < 3; j++) {
        double hi_lo[2];
        for (int s = 0; s < 2; s++) {
            double b[3] = {th[0], th[1], th[2]};
            double h = 1e-6 * fabs(th[j]);
            b[j] += s ? h : -h;
            double lo = b[0] * (1 + 1e-12), up = b[2]; /* speed between CS and vmax */
            for (int it = 0; it < 200; it++) {
                double mid = 0.5 * (lo + up);
                double tm = b[1] / (mid - b[0]) - b[1] / (b[2] - b[0]);
                if (mid * tm > D)
                    lo = mid;
                else
                    up = mid;
            }
            double vv = 0.5 * (lo + up);
            hi_lo[s] = log(b[1] / (vv - b[0]) - b[1] / (b[2] - b[0]));
        }
        g[j] = (hi_lo[1] - hi_lo[0]) / (2e-6 * fabs(th[j]));
    }
    double var = 0;
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++)
            var += g[i] * f->cov[i * 3 + j] * g[j];
    double qt = 4.302652729911275; /* t(0.975, 2): 5 trials, 3 parameters */
    assert_true(close_rel(d.ci95[1], d.value * exp(qt * sqrt(var)), 1e-5));
    assert_true(close_rel(d.ci95[0], d.value * exp(-qt * sqrt(var)), 1e-5));
    assert_int_equal(cpd_pd_predict_time(f, f->p_max + 0.1, &p), CPD_OK);
    assert_int_equal(p.status, CPD_PD_PRED_ABOVE_P_MAX);
    assert_int_equal(p.valid, 0);
    /* short distance: the 3-p model still gives a finite time, bounded by the speed vmax */
    assert_int_equal(cpd_pd_predict_distance_time(f, 50, &d), CPD_OK);
    assert_int_equal(d.valid, 1);
    assert_true(50 / d.value < f->p_max);
}

/* The delta-method interval on ln t against a numerical gradient of t = W′/(P − CP). */
static void prediction_interval_formula(void **state)
{
    (void)state;
    const double P[5] = {405.5, 352.1, 311.8, 283.4, 268.9}, t[5] = {128.7, 207.3, 322.9, 681.2, 1012.4};
    assert_int_equal(fit(CPD_PD_POWER, P, t, 5), CPD_OK);
    const cpd_pd_model_fit *f = &res.models[CPD_PD_HYPERBOLIC];
    const double x = 333.3;
    double h = 1e-4, tt = f->w_prime / (x - f->cp);
    double gcp = (f->w_prime / (x - f->cp - h) - f->w_prime / (x - f->cp + h)) / (2 * h) / tt;
    double gw = 1 / f->w_prime;
    double var = gcp * gcp * f->cov[0] + 2 * gcp * gw * f->cov[1] + gw * gw * f->cov[4];
    double q = 3.182446305284263; /* t(0.975, 3) from scipy.stats; GSL agrees to 1e-10 */
    cpd_pd_pred p;
    assert_int_equal(cpd_pd_predict_time(f, x, &p), CPD_OK);
    assert_true(close_rel(p.ci95[0], tt * exp(-q * sqrt(var)), 1e-6));
    assert_true(close_rel(p.ci95[1], tt * exp(q * sqrt(var)), 1e-6));
    /* intensity interval: P = CP + W′/t is linear, Var = Var CP + Var W′/t^2 + 2 Cov/t */
    double d = 480;
    double vp = f->cov[0] + f->cov[4] / (d * d) + 2 * f->cov[1] / d;
    assert_int_equal(cpd_pd_predict_intensity(f, d, &p), CPD_OK);
    assert_true(close_rel(p.ci95[1] - p.value, q * sqrt(vp), 1e-9));
}

/* Coverage on synthetic athletes (hyperbolic, 5 trials, 6 s normal noise on t): the nominal 95 %
 * intervals for CP and for a predicted time should cover the truth about 95 % of the time. With
 * 1500 replicates the binomial SD is 0.56 %, so [92 %, 98 %] holds with room for the
 * nonlinearity the delta method ignores. */
static void interval_coverage(void **state)
{
    (void)state;
    const double cp = 263.7, w = 18950, t0[5] = {140, 230, 380, 560, 820};
    double P[5], t[5];
    for (int i = 0; i < 5; i++)
        P[i] = cp + w / t0[i];
    const double x = 330, t_true = w / (x - cp);
    const double d = 600, p_true = cp + w / d;
    cpd_pd_opts o;
    cpd_pd_opts_init(&o);
    o.models = CPD_PD_MODEL_BIT(CPD_PD_HYPERBOLIC);
    o.loo = 0;
    rng r = {8675309};
    int reps = 1500, hit_cp = 0, hit_t = 0, hit_p = 0;
    for (int k = 0; k < reps; k++) {
        for (int i = 0; i < 5; i++)
            t[i] = t0[i] + 6.0 * rng_normal(&r);
        assert_int_equal(cpd_pd_fit(ws, CPD_PD_POWER, P, t, 5, &o, &res, NULL), CPD_OK);
        const cpd_pd_model_fit *f = &res.models[CPD_PD_HYPERBOLIC];
        assert_int_equal(f->ok, 1);
        hit_cp += f->cp_ci95[0] <= cp && cp <= f->cp_ci95[1];
        cpd_pd_pred p;
        assert_int_equal(cpd_pd_predict_time(f, x, &p), CPD_OK);
        hit_t += p.ci95[0] <= t_true && t_true <= p.ci95[1];
        assert_int_equal(cpd_pd_predict_intensity(f, d, &p), CPD_OK);
        hit_p += p.ci95[0] <= p_true && p_true <= p.ci95[1];
    }
    print_message("coverage: CP %.3f, t %.3f, P %.3f\n", hit_cp / (double)reps, hit_t / (double)reps,
                  hit_p / (double)reps);
    assert_true(hit_cp >= 0.92 * reps && hit_cp <= 0.98 * reps);
    assert_true(hit_t >= 0.92 * reps && hit_t <= 0.98 * reps);
    assert_true(hit_p >= 0.92 * reps && hit_p <= 0.98 * reps);
}

/* ---- error paths and workspace ------------------------------------------------------------- */

static void bad_input_is_refused(void **state)
{
    (void)state;
    const double P[3] = {400, 350, 310}, t[3] = {133.3, 200, 333.3};
    char msg[CPD_MSG_MAX];
    assert_int_equal(cpd_pd_fit(NULL, CPD_PD_POWER, P, t, 3, NULL, &res, msg), CPD_EUSAGE);
    assert_int_equal(cpd_pd_fit(ws, CPD_PD_POWER, NULL, t, 3, NULL, &res, msg), CPD_EUSAGE);
    assert_int_equal(cpd_pd_fit(ws, CPD_PD_POWER, P, t, 3, NULL, NULL, msg), CPD_EUSAGE);
    assert_int_equal(cpd_pd_fit(ws, (cpd_pd_modality)5, P, t, 3, NULL, &res, msg), CPD_EUSAGE);
    assert_int_equal(cpd_pd_fit(ws, CPD_PD_POWER, P, t, CPD_PD_NMAX + 1, NULL, &res, msg), CPD_EUSAGE);
    cpd_pd_opts o;
    cpd_pd_opts_init(&o);
    o.models = 0;
    assert_int_equal(cpd_pd_fit(ws, CPD_PD_POWER, P, t, 3, &o, &res, msg), CPD_EUSAGE);
    o.models = 1u << 4;
    assert_int_equal(cpd_pd_fit(ws, CPD_PD_POWER, P, t, 3, &o, &res, msg), CPD_EUSAGE);
    const double Pn[3] = {400, NAN, 310}, tn[3] = {133.3, 200, -5};
    assert_int_equal(cpd_pd_fit(ws, CPD_PD_POWER, Pn, t, 3, NULL, &res, msg), CPD_EDATA);
    assert_non_null(strstr(msg, "trial 2"));
    assert_int_equal(cpd_pd_fit(ws, CPD_PD_POWER, P, tn, 3, NULL, &res, msg), CPD_EDATA);
    assert_non_null(strstr(msg, "trial 3"));
    const double Pz[3] = {400, 0, 310};
    assert_int_equal(cpd_pd_fit(ws, CPD_PD_POWER, Pz, t, 3, NULL, &res, NULL), CPD_EDATA);
    const double ti[3] = {133.3, INFINITY, 300};
    assert_int_equal(cpd_pd_fit(ws, CPD_PD_POWER, P, ti, 3, NULL, &res, NULL), CPD_EDATA);
    /* one trial: not enough, and said so */
    assert_int_equal(cpd_pd_fit(ws, CPD_PD_POWER, P, t, 1, NULL, &res, msg), CPD_ENODATA);
    assert_non_null(strstr(msg, "at least 2"));
    assert_int_equal(res.has_best, 0);
    assert_true(res.flags & CPD_PD_FLAG_NO_VALID_MODEL);
    assert_int_equal(res.models[CPD_PD_HYPERBOLIC].fail, CPD_PD_FAIL_TOO_FEW_TRIALS);
    assert_int_equal(cpd_pd_fit(ws, CPD_PD_POWER, P, t, 0, NULL, &res, NULL), CPD_ENODATA);
    /* predictions */
    assert_int_equal(fit(CPD_PD_POWER, P, t, 3), CPD_OK);
    cpd_pd_pred p;
    const cpd_pd_model_fit *f = &res.models[CPD_PD_HYPERBOLIC];
    assert_int_equal(cpd_pd_predict_time(NULL, 400, &p), CPD_EUSAGE);
    assert_int_equal(cpd_pd_predict_time(f, 400, NULL), CPD_EUSAGE);
    assert_int_equal(cpd_pd_predict_time(f, -400, &p), CPD_EUSAGE);
    assert_int_equal(cpd_pd_predict_time(f, NAN, &p), CPD_EUSAGE);
    assert_int_equal(cpd_pd_predict_intensity(f, 0, &p), CPD_EUSAGE);
    assert_int_equal(cpd_pd_predict_intensity(f, INFINITY, &p), CPD_EUSAGE);
    assert_int_equal(cpd_pd_predict_distance_time(NULL, 400, &p), CPD_EUSAGE);
    const cpd_pd_model_fit *f3 = &res.models[CPD_PD_THREE_PARAMETER]; /* failed: 3 trials */
    assert_int_equal(cpd_pd_predict_intensity(f3, 300, &p), CPD_ENODATA);
    assert_int_equal(p.status, CPD_PD_PRED_NO_FIT);
    cpd_pd_free(NULL);
}

/* A workspace reused across trial counts gives bit-identical answers to a fresh one. */
static void workspace_reuse(void **state)
{
    (void)state;
    static cpd_pd_result a;
    rng r = {555};
    double x[8], t[8];
    for (size_t k = 0; k < NSETS; k++) {
        make_set(&sets[k], &r, x, t);
        cpd_pd_ws *fresh = cpd_pd_alloc();
        assert_non_null(fresh);
        assert_int_equal(cpd_pd_fit(fresh, sets[k].mod, x, t, sets[k].n, NULL, &a, NULL), CPD_OK);
        cpd_pd_free(fresh);
        assert_int_equal(fit(sets[k].mod, x, t, sets[k].n), CPD_OK);
        for (int m = 0; m < CPD_PD_NMODELS; m++) {
            assert_int_equal(a.models[m].ok, res.models[m].ok);
            assert_true(a.models[m].cp == res.models[m].cp);
            assert_true(a.models[m].w_prime_se == res.models[m].w_prime_se);
            for (size_t i = 0; i < sets[k].n; i++)
                assert_true(a.models[m].loo_d_cp[i] == res.models[m].loo_d_cp[i]);
        }
        assert_int_equal(a.best, res.best);
        assert_int_equal(a.flags, res.flags);
    }
}

static int setup(void **state)
{
    (void)state;
    ws = cpd_pd_alloc();
    return ws ? 0 : -1;
}
static int teardown(void **state)
{
    (void)state;
    cpd_pd_free(ws);
    return 0;
}

int main(void)
{
    gsl_set_error_handler_off();
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(exact_data_identities),
        cmocka_unit_test(against_scipy),
        cmocka_unit_test(loo_by_hand),
        cmocka_unit_test(loo_three_parameter_matches_direct_refits),
        cmocka_unit_test(statistics_by_hand),
        cmocka_unit_test(three_parameter_consistency),
        cmocka_unit_test(flags_two_trials),
        cmocka_unit_test(flags_short_and_long_trials),
        cmocka_unit_test(flags_durations_close),
        cmocka_unit_test(flags_see_high),
        cmocka_unit_test(flags_p_max_unidentifiable),
        cmocka_unit_test(flags_negative_and_no_valid_model),
        cmocka_unit_test(flags_diverged),
        cmocka_unit_test(flags_implausible),
        cmocka_unit_test(flags_trial_at_or_below_cp),
        cmocka_unit_test(flags_fit_failed),
        cmocka_unit_test(flag_names_and_texts),
        cmocka_unit_test(best_is_lowest_combined_see),
        cmocka_unit_test(model_mask),
        cmocka_unit_test(model_names),
        cmocka_unit_test(predictions_arithmetic),
        cmocka_unit_test(predictions_three_parameter),
        cmocka_unit_test(prediction_interval_formula),
        cmocka_unit_test(interval_coverage),
        cmocka_unit_test(bad_input_is_refused),
        cmocka_unit_test(workspace_reuse),
    };
    return cmocka_run_group_tests(tests, setup, teardown);
}
