/* ramp_ci.c: 95 % intervals of a ramp's results, computed after cpd_ramp_analyse from what it
 * leaves in its workspace: VO2peak from the breath noise (the SE of a 30-s mean), GET and RCP by a
 * residual bootstrap of their two-segment fits, carried to the time, ramp and constant-intensity
 * equivalents (with the MRT's SE). Kept apart from ramp.c: nothing here changes an estimate. */
#include "cpdomain/ramp.h"
#include "cpdomain/status.h"
#include "resample.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#define CI_MIN_SEG 6       /* as ramp.c: fewest points on either side of a breakpoint */
#define CI_NOISE_WIN_S 120 /* breath noise from the final 2 min of the ramp */

static int cmp_sz(const void *a, const void *b)
{
    size_t x = *(const size_t *)a, y = *(const size_t *)b;
    return (x > y) - (x < y);
}

/* Case (pairs) bootstrap of a two-segment fit's crossing: the bins (x, y) are resampled with
 * replacement, sorted by x and refitted with the same rule; lo/hi receive the 2.5 and 97.5
 * percentiles of the crossings inside the data. Pairs, not residuals on fixed x: the bins' VO2 (x)
 * is as noisy as their VCO2, which a residual bootstrap ignores (on 200 simulated ramps it covered
 * the true GET 91.5 % of the time, pairs 94.5 %). Returns the usable resamples (0 on failure). */
static size_t boot_cross(const double *x, const double *y, size_t n, size_t min_seg, size_t n_boot, uint64_t *seed,
                         double *lo, double *hi)
{
    if (n < 2 * min_seg || n_boot < 20)
        return 0;
    double *xs = malloc(n * sizeof *xs), *ys = malloc(n * sizeof *ys), *xc = malloc(n_boot * sizeof *xc);
    size_t *ix = malloc(n * sizeof *ix);
    size_t m = 0;
    if (!xs || !ys || !xc || !ix)
        goto done;
    for (size_t b = 0; b < n_boot; b++) {
        for (size_t i = 0; i < n; i++)
            ix[i] = (size_t)(cpd_rs_next(seed) % n);
        qsort(ix, n, sizeof *ix, cmp_sz); /* x is sorted, so sorted indices keep it sorted */
        for (size_t i = 0; i < n; i++) {
            xs[i] = x[ix[i]];
            ys[i] = y[ix[i]];
        }
        cpd_linfit_twoseg g;
        if (cpd_linfit_twoseg_fit(xs, ys, n, min_seg, &g) == CPD_OK && g.has_cross && g.x_cross >= g.x_lo &&
            g.x_cross <= g.x_hi)
            xc[m++] = g.x_cross;
    }
    if (m < n_boot / 2) {
        m = 0;
        goto done;
    }
    cpd_rs_interval95(xc, m, lo, hi);
done:
    free(xs);
    free(ys);
    free(xc);
    free(ix);
    return m;
}

/* First time on the grid (during the ramp) at which v reaches level, interpolated; -1 when never. */
static double reach(const cpd_gx_series *g, const double *v, double t_end, double level)
{
    for (size_t i = 0; i < g->n && g->t_s[i] <= t_end; i++) {
        if (g->t_s[i] < 0)
            continue;
        if (v[i] >= level) {
            if (i == 0 || g->t_s[i - 1] < 0)
                return g->t_s[i];
            double f = (level - v[i - 1]) / (v[i] - v[i - 1]);
            return g->t_s[i - 1] + f * (g->t_s[i] - g->t_s[i - 1]);
        }
    }
    return -1;
}

/* The interval of a threshold's time, intensity during the test and steady-state equivalent from the
 * times of its two bounds, read as the analysis reads intensities (cpd_ramp_intensity_at). A ramp's
 * equivalent adds the MRT's SE in quadrature (independent estimates); a step test's equivalent is
 * the intensity whose stage steady state has each bound's VO2 (no MRT shift). */
static void carry(const cpd_ramp_ws *w, const cpd_ramp_result *r, const cpd_ramp_threshold *th, double t_lo,
                  double t_hi, cpd_ramp_thr_ci *c)
{
    c->time_ci95_s[0] = t_lo;
    c->time_ci95_s[1] = t_hi;
    c->ramp_ci95[0] = cpd_ramp_intensity_at(w, r, t_lo);
    c->ramp_ci95[1] = cpd_ramp_intensity_at(w, r, t_hi);
    if (!th->has_equiv)
        return;
    if (r->protocol == CPD_RAMP_PROTO_STEPS) {
        double lo, hi;
        if (cpd_steps_at(&r->steps, c->vo2_ci95[0], 0, &lo) == CPD_OK &&
            cpd_steps_at(&r->steps, c->vo2_ci95[1], 0, &hi) == CPD_OK) {
            c->has_equiv = 1;
            c->equiv_ci95[0] = fmin(lo, th->equiv_intensity);
            c->equiv_ci95[1] = fmax(hi, th->equiv_intensity);
        }
        return;
    }
    double shift = r->rate_used * r->mrt_s / 60.0;
    double hm = r->mrt_status == CPD_THR_FOUND && r->has_mrt_est ? 1.96 * r->rate_used / 60.0 * r->mrt_est_se_s : 0;
    double dl = th->equiv_intensity - (c->ramp_ci95[0] - shift), dh = (c->ramp_ci95[1] - shift) - th->equiv_intensity;
    c->has_equiv = 1;
    c->equiv_ci95[0] = th->equiv_intensity - sqrt(dl * dl + hm * hm);
    c->equiv_ci95[1] = th->equiv_intensity + sqrt(dh * dh + hm * hm);
}

