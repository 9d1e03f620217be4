/* ramp.h: analysis of a ramp incremental test from breath-by-breath (or per-second) gas exchange:
 * VO2peak, plateau, GET by V-slope with a ventilatory-equivalent cross-check, RCP, VO2-intensity gain,
 * mean response time and the constant-intensity equivalents. Nothing is invented: a value that cannot
 * be found carries a status and a reason instead. */
#ifndef CPDOMAIN_RAMP_H
#define CPDOMAIN_RAMP_H

#include "cpdomain/gx.h"
#include "cpdomain/linfit.h"
#include "cpdomain/steps.h"

#include <stddef.h>

/* The rules, with their defaults (times from onset):
 * - Cleaning: cpd_gx_outliers on VO2, VCO2 and VE (4 SD of +-10 neighbours), repeated up to three
 *   passes; 1-s interpolation; a centred 20-s mean places a VO2 level in time (first second at which it
 *   reaches the level, interpolated); a trailing 30-s mean gives VO2peak.
 * - Intensity: the recorded column (power_w, speed_m_s) wins when present and not flat: thresholds,
 *   VO2peak and the peak take its values; a ramp's gain and MRT use its least-squares line over the
 *   exercise. The nominal start + rate t / 60 is used without a column (or a flat one) and is
 *   otherwise checked against the record: mismatch when the mean |record - nominal| exceeds 5 % of
 *   the intensity span (ramps) or the rates differ by more than 10 % (steps).
 * - End of exercise (unless end_given): the last sample before the recorded intensity falls more than
 *   max(10 W | 0.3 m/s, 10 % of its highest value so far) below that highest value and stays there
 *   for 5 s; without a column, the last sample. What follows (the recovery) is kept but not analysed.
 *   The baseline intensity is the column's mean over the final 60 s before onset (unless given).
 * - Protocol: steps when cpd_steps_is_steps holds for the stages of the record (steps.h), else ramp.
 *   Steps: VO2peak as for a ramp over the whole exercise (the last stage included); a steady state
 *   per stage; gain from the stage means below the GET (else up to 80 % of peak intensity); no MRT;
 *   the constant-intensity equivalent of a threshold is the intensity whose stage steady state has
 *   its VO2; plateau when the last two stages differ by less than 150 mL/min (common practice).
 * - No GET (e.g. a VO2-only file): the gain line of a ramp runs up to 80 % of the peak intensity.
 * - No baseline before onset: the MRT is the time constant of a first-order filter of the intensity
 *   (VO2 = a + G P_filtered(t), fitted over the gain range, the filter starting at the baseline
 *   intensity); not identifiable when its SE exceeds half of it (and 10 s) or it lies at 0 or 180 s.
 * - Breakpoints use 10-s bin means (less noise in x for the OLS slopes); at least max(6, n/10) bins per
 *   side (n/20 for the RCP); a break needs the lines to cross inside the data and z >= 3.
 * - RCP: VE on VCO2 from 60 s to the end, upper slope >= 1.15 x lower; placed where the smoothed VCO2
 *   reaches the crossing. GET: V-slope, VCO2 on VO2 from 60 s to the RCP (to the end without one),
 *   S1 >= 0.6, S2 > 1, S2 - S1 > 0.1. Cross-check: breakpoint of VE on VO2 (VE/VO2 starts to rise)
 *   with VE/VCO2 rising at most 1/4 as fast; agreement within 5 % of VO2peak.
 * - Gain and MRT: VO2 on time from 120 s (60 s when the GET is before 210 s) to the GET; MRT with the
 *   baseline VO2 of the final 60 s before onset (>= 30 s, 8 samples), refitted from 4 MRT after a step
 *   at onset, refused outside 0..180 s; a given MRT wins. Gain flag 8..12 mL/min/W (power only).
 * - Plateau: VO2-time slope over the final 90 s below half the sub-GET slope (else the 120 s to
 *   end - 90 s slope). */

#define CPD_RAMP_WHY_MAX 128 /* bytes of a reason text, with its terminator */

