/*
 * thermistor.c - an NTC thermistor heated by its own current.
 *
 * Resistance against body temperature T (kelvin), two published forms:
 *
 *   beta:            R(T) = R0 exp(B (1/T - 1/T0))            (common practice)
 *   Steinhart-Hart:  1/T = A + B ln R + C (ln R)^3
 *                    (Steinhart & Hart, Deep-Sea Research 15, 1968)
 *
 * The beta form is Steinhart-Hart with A = 1/T0 - ln(R0)/B, B_sh = 1/B,
 * C = 0.  In still air the body settles where the power it takes equals
 * the heat it loses, the dissipation constant delta (W/K) times its rise
 * over ambient (common practice; the dissipation constant is how
 * thermistor data sheets state it):
 *
 *     V I = I^2 R(T) = delta (T - Ta)
 *
 * For each current that fixes T (an inner solve: the left side falls and
 * the right side rises with T, so there is one root), and V = I R(T).  The
 * curve is single-valued in I but not in V: V rises with I, peaks, then
 * falls as the part heats -- the turning point where dV/dI = 0,
 * delta + I^2 dR/dT = 0.  So current() is NULL: the model gives V(I) and
 * r_d = dV/dI = R (delta + I^2 R') / (delta - I^2 R'), and the solvers scan
 * it in current.  The domain is |I| up to the current that heats the body
 * to its rated maximum temperature.
 */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "../heat.h"
#include "../kernel.h"
#include "models.h"

#define ZERO_C 273.15

/* ln R and d(ln R)/dT at T (kelvin) for either form. */
static double therm_lnr(const double *p, bool sh, double t, double *dlnr)
{
	if (!sh) {
		double b = p[THERM_B];
		*dlnr = -b / (t * t);
		return log(p[THERM_R0]) + b * (1.0 / t - 1.0 / (p[THERM_T0] + ZERO_C));
	}
	double a = p[THERM_SH_A], b = p[THERM_SH_B], c = p[THERM_SH_C];
	double q = a - 1.0 / t;
	double l;
	if (c == 0.0) {
		l = -q / b;
	} else {
		/* C L^3 + B L + q = 0 with B, C > 0: one real root (Cardano, in
		 * the form that avoids cancellation), then one Newton polish. */
		double pp = b / c, qq = q / c;
		double d = sqrt(0.25 * qq * qq + pp * pp * pp / 27.0);
		double u = qq > 0.0 ? -cbrt(0.5 * qq + d) : cbrt(-0.5 * qq + d);
		l = u - pp / (3.0 * u);
		if (!isfinite(l))
			l = -q / b;
		l -= (c * l * l * l + b * l + q) / (3.0 * c * l * l + b);
	}
	*dlnr = -1.0 / (t * t * (b + 3.0 * c * l * l));
	return l;
}

/* R(T) and dR/dT (the beta form without the logarithm of R0). */
static double therm_r(const double *p, bool sh, double t, double *dr)
{
	double dl, r;
	if (!sh) {
		double b = p[THERM_B];
		r = p[THERM_R0] * exp(b * (1.0 / t - 1.0 / (p[THERM_T0] + ZERO_C)));
		dl = -b / (t * t);
	} else {
		r = exp(therm_lnr(p, sh, t, &dl));
	}
	*dr = r * dl;
	return r;
}

/* What the heat balance at one current needs: the parameters and I. */
struct therm_heat {
	const double *p;
	bool sh;
	double i;
};

/* The heat I^2 R(T) at T_C degrees Celsius and its slope I^2 dR/dT. */
static int therm_heat_power(void *ctx, double t_c, double *pw, double *dp)
{
	const struct therm_heat *c = ctx;
	double dr;
	double r = therm_r(c->p, c->sh, t_c + ZERO_C, &dr);
	*pw = c->i * c->i * r;
	if (dp != NULL)
		*dp = c->i * c->i * dr;
	return isfinite(*pw) ? 0 : -1;
}

