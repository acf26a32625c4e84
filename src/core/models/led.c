/*
 * led.c - a light-emitting diode stated the way datasheets state it: the
 * forward voltage at a test current, with an ideality factor and a series
 * resistance.  It is a Shockley junction (diode.c) whose saturation current
 * is derived so that the curve passes exactly through (Vf, If):
 *
 *     Is = If / (exp((Vf - If Rs) / (n Vt)) - 1)
 *
 * Presets per colour family fill typical values (see led_presets below).
 * forward_voltage is taken at the stated temperature: changing the
 * temperature moves the knee's shape (n Vt), not the stated point --
 * unless a temperature coefficient is given, the way LED datasheets state
 * the drift (dVf/dT at the test current, typically -1.5 to -4 mV/K;
 * common practice): then the stated point itself moves,
 *
 *     Vf(T) = Vf + tc (T - T0),   T0 = reference_temperature.
 *
 * With a thermal resistance (thermal.h) T is the solved junction
 * temperature; all the electrical power is taken as heat (the light
 * carried away is neglected, which errs on the hot side).
 */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "models.h"

/* The forward voltage at the test current at the junction temperature. */
static double led_vf(const double *p)
{
	if (p[LED_TC] == 0.0)
		return p[LED_VF];
	return p[LED_VF] + p[LED_TC] * (p[LED_TEMP] - p[LED_TREF]);
}

/* The diode parameters equivalent to the LED parameters P. */
static void led_to_diode(const double *p, double *d)
{
	double nvt = p[LED_N] * diode_thermal_voltage(p[LED_TEMP]);
	d[DIODE_IS] = p[LED_IF] / expm1((led_vf(p) - p[LED_IF] * p[LED_RS]) / nvt);
	d[DIODE_N] = p[LED_N];
	d[DIODE_RS] = p[LED_RS];
	d[DIODE_TEMP] = p[LED_TEMP];
	d[DIODE_TREF] = -273.15; /* Is is derived at the junction temperature */
	d[DIODE_EG] = 0.0;
	d[DIODE_XTI] = 0.0;
	d[DIODE_THETA] = 0.0;
	d[DIODE_TAMB] = p[LED_TAMB];
	d[DIODE_TJMAX] = p[LED_TJMAX];
}

/* The saturation current the stated point implies (for the side pane). */
double led_saturation_current(const double *p)
{
	double d[DIODE_NPARAMS];
	led_to_diode(p, d);
	return d[DIODE_IS];
}

/* Terminal current at V. */
static double led_current(const double *p, double v)
{
	double d[DIODE_NPARAMS];
	led_to_diode(p, d);
	return model_diode.current(d, v);
}

/* dI/dV at V. */
static double led_conductance(const double *p, double v)
{
	double d[DIODE_NPARAMS];
	led_to_diode(p, d);
	return model_diode.conductance(d, v);
}

/* Terminal voltage at I. */
static int led_voltage(const double *p, double i, double *v)
{
	double d[DIODE_NPARAMS];
	led_to_diode(p, d);
	return model_diode.voltage(d, i, v);
}

/* dV/dI at I. */
static double led_resistance(const double *p, double i)
{
	double d[DIODE_NPARAMS];
	led_to_diode(p, d);
	return model_diode.resistance(d, i);
}

/* Series resistance. */
static double led_series_resistance(const double *p)
{
	return p[LED_RS];
}

/* Junction current at VJ. */
static double led_intrinsic_current(const double *p, double vj)
{
	double d[DIODE_NPARAMS];
	led_to_diode(p, d);
	return model_diode.intrinsic_current(d, vj);
}

/* Junction conductance at VJ. */
static double led_intrinsic_conductance(const double *p, double vj)
{
	double d[DIODE_NPARAMS];
	led_to_diode(p, d);
	return model_diode.intrinsic_conductance(d, vj);
}

/* Junction voltage at I. */
static double led_intrinsic_voltage(const double *p, double i)
{
	double d[DIODE_NPARAMS];
	led_to_diode(p, d);
	return model_diode.intrinsic_voltage(d, i);
}

