/*
 * test_thermal.c - the self-heated junction (core/thermal.h, core/heat.h,
 * core/thermal_stepper.h) against an independent solve of the coupled
 * equations, written here from the documented models (Shockley's junction
 * with the Is(T) law of diode.c; the base-bias stage of bjt.c, the
 * transport Ebers-Moll transistor of Ebers & Moll, Proc. IRE 42, 1954) and
 * solved with GSL's Brent root finder (Brent, Algorithms for Minimization without
 * Derivatives, 1973) on a fine grid: every balance, Tj, V and I to 1e-9.
 * Then the loop gain against differences of P(Tj), runaway exactly where G
 * crosses 1 (the criterion dP/dT < 1/theta: Millman & Halkias, Integrated
 * Electronics, 1972; from memory), the limits (theta -> 0, a current-source
 * drive), a silicon junction's drift, the heat scan on curves with known
 * balances, the stepper, and the sensitivities.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include <cmocka.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_roots.h>

#include "core_check.h"

#include "core/heat.h"
#include "core/models/models.h"
#include "core/sensitivity.h"
#include "core/solve.h"
#include "core/thermal.h"
#include "core/thermal_stepper.h"

/* ---- the reference: the documented equations, solved with GSL ---- */

#define REF_K 1.380649e-23        /* J/K, exact (SI 2019) */
#define REF_Q 1.602176634e-19     /* C, exact (SI 2019) */
#define REF_ZERO 273.15

/* kT/q at TC degC. */
static double ref_vt(double tc)
{
	return REF_K * (tc + REF_ZERO) / REF_Q;
}

/*
 * Is at TC from IS0 at T0C: Is0 (T/T0)^m exp(q Eg/(n k) (1/T0 - 1/T))
 * (Sze & Ng, Physics of Semiconductor Devices, 3rd ed., 2007, ch. 1-2).
 */
static double ref_is(double is0, double tc, double t0c, double eg, double m,
                     double n)
{
	double t = tc + REF_ZERO, t0 = t0c + REF_ZERO;
	return is0 * pow(t / t0, m) * exp(eg * REF_Q / (n * REF_K) * (1.0 / t0 -
	                                                              1.0 / t));
}

/* One circuit: a junction (diode, or a transistor's base loop) and its heat. */
struct ref_case {
	bool bjt;
	double is0, n, eg, m, t0;  /* the junction, Is at t0 */
	double rsd;                /* diode: bulk resistance */
	double beta, re, rc, vcc, betar; /* transistor */
	double vs, rs;             /* Thevenin source; rs = INFINITY: is = vs */
	double theta, ta, tjmax;
};

/* The electrical point of C at TC. */
struct ref_point {
	double v, i, p;
};

/* What the GSL function needs: the junction equation at one temperature. */
struct ref_fn {
	double is, nvt, r, voc;
};

/* vj + r Is expm1(vj / nVt) - voc. */
static double ref_junction_f(double vj, void *params)
{
	const struct ref_fn *f = params;
	return vj + f->r * f->is * expm1(vj / f->nvt) - f->voc;
}

/* GSL Brent on F in [LO, HI] to the last bits; the root. */
static double ref_brent(gsl_function *f, double lo, double hi)
{
	gsl_root_fsolver *s = gsl_root_fsolver_alloc(gsl_root_fsolver_brent);
	assert_non_null(s);
	assert_int_equal(gsl_root_fsolver_set(s, f, lo, hi), GSL_SUCCESS);
	double x = 0.5 * (lo + hi);
	for (int it = 0; it < 400; it++) {
		gsl_root_fsolver_iterate(s);
		x = gsl_root_fsolver_root(s);
		double a = gsl_root_fsolver_x_lower(s), b = gsl_root_fsolver_x_upper(s);
		if (gsl_root_test_interval(a, b, 0.0, 2e-16) == GSL_SUCCESS)
			break;
	}
	gsl_root_fsolver_free(s);
	return x;
}

/* The transistor of C at junction temperature TC and base-emitter VBE. */
struct ref_em {
	const struct ref_case *c;
	double is, s, t;     /* Is(T), n Vt, VBE */
	double ic, ib, ie;   /* the currents once VBC is solved */
};

/* The Ebers-Moll currents at VBE = E->t and VBC = U into E. */
static void ref_em_currents(struct ref_em *e, double u)
{
	const struct ref_case *c = e->c;
	double a = expm1(e->t / e->s), cc = expm1(u / e->s);
	e->ic = e->is * (a - cc) - e->is / c->betar * cc;
	e->ib = e->is / c->beta * a + e->is / c->betar * cc;
	e->ie = e->ic + e->ib;
}

/*
 * VBC = VB - VC with VB = VBE + RE IE and VC = VCC - RC IC: its residual,
 * increasing in VBC (both IE and IC fall as VBC rises).
 */
static double ref_em_vbc_f(double u, void *params)
{
	struct ref_em *e = params;
	ref_em_currents(e, u);
	return u - (e->t + e->c->re * e->ie) + (e->c->vcc - e->c->rc * e->ic);
}

/* Solve VBC for E->t (GSL Brent, the bracket grown upward). */
static double ref_em_vbc(struct ref_em *e)
{
	gsl_function f = { ref_em_vbc_f, e };
	double lo = e->t - e->c->vcc - 1.0, hi = e->t;
	for (int k = 0; k < 200 && !(ref_em_vbc_f(hi, e) > 0.0); k++)
		hi += 0.25;
	double u = ref_brent(&f, lo, hi);
	ref_em_currents(e, u);
	return u;
}

/* What the base loop solves for: VB + RS IB - VS, or IB - I (ideal source). */
static double ref_em_loop_f(double t, void *params)
{
	struct ref_em *e = params;
	e->t = t;
	ref_em_vbc(e);
	if (isinf(e->c->rs))
		return e->ib - e->c->vs;
	return t + e->c->re * e->ie + e->c->rs * e->ib - e->c->vs;
}

