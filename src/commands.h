/* commands.h: the command handlers; main.c lists them in its table, one row each. */
#ifndef CPDOMAIN_COMMANDS_H
#define CPDOMAIN_COMMANDS_H

#include "cli.h"

int cmd_init(cli_ctx *c, int argc, char **argv);
int cmd_athlete(cli_ctx *c, int argc, char **argv);
int cmd_trial(cli_ctx *c, int argc, char **argv);
int cmd_fit(cli_ctx *c, int argc, char **argv);
int cmd_predict(cli_ctx *c, int argc, char **argv);
int cmd_solve(cli_ctx *c, int argc, char **argv);
int cmd_ramp(cli_ctx *c, int argc, char **argv);
int cmd_lactate(cli_ctx *c, int argc, char **argv);
int cmd_domains(cli_ctx *c, int argc, char **argv);
int cmd_history(cli_ctx *c, int argc, char **argv);
int cmd_export(cli_ctx *c, int argc, char **argv);
int cmd_import(cli_ctx *c, int argc, char **argv);
int cmd_bout(cli_ctx *c, int argc, char **argv);
int cmd_sheet(cli_ctx *c, int argc, char **argv);
int cmd_session(cli_ctx *c, int argc, char **argv);
int cmd_allout(cli_ctx *c, int argc, char **argv);
int cmd_curve(cli_ctx *c, int argc, char **argv);
int cmd_energy(cli_ctx *c, int argc, char **argv);
int cmd_squad(cli_ctx *c, int argc, char **argv);
int cmd_server(cli_ctx *c, int argc, char **argv);

#endif
