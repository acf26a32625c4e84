/*
 * test_models_bjt.c - npn/pnp base bias: the operating point against the
 * fixed-VBE approximation, exactly against the implicit base-loop equation
 * (closed form by Lambert W from GSL), the collector side, and the
 * saturated and cut-off cases.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include <cmocka.h>
#include <gsl/gsl_sf_lambert.h>

#include "models_check.h"

#include "core/model.h"
#include "core/models/models.h"
#include "core/solve.h"

/* A stage: divider R1 (to supply) / R2 (to rail) and the transistor. */
struct stage {
	double r1, r2, vcc, re, rc, is, beta, n, t;
};

static const struct stage stages[] = {
	{ 47e3, 12e3, 12.0, 470.0, 2.2e3, 1.2e-14, 147.0, 1.0, 25.0 },
	{ 68e3, 10e3, 15.3, 820.0, 3.9e3, 6.8e-15, 283.0, 1.0, 25.0 },
	{ 33e3, 8.2e3, 9.1, 330.0, 1.5e3, 2.3e-14, 96.0, 1.02, 41.7 },
	{ 100e3, 22e3, 24.0, 1.2e3, 4.7e3, 1.03e-14, 212.0, 1.0, 25.0 },
};

/* Build the base-loop problem of stage S for model T. */
static void stage_problem(const struct stage *s, const struct model_type *t,
                          struct problem *pb)
{
	device_init(&pb->dev, t);
	pb->dev.p[BJT_IS] = s->is;
	pb->dev.p[BJT_N] = s->n;
	pb->dev.p[BJT_BETA] = s->beta;
	pb->dev.p[BJT_RE] = s->re;
	pb->dev.p[BJT_RC] = s->rc;
	pb->dev.p[BJT_VCC] = s->vcc;
	pb->dev.p[BJT_TEMP] = s->t;
	struct source_spec sp;
	char err[128];
	source_spec_thevenin(&sp, s->vcc * s->r2 / (s->r1 + s->r2),
	                     s->r1 * s->r2 / (s->r1 + s->r2));
	assert_int_equal(source_from_spec(&sp, &pb->src, err, sizeof err), 0);
}

/* The value labelled KEY in OUT (NaN when absent). */
static double extra(const struct model_extra *out, const char *key)
{
	for (size_t k = 0; k < out->n; k++)
		if (strcmp(out->v[k].key, key) == 0)
			return out->v[k].value;
	return NAN;
}

/*
 * The base loop VBB = IB RB + n Vt ln(1 + beta IB / Is) + (beta+1) IB RE is
 * the diode-and-resistor equation with Is' = Is/beta and R = RB + (beta+1)
 * RE, whose solution is IB = (n Vt / R) W0((Is' R / n Vt)
 * exp((VBB + Is' R) / n Vt)) - Is' (Banwell & Jayakumar, Electronics
 * Letters 36(4), 2000); W0 from GSL.  The solve must agree to 1e-9; IC by
 * the fixed-VBE rule IB = (VBB - 0.675 V) / (RB + (beta+1) RE) (common
 * practice, VBE 0.65 to 0.7 V) within 3 %; the collector side by hand.
 */
