/*
 * test_models_thermistor.c - the self-heated NTC thermistor: beta against
 * Steinhart-Hart, a published resistance table, the voltage peak against
 * its closed form, exact derivatives, and a source that crosses the
 * folded curve twice, once and not at all (the every-root scan in
 * current).
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include <cmocka.h>

#include "models_check.h"

#include "core/diagnose.h"
#include "core/model.h"
#include "core/models/models.h"
#include "core/solve.h"

/* A 10 kohm, B = 3977 K bead in still air (invented numbers for tests). */
static void beta_part(struct device *d, double r0, double b, double delta)
{
	device_init(d, &model_thermistor);
	d->p[THERM_R0] = r0;
	d->p[THERM_T0] = 25.0;
	d->p[THERM_B] = b;
	d->p[THERM_DELTA] = delta;
	d->p[THERM_TAMB] = 25.0;
	d->p[THERM_TMAX] = 150.0;
}

/* The Steinhart-Hart part with coefficients A, B, C. */
static void sh_part(struct device *d, double a, double b, double c)
{
	device_init(d, &model_thermistor_sh);
	d->p[THERM_SH_A] = a;
	d->p[THERM_SH_B] = b;
	d->p[THERM_SH_C] = c;
	d->p[THERM_DELTA] = 1.5e-3;
	d->p[THERM_TAMB] = 25.0;
	d->p[THERM_TMAX] = 150.0;
}

/*
 * The beta form is Steinhart-Hart with A = 1/T0 - ln(R0)/B, B' = 1/B and
 * C = 0 (take logarithms of R = R0 exp(B (1/T - 1/T0))): the two models
 * must give the same R(T) and the same V(I).
 */
static void test_beta_is_steinhart_hart(void **state)
{
	(void)state;
	static const double parts[][2] = {
		{ 1e4, 3977.0 }, { 4.7e3, 3435.0 }, { 2.2e5, 4261.0 }, { 47.3, 2917.0 },
	};
	for (size_t k = 0; k < sizeof parts / sizeof parts[0]; k++) {
		struct device b, s;
		char err[256];
		beta_part(&b, parts[k][0], parts[k][1], 1.5e-3);
		sh_part(&s, 1.0 / 298.15 - log(parts[k][0]) / parts[k][1],
		        1.0 / parts[k][1], 0.0);
		assert_int_equal(device_validate(&b, err, sizeof err), 0);
		assert_int_equal(device_validate(&s, err, sizeof err), 0);
		for (double t = -37.3; t < 150.0; t += 13.7) {
			double rb = thermistor_resistance_at(b.type, b.p, t);
			double rs = thermistor_resistance_at(s.type, s.p, t);
			assert_true(fabs(rs / rb - 1.0) < 1e-11);
		}
		double r25 = thermistor_resistance_at(b.type, b.p, 25.0);
		assert_true(fabs(r25 / parts[k][0] - 1.0) < 1e-14);
		double lo, hi;
		b.type->current_range(b.p, &lo, &hi);
		for (int j = 1; j < 9; j++) {
			double i = hi * j / 9.3, vb, vs;
			assert_int_equal(device_voltage(&b, i, &vb), 0);
			assert_int_equal(device_voltage(&s, i, &vs), 0);
			assert_true(fabs(vs / vb - 1.0) < 1e-9);
		}
	}
}

/*
 * A published R-T table: ILX Lightwave LDC-3900 manual, appendix A,
 * table A.1, a 10 kohm Dale 1T1002-5 thermistor: 32128 ohm at 0 degC,
 * 19549 at 10, 12262 at 20, 9814 at 25, 7908 at 30, 3542 at 50; the
 * manual's Steinhart-Hart fit is within 0.003 degC of every row.  (Its
 * 40 degC row reads 5331 ohm in the stored copy, 0.47 degC off a smooth
 * curve through its neighbours, against the manual's own 0.0003 degC fit
 * error there: taken as a copying slip and left out.)  Steinhart &
 * Hart's three-point fit (Deep-Sea Research 15, 1968) through the 0, 25
 * and 50 degC rows must then reproduce the other rows within 0.01 degC,
 * and the model's inverse R(T) must give the fit points back exactly.
 */
