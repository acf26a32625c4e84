/*
 * stepper_scan.c - the every-root scan, and the bracket the bracketed
 * methods start from.  The scan feeds samples of the residual to
 * kernel.h's sampling scan, which records sign changes and refines dips.
 */
#include <math.h>

#include "kernel.h"
#include "stepper_type.h"

/* Samples of the every-root scan. */
#define SCAN_SAMPLES 4000
/* A dip of |F| within this fraction of the equation's terms is a tangent. */
#define SCAN_TANGENT 1e-9

/* The residual in the junction variable, for the kernel. */
static double scan_eval_junction(void *ctx, double x, double *step)
{
	if (step != NULL)
		*step = NAN;
	return problem_junction_residual(ctx, x);
}

/* The size of the junction equation's terms at X. */
static double scan_scale_junction(void *ctx, double x)
{
	const struct problem_junction *j = ctx;
	if (isinf(j->pb->src.r))
		return fabs(j->pb->src.isc) + 1e-300;
	return fabs(x) + fabs(j->pb->src.voc) + 1e-300;
}

/* The residual in current of a curve given as V(I): V(I) + r I - voc. */
static double scan_eval_current(void *ctx, double i, double *step)
{
	const struct problem *pb = ctx;
	double v;
	if (step != NULL)
		*step = NAN;
	if (device_voltage(&pb->dev, i, &v) != 0)
		return NAN;
	return v + pb->src.r * i - pb->src.voc;
}

/* The size of that equation's terms at I. */
static double scan_scale_current(void *ctx, double i)
{
	const struct problem *pb = ctx;
	double v;
	if (device_voltage(&pb->dev, i, &v) != 0)
		v = 0.0;
	return fabs(v) + fabs(pb->src.voc) + 1e-300;
}

/* The scan range: the device's range widened to 0 V and voc. */
static void scan_range(const struct problem *pb, double *lo, double *hi)
{
	device_range(&pb->dev, lo, hi);
	*lo = fmin(*lo, 0.0);
	*hi = fmax(*hi, 0.0);
	if (isfinite(pb->src.voc)) {
		*lo = fmin(*lo, pb->src.voc);
		*hi = fmax(*hi, pb->src.voc);
	}
}

/* Run the kernel's scan over N even samples of FN on [LO, HI]. */
static size_t scan_even(const struct kernel_fn *fn,
                        double (*scale)(void *, double), double lo, double hi,
                        struct kernel_bracket *kb, size_t max)
{
	struct kernel_scan sc;
	kernel_scan_init(&sc, fn, scale, SCAN_TANGENT, kb, max);
	for (int k = 0; k <= SCAN_SAMPLES && !sc.full; k++) {
		double x = k == 0 ? lo : lo + (hi - lo) * k / SCAN_SAMPLES;
		kernel_scan_push(&sc, x, fn->eval(fn->ctx, x, NULL));
	}
	kernel_scan_end(&sc);
	return sc.n;
}

/* Copy the kernel's brackets into OUT. */
static size_t scan_copy(const struct kernel_bracket *kb, size_t n,
                        bool in_current, struct bracket *out)
{
	for (size_t k = 0; k < n; k++)
		out[k] = (struct bracket){ kb[k].lo, kb[k].hi, kb[k].tangent,
		                           in_current };
	return n;
}

