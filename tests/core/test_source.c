/*
 * test_source.c - Thevenin and Norton sources: the same load line and the
 * same operating point from both forms, ideal sources without dividing by
 * zero, and rejected specifications.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include <cmocka.h>

#include "core_check.h"

#include "core/models/models.h"
#include "core/solve.h"

/* A Thevenin source, high-entropy values. */
struct thevenin_case {
	double vs, rs;
};

static const struct thevenin_case thevenin_cases[] = {
	{ 5.137, 2385.0 }, { -11.83, 47.61 }, { 0.6413, 13.3 },
	{ 23.7, 91270.0 }, { -0.0371, 1.07e6 }, { 48.9, 10.27 },
	{ 1.219e-3, 0.731 }, { -57.3, 336.0 },
};

/* Fill DEV with a diode (series resistance RSD). */
static void diode_device(struct device *dev, double rsd)
{
	device_init(dev, &model_diode);
	dev->p[DIODE_IS] = 4.27e-13;
	dev->p[DIODE_N] = 1.613;
	dev->p[DIODE_RS] = rsd;
	dev->p[DIODE_TEMP] = 31.7;
}

/* Reduce SPEC, which must be valid. */
static void reduce_ok(const struct source_spec *spec, struct source *s)
{
	char err[200] = "";
	if (source_from_spec(spec, s, err, sizeof err) != 0)
		fail_msg("valid source rejected: %s", err);
}

/* Solve PB with the defaults; exactly one point. */
static struct op_point solve_one(const struct problem *pb)
{
	struct solve_options o;
	struct solve_result res;
	solve_options_init(&o);
	if (solve_problem(pb, &o, &res) != SOLVE_OK || res.n != 1)
		fail_msg("solve: status %d, %zu points: %s", res.status, res.n,
		         res.message);
	assert_true(isfinite(res.pts[0].v) && isfinite(res.pts[0].i));
	assert_true(solve_verify(pb, res.pts[0].v, res.pts[0].i, o.tol));
	return res.pts[0];
}

/*
 * Test 8a: a Norton source with is = vs/rs and rp = rs is the Thevenin
 * source's equivalent (Norton's theorem, common practice): the same line
 * (equal currents at any voltage to rounding) and the same operating
 * point through a diode.
 */
static void test_thevenin_norton(void **state)
{
	(void)state;
	for (size_t k = 0; k < sizeof thevenin_cases / sizeof thevenin_cases[0];
	     k++) {
		const struct thevenin_case *c = &thevenin_cases[k];
		struct source_spec th, no;
		struct problem pt, pn;
		source_spec_thevenin(&th, c->vs, c->rs);
		source_spec_norton(&no, c->vs / c->rs, c->rs);
		reduce_ok(&th, &pt.src);
		reduce_ok(&no, &pn.src);
		assert_false(source_is_ideal_voltage(&pt.src));
		assert_false(source_is_ideal_current(&pn.src));
		for (double v = -61.3; v < 62.0; v += 7.77) {
			double it = source_line_current(&pt.src, v);
			double in = source_line_current(&pn.src, v);
			double scale = (fabs(v) + fabs(c->vs)) / c->rs;
			if (!(fabs(it - in) <= 4e-16 * scale))
				fail_msg("case %zu at %g V: %.17g vs %.17g", k, v, it, in);
			/* The point on the line has zero residual in both forms. */
			assert_true(fabs(source_line_residual(&pt.src, v, it)) <=
			            4e-16 * (fabs(v) + fabs(c->vs)));
			assert_true(fabs(source_line_voltage(&pn.src, in) - v) <=
			            8e-16 * (fabs(v) + fabs(c->vs)));
		}
		diode_device(&pt.dev, 0.173);
		diode_device(&pn.dev, 0.173);
		struct op_point a = solve_one(&pt), b = solve_one(&pn);
		if (!(check_rel(a.i, b.i, 4.27e-13) <= 1e-13) ||
		    !(check_rel(a.v, b.v, 1e-300) <= 1e-13))
			fail_msg("case %zu: Thevenin (%.17g V, %.17g A) vs Norton "
			         "(%.17g V, %.17g A)", k, a.v, a.i, b.v, b.i);
	}
}

/*
 * Test 8b: an ideal voltage source (RS = 0) holds the device at VS: with
 * no diode series resistance I = Is (exp(VS / nVt) - 1) exactly (Shockley
 * 1949); the line's current is NaN, not a division by zero.
 */