static void test_published_table(void **state)
{
	(void)state;
	static const double tab[][2] = {
		{ 0.0, 32128.0 }, { 10.0, 19549.0 }, { 20.0, 12262.0 },
		{ 25.0, 9814.0 }, { 30.0, 7908.0 }, { 50.0, 3542.0 },
	};
	/* Three-point fit, solved in closed form. */
	double l[3], y[3];
	const int fit[3] = { 0, 3, 5 };
	for (int k = 0; k < 3; k++) {
		l[k] = log(tab[fit[k]][1]);
		y[k] = 1.0 / (tab[fit[k]][0] + 273.15);
	}
	double g2 = (y[1] - y[0]) / (l[1] - l[0]), g3 = (y[2] - y[0]) / (l[2] - l[0]);
	double c = (g3 - g2) / (l[2] - l[1]) / (l[0] + l[1] + l[2]);
	double b = g2 - c * (l[0] * l[0] + l[0] * l[1] + l[1] * l[1]);
	double a = y[0] - (b + l[0] * l[0] * c) * l[0];
	print_message("# fit: A %.6e B %.6e C %.6e\n", a, b, c);
	struct device d;
	char err[256];
	sh_part(&d, a, b, c);
	assert_int_equal(device_validate(&d, err, sizeof err), 0);
	for (size_t k = 0; k < sizeof tab / sizeof tab[0]; k++) {
		double r = thermistor_resistance_at(d.type, d.p, tab[k][0]);
		/* The temperature error that the resistance error means. */
		double lr = log(tab[k][1]);
		double tk = 1.0 / (a + b * lr + c * lr * lr * lr) - 273.15;
		print_message("# %5.1f degC: table %7.0f ohm, model %9.2f ohm, "
		              "T from table R %.5f degC\n", tab[k][0], tab[k][1], r, tk);
		assert_true(fabs(tk - tab[k][0]) < 0.01);
		bool fitted = k == 0 || k == 3 || k == 5;
		assert_true(fabs(r / tab[k][1] - 1.0) < (fitted ? 1e-12 : 5e-4));
	}
	/*
	 * Coefficients printed for a 10 kohm NTC module (IDUINO "Analog
	 * temperature sensor" module manual: A = 0.001129148, B = 0.000234125,
	 * C = 0.0000000876741): 10 kohm at 25.00 degC, within 0.01 degC.
	 */
	sh_part(&d, 1.129148e-3, 2.34125e-4, 8.76741e-8);
	double r25 = thermistor_resistance_at(d.type, d.p, 25.0);
	double r2501 = thermistor_resistance_at(d.type, d.p, 25.01);
	double r2499 = thermistor_resistance_at(d.type, d.p, 24.99);
	print_message("# module: R(25 degC) = %.2f ohm\n", r25);
	assert_true(r2501 < 1e4 && 1e4 < r2499);
}

/*
 * The voltage peak.  With I^2 R = delta (T - Ta) and R' = -B R / T^2 for
 * the beta form, dV/dI = 0 (delta + I^2 R' = 0) becomes
 * B (T - Ta) = T^2, so T* = (B - sqrt(B^2 - 4 B Ta)) / 2 (the lower root;
 * a peak exists when B > 4 Ta) -- derived here from the heat balance, an
 * independent check of the model's numerical search.  Then
 * I* = sqrt(delta (T* - Ta) / R(T*)) and V* = I* R(T*).
 */
