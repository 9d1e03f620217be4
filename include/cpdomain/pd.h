/* pd.h: the power-duration (speed-duration) models: critical power CP and W′ (critical speed CS
 * and D′) from time-to-exhaustion trials, with standard errors, quality flags, the choice of a best
 * model and predictions. Generic over modality: "intensity" is power (W) or speed (m/s) throughout. */
#ifndef CPDOMAIN_PD_H
#define CPDOMAIN_PD_H

#include "cpdomain/units.h"

#include <stddef.h>

#define CPD_PD_NMAX 256 /* most trials one fit accepts */

/* Thresholds behind the quality flags (see cpd_pd_flag_text for what each flag tells the user). */
#define CPD_PD_SHORT_S 120.0        /* s: shorter trials fall below the hyperbola's good range */
#define CPD_PD_LONG_S 900.0         /* s: longer trials fall above it (about 2-15 min, Drake et al. 2024 EJAP) */
#define CPD_PD_SEE_CP_MAX_PCT 5.0   /* %: SE(CP) acceptance limit, common practice (from memory) */
#define CPD_PD_SEE_W_MAX_PCT 10.0   /* %: SE(W′) acceptance limit, common practice (from memory) */
#define CPD_PD_SPREAD_MIN 2.0       /* longest / shortest duration below this: durations too close */
#define CPD_PD_CLOSE_FRAC 0.10      /* two durations within this fraction of the longer: too close */

typedef enum {
    CPD_PD_POWER = 0, /* intensity in W; CP in W, W′ in J, Pmax in W */
    CPD_PD_SPEED      /* intensity in m/s; CS in m/s, D′ in m, vmax in m/s */
} cpd_pd_modality;

/* The four models (names as in SPEC.md, returned by cpd_pd_model_name). */
typedef enum {
    CPD_PD_HYPERBOLIC = 0,  /* t = W′/(P − CP); least squares on t (Gaesser et al. 1995 MSSE 27:1430) */
    CPD_PD_LINEAR_TOTAL,    /* W = P·t = CP·t + W′; OLS of W on t (Moritani et al. 1981 Ergonomics 24:339) */
    CPD_PD_LINEAR_INVERSE,  /* P = W′·(1/t) + CP; OLS of P on 1/t (as in Triska et al. 2017 PLoS ONE) */
    CPD_PD_THREE_PARAMETER, /* t = W′/(P − CP) − W′/(Pmax − CP); least squares on t (Morton 1996 Ergonomics 39:611) */
    CPD_PD_NMODELS
} cpd_pd_model;

#define CPD_PD_MODEL_BIT(m) (1u << (m))
#define CPD_PD_ALL_MODELS 0xFu

/* The dependent variable a model's rss and r2 are computed in. Compare AICc only between models
 * with the same dependent variable (hyperbolic and three-parameter, both on duration). */
typedef enum {
    CPD_PD_Y_DURATION = 0, /* t, s (hyperbolic, three-parameter) */
    CPD_PD_Y_WORK,         /* P·t: work, J (or distance, m) (linear-total) */
    CPD_PD_Y_INTENSITY     /* P, W (or v, m/s) (linear-inverse) */
} cpd_pd_yvar;

/* Why a model has no result. */
typedef enum {
    CPD_PD_FAIL_NONE = 0,         /* fitted */
    CPD_PD_FAIL_NOT_REQUESTED,    /* not in the caller's model mask */
    CPD_PD_FAIL_TOO_FEW_TRIALS,   /* 2-parameter models need 2 trials, the three-parameter model 4 */
    CPD_PD_FAIL_SINGULAR,         /* all intensities equal, or all durations equal */
    CPD_PD_FAIL_NO_CONVERGENCE,   /* the iteration did not converge */
    CPD_PD_FAIL_P_MAX_DEGENERATE, /* three-parameter: Pmax runs to infinity (or below CP) */
    CPD_PD_FAIL_DIVERGED,         /* the optimum is at CP -> -infinity: durations do not fall with intensity */
    CPD_PD_NFAILS
} cpd_pd_fail;

