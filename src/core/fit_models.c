/*
 * fit_models.c - what each model fits, its starting values from closed
 * forms, and its value and parameter derivatives at a point.
 *
 * Every value comes from the model's own public functions (current,
 * intrinsic conductance, series resistance, the thermistor's resistance
 * at a temperature), so a fitted device behaves exactly as the fit saw it.
 * The parameter derivatives are analytic, written from the model's
 * equations (see each model's file) and its own conductance:
 *
 * Junctions behind a series resistance.  A junction current Ij(vj; theta)
 * in series with Rs(theta) gives the terminal current I(V) through
 * V = vj + I Rs and I = Ij(vj).  Differentiating at fixed V (implicit
 * function theorem) with g = dIj/dvj, the model's intrinsic conductance:
 *
 *     dI/dtheta = (dIj/dtheta|vj - g I dRs/dtheta) / (1 + g Rs)
 *
 * For a Shockley junction Ij = Is (exp(vj / n Vt) - 1) (Shockley, Bell
 * Syst. Tech. J. 28, 1949): dIj/d(ln Is) = Ij and dIj/d(n Vt) = -g vj / (n Vt).
 * The tests compare every derivative here with MINPACK's chkder and with
 * central differences.
 */
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include "fit_models.h"
#include "junction.h"
#include "models/models.h"

#define ZERO_C 273.15

/* The forward points (x > 0, y > 0) of group G in rising x, into IDX;
 * returns how many. */
static size_t forward_points(const struct fit_ctx *c, size_t g, size_t *idx,
                             size_t cap)
{
	size_t m = 0;
	for (size_t j = c->gstart[g]; j < c->gstart[g + 1] && m < cap; j++) {
		size_t k = c->order[j];
		if (c->x[k] > 0.0 && c->y[k] > 0.0)
			idx[m++] = k;
	}
	return m;
}

/*
 * Two-point estimates of a Shockley junction behind a series resistance
 * from the points IDX[0..M) (rising): with vj = V - I Rs,
 *
 *     n Vt = (vj2 - vj1) / ln(I2 / I1),   Is = I1 / (exp(vj1 / n Vt) - 1)
 *
 * on the lowest point and one halfway up (where Rs matters least), then
 * Rs = (V - n Vt ln(1 + I / Is)) / I at the highest point; three rounds
 * let Rs correct the lower points.  N_HOLD and RS_HOLD, when finite, are
 * held values used as given.  Returns 0, or -1 without an estimate.
 */
static int junction_estimate(const struct fit_ctx *c, const size_t *idx,
                             size_t m, double vt, double n_hold,
                             double rs_hold, double *is, double *n, double *rs)
{
	if (m < 1 || (m < 2 && !isfinite(n_hold)))
		return -1;
	bool fit_rs = !isfinite(rs_hold);
	size_t lo = idx[0], hi = idx[m - 1];
	size_t mid = fit_rs && m >= 3 ? idx[(m - 1) / 2] : hi;
	double r = fit_rs ? 0.0 : rs_hold;
	double nvt = NAN, sat = NAN;
	for (int round = 0; round < 3; round++) {
		double vj1 = c->x[lo] - c->y[lo] * r;
		if (isfinite(n_hold)) {
			nvt = n_hold * vt;
		} else {
			double vj2 = c->x[mid] - c->y[mid] * r;
			nvt = (vj2 - vj1) / log(c->y[mid] / c->y[lo]);
			if (!(nvt > 0.0) || !isfinite(nvt))
				nvt = 2.0 * vt;
			nvt = fmin(fmax(nvt, 0.5 * vt), 20.0 * vt);
		}
		if (!(vj1 > 0.0))
			vj1 = c->x[lo];
		sat = c->y[lo] / expm1(vj1 / nvt);
		if (!fit_rs || m < 2)
			break;
		double rn = (c->x[hi] - nvt * log1p(c->y[hi] / sat)) / c->y[hi];
		if (!(rn > 0.0) || !isfinite(rn)) {
			r = 0.0;
			break;
		}
		r = rn;
	}
	if (!(sat > 0.0) || !isfinite(sat))
		return -1;
	/* a free Rs starts small but positive: it is fitted in its log */
	if (fit_rs && !(r > 0.0))
		r = 1e-4 * c->x[hi] / c->y[hi];
	*is = sat;
	*n = nvt / vt;
	*rs = r;
	return 0;
}

/* Temperature of group G, or TDEF when the points carry none. */
static double group_temp(const struct fit_ctx *c, size_t g, double tdef)
{
	return isfinite(c->gtemp[g]) ? c->gtemp[g] : tdef;
}

/* ---- diode: Is, n, Rs; the bandgap over temperatures ---- */

/*
 * The diode's saturation current follows Is(T) = Is(T0) (T/T0)^m
 * exp(q Eg / (n k) (1/T0 - 1/T)) when a reference temperature is set
 * (diode.c, after Sze & Ng 2007): its log derivatives are below.
 */
