/*
 * test_stability.c - the stability verdict at operating points against the
 * closed-form criteria of the linearised circuit (Chua, Desoer & Kuh,
 * Linear and Nonlinear Circuits, McGraw-Hill 1987: a first-order circuit
 * is stable when its one eigenvalue is negative; a second-order one when
 * its trace is negative and its determinant positive).
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include <cmocka.h>

#include "core/model.h"
#include "core/solve.h"
#include "core/paramref.h"
#include "core/stability.h"
#include "core/sweep.h"

/* Solve a Thevenin source VS, RS into the model NAME (defaults) into PB, RES. */
static void solve_case(const char *name, double vs, double rs,
                       struct problem *pb, struct solve_result *res)
{
	const struct model_type *mt = model_find(name);
	assert_non_null(mt);
	memset(pb, 0, sizeof *pb);
	device_init(&pb->dev, mt);
	struct source_spec sp;
	char err[128];
	source_spec_thevenin(&sp, vs, rs);
	assert_int_equal(source_from_spec(&sp, &pb->src, err, sizeof err), 0);
	struct solve_options o;
	solve_options_init(&o);
	assert_int_equal(solve_problem(pb, &o, res), SOLVE_OK);
}

/*
 * A 1.03 kohm line across the tunnel diode's falling branch crosses three
 * times.  With the device's own capacitance dominant, the first-order
 * criterion 1 + R/r_d > 0 (Chua, Desoer & Kuh 1987) makes the outer points
 * stable and the middle one (R > |r_d|) a saddle: unstable.
 */
static void test_tunnel_three(void **state)
{
	(void)state;
	struct problem pb;
	struct solve_result res;
	solve_case("tunnel", 0.2 + 0.55e-3 * 1030.0, 1030.0, &pb, &res);
	assert_int_equal(res.n, 3);
	static const enum stability want[3] = {
		STABILITY_STABLE, STABILITY_UNSTABLE, STABILITY_STABLE
	};
	for (size_t k = 0; k < 3; k++) {
		struct stability_result s;
		stability_classify(&pb, res.pts[k].rd, NULL, &s);
		print_message("# point %zu: r_d %.4g ohm: %s (%s)\n", k, res.pts[k].rd,
		              stability_name(s.verdict), s.reason);
		assert_int_equal(s.verdict, want[k]);
		assert_int_equal(s.dynamics, DYNAMICS_ELECTRICAL);
		/* The closed form: stable iff 1 + R/r_d > 0. */
		bool stable = 1.0 + 1030.0 / res.pts[k].rd > 0.0;
		assert_int_equal(s.verdict == STABILITY_STABLE, stable);
	}
}

/*
 * A stiff source (47 ohm) crosses the falling branch once.  With C only it
 * is stable (1 + R/r_d > 0); with C = 1.37 pF and L in series the trace
 * T = -1/(r_d C) - R/L changes sign at L = R |r_d| C (Chua, Desoer & Kuh
 * 1987, second-order circuits): just below stable, just above oscillates.
 */
