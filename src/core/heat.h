/*
 * heat.h - the heat balance of a part that heats itself.
 *
 * A part that turns out the heat P(T) at its own temperature T and loses
 * it through a thermal resistance theta (K/W) to an ambient Ta settles
 * where the heat made equals the heat removed:
 *
 *     P(T) = (T - Ta) / theta,   i.e.   T = g(T) = Ta + theta P(T).
 *
 * The balances are the zeros of H(T) = T - Ta - theta P(T), and the
 * fixed-point map g has the slope G = theta dP/dT, the thermal loop gain:
 * each kelvin of heating brings G kelvin more.  A balance is thermally
 * stable when G < 1 -- the criterion dP/dT < 1/theta (J. Millman and
 * C. C. Halkias, Integrated Electronics, McGraw-Hill, 1972, the thermal
 * stability of a transistor stage, dPC/dTj < 1/Theta; R. Stout, "Beyond the
 * data sheet: demystifying thermal runaway", Power Electronics Technology,
 * Nov. 2007; both from memory).  At a stable balance H crosses zero
 * upwards (H' = 1 - G > 0); at G = 1 two balances meet and vanish (a fold:
 * thermal runaway past it).
 *
 * The caller gives P(T) as a function.  A junction (thermal.h) makes each
 * value an electrical solve at T; a thermistor (models/thermistor.c) finds
 * its body temperature at each current with heat_refine, its P being
 * I^2 R(T) and its thermal resistance 1/delta.  The scan finds every
 * balance in an interval with the kernel's sampling scan, as the
 * electrical every-root scan does: sign changes of H on a grid plus the
 * dips of |H| between grid points that reach zero (a cool and a hot
 * balance close together).  Each is refined by the kernel's safeguarded
 * Newton-Raphson on H inside its bracket, bisecting when a step leaves it
 * (kernel.h).
 *
 * Temperatures are in degrees Celsius; tolerances are relative to the
 * absolute temperature T + 273.15 K.
 */
#ifndef BIASLINE_HEAT_H
#define BIASLINE_HEAT_H

#include <stdbool.h>
#include <stddef.h>

/* Absolute zero in degrees Celsius. */
#define HEAT_ZERO_C (-273.15)

/* The heat a part turns out against its temperature. */
struct heat_curve {
	/*
	 * The heat at T (degC) into *P (W) and, when DP is not NULL, dP/dT
	 * into *DP (W/K).  Returns 0, or -1 where P is not defined.
	 */
	int (*power)(void *ctx, double t, double *p, double *dp);
	void *ctx;
};

/* One balance. */
struct heat_root {
	double t;         /* temperature, degC */
	double p;         /* heat there, W */
	double dp;        /* dP/dT there, W/K (NaN when not known) */
	double gain;      /* the loop gain G = theta dP/dT */
	bool stable;      /* G < 1 */
	bool tangent;     /* H touches zero without crossing: a fold */
	unsigned iters;   /* Newton or bisection steps */
};

/* H(T) = T - Ta - theta P(T) for the curve C into *H; 0, or -1. */
int heat_residual(const struct heat_curve *c, double ta, double theta,
                  double t, double *h);

/*
 * The balance inside [LO, HI], where H changes sign (or is zero at an
 * end), to relative tolerance TOL.  Fills *OUT and returns 0, or -1 when
 * [LO, HI] does not bracket a balance or P fails inside.
 */
int heat_refine(const struct heat_curve *c, double ta, double theta,
                double lo, double hi, double tol, struct heat_root *out);

/*
 * Every balance in [LO, HI] on a grid of GRID intervals (at least 8),
 * each refined to TOL: at most MAX into OUT in rising temperature.
 * Returns how many were found.  Stretches where P fails are skipped.
 */
size_t heat_scan(const struct heat_curve *c, double ta, double theta,
                 double lo, double hi, size_t grid, double tol,
                 struct heat_root *out, size_t max);

#endif