/* Limits checked at the boundary (physiological plausibility, common practice). */
#define CPD_RAMP_VO2_MAX_ML_MIN 10000.0 /* a breath above this is not a measurement */
#define CPD_RAMP_VE_MAX_L_MIN 350.0
#define CPD_RAMP_MIN_SAMPLES 30   /* samples during the ramp */
#define CPD_RAMP_MIN_DURATION_S 180.0 /* shortest analysable ramp */

typedef enum {
    CPD_RAMP_POWER = 0, /* cycle (or other) ergometer: intensity in W, rate in W/min */
    CPD_RAMP_SPEED = 1  /* treadmill: intensity in m/s, rate in (m/s)/min */
} cpd_ramp_modality;

/* Status of a threshold or an estimate. */
typedef enum {
    CPD_THR_NOT_FOUND = 0, /* not available; see reason and why */
    CPD_THR_FOUND = 1,     /* found automatically */
    CPD_THR_MANUAL = 2     /* set by a reviewer (manual VO2) */
} cpd_thr_status;

/* Why a value is not available. */
typedef enum {
    CPD_RAMP_R_NONE = 0,     /* available */
    CPD_RAMP_R_NO_VCO2,      /* the series has no VCO2 */
    CPD_RAMP_R_NO_VE,        /* the series has no VE */
    CPD_RAMP_R_FEW_POINTS,   /* the eligible range holds too few samples or too short a time */
    CPD_RAMP_R_NO_BREAK,     /* no significant change of slope: no visible threshold */
    CPD_RAMP_R_SLOPES,       /* a breakpoint exists but its slopes fail the acceptance criteria */
    CPD_RAMP_R_OUTSIDE,      /* the two lines do not cross inside the data */
    CPD_RAMP_R_NOT_REACHED,  /* the smoothed series never reaches the threshold's level during the ramp */
    CPD_RAMP_R_NOT_ISOCAPNIC,/* VE/VCO2 rises together with VE/VO2 */
    CPD_RAMP_R_NO_GET,       /* depends on a GET that is not available */
    CPD_RAMP_R_NO_BASELINE,  /* no pre-onset baseline (need >= 30 s and 8 samples before onset) */
    CPD_RAMP_R_IMPLAUSIBLE,  /* the estimate lies outside its plausible range */
    CPD_RAMP_R_FIT_FAILED,   /* a regression failed (degenerate data) */
    CPD_RAMP_R_STEPS,        /* not defined for a step test */
    CPD_RAMP_R_NOT_IDENTIFIABLE, /* the data cannot tell the value (its uncertainty is as large as itself) */
    CPD_RAMP_NREASONS
} cpd_ramp_reason;


/* The protocol of a graded test. */
typedef enum {
    CPD_RAMP_PROTO_AUTO = 0,  /* read from the recorded intensity (steps when cpd_steps_is_steps, else ramp) */
    CPD_RAMP_PROTO_RAMP = 1,  /* a continuous ramp */
    CPD_RAMP_PROTO_STEPS = 2  /* a step test: intensity held for 1-3 min, then raised */
} cpd_ramp_protocol;

/* How the gain's range was chosen. */
typedef enum {
    CPD_RAMP_GAIN_NONE = 0,
    CPD_RAMP_GAIN_BELOW_GET = 1,   /* below the GET */
    CPD_RAMP_GAIN_BELOW_80PCT = 2  /* no GET: below 80 % of the peak intensity */
} cpd_ramp_gain_basis;

/* Options of an analysis. Fill with cpd_ramp_opts_init. The series' intensity column (power_w or
 * speed_m_s), when present, is used first; rate_per_min and start are then optional and only
 * checked against it. Without the column rate_per_min is required. */
