/*
 * test_solve.c - operating points from solve_problem against independent
 * references: the exact Lambert W solution of a diode behind a resistor,
 * a GSL bracketed root for the power law, the every-root scan on an
 * N-shaped test device, and bad input.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include <cmocka.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_roots.h>

#define CORE_CHECK_GSL
#include "core_check.h"

#include "core/diagnose.h"
#include "core/models/models.h"
#include "core/solve.h"

/* Number of random diode circuits (test 1) and power-law circuits. */
#define N_DIODE 1500
#define N_POWER 1200

/* Build a diode circuit C into PB (the spec is valid by construction). */
static void diode_problem(struct problem *pb,
                          const struct check_diode_circuit *c)
{
	struct source_spec sp;
	char err[200];
	source_spec_thevenin(&sp, c->vs, c->rs);
	assert_int_equal(source_from_spec(&sp, &pb->src, err, sizeof err), 0);
	device_init(&pb->dev, &model_diode);
	pb->dev.p[DIODE_IS] = c->is;
	pb->dev.p[DIODE_N] = c->n;
	pb->dev.p[DIODE_RS] = c->rsd;
	pb->dev.p[DIODE_TEMP] = c->temp;
}

/* Check every point of RES is finite and passes solve_verify. */
static void check_points_verified(const struct problem *pb,
                                  const struct solve_result *res, double tol)
{
	for (size_t k = 0; k < res->n; k++) {
		const struct op_point *p = &res->pts[k];
		if (!isfinite(p->v) || !isfinite(p->i))
			fail_msg("point %zu is not finite: V=%g I=%g", k, p->v, p->i);
		if (!p->tangent && !solve_verify(pb, p->v, p->i, tol))
			fail_msg("point %zu (V=%.17g, I=%.17g) fails solve_verify", k,
			         p->v, p->i);
	}
}

/* Error statistics of one method over the random circuits. */
struct method_errors {
	const char *name;
	double bound;      /* relative bound on I (and on V, see below) */
	double max_i, max_v;
	unsigned solved, tried;
};

/*
 * Solve circuit PB with O and compare with the exact I and V; records the
 * errors in ME and fails beyond its bound.  Returns the solve status.
 */
static enum solve_status diode_check_method(const struct problem *pb,
                                            const struct solve_options *o,
                                            long double iref, long double vref,
                                            double is, struct method_errors *me,
                                            int k)
{
	struct solve_result res;
	enum solve_status st = solve_problem(pb, o, &res);
	me->tried++;
	if (st != SOLVE_OK) {
		assert_int_equal(res.n, 0);
		assert_true(res.message[0] != '\0');
		return st;
	}
	assert_int_equal(res.n, 1);
	check_points_verified(pb, &res, o->tol);
	me->solved++;
	/* Relative on I with an absolute floor of 1e-12 Is for I near 0. */
	double ei = check_rel(res.pts[0].i, iref, is);
	/* V relative to |V| (V from the line is exact to long double). */
	double ev = check_rel(res.pts[0].v, vref, 1e-300);
	if (ei > me->max_i)
		me->max_i = ei;
	if (ev > me->max_v)
		me->max_v = ev;
	if (!(ei <= me->bound) || !(ev <= me->bound))
		fail_msg("%s, circuit %d: I=%.17g (exact %.17Lg, rel %.3g), "
		         "V=%.17g (exact %.17Lg, rel %.3g), bound %.3g",
		         me->name, k, res.pts[0].i, iref, ei, res.pts[0].v, vref, ev,
		         me->bound);
	return st;
}

/*
 * Test 1: random diode circuits against the exact solution of Banwell &
 * Jayakumar (Electronics Letters 36(4), 2000) with W0 from GSL, and its
 * Wright omega form (Corless & Jeffrey 2002) where exp overflows.
 *   auto and newton: relative 1e-12 on I (floor 1e-12 Is) and on V.
 *   brent: 1e-11 - it stops when the bracket is below tol * |vj|, and
 *     the junction current amplifies that by up to vj / nVt (about 40).
 *   projections, in the order with |g'(x*)| < 0.9: 1e-12 * max(1,
 *     |g'| / (1 - |g'|)), the a-posteriori error bound of a contraction
 *     whose last move was below the tolerance (Burden & Faires, Numerical
 *     Analysis, 9th ed., 2010, thm 2.3 corollary); started at 0 V they
 *     may leave the device curve on the first step, and must converge in
 *     at least 99 % of the circuits.
 */
