/* units.h: parsing and formatting of the numbers, durations, dates and paces users type,
 * and the physiological ranges that input values are checked against. Pure: no I/O, no globals. */
#ifndef CPDOMAIN_UNITS_H
#define CPDOMAIN_UNITS_H

#include <stddef.h>

/* Parses a finite decimal number; leading and trailing blanks are ignored.
 * Returns CPD_OK, or CPD_EDATA when s is empty, not a number, or not finite. */
int cpd_parse_number(const char *s, double *out);

/* Parses a duration to seconds: "390", "390s", "390.5", "6:30", "6min", "1.5h", "1:02:00", "6:30.5".
 * Returns CPD_OK, or CPD_EDATA when s is not a duration or is negative. */
int cpd_parse_duration(const char *s, double *out_s);

/* Parses an ISO 8601 calendar date "YYYY-MM-DD" (years 1900-2999) to days since 1970-01-01.
 * Returns CPD_OK, or CPD_EDATA when s is not a valid date. */
int cpd_parse_date(const char *s, int *out_days);

/* Writes days since 1970-01-01 as "YYYY-MM-DD" into buf (at least 11 bytes). */
void cpd_format_date(int days, char *buf);

/* Writes a duration in seconds as "m:ss" (or "h:mm:ss" from one hour), rounded to whole
 * seconds, into buf of size n. Non-finite or negative input gives "-". */
void cpd_format_duration(double s, char *buf, size_t n);

/* Writes the pace of speed v (m/s) over per_m metres (1000 for min/km, 100 for min/100 m)
 * as "m:ss" into buf of size n. Non-positive or non-finite speed gives "-". */
void cpd_format_pace(double v_m_s, double per_m, char *buf, size_t n);

/* A closed physiological range that an input value must lie in, with its unit for messages. */
typedef struct {
    const char *what; /* e.g. "power" */
    double lo, hi;    /* inclusive bounds, in unit */
    const char *unit; /* e.g. "W" */
} cpd_range;

/* Ranges used across import and commands (common practice; generous on purpose: they catch
 * unit mix-ups and typing slips, not unusual athletes). */
extern const cpd_range CPD_RANGE_POWER;    /* 1-3000 W */
extern const cpd_range CPD_RANGE_SPEED;    /* 0.1-15 m/s */
extern const cpd_range CPD_RANGE_DISTANCE; /* 1-1e6 m */
extern const cpd_range CPD_RANGE_DURATION; /* 1 s - 24 h */
extern const cpd_range CPD_RANGE_MASS;     /* 20-250 kg */
extern const cpd_range CPD_RANGE_VO2;      /* 50-10000 mL/min */
extern const cpd_range CPD_RANGE_VE;       /* 1-400 L/min */
extern const cpd_range CPD_RANGE_HR;       /* 20-250 beats/min */
extern const cpd_range CPD_RANGE_PET;      /* 5-200 mmHg */
extern const cpd_range CPD_RANGE_LACTATE;  /* 0.1-35 mmol/L */

/* Returns 1 when v is finite and inside r, else 0. */
int cpd_in_range(const cpd_range *r, double v);

/* Writes "power must be between 1 and 3000 W (got 4000)" into buf of size n. */
void cpd_range_msg(const cpd_range *r, double v, char *buf, size_t n);

#endif
