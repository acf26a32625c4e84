/*
 * test_tolerance.c - worst case and Monte Carlo.
 *
 * References:
 *  - worst case: brute force over a fine grid of the tolerance box; for
 *    outputs monotone in each parameter the corners hold the extremes;
 *  - an interior maximum: the power in RS from a source VS into a resistor
 *    RL peaks at RS = RL, VS^2 / (4 RL) (the maximum power transfer
 *    theorem, common practice);
 *  - Monte Carlo mean and standard deviation for small tolerances against
 *    first-order propagation of uncertainty, u_c^2 = sum (df/dx_i)^2
 *    u^2(x_i) (JCGM 100:2008, the GUM, eq. 10), with u = a / sqrt(3) for a
 *    uniform half-width a (GUM 4.3.7) and u = a / 3 for a normal with the
 *    half-width as 3 sigma; derivatives by central differences of the
 *    whole solve;
 *  - the generator's uniform and normal deviates against their
 *    distribution functions with the Kolmogorov-Smirnov statistic at the
 *    1 % level, 1.63 / sqrt(n) (Massey, JASA 46, 1951); the normal CDF
 *    from GSL.
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
#include <gsl/gsl_cdf.h>

#include "core/models/models.h"
#include "core/tolerance.h"

/* The LED-like case: 23.7 V through 2.2 kohm into a junction. */
static void led_case(struct tol_case *c)
{
	struct problem pb = { .net = NULL }; /* no network */
	struct source_spec sp;
	char err[200];
	source_spec_thevenin(&sp, 23.7, 2.2e3);
	assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
	device_init(&pb.dev, &model_diode);
	pb.dev.p[DIODE_IS] = 3.17e-18;
	pb.dev.p[DIODE_N] = 1.93;
	pb.dev.p[DIODE_RS] = 1.37;
	pb.dev.p[DIODE_TEMP] = 27.3;
	struct solve_options o;
	solve_options_init(&o);
	tol_case_init(c, &pb, SOURCE_THEVENIN, &o);
}

/* Add a +-FRAC tolerance on KEY around its nominal value. */
static void add_rel(struct tol_case *c, const char *key, double frac,
                    enum tol_dist d)
{
	struct paramref r;
	char err[200];
	assert_int_equal(paramref_find(&c->pb, key, &r, err, sizeof err), 0);
	double x = paramref_get(&c->pb, &r);
	if (tol_case_add(c, key, x * (1.0 - frac), x * (1.0 + frac), d, err,
	                 sizeof err) != 0)
		fail_msg("%s", err);
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
	double v_nom = NAN;
	for (size_t m = 0; m < total; m++) {
		double x[TOL_MAX_ITEMS], y[TOL_NOUT];
		size_t rest = m;
		for (size_t k = 0; k < n; k++) {
			int j = (int)(rest % (size_t)g);
			rest /= (size_t)g;
			x[k] = c->items[k].lo +
			       (c->items[k].hi - c->items[k].lo) * j / (g - 1);
		}
		assert_int_equal(tol_eval(c, x, v_nom, y), 0);
		for (int o = 0; o < TOL_NOUT; o++) {
			mn[o] = fmin(mn[o], y[o]);
			mx[o] = fmax(mx[o], y[o]);
		}
	}
}

/* Monotone case: the worst case equals the grid's extremes, at corners. */
static void test_worst_case_monotone(void **state)
{
	(void)state;
	struct tol_case c;
	led_case(&c);
	add_rel(&c, "vs", 0.10, TOL_UNIFORM);
	add_rel(&c, "rs", 0.05, TOL_UNIFORM);
	add_rel(&c, "saturation_current", 0.5, TOL_NORMAL);
	add_rel(&c, "ideality", 0.03, TOL_UNIFORM);
	struct tol_worst w;
	char err[200];
	assert_int_equal(tol_worst_case(&c, &w, err, sizeof err), 0);
	assert_int_equal(w.corners, 16);
	assert_int_equal(w.failed, 0);
	double mn[TOL_NOUT], mx[TOL_NOUT];
	grid_extremes(&c, 9, mn, mx);
	for (int o = 0; o < TOL_NOUT; o++) {
		if (fabs(w.min[o].value - mn[o]) > 1e-12 * fabs(mn[o]) ||
		    fabs(w.max[o].value - mx[o]) > 1e-12 * fabs(mx[o]))
			fail_msg("%s: worst case [%.15g, %.15g], grid [%.15g, %.15g]",
			         tol_output_name((enum tol_output)o), w.min[o].value,
			         w.max[o].value, mn[o], mx[o]);
		assert_false(w.min[o].interior);
		assert_false(w.max[o].interior);
		assert_true(w.min[o].value <= w.nominal[o]);
		assert_true(w.max[o].value >= w.nominal[o]);
	}
	/* Most current: high VS, low RS, high Is... at the corners. */
	const struct tol_extreme *e = &w.max[TOL_CURRENT];
	assert_true(e->params[0] == c.items[0].hi);
	assert_true(e->params[1] == c.items[1].lo);
}

