/* linfit.c: ordinary least squares by a column-scaled SVD (GSL), with NIST-style statistics, and the
 * two-segment regression of the V-slope and the log-log lactate threshold. */
#include "cpdomain/linfit.h"
#include "cpdomain/status.h"

#include <gsl/gsl_errno.h>
#include <gsl/gsl_linalg.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

struct cpd_linfit_ws {
    size_t n_max, p_max;
    gsl_matrix *A, *V; /* n_max x p_max, p_max x p_max; fits use the top-left corner */
    gsl_vector *S;
};

cpd_linfit_ws *cpd_linfit_alloc(size_t n_max, size_t p_max)
{
    if (p_max == 0 || p_max > CPD_LINFIT_PMAX || n_max < p_max)
        return NULL;
    cpd_linfit_ws *w = calloc(1, sizeof *w);
    if (!w)
        return NULL;
    w->n_max = n_max;
    w->p_max = p_max;
    w->A = gsl_matrix_alloc(n_max, p_max);
    w->V = gsl_matrix_alloc(p_max, p_max);
    w->S = gsl_vector_alloc(p_max);
    if (!w->A || !w->V || !w->S) {
        cpd_linfit_free(w);
        return NULL;
    }
    return w;
}

void cpd_linfit_free(cpd_linfit_ws *w)
{
    if (!w)
        return;
    gsl_matrix_free(w->A);
    gsl_matrix_free(w->V);
    gsl_vector_free(w->S);
    free(w);
}

int cpd_linfit(const double *X, const double *y, size_t n, size_t p, int intercept, cpd_linfit_result *res)
{
    if (!X || !y || !res || p == 0 || p > CPD_LINFIT_PMAX || n < p)
        return CPD_EUSAGE;
    cpd_linfit_ws *w = cpd_linfit_alloc(n, p);
    if (!w)
        return CPD_ENOMEM;
    int rc = cpd_linfit_solve(w, X, y, n, p, intercept, res);
    cpd_linfit_free(w);
    return rc;
}

int cpd_linfit_solve(cpd_linfit_ws *w, const double *X, const double *y, size_t n, size_t p, int intercept,
                     cpd_linfit_result *res)
{
    if (!w || !X || !y || !res || p == 0 || p > CPD_LINFIT_PMAX || n < p || n > w->n_max || p > w->p_max)
        return CPD_EUSAGE;
    for (size_t i = 0; i < n; i++) {
        if (!isfinite(y[i]))
            return CPD_ENODATA;
        for (size_t j = 0; j < p; j++)
            if (!isfinite(X[i * p + j]))
                return CPD_ENODATA;
    }
    memset(res, 0, sizeof *res);
    res->n = n;
    res->p = p;
    res->dof = n - p;

    /* Column-scaled SVD: A D^-1 = U S V'. Then b = D^-1 V S^-1 U'y and (X'X)^-1 = D^-1 V S^-2 V' D^-1.
     * Scaling first keeps polynomial designs (NIST Pontius, Wampler) well conditioned. */
    gsl_matrix_view Av = gsl_matrix_submatrix(w->A, 0, 0, n, p);
    gsl_matrix_view Vv = gsl_matrix_submatrix(w->V, 0, 0, p, p);
    gsl_vector_view Sv = gsl_vector_subvector(w->S, 0, p);
    gsl_matrix *A = &Av.matrix, *V = &Vv.matrix;
    gsl_vector *S = &Sv.vector;
    double D[CPD_LINFIT_PMAX], uty[CPD_LINFIT_PMAX];
    for (size_t j = 0; j < p; j++) {
        double ss = 0.0;
        for (size_t i = 0; i < n; i++)
            ss += X[i * p + j] * X[i * p + j];
        D[j] = ss > 0 ? sqrt(ss) : 1.0;
        for (size_t i = 0; i < n; i++)
            gsl_matrix_set(A, i, j, X[i * p + j] / D[j]);
    }
    /* One-sided Jacobi (GSL): as accurate as Golub-Reinsch or more, and it allocates nothing,
     * where gsl_linalg_SV_decomp allocates inside its bidiagonalisation on every call. */
    if (gsl_linalg_SV_decomp_jacobi(A, V, S) != GSL_SUCCESS)
        return CPD_ENODATA;
    double smax = 0;
    for (size_t j = 0; j < p; j++)
        smax = fmax(smax, gsl_vector_get(S, j));
    for (size_t j = 0; j < p; j++)
        if (!(gsl_vector_get(S, j) > 1e-14 * smax))
            return CPD_ENODATA; /* dependent columns: no unique solution */
    for (size_t k = 0; k < p; k++) {
        double d = 0.0;
        for (size_t i = 0; i < n; i++)
            d += gsl_matrix_get(A, i, k) * y[i];
        uty[k] = d / gsl_vector_get(S, k);
    }
    for (size_t j = 0; j < p; j++) {
        double b = 0.0;
        for (size_t k = 0; k < p; k++)
            b += gsl_matrix_get(V, j, k) * uty[k];
        res->b[j] = b / D[j];
    }
    /* the RSS from the residuals themselves */
    double rss = 0.0, ybar = 0.0, syy = 0.0;
    for (size_t i = 0; i < n; i++)
        ybar += y[i];
    ybar /= (double)n;
    for (size_t i = 0; i < n; i++) {
        double fit = 0.0;
        for (size_t j = 0; j < p; j++)
            fit += X[i * p + j] * res->b[j];
        double r = y[i] - fit;
        rss += r * r;
        syy += intercept ? (y[i] - ybar) * (y[i] - ybar) : y[i] * y[i];
    }
    res->rss = rss;
    res->r2 = syy > 0 ? 1.0 - rss / syy : 1.0;
    double s2 = res->dof > 0 ? rss / (double)res->dof : 0.0;
    res->s = sqrt(s2);
    for (size_t j = 0; j < p; j++)
        for (size_t l = 0; l < p; l++) {
            double v = 0.0;
            for (size_t k = 0; k < p; k++) {
                double sk = gsl_vector_get(S, k);
                v += gsl_matrix_get(V, j, k) * gsl_matrix_get(V, l, k) / (sk * sk);
            }
            res->cov[j * p + l] = s2 * v / (D[j] * D[l]);
        }
    for (size_t j = 0; j < p; j++)
        res->se[j] = sqrt(fmax(res->cov[j * p + j], 0.0));
    return CPD_OK;
}