/* The diode's junction limiting. */
static double led_limit(const double *p, double vnew, double vold)
{
	double d[DIODE_NPARAMS];
	led_to_diode(p, d);
	return model_diode.limit(d, vnew, vold);
}

/* The junction is the diode's: one Shockley exponential (through the
 * stated point at the junction temperature: led_vf). */
static int led_shockley(const double *p, struct model_shockley *out)
{
	double d[DIODE_NPARAMS];
	led_to_diode(p, d);
	return model_diode.shockley(d, out);
}

/* From a little reverse bias to five times the test current. */
static void led_range(const double *p, double *vmin, double *vmax)
{
	if (led_voltage(p, 5.0 * p[LED_IF], vmax) != 0 || !isfinite(*vmax))
		*vmax = 1.5 * p[LED_VF];
	*vmin = -0.25 * *vmax;
}

/* The stated point at the junction temperature of P (see led_validate). */
static int led_validate_at(const double *p, char *err, size_t errlen)
{
	double vf = led_vf(p);
	double vj = vf - p[LED_IF] * p[LED_RS];
	if (!(vj > 0.0) && p[LED_TC] != 0.0) {
		snprintf(err, errlen,
		         "temperature_coefficient: %.4g V/K leaves %.4g V at %.4g degC, "
		         "below the %.4g V series_resistance drops at the test current",
		         p[LED_TC], vf, p[LED_TEMP], p[LED_IF] * p[LED_RS]);
		return -1;
	}
	if (!(vj > 0.0)) {
		snprintf(err, errlen,
		         "series_resistance: %.4g ohm drops %.4g V at the test current, "
		         "more than forward_voltage %.4g V", p[LED_RS],
		         p[LED_IF] * p[LED_RS], p[LED_VF]);
		return -1;
	}
	double is = led_saturation_current(p);
	if (!(is > 0.0) || !isfinite(is)) {
		snprintf(err, errlen,
		         "forward_voltage: %.4g V is out of reach for ideality %.4g "
		         "(the implied saturation current underflows); raise ideality",
		         vf, p[LED_N]);
		return -1;
	}
	return 0;
}

/*
 * The stated point must leave a positive junction voltage: at the given
 * temperature, or with a thermal resistance at the ambient and at the
 * maximum junction temperature, the ends of the range the junction
 * temperature is solved in.
 */
static int led_validate(const double *p, char *err, size_t errlen)
{
	if (p[LED_THETA] <= 0.0)
		return led_validate_at(p, err, errlen);
	if (model_thermal_check(p, LED_THETA, LED_TAMB, LED_TJMAX, err, errlen))
		return -1;
	model_values q;
	memcpy(q, p, sizeof q);
	q[LED_TEMP] = p[LED_TAMB];
	if (led_validate_at(q, err, errlen) != 0)
		return -1;
	q[LED_TEMP] = p[LED_TJMAX];
	return led_validate_at(q, err, errlen);
}

/*
 * Typical small indicator LEDs at 20 mA (5 mm and 3 mm through-hole, SMD
 * 0603/0805 parts are similar), all values from memory of common
 * datasheets, not from one part: forward voltage at 20 mA, ideality,
 * series resistance, and the nominal peak wavelength for reference.
 * InGaN parts (green, blue, white) show high ideality factors, often 3 or
 * more; AlGaInP (red, amber, yellow) about 2; GaAs/AlGaAs infrared 1.5.
 */
struct led_preset {
	const char *name;
	double vf, i_f, n, rs;
	double wavelength_nm;   /* nominal peak emission, from memory */
};

static const struct led_preset led_preset_table[] = {
	{ "red", 2.0, 20e-3, 2.0, 6.0, 630.0 },
	{ "amber", 2.05, 20e-3, 2.0, 7.0, 605.0 },
	{ "yellow", 2.1, 20e-3, 2.0, 8.0, 590.0 },
	{ "green", 3.2, 20e-3, 3.0, 12.0, 525.0 },
	{ "blue", 3.1, 20e-3, 3.0, 10.0, 465.0 },
	{ "white", 3.1, 20e-3, 3.0, 10.0, 455.0 }, /* blue die + phosphor */
	{ "infrared", 1.3, 20e-3, 1.5, 2.0, 940.0 },
};

