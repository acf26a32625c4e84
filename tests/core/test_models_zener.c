/*
 * test_models_zener.c - the zener model: the stated breakdown voltage and
 * dynamic resistance at the test current, exact derivatives, and a shunt
 * regulator's load regulation against a hand computation.
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

/* Datasheet-style parameter sets (invented parts). */
static const struct {
	double vz, izt, rz, is, n, nb, t;
} zcases[] = {
	{ 5.1, 5e-3, 17.0, 1e-14, 1.0, 1.0, 25.0 },
	{ 3.37, 2.15e-2, 4.81, 2.7e-13, 1.43, 1.21, 47.3 },
	{ 12.4, 1.03e-3, 61.9, 8.1e-15, 1.07, 2.3, -11.6 },
	{ 47.0, 2.7e-3, 93.0, 3.3e-12, 1.9, 1.0, 25.0 },
	{ 1.87, 7.3e-2, 0.41, 1e-14, 1.0, 0.93, 81.2 },
};

/* Fill D with case K. */
static void zener_case(struct device *d, size_t k)
{
	device_init(d, &model_zener);
	d->p[ZENER_VZ] = zcases[k].vz;
	d->p[ZENER_IZT] = zcases[k].izt;
	d->p[ZENER_RZ] = zcases[k].rz;
	d->p[ZENER_IS] = zcases[k].is;
	d->p[ZENER_N] = zcases[k].n;
	d->p[ZENER_NB] = zcases[k].nb;
	d->p[ZENER_TEMP] = zcases[k].t;
}

/* V(-Izt) = -Vz, dV/dI = rz there (analytic and by central difference),
 * and current(-Vz) = -Izt back through the series split. */
static void test_stated_point(void **state)
{
	(void)state;
	for (size_t k = 0; k < sizeof zcases / sizeof zcases[0]; k++) {
		struct device d;
		char err[256];
		zener_case(&d, k);
		assert_int_equal(device_validate(&d, err, sizeof err), 0);
		double v;
		double iz = zcases[k].izt;
		assert_int_equal(device_voltage(&d, -iz, &v), 0);
		if (!(fabs(v + zcases[k].vz) <= 1e-12 * zcases[k].vz))
			fail_msg("case %zu: V(-Izt) = %.17g, want %.17g", k, v, -zcases[k].vz);
		double rd = d.type->resistance(d.p, -iz);
		if (!(fabs(rd / zcases[k].rz - 1.0) <= 1e-10))
			fail_msg("case %zu: rz = %.17g, want %.17g", k, rd, zcases[k].rz);
		double h = 1e-4 * iz, vp, vm;
		assert_int_equal(device_voltage(&d, -iz + h, &vp), 0);
		assert_int_equal(device_voltage(&d, -iz - h, &vm), 0);
		assert_true(fabs((vp - vm) / (2.0 * h) / zcases[k].rz - 1.0) < 1e-6);
		double i = device_current(&d, -zcases[k].vz);
		assert_true(fabs(i / -iz - 1.0) < 1e-9);
	}
}

/* Conductance and resistance against central differences over the range,
 * and the curve strictly increasing (the model says monotone). */
static void test_derivatives(void **state)
{
	(void)state;
	for (size_t k = 0; k < sizeof zcases / sizeof zcases[0]; k++) {
		struct device d;
		zener_case(&d, k);
		double lo, hi;
		device_range(&d, &lo, &hi);
		assert_true(lo < -zcases[k].vz && hi > 0.5);
		double iprev = -INFINITY;
		for (int j = 0; j <= 97; j++) {
			double v = lo + (hi - lo) * j / 97.0;
			double i = device_current(&d, v);
			assert_true(i >= iprev); /* flat to rounding near -Is */
			iprev = i;
			if (fabs(v) < 1e-3)
				continue;
			if (models_check_derivatives(d.type, d.p, v) != 0)
				fail_msg("case %zu: conductance wrong at %.17g", k, v);
			/* V(I) only where it is well conditioned: not on the flat
			 * reverse-leakage stretch where I is about -Is. */
			if (!(fabs(i) > 1e3 * zcases[k].is))
				continue;
			double g = device_conductance(&d, v);
			double h = 1e-7 * fabs(i);
			double vp = NAN, vm = NAN;
			if (device_voltage(&d, i + h, &vp) != 0 ||
			    device_voltage(&d, i - h, &vm) != 0)
				fail_msg("case %zu: no voltage near %g A", k, i);
			double rd = d.type->resistance(d.p, i);
			if (!models_check_difference(vp, vm, i, h, rd))
				fail_msg("case %zu: resistance wrong at %.17g A", k, i);
			if (!(fabs(rd * g - 1.0) < 1e-8))
				fail_msg("case %zu: r_d g = %.17g at %.17g V", k, rd * g, v);
		}
	}
}

