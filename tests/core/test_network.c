/*
 * test_network.c - the network reduction (src/core/network.c) against
 * closed-form circuit formulas, against an independent dense nodal solve
 * with GSL's LU on random networks, against a Newton solve of the whole
 * network with a diode in it, and on every structural error.
 *
 * The closed forms are the standard ones of Thevenin's theorem, the voltage
 * divider, parallel resistances, superposition and Millman's theorem (see
 * Alexander & Sadiku, Fundamentals of Electric Circuits, the chapters on
 * circuit theorems; Millman, Proc. IRE 28(9), 1940).  Every circuit and
 * value here is invented for the test.
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
#include <gsl/gsl_linalg.h>
#include <gsl/gsl_rng.h>

#include "core/models/models.h"
#include "core/network.h"
#include "core/solve.h"

/* |GOT - WANT| <= REL * |WANT| (or both exactly equal), else fail naming WHAT. */
static void check_rel(double got, double want, double rel, const char *what)
{
	if (got == want)
		return;
	double err = fabs(got - want);
	if (!(err <= rel * fabs(want)))
		fail_msg("%s: got %.17g, want %.17g (rel err %.3g > %.3g)", what, got,
		         want, err / fabs(want), rel);
}

/* Add a part to NET or fail the test. */
static void add(struct network *net, const char *name, enum network_kind k,
                double value, const char *from, const char *to)
{
	assert_true(network_add_part(net, name, k, value, from, to) >= 0);
}

#define R NETWORK_RESISTOR
#define VS NETWORK_VOLTAGE_SOURCE
#define CS NETWORK_CURRENT_SOURCE

/* Parallel resistance of A and B (the product-over-sum formula). */
static double par(double a, double b)
{
	return a * b / (a + b);
}

/* ---- closed-form cases --------------------------------------------------- */

/* One closed-form case: a builder, and the expected Voc / Rth / Isc. */
struct closed_case {
	const char *name;
	void (*build)(struct network *net, const double *x);
	double x[8];                       /* the case's part values */
	void (*expect)(const double *x, struct network_thevenin *th);
};

/*
 * Divider: supply E (x0) from ground to "top", R1 (x1) top-out, R2 (x2)
 * out-ground; device across out/ground.
 */
static void build_divider(struct network *net, const double *x)
{
	add(net, "supply", VS, x[0], "ground", "top");
	add(net, "upper", R, x[1], "top", "out");
	add(net, "lower", R, x[2], "out", "ground");
	assert_int_equal(network_set_terminals(net, "out", "ground"), 0);
}

/* Voltage divider and parallel resistance (Alexander & Sadiku, theorems). */
static void expect_divider(const double *x, struct network_thevenin *th)
{
	th->voc = x[0] * x[2] / (x[1] + x[2]);
	th->rth = par(x[1], x[2]);
	th->isc = x[0] / x[1];
}

/*
 * Wheatstone bridge: supply E (x0) from "bottom" to "top"; arms R1 (x1)
 * top-a, R2 (x2) a-bottom, R3 (x3) top-b, R4 (x4) b-bottom; device across
 * a (+) and b (-).  The reference is b, not the supply's negative end.
 */
static void build_bridge(struct network *net, const double *x)
{
	add(net, "bridge supply", VS, x[0], "bottom", "top");
	add(net, "arm 1", R, x[1], "top", "a");
	add(net, "arm 2", R, x[2], "a", "bottom");
	add(net, "arm 3", R, x[3], "top", "b");
	add(net, "arm 4", R, x[4], "b", "bottom");
	assert_int_equal(network_set_terminals(net, "a", "b"), 0);
}

/*
 * Bridge output: the difference of two dividers, and with the ideal supply
 * shorted the two parallel pairs in series (Wheatstone bridge, common
 * practice; Alexander & Sadiku, circuit theorems).
 */
static void expect_bridge(const double *x, struct network_thevenin *th)
{
	th->voc = x[0] * (x[2] / (x[1] + x[2]) - x[4] / (x[3] + x[4]));
	th->rth = par(x[1], x[2]) + par(x[3], x[4]);
	th->isc = th->voc / th->rth;
}

/*
 * Superposition: E1 (x0) behind R1 (x1), E2 (x2) behind R3 (x3), a current
 * source J (x4) into "out", R2 (x5) from out to ground.  E2 is upside down
 * (its + at ground) to test the sign convention.
 */
static void build_superpose(struct network *net, const double *x)
{
	add(net, "E1", VS, x[0], "ground", "e1");
	add(net, "R1", R, x[1], "e1", "out");
	add(net, "E2", VS, x[2], "e2", "ground");
	add(net, "R3", R, x[3], "e2", "out");
	add(net, "J", CS, x[4], "ground", "out");
	add(net, "R2", R, x[5], "out", "ground");
	assert_int_equal(network_set_terminals(net, "out", "ground"), 0);
}

/*
 * Millman's theorem (Millman, Proc. IRE 28(9), 1940), i.e. superposition
 * of each source alone: Voc = (E1 G1 - E2 G3 + J) / (G1 + G2 + G3).
 */
static void expect_superpose(const double *x, struct network_thevenin *th)
{
	double g1 = 1.0 / x[1], g3 = 1.0 / x[3], g2 = 1.0 / x[5];
	th->voc = (x[0] * g1 - x[2] * g3 + x[4]) / (g1 + g2 + g3);
	th->rth = 1.0 / (g1 + g2 + g3);
	th->isc = th->voc / th->rth;
}

/*
 * A chain of two voltage sources (x0, x1) across the terminals, with a
 * resistor (x2) across them and one (x3) hanging between the chain's
 * middle and the positive terminal.
 */
static void build_stiff(struct network *net, const double *x)
{
	add(net, "low cell", VS, x[0], "minus", "mid");
	add(net, "high cell", VS, x[1], "mid", "plus");
	add(net, "bleeder", R, x[2], "plus", "minus");
	add(net, "tap", R, x[3], "mid", "plus");
	assert_int_equal(network_set_terminals(net, "plus", "minus"), 0);
}

/* Series voltage sources add; Rth = 0 (ideal voltage source, common practice). */
static void expect_stiff(const double *x, struct network_thevenin *th)
{
	th->voc = x[0] + x[1];
	th->rth = 0.0;
	th->isc = NAN;
}

