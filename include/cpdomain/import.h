/* import.h: turning users' files into validated records, all or nothing: a file with one bad
 * row yields an error naming file:line:column and no records. */
#ifndef CPDOMAIN_IMPORT_H
#define CPDOMAIN_IMPORT_H

#include "cpdomain/gx.h"
#include "cpdomain/store.h"

#include <stddef.h>

typedef struct {
    cpd_trial *trial; /* n validated trials, source_file set to the path */
    long *line;       /* physical line of each trial in the file */
    size_t n;
    int athlete_col;  /* 1-based column of the athlete code, for messages */
} cpd_trial_batch;

/* Reads a trials CSV (SPEC.md: athlete,date,duration_s and one of power_w, speed_m_s,
 * distance_m; optional note), applying map ("NAME=HEADER,..." or NULL). Each value is checked by
 * cpd_validate_trial against today (days since 1970-01-01). Returns CPD_OK, CPD_EIO (unreadable),
 * CPD_EDATA (msg: "file:line:column: column 'name': what is wrong"), CPD_EUSAGE (bad map),
 * CPD_ENOMEM. The caller frees the batch with cpd_trial_batch_free. */
int cpd_import_trials(const char *path, const char *map, int today_days, cpd_trial_batch *out, char *msg);
void cpd_trial_batch_free(cpd_trial_batch *b);

typedef struct {
    cpd_athlete *athlete; /* n validated athletes */
    long *line;           /* physical line of each */
    size_t n;
} cpd_athlete_batch;

/* Reads an athletes CSV (code,name and optional sport (default cycling), mass_kg, notes) with map
 * as for trials; each row checked by cpd_validate_athlete. Same return codes as
 * cpd_import_trials. The caller frees the batch with cpd_athlete_batch_free. */
int cpd_import_athletes(const char *path, const char *map, cpd_athlete_batch *out, char *msg);
void cpd_athlete_batch_free(cpd_athlete_batch *b);

/* Reads a gas-exchange CSV (SPEC.md: time_s and vo2_ml_min (or vo2_l_min) required; optional
 * vco2_ml_min (or vco2_l_min), ve_l_min, hr_bpm, power_w, speed_m_s, peto2_mmhg, petco2_mmhg) into a
 * series in SPEC units (L/min columns converted to mL/min). time_s takes seconds or h:mm:ss and may
 * not run backwards; each value must lie in its range; at least min_rows rows. Return codes as
 * cpd_import_trials. The caller frees *out with cpd_gx_free. */
int cpd_import_gx(const char *path, const char *map, size_t min_rows, cpd_gx_series **out, char *msg);

/* Reads a lactate step test (lactate_mmol_l and one of power_w, speed_m_s; optional hr_bpm,
 * stage_s) into t (its stages, speed flag and source_file; the caller sets athlete and date).
 * Stages must rise in intensity; 3 to CPD_LACTATE_STAGES_MAX of them. Return codes as
 * cpd_import_trials. */
int cpd_import_lactate(const char *path, const char *map, cpd_lactate_test *t, char *msg);

#endif
