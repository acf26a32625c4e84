/*
 * solve.c - operating points: the fast unique solve, the every-root scan
 * with Newton refinement, single-method solves, and verification.
 */
#include "solve.h"

#include <float.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "diagnose.h"
#include "junction.h"
#include "kernel.h"
#include "thermal.h"


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

/* The finest relative tolerance verification asks for (rounding). */
#define VERIFY_FLOOR (16.0 * DBL_EPSILON)

/* The rounding level of the junction residual at X (its terms' size). */
static double verify_noise(const struct problem_junction *j, double x,
                           double ij)
{
	const struct source *s = &j->pb->src;
	if (isinf(s->r))
		return 8.0 * DBL_EPSILON * (fabs(ij) + fabs(s->isc)) + DBL_MIN;
	return 8.0 * DBL_EPSILON * (fabs(x) + fabs(j->rt * ij) + fabs(s->voc)) +
	       DBL_MIN;
}

/*
 * Verification for a curve given as I(V), in the junction variable x =
 * V - Rs I: an interval [x - d, x + d] across which the residual changes
 * sign holds the intersection x*, and with it I* lies between the
 * device's currents at the ends and between the line's; d is chosen so
 * that those ranges are within the tolerance of I, and the voltage
 * follows.  Where d is below what rounding can resolve, a residual at
 * the rounding level is accepted instead.
 */
static bool verify_junction(const struct problem *pb, double v, double i,
                            double rtol)
{
	struct problem_junction j;
	problem_junction_init(&j, pb);
	const struct source *s = &pb->src;
	double x = v - j.rser * i;
	double ei = rtol * fabs(i), ev = rtol * fabs(v);
	double f = problem_junction_residual(&j, x);
	if (f == 0.0)
		return fabs(i - problem_junction_current(&j, x)) <= ei + DBL_MIN ||
		       (isfinite(j.rt) && fabs(i - (s->voc - x) / j.rt) <=
		                              ei + DBL_MIN);
	double g = fabs(problem_junction_conductance(&j, x));
	/*
	 * The budgets: V* = x* + Rs I*, so V's error is x's plus Rs times
	 * I's.  I may be off by BI: its tolerance, and no more than half V's
	 * through Rs; x by D: at most 0.4 of V's tolerance, and small enough
	 * that the currents the bracket allows (g D on the device, D / rt on
	 * the line; the narrower binds) stay within 0.8 BI, leaving room for
	 * the point's own offset.
	 */
	double bi = ei;
	if (j.rser > 0.0 && 0.5 * ev / j.rser < bi)
		bi = 0.5 * ev / j.rser;
	double d = 0.4 * ev;
	double dmax_i = isinf(j.rt) ? (g > 0.0 ? 0.8 * bi / g : INFINITY)
	                            : 0.8 * bi * fmax(j.rt, g > 0.0 ? 1.0 / g
	                                                           : INFINITY);
	if (dmax_i < d)
		d = dmax_i;
	double xa = x - d, xb = x + d;
	double fa = problem_junction_residual(&j, xa);
	double fb = problem_junction_residual(&j, xb);
	bool bracket = (fa <= 0.0 && fb >= 0.0) || (fa >= 0.0 && fb <= 0.0);
	if (!bracket || !(d > 0.0))
		return fabs(f) <= verify_noise(&j, x, problem_junction_current(&j, x));
	/* I* between the device's currents at the ends, and the line's. */
	double da = problem_junction_current(&j, xa);
	double db = problem_junction_current(&j, xb);
	double lo = fmin(da, db), hi = fmax(da, db);
	if (isinf(s->r)) {
		lo = hi = s->isc;
	} else if (j.rt > 0.0) {
		double la = (s->voc - xa) / j.rt, lb = (s->voc - xb) / j.rt;
		double llo = fmin(la, lb), lhi = fmax(la, lb);
		if (llo > lo)
			lo = llo;
		if (lhi < hi)
			hi = lhi;
		if (lo > hi) /* rounding: the ranges just miss; take the line's */
			lo = llo, hi = lhi;
	}
	double di = fmax(fabs(i - lo), fabs(i - hi));
	/* V* = x* + Rs I*: within d + Rs di of V. */
	return (di <= bi + DBL_MIN && d + j.rser * di <= ev + DBL_MIN) ||
	       fabs(f) <= verify_noise(&j, x, problem_junction_current(&j, x));
}

