/*
 * diagnose.c - the local rate of the projection map, the shape of the
 * path, and the plain-language messages and remedies.  Every message about
 * convergence that biasline prints is written here.
 *
 * Theory: for a fixed-point map g with g(x*) = x*, |g'(x*)| < 1 makes x*
 * attracting and the error shrinks by about g'(x*) per step; |g'(x*)| > 1
 * repels (Burden & Faires, Numerical Analysis, 9th ed., 2010, thm 2.4 and
 * sec. 2.4).  The relaxed map x + w (g(x) - x) has rate 1 - w + w g',
 * zero at w* = 1 / (1 - g').
 */
#include "diagnose.h"

#include <math.h>
#include <stdbool.h>
#include <stdio.h>
#include <string.h>

/* Within this distance of 1, |g'| is treated as "no contraction". */
#define NEUTRAL_BAND 1e-6

static const char *const shape_names[] = {
	[SHAPE_SPIRAL_IN] = "spirals in",
	[SHAPE_STAIRCASE_IN] = "staircases in",
	[SHAPE_SPIRAL_OUT] = "spirals out",
	[SHAPE_STAIRCASE_OUT] = "staircases out",
	[SHAPE_NEUTRAL] = "neither converges nor diverges",
	[SHAPE_UNDEFINED] = "cannot be used here",
};

/* Name of a shape. */
const char *path_shape_name(enum path_shape s)
{
	return (unsigned)s <= SHAPE_UNDEFINED ? shape_names[s] : "?";
}

/* The device's differential resistance at V (NaN when unknown). */
static double diagnose_rd(const struct problem *pb, double v)
{
	const struct model_type *t = pb->dev.type;
	if (t->current != NULL) {
		double i = device_current(&pb->dev, v);
		if (t->resistance != NULL) {
			double rd = t->resistance(pb->dev.p, i);
			if (isfinite(rd) || isinf(rd))
				return rd;
		}
		return 1.0 / device_conductance(&pb->dev, v);
	}
	/*
	 * A curve given only as V(I) (it turns back in voltage) may pass V at
	 * several currents: take the current the load line has at V, which
	 * is the point's own current at an operating point.
	 */
	if (t->resistance != NULL) {
		double i = source_line_current(&pb->src, v);
		if (isfinite(i))
			return t->resistance(pb->dev.p, i);
	}
	return NAN;
}

/* g' of ORDER for source resistance R and device resistance RD. */
static double diagnose_gprime(enum projection_order order, double r, double rd)
{
	if (order == ORDER_VOLTAGE_FROM_LINE) {
		if (isinf(r))
			return NAN; /* horizontal line: no horizontal move reaches it */
		if (r == 0.0)
			return 0.0;
		return -r / rd;
	}
	if (r == 0.0)
		return NAN;     /* vertical line: no vertical move reaches it */
	if (isinf(r))
		return 0.0;
	return -rd / r;
}

/* The shape a path takes for map derivative G. */
static enum path_shape diagnose_shape(double g)
{
	if (isnan(g))
		return SHAPE_UNDEFINED;
	if (fabs(fabs(g) - 1.0) <= NEUTRAL_BAND)
		return SHAPE_NEUTRAL;
	if (fabs(g) < 1.0)
		return g < 0.0 ? SHAPE_SPIRAL_IN : SHAPE_STAIRCASE_IN;
	return g < 0.0 ? SHAPE_SPIRAL_OUT : SHAPE_STAIRCASE_OUT;
}

/* The name users see for the other order. */
static const char *diagnose_other_name(enum projection_order order)
{
	return projection_order_name(order == ORDER_VOLTAGE_FROM_LINE
	                                 ? ORDER_VOLTAGE_FROM_DEVICE
	                                 : ORDER_VOLTAGE_FROM_LINE);
}

/* True when the device has the curve ORDER projects onto (I(V) or V(I)). */
static bool diagnose_order_exists(const struct problem *pb,
                                  enum projection_order order)
{
	const struct model_type *t = pb->dev.type;
	return order == ORDER_VOLTAGE_FROM_LINE ? t->current != NULL
	                                        : t->voltage != NULL;
}

static void diagnose_core(const struct problem *pb, enum projection_order order,
                          double v, double tol, double start_err,
                          struct diagnosis *d);

/*
 * Diagnose ORDER of PB at V, then add the caution for a point on a
 * negative-resistance branch (r_d < 0): plain projection reaches it in at
 * most one order, and in a real circuit such a point can be unstable --
 * with three crossings the middle one is, and the device's capacitance or
 * a series inductance can make the circuit switch or oscillate (Sze & Ng,
 * Physics of Semiconductor Devices, 3rd ed., 2007, ch. 8, tunnel diode
 * circuits; common practice).
 */
