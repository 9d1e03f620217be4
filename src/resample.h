/* resample.h: internal helpers of the bootstrap intervals (ramp_ci.c, lactate_ci.c): a small
 * reproducible random stream and percentiles. Not public API. */
#ifndef CPD_RESAMPLE_H
#define CPD_RESAMPLE_H

#include <stddef.h>
#include <stdint.h>

/* The next 64 random bits of the stream in *state (splitmix64: Steele, Lea & Flood 2014 OOPSLA,
 * from memory); the same seed gives the same resamples. */
uint64_t cpd_rs_next(uint64_t *state);

/* Sorts v[0..n) ascending and returns its 2.5 and 97.5 percentiles (linear between order
 * statistics) in *lo and *hi; n >= 1. */
void cpd_rs_interval95(double *v, size_t n, double *lo, double *hi);

#endif
