/*
 * test_section_analysis.c - the target, ratings and tolerances sections:
 * loading every form, round trips through save and load, bad files with
 * the message each must give, and the conversion to core requests.
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

#include "session/analysis.h"
#include "session/session.h"

static const char full[] =
	"format_version: 1\n"
	"source:\n"
	"  vs: 23.7 V\n"
	"  rs: 2.2k\n"
	"device:\n"
	"  model: diode\n"
	"  saturation_current: 3.17e-18\n"
	"  ideality: 1.93\n"
	"  series_resistance: 1.37\n"
	"target:\n"
	"  current: 9.83 mA\n"
	"  solve_for: vs\n"
	"  series: E96\n"
	"  current_min: 9.1m\n"
	"  current_max: 10.7m\n"
	"  voltage_max: 2.3\n"
	"ratings:\n"
	"  device_max_power: 73m\n"
	"  device_max_current: 27 mA\n"
	"  resistor_power: 0.25 W\n"
	"  ambient_temperature: 41.5\n"
	"tolerances:\n"
	"  rs: 5%\n"
	"  vs: {min: 21.9, max: 25.3}\n"
	"  saturation_current: {plus_minus: 50%, distribution: normal}\n"
	"  temperature: {plus_minus: 12.5}\n"
	"  ideality: 0.031\n";

/* Load TEXT into S; fail the test with the error when it does not load. */
static void load_ok(struct session *s, const char *text)
{
	struct session_error err;
	if (session_load_buffer(s, "t.yaml", text, strlen(text), &err) !=
	    SESSION_OK) {
		char buf[1024];
		session_error_format(&err, buf, sizeof buf);
		fail_msg("%s", buf);
	}
}

/* Every form is loaded as written. */
static void test_load_full(void **state)
{
	(void)state;
	struct session s;
	load_ok(&s, full);
	const struct session_analysis *a = &s.analysis;
	assert_true(fabs(a->target.current - 9.83e-3) < 1e-18);
	assert_true(isnan(a->target.voltage) && isnan(a->target.power));
	assert_int_equal(a->target.solve_for, DESIGN_FOR_VS);
	assert_int_equal(a->target.series, ESERIES_E96);
	assert_true(fabs(a->target.current_min - 9.1e-3) < 1e-18);
	assert_true(isnan(a->target.voltage_min));
	assert_true(a->target.voltage_max == 2.3);
	assert_true(fabs(a->ratings.device_max_power - 0.073) < 1e-17);
	assert_true(fabs(a->ratings.device_max_current - 0.027) < 1e-17);
	assert_true(a->ratings.resistor_power == 0.25);
	assert_true(a->ratings.ambient_temperature == 41.5);
	assert_int_equal(a->ntol, 5);
	assert_string_equal(a->tol[0].key, "rs");
	assert_int_equal(a->tol[0].form, SESSION_TOL_PERCENT);
	assert_true(a->tol[0].a == 5.0);
	assert_int_equal(a->tol[1].form, SESSION_TOL_RANGE);
	assert_true(a->tol[1].a == 21.9 && a->tol[1].b == 25.3);
	assert_int_equal(a->tol[2].dist, TOL_NORMAL);
	assert_int_equal(a->tol[2].form, SESSION_TOL_PERCENT);
	assert_int_equal(a->tol[3].form, SESSION_TOL_ABSOLUTE);
	assert_true(a->tol[3].a == 12.5);
	assert_true(a->tol[4].a == 0.031);
	/* To the core. */
	struct design_request rq;
	assert_int_equal(session_design_request(&s, &rq), 0);
	assert_int_equal(rq.target, DESIGN_CURRENT);
	assert_int_equal(rq.unknown, DESIGN_FOR_VS);
	struct tol_window w[2];
	assert_int_equal(session_target_windows(&s, w), 2);
	assert_int_equal(w[0].output, TOL_CURRENT);
	assert_int_equal(w[1].output, TOL_VOLTAGE);
	assert_true(isnan(w[1].lo) && w[1].hi == 2.3);
	struct problem pb;
	char err[512];
	assert_int_equal(session_problem(&s, &pb, err, sizeof err), 0);
	struct tol_case c;
	if (session_tolerance_case(&s, &pb, &c, err, sizeof err) != 0)
		fail_msg("%s", err);
	assert_int_equal(c.nitems, 5);
	assert_true(fabs(c.items[0].lo - 2090.0) < 1e-9 &&
	            fabs(c.items[0].hi - 2310.0) < 1e-9);
	assert_true(c.items[1].lo == 21.9 && c.items[1].hi == 25.3);
	assert_true(fabs(c.items[2].lo - 1.585e-18) < 1e-30);
	assert_true(fabs(c.items[3].lo - 12.5) < 1e-12 &&
	            fabs(c.items[3].hi - 37.5) < 1e-12); /* 25 degC default */
	assert_true(fabs(c.items[4].hi - 1.961) < 1e-12);
	session_fini(&s);
}

