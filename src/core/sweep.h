/*
 * sweep.h - operating points along a sweep of one parameter (any key of
 * paramref.h: vs, rs, a device parameter such as temperature), linear or
 * logarithmic, with continuation and fold detection.
 *
 * Continuation: each step starts Newton from the previous step's points
 * (solve options start_v), so a smooth branch is followed with a few
 * iterations.  A device that is not monotone also gets the every-root
 * scan at every step, and the points continuation reaches are merged in,
 * so no branch is lost to a coarse scan.  Where the number of operating
 * points changes between two steps (a fold: points are born or die in
 * pairs, and the circuit jumps), the parameter value of the change is
 * located by bisection and reported.
 */
#ifndef BIASLINE_SWEEP_H
#define BIASLINE_SWEEP_H

#include <stddef.h>

#include "paramref.h"
#include "problem.h"
#include "progress.h"
#include "stepper.h"

/* Most points a sweep may have. */
#define SWEEP_MAX_POINTS 1000000

/* Spacing of the sweep's values. */
enum sweep_scale {
	SWEEP_LINEAR,
	SWEEP_LOG,     /* from and to must be non-zero and of one sign */
};

/* What to sweep. */
struct sweep_spec {
	struct paramref param;
	double from, to;
	size_t points;          /* >= 2 (1: just FROM) */
	enum sweep_scale scale;
};

/* One operating point at one step. */
struct sweep_row {
	size_t step;            /* 0 ... points-1 */
	double value;           /* the parameter's value */
	size_t index;           /* point number at this step, by voltage */
	size_t count;           /* points at this step */
	double v, i, p;         /* voltage, current, device power */
};

/* A change in the number of operating points between two steps. */
struct sweep_fold {
	size_t step;            /* the step after the change */
	double value;           /* located parameter value of the change */
	double lo, hi;          /* bracket of the change in the parameter */
	size_t n_before, n_after;
};

/* A sweep's result; rows and folds are owned (sweep_result_fini). */
struct sweep_result {
	struct sweep_row *rows;
	size_t nrows;
	struct sweep_fold *folds;
	size_t nfolds;
	size_t failed;          /* steps with no operating point */
	char message[256];      /* why the sweep could not run, or "" */
};

/* Empty R. */
void sweep_result_init(struct sweep_result *r);

/* Free what R owns and empty it. */
void sweep_result_fini(struct sweep_result *r);

/* The K-th value of SP (K < points). */
double sweep_value(const struct sweep_spec *sp, size_t k);

/*
 * Run the sweep SP on PB with solver options O into OUT (initialised by
 * the call; free with sweep_result_fini).  Returns 0, or -1 with a message
 * (bad spec, a value outside the parameter's range, no memory).
 */
int sweep_run(const struct problem *pb, const struct solve_options *o,
              const struct sweep_spec *sp, struct sweep_result *out);

/*
 * sweep_run watched by PR (progress.h; may be NULL): the stop flag is
 * read at every point and every step of a fold's bisection; a stop
 * returns -1 with "stopped after ..." (OUT keeps nothing).
 */
int sweep_run_watched(const struct problem *pb, const struct solve_options *o,
                      const struct sweep_spec *sp, struct sweep_result *out,
                      const struct progress *pr);

#endif
