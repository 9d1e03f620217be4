/* nlfit.h: the one nonlinear least-squares engine of cpdomain, a thin layer over GSL's
 * gsl_multifit_nlinear (trust region, Levenberg-Marquardt, QR solver). Every nonlinear model
 * (power-duration, VO2 kinetics, ...) fits through it; it is checked against NIST StRD. */
#ifndef CPDOMAIN_NLFIT_H
#define CPDOMAIN_NLFIT_H

#include <stddef.h>

#define CPD_NLFIT_PMAX 10 /* most parameters a model may have */

/* Residuals f[i] = model(x_i; b) - y_i for i < n (the caller applies any weights).
 * Return 0 on success; nonzero (or a non-finite f[i]) marks b as outside the model's domain,
 * and the engine then rejects the step. */
typedef int (*cpd_nlfit_fn)(const double *b, void *ctx, double *f);
/* Jacobian J[i*p + j] = d f[i] / d b[j], row-major n x p. Return 0 on success. */
typedef int (*cpd_nlfit_jac)(const double *b, void *ctx, double *J);

typedef struct {
    size_t n;         /* observations */
    size_t p;         /* parameters, 1..CPD_NLFIT_PMAX, p <= n */
    cpd_nlfit_fn f;   /* residual function, required */
    cpd_nlfit_jac df; /* analytic Jacobian; NULL means forward differences */
    void *ctx;        /* passed to f and df */
} cpd_nlfit_problem;

typedef struct {
    double xtol;     /* step tolerance (relative), default 1e-14 */
    double gtol;     /* scaled gradient tolerance, default 1e-14 */
    double ftol;     /* relative change in the residual norm, default 1e-14 */
    size_t max_iter; /* iteration limit, default 1000 */
} cpd_nlfit_opts;

typedef struct {
    size_t n, p;                                /* as in the problem */
    double b[CPD_NLFIT_PMAX];                   /* estimates */
    double se[CPD_NLFIT_PMAX];                  /* standard errors, s * sqrt(diag((J'J)^-1)); 0 when dof = 0 */
    double cov[CPD_NLFIT_PMAX * CPD_NLFIT_PMAX]; /* covariance s^2 (J'J)^-1, row-major p x p */
    double rss;                                 /* residual sum of squares */
    double s;                                   /* residual standard deviation sqrt(rss / dof); 0 when dof = 0 */
    size_t dof;                                 /* n - p */
    size_t iter;                                /* iterations used */
    int has_se;                                 /* 1 when dof > 0 and J has full rank */
} cpd_nlfit_result;

typedef struct cpd_nlfit_ws cpd_nlfit_ws;

/* Fills o with the defaults above. */
void cpd_nlfit_opts_init(cpd_nlfit_opts *o);

/* Allocates a reusable workspace. It keeps GSL scratch for the last 8 problem sizes (n, p) it has
 * solved, so a caller alternating between a few sizes allocates only on first meeting each size;
 * solving a size it holds allocates nothing. Returns NULL when out of memory.
 * The caller frees it with cpd_nlfit_free. */
cpd_nlfit_ws *cpd_nlfit_alloc(void);
void cpd_nlfit_free(cpd_nlfit_ws *w);

/* Minimises sum f[i]^2 from the start b0 (length p). opts may be NULL for the defaults.
 * Covariance as in Bates & Watts 1988 (Nonlinear Regression Analysis, Wiley), s^2 (J'J)^-1 at
 * the solution. Returns CPD_OK, CPD_EUSAGE for a malformed problem, CPD_ENOCONV when the
 * iteration limit is reached or no progress is possible away from a minimum (res then holds the
 * last iterate), CPD_ENODATA when the start is outside the model's domain, CPD_ENOMEM. */
int cpd_nlfit_solve(cpd_nlfit_ws *w, const cpd_nlfit_problem *pr, const double *b0,
                    const cpd_nlfit_opts *opts, cpd_nlfit_result *res);

#endif
