/* athlete.h: questions about one athlete answered from an open store: the current power-duration
 * fit and how its block of trials was chosen, the newest ramp's analysis, the VO2 kinetics of
 * stored bouts, the intensity-domain boundaries with their sources, intervals and staleness, and
 * the season's history. The command line's fit, domains, predict, history and sheet are renderings
 * of these answers; a lab pipeline or a binding links libcpdomain and gets the same numbers.
 *
 * Conventions (as in the rest of the library): plain structs the caller owns, one _free each (safe
 * on a zeroed struct, and after a failed call); functions return a status code of status.h and
 * write why into msg (CPD_MSG_MAX bytes, may be NULL); nothing is printed. What the command line
 * used to print on the side ("3 speed trials left out", "ramp 4 could not be analysed") is returned
 * as notes in the struct. A store failure returns its status with cpd_store_errmsg's text in msg;
 * the caller rolls back if it holds a transaction. */
#ifndef CPDOMAIN_ATHLETE_H
#define CPDOMAIN_ATHLETE_H

#include "cpdomain/domains.h"
#include "cpdomain/history.h"
#include "cpdomain/kinetics.h"
#include "cpdomain/pd.h"
#include "cpdomain/ramp.h"
#include "cpdomain/status.h"
#include "cpdomain/store.h"

#include <stddef.h>

/* ---- notes: side information in order, for the caller to show or not ---- */
#define CPD_ATHLETE_NOTES_MAX 8
typedef struct {
    size_t n;                                 /* notes kept (later ones are dropped) */
    int error[CPD_ATHLETE_NOTES_MAX];         /* 1: the failure of a test that was skipped (an error line);
                                                 0: an informational note */
    char text[CPD_ATHLETE_NOTES_MAX][CPD_MSG_MAX];
} cpd_athlete_notes;

/* ---- the power-duration fit of stored trials ---- */

/* Trials within this many days of the newest one form the newest block (the history's window). */
#define CPD_ATHLETE_BLOCK_DAYS 28

typedef struct {
    cpd_athlete athlete;
    cpd_pd_modality modality;
    size_t n;             /* trials used */
    cpd_trial *trials;    /* the trials used, oldest first */
    double *x, *t;        /* their intensity (W, or m/s: a distance trial's mean speed) and duration (s) */
    size_t skipped_other; /* trials of the other modality left out */
    cpd_pd_result *res;   /* the fit */
    int from_curve;       /* 1: the points come from the mean-maximal curve (trials[i].id is a session id) */
    int time_trials;      /* 1: every trial a time trial over a distance: best = distance-time (linear-total) */
    cpd_athlete_notes notes;
} cpd_athlete_fit;

/* Loads athlete code's trials that are not excluded, dated within [from, to] (YYYY-MM-DD, either
 * may be NULL), picks the modality (power or speed; for mixed trials the athlete's sport decides:
 * running and swimming mean speed) and fits the models in mask (CPD_PD_MODEL_BIT). Returns CPD_OK;
 * the store's status for an unknown athlete; CPD_ENODATA with fewer than 2 trials; CPD_EUSAGE with
 * more than CPD_PD_NMAX; the fit's status when it fails. Free f with cpd_athlete_fit_free. */
int cpd_athlete_fit_load(cpd_store *s, const char *code, const char *from, const char *to, unsigned mask,
                         cpd_athlete_fit *f, char *msg);
void cpd_athlete_fit_free(cpd_athlete_fit *f);

/* The newest block of f's trials: those dated on or after start = newest date -
 * CPD_ATHLETE_BLOCK_DAYS. Returns how many it holds when that is 3 or more and fewer than all, else 0. */
size_t cpd_athlete_newest_block(const cpd_athlete_fit *f, char start[11]);

/* The athlete's current fit, the one domains, predict, solve and sheet use: with from, exactly
 * cpd_athlete_fit_load; without, the newest block of trials up to `to` when it holds 3 or more,
 * older trials exist and the block gives a usable fit (its best model, or the one model of mask);
 * *older receives how many trials are left out (0: all are used). */
int cpd_athlete_fit_current(cpd_store *s, const char *code, const char *from, const char *to, unsigned mask,
                            cpd_athlete_fit *f, size_t *older, char *msg);

/* ---- gas exchange: the ramp (or step test) and constant-intensity bouts ---- */

