/*
 * progress.h - how a long computation (a Monte Carlo run, a worst case,
 * a sweep) is asked to stop and says how far it has come.  The caller
 * owns both: a flag that a signal handler may set, read at every
 * evaluation (one solve: well under 50 ms), and a report function called
 * at every item of work (a trial, a corner, a sweep point) with the
 * fraction done and, between items, at every look at the flag with a
 * negative fraction ("still working").  The report decides for itself,
 * from its own clock, whether to draw anything or to look at a keyboard
 * (which may set the flag); the core reads no clock and writes nothing.
 */
#ifndef BIASLINE_PROGRESS_H
#define BIASLINE_PROGRESS_H

#include <signal.h>
#include <stdbool.h>
#include <stddef.h>

/* A stop flag and a progress report; either may be NULL. */
struct progress {
	const volatile sig_atomic_t *stop;   /* nonzero: stop soon */
	/* DONE: the fraction done, or -1 between items */
	void (*report)(void *ctx, double done);
	void *ctx;
};

/* True when P (may be NULL) asks the computation to stop; its report
 * is told first, so it may look at its keyboard and set the flag. */
static inline bool progress_stopped(const struct progress *p)
{
	if (p == NULL)
		return false;
	if (p->report != NULL)
		p->report(p->ctx, -1.0);
	return p->stop != NULL && *p->stop != 0;
}

/* Tell P that item K of N is done. */
static inline void progress_item(const struct progress *p, size_t k, size_t n)
{
	if (p != NULL && p->report != NULL)
		p->report(p->ctx, n > 0 ? (double)(k + 1) / (double)n : 1.0);
}

#endif
