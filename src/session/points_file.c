/*
 * points_file.c - the reader of measured-point tables (see points_file.h):
 * separator detection, the header with its names and units, and values
 * that are numbers or quantities, with every error placed at its file,
 * line and column.
 */
#include <ctype.h>
#include <stdarg.h>
#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <sys/stat.h>
#include <unistd.h>

#include "session/points_file.h"
#include "session/ytree.h"

/* Largest file read: 4096 rows of a few long numbers fit easily. */
#define POINTS_FILE_MAX_BYTES (1u << 20)

/* Most fields on one line. */
#define POINTS_MAX_FIELDS 32

/* One field of a line: where it starts (0-based offset) and its length,
 * both after trimming blanks. */
struct points_field {
	size_t off, len;
};

/* The state of one parse. */
struct points_parser {
	const char *name, *key;
	const struct points_spec *spec;
	struct points_table *t;
	struct session_error *err;
	size_t cap;                        /* rows allocated */
	int field_of[POINTS_MAX_COLUMNS];  /* spec column -> field, -1 absent */
	size_t nfields;                    /* fields a row must have; 0 = any */
	bool header;                       /* a header named the columns */
	char sep;
};

/* The letter of ROLE. */
const char *points_role_letter(enum points_role role)
{
	switch (role) {
	case POINTS_VOLTAGE:
		return "V";
	case POINTS_CURRENT:
		return "I";
	case POINTS_TEMPERATURE:
		return "T";
	case POINTS_RESISTANCE:
		return "R";
	}
	return "?";
}

/* The quantity kind of ROLE. */
enum qty_kind points_role_kind(enum points_role role)
{
	switch (role) {
	case POINTS_VOLTAGE:
		return QTY_VOLTAGE;
	case POINTS_CURRENT:
		return QTY_CURRENT;
	case POINTS_TEMPERATURE:
		return QTY_TEMPERATURE;
	case POINTS_RESISTANCE:
		return QTY_RESISTANCE;
	}
	return QTY_NUMBER;
}

/* Free what T holds. */
void points_table_fini(struct points_table *t)
{
	for (size_t c = 0; c < POINTS_MAX_COLUMNS; c++) {
		free(t->col[c]);
		free(t->column[c]);
	}
	free(t->line);
	memset(t, 0, sizeof *t);
}

/* Names a column of each role may carry in a header (lower case, letters
 * and digits only): the usual symbols and words of data sheets and bench
 * logs. */
static const char *const points_names[][12] = {
	[POINTS_VOLTAGE] = { "v", "u", "voltage", "vf", "vd", "vbe", "veb", "vz",
	                     "vr", "vak", "vgs", NULL },
	[POINTS_CURRENT] = { "i", "current", "if", "id", "ic", "iz", "ir", "ia",
	                     NULL },
	[POINTS_TEMPERATURE] = { "t", "temperature", "temp", "tj", "ta", "tc",
	                         "theta", NULL },
	[POINTS_RESISTANCE] = { "r", "resistance", "rt", "rth", "rntc", NULL },
};

/* The role a header name (N bytes at S) stands for, or -1. */
static int points_name_role(const char *s, size_t n)
{
	char w[32];
	size_t k = 0;
	for (size_t j = 0; j < n && k + 1 < sizeof w; j++)
		if (isalnum((unsigned char)s[j]))
			w[k++] = (char)tolower((unsigned char)s[j]);
	w[k] = '\0';
	for (int r = 0; r < (int)(sizeof points_names / sizeof points_names[0]);
	     r++)
		for (size_t j = 0; points_names[r][j] != NULL; j++)
			if (strcmp(w, points_names[r][j]) == 0)
				return r;
	return -1;
}

/*
 * Turn a unit as people write it in a header into a symbol qty_parse
 * knows: "volts" -> "V", "milliamperes" -> "mA", "kelvin" -> "K",
 * "celsius" -> "degC"; anything else is kept as written.  OUT has N bytes.
 */
