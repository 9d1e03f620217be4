/* kinetics.h: VO2 on-kinetics of constant-power bouts: breath cleaning, onset alignment, ensemble
 * averaging, mono- and bi-exponential fits (through nlfit.h) with confidence intervals that count
 * independent breaths, not interpolated points, and the intensity domain judged from the response. */
#ifndef CPDOMAIN_KINETICS_H
#define CPDOMAIN_KINETICS_H

#include <stddef.h>

#include "cpdomain/gx.h"
#include "cpdomain/status.h"

/* Parameters of the kinetics models, in this order in every parameter vector:
 * VO2(t) = base + A1 (1 - e^(-(t - TD1)/tau1)) u(t - TD1) + A2 (1 - e^(-(t - TD2)/tau2)) u(t - TD2),
 * t in s after the onset, u the unit step. The mono-exponential model is the first four. */
enum {
    CPD_KIN_BASE, /* baseline VO2, mL/min */
    CPD_KIN_A1,   /* primary amplitude, mL/min */
    CPD_KIN_TD1,  /* primary delay, s */
    CPD_KIN_TAU1, /* primary time constant, s */
    CPD_KIN_A2,   /* slow-component amplitude (asymptotic), mL/min */
    CPD_KIN_TD2,  /* slow-component delay, s */
    CPD_KIN_TAU2, /* slow-component time constant, s */
    CPD_KIN_NPAR
};
#define CPD_KIN_BIT(k) (1u << (k))

/* Models. */
enum {
    CPD_KIN_MONO = 1, /* base, A1, TD1, tau1 */
    CPD_KIN_BI = 2    /* all seven (Barstow & Mole 1991 J Appl Physiol 71:2099, independent delays) */
};

/* Intensity domains as judged from the response (Hill, Poole & Smith 2002 Med Sci Sports Exerc
 * 34:709). */
enum {
    CPD_KIN_UNDETERMINED = 0, /* the response does not decide it (bout too short) */
    CPD_KIN_MODERATE,         /* no slow component, steady by 3 min */
    CPD_KIN_HEAVY,            /* a slow component that slows towards a steady state below VO2peak */
    CPD_KIN_SEVERE,           /* VO2 still rising at the end, or at >= 95 % of VO2peak */
    CPD_KIN_NDOMAIN
};

/* Why something could not be computed (reason codes beside the status codes of status.h). */
enum {
    CPD_KIN_R_NONE = 0,
    CPD_KIN_R_BAD_ARG,        /* an argument or option out of range (CPD_EUSAGE) */
    CPD_KIN_R_BAD_SAMPLE,     /* a time or VO2 not finite, VO2 <= 0, or time running backwards (CPD_EDATA) */
    CPD_KIN_R_ONSET_OUTSIDE,  /* the onset is not inside the recorded data (CPD_EDATA) */
    CPD_KIN_R_END_OUTSIDE,    /* the end of exercise is not after the onset or lies beyond the data (CPD_EDATA) */
    CPD_KIN_R_NO_BASELINE,    /* fewer than 3 breaths in the pre-onset baseline window (CPD_ENODATA) */
    CPD_KIN_R_TOO_SHORT,      /* the bout is too short for the requested model or measure (CPD_ENODATA) */
    CPD_KIN_R_TOO_FEW_POINTS, /* too few observations in the fit window for the free parameters (CPD_ENODATA) */
    CPD_KIN_R_NO_CONVERGENCE, /* the fit did not converge (CPD_ENOCONV) */
    CPD_KIN_R_START_OUTSIDE,  /* the start values lie outside the model's domain, e.g. tau <= 0 (CPD_ENODATA) */
    CPD_KIN_R_SINGULAR,       /* converged, but the parameters are not identifiable: no SEs (CPD_ENODATA) */
    CPD_KIN_R_NO_RESPONSE,    /* primary amplitude within its 95 % CI of 0 or below one breath SD (CPD_ENODATA) */
    CPD_KIN_R_NOMEM,          /* out of memory (CPD_ENOMEM) */
    CPD_KIN_R_NREASON
};

