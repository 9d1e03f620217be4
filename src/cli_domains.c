/* cli_domains.c: the library's domains of an athlete (athlete_domains.c) with the command line's
 * messages, and intensities in words. */
#include "cli_domains.h"
#include "cpdomain/units.h"

#include <stdio.h>
#include <string.h>

const char *cli_domains_fmt(const cli_domains *d, double v, char *buf, size_t n)
{
    char num[32];
    if (d->fit.modality == CPD_PD_POWER)
        snprintf(buf, n, "%s W", cli_num(num, sizeof num, v, 0));
    else {
        const char *lab;
        double per = cli_pd_pace_m(&d->fit.athlete, &lab);
        char pace[32];
        cpd_format_pace(v, per, pace, sizeof pace);
        snprintf(buf, n, "%s m/s (%s%s)", cli_num(num, sizeof num, v, 2), pace, lab);
    }
    return buf;
}

int cli_domains_build(cli_ctx *c, const char *code, const char *from, const char *to, const char *model,
                      int stale_days, cli_domains *d)
{
    memset(d, 0, sizeof *d);
    cpd_athlete_query q = {.from = from, .to = to, .stale_days = stale_days, .today = c->today};
    if (model) {
        if (cpd_pd_model_parse(model, &q.model))
            return cli_usage("domains", "--model: '%s' is not a model", model);
        q.has_model = 1;
    }
    char msg[CPD_MSG_MAX] = "";
    int rc = cpd_athlete_domains_build(c->store, code, &q, d, msg);
    cli_athlete_notes(c, &d->notes);
    return rc ? cli_athlete_fail(c, rc, msg) : 0;
}
