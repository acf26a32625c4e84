/*
 * test_paramref_network.c - sweeps, sensitivities and worst cases on the
 * parts of a network source (paramref.h, PARAMREF_NETWORK).
 *
 * The circuit (invented for the test): a supply V across an upper
 * resistor R1 and a lower resistor R2 in series, a trim current source
 * It pushing current into their junction, and a diode from the junction
 * to ground.  Seen from the diode the network is a Thevenin source with
 *
 *     Vth = V R2 / (R1 + R2) + It R1 R2 / (R1 + R2),   Rth = R1 || R2
 *
 * (the voltage divider and Thevenin's theorem with superposition, common
 * practice; e.g. Alexander & Sadiku, Fundamentals of Electric Circuits,
 * the Thevenin's theorem chapter, from memory).  Every check builds that
 * equivalent by hand and solves it, independent of the network reduction:
 *
 *  - a sweep of R2 against a hand-built equivalent solved at each step;
 *  - sensitivities to each part against a central difference of the whole
 *    reduction and solve;
 *  - the worst case with 5 % on R1 and R2 against the four corners solved
 *    by hand (the diode current is monotone in each resistor, so the
 *    extremes sit at corners; a grid over the box confirms it);
 *  - value semantics: a problem copied and varied leaves the original
 *    and the borrowed network untouched.
 */
#include <math.h>
#include <setjmp.h>
#include <stdbool.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include <cmocka.h>

#include "core/models/models.h"
#include "core/network.h"
#include "core/paramref.h"
#include "core/sensitivity.h"
#include "core/solve.h"
#include "core/sweep.h"
#include "core/tolerance.h"

/* The invented circuit's values. */
#define SUPPLY 13.87        /* V */
#define UPPER 4.717e3       /* ohm */
#define LOWER 2.213e3       /* ohm */
#define TRIM 37.3e-6        /* A */

/* The test's network and the problem that borrows it. */
struct fixture {
	struct network *net;
	struct problem pb;
};

/* Set up the diode of the fixture. */
static void fixture_device(struct device *d)
{
	device_init(d, &model_diode);
	d->p[DIODE_IS] = 4.31e-15;
	d->p[DIODE_N] = 1.73;
	d->p[DIODE_RS] = 0.917;
	d->p[DIODE_TEMP] = 31.4;
	char err[200];
	if (device_validate(d, err, sizeof err) != 0)
		fail_msg("%s", err);
}

/* Build the network and its problem. */
static void fixture_init(struct fixture *f)
{
	f->net = network_create();
	assert_non_null(f->net);
	assert_true(network_add_part(f->net, "supply", NETWORK_VOLTAGE_SOURCE,
	                             SUPPLY, "gnd", "top") >= 0);
	assert_true(network_add_part(f->net, "upper divider", NETWORK_RESISTOR,
	                             UPPER, "top", "mid") >= 0);
	assert_true(network_add_part(f->net, "lower divider", NETWORK_RESISTOR,
	                             LOWER, "mid", "gnd") >= 0);
	assert_true(network_add_part(f->net, "trim", NETWORK_CURRENT_SOURCE,
	                             TRIM, "gnd", "mid") >= 0);
	assert_int_equal(network_set_terminals(f->net, "mid", "gnd"), 0);
	memset(&f->pb, 0, sizeof f->pb);
	struct source_spec spec;
	char err[200];
	assert_int_equal(network_reduce(f->net, NULL, &spec, NULL), NETWORK_OK);
	assert_int_equal(source_from_spec(&spec, &f->pb.src, err, sizeof err), 0);
	f->pb.net = f->net;
	fixture_device(&f->pb.dev);
}

/* The one operating point of the diode fed by the hand-built equivalent. */
static void hand_point(double v, double r1, double r2, double it,
                       double *vd, double *id)
{
	struct problem pb;
	memset(&pb, 0, sizeof pb);
	struct source_spec spec;
	char err[200];
	double vth = v * r2 / (r1 + r2) + it * r1 * r2 / (r1 + r2);
	double rth = r1 * r2 / (r1 + r2);
	source_spec_thevenin(&spec, vth, rth);
	assert_int_equal(source_from_spec(&spec, &pb.src, err, sizeof err), 0);
	fixture_device(&pb.dev);
	struct solve_options o;
	solve_options_init(&o);
	struct solve_result res;
	assert_int_equal(solve_problem(&pb, &o, &res), SOLVE_OK);
	assert_int_equal(res.n, 1);
	*vd = res.pts[0].v;
	*id = res.pts[0].i;
}

