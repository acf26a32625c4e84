/*
 * test_session_text.c - saving into the user's own text (session_text.h)
 * and the atomic writer's promises about the file it replaces.
 *
 * The property checked everywhere: change some values of a session read
 * from a text, save into that text, then (a) the result loads as exactly
 * the changed session, (b) every line that held no changed value is
 * byte-identical (with only inserted lines for values the text did not
 * hold), (c) saving with nothing changed gives the identical text.  It is
 * run on every sample and on 600 generated texts with random comments,
 * key orders, indentation and spellings of values; then table cases pin
 * the spelling of rewritten values, the placement of new keys and the
 * fallback to the canonical form.
 */
#include <dirent.h>
#include <errno.h>
#include <math.h>
#include <setjmp.h>
#include <signal.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cmocka.h>

#include "core/models/models.h"
#include "core/thermal.h"
#include "session/atomic.h"
#include "session/section_network.h"
#include "session/session.h"
#include "session/session_text.h"
#include "session/ytree.h"

/* ---- helpers ------------------------------------------------------------ */

/* A growing string. */
struct text {
	char *buf;
	size_t len, cap;
};

/* Append printf-style text to T. */
__attribute__((format(printf, 2, 3)))
static void text_add(struct text *t, const char *fmt, ...)
{
	va_list ap;
	va_start(ap, fmt);
	int n = vsnprintf(NULL, 0, fmt, ap);
	va_end(ap);
	assert_true(n >= 0);
	if (t->len + (size_t)n + 1 > t->cap) {
		t->cap = (t->len + (size_t)n + 1) * 2;
		t->buf = realloc(t->buf, t->cap);
		assert_non_null(t->buf);
	}
	va_start(ap, fmt);
	vsnprintf(t->buf + t->len, t->cap - t->len, fmt, ap);
	va_end(ap);
	t->len += (size_t)n;
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

/* Uniform in [0, 1). */
static double rng_unit(uint64_t *st)
{
	return (double)(rng_next(st) >> 11) * 0x1.0p-53;
}

/* An integer in [0, n). */
static size_t rng_below(uint64_t *st, size_t n)
{
	return (size_t)(rng_next(st) % n);
}

/* True with probability P. */
static bool rng_chance(uint64_t *st, double p)
{
	return rng_unit(st) < p;
}

/* Make a temporary folder; returns its malloc'd path. */
static char *make_temp_dir(void)
{
	const char *base = getenv("TMPDIR");
	char tmpl[512];
	snprintf(tmpl, sizeof tmpl, "%s/biasline-text-XXXXXX",
	         base != NULL && base[0] ? base : "/tmp");
	char *d = mkdtemp(tmpl);
	assert_non_null(d);
	return strdup(d);
}

/* Remove folder D and the files in it. */
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
			unlink(p);
		}
		closedir(dir);
	}
	rmdir(d);
}

/* The number of entries in folder D (without . and ..). */
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

/* Write the string DATA to PATH. */
static void write_file(const char *path, const char *data)
{
	FILE *f = fopen(path, "wb");
	assert_non_null(f);
	assert_int_equal(fwrite(data, 1, strlen(data), f), strlen(data));
	assert_int_equal(fclose(f), 0);
}

/* Load TEXT as session S (failing the test with the message if it does not). */
static void load_text(struct session *s, const char *name, const char *text)
{
	struct session_error err;
	if (session_load_buffer(s, name, text, strlen(text), &err) != SESSION_OK) {
		char msg[1024];
		session_error_format(&err, msg, sizeof msg);
		fail_msg("does not load: %s\n--- text ---\n%s", msg, text);
	}
}

/* ---- finding a key path in a text --------------------------------------- */

/*
 * The node at PATH in the tree of a text: components separated by '/',
 * "#K" for the K-th item of a list ("source/network/parts/#1/resistor").
 * A device temperature the text gives under conditions: is found there.
 */
static const struct ynode *node_at(const struct ynode *root, const char *path)
{
	const struct ynode *n = root;
	char buf[256];
	snprintf(buf, sizeof buf, "%s", path);
	for (char *part = buf, *next; part != NULL && n != NULL; part = next) {
		next = strchr(part, '/');
		if (next != NULL)
			*next++ = '\0';
		if (part[0] == '#') {
			size_t k = (size_t)atoi(part + 1);
			n = n->type == YNODE_SEQUENCE && k < n->nkids ? n->kids[k] : NULL;
		} else {
			n = ytree_get(n, part);
		}
	}
	if (n == NULL && strcmp(path, "device/temperature") == 0)
		return node_at(root, "conditions/temperature");
	return n;
}

/* Mark in LINES (1-based) the lines the node N of TEXT spans. */
static void mark_lines(const char *text, const struct ynode *n, bool *lines,
                       size_t nlines)
{
	size_t line = n->line;
	for (size_t p = n->off; p < n->end; p++)
		if (text[p] == '\n' && p + 1 < n->end)
			line++;
	for (size_t l = n->line; l <= line && l <= nlines; l++)
		lines[l] = true;
}

/* Split TEXT into lines (without their breaks): a new array of pointers
 * into a copy, and the count. */
struct lines {
	char *copy;
	char **at;
	size_t n;
};

/* Split TEXT into L. */
static void lines_split(struct lines *l, const char *text)
{
	l->copy = strdup(text);
	assert_non_null(l->copy);
	size_t cap = 16;
	l->at = malloc(cap * sizeof *l->at);
	l->n = 0;
	for (char *p = l->copy; *p != '\0';) {
		if (l->n == cap) {
			cap *= 2;
			l->at = realloc(l->at, cap * sizeof *l->at);
		}
		l->at[l->n++] = p;
		char *nl = strchr(p, '\n');
		if (nl == NULL)
			break;
		*nl = '\0';
		p = nl + 1;
	}
}

/* Free L. */
static void lines_free(struct lines *l)
{
	free(l->copy);
	free(l->at);
}

/* ---- mutations of a session ---------------------------------------------- */

/* The key paths a test changed, and how many were not in the text. */
struct changes {
	char path[24][160];
	size_t n;
};

/* Record PATH as changed. */
static void changes_add(struct changes *c, const char *fmt, ...)
	__attribute__((format(printf, 2, 3)));
static void changes_add(struct changes *c, const char *fmt, ...)
{
	if (c->n >= sizeof c->path / sizeof c->path[0])
		return;
	va_list ap;
	va_start(ap, fmt);
	vsnprintf(c->path[c->n++], sizeof c->path[0], fmt, ap);
	va_end(ap);
}

/* A new value near X: a "nice" one (few digits) or one with many. */
static double near_value(uint64_t *st, double x)
{
	double f = 0.55 + 0.9 * rng_unit(st);
	double v = x != 0.0 ? x * f : f;
	if (rng_chance(st, 0.6)) {
		/* round to two or three significant digits */
		char b[40];
		snprintf(b, sizeof b, "%.*e", 1 + (int)rng_below(st, 2), v);
		v = strtod(b, NULL);
	}
	return v;
}

