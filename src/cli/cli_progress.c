/*
 * cli_progress.c - progress on standard error and stop signals for a
 * long command (see cli_progress.h).
 */
#include "cli_progress.h"

#include <signal.h>
#include <stdio.h>
#include <string.h>
#include <time.h>
#include <unistd.h>

/* The signals that stop a watched computation. */
static const int cli_progress_signals[] = { SIGINT, SIGTERM, SIGQUIT, SIGHUP };
#define CLI_NSIG (sizeof cli_progress_signals / sizeof cli_progress_signals[0])

/*
 * The stop flag and the signal that set it.  A signal handler can reach
 * nothing else, so these two are file-level; they are written only by
 * the handler and cleared by cli_progress_begin.
 */
static volatile sig_atomic_t cli_stop;
static volatile sig_atomic_t cli_stop_sig;
static struct sigaction cli_saved[CLI_NSIG];

/* Note the signal and ask the work to stop. */
static void cli_progress_handler(int sig)
{
	cli_stop_sig = sig;
	cli_stop = 1;
}

/* Seconds on the monotonic clock. */
static double cli_progress_now(void)
{
	struct timespec ts;
	clock_gettime(CLOCK_MONOTONIC, &ts);
	return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

/* The core's report: draw the line after a second, every 200 ms. */
static void cli_progress_report(void *ctx, double done)
{
	struct cli_progress *p = ctx;
	if (!p->tty)
		return;
	double t = cli_progress_now();
	if (t - p->start < 1.0 || (p->shown && t - p->last < 0.2))
		return;
	p->last = t;
	p->shown = true;
	double left = done > 0.0 ? (t - p->start) * (1.0 - done) / done : 0.0;
	fprintf(stderr, "\r%s: %3.0f %% done, about %.0f s left (Ctrl-C "
	        "stops)\x1b[K", p->what, 100.0 * done, left);
	fflush(stderr);
}

/* Start watching. */
void cli_progress_begin(struct cli_progress *p, const char *what)
{
	memset(p, 0, sizeof *p);
	p->what = what;
	p->start = p->last = cli_progress_now();
	p->tty = isatty(STDERR_FILENO) != 0;
	cli_stop = 0;
	cli_stop_sig = 0;
	p->core.stop = &cli_stop;
	p->core.report = cli_progress_report;
	p->core.ctx = p;
	struct sigaction sa;
	memset(&sa, 0, sizeof sa);
	sa.sa_handler = cli_progress_handler;
	sigemptyset(&sa.sa_mask);
	for (size_t k = 0; k < CLI_NSIG; k++)
		sigaction(cli_progress_signals[k], &sa, &cli_saved[k]);
}

/* Stop watching. */
int cli_progress_end(struct cli_progress *p)
{
	for (size_t k = 0; k < CLI_NSIG; k++)
		sigaction(cli_progress_signals[k], &cli_saved[k], NULL);
	if (p->shown) {
		fputs("\r\x1b[K", stderr);
		fflush(stderr);
	}
	return cli_stop ? (int)cli_stop_sig : 0;
}

/* Re-raise SIG with its default action. */
void cli_progress_reraise(int sig)
{
	if (sig == 0)
		return;
	fflush(stdout);
	fflush(stderr);
	signal(sig, SIG_DFL);
	raise(sig);
}
