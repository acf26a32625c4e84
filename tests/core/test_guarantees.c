/*
 * test_guarantees.c - what the solver promises, checked over random
 * circuits of every model and every kind of source:
 *
 *   - the default solve misses no point that another method verifies:
 *     Newton and Brent, projections and relaxation in both orders, each
 *     from a grid of starting voltages across the device's range;
 *   - a tunnel diode fed from a current-like source (a load line through
 *     its falling branch, flatter than the branch there; RS from 1 kohm
 *     to 10 Gohm, so the source voltage reaches megavolts) yields its
 *     three crossings, as a brute-force count of sign changes finds them;
 *   - every reported point of every method lies within the requested
 *     tolerance (1e-12 to 0.1) of the intersection, in V and in I, for
 *     steep power laws (exponents 10 to 200), against a long-double
 *     bisection of the intersection;
 *   - a parameter set whose derived quantities do not fit a double
 *     (Is carried from a reference temperature, a tunnel diode's
 *     constants) is refused with the key.
 *
 * The references are brute force and bisection (common practice); the
 * circuits are invented.  The scan's test runs 1e5 circuits in a plain
 * build and 4000 under AddressSanitizer (which runs it ten times slower);
 * BIASLINE_GUARANTEE_CIRCUITS sets another count (under valgrind, say).
 */
#include <float.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cmocka.h>

#include "core_check.h"

#include "core/models/models.h"
#include "core/solve.h"

/* Whether this build runs under AddressSanitizer. */
#if defined(__SANITIZE_ADDRESS__)
#define GUARANTEE_ASAN 1
#elif defined(__has_feature)
#if __has_feature(address_sanitizer)
#define GUARANTEE_ASAN 1
#endif
#endif
#ifndef GUARANTEE_ASAN
#define GUARANTEE_ASAN 0
#endif

/* Circuits of the scan's test: PLAIN in a plain build, ASAN under
 * AddressSanitizer, or BIASLINE_GUARANTEE_CIRCUITS. */
static int guarantee_count(int plain, int asan)
{
	const char *e = getenv("BIASLINE_GUARANTEE_CIRCUITS");
	if (e != NULL && atoi(e) > 0)
		return atoi(e);
	return GUARANTEE_ASAN ? asan : plain;
}

/* A base parameter set of one model, and which of its values to vary. */
struct base {
	const char *name;
	double p[MODEL_MAX_PARAMS];
	unsigned vary;     /* bit k: multiply p[k] by a factor 0.7 .. 1.4 */
};

/* Invented values of the usual magnitudes, one set a model. */
static const struct base bases[] = {
	{ "diode", { 3.1e-14, 1.27, 0.33, 41.3, -273.15, 1.12, 3.0 }, 0x7 },
	{ "power-law", { 12.7, 3.81e-3, 3.6 }, 0x7 },
	{ "zener", { 5.1, 5e-3, 17.0, 1e-14, 1.0, 1.0, 25.0 }, 0x1 },
	{ "led", { 2.0, 20e-3, 2.0, 6.0, 25.0 }, 0xd },
	{ "tunnel", { 0.065, 1e-3, 0.35, 1.2e-4, 3.5e-12, 1.0, 25.0 }, 0x13 },
	{ "npn", { 1.2e-14, 1.0, 147.0, 470.0, 2.2e3, 12.0, 0.2, 25.0 }, 0xd },
	{ "pnp", { 3.9e-15, 1.04, 61.0, 33.0, 470.0, 5.1, 0.3, 25.0 }, 0xd },
	{ "jfet", { 8.7e-3, -2.43, 15.0, 1.2e3 }, 0x9 },
	{ "nmos", { 2.4e-3, 1.87, 18.0, 3.3e3 }, 0x9 },
	{ "thermistor", { 1e4, 25.0, 3977.0, 1.5e-3, 25.0, 150.0 }, 0xd },
	{ "thermistor-sh", { 1.129148e-3, 2.34125e-4, 8.76741e-8, 1.5e-3, 25.0,
	                     150.0 }, 0x8 },
	{ "measured", { 0 }, 0 },
};

/* A measured curve: six points of a soft diode-like part, with or
 * without a current at 0 V. */
