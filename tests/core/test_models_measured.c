/*
 * test_models_measured.c - a device from measured points: the
 * Fritsch-Carlson monotone cubic exact at the points, monotone with no
 * overshoot, close in shape to GSL's Steffen interpolation, the stated
 * extrapolation rule and its warning, refused tables with the row number,
 * and an operating point against the curve the points were taken from.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include <cmocka.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_interp.h>

#include "models_check.h"

#include "core/model.h"
#include "core/models/models.h"
#include "core/solve.h"

/* The "true" device the first table is taken from: a junction diode. */
static double truth(double v)
{
	return 2.4e-14 * expm1(v / (1.07 * 0.025693));
}

/* Fill V and I with the diode table: uneven steps of 15 to 40 mV, each
 * under a decade of current, as a bench sweep would be taken. */
static size_t diode_table(double *v, double *i)
{
	static const double vs[] = { 0.3, 0.33, 0.36, 0.4, 0.43, 0.46, 0.5,
	                             0.53, 0.56, 0.6, 0.63, 0.66, 0.675, 0.69,
	                             0.705, 0.72 };
	size_t n = sizeof vs / sizeof vs[0];
	for (size_t k = 0; k < n; k++) {
		v[k] = vs[k];
		i[k] = truth(vs[k]);
	}
	return n;
}

/* A harsh table: a plateau then a cliff then a plateau. */
static const double harsh_v[] = { 0.0, 1.0, 2.0, 2.1, 3.0, 4.0, 4.2, 7.9 };
static const double harsh_i[] = { 0.0, 1e-6, 2.2e-6, 0.93, 0.9301, 0.9317,
                                  2.6, 2.61 };

/* A device on curve C. */
static void measured_device(struct device *d, const struct curve_data *c)
{
	device_init(d, &model_measured);
	d->curve = c;
}

/*
 * Exact at the points; between them monotone and inside the bracket of
 * its two points (no overshoot), which is what Fritsch & Carlson's slope
 * limits guarantee (SIAM J. Numer. Anal. 17(2), 1980, thm 2 and step 3).
 */
static void test_monotone_exact(void **state)
{
	(void)state;
	double v[20], i[20];
	const double *tv[2] = { v, harsh_v }, *ti[2] = { i, harsh_i };
	size_t tn[2] = { diode_table(v, i), sizeof harsh_v / sizeof harsh_v[0] };
	for (int t = 0; t < 2; t++) {
		struct curve_data c;
		char err[200];
		assert_int_equal(curve_data_init(&c, tv[t], ti[t], tn[t], err,
		                                 sizeof err), 0);
		struct device d;
		measured_device(&d, &c);
		assert_int_equal(device_validate(&d, err, sizeof err), 0);
		for (size_t k = 0; k < tn[t]; k++) {
			assert_true(device_current(&d, tv[t][k]) == ti[t][k]);
			double vb;
			assert_int_equal(device_voltage(&d, ti[t][k], &vb), 0);
			assert_true(fabs(vb - tv[t][k]) < 1e-12 * (fabs(tv[t][k]) + 1.0));
		}
		for (size_t k = 0; k + 1 < tn[t]; k++) {
			double prev = ti[t][k];
			for (int j = 1; j < 200; j++) {
				double x = tv[t][k] + (tv[t][k + 1] - tv[t][k]) * j / 200.0;
				double y = device_current(&d, x);
				if (!(y >= prev && y <= ti[t][k + 1]))
					fail_msg("table %d segment %zu: I(%.6g) = %.9g outside "
					         "[%.9g, %.9g] or falling", t, k, x, y, prev,
					         ti[t][k + 1]);
				prev = y;
				if (models_check_derivatives(d.type, d.p, x) != 0)
					fail_msg("table %d: conductance wrong at %.9g V", t, x);
			}
		}
		curve_data_fini(&c);
	}
}

