/* energy.h: energy, fuel and the oxygen deficit from gas exchange: energy expenditure (Weir 1949),
 * carbohydrate and fat oxidation (stoichiometric equations), peak fat oxidation from stage means,
 * the oxygen deficit of a constant-power bout, the accumulated oxygen deficit of a supra-maximal
 * bout, and a second-by-second VO2 model of a recorded power session. Pure: arrays in, results out.
 *
 * Formulas and constants (VO2, VCO2 in L/min unless said otherwise):
 *  - Energy expenditure, Weir 1949 J Physiol 109:1-9, urinary nitrogen neglected:
 *        EE (kcal/min) = 3.941 VO2 + 1.106 VCO2;  1 kcal = 4.184 kJ (thermochemical calorie).
 *  - Substrate oxidation, g/min, protein oxidation neglected (the coefficients below are quoted from
 *    memory of the published tables; each set is named in every output):
 *        Jeukendrup & Wallis 2005 Int J Sports Med 26 Suppl 1:S28, moderate-to-high intensity
 *        exercise (50-75 % VO2max, carbohydrate mostly muscle glycogen), the default:
 *            CHO = 4.210 VCO2 - 2.962 VO2;  fat = 1.695 VO2 - 1.701 VCO2
 *        Jeukendrup & Wallis 2005, low-intensity exercise (40-50 % VO2max):
 *            CHO = 4.344 VCO2 - 3.061 VO2;  fat = 1.695 VO2 - 1.701 VCO2
 *        Frayn 1983 J Appl Physiol 55:628 (CHO as glucose):
 *            CHO = 4.55 VCO2 - 3.21 VO2;    fat = 1.67 VO2 - 1.67 VCO2
 *  - Validity rule: the equations assume that VCO2 at the mouth is the CO2 of oxidation, true only
 *    at a steady state with RER <= 1.00 (above it bicarbonate buffering of lactic acid adds CO2).
 *    Outside [0.70, 1.00] or without a steady state the rates are 'not valid' and not given; inside
 *    it a rate the rounded coefficients put a hair below zero (fat at RER 0.997-1.00, CHO at
 *    0.700-0.704) is reported as 0, never negative. An RER outside [CPD_ENERGY_RER_MIN,
 *    CPD_ENERGY_RER_MAX] is taken as a measurement fault (CPD_EDATA): no number at all.
 *  - Peak fat oxidation (Achten, Gleeson & Jeukendrup 2002 Med Sci Sports Exerc 34:92): fat rate of
 *    the stages against %VO2peak fitted by a third-order polynomial; the peak of the polynomial within
 *    the stages' range; the range within 10 % of the peak; bootstrap over stages for intervals.
 *  - Oxygen deficit of a constant-power step: the integral of (base + A1) - VO2_primary(t) from the
 *    onset; for the mono-exponential base + A1 (1 - e^-(t-TD)/tau) it is A1 (TD + tau) = A1 MRT
 *    over a long bout. Slow component excess O2: the integral of A2 (1 - e^-(t-TD2)/tau2) over the bout.
 *  - Accumulated oxygen deficit (Medbo et al. 1988 J Appl Physiol 64:50): the O2 demand of a
 *    supra-maximal bout extrapolated from the steady-state VO2-power line, times the duration,
 *    minus the accumulated VO2 measured.
 * Cautions: these are estimates for sport science, not nutrition advice; fuelling and intake
 * plans belong to a registered dietitian or sports nutritionist. */
#ifndef CPDOMAIN_ENERGY_H
#define CPDOMAIN_ENERGY_H

#include <stddef.h>
#include <stdint.h>

#include "cpdomain/status.h"
#include "cpdomain/steps.h"

#define CPD_ENERGY_WEIR_O2 3.941     /* kcal per L O2 (Weir 1949) */
#define CPD_ENERGY_WEIR_CO2 1.106    /* kcal per L CO2 (Weir 1949) */
#define CPD_ENERGY_KJ_PER_KCAL 4.184 /* thermochemical calorie */
#define CPD_ENERGY_RER_VALID_LO 0.70 /* rates valid from here (pure fat oxidation, RQ 0.70) */
#define CPD_ENERGY_RER_VALID_HI 1.00 /* to here (pure carbohydrate, RQ 1.00) */
#define CPD_ENERGY_RER_MIN 0.60      /* an RER below this is a measurement fault, not physiology [chosen] */
#define CPD_ENERGY_RER_MAX 1.30      /* above this likewise: far outside 0.7-1.2 [chosen] */

