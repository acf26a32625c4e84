/*
 * test_manual.c - the manual against the models.  For every model, the
 * current (or a thermistor's voltage) is computed here from the equations
 * exactly as man/biasline-models.7 writes them, typed from the page into
 * this file and solved by plain bisection in long double, and compared
 * with the model; and the page's table of keys (unit, default, range) is
 * compared with each model's own table, so the page cannot drift from the
 * code.  BIASLINE_MODELS_PAGE names the page.
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cmocka.h>

#include "core/model.h"
#include "core/models/models.h"
#include "core/problem.h"
#include "core/source.h"

/* The page's constants: k and q of the 2019 SI. */
#define PAGE_K 1.380649e-23L
#define PAGE_Q 1.602176634e-19L

typedef long double ld;

/* Vt = k T / q with T = temperature + 273.15 (page: Conventions). */
static ld page_vt(double temp_c)
{
	return PAGE_K * ((ld)temp_c + 273.15L) / PAGE_Q;
}

/* The root of F (increasing) in [LO, HI] by 400 bisections. */
static ld bisect(ld (*f)(const ld *c, ld x), const ld *c, ld lo, ld hi)
{
	for (int k = 0; k < 400; k++) {
		ld m = 0.5L * (lo + hi);
		if (m <= lo || m >= hi)
			break;
		if (f(c, m) < 0.0L)
			lo = m;
		else
			hi = m;
	}
	return 0.5L * (lo + hi);
}

/* Compare the model's GOT with the page's WANT (relative, or absolute near
 * zero against SCALE). */
static void page_close(const char *what, double x, double got, ld want,
                       ld scale, double tol)
{
	ld err = fabsl((ld)got - want);
	if (!(err <= tol * (fabsl(want) + scale)))
		fail_msg("%s at %.9g: model %.17g, biasline-models(7) %.17Lg", what,
		         x, got, want);
}

/* ---- diode (page: DIODE) ---- */

/* c = { Is(T), n Vt, Rs, V }: Vj + Rs Is (exp(Vj/nVt) - 1) - V. */
static ld diode_f(const ld *c, ld vj)
{
	return vj + c[2] * c[0] * expm1l(vj / c[1]) - c[3];
}

/* I of the page's diode with Is(T), n Vt and Rs at V. */
static ld page_junction_current(ld is, ld nvt, ld rs, ld v)
{
	ld c[4] = { is, nvt, rs, v };
	ld vj = rs > 0.0L ? bisect(diode_f, c, fminl(v, 0.0L), fmaxl(v, 0.0L)) : v;
	return is * expm1l(vj / nvt);
}

static void test_diode(void **state)
{
	(void)state;
	/* Is, n, Rs, T, T0, Eg, m */
	static const double sets[][7] = {
		{ 2.385e-14, 1.037, 0.0, 25.0, -273.15, 1.12, 3.0 },
		{ 3.1e-14, 1.27, 0.33, 71.3, 25.0, 1.12, 3.0 },
		{ 7.91e-9, 1.93, 0.417, -12.4, 41.0, 0.67, 2.4 },
	};
	static const double vs[] = { -0.73, 0.0, 0.271, 0.5837, 0.703 };
	for (size_t s = 0; s < sizeof sets / sizeof sets[0]; s++) {
		const double *p = sets[s];
		struct device d;
		device_init(&d, &model_diode);
		memcpy(d.p, p, 7 * sizeof p[0]);
		ld t = (ld)p[3] + 273.15L, nvt = p[1] * page_vt(p[3]);
		ld is = p[0];
		if (p[4] != -273.15) {
			ld t0 = (ld)p[4] + 273.15L;
			is = p[0] * powl(t / t0, p[6]) *
			     expl((PAGE_Q * p[5] / (p[1] * PAGE_K)) * (1.0L / t0 - 1.0L / t));
		}
		for (size_t k = 0; k < sizeof vs / sizeof vs[0]; k++)
			page_close("diode", vs[k], device_current(&d, vs[k]),
			           page_junction_current(is, nvt, p[2], vs[k]), is, 1e-11);
	}
}

