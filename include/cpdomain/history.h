/* history.h: the season of one athlete: power-duration fits over blocks of trials close in time,
 * and whether each change from one block to the next is larger than the noise. Pure. */
#ifndef CPDOMAIN_HISTORY_H
#define CPDOMAIN_HISTORY_H

#include "cpdomain/pd.h"

#include <stddef.h>

#define CPD_HISTORY_MAX_BLOCKS 64
#define CPD_HISTORY_WINDOW_DAYS 28 /* default: a block holds the trials within 28 days of its first */

/* Typical errors used where a measurement has no standard error of its own (test-retest
 * coefficients of variation, common practice, from memory): VO2peak 3 %, GET 6 %. */
#define CPD_HISTORY_CV_VO2PEAK 0.03
#define CPD_HISTORY_CV_GET 0.06
/* Default smallest worthwhile change, % of the earlier value: 0.2 x the between-athlete SD
 * (Hopkins 2004 Sportscience 8:1), with the between-athlete SD of CP in Johnson et al. 2011 Med Sci
 * Sports Exerc 43 (206 +- 47 W): 0.2 x 47 / 206 = 4.6 %. Settable (history --swc). */
#define CPD_HISTORY_SWC_PCT 4.6

typedef struct {
    int valid;          /* 1 when both blocks have the quantity */
    double delta;       /* later minus earlier, in the quantity's unit */
    double ci95[2];     /* 95 % interval of the change */
    int meaningful;     /* 1 when the interval lies wholly beyond the smallest worthwhile change (+-swc) */
    double swc;         /* the smallest worthwhile change used, same unit (swc_pct of the earlier value) */
    int excludes_zero;  /* 1 when the interval excludes zero (a change, worthwhile or not) */
    double df;          /* Welch-Satterthwaite degrees of freedom of the t quantile; 0: normal quantile */
    int model_valid;    /* CP and W': 1 when model holds the model both blocks were compared with */
    cpd_pd_model model; /* the better of the models both blocks support (lowest summed %SEE) */
} cpd_history_change;

/* One model's estimates in a block (for comparing blocks with the same model). */
typedef struct {
    int ok, has_se;
    double cp, cp_se, w_prime, w_prime_se; /* W or m/s; J or m */
    size_t dof;
    double see_sum;                        /* %SEE(CP) + %SEE(W'), % */
} cpd_history_model;

typedef struct {
    int from_day, to_day;          /* dates of the first and last trial (days since 1970) */
    size_t first, n;               /* the block's trials: indices first .. first + n - 1 of the input */
    int fitted;                    /* 1 when the chosen model fitted */
    cpd_pd_model model;            /* the block's best model (or the requested one) */
    double cp, cp_se, w_prime, w_prime_se; /* W or m/s; J or m */
    int has_se;                    /* 1 when the SEs exist (3 or more trials) */
    double cp_ci95[2], w_prime_ci95[2];
    unsigned flags;                /* the fit's CPD_PD_FLAG_* */
    /* filled by the caller from ramps and bouts (cpd_history_attach), else has_* = 0 */
    int has_get, has_vo2peak, has_tau;
    double get, vo2peak_ml_min, tau_s; /* GET equivalent (W or m/s), mL/min, s */
    double tau_se;                 /* s, 0 when unknown */
    int test_day;                  /* date of the ramp the GET and VO2peak come from */
    cpd_history_change d_cp, d_w_prime, d_get, d_vo2peak, d_tau; /* against the previous block */
    cpd_history_model models[CPD_PD_NMODELS]; /* every model's estimates (use_model: only that one) */
} cpd_history_block;

typedef struct {
    size_t nblocks;
    double swc_pct;     /* smallest worthwhile change, % of the earlier value; 0 means CPD_HISTORY_SWC_PCT */
    cpd_history_block block[CPD_HISTORY_MAX_BLOCKS];
} cpd_history;

/* Splits trials (day[] since 1970, sorted ascending; intensity and duration as for cpd_pd_fit)
 * into blocks: a block starts at the earliest trial not yet used and holds every later trial
 * within window_days of it (0: the default). Each block with 2 or more trials is fitted (model
 * mask CPD_PD_ALL_MODELS; the block's best model, or `model` when use_model is set). The changes
 * of CP and W' between consecutive fitted blocks have a 95 % interval of +-1.96 times the combined
 * standard error sqrt(SE1^2 + SE2^2), and count as meaningful when it excludes zero (the rule of
 * comparing a change with the combined standard errors of the two estimates). Returns CPD_OK,
 * CPD_EUSAGE for bad arguments or unsorted days, CPD_ENOMEM. */
int cpd_history_build(cpd_pd_ws *w, cpd_pd_modality modality, const int *day, const double *intensity,
                      const double *duration_s, size_t n, int window_days, int use_model, cpd_pd_model model,
                      cpd_history *h);

/* Attaches a ramp's results (GET equivalent, VO2peak) and a primary time constant (tau, its SE) to
 * the block nearest in time to test_day, if one lies within window_days of the block; later tests
 * replace earlier ones. Then call cpd_history_changes. */
void cpd_history_attach_ramp(cpd_history *h, int test_day, int has_get, double get, int has_vo2peak, double vo2peak,
                             int window_days);
void cpd_history_attach_tau(cpd_history *h, int test_day, double tau_s, double tau_se, int window_days);

/* Recomputes every change against the previous block that has the quantity. CP and W' are compared
 * with the same model in both blocks: the model both fitted with standard errors whose summed
 * %SEE(CP) + %SEE(W') over the two blocks is lowest (stated in change.model); the interval is
 * Student's t with the Welch-Satterthwaite degrees of freedom, df = (s1^2 + s2^2)^2 / (s1^4/df1 +
 * s2^4/df2) (Welch 1947 Biometrika 34:28). GET and VO2peak by the typical errors above (CI +-1.96
 * sqrt(2) TE); tau by its SEs. A change of CP (CS) is meaningful when its interval lies wholly
 * above +swc or below -swc, swc = swc_pct % of the earlier value (h->swc_pct, default
 * CPD_HISTORY_SWC_PCT, which rests on the between-athlete spread of CP alone); W' (D'), GET,
 * VO2peak and tau have no such published figure here, so theirs is meaningful when the interval
 * excludes zero (swc 0). */
void cpd_history_changes(cpd_history *h);

#endif