/*
 * Only current sources reach the positive terminal's group {x, plus}: J1
 * (x0) from ground into x, R (x1) from x to plus, J2 (x2) out of plus to
 * ground; a side branch R (x3) ground-y with J3 (x4) from y back to ground
 * does not touch the group.
 */
static void build_norton(struct network *net, const double *x)
{
	add(net, "feed", CS, x[0], "ground", "x");
	add(net, "series", R, x[1], "x", "plus");
	add(net, "bleed", CS, x[2], "plus", "ground");
	add(net, "side load", R, x[3], "ground", "y");
	add(net, "side feed", CS, x[4], "y", "ground");
	assert_int_equal(network_set_terminals(net, "plus", "ground"), 0);
}

/*
 * KCL over the cut around the positive terminal's group: the device takes
 * J1 - J2 whatever its voltage; Rth is infinite (common practice).
 */
static void expect_norton(const double *x, struct network_thevenin *th)
{
	th->voc = NAN;
	th->rth = INFINITY;
	th->isc = x[0] - x[2];
}

/*
 * Series chain: E (x0) and R1 (x1) and R2 (x2) in one loop with the device;
 * the device's terminals reversed relative to the source.
 */
static void build_series_reversed(struct network *net, const double *x)
{
	add(net, "cell", VS, x[0], "n0", "n1");
	add(net, "first", R, x[1], "n1", "n2");
	add(net, "second", R, x[2], "n2", "n3");
	assert_int_equal(network_set_terminals(net, "n0", "n3"), 0);
}

/* Series resistances add; reversing the terminals negates Voc. */
static void expect_series_reversed(const double *x, struct network_thevenin *th)
{
	th->voc = -x[0];
	th->rth = x[1] + x[2];
	th->isc = th->voc / th->rth;
}

static const struct closed_case closed_cases[] = {
	{ "divider", build_divider, { 12.37, 47.3e3, 8.21e3 }, expect_divider },
	{ "divider, milliohm", build_divider, { 3.287, 0.0317, 2.741e-3 },
	  expect_divider },
	{ "bridge, near balance", build_bridge,
	  { 9.613, 1.237e3, 3.391e3, 1.241e3, 3.387e3 }, expect_bridge },
	{ "bridge, unbalanced", build_bridge,
	  { 24.17, 2.213e4, 517.3, 93.71, 6.823e5 }, expect_bridge },
	{ "superposition", build_superpose,
	  { 5.173, 2.207e3, 3.319, 1.471e3, 2.893e-3, 6.791e3 }, expect_superpose },
	{ "superposition, opposing", build_superpose,
	  { -7.213, 331.7, 14.29, 87.13, -1.183e-2, 52.91 }, expect_superpose },
	{ "voltage-source chain", build_stiff, { 1.487, 3.613, 219.7, 73.19 },
	  expect_stiff },
	{ "current sources only", build_norton,
	  { 7.319e-3, 4.471e3, 2.137e-3, 813.3, 1.113e-3 }, expect_norton },
	{ "series, reversed terminals", build_series_reversed,
	  { 6.281, 1.873e3, 2.417e2 }, expect_series_reversed },
};

/* Every closed-form case: Voc, Rth and Isc, and the source spec's form. */
static void test_closed_forms(void **state)
{
	(void)state;
	for (size_t c = 0; c < sizeof closed_cases / sizeof closed_cases[0]; c++) {
		const struct closed_case *cc = &closed_cases[c];
		struct network *net = network_create();
		assert_non_null(net);
		cc->build(net, cc->x);
		struct network_thevenin th, want;
		struct source_spec spec;
		struct network_diag d;
		enum network_status st = network_reduce(net, &th, &spec, &d);
		if (st != NETWORK_OK)
			fail_msg("%s: %s: %s", cc->name, network_status_name(st),
			         d.message);
		cc->expect(cc->x, &want);
		char what[96];
		snprintf(what, sizeof what, "%s: rth", cc->name);
		if (isinf(want.rth)) {
			if (!isinf(th.rth))
				fail_msg("%s: rth %g, want infinite", cc->name, th.rth);
			assert_int_equal(spec.form, SOURCE_NORTON);
			assert_true(isinf(spec.rp));
			snprintf(what, sizeof what, "%s: isc", cc->name);
			check_rel(th.isc, want.isc, 1e-14, what);
			check_rel(spec.is, want.isc, 1e-14, what);
		} else {
			check_rel(th.rth, want.rth, 1e-13, what);
			snprintf(what, sizeof what, "%s: voc", cc->name);
			/* near balance the bridge output cancels: 1e-11 there */
			check_rel(th.voc, want.voc, 1e-11, what);
			assert_int_equal(spec.form, SOURCE_THEVENIN);
			assert_true(spec.vs == th.voc && spec.rs == th.rth);
			if (want.rth == 0.0)
				assert_true(th.rth == 0.0 && isnan(th.isc));
			else {
				snprintf(what, sizeof what, "%s: isc", cc->name);
				check_rel(th.isc, want.isc, 1e-11, what);
			}
		}
		struct source src;
		char err[128];
		assert_int_equal(source_from_spec(&spec, &src, err, sizeof err), 0);
		network_destroy(net);
	}
}

/* ---- random networks against GSL ---------------------------------------- */

#define N_RANDOM 300
#define MAX_NODES 36

/* A uniform double in [LO, HI). */
static double rnd_uniform(gsl_rng *rng, double lo, double hi)
{
	return lo + (hi - lo) * gsl_rng_uniform(rng);
}

/* A log-uniform double in [LO, HI). */
static double rnd_log(gsl_rng *rng, double lo, double hi)
{
	return exp(rnd_uniform(rng, log(lo), log(hi)));
}

/*
 * The plain nodal model the test keeps beside the network: conductance
 * stamps between main nodes 0..n-1 and current injections; a voltage
 * source E always sits in series with a resistor R through its own inner
 * node, which this model folds into a Norton branch (conductance 1/R, a
 * current E/R from the source's minus end to the resistor's far end).
 */
