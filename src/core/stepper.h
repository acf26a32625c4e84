/*
 * stepper.h - iterative operating-point methods the caller steps one
 * iteration at a time (init / iterate / test, in the manner of GSL's root
 * solvers), recording every step in a trace.  Each method is a type in
 * its own file (stepper_type.h); this is the interface they share.
 *
 * The projection methods advance exactly one projection per call (a half
 * step: horizontal to one curve or vertical to the other), so a front end
 * can show the path growing one segment per keypress.
 *
 *   voltage from the line ("line" order), map on the current:
 *       V = voc - r*I_k   (horizontal to the load line)
 *       I_{k+1} = I(V)    (vertical to the device)       g' = -r / r_d
 *   voltage from the device ("device" order):
 *       V = V(I_k)        (horizontal to the device)
 *       I_{k+1} = (voc - V)/r (vertical to the load line) g' = -r_d / r
 *
 * The relaxed method blends a whole projection step: I <- I + w (g(I) - I).
 * Newton works on F(V) (problem.h) inside a kept sign-change bracket, with
 * junction-voltage limiting for exponential devices.  Bisection/Brent is the
 * guaranteed fallback.
 */
#ifndef BIASLINE_STEPPER_H
#define BIASLINE_STEPPER_H

#include <stdbool.h>
#include <stddef.h>

#include "problem.h"

/* The iterative methods. */
enum solve_method {
	METHOD_AUTO,       /* every-root scan plus Newton (the default solve) */
	METHOD_PROJECTION, /* plain fixed-point projections, one per step */
	METHOD_RELAXED,    /* relaxed fixed point with factor omega */
	METHOD_NEWTON,     /* safeguarded Newton-Raphson with limiting */
	METHOD_BRENT,      /* Brent-Dekker bracketing */
	METHOD_COUNT
};

/* Which curve gives the voltage in a projection step. */
enum projection_order {
	ORDER_VOLTAGE_FROM_LINE,   /* horizontal to the line, vertical to device */
	ORDER_VOLTAGE_FROM_DEVICE, /* horizontal to the device, vertical to line */
	ORDER_COUNT
};

/* Solver settings (the session's "solver" section). */
struct solve_options {
	enum solve_method method;
	enum projection_order order;
	double start_v;      /* start voltage; NaN = automatic */
	double omega;        /* relaxation factor; 0 = optimal, from the slopes */
	double tol;          /* relative tolerance (default 1e-12) */
	unsigned max_steps;  /* step cap (default 200) */
};

/* Fill O with the defaults. */
void solve_options_init(struct solve_options *o);

/* Method and order names as used in files and options, and back. */
const char *solve_method_name(enum solve_method m);
int solve_method_from_name(const char *name, enum solve_method *m);
const char *projection_order_name(enum projection_order o);
int projection_order_from_name(const char *name, enum projection_order *o);

/* Where a trace point lies. */
enum point_on {
	ON_START,   /* the start point */
	ON_LINE,    /* on the load line (after a horizontal move in "line") */
	ON_DEVICE,  /* on the device curve */
	ON_BOTH,    /* an iterate of a method that is not a projection */
};

/* One step of the trace. */
struct trace_row {
	unsigned k;        /* step number; 0 is the start point */
	double v, i;       /* the point reached */
	double residual;   /* F(V) at the point's voltage (problem.h) */
	double step;       /* size of the change of the iterated variable */
	double ratio;      /* error-ratio estimate (signed); NaN until known */
	enum point_on on;
};

/* The stepper's status after a step. */
enum step_status {
	STEP_CONTINUE,     /* not converged yet: a normal state */
	STEP_CONVERGED,    /* converged and verified on the residual */
	STEP_DIVERGING,    /* steps growing steadily */
	STEP_CYCLING,      /* a 2-cycle */
	STEP_STALLED,      /* no progress, not converged */
	STEP_OUT_OF_DOMAIN,/* a projection left the curve's domain */
	STEP_NON_FINITE,   /* overflow or NaN */
	STEP_CAP,          /* the step cap was reached */
	STEP_UNDEFINED,    /* the method/order cannot run on this problem */
};