/* An interior maximum: the power in RS peaks at RS = RL. */
static void test_worst_case_interior(void **state)
{
	(void)state;
	struct problem pb = { .net = NULL }; /* no network */
	struct source_spec sp;
	char err[200];
	source_spec_thevenin(&sp, 12.3, 100.0);
	assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
	device_init(&pb.dev, &model_power_law);
	/* Exponent 1: a resistor RL = 9.37 V / 0.0913 A. */
	pb.dev.p[POWER_LAW_VREF] = 9.37;
	pb.dev.p[POWER_LAW_IREF] = 0.0913;
	pb.dev.p[POWER_LAW_ALPHA] = 1.0;
	double rl = 9.37 / 0.0913;
	struct solve_options o;
	solve_options_init(&o);
	struct tol_case c;
	tol_case_init(&c, &pb, SOURCE_THEVENIN, &o);
	assert_int_equal(tol_case_add(&c, "rs", 71.3, 137.9, TOL_UNIFORM, err,
	                              sizeof err), 0);
	assert_int_equal(tol_case_add(&c, "vs", 11.7, 12.9, TOL_UNIFORM, err,
	                              sizeof err), 0);
	struct tol_worst w;
	assert_int_equal(tol_worst_case(&c, &w, err, sizeof err), 0);
	const struct tol_extreme *e = &w.max[TOL_RESISTOR_POWER];
	double pmax = 12.9 * 12.9 / (4.0 * rl);
	if (fabs(e->value - pmax) > 1e-12 * pmax)
		fail_msg("max P(RS) %.15g W, theorem %.15g W", e->value, pmax);
	assert_true(e->interior);
	assert_true(fabs(e->params[0] - rl) < 1e-4 * rl);
	assert_true(e->params[1] == 12.9);
	/* The corners alone would have missed it. */
	double corner = 12.9 * 12.9 * 137.9 / ((137.9 + rl) * (137.9 + rl));
	assert_true(e->value > corner * 1.001);
	/* And a grid cannot beat it. */
	double mn[TOL_NOUT], mx[TOL_NOUT];
	grid_extremes(&c, 41, mn, mx);
	assert_true(mx[TOL_RESISTOR_POWER] <= e->value * (1.0 + 1e-14));
	/* The device current stays monotone: corners. */
	assert_false(w.max[TOL_CURRENT].interior);
}

/* GUM first-order u_c of output O, derivatives by central differences. */
static double gum_uncertainty(const struct tol_case *c, enum tol_output o)
{
	double x[TOL_MAX_ITEMS];
	for (size_t k = 0; k < c->nitems; k++)
		x[k] = paramref_get(&c->pb, &c->items[k].param);
	double u2 = 0.0;
	for (size_t k = 0; k < c->nitems; k++) {
		const struct tol_item *it = &c->items[k];
		double a = 0.5 * (it->hi - it->lo), h = 1e-3 * a;
		double yp[TOL_NOUT], ym[TOL_NOUT], xs = x[k];
		x[k] = xs + h;
		assert_int_equal(tol_eval(c, x, NAN, yp), 0);
		x[k] = xs - h;
		assert_int_equal(tol_eval(c, x, NAN, ym), 0);
		x[k] = xs;
		double d = (yp[o] - ym[o]) / (2.0 * h);
		double u = it->dist == TOL_UNIFORM ? a / sqrt(3.0) : a / 3.0;
		u2 += d * d * u * u;
	}
	return sqrt(u2);
}