/* ---- power-law (page: POWER-LAW) ---- */

static void test_power_law(void **state)
{
	(void)state;
	static const double sets[][3] = { { 12.7, 3.81e-3, 23.6 },
	                                  { 0.273, 0.91, 0.4137 } };
	static const double vs[] = { -13.1, -0.2, 0.0, 0.19, 12.9 };
	for (size_t s = 0; s < 2; s++) {
		struct device d;
		device_init(&d, &model_power_law);
		memcpy(d.p, sets[s], 3 * sizeof(double));
		for (size_t k = 0; k < sizeof vs / sizeof vs[0]; k++) {
			ld v = vs[k];
			ld i = sets[s][1] * (v < 0 ? -1.0L : v > 0 ? 1.0L : 0.0L) *
			       powl(fabsl(v / sets[s][0]), sets[s][2]);
			page_close("power-law", vs[k], device_current(&d, vs[k]), i,
			           1e-300L, 1e-13);
		}
	}
}

/* ---- zener (page: ZENER) ---- */

/* c = { Is, nVt, a, Ir, Vj0, Rs, V }: Vj + Rs Ij(Vj) - V. */
static ld zener_ij(const ld *c, ld vj)
{
	return c[0] * expm1l(vj / c[1]) -
	       c[3] * (expl(-(vj + c[4]) / c[2]) - expl(-c[4] / c[2]));
}

static ld zener_f(const ld *c, ld vj)
{
	return vj + c[5] * zener_ij(c, vj) - c[6];
}

static void test_zener(void **state)
{
	(void)state;
	/* Vz, Izt, rz, Is, n, nb, T, TC, Tref */
	static const double sets[][9] = {
		{ 5.1, 5e-3, 17.0, 1e-14, 1.0, 1.0, 25.0, 0.0, 25.0 },
		{ 3.37, 2.15e-2, 4.81, 2.7e-13, 1.43, 1.21, 47.3, 0.0, 25.0 },
		{ 12.4, 1.03e-3, 61.9, 8.1e-15, 1.07, 2.3, -11.6, 8.3e-3, 21.7 },
	};
	static const double vs[] = { -13.0, -5.2, -3.4, -1.0, 0.0, 0.4, 0.72 };
	for (size_t s = 0; s < sizeof sets / sizeof sets[0]; s++) {
		const double *p = sets[s];
		struct device d;
		device_init(&d, &model_zener);
		memcpy(d.p, p, 9 * sizeof p[0]);
		ld vt = page_vt(p[6]), nvt = p[4] * vt, a = p[5] * vt;
		/* Vz(T) = Vz + TC (T - Tref) */
		ld vz = (ld)p[0] + (ld)p[7] * ((ld)p[6] - p[8]);
		ld izt = p[1], rz = p[2], is = p[3];
		/* Rs from rz - a/Izt, substituted in the page's order. */
		ld rs = rz - a / izt, vj0, ir;
		for (int round = 0; round < 6; round++) {
			vj0 = vz - izt * rs;
			ir = (izt + is * (expl(-vj0 / nvt) - 1.0L)) / (1.0L - expl(-vj0 / a));
			ld gj = is / nvt * expl(-vj0 / nvt) + ir / a;
			ld rn = rz - 1.0L / gj;
			if (rn == rs)
				break;
			rs = rn;
		}
		vj0 = vz - izt * rs;
		ir = (izt + is * (expl(-vj0 / nvt) - 1.0L)) / (1.0L - expl(-vj0 / a));
		for (size_t k = 0; k < sizeof vs / sizeof vs[0]; k++) {
			ld c[7] = { is, nvt, a, ir, vj0, rs, vs[k] };
			ld vj = bisect(zener_f, c, fminl(vs[k], 0.0L), fmaxl(vs[k], 0.0L));
			page_close("zener", vs[k], device_current(&d, vs[k]),
			           zener_ij(c, vj), is, 1e-10);
		}
		/* The extra results print the derived Rs, Vj0 and Ir. */
		struct model_extra ex;
		struct source src = { .voc = 1.0, .isc = 1e-3, .r = 1e3 };
		assert_int_equal(device_secondary(&d, &src, -5.0, -1e-3, &ex), 0);
		page_close("zener Rs", 0, ex.v[0].value, rs, 0.0L, 1e-12);
		page_close("zener Vj0", 0, ex.v[1].value, vj0, 0.0L, 1e-12);
		page_close("zener Ir", 0, ex.v[2].value, ir, 0.0L, 1e-12);
	}
}