static void test_tunnel_falling_branch(void **state)
{
	(void)state;
	struct problem pb;
	struct solve_result res;
	solve_case("tunnel", 0.22585, 47.0, &pb, &res);
	assert_int_equal(res.n, 1);
	double rd = res.pts[0].rd;
	assert_true(rd < 0.0 && 47.0 < -rd);
	struct reactive_parts rp;
	reactive_parts_init(&rp);
	struct stability_result s;
	stability_classify(&pb, rd, &rp, &s);
	assert_int_equal(s.verdict, STABILITY_STABLE);

	rp.capacitance_across_device = 1.37e-12;
	stability_classify(&pb, rd, &rp, &s);
	assert_int_equal(s.verdict, STABILITY_STABLE);

	double lcrit = 47.0 * -rd * rp.capacitance_across_device;
	rp.inductance_in_series = 0.97 * lcrit;
	stability_classify(&pb, rd, &rp, &s);
	print_message("# L = 0.97 Lcrit: %s, T %.4g\n", stability_name(s.verdict),
	              s.trace);
	assert_int_equal(s.verdict, STABILITY_STABLE);
	double t = -1.0 / (rd * rp.capacitance_across_device) -
	           47.0 / rp.inductance_in_series;
	assert_true(fabs(s.trace - t) <= 1e-12 * fabs(t));
	assert_true(s.trace < 0.0 && s.det > 0.0);

	rp.inductance_in_series = 1.03 * lcrit;
	stability_classify(&pb, rd, &rp, &s);
	print_message("# L = 1.03 Lcrit: %s, T %.4g\n", stability_name(s.verdict),
	              s.trace);
	assert_int_equal(s.verdict, STABILITY_OSCILLATES);
	assert_true(s.trace > 0.0 && s.det > 0.0);

	/* L with no C given: the device's tiny capacitance lets it ring. */
	rp.capacitance_across_device = NAN;
	stability_classify(&pb, rd, &rp, &s);
	assert_int_equal(s.verdict, STABILITY_OSCILLATES);
}

/* A self-heated NTC thermistor (values of the shipped sample, invented). */
static void thermistor_case(struct problem *pb, double vs, double rs,
                            struct solve_result *res)
{
	const struct model_type *mt = model_find("thermistor");
	assert_non_null(mt);
	memset(pb, 0, sizeof *pb);
	device_init(&pb->dev, mt);
	pb->dev.p[model_param_index(mt, "resistance_at_reference")] = 10e3;
	pb->dev.p[model_param_index(mt, "reference_temperature")] = 25.0;
	pb->dev.p[model_param_index(mt, "beta")] = 3977.0;
	pb->dev.p[model_param_index(mt, "dissipation_constant")] = 1.5e-3;
	pb->dev.p[model_param_index(mt, "ambient_temperature")] = 25.0;
	pb->dev.p[model_param_index(mt, "maximum_temperature")] = 150.0;
	struct source_spec sp;
	char err[128];
	source_spec_thevenin(&sp, vs, rs);
	assert_int_equal(source_from_spec(&sp, &pb->src, err, sizeof err), 0);
	struct solve_options o;
	solve_options_init(&o);
	assert_int_equal(solve_problem(pb, &o, res), SOLVE_OK);
}

/*
 * Past its voltage peak a self-heated NTC thermistor has dV/dI < 0.  Its
 * thermal lag acts in series, so the first-order criterion is R + r_d > 0
 * (Chua, Desoer & Kuh 1987 for the first-order circuit; for thermistors
 * the same heat-balance result, Becker, Green & Pearson 1946, from
 * memory).  A line through a point past the peak with R < |r_d| (nearly
 * a voltage source) gives a point that runs away; one with R > |r_d| a
 * stable one.
 */
static void test_thermistor(void **state)
{
	(void)state;
	const struct model_type *mt = model_find("thermistor");
	assert_non_null(mt);
	assert_null(mt->current);
	struct problem pb;
	struct solve_result res;
	/* Find the slope past the peak at 6.3 mA with a throwaway solve. */
	thermistor_case(&pb, 40.0, 2000.0, &res);
	double i0 = 6.3e-3, v0;
	assert_int_equal(device_voltage(&pb.dev, i0, &v0), 0);
	double rd = mt->resistance(pb.dev.p, i0);
	print_message("# at 6.3 mA: %.4g V, r_d %.4g ohm\n", v0, rd);
	assert_true(rd < 0.0);
	static const double fractions[] = { 0.31, 2.7 };
	for (size_t k = 0; k < 2; k++) {
		double r = fractions[k] * -rd;
		thermistor_case(&pb, v0 + r * i0, r, &res);
		bool found = false;
		for (size_t j = 0; j < res.n; j++) {
			if (fabs(res.pts[j].i - i0) > 1e-6 * i0)
				continue;
			found = true;
			struct stability_result s;
			stability_classify(&pb, res.pts[j].rd, NULL, &s);
			print_message("# R = %.3g |r_d|: %s (%s)\n", fractions[k],
			              stability_name(s.verdict), s.reason);
			assert_int_equal(s.dynamics, DYNAMICS_THERMAL);
			assert_int_equal(s.verdict, r + res.pts[j].rd > 0.0
			                 ? STABILITY_STABLE : STABILITY_UNSTABLE);
			assert_int_equal(s.verdict, k == 0 ? STABILITY_UNSTABLE
			                                   : STABILITY_STABLE);
		}
		assert_true(found);
	}
}

