/*
 * test_fit.c - the fit against an independent engine and closed forms:
 *
 * - every problem of fit_cases.h solved again by GSL's trust-region
 *   Levenberg-Marquardt (gsl_multifit_nlinear, central-difference
 *   Jacobian) on residuals written here from the published equations,
 *   sharing no code with src/core; parameters agree to 1e-8 relative and
 *   standard errors (GSL's gsl_multifit_nlinear_covar) to 1e-4;
 * - the analytic parameter derivatives against central differences and
 *   MINPACK's chkder;
 * - Steinhart & Hart's three-point closed form and the beta form's
 *   two-point closed form against fits of exact points;
 * - held keys, the power law's reference, and every refusal.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include <cmocka.h>
#include <cminpack.h>
#include <gsl/gsl_blas.h>
#include <gsl/gsl_linalg.h>
#include <gsl/gsl_matrix.h>
#include <gsl/gsl_multifit_nlinear.h>
#include <gsl/gsl_poly.h>
#include <gsl/gsl_sf_lambert.h>
#include <gsl/gsl_vector.h>

#include "fit_cases.h"
#include "core/fit_models.h"

/* ---- the reference equations, written from their sources ---- */

/* kT/q at TC degC; k and q exact in the SI (BIPM, SI Brochure, 9th ed.,
 * 2019). */
static double ref_vt(double tc)
{
	return 1.380649e-23 * (tc + 273.15) / 1.602176634e-19;
}

/* W0(exp(A)) for any A: GSL's Lambert W, or Newton on w + ln w = A where
 * exp(A) would overflow. */
static double ref_lambert_exp(double a)
{
	if (a < 700.0)
		return gsl_sf_lambert_W0(exp(a));
	double w = a - log(a);
	for (int k = 0; k < 8; k++)
		w -= (w + log(w) - a) / (1.0 + 1.0 / w);
	return w;
}

/*
 * A Shockley junction (Shockley, Bell Syst. Tech. J. 28, 1949) behind a
 * series resistance, in closed form (Banwell & Jayakumar, "Exact
 * analytical solution for current flow through diode with series
 * resistance", Electronics Letters 36(4), 2000):
 * I = (n Vt / Rs) W((Is Rs / n Vt) exp((V + Is Rs) / n Vt)) - Is.
 */
static double ref_junction(double is, double nvt, double rs, double v)
{
	if (rs == 0.0)
		return is * expm1(v / nvt);
	double a = log(is * rs / nvt) + (v + is * rs) / nvt;
	return nvt / rs * ref_lambert_exp(a) - is;
}

/* The zener as zener.c's header states it: derive Rs, Vj0 and Ir from
 * (Vz, Izt, rz) by the stated substitutions, then solve V = vj + I Rs by
 * bisection (I rises with vj; vj lies between 0 and V). */
static double ref_zener(const double *p, double v)
{
	double vt = ref_vt(p[ZENER_TEMP]);
	double nvt = p[ZENER_N] * vt, a = p[ZENER_NB] * vt;
	double iz = p[ZENER_IZT], is = p[ZENER_IS];
	double rs = p[ZENER_RZ] - a / iz, vj0 = 0.0, ir = 0.0;
	for (int k = 0; k < 60; k++) {
		vj0 = p[ZENER_VZ] - iz * rs;
		ir = (iz + is * expm1(-vj0 / nvt)) / (1.0 - exp(-vj0 / a));
		double gj = is / nvt * exp(-vj0 / nvt) + ir / a;
		rs = p[ZENER_RZ] - 1.0 / gj;
	}
	vj0 = p[ZENER_VZ] - iz * rs;
	ir = (iz + is * expm1(-vj0 / nvt)) / (1.0 - exp(-vj0 / a));
	if (!(rs >= 0.0) || !(vj0 > 0.0) || !(ir > 0.0))
		return NAN;   /* outside the model's validity (zener.c refuses) */
	double lo = fmin(v, 0.0), hi = fmax(v, 0.0), ij = 0.0;
	for (int k = 0; k < 200; k++) {
		double vj = 0.5 * (lo + hi);
		ij = is * expm1(vj / nvt) - ir * (exp(-(vj + vj0) / a) - exp(-vj0 / a));
		if (vj + ij * rs > v)
			hi = vj;
		else
			lo = vj;
		if (hi - lo <= 1e-17 * fmax(fabs(lo), fabs(hi)))
			break;
	}
	double vj = 0.5 * (lo + hi);
	return is * expm1(vj / nvt) - ir * (exp(-(vj + vj0) / a) - exp(-vj0 / a));
}

