/*
 * test_models_fet.c - JFET and enhancement MOSFET self bias: the operating
 * point against the closed-form root of the square law and the bias line
 * (GSL's quadratic solver as the reference), the drain-side region, cut
 * off, and exact derivatives.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include <cmocka.h>
#include <gsl/gsl_poly.h>

#include "models_check.h"

#include "core/model.h"
#include "core/models/models.h"
#include "core/solve.h"

/* One stage: model, K (IDSS or k), threshold (VP or Vth), VDD, RD, VG, RS. */
struct fstage {
	const struct model_type *t;
	double k, th, vdd, rd, vg, rs;
	const char *region;   /* expected, by the hand computation below */
};

static const struct fstage fstages[] = {
	{ &model_jfet, 8.7e-3, -2.43, 15.0, 1.2e3, 0.0, 390.0, "saturation" },
	{ &model_jfet, 3.1e-3, -1.17, 9.0, 2.2e3, 0.0, 680.0, "saturation" },
	{ &model_jfet, 1.27e-2, -3.9, 12.0, 820.0, 1.83, 1.5e3, "saturation" },
	{ &model_jfet, 8.7e-3, -2.43, 5.0, 4.7e3, 0.0, 390.0, "ohmic" },
	{ &model_nmos, 2.4e-3, 1.87, 18.0, 3.3e3, 6.2, 1.0e3, "saturation" },
	{ &model_nmos, 0.137, 2.1, 12.0, 47.0, 4.4, 22.0, "saturation" },
	{ &model_nmos, 5.3e-4, 0.71, 5.0, 10e3, 2.9, 2.7e3, "ohmic" },
};

/* The bias problem of stage S. */
static void fstage_problem(const struct fstage *s, struct problem *pb)
{
	device_init(&pb->dev, s->t);
	pb->dev.p[FET_K] = s->k;
	pb->dev.p[FET_VTH] = s->th;
	pb->dev.p[FET_VDD] = s->vdd;
	pb->dev.p[FET_RD] = s->rd;
	struct source_spec sp;
	char err[128];
	source_spec_thevenin(&sp, s->vg, s->rs);
	assert_int_equal(source_from_spec(&sp, &pb->src, err, sizeof err), 0);
}

/* The value labelled KEY in OUT (NaN when absent). */
static double extra(const struct model_extra *out, const char *key)
{
	for (size_t k = 0; k < out->n; k++)
		if (strcmp(out->v[k].key, key) == 0)
			return out->v[k].value;
	return NAN;
}

/*
 * With ID = a (VGS - th)^2 (a = IDSS/VP^2 for the JFET, k/2 for the
 * MOSFET) and VGS = VG - ID RS:
 *     a RS VGS^2 + (1 - 2 a RS th) VGS + (a RS th^2 - VG) = 0,
 * of whose two roots only the one above the threshold is on the curve
 * (common practice).  GSL's gsl_poly_solve_quadratic gives the roots; the
 * every-root scan and Newton must find that one, and only it.
 */
static void test_closed_form(void **state)
{
	(void)state;
	for (size_t k = 0; k < sizeof fstages / sizeof fstages[0]; k++) {
		const struct fstage *s = &fstages[k];
		bool jfet = s->t == &model_jfet;
		double a = jfet ? s->k / (s->th * s->th) : 0.5 * s->k;
		double x0, x1;
		int nr = gsl_poly_solve_quadratic(a * s->rs, 1.0 - 2.0 * a * s->rs * s->th,
		                                  a * s->rs * s->th * s->th - s->vg,
		                                  &x0, &x1);
		assert_int_equal(nr, 2);
		assert_true(x0 < s->th && x1 > s->th); /* one spurious, one real */
		double id = a * (x1 - s->th) * (x1 - s->th);

		struct problem pb;
		fstage_problem(s, &pb);
		static const enum solve_method methods[] = { METHOD_AUTO, METHOD_NEWTON,
		                                             METHOD_BRENT };
		for (size_t m = 0; m < 3; m++) {
			struct solve_options o;
			solve_options_init(&o);
			o.method = methods[m];
			struct solve_result res;
			if (solve_problem(&pb, &o, &res) != SOLVE_OK || res.n != 1)
				fail_msg("stage %zu method %zu: %s", k, m, res.message);
			if (!(fabs(res.pts[0].v - x1) < 1e-10 * fabs(x1) + 1e-12) ||
			    !(fabs(res.pts[0].i / id - 1.0) < 1e-9))
				fail_msg("stage %zu method %zu: VGS %.12g ID %.12g, closed form "
				         "%.12g %.12g", k, m, res.pts[0].v, res.pts[0].i, x1, id);
		}
		/* Region: saturation while VDS = VDD - ID (RD + RS) >= VGS - th. */
		struct model_extra ex;
		assert_int_equal(device_secondary(&pb.dev, &pb.src, x1, id, &ex), 0);
		double vds = s->vdd - id * (s->rd + s->rs);
		print_message("# stage %zu %s: VGS %.4f V ID %.4f mA VDS %.3f V %s\n", k,
		              s->t->name, x1, id * 1e3, vds, ex.region);
		assert_true(fabs(extra(&ex, "drain_source_voltage") - vds) <
		            1e-9 * s->vdd);
		assert_string_equal(ex.region, s->region);
		assert_true(ex.warn == (strcmp(s->region, "ohmic") == 0));
		assert_true(strcmp(ex.region, vds >= x1 - s->th ? "saturation" : "ohmic")
		            == 0);
	}
}