/* The electrical point of C with the junction at TC. */
static struct ref_point ref_electrical(const struct ref_case *c, double tc)
{
	struct ref_point pt;
	double nvt = c->n * ref_vt(tc);
	double is = ref_is(c->is0, tc, c->t0, c->eg, c->m, c->n);
	if (c->bjt) {
		struct ref_em e = { .c = c, .is = is, .s = nvt };
		gsl_function f = { ref_em_loop_f, &e };
		double lo = -1.0, hi = fmax(0.1, isinf(c->rs) ? 1.0 : c->vs);
		for (int k = 0; k < 200 && !(ref_em_loop_f(hi, &e) > 0.0); k++)
			hi += 0.05;
		double t = ref_brent(&f, lo, hi);
		ref_em_loop_f(t, &e);
		pt.i = e.ib;
		pt.v = t + c->re * e.ie;
		double vce = c->vcc - e.ic * c->rc - e.ie * c->re;
		pt.p = e.ic * vce + e.ib * t;
		return pt;
	}
	double rser = c->rsd;
	if (isinf(c->rs)) {
		/* an ideal current source: the junction voltage at that current */
		pt.i = c->vs;
		double vj = nvt * log1p(pt.i / is);
		pt.v = vj + rser * pt.i;
	} else {
		struct ref_fn fn = { is, nvt, c->rs + rser, c->vs };
		gsl_function f = { ref_junction_f, &fn };
		/* The current cannot exceed voc / r: bound vj by that. */
		double lo = fmin(0.0, c->vs), hi = fmax(0.0, c->vs);
		if (c->vs > 0.0)
			hi = fmin(hi, nvt * log1p(c->vs / (fn.r * is)));
		double vj = ref_brent(&f, lo, hi);
		pt.i = is * expm1(vj / nvt);
		pt.v = vj + rser * pt.i;
	}
	pt.p = pt.v * pt.i;
	return pt;
}

/* H(T) = T - Ta - theta P(T) for GSL. */
static double ref_heat_f(double tc, void *params)
{
	const struct ref_case *c = params;
	return tc - c->ta - c->theta * ref_electrical(c, tc).p;
}

/* Grid of the reference scan (finer than the solver's 96 intervals): the
 * transistor's nested solves are dearer, so its grid is coarser. */
#define REF_GRID 3000
#define REF_GRID_BJT 800

/* Every balance of C in [Ta, Tjmax] into T (rising); how many. */
static size_t ref_balances(const struct ref_case *c, double *t, size_t max)
{
	gsl_function f = { ref_heat_f, (void *)c };
	size_t n = 0;
	double a = c->ta, fa = ref_heat_f(a, (void *)c);
	if (fa == 0.0)
		t[n++] = a;
	int grid = c->bjt ? REF_GRID_BJT : REF_GRID;
	for (int k = 1; k <= grid && n < max; k++) {
		double b = c->ta + (c->tjmax - c->ta) * k / grid;
		double fb = ref_heat_f(b, (void *)c);
		if (fb == 0.0)
			t[n++] = b;
		else if (fa != 0.0 && (fa < 0.0) != (fb < 0.0))
			t[n++] = ref_brent(&f, a, b);
		a = b;
		fa = fb;
	}
	return n;
}

/* ---- the same circuit for the core ---- */

/* Build the core problem of C. */
static void case_problem(const struct ref_case *c, struct problem *pb)
{
	memset(pb, 0, sizeof *pb);
	struct source_spec sp;
	char err[256];
	if (isinf(c->rs))
		source_spec_norton(&sp, c->vs, INFINITY);
	else
		source_spec_thevenin(&sp, c->vs, c->rs);
	assert_int_equal(source_from_spec(&sp, &pb->src, err, sizeof err), 0);
	if (c->bjt) {
		device_init(&pb->dev, &model_npn);
		double *p = pb->dev.p;
		p[BJT_IS] = c->is0;
		p[BJT_N] = c->n;
		p[BJT_BETA] = c->beta;
		p[BJT_RE] = c->re;
		p[BJT_RC] = c->rc;
		p[BJT_VCC] = c->vcc;
		p[BJT_BETAR] = c->betar;
		p[BJT_TREF] = c->t0;
		p[BJT_EG] = c->eg;
		p[BJT_XTI] = c->m;
		p[BJT_THETA] = c->theta;
		p[BJT_TAMB] = c->ta;
		p[BJT_TJMAX] = c->tjmax;
	} else {
		device_init(&pb->dev, &model_diode);
		double *p = pb->dev.p;
		p[DIODE_IS] = c->is0;
		p[DIODE_N] = c->n;
		p[DIODE_RS] = c->rsd;
		p[DIODE_TREF] = c->t0;
		p[DIODE_EG] = c->eg;
		p[DIODE_XTI] = c->m;
		p[DIODE_THETA] = c->theta;
		p[DIODE_TAMB] = c->ta;
		p[DIODE_TJMAX] = c->tjmax;
	}
	thermal_normalise(&pb->dev);
	if (device_validate(&pb->dev, err, sizeof err) != 0)
		fail_msg("invalid case: %s", err);
}

/* A random self-heated diode behind a resistor. */
static void draw_diode(struct check_rng *r, struct ref_case *c)
{
	memset(c, 0, sizeof *c);
	c->is0 = check_rng_log_uniform(r, 1e-15, 1e-9);
	c->n = check_rng_uniform(r, 1.0, 2.1);
	c->eg = check_rng_uniform(r, 1.05, 1.45);
	c->m = check_rng_uniform(r, 1.5, 3.5);
	c->t0 = check_rng_uniform(r, 15.0, 35.0);
	c->rsd = (check_rng_next(r) & 1u) ? check_rng_uniform(r, 0.0, 3.1) : 0.0;
	c->vs = check_rng_uniform(r, 0.8, 31.0);
	c->rs = check_rng_log_uniform(r, 4.7, 2.2e4);
	c->theta = check_rng_log_uniform(r, 1.3, 870.0);
	c->ta = check_rng_uniform(r, -25.0, 85.0);
	c->tjmax = check_rng_uniform(r, 125.0, 200.0);
	/* One in eight driven by an ideal current source. */
	if (check_rng_next(r) % 8 == 0) {
		c->vs = check_rng_log_uniform(r, 1e-4, 0.3);
		c->rs = INFINITY;
	}
}

