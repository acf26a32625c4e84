/*
 * kernel.c - bracketed root finding and minimisation (see kernel.h).
 */
#include "kernel.h"

#include <float.h>
#include <math.h>

/* The golden ratio's conjugate, (sqrt(5) - 1) / 2. */
#define KERNEL_PHI 0.6180339887498949

/* Smallest move or width that still counts as a move. */
#define KERNEL_TINY 1e-300

/* True when A and B are non-zero and of opposite signs. */
static bool kernel_opposite(double a, double b)
{
	return (a < 0.0 && b > 0.0) || (a > 0.0 && b < 0.0);
}

/* ---------------------------------------------------------------------- */
/* Safeguarded Newton                                                      */

/* Start Newton on a bracket. */
void kernel_newton_set(struct kernel_newton *s, double lo, double flo,
                       double hi, double fhi, double x0)
{
	s->lo = lo;
	s->hi = hi;
	s->flo = flo;
	s->fhi = fhi;
	s->x = x0 >= lo && x0 <= hi ? x0 : hi;
	s->fx = NAN;
	s->dx = NAN;
	s->step = NAN;
	s->move = KERNEL_MOVE_NONE;
	s->limit = NULL;
	s->limit_ctx = NULL;
}

/*
 * One evaluation and one move: Newton's step, bisection when it would
 * leave the kept bracket (rtsafe: Press et al., Numerical Recipes, 3rd
 * ed., 2007, sec. 9.4).
 */
enum kernel_status kernel_newton_iterate(struct kernel_newton *s,
                                         const struct kernel_fn *fn)
{
	double x = s->x, step = NAN;
	double f = fn->eval(fn->ctx, x, &step);
	s->fx = f;
	s->step = step;
	if (f == 0.0) {
		s->dx = 0.0;
		s->lo = s->hi = x;
		s->flo = s->fhi = 0.0;
		return KERNEL_DONE;
	}
	/* Keep the end whose sign differs from F's.  The lower end is the
	 * negative one unless its value says otherwise. */
	if (!isnan(f)) {
		bool lo_negative = s->flo < 0.0 || (s->flo == 0.0 && s->fhi > 0.0);
		if ((f < 0.0) == lo_negative) {
			s->lo = x;
			s->flo = f;
		} else {
			s->hi = x;
			s->fhi = f;
		}
	}
	double xn = x - step;
	s->move = KERNEL_MOVE_NEWTON;
	if (fabs(step) <= 4.0 * DBL_EPSILON * fabs(x)) {
		/* A step within rounding of X: converged, whichever side of an
		 * end it lands (an end may be X itself). */
		s->dx = xn - x;
		s->x = xn;
		return KERNEL_CONTINUE;
	}
	if (s->limit != NULL && isfinite(xn)) {
		double xl = s->limit(s->limit_ctx, xn, x);
		if (xl != xn)
			s->move = KERNEL_MOVE_LIMITED;
		xn = xl;
	}
	if (!(xn > s->lo && xn < s->hi)) {
		xn = 0.5 * (s->lo + s->hi);
		s->move = KERNEL_MOVE_BISECTION;
	}
	s->dx = xn - x;
	s->x = xn;
	return KERNEL_CONTINUE;
}

/* ---------------------------------------------------------------------- */
/* Brent-Dekker                                                            */

/*
 * Keep [b, c] a sign-change bracket with b the better end: the step Brent
 * takes at the top of each iteration in the published algorithm, done
 * after each evaluation instead, so the bracket is valid between calls.
 */
static void kernel_brent_normalise(struct kernel_brent *s)
{
	if ((s->fb < 0.0 && s->fc < 0.0) || (s->fb > 0.0 && s->fc > 0.0)) {
		s->c = s->a;
		s->fc = s->fa;
		s->d = s->e = s->b - s->a;
	}
	if (fabs(s->fc) < fabs(s->fb)) {
		s->a = s->b;
		s->b = s->c;
		s->c = s->a;
		s->fa = s->fb;
		s->fb = s->fc;
		s->fc = s->fa;
	}
}

