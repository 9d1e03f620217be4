/* cli_energy.h: the CLI's bridge from an athlete's stored tests to the energy module: the analysed
 * bouts, the newest ramp, GET and CP, the steady-state VO2-power line, and the energy block of
 * 'bout show' (substrate use at the steady state, oxygen deficit, accumulated O2 deficit). */
#ifndef CPDOMAIN_CLI_ENERGY_H
#define CPDOMAIN_CLI_ENERGY_H

#include "cli.h"
#include "cpdomain/domains.h"
#include "cpdomain/energy.h"
#include "cpdomain/kinetics.h"
#include "cpdomain/ramp.h"

#define CLI_ENERGY_STEADY_MIN_S 180.0 /* shortest bout with a steady state: 4 tau of a 30-s primary + 1 min */
#define CLI_ENERGY_SUPRA 1.05        /* a bout is supra-maximal when its demand is >= 105 % of VO2peak [chosen] */
#define CLI_ENERGY_PFO_SEED 20261202u /* the bootstrap seed of peak fat oxidation (any fixed value) */
#define CLI_ENERGY_STEADY_WIN_S 60.0  /* the steady state is the mean of the last minute of exercise */

/* One of the athlete's power bouts, analysed as 'bout show' does by default. */
typedef struct {
    long long id;
    char date[11];
    double power_w;     /* W */
    double baseline_w;  /* W before the onset (0 when not given) */
    int has_rer;        /* 1 when the last minute is a steady state with VCO2 */
    double rer;         /* RER of the last minute of exercise */
    cpd_kinetics_result res;
} cli_energy_bout;

/* What the athlete's tests say (power modality only). Values are 0 with their has_ flag 0 when absent. */
typedef struct {
    cpd_athlete a;
    size_t nb;                  /* analysed bouts */
    cli_energy_bout *b;         /* nb of them, oldest first */
    size_t nb_failed;           /* bouts that could not be analysed */
    int has_ramp;
    long long ramp_id;
    char ramp_date[11];
    double vo2peak_ml_min;      /* the newest ramp's VO2peak */
    int has_gain;               /* the ramp's sub-GET gain and baseline */
    double gain, gain_se;       /* mL/min per W */
    double ramp_base_vo2;       /* mL/min before the onset */
    double ramp_base_w;         /* W before the onset */
    int has_get, has_cp;
    double get_w, get_sd_w;     /* GET as constant power and an SD for it, W */
    double cp_w, cp_sd_w;       /* CP and its SD, W */
    char get_source[200], cp_source[200];
    /* the newest power step test (chosen by date as the ramp is): its stages' steady states */
    int has_steps;
    long long steps_id;
    char steps_date[11];
    size_t ns;                                  /* stages */
    double st_w[CPD_STEPS_MAX];                 /* stage power, W */
    double st_vo2[CPD_STEPS_MAX];               /* final-30-s VO2, mL/min */
    double st_rer[CPD_STEPS_MAX];               /* final-30-s RER; 0 when the test has no VCO2 */
    int st_steady[CPD_STEPS_MAX];               /* 1 when the stage is complete and stable */
} cli_energy_athlete;

/* Gathers athlete code's power bouts (all but skip_id; 0 skips none), the newest power ramp dated on
 * or before to_date (NULL: the newest; when none is that old, the oldest), and GET and CP as 'domains'
 * finds them from the trials up to to_date, quietly. Returns 0 or an exit code after printing why
 * (unknown athlete). The caller frees A with cli_energy_free. */
int cli_energy_gather(cli_ctx *c, const char *code, long long skip_id, const char *to_date, cli_energy_athlete *A);
void cli_energy_free(cli_energy_athlete *A);

/* The athlete's steady-state VO2-power line: the step test's steady stages below the GET when there
 * are at least 3, else the moderate bouts' baseline and end-exercise points when there are two
 * distinct powers, else the ramp's gain through its baseline (slope SE only).
 * src receives where it came from; *max_p the highest power behind it. Returns 0, or CPD_ENODATA. */
