/* cli_squad.c: the athletes of a squad (cli_squad.h). */
#include "cli_squad.h"

#include <stdlib.h>
#include <string.h>

int cli_squad_athletes(cli_ctx *c, const char *squad, cpd_athlete **v, cpd_athlete_squad **sq, size_t *n, int *any)
{
    *v = NULL;
    *sq = NULL;
    *n = 0;
    *any = 0;
    cpd_athlete *all = NULL;
    cpd_athlete_squad *pairs = NULL;
    size_t na = 0, np = 0;
    int rc = cpd_store_athlete_squads(c->store, squad, &pairs, &np);
    if (!rc)
        rc = cpd_store_athlete_list(c->store, &all, &na);
    if (rc) {
        free(pairs);
        return cli_store_fail(c, rc);
    }
    cpd_athlete_squad *mine = calloc(na ? na : 1, sizeof *mine);
    if (!mine) {
        free(all);
        free(pairs);
        return cli_fail(c, CPD_ENOMEM, "out of memory");
    }
    /* both lists are by code; the engine's collation may order codes otherwise than strcmp, so each
     * athlete is looked up (a lab's athletes are few) */
    size_t k = 0;
    for (size_t i = 0; i < na; i++) {
        const cpd_athlete_squad *p = NULL;
        for (size_t j = 0; j < np && !p; j++)
            if (strcmp(pairs[j].code, all[i].code) == 0)
                p = &pairs[j];
        if (!p)
            continue; /* not in the squad asked for */
        all[k] = all[i];
        mine[k] = *p;
        *any |= p->squad[0] != '\0';
        k++;
    }
    free(pairs);
    *v = all;
    *sq = mine;
    *n = k;
    return 0;
}