/* ---- led (page: LED) ---- */

static void test_led(void **state)
{
	(void)state;
	/* Vf, If, n, Rs, T, TC, Tref */
	static const double sets[][7] = {
		{ 2.0, 20e-3, 2.0, 6.0, 25.0, 0.0, 25.0 },
		{ 3.217, 3.5e-1, 3.41, 1.37, 61.8, -2.1e-3, 25.0 },
		{ 1.283, 1.03e-1, 1.47, 0.93, -17.2, -1.7e-3, 31.0 },
	};
	static const double vs[] = { -1.2, 0.0, 1.1, 1.9, 2.6, 3.3 };
	for (size_t s = 0; s < sizeof sets / sizeof sets[0]; s++) {
		const double *p = sets[s];
		struct device d;
		device_init(&d, &model_led);
		memcpy(d.p, p, 7 * sizeof p[0]);
		ld nvt = p[2] * page_vt(p[4]);
		ld vf = (ld)p[0] + (ld)p[5] * ((ld)p[4] - p[6]); /* Vf(T) */
		ld is = p[1] / (expl((vf - (ld)p[1] * p[3]) / nvt) - 1.0L);
		for (size_t k = 0; k < sizeof vs / sizeof vs[0]; k++)
			page_close("led", vs[k], device_current(&d, vs[k]),
			           page_junction_current(is, nvt, p[3], vs[k]), is, 1e-10);
		/* The stated point itself, at Vf(T). */
		page_close("led at Vf", p[0], device_current(&d, (double)vf), p[1],
		           0.0L, 1e-12);
	}
}

/* ---- tunnel (page: TUNNEL) ---- */

/* c = { S Vv, R }: x (1 - exp(-S Vv / x)) - R. */
static ld tunnel_h(const ld *c, ld x)
{
	return x * (1.0L - expl(-c[0] / x)) - c[1];
}

static void test_tunnel(void **state)
{
	(void)state;
	/* Vp, Ip, Vv, Iv, Is, n, T */
	static const double sets[][7] = {
		{ 0.065, 1e-3, 0.35, 1.2e-4, 3.5e-12, 1.0, 25.0 },
		{ 0.0713, 4.7e-3, 0.382, 5.9e-4, 1.9e-11, 1.12, 31.4 },
	};
	static const double vs[] = { -0.03, 0.0, 0.041, 0.065, 0.2, 0.35, 0.47 };
	for (size_t s = 0; s < 2; s++) {
		const double *p = sets[s];
		struct device d;
		device_init(&d, &model_tunnel);
		memcpy(d.p, p, 7 * sizeof p[0]);
		ld vp = p[0], ip = p[1], vv = p[2], iv = p[3], is = p[4];
		ld nvt = p[5] * page_vt(p[6]);
		ld itv = ip / vp * vv * expl(1.0L - vv / vp);
		ld idv = is * (expl(vv / nvt) - 1.0L);
		ld itp = ip / vp * expl(1.0L - vv / vp) * (1.0L - vv / vp);
		ld idp = is / nvt * expl(vv / nvt);
		ld r = iv - itv - idv, sl = -(itp + idp);
		ld c[2] = { sl * vv, r };
		ld hi = r;
		while (tunnel_h(c, hi) < 0.0L)
			hi *= 2.0L;
		ld ix0 = bisect(tunnel_h, c, r, hi), a = sl / ix0;
		for (size_t k = 0; k < sizeof vs / sizeof vs[0]; k++) {
			ld v = vs[k];
			ld i = ip / vp * v * expl(1.0L - v / vp) +
			       ix0 * (expl(a * (v - vv)) - expl(-a * vv)) +
			       is * (expl(v / nvt) - 1.0L);
			page_close("tunnel", vs[k], device_current(&d, vs[k]), i, ip, 1e-10);
		}
	}
}

