/*
 * test_models_diode.c - temperature scaling of the diode's saturation
 * current: the law against a hand computation, the forward-voltage drift of
 * a silicon-like junction, and old sessions keeping their meaning.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>

#include <cmocka.h>

#include "models_check.h"

#include "core/model.h"
#include "core/models/models.h"

/* A diode with the given parameters (others at their defaults). */
static void diode_make(struct device *d, double is, double n, double rs,
                       double t, double tref)
{
	device_init(d, &model_diode);
	d->p[DIODE_IS] = is;
	d->p[DIODE_N] = n;
	d->p[DIODE_RS] = rs;
	d->p[DIODE_TEMP] = t;
	d->p[DIODE_TREF] = tref;
}

/* The saturation current the model uses, read back from its curve. */
static double diode_is_seen(const struct device *d)
{
	double nvt = d->p[DIODE_N] * diode_thermal_voltage(d->p[DIODE_TEMP]);
	double v = -7.3 * nvt; /* I = Is expm1(v / nVt) there, so divide back */
	return -d->type->intrinsic_current(d->p, v) / -expm1(v / nvt);
}

/*
 * Is(T) = Is(T0) (T/T0)^m exp(Eg/(n k) (1/T0 - 1/T)) (Sze & Ng, Physics of
 * Semiconductor Devices, 3rd ed., 2007, ch. 1-2), by hand for Is(T0) =
 * 23.85 fA at 25 degC, T = 73.6 degC, Eg = 1.12 eV, m = 3, n = 1.037,
 * k = 8.617333e-5 eV/K (CODATA 2018, exact since the 2019 SI):
 *   T/T0 = 346.75/298.15 = 1.163005,  (T/T0)^3 = 1.573059
 *   Eg/(n k) = 12533.33 K,  1/T0 - 1/T = 4.700943e-4 /K,  product 5.891846
 *   exp(5.891846) = 362.0729
 *   Is(T) = 2.385e-14 * 1.573059 * 362.0729 = 1.358405e-11 A
 */
static void test_scaling_hand(void **state)
{
	(void)state;
	struct device d;
	diode_make(&d, 2.385e-14, 1.037, 0.0, 73.6, 25.0);
	double is = diode_is_seen(&d);
	assert_true(fabs(is / 1.358405e-11 - 1.0) < 2e-6);
	/* The exported helper gives the same number. */
	double h = diode_scaled_saturation(2.385e-14, 73.6, 25.0, 1.12, 3.0, 1.037);
	assert_true(fabs(h / is - 1.0) < 1e-9);
}

/*
 * A silicon junction at constant current loses about 2 mV per kelvin
 * (common practice: -1.5 to -2.5 mV/K).  Differentiating V = n Vt ln(I/Is)
 * with the law above gives dV/dT = (V - n m kT/q - Eg)/T (Sze & Ng 2007,
 * ch. 2): a second, independent check of the slope.
 */
static void test_forward_drift(void **state)
{
	(void)state;
	static const struct {
		double is, n, i, t;
	} cases[] = {
		{ 3.71e-15, 1.0, 1.13e-3, 25.0 },
		{ 2.2e-14, 1.04, 4.7e-4, 41.7 },
		{ 6.8e-15, 1.0, 9.3e-3, 0.0 },
		{ 1.3e-9, 1.87, 2.15e-3, 25.0 },
	};
	for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
		struct device lo, hi, mid;
		double t = cases[k].t;
		diode_make(&lo, cases[k].is, cases[k].n, 0.0, t - 0.5, 25.0);
		diode_make(&hi, cases[k].is, cases[k].n, 0.0, t + 0.5, 25.0);
		diode_make(&mid, cases[k].is, cases[k].n, 0.0, t, 25.0);
		double vl, vh, vm;
		assert_int_equal(device_voltage(&lo, cases[k].i, &vl), 0);
		assert_int_equal(device_voltage(&hi, cases[k].i, &vh), 0);
		assert_int_equal(device_voltage(&mid, cases[k].i, &vm), 0);
		double slope = vh - vl; /* V per kelvin over 1 K */
		print_message("# Is %g n %g I %g T %g: %.3f mV/K\n", cases[k].is,
		              cases[k].n, cases[k].i, t, slope * 1e3);
		assert_true(slope < -1.5e-3 && slope > -2.5e-3);
		double tk = t + 273.15;
		double want = (vm - cases[k].n * 3.0 * 8.617333262e-5 * tk - 1.12) / tk;
		assert_true(fabs(slope / want - 1.0) < 1e-4);
	}
}

/* Without a reference temperature Is stays at the value given, at any
 * junction temperature: a session written before scaling existed keeps
 * its meaning.  T0 = T, or Eg = m = 0, is the identity too. */
static void test_no_scaling(void **state)
{
	(void)state;
	static const double temps[] = { -31.7, 0.0, 25.0, 61.3, 142.9 };
	for (size_t k = 0; k < sizeof temps / sizeof temps[0]; k++) {
		struct device d;
		diode_make(&d, 4.17e-13, 1.42, 0.0, temps[k], -273.15);
		assert_true(fabs(diode_is_seen(&d) / 4.17e-13 - 1.0) < 1e-12);
		d.p[DIODE_TREF] = temps[k];
		assert_true(fabs(diode_is_seen(&d) / 4.17e-13 - 1.0) < 1e-12);
		d.p[DIODE_TREF] = 17.3;
		d.p[DIODE_EG] = 0.0;
		d.p[DIODE_XTI] = 0.0;
		assert_true(fabs(diode_is_seen(&d) / 4.17e-13 - 1.0) < 1e-12);
	}
	/* The defaults: no reference temperature, silicon band gap, m = 3. */
	struct device d;
	device_init(&d, &model_diode);
	assert_true(d.p[DIODE_TREF] == -273.15);
	assert_true(d.p[DIODE_EG] == 1.12);
	assert_true(d.p[DIODE_XTI] == 3.0);
}

/* Derivatives stay exact with scaling on, and bad values are refused. */
static void test_derivatives_and_ranges(void **state)
{
	(void)state;
	struct device d;
	diode_make(&d, 8.3e-15, 1.11, 0.73, 87.2, 21.4);
	d.p[DIODE_EG] = 1.17;
	d.p[DIODE_XTI] = 2.4;
	char err[256];
	assert_int_equal(device_validate(&d, err, sizeof err), 0);
	static const double vs[] = { -0.417, 0.213, 0.561, 0.688, 0.93 };
	for (size_t k = 0; k < sizeof vs / sizeof vs[0]; k++)
		assert_int_equal(models_check_derivatives(d.type, d.p, vs[k]), 0);
	d.p[DIODE_EG] = -0.3;
	assert_int_not_equal(device_validate(&d, err, sizeof err), 0);
	d.p[DIODE_EG] = 1.12;
	d.p[DIODE_TREF] = -300.0;
	assert_int_not_equal(device_validate(&d, err, sizeof err), 0);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_scaling_hand),
		cmocka_unit_test(test_forward_drift),
		cmocka_unit_test(test_no_scaling),
		cmocka_unit_test(test_derivatives_and_ranges),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
