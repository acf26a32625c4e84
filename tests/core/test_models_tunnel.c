/*
 * test_models_tunnel.c - the tunnel diode: the exact valley, the observed
 * peak near the stated one, exact derivatives, three crossings for a
 * shallow load line and one for a steep one, and the diagnosis at a point
 * on the negative-resistance branch.
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

/* Vp, Ip, Vv, Iv, Is, n, T (invented parts; the first is the default). */
static const double tcases[][TUNNEL_NPARAMS] = {
	{ 0.065, 1e-3, 0.35, 1.2e-4, 3.5e-12, 1.0, 25.0 },
	{ 0.0713, 4.7e-3, 0.382, 5.9e-4, 1.9e-11, 1.12, 31.4 },
	{ 0.183, 2.2e-3, 0.96, 2.3e-4, 9.3e-22, 1.03, 25.0 }, /* GaAs-like */
	{ 0.052, 1.03e-2, 0.317, 8.8e-4, 7.7e-10, 1.31, 48.9 },
};

/* Fill D with case K. */
static void tunnel_case(struct device *d, size_t k)
{
	device_init(d, &model_tunnel);
	memcpy(d->p, tcases[k], sizeof tcases[k]);
}

/* The valley is exact; the observed peak is within 5 % of the stated one
 * in current and 15 % in voltage; derivatives match differences. */
static void test_shape(void **state)
{
	(void)state;
	for (size_t k = 0; k < sizeof tcases / sizeof tcases[0]; k++) {
		struct device d;
		char err[256];
		tunnel_case(&d, k);
		assert_int_equal(device_validate(&d, err, sizeof err), 0);
		double vv = tcases[k][TUNNEL_VV], iv = tcases[k][TUNNEL_IV];
		assert_true(fabs(device_current(&d, vv) / iv - 1.0) < 1e-12);
		assert_true(fabs(device_conductance(&d, vv)) <
		            1e-12 * tcases[k][TUNNEL_IP] / vv);
		assert_true(device_current(&d, 0.0) == 0.0);
		double vpk, ipk, vvl, ivl;
		assert_int_equal(tunnel_extrema(d.p, &vpk, &ipk, &vvl, &ivl), 0);
		print_message("# case %zu: peak %.4f V %.4g A (stated %.4f V %.4g A)\n",
		              k, vpk, ipk, tcases[k][TUNNEL_VP], tcases[k][TUNNEL_IP]);
		assert_true(fabs(ipk / tcases[k][TUNNEL_IP] - 1.0) < 0.05);
		assert_true(fabs(vpk / tcases[k][TUNNEL_VP] - 1.0) < 0.15);
		/* N shape: rising, falling between the extrema, rising again. */
		assert_true(device_conductance(&d, 0.5 * vpk) > 0.0);
		assert_true(device_conductance(&d, 0.5 * (vpk + vv)) < 0.0);
		assert_true(device_conductance(&d, 1.1 * vv) > 0.0);
		double lo, hi;
		device_range(&d, &lo, &hi);
		for (int j = 0; j < 53; j++) {
			double v = lo + (hi - lo) * (j + 0.41) / 53.0;
			if (models_check_derivatives(d.type, d.p, v) != 0)
				fail_msg("case %zu: conductance wrong at %.17g V", k, v);
		}
	}
}

/* Solve the default part against a Thevenin source (VS, RS). */
static void tunnel_solve(double vs, double rs, struct problem *pb,
                         struct solve_result *res)
{
	struct source_spec sp;
	char err[128];
	tunnel_case(&pb->dev, 0);
	source_spec_thevenin(&sp, vs, rs);
	assert_int_equal(source_from_spec(&sp, &pb->src, err, sizeof err), 0);
	struct solve_options o;
	solve_options_init(&o);
	assert_int_equal(solve_problem(pb, &o, res), SOLVE_OK);
}

/*
 * A 1.03 kohm line through the middle of the falling branch is shallower
 * than the branch (|r_d| of a few hundred ohm), so it crosses three times:
 * tunnel side, falling branch, diffusion side (bistable biasing, Sze & Ng
 * 2007, ch. 8).  Every point is verified on both curves; the middle one has
 * r_d < 0, the outer ones r_d > 0.
 */