static int measured_curve(struct check_rng *rng, struct curve_data *cd)
{
	double v[6], i[6], off = (check_rng_next(rng) & 1u)
	                             ? check_rng_uniform(rng, -2e-3, 2e-3) : 0.0;
	double s = check_rng_uniform(rng, 0.7, 1.4);
	for (int k = 0; k < 6; k++) {
		v[k] = 0.2 * k * s;
		i[k] = 1e-4 * expm1(3.1 * v[k]) + off;
	}
	char err[200];
	return curve_data_init(cd, v, i, 6, err, sizeof err);
}

/* A random valid device of base B into DEV (CD holds a measured curve). */
static int random_device(struct check_rng *rng, const struct base *b,
                         struct device *dev, struct curve_data *cd)
{
	const struct model_type *t = model_find(b->name);
	assert_non_null(t);
	for (int tries = 0; tries < 20; tries++) {
		device_init(dev, t);
		if (t == &model_measured) {
			if (measured_curve(rng, cd) != 0)
				return -1;
			dev->curve = cd;
			return 0;
		}
		for (size_t k = 0; k < t->nparams; k++) {
			dev->p[k] = b->p[k];
			if (b->vary & (1u << k))
				dev->p[k] *= check_rng_log_uniform(rng, 0.7, 1.4);
		}
		char err[200];
		if (device_validate(dev, err, sizeof err) == 0)
			return 0;
	}
	return -1;
}

/*
 * A random source of kind KIND for a device whose range is [LO, HI]:
 * Thevenin, an ideal voltage source, an ideal current source, a finite
 * Norton source; voltages across the device's range and, one time in
 * four, far beyond it.
 */
static void random_source(struct check_rng *rng, int kind,
                          const struct device *dev, struct source *src)
{
	double lo, hi;
	device_range(dev, &lo, &hi);
	double span = hi - lo;
	double vs = check_rng_uniform(rng, lo - 0.5 * span, hi + 0.5 * span);
	if ((check_rng_next(rng) & 3u) == 0)
		vs *= check_rng_log_uniform(rng, 1.0, 1e4);
	double rs = check_rng_log_uniform(rng, 1.0, 1e7);
	struct source_spec sp;
	char err[200];
	switch (kind) {
	case 0:
		source_spec_thevenin(&sp, vs, rs);
		break;
	case 1:
		source_spec_thevenin(&sp, check_rng_uniform(rng, lo, hi), 0.0);
		break;
	case 2: {
		double v = check_rng_uniform(rng, lo, hi), i = NAN;
		if (dev->type->current != NULL)
			i = device_current(dev, v);
		else {
			double ilo, ihi;
			dev->type->current_range(dev->p, &ilo, &ihi);
			i = check_rng_uniform(rng, ilo, ihi);
		}
		source_spec_norton(&sp, isfinite(i) ? i : 1e-3, INFINITY);
		break;
	}
	default:
		source_spec_norton(&sp, vs / rs, rs);
		break;
	}
	assert_int_equal(source_from_spec(&sp, src, err, sizeof err), 0);
}

/* True when (V, I) is one of RES's points (to 1e-6 relative in V or I). */
static bool in_list(const struct solve_result *res, double v, double i)
{
	for (size_t k = 0; k < res->n; k++) {
		const struct op_point *q = &res->pts[k];
		if (fabs(v - q->v) <= 1e-6 * (fabs(v) + fabs(q->v)) + 1e-12 ||
		    fabs(i - q->i) <= 1e-6 * (fabs(i) + fabs(q->i)) + 1e-18)
			return true;
	}
	return false;
}

/*
 * The model of circuit K: each of the eight cheap models five times in
 * 44, the transistors and FETs (whose every solve costs ten times more)
 * once each.
 */
static size_t scan_base(int k)
{
	static const size_t cheap[] = { 0, 1, 2, 3, 4, 9, 10, 11 };
	static const size_t dear[] = { 5, 6, 7, 8 };
	int slot = k % 44;
	return slot < 40 ? cheap[slot % 8] : dear[slot - 40];
}

/*
 * Test 1: scan completeness.  For each of 1e5 random circuits (every
 * model, every kind of source), Newton and Brent are run from a grid of
 * nine starting voltages across the device's range (one for a
 * monotone curve on an ideal current source, which crosses once), and
 * on every eighth circuit projections and relaxation in both orders from
 * five; every point one of them reports (it has passed verification)
 * must be in the default solve's list.
 */