/* Small tolerances: Monte Carlo against the GUM's propagation. */
static void test_monte_carlo_gum(void **state)
{
	(void)state;
	struct tol_case c;
	led_case(&c);
	add_rel(&c, "vs", 0.002, TOL_UNIFORM);
	add_rel(&c, "rs", 0.003, TOL_NORMAL);
	add_rel(&c, "saturation_current", 0.004, TOL_UNIFORM);
	add_rel(&c, "temperature", 0.0037, TOL_NORMAL);
	const size_t n = 40000;
	struct tol_mc mc;
	char err[200];
	assert_int_equal(tol_monte_carlo(&c, n, 20261201, 40, NULL, 0, &mc, err,
	                                 sizeof err), 0);
	assert_int_equal(mc.trials, n);
	assert_int_equal(mc.failed, 0);
	double x0[TOL_MAX_ITEMS], y0[TOL_NOUT];
	for (size_t k = 0; k < c.nitems; k++)
		x0[k] = paramref_get(&c.pb, &c.items[k].param);
	assert_int_equal(tol_eval(&c, x0, NAN, y0), 0);
	for (int o = 0; o < TOL_NOUT; o++) {
		double u = gum_uncertainty(&c, (enum tol_output)o);
		const struct tol_stats *s = &mc.stats[o];
		/* Mean: within 5 standard errors; sigma: within 5 standard errors
		 * of a sample standard deviation, 1/sqrt(2n), plus 1 % for the
		 * non-normal (uniform) inputs' kurtosis. */
		double se = u / sqrt((double)n);
		if (fabs(s->mean - y0[o]) > 5.0 * se)
			fail_msg("%s: mean %.10g, nominal %.10g, 5 se %.3g",
			         tol_output_name((enum tol_output)o), s->mean, y0[o],
			         5.0 * se);
		if (fabs(s->sd / u - 1.0) > 5.0 / sqrt(2.0 * (double)n) + 0.01)
			fail_msg("%s: sd %.6g, GUM %.6g",
			         tol_output_name((enum tol_output)o), s->sd, u);
		/* Percentiles ordered and inside the range. */
		for (int p = 1; p < TOL_NPCT; p++)
			assert_true(s->pct[p] >= s->pct[p - 1]);
		assert_true(s->pct[0] >= s->min && s->pct[TOL_NPCT - 1] <= s->max);
		/* The histogram holds every trial. */
		size_t sum = 0;
		for (size_t b = 0; b < mc.hist[o].nbins; b++)
			sum += mc.hist[o].counts[b];
		assert_int_equal(sum, n);
	}
}

/* The same seed gives the same numbers; another seed, others. */
static void test_monte_carlo_seed(void **state)
{
	(void)state;
	struct tol_case c;
	led_case(&c);
	add_rel(&c, "vs", 0.1, TOL_UNIFORM);
	add_rel(&c, "rs", 0.05, TOL_NORMAL);
	struct tol_mc a, b, d;
	char err[200];
	assert_int_equal(tol_monte_carlo(&c, 3001, 77, 17, NULL, 0, &a, err,
	                                 sizeof err), 0);
	assert_int_equal(tol_monte_carlo(&c, 3001, 77, 17, NULL, 0, &b, err,
	                                 sizeof err), 0);
	assert_int_equal(tol_monte_carlo(&c, 3001, 78, 17, NULL, 0, &d, err,
	                                 sizeof err), 0);
	assert_memory_equal(&a.stats, &b.stats, sizeof a.stats);
	assert_memory_equal(&a.hist, &b.hist, sizeof a.hist);
	assert_true(a.stats[TOL_CURRENT].mean != d.stats[TOL_CURRENT].mean);
	/* The generator itself: the same seed, the same stream. */
	struct tol_rng r1, r2;
	tol_rng_seed(&r1, 0x5eed);
	tol_rng_seed(&r2, 0x5eed);
	for (int k = 0; k < 1000; k++)
		assert_true(tol_rng_next(&r1) == tol_rng_next(&r2));
}

/* Compare doubles for qsort. */
static int cmp_double(const void *a, const void *b)
{
	double x = *(const double *)a, y = *(const double *)b;
	return (x > y) - (x < y);
}

