/* pd.c: the power-duration models. Linear fits go through linfit, nonlinear ones through nlfit,
 * with every scratch array in the workspace; a quantity that cannot be computed is flagged, never NaN. */
#include "cpdomain/pd.h"
#include "cpdomain/linfit.h"
#include "cpdomain/nlfit.h"
#include "cpdomain/status.h"

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_linalg.h>
#include <gsl/gsl_min.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

struct cpd_pd_ws {
    cpd_nlfit_ws *nl;
    cpd_linfit_ws *lin;
    double X[2 * CPD_PD_NMAX]; /* linear design, n x 2 */
    double y[CPD_PD_NMAX];     /* linear response */
    double sx[CPD_PD_NMAX];    /* leave-one-out subset: intensities */
    double st[CPD_PD_NMAX];    /* leave-one-out subset: durations */
    int oom;                   /* the engine ran out of memory during this fit */
};

/* The estimate of one model on one set of trials, before the reporting around it. The
 * three-parameter model is fitted in (CP, W′, a) with a = W′/(Pmax − CP), the time offset in s:
 * Pmax -> infinity is then a = 0, an ordinary point instead of a divergence, and the model is
 * t = W′/(P − CP) − a. The delta method carries the covariance to Pmax exactly as a fit in
 * (CP, W′, Pmax) would give it at the same optimum, so the SEs equal scipy's. */
typedef struct {
    int ok;
    cpd_pd_fail fail;
    int engine_status;
    double cp, w, a; /* a = 0 for 2-parameter models */
    double cov[9];   /* of (cp, w, a), row-major 3 x 3 */
    int has_se;
    double rss, r2;
    size_t iter;
} core;

/* An offset below this fraction of the longest duration is zero to rounding: Pmax is infinite. */
#define A_ZERO_FRAC 1e-9
/* An rss below this fraction of the centred sum of squares is an exact fit: AIC is undefined. */
#define RSS_ZERO_FRAC 1e-20
/* A nonlinear CP below -DIVERGED_X times the highest intensity is running off to -infinity (the
 * least-squares limit of a flat duration-intensity relation), not an estimate. */
#define DIVERGED_X 1e3
/* Leave-one-out refits stop at this relative change: their changes in CP and W′ are then exact to
 * about 1e-8 of CP and W′, far below anything reported, at a quarter fewer iterations. */
#define LOO_TOL 1e-10
/* An intensity within this fraction of CP is at CP: rounding would otherwise give t of 1e17 s. */
#define AT_CP_REL 1e-9
/* Combined %SEE values this close (relative) are a tie. */
#define TIE_REL 1e-6

/* The nonlinear fits see W′ as u = W′/S with S the mean duration: u is then of the order of
 * P − CP, like CP itself, and the Jacobian columns of similar size. Levenberg's damping (nlfit
 * damps all parameters alike) otherwise creeps along W′ by a factor of about 3 per iteration.
 * One residual serves both models: t = S u/(P − CP) − a, with a = b[2] when k = 3, else 0. */
typedef struct {
    const double *x, *t;
    size_t n, k;
    double S; /* s */
} nl_ctx;

static int nl_f(const double *b, void *ctx, double *f)
{
    const nl_ctx *c = ctx;
    double a = c->k == 3 ? b[2] : 0;
    for (size_t i = 0; i < c->n; i++) {
        double d = c->x[i] - b[0];
        if (!(d > 0))
            return 1; /* a trial at or below CP has no finite duration */
        f[i] = c->S * b[1] / d - a - c->t[i];
    }
    return 0;
}

static int nl_df(const double *b, void *ctx, double *J)
{
    const nl_ctx *c = ctx;
    for (size_t i = 0; i < c->n; i++) {
        double d = c->x[i] - b[0];
        if (!(d > 0))
            return 1;
        double *row = J + i * c->k;
        row[0] = c->S * b[1] / (d * d);
        row[1] = c->S / d;
        if (c->k == 3)
            row[2] = -1;
    }
    return 0;
}

static void minmax(const double *v, size_t n, double *lo, double *hi)
{
    *lo = *hi = v[0];
    for (size_t i = 1; i < n; i++) {
        if (v[i] < *lo)
            *lo = v[i];
        if (v[i] > *hi)
            *hi = v[i];
    }
}

/* Equal intensities or equal durations leave CP and W′ undetermined in every model. */
static int singular(const double *x, const double *t, size_t n)
{
    double xlo, xhi, tlo, thi;
    minmax(x, n, &xlo, &xhi);
    minmax(t, n, &tlo, &thi);
    return xlo == xhi || tlo == thi;
}

static double centred_ss(const double *v, size_t n)
{
    double m = 0, ss = 0;
    for (size_t i = 0; i < n; i++)
        m += v[i];
    m /= (double)n;
    for (size_t i = 0; i < n; i++)
        ss += (v[i] - m) * (v[i] - m);
    return ss;
}

/* linear-total (W = CP t + W′) or linear-inverse (P = W′/t + CP) by OLS. */
static void fit_linear(cpd_pd_ws *w, cpd_pd_model m, const double *x, const double *t, size_t n, core *c)
{
    memset(c, 0, sizeof *c);
    if (n < 2) {
        c->fail = CPD_PD_FAIL_TOO_FEW_TRIALS;
        return;
    }
    if (singular(x, t, n)) {
        c->fail = CPD_PD_FAIL_SINGULAR;
        return;
    }
    for (size_t i = 0; i < n; i++) {
        w->X[2 * i] = 1;
        w->X[2 * i + 1] = m == CPD_PD_LINEAR_TOTAL ? t[i] : 1 / t[i];
        w->y[i] = m == CPD_PD_LINEAR_TOTAL ? x[i] * t[i] : x[i];
    }
    cpd_linfit_result r;
    int rc = cpd_linfit_solve(w->lin, w->X, w->y, n, 2, 1, &r);
    if (rc) {
        c->fail = CPD_PD_FAIL_SINGULAR;
        c->engine_status = rc;
        return;
    }
    /* slope and intercept swap roles between the two forms */
    size_t icp = m == CPD_PD_LINEAR_TOTAL ? 1 : 0, iw = 1 - icp;
    c->ok = 1;
    c->cp = r.b[icp];
    c->w = r.b[iw];
    c->cov[0] = r.cov[icp * 2 + icp];
    c->cov[1] = c->cov[3] = r.cov[icp * 2 + iw];
    c->cov[4] = r.cov[iw * 2 + iw];
    c->has_se = r.dof > 0;
    c->rss = r.rss;
    c->r2 = r.r2;
}

/* A start for the nonlinear fits inside their domain (every trial above CP): the linear-total
 * answer, else the linear-inverse one, moved below the lowest intensity when it is not already, with
 * W′ then the least-squares value for that CP (t is linear in W′ once CP is fixed). */
static int nl_start(cpd_pd_ws *w, const double *x, const double *t, size_t n, double *cp0, double *w0)
{
    core c;
    fit_linear(w, CPD_PD_LINEAR_TOTAL, x, t, n, &c);
    if (!c.ok)
        fit_linear(w, CPD_PD_LINEAR_INVERSE, x, t, n, &c);
    if (!c.ok)
        return 0;
    double xlo, xhi;
    minmax(x, n, &xlo, &xhi);
    if (c.cp < xlo && c.w > 0) {
        *cp0 = c.cp;
        *w0 = c.w;
        return 1;
    }
    *cp0 = c.cp < xlo ? c.cp : xlo - 0.1 * (xhi - xlo);
    double su = 0, sut = 0;
    for (size_t i = 0; i < n; i++) {
        double u = 1 / (x[i] - *cp0);
        su += u * u;
        sut += u * t[i];
    }
    *w0 = sut / su;
    return 1;
}

