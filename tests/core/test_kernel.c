/*
 * test_kernel.c - the numerical kernel (src/core/kernel.h): every method
 * on one table of functions with known roots and minima, including ones
 * that must fail or fall back; Brent-Dekker against GSL's brent solver on
 * the same functions; the scan on sampled functions whose crossings,
 * dips and tangents are known exactly.
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
#include <gsl/gsl_roots.h>

#include "core/kernel.h"

/* pi to double precision (from memory; acos(-1) agrees). */
#define PI 3.141592653589793

/* Calls made to a test function (every evaluation counts). */
struct fn_count {
	unsigned calls;
};

/* One test function: F, F', the root in the bracket, and the bracket. */
struct root_case {
	const char *name;
	double (*f)(double x);
	double (*df)(double x); /* NULL: no derivative (Newton bisects) */
	double lo, hi, root;
	double rel;             /* how close the root must come (relative) */
};

/* x^2 - 2: root sqrt(2). */
static double f_sq2(double x) { return x * x - 2.0; }
static double df_sq2(double x) { return 2.0 * x; }
/* exp(x) - 10: root ln 10. */
static double f_exp10(double x) { return exp(x) - 10.0; }
static double df_exp10(double x) { return exp(x); }
/* 3 - x^3, falling: root cbrt(3). */
static double f_cube(double x) { return 3.0 - x * x * x; }
static double df_cube(double x) { return -3.0 * x * x; }
/* x^20 - 1: flat then steep (GSL's roots test set has it); root 1. */
static double f_x20(double x) { return pow(x, 20.0) - 1.0; }
static double df_x20(double x) { return 20.0 * pow(x, 19.0); }
/* sqrt|x| sign(x): infinite slope at the root 0 (GSL's test set). */
static double f_sqrtabs(double x) { return x < 0.0 ? -sqrt(-x) : sqrt(x); }
/* cos(x) - x: root 0.739085133215160641655312087673873404 (the Dottie
 * number; from memory, and checked below against GSL's brent). */
static double f_dottie(double x) { return cos(x) - x; }
static double df_dottie(double x) { return -sin(x) - 1.0; }

static const struct root_case root_cases[] = {
	{ "x^2-2", f_sq2, df_sq2, 0.37, 2.9, 1.4142135623730951, 4e-16 },
	{ "exp-10", f_exp10, df_exp10, -1.3, 7.1, 2.302585092994046, 4e-16 },
	{ "3-x^3", f_cube, df_cube, 0.21, 3.7, 1.4422495703074083, 4e-16 },
	{ "x^20-1", f_x20, df_x20, 0.13, 3.3, 1.0, 4e-16 },
	{ "sqrt|x|", f_sqrtabs, NULL, -0.71, 1.37, 0.0, 0.0 },
	{ "dottie", f_dottie, df_dottie, -0.3, 2.7, 0.7390851332151607, 4e-16 },
};

/* The adapter: F of the case and its Newton step. */
struct case_ctx {
	const struct root_case *c;
	unsigned calls;
};

static double case_eval(void *ctx, double x, double *step)
{
	struct case_ctx *cc = ctx;
	cc->calls++;
	double f = cc->c->f(x);
	if (step != NULL)
		*step = cc->c->df != NULL ? f / cc->c->df(x) : NAN;
	return f;
}

/*
 * |x - root| within REL |root|.  A root at 0 has no relative scale: only
 * halving reaches it there (the slope is infinite), so within 2^-390 of
 * the bracket after the cap.
 */
static bool close_to(double x, const struct root_case *c)
{
	if (c->root == 0.0)
		return fabs(x) <= (c->hi - c->lo) * 0x1p-390;
	return fabs(x - c->root) <= c->rel * fabs(c->root);
}

/*
 * Newton's driver, Brent's driver and bisection reach every root of the
 * table; Newton without a derivative (sqrt|x|) falls back to bisection
 * and still converges.  The roots are exact facts of the functions.
 */
