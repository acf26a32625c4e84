/*
 * test_models_bjt.c - npn/pnp base bias with the transport Ebers-Moll
 * model: the active point against the fixed-VBE approximation and exactly
 * against the base-loop equation (closed form by Lambert W from GSL), the
 * saturated point's VCE(sat) against the Ebers-Moll closed form, cut off,
 * and the derivatives in every region.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <math.h>
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
 * Forward active: the collector junction is reverse biased by volts, so
 * exp(VBC / n Vt) vanishes (below 1e-30 here) and the transport equations
 * (Ebers & Moll, Proc. IRE 42, 1954) give IB = (Is/beta) a - Is/betaR,
 * IE = (beta + 1)(IB + Is/betaR) + Is with a = exp(VBE/nVt) - 1.  With
 * x = IB + Is/betaR the base loop VBB = IB RB + VBE + IE RE becomes the
 * diode-and-resistor equation
 *     VBB + RB Is/betaR - RE Is = R x + n Vt ln(1 + x / Is'),
 *     Is' = Is / beta,  R = RB + (beta + 1) RE,
 * whose solution is x = (n Vt / R) W0((Is' R / n Vt) exp((V' + Is' R) /
 * n Vt)) - Is' (Banwell & Jayakumar, Electronics Letters 36(4), 2000); W0
 * from GSL.  The solve must agree to 1e-9; IC by the fixed-VBE rule
 * IB = (VBB - 0.675 V) / (RB + (beta+1) RE) (common practice, VBE 0.65 to
 * 0.7 V) within 3 %; IC = beta IB to within the leakage; the collector
 * side by hand.
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

			double br = pb.dev.p[BJT_BETAR];
			double nvt = s->n * diode_thermal_voltage(s->t);
			double isb = s->is / s->beta;
			double rt = pb.src.r + (s->beta + 1.0) * s->re;
			double vp = pb.src.voc + pb.src.r * s->is / br - s->re * s->is;
			double arg = log(isb * rt / nvt) + (vp + isb * rt) / nvt;
			/* W0 of exp(arg) without overflow: w + ln w = arg. */
			double w = arg > 700.0 ? arg - log(arg) : gsl_sf_lambert_W0(exp(arg));
			for (int it = 0; arg > 700.0 && it < 50; it++)
				w -= (w + log(w) - arg) / (1.0 + 1.0 / w);
			double ib_exact = nvt / rt * w - isb - s->is / br;
			if (!(fabs(ib / ib_exact - 1.0) < 1e-9))
				fail_msg("stage %zu: IB %.12g, closed form %.12g", k, ib,
				         ib_exact);

			double ib_fixed = (pb.src.voc - 0.675) /
			                  (pb.src.r + (s->beta + 1.0) * s->re);
			struct model_extra ex;
			assert_int_equal(device_secondary(&pb.dev, &pb.src, vb, ib, &ex), 0);
			double ic = extra(&ex, "collector_current");
			double ie = extra(&ex, "emitter_current");
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
			assert_true(fabs(ic / (s->beta * ib) - 1.0) < 1e-8);
			assert_true(fabs(ie - (ic + ib)) <= 1e-15 * ie);
			assert_true(fabs(vce - (s->vcc - ic * s->rc - ie * s->re)) <
			            1e-12 * s->vcc);
			assert_true(fabs(vbe + ie * s->re - vb) < 1e-12);
			/* The transistor's heat: IC VCE + IB VBE, not VB IB. */
			double pd = ic * vce + ib * vbe;
			assert_true(fabs(res.pts[0].power - pd) <= 1e-9 * pd);
		}
	}
}

/*
 * Saturation (Ebers & Moll's mode with both junctions forward biased):
 * stages whose collector resistor cannot carry beta x IB, among them the
 * divider stage with RC = 10 kOhm that used to print VBE = 1.69 V.  With
 * the transport equations and the forced gain s = IC/IB, neglecting the
 * exp(-V/nVt) terms (below 1e-9 here),
 *     VCE(sat) = n Vt ln((1/alphaR + s/betaR) / (1 - s/betaF)),
 *     alphaR = betaR / (betaR + 1)
 * (Gray, Hurst, Lewis & Meyer, Analysis and Design of Analog Integrated
 * Circuits, 5th ed., 2009, ch. 1, the saturation region; section from
 * memory; it follows from solving the two transport equations for
 * exp(VBE/nVt) and exp(VBC/nVt)).  The model's VCE must agree to 1e-9 V;
 * VBE must be a junction's (0.55 to 0.8 V), the forced gain below beta,
 * and the collector loop VCC = IC RC + VCE + IE RE must hold.
 */