/* Kolmogorov-Smirnov statistic of sorted X[0..N) against CDF. */
static double ks_stat(const double *x, size_t n, double (*cdf)(double))
{
	double d = 0.0;
	for (size_t k = 0; k < n; k++) {
		double f = cdf(x[k]);
		d = fmax(d, fmax(fabs(f - (double)k / (double)n),
		                 fabs((double)(k + 1) / (double)n - f)));
	}
	return d;
}

/* The uniform CDF on [0, 1). */
static double uniform_cdf(double x)
{
	return x < 0.0 ? 0.0 : x > 1.0 ? 1.0 : x;
}

/* The generator's deviates follow their distributions. */
static void test_rng_distributions(void **state)
{
	(void)state;
	const size_t n = 20000;
	double *x = malloc(n * sizeof *x);
	assert_non_null(x);
	struct tol_rng r;
	tol_rng_seed(&r, 2385);
	for (size_t k = 0; k < n; k++)
		x[k] = tol_rng_uniform(&r);
	qsort(x, n, sizeof *x, cmp_double);
	assert_true(x[0] >= 0.0 && x[n - 1] < 1.0);
	assert_true(ks_stat(x, n, uniform_cdf) < 1.63 / sqrt((double)n));
	for (size_t k = 0; k < n; k++)
		x[k] = tol_rng_normal(&r);
	qsort(x, n, sizeof *x, cmp_double);
	assert_true(ks_stat(x, n, gsl_cdf_ugaussian_P) < 1.63 / sqrt((double)n));
	free(x);
}

/*
 * The ziggurat's normal deviates over every branch: 2e5 of them against
 * the normal distribution (Kolmogorov-Smirnov at the 1 % level, Massey
 * 1951), and 4e6 for the tail beyond the base layer's edge r = 3.6541529
 * (Marsaglia & Tsang 2000), whose share is erfc(r / sqrt 2) = 2.58e-4,
 * and for the moments (mean 0, variance 1, fourth moment 3), each within
 * five standard errors; both signs equally often.
 */
static void test_ziggurat(void **state)
{
	(void)state;
	const size_t n = 200000;
	double *x = malloc(n * sizeof *x);
	assert_non_null(x);
	struct tol_rng r;
	tol_rng_seed(&r, 0x5eed2385u);
	for (size_t k = 0; k < n; k++)
		x[k] = tol_rng_normal(&r);
	qsort(x, n, sizeof *x, cmp_double);
	double d = ks_stat(x, n, gsl_cdf_ugaussian_P);
	print_message("# ziggurat: KS %.3g (1 %% level %.3g)\n", d,
	              1.63 / sqrt((double)n));
	assert_true(d < 1.63 / sqrt((double)n));
	free(x);
	const double edge = 3.6541528853610088;
	const size_t big = 4000000;
	size_t tail = 0, neg = 0;
	double s1 = 0.0, s2 = 0.0, s4 = 0.0;
	for (size_t k = 0; k < big; k++) {
		double z = tol_rng_normal(&r);
		tail += fabs(z) > edge;
		neg += z < 0.0;
		s1 += z;
		s2 += z * z;
		s4 += z * z * z * z;
	}
	double p = erfc(edge / sqrt(2.0)), nb = (double)big;
	double want = p * nb, se = sqrt(nb * p * (1.0 - p));
	print_message("# ziggurat: %zu beyond r, expected %.1f +- %.1f\n", tail,
	              want, se);
	assert_true(fabs((double)tail - want) < 5.0 * se);
	assert_true(fabs((double)neg - 0.5 * nb) < 5.0 * sqrt(0.25 * nb));
	assert_true(fabs(s1 / nb) < 5.0 / sqrt(nb));
	assert_true(fabs(s2 / nb - 1.0) < 5.0 * sqrt(2.0 / nb));
	assert_true(fabs(s4 / nb - 3.0) < 5.0 * sqrt(96.0 / nb));
}

/*
 * Every output's percentiles, extremes and mean against the trials done
 * one by one: two uniform tolerances (VS and RS of a power-law load), so
 * the generator's stream gives each trial's parameters, and each trial
 * solved on its own; the percentiles of the sorted outputs by Hyndman &
 * Fan's definition 7, exactly (the device power and the resistor power
 * are found from the stored voltage, current and resistance).
 */
