/*
 * model_util.c - helpers the model files share: the inverse of a strictly
 * increasing function by safeguarded Newton-Raphson inside a kept bracket.
 */
#include <math.h>

#include "models.h"

/* Invert F (increasing, derivative DF) on [LO, HI] for F(X) = TARGET. */
int model_invert(double (*f)(const double *p, double x),
                 double (*df)(const double *p, double x), const double *p,
                 double target, double lo, double hi, double *x)
{
	double flo = f(p, lo) - target, fhi = f(p, hi) - target;
	if (!(lo <= hi) || isnan(flo) || isnan(fhi) || flo > 0.0 || fhi < 0.0)
		return -1;
	if (flo == 0.0) {
		*x = lo;
		return 0;
	}
	if (fhi == 0.0) {
		*x = hi;
		return 0;
	}
	/* Start at the end nearer the target in function value. */
	double v = fabs(flo) < fabs(fhi) ? lo : hi;
	for (int it = 0; it < 300; it++) {
		double fv = f(p, v) - target;
		if (fv == 0.0)
			break;
		if (fv < 0.0)
			lo = v;
		else
			hi = v; /* F > 0, or overflow: v is above the root */
		double d = df(p, v);
		double vn = NAN;
		if (isfinite(fv) && isfinite(d) && d > 0.0)
			vn = v - fv / d;
		if (!(vn > lo && vn < hi))
			vn = 0.5 * (lo + hi);
		double step = vn - v;
		v = vn;
		double scale = fmax(fabs(v), 1e-300);
		if (fabs(step) <= 4e-16 * scale || hi - lo <= 4e-16 * scale)
			break;
	}
	*x = v;
	return isfinite(v) ? 0 : -1;
}