static int diode_eval(const struct fit_spec *s, const struct fit_ctx *c,
                      const double *p, size_t k, double *y, double *dy)
{
	(void)s;
	double q[MODEL_MAX_PARAMS];
	memcpy(q, p, sizeof q);
	double tk = fit_ctx_temp(c, k);
	if (isfinite(tk))
		q[DIODE_TEMP] = tk;
	double v = c->x[k];
	double i = model_diode.current(q, v);
	if (!isfinite(i))
		return -1;
	*y = i;
	if (dy == NULL)
		return 0;
	double vt = diode_thermal_voltage(q[DIODE_TEMP]);
	double nvt = q[DIODE_N] * vt, rs = q[DIODE_RS];
	double vj = v - i * rs;
	double g = model_diode.intrinsic_conductance(q, vj);
	double den = 1.0 + g * rs;
	double dln_n = 0.0, dln_eg = 0.0, dln_m = 0.0;
	if (q[DIODE_TREF] > -ZERO_C) {
		double t = q[DIODE_TEMP] + ZERO_C, t0 = q[DIODE_TREF] + ZERO_C;
		double w = t / vt * (1.0 / t0 - 1.0 / t);  /* q/k (1/T0 - 1/T) */
		dln_eg = w / q[DIODE_N];
		dln_n = -q[DIODE_EG] * w / (q[DIODE_N] * q[DIODE_N]);
		dln_m = log(t / t0);
	}
	double dij_dnvt = -g * vj / nvt;
	dy[DIODE_IS] = i / q[DIODE_IS] / den;
	dy[DIODE_N] = (i * dln_n + dij_dnvt * vt) / den;
	dy[DIODE_RS] = -g * i / den;
	dy[DIODE_EG] = i * dln_eg / den;
	dy[DIODE_XTI] = i * dln_m / den;
	return isfinite(dy[DIODE_IS]) && isfinite(dy[DIODE_N]) &&
	       isfinite(dy[DIODE_RS]) ? 0 : -1;
}

/* Two-point n and Is at the reference group, Rs from the top point, and
 * the bandgap from the farthest group's shift of Is. */
static int diode_start(const struct fit_spec *s, const struct fit_ctx *c,
                       double *p, const bool *free)
{
	(void)s;
	size_t idx[FIT_MAX_POINTS];
	size_t g = c->ref_group;
	double tg = group_temp(c, g, p[DIODE_TEMP]);
	double vt = diode_thermal_voltage(tg);
	size_t m = forward_points(c, g, idx, FIT_MAX_POINTS);
	double is, n, rs;
	if (junction_estimate(c, idx, m, vt, free[DIODE_N] ? NAN : p[DIODE_N],
	                      free[DIODE_RS] ? NAN : p[DIODE_RS], &is, &n,
	                      &rs) != 0)
		return -1;
	if (free[DIODE_N])
		p[DIODE_N] = n;
	if (free[DIODE_RS])
		p[DIODE_RS] = rs;
	n = p[DIODE_N];
	rs = p[DIODE_RS];
	bool law = p[DIODE_TREF] > -ZERO_C;
	if (law && free[DIODE_EG] && c->ngroups >= 2) {
		size_t far = g;
		for (size_t h = 0; h < c->ngroups; h++)
			if (fabs(c->gtemp[h] - tg) > fabs(c->gtemp[far] - tg))
				far = h;
		size_t mf = forward_points(c, far, idx, FIT_MAX_POINTS);
		if (mf > 0) {
			size_t k = idx[(mf - 1) / 2];
			double tf = c->gtemp[far];
			double vtf = diode_thermal_voltage(tf);
			double isf = c->y[k] / expm1((c->x[k] - c->y[k] * rs) / (n * vtf));
			double tgk = tg + ZERO_C, tfk = tf + ZERO_C;
			double eg = (log(isf / is) - p[DIODE_XTI] * log(tfk / tgk)) * n /
			            (tgk / vt * (1.0 / tgk - 1.0 / tfk));
			if (eg > 0.05 && eg < 10.0)
				p[DIODE_EG] = eg;
		}
	}
	if (free[DIODE_IS]) {
		double scale = law ? diode_scaled_saturation(1.0, tg, p[DIODE_TREF],
		                                             p[DIODE_EG],
		                                             p[DIODE_XTI], n)
		                   : 1.0;
		p[DIODE_IS] = is / scale;
	}
	return isfinite(p[DIODE_IS]) && p[DIODE_IS] > 0.0 ? 0 : -1;
}

static const struct fit_spec fit_diode = {
	.type = &model_diode,
	.axes = FIT_AXES_VI,
	.slope = 1,
	.free = { "saturation_current", "ideality", "series_resistance" },
	.hint = { NULL, "1", "0" },
	.temp_key = "temperature",
	.law_key = "bandgap",
	.law_hint = "1.12",
	.law_ref_key = "reference_temperature",
	.start = diode_start,
	.eval = diode_eval,
};

/* ---- led: forward voltage at the test current, n, Rs ---- */