/* Equation sets for carbohydrate and fat oxidation. */
enum {
    CPD_ENERGY_EQ_JW_HIGH = 0, /* Jeukendrup & Wallis 2005, exercise at 50-75 % VO2max (default) */
    CPD_ENERGY_EQ_JW_LOW,      /* Jeukendrup & Wallis 2005, exercise at 40-50 % VO2max */
    CPD_ENERGY_EQ_FRAYN,       /* Frayn 1983 */
    CPD_ENERGY_NEQ
};

typedef struct {
    const char *key;   /* "jw2005-high", "jw2005-low", "frayn1983" */
    const char *name;  /* the set as named in outputs */
    double cho_vco2, cho_vo2; /* CHO g/min = cho_vco2 VCO2 - cho_vo2 VO2 (L/min) */
    double fat_vo2, fat_vco2; /* fat g/min = fat_vo2 VO2 - fat_vco2 VCO2 */
} cpd_energy_eqset;

/* The equation set eq (CPD_ENERGY_EQ_*), or NULL when out of range. Static data. */
const cpd_energy_eqset *cpd_energy_eqset_get(int eq);

/* The set whose key is key, or -1. */
int cpd_energy_eqset_find(const char *key);

/* Why substrate rates are not given. */
enum {
    CPD_ENERGY_R_NONE = 0,
    CPD_ENERGY_R_NOT_STEADY, /* no steady state: VCO2 does not track oxidation */
    CPD_ENERGY_R_RER_HIGH,   /* RER above 1.00: buffering CO2 inflates VCO2 */
    CPD_ENERGY_R_RER_LOW     /* RER below 0.70: hypoventilation or a measurement fault */
};

/* Energy and substrate use at one steady state. Every number is finite. */
typedef struct {
    double rer;             /* VCO2 / VO2 */
    double ee_kcal_min;     /* Weir 1949, kcal/min */
    double ee_kj_min;       /* kJ/min */
    int rates_valid;        /* 1 when cho_g_min and fat_g_min hold */
    int reason;             /* CPD_ENERGY_R_* when rates_valid == 0 */
    double cho_g_min;       /* carbohydrate oxidation, g/min (0 when not valid) */
    double fat_g_min;       /* fat oxidation, g/min (0 when not valid) */
    int eq;                 /* CPD_ENERGY_EQ_* used */
} cpd_energy_substrate;

/* EE (kcal/min) by Weir 1949 from VO2 and VCO2 in L/min. No checks. */
double cpd_energy_weir_kcal_min(double vo2_l_min, double vco2_l_min);

/* Energy and substrate use from VO2 and VCO2 (mL/min) measured at one state; steady is 1 when the
 * caller established a steady state. Returns CPD_OK (rates possibly not valid, see reason),
 * CPD_EUSAGE for a bad eq, CPD_EDATA for a non-finite or non-positive VO2 or VCO2 (a missing VCO2)
 * or an RER outside [CPD_ENERGY_RER_MIN, CPD_ENERGY_RER_MAX]; msg (CPD_MSG_MAX, may be NULL) says why. */
int cpd_energy_substrate_calc(double vo2_ml_min, double vco2_ml_min, int steady, int eq, cpd_energy_substrate *out,
                              char *msg);

/* Short English text of a CPD_ENERGY_R_* reason; never NULL. */
const char *cpd_energy_reason_text(int reason);

/* ---- peak fat oxidation (Achten, Gleeson & Jeukendrup 2002) ---- */

#define CPD_PFO_MAX_STAGES 64 /* as many as a step test holds (CPD_STEPS_MAX) */
#define CPD_PFO_ZONE_FRACTION 0.90 /* the zone: intensities where the fitted rate is >= 90 % of the peak */

/* Stage means of a step test (graded exercise, stages long enough for a steady state). */
typedef struct {
    size_t n;                  /* stages, 5 .. CPD_PFO_MAX_STAGES */
    const double *power_w;     /* stage power, W (or m/s), increasing */
    const double *vo2_ml_min;  /* mean VO2 of the stage's steady state (final 30 s, steps.h, or last minute), mL/min */
    const double *vco2_ml_min; /* mean VCO2, mL/min */
    const double *hr_bpm;      /* mean HR, or NULL */
    double vo2peak_ml_min;     /* the athlete's VO2peak, mL/min */
    int eq;                    /* CPD_ENERGY_EQ_* */
    size_t n_boot;             /* bootstrap resamples, 0 for none (default 1000 is the caller's choice) */
    uint64_t seed;             /* bootstrap seed */
} cpd_pfo_input;

