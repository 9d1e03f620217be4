/* cli_gx.h: the CLI's bridge from stored gas-exchange tests to their analyses, shared by ramp,
 * bout, domains and sheet. */
#ifndef CPDOMAIN_CLI_GX_H
#define CPDOMAIN_CLI_GX_H

#include "cli.h"
#include "cpdomain/ramp.h"

/* Loads ramp id with its athlete and analyses it with the stored options (onset, baseline, MRT,
 * manual thresholds) and the optional overrides (NULL: defaults). Returns 0, or an exit code after
 * printing why. On success the caller frees *w with cpd_ramp_free. */
int cli_ramp_analyse(cli_ctx *c, long long id, const char *window, const char *outlier, const char *mrt,
                     cpd_gx_test *t, cpd_athlete *a, cpd_ramp_ws **w, cpd_ramp_result *r);

#endif
