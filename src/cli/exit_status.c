/*
 * exit_status.c - the table of exit statuses and the maps from the core's
 * and the session layer's own status codes (see exit_status.h).
 */
#include "exit_status.h"

#include <errno.h>
#include <string.h>

static const struct exit_status_info exit_table[] = {
	{ EXIT_OK_CODE, "success" },
	{ EXIT_NO_POINT, "no operating point (or no value meets the target)" },
	{ EXIT_NOT_REACHED, "the requested method reached no operating point, "
	  "though one exists (the points are listed)" },
	{ EXIT_USAGE, "bad command line" },
	{ EXIT_DATA, "bad data in a session file or a file it names" },
	{ EXIT_NO_INPUT, "a file cannot be read" },
	{ EXIT_NO_TERMINAL, "the front end found no usable terminal" },
	{ EXIT_SOFTWARE, "an internal error" },
	{ EXIT_CANT_CREATE, "a file cannot be created or replaced" },
	{ EXIT_IO, "writing the output (standard output or a file) failed" },
};

/* The table. */
const struct exit_status_info *exit_status_table(size_t *n)
{
	*n = sizeof exit_table / sizeof exit_table[0];
	return exit_table;
}

/* What CODE means. */
const char *exit_status_meaning(enum exit_code code)
{
	for (size_t k = 0; k < sizeof exit_table / sizeof exit_table[0]; k++)
		if (exit_table[k].code == code)
			return exit_table[k].meaning;
	return "";
}

/* The exit-status lines of a command's usage. */
void exit_status_usage(FILE *out, const enum exit_code *codes, size_t n)
{
	fprintf(out, "\nExit status:\n");
	for (size_t k = 0; k < n; k++)
		fprintf(out, "  %-3d %s\n", (int)codes[k],
		        exit_status_meaning(codes[k]));
}

/* Session status to exit status. */
enum exit_code cli_exit_from_session(enum session_status st)
{
	switch (st) {
	case SESSION_OK:
		return EXIT_OK_CODE;
	case SESSION_BAD_DATA:
		return EXIT_DATA;
	case SESSION_NO_INPUT:
		return EXIT_NO_INPUT;
	case SESSION_CANT_WRITE:
		return EXIT_CANT_CREATE;
	case SESSION_IO_ERROR:
		return EXIT_IO;
	}
	return EXIT_SOFTWARE;
}

/* Solve status to exit status. */
enum exit_code cli_exit_from_solve(enum solve_status st)
{
	switch (st) {
	case SOLVE_OK:
		return EXIT_OK_CODE;
	case SOLVE_NONE:
	case SOLVE_FAILED:
		return EXIT_NO_POINT;
	case SOLVE_BAD_INPUT:
		return EXIT_DATA;
	}
	return EXIT_SOFTWARE;
}

/* Flush standard output; a failed write anywhere is EXIT_IO. */
int cli_finish_output(const char *cmd, int rc)
{
	errno = 0;
	int bad = fflush(stdout) != 0;
	int err = errno;
	bad |= ferror(stdout) != 0;
	/* Closing reports what a flush cannot (a file system that fails late). */
	if (fclose(stdout) != 0 && !bad) {
		bad = 1;
		err = errno;
	}
	if (!bad)
		return rc;
	fprintf(stderr, "biasline%s%s: cannot write the output: %s\n",
	        cmd != NULL ? " " : "", cmd != NULL ? cmd : "",
	        err != 0 ? strerror(err) : "write error");
	return EXIT_IO;
}