static void test_roots(void **state)
{
	(void)state;
	for (size_t k = 0; k < sizeof root_cases / sizeof root_cases[0]; k++) {
		const struct root_case *c = &root_cases[k];
		struct case_ctx cc = { c, 0 };
		struct kernel_fn fn = { case_eval, &cc };
		double flo = c->f(c->lo), fhi = c->f(c->hi);
		struct kernel_result r = kernel_newton_solve(
			&fn, c->lo, flo, c->hi, fhi, c->hi, 4e-16, NULL, NULL);
		if (!(r.ok || c->root == 0.0) || !close_to(r.x, c))
			fail_msg("newton %s: %.17g (ok %d) after %u", c->name, r.x, r.ok,
			         r.iters);
		r = kernel_brent_solve(&fn, c->lo, flo, c->hi, fhi, 0.0, 0.0);
		/* Brent stops on a bracket of a few ulp: allow that much. */
		if (!(r.ok || c->root == 0.0) ||
		    !(fabs(r.x - c->root) <= 4.0 * DBL_EPSILON * fabs(c->root) + 1e-300 +
		                                 (r.hi - r.lo)))
			fail_msg("brent %s: %.17g (ok %d) after %u", c->name, r.x, r.ok,
			         r.iters);
		r = kernel_bisect_solve(&fn, c->lo, flo, c->hi, false, 0.0);
		if (!(c->root >= r.lo && c->root <= r.hi))
			fail_msg("bisect %s: [%.17g, %.17g]", c->name, r.lo, r.hi);
		print_message("# %-8s newton, brent, bisect agree with %.17g\n",
		              c->name, c->root);
	}
}

/* GSL's residual adapter for a root case. */
static double gsl_case(double x, void *p)
{
	const struct root_case *c = p;
	return c->f(x);
}

/*
 * Brent-Dekker against GSL's brent (the same published scheme, Brent 1973
 * ch. 4): both narrow their brackets onto the same root to 1e-13, and
 * ours takes no more evaluations than GSL's plus two.
 */
static void test_brent_against_gsl(void **state)
{
	(void)state;
	gsl_set_error_handler_off();
	gsl_root_fsolver *fs = gsl_root_fsolver_alloc(gsl_root_fsolver_brent);
	assert_non_null(fs);
	for (size_t k = 0; k < sizeof root_cases / sizeof root_cases[0]; k++) {
		const struct root_case *c = &root_cases[k];
		gsl_function gf = { gsl_case, (void *)c };
		assert_int_equal(gsl_root_fsolver_set(fs, &gf, c->lo, c->hi),
		                 GSL_SUCCESS);
		int it = 0, status = GSL_CONTINUE;
		while (status == GSL_CONTINUE && it < 400) {
			it++;
			gsl_root_fsolver_iterate(fs);
			status = gsl_root_test_interval(gsl_root_fsolver_x_lower(fs),
			                                gsl_root_fsolver_x_upper(fs),
			                                1e-300, 1e-13);
		}
		double xg = gsl_root_fsolver_root(fs);
		struct case_ctx cc = { c, 0 };
		struct kernel_fn fn = { case_eval, &cc };
		struct kernel_brent s;
		kernel_brent_set(&s, c->lo, c->f(c->lo), c->hi, c->f(c->hi), 0.0, 0.0);
		unsigned n = 0;
		while (!kernel_test_interval(kernel_brent_lower(&s),
		                             kernel_brent_upper(&s), 1e-300, 1e-13) &&
		       n < 400) {
			n++;
			if (kernel_brent_iterate(&s, &fn) != KERNEL_CONTINUE)
				break;
		}
		double allow = 1e-13 * fmax(fabs(xg), 1e-300) + 1e-300;
		if (!(fabs(s.b - xg) <= allow + (kernel_brent_upper(&s) -
		                                 kernel_brent_lower(&s))))
			fail_msg("%s: ours %.17g, GSL %.17g", c->name, s.b, xg);
		if (!(n <= (unsigned)it + 2))
			fail_msg("%s: %u iterations, GSL %d", c->name, n, it);
		print_message("# %-8s brent %u iterations, GSL %d\n", c->name, n, it);
	}
	gsl_root_fsolver_free(fs);
}

/*
 * Newton keeps its bracket whichever way F runs, bisects where a step
 * would leave it (x^20 - 1 from 0.13, where it is nearly flat), and a
 * limiter that halves every step is obeyed (each move is a limited one
 * or a bisection, never a full step).
 */
static double halve(void *ctx, double xnew, double xold)
{
	(void)ctx;
	return xold + 0.5 * (xnew - xold);
}

