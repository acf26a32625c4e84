/*
 * test_design.c - design for a target current, voltage or power.
 *
 * The exact series resistance is checked against the load line through the
 * device's point written out from each model's explicit V(I):
 *   diode (Shockley, Bell Syst. Tech. J. 28, 1949, with a series
 *   resistance): V = n Vt ln(1 + I/Is) + I Rs, Vt = k T / q with the exact
 *   k and q of the 2019 SI (BIPM, SI Brochure, 9th edition, 2019);
 *   power law: V = Vref (I / Iref)^(1/alpha);
 * so RS = (VS - V(I_t)) / I_t and VS = V(I_t) + RS I_t, to 1e-12.
 * Every reported row is also solved independently, and impossible targets
 * must fail with a reason.
 *
 * A Zener shunt: the zener model is documented (zener.c, from the data
 * sheet's breakdown voltage Vz at the test current Izt) to pass exactly
 * through V(-Izt) = -Vz, so a shunt from a source VS < 0 designed for
 * the reverse current Izt has, in closed form, RS = (VS + Vz) / (-Izt),
 * and a power target Vz Izt lands on the same point.
 *
 * Each standard row's worst case is checked against brute force over a
 * grid of the tolerance box (the method of test_tolerance.c: for outputs
 * monotone in each parameter the grid's corners hold the extremes) for
 * three device kinds.
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include <cmocka.h>

#include "core/design.h"
#include "core/verdict.h"
#include "core/models/models.h"
#include "core/network.h"

#define K_BOLTZMANN 1.380649e-23      /* J/K, exact (SI 2019) */
#define Q_ELECTRON 1.602176634e-19    /* C, exact (SI 2019) */

/* One design case. */
struct design_case {
	const char *model;          /* "diode" or "power-law" */
	double p[4];                /* parameters in table order */
	double vs, rs;              /* the source (rs kept when solving VS) */
	enum design_target target;
	double value;
	enum design_unknown unknown;
	enum eseries series;
};

static const struct design_case cases[] = {
	/* A red-ish LED-like junction from 23.7 V, 9.83 mA, E24. */
	{ "diode", { 3.17e-18, 1.93, 1.37, 27.3 }, 23.7, 1000.0, DESIGN_CURRENT,
	  9.83e-3, DESIGN_FOR_RS, ESERIES_E24 },
	/* A small-signal junction, 1.385 mA from 5.13 V, E96. */
	{ "diode", { 2.385e-9, 1.87, 0.0, 41.7 }, 5.13, 1000.0, DESIGN_CURRENT,
	  1.385e-3, DESIGN_FOR_RS, ESERIES_E96 },
	/* Source voltage for 27.4 mA through 221 ohm. */
	{ "diode", { 7.31e-14, 1.21, 0.73, -12.6 }, 0.0, 221.0, DESIGN_CURRENT,
	  27.4e-3, DESIGN_FOR_VS, ESERIES_E24 },
	/* A soft power-law load, 0.173 A from 12.35 V, E12. */
	{ "power-law", { 3.71, 0.213, 0.617 }, 12.35, 10.0, DESIGN_CURRENT,
	  0.173, DESIGN_FOR_RS, ESERIES_E12 },
	/* A stiff clamp, 4.17 mA from 47.3 V, E192. */
	{ "power-law", { 18.2, 1.03e-3, 13.7 }, 47.3, 10.0, DESIGN_CURRENT,
	  4.17e-3, DESIGN_FOR_RS, ESERIES_E192 },
	/* Voltage targets: device at 0.6713 V and at 3.215 V. */
	{ "diode", { 4.19e-15, 1.07, 0.0, 25.0 }, 9.41, 1000.0, DESIGN_VOLTAGE,
	  0.6713, DESIGN_FOR_RS, ESERIES_E48 },
	{ "power-law", { 2.83, 0.0417, 2.37 }, 14.3, 10.0, DESIGN_VOLTAGE,
	  3.215, DESIGN_FOR_VS, ESERIES_E24 },
	/* Power targets: 57.3 mW in a junction with Rs, 0.913 W in a lamp. */
	{ "diode", { 1.13e-12, 1.61, 2.19, 33.3 }, 11.9, 1000.0, DESIGN_POWER,
	  57.3e-3, DESIGN_FOR_RS, ESERIES_E24 },
	{ "power-law", { 6.13, 0.271, 0.583 }, 26.1, 10.0, DESIGN_POWER,
	  0.913, DESIGN_FOR_RS, ESERIES_E6 },
};

/* Build the problem of case C. */
static void case_problem(const struct design_case *c, struct problem *pb)
{
	struct source_spec sp;
	char err[200];
	memset(pb, 0, sizeof *pb); /* no network */
	source_spec_thevenin(&sp, c->vs, c->rs);
	assert_int_equal(source_from_spec(&sp, &pb->src, err, sizeof err), 0);
	const struct model_type *t = model_find(c->model);
	assert_non_null(t);
	device_init(&pb->dev, t);
	/* The first parameters as given; the rest (the diode's temperature
	 * scaling: off by default) keep their defaults. */
	for (size_t k = 0; k < t->nparams && k < 4; k++)
		pb->dev.p[k] = c->p[k];
	assert_int_equal(device_validate(&pb->dev, err, sizeof err), 0);
}

/* The model's V(I), written out independently of the library. */
static double explicit_voltage(const struct design_case *c, double i)
{
	if (strcmp(c->model, "diode") == 0) {
		double vt = K_BOLTZMANN * (c->p[3] + 273.15) / Q_ELECTRON;
		return c->p[1] * vt * log1p(i / c->p[0]) + i * c->p[2];
	}
	return c->p[0] * pow(i / c->p[1], 1.0 / c->p[2]);
}

/* The model's I(V), written out (diode without Rs, power law). */
static double explicit_current(const struct design_case *c, double v)
{
	if (strcmp(c->model, "diode") == 0) {
		assert_true(c->p[2] == 0.0);
		double vt = K_BOLTZMANN * (c->p[3] + 273.15) / Q_ELECTRON;
		return c->p[0] * expm1(v / (c->p[1] * vt));
	}
	return c->p[1] * pow(v / c->p[0], c->p[2]);
}

