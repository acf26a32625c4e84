/*
 * bjt.c - a bipolar transistor in a base-bias stage, seen from its base
 * loop.  The source is the Thevenin equivalent of the base bias (VBB
 * behind RB, e.g. a divider R1/R2 from the supply: VBB = VCC R2/(R1+R2),
 * RB = R1 || R2); the device voltage V is the base voltage VB and the
 * device current I the base current IB.  In the active region
 *
 *     IC = Is (exp(VBE / (n Vt)) - 1),   IB = IC / beta,
 *     VB = VBE + IE RE = VBE + (beta + 1) IB RE
 *
 * (Ebers & Moll, Proc. IRE 42, 1954, in the forward-active region), so the
 * base loop is a junction with saturation current Is/beta behind the
 * emitter resistor reflected as (beta + 1) RE: the diode model does the
 * work.  The collector side follows from the point found:
 *
 *     IC = beta IB,  VCE = VCC - IC RC - IE RE,
 *
 * and when that leaves VCE below the saturation voltage the transistor is
 * saturated: VCE = VCE(sat) and IC = (VCC - VCE(sat) - IB RE) / (RC + RE)
 * < beta IB.  The base loop keeps its active-region form there, so in
 * saturation the values are an approximation and the report says so.
 *
 * "pnp" is the mirror image, every quantity a magnitude measured from the
 * supply rail the emitter returns to: V is the drop from that rail to the
 * base, I the current out of the base.
 */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "../source.h"
#include "models.h"

/* The equivalent base-loop diode of P. */
static void bjt_to_diode(const double *p, double *d)
{
	d[DIODE_IS] = p[BJT_IS] / p[BJT_BETA];
	d[DIODE_N] = p[BJT_N];
	d[DIODE_RS] = (p[BJT_BETA] + 1.0) * p[BJT_RE];
	d[DIODE_TEMP] = p[BJT_TEMP];
	d[DIODE_TREF] = -273.15;
	d[DIODE_EG] = 0.0;
	d[DIODE_XTI] = 0.0;
}

/* Base current at base voltage V. */
static double bjt_current(const double *p, double v)
{
	double d[DIODE_NPARAMS];
	bjt_to_diode(p, d);
	return model_diode.current(d, v);
}

/* dIB/dVB. */
static double bjt_conductance(const double *p, double v)
{
	double d[DIODE_NPARAMS];
	bjt_to_diode(p, d);
	return model_diode.conductance(d, v);
}

/* Base voltage at base current I. */
static int bjt_voltage(const double *p, double i, double *v)
{
	double d[DIODE_NPARAMS];
	bjt_to_diode(p, d);
	return model_diode.voltage(d, i, v);
}

/* dVB/dIB. */
static double bjt_resistance(const double *p, double i)
{
	double d[DIODE_NPARAMS];
	bjt_to_diode(p, d);
	return model_diode.resistance(d, i);
}

/* The reflected emitter resistance. */
static double bjt_series_resistance(const double *p)
{
	return (p[BJT_BETA] + 1.0) * p[BJT_RE];
}

/* Base current at base-emitter voltage VJ. */
static double bjt_intrinsic_current(const double *p, double vj)
{
	double d[DIODE_NPARAMS];
	bjt_to_diode(p, d);
	return model_diode.intrinsic_current(d, vj);
}

/* dIB/dVBE. */
static double bjt_intrinsic_conductance(const double *p, double vj)
{
	double d[DIODE_NPARAMS];
	bjt_to_diode(p, d);
	return model_diode.intrinsic_conductance(d, vj);
}

/* VBE at base current I. */
static double bjt_intrinsic_voltage(const double *p, double i)
{
	double d[DIODE_NPARAMS];
	bjt_to_diode(p, d);
	return model_diode.intrinsic_voltage(d, i);
}