/*
 * A random npn stage on a fixed base voltage: the base source is set for
 * a collector current IC0 at 25 degC; half have an emitter resistor.
 */
static void draw_bjt(struct check_rng *r, struct ref_case *c)
{
	memset(c, 0, sizeof *c);
	c->bjt = true;
	c->is0 = check_rng_log_uniform(r, 1e-15, 3e-12);
	c->n = check_rng_uniform(r, 1.0, 1.15);
	c->eg = 1.12;
	c->m = 3.0;
	c->t0 = 25.0;
	c->beta = check_rng_log_uniform(r, 30.0, 350.0);
	c->re = (check_rng_next(r) & 1u) ? check_rng_log_uniform(r, 0.05, 4.7) : 0.0;
	c->rc = check_rng_uniform(r, 0.0, 12.0);
	c->vcc = check_rng_uniform(r, 4.5, 36.0);
	c->betar = check_rng_log_uniform(r, 0.5, 5.0);
	c->rs = check_rng_log_uniform(r, 2.2, 470.0);
	double ic0 = check_rng_log_uniform(r, 3e-3, 0.6);
	double vbe = c->n * ref_vt(25.0) * log(ic0 / c->is0);
	c->vs = vbe + ic0 * (c->re * (c->beta + 1.0) + c->rs) / c->beta;
	c->theta = check_rng_log_uniform(r, 2.0, 90.0);
	c->ta = check_rng_uniform(r, 0.0, 70.0);
	c->tjmax = 150.0;
}

/* Compare the core's balances of C with the reference's; 1 when any. */
static int compare_case(const struct ref_case *c, size_t k, size_t *points)
{
	struct problem pb;
	case_problem(c, &pb);
	struct solve_options o;
	solve_options_init(&o);
	o.tol = 1e-14;
	struct thermal_result tr;
	thermal_solve(&pb, &o, &tr);
	double ref[THERMAL_MAX_POINTS + 4];
	size_t nref = ref_balances(c, ref, THERMAL_MAX_POINTS + 4);
	if (tr.n != nref) {
		fprintf(stderr, "# case %zu (%s): core %zu balances (%s), reference "
		        "%zu:", k, c->bjt ? "npn" : "diode", tr.n, tr.message, nref);
		for (size_t j = 0; j < nref; j++)
			fprintf(stderr, " %.9g", ref[j]);
		fprintf(stderr, "\n");
		fail_msg("balance count differs");
	}
	assert_int_equal(tr.status, nref > 0 ? THERMAL_OK : THERMAL_RUNAWAY);
	for (size_t j = 0; j < nref; j++) {
		const struct thermal_point *t = &tr.pts[j];
		struct ref_point rp = ref_electrical(c, ref[j]);
		double ts = ref[j] + REF_ZERO;
		if (!(fabs(t->tj - ref[j]) <= 1e-9 * ts) ||
		    !(fabs(t->pt.v - rp.v) <= 1e-9 * fabs(rp.v) + 1e-15) ||
		    !(fabs(t->pt.i - rp.i) <= 1e-9 * fabs(rp.i) + 1e-18))
			fail_msg("case %zu balance %zu: Tj %.12g V %.12g I %.12g, "
			         "reference %.12g %.12g %.12g", k, j, t->tj, t->pt.v,
			         t->pt.i, ref[j], rp.v, rp.i);
		/* G against a central difference of the reference P(Tj). */
		double h = 1e-3;
		double dp = (ref_electrical(c, ref[j] + h).p -
		             ref_electrical(c, ref[j] - h).p) / (2.0 * h);
		double g = c->theta * dp;
		if (!(fabs(t->gain - g) <= 1e-5 * fabs(g) + 1e-7))
			fail_msg("case %zu balance %zu: G %.10g, difference %.10g", k,
			         j, t->gain, g);
		assert_true(t->stable == (t->gain < 1.0));
		/* the point alone gives its junction temperature back */
		double tb = thermal_point_temperature(&pb, t->pt.v, t->pt.i);
		if (!(fabs(tb - t->tj) <= 1e-9 * ts))
			fail_msg("case %zu balance %zu: Tj %.12g from the point, %.12g "
			         "solved", k, j, tb, t->tj);
	}
	*points += nref;
	return nref > 0;
}

/* >= 100 random diodes against the reference. */
static void test_diodes_against_reference(void **state)
{
	(void)state;
	struct check_rng r = { 0x7E47A1D0DE5ull };
	size_t points = 0, balanced = 0, runaway = 0;
	for (size_t k = 0; k < 150; k++) {
		struct ref_case c;
		draw_diode(&r, &c);
		if (compare_case(&c, k, &points))
			balanced++;
		else
			runaway++;
	}
	printf("# 150 diodes: %zu with balances (%zu in all), %zu past Tjmax\n",
	       balanced, points, runaway);
	assert_true(balanced >= 100);
}

/* Random transistor stages, some with a cool and a hot balance. */
static void test_transistors_against_reference(void **state)
{
	(void)state;
	struct check_rng r = { 0xB1A5ED5747Eull };
	size_t points = 0, multi = 0, runaway = 0;
	for (size_t k = 0; k < 80; k++) {
		struct ref_case c;
		draw_bjt(&r, &c);
		size_t before = points;
		if (!compare_case(&c, k, &points))
			runaway++;
		if (points - before >= 2)
			multi++;
	}
	printf("# 80 npn stages: %zu balances, %zu stages with several, %zu "
	       "runaways\n", points, multi, runaway);
	/* the draw must exercise every kind of answer */
	assert_true(multi >= 3);
	assert_true(runaway >= 3);
}