/*
 * The LED is a Shockley junction whose Is puts the curve through (Vf, If)
 * (led.c): ln Is = ln If - ln(exp(u) - 1), u = (Vf - If Rs) / (n Vt), so
 * with w = exp(u) / (exp(u) - 1): d ln Is / dVf = -w / (n Vt),
 * d ln Is / dRs = w If / (n Vt), d ln Is / dn = w u / n.
 */
static int led_eval(const struct fit_spec *s, const struct fit_ctx *c,
                    const double *p, size_t k, double *y, double *dy)
{
	(void)s;
	double q[MODEL_MAX_PARAMS];
	memcpy(q, p, sizeof q);
	double tk = fit_ctx_temp(c, k);
	if (isfinite(tk))
		q[LED_TEMP] = tk;
	double v = c->x[k];
	double i = model_led.current(q, v);
	if (!isfinite(i))
		return -1;
	*y = i;
	if (dy == NULL)
		return 0;
	double vt = diode_thermal_voltage(q[LED_TEMP]);
	double nvt = q[LED_N] * vt, rs = q[LED_RS], i_f = q[LED_IF];
	double vj = v - i * rs;
	double g = model_led.intrinsic_conductance(q, vj);
	double den = 1.0 + g * rs;
	double u = (q[LED_VF] - i_f * rs) / nvt;
	double w = -1.0 / expm1(-u);
	dy[LED_VF] = i * (-w / nvt) / den;
	dy[LED_N] = (i * w * u / q[LED_N] - g * vj / nvt * vt) / den;
	dy[LED_RS] = (i * w * i_f / nvt - g * i) / den;
	dy[LED_IF] = i * (1.0 / i_f + w * rs / nvt) / den;
	return isfinite(dy[LED_VF]) && isfinite(dy[LED_N]) &&
	       isfinite(dy[LED_RS]) ? 0 : -1;
}

/* The diode's two-point estimate, then Vf = n Vt ln(1 + If / Is) + If Rs. */
static int led_start(const struct fit_spec *s, const struct fit_ctx *c,
                     double *p, const bool *free)
{
	(void)s;
	size_t idx[FIT_MAX_POINTS];
	size_t g = c->ref_group;
	double vt = diode_thermal_voltage(group_temp(c, g, p[LED_TEMP]));
	size_t m = forward_points(c, g, idx, FIT_MAX_POINTS);
	double is, n, rs;
	if (junction_estimate(c, idx, m, vt, free[LED_N] ? NAN : p[LED_N],
	                      free[LED_RS] ? NAN : p[LED_RS], &is, &n, &rs) != 0)
		return -1;
	if (free[LED_N])
		p[LED_N] = n;
	if (free[LED_RS])
		p[LED_RS] = rs;
	if (free[LED_VF])
		p[LED_VF] = p[LED_N] * vt * log1p(p[LED_IF] / is) +
		            p[LED_IF] * p[LED_RS];
	return isfinite(p[LED_VF]) && p[LED_VF] > 0.0 ? 0 : -1;
}

static const struct fit_spec fit_led = {
	.type = &model_led,
	.axes = FIT_AXES_VI,
	.slope = 1,
	.free = { "forward_voltage", "ideality", "series_resistance" },
	.hint = { NULL, "2", "0" },
	.temp_key = "temperature",
	.start = led_start,
	.eval = led_eval,
};

/* ---- npn, pnp: the base-emitter junction from VBE-IC points ---- */

/*
 * In the forward-active region IC = Is (exp(VBE / n Vt) - 1) (Ebers &
 * Moll, Proc. IRE 42, 1954): a Shockley junction with no series
 * resistance, evaluated through the diode model.  Parameters by key, so
 * the transistor's own table may grow.
 */
static void bjt_junction(const struct model_type *t, const double *p,
                         double tk, double *d, int *ii, int *in)
{
	*ii = model_param_index(t, "saturation_current");
	*in = model_param_index(t, "ideality");
	int it = model_param_index(t, "temperature");
	for (size_t j = 0; j < DIODE_NPARAMS; j++)
		d[j] = 0.0;
	d[DIODE_IS] = p[*ii];
	d[DIODE_N] = p[*in];
	d[DIODE_RS] = 0.0;
	d[DIODE_TEMP] = isfinite(tk) ? tk : p[it];
	d[DIODE_TREF] = -ZERO_C;
}

/* IC at VBE and its derivatives in Is and n. */
static int bjt_eval(const struct fit_spec *s, const struct fit_ctx *c,
                    const double *p, size_t k, double *y, double *dy)
{
	double d[MODEL_MAX_PARAMS];
	int ii, in;
	bjt_junction(s->type, p, fit_ctx_temp(c, k), d, &ii, &in);
	double v = c->x[k];
	double i = model_diode.current(d, v);
	if (!isfinite(i))
		return -1;
	*y = i;
	if (dy == NULL)
		return 0;
	double g = model_diode.intrinsic_conductance(d, v);
	dy[ii] = i / d[DIODE_IS];
	dy[in] = -g * v / d[DIODE_N];
	return isfinite(dy[ii]) && isfinite(dy[in]) ? 0 : -1;
}