int cpd_ramp_ci_compute(const cpd_ramp_ws *w, const cpd_ramp_result *r, const cpd_ramp_opts *o, size_t n_boot,
                        uint64_t seed, cpd_ramp_ci *out)
{
    if (!w || !r || !o || !out)
        return CPD_EUSAGE;
    memset(out, 0, sizeof *out);
    const double *sm = NULL;
    const cpd_gx_series *g = cpd_ramp_grid(w, &sm);
    const cpd_gx_series *s = cpd_ramp_samples(w);
    if (!g || !s || !sm || g->n < 2)
        return CPD_ENODATA;
    out->n_boot = n_boot;

    /* breath noise: successive differences of the breaths in the final 2 min of the ramp (a slow
     * trend adds little: 25 W/min x 10 mL/min/W moves VO2 by about 10 mL/min per breath) */
    const double *v = s->ch[CPD_GX_VO2];
    double ss = 0;
    size_t nd = 0, nw = 0;
    double t_end = r->duration_s;
    for (size_t i = 1; i < s->n; i++) {
        if (s->t_s[i] > t_end)
            break;
        if (s->t_s[i - 1] >= t_end - CI_NOISE_WIN_S) {
            double d = v[i] - v[i - 1];
            ss += d * d;
            nd++;
        }
    }
    /* the 30-s mean of the 1-s linear interpolation is sum_i w_i v_i over the breaths: its SE is
     * SD sqrt(sum w_i^2) (the weights of the interpolation, exactly) */
    double w2 = 0;
    size_t win = (size_t)lround(o->peak_window_s), j = 0;
    double *wt = calloc(s->n, sizeof *wt);
    if (!wt)
        return CPD_ENOMEM;
    for (size_t k = 0; k < win; k++) {
        double t = r->vo2peak_time_s - (double)k;
        while (j + 1 < s->n && s->t_s[j + 1] < t)
            j++;
        if (j + 1 >= s->n || s->t_s[j] > t)
            continue;
        double f = (t - s->t_s[j]) / (s->t_s[j + 1] - s->t_s[j]);
        wt[j] += (1 - f) / (double)win;
        wt[j + 1] += f / (double)win;
        j = 0;
    }
    for (size_t i = 0; i < s->n; i++)
        if (wt[i] > 0) {
            w2 += wt[i] * wt[i];
            nw++;
        }
    free(wt);
    if (nd >= 10 && nw >= 3) {
        out->noise_sd_ml_min = sqrt(ss / (2.0 * (double)nd));
        out->peak_breaths = nw;
        out->has_vo2peak_ci = 1;
        out->vo2peak_se_ml_min = out->noise_sd_ml_min * sqrt(w2);
        out->vo2peak_ci95[0] = r->vo2peak_ml_min - 1.96 * out->vo2peak_se_ml_min;
        out->vo2peak_ci95[1] = r->vo2peak_ml_min + 1.96 * out->vo2peak_se_ml_min;
    }

    const double *x, *y;
    size_t n;
    if (r->get.status == CPD_THR_FOUND && r->has_vslope && cpd_ramp_points(w, CPD_RAMP_PTS_VSLOPE, &x, &y, &n) == CPD_OK) {
        size_t ms = n / 10 > CI_MIN_SEG ? n / 10 : CI_MIN_SEG;
        double lo = 0, hi = 0;
        out->get.n_used = boot_cross(x, y, n, ms, n_boot, &seed, &lo, &hi);
        double tl = reach(g, sm, t_end, lo), th = reach(g, sm, t_end, hi);
        if (out->get.n_used && tl >= 0 && th >= 0) {
            out->get.valid = 1;
            out->get.vo2_ci95[0] = lo;
            out->get.vo2_ci95[1] = hi;
            carry(w, r, &r->get, tl, th, &out->get);
        }
    }
    if (r->rcp.status == CPD_THR_FOUND && r->has_rcp_fit && g->ch[CPD_GX_VCO2] &&
        cpd_ramp_points(w, CPD_RAMP_PTS_RCP, &x, &y, &n) == CPD_OK) {
        size_t ms = n / 20 > CI_MIN_SEG ? n / 20 : CI_MIN_SEG;
        double lo = 0, hi = 0;
        out->rcp.n_used = boot_cross(x, y, n, ms, n_boot, &seed, &lo, &hi);
        /* the RCP is placed where the smoothed VCO2 reaches the crossing, as in ramp.c (its own mean) */
        const double *sc = cpd_ramp_smoothed(w, CPD_GX_VCO2);
        if (!sc)
            return CPD_OK;
        double tl = reach(g, sc, t_end, lo), th = reach(g, sc, t_end, hi);
        if (out->rcp.n_used && tl >= 0 && th >= 0) {
            out->rcp.valid = 1;
            out->rcp.vo2_ci95[0] = cpd_ramp_grid_at(g, sm, tl);
            out->rcp.vo2_ci95[1] = cpd_ramp_grid_at(g, sm, th);
            carry(w, r, &r->rcp, tl, th, &out->rcp);
        }
    }
    return CPD_OK;
}