/* How the primary component is taken when a slow component is supported. */
enum {
    CPD_KIN_PRIMARY_AUTO = 0, /* the bi-exponential's primary (Bell et al. 2001 Exp Physiol 86:667: whole bout) */
    CPD_KIN_PRIMARY_MONO_END, /* a mono-exponential from phase I to primary_end_s (default 180 s) */
    CPD_KIN_PRIMARY_WINDOW    /* the windowed mono-exponential (cpd_kinetics_window) */
};

/* Which rule decided the domain (see cpd_kinetics_analyse). */
enum {
    CPD_KIN_RULE_NONE = 0,
    CPD_KIN_RULE_TOO_SHORT,  /* undetermined: shorter than CPD_KIN_SC_MIN_S and below the VO2peak rule */
    CPD_KIN_RULE_PEAK,       /* severe: end VO2 >= peak_fraction of the given VO2peak */
    CPD_KIN_RULE_RISING,     /* severe: final-2-min slope above rising_slope_ml_min_per_min */
    CPD_KIN_RULE_SLOW,       /* heavy: slow component supported by the F-test */
    CPD_KIN_RULE_DELTA,      /* heavy: delta VO2(6-3) at or above steady_delta_ml_min */
    CPD_KIN_RULE_STEADY      /* moderate: none of the above */
};

#define CPD_KIN_MIN_BOUT_S 120.0 /* shortest bout analysed at all: 4 tau of a typical 30-s primary */
#define CPD_KIN_SC_MIN_S 300.0   /* shortest bout in which a slow component is tested */
#define CPD_KIN_WIN_MAX 64       /* most window ends cpd_kinetics_window steps through */
#define CPD_KIN_END_TOL_S 5.0    /* a bout ending this close before a mark (6:00, 300 s ...) reaches it: the
                                  * last breath of a 6-min bout falls a breath or two before 6:00 */

/* One model fit. Every number is finite; quantities that do not apply are 0 with their flag 0. */
typedef struct {
    int valid;                      /* 1: the fit converged and the fields below hold */
    int reason;                     /* CPD_KIN_R_* when valid == 0 */
    int model;                      /* CPD_KIN_MONO or CPD_KIN_BI */
    unsigned fixed;                 /* CPD_KIN_BIT(k) for each parameter held fixed */
    double b[CPD_KIN_NPAR];         /* estimates, units as the parameter enum; unused parameters 0 */
    int has_se;                     /* 1 when the standard errors and CIs below are available */
    double se[CPD_KIN_NPAR];        /* standard errors, same units; 0 for fixed parameters */
    double ci95_lo[CPD_KIN_NPAR];   /* 95 % CI, b - t(0.975, dof) se; = b for fixed parameters */
    double ci95_hi[CPD_KIN_NPAR];   /* 95 % CI upper bound */
    double cov[CPD_KIN_NPAR * CPD_KIN_NPAR]; /* covariance, row-major 7 x 7 by parameter index; 0 rows for fixed */
    double from_s, to_s;            /* fit window after the onset, s */
    size_t n;                       /* points fitted (breaths, 1-s points or bins) */
    size_t p;                       /* free parameters */
    size_t n_eff;                   /* independent observations (breaths) behind the fit */
    size_t dof;                     /* n_eff - p: degrees of freedom of the t and F quantiles */
    double rss;                     /* residual sum of squares over the fitted points, (mL/min)^2 */
    double rss_eff;                 /* the same over the independent observations, (mL/min)^2 */
    double resid_sd_ml_min;         /* sqrt(rss_eff / dof), mL/min */
    double resid_mean_ml_min;       /* mean residual (observed - model) of the observations, mL/min */
    double resid_max_abs_ml_min;    /* largest absolute residual, mL/min */
    size_t runs, n_pos, n_neg;      /* Wald-Wolfowitz runs test: runs of residual signs, counts of signs */
    int runs_valid;                 /* 1 when n_pos >= 10 and n_neg >= 10 (normal approximation) */
    double runs_z;                  /* (runs - expected) / sd; negative: too few runs (systematic misfit) */
    double runs_p;                  /* two-sided p value */
    int chi2_valid;                 /* 1 when a noise SD was given */
    double chi2_red;                /* rss_eff / (dof noise_sd^2), dimensionless */
    int aicc_valid;                 /* 1 when rss_eff > 0 and n_eff > p + 2 */
    double aicc;                    /* Akaike criterion with small-sample correction, K = p + 1 */
    size_t iter;                    /* iterations used */
} cpd_kinetics_fitres;