/* Back from (CP, u, a) to (CP, W′, a), W′ = S u. */
static void from_nlfit(const cpd_nlfit_result *r, double S, core *c)
{
    const double sc[3] = {1, S, 1};
    c->ok = 1;
    c->cp = r->b[0];
    c->w = S * r->b[1];
    c->a = r->p == 3 ? r->b[2] : 0;
    c->has_se = r->has_se;
    for (size_t i = 0; i < r->p; i++)
        for (size_t j = 0; j < r->p; j++)
            c->cov[i * 3 + j] = sc[i] * sc[j] * r->cov[i * r->p + j];
    c->rss = r->rss;
    c->iter = r->iter;
}

static int diverged(const double *x, size_t n, double cp)
{
    double xlo, xhi;
    minmax(x, n, &xlo, &xhi);
    return cp < -DIVERGED_X * xhi;
}

/* Runs the hyperbolic (k = 2) or three-parameter (k = 3) fit from b0 (in CP, W′, a) to the
 * relative tolerance tol (0: nlfit's defaults) and judges its answer. */
static void solve_nl(cpd_pd_ws *w, const double *x, const double *t, size_t n, size_t k, const double *b0,
                     double tol, core *c)
{
    memset(c, 0, sizeof *c);
    double S = 0;
    for (size_t i = 0; i < n; i++)
        S += t[i];
    S /= (double)n;
    nl_ctx ctx = {x, t, n, k, S};
    cpd_nlfit_problem pr = {n, k, nl_f, nl_df, &ctx};
    const double bs[3] = {b0[0], b0[1] / S, k == 3 ? b0[2] : 0};
    cpd_nlfit_opts o;
    cpd_nlfit_opts_init(&o);
    if (tol > 0)
        o.xtol = o.gtol = o.ftol = tol;
    cpd_nlfit_result r;
    int rc = cpd_nlfit_solve(w->nl, &pr, bs, &o, &r);
    double tlo, thi;
    minmax(t, n, &tlo, &thi);
    double xlo, xhi;
    minmax(x, n, &xlo, &xhi);
    if (rc == CPD_ENOCONV && r.b[0] < -xhi) {
        c->fail = CPD_PD_FAIL_DIVERGED; /* the iteration limit struck while CP ran off to -infinity */
        c->engine_status = rc;
    } else if (rc) {
        c->fail = CPD_PD_FAIL_NO_CONVERGENCE;
        c->engine_status = rc;
        if (rc == CPD_ENOMEM)
            w->oom = 1;
    } else if (diverged(x, n, r.b[0])) {
        c->fail = CPD_PD_FAIL_DIVERGED;
    } else if (k == 3 && !(r.b[2] > A_ZERO_FRAC * thi)) {
        c->fail = CPD_PD_FAIL_P_MAX_DEGENERATE;
    } else {
        from_nlfit(&r, S, c);
        c->r2 = 1 - c->rss / centred_ss(t, n);
    }
}

/* A warm start is the all-trials answer for a leave-one-out refit; it must lie in the domain, and
 * the refits it starts stop at LOO_TOL. */
static int warm_ok(const double *x, size_t n, const double *warm, size_t k)
{
    double xlo, xhi;
    minmax(x, n, &xlo, &xhi);
    return warm && warm[0] < xlo && warm[1] > 0 && (k == 2 || warm[2] > 0);
}

/* ---- separable least squares for the hyperbolic and three-parameter models ----
 * At a fixed CP the duration t = W′u − a (u = 1/(P − CP); a = 0 for the hyperbola) is linear in
 * W′ and a, so the residual sum of squares is a function of CP alone (variable projection, Golub &
 * Pereyra 1973 SIAM J Numer Anal 10:413). It is minimised by Brent's method (GSL's
 * gsl_min_fminimizer_brent) from a downhill bracket, polished by Gauss-Newton steps on all
 * parameters with a fixed-size Cholesky solve, and the covariance is s²(JᵀJ)⁻¹ there, as nlfit
 * gives it. Far faster than the general trust-region driver on these 2- and 3-parameter problems;
 * any case that is not a clear interior minimum goes to that driver (solve_nl) instead. */

typedef struct {
    const double *x, *t;
    size_t n, k;
} sep_ctx;

/* W′ and a (0 when k = 2) that minimise the residuals at this CP, and the sum of squares. */
static double sep_profile(double cp, const sep_ctx *c, double *w, double *a)
{
    double suu = 0, su = 0, sut = 0, st = 0;
    for (size_t i = 0; i < c->n; i++) {
        double u = 1 / (c->x[i] - cp);
        suu += u * u;
        su += u;
        sut += u * c->t[i];
        st += c->t[i];
    }
    if (c->k == 2) {
        *w = sut / suu;
        *a = 0;
    } else {
        double det = suu * (double)c->n - su * su;
        *w = (sut * (double)c->n - su * st) / det;
        *a = (sut * su - suu * st) / det;
    }
    double rss = 0;
    for (size_t i = 0; i < c->n; i++) {
        double r = *w / (c->x[i] - cp) - *a - c->t[i];
        rss += r * r;
    }
    return isfinite(rss) ? rss : HUGE_VAL;
}

static double sep_f(double cp, void *ctx)
{
    double w, a;
    return sep_profile(cp, ctx, &w, &a);
}

/* Fits the k-parameter model (2: hyperbola, 3: Morton's) from the start cp0 below every
 * intensity. Returns 1 with c filled, 0 for the general solver to decide. */