/*
 * Body temperature (kelvin) at current I; 0 or -1 outside the domain.  The
 * balance I^2 R(T) = delta (T - Ta) is the heat balance every self-heated
 * part shares (heat.h), with the thermal resistance 1/delta; the heat
 * falls as the body warms (an NTC part), so there is one balance between
 * the ambient and the rated maximum, or none.
 */
static int therm_temperature(const double *p, bool sh, double i, double *t)
{
	double ta = p[THERM_TAMB] + ZERO_C;
	if (i == 0.0) {
		*t = ta;
		return 0;
	}
	struct therm_heat c = { p, sh, i };
	struct heat_curve hc = { therm_heat_power, &c };
	struct heat_root r;
	if (heat_refine(&hc, p[THERM_TAMB], 1.0 / p[THERM_DELTA], p[THERM_TAMB],
	                p[THERM_TMAX], 4e-16, &r) != 0)
		return -1;
	*t = r.t + ZERO_C;
	return 0;
}

/* V at I. */
static int therm_voltage(const double *p, bool sh, double i, double *v)
{
	double t, dr;
	if (!isfinite(i) || therm_temperature(p, sh, i, &t) != 0)
		return -1;
	*v = i * therm_r(p, sh, t, &dr);
	return isfinite(*v) ? 0 : -1;
}

/* dV/dI at I: R (delta + I^2 R') / (delta - I^2 R'). */
static double therm_resistance(const double *p, bool sh, double i)
{
	double t, dr;
	if (!isfinite(i) || therm_temperature(p, sh, i, &t) != 0)
		return NAN;
	double r = therm_r(p, sh, t, &dr);
	double d = p[THERM_DELTA], k = i * i * dr;
	return r * (d + k) / (d - k);
}

/* The largest current of the domain: the body at its rated maximum. */
static double therm_imax(const double *p, bool sh)
{
	double dr;
	double tmax = p[THERM_TMAX] + ZERO_C;
	return sqrt(p[THERM_DELTA] * (p[THERM_TMAX] - p[THERM_TAMB]) /
	            therm_r(p, sh, tmax, &dr));
}

/* Turning-point condition -R'(T) (T - Ta) / R(T) - 1 (zero at the peak). */
static double therm_turn(const double *p, bool sh, double t)
{
	double dl;
	therm_lnr(p, sh, t, &dl);
	return -dl * (t - (p[THERM_TAMB] + ZERO_C)) - 1.0;
}

/* The turning-point condition for the kernel. */
struct therm_turn_ctx {
	const double *p;
	bool sh;
};

/* therm_turn of the context at T. */
static double therm_turn_eval(void *ctx, double t, double *step)
{
	const struct therm_turn_ctx *c = ctx;
	if (step != NULL)
		*step = NAN;
	return therm_turn(c->p, c->sh, t);
}

/*
 * The voltage maximum: the body temperature where dV/dI = 0, found by
 * Brent-Dekker on the condition above between ambient and the rated
 * maximum.
 * Returns 0 with *T (kelvin), *I and *V, or -1 when the voltage keeps
 * rising up to the rated maximum (no turning point in the domain).
 */
static int therm_peak(const double *p, bool sh, double *t, double *i, double *v)
{
	double a = p[THERM_TAMB] + ZERO_C, b = p[THERM_TMAX] + ZERO_C;
	double fb = therm_turn(p, sh, b);
	if (!(fb > 0.0))
		return -1;
	struct therm_turn_ctx c = { p, sh };
	struct kernel_fn fn = { therm_turn_eval, &c };
	struct kernel_result r =
		kernel_brent_solve(&fn, a, therm_turn(p, sh, a), b, fb, 1e-13, 0.0);
	*t = r.x;
	double dr, res = therm_r(p, sh, *t, &dr);
	*i = sqrt(p[THERM_DELTA] * (*t - (p[THERM_TAMB] + ZERO_C)) / res);
	*v = *i * res;
	return 0;
}

