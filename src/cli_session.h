/* cli_session.h: a stored session or all-out test loaded and cleaned again, shared by 'session',
 * 'allout' and 'energy'. */
#ifndef CPDOMAIN_CLI_SESSION_H
#define CPDOMAIN_CLI_SESSION_H

#include "cli.h"
#include "cpdomain/session.h"

/* Loads session (allout 0) or all-out test (1) id and cleans its samples by the rules of session.h
 * with the spike limit used at import. Returns 0 or an exit code after printing why. On success the
 * caller frees *x with cpd_store_samples_free and *w with cpd_session_free; s points into *w. */
int cli_session_load_clean(cli_ctx *c, long long id, int allout, cpd_session_rec *r, cpd_session_samples **x,
                           cpd_session_ws **w, cpd_session *s);

#endif
