/*
 * problem.c - the operating-point residual of a source driving a device.
 */
#include "problem.h"

#include <math.h>
#include <string.h>

/* Bind the device to the source. */
void problem_bind(struct problem *pb)
{
	if (pb->dev.type != NULL && pb->dev.type->bind != NULL)
		pb->dev.type->bind(pb->dev.p, &pb->src);
	device_prepare(&pb->dev);
}

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

/* Set up the junction view of PB. */
void problem_junction_init(struct problem_junction *j,
                           const struct problem *pb)
{
	j->pb = pb;
	j->t = pb->dev.type;
	j->p = pb->dev.p;
	/* The model's derived constants once, for every evaluation after:
	 * the device's own when they are its values' (device_prepare). */
	const double *k = device_constants(&pb->dev);
	if (k != NULL)
		memcpy(j->k, k, sizeof j->k);
	j->has_k = k != NULL ||
	           (j->t->prepare != NULL && j->t->prepare(j->p, j->k) == 0);
	j->rser = j->t->series_resistance ? j->t->series_resistance(j->p) : 0.0;
	j->rt = pb->src.r + j->rser;
}

/* Intrinsic current at X. */
double problem_junction_current(const struct problem_junction *j, double x)
{
	if (j->has_k)
		return j->t->current_k(j->p, j->k, x);
	return j->t->intrinsic_current ? j->t->intrinsic_current(j->p, x)
	                               : j->t->current(j->p, x);
}

/* Intrinsic conductance at X. */
double problem_junction_conductance(const struct problem_junction *j,
                                    double x)
{
	if (j->has_k)
		return j->t->conductance_k(j->p, j->k, x);
	return j->t->intrinsic_conductance ? j->t->intrinsic_conductance(j->p, x)
	                                   : j->t->conductance(j->p, x);
}

/* The junction residual at X. */
double problem_junction_residual(const struct problem_junction *j, double x)
{
	double i = problem_junction_current(j, x);
	if (isinf(j->pb->src.r))
		return i - j->pb->src.isc;
	return x + j->rt * i - j->pb->src.voc;
}

/* Its slope at X. */
double problem_junction_slope(const struct problem_junction *j, double x)
{
	double g = problem_junction_conductance(j, x);
	if (isinf(j->pb->src.r))
		return g;
	return 1.0 + j->rt * g;
}

/* The device's point at junction voltage X. */
void problem_junction_point(const struct problem_junction *j, double x,
                            double *v, double *i)
{
	double ij = problem_junction_current(j, x);
	if (isfinite(j->rt) && j->rt > 0.0 &&
	    j->rt * problem_junction_conductance(j, x) > 1.0)
		ij = (j->pb->src.voc - x) / j->rt;
	*v = x + j->rser * ij;
	*i = ij;
}

/* The inverse of the intrinsic curve at I, or NaN. */
double problem_junction_inverse(const struct problem_junction *j, double i)
{
	double v = NAN;
	if (j->t->intrinsic_voltage != NULL)
		v = j->t->intrinsic_voltage(j->p, i);
	else if (j->t->series_resistance == NULL && j->t->voltage != NULL &&
	         j->t->voltage(j->p, i, &v) != 0)
		v = NAN;
	return v;
}

/* The model's limiting. */
double problem_junction_limit(const struct problem_junction *j, double vnew,
                              double vold)
{
	return j->t->limit != NULL ? j->t->limit(j->p, vnew, vold) : vnew;
}