static int fit_separable(const double *x, const double *t, size_t n, size_t k, double cp0, core *c)
{
    memset(c, 0, sizeof *c);
    double xlo, xhi, tlo, thi;
    minmax(x, n, &xlo, &xhi);
    minmax(t, n, &tlo, &thi);
    sep_ctx ctx = {x, t, n, k};
    /* a downhill walk in the distance d = xlo − CP, by factors of 2, to a bracket */
    double dmin = 1e-9 * fabs(xlo) + 1e-300, dmax = (1 + DIVERGED_X) * fabs(xhi);
    double d = xlo - cp0;
    if (!(d > dmin && d < dmax))
        return 0;
    double fm = sep_f(xlo - d, &ctx), fu = sep_f(xlo - 2 * d, &ctx), fd = sep_f(xlo - d / 2, &ctx);
    double step = fu < fm ? 2 : fd < fm ? 0.5 : 1;
    double lo_d = d / 2, hi_d = 2 * d;
    for (int i = 0; step != 1 && i < 64; i++) {
        double dn = d * step, fn = sep_f(xlo - dn, &ctx);
        if (!(dn > dmin && dn < dmax))
            return 0;
        if (fn >= fm) {
            lo_d = step > 1 ? d / 2 : dn;
            hi_d = step > 1 ? dn : 2 * d;
            break;
        }
        d = dn;
        fm = fn;
        if (i == 63)
            return 0;
    }
    gsl_min_fminimizer *mz = gsl_min_fminimizer_alloc(gsl_min_fminimizer_brent);
    if (!mz)
        return 0;
    gsl_function F = {sep_f, &ctx};
    double cp = xlo - d;
    size_t iter = 0;
    int ok = gsl_min_fminimizer_set_with_values(mz, &F, cp, fm, xlo - hi_d, sep_f(xlo - hi_d, &ctx), xlo - lo_d,
                                                sep_f(xlo - lo_d, &ctx)) == GSL_SUCCESS;
    while (ok && iter++ < 200) {
        ok = gsl_min_fminimizer_iterate(mz) == GSL_SUCCESS;
        /* about the square root of the rounding: a flatter minimum Brent cannot locate; Gauss-Newton
         * takes it from there */
        if (gsl_min_test_interval(gsl_min_fminimizer_x_lower(mz), gsl_min_fminimizer_x_upper(mz), 0, 1e-7) ==
            GSL_SUCCESS)
            break;
    }
    cp = gsl_min_fminimizer_x_minimum(mz);
    gsl_min_fminimizer_free(mz);
    if (!ok)
        return 0;
    /* Gauss-Newton on (CP, W′[, a]) from there: Brent leaves CP good to about 1e-8 */
    double b[3];
    b[0] = cp;
    sep_profile(cp, &ctx, &b[1], &b[2]);
    double A[9], g[3], rss = 0;
    for (int it = 0; it < 8; it++, iter++) {
        memset(A, 0, sizeof A);
        memset(g, 0, sizeof g);
        rss = 0;
        for (size_t i = 0; i < n; i++) {
            double u = 1 / (x[i] - b[0]), r = b[1] * u - b[2] - t[i];
            const double j[3] = {b[1] * u * u, u, -1};
            for (size_t p = 0; p < k; p++) {
                g[p] += j[p] * r;
                for (size_t q = 0; q < k; q++)
                    A[p * k + q] += j[p] * j[q];
            }
            rss += r * r;
        }
        gsl_matrix_view Av = gsl_matrix_view_array(A, k, k);
        gsl_vector_view gv = gsl_vector_view_array(g, k);
        double dl[3];
        gsl_vector_view dv = gsl_vector_view_array(dl, k);
        if (gsl_linalg_cholesky_decomp1(&Av.matrix) != GSL_SUCCESS ||
            gsl_linalg_cholesky_solve(&Av.matrix, &gv.vector, &dv.vector) != GSL_SUCCESS)
            return 0;
        int small = 1;
        for (size_t p = 0; p < k; p++) {
            b[p] -= dl[p];
            small &= fabs(dl[p]) <= 1e-14 * (fabs(b[p]) + 1e-300);
        }
        if (!(b[0] < xlo) || !(b[1] > 0))
            return 0;
        if (small)
            break;
    }
    /* the sums of squares and JᵀJ at the final point, for rss and the covariance */
    memset(A, 0, sizeof A);
    rss = 0;
    for (size_t i = 0; i < n; i++) {
        double u = 1 / (x[i] - b[0]), r = b[1] * u - b[2] - t[i];
        const double j[3] = {b[1] * u * u, u, -1};
        for (size_t p = 0; p < k; p++)
            for (size_t q = 0; q < k; q++)
                A[p * k + q] += j[p] * j[q];
        rss += r * r;
    }
    if (diverged(x, n, b[0]) || (k == 3 && !(b[2] > A_ZERO_FRAC * thi)) || !isfinite(rss))
        return 0;
    gsl_matrix_view Av = gsl_matrix_view_array(A, k, k);
    if (gsl_linalg_cholesky_decomp1(&Av.matrix) != GSL_SUCCESS || gsl_linalg_cholesky_invert(&Av.matrix) != GSL_SUCCESS)
        return 0;
    size_t dof = n - k;
    double s2 = dof > 0 ? rss / (double)dof : 0;
    c->ok = 1;
    c->cp = b[0];
    c->w = b[1];
    c->a = k == 3 ? b[2] : 0;
    c->has_se = dof > 0;
    for (size_t p = 0; p < k; p++)
        for (size_t q = 0; q < k; q++)
            c->cov[p * 3 + q] = s2 * A[p * k + q];
    c->rss = rss;
    c->iter = iter;
    c->r2 = 1 - rss / centred_ss(t, n);
    return 1;
}

/* The hyperbola from warm when given and it converges, else from the linear start. */
static void fit_hyperbolic(cpd_pd_ws *w, const double *x, const double *t, size_t n, const double *warm, core *c)
{
    memset(c, 0, sizeof *c);
    if (n < 2) {
        c->fail = CPD_PD_FAIL_TOO_FEW_TRIALS;
        return;
    }
    if (singular(x, t, n)) {
        c->fail = CPD_PD_FAIL_SINGULAR;
        return;
    }
    double tol = warm ? LOO_TOL : 0;
    if (warm_ok(x, n, warm, 2)) {
        if (fit_separable(x, t, n, 2, warm[0], c))
            return;
        solve_nl(w, x, t, n, 2, warm, tol, c);
        if (c->ok)
            return;
    }
    double b0[2];
    if (!nl_start(w, x, t, n, &b0[0], &b0[1])) {
        c->fail = CPD_PD_FAIL_SINGULAR;
        return;
    }
    if (fit_separable(x, t, n, 2, b0[0], c))
        return;
    solve_nl(w, x, t, n, 2, b0, tol, c);
}

/* Morton's three-parameter model from warm when given and it converges; else started from the
 * hyperbolic answer h (fitted here when h is NULL; the linear start when it failed) for CP, with
 * W′ and the offset a solved for at that CP, or, when that gives no Pmax above the highest
 * intensity, Pmax well above it: Pmax − CP = 3 (max P − CP), i.e. a third of the hyperbola's
 * duration at the highest trial intensity as offset. Should that not converge, the 2-parameter
 * optimum itself (offset 0) is the last start. */
static void fit_three(cpd_pd_ws *w, const double *x, const double *t, size_t n, const core *h, const double *warm,
                      core *c)
{
    memset(c, 0, sizeof *c);
    if (n < 4) {
        c->fail = CPD_PD_FAIL_TOO_FEW_TRIALS;
        return;
    }
    if (singular(x, t, n)) {
        c->fail = CPD_PD_FAIL_SINGULAR;
        return;
    }
    double tol = warm ? LOO_TOL : 0;
    if (warm_ok(x, n, warm, 3)) {
        if (fit_separable(x, t, n, 3, warm[0], c))
            return;
        solve_nl(w, x, t, n, 3, warm, tol, c);
        if (c->ok)
            return;
    }
    core hh;
    if (!h) {
        fit_hyperbolic(w, x, t, n, NULL, &hh);
        h = &hh;
    }
    double b0[3];
    if (h->ok) {
        b0[0] = h->cp;
        b0[1] = h->w;
    } else if (!nl_start(w, x, t, n, &b0[0], &b0[1])) {
        c->fail = CPD_PD_FAIL_SINGULAR;
        return;
    }
    if (fit_separable(x, t, n, 3, b0[0], c))
        return;
    double xlo, xhi;
    minmax(x, n, &xlo, &xhi);
    /* At fixed CP the model is linear in W′ and a: their least-squares values make the start
     * exact but for CP. When they give no valid Pmax, a Pmax well above the highest intensity. */
    double suu = 0, su = 0, sut = 0, sum_t = 0;
    for (size_t i = 0; i < n; i++) {
        double u = 1 / (x[i] - b0[0]);
        suu += u * u;
        su += u;
        sut += u * t[i];
        sum_t += t[i];
    }
    double det = suu * (double)n - su * su;
    double wl = det > 0 ? (sut * (double)n - su * sum_t) / det : 0;
    double al = det > 0 ? (sut * su - suu * sum_t) / det : 0;
    if (wl > 0 && al > 0 && b0[0] + wl / al > xhi) {
        b0[1] = wl;
        b0[2] = al;
    } else {
        b0[2] = b0[1] / (3 * (xhi - b0[0]));
    }
    solve_nl(w, x, t, n, 3, b0, tol, c);
    if (c->fail == CPD_PD_FAIL_NO_CONVERGENCE) {
        b0[2] = 0;
        solve_nl(w, x, t, n, 3, b0, tol, c);
    }
}

