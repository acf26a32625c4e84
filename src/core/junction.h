/*
 * junction.h - the scalar equation behind every series split:
 *
 *     vj + r * Ij(vj) = voc,   Ij increasing, Ij(0) = 0
 *
 * solved by Newton-Raphson inside a kept bracket, with the model's
 * junction limiting when it has one.
 */
#ifndef BIASLINE_JUNCTION_H
#define BIASLINE_JUNCTION_H

#include "model.h"

/* Result of junction_solve. */
struct junction_result {
	double vj;          /* the junction voltage */
	double ij;          /* Ij(vj), computed the better-conditioned way */
	unsigned iters;     /* Newton (or bisection) iterations taken */
	int ok;             /* 1 when converged to TOL */
};

/*
 * Solve vj + R * Ij(vj) = VOC for the intrinsic part of model TYPE with
 * parameters P (0 <= R < inf).  TOL is relative on vj and Ij.
 */
struct junction_result junction_solve(const struct model_type *type,
                                      const double *p, double voc, double r,
                                      double tol);

#endif
