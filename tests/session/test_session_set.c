/*
 * test_session_set.c - one value of a session by key (session_set.h):
 * each kind of key lands where the file would put it, a refused change
 * leaves the session bit for bit as it was, and the status says whether
 * the key or the value was wrong.
 *
 * The source's two forms describe one load line: VS = IS RP and RS = RP
 * (the Thevenin-Norton equivalence, common practice), so setting vs on a
 * Norton session moves is to vs / rp.
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include <cmocka.h>

#include "session/session_set.h"

static const char led[] =
	"source:\n  vs: 23.7 V\n  rs: 2.2k\n"
	"device:\n  model: diode\n  saturation_current: 6.3e-21\n"
	"  ideality: 1.93\n"
	"tolerances:\n  rs: 5%\n";

static const char norton[] =
	"source:\n  is: 12.3 mA\n  rp: 47k\n"
	"device:\n  model: diode\n  saturation_current: 6.3e-21\n"
	"  ideality: 1.93\n";

static const char divider[] =
	"source:\n  network:\n    device_between: [mid, gnd]\n    parts:\n"
	"      - {name: rail, voltage_source: 11.83, from: gnd, to: top}\n"
	"      - {name: upper r, resistor: 3.37k, from: top, to: mid}\n"
	"      - {name: lower, resistor: 2.41k, from: mid, to: gnd}\n"
	"device:\n  model: diode\n  saturation_current: 2.77e-14\n"
	"  ideality: 1.41\n";

/* Load TEXT into S. */
static void load(struct session *s, const char *text)
{
	struct session_error e;
	if (session_load_buffer(s, "t.yaml", text, strlen(text), &e) !=
	    SESSION_OK) {
		char m[700];
		session_error_format(&e, m, sizeof m);
		fail_msg("%s", m);
	}
}

/* One accepted change and where it lands. */
static void test_set_accepted(void **state)
{
	(void)state;
	struct session s;
	char err[600];
	load(&s, led);
	assert_int_equal(session_set_assignment(&s, "vs = 27.3 V", err,
	                                        sizeof err), SESSION_SET_OK);
	assert_true(s.source.vs == 27.3);
	assert_int_equal(session_set_assignment(&s, "rs=4.7k", err, sizeof err),
	                 SESSION_SET_OK);
	assert_true(s.source.rs == 4.7e3 && s.source.vs == 27.3);
	assert_int_equal(session_set_text(&s, "ideality", "1.87", err, sizeof err),
	                 SESSION_SET_OK);
	assert_true(s.device.p[1] == 1.87);
	assert_int_equal(session_set_value(&s, "saturation_current", 4.13e-20, err,
	                                   sizeof err), SESSION_SET_OK);
	assert_true(s.device.p[0] == 4.13e-20);
	/* Sections by their dotted keys; a new target replaces the old. */
	assert_int_equal(session_set_text(&s, "target.voltage", "2.1", err,
	                                  sizeof err), SESSION_SET_OK);
	assert_int_equal(session_set_text(&s, "target.current", "9.7 mA", err,
	                                  sizeof err), SESSION_SET_OK);
	assert_true(s.analysis.target.current == 9.7e-3);
	assert_true(isnan(s.analysis.target.voltage));
	assert_int_equal(session_set_text(&s, "ratings.resistor_power", "0.25",
	                                  err, sizeof err), SESSION_SET_OK);
	assert_true(s.analysis.ratings.resistor_power == 0.25);
	assert_int_equal(session_set_text(&s, "ratings.resistor_power", "none",
	                                  err, sizeof err), SESSION_SET_OK);
	assert_true(isnan(s.analysis.ratings.resistor_power));
	assert_int_equal(session_set_text(&s, "solver.method", "newton", err,
	                                  sizeof err), SESSION_SET_OK);
	assert_int_equal(s.solver.method, METHOD_NEWTON);
	/* Tolerances: changed in place, added at the end, removed. */
	assert_int_equal(session_set_text(&s, "tolerances.rs", "1%", err,
	                                  sizeof err), SESSION_SET_OK);
	assert_int_equal(s.analysis.ntol, 1);
	assert_true(s.analysis.tol[0].form == SESSION_TOL_PERCENT &&
	            s.analysis.tol[0].a == 1.0);
	assert_int_equal(session_set_text(&s, "tolerances.vs",
	                                  "{min: 21, max: 26, distribution: normal}",
	                                  err, sizeof err), SESSION_SET_OK);
	assert_int_equal(s.analysis.ntol, 2);
	assert_true(s.analysis.tol[1].form == SESSION_TOL_RANGE &&
	            s.analysis.tol[1].a == 21.0 && s.analysis.tol[1].b == 26.0 &&
	            s.analysis.tol[1].dist == TOL_NORMAL);
	assert_int_equal(session_set_text(&s, "tolerances.rs", "none", err,
	                                  sizeof err), SESSION_SET_OK);
	assert_int_equal(s.analysis.ntol, 1);
	assert_string_equal(s.analysis.tol[0].key, "vs");
	session_fini(&s);

	/* A Norton session keeps its form: vs moves is along RP. */
	load(&s, norton);
	assert_int_equal(session_set_text(&s, "rp", "33k", err, sizeof err),
	                 SESSION_SET_OK);
	assert_int_equal(s.source.form, SOURCE_NORTON);
	assert_true(s.source.rp == 33e3 && s.source.is == 12.3e-3);
	session_fini(&s);

	/* A network part by its key path; the source is reduced again. */
	load(&s, divider);
	double vth0 = s.source.vs;
	assert_int_equal(session_set_text(&s, "source.network.upper r", "2.41k",
	                                  err, sizeof err), SESSION_SET_OK);
	assert_true(fabs(s.source.vs - 11.83 / 2.0) < 1e-12 && s.source.vs != vth0);
	session_fini(&s);
}