/*
 * GSL's Steffen interpolation (M. Steffen, Astron. Astrophys. 239, 1990)
 * is another monotone cubic; on the same points the two must agree in
 * shape, measured against each segment's rise: on the smooth diode table
 * within 8 % and both within 12 % of the diode itself (seen: 5 % and 10 %,
 * largest in the end segments, where the two methods choose end slopes
 * differently); on the harsh table within 2 % of its whole span.
 */
static void test_against_steffen(void **state)
{
	(void)state;
	double v[20], i[20];
	const double *tv[2] = { v, harsh_v }, *ti[2] = { i, harsh_i };
	size_t tn[2] = { diode_table(v, i), sizeof harsh_v / sizeof harsh_v[0] };
	gsl_set_error_handler_off();
	for (int t = 0; t < 2; t++) {
		struct curve_data c;
		char err[200];
		assert_int_equal(curve_data_init(&c, tv[t], ti[t], tn[t], err,
		                                 sizeof err), 0);
		struct device d;
		measured_device(&d, &c);
		gsl_interp *gi = gsl_interp_alloc(gsl_interp_steffen, tn[t]);
		gsl_interp_accel *acc = gsl_interp_accel_alloc();
		assert_non_null(gi);
		assert_int_equal(gsl_interp_init(gi, tv[t], ti[t], tn[t]), GSL_SUCCESS);
		double worst = 0.0, worst_truth = 0.0;
		for (size_t k = 0; k + 1 < tn[t]; k++)
			for (int j = 1; j < 50; j++) {
				double x = tv[t][k] + (tv[t][k + 1] - tv[t][k]) * j / 50.0;
				double a = device_current(&d, x);
				double b = gsl_interp_eval(gi, tv[t], ti[t], x, acc);
				/* the smooth table: each segment's rise; the harsh one,
				 * whose plateaus rise by 1e-4 beside a cliff: its span */
				double scale = t == 0 ? ti[t][k + 1] - ti[t][k]
				                      : ti[t][tn[t] - 1] - ti[t][0];
				worst = fmax(worst, fabs(a - b) / scale);
				if (t == 0)
					worst_truth = fmax(worst_truth,
					                   fmax(fabs(a - truth(x)),
					                        fabs(b - truth(x))) / scale);
			}
		print_message("# table %d: worst Fritsch-Carlson vs Steffen %.4f, "
		              "worst vs the diode %.4f\n", t, worst, worst_truth);
		assert_true(worst < (t == 0 ? 0.08 : 0.02));
		assert_true(worst_truth < 0.12);
		gsl_interp_accel_free(acc);
		gsl_interp_free(gi);
		curve_data_fini(&c);
	}
}

/*
 * Outside the points the curve is the straight line with the end slope
 * (the stated rule), continuous at the ends, and the secondary hook warns;
 * inside it does not.  A resistor-fed point matches the diode the table
 * came from within the interpolation error (under 1 % in current).
 */