/* Fits model m alone, from warm (the model's own parameters, may be NULL) when that works. */
static void fit_core(cpd_pd_ws *w, cpd_pd_model m, const double *x, const double *t, size_t n, const double *warm,
                     core *c)
{
    switch (m) {
    case CPD_PD_HYPERBOLIC:
        fit_hyperbolic(w, x, t, n, warm, c);
        break;
    case CPD_PD_LINEAR_TOTAL:
    case CPD_PD_LINEAR_INVERSE:
        fit_linear(w, m, x, t, n, c);
        break;
    default:
        fit_three(w, x, t, n, NULL, warm, c);
        break;
    }
}

static size_t model_k(cpd_pd_model m)
{
    return m == CPD_PD_THREE_PARAMETER ? 3 : 2;
}

static cpd_pd_yvar model_yvar(cpd_pd_model m)
{
    switch (m) {
    case CPD_PD_LINEAR_TOTAL:
        return CPD_PD_Y_WORK;
    case CPD_PD_LINEAR_INVERSE:
        return CPD_PD_Y_INTENSITY;
    default:
        return CPD_PD_Y_DURATION;
    }
}

void cpd_pd_ranges(cpd_pd_modality modality, cpd_range *cp, cpd_range *w_prime, cpd_range *p_max)
{
    static const cpd_range power[2] = {{"critical power", 30.0, 700.0, "W"}, {"W'", 1000.0, 80000.0, "J"}};
    static const cpd_range speed[2] = {{"critical speed", 0.3, 12.0, "m/s"}, {"D'", 5.0, 1500.0, "m"}};
    int sp = modality == CPD_PD_SPEED;
    if (cp)
        *cp = sp ? speed[0] : power[0];
    if (w_prime)
        *w_prime = sp ? speed[1] : power[1];
    /* the three-parameter maximum can be no higher than any intensity the importer accepts */
    if (p_max)
        *p_max = sp ? (cpd_range){"vmax", 0.0, CPD_RANGE_SPEED.hi, "m/s"}
                    : (cpd_range){"Pmax", 0.0, CPD_RANGE_POWER.hi, "W"};
}

/* The model's dependent variable for trial (x, t). */
static double yvalue(cpd_pd_yvar v, double x, double t)
{
    return v == CPD_PD_Y_WORK ? x * t : v == CPD_PD_Y_INTENSITY ? x : t;
}

/* Covariance in (cp, w_prime, p_max) from the one in (cp, w, a): G Cov G' with G the Jacobian of
 * (cp, w, cp + w/a), the delta method (exact for the linearised covariance). */
static void cov_to_p_max(const core *c, double *out)
{
    double a = c->a;
    const double G[9] = {1, 0, 0, 0, 1, 0, 1, 1 / a, -c->w / (a * a)};
    double GC[9];
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++) {
            double s = 0;
            for (int l = 0; l < 3; l++)
                s += G[i * 3 + l] * c->cov[l * 3 + j];
            GC[i * 3 + j] = s;
        }
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++) {
            double s = 0;
            for (int l = 0; l < 3; l++)
                s += GC[i * 3 + l] * G[j * 3 + l];
            out[i * 3 + j] = s;
        }
}

/* Standard errors, t-based 95 % CIs and %SEE from f->cov, or none when they do not exist. */
static void set_uncertainty(cpd_pd_model_fit *f)
{
    for (size_t j = 0; j < f->k && f->has_se; j++)
        if (!(f->cov[j * 4] >= 0) || !isfinite(f->cov[j * 4]))
            f->has_se = 0;
    if (!f->has_se) {
        memset(f->cov, 0, sizeof f->cov);
        return;
    }
    double q = gsl_cdf_tdist_Pinv(0.975, (double)f->dof);
    f->cp_se = sqrt(f->cov[0]);
    f->w_prime_se = sqrt(f->cov[4]);
    f->cp_ci95[0] = f->cp - q * f->cp_se;
    f->cp_ci95[1] = f->cp + q * f->cp_se;
    f->w_prime_ci95[0] = f->w_prime - q * f->w_prime_se;
    f->w_prime_ci95[1] = f->w_prime + q * f->w_prime_se;
    if (f->has_p_max) {
        f->p_max_se = sqrt(f->cov[8]);
        f->p_max_ci95[0] = f->p_max - q * f->p_max_se;
        f->p_max_ci95[1] = f->p_max + q * f->p_max_se;
    }
    if (f->cp != 0 && f->w_prime != 0) {
        f->see_valid = 1;
        f->see_cp_pct = 100 * f->cp_se / fabs(f->cp);
        f->see_w_prime_pct = 100 * f->w_prime_se / fabs(f->w_prime);
    }
}

/* AIC on the model's own dependent variable (Akaike 1974 IEEE Trans Autom Control 19:716;
 * small-sample form Hurvich & Tsai 1989 Biometrika 76:297): undefined for an exact fit (rss zero
 * to rounding against the spread of the dependent variable), AICc also for n - k - 1 <= 0. */
static void set_aic(cpd_pd_model_fit *f, const double *x, const double *t, size_t n)
{
    double mean = 0, syy = 0;
    for (size_t i = 0; i < n; i++)
        mean += yvalue(f->rss_var, x[i], t[i]);
    mean /= (double)n;
    for (size_t i = 0; i < n; i++) {
        double v = yvalue(f->rss_var, x[i], t[i]) - mean;
        syy += v * v;
    }
    double k = (double)f->k, dn = (double)n;
    if (f->dof == 0 || !(f->rss > RSS_ZERO_FRAC * syy))
        return;
    f->aic_valid = 1;
    f->aic = dn * log(f->rss / dn) + 2 * k;
    if (dn - k - 1 > 0) {
        f->aicc_valid = 1;
        f->aicc = f->aic + 2 * k * (k + 1) / (dn - k - 1);
    }
}

static unsigned model_flags(const cpd_pd_model_fit *f, const double *x, const double *t, size_t n)
{
    double xlo, xhi, tlo, thi;
    minmax(x, n, &xlo, &xhi);
    minmax(t, n, &tlo, &thi);
    unsigned fl = 0;
    if (f->dof == 0)
        fl |= CPD_PD_FLAG_TWO_TRIALS_EXACT;
    if (f->see_valid && f->see_cp_pct > CPD_PD_SEE_CP_MAX_PCT)
        fl |= CPD_PD_FLAG_SEE_CP_HIGH;
    if (f->see_valid && f->see_w_prime_pct > CPD_PD_SEE_W_MAX_PCT)
        fl |= CPD_PD_FLAG_SEE_W_PRIME_HIGH;
    if (f->cp <= 0 || f->w_prime <= 0)
        fl |= CPD_PD_FLAG_NEGATIVE_PARAMETER;
    cpd_range rcp, rw, rpm;
    cpd_pd_ranges(f->modality, &rcp, &rw, &rpm);
    if ((f->cp > 0 && !cpd_in_range(&rcp, f->cp)) || (f->w_prime > 0 && !cpd_in_range(&rw, f->w_prime)) ||
        (f->has_p_max && f->p_max > rpm.hi))
        fl |= CPD_PD_FLAG_IMPLAUSIBLE_PARAMETER;
    if (f->cp >= xlo)
        fl |= CPD_PD_FLAG_TRIAL_AT_OR_BELOW_CP;
    /* From trials of 2-15 min only, Pmax's SE exceeded Pmax in about half of simulated
     * athletes while the fit converged, so these conditions are flagged rather than trusted. */
    if (f->has_p_max && (!f->has_se || f->p_max_se >= f->p_max || f->p_max <= xhi || tlo >= CPD_PD_SHORT_S))
        fl |= CPD_PD_FLAG_P_MAX_UNIDENTIFIABLE;
    return fl;
}