void diagnose_at(const struct problem *pb, enum projection_order order,
                 double v, double tol, double start_err, struct diagnosis *d)
{
	diagnose_core(pb, order, v, tol, start_err, d);
	if (!(isfinite(d->r_d) && d->r_d < 0.0))
		return;
	bool away = !(fabs(d->gprime) < 1.0);
	char caution[200];
	snprintf(caution, sizeof caution,
	         "r_d < 0 (negative resistance)%s; such a point can be unstable "
	         "in a circuit: see its stability verdict",
	         away ? ", which this order cannot reach" : "");
	size_t n = strlen(d->advice);
	snprintf(d->advice + n, sizeof d->advice - n, "%s%s", n ? "; " : "",
	         caution);
}

/* The diagnosis proper (see diagnose_at). */
static void diagnose_core(const struct problem *pb, enum projection_order order,
                          double v, double tol, double start_err,
                          struct diagnosis *d)
{
	enum projection_order other = order == ORDER_VOLTAGE_FROM_LINE
	                                  ? ORDER_VOLTAGE_FROM_DEVICE
	                                  : ORDER_VOLTAGE_FROM_LINE;
	d->r_d = diagnose_rd(pb, v);
	d->gprime = diagnose_gprime(order, pb->src.r, d->r_d);
	d->gprime_other = diagnose_gprime(other, pb->src.r, d->r_d);
	/* An order needs its curve: I(V) for "line", V(I) for "device". */
	bool model_lacks = !diagnose_order_exists(pb, order);
	if (model_lacks)
		d->gprime = NAN;
	if (!diagnose_order_exists(pb, other))
		d->gprime_other = NAN;
	d->shape = diagnose_shape(d->gprime);
	d->omega_opt = isfinite(d->gprime) ? 1.0 / (1.0 - d->gprime) : NAN;
	double a = fabs(d->gprime);
	if (!(tol > 0.0))
		tol = 1e-12;
	if (!(start_err > tol))
		start_err = 1.0;
	if (a == 0.0)
		d->steps_to_tol = 1.0;
	else if (a < 1.0)
		d->steps_to_tol = ceil(log(tol / start_err) / log(a));
	else
		d->steps_to_tol = INFINITY;

	double ao = fabs(d->gprime_other);
	d->advice[0] = '\0';
	switch (d->shape) {
	case SHAPE_UNDEFINED:
		snprintf(d->verdict, sizeof d->verdict, "this order cannot be used here");
		if (model_lacks) {
			snprintf(d->advice, sizeof d->advice,
			         "this device has some %s at several %s, so no %s: "
			         "use %s or newton",
			         order == ORDER_VOLTAGE_FROM_LINE ? "voltages" : "currents",
			         order == ORDER_VOLTAGE_FROM_LINE ? "currents" : "voltages",
			         order == ORDER_VOLTAGE_FROM_LINE ? "I(V)" : "V(I)",
			         diagnose_other_name(order));
			return;
		}
		if (isnan(d->r_d) && !source_is_ideal_voltage(&pb->src) &&
		    !source_is_ideal_current(&pb->src)) {
			snprintf(d->advice, sizeof d->advice,
			         "the device's differential resistance is not defined "
			         "at this voltage (outside its curve): start nearer "
			         "the point or use newton");
			return;
		}
		snprintf(d->advice, sizeof d->advice,
		         "%s: use %s or newton",
		         isinf(pb->src.r) ? "an ideal current source gives a horizontal load line"
		                          : "an ideal voltage source gives a vertical load line",
		         diagnose_other_name(order));
		return;
	case SHAPE_NEUTRAL:
		snprintf(d->verdict, sizeof d->verdict,
		         "|g'| = 1: the path circles without closing in");
		snprintf(d->advice, sizeof d->advice,
		         "use relaxed with relaxation %.3g (optimal here) or newton",
		         d->omega_opt);
		return;
	default:
		break;
	}
	snprintf(d->verdict, sizeof d->verdict, "%s, |g'| = %.3g",
	         path_shape_name(d->shape), a);
	if (a >= 1.0 && isfinite(ao) && ao < 1.0)
		snprintf(d->advice, sizeof d->advice,
		         "this order diverges here (|g'| = %.3g); the other order "
		         "contracts with |g'| = %.3g: switch to %s",
		         a, ao, diagnose_other_name(order));
	else if (a >= 1.0 && d->gprime < 0.0)
		/* Rate 1 - w + w g' is below 1 in size for w < 2/(1 - g'): the
		 * optimal w = 1/(1 - g') is inside (0, 0.5) here. */
		snprintf(d->advice, sizeof d->advice,
		         "this order diverges here (|g'| = %.3g): use relaxed with "
		         "relaxation %.3g, or newton", a, d->omega_opt);
	else if (a >= 1.0)
		/* g' > 1: 1 + w (g' - 1) > 1 for every w > 0: no relaxation helps. */
		snprintf(d->advice, sizeof d->advice,
		         "this order staircases away here (g' = %.3g) and no "
		         "relaxation factor in (0, 2] can stop it: use newton", a);
	else if (a > 0.5 && isfinite(ao) && ao < a)
		snprintf(d->advice, sizeof d->advice,
		         "slow (|g'| = %.3g); %s contracts faster with |g'| = %.3g",
		         a, diagnose_other_name(order), ao);
	else if (a > 0.5)
		snprintf(d->advice, sizeof d->advice,
		         "slow (|g'| = %.3g): relaxed with relaxation %.3g converges "
		         "in a few steps", a, fmin(d->omega_opt, 2.0));
}