/* The model's y at (x, t) from the published equations. */
static double ref_y(const struct model_type *type, const double *p, double x,
                    double t)
{
	if (type == &model_diode) {
		double tc = isfinite(t) ? t : p[DIODE_TEMP];
		double is = p[DIODE_IS];
		if (p[DIODE_TREF] > -273.15) {
			/* Is(T) = Is(T0) (T/T0)^m exp(q Eg / (n k) (1/T0 - 1/T))
			 * (Sze & Ng, Physics of Semiconductor Devices, 2007) */
			double tk = tc + 273.15, t0 = p[DIODE_TREF] + 273.15;
			is *= pow(tk / t0, p[DIODE_XTI]) *
			      exp(p[DIODE_EG] * 1.602176634e-19 / 1.380649e-23 /
			          p[DIODE_N] * (1.0 / t0 - 1.0 / tk));
		}
		return ref_junction(is, p[DIODE_N] * ref_vt(tc), p[DIODE_RS], x);
	}
	if (type == &model_led) {
		/* the saturation current that puts the curve through (Vf, If) */
		double nvt = p[LED_N] * ref_vt(p[LED_TEMP]);
		double is = p[LED_IF] /
		            (exp((p[LED_VF] - p[LED_IF] * p[LED_RS]) / nvt) - 1.0);
		return ref_junction(is, nvt, p[LED_RS], x);
	}
	if (type == &model_zener)
		return ref_zener(p, x);
	if (type == &model_power_law) {
		double i = p[POWER_LAW_IREF] *
		           pow(fabs(x) / p[POWER_LAW_VREF], p[POWER_LAW_ALPHA]);
		return x < 0.0 ? -i : i;
	}
	if (type == &model_npn)
		return ref_junction(p[BJT_IS], p[BJT_N] * ref_vt(p[BJT_TEMP]), 0.0, x);
	if (type == &model_thermistor)
		/* R = R0 exp(B (1/T - 1/T0)) (common practice) */
		return p[THERM_R0] * exp(p[THERM_B] * (1.0 / (x + 273.15) -
		                                       1.0 / (p[THERM_T0] + 273.15)));
	if (type == &model_thermistor_sh) {
		/* 1/T = A + B L + C L^3 (Steinhart & Hart 1968): the real root
		 * of the cubic in L = ln R (GSL's gsl_poly_solve_cubic) */
		double a = p[THERM_SH_A], b = p[THERM_SH_B], c = p[THERM_SH_C];
		double q = a - 1.0 / (x + 273.15);
		double r0, r1, r2;
		int nr = gsl_poly_solve_cubic(0.0, b / c, q / c, &r0, &r1, &r2);
		if (nr != 1)
			return NAN;
		/* one Newton polish, as the root is used to 1e-8 here */
		r0 -= (c * r0 * r0 * r0 + b * r0 + q) / (3.0 * c * r0 * r0 + b);
		return exp(r0);
	}
	return NAN;
}

/* ---- GSL's fit of one problem ---- */

/* What the GSL residual function needs. */
struct gsl_case {
	const struct fit_case *c;
	const double *y;
	model_values p;         /* held values, free ones overwritten */
	size_t nfree;
	int idx[FIT_MAX_FREE];
};

/* Put GSL's coordinates TH into G->p (log of positive parameters). */
static void gsl_unpack(struct gsl_case *g, const gsl_vector *th)
{
	for (size_t j = 0; j < g->nfree; j++) {
		double v = gsl_vector_get(th, j);
		g->p[g->idx[j]] = fit_case_logt(g->c->type, g->idx[j]) ? exp(v) : v;
	}
}

/* The weighted residuals for GSL. */
static int gsl_f(const gsl_vector *th, void *data, gsl_vector *f)
{
	struct gsl_case *g = data;
	gsl_unpack(g, th);
	for (size_t k = 0; k < g->c->n; k++) {
		double y = ref_y(g->c->type, g->p, g->c->x[k], g->c->t[k]);
		double r = g->c->weight == FIT_WEIGHT_RELATIVE ? log(y / g->y[k])
		                                               : y - g->y[k];
		gsl_vector_set(f, k, isfinite(r) ? r : 1e10);
	}
	return GSL_SUCCESS;
}

