/*
 * stability.c - the linearised circuit's verdict at an operating point
 * (see stability.h for the equations and their sources).
 */
#include "stability.h"

#include <math.h>
#include <stdio.h>

/* Names of the verdicts. */
static const char *const stability_names[] = {
	[STABILITY_STABLE] = "stable",
	[STABILITY_UNSTABLE] = "unstable",
	[STABILITY_OSCILLATES] = "oscillates",
	[STABILITY_UNKNOWN] = "unknown",
};

/* Fill RP with "not given". */
void reactive_parts_init(struct reactive_parts *rp)
{
	rp->capacitance_across_device = NAN;
	rp->inductance_in_series = NAN;
}

/* The name of S. */
const char *stability_name(enum stability s)
{
	if ((int)s < 0 || s > STABILITY_UNKNOWN)
		return "unknown";
	return stability_names[s];
}

/* True when X is a usable positive value (a given part). */
static bool stability_given(double x)
{
	return isfinite(x) && x > 0.0;
}

/* Set OUT's verdict and reason. */
static void stability_set(struct stability_result *out, enum stability v,
                          const char *reason)
{
	out->verdict = v;
	snprintf(out->reason, sizeof out->reason, "%s", reason);
}

/* A current-controlled device: its thermal lag acts in series (R + r_d). */
static void stability_thermal(double r, double r_d, struct stability_result *out)
{
	out->dynamics = DYNAMICS_THERMAL;
	if (isinf(r)) {
		stability_set(out, STABILITY_STABLE, "a current source fixes the "
		              "current: nothing can run away");
		return;
	}
	double s = r + r_d;
	if (s > 0.0)
		stability_set(out, STABILITY_STABLE, "R + r_d > 0: the heating "
		              "settles back after a disturbance");
	else if (s < 0.0)
		stability_set(out, STABILITY_UNSTABLE, "R + r_d < 0: the part heats "
		              "away from this point (thermal runaway or a jump)");
	else
		stability_set(out, STABILITY_UNKNOWN, "R + r_d = 0: a fold, where "
		              "the point appears or vanishes");
}

/* A voltage-controlled device: C across it, L in series. */
static void stability_electrical(double r, double r_d, double c, double l,
                                 struct stability_result *out)
{
	out->dynamics = DYNAMICS_ELECTRICAL;
	bool cg = stability_given(c), lg = stability_given(l);
	double g = 1.0 / r_d;   /* 0 for a flat curve (r_d infinite) */
	if (isinf(r)) {
		/* A current source: C dv/dt = -g v; a series L carries a fixed current. */
		if (g > 0.0)
			stability_set(out, STABILITY_STABLE, "r_d > 0 under a current "
			              "source");
		else
			stability_set(out, STABILITY_UNSTABLE, "r_d < 0 under a current "
			              "source: the voltage runs off the point");
		return;
	}
	/* The sign of D = (1 + g R)/(L C). */
	double s = r == 0.0 ? 1.0 : 1.0 + r / r_d;
	if (s < 0.0) {
		stability_set(out, STABILITY_UNSTABLE, "1 + R/r_d < 0 (R > |r_d| on "
		              "a falling branch): a saddle, the circuit leaves it");
		return;
	}
	if (s == 0.0) {
		stability_set(out, STABILITY_UNKNOWN, "R = -r_d: a fold, where the "
		              "point appears or vanishes");
		return;
	}
	if (cg && lg) {
		out->trace = -g / c - r / l;
		out->det = s / (l * c);
		if (out->trace < 0.0)
			stability_set(out, STABILITY_STABLE, "T < 0 and D > 0: "
			              "disturbances die out");
		else
			stability_set(out, STABILITY_OSCILLATES, "L > R |r_d| C on a "
			              "falling branch: the circuit circles the point");
		return;
	}
	if (lg) {
		/* The device's own capacitance is tiny: T has the sign of -g. */
		if (g >= 0.0)
			stability_set(out, STABILITY_STABLE, "r_d > 0: disturbances die "
			              "out");
		else
			stability_set(out, STABILITY_OSCILLATES, "a falling branch with "
			              "series L and little C: the circuit circles the "
			              "point (a capacitance above L/(R |r_d|) steadies it)");
		return;
	}
	stability_set(out, STABILITY_STABLE, g >= 0.0
	              ? "r_d > 0: disturbances die out"
	              : "R < |r_d| on a falling branch: the device's capacitance "
	                "settles it (series inductance above R |r_d| C would not)");
}

/* Classify the operating point. */
void stability_classify(const struct problem *pb, double r_d,
                        const struct reactive_parts *rp,
                        struct stability_result *out)
{
	out->r_d = r_d;
	out->trace = NAN;
	out->det = NAN;
	out->dynamics = DYNAMICS_ELECTRICAL;
	if (isnan(r_d) || r_d == 0.0 || isnan(pb->src.r)) {
		stability_set(out, STABILITY_UNKNOWN, "the differential resistance "
		              "is not defined here");
		return;
	}
	double c = rp != NULL ? rp->capacitance_across_device : NAN;
	double l = rp != NULL ? rp->inductance_in_series : NAN;
	if (pb->dev.type != NULL && pb->dev.type->current == NULL)
		stability_thermal(pb->src.r, r_d, out);
	else
		stability_electrical(pb->src.r, r_d, c, l, out);
}