/* Quality flags, one bit each; a model's flags and the fit's overall flags are ORs of these. */
enum {
    CPD_PD_FLAG_FEW_TRIALS = 1u << 0,            /* fewer than 3 trials */
    CPD_PD_FLAG_TWO_TRIALS_EXACT = 1u << 1,      /* as many trials as parameters: exact, no SE or CI */
    CPD_PD_FLAG_SHORT_TRIAL = 1u << 2,           /* a trial shorter than CPD_PD_SHORT_S */
    CPD_PD_FLAG_LONG_TRIAL = 1u << 3,            /* a trial longer than CPD_PD_LONG_S */
    CPD_PD_FLAG_DURATIONS_CLOSE = 1u << 4,       /* spread < CPD_PD_SPREAD_MIN or two within CPD_PD_CLOSE_FRAC */
    CPD_PD_FLAG_SEE_CP_HIGH = 1u << 5,           /* SE(CP) > CPD_PD_SEE_CP_MAX_PCT % of CP */
    CPD_PD_FLAG_SEE_W_PRIME_HIGH = 1u << 6,      /* SE(W′) > CPD_PD_SEE_W_MAX_PCT % of W′ */
    CPD_PD_FLAG_P_MAX_UNIDENTIFIABLE = 1u << 7,  /* three-parameter Pmax cannot be trusted */
    CPD_PD_FLAG_NEGATIVE_PARAMETER = 1u << 8,    /* CP or W′ zero or negative */
    CPD_PD_FLAG_IMPLAUSIBLE_PARAMETER = 1u << 9, /* a positive parameter outside cpd_pd_ranges */
    CPD_PD_FLAG_TRIAL_AT_OR_BELOW_CP = 1u << 10, /* a trial's intensity is at or below the fitted CP */
    CPD_PD_FLAG_FIT_FAILED = 1u << 11,           /* the model has no result; its fail code says why */
    CPD_PD_FLAG_MODELS_IDENTICAL = 1u << 12,     /* two trials: every 2-parameter model is the same line */
    CPD_PD_FLAG_NO_VALID_MODEL = 1u << 13,       /* no model qualifies as best */
    CPD_PD_NFLAGS = 14
};

/* One model fitted to one set of trials. Units follow the modality: "W" reads m/s and "J" reads m
 * for speed. Quantities that cannot be computed have their validity flag 0 and hold 0. */
