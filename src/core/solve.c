/*
 * solve.c - operating points: the fast unique solve, the every-root scan
 * with Newton refinement, single-method solves, and verification.
 */
#include "solve.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "diagnose.h"
#include "junction.h"
#include "kernel.h"
#include "thermal.h"

/* Relative tolerance of the independent check of a reported point. */
#define VERIFY_TOL 1e-8

/* Fill PT's derived fields from V and I. */
void solve_finish_point(const struct problem *pb, struct op_point *pt)
{
	const struct model_type *t = pb->dev.type;
	pt->power = device_dissipation(&pb->dev, &pb->src, pt->v, pt->i);
	if (pt->i > 0.0 && t->resistance != NULL) {
		/* Forward: resistance(I) is well conditioned, and needs no exp. */
		pt->rd = t->resistance(pb->dev.p, pt->i);
	} else if (t->series_resistance != NULL && t->intrinsic_conductance != NULL) {
		/*
		 * 1/gj + Rs at the junction voltage.  resistance(I) divides by
		 * Is + I, which cancels in reverse bias (rd off by 2e-8 at
		 * I = -Is (1 - 1e-8), and NaN once it rounds to 0), and the
		 * fallback device_conductance ran an inner junction solve.
		 */
		double rser = t->series_resistance(pb->dev.p);
		double gj = t->intrinsic_conductance(pb->dev.p, pt->v - rser * pt->i);
		pt->rd = 1.0 / gj + rser;
	} else {
		pt->rd = t->resistance != NULL ? t->resistance(pb->dev.p, pt->i) : NAN;
	}
	if (!isfinite(pt->rd) && t->conductance != NULL &&
	    (t->series_resistance == NULL || t->intrinsic_conductance == NULL))
		pt->rd = 1.0 / device_conductance(&pb->dev, pt->v);
	pt->residual = fabs(source_line_residual(&pb->src, pt->v, pt->i));
}

/* Check (V, I) against both curves (see solve.h). */
bool solve_verify(const struct problem *pb, double v, double i, double tol)
{
	if (!isfinite(v) || !isfinite(i))
		return false;
	/* A self-heated part: check the circuit at the point's own Tj. */
	struct problem at;
	if (thermal_active(&pb->dev)) {
		thermal_problem_at(pb, thermal_point_temperature(pb, v, i), &at);
		pb = &at;
	}
	double rtol = fmax(tol, VERIFY_TOL);
	const struct source *s = &pb->src;
	/* On the load line, relative to the terms of its equation. */
	if (isinf(s->r)) {
		if (fabs(i - s->isc) > rtol * fabs(s->isc) + 1e-300)
			return false;
	} else {
		double scale = fabs(v) + fabs(s->r * i) + fabs(s->voc);
		if (fabs(v + s->r * i - s->voc) > rtol * scale + 1e-300)
			return false;
	}
	/* On the device curve, allowing for the curve's slope at V. */
	const struct model_type *t = pb->dev.type;
	if (t->series_resistance != NULL && t->intrinsic_current != NULL &&
	    t->intrinsic_conductance != NULL) {
		/*
		 * Behind a series resistance: the junction at vj = V - Rs I must
		 * carry I.  This needs no inner solve for the terminal current
		 * (device_current would run one, and device_conductance another);
		 * the allowance is the same relative distance from the curve in V.
		 */
		double rser = t->series_resistance(pb->dev.p);
		double vj = v - rser * i;
		if (i > 0.0 && t->intrinsic_voltage != NULL) {
			/*
			 * Forward: the same check horizontally, |vj - Vj(I)|, one
			 * log instead of an exp and an expm1; Vj is well conditioned
			 * for I > 0 (I dVj/dI < nVt for a junction).
			 */
			double vd = t->intrinsic_voltage(pb->dev.p, i);
			return fabs(vj - vd) <=
			       rtol * (fabs(v) + fabs(rser * i) + fabs(vd)) + 1e-300;
		}
		double ij = t->intrinsic_current(pb->dev.p, vj);
		double gj = fabs(t->intrinsic_conductance(pb->dev.p, vj));
		double allow = rtol * (fabs(i) + (isfinite(gj)
		                                      ? gj * (fabs(v) + fabs(rser * i))
		                                      : 0.0)) +
		               1e-300;
		if (!(fabs(ij - i) <= allow))
			return false;
	} else if (t->current != NULL) {
		double id = device_current(&pb->dev, v);
		double g = fabs(device_conductance(&pb->dev, v));
		double allow = rtol * (fabs(i) + (isfinite(g) ? g * fabs(v) : 0.0)) +
		               1e-300;
		if (!(fabs(id - i) <= allow))
			return false;
	} else {
		double vd;
		if (device_voltage(&pb->dev, i, &vd) != 0)
			return false;
		if (!(fabs(vd - v) <= rtol * fabs(v) + 1e-300))
			return false;
	}
	return true;
}