struct nodal {
	size_t n;
	double g[MAX_NODES][MAX_NODES];
	double inj[MAX_NODES];
	/* inner nodes of the series branches: node name index -> (a, E) */
	size_t ninner;
	size_t inner_from[64];
	double inner_e[64];
};

/* Node name of main node K (or inner node K) into BUF. */
static const char *node_label(char *buf, size_t n, const char *pfx, size_t k)
{
	snprintf(buf, n, "%s%zu", pfx, k);
	return buf;
}

/* Stamp a conductance G between main nodes A and B. */
static void nodal_g(struct nodal *nd, size_t a, size_t b, double g)
{
	nd->g[a][a] += g;
	nd->g[b][b] += g;
	nd->g[a][b] -= g;
	nd->g[b][a] -= g;
}

/* Add a random resistor between main nodes A and B to both models. */
static void rand_resistor(struct network *net, struct nodal *nd,
                          gsl_rng *rng, size_t a, size_t b)
{
	char na[32], nb[32], name[32];
	double r = rnd_log(rng, 47.3, 2.13e5);
	snprintf(name, sizeof name, "R%zu", network_part_count(net));
	add(net, name, R, r, node_label(na, sizeof na, "n", a),
	    node_label(nb, sizeof nb, "n", b));
	nodal_g(nd, a, b, 1.0 / r);
}

/* Build a random connected network of N main nodes into NET and ND. */
static void rand_network(struct network *net, struct nodal *nd, gsl_rng *rng,
                         size_t n)
{
	memset(nd, 0, sizeof *nd);
	nd->n = n;
	size_t deg[MAX_NODES] = { 0 };
	char na[32], nb[32], nm[32], name[32];
	/* a random spanning tree of resistors */
	for (size_t k = 1; k < n; k++) {
		size_t p = gsl_rng_uniform_int(rng, k);
		rand_resistor(net, nd, rng, p, k);
		deg[p]++;
		deg[k]++;
	}
	size_t extra = gsl_rng_uniform_int(rng, n + 1);
	for (size_t e = 0; e < extra; e++) {
		size_t a = gsl_rng_uniform_int(rng, n), b = gsl_rng_uniform_int(rng, n);
		if (a == b)
			continue;
		rand_resistor(net, nd, rng, a, b);
		deg[a]++;
		deg[b]++;
	}
	/* current sources */
	size_t ncs = gsl_rng_uniform_int(rng, n / 2 + 2);
	for (size_t e = 0; e < ncs; e++) {
		size_t a = gsl_rng_uniform_int(rng, n), b = gsl_rng_uniform_int(rng, n);
		if (a == b)
			continue;
		double j = rnd_uniform(rng, -9.137e-3, 9.137e-3);
		snprintf(name, sizeof name, "J%zu", network_part_count(net));
		add(net, name, CS, j, node_label(na, sizeof na, "n", a),
		    node_label(nb, sizeof nb, "n", b));
		nd->inj[a] -= j;
		nd->inj[b] += j;
		deg[a]++;
		deg[b]++;
	}
	/* voltage sources in series with a resistor through an inner node */
	size_t nvs = gsl_rng_uniform_int(rng, n / 2 + 2);
	for (size_t e = 0; e < nvs && nd->ninner < 64; e++) {
		size_t a = gsl_rng_uniform_int(rng, n), b = gsl_rng_uniform_int(rng, n);
		if (a == b)
			continue;
		double ev = rnd_uniform(rng, -23.71, 23.71);
		double r = rnd_log(rng, 47.3, 2.13e5);
		node_label(nm, sizeof nm, "m", nd->ninner);
		snprintf(name, sizeof name, "E%zu", network_part_count(net));
		add(net, name, VS, ev, node_label(na, sizeof na, "n", a), nm);
		snprintf(name, sizeof name, "R%zu", network_part_count(net));
		add(net, name, R, r, nm, node_label(nb, sizeof nb, "n", b));
		nodal_g(nd, a, b, 1.0 / r);
		nd->inj[a] -= ev / r;
		nd->inj[b] += ev / r;
		nd->inner_from[nd->ninner] = a;
		nd->inner_e[nd->ninner] = ev;
		nd->ninner++;
		deg[a]++;
		deg[b]++;
	}
	/* no main node may dangle: give leaves a second resistor */
	for (size_t k = 0; k < n; k++)
		if (deg[k] < 2) {
			size_t b = (k + 1 + gsl_rng_uniform_int(rng, n - 1)) % n;
			rand_resistor(net, nd, rng, k, b);
			deg[k]++;
			deg[b]++;
		}
}

/*
 * Solve the nodal model with reference REF, extra injection X_INJ into
 * node POS, sources scaled by SRC, with GSL's LU into V (main nodes, V[REF]
 * = 0).
 */
static void nodal_solve(const struct nodal *nd, size_t ref, size_t pos,
                        double src, double x_inj, double *v)
{
	size_t m = nd->n - 1;
	gsl_matrix *a = gsl_matrix_alloc(m, m);
	gsl_vector *b = gsl_vector_alloc(m);
	gsl_vector *x = gsl_vector_alloc(m);
	gsl_permutation *p = gsl_permutation_alloc(m);
	assert_true(a && b && x && p);
	for (size_t r = 0, rr = 0; r < nd->n; r++) {
		if (r == ref)
			continue;
		for (size_t c = 0, cc = 0; c < nd->n; c++) {
			if (c == ref)
				continue;
			gsl_matrix_set(a, rr, cc++, nd->g[r][c]);
		}
		gsl_vector_set(b, rr, src * nd->inj[r] + (r == pos ? x_inj : 0.0));
		rr++;
	}
	int sign;
	assert_int_equal(gsl_linalg_LU_decomp(a, p, &sign), 0);
	assert_int_equal(gsl_linalg_LU_solve(a, p, b, x), 0);
	for (size_t r = 0, rr = 0; r < nd->n; r++)
		v[r] = r == ref ? 0.0 : gsl_vector_get(x, rr++);
	gsl_matrix_free(a);
	gsl_vector_free(b);
	gsl_vector_free(x);
	gsl_permutation_free(p);
}

