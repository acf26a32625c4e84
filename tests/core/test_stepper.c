/*
 * test_stepper.c - the stepped methods: Newton's order of convergence, a
 * 2-cycle and an overflow that stop without hanging, relaxation with the
 * optimal factor on a diverging order, the step cap, and rewinding.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cmocka.h>

#define CORE_CHECK_GSL
#include "core_check.h"

#include "core/diagnose.h"
#include "core/models/models.h"
#include "core/solve.h"

/* A diode behind a Thevenin source. */
struct diode_case {
	double is, n, temp, vs, rs;
};

/* Build the problem of case C (diode without series resistance). */
static void diode_problem(struct problem *pb, const struct diode_case *c)
{
	struct source_spec sp;
	char err[200];
	source_spec_thevenin(&sp, c->vs, c->rs);
	assert_int_equal(source_from_spec(&sp, &pb->src, err, sizeof err), 0);
	device_init(&pb->dev, &model_diode);
	pb->dev.p[DIODE_IS] = c->is;
	pb->dev.p[DIODE_N] = c->n;
	pb->dev.p[DIODE_RS] = 0.0;
	pb->dev.p[DIODE_TEMP] = c->temp;
}

static const struct diode_case newton_cases[] = {
	{ 2.385e-14, 1.071, 27.3, 4.913, 1370.0 },
	{ 7.7e-9, 1.83, 61.9, 11.37, 213.0 },
	{ 1.3e-15, 1.002, -17.4, 0.9137, 47.3 },
	{ 3.19e-11, 2.47, 104.6, 37.1, 8270.0 },
	{ 5.6e-13, 1.39, 3.3, 2.219, 91.7 },
};

/*
 * Test 5: near the root Newton's error obeys e_{k+1} ~ C e_k^2, so the
 * estimate p = ln(e_{k+1}/e_k) / ln(e_k/e_{k-1}) is about 2 (Burden &
 * Faires, Numerical Analysis, 9th ed., 2010, sec. 2.4, def. 2.7 and
 * thm 2.9).  Errors are against the exact Lambert W root (Banwell &
 * Jayakumar 2000); the triple used is the last one whose newest error is
 * still 1000 ulp above the root's rounding, asked to start 3.7 nVt above
 * the root (the convex side, where no limiting applies; the stepper may
 * start lower, at the top of its bracket).  Accept 1.8 to 2.2.
 */
static void test_newton_order(void **state)
{
	(void)state;
	struct stepper *st = stepper_create();
	assert_non_null(st);
	for (size_t k = 0; k < sizeof newton_cases / sizeof newton_cases[0]; k++) {
		const struct diode_case *c = &newton_cases[k];
		struct problem pb;
		diode_problem(&pb, c);
		double nvt = check_nvt(c->n, c->temp);
		long double iref = check_diode_exact_current(c->is, nvt, c->rs, c->vs);
		long double vref = c->vs - c->rs * iref;
		struct solve_options o;
		solve_options_init(&o);
		o.method = METHOD_NEWTON;
		o.start_v = (double)vref + 3.7 * nvt;
		assert_int_equal(stepper_init(st, &pb, &o), 0);
		assert_int_equal(stepper_run(st), STEP_CONVERGED);
		size_t n;
		const struct trace_row *tr = stepper_trace(st, &n);
		assert_true(tr[0].v > vref && tr[0].v <= o.start_v);
		double floor_ = 1000.0 * 2.2e-16 * fabsl(vref);
		double p = NAN;
		for (size_t j = 2; j < n; j++) {
			double e0 = (double)fabsl(tr[j - 2].v - vref);
			double e1 = (double)fabsl(tr[j - 1].v - vref);
			double e2 = (double)fabsl(tr[j].v - vref);
			if (e2 > floor_ && e1 < e0 && e2 < e1)
				p = log(e2 / e1) / log(e1 / e0);
		}
		if (!(p >= 1.8 && p <= 2.2))
			fail_msg("case %zu: order estimate %g over %zu steps", k, p, n - 1);
		print_message("# newton case %zu: order %.4f, %zu steps\n", k, p, n - 1);
	}
	stepper_destroy(st);
}

/*
 * Test 6a: a load line of resistance Vref/Iref through the origin and a
 * linear power-law device (exponent 1) give g' = -1 exactly in the line
 * order: the path returns to its start every full step (a 2-cycle).  The
 * stepper must stop on its own with a non-converged status, here cycling.
 */