/* ---- npn, pnp (page: NPN, PNP) ---- */

/* The page's constants of a stage in B: Is, n Vt, beta, betaR, RE, RC,
 * VCC (then VB for the base-loop equation). */
enum { B_IS, B_S, B_BF, B_BR, B_RE, B_RC, B_VCC, B_VB, B_N };

/* c = { A, B, s }: u + B (exp(u/s) - 1) - A. */
static ld bjt_u_f(const ld *c, ld u)
{
	return u + c[1] * expm1l(u / c[2]) - c[0];
}

/* IB, IE at VBE = T. */
static void page_bjt_at(const ld *b, ld t, ld *ib, ld *ie)
{
	ld a = expm1l(t / b[B_S]);
	ld big_a = t - b[B_VCC] +
	           b[B_IS] * a * (b[B_RE] * (1.0L + 1.0L / b[B_BF]) + b[B_RC]);
	ld big_b = b[B_IS] * (b[B_RE] + b[B_RC] * (1.0L + 1.0L / b[B_BR]));
	ld c[3] = { big_a, big_b, b[B_S] };
	ld u = bisect(bjt_u_f, c, fminl(big_a, 0.0L), fmaxl(big_a, 0.0L));
	ld cc = expm1l(u / b[B_S]);
	ld ic = b[B_IS] * (a - cc) - b[B_IS] / b[B_BR] * cc;
	*ib = b[B_IS] / b[B_BF] * a + b[B_IS] / b[B_BR] * cc;
	*ie = ic + *ib;
}

/* VBE + IE RE - VB. */
static ld bjt_vb_f(const ld *b, ld t)
{
	ld ib, ie;
	page_bjt_at(b, t, &ib, &ie);
	return t + b[B_RE] * ie - b[B_VB];
}

static void test_bjt(void **state)
{
	(void)state;
	/* Is, n, beta, RE, RC, VCC, betaR, T, Tref, Eg, m */
	static const double sets[][11] = {
		{ 1.2e-14, 1.0, 147.0, 470.0, 2.2e3, 12.0, 1.0, 25.0, -273.15, 1.12,
		  3.0 },
		{ 6.8e-15, 1.03, 283.0, 820.0, 39e3, 15.3, 0.37, 41.7, -273.15, 1.12,
		  3.0 },
		{ 2.3e-14, 1.0, 96.0, 0.0, 8.2e3, 9.1, 4.3, 61.3, 25.0, 1.12, 3.0 },
	};
	static const double vs[] = { -0.4, 0.31, 0.62, 0.9, 1.3, 2.2, 3.1 };
	for (int pol = 0; pol < 2; pol++)
		for (size_t s = 0; s < sizeof sets / sizeof sets[0]; s++) {
			const double *p = sets[s];
			struct device d;
			device_init(&d, pol ? &model_pnp : &model_npn);
			memcpy(d.p, p, 11 * sizeof p[0]);
			/* Is carried to T by the diode's law when Tref is given. */
			ld is = p[0];
			if (p[8] != -273.15) {
				ld t = (ld)p[7] + 273.15L, t0 = (ld)p[8] + 273.15L;
				is = p[0] * powl(t / t0, p[10]) *
				     expl((PAGE_Q * p[9] / (p[1] * PAGE_K)) *
				          (1.0L / t0 - 1.0L / t));
			}
			ld b[B_N] = { is, p[1] * page_vt(p[7]), p[2], p[6], p[3], p[4],
			              p[5], 0.0L };
			for (size_t k = 0; k < sizeof vs / sizeof vs[0]; k++) {
				b[B_VB] = vs[k];
				/* VB rises with VBE (the page); the root lies between
				 * VB - 10 V and VB + 1 V here. */
				ld t = bisect(bjt_vb_f, b, (ld)vs[k] - 10.0L, (ld)vs[k] + 1.0L);
				assert_true(bjt_vb_f(b, (ld)vs[k] - 10.0L) < 0.0L);
				assert_true(bjt_vb_f(b, (ld)vs[k] + 1.0L) > 0.0L);
				ld ib, ie;
				page_bjt_at(b, t, &ib, &ie);
				page_close(pol ? "pnp" : "npn", vs[k], device_current(&d, vs[k]),
				           ib, b[B_IS], 1e-9);
			}
		}
}

