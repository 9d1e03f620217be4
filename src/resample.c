/* resample.c: the random stream and percentiles shared by the bootstrap intervals. */
#include "resample.h"

#include <math.h>
#include <stdlib.h>

uint64_t cpd_rs_next(uint64_t *s)
{
    uint64_t z = (*s += 0x9E3779B97F4A7C15ull);
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ull;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBull;
    return z ^ (z >> 31);
}

static int cmp_dbl(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

static double pct(const double *v, size_t n, double p)
{
    double h = p * (double)(n - 1);
    size_t k = (size_t)floor(h);
    if (k + 1 >= n)
        return v[n - 1];
    return v[k] + (h - (double)k) * (v[k + 1] - v[k]);
}

void cpd_rs_interval95(double *v, size_t n, double *lo, double *hi)
{
    qsort(v, n, sizeof *v, cmp_dbl);
    *lo = pct(v, n, 0.025);
    *hi = pct(v, n, 0.975);
}