/*
 * Change a random subset of S's values (at least one, unless none can
 * change), recording their paths in C.
 */
static void mutate(uint64_t *st, struct session *s, struct changes *c)
{
	c->n = 0;
	for (int round = 0; round < 8 && c->n == 0; round++) {
		double p = 0.25;
		if (s->network != NULL) {
			for (size_t k = 0; k < network_part_count(s->network); k++) {
				if (!rng_chance(st, p))
					continue;
				const struct network_part *pt = network_part(s->network, k);
				char key[96], err[256];
				snprintf(key, sizeof key, "%s%s", SESSION_NETWORK_PREFIX,
				         pt->name);
				if (session_network_set_value(s, key, near_value(st, pt->value),
				                              err, sizeof err) == 0)
					changes_add(c, "source/network/parts/#%zu/%s", k,
					            session_network_kind_key(pt->kind));
			}
		} else if (s->source.form == SOURCE_THEVENIN) {
			if (rng_chance(st, p)) {
				s->source.vs = near_value(st, s->source.vs);
				changes_add(c, "source/vs");
			}
			if (rng_chance(st, p)) {
				s->source.rs = near_value(st, s->source.rs);
				changes_add(c, "source/rs");
			}
		} else {
			if (rng_chance(st, p)) {
				s->source.is = near_value(st, s->source.is);
				changes_add(c, "source/is");
			}
			if (isfinite(s->source.rp) && rng_chance(st, p)) {
				s->source.rp = near_value(st, s->source.rp);
				changes_add(c, "source/rp");
			}
		}
		const struct model_type *t = s->device.type;
		for (size_t k = 0; t != NULL && k < t->nparams; k++) {
			if (!rng_chance(st, p))
				continue;
			double old = s->device.p[k], v;
			if (t->params[k].kind == QTY_TEMPERATURE)
				v = old + 5.0 + 20.0 * rng_unit(st);
			else if (old == 0.0 && t->params[k].kind == QTY_RESISTANCE)
				v = 0.47;
			else
				v = near_value(st, old);
			char err[256];
			s->device.p[k] = v;
			if (model_param_check(&t->params[k], v, err, sizeof err) != 0 ||
			    device_validate(&s->device, err, sizeof err) != 0) {
				s->device.p[k] = old;
				continue;
			}
			changes_add(c, "device/%s", t->params[k].key);
		}
		if (rng_chance(st, p)) {
			s->solver.method = (enum solve_method)
				(((int)s->solver.method + 1 + (int)rng_below(st, METHOD_COUNT - 1))
				 % METHOD_COUNT);
			changes_add(c, "solver/method");
		}
		if (rng_chance(st, p)) {
			s->solver.order = s->solver.order == ORDER_VOLTAGE_FROM_LINE
			                  ? ORDER_VOLTAGE_FROM_DEVICE : ORDER_VOLTAGE_FROM_LINE;
			changes_add(c, "solver/order");
		}
		if (rng_chance(st, p)) {
			s->solver.tol = near_value(st, s->solver.tol);
			changes_add(c, "solver/tolerance");
		}
		if (rng_chance(st, p)) {
			s->solver.max_steps += 1 + (unsigned)rng_below(st, 300);
			changes_add(c, "solver/step_limit");
		}
		if (rng_chance(st, p)) {
			s->solver.start_v = isnan(s->solver.start_v)
			                    ? 0.61 : near_value(st, s->solver.start_v);
			changes_add(c, "solver/start_voltage");
		}
		if (rng_chance(st, p)) {
			s->solver.omega = s->solver.omega == 0.0 ? 0.85 : 0.0;
			changes_add(c, "solver/relaxation");
		}
		if (rng_chance(st, p)) {
			s->view.zoom = near_value(st, s->view.zoom);
			changes_add(c, "view/zoom");
		}
		struct session_target *tg = &s->analysis.target;
		if (isfinite(tg->current) && rng_chance(st, p)) {
			tg->current = near_value(st, tg->current);
			changes_add(c, "target/current");
		}
		struct ratings *r = &s->analysis.ratings;
		if (isfinite(r->resistor_power) && rng_chance(st, p)) {
			r->resistor_power = near_value(st, r->resistor_power);
			changes_add(c, "ratings/resistor_power");
		}
		for (size_t k = 0; k < s->analysis.ntol; k++) {
			struct session_tolerance *tl = &s->analysis.tol[k];
			if (tl->form == SESSION_TOL_RANGE || !rng_chance(st, p))
				continue;
			double v = near_value(st, tl->a);
			if (tl->form == SESSION_TOL_PERCENT && !(v < 100.0))
				continue;
			tl->a = v;
			changes_add(c, "tolerances/%s", tl->key);
		}
	}
	/* A self-heated junction's temperature is solved: the session keeps
	 * it at the ambient, as loading does, and the file cannot give it, so
	 * its line goes (core/thermal.h). */
	if (thermal_active(&s->device)) {
		thermal_normalise(&s->device);
		changes_add(c, "device/temperature");
	}
}

/*
 * Save CHANGED into TEXT (read as ORIGINAL, whose paths C changed) and
 * check (a) and (b); LABEL names the case in failures.  Returns the report.
 */