typedef struct {
    cpd_ramp_modality modality;  /* CPD_RAMP_POWER (default) or CPD_RAMP_SPEED */
    double rate_per_min;         /* ramp rate, W/min or (m/s)/min, > 0 (required) */
    double start;                /* intensity at onset, W or m/s, >= 0 (default 0) */
    double onset_s;              /* file time at which the ramp began, s (default 0) */
    int end_given;               /* 1: end_s is the file time at which the ramp ended */
    double end_s;                /* s, file time; used when end_given */
    double outlier_k;            /* outlier rule, SD (default 4) */
    size_t outlier_half;         /* outlier rule, neighbours on each side (default 10) */
    double peak_window_s;        /* VO2peak rolling-mean window, s, 5..120 (default 30) */
    double smooth_s;             /* centred smoothing used to place a VO2 level in time, s, 5..120 (default 20) */
    double bin_s;                /* regressions run on means over bins of bin_s, s, 0..30 (default 10; 0 = samples) */
    int mrt_given;               /* 1: use mrt_s instead of the estimate */
    double mrt_s;                /* given MRT, s, 0..300 */
    int baseline_given;          /* 1: baseline_intensity is the intensity before onset */
    double baseline_intensity;   /* W or m/s before onset, >= 0 */
    double mass_kg;              /* body mass, kg; 0 = unknown */
    double manual_get_vo2_ml_min;/* reviewer's GET, mL/min; 0 = none */
    double manual_rcp_vo2_ml_min;/* reviewer's RCP, mL/min; 0 = none */
    int protocol;                /* cpd_ramp_protocol (default AUTO) */
    int start_given;             /* 1: start is the user's nominal start (else read from the record) */
    double manual_get_intensity; /* reviewer's GET as W or m/s; 0 = none (the VO2 form wins when both) */
    double manual_rcp_intensity; /* reviewer's RCP as W or m/s; 0 = none */
} cpd_ramp_opts;

/* A threshold (GET or RCP) placed on the ramp. */
typedef struct {
    int status;                 /* cpd_thr_status */
    int reason;                 /* cpd_ramp_reason; CPD_RAMP_R_NONE unless NOT_FOUND */
    char why[CPD_RAMP_WHY_MAX]; /* the reason in words with its numbers; "" when available */
    const char *method;         /* static text: how the value was found; "" when not found */
    double vo2_ml_min;          /* mL/min */
    double pct_vo2peak;         /* % of VO2peak */
    double time_s;              /* s from onset: where the smoothed VO2 first reaches vo2_ml_min */
    double ramp_intensity;      /* W or m/s: start + rate * time_s / 60 */
    int has_equiv;              /* 1 when an MRT is known */
    double equiv_intensity;     /* W or m/s: ramp_intensity - rate * MRT / 60 (constant-intensity equivalent) */
    int has_hr;                 /* 1 when the series has HR */
    double hr_bpm;              /* beats/min, smoothed, at time_s */
} cpd_ramp_threshold;

/* The ventilatory-equivalent cross-check of the GET. */
typedef struct {
    int status;                 /* CPD_THR_FOUND or CPD_THR_NOT_FOUND */
    int reason;                 /* cpd_ramp_reason */
    char why[CPD_RAMP_WHY_MAX]; /* reason in words */
    double vo2_ml_min;          /* mL/min: where VE/VO2 starts to rise (breakpoint of VE on VO2) */
    cpd_linfit_twoseg fit;        /* VE (L/min) on VO2 (mL/min) */
    double veo2_slope;          /* 1/(mL/min): slope of VE/VO2 on VO2 above the breakpoint */
    double vevco2_slope;        /* 1/(mL/min): slope of VE/VCO2 on VO2 above the breakpoint */
    int peto2_rises;            /* 1 PETO2 rises > 1 mmHg above the breakpoint, 0 it does not, -1 no PETO2 */
    int petco2_steady;          /* 1 PETCO2 falls < 1 mmHg above the breakpoint, 0 it falls more, -1 no PETCO2 */
    int has_diff;               /* 1 when both this and the automatic V-slope GET exist */
    double diff_ml_min;         /* mL/min: this VO2 - V-slope GET VO2 */
    int agree;                  /* 1 when |diff| <= 5 % of VO2peak, 0 when not, -1 when !has_diff */
} cpd_ramp_veq;

/* Everything an analysis finds. Every double is finite; one that is not available is 0 and
 * flagged by its status or has_ field. */