/* A gate held below the threshold: cut off, ID = 0, VGS = VG. */
static void test_cut_off(void **state)
{
	(void)state;
	struct fstage s = fstages[4];
	s.vg = 1.13; /* below Vth = 1.87 */
	struct problem pb;
	fstage_problem(&s, &pb);
	struct solve_options o;
	solve_options_init(&o);
	struct solve_result res;
	assert_int_equal(solve_problem(&pb, &o, &res), SOLVE_OK);
	assert_int_equal(res.n, 1);
	assert_true(res.pts[0].i == 0.0);
	assert_true(fabs(res.pts[0].v - 1.13) < 1e-12);
	struct model_extra ex;
	assert_int_equal(device_secondary(&pb.dev, &pb.src, res.pts[0].v,
	                                  res.pts[0].i, &ex), 0);
	assert_string_equal(ex.region, "cut off");
}

/* Derivatives on the conducting branch; V(I) inverts I(V) there. */
static void test_derivatives(void **state)
{
	(void)state;
	for (size_t k = 0; k < sizeof fstages / sizeof fstages[0]; k++) {
		struct problem pb;
		fstage_problem(&fstages[k], &pb);
		const struct model_type *t = pb.dev.type;
		double lo, hi;
		device_range(&pb.dev, &lo, &hi);
		for (int j = 0; j < 43; j++) {
			double v = lo + (hi - lo) * (j + 0.37) / 43.0;
			if (fabs(v - fstages[k].th) < 1e-3 * (hi - lo))
				continue;
			if (models_check_derivatives(t, pb.dev.p, v) != 0)
				fail_msg("stage %zu: conductance wrong at %.17g V", k, v);
			double i = t->current(pb.dev.p, v);
			if (i > 0.0) {
				double vb;
				assert_int_equal(t->voltage(pb.dev.p, i, &vb), 0);
				assert_true(fabs(vb - v) < 1e-12 * (fabs(v) + 1.0));
				double h = 1e-6 * i, vp, vm;
				assert_int_equal(t->voltage(pb.dev.p, i + h, &vp), 0);
				assert_int_equal(t->voltage(pb.dev.p, i - h, &vm), 0);
				assert_true(models_check_difference(vp, vm, i, h,
				                                    t->resistance(pb.dev.p, i)));
			}
		}
		double vneg;
		assert_int_equal(t->voltage(pb.dev.p, -1e-3, &vneg), -1);
	}
	/* A JFET's pinch-off voltage may be given with either sign; not 0. */
	struct problem a, b;
	fstage_problem(&fstages[0], &a);
	fstage_problem(&fstages[0], &b);
	b.dev.p[FET_VTH] = -a.dev.p[FET_VTH];
	assert_true(device_current(&a.dev, -0.917) == device_current(&b.dev, -0.917));
	char err[128];
	b.dev.p[FET_VTH] = 0.0;
	assert_int_not_equal(device_validate(&b.dev, err, sizeof err), 0);
	assert_non_null(strstr(err, "pinch_off_voltage"));
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_closed_form),
		cmocka_unit_test(test_cut_off),
		cmocka_unit_test(test_derivatives),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