/* Solve case C on points Y with GSL from START (parameter values of the
 * free set of RES); the answer into G->p, the standard errors into SE. */
static void gsl_solve(const struct fit_case *c, const double *y,
                      const struct fit_result *res, const double *start,
                      struct gsl_case *g, double *se)
{
	g->c = c;
	g->y = y;
	memcpy(g->p, res->p, sizeof g->p);
	g->nfree = res->nfree;
	memcpy(g->idx, res->idx, sizeof g->idx);
	size_t np = g->nfree;
	gsl_multifit_nlinear_fdf fdf = { .f = gsl_f, .df = NULL, .fvv = NULL,
	                                 .n = c->n, .p = np, .params = g };
	gsl_multifit_nlinear_parameters fp = gsl_multifit_nlinear_default_parameters();
	fp.trs = gsl_multifit_nlinear_trs_lm;
	fp.fdtype = GSL_MULTIFIT_NLINEAR_CTRDIFF;
	gsl_multifit_nlinear_workspace *w =
		gsl_multifit_nlinear_alloc(gsl_multifit_nlinear_trust, &fp, c->n, np);
	gsl_vector *th = gsl_vector_alloc(np);
	for (size_t j = 0; j < np; j++)
		gsl_vector_set(th, j, fit_case_logt(c->type, g->idx[j]) ? log(start[j])
		                                                        : start[j]);
	/* GSL's driver stops when a step is below xtol; a stop can come from
	 * a rejected step near the end, so restart it from where it stopped
	 * (a fresh trust region) until a restart no longer moves it */
	for (int round = 0; round < 6; round++) {
		gsl_multifit_nlinear_init(th, &fdf, w);
		int info;
		int st = gsl_multifit_nlinear_driver(1000, 1e-15, 1e-15, 1e-15, NULL,
		                                     NULL, &info, w);
		if (st != GSL_SUCCESS && !(round > 0 && st == GSL_EMAXITER))
			fail_msg("%s: GSL did not converge: %s", c->name,
			         gsl_strerror(st));
		double moved = 0.0;
		for (size_t j = 0; j < np; j++)
			moved = fmax(moved, fabs(gsl_vector_get(w->x, j) -
			                         gsl_vector_get(th, j)));
		gsl_vector_memcpy(th, w->x);
		if (moved < 1e-13)
			break;
	}
	gsl_unpack(g, w->x);
	/* covariance s^2 (J'J)^-1 in GSL's coordinates, carried to values */
	gsl_matrix *cov = gsl_matrix_alloc(np, np);
	gsl_multifit_nlinear_covar(w->J, 0.0, cov);
	double chi = gsl_blas_dnrm2(w->f);
	double s2 = chi * chi / (double)(c->n - np);
	for (size_t j = 0; j < np; j++) {
		double sz = sqrt(s2 * gsl_matrix_get(cov, j, j));
		se[j] = fit_case_logt(c->type, g->idx[j]) ? g->p[g->idx[j]] * sz : sz;
	}
	gsl_matrix_free(cov);
	gsl_vector_free(th);
	gsl_multifit_nlinear_free(w);
}

/* The keys a case fits. */
static size_t case_free_keys(const struct fit_case *c, const char **keys)
{
	for (size_t k = 0; k < c->nfit; k++)
		keys[k] = c->set[k].key;
	return c->nfit;
}

/*
 * Every problem, three seeds each: our fit and GSL's agree to 1e-8
 * relative in every parameter and to 1e-4 in the standard errors; GSL
 * starts from the truth nudged by 0.3 to 0.7 %, not from our answer.
 *
 * The noise is a hundredth of the recovery test's.  Near a minimum the
 * sum of squares changes with the square of the distance, so rounding in
 * the residuals (exp of an argument near 30 carries about 3e-15) hides
 * the minimum within about sqrt(2 sqrt(N) eps / sigma) standard errors:
 * 2e-8 of a diode's series resistance at 1 % noise, for any engine; at
 * 0.01 % it is below 1e-9.
 */
