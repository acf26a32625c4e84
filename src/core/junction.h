/*
 * junction.h - the scalar equation behind every series split:
 *
 *     vj + r * Ij(vj) = voc,   Ij increasing, Ij(0) = 0
 *
 * For a junction that is one Shockley exponential (model_type.shockley:
 * the diode, the LED, a transistor's base-emitter junction) it is solved
 * in closed form through the Wright omega function, then checked and
 * polished by one Newton correction that costs one exponential.  Where
 * that cannot be trusted (the exponential overflows, the correction does
 * not settle) and for every other junction, safeguarded Newton-Raphson in
 * a kept bracket (kernel.h) with the model's junction limiting does it.
 */
#ifndef BIASLINE_JUNCTION_H
#define BIASLINE_JUNCTION_H

#include "model.h"

/* Which way junction_solve found its answer (tests count these). */
enum junction_path {
	JUNCTION_DIRECT,   /* r = 0, or r Is / nVt underflows: Ij(voc) */
	JUNCTION_OMEGA,    /* the Wright omega closed form */
	JUNCTION_NEWTON,   /* safeguarded Newton in the bracket */
};

/* Result of junction_solve. */
struct junction_result {
	double vj;          /* the junction voltage */
	double ij;          /* Ij(vj), computed the better-conditioned way */
	double gj;          /* dIj/dvj at vj */
	double dvj;         /* size of the last correction of vj: an upper
	                       bound on the distance to the root along vj */
	unsigned iters;     /* Newton steps or corrections taken */
	enum junction_path path;
	int ok;             /* 1 when converged to TOL */
};

/*
 * Solve vj + R * Ij(vj) = VOC for the intrinsic part of model TYPE with
 * parameters P (0 <= R < inf).  TOL is relative on vj and Ij.
 */
struct junction_result junction_solve(const struct model_type *type,
                                      const double *p, double voc, double r,
                                      double tol);

/*
 * The same for a Shockley junction given by IS and NVT directly (IS > 0,
 * NVT > 0): the closed form with the Newton fallback.
 */
struct junction_result junction_solve_shockley(double is, double nvt,
                                               double voc, double r,
                                               double tol);

/*
 * The Wright omega function: the w > 0 with w + ln w = X (Corless &
 * Jeffrey, "The Wright omega function", AISC 2002), to a few ulp, for
 * every real X (0 where it underflows).
 */
double junction_wright_omega(double x);

/*
 * A Shockley junction's current Is expm1(V / nVt), conductance
 * Is exp(V / nVt) / nVt, and voltage nVt log1p(I / Is), each without
 * overflowing in the exponential (or the ratio) while the result itself
 * is finite (a saturation current near the bottom of the double range
 * driven hard), and the current with V / nVt's rounding put back (it is
 * amplified by V / nVt, up to 709).
 */
double junction_shockley_current(double is, double nvt, double v);
double junction_shockley_conductance(double is, double nvt, double v);
double junction_shockley_voltage(double is, double nvt, double i);

/*
 * Junction-voltage limiting for a Shockley junction IS, NVT (Nagel,
 * SPICE2, UC Berkeley ERL Memo M520, 1975): above the critical voltage a
 * large forward step VOLD -> VNEW is replaced by the step that changes
 * the current by the same amount on a logarithmic scale, so exp() cannot
 * overflow and Newton cannot overshoot wildly.  Only upward steps are
 * limited: the solvers keep a sign-change bracket, which bounds a
 * downward step.
 */
double junction_limit_step(double is, double nvt, double vnew, double vold);

#endif
