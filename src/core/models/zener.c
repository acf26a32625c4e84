/*
 * zener.c - a zener (breakdown) diode: a forward Shockley junction in
 * parallel with a reverse breakdown junction, behind one series resistance:
 *
 *     Ij(vj) = Is (exp(vj / n Vt) - 1)
 *              - Ir (exp(-(vj + Vj0) / (nb Vt)) - exp(-Vj0 / (nb Vt)))
 *     V = vj + I * Rs
 *
 * The breakdown term is a second exponential junction turned round
 * (reverse breakdown current rising exponentially with reverse voltage is
 * common practice for avalanche and tunnelling breakdown as seen at the
 * terminals), shifted so that Ij(0) = 0.  The curve is smooth, strictly
 * increasing and has a continuous derivative everywhere.
 *
 * The user states the datasheet numbers: the breakdown voltage Vz at the
 * test current Iz and the dynamic resistance rz there.  Ir, Vj0 and Rs are
 * derived so that exactly V(-Iz) = -Vz and dV/dI(-Iz) = rz:
 *
 *     Vj0 = Vz - Iz Rs                      (the junction voltage there)
 *     Ir  = (Iz + Is (exp(-Vj0/(n Vt)) - 1)) / (1 - exp(-Vj0/(nb Vt)))
 *     Rs  = rz - 1 / gj(-Vj0)               (gj = dIj/dvj)
 *
 * Rs depends on Vj0 only through terms of order exp(-Vz/Vt), so a few
 * substitutions settle it to rounding.  rz must exceed the junction's own
 * nb Vt / Iz; the breakdown ideality nb sets how sharp the knee is.
 *
 * Temperature.  Datasheets state how Vz drifts at the test current (about
 * -2 mV/K for low-voltage parts, near zero around 5 to 6 V, positive and
 * growing above; common practice).  With a temperature coefficient tc
 * the stated point moves: Vz(T) = Vz + tc (T - T0), T0 the reference
 * temperature.  With a thermal resistance (thermal.h) T is the solved
 * junction temperature.
 */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "../junction.h"
#include "models.h"

/* The derived constants of one parameter set. */
struct zener_k {
	double is, nvt;    /* forward junction */
	double a;          /* nb Vt */
	double ir, vj0;    /* breakdown amplitude and shift */
	double e0;         /* exp(-Vj0 / a) */
	double rs;         /* series resistance */
};

/* The breakdown voltage at the test current at the junction temperature. */
static double zener_vz(const double *p)
{
	if (p[ZENER_TC] == 0.0)
		return p[ZENER_VZ];
	return p[ZENER_VZ] + p[ZENER_TC] * (p[ZENER_TEMP] - p[ZENER_TREF]);
}

/* Derive the constants of P (see the top of the file). */
static void zener_derive(const double *p, struct zener_k *k)
{
	double vz = zener_vz(p);
	double vt = diode_thermal_voltage(p[ZENER_TEMP]);
	double iz = p[ZENER_IZT];
	k->is = p[ZENER_IS];
	k->nvt = p[ZENER_N] * vt;
	k->a = p[ZENER_NB] * vt;
	k->rs = p[ZENER_RZ] - k->a / iz;
	for (int it = 0; it < 6; it++) {
		k->vj0 = vz - iz * k->rs;
		k->e0 = exp(-k->vj0 / k->a);
		k->ir = (iz + k->is * expm1(-k->vj0 / k->nvt)) / -expm1(-k->vj0 / k->a);
		double gj = k->is / k->nvt * exp(-k->vj0 / k->nvt) + k->ir / k->a;
		double rs = p[ZENER_RZ] - 1.0 / gj;
		if (rs == k->rs)
			break;
		k->rs = rs;
	}
	/* Keep Vj0 and Ir consistent with the final Rs: V(-Iz) = -Vz exactly. */
	k->vj0 = vz - iz * k->rs;
	k->e0 = exp(-k->vj0 / k->a);
	k->ir = (iz + k->is * expm1(-k->vj0 / k->nvt)) / -expm1(-k->vj0 / k->a);
}

/* Junction current of the constants K at VJ. */
static double zener_kcurrent(const struct zener_k *k, double vj)
{
	return k->is * expm1(vj / k->nvt) -
	       k->ir * (exp(-(vj + k->vj0) / k->a) - k->e0);
}