static void test_percentiles_every_output(void **state)
{
	(void)state;
	struct problem pb = { .net = NULL };
	struct source_spec sp;
	char err[200];
	source_spec_thevenin(&sp, 12.5, 100.0);
	assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
	device_init(&pb.dev, &model_power_law);
	pb.dev.p[POWER_LAW_VREF] = 9.37;
	pb.dev.p[POWER_LAW_IREF] = 0.0913;
	pb.dev.p[POWER_LAW_ALPHA] = 2.3;
	struct solve_options o;
	solve_options_init(&o);
	struct tol_case c;
	tol_case_init(&c, &pb, SOURCE_THEVENIN, &o);
	assert_int_equal(tol_case_add(&c, "vs", 11.3, 13.7, TOL_UNIFORM, err,
	                              sizeof err), 0);
	assert_int_equal(tol_case_add(&c, "rs", 87.0, 113.0, TOL_UNIFORM, err,
	                              sizeof err), 0);
	const size_t n = 30011;
	struct tol_mc mc;
	assert_int_equal(tol_monte_carlo(&c, n, 7707, 17, NULL, 0, &mc, err,
	                                 sizeof err), 0);
	assert_int_equal(mc.failed, 0);
	double *col[TOL_NOUT];
	for (int k = 0; k < TOL_NOUT; k++) {
		col[k] = malloc(n * sizeof *col[k]);
		assert_non_null(col[k]);
	}
	struct tol_rng rng;
	tol_rng_seed(&rng, 7707);
	for (size_t t = 0; t < n; t++) {
		/* lo + (hi - lo) u, as a uniform item draws. */
		double x[2] = { 11.3 + (13.7 - 11.3) * tol_rng_uniform(&rng),
		                87.0 + (113.0 - 87.0) * tol_rng_uniform(&rng) };
		double y[TOL_NOUT];
		assert_int_equal(tol_eval(&c, x, NAN, y), 0);
		for (int k = 0; k < TOL_NOUT; k++)
			col[k][t] = y[k];
	}
	for (int k = 0; k < TOL_NOUT; k++) {
		qsort(col[k], n, sizeof *col[k], cmp_double);
		const struct tol_stats *st = &mc.stats[k];
		assert_true(st->min == col[k][0] && st->max == col[k][n - 1]);
		double sum = 0.0;
		for (size_t t = 0; t < n; t++)
			sum += col[k][t];
		assert_true(fabs(st->mean - sum / (double)n) <= 1e-13 * fabs(st->mean));
		for (int p = 0; p < TOL_NPCT; p++) {
			double h = (double)(n - 1) * tol_percentiles[p] / 100.0;
			size_t lo = (size_t)floor(h);
			double want = col[k][lo] + (h - (double)lo) *
			                               (col[k][lo + 1] - col[k][lo]);
			if (st->pct[p] != want)
				fail_msg("%s p%g: %.17g, sorted %.17g", tol_output_name(k),
				         tol_percentiles[p], st->pct[p], want);
		}
		free(col[k]);
	}
}

