/*
 * test_section_network.c - the network form of the source in session
 * files: the sample loads and reduces to the closed-form equivalent, exact
 * round trips, copies, value changes by key path, and a table of bad files
 * each with the line its error must name.
 *
 * Closed forms: voltage divider, parallel and series resistance, and
 * superposition of the two supplies (Alexander & Sadiku, Fundamentals of
 * Electric Circuits, the chapters on circuit theorems).
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

#include "session/section_network.h"
#include "session/session.h"

/* The sample file's path (first argument of the test program). */
struct fixture {
	const char *sample;
};

/* |GOT - WANT| <= REL * |WANT|, else fail naming WHAT. */
static void check_rel(double got, double want, double rel, const char *what)
{
	if (!(fabs(got - want) <= rel * fabs(want)))
		fail_msg("%s: got %.17g, want %.17g", what, got, want);
}

/* The value of the part NAME of S, or fail. */
static double part_value(const struct session *s, const char *name)
{
	char path[96];
	snprintf(path, sizeof path, "%s%s", SESSION_NETWORK_PREFIX, name);
	long k = session_network_find(s, path);
	if (k < 0)
		fail_msg("no part '%s'", name);
	return network_part(s->network, (size_t)k)->value;
}

/*
 * Superposition on the sample: the base divider alone gives E1 R2/(R1+R2)
 * at the base, the lower rail puts the emitter end E2 below ground, so
 * Vth = E1 R2/(R1+R2) + E2 and Rth = R1 || R2 + Re.
 */
static void expect_sample(const struct session *s, double *vth, double *rth)
{
	double e1 = part_value(s, "positive supply");
	double e2 = part_value(s, "negative supply");
	double r1 = part_value(s, "upper divider");
	double r2 = part_value(s, "lower divider");
	double re = part_value(s, "emitter resistor");
	*vth = e1 * r2 / (r1 + r2) + e2;
	*rth = r1 * r2 / (r1 + r2) + re;
}

/* The sample loads, holds the values written in it, and reduces. */
static void test_sample(void **state)
{
	const struct fixture *fx = *state;
	struct session s;
	struct session_error err;
	char msg[1024];
	if (session_load_file(&s, fx->sample, &err) != SESSION_OK) {
		session_error_format(&err, msg, sizeof msg);
		fail_msg("%s", msg);
	}
	assert_non_null(s.network);
	/* the values as written in the file: "68k", "15 V", "4.7k" */
	assert_true(part_value(&s, "upper divider") == 68e3);
	assert_true(part_value(&s, "positive supply") == 15.0);
	assert_true(part_value(&s, "emitter resistor") == 4.7e3);
	double vth, rth;
	expect_sample(&s, &vth, &rth);
	assert_int_equal(s.source.form, SOURCE_THEVENIN);
	check_rel(s.source.vs, vth, 1e-14, "sample vth");
	check_rel(s.source.rs, rth, 1e-14, "sample rth");
	struct problem pb;
	assert_int_equal(session_problem(&s, &pb, msg, sizeof msg), 0);
	check_rel(pb.src.voc, vth, 1e-14, "problem voc");
	check_rel(pb.src.r, rth, 1e-14, "problem r");
	session_fini(&s);
}

/* Save, load again: the same session bit for bit; saving is idempotent. */
static void test_round_trip(void **state)
{
	const struct fixture *fx = *state;
	struct session a, b;
	struct session_error err;
	char msg[1024];
	assert_int_equal(session_load_file(&a, fx->sample, &err), SESSION_OK);
	/* an awkward name and a value that needs all 17 digits */
	assert_int_equal(session_network_set_value(&a,
	                 "source.network.lower divider", 22e3 / 3.0, msg,
	                 sizeof msg), 0);
	char *buf1, *buf2;
	size_t len1, len2;
	assert_int_equal(session_save_buffer(&a, &buf1, &len1, &err), SESSION_OK);
	if (session_load_buffer(&b, "again.yaml", buf1, len1, &err) != SESSION_OK) {
		session_error_format(&err, msg, sizeof msg);
		fail_msg("%s\n%s", msg, buf1);
	}
	assert_true(session_equal(&a, &b));
	assert_int_equal(session_save_buffer(&b, &buf2, &len2, &err), SESSION_OK);
	assert_int_equal(len1, len2);
	assert_memory_equal(buf1, buf2, len1);
	assert_non_null(strstr(buf1, "device_between: [base, emitter]"));
	assert_null(strstr(buf1, "\n  vs:"));
	free(buf1);
	free(buf2);
	session_fini(&a);
	session_fini(&b);
}

/*
 * A copy is deep: changing a part's value by key path changes the copy's
 * reduced source (the divider formula again) and not the original.
 */
