/*
 * test_session.c - the session module: strict loading (a table of bad
 * files, each with the line its error must name and a message substring),
 * exact round trips of randomly generated sessions and of every sample,
 * canonical output that is idempotent, the atomic writer's failure paths,
 * and the recovery files.
 */
#include <dirent.h>
#include <errno.h>
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <fcntl.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

#include <cmocka.h>

#include "core/models/models.h"
#include "core/thermal.h"
#include "session/atomic.h"
#include "session/recovery.h"
#include "session/session.h"

/* One file the loader must reject. */
struct bad_case {
	const char *name;
	const char *text;
	unsigned line;        /* 1-based line the error names; 0 = none */
	const char *needle;   /* substring of the message */
};

#include "test_bad_files.inc"

/* Load TEXT (LEN bytes) and check it fails at LINE with NEEDLE in the message. */
static void check_rejected(const char *name, const char *text, size_t len,
                           unsigned line, const char *needle)
{
	struct session s;
	struct session_error err;
	enum session_status st = session_load_buffer(&s, "bad.yaml", text, len, &err);
	char msg[1024];
	session_error_format(&err, msg, sizeof msg);
	if (st != SESSION_BAD_DATA || err.line != line ||
	    strstr(msg, needle) == NULL)
		fail_msg("%s: status %d, got \"%s\", expected line %u and \"%s\"",
		         name, (int)st, msg, line, needle);
	/* the formatted line starts with FILE:LINE:COL when there is a line */
	if (line > 0) {
		char pos[64];
		snprintf(pos, sizeof pos, "bad.yaml:%u:%u: ", err.line, err.col);
		assert_true(strncmp(msg, pos, strlen(pos)) == 0);
		assert_true(err.col >= 1);
	}
}

/* Every entry of the bad-file table is rejected with its line and message. */
static void test_bad_table(void **state)
{
	(void)state;
	size_t n = sizeof bad_cases / sizeof bad_cases[0];
	assert_true(n >= 30);
	for (size_t k = 0; k < n; k++) {
		check_rejected(bad_cases[k].name, bad_cases[k].text,
		               strlen(bad_cases[k].text), bad_cases[k].line,
		               bad_cases[k].needle);
		printf("# rejected: %s\n", bad_cases[k].name);
	}
}

/* Growing text buffer for generated files. */
struct text {
	char *buf;
	size_t len, cap;
};

/* Append formatted text to T. */
__attribute__((format(printf, 2, 3)))
static void text_add(struct text *t, const char *fmt, ...)
{
	va_list ap;
	va_start(ap, fmt);
	va_list aq;
	va_copy(aq, ap);
	int n = vsnprintf(NULL, 0, fmt, ap);
	va_end(ap);
	assert_true(n >= 0);
	if (t->len + (size_t)n + 1 > t->cap) {
		t->cap = (t->len + (size_t)n + 1) * 2;
		t->buf = realloc(t->buf, t->cap);
		assert_non_null(t->buf);
	}
	vsnprintf(t->buf + t->len, (size_t)n + 1, fmt, aq);
	va_end(aq);
	t->len += (size_t)n;
}

/* An exponential entity-expansion file (anchors and aliases) is refused at once. */
static void test_billion_laughs(void **state)
{
	(void)state;
	struct text t = { 0 };
	text_add(&t, "a: &a [\"lol\",\"lol\",\"lol\",\"lol\",\"lol\",\"lol\",\"lol\",\"lol\",\"lol\"]\n");
	for (char c = 'b'; c <= 'i'; c++)
		text_add(&t, "%c: &%c [*%c,*%c,*%c,*%c,*%c,*%c,*%c,*%c,*%c]\n", c, c,
		         c - 1, c - 1, c - 1, c - 1, c - 1, c - 1, c - 1, c - 1, c - 1);
	check_rejected("billion laughs", t.buf, t.len, 1, "anchor");
	free(t.buf);
}

/* 10 000 levels of flow nesting are refused at the bound, not by a crash. */
static void test_deep_nesting(void **state)
{
	(void)state;
	struct text t = { 0 };
	text_add(&t, "source: ");
	for (int k = 0; k < 10000; k++)
		text_add(&t, "[");
	for (int k = 0; k < 10000; k++)
		text_add(&t, "]");
	text_add(&t, "\n");
	check_rejected("deep flow nesting", t.buf, t.len, 1, "nesting deeper than 16");
	free(t.buf);
	/* block nesting too */
	t = (struct text){ 0 };
	for (int k = 0; k < 40; k++)
		text_add(&t, "%*sk%d:\n", 2 * k, "", k);
	check_rejected("deep block nesting", t.buf, t.len, 17, "nesting deeper");
	free(t.buf);
}

/* Make a temporary folder; returns its malloc'd path. */
static char *make_temp_dir(void)
{
	const char *base = getenv("TMPDIR");
	char tmpl[512];
	snprintf(tmpl, sizeof tmpl, "%s/biasline-test-XXXXXX",
	         base != NULL && base[0] ? base : "/tmp");
	char *d = mkdtemp(tmpl);
	assert_non_null(d);
	return strdup(d);
}

/* Remove folder D and the files in it (one level). */
static void remove_dir(const char *d)
{
	DIR *dir = opendir(d);
	if (dir != NULL) {
		struct dirent *e;
		while ((e = readdir(dir)) != NULL) {
			if (strcmp(e->d_name, ".") == 0 || strcmp(e->d_name, "..") == 0)
				continue;
			char p[1024];
			snprintf(p, sizeof p, "%s/%s", d, e->d_name);
			struct stat st;
			if (lstat(p, &st) == 0 && S_ISDIR(st.st_mode))
				remove_dir(p);
			else
				unlink(p);
		}
		closedir(dir);
	}
	rmdir(d);
}

/* Write LEN bytes of DATA to PATH (test helper). */
static void write_file(const char *path, const char *data, size_t len)
{
	FILE *f = fopen(path, "wb");
	assert_non_null(f);
	assert_int_equal(fwrite(data, 1, len, f), len);
	assert_int_equal(fclose(f), 0);
}

/* Read PATH into a new NUL-terminated buffer. */
static char *read_file(const char *path, size_t *len)
{
	FILE *f = fopen(path, "rb");
	if (f == NULL)
		return NULL;
	struct text t = { 0 };
	char chunk[4096];
	size_t n;
	text_add(&t, "%s", "");
	while ((n = fread(chunk, 1, sizeof chunk, f)) > 0) {
		if (t.len + n + 1 > t.cap) {
			t.cap = (t.len + n + 1) * 2;
			t.buf = realloc(t.buf, t.cap);
			assert_non_null(t.buf);
		}
		memcpy(t.buf + t.len, chunk, n);
		t.len += n;
		t.buf[t.len] = '\0';
	}
	fclose(f);
	if (len != NULL)
		*len = t.len;
	return t.buf;
}