static struct session_save_report check_patch(const char *label, const char *name,
                                              const char *text,
                                              const struct session *changed,
                                              const struct changes *c)
{
	struct session_text base;
	session_text_init(&base);
	assert_int_equal(session_text_set(&base, name, text, strlen(text)), 0);
	char *out;
	size_t len;
	struct session_save_report rep;
	struct session_error err;
	assert_int_equal(session_patch_text(changed, &base, name, &out, &len, &rep,
	                                    &err), SESSION_OK);
	if (rep.how != SESSION_SAVED_PATCHED && rep.how != SESSION_SAVED_UNCHANGED)
		fail_msg("%s: not patched (%d): %s\n--- text ---\n%s", label,
		         (int)rep.how, rep.why, text);
	/* (a) the saved text is exactly the changed session */
	struct session back;
	load_text(&back, name, out);
	if (!session_equal(&back, changed))
		fail_msg("%s: the saved text reads back differently\n--- text ---\n"
		         "%s\n--- saved ---\n%s", label, text, out);
	session_fini(&back);
	/* (b) lines without a changed value stay byte for byte */
	struct ytree *t;
	assert_int_equal(ytree_parse(name, text, strlen(text), &t, &err), SESSION_OK);
	struct lines a, b;
	lines_split(&a, text);
	lines_split(&b, out);
	bool *held = calloc(a.n + 2, sizeof *held);
	size_t absent = 0;
	for (size_t k = 0; k < c->n; k++) {
		const struct ynode *n = node_at(t->root, c->path[k]);
		if (n != NULL)
			mark_lines(text, n, held, a.n);
		else
			absent++;
	}
	if (absent == 0) {
		/* only rewrites: the same lines, changed ones only where marked */
		if (a.n != b.n)
			fail_msg("%s: %zu lines became %zu\n--- saved ---\n%s", label, a.n,
			         b.n, out);
		for (size_t l = 0; l < a.n; l++)
			if (!held[l + 1] && strcmp(a.at[l], b.at[l]) != 0)
				fail_msg("%s: line %zu changed: \"%s\" -> \"%s\"", label, l + 1,
				         a.at[l], b.at[l]);
	} else {
		/* inserted keys: the other lines stay, in order, and only new
		 * lines (at most a section header and a key each) come between */
		size_t j = 0, extra = 0, marked = 0;
		for (size_t l = 0; l < a.n; l++) {
			if (held[l + 1]) {
				marked++;
				continue;
			}
			while (j < b.n && strcmp(a.at[l], b.at[j]) != 0) {
				j++;
				extra++;
			}
			if (j == b.n)
				fail_msg("%s: line %zu \"%s\" is gone\n--- saved ---\n%s", label,
				         l + 1, a.at[l], out);
			j++;
		}
		extra += b.n - j;
		if (extra > marked + 2 * absent)
			fail_msg("%s: %zu new lines for %zu changed and %zu added values\n"
			         "--- saved ---\n%s", label, extra, marked, absent, out);
	}
	free(held);
	lines_free(&a);
	lines_free(&b);
	ytree_destroy(t);
	free(out);
	session_text_fini(&base);
	return rep;
}

/* (c): saving TEXT's own session gives TEXT byte for byte. */
static void check_unchanged(const char *label, const char *name, const char *text)
{
	struct session s;
	load_text(&s, name, text);
	struct session_text base;
	session_text_init(&base);
	assert_int_equal(session_text_set(&base, name, text, strlen(text)), 0);
	char *out;
	size_t len;
	struct session_save_report rep;
	assert_int_equal(session_patch_text(&s, &base, name, &out, &len, &rep, NULL),
	                 SESSION_OK);
	if (rep.how != SESSION_SAVED_UNCHANGED || len != strlen(text) ||
	    memcmp(out, text, len) != 0)
		fail_msg("%s: an unchanged save is not the same text (%d, %s)\n"
		         "--- saved ---\n%s", label, (int)rep.how, rep.why, out);
	free(out);
	session_text_fini(&base);
	session_fini(&s);
}

/* ---- every sample ---------------------------------------------------- */

/* Read PATH into a new string. */
static char *slurp(const char *path)
{
	char *buf;
	size_t len;
	struct session_error err;
	assert_int_equal(session_read_file(path, &buf, &len, &err), SESSION_OK);
	return buf;
}

/* Every sample: unchanged and 40 random changes each keep the text. */
static void test_samples(void **state)
{
	(void)state;
	const char *dir = getenv("BIASLINE_SAMPLES");
	assert_non_null(dir);
	DIR *d = opendir(dir);
	assert_non_null(d);
	int count = 0;
	uint64_t st = 0x5eed5a4b1e5ULL;
	struct dirent *e;
	while ((e = readdir(d)) != NULL) {
		size_t len = strlen(e->d_name);
		if (len < 6 || strcmp(e->d_name + len - 5, ".yaml") != 0)
			continue;
		char path[2048];
		snprintf(path, sizeof path, "%s/%s", dir, e->d_name);
		char *text = slurp(path);
		check_unchanged(e->d_name, path, text);
		size_t patched = 0;
		for (int k = 0; k < 40; k++) {
			struct session s;
			load_text(&s, path, text);
			struct changes c;
			mutate(&st, &s, &c);
			char label[2200];
			snprintf(label, sizeof label, "%s, change %d", e->d_name, k);
			struct session_save_report rep = check_patch(label, path, text, &s, &c);
			patched += rep.how == SESSION_SAVED_PATCHED;
			session_fini(&s);
		}
		assert_true(patched > 0);
		free(text);
		printf("# sample kept its text through 40 random changes: %s\n",
		       e->d_name);
		count++;
	}
	closedir(d);
	assert_true(count >= 6);
}

/* ---- generated texts --------------------------------------------------- */

/*
 * The decimal M x 10^E (M a whole number) written with the point moved:
 * into BUF as "1.5", "1500", "0.0015".
 */
static void decimal(char *buf, size_t n, long m, int e)
{
	char digits[32];
	snprintf(digits, sizeof digits, "%ld", labs(m));
	int nd = (int)strlen(digits);
	int point = nd + e; /* digits before the point */
	char out[96];
	size_t o = 0;
	if (m < 0)
		out[o++] = '-';
	if (point <= 0) {
		out[o++] = '0';
		out[o++] = '.';
		for (int k = 0; k < -point; k++)
			out[o++] = '0';
		for (int k = 0; k < nd; k++)
			out[o++] = digits[k];
	} else {
		for (int k = 0; k < point; k++)
			out[o++] = k < nd ? digits[k] : '0';
		if (point < nd) {
			out[o++] = '.';
			for (int k = point; k < nd; k++)
				out[o++] = digits[k];
		}
	}
	out[o] = '\0';
	snprintf(buf, n, "%s", out);
}

/* Units a kind may be written with (the first is the usual one). */
static const char *unit_of(enum qty_kind kind, uint64_t *st)
{
	switch (kind) {
	case QTY_VOLTAGE: return "V";
	case QTY_CURRENT: return "A";
	case QTY_RESISTANCE: {
		static const char *const r[] = { "Ω", "ohm", "ohms", "\xe2\x84\xa6" };
		return r[rng_below(st, 4)];
	}
	case QTY_POWER: return "W";
	case QTY_TEMPERATURE: {
		static const char *const t[] = { "°C", "degC", "C" };
		return t[rng_below(st, 3)];
	}
	case QTY_NUMBER:
	case QTY_CONDUCTANCE:
	case QTY_ENERGY_EV:
	case QTY_THERMAL_COND:
	case QTY_PERCENT:
	case QTY_KIND_COUNT:
	default: return "";
	}
}

/*
 * Write M x 10^E of KIND in a random spelling a person might use: plain,
 * with an SI prefix, with a unit (with or without a blank), "1k5", with
 * an exponent, and sometimes quoted.  The value is the same in each.
 */
