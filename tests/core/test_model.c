/*
 * test_model.c - the device models: the thermal voltage against the SI
 * constants, every registered model's derivatives against central finite
 * differences, and parameter validation.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include <cmocka.h>

#include "core_check.h"

#include "core/model.h"
#include "core/source.h"
#include "core/models/models.h"

/*
 * Test 2: kT/q at 25 degC (298.15 K) from the exact constants of the 2019
 * SI (BIPM, The International System of Units, 9th ed., 2019:
 * k = 1.380649e-23 J/K, e = 1.602176634e-19 C) is 25.6926 mV to the six
 * digits commonly tabulated; and Vt is proportional to the absolute
 * temperature (the definition kT/q).
 */
static void test_thermal_voltage(void **state)
{
	(void)state;
	double vt = diode_thermal_voltage(25.0);
	assert_true(fabs(vt - 25.6926e-3) <= 0.5e-7);
	static const double temps[] = { -40.0, -3.71, 0.0, 37.2, 85.0, 124.6 };
	for (size_t k = 0; k < sizeof temps / sizeof temps[0]; k++) {
		double r = diode_thermal_voltage(temps[k]) / vt;
		double want = (temps[k] + 273.15) / 298.15;
		if (!(fabs(r - want) <= 4e-16))
			fail_msg("Vt(%g)/Vt(25) = %.17g, want %.17g", temps[k], r, want);
	}
}

/* Parameter sets of one registered model for the derivative checks. */
struct model_cases {
	const char *name;
	size_t nsets;
	double sets[6][MODEL_MAX_PARAMS];
};

/* One table line per registered model; a new model needs a line here. */
static const struct model_cases derivative_cases[] = {
	{ "diode", 6, {
		/* Is, n, series_resistance, temperature, and for the scaled
		 * set reference_temperature, bandgap, saturation_exponent
		 * (a 0 degC reference with zero gap and exponent: no change) */
		{ 3.1e-14, 1.27, 0.33, 71.3, 25.0, 1.12, 3.0 },
		{ 2.385e-14, 1.037, 0.0, 25.0 },
		{ 7.91e-9, 1.93, 0.417, 81.3 },
		{ 3.3e-12, 2.41, 2.73, -37.6 },
		{ 1.17e-15, 1.003, 0.0513, 119.2 },
		{ 4.6e-10, 1.52, 13.7, 3.9 },
	} },
	{ "power-law", 5, {
		/* reference_voltage, reference_current, exponent */
		{ 12.7, 3.81e-3, 23.6 },
		{ 0.273, 0.91, 0.4137 },
		{ 230.0, 0.127, 0.871 },
		{ 1.93, 2.2e-5, 1.0 },
		{ 47.3, 1.6e-2, 6.28 },
	} },
	{ "zener", 5, {
		/* breakdown_voltage, test_current, dynamic_resistance,
		 * saturation_current, ideality, breakdown_ideality, temperature */
		{ 5.1, 5e-3, 17.0, 1e-14, 1.0, 1.0, 25.0 },
		{ 3.37, 2.15e-2, 4.81, 2.7e-13, 1.43, 1.21, 47.3 },
		{ 12.4, 1.03e-3, 61.9, 8.1e-15, 1.07, 2.3, -11.6 },
		{ 47.0, 2.7e-3, 93.0, 3.3e-12, 1.9, 1.0, 25.0 },
		{ 1.87, 7.3e-2, 0.41, 1e-14, 1.0, 0.93, 81.2 },
	} },
	{ "led", 5, {
		/* forward_voltage, test_current, ideality, series_resistance,
		 * temperature */
		{ 2.0, 20e-3, 2.0, 6.0, 25.0 },
		{ 3.217, 3.5e-1, 3.41, 1.37, 61.8 },
		{ 1.283, 1.03e-1, 1.47, 0.93, -17.2 },
		{ 2.71, 2.2e-3, 2.63, 41.0, 25.0 },
		{ 5.93, 7.1e-2, 6.2, 3.3, 38.4 },
	} },
	{ "tunnel", 4, {
		/* peak_voltage, peak_current, valley_voltage, valley_current,
		 * saturation_current, ideality, temperature */
		{ 0.065, 1e-3, 0.35, 1.2e-4, 3.5e-12, 1.0, 25.0 },
		{ 0.0713, 4.7e-3, 0.382, 5.9e-4, 1.9e-11, 1.12, 31.4 },
		{ 0.183, 2.2e-3, 0.96, 2.3e-4, 9.3e-22, 1.03, 25.0 },
		{ 0.052, 1.03e-2, 0.317, 8.8e-4, 7.7e-10, 1.31, 48.9 },
	} },
	{ "npn", 4, {
		/* saturation_current, ideality, current_gain, emitter_resistance,
		 * collector_resistance, supply_voltage, saturation_voltage,
		 * temperature */
		{ 1.2e-14, 1.0, 147.0, 470.0, 2.2e3, 12.0, 0.2, 25.0 },
		{ 6.8e-15, 1.0, 283.0, 820.0, 3.9e3, 15.3, 0.17, 25.0 },
		{ 2.3e-14, 1.02, 96.0, 0.0, 1.5e3, 9.1, 0.25, 41.7 },
		{ 1.03e-14, 1.0, 212.0, 1.2e3, 4.7e3, 24.0, 0.2, -12.3 },
	} },
	{ "pnp", 2, {
		{ 1.2e-14, 1.0, 147.0, 470.0, 2.2e3, 12.0, 0.2, 25.0 },
		{ 3.9e-15, 1.04, 61.0, 33.0, 470.0, 5.1, 0.3, 25.0 },
	} },
	{ "jfet", 3, {
		/* saturation_current, pinch_off_voltage, supply_voltage,
		 * drain_resistance */
		{ 8.7e-3, -2.43, 15.0, 1.2e3 },
		{ 3.1e-3, -1.17, 9.0, 2.2e3 },
		{ 1.27e-2, -3.9, 12.0, 820.0 },
	} },
	{ "nmos", 3, {
		/* transconductance_parameter, threshold_voltage, supply_voltage,
		 * drain_resistance */
		{ 2.4e-3, 1.87, 18.0, 3.3e3 },
		{ 0.137, 2.1, 12.0, 47.0 },
		{ 5.3e-4, -0.71, 5.0, 10e3 },
	} },
	/* The thermistors have no current(V): only their range is checked
	 * here; test_models_thermistor checks resistance against V(I). */
	{ "thermistor", 2, {
		/* resistance_at_reference, reference_temperature, beta,
		 * dissipation_constant, ambient_temperature, maximum_temperature */
		{ 1e4, 25.0, 3977.0, 1.5e-3, 25.0, 150.0 },
		{ 4.7e3, 25.0, 3435.0, 7.3e-3, 31.7, 125.0 },
	} },
	{ "thermistor-sh", 1, {
		/* steinhart_hart_a, _b, _c, then as the beta form */
		{ 1.129148e-3, 2.34125e-4, 8.76741e-8, 1.5e-3, 25.0, 150.0 },
	} },
};

