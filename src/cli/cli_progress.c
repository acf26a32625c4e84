/*
 * cli_progress.c - progress on standard error and stop signals for a
 * long command (see cli_progress.h).
 */
#include "cli_progress.h"

#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
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

/* Seconds of processor time this process has used. */
static double cli_progress_cpu(void)
{
	struct timespec ts;
	clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &ts);
	return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

/* The core's report: from the first second to the tenth, stop work
 * whose estimate passes the limit; draw the line after a second, every
 * 200 ms. */
static void cli_progress_report(void *ctx, double done)
{
	struct cli_progress *p = ctx;
	if (done < 0.0 || (!p->tty && p->limit <= 0.0))
		return;
	double t = cli_progress_now();
	/* The estimate is of processor time, which a loaded machine does
	 * not stretch; looked at every 100 ms. */
	if (p->limit > 0.0 && done > 0.0 && !p->over && t - p->checked >= 0.1) {
		p->checked = t;
		double cpu = cli_progress_cpu() - p->cpu0;
		if (cpu >= 1.0 && cpu <= 10.0 && cpu / done > p->limit) {
			p->over = true;
			p->estimate = cpu / done;
			cli_stop = 1;
		}
	}
	if (!p->tty)
		return;
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
void cli_progress_begin(struct cli_progress *p, const char *what,
                        double limit)
{
	memset(p, 0, sizeof *p);
	p->what = what;
	p->limit = limit;
	p->start = p->last = p->checked = cli_progress_now();
	p->cpu0 = cli_progress_cpu();
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

/* The limit in time of a command's long work. */
double cli_progress_limit(void)
{
	const char *e = getenv("BIASLINE_WORK_LIMIT");
	if (e == NULL || *e == '\0')
		return CLI_WORK_LIMIT;
	char *end;
	double v = strtod(e, &end);
	if (*end != '\0' || !(v >= 1.0 && v <= CLI_WORK_LIMIT_MAX))
		return CLI_WORK_LIMIT;
	return v;
}

/* SECONDS in words: "40 s", "12 min", "3.1 h". */
static void cli_progress_duration(char *buf, size_t n, double seconds)
{
	if (seconds < 120.0)
		snprintf(buf, n, "%.0f s", seconds);
	else if (seconds < 7200.0)
		snprintf(buf, n, "%.0f min", seconds / 60.0);
	else
		snprintf(buf, n, "%.2g h", seconds / 3600.0);
}

/* Say how much would fit when P ran over its limit. */
bool cli_progress_over(const struct cli_progress *p, const char *cmd,
                       const char *file, unsigned long long count,
                       const char *noun, const char *option)
{
	if (!p->over)
		return false;
	char est[32], lim[32];
	cli_progress_duration(est, sizeof est, p->estimate);
	cli_progress_duration(lim, sizeof lim, p->limit);
	/* what fits, rounded down to two figures */
	double fit = (double)count * p->limit / p->estimate;
	double mag = 1.0;
	while (fit >= 100.0 * mag)
		mag *= 10.0;
	unsigned long long k = (unsigned long long)(fit / mag) *
	                       (unsigned long long)mag;
	fprintf(stderr, "biasline %s: %s: %llu %s would take about %s of "
	        "processor time (from the first second), more than the %s a command may take; "
	        "about %llu fit: %s %llu\n", cmd, file, count, noun, est, lim,
	        k, option, k > 0 ? k : 1);
	return true;
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
