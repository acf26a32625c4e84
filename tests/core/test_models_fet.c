/*
 * test_models_fet.c - JFET and enhancement MOSFET self bias: the operating
 * point in every region (cut-off, triode, saturation) against the closed
 * forms of the Shichman-Hodges law with the bias line and the drain loop
 * (GSL's quadratic solver as the reference), continuity at the region
 * boundaries, an ideal current source, and exact derivatives.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <math.h>
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

/*
 * Stages in every region.  The triode ones include the two that used to
 * print impossible values: an nmos stage with RD = 10 kOhm (VDS -15.5 V,
 * PD -38.75 mW) and a JFET whose drain resistor is too large for its
 * supply.
 */
static const struct fstage fstages[] = {
	{ &model_jfet, 8.7e-3, -2.43, 15.0, 1.2e3, 0.0, 390.0, "saturation" },
	{ &model_jfet, 3.1e-3, -1.17, 9.0, 2.2e3, 0.0, 680.0, "saturation" },
	{ &model_jfet, 1.27e-2, -3.9, 12.0, 820.0, 1.83, 1.5e3, "saturation" },
	{ &model_jfet, 8.7e-3, -2.43, 5.0, 4.7e3, 0.0, 390.0, "triode" },
	{ &model_jfet, 6.3e-3, 1.93, 7.5, 3.3e3, 0.0, 270.0, "triode" },
	{ &model_nmos, 2.4e-3, 1.87, 18.0, 3.3e3, 6.2, 1.0e3, "saturation" },
	{ &model_nmos, 0.137, 2.1, 12.0, 47.0, 4.4, 22.0, "saturation" },
	{ &model_nmos, 5.3e-4, 0.71, 5.0, 10e3, 2.9, 2.7e3, "triode" },
	{ &model_nmos, 2.2e-3, 1.35, 12.0, 10e3, 4.7, 1.5e3, "triode" },
	{ &model_nmos, 3.7e-2, 2.05, 9.0, 560.0, 7.3, 0.0, "triode" },
	{ &model_nmos, 2.4e-3, 1.87, 18.0, 3.3e3, 1.13, 1.0e3, "cut off" },
	{ &model_jfet, 8.7e-3, -2.43, 15.0, 1.2e3, -3.17, 390.0, "cut off" },
};

/* The bias problem of stage S, its device bound to the source. */
static void fstage_problem(const struct fstage *s, struct problem *pb)
{
	memset(pb, 0, sizeof *pb);
	device_init(&pb->dev, s->t);
	pb->dev.p[FET_K] = s->k;
	pb->dev.p[FET_VTH] = s->th;
	pb->dev.p[FET_VDD] = s->vdd;
	pb->dev.p[FET_RD] = s->rd;
	struct source_spec sp;
	char err[128];
	source_spec_thevenin(&sp, s->vg, s->rs);
	assert_int_equal(source_from_spec(&sp, &pb->src, err, sizeof err), 0);
	problem_bind(pb);
}

/* The value labelled KEY in OUT (NaN when absent). */
static double extra(const struct model_extra *out, const char *key)
{
	for (size_t k = 0; k < out->n; k++)
		if (strcmp(out->v[k].key, key) == 0)
			return out->v[k].value;
	return NAN;
}

/* The square law's threshold and k (A/V^2) of stage S. */
static void fstage_law(const struct fstage *s, double *th, double *k)
{
	bool jfet = s->t == &model_jfet;
	*th = jfet ? -fabs(s->th) : s->th;
	*k = jfet ? 2.0 * s->k / (s->th * s->th) : s->k;
}

/*
 * The operating point of stage S in closed form (hand analysis with the
 * Shichman-Hodges law, IEEE JSSC 3(3), 1968, in the form of Sedra & Smith,
 * Microelectronic Circuits, 7th ed., 2015, ch. 5: saturation
 * ID = (k/2)(VGS - th)^2, triode ID = k((VGS - th) VDS - VDS^2/2)), with
 * the bias line VGS = VG - ID RS and the drain loop
 * VDS = VDD - ID (RD + RS).  GSL's gsl_poly_solve_quadratic gives the
 * roots:
 *
 *   saturation: (k/2) RS VGS^2 + (1 - k RS th) VGS + ((k/2) RS th^2 - VG) = 0,
 *               the root above th;
 *   triode:     with R = RD + RS and c = VG - th - RS VDD / R, substituting
 *               ID = (VDD - x)/R in the law gives for x = VDS
 *               k (RS - R/2) x^2 + (k R c + 1) x - VDD = 0,
 *               the root with 0 <= x < VGS - th.
 *
 * Returns the region the closed forms put the point in, with *VGS, *ID
 * and *VDS.
 */