/* What to fit. Initialise with cpd_kinetics_spec_init, then set the start and the window. */
typedef struct {
    int model;                      /* CPD_KIN_MONO or CPD_KIN_BI */
    double b0[CPD_KIN_NPAR];        /* start values; a fixed parameter is held at its b0 */
    unsigned fixed;                 /* CPD_KIN_BIT(k): parameter k held at b0[k] */
    double from_s, to_s;            /* fit window: points with from_s <= t <= to_s, s */
    const double *raw_t_s;          /* optional: the independent observations behind averaged points, s */
    const double *raw_vo2_ml_min;   /* their VO2, mL/min (NULL with raw_n = 0 when the points are breaths) */
    size_t raw_n;                   /* count of raw observations */
    double noise_sd_ml_min;         /* breath noise SD for the reduced chi-square, mL/min; 0: unknown */
} cpd_kinetics_spec;

/* Extra-sum-of-squares F-test and AICc between a model and a larger one on the same window. */
typedef struct {
    int valid;            /* 1 when the test could be made */
    double f;             /* F statistic, dimensionless (0 when the larger model fits no better) */
    size_t df1, df2;      /* p_full - p_simple and n_eff - p_full */
    double p_value;       /* upper tail of F(df1, df2) */
    int aicc_valid;       /* 1 when both AICc values are valid */
    double delta_aicc;    /* AICc(full) - AICc(simple); negative favours the full model */
} cpd_kinetics_cmp;

/* Windowed primary fit: tau for window ends stepped forward (see cpd_kinetics_window). */
typedef struct {
    int valid;                          /* 1 when at least the first window was fitted */
    int reason;                         /* CPD_KIN_R_* when valid == 0 */
    size_t n;                           /* windows fitted (leading unfittable ends skipped) */
    double end_s[CPD_KIN_WIN_MAX];      /* window ends, s after onset */
    double tau_s[CPD_KIN_WIN_MAX];      /* tau1 of each window, s */
    double half_s[CPD_KIN_WIN_MAX];     /* 95 % CI half-width of tau1, s */
    size_t chosen;                      /* index of the accepted window */
    int stopped;                        /* 1: tau rose beyond the plateau after 'chosen'; 0: stable throughout */
    cpd_kinetics_fitres fit;            /* the fit at the accepted window end */
} cpd_kinetics_window_res;

/* One recorded transition: a gas-exchange series (VO2 channel required) and its onset. */
typedef struct {
    const cpd_gx_series *gx; /* breath-by-breath (or per-second) record, file time */
    double onset_s;          /* file time of the power step, s */
} cpd_kinetics_input;

