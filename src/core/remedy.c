/*
 * remedy.c - a setting that converges, found by running it (see remedy.h).
 */
#include "remedy.h"

#include <math.h>
#include <stdbool.h>
#include <stdio.h>

#include "diagnose.h"
#include "solve.h"

/* True when the stepper run with O converges to one of RES's points. */
static bool remedy_try(const struct problem *pb, const struct solve_options *o,
                         const struct solve_result *res, struct stepper *st)
{
	if (stepper_init(st, pb, o) != 0 || stepper_run(st) != STEP_CONVERGED)
		return false;
	const struct trace_row *last = stepper_last(st);
	if (last == NULL || !solve_verify(pb, last->v, last->i, o->tol))
		return false;
	for (size_t k = 0; k < res->n; k++) {
		double dv = fabs(last->v - res->pts[k].v);
		double di = fabs(last->i - res->pts[k].i);
		if (dv <= 1e-6 * fmax(fabs(res->pts[k].v), 1e-3) ||
		    di <= 1e-6 * fmax(fabs(res->pts[k].i), 1e-9))
			return true;
	}
	return false;
}

/* The optimal relaxation factor of ORDER at the point nearest V0, in (0, 2]. */
static double remedy_relaxation(const struct problem *pb,
                                  enum projection_order order,
                                  const struct solve_result *res, double v0)
{
	size_t best = 0;
	for (size_t k = 1; k < res->n; k++)
		if (fabs(res->pts[k].v - v0) < fabs(res->pts[best].v - v0))
			best = k;
	struct diagnosis d;
	diagnose_at(pb, order, res->pts[best].v, 1e-12, 1.0, &d);
	/* Rate 1 - w + w g': w* = 1/(1 - g'); no w in (0, 2] helps g' >= 1. */
	if (!isfinite(d.gprime) || !(d.gprime < 1.0))
		return NAN;
	return fmin(2.0, 1.0 / (1.0 - d.gprime));
}

/* Find a setting that converges (see remedy.h). */
int remedy_find(const struct problem *pb, const struct solve_options *o,
                struct remedy *r)
{
	snprintf(r->text, sizeof r->text, "use auto (every crossing, then "
	         "newton on each)");
	r->method = METHOD_AUTO;
	r->order = o->order;
	r->relaxation = NAN;
	struct solve_options ao = *o;
	ao.method = METHOD_AUTO;
	struct solve_result res;
	if (solve_problem(pb, &ao, &res) != SOLVE_OK || res.n == 0)
		return -1;
	struct stepper *st = stepper_create();
	if (st == NULL)
		return -1;
	enum projection_order other = o->order == ORDER_VOLTAGE_FROM_LINE
	                                  ? ORDER_VOLTAGE_FROM_DEVICE
	                                  : ORDER_VOLTAGE_FROM_LINE;
	double v0 = isnan(o->start_v) ? 0.0 : o->start_v;
	struct solve_options c = *o;
	int found = -1;
	/* 1: the other projection order. */
	c.method = METHOD_PROJECTION;
	c.order = other;
	if (!(o->method == METHOD_PROJECTION && o->order == other) &&
	    remedy_try(pb, &c, &res, st)) {
		snprintf(r->text, sizeof r->text, "switch to %s",
		         projection_order_name(other));
		found = 0;
	}
	/* 2, 3: relaxation in this order, then the other. */
	for (int k = 0; k < 2 && found != 0; k++) {
		c.method = METHOD_RELAXED;
		c.order = k == 0 ? o->order : other;
		c.omega = remedy_relaxation(pb, c.order, &res, v0);
		if (isnan(c.omega) || !(c.omega > 0.0))
			continue;
		if (remedy_try(pb, &c, &res, st)) {
			snprintf(r->text, sizeof r->text, "use relaxed with relaxation "
			         "%.3g%s%s", c.omega, k == 0 ? "" : " in ",
			         k == 0 ? "" : projection_order_name(c.order));
			r->relaxation = c.omega;
			found = 0;
		}
	}
	/* 4, 5: the bracketed methods. */
	static const enum solve_method bracketed[] = { METHOD_NEWTON, METHOD_BRENT };
	for (size_t k = 0; k < 2 && found != 0; k++) {
		c = *o;
		c.method = bracketed[k];
		if (c.method == o->method)
			continue;
		if (remedy_try(pb, &c, &res, st)) {
			snprintf(r->text, sizeof r->text, "use %s",
			         solve_method_name(c.method));
			found = 0;
		}
	}
	if (found == 0) {
		r->method = c.method;
		r->order = c.order;
	}
	stepper_destroy(st);
	return found;
}
