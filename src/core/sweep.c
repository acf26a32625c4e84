/*
 * sweep.c - operating points along a parameter sweep (see sweep.h).
 */
#include "sweep.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "kernel.h"
#include "solve.h"
#include "thermal.h"

/* How closely bisection locates a fold in the parameter (relative). */
#define SWEEP_FOLD_REL 1e-12

/* Empty R. */
void sweep_result_init(struct sweep_result *r)
{
	memset(r, 0, sizeof *r);
}

/* Free what R owns. */
void sweep_result_fini(struct sweep_result *r)
{
	free(r->rows);
	free(r->folds);
	sweep_result_init(r);
}

/* The K-th value. */
double sweep_value(const struct sweep_spec *sp, size_t k)
{
	if (sp->points <= 1 || k == 0)
		return sp->from;
	if (k >= sp->points - 1)
		return sp->to;
	double t = (double)k / (double)(sp->points - 1);
	if (sp->scale == SWEEP_LOG)
		return sp->from * pow(sp->to / sp->from, t);
	return sp->from + (sp->to - sp->from) * t;
}

/* True when point P is already in RES (same voltage to rounding). */
static bool sweep_has_point(const struct solve_result *res, double v)
{
	for (size_t k = 0; k < res->n; k++)
		if (fabs(res->pts[k].v - v) <= 1e-9 * (fabs(v) + 1e-6))
			return true;
	return false;
}

/* Order points by voltage. */
static int sweep_cmp(const void *a, const void *b)
{
	const struct op_point *p = a, *q = b;
	return (p->v > q->v) - (p->v < q->v);
}

/*
 * Refine with Brent-Dekker every crossing of the every-root scan (its
 * brackets BR, NB of them) that RES lacks.  (The scan's Newton refinement
 * can lose a crossing where the residual falls through zero, the middle
 * point of an N-shaped curve; Brent keeps any sign-change bracket.)
 */
