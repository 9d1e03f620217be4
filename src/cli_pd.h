/* cli_pd.h: the CLI's bridge from stored trials to a power-duration fit, shared by fit, predict,
 * domains and sheet. */
#ifndef CPDOMAIN_CLI_PD_H
#define CPDOMAIN_CLI_PD_H

#include "cli_athlete.h"
#include "cpdomain/pd.h"

/* The fit of stored trials is the library's (cpdomain/athlete.h): the CLI prints its notes. */
typedef cpd_athlete_fit cli_pd_fit;

/* cpd_athlete_fit_load with its notes printed: the athlete's trials that are not excluded, dated
 * within [from, to] (either may be NULL), in one modality, fitted with the models in mask. Returns
 * 0, or an exit code after printing why (unknown athlete 65, fewer than 2 trials 69). The caller
 * frees f with cli_pd_fit_free. */
int cli_pd_load_fit(cli_ctx *c, const char *code, const char *from, const char *to, unsigned mask, cli_pd_fit *f);
#define cli_pd_fit_free cpd_athlete_fit_free

/* The best-model rule for time trials over set distances (cpd_pd_best_for_time_trials). */
#define CLI_TIME_TRIAL_RULE                                                                                    \
    "time trials over set distances: the linear distance-time model D = CS t + D' (linear-total), the "        \
    "published model for such data (Wakayoshi et al. 1992, from memory; Takahashi, Wakayoshi et al. 2002 Jpn " \
    "J Biomech Sports Exerc 6:110); the other models regress on the mean speed D/t, which carries the error "  \
    "of the measured time"

/* Trials within this many days of the newest one form the newest block (the history's window);
 * cli_pd_newest_block is cpd_athlete_newest_block. */
#define CLI_PD_BLOCK_DAYS CPD_ATHLETE_BLOCK_DAYS
#define cli_pd_newest_block cpd_athlete_newest_block

/* The athlete's current fit (cpd_athlete_fit_current) with its notes printed: without from, the
 * newest block of trials up to `to` when it holds 3 or more and older trials exist (*older receives
 * how many are left out); with from, exactly cli_pd_load_fit. Used by domains, predict, solve and
 * sheet: today's boundaries and predictions describe the athlete now, the history keeps the rest. */
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

/* predict --protocol: the balance of a typed protocol for fitted model m; returns an exit code
 * (cli_balance.c, as the rest of the balance report). */
int cli_predict_protocol(cli_ctx *c, const cli_pd_fit *f, const cpd_pd_model_fit *m, const char *text,
                         const char *balance_model, const char *trace_path, const char *plot_path);

/* The usual caution printed beside every prescription or prediction (the library's text). */
#define CLI_CAUTION CPD_ATHLETE_CAUTION

/* ---- the W' balance report shared by predict --protocol and predict --session ---- */
#include "cpdomain/balance.h"
#include "cpdomain/protocol.h"

/* One row of the report's table: seconds [start_s, start_s + length_s) of the input. */
typedef struct {
    size_t start_s, length_s; /* s */
    double intensity;         /* W or m/s shown for the row */
    const char *label;        /* the row's name; NULL: its 1-based number */
} cli_balance_part;

typedef struct {
    const double *x;                 /* 1-Hz intensities, W or m/s, n of them */
    size_t n;
    const cli_balance_part *parts;   /* the human table's rows (at most 200 are shown) */
    size_t nparts;
    const char *heading;             /* human: the line under the title */
    const char *part_word;           /* the table's first column heading */
    const char *discretisation;      /* JSON: how the input became 1-s steps */
    int show_min_pct;                /* human: the lowest balance as a percentage too */
    void (*json_extra)(cli_json *d, const void *ud); /* adds keys to the JSON document, or NULL */
    const void *ud;
    const char *trace_path;          /* --trace file, or NULL */
    int completed;                   /* 1: a recorded session the athlete completed (no "task failure") */
    const char *plot_path;           /* -o FILE.svg: the balance plot, or NULL */
} cli_balance_input;

/* The model's parameters with CP at the lower (side < 0) or upper end of its 95 % interval and W'
 * moved with it along their joint-normal regression; 0 when the fit has no standard errors. */
int cli_param_pair(const cpd_pd_model_fit *m, int side, double *cp, double *w);

/* Parses protocol text and checks it against f's modality; *p freed with cpd_protocol_free.
 * Returns 0 or an exit code after printing why. */
int cli_load_protocol(cli_ctx *c, const cli_pd_fit *f, const char *text, cpd_protocol **p);

#define CLI_NBALANCE 3 /* recovery models reported side by side */
#define CLI_COMPLETED_BELOW_ZERO                                                                               \
    "the athlete finished it, so CP or W' is probably out of date (too low); retest, or fit the newest trials"

/* Runs balance model bm over in->x with fitted model m and prints the SPEC keys (JSON) or the
 * report with one table row per part; writes the trace when asked. Returns an exit code. */
int cli_balance_report(cli_ctx *c, const cli_pd_fit *f, const cpd_pd_model_fit *m, cpd_balance_model bm,
                       const cli_balance_input *in);

/* predict --session: the balance of recorded session id for fitted model m (cli_session.c). */
int cli_predict_session(cli_ctx *c, const cli_pd_fit *f, const cpd_pd_model_fit *m, long long id,
                        const char *balance_model, const char *trace_path, const char *plot_path);

/* fit --source curve: the models fitted to points of the athlete's mean-maximal curve over the
 * sessions dated within [from, to] at the durations in the list ("3min,5min,12min"; NULL: the
 * default CLI_CURVE_DURATIONS). The points become f->trials (id = the session that gave the
 * point, date its date; oldest first) and f->from_curve is 1. Returns 0 or an exit code after
 * printing why (cli_session.c). */
#define CLI_CURVE_DURATIONS "3min,5min,12min,20min"
int cli_pd_load_curve_fit(cli_ctx *c, const char *code, const char *from, const char *to, const char *durations,
                          unsigned mask, cli_pd_fit *f);

/* The sentence that marks a fit to curve points as a field estimate. */
extern const char CLI_FIELD_ESTIMATE[];

#endif
