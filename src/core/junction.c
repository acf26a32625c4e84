/*
 * junction.c - vj + r * Ij(vj) = voc, in closed form for a Shockley
 * junction and by safeguarded Newton-Raphson otherwise.
 *
 * The closed form.  For Ij = Is (exp(vj / nVt) - 1) write u = vj / nVt,
 * a = Is r / nVt and b0 = voc / nVt.  The equation is
 *
 *     u + a expm1(u) = b0,
 *
 * and w = a e^u satisfies w + ln w = ln a + b0 + a =: x, so w = omega(x),
 * the Wright omega function (Corless & Jeffrey, "The Wright omega
 * function", AISC 2002): the Lambert W solution of a diode behind a
 * resistor (Banwell & Jayakumar, Electronics Letters 36(4), 2000) taken
 * in log space, so that nothing overflows however far forward the diode
 * is driven.  omega comes from a start of a few digits (a series about 1,
 * the asymptotic expansion above, e^x below) and one or two steps of the
 * fourth-order iteration of Fritsch, Shafer & Crowley ("Algorithm 443:
 * Solution of the transcendental equation w e^w = x", CACM 16(2), 1973),
 * in the form for omega of Lawrence, Corless & Jeffrey (ACM TOMS 38(3),
 * 2012, Algorithm 917).
 *
 * From w: u = b0 - (w - a), exact in arithmetic, then one Newton
 * correction of u + a expm1(u) - b0 on the junction's own equation.  That
 * correction costs the one exponential of the check: its size bounds the
 * distance to the root, and after it the error is of the order of its
 * square.  The current comes from the better-conditioned side: the
 * line, nVt (b0 - u) / r = nVt (w - a) / r, where the device is the
 * steeper curve, else the device, Is expm1(u); and the junction's
 * conductance is Is e^u / nVt = w / r, so r_d needs no exponential either.
 *
 * The fallback.  F(vj) = vj + r Ij(vj) - voc is increasing, so a kept
 * bracket [lo, hi] (F(lo) <= 0 <= F(hi)) holds the root; kernel.h's
 * safeguarded Newton iterates in it.  Where the load line is the flatter
 * curve the step is taken on G(v) = v - Vj((voc - v) / r), which has the
 * sign and root of F and is nearly linear there (one log instead of an
 * exp and an expm1).
 */
#include "junction.h"

#include <float.h>
#include <math.h>
#include <stdbool.h>
#include <stdint.h>
#include <string.h>

#include "kernel.h"

/* ---------------------------------------------------------------------- */
/* The Wright omega function                                               */

/*
 * omega(x) for -37.5 <= x < -2, where omega is below 0.136 and ln w is
 * nearly x: with y = e^x and w = y (1 + s), w + ln w = x reads
 * g(s) = log1p(s) + y (1 + s) = 0, whose terms have no cancellation.  The
 * series of W(y) (Corless et al., Adv. Comput. Math. 5, 1996, eq. 3.1:
 * W(y) = sum (-n)^(n-1) y^n / n!) gives s to y^6, and Newton on g, whose
 * error after a step is about ds^2 / 2, finishes it.
 */
static double junction_omega_small(double x)
{
	double y = exp(x);
	double s = y * (-1.0 + y * (1.5 + y * (-8.0 / 3.0 +
	                                     y * (125.0 / 24.0 + y * (-54.0 / 5.0)))));
	for (int k = 0; k < 4; k++) {
		double ds = (log1p(s) + y * (1.0 + s)) / (1.0 / (1.0 + s) + y);
		s -= ds;
		if (ds * ds <= DBL_EPSILON * DBL_EPSILON)
			break;
	}
	return y * (1.0 + s);
}