/* Save and load give the same session, bit for bit. */
static void test_round_trip(void **state)
{
	(void)state;
	struct session s, t;
	load_ok(&s, full);
	char *text = NULL;
	size_t len = 0;
	struct session_error err;
	assert_int_equal(session_save_buffer(&s, &text, &len, &err), SESSION_OK);
	load_ok(&t, text);
	if (!session_equal(&s, &t))
		fail_msg("round trip differs:\n%s", text);
	/* Non-default choices are written, defaults are not. */
	assert_non_null(strstr(text, "solve_for: vs"));
	assert_non_null(strstr(text, "E96"));
	assert_non_null(strstr(text, "rs: 5%"));
	free(text);
	session_fini(&t);
	/* A session without the sections writes none of them. */
	session_fini(&s);
	session_init(&s);
	assert_int_equal(session_save_buffer(&s, &text, &len, &err), SESSION_OK);
	assert_null(strstr(text, "target"));
	assert_null(strstr(text, "ratings"));
	assert_null(strstr(text, "tolerances"));
	free(text);
	session_fini(&s);
}

/* One bad file: the text after the device, and what the message says. */
struct bad_case {
	const char *tail;
	const char *says;
};

static const struct bad_case bad[] = {
	{ "target: {current: 10m, power: 50m}\n", "expected one of current" },
	{ "target: {current: 10m, series: E25}\n", "E6, E12" },
	{ "target: {current: 10m, solve_for: is}\n", "expected rs or vs" },
	{ "target: {current_min: 11m, current_max: 9m}\n", "min < max" },
	{ "target: {power: -5m}\n", "out of range" },
	{ "ratings: {resistor_power: 0}\n", "out of range" },
	{ "ratings: {resistor_watts: 1}\n", "resistor_power" },
	{ "tolerances: {saturaton_current: 5%}\n", "did you mean 'saturation_current'" },
	{ "tolerances: {gain: 5%}\n", "expected one of: vs, rs, saturation_current" },
	/* a Thevenin source has no is or rp (core/paramref.h) */
	{ "tolerances: {rp: 5%}\n", "not a key of this Thevenin source; its keys: vs, rs," },
	{ "tolerances: {rs: 150%}\n", "up to (not including) 100%" },
	{ "tolerances: {rs: -5}\n", "out of range" },
	{ "tolerances: {rs: {plus_minus: 5%, min: 1k}}\n", "either plus_minus" },
	{ "tolerances: {rs: {min: 1k}}\n", "both min and max" },
	{ "tolerances: {rs: {min: 2k, max: 1k}}\n", "min <= max" },
	{ "tolerances: {rs: {plus_minus: 5%, distribution: gauss}}\n",
	  "uniform or normal" },
	{ "tolerances: {rs: {plus_minux: 5%}}\n", "did you mean 'plus_minus'" },
	{ "tolerances: {rs: {plus_minus: 5%, plus_minus: 3%}}\n", "duplicate" },
	{ "tolerances: {rs: 5%, rs: 3%}\n", "duplicate" },
	{ "tolerances: {vs: 2 A}\n", "vs" },
	{ "tolerances: [rs]\n", "mapping" },
};

/* Bad files are refused with a message that says what is wrong. */
static void test_bad_files(void **state)
{
	(void)state;
	static const char head[] =
		"format_version: 1\nsource: {vs: 24, rs: 2.2k}\n"
		"device: {model: diode, saturation_current: 1e-14, ideality: 1.8}\n";
	for (size_t k = 0; k < sizeof bad / sizeof bad[0]; k++) {
		char text[1024];
		snprintf(text, sizeof text, "%s%s", head, bad[k].tail);
		struct session s;
		struct session_error err;
		if (session_load_buffer(&s, "bad.yaml", text, strlen(text), &err) ==
		    SESSION_OK) {
			session_fini(&s);
			fail_msg("bad case %zu loaded: %s", k, bad[k].tail);
		}
		char msg[1024];
		session_error_format(&err, msg, sizeof msg);
		if (strstr(msg, bad[k].says) == NULL)
			fail_msg("bad case %zu: \"%s\" lacks \"%s\"", k, msg, bad[k].says);
	}
}

/*
 * A tolerance the source cannot take is refused on loading with its key
 * path and the keys the source has: a Norton source has is and rp (is
 * alone when ideal), not vs and rs.
 */
static void test_case_errors(void **state)
{
	(void)state;
	static const char text[] =
		"format_version: 1\nsource: {form: norton, is: 12m}\n"
		"device: {model: diode, saturation_current: 1e-14, ideality: 1.8}\n"
		"tolerances: {vs: 5%}\n";
	struct session s;
	struct session_error e;
	assert_int_equal(session_load_buffer(&s, "t.yaml", text, strlen(text), &e),
	                 SESSION_BAD_DATA);
	char msg[1024];
	session_error_format(&e, msg, sizeof msg);
	assert_non_null(strstr(msg, "tolerances.vs"));
	assert_non_null(strstr(msg, "Norton source; its keys: is, saturation"));
	static const char ok[] =
		"format_version: 1\nsource: {form: norton, is: 12m, rp: 1.3k}\n"
		"device: {model: diode, saturation_current: 1e-14, ideality: 1.8}\n"
		"tolerances: {rp: 5%, is: 1%}\n";
	load_ok(&s, ok);
	struct problem pb;
	char err[512];
	assert_int_equal(session_problem(&s, &pb, err, sizeof err), 0);
	struct tol_case c;
	assert_int_equal(session_tolerance_case(&s, &pb, &c, err, sizeof err), 0);
	assert_int_equal(c.nitems, 2);
	struct design_request rq;
	assert_int_equal(session_design_request(&s, &rq), -1);
	session_fini(&s);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_load_full),
		cmocka_unit_test(test_round_trip),
		cmocka_unit_test(test_bad_files),
		cmocka_unit_test(test_case_errors),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