/*
 * A Shockley junction SK behind PB's source: the closed form (or its
 * Newton fallback) into *PT.  The closed form checks itself with one
 * correction on the junction's own equation, whose size bounds the
 * distance to the intersection; a Newton answer is verified here.
 * Returns 0, or -1.
 */
static int solve_shockley(const struct problem *pb,
                          const struct model_shockley *sk, double tol,
                          struct op_point *pt)
{
	const struct source *s = &pb->src;
	struct junction_result jr =
		junction_solve_shockley(sk->is, sk->nvt, s->voc, s->r + sk->rs, tol);
	if (!jr.ok)
		return -1;
	pt->i = jr.ij;
	pt->v = jr.vj + sk->rs * jr.ij;
	/* the heat: a transistor's own IC VCE + IB VBE (model.h) */
	pt->power = device_dissipation(&pb->dev, &pb->src, pt->v, pt->i);
	pt->rd = 1.0 / jr.gj + sk->rs; /* no exponential: gj came with it */
	pt->residual = fabs(pt->v + s->r * pt->i - s->voc);
	pt->steps = jr.iters;
	pt->method = METHOD_NEWTON;
	pt->tangent = false;
	if (jr.path == JUNCTION_NEWTON)
		return solve_verify(pb, pt->v, pt->i, tol) ? 0 : -1;
	return 0;
}

/*
 * The fast path: the junction equation in closed form or by safeguarded
 * Newton (junction.h).
 */
int solve_fast(const struct problem *pb, double tol, struct op_point *pt)
{
	const struct model_type *t = pb->dev.type;
	const struct source *s = &pb->src;
	memset(pt, 0, sizeof *pt);
	pt->method = METHOD_NEWTON;
	/* A self-heated part may have no balance or several: no fast path. */
	if (thermal_active(&pb->dev))
		return -1;
	if (isinf(s->r)) {
		/* Ideal current source: the device voltage at that current. */
		if (t->voltage == NULL || t->voltage(pb->dev.p, s->isc, &pt->v) != 0)
			return -1;
		pt->i = s->isc;
	} else if (t->current == NULL || !t->monotone) {
		return -1;
	} else {
		struct model_shockley sk;
		if (t->shockley != NULL && t->shockley(pb->dev.p, &sk) == 0)
			return solve_shockley(pb, &sk, tol, pt);
		double rser = t->series_resistance ? t->series_resistance(pb->dev.p) : 0.0;
		struct junction_result jr = junction_solve(t, pb->dev.p, s->voc,
		                                           s->r + rser, tol);
		if (!jr.ok)
			return -1;
		pt->i = jr.ij;
		pt->v = jr.vj + rser * jr.ij;
		pt->steps = jr.iters;
	}
	solve_finish_point(pb, pt);
	return solve_verify(pb, pt->v, pt->i, tol) ? 0 : -1;
}

/* Order points by voltage. */
static int solve_cmp(const void *a, const void *b)
{
	const struct op_point *p = a, *q = b;
	return (p->v > q->v) - (p->v < q->v);
}

/* V(I) + r I - voc for a curve given as V(I), and its Newton step with
 * G' = r_d + r; NaN outside the curve's domain. */
static double solve_residual_i(void *ctx, double i, double *step)
{
	const struct problem *pb = ctx;
	double v;
	if (device_voltage(&pb->dev, i, &v) != 0) {
		if (step != NULL)
			*step = NAN;
		return NAN;
	}
	double g = v + pb->src.r * i - pb->src.voc;
	if (step != NULL) {
		const struct model_type *t = pb->dev.type;
		double d = t->resistance != NULL ? t->resistance(pb->dev.p, i) : NAN;
		*step = g / (d + pb->src.r);
	}
	return g;
}

