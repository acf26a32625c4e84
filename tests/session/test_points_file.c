/*
 * test_points_file.c - the points-file reader shared by the measured
 * model's points_file: and `biasline fit`: separators, headers with names
 * and units, comments, values with their own units, and every error at
 * its file, line, column and row.
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
#include <sys/stat.h>
#include <unistd.h>

#include "core/quantity.h"
#include "session/points_file.h"
#include "session/session.h"

/* V, I and an optional T, as `biasline fit` reads them. */
static const struct points_spec vit = {
	.ncols = 3,
	.role = { POINTS_VOLTAGE, POINTS_CURRENT, POINTS_TEMPERATURE },
	.optional = { false, false, true },
	.max_rows = 8,
};

/* T and R, as the thermistor fits read them. */
static const struct points_spec tr = {
	.ncols = 2,
	.role = { POINTS_TEMPERATURE, POINTS_RESISTANCE },
	.max_rows = 100,
};

/* points_parse on a heap copy of TEXT with no terminator, so a read past
 * the end shows under AddressSanitizer. */
static int parse_exact(const char *name, const char *text, size_t len,
                       const struct points_spec *spec, struct points_table *t,
                       struct session_error *err)
{
	char *copy = malloc(len ? len : 1);
	assert_non_null(copy);
	memcpy(copy, text, len);
	int rc = points_parse(name, "", copy, len, spec, t, err);
	free(copy);
	return rc;
}

/* Parse TEXT or fail with the message. */
static void parse_ok(const char *text, const struct points_spec *spec,
                     struct points_table *t)
{
	struct session_error err;
	if (parse_exact("pts.csv", text, strlen(text), spec, t, &err) != 0) {
		char msg[1024];
		session_error_format(&err, msg, sizeof msg);
		fail_msg("refused: %s", msg);
	}
}

/* The exact value qty_parse gives TEXT as KIND. */
static double qty(const char *text, enum qty_kind kind)
{
	double v;
	assert_int_equal(qty_parse(text, kind, &v, NULL, 0), QTY_OK);
	return v;
}

/* The separators, a header with units, comments, CRLF and columns found
 * by name; each value exactly what the quantity parser makes of it with
 * its unit. */
static void test_formats(void **state)
{
	(void)state;
	struct points_table t;
	parse_ok("# an LED on the bench\n"
	         "V (V), I (mA)   # the meter's range\n"
	         "2.7313, 1.07\r\n"
	         "\n"
	         "2.9517, 10.3\n", &vit, &t);
	assert_int_equal(t.n, 2);
	assert_false(t.present[2]);
	assert_true(t.col[0][0] == 2.7313 && t.col[0][1] == 2.9517);
	assert_true(t.col[1][0] == qty("1.07 mA", QTY_CURRENT));
	assert_true(t.col[1][1] == qty("10.3 mA", QTY_CURRENT));
	assert_int_equal(t.line[0], 3);
	assert_int_equal(t.line[1], 5);
	assert_string_equal(t.unit[1], "mA");
	points_table_fini(&t);

	/* semicolons, brackets, kelvin (converted), words for units */
	parse_ok("U [volts];I [microamperes];T [K]\n0.5513;10.7;298.15\n"
	         "0.6247;103.9;348.15\n", &vit, &t);
	assert_int_equal(t.n, 2);
	assert_true(t.present[2]);
	assert_true(t.col[1][0] == qty("10.7 uA", QTY_CURRENT));
	assert_true(fabs(t.col[2][0] - 25.0) < 1e-12);
	assert_true(fabs(t.col[2][1] - 75.0) < 1e-12);
	points_table_fini(&t);

	/* tabs, no header, three columns; quantities with their own units */
	parse_ok("0.5513\t10.7u\t25\n753.3 mV\t3.917 mA\t25 degC\n", &vit, &t);
	assert_int_equal(t.n, 2);
	assert_true(t.col[0][1] == qty("753.3 mV", QTY_VOLTAGE));
	assert_true(t.col[1][0] == qty("10.7u", QTY_CURRENT));
	points_table_fini(&t);

	/* columns by name in any order; a column of another name ignored;
	 * a prefixed value under a header's plain unit is clear */
	parse_ok("time (s), current (A), VF (V)\n12.5, 10.7u, 0.5513\n"
	         "13.5, 0.1039m, 0.6247\n", &vit, &t);
	assert_true(t.col[0][0] == 0.5513 && t.col[0][1] == 0.6247);
	assert_true(t.col[1][0] == qty("10.7u", QTY_CURRENT));
	assert_int_equal(t.column[1][0], 7);
	assert_int_equal(t.column[0][0], 14);
	points_table_fini(&t);

	/* names we do not know: the columns in order, units still apply */
	parse_ok("bias (V), reading (uA)\n0.5513, 10.7\n", &vit, &t);
	assert_true(t.col[1][0] == qty("10.7 uA", QTY_CURRENT));
	points_table_fini(&t);

	/* a thermistor's table */
	parse_ok("T (degC), R (kohm)\n-10, 55.3\n25, 10\n85, 1.07\n", &tr, &t);
	assert_int_equal(t.n, 3);
	assert_true(t.col[1][0] == qty("55.3 kohm", QTY_RESISTANCE));
	assert_true(t.col[0][0] == -10.0);
	points_table_fini(&t);

	/* nothing but a header and comments: no rows, no error */
	parse_ok("V, I\n# none yet\n", &vit, &t);
	assert_int_equal(t.n, 0);
	points_table_fini(&t);
}