static void test_scan_complete(void **state)
{
	(void)state;
	struct check_rng rng = { 0x5ca9c0e1e7eu };
	int n = guarantee_count(100000, 4000);
	size_t nb = sizeof bases / sizeof bases[0];
	unsigned long runs = 0, found = 0, missed = 0, circuits = 0;
	unsigned long kinds[4] = { 0 }, per_model[sizeof bases / sizeof bases[0]];
	memset(per_model, 0, sizeof per_model);
	for (int k = 0; k < n; k++) {
		const struct base *b = &bases[scan_base(k)];
		struct problem pb = { .net = NULL };
		struct curve_data cd = { 0 };
		if (random_device(&rng, b, &pb.dev, &cd) != 0)
			continue;
		int kind = (int)(check_rng_next(&rng) % 4);
		random_source(&rng, kind, &pb.dev, &pb.src);
		struct solve_options o;
		solve_options_init(&o);
		struct solve_result def;
		solve_problem(&pb, &o, &def);
		circuits++;
		kinds[kind]++;
		per_model[scan_base(k)]++;
		double lo, hi;
		device_range(&pb.dev, &lo, &hi);
		static const enum solve_method methods[] = {
			METHOD_NEWTON, METHOD_BRENT, METHOD_PROJECTION, METHOD_RELAXED,
		};
		/* the stepped methods on every eighth circuit */
		size_t nm = k % 8 == 0 ? 4 : 2;
		for (size_t m = 0; m < nm; m++)
			for (int ord = 0; ord < 2; ord++) {
				if (m < 2 && ord == 1)
					continue; /* the order does not matter to them */
				/* a monotone curve on an ideal current source
				 * crosses once: one start finds it */
				int ns = m >= 2 ? 4
				         : kind == 2 && pb.dev.type->monotone ? 0 : 8;
				for (int s = 0; s <= ns; s++) {
					struct solve_options mo;
					solve_options_init(&mo);
					mo.method = methods[m];
					mo.order = (enum projection_order)ord;
					mo.start_v = ns > 0 ? lo + (hi - lo) * s / ns
					                    : 0.5 * (lo + hi);
					mo.max_steps = 400;
					struct solve_result r;
					runs++;
					if (solve_problem(&pb, &mo, &r) != SOLVE_OK)
						continue;
					for (size_t q = 0; q < r.n; q++) {
						found++;
						if (r.pts[q].tangent || in_list(&def, r.pts[q].v,
						                                r.pts[q].i))
							continue;
						missed++;
						print_message("# %s, r %.6g voc %.6g isc %.6g: %s from "
						              "%.4g V found %.17g V, %.17g A; the "
						              "default solve has %zu point(s)\n",
						              b->name, pb.src.r, pb.src.voc,
						              pb.src.isc, solve_method_name(mo.method),
						              mo.start_v, r.pts[q].v, r.pts[q].i,
						              def.n);
					}
				}
			}
		if (pb.dev.curve != NULL)
			curve_data_fini(&cd);
	}
	print_message("# %lu circuits (Thevenin %lu, ideal voltage %lu, ideal "
	              "current %lu, Norton %lu), %lu runs, %lu verified points, "
	              "%lu missed by the default solve\n", circuits, kinds[0],
	              kinds[1], kinds[2], kinds[3], runs, found, missed);
	/* every model and every kind of source had its share */
	for (size_t b = 0; b < nb; b++)
		if (per_model[b] < (unsigned long)n / 100)
			fail_msg("model %s: only %lu circuits", bases[b].name,
			         per_model[b]);
	for (int kd = 0; kd < 4; kd++)
		assert_true(kinds[kd] > circuits / 8);
	assert_true(circuits > (unsigned long)n / 2);
	assert_int_equal(missed, 0);
}

/* V + r I(V) - voc of a tunnel diode from its derived constants K. */
static double tunnel_residual(const struct problem *pb, const double *k,
                              double v)
{
	return v + pb->src.r * model_tunnel.current_k(pb->dev.p, k, v) -
	       pb->src.voc;
}

/* Sign changes of the residual of tunnel PB over [A, B] on N samples. */
static int brute_sign_changes(const struct problem *pb, double a, double b,
                              int n)
{
	double k[MODEL_MAX_DERIVED];
	assert_int_equal(model_tunnel.prepare(pb->dev.p, k), 0);
	int count = 0;
	double fp = tunnel_residual(pb, k, a);
	for (int j = 1; j <= n; j++) {
		double f = tunnel_residual(pb, k, a + (b - a) * j / n);
		if ((fp < 0.0 && f >= 0.0) || (fp > 0.0 && f <= 0.0))
			count++;
		fp = f;
	}
	return count;
}

