/* cli_session.h: a stored session or all-out test loaded and cleaned again, shared by 'session',
 * 'allout' and 'energy'; the season's mean-maximal curve, shared by 'curve' and 'fit --source
 * curve' (cli_session.c). */
#ifndef CPDOMAIN_CLI_SESSION_H
#define CPDOMAIN_CLI_SESSION_H

#include "cli.h"
#include "cpdomain/mmp.h"
#include "cpdomain/session.h"

/* Loads session (allout 0) or all-out test (1) id and cleans its samples by the rules of session.h
 * with the spike limit used at import. Returns 0 or an exit code after printing why. On success the
 * caller frees *x with cpd_store_samples_free and *w with cpd_session_free; s points into *w. */
int cli_session_load_clean(cli_ctx *c, long long id, int allout, cpd_session_rec *r, cpd_session_samples **x,
                           cpd_session_ws **w, cpd_session *s);

/* 1 for the sports whose trials and sessions are speeds (running, swimming). */
int cli_speed_sport(const cpd_athlete *a);

/* Grid index of duration d (s) on the grid of mmp.h, or (size_t)-1 when d is not on it. */
size_t cli_mmp_grid_index(size_t d);

/* The athlete's season curve over the sessions dated within [from, to] in one modality (modality
 * "power"/"speed", NULL: the only one there is, else the sport's); *speed receives it. The caller
 * frees *out with cpd_mmp_season_free. Returns 0 or an exit code after printing why. */
int cli_season_curve(cli_ctx *c, const cpd_athlete *a, const char *from, const char *to, const char *modality,
                     int *speed, cpd_mmp_season **out, size_t *n_sessions);

#endif
