/* cli_squad.h: the athletes of a squad, for the commands that take --squad (athlete list,
 * sheet --all). */
#ifndef CPDOMAIN_CLI_SQUAD_H
#define CPDOMAIN_CLI_SQUAD_H

#include "cli.h"

/* The athletes ordered by code, every one (squad NULL) or those of squad only, in *v, with each
 * one's squad name ("" when in none) at the same index of *sq; the caller frees both with free().
 * *any is 1 when some athlete listed is in a squad. An unknown squad is refused with a "did you
 * mean". Returns 0, or an exit code after printing why. */
int cli_squad_athletes(cli_ctx *c, const char *squad, cpd_athlete **v, cpd_athlete_squad **sq, size_t *n, int *any);

#endif
