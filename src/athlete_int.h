/* athlete_int.h: what the athlete modules (athlete.c, athlete_domains.c, export_domains.c) share. */
#ifndef CPDOMAIN_ATHLETE_INT_H
#define CPDOMAIN_ATHLETE_INT_H

#include "cpdomain/athlete.h"

/* Adds a note (error 1: the failure of a skipped test) unless the list is full. */
void cpd_athlete_note(cpd_athlete_notes *n, int error, const char *fmt, ...) __attribute__((format(printf, 3, 4)));

/* Writes a message into msg (CPD_MSG_MAX bytes, may be NULL) and returns rc. */
int cpd_athlete_say(char *msg, int rc, const char *fmt, ...) __attribute__((format(printf, 3, 4)));

/* The newest ramp of athlete code in modality speed (1: m/s), analysed with its stored options.
 * Returns CPD_OK with *id 0 when there is none; with *id set and a new *r (free()) and *w
 * (cpd_ramp_free) when it was analysed, or *r NULL and why in rm (CPD_MSG_MAX bytes) when not; a
 * store failure's status with its message in msg. */
int cpd_athlete_newest_ramp(cpd_store *s, const char *code, int speed, long long *id, cpd_gx_test *t,
                            cpd_ramp_ws **w, cpd_ramp_result **r, char *rm, char *msg);

#endif
