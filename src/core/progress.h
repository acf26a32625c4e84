/*
 * progress.h - how a long computation (a Monte Carlo run, a worst case,
 * a sweep) is asked to stop and says how far it has come.  The caller
 * owns both: a flag that a signal handler may set, read once per item of
 * work (a trial, a corner, a sweep point, each well under 50 ms), and a
 * report function called every few items with the fraction done, which
 * decides for itself whether to show anything (the core reads no clock
 * and writes nothing).
 */
#ifndef BIASLINE_PROGRESS_H
#define BIASLINE_PROGRESS_H

#include <signal.h>
#include <stdbool.h>
#include <stddef.h>

/* Items between two calls of the report function. */
#define PROGRESS_EVERY 64

/* A stop flag and a progress report; either may be NULL. */
struct progress {
	const volatile sig_atomic_t *stop;   /* nonzero: stop soon */
	void (*report)(void *ctx, double done);
	void *ctx;
};

/* True when P (may be NULL) asks the computation to stop. */
static inline bool progress_stopped(const struct progress *p)
{
	return p != NULL && p->stop != NULL && *p->stop != 0;
}

/* Tell P that item K of N is done (every PROGRESS_EVERY items, and the
 * last). */
static inline void progress_item(const struct progress *p, size_t k, size_t n)
{
	if (p != NULL && p->report != NULL &&
	    (k % PROGRESS_EVERY == 0 || k + 1 == n))
		p->report(p->ctx, n > 0 ? (double)(k + 1) / (double)n : 1.0);
}

#endif