typedef struct {
    int modality;                /* cpd_ramp_modality */
    size_t n_samples;            /* input samples */
    size_t n_outliers;           /* samples dropped as outliers (in VO2, VCO2 or VE) */
    double duration_s;           /* s: ramp length from onset to its end */
    double peak_intensity;       /* W or m/s at the end of the ramp */
    double vo2peak_ml_min;       /* mL/min: highest rolling mean over peak_window_s during the ramp */
    double vo2peak_time_s;       /* s from onset: end of that window */
    double vo2peak_intensity;    /* W or m/s: ramp intensity at vo2peak_time_s */
    int has_relative;            /* 1 when mass is known */
    double vo2peak_ml_kg_min;    /* mL/kg/min */

    int plateau;                 /* 1 VO2 plateau, 0 none, -1 unknown (plateau_why) */
    char plateau_why[CPD_RAMP_WHY_MAX]; /* why unknown */
    double final_slope_ml_min_s; /* mL/min per s: VO2 on time over the final 90 s */
    double ref_slope_ml_min_s;   /* mL/min per s: the reference slope (sub-GET fit, else 120 s to end - 90 s) */

    cpd_ramp_threshold get;      /* the GET reported: manual when given, else automatic */
    cpd_ramp_threshold get_auto; /* the automatic GET (V-slope) */
    cpd_ramp_threshold rcp;      /* the RCP reported: manual when given, else automatic */
    cpd_ramp_threshold rcp_auto; /* the automatic RCP (VE on VCO2 breakpoint) */
    cpd_linfit_twoseg vslope;      /* V-slope fit, VCO2 (mL/min) on VO2 (mL/min); valid when has_vslope */
    int has_vslope;              /* 1 when the V-slope regression ran (its acceptance is get_auto.status) */
    double vslope_t_lo_s;        /* s from onset: eligible range of the V-slope */
    double vslope_t_hi_s;        /* s from onset: upper end (the automatic RCP, else the end of the ramp) */
    cpd_linfit_twoseg rcp_fit;     /* VE (L/min) on VCO2 (mL/min); valid when has_rcp_fit */
    int has_rcp_fit;             /* 1 when the RCP regression ran */
    cpd_ramp_veq veq;            /* ventilatory-equivalent cross-check of the GET */

    int gain_status;             /* CPD_THR_FOUND or CPD_THR_NOT_FOUND */
    int gain_reason;             /* cpd_ramp_reason */
    char gain_why[CPD_RAMP_WHY_MAX]; /* reason in words */
    double gain;                 /* mL/min per W (per m/s for speed): VO2 on intensity below the GET */
    double gain_se;              /* same unit */
    int gain_in_range;           /* 1 inside 8-12 mL/min/W, 0 outside, -1 unknown or not a power ramp */
    double gain_t_lo_s, gain_t_hi_s; /* s from onset: range of the fit */
    double slope_ml_min_s;       /* mL/min per s: VO2 on time over that range */

    int mrt_status;              /* FOUND when estimated, MANUAL when given, NOT_FOUND when neither */
    int mrt_reason;              /* cpd_ramp_reason for the estimate */
    char mrt_why[CPD_RAMP_WHY_MAX]; /* why the estimate is missing */
    double mrt_s;                /* s: the MRT used for the constant-intensity equivalents */
    int has_mrt_est;             /* 1 when the estimate exists (also when a given MRT is used) */
    double mrt_est_s;            /* s: lagged-linear estimate */
    double mrt_est_se_s;         /* s: its standard error (delta method) */
    int has_baseline;            /* 1 when a pre-onset baseline exists */
    double baseline_vo2_ml_min;  /* mL/min: mean VO2 over the final 60 s before onset */
    double baseline_intensity;   /* W or m/s before onset (given, else the column, else start) */

    int has_column;              /* 1 when the series carries the modality's intensity column */
    double column_mad;           /* W or m/s: mean |column - nominal ramp| over the ramp */
    int column_mismatch;         /* 1 when column_mad exceeds 5 % of the ramp's intensity span */

    /* gas-exchange files as labs export them */
    int protocol;                /* cpd_ramp_protocol analysed: RAMP or STEPS */
    int protocol_from_record;    /* 1 when the protocol was read from the recorded intensity */
    int intensity_recorded;      /* 1 intensities are read from the record, 0 from the nominal rate and start */
    double rate_used;            /* W/min or (m/s)/min: the ramp line used (the record's, else nominal) */
    double start_used;           /* W or m/s at onset on that line */
    int has_record_line;         /* 1 when the record's least-squares line over the exercise exists */
    double record_rate;          /* W/min or (m/s)/min: slope of the recorded intensity on time (x 60) */
    double record_start;         /* W or m/s: its value at onset */
    int has_nominal;             /* 1 when a nominal rate was given beside the record */
    double nominal_rate, nominal_start; /* as given (start: 0 when not given) */
    int nominal_mismatch;        /* 1 when nominal and record disagree beyond the tolerance of ramp.h */
    int end_from_record;         /* 1 the end was found from the record, 0 given (end_given) or the last sample */
    int gain_basis;              /* cpd_ramp_gain_basis */
    int mrt_without_baseline;    /* 1 when the MRT estimate comes from the filtered-record fit (no baseline) */
    cpd_steps_result steps;      /* the stages and their steady states (n = 0 for a ramp) */
} cpd_ramp_result;

