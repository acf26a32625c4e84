/*
 * remedy.h - a setting that converges where a projection path failed: not
 * a guess from the local slope but a run, from the same start, of each
 * alternative in turn, checked against the every-root solve.  Above
 * diagnose.h and solve.h (it uses both).
 */
#ifndef BIASLINE_REMEDY_H
#define BIASLINE_REMEDY_H

#include "problem.h"
#include "stepper.h"

/* A setting that converges: what to change, and the words for it. */
struct remedy {
	enum solve_method method;
	enum projection_order order;
	double relaxation;     /* for METHOD_RELAXED: a factor in (0, 2] */
	char text[160];        /* "switch to voltage-from-device", "use newton" */
};

/*
 * Find a setting that converges, from O's start, to an operating point
 * that the every-root solve of PB finds: the other projection order,
 * relaxation in either order with the factor that is optimal at that
 * point (kept inside the loader's range (0, 2]), newton, brent.  Each
 * candidate is run, not guessed, with O's tolerance and step limit; the
 * first that converges is written to *R.  Returns 0, or -1 when none does
 * (R's text then names auto, the every-root solve) or no point exists.
 */
int remedy_find(const struct problem *pb, const struct solve_options *o,
                    struct remedy *r);

#endif
