/* cli_athlete.h: how the command line shows what the library's athlete layer (cpdomain/athlete.h)
 * returns: its notes on stderr, its failures as exit codes. */
#ifndef CPDOMAIN_CLI_ATHLETE_H
#define CPDOMAIN_CLI_ATHLETE_H

#include "cli.h"
#include "cpdomain/athlete.h"

/* Prints the notes in order: a skipped test's failure as "cpdomain: ..." (not while a fallback
 * lookup runs), an informational note unless --quiet. */
void cli_athlete_notes(cli_ctx *c, const cpd_athlete_notes *n);

/* A failure of the athlete layer: rolls back the store and prints "cpdomain: msg"; returns the
 * exit code of rc. */
int cli_athlete_fail(cli_ctx *c, int rc, const char *msg);

#endif