/* Start Brent on a bracket. */
void kernel_brent_set(struct kernel_brent *s, double lo, double flo, double hi,
                      double fhi, double rel, double abs)
{
	s->a = lo;
	s->fa = flo;
	s->b = hi;
	s->fb = fhi;
	s->c = s->a;
	s->fc = s->fa;
	s->d = s->e = s->b - s->a;
	s->rel = rel;
	s->abs = abs;
	kernel_brent_normalise(s);
}

/* The least step at B: rounding plus the requested tolerance, halved. */
static double kernel_brent_tol(const struct kernel_brent *s)
{
	return 0.5 * (DBL_EPSILON * fabs(s->b) + s->rel * fabs(s->b) + s->abs) +
	       KERNEL_TINY;
}

/*
 * One iteration of Brent's zero() (Brent 1973, ch. 4, sec. 4.6; the same
 * scheme as GSL's brent solver): interpolate when it is safe and shrinks
 * fast enough, else bisect.
 */
enum kernel_status kernel_brent_iterate(struct kernel_brent *s,
                                        const struct kernel_fn *fn)
{
	double tol = kernel_brent_tol(s);
	double m = 0.5 * (s->c - s->b);
	if (s->fb == 0.0 || fabs(m) <= tol)
		return KERNEL_DONE;
	if (fabs(s->e) < tol || fabs(s->fa) <= fabs(s->fb)) {
		s->d = m; /* bisection */
		s->e = m;
	} else {
		double p, q, r, ss = s->fb / s->fa;
		if (s->a == s->c) {
			p = 2.0 * m * ss; /* secant */
			q = 1.0 - ss;
		} else {
			q = s->fa / s->fc; /* inverse quadratic interpolation */
			r = s->fb / s->fc;
			p = ss * (2.0 * m * q * (q - r) - (s->b - s->a) * (r - 1.0));
			q = (q - 1.0) * (r - 1.0) * (ss - 1.0);
		}
		if (p > 0.0)
			q = -q;
		else
			p = -p;
		if (2.0 * p < fmin(3.0 * m * q - fabs(tol * q), fabs(s->e * q))) {
			s->e = s->d;
			s->d = p / q;
		} else {
			s->d = m;
			s->e = m;
		}
	}
	s->a = s->b;
	s->fa = s->fb;
	s->b += fabs(s->d) > tol ? s->d : (m > 0.0 ? tol : -tol);
	s->fb = fn->eval(fn->ctx, s->b, NULL);
	if (!isfinite(s->fb))
		return KERNEL_NONFINITE;
	kernel_brent_normalise(s);
	return s->fb == 0.0 ? KERNEL_DONE : KERNEL_CONTINUE;
}

/* The lower end of the bracket. */
double kernel_brent_lower(const struct kernel_brent *s)
{
	return fmin(s->b, s->c);
}

/* The upper end of the bracket. */
double kernel_brent_upper(const struct kernel_brent *s)
{
	return fmax(s->b, s->c);
}

/* ---------------------------------------------------------------------- */
/* Golden section                                                          */

/* Start a golden-section search on [A, B] (Kiefer, Proc. AMS 4(3),
 * 1953: the interior points at the golden ratio, so that each iteration
 * reuses one of them). */
void kernel_golden_set(struct kernel_golden *s, const struct kernel_fn *fn,
                       double a, double b)
{
	s->a = a;
	s->b = b;
	s->x1 = b - KERNEL_PHI * (b - a);
	s->x2 = a + KERNEL_PHI * (b - a);
	s->f1 = fn->eval(fn->ctx, s->x1, NULL);
	s->f2 = fn->eval(fn->ctx, s->x2, NULL);
}

/* Drop the worse end and evaluate the new interior point. */
void kernel_golden_iterate(struct kernel_golden *s, const struct kernel_fn *fn)
{
	if (s->f1 < s->f2) {
		s->b = s->x2;
		s->x2 = s->x1;
		s->f2 = s->f1;
		s->x1 = s->b - KERNEL_PHI * (s->b - s->a);
		s->f1 = fn->eval(fn->ctx, s->x1, NULL);
	} else {
		s->a = s->x1;
		s->x1 = s->x2;
		s->f1 = s->f2;
		s->x2 = s->a + KERNEL_PHI * (s->b - s->a);
		s->f2 = fn->eval(fn->ctx, s->x2, NULL);
	}
}

