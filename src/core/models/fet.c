/*
 * fet.c - field-effect transistors in a self-bias stage, seen from the
 * gate-source loop.  The bias line is VGS = VG - ID RS: with the device
 * voltage V taken as VGS and the device current I as the drain current ID,
 * that is exactly the load line V + r I = voc of a Thevenin source with
 * voc = VG (the gate voltage, 0 V for a JFET with its gate to ground, or a
 * divider's output) and r = RS (the source resistor).
 *
 * The drain current is the square law of Shichman & Hodges (IEEE J.
 * Solid-State Circuits 3(3), 1968) in all three regions, with the
 * threshold th and the factor k:
 *
 *   cut-off     VGS <= th:                    ID = 0
 *   saturation  0 < VGS - th <= VDS:          ID = (k/2) (VGS - th)^2
 *   triode      0 <= VDS < VGS - th:          ID = k ((VGS - th) VDS - VDS^2/2)
 *
 *   nmos (n-channel enhancement): th = Vth, k = mu Cox W/L in A/V^2 (the
 *        transconductance_parameter; some texts fold the 1/2 into k).
 *   jfet (n-channel depletion): th = VP (pinch-off, < 0; given with either
 *        sign since data sheets print it both ways, taken as -|VP|) and
 *        k = 2 IDSS / VP^2, which is the familiar ID = IDSS (1 - VGS/VP)^2
 *        in saturation and IDSS (2 (1 - VGS/VP) (VDS/-VP) - (VDS/VP)^2) in
 *        the triode region (Sedra & Smith, Microelectronic Circuits, 7th
 *        ed., 2015, sec. 5.1 and the JFET supplement; Shockley's analysis,
 *        Proc. IRE 40, 1952, gives a close 3/2-power form).
 *
 * The two laws and their slopes meet at VDS = VGS - th, so ID and dID/dVGS
 * are continuous across every boundary.
 *
 * The drain side closes the other loop: the drain resistor RD from the
 * supply VDD and the source resistor, which is the bias line's own r,
 * both carry ID, so VDS = VDD - ID (RD + r).  The transfer curve ID(VGS)
 * is therefore the one of this stage: for each VGS, ID solves the law
 * above with that VDS (in the triode region a quadratic, solved in the
 * form without cancellation), and VDS can never fall below zero.  The
 * model takes r from the problem's source (model_type.bind), into the slot
 * after its parameters; a device not bound to a source has r = 0, a
 * grounded source terminal.  An ideal current source (r infinite) fixes
 * ID but not the source terminal's voltage: the curve is then the
 * saturation law, and VDS and the region are reported as not defined.
 */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "../source.h"
#include "models.h"

/* The slot of the bound source resistance, after the parameters. */
#define FET_LOOP_R FET_NPARAMS

/* The law of one parameter set. */
struct fet_law {
	double th;   /* threshold: Vth, or VP (< 0) */
	double k;    /* A/V^2: ID = (k/2) (VGS - th)^2 in saturation */
	double vdd;  /* drain supply */
	double rl;   /* RD + r: the drain loop's resistance (may be infinite) */
};

/* The law of P (jfet or nmos). */
static struct fet_law fet_law(const double *p, bool jfet)
{
	struct fet_law l;
	if (jfet) {
		l.th = -fabs(p[FET_VTH]);
		l.k = 2.0 * p[FET_K] / (p[FET_VTH] * p[FET_VTH]);
	} else {
		l.th = p[FET_VTH];
		l.k = p[FET_K];
	}
	l.vdd = p[FET_VDD];
	l.rl = p[FET_RD] + p[FET_LOOP_R];
	return l;
}

/*
 * VDS at overdrive VOV > 0 in the triode region of L: the smaller root of
 * (k R / 2) x^2 - (k R vov + 1) x + VDD = 0, which is VDD - ID R = x with
 * ID = k (vov x - x^2/2), written as 2 VDD / (b + sqrt(b^2 - 2 k R VDD))
 * so that it neither cancels nor divides by R (R = 0 gives x = VDD).
 */
static double fet_triode_vds(const struct fet_law *l, double vov)
{
	double kr = l->k * l->rl;
	double b = kr * vov + 1.0;
	double d = b * b - 2.0 * kr * l->vdd;
	return 2.0 * l->vdd / (b + sqrt(fmax(d, 0.0)));
}

/* True when L is in saturation at overdrive VOV > 0. */
static bool fet_saturated(const struct fet_law *l, double vov)
{
	if (isinf(l->rl))
		return true; /* the source terminal floats: the law of saturation */
	double isat = 0.5 * l->k * vov * vov;
	return l->vdd - isat * l->rl >= vov;
}

/* ID, dID/dVGS along the stage, and VDS at VGS = V (VDS NaN: undefined). */
static double fet_eval(const double *p, bool jfet, double v, double *g,
                       double *vds)
{
	struct fet_law l = fet_law(p, jfet);
	double vov = v - l.th;
	if (!(vov > 0.0)) {
		*g = 0.0;
		*vds = isinf(l.rl) ? NAN : l.vdd;
		return 0.0;
	}
	if (fet_saturated(&l, vov)) {
		double id = 0.5 * l.k * vov * vov;
		*g = l.k * vov;
		*vds = isinf(l.rl) ? NAN : l.vdd - id * l.rl;
		return id;
	}
	double x = fet_triode_vds(&l, vov);
	*vds = x;
	/* dID/dvov from the implicit law at VDS = VDD - ID R. */
	*g = l.k * x / (1.0 + l.k * l.rl * (vov - x));
	return l.k * (vov * x - 0.5 * x * x);
}

/* ID at VGS = V. */
static double fet_current_law(const double *p, double v, bool jfet)
{
	double g, vds;
	return fet_eval(p, jfet, v, &g, &vds);
}