/* Rules and thresholds of cpd_kinetics_analyse (all defaults in cpd_kinetics_opts):
 * - Cleaning: a breath more than 4 SDs from the mean of its 5 + 5 neighbours is removed (Lamarra
 *   et al. 1987 J Appl Physiol 62:2003 is the usual citation; 4 SD is convention, some labs use 3).
 * - Baseline: mean of the breaths in the 60 s before the onset, at least 3 breaths, else "no
 *   baseline data". It is not fitted: after phase I with a free delay, base + A1 (1 - e^(-(t-TD)/tau))
 *   = (base + A1) - A1 e^(TD/tau) e^(-t/tau), so base, A1 and TD cannot all be told apart.
 * - Phase I: the first 20 s are excluded from every fit (Bell et al. 2001 fitted from 20 s).
 * - Fits: mono-exponential phase I to end; mono-exponential phase I to 180 s; bi-exponential with
 *   independent delays over the whole bout (Barstow & Mole 1991) when it lasts 300 s; the windowed
 *   fit (cpd_kinetics_window). Bout marks allow CPD_KIN_END_TOL_S for the last breath.
 * - CIs count breaths: one bout is fitted on its cleaned breaths; an ensemble or bins use the
 *   breath-noise variance and n_eff = breaths (cpd_kinetics_fit). t quantile with n_eff - p dof.
 * - Slow component supported: extra-sum-of-squares F (mono vs bi, breaths) p < 0.01, TD2 > TD1, and
 *   A2' > t(0.975) SE(A2'). Level 0.01, not 0.05: TD2 and tau2 are undefined when A2 = 0, so the
 *   nominal F level is optimistic; on synthetic moderate bouts 0.05 gave 4 % false slow components.
 * - Primary: the whole-bout mono-exponential without a slow component; with one, the
 *   bi-exponential's (or, by option, the mono to 180 s or the windowed one).
 * - No response: |A1| within t(0.975) SE of 0 or below the baseline breath SD -> CPD_ENODATA.
 * - Domain, first rule that holds (Hill, Poole & Smith 2002; Poole et al. as summarised there):
 *   end VO2 (last 30 s) >= 95 % of a given VO2peak -> severe; bout < 300 s -> undetermined; OLS
 *   slope of the breaths in the final 120 s > 80 mL/min per min -> severe (still rising); slow
 *   component, or delta VO2(6-3) >= 100 mL/min -> heavy; else moderate (steady by 3 min). The 100
 *   mL/min is from memory (~50-100 is used for "steady"); the 80 is chosen, not published [Calc]:
 *   a heavy-domain slow component that levels off (A2 <= 500 mL/min, tau2 <= 150 s) rises by < 50 mL/min per min
 *   in the 5th-6th min, one heading for VO2max by > ~100. Without VO2peak a severe bout that already
 *   sits at VO2max (flat end) cannot be told from a heavy one. */

/* Analysis options. cpd_kinetics_opts_init fills the defaults named here. */
typedef struct {
    double outlier_sd;          /* breath outlier threshold in local SDs, default 4 (Lamarra et al. 1987) */
    size_t outlier_half;        /* neighbours each side for the local mean and SD, default 5 breaths */
    double phase1_s;            /* phase I excluded from every fit, s, default 20 */
    double baseline_s;          /* pre-onset window whose mean is the baseline, s, default 60 */
    double baseline_ml_min;     /* > 0: use this baseline VO2 instead of pre-onset data, mL/min; default 0 */
    double end_s;               /* end of exercise after onset, s; 0 (default): the end of the data */
    double bin_s;               /* 0 (default): no bins; else bin width for averaging the 1-s series, s */
    int primary;                /* CPD_KIN_PRIMARY_*, default AUTO */
    double primary_end_s;       /* window end of the mono-exponential primary when a slow component is supported, default 180 s */
    double window_first_s;      /* first window end of the windowed fit, default 60 s */
    double window_step_s;       /* its step, default 10 s */
    double sc_alpha;            /* F-test level for the slow component, default 0.01 (see cpd_kinetics_analyse) */
    double power_w;             /* bout power, W; 0: unknown (no gain) */
    double baseline_power_w;    /* power before the onset, W, default 0 (rest or unloaded pedalling) */
    double vo2peak_ml_min;      /* the athlete's VO2peak, mL/min; 0: unknown */
    double steady_delta_ml_min; /* delta VO2(6-3) below this is steady, mL/min, default 100 */
    double rising_slope_ml_min_per_min; /* final-2-min slope above this is "still rising", mL/min per min, default 80 */
    double peak_fraction;       /* end VO2 at or above this fraction of VO2peak is severe, default 0.95 */
} cpd_kinetics_opts;