/* A file over 4 MiB is refused by size, from a file and from a buffer. */
static void test_too_big(void **state)
{
	(void)state;
	size_t n = 5u * 1024u * 1024u;
	char *big = malloc(n);
	assert_non_null(big);
	/* valid-looking content: a long comment */
	memset(big, ' ', n);
	big[0] = '#';
	big[n - 1] = '\n';
	check_rejected("5 MiB buffer", big, n, 0, "expected at most 4194304");
	char *d = make_temp_dir();
	char path[1024];
	snprintf(path, sizeof path, "%s/big.yaml", d);
	write_file(path, big, n);
	free(big);
	struct session s;
	struct session_error err;
	assert_int_equal(session_load_file(&s, path, &err), SESSION_BAD_DATA);
	assert_non_null(strstr(err.message, "expected at most 4194304"));
	remove_dir(d);
	free(d);
}

/* A missing file, a folder: SESSION_NO_INPUT with the reason. */
static void test_unreadable(void **state)
{
	(void)state;
	struct session s;
	struct session_error err;
	assert_int_equal(session_load_file(&s, "/nonexistent/biasline/x.yaml", &err),
	                 SESSION_NO_INPUT);
	assert_non_null(strstr(err.message, "No such file"));
	char *d = make_temp_dir();
	assert_int_equal(session_load_file(&s, d, &err), SESSION_NO_INPUT);
	assert_non_null(strstr(err.message, "folder"));
	remove_dir(d);
	free(d);
}

/* The keys scripts rely on load, with units and SI prefixes. */
static void test_minimal_keys(void **state)
{
	(void)state;
	static const char text[] =
		"source:\n"
		"  vs: 12\n"
		"  rs: 1.5k\n"
		"device:\n"
		"  model: diode\n"
		"  saturation_current: 2.2e-12\n"
		"  ideality: 1.9\n"
		"  series_resistance: 0.4\n"
		"  temperature: 40\n";
	struct session s;
	struct session_error err;
	assert_int_equal(session_load_buffer(&s, "min.yaml", text, sizeof text - 1, &err),
	                 SESSION_OK);
	assert_int_equal(s.source.form, SOURCE_THEVENIN);
	assert_true(s.source.vs == 12.0);
	assert_true(s.source.rs == 1500.0);
	assert_ptr_equal(s.device.type, model_find("diode"));
	assert_true(s.device.p[model_param_index(s.device.type, "saturation_current")] == 2.2e-12);
	assert_true(s.device.p[model_param_index(s.device.type, "ideality")] == 1.9);
	assert_true(s.device.p[model_param_index(s.device.type, "series_resistance")] == 0.4);
	assert_true(s.device.p[model_param_index(s.device.type, "temperature")] == 40.0);
	session_fini(&s);
}

/* Norton forms: inferred, explicit, ideal (no rp); conditions folded. */
static void test_norton_and_conditions(void **state)
{
	(void)state;
	static const char text[] =
		"source: {is: 3.75e-3}\n"
		"device: {model: diode, saturation_current: 4.1e-14, ideality: 1.23}\n"
		"conditions: {temperature: 61.5}\n";
	struct session s;
	struct session_error err;
	assert_int_equal(session_load_buffer(&s, "n.yaml", text, sizeof text - 1, &err),
	                 SESSION_OK);
	assert_int_equal(s.source.form, SOURCE_NORTON);
	assert_true(s.source.is == 3.75e-3);
	assert_true(isinf(s.source.rp));
	assert_true(s.device.p[model_param_index(s.device.type, "temperature")] == 61.5);
	assert_true(isnan(s.conditions.temperature));
	session_fini(&s);

	static const char text2[] =
		"source: {form: norton, is: -2.5e-3, rp: 4.7e3}\n"
		"device: {model: power-law, reference_voltage: 6.8, reference_current: 1.3e-3, exponent: 31.7}\n"
		"conditions: {temperature: -12.5}\n";
	assert_int_equal(session_load_buffer(&s, "n2.yaml", text2, sizeof text2 - 1, &err),
	                 SESSION_OK);
	assert_int_equal(s.source.form, SOURCE_NORTON);
	assert_true(s.source.rp == 4.7e3);
	/* the power-law model has no temperature: the condition is kept */
	assert_true(s.conditions.temperature == -12.5);
	session_fini(&s);
}

/* A small seeded generator (xorshift64*), so failures reproduce. */
static uint64_t rng_next(uint64_t *st)
{
	uint64_t x = *st;
	x ^= x >> 12;
	x ^= x << 25;
	x ^= x >> 27;
	*st = x;
	return x * 0x2545F4914F6CDD1DULL;
}

/* Uniform in [0, 1) with 53 random bits. */
static double rng_unit(uint64_t *st)
{
	return (double)(rng_next(st) >> 11) * 0x1.0p-53;
}

/* A value in [lo, hi], log-uniform when LOG and both ends positive. */
static double rng_range(uint64_t *st, double lo, double hi, bool log_scale)
{
	if (log_scale && lo > 0.0)
		return exp(log(lo) + rng_unit(st) * (log(hi) - log(lo)));
	return lo + rng_unit(st) * (hi - lo);
}

/* A random valid value for model parameter MP. */
static double rng_param(uint64_t *st, const struct model_param *mp)
{
	double lo = mp->min, hi = mp->max;
	if (isinf(lo))
		lo = -1e6;
	if (isinf(hi))
		hi = 1e6;
	bool logs = mp->log_step;
	if (logs && lo <= 0.0)
		lo = hi * 1e-15;
	for (;;) {
		double x = rng_range(st, lo, hi, logs);
		char err[256];
		if (model_param_check(mp, x, err, sizeof err) == 0)
			return x;
	}
}

/* Random notes text: printable ASCII, UTF-8, blanks and line breaks. */
static char *rng_notes(uint64_t *st)
{
	static const char *const bits[] = {
		"a", "Z", "0", " ", "  ", "\n", "\t", ":", "# ", "-", "'", "\"", "\\",
		"µ", "Ω", "°C", "—", "{", "}", "[", "]", ",", "&", "*", "!", "%", "@",
		"`", "|", ">", "?", "~", "null", "true", "12", "0x1F", "é",
	};
	size_t n = (size_t)(rng_next(st) % 40);
	struct text t = { 0 };
	text_add(&t, "%s", "");
	for (size_t k = 0; k < n; k++)
		text_add(&t, "%s", bits[rng_next(st) % (sizeof bits / sizeof bits[0])]);
	return t.buf;
}

