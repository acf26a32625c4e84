/*
 * heat.c - every heat balance of a self-heated part (see heat.h).
 */
#include "heat.h"

#include <math.h>

/* Newton or bisection steps allowed in one refinement. */
#define HEAT_MAX_ITERS 200
/* Golden-section steps locating an extremum of H between grid points. */
#define HEAT_GOLDEN_ITERS 80

/* H at T into *H, with H' = 1 - theta dP/dT into *DH when DH is not NULL. */
static int heat_eval(const struct heat_curve *c, double ta, double theta,
                     double t, double *h, double *dh, double *p, double *dp)
{
	double pp = NAN, d = NAN;
	if (c->power(c->ctx, t, &pp, dh != NULL ? &d : NULL) != 0 || !isfinite(pp))
		return -1;
	*h = t - ta - theta * pp;
	if (dh != NULL)
		*dh = 1.0 - theta * d;
	if (p != NULL)
		*p = pp;
	if (dp != NULL)
		*dp = d;
	return 0;
}

/* H(T) (see heat.h). */
int heat_residual(const struct heat_curve *c, double ta, double theta,
                  double t, double *h)
{
	return heat_eval(c, ta, theta, t, h, NULL, NULL, NULL);
}

/* The kelvin scale of T for relative tolerances. */
static double heat_scale(double t)
{
	return fmax(fabs(t - HEAT_ZERO_C), 1.0);
}

/* Fill OUT for the balance at T (P and dP/dT once more, exactly there). */
static int heat_finish(const struct heat_curve *c, double ta, double theta,
                       double t, unsigned iters, struct heat_root *out)
{
	double h, dh, p, dp;
	if (heat_eval(c, ta, theta, t, &h, &dh, &p, &dp) != 0)
		return -1;
	out->t = t;
	out->p = p;
	out->dp = dp;
	out->gain = theta * dp;
	out->stable = out->gain < 1.0;
	out->tangent = false;
	out->iters = iters;
	return 0;
}

/* The balance in [LO, HI] (see heat.h). */
int heat_refine(const struct heat_curve *c, double ta, double theta,
                double lo, double hi, double tol, struct heat_root *out)
{
	double hlo, hhi;
	if (!(lo <= hi) || heat_residual(c, ta, theta, lo, &hlo) != 0 ||
	    heat_residual(c, ta, theta, hi, &hhi) != 0)
		return -1;
	if (hlo == 0.0)
		return heat_finish(c, ta, theta, lo, 0, out);
	if (hhi == 0.0)
		return heat_finish(c, ta, theta, hi, 0, out);
	if ((hlo < 0.0) == (hhi < 0.0))
		return -1;
	bool rising = hlo < 0.0;
	/* Start at the end with the smaller residual. */
	double t = fabs(hlo) <= fabs(hhi) ? lo : hi;
	unsigned it = 0;
	for (it = 1; it <= HEAT_MAX_ITERS; it++) {
		double h, dh;
		if (heat_eval(c, ta, theta, t, &h, &dh, NULL, NULL) != 0) {
			/* P failed inside the bracket: bisect past the spot. */
			h = NAN;
			dh = NAN;
		}
		if (h == 0.0)
			break;
		if (isfinite(h)) {
			if ((h < 0.0) == rising)
				lo = t;
			else
				hi = t;
		} else if (t != lo && t != hi) {
			return -1;
		}
		double tn = NAN;
		if (isfinite(h) && isfinite(dh) && dh != 0.0)
			tn = t - h / dh;
		/* A Newton step below the tolerance ends it, even one that
		 * rounds onto an end of the bracket. */
		if (isfinite(tn) && fabs(tn - t) <= tol * heat_scale(t) &&
		    tn >= lo && tn <= hi) {
			t = tn;
			break;
		}
		if (!(tn > lo && tn < hi))
			tn = 0.5 * (lo + hi);
		double step = tn - t;
		t = tn;
		double scale = heat_scale(t);
		if (fabs(step) <= tol * scale || hi - lo <= 4e-16 * scale)
			break;
	}
	return heat_finish(c, ta, theta, t, it, out);
}

/*
 * The extremum of H in [A, B] by golden-section search: a maximum when
 * MAX is true, else a minimum.  *T and *H get where and how much; returns
 * 0, or -1 when P fails on the way.
 */
