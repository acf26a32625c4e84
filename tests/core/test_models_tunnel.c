/*
 * test_models_tunnel.c - the tunnel diode: the exact valley, the observed
 * peak near the stated one, exact derivatives, three crossings for a
 * shallow load line and one for a steep one, and the diagnosis at a point
 * on the negative-resistance branch.
 */
#include <math.h>
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

/* A small fixed-seed generator (xorshift64*, Vigna 2016): U[0, 1). */
static double tunnel_uniform(uint64_t *s)
{
	*s ^= *s >> 12;
	*s ^= *s << 25;
	*s ^= *s >> 27;
	return (double)((*s * 0x2545F4914F6CDD1DULL) >> 11) * 0x1p-53;
}

/*
 * The curve of P derived from scratch at each evaluation, the old way: the
 * three currents of the model (Sze & Ng 2007, ch. 8, as in tunnel.c), the
 * valley's R = Iv - It(Vv) - Id(Vv) and S = -(It' + Id')(Vv) in double
 * with the model's own operations (R is a difference of nearly equal
 * currents in some parts, so its rounding is the model's, not the
 * derivation's), then in long double Ix0 from Ix0 (1 - exp(-S Vv / Ix0))
 * = R by bisection to the last bit (the left side rises from 0 to S Vv),
 * A = S / Ix0, and the current.  *SCALE gets the sum of the terms'
 * magnitudes, *COND the exponents' magnitudes (each carries a relative
 * error in A or Vt into the result that many times over).  NaN when the
 * valley cannot be made exact.
 */
static long double tunnel_reference(const double *p, double v,
                                    long double *scale, double *cond)
{
	double vp = p[TUNNEL_VP], ip = p[TUNNEL_IP], vv = p[TUNNEL_VV];
	double is = p[TUNNEL_IS];
	double nvt = p[TUNNEL_N] * diode_thermal_voltage(p[TUNNEL_TEMP]);
	double e = exp(1.0 - vv / vp);
	double r = p[TUNNEL_IV] - ip / vp * vv * e - is * expm1(vv / nvt);
	double sl = -(ip / vp * e * (1.0 - vv / vp) + is / nvt * exp(vv / nvt));
	long double c = (long double)sl * vv;
	*scale = NAN;
	*cond = NAN;
	if (!(r > 0.0) || !(sl > 0.0) || !(r < c))
		return NAN;
	long double lo = r, hi = r;
	while (-hi * expm1l(-c / hi) < r)
		hi *= 2.0L;
	for (int k = 0; k < 200; k++) {
		long double m = 0.5L * (lo + hi);
		if (!(m > lo && m < hi))
			break;
		if (-m * expm1l(-c / m) < r)
			lo = m;
		else
			hi = m;
	}
	long double ix0 = 0.5L * (lo + hi), a = sl / ix0;
	long double it = (long double)ip / vp * v * expl(1.0L - (long double)v / vp);
	long double ix = ix0 * expl(a * ((long double)v - vv));
	long double ix_shift = ix0 * expl(-a * vv);
	long double id = is * expm1l(v / (long double)nvt);
	*scale = fabsl(it) + ix + ix_shift + fabsl(id) + is;
	*cond = 1.0 + (double)(fabsl(a * ((long double)v - vv)) + a * vv) +
	        fabs(v / nvt) + fabs(v / vp);
	return it + (ix - ix_shift) + id;
}

/*
 * The constants derived once per parameter set (prepare, then current_k
 * and conductance_k, as the scan, Newton and the junction solve use
 * them) give the curve of the derivation at every evaluation: bit for
 * bit against current() and conductance(), which derive on every call,
 * and against the derivation from scratch in long double within 1e-14
 * of the terms for each unit of the exponents (an exponent x carries a
 * relative error d into exp(x) as x d, so no double evaluation does
 * better), over random parts (invented: Vp 30 to 200 mV, Ip 0.1 to
 * 20 mA, Vv 4 to 7 Vp, Iv 6 to 20 % of Ip, Is 1e-22 to 1e-10 A, n 1 to
 * 1.4, -40 to 120 degC) and voltages across and beyond each one's range.
 */