/*
 * Random networks (fixed seed): Voc and Rth against the plain nodal
 * equations solved by GSL's LU (gsl_linalg_LU_decomp / _solve), to 1e-12
 * relative; then every node voltage at an operating point, and Tellegen's
 * theorem (Tellegen, Philips Res. Rep. 7, 1952): the absorbed powers of all
 * parts and the device sum to zero.
 */
static void test_random_vs_gsl(void **state)
{
	(void)state;
	gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
	assert_non_null(rng);
	gsl_rng_set(rng, 20261201UL);
	double worst_voc = 0.0, worst_rth = 0.0, worst_node = 0.0;
	for (int t = 0; t < N_RANDOM; t++) {
		size_t n = 2 + gsl_rng_uniform_int(rng, MAX_NODES - 1);
		struct network *net = network_create();
		assert_non_null(net);
		struct nodal *nd = malloc(sizeof *nd);
		assert_non_null(nd);
		rand_network(net, nd, rng, n);
		size_t pos = gsl_rng_uniform_int(rng, n);
		size_t neg = (pos + 1 + gsl_rng_uniform_int(rng, n - 1)) % n;
		char np[32], nn[32];
		assert_int_equal(network_set_terminals(net,
		                 node_label(np, sizeof np, "n", pos),
		                 node_label(nn, sizeof nn, "n", neg)), 0);

		struct network_thevenin th;
		struct network_diag d;
		enum network_status st = network_reduce(net, &th, NULL, &d);
		if (st != NETWORK_OK)
			fail_msg("network %d: %s", t, d.message);
		double v[MAX_NODES], z[MAX_NODES];
		nodal_solve(nd, neg, pos, 1.0, 0.0, v);
		nodal_solve(nd, neg, pos, 0.0, 1.0, z);
		/*
		 * Voc can be a near-cancellation of sources of both signs, so its
		 * error is taken relative to the largest open-circuit node voltage
		 * (a norm-wise relative error; Higham, Accuracy and Stability of
		 * Numerical Algorithms, 2nd ed., 2002, ch. 7).  Rth is a diagonal
		 * entry of the inverse of a positive definite conductance matrix:
		 * positive, no cancellation, so plainly relative.
		 */
		double vmax = 0.0;
		for (size_t k = 0; k < n; k++)
			vmax = fmax(vmax, fabs(v[k]));
		double e_voc = vmax > 0.0 ? fabs(th.voc - v[pos]) / vmax
		               : fabs(th.voc - v[pos]);
		double e_rth = fabs(th.rth - z[pos]) / fabs(z[pos]);
		worst_voc = fmax(worst_voc, e_voc);
		worst_rth = fmax(worst_rth, e_rth);
		if (!(e_voc <= 1e-12) || (vmax == 0.0 && th.voc != 0.0))
			fail_msg("network %d (%zu nodes): voc %.17g vs %.17g (max node "
			         "voltage %g)", t, n, th.voc, v[pos], vmax);
		char what[64];
		snprintf(what, sizeof what, "network %d (%zu nodes): rth", t, n);
		check_rel(th.rth, z[pos], 1e-12, what);

		/* an operating point on the Thevenin line */
		double i_dev = rnd_uniform(rng, -2.0, 2.0) * th.voc / th.rth;
		double v_dev = th.voc - th.rth * i_dev;
		size_t nn_all = network_node_count(net);
		double *nv = malloc(nn_all * sizeof *nv);
		struct network_part_state *ps =
			malloc(network_part_count(net) * sizeof *ps);
		assert_true(nv && ps);
		st = network_solve_at(net, v_dev, i_dev, (size_t)network_find_node(
		                      net, nn), nv, ps, &d);
		if (st != NETWORK_OK)
			fail_msg("network %d: %s", t, d.message);
		double w[MAX_NODES];
		nodal_solve(nd, neg, pos, 1.0, -i_dev, w);
		double vscale = 0.0;
		for (size_t k = 0; k < n; k++)
			vscale = fmax(vscale, fabs(w[k]));
		for (size_t k = 0; k < n; k++) {
			long idx = network_find_node(net, node_label(np, sizeof np, "n", k));
			assert_true(idx >= 0);
			/* relative to the largest node voltage (norm-wise, as Voc);
			 * with no source at all every voltage must be exactly 0 */
			double e = vscale > 0.0 ? fabs(nv[idx] - w[k]) / vscale
			           : fabs(nv[idx] - w[k]) * INFINITY;
			worst_node = fmax(worst_node, vscale > 0.0 ? e : 0.0);
			if (!(e <= 1e-12) && !(vscale == 0.0 && nv[idx] == 0.0))
				fail_msg("network %d: node n%zu: %.17g vs %.17g", t, k,
				         nv[idx], w[k]);
		}
		for (size_t k = 0; k < nd->ninner; k++) {
			long idx = network_find_node(net, node_label(np, sizeof np, "m", k));
			assert_true(idx >= 0);
			double want = w[nd->inner_from[k]] + nd->inner_e[k];
			double sc = fmax(vscale, fabs(want));
			double e = sc > 0.0 ? fabs(nv[idx] - want) / sc : fabs(nv[idx]);
			if (!(e <= 1e-12))
				fail_msg("network %d: inner node m%zu: %.17g vs %.17g", t, k,
				         nv[idx], want);
		}
		double psum = v_dev * i_dev, pabs = fabs(v_dev * i_dev);
		for (size_t k = 0; k < network_part_count(net); k++) {
			psum += ps[k].power;
			pabs += fabs(ps[k].power);
		}
		if (!(fabs(psum) <= 1e-11 * pabs))
			fail_msg("network %d: Tellegen sum %g of %g", t, psum, pabs);
		free(nv);
		free(ps);
		free(nd);
		network_destroy(net);
	}
	fprintf(stderr, "# worst relative error: voc %.3g, rth %.3g, nodes %.3g\n",
	              worst_voc, worst_rth, worst_node);
	gsl_rng_free(rng);
}

/* ---- a diode on the network vs Newton on the whole network -------------- */

/* A diode bias network: its build function and the diode's parameters. */
struct diode_case {
	const char *name;
	double x[8];
	double is, n, rs;
};

/*
 * Two supplies (x0 to "top", x1 negative to "bottom"), a divider x2/x3 to
 * the diode's anode "a", a resistor x4 from the cathode "k" to bottom, a
 * current source x5 into "a", and x6 from top to k.  Plain-nodal form for
 * the reference: the supplies sit behind resistors x2 and x4 (Norton).
 */