static void test_two_cycle(void **state)
{
	(void)state;
	struct problem pb;
	struct source_spec sp;
	char err[200];
	const double vref = 3.17, iref = 2.2e-3;
	source_spec_thevenin(&sp, 0.0, vref / iref);
	assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
	device_init(&pb.dev, &model_power_law);
	pb.dev.p[POWER_LAW_VREF] = vref;
	pb.dev.p[POWER_LAW_IREF] = iref;
	pb.dev.p[POWER_LAW_ALPHA] = 1.0;
	struct stepper *st = stepper_create();
	assert_non_null(st);
	struct solve_options o;
	solve_options_init(&o);
	o.method = METHOD_PROJECTION;
	o.order = ORDER_VOLTAGE_FROM_LINE;
	o.start_v = 0.713;
	o.max_steps = 100000;
	assert_int_equal(stepper_init(st, &pb, &o), 0);
	enum step_status s = stepper_run(st);
	size_t n;
	stepper_trace(st, &n);
	if (s != STEP_CYCLING)
		fail_msg("2-cycle ended %s after %zu rows", step_status_name(s), n);
	assert_true(n <= 20);
	/* solve_problem reports it as a failure with a message. */
	struct solve_result res;
	assert_int_equal(solve_problem(&pb, &o, &res), SOLVE_FAILED);
	assert_int_equal(res.stop, STEP_CYCLING);
	assert_int_equal(res.n, 0);
	assert_true(res.message[0] != '\0');
	stepper_destroy(st);
}

/*
 * Test 6b: the line order from 0 V with a large source resistance and
 * voltage drives the diode to exp overflow in one projection; it stops
 * with a non-converged status after a bounded number of rows.
 */
static void test_overflow_stops(void **state)
{
	(void)state;
	const struct diode_case c = { 2.385e-14, 1.071, 27.3, 47.3, 91200.0 };
	struct problem pb;
	diode_problem(&pb, &c);
	struct stepper *st = stepper_create();
	assert_non_null(st);
	struct solve_options o;
	solve_options_init(&o);
	o.method = METHOD_PROJECTION;
	o.order = ORDER_VOLTAGE_FROM_LINE;
	o.max_steps = 100000;
	assert_int_equal(stepper_init(st, &pb, &o), 0);
	enum step_status s = stepper_run(st);
	size_t n;
	const struct trace_row *tr = stepper_trace(st, &n);
	if (s == STEP_CONVERGED || s == STEP_CONTINUE)
		fail_msg("overflow case ended %s", step_status_name(s));
	assert_true(n <= 20);
	for (size_t k = 0; k < n; k++)
		assert_true(isfinite(tr[k].v) && isfinite(tr[k].i));
	stepper_destroy(st);
}

/* Cases whose device order diverges with g' about -2 to -5 at the point. */
struct diverge_case {
	struct diode_case d;
	double gprime;     /* wanted g' of the device order at the point */
	double i_point;    /* wanted current at the point */
};

static const struct diverge_case diverge_cases[] = {
	{ { 2.385e-14, 1.071, 27.3, 0, 0 }, -2.37, 1.37e-3 },
	{ { 7.7e-9, 1.83, 61.9, 0, 0 }, -3.11, 4.13e-2 },
	{ { 1.3e-15, 1.002, -17.4, 0, 0 }, -4.71, 2.9e-5 },
};

/*
 * Fill PB for case DC: a diode whose device order has slope DC->gprime at
 * the point of current DC->i_point (r = -r_d / g' with r_d = nVt/(I+Is),
 * the load line through the point).  Returns the point's voltage.
 */
static double diverge_problem(struct problem *pb, const struct diverge_case *dc)
{
	struct diode_case c = dc->d;
	double nvt = check_nvt(c.n, c.temp);
	double v = nvt * log1p(dc->i_point / c.is);
	double rd = nvt / (dc->i_point + c.is);
	c.rs = -rd / dc->gprime;
	c.vs = v + c.rs * dc->i_point;
	diode_problem(pb, &c);
	return v;
}

/*
 * Test 6c: relaxation with the optimal factor w* = 1 / (1 - g'(x*)) (from
 * diagnose_at at the solved point) makes the diverging device order
 * converge, as does the per-step optimal factor (w = 0), to the Newton
 * point within the tolerance (relaxed rate 1 - w + w g' = 0 at w*;
 * Burden & Faires 2010, sec. 2.4).
 */