/*
 * A thermistor driven past the end of its range runs away: 60 V behind
 * 200 ohm still pushes more current than the part carries at its maximum
 * temperature (no crossing: the solve finds none); 40 V behind 2 kohm
 * settles (the sample's case) and is not reported.
 */
static void test_runaway(void **state)
{
	(void)state;
	struct problem pb;
	struct solve_result res;
	thermistor_case(&pb, 40.0, 2000.0, &res);
	char msg[400];
	assert_false(stability_runaway(&pb, msg, sizeof msg));
	struct source_spec sp;
	char err[128];
	source_spec_thevenin(&sp, 60.0, 200.0);
	assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
	struct solve_options o;
	solve_options_init(&o);
	solve_problem(&pb, &o, &res);
	assert_int_equal(res.n, 0);
	assert_true(stability_runaway(&pb, msg, sizeof msg));
	print_message("# %s\n", msg);
	assert_non_null(strstr(msg, "runs away"));
	assert_non_null(strstr(msg, "maximum temperature"));
	/* A device with I(V) never runs away this way. */
	solve_case("tunnel", 0.47, 420.0, &pb, &res);
	assert_false(stability_runaway(&pb, msg, sizeof msg));
}

/*
 * A tolerance box across the tunnel diode's bistable range holds a fold
 * (one point at 517 mV, three at 470 mV: the sweep above shows the range
 * 349 mV to 491 mV); a box inside the one-point range does not.
 */
static void test_box_fold(void **state)
{
	(void)state;
	struct problem pb;
	struct solve_result res;
	solve_case("tunnel", 0.47, 420.0, &pb, &res);
	struct tol_case c;
	memset(&c, 0, sizeof c);
	c.pb = pb;
	solve_options_init(&c.opts);
	c.nitems = 1;
	char err[200], msg[400];
	assert_int_equal(paramref_find(&pb, "vs", &c.items[0].param, err,
	                               sizeof err), 0);
	c.items[0].lo = 0.423;
	c.items[0].hi = 0.517;
	assert_true(stability_box_fold(&c, msg, sizeof msg));
	assert_non_null(strstr(msg, "fold"));
	c.items[0].lo = 0.62;
	c.items[0].hi = 0.71;
	struct source_spec sp;
	source_spec_thevenin(&sp, 0.665, 420.0);
	assert_int_equal(source_from_spec(&sp, &c.pb.src, err, sizeof err), 0);
	assert_false(stability_box_fold(&c, msg, sizeof msg));
}

/* Ideal sources, undefined slopes and the names. */
static void test_edges(void **state)
{
	(void)state;
	struct problem pb;
	struct solve_result res;
	solve_case("tunnel", 0.22585, 47.0, &pb, &res);
	struct stability_result s;
	stability_classify(&pb, NAN, NULL, &s);
	assert_int_equal(s.verdict, STABILITY_UNKNOWN);
	/* A current source on a falling branch: the voltage runs off. */
	pb.src.r = INFINITY;
	stability_classify(&pb, -280.0, NULL, &s);
	assert_int_equal(s.verdict, STABILITY_UNSTABLE);
	stability_classify(&pb, 280.0, NULL, &s);
	assert_int_equal(s.verdict, STABILITY_STABLE);
	assert_string_equal(stability_name(STABILITY_OSCILLATES), "oscillates");
	assert_string_equal(stability_name(STABILITY_UNSTABLE), "unstable");
}

