/*
 * test_sweep.c - parameter sweeps: every row against an independent solve
 * at that value, the spacing of linear and logarithmic sweeps, and folds
 * on an N-shaped test device located against the tangency condition.
 *
 * Folds.  For the test device I(V) = k (V^3 - b V^2 + c V) behind a
 * Thevenin source, F(V) = V + RS I(V) - VS has F'(V) = 1 + RS I'(V); the
 * number of operating points changes where the load line touches the
 * curve, F = F' = 0: 3 k RS V^2 - 2 b k RS V + (1 + c k RS) = 0 gives the
 * two tangent voltages, and VS = V + RS I(V) there (elementary calculus of
 * a cubic; the construction of a fold in a one-parameter family).
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cmocka.h>

#include "core/kernel.h"
#include "core/models/models.h"
#include "core/solve.h"
#include "core/sweep.h"

/* The N-shaped test device: I = k (V^3 - b V^2 + c V). */
static double ncubic_current(const double *p, double v)
{
	return p[0] * (v * v * v - p[1] * v * v + p[2] * v);
}

/* dI/dV of the test device. */
static double ncubic_conductance(const double *p, double v)
{
	return p[0] * (3.0 * v * v - 2.0 * p[1] * v + p[2]);
}

/* The test device's range. */
static void ncubic_range(const double *p, double *lo, double *hi)
{
	(void)p;
	*lo = -0.5;
	*hi = 3.0;
}

static const struct model_param ncubic_params[3] = {
	{ "scale", "k", QTY_NUMBER, 0.0137, 0.0, 10.0, true, false, false, "k", false, NULL },
	{ "bend", "b", QTY_NUMBER, 3.1, 0.0, 10.0, false, false, false, "b", false, NULL },
	{ "slope", "c", QTY_NUMBER, 2.7, 0.0, 10.0, false, false, false, "c", false, NULL },
};

static const struct model_type ncubic = {
	.name = "test-n-shape",
	.summary = "N-shaped cubic for tests",
	.params = ncubic_params,
	.nparams = 3,
	.monotone = false,
	.current = ncubic_current,
	.conductance = ncubic_conductance,
	.range = ncubic_range,
};

/* A Thevenin problem on TYPE with parameters P. */
static void make_problem(struct problem *pb, const struct model_type *t,
                         const double *p, double vs, double rs)
{
	struct source_spec sp;
	char err[200];
	memset(pb, 0, sizeof *pb); /* no network */
	source_spec_thevenin(&sp, vs, rs);
	assert_int_equal(source_from_spec(&sp, &pb->src, err, sizeof err), 0);
	device_init(&pb->dev, t);
	for (size_t k = 0; k < t->nparams && !isnan(p[k]); k++)
		pb->dev.p[k] = p[k];
	if (device_validate(&pb->dev, err, sizeof err) != 0)
		fail_msg("%s", err);
}

/*
 * Every row is an operating point (solve_verify: on the load line and on
 * the curve); for a monotone device it equals an independent solve.
 */
static void check_rows(const struct problem *pb, const struct sweep_spec *sp,
                       const struct sweep_result *res)
{
	struct solve_options o;
	solve_options_init(&o);
	for (size_t k = 0; k < res->nrows; k++) {
		const struct sweep_row *row = &res->rows[k];
		struct problem q = *pb;
		assert_int_equal(paramref_set(&q, &sp->param, row->value), 0);
		if (!solve_verify(&q, row->v, row->i, 1e-10))
			fail_msg("row %zu (value %.10g): (%.12g V, %.12g A) is not an "
			         "operating point", k, row->value, row->v, row->i);
		assert_true(fabs(row->p - row->v * row->i) <=
		            1e-15 * fabs(row->p) + 1e-300);
		if (!pb->dev.type->monotone)
			continue;
		struct solve_result ref;
		assert_int_equal(solve_problem(&q, &o, &ref), SOLVE_OK);
		assert_int_equal(ref.n, 1);
		assert_int_equal(row->count, 1);
		const struct op_point *pt = &ref.pts[0];
		if (fabs(pt->v - row->v) > 1e-9 * (fabs(pt->v) + 1e-9) ||
		    fabs(pt->i - row->i) > 1e-9 * (fabs(pt->i) + 1e-15))
			fail_msg("row %zu (value %.10g): (%.12g V, %.12g A), "
			         "independent (%.12g V, %.12g A)", k, row->value,
			         row->v, row->i, pt->v, pt->i);
	}
}

