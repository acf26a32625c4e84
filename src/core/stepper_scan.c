/*
 * stepper_scan.c - the every-root scan, and the bracket the bracketed
 * methods start from.  The scan feeds samples of the residual to
 * kernel.h's sampling scan, which records sign changes and refines dips.
 */
#include <math.h>
#include <stdlib.h>

#include "kernel.h"
#include "stepper_type.h"

/* Even samples over the device's own range in the sampled scan, and the
 * most samples in all. */
#define SCAN_SAMPLES 4000
#define SCAN_MAX_SAMPLES 8192
/* Samples of each sampled piece of a curve given along a parameter. */
#define SCAN_PARAM_SAMPLES 256
/* Most inflections a model may name. */
#define SCAN_MAX_INFLECTIONS 16
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

/* V + r I - voc at parameter T of a curve given along a parameter. */
static double scan_eval_param(void *ctx, double t, double *step)
{
	const struct problem *pb = ctx;
	double v, i;
	if (step != NULL)
		*step = NAN;
	if (pb->dev.type->point_at(pb->dev.p, t, &v, &i) != 0)
		return NAN;
	return v + pb->src.r * i - pb->src.voc;
}

/* The size of that equation's terms at T. */
static double scan_scale_param(void *ctx, double t)
{
	const struct problem *pb = ctx;
	double v, i;
	if (pb->dev.type->point_at(pb->dev.p, t, &v, &i) != 0)
		v = i = 0.0;
	return fabs(v) + fabs(pb->src.r * i) + fabs(pb->src.voc) + 1e-300;
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

/* Copy the kernel's brackets into OUT. */
static size_t scan_copy(const struct kernel_bracket *kb, size_t n,
                        bool in_current, struct bracket *out)
{
	for (size_t k = 0; k < n; k++)
		out[k] = (struct bracket){ kb[k].lo, kb[k].hi, kb[k].tangent,
		                           in_current };
	return n;
}

/* Order doubles (qsort). */
static int scan_cmp(const void *a, const void *b)
{
	double x = *(const double *)a, y = *(const double *)b;
	return (x > y) - (x < y);
}

/*
 * The samples of the sampled scan over [LO, HI] into X (room for
 * SCAN_MAX_SAMPLES), sorted, returning how many: SCAN_SAMPLES even ones
 * over the device's own range [DLO, DHI] (where its features are), and
 * outside it towards LO and HI ever farther apart, 40 a decade of the
 * distance from the range (so a load line reaching kilovolts costs a few
 * hundred samples, not a sampling step of volts across the features).
 * They are written in order (the side below first, from its far end),
 * not sorted afterwards: a sort cost more than the samples' evaluation.
 */
static size_t scan_samples(double lo, double hi, double dlo, double dhi,
                           double *x)
{
	const double step = 1.0592537251772889; /* 10^(1/40) */
	dlo = fmax(dlo, lo);
	dhi = fmin(dhi, hi);
	if (!(dlo < dhi)) {
		dlo = lo;
		dhi = hi;
	}
	double w = (dhi - dlo) / SCAN_SAMPLES;
	/* Below: dlo - d for d = w step, w step^2, ... < the span, then lo;
	 * counted first (with the room the even samples leave), then
	 * written from lo upwards. */
	size_t nl = 0;
	double span = fabs(lo - dlo);
	if (span > w) {
		for (double d = w * step;
		     d < span && SCAN_SAMPLES + 1 + nl < SCAN_MAX_SAMPLES - 1;
		     d *= step)
			nl++;
		x[0] = lo;
		size_t k = nl;
		for (double d = w * step; k > 0; d *= step)
			x[k--] = dlo - d;
		nl++;
	}
	size_t n = nl;
	for (int k = 0; k <= SCAN_SAMPLES; k++)
		x[n++] = k == SCAN_SAMPLES ? dhi : dlo + (dhi - dlo) * k / SCAN_SAMPLES;
	span = fabs(hi - dhi);
	if (span > w) {
		for (double d = w * step; d < span && n < SCAN_MAX_SAMPLES - 1;
		     d *= step)
			x[n++] = dhi + d;
		x[n++] = hi;
	}
	/* Rounding can only tie neighbours; should it ever reorder them,
	 * sort as before. */
	for (size_t k = 1; k < n; k++)
		if (x[k] < x[k - 1]) {
			qsort(x, n, sizeof *x, scan_cmp);
			break;
		}
	return n;
}

/* Run the kernel's sampled scan of FN over the N samples X. */
static size_t scan_sampled(const struct kernel_fn *fn,
                           double (*scale)(void *, double), const double *x,
                           size_t n, struct kernel_bracket *kb, size_t max)
{
	struct kernel_scan sc;
	kernel_scan_init(&sc, fn, scale, SCAN_TANGENT, kb, max);
	for (size_t k = 0; k < n && !sc.full; k++)
		if (k == 0 || x[k] > x[k - 1])
			kernel_scan_push(&sc, x[k], fn->eval(fn->ctx, x[k], NULL));
	kernel_scan_end(&sc);
	return sc.n;
}

/* The residual's slope in the junction variable, for the kernel. */
static double scan_eval_slope(void *ctx, double x, double *step)
{
	if (step != NULL)
		*step = NAN;
	return problem_junction_slope(ctx, x);
}

/* Record a bracket unless it repeats the last; false once OUT is full. */
static bool scan_emit(struct kernel_bracket *out, size_t *n, size_t max,
                      double lo, double flo, double hi, double fhi,
                      bool tangent)
{
	if (*n > 0 && out[*n - 1].lo == lo && out[*n - 1].hi == hi)
		return *n < max;
	if (*n >= max)
		return false;
	out[(*n)++] = (struct kernel_bracket){ lo, hi, flo, fhi, tangent };
	return *n < max;
}

/*
 * The exact scan for a model that names its inflections: between them
 * the conductance is monotone, so the residual's slope F' = 1 + r g (or
 * g) is monotone on each piece and vanishes at most once there; split
 * there, F is monotone on each part and crosses zero exactly when its
 * ends differ in sign (the bracket is then narrowed to WIDTH).  A part
 * whose ends cannot be evaluated is sampled instead.  Returns the
 * brackets written into OUT.
 */
static size_t scan_pieces(const struct problem_junction *j, double lo,
                          double hi, double width, const struct kernel_fn *fn,
                          struct kernel_bracket *out, size_t max)
{
	double bp[SCAN_MAX_INFLECTIONS + 2];
	size_t nb = 0;
	bp[nb++] = lo;
	double infl[SCAN_MAX_INFLECTIONS];
	size_t ni = j->t->inflections(j->p, infl, SCAN_MAX_INFLECTIONS);
	if (ni > SCAN_MAX_INFLECTIONS)
		ni = SCAN_MAX_INFLECTIONS;
	for (size_t k = 0; k < ni; k++)
		if (infl[k] > bp[nb - 1] && infl[k] < hi)
			bp[nb++] = infl[k];
	bp[nb++] = hi;
	struct kernel_fn slope = { scan_eval_slope, (void *)j };
	size_t n = 0;
	for (size_t k = 0; k + 1 < nb; k++) {
		double a = bp[k], b = bp[k + 1];
		double cut[3] = { a, NAN, b };
		size_t nc = 3;
		double sa = problem_junction_slope(j, a);
		double sb = problem_junction_slope(j, b);
		bool critical = (sa < 0.0 && sb > 0.0) || (sa > 0.0 && sb < 0.0);
		if (critical) /* by signs alone: an end may have overflowed */
			cut[1] = kernel_bisect_solve(&slope, a, sa, b, false, 1e-13).x;
		else
			cut[1] = cut[2], nc = 2;
		double f[3];
		for (size_t c = 0; c < nc; c++)
			f[c] = fn->eval(fn->ctx, cut[c], NULL);
		for (size_t c = 0; c + 1 < nc; c++) {
			double s = cut[c], t = cut[c + 1], fs = f[c], ft = f[c + 1];
			if (isnan(fs) || isnan(ft)) {
				/* Cannot tell: sample this part. */
				double xs[SCAN_SAMPLES + 1];
				size_t m = 0;
				for (int q = 0; q <= SCAN_SAMPLES; q++)
					xs[m++] = s + (t - s) * q / SCAN_SAMPLES;
				n += scan_sampled(fn, scan_scale_junction, xs, m, out + n,
				                  max - n);
				continue;
			}
			if (fs == 0.0 && !scan_emit(out, &n, max, s, 0.0, s, 0.0, false))
				return n;
			if ((fs < 0.0 && ft > 0.0) || (fs > 0.0 && ft < 0.0)) {
				/* Halved on the sign until its ends are finite and it
				 * is as tight as a sampled scan's, so that a stepper
				 * started on it (which may need finite ends, and creeps
				 * down an exponential wall) gets a good one; a NaN in
				 * the middle leaves it as far as it got. */
				(void)kernel_narrow(fn, &s, &fs, &t, &ft, width);
				if (!scan_emit(out, &n, max, s, fs, t, ft, false))
					return n;
			}
		}
		/* A turning point that touches zero without crossing it. */
		if (critical && f[1] != 0.0 && (f[0] > 0.0) == (f[1] > 0.0) &&
		    (f[2] > 0.0) == (f[1] > 0.0) &&
		    fabs(f[1]) <= SCAN_TANGENT * scan_scale_junction((void *)j, cut[1]) &&
		    !scan_emit(out, &n, max, cut[1], f[1], cut[1], f[1], true))
			return n;
		if (k + 2 == nb && f[nc - 1] == 0.0 &&
		    !scan_emit(out, &n, max, b, 0.0, b, 0.0, false))
			return n;
	}
	return n;
}

/*
 * The scan of a curve given along a parameter T (model_type.point_at):
 * where V rises with T the residual does too (r >= 0), so that piece
 * holds at most one crossing, found from its ends' signs; the pieces
 * beyond (past a voltage peak) are sampled, more densely near their
 * inner end.  Brackets come out in current.
 */
static size_t scan_param(const struct problem *pb, double *xs,
                         struct kernel_bracket *kb, size_t max)
{
	const struct model_type *t = pb->dev.type;
	struct kernel_fn fn = { scan_eval_param, (void *)pb };
	double t0, t1, a, b;
	t->param_range(pb->dev.p, &t0, &t1);
	t->param_rising(pb->dev.p, &a, &b);
	a = fmax(a, t0);
	b = fmin(b, t1);
	/*
	 * V and I have the sign of T (a passive part), so for r >= 0 the
	 * residual V + r I - voc is below -voc < 0 wherever T < 0 when
	 * voc > 0, and above it wherever T > 0 when voc < 0: no crossing on
	 * that side, which need not be sampled.
	 */
	if (pb->src.voc > 0.0 && pb->src.r >= 0.0) {
		t0 = fmax(t0, 0.0);
		a = fmax(a, 0.0);
	} else if (pb->src.voc < 0.0 && pb->src.r >= 0.0) {
		t1 = fmin(t1, 0.0);
		b = fmin(b, 0.0);
	}
	size_t n = 0;
	/* Below the rising piece: from t0 up to a. */
	if (a > t0) {
		size_t m = 0;
		for (int k = 0; k <= SCAN_PARAM_SAMPLES; k++) {
			double q = (double)k / SCAN_PARAM_SAMPLES;
			xs[m++] = a - (a - t0) * q * q; /* dense near a */
		}
		qsort(xs, m, sizeof *xs, scan_cmp);
		n += scan_sampled(&fn, scan_scale_param, xs, m, kb + n, max - n);
	}
	/* The rising piece: its ends' signs decide. */
	double fa = fn.eval(fn.ctx, a, NULL), fb = fn.eval(fn.ctx, b, NULL);
	if (n < max && ((fa < 0.0 && fb > 0.0) || (fa > 0.0 && fb < 0.0))) {
		double lo = a, hi = b;
		(void)kernel_narrow(&fn, &lo, &fa, &hi, &fb,
		                   (b - a) / SCAN_PARAM_SAMPLES);
		kb[n++] = (struct kernel_bracket){ lo, hi, fa, fb, false };
	} else if (n < max && fb == 0.0) {
		kb[n++] = (struct kernel_bracket){ b, b, 0.0, 0.0, false };
	}
	/* Above it: from b up to t1. */
	if (t1 > b && n < max) {
		size_t m = 0;
		for (int k = 0; k <= SCAN_PARAM_SAMPLES; k++) {
			double q = (double)k / SCAN_PARAM_SAMPLES;
			xs[m++] = b + (t1 - b) * q * q; /* dense near b */
		}
		n += scan_sampled(&fn, scan_scale_param, xs, m, kb + n, max - n);
	}
	/* Into current: I rises with T. */
	for (size_t k = 0; k < n; k++) {
		double v, ilo, ihi;
		if (t->point_at(pb->dev.p, kb[k].lo, &v, &ilo) != 0 ||
		    t->point_at(pb->dev.p, kb[k].hi, &v, &ihi) != 0)
			ilo = ihi = NAN;
		kb[k].lo = ilo;
		kb[k].hi = ihi;
	}
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
	double *xs = malloc(SCAN_MAX_SAMPLES * sizeof *xs);
	if (xs == NULL)
		return 0;
	size_t n = 0;
	if (t->current == NULL && t->point_at != NULL && isfinite(pb->src.r) &&
	    isfinite(pb->src.voc)) {
		n = scan_copy(kb, scan_param(pb, xs, kb, max), true, out);
		free(xs);
		return n;
	}
	if (t->current == NULL) {
		/* A curve given as V(I): scan in current over its range. */
		double lo, hi;
		if (t->voltage != NULL && t->current_range != NULL &&
		    isfinite(pb->src.r) && isfinite(pb->src.voc)) {
			t->current_range(pb->dev.p, &lo, &hi);
			if (lo < hi && isfinite(lo) && isfinite(hi)) {
				struct kernel_fn fn = { scan_eval_current, (void *)pb };
				size_t m = scan_samples(lo, hi, lo, hi, xs);
				n = scan_copy(kb, scan_sampled(&fn, scan_scale_current, xs,
				                               m, kb, max), true, out);
			}
		}
		free(xs);
		return n;
	}
	struct problem_junction j;
	problem_junction_init(&j, pb);
	double lo, hi, dlo, dhi;
	scan_range(pb, &lo, &hi);
	device_range(&pb->dev, &dlo, &dhi);
	struct kernel_fn fn = { scan_eval_junction, &j };
	if (isinf(pb->src.r)) {
		/*
		 * A current source sets no voltage: reach out until the curve
		 * carries more current than it below the range's top and less
		 * above its bottom (no crossing lies beyond where the residual
		 * keeps its sign on a rising branch).
		 */
		for (int k = 0; k < 64 && problem_junction_residual(&j, hi) < 0.0; k++)
			hi += hi - lo;
		for (int k = 0; k < 64 && problem_junction_residual(&j, lo) > 0.0; k++)
			lo -= hi - lo;
	}
	if (t->inflections != NULL) {
		double w = (fmin(dhi, hi) - fmax(dlo, lo)) / SCAN_SAMPLES;
		n = scan_pieces(&j, lo, hi, w > 0.0 ? w : (hi - lo) / SCAN_SAMPLES,
		                &fn, kb, max);
	} else {
		size_t m = scan_samples(lo, hi, dlo, dhi, xs);
		n = scan_sampled(&fn, scan_scale_junction, xs, m, kb, max);
	}
	free(xs);
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