/* Projections to the stopping test (see diagnose.h). */
double diagnose_projections(const struct problem *pb,
                            enum projection_order order, double v, double i,
                            double i0, double tol)
{
	struct diagnosis d;
	diagnose_core(pb, order, v, tol, 1.0, &d);
	double a = fabs(d.gprime);
	if (!(a < 1.0) || !isfinite(i0) || !isfinite(i))
		return INFINITY;
	if (!(tol > 0.0))
		tol = 1e-12;
	double e0 = fabs(i0 - i);
	/* A full step's changes relative to the point: dI / I and dV / V. */
	double slope = order == ORDER_VOLTAGE_FROM_LINE ? fabs(pb->src.r)
	                                                : fabs(d.r_d);
	double c = 0.0;
	if (i != 0.0)
		c = fmax(c, 1.0 / fabs(i));
	if (v != 0.0 && isfinite(slope))
		c = fmax(c, slope / fabs(v));
	double first = e0 * fabs(1.0 - d.gprime) * c;
	if (!(first > tol))
		return 2.0;
	if (a == 0.0)
		return 4.0;
	double k = ceil(log(tol / first) / log(a));
	return 2.0 * k + 2.0;
}

/* A plain-language message for status ST (see diagnose.h). */
void diagnose_status_message(enum step_status st, enum projection_order order,
                             const struct diagnosis *d, char *buf, size_t n)
{
	const char *advice = d != NULL && d->advice[0] != '\0' ? d->advice : "";
	const char *sep = advice[0] != '\0' ? "; " : "";
	switch (st) {
	case STEP_CONTINUE:
		snprintf(buf, n, "still iterating%s%s", sep, advice);
		break;
	case STEP_CONVERGED:
		snprintf(buf, n, "converged");
		break;
	case STEP_DIVERGING:
		snprintf(buf, n, "the path is diverging: every step is larger than "
		         "the one before%s%s", sep,
		         advice[0] ? advice : "reverse the order or use newton");
		break;
	case STEP_CYCLING:
		snprintf(buf, n, "the path jumps between two points and never "
		         "settles%s%s", sep,
		         advice[0] ? advice : "reverse the order or use newton");
		break;
	case STEP_STALLED:
		snprintf(buf, n, "the path is not closing in on the point%s%s", sep,
		         advice[0] ? advice : "use relaxed (relaxation auto) or newton");
		break;
	case STEP_OUT_OF_DOMAIN:
		snprintf(buf, n, "a projection asked the device for a point its curve "
		         "does not have (in %s order); start nearer the point, "
		         "reverse the order or use newton",
		         projection_order_name(order));
		break;
	case STEP_NON_FINITE:
		snprintf(buf, n, "a value overflowed: the device was driven far past "
		         "its knee%s%s", sep,
		         advice[0] ? advice : "reverse the order or use newton");
		break;
	case STEP_CAP:
		snprintf(buf, n, "the step limit was reached before the tolerance%s%s",
		         sep, advice[0] ? advice : "raise the step limit or use newton");
		break;
	case STEP_UNDEFINED:
		snprintf(buf, n, "the path cannot start in %s order on this device"
		         "%s%s", projection_order_name(order), sep, advice);
		break;
	}
}