/* The one operating point of PB. */
static void pb_point(const struct problem *pb, double *vd, double *id)
{
	struct solve_options o;
	solve_options_init(&o);
	struct solve_result res;
	assert_int_equal(solve_problem(pb, &o, &res), SOLVE_OK);
	assert_int_equal(res.n, 1);
	*vd = res.pts[0].v;
	*id = res.pts[0].i;
}

/* |A - B| within REL of |B|, with a message. */
static void check_rel(double a, double b, double rel, const char *what)
{
	if (!(fabs(a - b) <= rel * fabs(b)))
		fail_msg("%s: %.17g vs %.17g (rel %.3g)", what, a, b,
		         fabs(a - b) / fabs(b));
}

/* Keys, units, refusals and checks. */
static void test_keys(void **state)
{
	(void)state;
	struct fixture f;
	fixture_init(&f);
	static const struct {
		const char *key;
		enum qty_kind unit;
		double value;
	} cases[] = {
		{ "source.network.supply", QTY_VOLTAGE, SUPPLY },
		{ "source.network.upper divider", QTY_RESISTANCE, UPPER },
		{ "source.network.lower divider", QTY_RESISTANCE, LOWER },
		{ "source.network.trim", QTY_CURRENT, TRIM },
	};
	char err[600];
	for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
		struct paramref r;
		assert_int_equal(paramref_find(&f.pb, cases[k].key, &r, err,
		                               sizeof err), 0);
		assert_int_equal(r.kind, PARAMREF_NETWORK);
		assert_int_equal(r.index, (int)k);
		assert_string_equal(paramref_key(&f.pb, &r), cases[k].key);
		assert_int_equal(paramref_unit(&f.pb, &r), cases[k].unit);
		assert_true(paramref_get(&f.pb, &r) == cases[k].value);
		assert_int_equal(paramref_check(&f.pb, &r, NAN, NULL, 0), -1);
		assert_int_equal(paramref_check(&f.pb, &r, cases[k].value * 1.07,
		                                NULL, 0), 0);
	}
	/* A resistor must stay above 0 ohm; a source may change sign. */
	struct paramref r;
	assert_int_equal(paramref_find(&f.pb, "source.network.lower divider", &r,
	                               err, sizeof err), 0);
	assert_int_equal(paramref_check(&f.pb, &r, 0.0, err, sizeof err), -1);
	assert_int_equal(paramref_check(&f.pb, &r, -3.3e3, NULL, 0), -1);
	assert_int_equal(paramref_set(&f.pb, &r, -3.3e3), -1);
	assert_int_equal(paramref_find(&f.pb, "source.network.trim", &r, err,
	                               sizeof err), 0);
	assert_int_equal(paramref_check(&f.pb, &r, -12.9e-6, NULL, 0), 0);
	/* The equivalent's keys are refused, pointing at the parts. */
	static const char *const refused[] = { "vs", "rs", "is", "rp" };
	for (size_t k = 0; k < 4; k++) {
		err[0] = '\0';
		assert_int_equal(paramref_find(&f.pb, refused[k], &r, err,
		                               sizeof err), -1);
		assert_non_null(strstr(err, "source.network.lower divider"));
	}
	/* An unknown part lists the real ones. */
	assert_int_equal(paramref_find(&f.pb, "source.network.lower", &r, err,
	                               sizeof err), -1);
	assert_non_null(strstr(err, "source.network.upper divider"));
	/* A part key on a problem with no network. */
	struct problem plain = f.pb;
	plain.net = NULL;
	assert_int_equal(paramref_find(&plain, "source.network.trim", &r, err,
	                               sizeof err), -1);
	/* paramref_all: the parts, then the device; no vs/rs. */
	struct paramref all[PARAMREF_MAX];
	size_t n = paramref_all(&f.pb, all, PARAMREF_MAX);
	assert_int_equal(n, 4 + f.pb.dev.type->nparams);
	for (size_t k = 0; k < 4; k++) {
		assert_int_equal(all[k].kind, PARAMREF_NETWORK);
		assert_string_equal(paramref_key(&f.pb, &all[k]), cases[k].key);
	}
	for (size_t k = 4; k < n; k++)
		assert_int_equal(all[k].kind, PARAMREF_DEVICE);
	network_destroy(f.net);
}

