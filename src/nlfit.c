/* nlfit.c: nonlinear least squares through gsl_multifit_nlinear. Model callbacks see plain
 * arrays; this file alone adapts them to GSL vectors and owns the GSL workspace. */
#include "cpdomain/nlfit.h"
#include "cpdomain/status.h"

#include <gsl/gsl_blas.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_linalg.h>
#include <gsl/gsl_multifit_nlinear.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

/* GSL's workspace has a fixed n x p, so one is kept per problem size. A caller that alternates
 * between a few sizes (a fit and its leave-one-out refits, a 2- and a 3-parameter model) then
 * allocates only the first time it meets each size. */
#define NSLOT 8

typedef struct {
    gsl_multifit_nlinear_workspace *gw; /* sized n x p */
    size_t n, p;                        /* 0 when the slot is empty */
    gsl_matrix *qr;                     /* n x p: QR of J for the covariance */
    gsl_vector *tau, *norm;             /* p each, QRPT scratch */
    gsl_permutation *perm;              /* p */
    double *jbuf;                       /* n * p row-major Jacobian scratch */
    double *fbuf;                       /* n residuals, for GSL vectors that are not contiguous */
    unsigned long used;                 /* clock value at last use, for least-recently-used eviction */
} slot;

struct cpd_nlfit_ws {
    slot slots[NSLOT];
    slot *cur;                    /* the slot of the problem being solved */
    unsigned long clock;          /* counts solves */
    gsl_multifit_nlinear_fdf fdf; /* GSL keeps a pointer to this */
    const cpd_nlfit_problem *pr;  /* the problem being solved */
    int domain_fail;              /* set when f failed */
};

/* Value given to residuals where the model is undefined: large enough that the trust-region
 * step is rejected, small enough that its square sums stay finite. */
#define OUTSIDE 1e100

/* GSL passes f as a strided view (a column of J) when it builds a finite-difference Jacobian,
 * so the residuals go through a contiguous buffer; x is always contiguous (p <= CPD_NLFIT_PMAX). */
static int adapt_f(const gsl_vector *x, void *params, gsl_vector *f)
{
    cpd_nlfit_ws *w = params;
    const cpd_nlfit_problem *pr = w->pr;
    double b[CPD_NLFIT_PMAX];
    for (size_t j = 0; j < pr->p; j++)
        b[j] = gsl_vector_get(x, j);
    double *fb = w->cur->fbuf;
    int bad = pr->f(b, pr->ctx, fb) != 0;
    for (size_t i = 0; i < pr->n && !bad; i++)
        if (!isfinite(fb[i]))
            bad = 1;
    if (bad)
        w->domain_fail = 1;
    for (size_t i = 0; i < pr->n; i++)
        gsl_vector_set(f, i, bad ? OUTSIDE : fb[i]);
    return GSL_SUCCESS;
}

static int adapt_df(const gsl_vector *x, void *params, gsl_matrix *J)
{
    cpd_nlfit_ws *w = params;
    const cpd_nlfit_problem *pr = w->pr;
    double *jbuf = w->cur->jbuf;
    double b[CPD_NLFIT_PMAX];
    for (size_t j = 0; j < pr->p; j++)
        b[j] = gsl_vector_get(x, j);
    if (pr->df(b, pr->ctx, jbuf) != 0)
        return GSL_EDOM;
    for (size_t i = 0; i < pr->n; i++)
        for (size_t j = 0; j < pr->p; j++) {
            double v = jbuf[i * pr->p + j];
            if (!isfinite(v))
                return GSL_EDOM;
            gsl_matrix_set(J, i, j, v);
        }
    return GSL_SUCCESS;
}