/* Logarithmic RS sweep of a diode, and a linear temperature sweep. */
static void test_monotone_sweeps(void **state)
{
	(void)state;
	static const double dp[] = { 3.17e-18, 1.93, 1.37, 27.3, NAN };
	struct problem pb;
	make_problem(&pb, &model_diode, dp, 23.7, 1000.0);
	struct solve_options o;
	solve_options_init(&o);
	char err[200];
	struct sweep_spec sp = { .from = 137.0, .to = 10.7e3, .points = 57,
	                         .scale = SWEEP_LOG };
	assert_int_equal(paramref_find(&pb, "rs", &sp.param, err, sizeof err), 0);
	struct sweep_result res;
	assert_int_equal(sweep_run(&pb, &o, &sp, &res), 0);
	assert_int_equal(res.nrows, 57);
	assert_int_equal(res.nfolds, 0);
	assert_int_equal(res.failed, 0);
	assert_true(res.rows[0].value == 137.0 && res.rows[56].value == 10.7e3);
	/* Equal ratios between log-spaced values. */
	double ratio = pow(10.7e3 / 137.0, 1.0 / 56.0);
	for (size_t k = 1; k < 57; k++)
		assert_true(fabs(res.rows[k].value / res.rows[k - 1].value - ratio) <
		            1e-12);
	/* More resistance, less current. */
	for (size_t k = 1; k < 57; k++)
		assert_true(res.rows[k].i < res.rows[k - 1].i);
	check_rows(&pb, &sp, &res);
	sweep_result_fini(&res);

	/* Temperature, linear, -23.5 to 84.7 degC, 31 points. */
	sp = (struct sweep_spec){ .from = -23.5, .to = 84.7, .points = 31,
	                          .scale = SWEEP_LINEAR };
	assert_int_equal(paramref_find(&pb, "temperature", &sp.param, err,
	                               sizeof err), 0);
	assert_int_equal(sweep_run(&pb, &o, &sp, &res), 0);
	assert_int_equal(res.nrows, 31);
	for (size_t k = 1; k < 31; k++)
		assert_true(fabs(res.rows[k].value - res.rows[k - 1].value -
		                 108.2 / 30.0) < 1e-12);
	check_rows(&pb, &sp, &res);
	sweep_result_fini(&res);

	/* A single point is just FROM. */
	sp.points = 1;
	assert_int_equal(sweep_run(&pb, &o, &sp, &res), 0);
	assert_int_equal(res.nrows, 1);
	assert_true(res.rows[0].value == -23.5);
	sweep_result_fini(&res);
}

/* The two tangent source voltages of the test device behind RS. */
static void tangent_vs(const double *p, double rs, double *vs_lo, double *vs_hi)
{
	double k = p[0], b = p[1], c = p[2];
	double qa = 3.0 * k * rs, qb = -2.0 * b * k * rs, qc = 1.0 + c * k * rs;
	double d = sqrt(qb * qb - 4.0 * qa * qc);
	double v1 = (-qb - d) / (2.0 * qa), v2 = (-qb + d) / (2.0 * qa);
	double a1 = v1 + rs * ncubic_current(p, v1);
	double a2 = v2 + rs * ncubic_current(p, v2);
	*vs_lo = fmin(a1, a2);
	*vs_hi = fmax(a1, a2);
}