/* The two-point estimate with no series resistance. */
static int bjt_start(const struct fit_spec *s, const struct fit_ctx *c,
                     double *p, const bool *free)
{
	size_t idx[FIT_MAX_POINTS];
	int ii = model_param_index(s->type, "saturation_current");
	int in = model_param_index(s->type, "ideality");
	int it = model_param_index(s->type, "temperature");
	size_t g = c->ref_group;
	double vt = diode_thermal_voltage(group_temp(c, g, p[it]));
	size_t m = forward_points(c, g, idx, FIT_MAX_POINTS);
	double is, n, rs;
	if (junction_estimate(c, idx, m, vt, free[in] ? NAN : p[in], 0.0, &is, &n,
	                      &rs) != 0)
		return -1;
	if (free[in])
		p[in] = n;
	if (free[ii])
		p[ii] = is;
	return 0;
}

static const struct fit_spec fit_npn = {
	.type = &model_npn,
	.axes = FIT_AXES_VI,
	.slope = 1,
	.free = { "saturation_current", "ideality" },
	.hint = { NULL, "1" },
	.temp_key = "temperature",
	.start = bjt_start,
	.eval = bjt_eval,
};

static const struct fit_spec fit_pnp = {
	.type = &model_pnp,
	.axes = FIT_AXES_VI,
	.slope = 1,
	.free = { "saturation_current", "ideality" },
	.hint = { NULL, "1" },
	.temp_key = "temperature",
	.start = bjt_start,
	.eval = bjt_eval,
};

/* ---- zener: breakdown voltage, dynamic resistance, breakdown ideality ---- */

/*
 * The zener's junction (zener.c) is a forward Shockley term and a reverse
 * breakdown term whose amplitude Ir and shift Vj0, and the series
 * resistance Rs, are derived from the stated (Vz, Izt, rz) by
 *
 *   G1 = Vj0 - Vz + Izt Rs                              = 0
 *   G2 = Ir (1 - e0) - Izt - Is (exp(-Vj0 / n Vt) - 1)  = 0,  e0 = exp(-Vj0 / a)
 *   G3 = Rs - rz + 1 / gj,  gj = Is/(n Vt) exp(-Vj0/(n Vt)) + Ir / a  = 0
 *
 * with a = nb Vt.  The derivatives of y = (Rs, Vj0, Ir) in each parameter
 * follow from dy/dtheta = -(dG/dy)^-1 dG/dtheta (implicit function
 * theorem); then the junction current
 *
 *   Ij(vj) = Is (exp(vj / n Vt) - 1) - Ir (exp(-(vj + Vj0) / a) - e0)
 *
 * is differentiated at fixed vj and carried to the terminals as above.
 */

/* Solve the 3x3 system A z = b in place (Gaussian elimination with partial
 * pivoting); returns 0, or -1 when singular. */
static int solve3(double a[3][3], double b[3])
{
	for (int col = 0; col < 3; col++) {
		int piv = col;
		for (int r = col + 1; r < 3; r++)
			if (fabs(a[r][col]) > fabs(a[piv][col]))
				piv = r;
		if (!(fabs(a[piv][col]) > 0.0))
			return -1;
		if (piv != col) {
			for (int j = 0; j < 3; j++) {
				double t = a[col][j];
				a[col][j] = a[piv][j];
				a[piv][j] = t;
			}
			double t = b[col];
			b[col] = b[piv];
			b[piv] = t;
		}
		for (int r = col + 1; r < 3; r++) {
			double f = a[r][col] / a[col][col];
			for (int j = col; j < 3; j++)
				a[r][j] -= f * a[col][j];
			b[r] -= f * b[col];
		}
	}
	for (int r = 2; r >= 0; r--) {
		double s = b[r];
		for (int j = r + 1; j < 3; j++)
			s -= a[r][j] * b[j];
		b[r] = s / a[r][r];
	}
	return 0;
}

