/*
 * models_check.h - helpers shared by the tests/core/test_models_*.c
 * programs: a central-difference check of a model's derivatives.
 *
 * Header-only (static functions) so each test program stays one file.
 */
#ifndef BIASLINE_MODELS_CHECK_H
#define BIASLINE_MODELS_CHECK_H

#include <math.h>
#include <stdbool.h>

#include "core/model.h"

/*
 * True when D matches the central difference of F over [X - H, X + H]
 * (truncation O(h^2), rounding about eps |F| / h: common practice).
 */
static inline bool models_check_central(double (*f)(const double *p, double x),
                                        const double *p, double x, double h,
                                        double d)
{
	double fp = f(p, x + h), fm = f(p, x - h);
	double fd = (fp - fm) / (2.0 * h);
	double allow = 2e-6 * fabs(d) +
	               16.0 * 2.2e-16 * (fabs(fp) + fabs(fm) + 2.0 * fabs(x * d)) /
	                   (2.0 * h);
	return isfinite(d) && fabs(fd - d) <= allow;
}

/*
 * True when D matches the central difference (FP - FM) / 2H taken at X
 * (same allowance as models_check_central).
 */
static inline bool models_check_difference(double fp, double fm, double x,
                                           double h, double d)
{
	double fd = (fp - fm) / (2.0 * h);
	double allow = 2e-6 * fabs(d) +
	               16.0 * 2.2e-16 * (fabs(fp) + fabs(fm) + 2.0 * fabs(x * d)) /
	                   (2.0 * h);
	return isfinite(d) && fabs(fd - d) <= allow;
}

/* V(I) of TYPE as a plain function (NaN where undefined). */
static inline double models_check_voltage(const struct model_type *t,
                                          const double *p, double i)
{
	double v;
	return t->voltage(p, i, &v) == 0 ? v : NAN;
}

/*
 * Check conductance against current (and resistance against voltage when
 * the model has both) at V.  Returns the number of failed checks.
 */
static inline int models_check_derivatives(const struct model_type *t,
                                           const double *p, double v)
{
	int bad = 0;
	if (t->current != NULL) {
		double g = t->conductance(p, v);
		double i = t->current(p, v);
		double h = fmin(1e-6 * fmax(fabs(v), 1e-3),
		                fabs(g) > 0.0 ? 1e-6 * fmax(fabs(i), 1e-15) / fabs(g)
		                              : 1e-6);
		if (!models_check_central(t->current, p, v, h, g))
			bad++;
	}
	return bad;
}

#endif