static void test_extrapolation_and_solve(void **state)
{
	(void)state;
	double v[20], i[20];
	size_t n = diode_table(v, i);
	struct curve_data c;
	char err[200];
	assert_int_equal(curve_data_init(&c, v, i, n, err, sizeof err), 0);
	struct problem pb;
	measured_device(&pb.dev, &c);
	double g = device_conductance(&pb.dev, v[n - 1]);
	double x = v[n - 1] + 0.0371;
	assert_true(fabs(device_current(&pb.dev, x) - (i[n - 1] + g * (x - v[n - 1])))
	            <= 1e-15 * i[n - 1]);
	double g0 = device_conductance(&pb.dev, v[0]);
	x = v[0] - 0.213;
	assert_true(fabs(device_current(&pb.dev, x) - (i[0] + g0 * (x - v[0]))) <=
	            1e-15 * i[0]);
	struct model_extra ex;
	assert_int_equal(device_secondary(&pb.dev, &pb.src, v[n - 1] + 0.01,
	                                  device_current(&pb.dev, v[n - 1] + 0.01),
	                                  &ex), 0);
	assert_true(ex.warn);
	assert_string_equal(ex.region, "extrapolated");
	assert_int_equal(device_secondary(&pb.dev, &pb.src, 0.612, 1e-4, &ex), 0);
	assert_false(ex.warn);

	struct source_spec sp;
	source_spec_thevenin(&sp, 5.17, 1.5e3);
	assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
	struct solve_options o;
	solve_options_init(&o);
	struct solve_result res;
	assert_int_equal(solve_problem(&pb, &o, &res), SOLVE_OK);
	assert_int_equal(res.n, 1);
	assert_true(solve_verify(&pb, res.pts[0].v, res.pts[0].i, 1e-10));
	/* The diode's own point, by bisection on its exact curve. */
	double a = 0.0, b = 1.0;
	for (int k = 0; k < 200; k++) {
		double m = 0.5 * (a + b);
		if (m + 1.5e3 * truth(m) > 5.17)
			b = m;
		else
			a = m;
	}
	double iv = truth(0.5 * (a + b));
	print_message("# measured %.6f mA, diode %.6f mA\n", res.pts[0].i * 1e3,
	              iv * 1e3);
	assert_true(fabs(res.pts[0].i / iv - 1.0) < 0.01);
	/* r_d = 1/g at the point. */
	assert_true(fabs(res.pts[0].rd * device_conductance(&pb.dev, res.pts[0].v) -
	                 1.0) < 1e-9);
	curve_data_fini(&c);
}

/* Tables that are refused, with the row named. */
static void test_refused(void **state)
{
	(void)state;
	static const struct {
		double v[5], i[5];
		size_t n;
		const char *want;
	} bad[] = {
		{ { 0.1, 0.2, 0.3, 0.3, 0.5 }, { 1, 2, 3, 4, 5 }, 5, "row 4" },
		{ { 0.1, 0.2, 0.3, 0.4, 0.5 }, { 1, 2, 1.5, 4, 5 }, 5, "row 3" },
		{ { 0.1, 0.2, 0.15, 0.4, 0.5 }, { 1, 2, 3, 4, 5 }, 5, "row 3" },
		{ { 0.1, 0.2, 0.3, 0.4, NAN }, { 1, 2, 3, 4, 5 }, 5, "row 5" },
		{ { 0.1, 0.2, 0.3, 0.4, 0.5 }, { 1, 2, 3, 4, 4 }, 5, "row 5" },
		{ { 0.1 }, { 1 }, 1, "at least 2" },
	};
	for (size_t k = 0; k < sizeof bad / sizeof bad[0]; k++) {
		struct curve_data c;
		char err[200] = "";
		assert_int_equal(curve_data_init(&c, bad[k].v, bad[k].i, bad[k].n, err,
		                                 sizeof err), -1);
		if (strstr(err, bad[k].want) == NULL)
			fail_msg("case %zu: \"%s\" does not say %s", k, err, bad[k].want);
	}
	/* A measured device without its points is not valid, nor does it
	 * pretend to have a curve. */
	struct device d;
	char err[200];
	device_init(&d, &model_measured);
	assert_null(d.curve);
	assert_int_not_equal(device_validate(&d, err, sizeof err), 0);
	assert_non_null(strstr(err, "points"));
	assert_true(isnan(device_current(&d, 0.5)));
	/* A copy owns its own arrays. */
	double v[20], i[20];
	size_t n = diode_table(v, i);
	struct curve_data c, c2;
	assert_int_equal(curve_data_init(&c, v, i, n, err, sizeof err), 0);
	assert_int_equal(curve_data_copy(&c2, &c), 0);
	curve_data_fini(&c);
	assert_true(c2.n == n && c2.v[3] == v[3] && c2.slope != NULL);
	curve_data_fini(&c2);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_monotone_exact),
		cmocka_unit_test(test_against_steffen),
		cmocka_unit_test(test_extrapolation_and_solve),
		cmocka_unit_test(test_refused),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