/* Junction conductance of the constants K at VJ. */
static double zener_kconductance(const struct zener_k *k, double vj)
{
	return k->is / k->nvt * exp(vj / k->nvt) +
	       k->ir / k->a * exp(-(vj + k->vj0) / k->a);
}

/* The constants into K (model_type.prepare), in struct zener_k's order. */
static int zener_prepare(const double *p, double *k)
{
	struct zener_k z;
	zener_derive(p, &z);
	k[0] = z.is;
	k[1] = z.nvt;
	k[2] = z.a;
	k[3] = z.ir;
	k[4] = z.vj0;
	k[5] = z.e0;
	k[6] = z.rs;
	return 0;
}

/* The constants K as a struct zener_k. */
static struct zener_k zener_unpack(const double *k)
{
	return (struct zener_k){ .is = k[0], .nvt = k[1], .a = k[2], .ir = k[3],
	                         .vj0 = k[4], .e0 = k[5], .rs = k[6] };
}

/* Junction current at VJ given K. */
static double zener_current_k(const double *p, const double *k, double vj)
{
	(void)p;
	struct zener_k z = zener_unpack(k);
	return zener_kcurrent(&z, vj);
}

/* Junction conductance at VJ given K. */
static double zener_conductance_k(const double *p, const double *k, double vj)
{
	(void)p;
	struct zener_k z = zener_unpack(k);
	return zener_kconductance(&z, vj);
}

/* Junction current at VJ. */
static double zener_intrinsic_current(const double *p, double vj)
{
	struct zener_k k;
	zener_derive(p, &k);
	return zener_kcurrent(&k, vj);
}

/* Junction conductance at VJ. */
static double zener_intrinsic_conductance(const double *p, double vj)
{
	struct zener_k k;
	zener_derive(p, &k);
	return zener_kconductance(&k, vj);
}

/* Series resistance. */
static double zener_series_resistance(const double *p)
{
	struct zener_k k;
	zener_derive(p, &k);
	return k.rs;
}

/* The junction voltage at current I; 0 or -1. */
static int zener_junction_voltage(const double *p, const struct zener_k *k,
                                  double i, double *vj)
{
	double lo, hi;
	if (i == 0.0) {
		*vj = 0.0;
		return 0;
	}
	if (i > 0.0) {
		/* The breakdown term is positive there: the forward branch
		 * alone needs a higher voltage. */
		lo = 0.0;
		hi = k->nvt * log1p(i / k->is) + 1e-9 * k->nvt; /* + rounding */
	} else {
		/* The forward term is negative there: the breakdown branch
		 * alone needs a less negative voltage. */
		hi = 0.0;
		lo = -k->vj0 - k->a * log(k->e0 - i / k->ir) - 1e-9 * k->a;
	}
	if (!isfinite(lo) || !isfinite(hi))
		return -1;
	return model_invert(zener_intrinsic_current, zener_intrinsic_conductance,
	                    p, i, lo, hi, vj);
}

/* The junction voltage at current I (the exact inverse), NaN outside. */
static double zener_intrinsic_voltage(const double *p, double i)
{
	struct zener_k k;
	double vj;
	zener_derive(p, &k);
	return zener_junction_voltage(p, &k, i, &vj) == 0 ? vj : NAN;
}

/* Terminal current at V. */
static double zener_current(const double *p, double v)
{
	struct zener_k k;
	zener_derive(p, &k);
	if (k.rs == 0.0)
		return zener_kcurrent(&k, v);
	return junction_solve(&model_zener, p, v, k.rs, 1e-15).ij;
}

/* dI/dV at V: 1 / (r_j + Rs). */
static double zener_conductance(const double *p, double v)
{
	struct zener_k k;
	zener_derive(p, &k);
	if (k.rs == 0.0)
		return zener_kconductance(&k, v);
	struct junction_result jr = junction_solve(&model_zener, p, v, k.rs, 1e-15);
	double gj = zener_kconductance(&k, jr.vj);
	return gj / (1.0 + gj * k.rs);
}

/* Terminal voltage at I. */
static int zener_voltage(const double *p, double i, double *v)
{
	struct zener_k k;
	double vj;
	zener_derive(p, &k);
	if (zener_junction_voltage(p, &k, i, &vj) != 0)
		return -1;
	*v = vj + i * k.rs;
	return isfinite(*v) ? 0 : -1;
}

