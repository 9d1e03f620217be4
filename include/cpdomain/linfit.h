/* linfit.h: ordinary least squares through GSL's SVD, with the standard errors
 * and summary statistics every linear model of cpdomain reports. Checked against NIST StRD. */
#ifndef CPDOMAIN_LINFIT_H
#define CPDOMAIN_LINFIT_H

#include <stddef.h>

#define CPD_LINFIT_PMAX 8 /* most coefficients */

typedef struct {
    size_t n, p;                                   /* observations, coefficients */
    double b[CPD_LINFIT_PMAX];                     /* coefficients */
    double se[CPD_LINFIT_PMAX];                    /* standard errors s * sqrt(diag((X'X)^-1)); 0 when dof = 0 */
    double cov[CPD_LINFIT_PMAX * CPD_LINFIT_PMAX]; /* covariance s^2 (X'X)^-1, row-major p x p */
    double rss;                                    /* residual sum of squares */
    double s;                                      /* residual standard deviation sqrt(rss / dof); 0 when dof = 0 */
    double r2;                                     /* centred R^2 (uncentred 1 - rss / sum y^2 without intercept) */
    size_t dof;                                    /* n - p */
} cpd_linfit_result;

/* Fits y = X b by OLS. X is row-major n x p; when intercept is nonzero the caller's X already
 * carries the column of ones and R^2 is centred, else R^2 is uncentred (as NIST does for NoInt).
 * Returns CPD_OK, CPD_EUSAGE for n < p or p outside 1..CPD_LINFIT_PMAX, CPD_ENODATA when X is
 * rank deficient or a value is not finite, CPD_ENOMEM. Allocates and frees its own scratch. */
int cpd_linfit(const double *X, const double *y, size_t n, size_t p, int intercept, cpd_linfit_result *res);

typedef struct cpd_linfit_ws cpd_linfit_ws;

/* Allocates scratch for fits of up to n_max observations and p_max coefficients, so that repeated
 * fits allocate nothing. Returns NULL for p_max outside 1..CPD_LINFIT_PMAX, n_max < p_max, or out of
 * memory. The caller frees it with cpd_linfit_free (which accepts NULL). */
cpd_linfit_ws *cpd_linfit_alloc(size_t n_max, size_t p_max);
void cpd_linfit_free(cpd_linfit_ws *w);

/* cpd_linfit with the scratch of w: same method, results and return codes, plus CPD_EUSAGE when
 * n or p exceed the sizes w was allocated for. */
int cpd_linfit_solve(cpd_linfit_ws *w, const double *X, const double *y, size_t n, size_t p, int intercept,
                     cpd_linfit_result *res);

/* Straight line y = b0 + b1 x (res->b[0] intercept, res->b[1] slope). Same return codes. */
int cpd_linfit_line(const double *x, const double *y, size_t n, cpd_linfit_result *res);

/* Polynomial y = b0 + b1 x + ... + b_deg x^deg, deg < CPD_LINFIT_PMAX. Same return codes. */
int cpd_linfit_poly(const double *x, const double *y, size_t n, size_t deg, cpd_linfit_result *res);

#endif