static void build_diode_net(struct network *net, const double *x)
{
	add(net, "positive supply", VS, x[0], "ground", "top");
	add(net, "negative supply", VS, x[1], "bottom", "ground");
	add(net, "upper", R, x[2], "top", "a");
	add(net, "lower", R, x[3], "a", "ground");
	add(net, "emitter side", R, x[4], "k", "bottom");
	add(net, "trim", CS, x[5], "ground", "a");
	add(net, "cross", R, x[6], "ground", "k");
	assert_int_equal(network_set_terminals(net, "a", "k"), 0);
}

/*
 * Newton-Raphson on the nodal equations of the same circuit with the diode
 * in it (unknowns: V(a), V(k); ground is the reference; the supplies
 * folded into Norton branches), each step solved by GSL's LU, the diode
 * voltage step limited to 0.1 V.  Returns V(a) and V(k).
 */
static void newton_full(const struct diode_case *dc, const struct device *dev,
                        double *va, double *vk)
{
	const double *x = dc->x;
	double g2 = 1.0 / x[2], g3 = 1.0 / x[3], g4 = 1.0 / x[4], g6 = 1.0 / x[6];
	/* top = x0, bottom = -x1 (the negative supply's + is ground) */
	double top = x[0], bottom = -x[1];
	double a = 0.0, k = 0.0;
	gsl_matrix *jm = gsl_matrix_alloc(2, 2);
	gsl_vector *f = gsl_vector_alloc(2), *dx = gsl_vector_alloc(2);
	gsl_permutation *p = gsl_permutation_alloc(2);
	int it;
	for (it = 0; it < 500; it++) {
		double vd = a - k;
		double id = device_current(dev, vd), gd = device_conductance(dev, vd);
		/* KCL, currents leaving each node */
		double fa = (a - top) * g2 + a * g3 - x[5] + id;
		double fk = (k - bottom) * g4 + k * g6 - id;
		gsl_vector_set(f, 0, -fa);
		gsl_vector_set(f, 1, -fk);
		gsl_matrix_set(jm, 0, 0, g2 + g3 + gd);
		gsl_matrix_set(jm, 0, 1, -gd);
		gsl_matrix_set(jm, 1, 0, -gd);
		gsl_matrix_set(jm, 1, 1, g4 + g6 + gd);
		int sign;
		assert_int_equal(gsl_linalg_LU_decomp(jm, p, &sign), 0);
		assert_int_equal(gsl_linalg_LU_solve(jm, p, f, dx), 0);
		double da = gsl_vector_get(dx, 0), dk = gsl_vector_get(dx, 1);
		double dd = da - dk;
		if (fabs(dd) > 0.1) {
			da *= 0.1 / fabs(dd);
			dk *= 0.1 / fabs(dd);
		}
		a += da;
		k += dk;
		if (fabs(da) <= 1e-15 * fmax(1.0, fabs(a)) &&
		    fabs(dk) <= 1e-15 * fmax(1.0, fabs(k)))
			break;
	}
	assert_true(it < 500);
	gsl_matrix_free(jm);
	gsl_vector_free(f);
	gsl_vector_free(dx);
	gsl_permutation_free(p);
	*va = a;
	*vk = k;
}

static const struct diode_case diode_cases[] = {
	{ "silicon, forward", { 11.73, 4.913, 27.1e3, 6.83e3, 1.47e3, 0.0, 33.9e3 },
	  2.52e-9, 1.752, 0.0 },
	{ "with bulk resistance", { 14.29, 8.317, 3.31e3, 2.19e3, 471.3, 1.137e-3,
	  12.7e3 }, 4.71e-12, 1.137, 2.913 },
	{ "reverse biased", { 3.217, 11.83, 9.13e3, 1.27e3, 4.73e3, -2.31e-4,
	  917.0 }, 1.13e-14, 1.021, 0.513 },
};

/*
 * The Thevenin equivalent with a Shockley diode (Shockley, Bell Syst. Tech.
 * J. 28, 1949; src/core/models/diode.c) solved by solve_problem gives the
 * same operating point, and network_solve_at the same node voltages, as a
 * Newton solve of the whole network with the diode in it.
 */
static void test_diode_on_network(void **state)
{
	(void)state;
	for (size_t c = 0; c < sizeof diode_cases / sizeof diode_cases[0]; c++) {
		const struct diode_case *dc = &diode_cases[c];
		struct network *net = network_create();
		assert_non_null(net);
		build_diode_net(net, dc->x);
		struct problem pb;
		struct source_spec spec;
		struct network_diag d;
		char err[160];
		assert_int_equal(network_reduce(net, NULL, &spec, &d), NETWORK_OK);
		assert_int_equal(source_from_spec(&spec, &pb.src, err, sizeof err), 0);
		device_init(&pb.dev, &model_diode);
		pb.dev.p[DIODE_IS] = dc->is;
		pb.dev.p[DIODE_N] = dc->n;
		pb.dev.p[DIODE_RS] = dc->rs;
		struct solve_options o;
		solve_options_init(&o);
		struct solve_result res;
		if (solve_problem(&pb, &o, &res) != SOLVE_OK || res.n != 1)
			fail_msg("%s: solve: %s (%zu points)", dc->name, res.message, res.n);
		double va, vk;
		newton_full(dc, &pb.dev, &va, &vk);
		char what[96];
		snprintf(what, sizeof what, "%s: device voltage", dc->name);
		check_rel(res.pts[0].v, va - vk, 1e-10, what);
		snprintf(what, sizeof what, "%s: device current", dc->name);
		check_rel(res.pts[0].i, device_current(&pb.dev, va - vk), 1e-9, what);

		double nv[8];
		assert_true(network_node_count(net) <= 8);
		long gnd = network_find_node(net, "ground");
		assert_true(gnd >= 0);
		assert_int_equal(network_solve_at(net, res.pts[0].v, res.pts[0].i,
		                 (size_t)gnd, nv, NULL, &d), NETWORK_OK);
		snprintf(what, sizeof what, "%s: V(a)", dc->name);
		check_rel(nv[network_find_node(net, "a")], va, 1e-10, what);
		snprintf(what, sizeof what, "%s: V(k)", dc->name);
		check_rel(nv[network_find_node(net, "k")], vk, 1e-10, what);
		snprintf(what, sizeof what, "%s: V(top)", dc->name);
		check_rel(nv[network_find_node(net, "top")], dc->x[0], 1e-15, what);
		network_destroy(net);
	}
}

