/*
 * diode.c - the Shockley junction diode with ideality factor, saturation
 * current, optional series (bulk) resistance and junction temperature:
 *
 *     I = Is * (exp(Vj / (n Vt)) - 1),   V = Vj + I * Rs,   Vt = k T / q
 *
 * (Shockley, Bell Syst. Tech. J. 28, 1949).  k and q are the exact values
 * of the 2019 SI redefinition (BIPM, The International System of Units,
 * 9th edition, 2019).
 *
 * Temperature.  Without a reference temperature, Is is the value at the
 * junction temperature as given.  With one, Is is taken at the reference
 * temperature T0 and carried to the junction temperature T (kelvin) by
 *
 *     Is(T) = Is(T0) (T/T0)^m exp(q Eg / (n k) (1/T0 - 1/T))
 *
 * The law comes from the ideal-diode saturation current, proportional to
 * ni^2 = Nc Nv exp(-Eg / kT) with Nc, Nv ~ T^(3/2), so Is ~ T^3
 * exp(-Eg/kT) for a diffusion-limited junction (n = 1, m = 3), and to
 * ni ~ T^(3/2) exp(-Eg/2kT) for recombination in the depletion region
 * (n = 2) (Sze & Ng, Physics of Semiconductor Devices, 3rd ed., 2007,
 * ch. 1 (intrinsic density) and ch. 2 (p-n junction current)).  Eg is
 * taken as constant over the range; 1.12 eV is silicon at room
 * temperature (Sze & Ng 2007, ch. 1).
 *
 * Self-heating.  With a thermal resistance the junction temperature is not
 * given but solved (thermal.h): the curve is the one at that temperature,
 * so Is must be stated at a reference temperature for the law above to
 * carry it there; the validator asks for one.
 */
#include <float.h>
#include <math.h>
#include <stdio.h>

#include "../junction.h"
#include "models.h"

#define BOLTZMANN 1.380649e-23          /* J/K, exact (SI 2019) */
#define ELEMENTARY_CHARGE 1.602176634e-19 /* C, exact (SI 2019) */
#define ZERO_CELSIUS 273.15             /* K */

/* Thermal voltage kT/q at TEMP_C. */
double diode_thermal_voltage(double temp_c)
{
	return BOLTZMANN * (temp_c + ZERO_CELSIUS) / ELEMENTARY_CHARGE;
}

/* Saturation current at T_C from IS_REF at TREF_C (see models.h). */
double diode_scaled_saturation(double is_ref, double t_c, double tref_c,
                               double eg_ev, double m, double n)
{
	if (!(tref_c > -ZERO_CELSIUS))
		return is_ref;
	double t = t_c + ZERO_CELSIUS, t0 = tref_c + ZERO_CELSIUS;
	/* q Eg / k in kelvin: Eg in eV times e / k. */
	double eg_k = eg_ev * ELEMENTARY_CHARGE / BOLTZMANN;
	return is_ref * pow(t / t0, m) * exp(eg_k / n * (1.0 / t0 - 1.0 / t));
}

/* Saturation current at the junction temperature. */
static double diode_is(const double *p)
{
	/* Without a reference temperature (the default) Is is as given: skip
	 * the call, as every junction evaluation of a solve comes here. */
	if (!(p[DIODE_TREF] > -ZERO_CELSIUS))
		return p[DIODE_IS];
	return diode_scaled_saturation(p[DIODE_IS], p[DIODE_TEMP], p[DIODE_TREF],
	                               p[DIODE_EG], p[DIODE_XTI], p[DIODE_N]);
}

/* n * Vt for the parameters P. */
static double diode_nvt(const double *p)
{
	return p[DIODE_N] * diode_thermal_voltage(p[DIODE_TEMP]);
}

/* Junction current at junction voltage VJ. */
static double diode_intrinsic_current(const double *p, double vj)
{
	return junction_shockley_current(diode_is(p), diode_nvt(p), vj);
}

/* Junction conductance at VJ. */
static double diode_intrinsic_conductance(const double *p, double vj)
{
	return junction_shockley_conductance(diode_is(p), diode_nvt(p), vj);
}

/* Junction voltage at current I (I > -Is), NaN outside. */
static double diode_intrinsic_voltage(const double *p, double i)
{
	return junction_shockley_voltage(diode_is(p), diode_nvt(p), i);
}

/* Series resistance. */
static double diode_series_resistance(const double *p)
{
	return p[DIODE_RS];
}

/* Terminal current at terminal voltage V (inner solve when Rs > 0). */
static double diode_current(const double *p, double v)
{
	if (p[DIODE_RS] == 0.0)
		return diode_intrinsic_current(p, v);
	struct junction_result jr =
		junction_solve(&model_diode, p, v, p[DIODE_RS], 1e-15);
	return jr.ij;
}

/* dI/dV at terminal voltage V: 1 / (r_j + Rs). */
static double diode_conductance(const double *p, double v)
{
	if (p[DIODE_RS] == 0.0)
		return diode_intrinsic_conductance(p, v);
	struct junction_result jr =
		junction_solve(&model_diode, p, v, p[DIODE_RS], 1e-15);
	return jr.gj / (1.0 + jr.gj * p[DIODE_RS]);
}

/* Terminal voltage at current I. */
static int diode_voltage(const double *p, double i, double *v)
{
	double vj = diode_intrinsic_voltage(p, i);
	if (!isfinite(vj))
		return -1;
	*v = vj + i * p[DIODE_RS];
	return 0;
}

/* dV/dI at current I. */
static double diode_resistance(const double *p, double i)
{
	double d = diode_is(p) + i;
	if (!(d > 0.0))
		return NAN;
	return diode_nvt(p) / d + p[DIODE_RS];
}