static void test_relaxed_converges(void **state)
{
	(void)state;
	for (size_t k = 0; k < sizeof diverge_cases / sizeof diverge_cases[0]; k++) {
		struct problem pb;
		double v = diverge_problem(&pb, &diverge_cases[k]);
		struct solve_options o;
		struct solve_result ref, res;
		solve_options_init(&o);
		assert_int_equal(solve_problem(&pb, &o, &ref), SOLVE_OK);
		struct diagnosis d;
		diagnose_at(&pb, ORDER_VOLTAGE_FROM_DEVICE, ref.pts[0].v, 1e-12, 1.0, &d);
		assert_true(fabs(d.gprime - diverge_cases[k].gprime) <=
		            1e-6 * fabs(diverge_cases[k].gprime));
		for (int w = 0; w < 2; w++) {
			solve_options_init(&o);
			o.method = METHOD_RELAXED;
			o.order = ORDER_VOLTAGE_FROM_DEVICE;
			/* Below the point: the first device step stays on the curve. */
			o.start_v = v - 0.37 * check_nvt(diverge_cases[k].d.n,
			                                 diverge_cases[k].d.temp);
			o.omega = w == 0 ? d.omega_opt : 0.0;
			if (solve_problem(&pb, &o, &res) != SOLVE_OK)
				fail_msg("case %zu, omega %g: %s", k, o.omega, res.message);
			if (!(check_rel(res.pts[0].i, ref.pts[0].i, 1e-300) <= 1e-11))
				fail_msg("case %zu, omega %g: I %.17g vs %.17g", k, o.omega,
				         res.pts[0].i, ref.pts[0].i);
			assert_true(res.pts[0].steps <= 40);
		}
	}
}

/*
 * Test 6d: a slow contraction (g' = -0.9953 in the line order) stops at
 * the step cap with STEP_CAP and at most max_steps + 1 trace rows.
 */
static void test_step_cap(void **state)
{
	(void)state;
	struct diverge_case dc = diverge_cases[1];
	dc.gprime = -1.0 / 0.9953; /* device order -1.0047: line order -0.9953 */
	struct problem pb;
	double v = diverge_problem(&pb, &dc);
	struct stepper *st = stepper_create();
	assert_non_null(st);
	static const unsigned caps[] = { 37, 61, 150 };
	for (size_t k = 0; k < 3; k++) {
		struct solve_options o;
		solve_options_init(&o);
		o.method = METHOD_PROJECTION;
		o.order = ORDER_VOLTAGE_FROM_LINE;
		o.start_v = v * 0.981;
		o.max_steps = caps[k];
		assert_int_equal(stepper_init(st, &pb, &o), 0);
		enum step_status s = stepper_run(st);
		size_t n;
		stepper_trace(st, &n);
		if (s != STEP_CAP)
			fail_msg("cap %u: ended %s after %zu rows", caps[k],
			         step_status_name(s), n);
		assert_true(n <= caps[k] + 1);
		/* A stopped stepper does not move again. */
		assert_int_equal(stepper_step(st), STEP_CAP);
		size_t n2;
		stepper_trace(st, &n2);
		assert_int_equal(n2, n);
	}
	stepper_destroy(st);
}

/* Rewinding re-runs the same path: the rows match the first run exactly. */
static void test_rewind(void **state)
{
	(void)state;
	struct problem pb;
	double v = diverge_problem(&pb, &diverge_cases[0]);
	struct stepper *st = stepper_create();
	assert_non_null(st);
	struct solve_options o;
	solve_options_init(&o);
	o.method = METHOD_PROJECTION;
	o.order = ORDER_VOLTAGE_FROM_LINE;
	o.start_v = v * 1.023;
	assert_int_equal(stepper_init(st, &pb, &o), 0);
	for (int k = 0; k < 9; k++)
		assert_int_equal(stepper_step(st), STEP_CONTINUE);
	size_t n;
	const struct trace_row *tr = stepper_trace(st, &n);
	assert_int_equal(n, 10);
	struct trace_row saved[10];
	memcpy(saved, tr, sizeof saved);
	stepper_rewind(st, 4);
	tr = stepper_trace(st, &n);
	assert_int_equal(n, 5);
	for (size_t k = 0; k < n; k++)
		assert_true(tr[k].v == saved[k].v && tr[k].i == saved[k].i &&
		            tr[k].on == saved[k].on);
	stepper_destroy(st);
}


