/*
 * test_sensitivity.c - sensitivities by implicit differentiation against
 * central finite differences of the whole solve (solve_problem at p +- h),
 * for every parameter of several circuits: Thevenin and Norton sources, an
 * ideal voltage and an ideal current source, a diode with temperature
 * scaling of Is, and the power law.
 *
 * The reference is the central difference (f(p+h) - f(p-h)) / 2h, error
 * O(h^2) (Burden & Faires, Numerical Analysis, 9th ed., 2011, sec. 4.1);
 * at the edge of a parameter's range the one-sided three-point formula.
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include <cmocka.h>

#include "core/models/models.h"
#include "core/sensitivity.h"
#include "core/solve.h"

/* One circuit. */
struct sens_case {
	const char *model;
	double p[7];
	size_t np;
	enum source_form form;
	double a, b;       /* vs, rs or is, rp */
};

static const struct sens_case cases[] = {
	/* Diode with Is scaled from 25 degC to 61.3 degC. */
	{ "diode", { 4.13e-14, 1.37, 0.83, 61.3, 25.0, 1.12, 3.0 }, 7,
	  SOURCE_THEVENIN, 7.35, 463.0 },
	/* Diode without series resistance (a parameter at its range edge). */
	{ "diode", { 2.71e-9, 1.93, 0.0, 17.9 }, 4, SOURCE_THEVENIN, 3.17, 1730.0 },
	{ "power-law", { 3.71, 0.0213, 2.77 }, 3, SOURCE_THEVENIN, 11.3, 97.3 },
	{ "power-law", { 1.83, 0.417, 0.61 }, 3, SOURCE_NORTON, 0.0417, 213.0 },
	/* Ideal current source into a diode. */
	{ "diode", { 6.1e-12, 1.11, 1.9, 36.6 }, 4, SOURCE_NORTON, 0.0273,
	  INFINITY },
	/* Ideal voltage source across a power law. */
	{ "power-law", { 2.9, 0.0731, 4.4 }, 3, SOURCE_THEVENIN, 3.37, 0.0 },
};

/* Build case C. */
static void case_problem(const struct sens_case *c, struct problem *pb)
{
	struct source_spec sp;
	char err[200];
	memset(pb, 0, sizeof *pb); /* no network */
	if (c->form == SOURCE_THEVENIN)
		source_spec_thevenin(&sp, c->a, c->b);
	else
		source_spec_norton(&sp, c->a, c->b);
	assert_int_equal(source_from_spec(&sp, &pb->src, err, sizeof err), 0);
	device_init(&pb->dev, model_find(c->model));
	for (size_t k = 0; k < c->np; k++)
		pb->dev.p[k] = c->p[k];
	if (device_validate(&pb->dev, err, sizeof err) != 0)
		fail_msg("%s", err);
}

/* Solve PB with R set to X: the unique point's (V, I). */
static void solve_with(const struct problem *pb, const struct paramref *r,
                       double x, double *v, double *i)
{
	struct problem q = *pb;
	struct solve_options o;
	struct solve_result res;
	solve_options_init(&o);
	o.tol = 1e-15;
	assert_int_equal(paramref_set(&q, r, x), 0);
	assert_int_equal(solve_problem(&q, &o, &res), SOLVE_OK);
	assert_int_equal(res.n, 1);
	*v = res.pts[0].v;
	*i = res.pts[0].i;
}

/* Finite-difference dV/dp and dI/dp of the whole solve. */
static void fd_reference(const struct problem *pb, const struct paramref *r,
                         double *dv, double *di)
{
	double p = paramref_get(pb, r);
	double h = p != 0.0 ? 1e-4 * fabs(p) : 1e-6;
	double v1, i1, v2, i2;
	if (paramref_check(pb, r, p - h, NULL, 0) == 0) {
		solve_with(pb, r, p + h, &v1, &i1);
		solve_with(pb, r, p - h, &v2, &i2);
		*dv = (v1 - v2) / (2.0 * h);
		*di = (i1 - i2) / (2.0 * h);
	} else {
		double v0, i0;
		solve_with(pb, r, p, &v0, &i0);
		solve_with(pb, r, p + h, &v1, &i1);
		solve_with(pb, r, p + 2.0 * h, &v2, &i2);
		*dv = (-3.0 * v0 + 4.0 * v1 - v2) / (2.0 * h);
		*di = (-3.0 * i0 + 4.0 * i1 - i2) / (2.0 * h);
	}
}

