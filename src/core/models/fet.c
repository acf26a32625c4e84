/*
 * fet.c - field-effect transistors in a self-bias stage, seen from the
 * gate-source loop.  The bias line is VGS = VG - ID RS: with the device
 * voltage V taken as VGS and the device current I as the drain current ID,
 * that is exactly the load line V + r I = voc of a Thevenin source with
 * voc = VG (the gate voltage, 0 V for a JFET with its gate to ground, or a
 * divider's output) and r = RS (the source resistor).  The transfer curve
 * ID(VGS) takes the place of the device curve:
 *
 *   jfet (n-channel, depletion): ID = IDSS (1 - VGS/VP)^2 for VP < VGS,
 *        0 below pinch-off (VP < 0; given with either sign, since data
 *        sheets print it both ways): the square-law approximation of the
 *        saturation region (common practice; Shockley's analysis, Proc.
 *        IRE 40, 1952, gives a close 3/2-power form).
 *   nmos (n-channel, enhancement): ID = (k/2) (VGS - Vth)^2 for VGS > Vth,
 *        0 below, with k = mu Cox W/L in A/V^2 (Shichman & Hodges, IEEE J.
 *        Solid-State Circuits 3(3), 1968).  Note the factor 1/2: some texts
 *        fold it into k.
 *
 * Both curves are flat (ID = 0) below their threshold, so they are not
 * strictly increasing and V(I) is taken on the conducting branch (V(0) is
 * the threshold).  The drain side comes from the point found: VDS = VDD -
 * ID RD - VS with VS = VG - VGS = ID RS, and the square law holds only
 * while VDS >= VGS - VP (or VGS - Vth); below that the device is in its
 * ohmic (triode) region and the report says the point is not valid.
 */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "../source.h"
#include "models.h"

/* The threshold (VP or Vth) and the square-law factor (ID = a (VGS-th)^2). */
static void fet_law(const double *p, bool jfet, double *th, double *a)
{
	if (jfet) {
		*th = -fabs(p[FET_VTH]); /* either sign given: n-channel VP < 0 */
		*a = p[FET_K] / (p[FET_VTH] * p[FET_VTH]); /* IDSS / VP^2 */
	} else {
		*th = p[FET_VTH];
		*a = 0.5 * p[FET_K];
	}
}

/* ID at VGS = V. */
static double fet_current_law(const double *p, double v, bool jfet)
{
	double th, a;
	fet_law(p, jfet, &th, &a);
	double x = v - th;
	return x > 0.0 ? a * x * x : 0.0;
}

/* dID/dVGS. */
static double fet_conductance_law(const double *p, double v, bool jfet)
{
	double th, a;
	fet_law(p, jfet, &th, &a);
	double x = v - th;
	return x > 0.0 ? 2.0 * a * x : 0.0;
}

/* VGS at ID = I on the conducting branch; -1 for I < 0. */
static int fet_voltage_law(const double *p, double i, double *v, bool jfet)
{
	double th, a;
	fet_law(p, jfet, &th, &a);
	if (!(i >= 0.0))
		return -1;
	*v = th + sqrt(i / a);
	return isfinite(*v) ? 0 : -1;
}

/* dVGS/dID on the conducting branch (infinite at ID = 0). */
static double fet_resistance_law(const double *p, double i, bool jfet)
{
	double th, a;
	fet_law(p, jfet, &th, &a);
	if (!(i >= 0.0))
		return NAN;
	return i == 0.0 ? INFINITY : 0.5 / sqrt(a * i);
}

static double jfet_current(const double *p, double v)
{
	return fet_current_law(p, v, true);
}
static double jfet_conductance(const double *p, double v)
{
	return fet_conductance_law(p, v, true);
}
static int jfet_voltage(const double *p, double i, double *v)
{
	return fet_voltage_law(p, i, v, true);
}
static double jfet_resistance(const double *p, double i)
{
	return fet_resistance_law(p, i, true);
}
static double nmos_current(const double *p, double v)
{
	return fet_current_law(p, v, false);
}
static double nmos_conductance(const double *p, double v)
{
	return fet_conductance_law(p, v, false);
}
static int nmos_voltage(const double *p, double i, double *v)
{
	return fet_voltage_law(p, i, v, false);
}
static double nmos_resistance(const double *p, double i)
{
	return fet_resistance_law(p, i, false);
}

/* JFET: from 1.5 VP (cut off) to -0.5 VP (gate slightly forward). */
static void jfet_range(const double *p, double *vmin, double *vmax)
{
	*vmin = -1.5 * fabs(p[FET_VTH]);
	*vmax = 0.5 * fabs(p[FET_VTH]);
}

/* A pinch-off voltage of zero would leave no conducting channel. */
static int jfet_validate(const double *p, char *err, size_t errlen)
{
	if (p[FET_VTH] == 0.0) {
		snprintf(err, errlen, "pinch_off_voltage: must not be 0");
		return -1;
	}
	return 0;
}

/* MOSFET: from below the threshold to where ID reaches 1 A (at least
 * twice the threshold). */
static void nmos_range(const double *p, double *vmin, double *vmax)
{
	double th = p[FET_VTH];
	double v1 = th + sqrt(2.0 / p[FET_K]);
	*vmin = th - fmax(1.0, 0.5 * fabs(th));
	*vmax = fmax(v1, th + fmax(1.0, fabs(th)));
}