/* The analysis options of a stored ramp record (rate, start, onset, protocol, baseline, MRT, the
 * reviewer's thresholds) and the athlete's mass, over ro (cpd_ramp_opts_init first). */
void cpd_athlete_ramp_opts(const cpd_gx_test *t, const cpd_athlete *a, cpd_ramp_opts *ro);

/* Overrides of the stored options ('ramp show --window/--outlier-sd/--mrt'); has_* 0: stored. */
typedef struct {
    int has_window, has_outlier, has_mrt;
    double window_s, outlier_k, mrt_s;
} cpd_athlete_ramp_over;

/* Loads ramp id (*t, its athlete *a) and analyses it with its stored options and the overrides (ov
 * NULL: none). On success the caller frees *w with cpd_ramp_free (r points into nothing of it, but
 * cpd_ramp_ci_compute needs it); on failure *w is NULL and msg says "ramp ID: why". */
int cpd_athlete_ramp_analyse(cpd_store *s, long long id, const cpd_athlete_ramp_over *ov, cpd_gx_test *t,
                             cpd_athlete *a, cpd_ramp_ws **w, cpd_ramp_result *r, char *msg);

#define CPD_ATHLETE_BOUTS_MAX 16 /* most repeats averaged at once */
#define CPD_ATHLETE_SAME_PCT 5.0 /* repeats of one transition: intensities and baselines within 5 % */

/* One bout, or repeats of one transition ensemble-averaged, analysed. */
typedef struct {
    size_t n;                                 /* repeats */
    cpd_gx_test t[CPD_ATHLETE_BOUTS_MAX];     /* their records, in the order given */
    cpd_gx_series *g[CPD_ATHLETE_BOUTS_MAX];  /* their samples */
    cpd_athlete a;
    int speed;                                /* 1: intensities in m/s */
    double intensity;                         /* mean bout intensity, W or m/s */
    double baseline;                          /* mean baseline intensity (0 where not given), W or m/s */
    int baseline_given;                       /* 1 when every repeat has its baseline intensity */
    int vo2peak_src;                          /* 0 none, 1 the newest ramp, 2 given by the caller */
    long long ramp_id;                        /* the ramp VO2peak came from */
    char ramp_date[11];
    int has_ramp_get;                         /* 1 when that ramp gave a constant-intensity GET */
    double ramp_get;                          /* W or m/s */
    cpd_kinetics_opts ko;                     /* the options of the analysis */
    cpd_kinetics_ws *ws;
    cpd_kinetics_result res;
    cpd_athlete_notes notes;
} cpd_athlete_bouts;

/* Analyses stored bouts ids[0..n) (repeats of one transition: one athlete, one modality,
 * intensities and baselines within CPD_ATHLETE_SAME_PCT) with options ko (NULL: defaults;
 * vo2peak_ml_min > 0 in ko is used, else VO2peak comes from the athlete's newest ramp of the bouts'
 * modality). Returns CPD_OK; CPD_EUSAGE when the ids are not repeats of one transition or ko's end
 * lies beyond the data; CPD_ENODATA without baseline breaths; the analysis' status. Free b with
 * cpd_athlete_bouts_free either way. */
int cpd_athlete_bouts_analyse(cpd_store *s, const long long *ids, size_t n, const cpd_kinetics_opts *ko,
                              cpd_athlete_bouts *b, char *msg);
void cpd_athlete_bouts_free(cpd_athlete_bouts *b);

/* The domain a bout's response shows, checked against the athlete's boundaries: the GET equivalent
 * (or LT1) and CP of cpd_athlete_domains_build when the athlete has 2 or more trials of the bouts'
 * modality, else the newest ramp's GET alone (cpd_kinetics_verify_bout). */
typedef struct {
    int checked;                 /* 1 when GET and/or CP were known */
    double get, cp;              /* W or m/s; 0 when unknown */
    char get_source[200], cp_source[200];
    char why_unchecked[300];     /* why the domain rests on the response alone */
    int check_rc;                /* status of cpd_kinetics_verify_bout */
    cpd_kinetics_check chk;
    cpd_athlete_notes notes;     /* e.g. CP not available: checked against the GET alone */
} cpd_athlete_bout_check;