/* Setting a part reduces again, on the copy only. */
static void test_set_copy(void **state)
{
	(void)state;
	struct fixture f;
	fixture_init(&f);
	struct paramref r1, r2;
	char err[600];
	assert_int_equal(paramref_find(&f.pb, "source.network.upper divider", &r1,
	                               err, sizeof err), 0);
	assert_int_equal(paramref_find(&f.pb, "source.network.lower divider", &r2,
	                               err, sizeof err), 0);
	struct problem q = f.pb;
	double a = 5.623e3, b = 1.871e3;
	assert_int_equal(paramref_set(&q, &r1, a), 0);
	assert_int_equal(paramref_set(&q, &r2, b), 0);
	assert_int_equal(paramref_set(&q, &r2, b * 1.013), 0); /* again */
	b *= 1.013;
	/* The copy's equivalent is the divider with both new values. */
	check_rel(q.src.voc, SUPPLY * b / (a + b) + TRIM * a * b / (a + b), 1e-13,
	          "copy voc");
	check_rel(q.src.r, a * b / (a + b), 1e-13, "copy r");
	assert_true(paramref_get(&q, &r1) == a);
	assert_true(paramref_get(&q, &r2) == b);
	/* The original problem and the network did not move. */
	assert_true(paramref_get(&f.pb, &r1) == UPPER);
	assert_true(paramref_get(&f.pb, &r2) == LOWER);
	assert_true(network_part(f.net, 1)->value == UPPER);
	assert_true(network_part(f.net, 2)->value == LOWER);
	check_rel(f.pb.src.r, UPPER * LOWER / (UPPER + LOWER), 1e-13,
	          "original r");
	network_destroy(f.net);
}

/* A sweep of the lower resistor equals the hand-built equivalents. */
static void test_sweep_lower(void **state)
{
	(void)state;
	struct fixture f;
	fixture_init(&f);
	struct sweep_spec sp = { .from = 1.137e3, .to = 9.61e3, .points = 9,
	                         .scale = SWEEP_LOG };
	char err[600];
	assert_int_equal(paramref_find(&f.pb, "source.network.lower divider",
	                               &sp.param, err, sizeof err), 0);
	struct solve_options o;
	solve_options_init(&o);
	struct sweep_result res;
	if (sweep_run(&f.pb, &o, &sp, &res) != 0)
		fail_msg("%s", res.message);
	assert_int_equal(res.nrows, sp.points);
	assert_int_equal(res.failed, 0);
	for (size_t k = 0; k < res.nrows; k++) {
		const struct sweep_row *row = &res.rows[k];
		check_rel(row->value, sweep_value(&sp, row->step), 1e-15, "value");
		double v, i;
		hand_point(SUPPLY, UPPER, row->value, TRIM, &v, &i);
		check_rel(row->v, v, 1e-9, "sweep voltage");
		check_rel(row->i, i, 1e-9, "sweep current");
	}
	/* The current rises with the lower resistor's share of the supply. */
	for (size_t k = 1; k < res.nrows; k++)
		assert_true(res.rows[k].i > res.rows[k - 1].i);
	sweep_result_fini(&res);
	assert_true(network_part(f.net, 2)->value == LOWER);
	network_destroy(f.net);
}