static void sweep_fill_missing(const struct problem *pb,
                               const struct solve_options *o,
                               const struct bracket *br, size_t nb,
                               struct solve_result *res)
{
	if (nb <= res->n)
		return;
	const struct model_type *t = pb->dev.type;
	double rser = t->series_resistance ? t->series_resistance(pb->dev.p) : 0.0;
	struct stepper *st = stepper_create();
	if (st == NULL)
		return;
	struct solve_options no = *o;
	no.method = METHOD_BRENT;
	no.start_v = NAN;
	for (size_t k = 0; k < nb && res->n < SOLVE_MAX_POINTS; k++) {
		if (br[k].tangent || br[k].in_current)
			continue;
		/* Already found: a point whose bracket variable is inside. */
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

/*
 * Newton from START (the previous point's voltage) on the bracket of BR
 * (NB of them, one every-root scan of PB) whose middle is nearest START,
 * into *PT: what a Newton solve from START finds, since it scans PB the
 * same way and starts on the same bracket (stepper_find_bracket), without
 * scanning again.  ST is a stepper to reuse.  Returns 0, or -1 when it
 * does not converge to a verified point.
 */
static int sweep_continue(const struct problem *pb,
                          const struct solve_options *o,
                          const struct bracket *br, size_t nb, double start,
                          struct stepper *st, struct op_point *pt)
{
	size_t best = nb;
	double dist = INFINITY;
	for (size_t k = 0; k < nb; k++) {
		if (br[k].tangent || br[k].in_current)
			continue;
		double d = fabs(0.5 * (br[k].lo + br[k].hi) - start);
		if (d < dist) {
			dist = d;
			best = k;
		}
	}
	struct solve_options no = *o;
	no.method = METHOD_NEWTON;
	no.start_v = start;
	if (best == nb || stepper_init_bracket(st, pb, &no, &br[best]) != 0 ||
	    stepper_run(st) != STEP_CONVERGED)
		return -1;
	const struct trace_row *last = stepper_last(st);
	if (last == NULL || !solve_verify(pb, last->v, last->i, o->tol))
		return -1;
	*pt = (struct op_point){ .v = last->v, .i = last->i,
	                         .steps = (unsigned)last->k,
	                         .method = METHOD_NEWTON };
	solve_finish_point(pb, pt);
	return 0;
}

/*
 * All operating points of PB, continuing from the PREV points (NPREV of
 * them; none at the first step).  A monotone device has one, which the
 * default solve finds directly (in closed form for a junction); any other
 * gets one every-root scan, whose brackets serve the continuation of each
 * previous point (Newton from it, on the bracket nearest it) and then
 * find what neither the scan's refinement nor the continuation reached.
 * A self-heated part's points come from its heat balance, which gives
 * the same points from any start, and a curve given as V(I) has no
 * Newton continuation: neither is continued.
 */
static void sweep_solve(const struct problem *pb, const struct solve_options *o,
                        const struct op_point *prev, size_t nprev,
                        struct solve_result *res)
{
	struct solve_options no = *o;
	no.method = METHOD_AUTO;
	no.start_v = NAN;
	struct bracket br[SOLVE_MAX_POINTS];
	size_t nb;
	/* Refused with the key when a value made the device invalid. */
	if (solve_problem_brackets(pb, &no, res, br, &nb) == SOLVE_BAD_INPUT)
		return;
	const struct model_type *t = pb->dev.type;
	if (t->monotone || thermal_active(&pb->dev) || t->current == NULL)
		return;
	/* The scan's brackets serve when it ran and held them all; else each
	 * continuation is a Newton solve of its own. */
	bool reuse = nb > 0 && nb < SOLVE_MAX_POINTS;
	struct stepper *st = reuse ? stepper_create() : NULL;
	reuse = st != NULL;
	/* Continue each previous point; keep the ones the scan missed. */
	for (size_t k = 0; k < nprev && res->n < SOLVE_MAX_POINTS; k++) {
		struct op_point pt;
		if (reuse) {
			if (sweep_continue(pb, o, br, nb, prev[k].v, st, &pt) != 0)
				continue;
		} else {
			struct solve_result one;
			no.method = METHOD_NEWTON;
			no.start_v = prev[k].v;
			if (solve_problem(pb, &no, &one) != SOLVE_OK || one.n != 1)
				continue;
			pt = one.pts[0];
		}
		if (sweep_has_point(res, pt.v))
			continue;
		res->pts[res->n++] = pt;
		res->status = SOLVE_OK;
	}
	stepper_destroy(st);
	sweep_fill_missing(pb, o, br, nb, res);
	qsort(res->pts, res->n, sizeof res->pts[0], sweep_cmp);
}

/* Number of operating points of PB with R set to X (every-root scan). */
static size_t sweep_count_at(const struct problem *pb,
                             const struct solve_options *o,
                             const struct paramref *r, double x)
{
	struct problem q = *pb;
	struct solve_result res;
	if (paramref_set(&q, r, x) != 0)
		return 0;
	sweep_solve(&q, o, NULL, 0, &res);
	return res.status == SOLVE_OK ? res.n : 0;
}

/* What sweep_locate bisects: the count at a value against NA. */
struct sweep_count_ctx {
	const struct problem *pb;
	const struct solve_options *o;
	const struct paramref *r;
	size_t na;
	const struct progress *pr;
};

/* -1 where the count is the one before the change, +1 where it is not. */
static double sweep_count_sign(void *ctx, double x, double *step)
{
	const struct sweep_count_ctx *c = ctx;
	if (step != NULL)
		*step = NAN;
	if (progress_stopped(c->pr))
		return NAN; /* ends the bisection */
	return sweep_count_at(c->pb, c->o, c->r, x) == c->na ? -1.0 : 1.0;
}

/* Locate a change of count between A (count NA) and B by bisection. */
static void sweep_locate(const struct problem *pb,
                         const struct solve_options *o,
                         const struct sweep_spec *sp, double a, size_t na,
                         double b, struct sweep_fold *f,
                         const struct progress *pr)
{
	struct sweep_count_ctx c = { pb, o, &sp->param, na, pr };
	struct kernel_fn fn = { sweep_count_sign, &c };
	struct kernel_result r = kernel_bisect_solve(
		&fn, a, -1.0, b, sp->scale == SWEEP_LOG, SWEEP_FOLD_REL);
	f->lo = r.lo;
	f->hi = r.hi;
	f->value = r.x;
}

/* Append a row, growing the array; returns 0 or -1. */
static int sweep_push_row(struct sweep_result *out, size_t *cap,
                          const struct sweep_row *row)
{
	if (out->nrows == *cap) {
		size_t nc = *cap ? 2 * *cap : 256;
		struct sweep_row *nr = realloc(out->rows, nc * sizeof *nr);
		if (nr == NULL)
			return -1;
		out->rows = nr;
		*cap = nc;
	}
	out->rows[out->nrows++] = *row;
	return 0;
}

/* Append a fold; returns 0 or -1. */
static int sweep_push_fold(struct sweep_result *out, size_t *cap,
                           const struct sweep_fold *f)
{
	if (out->nfolds == *cap) {
		size_t nc = *cap ? 2 * *cap : 8;
		struct sweep_fold *nf = realloc(out->folds, nc * sizeof *nf);
		if (nf == NULL)
			return -1;
		out->folds = nf;
		*cap = nc;
	}
	out->folds[out->nfolds++] = *f;
	return 0;
}

/* Check the spec; returns 0 or -1 with a message in OUT. */
static int sweep_check(const struct problem *pb, const struct sweep_spec *sp,
                       struct sweep_result *out)
{
	char err[200];
	if (sp->points < 1 || sp->points > SWEEP_MAX_POINTS) {
		snprintf(out->message, sizeof out->message,
		         "the number of points must be 1 to %d", SWEEP_MAX_POINTS);
		return -1;
	}
	if (!isfinite(sp->from) || !isfinite(sp->to)) {
		snprintf(out->message, sizeof out->message,
		         "the sweep's ends must be finite numbers");
		return -1;
	}
	if (sp->scale == SWEEP_LOG && !(sp->from * sp->to > 0.0)) {
		snprintf(out->message, sizeof out->message,
		         "a logarithmic sweep needs two ends of one sign, not 0");
		return -1;
	}
	for (int e = 0; e < 2; e++) {
		double x = e == 0 ? sp->from : sp->to;
		if (paramref_check(pb, &sp->param, x, err, sizeof err) != 0) {
			snprintf(out->message, sizeof out->message, "%s", err);
			return -1;
		}
	}
	return 0;
}

/* Run the sweep. */
int sweep_run(const struct problem *pb, const struct solve_options *o,
              const struct sweep_spec *sp, struct sweep_result *out)
{
	return sweep_run_watched(pb, o, sp, out, NULL);
}

/* Run the sweep, watched. */
int sweep_run_watched(const struct problem *pb, const struct solve_options *o,
                      const struct sweep_spec *sp, struct sweep_result *out,
                      const struct progress *pr)
{
	sweep_result_init(out);
	if (sweep_check(pb, sp, out) != 0)
		return -1;
	size_t rcap = 0, fcap = 0;
	struct op_point prev[SOLVE_MAX_POINTS];
	size_t nprev = 0;
	bool have_prev = false;
	double prev_value = NAN;
	for (size_t k = 0; k < sp->points; k++) {
		if (progress_stopped(pr)) {
			sweep_result_fini(out);
			snprintf(out->message, sizeof out->message,
			         "stopped after %zu of %zu points", k, sp->points);
			return -1;
		}
		progress_item(pr, k, sp->points);
		double x = sweep_value(sp, k);
		struct problem q = *pb;
		struct solve_result res;
		paramref_set(&q, &sp->param, x);
		sweep_solve(&q, o, prev, nprev, &res);
		size_t n = res.status == SOLVE_OK ? res.n : 0;
		if (n == 0)
			out->failed++;
		if (have_prev && n != nprev) {
			struct sweep_fold f = { .step = k, .n_before = nprev,
			                        .n_after = n };
			sweep_locate(pb, o, sp, prev_value, nprev, x, &f, pr);
			if (sweep_push_fold(out, &fcap, &f) != 0)
				goto no_memory;
		}
		for (size_t j = 0; j < n; j++) {
			struct sweep_row row = { .step = k, .value = x, .index = j,
			                         .count = n, .v = res.pts[j].v,
			                         .i = res.pts[j].i,
			                         .p = res.pts[j].power };
			if (sweep_push_row(out, &rcap, &row) != 0)
				goto no_memory;
		}
		memcpy(prev, res.pts, n * sizeof prev[0]);
		nprev = n;
		have_prev = true;
		prev_value = x;
	}
	return 0;
no_memory:
	sweep_result_fini(out);
	snprintf(out->message, sizeof out->message, "out of memory");
	return -1;
}