static void points_unit_symbol(const char *in, char *out, size_t n)
{
	static const struct {
		const char *word, *sym;
	} prefixes[] = { { "pico", "p" }, { "nano", "n" }, { "micro", "u" },
	                 { "milli", "m" }, { "kilo", "k" }, { "mega", "M" } },
	  units[] = { { "volts", "V" }, { "volt", "V" }, { "amperes", "A" },
	              { "ampere", "A" }, { "amps", "A" }, { "amp", "A" },
	              { "ohms", "ohm" }, { "ohm", "ohm" }, { "kelvin", "K" },
	              { "celsius", "degC" }, { "degreescelsius", "degC" },
	              { "degrees", "degC" }, { "degc", "degC" } };
	char w[32];
	size_t k = 0;
	for (const char *p = in; *p != '\0' && k + 1 < sizeof w; p++)
		if (!isspace((unsigned char)*p))
			w[k++] = (char)tolower((unsigned char)*p);
	w[k] = '\0';
	const char *rest = w, *pre = "";
	for (size_t j = 0; j < sizeof prefixes / sizeof prefixes[0]; j++) {
		size_t l = strlen(prefixes[j].word);
		if (strncmp(w, prefixes[j].word, l) == 0 && w[l] != '\0') {
			pre = prefixes[j].sym;
			rest = w + l;
			break;
		}
	}
	for (size_t j = 0; j < sizeof units / sizeof units[0]; j++)
		if (strcmp(rest, units[j].word) == 0) {
			snprintf(out, n, "%s%s", pre, units[j].sym);
			return;
		}
	snprintf(out, n, "%s", in);
}

/* Fill the parser's error at LINE and COL (1-based; 0 = none). */
static void points_error(struct points_parser *ps, unsigned line, unsigned col,
                         const char *fmt, ...) __attribute__((format(printf, 4, 5)));
static void points_error(struct points_parser *ps, unsigned line, unsigned col,
                         const char *fmt, ...)
{
	char msg[sizeof ps->err->message];
	va_list ap;
	va_start(ap, fmt);
	vsnprintf(msg, sizeof msg, fmt, ap);
	va_end(ap);
	ytree_error_at(ps->err, ps->name, line, col, ps->key, "%s", msg);
}

/* Split the N bytes at S on SEP into at most POINTS_MAX_FIELDS fields;
 * returns the count (POINTS_MAX_FIELDS + 1 when there are more). */
static size_t points_split(const char *s, size_t n, char sep,
                           struct points_field *f)
{
	size_t nf = 0, start = 0;
	for (size_t j = 0; j <= n; j++) {
		if (j < n && s[j] != sep)
			continue;
		if (nf == POINTS_MAX_FIELDS)
			return POINTS_MAX_FIELDS + 1;
		size_t a = start, b = j;
		while (a < b && isspace((unsigned char)s[a]))
			a++;
		while (b > a && isspace((unsigned char)s[b - 1]))
			b--;
		f[nf].off = a;
		f[nf].len = b - a;
		nf++;
		start = j + 1;
	}
	return nf;
}

/* The column heading of spec column C for messages: "column 2 (I)". */
static void points_colname(const struct points_parser *ps, size_t c,
                           char *buf, size_t n)
{
	snprintf(buf, n, "column %d (%s)", ps->field_of[c] + 1,
	         points_role_letter(ps->spec->role[c]));
}

/* "V,I" or "V,I[,T]": the columns of the spec for messages. */
static void points_spec_list(const struct points_spec *spec, char *buf,
                             size_t n)
{
	size_t o = 0;
	for (size_t c = 0; c < spec->ncols && o < n; c++)
		o += (size_t)snprintf(buf + o, n - o, "%s%s%s%s",
		                      spec->optional[c] ? "[" : "", c ? "," : "",
		                      points_role_letter(spec->role[c]),
		                      spec->optional[c] ? "]" : "");
}