static void test_ideal_voltage(void **state)
{
	(void)state;
	static const double vss[] = { 0.6137, -3.71, 0.4821, 1.1e-4, 0.7309 };
	for (size_t k = 0; k < sizeof vss / sizeof vss[0]; k++) {
		struct source_spec sp;
		struct problem pb;
		source_spec_thevenin(&sp, vss[k], 0.0);
		reduce_ok(&sp, &pb.src);
		assert_true(source_is_ideal_voltage(&pb.src));
		assert_true(isnan(source_line_current(&pb.src, 0.3)));
		diode_device(&pb.dev, 0.0);
		struct op_point p = solve_one(&pb);
		double nvt = check_nvt(1.613, 31.7);
		long double want = 4.27e-13L * expm1l(vss[k] / (long double)nvt);
		assert_true(p.v == vss[k]);
		if (!(check_rel(p.i, want, 1e-300) <= 1e-14))
			fail_msg("VS %g: I %.17g, want %.17Lg", vss[k], p.i, want);
	}
}

/*
 * Test 8c: an ideal current source (rp = INFINITY) through a diode sets
 * V = nVt ln(1 + I / Is) + Rs I (the Shockley equation solved for V) for
 * any I > -Is; below -Is there is no point and no crash.
 */
static void test_ideal_current(void **state)
{
	(void)state;
	static const double iss[] = { 2.385e-3, 1.7e-9, -3.1e-13, 0.1137, 4.4e-7 };
	static const double rsds[] = { 0.0, 0.271, 1.93 };
	for (size_t r = 0; r < 3; r++)
		for (size_t k = 0; k < sizeof iss / sizeof iss[0]; k++) {
			struct source_spec sp;
			struct problem pb;
			source_spec_norton(&sp, iss[k], INFINITY);
			reduce_ok(&sp, &pb.src);
			assert_true(source_is_ideal_current(&pb.src));
			assert_true(isnan(source_line_voltage(&pb.src, 1e-3)));
			assert_true(source_line_current(&pb.src, 0.37) == iss[k]);
			diode_device(&pb.dev, rsds[r]);
			struct op_point p = solve_one(&pb);
			double nvt = check_nvt(1.613, 31.7);
			long double want = nvt * log1pl(iss[k] / 4.27e-13L) +
			                   rsds[r] * (long double)iss[k];
			assert_true(p.i == iss[k]);
			if (!(check_rel(p.v, want, 1e-300) <= 1e-14))
				fail_msg("I %g Rs %g: V %.17g, want %.17Lg", iss[k], rsds[r],
				         p.v, want);
		}
	/* More reverse current than the diode can carry: no point. */
	struct source_spec sp;
	struct problem pb;
	struct solve_options o;
	struct solve_result res;
	source_spec_norton(&sp, -5.3e-13, INFINITY);
	reduce_ok(&sp, &pb.src);
	diode_device(&pb.dev, 0.0);
	solve_options_init(&o);
	assert_int_not_equal(solve_problem(&pb, &o, &res), SOLVE_OK);
	assert_int_equal(res.n, 0);
	assert_true(res.message[0] != '\0');
}

/* A source specification that must be rejected, and the name it must give. */
struct bad_spec {
	enum source_form form;
	double a, b;      /* vs, rs or is, rp */
	const char *name;
};

static const struct bad_spec bad_specs[] = {
	{ SOURCE_THEVENIN, NAN, 100.0, "vs" },
	{ SOURCE_THEVENIN, INFINITY, 100.0, "vs" },
	{ SOURCE_THEVENIN, -INFINITY, 100.0, "vs" },
	{ SOURCE_THEVENIN, 5.1, -2.2, "rs" },
	{ SOURCE_THEVENIN, 5.1, NAN, "rs" },
	{ SOURCE_THEVENIN, 5.1, INFINITY, "rs" },
	{ SOURCE_NORTON, NAN, 470.0, "is" },
	{ SOURCE_NORTON, INFINITY, 470.0, "is" },
	{ SOURCE_NORTON, 1.3e-3, 0.0, "rp" },
	{ SOURCE_NORTON, 1.3e-3, -470.0, "rp" },
	{ SOURCE_NORTON, 1.3e-3, NAN, "rp" },
	{ SOURCE_NORTON, 3.7e200, 2.9e200, "rp" },   /* is * rp overflows */
};

/* Test 8d: bad specifications are rejected with a message naming them. */
static void test_bad_specs(void **state)
{
	(void)state;
	for (size_t k = 0; k < sizeof bad_specs / sizeof bad_specs[0]; k++) {
		const struct bad_spec *b = &bad_specs[k];
		struct source_spec sp;
		struct source s;
		char err[200] = "";
		if (b->form == SOURCE_THEVENIN)
			source_spec_thevenin(&sp, b->a, b->b);
		else
			source_spec_norton(&sp, b->a, b->b);
		if (source_from_spec(&sp, &s, err, sizeof err) == 0)
			fail_msg("bad spec %zu (%g, %g) accepted", k, b->a, b->b);
		if (strstr(err, b->name) == NULL)
			fail_msg("bad spec %zu: message does not name %s: %s", k, b->name,
			         err);
	}
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_thevenin_norton),
		cmocka_unit_test(test_ideal_voltage),
		cmocka_unit_test(test_ideal_current),
		cmocka_unit_test(test_bad_specs),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