int cpd_linfit_line(const double *x, const double *y, size_t n, cpd_linfit_result *res)
{
    return cpd_linfit_poly(x, y, n, 1, res);
}

int cpd_linfit_poly(const double *x, const double *y, size_t n, size_t deg, cpd_linfit_result *res)
{
    if (!x || deg + 1 > CPD_LINFIT_PMAX)
        return CPD_EUSAGE;
    size_t p = deg + 1;
    double *X = malloc((n ? n : 1) * p * sizeof(double));
    if (!X)
        return CPD_ENOMEM;
    for (size_t i = 0; i < n; i++) {
        double v = 1.0;
        for (size_t j = 0; j < p; j++) {
            X[i * p + j] = v;
            v *= x[i];
        }
    }
    int rc = cpd_linfit(X, y, n, p, 1, res);
    free(X);
    return rc;
}

/* ---- two-segment regression ---- */

/* Residual sum of squares of a line through m points with the given centred sums; -1 when the
 * x values are all equal (no line). */
static double seg_rss(double m, double sx, double sy, double sxx, double sxy, double syy)
{
    double cxx = sxx - sx * sx / m;
    double cxy = sxy - sx * sy / m;
    double cyy = syy - sy * sy / m;
    if (!(cxx > 1e-12 * (sxx > 0 ? sxx : 1)))
        return -1;
    double r = cyy - cxy * cxy / cxx;
    return r > 0 ? r : 0;
}

int cpd_linfit_twoseg_fit(const double *x, const double *y, size_t n, size_t min_seg, cpd_linfit_twoseg *out)
{
    if (!x || !y || !out || min_seg < 2 || n < 2 * min_seg)
        return CPD_EUSAGE;
    memset(out, 0, sizeof *out);
    for (size_t i = 0; i < n; i++) {
        if (!isfinite(x[i]) || !isfinite(y[i]))
            return CPD_ENODATA;
        if (i > 0 && x[i] < x[i - 1])
            return CPD_EUSAGE;
    }
    /* Centring keeps the running sums free of cancellation at VO2 scales. */
    double mx = 0, my = 0;
    for (size_t i = 0; i < n; i++) {
        mx += x[i];
        my += y[i];
    }
    mx /= (double)n;
    my /= (double)n;
    double T[5] = {0, 0, 0, 0, 0}, L[5] = {0, 0, 0, 0, 0};
    for (size_t i = 0; i < n; i++) {
        double u = x[i] - mx, v = y[i] - my;
        T[0] += u;
        T[1] += v;
        T[2] += u * u;
        T[3] += u * v;
        T[4] += v * v;
    }
    size_t best = 0;
    double best_rss = 0;
    for (size_t k = 1; k < n; k++) {
        double u = x[k - 1] - mx, v = y[k - 1] - my;
        L[0] += u;
        L[1] += v;
        L[2] += u * u;
        L[3] += u * v;
        L[4] += v * v;
        if (k < min_seg || n - k < min_seg)
            continue;
        double r1 = seg_rss((double)k, L[0], L[1], L[2], L[3], L[4]);
        double r2 = seg_rss((double)(n - k), T[0] - L[0], T[1] - L[1], T[2] - L[2], T[3] - L[3], T[4] - L[4]);
        if (r1 < 0 || r2 < 0)
            continue;
        if (best == 0 || r1 + r2 < best_rss) {
            best = k;
            best_rss = r1 + r2;
        }
    }
    if (best == 0)
        return CPD_ENODATA;

    cpd_linfit_result f1, f2;
    if (cpd_linfit_line(x, y, best, &f1) != CPD_OK || cpd_linfit_line(x + best, y + best, n - best, &f2) != CPD_OK)
        return CPD_ENODATA;
    out->n = n;
    out->split = best;
    out->b1 = f1.b[0];
    out->s1 = f1.b[1];
    out->b2 = f2.b[0];
    out->s2 = f2.b[1];
    out->s1_se = f1.se[1];
    out->s2_se = f2.se[1];
    out->rss = f1.rss + f2.rss;
    /* below 1e-9 of the slopes the SE is rounding: the segments are exact and z is undefined */
    double se = sqrt(f1.se[1] * f1.se[1] + f2.se[1] * f2.se[1]);
    if (se > 1e-9 * (fabs(out->s1) + fabs(out->s2))) {
        out->has_z = 1;
        out->z = (out->s2 - out->s1) / se;
    }
    double ds = out->s1 - out->s2;
    if (fabs(ds) > 1e-12 * (fabs(out->s1) + fabs(out->s2))) {
        double xc = (out->b2 - out->b1) / ds;
        if (isfinite(xc)) {
            out->has_cross = 1;
            out->x_cross = xc;
            out->y_cross = out->b1 + out->s1 * xc;
        }
    }
    out->x_lo = x[0];
    out->x_hi = x[n - 1];
    return CPD_OK;
}
