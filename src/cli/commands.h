/*
 * commands.h - the subcommands of the biasline program.  Each takes the
 * arguments after the subcommand name (argv[0] is the subcommand) and
 * returns the process exit status (exit_status.h).
 */
#ifndef BIASLINE_COMMANDS_H
#define BIASLINE_COMMANDS_H

#include "exit_status.h"

int cmd_solve(int argc, char **argv);
int cmd_check(int argc, char **argv);
int cmd_tidy(int argc, char **argv);
int cmd_plot(int argc, char **argv);
int cmd_reduce(int argc, char **argv);
int cmd_design(int argc, char **argv);
int cmd_sweep(int argc, char **argv);
int cmd_tolerance(int argc, char **argv);
int cmd_fit(int argc, char **argv);
/* The terminal front end: biasline [options] [FILE]. */
int cmd_tui(int argc, char **argv);
int cmd_report(int argc, char **argv);

#endif