/* Rows A and B are the same, bit for bit (NaN included). */
static bool rows_identical(const struct trace_row *a, const struct trace_row *b)
{
	const double da[] = { a->v, a->i, a->residual, a->step, a->ratio };
	const double db[] = { b->v, b->i, b->residual, b->step, b->ratio };
	return a->k == b->k && a->on == b->on && memcmp(da, db, sizeof da) == 0;
}

/* One path to replay: a problem, options, and a bracket or none. */
struct replay_case {
	const char *name;
	enum solve_method method;
	enum projection_order order;
	double omega;
	int bracket;       /* 1: start from a bracket of the scan's (the
	                      tunnel diode's second, the diode's only one) */
	int tunnel;        /* 1: a tunnel diode with three crossings;
	                      2: a diode with a series resistance */
};

static const struct replay_case replay_cases[] = {
	{ "projection/line", METHOD_PROJECTION, ORDER_VOLTAGE_FROM_LINE, 0, 0, 0 },
	{ "projection/device", METHOD_PROJECTION, ORDER_VOLTAGE_FROM_DEVICE, 0, 0, 0 },
	{ "relaxed/optimal", METHOD_RELAXED, ORDER_VOLTAGE_FROM_DEVICE, 0.0, 0, 0 },
	{ "relaxed/0.613", METHOD_RELAXED, ORDER_VOLTAGE_FROM_LINE, 0.613, 0, 0 },
	{ "newton", METHOD_NEWTON, ORDER_VOLTAGE_FROM_DEVICE, 0, 0, 0 },
	{ "brent", METHOD_BRENT, ORDER_VOLTAGE_FROM_DEVICE, 0, 0, 0 },
	{ "auto", METHOD_AUTO, ORDER_VOLTAGE_FROM_DEVICE, 0, 0, 0 },
	{ "newton/bracket", METHOD_NEWTON, ORDER_VOLTAGE_FROM_DEVICE, 0, 1, 1 },
	{ "brent/bracket", METHOD_BRENT, ORDER_VOLTAGE_FROM_DEVICE, 0, 1, 1 },
	{ "newton/scan", METHOD_NEWTON, ORDER_VOLTAGE_FROM_DEVICE, 0, 0, 1 },
	{ "newton/bracket/rs", METHOD_NEWTON, ORDER_VOLTAGE_FROM_DEVICE, 0, 1, 2 },
	{ "brent/bracket/rs", METHOD_BRENT, ORDER_VOLTAGE_FROM_DEVICE, 0, 1, 2 },
	{ "auto/bracket/rs", METHOD_AUTO, ORDER_VOLTAGE_FROM_DEVICE, 0, 1, 2 },
};

/*
 * The bracket a bracketed method holds after the path TR (N rows) from
 * B: every point it evaluated (each row but the newest, which is where it
 * moved to next) replaced the end whose residual has its sign.  A rewind
 * that started again from this bracket, instead of the caller's, would
 * take another path: the replay test shows that it does, so that its
 * bit-for-bit check can fail.  For a model without a series split (the
 * trace's V is the variable iterated on).
 */
static struct bracket narrowed_bracket(const struct problem *pb,
                                       const struct bracket *b,
                                       const struct trace_row *tr, size_t n)
{
	struct bracket nb = *b;
	double slo = problem_residual(pb, b->lo) < 0.0 ? -1.0 : 1.0;
	for (size_t k = 0; k + 1 < n; k++) {
		double x = tr[k].v, f = tr[k].residual;
		if (!(x > nb.lo && x < nb.hi) || f == 0.0)
			continue;
		if ((f < 0.0) == (slo < 0.0))
			nb.lo = x;
		else
			nb.hi = x;
	}
	return nb;
}

/*
 * Every method replays: run a path to its end, then rewind to every
 * earlier step and run on again; each replay must give the same rows, bit
 * for bit, and the same status.  A bracket-started method keeps the
 * caller's bracket as given (Newton narrows its own as it runs), so the
 * replay starts where the first run did.  The tunnel diode (invented
 * values; three crossings from 0.95 V through 2.37 kohm) gives the
 * bracketed methods a non-monotone residual.
 */