static void test_derived_once(void **state)
{
	(void)state;
	uint64_t s = 0x7E11A1D10DEULL;
	size_t parts = 0, points = 0;
	double worst = 0.0;
	for (int trial = 0; trial < 4000 && parts < 500; trial++) {
		struct device d;
		device_init(&d, &model_tunnel);
		d.p[TUNNEL_VP] = 0.03 + 0.17 * tunnel_uniform(&s);
		d.p[TUNNEL_IP] = 1e-4 * pow(200.0, tunnel_uniform(&s));
		d.p[TUNNEL_VV] = d.p[TUNNEL_VP] * (4.0 + 3.0 * tunnel_uniform(&s));
		d.p[TUNNEL_IV] = d.p[TUNNEL_IP] * (0.06 + 0.14 * tunnel_uniform(&s));
		d.p[TUNNEL_IS] = 1e-22 * pow(1e12, tunnel_uniform(&s));
		d.p[TUNNEL_N] = 1.0 + 0.4 * tunnel_uniform(&s);
		d.p[TUNNEL_TEMP] = -40.0 + 160.0 * tunnel_uniform(&s);
		char err[256];
		if (device_validate(&d, err, sizeof err) != 0)
			continue;
		parts++;
		double k[MODEL_MAX_DERIVED];
		assert_int_equal(model_tunnel.prepare(d.p, k), 0);
		double lo, hi;
		device_range(&d, &lo, &hi);
		for (int j = 0; j <= 40; j++) {
			double v = lo - 0.1 + (hi - lo + 0.2) * (j + tunnel_uniform(&s)) / 41.0;
			double once = model_tunnel.current_k(d.p, k, v);
			double each = model_tunnel.current(d.p, v);
			double gonce = model_tunnel.conductance_k(d.p, k, v);
			double geach = model_tunnel.conductance(d.p, v);
			if (memcmp(&once, &each, sizeof once) != 0 ||
			    memcmp(&gonce, &geach, sizeof gonce) != 0)
				fail_msg("part %zu at %.17g V: once %.17g A %.17g S, each "
				         "call %.17g A %.17g S", parts, v, once, gonce, each,
				         geach);
			if (!isfinite(once))
				continue; /* beyond the range, where exp overflows */
			long double scale = 0.0L;
			double cond = 0.0;
			long double ref = tunnel_reference(d.p, v, &scale, &cond);
			double err_rel = (double)(fabsl((long double)once - ref) / scale);
			if (!(err_rel <= 1e-14 * cond))
				fail_msg("part %zu at %.17g V: %.17g A, from scratch %.17Lg A "
				         "(%.3g of the terms, exponents %.3g)", parts, v, once,
				         ref, err_rel, cond);
			worst = fmax(worst, err_rel / cond);
			points++;
		}
	}
	print_message("# %zu parts, %zu voltages: worst %.3g of the terms per "
	              "unit of the exponents\n",
	              parts, points, worst);
	assert_true(parts >= 300);
}

/*
 * A device keeps its constants once derived (device_prepare, which
 * problem_bind runs): device_current and device_conductance then give
 * the model's current() and conductance() bit for bit; a value written
 * straight into the parameters makes the kept constants stale, and they
 * are not used (the curve is the new values' at once); preparing again
 * keeps the new ones.
 */
static void test_constants_kept(void **state)
{
	(void)state;
	for (size_t c = 0; c < sizeof tcases / sizeof tcases[0]; c++) {
		struct problem pb;
		memset(&pb, 0, sizeof pb);
		tunnel_case(&pb.dev, c);
		assert_null(device_constants(&pb.dev));
		problem_bind(&pb);
		const double *k = device_constants(&pb.dev);
		assert_non_null(k);
		double want[MODEL_MAX_DERIVED];
		assert_int_equal(model_tunnel.prepare(pb.dev.p, want), 0);
		assert_memory_equal(k, want, 4 * sizeof want[0]);
		for (int step = 0; step < 3; step++) {
			for (int j = 0; j <= 50; j++) {
				double v = -0.03 + 0.6 * (j + 0.37) / 50.0;
				double i = device_current(&pb.dev, v);
				double g = device_conductance(&pb.dev, v);
				double ie = model_tunnel.current(pb.dev.p, v);
				double ge = model_tunnel.conductance(pb.dev.p, v);
				if (memcmp(&i, &ie, sizeof i) != 0 ||
				    memcmp(&g, &ge, sizeof g) != 0)
					fail_msg("case %zu step %d at %.17g V: %.17g A %.17g S, "
					         "derived at the call %.17g A %.17g S", c, step,
					         v, i, g, ie, ge);
			}
			if (step == 0) {
				/* Written straight in: the kept constants are stale. */
				pb.dev.p[TUNNEL_IV] *= 1.031;
				assert_null(device_constants(&pb.dev));
			} else if (step == 1) {
				problem_bind(&pb);
				assert_non_null(device_constants(&pb.dev));
			}
		}
	}
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_shape),
		cmocka_unit_test(test_three_crossings),
		cmocka_unit_test(test_one_crossing),
		cmocka_unit_test(test_validation),
		cmocka_unit_test(test_derived_once),
		cmocka_unit_test(test_constants_kept),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
