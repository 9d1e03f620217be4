/* cli_domains_json.c: the JSON of an athlete's domains (the library's, export_domains.c) in a
 * command's document, and the notes beside the domains, for 'domains' and 'sheet'. */
#include "cli_domains_json.h"

const char CLI_MRT_MISSING_NOTE[] =
    "The newest ramp has a GET but no MRT: give 'ramp add --mrt' for its constant-power equivalent.";
const char CLI_NO_VCO2_NOTE[] =
    "The newest ramp has VO2 only (no VCO2): its GET cannot be computed; a reviewer's GET can be given as "
    "power with 'ramp set ID --get-power W'.";

void cli_domains_json(cli_json *doc, const cli_domains *d)
{
    /* a cli_json is a cJSON object (cli_out.c) */
    cpd_athlete_domains_json_add((struct cJSON *)(void *)doc, d);
}