/* Compare a derivative D with the reference REF for parameter value P. */
static void check_close(size_t k, const char *key, const char *what, double d,
                        double ref, double p, double y)
{
	/* Normalised (p/y) dy/dp where p and y are non-zero, else absolute. */
	double scale = (p != 0.0 && y != 0.0) ? fabs(p / y) : 1.0;
	double err = fabs(d - ref) * scale;
	if (!(err <= 2e-6 * fabs(ref) * scale + 1e-7))
		fail_msg("case %zu, %s: d%s = %.10g, finite difference %.10g", k, key,
		         what, d, ref);
}

/* Every parameter of every case against the finite differences. */
static void test_against_finite_differences(void **state)
{
	(void)state;
	for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
		struct problem pb;
		case_problem(&cases[k], &pb);
		struct paramref refs[20];
		size_t nr = paramref_all(&pb, refs, 20);
		assert_true(nr >= pb.dev.type->nparams + 1);
		double v, i;
		struct paramref none = { .kind = PARAMREF_DEVICE, .index = 0 };
		solve_with(&pb, &none, pb.dev.p[0], &v, &i);
		size_t checked = 0;
		for (size_t j = 0; j < nr; j++) {
			const char *key = paramref_key(&pb, &refs[j]);
			double p = paramref_get(&pb, &refs[j]);
			/* reference_temperature at 0 K switches the diode's Is
			 * scaling off: a switch, not a smooth parameter, which
			 * must be refused rather than differenced across. */
			struct sensitivity s;
			if (strcmp(key, "reference_temperature") == 0 && p < -273.0) {
				assert_int_equal(sensitivity_at(&pb, v, i, &refs[j], &s), -1);
				continue;
			}
			/* thermal_resistance at 0 switches self-heating on as it
			 * leaves 0: the junction jumps from its given temperature
			 * to the ambient, no derivative (test_thermal checks the
			 * self-heated sensitivities). */
			if (strcmp(key, "thermal_resistance") == 0 && p == 0.0) {
				assert_int_equal(sensitivity_at(&pb, v, i, &refs[j], &s), -1);
				continue;
			}
			if (sensitivity_at(&pb, v, i, &refs[j], &s) != 0)
				fail_msg("case %zu, %s: no sensitivity", k, key);
			double dv, di;
			fd_reference(&pb, &refs[j], &dv, &di);
			check_close(k, key, "V", s.dv, dv, p, v);
			check_close(k, key, "I", s.di, di, p, i);
			check_close(k, key, "P", s.dp, i * dv + v * di, p, v * i);
			/* Normalised values follow from the absolute ones. */
			if (p != 0.0)
				assert_true(fabs(s.sv - p / v * s.dv) <= 1e-12 * fabs(s.sv) +
				            1e-300);
			checked++;
		}
		assert_true(checked >= 3);
	}
}

/* Known closed forms: a linear load makes every sensitivity exact. */
static void test_linear_closed_form(void **state)
{
	(void)state;
	/* Power law with exponent 1 is a resistor RL = Vref / Iref: then
	 * V = VS RL / (RS + RL), so dV/dVS = RL / (RS + RL) and
	 * dV/dRS = -VS RL / (RS + RL)^2 (voltage divider). */
	struct sens_case c = { "power-law", { 4.7, 0.0231, 1.0 }, 3,
	                       SOURCE_THEVENIN, 9.13, 317.0 };
	struct problem pb;
	case_problem(&c, &pb);
	double rl = 4.7 / 0.0231, rs = 317.0, vs = 9.13;
	double v = vs * rl / (rs + rl), i = v / rl;
	struct paramref r;
	struct sensitivity s;
	char err[200];
	assert_int_equal(paramref_find(&pb, "vs", &r, err, sizeof err), 0);
	assert_int_equal(sensitivity_at(&pb, v, i, &r, &s), 0);
	assert_true(fabs(s.dv - rl / (rs + rl)) < 1e-14);
	assert_true(fabs(s.sv - 1.0) < 1e-14); /* V is proportional to VS */
	assert_int_equal(paramref_find(&pb, "rs", &r, err, sizeof err), 0);
	assert_int_equal(sensitivity_at(&pb, v, i, &r, &s), 0);
	double ref = -vs * rl / ((rs + rl) * (rs + rl));
	assert_true(fabs(s.dv - ref) < 1e-13 * fabs(ref));
	/* An unknown key is refused with the valid ones listed. */
	assert_int_equal(paramref_find(&pb, "exponnent", &r, err, sizeof err), -1);
	assert_non_null(strstr(err, "exponent"));
}

/*
 * A Norton source keeps its own keys: the sensitivities are to is (rp
 * held) and to rp (is held), against the hand derivatives of the load
 * line I = is - V/rp with the device's r_d = dV/dI at the point (circuit
 * theory: the point moves along the device curve, dV = r_d dI):
 *
 *     dI/d(is) = rp / (rp + r_d),    dI/d(rp) = (is - I) / (rp + r_d).
 *
 * Thevenin keys on it, and Norton keys on a Thevenin source, are refused
 * with the keys the source has.
 */