typedef struct {
    size_t n;                           /* stages used */
    double pct[CPD_PFO_MAX_STAGES];     /* %VO2peak of each stage */
    double fat[CPD_PFO_MAX_STAGES];     /* fat oxidation of each stage, g/min (0 above RER 1.00: see below) */
    double rer[CPD_PFO_MAX_STAGES];     /* RER of each stage */
    size_t n_rer_above;                 /* stages with RER > 1.00, entered with fat 0 */
    double coef[4];                     /* fat g/min = c0 + c1 x + c2 x^2 + c3 x^3, x = %VO2peak */
    double peak_g_min;                  /* peak fat oxidation (the polynomial's maximum in range), g/min */
    double peak_pct;                    /* %VO2peak where it occurs */
    double peak_power_w;                /* power there (linear between stages), W */
    int has_hr;                         /* 1 when HR was given */
    double peak_hr_bpm;                 /* HR there, beats/min */
    double zone_pct[2];                 /* %VO2peak range where the fit is >= 90 % of the peak */
    double zone_power_w[2];             /* the same in W */
    double measured_peak_g_min;         /* the highest stage rate, g/min */
    size_t n_boot;                      /* bootstrap resamples that gave a fit */
    double peak_ci95[2];                /* percentile 95 % intervals over the resamples */
    double pct_ci95[2];
    double power_ci95[2];
    double hr_ci95[2];
} cpd_pfo_result;

/* Peak fat oxidation from the stages (Achten et al. 2002): fat by the equation set with the validity
 * rule, except that stages with RER > 1.00 enter with fat 0 g/min (fat oxidation is negligible there
 * and the fit must come down; the rate is not computed from the equations there), the cubic by OLS
 * (cpd_linfit_poly), the peak by the roots of its derivative within [lowest, highest] stage, the
 * zone where the cubic stays >= 90 % of the peak, and bootstrap percentile intervals over stages.
 * Returns CPD_OK, CPD_EUSAGE (bad n or eq), CPD_EDATA (a stage value bad or RER outside the plausible
 * range; msg names the stage), CPD_ENODATA (fewer than 5 stages, or the fit has no peak above 0). */
int cpd_energy_pfo(const cpd_pfo_input *in, cpd_pfo_result *out, char *msg);

/* ---- a step test's stages (steps.h) ---- */

#define CPD_PFO_BOOT_DEFAULT 1000 /* bootstrap resamples the CLI asks for */

/* Energy and substrate use of one stage of a step test from its steady-state means (the final
 * CPD_STEPS_SS_WIN_S of the stage, steps.h): cpd_energy_substrate_calc with steady = the stage's
 * stability flag (1 only when st->stable == 1: a drifting stage or one too short to judge is not a
 * steady state, so its rates are 'not valid'). Returns as cpd_energy_substrate_calc; CPD_EDATA with
 * msg when the stage has no VCO2 (a VO2-only file). */
int cpd_energy_stage_substrate(const cpd_steps_stage *st, int eq, cpd_energy_substrate *out, char *msg);

/* Which stages of a step test enter peak fat oxidation: complete stages with VCO2 that are stable,
 * and complete stages with RER above 1.00 whatever their stability (they enter with fat 0, see
 * cpd_energy_pfo). A stage cut short (the last, at exhaustion) never enters. 1 or 0. */
int cpd_energy_pfo_stage_ok(const cpd_steps_stage *st);

/* Peak fat oxidation of a step test: fills a cpd_pfo_input from the stages that pass
 * cpd_energy_pfo_stage_ok (intensity, VO2, VCO2, and HR when every one has it) with the test's
 * VO2peak and runs cpd_energy_pfo. used[] (CPD_STEPS_MAX, may be NULL) receives 1 for each stage
 * that entered. Returns as cpd_energy_pfo; CPD_ENODATA with msg when the test has no VCO2 or fewer
 * than 5 stages qualify (msg says how many and why). */
int cpd_energy_pfo_steps(const cpd_steps_result *s, double vo2peak_ml_min, int eq, size_t n_boot, uint64_t seed,
                         cpd_pfo_result *out, int *used, char *msg);

/* ---- oxygen deficit ---- */

typedef struct {
    double deficit_ml;          /* integral of (base + A1) - primary VO2 over [0, duration], mL */
    double deficit_mrt_ml;      /* A1 * MRT / 60: the long-bout closed form, mL */
    int has_slow;               /* 1 when the model has a slow component */
    double slow_excess_ml;      /* integral of the slow component over [0, duration], mL */
    double slow_end_ml_min;     /* the slow component reached at the end, mL/min */
    double slow_extra_gain_ml_min_w; /* slow_end / (power - baseline power), mL/min per W; 0 when unknown */
} cpd_energy_deficit;