/* Fills the reported quantities of model m from its core estimate c. */
static void report(const core *c, cpd_pd_model m, cpd_pd_modality mod, const double *x, const double *t, size_t n,
                   cpd_pd_model_fit *f)
{
    memset(f, 0, offsetof(cpd_pd_model_fit, resid_s));
    memset(f->resid_valid, 0, n);
    memset(f->loo_d_cp, 0, n * sizeof f->loo_d_cp[0]);
    memset(f->loo_d_w_prime, 0, n * sizeof f->loo_d_w_prime[0]);
    memset(f->loo_valid, 0, n);
    f->has_loo = 0;
    f->model = m;
    f->modality = mod;
    f->n = n;
    f->k = model_k(m);
    f->dof = n >= f->k ? n - f->k : 0;
    f->rss_var = model_yvar(m);
    f->engine_status = c->engine_status;
    if (!c->ok) {
        f->fail = c->fail;
        f->flags = CPD_PD_FLAG_FIT_FAILED;
        if (c->fail == CPD_PD_FAIL_P_MAX_DEGENERATE)
            f->flags |= CPD_PD_FLAG_P_MAX_UNIDENTIFIABLE;
        return;
    }
    f->ok = 1;
    f->fail = CPD_PD_FAIL_NONE;
    f->iter = c->iter;
    f->cp = c->cp;
    f->w_prime = c->w;
    f->rss = c->rss;
    f->r2 = c->r2;
    f->has_se = c->has_se && f->dof > 0;
    if (m == CPD_PD_THREE_PARAMETER) {
        f->has_p_max = 1;
        f->t_offset_s = c->a;
        f->p_max = c->cp + c->w / c->a;
        cov_to_p_max(c, f->cov);
    } else {
        memcpy(f->cov, c->cov, sizeof f->cov);
    }
    set_uncertainty(f);
    set_aic(f, x, t, n);
    for (size_t i = 0; i < n; i++) {
        double d = x[i] - f->cp;
        double pred = d > 0 ? f->w_prime / d - f->t_offset_s : 0;
        f->resid_valid[i] = d > 0 && pred > 0 && isfinite(pred);
        f->resid_s[i] = f->resid_valid[i] ? t[i] - pred : 0;
        f->resid_pct[i] = f->resid_valid[i] ? 100 * f->resid_s[i] / t[i] : 0;
    }
    f->flags = model_flags(f, x, t, n);
}

/* Leave-one-out: refit m without each trial in turn (Maturana et al. 2018 J Sci Med Sport
 * 21:742 judged CP estimates by leave-one-out cross-validation), starting from the all-trials
 * answer: the same optimum as a cold start (to a few 1e-10), in fewer iterations. */
static void leave_one_out(cpd_pd_ws *w, cpd_pd_model m, const double *x, const double *t, size_t n,
                          cpd_pd_model_fit *f)
{
    size_t need = m == CPD_PD_THREE_PARAMETER ? 5 : 3;
    if (!f->ok || n < need)
        return;
    f->has_loo = 1;
    const double warm[3] = {f->cp, f->w_prime, f->t_offset_s};
    for (size_t i = 0; i < n; i++) {
        size_t j = 0;
        for (size_t l = 0; l < n; l++)
            if (l != i) {
                w->sx[j] = x[l];
                w->st[j] = t[l];
                j++;
            }
        core c;
        fit_core(w, m, w->sx, w->st, n - 1, warm, &c);
        f->loo_valid[i] = (unsigned char)c.ok;
        f->loo_d_cp[i] = c.ok ? c.cp - f->cp : 0;
        f->loo_d_w_prime[i] = c.ok ? c.w - f->w_prime : 0;
    }
}

static unsigned data_flags(const double *t, size_t n)
{
    unsigned fl = 0;
    if (n < 3)
        fl |= CPD_PD_FLAG_FEW_TRIALS;
    if (n == 2)
        fl |= CPD_PD_FLAG_TWO_TRIALS_EXACT;
    double tlo, thi;
    minmax(t, n, &tlo, &thi);
    if (tlo < CPD_PD_SHORT_S)
        fl |= CPD_PD_FLAG_SHORT_TRIAL;
    if (thi > CPD_PD_LONG_S)
        fl |= CPD_PD_FLAG_LONG_TRIAL;
    int close = thi < CPD_PD_SPREAD_MIN * tlo;
    for (size_t i = 0; i < n && !close; i++)
        for (size_t j = i + 1; j < n && !close; j++)
            if (fabs(t[i] - t[j]) < CPD_PD_CLOSE_FRAC * fmax(t[i], t[j]))
                close = 1;
    if (close)
        fl |= CPD_PD_FLAG_DURATIONS_CLOSE;
    return fl;
}

static int qualifies(const cpd_pd_model_fit *f)
{
    return f->ok && f->cp > 0 && f->w_prime > 0 && !(f->flags & CPD_PD_FLAG_TRIAL_AT_OR_BELOW_CP) &&
           !(f->flags & CPD_PD_FLAG_P_MAX_UNIDENTIFIABLE);
}

static void choose_best(cpd_pd_result *res)
{
    /* preference order on ties: the 2-parameter models first, hyperbolic first among them */
    static const cpd_pd_model order[CPD_PD_NMODELS] = {CPD_PD_HYPERBOLIC, CPD_PD_LINEAR_TOTAL,
                                                       CPD_PD_LINEAR_INVERSE, CPD_PD_THREE_PARAMETER};
    res->has_best = 0;
    if (res->n == 2) {
        for (size_t k = 0; k < 3 && !res->has_best; k++)
            if (qualifies(&res->models[order[k]])) {
                res->has_best = 1;
                res->best = order[k];
            }
        return;
    }
    double score = 0;
    for (size_t k = 0; k < CPD_PD_NMODELS; k++) {
        const cpd_pd_model_fit *f = &res->models[order[k]];
        if (!qualifies(f) || !f->see_valid)
            continue;
        double s = f->see_cp_pct + f->see_w_prime_pct;
        if (!res->has_best || s < score - TIE_REL * score) {
            res->has_best = 1;
            res->best = order[k];
            score = s;
        }
    }
}

void cpd_pd_opts_init(cpd_pd_opts *o)
{
    o->models = CPD_PD_ALL_MODELS;
    o->loo = 1;
}

cpd_pd_ws *cpd_pd_alloc(void)
{
    cpd_pd_ws *w = calloc(1, sizeof *w);
    if (!w)
        return NULL;
    w->nl = cpd_nlfit_alloc();
    w->lin = cpd_linfit_alloc(CPD_PD_NMAX, 2);
    if (!w->nl || !w->lin) {
        cpd_pd_free(w);
        return NULL;
    }
    return w;
}