static void test_against_gsl(void **state)
{
	(void)state;
	struct fit_case cs[16];
	size_t ncases = fit_cases(cs);
	double worst = 0.0, worst_se = 0.0;
	for (size_t ci = 0; ci < ncases; ci++) {
		const struct fit_case *c = &cs[ci];
		model_values truth;
		fit_case_truth(c, truth);
		for (uint64_t seed = 11; seed <= 13; seed++) {
			double y[FIT_CASE_MAX_POINTS];
			struct fit_request rq;
			struct fit_result res;
			fit_case_request(c, seed, 0.01, y, NULL, &rq);
			if (fit_run(&rq, &res) != FIT_OK)
				fail_msg("%s: %s", c->name, res.message);
			const char *keys[6];
			size_t nk = case_free_keys(c, keys);
			assert_int_equal(res.nfree, nk);
			for (size_t j = 0; j < nk; j++)
				if (strcmp(c->type->params[res.idx[j]].key, keys[j]) != 0)
					fail_msg("%s: free parameter %zu is %s, expected %s",
					         c->name, j, c->type->params[res.idx[j]].key,
					         keys[j]);
			double start[FIT_MAX_FREE], se[FIT_MAX_FREE];
			for (size_t j = 0; j < res.nfree; j++)
				start[j] = truth[res.idx[j]] *
				           (1.0 + (j % 2 ? -0.003 : 0.007));
			struct gsl_case g;
			gsl_solve(c, y, &res, start, &g, se);
			for (size_t j = 0; j < res.nfree; j++) {
				int i = res.idx[j];
				double d = fabs(res.p[i] - g.p[i]) / fabs(g.p[i]);
				double dse = fabs(res.se[j] - se[j]) / se[j];
				worst = fmax(worst, d);
				worst_se = fmax(worst_se, dse);
				if (!(d <= 1e-8) || !(dse <= 1e-4))
					fail_msg("%s, seed %llu: %s = %.15g (se %.6g), GSL "
					         "%.15g (se %.6g): %.3g apart, se %.3g apart",
					         c->name, (unsigned long long)seed,
					         c->type->params[i].key, res.p[i], res.se[j],
					         g.p[i], se[j], d, dse);
			}
			fit_result_fini(&res);
		}
	}
	print_message("# %zu problems x 3 seeds: parameters within %.2g of GSL, "
	              "standard errors within %.2g\n", ncases, worst, worst_se);
}

/* ---- derivatives ---- */

/* The spec's analytic derivatives against central differences (to 1e-6)
 * and MINPACK's chkder (err > 0.5 means "probably correct", Moré, Garbow
 * & Hillstrom, User Guide for MINPACK-1, ANL-80-74, 1980). */
static void test_derivatives(void **state)
{
	(void)state;
	struct fit_case cs[16];
	size_t ncases = fit_cases(cs);
	for (size_t ci = 0; ci < ncases; ci++) {
		const struct fit_case *c = &cs[ci];
		const struct fit_spec *s = fit_spec_find(c->type);
		assert_non_null(s);
		model_values p;
		fit_case_truth(c, p);
		struct fit_ctx ctx = { .type = c->type, .n = c->n, .x = c->x,
		                       .y = c->x, .t = c->has_t ? c->t : NULL };
		const char *keys[6];
		size_t nk = case_free_keys(c, keys);
		int idx[6];
		for (size_t j = 0; j < nk; j++)
			idx[j] = model_param_index(c->type, keys[j]);
		double dy[MODEL_MAX_PARAMS];
		double fvec[FIT_CASE_MAX_POINTS], fvecp[FIT_CASE_MAX_POINTS];
		double fjac[FIT_CASE_MAX_POINTS * 6], xv[6], xp[6];
		double err[FIT_CASE_MAX_POINTS];
		int m = (int)c->n;
		for (size_t k = 0; k < c->n; k++) {
			double y;
			assert_int_equal(s->eval(s, &ctx, p, k, &y, dy), 0);
			fvec[k] = y;
			for (size_t j = 0; j < nk; j++) {
				int i = idx[j];
				fjac[k + j * (size_t)m] = dy[i];
				double h = 1e-5 * fabs(p[i]);
				model_values q;
				memcpy(q, p, sizeof q);
				double yp, ym;
				q[i] = p[i] + h;
				assert_int_equal(s->eval(s, &ctx, q, k, &yp, NULL), 0);
				q[i] = p[i] - h;
				assert_int_equal(s->eval(s, &ctx, q, k, &ym, NULL), 0);
				double fd = (yp - ym) / (2.0 * h);
				/* the difference carries the model's own rounding (its
				 * inner solves stop at 1e-15): 1e-14 |y| / h.  Where a
				 * parameter moves y by less than that (a zener's forward
				 * Is seen in breakdown), a step of 1e-3 shows it. */
				double ok = fabs(fd - dy[i]) <=
				            1e-6 * fabs(dy[i]) + 1e-14 * fabs(y) / h;
				if (!ok) {
					double h2 = 1e-3 * fabs(p[i]);
					q[i] = p[i] + h2;
					assert_int_equal(s->eval(s, &ctx, q, k, &yp, NULL), 0);
					q[i] = p[i] - h2;
					assert_int_equal(s->eval(s, &ctx, q, k, &ym, NULL), 0);
					double fd2 = (yp - ym) / (2.0 * h2);
					ok = fabs(fd2 - dy[i]) <=
					     1e-5 * fabs(dy[i]) + 1e-14 * fabs(y) / h2;
					fd = fd2;
				}
				if (!ok)
					fail_msg("%s, point %zu: dy/d%s = %.10g, central "
					         "difference %.10g", c->name, k, keys[j], dy[i],
					         fd);
			}
		}
		for (size_t j = 0; j < nk; j++)
			xv[j] = p[idx[j]];
		chkder(m, (int)nk, xv, fvec, fjac, m, xp, fvecp, 1, err);
		model_values q;
		memcpy(q, p, sizeof q);
		for (size_t j = 0; j < nk; j++)
			q[idx[j]] = xp[j];
		for (size_t k = 0; k < c->n; k++)
			assert_int_equal(s->eval(s, &ctx, q, k, &fvecp[k], NULL), 0);
		chkder(m, (int)nk, xv, fvec, fjac, m, xp, fvecp, 2, err);
		for (int k = 0; k < m; k++)
			if (!(err[k] > 0.5))
				fail_msg("%s, point %d: chkder gives %.3f", c->name, k,
				         err[k]);
		/* and the values are the reference equations' */
		for (size_t k = 0; k < c->n; k++) {
			double want = ref_y(c->type, p, c->x[k], c->t[k]);
			if (!(fabs(fvec[k] - want) <= 1e-9 * fabs(want)))
				fail_msg("%s, point %zu: model %.15g, reference %.15g",
				         c->name, k, fvec[k], want);
		}
	}
}

