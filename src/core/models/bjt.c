/*
 * bjt.c - a bipolar transistor in a base-bias stage, seen from its base
 * loop.  The source is the Thevenin equivalent of the base bias (VBB
 * behind RB, e.g. a divider R1/R2 from the supply: VBB = VCC R2/(R1+R2),
 * RB = R1 || R2); the device voltage V is the base voltage VB (from the
 * rail the emitter resistor returns to) and the device current I the base
 * current IB.
 *
 * The transistor is the transport form of the Ebers-Moll model (Ebers &
 * Moll, Proc. IRE 42, 1954), both junctions with the ideality n:
 *
 *     a = exp(VBE / n Vt) - 1,   c = exp(VBC / n Vt) - 1
 *     IC = Is (a - c) - (Is / betaR) c
 *     IB = (Is / betaF) a + (Is / betaR) c
 *     IE = IC + IB
 *
 * and the stage closes both loops: VB = VBE + IE RE, and the collector
 * sits at VC = VCC - IC RC, so VBC = VB - VC.  Eliminating VB and VC, for
 * a given VBE the base-collector voltage u = VBC solves
 *
 *     u + B (exp(u / n Vt) - 1) = A,
 *     A = VBE - VCC + Is a (RE (1 + 1/betaF) + RC),
 *     B = Is (RE + RC (1 + 1/betaR)),
 *
 * whose left side rises strictly with u, so it has one root (found by
 * safeguarded Newton in a bracket).  VB(VBE) = VBE + IE RE rises strictly
 * with VBE, and so does IB: the base-loop curve IB(VB) is single-valued
 * and increasing, and current(VB) inverts VB(VBE) the same way.
 *
 * In the forward-active region c is -1 (to within exp(VBC / n Vt)) and
 * the curve is the familiar junction with saturation current Is / betaF
 * behind (betaF + 1) RE.  In saturation the base-collector junction
 * conducts too: IC falls below betaF IB and VCE(sat), VBE and the forced
 * gain IC/IB follow from both junctions rather than from a fixed
 * VCE(sat).  The region is the junctions' (Ebers & Moll's four modes):
 * forward active (BE forward, BC not), saturation (both forward), cut off
 * (neither) and reverse active (BC only).
 *
 * "pnp" is the mirror image, every quantity a magnitude measured from the
 * supply rail the emitter returns to: V is the drop from that rail to the
 * base, I the current out of the base.
 *
 * Temperature.  With a reference temperature Is is stated there and carried
 * to the junction temperature by the diode's law (diode.c: band gap and
 * exponent, silicon defaults), which gives VBE at a fixed collector current
 * the familiar drift of about -2 mV/K.  Self-heating (thermal.h) needs it:
 * the heat is the transistor's own IC VCE + IB VBE (bjt_power; the emitter
 * and collector resistors are outside the package), and the junction
 * temperature is solved.
 */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "../junction.h"
#include "../source.h"
#include "models.h"

/* The constants of one parameter set. */
struct bjt_k {
	double is, s;        /* saturation current, n Vt */
	double bf, br;       /* forward and reverse current gains */
	double re, rc, vcc;
	double k1, k2;       /* RE (1 + 1/bf) + RC, RE + RC (1 + 1/br) */
};

/* The transistor at one base-emitter voltage. */
struct bjt_state {
	double vbe, vbc;     /* junction voltages */
	double ib, ic, ie;   /* terminal currents */
	double vb;           /* base voltage VBE + IE RE */
	double dib, dvb;     /* dIB/dVBE and dVB/dVBE */
};

/* The constants of P. */
static struct bjt_k bjt_constants(const double *p)
{
	struct bjt_k k;
	k.is = p[BJT_TREF] > -273.15
	       ? diode_scaled_saturation(p[BJT_IS], p[BJT_TEMP], p[BJT_TREF],
	                                 p[BJT_EG], p[BJT_XTI], p[BJT_N])
	       : p[BJT_IS];
	k.s = p[BJT_N] * diode_thermal_voltage(p[BJT_TEMP]);
	k.bf = p[BJT_BETA];
	k.br = p[BJT_BETAR];
	k.re = p[BJT_RE];
	k.rc = p[BJT_RC];
	k.vcc = p[BJT_VCC];
	k.k1 = k.re * (1.0 + 1.0 / k.bf) + k.rc;
	k.k2 = k.re + k.rc * (1.0 + 1.0 / k.br);
	return k;
}

