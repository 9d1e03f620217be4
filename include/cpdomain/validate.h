/* validate.h: the checks every value typed by a user or read from a file must pass before it
 * reaches the store, in one place so the CLI and the importers say the same thing. */
#ifndef CPDOMAIN_VALIDATE_H
#define CPDOMAIN_VALIDATE_H

#include "cpdomain/store.h"

/* Athlete code: 1-32 characters of letters, digits, '-', '_' and '.'. CPD_EDATA with msg. */
int cpd_validate_code(const char *code, char *msg);

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

#endif