/* ---- closed forms ---- */

/*
 * Three exact points of a Steinhart-Hart curve: the fit (three free
 * coefficients, no degree of freedom) equals the three-point closed form
 * of Steinhart & Hart (1968), which is the solution of the linear system
 * [1 L L^3] [A B C]' = 1/T at the three points, solved here by GSL's LU;
 * fit_steinhart_hart_three_point gives the same.
 */
static void test_steinhart_hart_three_point(void **state)
{
	(void)state;
	static const struct {
		double a, b, c;
		double t[3];
	} sets[] = {
		{ 1.4051e-3, 2.3693e-4, 1.0119e-7, { -17.3, 24.1, 81.7 } },
		{ 8.7313e-4, 2.5371e-4, 1.8117e-7, { 0.37, 43.9, 117.3 } },
		{ 1.1273e-3, 2.3417e-4, 8.731e-8, { -39.7, 5.3, 147.3 } },
	};
	for (size_t s = 0; s < sizeof sets / sizeof sets[0]; s++) {
		model_values p;
		struct device d;
		device_init(&d, &model_thermistor_sh);
		memcpy(p, d.p, sizeof p);
		p[THERM_SH_A] = sets[s].a;
		p[THERM_SH_B] = sets[s].b;
		p[THERM_SH_C] = sets[s].c;
		double r[3], t[3];
		for (int k = 0; k < 3; k++) {
			t[k] = sets[s].t[k];
			r[k] = ref_y(&model_thermistor_sh, p, t[k], NAN);
		}
		/* the closed form as a linear system, by GSL */
		gsl_matrix *m = gsl_matrix_alloc(3, 3);
		gsl_vector *b = gsl_vector_alloc(3), *xs = gsl_vector_alloc(3);
		gsl_permutation *perm = gsl_permutation_alloc(3);
		for (int k = 0; k < 3; k++) {
			double l = log(r[k]);
			gsl_matrix_set(m, k, 0, 1.0);
			gsl_matrix_set(m, k, 1, l);
			gsl_matrix_set(m, k, 2, l * l * l);
			gsl_vector_set(b, k, 1.0 / (t[k] + 273.15));
		}
		int sg;
		gsl_linalg_LU_decomp(m, perm, &sg);
		gsl_linalg_LU_solve(m, perm, b, xs);
		double want[3] = { gsl_vector_get(xs, 0), gsl_vector_get(xs, 1),
		                   gsl_vector_get(xs, 2) };
		gsl_matrix_free(m);
		gsl_vector_free(b);
		gsl_vector_free(xs);
		gsl_permutation_free(perm);
		double cf[3];
		assert_int_equal(fit_steinhart_hart_three_point(t, r, &cf[0], &cf[1],
		                                                &cf[2]), 0);
		struct fit_request rq = { .type = &model_thermistor_sh, .n = 3,
		                          .x = t, .y = r,
		                          .weight = FIT_WEIGHT_RELATIVE };
		memcpy(rq.p, d.p, sizeof rq.p);
		struct fit_result res;
		if (fit_run(&rq, &res) != FIT_OK)
			fail_msg("set %zu: %s", s, res.message);
		assert_int_equal(res.dof, 0);
		assert_true(isnan(res.se[0]));
		for (int j = 0; j < 3; j++) {
			double got = res.p[THERM_SH_A + j];
			if (!(fabs(got - want[j]) <= 1e-9 * fabs(want[j])) ||
			    !(fabs(cf[j] - want[j]) <= 1e-9 * fabs(want[j])))
				fail_msg("set %zu, coefficient %d: fit %.15g, closed form "
				         "%.15g, LU %.15g", s, j, got, cf[j], want[j]);
		}
		fit_result_fini(&res);
	}
}

