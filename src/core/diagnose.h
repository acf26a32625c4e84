/*
 * diagnose.h - why a projection path converges, spirals, staircases or
 * diverges, and what to do about it.  Every message the CLI and the TUI
 * show about convergence comes from here.
 *
 * For the projection map g the local rate is g'(x):
 *     voltage from the line:   g' = -r / r_d
 *     voltage from the device: g' = -r_d / r
 * |g'| < 1 contracts; g' < 0 spirals (the path alternates sides of the
 * point), g' > 0 staircases (a negative-resistance branch).  The relaxed
 * step has rate 1 - w + w g', best at w* = 1 / (1 - g').
 */
#ifndef BIASLINE_DIAGNOSE_H
#define BIASLINE_DIAGNOSE_H

#include <stddef.h>

#include "problem.h"
#include "stepper.h"

/* The shape a projection path takes near a point. */
enum path_shape {
	SHAPE_SPIRAL_IN,      /* -1 < g' < 0 */
	SHAPE_STAIRCASE_IN,   /* 0 <= g' < 1 */
	SHAPE_SPIRAL_OUT,     /* g' < -1 */
	SHAPE_STAIRCASE_OUT,  /* g' > 1 */
	SHAPE_NEUTRAL,        /* |g'| == 1 within rounding: no contraction */
	SHAPE_UNDEFINED,      /* the order cannot be used here */
};

/* A diagnosis at one point for one order. */
struct diagnosis {
	double r_d;            /* device differential resistance, ohm */
	double gprime;         /* map derivative for the order asked */
	double gprime_other;   /* the same for the other order */
	enum path_shape shape;
	double steps_to_tol;   /* predicted full steps to the tolerance */
	double omega_opt;      /* 1 / (1 - g') */
	char verdict[128];     /* one line: "spirals in, |g'| = 0.31" */
	char advice[512];      /* a remedy or "" */
};

/* Name of a shape ("spiral in", "staircase out", ...). */
const char *path_shape_name(enum path_shape s);

/*
 * Diagnose order ORDER of PB at voltage V (use the operating point for a
 * prediction, the current iterate for a live view).  TOL sets
 * steps_to_tol; START_ERR is the starting error estimate (relative).
 */
void diagnose_at(const struct problem *pb, enum projection_order order,
                 double v, double tol, double start_err, struct diagnosis *d);

/*
 * Projections the plain projection path of ORDER needs from a start with
 * device current I0 to the point (V, I) of PB, counted the way the
 * stepper counts them and stopped by its test (both the last voltage and
 * the last current change within TOL of the point's own): the error on
 * the current shrinks by |g'| per full step (two projections) from
 * I0 - I, and a full step moves the current by |1 - g'| times the error
 * and the voltage by the slope of the curve it moves along (r on the
 * line, r_d on the device) times that (Burden & Faires, Numerical
 * Analysis, 9th ed., 2010, sec. 2.2: linear convergence at rate
 * |g'(x*)|).  INFINITY when the order does not contract there.
 */
double diagnose_projections(const struct problem *pb,
                            enum projection_order order, double v, double i,
                            double i0, double tol);

/*
 * A one-line plain-language message for stepper status ST under ORDER
 * (what happened, and the remedy), written to BUF.  Uses the diagnosis at
 * the last iterate when D is not NULL.
 */
void diagnose_status_message(enum step_status st, enum projection_order order,
                             const struct diagnosis *d, char *buf, size_t n);

#endif