/* A self-heated red LED (drift -2.1 mV/K) on a rail through RS. */
static void led_problem(struct problem *pb, double vs, double rs, double theta,
                        double ta)
{
	memset(pb, 0, sizeof *pb);
	struct source_spec sp;
	char err[256];
	if (isinf(rs))
		source_spec_norton(&sp, vs, INFINITY);
	else
		source_spec_thevenin(&sp, vs, rs);
	assert_int_equal(source_from_spec(&sp, &pb->src, err, sizeof err), 0);
	device_init(&pb->dev, &model_led);
	pb->dev.p[LED_TC] = -2.1e-3;
	pb->dev.p[LED_TREF] = 25.0;
	pb->dev.p[LED_THETA] = theta;
	pb->dev.p[LED_TAMB] = ta;
	thermal_normalise(&pb->dev);
	if (device_validate(&pb->dev, err, sizeof err) != 0)
		fail_msg("%s", err);
}

/* A zener in breakdown with a +5.3 mV/K drift, self-heated. */
static void zener_problem(struct problem *pb, double theta)
{
	memset(pb, 0, sizeof *pb);
	struct source_spec sp;
	char err[256];
	source_spec_thevenin(&sp, -24.3, 330.0);
	assert_int_equal(source_from_spec(&sp, &pb->src, err, sizeof err), 0);
	device_init(&pb->dev, &model_zener);
	pb->dev.p[ZENER_VZ] = 9.1;
	pb->dev.p[ZENER_IZT] = 20e-3;
	pb->dev.p[ZENER_RZ] = 7.3;
	pb->dev.p[ZENER_TC] = 5.3e-3;
	pb->dev.p[ZENER_THETA] = theta;
	pb->dev.p[ZENER_TAMB] = 47.5;
	thermal_normalise(&pb->dev);
	if (device_validate(&pb->dev, err, sizeof err) != 0)
		fail_msg("%s", err);
}

/*
 * dP/dTj (and so G) against a central difference of P(Tj), each P a full
 * electrical solve at Tj: the models the reference does not cover (an LED
 * and a zener with data-sheet drifts, a pnp) and a diode.
 */
static void test_gain_against_differences(void **state)
{
	(void)state;
	struct problem pbs[4];
	led_problem(&pbs[0], 12.7, 390.0, 410.0, 38.5);
	zener_problem(&pbs[1], 83.0);
	struct ref_case c = { .bjt = false, .is0 = 3.7e-12, .n = 1.41, .eg = 1.12,
	                      .m = 3.0, .t0 = 25.0, .rsd = 0.37, .vs = 5.3,
	                      .rs = 18.7, .theta = 71.0, .ta = 33.0, .tjmax = 150 };
	case_problem(&c, &pbs[2]);
	struct ref_case b = { .bjt = true, .is0 = 2.3e-14, .n = 1.0, .eg = 1.12,
	                      .m = 3.0, .t0 = 25.0, .beta = 117.0, .re = 0.47,
	                      .rc = 3.3, .vcc = 14.1, .betar = 1.0, .vs = 0.83,
	                      .rs = 27.0, .theta = 21.0, .ta = 41.0, .tjmax = 150 };
	case_problem(&b, &pbs[3]);
	pbs[3].dev.type = &model_pnp; /* the same stage in magnitudes */
	struct solve_options o;
	solve_options_init(&o);
	o.tol = 1e-15;
	for (size_t k = 0; k < 4; k++) {
		for (double tj = 12.3; tj < 140.0; tj += 21.7) {
			struct thermal_eval ev, up, dn;
			assert_int_equal(thermal_eval_at(&pbs[k], &o, tj, true, &ev), 0);
			double h = 2e-3;
			assert_int_equal(thermal_eval_at(&pbs[k], &o, tj + h, false, &up), 0);
			assert_int_equal(thermal_eval_at(&pbs[k], &o, tj - h, false, &dn), 0);
			double fd = (up.p - dn.p) / (2.0 * h);
			if (!(fabs(ev.dp_dt - fd) <= 1e-6 * fabs(fd) + 1e-9))
				fail_msg("problem %zu at %.4g degC: dP/dTj %.10g, central "
				         "difference %.10g", k, tj, ev.dp_dt, fd);
			double fdv = (up.pt.v - dn.pt.v) / (2.0 * h);
			double fdi = (up.pt.i - dn.pt.i) / (2.0 * h);
			assert_true(fabs(ev.dv_dt - fdv) <= 1e-6 * fabs(fdv) + 1e-10);
			assert_true(fabs(ev.di_dt - fdi) <= 1e-6 * fabs(fdi) + 1e-12);
			assert_true(ev.gain == pbs[k].dev.p[model_param_index(
			                    pbs[k].dev.type, "thermal_resistance")] *
			                    ev.dp_dt);
		}
	}
}

/* theta -> 0: the isothermal point at the ambient, bit for bit. */
static void test_zero_theta_is_isothermal(void **state)
{
	(void)state;
	struct check_rng r = { 0x0DD5EEDull };
	struct solve_options o;
	solve_options_init(&o);
	for (int k = 0; k < 40; k++) {
		struct ref_case c;
		draw_diode(&r, &c);
		struct problem pb, iso;
		case_problem(&c, &pb);
		/* the isothermal problem: the junction at the ambient */
		iso = pb;
		iso.dev.p[DIODE_THETA] = 0.0;
		iso.dev.p[DIODE_TEMP] = c.ta;
		struct solve_result ri;
		assert_int_equal(solve_problem(&iso, &o, &ri), SOLVE_OK);
		const double thetas[] = { 0.0, 1e-300, 1e-40 };
		for (size_t j = 0; j < 3; j++) {
			pb.dev.p[DIODE_THETA] = thetas[j];
			struct thermal_result tr;
			assert_int_equal(thermal_solve(&pb, &o, &tr), THERMAL_OK);
			assert_int_equal(tr.n, 1);
			assert_memory_equal(&tr.pts[0].tj, &c.ta, sizeof(double));
			assert_memory_equal(&tr.pts[0].pt.v, &ri.pts[0].v, sizeof(double));
			assert_memory_equal(&tr.pts[0].pt.i, &ri.pts[0].i, sizeof(double));
		}
	}
}

/*
 * A current-source drive: the current cannot move, so G = theta I dV/dT|I
 * whatever the supply behind the source, and it is negative for a
 * junction (heating lowers V, so the part makes less heat): the usual cure
 * for an LED's self-heating (common practice).  A rail through a
 * resistor always has a larger G: G - Gcc = -theta vT (V + I r_d) /
 * (r_d + RS) > 0 (from the formulas of thermal.h), so a stiff rail (a
 * small RS) has G > 0.  Thevenin sources with VS/RS held at the same
 * current tend to the current-source G as VS grows.
 */