/* Sweeping VS across the N-shaped device: 1, 3, then 1 point. */
static void test_folds(void **state)
{
	(void)state;
	static const double np[] = { 0.0137, 3.1, 2.7 };
	struct problem pb;
	make_problem(&pb, &ncubic, np, 2.5, 217.0);
	double f1, f2;
	tangent_vs(np, 217.0, &f1, &f2);
	assert_true(f1 > 2.55 && f2 < 2.95 && f2 - f1 > 0.05);
	struct solve_options o;
	solve_options_init(&o);
	char err[200];
	struct sweep_spec sp = { .from = 2.513, .to = 2.987, .points = 97,
	                         .scale = SWEEP_LINEAR };
	assert_int_equal(paramref_find(&pb, "vs", &sp.param, err, sizeof err), 0);
	struct sweep_result res;
	assert_int_equal(sweep_run(&pb, &o, &sp, &res), 0);
	if (getenv("SWEEP_DEBUG"))
		for (size_t k = 0; k < res.nfolds; k++)
			printf("fold %zu: %.12g (%zu -> %zu) [%g %g]\n", k,
			       res.folds[k].value, res.folds[k].n_before,
			       res.folds[k].n_after, f1, f2);
	if (res.nfolds != 2)
		fail_msg("%zu folds, expected 2", res.nfolds);
	assert_int_equal(res.folds[0].n_before, 1);
	assert_int_equal(res.folds[0].n_after, 3);
	assert_int_equal(res.folds[1].n_before, 3);
	assert_int_equal(res.folds[1].n_after, 1);
	/* Located to well within one sweep step of the tangency. */
	if (fabs(res.folds[0].value - f1) > 1e-6 ||
	    fabs(res.folds[1].value - f2) > 1e-6)
		fail_msg("folds at %.10g and %.10g V, tangency at %.10g and %.10g V",
		         res.folds[0].value, res.folds[1].value, f1, f2);
	/* Rows: three points, ordered by voltage, between the folds. */
	for (size_t k = 0; k < res.nrows; k++) {
		const struct sweep_row *r = &res.rows[k];
		size_t expect = r->value > f1 && r->value < f2 ? 3 : 1;
		assert_int_equal(r->count, expect);
		/* Distinct, by voltage. */
		if (r->index > 0)
			assert_true(res.rows[k - 1].v < r->v - 1e-6);
	}
	check_rows(&pb, &sp, &res);
	sweep_result_fini(&res);
	/* And back down, logarithmically: the same folds, reversed. */
	sp = (struct sweep_spec){ .param = sp.param, .from = 2.987, .to = 2.513,
	                          .points = 61, .scale = SWEEP_LOG };
	assert_int_equal(sweep_run(&pb, &o, &sp, &res), 0);
	assert_int_equal(res.nfolds, 2);
	assert_true(fabs(res.folds[0].value - f2) < 1e-6);
	assert_true(fabs(res.folds[1].value - f1) < 1e-6);
	sweep_result_fini(&res);
}

/* Bad sweeps are refused with a reason and nothing to free. */
static void test_bad_sweeps(void **state)
{
	(void)state;
	static const double dp[] = { 2.385e-9, 1.87, 0.0, 41.7, NAN };
	struct problem pb;
	make_problem(&pb, &model_diode, dp, 5.13, 1000.0);
	struct solve_options o;
	solve_options_init(&o);
	char err[200];
	struct paramref rs, is;
	assert_int_equal(paramref_find(&pb, "rs", &rs, err, sizeof err), 0);
	assert_int_equal(paramref_find(&pb, "saturation_current", &is, err,
	                               sizeof err), 0);
	const struct {
		struct sweep_spec sp;
		const char *says;
	} bad[] = {
		{ { rs, 100.0, 1e4, 0, SWEEP_LINEAR }, "number of points" },
		{ { rs, 100.0, 1e4, SWEEP_MAX_POINTS + 1, SWEEP_LINEAR },
		  "number of points" },
		{ { rs, -100.0, 1e4, 11, SWEEP_LINEAR }, "at least 0" },
		{ { rs, 0.0, 1e4, 11, SWEEP_LOG }, "logarithmic" },
		{ { rs, 100.0, NAN, 11, SWEEP_LINEAR }, "finite" },
		{ { is, 1e-12, 3.0, 11, SWEEP_LOG }, "saturation_current" },
	};
	for (size_t k = 0; k < sizeof bad / sizeof bad[0]; k++) {
		struct sweep_result res;
		assert_int_equal(sweep_run(&pb, &o, &bad[k].sp, &res), -1);
		if (strstr(res.message, bad[k].says) == NULL)
			fail_msg("bad sweep %zu: \"%s\" lacks \"%s\"", k, res.message,
			         bad[k].says);
		assert_null(res.rows);
		sweep_result_fini(&res);
	}
	/* vs and rs cannot move an ideal current source. */
	struct source_spec sp;
	source_spec_norton(&sp, 0.0137, INFINITY);
	assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
	assert_int_equal(paramref_find(&pb, "vs", &rs, err, sizeof err), -1);
	assert_non_null(strstr(err, "ideal current source"));
}

