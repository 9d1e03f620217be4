/* gx.h: gas-exchange series (breath-by-breath or per-second): outlier breaths, interpolation to a
 * regular grid, time alignment and rolling means. Shared by the ramp and the kinetics modules. */
#ifndef CPDOMAIN_GX_H
#define CPDOMAIN_GX_H

#include <stddef.h>

/* Channels of a series, in the units of SPEC.md. */
enum {
    CPD_GX_VO2,    /* mL/min */
    CPD_GX_VCO2,   /* mL/min */
    CPD_GX_VE,     /* L/min */
    CPD_GX_HR,     /* beats/min */
    CPD_GX_POWER,  /* W */
    CPD_GX_SPEED,  /* m/s */
    CPD_GX_PETO2,  /* mmHg */
    CPD_GX_PETCO2, /* mmHg */
    CPD_GX_NCHAN
};

typedef struct {
    size_t n;                 /* samples (breaths or seconds) */
    double *t_s;              /* time of each sample, s, non-decreasing */
    double *ch[CPD_GX_NCHAN]; /* channel values, n each; NULL when the channel is absent */
} cpd_gx_series;

/* Heart rates a person can have during an exercise test, beats/min (common practice: below 30 is an
 * RR interval of 2 s or more, a lost beat; above 230 is a double-counted beat or noise). A sample
 * outside is an artefact, dropped on import. */
#define CPD_GX_HR_MIN 30.0
#define CPD_GX_HR_MAX 230.0

/* Bit of channel c in a channel mask. */
#define CPD_GX_BIT(c) (1u << (c))

/* Allocates a series of n samples with the channels in mask, values zeroed.
 * Returns NULL when out of memory. The caller frees it with cpd_gx_free. */
cpd_gx_series *cpd_gx_alloc(size_t n, unsigned mask);
void cpd_gx_free(cpd_gx_series *s);

/* The mask of channels present in s. */
unsigned cpd_gx_mask(const cpd_gx_series *s);

/* CSV column name of channel c ("vo2_ml_min", ...); NULL for an invalid c. */
const char *cpd_gx_channel_name(int c);

/* Flags outlier samples of channel c: a sample is flagged when it lies more than k standard
 * deviations from the mean of its neighbours within +-half samples (itself excluded); the usual
 * breath-noise rule with k = 4 (Lamarra et al. 1987 J Appl Physiol 62:2003, convention; some labs
 * use 3). flag[n] receives 1 for an outlier, else 0. *n_flagged receives the count.
 * Returns CPD_OK, CPD_EUSAGE when the channel is absent or k <= 0 or half == 0. */
int cpd_gx_outliers(const cpd_gx_series *s, int c, size_t half, double k, unsigned char *flag,
                    size_t *n_flagged);

/* A new series with the samples whose drop[i] is nonzero removed. NULL when out of memory.
 * The caller frees it with cpd_gx_free. */
cpd_gx_series *cpd_gx_filter(const cpd_gx_series *s, const unsigned char *drop);

/* A new series linearly interpolated onto the grid t = t0, t0 + step, ... up to the last sample,
 * where t0 is the first multiple of step at or after the first sample. Samples at the same time
 * are averaged first. Returns CPD_OK, CPD_ENODATA when s has fewer than 2 distinct times,
 * CPD_EUSAGE for step <= 0, CPD_ENOMEM. The caller frees *out with cpd_gx_free. */
int cpd_gx_interp(const cpd_gx_series *s, double step_s, cpd_gx_series **out);

/* Adds dt_s to every time (time alignment: dt_s = -onset). */
void cpd_gx_shift(cpd_gx_series *s, double dt_s);

/* Trailing rolling mean of x over w samples: out[i] = mean(x[i-w+1..i]) for i >= w-1 and the
 * mean of x[0..i] before that. out may not alias x. Returns CPD_OK or CPD_EUSAGE for w == 0. */
int cpd_gx_rolling_mean(const double *x, size_t n, size_t w, double *out);

#endif