/*
 * An ideal current source feeding the diode through a resistor: Norton
 * with rp infinite, so the diode takes exactly J (KCL); network_solve_at
 * imposes the device voltage and returns the resistor's drop J * R (Ohm's
 * law) and the source's voltage.
 */
static void test_diode_current_fed(void **state)
{
	(void)state;
	struct network *net = network_create();
	assert_non_null(net);
	const double j = 2.713e-3, r = 1.379e3, rb = 4.127e3;
	add(net, "bias current", CS, j, "ground", "x");
	add(net, "series", R, r, "x", "anode");
	add(net, "other", R, rb, "ground", "cathode");
	add(net, "return", R, 2.0 * rb, "cathode", "ground");
	assert_int_equal(network_set_terminals(net, "anode", "cathode"), 0);
	struct source_spec spec;
	struct problem pb;
	struct network_diag d;
	char err[160];
	assert_int_equal(network_reduce(net, NULL, &spec, &d), NETWORK_OK);
	assert_int_equal(spec.form, SOURCE_NORTON);
	assert_true(isinf(spec.rp));
	assert_true(spec.is == j);
	assert_int_equal(source_from_spec(&spec, &pb.src, err, sizeof err), 0);
	device_init(&pb.dev, &model_diode);
	pb.dev.p[DIODE_IS] = 3.17e-10;
	pb.dev.p[DIODE_N] = 1.913;
	struct solve_options o;
	solve_options_init(&o);
	struct solve_result res;
	assert_int_equal(solve_problem(&pb, &o, &res), SOLVE_OK);
	check_rel(res.pts[0].i, j, 1e-12, "current-fed diode current");
	double nv[8];
	struct network_part_state ps[4];
	long gnd = network_find_node(net, "ground");
	assert_int_equal(network_solve_at(net, res.pts[0].v, res.pts[0].i,
	                 (size_t)gnd, nv, ps, &d), NETWORK_OK);
	check_rel(ps[1].current, j, 1e-12, "series current");
	check_rel(ps[1].voltage, j * r, 1e-12, "series drop");
	/* KCL at the cathode: J in from the diode, out through both resistors
	 * ("other" is stated ground -> cathode, so its current counts negative) */
	check_rel(ps[3].current - ps[2].current, j, 1e-12, "KCL at the cathode");
	/* the cathode sits on rb || 2 rb carrying j (parallel resistances) */
	check_rel(nv[network_find_node(net, "cathode")],
	          j * par(rb, 2.0 * rb), 1e-12, "cathode voltage");
	check_rel(nv[network_find_node(net, "anode")] -
	          nv[network_find_node(net, "cathode")], res.pts[0].v, 1e-12,
	          "imposed device voltage");
	network_destroy(net);
}

/* ---- errors -------------------------------------------------------------- */

/* One error case: a builder, the status, and the part and node at fault. */
struct error_case {
	const char *name;
	void (*build)(struct network *net);
	enum network_status status;
	long part;           /* expected part index, -1 */
	const char *node;    /* expected node name, NULL for none */
	const char *says;    /* a fragment the message must contain */
};

/* No parts at all. */
static void err_empty(struct network *net)
{
	assert_int_equal(network_set_terminals(net, "p", "n"), 0);
}

/* Parts but no terminals. */
static void err_no_terminals(struct network *net)
{
	add(net, "R1", R, 1.2e3, "p", "n");
}

/* Both terminals on one node. */
static void err_same_terminal(struct network *net)
{
	add(net, "R1", R, 1.2e3, "p", "n");
	add(net, "R2", R, 2.2e3, "p", "n");
	assert_int_equal(network_set_terminals(net, "p", "p"), 0);
}

/* The positive terminal touches no part. */
static void err_unused_terminal(struct network *net)
{
	add(net, "R1", R, 1.2e3, "x", "n");
	add(net, "R2", R, 2.2e3, "x", "n");
	assert_int_equal(network_set_terminals(net, "p", "n"), 0);
}

/* A resistance that is not a number. */
static void err_nan(struct network *net)
{
	add(net, "R1", R, 1.2e3, "p", "n");
	add(net, "R2", R, NAN, "p", "n");
	assert_int_equal(network_set_terminals(net, "p", "n"), 0);
}

/* An infinite source voltage. */
static void err_inf(struct network *net)
{
	add(net, "R1", R, 1.2e3, "p", "n");
	add(net, "E1", VS, INFINITY, "n", "p");
	assert_int_equal(network_set_terminals(net, "p", "n"), 0);
}

/* A negative resistance. */
static void err_negative(struct network *net)
{
	add(net, "R1", R, 1.2e3, "p", "n");
	add(net, "E1", VS, 3.3, "n", "x");
	add(net, "R2", R, -4.7e3, "x", "p");
	assert_int_equal(network_set_terminals(net, "p", "n"), 0);
}

/* A zero resistance. */
static void err_zero(struct network *net)
{
	add(net, "R1", R, 0.0, "p", "n");
	assert_int_equal(network_set_terminals(net, "p", "n"), 0);
}

/* A part joining a node to itself. */
static void err_self(struct network *net)
{
	add(net, "R1", R, 1.2e3, "p", "n");
	add(net, "E1", VS, 3.3, "n", "p");
	add(net, "looped", R, 4.7e3, "p", "p");
	assert_int_equal(network_set_terminals(net, "p", "n"), 0);
}

/* A misspelt node: "midle" is reached by one part end only. */
static void err_dangling(struct network *net)
{
	add(net, "E1", VS, 5.1, "n", "top");
	add(net, "R1", R, 1.2e3, "top", "middle");
	add(net, "R2", R, 3.9e3, "midle", "n");
	add(net, "R3", R, 2.7e3, "middle", "p");
	add(net, "R4", R, 6.8e3, "p", "n");
	assert_int_equal(network_set_terminals(net, "p", "n"), 0);
}