/* Relative difference. */
static double rel(double a, double b)
{
	return fabs(a - b) / fmax(fabs(b), 1e-300);
}

/* The exact value against the explicit load line; each row solved. */
static void test_design_cases(void **state)
{
	(void)state;
	struct solve_options o;
	solve_options_init(&o);
	for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
		const struct design_case *c = &cases[k];
		struct problem pb;
		case_problem(c, &pb);
		struct design_request rq = { .target = c->target, .value = c->value,
		                             .unknown = c->unknown, .series = c->series };
		struct design_result res;
		if (design_solve(&pb, &o, &rq, NULL, &res) != 0)
			fail_msg("case %zu: %s", k, res.message);
		/* The device point meeting the target, independently. */
		double it, vt;
		if (c->target == DESIGN_VOLTAGE) {
			vt = c->value;
			it = explicit_current(c, vt);
		} else if (c->target == DESIGN_CURRENT) {
			it = c->value;
			vt = explicit_voltage(c, it);
		} else {
			/* The power point: it * V(it) = P on the explicit curve. */
			it = res.i_target;
			vt = explicit_voltage(c, it);
			if (rel(it * vt, c->value) > 1e-12)
				fail_msg("case %zu: power %.17g, target %.17g", k, it * vt,
				         c->value);
		}
		if (rel(res.i_target, it) > 1e-12 || rel(res.v_target, vt) > 1e-12)
			fail_msg("case %zu: device point (%.17g V, %.17g A), explicit "
			         "(%.17g V, %.17g A)", k, res.v_target, res.i_target, vt,
			         it);
		double exact = c->unknown == DESIGN_FOR_RS ? (c->vs - vt) / it
		                                           : vt + c->rs * it;
		assert_int_equal(res.rows[0].kind, DESIGN_ROW_EXACT);
		if (rel(res.rows[0].value, exact) > 1e-12)
			fail_msg("case %zu: exact %.17g, explicit %.17g (rel %.3g)", k,
			         res.rows[0].value, exact, rel(res.rows[0].value, exact));
		/* The exact value, solved, meets the target. */
		assert_true(res.rows[0].solved);
		if (fabs(res.rows[0].error_percent) > 1e-7)
			fail_msg("case %zu: exact row misses by %.3g %%", k,
			         res.rows[0].error_percent);
		if (c->unknown == DESIGN_FOR_VS) {
			assert_int_equal(res.nrows, 1);
			continue;
		}
		/* Lower and higher standard values either side. */
		assert_int_equal(res.nrows, 3);
		const struct design_row *lo = &res.rows[1], *hi = &res.rows[2];
		assert_int_equal(lo->kind, DESIGN_ROW_LOWER);
		assert_int_equal(hi->kind, DESIGN_ROW_HIGHER);
		double elo, ehi;
		assert_int_equal(eseries_lower(c->series, exact, &elo), 0);
		assert_int_equal(eseries_higher(c->series, exact, &ehi), 0);
		assert_true(lo->value == elo && hi->value == ehi);
		assert_true(lo->value <= exact && exact <= hi->value);
		assert_true(lo->solved && hi->solved);
		/* Less resistance, more current, voltage and power (monotone
		 * devices): the lower row overshoots and the higher undershoots. */
		assert_true(lo->error_percent >= 0.0);
		assert_true(hi->error_percent <= 0.0);
		/* Each row's point is on its own load line. */
		for (size_t r = 0; r < res.nrows; r++) {
			const struct design_row *row = &res.rows[r];
			double line = row->pt.v + row->value * row->pt.i;
			if (rel(line, c->vs) > 1e-9)
				fail_msg("case %zu row %zu: V + RS I = %.17g, VS %.17g", k, r,
				         line, c->vs);
			/* Energy balance: source = device + resistor. */
			const struct ratings_report *pw = &row->power;
			if (rel(pw->p_source, pw->p_device + pw->p_resistor) > 1e-12)
				fail_msg("case %zu row %zu: %.17g W != %.17g + %.17g W", k, r,
				         pw->p_source, pw->p_device, pw->p_resistor);
			assert_true(rel(pw->p_resistor,
			                row->pt.i * row->pt.i * row->value) < 1e-12);
		}
	}
}

/* One impossible request and a word its message must contain. */
struct bad_case {
	const char *model;
	double p[4];
	double vs, rs;
	enum design_target target;
	double value;
	enum design_unknown unknown;
	const char *says;
};

static const struct bad_case bad[] = {
	/* Current of the wrong sign for a positive source. */
	{ "diode", { 3.17e-18, 1.93, 1.37, 27.3 }, 23.7, 1e3, DESIGN_CURRENT,
	  -9.83e-3, DESIGN_FOR_RS, "wrong sign" },
	{ "power-law", { 3.71, 0.213, 0.617 }, 12.35, 10.0, DESIGN_CURRENT,
	  -0.173, DESIGN_FOR_RS, "wrong sign" },
	/* A source below the device's voltage at the target. */
	{ "diode", { 3.17e-18, 1.93, 1.37, 27.3 }, 1.67, 1e3, DESIGN_CURRENT,
	  9.83e-3, DESIGN_FOR_RS, "not above the device voltage" },
	/* No current at all. */
	{ "power-law", { 3.71, 0.213, 0.617 }, 12.35, 10.0, DESIGN_CURRENT,
	  0.0, DESIGN_FOR_RS, "no current" },
	/* Below the diode's reverse saturation: off its curve. */
	{ "diode", { 2.385e-9, 1.87, 0.0, 41.7 }, -5.13, 1e3, DESIGN_CURRENT,
	  -7.7e-9, DESIGN_FOR_RS, "cannot carry" },
	/* Power must be positive. */
	{ "diode", { 2.385e-9, 1.87, 0.0, 41.7 }, 5.13, 1e3, DESIGN_POWER,
	  -0.25, DESIGN_FOR_RS, "above 0 W" },
	/* Not a number. */
	{ "diode", { 2.385e-9, 1.87, 0.0, 41.7 }, 5.13, 1e3, DESIGN_VOLTAGE,
	  NAN, DESIGN_FOR_RS, "not a finite" },
	/* The voltage target above the source. */
	{ "power-law", { 2.83, 0.0417, 2.37 }, 2.5, 10.0, DESIGN_VOLTAGE,
	  3.215, DESIGN_FOR_RS, "not above the device voltage" },
};