/* Append a labelled value to OUT. */
static void fet_put(struct model_extra *out, const char *key,
                    const char *label, enum qty_kind kind, double value)
{
	if (out->n < MODEL_MAX_EXTRA)
		out->v[out->n++] = (struct model_extra_value){ key, label, kind, value };
}

/* The drain side at VGS = V, ID = I with the bias source SRC. */
static int fet_secondary_law(const double *p, const struct source *src,
                             double v, double i, struct model_extra *out,
                             bool jfet)
{
	double th, a;
	fet_law(p, jfet, &th, &a);
	/* VS = VG - VGS on the bias line; with an ideal current source the
	 * gate voltage is not defined, and nor is VDS. */
	double vs = isfinite(src->voc) ? src->voc - v : NAN;
	double vd = p[FET_VDD] - i * p[FET_RD];
	double vds = vd - vs;
	double vov = v - th; /* overdrive */
	out->warn = false;
	out->note[0] = '\0';
	if (!(vov > 0.0)) {
		out->region = "cut off";
		snprintf(out->note, sizeof out->note, "VGS is beyond %s: no drain "
		         "current", jfet ? "pinch-off" : "the threshold");
	} else if (!(vds >= vov)) {
		out->region = "ohmic";
		out->warn = true;
		snprintf(out->note, sizeof out->note,
		         "VDS %.4g V is below VGS - %s = %.4g V: the device is in its "
		         "ohmic (triode) region, where the square law overstates ID; "
		         "lower RD or raise VDD",
		         vds, jfet ? "VP" : "Vth", vov);
	} else {
		out->region = "saturation";
	}
	if (jfet && v > 0.0 && out->note[0] == '\0') {
		out->warn = true;
		snprintf(out->note, sizeof out->note,
		         "VGS > 0: the gate junction is forward biased and draws "
		         "current; the square law no longer holds above about 0.5 V");
	}
	fet_put(out, "drain_source_voltage", "VDS", QTY_VOLTAGE, vds);
	fet_put(out, "drain_voltage", "VD", QTY_VOLTAGE, vd);
	fet_put(out, "source_voltage", "VS", QTY_VOLTAGE, vs);
	fet_put(out, "overdrive_voltage", jfet ? "VGS-VP" : "VGS-Vth", QTY_VOLTAGE,
	        vov);
	fet_put(out, "transconductance", "gm", QTY_CONDUCTANCE,
	        fet_conductance_law(p, v, jfet));
	fet_put(out, "drain_power", "PD", QTY_POWER, i * vds);
	return 0;
}

static int jfet_secondary(const double *p, const struct source *src, double v,
                          double i, struct model_extra *out)
{
	return fet_secondary_law(p, src, v, i, out, true);
}

static int nmos_secondary(const double *p, const struct source *src, double v,
                          double i, struct model_extra *out)
{
	return fet_secondary_law(p, src, v, i, out, false);
}

static const struct model_param jfet_params[FET_NPARAMS] = {
	[FET_K] = { "saturation_current", "IDSS", QTY_CURRENT, NAN, 0.0, 100.0,
	            true, false, true, "drain current at VGS = 0 (IDSS)" },
	[FET_VTH] = { "pinch_off_voltage", "VP", QTY_VOLTAGE, NAN, -1e3, 1e3,
	              false, false, false,
	              "gate-source pinch-off voltage (n-channel: taken as -|VP|)" },
	[FET_VDD] = { "supply_voltage", "VDD", QTY_VOLTAGE, NAN, 0.0, 1e4, false,
	              false, false, "drain supply" },
	[FET_RD] = { "drain_resistance", "RD", QTY_RESISTANCE, 0.0, 0.0, 1e9,
	             false, false, true, "drain resistor from the supply" },
};

static const struct model_param nmos_params[FET_NPARAMS] = {
	[FET_K] = { "transconductance_parameter", "k", QTY_NUMBER, NAN, 0.0, 1e3,
	            true, false, true,
	            "k = mu Cox W/L in A/V^2, ID = (k/2)(VGS - Vth)^2" },
	[FET_VTH] = { "threshold_voltage", "Vth", QTY_VOLTAGE, NAN, -1e3, 1e3,
	              false, false, false, "gate-source threshold voltage" },
	[FET_VDD] = { "supply_voltage", "VDD", QTY_VOLTAGE, NAN, 0.0, 1e4, false,
	              false, false, "drain supply" },
	[FET_RD] = { "drain_resistance", "RD", QTY_RESISTANCE, 0.0, 0.0, 1e9,
	             false, false, true, "drain resistor from the supply" },
};

const struct model_type model_jfet = {
	.name = "jfet",
	.summary = "n-JFET self bias: V = VGS, I = ID; source = gate voltage "
	           "behind RS",
	.params = jfet_params,
	.nparams = FET_NPARAMS,
	.monotone = false,
	.current = jfet_current,
	.conductance = jfet_conductance,
	.voltage = jfet_voltage,
	.resistance = jfet_resistance,
	.range = jfet_range,
	.validate = jfet_validate,
	.secondary = jfet_secondary,
};

const struct model_type model_nmos = {
	.name = "nmos",
	.summary = "enhancement n-MOSFET bias: V = VGS, I = ID; source = gate "
	           "voltage behind RS",
	.params = nmos_params,
	.nparams = FET_NPARAMS,
	.monotone = false,
	.current = nmos_current,
	.conductance = nmos_conductance,
	.voltage = nmos_voltage,
	.resistance = nmos_resistance,
	.range = nmos_range,
	.secondary = nmos_secondary,
};