/* Read the header line S (N bytes, fields F[0..NF)) at LINE. */
static int points_header(struct points_parser *ps, const char *s,
                         const struct points_field *f, size_t nf,
                         unsigned line)
{
	const struct points_spec *spec = ps->spec;
	int role_of[POINTS_MAX_FIELDS];
	size_t known = 0;
	for (size_t j = 0; j < nf; j++) {
		/* the name is what comes before "(" or "[" */
		size_t nl = 0;
		while (nl < f[j].len && s[f[j].off + nl] != '(' &&
		       s[f[j].off + nl] != '[')
			nl++;
		role_of[j] = points_name_role(s + f[j].off, nl);
		if (role_of[j] >= 0)
			known++;
	}
	for (size_t c = 0; c < spec->ncols; c++)
		ps->field_of[c] = -1;
	if (known == 0) {
		/* names we do not know: the columns in the spec's order */
		if (nf > spec->ncols)
			nf = spec->ncols;
		for (size_t c = 0; c < nf; c++)
			ps->field_of[c] = (int)c;
	} else {
		for (size_t c = 0; c < spec->ncols; c++)
			for (size_t j = 0; j < nf; j++) {
				if (role_of[j] != (int)spec->role[c])
					continue;
				if (ps->field_of[c] >= 0) {
					points_error(ps, line, (unsigned)f[j].off + 1,
					             "the header names %s in columns %d and "
					             "%zu, expected one",
					             points_role_letter(spec->role[c]),
					             ps->field_of[c] + 1, j + 1);
					return -1;
				}
				ps->field_of[c] = (int)j;
			}
	}
	char list[48];
	points_spec_list(spec, list, sizeof list);
	for (size_t c = 0; c < spec->ncols; c++) {
		if (ps->field_of[c] < 0) {
			if (spec->optional[c])
				continue;
			points_error(ps, line, 1,
			             "the header has no %s column, expected columns %s "
			             "(named like V, I, T, R or voltage, current, "
			             "temperature, resistance)",
			             qty_noun(points_role_kind(spec->role[c])) + 2, list);
			return -1;
		}
		ps->t->present[c] = true;
		const struct points_field *fj = &f[ps->field_of[c]];
		const char *h = s + fj->off;
		const char *open = memchr(h, '(', fj->len);
		if (open == NULL)
			open = memchr(h, '[', fj->len);
		if (open == NULL)
			continue;
		char close = *open == '(' ? ')' : ']';
		const char *end = memchr(open, close, fj->len - (size_t)(open - h));
		unsigned col = (unsigned)(open - s) + 2;
		char raw[32];
		size_t ul = end != NULL ? (size_t)(end - open - 1) : 0;
		if (end == NULL || ul == 0 || ul >= sizeof raw) {
			points_error(ps, line, col - 1,
			             "%s: expected a unit in %s, like \"I (mA)\"",
			             points_role_letter(spec->role[c]),
			             close == ')' ? "()" : "[]");
			return -1;
		}
		memcpy(raw, open + 1, ul);
		raw[ul] = '\0';
		char sym[sizeof raw], probe[48], why[160];
		double x;
		points_unit_symbol(raw, sym, sizeof sym);
		snprintf(probe, sizeof probe, "1 %s", sym);
		enum qty_kind kind = points_role_kind(spec->role[c]);
		if (qty_parse(probe, kind, &x, why, sizeof why) != QTY_OK) {
			points_error(ps, line, col,
			             "column %d (%s): the header gives the unit \"%s\", "
			             "expected a unit of %s (%s with an SI prefix, like "
			             "\"m%s\")", ps->field_of[c] + 1,
			             points_role_letter(spec->role[c]), raw,
			             qty_noun(kind) + 2, qty_unit_ascii(kind),
			             qty_unit_ascii(kind));
			return -1;
		}
		snprintf(ps->t->unit[c], sizeof ps->t->unit[c], "%s", sym);
		/* under a plain unit (V, A, ohm, degC) a value may still carry
		 * its own prefix and unit: "10.7u" under "I (A)" is clear */
		ps->t->base_unit[c] = x == 1.0;
	}
	ps->nfields = nf;
	ps->header = true;
	return 0;
}

