/* synth_bout.h: test-only synthetic breath-by-breath bouts with known kinetics. Deterministic:
 * splitmix64 (Steele, Lea & Flood 2014 OOPSLA, from memory) and Box-Muller normals. */
#ifndef CPD_TEST_SYNTH_BOUT_H
#define CPD_TEST_SYNTH_BOUT_H

#include "cpdomain/gx.h"

#include <math.h>
#include <stdint.h>

#define SYNTH_TWO_PI 6.283185307179586476925286766559

typedef struct {
    uint64_t s;
    int has_spare;
    double spare;
} synth_rng;

static void synth_seed(synth_rng *r, uint64_t seed)
{
    r->s = seed;
    r->has_spare = 0;
    r->spare = 0.0;
}

static uint64_t synth_next(synth_rng *r)
{
    uint64_t z = (r->s += 0x9e3779b97f4a7c15ULL);
    z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
    z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
    return z ^ (z >> 31);
}

/* Uniform on (0, 1). */
static double synth_uniform(synth_rng *r)
{
    return ((double)(synth_next(r) >> 11) + 0.5) / 9007199254740992.0;
}

static double synth_normal(synth_rng *r)
{
    if (r->has_spare) {
        r->has_spare = 0;
        return r->spare;
    }
    double u = synth_uniform(r), v = synth_uniform(r);
    double m = sqrt(-2.0 * log(u));
    r->spare = m * sin(SYNTH_TWO_PI * v);
    r->has_spare = 1;
    return m * cos(SYNTH_TWO_PI * v);
}

/* A constant-power bout: baseline, a phase I rise that ends at td1, the primary exponential and an
 * optional slow component. Breath intervals uniform in [br_min, br_max] s; Gaussian breath noise;
 * with probability outlier_p a breath is off by +-outlier_ml (a cough or swallow). */
typedef struct {
    double base, a1, td1, tau1; /* mL/min, mL/min, s, s */
    double a2, td2, tau2;       /* slow component; a2 = 0 for none */
    double phase1_ml;           /* phase I (cardiodynamic) rise reached by td1, mL/min */
    double pre_s, dur_s;        /* baseline before the onset and exercise after it, s */
    double onset_s;             /* file time of the onset, s */
    double noise_sd;            /* breath noise SD, mL/min */
    double br_min, br_max;      /* breath interval range, s */
    double outlier_p, outlier_ml;
} synth_params;

/* The noise-free response t s after the onset. */
static double synth_truth(const synth_params *p, double t)
{
    if (t < 0)
        return p->base;
    if (t < p->td1)
        return p->base + p->phase1_ml * (1.0 - exp(-t / 4.0));
    double v = p->base + p->a1 * (1.0 - exp(-(t - p->td1) / p->tau1));
    if (p->a2 != 0 && t >= p->td2)
        v += p->a2 * (1.0 - exp(-(t - p->td2) / p->tau2));
    return v;
}

/* A new breath series (file time) for p; *n_wild receives the number of wild breaths. NULL when
 * out of memory. The caller frees it with cpd_gx_free. */
static cpd_gx_series *synth_bout(const synth_params *p, synth_rng *r, size_t *n_wild)
{
    size_t cap = (size_t)((p->pre_s + p->dur_s) / p->br_min) + 4;
    cpd_gx_series *s = cpd_gx_alloc(cap, CPD_GX_BIT(CPD_GX_VO2));
    if (!s)
        return NULL;
    double t = p->onset_s - p->pre_s + synth_uniform(r) * p->br_min;
    size_t n = 0, wild = 0;
    while (t <= p->onset_s + p->dur_s && n < cap) {
        double v = synth_truth(p, t - p->onset_s) + p->noise_sd * synth_normal(r);
        if (p->outlier_p > 0 && synth_uniform(r) < p->outlier_p) {
            v += synth_uniform(r) < 0.5 ? -p->outlier_ml : p->outlier_ml;
            wild++;
        }
        s->t_s[n] = t;
        s->ch[CPD_GX_VO2][n] = v;
        n++;
        t += p->br_min + (p->br_max - p->br_min) * synth_uniform(r);
    }
    s->n = n;
    if (n_wild)
        *n_wild = wild;
    return s;
}

/* Typical healthy-adult cycling transitions: primary tau 20-35 s (Burnley, Doust &
 * Jones 2006 J Appl Physiol 101:1320), moderate gain about 10 mL/min/W (Hill, Poole & Smith 2002;
 * Barstow & Mole 1991: 9.1-11). Power 100 W from 0 W here, so A1 = 1020 mL/min is a gain of 10.2. */
static synth_params synth_moderate(void)
{
    synth_params p = {
        .base = 830.0, .a1 = 1020.0, .td1 = 11.3, .tau1 = 27.4, .a2 = 0.0, .td2 = 0.0, .tau2 = 1.0,
        .phase1_ml = 240.0, .pre_s = 120.0, .dur_s = 360.0, .onset_s = 137.6, .noise_sd = 60.0,
        .br_min = 2.0, .br_max = 3.0, .outlier_p = 0.0, .outlier_ml = 0.0,
    };
    return p;
}

/* Heavy: a slow component of 420 mL/min delayed 108 s (Barstow & Mole 1991: 105 +- 46 s) with a
 * time constant short enough that VO2 is levelling off by 6 min. Power 240 W. */
static synth_params synth_heavy(void)
{
    synth_params p = synth_moderate();
    p.a1 = 2210.0;
    p.tau1 = 29.6;
    p.td1 = 9.7;
    p.a2 = 420.0;
    p.td2 = 108.0;
    p.tau2 = 95.0;
    p.noise_sd = 70.0;
    return p;
}

/* Severe: a slow component that keeps rising almost linearly to the end. Power 310 W. */
static synth_params synth_severe(void)
{
    synth_params p = synth_moderate();
    p.a1 = 2640.0;
    p.tau1 = 33.1;
    p.td1 = 8.9;
    p.a2 = 1900.0;
    p.td2 = 92.0;
    p.tau2 = 700.0;
    p.noise_sd = 75.0;
    return p;
}

#endif