/* Sensitivities to every part against a difference of reduce + solve. */
static void test_sensitivity_parts(void **state)
{
	(void)state;
	struct fixture f;
	fixture_init(&f);
	double v0, i0;
	pb_point(&f.pb, &v0, &i0);
	static const char *const keys[] = {
		"source.network.supply", "source.network.upper divider",
		"source.network.lower divider", "source.network.trim",
	};
	for (size_t k = 0; k < 4; k++) {
		struct paramref r;
		char err[600];
		assert_int_equal(paramref_find(&f.pb, keys[k], &r, err, sizeof err),
		                 0);
		struct sensitivity s;
		assert_int_equal(sensitivity_at(&f.pb, v0, i0, &r, &s), 0);
		/* A central difference of the whole thing, step 1e-4 relative
		 * (truncation O(h^2) ~ 1e-8 relative). */
		double p = paramref_get(&f.pb, &r), h = 1e-4 * fabs(p);
		struct problem up = f.pb, down = f.pb;
		assert_int_equal(paramref_set(&up, &r, p + h), 0);
		assert_int_equal(paramref_set(&down, &r, p - h), 0);
		double vu, iu, vd, id;
		pb_point(&up, &vu, &iu);
		pb_point(&down, &vd, &id);
		double dv = (vu - vd) / (2.0 * h), di = (iu - id) / (2.0 * h);
		if (!(fabs(s.dv - dv) <= 1e-6 * fabs(dv)))
			fail_msg("%s dV/dp %.10g vs %.10g", keys[k], s.dv, dv);
		if (!(fabs(s.di - di) <= 1e-6 * fabs(di)))
			fail_msg("%s dI/dp %.10g vs %.10g", keys[k], s.di, di);
		/* And by hand: the same difference on the built equivalent. */
		double hv[2], hi[2];
		for (int e = 0; e < 2; e++) {
			double x = p + (e ? h : -h);
			hand_point(k == 0 ? x : SUPPLY, k == 1 ? x : UPPER,
			           k == 2 ? x : LOWER, k == 3 ? x : TRIM, &hv[e], &hi[e]);
		}
		double hdi = (hi[1] - hi[0]) / (2.0 * h);
		if (!(fabs(s.di - hdi) <= 1e-6 * fabs(hdi)))
			fail_msg("%s dI/dp %.10g vs hand %.10g", keys[k], s.di, hdi);
	}
	/* sensitivity_all covers the parts too. */
	struct sensitivity all[PARAMREF_MAX];
	size_t n = sensitivity_all(&f.pb, v0, i0, all, PARAMREF_MAX);
	size_t parts = 0;
	for (size_t k = 0; k < n; k++)
		parts += all[k].param.kind == PARAMREF_NETWORK;
	assert_int_equal(parts, 4);
	network_destroy(f.net);
}

/* Worst case with 5 % on both divider resistors equals the corners. */
static void test_worst_case(void **state)
{
	(void)state;
	struct fixture f;
	fixture_init(&f);
	struct solve_options o;
	solve_options_init(&o);
	struct tol_case c;
	tol_case_init(&c, &f.pb, SOURCE_THEVENIN, &o);
	char err[600];
	const double frac = 0.05;
	assert_int_equal(tol_case_add(&c, "source.network.upper divider",
	                              UPPER * (1 - frac), UPPER * (1 + frac),
	                              TOL_UNIFORM, err, sizeof err), 0);
	assert_int_equal(tol_case_add(&c, "source.network.lower divider",
	                              LOWER * (1 - frac), LOWER * (1 + frac),
	                              TOL_UNIFORM, err, sizeof err), 0);
	struct tol_worst w;
	if (tol_worst_case(&c, &w, err, sizeof err) != 0)
		fail_msg("%s", err);
	assert_int_equal(w.failed, 0);
	double imin = INFINITY, imax = -INFINITY, vmin = INFINITY,
	       vmax = -INFINITY;
	for (int a = 0; a < 2; a++) {
		for (int b = 0; b < 2; b++) {
			double v, i;
			hand_point(SUPPLY, UPPER * (a ? 1 + frac : 1 - frac),
			           LOWER * (b ? 1 + frac : 1 - frac), TRIM, &v, &i);
			imin = fmin(imin, i);
			imax = fmax(imax, i);
			vmin = fmin(vmin, v);
			vmax = fmax(vmax, v);
		}
	}
	/* A grid over the box finds nothing beyond the corners (monotone). */
	for (int a = 0; a <= 6; a++) {
		for (int b = 0; b <= 6; b++) {
			double v, i;
			hand_point(SUPPLY, UPPER * (1 - frac + frac * a / 3.0),
			           LOWER * (1 - frac + frac * b / 3.0), TRIM, &v, &i);
			assert_true(i >= imin * (1 - 1e-12) && i <= imax * (1 + 1e-12));
		}
	}
	check_rel(w.min[TOL_CURRENT].value, imin, 1e-9, "min current");
	check_rel(w.max[TOL_CURRENT].value, imax, 1e-9, "max current");
	check_rel(w.min[TOL_VOLTAGE].value, vmin, 1e-9, "min voltage");
	check_rel(w.max[TOL_VOLTAGE].value, vmax, 1e-9, "max voltage");
	double v0, i0;
	hand_point(SUPPLY, UPPER, LOWER, TRIM, &v0, &i0);
	check_rel(w.nominal[TOL_CURRENT], i0, 1e-9, "nominal current");
	/* The nominal network is untouched by the corners. */
	assert_true(network_part(f.net, 1)->value == UPPER);
	assert_true(network_part(f.net, 2)->value == LOWER);
	network_destroy(f.net);
}