/* Grow the table to hold one more row; 0 or -1 (out of memory). */
static int points_grow(struct points_parser *ps)
{
	struct points_table *t = ps->t;
	if (t->n < ps->cap)
		return 0;
	size_t cap = ps->cap ? 2 * ps->cap : 64;
	unsigned *ln = realloc(t->line, cap * sizeof *ln);
	if (ln == NULL)
		return -1;
	t->line = ln;
	for (size_t c = 0; c < ps->spec->ncols; c++) {
		if (!t->present[c])
			continue;
		double *v = realloc(t->col[c], cap * sizeof *v);
		if (v == NULL)
			return -1;
		t->col[c] = v;
		unsigned *cl = realloc(t->column[c], cap * sizeof *cl);
		if (cl == NULL)
			return -1;
		t->column[c] = cl;
	}
	ps->cap = cap;
	return 0;
}

/* True when the N bytes at S look like a number written with a decimal
 * comma ("2,72"). */
static bool points_decimal_comma(const char *s, size_t n)
{
	size_t j = 0, digits = 0;
	if (j < n && (s[j] == '-' || s[j] == '+'))
		j++;
	while (j < n && isdigit((unsigned char)s[j]))
		j++, digits++;
	if (j >= n || s[j] != ',' || digits == 0)
		return false;
	j++;
	size_t after = 0;
	while (j < n && isdigit((unsigned char)s[j]))
		j++, after++;
	return after > 0;
}

/* Parse the field S (N bytes) of spec column C into *OUT; 0, or -1 with
 * the reason in WHY. */
static int points_value(const struct points_parser *ps, size_t c,
                        const char *s, size_t n, double *out, char *why,
                        size_t whylen)
{
	enum qty_kind kind = points_role_kind(ps->spec->role[c]);
	const char *unit = ps->t->unit[c];
	char field[64], text[96], msg[160] = "";
	if (n == 0 || n >= sizeof field) {
		snprintf(why, whylen, "found %s, expected %s",
		         n == 0 ? "nothing" : "a field of over 63 characters",
		         qty_noun(kind));
		return -1;
	}
	memcpy(field, s, n);
	field[n] = '\0';
	if (ps->sep != ',' && points_decimal_comma(field, n)) {
		snprintf(why, whylen, "found \"%s\": a decimal comma; write the "
		         "number with a point (%.*s.%s)", field,
		         (int)strcspn(field, ","), field,
		         field + strcspn(field, ",") + 1);
		return -1;
	}
	double x;
	if (unit[0] != '\0' &&
	    qty_parse(field, QTY_NUMBER, &x, NULL, 0) == QTY_OK) {
		snprintf(text, sizeof text, "%s %s", field, unit);
	} else if (unit[0] != '\0' && !ps->t->base_unit[c]) {
		/* "20m" under "I (mA)": milli of what?  Say so, do not guess. */
		snprintf(why, whylen, "found \"%s\", expected a plain number: "
		         "the header gives the unit %s", field, unit);
		return -1;
	} else {
		snprintf(text, sizeof text, "%s", field);
	}
	if (qty_parse(text, kind, out, msg, sizeof msg) != QTY_OK ||
	    !isfinite(*out)) {
		if (msg[0] != '\0')
			snprintf(why, whylen, "%s", msg);
		else
			snprintf(why, whylen, "found \"%s\", expected a finite %s",
			         field, qty_noun(kind) + 2);
		return -1;
	}
	return 0;
}