/* omega(x), see junction.h. */
double junction_wright_omega(double x)
{
	double w;
	if (x < -37.5) {
		/* omega = e^x (1 - e^x + ...): the rest is below rounding. */
		return exp(x);
	}
	if (x < -2.0)
		return junction_omega_small(x);
	if (x <= 2.5) {
		/* The Taylor series about x = 1, where omega = 1. */
		double d = x - 1.0;
		w = 1.0 + d * (1.0 / 2.0 +
		               d * (1.0 / 16.0 +
		                    d * (-1.0 / 192.0 +
		                         d * (-1.0 / 3072.0 + d * (13.0 / 61440.0)))));
	} else {
		/* x - ln x + ln x / x (Corless et al., Adv. Comput. Math. 5,
		 * 1996, eq. 4.19, in x = ln z). */
		double l = log(x);
		w = x - l + l / x;
	}
	/*
	 * Fritsch-Shafer-Crowley steps: r = x - w - ln w, and
	 * w <- w (1 + r / (1 + w) (q - r/2) / (q - r)), q = (1 + w)(1 + w +
	 * 2r/3).  Fourth order: a relative change below 1e-4 leaves an error
	 * near 1e-16 behind it.
	 */
	for (int k = 0; k < 3; k++) {
		double r = x - w - log(w);
		double wp = 1.0 + w;
		double q = wp * (wp + (2.0 / 3.0) * r);
		double dw = w * r / wp * (q - 0.5 * r) / (q - r);
		w += dw;
		if (!(fabs(dw) > 1e-4 * w))
			break;
	}
	return w;
}

/* ---------------------------------------------------------------------- */
/* The Shockley junction's own functions                                   */

/* Above this V / nVt the exponential is taken with ln Is folded in. */
#define JUNCTION_EXP_SAFE 700.0

/* Is expm1(V / nVt) (see junction.h). */
double junction_shockley_current(double is, double nvt, double v)
{
	double u = v / nvt;
	double ulo = fma(-u, nvt, v) / nvt; /* v / nvt = u + ulo, exactly */
	if (u < JUNCTION_EXP_SAFE) {
		double e = expm1(u);
		return is * (e + (e + 1.0) * ulo);
	}
	/* e^u Is = e^(u - 700) (Is e^700): u - 700 is exact, no ln Is. */
	return exp(u - JUNCTION_EXP_SAFE) * (is * exp(JUNCTION_EXP_SAFE)) *
	       (1.0 + ulo);
}

/* Is exp(V / nVt) / nVt (see junction.h). */
double junction_shockley_conductance(double is, double nvt, double v)
{
	double u = v / nvt;
	if (u < JUNCTION_EXP_SAFE)
		return is / nvt * exp(u);
	return exp(u - JUNCTION_EXP_SAFE) * (is * exp(JUNCTION_EXP_SAFE)) / nvt;
}

/* nVt log1p(I / Is), NaN for I <= -Is (see junction.h). */
double junction_shockley_voltage(double is, double nvt, double i)
{
	double q = i / is;
	if (!(q > -1.0))
		return NAN;
	if (isfinite(q))
		return nvt * log1p(q);
	return nvt * (log(i) - log(is)); /* I / Is beyond a double: >> 1 */
}

/* ---------------------------------------------------------------------- */
/* The general junction: the model's functions, or IS and NVT               */

struct junction_ctx {
	const struct model_type *t;  /* NULL: the Shockley junction is, nvt */
	const double *p;
	bool has_k;                  /* the model's derived constants are in K */
	double k[MODEL_MAX_DERIVED];
	double is, nvt;
	double voc, r;
	bool log_step;               /* the last step was the log-domain one */
};

/* Ij at V. */
static double junction_current(const struct junction_ctx *c, double v)
{
	const struct model_type *t = c->t;
	if (t == NULL)
		return junction_shockley_current(c->is, c->nvt, v);
	if (c->has_k)
		return t->current_k(c->p, c->k, v);
	return t->intrinsic_current ? t->intrinsic_current(c->p, v)
	                            : t->current(c->p, v);
}