/* Oxygen deficit of a constant-power bout of duration_s from its kinetics fit (model CPD_KIN_MONO or
 * CPD_KIN_BI, parameters b as in kinetics.h), delta_power_w the step (<= 0: no per-W figure).
 * Integrals by adaptive quadrature (GSL QAGP) with the delays as break points.
 * Returns CPD_OK, CPD_EUSAGE for a bad model, parameters or duration, CPD_ENOCONV if quadrature fails. */
int cpd_energy_bout_deficit(int model, const double *b, double duration_s, double delta_power_w,
                            cpd_energy_deficit *out);

/* A steady-state VO2-power line VO2 = a + b P with its covariance. */
typedef struct {
    double a_ml_min;       /* intercept, mL/min */
    double b_ml_min_w;     /* slope, mL/min per W */
    double cov[4];         /* covariance of (a, b), row-major */
    size_t dof;            /* residual degrees of freedom; 0: the covariance is taken as given (e.g. a ramp) */
    size_t n;              /* points behind it */
} cpd_energy_line;

/* OLS line through n >= 2 steady states (power W, VO2 mL/min), distinct powers.
 * Returns CPD_OK, CPD_EUSAGE, CPD_EDATA (non-finite), CPD_ENODATA (fewer than 2 distinct powers). */
int cpd_energy_line_fit(const double *power_w, const double *vo2_ml_min, size_t n, cpd_energy_line *out);

typedef struct {
    double demand_ml_min;        /* extrapolated O2 demand at the bout's power, mL/min */
    double demand_se_ml_min;     /* its standard error from the line, mL/min */
    double demand_ml;            /* accumulated demand over the bout, mL */
    double vo2_ml;               /* accumulated VO2 measured, mL */
    double aod_ml;               /* accumulated O2 deficit, mL */
    double aod_ci95_ml[2];       /* interval from the line's uncertainty (t with dof, or z when dof 0), mL */
    int has_mass;                /* 1 when mass was given */
    double aod_ml_kg;            /* mL/kg */
    double aod_ci95_ml_kg[2];
    int extrapolation_pct;       /* the bout's power as % of the highest power on the line (0: unknown) */
} cpd_energy_aod;

/* Accumulated VO2 (mL) of samples (t s, VO2 mL/min) between t0 and t1 s by the trapezoid rule,
 * linear at the window's edges. Returns CPD_OK, CPD_EUSAGE (t1 <= t0), CPD_ENODATA (the samples do
 * not cover [t0, t1]), CPD_EDATA (non-finite values or time backwards). */
int cpd_energy_accumulate(const double *t_s, const double *vo2_ml_min, size_t n, double t0, double t1, double *out_ml);

/* Accumulated O2 deficit (Medbo et al. 1988) of a bout at power_w lasting duration_s with the
 * accumulated VO2 vo2_ml (cpd_energy_accumulate); mass_kg <= 0 for none; max_line_power_w the highest
 * power behind the line (0: unknown). Returns CPD_OK, CPD_EUSAGE for bad arguments. */
int cpd_energy_aod_calc(const cpd_energy_line *line, double power_w, double duration_s, double vo2_ml, double mass_kg,
                        double max_line_power_w, cpd_energy_aod *out);

/* The published cautions of the accumulated-deficit method, one paragraph (static text). */
const char *cpd_energy_aod_cautions(void);

/* ---- VO2 of a recorded power session ---- */

/* The athlete's parameters of the session model. Powers in W, VO2 in mL/min, times in s. */
typedef struct {
    double base_ml_min;      /* VO2 at 0 W on the VO2-power line (intercept) */
    double gain_ml_min_w;    /* steady-state gain below the GET */
    double tau_s;            /* primary time constant */
    double delay_s;          /* primary delay */
    double get_w;            /* GET as a constant power */
    double cp_w;             /* critical power (<= 0: unknown; no severe domain) */
    double sc_gain_ml_min_w; /* slow-component asymptote per W above the GET (heavy domain) */
    double sc_tau_s;         /* slow-component time constant */
    double sc_delay_s;       /* slow-component delay */
    double vo2peak_ml_min;   /* the cap */
} cpd_vo2model;