static void test_rewind_every_method(void **state)
{
	(void)state;
	struct stepper *st = stepper_create();
	assert_non_null(st);
	for (size_t c = 0; c < sizeof replay_cases / sizeof replay_cases[0]; c++) {
		const struct replay_case *rc = &replay_cases[c];
		struct problem pb;
		struct solve_options o;
		solve_options_init(&o);
		o.method = rc->method;
		o.order = rc->order;
		o.omega = rc->omega;
		if (rc->tunnel == 1) {
			struct source_spec sp;
			char err[200];
			source_spec_thevenin(&sp, 0.95, 2370.0);
			assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
			device_init(&pb.dev, &model_tunnel);
			pb.net = NULL;
			pb.net_nset = 0;
			o.start_v = 0.2137;
		} else if (rc->tunnel == 2) {
			/* invented: 4.7 V through 330 ohm into a diode with 2.3 ohm
			 * of bulk resistance; the automatic start (0 V) lies below
			 * the bracket, so the methods start from its end */
			const struct diode_case dc = { 3.1e-14, 1.37, 31.7, 4.7, 330.0 };
			diode_problem(&pb, &dc);
			pb.dev.p[DIODE_RS] = 2.3;
			pb.net = NULL;
			pb.net_nset = 0;
		} else {
			double v = diverge_problem(&pb, &diverge_cases[1]);
			pb.net = NULL;
			pb.net_nset = 0;
			o.start_v = rc->method == METHOD_PROJECTION &&
			                    rc->order == ORDER_VOLTAGE_FROM_LINE
			                ? v * 0.983
			                : v - 0.37 * check_nvt(1.83, 61.9);
		}
		struct bracket br[SOLVE_MAX_POINTS];
		int ok;
		const struct bracket *b0 = NULL;
		if (rc->bracket) {
			size_t nb = stepper_scan(&pb, br, SOLVE_MAX_POINTS);
			assert_int_equal(nb, rc->tunnel == 1 ? 3 : 1);
			b0 = &br[nb == 3 ? 1 : 0];
			ok = stepper_init_bracket(st, &pb, &o, b0);
		} else {
			ok = stepper_init(st, &pb, &o);
		}
		assert_int_equal(ok, 0);
		enum step_status first = stepper_run(st);
		size_t n;
		const struct trace_row *tr = stepper_trace(st, &n);
		assert_true(n >= 3);
		struct trace_row *saved = malloc(n * sizeof *saved);
		assert_non_null(saved);
		memcpy(saved, tr, n * sizeof *saved);
		for (size_t j = 0; j < n; j++) {
			stepper_rewind(st, j);
			size_t m;
			tr = stepper_trace(st, &m);
			assert_int_equal(m, j + 1);
			for (size_t k = 0; k < m; k++)
				if (!rows_identical(&tr[k], &saved[k]))
					fail_msg("%s: rewind to %zu: row %zu differs", rc->name,
					         j, k);
			enum step_status again = stepper_run(st);
			tr = stepper_trace(st, &m);
			assert_int_equal(m, n);
			assert_int_equal(again, first);
			for (size_t k = 0; k < m; k++)
				if (!rows_identical(&tr[k], &saved[k]))
					fail_msg("%s: after rewind to %zu: row %zu differs",
					         rc->name, j, k);
		}
		if (rc->bracket && rc->tunnel == 1) {
			/* The narrowed bracket is not the caller's, and starting
			 * again from it goes another way. */
			struct bracket nb = narrowed_bracket(&pb, b0, saved, n);
			assert_true(nb.lo > b0->lo || nb.hi < b0->hi);
			struct stepper *other = stepper_create();
			assert_non_null(other);
			assert_int_equal(stepper_init_bracket(other, &pb, &o, &nb), 0);
			stepper_run(other);
			size_t m;
			tr = stepper_trace(other, &m);
			bool same = m == n;
			for (size_t k = 0; same && k < m; k++)
				same = rows_identical(&tr[k], &saved[k]);
			if (same)
				fail_msg("%s: a start from the narrowed bracket [%.17g, "
				         "%.17g] gives the same path: the replay proves "
				         "nothing", rc->name, nb.lo, nb.hi);
			stepper_destroy(other);
		}
		print_message("# %-18s %zu rows replayed (%s)\n", rc->name, n,
		              step_status_name(first));
		free(saved);
	}
	stepper_destroy(st);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_newton_order),
		cmocka_unit_test(test_two_cycle),
		cmocka_unit_test(test_overflow_stops),
		cmocka_unit_test(test_relaxed_converges),
		cmocka_unit_test(test_step_cap),
		cmocka_unit_test(test_rewind),
		cmocka_unit_test(test_rewind_every_method),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