int cli_energy_line(const cli_energy_athlete *A, cpd_energy_line *L, double *max_p, char *src, size_t n);

/* The session model's parameters (cpd_vo2model and the RER of each domain), in this order. */
enum {
    CLI_EN_BASE, CLI_EN_GAIN, CLI_EN_TAU, CLI_EN_DELAY, CLI_EN_GET, CLI_EN_CP, CLI_EN_SCG, CLI_EN_SCTAU,
    CLI_EN_SCDEL, CLI_EN_PEAK, CLI_EN_RER_M, CLI_EN_RER_H, CLI_EN_RER_S, CLI_EN_N
};

/* One parameter: value, SD for the Monte Carlo draws, and where it came from. */
typedef struct {
    double v, sd;
    int typical;   /* 1: a typical published value, not the athlete's */
    int known;     /* 0: absent (CP only) */
    char src[200]; /* its source in words */
} cli_energy_par;

/* The parameters from the athlete's tests: gain, baseline, tau and delay from the moderate bouts
 * (else the ramp's gain, typical kinetics), GET and CP, the slow component per W above the GET from
 * the heavy bouts (its asymptote above the steady-state line), VO2peak, the RER of each domain from the
 * step test's steady stages (below the GET: moderate; GET to CP: heavy), else from steady-state
 * bouts; typical values, flagged, for the rest. P has CLI_EN_N entries. Returns 0, or
 * 69 after saying what is missing (no ramp with VO2peak, no GET, no steady-state line). */
int cli_energy_params(cli_ctx *c, const cli_energy_athlete *A, cli_energy_par *P);

/* The energy module's parameters from P. */
void cli_energy_to_model(const cli_energy_par *P, cpd_energy_params *E);

/* The sheet's fuel paragraph for athlete code with domains dom (power only): kcal/h and carbohydrate
 * g/h, with 95 % Monte Carlo intervals, of 20 min of work at each domain's target (moderate: 75 % of
 * the GET; heavy and severe: the middle of the domain), from the session model. Quiet (c->mute):
 * returns 0 when text (n bytes) was written, -1 when the athlete's tests do not allow it. */
int cli_energy_fuel_text(cli_ctx *c, const char *code, const cpd_domains_result *dom, char *text, size_t n);

/* The energy part of 'bout show' for repeats g[0..m-1] (onsets onset_s) at power_w from baseline_w
 * (speed 1: a treadmill bout in m/s, without the per-W figures and the AOD)
 * with their analysis k: substrate use at the steady state, the oxygen deficit and, for a single
 * supra-maximal bout, the accumulated O2 deficit. Adds "energy", "oxygen_deficit" and "aod" to json
 * when it is not NULL, else prints text lines. Never fails the command: what cannot be computed is
 * said in words. */
void cli_energy_bout_report(cli_ctx *c, const char *code, long long bout_id, const cpd_gx_series *const *g,
                            const double *onset_s, size_t m, int speed, double power_w, double baseline_w,
                            const cpd_kinetics_result *k, double vo2peak_ml_min, cli_json *json);

/* The energy part of 'ramp show' for a step test t analysed as r (protocol steps; nothing for a ramp):
 * energy and substrate use of each stage from its steady-state means (equation set named; 'not valid'
 * above RER 1.00 or when the stage is not stable), and peak fat oxidation from the stages
 * (cpd_energy_pfo_steps, 1000 bootstrap resamples, fixed seed: the same data give the same interval). Adds "substrate" and
 * "peak_fat_oxidation" to json when it is not NULL, else prints text. A VO2-only test, or too few
 * stages, is said in words, with no number. */
void cli_energy_steps_report(const cpd_gx_test *t, const cpd_ramp_result *r, cli_json *json);

#endif