/* Fill S with a random valid session. */
static void rng_session(uint64_t *st, struct session *s)
{
	session_init(s);
	size_t nmodels = 0;
	while (model_registry[nmodels] != NULL)
		nmodels++;
	const struct model_type *type = model_registry[rng_next(st) % nmodels];
	device_init(&s->device, type);
	char why[256];
	if (strcmp(type->name, "measured") == 0) {
		/* a table of 2 to 40 points rising in both V and I, steps spread
		 * over decades so that the exact writer is exercised */
		double v[40], i[40];
		size_t n = 2 + (size_t)(rng_next(st) % 39);
		v[0] = rng_range(st, -5.0, 5.0, false);
		i[0] = rng_range(st, -1e-3, 1e-3, false);
		for (size_t k = 1; k < n; k++) {
			v[k] = v[k - 1] + rng_range(st, 1e-4, 1.0, true);
			i[k] = i[k - 1] + rng_range(st, 1e-9, 1e-1, true);
		}
		if (session_set_curve(s, v, i, n, why, sizeof why) != 0)
			fail_msg("random points refused: %s", why);
	}
	/* Redraw until the model's own cross-parameter rules hold too (a
	 * zener's stated point, a tunnel diode's peak below its valley). */
	unsigned tries = 0;
	do {
		for (size_t k = 0; k < type->nparams; k++)
			s->device.p[k] = rng_param(st, &type->params[k]);
	} while (device_validate(&s->device, why, sizeof why) != 0 &&
	         ++tries < 100000);
	if (tries >= 100000)
		fail_msg("no valid random %s: %s", type->name, why);
	/* a self-heated junction's temperature is solved: the session keeps
	 * it at the ambient (what loading gives) */
	thermal_normalise(&s->device);
	if (rng_next(st) % 2)
		source_spec_thevenin(&s->source, rng_range(st, -1e3, 1e3, false),
		                     rng_next(st) % 8 ? rng_range(st, 1e-3, 1e9, true) : 0.0);
	else
		source_spec_norton(&s->source, rng_range(st, -10.0, 10.0, false),
		                   rng_next(st) % 4 ? rng_range(st, 1e-2, 1e12, true)
		                                    : INFINITY);
	if (model_param_index(type, "temperature") < 0 && rng_next(st) % 2)
		s->conditions.temperature = rng_range(st, -273.0, 999.0, false);
	s->solver.method = (enum solve_method)(rng_next(st) % METHOD_COUNT);
	s->solver.order = (enum projection_order)(rng_next(st) % ORDER_COUNT);
	s->solver.start_v = rng_next(st) % 3 ? rng_range(st, -50.0, 50.0, false) : NAN;
	s->solver.omega = rng_next(st) % 3 ? rng_range(st, 1e-3, 2.0, false) : 0.0;
	s->solver.tol = rng_range(st, 1e-15, 1e-2, true);
	s->solver.max_steps = 1 + (unsigned)(rng_next(st) % 100000);
	s->view.autoscale = rng_next(st) % 2;
	s->view.v_min = rng_range(st, -100.0, 0.0, false);
	s->view.v_max = s->view.v_min + rng_range(st, 1e-3, 1e3, true);
	s->view.i_min = -rng_range(st, 1e-9, 10.0, true);
	s->view.i_max = rng_range(st, 1e-9, 10.0, true);
	s->view.zoom = rng_range(st, 1e-2, 1e3, true);
	s->notes = rng_next(st) % 2 ? rng_notes(st) : NULL;
}

/* Report the first field where A and B differ (for a failing round trip). */
static void explain_difference(const struct session *a, const struct session *b,
                               const char *yaml)
{
	fprintf(stderr, "round trip changed the session; the file was:\n%s\n", yaml);
	if (a->notes != NULL && b->notes != NULL && strcmp(a->notes, b->notes) != 0)
		fprintf(stderr, "notes: [%s] vs [%s]\n", a->notes, b->notes);
}

/* S -> YAML -> session -> YAML: identical sessions and identical text. */
static void check_round_trip(const struct session *s)
{
	char *y1 = NULL, *y2 = NULL;
	size_t n1, n2;
	struct session_error err;
	assert_int_equal(session_save_buffer(s, &y1, &n1, &err), SESSION_OK);
	struct session back;
	enum session_status st = session_load_buffer(&back, "rt.yaml", y1, n1, &err);
	if (st != SESSION_OK) {
		char msg[1024];
		session_error_format(&err, msg, sizeof msg);
		fail_msg("reload failed: %s\n%s", msg, y1);
	}
	if (!session_equal(s, &back))
		explain_difference(s, &back, y1);
	assert_true(session_equal(s, &back));
	/* the same bits, field by field */
	assert_memory_equal(&s->source.vs, &back.source.vs, sizeof(double));
	assert_memory_equal(&s->source.rs, &back.source.rs, sizeof(double));
	assert_memory_equal(&s->source.is, &back.source.is, sizeof(double));
	assert_memory_equal(&s->source.rp, &back.source.rp, sizeof(double));
	assert_memory_equal(s->device.p, back.device.p, sizeof s->device.p);
	assert_true((s->device.curve == NULL) == (back.device.curve == NULL));
	if (s->device.curve != NULL) {
		assert_true(back.device.curve == back.curve);
		assert_memory_equal(s->curve->v, back.curve->v,
		                    s->curve->n * sizeof(double));
		assert_memory_equal(s->curve->i, back.curve->i,
		                    s->curve->n * sizeof(double));
	}
	assert_memory_equal(&s->solver.tol, &back.solver.tol, sizeof(double));
	assert_memory_equal(&s->view.zoom, &back.view.zoom, sizeof(double));
	/* tidy is idempotent: writing what was read gives the same text */
	assert_int_equal(session_save_buffer(&back, &y2, &n2, &err), SESSION_OK);
	assert_int_equal(n1, n2);
	assert_memory_equal(y1, y2, n1);
	session_fini(&back);
	free(y1);
	free(y2);
}

/* 1000 random valid sessions survive save and load bit for bit. */
static void test_random_round_trip(void **state)
{
	(void)state;
	uint64_t st = 0x9E3779B97F4A7C15ULL ^ 20261201u;
	for (int k = 0; k < 1000; k++) {
		struct session s;
		rng_session(&st, &s);
		check_round_trip(&s);
		session_fini(&s);
	}
	printf("# 1000 random sessions round-tripped\n");
}