/* Junction limiting of the base-emitter junction. */
static double bjt_limit(const double *p, double vnew, double vold)
{
	double d[DIODE_NPARAMS];
	bjt_to_diode(p, d);
	return model_diode.limit(d, vnew, vold);
}

/* The base-emitter junction seen from the base: Is / beta and n Vt
 * behind the reflected emitter resistance. */
static int bjt_shockley(const double *p, struct model_shockley *out)
{
	out->is = p[BJT_IS] / p[BJT_BETA];
	out->nvt = p[BJT_N] * diode_thermal_voltage(p[BJT_TEMP]);
	out->rs = (p[BJT_BETA] + 1.0) * p[BJT_RE];
	return 0;
}

/*
 * From a little reverse bias to the base voltage that drives the collector
 * current to twice its saturation value (or 1 A), kept below 600 n Vt so
 * that the junction's exponential stays finite across the range.
 */
static void bjt_range(const double *p, double *vmin, double *vmax)
{
	double d[DIODE_NPARAMS];
	bjt_to_diode(p, d);
	double beta = p[BJT_BETA];
	double ib = 1.0 / beta;
	double rl = p[BJT_RC] + p[BJT_RE];
	if (rl > 0.0 && p[BJT_VCC] > 0.0)
		ib = fmin(ib, 2.0 * p[BJT_VCC] / (beta * rl));
	double v1;
	if (model_diode.voltage(d, ib, &v1) != 0 || !isfinite(v1))
		v1 = 1.0;
	double cap = 600.0 * p[BJT_N] * diode_thermal_voltage(p[BJT_TEMP]);
	*vmax = fmin(v1, cap);
	*vmin = -0.25 * fmin(*vmax, 1.0);
}

/* Append a labelled value to OUT. */
static void bjt_put(struct model_extra *out, const char *key,
                    const char *label, enum qty_kind kind, double value)
{
	if (out->n < MODEL_MAX_EXTRA)
		out->v[out->n++] = (struct model_extra_value){ key, label, kind, value };
}

/* The collector side at base voltage V and base current I. */
static int bjt_secondary_common(const double *p, double v, double i,
                                struct model_extra *out, bool pnp)
{
	double beta = p[BJT_BETA], re = p[BJT_RE], rc = p[BJT_RC];
	double vcc = p[BJT_VCC], vsat = p[BJT_VCESAT];
	double ic = beta * i, ie = (beta + 1.0) * i;
	double vce = vcc - ic * rc - ie * re;
	out->warn = false;
	out->note[0] = '\0';
	if (!(i > 0.0)) {
		out->region = "cut off";
		ic = 0.0;
		ie = i;
		vce = vcc - ie * re;
		snprintf(out->note, sizeof out->note,
		         "the base-emitter junction is not forward biased: no "
		         "collector current");
	} else if (vce < vsat) {
		out->region = "saturated";
		out->warn = true;
		ic = (vcc - vsat - i * re) / (rc + re);
		if (!(ic > 0.0))
			ic = 0.0;
		ie = ic + i;
		vce = vsat;
		snprintf(out->note, sizeof out->note,
		         "saturated: the supply cannot carry beta x IB; IC is set by "
		         "RC and RE, and the base loop's active-region form makes "
		         "these values approximate");
	} else {
		out->region = "active";
	}
	bjt_put(out, "collector_current", "IC", QTY_CURRENT, ic);
	bjt_put(out, "emitter_current", "IE", QTY_CURRENT, ie);
	bjt_put(out, pnp ? "emitter_collector_voltage" : "collector_emitter_voltage",
	        pnp ? "VEC" : "VCE", QTY_VOLTAGE, vce);
	bjt_put(out, pnp ? "emitter_base_voltage" : "base_emitter_voltage",
	        pnp ? "VEB" : "VBE", QTY_VOLTAGE, v - ie * re);
	bjt_put(out, "emitter_voltage", "VE", QTY_VOLTAGE, ie * re);
	bjt_put(out, "collector_voltage", "VC", QTY_VOLTAGE, vcc - ic * rc);
	bjt_put(out, "collector_power", "PC", QTY_POWER, ic * vce);
	bjt_put(out, "forced_gain", "IC/IB", QTY_NUMBER, i > 0.0 ? ic / i : NAN);
	return 0;
}

