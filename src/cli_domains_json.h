/* cli_domains_json.h: an athlete's domains as JSON keys and the heart-rate caution, shared by
 * 'domains' and 'sheet'. */
#ifndef CPDOMAIN_CLI_DOMAINS_JSON_H
#define CPDOMAIN_CLI_DOMAINS_JSON_H

#include "cli_domains.h"

/* The caution printed beside every heart-rate target (the library's text). */
#define CLI_HR_CAUTION CPD_ATHLETE_HR_CAUTION

/* The note when the newest ramp has a GET but no MRT (no constant-power equivalent). */
extern const char CLI_MRT_MISSING_NOTE[];
extern const char CLI_NO_VCO2_NOTE[];

/* Adds the keys of 'domains --json' (athlete, modality, model, boundaries, stale, targets,
 * heavy_ceiling_w|_m_s, time_to_vo2max_s, severe_efforts, delta, flags, fit_flags, hr_caution,
 * caution) to object o. */
void cli_domains_json(cli_json *o, const cli_domains *d);

#endif