/* A small fixed-seed generator (xorshift64*, Vigna 2016): U[0, 1). */
static double set_all_uniform(uint64_t *s)
{
	*s ^= *s >> 12;
	*s ^= *s << 25;
	*s ^= *s >> 27;
	return (double)((*s * 0x2545F4914F6CDD1DULL) >> 11) * 0x1p-53;
}

/* Two problems alike in every value a solve reads, bit for bit. */
static void check_same_problem(const struct problem *a,
                               const struct problem *b, const char *what)
{
	if (memcmp(&a->src.voc, &b->src.voc, sizeof(double)) != 0 ||
	    memcmp(&a->src.r, &b->src.r, sizeof(double)) != 0 ||
	    memcmp(&a->src.isc, &b->src.isc, sizeof(double)) != 0)
		fail_msg("%s: source (%.17g V, %.17g ohm, %.17g A) against "
		         "(%.17g V, %.17g ohm, %.17g A)", what, a->src.voc, a->src.r,
		         a->src.isc, b->src.voc, b->src.r, b->src.isc);
	if (memcmp(a->dev.p, b->dev.p, sizeof a->dev.p) != 0)
		fail_msg("%s: device values differ (the bound source?)", what);
	assert_int_equal(a->net_nset, b->net_nset);
	for (size_t k = 0; k < a->net_nset; k++) {
		assert_int_equal(a->net_part[k], b->net_part[k]);
		assert_memory_equal(&a->net_value[k], &b->net_value[k],
		                    sizeof(double));
	}
}

/*
 * Setting every part at once and reducing the network once
 * (paramref_set_all, tol_case_corner) gives exactly what setting them one
 * by one gives, each reducing the network again: over random ladders of
 * 2 to 12 rungs with random values (invented), with a diode and with an
 * n-channel MOSFET, whose curve takes the source's resistance (bind), and
 * a device parameter among the parts.  The reduction of the same values
 * is the same arithmetic, so the sources must agree bit for bit, and so
 * must every operating point and the worst case's corners.
 */
