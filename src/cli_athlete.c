/* cli_athlete.c: the athlete layer's notes and failures on the command line. */
#include "cli_athlete.h"

void cli_athlete_notes(cli_ctx *c, const cpd_athlete_notes *n)
{
    for (size_t i = 0; i < n->n; i++) {
        if (n->error[i])
            cli_fail(c, CPD_OK, "%s", n->text[i]);
        else
            cli_note(c, "%s", n->text[i]);
    }
}

int cli_athlete_fail(cli_ctx *c, int rc, const char *msg)
{
    if (c->store)
        cpd_store_rollback(c->store);
    return cli_fail(c, rc, "%s", msg[0] ? msg : cpd_strerror(rc));
}