/* V(I) + r I - voc of a curve given as V(I) at I into *G and V(I) into
 * *V; false where V(I) is undefined. */
static bool verify_current_residual(const struct problem *pb, double i,
                                    double *g, double *v)
{
	if (device_voltage(&pb->dev, i, v) != 0)
		return false;
	*g = *v + pb->src.r * i - pb->src.voc;
	return true;
}

/*
 * Verification for a curve given only as V(I): the same in current, an
 * interval [i - d, i + d] across which V(I) + r I - voc changes sign,
 * with d such that the voltages it allows (on the curve and on the line)
 * are within the tolerance of V.
 */
static bool verify_current(const struct problem *pb, double v, double i,
                           double rtol)
{
	const struct model_type *t = pb->dev.type;
	const struct source *s = &pb->src;
	double ev = rtol * fabs(v), ei = rtol * fabs(i);
	if (isinf(s->r)) {
		double vd;
		return fabs(i - s->isc) <= rtol * fabs(s->isc) + DBL_MIN &&
		       device_voltage(&pb->dev, i, &vd) == 0 &&
		       fabs(vd - v) <= ev + DBL_MIN;
	}
	double g0, v0;
	if (!verify_current_residual(pb, i, &g0, &v0))
		return false;
	double noise = 8.0 * DBL_EPSILON * (fabs(v0) + fabs(s->r * i) + fabs(s->voc)) +
	               DBL_MIN;
	if (fabs(v - v0) > ev + noise && fabs(v - (s->voc - s->r * i)) > ev + noise)
		return false; /* on neither curve */
	if (g0 == 0.0)
		return true;
	double rd = t->resistance != NULL ? fabs(t->resistance(pb->dev.p, i)) : NAN;
	double d = ei;
	double dmax_v = ev / fmin(isfinite(rd) ? rd : INFINITY, s->r);
	if (isfinite(dmax_v) && dmax_v < d)
		d = dmax_v;
	d *= 0.5; /* half the allowance: room for V's own offset */
	double ga, gb, va, vb;
	if (!(d > 0.0) || !verify_current_residual(pb, i - d, &ga, &va) ||
	    !verify_current_residual(pb, i + d, &gb, &vb))
		return fabs(g0) <= noise;
	if (!((ga <= 0.0 && gb >= 0.0) || (ga >= 0.0 && gb <= 0.0)))
		return fabs(g0) <= noise;
	double lo = fmin(va, vb), hi = fmax(va, vb);
	double la = s->voc - s->r * (i - d), lb = s->voc - s->r * (i + d);
	double llo = fmin(la, lb), lhi = fmax(la, lb);
	if (llo > lo)
		lo = llo;
	if (lhi < hi)
		hi = lhi;
	if (lo > hi)
		lo = llo, hi = lhi;
	return fmax(fabs(v - lo), fabs(v - hi)) <= ev + noise;
}

/*
 * Check (V, I) against both curves (see solve.h): it must lie within the
 * relative tolerance of the intersection in V and in I, measured as a
 * distance to the intersection by a bracket of it, not as a residual.
 */
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
	double rtol = tol > VERIFY_FLOOR ? tol : VERIFY_FLOOR;
	if (pb->dev.type->current != NULL)
		return verify_junction(pb, v, i, rtol);
	return verify_current(pb, v, i, rtol);
}