/* dIj/dV at V. */
static double junction_conductance(const struct junction_ctx *c, double v)
{
	const struct model_type *t = c->t;
	if (t == NULL)
		return junction_shockley_conductance(c->is, c->nvt, v);
	if (c->has_k)
		return t->conductance_k(c->p, c->k, v);
	return t->intrinsic_conductance ? t->intrinsic_conductance(c->p, v)
	                                : t->conductance(c->p, v);
}

/* The inverse Vj(I), or NaN where unknown. */
static double junction_inverse(const struct junction_ctx *c, double i)
{
	const struct model_type *t = c->t;
	double v = NAN;
	if (t == NULL)
		return junction_shockley_voltage(c->is, c->nvt, i);
	if (t->intrinsic_voltage)
		v = t->intrinsic_voltage(c->p, i);
	else if (t->series_resistance == NULL && t->voltage != NULL &&
	         t->resistance != NULL && t->voltage(c->p, i, &v) != 0)
		v = NAN;
	return v;
}

/* dVj/dI at I (NaN when unknown). */
static double junction_rdiff(const struct junction_ctx *c, double i)
{
	const struct model_type *t = c->t;
	if (t == NULL) {
		double d = c->is + i;
		return d > 0.0 ? c->nvt / d : NAN;
	}
	if (t->resistance == NULL ||
	    (t->intrinsic_voltage == NULL &&
	     (t->series_resistance != NULL || t->voltage == NULL)))
		return NAN;
	double rd = t->resistance(c->p, i);
	if (t->series_resistance != NULL)
		rd -= t->series_resistance(c->p);
	return rd;
}

/* F(v) = v + r Ij(v) - voc alone. */
static double junction_residual_at(const struct junction_ctx *c, double v)
{
	return v + c->r * junction_current(c, v) - c->voc;
}

/*
 * F(v) = v + r Ij(v) - voc and its Newton step, or, where the load line
 * is the flatter curve (dVj/dI < r), G(v) = v - Vj((voc - v) / r) and its
 * step (same sign and root; 1 <= G' < 2 there).
 */
static double junction_eval(void *ctx, double v, double *step)
{
	struct junction_ctx *c = ctx;
	double il = (c->voc - v) / c->r;
	double rj = junction_rdiff(c, il);
	c->log_step = false;
	if (rj >= 0.0 && rj < c->r) {
		double vd = junction_inverse(c, il);
		if (isfinite(vd)) {
			double g = v - vd;
			*step = g / (1.0 + rj / c->r);
			if (isfinite(*step)) {
				c->log_step = true;
				return g;
			}
		}
	}
	double ij = junction_current(c, v);
	double gj = junction_conductance(c, v);
	double f = v + c->r * ij - c->voc;
	double d = 1.0 + c->r * gj;
	*step = isfinite(f) && isfinite(d) && d > 0.0 ? f / d : NAN;
	return f;
}

/* Nagel's limiting of a step of the Shockley junction IS, NVT. */
static double junction_shockley_limit(double is, double nvt, double vnew,
                                      double vold)
{
	double vcrit = nvt * log(nvt / (sqrt(2.0) * is));
	if (vnew > vold && vnew > vcrit && vnew - vold > 2.0 * nvt) {
		if (vold > 0.0) {
			double arg = 1.0 + (vnew - vold) / nvt;
			vnew = arg > 0.0 ? vold + nvt * log(arg) : vcrit;
		} else {
			vnew = nvt * log(vnew / nvt);
		}
	}
	return vnew;
}

/* The model's limiting, on plain Newton steps only. */
static double junction_limit(void *ctx, double vnew, double vold)
{
	struct junction_ctx *c = ctx;
	if (c->log_step)
		return vnew;
	if (c->t == NULL)
		return junction_shockley_limit(c->is, c->nvt, vnew, vold);
	return c->t->limit != NULL ? c->t->limit(c->p, vnew, vold) : vnew;
}

