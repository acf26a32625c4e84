/*
 * test_eseries.c - the IEC 60063:2015 tables and the lookups along them.
 *
 * IEC 60063:2015 (Preferred number series for resistors and capacitors)
 * states the construction: the values of EN are 10^(k/N), k = 0 ... N-1,
 * rounded to two significant figures for E6, E12 and E24 and three for
 * E48, E96 and E192, except for a few historical values it lists.  The
 * exceptions below are from memory of IEC 60063:2015; every other entry of
 * every table must equal the rounded progression, so a typo in a table
 * either breaks that rule or shows up as an undocumented exception.
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>

#include <cmocka.h>

#include "core/eseries.h"

/* The documented exceptions of one series (mantissa integers). */
struct eseries_exceptions {
	enum eseries s;
	size_t n;
	unsigned values[12];
};

/* From memory of IEC 60063:2015: the values that differ from rounding. */
static const struct eseries_exceptions exceptions[] = {
	{ ESERIES_E6, 2, { 33, 47 } },
	{ ESERIES_E12, 5, { 27, 33, 39, 47, 82 } },
	{ ESERIES_E24, 8, { 27, 30, 33, 36, 39, 43, 47, 82 } },
	{ ESERIES_E48, 0, { 0 } },
	{ ESERIES_E96, 0, { 0 } },
	{ ESERIES_E192, 1, { 920 } },
};

/* The rounded geometric progression: 10^(k/N) to DIGITS significant digits. */
static unsigned rounded_progression(size_t k, size_t n, int digits)
{
	double scale = digits == 2 ? 10.0 : 100.0;
	return (unsigned)floor(pow(10.0, (double)k / (double)n) * scale + 0.5);
}

/* True when V is one of the listed exceptions of EX. */
static int is_exception(const struct eseries_exceptions *ex, unsigned v)
{
	for (size_t j = 0; j < ex->n; j++)
		if (ex->values[j] == v)
			return 1;
	return 0;
}

/* Every entry is the rounded progression or a documented exception. */
static void test_tables_follow_the_rule(void **state)
{
	(void)state;
	for (size_t e = 0; e < sizeof exceptions / sizeof exceptions[0]; e++) {
		const struct eseries_exceptions *ex = &exceptions[e];
		size_t n = eseries_count(ex->s);
		int digits = eseries_digits(ex->s);
		size_t found = 0;
		for (size_t k = 0; k < n; k++) {
			unsigned v = eseries_mantissa(ex->s, k);
			unsigned r = rounded_progression(k, n, digits);
			if (v != r) {
				if (!is_exception(ex, v))
					fail_msg("%s entry %zu is %u, the rule gives %u and "
					         "the standard lists no exception there",
					         eseries_name(ex->s), k, v, r);
				found++;
			} else {
				/* A listed exception must really differ from the rule. */
				assert_false(is_exception(ex, v));
			}
		}
		assert_int_equal(found, ex->n);
	}
}

/* Sizes, digits, strictly increasing mantissas inside [1, 10). */
static void test_tables_shape(void **state)
{
	(void)state;
	static const size_t counts[ESERIES_COUNT] = { 6, 12, 24, 48, 96, 192 };
	for (int s = 0; s < ESERIES_COUNT; s++) {
		size_t n = eseries_count((enum eseries)s);
		int d = eseries_digits((enum eseries)s);
		assert_int_equal(n, counts[s]);
		unsigned lo = d == 2 ? 10 : 100, hi = d == 2 ? 99 : 999;
		unsigned prev = 0;
		for (size_t k = 0; k < n; k++) {
			unsigned v = eseries_mantissa((enum eseries)s, k);
			assert_true(v >= lo && v <= hi);
			assert_true(v > prev);
			prev = v;
		}
		assert_int_equal(eseries_mantissa((enum eseries)s, n), 0);
	}
	/* The values the brief of issue #5 lists as the familiar E24 set. */
	static const unsigned e24_some[] = { 27, 30, 33, 36, 39, 43, 47, 51, 56,
	                                     62, 68, 82 };
	for (size_t j = 0; j < sizeof e24_some / sizeof e24_some[0]; j++) {
		int seen = 0;
		for (size_t k = 0; k < 24; k++)
			seen |= eseries_mantissa(ESERIES_E24, k) == e24_some[j];
		assert_true(seen);
	}
}