static void test_newton_bracket_and_limit(void **state)
{
	(void)state;
	const struct root_case *c = &root_cases[3]; /* x^20 - 1 */
	struct case_ctx cc = { c, 0 };
	struct kernel_fn fn = { case_eval, &cc };
	struct kernel_newton s;
	kernel_newton_set(&s, c->lo, c->f(c->lo), c->hi, c->f(c->hi), c->lo);
	bool bisected = false;
	for (int it = 0; it < 400; it++) {
		double lo = s.lo, hi = s.hi;
		if (kernel_newton_iterate(&s, &fn) == KERNEL_DONE)
			break;
		assert_true(s.lo >= lo && s.hi <= hi && s.lo <= s.x && s.x <= s.hi);
		assert_true(s.flo <= 0.0 && s.fhi >= 0.0);
		bisected |= s.move == KERNEL_MOVE_BISECTION;
		if (s.move == KERNEL_MOVE_NEWTON &&
		    kernel_test_delta(s.dx, s.x, 0.0, 1e-15))
			break;
	}
	assert_true(bisected);
	assert_true(fabs(s.x - 1.0) <= 1e-15);
	/* The falling 3 - x^3: the bracket ends keep F(lo) >= 0 >= F(hi). */
	c = &root_cases[2];
	cc.c = c;
	kernel_newton_set(&s, c->lo, c->f(c->lo), c->hi, c->f(c->hi), 0.5);
	s.limit = halve;
	unsigned limited = 0;
	for (int it = 0; it < 400; it++) {
		if (kernel_newton_iterate(&s, &fn) == KERNEL_DONE)
			break;
		assert_true(s.flo >= 0.0 && s.fhi <= 0.0);
		assert_true(s.move != KERNEL_MOVE_NEWTON || fabs(s.dx) <= 1e-14);
		limited += s.move == KERNEL_MOVE_LIMITED;
		if (kernel_test_interval(s.lo, s.hi, 0.0, 1e-15) ||
		    (s.move != KERNEL_MOVE_BISECTION && fabs(s.dx) <= 1e-16))
			break;
	}
	assert_true(limited > 3);
	assert_true(fabs(s.x - c->root) <= 1e-14);
}

/* A step function: only its sign is known. */
static double f_sign(void *ctx, double x, double *step)
{
	(void)ctx;
	if (step != NULL)
		*step = NAN;
	return x < 0.3183098861837907 ? -1.0 : 1.0;
}

/*
 * Bisection locates a jump it only sees by sign, in plain and in log
 * space and with a relative stop, the ends given either way round.
 */
static void test_bisect(void **state)
{
	(void)state;
	struct kernel_fn fn = { f_sign, NULL };
	const double jump = 0.3183098861837907;
	struct kernel_result r = kernel_bisect_solve(&fn, 0.013, -1.0, 7.7, false, 0.0);
	assert_true(r.lo < jump && r.hi >= jump && r.hi - r.lo <= 2 * DBL_EPSILON);
	r = kernel_bisect_solve(&fn, 7.7, 1.0, 0.013, true, 1e-9);
	assert_true(r.lo < jump && r.hi >= jump);
	assert_true(r.hi - r.lo <= 1e-9 * r.hi && r.hi - r.lo > 1e-11 * r.hi);
}

/* exp(x) - 10 with the exponential's overflow: infinite from x = 710. */
static double f_wall(void *ctx, double x, double *step)
{
	(void)ctx;
	if (step != NULL)
		*step = NAN;
	return exp(x) - 10.0;
}

/* NaN above 2.9, else x - 2.25. */
static double f_hole(void *ctx, double x, double *step)
{
	(void)ctx;
	if (step != NULL)
		*step = NAN;
	return x > 2.9 ? NAN : x - 2.25;
}

/*
 * Bisection on the sign pulls an end whose value overflows in until both
 * are finite (Burden & Faires 2010, sec. 2.1: only signs are used, so
 * the root ln 10 stays inside), then to a width; a middle where F is
 * exactly 0 ends it there; a NaN in the middle is refused.
 */