/* Edge values: signed zeros, extremes of ranges, denormal-free tiny values. */
static void test_edge_round_trip(void **state)
{
	(void)state;
	static const double vs[] = { -0.0, 0.0, 5e-324, 2.2250738585072014e-308, 1e9, -1e9, 0.1, 1.0 / 3.0,
	                             12.345678901234567, 9.999999999999999e8 };
	for (size_t k = 0; k < sizeof vs / sizeof vs[0]; k++) {
		struct session s;
		session_init(&s);
		source_spec_thevenin(&s.source, vs[k], 1e15);
		check_round_trip(&s);
		session_fini(&s);
	}
}

/* The demo is valid, round-trips, and builds a problem. */
static void test_demo(void **state)
{
	(void)state;
	struct session s;
	session_demo(&s);
	check_round_trip(&s);
	struct problem pb;
	char err[256];
	assert_int_equal(session_problem(&s, &pb, err, sizeof err), 0);
	assert_int_equal(s.solver.order, ORDER_VOLTAGE_FROM_LINE);
	session_fini(&s);
}

/* session_problem reports a bad source and a bad device. */
static void test_problem_errors(void **state)
{
	(void)state;
	struct session s;
	session_init(&s);
	struct problem pb;
	char err[256];
	s.source.rs = -3.5;
	assert_int_equal(session_problem(&s, &pb, err, sizeof err), -1);
	assert_non_null(strstr(err, "rs"));
	session_init(&s);
	device_init(&s.device, model_find("diode"));
	assert_int_equal(session_problem(&s, &pb, err, sizeof err), -1);
	assert_non_null(strstr(err, "device."));
	session_fini(&s);
}

/* Copy and compare: a deep copy is equal and independent. */
static void test_copy_equal(void **state)
{
	(void)state;
	uint64_t st = 77;
	struct session a, b;
	rng_session(&st, &a);
	free(a.notes);
	a.notes = strdup("kept notes");
	session_init(&b);
	assert_int_equal(session_copy(&b, &a), 0);
	assert_true(session_equal(&a, &b));
	assert_ptr_not_equal(a.notes, b.notes);
	b.view.zoom = nextafter(b.view.zoom, 0.0);
	assert_false(session_equal(&a, &b));
	session_fini(&a);
	session_fini(&b);
}

/* Hook: fail as if the disk filled up before the rename. */
static int hook_fail(void *ctx, const char *tmp)
{
	int *called = ctx;
	*called = 1;
	assert_int_equal(access(tmp, F_OK), 0);
	return ENOSPC;
}

/* Count the entries of folder D other than . and .. */
static int count_entries(const char *d)
{
	DIR *dir = opendir(d);
	assert_non_null(dir);
	int n = 0;
	struct dirent *e;
	while ((e = readdir(dir)) != NULL)
		if (strcmp(e->d_name, ".") != 0 && strcmp(e->d_name, "..") != 0)
			n++;
	closedir(dir);
	return n;
}

/* A failure between writing and renaming leaves the old file and no temp. */
static void test_atomic_failure_keeps_old(void **state)
{
	(void)state;
	char *d = make_temp_dir();
	char path[1024], err[512];
	snprintf(path, sizeof path, "%s/keep.yaml", d);
	write_file(path, "old contents\n", 13);
	int called = 0;
	struct atomic_hooks h = { .before_rename = hook_fail, .ctx = &called };
	assert_int_equal(atomic_write_file_hooked(path, "new\n", 4, &h, err, sizeof err), -1);
	assert_int_equal(called, 1);
	assert_non_null(strstr(err, "No space left"));
	assert_non_null(strstr(err, "keep.yaml"));
	size_t n;
	char *got = read_file(path, &n);
	assert_non_null(got);
	assert_string_equal(got, "old contents\n");
	free(got);
	assert_int_equal(count_entries(d), 1);
	/* and without the hook the write goes through, keeping the mode */
	assert_int_equal(chmod(path, 0640), 0);
	assert_int_equal(atomic_write_file(path, "new\n", 4, err, sizeof err), 0);
	got = read_file(path, &n);
	assert_string_equal(got, "new\n");
	free(got);
	struct stat st;
	assert_int_equal(stat(path, &st), 0);
	assert_int_equal(st.st_mode & 0777, 0640);
	assert_int_equal(count_entries(d), 1);
	remove_dir(d);
	free(d);
}

/* Make PATH (a test file) look untouched for AGE seconds. */
static void age_file(const char *path, int age)
{
	struct timespec t[2];
	assert_int_equal(clock_gettime(CLOCK_REALTIME, &t[0]), 0);
	t[0].tv_sec -= age;
	t[1] = t[0];
	assert_int_equal(utimensat(AT_FDCWD, path, t, AT_SYMLINK_NOFOLLOW), 0);
}

/*
 * A save removes the temporary files that a killed save of the same file
 * left beside it, once they are a minute old, and nothing else: a fresh
 * one (a save running elsewhere), another file's, names that only look
 * alike, a link, a folder.
 */