static void test_set_all_equals_each(void **state)
{
	(void)state;
	uint64_t s = 0x5C0FFEE2385ULL;
	for (int trial = 0; trial < 60; trial++) {
		size_t rungs = 2 + (size_t)(set_all_uniform(&s) * 11.0);
		struct network *net = network_create();
		assert_non_null(net);
		assert_true(network_add_part(net, "supply", NETWORK_VOLTAGE_SOURCE,
		                             3.0 + 20.0 * set_all_uniform(&s), "gnd",
		                             "n0") >= 0);
		char a[32], b[32], name[32];
		for (size_t k = 0; k < rungs; k++) {
			snprintf(a, sizeof a, "n%zu", k);
			snprintf(b, sizeof b, "n%zu", k + 1);
			snprintf(name, sizeof name, "series %zu", k);
			assert_true(network_add_part(net, name, NETWORK_RESISTOR,
			                             50.0 + 5e3 * set_all_uniform(&s), a,
			                             b) >= 0);
			snprintf(name, sizeof name, "shunt %zu", k);
			assert_true(network_add_part(net, name, NETWORK_RESISTOR,
			                             1e3 + 5e4 * set_all_uniform(&s), b,
			                             "gnd") >= 0);
		}
		snprintf(a, sizeof a, "n%zu", rungs);
		assert_int_equal(network_set_terminals(net, a, "gnd"), 0);
		struct problem pb;
		memset(&pb, 0, sizeof pb);
		struct source_spec spec;
		char err[600];
		assert_int_equal(network_reduce(net, NULL, &spec, NULL), NETWORK_OK);
		assert_int_equal(source_from_spec(&spec, &pb.src, err, sizeof err), 0);
		pb.net = net;
		bool fet = trial % 2 == 1;
		if (fet) {
			device_init(&pb.dev, &model_nmos);
			pb.dev.p[FET_K] = 1.7e-3;
			pb.dev.p[FET_VTH] = 1.13;
			pb.dev.p[FET_VDD] = 14.1;
			pb.dev.p[FET_RD] = 1.37e3;
		} else {
			fixture_device(&pb.dev);
		}
		problem_bind(&pb);
		/* The parts varied: every series resistor and some shunts, one
		 * device parameter among them, and the supply last. */
		struct solve_options o;
		solve_options_init(&o);
		struct tol_case c;
		tol_case_init(&c, &pb, SOURCE_THEVENIN, &o);
		for (size_t k = 0; k < rungs && c.nitems < TOL_MAX_CORNER_ITEMS - 2;
		     k++) {
			for (int shunt = 0; shunt < 2; shunt++) {
				if (shunt && set_all_uniform(&s) < 0.6)
					continue;
				if (c.nitems >= TOL_MAX_CORNER_ITEMS - 2)
					break;
				size_t part = 1 + 2 * k + (size_t)shunt;
				double x = network_part(net, part)->value;
				double f = 0.01 + 0.1 * set_all_uniform(&s);
				snprintf(name, sizeof name, "source.network.%s",
				         network_part(net, part)->name);
				assert_int_equal(tol_case_add(&c, name, x * (1 - f),
				                              x * (1 + f), TOL_UNIFORM, err,
				                              sizeof err), 0);
			}
			if (k == 0) {
				const char *key = fet ? "threshold_voltage" : "ideality";
				double x = fet ? 1.13 : 1.73;
				assert_int_equal(tol_case_add(&c, key, x * 0.97, x * 1.03,
				                              TOL_UNIFORM, err, sizeof err), 0);
			}
		}
		assert_int_equal(tol_case_add(&c, "source.network.supply",
		                              network_part(net, 0)->value * 0.95,
		                              network_part(net, 0)->value * 1.05,
		                              TOL_UNIFORM, err, sizeof err), 0);
		struct network *scratch = network_copy(net);
		assert_non_null(scratch);
		size_t corners = (size_t)1 << c.nitems;
		for (size_t m = 0; m < corners; m += 1 + corners / 24) {
			struct problem each = c.pb, once = c.pb, kept = c.pb;
			double x[TOL_MAX_ITEMS];
			struct paramref refs[TOL_MAX_ITEMS];
			for (size_t k = 0; k < c.nitems; k++) {
				refs[k] = c.items[k].param;
				x[k] = (m >> k) & 1u ? c.items[k].hi : c.items[k].lo;
				assert_int_equal(paramref_set(&each, &refs[k], x[k]), 0);
			}
			assert_int_equal(paramref_set_all(&once, refs, x, c.nitems, NULL),
			                 0);
			assert_int_equal(tol_case_corner(&c, m, &kept, scratch), 0);
			check_same_problem(&once, &each, "set_all");
			check_same_problem(&kept, &each, "tol_case_corner");
			struct solve_result r1, r2;
			assert_int_equal(solve_problem(&each, &o, &r1),
			                 solve_problem(&kept, &o, &r2));
			assert_int_equal(r1.n, r2.n);
			for (size_t k = 0; k < r1.n; k++) {
				assert_memory_equal(&r1.pts[k].v, &r2.pts[k].v, sizeof(double));
				assert_memory_equal(&r1.pts[k].i, &r2.pts[k].i, sizeof(double));
			}
		}
		network_destroy(scratch);
		/* The borrowed network never moved. */
		for (size_t k = 0; k < c.nitems; k++)
			if (c.items[k].param.kind == PARAMREF_NETWORK)
				assert_true(paramref_get(&pb, &c.items[k].param) ==
				            network_part(net, (size_t)c.items[k].param.index)
				                ->value);
		network_destroy(net);
	}
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_keys),
		cmocka_unit_test(test_set_copy),
		cmocka_unit_test(test_sweep_lower),
		cmocka_unit_test(test_sensitivity_parts),
		cmocka_unit_test(test_worst_case),
		cmocka_unit_test(test_set_all_equals_each),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