/* Impossible targets fail with a clear reason. */
static void test_design_impossible(void **state)
{
	(void)state;
	struct solve_options o;
	solve_options_init(&o);
	for (size_t k = 0; k < sizeof bad / sizeof bad[0]; k++) {
		const struct bad_case *b = &bad[k];
		struct design_case c = { b->model, { b->p[0], b->p[1], b->p[2],
		                                     b->p[3] }, b->vs, b->rs,
		                         b->target, b->value, b->unknown,
		                         ESERIES_E24 };
		struct problem pb;
		case_problem(&c, &pb);
		struct design_request rq = { .target = b->target, .value = b->value,
		                             .unknown = b->unknown, .series = ESERIES_E24 };
		struct design_result res;
		if (design_solve(&pb, &o, &rq, NULL, &res) != -1)
			fail_msg("bad case %zu was designed: %.17g", k, res.rows[0].value);
		if (strstr(res.message, b->says) == NULL)
			fail_msg("bad case %zu: message \"%s\" lacks \"%s\"", k,
			         res.message, b->says);
	}
	/* An ideal current source leaves nothing to design. */
	struct problem pb;
	struct source_spec sp;
	char err[200];
	source_spec_norton(&sp, 0.0173, INFINITY);
	assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
	device_init(&pb.dev, &model_power_law);
	pb.dev.p[POWER_LAW_VREF] = 3.71;
	pb.dev.p[POWER_LAW_IREF] = 0.213;
	pb.dev.p[POWER_LAW_ALPHA] = 0.617;
	struct design_request rq = { .target = DESIGN_CURRENT, .value = 0.0137,
		                             .unknown = DESIGN_FOR_RS, .series = ESERIES_E24 };
	struct design_result res;
	assert_int_equal(design_solve(&pb, &o, &rq, NULL, &res), -1);
	assert_non_null(strstr(res.message, "current source"));
}

/* With ratings, each row's report flags what it exceeds. */
static void test_design_ratings(void **state)
{
	(void)state;
	struct solve_options o;
	solve_options_init(&o);
	/* 9.83 mA from 23.7 V: about 0.21 W in RS. */
	struct problem pb;
	case_problem(&cases[0], &pb);
	struct ratings r;
	ratings_init(&r);
	r.resistor_power = 0.25;
	r.device_max_power = 0.0157;
	struct design_request rq = { .target = DESIGN_CURRENT, .value = 9.83e-3,
		                             .unknown = DESIGN_FOR_RS, .series = ESERIES_E24 };
	struct design_result res;
	assert_int_equal(design_solve(&pb, &o, &rq, &r, &res), 0);
	const struct design_row *ex = &res.rows[0];
	double pr = ex->pt.i * ex->pt.i * ex->value;
	assert_true(pr > 0.125 && pr < 0.25);
	/* Above half of 1/4 W, inside the rating: the common-practice flag. */
	assert_true(ex->power.flags & RATINGS_RESISTOR_USE);
	assert_false(ex->power.flags & RATINGS_RESISTOR_POWER);
	assert_true(ex->power.suggested_resistor_power == 0.5);
	/* The junction takes more than 15.7 mW at about 2.1 V. */
	assert_true(ex->pt.power > r.device_max_power);
	assert_true(ex->power.flags & RATINGS_DEVICE_POWER);
	/* The same point in words: the device over, RS a caution. */
	struct verdict vd;
	struct problem q;
	assert_int_equal(design_apply_request(&pb, &rq, ex->value, &q), 0);
	verdict_at(&q, SOURCE_THEVENIN, ex->pt.v, ex->pt.i, &r, &rq, &vd);
	assert_int_equal(vd.nlines, 3);
	assert_int_equal(vd.lines[0].verdict, RATINGS_OVER);
	assert_int_equal(vd.lines[1].verdict, RATINGS_CAUTION);
	assert_non_null(strstr(vd.lines[1].words, "common practice"));
	assert_int_equal(vd.worst, RATINGS_OVER);
	assert_true(vd.target.given && fabs(vd.target.error_percent) < 1e-9);
}

/*
 * Designing a part of a network source: a divider E, R1 (top), R2
 * (bottom) feeding a diode.  The divider's Thevenin equivalent (Vth =
 * E R2/(R1+R2), Rth = R1 R2/(R1+R2): the divider formula, Alexander &
 * Sadiku, Fundamentals of Electric Circuits, Thevenin's theorem) passes
 * through the target point (v, i) when
 *     R1 = R2 (E - v) / (v + R2 i)    or    E = (v (R1+R2) + R1 R2 i) / R2.
 */