/* Which points cpd_ramp_points returns. */
typedef enum {
    CPD_RAMP_PTS_VSLOPE = 0, /* x VO2, y VCO2 (mL/min), sorted by VO2: the V-slope plot */
    CPD_RAMP_PTS_RCP,        /* x VCO2 (mL/min), y VE (L/min), sorted by VCO2 */
    CPD_RAMP_PTS_VEQ         /* x VO2 (mL/min), y VE (L/min), sorted by VO2 (VE/VO2 = 1000 y / x) */
} cpd_ramp_pts;

typedef struct cpd_ramp_ws cpd_ramp_ws;

/* Fills o with the defaults above (power modality, rate 0 which the caller must set). */
void cpd_ramp_opts_init(cpd_ramp_opts *o);

/* A reusable workspace; it grows to the series it sees. NULL when out of memory.
 * The caller frees it with cpd_ramp_free (which accepts NULL). */
cpd_ramp_ws *cpd_ramp_alloc(void);
void cpd_ramp_free(cpd_ramp_ws *w);

/* Analyses the graded test in s (file times that never run backwards, negative before the onset;
 * VO2 required) by the rules above: a ramp or a step test, GET by V-slope (Beaver, Wasserman & Whipp
 * 1986 J Appl Physiol 60:2020), MRT by the lagged-linear model (Whipp et al. 1981 J Appl Physiol
 * 50:217). Returns CPD_OK (thresholds may be NOT_FOUND), CPD_EUSAGE for bad options (also: no rate
 * and no usable intensity column; steps asked without a column), CPD_EDATA for invalid data (time backwards, VO2 <= 0 or absurd, no
 * VO2), CPD_ENODATA for too short a ramp, CPD_ENOMEM; res is zeroed on error. msg (CPD_MSG_MAX bytes,
 * may be NULL) gets the detail. Results of the fits stay readable in w until its next analysis. */
int cpd_ramp_analyse(cpd_ramp_ws *w, const cpd_gx_series *s, const cpd_ramp_opts *o, cpd_ramp_result *res,
                     char *msg);

/* The points behind a fit of the last successful analysis in w (see cpd_ramp_pts), owned by w and
 * valid until the next analysis or cpd_ramp_free. Returns CPD_OK, CPD_ENODATA when that fit did not
 * run, CPD_EUSAGE for a bad which. */
int cpd_ramp_points(const cpd_ramp_ws *w, int which, const double **x, const double **y, size_t *n);

/* The cleaned 1-s series of the last successful analysis (times from onset, outliers removed), owned
 * by w and valid as above; NULL before any. smoothed_vo2 (may be NULL) receives the centred mean used
 * to place thresholds in time, same length. */