/* u + B expm1(u / s) for Q = { B, s }. */
static double bjt_vbc_lhs(const double *q, double u)
{
	return u + q[0] * expm1(u / q[1]);
}

/* Its derivative. */
static double bjt_vbc_dlhs(const double *q, double u)
{
	return 1.0 + q[0] / q[1] * exp(u / q[1]);
}

/*
 * The base-collector voltage u with u + B expm1(u / s) = A.  Where A - u
 * is many n Vt (the collector junction well forward biased) the equation
 * is solved in its logarithmic form u = s ln(1 + (A - u) / B), a
 * contraction with rate s / (A - u + B) that keeps every digit of u even
 * when A is far larger than u; elsewhere by safeguarded Newton on the
 * equation itself.
 */
static double bjt_solve_vbc(double a, double b, double s)
{
	if (b == 0.0 || !isfinite(a))
		return a;
	/* Reverse biased by 40 n Vt or more: expm1 is -1 to the last bit. */
	if (a + b < -40.0 * s)
		return a + b;
	if (a + b > 8.0 * s) {
		double u = s * log1p(a / b);
		for (int it = 0; it < 100; it++) {
			double un = s * log1p((a - u) / b);
			if (!(fabs(un - u) > 1e-16 * fabs(un))) {
				u = un;
				break;
			}
			u = un;
		}
		if (a - u + b > 4.0 * s && isfinite(u))
			return u;
	}
	double lo, hi;
	if (a >= 0.0) {
		/* f(0) = 0 <= A, and u >= 0 gives B expm1(u/s) <= A. */
		lo = 0.0;
		hi = fmin(a, s * log1p(a / b));
	} else {
		/* f(A) = A + B expm1(A/s) < A and f(0) = 0 > A. */
		lo = a;
		hi = 0.0;
	}
	double q[2] = { b, s }, u;
	if (model_invert(bjt_vbc_lhs, bjt_vbc_dlhs, q, a, lo, hi, &u) != 0)
		return NAN;
	return u;
}

/* The transistor K at base-emitter voltage T. */
static struct bjt_state bjt_at(const struct bjt_k *k, double t)
{
	struct bjt_state st;
	st.vbe = t;
	double a = expm1(t / k->s);
	if (!isfinite(a)) {
		/* Beyond the exponential's range: every current unbounded. */
		st.vbc = st.ib = st.ic = st.ie = st.vb = INFINITY;
		st.dib = st.dvb = INFINITY;
		return st;
	}
	double ap = k->is * exp(t / k->s) / k->s; /* d(Is a)/dVBE */
	double big_a = t - k->vcc + k->is * a * k->k1;
	double b = k->is * k->k2;
	double u = bjt_solve_vbc(big_a, b, k->s);
	double c = expm1(u / k->s);
	double gp = k->is * exp(u / k->s) / k->s; /* d(Is c)/dVBC */
	st.vbc = u;
	st.ic = k->is * (a - c) - k->is / k->br * c;
	st.ib = k->is / k->bf * a + k->is / k->br * c;
	st.ie = st.ic + st.ib;
	st.vb = t + k->re * st.ie;
	/* dVBC/dVBE from the implicit equation, then the chain rule. */
	double du = (1.0 + ap * k->k1) / (1.0 + gp * k->k2);
	if (b == 0.0)
		du = 1.0 + ap * k->k1;
	st.dib = ap / k->bf + gp / k->br * du;
	double die = ap * (1.0 + 1.0 / k->bf) - gp * du;
	st.dvb = 1.0 + k->re * die;
	return st;
}

/* VB at VBE = T for Q = P (the model's own parameters). */
static double bjt_vb_of(const double *p, double t)
{
	struct bjt_k k = bjt_constants(p);
	return bjt_at(&k, t).vb;
}

/* dVB/dVBE. */
static double bjt_dvb_of(const double *p, double t)
{
	struct bjt_k k = bjt_constants(p);
	return bjt_at(&k, t).dvb;
}

/* IB at VBE = T. */
static double bjt_ib_of(const double *p, double t)
{
	struct bjt_k k = bjt_constants(p);
	return bjt_at(&k, t).ib;
}