void cpd_pd_free(cpd_pd_ws *w)
{
    if (!w)
        return;
    cpd_nlfit_free(w->nl);
    cpd_linfit_free(w->lin);
    free(w);
}

static void set_msg(char *msg, const char *fmt, size_t i, double v)
{
    if (msg)
        snprintf(msg, CPD_MSG_MAX, fmt, i + 1, v);
}

int cpd_pd_fit(cpd_pd_ws *w, cpd_pd_modality modality, const double *intensity, const double *duration_s,
               size_t n, const cpd_pd_opts *opts, cpd_pd_result *res, char *msg)
{
    if (msg)
        msg[0] = '\0';
    cpd_pd_opts def;
    if (!opts) {
        cpd_pd_opts_init(&def);
        opts = &def;
    }
    if (!w || !intensity || !duration_s || !res || (modality != CPD_PD_POWER && modality != CPD_PD_SPEED) ||
        opts->models == 0 || (opts->models & ~CPD_PD_ALL_MODELS) || n > CPD_PD_NMAX) {
        if (msg)
            snprintf(msg, CPD_MSG_MAX, "invalid arguments to the power-duration fit (at most %d trials)",
                     CPD_PD_NMAX);
        return CPD_EUSAGE;
    }
    for (size_t i = 0; i < n; i++) {
        if (!(isfinite(intensity[i]) && intensity[i] > 0)) {
            set_msg(msg, "trial %zu: intensity must be a positive number (got %g)", i, intensity[i]);
            return CPD_EDATA;
        }
        if (!(isfinite(duration_s[i]) && duration_s[i] > 0)) {
            set_msg(msg, "trial %zu: duration must be a positive number of seconds (got %g)", i, duration_s[i]);
            return CPD_EDATA;
        }
    }
    res->modality = modality;
    res->n = n;
    res->has_best = 0;
    res->best = CPD_PD_HYPERBOLIC;
    w->oom = 0;
    core cores[CPD_PD_NMODELS];
    unsigned mask = opts->models;
    for (size_t m = 0; m < CPD_PD_NMODELS; m++) {
        memset(&cores[m], 0, sizeof cores[m]);
        cores[m].fail = !(mask & CPD_PD_MODEL_BIT(m)) ? CPD_PD_FAIL_NOT_REQUESTED : CPD_PD_FAIL_TOO_FEW_TRIALS;
    }
    if (n >= 2) {
        if (mask & CPD_PD_MODEL_BIT(CPD_PD_LINEAR_TOTAL))
            fit_linear(w, CPD_PD_LINEAR_TOTAL, intensity, duration_s, n, &cores[CPD_PD_LINEAR_TOTAL]);
        if (mask & CPD_PD_MODEL_BIT(CPD_PD_LINEAR_INVERSE))
            fit_linear(w, CPD_PD_LINEAR_INVERSE, intensity, duration_s, n, &cores[CPD_PD_LINEAR_INVERSE]);
        core hyp;
        if (mask & (CPD_PD_MODEL_BIT(CPD_PD_HYPERBOLIC) | CPD_PD_MODEL_BIT(CPD_PD_THREE_PARAMETER)))
            fit_hyperbolic(w, intensity, duration_s, n, NULL, &hyp);
        if (mask & CPD_PD_MODEL_BIT(CPD_PD_HYPERBOLIC))
            cores[CPD_PD_HYPERBOLIC] = hyp;
        if (mask & CPD_PD_MODEL_BIT(CPD_PD_THREE_PARAMETER))
            fit_three(w, intensity, duration_s, n, &hyp, NULL, &cores[CPD_PD_THREE_PARAMETER]);
    }
    for (size_t m = 0; m < CPD_PD_NMODELS; m++) {
        cpd_pd_model_fit *f = &res->models[m];
        report(&cores[m], (cpd_pd_model)m, modality, intensity, duration_s, n, f);
        if (cores[m].fail == CPD_PD_FAIL_NOT_REQUESTED)
            f->flags = 0;
        if (opts->loo)
            leave_one_out(w, (cpd_pd_model)m, intensity, duration_s, n, f);
    }
    res->data_flags = n > 0 ? data_flags(duration_s, n) : CPD_PD_FLAG_FEW_TRIALS;
    choose_best(res);
    res->flags = res->data_flags;
    if (res->has_best) {
        res->flags |= res->models[res->best].flags;
        if (n == 2)
            res->flags |= CPD_PD_FLAG_MODELS_IDENTICAL;
    } else {
        res->flags |= CPD_PD_FLAG_NO_VALID_MODEL;
    }
    if (n < 2) {
        if (msg)
            snprintf(msg, CPD_MSG_MAX, "at least 2 trials are needed to fit the power-duration models (got %zu)", n);
        return CPD_ENODATA;
    }
    if (w->oom) {
        if (msg)
            snprintf(msg, CPD_MSG_MAX, "out of memory in the nonlinear fit");
        return CPD_ENOMEM;
    }
    return CPD_OK;
}

const char *cpd_pd_best_rule(void)
{
    return "The best model is, among the models fitted with standard errors (at least 3 trials) and with "
           "physiologically valid parameters (CP > 0, W' > 0, every trial's intensity above CP, and for the "
           "three-parameter model a Pmax above the highest trial intensity that is identifiable: SE(Pmax) < Pmax "
           "and a trial shorter than 2 min), the one with the lowest combined %SEE, %SEE(CP) + %SEE(W') "
           "(the sum reported by Patoz et al. 2021 Front Physiol 12:613066; Hill et al. 2011 Int J Sports Med "
           "32:519 preferred the 2-parameter model because 3-parameter estimates had large SEEs). Ties (equal to "
           "6 significant digits) go to a 2-parameter model, in the order hyperbolic, linear-total, "
           "linear-inverse: the hyperbolic fit puts the error on the measured duration (Patoz et al. 2021 Eur J "
           "Appl Physiol 121:2027). With exactly 2 trials every 2-parameter model is the same exact line, so the "
           "hyperbolic model is named best by default and the fit is flagged. AICc is not used across models, "
           "because the linear models' residuals are in other units than the duration.";
}

static const char *const model_names[CPD_PD_NMODELS] = {"hyperbolic", "linear-total", "linear-inverse",
                                                        "three-parameter"};

const char *cpd_pd_model_name(cpd_pd_model m)
{
    return (unsigned)m < CPD_PD_NMODELS ? model_names[m] : "unknown";
}

int cpd_pd_model_parse(const char *name, cpd_pd_model *m)
{
    if (!name || !m)
        return CPD_EUSAGE;
    for (size_t k = 0; k < CPD_PD_NMODELS; k++)
        if (strcmp(name, model_names[k]) == 0) {
            *m = (cpd_pd_model)k;
            return CPD_OK;
        }
    return CPD_EUSAGE;
}