static void spell(uint64_t *st, char *buf, size_t n, long m, int e,
                  enum qty_kind kind)
{
	static const struct { const char *t; int x; } pre[] = {
		{ "f", -15 }, { "p", -12 }, { "n", -9 }, { "u", -6 }, { "µ", -6 },
		{ "m", -3 }, { "k", 3 }, { "M", 6 }, { "G", 9 },
	};
	bool prefixes = kind != QTY_NUMBER && kind != QTY_TEMPERATURE;
	const char *unit = unit_of(kind, st);
	const char *blank = rng_chance(st, 0.5) ? " " : "";
	char num[64], body[96];
	/* the power of ten of the first digit, for an engineering prefix */
	char digits[32];
	snprintf(digits, sizeof digits, "%ld", labs(m));
	int first = (int)strlen(digits) - 1 + e;
	int px = first >= 0 ? first / 3 * 3 : -((-first + 2) / 3 * 3);
	const char *pt = NULL;
	for (size_t k = 0; k < sizeof pre / sizeof pre[0] && prefixes; k++)
		if (pre[k].x == px && (px != -6 || rng_chance(st, 0.5) || pre[k].t[0] == 'u'))
			pt = pre[k].t;
	switch (rng_below(st, 6)) {
	case 0: /* plain */
		decimal(body, sizeof body, m, e);
		break;
	case 1: /* exponent */
		snprintf(body, sizeof body, "%lde%d", m, e);
		break;
	case 2: /* prefix, maybe a unit */
		if (pt == NULL || px == 0) {
			decimal(num, sizeof num, m, e);
			snprintf(body, sizeof body, "%s%s%s", num, unit[0] ? blank : "", unit);
			break;
		}
		decimal(num, sizeof num, m, e - px);
		snprintf(body, sizeof body, "%s%s%s%s", num,
		         rng_chance(st, 0.5) ? blank : "", pt,
		         rng_chance(st, 0.5) ? unit : "");
		break;
	case 3: { /* "1k5": the prefix as the point */
		decimal(num, sizeof num, m, e - px);
		char *dot = strchr(num, '.');
		if (pt == NULL || px == 0 || dot == NULL || num[0] == '-' ||
		    num[0] == '0') {
			decimal(body, sizeof body, m, e);
			break;
		}
		*dot = '\0';
		snprintf(body, sizeof body, "%s%s%s", num, pt, dot + 1);
		break;
	}
	default: /* the number and its unit */
		decimal(num, sizeof num, m, e);
		snprintf(body, sizeof body, "%s%s%s", num, unit[0] ? blank : "", unit);
		break;
	}
	bool quote = rng_chance(st, 0.15);
	snprintf(buf, n, "%s%s%s", quote ? "\"" : "", body, quote ? "\"" : "");
}

/* A generated entry: a key and its value text (may hold several lines). */
struct gen_entry {
	char key[48];
	char value[256];          /* "" for a nested block (BLOCK holds it) */
	struct text block;        /* the nested entries, already indented */
};

/* Append an end-of-line comment or not. */
static void gen_eol(uint64_t *st, struct text *t)
{
	static const char *const c[] = {
		"# R7 on the board", "# measured 2026-11-03", "#no space",
		"# value from the bench, not the data sheet", "# µA, Ω: units here",
	};
	if (rng_chance(st, 0.3))
		text_add(t, "%*s%s", 1 + (int)rng_below(st, 4), "",
		         c[rng_below(st, sizeof c / sizeof c[0])]);
	text_add(t, "\n");
}

/* Perhaps a comment line or a blank line before an entry at INDENT. */
static void gen_between(uint64_t *st, struct text *t, int indent)
{
	if (rng_chance(st, 0.12))
		text_add(t, "%*s# a note between keys\n", indent, "");
	if (rng_chance(st, 0.08))
		text_add(t, "\n");
}

/* Write entries E[0..N) at INDENT in a random order into T. */
static void gen_entries(uint64_t *st, struct text *t, struct gen_entry *e,
                        size_t n, int indent)
{
	for (size_t k = n; k > 1; k--) {
		size_t j = rng_below(st, k);
		struct gen_entry x = e[k - 1];
		e[k - 1] = e[j];
		e[j] = x;
	}
	for (size_t k = 0; k < n; k++) {
		gen_between(st, t, indent);
		if (e[k].value[0] != '\0') {
			text_add(t, "%*s%s: %s", indent, "", e[k].key, e[k].value);
			gen_eol(st, t);
		} else {
			text_add(t, "%*s%s:", indent, "", e[k].key);
			gen_eol(st, t);
			text_add(t, "%s", e[k].block.buf);
		}
		free(e[k].block.buf);
	}
}

/* A value entry KEY with M x 10^E of KIND spelt at random. */
static void gen_value(uint64_t *st, struct gen_entry *e, size_t *n,
                      const char *key, long m, int ex, enum qty_kind kind)
{
	memset(&e[*n], 0, sizeof e[*n]);
	snprintf(e[*n].key, sizeof e[*n].key, "%s", key);
	spell(st, e[*n].value, sizeof e[*n].value, m, ex, kind);
	(*n)++;
}

/* A word entry KEY: WORD. */
static void gen_word(struct gen_entry *e, size_t *n, const char *key,
                     const char *word)
{
	memset(&e[*n], 0, sizeof e[*n]);
	snprintf(e[*n].key, sizeof e[*n].key, "%s", key);
	snprintf(e[*n].value, sizeof e[*n].value, "%s", word);
	(*n)++;
}

/* A section entry KEY holding entries SUB[0..NS) at INDENT + STEP. */
static void gen_section(uint64_t *st, struct gen_entry *e, size_t *n,
                        const char *key, struct gen_entry *sub, size_t ns,
                        int indent, int step)
{
	memset(&e[*n], 0, sizeof e[*n]);
	snprintf(e[*n].key, sizeof e[*n].key, "%s", key);
	text_add(&e[*n].block, "%s", "");
	gen_entries(st, &e[*n].block, sub, ns, indent + step);
	(*n)++;
}

/*
 * A random session text: random header comments, sections and keys in a
 * random order, random indentation, end-of-line comments, comment and
 * blank lines between keys, values in random spellings.
 */