/* ---- the sweep as it ran before its scans were shared ------------------ */

/*
 * What follows is the sweep's solve as it was before each step's scan
 * served the continuation too: each previous point continued by a Newton
 * solve of its own (which scans the problem again to find its bracket),
 * then Brent-Dekker on each of the scan's brackets no point lies in.  The
 * sweep must give exactly its rows and folds, bit for bit.
 */

/* The old sweep's test for a point already found. */
static bool old_has_point(const struct solve_result *res, double v)
{
	for (size_t k = 0; k < res->n; k++)
		if (fabs(res->pts[k].v - v) <= 1e-9 * (fabs(v) + 1e-6))
			return true;
	return false;
}

/* Points by voltage. */
static int old_cmp(const void *a, const void *b)
{
	const struct op_point *p = a, *q = b;
	return (p->v > q->v) - (p->v < q->v);
}

/* The old sweep's Brent-Dekker on the scan's brackets RES lacks. */
static void old_fill_missing(const struct problem *pb,
                             const struct solve_options *o,
                             const struct bracket *br, size_t nb,
                             struct solve_result *res)
{
	if (nb <= res->n)
		return;
	const struct model_type *t = pb->dev.type;
	double rser = t->series_resistance ? t->series_resistance(pb->dev.p) : 0.0;
	struct stepper *st = stepper_create();
	assert_non_null(st);
	struct solve_options no = *o;
	no.method = METHOD_BRENT;
	no.start_v = NAN;
	for (size_t k = 0; k < nb && res->n < SOLVE_MAX_POINTS; k++) {
		if (br[k].tangent || br[k].in_current)
			continue;
		bool have = false;
		double slack = 1e-9 * (fabs(br[k].lo) + fabs(br[k].hi)) + 1e-12;
		for (size_t j = 0; j < res->n && !have; j++) {
			double x = res->pts[j].v - rser * res->pts[j].i;
			have = x >= br[k].lo - slack && x <= br[k].hi + slack;
		}
		if (have || stepper_init_bracket(st, pb, &no, &br[k]) != 0 ||
		    stepper_run(st) != STEP_CONVERGED)
			continue;
		const struct trace_row *last = stepper_last(st);
		if (!solve_verify(pb, last->v, last->i, o->tol))
			continue;
		struct op_point pt = { .v = last->v, .i = last->i,
		                       .steps = (unsigned)last->k,
		                       .method = METHOD_BRENT };
		solve_finish_point(pb, &pt);
		res->pts[res->n++] = pt;
		res->status = SOLVE_OK;
	}
	stepper_destroy(st);
}

