/*
 * model_util.c - helpers the model files share: the inverse of a strictly
 * increasing function, by the kernel's safeguarded Newton-Raphson; and the
 * self-heating keys' rules.
 */
#include <math.h>
#include <stdio.h>

#include "../kernel.h"
#include "models.h"

/* The shared self-heating rules (see models.h). */
int model_thermal_check(const double *p, int theta, int tamb, int tjmax,
                        char *err, size_t errlen)
{
	if (p[theta] > 0.0 && !(p[tjmax] > p[tamb])) {
		snprintf(err, errlen,
		         "maximum_junction_temperature: %.4g degC must lie above "
		         "ambient_temperature %.4g degC", p[tjmax], p[tamb]);
		return -1;
	}
	return 0;
}

/* F(x) - target and its Newton step, for model_invert. */
struct model_invert_ctx {
	double (*f)(const double *p, double x);
	double (*df)(const double *p, double x);
	const double *p;
	double target;
};

/* F(X) - target, and the step (F - target) / F'. */
static double model_invert_eval(void *ctx, double x, double *step)
{
	const struct model_invert_ctx *c = ctx;
	double fx = c->f(c->p, x) - c->target;
	if (step != NULL) {
		double d = c->df(c->p, x);
		*step = isfinite(fx) && isfinite(d) && d > 0.0 ? fx / d : NAN;
	}
	return fx;
}

/* Invert F (increasing, derivative DF) on [LO, HI] for F(X) = TARGET. */
int model_invert(double (*f)(const double *p, double x),
                 double (*df)(const double *p, double x), const double *p,
                 double target, double lo, double hi, double *x)
{
	struct model_invert_ctx c = { f, df, p, target };
	struct kernel_fn fn = { model_invert_eval, &c };
	double flo = model_invert_eval(&c, lo, NULL);
	double fhi = model_invert_eval(&c, hi, NULL);
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
	struct kernel_result r =
		kernel_newton_solve(&fn, lo, flo, hi, fhi,
		                    fabs(flo) < fabs(fhi) ? lo : hi, 4e-16, NULL, NULL);
	*x = r.x;
	return isfinite(r.x) ? 0 : -1;
}