static char *gen_text(uint64_t *st)
{
	struct text t = { 0 };
	text_add(&t, "%s", "");
	int step = rng_chance(st, 0.7) ? 2 : 4;
	size_t nh = rng_below(st, 4);
	for (size_t k = 0; k < nh; k++)
		text_add(&t, "# case %zu of the bench notebook: LED string, 24 V rail\n", k);
	if (nh > 0 && rng_chance(st, 0.5))
		text_add(&t, "\n");
	struct gen_entry top[12], sub[12];
	size_t nt = 0, ns = 0;
	if (rng_chance(st, 0.5))
		gen_word(top, &nt, "format_version", "1");
	/* the source */
	bool thevenin = rng_chance(st, 0.7);
	if (thevenin) {
		gen_value(st, sub, &ns, "vs", 1 + (long)rng_below(st, 480), -1, QTY_VOLTAGE);
		gen_value(st, sub, &ns, "rs", 10 + (long)rng_below(st, 90),
		          (int)rng_below(st, 5), QTY_RESISTANCE);
		if (rng_chance(st, 0.2))
			gen_word(sub, &ns, "form", "thevenin");
	} else {
		gen_value(st, sub, &ns, "is", 1 + (long)rng_below(st, 99),
		          -4 - (int)rng_below(st, 2), QTY_CURRENT);
		if (rng_chance(st, 0.7))
			gen_value(st, sub, &ns, "rp", 10 + (long)rng_below(st, 90),
			          3 + (int)rng_below(st, 3), QTY_RESISTANCE);
	}
	gen_section(st, top, &nt, "source", sub, ns, 0, step);
	/* the device, and perhaps its temperature under conditions */
	ns = 0;
	bool cond = false;
	if (rng_chance(st, 0.7)) {
		gen_word(sub, &ns, "model", "diode");
		gen_value(st, sub, &ns, "saturation_current", 10 + (long)rng_below(st, 90),
		          -16 - (int)rng_below(st, 6), QTY_CURRENT);
		gen_value(st, sub, &ns, "ideality", 100 + (long)rng_below(st, 100), -2,
		          QTY_NUMBER);
		if (rng_chance(st, 0.5))
			gen_value(st, sub, &ns, "series_resistance", 1 + (long)rng_below(st, 99),
			          -1, QTY_RESISTANCE);
		if (rng_chance(st, 0.4))
			gen_value(st, sub, &ns, "temperature", 15 + (long)rng_below(st, 50), 0,
			          QTY_TEMPERATURE);
		else
			cond = rng_chance(st, 0.4);
	} else {
		static const char *const colours[] = { "red", "green", "blue", "white" };
		gen_word(sub, &ns, "model", "led");
		gen_word(sub, &ns, "preset", colours[rng_below(st, 4)]);
		if (rng_chance(st, 0.5))
			gen_value(st, sub, &ns, "test_current", 5 + (long)rng_below(st, 25), -3,
			          QTY_CURRENT);
	}
	gen_section(st, top, &nt, "device", sub, ns, 0, step);
	if (cond) {
		ns = 0;
		gen_value(st, sub, &ns, "temperature", 15 + (long)rng_below(st, 50), 0,
		          QTY_TEMPERATURE);
		gen_section(st, top, &nt, "conditions", sub, ns, 0, step);
	}
	if (rng_chance(st, 0.5)) {
		ns = 0;
		static const char *const methods[] = { "auto", "projection", "newton",
		                                        "brent", "relaxed" };
		if (rng_chance(st, 0.7))
			gen_word(sub, &ns, "method", methods[rng_below(st, 5)]);
		if (rng_chance(st, 0.5))
			gen_word(sub, &ns, "order", rng_chance(st, 0.5) ? "voltage-from-line"
			                                                : "voltage-from-device");
		if (rng_chance(st, 0.4))
			gen_value(st, sub, &ns, "tolerance", 1 + (long)rng_below(st, 9),
			          -9 - (int)rng_below(st, 4), QTY_NUMBER);
		if (rng_chance(st, 0.3)) {
			char b[16];
			snprintf(b, sizeof b, "%zu", 20 + rng_below(st, 400));
			gen_word(sub, &ns, "step_limit", b);
		}
		if (rng_chance(st, 0.3))
			gen_value(st, sub, &ns, "start_voltage", 1 + (long)rng_below(st, 90),
			          -2, QTY_VOLTAGE);
		if (ns == 0)
			gen_word(sub, &ns, "method", "auto");
		gen_section(st, top, &nt, "solver", sub, ns, 0, step);
	}
	if (rng_chance(st, 0.3)) {
		ns = 0;
		gen_word(sub, &ns, "autoscale", rng_chance(st, 0.5) ? "true" : "false");
		if (rng_chance(st, 0.6))
			gen_word(sub, &ns, "voltage_range", rng_chance(st, 0.5) ? "[0, 3]"
			                                                        : "[0 V, 3.5 V]");
		if (rng_chance(st, 0.5))
			gen_value(st, sub, &ns, "zoom", 10 + (long)rng_below(st, 40), -1,
			          QTY_NUMBER);
		gen_section(st, top, &nt, "view", sub, ns, 0, step);
	}
	if (rng_chance(st, 0.3)) {
		ns = 0;
		gen_value(st, sub, &ns, "current", 1 + (long)rng_below(st, 30), -3,
		          QTY_CURRENT);
		gen_section(st, top, &nt, "target", sub, ns, 0, step);
	}
	if (rng_chance(st, 0.3)) {
		ns = 0;
		gen_value(st, sub, &ns, "resistor_power", 1 + (long)rng_below(st, 9), -1,
		          QTY_POWER);
		gen_section(st, top, &nt, "ratings", sub, ns, 0, step);
	}
	if (rng_chance(st, 0.4)) {
		ns = 0;
		char b[64];
		snprintf(b, sizeof b, "%zu%s%%", 1 + rng_below(st, 20),
		         rng_chance(st, 0.5) ? " " : "");
		/* a tolerance on the source's own first value */
		gen_word(sub, &ns, thevenin ? "vs" : "is", b);
		if (rng_chance(st, 0.5)) {
			snprintf(b, sizeof b, "{plus_minus: %zu%%, distribution: normal}",
			         1 + rng_below(st, 9));
			gen_word(sub, &ns, "ideality", b);
		}
		gen_section(st, top, &nt, "tolerances", sub, ns, 0, step);
	}
	gen_entries(st, &t, top, nt, 0);
	if (rng_chance(st, 0.3))
		text_add(&t, "notes: |\n%*sRe-run at 19 V and 30 V.\n%*sKeep the µ and Ω.\n",
		         step, "", step, "");
	if (rng_chance(st, 0.2))
		text_add(&t, "# the end\n");
	return t.buf;
}

/* 600 generated texts: unchanged and changed saves keep them. */
static void test_generated(void **state)
{
	(void)state;
	uint64_t st = 0x1234abcd9876ULL;
	size_t patched = 0, inserted = 0;
	for (int k = 0; k < 600; k++) {
		char *text = gen_text(&st);
		char label[64];
		snprintf(label, sizeof label, "generated text %d", k);
		check_unchanged(label, "gen.yaml", text);
		struct session s;
		load_text(&s, "gen.yaml", text);
		struct changes c;
		mutate(&st, &s, &c);
		struct session_save_report rep = check_patch(label, "gen.yaml", text, &s, &c);
		patched += rep.how == SESSION_SAVED_PATCHED;
		inserted += rep.inserted > 0;
		session_fini(&s);
		free(text);
	}
	printf("# 600 generated texts: %zu patched, %zu with keys added\n", patched,
	       inserted);
	assert_true(patched > 500);
	assert_true(inserted > 50);
}

/* ---- table cases ------------------------------------------------------- */