/* The old sweep's points of PB continuing from PREV. */
static void old_solve(const struct problem *pb, const struct solve_options *o,
                      const struct op_point *prev, size_t nprev,
                      struct solve_result *res)
{
	struct solve_options no = *o;
	no.method = METHOD_AUTO;
	no.start_v = NAN;
	struct bracket br[SOLVE_MAX_POINTS];
	size_t nb;
	if (solve_problem_brackets(pb, &no, res, br, &nb) == SOLVE_BAD_INPUT ||
	    pb->dev.type->monotone)
		return;
	for (size_t k = 0; k < nprev && res->n < SOLVE_MAX_POINTS; k++) {
		struct solve_result one;
		no.method = METHOD_NEWTON;
		no.start_v = prev[k].v;
		if (solve_problem(pb, &no, &one) != SOLVE_OK || one.n != 1)
			continue;
		if (old_has_point(res, one.pts[0].v))
			continue;
		res->pts[res->n++] = one.pts[0];
		res->status = SOLVE_OK;
	}
	old_fill_missing(pb, o, br, nb, res);
	qsort(res->pts, res->n, sizeof res->pts[0], old_cmp);
}

/* The old count at X, and its sign for the bisection. */
struct old_count {
	const struct problem *pb;
	const struct solve_options *o;
	const struct paramref *r;
	size_t na;
};
static double old_count_sign(void *ctx, double x, double *step)
{
	const struct old_count *c = ctx;
	if (step != NULL)
		*step = NAN;
	struct problem q = *c->pb;
	struct solve_result res;
	size_t n = 0;
	if (paramref_set(&q, c->r, x) == 0) {
		old_solve(&q, c->o, NULL, 0, &res);
		n = res.status == SOLVE_OK ? res.n : 0;
	}
	return n == c->na ? -1.0 : 1.0;
}

/* Run the old sweep of SP and compare it with RES, bit for bit. */
static void check_as_before(const struct problem *pb,
                            const struct solve_options *o,
                            const struct sweep_spec *sp,
                            const struct sweep_result *res, const char *what)
{
	struct op_point prev[SOLVE_MAX_POINTS];
	size_t nprev = 0, row = 0, fold = 0, failed = 0;
	double prev_value = NAN;
	for (size_t k = 0; k < sp->points; k++) {
		double x = sweep_value(sp, k);
		struct problem q = *pb;
		struct solve_result sr;
		paramref_set(&q, &sp->param, x);
		old_solve(&q, o, prev, nprev, &sr);
		size_t n = sr.status == SOLVE_OK ? sr.n : 0;
		failed += n == 0;
		if (k > 0 && n != nprev) {
			struct old_count c = { pb, o, &sp->param, nprev };
			struct kernel_fn fn = { old_count_sign, &c };
			struct kernel_result kr = kernel_bisect_solve(
				&fn, prev_value, -1.0, x, sp->scale == SWEEP_LOG, 1e-12);
			if (fold >= res->nfolds)
				fail_msg("%s: a fold at step %zu the sweep lacks", what, k);
			const struct sweep_fold *f = &res->folds[fold++];
			if (f->step != k || f->n_before != nprev || f->n_after != n ||
			    memcmp(&f->value, &kr.x, sizeof kr.x) != 0 ||
			    memcmp(&f->lo, &kr.lo, sizeof kr.lo) != 0 ||
			    memcmp(&f->hi, &kr.hi, sizeof kr.hi) != 0)
				fail_msg("%s: fold at step %zu (%zu -> %zu at %.17g), before "
				         "step %zu (%zu -> %zu at %.17g)", what, f->step,
				         f->n_before, f->n_after, f->value, k, nprev, n, kr.x);
		}
		for (size_t j = 0; j < n; j++, row++) {
			if (row >= res->nrows)
				fail_msg("%s: step %zu has more points before", what, k);
			const struct sweep_row *r = &res->rows[row];
			if (r->step != k || r->index != j || r->count != n ||
			    memcmp(&r->value, &x, sizeof x) != 0 ||
			    memcmp(&r->v, &sr.pts[j].v, sizeof r->v) != 0 ||
			    memcmp(&r->i, &sr.pts[j].i, sizeof r->i) != 0 ||
			    memcmp(&r->p, &sr.pts[j].power, sizeof r->p) != 0)
				fail_msg("%s: step %zu point %zu is (%.17g V, %.17g A) of "
				         "%zu, before (%.17g V, %.17g A) of %zu", what, k, j,
				         r->v, r->i, r->count, sr.pts[j].v, sr.pts[j].i, n);
		}
		memcpy(prev, sr.pts, n * sizeof prev[0]);
		nprev = n;
		prev_value = x;
	}
	assert_int_equal(row, res->nrows);
	assert_int_equal(fold, res->nfolds);
	assert_int_equal(failed, res->failed);
}