/* Fills k for analysed bouts b (today: days since 1970-01-01, for the domains' staleness). */
void cpd_athlete_bouts_check(cpd_store *s, const cpd_athlete_bouts *b, int today, cpd_athlete_bout_check *k);

/* ---- the intensity domains ---- */

typedef struct {
    const char *from, *to;  /* trial dates (NULL: the current block, see cpd_athlete_fit_current) */
    int has_model;          /* 0: the fit's best model */
    cpd_pd_model model;
    int stale_days;         /* 0: the default (cpd_domains_compute) */
    int today;              /* days since 1970-01-01, for staleness */
} cpd_athlete_query;

typedef struct {
    cpd_athlete_fit fit;          /* the power-duration fit (all models) */
    cpd_pd_model model;           /* the model the boundaries use */
    cpd_domains_input in;         /* what the boundaries rest on: GET (ramp), LT1 (lactate), the
                                     newest block's CP (staleness), tau of a severe bout */
    cpd_domains_result res;       /* boundaries (value, interval, source, method, date, staleness) and targets */
    int has_ramp;                 /* 1 when a ramp of the athlete's modality was analysed */
    long long ramp_id;
    char ramp_date[11];
    cpd_gx_test ramp_test;        /* that ramp's record, */
    cpd_ramp_result *ramp;        /* its analysis (VO2peak, GET, RCP, stages of a step test) */
    cpd_ramp_ws *ramp_ws;         /* and the workspace behind it (for cpd_ramp_ci_compute and plots);
                                     both NULL without has_ramp, freed by cpd_athlete_domains_free */
    int ramp_mrt_missing;         /* 1 when the ramp had no MRT: no constant-intensity equivalent */
    int ramp_no_vco2;             /* 1 when the ramp is VO2-only: GET and RCP cannot be computed */
    size_t older_trials;          /* trials before the newest block, left out of the boundaries */
    cpd_athlete_notes notes;      /* the fit's notes, then the tests that could not be analysed */
} cpd_athlete_domains;

/* The domains of athlete code now: the current fit (q->from/to), the newest ramp and lactate test
 * of the fit's modality, the newest block's CP for staleness, and the time to VO2max from the
 * newest severe bout above CP. Returns CPD_OK; the fit's status; CPD_ENODATA when no model
 * qualifies as best (name one) or the named model did not fit. Free d with cpd_athlete_domains_free. */
int cpd_athlete_domains_build(cpd_store *s, const char *code, const cpd_athlete_query *q, cpd_athlete_domains *d,
                              char *msg);
void cpd_athlete_domains_free(cpd_athlete_domains *d);

/* The caution beside every prescription or prediction, and the one beside heart-rate targets. */
extern const char CPD_ATHLETE_CAUTION[];
extern const char CPD_ATHLETE_HR_CAUTION[];

/* The domains as the JSON keys of 'cpdomain --json domains' (athlete, modality, model, boundaries,
 * stale, targets, heavy_ceiling_w|_m_s, time_to_vo2max_s, severe_efforts, delta, flags, fit_flags,
 * hr_caution, caution), added to cJSON object o. Returns CPD_OK or CPD_ENOMEM. */
struct cJSON;
int cpd_athlete_domains_json_add(struct cJSON *o, const cpd_athlete_domains *d);
/* The same keys as one indented document (cJSON_Print, no final newline) in *text; the caller
 * frees it with free(). Returns CPD_OK or CPD_ENOMEM. */
int cpd_athlete_domains_json(const cpd_athlete_domains *d, char **text);

/* ---- the season ---- */

typedef struct {
    cpd_athlete_fit f;  /* the athlete's trials (linear-total fitted over all of them) */
    cpd_history *h;     /* blocks, fits, attached ramps, changes */
    int win;            /* block window, days */
} cpd_athlete_history;

/* The season of athlete code: blocks of trials within win days, each fitted (has_model 0: the
 * block's best), the ramps' GET equivalent and VO2peak attached, the changes between blocks.
 * Returns CPD_OK or a status as cpd_athlete_fit_load. Free a with cpd_athlete_history_free. */
int cpd_athlete_history_build(cpd_store *s, const char *code, int win, int has_model, cpd_pd_model model,
                              cpd_athlete_history *a, char *msg);
void cpd_athlete_history_free(cpd_athlete_history *a);

#endif