static void test_saturation(void **state)
{
	(void)state;
	struct sat { size_t base; double rc, br; };
	static const struct sat sats[] = {
		{ 0, 10e3, 1.0 }, { 0, 47e3, 1.0 }, { 1, 27e3, 0.37 },
		{ 2, 8.2e3, 4.3 }, { 3, 39e3, 1.9 }, { 0, 10e3, 0.013 },
	};
	for (size_t k = 0; k < sizeof sats / sizeof sats[0]; k++) {
		struct stage s = stages[sats[k].base];
		s.rc = sats[k].rc;
		for (int pol = 0; pol < 2; pol++) {
			struct problem pb;
			stage_problem(&s, pol ? &model_pnp : &model_npn, &pb);
			pb.dev.p[BJT_BETAR] = sats[k].br;
			struct solve_options o;
			solve_options_init(&o);
			struct solve_result res;
			assert_int_equal(solve_problem(&pb, &o, &res), SOLVE_OK);
			assert_int_equal(res.n, 1);
			struct model_extra ex;
			double ib = res.pts[0].i;
			assert_int_equal(device_secondary(&pb.dev, &pb.src, res.pts[0].v,
			                                  ib, &ex), 0);
			double ic = extra(&ex, "collector_current");
			double ie = extra(&ex, "emitter_current");
			double vce = extra(&ex, pol ? "emitter_collector_voltage"
			                            : "collector_emitter_voltage");
			double vbe = extra(&ex, pol ? "emitter_base_voltage"
			                            : "base_emitter_voltage");
			double sf = extra(&ex, "forced_gain");
			double nvt = s.n * diode_thermal_voltage(s.t);
			double ar = sats[k].br / (sats[k].br + 1.0);
			double want = nvt * log((1.0 / ar + sf / sats[k].br) /
			                        (1.0 - sf / s.beta));
			print_message("# saturated %zu %s: IC %.4f mA, IB %.4f mA, IC/IB "
			              "%.3f, VBE %.4f V, VCE %.5f V (closed form %.5f V)\n",
			              k, pb.dev.type->name, ic * 1e3, ib * 1e3, sf, vbe, vce,
			              want);
			assert_string_equal(ex.region, "saturation");
			assert_false(ex.warn);
			if (!(fabs(vce - want) < 1e-9))
				fail_msg("case %zu: VCE %.12g, Ebers-Moll closed form %.12g", k,
				         vce, want);
			assert_true(sf > 0.0 && sf < s.beta);
			assert_true(fabs(sf - ic / ib) <= 1e-12 * sf);
			assert_true(vbe > 0.55 && vbe < 0.8);
			assert_true(fabs(s.vcc - ic * s.rc - vce - ie * s.re) <
			            1e-12 * s.vcc);
			assert_true(vce > 0.0 && vce < vbe);
		}
	}
}

/*
 * Cut off: a base drive below the emitter's rail reverse biases both
 * junctions; only leakage flows (|IC| <= Is (1 + 1/betaR), the transport
 * equations with a = c = -1) and VCE is the supply to within RC times it.
 */
static void test_cut_off(void **state)
{
	(void)state;
	struct problem pb;
	stage_problem(&stages[0], &model_npn, &pb);
	struct source_spec sp;
	char err[128];
	source_spec_thevenin(&sp, -1.37, 9.4e3);
	assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
	struct solve_options o;
	solve_options_init(&o);
	struct solve_result res;
	assert_int_equal(solve_problem(&pb, &o, &res), SOLVE_OK);
	struct model_extra ex;
	assert_int_equal(device_secondary(&pb.dev, &pb.src, res.pts[0].v,
	                                  res.pts[0].i, &ex), 0);
	assert_string_equal(ex.region, "cut off");
	double is = stages[0].is;
	assert_true(fabs(extra(&ex, "collector_current")) <=
	            is * (1.0 + 1.0 / pb.dev.p[BJT_BETAR]));
	assert_true(fabs(extra(&ex, "collector_emitter_voltage") - stages[0].vcc) <
	            1e-9);
	assert_non_null(strstr(ex.note, "neither junction"));
	/* An old file's saturation_voltage is refused with what to do. */
	assert_non_null(model_npn.retired);
	assert_string_equal(model_npn.retired[0].key, "saturation_voltage");
}

/* Derivatives over the range; a model without the hook reports none. */
static void test_derivatives(void **state)
{
	(void)state;
	for (size_t k = 0; k < 2 * (sizeof stages / sizeof stages[0]); k++) {
		struct problem pb;
		/* each stage as given and with a collector resistor that
		 * saturates it inside the range */
		struct stage s = stages[k / 2];
		if (k % 2)
			s.rc *= 7.3;
		stage_problem(&s, &model_npn, &pb);
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
		cmocka_unit_test(test_saturation),
		cmocka_unit_test(test_cut_off),
		cmocka_unit_test(test_derivatives),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