/* Cleaned, aligned and averaged data (cpd_kinetics_prepare). Arrays belong to the workspace and
 * stay valid until its next use. */
typedef struct {
    size_t n_repeats;            /* transitions */
    size_t n_breaths;            /* cleaned breaths kept up to end_s (baseline included), all repeats */
    size_t n_outliers;           /* breaths removed as outliers */
    int baseline_given;          /* 1 when opts.baseline_ml_min supplied the baseline */
    size_t n_baseline;           /* breaths in the baseline window, all repeats */
    double baseline_ml_min;      /* baseline VO2, mL/min */
    double baseline_sd_ml_min;   /* SD of the baseline breaths, mL/min; 0 when given */
    double end_s;                /* end of exercise after onset, s */
    int fit_on_breaths;          /* 1: the fit points are the breaths themselves */
    size_t n;                    /* fit points: breaths, 1-s ensemble average or bins */
    const double *t_s;           /* their times after onset, s */
    const double *vo2_ml_min;    /* their VO2, mL/min */
    size_t n_raw;                /* cleaned breaths of all repeats up to end_s, repeat after repeat */
    const double *raw_t_s;       /* aligned times, s */
    const double *raw_vo2_ml_min;/* VO2, mL/min */
    size_t n_grid;               /* 1-s ensemble average on t = 0, 1, ..., floor(end_s) */
    const double *grid_t_s;      /* s */
    const double *grid_vo2_ml_min; /* mL/min */
    int reason;                  /* CPD_KIN_R_* on failure */
    char msg[CPD_MSG_MAX];       /* detail on failure */
} cpd_kinetics_data;

/* The kinetics analysis of one bout or of an ensemble of repeats: the SPEC's `bout show` and more. */
typedef struct {
    int reason;                    /* CPD_KIN_R_* on failure, else CPD_KIN_R_NONE */
    char msg[CPD_MSG_MAX];         /* detail on failure */
    int domain;                    /* CPD_KIN_MODERATE .. SEVERE or UNDETERMINED */
    int domain_rule;               /* CPD_KIN_RULE_* that decided it */
    size_t n_repeats, n_breaths, n_outliers, n_baseline; /* as in cpd_kinetics_data */
    double baseline_ml_min;        /* baseline VO2, mL/min */
    double baseline_sd_ml_min;     /* SD of the baseline breaths, mL/min */
    double end_s;                  /* exercise duration analysed, s */
    cpd_kinetics_fitres mono;      /* mono-exponential, phase I to end_s */
    cpd_kinetics_fitres mono_end;  /* mono-exponential, phase I to min(primary_end_s, end_s) */
    cpd_kinetics_fitres bi;        /* bi-exponential, phase I to end_s (valid 0 below CPD_KIN_SC_MIN_S) */
    cpd_kinetics_window_res window;/* windowed primary fit */
    int sc_tested;                 /* 1 when the bi-exponential converged and was tested */
    cpd_kinetics_cmp sc_test;      /* mono vs bi over the whole bout */
    int sc_supported;              /* 1: the slow component is supported (rule in cpd_kinetics_analyse) */
    struct {
        const char *fit;           /* which fit above it comes from: "mono", "mono_end", "bi" or "window" (static) */
        double amplitude_ml_min;   /* A1, mL/min */
        double tau_s;              /* tau1, s */
        double tau_se_s;           /* its standard error, s */
        double tau_ci95_s[2];      /* 95 % CI, s */
        double delay_s;            /* TD1, s */
        double mrt_s;              /* TD1 + tau1, s */
        int gain_valid;            /* 1 when power_w > baseline_power_w */
        double gain_ml_min_w;      /* A1 / (power - baseline power), mL/min/W */
        double o2_deficit_ml;      /* A1 * MRT / 60, mL */
    } primary;
    struct {
        int present;               /* 1 when sc_supported */
        double amplitude_ml_min;   /* A2' = A2 (1 - e^(-(end - TD2)/tau2)): reached at the end, mL/min */
        double amplitude_se_ml_min; /* its standard error (delta method), mL/min */
        double asymptote_ml_min;   /* A2, mL/min */
        double delay_s;            /* TD2, s */
        double tau_s;              /* tau2, s */
    } slow;
    double end_vo2_ml_min;         /* mean VO2 of the last 30 s (1-s series), mL/min */
    int end_pct_valid;             /* 1 when vo2peak_ml_min was given */
    double end_pct_vo2peak;        /* end VO2 as % of VO2peak */
    double end_minus_primary_ml_min; /* end VO2 - (base + A1), mL/min (Fawkner & Armstrong 2004) */
    int end_minus_primary_pct_valid; /* 1 when end VO2 > baseline */
    double end_minus_primary_pct;  /* as % of end VO2 - baseline */
    int delta_valid;               /* 1 when end_s >= 360 s - CPD_KIN_END_TOL_S */
    double delta_6_3_ml_min;       /* 30-s mean ending at 6:00 minus that ending at 3:00, mL/min */
    int slope_valid;               /* 1 when end_s >= 240 s */
    double end_slope_ml_min_per_min;  /* OLS slope of the breaths in the final 120 s, mL/min per min */
    double end_slope_ci95[2];      /* its 95 % CI, mL/min per min */
} cpd_kinetics_result;

