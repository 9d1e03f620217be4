/* gx.c: gas-exchange series handling. Pure: arrays in, arrays out. */
#include "cpdomain/gx.h"
#include "cpdomain/status.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

cpd_gx_series *cpd_gx_alloc(size_t n, unsigned mask)
{
    cpd_gx_series *s = calloc(1, sizeof *s);
    if (!s)
        return NULL;
    s->n = n;
    size_t m = n ? n : 1;
    s->t_s = calloc(m, sizeof(double));
    int ok = s->t_s != NULL;
    for (int c = 0; c < CPD_GX_NCHAN && ok; c++)
        if (mask & CPD_GX_BIT(c)) {
            s->ch[c] = calloc(m, sizeof(double));
            ok = s->ch[c] != NULL;
        }
    if (!ok) {
        cpd_gx_free(s);
        return NULL;
    }
    return s;
}

void cpd_gx_free(cpd_gx_series *s)
{
    if (!s)
        return;
    free(s->t_s);
    for (int c = 0; c < CPD_GX_NCHAN; c++)
        free(s->ch[c]);
    free(s);
}

unsigned cpd_gx_mask(const cpd_gx_series *s)
{
    unsigned m = 0;
    for (int c = 0; c < CPD_GX_NCHAN; c++)
        if (s->ch[c])
            m |= CPD_GX_BIT(c);
    return m;
}

const char *cpd_gx_channel_name(int c)
{
    static const char *const names[CPD_GX_NCHAN] = {
        "vo2_ml_min", "vco2_ml_min", "ve_l_min", "hr_bpm", "power_w", "speed_m_s", "peto2_mmhg", "petco2_mmhg",
    };
    return c >= 0 && c < CPD_GX_NCHAN ? names[c] : NULL;
}

int cpd_gx_outliers(const cpd_gx_series *s, int c, size_t half, double k, unsigned char *flag,
                    size_t *n_flagged)
{
    if (c < 0 || c >= CPD_GX_NCHAN || !s->ch[c] || !(k > 0) || half == 0)
        return CPD_EUSAGE;
    const double *x = s->ch[c];
    size_t count = 0;
    for (size_t i = 0; i < s->n; i++) {
        size_t lo = i >= half ? i - half : 0;
        size_t hi = i + half < s->n ? i + half : s->n - 1;
        double sum = 0.0, sum2 = 0.0;
        size_t m = 0;
        for (size_t j = lo; j <= hi; j++)
            if (j != i) {
                sum += x[j];
                m++;
            }
        flag[i] = 0;
        if (m < 3)
            continue;
        double mean = sum / (double)m;
        for (size_t j = lo; j <= hi; j++)
            if (j != i)
                sum2 += (x[j] - mean) * (x[j] - mean);
        double sd = sqrt(sum2 / (double)(m - 1));
        if (sd > 0 && fabs(x[i] - mean) > k * sd) {
            flag[i] = 1;
            count++;
        }
    }
    *n_flagged = count;
    return CPD_OK;
}

cpd_gx_series *cpd_gx_filter(const cpd_gx_series *s, const unsigned char *drop)
{
    size_t keep = 0;
    for (size_t i = 0; i < s->n; i++)
        keep += !drop[i];
    cpd_gx_series *o = cpd_gx_alloc(keep, cpd_gx_mask(s));
    if (!o)
        return NULL;
    size_t k = 0;
    for (size_t i = 0; i < s->n; i++) {
        if (drop[i])
            continue;
        o->t_s[k] = s->t_s[i];
        for (int c = 0; c < CPD_GX_NCHAN; c++)
            if (s->ch[c])
                o->ch[c][k] = s->ch[c][i];
        k++;
    }
    return o;
}

int cpd_gx_interp(const cpd_gx_series *s, double step_s, cpd_gx_series **out)
{
    *out = NULL;
    if (!(step_s > 0))
        return CPD_EUSAGE;
    if (s->n < 2 || !(s->t_s[s->n - 1] > s->t_s[0]))
        return CPD_ENODATA;
    unsigned mask = cpd_gx_mask(s);

    /* Merge samples that share a time stamp, so that interpolation never divides by zero. */
    cpd_gx_series *u = cpd_gx_alloc(s->n, mask);
    if (!u)
        return CPD_ENOMEM;
    size_t m = 0;
    for (size_t i = 0; i < s->n;) {
        size_t j = i;
        while (j < s->n && s->t_s[j] == s->t_s[i])
            j++;
        u->t_s[m] = s->t_s[i];
        for (int c = 0; c < CPD_GX_NCHAN; c++)
            if (s->ch[c]) {
                double sum = 0.0;
                for (size_t q = i; q < j; q++)
                    sum += s->ch[c][q];
                u->ch[c][m] = sum / (double)(j - i);
            }
        m++;
        i = j;
    }
    u->n = m;

    double t0 = ceil(u->t_s[0] / step_s) * step_s;
    double t1 = u->t_s[m - 1];
    size_t ng = t1 >= t0 ? (size_t)floor((t1 - t0) / step_s + 1e-9) + 1 : 0;
    if (ng < 2) {
        cpd_gx_free(u);
        return CPD_ENODATA;
    }
    cpd_gx_series *g = cpd_gx_alloc(ng, mask);
    if (!g) {
        cpd_gx_free(u);
        return CPD_ENOMEM;
    }
    size_t seg = 0;
    for (size_t k = 0; k < ng; k++) {
        double t = t0 + (double)k * step_s;
        while (seg + 2 < m && u->t_s[seg + 1] < t)
            seg++;
        double ta = u->t_s[seg], tb = u->t_s[seg + 1];
        double w = (t - ta) / (tb - ta);
        if (w < 0)
            w = 0;
        if (w > 1)
            w = 1;
        g->t_s[k] = t;
        for (int c = 0; c < CPD_GX_NCHAN; c++)
            if (u->ch[c])
                g->ch[c][k] = u->ch[c][seg] + w * (u->ch[c][seg + 1] - u->ch[c][seg]);
    }
    cpd_gx_free(u);
    *out = g;
    return CPD_OK;
}

void cpd_gx_shift(cpd_gx_series *s, double dt_s)
{
    for (size_t i = 0; i < s->n; i++)
        s->t_s[i] += dt_s;
}

int cpd_gx_rolling_mean(const double *x, size_t n, size_t w, double *out)
{
    if (w == 0)
        return CPD_EUSAGE;
    double sum = 0.0;
    for (size_t i = 0; i < n; i++) {
        sum += x[i];
        if (i >= w)
            sum -= x[i - w];
        size_t m = i + 1 < w ? i + 1 : w;
        out[i] = sum / (double)m;
    }
    return CPD_OK;
}