/* Read one data line S (fields F[0..NF)) at LINE as the next row. */
static int points_row(struct points_parser *ps, const char *s,
                      const struct points_field *f, size_t nf, unsigned line)
{
	const struct points_spec *spec = ps->spec;
	struct points_table *t = ps->t;
	size_t row = t->n + 1;
	if (!ps->header) {
		/* no header: the columns in the spec's order; the first row
		 * decides which optional ones are there */
		size_t nreq = 0;
		while (nreq < spec->ncols && !spec->optional[nreq])
			nreq++;
		if (nf < nreq || nf > spec->ncols) {
			static const char *const words[] = { "no", "one", "two", "three",
			                                     "four" };
			char list[48];
			points_spec_list(spec, list, sizeof list);
			if (nreq == spec->ncols)
				points_error(ps, line, 1, "row %zu: expected %s columns %s, "
				             "found %zu", row, words[nreq], list,
				             nf > POINTS_MAX_FIELDS ? (size_t)POINTS_MAX_FIELDS
				                                    : nf);
			else
				points_error(ps, line, 1, "row %zu: expected %s to %s columns "
				             "%s, found %zu", row, words[nreq],
				             words[spec->ncols], list,
				             nf > POINTS_MAX_FIELDS ? (size_t)POINTS_MAX_FIELDS
				                                    : nf);
			return -1;
		}
		if (ps->nfields == 0) {
			for (size_t c = 0; c < spec->ncols; c++) {
				ps->field_of[c] = c < nf ? (int)c : -1;
				t->present[c] = c < nf;
			}
			ps->nfields = nf;
		}
	}
	if (nf != ps->nfields) {
		points_error(ps, line, 1, "row %zu: found %zu field%s, expected %zu "
		             "as in %s", row, nf > POINTS_MAX_FIELDS
		                                  ? (size_t)POINTS_MAX_FIELDS : nf,
		             nf == 1 ? "" : "s", ps->nfields,
		             ps->header ? "the header" : "the first row");
		return -1;
	}
	if (t->n >= spec->max_rows) {
		points_error(ps, line, 1, "found more than %zu points, expected at "
		             "most %zu", spec->max_rows, spec->max_rows);
		return -1;
	}
	if (points_grow(ps) != 0) {
		points_error(ps, line, 1, "out of memory");
		return -1;
	}
	for (size_t c = 0; c < spec->ncols; c++) {
		if (!t->present[c])
			continue;
		const struct points_field *fj = &f[ps->field_of[c]];
		char why[256], cn[48];
		unsigned col = (unsigned)fj->off + 1;
		if (points_value(ps, c, s + fj->off, fj->len, &t->col[c][t->n], why,
		                 sizeof why) != 0) {
			points_colname(ps, c, cn, sizeof cn);
			points_error(ps, line, col, "row %zu, %s: %s", row, cn, why);
			return -1;
		}
		t->column[c][t->n] = col;
	}
	t->line[t->n++] = line;
	return 0;
}