/* npn collector side. */
static int bjt_npn_secondary(const double *p, const struct source *src,
                             double v, double i, struct model_extra *out)
{
	(void)src;
	return bjt_secondary_common(p, v, i, out, false);
}

/* pnp collector side (magnitudes). */
static int bjt_pnp_secondary(const double *p, const struct source *src,
                             double v, double i, struct model_extra *out)
{
	(void)src;
	return bjt_secondary_common(p, v, i, out, true);
}

static const struct model_param bjt_params[BJT_NPARAMS] = {
	[BJT_IS] = { "saturation_current", "Is", QTY_CURRENT, NAN, 0.0, 1.0, true,
	             false, true, "transistor saturation current (IC = Is e^(VBE/nVt))" },
	[BJT_N] = { "ideality", "n", QTY_NUMBER, 1.0, 0.0, 100.0, true, false,
	            false, "base-emitter ideality factor" },
	[BJT_BETA] = { "current_gain", "beta", QTY_NUMBER, NAN, 0.0, 1e6, true,
	               false, true, "DC current gain IC/IB in the active region" },
	[BJT_RE] = { "emitter_resistance", "RE", QTY_RESISTANCE, 0.0, 0.0, 1e9,
	             false, false, true, "emitter resistor to the rail, 0 for none" },
	[BJT_RC] = { "collector_resistance", "RC", QTY_RESISTANCE, 0.0, 0.0, 1e9,
	             false, false, true, "collector resistor from the supply" },
	[BJT_VCC] = { "supply_voltage", "VCC", QTY_VOLTAGE, NAN, 0.0, 1e4, false,
	              false, false, "collector supply (magnitude)" },
	[BJT_VCESAT] = { "saturation_voltage", "VCEsat", QTY_VOLTAGE, 0.2, 0.0,
	                 10.0, false, false, false,
	                 "VCE below which the transistor is saturated" },
	[BJT_TEMP] = { "temperature", "T", QTY_TEMPERATURE, 25.0, -273.15, 1000.0,
	               true, false, false, "junction temperature in degrees Celsius" },
};

const struct model_type model_npn = {
	.name = "npn",
	.summary = "npn base bias: V = base voltage, I = base current; "
	           "source = base-bias Thevenin",
	.params = bjt_params,
	.nparams = BJT_NPARAMS,
	.monotone = true,
	.current = bjt_current,
	.conductance = bjt_conductance,
	.voltage = bjt_voltage,
	.resistance = bjt_resistance,
	.range = bjt_range,
	.series_resistance = bjt_series_resistance,
	.intrinsic_current = bjt_intrinsic_current,
	.intrinsic_conductance = bjt_intrinsic_conductance,
	.limit = bjt_limit,
	.shockley = bjt_shockley,
	.intrinsic_voltage = bjt_intrinsic_voltage,
	.secondary = bjt_npn_secondary,
};

const struct model_type model_pnp = {
	.name = "pnp",
	.summary = "pnp base bias in magnitudes from the emitter rail: V = rail "
	           "to base, I = base current",
	.params = bjt_params,
	.nparams = BJT_NPARAMS,
	.monotone = true,
	.current = bjt_current,
	.conductance = bjt_conductance,
	.voltage = bjt_voltage,
	.resistance = bjt_resistance,
	.range = bjt_range,
	.series_resistance = bjt_series_resistance,
	.intrinsic_current = bjt_intrinsic_current,
	.intrinsic_conductance = bjt_intrinsic_conductance,
	.limit = bjt_limit,
	.shockley = bjt_shockley,
	.intrinsic_voltage = bjt_intrinsic_voltage,
	.secondary = bjt_pnp_secondary,
};