static void test_atomic_sweeps_stale(void **state)
{
	(void)state;
	char *d = make_temp_dir();
	char path[1024], p[1200], err[512];
	snprintf(path, sizeof path, "%s/bench.yaml", d);
	write_file(path, "old\n", 4);
	static const char *const stale[] = {
		".bench.yaml.biasline-tmp-Ab3xY9", ".bench.yaml.biasline-tmp-000000",
	};
	static const char *const kept[] = {
		".bench.yaml.biasline-tmp-Zq7Kp2",   /* fresh: a save under way */
		".other.yaml.biasline-tmp-Ab3xY9",   /* another file's */
		".bench.yaml.biasline-tmp-Ab3xY",    /* five characters */
		".bench.yaml.biasline-tmp-Ab3xY9~",  /* seven */
		".bench.yaml.biasline-tmp-Ab.xY9",   /* not mkstemp's alphabet */
		".bench.yaml.Ab3xY9",                /* not our mark */
		"bench.yaml.biasline-tmp-Ab3xY9",    /* not hidden */
		".bench.yaml.swp",
	};
	for (size_t k = 0; k < sizeof stale / sizeof stale[0]; k++) {
		snprintf(p, sizeof p, "%s/%s", d, stale[k]);
		write_file(p, "half a sess", 11);
		age_file(p, 3600);
	}
	for (size_t k = 0; k < sizeof kept / sizeof kept[0]; k++) {
		snprintf(p, sizeof p, "%s/%s", d, kept[k]);
		write_file(p, "x", 1);
		if (k > 0)
			age_file(p, 3600);
	}
	/* an old link and an old folder with our name are not ours to remove */
	snprintf(p, sizeof p, "%s/.bench.yaml.biasline-tmp-LnK001", d);
	assert_int_equal(symlink("bench.yaml", p), 0);
	age_file(p, 3600);
	snprintf(p, sizeof p, "%s/.bench.yaml.biasline-tmp-DiR001", d);
	assert_int_equal(mkdir(p, 0700), 0);
	age_file(p, 3600);
	int before = count_entries(d);
	assert_int_equal(atomic_write_file(path, "new\n", 4, err, sizeof err), 0);
	for (size_t k = 0; k < sizeof stale / sizeof stale[0]; k++) {
		snprintf(p, sizeof p, "%s/%s", d, stale[k]);
		assert_int_equal(access(p, F_OK), -1);
	}
	for (size_t k = 0; k < sizeof kept / sizeof kept[0]; k++) {
		snprintf(p, sizeof p, "%s/%s", d, kept[k]);
		assert_int_equal(access(p, F_OK), 0);
	}
	assert_int_equal(count_entries(d), before - 2);
	size_t n;
	char *got = read_file(path, &n);
	assert_string_equal(got, "new\n");
	free(got);
	remove_dir(d);
	free(d);
}

/* A path whose folder is a file fails cleanly, leaving nothing behind. */
static void test_atomic_bad_folder(void **state)
{
	(void)state;
	char *d = make_temp_dir();
	char file[1024], path[1100], err[512];
	snprintf(file, sizeof file, "%s/plain", d);
	write_file(file, "x", 1);
	snprintf(path, sizeof path, "%s/sub.yaml", file);
	assert_int_equal(atomic_write_file(path, "y\n", 2, err, sizeof err), -1);
	assert_non_null(strstr(err, "Not a directory"));
	assert_int_equal(count_entries(d), 1);
	remove_dir(d);
	free(d);
}

/*
 * A folder where no file can be created gives a clear error and leaves no
 * temporary file.  Root ignores a folder's write bits, so as root the
 * folder is /proc (no regular files can be made there) instead.
 */
static void test_atomic_read_only(void **state)
{
	(void)state;
	char err[512];
	if (geteuid() == 0) {
		assert_int_equal(atomic_write_file("/proc/biasline-test.yaml", "y\n", 2,
		                                   err, sizeof err), -1);
		assert_non_null(strstr(err, "cannot create a file in /proc"));
		assert_int_equal(access("/proc/biasline-test.yaml", F_OK), -1);
		return;
	}
	char *d = make_temp_dir();
	char path[1024];
	snprintf(path, sizeof path, "%s/ro.yaml", d);
	assert_int_equal(chmod(d, 0555), 0);
	int rc = atomic_write_file(path, "y\n", 2, err, sizeof err);
	chmod(d, 0755);
	assert_int_equal(rc, -1);
	assert_non_null(strstr(err, "Permission denied"));
	assert_int_equal(count_entries(d), 0);
	remove_dir(d);
	free(d);
}

/* session_save_file then session_load_file give the same session. */
static void test_save_file(void **state)
{
	(void)state;
	char *d = make_temp_dir();
	char path[1024];
	snprintf(path, sizeof path, "%s/s.yaml", d);
	uint64_t st = 4242;
	struct session s, back;
	struct session_error err;
	rng_session(&st, &s);
	assert_int_equal(session_save_file(&s, path, &err), SESSION_OK);
	assert_int_equal(session_load_file(&back, path, &err), SESSION_OK);
	assert_true(session_equal(&s, &back));
	session_fini(&back);
	char bad[1100];
	snprintf(bad, sizeof bad, "%s/s.yaml/x.yaml", d);
	assert_int_equal(session_save_file(&s, bad, &err), SESSION_CANT_WRITE);
	assert_string_equal(err.file, bad);
	session_fini(&s);
	remove_dir(d);
	free(d);
}

/* The header comment is the first line of every saved file. */
static void test_header(void **state)
{
	(void)state;
	struct session s;
	session_init(&s);
	char *y;
	size_t n;
	assert_int_equal(session_save_buffer_with(&s, "origin: /x/y.yaml", &y, &n, NULL),
	                 SESSION_OK);
	assert_true(strncmp(y, "# biasline session, written by biasline ", 40) == 0);
	assert_non_null(strstr(y, "\n# origin: /x/y.yaml\n"));
	free(y);
	assert_int_equal(session_save_buffer_with(&s, "two\n\n# lines", &y, &n, NULL),
	                 SESSION_OK);
	assert_non_null(strstr(y, "\n# two\n\n# lines\nformat_version: 1\n"));
	free(y);
	session_fini(&s);
}

