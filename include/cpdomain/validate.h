/* validate.h: the checks every value typed by a user or read from a file must pass before it
 * reaches the store, in one place so the CLI and the importers say the same thing. */
#ifndef CPDOMAIN_VALIDATE_H
#define CPDOMAIN_VALIDATE_H

#include "cpdomain/store.h"

/* Athlete code: 1-32 characters of letters, digits, '-', '_' and '.'. CPD_EDATA with msg. */
int cpd_validate_code(const char *code, char *msg);
/* A squad name: 1 to CPD_SQUAD_MAX bytes, no control characters, no space at either end. */
int cpd_validate_squad(const char *name, char *msg);

/* Sport name: cycling, running, rowing, swimming or other. CPD_EDATA with msg. */
int cpd_validate_sport(const char *sport, char *msg);

/* A whole athlete record (code, name 1-200 bytes, sport, mass 20-250 kg, notes). */
int cpd_validate_athlete(const cpd_athlete *a, char *msg);

/* A date string: valid ISO 8601 YYYY-MM-DD and not after today (days since 1970-01-01). */
int cpd_validate_date(const char *date, int today_days, char *msg);

/* A trial before storage: code, date (not in the future), value in its physiological range
 * (units.h), duration 1 s - 24 h, note length; a distance trial's mean speed in the speed range.
 * On failure *field names the offending field ("athlete", "date", "duration_s", "power_w",
 * "speed_m_s", "distance_m" or "note") and msg says what is wrong. CPD_OK or CPD_EDATA. */
int cpd_validate_trial(const cpd_trial *t, int today_days, const char **field, char *msg);

/* ---- the record gate: the same checks for a record typed, read from a CSV or imported from an
 * export document (validate_records.c). On failure *field names the offending store column and
 * msg says what is wrong; CPD_OK or CPD_EDATA. ---- */

/* cpd_validate_athlete, naming the column ("code", "name", "sport", "mass_kg", "notes"). */
int cpd_validate_athlete_field(const cpd_athlete *a, const char **field, char *msg);

/* A ramp or bout before storage, with the ranges of 'ramp add' and 'bout add': date (not in the
 * future); ramp rate 1-200 W/min (0.005-2 (m/s)/min), start and baseline 0-3000 W (0-15 m/s), MRT
 * 0-300 s; bout intensity in the power (speed) range and a baseline below it; onset 0-7200 s;
 * a reviewer's GET and RCP in the VO2 range; at least 2 samples; note length. Columns: "date",
 * "rate_per_min", "start", "intensity", "baseline", "onset_s", "mrt_s", "get_vo2_manual",
 * "rcp_vo2_manual", "n_samples", "note". */
int cpd_validate_gx_test(const cpd_gx_test *t, int today_days, const char **field, char *msg);

/* One lactate stage: intensity in the power (speed) range, lactate 0.1-35 mmol/L, heart rate
 * (when has_hr) in its range, stage duration (when has_stage_s) 1 s - 24 h. Columns:
 * "intensity", "lactate_mmol_l", "hr_bpm", "stage_s". */
int cpd_validate_lactate_stage(int speed, double intensity, double lactate, int has_hr, double hr, int has_stage_s,
                               double stage_s, const char **field, char *msg);

/* A lactate test: date, 3 to CPD_LACTATE_STAGES_MAX stages, each by cpd_validate_lactate_stage,
 * rising in intensity; *stage receives the 0-based stage at fault. */
int cpd_validate_lactate(const cpd_lactate_test *t, int today_days, const char **field, size_t *stage, char *msg);

/* A session or all-out record: date, at least 2 samples, a span of at most
 * CPD_SESSION_MAX_SPAN_S, a positive spike limit, finite non-negative means and maxima, note
 * length. Columns: "date", "n_samples", "elapsed_s", "spike_limit", "test_start_s", "mean_value",
 * "max_value", "spike_max", "end_value", "work_above_end", "note". */
int cpd_validate_session_rec(const cpd_session_rec *r, int today_days, const char **field, char *msg);

#endif