/* The zener's current at point K and its parameter derivatives. */
static int zener_eval(const struct fit_spec *s, const struct fit_ctx *c,
                      const double *p, size_t k, double *y, double *dy)
{
	(void)s;
	double q[MODEL_MAX_PARAMS];
	memcpy(q, p, sizeof q);
	double tk = fit_ctx_temp(c, k);
	if (isfinite(tk))
		q[ZENER_TEMP] = tk;
	double v = c->x[k];
	double i = model_zener.current(q, v);
	if (!isfinite(i))
		return -1;
	*y = i;
	if (dy == NULL)
		return 0;
	double vt = diode_thermal_voltage(q[ZENER_TEMP]);
	double nvt = q[ZENER_N] * vt, a = q[ZENER_NB] * vt;
	double iz = q[ZENER_IZT], is = q[ZENER_IS];
	double rs = model_zener.series_resistance(q);
	double vj0 = q[ZENER_VZ] - iz * rs;
	double e0 = exp(-vj0 / a), d = -expm1(-vj0 / a);
	double en = exp(-vj0 / nvt), e = expm1(-vj0 / nvt);
	double ir = (iz + is * e) / d;
	double gj = is / nvt * en + ir / a;
	double gj2 = gj * gj;
	/* dG/dy, columns Rs, Vj0, Ir */
	const double ay[3][3] = {
		{ iz, 1.0, 0.0 },
		{ 0.0, ir * e0 / a + is * en / nvt, d },
		{ 1.0, is * en / (nvt * nvt) / gj2, -1.0 / (a * gj2) },
	};
	/* dG/dtheta for Vz, rz, nb, Is, n, Izt */
	enum { T_VZ, T_RZ, T_NB, T_IS, T_N, T_IZT, T_COUNT };
	static const int key[T_COUNT] = { ZENER_VZ, ZENER_RZ, ZENER_NB,
	                                  ZENER_IS, ZENER_N, ZENER_IZT };
	double dg[T_COUNT][3] = {
		[T_VZ] = { -1.0, 0.0, 0.0 },
		[T_RZ] = { 0.0, 0.0, -1.0 },
		[T_NB] = { 0.0, -ir * e0 * vj0 / (a * a) * vt,
		           ir / (a * a * gj2) * vt },
		[T_IS] = { 0.0, -e, -en / nvt / gj2 },
		[T_N] = { 0.0, -is * en * vj0 / (nvt * nvt) * vt,
		          -is * en * (vj0 / (nvt * nvt * nvt) - 1.0 / (nvt * nvt)) /
		                  gj2 * vt },
		[T_IZT] = { rs, -1.0, 0.0 },
	};
	double vj = v - i * rs;
	double f = exp(-(vj + vj0) / a);
	double g = model_zener.intrinsic_conductance(q, vj);
	double den = 1.0 + g * rs;
	double explicit_[T_COUNT] = {
		[T_NB] = -ir * (f * (vj + vj0) - e0 * vj0) / (a * a) * vt,
		[T_IS] = expm1(vj / nvt),
		[T_N] = -is * exp(vj / nvt) * vj / (nvt * nvt) * vt,
	};
	for (int th = 0; th < T_COUNT; th++) {
		double m[3][3], b[3];
		memcpy(m, ay, sizeof m);
		for (int r = 0; r < 3; r++)
			b[r] = -dg[th][r];
		if (solve3(m, b) != 0)
			return -1;
		/* b = d(Rs, Vj0, Ir)/dtheta */
		double dij = explicit_[th] + ir * (f - e0) / a * b[1] - (f - e0) * b[2];
		dy[key[th]] = (dij - g * i * b[0]) / den;
		if (!isfinite(dy[key[th]]))
			return -1;
	}
	return 0;
}

/*
 * Breakdown from the reverse points (magnitudes u = -V, w = -I, rising):
 * nb Vt = (u2 - u1) / ln(w2 / w1) on the two lowest, Rs from the ends,
 * Rs = (u_hi - u_lo - nb Vt ln(w_hi / w_lo)) / (w_hi - w_lo), Vz at Izt
 * from the point nearest it, rz = nb Vt / Izt + Rs; the forward branch by
 * the two-point estimate when it is fitted.
 */
static int zener_start(const struct fit_spec *s, const struct fit_ctx *c,
                       double *p, const bool *free)
{
	(void)s;
	size_t rev[FIT_MAX_POINTS], m = 0;
	size_t g = c->ref_group;
	double vt = diode_thermal_voltage(group_temp(c, g, p[ZENER_TEMP]));
	/* reverse points in rising magnitude: falling x */
	for (size_t j = c->gstart[g + 1]; j-- > c->gstart[g];) {
		size_t k = c->order[j];
		if (c->x[k] < 0.0 && c->y[k] < 0.0)
			rev[m++] = k;
	}
	double iz = p[ZENER_IZT];
	double a = p[ZENER_NB] * vt, rs = NAN;
	if (m >= 1) {
		size_t lo = rev[0], hi = rev[m - 1];
		if (free[ZENER_NB] && m >= 2) {
			double an = (c->x[lo] - c->x[rev[1]]) /
			            log(c->y[rev[1]] / c->y[lo]);
			if (an > 0.0 && isfinite(an))
				a = fmin(fmax(an, 0.2 * vt), 20.0 * vt);
			else
				a = vt;
		}
		if (!free[ZENER_RZ]) {
			rs = p[ZENER_RZ] - a / iz;
		} else if (m >= 2) {
			rs = (c->x[lo] - c->x[hi] - a * log(c->y[hi] / c->y[lo])) /
			     (c->y[lo] - c->y[hi]);
		}
		if (!(rs > 0.0) || !isfinite(rs))
			rs = 0.05 * a / iz;
		/* the point nearest Izt on a log scale */
		size_t near = lo;
		for (size_t j = 0; j < m; j++)
			if (fabs(log(-c->y[rev[j]] / iz)) < fabs(log(-c->y[near] / iz)))
				near = rev[j];
		double u = -c->x[near], w = -c->y[near];
		if (free[ZENER_VZ])
			p[ZENER_VZ] = u + a * log(iz / w) + rs * (iz - w);
	} else if (free[ZENER_VZ] || free[ZENER_RZ] || free[ZENER_NB]) {
		return -1;
	} else {
		rs = p[ZENER_RZ] - a / iz;
	}
	if (free[ZENER_NB])
		p[ZENER_NB] = a / vt;
	if (free[ZENER_RZ])
		p[ZENER_RZ] = a / iz + rs;
	if (free[ZENER_IS] || free[ZENER_N]) {
		size_t idx[FIT_MAX_POINTS];
		size_t mf = forward_points(c, g, idx, FIT_MAX_POINTS);
		double is, n, r;
		if (junction_estimate(c, idx, mf, vt, free[ZENER_N] ? NAN : p[ZENER_N],
		                      rs, &is, &n, &r) == 0) {
			if (free[ZENER_N])
				p[ZENER_N] = n;
			if (free[ZENER_IS])
				p[ZENER_IS] = is;
		}
	}
	/* a start the model refuses (rz below the junction's own): widen rz */
	char err[200];
	for (int tries = 0; tries < 8; tries++) {
		if (model_zener.validate(p, err, sizeof err) == 0)
			return 0;
		if (!free[ZENER_RZ])
			break;
		p[ZENER_RZ] *= 1.5;
	}
	return -1;
}

