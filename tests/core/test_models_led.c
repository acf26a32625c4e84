/*
 * test_models_led.c - the LED model: the stated point exactly on the
 * curve, the presets (every name works, photon energy below the forward
 * voltage), exact derivatives, and a series-resistor design that must land
 * on the stated point.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include <cmocka.h>

#include "models_check.h"

#include "core/model.h"
#include "core/models/models.h"
#include "core/solve.h"

/* Parameter sets: Vf, If, n, Rs, T (invented parts). */
static const double lcases[][LED_NPARAMS] = {
	{ 2.0, 20e-3, 2.0, 6.0, 25.0 },
	{ 3.217, 3.5e-1, 3.41, 1.37, 61.8 },
	{ 1.283, 1.03e-1, 1.47, 0.93, -17.2 },
	{ 2.71, 2.2e-3, 2.63, 41.0, 25.0 },
	{ 5.93, 7.1e-2, 6.2, 3.3, 38.4 }, /* two dice in series, say */
};

/* The curve passes through (Vf, If) and back. */
static void test_stated_point(void **state)
{
	(void)state;
	for (size_t k = 0; k < sizeof lcases / sizeof lcases[0]; k++) {
		struct device d;
		char err[256];
		device_init(&d, &model_led);
		memcpy(d.p, lcases[k], sizeof lcases[k]);
		assert_int_equal(device_validate(&d, err, sizeof err), 0);
		double v;
		assert_int_equal(device_voltage(&d, lcases[k][LED_IF], &v), 0);
		if (!(fabs(v / lcases[k][LED_VF] - 1.0) < 1e-13))
			fail_msg("case %zu: V(If) = %.17g", k, v);
		double i = device_current(&d, lcases[k][LED_VF]);
		if (!(fabs(i / lcases[k][LED_IF] - 1.0) < 1e-11))
			fail_msg("case %zu: I(Vf) = %.17g", k, i);
		double lo, hi;
		device_range(&d, &lo, &hi);
		for (int j = 0; j <= 41; j++) {
			double vv = lo + (hi - lo) * (j + 0.37) / 42.0;
			if (models_check_derivatives(d.type, d.p, vv) != 0)
				fail_msg("case %zu: conductance wrong at %.17g V", k, vv);
		}
	}
}

/*
 * Every preset name applies and validates; q Vf at the test current is
 * near the photon energy E = h c / lambda (SI 2019 exact h, c, e) at the
 * nominal wavelength: not more than a few percent below it (the junction
 * must be biased to about the band gap to emit; heat can supply a little)
 * and at most 1 V above it (series and heterojunction losses, largest in
 * InGaN green) -- common practice.
 */
static void test_presets(void **state)
{
	(void)state;
	const struct model_type *t = &model_led;
	assert_non_null(t->presets);
	assert_non_null(t->apply_preset);
	size_t n = 0;
	double vf_ir = NAN, vf_red = NAN, vf_blue = NAN;
	for (; t->presets[n] != NULL; n++) {
		const char *name = t->presets[n];
		struct device d;
		char err[256];
		device_init(&d, t);
		d.p[LED_TEMP] = 31.7; /* the preset must leave other keys alone */
		assert_int_equal(t->apply_preset(name, d.p), 0);
		assert_true(d.p[LED_TEMP] == 31.7);
		assert_int_equal(device_validate(&d, err, sizeof err), 0);
		double lambda = led_preset_wavelength(name);
		double eph = 6.62607015e-34 * 299792458.0 / (lambda * 1e-9) /
		             1.602176634e-19;
		print_message("# %-8s Vf %.3f V  photon %.3f eV\n", name, d.p[LED_VF],
		              eph);
		assert_true(0.95 * eph < d.p[LED_VF] && d.p[LED_VF] < eph + 1.0);
		if (strcmp(name, "infrared") == 0)
			vf_ir = d.p[LED_VF];
		if (strcmp(name, "red") == 0)
			vf_red = d.p[LED_VF];
		if (strcmp(name, "blue") == 0)
			vf_blue = d.p[LED_VF];
	}
	assert_int_equal(n, 7);
	assert_true(vf_ir < vf_red && vf_red < vf_blue);
	double p[MODEL_MAX_PARAMS] = { 0 };
	assert_int_equal(t->apply_preset("ultraviolet-ish", p), -1);
	assert_true(p[LED_VF] == 0.0);
	/* The defaults are the red preset. */
	struct device d, r;
	device_init(&d, t);
	device_init(&r, t);
	assert_int_equal(t->apply_preset("red", r.p), 0);
	assert_memory_equal(d.p, r.p, sizeof d.p);
}

/*
 * A series resistor chosen by the usual rule R = (VS - Vf) / If (common
 * practice) puts the load line through the stated point, so the solve must
 * land on (Vf, If) exactly, with every solver.
 */
static void test_resistor_design(void **state)
{
	(void)state;
	static const double supplies[] = { 4.83, 12.6, 23.9 };
	static const enum solve_method methods[] = { METHOD_AUTO, METHOD_NEWTON,
	                                             METHOD_BRENT };
	for (size_t k = 0; k < sizeof lcases / sizeof lcases[0]; k++)
		for (size_t s = 0; s < sizeof supplies / sizeof supplies[0]; s++)
			for (size_t m = 0; m < 3; m++) {
				struct problem pb;
				device_init(&pb.dev, &model_led);
				memcpy(pb.dev.p, lcases[k], sizeof lcases[k]);
				double vf = lcases[k][LED_VF], i_f = lcases[k][LED_IF];
				if (supplies[s] <= vf)
					continue;
				struct source_spec sp;
				char err[128];
				source_spec_thevenin(&sp, supplies[s], (supplies[s] - vf) / i_f);
				assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err),
				                 0);
				struct solve_options o;
				solve_options_init(&o);
				o.method = methods[m];
				struct solve_result res;
				if (solve_problem(&pb, &o, &res) != SOLVE_OK || res.n != 1)
					fail_msg("case %zu supply %g method %zu: %s", k, supplies[s],
					         m, res.message);
				assert_true(fabs(res.pts[0].i / i_f - 1.0) < 1e-9);
				assert_true(fabs(res.pts[0].v / vf - 1.0) < 1e-9);
			}
}

/* A series resistance that eats the whole forward voltage is refused. */
static void test_validation(void **state)
{
	(void)state;
	struct device d;
	char err[256];
	device_init(&d, &model_led);
	d.p[LED_RS] = 150.0; /* 3 V at 20 mA > 2 V */
	assert_int_not_equal(device_validate(&d, err, sizeof err), 0);
	assert_non_null(strstr(err, "series_resistance"));
	device_init(&d, &model_led);
	d.p[LED_VF] = 45.0;
	d.p[LED_N] = 0.5;
	assert_int_not_equal(device_validate(&d, err, sizeof err), 0);
	assert_non_null(strstr(err, "forward_voltage"));
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_stated_point),
		cmocka_unit_test(test_presets),
		cmocka_unit_test(test_resistor_design),
		cmocka_unit_test(test_validation),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
