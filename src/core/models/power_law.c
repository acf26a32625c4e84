/*
 * power_law.c - a symmetric power-law conductor
 *
 *     I = Iref * sign(V) * |V / Vref|^alpha
 *
 * alpha >> 1 is a varistor-like clamp; alpha < 1 a soft load whose
 * resistance rises with current (a lamp filament, say); alpha = 1 a resistor.
 * The empirical varistor law I = k V^alpha is common practice (see e.g.
 * Levinson & Philipp, Am. Ceram. Soc. Bull. 65(4), 1986).
 */
#include <math.h>

#include "models.h"

/* Current at V. */
static double power_law_current(const double *p, double v)
{
	double x = fabs(v) / p[POWER_LAW_VREF];
	double i = p[POWER_LAW_IREF] * pow(x, p[POWER_LAW_ALPHA]);
	return v < 0.0 ? -i : i;
}

/* dI/dV at V. */
static double power_law_conductance(const double *p, double v)
{
	double a = p[POWER_LAW_ALPHA];
	double x = fabs(v) / p[POWER_LAW_VREF];
	if (x == 0.0) {
		if (a < 1.0)
			return INFINITY;
		return a == 1.0 ? p[POWER_LAW_IREF] / p[POWER_LAW_VREF] : 0.0;
	}
	return a * p[POWER_LAW_IREF] / p[POWER_LAW_VREF] * pow(x, a - 1.0);
}

/* Voltage at I. */
static int power_law_voltage(const double *p, double i, double *v)
{
	double y = fabs(i) / p[POWER_LAW_IREF];
	double u = p[POWER_LAW_VREF] * pow(y, 1.0 / p[POWER_LAW_ALPHA]);
	*v = i < 0.0 ? -u : u;
	return isfinite(*v) ? 0 : -1;
}

/* dV/dI at I. */
static double power_law_resistance(const double *p, double i)
{
	double a = p[POWER_LAW_ALPHA];
	double y = fabs(i) / p[POWER_LAW_IREF];
	if (y == 0.0) {
		if (a > 1.0)
			return INFINITY;
		return a == 1.0 ? p[POWER_LAW_VREF] / p[POWER_LAW_IREF] : 0.0;
	}
	return p[POWER_LAW_VREF] / (a * p[POWER_LAW_IREF]) * pow(y, 1.0 / a - 1.0);
}

/* Twice the reference voltage each way. */
static void power_law_range(const double *p, double *vmin, double *vmax)
{
	*vmax = 2.0 * p[POWER_LAW_VREF];
	*vmin = -*vmax;
}

static const struct model_param power_law_params[POWER_LAW_NPARAMS] = {
	[POWER_LAW_VREF] = { "reference_voltage", "Vref", QTY_VOLTAGE, NAN, 0.0,
	                     1e7, true, false, true,
	                     "voltage at which the current is the reference current" },
	[POWER_LAW_IREF] = { "reference_current", "Iref", QTY_CURRENT, NAN, 0.0,
	                     1e6, true, false, true, "current at the reference voltage" },
	[POWER_LAW_ALPHA] = { "exponent", "alpha", QTY_NUMBER, NAN, 0.0, 200.0,
	                      true, false, false,
	                      "exponent: >1 clamps (varistor), <1 soft (lamp)" },
};

const struct model_type model_power_law = {
	.name = "power-law",
	.summary = "symmetric power law I = Iref (V/Vref)^alpha (varistor, lamp)",
	.params = power_law_params,
	.nparams = POWER_LAW_NPARAMS,
	.monotone = true,
	.current = power_law_current,
	.conductance = power_law_conductance,
	.voltage = power_law_voltage,
	.resistance = power_law_resistance,
	.range = power_law_range,
};
