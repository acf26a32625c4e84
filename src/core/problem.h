/*
 * problem.h - an operating-point problem: a source and a device, and the
 * residual whose zeros are the operating points.
 *
 * With the internal source form (source.h) the residual in V is
 *
 *     F(V) = V + r * I_dev(V) - voc      (volts; finite r, including r = 0)
 *     F(V) = I_dev(V) - isc              (amperes; ideal current source)
 *
 * and its derivative F'(V) = 1 + r * g(V), or g(V).
 */
#ifndef BIASLINE_PROBLEM_H
#define BIASLINE_PROBLEM_H

#include <stdbool.h>

#include "model.h"
#include "source.h"

/* A source driving a device. */
struct problem {
	struct source src;
	struct device dev;
};

/* F(V) as above; NaN when the device has no current(V). */
double problem_residual(const struct problem *pb, double v);

/* dF/dV at V. */
double problem_residual_slope(const struct problem *pb, double v);

/* The unit of the residual: QTY_VOLTAGE or QTY_CURRENT. */
enum qty_kind problem_residual_kind(const struct problem *pb);

#endif