/* Junction-voltage limiting (junction.h). */
static double diode_limit(const double *p, double vnew, double vold)
{
	return junction_limit_step(diode_is(p), diode_nvt(p), vnew, vold);
}

/* The junction is one Shockley exponential: Is, n Vt and Rs. */
static int diode_shockley(const double *p, struct model_shockley *out)
{
	out->is = diode_is(p);
	out->nvt = diode_nvt(p);
	out->rs = p[DIODE_RS];
	return 0;
}

/* From a reverse voltage to the forward voltage at 1 A (and 10 nVt). */
static void diode_range(const double *p, double *vmin, double *vmax)
{
	double v1;
	if (diode_voltage(p, 1.0, &v1) != 0 || !isfinite(v1))
		v1 = 1.0;
	*vmax = v1;
	*vmin = -0.25 * v1;
}

static const struct model_param diode_params[DIODE_NPARAMS] = {
	[DIODE_IS] = { "saturation_current", "Is", QTY_CURRENT, NAN, 0.0, 1.0,
	               true, false, true,
	               "saturation current (at reference_temperature if given)" },
	[DIODE_N] = { "ideality", "n", QTY_NUMBER, NAN, 0.0, 100.0, true, false,
	              false, "ideality (emission) factor, about 1 to 2 for silicon" },
	[DIODE_RS] = { "series_resistance", "Rbulk", QTY_RESISTANCE, 0.0, 0.0, 1e9,
	               false, false, true, "bulk/series resistance, 0 for none" },
	[DIODE_TEMP] = { "temperature", "T", QTY_TEMPERATURE, 25.0, -273.15,
	                 1000.0, true, false, false,
	                 "junction temperature in degrees Celsius" },
	[DIODE_TREF] = { "reference_temperature", "T0", QTY_TEMPERATURE,
	                 -ZERO_CELSIUS, -ZERO_CELSIUS, 1000.0, false, false, false,
	                 "temperature Is was measured at; 0 K (default): no scaling",
	                 .off_at_default = true },
	[DIODE_EG] = { "bandgap", "Eg", QTY_ENERGY_EV, 1.12, 0.0, 10.0, false,
	               false, false, "band gap for Is scaling, 1.12 eV for silicon",
	               .needs = "reference_temperature" },
	[DIODE_XTI] = { "saturation_exponent", "m", QTY_NUMBER, 3.0, 0.0, 10.0,
	                false, false, false,
	                "temperature exponent of Is, 3 for an ideal junction",
	                .needs = "reference_temperature" },
	/* 150 degC: the usual rating of silicon signal and rectifier diodes
	 * in plastic packages (common practice; glass parts often 175-200). */
	MODEL_THERMAL_PARAMS(DIODE_THETA, DIODE_TAMB, DIODE_TJMAX, 150.0,
	                     "rated maximum junction temperature (150 degC: "
	                     "silicon diodes, common practice)"),
};

/*
 * Self-heating needs Is at a stated temperature to carry it to Tj.  And
 * what the solvers will use must be a number a double holds: Is at the
 * junction temperature (carried from a reference temperature it may
 * overflow, or underflow to 0 or to a subnormal with no precision left)
 * and n Vt.
 */
static int diode_validate(const double *p, char *err, size_t errlen)
{
	if (p[DIODE_THETA] > 0.0 && !(p[DIODE_TREF] > -ZERO_CELSIUS)) {
		snprintf(err, errlen,
		         "reference_temperature: with thermal_resistance the junction "
		         "temperature is solved, so give the temperature "
		         "saturation_current was stated at (say 25 degC)");
		return -1;
	}
	if (model_thermal_check(p, DIODE_THETA, DIODE_TAMB, DIODE_TJMAX, err,
	                        errlen))
		return -1;
	double is = diode_is(p), nvt = diode_nvt(p);
	if (!(nvt > 0.0) || !isfinite(nvt)) {
		snprintf(err, errlen, "ideality: %.4g times kT/q at %.4g degC is "
		         "not a usable voltage", p[DIODE_N], p[DIODE_TEMP]);
		return -1;
	}
	if (isfinite(is) && is >= DBL_MIN)
		return 0;
	if (p[DIODE_TREF] > -ZERO_CELSIUS)
		snprintf(err, errlen,
		         "saturation_current: %.4g A at reference_temperature %.6g "
		         "degC becomes %.4g A at temperature %.6g degC, %s; check "
		         "reference_temperature, bandgap and saturation_exponent",
		         p[DIODE_IS], p[DIODE_TREF], is, p[DIODE_TEMP],
		         isfinite(is) ? "too small to compute with (it underflows)"
		                      : "beyond the range of a number (it overflows)");
	else
		snprintf(err, errlen, "saturation_current: %.4g A is too small to "
		         "compute with (below %.3g A)", is, DBL_MIN);
	return -1;
}

const struct model_type model_diode = {
	.name = "diode",
	.summary = "Shockley junction diode with ideality and series resistance",
	.params = diode_params,
	.nparams = DIODE_NPARAMS,
	.monotone = true,
	.current = diode_current,
	.conductance = diode_conductance,
	.voltage = diode_voltage,
	.resistance = diode_resistance,
	.range = diode_range,
	.validate = diode_validate,
	.series_resistance = diode_series_resistance,
	.intrinsic_current = diode_intrinsic_current,
	.intrinsic_conductance = diode_intrinsic_conductance,
	.limit = diode_limit,
	.shockley = diode_shockley,
	.intrinsic_voltage = diode_intrinsic_voltage,
};
