/* lactate.h: blood-lactate thresholds from an incremental step test: LT1 (log-log), Dmax, modified
 * Dmax and OBLA (4 mmol/L), each with the HR at it. A value that cannot be found carries a status and a
 * reason, never an invented number. Intensity is W or m/s, whichever the stages are in. */
#ifndef CPDOMAIN_LACTATE_H
#define CPDOMAIN_LACTATE_H

#include "cpdomain/linfit.h"

#include <stddef.h>

#define CPD_LACTATE_NMAX 64          /* most stages */
#define CPD_LACTATE_MIN_STAGES 3     /* fewest stages for any method */
#define CPD_LACTATE_MAX_MMOL_L 30.0  /* a blood lactate above this is not a measurement */
#define CPD_LACTATE_OBLA_MMOL_L 4.0  /* Sjodin & Jacobs 1981 Int J Sports Med 2:23 */
#define CPD_LACTATE_RISE_MMOL_L 0.4  /* modified Dmax start: Bishop, Jenkins & Mackinnon 1998 */
#define CPD_LACTATE_WHY_MAX 128

/* Status of a value (same meanings as for the ramp). */
typedef enum {
    CPD_LACTATE_NOT_FOUND = 0,
    CPD_LACTATE_FOUND = 1
} cpd_lactate_status;

/* Why a value is not available. */
typedef enum {
    CPD_LACTATE_R_NONE = 0,    /* available */
    CPD_LACTATE_R_FEW_STAGES,  /* the method needs more stages */
    CPD_LACTATE_R_NO_BREAK,    /* log-log: the upper slope is not steeper than the lower */
    CPD_LACTATE_R_OUTSIDE,     /* the breakpoint or maximum lies outside the measured range */
    CPD_LACTATE_R_NO_RISE,     /* modified Dmax: no rise above 0.4 mmol/L between consecutive stages */
    CPD_LACTATE_R_NOT_REACHED, /* OBLA: 4 mmol/L never reached */
    CPD_LACTATE_R_ABOVE_AT_START, /* OBLA: the first stage is already at or above 4 mmol/L */
    CPD_LACTATE_R_NOT_CONVEX,  /* Dmax: the cubic does not bend below the line */
    CPD_LACTATE_R_FIT_FAILED,  /* a regression failed (degenerate stages) */
    CPD_LACTATE_NREASONS
} cpd_lactate_reason;

typedef struct {
    int status;                    /* cpd_lactate_status */
    int reason;                    /* cpd_lactate_reason */
    char why[CPD_LACTATE_WHY_MAX]; /* reason in words; "" when found */
    double intensity;              /* W or m/s */
    double lactate_mmol_l;         /* mmol/L at it (on the method's curve or line) */
    int has_hr;                    /* 1 when HR was given */
    double hr_bpm;                 /* beats/min, linear between the bracketing stages */
} cpd_lactate_value;

typedef struct {
    size_t n;                    /* stages */
    cpd_lactate_value lt1;       /* log-log (Beaver, Wasserman & Whipp 1985) */
    cpd_lactate_value dmax;      /* Dmax (Cheng et al. 1992) */
    cpd_lactate_value dmax_mod;  /* modified Dmax (Bishop, Jenkins & Mackinnon 1998) */
    cpd_lactate_value obla;      /* 4 mmol/L (Sjodin & Jacobs 1981) */
    int has_cubic;               /* 1 when the cubic was fitted (n >= 4) */
    double cubic[4];             /* lactate = c0 + c1 x + c2 x^2 + c3 x^3: mmol/L, per unit x^k */
    double dmax_line[2];         /* Dmax line: intercept mmol/L, slope mmol/L per unit */
    size_t mod_start;            /* index of the stage the modified-Dmax line starts from */
    double dmax_mod_line[2];     /* modified-Dmax line: intercept, slope */
    int has_loglog;              /* 1 when the log-log regression ran */
    cpd_linfit_twoseg loglog;      /* ln lactate on ln intensity (intensity in its own unit) */
} cpd_lactate_result;

/* Analyses a step test: intensity[n] strictly increasing (W or m/s, > 0), lactate[n] in mmol/L
 * (0 < la <= 30), hr[n] beats/min or NULL. LT1: two-segment regression of ln lactate on ln intensity
 * (Beaver, Wasserman & Whipp 1985 J Appl Physiol 59:1936; with intensity in place of VO2), at least 3
 * stages per segment (2 when n < 6). Dmax: cubic by least squares, line from the first to the last
 * measured point, the x in range where the cubic lies farthest below it, from the roots of
 * La'(x) = slope (Cheng et al. 1992 Int J Sports Med 13:518). Modified Dmax: the line starts at the
 * stage before the first rise of more than 0.4 mmol/L (Bishop, Jenkins & Mackinnon 1998 Med Sci Sports
 * Exerc 30:1270). OBLA: linear interpolation at 4 mmol/L between the first bracketing stages (Sjodin &
 * Jacobs 1981). Returns CPD_OK (values may be NOT_FOUND), CPD_EUSAGE for NULL arrays, CPD_EDATA for
 * invalid values or more than CPD_LACTATE_NMAX stages, CPD_ENODATA for fewer than 3; msg (CPD_MSG_MAX
 * bytes, may be NULL) gets the detail. Needs no workspace (the fits allocate their own scratch). */
int cpd_lactate_analyse(const double *intensity, const double *lactate, const double *hr, size_t n,
                        cpd_lactate_result *res, char *msg);

/* A stage value at intensity x: linear between the two stages that bracket x (xs[n] strictly
 * increasing; beyond the ends, the line through the two end stages). The rule that places HR at a
 * lactate threshold; step tests of gas exchange use it for stage VO2 (steps.h). ys[0] when n is 1,
 * 0 when n is 0. */
double cpd_lactate_stage_interp(const double *xs, const double *ys, size_t n, double x);

/* Short static English text of a cpd_lactate_reason; never NULL. */
const char *cpd_lactate_reason_text(int reason);

/* ---- intervals (lactate_ci.c; issue 12) ---- */

#include <stdint.h>

enum { CPD_LACTATE_CI_LT1, CPD_LACTATE_CI_DMAX, CPD_LACTATE_CI_DMAX_MOD, CPD_LACTATE_CI_OBLA, CPD_LACTATE_NCI };

typedef struct {
    size_t n_boot;                     /* resamples asked for */
    int valid[CPD_LACTATE_NCI];        /* 1 when the interval below holds (LT1, Dmax, modified Dmax, 4 mmol/L) */
    double ci95[CPD_LACTATE_NCI][2];   /* W or m/s */
    size_t n_used[CPD_LACTATE_NCI];    /* resamples in which the threshold was found */
} cpd_lactate_ci;

/* 95 % intervals of the thresholds of the analysis r of (intensity, lactate)[n]: a residual
 * bootstrap about the least-squares cubic (residuals centred and scaled by sqrt(n / (n - 4))),
 * each resample analysed by cpd_lactate_analyse; percentile interval (widened to include the
 * estimate) when the threshold was found in at least half of the n_boot resamples (200 is plenty).
 * seed makes the resamples reproducible. Needs r->has_cubic and n >= 5 (CPD_ENODATA otherwise).
 * Returns CPD_OK, CPD_EUSAGE for NULL, CPD_ENODATA, CPD_ENOMEM. */
int cpd_lactate_ci_compute(const double *intensity, const double *lactate, size_t n, const cpd_lactate_result *r,
                           size_t n_boot, uint64_t seed, cpd_lactate_ci *out);

#endif