/* ---- jfet, nmos (page: JFET, NMOS) ---- */

/* c = { th, k, VDD, R, VGS }: ID - law(VGS, VDD - ID R). */
static ld fet_f(const ld *c, ld id)
{
	ld vov = c[4] - c[0], vds = c[2] - id * c[3];
	ld law = vds >= vov ? 0.5L * c[1] * vov * vov
	                    : c[1] * (vov * vds - 0.5L * vds * vds);
	return id - law;
}

static void test_fet(void **state)
{
	(void)state;
	/* model, K, threshold, VDD, RD, source r */
	struct fcase {
		const struct model_type *t;
		double p[4], r;
	};
	static const struct fcase cases[] = {
		{ &model_jfet, { 8.7e-3, -2.43, 15.0, 1.2e3 }, 390.0 },
		{ &model_jfet, { 6.3e-3, 1.93, 7.5, 3.3e3 }, 270.0 },
		{ &model_nmos, { 2.2e-3, 1.35, 12.0, 10e3 }, 1.5e3 },
		{ &model_nmos, { 3.7e-2, 2.05, 9.0, 560.0 }, 0.0 },
		{ &model_nmos, { 2.4e-3, 1.87, 18.0, 3.3e3 }, 1e3 },
	};
	static const double vs[] = { -3.0, -1.7, -0.4, 0.2, 1.9, 2.6, 3.9, 7.1 };
	for (size_t s = 0; s < sizeof cases / sizeof cases[0]; s++) {
		const struct fcase *fc = &cases[s];
		struct problem pb;
		memset(&pb, 0, sizeof pb);
		device_init(&pb.dev, fc->t);
		memcpy(pb.dev.p, fc->p, 4 * sizeof(double));
		pb.src = (struct source){ .voc = 5.0, .isc = 5.0 / fc->r, .r = fc->r };
		problem_bind(&pb);
		bool jfet = fc->t == &model_jfet;
		ld th = jfet ? -fabsl(fc->p[1]) : fc->p[1];
		ld k = jfet ? 2.0L * fc->p[0] / ((ld)fc->p[1] * fc->p[1]) : fc->p[0];
		ld rl = (ld)fc->p[3] + fc->r;
		for (size_t j = 0; j < sizeof vs / sizeof vs[0]; j++) {
			ld want = 0.0L;
			if (vs[j] > th) {
				ld c[5] = { th, k, fc->p[2], rl, vs[j] };
				ld hi = rl > 0.0L ? fc->p[2] / rl : 0.5L * k * (vs[j] - th) *
				                                     (vs[j] - th);
				want = bisect(fet_f, c, 0.0L, hi);
			}
			page_close(fc->t->name, vs[j], device_current(&pb.dev, vs[j]), want,
			           1e-15L, 1e-11);
		}
	}
}

/* ---- thermistor, thermistor-sh (page: THERMISTOR, THERMISTOR-SH) ---- */