/*
 * Refine a bracket in current (a curve given as V(I)) by the kernel's
 * safeguarded Newton on G(I) = V(I) + r I - voc from its middle (G may
 * fall through the root on the falling branch past a voltage maximum: the
 * kernel keeps the end of the other sign).  Returns 0 and fills PT's V, I
 * and steps, or -1.
 */
static int solve_refine_current(const struct problem *pb,
                                const struct bracket *b, double tol,
                                struct op_point *pt)
{
	double lo = b->lo, hi = b->hi, v;
	struct kernel_fn fn = { solve_residual_i, (void *)pb };
	double glo = solve_residual_i((void *)pb, lo, NULL);
	double x = lo;
	unsigned it = 0;
	if (!b->tangent && lo != hi && glo != 0.0) {
		double ghi = solve_residual_i((void *)pb, hi, NULL);
		struct kernel_result kr = kernel_newton_solve(
			&fn, lo, glo, hi, isnan(ghi) ? -glo : ghi, 0.5 * (lo + hi), tol,
			NULL, NULL);
		x = kr.x;
		it = kr.iters;
	}
	if (device_voltage(&pb->dev, x, &v) != 0)
		return -1;
	pt->i = x;
	pt->v = v;
	pt->steps = it;
	return 0;
}

/* Scan for every crossing and refine each one with safeguarded Newton. */
static enum solve_status solve_scan(const struct problem *pb,
                                    const struct solve_options *o,
                                    struct solve_result *out,
                                    struct bracket *br, size_t *nbr)
{
	size_t nb = stepper_scan(pb, br, SOLVE_MAX_POINTS);
	*nbr = nb;
	struct stepper *st = stepper_create();
	if (st == NULL) {
		snprintf(out->message, sizeof out->message, "out of memory");
		return out->status = SOLVE_FAILED;
	}
	struct solve_options no = *o;
	no.method = METHOD_NEWTON;
	no.start_v = NAN;
	if (no.max_steps < 200)
		no.max_steps = 200;
	const struct model_type *t = pb->dev.type;
	double rser = t->series_resistance ? t->series_resistance(pb->dev.p) : 0.0;
	for (size_t k = 0; k < nb; k++) {
		struct op_point pt = { .method = METHOD_NEWTON, .tangent = br[k].tangent };
		if (br[k].in_current) {
			if (solve_refine_current(pb, &br[k], o->tol, &pt) != 0)
				continue;
		} else if (br[k].tangent || br[k].lo == br[k].hi) {
			double x = br[k].lo;
			double ij = t->intrinsic_current ? t->intrinsic_current(pb->dev.p, x)
			                                 : device_current(&pb->dev, x);
			pt.i = ij;
			pt.v = x + rser * ij;
		} else {
			if (stepper_init_bracket(st, pb, &no, &br[k]) != 0)
				continue;
			enum step_status ss = stepper_run(st);
			if (ss != STEP_CONVERGED)
				continue;
			const struct trace_row *last = stepper_last(st);
			pt.v = last->v;
			pt.i = last->i;
			pt.steps = (unsigned)last->k;
		}
		solve_finish_point(pb, &pt);
		if (!pt.tangent && !solve_verify(pb, pt.v, pt.i, o->tol))
			continue;
		out->pts[out->n++] = pt;
	}
	stepper_destroy(st);
	qsort(out->pts, out->n, sizeof out->pts[0], solve_cmp);
	if (out->n == 0) {
		double lo, hi;
		device_range(&pb->dev, &lo, &hi);
		snprintf(out->message, sizeof out->message,
		         "the load line does not cross the device curve between "
		         "%.6g V and %.6g V",
		         fmin(lo, fmin(0.0, pb->src.voc)), fmax(hi, fmax(0.0, pb->src.voc)));
		return out->status = SOLVE_NONE;
	}
	return out->status = SOLVE_OK;
}