/* Percentiles, histogram and yield of an exactly uniform output. */
static void test_uniform_output(void **state)
{
	(void)state;
	/* An ideal voltage source: V = VS exactly, so V is uniform. */
	struct problem pb = { .net = NULL }; /* no network */
	struct source_spec sp;
	char err[200];
	source_spec_thevenin(&sp, 12.3, 0.0);
	assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
	device_init(&pb.dev, &model_power_law);
	pb.dev.p[POWER_LAW_VREF] = 9.37;
	pb.dev.p[POWER_LAW_IREF] = 0.0913;
	pb.dev.p[POWER_LAW_ALPHA] = 2.3;
	struct solve_options o;
	solve_options_init(&o);
	struct tol_case c;
	tol_case_init(&c, &pb, SOURCE_THEVENIN, &o);
	assert_int_equal(tol_case_add(&c, "vs", 11.7, 12.9, TOL_UNIFORM, err,
	                              sizeof err), 0);
	const size_t n = 50000;
	struct tol_window win = { TOL_VOLTAGE, 12.0, 12.6 };
	struct tol_mc mc;
	assert_int_equal(tol_monte_carlo(&c, n, 4242, 12, &win, 1, &mc, err,
	                                 sizeof err), 0);
	const struct tol_stats *s = &mc.stats[TOL_VOLTAGE];
	/* Uniform quantiles lo + p (hi - lo), within 5 binomial errors. */
	for (int p = 0; p < TOL_NPCT; p++) {
		double q = tol_percentiles[p] / 100.0;
		double se = 1.2 * sqrt(q * (1.0 - q) / (double)n);
		assert_true(fabs(s->pct[p] - (11.7 + 1.2 * q)) < 5.0 * se + 1e-9);
	}
	/* Exactly: V = VS, and VS is the generator's uniform stream, so the
	 * percentiles are those of the sorted stream (Hyndman & Fan 1996,
	 * definition 7: x[floor(h)] + (h - floor(h)) (x[floor(h)+1] -
	 * x[floor(h)]), h = (n - 1) p). */
	double *xs = malloc(n * sizeof *xs);
	assert_non_null(xs);
	struct tol_rng rng;
	tol_rng_seed(&rng, 4242);
	for (size_t k = 0; k < n; k++)
		xs[k] = 11.7 + (12.9 - 11.7) * tol_rng_uniform(&rng);
	qsort(xs, n, sizeof *xs, cmp_double);
	for (int p = 0; p < TOL_NPCT; p++) {
		double h = (double)(n - 1) * tol_percentiles[p] / 100.0;
		size_t lo = (size_t)floor(h);
		double want = xs[lo] + (h - (double)lo) * (xs[lo + 1] - xs[lo]);
		if (fabs(s->pct[p] - want) > 1e-15 * want)
			fail_msg("p%g: %.17g, sorted stream %.17g", tol_percentiles[p],
			         s->pct[p], want);
	}
	assert_true(s->min == xs[0] && s->max == xs[n - 1]);
	free(xs);
	/* Yield: half the range is inside the window. */
	assert_true(mc.has_window);
	assert_true(fabs(mc.yield - 0.5) < 5.0 * sqrt(0.25 / (double)n));
	/* A flat histogram: each bin within 5 binomial errors of n / 12. */
	double e = (double)n / 12.0, sd = sqrt(e * (1.0 - 1.0 / 12.0));
	for (size_t b = 0; b < 12; b++)
		assert_true(fabs((double)mc.hist[TOL_VOLTAGE].counts[b] - e) < 5.0 * sd);
	/* An open-ended window: V >= 12.45 holds a 0.375 share. */
	win = (struct tol_window){ TOL_VOLTAGE, 12.45, NAN };
	assert_int_equal(tol_monte_carlo(&c, n, 4242, 12, &win, 1, &mc, err,
	                                 sizeof err), 0);
	assert_true(fabs(mc.yield - 0.375) < 5.0 * sqrt(0.25 / (double)n));
	/* Two windows: 12.45 <= V and P <= the power at 12.75 V: 0.25. */
	double v2 = 12.75, p2 = v2 * 0.0913 * pow(v2 / 9.37, 2.3);
	struct tol_window two[2] = { { TOL_VOLTAGE, 12.45, NAN },
	                             { TOL_DEVICE_POWER, NAN, p2 } };
	assert_int_equal(tol_monte_carlo(&c, n, 4242, 12, two, 2, &mc, err,
	                                 sizeof err), 0);
	assert_true(fabs(mc.yield - 0.25) < 5.0 * sqrt(0.1875 / (double)n));
}