static void test_design_network_part(void **state)
{
	(void)state;
	const double e = 11.83, r1 = 3.37e3, r2 = 2.41e3;
	struct network *net = network_create();
	assert_non_null(net);
	assert_true(network_add_part(net, "rail", NETWORK_VOLTAGE_SOURCE, e, "gnd",
	                             "top") >= 0);
	assert_true(network_add_part(net, "upper", NETWORK_RESISTOR, r1, "top",
	                             "mid") >= 0);
	assert_true(network_add_part(net, "lower", NETWORK_RESISTOR, r2, "mid",
	                             "gnd") >= 0);
	assert_int_equal(network_set_terminals(net, "mid", "gnd"), 0);
	struct problem pb;
	memset(&pb, 0, sizeof pb);
	struct source_spec spec;
	char err[200];
	assert_int_equal(network_reduce(net, NULL, &spec, NULL), NETWORK_OK);
	assert_int_equal(source_from_spec(&spec, &pb.src, err, sizeof err), 0);
	pb.net = net;
	device_init(&pb.dev, &model_diode);
	pb.dev.p[DIODE_IS] = 2.77e-14;
	pb.dev.p[DIODE_N] = 1.41;
	pb.dev.p[DIODE_RS] = 1.93;
	struct solve_options o;
	solve_options_init(&o);
	static const double targets[] = { 1.37e-3, 0.418e-3, 2.9e-3 };
	for (size_t k = 0; k < sizeof targets / sizeof targets[0]; k++) {
		struct design_request rq = { .target = DESIGN_CURRENT,
		                             .value = targets[k],
		                             .unknown = DESIGN_FOR_PART,
		                             .series = ESERIES_E24 };
		assert_int_equal(paramref_find(&pb, "source.network.upper", &rq.part,
		                               err, sizeof err), 0);
		struct design_result res;
		if (design_solve(&pb, &o, &rq, NULL, &res) != 0)
			fail_msg("upper: %s", res.message);
		double v = res.v_target, i = res.i_target;
		double want = r2 * (e - v) / (v + r2 * i);
		assert_true(fabs(res.rows[0].value - want) <= 1e-12 * want);
		/* Standard neighbours bracket it, and each row re-solves. */
		assert_int_equal(res.nrows, 3);
		assert_true(res.rows[1].value <= want && res.rows[2].value >= want);
		for (size_t r = 0; r < res.nrows; r++)
			assert_true(res.rows[r].solved);
		assert_true(fabs(res.rows[0].pt.i - targets[k]) <= 1e-9 * targets[k]);
		/* The rail voltage instead: one exact row. */
		assert_int_equal(paramref_find(&pb, "source.network.rail", &rq.part,
		                               err, sizeof err), 0);
		if (design_solve(&pb, &o, &rq, NULL, &res) != 0)
			fail_msg("rail: %s", res.message);
		double want_e = (v * (r1 + r2) + r1 * r2 * i) / r2;
		assert_int_equal(res.nrows, 1);
		assert_true(fabs(res.rows[0].value - want_e) <= 1e-10 * want_e);
	}
	/* The session's network is never changed by a design. */
	assert_true(network_part(net, 1)->value == r1);
	assert_true(network_part(net, 0)->value == e);
	network_destroy(net);
}

/* A Zener shunt from VS < 0 designed for a reverse current. */
static void zener_problem(struct problem *pb, double vs, double vz, double iz,
                          double rz)
{
	struct source_spec sp;
	char err[200];
	memset(pb, 0, sizeof *pb);
	source_spec_thevenin(&sp, vs, 1000.0);
	assert_int_equal(source_from_spec(&sp, &pb->src, err, sizeof err), 0);
	device_init(&pb->dev, &model_zener);
	pb->dev.p[ZENER_VZ] = vz;
	pb->dev.p[ZENER_IZT] = iz;
	pb->dev.p[ZENER_RZ] = rz;
	assert_int_equal(device_validate(&pb->dev, err, sizeof err), 0);
}

/* The shunt's series resistor against the breakdown law's closed form. */
static void test_design_zener_shunt(void **state)
{
	(void)state;
	struct solve_options o;
	solve_options_init(&o);
	static const struct { double vs, vz, iz, rz; } tab[] = {
		{ -12.37, 5.13, 5e-3, 17.3 },  /* 5 mA reverse current */
		{ -23.9, 8.21, 5e-3, 6.17 },
		{ -9.13, 3.37, 20.3e-3, 27.1 },
	};
	for (size_t k = 0; k < sizeof tab / sizeof tab[0]; k++) {
		struct problem pb;
		zener_problem(&pb, tab[k].vs, tab[k].vz, tab[k].iz, tab[k].rz);
		double want = (tab[k].vs + tab[k].vz) / -tab[k].iz;
		struct design_request rq = { .target = DESIGN_CURRENT,
			                         .value = -tab[k].iz,
			                         .unknown = DESIGN_FOR_RS,
			                         .series = ESERIES_E24 };
		struct design_result res;
		if (design_solve(&pb, &o, &rq, NULL, &res) != 0)
			fail_msg("case %zu: %s", k, res.message);
		if (rel(res.rows[0].value, want) > 1e-12)
			fail_msg("case %zu: RS %.17g, closed form %.17g", k,
			         res.rows[0].value, want);
		assert_true(rel(res.v_target, -tab[k].vz) < 1e-12);
		assert_true(res.rows[0].solved);
		assert_true(rel(res.rows[0].pt.i, -tab[k].iz) < 1e-9);
		/* Both standard rows sit in the third quadrant. */
		for (size_t r = 1; r < res.nrows; r++)
			assert_true(res.rows[r].pt.v < 0.0 && res.rows[r].pt.i < 0.0);
		/* The same point as a power target, found on the reverse side. */
		rq.target = DESIGN_POWER;
		rq.value = tab[k].vz * tab[k].iz;
		if (design_solve(&pb, &o, &rq, NULL, &res) != 0)
			fail_msg("case %zu power: %s", k, res.message);
		if (rel(res.rows[0].value, want) > 1e-9)
			fail_msg("case %zu power: RS %.17g, closed form %.17g", k,
			         res.rows[0].value, want);
		/* The breakdown voltage as a voltage target of the same sign. */
		rq.target = DESIGN_VOLTAGE;
		rq.value = -tab[k].vz;
		if (design_solve(&pb, &o, &rq, NULL, &res) != 0)
			fail_msg("case %zu voltage: %s", k, res.message);
		if (rel(res.rows[0].value, want) > 1e-9)
			fail_msg("case %zu voltage: RS %.17g, closed form %.17g", k,
			         res.rows[0].value, want);
		/* A forward current on the negative source is refused, and the
		 * message names the reverse target that works. */
		rq.target = DESIGN_CURRENT;
		rq.value = tab[k].iz;
		assert_int_equal(design_solve(&pb, &o, &rq, NULL, &res), -1);
		assert_non_null(strstr(res.message, "wrong sign"));
		assert_non_null(strstr(res.message, "reverse current"));
	}
}