/* Models VO2 second by second for power p_w[0..n-1] (1 Hz): a primary first-order response with
 * delay to base + gain P, plus a slow component (first order, its own delay) whose target is
 * sc_gain (P - GET) in the heavy domain and whatever takes VO2 to VO2peak at or above CP, the sum
 * capped at VO2peak. Starts at steady state for p_w[0] with no slow component. A constant step
 * from P0 to P reproduces the bi-exponential of kinetics.h with A1 = gain (P - P0) and
 * A2 = sc_gain (P - GET). vo2_out receives n values. Returns CPD_OK, CPD_EUSAGE (bad parameters,
 * n == 0, negative or non-finite power). */
int cpd_vo2model_run(const cpd_vo2model *m, const double *p_w, size_t n, double *vo2_out);

/* Gross efficiency (fraction) at a steady state below the GET at power_w with RER rer: mechanical
 * power over the Weir energy rate of VO2 = base + gain P. 0 for power_w <= 0. */
double cpd_vo2model_gross_efficiency(const cpd_vo2model *m, double power_w, double rer);

/* Domain of a modelled VO2 by VO2 (moderate below the VO2 at the GET, severe at or above the
 * steady-state VO2 at CP, heavy between): 1 moderate, 2 heavy, 3 severe (as kinetics.h). */
int cpd_vo2model_domain(const cpd_vo2model *m, double vo2_ml_min);

/* ---- the cost of a recorded session ---- */

/* The model's parameters with the uncertainty of each (0: held fixed), and the RER of each domain. */
typedef struct {
    cpd_vo2model m;        /* point values */
    cpd_vo2model sd;       /* standard deviations of the same fields (normal draws, clamped to valid values) */
    double rer[3];         /* RER at a steady state in the moderate, heavy and severe domains */
    double rer_sd[3];      /* their SDs */
} cpd_energy_params;

/* Per-minute and total cost of a session. Intervals are the 2.5th and 97.5th percentiles of the
 * Monte Carlo draws. Arrays have n_min values and live in buf (cpd_energy_session_free). */
typedef struct {
    size_t n_min;          /* minutes (the last may be partial) */
    size_t draws;          /* Monte Carlo draws */
    double efficiency;     /* gross efficiency of the fixed-efficiency estimate, fraction */
    int eq;                /* equation set for CHO and fat */
    double *rec_s;         /* recorded seconds in each minute */
    double *power_w;       /* mean power over them, W */
    double *work_kj;       /* mechanical work, kJ */
    double *vo2_ml_min;    /* mean modelled VO2 (point parameters), mL/min */
    double *ee_kj, *ee_lo, *ee_hi;    /* modelled energy expenditure (Weir 1949), kJ, and its interval */
    double *cho_g, *cho_lo, *cho_hi;  /* carbohydrate oxidised, g */
    double *fat_g, *fat_lo, *fat_hi;  /* fat oxidised, g */
    double *fixed_kj;      /* work / efficiency, kJ */
    double *nosc_kj;       /* the model without a slow component (point), kJ */
    double *buf;           /* owner of the arrays */
    double rec_total_s;    /* recorded seconds */
    double work_total_kj;
    double ee_total_kj, ee_total_ci[2];
    double cho_total_g, cho_total_ci[2];
    double fat_total_g, fat_total_ci[2];
    double fixed_total_kj;
    double diff_total_kj, diff_total_ci[2]; /* model - fixed efficiency */
    double nosc_total_kj;  /* model without slow component: ee_total - nosc_total is its cost */
    double dom_s[3];       /* recorded seconds with modelled VO2 in the moderate, heavy, severe domain */
    double dom_ee_kj[3];   /* modelled energy in each */
    double dom_fixed_kj[3];/* fixed-efficiency energy in each */
} cpd_energy_session_result;

/* Costs a 1-Hz power record p_w[0..n-1] (rec[i] 0 for seconds not recorded: they are modelled at 0 W
 * and not counted): VO2 by cpd_vo2model_run, energy by Weir 1949 with VCO2 = RER x VO2 and the RER of
 * the modelled VO2's domain, CHO and fat by equation set eq with the RER limited to [0.70, 1.00] (all
 * carbohydrate above: the equations do not hold there), and the fixed-efficiency estimate work /
 * efficiency. draws Monte Carlo draws of the parameters (normal, seed) give the intervals.
 * Returns CPD_OK, CPD_EUSAGE (bad parameters, efficiency outside 0.05-0.5, draws < 20, n == 0),
 * CPD_ENOMEM. The caller frees out with cpd_energy_session_free. */
int cpd_energy_session(const cpd_energy_params *par, const double *p_w, const unsigned char *rec, size_t n, int eq,
                       double efficiency, size_t draws, uint64_t seed, cpd_energy_session_result *out);
void cpd_energy_session_free(cpd_energy_session_result *r);

#endif