const cpd_gx_series *cpd_ramp_grid(const cpd_ramp_ws *w, const double **smoothed_vo2);
/* The centred mean of channel (CPD_GX_VO2, CPD_GX_VCO2 or CPD_GX_HR) on that grid, the one the
 * analysis places thresholds with; NULL when the channel is absent or before any analysis. */
const double *cpd_ramp_smoothed(const cpd_ramp_ws *w, int channel);
/* v (a series on the 1-s grid g) at time t, linear between seconds and clamped to the grid. */
double cpd_ramp_grid_at(const cpd_gx_series *g, const double *v, double t);

/* The cleaned samples (breaths) of the last successful analysis: outliers removed, times from onset;
 * owned by w and valid as above; NULL before any. */
const cpd_gx_series *cpd_ramp_samples(const cpd_ramp_ws *w);

/* The intensity (W or m/s) at t_s seconds from onset as the last analysis read it: the recorded
 * intensity on the 1-s grid when r->intensity_recorded, else r->start_used + r->rate_used * t / 60.
 * NaN before any successful analysis. */
double cpd_ramp_intensity_at(const cpd_ramp_ws *w, const cpd_ramp_result *r, double t_s);


/* Short static English text of a cpd_ramp_reason; never NULL. */
const char *cpd_ramp_reason_text(int reason);

/* ---- intervals (ramp_ci.c; issue 12) ---- */

#include <stdint.h>

/* 95 % interval of a threshold (GET or RCP) and of what is derived from it. */
typedef struct {
    int valid;                 /* 1 when the fields below hold */
    size_t n_used;             /* bootstrap resamples whose lines crossed inside the data */
    double vo2_ci95[2];        /* mL/min */
    double time_ci95_s[2];     /* s from onset, where the smoothed series reaches the bounds */
    double ramp_ci95[2];       /* W or m/s on the ramp */
    int has_equiv;             /* 1 when the threshold has a constant-intensity equivalent */
    double equiv_ci95[2];      /* W or m/s: the ramp bounds minus the MRT shift, the MRT's SE added in quadrature */
} cpd_ramp_thr_ci;

typedef struct {
    size_t n_boot;             /* bootstrap resamples asked for */
    double noise_sd_ml_min;    /* breath-to-breath VO2 noise SD near the end of the ramp, mL/min */
    size_t peak_breaths;       /* breaths in the VO2peak window */
    int has_vo2peak_ci;        /* 1 when the VO2peak fields hold */
    double vo2peak_se_ml_min;  /* SE of the 30-s mean: noise SD / sqrt(breaths in the window), mL/min */
    double vo2peak_ci95[2];    /* VO2peak +- 1.96 SE, mL/min */
    cpd_ramp_thr_ci get;       /* the automatic GET (a reviewer's GET has no interval) */
    cpd_ramp_thr_ci rcp;       /* the automatic RCP */
} cpd_ramp_ci;

/* Intervals for the last analysis in w (its result r and options o): VO2peak +- 1.96 x the SE of a
 * mean of the breaths in its window, the noise SD from successive differences of the breaths in the
 * final 2 min (SD of a difference / sqrt 2); GET and RCP by a residual bootstrap of the two-segment
 * fit behind each (n_boot resamples, 200 is plenty; percentile interval of the crossing), placed in
 * time and carried to the ramp and constant-intensity equivalents as the estimates are. Only the
 * automatic thresholds (status FOUND) get intervals. seed makes the resamples reproducible; callers
 * that want the same record to give the same interval everywhere pass CPD_RAMP_CI_SEED. Of o only
 * the peak window and the smoothing are read (intensities come from the analysis in w and r).
 * Returns CPD_OK (fields with valid 0 where no interval exists), CPD_EUSAGE for NULL, CPD_ENODATA
 * when w holds no analysis, CPD_ENOMEM. */
#define CPD_RAMP_CI_SEED 20261130u
#define CPD_RAMP_CI_BOOT 200
int cpd_ramp_ci_compute(const cpd_ramp_ws *w, const cpd_ramp_result *r, const cpd_ramp_opts *o, size_t n_boot,
                        uint64_t seed, cpd_ramp_ci *out);

#endif