/* Domain check of a bout against the athlete's boundaries (cpd_kinetics_verify_domain). */
typedef struct {
    int predicted;            /* the domain the boundaries give, or CPD_KIN_UNDETERMINED when they allow two */
    unsigned predicted_mask;  /* bit (1u << domain) for each domain the boundaries allow */
    int agreement;            /* 1 agrees, 0 disagrees, -1 unknown (the response was undetermined) */
    char message[CPD_MSG_MAX];/* plain English, e.g. "bout at 5.0 % below CP did not stabilise: ..." */
} cpd_kinetics_check;

typedef struct cpd_kinetics_ws cpd_kinetics_ws;

/* Allocates a reusable workspace (scratch arrays grow as needed); NULL when out of memory.
 * The caller frees it with cpd_kinetics_free, which accepts NULL. */
cpd_kinetics_ws *cpd_kinetics_alloc(void);
void cpd_kinetics_free(cpd_kinetics_ws *w);

/* Fills s for model (CPD_KIN_MONO or CPD_KIN_BI): no fixed parameters, window [0, 1e9] s, starts
 * zero, no raw observations, unknown noise. */
void cpd_kinetics_spec_init(cpd_kinetics_spec *s, int model);

/* VO2 of the model at t_s seconds after onset (parameters b as in the parameter enum), mL/min.
 * The bi-exponential form with independent delays is Barstow & Mole 1991 J Appl Physiol 71:2099. */
double cpd_kinetics_eval(int model, const double *b, double t_s);

/* Fits the model to the points (t_s[i], vo2[i]) inside the window by nonlinear least squares
 * (cpd_nlfit_solve, analytic Jacobian), holding fixed parameters. Covariance: with no raw data
 * the points are independent breaths, s^2 (J'J)^-1 (Bates & Watts 1988, Wiley). With raw data the
 * points are averages (ensemble, bins): the noise variance comes from the raw breaths' residuals
 * and (J'J)^-1 is scaled by n / n_eff, n_eff = raw breaths in the window.
 * Returns CPD_OK, CPD_EUSAGE (out->reason BAD_ARG), CPD_ENODATA (TOO_FEW_POINTS, START_OUTSIDE),
 * CPD_ENOCONV (NO_CONVERGENCE, also when tau runs off to 100 spans of the data: a straight line),
 * CPD_ENOMEM. On failure out->valid is 0 and no estimate is kept. */