const char *cpd_pd_fail_text(cpd_pd_fail f)
{
    static const char *const text[CPD_PD_NFAILS] = {
        [CPD_PD_FAIL_NONE] = "fitted",
        [CPD_PD_FAIL_NOT_REQUESTED] = "not requested",
        [CPD_PD_FAIL_TOO_FEW_TRIALS] = "too few trials: the 2-parameter models need 2 trials, the "
                                       "three-parameter model needs 4",
        [CPD_PD_FAIL_SINGULAR] = "the trials do not determine the model: all intensities or all durations are "
                                 "the same",
        [CPD_PD_FAIL_NO_CONVERGENCE] = "the nonlinear fit did not converge within its iteration limit; the "
                                       "trials probably do not follow this model",
        [CPD_PD_FAIL_P_MAX_DEGENERATE] = "the trials show no extra curvature at short durations: Pmax runs to "
                                         "infinity and the three-parameter model reduces to the hyperbolic one",
        [CPD_PD_FAIL_DIVERGED] = "the fit runs off to a critical intensity of minus infinity: the durations do not "
                                 "fall as the intensity rises",
    };
    return (unsigned)f < CPD_PD_NFAILS ? text[f] : "unknown failure";
}

static int flag_index(unsigned flag)
{
    if (flag == 0 || (flag & (flag - 1)))
        return -1;
    int i = 0;
    while (!(flag & 1u)) {
        flag >>= 1;
        i++;
    }
    return i < CPD_PD_NFLAGS ? i : -1;
}

const char *cpd_pd_flag_name(unsigned flag, cpd_pd_modality modality)
{
    static const char *const power[CPD_PD_NFLAGS] = {
        "few_trials",           "two_trials_exact",     "short_trial",          "long_trial",
        "durations_close",      "see_cp_high",          "see_w_prime_high",     "p_max_unidentifiable",
        "negative_parameter",   "implausible_parameter", "trial_at_or_below_cp", "fit_failed",
        "models_identical",     "no_valid_model"};
    static const char *const speed[CPD_PD_NFLAGS] = {
        "few_trials",           "two_trials_exact",     "short_trial",          "long_trial",
        "durations_close",      "see_cs_high",          "see_d_prime_high",     "v_max_unidentifiable",
        "negative_parameter",   "implausible_parameter", "trial_at_or_below_cs", "fit_failed",
        "models_identical",     "no_valid_model"};
    int i = flag_index(flag);
    if (i < 0)
        return NULL;
    return modality == CPD_PD_SPEED ? speed[i] : power[i];
}

const char *cpd_pd_flag_text(unsigned flag, cpd_pd_modality modality)
{
    static const char *const power[CPD_PD_NFLAGS] = {
        "Fewer than 3 trials: the fit cannot check its own error. Add trials; 3 to 5 on separate days is the "
        "convention.",
        "As many trials as model parameters: the curve passes exactly through them, so there is no standard error "
        "or confidence interval. Add a trial to measure the uncertainty.",
        "A trial is shorter than 2 min. The hyperbola fits best between about 2 and 15 min (Drake et al. 2024 Eur J "
        "Appl Physiol 124:507); keep trials in that window, or compare with the three-parameter model.",
        "A trial is longer than 15 min. The hyperbola fits best between about 2 and 15 min (Drake et al. 2024 Eur J "
        "Appl Physiol 124:507); check this trial's residual, or replace it with one of 10 to 15 min.",
        "The trial durations are too close together (the longest is less than twice the shortest, or two trials "
        "are within 10 % of each other's duration), so CP and W' trade off against each other. Spread the trials "
        "over about 2 to 15 min, for example 3, 7 and 12 min.",
        "The standard error of CP is more than 5 % of CP (a common acceptance limit): add a trial.",
        "The standard error of W' is more than 10 % of W' (a common acceptance limit): add a trial.",
        "The three-parameter model's Pmax cannot be trusted: its standard error is at least Pmax itself, it is not "
        "above the highest trial power, or no trial is shorter than about 2 min. Ignore this Pmax and prefer a "
        "2-parameter model, or add a trial shorter than 2 min.",
        "CP or W' came out zero or negative, so the trials do not follow the power-duration relationship (a higher "
        "power must give a shorter time). Check the trials for typing errors or an effort that was not maximal.",
        "A parameter lies outside the generous plausible range (CP 30-700 W, W' 1-80 kJ, Pmax up to 3000 W). Check "
        "the units and the trials.",
        "A trial's power is at or below the fitted CP, so this model says it could have been held indefinitely, "
        "yet it ended in exhaustion. Check that trial and prefer another model.",
        "The model could not be fitted; the reason is given with it.",
        "With only two trials every 2-parameter model passes exactly through both and gives the same CP and W'; "
        "the hyperbolic model is reported by default.",
        "No model gave physiologically valid parameters with standard errors, so no best model can be named. "
        "Check the trials, or add one."};
    static const char *const speed[CPD_PD_NFLAGS] = {
        "Fewer than 3 trials: the fit cannot check its own error. Add trials; 3 to 5 on separate days is the "
        "convention.",
        "As many trials as model parameters: the curve passes exactly through them, so there is no standard error "
        "or confidence interval. Add a trial to measure the uncertainty.",
        "A trial is shorter than 2 min. The hyperbola fits best between about 2 and 15 min (Drake et al. 2024 Eur J "
        "Appl Physiol 124:507); keep trials in that window, or compare with the three-parameter model.",
        "A trial is longer than 15 min. The hyperbola fits best between about 2 and 15 min (Drake et al. 2024 Eur J "
        "Appl Physiol 124:507); check this trial's residual, or replace it with one of 10 to 15 min.",
        "The trial durations are too close together (the longest is less than twice the shortest, or two trials "
        "are within 10 % of each other's duration), so CS and D' trade off against each other. Spread the trials "
        "over about 2 to 15 min, for example 3, 7 and 12 min.",
        "The standard error of CS is more than 5 % of CS (a common acceptance limit): add a trial.",
        "The standard error of D' is more than 10 % of D' (a common acceptance limit): add a trial.",
        "The three-parameter model's vmax cannot be trusted: its standard error is at least vmax itself, it is not "
        "above the highest trial speed, or no trial is shorter than about 2 min. Ignore this vmax and prefer a "
        "2-parameter model, or add a trial shorter than 2 min.",
        "CS or D' came out zero or negative, so the trials do not follow the speed-duration relationship (a higher "
        "speed must give a shorter time). Check the trials for typing errors or an effort that was not maximal.",
        "A parameter lies outside the generous plausible range (CS 0.3-12 m/s, D' 5-1500 m, vmax up to 15 m/s). "
        "Check the units and the trials.",
        "A trial's speed is at or below the fitted CS, so this model says it could have been held indefinitely, "
        "yet it ended in exhaustion. Check that trial and prefer another model.",
        "The model could not be fitted; the reason is given with it.",
        "With only two trials every 2-parameter model passes exactly through both and gives the same CS and D'; "
        "the hyperbolic model is reported by default.",
        "No model gave physiologically valid parameters with standard errors, so no best model can be named. "
        "Check the trials, or add one."};
    int i = flag_index(flag);
    if (i < 0)
        return NULL;
    return modality == CPD_PD_SPEED ? speed[i] : power[i];
}

const char *cpd_pd_pred_text(cpd_pd_pred_status s)
{
    static const char *const text[CPD_PD_NPREDS] = {
        [CPD_PD_PRED_OK] = "predicted",
        [CPD_PD_PRED_NO_FIT] = "the model has no result to predict from",
        [CPD_PD_PRED_INVALID_MODEL] = "the model's critical intensity or W' is not positive, so it cannot predict",
        [CPD_PD_PRED_NOT_W_PRIME_LIMITED] = "at or below the critical intensity: no W'-limited task failure is "
                                            "predicted",
        [CPD_PD_PRED_ABOVE_P_MAX] = "at or above the three-parameter model's maximal intensity: no positive "
                                    "duration is predicted",
        [CPD_PD_PRED_WITHIN_D_PRIME] = "the distance is at or below D': the 2-parameter model gives no finite time "
                                       "for it",
    };
    return (unsigned)s < CPD_PD_NPREDS ? text[s] : "unknown";
}