/* Find the derivative cases for model NAME, or NULL. */
static const struct model_cases *model_cases_find(const char *name)
{
	for (size_t k = 0; k < sizeof derivative_cases / sizeof derivative_cases[0];
	     k++)
		if (strcmp(derivative_cases[k].name, name) == 0)
			return &derivative_cases[k];
	return NULL;
}

/*
 * Compare derivative D at X with the central difference of F over the
 * points XM < X < XP as actually rounded (common practice: truncation
 * error O(h^2); rounding error about eps |F| / h from the values, and
 * eps |X| |F'| / h from the arguments, which dominates where F is
 * ill-conditioned, as V(I) of a diode as I nears -Is).
 */
static void check_central(const char *what, const char *model, double x,
                          double xp, double xm, double fp, double fm, double d)
{
	double h = xp - xm;
	double fd = (fp - fm) / h;
	double allow = 1e-6 * fabs(d) +
	               8.0 * 2.2e-16 * (fabs(fp) + fabs(fm) + 2.0 * fabs(x * d)) / h;
	if (!isfinite(d) || !(h > 0.0) || !(fabs(fd - d) <= allow))
		fail_msg("%s of %s at %.17g: analytic %.17g, central difference "
		         "%.17g (allowed %.3g)", what, model, x, d, fd, allow);
}

/*
 * Shrink the step H at X until the derivative D changes by less than 2e-3
 * of itself over [X - H, X + H], so the central difference's truncation
 * error (about (dD/D)^2 / 6) stays below the 1e-6 allowed.  A breakdown
 * knee or a leakage plateau far from 0 V curves on a scale much smaller
 * than 1e-5 of X.
 */
static double step_fit(double (*d)(const double *p, double x), const double *p,
                       double x, double h)
{
	double d0 = d(p, x);
	for (int q = 0; q < 40; q++) {
		double dp = d(p, x + h), dm = d(p, x - h);
		if (!(fabs(dp - dm) > 2e-3 * fabs(d0)))
			break;
		h *= 0.25;
	}
	return h;
}