int cpd_kinetics_fit(cpd_kinetics_ws *w, const double *t_s, const double *vo2_ml_min, size_t n,
                     const cpd_kinetics_spec *spec, cpd_kinetics_fitres *out);

/* Compares a fit with a larger nested one on the same window and observations: extra-sum-of-
 * squares F on rss_eff with df2 = n_eff - p_full (Bates & Watts 1988), and delta AICc (Hurvich &
 * Tsai 1989 Biometrika 76:297, from memory). Returns CPD_OK, or CPD_EUSAGE when the fits are invalid, differ in
 * window or observations, or the second is not larger. */
int cpd_kinetics_compare(const cpd_kinetics_fitres *simple, const cpd_kinetics_fitres *full, cpd_kinetics_cmp *out);

/* Windowed primary fit (Paterson & Whipp 1991 J Physiol 443:575; iterative window after Rossiter
 * et al. 2001, from memory): mono-exponential fits from spec->from_s to window ends first_end_s,
 * first_end_s + step_s, ... up to the last point (at most CPD_KIN_WIN_MAX ends). Accepted window:
 * the last before the first end whose tau exceeds the plateau (inverse-variance mean of the tau
 * accepted so far) by more than both its own 95 % CI half-width and 10 % of the plateau, or
 * whose fit fails. Leading window ends that cannot be fitted are skipped. Returns CPD_OK,
 * CPD_EUSAGE, CPD_ENODATA (TOO_SHORT), or the first failure's status when no window fits. */
int cpd_kinetics_window(cpd_kinetics_ws *w, const double *t_s, const double *vo2_ml_min, size_t n,
                        const cpd_kinetics_spec *spec, double first_end_s, double step_s,
                        cpd_kinetics_window_res *out);

/* Fills o with the defaults in cpd_kinetics_opts. */
void cpd_kinetics_opts_init(cpd_kinetics_opts *o);

/* Data handling: per repeat, removes outlier breaths (cpd_gx_outliers, opts->outlier_sd local SDs),
 * aligns time to the onset, takes the baseline (mean of the breaths in [-baseline_s, 0)), then
 * interpolates each repeat to 1 s and averages them (ensemble) and, with bin_s > 0, averages the
 * 1-s series in bins [k bin_s, (k+1) bin_s). A single repeat without bins is fitted on its breaths.
 * Returns CPD_OK, CPD_EUSAGE, CPD_EDATA (BAD_SAMPLE, ONSET_OUTSIDE, END_OUTSIDE), CPD_ENODATA
 * (NO_BASELINE), CPD_ENOMEM; out->reason and out->msg say why. */
int cpd_kinetics_prepare(cpd_kinetics_ws *w, const cpd_kinetics_input *rep, size_t m,
                         const cpd_kinetics_opts *opts, cpd_kinetics_data *out);

/* Full analysis of m repeats of one transition (m = 1 for a single bout): cpd_kinetics_prepare,
 * the fits, the slow-component test, the SPEC `bout show` quantities and the domain, by the rules
 * listed above cpd_kinetics_opts. opts NULL means the defaults. Returns CPD_OK or the prepare codes,
 * CPD_ENODATA (TOO_SHORT below 120 s, SINGULAR, NO_RESPONSE), CPD_ENOCONV when the primary fit
 * fails; out->reason and out->msg say why. A fit that failed is never reported (valid 0). */
int cpd_kinetics_analyse(cpd_kinetics_ws *w, const cpd_kinetics_input *rep, size_t m,
                         const cpd_kinetics_opts *opts, cpd_kinetics_result *out);