/*
 * A Shockley junction SK behind PB's source, PB's device not heating
 * itself: the closed form (or its Newton fallback) into *PT.  The closed
 * form checks itself with one correction on the junction's own equation,
 * whose size bounds the distance to the intersection; a Newton answer is
 * verified here.  Returns 0, or -1.
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
	const struct model_type *t = pb->dev.type;
	pt->i = jr.ij;
	pt->v = jr.vj + sk->rs * jr.ij;
	/* device_heat's power, the device not heating itself (a model's own
	 * heat, model.h, else V I) */
	pt->power = t->power != NULL ? t->power(pb->dev.p, s, pt->v, pt->i)
	                             : pt->v * pt->i;
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
 * Whether PB's device is one Shockley junction that does not heat
 * itself, with its constants into *SK: noted when the device was checked
 * (model.h), else derived now.
 */
static bool solve_junction_of(const struct problem *pb,
                              struct model_shockley *sk)
{
	const struct device *d = &pb->dev;
	if (d->checked) {
		*sk = d->sk;
		return d->junction;
	}
	return d->type->shockley != NULL && !thermal_active(d) &&
	       d->type->shockley(d->p, sk) == 0;
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
	if (device_ready(&pb->dev, NULL, 0) != 0 || thermal_active(&pb->dev))
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
		if (solve_junction_of(pb, &sk))
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

/* The junction residual and its Newton step, for the kernel. */
static double solve_junction_eval(void *ctx, double x, double *step)
{
	const struct problem_junction *j = ctx;
	double f = problem_junction_residual(j, x);
	if (step != NULL)
		*step = f / problem_junction_slope(j, x);
	return f;
}

/*
 * Refine a sign-change bracket of the junction residual (the every-root
 * scan's) into PT: ends that overflow are pulled in by halving on the
 * sign alone, Brent-Dekker then narrows the bracket to TOL (it needs no
 * slope and cannot stall where the far end is an exponential wall, where
 * Newton would creep down by nVt a step), and one Newton step from its
 * best point polishes it when it stays inside.  Returns 0, or -1.
 */
static int solve_refine_junction(const struct problem_junction *j,
                                 const struct bracket *b, double tol,
                                 struct op_point *pt)
{
	struct kernel_fn fn = { solve_junction_eval, (void *)j };
	double lo = b->lo, hi = b->hi;
	double flo = solve_junction_eval((void *)j, lo, NULL);
	double fhi = solve_junction_eval((void *)j, hi, NULL);
	int halved = kernel_narrow(&fn, &lo, &flo, &hi, &fhi, INFINITY);
	if (halved < 0 || !isfinite(flo) || !isfinite(fhi))
		return -1;
	unsigned steps = (unsigned)halved;
	double x;
	if (flo == 0.0) {
		x = lo;
	} else if (fhi == 0.0) {
		x = hi;
	} else {
		struct kernel_result r =
			kernel_brent_solve(&fn, lo, flo, hi, fhi, tol, 0.0);
		if (!r.ok && !(r.hi - r.lo <= 1e-3 * fabs(r.x)))
			return -1;
		steps += r.iters;
		x = r.x;
		double step;
		double f = solve_junction_eval((void *)j, x, &step);
		double xn = x - step;
		if (f != 0.0 && isfinite(xn) && xn >= r.lo && xn <= r.hi)
			x = xn;
	}
	problem_junction_point(j, x, &pt->v, &pt->i);
	pt->steps = steps;
	return 0;
}

/* Scan for every crossing and refine each one. */
static enum solve_status solve_scan(const struct problem *pb,
                                    const struct solve_options *o,
                                    struct solve_result *out,
                                    struct bracket *br, size_t *nbr)
{
	size_t nb = stepper_scan(pb, br, SOLVE_MAX_POINTS);
	*nbr = nb;
	struct problem_junction j;
	if (pb->dev.type->current != NULL)
		problem_junction_init(&j, pb);
	for (size_t k = 0; k < nb; k++) {
		struct op_point pt = { .method = METHOD_NEWTON, .tangent = br[k].tangent };
		if (br[k].in_current) {
			if (solve_refine_current(pb, &br[k], o->tol, &pt) != 0)
				continue;
		} else if (br[k].tangent || br[k].lo == br[k].hi) {
			problem_junction_point(&j, br[k].lo, &pt.v, &pt.i);
		} else if (solve_refine_junction(&j, &br[k], o->tol, &pt) != 0) {
			continue;
		}
		solve_finish_point(pb, &pt);
		if (!pt.tangent && !solve_verify(pb, pt.v, pt.i, o->tol))
			continue;
		out->pts[out->n++] = pt;
	}
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

/* What solve_try_shockley did. */
enum solve_shockley_try {
	SOLVE_TRY_NONE,     /* not a Shockley junction behind a finite r */
	SOLVE_TRY_FAILED,   /* one, but neither the closed form nor its
	                       fallback could vouch for a point */
	SOLVE_TRY_OK,       /* answered into OUT */
};

/*
 * The hot path of the default solve: one Shockley junction behind a
 * finite resistance, in closed form, into OUT.
 */
static enum solve_shockley_try solve_try_shockley(const struct problem *pb,
                                                  const struct solve_options *o,
                                                  struct solve_result *out)
{
	struct model_shockley sk;
	/* a self-heated part goes through the heat balance (thermal.h) */
	if (o->method != METHOD_AUTO || !isfinite(pb->src.r) ||
	    !solve_junction_of(pb, &sk))
		return SOLVE_TRY_NONE;
	if (solve_shockley(pb, &sk, o->tol, &out->pts[0]) != 0)
		return SOLVE_TRY_FAILED;
	out->status = SOLVE_OK;
	out->n = 1;
	out->message[0] = '\0';
	out->stop = STEP_CONVERGED;
	return SOLVE_TRY_OK;
}

/* Refuse PB into OUT when its device may not be solved as it is. */
static bool solve_refused(const struct problem *pb, struct solve_result *out)
{
	if (device_ready(&pb->dev, out->message, sizeof out->message) == 0)
		return false;
	out->n = 0;
	out->stop = STEP_CONTINUE;
	out->status = SOLVE_BAD_INPUT;
	return true;
}

/* Every point of PB, whose device may be solved as it is. */
static enum solve_status solve_run(const struct problem *pb,
                                   const struct solve_options *o,
                                   struct solve_result *out,
                                   struct bracket *br, size_t *nb)
{
	*nb = 0;
	/* The hot path first: one Shockley junction in closed form. */
	enum solve_shockley_try tried = solve_try_shockley(pb, o, out);
	if (tried == SOLVE_TRY_OK)
		return SOLVE_OK;
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
	struct op_point pt;
	/* A monotone device has one point; so does any V(I) curve fed by an
	 * ideal current source (the point is V(isc)).  solve_fast would only
	 * repeat a Shockley junction's failed attempt. */
	bool unique = t->monotone || (isinf(pb->src.r) && t->voltage != NULL);
	if (unique && tried == SOLVE_TRY_NONE && solve_fast(pb, o->tol, &pt) == 0) {
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

/* Solve PB with O (see solve.h). */
enum solve_status solve_problem(const struct problem *pb,
                                const struct solve_options *o,
                                struct solve_result *out)
{
	if (solve_refused(pb, out))
		return out->status;
	struct bracket br[SOLVE_MAX_POINTS];
	size_t nb;
	return solve_run(pb, o, out, br, &nb);
}

/* solve_problem that hands back the scan's brackets (see solve.h). */
enum solve_status solve_problem_brackets(const struct problem *pb,
                                         const struct solve_options *o,
                                         struct solve_result *out,
                                         struct bracket *br, size_t *nb)
{
	*nb = 0;
	if (solve_refused(pb, out))
		return out->status;
	return solve_run(pb, o, out, br, nb);
}