/*
 * Test 7: for every model in the registry, at many points of its natural
 * range: conductance against the difference of current, resistance against
 * the difference of voltage, intrinsic_conductance against the difference
 * of intrinsic_current.  Points closer to 0 than 1e-3 of the range are
 * skipped (a power law with exponent < 1 has an infinite slope there).
 */
static void test_derivatives(void **state)
{
	(void)state;
	struct check_rng rng = { 0x7d3e11u };
	unsigned checked = 0;
	for (size_t m = 0; model_registry[m] != NULL; m++) {
		const struct model_type *t = model_registry[m];
		/* the measured model has no parameters but a table of points;
		 * test_models_measured.c checks its derivatives on its own */
		if (t == &model_measured)
			continue;
		const struct model_cases *mc = model_cases_find(t->name);
		if (mc == NULL)
			fail_msg("model %s has no derivative cases: add a table line",
			         t->name);
		for (size_t s = 0; s < mc->nsets; s++) {
			struct device dev;
			char err[256];
			device_init(&dev, t);
			for (size_t k = 0; k < t->nparams; k++)
				dev.p[k] = mc->sets[s][k];
			if (device_validate(&dev, err, sizeof err) != 0)
				fail_msg("case %s/%zu is invalid: %s", t->name, s, err);
			double lo, hi;
			device_range(&dev, &lo, &hi);
			assert_true(isfinite(lo) && isfinite(hi) && lo < hi);
			for (int k = 0; k < 120; k++) {
				double v = check_rng_uniform(&rng, lo, hi);
				if (fabs(v) < 1e-3 * (hi - lo))
					continue;
				/* A step that changes V by 1e-5 relative, and I (to
				 * first order) by at most 1e-5 relative. */
				double h = 1e-5 * fabs(v);
				if (t->current != NULL) {
					double hc = fmin(h, 1e-5 * fabs(t->current(dev.p, v) /
					                                t->conductance(dev.p, v)));
					hc = step_fit(t->conductance, dev.p, v, hc);
					check_central("conductance", t->name, v, v + hc, v - hc,
					              t->current(dev.p, v + hc),
					              t->current(dev.p, v - hc),
					              t->conductance(dev.p, v));
					checked++;
				}
				if (t->intrinsic_current != NULL) {
					double hj = fmin(h, 1e-5 * fabs(
						t->intrinsic_current(dev.p, v) /
						t->intrinsic_conductance(dev.p, v)));
					hj = step_fit(t->intrinsic_conductance, dev.p, v, hj);
					check_central("intrinsic conductance", t->name, v, v + hj,
					              v - hj,
					              t->intrinsic_current(dev.p, v + hj),
					              t->intrinsic_current(dev.p, v - hj),
					              t->intrinsic_conductance(dev.p, v));
					checked++;
				}
				if (t->voltage != NULL && t->resistance != NULL &&
				    t->current != NULL) {
					/*
					 * Resistance at the current this voltage carries,
					 * over the current step that the voltage step H makes.
					 */
					double i = t->current(dev.p, v);
					double hi_ = step_fit(t->resistance, dev.p, i,
					                      fabs(t->conductance(dev.p, v)) * h);
					double ip = i + hi_, im = i - hi_;
					double vp, vm;
					if (!(ip > im) || t->voltage(dev.p, ip, &vp) != 0 ||
					    t->voltage(dev.p, im, &vm) != 0)
						continue;
					check_central("resistance", t->name, i, ip, im, vp, vm,
					              t->resistance(dev.p, i));
					checked++;
				}
			}
		}
	}
	print_message("# %u derivative checks\n", checked);
	assert_true(checked > 1000);
}

/* A parameter value that must be rejected. */
struct bad_param {
	const char *model;
	const char *key;
	double value;
};

static const struct bad_param bad_params[] = {
	{ "diode", "saturation_current", 0.0 },
	{ "diode", "saturation_current", -2.385e-14 },
	{ "diode", "saturation_current", NAN },
	{ "diode", "saturation_current", INFINITY },
	{ "diode", "ideality", 0.0 },
	{ "diode", "ideality", -1.37 },
	{ "diode", "ideality", NAN },
	{ "diode", "ideality", -INFINITY },
	{ "diode", "series_resistance", -0.271 },
	{ "diode", "series_resistance", INFINITY },
	{ "diode", "series_resistance", NAN },
	{ "diode", "temperature", -273.15 },     /* absolute zero itself */
	{ "diode", "temperature", -291.7 },      /* below absolute zero */
	{ "diode", "temperature", NAN },
	{ "diode", "temperature", INFINITY },
	{ "power-law", "reference_voltage", 0.0 },
	{ "power-law", "reference_voltage", -3.3 },
	{ "power-law", "reference_voltage", NAN },
	{ "power-law", "reference_current", 0.0 },
	{ "power-law", "reference_current", -4.7e-3 },
	{ "power-law", "reference_current", INFINITY },
	{ "power-law", "exponent", 0.0 },
	{ "power-law", "exponent", -0.83 },
	{ "power-law", "exponent", INFINITY },
	{ "power-law", "exponent", NAN },
};

