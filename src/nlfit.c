/* nlfit.c: nonlinear least squares through gsl_multifit_nlinear. Model callbacks see plain
 * arrays; this file alone adapts them to GSL vectors and owns the GSL workspace. */
#include "cpdomain/nlfit.h"
#include "cpdomain/status.h"

#include <gsl/gsl_blas.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_multifit_nlinear.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

struct cpd_nlfit_ws {
    gsl_multifit_nlinear_workspace *gw; /* sized n_alloc x p_alloc */
    size_t n_alloc, p_alloc;
    gsl_matrix *covar;                  /* p_alloc x p_alloc */
    double *jbuf;                       /* n_alloc * p_alloc row-major Jacobian scratch */
    gsl_multifit_nlinear_fdf fdf;       /* GSL keeps a pointer to this */
    const cpd_nlfit_problem *pr;        /* the problem being solved */
    int domain_fail;                    /* set when f failed at the start */
};

/* Value given to residuals where the model is undefined: large enough that the trust-region
 * step is rejected, small enough that its square sums stay finite. */
#define OUTSIDE 1e100

static int adapt_f(const gsl_vector *x, void *params, gsl_vector *f)
{
    cpd_nlfit_ws *w = params;
    const cpd_nlfit_problem *pr = w->pr;
    int bad = pr->f(x->data, pr->ctx, f->data) != 0;
    for (size_t i = 0; i < pr->n && !bad; i++)
        if (!isfinite(f->data[i]))
            bad = 1;
    if (bad) {
        for (size_t i = 0; i < pr->n; i++)
            f->data[i] = OUTSIDE;
        w->domain_fail = 1;
    }
    return GSL_SUCCESS;
}

static int adapt_df(const gsl_vector *x, void *params, gsl_matrix *J)
{
    cpd_nlfit_ws *w = params;
    const cpd_nlfit_problem *pr = w->pr;
    if (pr->df(x->data, pr->ctx, w->jbuf) != 0)
        return GSL_EDOM;
    for (size_t i = 0; i < pr->n; i++)
        for (size_t j = 0; j < pr->p; j++) {
            double v = w->jbuf[i * pr->p + j];
            if (!isfinite(v))
                return GSL_EDOM;
            gsl_matrix_set(J, i, j, v);
        }
    return GSL_SUCCESS;
}

void cpd_nlfit_opts_init(cpd_nlfit_opts *o)
{
    o->xtol = 1e-14;
    o->gtol = 1e-14;
    o->ftol = 1e-14;
    o->max_iter = 1000;
}

cpd_nlfit_ws *cpd_nlfit_alloc(void)
{
    return calloc(1, sizeof(cpd_nlfit_ws));
}

static void release(cpd_nlfit_ws *w)
{
    gsl_multifit_nlinear_free(w->gw);
    gsl_matrix_free(w->covar);
    free(w->jbuf);
    w->gw = NULL;
    w->covar = NULL;
    w->jbuf = NULL;
    w->n_alloc = w->p_alloc = 0;
}

void cpd_nlfit_free(cpd_nlfit_ws *w)
{
    if (!w)
        return;
    release(w);
    free(w);
}

static int ensure(cpd_nlfit_ws *w, size_t n, size_t p)
{
    if (w->gw && w->n_alloc == n && w->p_alloc == p)
        return CPD_OK;
    release(w);
    gsl_multifit_nlinear_parameters par = gsl_multifit_nlinear_default_parameters();
    par.trs = gsl_multifit_nlinear_trs_lm;
    /* Levenberg's identity scaling: More's scaling stalls on BoxBOD from NIST's first start */
    par.scale = gsl_multifit_nlinear_scale_levenberg;
    par.solver = gsl_multifit_nlinear_solver_qr;
    w->gw = gsl_multifit_nlinear_alloc(gsl_multifit_nlinear_trust, &par, n, p);
    w->covar = gsl_matrix_alloc(p, p);
    w->jbuf = malloc(n * p * sizeof(double));
    if (!w->gw || !w->covar || !w->jbuf) {
        release(w);
        return CPD_ENOMEM;
    }
    w->n_alloc = n;
    w->p_alloc = p;
    return CPD_OK;
}