static void test_diode_exact(void **state)
{
	(void)state;
	struct check_rng rng = { 0x2385a7c1e9u };
	struct method_errors me[4] = {
		{ .name = "auto", .bound = 1e-12 },
		{ .name = "newton", .bound = 1e-12 },
		{ .name = "brent", .bound = 1e-11 },
		{ .name = "projection", .bound = 1e-12 },
	};
	const enum solve_method methods[3] = { METHOD_AUTO, METHOD_NEWTON,
	                                       METHOD_BRENT };
	for (int k = 0; k < N_DIODE; k++) {
		struct check_diode_circuit c;
		struct problem pb;
		check_diode_circuit_draw(&rng, &c);
		diode_problem(&pb, &c);
		double nvt = check_nvt(c.n, c.temp);
		long double iref = check_diode_exact_current(
			c.is, nvt, (long double)c.rs + c.rsd, c.vs);
		long double vref = c.vs - c.rs * iref;
		struct solve_options o;
		for (int m = 0; m < 3; m++) {
			solve_options_init(&o);
			o.method = methods[m];
			enum solve_status st =
				diode_check_method(&pb, &o, iref, vref, c.is, &me[m], k);
			if (st != SOLVE_OK)
				fail_msg("%s failed on circuit %d: %s", me[m].name, k,
				         "no point");
		}
		/* Projections in the order that contracts at the point. */
		struct diagnosis d;
		diagnose_at(&pb, ORDER_VOLTAGE_FROM_LINE, (double)vref, 1e-12, 1.0, &d);
		enum projection_order ord = ORDER_VOLTAGE_FROM_LINE;
		double g = fabs(d.gprime);
		if (!(g < 0.9)) {
			ord = ORDER_VOLTAGE_FROM_DEVICE;
			g = fabs(d.gprime_other);
		}
		if (!(g < 0.9))
			continue;
		solve_options_init(&o);
		o.method = METHOD_PROJECTION;
		o.order = ord;
		o.max_steps = 20000;
		me[3].bound = 1e-12 * fmax(1.0, g / (1.0 - g));
		enum solve_status st =
			diode_check_method(&pb, &o, iref, vref, c.is, &me[3], k);
		if (st != SOLVE_OK)
			print_message("# projection (%s) circuit %d did not converge\n",
			              projection_order_name(ord), k);
	}
	for (int m = 0; m < 4; m++)
		print_message("# %-10s solved %u/%u, max rel error I %.3g, V %.3g\n",
		              me[m].name, me[m].solved, me[m].tried, me[m].max_i,
		              me[m].max_v);
	assert_true(me[3].tried >= N_DIODE / 2);
	assert_true(me[3].solved * 100 >= me[3].tried * 99);
}

/*
 * The reference itself: in the range where both apply, GSL's W0 of the
 * argument and the Wright omega of its logarithm agree to 4e-16 (both
 * from the definitions in Corless et al., Adv. Comput. Math. 5, 1996).
 */
static void test_reference_agrees(void **state)
{
	(void)state;
	static const double xs[] = { 1.0376, 2.385, 17.93, 61.207, 233.61, 698.4 };
	for (size_t k = 0; k < sizeof xs / sizeof xs[0]; k++) {
		double w0 = gsl_sf_lambert_W0(exp(xs[k]));
		long double wo = check_wright_omega(xs[k]);
		double rel = check_rel(w0, wo, 1e-300);
		if (!(rel <= 4e-16 * xs[k]))
			fail_msg("x=%g: W0(e^x)=%.17g omega=%.17Lg rel %.3g", xs[k], w0,
			         wo, rel);
	}
}

/* An independent power law: Iref sign(V) |V / Vref|^alpha. */
struct power_circuit {
	double vref, iref, alpha, vs, rs;
};

/* The power-law current at V. */
static double power_current(const struct power_circuit *c, double v)
{
	double i = c->iref * pow(fabs(v) / c->vref, c->alpha);
	return v < 0.0 ? -i : i;
}