/* Every trial equal: an ideal current source fixes the current. */
static void test_all_equal(void **state)
{
	(void)state;
	struct problem pb = { .net = NULL }; /* no network */
	struct source_spec sp;
	char err[200];
	source_spec_norton(&sp, 0.0173, INFINITY);
	assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
	device_init(&pb.dev, &model_diode);
	pb.dev.p[DIODE_IS] = 2.2e-12;
	pb.dev.p[DIODE_N] = 1.7;
	struct solve_options o;
	solve_options_init(&o);
	struct tol_case c;
	tol_case_init(&c, &pb, SOURCE_NORTON, &o);
	assert_int_equal(tol_case_add(&c, "ideality", 1.6, 1.8, TOL_NORMAL, err,
	                              sizeof err), 0);
	struct tol_mc mc;
	assert_int_equal(tol_monte_carlo(&c, 7001, 5, 9, NULL, 0, &mc, err,
	                                 sizeof err), 0);
	const struct tol_stats *s = &mc.stats[TOL_CURRENT];
	if (!(s->sd == 0.0 && s->mean == 0.0173))
		fail_msg("sd %.17g mean %.17g min %.17g max %.17g", s->sd, s->mean, s->min, s->max);
	assert_true(s->min == 0.0173 && s->max == 0.0173);
	for (int p = 0; p < TOL_NPCT; p++)
		assert_true(s->pct[p] == 0.0173);
	assert_int_equal(mc.hist[TOL_CURRENT].counts[0], 7001);
	/* The voltage does vary: percentiles ordered, inside the range. */
	const struct tol_stats *v = &mc.stats[TOL_VOLTAGE];
	assert_true(v->sd > 0.0);
	for (int p = 1; p < TOL_NPCT; p++)
		assert_true(v->pct[p] >= v->pct[p - 1]);
}

/* Bad tolerances and runs are refused with a reason. */
static void test_bad(void **state)
{
	(void)state;
	struct tol_case c;
	char err[200];
	led_case(&c);
	assert_int_equal(tol_case_add(&c, "rs", 2.3e3, 2.1e3, TOL_UNIFORM, err,
	                              sizeof err), -1);
	assert_non_null(strstr(err, "above the maximum"));
	assert_int_equal(tol_case_add(&c, "rs", -10.0, 2.1e3, TOL_UNIFORM, err,
	                              sizeof err), -1);
	assert_non_null(strstr(err, "valid range"));
	assert_int_equal(tol_case_add(&c, "ideality", 0.0, 2.1, TOL_UNIFORM, err,
	                              sizeof err), -1);
	assert_int_equal(tol_case_add(&c, "rs", 2.1e3, 2.3e3, TOL_UNIFORM, err,
	                              sizeof err), 0);
	assert_int_equal(tol_case_add(&c, "rs", 2.1e3, 2.3e3, TOL_UNIFORM, err,
	                              sizeof err), -1);
	assert_non_null(strstr(err, "already"));
	assert_int_equal(tol_case_add(&c, "gain", 1.0, 2.0, TOL_UNIFORM, err,
	                              sizeof err), -1);
	struct tol_mc mc;
	assert_int_equal(tol_monte_carlo(&c, 0, 1, 10, NULL, 0, &mc, err, sizeof err),
	                 -1);
	assert_int_equal(tol_monte_carlo(&c, 10, 1, 0, NULL, 0, &mc, err, sizeof err),
	                 -1);
	assert_int_equal(tol_monte_carlo(&c, 10, 1, TOL_MAX_BINS + 1, NULL, 0, &mc,
	                                 err, sizeof err), -1);
	/* Thirteen parameters are too many for the corners. */
	c.nitems = 13;
	for (size_t k = 1; k < 13; k++)
		c.items[k] = c.items[0];
	struct tol_worst w;
	assert_int_equal(tol_worst_case(&c, &w, err, sizeof err), -1);
	assert_non_null(strstr(err, "at most 12"));
	/* Names both ways. */
	enum tol_dist d;
	assert_int_equal(tol_dist_from_name("normal", &d), 0);
	assert_int_equal(d, TOL_NORMAL);
	assert_int_equal(tol_dist_from_name("gauss", &d), -1);
	assert_string_equal(tol_output_name(TOL_RESISTOR_POWER), "resistor_power");
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_worst_case_monotone),
		cmocka_unit_test(test_worst_case_interior),
		cmocka_unit_test(test_monte_carlo_gum),
		cmocka_unit_test(test_monte_carlo_seed),
		cmocka_unit_test(test_rng_distributions),
		cmocka_unit_test(test_ziggurat),
		cmocka_unit_test(test_percentiles_every_output),
		cmocka_unit_test(test_uniform_output),
		cmocka_unit_test(test_all_equal),
		cmocka_unit_test(test_bad),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
