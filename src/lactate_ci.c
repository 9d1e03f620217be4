/* lactate_ci.c: 95 % intervals of a step test's thresholds by a residual bootstrap about the
 * least-squares cubic: every resample is analysed by cpd_lactate_analyse itself, so each interval
 * carries exactly the rule behind its estimate. Nothing here changes an estimate. */
#include "cpdomain/lactate.h"
#include "cpdomain/status.h"
#include "resample.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

static double cubic(const double *c, double x)
{
    return c[0] + x * (c[1] + x * (c[2] + x * c[3]));
}

int cpd_lactate_ci_compute(const double *intensity, const double *lactate, size_t n, const cpd_lactate_result *r,
                           size_t n_boot, uint64_t seed, cpd_lactate_ci *out)
{
    if (!intensity || !lactate || !r || !out)
        return CPD_EUSAGE;
    memset(out, 0, sizeof *out);
    if (!r->has_cubic || n < 5 || n > CPD_LACTATE_NMAX || n_boot < 20)
        return CPD_ENODATA;
    out->n_boot = n_boot;
    double fit[CPD_LACTATE_NMAX], res[CPD_LACTATE_NMAX], ys[CPD_LACTATE_NMAX], mean = 0;
    for (size_t i = 0; i < n; i++) {
        fit[i] = cubic(r->cubic, intensity[i]);
        res[i] = lactate[i] - fit[i];
        mean += res[i] / (double)n;
    }
    double sc = sqrt((double)n / (double)(n - 4)); /* four cubic coefficients */
    for (size_t i = 0; i < n; i++)
        res[i] = (res[i] - mean) * sc;
    double *v[CPD_LACTATE_NCI];
    size_t m[CPD_LACTATE_NCI] = {0};
    int rc = CPD_OK;
    for (int k = 0; k < CPD_LACTATE_NCI; k++)
        v[k] = malloc(n_boot * sizeof(double));
    cpd_lactate_result *rb = malloc(sizeof *rb);
    for (int k = 0; k < CPD_LACTATE_NCI; k++)
        if (!v[k])
            rc = CPD_ENOMEM;
    if (!rb)
        rc = CPD_ENOMEM;
    for (size_t b = 0; b < n_boot && !rc; b++) {
        for (size_t i = 0; i < n; i++) {
            double y = fit[i] + res[cpd_rs_next(&seed) % n];
            ys[i] = y < 0.05 ? 0.05 : y > 30 ? 30 : y; /* the analysis accepts 0 < la <= 30 */
        }
        if (cpd_lactate_analyse(intensity, ys, NULL, n, rb, NULL) != CPD_OK)
            continue;
        const cpd_lactate_value *x[CPD_LACTATE_NCI] = {&rb->lt1, &rb->dmax, &rb->dmax_mod, &rb->obla};
        for (int k = 0; k < CPD_LACTATE_NCI; k++)
            if (x[k]->status == CPD_LACTATE_FOUND)
                v[k][m[k]++] = x[k]->intensity;
    }
    const cpd_lactate_value *e[CPD_LACTATE_NCI] = {&r->lt1, &r->dmax, &r->dmax_mod, &r->obla};
    for (int k = 0; k < CPD_LACTATE_NCI && !rc; k++) {
        out->n_used[k] = m[k];
        if (e[k]->status != CPD_LACTATE_FOUND || m[k] < n_boot / 2)
            continue;
        double lo, hi;
        cpd_rs_interval95(v[k], m[k], &lo, &hi);
        out->valid[k] = 1;
        out->ci95[k][0] = fmin(lo, e[k]->intensity);
        out->ci95[k][1] = fmax(hi, e[k]->intensity);
    }
    for (int k = 0; k < CPD_LACTATE_NCI; k++)
        free(v[k]);
    free(rb);
    return rc;
}
