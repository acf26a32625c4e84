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
 *
 * A limit in time stands beside the limit in count: from its first
 * second of processor time to its tenth the work's whole length is
 * estimated from the fraction done (processor time: a loaded machine
 * does not stretch it), and work that would take longer than CLI_WORK_LIMIT
 * seconds is stopped there (OVER set), for the caller to say how much
 * would fit (cli_progress_over).
 */
#ifndef BIASLINE_CLI_PROGRESS_H
#define BIASLINE_CLI_PROGRESS_H

#include <stdbool.h>

#include "core/progress.h"

/* Seconds a command's long work may take (10 minutes) unless
 * BIASLINE_WORK_LIMIT says otherwise (cli_progress_limit). */
#define CLI_WORK_LIMIT 600.0
/* The largest limit BIASLINE_WORK_LIMIT may set (a day). */
#define CLI_WORK_LIMIT_MAX 86400.0

/* The limit in time of a command's long work: BIASLINE_WORK_LIMIT when it
 * is a number of seconds from 1 to CLI_WORK_LIMIT_MAX, else
 * CLI_WORK_LIMIT. */
double cli_progress_limit(void);

/* One watched computation. */
struct cli_progress {
	struct progress core;    /* hand &core to the _watched call */
	const char *what;        /* "biasline tolerance: Monte Carlo" */
	double start, last;      /* seconds on a monotonic clock */
	bool tty, shown;
	double cpu0, checked;    /* processor seconds at the start; when
	                            the estimate was last looked at */
	double limit;            /* seconds, or 0: no limit in time */
	bool over;               /* stopped: the estimate passed LIMIT */
	double estimate;         /* then the whole work's estimate, seconds */
};

/* Start watching: install the signal handlers and the reporter; the
 * work may take up to LIMIT seconds (0: no limit). */
void cli_progress_begin(struct cli_progress *p, const char *what,
                        double limit);

/* Stop watching: clear the line, restore the signals; the signal that
 * stopped the work, or 0. */
int cli_progress_end(struct cli_progress *p);

/*
 * When P was stopped by its limit in time, say on standard error that
 * COUNT items (NOUN: "Monte Carlo trials") of CMD on FILE would take
 * about its estimate, and how many fit, to be given with OPTION
 * ("--trials"); returns true.  False when P was not over its limit.
 */
bool cli_progress_over(const struct cli_progress *p, const char *cmd,
                       const char *file, unsigned long long count,
                       const char *noun, const char *option);

/* Re-raise SIG (nonzero) with its default action: the process ends the
 * way the signal would have ended it. */
void cli_progress_reraise(int sig);

#endif
