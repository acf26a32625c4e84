/*
 * problem.c - the operating-point residual of a source driving a device.
 */
#include "problem.h"

#include <math.h>

/* F(V) (see problem.h). */
double problem_residual(const struct problem *pb, double v)
{
	double i = device_current(&pb->dev, v);
	if (isinf(pb->src.r))
		return i - pb->src.isc;
	return v + pb->src.r * i - pb->src.voc;
}

/* dF/dV at V. */
double problem_residual_slope(const struct problem *pb, double v)
{
	double g = device_conductance(&pb->dev, v);
	if (isinf(pb->src.r))
		return g;
	return 1.0 + pb->src.r * g;
}

/* The unit of the residual. */
enum qty_kind problem_residual_kind(const struct problem *pb)
{
	return isinf(pb->src.r) ? QTY_CURRENT : QTY_VOLTAGE;
}