/* The nearer standard value is marked, whichever side it is on. */
static void test_design_nearest(void **state)
{
	(void)state;
	struct solve_options o;
	solve_options_init(&o);
	for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
		struct problem pb;
		case_problem(&cases[k], &pb);
		struct design_request rq = { .target = cases[k].target,
			                         .value = cases[k].value,
			                         .unknown = cases[k].unknown,
			                         .series = cases[k].series };
		struct design_result res;
		assert_int_equal(design_solve(&pb, &o, &rq, NULL, &res), 0);
		if (res.nrows < 3) {
			assert_int_equal(res.nearest, -1);
			continue;
		}
		int want = fabs(res.rows[2].error_percent) <=
		                   fabs(res.rows[1].error_percent) ? 2 : 1;
		assert_int_equal(res.nearest, want);
		assert_true(res.rows[want].nearest && !res.rows[3 - want].nearest);
		assert_false(res.rows[0].nearest);
	}
	/* 10 mA from 24 V: 2.185 kohm exact; 2.2 k gives -0.66 %, 2 k +9.2 %:
	 * the higher value is the nearer one. */
	struct design_case c = { "diode", { 6.3e-21, 1.93, 6.8, 25.0 }, 24.0,
		                     2200.0, DESIGN_CURRENT, 10e-3, DESIGN_FOR_RS,
		                     ESERIES_E24 };
	struct problem pb;
	case_problem(&c, &pb);
	struct design_request rq = { .target = DESIGN_CURRENT, .value = 10e-3,
		                         .unknown = DESIGN_FOR_RS,
		                         .series = ESERIES_E24 };
	struct design_result res;
	assert_int_equal(design_solve(&pb, &o, &rq, NULL, &res), 0);
	assert_int_equal(res.nearest, 2);
	assert_true(res.rows[2].value == 2200.0);
}

/* Brute force: min and max of each output over a G^n grid of the box. */
static void grid_extremes(const struct tol_case *c, int g, double *mn,
                          double *mx)
{
	size_t n = c->nitems, total = 1;
	for (size_t k = 0; k < n; k++)
		total *= (size_t)g;
	for (int o = 0; o < TOL_NOUT; o++) {
		mn[o] = INFINITY;
		mx[o] = -INFINITY;
	}
	for (size_t m = 0; m < total; m++) {
		double x[TOL_MAX_ITEMS], y[TOL_NOUT];
		size_t rest = m;
		for (size_t k = 0; k < n; k++) {
			int j = (int)(rest % (size_t)g);
			rest /= (size_t)g;
			x[k] = c->items[k].lo +
			       (c->items[k].hi - c->items[k].lo) * j / (g - 1);
		}
		assert_int_equal(tol_eval(c, x, NAN, y), 0);
		for (int o = 0; o < TOL_NOUT; o++) {
			mn[o] = fmin(mn[o], y[o]);
			mx[o] = fmax(mx[o], y[o]);
		}
	}
}

/* Add +-FRAC of its present value on KEY to C. */
static void add_rel(struct tol_case *c, const char *key, double frac)
{
	struct paramref r;
	char err[300];
	assert_int_equal(paramref_find(&c->pb, key, &r, err, sizeof err), 0);
	double x = paramref_get(&c->pb, &r);
	double a = x * (1.0 - frac), b = x * (1.0 + frac);
	if (tol_case_add(c, key, fmin(a, b), fmax(a, b), TOL_UNIFORM, err,
	                 sizeof err) != 0)
		fail_msg("%s", err);
}

/* Each standard row's worst case against the grid, three device kinds. */
static void test_design_worst_brute(void **state)
{
	(void)state;
	struct solve_options o;
	solve_options_init(&o);
	struct {
		struct problem pb;
		double target;
		const char *key;    /* a device parameter with a tolerance */
		double frac;
	} kinds[3];
	/* An indicator junction from 24 V. */
	case_problem(&(struct design_case){ "diode", { 6.3e-21, 1.93, 6.8, 25.0 },
	                                    24.0, 2200.0, DESIGN_CURRENT, 0.0,
	                                    DESIGN_FOR_RS, ESERIES_E24 },
	             &kinds[0].pb);
	kinds[0].target = 9.73e-3;
	kinds[0].key = "saturation_current";
	kinds[0].frac = 0.37;
	/* A Zener shunt from -12.37 V for 5 mA reverse current. */
	zener_problem(&kinds[1].pb, -12.37, 5.13, 5e-3, 17.3);
	kinds[1].target = -5e-3;
	kinds[1].key = "breakdown_voltage";
	kinds[1].frac = 0.021;
	/* A lamp-like power law from 26.1 V. */
	case_problem(&cases[8], &kinds[2].pb);
	kinds[2].target = 0.173;
	kinds[2].key = "exponent";
	kinds[2].frac = 0.031;
	struct ratings r;
	ratings_init(&r);
	for (size_t k = 0; k < 3; k++) {
		struct design_request rq = { .target = DESIGN_CURRENT,
			                         .value = kinds[k].target,
			                         .unknown = DESIGN_FOR_RS,
			                         .series = ESERIES_E12 };
		struct design_result res;
		if (design_solve(&kinds[k].pb, &o, &rq, NULL, &res) != 0)
			fail_msg("kind %zu: %s", k, res.message);
		for (size_t j = 1; j < res.nrows; j++) {
			struct problem q;
			struct tol_case c;
			assert_int_equal(design_apply_request(&kinds[k].pb, &rq,
			                                      res.rows[j].value, &q), 0);
			tol_case_init(&c, &q, SOURCE_THEVENIN, &o);
			add_rel(&c, "rs", 0.05);
			add_rel(&c, "vs", 0.10);
			add_rel(&c, kinds[k].key, kinds[k].frac);
			double mn[TOL_NOUT], mx[TOL_NOUT];
			grid_extremes(&c, 7, mn, mx);
			/* A rating between the nominal and the worst resistor power. */
			r.resistor_power = 0.5 * (res.rows[j].power.p_resistor +
			                          mx[TOL_RESISTOR_POWER]);
			struct design_worst w;
			if (design_row_worst(&c, &r, &rq, &w) != 0)
				fail_msg("kind %zu row %zu: %s", k, j, w.message);
			assert_true(w.done);
			double got[4] = { w.i_min, w.i_max, w.p_resistor_max,
				              w.p_device_max };
			double want[4] = { mn[TOL_CURRENT], mx[TOL_CURRENT],
				               mx[TOL_RESISTOR_POWER],
				               fmax(fabs(mn[TOL_DEVICE_POWER]),
				                    fabs(mx[TOL_DEVICE_POWER])) };
			for (int m = 0; m < 4; m++)
				if (rel(got[m], want[m]) > 1e-9)
					fail_msg("kind %zu row %zu column %d: %.15g, grid %.15g",
					         k, j, m, got[m], want[m]);
			/* Over its rating at worst though within it at nominal. */
			assert_int_equal(w.resistor_verdict,
			                 ratings_compare(want[2], r.resistor_power,
			                                 0.5 * r.resistor_power));
			assert_int_equal(w.resistor_verdict, RATINGS_OVER);
			assert_true(w.suggested_resistor_power ==
			            ratings_standard_power(want[2] / RATINGS_USE_FRACTION));
			assert_non_null(strstr(w.words, "at worst"));
		}
	}
	/* No tolerances: the worst case says so. */
	struct tol_case c;
	struct design_worst w;
	tol_case_init(&c, &kinds[0].pb, SOURCE_THEVENIN, &o);
	assert_int_equal(design_row_worst(&c, NULL, NULL, &w), -1);
	assert_false(w.done);
	assert_non_null(strstr(w.message, "no tolerances"));
}

