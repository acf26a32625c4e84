/*
 * tunnel.c - the tunnel (Esaki) diode: an N-shaped curve with a peak, a
 * valley and a negative-resistance branch between them.  The empirical
 * model sums the three currents of a tunnel junction (Sze & Ng, Physics
 * of Semiconductor Devices, 3rd ed., 2007, ch. 8, tunnel diode: tunnelling,
 * excess and diffusion current):
 *
 *     It = (Ip / Vp) V exp(1 - V / Vp)               tunnelling
 *     Ix = Ix0 (exp(A (V - Vv)) - exp(-A Vv))        excess (via gap states)
 *     Id = Is (exp(V / (n Vt)) - 1)                  diffusion
 *
 * The tunnelling term peaks at exactly (Vp, Ip).  Ix0 and A are derived
 * so that the valley is exact: I(Vv) = Iv and I'(Vv) = 0.  (The excess
 * term is shifted by its value at 0 V so that I(0) = 0, as for any passive
 * device; the published form omits the shift.)  The excess and diffusion
 * terms add a little current at Vp, so the observed peak sits slightly
 * above and beside the stated one; tunnel_extrema() reports where it is.
 *
 * The curve is single-valued in V but not in I, so voltage() is NULL and
 * the model is not monotone: a load line can cross it up to three times.
 */
#include <math.h>
#include <stdio.h>

#include "../kernel.h"
#include "models.h"

/* The derived excess-current constants. */
struct tunnel_k {
	double ix0, a;
	double nvt;
};

/* Tunnelling current and its slope at V. */
static double tunnel_it(const double *p, double v, double *slope)
{
	double ip = p[TUNNEL_IP], vp = p[TUNNEL_VP];
	double e = exp(1.0 - v / vp);
	if (slope != NULL)
		*slope = ip / vp * e * (1.0 - v / vp);
	return ip / vp * v * e;
}

/* Diffusion current and its slope at V. */
static double tunnel_id(const double *p, double nvt, double v, double *slope)
{
	if (slope != NULL)
		*slope = p[TUNNEL_IS] / nvt * exp(v / nvt);
	return p[TUNNEL_IS] * expm1(v / nvt);
}

/* x (1 - exp(-c / x)) with c = q[0], for solving for Ix0. */
static double tunnel_hx(const double *q, double x)
{
	return -x * expm1(-q[0] / x);
}

/* Its derivative in x. */
static double tunnel_dhx(const double *q, double x)
{
	double u = q[0] / x;
	return -expm1(-u) - u * exp(-u);
}

/*
 * Derive Ix0 and A: with R = Iv - It(Vv) - Id(Vv) and S = -(It' + Id')(Vv),
 * I(Vv) = Iv and I'(Vv) = 0 read Ix0 (1 - exp(-A Vv)) = R and A Ix0 = S,
 * i.e. h(Ix0) = Ix0 (1 - exp(-S Vv / Ix0)) = R, h increasing from 0 to
 * S Vv.  Returns 0, or -1 when R <= 0, S <= 0 or R >= S Vv.
 */
static int tunnel_derive(const double *p, struct tunnel_k *k)
{
	double vv = p[TUNNEL_VV];
	double st, sd;
	k->nvt = p[TUNNEL_N] * diode_thermal_voltage(p[TUNNEL_TEMP]);
	double r = p[TUNNEL_IV] - tunnel_it(p, vv, &st) - tunnel_id(p, k->nvt, vv, &sd);
	double s = -(st + sd);
	k->ix0 = NAN;
	k->a = NAN;
	double c = s * vv;
	if (!(r > 0.0) || !(s > 0.0) || !(r < c))
		return -1;
	double q[1] = { c };
	double hi = fmax(r, c * c / (2.0 * (c - r))) * 1.01;
	if (model_invert(tunnel_hx, tunnel_dhx, q, r, r, hi, &k->ix0) != 0)
		return -1;
	k->a = s / k->ix0;
	return 0;
}

/*
 * Derive the constants into K: Ix0, A, n Vt and exp(-A Vv), the excess
 * current's shift (model_type.prepare).
 */
static int tunnel_prepare(const double *p, double *k)
{
	struct tunnel_k tk;
	if (tunnel_derive(p, &tk) != 0)
		return -1;
	k[0] = tk.ix0;
	k[1] = tk.a;
	k[2] = tk.nvt;
	k[3] = exp(-tk.a * p[TUNNEL_VV]);
	return 0;
}

/* Current at V given the derived constants K. */
static double tunnel_current_k(const double *p, const double *k, double v)
{
	double vv = p[TUNNEL_VV];
	double ix = k[0] * (exp(k[1] * (v - vv)) - k[3]);
	return tunnel_it(p, v, NULL) + ix + tunnel_id(p, k[2], v, NULL);
}