/* Save TEXT with F applied and return the saved text (the caller frees). */
static char *save_changed(const char *text, void (*f)(struct session *),
                          struct session_save_report *rep)
{
	struct session s;
	load_text(&s, "case.yaml", text);
	f(&s);
	struct session_text base;
	session_text_init(&base);
	assert_int_equal(session_text_set(&base, "case.yaml", text, strlen(text)), 0);
	char *out;
	size_t len;
	assert_int_equal(session_patch_text(&s, &base, NULL, &out, &len, rep, NULL),
	                 SESSION_OK);
	struct session back;
	load_text(&back, "case.yaml", out);
	assert_true(session_equal(&back, &s));
	session_fini(&back);
	session_text_fini(&base);
	session_fini(&s);
	return out;
}

static double g_value;
static void set_rs(struct session *s) { s->source.rs = g_value; }
static void set_vs(struct session *s) { s->source.vs = g_value; }
static void set_is(struct session *s) { s->source.is = g_value; }
static void set_temperature(struct session *s)
{
	s->device.p[model_param_index(s->device.type, "temperature")] = g_value;
}
static void set_series_resistance(struct session *s)
{
	s->device.p[model_param_index(s->device.type, "series_resistance")] = g_value;
}
static void set_saturation_current(struct session *s)
{
	s->device.p[model_param_index(s->device.type, "saturation_current")] = g_value;
}
static void set_first_tolerance(struct session *s) { s->analysis.tol[0].a = g_value; }
static void set_method_newton(struct session *s) { s->solver.method = METHOD_NEWTON; }
static void drop_last_tolerance(struct session *s) { s->analysis.ntol--; }
static void set_solver_tolerance(struct session *s) { s->solver.tol = g_value; }

/* A changed value keeps the old one's spelling: prefix, unit, blank, form. */
static void test_spelling(void **state)
{
	(void)state;
	/* the old value as written, the new value, the expected spelling */
	static const struct {
		const char *old_rs;
		double value;
		const char *want;
	} rs[] = {
		{ "1.5k", 1600.0, "1.6k" },
		{ "1.5k", 820.0, "820" },
		{ "1.5 kΩ", 820.0, "820 Ω" },
		{ "3.3 kohm", 3600.0, "3.6 kohm" },
		{ "4k7", 5100.0, "5k1" },
		{ "4k7", 5000.0, "5k" },
		{ "0.5k", 600.0, "0.6k" },           /* a writer who keeps k */
		{ "2200", 2400.0, "2400" },
		{ "2.2e3", 2400.0, "2.4e3" },
		{ "1.5M", 1.6e6, "1.6M" },
		{ "\"1.5 k\"", 1600.0, "\"1.6 k\"" },
		{ "'2.2k'", 2700.0, "'2.7k'" },
		{ "1.5k", 1234.56789, "1.23456789k" }, /* every digit, read back exact */
		{ "4R7", 5.6, "5R6" },
	};
	for (size_t k = 0; k < sizeof rs / sizeof rs[0]; k++) {
		char text[256], want[128];
		snprintf(text, sizeof text, "# a case\nsource:\n  vs: 12 V\n"
		         "  rs: %s   # R7 on the board\ndevice:\n  model: diode\n"
		         "  saturation_current: 2.2e-12\n  ideality: 1.9\n", rs[k].old_rs);
		snprintf(want, sizeof want, "  rs: %s   # R7 on the board\n", rs[k].want);
		g_value = rs[k].value;
		struct session_save_report rep;
		char *out = save_changed(text, set_rs, &rep);
		if (strstr(out, want) == NULL)
			fail_msg("rs: %s -> %.17g: expected \"%s\", got\n%s", rs[k].old_rs,
			         rs[k].value, want, out);
		assert_int_equal(rep.how, SESSION_SAVED_PATCHED);
		assert_int_equal(rep.changed, 1);
		free(out);
	}
	static const struct {
		const char *old_vs;
		double value;
		const char *want;
	} vs[] = {
		{ "12 V", 13.0, "13 V" },
		{ "12V", 13.5, "13.5V" },
		{ "+12 V", 13.0, "+13 V" },
		{ "12 V", -5.0, "-5 V" },
		{ "500 mV", 0.75, "750 mV" },
		{ "500 mV", 2.0, "2 V" },
	};
	for (size_t k = 0; k < sizeof vs / sizeof vs[0]; k++) {
		char text[256], want[128];
		snprintf(text, sizeof text, "source:\n  vs: %s\n  rs: 1k\ndevice:\n"
		         "  model: diode\n  saturation_current: 2.2e-12\n"
		         "  ideality: 1.9\n", vs[k].old_vs);
		snprintf(want, sizeof want, "  vs: %s\n", vs[k].want);
		g_value = vs[k].value;
		struct session_save_report rep;
		char *out = save_changed(text, set_vs, &rep);
		if (strstr(out, want) == NULL)
			fail_msg("vs: %s -> %g: expected \"%s\", got\n%s", vs[k].old_vs,
			         vs[k].value, want, out);
		free(out);
	}
	/* a current in µA, a tiny one with an exponent, temperatures */
	static const char norton[] =
		"source:\n  is: 150 µA\ndevice:\n  model: diode\n"
		"  saturation_current: 6.3e-21\n  ideality: 1.93\n  temperature: 25 °C\n";
	struct session_save_report rep;
	g_value = 220e-6;
	char *out = save_changed(norton, set_is, &rep);
	assert_non_null(strstr(out, "  is: 220 µA\n"));
	free(out);
	g_value = 6.5e-21;
	out = save_changed(norton, set_saturation_current, &rep);
	assert_non_null(strstr(out, "  saturation_current: 6.5e-21\n"));
	free(out);
	g_value = 31.5;
	out = save_changed(norton, set_temperature, &rep);
	assert_non_null(strstr(out, "  temperature: 31.5 °C\n"));
	free(out);
	/* a tolerance in per cent stays in per cent, its blank kept */
	static const char tol[] =
		"source:\n  vs: 12\n  rs: 1k\ndevice:\n  model: diode\n"
		"  saturation_current: 2.2e-12\n  ideality: 1.9\n"
		"tolerances:\n  rs: 10 %   # metal film\n  vs: 5%\n";
	g_value = 5.0;
	out = save_changed(tol, set_first_tolerance, &rep);
	assert_non_null(strstr(out, "  rs: 5 %   # metal film\n"));
	assert_non_null(strstr(out, "  vs: 5%\n"));
	free(out);
}