typedef struct {
    cpd_pd_model model;         /* which model */
    cpd_pd_modality modality;   /* power or speed */
    int ok;                     /* 1 when fitted; then fail == CPD_PD_FAIL_NONE */
    cpd_pd_fail fail;           /* why there is no result, when ok == 0 */
    int engine_status;          /* CPD_* code from linfit/nlfit behind a failure; CPD_OK otherwise */
    size_t n;                   /* trials */
    size_t k;                   /* parameters: 2, or 3 for the three-parameter model */
    size_t dof;                 /* degrees of freedom n - k */
    size_t iter;                /* nonlinear iterations (0 for the linear models) */
    double cp;                  /* CP, W (CS, m/s) */
    double w_prime;             /* W′, J (D′, m) */
    int has_p_max;              /* 1 for a fitted three-parameter model */
    double p_max;               /* Pmax, W (vmax, m/s) */
    double t_offset_s;          /* three-parameter time offset W′/(Pmax − CP), s; 0 for 2-parameter models */
    int has_se;                 /* 1 when dof > 0 and the covariance exists: SEs, CIs and cov are valid */
    double cp_se;               /* standard error of CP, W */
    double w_prime_se;          /* standard error of W′, J */
    double p_max_se;            /* standard error of Pmax (delta method), W */
    double cp_ci95[2];          /* 95 % CI, t distribution with dof degrees of freedom, W */
    double w_prime_ci95[2];     /* 95 % CI, J */
    double p_max_ci95[2];       /* 95 % CI, W */
    double cov[9];              /* covariance of (cp, w_prime, p_max), row-major 3 x 3; 2 x 2 corner for k = 2 */
    int see_valid;              /* 1 when has_se and both estimates are nonzero */
    double see_cp_pct;          /* 100 SE(CP) / |CP|, % */
    double see_w_prime_pct;     /* 100 SE(W′) / |W′|, % */
    cpd_pd_yvar rss_var;        /* the dependent variable of rss and r2 */
    double rss;                 /* residual sum of squares in rss_var: s^2, J^2 (m^2) or W^2 ((m/s)^2) */
    double r2;                  /* 1 - rss / centred sum of squares of rss_var */
    int aic_valid;              /* 1 when rss > 0 */
    double aic;                 /* n ln(rss / n) + 2k */
    int aicc_valid;             /* 1 when rss > 0 and n - k - 1 > 0 */
    double aicc;                /* aic + 2k(k + 1)/(n - k - 1) */
    double resid_s[CPD_PD_NMAX];               /* observed - predicted duration, s */
    double resid_pct[CPD_PD_NMAX];             /* the same as % of the observed duration, % */
    unsigned char resid_valid[CPD_PD_NMAX];    /* 0 when the model predicts no finite positive duration */
    int has_loo;                               /* 1 when leave-one-out was computed: n >= 3, and n >= 5 for 3-p */
    double loo_d_cp[CPD_PD_NMAX];              /* CP without trial i minus CP with all trials, W */
    double loo_d_w_prime[CPD_PD_NMAX];         /* W′ without trial i minus W′ with all trials, J */
    unsigned char loo_valid[CPD_PD_NMAX];      /* 0 when the refit without trial i failed */
    unsigned flags;                            /* CPD_PD_FLAG_* bits about this model */
} cpd_pd_model_fit;

/* All requested models fitted to one set of trials, and the best of them. */
typedef struct {
    cpd_pd_modality modality;                 /* power or speed */
    size_t n;                                 /* trials */
    cpd_pd_model_fit models[CPD_PD_NMODELS];  /* indexed by cpd_pd_model */
    int has_best;                             /* 1 when a model qualifies as best */
    cpd_pd_model best;                        /* the best model (cpd_pd_best_rule), when has_best */
    unsigned data_flags;                      /* flags from the trials alone (count, durations) */
    unsigned flags;                           /* data_flags | flags of the best model | MODELS_IDENTICAL |
                                                 NO_VALID_MODEL: the fit as a whole */
} cpd_pd_result;

typedef struct {
    unsigned models; /* CPD_PD_MODEL_BIT mask of models to fit; default CPD_PD_ALL_MODELS */
    int loo;         /* nonzero: compute leave-one-out influence; default 1 */
} cpd_pd_opts;

typedef struct cpd_pd_ws cpd_pd_ws;

/* Fills o with the defaults above. */
void cpd_pd_opts_init(cpd_pd_opts *o);

/* Allocates a workspace holding the nonlinear and linear engines' scratch and all per-trial
 * scratch. Fits of a trial count the workspace has met before allocate nothing. Returns NULL when
 * out of memory. The caller frees it with cpd_pd_free, which accepts NULL. */
cpd_pd_ws *cpd_pd_alloc(void);
void cpd_pd_free(cpd_pd_ws *w);

