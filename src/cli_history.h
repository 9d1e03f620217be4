/* cli_history.h: one athlete's season for 'history' and the sheet's trend (cli_history.c). */
#ifndef CPDOMAIN_CLI_HISTORY_H
#define CPDOMAIN_CLI_HISTORY_H

#include "cli_pd.h"
#include "cpdomain/history.h"

/* The library's season: the athlete's trials (f), blocks, fits, attached ramps, changes (h), the
 * block window in days (win). */
typedef cpd_athlete_history cli_history;

/* Builds the season of athlete code: blocks of trials within win days, each fitted (model NULL:
 * the block's best), the ramps' GET equivalent and VO2peak attached. quiet_few silences the
 * notes of the fit. Returns 0 or an exit code after printing why. Free with cli_history_free. */
int cli_history_build(cli_ctx *c, const char *code, int win, const char *model, int quiet_few, cli_history *a);
#define cli_history_free cpd_athlete_history_free
/* The season plot: CP (CS) of every block at its last date with the 95 % interval (cpd_plot_trend),
 * as the sheet and 'history -o' draw it. *svg as cpd_plot_trend gives it; returns its status. */
int cli_history_plot(const cli_history *a, char **svg);

#endif