/* dV/dI at I. */
static double zener_resistance(const double *p, double i)
{
	struct zener_k k;
	double vj;
	zener_derive(p, &k);
	if (zener_junction_voltage(p, &k, i, &vj) != 0)
		return NAN;
	return 1.0 / zener_kconductance(&k, vj) + k.rs;
}

/*
 * Junction-voltage limiting (junction.h) on both exponentials: a large
 * step up the forward branch, or down into breakdown (the same limiting
 * in u = -(vj + Vj0), the depth into breakdown).
 */
static double zener_limit(const double *p, double vnew, double vold)
{
	struct zener_k k;
	zener_derive(p, &k);
	double v = junction_limit_step(k.is, k.nvt, vnew, vold);
	if (v != vnew)
		return v;
	double unew = -(vnew + k.vj0), uold = -(vold + k.vj0);
	double u = junction_limit_step(k.ir, k.a, unew, uold);
	return u != unew ? -u - k.vj0 : vnew;
}

/* From ten times the test current in breakdown to ten times it forward. */
static void zener_range(const double *p, double *vmin, double *vmax)
{
	double iz = p[ZENER_IZT];
	if (zener_voltage(p, -10.0 * iz, vmin) != 0 || !isfinite(*vmin))
		*vmin = -1.5 * zener_vz(p);
	if (zener_voltage(p, 10.0 * iz, vmax) != 0 || !isfinite(*vmax))
		*vmax = 1.0;
}

/*
 * The stated dynamic resistance must leave room for the junction's own,
 * at the temperature of P.
 */
static int zener_validate_at(const double *p, char *err, size_t errlen)
{
	struct zener_k k;
	double vt = diode_thermal_voltage(p[ZENER_TEMP]);
	double a = p[ZENER_NB] * vt, iz = p[ZENER_IZT];
	double vz = zener_vz(p);
	if (!(iz > p[ZENER_IS])) {
		snprintf(err, errlen, "test_current: must exceed saturation_current");
		return -1;
	}
	if (!(vz - iz * (p[ZENER_RZ] - a / iz) > 20.0 * a)) {
		if (p[ZENER_TC] != 0.0)
			snprintf(err, errlen,
			         "temperature_coefficient: %.4g V/K leaves a breakdown "
			         "voltage of %.4g V at %.4g degC, too low for a test "
			         "current of %.4g A and a dynamic resistance of %.4g ohm",
			         p[ZENER_TC], vz, p[ZENER_TEMP], iz, p[ZENER_RZ]);
		else
			snprintf(err, errlen,
			         "breakdown_voltage: %.4g V is too low for a test current "
			         "of %.4g A and a dynamic resistance of %.4g ohm",
			         vz, iz, p[ZENER_RZ]);
		return -1;
	}
	zener_derive(p, &k);
	if (!(k.rs >= 0.0)) {
		snprintf(err, errlen,
		         "dynamic_resistance: %.4g ohm is below the breakdown junction's "
		         "own %.4g ohm (breakdown_ideality x kT/q / test_current); raise "
		         "it or lower breakdown_ideality",
		         p[ZENER_RZ], k.a / p[ZENER_IZT]);
		return -1;
	}
	if (!(k.vj0 > 20.0 * k.a) || !isfinite(k.ir) || !(k.ir > 0.0)) {
		snprintf(err, errlen,
		         "breakdown_voltage: %.4g V is too low for a test current of "
		         "%.4g A through %.4g ohm", vz, p[ZENER_IZT], k.rs);
		return -1;
	}
	return 0;
}

/*
 * The rules of zener_validate_at at the given temperature, or with a
 * thermal resistance at the ambient and at the maximum junction
 * temperature, the ends of the range the junction temperature is solved in.
 */
static int zener_validate(const double *p, char *err, size_t errlen)
{
	if (p[ZENER_THETA] <= 0.0)
		return zener_validate_at(p, err, errlen);
	if (model_thermal_check(p, ZENER_THETA, ZENER_TAMB, ZENER_TJMAX, err,
	                        errlen) != 0)
		return -1;
	model_values q;
	memcpy(q, p, sizeof q);
	q[ZENER_TEMP] = p[ZENER_TAMB];
	if (zener_validate_at(q, err, errlen) != 0)
		return -1;
	q[ZENER_TEMP] = p[ZENER_TJMAX];
	return zener_validate_at(q, err, errlen);
}