int cpd_nlfit_solve(cpd_nlfit_ws *w, const cpd_nlfit_problem *pr, const double *b0,
                    const cpd_nlfit_opts *opts, cpd_nlfit_result *res)
{
    if (!w || !pr || !pr->f || !b0 || !res || pr->p == 0 || pr->p > CPD_NLFIT_PMAX || pr->n < pr->p)
        return CPD_EUSAGE;
    cpd_nlfit_opts def;
    if (!opts) {
        cpd_nlfit_opts_init(&def);
        opts = &def;
    }
    int rc = ensure(w, pr->n, pr->p);
    if (rc)
        return rc;
    memset(res, 0, sizeof *res);
    res->n = pr->n;
    res->p = pr->p;
    res->dof = pr->n - pr->p;

    w->pr = pr;
    w->domain_fail = 0;
    w->fdf.f = adapt_f;
    w->fdf.df = pr->df ? adapt_df : NULL;
    w->fdf.fvv = NULL;
    w->fdf.n = pr->n;
    w->fdf.p = pr->p;
    w->fdf.params = w;

    double x0[CPD_NLFIT_PMAX];
    memcpy(x0, b0, pr->p * sizeof(double));
    gsl_vector_view xv = gsl_vector_view_array(x0, pr->p);
    if (gsl_multifit_nlinear_init(&xv.vector, &w->fdf, w->gw) != GSL_SUCCESS)
        return CPD_ENODATA;
    if (w->domain_fail)
        return CPD_ENODATA; /* the start itself is outside the model's domain */

    int info = 0;
    int st = gsl_multifit_nlinear_driver(opts->max_iter, opts->xtol, opts->gtol, opts->ftol, NULL, NULL,
                                         &info, w->gw);
    const gsl_vector *x = gsl_multifit_nlinear_position(w->gw);
    const gsl_vector *f = gsl_multifit_nlinear_residual(w->gw);
    memcpy(res->b, x->data, pr->p * sizeof(double));
    double rss = 0.0;
    gsl_blas_ddot(f, f, &rss);
    res->rss = rss;
    res->iter = gsl_multifit_nlinear_niter(w->gw);

    /* GSL's driver reports no progress on the first iteration as GSL_EMAXITER with info
     * GSL_ENOPROG: the start is already the minimum (a refit from a converged estimate) */
    if (st == GSL_EMAXITER && info == GSL_ENOPROG)
        st = GSL_ENOPROG;
    if (st == GSL_ENOPROG) {
        /* No step can reduce the cost: at a minimum this is success (GSL reports it when the
         * residual is already at rounding level). Accept it when the gradient J'f is negligible
         * against the scale of J and f. */
        const gsl_matrix *J = gsl_multifit_nlinear_jac(w->gw);
        double gmax = 0.0;
        for (size_t j = 0; j < pr->p; j++) {
            double g = 0.0, cn = 0.0;
            for (size_t i = 0; i < pr->n; i++) {
                double jij = gsl_matrix_get(J, i, j);
                g += jij * f->data[i];
                cn += jij * jij;
            }
            double fn = sqrt(rss);
            double sc = sqrt(cn) * (fn > 0 ? fn : 1.0);
            if (sc > 0 && fabs(g) / sc > gmax)
                gmax = fabs(g) / sc;
        }
        st = gmax < 1e-8 ? GSL_SUCCESS : GSL_ENOPROG;
    }
    if (st != GSL_SUCCESS || !isfinite(rss) || rss >= OUTSIDE)
        return CPD_ENOCONV;
    for (size_t j = 0; j < pr->p; j++)
        if (!isfinite(res->b[j]))
            return CPD_ENOCONV;

    const gsl_matrix *J = gsl_multifit_nlinear_jac(w->gw);
    gsl_matrix_view cv = gsl_matrix_submatrix(w->covar, 0, 0, pr->p, pr->p);
    if (res->dof > 0 && gsl_multifit_nlinear_covar(J, 0.0, &cv.matrix) == GSL_SUCCESS) {
        double s2 = rss / (double)res->dof;
        res->s = sqrt(s2);
        res->has_se = 1;
        for (size_t i = 0; i < pr->p; i++)
            for (size_t j = 0; j < pr->p; j++) {
                double c = gsl_matrix_get(&cv.matrix, i, j) * s2;
                if (!isfinite(c))
                    res->has_se = 0;
                res->cov[i * pr->p + j] = c;
            }
        for (size_t j = 0; j < pr->p && res->has_se; j++) {
            double d = res->cov[j * pr->p + j];
            if (!(d >= 0))
                res->has_se = 0;
            else
                res->se[j] = sqrt(d);
        }
        /* a dependent column gets zero variance from GSL: that is not a precise estimate */
        for (size_t j = 0; j < pr->p && res->has_se; j++)
            if (res->se[j] == 0.0 && rss > 0)
                res->has_se = 0;
        if (!res->has_se) {
            memset(res->se, 0, sizeof res->se);
            memset(res->cov, 0, sizeof res->cov);
        }
    }
    return CPD_OK;
}