/* V on the tunnel diode's curve in [LO, HI] where dI/dV = G (bisection). */
static double slope_at(const struct device *d, double lo, double hi, double g)
{
	double flo = device_conductance(d, lo) - g;
	for (int k = 0; k < 200; k++) {
		double m = 0.5 * (lo + hi), fm = device_conductance(d, m) - g;
		if ((fm < 0.0) == (flo < 0.0)) {
			lo = m;
			flo = fm;
		} else {
			hi = m;
		}
	}
	return 0.5 * (lo + hi);
}

/*
 * Sweeping the source voltage across the tunnel diode's bistable range
 * behind 420 ohm: going up, the low branch ends where the line is tangent
 * to the curve near the peak and the circuit jumps to the high branch;
 * going down, the high branch ends at the tangent near the valley and it
 * jumps back.  The tangents are where dI/dV = -1/R, so the jump values are
 * V + R I(V) there (the fold condition; Chua, Desoer & Kuh 1987, the jump
 * phenomenon), computed here by bisection on the model's own slope.
 */
static void test_sweep_jumps(void **state)
{
	(void)state;
	struct problem pb;
	struct solve_result res0;
	solve_case("tunnel", 0.47, 420.0, &pb, &res0);
	struct sweep_spec sp = { .from = 0.1, .to = 0.9, .points = 161,
	                         .scale = SWEEP_LINEAR };
	char err[200];
	assert_int_equal(paramref_find(&pb, "vs", &sp.param, err, sizeof err), 0);
	struct solve_options o;
	solve_options_init(&o);
	struct sweep_result res;
	assert_int_equal(sweep_run(&pb, &o, &sp, &res), 0);
	struct stability_jump up[4], down[4];
	size_t nu = stability_jumps(&pb, NULL, &sp, &res, true, up, 4);
	size_t nd = stability_jumps(&pb, NULL, &sp, &res, false, down, 4);
	assert_int_equal(nu, 1);
	assert_int_equal(nd, 1);
	/* The tangents on the falling branch, between peak and valley. */
	double vp = pb.dev.p[model_param_index(pb.dev.type, "peak_voltage")];
	double vv = pb.dev.p[model_param_index(pb.dev.type, "valley_voltage")];
	double g = -1.0 / 420.0;
	/* The slope falls from 0 at the peak to its steepest, then back. */
	double steep = vp;
	for (double v = vp; v <= vv; v += 1e-4)
		if (device_conductance(&pb.dev, v) < device_conductance(&pb.dev, steep))
			steep = v;
	double va = slope_at(&pb.dev, vp, steep, g);
	double vb = slope_at(&pb.dev, steep, vv, g);
	double fold_a = va + 420.0 * device_current(&pb.dev, va);
	double fold_b = vb + 420.0 * device_current(&pb.dev, vb);
	print_message("# folds by tangency %.6g V and %.6g V; jumps up %.6g V, "
	              "down %.6g V\n", fold_a, fold_b, up[0].value, down[0].value);
	double hi = fmax(fold_a, fold_b), lo = fmin(fold_a, fold_b);
	assert_true(fabs(up[0].value - hi) < 1e-4 * hi);
	assert_true(fabs(down[0].value - lo) < 1e-4 * lo);
	/* Up: from the low-voltage branch to the high one; down: back. */
	assert_true(up[0].v_from < vp * 1.5 && up[0].v_to > vv * 0.9);
	assert_true(down[0].v_from > up[0].v_from && down[0].v_to < vp * 1.5);
	sweep_result_fini(&res);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_tunnel_three),
		cmocka_unit_test(test_tunnel_falling_branch),
		cmocka_unit_test(test_thermistor),
		cmocka_unit_test(test_edges),
		cmocka_unit_test(test_runaway),
		cmocka_unit_test(test_box_fold),
		cmocka_unit_test(test_sweep_jumps),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