/*
 * Two points of a beta thermistor: the fit equals the two-point closed
 * form B = ln(R1/R2) / (1/T1 - 1/T2), R0 = R1 exp(-B (1/T1 - 1/T0))
 * (common practice: the B25/85 value of data sheets is this formula).
 */
static void test_beta_two_point(void **state)
{
	(void)state;
	static const double pts[][4] = {
		/* T1, R1, T2, R2 */
		{ 25.0, 10000.0, 85.0, 1073.7 },
		{ -12.7, 47313.0, 61.3, 3719.1 },
		{ 0.0, 32650.0, 100.0, 678.3 },
	};
	for (size_t s = 0; s < sizeof pts / sizeof pts[0]; s++) {
		double t[2] = { pts[s][0], pts[s][2] }, r[2] = { pts[s][1], pts[s][3] };
		struct device d;
		device_init(&d, &model_thermistor);
		struct fit_request rq = { .type = &model_thermistor, .n = 2, .x = t,
		                          .y = r, .weight = FIT_WEIGHT_RELATIVE };
		memcpy(rq.p, d.p, sizeof rq.p);
		struct fit_result res;
		if (fit_run(&rq, &res) != FIT_OK)
			fail_msg("pair %zu: %s", s, res.message);
		double t1 = t[0] + 273.15, t2 = t[1] + 273.15, t0 = 25.0 + 273.15;
		double b = log(r[0] / r[1]) / (1.0 / t1 - 1.0 / t2);
		double r0 = r[0] * exp(-b * (1.0 / t1 - 1.0 / t0));
		if (!(fabs(res.p[THERM_B] - b) <= 1e-11 * b) ||
		    !(fabs(res.p[THERM_R0] - r0) <= 1e-11 * r0))
			fail_msg("pair %zu: B %.15g R0 %.15g, closed form %.15g %.15g",
			         s, res.p[THERM_B], res.p[THERM_R0], b, r0);
		fit_result_fini(&res);
	}
}

/* ---- held keys ---- */

/* A request for MODEL over N points X, Y with the model's defaults. */
static void request(struct fit_request *rq, const struct model_type *type,
                    size_t n, const double *x, const double *y)
{
	struct device d;
	device_init(&d, type);
	memset(rq, 0, sizeof *rq);
	memcpy(rq->p, d.p, sizeof rq->p);
	rq->type = type;
	rq->n = n;
	rq->x = x;
	rq->y = y;
	rq->weight = FIT_WEIGHT_RELATIVE;
}

/* Noise-free points of a diode, V from 0.41 to 0.98 V. */
static size_t diode_points(double *v, double *i, double is, double n,
                           double rs)
{
	size_t m = 0;
	for (double x = 0.4113; x < 0.98; x += 0.0371, m++) {
		v[m] = x;
		i[m] = ref_junction(is, n * ref_vt(25.0), rs, x);
	}
	return m;
}

/* A held key stays as given and the rest fit around it; exact points give
 * the truth back; the power law's reference voltage is chosen, or fitted
 * when its reference current is held. */