/*
 * A network part's worst power: the divider of test_design_network_part
 * with tolerances on its upper resistor, its rail and the diode; the
 * designed resistor's largest power (E - V)^2 / R1 (Joule's law) over a
 * grid of the box, each point solved, against design_row_worst.
 */
static void test_design_worst_part(void **state)
{
	(void)state;
	const double e = 11.83, r1 = 3.37e3, r2 = 2.41e3;
	struct network *net = network_create();
	assert_non_null(net);
	assert_true(network_add_part(net, "rail", NETWORK_VOLTAGE_SOURCE, e, "gnd",
	                             "top") >= 0);
	assert_true(network_add_part(net, "upper", NETWORK_RESISTOR, r1, "top",
	                             "mid") >= 0);
	assert_true(network_add_part(net, "lower", NETWORK_RESISTOR, r2, "mid",
	                             "gnd") >= 0);
	assert_int_equal(network_set_terminals(net, "mid", "gnd"), 0);
	struct problem pb;
	memset(&pb, 0, sizeof pb);
	struct source_spec spec;
	char err[300];
	assert_int_equal(network_reduce(net, NULL, &spec, NULL), NETWORK_OK);
	assert_int_equal(source_from_spec(&spec, &pb.src, err, sizeof err), 0);
	pb.net = net;
	device_init(&pb.dev, &model_diode);
	pb.dev.p[DIODE_IS] = 2.77e-14;
	pb.dev.p[DIODE_N] = 1.41;
	struct solve_options o;
	solve_options_init(&o);
	struct design_request rq = { .target = DESIGN_CURRENT, .value = 1.37e-3,
		                         .unknown = DESIGN_FOR_PART,
		                         .series = ESERIES_E24 };
	assert_int_equal(paramref_find(&pb, "source.network.upper", &rq.part, err,
	                               sizeof err), 0);
	struct design_result res;
	assert_int_equal(design_solve(&pb, &o, &rq, NULL, &res), 0);
	struct ratings r;
	ratings_init(&r);
	for (size_t j = 1; j < res.nrows; j++) {
		struct problem q;
		struct tol_case c;
		assert_int_equal(design_apply_request(&pb, &rq, res.rows[j].value,
		                                      &q), 0);
		tol_case_init(&c, &q, SOURCE_THEVENIN, &o);
		add_rel(&c, "source.network.upper", 0.05);
		add_rel(&c, "source.network.rail", 0.10);
		add_rel(&c, "saturation_current", 0.41);
		/* The grid: each point solved, the power in R1 by hand. */
		const int g = 5;
		double best = -INFINITY;
		for (int a = 0; a < g; a++)
			for (int b = 0; b < g; b++)
				for (int d = 0; d < g; d++) {
					double x[3];
					int idx[3] = { a, b, d };
					struct problem t = q;
					for (int k = 0; k < 3; k++) {
						x[k] = c.items[k].lo +
						       (c.items[k].hi - c.items[k].lo) * idx[k] /
						               (g - 1);
						assert_int_equal(paramref_set(&t, &c.items[k].param,
						                              x[k]), 0);
					}
					struct solve_result sr;
					assert_int_equal(solve_problem(&t, &o, &sr), SOLVE_OK);
					double v = sr.pts[0].v;
					best = fmax(best, (x[1] - v) * (x[1] - v) / x[0]);
				}
		r.resistor_power = 0.9 * best;
		struct design_worst w;
		if (design_row_worst(&c, &r, &rq, &w) != 0)
			fail_msg("row %zu: %s", j, w.message);
		if (rel(w.p_resistor_max, best) > 1e-9)
			fail_msg("row %zu: part power %.15g, grid %.15g", j,
			         w.p_resistor_max, best);
		assert_int_equal(w.resistor_verdict, RATINGS_OVER);
		assert_non_null(strstr(w.words, "upper dissipates"));
		/* Without the request the equivalent is not rated. */
		assert_int_equal(design_row_worst(&c, &r, NULL, &w), 0);
		assert_true(isnan(w.p_resistor_max));
	}
	network_destroy(net);
}

/*
 * A transistor stage by its collector current (or VCE).  The base loop of
 * a divider-biased npn stage, by Kirchhoff's voltage law around base,
 * emitter and ground,
 *     VBB = RB IB + VBE + (beta + 1) IB RE,   IE = (VBB - VBE) / (RE + RB/(beta+1))
 * (the classical four-resistor bias: Sedra & Smith, Microelectronic
 * Circuits, Oxford University Press, the section on biasing discrete BJT
 * amplifiers; from memory), with the forward-active Ebers-Moll law
 * IC = Is (exp(VBE / n Vt) - 1) (Ebers & Moll, Proc. IRE 42, 1954) for
 * VBE, IB = IC / beta; and at the base node (KCL)
 *     (VCC - VB) / R1 = VB / R2 + IB  gives  R1 = (VCC - VB) / (VB/R2 + IB).
 * The collector side VCE = VCC - IC RC - IE RE gives IC for a VCE target.
 * A JFET's self-bias by its drain current: the square law ID = IDSS
 * (1 - VGS/VP)^2 (Shockley, Proc. IRE 40, 1952) with VGS = -ID RS (KVL
 * round the gate loop) gives RS = -VP (1 - sqrt(ID/IDSS)) / ID.
 */
