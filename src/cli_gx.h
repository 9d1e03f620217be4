/* cli_gx.h: the command line's view of stored gas-exchange tests analysed by the library
 * (cpdomain/athlete.h): option strings turned into overrides, failures into messages. Shared by
 * ramp, bout, energy, history and sheet; implemented in cli_gx.c, not in a command file. */
#ifndef CPDOMAIN_CLI_GX_H
#define CPDOMAIN_CLI_GX_H

#include "cli_athlete.h"
#include "cpdomain/kinetics.h"
#include "cpdomain/ramp.h"

/* Loads ramp id with its athlete and analyses it with the stored options (onset, baseline, MRT,
 * manual thresholds) and the optional overrides (NULL: defaults). Returns 0, or an exit code after
 * printing why. On success the caller frees *w with cpd_ramp_free. */
int cli_ramp_analyse(cli_ctx *c, long long id, const char *window, const char *outlier, const char *mrt,
                     cpd_gx_test *t, cpd_athlete *a, cpd_ramp_ws **w, cpd_ramp_result *r);

/* Splits "3,4,5" into at most CPD_ATHLETE_BOUTS_MAX distinct ids (*n of them). Returns 0 or 64
 * after printing why (cmd names the command in the message). */
int cli_bout_ids(const char *cmd, const char *text, long long *ids, size_t *n);

/* cpd_athlete_bouts_analyse with its notes printed and its failure reported: a usage error (ids
 * that are not repeats of one transition, --fit-end beyond the data) as cmd's, others with the
 * message. Returns 0 or an exit code; the caller frees b with cpd_athlete_bouts_free either way. */
int cli_bouts_load(cli_ctx *c, const char *cmd, const long long *ids, size_t n, const cpd_kinetics_opts *ko,
                   cpd_athlete_bouts *b);

/* Analyses stored bouts ids ("4", or "3,4,5" for repeats of one transition: one athlete, intensities
 * within 5 %) as 'bout show' does with its default options, VO2peak from the athlete's newest ramp of
 * the bouts' modality. Opens the store when it is not open. Returns 0, or an exit code after printing
 * why (bad ids 64, unknown bout 65, too short, no baseline or no convergence 69). */
int cli_bout_analyse(cli_ctx *c, const char *ids, cpd_kinetics_result *r);

/* The kinetics chart of analysed bouts b (ids as typed, for the title) into *svg (the caller frees
 * it with free()); summary (n bytes, may be NULL) receives one sentence with tau, gain and the slow
 * component. Returns 0 or an exit code after printing why. */
int cli_bout_plot_of(cli_ctx *c, const char *ids, const cpd_athlete_bouts *b, char **svg, char *summary, size_t n);

/* Analyses bouts ids as 'bout plot' does with its default options and renders the chart as
 * cli_bout_plot_of does. */
int cli_bout_plot(cli_ctx *c, const char *ids, char **svg, char *summary, size_t n);

#endif
