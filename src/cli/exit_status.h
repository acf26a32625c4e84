/*
 * exit_status.h - the one table of the program's exit statuses.  Every
 * command returns one of these; the core and the session layer return
 * their own status codes, and the cli_exit_* functions here map them.
 * The usage texts and the man page's EXIT STATUS section are written from
 * this table (tests/cli/exit_status.sh checks the man page against it).
 */
#ifndef BIASLINE_EXIT_STATUS_H
#define BIASLINE_EXIT_STATUS_H

#include <stddef.h>
#include <stdio.h>

#include "core/solve.h"
#include "session/session.h"

/* Exit statuses (64 and up are the sysexits.h values). */
enum exit_code {
	EXIT_OK_CODE = 0,
	EXIT_NO_POINT = 3,      /* no operating point (or no design value) */
	EXIT_NOT_REACHED = 4,   /* points exist; the requested method missed them */
	EXIT_USAGE = 64,        /* bad command line */
	EXIT_DATA = 65,         /* bad data in a session file */
	EXIT_NO_INPUT = 66,     /* a file cannot be read */
	EXIT_NO_TERMINAL = 69,  /* the front end has no usable terminal */
	EXIT_SOFTWARE = 70,     /* an internal error */
	EXIT_CANT_CREATE = 73,  /* a file cannot be created or replaced */
	EXIT_IO = 74,           /* writing the output failed */
};

/* One row of the table: the status and what it means. */
struct exit_status_info {
	enum exit_code code;
	const char *meaning;
};

/* The table, in increasing order of code; N entries in *N. */
const struct exit_status_info *exit_status_table(size_t *n);

/* What CODE means ("bad command line"); "" for a code not in the table. */
const char *exit_status_meaning(enum exit_code code);

/*
 * Print "Exit status:" and one line per code of CODES (N of them) from the
 * table, for a command's --help.
 */
void exit_status_usage(FILE *out, const enum exit_code *codes, size_t n);

/* The exit status for a session load or save status. */
enum exit_code cli_exit_from_session(enum session_status st);

/* The exit status for a solve status. */
enum exit_code cli_exit_from_solve(enum solve_status st);

/*
 * Flush standard output and report a failed write: when anything written
 * to it (now or before) failed, print "biasline CMD: cannot write the
 * output: REASON" to standard error and return EXIT_IO; else return RC.
 * Every command's exit goes through this (main.c).
 */
int cli_finish_output(const char *cmd, int rc);

#endif