/* dI/dV at V given K. */
static double tunnel_conductance_k(const double *p, const double *k, double v)
{
	double st, sd;
	tunnel_it(p, v, &st);
	tunnel_id(p, k[2], v, &sd);
	return st + k[0] * k[1] * exp(k[1] * (v - p[TUNNEL_VV])) + sd;
}

/* Current at V (derives the constants: see tunnel_prepare). */
static double tunnel_current(const double *p, double v)
{
	double k[MODEL_MAX_DERIVED];
	if (tunnel_prepare(p, k) != 0)
		return NAN;
	return tunnel_current_k(p, k, v);
}

/* dI/dV at V. */
static double tunnel_conductance(const double *p, double v)
{
	double k[MODEL_MAX_DERIVED];
	if (tunnel_prepare(p, k) != 0)
		return NAN;
	return tunnel_conductance_k(p, k, v);
}

/* From a little reverse bias past the valley up the diffusion branch. */
static void tunnel_range(const double *p, double *vmin, double *vmax)
{
	double nvt = p[TUNNEL_N] * diode_thermal_voltage(p[TUNNEL_TEMP]);
	double vd = nvt * log1p(2.0 * p[TUNNEL_IP] / p[TUNNEL_IS]);
	*vmax = fmax(1.25 * p[TUNNEL_VV], vd);
	*vmin = -0.5 * p[TUNNEL_VP];
}

/* The parameters and derived constants, for the kernel. */
struct tunnel_ctx {
	const double *p;
	double k[MODEL_MAX_DERIVED];
};

/* dI/dV for the kernel. */
static double tunnel_conductance_eval(void *ctx, double v, double *step)
{
	const struct tunnel_ctx *c = ctx;
	if (step != NULL)
		*step = NAN;
	return tunnel_conductance_k(c->p, c->k, v);
}

/* Peak and valley of P given its derived constants C->k; 0 or -1. */
static int tunnel_extrema_k(const double *p, struct tunnel_ctx *c, double *vpk,
                            double *ipk, double *vvl, double *ivl)
{
	/* I' changes sign from + to - near Vp and from - to + at Vv: find the
	 * first sign change down on a grid between 0 and Vv, then its root by
	 * Brent-Dekker. */
	double vv = p[TUNNEL_VV];
	enum { N = 400 };
	double a = 0.0, ga = tunnel_conductance_k(p, c->k, a);
	struct kernel_fn fn = { tunnel_conductance_eval, c };
	int found = -1;
	for (int j = 1; j <= N; j++) {
		double b = vv * j / N, gb = tunnel_conductance_k(p, c->k, b);
		if (ga > 0.0 && gb <= 0.0) {
			struct kernel_result r =
				kernel_brent_solve(&fn, a, ga, b, gb, 1e-15, 0.0);
			*vpk = r.x;
			*ipk = tunnel_current_k(p, c->k, *vpk);
			found = 0;
			break;
		}
		a = b, ga = gb;
	}
	*vvl = vv;
	*ivl = tunnel_current_k(p, c->k, vv);
	return found;
}

/* Peak and valley where the curve has them (see models.h). */
int tunnel_extrema(const double *p, double *vpk, double *ipk, double *vvl,
                   double *ivl)
{
	struct tunnel_ctx c = { .p = p };
	if (tunnel_prepare(p, c.k) != 0)
		return -1;
	return tunnel_extrema_k(p, &c, vpk, ipk, vvl, ivl);
}

/* d^2 I / dV^2 at V given the constants K. */
static double tunnel_curvature_k(const double *p, const double *k, double v)
{
	double ip = p[TUNNEL_IP], vp = p[TUNNEL_VP];
	double it2 = ip / (vp * vp) * exp(1.0 - v / vp) * (v / vp - 2.0);
	double ix2 = k[0] * k[1] * k[1] * exp(k[1] * (v - p[TUNNEL_VV]));
	double id2 = p[TUNNEL_IS] / (k[2] * k[2]) * exp(v / k[2]);
	return it2 + ix2 + id2;
}

/* The curvature for the kernel. */
static double tunnel_curvature_eval(void *ctx, double v, double *step)
{
	const struct tunnel_ctx *c = ctx;
	if (step != NULL)
		*step = NAN;
	return tunnel_curvature_k(c->p, c->k, v);
}

/*
 * The one inflection (model_type.inflections).  I'' = It'' + Ix'' + Id'',
 * where It'' = (Ip/Vp^2) e^(1 - V/Vp) (V/Vp - 2) rises for V < 3 Vp (its
 * derivative carries 3 - V/Vp) and is >= 0 from 2 Vp, and the excess and
 * diffusion terms are positive and rising everywhere: so I'' changes
 * sign exactly once, below 2 Vp, from - to +, and the conductance falls
 * before it and rises after.
 */