static void test_peak(void **state)
{
	(void)state;
	static const double parts[][3] = {
		{ 1e4, 3977.0, 1.5e-3 }, { 4.7e3, 3435.0, 7.3e-3 },
		{ 2.2e5, 4261.0, 0.91e-3 }, { 47.3, 2917.0, 2.1e-2 },
	};
	for (size_t k = 0; k < sizeof parts / sizeof parts[0]; k++) {
		struct device d;
		beta_part(&d, parts[k][0], parts[k][1], parts[k][2]);
		double bb = parts[k][1], ta = 298.15;
		double ts = 0.5 * (bb - sqrt(bb * bb - 4.0 * bb * ta));
		double rs = parts[k][0] * exp(bb * (1.0 / ts - 1.0 / 298.15));
		double is = sqrt(parts[k][2] * (ts - ta) / rs), vs = is * rs;
		double tc, ip, vp;
		assert_int_equal(thermistor_peak(d.type, d.p, &tc, &ip, &vp), 0);
		print_message("# part %zu: peak %.4f V at %.4f mA, %.2f degC\n", k, vp,
		              ip * 1e3, tc);
		assert_true(fabs(tc + 273.15 - ts) < 1e-8 * ts);
		assert_true(fabs(ip / is - 1.0) < 1e-8);
		assert_true(fabs(vp / vs - 1.0) < 1e-8);
		/* r_d changes sign there; V is lower on both sides. */
		assert_true(d.type->resistance(d.p, 0.97 * ip) > 0.0);
		assert_true(d.type->resistance(d.p, 1.03 * ip) < 0.0);
		double v1, v2;
		assert_int_equal(device_voltage(&d, 0.97 * ip, &v1), 0);
		assert_int_equal(device_voltage(&d, 1.03 * ip, &v2), 0);
		assert_true(v1 < vp && v2 < vp);
		/* The heat balance holds at every current. */
		double t;
		assert_int_equal(thermistor_temperature(d.type, d.p, 1.37 * ip, &t), 0);
		double r = thermistor_resistance_at(d.type, d.p, t);
		double i = 1.37 * ip;
		assert_true(fabs(i * i * r / (parts[k][2] * (t - 25.0)) - 1.0) < 1e-10);
	}
	/* B < 4 Ta: no peak, the voltage rises to the end of the domain. */
	struct device d;
	beta_part(&d, 1e4, 1100.0, 1.5e-3);
	double tc, ip, vp;
	assert_int_equal(thermistor_peak(d.type, d.p, &tc, &ip, &vp), -1);
}

/* dV/dI against differences of V(I), over the whole domain, both forms. */
static void test_derivatives(void **state)
{
	(void)state;
	struct device ds[2];
	beta_part(&ds[0], 1e4, 3977.0, 1.5e-3);
	sh_part(&ds[1], 1.129148e-3, 2.34125e-4, 8.76741e-8);
	for (int m = 0; m < 2; m++) {
		const struct model_type *t = ds[m].type;
		double lo, hi;
		t->current_range(ds[m].p, &lo, &hi);
		for (int j = 0; j < 61; j++) {
			double i = lo + (hi - lo) * (j + 0.43) / 61.0;
			double h = 1e-6 * fabs(i), vp, vm;
			if (i == 0.0)
				continue;
			assert_int_equal(t->voltage(ds[m].p, i + h, &vp), 0);
			assert_int_equal(t->voltage(ds[m].p, i - h, &vm), 0);
			if (!models_check_difference(vp, vm, i, h, t->resistance(ds[m].p, i)))
				fail_msg("%s: resistance wrong at %.17g A", t->name, i);
		}
		double v;
		assert_int_equal(t->voltage(ds[m].p, 1.001 * hi, &v), -1);
		assert_int_equal(t->voltage(ds[m].p, 0.999 * hi, &v), 0);
	}
}

/* Solve the 10 kohm part against (VS, RS). */
static enum solve_status therm_solve(double vs, double rs, struct problem *pb,
                                     struct solve_result *res)
{
	struct source_spec sp;
	char err[128];
	beta_part(&pb->dev, 1e4, 3977.0, 1.5e-3);
	source_spec_thevenin(&sp, vs, rs);
	assert_int_equal(source_from_spec(&sp, &pb->src, err, sizeof err), 0);
	struct solve_options o;
	solve_options_init(&o);
	return solve_problem(pb, &o, res);
}

/*
 * The part peaks at about 11.6 V and 3.4 mA and ends (150 degC) near 6 V
 * and 31 mA.  A stiff 10 V source (50 ohm) crosses twice: on the rising
 * branch and past the peak; a soft 40 V source (2 kohm, steeper than any
 * part of the falling branch) once; a stiff 14 V source not at all (the
 * part would run away to its limit).
 */