/* c = { A, B, C, 1/T }: A + B L + C L^3 - 1/T, increasing in L = ln R. */
static ld therm_lnr_f(const ld *c, ld l)
{
	return c[0] + c[1] * l + c[2] * l * l * l - c[3];
}

/* R at T (kelvin) for the page's beta (R0, T0 degC, B) or Steinhart-Hart
 * (A, B, C) parameters P. */
static ld page_therm_r(const ld *p, bool sh, ld t)
{
	if (!sh)
		return p[0] * expl(p[2] * (1.0L / t - 1.0L / (p[1] + 273.15L)));
	ld c[4] = { p[0], p[1], p[2], 1.0L / t };
	return expl(bisect(therm_lnr_f, c, -60.0L, 80.0L));
}

/* c = { I, delta, Ta, sh, p0, p1, p2 }: delta (T - Ta) - I^2 R(T). */
static ld therm_h(const ld *c, ld t)
{
	return c[1] * (t - c[2]) - c[0] * c[0] * page_therm_r(c + 4, c[3] != 0, t);
}

static void test_thermistor(void **state)
{
	(void)state;
	/* beta: R0, T0, B, delta, Ta, Tmax; sh: A, B, C, delta, Ta, Tmax */
	static const double beta[6] = { 1e4, 25.0, 3977.0, 1.5e-3, 25.0, 150.0 };
	static const double sh[6] = { 1.129148e-3, 2.34125e-4, 8.76741e-8, 1.5e-3,
	                              21.3, 150.0 };
	static const double is[] = { -3.1e-3, 1e-4, 1.7e-3, 4.4e-3, 9.3e-3 };
	for (int m = 0; m < 2; m++) {
		const double *p = m ? sh : beta;
		struct device d;
		device_init(&d, m ? &model_thermistor_sh : &model_thermistor);
		memcpy(d.p, p, 6 * sizeof p[0]);
		ld ta = (ld)p[4] + 273.15L, tmax = (ld)p[5] + 273.15L;
		ld pp[3] = { p[0], p[1], p[2] };
		for (size_t k = 0; k < sizeof is / sizeof is[0]; k++) {
			ld c[7] = { is[k], p[3], ta, (ld)m, p[0], p[1], p[2] };
			ld t = bisect(therm_h, c, ta, tmax);
			ld want = is[k] * page_therm_r(pp, m != 0, t);
			double got;
			assert_int_equal(device_voltage(&d, is[k], &got), 0);
			page_close(m ? "thermistor-sh" : "thermistor", is[k], got, want,
			           0.0L, 1e-10);
		}
		/* Imax = sqrt(delta (Tmax - Ta) / R(Tmax)): the end of the domain. */
		ld imax = sqrtl(p[3] * (p[5] - p[4]) / page_therm_r(pp, m != 0, tmax));
		double got;
		assert_int_equal(device_voltage(&d, (double)(imax * 0.999999L), &got), 0);
		assert_int_equal(device_voltage(&d, (double)(imax * 1.0001L), &got), -1);
	}
}

/* ---- measured (page: MEASURED) ---- */