static void test_current_drive(void **state)
{
	(void)state;
	struct solve_options o;
	solve_options_init(&o);
	const double amps = 0.0213;
	struct problem pb;
	led_problem(&pb, amps, INFINITY, 420.0, 31.0);
	struct thermal_result tr;
	assert_int_equal(thermal_solve(&pb, &o, &tr), THERMAL_OK);
	assert_int_equal(tr.n, 1);
	const struct thermal_point *cc = &tr.pts[0];
	assert_true(cc->pt.i == amps);
	struct thermal_eval ev;
	assert_int_equal(thermal_point_info(&pb, cc->pt.v, cc->pt.i, &ev), 0);
	assert_true(fabs(cc->gain - 420.0 * amps * ev.vt) <=
	            1e-12 * fabs(cc->gain));
	assert_true(cc->gain < 0.0);
	/* the same LED on a 5 V rail through the resistor that gives the
	 * same current cold: heating raises the current, G > 0 */
	double prev = INFINITY;
	const double rails[] = { 2.37, 5.0, 50.0, 500.0, 5000.0, 50000.0 };
	for (size_t k = 0; k < 6; k++) {
		struct problem q;
		led_problem(&q, rails[k], (rails[k] - cc->pt.v) / amps, 420.0, 31.0);
		struct thermal_result tq;
		assert_int_equal(thermal_solve(&q, &o, &tq), THERMAL_OK);
		double g = tq.pts[0].gain;
		if (k == 0)
			assert_true(g > 0.0);
		assert_true(g > cc->gain);
		assert_true(g - cc->gain < prev); /* nearer the current drive */
		prev = g - cc->gain;
	}
	assert_true(prev < 1e-4 * fabs(cc->gain));
}

/*
 * A silicon junction's drift at a fixed current, -1.5 to -2.5 mV/K (common
 * practice), read through the thermal path: fed from a current source the
 * self-heated diode's voltage moves with the ambient by dV/dTj times
 * dTj/dTa, and dTj/dTa = 1 / (1 - G).
 */
static void test_silicon_drift(void **state)
{
	(void)state;
	struct ref_case c = { .is0 = 4.1e-15, .n = 1.0, .eg = 1.12, .m = 3.0,
	                      .t0 = 25.0, .vs = 1.07e-3, .rs = INFINITY,
	                      .theta = 180.0, .ta = 24.3, .tjmax = 150.0 };
	struct problem pb;
	case_problem(&c, &pb);
	struct solve_options o;
	solve_options_init(&o);
	o.tol = 1e-15;
	struct thermal_result a, b;
	assert_int_equal(thermal_solve(&pb, &o, &a), THERMAL_OK);
	pb.dev.p[DIODE_TAMB] += 1.0;
	assert_int_equal(thermal_solve(&pb, &o, &b), THERMAL_OK);
	double dv = (b.pts[0].pt.v - a.pts[0].pt.v) / (b.pts[0].tj - a.pts[0].tj);
	printf("# silicon diode at 1.07 mA: %.4g mV/K through the thermal path\n",
	       1e3 * dv);
	assert_true(dv > -2.5e-3 && dv < -1.5e-3);
	struct thermal_eval ev;
	assert_int_equal(thermal_point_info(&pb, b.pts[0].pt.v, b.pts[0].pt.i,
	                                    &ev), 0);
	assert_true(fabs(ev.vt - dv) < 1e-3 * fabs(dv));
	assert_true(fabs((b.pts[0].tj - a.pts[0].tj) - 1.0 / (1.0 - ev.gain)) <
	            1e-3);
}

/*
 * A transistor stage on a fixed base voltage (set for IC0 at 25 degC)
 * whose folds lie below Tjmax.
 */
static void stage_case(struct ref_case *c, double re, double ic0,
                       double theta)
{
	*c = (struct ref_case){ .bjt = true, .is0 = 1.7e-13, .n = 1.0,
	                        .eg = 1.12, .m = 3.0, .t0 = 25.0, .beta = 93.0,
	                        .re = re, .rc = 0.0, .vcc = 14.7, .betar = 1.0,
	                        .rs = 27.0, .theta = theta, .ta = 38.0,
	                        .tjmax = 150.0 };
	c->vs = c->n * ref_vt(25.0) * log(ic0 / c->is0) +
	        ic0 * (c->re * (c->beta + 1.0) + c->rs) / c->beta;
}

/*
 * Runaway exactly where G crosses 1 (the criterion G = theta dP/dTj < 1:
 * Millman & Halkias 1972, from memory): the margin's fold has G = 1, a
 * hair below it the cool balance is there and stable, a hair above it the
 * cool balance is gone.  For the thermal resistance, the ambient and the
 * supply, with and without an emitter resistor.
 */