/* The better interior point. */
double kernel_golden_best(const struct kernel_golden *s, double *fmin)
{
	if (s->f1 < s->f2) {
		*fmin = s->f1;
		return s->x1;
	}
	*fmin = s->f2;
	return s->x2;
}

/* ---------------------------------------------------------------------- */
/* Tests                                                                   */

/* The step DX at X is within ABS + REL |X|. */
bool kernel_test_delta(double dx, double x, double abs, double rel)
{
	return fabs(dx) <= abs + rel * fabs(x);
}

/* The bracket [LO, HI] is within ABS + REL times its smaller end. */
bool kernel_test_interval(double lo, double hi, double abs, double rel)
{
	double alo = fabs(lo), ahi = fabs(hi);
	double m = (lo > 0.0 && hi > 0.0) || (lo < 0.0 && hi < 0.0)
	               ? fmin(alo, ahi)
	               : 0.0;
	return fabs(hi - lo) <= abs + rel * m;
}

/* ---------------------------------------------------------------------- */
/* Drivers                                                                 */

/* Newton to REL (see kernel.h). */
struct kernel_result kernel_newton_solve(const struct kernel_fn *fn, double lo,
                                         double flo, double hi, double fhi,
                                         double x0, double rel,
                                         double (*limit)(void *, double,
                                                         double),
                                         void *limit_ctx)
{
	struct kernel_newton s;
	struct kernel_result r = { .x = NAN, .fx = NAN };
	kernel_newton_set(&s, lo, flo, hi, fhi, x0);
	s.limit = limit;
	s.limit_ctx = limit_ctx;
	for (r.iters = 1; r.iters <= KERNEL_MAX_ITER; r.iters++) {
		enum kernel_status st = kernel_newton_iterate(&s, fn);
		if (st == KERNEL_DONE ||
		    (s.move == KERNEL_MOVE_NEWTON &&
		     kernel_test_delta(s.dx, s.x, KERNEL_TINY, rel)) ||
		    kernel_test_interval(s.lo, s.hi, KERNEL_TINY, rel)) {
			r.ok = true;
			break;
		}
	}
	if (r.iters > KERNEL_MAX_ITER)
		r.iters = KERNEL_MAX_ITER;
	r.x = s.x;
	r.fx = s.fx;
	r.lo = s.lo;
	r.hi = s.hi;
	return r;
}

/* Brent to REL (see kernel.h). */
struct kernel_result kernel_brent_solve(const struct kernel_fn *fn, double lo,
                                        double flo, double hi, double fhi,
                                        double rel, double abs)
{
	struct kernel_brent s;
	struct kernel_result r = { .x = NAN, .fx = NAN };
	kernel_brent_set(&s, lo, flo, hi, fhi, rel, abs);
	enum kernel_status st = KERNEL_CONTINUE;
	for (r.iters = 0; r.iters < KERNEL_MAX_ITER; r.iters++) {
		if (s.fb == 0.0 ||
		    kernel_test_interval(kernel_brent_lower(&s),
		                         kernel_brent_upper(&s), abs + KERNEL_TINY,
		                         rel + DBL_EPSILON)) {
			r.ok = true;
			break;
		}
		st = kernel_brent_iterate(&s, fn);
		if (st == KERNEL_NONFINITE)
			break;
		if (st == KERNEL_DONE) {
			r.ok = true;
			r.iters++;
			break;
		}
	}
	r.x = s.b;
	r.fx = s.fb;
	r.lo = kernel_brent_lower(&s);
	r.hi = kernel_brent_upper(&s);
	return r;
}

/* Bisection on values (Burden & Faires, Numerical Analysis, 9th ed.,
 * 2010, sec. 2.1), see kernel.h. */