/* The load-line residual V + RS I(V) - VS of the power-law circuit. */
static double power_residual(double v, void *params)
{
	const struct power_circuit *c = params;
	return v + c->rs * power_current(c, v) - c->vs;
}

/*
 * Test 3: power law against GSL's Brent-Dekker bracketing solver
 * (gsl_root_fsolver_brent) on the same residual over [min(0,VS),
 * max(0,VS)], converged to 1e-15 relative; solve_problem (auto) agrees to
 * 1e-10 relative on V and I.
 */
static void test_power_law_gsl(void **state)
{
	(void)state;
	struct check_rng rng = { 0x40b17e5u };
	gsl_root_fsolver *fs = gsl_root_fsolver_alloc(gsl_root_fsolver_brent);
	assert_non_null(fs);
	double max_v = 0.0, max_i = 0.0;
	for (int k = 0; k < N_POWER; k++) {
		struct power_circuit c;
		c.vref = check_rng_log_uniform(&rng, 0.05, 400.0);
		c.iref = check_rng_log_uniform(&rng, 1e-6, 3.0);
		c.alpha = check_rng_uniform(&rng, 0.3, 40.0);
		c.vs = check_rng_uniform(&rng, -60.0, 60.0);
		c.rs = check_rng_log_uniform(&rng, 1.0, 1e5);
		gsl_function fn = { power_residual, &c };
		double lo = fmin(0.0, c.vs), hi = fmax(0.0, c.vs);
		assert_int_equal(gsl_root_fsolver_set(fs, &fn, lo, hi), GSL_SUCCESS);
		int status = GSL_CONTINUE;
		for (int it = 0; it < 500 && status == GSL_CONTINUE; it++) {
			gsl_root_fsolver_iterate(fs);
			status = gsl_root_test_interval(gsl_root_fsolver_x_lower(fs),
			                                gsl_root_fsolver_x_upper(fs),
			                                1e-300, 1e-15);
		}
		assert_int_equal(status, GSL_SUCCESS);
		double vref = gsl_root_fsolver_root(fs);
		/* The current from the better-conditioned curve at the root. */
		double g = c.alpha * c.iref / c.vref *
		           pow(fabs(vref) / c.vref, c.alpha - 1.0);
		double iref = c.rs * g > 1.0 ? (c.vs - vref) / c.rs
		                             : power_current(&c, vref);

		struct problem pb;
		struct source_spec sp;
		char err[200];
		source_spec_thevenin(&sp, c.vs, c.rs);
		assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
		device_init(&pb.dev, &model_power_law);
		pb.dev.p[POWER_LAW_VREF] = c.vref;
		pb.dev.p[POWER_LAW_IREF] = c.iref;
		pb.dev.p[POWER_LAW_ALPHA] = c.alpha;
		struct solve_options o;
		solve_options_init(&o);
		struct solve_result res;
		if (solve_problem(&pb, &o, &res) != SOLVE_OK || res.n != 1)
			fail_msg("power law %d (Vref %g Iref %g alpha %g VS %g RS %g): "
			         "status %d, %zu points: %s", k, c.vref, c.iref, c.alpha,
			         c.vs, c.rs, res.status, res.n, res.message);
		check_points_verified(&pb, &res, o.tol);
		double ev = check_rel(res.pts[0].v, vref, 1e-300);
		double ei = check_rel(res.pts[0].i, iref, 1e-300);
		max_v = fmax(max_v, ev);
		max_i = fmax(max_i, ei);
		if (!(ev <= 1e-10) || !(ei <= 1e-10))
			fail_msg("power law %d (Vref %g Iref %g alpha %g VS %g RS %g): "
			         "V %.17g vs %.17g (%.3g), I %.17g vs %.17g (%.3g)", k,
			         c.vref, c.iref, c.alpha, c.vs, c.rs, res.pts[0].v, vref,
			         ev, res.pts[0].i, iref, ei);
	}
	print_message("# power law: max rel error V %.3g, I %.3g\n", max_v, max_i);
	gsl_root_fsolver_free(fs);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_reference_agrees),
		cmocka_unit_test(test_diode_exact),
		cmocka_unit_test(test_power_law_gsl),
	};
	gsl_set_error_handler_off();
	return cmocka_run_group_tests(tests, NULL, NULL);
}