/* Recovery files: save, find, list, load back, remove; folder mode 0700. */
static void test_recovery(void **state)
{
	(void)state;
	char *d = make_temp_dir();
	char state_dir[1100];
	snprintf(state_dir, sizeof state_dir, "%s/state", d);
	assert_int_equal(setenv("XDG_STATE_HOME", state_dir, 1), 0);

	char found[RECOVERY_PATH_MAX], err[512];
	assert_int_equal(recovery_find("/srv/cases/led.yaml", found, sizeof found), 0);
	struct recovery_entry *list;
	size_t n;
	assert_int_equal(recovery_list(&list, &n, err, sizeof err), 0);
	assert_int_equal(n, 0);
	recovery_list_free(list);

	uint64_t st = 31337;
	struct session a, demo, back;
	struct session_error serr;
	rng_session(&st, &a);
	session_demo(&demo);
	assert_int_equal(recovery_save(&a, "/srv/cases/led.yaml", &serr), SESSION_OK);
	assert_int_equal(recovery_save(&demo, NULL, &serr), SESSION_OK);

	/* the folder is private */
	char dir[1200];
	snprintf(dir, sizeof dir, "%s/biasline", state_dir);
	struct stat sb;
	assert_int_equal(stat(dir, &sb), 0);
	assert_int_equal(sb.st_mode & 0777, 0700);

	assert_int_equal(recovery_find("/srv/cases/led.yaml", found, sizeof found), 1);
	assert_non_null(strstr(found, "/biasline/led.yaml-"));
	assert_int_equal(session_load_file(&back, found, &serr), SESSION_OK);
	assert_true(session_equal(&a, &back));
	session_fini(&back);
	/* another file of the same name elsewhere gets its own recovery file */
	char other[RECOVERY_PATH_MAX];
	assert_int_equal(recovery_path("/srv/other/led.yaml", other, sizeof other,
	                               err, sizeof err), 0);
	assert_string_not_equal(found, other);

	assert_int_equal(recovery_find(NULL, found, sizeof found), 1);
	assert_non_null(strstr(found, "/biasline/demo.yaml"));

	assert_int_equal(recovery_list(&list, &n, err, sizeof err), 0);
	assert_int_equal(n, 2);
	int saw_demo = 0, saw_led = 0;
	for (size_t k = 0; k < n; k++) {
		if (list[k].origin[0] == '\0')
			saw_demo++;
		else if (strcmp(list[k].origin, "/srv/cases/led.yaml") == 0)
			saw_led++;
	}
	assert_int_equal(saw_demo, 1);
	assert_int_equal(saw_led, 1);
	recovery_list_free(list);

	assert_int_equal(recovery_remove("/srv/cases/led.yaml", err, sizeof err), 0);
	assert_int_equal(recovery_find("/srv/cases/led.yaml", found, sizeof found), 0);
	assert_int_equal(recovery_remove("/srv/cases/led.yaml", err, sizeof err), 0);
	assert_int_equal(recovery_remove(NULL, err, sizeof err), 0);
	assert_int_equal(recovery_list(&list, &n, err, sizeof err), 0);
	assert_int_equal(n, 0);
	recovery_list_free(list);

	/* a relative XDG_STATE_HOME is ignored in favour of HOME */
	assert_int_equal(setenv("XDG_STATE_HOME", "relative/state", 1), 0);
	assert_int_equal(setenv("HOME", d, 1), 0);
	assert_int_equal(recovery_dir(found, sizeof found, err, sizeof err), 0);
	char expect[1200];
	snprintf(expect, sizeof expect, "%s/.local/state/biasline", d);
	assert_string_equal(found, expect);
	unsetenv("XDG_STATE_HOME");

	session_fini(&a);
	session_fini(&demo);
	remove_dir(d);
	free(d);
}

/*
 * A measured device's points: mixed plain and unit-carrying values load
 * to the numbers they name, save back as plain exact numbers, and load
 * again bit for bit; a copy owns its own table and outlives the original.
 */
static void test_measured_points(void **state)
{
	(void)state;
	static const char text[] =
		"source:\n  vs: 4.87\n  rs: 1.33k\n"
		"device:\n  model: measured\n  points:\n"
		"    - [0.5513, 10.7u]\n"
		"    - [0.6247, 103.9u]\n"
		"    - [\"0.7018 V\", \"1.087 mA\"]\n"
		"    - [\"753.3 mV\", 3.917m]\n"
		"    - [0.8129, 9.863e-3]\n";
	/* what the text names, by the SI prefixes (u = 1e-6, m = 1e-3) */
	static const double want_v[] = { 0.5513, 0.6247, 0.7018, 0.7533, 0.8129 };
	static const double want_i[] = { 10.7e-6, 103.9e-6, 1.087e-3, 3.917e-3,
	                                 9.863e-3 };
	struct session a;
	struct session_error err;
	assert_int_equal(session_load_buffer(&a, "m.yaml", text, strlen(text), &err),
	                 SESSION_OK);
	assert_non_null(a.curve);
	assert_ptr_equal(a.device.curve, a.curve);
	assert_int_equal(a.curve->n, 5);
	for (size_t k = 0; k < 5; k++) {
		assert_true(fabs(a.curve->v[k] - want_v[k]) <= 1e-15 * want_v[k]);
		assert_true(fabs(a.curve->i[k] - want_i[k]) <= 1e-15 * want_i[k]);
	}
	check_round_trip(&a);

	/* the copy's device points at the copy's own table */
	struct session b;
	session_init(&b);
	assert_int_equal(session_copy(&b, &a), 0);
	assert_non_null(b.curve);
	assert_ptr_not_equal(b.curve, a.curve);
	assert_ptr_equal(b.device.curve, b.curve);
	assert_true(session_equal(&a, &b));
	double ia = device_current(&a.device, 0.7391);
	session_fini(&a);
	double ib = device_current(&b.device, 0.7391);
	assert_memory_equal(&ia, &ib, sizeof ia);
	assert_true(ib > want_i[2] && ib < want_i[3]);

	/* one point changed by one ulp makes the sessions differ */
	struct session c;
	session_init(&c);
	assert_int_equal(session_copy(&c, &b), 0);
	c.curve->i[4] = nextafter(c.curve->i[4], 1.0);
	assert_false(session_equal(&b, &c));
	/* copying onto itself keeps a working table */
	assert_int_equal(session_copy(&c, &c), 0);
	assert_ptr_equal(c.device.curve, c.curve);
	assert_true(isfinite(device_current(&c.device, 0.6)));
	session_fini(&c);
	session_fini(&b);
}

/* Write a session whose device reads CSV (file "pts/run.csv" beside it). */
static void points_file_case(const char *d, const char *csv, char *session_path,
                             size_t n)
{
	char p[1024];
	snprintf(p, sizeof p, "%s/pts", d);
	mkdir(p, 0700);
	snprintf(p, sizeof p, "%s/pts/run.csv", d);
	write_file(p, csv, strlen(csv));
	static const char yaml[] =
		"source:\n  vs: 4.87\n  rs: 1.33k\n"
		"device:\n  model: measured\n  points_file: pts/run.csv\n";
	snprintf(session_path, n, "%s/bench.yaml", d);
	write_file(session_path, yaml, strlen(yaml));
}

/*
 * points_file: reads V,I rows relative to the session's folder (header,
 * blank and '#' lines skipped) into the same table as the inline list, and
 * its errors name the CSV file, line and row.
 */