/* The current domain, symmetric about 0. */
static void therm_current_range(const double *p, bool sh, double *lo, double *hi)
{
	*hi = therm_imax(p, sh);
	*lo = -*hi;
}

/* Voltage range: past the peak (or the end of the domain) both ways. */
static void therm_range(const double *p, bool sh, double *lo, double *hi)
{
	double t, i, v;
	if (therm_peak(p, sh, &t, &i, &v) != 0 &&
	    therm_voltage(p, sh, therm_imax(p, sh), &v) != 0)
		v = 1.0;
	*hi = 1.2 * v;
	*lo = -*hi;
}

/*
 * The point at signed temperature rise T (kelvin above ambient, negative
 * for negative currents): the heat balance I^2 R = delta |T| gives
 * I = sqrt(delta |T| / R) and V = I R = sqrt(delta |T| R) directly.
 */
static int therm_point_at(const double *p, bool sh, double t, double *v,
                          double *i)
{
	double dr, r = therm_r(p, sh, p[THERM_TAMB] + ZERO_C + fabs(t), &dr);
	double h = p[THERM_DELTA] * fabs(t);
	double iv = sqrt(h / r), vv = sqrt(h * r);
	*i = t < 0.0 ? -iv : iv;
	*v = t < 0.0 ? -vv : vv;
	return isfinite(*v) && isfinite(*i) ? 0 : -1;
}

/* The range of the rise: the rated maximum both ways. */
static void therm_param_range(const double *p, double *t0, double *t1)
{
	*t1 = p[THERM_TMAX] - p[THERM_TAMB];
	*t0 = -*t1;
}

/* Where V rises with the rise: up to the voltage peak both ways. */
static void therm_param_rising(const double *p, bool sh, double *t0,
                               double *t1)
{
	double tk, i, v;
	if (therm_peak(p, sh, &tk, &i, &v) == 0)
		*t1 = tk - (p[THERM_TAMB] + ZERO_C);
	else
		*t1 = p[THERM_TMAX] - p[THERM_TAMB];
	*t0 = -*t1;
}

/* Append a labelled value to OUT. */
static void therm_put(struct model_extra *out, const char *key,
                      const char *label, enum qty_kind kind, double value)
{
	if (out->n < MODEL_MAX_EXTRA)
		out->v[out->n++] = (struct model_extra_value){ key, label, kind, value };
}

/* Body temperature, resistance, rise, the peak and the domain at (V, I). */
static int therm_secondary(const double *p, bool sh, double v, double i,
                           struct model_extra *out)
{
	double t, dr;
	if (therm_temperature(p, sh, i, &t) != 0)
		return -1;
	double r = therm_r(p, sh, t, &dr);
	double tc = t - ZERO_C;
	therm_put(out, "body_temperature", "T", QTY_TEMPERATURE, tc);
	therm_put(out, "resistance", "R", QTY_RESISTANCE, r);
	/* The power is the point's own (V I): not repeated here. */
	therm_put(out, "temperature_rise", "dT", QTY_TEMPERATURE,
	          tc - p[THERM_TAMB]);
	double tp, ip, vp;
	bool peak = therm_peak(p, sh, &tp, &ip, &vp) == 0;
	therm_put(out, "peak_voltage", "Vpeak", QTY_VOLTAGE, peak ? vp : NAN);
	therm_put(out, "peak_current", "Ipeak", QTY_CURRENT, peak ? ip : NAN);
	therm_put(out, "maximum_current", "Imax", QTY_CURRENT, therm_imax(p, sh));
	out->region = !peak || fabs(i) <= ip ? "below the voltage peak"
	                                     : "past the voltage peak";
	out->warn = false;
	out->note[0] = '\0';
	if (tc > 60.0) {
		out->warn = true;
		snprintf(out->note, sizeof out->note,
		         "the body runs at %.0f degC: a hot part, keep it clear of "
		         "skin and of heat-sensitive parts; stay inside its rating "
		         "and local practice", tc);
	} else if (peak && fabs(i) > ip) {
		snprintf(out->note, sizeof out->note,
		         "past the peak the voltage falls as the current rises: fed "
		         "from a stiff voltage the part can run away to its limit");
	}
	return 0;
}

