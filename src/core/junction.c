/*
 * junction.c - safeguarded Newton-Raphson for vj + r * Ij(vj) = voc.
 *
 * F(vj) = vj + r Ij(vj) - voc is increasing, so a kept bracket [lo, hi]
 * (F(lo) <= 0 <= F(hi)) is updated from the sign of F at every iterate; a
 * Newton step that would leave the bracket, or a non-finite value, falls
 * back to bisection, so the iteration can neither leave the bracket nor
 * stall.  Starting at the upper end of the bracket on a convex F (a forward
 * biased junction) the Newton iterates decrease monotonically onto the root.
 */
#include "junction.h"

#include <math.h>
#include <stdbool.h>

/* Intrinsic current of TYPE (the whole current when it has no split). */
static double junction_current(const struct model_type *t, const double *p,
                               double v)
{
	return t->intrinsic_current ? t->intrinsic_current(p, v) : t->current(p, v);
}

/* Intrinsic conductance of TYPE. */
static double junction_conductance(const struct model_type *t, const double *p,
                                   double v)
{
	return t->intrinsic_conductance ? t->intrinsic_conductance(p, v)
	                                : t->conductance(p, v);
}

/* A finite estimate of the intrinsic voltage at current I > 0, or NaN. */
static double junction_estimate(const struct model_type *t, const double *p,
                                double i)
{
	double v = NAN;
	if (t->intrinsic_voltage)
		v = t->intrinsic_voltage(p, i);
	else if (t->voltage && t->voltage(p, i, &v) != 0)
		v = NAN;
	return v;
}

/*
 * The inverse of the intrinsic curve, Vj(I), when the model gives it: the
 * intrinsic voltage, or the voltage of a model without a series split.
 */
static bool junction_has_inverse(const struct model_type *t)
{
	return t->intrinsic_voltage != NULL ||
	       (t->series_resistance == NULL && t->voltage != NULL &&
	        t->resistance != NULL);
}

/* dVj/dI of the intrinsic curve at I (NaN when unknown). */
static double junction_resistance(const struct model_type *t, const double *p,
                                  double i)
{
	if (t->resistance == NULL)
		return NAN;
	double rd = t->resistance(p, i);
	if (t->series_resistance != NULL)
		rd -= t->series_resistance(p);
	return rd;
}

/*
 * One Newton step on the log-domain residual G(v) = v - Vj((voc - v)/r),
 * which has the sign of F and the same root, where the load line is the
 * flatter curve (dVj/dI < r, so 1 <= G' < 2).  There G is nearly linear
 * and costs one log instead of exp and expm1 (for a junction: Vj is
 * nVt log1p(I/Is)).  Returns false where it does not apply; else fills
 * *G and *STEP (the Newton step to subtract).
 */
static bool junction_log_step(const struct model_type *t, const double *p,
                              double voc, double r, double v, double *g,
                              double *step)
{
	double il = (voc - v) / r;
	double rj = junction_resistance(t, p, il);
	if (!(rj >= 0.0 && rj < r))
		return false;
	double vd = junction_estimate(t, p, il);
	if (!isfinite(vd))
		return false;
	*g = v - vd;
	*step = *g / (1.0 + rj / r);
	return isfinite(*step);
}

/* Solve vj + r Ij(vj) = voc (see junction.h). */
struct junction_result junction_solve(const struct model_type *t,
                                      const double *p, double voc, double r,
                                      double tol)
{
	struct junction_result res = { .vj = voc, .ij = NAN, .iters = 0, .ok = 0 };
	if (r == 0.0 || voc == 0.0) {
		res.ij = junction_current(t, p, voc);
		res.ok = isfinite(res.ij);
		return res;
	}
	double lo = fmin(0.0, voc), hi = fmax(0.0, voc);
	/* The current cannot exceed |voc|/r: bound the junction voltage. */
	double est = junction_estimate(t, p, fabs(voc) / r);
	if (voc > 0.0 && isfinite(est) && est < hi && est > lo)
		hi = est;
	double v = voc > 0.0 ? hi : lo;
	bool inverse = junction_has_inverse(t);
	bool line_flatter = false; /* the last step was a log-domain one */
	double prev_dv = NAN;      /* the last plain Newton step, same residual */
	for (unsigned it = 1; it <= 400; it++) {
		res.iters = it;
		double f, dv = NAN;
		bool was_flatter = line_flatter;
		line_flatter = inverse && junction_log_step(t, p, voc, r, v, &f, &dv);
		if (line_flatter != was_flatter)
			prev_dv = NAN;
		/* The current's scale, to hold its error below TOL as well. */
		double iscale, gscale;
		if (line_flatter) {
			iscale = fabs(voc - v) / r; /* the current from the line */
			gscale = 1.0 / r;
		} else {
			double ij = junction_current(t, p, v);
			double g = junction_conductance(t, p, v);
			f = v + r * ij - voc;
			double d = 1.0 + r * g;
			if (isfinite(f) && isfinite(d) && d > 0.0)
				dv = f / d;
			iscale = fabs(ij);
			gscale = g;
		}
		if (f == 0.0) {
			res.ok = 1;
			break;
		}
		if (f < 0.0)
			lo = v;
		else
			hi = v; /* F > 0, or overflow: v is above the root */
		double vn = NAN;
		if (isfinite(dv)) {
			if (fabs(dv) <= tol * fabs(v)) {
				/* Quadratic convergence: this last step is below TOL. */
				v -= dv;
				res.ok = 1;
				break;
			}
			/*
			 * Two plain Newton steps in the quadratic regime (this one
			 * below 1e-3 of the last) estimate the error constant as
			 * dv / prev^2, so the step after this one would be about
			 * dv^3 / prev^2.  When that is 100 times below TOL on the
			 * voltage and on the current it moves (the current is
			 * steeper: g dv / I reaches V / nVt times dv / V), this
			 * step lands within TOL: take it and skip the evaluation
			 * that would only confirm it (Newton's error estimate;
			 * Burden & Faires, Numerical Analysis, 9th ed., 2010,
			 * sec. 2.4).  The caller still verifies the point.
			 */
			double next = fabs(dv) * (dv / prev_dv) * (dv / prev_dv);
			if (isfinite(prev_dv) && fabs(dv) <= 1e-3 * fabs(prev_dv) &&
			    next <= 0.01 * tol * fabs(v) &&
			    next * gscale <= 0.01 * tol * iscale) {
				v -= dv;
				res.ok = 1;
				break;
			}
			vn = v - dv;
			if (t->limit && !line_flatter)
				vn = t->limit(p, vn, v);
		}
		prev_dv = dv;
		if (!(vn > lo && vn < hi)) {
			vn = 0.5 * (lo + hi);
			prev_dv = NAN; /* a bisection, not a Newton step */
		} else if (vn != v - dv) {
			prev_dv = NAN; /* limited */
		}
		double step = vn - v;
		v = vn;
		if (fabs(step) <= tol * fabs(v) || hi - lo <= tol * fabs(v) ||
		    fabs(step) < 1e-300) {
			res.ok = 1;
			break;
		}
	}
	res.vj = v;
	/*
	 * Take the current from the better-conditioned side (see solve.c):
	 * the line where the device is the steeper curve - known without an
	 * exp when the last step was a log-domain one.
	 */
	if (line_flatter || r * junction_conductance(t, p, v) > 1.0)
		res.ij = (voc - v) / r;
	else
		res.ij = junction_current(t, p, v);
	if (!isfinite(res.ij))
		res.ok = 0;
	return res;
}
