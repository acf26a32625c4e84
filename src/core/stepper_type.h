/*
 * stepper_type.h - what a stepper method file provides (internal to the
 * stepper: stepper.c and stepper_*.c).
 *
 * In the manner of GSL's root-solver types, each method lives in its own
 * file with its own state struct, reached through one const table: the
 * size of its state, SET (start: fill the state and the start row),
 * ITERATE (one step: fill the next row; no convergence decision) and TEST
 * (the method's convergence test, a pure function of the state and the
 * trace).  The generic stepper.c allocates the state, keeps the trace and
 * the status, and replays a path from the same inputs on rewind.
 */
#ifndef BIASLINE_STEPPER_TYPE_H
#define BIASLINE_STEPPER_TYPE_H

#include <stdbool.h>
#include <stddef.h>

#include "stepper.h"

/* Smallest magnitudes treated as "zero" when testing relative changes. */
#define STEPPER_V_FLOOR 1e-300
#define STEPPER_I_FLOOR 1e-300

/*
 * What every method reads: the problem and options as given to init, and
 * the caller's bracket (kept as given, so a rewind starts from the same
 * place).
 */
struct stepper_env {
	struct problem pb;
	struct solve_options o;
	bool have_bracket;
	struct bracket bracket;
};

/* One method. */
struct stepper_type {
	const char *name;
	size_t size;   /* bytes of the method's state */
	/* Start: fill STATE and the start row R0; 0, or -1 with *ST why. */
	int (*set)(void *state, const struct stepper_env *env,
	           struct trace_row *r0, enum step_status *st);
	/*
	 * One step from PREV (the newest row) into ROW: STEP_CONTINUE, or a
	 * status that stops the path (undefined, out of domain, non-finite).
	 */
	enum step_status (*iterate)(void *state, const struct stepper_env *env,
	                            const struct trace_row *prev,
	                            struct trace_row *row);
	/* After a step: converged, still going, or a path that will not. */
	enum step_status (*test)(const void *state, const struct stepper_env *env,
	                         const struct trace_row *rows, size_t n,
	                         double tol);
};

extern const struct stepper_type stepper_type_projection;
extern const struct stepper_type stepper_type_relaxed;
extern const struct stepper_type stepper_type_newton;
extern const struct stepper_type stepper_type_brent;

/* |D| within TOL |X|, or below FLOOR. */
bool stepper_small(double d, double x, double tol, double floor_);

/* The start voltage of ENV's options (0 V when automatic). */
double stepper_start_voltage(const struct stepper_env *env);

/*
 * The projection path's tracking (shared by the projection and relaxed
 * files): a move of size D after one of size PREV sets ROW's ratio; the
 * growth and stall counts of the trace's tail follow from the ratios.
 */
void stepper_track(double d, double prev, struct trace_row *row);
void stepper_tail_counts(const struct trace_row *rows, size_t n,
                         unsigned *grow, unsigned *stall);

/* Consecutive growing moves that mean divergence, and stalled moves. */
#define STEPPER_GROW_LIMIT 4
#define STEPPER_STALL_LIMIT 25

/* The projection start row (shared by the relaxed method); 0 or -1. */
int stepper_projection_start(const struct stepper_env *env,
                             struct trace_row *r0, enum step_status *st);

/*
 * The sign-change bracket of the bracketed methods in the junction
 * variable (problem.h): the caller's, the whole [0, voc] of a monotone
 * device (its upper end lowered to a finite residual), or the scan's
 * crossing nearest the start voltage.  Returns 0, or -1 (no bracket).
 */
int stepper_find_bracket(const struct stepper_env *env,
                         const struct problem_junction *j, double *lo,
                         double *flo, double *hi, double *fhi);

/* Fill ROW's point, residual and place for junction voltage X. */
void stepper_junction_row(const struct problem_junction *j, double x,
                          struct trace_row *row);

/* The relaxation factor the relaxed state STATE used last. */
double stepper_relaxed_omega(const void *state);

#endif
