/* synth_ramp.h: test-only generator of noisy breath-by-breath ramp tests with a known GET, RCP,
 * gain and MRT, and the small deterministic RNG (splitmix64 + Box-Muller) the tests use.
 * The model: VO2 follows the ramp as a first-order system with delay (MRT = tau + delay, the
 * lagged-linear picture of Whipp et al. 1981 J Appl Physiol 50:217); VCO2 is piecewise linear in VO2
 * with breaks at the GET and the RCP; VE is linear in VCO2 (positive intercept, so VE/VCO2 falls
 * early) with a steeper slope above the RCP. */
#ifndef CPD_TEST_SYNTH_RAMP_H
#define CPD_TEST_SYNTH_RAMP_H

#include "cpdomain/gx.h"

#include <math.h>
#include <stdint.h>

typedef struct {
    uint64_t s;
    int has_spare;
    double spare;
} synth_rng;

static uint64_t synth_next(synth_rng *r)
{
    uint64_t z = (r->s += 0x9e3779b97f4a7c15ULL);
    z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
    z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
    return z ^ (z >> 31);
}

static double synth_unif(synth_rng *r)
{
    return (double)(synth_next(r) >> 11) * 0x1.0p-53;
}

static double synth_range(synth_rng *r, double lo, double hi)
{
    return lo + (hi - lo) * synth_unif(r);
}

static double synth_norm(synth_rng *r)
{
    if (r->has_spare) {
        r->has_spare = 0;
        return r->spare;
    }
    double u, v, q;
    do {
        u = 2 * synth_unif(r) - 1;
        v = 2 * synth_unif(r) - 1;
        q = u * u + v * v;
    } while (q >= 1 || q == 0);
    double f = sqrt(-2 * log(q) / q);
    r->spare = v * f;
    r->has_spare = 1;
    return u * f;
}

typedef struct {
    double rate;          /* W/min (or m/s per min) */
    double start, base;   /* intensity at onset and before it */
    double onset_s;       /* file time of onset; the file starts at 0 */
    double dur_s, post_s; /* ramp length; recovery recorded after it */
    double vo2_base;      /* mL/min before onset */
    double gain;          /* mL/min per intensity unit */
    double tau_s, delay_s;
    double get_vo2, rcp_vo2; /* mL/min */
    double s1, s2, s3;    /* VCO2-VO2 slopes below GET, GET..RCP, above RCP */
    double rer_base;      /* VCO2/VO2 at baseline */
    double ve0, veq1;     /* VE = ve0 + veq1 VCO2 / 1000 below the RCP: L/min, slope (dimensionless) */
    double ve_k1;         /* VE slope factor between GET and RCP (1: isocapnic buffering) */
    double ve_k2;         /* VE slope factor above the RCP */
    double sd_vo2, rho;   /* breath noise SD, mL/min; VO2-VCO2 noise correlation */
    double ve_cv;         /* VE noise of its own, fraction (besides the part shared with VCO2) */
    double bi_lo, bi_hi;  /* breath interval range, s */
    double plateau_s;     /* final plateau length, s (0: none) */
    double outlier_frac;  /* fraction of wild breaths */
    double hr0, hr_gain;  /* HR at baseline, bpm; bpm per intensity unit */
    unsigned mask;        /* channels written */
    int per_second;       /* 1: one averaged sample per second instead of breaths */
} synth_ramp;

static double synth_intensity(const synth_ramp *p, double t)
{
    if (t < 0 || t > p->dur_s)
        return p->base;
    return p->start + p->rate * t / 60.0;
}

static double synth_vo2_lin(const synth_ramp *p, double t)
{
    if (t < p->delay_s)
        return p->vo2_base;
    double u = t - p->delay_s, e = 1 - exp(-u / p->tau_s);
    return p->vo2_base + p->gain * ((p->start - p->base) * e + p->rate / 60.0 * (u - p->tau_s * e));
}