/* Parse a table from memory (see points_file.h). */
int points_parse(const char *name, const char *key, const char *text,
                 size_t len, const struct points_spec *spec,
                 struct points_table *t, struct session_error *err)
{
	memset(t, 0, sizeof *t);
	memset(err, 0, sizeof *err);
	struct points_parser ps = { .name = name, .key = key, .spec = spec,
	                            .t = t, .err = err };
	bool header_ok = true;
	unsigned line = 0;
	size_t pos = 0;
	while (pos < len) {
		const char *s = text + pos;
		const char *nl = memchr(s, '\n', len - pos);
		size_t ll = nl != NULL ? (size_t)(nl - s) : len - pos;
		pos += ll + (nl != NULL);
		line++;
		if (memchr(s, '\0', ll) != NULL) {
			points_error(&ps, line, 1, "found a NUL byte, expected text");
			goto fail;
		}
		const char *hash = memchr(s, '#', ll);
		if (hash != NULL)
			ll = (size_t)(hash - s);
		size_t b = 0;
		while (b < ll && isspace((unsigned char)s[b]))
			b++;
		if (b == ll)
			continue;
		if (ps.sep == 0) {
			ps.sep = memchr(s, '\t', ll) ? '\t'
			         : memchr(s, ';', ll) ? ';' : ',';
		}
		struct points_field f[POINTS_MAX_FIELDS];
		size_t nf = points_split(s, ll, ps.sep, f);
		char c0 = s[f[0].off];
		bool numeric = f[0].len > 0 && (isdigit((unsigned char)c0) ||
		                                c0 == '-' || c0 == '+' || c0 == '.');
		if (header_ok && !numeric) {
			header_ok = false;
			if (nf > POINTS_MAX_FIELDS) {
				points_error(&ps, line, 1, "the header has more than %d "
				             "columns", POINTS_MAX_FIELDS);
				goto fail;
			}
			if (points_header(&ps, s, f, nf, line) != 0)
				goto fail;
			continue;
		}
		header_ok = false;
		if (points_row(&ps, s, f, nf, line) != 0)
			goto fail;
	}
	return 0;
fail:
	points_table_fini(t);
	return -1;
}

/*
 * Read the regular file PATH (at most POINTS_FILE_MAX_BYTES) into a new
 * buffer with its length in *LEN, or NULL with the reason in WHY.
 */
static char *points_slurp(const char *path, size_t *len, char *why, size_t n)
{
	/* non-blocking open: a FIFO without a writer must not hang us */
	int fd = open(path, O_RDONLY | O_NOCTTY | O_NONBLOCK);
	if (fd < 0) {
		snprintf(why, n, "cannot open the file: %s", strerror(errno));
		return NULL;
	}
	struct stat st;
	if (fstat(fd, &st) != 0) {
		snprintf(why, n, "cannot read the file: %s", strerror(errno));
		close(fd);
		return NULL;
	}
	if (!S_ISREG(st.st_mode) ||
	    (unsigned long long)st.st_size > POINTS_FILE_MAX_BYTES) {
		snprintf(why, n, "cannot read the file: %s",
		         !S_ISREG(st.st_mode) ? "not a regular file"
		                              : "larger than 1 MiB");
		close(fd);
		return NULL;
	}
	size_t cap = (size_t)st.st_size + 1;
	char *buf = malloc(cap);
	if (buf == NULL) {
		close(fd);
		snprintf(why, n, "out of memory");
		return NULL;
	}
	size_t got = 0;
	for (;;) {
		ssize_t r = read(fd, buf + got, cap - got);
		if (r < 0 && errno == EINTR)
			continue;
		if (r < 0) {
			snprintf(why, n, "cannot read the file: %s", strerror(errno));
			close(fd);
			free(buf);
			return NULL;
		}
		if (r == 0)
			break;
		got += (size_t)r;
		if (got == cap) {
			snprintf(why, n, "cannot read the file: it changed size while "
			         "being read");
			close(fd);
			free(buf);
			return NULL;
		}
	}
	close(fd);
	buf[got] = '\0';   /* not needed by the parser; kept for safety */
	*len = got;
	return buf;
}

/* Read and parse a points file (see points_file.h). */
enum session_status points_file_read(const char *path, const char *key,
                                     const struct points_spec *spec,
                                     struct points_table *t,
                                     struct session_error *err)
{
	char why[256];
	size_t len = 0;
	memset(t, 0, sizeof *t);
	char *text = points_slurp(path, &len, why, sizeof why);
	if (text == NULL) {
		ytree_error_at(err, path, 0, 0, key, "%s", why);
		return SESSION_NO_INPUT;
	}
	int rc = points_parse(path, key, text, len, spec, t, err);
	free(text);
	return rc == 0 ? SESSION_OK : SESSION_BAD_DATA;
}