static void test_narrow(void **state)
{
	(void)state;
	struct kernel_fn w = { f_wall, NULL }, s = { f_sign, NULL },
	                 h = { f_hole, NULL };
	double lo = -3.7, hi = 1000.0, flo = f_wall(NULL, lo, NULL);
	double fhi = f_wall(NULL, hi, NULL);
	assert_true(isinf(fhi));
	int k = kernel_narrow(&w, &lo, &flo, &hi, &fhi, INFINITY);
	assert_true(k >= 1 && isfinite(flo) && isfinite(fhi));
	assert_true(lo < log(10.0) && log(10.0) < hi && flo < 0.0 && fhi > 0.0);
	assert_true(hi - lo > 1.0); /* finite ends were all it asked */
	k = kernel_narrow(&w, &lo, &flo, &hi, &fhi, 1e-3);
	assert_true(k >= 1 && hi - lo <= 1e-3);
	assert_true(lo < log(10.0) && log(10.0) < hi);
	/* six halvings take [-1.5, 2.5] to 1/16; a NaN at the middle of
	 * [1.7, 4.5] stops it; F is exactly 0 at the middle of [2, 2.5] */
	lo = -1.5;
	hi = 2.5;
	flo = -1.0;
	fhi = 1.0;
	assert_int_equal(kernel_narrow(&s, &lo, &flo, &hi, &fhi, 0.1), 6);
	assert_true(lo < 0.3183098861837907 && 0.3183098861837907 <= hi);
	lo = 1.7;
	hi = 4.5;
	flo = -0.55;
	fhi = INFINITY;
	assert_int_equal(kernel_narrow(&h, &lo, &flo, &hi, &fhi, INFINITY), -1);
	lo = 2.0;
	hi = 2.5;
	flo = -0.25;
	fhi = 0.25;
	assert_int_equal(kernel_narrow(&h, &lo, &flo, &hi, &fhi, 0.3), 1);
	assert_true(lo == 2.25 && hi == 2.25 && flo == 0.0 && fhi == 0.0);
}

/* (x - 0.7371)^2 + 1.3 and cos(x). */
static double f_parab(void *ctx, double x, double *step)
{
	(void)ctx;
	if (step != NULL)
		*step = NAN;
	return (x - 0.7371) * (x - 0.7371) + 1.3;
}
static double f_cos(void *ctx, double x, double *step)
{
	(void)ctx;
	if (step != NULL)
		*step = NAN;
	return cos(x);
}

/*
 * Golden section finds a minimum to about sqrt(eps) in x (the best a
 * search on function values can do near a quadratic minimum; Press et
 * al., Numerical Recipes, 3rd ed., 2007, sec. 10.2), shrinking the
 * interval by the golden ratio each step.
 */
static void test_golden(void **state)
{
	(void)state;
	struct kernel_fn p = { f_parab, NULL }, c = { f_cos, NULL };
	struct kernel_result r = kernel_golden_solve(&p, -0.4, 2.9, 1e-15, 0.0);
	assert_true(fabs(r.x - 0.7371) <= 3e-8);
	assert_true(fabs(r.fx - 1.3) <= 1e-15);
	r = kernel_golden_solve(&c, 2.1, 4.3, 1e-15, 0.0);
	assert_true(fabs(r.x - PI) <= 3e-8);
	struct kernel_golden g;
	kernel_golden_set(&g, &p, -0.4, 2.9);
	double w = g.b - g.a;
	kernel_golden_iterate(&g, &p);
	assert_true(fabs((g.b - g.a) / w - 0.6180339887498949) <= 1e-15);
}

/* Sampled test functions for the scan. */
static double f_sin(void *ctx, double x, double *step)
{
	(void)ctx;
	if (step != NULL)
		*step = NAN;
	return sin(7.31 * x);
}
static double f_dip(void *ctx, double x, double *step)
{
	(void)ctx;
	if (step != NULL)
		*step = NAN;
	return (x - 0.5137) * (x - 0.5137) - 1e-6; /* roots 0.5127, 0.5147 */
}
static double f_touch(void *ctx, double x, double *step)
{
	(void)ctx;
	if (step != NULL)
		*step = NAN;
	return (x - 0.4261) * (x - 0.4261); /* touches 0 at 0.4261 */
}
static double unit_scale(void *ctx, double x)
{
	(void)ctx;
	(void)x;
	return 1.0;
}

/* A function of x alone, and a wrapper that counts its calls. */
struct counted {
	double (*f)(double x);
	unsigned calls;
};
static double counted_eval(void *ctx, double x, double *step)
{
	struct counted *c = ctx;
	c->calls++;
	if (step != NULL)
		*step = NAN;
	return c->f(x);
}
static double f_dip_plain(double x)
{
	return f_dip(NULL, x, NULL);
}

