/*
 * cli_progress.h - a long command's progress on standard error, and the
 * signals that stop it.
 *
 * While a watched computation runs (cli_progress_begin .. _end), SIGINT,
 * SIGTERM, SIGQUIT and SIGHUP only set the stop flag the core reads at
 * every item of work (progress.h), so the command stops within one item
 * (well under 50 ms) and can say how far it got; cli_progress_end
 * restores the signals and returns the one that came, for the caller to
 * re-raise after its message (the shell then sees the usual "killed by
 * the signal" status).  When the work has run for more than a second and
 * standard error is a terminal, one line shows the fraction done, redrawn
 * at most every 200 ms and cleared at the end; otherwise nothing is
 * written.
 */
#ifndef BIASLINE_CLI_PROGRESS_H
#define BIASLINE_CLI_PROGRESS_H

#include <stdbool.h>

#include "core/progress.h"

/* One watched computation. */
struct cli_progress {
	struct progress core;    /* hand &core to the _watched call */
	const char *what;        /* "biasline tolerance: Monte Carlo" */
	double start, last;      /* seconds on a monotonic clock */
	bool tty, shown;
};

/* Start watching: install the signal handlers and the reporter. */
void cli_progress_begin(struct cli_progress *p, const char *what);

/* Stop watching: clear the line, restore the signals; the signal that
 * stopped the work, or 0. */
int cli_progress_end(struct cli_progress *p);

/* Re-raise SIG (nonzero) with its default action: the process ends the
 * way the signal would have ended it. */
void cli_progress_reraise(int sig);

#endif
