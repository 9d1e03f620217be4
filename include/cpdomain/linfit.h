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

/* Two straight lines fitted by OLS to the lower and upper parts of (x, y) sorted by x. */
typedef struct {
    size_t n;             /* points */
    size_t split;         /* points in the lower segment; the upper holds n - split */
    double s1, b1;        /* lower line: slope (y unit per x unit), intercept (y unit) */
    double s2, b2;        /* upper line: slope, intercept */
    double s1_se, s2_se;  /* standard errors of the slopes (0 when a segment has no residual dof) */
    double rss;           /* pooled residual sum of squares, y unit squared */
    int has_z;            /* 1 when z is defined (some slope SE > 0) */
    double z;             /* (s2 - s1) / sqrt(s1_se^2 + s2_se^2), dimensionless; 0 when !has_z */
    int has_cross;        /* 1 when the lines are not parallel */
    double x_cross;       /* intersection, x unit; 0 when !has_cross */
    double y_cross;       /* intersection, y unit; 0 when !has_cross */
    double x_lo, x_hi;    /* smallest and largest x, x unit */
} cpd_linfit_twoseg;

/* Two-segment linear regression: x sorted ascending, every split with at least min_seg points on
 * each side, two OLS lines, the split with the least pooled RSS (first on ties); the method of the
 * V-slope (Beaver, Wasserman & Whipp 1986) and of the log-log lactate threshold (Beaver, Wasserman &
 * Whipp 1985 J Appl Physiol 59:1936). Returns CPD_OK, CPD_EUSAGE for min_seg < 2, n < 2 min_seg or
 * unsorted x, CPD_ENODATA for a non-finite value or when no split has two non-degenerate segments. */
int cpd_linfit_twoseg_fit(const double *x, const double *y, size_t n, size_t min_seg, cpd_linfit_twoseg *out);

#endif