static void test_active(void **state)
{
	(void)state;
	for (size_t k = 0; k < sizeof stages / sizeof stages[0]; k++) {
		const struct stage *s = &stages[k];
		for (int pol = 0; pol < 2; pol++) {
			struct problem pb;
			stage_problem(s, pol ? &model_pnp : &model_npn, &pb);
			struct solve_options o;
			solve_options_init(&o);
			struct solve_result res;
			assert_int_equal(solve_problem(&pb, &o, &res), SOLVE_OK);
			assert_int_equal(res.n, 1);
			double ib = res.pts[0].i, vb = res.pts[0].v;

			double nvt = s->n * diode_thermal_voltage(s->t);
			double isb = s->is / s->beta;
			double rt = pb.src.r + (s->beta + 1.0) * s->re;
			double arg = log(isb * rt / nvt) + (pb.src.voc + isb * rt) / nvt;
			/* W0 of exp(arg) without overflow: w + ln w = arg. */
			double w = arg > 700.0 ? arg - log(arg) : gsl_sf_lambert_W0(exp(arg));
			for (int it = 0; arg > 700.0 && it < 50; it++)
				w -= (w + log(w) - arg) / (1.0 + 1.0 / w);
			double ib_exact = nvt / rt * w - isb;
			if (!(fabs(ib / ib_exact - 1.0) < 1e-9))
				fail_msg("stage %zu: IB %.12g, closed form %.12g", k, ib,
				         ib_exact);

			double ib_fixed = (pb.src.voc - 0.675) /
			                  (pb.src.r + (s->beta + 1.0) * s->re);
			struct model_extra ex;
			assert_int_equal(device_secondary(&pb.dev, &pb.src, vb, ib, &ex), 0);
			double ic = extra(&ex, "collector_current");
			double vbe = extra(&ex, pol ? "emitter_base_voltage"
			                            : "base_emitter_voltage");
			double vce = extra(&ex, pol ? "emitter_collector_voltage"
			                            : "collector_emitter_voltage");
			print_message("# stage %zu %s: IC %.4f mA (fixed VBE %.4f mA), "
			              "VBE %.4f V, VCE %.3f V, %s\n", k, pb.dev.type->name,
			              ic * 1e3, s->beta * ib_fixed * 1e3, vbe, vce,
			              ex.region);
			assert_string_equal(ex.region, "active");
			assert_false(ex.warn);
			assert_true(fabs(ic / (s->beta * ib_fixed) - 1.0) < 0.03);
			assert_true(vbe > 0.6 && vbe < 0.75);
			assert_true(ic == s->beta * ib);
			double ie = (s->beta + 1.0) * ib;
			assert_true(fabs(vce - (s->vcc - ic * s->rc - ie * s->re)) <
			            1e-12 * s->vcc);
			assert_true(fabs(vbe + ie * s->re - vb) < 1e-12);
		}
	}
}

/* A collector resistor too large for beta x IB: saturated, VCE = VCE(sat),
 * IC from the collector loop; a negative base drive: cut off. */
static void test_saturated_and_cut_off(void **state)
{
	(void)state;
	struct stage s = stages[0];
	s.rc = 47e3;
	struct problem pb;
	stage_problem(&s, &model_npn, &pb);
	struct solve_options o;
	solve_options_init(&o);
	struct solve_result res;
	assert_int_equal(solve_problem(&pb, &o, &res), SOLVE_OK);
	struct model_extra ex;
	assert_int_equal(device_secondary(&pb.dev, &pb.src, res.pts[0].v,
	                                  res.pts[0].i, &ex), 0);
	print_message("# saturated: %s, IC %.4f mA, forced gain %.2f: %s\n",
	              ex.region, extra(&ex, "collector_current") * 1e3,
	              extra(&ex, "forced_gain"), ex.note);
	assert_string_equal(ex.region, "saturated");
	assert_true(ex.warn);
	assert_true(extra(&ex, "collector_emitter_voltage") == 0.2);
	double ib = res.pts[0].i;
	double ic = extra(&ex, "collector_current");
	/* VCC - IC RC - (IC + IB) RE = VCE(sat), by hand. */
	assert_true(fabs(s.vcc - ic * s.rc - (ic + ib) * s.re - 0.2) < 1e-12);
	assert_true(ic < s.beta * ib);
	assert_true(extra(&ex, "forced_gain") < s.beta);

	struct source_spec sp;
	char err[128];
	source_spec_thevenin(&sp, -1.37, 9.4e3);
	assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
	assert_int_equal(solve_problem(&pb, &o, &res), SOLVE_OK);
	assert_int_equal(device_secondary(&pb.dev, &pb.src, res.pts[0].v,
	                                  res.pts[0].i, &ex), 0);
	assert_string_equal(ex.region, "cut off");
	assert_true(extra(&ex, "collector_current") == 0.0);
}

/* Derivatives over the range; a model without the hook reports none. */
static void test_derivatives(void **state)
{
	(void)state;
	for (size_t k = 0; k < sizeof stages / sizeof stages[0]; k++) {
		struct problem pb;
		stage_problem(&stages[k], &model_npn, &pb);
		double lo, hi;
		device_range(&pb.dev, &lo, &hi);
		for (int j = 0; j < 47; j++) {
			double v = lo + (hi - lo) * (j + 0.29) / 47.0;
			if (models_check_derivatives(pb.dev.type, pb.dev.p, v) != 0)
				fail_msg("stage %zu: conductance wrong at %.17g V", k, v);
		}
	}
	struct device d;
	device_init(&d, &model_diode);
	struct model_extra ex;
	struct source src = { .voc = 1.0, .isc = 1.0, .r = 1.0 };
	assert_int_equal(device_secondary(&d, &src, 0.6, 1e-3, &ex), -1);
	assert_int_equal(ex.n, 0);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_active),
		cmocka_unit_test(test_saturated_and_cut_off),
		cmocka_unit_test(test_derivatives),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