static void test_crossings(void **state)
{
	(void)state;
	struct problem pb;
	struct solve_result res;
	assert_int_equal(therm_solve(10.0, 50.0, &pb, &res), SOLVE_OK);
	assert_int_equal(res.n, 2);
	double tc, ip, vp;
	assert_int_equal(thermistor_peak(pb.dev.type, pb.dev.p, &tc, &ip, &vp), 0);
	for (size_t k = 0; k < res.n; k++) {
		print_message("# twice: %.5f V %.5f mA r_d %.1f ohm\n", res.pts[k].v,
		              res.pts[k].i * 1e3, res.pts[k].rd);
		assert_true(solve_verify(&pb, res.pts[k].v, res.pts[k].i, 1e-10));
	}
	double ilo = fmin(res.pts[0].i, res.pts[1].i);
	double ihi = fmax(res.pts[0].i, res.pts[1].i);
	assert_true(ilo < ip && ihi > ip);
	struct model_extra ex;
	size_t past = res.pts[0].i > res.pts[1].i ? 0 : 1;
	assert_int_equal(device_secondary(&pb.dev, &pb.src, res.pts[past].v,
	                                  res.pts[past].i, &ex), 0);
	print_message("# %s; %s\n", ex.region, ex.note);
	assert_string_equal(ex.region, "past the voltage peak");
	assert_true(res.pts[past].rd < 0.0 && res.pts[1 - past].rd > 0.0);

	assert_int_equal(therm_solve(40.0, 2000.0, &pb, &res), SOLVE_OK);
	assert_int_equal(res.n, 1);
	assert_true(solve_verify(&pb, res.pts[0].v, res.pts[0].i, 1e-10));
	print_message("# once: %.5f V %.5f mA\n", res.pts[0].v, res.pts[0].i * 1e3);

	/*
	 * Past the peak r_d < 0; with r = 2 kohm the device order has
	 * g' = -r_d / r = |r_d| / r < 1 and the projections reach the point;
	 * the line order needs I(V), which this curve does not have.
	 */
	struct diagnosis dg;
	diagnose_at(&pb, ORDER_VOLTAGE_FROM_DEVICE, res.pts[0].v, 1e-12, 1.0, &dg);
	print_message("# device order: %s / %s\n", dg.verdict, dg.advice);
	assert_int_equal(dg.shape, SHAPE_STAIRCASE_IN);
	assert_true(fabs(dg.gprime + res.pts[0].rd / 2000.0) < 1e-12);
	assert_non_null(strstr(dg.advice, "r_d < 0"));
	diagnose_at(&pb, ORDER_VOLTAGE_FROM_LINE, res.pts[0].v, 1e-12, 1.0, &dg);
	assert_int_equal(dg.shape, SHAPE_UNDEFINED);
	assert_non_null(strstr(dg.advice, "voltage-from-device"));
	struct solve_options po;
	solve_options_init(&po);
	po.method = METHOD_PROJECTION;
	po.order = ORDER_VOLTAGE_FROM_DEVICE;
	struct solve_result pres;
	assert_int_equal(solve_problem(&pb, &po, &pres), SOLVE_OK);
	assert_true(fabs(pres.pts[0].i / res.pts[0].i - 1.0) < 1e-9);

	assert_int_equal(therm_solve(14.0, 50.0, &pb, &res), SOLVE_NONE);
	assert_int_equal(res.n, 0);

	/* Reversed polarity: the same points mirrored. */
	assert_int_equal(therm_solve(-10.0, 50.0, &pb, &res), SOLVE_OK);
	assert_int_equal(res.n, 2);
	assert_true(res.pts[0].i < 0.0 && res.pts[1].i < 0.0);

	/* An ideal current source: one point, the curve at that current. */
	struct source_spec sp;
	char err[128];
	source_spec_norton(&sp, 4.1e-3, INFINITY);
	assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
	struct solve_options o;
	solve_options_init(&o);
	assert_int_equal(solve_problem(&pb, &o, &res), SOLVE_OK);
	assert_int_equal(res.n, 1);
	assert_true(res.pts[0].rd < 0.0); /* 4.1 mA is past the peak */
}

/* Rated maximum above ambient; an NTC part only. */
static void test_validation(void **state)
{
	(void)state;
	struct device d;
	char err[256];
	beta_part(&d, 1e4, 3977.0, 1.5e-3);
	d.p[THERM_TMAX] = 20.0;
	assert_int_not_equal(device_validate(&d, err, sizeof err), 0);
	assert_non_null(strstr(err, "maximum_temperature"));
	sh_part(&d, 1.129148e-3, 2.34125e-4, 8.76741e-8);
	d.p[THERM_SH_A] = 0.9;
	assert_int_not_equal(device_validate(&d, err, sizeof err), 0);
	assert_non_null(strstr(err, "steinhart_hart_a"));
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_beta_is_steinhart_hart),
		cmocka_unit_test(test_published_table),
		cmocka_unit_test(test_peak),
		cmocka_unit_test(test_derivatives),
		cmocka_unit_test(test_crossings),
		cmocka_unit_test(test_validation),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
