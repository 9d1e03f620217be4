/* import.h: turning users' files into validated records, all or nothing: a file with one bad
 * row yields an error naming file:line:column and no records. */
#ifndef CPDOMAIN_IMPORT_H
#define CPDOMAIN_IMPORT_H

#include "cpdomain/csvin.h"
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
/* The same from a table already read (cpd_csv_read or, from memory, cpd_csv_parse), which this
 * function frees; messages name cpd_csv_path(c). So are the *_csv functions below. */
int cpd_import_trials_csv(cpd_csv *c, const char *map, int today_days, cpd_trial_batch *out, char *msg);

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
int cpd_import_athletes_csv(cpd_csv *c, const char *map, cpd_athlete_batch *out, char *msg);

/* Reads a gas-exchange CSV (SPEC.md: time_s and vo2_ml_min (or vo2_l_min) required; optional
 * vco2_ml_min (or vco2_l_min), ve_l_min, hr_bpm, power_w, speed_m_s, peto2_mmhg, petco2_mmhg) into a
 * series in SPEC units (L/min columns converted to mL/min). time_s takes seconds (negative before
 * the onset) or h:mm:ss and may not run backwards; each value must lie in its range; at least min_rows rows. Return codes as
 * cpd_import_trials. The caller frees *out with cpd_gx_free. */
int cpd_import_gx(const char *path, const char *map, size_t min_rows, cpd_gx_series **out, char *msg);

/* What cpd_import_gx_report dropped from a file instead of rejecting it. */
typedef struct {
    size_t hr_dropped;          /* heart rates outside CPD_GX_HR_MIN..CPD_GX_HR_MAX (artefacts) */
    size_t blank[CPD_GX_NCHAN]; /* blank optional cells per channel ("", "-", "NA", "NaN", "null") */
    size_t blank_total;         /* the sum of blank[] */
} cpd_gx_import_report;

/* cpd_import_gx, with the real exports' habits accepted: time_s may be negative (a baseline
 * recorded before the onset at 0); an optional cell that is blank, and a heart rate outside the
 * physiological range of gx.h, is dropped and counted in *rep (may be NULL), its gap bridged
 * linearly from the neighbouring samples of that channel; an optional column without any value is
 * absent. Required columns (time, VO2) stay strict. A VO2 column in mL/min holding L/min values,
 * a decimal comma and a header read as one column are named in the message with what to do. */
int cpd_import_gx_report(const char *path, const char *map, size_t min_rows, cpd_gx_series **out,
                         cpd_gx_import_report *rep, char *msg);
/* The same from a CSV already read (cpd_csv_read or cpd_csv_parse); c is freed in every case. */
int cpd_import_gx_csv(cpd_csv *c, const char *map, size_t min_rows, cpd_gx_series **out, cpd_gx_import_report *rep,
                      char *msg);

/* Reads a lactate step test (lactate_mmol_l and one of power_w, speed_m_s; optional hr_bpm,
 * stage_s) into t (its stages, speed flag and source_file; the caller sets athlete and date).
 * Stages must rise in intensity; 3 to CPD_LACTATE_STAGES_MAX of them. Return codes as
 * cpd_import_trials. */
int cpd_import_lactate(const char *path, const char *map, cpd_lactate_test *t, char *msg);
int cpd_import_lactate_csv(cpd_csv *c, const char *map, cpd_lactate_test *t, char *msg);

/* ---- recorded sessions and 3-minute all-out tests ---- */
#include "cpdomain/session.h"

typedef struct {
    const char *map;    /* --map text ("NAME=HEADER,..."), or NULL */
    int want_speed;     /* 0: read power_w, 1: read speed_m_s, -1: whichever the file has */
    int prefer_speed;   /* want_speed -1 and the file has both: 1 reads speed_m_s, 0 power_w */
    double spike_limit; /* W or m/s: values above it are spikes; 0: session.h's default for the modality */
    int curve;          /* 1: compute the mean-maximal curve */
} cpd_session_import_opts;

/* A session file read, checked and cleaned. The arrays point into the workspace that produced
 * it and are valid until its next use or cpd_import_session_free. */
typedef struct {
    cpd_session_samples samples; /* the file's values as read (time_s, value, optional channels) */
    int speed;                   /* 1: value is speed_m_s, 0: power_w */
    uint64_t hash;               /* FNV-1a of the file's bytes */
    cpd_session clean;           /* cleaning report and 1-Hz segments (session.h) */
    cpd_mmp_curve curve;         /* the mean-maximal curve; n = 0 unless opts->curve */
    double mean_value;           /* W or m/s: mean of the clean seconds (zeros count, spikes do not) */
    double max_value;            /* W or m/s: highest clean second */
} cpd_session_import;

typedef struct cpd_session_import_ws cpd_session_import_ws;

/* A workspace for reading session files one after another; it grows to the longest file met and
 * is then reused without allocating. NULL when out of memory; free with cpd_import_session_free
 * (NULL accepted). */
cpd_session_import_ws *cpd_import_session_alloc(void);
void cpd_import_session_free(cpd_session_import_ws *w);

/* Reads a session or all-out CSV (SPEC.md: time_s and power_w or speed_m_s; optional hr_bpm,
 * cadence_rpm, distance_m), checks every value (times in s or h:mm:ss that never run backwards;
 * values numbers >= 0; hr_bpm 0-250, cadence_rpm 0-300, distance_m 0-1e7: 0 means no signal),
 * cleans it by the rules of session.h (spikes are dropped and counted, not errors) and, with
 * opts->curve, computes its mean-maximal curve (mmp.h). Returns CPD_OK; CPD_EIO (unreadable,
 * exit 66); CPD_EDATA with msg "file:line:column: what is wrong" for any bad row, an empty or
 * one-sample file, a file longer than 7 days or one with nothing left but spikes; CPD_EUSAGE for
 * a bad map; CPD_ENOMEM. */
int cpd_import_session(cpd_session_import_ws *w, const char *path, const cpd_session_import_opts *opts,
                       cpd_session_import *out, char *msg);
/* The same from len bytes in memory named name (hash of those bytes, cpd_csv_parse). */
int cpd_import_session_mem(cpd_session_import_ws *w, const char *name, const char *buf, size_t len,
                           const cpd_session_import_opts *opts, cpd_session_import *out, char *msg);

/* Reads the file at path whole into w and hashes its bytes (cpd_session_hash) into *hash, so a
 * caller can check for a stored duplicate first: the next cpd_import_session of the same path
 * parses these bytes instead of reading the file again. A plain numeric file (a header, then
 * rows of numbers) is parsed straight from them into the channel arrays; any other file (quotes,
 * --map, h:mm:ss times, a bad value) goes through the full CSV parser, which words every error.
 * CPD_OK, CPD_EIO with msg, CPD_ENOMEM. */
int cpd_import_session_load(cpd_session_import_ws *w, const char *path, uint64_t *hash, char *msg);

/* Fills the cleaning report, modality, hash, sample count and mean/max of r from a read file
 * (the caller sets athlete, date, allout, note and source_file). */
void cpd_import_session_rec(const cpd_session_import *in, cpd_session_rec *r);

/* The FNV-1a hash (cpd_session_hash) of the bytes of the file at path. CPD_OK or CPD_EIO with msg. */
int cpd_import_file_hash(const char *path, uint64_t *hash, char *msg);

/* The first valid YYYY-MM-DD (not touching other digits) in the file-name part of path, into
 * date (11 bytes). CPD_OK, or CPD_ENODATA when the name holds none. */
int cpd_import_date_from_name(const char *path, char *date);

#endif