/* A valid device of model NAME (the first derivative case). */
static void valid_device(struct device *dev, const char *name)
{
	const struct model_type *t = model_find(name);
	assert_non_null(t);
	const struct model_cases *mc = model_cases_find(name);
	assert_non_null(mc);
	device_init(dev, t);
	for (size_t k = 0; k < t->nparams; k++)
		dev->p[k] = mc->sets[1][k];
}

/*
 * Test 10 (models): each bad value makes device_validate fail with a
 * message naming the key; the untouched device validates.
 */
static void test_validate(void **state)
{
	(void)state;
	for (size_t k = 0; k < sizeof bad_params / sizeof bad_params[0]; k++) {
		const struct bad_param *b = &bad_params[k];
		struct device dev;
		char err[256] = "";
		valid_device(&dev, b->model);
		assert_int_equal(device_validate(&dev, err, sizeof err), 0);
		int idx = model_param_index(dev.type, b->key);
		assert_true(idx >= 0);
		dev.p[idx] = b->value;
		if (device_validate(&dev, err, sizeof err) == 0)
			fail_msg("%s %s = %g was accepted", b->model, b->key, b->value);
		if (strstr(err, b->key) == NULL)
			fail_msg("%s %s = %g: message does not name the key: %s",
			         b->model, b->key, b->value, err);
	}
}

/* Required keys (default NaN) are reported by name when left out. */
static void test_required_keys(void **state)
{
	(void)state;
	for (size_t m = 0; model_registry[m] != NULL; m++) {
		const struct model_type *t = model_registry[m];
		/* the measured model's one required input is its table, not a
		 * key; test_models_measured.c checks that it is refused without */
		if (t == &model_measured)
			continue;
		struct device dev;
		char err[256] = "";
		device_init(&dev, t);
		for (size_t k = 0; k < t->nparams; k++) {
			if (!isnan(t->params[k].def))
				continue;
			if (device_validate(&dev, err, sizeof err) == 0)
				fail_msg("%s validates without %s", t->name, t->params[k].key);
			if (strstr(err, t->params[k].key) == NULL)
				fail_msg("%s: message does not name %s: %s", t->name,
				         t->params[k].key, err);
			dev.p[k] = 0.5 * (fmax(t->params[k].min, 1e-12) +
			                  fmin(t->params[k].max, 3.0)); /* now given */
		}
		if (device_validate(&dev, err, sizeof err) != 0)
			fail_msg("%s with every key given: %s", t->name, err);
	}
	struct device none = { .type = NULL };
	char err[64];
	assert_int_equal(device_validate(&none, err, sizeof err), -1);
	assert_null(model_find("no-such-model"));
}

/*
 * A model's extra results are the columns of solve's CSV after the point's
 * own (point, voltage, current, power, rd, steps, method, tangent) and
 * before region and flagged: every model reports the same keys in the
 * same order at every point and for every source, none twice and none
 * that repeats a point column (common practice for a table: RFC 4180
 * tables are read by column name).
 */