static void test_held(void **state)
{
	(void)state;
	double v[40], i[40];
	size_t m = diode_points(v, i, 3.71e-13, 1.613, 0.4713);
	struct fit_request rq;
	struct fit_result res;
	request(&rq, &model_diode, m, v, i);
	assert_int_equal(fit_run(&rq, &res), FIT_OK);
	assert_int_equal(res.nfree, 3);
	assert_true(fabs(res.p[DIODE_IS] / 3.71e-13 - 1.0) < 1e-9);
	assert_true(fabs(res.p[DIODE_N] / 1.613 - 1.0) < 1e-10);
	assert_true(fabs(res.p[DIODE_RS] / 0.4713 - 1.0) < 1e-9);
	assert_true(res.rms < 1e-12);

	/* the residuals of another parameter set, without fitting: the
	 * fitted set gives the fit's own residuals back */
	struct fit_point pts[40];
	double rms = fit_evaluate(&model_diode, res.p, FIT_WEIGHT_RELATIVE, m, v,
	                          i, NULL, pts);
	assert_true(fabs(rms - res.rms) <= 1e-15);
	for (size_t k = 0; k < m; k++)
		assert_true(pts[k].fitted == res.points[k].fitted &&
		            pts[k].resid_rel == res.points[k].resid_rel);
	model_values nudged;
	memcpy(nudged, res.p, sizeof nudged);
	nudged[DIODE_RS] *= 1.1;
	rms = fit_evaluate(&model_diode, nudged, FIT_WEIGHT_RELATIVE, m, v, i,
	                   NULL, pts);
	assert_true(rms > 1e-3 && pts[m - 1].resid_rel < -1e-3);
	fit_result_fini(&res);

	rq.p[DIODE_RS] = 0.5;
	rq.fixed[DIODE_RS] = true;
	assert_int_equal(fit_run(&rq, &res), FIT_OK);
	assert_int_equal(res.nfree, 2);
	assert_true(res.p[DIODE_RS] == 0.5);
	assert_true(res.rms > 1e-4);   /* the wrong Rs shows in the residuals */
	fit_result_fini(&res);

	/* power law: no reference voltage given -> the points' geometric
	 * mean to two digits, held and said so */
	double pv[5] = { 2.1, 3.3, 5.7, 8.9, 12.1 }, pi[5];
	for (int k = 0; k < 5; k++)
		pi[k] = 0.2173 * pow(pv[k] / 12.0, 0.6137);
	request(&rq, &model_power_law, 5, pv, pi);
	assert_int_equal(fit_run(&rq, &res), FIT_OK);
	double gm = pow(2.1 * 3.3 * 5.7 * 8.9 * 12.1, 0.2);   /* 5.3179... */
	assert_true(fabs(gm - 5.3) < 0.05);
	assert_true(fabs(res.p[POWER_LAW_VREF] - 5.3) < 1e-12);
	assert_true(res.held_by_fit[POWER_LAW_VREF]);
	assert_true(fabs(res.p[POWER_LAW_ALPHA] / 0.6137 - 1.0) < 1e-10);
	double want = 0.2173 * pow(5.3 / 12.0, 0.6137);
	assert_true(fabs(res.p[POWER_LAW_IREF] / want - 1.0) < 1e-10);
	fit_result_fini(&res);
	/* a varistor stated at 1 mA: hold the current, fit the voltage */
	rq.p[POWER_LAW_IREF] = 1e-3;
	rq.fixed[POWER_LAW_IREF] = true;
	assert_int_equal(fit_run(&rq, &res), FIT_OK);
	assert_int_equal(res.nfree, 2);
	assert_int_equal(res.idx[0], POWER_LAW_VREF);
	want = 12.0 * pow(1e-3 / 0.2173, 1.0 / 0.6137);
	assert_true(fabs(res.p[POWER_LAW_VREF] / want - 1.0) < 1e-10);
	fit_result_fini(&res);
}

/* ---- refusals ---- */

/* Fit and expect status ST with NEEDLE in the message. */
static void expect_refusal(const struct fit_request *rq, enum fit_status st,
                           const char *needle, size_t bad, size_t bad2)
{
	struct fit_result res;
	enum fit_status got = fit_run(rq, &res);
	if (got != st || strstr(res.message, needle) == NULL ||
	    res.bad_point != bad || res.bad_point2 != bad2)
		fail_msg("%s: status %d (expected %d), rows %zu %zu (expected %zu "
		         "%zu), message \"%s\" (expected \"%s\")", rq->type->name, got,
		         st, res.bad_point, res.bad_point2, bad, bad2, res.message,
		         needle);
	fit_result_fini(&res);
}