static void test_measured_points_file(void **state)
{
	(void)state;
	char *d = make_temp_dir();
	char path[1100];
	points_file_case(d, "V (volts),I (amperes)\n0.5513,10.7u\n\n"
	                 "# second sweep\n0.6247, 103.9u\r\n0.7018 V,1.087 mA\n"
	                 "753.3 mV,3.917m\n0.8129,9.863e-3\n", path, sizeof path);
	static const char inline_text[] =
		"source:\n  vs: 4.87\n  rs: 1.33k\n"
		"device:\n  model: measured\n  points:\n"
		"    - [0.5513, 10.7u]\n    - [0.6247, 103.9u]\n"
		"    - [\"0.7018 V\", \"1.087 mA\"]\n    - [\"753.3 mV\", 3.917m]\n"
		"    - [0.8129, 9.863e-3]\n";
	struct session a, b;
	struct session_error err;
	char msg[1400];
	if (session_load_file(&a, path, &err) != SESSION_OK) {
		session_error_format(&err, msg, sizeof msg);
		fail_msg("points_file not loaded: %s", msg);
	}
	assert_int_equal(session_load_buffer(&b, "inline.yaml", inline_text,
	                                     strlen(inline_text), &err), SESSION_OK);
	assert_true(session_equal(&a, &b));
	/* saved as an inline list, which loads back bit for bit */
	check_round_trip(&a);
	session_fini(&a);
	session_fini(&b);

	static const struct {
		const char *csv;
		unsigned line;        /* line in run.csv (0: the session's) */
		const char *needle;
	} bad[] = {
		{ "V,I\n0.5513,10.7u\n0.6247,103.9u\n0.6247,1.087m\n", 4,
		  "row 3: V = 0.6247 is the same as row 2" },
		{ "0.5513,10.7u\n\n0.6247,9.9u\n", 3, "row 2: I = 9.9e-06 is below row 1" },
		{ "0.5513,10.7u\n0.6247,103.9u,7\n", 2, "row 2: expected two columns" },
		{ "0.5513,10.7u\n0.6247\n", 2, "row 2: expected two columns" },
		{ "0.5513,10.7u\n0.6247,1.2 V\n", 2, "expected a current" },
		{ "V,I\nvolts,amperes\n", 2, "expected a voltage" },
		{ "V,I\n0.5513,10.7u\n", 0, "holds 1 point, expected at least 2" },
	};
	for (size_t k = 0; k < sizeof bad / sizeof bad[0]; k++) {
		remove_dir(d);
		assert_int_equal(mkdir(d, 0700), 0);
		points_file_case(d, bad[k].csv, path, sizeof path);
		assert_int_equal(session_load_file(&a, path, &err), SESSION_BAD_DATA);
		session_error_format(&err, msg, sizeof msg);
		if (strstr(msg, bad[k].needle) == NULL ||
		    err.line != (bad[k].line ? bad[k].line : 6) ||
		    strstr(err.file, bad[k].line ? "pts/run.csv" : "bench.yaml") == NULL)
			fail_msg("case %zu: got \"%s\", expected line %u and \"%s\"", k,
			         msg, bad[k].line, bad[k].needle);
	}
	/* a missing file and both forms at once */
	remove_dir(d);
	assert_int_equal(mkdir(d, 0700), 0);
	char p[1100];
	snprintf(p, sizeof p, "%s/bench.yaml", d);
	static const char missing[] =
		"source:\n  vs: 4.87\n  rs: 1.33k\n"
		"device:\n  model: measured\n  points_file: absent.csv\n";
	write_file(p, missing, strlen(missing));
	/* a points file that cannot be read is missing input (66), as for the
	 * session file itself */
	assert_int_equal(session_load_file(&a, p, &err), SESSION_NO_INPUT);
	session_error_format(&err, msg, sizeof msg);
	assert_non_null(strstr(msg, "cannot open the file"));
	assert_int_equal(err.line, 6);
	static const char both[] =
		"source:\n  vs: 4.87\n  rs: 1.33k\n"
		"device:\n  model: measured\n  points: [[0.5, 1m], [0.6, 2m]]\n"
		"  points_file: absent.csv\n";
	check_rejected("points and points_file", both, strlen(both), 7,
	               "points given twice");
	remove_dir(d);
	free(d);
}

/* More points than CURVE_MAX_POINTS are refused at the first extra row. */
static void test_measured_point_cap(void **state)
{
	(void)state;
	struct text t = { 0 };
	text_add(&t, "source:\n  vs: 4.87\n  rs: 1.33k\n"
	         "device:\n  model: measured\n  points:\n");
	for (int k = 0; k <= CURVE_MAX_POINTS; k++)
		text_add(&t, "    - [%.6f, %.6e]\n", 0.3 + 1e-4 * k,
		         1e-9 * exp(0.0137 * k));
	/* the rows start on line 7: row CURVE_MAX_POINTS + 1 is on 7 + cap */
	check_rejected("too many points", t.buf, t.len, 7 + CURVE_MAX_POINTS,
	               "expected at most 4096");
	free(t.buf);
	/* exactly the cap is accepted */
	t = (struct text){ 0 };
	text_add(&t, "source:\n  vs: 4.87\n  rs: 1.33k\n"
	         "device:\n  model: measured\n  points:\n");
	for (int k = 0; k < CURVE_MAX_POINTS; k++)
		text_add(&t, "    - [%.6f, %.6e]\n", 0.3 + 1e-4 * k,
		         1e-9 * exp(0.0137 * k));
	struct session s;
	struct session_error err;
	assert_int_equal(session_load_buffer(&s, "cap.yaml", t.buf, t.len, &err),
	                 SESSION_OK);
	assert_int_equal(s.curve->n, CURVE_MAX_POINTS);
	session_fini(&s);
	free(t.buf);
}

/* Every sample (BIASLINE_SAMPLES folder) loads and round-trips exactly. */
static void test_samples(void **state)
{
	(void)state;
	const char *dir = getenv("BIASLINE_SAMPLES");
	assert_non_null(dir);
	DIR *d = opendir(dir);
	assert_non_null(d);
	int count = 0;
	struct dirent *e;
	while ((e = readdir(d)) != NULL) {
		size_t len = strlen(e->d_name);
		if (len < 6 || strcmp(e->d_name + len - 5, ".yaml") != 0)
			continue;
		char path[2048];
		snprintf(path, sizeof path, "%s/%s", dir, e->d_name);
		struct session s;
		struct session_error err;
		enum session_status st = session_load_file(&s, path, &err);
		if (st != SESSION_OK) {
			char msg[1024];
			session_error_format(&err, msg, sizeof msg);
			fail_msg("sample does not load: %s", msg);
		}
		check_round_trip(&s);
		/* the loaded sample builds a problem the core accepts */
		struct problem pb;
		char why[256];
		assert_int_equal(session_problem(&s, &pb, why, sizeof why), 0);
		session_fini(&s);
		printf("# sample round-tripped: %s\n", e->d_name);
		count++;
	}
	closedir(d);
	assert_true(count >= 6);
}

/*
 * A self-heated junction: conditions.temperature sets its ambient, its
 * temperature follows the ambient, and saving leaves the (solved)
 * temperature out, so the file loads again unchanged.
 */