/* The domain the athlete's boundaries give for a bout at power_w (GET-equivalent power and CP in W,
 * each optional: <= 0 means unknown): below GET moderate, GET to CP heavy, at or above CP severe
 * (Hill, Poole & Smith 2002), and whether the observed domain agrees, with a plain-English message.
 * Returns CPD_OK, CPD_EUSAGE (power <= 0 or observed out of range), CPD_ENODATA (no boundary given),
 * CPD_EDATA (GET at or above CP). */
int cpd_kinetics_verify_domain(int observed, double power_w, double get_power_w, double cp_w,
                               cpd_kinetics_check *out);

/* "moderate", "heavy", "severe" or "undetermined"; "invalid" for an out-of-range code. */
const char *cpd_kinetics_domain_name(int domain);

/* Short English text of a CPD_KIN_R_* reason; never NULL. */
const char *cpd_kinetics_reason_text(int reason);

/* Time to reach VO2max in a severe-domain bout, for the severe-extreme boundary: the phase-II delay
 * plus 4 primary time constants, TD1 + 4 tau1 (98 % of the primary amplitude; arithmetic of the
 * exponential), the boundary being the power whose time to task failure equals the time to reach
 * VO2max (Hill, Poole & Smith 2002 Med Sci Sports Exerc 34:709). */
#define CPD_KIN_TVO2MAX_BI_SE_FACTOR 1.5 /* the bi-exponential's asymptotic SE of TD1 + 4 tau1 is 1.2-1.6
                                          * times too small in simulated severe bouts (the slow
                                          * component's delay makes the least-squares surface rough);
                                          * tests/test_honest.c measures the resulting coverage */
typedef struct {
    int valid;          /* 1 when the fields below hold */
    const char *fit;    /* the fit behind it: "bi", "mono_end" or "mono" (static) */
    double tau_s;       /* primary tau1, s */
    double tau_se_s;    /* its standard error (inflated as the sum's), s */
    double delay_s;     /* primary delay TD1, s */
    double t_s;         /* TD1 + 4 tau1, s */
    double se_s;        /* its standard error (delta method on the fit's covariance, x the factor above for bi), s */
    size_t dof;         /* degrees of freedom of the fit */
} cpd_kinetics_tvo2max;

/* The rule for the primary component of a bout above CP: the bi-exponential's primary whenever it
 * converged with standard errors and a slow-component delay after the primary one, whether or not
 * the slow component passes the F-test (above CP a slow component is expected, and a whole-bout
 * mono-exponential absorbs it into tau: 41 s instead of 33 s in a bout with a 300 mL/min slow
 * component); otherwise the mono-exponential ending at primary_end_s (180 s), else the whole-bout
 * mono-exponential. Returns CPD_OK, CPD_EUSAGE for NULL, CPD_ENODATA when no fit has SEs. */
int cpd_kinetics_time_to_vo2max(const cpd_kinetics_result *r, cpd_kinetics_tvo2max *out);

/* Shortest bout whose levelling off may suggest that CP is underestimated, s. Just above CP the
 * VO2 slow component can take well over 10 min to drive VO2 to its maximum (Poole et al., as
 * summarised by Hill, Poole & Smith 2002), so a shorter bout that "stabilised" cannot tell the
 * heavy domain from the low severe one. 10 min is our rule, stated with every use. */
#define CPD_KIN_VERIFY_LEVEL_S 600.0

/* cpd_kinetics_verify_domain for a bout of end_s seconds of exercise: when the boundaries predict
 * severe and the response levelled off (heavy) in a bout shorter than CPD_KIN_VERIFY_LEVEL_S, the
 * verdict is "nothing to conclude" (agreement -1), not "CP may be underestimated". end_s <= 0
 * means unknown (no rule applied). Return codes as cpd_kinetics_verify_domain. */
int cpd_kinetics_verify_bout(int observed, double end_s, double power_w, double get_power_w, double cp_w,
                             cpd_kinetics_check *out);

#endif