static int gn_step_negligible(const gsl_matrix *J, const gsl_vector *f, const gsl_vector *x, size_t n, size_t p)
{
    gsl_matrix *QR = gsl_matrix_alloc(n, p);
    gsl_vector *tau = gsl_vector_alloc(p), *dx = gsl_vector_alloc(p), *res = gsl_vector_alloc(n);
    int ok = 0;
    if (QR && tau && dx && res) {
        gsl_matrix_const_view Jv = gsl_matrix_const_submatrix(J, 0, 0, n, p);
        gsl_matrix_memcpy(QR, &Jv.matrix);
        gsl_vector_const_view fv = gsl_vector_const_subvector(f, 0, n);
        if (gsl_linalg_QR_decomp(QR, tau) == GSL_SUCCESS && gsl_linalg_QR_lssolve(QR, tau, &fv.vector, dx, res) == GSL_SUCCESS) {
            ok = 1;
            for (size_t j = 0; j < p && ok; j++) {
                double d = fabs(gsl_vector_get(dx, j)), xj = fabs(gsl_vector_get(x, j));
                ok = isfinite(d) && d <= 1e-10 * (xj > 0 ? xj : 1.0);
            }
        }
    }
    gsl_matrix_free(QR);
    gsl_vector_free(tau);
    gsl_vector_free(dx);
    gsl_vector_free(res);
    return ok;
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

static void release(slot *sl)
{
    gsl_multifit_nlinear_free(sl->gw);
    gsl_matrix_free(sl->qr);
    gsl_vector_free(sl->tau);
    gsl_vector_free(sl->norm);
    gsl_permutation_free(sl->perm);
    free(sl->jbuf);
    free(sl->fbuf);
    memset(sl, 0, sizeof *sl);
}

void cpd_nlfit_free(cpd_nlfit_ws *w)
{
    if (!w)
        return;
    for (size_t k = 0; k < NSLOT; k++)
        release(&w->slots[k]);
    free(w);
}

/* Points w->cur at a slot sized n x p, reusing one of that size or replacing the least
 * recently used. */
static int ensure(cpd_nlfit_ws *w, size_t n, size_t p)
{
    slot *victim = &w->slots[0];
    for (size_t k = 0; k < NSLOT; k++) {
        slot *sl = &w->slots[k];
        if (sl->gw && sl->n == n && sl->p == p) {
            w->cur = sl;
            sl->used = ++w->clock;
            return CPD_OK;
        }
        if (!sl->gw ? victim->gw != NULL : (victim->gw && sl->used < victim->used))
            victim = sl;
    }
    release(victim);
    gsl_multifit_nlinear_parameters par = gsl_multifit_nlinear_default_parameters();
    par.trs = gsl_multifit_nlinear_trs_lm;
    /* Levenberg's identity scaling: More's scaling stalls on BoxBOD from NIST's first start */
    par.scale = gsl_multifit_nlinear_scale_levenberg;
    par.solver = gsl_multifit_nlinear_solver_qr;
    victim->gw = gsl_multifit_nlinear_alloc(gsl_multifit_nlinear_trust, &par, n, p);
    victim->qr = gsl_matrix_alloc(n, p);
    victim->tau = gsl_vector_alloc(p);
    victim->norm = gsl_vector_alloc(p);
    victim->perm = gsl_permutation_alloc(p);
    victim->jbuf = malloc(n * p * sizeof(double));
    victim->fbuf = malloc(n * sizeof(double));
    if (!victim->gw || !victim->qr || !victim->tau || !victim->norm || !victim->perm || !victim->jbuf ||
        !victim->fbuf) {
        release(victim);
        return CPD_ENOMEM;
    }
    victim->n = n;
    victim->p = p;
    victim->used = ++w->clock;
    w->cur = victim;
    return CPD_OK;
}

/* (J'J)^-1 = P R^-1 R^-T P' from the pivoted QR J P = Q R, the method of
 * gsl_multifit_nlinear_covar, on the slot's scratch (that function allocates on every call).
 * cov is p x p row-major. Returns 0, or -1 when J is rank deficient (a zero pivot). */
static int unscaled_covar(slot *sl, const gsl_matrix *J, size_t p, double *cov)
{
    int signum;
    gsl_matrix_memcpy(sl->qr, J);
    if (gsl_linalg_QRPT_decomp(sl->qr, sl->tau, sl->perm, &signum, sl->norm) != GSL_SUCCESS)
        return -1;
    double Ri[CPD_NLFIT_PMAX * CPD_NLFIT_PMAX] = {0}; /* R^-1, upper triangular */
    for (size_t k = p; k-- > 0;) {
        double rkk = gsl_matrix_get(sl->qr, k, k);
        if (!(fabs(rkk) > 0) || !isfinite(rkk))
            return -1;
        Ri[k * p + k] = 1 / rkk;
        for (size_t j = k + 1; j < p; j++) {
            double sum = 0;
            for (size_t l = k + 1; l <= j; l++)
                sum += gsl_matrix_get(sl->qr, k, l) * Ri[l * p + j];
            Ri[k * p + j] = -sum / rkk;
        }
    }
    for (size_t i = 0; i < p; i++)
        for (size_t j = 0; j < p; j++) {
            double sum = 0;
            for (size_t l = i > j ? i : j; l < p; l++)
                sum += Ri[i * p + l] * Ri[j * p + l];
            cov[gsl_permutation_get(sl->perm, i) * p + gsl_permutation_get(sl->perm, j)] = sum;
        }
    return 0;
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
    if (gsl_multifit_nlinear_init(&xv.vector, &w->fdf, w->cur->gw) != GSL_SUCCESS)
        return CPD_ENODATA;
    if (w->domain_fail)
        return CPD_ENODATA; /* the start itself is outside the model's domain */

    int info = 0;
    int st = gsl_multifit_nlinear_driver(opts->max_iter, opts->xtol, opts->gtol, opts->ftol, NULL, NULL,
                                         &info, w->cur->gw);
    const gsl_vector *x = gsl_multifit_nlinear_position(w->cur->gw);
    const gsl_vector *f = gsl_multifit_nlinear_residual(w->cur->gw);
    memcpy(res->b, x->data, pr->p * sizeof(double));
    double rss = 0.0;
    gsl_blas_ddot(f, f, &rss);
    res->rss = rss;
    res->iter = gsl_multifit_nlinear_niter(w->cur->gw);

    /* GSL's driver reports "no step reduces the cost" on its very first iteration as
     * GSL_EMAXITER with info = GSL_ENOPROG (multifit_nlinear/driver.c): the start was already
     * the minimum to rounding, as for an exact fit started from the linear solution. */
    if (st == GSL_EMAXITER && info == GSL_ENOPROG)
        st = GSL_ENOPROG;
    if (st == GSL_ENOPROG) {
        /* No step can reduce the cost: at a minimum this is success (GSL reports it when the
         * residual is already at rounding level). Accept it when the gradient J'f is negligible
         * against the scale of J and f. */
        const gsl_matrix *J = gsl_multifit_nlinear_jac(w->cur->gw);
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
        /* An exact fit (n == p, or data without noise) leaves a residual of rounding noise that
         * the columns of J span, so the cosine test above cannot pass. There the Gauss-Newton step
         * that remains, the least-squares solution of J dx = f, is the honest test: accept when it
         * is below 1e-10 of every parameter. (The rare path may allocate.) */
        if (st == GSL_ENOPROG && gn_step_negligible(J, f, x, pr->n, pr->p))
            st = GSL_SUCCESS;
    }
    if (st != GSL_SUCCESS || !isfinite(rss) || rss >= OUTSIDE)
        return CPD_ENOCONV;
    for (size_t j = 0; j < pr->p; j++)
        if (!isfinite(res->b[j]))
            return CPD_ENOCONV;

    if (res->dof > 0 && unscaled_covar(w->cur, gsl_multifit_nlinear_jac(w->cur->gw), pr->p, res->cov) == 0) {
        double s2 = rss / (double)res->dof;
        res->s = sqrt(s2);
        res->has_se = 1;
        for (size_t k = 0; k < pr->p * pr->p; k++) {
            res->cov[k] *= s2;
            if (!isfinite(res->cov[k]))
                res->has_se = 0;
        }
        for (size_t j = 0; j < pr->p && res->has_se; j++) {
            double d = res->cov[j * pr->p + j];
            if (!(d >= 0))
                res->has_se = 0;
            else
                res->se[j] = sqrt(d);
        }
        if (!res->has_se) {
            memset(res->se, 0, sizeof res->se);
            memset(res->cov, 0, sizeof res->cov);
        }
    }
    return CPD_OK;
}