/* Each bad table: the line, the column, and words of the message. */
static void test_errors(void **state)
{
	(void)state;
	static const struct {
		const char *text;
		unsigned line, col;
		const char *needle;
	} bad[] = {
		{ "V,I\n0.5,1m\n0.6, abc\n", 3, 6,
		  "row 2, column 2 (I): \"abc\" is not a valid number" },
		{ "V;I\n0,55;1m\n", 2, 1, "row 1, column 1 (V): found \"0,55\": a "
		  "decimal comma; write the number with a point (0.55)" },
		{ "V (V), I (mV)\n0.5, 1\n", 1, 11, "column 2 (I): the header gives "
		  "the unit \"mV\", expected a unit of current" },
		{ "V (V), X (A)\n0.5, 1\n", 1, 1, "the header has no current column" },
		{ "V, I, T\n0.5, 1m\n", 2, 1, "row 1: found 2 fields, expected 3 as "
		  "in the header" },
		{ "0.5, 1m, 25\n0.6, 2m\n", 2, 1, "row 2: found 2 fields, expected 3 "
		  "as in the first row" },
		{ "0.5\n", 1, 1, "row 1: expected two to three columns V,I[,T], "
		  "found 1" },
		{ "V, V, I\n", 1, 4, "the header names V in columns 1 and 2" },
		{ "V (V), I (mA)\n0.5, 2m\n", 2, 6, "found \"2m\", expected a plain "
		  "number: the header gives the unit mA" },
		{ "V (V), I (\n", 1, 10, "expected a unit in ()" },
		{ "1,1\n2,2\n3,3\n4,4\n5,5\n6,6\n7,7\n8,8\n9,9\n", 9, 1,
		  "found more than 8 points" },
		{ "V,I\n0.5,1e999\n", 2, 5, "row 1, column 2 (I)" },
	};
	for (size_t k = 0; k < sizeof bad / sizeof bad[0]; k++) {
		struct points_table t;
		struct session_error err;
		char msg[1024];
		int rc = parse_exact("bench/pts.csv", bad[k].text,
		                     strlen(bad[k].text), &vit, &t, &err);
		session_error_format(&err, msg, sizeof msg);
		if (rc != -1 || err.line != bad[k].line || err.col != bad[k].col ||
		    strstr(msg, bad[k].needle) == NULL ||
		    strncmp(msg, "bench/pts.csv:", 14) != 0)
			fail_msg("case %zu: rc %d, \"%s\"; expected line %u, column %u "
			         "and \"%s\"", k, rc, msg, bad[k].line, bad[k].col,
			         bad[k].needle);
		assert_int_equal(t.n, 0);
		assert_null(t.col[0]);
	}
	/* a NUL byte */
	struct points_table t;
	struct session_error err;
	static const char nul[] = "V,I\n0.5,1m\n0.6\0,2m\n";
	assert_int_equal(parse_exact("x", nul, sizeof nul - 1, &vit, &t, &err), -1);
	assert_int_equal(err.line, 3);
	assert_non_null(strstr(err.message, "NUL"));
}

/* Write LEN bytes of DATA to PATH. */
static void write_text(const char *path, const char *data)
{
	FILE *f = fopen(path, "wb");
	assert_non_null(f);
	assert_int_equal(fwrite(data, 1, strlen(data), f), strlen(data));
	assert_int_equal(fclose(f), 0);
}

/* From a file: a missing one is "cannot open"; the measured model's
 * points_file: reads the same semicolon table with units as the fit,
 * to the same numbers as its inline list. */