/* Safeguarded Newton in the bracket (see the top of the file). */
static struct junction_result junction_newton(struct junction_ctx *c,
                                              double tol)
{
	struct junction_result res = { .vj = c->voc, .ij = NAN, .gj = NAN,
	                               .dvj = NAN, .path = JUNCTION_NEWTON };
	double voc = c->voc;
	double lo = fmin(0.0, voc), hi = fmax(0.0, voc);
	/* The current cannot exceed |voc|/r: bound the junction voltage. */
	double est = junction_inverse(c, fabs(voc) / c->r);
	if (voc > 0.0 && isfinite(est) && est < hi && est > lo)
		hi = est;
	struct kernel_fn fn = { junction_eval, c };
	/*
	 * F < 0 at lo and > 0 at hi when the curve passes the origin; one
	 * that does not (a measured curve with a current at 0 V, or one
	 * continued past its last point) may put the root outside [0, voc]:
	 * reach out, doubling, until the ends hold it (F rises: one root).
	 */
	double span = fmax(hi - lo, fabs(voc));
	for (int k = 0; k < 200 && junction_residual_at(c, lo) > 0.0; k++) {
		hi = lo;
		lo -= span;
		span *= 2.0;
	}
	for (int k = 0; k < 200 && junction_residual_at(c, hi) < 0.0; k++) {
		lo = hi;
		hi += span;
		span *= 2.0;
	}
	struct kernel_result kr = kernel_newton_solve(
		&fn, lo, -1.0, hi, 1.0, voc > 0.0 ? hi : lo, tol, junction_limit, c);
	double v = kr.x;
	res.vj = v;
	res.iters = kr.iters;
	res.ok = kr.ok;
	res.dvj = fabs(kr.hi - kr.lo);
	/* The current from the better-conditioned side: the line where the
	 * device is the steeper curve. */
	res.gj = junction_conductance(c, v);
	if (c->log_step || c->r * res.gj > 1.0)
		res.ij = (voc - v) / c->r;
	else
		res.ij = junction_current(c, v);
	if (!isfinite(res.ij))
		res.ok = 0;
	return res;
}

/* ---------------------------------------------------------------------- */
/* The closed form                                                         */

/*
 * ln x for the closed form's starting value only, where a few parts in
 * 1e10 are plenty (the correction that follows settles the rest, and
 * says when it did not): the table-driven scheme of Tang ("Table-driven
 * implementation of the logarithm function in IEEE floating-point
 * arithmetic", ACM TOMS 16(4), 1990) cut down.  x = 2^e m, m in [1, 2);
 * the top five bits of m pick c near m, whose 1/c (rounded) and -ln(1/c)
 * (to 40 digits, then rounded) the table holds; t = m/c - 1 is within
 * 1/64, and ln(1 + t) to t^4 is off by less than t^5 / 5 < 2e-10.  X
 * must be a positive normal number.
 */
static const double junction_log_table[32][2] = {
	{ 0.9846153846153847, 0.015504186535965199 },
	{ 0.9552238805970149, 0.04580953603129422 },
	{ 0.927536231884058, 0.07522342123758752 },
	{ 0.9014084507042254, 0.10379679368164355 },
	{ 0.8767123287671232, 0.13157635778871932 },
	{ 0.8533333333333334, 0.15860503017663852 },
	{ 0.8311688311688312, 0.18492233849401193 },
	{ 0.810126582278481, 0.21056476910734964 },
	{ 0.7901234567901234, 0.23556607131276697 },
	{ 0.7710843373493976, 0.259957524436926 },
	{ 0.7529411764705882, 0.2837681731306446 },
	{ 0.735632183908046, 0.3070250352949119 },
	{ 0.7191011235955056, 0.32975328637246804 },
	{ 0.7032967032967034, 0.3519764231571781 },
	{ 0.6881720430107527, 0.373716409793584 },
	{ 0.6736842105263158, 0.394993808240869 },
	{ 0.6597938144329897, 0.415827895143711 },
	{ 0.6464646464646465, 0.43623676677491796 },
	{ 0.6336633663366337, 0.4562374334815876 },
	{ 0.6213592233009708, 0.475845904869964 },
	{ 0.6095238095238096, 0.4950772667978514 },
	{ 0.5981308411214953, 0.5139457511022344 },
	{ 0.5871559633027523, 0.5324647988694717 },
	{ 0.5765765765765766, 0.5506471179526623 },
	{ 0.5663716814159292, 0.5685047353526688 },
	{ 0.5565217391304348, 0.5860490450035782 },
	{ 0.5470085470085471, 0.6032908514380841 },
	{ 0.5378151260504201, 0.6202404097518576 },
	{ 0.5289256198347108, 0.6369074622370692 },
	{ 0.5203252032520326, 0.6533012720127456 },
	{ 0.512, 0.6694306539426292 },
	{ 0.5039370078740157, 0.6853040030989195 },
};

