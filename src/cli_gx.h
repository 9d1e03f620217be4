/* cli_gx.h: the CLI's bridge from stored gas-exchange tests to their analyses, shared by ramp,
 * bout, domains and sheet. */
#ifndef CPDOMAIN_CLI_GX_H
#define CPDOMAIN_CLI_GX_H

#include "cli.h"
#include "cpdomain/kinetics.h"
#include "cpdomain/ramp.h"

/* Loads ramp id with its athlete and analyses it with the stored options (onset, baseline, MRT,
 * manual thresholds) and the optional overrides (NULL: defaults). Returns 0, or an exit code after
 * printing why. On success the caller frees *w with cpd_ramp_free. */
int cli_ramp_analyse(cli_ctx *c, long long id, const char *window, const char *outlier, const char *mrt,
                     cpd_gx_test *t, cpd_athlete *a, cpd_ramp_ws **w, cpd_ramp_result *r);

/* Analyses stored bouts ids ("4", or "3,4,5" for repeats of one transition: one athlete, intensities
 * within 5 %) as 'bout show' does with its default options, VO2peak from the athlete's newest ramp of
 * the bouts' modality. Opens the store when it is not open. Returns 0, or an exit code after printing
 * why (bad ids 64, unknown bout 65, too short, no baseline or no convergence 69). */
int cli_bout_analyse(cli_ctx *c, const char *ids, cpd_kinetics_result *r);
 
/* Analyses bouts ids as 'bout plot' does and renders the kinetics chart into *svg (the caller frees
 * it with free()); summary (n bytes, may be NULL) receives one sentence with tau, gain and the slow
 * component. Returns 0 or an exit code after printing why. */
int cli_bout_plot(cli_ctx *c, const char *ids, char **svg, char *summary, size_t n);

#endif