/*
 * The derived constants beside the point, so that every number can be
 * reproduced from biasline-models(7): the series resistance Rs, which
 * both branches carry (forward conduction too drops I Rs), the breakdown
 * junction's shift Vj0 and its current scale Ir.  No region: the curve is
 * one smooth junction.
 */
static int zener_secondary(const double *p, const struct source *src,
                           double v, double i, struct model_extra *out)
{
	(void)src;
	(void)v;
	(void)i;
	struct zener_k k;
	zener_derive(p, &k);
	out->region = NULL;
	out->warn = false;
	out->note[0] = '\0';
	out->v[out->n++] = (struct model_extra_value){
		"derived_series_resistance", "Rs", QTY_RESISTANCE, k.rs };
	out->v[out->n++] = (struct model_extra_value){
		"breakdown_shift_voltage", "Vj0", QTY_VOLTAGE, k.vj0 };
	out->v[out->n++] = (struct model_extra_value){
		"breakdown_scale_current", "Ir", QTY_CURRENT, k.ir };
	return 0;
}

static const struct model_param zener_params[ZENER_NPARAMS] = {
	[ZENER_VZ] = { "breakdown_voltage", "Vz", QTY_VOLTAGE, NAN, 0.0, 1e4, true,
	               false, false, "reverse voltage at the test current, positive" },
	/* Defaults: 5 mA and 10 ohm, typical of small glass zeners (from
	 * memory); a datasheet's own numbers should replace them. */
	[ZENER_IZT] = { "test_current", "Izt", QTY_CURRENT, 5e-3, 0.0, 100.0, true,
	                false, true, "reverse current at which Vz and rz are stated" },
	[ZENER_RZ] = { "dynamic_resistance", "rz", QTY_RESISTANCE, 10.0, 0.0, 1e7,
	               true, false, true, "dV/dI in breakdown at the test current" },
	[ZENER_IS] = { "saturation_current", "Is", QTY_CURRENT, 1e-14, 0.0, 1.0,
	               true, false, true, "forward saturation current" },
	[ZENER_N] = { "ideality", "n", QTY_NUMBER, 1.0, 0.0, 100.0, true, false,
	              false, "forward ideality factor" },
	[ZENER_NB] = { "breakdown_ideality", "nb", QTY_NUMBER, 1.0, 0.0, 100.0,
	               true, false, false,
	               "knee sharpness: breakdown current e-folds every nb kT/q" },
	[ZENER_TEMP] = { "temperature", "T", QTY_TEMPERATURE, 25.0, -273.15, 1000.0,
	                 true, false, false, "junction temperature in degrees Celsius" },
	[ZENER_TC] = { "temperature_coefficient", "dVz/dT", QTY_TEMPCO, 0.0, -1.0,
	               1.0, false, false, false,
	               "dVz/dT at the test current; 0: Vz stays put",
	               .off_at_default = true },
	[ZENER_TREF] = { "reference_temperature", "T0", QTY_TEMPERATURE, 25.0,
	                 -273.15, 1000.0, true, false, false,
	                 "temperature breakdown_voltage is stated at",
	                 .needs = "temperature_coefficient" },
	/* 150 degC: a common rating of small plastic zeners (from memory of
	 * common datasheets; glass parts are often rated 175 to 200 degC). */
	MODEL_THERMAL_PARAMS(ZENER_THETA, ZENER_TAMB, ZENER_TJMAX, 150.0,
	                     "rated maximum junction temperature (150 degC: "
	                     "small zeners, from memory)"),
};

const struct model_type model_zener = {
	.name = "zener",
	.summary = "zener diode: forward junction, breakdown at Vz and Izt with rz",
	.params = zener_params,
	.nparams = ZENER_NPARAMS,
	.monotone = true,
	.current = zener_current,
	.conductance = zener_conductance,
	.voltage = zener_voltage,
	.resistance = zener_resistance,
	.range = zener_range,
	.validate = zener_validate,
	.series_resistance = zener_series_resistance,
	.intrinsic_current = zener_intrinsic_current,
	.intrinsic_conductance = zener_intrinsic_conductance,
	.limit = zener_limit,
	.intrinsic_voltage = zener_intrinsic_voltage,
	.prepare = zener_prepare,
	.current_k = zener_current_k,
	.conductance_k = zener_conductance_k,
	.secondary = zener_secondary,
};
