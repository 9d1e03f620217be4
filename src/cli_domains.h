/* cli_domains.h: an athlete's domains from the library (cpdomain/athlete.h) with the command
 * line's messages; shared by 'domains', 'fit' (the plot), 'predict', 'sheet' and 'energy'. */
#ifndef CPDOMAIN_CLI_DOMAINS_H
#define CPDOMAIN_CLI_DOMAINS_H

#include "cli_pd.h"
#include "cpdomain/domains.h"

/* The library's answer: the fit, the model, what the boundaries rest on, boundaries and targets. */
typedef cpd_athlete_domains cli_domains;

/* cpd_athlete_domains_build for athlete code with its notes printed: fit (dates from/to, model
 * NULL for the best; without dates the newest block of trials when it holds 3 or more, see
 * older_trials), the newest ramp and lactate test of the fit's modality, and staleness against
 * stale_days (0: default) and the run's today. Returns 0 or an exit code after printing why. The
 * caller frees d with cli_domains_free. */
int cli_domains_build(cli_ctx *c, const char *code, const char *from, const char *to, const char *model,
                      int stale_days, cli_domains *d);
#define cli_domains_free cpd_athlete_domains_free

/* Intensity for people in the fit's modality: "287 W" or "4.52 m/s (3:41/km)". */
const char *cli_domains_fmt(const cli_domains *d, double v, char *buf, size_t n);

#endif
