/*
 * sensitivity.h - how the operating point moves with each parameter.
 *
 * Method: implicit differentiation of the operating-point equation
 * (problem.h)
 *
 *     F(V; p) = V + r I(V; p) - voc = 0     (finite source resistance)
 *     F(V; p) = I(V; p) - isc = 0           (ideal current source)
 *
 * gives dV/dp = -(dF/dp) / (dF/dV) at the solved point, with dF/dV =
 * 1 + r g(V) (or g(V)) from the model's conductance.  dF/dp is exact for
 * the source parameters (vs: -1; rs: I; is: -r; rp: I - isc); for a
 * device parameter it is r dI/dp at fixed V, taken by a central difference
 * of the model's current (a one-sided second-order difference at the edge
 * of the parameter's range), checked against the same with half the step
 * so that a parameter the model is not smooth in is refused.  For a part
 * of a network source, dF/dp = I dr/dp - dvoc/dp (or -disc/dp for an
 * ideal current source), with the reduced source's dvoc/dp and dr/dp taken
 * by a central difference of the network's reduction.  A device whose
 * curve takes the source's resistance (model_type.bind: a FET's drain
 * loop) adds r dI/dp|V for a source or part parameter, by a central
 * difference of the bound curve.  Then dI/dp = g dV/dp + dI/dp|V, and for
 * the device power P = V I, dP/dp = I dV/dp + V dI/dp; for a device that
 * dissipates otherwise (model_type.power: a transistor) dP/dp is the
 * central difference of its power along the point's tangent
 * (p + t, V + t dV/dp, I + t dI/dp).
 *
 * A device that heats itself (thermal.h) moves with its junction
 * temperature as well: see thermal_sensitivity.  Its thermal resistance
 * has no derivative at 0 (self-heating off), so it is refused there.
 *
 * Normalised sensitivities are (p / y) dy/dp: the per-cent change of y per
 * per-cent change of p.  They are NaN where y is 0, and mean little for a
 * parameter whose zero is arbitrary (a temperature in degrees Celsius):
 * use the absolute derivative there.
 */
#ifndef BIASLINE_SENSITIVITY_H
#define BIASLINE_SENSITIVITY_H

#include <stddef.h>

#include "paramref.h"
#include "problem.h"

/* Sensitivities of one operating point to one parameter. */
struct sensitivity {
	struct paramref param;
	double value;            /* the parameter's value */
	double dv, di, dp;       /* dV/dp, dI/dp, dP/dp (device power) */
	double sv, si, sp;       /* normalised: (p/V) dV/dp, (p/I) dI/dp, ... */
};

/*
 * Sensitivities of the operating point (V, I) of PB to R into *OUT.
 * Returns 0, or -1 when the device has no current(V) or the point is
 * singular there (dF/dV = 0: a fold, where the point does not move
 * smoothly).
 */
int sensitivity_at(const struct problem *pb, double v, double i,
                   const struct paramref *r, struct sensitivity *out);

/*
 * Sensitivities to every parameter paramref_all lists, at most MAX into
 * OUT; returns how many were written (those that fail are skipped).
 */
size_t sensitivity_all(const struct problem *pb, double v, double i,
                       struct sensitivity *out, size_t max);

/*
 * dI/dp of PB's device at fixed voltage V for device parameter INDEX, by
 * the difference rule above.  NaN when not computable or not smooth.
 */
double sensitivity_model_partial(const struct problem *pb, int index,
                                 double v);

#endif