/* Refused changes: the status, the key named, the session unchanged. */
static void test_set_refused(void **state)
{
	(void)state;
	static const struct {
		const char *text;
		enum session_set_status st;
		const char *named;
	} tab[] = {
		{ "rs", SESSION_SET_BAD_SYNTAX, "KEY=VALUE" },
		{ "=1k", SESSION_SET_BAD_SYNTAX, "no key" },
		{ "rs=  ", SESSION_SET_BAD_SYNTAX, "rs" },
		{ "gain=3", SESSION_SET_BAD_KEY, "gain" },
		{ "source.network.r1=3k", SESSION_SET_BAD_KEY, "source.network.r1" },
		{ "ratings.bogus=1", SESSION_SET_BAD_KEY, "ratings.bogus" },
		{ "tolerances.gain=5%", SESSION_SET_BAD_KEY, "tolerances.gain" },
		{ "vs=27 A", SESSION_SET_BAD_VALUE, "vs" },
		{ "rs=3 V", SESSION_SET_BAD_VALUE, "rs" },
		{ "rs=-1", SESSION_SET_BAD_VALUE, "rs" },
		{ "vs=2e12", SESSION_SET_BAD_VALUE, "vs" },
		{ "vs=nan", SESSION_SET_BAD_VALUE, "vs" },
		{ "saturation_current=0", SESSION_SET_BAD_VALUE,
		  "saturation_current" },
		{ "ratings.resistor_power=2 V", SESSION_SET_BAD_VALUE,
		  "ratings.resistor_power" },
		{ "ratings.resistor_power=-1", SESSION_SET_BAD_VALUE,
		  "ratings.resistor_power" },
		{ "target.series=E7", SESSION_SET_BAD_VALUE, "target.series" },
		{ "solver.method=none", SESSION_SET_BAD_VALUE, "solver.method" },
		{ "tolerances.rs=150%", SESSION_SET_BAD_VALUE, "tolerances.rs" },
		{ "tolerances.rs=5 V", SESSION_SET_BAD_VALUE, "tolerances.rs" },
		{ "tolerances.rs={min: 3k, max: 1k}", SESSION_SET_BAD_VALUE,
		  "tolerances.rs" },
		{ "tolerances.rs={min: -3k, max: 1k}", SESSION_SET_BAD_VALUE,
		  "tolerances.rs" },
	};
	for (size_t k = 0; k < sizeof tab / sizeof tab[0]; k++) {
		struct session s, before;
		load(&s, led);
		load(&before, led);
		char err[600] = "";
		enum session_set_status st = session_set_assignment(&s, tab[k].text,
		                                                    err, sizeof err);
		if (st != tab[k].st || strstr(err, tab[k].named) == NULL)
			fail_msg("'%s': status %d '%s', expected %d naming '%s'",
			         tab[k].text, (int)st, err, (int)tab[k].st,
			         tab[k].named);
		if (!session_equal(&s, &before) ||
		    !session_analysis_equal(&s.analysis, &before.analysis))
			fail_msg("'%s' changed the session", tab[k].text);
		session_fini(&s);
		session_fini(&before);
	}
	/* A target window turned inside out by a second change. */
	struct session s;
	char err[600];
	load(&s, led);
	assert_int_equal(session_set_text(&s, "target.current_min", "20m", err,
	                                  sizeof err), SESSION_SET_OK);
	assert_int_equal(session_set_text(&s, "target.current_max", "10m", err,
	                                  sizeof err), SESSION_SET_BAD_VALUE);
	assert_true(isnan(s.analysis.target.current_max));
	session_fini(&s);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_set_accepted),
		cmocka_unit_test(test_set_refused),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