/* An island of parts not joined to the terminals. */
static void err_island(struct network *net)
{
	add(net, "R1", R, 1.2e3, "p", "n");
	add(net, "E1", VS, 3.3, "n", "p");
	add(net, "island a", R, 4.7e3, "x", "y");
	add(net, "island b", VS, 1.5, "y", "x");
	assert_int_equal(network_set_terminals(net, "p", "n"), 0);
}

/* The terminals sit on two separate halves. */
static void err_split(struct network *net)
{
	add(net, "R1", R, 1.2e3, "p", "x");
	add(net, "E1", VS, 3.3, "x", "p");
	add(net, "R2", R, 4.7e3, "n", "y");
	add(net, "R3", R, 1.5e3, "y", "n");
	assert_int_equal(network_set_terminals(net, "p", "n"), 0);
}

/* Two voltage sources in parallel. */
static void err_vs_parallel(struct network *net)
{
	add(net, "R1", R, 1.2e3, "p", "n");
	add(net, "cell a", VS, 3.3, "n", "p");
	add(net, "cell b", VS, 3.3, "n", "p");
	assert_int_equal(network_set_terminals(net, "p", "n"), 0);
}

/* A triangle of voltage sources. */
static void err_vs_triangle(struct network *net)
{
	add(net, "E1", VS, 1.1, "n", "x");
	add(net, "R1", R, 1.2e3, "x", "p");
	add(net, "E2", VS, 2.3, "x", "p");
	add(net, "R2", R, 2.2e3, "p", "n");
	add(net, "E3", VS, 3.4, "p", "n");
	assert_int_equal(network_set_terminals(net, "p", "n"), 0);
}

/* Two current sources in series: the node between them floats. */
static void err_cs_series(struct network *net)
{
	add(net, "R1", R, 1.2e3, "p", "n");
	add(net, "J1", CS, 1.3e-3, "n", "mid");
	add(net, "J2", CS, 1.7e-3, "mid", "p");
	assert_int_equal(network_set_terminals(net, "p", "n"), 0);
}

/* A resistor pair reached only through current sources. */
static void err_cs_group(struct network *net)
{
	add(net, "R1", R, 1.2e3, "p", "n");
	add(net, "pair a", R, 4.7e3, "x", "y");
	add(net, "pair b", R, 3.3e3, "y", "x");
	add(net, "feed", CS, 2.1e-3, "n", "x");
	add(net, "drain", CS, 2.1e-3, "y", "p");
	assert_int_equal(network_set_terminals(net, "p", "n"), 0);
}

/*
 * A resistor of 1e-300 ohm in a 2-ohm circuit: structurally sound, but the
 * conductance 1e300 swamps the rest and elimination cancels to zero, so
 * the pivot threshold must catch it.
 */
static void err_swamped(struct network *net)
{
	add(net, "R1", R, 2.213, "p", "n");
	add(net, "tiny", R, 1e-300, "p", "x");
	add(net, "R2", R, 4.719, "x", "n");
	add(net, "E1", VS, 1.5, "n", "y");
	add(net, "R3", R, 3.3, "y", "p");
	assert_int_equal(network_set_terminals(net, "p", "n"), 0);
}

/* Voc = J * R overflows. */
static void err_overflow(struct network *net)
{
	add(net, "huge", R, 1e300, "p", "n");
	add(net, "J", CS, 1e300, "n", "p");
	assert_int_equal(network_set_terminals(net, "p", "n"), 0);
}

static const struct error_case error_cases[] = {
	{ "empty", err_empty, NETWORK_EMPTY, -1, NULL, "no parts" },
	{ "no terminals", err_no_terminals, NETWORK_BAD_TERMINALS, -1, NULL,
	  "not given" },
	{ "same terminal", err_same_terminal, NETWORK_BAD_TERMINALS, -1, "p",
	  "same node" },
	{ "unused terminal", err_unused_terminal, NETWORK_BAD_TERMINALS, -1, "p",
	  "joined to no part" },
	{ "nan", err_nan, NETWORK_BAD_VALUE, 1, NULL, "'R2'" },
	{ "inf", err_inf, NETWORK_BAD_VALUE, 1, NULL, "finite" },
	{ "negative", err_negative, NETWORK_BAD_VALUE, 2, NULL, "> 0" },
	{ "zero", err_zero, NETWORK_BAD_VALUE, 0, NULL, "> 0" },
	{ "self loop", err_self, NETWORK_SELF_LOOP, 2, "p", "'looped'" },
	{ "dangling", err_dangling, NETWORK_DANGLING, 2, "midle", "misspelt" },
	{ "island", err_island, NETWORK_NOT_CONNECTED, 2, "x", "'island a'" },
	{ "split", err_split, NETWORK_NOT_CONNECTED, -1, "n", "no chain" },
	{ "parallel cells", err_vs_parallel, NETWORK_VOLTAGE_LOOP, 2, "n",
	  "'cell b'" },
	{ "cell triangle", err_vs_triangle, NETWORK_VOLTAGE_LOOP, 4, "p", "'E3'" },
	{ "series current sources", err_cs_series, NETWORK_CURRENT_CUT, 1, "mid",
	  "only through current sources" },
	{ "current-fed pair", err_cs_group, NETWORK_CURRENT_CUT, 3, "x", "'feed'" },
	{ "swamped", err_swamped, NETWORK_SINGULAR, -1, NULL, "singular" },
	{ "overflow", err_overflow, NETWORK_NOT_FINITE, -1, NULL, "overflows" },
};