/* Fits the models in opts (NULL: defaults) to n trials: intensity[i] (W or m/s) held to
 * exhaustion for duration_s[i]. Nonlinear fits converge to a relative change of about 1e-14
 * (nlfit's defaults; leave-one-out refits to 1e-10) from starts given by the linear fits; the
 * three-parameter fit starts from the hyperbolic answer. Returns CPD_OK whenever the input is
 * valid, even when models fail (each says why); CPD_ENODATA for n < 2 (res then says so: every
 * model TOO_FEW_TRIALS, NO_VALID_MODEL); CPD_EUSAGE for NULL pointers, a bad modality or mask,
 * n > CPD_PD_NMAX; CPD_EDATA for an intensity or duration that is not a positive finite number;
 * CPD_ENOMEM when the engine's scratch for a new trial count cannot be had. On an error msg (CPD_MSG_MAX bytes, may be NULL) receives a sentence naming the trial. */
int cpd_pd_fit(cpd_pd_ws *w, cpd_pd_modality modality, const double *intensity, const double *duration_s,
               size_t n, const cpd_pd_opts *opts, cpd_pd_result *res, char *msg);

/* cpd_pd_fit with the default options but only the models in the mask models (CPD_PD_MODEL_BIT),
 * on a workspace of its own: for a caller that fits once. CPD_ENOMEM when the workspace cannot be
 * had; otherwise as cpd_pd_fit. */
int cpd_pd_fit_models(cpd_pd_modality modality, const double *intensity, const double *duration_s, size_t n,
                      unsigned models, cpd_pd_result *res, char *msg);

/* The rule cpd_pd_fit uses to name the best model, as plain text for the CLI and README. */
const char *cpd_pd_best_rule(void);

/* The SPEC name of model m ("hyperbolic", "linear-total", "linear-inverse", "three-parameter");
 * "unknown" for an invalid m. */
const char *cpd_pd_model_name(cpd_pd_model m);

/* Reads a SPEC model name into *m. Returns CPD_OK or CPD_EUSAGE for an unknown name. */
int cpd_pd_model_parse(const char *name, cpd_pd_model *m);

/* A plain-English sentence for failure reason f; never NULL. */
const char *cpd_pd_fail_text(cpd_pd_fail f);

/* The stable snake_case JSON key of the single flag bit `flag` in the modality's vocabulary
 * ("see_cp_high" for power, "see_cs_high" for speed); NULL when flag is not a single known bit. */
const char *cpd_pd_flag_name(unsigned flag, cpd_pd_modality modality);

/* A plain-English sentence for the single flag bit `flag`: what it means and what to do.
 * NULL when flag is not a single known bit. */
const char *cpd_pd_flag_text(unsigned flag, cpd_pd_modality modality);

/* The plausibility ranges behind CPD_PD_FLAG_IMPLAUSIBLE_PARAMETER, generous on purpose
 * (common practice, from memory): power CP 30-700 W, W′ 1-80 kJ, Pmax up to 3000 W; speed CS
 * 0.3-12 m/s, D′ 5-1500 m, vmax up to 15 m/s (the ceilings are CPD_RANGE_POWER / CPD_RANGE_SPEED). */
void cpd_pd_ranges(cpd_pd_modality modality, cpd_range *cp, cpd_range *w_prime, cpd_range *p_max);

/* What a prediction found. */
typedef enum {
    CPD_PD_PRED_OK = 0,             /* value holds the prediction */
    CPD_PD_PRED_NO_FIT,             /* the model has no result */
    CPD_PD_PRED_INVALID_MODEL,      /* the model's CP or W′ is not positive */
    CPD_PD_PRED_NOT_W_PRIME_LIMITED, /* intensity at or below CP: no W′-limited failure is predicted */
    CPD_PD_PRED_ABOVE_P_MAX,        /* three-parameter: intensity at or above Pmax, no positive duration */
    CPD_PD_PRED_WITHIN_D_PRIME,     /* distance at or below D′: the 2-parameter model has no finite time */
    CPD_PD_NPREDS
} cpd_pd_pred_status;

typedef struct {
    cpd_pd_pred_status status; /* what was found */
    int valid;                 /* 1 when value holds a prediction (status == CPD_PD_PRED_OK) */
    double value;              /* s for a duration, W (m/s) for an intensity */
    int ci_valid;              /* 1 when ci95 holds a 95 % interval (the model has standard errors) */
    double ci95[2];            /* 95 % interval, same unit as value */
} cpd_pd_pred;