/*
 * A shunt regulator: a 5.1 V zener fed from 14.7 V through 330 ohm, its
 * load a current sink of IL.  Seen from the zener (anode to cathode, so
 * the breakdown voltage is negative) the source is voc = -(14.7 - IL*330),
 * r = 330.  The linear zener model V = Vz + rz (Iz - Izt) gives the load
 * regulation dV/dIL = -(rz || RS) (common practice); over a small change
 * of load the computed change must agree within the curvature of the knee.
 */
static void test_load_regulation(void **state)
{
	(void)state;
	struct device d;
	zener_case(&d, 0); /* 5.1 V, 5 mA, 17 ohm */
	const double vs = 14.7, rs = 330.0;
	/* Choose loads that keep the zener current near Izt. */
	double il[2] = { 0.02413, 0.02463 };
	double vout[2];
	for (int k = 0; k < 2; k++) {
		struct problem pb = { .dev = d };
		struct source_spec sp;
		char err[128];
		source_spec_thevenin(&sp, -(vs - il[k] * rs), rs);
		assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
		struct solve_options o;
		solve_options_init(&o);
		struct solve_result res;
		assert_int_equal(solve_problem(&pb, &o, &res), SOLVE_OK);
		assert_int_equal(res.n, 1);
		vout[k] = -res.pts[0].v;
		double iz = -res.pts[0].i;
		print_message("# IL %.5f A: Vout %.6f V, Iz %.4f mA\n", il[k], vout[k],
		              iz * 1e3);
		assert_true(fabs(iz - 5e-3) < 0.6e-3);
	}
	double rpar = 17.0 * rs / (17.0 + rs);
	double want = -rpar * (il[1] - il[0]);
	double got = vout[1] - vout[0];
	print_message("# dV %.4f mV, hand %.4f mV\n", got * 1e3, want * 1e3);
	assert_true(fabs(got / want - 1.0) < 0.05);
}

/*
 * intrinsic_voltage is the exact inverse of intrinsic_current on both
 * branches (the junction solver takes log-domain Newton steps through it),
 * so a reverse-biased shunt point is found in a few Newton steps rather
 * than one thermal voltage per step from the far side.
 */
static void test_intrinsic_inverse(void **state)
{
	(void)state;
	for (size_t k = 0; k < sizeof zcases / sizeof zcases[0]; k++) {
		struct device d;
		zener_case(&d, k);
		const struct model_type *t = d.type;
		static const double iz_mult[] = { -7.3, -1.0, -0.041, 0.037, 2.9 };
		for (size_t j = 0; j < sizeof iz_mult / sizeof iz_mult[0]; j++) {
			double i = iz_mult[j] * zcases[k].izt;
			double vj = t->intrinsic_voltage(d.p, i);
			double back = t->intrinsic_current(d.p, vj);
			if (!(fabs(back / i - 1.0) < 1e-12))
				fail_msg("case %zu: Ij(Vj(%.6g)) = %.17g", k, i, back);
		}
		struct problem pb = { .dev = d };
		struct source_spec sp;
		char err[128];
		source_spec_thevenin(&sp, -2.37 * zcases[k].vz, 1.2e3);
		assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
		struct solve_options o;
		solve_options_init(&o);
		struct solve_result res;
		assert_int_equal(solve_problem(&pb, &o, &res), SOLVE_OK);
		assert_true(solve_verify(&pb, res.pts[0].v, res.pts[0].i, 1e-10));
		print_message("# case %zu: reverse point in %u steps\n", k,
		              res.pts[0].steps);
		assert_true(res.pts[0].steps <= 30);
	}
}

/* A dynamic resistance below the junction's own is refused, naming it. */
static void test_validation(void **state)
{
	(void)state;
	struct device d;
	char err[256];
	zener_case(&d, 0);
	d.p[ZENER_RZ] = 3.1; /* below kT/q / 5 mA = 5.14 ohm */
	assert_int_not_equal(device_validate(&d, err, sizeof err), 0);
	assert_non_null(strstr(err, "dynamic_resistance"));
	zener_case(&d, 0);
	d.p[ZENER_VZ] = 0.07;
	assert_int_not_equal(device_validate(&d, err, sizeof err), 0);
	assert_non_null(strstr(err, "breakdown_voltage"));
	zener_case(&d, 0);
	d.p[ZENER_IZT] = -5e-3;
	assert_int_not_equal(device_validate(&d, err, sizeof err), 0);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_stated_point),
		cmocka_unit_test(test_derivatives),
		cmocka_unit_test(test_load_regulation),
		cmocka_unit_test(test_intrinsic_inverse),
		cmocka_unit_test(test_validation),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