/* Noise-free VO2 at time t from onset (plateau and recovery included). */
static double synth_vo2(const synth_ramp *p, double t)
{
    double tp = p->dur_s - p->plateau_s;
    double end = p->plateau_s > 0
                     ? synth_vo2_lin(p, tp) + 0.1 * (synth_vo2_lin(p, p->dur_s) - synth_vo2_lin(p, tp))
                     : synth_vo2_lin(p, p->dur_s);
    if (t > p->dur_s)
        return p->vo2_base + (end - p->vo2_base) * exp(-(t - p->dur_s) / 50.0);
    if (p->plateau_s > 0 && t > tp)
        return synth_vo2_lin(p, tp) + 0.1 * (synth_vo2_lin(p, t) - synth_vo2_lin(p, tp));
    return synth_vo2_lin(p, t);
}

static double synth_vco2(const synth_ramp *p, double v)
{
    double c = p->rer_base * p->vo2_base + p->s1 * (v - p->vo2_base);
    if (v > p->get_vo2)
        c += (p->s2 - p->s1) * (v - p->get_vo2);
    if (v > p->rcp_vo2)
        c += (p->s3 - p->s2) * (v - p->rcp_vo2);
    return c;
}

/* VE in L/min from VCO2 in mL/min. */
static double synth_ve(const synth_ramp *p, double c)
{
    double cg = synth_vco2(p, p->get_vo2), cr = synth_vco2(p, p->rcp_vo2);
    double ve = p->ve0 + p->veq1 * c / 1000.0;
    if (c > cg)
        ve += p->veq1 * (p->ve_k1 - 1) * ((c < cr ? c : cr) - cg) / 1000.0;
    if (c > cr)
        ve += p->veq1 * (p->ve_k2 - 1) * (c - cr) / 1000.0;
    return ve;
}

/* Time from onset at which the noise-free VO2 reaches v (bisection; VO2 rises until the plateau). */
static double synth_time_at_vo2(const synth_ramp *p, double v)
{
    double lo = 0, hi = p->dur_s - p->plateau_s;
    for (int k = 0; k < 200; k++) {
        double mid = 0.5 * (lo + hi);
        if (synth_vo2(p, mid) < v)
            lo = mid;
        else
            hi = mid;
    }
    return 0.5 * (lo + hi);
}

/* A realistic cycling ramp with random parameters (ranges: METHODS 4 and common practice). */
static void synth_draw(synth_rng *r, synth_ramp *p)
{
    p->rate = synth_range(r, 20, 35);
    p->base = synth_range(r, 15, 50);
    p->start = synth_unif(r) < 0.8 ? p->base : p->base + synth_range(r, 20, 60);
    p->onset_s = synth_range(r, 120, 240);
    p->dur_s = synth_range(r, 480, 720);
    p->post_s = 0;
    p->gain = synth_range(r, 9.3, 11.0);
    p->vo2_base = synth_range(r, 550, 750) + p->gain * p->base;
    p->tau_s = synth_range(r, 20, 40);
    p->delay_s = synth_range(r, 5, 15);
    p->plateau_s = 0;
    double end = synth_vo2_lin(p, p->dur_s);
    p->get_vo2 = p->vo2_base + synth_range(r, 0.35, 0.55) * (end - p->vo2_base);
    p->rcp_vo2 = p->vo2_base + synth_range(r, 0.75, 0.88) * (end - p->vo2_base);
    p->s1 = synth_range(r, 0.85, 1.0);
    p->s2 = p->s1 + synth_range(r, 0.3, 0.5);
    p->s3 = p->s2 + synth_range(r, 0.1, 0.25);
    p->rer_base = synth_range(r, 0.78, 0.9);
    p->ve0 = synth_range(r, 2, 5);
    p->veq1 = synth_range(r, 22, 28);
    p->ve_k1 = 1.0;
    p->ve_k2 = synth_range(r, 1.5, 2.2);
    p->sd_vo2 = synth_range(r, 50, 100);
    p->rho = synth_range(r, 0.8, 0.95);
    p->ve_cv = 0.02;
    p->bi_lo = 2.0;
    p->bi_hi = 3.0;
    p->outlier_frac = 0.01;
    p->hr0 = synth_range(r, 70, 95);
    p->hr_gain = synth_range(r, 0.35, 0.5);
    p->mask = CPD_GX_BIT(CPD_GX_VO2) | CPD_GX_BIT(CPD_GX_VCO2) | CPD_GX_BIT(CPD_GX_VE) | CPD_GX_BIT(CPD_GX_HR) |
              CPD_GX_BIT(CPD_GX_POWER) | CPD_GX_BIT(CPD_GX_PETO2) | CPD_GX_BIT(CPD_GX_PETCO2);
    p->per_second = 0;
}