static const char *fstage_closed_form(const struct fstage *s, double *vgs,
                                      double *id, double *vds)
{
	double th, k;
	fstage_law(s, &th, &k);
	double r = s->rd + s->rs;
	if (s->vg <= th) {
		*vgs = s->vg;
		*id = 0.0;
		*vds = s->vdd;
		return "cut off";
	}
	double x0, x1;
	if (s->rs > 0.0) {
		int nr = gsl_poly_solve_quadratic(0.5 * k * s->rs,
		                                  1.0 - k * s->rs * th,
		                                  0.5 * k * s->rs * th * th - s->vg,
		                                  &x0, &x1);
		assert_int_equal(nr, 2);
		assert_true(x0 < th && x1 > th); /* one spurious, one real */
	} else {
		x1 = s->vg;
	}
	*vgs = x1;
	*id = 0.5 * k * (x1 - th) * (x1 - th);
	*vds = s->vdd - *id * r;
	if (*vds >= x1 - th)
		return "saturation";
	double c = s->vg - th - s->rs * s->vdd / r;
	int nr = gsl_poly_solve_quadratic(k * (s->rs - 0.5 * r), k * r * c + 1.0,
	                                  -s->vdd, &x0, &x1);
	double roots[2] = { x0, x1 };
	bool found = false;
	for (int j = 0; j < nr; j++) {
		double x = roots[j];
		double vov = c + s->rs / r * x;
		if (x >= 0.0 && x < vov && !found) {
			*vds = x;
			*id = (s->vdd - x) / r;
			*vgs = s->vg - s->rs * *id;
			found = true;
		}
	}
	assert_true(found);
	return "triode";
}

/*
 * Every stage: the every-root scan, Newton and Brent land on the closed
 * form of its region (ID and VGS, and VDS from the model's extra
 * results); the region reported is the hand analysis's; VDS >= 0 and the
 * drain power ID VDS >= 0 always (the impossible values of old are gone).
 */
static void test_closed_form(void **state)
{
	(void)state;
	for (size_t k = 0; k < sizeof fstages / sizeof fstages[0]; k++) {
		const struct fstage *s = &fstages[k];
		double vgs, id, vds;
		const char *region = fstage_closed_form(s, &vgs, &id, &vds);
		assert_string_equal(region, s->region);

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
			double got_i = res.pts[0].i;
			if (!(fabs(res.pts[0].v - vgs) < 1e-10 * fabs(vgs) + 1e-12) ||
			    !(fabs(got_i - id) <= 1e-9 * id))
				fail_msg("stage %zu method %zu: VGS %.12g ID %.12g, closed form "
				         "%.12g %.12g", k, m, res.pts[0].v, got_i, vgs, id);
			/* The point's power is the drain's, ID VDS, not VGS ID. */
			double pd = res.pts[0].power;
			if (!(pd >= 0.0) || !(fabs(pd - got_i * vds) <= 1e-8 * s->vdd * id +
			                                           1e-18))
				fail_msg("stage %zu: power %.12g, ID VDS = %.12g", k, pd,
				         got_i * vds);
		}
		struct model_extra ex;
		assert_int_equal(device_secondary(&pb.dev, &pb.src, vgs, id, &ex), 0);
		print_message("# stage %zu %s: VGS %.4f V ID %.4f mA VDS %.3f V %s\n", k,
		              s->t->name, vgs, id * 1e3, vds, ex.region);
		double got_vds = extra(&ex, "drain_source_voltage");
		if (!(fabs(got_vds - vds) < 1e-9 * s->vdd))
			fail_msg("stage %zu: VDS %.12g, closed form %.12g", k, got_vds, vds);
		assert_true(got_vds >= 0.0);
		assert_true(extra(&ex, "drain_power") >= 0.0);
		assert_string_equal(ex.region, s->region);
		assert_false(ex.warn);
		/* The source terminal sits at ID RS: no label reuses vs. */
		assert_true(fabs(extra(&ex, "source_terminal_voltage") - id * s->rs) <=
		            1e-12 * (s->vdd + 1.0));
		if (strcmp(s->region, "cut off") == 0)
			assert_non_null(strstr(ex.note, "below"));
	}
}