struct kernel_result kernel_bisect_solve(const struct kernel_fn *fn, double lo,
                                         double flo, double hi, bool log,
                                         double rel)
{
	struct kernel_result r = { .x = NAN, .fx = NAN, .ok = true };
	for (r.iters = 0; r.iters < KERNEL_MAX_ITER; r.iters++) {
		if (fabs(hi - lo) <= rel * fmax(fabs(lo), fabs(hi)))
			break;
		double m = log ? lo * sqrt(hi / lo) : 0.5 * (lo + hi);
		if (!(m > fmin(lo, hi) && m < fmax(lo, hi)))
			break; /* no double left between the ends */
		double fm = fn->eval(fn->ctx, m, NULL);
		if (fm == 0.0) {
			lo = hi = m;
			flo = 0.0;
			break;
		}
		if (isnan(fm)) {
			r.ok = false;
			break;
		}
		if ((fm < 0.0) == (flo < 0.0)) {
			lo = m;
			flo = fm;
		} else {
			hi = m;
		}
	}
	r.lo = fmin(lo, hi);
	r.hi = fmax(lo, hi);
	r.x = 0.5 * (lo + hi);
	r.fx = flo;
	return r;
}

/* Bisection on the sign alone (Burden & Faires 2010, sec. 2.1: the
 * method needs only the sign of F at the middle), see kernel.h. */
int kernel_narrow(const struct kernel_fn *fn, double *lo, double *flo,
                  double *hi, double *fhi, double width)
{
	int k;
	for (k = 0; k < KERNEL_MAX_ITER; k++) {
		if (isfinite(*flo) && isfinite(*fhi) && !(*hi - *lo > width))
			return k;
		double m = 0.5 * (*lo + *hi);
		if (!(m > fmin(*lo, *hi) && m < fmax(*lo, *hi)))
			return -1;
		double fm = fn->eval(fn->ctx, m, NULL);
		if (isnan(fm))
			return -1;
		if (fm == 0.0) {
			*lo = *hi = m;
			*flo = *fhi = 0.0;
			return k + 1;
		}
		if ((fm < 0.0) == (*flo < 0.0)) {
			*lo = m;
			*flo = fm;
		} else {
			*hi = m;
			*fhi = fm;
		}
	}
	return k;
}

/* Golden section to REL (see kernel.h). */
struct kernel_result kernel_golden_solve(const struct kernel_fn *fn, double a,
                                         double b, double rel, double abs)
{
	struct kernel_golden s;
	struct kernel_result r = { .ok = true };
	kernel_golden_set(&s, fn, a, b);
	for (r.iters = 2; r.iters < KERNEL_MAX_ITER; r.iters++) {
		if (!(s.x1 < s.x2) ||
		    s.b - s.a <= abs + rel * (fabs(s.a) + fabs(s.b)))
			break;
		kernel_golden_iterate(&s, fn);
	}
	r.x = kernel_golden_best(&s, &r.fx);
	r.lo = s.a;
	r.hi = s.b;
	return r;
}

/* ---------------------------------------------------------------------- */
/* The sampling scan                                                       */

/* Start a scan. */
void kernel_scan_init(struct kernel_scan *s, const struct kernel_fn *fn,
                      double (*scale)(void *ctx, double x), double tangent,
                      struct kernel_bracket *out, size_t max)
{
	s->fn = fn;
	s->scale = scale;
	s->tangent = tangent;
	s->out = out;
	s->max = max;
	s->n = 0;
	s->seen = 0;
	s->full = max == 0;
}

/* Record a bracket; false once MAX are recorded. */
static bool kernel_scan_emit(struct kernel_scan *s, double lo, double flo,
                             double hi, double fhi, bool tangent)
{
	if (s->n >= s->max) {
		s->full = true;
		return false;
	}
	s->out[s->n++] = (struct kernel_bracket){ lo, hi, flo, fhi, tangent };
	if (s->n >= s->max)
		s->full = true;
	return true;
}

/* The dip search's view of F: F times the samples' sign, so the dip is a
 * minimum, with the first point below -ALLOW noted. */
