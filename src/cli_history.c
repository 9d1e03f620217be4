/* cli_history.c: the library's season of an athlete (athlete_domains.c) with the command line's
 * messages, and its plot; for 'history' and the sheet's trend. */
#include "cli_history.h"
#include "cpdomain/plots.h"

#include <math.h>

int cli_history_build(cli_ctx *c, const char *code, int win, const char *model, int quiet_few, cli_history *a)
{
    cpd_pd_model m = CPD_PD_HYPERBOLIC;
    if (model)
        cpd_pd_model_parse(model, &m);
    char msg[CPD_MSG_MAX] = "";
    int rc = cpd_athlete_history_build(c->store, code, win, model != NULL, m, a, msg);
    if (quiet_few) /* the team view lists athletes with too few trials without complaint */
        return rc ? cli_exit_code(rc) : 0;
    cli_athlete_notes(c, &a->f.notes);
    return rc ? cli_athlete_fail(c, rc, msg) : 0;
}

int cli_history_plot(const cli_history *a, char **svg)
{
    size_t nb = a->h->nblocks;
    int day[CPD_HISTORY_MAX_BLOCKS];
    double v[CPD_HISTORY_MAX_BLOCKS], lo[CPD_HISTORY_MAX_BLOCKS], hi[CPD_HISTORY_MAX_BLOCKS];
    for (size_t k = 0; k < nb && k < CPD_HISTORY_MAX_BLOCKS; k++) {
        const cpd_history_block *x = &a->h->block[k];
        day[k] = x->to_day;
        v[k] = x->fitted ? x->cp : NAN;
        lo[k] = x->fitted && x->has_se ? x->cp_ci95[0] : NAN;
        hi[k] = x->fitted && x->has_se ? x->cp_ci95[1] : NAN;
    }
    int spd = a->f.modality == CPD_PD_SPEED;
    return cpd_plot_trend(day, v, lo, hi, nb < CPD_HISTORY_MAX_BLOCKS ? nb : CPD_HISTORY_MAX_BLOCKS,
                          spd ? "Critical speed over the season" : "Critical power over the season",
                          spd ? "CS (m/s)" : "CP (W)", svg);
}

