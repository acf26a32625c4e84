/*
 * heat.c - every heat balance of a self-heated part (see heat.h).
 */
#include "heat.h"

#include <math.h>

#include "kernel.h"

/* Most brackets one scan holds (a few times the balances any caller
 * keeps: some may not refine). */
#define HEAT_SCAN_MAX 64

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

/* H and its Newton step for the kernel: NaN where P fails. */
struct heat_fn {
	const struct heat_curve *c;
	double ta, theta;
};

static double heat_fn_eval(void *ctx, double t, double *step)
{
	const struct heat_fn *f = ctx;
	double h, dh;
	if (heat_eval(f->c, f->ta, f->theta, t, &h, step != NULL ? &dh : NULL,
	              NULL, NULL) != 0) {
		if (step != NULL)
			*step = NAN;
		return NAN;
	}
	if (step != NULL)
		*step = isfinite(dh) && dh != 0.0 ? h / dh : NAN;
	return h;
}

/* The kelvin scale of T, for the kernel's scan. */
static double heat_fn_scale(void *ctx, double t)
{
	(void)ctx;
	return heat_scale(t);
}

/*
 * The balance in [LO, HI] (see heat.h): the kernel's safeguarded Newton
 * from the end with the smaller residual, until a step or the bracket is
 * within TOL of the absolute temperature.
 */
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
	struct heat_fn hf = { c, ta, theta };
	struct kernel_fn fn = { heat_fn_eval, &hf };
	struct kernel_newton s;
	kernel_newton_set(&s, lo, hlo, hi, hhi, fabs(hlo) <= fabs(hhi) ? lo : hi);
	unsigned it;
	for (it = 1; it <= KERNEL_MAX_ITER; it++) {
		if (kernel_newton_iterate(&s, &fn) == KERNEL_DONE)
			break;
		if (isnan(s.fx))
			return -1; /* P fails inside the bracket */
		double scale = heat_scale(s.x);
		if (kernel_test_delta(s.dx, s.x, tol * scale, 0.0) ||
		    s.hi - s.lo <= 4e-16 * scale)
			break;
	}
	return heat_finish(c, ta, theta, s.x, it, out);
}

/* Append the balance of bracket B to OUT when it refines; returns the
 * count. */
static size_t heat_add(const struct heat_curve *c, double ta, double theta,
                       const struct kernel_bracket *b, double tol,
                       struct heat_root *out, size_t n, size_t max)
{
	if (n >= max)
		return n;
	struct heat_root r;
	if (b->tangent) {
		/* H touches zero there: a fold, kept as it is */
		if (heat_finish(c, ta, theta, b->lo, 0, &r) != 0)
			return n;
		r.tangent = true;
	} else if (heat_refine(c, ta, theta, b->lo, b->hi, tol, &r) != 0) {
		return n;
	}
	/* The same balance at a shared grid point is kept once. */
	if (n > 0 && fabs(out[n - 1].t - r.t) <= 4.0 * tol * heat_scale(r.t))
		return n;
	out[n] = r;
	return n + 1;
}

/*
 * Every balance in [LO, HI] (see heat.h): the kernel's sampling scan of H
 * on the grid (a dip of |H| between grid points that reaches within TOL
 * of the absolute temperature of zero is a fold, one past it two
 * balances close together), each bracket refined.
 */
size_t heat_scan(const struct heat_curve *c, double ta, double theta,
                 double lo, double hi, size_t grid, double tol,
                 struct heat_root *out, size_t max)
{
	if (grid < 8)
		grid = 8;
	if (!(lo < hi) || max == 0)
		return 0;
	struct heat_fn hf = { c, ta, theta };
	struct kernel_fn fn = { heat_fn_eval, &hf };
	struct kernel_bracket br[HEAT_SCAN_MAX];
	struct kernel_scan sc;
	kernel_scan_init(&sc, &fn, heat_fn_scale, tol, br, HEAT_SCAN_MAX);
	double dt = (hi - lo) / (double)grid;
	for (size_t k = 0; k <= grid && !sc.full; k++) {
		double t = k == grid ? hi : lo + (double)k * dt;
		kernel_scan_push(&sc, t, heat_fn_eval(&hf, t, NULL));
	}
	kernel_scan_end(&sc);
	size_t n = 0;
	for (size_t k = 0; k < sc.n; k++)
		n = heat_add(c, ta, theta, &br[k], tol, out, n, max);
	return n;
}