static void test_design_stage(void **state)
{
	(void)state;
	const double vcc = 12.7, r1 = 43.7e3, r2 = 11.3e3, is = 7.3e-15;
	const double beta = 163.0, re = 470.0, rc = 2.21e3, temp = 31.7;
	struct network *net = network_create();
	assert_non_null(net);
	assert_true(network_add_part(net, "supply", NETWORK_VOLTAGE_SOURCE, vcc,
	                             "gnd", "rail") >= 0);
	assert_true(network_add_part(net, "upper", NETWORK_RESISTOR, r1, "rail",
	                             "base") >= 0);
	assert_true(network_add_part(net, "lower", NETWORK_RESISTOR, r2, "base",
	                             "gnd") >= 0);
	assert_int_equal(network_set_terminals(net, "base", "gnd"), 0);
	struct problem pb;
	memset(&pb, 0, sizeof pb);
	struct source_spec spec;
	char err[300];
	assert_int_equal(network_reduce(net, NULL, &spec, NULL), NETWORK_OK);
	assert_int_equal(source_from_spec(&spec, &pb.src, err, sizeof err), 0);
	pb.net = net;
	device_init(&pb.dev, &model_npn);
	pb.dev.p[BJT_IS] = is;
	pb.dev.p[BJT_BETA] = beta;
	pb.dev.p[BJT_RE] = re;
	pb.dev.p[BJT_RC] = rc;
	pb.dev.p[BJT_VCC] = vcc;
	pb.dev.p[BJT_TEMP] = temp;
	assert_int_equal(device_validate(&pb.dev, err, sizeof err), 0);
	struct solve_options o;
	solve_options_init(&o);
	double vt = K_BOLTZMANN * (temp + 273.15) / Q_ELECTRON;
	static const double ics[] = { 2.13e-3, 0.731e-3, 3.87e-3 };
	for (size_t k = 0; k < sizeof ics / sizeof ics[0]; k++) {
		double ic = ics[k], ib = ic / beta, ie = ib * (beta + 1.0);
		double vbe = vt * log1p(ic / is);
		double vb = vbe + ie * re;
		/* The upper divider resistor. */
		struct design_request rq = { .target = DESIGN_RESULT, .value = ic,
			                         .unknown = DESIGN_FOR_PART,
			                         .series = ESERIES_E24,
			                         .result = "collector_current" };
		assert_int_equal(paramref_find(&pb, "source.network.upper", &rq.part,
		                               err, sizeof err), 0);
		struct design_result res;
		if (design_solve(&pb, &o, &rq, NULL, &res) != 0)
			fail_msg("IC %g, upper: %s", ic, res.message);
		double want = (vcc - vb) / (vb / r2 + ib);
		if (rel(res.rows[0].value, want) > 1e-9)
			fail_msg("IC %g: R1 %.15g, base loop %.15g", ic,
			         res.rows[0].value, want);
		assert_true(rel(res.rows[0].achieved, ic) < 1e-9);
		assert_int_equal(res.nrows, 3);
		/* The emitter resistor with the divider as it is. */
		rq.unknown = DESIGN_FOR_PART;
		assert_int_equal(paramref_find(&pb, "emitter_resistance", &rq.part,
		                               err, sizeof err), 0);
		double vbb = vcc * r2 / (r1 + r2), rb = r1 * r2 / (r1 + r2);
		double want_re = (vbb - vbe) / ie - rb / (beta + 1.0);
		if (want_re > 0.0) {
			if (design_solve(&pb, &o, &rq, NULL, &res) != 0)
				fail_msg("IC %g, RE: %s", ic, res.message);
			if (rel(res.rows[0].value, want_re) > 1e-9)
				fail_msg("IC %g: RE %.15g, base loop %.15g", ic,
				         res.rows[0].value, want_re);
		}
		/* A VCE target: the IC it needs, then the upper resistor. */
		double vce = vcc - ic * rc - ie * re;
		struct design_request rv = { .target = DESIGN_RESULT, .value = vce,
			                         .unknown = DESIGN_FOR_PART,
			                         .series = ESERIES_E24,
			                         .result = "collector_emitter_voltage" };
		assert_int_equal(paramref_find(&pb, "source.network.upper", &rv.part,
		                               err, sizeof err), 0);
		if (design_solve(&pb, &o, &rv, NULL, &res) != 0)
			fail_msg("VCE %g: %s", vce, res.message);
		if (rel(res.rows[0].value, want) > 1e-8)
			fail_msg("VCE %g: R1 %.15g, base loop %.15g", vce,
			         res.rows[0].value, want);
	}
	/* The collector current's range at worst, over the corners, against
	 * a grid of the box (IC rises with beta and with the supply). */
	{
		struct design_request rq = { .target = DESIGN_RESULT, .value = 2.13e-3,
			                         .unknown = DESIGN_FOR_PART,
			                         .series = ESERIES_E24,
			                         .result = "collector_current" };
		assert_int_equal(paramref_find(&pb, "emitter_resistance", &rq.part,
		                               err, sizeof err), 0);
		struct design_result dr;
		assert_int_equal(design_solve(&pb, &o, &rq, NULL, &dr), 0);
		struct problem q;
		struct tol_case c;
		assert_int_equal(design_apply_request(&pb, &rq, dr.rows[2].value, &q),
		                 0);
		tol_case_init(&c, &q, SOURCE_THEVENIN, &o);
		assert_int_equal(tol_case_add(&c, "current_gain", 103.0, 297.0,
		                              TOL_UNIFORM, err, sizeof err), 0);
		add_rel(&c, "source.network.supply", 0.05);
		double lo = INFINITY, hi = -INFINITY;
		for (int a = 0; a < 6; a++)
			for (int b = 0; b < 6; b++) {
				struct problem t = q;
				assert_int_equal(paramref_set(&t, &c.items[0].param,
				                              103.0 + 194.0 * a / 5), 0);
				assert_int_equal(paramref_set(&t, &c.items[1].param,
				                              c.items[1].lo + (c.items[1].hi -
				                              c.items[1].lo) * b / 5), 0);
				struct solve_result sr;
				double y;
				assert_int_equal(solve_problem(&t, &o, &sr), SOLVE_OK);
				assert_int_equal(design_result_value(&t, "collector_current",
				                                     sr.pts[0].v, sr.pts[0].i,
				                                     &y), 0);
				lo = fmin(lo, y);
				hi = fmax(hi, y);
			}
		struct design_worst w;
		assert_int_equal(design_row_worst(&c, NULL, &rq, &w), 0);
		if (rel(w.result_min, lo) > 1e-9 || rel(w.result_max, hi) > 1e-9)
			fail_msg("IC at worst [%.15g, %.15g], grid [%.15g, %.15g]",
			         w.result_min, w.result_max, lo, hi);
	}
	/* A result the model does not have is refused by name. */
	struct design_request none = { .target = DESIGN_RESULT, .value = 1e-3,
		                          .unknown = DESIGN_FOR_PART,
		                          .series = ESERIES_E24,
		                          .result = "drain_current" };
	assert_int_equal(paramref_find(&pb, "source.network.upper", &none.part,
	                               err, sizeof err), 0);
	struct design_result res;
	assert_int_equal(design_solve(&pb, &o, &none, NULL, &res), -1);
	assert_non_null(strstr(res.message, "collector_current"));
	network_destroy(net);

	/* A JFET's source resistor for a drain current. */
	const double idss = 8.73e-3, vp = -2.37;
	struct problem fp;
	memset(&fp, 0, sizeof fp);
	source_spec_thevenin(&spec, 0.0, 390.0);
	assert_int_equal(source_from_spec(&spec, &fp.src, err, sizeof err), 0);
	device_init(&fp.dev, &model_jfet);
	fp.dev.p[FET_K] = idss;
	fp.dev.p[FET_VTH] = vp;
	fp.dev.p[FET_VDD] = 15.3;
	fp.dev.p[FET_RD] = 1.37e3;
	assert_int_equal(device_validate(&fp.dev, err, sizeof err), 0);
	static const double ids[] = { 3.11e-3, 0.917e-3, 6.2e-3 };
	for (size_t k = 0; k < sizeof ids / sizeof ids[0]; k++) {
		struct design_request rq = { .target = DESIGN_CURRENT,
			                         .value = ids[k],
			                         .unknown = DESIGN_FOR_RS,
			                         .series = ESERIES_E24 };
		if (design_solve(&fp, &o, &rq, NULL, &res) != 0)
			fail_msg("ID %g: %s", ids[k], res.message);
		double want = -vp * (1.0 - sqrt(ids[k] / idss)) / ids[k];
		if (rel(res.rows[0].value, want) > 1e-12)
			fail_msg("ID %g: RS %.15g, square law %.15g", ids[k],
			         res.rows[0].value, want);
	}
}