static void test_measured(void **state)
{
	(void)state;
	static const double v[] = { 0.213, 0.4, 0.51, 0.57, 0.61, 0.648, 0.7 };
	static const double i[] = { 1e-6, 4e-6, 3.1e-5, 2.6e-4, 9e-4, 4.1e-3, 2.3e-2 };
	enum { N = sizeof v / sizeof v[0] };
	struct curve_data cd;
	char err[128];
	assert_int_equal(curve_data_init(&cd, v, i, N, err, sizeof err), 0);
	struct device d;
	device_init(&d, &model_measured);
	d.curve = &cd;
	/* The page's slopes: secants, end and mean slopes, the circle of 3. */
	ld del[N - 1], m[N];
	for (int k = 0; k + 1 < N; k++)
		del[k] = ((ld)i[k + 1] - i[k]) / ((ld)v[k + 1] - v[k]);
	m[0] = del[0];
	m[N - 1] = del[N - 2];
	for (int k = 1; k + 1 < N; k++)
		m[k] = 0.5L * (del[k - 1] + del[k]);
	for (int k = 0; k + 1 < N; k++) {
		ld a = m[k] / del[k], b = m[k + 1] / del[k];
		if (a * a + b * b > 9.0L) {
			ld tau = 3.0L / sqrtl(a * a + b * b);
			m[k] = tau * a * del[k];
			m[k + 1] = tau * b * del[k];
		}
	}
	static const double at[] = { 0.1, 0.213, 0.3, 0.47, 0.555, 0.6, 0.63,
	                             0.69, 0.7, 0.75 };
	for (size_t j = 0; j < sizeof at / sizeof at[0]; j++) {
		ld x = at[j], want;
		if (x <= v[0]) {
			want = i[0] + m[0] * (x - v[0]);
		} else if (x >= v[N - 1]) {
			want = i[N - 1] + m[N - 1] * (x - v[N - 1]);
		} else {
			int k = 0;
			while (!(x >= v[k] && x <= v[k + 1]))
				k++;
			ld h = (ld)v[k + 1] - v[k], t = (x - v[k]) / h;
			want = (2 * t * t * t - 3 * t * t + 1) * i[k] +
			       (t * t * t - 2 * t * t + t) * h * m[k] +
			       (-2 * t * t * t + 3 * t * t) * i[k + 1] +
			       (t * t * t - t * t) * h * m[k + 1];
		}
		page_close("measured", at[j], device_current(&d, at[j]), want, 1e-9L,
		           1e-12);
	}
	curve_data_fini(&cd);
}

/* ---- the page's tables against the models' own ---- */

/* Read the whole page. */
static char *page_read(void)
{
	const char *path = getenv("BIASLINE_MODELS_PAGE");
	assert_non_null(path);
	FILE *f = fopen(path, "r");
	if (f == NULL)
		fail_msg("cannot read %s", path);
	static char buf[1 << 18];
	size_t n = fread(buf, 1, sizeof buf - 1, f);
	fclose(f);
	buf[n] = '\0';
	return buf;
}

/* Copy S into OUT with roff's "\-" as "-" and "\(em" as "-em-". */
static void page_plain(const char *s, size_t len, char *out, size_t n)
{
	size_t o = 0;
	for (size_t k = 0; k < len && o + 5 < n; k++) {
		if (strncmp(s + k, "\\-", 2) == 0) {
			out[o++] = '-';
			k++;
		} else if (strncmp(s + k, "\\(em", 4) == 0) {
			memcpy(out + o, "-em-", 4);
			o += 4;
			k += 3;
		} else {
			out[o++] = s[k];
		}
	}
	out[o] = '\0';
}

/* Whether the .SH line HEAD (plain) names model NAME among its words. */
static bool page_heading_names(const char *head, const char *name)
{
	char up[64];
	size_t n = strlen(name);
	for (size_t k = 0; k <= n && k < sizeof up; k++)
		up[k] = (char)(name[k] >= 'a' && name[k] <= 'z' ? name[k] - 32 : name[k]);
	const char *p = head;
	while ((p = strstr(p, up)) != NULL) {
		bool start = p == head || p[-1] == ' ' || p[-1] == ',';
		bool end = p[n] == '\0' || p[n] == ',' || p[n] == '\n';
		if (start && end)
			return true;
		p++;
	}
	return false;
}

/* Parse a range "(0, 1e12]" into its ends and open flags; 0 or -1. */
static int page_range(const char *s, double *lo, double *hi, bool *lo_open,
                      bool *hi_open)
{
	char *e;
	if (s[0] != '(' && s[0] != '[')
		return -1;
	*lo_open = s[0] == '(';
	*lo = strtod(s + 1, &e);
	if (*e != ',')
		return -1;
	*hi = strtod(e + 1, &e);
	if (*e != ']' && *e != ')')
		return -1;
	*hi_open = *e == ')';
	return 0;
}