static void test_runaway_at_unit_gain(void **state)
{
	(void)state;
	struct solve_options o;
	solve_options_init(&o);
	o.tol = 1e-14;
	const char *keys[] = { "thermal_resistance", "ambient_temperature", "vs" };
	const double res[] = { 0.0, 0.1 }, ic0[] = { 0.02, 0.015 };
	const double thetas[] = { 18.0, 22.0 };
	size_t folds = 0;
	for (size_t e = 0; e < 2; e++) {
		struct ref_case c;
		stage_case(&c, res[e], ic0[e], thetas[e]);
		struct problem pb;
		case_problem(&c, &pb);
		struct thermal_result now;
		assert_int_equal(thermal_solve(&pb, &o, &now), THERMAL_OK);
		for (size_t k = 0; k < 3; k++) {
			struct thermal_margin m;
			char err[256];
			if (thermal_margin(&pb, &o, keys[k], &m, err, sizeof err) != 0)
				fail_msg("%s: %s", keys[k], err);
			assert_true(m.has_point);
			assert_true(m.tj == now.pts[0].tj);
			if (!m.found)
				continue;
			folds++;
			/* G = 1 at the fold */
			struct problem q = pb;
			assert_int_equal(paramref_set(&q, &m.param, m.fold), 0);
			struct thermal_eval ev;
			assert_int_equal(thermal_eval_at(&q, &o, m.fold_tj, true, &ev), 0);
			if (!(fabs(ev.gain - 1.0) < 1e-9))
				fail_msg("%s: G = %.12g at the fold", keys[k], ev.gain);
			/* the balance just before it, and none just after */
			double d = 1e-7 * fmax(fabs(m.fold), 1.0);
			double side = m.fold > m.now ? 1.0 : -1.0;
			struct problem lo = pb, hi = pb;
			assert_int_equal(paramref_set(&lo, &m.param, m.fold - side * d), 0);
			assert_int_equal(paramref_set(&hi, &m.param, m.fold + side * d), 0);
			struct thermal_result rl, rh;
			thermal_solve(&lo, &o, &rl);
			thermal_solve(&hi, &o, &rh);
			assert_true(rl.n >= 1);
			assert_true(rl.pts[0].stable && rl.pts[0].gain > 0.99);
			if (!(fabs(rl.pts[0].tj - m.fold_tj) < 0.5))
				fail_msg("%s: balance at %.9g degC before the fold at %.9g",
				         keys[k], rl.pts[0].tj, m.fold_tj);
			/* past the fold nothing is left near it: a runaway, or a
			 * balance far hotter (the circuit's own limit) */
			for (size_t j = 0; j < rh.n; j++)
				if (!(fabs(rh.pts[j].tj - m.fold_tj) > 2.0))
					fail_msg("%s: balance at %.9g degC past the fold at "
					         "%.9g", keys[k], rh.pts[j].tj, m.fold_tj);
			printf("# RE %.2g ohm, %s: now %.6g, runaway at %.9g (Tj %.5g "
			       "degC), G-1 there %.1e\n", res[e], keys[k], m.now, m.fold,
			       m.fold_tj, ev.gain - 1.0);
		}
	}
	assert_true(folds == 6);
}

/* Without an emitter resistor the stage above runs away outright. */
static void test_runaway_report(void **state)
{
	(void)state;
	struct ref_case c;
	stage_case(&c, 0.0, 0.02, 31.0);
	struct problem pb;
	case_problem(&c, &pb);
	struct solve_options o;
	solve_options_init(&o);
	struct thermal_result tr;
	assert_int_equal(thermal_solve(&pb, &o, &tr), THERMAL_RUNAWAY);
	assert_int_equal(tr.n, 0);
	assert_true(tr.gain_reaches_one);
	assert_non_null(strstr(tr.message, "thermal runaway"));
	assert_non_null(strstr(tr.message, "150 degC"));
	/* the heat at Tjmax is above what the path removes there */
	assert_true(tr.p_tjmax > (c.tjmax - c.ta) / c.theta);
	/* solve_problem says the same, as no point */
	struct solve_result res;
	assert_int_equal(solve_problem(&pb, &o, &res), SOLVE_NONE);
	assert_int_equal(res.n, 0);
	assert_non_null(strstr(res.message, "thermal runaway"));
	/* the margin now says how far back the thermal resistance must go */
	struct thermal_margin m;
	char err[256];
	assert_int_equal(thermal_margin(&pb, &o, "thermal_resistance", &m, err,
	                                sizeof err), 0);
	assert_false(m.has_point);
	assert_true(m.found && m.fold < 31.0);
	pb.dev.p[BJT_THETA] = 0.999 * m.fold;
	assert_int_equal(thermal_solve(&pb, &o, &tr), THERMAL_OK);
}

/*
 * The heat scan on a curve with known balances: H(T) = c (T - r1)(T - r2)
 * (T - r3) exactly (P built from it), two of them 0.02 K apart on a 1 K
 * grid (found from the extremum between grid points), and a tangent.
 */
struct cubic {
	double ta, theta, c, r1, r2, r3;
};

static int cubic_power(void *ctx, double t, double *p, double *dp)
{
	const struct cubic *q = ctx;
	double h = q->c * (t - q->r1) * (t - q->r2) * (t - q->r3);
	double dh = q->c * ((t - q->r2) * (t - q->r3) + (t - q->r1) * (t - q->r3) +
	                    (t - q->r1) * (t - q->r2));
	*p = (t - q->ta - h) / q->theta;
	if (dp != NULL)
		*dp = (1.0 - dh) / q->theta;
	return 0;
}

static void test_heat_scan_known(void **state)
{
	(void)state;
	const struct cubic cases[] = {
		{ 20.0, 37.0, 1e-3, 33.7, 81.3, 119.9 },
		{ 20.0, 37.0, 1e-3, 47.31, 47.33, 131.7 },  /* a close pair */
		{ -5.0, 3.3, -2e-4, 12.5, 140.25, 140.25 }, /* a tangent */
	};
	for (size_t k = 0; k < 3; k++) {
		struct cubic q = cases[k];
		struct heat_curve hc = { cubic_power, &q };
		struct heat_root r[8];
		size_t n = heat_scan(&hc, q.ta, q.theta, q.ta, 150.0, 130, 1e-14, r, 8);
		const double want[] = { q.r1, q.r2, q.r3 };
		size_t nw = q.r2 == q.r3 ? 2 : 3;
		assert_int_equal(n, nw);
		for (size_t j = 0; j < n; j++) {
			double tol = r[j].tangent ? 1e-6 : 1e-11;
			if (!(fabs(r[j].t - want[j]) < tol * (want[j] + 273.15)))
				fail_msg("case %zu root %zu: %.15g, want %.15g", k, j,
				         r[j].t, want[j]);
			/* the loop gain is 1 - H' there */
			double t = want[j];
			double dh = q.c * ((t - q.r2) * (t - q.r3) + (t - q.r1) *
			                   (t - q.r3) + (t - q.r1) * (t - q.r2));
			assert_true(fabs(r[j].gain - (1.0 - dh)) < 1e-6);
			assert_true(r[j].tangent || r[j].stable == (dh > 0.0));
		}
		assert_true(r[0].stable == (q.c > 0.0));
		if (nw == 2)
			assert_true(r[1].tangent);
	}
}

