/*
 * commands.h - the subcommands of the biasline program.  Each takes the
 * arguments after the subcommand name (argv[0] is the subcommand) and
 * returns the process exit status (exit_codes below).
 */
#ifndef BIASLINE_COMMANDS_H
#define BIASLINE_COMMANDS_H

/* Exit statuses shared by every subcommand (sysexits.h values). */
enum exit_code {
	EXIT_OK_CODE = 0,
	EXIT_NO_POINT = 3,      /* solve: no operating point found */
	EXIT_USAGE = 64,        /* bad command line */
	EXIT_DATA = 65,         /* bad data in a session file */
	EXIT_NO_INPUT = 66,     /* a file cannot be read */
	EXIT_SOFTWARE = 70,     /* an internal error */
	EXIT_CANT_CREATE = 73,  /* a file cannot be written */
	EXIT_IO = 74,           /* an I/O error while writing */
};

int cmd_solve(int argc, char **argv);
int cmd_check(int argc, char **argv);
int cmd_tidy(int argc, char **argv);
int cmd_plot(int argc, char **argv);
int cmd_reduce(int argc, char **argv);
int cmd_design(int argc, char **argv);
int cmd_sweep(int argc, char **argv);
int cmd_tolerance(int argc, char **argv);
/* The terminal front end: biasline [options] [FILE]. */
int cmd_tui(int argc, char **argv);

#endif