/*
 * Sweeps of curves that are not monotone, through their folds: the
 * tunnel diode (cut at its inflection), the N-shaped test device
 * (sampled), an n-channel MOSFET and a JFET stage (sampled, with the
 * source's resistance bound into the curve), over the source and a
 * device parameter, with a few starting values for each.  Each equals
 * the sweep as it ran before, bit for bit.  (Values invented.)
 */
static void test_sweep_as_before(void **state)
{
	(void)state;
	static const double np[] = { 0.0137, 3.1, 2.7 };
	static const double tp[] = { NAN };
	static const double mp[] = { 2.2e-3, 1.35, 12.0, 1.8e3, NAN };
	static const double jp[] = { 8.7e-3, -2.3, 15.0, 1.1e3, NAN };
	const struct {
		const struct model_type *t;
		const double *p;
		double vs, rs;
		const char *key;
		double from, to;
		size_t points;
		enum sweep_scale scale;
	} cases[] = {
		{ &model_tunnel, tp, 0.45, 470.0, "vs", 0.0, 0.9, 181, SWEEP_LINEAR },
		{ &model_tunnel, tp, 0.9, 470.0, "vs", 0.9, 0.0, 77, SWEEP_LINEAR },
		{ &model_tunnel, tp, 0.4, 470.0, "rs", 10.0, 2000.0, 93, SWEEP_LOG },
		{ &model_tunnel, tp, 0.4, 400.0, "peak_current", 0.5e-3, 2e-3, 61,
		  SWEEP_LINEAR },
		{ &ncubic, np, 2.5, 217.0, "vs", 2.513, 2.987, 97, SWEEP_LINEAR },
		{ &ncubic, np, 2.7, 217.0, "rs", 60.0, 900.0, 71, SWEEP_LOG },
		{ &model_nmos, mp, 4.7, 1.5e3, "vs", 1.0, 9.0, 83, SWEEP_LINEAR },
		{ &model_jfet, jp, 0.0, 390.0, "rs", 100.0, 2000.0, 67, SWEEP_LOG },
	};
	for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
		struct problem pb;
		make_problem(&pb, cases[k].t, cases[k].p, cases[k].vs, cases[k].rs);
		problem_bind(&pb);
		struct solve_options o;
		solve_options_init(&o);
		char err[200], what[64];
		struct sweep_spec sp = { .from = cases[k].from, .to = cases[k].to,
		                         .points = cases[k].points,
		                         .scale = cases[k].scale };
		assert_int_equal(paramref_find(&pb, cases[k].key, &sp.param, err,
		                               sizeof err), 0);
		struct sweep_result res;
		if (sweep_run(&pb, &o, &sp, &res) != 0)
			fail_msg("case %zu: %s", k, res.message);
		snprintf(what, sizeof what, "case %zu (%s over %s)", k,
		         cases[k].t->name, cases[k].key);
		check_as_before(&pb, &o, &sp, &res, what);
		size_t most = 0;
		for (size_t j = 0; j < res.nrows; j++)
			most = res.rows[j].count > most ? res.rows[j].count : most;
		print_message("# %s: %zu rows, %zu folds, up to %zu points\n", what,
		              res.nrows, res.nfolds, most);
		sweep_result_fini(&res);
	}
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_monotone_sweeps),
		cmocka_unit_test(test_folds),
		cmocka_unit_test(test_sweep_as_before),
		cmocka_unit_test(test_bad_sweeps),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