/* Rated maximum above ambient, and a resistance that stays finite. */
static int therm_validate(const double *p, bool sh, char *err, size_t errlen)
{
	if (!(p[THERM_TMAX] > p[THERM_TAMB])) {
		snprintf(err, errlen,
		         "maximum_temperature: must be above ambient_temperature");
		return -1;
	}
	double ta = p[THERM_TAMB] + ZERO_C, tm = p[THERM_TMAX] + ZERO_C;
	double d1, d2;
	double r1 = therm_r(p, sh, ta, &d1), r2 = therm_r(p, sh, tm, &d2);
	const char *key = sh ? "steinhart_hart_a" : "resistance_at_reference";
	if (!(r1 > 1e-6 && r1 < 1e15 && r2 > 1e-6 && r2 < 1e15)) {
		snprintf(err, errlen,
		         "%s: the resistance between ambient and the maximum "
		         "temperature leaves 1 uohm to 1 Pohm (%.3g to %.3g ohm)",
		         key, r1, r2);
		return -1;
	}
	if (!(d1 < 0.0 && d2 < 0.0)) {
		snprintf(err, errlen, "%s: the resistance must fall as the "
		         "temperature rises (an NTC part)", key);
		return -1;
	}
	return 0;
}

/* The beta form's entry points. */
static int beta_voltage(const double *p, double i, double *v)
{
	return therm_voltage(p, false, i, v);
}
static double beta_resistance(const double *p, double i)
{
	return therm_resistance(p, false, i);
}
static void beta_range(const double *p, double *lo, double *hi)
{
	therm_range(p, false, lo, hi);
}
static void beta_current_range(const double *p, double *lo, double *hi)
{
	therm_current_range(p, false, lo, hi);
}
static int beta_validate(const double *p, char *err, size_t errlen)
{
	return therm_validate(p, false, err, errlen);
}
static int beta_secondary(const double *p, const struct source *src, double v,
                          double i, struct model_extra *out)
{
	(void)src;
	return therm_secondary(p, false, v, i, out);
}

static int beta_point_at(const double *p, double t, double *v, double *i)
{
	return therm_point_at(p, false, t, v, i);
}
static void beta_param_rising(const double *p, double *t0, double *t1)
{
	therm_param_rising(p, false, t0, t1);
}

/* The Steinhart-Hart form's entry points. */
static int sh_voltage(const double *p, double i, double *v)
{
	return therm_voltage(p, true, i, v);
}
static double sh_resistance(const double *p, double i)
{
	return therm_resistance(p, true, i);
}
static void sh_range(const double *p, double *lo, double *hi)
{
	therm_range(p, true, lo, hi);
}
static void sh_current_range(const double *p, double *lo, double *hi)
{
	therm_current_range(p, true, lo, hi);
}
static int sh_validate(const double *p, char *err, size_t errlen)
{
	return therm_validate(p, true, err, errlen);
}
static int sh_secondary(const double *p, const struct source *src, double v,
                        double i, struct model_extra *out)
{
	(void)src;
	return therm_secondary(p, true, v, i, out);
}

static int sh_point_at(const double *p, double t, double *v, double *i)
{
	return therm_point_at(p, true, t, v, i);
}
static void sh_param_rising(const double *p, double *t0, double *t1)
{
	therm_param_rising(p, true, t0, t1);
}

/* R(T) of either form at T_C degrees Celsius (see models.h). */
double thermistor_resistance_at(const struct model_type *t, const double *p,
                                double t_c)
{
	double dr;
	return therm_r(p, t == &model_thermistor_sh, t_c + ZERO_C, &dr);
}

/* The voltage peak of either form (see models.h). */
int thermistor_peak(const struct model_type *t, const double *p, double *t_c,
                    double *i, double *v)
{
	double tk;
	if (therm_peak(p, t == &model_thermistor_sh, &tk, i, v) != 0)
		return -1;
	*t_c = tk - ZERO_C;
	return 0;
}