/* The noisy series in file time (onset at p->onset_s). *n_wild receives the wild breaths planted.
 * NULL when out of memory. The caller frees it with cpd_gx_free. */
static cpd_gx_series *synth_make(const synth_ramp *p, synth_rng *r, size_t *n_wild)
{
    double t_last = p->onset_s + p->dur_s + p->post_s;
    size_t cap = (size_t)(t_last / (p->per_second ? 1.0 : p->bi_lo)) + 2;
    cpd_gx_series *s = cpd_gx_alloc(cap, p->mask);
    if (!s)
        return NULL;
    size_t n = 0, wild = 0;
    double sd = p->per_second ? p->sd_vo2 / sqrt(2.5) : p->sd_vo2;
    double t = p->per_second ? 0 : synth_range(r, 0, p->bi_hi);
    while (t <= t_last && n < cap) {
        double u = t - p->onset_s;
        double v = synth_vo2(p, u), c = synth_vco2(p, v), ve = synth_ve(p, c);
        double n1 = synth_norm(r), n2 = synth_norm(r);
        double ec = 0.9 * sd * (p->rho * n1 + sqrt(1 - p->rho * p->rho) * n2);
        double f = 1.0;
        if (synth_unif(r) < p->outlier_frac) {
            f = synth_unif(r) < 0.5 ? 0.5 : 1.7; /* a swallow or a cough */
            wild++;
        }
        s->t_s[n] = t;
        s->ch[CPD_GX_VO2][n] = f * (v + sd * n1);
        if (s->ch[CPD_GX_VCO2])
            s->ch[CPD_GX_VCO2][n] = f * (c + ec);
        if (s->ch[CPD_GX_VE])
            s->ch[CPD_GX_VE][n] = f * ve * (1 + 0.7 * ec / c + p->ve_cv * synth_norm(r));
        if (s->ch[CPD_GX_HR]) {
            double h = p->hr0 + p->hr_gain * (synth_intensity(p, u - 25) - p->base) + synth_norm(r);
            s->ch[CPD_GX_HR][n] = h < 40 ? 40 : h > 220 ? 220 : h;
        }
        if (s->ch[CPD_GX_POWER])
            s->ch[CPD_GX_POWER][n] = synth_intensity(p, u);
        if (s->ch[CPD_GX_SPEED])
            s->ch[CPD_GX_SPEED][n] = synth_intensity(p, u);
        if (s->ch[CPD_GX_PETCO2])
            s->ch[CPD_GX_PETCO2][n] = 1100.0 / (1000.0 * ve / c) + synth_norm(r);
        if (s->ch[CPD_GX_PETO2])
            s->ch[CPD_GX_PETO2][n] = 150.0 - 1250.0 / (1000.0 * ve / v) + 1.5 * synth_norm(r);
        n++;
        t += p->per_second ? 1.0 : synth_range(r, p->bi_lo, p->bi_hi);
    }
    s->n = n;
    if (n_wild)
        *n_wild = wild;
    return s;
}

#endif
