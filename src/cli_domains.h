/* cli_domains.h: gathering an athlete's tests from the store into the domains module's input;
 * shared by 'domains', 'predict' and 'sheet'. */
#ifndef CPDOMAIN_CLI_DOMAINS_H
#define CPDOMAIN_CLI_DOMAINS_H

#include "cli_pd.h"
#include "cpdomain/domains.h"

typedef struct {
    cli_pd_fit fit;               /* the power-duration fit (all models) */
    cpd_pd_model model;           /* the model the boundaries use */
    cpd_domains_input in;         /* what the boundaries rest on */
    cpd_domains_result res;       /* boundaries and targets */
    int has_ramp;                 /* 1 when a ramp of the athlete's modality was analysed */
    long long ramp_id;
    char ramp_date[11];
    int ramp_mrt_missing;         /* 1 when the ramp had no MRT: no constant-power equivalent */
    int ramp_no_vco2;             /* 1 when the ramp is VO2-only: GET and RCP cannot be computed */
    size_t older_trials;          /* trials before the newest block, left out of the boundaries */
} cli_domains;

/* Builds the domains of athlete code: fit (dates from/to, model NULL for the best; without dates
 * the newest block of trials when it holds 3 or more, see older_trials), the newest
 * ramp and lactate test of the fit's modality, and staleness against stale_days (0: default).
 * Returns 0 or an exit code after printing why. The caller frees d with cli_domains_free. */
int cli_domains_build(cli_ctx *c, const char *code, const char *from, const char *to, const char *model,
                      int stale_days, cli_domains *d);
void cli_domains_free(cli_domains *d);

/* Intensity for people in the fit's modality: "287 W" or "4.52 m/s (3:41/km)". */
const char *cli_domains_fmt(const cli_domains *d, double v, char *buf, size_t n);

#endif
