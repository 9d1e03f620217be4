/* cli_pd.h: the CLI's bridge from stored trials to a power-duration fit, shared by fit, predict,
 * domains and sheet. */
#ifndef CPDOMAIN_CLI_PD_H
#define CPDOMAIN_CLI_PD_H

#include "cli.h"
#include "cpdomain/pd.h"

typedef struct {
    cpd_athlete athlete;
    cpd_pd_modality modality;
    size_t n;             /* trials used */
    cpd_trial *trials;    /* the trials used, oldest first */
    double *x, *t;        /* their intensity (W, or m/s: a distance trial's mean speed) and duration (s) */
    size_t skipped_other; /* trials of the other modality left out */
    cpd_pd_result *res;   /* the fit */
} cli_pd_fit;

/* Loads the athlete's trials that are not excluded, dated within [from, to] (either may be NULL),
 * picks the modality (power or speed; for mixed trials the athlete's sport decides) and fits the
 * models in mask. Returns 0, or an exit code after printing why (unknown athlete 65, fewer than
 * 2 trials 69). The caller frees f with cli_pd_fit_free. */
int cli_pd_load_fit(cli_ctx *c, const char *code, const char *from, const char *to, unsigned mask, cli_pd_fit *f);
void cli_pd_fit_free(cli_pd_fit *f);

/* Trials within this many days of the newest one form the newest block (the history's window). */
#define CLI_PD_BLOCK_DAYS 28

/* The athlete's current fit: with no dates, like cli_pd_load_fit over the newest block of trials
 * when it holds 3 or more and older trials exist (*older receives how many are left out, 0 when
 * all are used); with dates, exactly cli_pd_load_fit. Used by domains, predict, solve and sheet:
 * today's boundaries and predictions describe the athlete now, the history keeps the rest. */
int cli_pd_load_current(cli_ctx *c, const char *code, const char *from, const char *to, unsigned mask, cli_pd_fit *f,
                        size_t *older);

/* The JSON key for a power-modality name ("cp", "w_prime_se", "p_max_ci95"...) in f's modality
 * ("cs", "d_prime_se", "v_max_ci95"...), written into buf. */
const char *cli_pd_key(cpd_pd_modality m, const char *power_key, char *buf, size_t n);

/* Adds the SPEC keys of model fit m to object o (plus residuals, leave-one-out and flag notes). */
void cli_pd_model_json(cli_json *o, const cli_pd_fit *f, const cpd_pd_model_fit *m);

/* Adds the flag names of bits in flags to array a. */
void cli_pd_flags_json(cli_json *a, unsigned flags, cpd_pd_modality m);

/* Prints each flag of bits in flags as "  - sentence" lines to stdout. */
void cli_pd_flags_print(unsigned flags, cpd_pd_modality m);

/* Unit words for the modality: intensity ("W" / "m/s") and capacity ("kJ" / "m"). */
const char *cli_pd_unit(cpd_pd_modality m);

/* The pace distance for a sport: 100 m for swimmers, else 1000 m; the label "/100m" or "/km". */
double cli_pd_pace_m(const cpd_athlete *a, const char **label);

/* predict --protocol: the balance of a typed protocol for fitted model m; returns an exit code. */
int cli_predict_protocol(cli_ctx *c, const cli_pd_fit *f, const cpd_pd_model_fit *m, const char *text,
                         const char *balance_model, const char *trace_path);

/* The usual caution printed beside every prescription or prediction. */
extern const char CLI_CAUTION[];

#endif