static size_t tunnel_inflections(const double *p, double *x, size_t max)
{
	struct tunnel_ctx c = { .p = p };
	if (max == 0 || tunnel_prepare(p, c.k) != 0)
		return 0;
	double vp = p[TUNNEL_VP];
	double b = 2.0 * vp, fb = tunnel_curvature_k(p, c.k, b);
	double a = 0.0, fa = tunnel_curvature_k(p, c.k, a);
	for (int k = 0; k < 60 && !(fa < 0.0); k++) {
		b = a;
		fb = fa;
		a -= vp;
		fa = tunnel_curvature_k(p, c.k, a);
	}
	if (!(fa < 0.0) || !(fb >= 0.0))
		return 0;
	struct kernel_fn fn = { tunnel_curvature_eval, &c };
	x[0] = kernel_brent_solve(&fn, a, fa, b, fb, 1e-15, 0.0).x;
	return 1;
}

/* Peak below valley in both voltage and current, and a reachable valley. */
static int tunnel_validate(const double *p, char *err, size_t errlen)
{
	if (!(p[TUNNEL_VV] > p[TUNNEL_VP])) {
		snprintf(err, errlen, "valley_voltage: must be above peak_voltage");
		return -1;
	}
	if (!(p[TUNNEL_IV] < p[TUNNEL_IP])) {
		snprintf(err, errlen, "valley_current: must be below peak_current");
		return -1;
	}
	/* the constants derived once, for both checks */
	struct tunnel_ctx c = { .p = p };
	if (tunnel_prepare(p, c.k) != 0) {
		snprintf(err, errlen,
		         "valley_current: the tunnelling and diffusion currents alone "
		         "already pass %.4g A at valley_voltage, or the valley cannot "
		         "be a minimum there: raise valley_current or valley_voltage, "
		         "or lower saturation_current", p[TUNNEL_IV]);
		return -1;
	}
	double vpk, ipk, vvl, ivl;
	if (tunnel_extrema_k(p, &c, &vpk, &ipk, &vvl, &ivl) != 0) {
		snprintf(err, errlen,
		         "valley_current: no negative-resistance branch is left between "
		         "peak and valley; lower valley_current");
		return -1;
	}
	return 0;
}

/*
 * Defaults: a small germanium tunnel diode of the 1 mA class, from memory
 * (peak 65 mV, valley 350 mV, peak-to-valley ratio about 8; the diffusion
 * branch reaches the peak current near 0.5 V).
 */
static const struct model_param tunnel_params[TUNNEL_NPARAMS] = {
	[TUNNEL_VP] = { "peak_voltage", "Vp", QTY_VOLTAGE, 0.065, 0.0, 10.0, true,
	                false, false, "voltage of the current peak" },
	[TUNNEL_IP] = { "peak_current", "Ip", QTY_CURRENT, 1e-3, 0.0, 100.0, true,
	                false, true, "current at the peak" },
	[TUNNEL_VV] = { "valley_voltage", "Vv", QTY_VOLTAGE, 0.35, 0.0, 10.0, true,
	                false, false, "voltage of the current valley" },
	[TUNNEL_IV] = { "valley_current", "Iv", QTY_CURRENT, 1.2e-4, 0.0, 100.0,
	                true, false, true, "current at the valley" },
	[TUNNEL_IS] = { "saturation_current", "Is", QTY_CURRENT, 3.5e-12, 0.0, 1.0,
	                true, false, true, "saturation current of the diffusion branch" },
	[TUNNEL_N] = { "ideality", "n", QTY_NUMBER, 1.0, 0.0, 100.0, true, false,
	               false, "ideality factor of the diffusion branch" },
	[TUNNEL_TEMP] = { "temperature", "T", QTY_TEMPERATURE, 25.0, -273.15,
	                  1000.0, true, false, false,
	                  "junction temperature in degrees Celsius" },
};

const struct model_type model_tunnel = {
	.name = "tunnel",
	.summary = "tunnel diode: N-shaped curve with peak, valley and negative slope",
	.params = tunnel_params,
	.nparams = TUNNEL_NPARAMS,
	.monotone = false,
	.current = tunnel_current,
	.conductance = tunnel_conductance,
	.voltage = NULL,
	.resistance = NULL,
	.range = tunnel_range,
	.validate = tunnel_validate,
	.prepare = tunnel_prepare,
	.current_k = tunnel_current_k,
	.conductance_k = tunnel_conductance_k,
	.inflections = tunnel_inflections,
};