/* Every error case: reduce and solve_at both refuse, naming the culprit. */
static void test_errors(void **state)
{
	(void)state;
	for (size_t c = 0; c < sizeof error_cases / sizeof error_cases[0]; c++) {
		const struct error_case *ec = &error_cases[c];
		struct network *net = network_create();
		assert_non_null(net);
		ec->build(net);
		struct network_diag d;
		struct network_thevenin th;
		struct source_spec spec;
		enum network_status st = network_reduce(net, &th, &spec, &d);
		if (st != ec->status)
			fail_msg("%s: got '%s' (%s), want '%s'", ec->name,
			         network_status_name(st), d.message,
			         network_status_name(ec->status));
		assert_int_equal(d.status, ec->status);
		if (d.part != ec->part)
			fail_msg("%s: part %ld, want %ld", ec->name, d.part, ec->part);
		long node = ec->node ? network_find_node(net, ec->node) : -1;
		if (ec->node != NULL && d.node != node)
			fail_msg("%s: node %ld (%s), want %s", ec->name, d.node,
			         d.node >= 0 ? network_node_name(net, (size_t)d.node) : "-",
			         ec->node);
		if (strstr(d.message, ec->says) == NULL)
			fail_msg("%s: message '%s' lacks '%s'", ec->name, d.message,
			         ec->says);
		if (ec->status != NETWORK_NOT_FINITE) {
			double nv[16];
			assert_true(network_node_count(net) <= 16);
			st = network_solve_at(net, 0.6, 1e-3, 0, nv, NULL, &d);
			if (st != ec->status)
				fail_msg("%s: solve_at gave '%s'", ec->name,
				         network_status_name(st));
		}
		network_destroy(net);
	}
}

/* ---- bookkeeping --------------------------------------------------------- */

/*
 * Names, lookups, value changes and copies: a copy reduces to the same
 * result, and a changed value changes only the changed network (the
 * divider formula, as in the closed-form cases).
 */
static void test_bookkeeping(void **state)
{
	(void)state;
	const double x[3] = { 9.137, 3.313e3, 1.471e3 };
	struct network *net = network_create();
	assert_non_null(net);
	build_divider(net, x);
	assert_int_equal(network_part_count(net), 3);
	assert_int_equal(network_node_count(net), 3);
	assert_int_equal(network_find_part(net, "upper"), 1);
	assert_int_equal(network_find_part(net, "nothing"), -1);
	assert_int_equal(network_find_node(net, "out"), 2);
	assert_string_equal(network_node_name(net, 0), "ground");
	assert_null(network_node_name(net, 3));
	assert_null(network_part(net, 3));
	assert_string_equal(network_part(net, 0)->name, "supply");
	assert_string_equal(network_kind_name(CS), "current source");
	size_t p, n;
	assert_int_equal(network_terminals(net, &p, &n), 0);
	assert_int_equal(p, 2);
	assert_int_equal(n, 0);

	struct network *cp = network_copy(net);
	assert_non_null(cp);
	assert_int_equal(network_set_value(cp, 1, 2.0 * x[1]), 0);
	assert_int_equal(network_set_value(cp, 7, 1.0), -1);
	struct network_thevenin a, b;
	assert_int_equal(network_reduce(net, &a, NULL, NULL), NETWORK_OK);
	assert_int_equal(network_reduce(cp, &b, NULL, NULL), NETWORK_OK);
	check_rel(a.voc, x[0] * x[2] / (x[1] + x[2]), 1e-14, "original voc");
	check_rel(b.voc, x[0] * x[2] / (2.0 * x[1] + x[2]), 1e-14, "changed voc");
	assert_string_equal(network_part(cp, 2)->name, "lower");
	network_destroy(cp);
	network_destroy(net);
	network_destroy(NULL);
}

/*
 * Node names through the hash index: a ladder of 6000 rungs (6002 nodes,
 * names that differ in one character, the index grown many times) finds
 * every node at the index it was given, in the network and in a copy,
 * and no name it lacks; a ladder of 120 rungs reduces to the equivalent
 * found rung by rung (Thevenin's theorem applied at each node: the
 * equivalent so far in series with the rung's resistor, then in parallel
 * with its shunt; common practice).  Values invented.
 */
static void test_many_nodes(void **state)
{
	(void)state;
	for (int pass = 0; pass < 2; pass++) {
		size_t rungs = pass == 0 ? 6000 : 120;
		struct network *net = network_create();
		assert_non_null(net);
		char a[32], b[32];
		double vth = 17.3, rth = 0.0;
		add(net, "supply", VS, vth, "ground", "node 0");
		for (size_t k = 0; k < rungs; k++) {
			double rs = 100.0 + 37.0 * (double)(k % 13);
			double rp = 4.7e3 + 311.0 * (double)(k % 7);
			snprintf(a, sizeof a, "node %zu", k);
			snprintf(b, sizeof b, "node %zu", k + 1);
			add(net, "series", R, rs, a, b);
			add(net, "shunt", R, rp, b, "ground");
			vth = vth * rp / (rth + rs + rp);
			rth = par(rth + rs, rp);
		}
		snprintf(a, sizeof a, "node %zu", rungs);
		assert_int_equal(network_set_terminals(net, a, "ground"), 0);
		assert_int_equal(network_node_count(net), rungs + 2);
		struct network *cp = network_copy(net);
		assert_non_null(cp);
		for (size_t k = 0; k <= rungs; k++) {
			snprintf(a, sizeof a, "node %zu", k);
			long want = k == 0 ? 1 : (long)k + 1; /* ground is node 0 */
			assert_int_equal(network_find_node(net, a), want);
			assert_int_equal(network_find_node(cp, a), want);
			assert_string_equal(network_node_name(cp, (size_t)want), a);
			snprintf(b, sizeof b, "node %zu ", k);
			assert_int_equal(network_find_node(net, b), -1);
		}
		assert_int_equal(network_find_node(net, "ground"), 0);
		assert_int_equal(network_find_node(net, ""), -1);
		if (pass == 1) {
			struct network_thevenin th;
			assert_int_equal(network_reduce(net, &th, NULL, NULL),
			                 NETWORK_OK);
			check_rel(th.voc, vth, 1e-12, "ladder voc");
			check_rel(th.rth, rth, 1e-12, "ladder r");
		}
		network_destroy(cp);
		network_destroy(net);
	}
}

/* Run the network tests. */
int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_closed_forms),
		cmocka_unit_test(test_random_vs_gsl),
		cmocka_unit_test(test_diode_on_network),
		cmocka_unit_test(test_diode_current_fed),
		cmocka_unit_test(test_errors),
		cmocka_unit_test(test_bookkeeping),
		cmocka_unit_test(test_many_nodes),
	};
	return cmocka_run_group_tests_name("network", tests, NULL, NULL);
}