/*
 * A FET whose drain loop carries the source resistor (models/fet.c):
 * changing RS moves the transfer curve too, so the exact RS must be
 * found with the curve bound to each trial RS.  In the triode region the
 * point of the exact row meets the target current to the solver's
 * accuracy, and by the closed form of the square law with the bias line
 * and VDS = VDD - ID (RD + RS) (Shichman & Hodges, IEEE JSSC 1968):
 * ID = k ((VGS - Vth) VDS - VDS^2/2) with VGS = VG - ID RS.
 */
static void test_design_bound_fet(void **state)
{
	(void)state;
	static const double targets[] = { 0.9e-3, 1.1e-3 };
	for (size_t k = 0; k < 2; k++) {
		struct problem pb;
		memset(&pb, 0, sizeof pb);
		device_init(&pb.dev, &model_nmos);
		pb.dev.p[FET_K] = 2.2e-3;
		pb.dev.p[FET_VTH] = 1.35;
		pb.dev.p[FET_VDD] = 12.0;
		pb.dev.p[FET_RD] = 10e3;
		struct source_spec sp;
		char err[128];
		source_spec_thevenin(&sp, 4.7, 1.5e3);
		assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
		problem_bind(&pb);
		struct solve_options o;
		solve_options_init(&o);
		struct design_request rq = { .target = DESIGN_CURRENT,
		                             .value = targets[k],
		                             .unknown = DESIGN_FOR_RS,
		                             .series = ESERIES_E24 };
		struct design_result res;
		if (design_solve(&pb, &o, &rq, NULL, &res) != 0)
			fail_msg("target %g A: %s", targets[k], res.message);
		const struct design_row *r = &res.rows[0];
		assert_int_equal(r->kind, DESIGN_ROW_EXACT);
		assert_true(r->solved);
		if (!(fabs(r->pt.i / targets[k] - 1.0) < 1e-9))
			fail_msg("exact RS %.9g ohm gives %.12g A, target %.12g A",
			         r->value, r->pt.i, targets[k]);
		double id = targets[k], rs = r->value;
		double vgs = 4.7 - id * rs, vds = 12.0 - id * (10e3 + rs);
		double vov = vgs - 1.35;
		double law = vds < vov ? 2.2e-3 * (vov * vds - 0.5 * vds * vds)
		                       : 1.1e-3 * vov * vov;
		if (!(fabs(law / id - 1.0) < 1e-8))
			fail_msg("exact RS %.9g ohm: the square law gives %.12g A there",
			         rs, law);
	}
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_design_cases),
		cmocka_unit_test(test_design_impossible),
		cmocka_unit_test(test_design_ratings),
		cmocka_unit_test(test_design_network_part),
		cmocka_unit_test(test_design_zener_shunt),
		cmocka_unit_test(test_design_nearest),
		cmocka_unit_test(test_design_worst_brute),
		cmocka_unit_test(test_design_stage),
		cmocka_unit_test(test_design_worst_part),
		cmocka_unit_test(test_design_bound_fet),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