/* Run the scan over N even samples of FN on [A, B]. */
static size_t scan_run(const struct kernel_fn *fn, double a, double b, int n,
                       struct kernel_bracket *out, size_t max)
{
	struct kernel_scan s;
	kernel_scan_init(&s, fn, unit_scale, 1e-9, out, max);
	for (int k = 0; k <= n; k++)
		kernel_scan_push(&s, a + (b - a) * k / n, fn->eval(fn->ctx,
		                                                    a + (b - a) * k / n,
		                                                    NULL));
	kernel_scan_end(&s);
	return s.n;
}

/*
 * The scan: every sign change of sin(7.31 x) on [0.1, 3.1] (roots
 * k pi / 7.31, k = 1..7) in order; a narrow dip between two samples
 * whose two crossings the samples straddle (found by the dip search, one
 * bracket each); a curve touching zero between samples (a tangent at the
 * touching point, to sqrt(eps)); and MAX respected.
 */
static void test_scan(void **state)
{
	(void)state;
	struct kernel_bracket br[16];
	struct kernel_fn fs = { f_sin, NULL }, fd = { f_dip, NULL },
	                 ft = { f_touch, NULL };
	size_t n = scan_run(&fs, 0.1, 3.1, 300, br, 16);
	assert_int_equal(n, 7);
	for (size_t k = 0; k < n; k++) {
		double root = (double)(k + 1) * PI / 7.31;
		assert_false(br[k].tangent);
		assert_true(br[k].lo <= root && root <= br[k].hi);
	}
	n = scan_run(&fd, 0.0, 1.0, 7, br, 16);
	assert_int_equal(n, 2);
	assert_true(br[0].lo <= 0.5127 && 0.5127 <= br[0].hi);
	assert_true(br[1].lo <= 0.5147 && 0.5147 <= br[1].hi);
	assert_true(br[0].hi <= br[1].lo);
	n = scan_run(&ft, 0.0, 1.0, 7, br, 16);
	assert_int_equal(n, 1);
	assert_true(br[0].tangent && br[0].lo == br[0].hi);
	assert_true(fabs(br[0].lo - 0.4261) <= 3e-8);
	n = scan_run(&fs, 0.1, 3.1, 300, br, 4);
	assert_int_equal(n, 4);
	/* Sign changes only (TANGENT < 0): the dip and the touch between
	 * samples are left alone, the sign changes all found, with no
	 * evaluation beyond the samples. */
	struct kernel_scan sc;
	struct counted cd = { f_dip_plain, 0 };
	struct kernel_fn fc = { counted_eval, &cd };
	kernel_scan_init(&sc, &fc, NULL, -1.0, br, 16);
	for (int k = 0; k <= 7; k++)
		kernel_scan_push(&sc, k / 7.0, fc.eval(fc.ctx, k / 7.0, NULL));
	kernel_scan_end(&sc);
	assert_int_equal(sc.n, 0);
	assert_int_equal(cd.calls, 8);
	kernel_scan_init(&sc, &fs, NULL, -1.0, br, 16);
	for (int k = 0; k <= 300; k++)
		kernel_scan_push(&sc, 0.1 + 3.0 * k / 300,
		                 fs.eval(fs.ctx, 0.1 + 3.0 * k / 300, NULL));
	kernel_scan_end(&sc);
	assert_int_equal(sc.n, 7);
}

/* The tests are pure: GSL's semantics of the interval test. */
static void test_tests(void **state)
{
	(void)state;
	assert_true(kernel_test_delta(1e-13, 1.0, 0.0, 1e-12));
	assert_false(kernel_test_delta(2e-12, 1.0, 0.0, 1e-12));
	assert_true(kernel_test_interval(1.0, 1.0 + 1e-13, 0.0, 1e-12));
	assert_false(kernel_test_interval(1.0, 1.0 + 1e-11, 0.0, 1e-12));
	/* Straddling 0: only the absolute part counts. */
	assert_false(kernel_test_interval(-1e-20, 1e-20, 0.0, 1e-12));
	assert_true(kernel_test_interval(-1e-20, 1e-20, 1e-19, 1e-12));
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_roots),
		cmocka_unit_test(test_brent_against_gsl),
		cmocka_unit_test(test_newton_bracket_and_limit),
		cmocka_unit_test(test_bisect),
		cmocka_unit_test(test_narrow),
		cmocka_unit_test(test_golden),
		cmocka_unit_test(test_scan),
		cmocka_unit_test(test_tests),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