/* dID/dVGS along the stage. */
static double fet_conductance_law(const double *p, double v, bool jfet)
{
	double g, vds;
	fet_eval(p, jfet, v, &g, &vds);
	return g;
}

/*
 * VGS at ID = I on the conducting branch (V(0) is the threshold); -1 for
 * I < 0 or for a current the drain loop cannot carry (VDS would reach 0).
 */
static int fet_voltage_law(const double *p, double i, double *v, bool jfet)
{
	struct fet_law l = fet_law(p, jfet);
	if (!(i >= 0.0))
		return -1;
	double vov_sat = sqrt(2.0 * i / l.k);
	if (isinf(l.rl)) {
		*v = l.th + vov_sat;
		return isfinite(*v) ? 0 : -1;
	}
	double x = l.vdd - i * l.rl;
	if (i > 0.0 && !(x > 0.0))
		return -1;
	if (x >= vov_sat)
		*v = l.th + vov_sat;
	else
		*v = l.th + i / (l.k * x) + 0.5 * x; /* the triode law for vov */
	return isfinite(*v) ? 0 : -1;
}

/* dVGS/dID on the conducting branch (infinite at ID = 0). */
static double fet_resistance_law(const double *p, double i, bool jfet)
{
	struct fet_law l = fet_law(p, jfet);
	if (!(i >= 0.0))
		return NAN;
	if (i == 0.0)
		return INFINITY;
	double vov_sat = sqrt(2.0 * i / l.k);
	if (isinf(l.rl))
		return 1.0 / (l.k * vov_sat);
	double x = l.vdd - i * l.rl;
	if (!(x > 0.0))
		return NAN;
	if (x >= vov_sat)
		return 1.0 / (l.k * vov_sat);
	/* d/dI of I/(k x) + x/2 with dx/dI = -R */
	return 1.0 / (l.k * x) + i * l.rl / (l.k * x * x) - 0.5 * l.rl;
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

/* The drain loop carries the source's resistance (infinite: none known). */
static void fet_bind(double *p, const struct source *src)
{
	p[FET_LOOP_R] = src->r;
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

/* MOSFET: from below the threshold to where the square law reaches 1 A
 * (at least twice the threshold). */
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

/*
 * The drain side at VGS = V, ID = I: VDS and the region from the law, the
 * drain and source terminal voltages, the device's own transconductance
 * dID/dVGS at fixed VDS (k (VGS - th) in saturation, k VDS in the triode
 * region) and the power ID VDS.  SRC is the source the point was found
 * with (its r is what the curve was bound to).
 */
static int fet_secondary_law(const double *p, const struct source *src,
                             double v, double i, struct model_extra *out,
                             bool jfet)
{
	double bound[MODEL_MAX_PARAMS];
	memcpy(bound, p, sizeof bound);
	fet_bind(bound, src);
	struct fet_law l = fet_law(bound, jfet);
	double g, vds;
	fet_eval(bound, jfet, v, &g, &vds);
	double vov = v - l.th;
	bool floating = isinf(l.rl);
	/* On the load line the source terminal sits at ID r above ground. */
	double vs = floating ? NAN : i * src->r;
	double vd = l.vdd - i * p[FET_RD];
	if (!floating)
		vds = l.vdd - i * l.rl; /* the same, at the point's own ID */
	const char *th = jfet ? "pinch-off VP" : "the threshold Vth";
	out->warn = false;
	out->note[0] = '\0';
	double gm = 0.0;
	if (!(vov > 0.0)) {
		out->region = "cut off";
		snprintf(out->note, sizeof out->note,
		         "VGS is %.4g V below %s: no drain current", -vov, th);
	} else if (floating) {
		out->region = "saturation (assumed)";
		out->warn = true;
		gm = l.k * vov;
		snprintf(out->note, sizeof out->note,
		         "an ideal current source sets ID but not the source "
		         "terminal's voltage: VDS and the region are not defined "
		         "here; the saturation law is assumed");
	} else if (vds >= vov) {
		out->region = "saturation";
		gm = l.k * vov;
	} else {
		out->region = "triode";
		gm = l.k * vds;
		snprintf(out->note, sizeof out->note,
		         "VDS %.4g V is below VGS - %s = %.4g V: the channel is not "
		         "pinched off and ID follows the triode law", vds,
		         jfet ? "VP" : "Vth", vov);
	}
	if (jfet && v > 0.0) {
		out->warn = true;
		snprintf(out->note, sizeof out->note,
		         "VGS > 0: the gate junction is forward biased and draws "
		         "current; the square law no longer holds above about 0.5 V");
	}
	fet_put(out, "drain_source_voltage", "VDS", QTY_VOLTAGE, vds);
	fet_put(out, "drain_voltage", "V(D)", QTY_VOLTAGE, vd);
	fet_put(out, "source_terminal_voltage", "V(S)", QTY_VOLTAGE, vs);
	fet_put(out, "overdrive_voltage", jfet ? "VGS-VP" : "VGS-Vth", QTY_VOLTAGE,
	        vov);
	fet_put(out, "transconductance", "gm", QTY_CONDUCTANCE, gm);
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

/*
 * The power the transistor dissipates: ID VDS (the gate draws no
 * current, so VGS ID is no power at all).  With an ideal current source
 * VDS is not defined, and neither is this.
 */
static double fet_power(const double *p, const struct source *src, double v,
                        double i)
{
	(void)v;
	double rl = p[FET_RD] + src->r;
	if (isinf(rl))
		return NAN;
	return i * (p[FET_VDD] - i * rl);
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
	.bind = fet_bind,
	.power = fet_power,
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
	.bind = fet_bind,
	.power = fet_power,
};