static const char *const led_preset_names[] = {
	"red", "amber", "yellow", "green", "blue", "white", "infrared", NULL,
};

/* Fill P with preset NAME; 0 or -1. */
static int led_apply_preset(const char *name, double *p)
{
	for (size_t k = 0; k < sizeof led_preset_table / sizeof led_preset_table[0];
	     k++) {
		const struct led_preset *lp = &led_preset_table[k];
		if (strcmp(lp->name, name) == 0) {
			p[LED_VF] = lp->vf;
			p[LED_IF] = lp->i_f;
			p[LED_N] = lp->n;
			p[LED_RS] = lp->rs;
			return 0;
		}
	}
	return -1;
}

/* Nominal peak wavelength of preset NAME in nm, or NaN. */
double led_preset_wavelength(const char *name)
{
	for (size_t k = 0; k < sizeof led_preset_table / sizeof led_preset_table[0];
	     k++)
		if (strcmp(led_preset_table[k].name, name) == 0)
			return led_preset_table[k].wavelength_nm;
	return NAN;
}

/* Defaults: the red preset. */
static const struct model_param led_params[LED_NPARAMS] = {
	[LED_VF] = { "forward_voltage", "Vf", QTY_VOLTAGE, 2.0, 0.0, 50.0, true,
	             false, false, "forward voltage at the test current" },
	[LED_IF] = { "test_current", "If", QTY_CURRENT, 20e-3, 0.0, 100.0, true,
	             false, true, "current at which forward_voltage is stated" },
	[LED_N] = { "ideality", "n", QTY_NUMBER, 2.0, 0.0, 100.0, true, false,
	            false, "ideality factor: ~2 AlGaInP, 3+ InGaN, 1.5 GaAs IR" },
	[LED_RS] = { "series_resistance", "Rbulk", QTY_RESISTANCE, 6.0, 0.0, 1e6,
	             false, false, true, "series resistance of die and leads" },
	[LED_TEMP] = { "temperature", "T", QTY_TEMPERATURE, 25.0, -273.15, 1000.0,
	               true, false, false, "junction temperature in degrees Celsius" },
	[LED_TC] = { "temperature_coefficient", "dVf/dT", QTY_TEMPCO, 0.0, -1.0,
	             1.0, false, false, false,
	             "dVf/dT at the test current; 0: Vf stays put (-2 mV/K typical)",
	             .off_at_default = true },
	[LED_TREF] = { "reference_temperature", "T0", QTY_TEMPERATURE, 25.0,
	               -273.15, 1000.0, true, false, false,
	               "temperature forward_voltage is stated at",
	               .needs = "temperature_coefficient" },
	/* 100 degC: a common rating of indicator LEDs (from memory of common
	 * datasheets; power LEDs are often rated 125 to 150 degC). */
	MODEL_THERMAL_PARAMS(LED_THETA, LED_TAMB, LED_TJMAX, 100.0,
	                     "rated maximum junction temperature (100 degC: "
	                     "indicator LEDs, from memory)"),
};

const struct model_type model_led = {
	.name = "led",
	.summary = "LED stated by forward voltage at a test current (colour presets)",
	.params = led_params,
	.nparams = LED_NPARAMS,
	.monotone = true,
	.current = led_current,
	.conductance = led_conductance,
	.voltage = led_voltage,
	.resistance = led_resistance,
	.range = led_range,
	.validate = led_validate,
	.series_resistance = led_series_resistance,
	.intrinsic_current = led_intrinsic_current,
	.intrinsic_conductance = led_intrinsic_conductance,
	.limit = led_limit,
	.shockley = led_shockley,
	.intrinsic_voltage = led_intrinsic_voltage,
	.presets = led_preset_names,
	.apply_preset = led_apply_preset,
};