/* Run one stepper method from the start point. */
static enum solve_status solve_method(const struct problem *pb,
                                      const struct solve_options *o,
                                      struct solve_result *out)
{
	struct stepper *st = stepper_create();
	if (st == NULL) {
		snprintf(out->message, sizeof out->message, "out of memory");
		return out->status = SOLVE_FAILED;
	}
	enum step_status ss = STEP_UNDEFINED;
	if (stepper_init(st, pb, o) == 0)
		ss = stepper_run(st);
	else
		ss = stepper_status(st);
	out->stop = ss;
	const struct trace_row *last = stepper_last(st);
	if (ss == STEP_CONVERGED && last != NULL &&
	    solve_verify(pb, last->v, last->i, o->tol)) {
		struct op_point pt = { .v = last->v, .i = last->i,
		                       .steps = (unsigned)last->k, .method = o->method };
		solve_finish_point(pb, &pt);
		out->pts[out->n++] = pt;
		out->status = SOLVE_OK;
	} else {
		struct diagnosis d;
		double v = last != NULL ? last->v : 0.0;
		diagnose_at(pb, o->order, v, o->tol, 1.0, &d);
		diagnose_status_message(ss == STEP_CONVERGED ? STEP_STALLED : ss,
		                        o->order, &d, out->message, sizeof out->message);
		out->status = SOLVE_FAILED;
	}
	stepper_destroy(st);
	return out->status;
}

/*
 * The hot path of the default solve: one Shockley junction behind a
 * finite resistance, in closed form, into OUT.  True when it answered.
 */
static bool solve_try_shockley(const struct problem *pb,
                               const struct solve_options *o,
                               struct solve_result *out)
{
	const struct model_type *t = pb->dev.type;
	struct model_shockley sk;
	/* a self-heated part goes through the heat balance (thermal.h) */
	if (o->method != METHOD_AUTO || t->shockley == NULL ||
	    !isfinite(pb->src.r) || thermal_active(&pb->dev) ||
	    t->shockley(pb->dev.p, &sk) != 0 ||
	    solve_shockley(pb, &sk, o->tol, &out->pts[0]) != 0)
		return false;
	out->status = SOLVE_OK;
	out->n = 1;
	out->message[0] = '\0';
	out->stop = STEP_CONVERGED;
	return true;
}

/* Solve PB with O (see solve.h). */
enum solve_status solve_problem(const struct problem *pb,
                                const struct solve_options *o,
                                struct solve_result *out)
{
	char err[200];
	if (device_validate(&pb->dev, err, sizeof err) != 0) {
		out->n = 0;
		out->stop = STEP_CONTINUE;
		snprintf(out->message, sizeof out->message, "%s", err);
		return out->status = SOLVE_BAD_INPUT;
	}
	if (solve_try_shockley(pb, o, out))
		return SOLVE_OK;
	return solve_problem_valid(pb, o, out);
}

/* Solve PB, whose device has passed device_validate (see solve.h). */
enum solve_status solve_problem_valid(const struct problem *pb,
                                      const struct solve_options *o,
                                      struct solve_result *out)
{
	if (solve_try_shockley(pb, o, out))
		return SOLVE_OK;
	struct bracket br[SOLVE_MAX_POINTS];
	size_t nb;
	return solve_problem_valid_brackets(pb, o, out, br, &nb);
}

/* solve_problem_valid that hands back the scan's brackets (see solve.h). */
enum solve_status solve_problem_valid_brackets(const struct problem *pb,
                                               const struct solve_options *o,
                                               struct solve_result *out,
                                               struct bracket *br, size_t *nb)
{
	*nb = 0;
	out->status = SOLVE_OK;
	out->n = 0;
	out->message[0] = '\0';
	out->stop = STEP_CONTINUE;
	/* A self-heated part: the electrical solve inside the heat balance. */
	if (thermal_active(&pb->dev))
		return thermal_solve_points(pb, o, out);
	if (o->method != METHOD_AUTO)
		return solve_method(pb, o, out);
	const struct model_type *t = pb->dev.type;
	if (solve_try_shockley(pb, o, out))
		return SOLVE_OK;
	struct op_point pt;
	/* A monotone device has one point; so does any V(I) curve fed by an
	 * ideal current source (the point is V(isc)). */
	bool unique = t->monotone || (isinf(pb->src.r) && t->voltage != NULL);
	if (unique && solve_fast(pb, o->tol, &pt) == 0) {
		out->pts[out->n++] = pt;
		out->stop = STEP_CONVERGED;
		return out->status = SOLVE_OK;
	}
	if (pb->src.r == 0.0 && t->current != NULL) {
		/* Ideal voltage source: the point is on the curve at voc. */
		pt = (struct op_point){ .v = pb->src.voc, .method = METHOD_AUTO };
		pt.i = device_current(&pb->dev, pt.v);
		solve_finish_point(pb, &pt);
		if (isfinite(pt.i)) {
			out->pts[out->n++] = pt;
			return out->status = SOLVE_OK;
		}
	}
	return solve_scan(pb, o, out, br, nb);
}