/* Names both ways. */
static void test_names(void **state)
{
	(void)state;
	enum eseries s;
	assert_int_equal(eseries_from_name("E96", &s), 0);
	assert_int_equal(s, ESERIES_E96);
	assert_int_equal(eseries_from_name("e12", &s), 0);
	assert_int_equal(s, ESERIES_E12);
	assert_int_equal(eseries_from_name("192", &s), 0);
	assert_int_equal(s, ESERIES_E192);
	assert_int_equal(eseries_from_name("E25", &s), -1);
	assert_int_equal(eseries_from_name("", &s), -1);
	assert_int_equal(eseries_from_name("E", &s), -1);
	assert_int_equal(eseries_from_name(NULL, &s), -1);
	for (int k = 0; k < ESERIES_COUNT; k++) {
		assert_int_equal(eseries_from_name(eseries_name((enum eseries)k), &s), 0);
		assert_int_equal(s, k);
	}
}

/* One lookup case: X in series S, and the expected lower/higher/nearest. */
struct lookup_case {
	enum eseries s;
	double x, lower, higher, nearest;
};

/*
 * Expected values are the series values written as decimal literals: the
 * lookups must return exactly the double the literal parses to.
 */
static const struct lookup_case lookups[] = {
	{ ESERIES_E24, 4.7e3, 4.7e3, 4.7e3, 4.7e3 },             /* on a value */
	{ ESERIES_E24, 4699.99, 4.3e3, 4.7e3, 4.7e3 },           /* just below */
	{ ESERIES_E24, 4700.01, 4.7e3, 5.1e3, 4.7e3 },           /* just above */
	{ ESERIES_E24, 9.9e3, 9.1e3, 10e3, 10e3 },               /* across 10k */
	{ ESERIES_E24, 10e3 * (1.0 - 1e-12), 10e3, 10e3, 10e3 }, /* snap */
	{ ESERIES_E24, 0.0953, 0.091, 0.1, 0.091 },
	{ ESERIES_E24, 0.99, 0.91, 1.0, 1.0 },
	{ ESERIES_E24, 2.385e-9, 2.2e-9, 2.4e-9, 2.4e-9 },
	{ ESERIES_E6, 0.0387, 0.033, 0.047, 0.033 },
	{ ESERIES_E12, 1.15e6, 1.0e6, 1.2e6, 1.2e6 },
	{ ESERIES_E48, 101.7, 100.0, 105.0, 100.0 },
	{ ESERIES_E96, 2.385e3, 2.37e3, 2.43e3, 2.37e3 },
	{ ESERIES_E192, 9.195, 9.09, 9.20, 9.20 },
	{ ESERIES_E192, 0.98843, 0.988, 1.0, 0.988 },
	{ ESERIES_E192, 1.0051e12, 1.0e12, 1.01e12, 1.01e12 },
	{ ESERIES_E24, 1e-15, 1e-15, 1e-15, 1e-15 },             /* lowest */
	{ ESERIES_E24, 9.53e14, 9.1e14, NAN, 9.1e14 },           /* top end */
};

/* Lower, higher and nearest against the table above. */
static void test_lookups(void **state)
{
	(void)state;
	for (size_t k = 0; k < sizeof lookups / sizeof lookups[0]; k++) {
		const struct lookup_case *c = &lookups[k];
		double lo = -1, hi = -1, ne = -1;
		assert_int_equal(eseries_lower(c->s, c->x, &lo), 0);
		assert_true(lo == c->lower);
		if (isnan(c->higher)) {
			assert_int_equal(eseries_higher(c->s, c->x, &hi), -1);
		} else {
			assert_int_equal(eseries_higher(c->s, c->x, &hi), 0);
			if (hi != c->higher)
				fail_msg("case %zu: higher %.17g, expected %.17g", k, hi,
				         c->higher);
		}
		assert_int_equal(eseries_nearest(c->s, c->x, &ne), 0);
		if (ne != c->nearest)
			fail_msg("case %zu: nearest %.17g, expected %.17g", k, ne,
			         c->nearest);
	}
}