static void test_norton_keys(void **state)
{
	(void)state;
	static const struct sens_case norton[] = {
		{ "diode", { 2.7e-12, 1.83, 0.0, 25.0 }, 4, SOURCE_NORTON, 0.03,
		  330.0 },
		{ "diode", { 4.13e-14, 1.37, 0.83, 61.3 }, 4, SOURCE_NORTON,
		  0.0173, 1.27e3 },
		{ "power-law", { 1.83, 0.417, 0.61 }, 3, SOURCE_NORTON, 0.0417,
		  213.0 },
	};
	for (size_t k = 0; k < sizeof norton / sizeof norton[0]; k++) {
		const struct sens_case *c = &norton[k];
		struct problem pb;
		case_problem(c, &pb);
		struct paramref all[PARAMREF_MAX];
		size_t n = paramref_all(&pb, all, PARAMREF_MAX);
		assert_true(n >= 2);
		assert_string_equal(paramref_key(&pb, &all[0]), "is");
		assert_string_equal(paramref_key(&pb, &all[1]), "rp");
		for (size_t j = 2; j < n; j++)
			assert_int_equal(all[j].kind, PARAMREF_DEVICE);
		double v, i;
		solve_with(&pb, &all[0], c->a, &v, &i);
		double rd = 1.0 / device_conductance(&pb.dev, v);
		double is = c->a, rp = c->b;
		struct sensitivity sv;
		assert_int_equal(sensitivity_at(&pb, v, i, &all[0], &sv), 0);
		double want = rp / (rp + rd);
		if (!(fabs(sv.di - want) <= 1e-12 * fabs(want)))
			fail_msg("case %zu: dI/d(is) = %.15g, rp/(rp + r_d) = %.15g", k,
			         sv.di, want);
		assert_true(fabs(sv.value - is) <= 1e-15 * is);
		assert_int_equal(sensitivity_at(&pb, v, i, &all[1], &sv), 0);
		want = (is - i) / (rp + rd);
		if (!(fabs(sv.di - want) <= 1e-10 * fabs(want)))
			fail_msg("case %zu: dI/d(rp) = %.15g, (is - I)/(rp + r_d) = "
			         "%.15g", k, sv.di, want);
		assert_true(sv.di > 0.0); /* more rp, less current lost in it */
		assert_true(fabs(sv.value - rp) <= 1e-15 * rp);
		struct paramref r;
		char err[400];
		assert_int_equal(paramref_find(&pb, "vs", &r, err, sizeof err), -1);
		assert_non_null(strstr(err, "is, rp"));
		assert_int_equal(paramref_find(&pb, "rs", &r, err, sizeof err), -1);
		assert_non_null(strstr(err, "Norton"));
	}
	/* An ideal current source has is alone; a Thevenin one vs and rs. */
	struct sens_case ideal = { "diode", { 6.1e-12, 1.11, 1.9, 36.6 }, 4,
	                           SOURCE_NORTON, 0.0273, INFINITY };
	struct problem pb;
	case_problem(&ideal, &pb);
	struct paramref r;
	char err[400];
	assert_int_equal(paramref_find(&pb, "is", &r, err, sizeof err), 0);
	assert_int_equal(paramref_find(&pb, "rp", &r, err, sizeof err), -1);
	assert_non_null(strstr(err, "ideal current source"));
	struct sens_case thev = { "diode", { 6.1e-12, 1.11, 1.9, 36.6 }, 4,
	                          SOURCE_THEVENIN, 5.3, 470.0 };
	case_problem(&thev, &pb);
	assert_int_equal(paramref_find(&pb, "rp", &r, err, sizeof err), -1);
	assert_non_null(strstr(err, "vs, rs"));
	assert_int_equal(paramref_find(&pb, "is", &r, err, sizeof err), -1);
}

/* A fold (dF/dV = 0) is refused, not divided by. */
static void test_singular(void **state)
{
	(void)state;
	/* A power law with exponent 1 behind an ideal current source is fine,
	 * but at V = 0 an exponent > 1 has zero conductance: F' = g = 0. */
	struct sens_case c = { "power-law", { 2.9, 0.0731, 4.4 }, 3,
	                       SOURCE_NORTON, 0.0, INFINITY };
	struct problem pb;
	case_problem(&c, &pb);
	struct paramref r = { .kind = PARAMREF_IS, .index = -1 };
	struct sensitivity s;
	assert_int_equal(sensitivity_at(&pb, 0.0, 0.0, &r, &s), -1);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_against_finite_differences),
		cmocka_unit_test(test_linear_closed_form),
		cmocka_unit_test(test_norton_keys),
		cmocka_unit_test(test_singular),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