/* Too few points, duplicates, a non-monotone curve, a rank-deficient
 * set, signs relative weighting cannot take, temperatures a model has no
 * law for, a zener without breakdown points, a model with no parameters. */
static void test_refusals(void **state)
{
	(void)state;
	const size_t no = SIZE_MAX;
	struct fit_request rq;
	double v[40], i[40];
	diode_points(v, i, 3.71e-13, 1.613, 0.4713);

	request(&rq, &model_diode, 2, v, i);
	expect_refusal(&rq, FIT_TOO_FEW, "2 points for 3 free parameters "
	               "(saturation_current, ideality, series_resistance): hold 1 "
	               "of them, e.g. series_resistance=0", no, no);

	double dv[4] = { 0.5113, 0.5817, 0.5817, 0.6413 };
	double di[4] = { 1e-6, 1.2e-5, 1.3e-5, 9e-5 };
	request(&rq, &model_diode, 4, dv, di);
	expect_refusal(&rq, FIT_BAD_POINTS, "rows 2 and 3 share V = 581.7 mV", 1, 2);

	double nv[5] = { 0.5113, 0.5817, 0.6413, 0.6971, 0.7417 };
	double ni[5] = { 1e-6, 1.2e-5, 9e-5, 8.7e-5, 3.1e-4 };
	request(&rq, &model_diode, 5, nv, ni);
	expect_refusal(&rq, FIT_BAD_POINTS, "rows 3 and 4: I goes from 90 uA to "
	               "87 uA as V rises", 2, 3);

	/* points far below where 0.47 ohm matters: Rs has no effect */
	double lv[8], li[8];
	for (int k = 0; k < 8; k++) {
		lv[k] = 0.2113 + 0.0237 * k;
		li[k] = ref_junction(3.71e-13, 1.613 * ref_vt(25.0), 0.0, lv[k]);
	}
	request(&rq, &model_diode, 8, lv, li);
	expect_refusal(&rq, FIT_UNDETERMINED, "the points do not determine "
	               "series_resistance", no, no);
	struct fit_result res;
	fit_run(&rq, &res);
	assert_non_null(strstr(res.message, "series_resistance=0"));
	fit_result_fini(&res);

	double sv[3] = { -0.1, 0.5113, 0.6013 }, si[3] = { 2e-9, 1e-6, 3e-5 };
	request(&rq, &model_diode, 3, sv, si);
	expect_refusal(&rq, FIT_BAD_POINTS, "row 1: V = -100 mV and I = 2 nA: "
	               "relative weighting takes ln I", 0, no);

	double tv[4] = { 2.61, 2.83, 2.61, 2.83 }, ti[4] = { 1e-3, 1e-2, 2e-3, 2e-2 };
	double tt[4] = { 25.0, 25.0, 75.0, 75.0 };
	request(&rq, &model_led, 4, tv, ti);
	rq.t = tt;
	expect_refusal(&rq, FIT_BAD_POINTS, "span 2 temperatures (25 degC to 75 "
	               "degC) but the led model has no temperature law", no, no);

	request(&rq, &model_zener, 5, nv, i);
	expect_refusal(&rq, FIT_TOO_FEW, "breakdown_voltage needs points in "
	               "breakdown", no, no);

	request(&rq, &model_measured, 5, nv, i);
	expect_refusal(&rq, FIT_UNSUPPORTED, "the measured model cannot be fitted",
	               no, no);

	double rt[3] = { 0.0, 25.0, 50.0 }, rr[3] = { 30000.0, 10000.0, 12000.0 };
	request(&rq, &model_thermistor, 3, rt, rr);
	expect_refusal(&rq, FIT_BAD_POINTS, "rows 2 and 3: R goes from 10 kohm to "
	               "12 kohm as T rises from 25 degC to 50 degC, but the "
	               "thermistor model's resistance falls", 1, 2);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_derivatives),
		cmocka_unit_test(test_against_gsl),
		cmocka_unit_test(test_steinhart_hart_three_point),
		cmocka_unit_test(test_beta_two_point),
		cmocka_unit_test(test_held),
		cmocka_unit_test(test_refusals),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