static void test_extra_keys(void **state)
{
	(void)state;
	static const char *const taken[] = { "point", "voltage", "current",
	                                     "power", "rd", "steps", "method",
	                                     "tangent", "region", "flagged" };
	for (size_t m = 0; model_registry[m] != NULL; m++) {
		const struct model_type *t = model_registry[m];
		const struct model_cases *mc = model_cases_find(t->name);
		if (t->secondary == NULL || mc == NULL)
			continue;
		for (size_t c = 0; c < mc->nsets; c++) {
			struct device dev;
			device_init(&dev, t);
			for (size_t k = 0; k < t->nparams; k++)
				dev.p[k] = mc->sets[c][k];
			double lo, hi;
			device_range(&dev, &lo, &hi);
			/* a Thevenin source, a stiff one and an ideal current one */
			const struct source srcs[] = {
				{ .voc = 7.31, .isc = 7.31 / 2.7e3, .r = 2.7e3 },
				{ .voc = 1.93, .isc = INFINITY, .r = 0.0 },
				{ .voc = NAN, .isc = 3.7e-3, .r = INFINITY,
				  .form = SOURCE_NORTON },
			};
			struct model_extra first;
			memset(&first, 0, sizeof first);
			bool have = false;
			for (size_t s = 0; s < 3; s++) {
				for (int q = 0; q <= 4; q++) {
					double v = lo + (hi - lo) * (0.05 + 0.2 * q);
					double i = t->current != NULL ? device_current(&dev, v)
					                              : 1e-4 * (q + 1);
					struct model_extra ex;
					if (device_secondary(&dev, &srcs[s], v, i, &ex) != 0)
						continue;
					for (size_t a = 0; a < ex.n; a++) {
						for (size_t b = 0; b < a; b++)
							if (strcmp(ex.v[a].key, ex.v[b].key) == 0)
								fail_msg("%s reports %s twice", t->name,
								         ex.v[a].key);
						for (size_t b = 0;
						     b < sizeof taken / sizeof taken[0]; b++)
							if (strcmp(ex.v[a].key, taken[b]) == 0)
								fail_msg("%s reports %s, a point column",
								         t->name, ex.v[a].key);
					}
					if (!have) {
						first = ex;
						have = true;
						continue;
					}
					if (ex.n != first.n)
						fail_msg("%s reports %zu results here, %zu there",
						         t->name, ex.n, first.n);
					for (size_t a = 0; a < ex.n; a++)
						if (strcmp(ex.v[a].key, first.v[a].key) != 0 ||
						    ex.v[a].kind != first.v[a].kind)
							fail_msg("%s: result %zu is %s here, %s there",
							         t->name, a, ex.v[a].key,
							         first.v[a].key);
				}
			}
			if (!have)
				fail_msg("%s set %zu: no extra results at any point",
				         t->name, c);
		}
	}
}

/* Whether a parameter takes part: a default that means "off" (0 K for the
 * reference temperature, 0 K/W for the thermal resistance) and the keys that
 * only matter with it (the bandgap and exponent, the ambient) drop out of
 * reports; any other value brings them back.  The rule is the program's
 * own (see biasline-models(7)); the values are invented. */
static void test_param_in_use(void **state)
{
	(void)state;
	static const struct {
		const char *model, *set;  /* a key set away from its default, or NULL */
		double value;
		const char *key;
		bool in_use;
	} cases[] = {
		{ "diode", NULL, 0.0, "saturation_current", true },
		{ "diode", NULL, 0.0, "reference_temperature", false },
		{ "diode", NULL, 0.0, "bandgap", false },
		{ "diode", NULL, 0.0, "saturation_exponent", false },
		{ "diode", NULL, 0.0, "thermal_resistance", false },
		{ "diode", NULL, 0.0, "ambient_temperature", false },
		{ "diode", NULL, 0.0, "maximum_junction_temperature", true },
		{ "diode", "reference_temperature", 27.3, "bandgap", true },
		{ "diode", "reference_temperature", 27.3, "saturation_exponent", true },
		{ "diode", "thermal_resistance", 217.0, "ambient_temperature", true },
		{ "npn", NULL, 0.0, "bandgap", false },
		{ "npn", "reference_temperature", 31.0, "bandgap", true },
		{ "led", NULL, 0.0, "reference_temperature", false },
		{ "led", "temperature_coefficient", -2.3e-3, "reference_temperature", true },
		{ "zener", NULL, 0.0, "reference_temperature", false },
		{ "zener", "temperature_coefficient", 1.7e-3, "reference_temperature", true },
		{ "power-law", NULL, 0.0, "exponent", true },
	};
	for (size_t c = 0; c < sizeof cases / sizeof cases[0]; c++) {
		const struct model_type *t = model_find(cases[c].model);
		assert_non_null(t);
		struct device dev;
		device_init(&dev, t);
		if (cases[c].set != NULL) {
			int j = model_param_index(t, cases[c].set);
			assert_true(j >= 0);
			dev.p[j] = cases[c].value;
		}
		int k = model_param_index(t, cases[c].key);
		assert_true(k >= 0);
		if (model_param_in_use(t, dev.p, (size_t)k) != cases[c].in_use)
			fail_msg("%s %s (with %s): in use should be %d", cases[c].model,
			         cases[c].key, cases[c].set ? cases[c].set : "defaults",
			         cases[c].in_use);
	}
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_thermal_voltage),
		cmocka_unit_test(test_derivatives),
		cmocka_unit_test(test_validate),
		cmocka_unit_test(test_required_keys),
		cmocka_unit_test(test_extra_keys),
		cmocka_unit_test(test_param_in_use),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