/* Body temperature (degC) of either form at current I (see models.h). */
int thermistor_temperature(const struct model_type *t, const double *p,
                           double i, double *t_c)
{
	double tk;
	if (therm_temperature(p, t == &model_thermistor_sh, i, &tk) != 0)
		return -1;
	*t_c = tk - ZERO_C;
	return 0;
}

/* Dissipation constant and temperatures shared by both forms. */
#define THERM_COMMON_PARAMS                                                    \
	[THERM_DELTA] = { "dissipation_constant", "delta", QTY_THERMAL_COND, NAN,  \
	                  0.0, 10.0, true, false, true,                            \
	                  "heat lost per kelvin above ambient, W/K" },             \
	[THERM_TAMB] = { "ambient_temperature", "Ta", QTY_TEMPERATURE, 25.0,       \
	                 -273.15, 1000.0, true, false, false,                      \
	                 "temperature of the surrounding air" },                   \
	[THERM_TMAX] = { "maximum_temperature", "Tmax", QTY_TEMPERATURE, 150.0,    \
	                 -273.15, 1000.0, true, false, false,                      \
	                 "rated maximum body temperature: the end of the curve" }

static const struct model_param beta_params[THERM_NPARAMS] = {
	[THERM_R0] = { "resistance_at_reference", "R0", QTY_RESISTANCE, NAN, 0.0,
	               1e12, true, false, true,
	               "zero-power resistance at reference_temperature" },
	[THERM_T0] = { "reference_temperature", "T0", QTY_TEMPERATURE, 25.0,
	               -273.15, 1000.0, true, false, false,
	               "temperature of R0, usually 25 degC" },
	[THERM_B] = { "beta", "B", QTY_NUMBER, NAN, 0.0, 1e5, true, false, false,
	              "B constant in kelvin, e.g. 3977 K for B25/85" },
	THERM_COMMON_PARAMS,
};

static const struct model_param sh_params[THERM_NPARAMS] = {
	[THERM_SH_A] = { "steinhart_hart_a", "A", QTY_NUMBER, NAN, -1.0, 1.0,
	                 false, false, false, "coefficient A of 1/T = A + B lnR + C lnR^3" },
	[THERM_SH_B] = { "steinhart_hart_b", "B", QTY_NUMBER, NAN, 0.0, 1.0, true,
	                 false, true, "coefficient B, 1/K" },
	[THERM_SH_C] = { "steinhart_hart_c", "C", QTY_NUMBER, 0.0, 0.0, 1e-3,
	                 false, false, false, "coefficient C, 1/K (0: the beta form)" },
	THERM_COMMON_PARAMS,
};

const struct model_type model_thermistor = {
	.name = "thermistor",
	.summary = "self-heated NTC thermistor, beta form (V peaks as it heats)",
	.params = beta_params,
	.nparams = THERM_NPARAMS,
	.monotone = false,
	.current = NULL,
	.conductance = NULL,
	.voltage = beta_voltage,
	.resistance = beta_resistance,
	.range = beta_range,
	.validate = beta_validate,
	.secondary = beta_secondary,
	.current_range = beta_current_range,
	.point_at = beta_point_at,
	.param_range = therm_param_range,
	.param_rising = beta_param_rising,
};

const struct model_type model_thermistor_sh = {
	.name = "thermistor-sh",
	.summary = "self-heated NTC thermistor, Steinhart-Hart coefficients",
	.params = sh_params,
	.nparams = THERM_NPARAMS,
	.monotone = false,
	.current = NULL,
	.conductance = NULL,
	.voltage = sh_voltage,
	.resistance = sh_resistance,
	.range = sh_range,
	.validate = sh_validate,
	.secondary = sh_secondary,
	.current_range = sh_current_range,
	.point_at = sh_point_at,
	.param_range = therm_param_range,
	.param_rising = sh_param_rising,
};