static void test_files(void **state)
{
	(void)state;
	char dir[] = "/tmp/biasline-points-XXXXXX";
	assert_non_null(mkdtemp(dir));
	char p[256], s[256];
	struct points_table t;
	struct session_error err;
	snprintf(p, sizeof p, "%s/absent.csv", dir);
	assert_int_equal(points_file_read(p, "", &vit, &t, &err), SESSION_NO_INPUT);
	assert_non_null(strstr(err.message, "cannot open the file"));

	snprintf(p, sizeof p, "%s/sweep.csv", dir);
	write_text(p, "# bench sweep\nV (mV);I (uA)\n551.3;10.7\n624.7;103.9\n"
	              "701.8;1087\n");
	assert_int_equal(points_file_read(p, "", &vit, &t, &err), SESSION_OK);
	assert_int_equal(t.n, 3);
	points_table_fini(&t);
	snprintf(s, sizeof s, "%s/bench.yaml", dir);
	write_text(s, "source:\n  vs: 4.87\n  rs: 1.33k\ndevice:\n  model: "
	              "measured\n  points_file: sweep.csv\n");
	static const char inline_text[] =
		"source:\n  vs: 4.87\n  rs: 1.33k\ndevice:\n  model: measured\n"
		"  points:\n    - [551.3 mV, 10.7 uA]\n    - [624.7 mV, 103.9 uA]\n"
		"    - [701.8 mV, 1087 uA]\n";
	struct session a, b;
	if (session_load_file(&a, s, &err) != SESSION_OK) {
		char msg[1024];
		session_error_format(&err, msg, sizeof msg);
		fail_msg("%s", msg);
	}
	assert_int_equal(session_load_buffer(&b, "inline.yaml", inline_text,
	                                     strlen(inline_text), &err), SESSION_OK);
	assert_true(session_equal(&a, &b));
	session_fini(&a);
	session_fini(&b);
	/* its errors are the reader's, placed in the points file */
	write_text(p, "V (mV);I (uA)\n551.3;10.7\n624.7;1O3.9\n");
	assert_int_equal(session_load_file(&a, s, &err), SESSION_BAD_DATA);
	assert_int_equal(err.line, 3);
	assert_int_equal(err.col, 7);
	assert_non_null(strstr(err.file, "sweep.csv"));
	assert_non_null(strstr(err.message, "row 2, column 2 (I)"));
	unlink(p);
	unlink(s);
	rmdir(dir);
}

/*
 * Mutated tables (bytes replaced, inserted, cut; seeded) never crash the
 * reader: each is read or refused with a place inside the text.  Under
 * AddressSanitizer this is a small fuzz of the parser.
 */
static void test_mutations(void **state)
{
	(void)state;
	static const char base[] = "# sweep\nV (mV);I [uA];T (degC)\n551.3;10.7;25\n"
	                           "624.7;103.9;25 # hot\n701.8;1087;25\n";
	static const char alphabet[] = "0123456789.,;\t\n\r#()[] -+eEkmuVAK\"x";
	uint64_t r = 0x9e3779b97f4a7c15u;
	char buf[256];
	for (int trial = 0; trial < 4000; trial++) {
		size_t len = sizeof base - 1;
		memcpy(buf, base, len);
		int edits = 1 + trial % 4;
		for (int e = 0; e < edits; e++) {
			r = r * 6364136223846793005u + 1442695040888963407u;
			size_t at = (size_t)(r >> 33) % len;
			char ch = alphabet[(r >> 20) % (sizeof alphabet - 1)];
			switch ((r >> 10) % 3) {
			case 0:
				buf[at] = ch;
				break;
			case 1:
				if (len + 1 < sizeof buf) {
					memmove(buf + at + 1, buf + at, len - at);
					buf[at] = ch;
					len++;
				}
				break;
			default:
				memmove(buf + at, buf + at + 1, len - at - 1);
				len--;
				break;
			}
		}
		struct points_table t;
		struct session_error err;
		int rc = parse_exact("m.csv", buf, len, &vit, &t, &err);
		if (rc == 0) {
			for (size_t k = 0; k < t.n; k++)
				assert_true(isfinite(t.col[0][k]) && isfinite(t.col[1][k]));
			points_table_fini(&t);
		} else {
			assert_int_equal(rc, -1);
			assert_true(err.message[0] != '\0');
			assert_true(err.line >= 1 && err.line <= 12);
		}
	}
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_formats),
		cmocka_unit_test(test_errors),
		cmocka_unit_test(test_files),
		cmocka_unit_test(test_mutations),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