static int heat_golden(const struct heat_curve *c, double ta, double theta,
                       double a, double b, bool max, double *t, double *h)
{
	const double r = 0.5 * (sqrt(5.0) - 1.0);
	double s = max ? -1.0 : 1.0; /* minimise s H */
	double x1 = b - r * (b - a), x2 = a + r * (b - a);
	double f1, f2;
	if (heat_residual(c, ta, theta, x1, &f1) != 0 ||
	    heat_residual(c, ta, theta, x2, &f2) != 0)
		return -1;
	f1 *= s;
	f2 *= s;
	for (int k = 0; k < HEAT_GOLDEN_ITERS && b - a > 1e-13 * heat_scale(a);
	     k++) {
		if (f1 < f2) {
			b = x2;
			x2 = x1;
			f2 = f1;
			x1 = b - r * (b - a);
			if (heat_residual(c, ta, theta, x1, &f1) != 0)
				return -1;
			f1 *= s;
		} else {
			a = x1;
			x1 = x2;
			f1 = f2;
			x2 = a + r * (b - a);
			if (heat_residual(c, ta, theta, x2, &f2) != 0)
				return -1;
			f2 *= s;
		}
	}
	*t = f1 < f2 ? x1 : x2;
	*h = s * (f1 < f2 ? f1 : f2);
	return 0;
}

/* Append the balance in [A, B] to OUT when it refines; returns the count. */
static size_t heat_add(const struct heat_curve *c, double ta, double theta,
                       double a, double b, double tol, struct heat_root *out,
                       size_t n, size_t max)
{
	if (n >= max)
		return n;
	struct heat_root r;
	if (heat_refine(c, ta, theta, a, b, tol, &r) != 0)
		return n;
	/* The same balance at a shared grid point is kept once. */
	if (n > 0 && fabs(out[n - 1].t - r.t) <= 4.0 * tol * heat_scale(r.t))
		return n;
	out[n] = r;
	return n + 1;
}

/* Every balance in [LO, HI] (see heat.h). */
size_t heat_scan(const struct heat_curve *c, double ta, double theta,
                 double lo, double hi, size_t grid, double tol,
                 struct heat_root *out, size_t max)
{
	if (grid < 8)
		grid = 8;
	if (!(lo < hi) || max == 0)
		return 0;
	size_t n = 0;
	double dt = (hi - lo) / (double)grid;
	/* A sliding window of three grid values of H (NaN where P fails). */
	double t0 = NAN, h0 = NAN, t1 = lo, h1 = NAN;
	if (heat_residual(c, ta, theta, t1, &h1) != 0)
		h1 = NAN;
	for (size_t k = 1; k <= grid && n < max; k++) {
		double t2 = k == grid ? hi : lo + (double)k * dt, h2;
		if (heat_residual(c, ta, theta, t2, &h2) != 0)
			h2 = NAN;
		if (isfinite(h1) && isfinite(h2)) {
			if (h1 == 0.0 || (h1 < 0.0) != (h2 < 0.0) || h2 == 0.0) {
				if (h1 != 0.0 || k == 1)
					n = heat_add(c, ta, theta, t1, t2, tol, out, n, max);
			}
		}
		/*
		 * H at t1 a local maximum below zero (or a minimum above): the
		 * curve may reach zero between the grid points and turn back,
		 * two balances close together.  Look at the extremum.
		 */
		if (isfinite(h0) && isfinite(h1) && isfinite(h2) && h1 != 0.0 &&
		    (h0 < 0.0) == (h1 < 0.0) && (h1 < 0.0) == (h2 < 0.0)) {
			bool neg = h1 < 0.0;
			bool ext = neg ? (h1 > h0 && h1 >= h2) : (h1 < h0 && h1 <= h2);
			double te, he;
			if (ext && heat_golden(c, ta, theta, t0, t2, neg, &te, &he) == 0) {
				if (he == 0.0 ||
				    fabs(he) <= tol * heat_scale(te)) {
					if (n < max &&
					    heat_finish(c, ta, theta, te, 0, &out[n]) == 0) {
						out[n].tangent = true;
						n++;
					}
				} else if ((he < 0.0) != neg) {
					/* Two crossings, on either side of the extremum
					 * (none was kept from t0 to t2: no sign change). */
					n = heat_add(c, ta, theta, t0, te, tol, out, n, max);
					n = heat_add(c, ta, theta, te, t2, tol, out, n, max);
				}
			}
		}
		t0 = t1;
		h0 = h1;
		t1 = t2;
		h1 = h2;
	}
	return n;
}