struct kernel_dip {
	const struct kernel_fn *fn;
	double sign;          /* +1 or -1: the sign of F at the samples */
	double allow;         /* how far below 0 counts as a crossing */
	double xs, fs;        /* a point well past zero (F there) */
	bool found;
};

/* sign * F(x), noting a point past zero. */
static double kernel_dip_eval(void *ctx, double x, double *step)
{
	struct kernel_dip *d = ctx;
	double f = d->fn->eval(d->fn->ctx, x, NULL);
	if (step != NULL)
		*step = NAN;
	double sf = d->sign * f;
	if (!d->found && sf < -d->allow) {
		d->found = true;
		d->xs = x;
		d->fs = f;
	}
	return sf;
}

/*
 * A dip of |F| at x1 between x0 and x2, all of one sign: golden section
 * for the minimum of sign * F.  A value past zero by more than the
 * tangent allowance means two crossings, one each side of it (the search
 * stops there); a minimum within the allowance of zero is a tangent.
 */
static void kernel_scan_dip(struct kernel_scan *s)
{
	double scale = s->scale != NULL ? s->scale(s->fn->ctx, s->x[1]) : 1.0;
	struct kernel_dip d = { s->fn, s->f[1] > 0.0 ? 1.0 : -1.0,
	                        s->tangent * scale, NAN, NAN, false };
	struct kernel_fn g = { kernel_dip_eval, &d };
	struct kernel_golden gs;
	double a = s->x[0], b = s->x[2];
	kernel_golden_set(&gs, &g, a, b);
	for (int it = 0; it < KERNEL_MAX_ITER && !d.found; it++) {
		if (!(gs.x1 < gs.x2) ||
		    gs.b - gs.a <= 1e-15 * (fabs(gs.a) + fabs(gs.b)))
			break;
		kernel_golden_iterate(&gs, &g);
	}
	if (d.found) {
		if (kernel_scan_emit(s, a, s->f[0], d.xs, d.fs, false))
			kernel_scan_emit(s, d.xs, d.fs, b, s->f[2], false);
		return;
	}
	double fm, xm = kernel_golden_best(&gs, &fm);
	if (fm <= d.allow)
		kernel_scan_emit(s, xm, d.sign * fm, xm, d.sign * fm, true);
}

/*
 * Take the next sample: a sign change between neighbours holds a zero
 * (Bolzano's theorem, F continuous), and a dip of |F| between two is
 * refined by golden section (kernel_scan_dip).
 */
void kernel_scan_push(struct kernel_scan *s, double x, double f)
{
	if (s->seen == 0) {
		s->x[0] = s->x[1] = x;
		s->f[0] = s->f[1] = f;
		s->seen = 1;
		return;
	}
	s->x[2] = x;
	s->f[2] = f;
	double f0 = s->f[0], f1 = s->f[1], f2 = f;
	if (!s->full && isfinite(f1) && isfinite(f2)) {
		if (f1 == 0.0) {
			if (s->n == 0 || s->out[s->n - 1].hi < s->x[1])
				kernel_scan_emit(s, s->x[1], 0.0, s->x[1], 0.0, false);
		} else if (kernel_opposite(f1, f2)) {
			kernel_scan_emit(s, s->x[1], f1, x, f2, false);
		} else if (s->tangent >= 0.0 && s->seen >= 2 &&
		           fabs(f1) < fabs(f0) && fabs(f1) < fabs(f2) &&
		           (f0 > 0.0) == (f1 > 0.0) && (f2 > 0.0) == (f1 > 0.0)) {
			kernel_scan_dip(s);
		}
	}
	s->x[0] = s->x[1];
	s->f[0] = s->f[1];
	s->x[1] = s->x[2];
	s->f[1] = s->f[2];
	if (s->seen < 3)
		s->seen++;
}

/* After the last sample. */
void kernel_scan_end(struct kernel_scan *s)
{
	if (s->seen > 0 && !s->full && s->f[1] == 0.0 &&
	    (s->n == 0 || s->out[s->n - 1].hi < s->x[1]))
		kernel_scan_emit(s, s->x[1], 0.0, s->x[1], 0.0, false);
}