/* A value the text did not hold is added in its section, canonical order. */
static void test_insert(void **state)
{
	(void)state;
	/* series_resistance comes after ideality and before temperature */
	static const char text[] =
		"# bench case\n"
		"source:\n"
		"    vs: 24 V\n"
		"    rs: 3.3k\n"
		"device:\n"
		"    model: diode   # the green one\n"
		"    saturation_current: 6.3e-21\n"
		"    ideality: 1.93\n"
		"    temperature: 40\n"
		"\n"
		"notes: |\n"
		"    kept as it is\n";
	g_value = 6.8;
	struct session_save_report rep;
	char *out = save_changed(text, set_series_resistance, &rep);
	static const char want[] =
		"# bench case\n"
		"source:\n"
		"    vs: 24 V\n"
		"    rs: 3.3k\n"
		"device:\n"
		"    model: diode   # the green one\n"
		"    saturation_current: 6.3e-21\n"
		"    ideality: 1.93\n"
		"    series_resistance: 6.8\n"
		"    temperature: 40\n"
		"\n"
		"notes: |\n"
		"    kept as it is\n";
	assert_string_equal(out, want);
	assert_int_equal(rep.inserted, 1);
	free(out);
	/* a section the text lacks is added before notes, with only the change */
	out = save_changed(text, set_method_newton, &rep);
	assert_non_null(strstr(out, "    temperature: 40\nsolver:\n    method: newton\n"
	                            "\nnotes: |\n"));
	assert_null(strstr(out, "step_limit"));
	assert_null(strstr(out, "view:"));
	free(out);
	/* a preset's value changed: the key is added, the preset name stays */
	static const char led[] =
		"source: {vs: 5, rs: 150}\n"
		"device:\n"
		"  model: led\n"
		"  preset: blue\n";
	g_value = 12.5;
	out = save_changed(led, set_series_resistance, &rep);
	assert_non_null(strstr(out, "  preset: blue\n"));
	assert_non_null(strstr(out, "  series_resistance: 12.5\n"));
	assert_non_null(strstr(out, "source: {vs: 5, rs: 150}\n"));
	free(out);
	/* the temperature the text gives under conditions changes there */
	static const char cond[] =
		"source:\n  vs: 5\n  rs: 150\ndevice:\n  model: diode\n"
		"  saturation_current: 1e-14\n  ideality: 1.8\n"
		"conditions:\n  temperature: 40 degC\n";
	g_value = 55.0;
	out = save_changed(cond, set_temperature, &rep);
	assert_non_null(strstr(out, "conditions:\n  temperature: 55 degC\n"));
	assert_null(strstr(out, "  temperature: 55\n"));
	free(out);
}

/* A removed tolerance goes with its line; the comment lines stay. */
static void test_remove(void **state)
{
	(void)state;
	static const char text[] =
		"source:\n  vs: 12\n  rs: 1k\ndevice:\n  model: diode\n"
		"  saturation_current: 2.2e-12\n  ideality: 1.9\n"
		"tolerances:\n  # both from the parts list\n  rs: 1%\n  vs: 10%  # rail\n"
		"notes: keep\n";
	struct session_save_report rep;
	char *out = save_changed(text, drop_last_tolerance, &rep);
	assert_string_equal(out,
		"source:\n  vs: 12\n  rs: 1k\ndevice:\n  model: diode\n"
		"  saturation_current: 2.2e-12\n  ideality: 1.9\n"
		"tolerances:\n  # both from the parts list\n  rs: 1%\n"
		"notes: keep\n");
	assert_int_equal(rep.removed, 1);
	free(out);
}

/*
 * A text that cannot take the change (a key to add to a flow mapping)
 * is saved in canonical form behind its leading comments, and says why.
 */
static void test_fallback(void **state)
{
	(void)state;
	static const char text[] =
		"# my LED case\n# second line\n\n"
		"source: {vs: 12, rs: 1k}\n"
		"device: {model: diode, saturation_current: 2.2e-12, ideality: 1.9}\n"
		"solver: {method: newton}   # inline\n";
	g_value = 1e-9;
	struct session_save_report rep;
	char *out = save_changed(text, set_solver_tolerance, &rep);
	assert_int_equal(rep.how, SESSION_SAVED_CANONICAL);
	assert_non_null(strstr(rep.why, "solver.tolerance"));
	assert_non_null(strstr(out, "\n# my LED case\n# second line\n"));
	assert_null(strstr(out, "# inline"));
	free(out);
	/* no text at all: canonical, and called new */
	struct session s;
	session_demo(&s);
	char *o2;
	size_t len;
	assert_int_equal(session_patch_text(&s, NULL, "x.yaml", &o2, &len, &rep, NULL),
	                 SESSION_OK);
	assert_int_equal(rep.how, SESSION_SAVED_NEW);
	free(o2);
	session_fini(&s);
}

/* A relative points_file saved into another folder cannot stay relative. */
static void test_points_file_elsewhere(void **state)
{
	(void)state;
	char *d = make_temp_dir();
	char csv[1024], yaml[1024], other[1100];
	snprintf(csv, sizeof csv, "%s/bench.csv", d);
	snprintf(yaml, sizeof yaml, "%s/bench.yaml", d);
	write_file(csv, "V,I\n0.55,10u\n0.62,100u\n0.70,1m\n");
	write_file(yaml, "# bench\nsource:\n  vs: 4.87\n  rs: 1.33k  # R3\n"
	           "device:\n  model: measured\n  points_file: bench.csv\n");
	struct session s;
	struct session_text t;
	struct session_error err;
	assert_int_equal(session_load_file_text(&s, yaml, &t, &err), SESSION_OK);
	s.source.rs = 1500.0;
	struct session_save_report rep;
	/* into its own file: patched, points_file kept */
	assert_int_equal(session_save_keeping_text(&s, &t, yaml, &rep, &err),
	                 SESSION_OK);
	assert_int_equal(rep.how, SESSION_SAVED_PATCHED);
	assert_non_null(strstr(t.buf, "  rs: 1.5k  # R3\n"));
	assert_non_null(strstr(t.buf, "points_file: bench.csv"));
	/* into another folder: written whole, the points inline */
	snprintf(other, sizeof other, "%s/sub", d);
	assert_int_equal(mkdir(other, 0700), 0);
	strcat(other, "/copy.yaml");
	assert_int_equal(session_save_keeping_text(&s, &t, other, &rep, &err),
	                 SESSION_OK);
	assert_int_equal(rep.how, SESSION_SAVED_CANONICAL);
	assert_non_null(strstr(rep.why, "bench.csv"));
	struct session back;
	assert_int_equal(session_load_file(&back, other, &err), SESSION_OK);
	assert_true(session_equal(&back, &s));
	session_fini(&back);
	unlink(other);
	other[strlen(other) - strlen("/copy.yaml")] = '\0';
	rmdir(other);
	session_text_fini(&t);
	session_fini(&s);
	remove_dir(d);
	free(d);
}

