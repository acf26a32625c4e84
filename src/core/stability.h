/*
 * stability.h - whether the circuit settles at an operating point: the
 * classification of the linearised circuit around it.
 *
 * A real circuit has some capacitance C across the device and some
 * inductance L in series with the source.  With the device linearised at
 * the point (differential conductance g = 1/r_d) and a Thevenin source of
 * resistance R, the state equations are
 *
 *     C dv/dt = i - g v            L di/dt = -v - R i
 *
 * whose matrix has trace T = -g/C - R/L and determinant
 * D = (1 + g R) / (L C).  The point is asymptotically stable when both
 * eigenvalues have negative real part: T < 0 and D > 0 (the Routh-Hurwitz
 * conditions for a second-order system; Chua, Desoer & Kuh, Linear and
 * Nonlinear Circuits, McGraw-Hill 1987, the second-order circuit chapter,
 * where the tunnel-diode circuit is the worked case).  D < 0 is a saddle:
 * the circuit leaves the point (the middle of three crossings); D > 0 with
 * T > 0 is an unstable focus or node inside a bounded region, and the
 * circuit oscillates around it (on a falling branch when L > R |r_d| C).
 *
 * Which reactance dominates when the session gives none:
 *   - a device with I(V) (voltage-controlled, as a tunnel diode): its own
 *     capacitance, with the series inductance negligible (L/C -> 0); then
 *     the first-order circuit C dv/dt = -(1/R + g) v is stable iff
 *     1/R + g > 0, i.e. 1 + g R > 0 (the same book, first-order circuits);
 *   - a device given only as V(I) (current-controlled, as a self-heated
 *     thermistor): its thermal lag, which acts like an inductance in series
 *     (the resistance follows the temperature slowly); the first-order
 *     circuit tau dv/dt = -(R + r_d) i is stable iff R + r_d > 0
 *     (same book; for thermistors the same criterion from the heat balance,
 *     Becker, Green & Pearson, "Properties and uses of thermistors",
 *     Trans. AIEE 65, 1946 — from memory).
 * A given capacitance or inductance replaces the assumed limit: with only
 * L given, C -> 0 (the device's own capacitance is tiny), so a falling
 * branch oscillates; with both, the full criterion above decides.
 *
 * Pure computation; no allocation.
 */
#ifndef BIASLINE_STABILITY_H
#define BIASLINE_STABILITY_H

#include <stdbool.h>
#include <stddef.h>

#include "problem.h"
#include "sweep.h"
#include "tolerance.h"

/* The verdict at one operating point. */
enum stability {
	STABILITY_STABLE,      /* small disturbances die out */
	STABILITY_UNSTABLE,    /* the circuit leaves the point (a saddle) */
	STABILITY_OSCILLATES,  /* the circuit circles the point (no settling) */
	STABILITY_UNKNOWN,     /* r_d not defined here (a corner, a tangent) */
};

/* The circuit's reactive parts; NaN (or negative) when not given. */
struct reactive_parts {
	double capacitance_across_device;   /* F */
	double inductance_in_series;        /* H */
};

/* Which dynamics decided the verdict. */
enum stability_dynamics {
	DYNAMICS_ELECTRICAL,   /* C across the device, L in series */
	DYNAMICS_THERMAL,      /* a current-controlled device's thermal lag */
};

/* The verdict and why. */
struct stability_result {
	enum stability verdict;
	enum stability_dynamics dynamics;
	double r_d;            /* the device's differential resistance, ohm */
	double trace, det;     /* T and D when both C and L are given; NaN else */
	char reason[200];      /* one line: "saddle: R + r_d < 0 (...)" */
};

/* Fill RP with "not given" for both parts. */
void reactive_parts_init(struct reactive_parts *rp);

/* Lower-case name of a verdict ("stable", "unstable", "oscillates", "unknown"). */
const char *stability_name(enum stability s);

/*
 * Classify the operating point of PB with differential resistance R_D
 * (dV/dI at the point, ohm; may be negative, infinite for a flat curve)
 * under the reactive parts RP (NULL: none given).  Writes *OUT.
 */
void stability_classify(const struct problem *pb, double r_d,
                        const struct reactive_parts *rp,
                        struct stability_result *out);

/*
 * The device's differential resistance dV/dI at its point (V, I) in PB:
 * 1/conductance for a curve with I(V), the model's own dV/dI for one given
 * as V(I).  NaN where it is not defined.
 */
double stability_rd(const struct problem *pb, double v, double i);

/*
 * Whether PB describes a part that runs away: a device given as V(I) over
 * a limited current range (a self-heated thermistor up to its maximum
 * temperature) whose load line stays above the curve to the end of that
 * range, so the source drives ever more current and the part heats past
 * its limit instead of settling.  When it does, a message naming the limit
 * goes to MSG and true is returned.
 */
bool stability_runaway(const struct problem *pb, char *msg, size_t n);

/*
 * Whether the tolerance box of C holds a fold: the number of operating
 * points differs between its corners (and the nominal), so the circuit has
 * several points somewhere in the box and may sit on another branch than
 * the nominal one.  Solves every corner (C must have at most
 * TOL_MAX_CORNER_ITEMS items; false otherwise).  When it does, a message
 * goes to MSG and true is returned.
 */
bool stability_box_fold(const struct tol_case *c, char *msg, size_t n);

/* stability_box_fold watched by PR (progress.h; may be NULL): a corner
 * at a time; stopped, it returns false. */
bool stability_box_fold_watched(const struct tol_case *c, char *msg, size_t n,
                                const struct progress *pr);

/* Where a swept circuit leaves a vanished stable branch for another. */
struct stability_jump {
	double value;            /* the parameter where the branch ends */
	double v_from, i_from;   /* the last point on the old branch */
	double v_to, i_to;       /* the first point on the new one */
};

/*
 * Follow the stable operating point along the sweep RES of SP on PB (with
 * the reactive parts RP, may be NULL) in increasing parameter order (UP)
 * or decreasing, as the circuit would if the parameter moved slowly that
 * way: where the followed branch dies at a fold, the circuit jumps to the
 * nearest stable point left.  Writes at most MAX jumps to OUT and returns
 * how many.  Sweeping up and down over the same range gives the two jump
 * values of a hysteresis loop (Chua, Desoer & Kuh 1987, the jump
 * phenomenon of circuits with folded characteristics).
 */
size_t stability_jumps(const struct problem *pb, const struct reactive_parts *rp,
                       const struct sweep_spec *sp, const struct sweep_result *res,
                       bool up, struct stability_jump *out, size_t max);

#endif