/*
 * ID and dID/dVGS are continuous where saturation meets the triode
 * region, VDD - (k/2) vov^2 R = vov, i.e. vov_b = (sqrt(1 + 2 k R VDD) - 1)
 * / (k R) (the law's two branches and their slopes agree at VDS = vov:
 * Shichman & Hodges 1968), and at the threshold (ID and its slope 0).
 * Only the curvature changes there, so the gaps shrink with the step h
 * (a jump would stay of the order of g).
 */
static void test_continuity(void **state)
{
	(void)state;
	for (size_t k = 0; k < sizeof fstages / sizeof fstages[0]; k++) {
		const struct fstage *s = &fstages[k];
		struct problem pb;
		fstage_problem(s, &pb);
		double th, kk;
		fstage_law(s, &th, &kk);
		double kr = kk * (s->rd + s->rs);
		double vb = th + (kr > 0.0 ? (sqrt(1.0 + 2.0 * kr * s->vdd) - 1.0) / kr
		                           : s->vdd);
		for (int e = 6; e <= 12; e += 3) {
			double h = pow(10.0, -e) * (fabs(vb) + 1.0);
			double i1 = device_current(&pb.dev, vb - h);
			double i2 = device_current(&pb.dev, vb + h);
			double g1 = device_conductance(&pb.dev, vb - h);
			double g2 = device_conductance(&pb.dev, vb + h);
			double g = kk * (vb - th); /* the slope of both branches there */
			if (!(fabs(i2 - i1) <= 2.01 * h * g * (1.0 + 1e-6) + 1e-15 * i1) ||
			    !(fabs(g2 - g1) <= 1e3 * h * kk * (1.0 + kr) + 1e-12 * g))
				fail_msg("stage %zu: at the saturation edge %.12g V, ID %.17g / "
				         "%.17g, g %.17g / %.17g", k, vb, i1, i2, g1, g2);
			double j1 = device_current(&pb.dev, th - h);
			double j2 = device_current(&pb.dev, th + h);
			assert_true(j1 == 0.0 && j2 >= 0.0 && j2 <= kk * h * h);
		}
	}
}

/*
 * An ideal current source fixes ID and leaves the source terminal's
 * voltage open: VDS, the drain power and the region are not defined, and
 * the point says so (flagged, NaN values; the front ends print "not
 * defined here").
 */
static void test_current_source(void **state)
{
	(void)state;
	struct problem pb;
	fstage_problem(&fstages[5], &pb);
	struct source_spec sp;
	char err[128];
	source_spec_norton(&sp, 1.37e-3, INFINITY);
	assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
	problem_bind(&pb);
	struct solve_options o;
	solve_options_init(&o);
	struct solve_result res;
	assert_int_equal(solve_problem(&pb, &o, &res), SOLVE_OK);
	assert_int_equal(res.n, 1);
	double th, k;
	fstage_law(&fstages[5], &th, &k);
	double want = th + sqrt(2.0 * 1.37e-3 / k); /* the saturation law */
	assert_true(fabs(res.pts[0].v - want) < 1e-10 * want);
	assert_true(isnan(res.pts[0].power));
	struct model_extra ex;
	assert_int_equal(device_secondary(&pb.dev, &pb.src, res.pts[0].v,
	                                  res.pts[0].i, &ex), 0);
	assert_true(isnan(extra(&ex, "drain_source_voltage")));
	assert_true(isnan(extra(&ex, "drain_power")));
	assert_true(ex.warn);
	assert_non_null(strstr(ex.note, "not defined here"));
	/* The drain's own voltage is defined: VDD - ID RD. */
	assert_true(fabs(extra(&ex, "drain_voltage") -
	                 (fstages[5].vdd - 1.37e-3 * fstages[5].rd)) < 1e-12);
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
		cmocka_unit_test(test_continuity),
		cmocka_unit_test(test_current_source),
		cmocka_unit_test(test_derivatives),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
