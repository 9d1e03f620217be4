/* steps.c: stages of a step test from the recorded intensity, their steady-state gas exchange and the
 * VO2-intensity gain from the stage means. */
#include "cpdomain/steps.h"
#include "cpdomain/lactate.h"
#include "cpdomain/linfit.h"
#include "cpdomain/status.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define COMPLETE_TOL_S 10.0 /* a stage within 10 s of the usual length is complete (breaths straddle its edges) */
#define GAIN_PEAK_FRAC 0.8  /* without a GET: stages up to 80 % of the peak intensity */
#define GAIN_MIN_STAGES 3

static int cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return x < y ? -1 : x > y;
}

static double median(double *v, size_t n)
{
    if (n == 0)
        return 0;
    qsort(v, n, sizeof *v, cmp_double);
    return n % 2 ? v[n / 2] : 0.5 * (v[n / 2 - 1] + v[n / 2]);
}

/* The noise SD of a recorded intensity over [0, t_end] from its successive differences, robustly
 * (1.4826 x the median absolute deviation of the differences, / sqrt 2): a measured power that
 * wanders around its target. Steps and a steady ramp give 0 (their differences are all alike). */
static double record_noise(const double *t, const double *x, size_t n, double t_end_s)
{
    size_t m = 0;
    for (size_t i = 1; i < n; i++)
        m += t[i - 1] >= 0 && t[i] <= t_end_s;
    if (m < 10)
        return 0;
    double *d = malloc(m * sizeof *d);
    if (!d)
        return 0;
    size_t k = 0;
    for (size_t i = 1; i < n; i++)
        if (t[i - 1] >= 0 && t[i] <= t_end_s)
            d[k++] = x[i] - x[i - 1];
    double med = median(d, m);
    for (size_t i = 0; i < m; i++)
        d[i] = fabs(d[i] - med);
    double mad = median(d, m);
    free(d);
    return 1.4826 * mad / sqrt(2.0);
}

int cpd_steps_find(const double *t, const double *x, size_t n, double t_end_s, double tol, cpd_steps_result *r)
{
    if (!t || !x || !r || !(tol > 0))
        return CPD_EUSAGE;
    memset(r, 0, sizeof *r);
    r->tol = tol;
    r->noise = record_noise(t, x, n, t_end_s);
    tol = fmax(tol, 4 * r->noise);
    size_t i = 0;
    while (i < n && t[i] < 0)
        i++;
    int pend = 0;              /* a short run at a new level, before a dip: the stage may start there */
    double pend_t0 = 0, pend_mean = 0;
    while (i < n && t[i] <= t_end_s && r->n < CPD_STEPS_MAX) {
        size_t j = i;
        double sum = 0;
        while (j < n && t[j] <= t_end_s && fabs(x[j] - (j > i ? sum / (double)(j - i) : x[i])) <= tol)
            sum += x[j++];
        double t0 = t[i], t1 = t[j - 1], mean = sum / (double)(j - i);
        int last = j >= n || t[j] > t_end_s;
        cpd_steps_stage *prev = r->n ? &r->stage[r->n - 1] : NULL;
        if (prev && fabs(mean - prev->intensity) <= tol) {
            prev->t_end_s = t1; /* the same stage after a short dip: one stage */
        } else if (prev && mean < prev->intensity) {
            /* a dip below the stage: not a stage, and it does not end a pending start */
        } else if (t1 - t0 >= (last ? CPD_STEPS_MIN_LAST_S : CPD_STEPS_MIN_STAGE_S)) {
            cpd_steps_stage *s = &r->stage[r->n++];
            s->t_start_s = pend && fabs(mean - pend_mean) <= tol ? pend_t0 : t0;
            s->t_end_s = t1;
            s->intensity = mean;
            s->stable = -1;
            pend = 0;
        } else if (!pend || fabs(mean - pend_mean) > tol) {
            pend = 1;
            pend_t0 = t0;
            pend_mean = mean;
        }
        i = j;
    }
    double d[CPD_STEPS_MAX], covered = 0;
    for (size_t k = 0; k < r->n; k++)
        covered += r->stage[k].t_end_s - r->stage[k].t_start_s;
    r->covered_frac = t_end_s > 0 ? covered / t_end_s : 0;
    if (r->n >= 2) {
        for (size_t k = 0; k + 1 < r->n; k++)
            d[k] = r->stage[k + 1].t_start_s - r->stage[k].t_start_s;
        r->step_s = median(d, r->n - 1);
        for (size_t k = 0; k + 1 < r->n; k++)
            d[k] = r->stage[k + 1].intensity - r->stage[k].intensity;
        r->increment = median(d, r->n - 1);
    }
    /* how much the intensity rises within a stage (least-squares slope x length): ~0 for a step, the
     * whole band for a slow ramp that only looks like steps */
    for (size_t k = 0; k < r->n; k++) {
        cpd_steps_stage *g = &r->stage[k];
        size_t a = 0, m = 0;
        while (a < n && t[a] < g->t_start_s)
            a++;
        while (a + m < n && t[a + m] <= g->t_end_s)
            m++;
        cpd_linfit_result f;
        d[k] = m >= 3 && cpd_linfit_line(t + a, x + a, m, &f) == CPD_OK ? fabs(f.b[1]) * (g->t_end_s - g->t_start_s) : 0;
    }
    r->within_rise = median(d, r->n);
    for (size_t k = 0; k < r->n; k++) /* a stage cut short (usually the last) is not complete */
        r->stage[k].complete = r->n >= 2 && r->stage[k].t_end_s - r->stage[k].t_start_s >= r->step_s - COMPLETE_TOL_S;
    return CPD_OK;
}