/* A byte order mark and CRLF line ends survive a change untouched. */
static void test_bom_crlf(void **state)
{
	(void)state;
	static const char text[] =
		"\xef\xbb\xbf# Ω and µ before the keys\r\nsource:\r\n  vs: 12 V\r\n"
		"  rs: 1.5 kΩ\r\ndevice:\r\n  model: diode\r\n"
		"  saturation_current: 2.2e-12\r\n  ideality: 1.9\r\n";
	g_value = 1600.0;
	struct session_save_report rep;
	char *out = save_changed(text, set_rs, &rep);
	static const char want[] =
		"\xef\xbb\xbf# Ω and µ before the keys\r\nsource:\r\n  vs: 12 V\r\n"
		"  rs: 1.6 kΩ\r\ndevice:\r\n  model: diode\r\n"
		"  saturation_current: 2.2e-12\r\n  ideality: 1.9\r\n";
	assert_string_equal(out, want);
	free(out);
}

/* ---- the file that is replaced --------------------------------------- */

/* The owner, group and mode of the replaced file are kept. */
static void test_keeps_owner_and_mode(void **state)
{
	(void)state;
	char *d = make_temp_dir();
	char path[1024], err[512];
	snprintf(path, sizeof path, "%s/owned.yaml", d);
	write_file(path, "old\n");
	assert_int_equal(chmod(path, 0640), 0);
	bool root = geteuid() == 0;
	/* as root the file belongs to someone else, as after a colleague's save */
	if (root)
		assert_int_equal(chown(path, 4321, 8765), 0);
	struct stat before, after;
	assert_int_equal(stat(path, &before), 0);
	assert_int_equal(atomic_write_file(path, "new\n", 4, err, sizeof err), 0);
	assert_int_equal(stat(path, &after), 0);
	assert_int_equal(after.st_uid, before.st_uid);
	assert_int_equal(after.st_gid, before.st_gid);
	assert_int_equal(after.st_mode & 07777, 0640);
	assert_true(after.st_ino != before.st_ino); /* replaced, not rewritten */
	if (root)
		assert_int_equal(after.st_uid, 4321);
	assert_int_equal(count_entries(d), 1);
	remove_dir(d);
	free(d);
	if (!root)
		printf("# not root: owner kept by the same user only\n");
}

/*
 * A read-only file is refused, even by root (no write bit at all), and is
 * left as it was with no temporary file beside it.
 */
static void test_refuses_read_only(void **state)
{
	(void)state;
	char *d = make_temp_dir();
	char path[1024], err[512];
	snprintf(path, sizeof path, "%s/ro.yaml", d);
	write_file(path, "old\n");
	assert_int_equal(chmod(path, 0444), 0);
	assert_int_equal(atomic_write_file(path, "new\n", 4, err, sizeof err), -1);
	assert_non_null(strstr(err, "read-only"));
	char *got = slurp(path);
	assert_string_equal(got, "old\n");
	free(got);
	assert_int_equal(count_entries(d), 1);
	/* the session-level save says it cannot write (73), text unchanged */
	struct session s;
	session_demo(&s);
	struct session_text t;
	session_text_init(&t);
	assert_int_equal(session_text_set(&t, path, "old\n", 4), 0);
	struct session_error se;
	assert_int_equal(session_save_keeping_text(&s, &t, path, NULL, &se),
	                 SESSION_CANT_WRITE);
	assert_non_null(strstr(se.message, "read-only"));
	assert_string_equal(t.buf, "old\n");
	assert_int_equal(count_entries(d), 1);
	session_text_fini(&t);
	session_fini(&s);
	/* writable by its owner only: root may still replace it, keeping it */
	if (geteuid() == 0) {
		assert_int_equal(chmod(path, 0600), 0);
		assert_int_equal(chown(path, 4321, 4321), 0);
		assert_int_equal(atomic_write_file(path, "new\n", 4, err, sizeof err), 0);
		struct stat stt;
		assert_int_equal(stat(path, &stt), 0);
		assert_int_equal(stt.st_uid, 4321);
		assert_int_equal(stt.st_mode & 07777, 0600);
	}
	remove_dir(d);
	free(d);
}

/* Set by the SIGTERM handler: how many files the folder held then. */
static volatile sig_atomic_t g_got_term;
static const char *g_dir;
static int g_entries_at_signal;

/* Record that SIGTERM arrived and what the folder held at that moment. */
static void on_term(int sig)
{
	(void)sig;
	g_got_term = 1;
	g_entries_at_signal = count_entries(g_dir);
}

/* Before the rename: send ourselves SIGTERM; it must wait. */
static int hook_term(void *ctx, const char *tmp)
{
	(void)tmp;
	raise(SIGTERM);
	*(int *)ctx = g_got_term;
	return 0;
}

/* A stop signal during a save waits until the temporary file is gone. */
static void test_signal_waits(void **state)
{
	(void)state;
	char *d = make_temp_dir();
	g_dir = d;
	char path[1024], err[512];
	snprintf(path, sizeof path, "%s/s.yaml", d);
	write_file(path, "old\n");
	struct sigaction sa, old;
	memset(&sa, 0, sizeof sa);
	sa.sa_handler = on_term;
	sigemptyset(&sa.sa_mask);
	assert_int_equal(sigaction(SIGTERM, &sa, &old), 0);
	g_got_term = 0;
	int seen_during = -1;
	struct atomic_hooks h = { .before_rename = hook_term, .ctx = &seen_during };
	assert_int_equal(atomic_write_file_hooked(path, "new\n", 4, &h, err, sizeof err), 0);
	sigaction(SIGTERM, &old, NULL);
	assert_int_equal(seen_during, 0);      /* held while the file was open */
	assert_int_equal(g_got_term, 1);       /* and delivered after */
	assert_int_equal(g_entries_at_signal, 1); /* no temporary file then */
	char *got = slurp(path);
	assert_string_equal(got, "new\n");
	free(got);
	remove_dir(d);
	free(d);
}

/* A points_file that cannot be read is missing input, as the man page says. */
static void test_points_file_unreadable(void **state)
{
	(void)state;
	static const char text[] =
		"source:\n  vs: 4.87\n  rs: 1.33k\n"
		"device:\n  model: measured\n  points_file: /nonexistent/bench.csv\n";
	struct session s;
	struct session_error err;
	assert_int_equal(session_load_buffer(&s, "x.yaml", text, strlen(text), &err),
	                 SESSION_NO_INPUT);
	assert_non_null(strstr(err.message, "cannot open the file"));
	assert_int_equal(err.line, 6);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_spelling),
		cmocka_unit_test(test_insert),
		cmocka_unit_test(test_remove),
		cmocka_unit_test(test_fallback),
		cmocka_unit_test(test_points_file_elsewhere),
		cmocka_unit_test(test_bom_crlf),
		cmocka_unit_test(test_samples),
		cmocka_unit_test(test_generated),
		cmocka_unit_test(test_keeps_owner_and_mode),
		cmocka_unit_test(test_refuses_read_only),
		cmocka_unit_test(test_signal_waits),
		cmocka_unit_test(test_points_file_unreadable),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