static void test_three_crossings(void **state)
{
	(void)state;
	struct problem pb;
	struct solve_result res;
	tunnel_solve(0.2 + 0.55e-3 * 1030.0, 1030.0, &pb, &res);
	assert_int_equal(res.n, 3);
	for (size_t k = 0; k < 3; k++) {
		print_message("# point %zu: %.5f V %.5g A r_d %.4g ohm\n", k,
		              res.pts[k].v, res.pts[k].i, res.pts[k].rd);
		assert_true(solve_verify(&pb, res.pts[k].v, res.pts[k].i, 1e-10));
	}
	assert_true(res.pts[0].v < 0.065 && res.pts[0].rd > 0.0);
	assert_true(res.pts[1].v > 0.065 && res.pts[1].v < 0.35 &&
	            res.pts[1].rd < 0.0);
	assert_true(res.pts[2].v > 0.35 && res.pts[2].rd > 0.0);

	/*
	 * At the middle point: the default order (voltage from the device)
	 * needs V(I), which a folded curve lacks; voltage from the line has
	 * g' = -r/r_d = r/|r_d| > 1, a staircase away from the point.  Both
	 * messages carry the negative-resistance caution.
	 */
	struct diagnosis d;
	diagnose_at(&pb, ORDER_VOLTAGE_FROM_DEVICE, res.pts[1].v, 1e-12, 1.0, &d);
	print_message("# device order: %s / %s\n", d.verdict, d.advice);
	assert_int_equal(d.shape, SHAPE_UNDEFINED);
	assert_non_null(strstr(d.advice, "voltage-from-line"));
	assert_non_null(strstr(d.advice, "r_d < 0"));
	diagnose_at(&pb, ORDER_VOLTAGE_FROM_LINE, res.pts[1].v, 1e-12, 1.0, &d);
	print_message("# line order: %s / %s\n", d.verdict, d.advice);
	assert_int_equal(d.shape, SHAPE_STAIRCASE_OUT);
	assert_true(d.gprime > 1.0);
	assert_true(fabs(d.gprime - 1030.0 / -res.pts[1].rd) < 1e-9 * d.gprime);
	assert_non_null(strstr(d.advice, "cannot reach"));
	assert_non_null(strstr(d.advice, "unstable"));

	/* Plain projection from right beside the middle point leaves it. */
	struct stepper *st = stepper_create();
	assert_non_null(st);
	struct solve_options o;
	solve_options_init(&o);
	o.method = METHOD_PROJECTION;
	o.order = ORDER_VOLTAGE_FROM_LINE;
	o.start_v = res.pts[1].v + 1e-6;
	assert_int_equal(stepper_init(st, &pb, &o), 0);
	enum step_status ss = stepper_run(st);
	const struct trace_row *last = stepper_last(st);
	print_message("# projection from the middle: %s at %.5f V\n",
	              step_status_name(ss), last->v);
	assert_true(ss != STEP_CONVERGED ||
	            fabs(last->v - res.pts[1].v) > 1e-3);
	stepper_destroy(st);
}

/*
 * A 47 ohm line is steeper than the falling branch: one crossing, on it;
 * there voltage-from-line contracts (g' = r/|r_d| < 1) and still carries
 * the caution.  A line far to the right crosses once, on the diffusion
 * branch.
 */
static void test_one_crossing(void **state)
{
	(void)state;
	struct problem pb;
	struct solve_result res;
	tunnel_solve(0.2 + 0.55e-3 * 47.0, 47.0, &pb, &res);
	assert_int_equal(res.n, 1);
	assert_true(res.pts[0].rd < 0.0);
	assert_true(solve_verify(&pb, res.pts[0].v, res.pts[0].i, 1e-10));
	struct diagnosis d;
	diagnose_at(&pb, ORDER_VOLTAGE_FROM_LINE, res.pts[0].v, 1e-12, 1.0, &d);
	assert_int_equal(d.shape, SHAPE_STAIRCASE_IN);
	assert_null(strstr(d.advice, "cannot reach"));
	assert_non_null(strstr(d.advice, "unstable"));

	tunnel_solve(2.37, 470.0, &pb, &res);
	assert_int_equal(res.n, 1);
	assert_true(res.pts[0].v > 0.35 && res.pts[0].rd > 0.0);
}

/* Peak above valley, and a valley the other currents do not swamp. */
static void test_validation(void **state)
{
	(void)state;
	struct device d;
	char err[256];
	tunnel_case(&d, 0);
	d.p[TUNNEL_VV] = 0.05;
	assert_int_not_equal(device_validate(&d, err, sizeof err), 0);
	assert_non_null(strstr(err, "valley_voltage"));
	tunnel_case(&d, 0);
	d.p[TUNNEL_IV] = 1.3e-3;
	assert_int_not_equal(device_validate(&d, err, sizeof err), 0);
	assert_non_null(strstr(err, "valley_current"));
	tunnel_case(&d, 0);
	d.p[TUNNEL_IS] = 1e-7; /* diffusion current swamps the valley */
	assert_int_not_equal(device_validate(&d, err, sizeof err), 0);
	assert_non_null(strstr(err, "valley_current"));
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_shape),
		cmocka_unit_test(test_three_crossings),
		cmocka_unit_test(test_one_crossing),
		cmocka_unit_test(test_validation),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