/*
 * The stepper: each step one projection (device, then heat line), the
 * full-step ratio tending to G at the balance (the contraction factor of
 * a fixed-point map: Burden & Faires, Numerical Analysis, ch. 2), a
 * spiral for G < 0 and a staircase for G > 0, the balance of
 * thermal_solve at the end, and a runaway past Tjmax.
 */
static void test_stepper(void **state)
{
	(void)state;
	struct solve_options o;
	solve_options_init(&o);
	o.tol = 1e-13;
	o.max_steps = 2000;
	struct problem pbs[3];
	led_problem(&pbs[0], 12.7, 390.0, 410.0, 38.5);  /* G < 0 */
	struct ref_case c;
	stage_case(&c, 0.1, 0.015, 22.0);                /* 0 < G < 1 */
	case_problem(&c, &pbs[1]);
	stage_case(&c, 0.0, 0.02, 31.0);                 /* runs away */
	case_problem(&c, &pbs[2]);
	struct thermal_stepper *st = thermal_stepper_create();
	assert_non_null(st);
	for (size_t k = 0; k < 3; k++) {
		assert_int_equal(thermal_stepper_init(st, &pbs[k], &o, NAN), 0);
		enum step_status ss = thermal_stepper_run(st);
		size_t n;
		const struct thermal_row *rows = thermal_stepper_trace(st, &n);
		assert_true(rows[0].on == ON_START);
		assert_true(rows[0].tj == pbs[k].dev.p[model_param_index(
		                                pbs[k].dev.type, "ambient_temperature")]);
		assert_true(rows[0].p == 0.0);
		for (size_t j = 1; j < n; j++) {
			assert_int_equal(rows[j].k, j);
			assert_true(rows[j].on == (j % 2 ? ON_DEVICE : ON_LINE));
			if (rows[j].on == ON_DEVICE)
				assert_true(rows[j].tj == rows[j - 1].tj);
			else
				assert_true(rows[j].p == rows[j - 1].p);
		}
		struct thermal_result tr;
		thermal_solve(&pbs[k], &o, &tr);
		if (k == 2) {
			assert_int_equal(ss, STEP_DIVERGING);
			assert_true(rows[n - 1].tj > 150.0);
			assert_int_equal(tr.status, THERMAL_RUNAWAY);
			continue;
		}
		assert_int_equal(ss, STEP_CONVERGED);
		const struct thermal_row *last = thermal_stepper_last(st);
		assert_true(fabs(last->tj - tr.pts[0].tj) <= 1e-10 *
		            (tr.pts[0].tj + 273.15));
		/* the step ratio near the end against G at the balance */
		const struct thermal_row *r = &rows[n - 5];
		assert_true(fabs(r->ratio - tr.pts[0].gain) <
		            1e-3 * fabs(tr.pts[0].gain) + 1e-6);
		/* spiral (steps alternate in sign) or staircase (one sign) */
		for (size_t j = 4; j + 2 < n; j += 2)
			assert_true((rows[j].step * rows[j + 2].step < 0.0) ==
			            (tr.pts[0].gain < 0.0));
		/* the diagnosis speaks of the same G */
		struct thermal_diagnosis d;
		thermal_diagnose(&pbs[k], &o, tr.pts[0].tj, &d);
		assert_true(fabs(d.gain - tr.pts[0].gain) < 1e-12);
		assert_int_equal(d.shape, k == 0 ? SHAPE_SPIRAL_IN : SHAPE_STAIRCASE_IN);
		assert_non_null(strstr(d.verdict, "G = "));
		/* rewinding replays the same rows */
		double t7 = rows[7].tj;
		thermal_stepper_rewind(st, 7);
		rows = thermal_stepper_trace(st, &n);
		assert_int_equal(n, 8);
		assert_true(rows[7].tj == t7);
		assert_int_equal(thermal_stepper_status(st), STEP_CONTINUE);
	}
	/* the step cap, and a start above the unstable balance runs away */
	o.max_steps = 5;
	assert_int_equal(thermal_stepper_init(st, &pbs[1], &o, NAN), 0);
	assert_int_equal(thermal_stepper_run(st), STEP_CAP);
	o.max_steps = 2000;
	stage_case(&c, 0.0, 0.02, 18.0);       /* a cool and a hot balance */
	struct problem two;
	case_problem(&c, &two);
	struct thermal_result tr;
	assert_int_equal(thermal_solve(&two, &o, &tr), THERMAL_OK);
	assert_int_equal(tr.n, 2);
	assert_false(tr.pts[1].stable);
	assert_int_equal(thermal_stepper_init(st, &two, &o, tr.pts[1].tj + 0.5), 0);
	assert_int_equal(thermal_stepper_run(st), STEP_DIVERGING);
	assert_int_equal(thermal_stepper_init(st, &two, &o, tr.pts[1].tj - 0.5), 0);
	assert_int_equal(thermal_stepper_run(st), STEP_CONVERGED);
	assert_true(fabs(thermal_stepper_last(st)->tj - tr.pts[0].tj) < 1e-8);
	/* a device that does not heat itself cannot start */
	struct problem cold = two;
	cold.dev.p[BJT_THETA] = 0.0;
	assert_int_equal(thermal_stepper_init(st, &cold, &o, NAN), -1);
	assert_int_equal(thermal_stepper_status(st), STEP_UNDEFINED);
	thermal_stepper_destroy(st);
}

/* The first balance of PB with R set to X: (V, I). */
static void thermal_with(const struct problem *pb, const struct paramref *r,
                         double x, double *v, double *i)
{
	struct problem q = *pb;
	struct solve_options o;
	solve_options_init(&o);
	o.tol = 1e-15;
	assert_int_equal(paramref_set(&q, r, x), 0);
	struct thermal_result tr;
	assert_int_equal(thermal_solve(&q, &o, &tr), THERMAL_OK);
	*v = tr.pts[0].pt.v;
	*i = tr.pts[0].pt.i;
}