/* Bad inputs give -1 and leave the output alone. */
static void test_bad_inputs(void **state)
{
	(void)state;
	static const double bad[] = { 0.0, -4.7e3, NAN, INFINITY, -INFINITY,
	                              1e15, 3.7e20, 9.9e-16, 1e-300 };
	for (size_t k = 0; k < sizeof bad / sizeof bad[0]; k++) {
		double out = 42.0;
		assert_int_equal(eseries_lower(ESERIES_E24, bad[k], &out), -1);
		assert_int_equal(eseries_higher(ESERIES_E24, bad[k], &out), -1);
		assert_int_equal(eseries_nearest(ESERIES_E24, bad[k], &out), -1);
		assert_int_equal(eseries_step(ESERIES_E24, bad[k], 1, &out), -1);
		assert_true(out == 42.0);
	}
	double out;
	assert_int_equal(eseries_step(ESERIES_E24, 4.7e3, 0, &out), -1);
	assert_int_equal(eseries_lower(ESERIES_COUNT, 4.7e3, &out), -1);
	assert_int_equal(eseries_lower((enum eseries)-1, 4.7e3, &out), -1);
	/* Stepping off either end of the supported range. */
	assert_int_equal(eseries_step(ESERIES_E24, 1e-15, -1, &out), -1);
	assert_int_equal(eseries_step(ESERIES_E24, 9.1e14, 1, &out), -1);
}

/* One step case: from X in direction DIR to EXPECT. */
struct step_case {
	enum eseries s;
	double x;
	int dir;
	double expect;
};

static const struct step_case steps[] = {
	{ ESERIES_E24, 9.1e3, 1, 10e3 },
	{ ESERIES_E24, 10e3, -1, 9.1e3 },
	{ ESERIES_E24, 9.9e3, 1, 10e3 },
	{ ESERIES_E24, 9.9e3, -1, 9.1e3 },
	{ ESERIES_E24, 4.7e3 * (1.0 + 1e-13), 1, 5.1e3 },
	{ ESERIES_E24, 4.7e3 * (1.0 - 1e-13), -1, 4.3e3 },
	{ ESERIES_E192, 0.988, 1, 1.0 },
	{ ESERIES_E192, 1.0, -1, 0.988 },
	{ ESERIES_E192, 9.09, 1, 9.20 },
	{ ESERIES_E96, 2.385e3, -1, 2.37e3 },
	{ ESERIES_E6, 68e-6, 1, 100e-6 },
	{ ESERIES_E6, 5e-15, -1, 4.7e-15 },
};

/* Stepping from and between values, across decades. */
static void test_steps(void **state)
{
	(void)state;
	for (size_t k = 0; k < sizeof steps / sizeof steps[0]; k++) {
		double out = 0.0;
		assert_int_equal(eseries_step(steps[k].s, steps[k].x, steps[k].dir,
		                              &out), 0);
		if (out != steps[k].expect)
			fail_msg("step case %zu: %.17g, expected %.17g", k, out,
			         steps[k].expect);
	}
}

/* Walking N steps up multiplies by ten; walking back returns exactly. */
static void test_walks(void **state)
{
	(void)state;
	for (int s = 0; s < ESERIES_COUNT; s++) {
		size_t n = eseries_count((enum eseries)s);
		double x = 2.2e-3, start;
		assert_int_equal(eseries_nearest((enum eseries)s, x, &start), 0);
		x = start;
		for (size_t k = 0; k < 3 * n; k++) {
			double nx;
			assert_int_equal(eseries_step((enum eseries)s, x, 1, &nx), 0);
			assert_true(nx > x);
			/* No value is skipped: neighbours are closer than two steps. */
			if (!(nx / x < pow(10.0, 2.0 / (double)n)))
				fail_msg("%s: %.17g after %.17g", eseries_name((enum eseries)s), nx, x);
			x = nx;
		}
		assert_true(fabs(x / start - 1000.0) < 1e-9);
		for (size_t k = 0; k < 3 * n; k++) {
			double nx;
			assert_int_equal(eseries_step((enum eseries)s, x, -1, &nx), 0);
			assert_true(nx < x);
			x = nx;
		}
		assert_true(x == start);
	}
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_tables_follow_the_rule),
		cmocka_unit_test(test_tables_shape),
		cmocka_unit_test(test_names),
		cmocka_unit_test(test_lookups),
		cmocka_unit_test(test_bad_inputs),
		cmocka_unit_test(test_steps),
		cmocka_unit_test(test_walks),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