/*
 * Test 2: a tunnel diode from a current-like source.  The load line runs
 * through a point in the middle of the falling branch and is at most
 * half as steep as the branch there (RS from 1 kohm to 10 Gohm), so it
 * crosses three times: a brute-force count over the device's range (5e4
 * samples; beyond the valley the curve only rises) says so, and so must
 * the default solve.
 */
static void test_tunnel_three(void **state)
{
	(void)state;
	struct check_rng rng = { 0x7e2a3b4c5du };
	int n = 1000, done = 0;
	for (int k = 0; k < n; k++) {
		struct problem pb = { .net = NULL };
		struct curve_data cd = { 0 };
		if (random_device(&rng, &bases[4], &pb.dev, &cd) != 0)
			continue;
		double vpk, ipk, vvl, ivl;
		if (tunnel_extrema(pb.dev.p, &vpk, &ipk, &vvl, &ivl) != 0)
			continue;
		double vm = vpk + (vvl - vpk) * check_rng_uniform(&rng, 0.3, 0.7);
		double im = device_current(&pb.dev, vm);
		double g = device_conductance(&pb.dev, vm);
		double rs = check_rng_log_uniform(&rng, 1e3, 1e10);
		if (!(g < 0.0) || !(rs >= 2.0 / -g))
			continue;
		struct source_spec sp;
		char err[200];
		source_spec_thevenin(&sp, vm + rs * im, rs);
		assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
		double lo, hi;
		device_range(&pb.dev, &lo, &hi);
		int brute = brute_sign_changes(&pb, lo, hi, 50000);
		if (problem_residual(&pb, hi) < 0.0)
			brute++; /* the rising tail crosses once more */
		struct solve_options o;
		solve_options_init(&o);
		struct solve_result res;
		assert_int_equal(solve_problem(&pb, &o, &res), SOLVE_OK);
		if (brute != 3 || res.n != 3)
			fail_msg("tunnel at %.4g V, %.4g A behind %.4g ohm from %.6g V: "
			         "brute force %d crossings, solve %zu", vm, im, rs,
			         pb.src.voc, brute, res.n);
		done++;
	}
	print_message("# %d tunnel circuits from current-like sources: three "
	              "crossings each\n", done);
	assert_true(done > n / 2);
}

/* V + r I(V) - voc of a power law in long double. */
static long double steep_residual(const double *p, const struct source *s,
                                  long double v)
{
	long double x = fabsl(v) / p[POWER_LAW_VREF];
	long double i = p[POWER_LAW_IREF] * powl(x, p[POWER_LAW_ALPHA]);
	if (v < 0.0L)
		i = -i;
	return v + s->r * i - s->voc;
}

/*
 * Test 3: verification means what it says.  Steep power laws (exponent
 * 10 to 200) behind random Thevenin sources; the intersection by 200
 * long-double bisections; every method with a tolerance from 1e-12 to
 * 0.1: each point it reports is within the tolerance of the intersection
 * in V and in I.
 */
