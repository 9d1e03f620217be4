/* energy.c: energy and substrate use from gas exchange, peak fat oxidation, the oxygen deficit and
 * the session VO2 model. Formulas and sources are listed in energy.h; rates are never negative. */
#include "cpdomain/energy.h"
#include "cpdomain/kinetics.h"
#include "cpdomain/linfit.h"

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_integration.h>
#include <gsl/gsl_randist.h>
#include <gsl/gsl_rng.h>
#include <gsl/gsl_sort.h>
#include <gsl/gsl_statistics_double.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* Coefficients quoted from memory of the published tables (see energy.h). */
static const cpd_energy_eqset EQSETS[CPD_ENERGY_NEQ] = {
    {"jw2005-high", "Jeukendrup & Wallis 2005 (exercise at 50-75 % VO2max)", 4.210, 2.962, 1.695, 1.701},
    {"jw2005-low", "Jeukendrup & Wallis 2005 (exercise at 40-50 % VO2max)", 4.344, 3.061, 1.695, 1.701},
    {"frayn1983", "Frayn 1983", 4.55, 3.21, 1.67, 1.67},
};

static void say(char *msg, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
static void say(char *msg, const char *fmt, ...)
{
    if (!msg)
        return;
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(msg, CPD_MSG_MAX, fmt, ap);
    va_end(ap);
}

const cpd_energy_eqset *cpd_energy_eqset_get(int eq)
{
    return eq >= 0 && eq < CPD_ENERGY_NEQ ? &EQSETS[eq] : NULL;
}

int cpd_energy_eqset_find(const char *key)
{
    for (int i = 0; key && i < CPD_ENERGY_NEQ; i++)
        if (strcmp(EQSETS[i].key, key) == 0)
            return i;
    return -1;
}

double cpd_energy_weir_kcal_min(double vo2_l_min, double vco2_l_min)
{
    return CPD_ENERGY_WEIR_O2 * vo2_l_min + CPD_ENERGY_WEIR_CO2 * vco2_l_min;
}

const char *cpd_energy_reason_text(int reason)
{
    switch (reason) {
    case CPD_ENERGY_R_NONE: return "valid";
    case CPD_ENERGY_R_NOT_STEADY: return "not valid: no steady state (VCO2 does not track the CO2 of oxidation)";
    case CPD_ENERGY_R_RER_HIGH: return "not valid: RER above 1.00 (CO2 from buffering inflates VCO2)";
    case CPD_ENERGY_R_RER_LOW: return "not valid: RER below 0.70 (hypoventilation or a measurement fault)";
    default: return "unknown reason";
    }
}

/* Rates of set e at VO2, VCO2 in L/min, floored at 0 (rounding of the coefficients near the ends). */
static void rates(const cpd_energy_eqset *e, double vo2, double vco2, double *cho, double *fat)
{
    *cho = fmax(0.0, e->cho_vco2 * vco2 - e->cho_vo2 * vo2);
    *fat = fmax(0.0, e->fat_vo2 * vo2 - e->fat_vco2 * vco2);
}

int cpd_energy_substrate_calc(double vo2_ml_min, double vco2_ml_min, int steady, int eq, cpd_energy_substrate *out,
                              char *msg)
{
    memset(out, 0, sizeof *out);
    const cpd_energy_eqset *e = cpd_energy_eqset_get(eq);
    if (!e) {
        say(msg, "unknown equation set %d", eq);
        return CPD_EUSAGE;
    }
    if (!isfinite(vo2_ml_min) || vo2_ml_min <= 0) {
        say(msg, "VO2 must be a positive number of mL/min");
        return CPD_EDATA;
    }
    if (!isfinite(vco2_ml_min) || vco2_ml_min <= 0) {
        say(msg, "VCO2 is missing: energy and substrate use need VCO2 as well as VO2");
        return CPD_EDATA;
    }
    double rer = vco2_ml_min / vo2_ml_min;
    if (rer < CPD_ENERGY_RER_MIN || rer > CPD_ENERGY_RER_MAX) {
        say(msg, "RER %.2f (VCO2 %.0f / VO2 %.0f mL/min) lies far outside the physiological 0.70-1.20: check the "
            "analyser's calibration and the columns of the file", rer, vco2_ml_min, vo2_ml_min);
        return CPD_EDATA;
    }
    double vo2 = vo2_ml_min / 1000.0, vco2 = vco2_ml_min / 1000.0;
    out->eq = eq;
    out->rer = rer;
    out->ee_kcal_min = cpd_energy_weir_kcal_min(vo2, vco2);
    out->ee_kj_min = out->ee_kcal_min * CPD_ENERGY_KJ_PER_KCAL;
    if (!steady)
        out->reason = CPD_ENERGY_R_NOT_STEADY;
    else if (rer > CPD_ENERGY_RER_VALID_HI)
        out->reason = CPD_ENERGY_R_RER_HIGH;
    else if (rer < CPD_ENERGY_RER_VALID_LO)
        out->reason = CPD_ENERGY_R_RER_LOW;
    else {
        out->rates_valid = 1;
        rates(e, vo2, vco2, &out->cho_g_min, &out->fat_g_min);
    }
    return CPD_OK;
}

/* ---- peak fat oxidation ---- */

static double cubic(const double *c, double x) { return c[0] + x * (c[1] + x * (c[2] + x * c[3])); }

/* The maximum of the cubic on [lo, hi]: the ends and the roots of the derivative inside. */
static void cubic_max(const double *c, double lo, double hi, double *xmax, double *ymax)
{
    double cand[4] = {lo, hi, lo, lo};
    size_t k = 2;
    double A = 3.0 * c[3], B = 2.0 * c[2], C = c[1];
    if (fabs(A) < 1e-300) {
        if (fabs(B) > 0)
            cand[k++] = -C / B;
    } else {
        double disc = B * B - 4.0 * A * C;
        if (disc >= 0) {
            double sq = sqrt(disc);
            double q = -0.5 * (B + copysign(sq, B)); /* stable quadratic roots */
            cand[k++] = q / A;
            if (q != 0)
                cand[k++] = C / q;
        }
    }
    *xmax = lo;
    *ymax = cubic(c, lo);
    for (size_t i = 1; i < k; i++)
        if (cand[i] >= lo && cand[i] <= hi && cubic(c, cand[i]) > *ymax) {
            *xmax = cand[i];
            *ymax = cubic(c, cand[i]);
        }
}

/* From x0 (where f >= level) towards end, the first x where the cubic falls to level, or end. */
static double zone_edge(const double *c, double x0, double end, double level)
{
    const int steps = 2000;
    double prev = x0;
    for (int i = 1; i <= steps; i++) {
        double x = x0 + (end - x0) * i / steps;
        if (cubic(c, x) < level) {
            double a = prev, b = x;
            for (int it = 0; it < 60; it++) {
                double m = 0.5 * (a + b);
                if (cubic(c, m) >= level)
                    a = m;
                else
                    b = m;
            }
            return 0.5 * (a + b);
        }
        prev = x;
    }
    return end;
}

/* Cubic fit of (x, y) and its peak within the data's range; CPD_OK or CPD_ENODATA. */
static int pfo_fit(const double *x, const double *y, size_t n, double *coef, double *xpk, double *ypk)
{
    cpd_linfit_result r;
    int rc = cpd_linfit_poly(x, y, n, 3, &r);
    if (rc)
        return CPD_ENODATA;
    memcpy(coef, r.b, 4 * sizeof *coef);
    double lo = x[0], hi = x[0];
    for (size_t i = 1; i < n; i++) {
        lo = fmin(lo, x[i]);
        hi = fmax(hi, x[i]);
    }
    cubic_max(coef, lo, hi, xpk, ypk);
    return *ypk > 0 ? CPD_OK : CPD_ENODATA;
}

/* The 2.5th and 97.5th percentiles of v (sorted in place): a percentile interval. */
static void ci95(double *v, size_t n, double *ci)
{
    gsl_sort(v, 1, n);
    ci[0] = gsl_stats_quantile_from_sorted_data(v, 1, n, 0.025);
    ci[1] = gsl_stats_quantile_from_sorted_data(v, 1, n, 0.975);
}

int cpd_energy_pfo(const cpd_pfo_input *in, cpd_pfo_result *out, char *msg)
{
    memset(out, 0, sizeof *out);
    const cpd_energy_eqset *e = cpd_energy_eqset_get(in->eq);
    if (!e || in->n > CPD_PFO_MAX_STAGES || !in->power_w || !in->vo2_ml_min || !in->vco2_ml_min) {
        say(msg, "bad arguments: equation set, stage arrays, or more than %d stages", CPD_PFO_MAX_STAGES);
        return CPD_EUSAGE;
    }
    if (!(isfinite(in->vo2peak_ml_min) && in->vo2peak_ml_min > 0)) {
        say(msg, "VO2peak must be given (mL/min) to express the stages as %% VO2peak");
        return CPD_EUSAGE;
    }
    if (in->n < 5) {
        say(msg, "%zu stages: peak fat oxidation needs at least 5 stages for a third-order fit with an interval",
            in->n);
        return CPD_ENODATA;
    }
    size_t n = in->n;
    out->n = n;
    out->has_hr = in->hr_bpm != NULL;
    double vo2peak = in->vo2peak_ml_min;
    for (size_t i = 0; i < n; i++) {
        double p = in->power_w[i], hr = in->hr_bpm ? in->hr_bpm[i] : 1.0;
        if (!isfinite(p) || p < 0 || !isfinite(hr) || hr <= 0) {
            say(msg, "stage %zu: power or HR is not a valid number", i + 1);
            return CPD_EDATA;
        }
        cpd_energy_substrate s;
        char m2[CPD_MSG_MAX];
        int rc = cpd_energy_substrate_calc(in->vo2_ml_min[i], in->vco2_ml_min[i], 1, in->eq, &s, m2);
        if (rc) {
            say(msg, "stage %zu: %s", i + 1, m2);
            return rc;
        }
        out->pct[i] = 100.0 * in->vo2_ml_min[i] / vo2peak;
        out->rer[i] = s.rer;
        if (s.reason == CPD_ENERGY_R_RER_HIGH)
            out->n_rer_above++;
        out->fat[i] = s.fat_g_min; /* 0 when not valid */
        if (s.reason == CPD_ENERGY_R_RER_LOW) {
            say(msg, "stage %zu: RER %.2f below 0.70: fat oxidation cannot be computed (check the analyser)", i + 1,
                s.rer);
            return CPD_EDATA;
        }
        out->measured_peak_g_min = fmax(out->measured_peak_g_min, out->fat[i]);
    }
    int rc = pfo_fit(out->pct, out->fat, n, out->coef, &out->peak_pct, &out->peak_g_min);
    if (rc) {
        say(msg, "the third-order fit of fat oxidation against %%VO2peak has no peak above 0 g/min within the stages");
        return rc;
    }
    /* intensity and HR against %VO2peak: OLS lines through the stages */
    cpd_linfit_result lp, lh;
    if (cpd_linfit_line(out->pct, in->power_w, n, &lp)) {
        say(msg, "the stages' VO2 does not vary: no intensity for the peak");
        return CPD_ENODATA;
    }
    memset(&lh, 0, sizeof lh);
    if (in->hr_bpm && cpd_linfit_line(out->pct, in->hr_bpm, n, &lh))
        out->has_hr = 0;
    out->peak_power_w = lp.b[0] + lp.b[1] * out->peak_pct;
    out->peak_hr_bpm = out->has_hr ? lh.b[0] + lh.b[1] * out->peak_pct : 0.0;
    double lo = out->pct[0], hi = out->pct[0];
    for (size_t i = 1; i < n; i++) {
        lo = fmin(lo, out->pct[i]);
        hi = fmax(hi, out->pct[i]);
    }
    double level = CPD_PFO_ZONE_FRACTION * out->peak_g_min;
    out->zone_pct[0] = zone_edge(out->coef, out->peak_pct, lo, level);
    out->zone_pct[1] = zone_edge(out->coef, out->peak_pct, hi, level);
    for (int k = 0; k < 2; k++)
        out->zone_power_w[k] = lp.b[0] + lp.b[1] * out->zone_pct[k];
    if (in->n_boot == 0)
        return CPD_OK;

    /* bootstrap over stages: percentile intervals (Efron & Tibshirani 1993, Chapman & Hall) */
    double *buf = malloc(4 * in->n_boot * sizeof *buf);
    gsl_rng *g = gsl_rng_alloc(gsl_rng_mt19937);
    if (!buf || !g) {
        free(buf);
        gsl_rng_free(g);
        say(msg, "out of memory");
        return CPD_ENOMEM;
    }
    gsl_rng_set(g, (unsigned long)in->seed);
    double *bp = buf, *bx = buf + in->n_boot, *bw = buf + 2 * in->n_boot, *bh = buf + 3 * in->n_boot;
    size_t m = 0;
    for (size_t b = 0; b < in->n_boot; b++) {
        double x[CPD_PFO_MAX_STAGES], y[CPD_PFO_MAX_STAGES], pw[CPD_PFO_MAX_STAGES], hr[CPD_PFO_MAX_STAGES];
        for (size_t i = 0; i < n; i++) {
            size_t j = (size_t)gsl_rng_uniform_int(g, (unsigned long)n);
            x[i] = out->pct[j];
            y[i] = out->fat[j];
            pw[i] = in->power_w[j];
            hr[i] = in->hr_bpm ? in->hr_bpm[j] : 0.0;
        }
        double c[4], xp, yp;
        cpd_linfit_result l1, l2;
        if (pfo_fit(x, y, n, c, &xp, &yp) || cpd_linfit_line(x, pw, n, &l1))
            continue; /* a resample with fewer than 4 distinct stages has no cubic */
        bp[m] = yp;
        bx[m] = xp;
        bw[m] = l1.b[0] + l1.b[1] * xp;
        bh[m] = out->has_hr && !cpd_linfit_line(x, hr, n, &l2) ? l2.b[0] + l2.b[1] * xp : 0.0;
        m++;
    }
    gsl_rng_free(g);
    out->n_boot = m;
    if (m >= 20) {
        ci95(bp, m, out->peak_ci95);
        ci95(bx, m, out->pct_ci95);
        ci95(bw, m, out->power_ci95);
        if (out->has_hr)
            ci95(bh, m, out->hr_ci95);
    } else
        out->n_boot = 0; /* too few usable resamples for percentiles */
    free(buf);
    return CPD_OK;
}

/* ---- a step test's stages ---- */

int cpd_energy_stage_substrate(const cpd_steps_stage *st, int eq, cpd_energy_substrate *out, char *msg)
{
    if (!st->has_vco2) {
        memset(out, 0, sizeof *out);
        say(msg, "the test has no VCO2: substrate use needs VCO2 as well as VO2");
        return CPD_EDATA;
    }
    return cpd_energy_substrate_calc(st->vo2_ml_min, st->vco2_ml_min, st->stable == 1, eq, out, msg);
}

int cpd_energy_pfo_stage_ok(const cpd_steps_stage *st)
{
    if (!st->complete || !st->has_vco2 || !(st->vo2_ml_min > 0))
        return 0;
    return st->stable == 1 || st->vco2_ml_min / st->vo2_ml_min > CPD_ENERGY_RER_VALID_HI;
}

int cpd_energy_pfo_steps(const cpd_steps_result *s, double vo2peak_ml_min, int eq, size_t n_boot, uint64_t seed,
                         cpd_pfo_result *out, int *used, char *msg)
{
    memset(out, 0, sizeof *out);
    double p[CPD_PFO_MAX_STAGES], v[CPD_PFO_MAX_STAGES], c[CPD_PFO_MAX_STAGES], h[CPD_PFO_MAX_STAGES];
    size_t n = 0, n_vco2 = 0, n_hr = 0;
    for (size_t i = 0; i < s->n && i < CPD_STEPS_MAX; i++) {
        const cpd_steps_stage *st = &s->stage[i];
        n_vco2 += st->has_vco2 != 0;
        int ok = n < CPD_PFO_MAX_STAGES && cpd_energy_pfo_stage_ok(st);
        if (used)
            used[i] = ok;
        if (!ok)
            continue;
        p[n] = st->intensity;
        v[n] = st->vo2_ml_min;
        c[n] = st->vco2_ml_min;
        h[n] = st->hr_bpm;
        n_hr += st->has_hr != 0;
        n++;
    }
    if (n_vco2 == 0) {
        say(msg, "the test has no VCO2: fat oxidation needs VCO2 as well as VO2");
        return CPD_ENODATA;
    }
    if (n < 5) {
        say(msg, "%zu of %zu stages are complete and at a steady state (or above RER 1.00): peak fat oxidation needs "
            "at least 5 for a third-order fit", n, s->n);
        return CPD_ENODATA;
    }
    cpd_pfo_input in = {n, p, v, c, n_hr == n ? h : NULL, vo2peak_ml_min, eq, n_boot, seed};
    return cpd_energy_pfo(&in, out, msg);
}

/* ---- oxygen deficit ---- */

typedef struct {
    const double *b;
    int slow; /* 0: (base + A1) - primary; 1: the slow component */
} deficit_ctx;

static double deficit_f(double t, void *ud)
{
    const deficit_ctx *d = ud;
    double mono = cpd_kinetics_eval(CPD_KIN_MONO, d->b, t);
    if (d->slow)
        return cpd_kinetics_eval(CPD_KIN_BI, d->b, t) - mono;
    return d->b[CPD_KIN_BASE] + d->b[CPD_KIN_A1] - mono;
}

/* Integral of f over [0, T] with the delays as break points, mL/min * s. */
static int integrate(deficit_ctx *d, double T, double *out)
{
    double pts[4];
    size_t np = 0;
    pts[np++] = 0.0;
    double td[2] = {d->b[CPD_KIN_TD1], d->slow ? d->b[CPD_KIN_TD2] : -1.0};
    if (td[1] >= 0 && td[1] < td[0]) {
        double tmp = td[0];
        td[0] = td[1];
        td[1] = tmp;
    }
    for (int k = 0; k < 2; k++)
        if (td[k] > pts[np - 1] && td[k] < T)
            pts[np++] = td[k];
    pts[np++] = T;
    gsl_integration_workspace *w = gsl_integration_workspace_alloc(200);
    if (!w)
        return CPD_ENOMEM;
    gsl_function F = {deficit_f, d};
    double err = 0;
    int st = gsl_integration_qagp(&F, pts, np, 1e-9, 1e-10, 200, w, out, &err);
    gsl_integration_workspace_free(w);
    return st == GSL_SUCCESS ? CPD_OK : CPD_ENOCONV;
}

int cpd_energy_bout_deficit(int model, const double *b, double duration_s, double delta_power_w,
                            cpd_energy_deficit *out)
{
    memset(out, 0, sizeof *out);
    if ((model != CPD_KIN_MONO && model != CPD_KIN_BI) || !b || !(duration_s > 0) || !isfinite(duration_s))
        return CPD_EUSAGE;
    int np = model == CPD_KIN_BI ? CPD_KIN_NPAR : 4;
    for (int k = 0; k < np; k++)
        if (!isfinite(b[k]))
            return CPD_EUSAGE;
    if (!(b[CPD_KIN_TAU1] > 0) || b[CPD_KIN_TD1] < 0 || (model == CPD_KIN_BI && (!(b[CPD_KIN_TAU2] > 0) || b[CPD_KIN_TD2] < 0)))
        return CPD_EUSAGE;
    deficit_ctx d = {b, 0};
    double v;
    int rc = integrate(&d, duration_s, &v);
    if (rc)
        return rc;
    out->deficit_ml = v / 60.0;
    out->deficit_mrt_ml = b[CPD_KIN_A1] * (b[CPD_KIN_TD1] + b[CPD_KIN_TAU1]) / 60.0;
    if (model == CPD_KIN_BI && b[CPD_KIN_A2] != 0) {
        d.slow = 1;
        if ((rc = integrate(&d, duration_s, &v)))
            return rc;
        out->has_slow = 1;
        out->slow_excess_ml = v / 60.0;
        out->slow_end_ml_min = deficit_f(duration_s, &d);
        out->slow_extra_gain_ml_min_w = delta_power_w > 0 ? out->slow_end_ml_min / delta_power_w : 0.0;
    }
    return CPD_OK;
}

int cpd_energy_line_fit(const double *power_w, const double *vo2_ml_min, size_t n, cpd_energy_line *out)
{
    memset(out, 0, sizeof *out);
    if (!power_w || !vo2_ml_min || n < 2)
        return n < 2 ? CPD_ENODATA : CPD_EUSAGE;
    for (size_t i = 0; i < n; i++)
        if (!isfinite(power_w[i]) || !isfinite(vo2_ml_min[i]))
            return CPD_EDATA;
    cpd_linfit_result r;
    int rc = cpd_linfit_line(power_w, vo2_ml_min, n, &r);
    if (rc)
        return rc == CPD_EUSAGE ? CPD_ENODATA : rc;
    out->a_ml_min = r.b[0];
    out->b_ml_min_w = r.b[1];
    memcpy(out->cov, r.cov, sizeof out->cov); /* row-major p x p with p = 2 */
    out->dof = r.dof;
    out->n = n;
    return CPD_OK;
}

int cpd_energy_accumulate(const double *t_s, const double *vo2_ml_min, size_t n, double t0, double t1, double *out_ml)
{
    *out_ml = 0;
    if (!t_s || !vo2_ml_min || !(t1 > t0) || !isfinite(t0) || !isfinite(t1))
        return CPD_EUSAGE;
    if (n < 2 || t_s[0] > t0 || t_s[n - 1] < t1)
        return CPD_ENODATA;
    double acc = 0;
    for (size_t i = 0; i + 1 < n; i++) {
        double a = t_s[i], b = t_s[i + 1];
        if (!isfinite(a) || !isfinite(b) || !isfinite(vo2_ml_min[i]) || !isfinite(vo2_ml_min[i + 1]) || b < a)
            return CPD_EDATA;
        double lo = fmax(a, t0), hi = fmin(b, t1);
        if (hi <= lo)
            continue;
        double slope = (vo2_ml_min[i + 1] - vo2_ml_min[i]) / (b - a);
        double vlo = vo2_ml_min[i] + slope * (lo - a), vhi = vo2_ml_min[i] + slope * (hi - a);
        acc += 0.5 * (vlo + vhi) * (hi - lo);
    }
    *out_ml = acc / 60.0;
    return CPD_OK;
}

int cpd_energy_aod_calc(const cpd_energy_line *line, double power_w, double duration_s, double vo2_ml, double mass_kg,
                        double max_line_power_w, cpd_energy_aod *out)
{
    memset(out, 0, sizeof *out);
    if (!line || !(power_w > 0) || !(duration_s > 0) || !isfinite(vo2_ml) || !isfinite(power_w) ||
        !isfinite(duration_s) || !isfinite(line->a_ml_min) || !isfinite(line->b_ml_min_w))
        return CPD_EUSAGE;
    double var = line->cov[0] + 2.0 * power_w * line->cov[1] + power_w * power_w * line->cov[3];
    out->demand_ml_min = line->a_ml_min + line->b_ml_min_w * power_w;
    out->demand_se_ml_min = sqrt(fmax(var, 0.0));
    out->demand_ml = out->demand_ml_min * duration_s / 60.0;
    out->vo2_ml = vo2_ml;
    out->aod_ml = out->demand_ml - vo2_ml;
    double q = line->dof > 0 ? gsl_cdf_tdist_Pinv(0.975, (double)line->dof) : gsl_cdf_ugaussian_Pinv(0.975);
    double half = q * out->demand_se_ml_min * duration_s / 60.0;
    out->aod_ci95_ml[0] = out->aod_ml - half;
    out->aod_ci95_ml[1] = out->aod_ml + half;
    if (mass_kg > 0 && isfinite(mass_kg)) {
        out->has_mass = 1;
        out->aod_ml_kg = out->aod_ml / mass_kg;
        out->aod_ci95_ml_kg[0] = out->aod_ci95_ml[0] / mass_kg;
        out->aod_ci95_ml_kg[1] = out->aod_ci95_ml[1] / mass_kg;
    }
    if (max_line_power_w > 0)
        out->extrapolation_pct = (int)lround(100.0 * power_w / max_line_power_w);
    return CPD_OK;
}

const char *cpd_energy_aod_cautions(void)
{
    return "The accumulated O2 deficit (Medbo et al. 1988) assumes that the O2 cost of exercise rises linearly with "
           "power above VO2max as it does below it, and that efficiency is the same in a 2-min bout as in the "
           "steady states; neither is verified, and the extrapolation reaches well beyond the line's data. Medbo "
           "et al. built the line from about ten submaximal bouts of 10 min (from memory); fewer points, short "
           "bouts, a slow component in the heavy domain, or a line from a ramp change the demand and so the deficit "
           "substantially. The interval covers the line's statistical "
           "uncertainty only. Compare deficits only within one method, one ergometer and one athlete.";
}

/* ---- the session VO2 model ---- */

static int model_ok(const cpd_vo2model *m)
{
    const double v[] = {m->base_ml_min, m->gain_ml_min_w, m->tau_s, m->delay_s, m->get_w, m->cp_w,
                        m->sc_gain_ml_min_w, m->sc_tau_s, m->sc_delay_s, m->vo2peak_ml_min};
    for (size_t i = 0; i < sizeof v / sizeof v[0]; i++)
        if (!isfinite(v[i]))
            return 0;
    return m->base_ml_min > 0 && m->gain_ml_min_w > 0 && m->tau_s > 0 && m->delay_s >= 0 && m->get_w > 0 &&
           m->sc_gain_ml_min_w >= 0 && m->sc_tau_s > 0 && m->sc_delay_s >= 0 && m->vo2peak_ml_min > m->base_ml_min;
}

/* Target of the slow component at power p. */
static double sc_target(const cpd_vo2model *m, double p)
{
    if (p <= m->get_w)
        return 0.0;
    double s = m->sc_gain_ml_min_w * (p - m->get_w);
    if (m->cp_w > 0 && p >= m->cp_w)
        s = fmax(s, m->vo2peak_ml_min - (m->base_ml_min + m->gain_ml_min_w * p));
    return s;
}

/* Power during [t, t+1) seconds shifted back by whole + frac seconds: the value before the switch
 * inside the second (u1, on [t, t+frac)) and after it (u2). Before the record: p[0]. */
static void delayed(const double *p, size_t k, size_t whole, double *u1, double *u2)
{
    *u2 = k >= whole ? p[k - whole] : p[0];
    *u1 = k >= whole + 1 ? p[k - whole - 1] : p[0];
}

/* One second of a first-order response to an input u1 on [0, f) and u2 on [f, 1): exact. */
static double step1(double x, double u1, double u2, double f, double tau)
{
    x = u1 + (x - u1) * exp(-f / tau);
    return u2 + (x - u2) * exp(-(1.0 - f) / tau);
}

int cpd_vo2model_run(const cpd_vo2model *m, const double *p_w, size_t n, double *vo2_out)
{
    if (!m || !p_w || !vo2_out || n == 0 || !model_ok(m))
        return CPD_EUSAGE;
    for (size_t i = 0; i < n; i++)
        if (!isfinite(p_w[i]) || p_w[i] < 0)
            return CPD_EUSAGE;
    size_t w1 = (size_t)floor(m->delay_s), w2 = (size_t)floor(m->sc_delay_s);
    double f1 = m->delay_s - (double)w1, f2 = m->sc_delay_s - (double)w2;
    double x1 = m->base_ml_min + m->gain_ml_min_w * p_w[0], x2 = 0.0;
    for (size_t k = 0; k < n; k++) {
        double a, b;
        delayed(p_w, k, w1, &a, &b);
        x1 = step1(x1, m->base_ml_min + m->gain_ml_min_w * a, m->base_ml_min + m->gain_ml_min_w * b, f1, m->tau_s);
        x1 = fmin(x1, m->vo2peak_ml_min);
        delayed(p_w, k, w2, &a, &b);
        x2 = step1(x2, sc_target(m, a), sc_target(m, b), f2, m->sc_tau_s);
        vo2_out[k] = fmin(x1 + x2, m->vo2peak_ml_min);
    }
    return CPD_OK;
}

double cpd_vo2model_gross_efficiency(const cpd_vo2model *m, double power_w, double rer)
{
    if (!(power_w > 0))
        return 0.0;
    double l = (m->base_ml_min + m->gain_ml_min_w * power_w) / 1000.0;
    double watts = cpd_energy_weir_kcal_min(l, rer * l) * CPD_ENERGY_KJ_PER_KCAL * 1000.0 / 60.0;
    return watts > 0 ? power_w / watts : 0.0;
}

int cpd_vo2model_domain(const cpd_vo2model *m, double vo2_ml_min)
{
    double vget = m->base_ml_min + m->gain_ml_min_w * m->get_w;
    double vcp = m->cp_w > m->get_w ? m->base_ml_min + m->gain_ml_min_w * m->cp_w + sc_target(m, m->cp_w - 1e-9)
                                    : m->vo2peak_ml_min * 0.95;
    if (vo2_ml_min <= vget)
        return CPD_KIN_MODERATE;
    if (vo2_ml_min >= fmin(vcp, m->vo2peak_ml_min * 0.95))
        return CPD_KIN_SEVERE;
    return CPD_KIN_HEAVY;
}

/* ---- the cost of a recorded session ---- */

static double clampd(double x, double lo, double hi) { return x < lo ? lo : x > hi ? hi : x; }

/* One draw of the parameters: normal around the point values, clamped to the model's domain. */
static void draw_params(const cpd_energy_params *p, gsl_rng *g, cpd_vo2model *m, double *rer)
{
    const cpd_vo2model *a = &p->m, *s = &p->sd;
#define DRAW(f) (a->f + (s->f > 0 ? gsl_ran_gaussian(g, s->f) : 0.0))
    m->base_ml_min = fmax(DRAW(base_ml_min), 100.0);
    m->gain_ml_min_w = fmax(DRAW(gain_ml_min_w), 1.0);
    m->tau_s = fmax(DRAW(tau_s), 5.0);
    m->delay_s = fmax(DRAW(delay_s), 0.0);
    m->get_w = fmax(DRAW(get_w), 10.0);
    m->cp_w = a->cp_w > 0 ? fmax(DRAW(cp_w), m->get_w + 1.0) : 0.0;
    m->sc_gain_ml_min_w = fmax(DRAW(sc_gain_ml_min_w), 0.0);
    m->sc_tau_s = fmax(DRAW(sc_tau_s), 20.0);
    m->sc_delay_s = fmax(DRAW(sc_delay_s), 0.0);
    m->vo2peak_ml_min = fmax(DRAW(vo2peak_ml_min), m->base_ml_min + 100.0);
#undef DRAW
    for (int k = 0; k < 3; k++)
        rer[k] = clampd(p->rer[k] + (p->rer_sd[k] > 0 ? gsl_ran_gaussian(g, p->rer_sd[k]) : 0.0), 0.70, 1.10);
}

/* Energy (kJ), CHO and fat (g) of one second at VO2 vo2 (mL/min) with RER rer. */
static void second_cost(const cpd_energy_eqset *e, double vo2, double rer, double *kj, double *cho, double *fat)
{
    double l = vo2 / 1000.0;
    /* above RER 1.00 the extra CO2 comes from buffering, not oxidation: energy and substrate both use
     * the RER within the equations' range (all carbohydrate at 1.00), the point and every draw alike */
    double r = clampd(rer, CPD_ENERGY_RER_VALID_LO, CPD_ENERGY_RER_VALID_HI);
    *kj = cpd_energy_weir_kcal_min(l, r * l) * CPD_ENERGY_KJ_PER_KCAL / 60.0;
    rates(e, l, r * l, cho, fat);
    *cho /= 60.0;
    *fat /= 60.0;
}

/* Runs model m over the record and adds each recorded second's cost into minute sums (any may be
 * NULL); dom_* receive the per-domain split when not NULL. */
static int cost_run(const cpd_vo2model *m, const double *rer, const cpd_energy_eqset *e, const double *p,
                    const unsigned char *rec, size_t n, double *vo2, double *ee, double *cho, double *fat,
                    double *vo2_sum, double *dom_s, double *dom_ee)
{
    int rc = cpd_vo2model_run(m, p, n, vo2);
    if (rc)
        return rc;
    for (size_t i = 0; i < n; i++) {
        if (!rec[i])
            continue;
        size_t k = i / 60;
        int d = cpd_vo2model_domain(m, vo2[i]);
        double kj, c, f;
        second_cost(e, vo2[i], rer[d - 1], &kj, &c, &f);
        if (ee)
            ee[k] += kj;
        if (cho)
            cho[k] += c;
        if (fat)
            fat[k] += f;
        if (vo2_sum)
            vo2_sum[k] += vo2[i];
        if (dom_s) {
            dom_s[d - 1] += 1.0;
            dom_ee[d - 1] += kj;
        }
    }
    return CPD_OK;
}

void cpd_energy_session_free(cpd_energy_session_result *r)
{
    if (!r)
        return;
    free(r->buf);
    r->buf = NULL;
}

int cpd_energy_session(const cpd_energy_params *par, const double *p_w, const unsigned char *rec, size_t n, int eq,
                       double efficiency, size_t draws, uint64_t seed, cpd_energy_session_result *out)
{
    memset(out, 0, sizeof *out);
    const cpd_energy_eqset *e = cpd_energy_eqset_get(eq);
    if (!par || !p_w || !rec || n == 0 || !e || !(efficiency >= 0.05 && efficiency <= 0.5) || draws < 20 ||
        !model_ok(&par->m))
        return CPD_EUSAGE;
    for (int k = 0; k < 3; k++)
        if (!(par->rer[k] >= CPD_ENERGY_RER_MIN && par->rer[k] <= CPD_ENERGY_RER_MAX))
            return CPD_EUSAGE;
    size_t M = (n + 59) / 60;
    enum { NARR = 15 };
    out->buf = calloc(NARR * M, sizeof *out->buf);
    double *mat = calloc(3 * M * draws + 4 * draws + n + draws, sizeof *mat);
    gsl_rng *g = gsl_rng_alloc(gsl_rng_mt19937);
    int rc = CPD_OK;
    if (!out->buf || !mat || !g) {
        rc = CPD_ENOMEM;
        goto done;
    }
    double **arr[NARR] = {&out->rec_s, &out->power_w, &out->work_kj, &out->vo2_ml_min, &out->ee_kj, &out->ee_lo,
                          &out->ee_hi, &out->cho_g, &out->cho_lo, &out->cho_hi, &out->fat_g, &out->fat_lo,
                          &out->fat_hi, &out->fixed_kj, &out->nosc_kj};
    for (size_t k = 0; k < NARR; k++)
        *arr[k] = out->buf + k * M;
    out->n_min = M;
    out->draws = draws;
    out->efficiency = efficiency;
    out->eq = eq;
    double *dee = mat, *dcho = mat + M * draws, *dfat = mat + 2 * M * draws;
    double *tot = mat + 3 * M * draws, *vo2 = tot + 4 * draws, *tmp = vo2 + n;
    for (size_t i = 0; i < n; i++) {
        if (!rec[i])
            continue;
        size_t k = i / 60;
        out->rec_s[k] += 1.0;
        out->power_w[k] += p_w[i];
        out->work_kj[k] += p_w[i] / 1000.0;
        out->fixed_kj[k] += p_w[i] / efficiency / 1000.0;
    }
    /* the point estimate, and the model without its slow component */
    if ((rc = cost_run(&par->m, par->rer, e, p_w, rec, n, vo2, out->ee_kj, out->cho_g, out->fat_g, out->vo2_ml_min,
                       out->dom_s, out->dom_ee_kj)))
        goto done;
    for (size_t i = 0; i < n; i++)
        if (rec[i])
            out->dom_fixed_kj[cpd_vo2model_domain(&par->m, vo2[i]) - 1] += p_w[i] / efficiency / 1000.0;
    cpd_vo2model flat = par->m;
    flat.sc_gain_ml_min_w = 0.0;
    flat.cp_w = 0.0;
    if ((rc = cost_run(&flat, par->rer, e, p_w, rec, n, vo2, out->nosc_kj, NULL, NULL, NULL, NULL, NULL)))
        goto done;
    for (size_t k = 0; k < M; k++) {
        if (out->rec_s[k] > 0) {
            out->power_w[k] /= out->rec_s[k];
            out->vo2_ml_min[k] /= out->rec_s[k];
        }
        out->rec_total_s += out->rec_s[k];
        out->work_total_kj += out->work_kj[k];
        out->ee_total_kj += out->ee_kj[k];
        out->cho_total_g += out->cho_g[k];
        out->fat_total_g += out->fat_g[k];
        out->fixed_total_kj += out->fixed_kj[k];
        out->nosc_total_kj += out->nosc_kj[k];
    }
    out->diff_total_kj = out->ee_total_kj - out->fixed_total_kj;

    /* Monte Carlo over the parameters */
    gsl_rng_set(g, (unsigned long)seed);
    for (size_t j = 0; j < draws; j++) {
        cpd_vo2model m;
        double rer[3];
        draw_params(par, g, &m, rer);
        double *ee = dee + j * M, *ch = dcho + j * M, *ft = dfat + j * M;
        if ((rc = cost_run(&m, rer, e, p_w, rec, n, vo2, ee, ch, ft, NULL, NULL, NULL)))
            goto done;
        double s[3] = {0, 0, 0};
        for (size_t k = 0; k < M; k++) {
            s[0] += ee[k];
            s[1] += ch[k];
            s[2] += ft[k];
        }
        tot[j] = s[0];
        tot[draws + j] = s[1];
        tot[2 * draws + j] = s[2];
        tot[3 * draws + j] = s[0] - out->fixed_total_kj;
    }
    for (size_t k = 0; k < M; k++) {
        double *lo[3] = {&out->ee_lo[k], &out->cho_lo[k], &out->fat_lo[k]};
        double *hi[3] = {&out->ee_hi[k], &out->cho_hi[k], &out->fat_hi[k]};
        const double *src[3] = {dee, dcho, dfat};
        for (int q = 0; q < 3; q++) {
            for (size_t j = 0; j < draws; j++)
                tmp[j] = src[q][j * M + k];
            double ci[2];
            ci95(tmp, draws, ci);
            *lo[q] = ci[0];
            *hi[q] = ci[1];
        }
    }
    ci95(tot, draws, out->ee_total_ci);
    ci95(tot + draws, draws, out->cho_total_ci);
    ci95(tot + 2 * draws, draws, out->fat_total_ci);
    ci95(tot + 3 * draws, draws, out->diff_total_ci);
done:
    gsl_rng_free(g);
    free(mat);
    if (rc)
        cpd_energy_session_free(out);
    return rc;
}