static double junction_log_start(double x)
{
	uint64_t bits;
	memcpy(&bits, &x, sizeof bits);
	int e = (int)(bits >> 52) - 1023;
	const double *c = junction_log_table[(bits >> 47) & 31u];
	bits = (bits & 0x000fffffffffffffu) | 0x3ff0000000000000u;
	double m;
	memcpy(&m, &bits, sizeof m);
	double t = m * c[0] - 1.0, t2 = t * t;
	/* t - t^2/2 + t^3/3 - t^4/4 in two halves (a short chain) */
	double p = (t - 0.5 * t2) + t2 * t * (1.0 / 3.0 - 0.25 * t);
	return ((double)e * 0.6931471805599453 + c[1]) + p;
}

/*
 * omega(x) for x > 2.5 from its asymptotic expansion through 1 / x^4
 * (Corless et al., Adv. Comput. Math. 5, 1996, eq. 4.19, with ln z = x):
 * off by less than 2e-5 at x = 10, 5e-8 from x = 60, 6e-9 from x = 100
 * and 1e-13 from x = 1000 (compared with a 30-digit Lambert W), plus the
 * 2e-10 of its starting logarithm.
 */
static double junction_omega_asymptotic(double x)
{
	double l = junction_log_start(x), l2 = l * l, ix = 1.0 / x;
	/* The terms' coefficients in l, each in two halves, and the sum in
	 * powers of 1/x likewise: short chains, as this is the hot path. */
	double c2 = 0.5 * l2 - l;
	double c3 = (l - 1.5 * l2) + l2 * l * (1.0 / 3.0);
	double c4 = (3.0 * l2 - l) + l2 * l * (-11.0 / 6.0 + 0.25 * l);
	return (x - l) + ix * ((l + c2 * ix) + ix * ix * (c3 + c4 * ix));
}

/* Below this u, e^u is 0 in a double (and exp() would take its slow
 * underflow path to say so). */
#define JUNCTION_EXP_UNDERFLOW -746.0

/* e^-600 rounded to a double (computed to 40 digits), for e^u below the
 * bottom of the double range taken in two factors. */
#define JUNCTION_EXP_M600 2.6503965530043108e-261

/*
 * Deep reverse bias (a <= 1, b0 + a < -40): w = a e^u is below e^-40, so
 * u = b0 + a - w is b0 + a to within rounding, and one fixed-point step
 * u = g(u0) = b0 + a - a e^u0 from u0 = b0 + a finishes it: g contracts by
 * a e^xi <= w0 = a e^u0 between the root and u0 (the root lies below u0,
 * where F is w0 > 0), and |u0 - u*| <= w0, so |u - u*| <= w0^2: a bound
 * with no division and at most one exponential, taken in two factors
 * where e^u0 is below the normal range so that Ij and its conductance
 * keep their digits down to where they underflow.
 */