int cpd_steps_is_steps(const cpd_steps_result *r)
{
    return r && r->n >= CPD_STEPS_MIN_STAGES && r->covered_frac >= CPD_STEPS_MIN_COVER && r->increment >= 2 * r->tol &&
           r->within_rise < 0.5 * r->increment;
}

/* Mean and SD (n - 1) of v over the grid values with t in (lo, hi]; the count in *m. */
static double window_mean(const cpd_gx_series *g, const double *v, double lo, double hi, size_t *m, double *sd)
{
    double s = 0, ss = 0;
    size_t k = 0;
    for (size_t i = 0; i < g->n; i++)
        if (g->t_s[i] > lo && g->t_s[i] <= hi) {
            s += v[i];
            k++;
        }
    *m = k;
    if (k == 0)
        return 0;
    double mean = s / (double)k;
    for (size_t i = 0; i < g->n; i++)
        if (g->t_s[i] > lo && g->t_s[i] <= hi)
            ss += (v[i] - mean) * (v[i] - mean);
    if (sd)
        *sd = k > 1 ? sqrt(ss / (double)(k - 1)) : 0;
    return mean;
}

int cpd_steps_means(cpd_steps_result *r, const cpd_gx_series *g)
{
    if (!r || !g || !g->ch[CPD_GX_VO2])
        return CPD_EUSAGE;
    const double W = CPD_STEPS_SS_WIN_S;
    for (size_t k = 0; k < r->n; k++) {
        cpd_steps_stage *s = &r->stage[k];
        double hi = s->t_end_s, lo = fmax(hi - W, s->t_start_s);
        size_t m = 0, m2 = 0;
        s->vo2_ml_min = window_mean(g, g->ch[CPD_GX_VO2], lo, hi, &m, &s->vo2_sd);
        if (m == 0)
            return CPD_ENODATA;
        s->n_win = m;
        s->stable = -1;
        s->drift_ml_min = 0;
        if (hi - s->t_start_s >= 2 * W) {
            double before = window_mean(g, g->ch[CPD_GX_VO2], hi - 2 * W, hi - W, &m2, NULL);
            if (m2 > 0) {
                s->drift_ml_min = s->vo2_ml_min - before;
                s->stable = fabs(s->drift_ml_min) <= CPD_STEPS_STABLE_ML_MIN;
            }
        }
        s->has_vco2 = g->ch[CPD_GX_VCO2] != NULL;
        if (s->has_vco2)
            s->vco2_ml_min = window_mean(g, g->ch[CPD_GX_VCO2], lo, hi, &m, &s->vco2_sd);
        s->has_hr = g->ch[CPD_GX_HR] != NULL;
        if (s->has_hr)
            s->hr_bpm = window_mean(g, g->ch[CPD_GX_HR], lo, hi, &m, NULL);
    }
    return CPD_OK;
}

int cpd_steps_gain(cpd_steps_result *r, double get_vo2, double peak_intensity)
{
    if (!r)
        return CPD_EUSAGE;
    r->gain_basis = CPD_STEPS_GAIN_NONE;
    r->gain = r->gain_se = r->gain_icpt = 0;
    r->gain_n = 0;
    double x[CPD_STEPS_MAX], y[CPD_STEPS_MAX];
    for (int basis = CPD_STEPS_GAIN_BELOW_GET; basis <= CPD_STEPS_GAIN_BELOW_80PCT; basis++) {
        if (basis == CPD_STEPS_GAIN_BELOW_GET && !(get_vo2 > 0))
            continue;
        size_t m = 0;
        for (size_t k = 0; k < r->n; k++) {
            const cpd_steps_stage *s = &r->stage[k];
            int in = basis == CPD_STEPS_GAIN_BELOW_GET ? s->vo2_ml_min < get_vo2
                                                       : s->intensity <= GAIN_PEAK_FRAC * peak_intensity;
            r->stage[k].in_gain = in && s->n_win > 0;
            if (r->stage[k].in_gain) {
                x[m] = s->intensity;
                y[m++] = s->vo2_ml_min;
            }
        }
        cpd_linfit_result f;
        if (m >= GAIN_MIN_STAGES && cpd_linfit_line(x, y, m, &f) == CPD_OK) {
            r->gain_basis = basis;
            r->gain_n = m;
            r->gain = f.b[1];
            r->gain_se = f.se[1];
            r->gain_icpt = f.b[0];
            return CPD_OK;
        }
    }
    for (size_t k = 0; k < r->n; k++)
        r->stage[k].in_gain = 0;
    return CPD_ENODATA;
}

int cpd_steps_at(const cpd_steps_result *r, double value, int by_intensity, double *out)
{
    if (!r || !out)
        return CPD_EUSAGE;
    if (r->n < 2)
        return CPD_ENODATA;
    /* the first pair of consecutive stages that brackets the value (stage intensities always rise;
     * stage VO2 may not, after a drifting stage) */
    for (size_t k = 0; k + 1 < r->n; k++) {
        double in[2] = {r->stage[k].intensity, r->stage[k + 1].intensity};
        double vo2[2] = {r->stage[k].vo2_ml_min, r->stage[k + 1].vo2_ml_min};
        const double *xs = by_intensity ? in : vo2, *ys = by_intensity ? vo2 : in;
        if (xs[1] > xs[0] && value >= xs[0] && value <= xs[1]) {
            *out = cpd_lactate_stage_interp(xs, ys, 2, value);
            return CPD_OK;
        }
    }
    return CPD_ENODATA;
}