static void test_verified_within_tolerance(void **state)
{
	(void)state;
	struct check_rng rng = { 0x3e11f00du };
	int n = 3000;
	unsigned long reported = 0;
	double worst = 0.0;
	for (int k = 0; k < n; k++) {
		struct problem pb = { .net = NULL };
		device_init(&pb.dev, &model_power_law);
		double *p = pb.dev.p;
		p[POWER_LAW_VREF] = check_rng_log_uniform(&rng, 0.1, 1e3);
		p[POWER_LAW_IREF] = check_rng_log_uniform(&rng, 1e-6, 10.0);
		p[POWER_LAW_ALPHA] = check_rng_uniform(&rng, 10.0, 200.0);
		double vs = p[POWER_LAW_VREF] * check_rng_uniform(&rng, 0.5, 3.0);
		double rs = p[POWER_LAW_VREF] / p[POWER_LAW_IREF] *
		            check_rng_log_uniform(&rng, 1e-3, 1e3);
		struct source_spec sp;
		char err[200];
		source_spec_thevenin(&sp, vs, rs);
		assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
		long double a = 0.0L, b = vs;
		for (int it = 0; it < 200; it++) {
			long double m = 0.5L * (a + b);
			if (steep_residual(p, &pb.src, m) < 0.0L)
				a = m;
			else
				b = m;
		}
		long double vref = 0.5L * (a + b);
		/* The current from the better-conditioned side: the line where
		 * the device is the steeper curve, else the device. */
		long double idev = p[POWER_LAW_IREF] *
		                   powl(fabsl(vref) / p[POWER_LAW_VREF],
		                        p[POWER_LAW_ALPHA]);
		long double gdev = p[POWER_LAW_ALPHA] * idev / fabsl(vref);
		long double iref = rs * gdev > 1.0L ? (vs - vref) / rs : idev;
		double tol = check_rng_log_uniform(&rng, 1e-12, 0.1);
		static const enum solve_method methods[] = {
			METHOD_AUTO, METHOD_NEWTON, METHOD_BRENT, METHOD_PROJECTION,
			METHOD_RELAXED,
		};
		for (size_t m = 0; m < 5; m++)
			for (int ord = 0; ord < 2; ord++) {
				struct solve_options o;
				solve_options_init(&o);
				o.method = methods[m];
				o.order = (enum projection_order)ord;
				o.tol = tol;
				o.max_steps = 2000;
				struct solve_result r;
				if (solve_problem(&pb, &o, &r) != SOLVE_OK)
					continue;
				for (size_t q = 0; q < r.n; q++) {
					reported++;
					double ev = (double)(fabsl(r.pts[q].v - vref) / fabsl(vref));
					double ei = (double)(fabsl(r.pts[q].i - iref) / fabsl(iref));
					double e = fmax(ev, ei) / tol;
					if (e > worst)
						worst = e;
					if (!(ev <= tol * (1.0 + 1e-6) + 1e-15 &&
					      ei <= tol * (1.0 + 1e-6) + 1e-15))
						fail_msg("alpha %.4g, tol %.3g, %s (%s): V %.17g "
						         "(exact %.17Lg, %.3g), I %.17g (exact %.17Lg, "
						         "%.3g)", p[POWER_LAW_ALPHA], tol,
						         solve_method_name(o.method),
						         projection_order_name(o.order), r.pts[q].v, vref,
						         ev, r.pts[q].i, iref, ei);
				}
			}
	}
	print_message("# %lu reported points, worst error %.3g of the tolerance\n",
	              reported, worst);
	assert_true(reported > (unsigned long)n);
}

/* A derived quantity that cannot be held: refused, the key named. */
struct derived_case {
	const char *model;
	const char *key[4];
	double value[4];
	const char *named;
};

/*
 * Test 4: derived quantities.  Is carried from a reference temperature
 * near absolute zero overflows; carried to a temperature near it,
 * underflows; a saturation current below the smallest normal number has
 * no precision left; a tunnel diode whose valley cannot be a minimum
 * has no excess-current constants.  Each is refused naming its key.
 */
static void test_derived_refused(void **state)
{
	(void)state;
	static const struct derived_case cases[] = {
		{ "diode", { "saturation_current", "reference_temperature",
		             "ideality" }, { 1e-14, -263.0, 1.0 },
		  "saturation_current" },
		{ "diode", { "saturation_current", "reference_temperature",
		             "temperature", "ideality" }, { 1e-14, 25.0, -270.0, 1.0 },
		  "saturation_current" },
		{ "diode", { "saturation_current", "ideality", NULL },
		  { 1e-310, 1.0, 0.0 }, "saturation_current" },
		{ "tunnel", { "valley_current", NULL, NULL }, { 9e-4, 0.0, 0.0 },
		  "valley_current" },
	};
	for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
		const struct derived_case *c = &cases[k];
		struct device d;
		device_init(&d, model_find(c->model));
		for (int j = 0; j < 4 && c->key[j] != NULL; j++)
			d.p[model_param_index(d.type, c->key[j])] = c->value[j];
		char err[256];
		assert_int_equal(device_validate(&d, err, sizeof err), -1);
		if (strstr(err, c->named) == NULL)
			fail_msg("case %zu: \"%s\" does not name %s", k, err, c->named);
		print_message("# %s\n", err);
	}
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_scan_complete),
		cmocka_unit_test(test_tunnel_three),
		cmocka_unit_test(test_verified_within_tolerance),
		cmocka_unit_test(test_derived_refused),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
