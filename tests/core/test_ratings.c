/*
 * test_ratings.c - power at an operating point and the rating checks.
 *
 * The power balance (source power = device power + resistor power) is
 * Tellegen's theorem for the two-element circuit (Tellegen, Philips Res.
 * Rep. 7, 1952).  The resistor rules are common practice: use at most
 * half the rating; full rating to 70 degC ambient, linear to zero at
 * 155 degC (the usual film-resistor derating curve).
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
#include "core/ratings.h"
#include "core/solve.h"

/* Derating factor at a few ambients. */
static void test_derating(void **state)
{
	(void)state;
	static const struct { double t, f; } tab[] = {
		{ NAN, 1.0 }, { -40.0, 1.0 }, { 25.0, 1.0 }, { 70.0, 1.0 },
		{ 112.5, 0.5 }, { 138.0, 17.0 / 85.0 }, { 155.0, 0.0 },
		{ 171.3, 0.0 },
	};
	for (size_t k = 0; k < sizeof tab / sizeof tab[0]; k++)
		assert_true(fabs(ratings_derating(tab[k].t) - tab[k].f) < 1e-15);
}

/* The standard rating table lookup. */
static void test_standard_power(void **state)
{
	(void)state;
	static const struct { double p, w; } tab[] = {
		{ 0.0, 0.0625 }, { 0.0413, 0.0625 }, { 0.125, 0.125 },
		{ 0.1251, 0.25 }, { 0.387, 0.5 }, { 1.73, 2.0 }, { 2.17, 3.0 },
		{ 4.13, 5.0 }, { 17.3, 25.0 }, { 99.9, 100.0 },
	};
	for (size_t k = 0; k < sizeof tab / sizeof tab[0]; k++)
		assert_true(ratings_standard_power(tab[k].p) == tab[k].w);
	assert_true(isnan(ratings_standard_power(137.0)));
	assert_true(isnan(ratings_standard_power(NAN)));
}

/* Solve a power-law load on SPEC and check the balance for FORM. */
static void balance_case(const struct source_spec *sp, struct ratings_report *rep,
                         const struct ratings *r)
{
	struct problem pb;
	char err[200];
	assert_int_equal(source_from_spec(sp, &pb.src, err, sizeof err), 0);
	device_init(&pb.dev, &model_power_law);
	pb.dev.p[POWER_LAW_VREF] = 4.13;
	pb.dev.p[POWER_LAW_IREF] = 0.0371;
	pb.dev.p[POWER_LAW_ALPHA] = 3.29;
	struct solve_options o;
	solve_options_init(&o);
	struct solve_result res;
	assert_int_equal(solve_problem(&pb, &o, &res), SOLVE_OK);
	double v = res.pts[0].v, i = res.pts[0].i;
	ratings_check(&pb, sp->form, v, i, r, rep);
	assert_true(fabs(rep->p_device - v * i) <= 1e-15 * fabs(v * i));
	double sum = rep->p_device + rep->p_resistor;
	if (fabs(rep->p_source - sum) > 1e-9 * fabs(sum))
		fail_msg("source %.17g W, device + resistor %.17g W", rep->p_source,
		         sum);
	if (sp->form == SOURCE_THEVENIN)
		assert_true(fabs(rep->p_resistor - i * i * sp->rs) <=
		            1e-12 * rep->p_resistor);
	else
		assert_true(fabs(rep->p_resistor - v * v / sp->rp) <=
		            1e-12 * rep->p_resistor);
}

/* Power balance for both source forms. */
static void test_balance(void **state)
{
	(void)state;
	struct source_spec sp;
	struct ratings_report rep;
	source_spec_thevenin(&sp, 13.7, 173.0);
	balance_case(&sp, &rep, NULL);
	source_spec_norton(&sp, 0.0613, 187.0);
	balance_case(&sp, &rep, NULL);
	source_spec_thevenin(&sp, 4.71, 0.0);
	balance_case(&sp, &rep, NULL);
	assert_true(rep.p_resistor == 0.0);
}

/* Flags and the suggestion against hand-worked numbers. */
static void test_flags(void **state)
{
	(void)state;
	struct source_spec sp;
	struct ratings_report rep;
	struct ratings r;
	ratings_init(&r);
	/* No ratings: nothing flagged, the use fractions unknown. */
	source_spec_thevenin(&sp, 13.7, 173.0);
	balance_case(&sp, &rep, &r);
	assert_int_equal(rep.flags, 0);
	assert_true(isnan(rep.resistor_use) && isnan(rep.device_power_use));
	double pr = rep.p_resistor, pd = rep.p_device;
	/* Suggested: smallest standard rating >= 2 * P_R. */
	assert_true(rep.suggested_resistor_power ==
	            ratings_standard_power(pr / RATINGS_USE_FRACTION));
	/* A rating just above P_R at 112.5 degC (half the rating left). */
	r.resistor_power = 2.0 * pr * 1.07;
	r.ambient_temperature = 112.5;
	r.device_max_power = pd * 0.93;
	r.device_max_current = 1e3;
	balance_case(&sp, &rep, &r);
	assert_true(fabs(rep.resistor_use - 1.0 / 1.07) < 1e-12);
	assert_int_equal(rep.flags, RATINGS_RESISTOR_USE | RATINGS_DEVICE_POWER);
	assert_true(rep.suggested_resistor_power ==
	            ratings_standard_power(pr / (RATINGS_USE_FRACTION * 0.5)));
	/* Hotter: the derated rating no longer covers P_R. */
	r.ambient_temperature = 131.0;
	balance_case(&sp, &rep, &r);
	assert_true(rep.flags & RATINGS_RESISTOR_POWER);
	assert_false(rep.flags & RATINGS_RESISTOR_USE);
	/* Above 155 degC there is no rating left. */
	r.ambient_temperature = 163.0;
	balance_case(&sp, &rep, &r);
	assert_true(rep.flags & RATINGS_NO_RESISTOR);
	assert_true(isnan(rep.suggested_resistor_power));
	/* The current limit. */
	r.device_max_current = 1e-3;
	balance_case(&sp, &rep, &r);
	assert_true(rep.flags & RATINGS_DEVICE_CURRENT);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_derating),
		cmocka_unit_test(test_standard_power),
		cmocka_unit_test(test_balance),
		cmocka_unit_test(test_flags),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