/* A short lower-case name of a status ("converged", "diverging", ...). */
const char *step_status_name(enum step_status s);

struct stepper;

/* Allocate a stepper; free with stepper_destroy.  NULL on no memory. */
struct stepper *stepper_create(void);

/* Free S (NULL is fine). */
void stepper_destroy(struct stepper *s);

/*
 * Start a new path for PB with O (both are copied).  Records the start point
 * as row 0.  Returns 0, or -1 when the method cannot start (the status then
 * says why: STEP_UNDEFINED or STEP_OUT_OF_DOMAIN).
 */
int stepper_init(struct stepper *s, const struct problem *pb,
                 const struct solve_options *o);

/*
 * Advance one step (one projection for the projection method) and append
 * a trace row, without deciding convergence: STEP_CONTINUE, or a status
 * that stops the path (it could not step: out of domain, non-finite,
 * undefined, the step cap).  A caller with a test of its own steps with
 * this and tests the trace itself.
 */
enum step_status stepper_iterate(struct stepper *s);

/*
 * The method's own test of the path so far at the options' tolerance:
 * STEP_CONVERGED, STEP_CONTINUE, or STEP_DIVERGING / CYCLING / STALLED
 * for a path that will not converge.  A pure function: it changes nothing.
 */
enum step_status stepper_test(const struct stepper *s);

/*
 * stepper_iterate then stepper_test: advance one step and append a trace
 * row.  Returns the status after the step; a stepper that has stopped
 * (anything but STEP_CONTINUE) does not move again.
 */
enum step_status stepper_step(struct stepper *s);

/* The status now (same value the last step returned). */
enum step_status stepper_status(const struct stepper *s);

/* Step until not STEP_CONTINUE; returns the final status. */
enum step_status stepper_run(struct stepper *s);

/*
 * A bracket of one operating point in the variable the bracketed methods
 * iterate on: the device voltage, or the junction voltage behind the
 * series resistance when the model has a series split.  A tangent point
 * (a double root, no sign change) has lo == hi and TANGENT set.
 */
struct bracket {
	double lo, hi;
	bool tangent;
	bool in_current;  /* lo/hi are device currents (a curve given as V(I)) */
};

/*
 * Scan the device's natural range (widened to include 0 V and the source's
 * open-circuit voltage) for every crossing of the load line: sign changes
 * of the residual on a fine grid, plus local minima of |residual| refined
 * by golden-section search that touch zero (tangent points).  Writes at
 * most MAX brackets in increasing voltage and returns how many it found.
 *
 * A device with no current(V) but a V(I) and a current_range (a curve that
 * turns back in voltage, as a self-heated thermistor) is scanned in
 * current instead, over its current range, on the residual
 * V(I) + r I - voc for a finite source resistance r; its brackets have
 * in_current set and are in increasing current.
 */
size_t stepper_scan(const struct problem *pb, struct bracket *out, size_t max);

/*
 * Start a bracketed method (newton or brent in O) on the bracket B instead
 * of searching for one.  Returns 0 or -1 as stepper_init.
 */
int stepper_init_bracket(struct stepper *s, const struct problem *pb,
                         const struct solve_options *o, const struct bracket *b);

/*
 * Re-run the path from its start up to N steps (steps back when N < now):
 * from the same problem, options and caller's bracket, so the rows are
 * the same as the first time, bit for bit.
 */
enum step_status stepper_rewind(struct stepper *s, size_t n);

/* The trace so far: *N rows (row 0 is the start point). */
const struct trace_row *stepper_trace(const struct stepper *s, size_t *n);

/* The current (newest) point. */
const struct trace_row *stepper_last(const struct stepper *s);

/* The problem and options the stepper runs on. */
const struct problem *stepper_problem(const struct stepper *s);
const struct solve_options *stepper_options(const struct stepper *s);

/* The relaxation factor used by the last relaxed step (NaN otherwise). */
double stepper_omega(const struct stepper *s);

#endif