static struct junction_result junction_reverse(double is, double nvt,
                                               double inv_nvt, double a,
                                               double b0, double tol)
{
	struct junction_result res = { .path = JUNCTION_OMEGA, .iters = 1 };
	double u0 = b0 + a;
	double es, scale; /* e^u0 = es * scale */
	if (u0 > -600.0) {
		es = exp(u0);
		scale = 1.0;
	} else {
		es = u0 > JUNCTION_EXP_UNDERFLOW - 600.0 ? exp(u0 + 600.0) : 0.0;
		scale = JUNCTION_EXP_M600;
	}
	double w0 = a * es * scale;
	double u = u0 - w0;
	/* e^u = e^u0 e^-w0, and w0 < e^-40 is below the rounding of 1. */
	res.vj = nvt * u;
	res.ij = is * (es * scale - 1.0);
	res.gj = (is * inv_nvt * scale) * es;
	res.dvj = nvt * (w0 * w0 + 2.0 * DBL_EPSILON * fabs(u));
	double rel = tol > 4.0 * DBL_EPSILON ? tol : 4.0 * DBL_EPSILON;
	res.ok = res.dvj <= rel * fabs(res.vj);
	return res;
}

/*
 * The closed form for IS, NVT (see the top of the file), with 1 / NVT and
 * a = IS R / NVT > 0 given; res.ok = 0 when it cannot vouch for its
 * answer (the caller then runs Newton).
 */
static struct junction_result junction_omega(double is, double nvt,
                                             double inv_nvt, double a,
                                             double voc, double r, double tol)
{
	double b0 = voc * inv_nvt;
	if (a <= 1.0 && b0 + a < -40.0)
		return junction_reverse(is, nvt, inv_nvt, a, b0, tol);
	struct junction_result res = { .vj = NAN, .ij = NAN, .gj = NAN,
	                               .dvj = NAN, .path = JUNCTION_OMEGA };
	/* Off the critical path: the line's current needs it at the end. */
	double nvt_r = nvt / r;
	/* The start: omega of x = ln a + b0 + a. */
	double x = junction_log_start(a) + (b0 + a);
	double w;
	if (x > 2.5)
		w = junction_omega_asymptotic(x);
	else
		w = junction_wright_omega(x);
	double u = b0 - (w - a);
	/*
	 * Corrections on F(u) = u + a expm1(u) - b0, F' = 1 + a e^u, F'' =
	 * a e^u; one normally does it, and it is the check: one exponential.
	 *
	 * Where the start is good to 6e-9 (x >= 100) the first is Newton's
	 * with the slope taken from the start, F' = 1 + w, whose reciprocal
	 * is ready before the exponential (no division after it).  At the
	 * root u* = b0 + a - w*, so e0 = u - u* = w* - w, and Taylor's
	 * theorem gives the error after the step exactly: e1 = -e0^2 (1 +
	 * a e^xi / 2) / (1 + w), a e^xi within e0 of w, so |e1| <= e0^2
	 * (1 + e0), and e0 is the step to first order: |e1| < 2 du^2.
	 * Elsewhere, and for any second correction, Halley's, whose error is
	 * about du^3 / 12 (Traub, Iterative Methods for the Solution of
	 * Equations, 1964, sec. 5.2).  Once the error left is below the
	 * rounding of u, u is as good as a double can hold.
	 */
	bool start_slope = x >= 100.0;
	double islope = 1.0 / (1.0 + w);
	double e = NAN, ex = NAN, du = NAN, left = NAN;
	bool settled = false;
	for (unsigned k = 1; k <= 4 && !settled; k++) {
		if (u < JUNCTION_EXP_UNDERFLOW) {
			ex = 0.0;
			e = -1.0;
		} else if (fabs(u) > 0.6931) {
			ex = exp(u); /* ex - 1 loses at most one bit here */
			e = ex - 1.0;
		} else {
			e = expm1(u);
			ex = e + 1.0;
		}
		double ae = a * ex;
		double f = (u - b0) + a * e, fp = 1.0 + ae;
		if (start_slope) {
			du = f * islope;
			left = 2.0 * du * du;
		} else {
			/* (f / f') / (1 - f f'' / (2 f'^2)), one division. */
			du = f * fp / (fp * fp - 0.5 * f * ae);
			left = fabs(du * du * du);
		}
		u -= du;
		res.iters = k;
		if (!isfinite(u) || !isfinite(ae))
			return res; /* e^u overflows: let Newton decide */
		settled = left <= DBL_EPSILON * fabs(u);
		start_slope = false; /* a second correction was not expected */
	}
	if (!settled)
		return res;
	/*
	 * The current from the side whose error is smaller: the line's grows
	 * with |b0| / |b0 - u|, the device's with 1 + |u| e^u / |expm1(u)|
	 * (compared multiplied out).  e^u and expm1(u) at the corrected u
	 * come to second order in du.
	 */
	double au = fabs(u), ae_ = fabs(e);
	bool line = (fabs(b0) + au) * ae_ < (ae_ + au * ex) * fabs(b0 - u);
	double shrink = du * (1.0 - 0.5 * du);
	double exc = ex - ex * shrink;
	res.ij = line ? (b0 - u) * nvt_r : is * (e - ex * shrink);
	res.vj = nvt * u;
	/* Is e^u / nVt; e^u near the bottom of the range has lost bits. */
	res.gj = exc > 1e-290 || exc == 0.0 ? is * exc * inv_nvt
	                                    : exp(u + log(is)) * inv_nvt;
	/* The distance left: the correction's error estimate plus rounding. */
	res.dvj = nvt * (left + 2.0 * DBL_EPSILON * au);
	double rel = tol > 4.0 * DBL_EPSILON ? tol : 4.0 * DBL_EPSILON;
	res.ok = isfinite(res.ij) && isfinite(res.gj) &&
	         res.dvj <= rel * fabs(res.vj) + DBL_MIN;
	return res;
}

