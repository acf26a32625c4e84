/*
 * test_solve.c - operating points from solve_problem against independent
 * references: the exact Lambert W solution of a diode behind a resistor,
 * a GSL bracketed root for the power law, the every-root scan on an
 * N-shaped test device, and bad input.
 */
#include <float.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include <cmocka.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_poly.h>
#include <gsl/gsl_roots.h>

#define CORE_CHECK_GSL
#include "core_check.h"

#include "core/diagnose.h"
#include "core/models/models.h"
#include "core/paramref.h"
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
	/*
	 * r_d = nVt / (Is exp(vj / nVt)) + Rs, the Shockley slope at the
	 * exact junction voltage (no Is + I cancellation in reverse bias);
	 * relative 1e-9, as r_d carries the error of V amplified by V/nVt.
	 */
	const double *p = pb->dev.p;
	long double nvt = check_nvt(p[DIODE_N], p[DIODE_TEMP]);
	long double vj = vref - p[DIODE_RS] * iref;
	long double rd = nvt / (is * expl(vj / nvt)) + p[DIODE_RS];
	double er = rd > DBL_MAX ? (res.pts[0].rd == INFINITY ? 0.0 : INFINITY)
	                         : check_rel(res.pts[0].rd, rd, 1e-300);
	if (!(er <= 1e-9))
		fail_msg("%s, circuit %d: r_d %.17g, exact %.17Lg (rel %.3g)", me->name,
		         k, res.pts[0].rd, rd, er);
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
		/* A device checked once gives the same answer, bit for bit. */
		struct solve_result r1, r2;
		solve_options_init(&o);
		assert_false(pb.dev.checked);
		assert_int_equal(solve_problem(&pb, &o, &r1), SOLVE_OK);
		struct problem pc = pb;
		assert_int_equal(device_check(&pc.dev, NULL, 0), 0);
		assert_true(pc.dev.checked);
		assert_int_equal(solve_problem(&pc, &o, &r2), SOLVE_OK);
		assert_int_equal(r1.n, r2.n);
		assert_true(r1.pts[0].v == r2.pts[0].v && r1.pts[0].i == r2.pts[0].i);
		for (int m = 0; m < 3; m++) {
			solve_options_init(&o);
			o.method = methods[m];
			enum solve_status st =
				diode_check_method(&pb, &o, iref, vref, c.is, &me[m], k);
			if (st != SOLVE_OK)
				fail_msg("%s did not solve circuit %d (status %d)", me[m].name,
				         k, st);
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
 * argument and the Wright omega of its logarithm agree to 4e-16, a few
 * ulp (both from the definitions in Corless et al., Adv. Comput. Math. 5,
 * 1996; seen: below 7e-17).
 */
static void test_reference_agrees(void **state)
{
	(void)state;
	static const double xs[] = { 1.0376, 2.385, 17.93, 61.207, 233.61, 698.4 };
	for (size_t k = 0; k < sizeof xs / sizeof xs[0]; k++) {
		double w0 = gsl_sf_lambert_W0(exp(xs[k]));
		long double wo = check_wright_omega(xs[k]);
		double rel = check_rel(w0, wo, 1e-300);
		if (!(rel <= 4e-16))
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

/*
 * An N-shaped test device: I = k (V^3 - 3 p V^2 + 3 q V), with
 * 0.75 p^2 < q < p^2 so the current is positive for V > 0 and the slope
 * 3k (V^2 - 2 p V + q) is negative between p -+ sqrt(p^2 - q) (a
 * negative-resistance region, as in a tunnel diode's curve).
 */
enum { NSHAPE_K, NSHAPE_P, NSHAPE_Q, NSHAPE_NPARAMS };

/* Current of the N-shaped device. */
static double nshape_current(const double *p, double v)
{
	return p[NSHAPE_K] * (v * v * v - 3.0 * p[NSHAPE_P] * v * v +
	                      3.0 * p[NSHAPE_Q] * v);
}

/* Its slope. */
static double nshape_conductance(const double *p, double v)
{
	return 3.0 * p[NSHAPE_K] * (v * v - 2.0 * p[NSHAPE_P] * v + p[NSHAPE_Q]);
}

/* Its plotting and scanning range. */
static void nshape_range(const double *p, double *vmin, double *vmax)
{
	*vmin = -0.5 * p[NSHAPE_P];
	*vmax = 3.0 * p[NSHAPE_P];
}

static const struct model_param nshape_params[NSHAPE_NPARAMS] = {
	[NSHAPE_K] = { "cubic_gain", "k", QTY_NUMBER, 0.0123, 0.0, 1e3, true,
	               false, true, "A/V^3" },
	[NSHAPE_P] = { "inflection", "p", QTY_VOLTAGE, 0.3821, 0.0, 1e3, true,
	               false, false, "voltage of the inflection" },
	[NSHAPE_Q] = { "valley_shape", "q", QTY_NUMBER, 0.1287, 0.0, 1e6, true,
	               false, false, "V^2" },
};

static const struct model_type nshape_model = {
	.name = "test-n-shape",
	.summary = "cubic with a negative-resistance region (test only)",
	.params = nshape_params,
	.nparams = NSHAPE_NPARAMS,
	.monotone = false,
	.current = nshape_current,
	.conductance = nshape_conductance,
	.range = nshape_range,
};

/* The N-shaped device behind a Thevenin source VS, RS. */
static void nshape_problem(struct problem *pb, double vs, double rs)
{
	struct source_spec sp;
	char err[200];
	source_spec_thevenin(&sp, vs, rs);
	assert_int_equal(source_from_spec(&sp, &pb->src, err, sizeof err), 0);
	device_init(&pb->dev, &nshape_model);
}

/*
 * The real roots of V + RS I(V) - VS for the N-shaped device from GSL's
 * cubic solver (gsl_poly_solve_cubic), in increasing order.
 */
static int nshape_roots(double vs, double rs, double *x)
{
	const double k = 0.0123, p = 0.3821, q = 0.1287;
	double a = rs * k;
	return gsl_poly_solve_cubic(-3.0 * p, (1.0 + 3.0 * rs * k * q) / a,
	                            -vs / a, &x[0], &x[1], &x[2]);
}

/*
 * Test 9: a load line through the negative-resistance region (r larger
 * than the steepest negative resistance) crosses three times; a steep one
 * (r = 470 ohm, F' > 0 everywhere) once; a line tangent to the curve in
 * the negative-resistance region gives a tangent point there and one
 * crossing.  Crossings agree with GSL's cubic roots to 1e-9; the tangent
 * (a double root, fixed only to about sqrt(eps)) to 1e-6.
 */
static void test_every_root_scan(void **state)
{
	(void)state;
	const double k = 0.0123, p = 0.3821, q = 0.1287;
	const double par[3] = { k, p, q };
	struct problem pb;
	struct solve_options o;
	struct solve_result res;
	struct bracket br[SOLVE_MAX_POINTS];
	double x[3];
	solve_options_init(&o);

	/* Through the inflection, r = 4700 ohm: three crossings. */
	double vs3 = p + 4700.0 * nshape_current(par, p);
	nshape_problem(&pb, vs3, 4700.0);
	assert_int_equal(stepper_scan(&pb, br, SOLVE_MAX_POINTS), 3);
	assert_int_equal(solve_problem(&pb, &o, &res), SOLVE_OK);
	assert_int_equal(res.n, 3);
	check_points_verified(&pb, &res, o.tol);
	assert_int_equal(nshape_roots(vs3, 4700.0, x), 3);
	for (int j = 0; j < 3; j++) {
		assert_false(res.pts[j].tangent);
		if (!(check_rel(res.pts[j].v, x[j], 1e-300) <= 1e-9))
			fail_msg("three crossings: point %d at %.17g V, cubic root %.17g",
			         j, res.pts[j].v, x[j]);
	}
	/* The middle one sits on the negative-resistance branch. */
	assert_true(res.pts[1].rd < 0.0);

	/* Steep, r = 470 ohm: one crossing. */
	nshape_problem(&pb, 1.913, 470.0);
	assert_int_equal(solve_problem(&pb, &o, &res), SOLVE_OK);
	assert_int_equal(res.n, 1);
	check_points_verified(&pb, &res, o.tol);
	assert_int_equal(nshape_roots(1.913, 470.0, x), 1);
	assert_true(check_rel(res.pts[0].v, x[0], 1e-300) <= 1e-9);

	/* Tangent at vt in the negative-resistance region, r = -1/I'(vt). */
	const double vt = 0.2911;
	double rt = -1.0 / nshape_conductance(par, vt);
	double vst = vt + rt * nshape_current(par, vt);
	nshape_problem(&pb, vst, rt);
	size_t nb = stepper_scan(&pb, br, SOLVE_MAX_POINTS);
	assert_int_equal(nb, 2);
	assert_true(br[0].tangent && br[0].lo == br[0].hi);
	assert_true(fabs(br[0].lo - vt) <= 1e-6);
	assert_false(br[1].tangent);
	assert_int_equal(solve_problem(&pb, &o, &res), SOLVE_OK);
	assert_int_equal(res.n, 2);
	assert_true(res.pts[0].tangent && !res.pts[1].tangent);
	assert_true(fabs(res.pts[0].v - vt) <= 1e-6);
	check_points_verified(&pb, &res, o.tol);
	/* The crossing is the cubic's simple root above the double root. */
	int nr = nshape_roots(vst, rt, x);
	assert_true(check_rel(res.pts[1].v, x[nr - 1], 1e-300) <= 1e-9);
}

/* A device parameter that solve_problem must refuse. */
struct bad_solve {
	const struct model_type *type;
	int index;
	double value;
	const char *key;
};

/*
 * Test 10 (solve): bad parameters give SOLVE_BAD_INPUT, no points, and a
 * message naming the key, for every method.
 */
static void test_bad_input(void **state)
{
	(void)state;
	const struct bad_solve cases[] = {
		{ &model_diode, DIODE_IS, NAN, "saturation_current" },
		{ &model_diode, DIODE_IS, -INFINITY, "saturation_current" },
		{ &model_diode, DIODE_IS, 0.0, "saturation_current" },
		{ &model_diode, DIODE_IS, -1.3e-14, "saturation_current" },
		{ &model_diode, DIODE_N, 0.0, "ideality" },
		{ &model_diode, DIODE_N, -1.71, "ideality" },
		{ &model_diode, DIODE_N, INFINITY, "ideality" },
		{ &model_diode, DIODE_TEMP, -300.2, "temperature" },
		{ &model_diode, DIODE_TEMP, NAN, "temperature" },
		{ &model_diode, DIODE_RS, NAN, "series_resistance" },
		{ &model_power_law, POWER_LAW_VREF, 0.0, "reference_voltage" },
		{ &model_power_law, POWER_LAW_VREF, -2.7, "reference_voltage" },
		{ &model_power_law, POWER_LAW_ALPHA, 0.0, "exponent" },
		{ &model_power_law, POWER_LAW_ALPHA, -1.3, "exponent" },
		{ &model_power_law, POWER_LAW_IREF, NAN, "reference_current" },
	};
	for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
		struct problem pb;
		struct source_spec sp;
		char err[200];
		source_spec_thevenin(&sp, 5.3, 1270.0);
		assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
		device_init(&pb.dev, cases[k].type);
		if (cases[k].type == &model_diode) {
			pb.dev.p[DIODE_IS] = 3.7e-14;
			pb.dev.p[DIODE_N] = 1.31;
		} else {
			pb.dev.p[POWER_LAW_VREF] = 2.1;
			pb.dev.p[POWER_LAW_IREF] = 1.7e-3;
			pb.dev.p[POWER_LAW_ALPHA] = 3.9;
		}
		pb.dev.p[cases[k].index] = cases[k].value;
		for (int m = 0; m < METHOD_COUNT; m++) {
			struct solve_options o;
			struct solve_result res;
			solve_options_init(&o);
			o.method = (enum solve_method)m;
			if (solve_problem(&pb, &o, &res) != SOLVE_BAD_INPUT)
				fail_msg("case %zu (%s = %g), %s: status %d", k, cases[k].key,
				         cases[k].value, solve_method_name(o.method),
				         res.status);
			assert_int_equal(res.n, 0);
			if (strstr(res.message, cases[k].key) == NULL)
				fail_msg("case %zu: message does not name %s: %s", k,
				         cases[k].key, res.message);
		}
	}
}

/*
 * Validation once: a device is checked where its parameters change, and
 * the flag follows every change.  A value that passes its own range but
 * leaves the device invalid as a whole (a self-heated diode without the
 * temperature its Is was stated at: the model's own rule) is refused by
 * the next solve with that key, whichever way it was set; setting the
 * parameter back makes the device checked again and the solve answers
 * exactly as for a device never checked.
 */
static void test_checked_once(void **state)
{
	(void)state;
	struct problem pb;
	struct source_spec sp;
	char err[200];
	source_spec_thevenin(&sp, 7.43, 2.61e3);
	assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
	pb.net = NULL;
	device_init(&pb.dev, &model_diode);
	pb.dev.p[DIODE_IS] = 2.93e-15;
	pb.dev.p[DIODE_N] = 1.37;
	pb.dev.p[DIODE_RS] = 0.83;
	struct problem raw = pb;
	assert_false(pb.dev.checked);
	assert_int_equal(device_check(&pb.dev, err, sizeof err), 0);
	assert_true(pb.dev.checked);

	struct paramref theta, is;
	assert_int_equal(paramref_find(&pb, "thermal_resistance", &theta, err,
	                               sizeof err), 0);
	assert_int_equal(paramref_find(&pb, "saturation_current", &is, err,
	                               sizeof err), 0);
	/* 240 K/W is inside the key's own range. */
	assert_int_equal(paramref_check(&pb, &theta, 240.0, NULL, 0), 0);
	struct solve_options o;
	solve_options_init(&o);
	struct solve_result res;
	for (int way = 0; way < 3; way++) {
		struct problem q = pb;
		if (way == 0) {
			assert_int_equal(paramref_set(&q, &theta, 240.0), 0);
		} else if (way == 1) {
			const struct paramref r[2] = { is, theta };
			const double x[2] = { 3.1e-15, 240.0 };
			assert_int_equal(paramref_set_all(&q, r, x, 2, NULL), 0);
		} else {
			device_set_param(&q.dev, (size_t)theta.index, 240.0);
		}
		assert_false(q.dev.checked);
		for (int m = 0; m < METHOD_COUNT; m++) {
			o.method = (enum solve_method)m;
			assert_int_equal(solve_problem(&q, &o, &res), SOLVE_BAD_INPUT);
			assert_int_equal(res.n, 0);
			if (strstr(res.message, "reference_temperature") == NULL)
				fail_msg("way %d, %s: message does not name the key: %s", way,
				         solve_method_name(o.method), res.message);
		}
		struct op_point pt;
		assert_int_equal(solve_fast(&q, 1e-12, &pt), -1);
		/* Back to valid: checked again, the same answer bit for bit. */
		assert_int_equal(paramref_set(&q, &theta, 0.0), 0);
		if (way == 1)
			assert_int_equal(paramref_set(&q, &is, 2.93e-15), 0);
		assert_true(q.dev.checked);
		struct solve_result r1, r2;
		o.method = METHOD_AUTO;
		assert_int_equal(solve_problem(&q, &o, &r1), SOLVE_OK);
		assert_int_equal(solve_problem(&raw, &o, &r2), SOLVE_OK);
		assert_int_equal(r1.n, 1);
		assert_int_equal(r2.n, 1);
		assert_true(r1.pts[0].v == r2.pts[0].v && r1.pts[0].i == r2.pts[0].i);
	}
}

/* A random valid problem of any model and source form. */
static void random_problem(struct check_rng *r, struct problem *pb)
{
	struct source_spec sp;
	char err[200];
	switch (check_rng_next(r) % 4) {
	case 0:
		source_spec_thevenin(&sp, check_rng_uniform(r, -400.0, 400.0),
		                     check_rng_log_uniform(r, 1e-3, 1e8));
		break;
	case 1:
		source_spec_thevenin(&sp, check_rng_uniform(r, -3.0, 3.0), 0.0);
		break;
	case 2:
		source_spec_norton(&sp, check_rng_uniform(r, -1.0, 1.0) *
		                        check_rng_log_uniform(r, 1e-15, 10.0),
		                   INFINITY);
		break;
	default:
		source_spec_norton(&sp, check_rng_uniform(r, -1.0, 1.0) *
		                        check_rng_log_uniform(r, 1e-9, 1.0),
		                   check_rng_log_uniform(r, 1.0, 1e7));
		break;
	}
	assert_int_equal(source_from_spec(&sp, &pb->src, err, sizeof err), 0);
	switch (check_rng_next(r) % 3) {
	case 0:
		device_init(&pb->dev, &model_diode);
		pb->dev.p[DIODE_IS] = check_rng_log_uniform(r, 1e-30, 1.0);
		pb->dev.p[DIODE_N] = check_rng_log_uniform(r, 0.05, 100.0);
		pb->dev.p[DIODE_RS] = (check_rng_next(r) & 1u)
		                          ? check_rng_log_uniform(r, 1e-6, 1e9)
		                          : 0.0;
		pb->dev.p[DIODE_TEMP] = check_rng_uniform(r, -273.0, 1000.0);
		break;
	case 1:
		device_init(&pb->dev, &model_power_law);
		pb->dev.p[POWER_LAW_VREF] = check_rng_log_uniform(r, 1e-6, 1e7);
		pb->dev.p[POWER_LAW_IREF] = check_rng_log_uniform(r, 1e-12, 1e6);
		pb->dev.p[POWER_LAW_ALPHA] = check_rng_log_uniform(r, 0.01, 200.0);
		break;
	default:
		device_init(&pb->dev, &nshape_model);
		pb->dev.p[NSHAPE_K] = check_rng_log_uniform(r, 1e-6, 10.0);
		pb->dev.p[NSHAPE_P] = check_rng_log_uniform(r, 0.01, 10.0);
		pb->dev.p[NSHAPE_Q] = pb->dev.p[NSHAPE_P] * pb->dev.p[NSHAPE_P] *
		                      check_rng_uniform(r, 0.5, 1.5);
		break;
	}
}

/*
 * Test 10 (robustness): random valid problems from wide, extreme ranges,
 * every method and order, random or automatic starts: every call
 * returns, every point returned is finite and passes solve_verify, every
 * trace row is finite, and no trace is longer than the step cap allows.
 */
static void test_never_unverified(void **state)
{
	(void)state;
	struct check_rng rng = { 0xfeed5eedu };
	struct stepper *st = stepper_create();
	assert_non_null(st);
	unsigned ok = 0, runs = 0;
	for (int k = 0; k < 1500; k++) {
		struct problem pb;
		random_problem(&rng, &pb);
		char err[200];
		assert_int_equal(device_validate(&pb.dev, err, sizeof err), 0);
		for (int m = 0; m < METHOD_COUNT; m++)
			for (int ord = 0; ord < ORDER_COUNT; ord++) {
				struct solve_options o;
				struct solve_result res;
				solve_options_init(&o);
				o.method = (enum solve_method)m;
				o.order = (enum projection_order)ord;
				o.max_steps = 1 + (unsigned)(check_rng_next(&rng) % 300);
				if (check_rng_next(&rng) & 1u)
					o.start_v = check_rng_uniform(&rng, -5.0, 5.0);
				enum solve_status s = solve_problem(&pb, &o, &res);
				runs++;
				assert_true(res.n <= SOLVE_MAX_POINTS);
				if (s == SOLVE_OK) {
					ok++;
					assert_true(res.n >= 1);
					check_points_verified(&pb, &res, o.tol);
				} else {
					assert_int_equal(res.n, 0);
					assert_true(res.message[0] != '\0');
				}
				if (m == METHOD_AUTO)
					continue;
				if (stepper_init(st, &pb, &o) != 0)
					continue;
				stepper_run(st);
				size_t n;
				const struct trace_row *tr = stepper_trace(st, &n);
				assert_true(n >= 1 && n <= o.max_steps + 1);
				for (size_t j = 0; j < n; j++)
					if (!isfinite(tr[j].v) || !isfinite(tr[j].i))
						fail_msg("problem %d, %s: row %zu not finite", k,
						         solve_method_name(o.method), j);
			}
	}
	print_message("# robustness: %u of %u solves found points\n", ok, runs);
	stepper_destroy(st);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_reference_agrees),
		cmocka_unit_test(test_diode_exact),
		cmocka_unit_test(test_power_law_gsl),
		cmocka_unit_test(test_every_root_scan),
		cmocka_unit_test(test_bad_input),
		cmocka_unit_test(test_checked_once),
		cmocka_unit_test(test_never_unverified),
	};
	gsl_set_error_handler_off();
	return cmocka_run_group_tests(tests, NULL, NULL);
}