/* dIB/dVBE. */
static double bjt_dib_of(const double *p, double t)
{
	struct bjt_k k = bjt_constants(p);
	return bjt_at(&k, t).dib;
}

/*
 * The VBE at which F (increasing in VBE) equals TARGET, into *T: a bracket
 * grown from GUESS by doubling steps, then safeguarded Newton.
 */
static int bjt_invert(double (*f)(const double *, double),
                      double (*df)(const double *, double), const double *p,
                      double target, double guess, double *t)
{
	double s = p[BJT_N] * diode_thermal_voltage(p[BJT_TEMP]);
	double lo = guess - s, hi = guess + s;
	for (int k = 0; k < 60 && !(f(p, lo) <= target); k++)
		lo -= (guess - lo);
	for (int k = 0; k < 60 && !(f(p, hi) >= target); k++)
		hi += (hi - guess);
	return model_invert(f, df, p, target, lo, hi, t);
}

/* True when ST's collector junction is reverse biased by 40 n Vt or more:
 * exp(VBC / n Vt) - 1 is then -1 to the last bit (the active region). */
static bool bjt_is_active(const struct bjt_k *k, const struct bjt_state *st)
{
	return st->vbc < -40.0 * k->s;
}

/*
 * The transistor at base voltage V.  In the active region c = -1 exactly,
 * so VB = VBE + RE (Is (1 + 1/betaF) a + Is): a Shockley junction behind
 * RE, solved in closed form (junction.h).  When that puts the collector
 * junction within 40 n Vt of conducting, the stage is near or in
 * saturation and VB(VBE) is inverted by safeguarded Newton; the active
 * answer bounds it from below, as the base-collector junction only takes
 * emitter current away.
 */
static int bjt_at_vb(const double *p, double v, struct bjt_state *st)
{
	if (!isfinite(v))
		return -1;
	struct bjt_k k = bjt_constants(p);
	double t;
	if (k.re > 0.0) {
		struct junction_result jr = junction_solve_shockley(
		        k.is * (1.0 + 1.0 / k.bf), k.s, v - k.re * k.is, k.re, 1e-15);
		t = jr.vj;
	} else {
		t = v;
	}
	if (isfinite(t)) {
		*st = bjt_at(&k, t);
		if (bjt_is_active(&k, st))
			return isfinite(st->ib) && isfinite(st->vb) ? 0 : -1;
	}
	double guess = isfinite(t) ? t : v;
	if (bjt_invert(bjt_vb_of, bjt_dvb_of, p, v, guess, &t) != 0)
		return -1;
	*st = bjt_at(&k, t);
	return isfinite(st->ib) && isfinite(st->vb) ? 0 : -1;
}

/* Base current at base voltage V. */
static double bjt_current(const double *p, double v)
{
	struct bjt_state st;
	if (bjt_at_vb(p, v, &st) != 0)
		return v > 0.0 ? INFINITY : NAN;
	return st.ib;
}

/* dIB/dVB. */
static double bjt_conductance(const double *p, double v)
{
	struct bjt_state st;
	if (bjt_at_vb(p, v, &st) != 0)
		return NAN;
	return st.dib / st.dvb;
}

/*
 * The transistor at base current I: IB(VBE) rises strictly from
 * -Is (1/betaF + 1/betaR) (both junctions reverse biased) without bound.
 */
static int bjt_at_ib(const double *p, double i, struct bjt_state *st)
{
	double is = bjt_constants(p).is;
	if (!(i > -is * (1.0 / p[BJT_BETA] + 1.0 / p[BJT_BETAR])) || !isfinite(i))
		return -1;
	struct bjt_k k = bjt_constants(p);
	/* In the active region IB = (Is/betaF) a - Is/betaR: a closed form. */
	double guess = k.s * log1p(k.bf * (i + is / k.br) / is);
	if (isfinite(guess)) {
		*st = bjt_at(&k, guess);
		if (bjt_is_active(&k, st))
			return 0;
	}
	double t;
	if (bjt_invert(bjt_ib_of, bjt_dib_of, p, i, isfinite(guess) ? guess : 0.0,
	               &t) != 0)
		return -1;
	*st = bjt_at(&k, t);
	return 0;
}