static const struct fit_spec fit_zener = {
	.type = &model_zener,
	.axes = FIT_AXES_VI,
	.slope = 1,
	.free = { "breakdown_voltage", "dynamic_resistance", "breakdown_ideality",
	          "saturation_current", "ideality" },
	.hint = { NULL, NULL, "1", "1e-14", "1" },
	.need = { FIT_NEED_REVERSE, FIT_NEED_REVERSE, FIT_NEED_REVERSE,
	          FIT_NEED_FORWARD, FIT_NEED_FORWARD },
	.temp_key = "temperature",
	.start = zener_start,
	.eval = zener_eval,
};

/* ---- power law: reference current (or voltage) and exponent ---- */

/* I = Iref sign(V) |V / Vref|^alpha: dI/dIref = I / Iref,
 * dI/dalpha = I ln|V / Vref|, dI/dVref = -alpha I / Vref. */
static int power_law_eval(const struct fit_spec *s, const struct fit_ctx *c,
                          const double *p, size_t k, double *y, double *dy)
{
	(void)s;
	double v = c->x[k];
	double i = model_power_law.current(p, v);
	if (!isfinite(i))
		return -1;
	*y = i;
	if (dy == NULL)
		return 0;
	double vr = p[POWER_LAW_VREF];
	dy[POWER_LAW_IREF] = i / p[POWER_LAW_IREF];
	dy[POWER_LAW_ALPHA] = v != 0.0 ? i * log(fabs(v) / vr) : 0.0;
	dy[POWER_LAW_VREF] = -p[POWER_LAW_ALPHA] * i / vr;
	return 0;
}

/*
 * The reference voltage, when nobody gave it, is the points' geometric
 * mean voltage to two significant digits (a pivot that keeps Iref and
 * alpha nearly uncorrelated); then the exponent and the reference from
 * the two points farthest apart: alpha = ln(w2/w1) / ln(u2/u1) in
 * magnitudes.
 */
static int power_law_start(const struct fit_spec *s, const struct fit_ctx *c,
                           double *p, const bool *free)
{
	(void)s;
	size_t lo = SIZE_MAX, hi = SIZE_MAX;
	double sum = 0.0;
	size_t m = 0;
	for (size_t k = 0; k < c->n; k++) {
		double u = fabs(c->x[k]);
		if (!(u > 0.0) || c->y[k] == 0.0)
			continue;
		sum += log(u);
		m++;
		if (lo == SIZE_MAX || u < fabs(c->x[lo]))
			lo = k;
		if (hi == SIZE_MAX || u > fabs(c->x[hi]))
			hi = k;
	}
	if (m == 0)
		return -1;
	if (!free[POWER_LAW_VREF] && !isfinite(p[POWER_LAW_VREF])) {
		double gm = exp(sum / (double)m);
		double e = pow(10.0, floor(log10(gm)) - 1.0);
		p[POWER_LAW_VREF] = round(gm / e) * e;
	}
	double u1 = fabs(c->x[lo]), w1 = fabs(c->y[lo]);
	double u2 = fabs(c->x[hi]), w2 = fabs(c->y[hi]);
	if (free[POWER_LAW_ALPHA]) {
		double al = NAN;
		if (hi != lo)
			al = log(w2 / w1) / log(u2 / u1);
		else if (isfinite(p[POWER_LAW_VREF]) && isfinite(p[POWER_LAW_IREF]))
			al = log(w1 / p[POWER_LAW_IREF]) / log(u1 / p[POWER_LAW_VREF]);
		if (!(al > 0.0) || !isfinite(al))
			al = 1.0;
		p[POWER_LAW_ALPHA] = al;
	}
	double al = p[POWER_LAW_ALPHA];
	if (free[POWER_LAW_IREF])
		p[POWER_LAW_IREF] = w1 * pow(p[POWER_LAW_VREF] / u1, al);
	if (free[POWER_LAW_VREF])
		p[POWER_LAW_VREF] = u1 * pow(p[POWER_LAW_IREF] / w1, 1.0 / al);
	return isfinite(p[POWER_LAW_IREF]) && p[POWER_LAW_IREF] > 0.0 &&
	       isfinite(p[POWER_LAW_VREF]) && p[POWER_LAW_VREF] > 0.0 ? 0 : -1;
}