static void test_copy_and_set(void **state)
{
	const struct fixture *fx = *state;
	struct session a, b;
	struct session_error err;
	char msg[512];
	assert_int_equal(session_load_file(&a, fx->sample, &err), SESSION_OK);
	session_init(&b);
	assert_int_equal(session_copy(&b, &a), 0);
	assert_true(session_equal(&a, &b));
	assert_ptr_not_equal(a.network, b.network);
	assert_int_equal(session_network_set_value(&b,
	                 "source.network.upper divider", 39.7e3, msg, sizeof msg), 0);
	assert_false(session_equal(&a, &b));
	double vth, rth;
	expect_sample(&b, &vth, &rth);
	check_rel(b.source.vs, vth, 1e-14, "changed vth");
	check_rel(b.source.rs, rth, 1e-14, "changed rth");
	assert_true(part_value(&a, "upper divider") == 68e3);

	/* unknown paths and out-of-range values are refused, nothing changes */
	assert_int_equal(session_network_set_value(&b, "source.network.nothing",
	                 1.0, msg, sizeof msg), -1);
	assert_non_null(strstr(msg, "no such network part"));
	assert_int_equal(session_network_set_value(&b, "source.vs", 1.0, msg,
	                 sizeof msg), -1);
	assert_int_equal(session_network_set_value(&b,
	                 "source.network.emitter resistor", -4.7e3, msg,
	                 sizeof msg), -1);
	assert_non_null(strstr(msg, "out of range"));
	assert_int_equal(session_network_set_value(&b,
	                 "source.network.positive supply", NAN, msg, sizeof msg), -1);
	assert_true(part_value(&b, "emitter resistor") == 4.7e3);
	check_rel(b.source.vs, vth, 1e-14, "unchanged vth");
	assert_int_equal(session_network_find(&b, "source.network.lower divider"), 3);
	session_fini(&a);
	session_fini(&b);
}

/* One file the loader must refuse, the line it names, and a message part. */
struct bad_net {
	const char *name;
	const char *text;
	unsigned line;
	const char *needle;
};

#define DEV "device:\n  model: diode\n  saturation_current: 2.385e-12\n" \
            "  ideality: 1.87\n"
#define HEAD "source:\n  network:\n    device_between: [out, ground]\n" \
             "    parts:\n"
/* lines 5-8 and 9-12: a divider's supply and upper resistor */
#define SUPPLY "      - name: supply\n        voltage_source: 9.13 V\n" \
               "        from: ground\n        to: top\n"
#define UPPER "      - name: upper\n        resistor: 4.7k\n" \
              "        from: top\n        to: out\n"
#define LOWER "      - name: lower\n        resistor: 2.2k\n" \
              "        from: out\n        to: ground\n"