/*
 * Every registered model has a section, and in it a table row for each
 * key with the key's unit, default and range.
 */
static void test_page_tables(void **state)
{
	(void)state;
	const char *page = page_read();
	for (size_t mi = 0; model_registry[mi] != NULL; mi++) {
		const struct model_type *t = model_registry[mi];
		/* Find the section. */
		const char *sec = NULL, *p = page;
		while ((p = strstr(p, "\n.SH ")) != NULL) {
			p += 5;
			char head[200];
			const char *nl = strchr(p, '\n');
			page_plain(p, (size_t)(nl - p), head, sizeof head);
			if (page_heading_names(head, t->name)) {
				sec = nl;
				break;
			}
		}
		if (sec == NULL)
			fail_msg("biasline-models(7) has no section for %s", t->name);
		const char *end = strstr(sec, "\n.SH ");
		size_t seclen = end != NULL ? (size_t)(end - sec) : strlen(sec);
		for (size_t k = 0; k < t->nparams; k++) {
			const struct model_param *mp = &t->params[k];
			/* The table rows of this section, under this model's (or no)
			 * sub-heading. */
			bool found = false, mine = true;
			const char *q = sec;
			while (q < sec + seclen && !found) {
				const char *nl = strchr(q + 1, '\n');
				if (nl == NULL || nl > sec + seclen)
					break;
				char line[400];
				page_plain(q + 1, (size_t)(nl - q - 1), line, sizeof line);
				q = nl;
				size_t ll = strlen(line);
				if (ll > 1 && line[ll - 1] == ':' && strchr(line, '\t') == NULL) {
					line[ll - 1] = '\0';
					mine = strcmp(line, "both") == 0 ||
					       strcmp(line, t->name) == 0;
					continue;
				}
				if (line[0] == '.') {
					if (strncmp(line, ".TS", 3) == 0)
						mine = true;
					continue;
				}
				char *f[4];
				char *save = NULL;
				f[0] = strtok_r(line, "\t", &save);
				for (int j = 1; j < 4; j++)
					f[j] = f[0] != NULL ? strtok_r(NULL, "\t", &save) : NULL;
				if (!mine || f[3] == NULL)
					continue;
				size_t kl = strlen(mp->key);
				if (strncmp(f[0], mp->key, kl) != 0 ||
				    (f[0][kl] != '\0' && f[0][kl] != ' '))
					continue;
				found = true;
				const char *u = qty_unit_ascii(mp->kind);
				if (u[0] != '\0' && strcmp(f[1], u) != 0)
					fail_msg("%s %s: the page's unit is %s, the model's %s",
					         t->name, mp->key, f[1], u);
				if (isnan(mp->def) ? strcmp(f[2], "-em-") != 0
				                   : strtod(f[2], NULL) != mp->def)
					fail_msg("%s %s: the page's default is %s, the model's %g",
					         t->name, mp->key, f[2], mp->def);
				double lo, hi;
				bool lo_open, hi_open;
				if (page_range(f[3], &lo, &hi, &lo_open, &hi_open) != 0 ||
				    lo != mp->min || hi != mp->max || lo_open != mp->min_open ||
				    hi_open != mp->max_open)
					fail_msg("%s %s: the page's range is %s, the model's "
					         "%c%g, %g%c", t->name, mp->key, f[3],
					         mp->min_open ? '(' : '[', mp->min, mp->max,
					         mp->max_open ? ')' : ']');
			}
			if (!found)
				fail_msg("biasline-models(7): no row for %s's key %s", t->name,
				         mp->key);
		}
	}
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_diode),
		cmocka_unit_test(test_power_law),
		cmocka_unit_test(test_zener),
		cmocka_unit_test(test_led),
		cmocka_unit_test(test_tunnel),
		cmocka_unit_test(test_bjt),
		cmocka_unit_test(test_fet),
		cmocka_unit_test(test_thermistor),
		cmocka_unit_test(test_measured),
		cmocka_unit_test(test_page_tables),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