static const struct fit_spec fit_power_law = {
	.type = &model_power_law,
	.axes = FIT_AXES_VI,
	.slope = 1,
	.free = { "reference_current", "exponent" },
	.hint = { NULL, "1" },
	.alt = { "reference_voltage", NULL },
	.start = power_law_start,
	.eval = power_law_eval,
};

/* ---- thermistors: R(T), beta and Steinhart-Hart ---- */

/* R = R0 exp(B (1/T - 1/T0)) (common practice): dR/dR0 = R / R0,
 * dR/dB = R (1/T - 1/T0), dR/dT0 = R B / T0^2 (T in kelvin). */
static int beta_eval(const struct fit_spec *s, const struct fit_ctx *c,
                     const double *p, size_t k, double *y, double *dy)
{
	(void)s;
	double r = thermistor_resistance_at(&model_thermistor, p, c->x[k]);
	if (!isfinite(r) || !(r > 0.0))
		return -1;
	*y = r;
	if (dy == NULL)
		return 0;
	double t = c->x[k] + ZERO_C, t0 = p[THERM_T0] + ZERO_C;
	dy[THERM_R0] = r / p[THERM_R0];
	dy[THERM_B] = r * (1.0 / t - 1.0 / t0);
	dy[THERM_T0] = r * p[THERM_B] / (t0 * t0);
	return 0;
}

/* The two-point closed form on the coldest and hottest points:
 * B = ln(R1 / R2) / (1/T1 - 1/T2), R0 = R1 exp(-B (1/T1 - 1/T0)). */
static int beta_start(const struct fit_spec *s, const struct fit_ctx *c,
                      double *p, const bool *free)
{
	(void)s;
	size_t k1 = c->order[0], k2 = c->order[c->n - 1];
	double t1 = c->x[k1] + ZERO_C, t2 = c->x[k2] + ZERO_C;
	double t0 = p[THERM_T0] + ZERO_C;
	if (free[THERM_B]) {
		if (k1 != k2)
			p[THERM_B] = log(c->y[k1] / c->y[k2]) / (1.0 / t1 - 1.0 / t2);
		else if (isfinite(p[THERM_R0]))
			p[THERM_B] = log(c->y[k1] / p[THERM_R0]) / (1.0 / t1 - 1.0 / t0);
	}
	if (free[THERM_R0]) {
		/* the geometric mean over all points of R e^(-B (1/T - 1/T0)) */
		double sum = 0.0;
		for (size_t k = 0; k < c->n; k++)
			sum += log(c->y[k]) -
			       p[THERM_B] * (1.0 / (c->x[k] + ZERO_C) - 1.0 / t0);
		p[THERM_R0] = exp(sum / (double)c->n);
	}
	return isfinite(p[THERM_B]) && p[THERM_B] > 0.0 &&
	       isfinite(p[THERM_R0]) && p[THERM_R0] > 0.0 ? 0 : -1;
}

static const struct fit_spec fit_beta = {
	.type = &model_thermistor,
	.axes = FIT_AXES_TR,
	.slope = -1,
	.free = { "resistance_at_reference", "beta" },
	.hint = { NULL, "3950" },
	.start = beta_start,
	.eval = beta_eval,
};

/* 1/T = A + B L + C L^3 with L = ln R (Steinhart & Hart 1968): at fixed T,
 * dL/dA = -1/D, dL/dB = -L/D, dL/dC = -L^3/D with D = B + 3 C L^2. */
static int sh_eval(const struct fit_spec *s, const struct fit_ctx *c,
                   const double *p, size_t k, double *y, double *dy)
{
	(void)s;
	double r = thermistor_resistance_at(&model_thermistor_sh, p, c->x[k]);
	if (!isfinite(r) || !(r > 0.0))
		return -1;
	*y = r;
	if (dy == NULL)
		return 0;
	double l = log(r);
	double d = p[THERM_SH_B] + 3.0 * p[THERM_SH_C] * l * l;
	dy[THERM_SH_A] = -r / d;
	dy[THERM_SH_B] = -r * l / d;
	dy[THERM_SH_C] = -r * l * l * l / d;
	return isfinite(dy[THERM_SH_A]) ? 0 : -1;
}