/* A plain-English sentence for prediction status s; never NULL. */
const char *cpd_pd_pred_text(cpd_pd_pred_status s);

/* Time to task failure at a constant intensity (W or m/s): t = W′/(P − CP), three-parameter
 * t = W′/(P − CP) − W′/(Pmax − CP). The 95 % interval propagates the covariance by the delta method
 * on ln t (so it stays positive and is skewed like t), t quantile with the fit's dof. Returns
 * CPD_OK (also at or below CP, within 1e-9 of CP counting as at: status NOT_W_PRIME_LIMITED,
 * valid 0; and at or above a 3-p Pmax: status ABOVE_P_MAX), CPD_EUSAGE for a NULL
 * pointer or an intensity that is not positive and finite, CPD_ENODATA when the model has no
 * valid result (status NO_FIT or INVALID_MODEL). */
int cpd_pd_predict_time(const cpd_pd_model_fit *m, double intensity, cpd_pd_pred *out);

/* Intensity (W or m/s) that can be held for duration_s: P = CP + W′/t, three-parameter
 * P = CP + W′/(t + W′/(Pmax − CP)). The 95 % interval is the delta method on P (exact for the
 * 2-parameter models, whose P is linear in CP and W′). Return codes as cpd_pd_predict_time. */
int cpd_pd_predict_intensity(const cpd_pd_model_fit *m, double duration_s, cpd_pd_pred *out);

/* Speed models only: time to cover distance_m at the best sustainable speed, from D = CS·t + D′,
 * t = (D − D′)/CS (three-parameter: the positive root of D = CS·t + D′·t/(t + D′/(vmax − CS))),
 * with a delta-method interval on ln t. D at or below D′ gives status WITHIN_D_PRIME, valid 0.
 * Return codes as cpd_pd_predict_time, plus CPD_EUSAGE for a power model. */
int cpd_pd_predict_distance_time(const cpd_pd_model_fit *m, double distance_m, cpd_pd_pred *out);

/* Near CP: *inside = 1 when the intensity lies inside CP's 95 % interval, where the data cannot tell
 * the heavy domain (no W'-limited failure) from the severe one; there the time to task failure has
 * no upper bound and *t_lo receives a lower bound, W'/(intensity - CP_lo) (minus the
 * three-parameter offset), s; 0 when the intensity is at CP_lo (no bound). The delta-method
 * interval of cpd_pd_predict_time is meaningless there (it spans minutes to days). *inside = 0
 * outside the interval or without standard errors. Returns CPD_OK, or CPD_EUSAGE for NULL
 * pointers or an intensity that is not positive and finite. */
int cpd_pd_time_near_cp(const cpd_pd_model_fit *m, double intensity, int *inside, double *t_lo);

/* Time trials (distance fixed, time measured): the best model becomes the linear distance-time
 * model D = CS·t + D′ (linear-total on speed: D = v·t), the published model for such data
 * (swimming: Wakayoshi et al. 1992, from memory; the slope of the distance-time regression,
 * Takahashi, Wakayoshi et al. 2002 Jpn J Biomech Sports Exerc 6:110; running: Smyth &
 * Muniz-Pumares 2020 Med Sci Sports Exerc 52:2637). The other models regress on the mean speed
 * D/t, which carries the timing error of t itself: the hyperbola's least squares on t then has its
 * error on both sides and its interval is too narrow (on the demo swimmer it excluded the generating
 * CS). Applies when that model qualifies (see cpd_pd_best_rule) and has standard errors. Returns
 * CPD_OK, CPD_EUSAGE for NULL or a power fit, CPD_ENODATA when the model does not qualify (the
 * best stays as it was). */
int cpd_pd_best_for_time_trials(cpd_pd_result *res);

#endif