/* Scan for every crossing (see stepper.h). */
size_t stepper_scan(const struct problem *pb, struct bracket *out, size_t max)
{
	struct kernel_bracket kb[64];
	const struct model_type *t = pb->dev.type;
	if (max > sizeof kb / sizeof kb[0])
		max = sizeof kb / sizeof kb[0];
	if (max == 0)
		return 0;
	if (t->current == NULL) {
		/* A curve given as V(I): scan in current over its range. */
		double lo, hi;
		if (t->voltage == NULL || t->current_range == NULL ||
		    !isfinite(pb->src.r) || !isfinite(pb->src.voc))
			return 0;
		t->current_range(pb->dev.p, &lo, &hi);
		if (!(lo < hi) || !isfinite(lo) || !isfinite(hi))
			return 0;
		struct kernel_fn fn = { scan_eval_current, (void *)pb };
		size_t n = scan_even(&fn, scan_scale_current, lo, hi, kb, max);
		return scan_copy(kb, n, true, out);
	}
	struct problem_junction j;
	problem_junction_init(&j, pb);
	double lo, hi;
	scan_range(pb, &lo, &hi);
	struct kernel_fn fn = { scan_eval_junction, &j };
	size_t n = scan_even(&fn, scan_scale_junction, lo, hi, kb, max);
	return scan_copy(kb, n, false, out);
}

/* Fill ROW for junction voltage X. */
void stepper_junction_row(const struct problem_junction *j, double x,
                          struct trace_row *row)
{
	problem_junction_point(j, x, &row->v, &row->i);
	row->residual = problem_junction_residual(j, x);
	row->on = ON_BOTH;
}

/*
 * Lower the upper end HI of a bracket [0, voc] of a monotone device to the
 * junction voltage at which the device alone carries voc / (r + Rs): the
 * current on the load line cannot be larger, so the residual there is
 * >= 0 and finite even where the residual at voc overflows exp().  Without
 * it Newton falls back to bisection from an overflowing end and then
 * descends on the exponential by about nVt per step, and Brent starts
 * from a non-finite value.
 */
static void stepper_tighten(const struct problem_junction *j, double lo,
                            double *hi, double *fhi)
{
	double voc = j->pb->src.voc;
	if (!(voc > 0.0) || !(j->rt > 0.0) || !isfinite(j->rt))
		return;
	double est = problem_junction_inverse(j, voc / j->rt);
	if (!(est > lo && est < *hi))
		return;
	double f = problem_junction_residual(j, est);
	if (f >= 0.0 && isfinite(f)) {
		*hi = est;
		*fhi = f;
	}
}

/* The bracketed methods' starting bracket (see stepper_type.h). */
int stepper_find_bracket(const struct stepper_env *env,
                         const struct problem_junction *j, double *lo,
                         double *flo, double *hi, double *fhi)
{
	const struct problem *pb = &env->pb;
	if (pb->dev.type->current == NULL)
		return -1;
	if (env->have_bracket) {
		*lo = env->bracket.lo;
		*hi = env->bracket.hi;
		*flo = problem_junction_residual(j, *lo);
		*fhi = problem_junction_residual(j, *hi);
		return 0;
	}
	if (pb->dev.type->monotone && isfinite(pb->src.voc)) {
		/* One root, between 0 and voc when I(0) = 0; the scan below is
		 * the fallback for curves that do not pass the origin. */
		double a = fmin(0.0, pb->src.voc), b = fmax(0.0, pb->src.voc);
		double fa = problem_junction_residual(j, a);
		double fb = problem_junction_residual(j, b);
		if (fa <= 0.0 && fb >= 0.0) {
			*lo = a, *hi = b, *flo = fa, *fhi = fb;
			stepper_tighten(j, *lo, hi, fhi);
			return 0;
		}
	}
	/* The scan's crossing nearest the start voltage. */
	struct bracket br[64];
	size_t nb = stepper_scan(pb, br, sizeof br / sizeof br[0]);
	double x0 = stepper_start_voltage(env), best = INFINITY;
	int found = -1;
	for (size_t k = 0; k < nb; k++) {
		if (br[k].tangent || br[k].in_current)
			continue;
		double dist = fabs(0.5 * (br[k].lo + br[k].hi) - x0);
		if (dist < best) {
			best = dist;
			*lo = br[k].lo;
			*hi = br[k].hi;
			found = 0;
		}
	}
	if (found == 0) {
		*flo = problem_junction_residual(j, *lo);
		*fhi = problem_junction_residual(j, *hi);
	}
	return found;
}