/* Three-point closed form (see fit.h). */
int fit_steinhart_hart_three_point(const double t_c[3], const double r[3],
                                   double *a, double *b, double *c)
{
	double l1 = log(r[0]), l2 = log(r[1]), l3 = log(r[2]);
	double y1 = 1.0 / (t_c[0] + ZERO_C), y2 = 1.0 / (t_c[1] + ZERO_C),
	       y3 = 1.0 / (t_c[2] + ZERO_C);
	if (l1 == l2 || l1 == l3 || l2 == l3 || y1 == y2 || y1 == y3 || y2 == y3)
		return -1;
	double g2 = (y2 - y1) / (l2 - l1), g3 = (y3 - y1) / (l3 - l1);
	*c = (g3 - g2) / (l3 - l2) / (l1 + l2 + l3);
	*b = g2 - *c * (l1 * l1 + l1 * l2 + l2 * l2);
	*a = y1 - (*b + l1 * l1 * *c) * l1;
	return isfinite(*a) && isfinite(*b) && isfinite(*c) ? 0 : -1;
}

/* Least squares of 1/T = A + B L + C L^3 over every point for the free
 * coefficients (the held ones moved to the left side); the normal
 * equations are at most 3x3.  Returns 0 or -1. */
static int sh_linear(const struct fit_ctx *c, double *p, const bool *use)
{
	static const int key[3] = { THERM_SH_A, THERM_SH_B, THERM_SH_C };
	int col[3], nc = 0;
	for (int j = 0; j < 3; j++)
		if (use[j])
			col[nc++] = j;
	if (nc == 0)
		return 0;
	double m[3][3] = { { 0 } }, b[3] = { 0 };
	for (size_t k = 0; k < c->n; k++) {
		double l = log(c->y[k]);
		double f[3] = { 1.0, l, l * l * l };
		double rhs = 1.0 / (c->x[k] + ZERO_C);
		for (int j = 0; j < 3; j++)
			if (!use[j])
				rhs -= p[key[j]] * f[j];
		for (int r = 0; r < nc; r++) {
			b[r] += f[col[r]] * rhs;
			for (int q = 0; q < nc; q++)
				m[r][q] += f[col[r]] * f[col[q]];
		}
	}
	/* pad to 3x3 with an identity block so solve3 applies */
	for (int r = nc; r < 3; r++) {
		m[r][r] = 1.0;
		b[r] = 0.0;
	}
	if (solve3(m, b) != 0)
		return -1;
	for (int r = 0; r < nc; r++)
		p[key[col[r]]] = b[r];
	return 0;
}

/*
 * The three-point closed form on the coldest, middle and hottest points
 * when A, B and C are all free, else least squares of the linear form;
 * a C that comes out at or below zero starts small instead (C is fitted
 * in its log).
 */
static int sh_start(const struct fit_spec *s, const struct fit_ctx *c,
                    double *p, const bool *free)
{
	(void)s;
	bool use[3] = { free[THERM_SH_A], free[THERM_SH_B], free[THERM_SH_C] };
	if (use[0] && use[1] && use[2] && c->n >= 3) {
		size_t ks[3] = { c->order[0], c->order[(c->n - 1) / 2],
		                 c->order[c->n - 1] };
		double t3[3], r3[3];
		for (int j = 0; j < 3; j++) {
			t3[j] = c->x[ks[j]];
			r3[j] = c->y[ks[j]];
		}
		if (fit_steinhart_hart_three_point(t3, r3, &p[THERM_SH_A],
		                                   &p[THERM_SH_B], &p[THERM_SH_C]) != 0)
			return -1;
	} else if (sh_linear(c, p, use) != 0) {
		return -1;
	}
	if (use[2] && !(p[THERM_SH_C] > 0.0)) {
		double lmax = 0.0;
		for (size_t k = 0; k < c->n; k++)
			lmax = fmax(lmax, fabs(log(c->y[k])));
		double b = p[THERM_SH_B] > 0.0 ? p[THERM_SH_B] : 2.5e-4;
		p[THERM_SH_C] = 1e-3 * b / fmax(lmax * lmax, 1.0);
		bool ab[3] = { use[0], use[1], false };
		if (sh_linear(c, p, ab) != 0)
			return -1;
	}
	return isfinite(p[THERM_SH_A]) && p[THERM_SH_B] > 0.0 &&
	       isfinite(p[THERM_SH_B]) ? 0 : -1;
}

static const struct fit_spec fit_sh = {
	.type = &model_thermistor_sh,
	.axes = FIT_AXES_TR,
	.slope = -1,
	.free = { "steinhart_hart_a", "steinhart_hart_b", "steinhart_hart_c" },
	.hint = { NULL, NULL, "0" },
	.start = sh_start,
	.eval = sh_eval,
};

const struct fit_spec *const fit_specs[] = {
	&fit_diode, &fit_led, &fit_zener, &fit_power_law, &fit_npn, &fit_pnp,
	&fit_beta, &fit_sh, NULL,
};

/* The spec of TYPE, or NULL. */
const struct fit_spec *fit_spec_find(const struct model_type *type)
{
	for (size_t k = 0; fit_specs[k] != NULL; k++)
		if (fit_specs[k]->type == type)
			return fit_specs[k];
	return NULL;
}