static void test_self_heated(void **state)
{
	(void)state;
	const char *text =
		"source: {vs: 12.75, rs: 1.385k}\n"
		"device:\n  model: diode\n  saturation_current: 2.385e-12\n"
		"  ideality: 1.87\n  reference_temperature: 25\n"
		"  thermal_resistance: 41.5 degC/W\n"
		"conditions:\n  temperature: 47.25\n";
	struct session s;
	struct session_error serr;
	assert_int_equal(session_load_buffer(&s, "h.yaml", text, strlen(text),
	                                     &serr), SESSION_OK);
	assert_true(s.device.p[DIODE_THETA] == 41.5);
	assert_true(s.device.p[DIODE_TAMB] == 47.25);
	assert_true(s.device.p[DIODE_TEMP] == 47.25);
	assert_true(isnan(s.conditions.temperature));
	char *y = NULL;
	size_t n;
	assert_int_equal(session_save_buffer(&s, &y, &n, &serr), SESSION_OK);
	assert_null(strstr(y, "\n  temperature:"));
	assert_non_null(strstr(y, "\n  ambient_temperature: 47.25\n"));
	assert_non_null(strstr(y, "\n  thermal_resistance: 41.5\n"));
	check_round_trip(&s);
	/* the same device without a thermal resistance keeps its temperature */
	s.device.p[DIODE_THETA] = 0.0;
	free(y);
	assert_int_equal(session_save_buffer(&s, &y, &n, &serr), SESSION_OK);
	assert_non_null(strstr(y, "\n  temperature: 47.25\n"));
	free(y);
	session_fini(&s);
}

/* A preset fills the model's values; keys in the file override it. */
static void test_preset(void **state)
{
	(void)state;
	const struct model_type *type = NULL;
	for (size_t k = 0; model_registry[k] != NULL; k++)
		if (model_registry[k]->presets != NULL)
			type = model_registry[k];
	if (type == NULL)
		fail_msg("no registered model has presets: the preset key is untested");
	const char *name = type->presets[0];
	int pk = 0; /* the parameter the file overrides */
	double expect[MODEL_MAX_PARAMS];
	struct device dev;
	device_init(&dev, type);
	assert_int_equal(type->apply_preset(name, dev.p), 0);
	memcpy(expect, dev.p, sizeof expect);
	/* an override inside the parameter's range, unlike the preset's value */
	const struct model_param *mp = &type->params[pk];
	double over = expect[pk] * 1.0371;
	char err[256];
	assert_int_equal(model_param_check(mp, over, err, sizeof err), 0);
	expect[pk] = over;
	char text[512];
	snprintf(text, sizeof text,
	         "source: {vs: 17.25, rs: 1.385k}\n"
	         "device:\n  %s: %.17g\n  model: %s\n  preset: %s\n",
	         mp->key, over, type->name, name);
	struct session s;
	struct session_error serr;
	assert_int_equal(session_load_buffer(&s, "p.yaml", text, strlen(text), &serr),
	                 SESSION_OK);
	assert_memory_equal(s.device.p, expect, type->nparams * sizeof(double));
	check_round_trip(&s);
	session_fini(&s);
}

/*
 * device.fitted_to keeps the points file's name as written, through a
 * canonical save and a copy, and counts in equality; a name YAML must
 * quote comes back the same.
 */
static void test_fitted_to(void **state)
{
	(void)state;
	static const char *const names[] = { "bench sweep.csv",
	                                     "../data/led: run 3 #2.csv" };
	for (size_t k = 0; k < 2; k++) {
		char text[512];
		snprintf(text, sizeof text,
		         "source: {vs: 17.25, rs: 1.385k}\n"
		         "device:\n  model: diode\n  saturation_current: 2.385e-12\n"
		         "  ideality: 1.87\n  fitted_to: '%s'\n", names[k]);
		struct session s, c;
		struct session_error serr;
		assert_int_equal(session_load_buffer(&s, "f.yaml", text, strlen(text),
		                                     &serr), SESSION_OK);
		assert_non_null(s.fitted_to);
		assert_string_equal(s.fitted_to, names[k]);
		check_round_trip(&s);
		session_init(&c);
		assert_int_equal(session_copy(&c, &s), 0);
		assert_true(session_equal(&c, &s));
		free(c.fitted_to);
		c.fitted_to = NULL;
		assert_false(session_equal(&c, &s));
		session_fini(&c);
		session_fini(&s);
	}
}

/* Text that cannot be written as YAML fails cleanly: a status, no output. */
static void test_save_refuses_bad_text(void **state)
{
	(void)state;
	struct session s;
	session_init(&s);
	s.notes = strdup("caf\xc3\x28 and more");
	char *y = (char *)1;
	size_t n = 99;
	struct session_error err;
	assert_int_equal(session_save_buffer(&s, &y, &n, &err), SESSION_IO_ERROR);
	assert_null(y);
	assert_int_equal(n, 0);
	assert_non_null(strstr(err.message, "UTF-8"));
	/* a non-finite number cannot be written either */
	free(s.notes);
	s.notes = NULL;
	s.view.zoom = NAN;
	assert_int_equal(session_save_buffer(&s, &y, &n, &err), SESSION_IO_ERROR);
	assert_non_null(strstr(err.message, "non-finite"));
	session_fini(&s);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_bad_table),
		cmocka_unit_test(test_fitted_to),
		cmocka_unit_test(test_billion_laughs),
		cmocka_unit_test(test_deep_nesting),
		cmocka_unit_test(test_too_big),
		cmocka_unit_test(test_unreadable),
		cmocka_unit_test(test_minimal_keys),
		cmocka_unit_test(test_norton_and_conditions),
		cmocka_unit_test(test_random_round_trip),
		cmocka_unit_test(test_edge_round_trip),
		cmocka_unit_test(test_demo),
		cmocka_unit_test(test_problem_errors),
		cmocka_unit_test(test_copy_equal),
		cmocka_unit_test(test_atomic_failure_keeps_old),
		cmocka_unit_test(test_atomic_sweeps_stale),
		cmocka_unit_test(test_atomic_bad_folder),
		cmocka_unit_test(test_atomic_read_only),
		cmocka_unit_test(test_save_file),
		cmocka_unit_test(test_header),
		cmocka_unit_test(test_recovery),
		cmocka_unit_test(test_samples),
		cmocka_unit_test(test_measured_points),
		cmocka_unit_test(test_measured_point_cap),
		cmocka_unit_test(test_measured_points_file),
		cmocka_unit_test(test_preset),
		cmocka_unit_test(test_self_heated),
		cmocka_unit_test(test_save_refuses_bad_text),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