/*
 * The sensitivities of a self-heated point (implicit differentiation of
 * the coupled equations) against central differences of whole
 * electrothermal solves, for every parameter; the temperature parameter
 * is not one (it is solved).
 */
static void test_sensitivities(void **state)
{
	(void)state;
	struct problem pbs[3];
	led_problem(&pbs[0], 12.7, 390.0, 410.0, 38.5);
	struct ref_case c;
	stage_case(&c, 0.1, 0.015, 22.0);
	case_problem(&c, &pbs[1]);
	zener_problem(&pbs[2], 83.0);
	struct solve_options o;
	solve_options_init(&o);
	o.tol = 1e-15;
	for (size_t k = 0; k < 3; k++) {
		const struct problem *pb = &pbs[k];
		struct thermal_result tr;
		assert_int_equal(thermal_solve(pb, &o, &tr), THERMAL_OK);
		double v = tr.pts[0].pt.v, i = tr.pts[0].pt.i;
		struct paramref refs[PARAMREF_MAX];
		size_t nr = paramref_all(pb, refs, PARAMREF_MAX);
		size_t checked = 0;
		for (size_t j = 0; j < nr; j++) {
			const char *key = paramref_key(pb, &refs[j]);
			assert_string_not_equal(key, "temperature");
			double p = paramref_get(pb, &refs[j]);
			struct sensitivity s;
			if (sensitivity_at(pb, v, i, &refs[j], &s) != 0) {
				/* only a switch-like parameter may refuse */
				assert_true(strcmp(key, "reference_temperature") == 0 ||
				            strcmp(key, "series_resistance") == 0);
				continue;
			}
			double h = p != 0.0 ? 1e-5 * fabs(p) : 1e-6;
			struct problem t = *pb;
			if (paramref_check(&t, &refs[j], p - h, NULL, 0) != 0 ||
			    paramref_check(&t, &refs[j], p + h, NULL, 0) != 0)
				continue;
			double v1, i1, v2, i2;
			thermal_with(pb, &refs[j], p + h, &v1, &i1);
			thermal_with(pb, &refs[j], p - h, &v2, &i2);
			double dv = (v1 - v2) / (2.0 * h), di = (i1 - i2) / (2.0 * h);
			double sc = p != 0.0 ? fabs(p) : 1.0;
			if (!(fabs(s.dv - dv) * sc <= 1e-5 * fabs(v) + 1e-12) ||
			    !(fabs(s.di - di) * sc <= 1e-5 * fabs(i) + 1e-15))
				fail_msg("problem %zu, %s: dV %.10g dI %.10g, differences "
				         "%.10g %.10g", k, key, s.dv, s.di, dv, di);
			checked++;
		}
		assert_true(checked >= 6);
	}
}

/*
 * Every model with the self-heating keys lists them last, in order (the
 * solver's quick test relies on it), and the quick test agrees with the
 * full lookup.
 */
static void test_keys_last(void **state)
{
	(void)state;
	size_t heated = 0;
	for (size_t m = 0; model_registry[m] != NULL; m++) {
		const struct model_type *t = model_registry[m];
		struct thermal_keys k;
		bool has = thermal_keys_of(t, &k);
		int theta = model_param_index(t, "thermal_resistance");
		if (theta < 0) {
			assert_false(has);
			continue;
		}
		heated++;
		assert_int_equal(theta, (int)t->nparams - 3);
		assert_int_equal(model_param_index(t, "ambient_temperature"),
		                 (int)t->nparams - 2);
		assert_int_equal(model_param_index(t, "maximum_junction_temperature"),
		                 (int)t->nparams - 1);
		struct device d;
		device_init(&d, t);
		assert_false(thermal_active(&d));
		d.p[theta] = 17.3;
		assert_true(thermal_active(&d) == has);
	}
	assert_int_equal(heated, 5); /* diode, zener, led, npn, pnp */
}

/*
 * The operating-point solver sends a self-heated part through the heat
 * balance (no fast path may skip it): solve_problem gives the stable
 * balances of thermal_solve, and solve_fast declines.
 */
static void test_solver_route(void **state)
{
	(void)state;
	struct problem pbs[3];
	led_problem(&pbs[0], 12.7, 390.0, 410.0, 38.5);
	struct ref_case c = { .bjt = false, .is0 = 3.7e-12, .n = 1.41, .eg = 1.12,
	                      .m = 3.0, .t0 = 25.0, .rsd = 0.37, .vs = 5.3,
	                      .rs = 18.7, .theta = 71.0, .ta = 33.0, .tjmax = 150 };
	case_problem(&c, &pbs[1]);
	struct ref_case b;
	stage_case(&b, 0.1, 0.015, 22.0);
	case_problem(&b, &pbs[2]);
	struct solve_options o;
	solve_options_init(&o);
	for (size_t k = 0; k < 3; k++) {
		struct thermal_result tr;
		struct solve_result res;
		assert_int_equal(thermal_solve(&pbs[k], &o, &tr), THERMAL_OK);
		assert_int_equal(solve_problem(&pbs[k], &o, &res), SOLVE_OK);
		assert_int_equal(res.n, 1);
		assert_true(tr.pts[0].stable);
		assert_memory_equal(&res.pts[0].v, &tr.pts[0].pt.v, sizeof(double));
		assert_memory_equal(&res.pts[0].i, &tr.pts[0].pt.i, sizeof(double));
		struct op_point pt;
		assert_int_equal(solve_fast(&pbs[k], o.tol, &pt), -1);
	}
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_keys_last),
		cmocka_unit_test(test_solver_route),
		cmocka_unit_test(test_diodes_against_reference),
		cmocka_unit_test(test_transistors_against_reference),
		cmocka_unit_test(test_gain_against_differences),
		cmocka_unit_test(test_zero_theta_is_isothermal),
		cmocka_unit_test(test_current_drive),
		cmocka_unit_test(test_silicon_drift),
		cmocka_unit_test(test_runaway_at_unit_gain),
		cmocka_unit_test(test_runaway_report),
		cmocka_unit_test(test_heat_scan_known),
		cmocka_unit_test(test_stepper),
		cmocka_unit_test(test_sensitivities),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
