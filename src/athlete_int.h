/* athlete_int.h: what the athlete modules (athlete.c, athlete_domains.c, export_domains.c) share. */
#ifndef CPDOMAIN_ATHLETE_INT_H
#define CPDOMAIN_ATHLETE_INT_H

#include "cpdomain/athlete.h"

/* Adds a note (error 1: the failure of a skipped test) unless the list is full. */
void cpd_athlete_note(cpd_athlete_notes *n, int error, const char *fmt, ...) __attribute__((format(printf, 3, 4)));

#endif
