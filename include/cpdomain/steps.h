/* steps.h: graded exercise tests run as steps (intensity held for 1-3 min, then raised) read from the
 * recorded intensity: the stages, the steady-state gas exchange of each stage (the means an energy
 * module needs for per-stage substrate use), and the VO2-intensity gain from the stage means.
 * Pure computation: arrays in, results out. Used by the ramp module (ramp.h) for step tests. */
#ifndef CPDOMAIN_STEPS_H
#define CPDOMAIN_STEPS_H

#include "cpdomain/gx.h"

#include <stddef.h>

#define CPD_STEPS_MAX 64              /* most stages */
#define CPD_STEPS_MIN_STAGE_S 45.0    /* shortest hold of one intensity that counts as a stage (our rule) */
#define CPD_STEPS_MIN_LAST_S 15.0     /* a last, incomplete stage counts when it lasts this long */
#define CPD_STEPS_MIN_STAGES 3        /* fewest stages of a step test */
#define CPD_STEPS_MIN_COVER 0.7       /* stages cover at least this fraction of the exercise (our rule) */
#define CPD_STEPS_SS_WIN_S 30.0       /* steady state: mean of the final 30 s of a stage (common practice) */
#define CPD_STEPS_STABLE_ML_MIN 100.0 /* stable: final 30 s within 100 mL/min of the 30 s before (our rule) */
#define CPD_STEPS_TOL_W 5.0           /* samples within 5 W (0.05 m/s) of a stage's first one belong to it */
#define CPD_STEPS_TOL_M_S 0.05

/* One stage. Times in s from the onset of exercise. */
typedef struct {
    double t_start_s;   /* first sample at the stage's intensity */
    double t_end_s;     /* last sample at it */
    double intensity;   /* W or m/s: mean of the recorded samples of the stage */
    int complete;       /* 1 when held for the usual stage length (step_s, less 10 s), 0 when cut short */
    size_t n_win;       /* 1-s values in the steady-state window (CPD_STEPS_SS_WIN_S, fewer when shorter) */
    double vo2_ml_min;  /* mL/min: mean VO2 over the final 30 s of the stage */
    double vo2_sd;      /* mL/min: SD of the 1-s VO2 in that window (n - 1) */
    int stable;         /* 1 steady, 0 still drifting, -1 unknown (stage shorter than 60 s) */
    double drift_ml_min;/* mL/min: mean of the final 30 s minus the mean of the 30 s before (0 when unknown) */
    int has_vco2;       /* 1 when the series has VCO2 */
    double vco2_ml_min; /* mL/min: mean VCO2 over the same window */
    double vco2_sd;     /* mL/min */
    int has_hr;         /* 1 when the series has HR */
    double hr_bpm;      /* beats/min: mean HR over the same window */
    int in_gain;        /* 1 when the stage entered the VO2-intensity gain */
} cpd_steps_stage;

/* How the gain's stages were chosen. */
typedef enum {
    CPD_STEPS_GAIN_NONE = 0,     /* no gain */
    CPD_STEPS_GAIN_BELOW_GET,    /* stages whose steady-state VO2 lies below the GET */
    CPD_STEPS_GAIN_BELOW_80PCT   /* no GET: stages at or below 80 % of the peak intensity */
} cpd_steps_gain_basis;

typedef struct {
    size_t n;                              /* stages */
    cpd_steps_stage stage[CPD_STEPS_MAX];  /* in time order */
    double step_s;                         /* s: median time from one stage's start to the next's */
    double increment;                      /* W or m/s: median rise between consecutive stages */
    double covered_frac;                   /* fraction of the exercise spent in stages */
    double tol;                            /* W or m/s: the tolerance asked for */
    double noise;                          /* W or m/s: noise SD of the record (robust, successive differences) */
    double within_rise;                    /* W or m/s: median rise of the intensity within a stage (LS slope x length) */
    int gain_basis;                        /* cpd_steps_gain_basis */
    size_t gain_n;                         /* stages in the gain */
    double gain, gain_se;                  /* mL/min per W (per m/s): OLS slope of stage VO2 on intensity */
    double gain_icpt;                      /* mL/min: its intercept (VO2 at zero intensity) */
} cpd_steps_result;

/* Finds the stages in the recorded intensity x[n] at times t[n] (s from onset, non-decreasing):
 * runs of samples within tol (or 4 noise SDs of a measured record, whichever is larger) of the mean
 * of the run so far, over [0, t_end_s]; a run is a stage when it lasts at least CPD_STEPS_MIN_STAGE_S (the
 * final run: CPD_STEPS_MIN_LAST_S) and lies above the stage before it (a run back at the level of
 * the stage before continues it; one below it is a dip and ignored). Fills n, the stages' times and intensities, step_s, increment,
 * covered_frac. Returns CPD_OK (n may be 0), CPD_EUSAGE for NULL arrays or tol <= 0. */
int cpd_steps_find(const double *t, const double *x, size_t n, double t_end_s, double tol, cpd_steps_result *r);

/* 1 when stages found by cpd_steps_find make a step test: at least CPD_STEPS_MIN_STAGES stages
 * covering CPD_STEPS_MIN_COVER of the exercise, rising by a median of at least twice the tolerance,
 * and flat within (median within_rise below half the increment): a slow ramp also holds each value
 * within the tolerance for a while, but rises inside each such band. */
int cpd_steps_is_steps(const cpd_steps_result *r);

/* Fills each stage's steady-state means from a 1-s grid g (times from onset; VO2 required, VCO2 and
 * HR used when present): the values with t in (t_end - 30 s, t_end], SD, and the stability flag from
 * the 30 s before. Returns CPD_OK, CPD_EUSAGE when g has no VO2, CPD_ENODATA when a stage has no
 * grid value. */
int cpd_steps_means(cpd_steps_result *r, const cpd_gx_series *g);

/* The VO2-intensity gain by ordinary least squares on the stages' steady-state VO2 against their
 * intensity: the stages below get_vo2 (mL/min; basis CPD_STEPS_GAIN_BELOW_GET) when get_vo2 > 0 and
 * at least 3 qualify, else the stages at or below 80 % of peak_intensity (CPD_STEPS_GAIN_BELOW_80PCT).
 * Sets gain, gain_se, gain_icpt, gain_n, gain_basis and each stage's in_gain. Returns CPD_OK, or
 * CPD_ENODATA when fewer than 3 stages qualify (gain_basis NONE). */
int cpd_steps_gain(cpd_steps_result *r, double get_vo2, double peak_intensity);

/* The intensity whose stage steady-state VO2 is value (linear between the first two consecutive
 * stages that bracket it, as lactate.h places a value between stages), or the steady-state VO2 at
 * the intensity value (by_intensity 1). Returns CPD_OK, or CPD_ENODATA with fewer than 2 stages or
 * when no pair of stages brackets the value (no extrapolation). */
int cpd_steps_at(const cpd_steps_result *r, double value, int by_intensity, double *out);

#endif