/* Ij at voc directly: an ideal voltage source, or a line steeper than any
 * double can tell. */
static struct junction_result junction_direct(struct junction_ctx *c)
{
	struct junction_result res = { .vj = c->voc, .dvj = 0.0,
	                               .path = JUNCTION_DIRECT };
	res.ij = junction_current(c, c->voc);
	res.gj = junction_conductance(c, c->voc);
	res.ok = isfinite(res.ij);
	return res;
}

/* The Shockley junction IS, NVT (see junction.h). */
struct junction_result junction_solve_shockley(double is, double nvt,
                                               double voc, double r,
                                               double tol)
{
	double inv_nvt = 1.0 / nvt, a = is * r * inv_nvt;
	bool omega = r != 0.0 && voc != 0.0 && a > DBL_MIN;
	if (omega) {
		struct junction_result res =
			junction_omega(is, nvt, inv_nvt, a, voc, r, tol);
		if (res.ok)
			return res;
	}
	/* The fallbacks build their context only here: the hot path above
	 * would pay for clearing it. */
	struct junction_ctx c = { .t = NULL, .is = is, .nvt = nvt, .voc = voc,
	                          .r = r };
	if (!omega)
		return junction_direct(&c);
	return junction_newton(&c, tol);
}

/* Solve vj + r Ij(vj) = voc (see junction.h). */
struct junction_result junction_solve(const struct model_type *t,
                                      const double *p, double voc, double r,
                                      double tol)
{
	struct model_shockley sk;
	if (t->shockley != NULL && t->shockley(p, &sk) == 0)
		return junction_solve_shockley(sk.is, sk.nvt, voc, r, tol);
	struct junction_ctx c = { .t = t, .p = p, .voc = voc, .r = r };
	c.has_k = t->prepare != NULL && t->prepare(p, c.k) == 0;
	if (r == 0.0 || voc == 0.0)
		return junction_direct(&c);
	return junction_newton(&c, tol);
}

/* Nagel's limiting for a Shockley junction (see junction.h). */
double junction_limit_step(double is, double nvt, double vnew, double vold)
{
	return junction_shockley_limit(is, nvt, vnew, vold);
}