/* Base voltage at base current I. */
static int bjt_voltage(const double *p, double i, double *v)
{
	struct bjt_state st;
	if (bjt_at_ib(p, i, &st) != 0 || !isfinite(st.vb))
		return -1;
	*v = st.vb;
	return 0;
}

/* dVB/dIB. */
static double bjt_resistance(const double *p, double i)
{
	struct bjt_state st;
	if (bjt_at_ib(p, i, &st) != 0)
		return NAN;
	return st.dvb / st.dib;
}

/*
 * From a little reverse bias to the base voltage at which the collector
 * would carry twice what its circuit can (or 1 A), with VBE kept below
 * 600 n Vt so that the junction's exponential stays finite.
 */
static void bjt_range(const double *p, double *vmin, double *vmax)
{
	struct bjt_k k = bjt_constants(p);
	double ic = 1.0, rl = k.rc + k.re;
	if (rl > 0.0 && k.vcc > 0.0)
		ic = fmin(ic, 2.0 * k.vcc / rl);
	double t = fmin(k.s * log1p(ic / k.is), 600.0 * k.s);
	double v1 = bjt_at(&k, t).vb;
	*vmax = isfinite(v1) ? v1 : t;
	*vmin = -0.25 * fmin(*vmax, 1.0);
}

/* VCE at the state ST (magnitude for a pnp). */
static double bjt_vce(const struct bjt_k *k, const struct bjt_state *st)
{
	return k->vcc - st->ic * k->rc - st->ie * k->re;
}

/*
 * The power the transistor dissipates: IC VCE + IB VBE, from the state at
 * the base current I (the same as from V on the curve; from I it barely
 * moves with the junction temperature, which the self-heating solve
 * relies on: thermal.h), or from V when I is outside the curve.
 */
static double bjt_power(const double *p, const struct source *src, double v,
                        double i)
{
	(void)src;
	struct bjt_state st;
	if (bjt_at_ib(p, i, &st) != 0 && bjt_at_vb(p, v, &st) != 0)
		return NAN;
	struct bjt_k k = bjt_constants(p);
	return st.ic * bjt_vce(&k, &st) + st.ib * st.vbe;
}

/* Append a labelled value to OUT. */
static void bjt_put(struct model_extra *out, const char *key,
                    const char *label, enum qty_kind kind, double value)
{
	if (out->n < MODEL_MAX_EXTRA)
		out->v[out->n++] = (struct model_extra_value){ key, label, kind, value };
}