static const struct bad_net bad_nets[] = {
	{ "vs beside network", "source:\n  vs: 3\n  network:\n"
	  "    device_between: [out, ground]\n    parts:\n" SUPPLY UPPER LOWER DEV,
	  2, "beside network" },
	{ "misspelt parts", "source:\n  network:\n    device_between: [out, "
	  "ground]\n    part:\n" SUPPLY DEV, 4, "did you mean 'parts'?" },
	{ "no device_between", "source:\n  network:\n    parts:\n" SUPPLY UPPER
	  LOWER DEV, 2, "missing required key 'device_between'" },
	{ "misspelt kind", HEAD SUPPLY "      - name: upper\n        resitor: "
	  "4.7k\n        from: top\n        to: out\n" LOWER DEV, 10,
	  "did you mean 'resistor'?" },
	{ "no name", HEAD SUPPLY "      - resistor: 4.7k\n        from: top\n"
	  "        to: out\n" LOWER DEV, 9, "missing required key 'name'" },
	{ "same name twice", HEAD SUPPLY UPPER "      - name: upper\n        "
	  "resistor: 2.2k\n        from: out\n        to: ground\n" DEV, 13,
	  "again (part 2)" },
	{ "dot in a name", HEAD SUPPLY "      - name: R1.2\n        resistor: "
	  "4.7k\n        from: top\n        to: out\n" LOWER DEV, 9, "without '.'" },
	{ "two kinds", HEAD SUPPLY "      - name: upper\n        resistor: 4.7k\n"
	  "        current_source: 1m\n        from: top\n        to: out\n" LOWER
	  DEV, 11, "found both 'resistor' (line 10) and 'current_source'" },
	{ "no kind", HEAD SUPPLY "      - name: upper\n        from: top\n"
	  "        to: out\n" LOWER DEV, 9, "missing the kind of part 'upper'" },
	{ "negative resistance", HEAD SUPPLY "      - name: upper\n        "
	  "resistor: -4.7k\n        from: top\n        to: out\n" LOWER DEV, 10,
	  "out of range" },
	{ "infinite voltage", HEAD "      - name: supply\n        voltage_source:"
	  " .inf\n        from: ground\n        to: top\n" UPPER LOWER DEV, 6,
	  "finite" },
	{ "current for a voltage", HEAD "      - name: supply\n        "
	  "voltage_source: 3 mA\n        from: ground\n        to: top\n" UPPER
	  LOWER DEV, 6, "source.network.supply" },
	{ "no to", HEAD SUPPLY "      - name: upper\n        resistor: 4.7k\n"
	  "        from: top\n" LOWER DEV, 9, "missing required key 'to'" },
	{ "self loop", HEAD SUPPLY "      - name: upper\n        resistor: 4.7k\n"
	  "        from: top\n        to: top\n" LOWER DEV, 12, "two different" },
	{ "three terminals", "source:\n  network:\n    device_between: [out, "
	  "ground, top]\n    parts:\n" SUPPLY UPPER LOWER DEV, 3,
	  "a list of 3 items" },
	{ "same terminals", "source:\n  network:\n    device_between: [out, "
	  "out]\n    parts:\n" SUPPLY UPPER LOWER DEV, 3, "twice" },
	{ "empty parts", "source:\n  network:\n    device_between: [out, "
	  "ground]\n    parts: []\n" DEV, 4, "an empty list" },
	{ "misspelt node", HEAD SUPPLY UPPER "      - name: lower\n        "
	  "resistor: 2.2k\n        from: outt\n        to: ground\n" DEV, 13,
	  "source.network.lower: node 'outt' is reached only by resistor 'lower'" },
	{ "terminal off the network", "source:\n  network:\n    device_between: "
	  "[base, ground]\n    parts:\n" SUPPLY UPPER LOWER DEV, 3,
	  "positive terminal 'base' is joined to no part" },
	{ "parallel supplies", HEAD SUPPLY UPPER LOWER "      - name: spare "
	  "cell\n        voltage_source: 9 V\n        from: ground\n        to: "
	  "top\n" DEV, 17, "'spare cell' closes a loop of voltage sources" },
	{ "current-fed node", HEAD SUPPLY UPPER LOWER "      - name: feed\n"
	  "        current_source: 1m\n        from: ground\n        to: x\n"
	  "      - name: drain\n        current_source: 1m\n        from: x\n"
	  "        to: out\n" DEV, 17, "node 'x' is reached only through current "
	  "sources" },
	{ "island", HEAD SUPPLY UPPER LOWER "      - name: lone a\n        "
	  "resistor: 1k\n        from: p\n        to: q\n      - name: lone b\n"
	  "        resistor: 1k\n        from: q\n        to: p\n" DEV, 17,
	  "'lone a' is not connected to the device's terminals" },
	{ "parts not a list", "source:\n  network:\n    device_between: [out, "
	  "ground]\n    parts: 3\n" DEV, 4, "expected a list of parts" },
	{ "part not a mapping", HEAD "      - resistor\n" DEV, 5,
	  "expected a part" },
};

/* Every bad network file is refused with its line and message. */
static void test_bad_networks(void **state)
{
	(void)state;
	for (size_t k = 0; k < sizeof bad_nets / sizeof bad_nets[0]; k++) {
		const struct bad_net *bn = &bad_nets[k];
		struct session s;
		struct session_error err;
		char msg[1024];
		enum session_status st = session_load_buffer(&s, "bad.yaml", bn->text,
		                                             strlen(bn->text), &err);
		session_error_format(&err, msg, sizeof msg);
		if (st != SESSION_BAD_DATA || err.line != bn->line ||
		    strstr(msg, bn->needle) == NULL)
			fail_msg("%s: status %d, got \"%s\", expected line %u and \"%s\"",
			         bn->name, (int)st, msg, bn->line, bn->needle);
		if (st == SESSION_OK)
			session_fini(&s);
	}
}

/* More than the part cap is refused (the dense solve stays instant). */
static void test_too_many_parts(void **state)
{
	(void)state;
	size_t cap = 64 + 257 * 96, o = 0;
	char *text = malloc(cap);
	assert_non_null(text);
	o += (size_t)snprintf(text + o, cap - o, "%s", HEAD);
	for (int k = 0; k < 257; k++)
		o += (size_t)snprintf(text + o, cap - o, "      - name: r%d\n"
		                      "        resistor: 1k\n        from: n%d\n"
		                      "        to: n%d\n", k, k, k + 1);
	assert_true(o < cap);
	struct session s;
	struct session_error err;
	assert_int_equal(session_load_buffer(&s, "big.yaml", text, o, &err),
	                 SESSION_BAD_DATA);
	assert_non_null(strstr(err.message, "at most 256"));
	free(text);
}

/* Run the network-section tests on the sample given as argv[1]. */
int main(int argc, char **argv)
{
	if (argc < 2) {
		fprintf(stderr, "usage: %s SAMPLE.yaml\n", argv[0]);
		return 2;
	}
	struct fixture fx = { argv[1] };
	const struct CMUnitTest tests[] = {
		cmocka_unit_test_prestate(test_sample, &fx),
		cmocka_unit_test_prestate(test_round_trip, &fx),
		cmocka_unit_test_prestate(test_copy_and_set, &fx),
		cmocka_unit_test(test_bad_networks),
		cmocka_unit_test(test_too_many_parts),
	};
	return cmocka_run_group_tests_name("section_network", tests, NULL, NULL);
}