/* Delta-method variance of a prediction from its gradient g in (cp, w, a). The covariance is
 * stored in (cp, w_prime, p_max), so g first maps there through a = w/(pmax - cp):
 * da/dcp = a^2/w, da/dw = a/w, da/dpmax = -a^2/w. */
static double grad_var(const cpd_pd_model_fit *m, const double g[3])
{
    double h[3] = {g[0], g[1], 0};
    if (m->has_p_max) {
        double a = m->t_offset_s, w = m->w_prime;
        h[0] += g[2] * a * a / w;
        h[1] += g[2] * a / w;
        h[2] = -g[2] * a * a / w;
    }
    double v = 0;
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++)
            v += h[i] * m->cov[i * 3 + j] * h[j];
    return v > 0 ? v : 0;
}

/* Common checks; returns CPD_OK to go on, else the code to return with out filled. */
static int pred_begin(const cpd_pd_model_fit *m, double v, cpd_pd_pred *out)
{
    if (!m || !out || !(isfinite(v) && v > 0))
        return CPD_EUSAGE;
    memset(out, 0, sizeof *out);
    if (!m->ok) {
        out->status = CPD_PD_PRED_NO_FIT;
        return CPD_ENODATA;
    }
    if (!(m->cp > 0 && m->w_prime > 0)) {
        out->status = CPD_PD_PRED_INVALID_MODEL;
        return CPD_ENODATA;
    }
    return CPD_OK;
}

static double quantile(const cpd_pd_model_fit *m)
{
    return gsl_cdf_tdist_Pinv(0.975, (double)m->dof);
}

/* Sets value and an interval on ln(value) from the variance of value. */
static void finish_log(const cpd_pd_model_fit *m, double value, double var, cpd_pd_pred *out)
{
    out->status = CPD_PD_PRED_OK;
    out->valid = 1;
    out->value = value;
    if (m->has_se && m->dof > 0) {
        double sl = sqrt(var) / value, q = quantile(m);
        out->ci_valid = 1;
        out->ci95[0] = value * exp(-q * sl);
        out->ci95[1] = value * exp(q * sl);
    }
}

int cpd_pd_predict_time(const cpd_pd_model_fit *m, double intensity, cpd_pd_pred *out)
{
    int rc = pred_begin(m, intensity, out);
    if (rc)
        return rc;
    double d = intensity - m->cp;
    if (!(d > AT_CP_REL * m->cp)) {
        out->status = CPD_PD_PRED_NOT_W_PRIME_LIMITED;
        return CPD_OK;
    }
    double t = m->w_prime / d - m->t_offset_s;
    if (!(t > 0) || !isfinite(t)) {
        out->status = CPD_PD_PRED_ABOVE_P_MAX;
        return CPD_OK;
    }
    const double g[3] = {m->w_prime / (d * d), 1 / d, -1};
    finish_log(m, t, grad_var(m, g), out);
    return CPD_OK;
}

int cpd_pd_predict_intensity(const cpd_pd_model_fit *m, double duration_s, cpd_pd_pred *out)
{
    int rc = pred_begin(m, duration_s, out);
    if (rc)
        return rc;
    double u = duration_s + m->t_offset_s;
    double p = m->cp + m->w_prime / u;
    const double g[3] = {1, 1 / u, -m->w_prime / (u * u)};
    out->status = CPD_PD_PRED_OK;
    out->valid = 1;
    out->value = p;
    if (m->has_se && m->dof > 0) {
        double h = quantile(m) * sqrt(grad_var(m, g));
        out->ci_valid = 1;
        out->ci95[0] = p - h;
        out->ci95[1] = p + h;
    }
    return CPD_OK;
}

int cpd_pd_predict_distance_time(const cpd_pd_model_fit *m, double distance_m, cpd_pd_pred *out)
{
    if (m && m->modality != CPD_PD_SPEED)
        return CPD_EUSAGE;
    int rc = pred_begin(m, distance_m, out);
    if (rc)
        return rc;
    double cs = m->cp, dp = m->w_prime, a = m->t_offset_s, D = distance_m;
    if (!m->has_p_max) {
        if (!(D > dp)) {
            out->status = CPD_PD_PRED_WITHIN_D_PRIME;
            return CPD_OK;
        }
        double t = (D - dp) / cs;
        const double g[3] = {-t / cs, -1 / cs, 0};
        finish_log(m, t, grad_var(m, g), out);
        return CPD_OK;
    }
    /* cs t^2 + (cs a + dp - D) t - D a = 0; the positive root, in the form that avoids cancellation */
    double B = cs * a + dp - D;
    double sq = sqrt(B * B + 4 * cs * D * a);
    double t = B > 0 ? 2 * D * a / (B + sq) : (sq - B) / (2 * cs);
    /* implicit differentiation of F(t; cs, dp, a) = 0 */
    double Ft = 2 * cs * t + B;
    const double g[3] = {-(t * t + a * t) / Ft, -t / Ft, -(cs * t - D) / Ft};
    finish_log(m, t, grad_var(m, g), out);
    return CPD_OK;
}

int cpd_pd_time_near_cp(const cpd_pd_model_fit *m, double intensity, int *inside, double *t_lo)
{
    if (!m || !inside || !t_lo || !(isfinite(intensity) && intensity > 0))
        return CPD_EUSAGE;
    *inside = 0;
    *t_lo = 0;
    if (!m->ok || !m->has_se || !(m->w_prime > 0))
        return CPD_OK;
    double lo = m->cp_ci95[0], hi = m->cp_ci95[1];
    if (!(intensity >= lo && intensity <= hi))
        return CPD_OK;
    *inside = 1;
    /* CP at its lower bound is the most pessimistic CP the data allow; W' at its estimate */
    if (intensity > lo) {
        double t = m->w_prime / (intensity - lo) - m->t_offset_s;
        *t_lo = t > 0 && isfinite(t) ? t : 0;
    }
    return CPD_OK;
}

int cpd_pd_best_for_time_trials(cpd_pd_result *res)
{
    if (!res || res->modality != CPD_PD_SPEED)
        return CPD_EUSAGE;
    const cpd_pd_model_fit *f = &res->models[CPD_PD_LINEAR_TOTAL];
    if (!qualifies(f) || !f->has_se)
        return CPD_ENODATA;
    unsigned old = res->has_best ? res->models[res->best].flags : 0;
    res->has_best = 1;
    res->best = CPD_PD_LINEAR_TOTAL;
    /* the fit's overall flags follow the best model */
    res->flags = (res->flags & ~old) | res->data_flags | f->flags;
    res->flags &= ~CPD_PD_FLAG_NO_VALID_MODEL;
    return CPD_OK;
}

int cpd_pd_fit_models(cpd_pd_modality modality, const double *intensity, const double *duration_s, size_t n,
                      unsigned models, cpd_pd_result *res, char *msg)
{
    cpd_pd_opts o;
    cpd_pd_opts_init(&o);
    o.models = models;
    cpd_pd_ws *w = cpd_pd_alloc();
    int rc = w ? cpd_pd_fit(w, modality, intensity, duration_s, n, &o, res, msg) : CPD_ENOMEM;
    cpd_pd_free(w);
    return rc;
}