/* The collector side at base voltage V (base current I on the curve). */
static int bjt_secondary_common(const double *p, double v, double i,
                                struct model_extra *out, bool pnp)
{
	(void)i;
	struct bjt_state st;
	if (bjt_at_vb(p, v, &st) != 0)
		return -1;
	struct bjt_k k = bjt_constants(p);
	double vce = bjt_vce(&k, &st);
	bool be = st.vbe > 0.0, bc = st.vbc > 0.0;
	out->warn = false;
	out->note[0] = '\0';
	if (be && !bc) {
		out->region = "active";
	} else if (be && bc) {
		out->region = "saturation";
		snprintf(out->note, sizeof out->note,
		         "both junctions conduct (%s %.3g V): IC/IB = %.4g, below "
		         "beta %.4g", pnp ? "VCB" : "VBC", st.vbc, st.ic / st.ib,
		         k.bf);
	} else if (!be && !bc) {
		out->region = "cut off";
		snprintf(out->note, sizeof out->note,
		         "neither junction is forward biased: only leakage flows "
		         "(IC = %.3g A)", st.ic);
	} else {
		out->region = "reverse active";
		out->warn = true;
		snprintf(out->note, sizeof out->note,
		         "only the base-collector junction conducts: the transistor "
		         "runs backwards with gain betaR; check the supply and the "
		         "bias");
	}
	bjt_put(out, "collector_current", "IC", QTY_CURRENT, st.ic);
	bjt_put(out, "emitter_current", "IE", QTY_CURRENT, st.ie);
	bjt_put(out, pnp ? "emitter_collector_voltage" : "collector_emitter_voltage",
	        pnp ? "VEC" : "VCE", QTY_VOLTAGE, vce);
	bjt_put(out, pnp ? "emitter_base_voltage" : "base_emitter_voltage",
	        pnp ? "VEB" : "VBE", QTY_VOLTAGE, st.vbe);
	bjt_put(out, "emitter_voltage", "VE", QTY_VOLTAGE, st.ie * k.re);
	bjt_put(out, "collector_voltage", "VC", QTY_VOLTAGE, k.vcc - st.ic * k.rc);
	bjt_put(out, "collector_power", "PC", QTY_POWER, st.ic * vce);
	bjt_put(out, "forced_gain", "IC/IB", QTY_NUMBER,
	        st.ib != 0.0 ? st.ic / st.ib : NAN);
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
	             false, true,
	             "transport saturation current (IC = Is e^(VBE/nVt), active)" },
	[BJT_N] = { "ideality", "n", QTY_NUMBER, 1.0, 0.0, 100.0, true, false,
	            false, "ideality factor of both junctions" },
	[BJT_BETA] = { "current_gain", "beta", QTY_NUMBER, NAN, 0.0, 1e6, true,
	               false, true, "forward current gain IC/IB when active" },
	[BJT_RE] = { "emitter_resistance", "RE", QTY_RESISTANCE, 0.0, 0.0, 1e9,
	             false, false, true, "emitter resistor to the rail, 0 for none" },
	[BJT_RC] = { "collector_resistance", "RC", QTY_RESISTANCE, 0.0, 0.0, 1e9,
	             false, false, true, "collector resistor from the supply" },
	[BJT_VCC] = { "supply_voltage", "VCC", QTY_VOLTAGE, NAN, 0.0, 1e4, false,
	              false, false, "collector supply (magnitude)" },
	[BJT_BETAR] = { "reverse_current_gain", "betaR", QTY_NUMBER, 1.0, 0.0,
	                1e6, true, false, true,
	                "reverse current gain, sets VCE(sat) in saturation" },
	[BJT_TEMP] = { "temperature", "T", QTY_TEMPERATURE, 25.0, -273.15, 1000.0,
	               true, false, false, "junction temperature in degrees Celsius" },
	[BJT_TREF] = { "reference_temperature", "T0", QTY_TEMPERATURE, -273.15,
	               -273.15, 1000.0, false, false, false,
	               "temperature Is was stated at; 0 K (default): no scaling",
	               .off_at_default = true },
	[BJT_EG] = { "bandgap", "Eg", QTY_ENERGY_EV, 1.12, 0.0, 10.0, false, false,
	             false, "band gap for Is scaling, 1.12 eV for silicon",
	               .needs = "reference_temperature" },
	[BJT_XTI] = { "saturation_exponent", "m", QTY_NUMBER, 3.0, 0.0, 10.0,
	              false, false, false,
	              "temperature exponent of Is, 3 for an ideal junction",
	                .needs = "reference_temperature" },
	/* 150 degC: the usual rating of silicon transistors in plastic
	 * packages (common practice; metal cans often 175-200 degC). */
	MODEL_THERMAL_PARAMS(BJT_THETA, BJT_TAMB, BJT_TJMAX, 150.0,
	                     "rated maximum junction temperature (150 degC: "
	                     "plastic silicon parts, common practice)"),
};

/* Self-heating needs Is at a stated temperature to carry it to Tj. */
static int bjt_validate(const double *p, char *err, size_t errlen)
{
	if (p[BJT_THETA] > 0.0 && !(p[BJT_TREF] > -273.15)) {
		snprintf(err, errlen,
		         "reference_temperature: with thermal_resistance the junction "
		         "temperature is solved, so give the temperature "
		         "saturation_current was stated at (say 25 degC)");
		return -1;
	}
	return model_thermal_check(p, BJT_THETA, BJT_TAMB, BJT_TJMAX, err, errlen);
}

/* Keys the model no longer takes, and why. */
static const struct model_retired bjt_retired[] = {
	{ "saturation_voltage",
	  "VCE(sat) now follows from both junctions (Ebers-Moll): remove the "
	  "line, and give reverse_current_gain to shape saturation" },
	{ NULL, NULL },
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
	.secondary = bjt_npn_secondary,
	.validate = bjt_validate,
	.power = bjt_power,
	.retired = bjt_retired,
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
	.secondary = bjt_pnp_secondary,
	.validate = bjt_validate,
	.power = bjt_power,
	.retired = bjt_retired,
};
