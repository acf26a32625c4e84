/*
 * session_text.c - save a session into the text it came from (see
 * session_text.h for what is kept).
 *
 * How: the kept text is loaded again (session A) and parsed into a tree U
 * that knows every node's byte offsets (ytree.h).  A and the session to
 * save (B) are both written in canonical form and parsed, giving trees TA
 * and TB with the same shape wherever the sessions agree, so walking TA
 * and TB side by side finds exactly what changed, by key path.  Each
 * change is then made at the same key path in U as an edit of U's text:
 * a scalar replaced where it stands, an entry inserted after its nearest
 * canonical predecessor, an entry's lines removed.  The edits are applied
 * in one pass, the result is loaded again and must equal B bit for bit;
 * anything else falls back to the canonical form and says why.
 */
#include "session/session_text.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "core/quantity.h"
#include "core/thermal.h"
#include "session/atomic.h"
#include "session/ytree.h"

/* ---- small helpers ----------------------------------------------------- */

/* A growing text. */
struct stext {
	char *buf;
	size_t len, cap;
	bool failed;             /* out of memory: the text is incomplete */
};

/* Append N bytes of DATA to O. */
static void stext_put(struct stext *o, const char *data, size_t n)
{
	if (o->failed)
		return;
	if (o->len + n + 1 > o->cap) {
		size_t cap = o->cap ? o->cap : 256;
		while (o->len + n + 1 > cap)
			cap *= 2;
		char *b = realloc(o->buf, cap);
		if (b == NULL) {
			o->failed = true;
			return;
		}
		o->buf = b;
		o->cap = cap;
	}
	memcpy(o->buf + o->len, data, n);
	o->len += n;
	o->buf[o->len] = '\0';
}

/* Append the string S to O. */
static void stext_puts(struct stext *o, const char *s)
{
	stext_put(o, s, strlen(s));
}

/* Append N blanks to O. */
static void stext_spaces(struct stext *o, size_t n)
{
	for (size_t k = 0; k < n; k++)
		stext_put(o, " ", 1);
}

/* A copy of S (NULL when out of memory). */
static char *stext_dup(const char *s)
{
	size_t n = strlen(s) + 1;
	char *d = malloc(n);
	if (d != NULL)
		memcpy(d, s, n);
	return d;
}

/* True when doubles X and Y have the same bits. */
static bool stext_same(double x, double y)
{
	return memcmp(&x, &y, sizeof x) == 0;
}

/* ---- the text kept beside a session ------------------------------------ */

/* An empty text. */
void session_text_init(struct session_text *t)
{
	t->name = NULL;
	t->buf = NULL;
	t->len = 0;
}

/* Free what T owns. */
void session_text_fini(struct session_text *t)
{
	free(t->name);
	free(t->buf);
	session_text_init(t);
}

/* Make T a copy of BUF. */
int session_text_set(struct session_text *t, const char *name, const char *buf,
                     size_t len)
{
	char *n = name != NULL ? stext_dup(name) : NULL;
	char *b = malloc(len + 1);
	if (b == NULL || (name != NULL && n == NULL)) {
		free(n);
		free(b);
		session_text_fini(t);
		return -1;
	}
	memcpy(b, buf, len);
	b[len] = '\0';
	session_text_fini(t);
	t->name = n;
	t->buf = b;
	t->len = len;
	return 0;
}

/* Load PATH and keep its bytes. */
enum session_status session_load_file_text(struct session *s, const char *path,
                                           struct session_text *text,
                                           struct session_error *err)
{
	struct session_error scratch;
	if (err == NULL)
		err = &scratch;
	memset(err, 0, sizeof *err);
	session_text_init(text);
	session_init(s);
	char *buf;
	size_t len;
	enum session_status r = session_read_file(path, &buf, &len, err);
	if (r != SESSION_OK)
		return r;
	r = session_load_buffer(s, path, buf, len, err);
	if (r != SESSION_OK) {
		free(buf);
		return r;
	}
	text->name = stext_dup(path);
	if (text->name == NULL) {
		free(buf);
		session_fini(s);
		ytree_error_at(err, path, 0, 0, "", "out of memory");
		return SESSION_IO_ERROR;
	}
	text->buf = buf;
	text->len = len;
	return SESSION_OK;
}

/* Whether PATH still holds TEXT's bytes. */
int session_text_matches_file(const struct session_text *text, const char *path)
{
	char *buf;
	size_t len;
	struct session_error err;
	if (session_read_file(path, &buf, &len, &err) != SESSION_OK)
		return -1;
	int same = text->buf != NULL && len == text->len &&
	           memcmp(buf, text->buf, len) == 0;
	free(buf);
	return same;
}

/* ---- values in the user's style ---------------------------------------- */

/* SI prefixes as quantity.h reads them, and the spelling we write. */
static const struct {
	const char *text;
	int exp10;
} stext_prefixes[] = {
	{ "f", -15 }, { "p", -12 }, { "n", -9 }, { "u", -6 },
	{ "\xc2\xb5", -6 }, { "\xce\xbc", -6 },
	{ "m", -3 }, { "k", 3 }, { "M", 6 }, { "G", 9 }, { "T", 12 },
};

/* Unit symbols as quantity.h reads them. */
static const char *const stext_units[] = {
	"V", "A", "\xce\xa9", "\xe2\x84\xa6", "ohm", "ohms", "R", "S", "W",
	"\xc2\xb0" "C", "\xe2\x84\x83", "degC", "C", "K", "eV", "W/K", "%",
};

/* The way a number was written: what a new value copies. */
struct stext_style {
	bool plus;               /* an explicit '+' */
	bool expo;               /* an exponent: 1.5e3 */
	char e;                  /* 'e' or 'E' */
	bool eplus;              /* "e+3" rather than "e3" */
	bool infix;              /* "4k7" / "4R7": the prefix or R as the point */
	bool infix_r;            /* ... with R */
	bool has_prefix;
	int prefix_exp;
	char prefix[4];          /* as written: "k", "µ" */
	char sep[8];             /* the blanks between number and suffix */
	char unit[8];            /* the unit symbol as written, or "" */
	double mantissa;         /* the number as written, before the prefix */
};

/* Length of a blank at S (quantity.h's blanks), 0 if none. */
static size_t stext_blank(const char *s)
{
	if (*s == ' ' || *s == '\t')
		return 1;
	if (strncmp(s, "\xc2\xa0", 2) == 0)
		return 2;
	if (strncmp(s, "\xe2\x80\x89", 3) == 0 || strncmp(s, "\xe2\x80\xaf", 3) == 0)
		return 3;
	return 0;
}

/* True when S is exactly one of the unit symbols. */
static bool stext_is_unit(const char *s)
{
	for (size_t k = 0; k < sizeof stext_units / sizeof stext_units[0]; k++)
		if (strcmp(s, stext_units[k]) == 0)
			return true;
	return false;
}

/* The prefix that starts S, or -1. */
static int stext_prefix_at(const char *s)
{
	for (size_t k = 0; k < sizeof stext_prefixes / sizeof stext_prefixes[0]; k++)
		if (strncmp(s, stext_prefixes[k].text, strlen(stext_prefixes[k].text)) == 0)
			return (int)k;
	return -1;
}

/* True when C is an ASCII digit. */
static bool stext_digit(char c)
{
	return c >= '0' && c <= '9';
}

/*
 * Read how the number TEXT is written into ST (the grammar of
 * quantity.h's qty_parse).  Returns 0, or -1 when TEXT is not a number in
 * a form we can copy.
 */
static int stext_style_of(const char *text, struct stext_style *st)
{
	memset(st, 0, sizeof *st);
	const char *p = text;
	char num[64];
	size_t nn = 0;
	if (*p == '+' || *p == '-') {
		st->plus = *p == '+';
		num[nn++] = *p;
		p++;
	}
	const char *ip = p;
	while (stext_digit(*p) && nn + 2 < sizeof num)
		num[nn++] = *p++;
	size_t in = (size_t)(p - ip);
	if (in > 0 && !stext_digit(*p)) {
		int k = stext_prefix_at(p);
		size_t pl = k >= 0 ? strlen(stext_prefixes[k].text) : (*p == 'R');
		if (pl > 0 && stext_digit(p[pl])) {
			st->infix = true;
			st->infix_r = k < 0;
			if (k >= 0) {
				st->has_prefix = true;
				st->prefix_exp = stext_prefixes[k].exp10;
				snprintf(st->prefix, sizeof st->prefix, "%s",
				         stext_prefixes[k].text);
			} else {
				snprintf(st->unit, sizeof st->unit, "R");
			}
			p += pl;
			num[nn++] = '.';
			while (stext_digit(*p) && nn + 2 < sizeof num)
				num[nn++] = *p++;
		}
	}
	if (!st->infix && *p == '.') {
		num[nn++] = *p++;
		while (stext_digit(*p) && nn + 2 < sizeof num)
			num[nn++] = *p++;
	}
	if (nn == 0 || (nn == 1 && (num[0] == '+' || num[0] == '-' || num[0] == '.')))
		return -1;
	if (!st->infix && (*p == 'e' || *p == 'E') && strcmp(p, "eV") != 0) {
		st->expo = true;
		st->e = *p;
		num[nn++] = *p++;
		if (*p == '+' || *p == '-') {
			st->eplus = *p == '+';
			num[nn++] = *p++;
		}
		if (!stext_digit(*p))
			return -1;
		while (stext_digit(*p) && nn + 2 < sizeof num)
			num[nn++] = *p++;
	}
	if (stext_digit(*p) || *p == '.' || nn + 2 >= sizeof num)
		return -1;
	num[nn] = '\0';
	if (qty_parse(num, QTY_NUMBER, &st->mantissa, NULL, 0) != QTY_OK)
		return -1;
	size_t sl = 0;
	for (size_t b; (b = stext_blank(p)) > 0; p += b)
		if (sl + b < sizeof st->sep) {
			memcpy(st->sep + sl, p, b);
			sl += b;
		}
	st->sep[sl] = '\0';
	if (*p == '\0')
		return 0;
	if (st->infix_r)
		return -1;
	if (!stext_is_unit(p)) {
		if (st->has_prefix)
			return -1;
		int k = stext_prefix_at(p);
		if (k < 0)
			return -1;
		st->has_prefix = true;
		st->prefix_exp = stext_prefixes[k].exp10;
		snprintf(st->prefix, sizeof st->prefix, "%s", stext_prefixes[k].text);
		p += strlen(stext_prefixes[k].text);
		if (*p != '\0' && !stext_is_unit(p))
			return -1;
	}
	if (strlen(p) >= sizeof st->unit)
		return -1;
	snprintf(st->unit, sizeof st->unit, "%s", p);
	return 0;
}

/*
 * The decimal digits of V rounded to SIG significant digits: DIGITS
 * without a point or trailing zeros, and X, the power of ten of the first
 * digit (V = 0.d1d2... * 10^(X+1)).  NEG when V < 0.
 */
static void stext_digits(double v, int sig, char *digits, size_t n, int *x,
                         bool *neg)
{
	char buf[48];
	snprintf(buf, sizeof buf, "%.*e", sig - 1, fabs(v));
	*neg = v < 0.0;
	size_t k = 0;
	const char *p = buf;
	for (; *p != '\0' && *p != 'e' && k + 1 < n; p++)
		if (stext_digit(*p))
			digits[k++] = *p;
	digits[k] = '\0';
	while (k > 1 && digits[k - 1] == '0')
		digits[--k] = '\0';
	*x = *p == 'e' ? atoi(p + 1) : 0;
}

/*
 * Write DIGITS with first-digit power X as a plain decimal into O
 * ("1600", "1.6", "0.0016").  With INFIX the point is written as INFIX
 * (and left out, with nothing after it, for a whole number).
 */
static void stext_fixed(struct stext *o, const char *digits, int x,
                        const char *infix)
{
	int nd = (int)strlen(digits);
	if (x < 0) {
		if (infix != NULL) {
			stext_puts(o, "0");
			stext_puts(o, infix);
		} else {
			stext_puts(o, "0.");
		}
		for (int k = 0; k < -x - 1; k++)
			stext_put(o, "0", 1);
		stext_puts(o, digits);
		return;
	}
	for (int k = 0; k <= x; k++)
		stext_put(o, k < nd ? &digits[k] : "0", 1);
	if (nd > x + 1) {
		stext_puts(o, infix != NULL ? infix : ".");
		stext_puts(o, digits + x + 1);
	} else if (infix != NULL) {
		stext_puts(o, infix);
	}
}

/* The prefix we write for the power EXP (a multiple of 3 in -15..12). */
static const char *stext_prefix_text(int exp, const struct stext_style *st)
{
	if (st->has_prefix && exp == st->prefix_exp)
		return st->prefix;
	for (size_t k = 0; k < sizeof stext_prefixes / sizeof stext_prefixes[0]; k++)
		if (stext_prefixes[k].exp10 == exp)
			return stext_prefixes[k].text;
	return "";
}

/*
 * Spell V in style ST with SIG significant digits into O: the number of
 * TARGET's digits (V itself, or V in kelvin), shifted by the prefix.
 */
static void stext_spell(struct stext *o, double target, int sig,
                        const struct stext_style *st, bool engineering)
{
	char digits[32];
	int x;
	bool neg;
	stext_digits(target, sig, digits, sizeof digits, &x, &neg);
	int p = st->has_prefix ? st->prefix_exp : 0;
	if (st->has_prefix && engineering) {
		p = x >= 0 ? x / 3 * 3 : -((-x + 2) / 3 * 3);
		if (p < -15)
			p = -15;
		if (p > 12)
			p = 12;
	}
	if (target == 0.0)
		p = 0;
	if (neg)
		stext_put(o, "-", 1);
	else if (st->plus)
		stext_put(o, "+", 1);
	const char *pre = p != 0 ? stext_prefix_text(p, st) : "";
	if (st->expo) {
		int e = x - p;
		stext_put(o, digits, 1);
		if (digits[1] != '\0') {
			stext_put(o, ".", 1);
			stext_puts(o, digits + 1);
		}
		char eb[16];
		snprintf(eb, sizeof eb, "%c%s%d", st->e, e >= 0 && st->eplus ? "+" : "",
		         e);
		stext_puts(o, eb);
	} else if (st->infix && (p != 0 || st->infix_r)) {
		stext_fixed(o, digits, x - p, p != 0 ? pre : "R");
		if (!st->infix_r && st->unit[0] != '\0') {
			stext_puts(o, st->sep);
			stext_puts(o, st->unit);
		}
		return;
	} else {
		stext_fixed(o, digits, x - p, NULL);
	}
	if (pre[0] != '\0' || st->unit[0] != '\0')
		stext_puts(o, st->sep);
	stext_puts(o, pre);
	stext_puts(o, st->unit);
}

/* True when TEXT reads as V for every kind in KINDS (N of them). */
static bool stext_reads_as(const char *text, double v, const enum qty_kind *kinds,
                           size_t n)
{
	for (size_t k = 0; k < n; k++) {
		double x;
		if (qty_parse(text, kinds[k], &x, NULL, 0) != QTY_OK ||
		    !stext_same(x, v))
			return false;
	}
	return n > 0;
}

/*
 * The new value NEW_TEXT (a canonical number, or "N%" for a tolerance)
 * written in the style of OLD_TEXT, the user's spelling of the old value
 * OLD_CANON (canonical; NULL when the file held a value canonical form
 * leaves out).  Returns a new string, or NULL when OLD_TEXT has no style
 * to copy or no spelling in it reads back exactly (the caller then writes
 * NEW_TEXT).
 */
static char *stext_restyle(const char *old_text, const char *old_canon,
                           const char *new_text)
{
	char nb[64], ob[64], ub[64];
	size_t nl = strlen(new_text);
	bool pct = nl > 1 && new_text[nl - 1] == '%';
	if (nl >= sizeof nb)
		return NULL;
	memcpy(nb, new_text, nl + 1);
	if (pct)
		nb[nl - 1] = '\0';
	double bv;
	if (qty_parse(nb, QTY_NUMBER, &bv, NULL, 0) != QTY_OK)
		return NULL;
	struct stext_style st;
	if (stext_style_of(old_text, &st) != 0)
		return NULL;
	enum qty_kind kinds[QTY_KIND_COUNT];
	size_t nk = 0;
	if (pct) {
		/* a tolerance: "10 %" is the number 10 with the sign after it */
		if (strcmp(st.unit, "%") != 0 || st.has_prefix || st.infix)
			return NULL;
		st.unit[0] = '\0';
		kinds[nk++] = QTY_NUMBER;
	} else {
		double ov = NAN;
		if (old_canon != NULL) {
			size_t ol = strlen(old_canon);
			if (ol >= sizeof ob)
				return NULL;
			memcpy(ob, old_canon, ol + 1);
			if (qty_parse(ob, QTY_NUMBER, &ov, NULL, 0) != QTY_OK)
				return NULL;
		}
		for (int k = 0; k < QTY_KIND_COUNT; k++) {
			double x;
			if (qty_parse(old_text, (enum qty_kind)k, &x, NULL, 0) == QTY_OK &&
			    (old_canon == NULL || stext_same(x, ov)))
				kinds[nk++] = (enum qty_kind)k;
		}
		if (nk == 0)
			return NULL;
	}
	bool kelvin = strcmp(st.unit, "K") == 0;
	double target = kelvin ? bv + 273.15 : bv;
	/* an engineer's "1.5k" moves to "820"; a "0.5k" keeps its k */
	double m = fabs(st.mantissa);
	bool engineering = st.has_prefix && !st.expo && m >= 1.0 && m < 1000.0;
	for (int pass = 0; pass < 2; pass++) {
		struct stext_style use = st;
		if (pass == 1) {
			/* no prefix: the exact number with the unit */
			use.has_prefix = false;
			use.infix = false;
			engineering = false;
			if (use.infix_r)
				return NULL;
		}
		for (int sig = 1; sig <= 17; sig++) {
			struct stext o = { 0 };
			stext_spell(&o, target, sig, &use, engineering);
			if (o.failed) {
				free(o.buf);
				return NULL;
			}
			bool ok;
			if (pct) {
				ok = stext_reads_as(o.buf, bv, kinds, nk);
				if (ok) {
					snprintf(ub, sizeof ub, "%s%s%%", o.buf, st.sep);
					free(o.buf);
					return stext_dup(ub);
				}
			} else {
				ok = stext_reads_as(o.buf, bv, kinds, nk);
			}
			if (ok)
				return o.buf;
			free(o.buf);
		}
	}
	return NULL;
}

/* ---- edits of the user's text ------------------------------------------ */

/* Replace the bytes [OFF, END) of the text with TEXT (END == OFF: insert). */
struct stext_edit {
	size_t off, end;
	char *text;
	size_t seq;              /* order of making: keeps inserts in order */
};

/* State of one patch. */
struct stext_ctx {
	const char *buf;         /* the user's text */
	size_t len;
	const struct ynode *uroot;
	struct stext_edit *edits;
	size_t nedits, cap;
	size_t changed, inserted, removed;
	int step;                /* the file's indentation step */
	char why[384];           /* why the text cannot be patched */
	bool nomem;
	/* the device key conditions.temperature stands for in the session
	 * read from the text (A) and in the one saved (B): "temperature", or
	 * "ambient_temperature" for a device that heats itself */
	const char *cond_a, *cond_b;
	bool cond_done;          /* conditions.temperature has been rewritten */
	const struct ynode *ta_root; /* A's canonical tree */
};

/* Record why the text cannot be patched (the first reason wins); -1. */
__attribute__((format(printf, 2, 3)))
static int stext_fail(struct stext_ctx *c, const char *fmt, ...)
{
	if (c->why[0] == '\0') {
		va_list ap;
		va_start(ap, fmt);
		vsnprintf(c->why, sizeof c->why, fmt, ap);
		va_end(ap);
	}
	return -1;
}

/* Add an edit (TEXT is taken over, freed on failure). */
static int stext_edit(struct stext_ctx *c, size_t off, size_t end, char *text)
{
	if (text == NULL) {
		c->nomem = true;
		return stext_fail(c, "out of memory");
	}
	if (c->nedits == c->cap) {
		size_t cap = c->cap ? 2 * c->cap : 16;
		struct stext_edit *e = realloc(c->edits, cap * sizeof *e);
		if (e == NULL) {
			free(text);
			c->nomem = true;
			return stext_fail(c, "out of memory");
		}
		c->edits = e;
		c->cap = cap;
	}
	c->edits[c->nedits] = (struct stext_edit){ off, end, text, c->nedits };
	c->nedits++;
	return 0;
}

/* True when canonical nodes A and B are the same. */
static bool stext_equal(const struct ynode *a, const struct ynode *b)
{
	if (a == NULL || b == NULL)
		return a == b;
	if (a->type != b->type)
		return false;
	if (a->type == YNODE_SCALAR)
		return a->plain == b->plain && strcmp(a->text, b->text) == 0;
	if (a->nkids != b->nkids)
		return false;
	for (size_t k = 0; k < a->nkids; k++)
		if (!stext_equal(a->kids[k], b->kids[k]))
			return false;
	return true;
}

/* The index of KEY's key node in mapping MAP, or -1. */
static long stext_find(const struct ynode *map, const char *key)
{
	if (map == NULL || map->type != YNODE_MAPPING)
		return -1;
	for (size_t k = 0; k + 1 < map->nkids; k += 2)
		if (map->kids[k]->type == YNODE_SCALAR &&
		    strcmp(map->kids[k]->text, key) == 0)
			return (long)k;
	return -1;
}

/* Where the line holding OFF starts. */
static size_t stext_line_start(const struct stext_ctx *c, size_t off)
{
	while (off > 0 && c->buf[off - 1] != '\n')
		off--;
	return off;
}

/* Just after the line break that ends the line holding OFF (or the end). */
static size_t stext_line_after(const struct stext_ctx *c, size_t off)
{
	while (off < c->len && c->buf[off] != '\n')
		off++;
	return off < c->len ? off + 1 : c->len;
}

/* Where the lines of the entry whose value is V end (after its break). */
static size_t stext_entry_end(const struct stext_ctx *c, const struct ynode *v)
{
	/* a block scalar ends at the start of the line after it */
	if (v->end > 0 && v->end <= c->len && c->buf[v->end - 1] == '\n')
		return v->end;
	return stext_line_after(c, v->end);
}

/*
 * Where the entry with key node K starts: the start of its line, which
 * must hold nothing before the key but blanks.  Returns (size_t)-1 when
 * the key shares its line ("- name: x").
 */
static size_t stext_entry_start(const struct stext_ctx *c, const struct ynode *k)
{
	size_t ls = stext_line_start(c, k->off);
	for (size_t p = ls; p < k->off; p++)
		if (c->buf[p] != ' ')
			return (size_t)-1;
	return ls;
}

/* Write scalar N as YAML text: plain when it was plain, else quoted. */
static void stext_scalar(struct stext *o, const struct ynode *n)
{
	if (n->plain) {
		stext_puts(o, n->text);
		return;
	}
	stext_put(o, "\"", 1);
	for (size_t k = 0; k < n->len; k++) {
		unsigned char ch = (unsigned char)n->text[k];
		char esc[8];
		if (ch == '"' || ch == '\\') {
			esc[0] = '\\';
			esc[1] = (char)ch;
			stext_put(o, esc, 2);
		} else if (ch == '\n') {
			stext_puts(o, "\\n");
		} else if (ch == '\t') {
			stext_puts(o, "\\t");
		} else if (ch < 0x20 || ch == 0x7f) {
			snprintf(esc, sizeof esc, "\\x%02x", ch);
			stext_puts(o, esc);
		} else {
			stext_put(o, (const char *)&ch, 1);
		}
	}
	stext_put(o, "\"", 1);
}

/* Write N in flow form: a scalar, [a, b] or {k: v}. */
static void stext_flow(struct stext *o, const struct ynode *n)
{
	if (n->type == YNODE_SCALAR) {
		stext_scalar(o, n);
		return;
	}
	bool map = n->type == YNODE_MAPPING;
	stext_put(o, map ? "{" : "[", 1);
	for (size_t k = 0; k < n->nkids; k++) {
		if (k > 0)
			stext_puts(o, map && k % 2 == 1 ? ": " : ", ");
		stext_flow(o, n->kids[k]);
	}
	stext_put(o, map ? "}" : "]", 1);
}

/* True when N is written in flow form inside a block (scalars' lists). */
static bool stext_flat(const struct ynode *n)
{
	if (n->type == YNODE_SCALAR || n->style == YSTYLE_FLOW)
		return true;
	for (size_t k = 0; k < n->nkids; k++)
		if (n->kids[k]->type != YNODE_SCALAR)
			return false;
	return n->type == YNODE_SEQUENCE;
}

static void stext_entry(struct stext *o, const struct ynode *key,
                        const struct ynode *va, const struct ynode *vb,
                        int indent, int step);

/*
 * Write the block value VB (after its key's ':') at INDENT: a mapping's
 * entries (only those that differ from VA when VA is one), or a list.
 */
static void stext_block(struct stext *o, const struct ynode *va,
                        const struct ynode *vb, int indent, int step)
{
	if (vb->type == YNODE_MAPPING) {
		stext_put(o, "\n", 1);
		for (size_t k = 0; k + 1 < vb->nkids; k += 2) {
			const struct ynode *a = NULL;
			if (va != NULL && va->type == YNODE_MAPPING) {
				long j = stext_find(va, vb->kids[k]->text);
				a = j >= 0 ? va->kids[j + 1] : NULL;
				if (stext_equal(a, vb->kids[k + 1]))
					continue;
			}
			stext_entry(o, vb->kids[k], a, vb->kids[k + 1], indent, step);
		}
		return;
	}
	/* a list of collections: "- " items */
	stext_put(o, "\n", 1);
	for (size_t k = 0; k < vb->nkids; k++) {
		const struct ynode *it = vb->kids[k];
		stext_spaces(o, (size_t)indent);
		stext_puts(o, "- ");
		if (stext_flat(it)) {
			stext_flow(o, it);
			stext_put(o, "\n", 1);
			continue;
		}
		if (it->type == YNODE_MAPPING && it->nkids >= 2) {
			/* the first entry on the dash's line, the rest under it */
			struct stext first = { 0 };
			stext_entry(&first, it->kids[0], NULL, it->kids[1], 0, step);
			stext_put(o, first.buf != NULL ? first.buf : "", first.len);
			o->failed |= first.failed;
			free(first.buf);
			for (size_t j = 2; j + 1 < it->nkids; j += 2)
				stext_entry(o, it->kids[j], NULL, it->kids[j + 1],
				            indent + 2, step);
			continue;
		}
		stext_flow(o, it);
		stext_put(o, "\n", 1);
	}
}

/* Write the entry KEY: VB at INDENT (only what differs from VA). */
static void stext_entry(struct stext *o, const struct ynode *key,
                        const struct ynode *va, const struct ynode *vb,
                        int indent, int step)
{
	stext_spaces(o, (size_t)indent);
	stext_scalar(o, key);
	stext_put(o, ":", 1);
	if (stext_flat(vb)) {
		stext_put(o, " ", 1);
		stext_flow(o, vb);
		stext_put(o, "\n", 1);
		return;
	}
	stext_block(o, va, vb, indent + step, step);
}

/* The indentation of mapping UM's keys (columns before its first key). */
static int stext_indent(const struct ynode *um)
{
	return um->nkids > 0 ? (int)um->kids[0]->col - 1 : 0;
}

/*
 * Insert the entry KB: VB (only what differs from VA, which may be NULL)
 * into the user's block mapping UM, after the nearest key before it in
 * canonical order (the keys of TB, the canonical mapping holding KB), or
 * before the nearest one after it.
 */
static int stext_insert(struct stext_ctx *c, const struct ynode *um,
                        const struct ynode *tb, const struct ynode *kb,
                        const struct ynode *va, const struct ynode *vb,
                        const char *path)
{
	if (um->style != YSTYLE_BLOCK || um->nkids < 2)
		return stext_fail(c, "cannot add %s%s%s: its section is not written "
		                  "as indented lines", path, path[0] ? "." : "",
		                  kb->text);
	long at = stext_find(tb, kb->text);
	size_t pos = (size_t)-1;
	for (long k = at - 2; k >= 0 && pos == (size_t)-1; k -= 2) {
		long u = stext_find(um, tb->kids[k]->text);
		if (u >= 0)
			pos = stext_entry_end(c, um->kids[u + 1]);
	}
	for (long k = at + 2; k + 1 < (long)tb->nkids && pos == (size_t)-1; k += 2) {
		long u = stext_find(um, tb->kids[k]->text);
		if (u >= 0) {
			pos = stext_entry_start(c, um->kids[u]);
			if (pos == (size_t)-1)
				return stext_fail(c, "cannot add %s%s%s before a key that "
				                  "shares its line", path, path[0] ? "." : "",
				                  kb->text);
		}
	}
	if (pos == (size_t)-1)
		pos = stext_entry_end(c, um->kids[um->nkids - 1]);
	struct stext o = { 0 };
	if (pos == c->len && c->len > 0 && c->buf[c->len - 1] != '\n')
		stext_put(&o, "\n", 1);
	stext_entry(&o, kb, va, vb, stext_indent(um), c->step);
	if (o.failed) {
		free(o.buf);
		c->nomem = true;
		return stext_fail(c, "out of memory");
	}
	c->inserted++;
	return stext_edit(c, pos, pos, o.buf);
}

/* Remove the entry at key index K of the user's mapping UM, with its lines. */
static int stext_remove(struct stext_ctx *c, const struct ynode *um, long k,
                        const char *path)
{
	const struct ynode *kn = um->kids[k];
	size_t from = um->style == YSTYLE_BLOCK ? stext_entry_start(c, kn)
	                                        : (size_t)-1;
	if (from == (size_t)-1)
		return stext_fail(c, "cannot remove %s%s%s: it shares its line",
		                  path, path[0] ? "." : "", kn->text);
	size_t to = stext_entry_end(c, um->kids[k + 1]);
	c->removed++;
	return stext_edit(c, from, to, stext_dup(""));
}

/*
 * Rewrite the user's scalar VU (the old value, canonically VA, which may
 * be NULL) as the canonical VB, in the old value's style when it has one.
 */
static int stext_replace(struct stext_ctx *c, const struct ynode *va,
                         const struct ynode *vb, const struct ynode *vu,
                         const char *path)
{
	if (vu->style == YSTYLE_LITERAL || vu->style == YSTYLE_FOLDED)
		return stext_fail(c, "cannot rewrite %s: it is a block of text",
		                  path);
	if (vu->style == YSTYLE_PLAIN &&
	    (vu->end - vu->off != vu->len ||
	     memcmp(c->buf + vu->off, vu->text, vu->len) != 0))
		return stext_fail(c, "cannot rewrite %s: its text spans lines",
		                  path);
	char *styled = vb->plain ? stext_restyle(vu->text, va != NULL && va->plain
	                                                    ? va->text : NULL,
	                                         vb->text)
	                         : NULL;
	struct stext o = { 0 };
	const char *text = styled != NULL ? styled : vb->text;
	if (!vb->plain) {
		stext_scalar(&o, vb);
	} else if (vu->style == YSTYLE_SINGLE || vu->style == YSTYLE_DOUBLE) {
		const char *q = vu->style == YSTYLE_SINGLE ? "'" : "\"";
		stext_puts(&o, q);
		stext_puts(&o, text);
		stext_puts(&o, q);
	} else {
		stext_puts(&o, text);
	}
	free(styled);
	if (o.failed) {
		free(o.buf);
		c->nomem = true;
		return stext_fail(c, "out of memory");
	}
	c->changed++;
	return stext_edit(c, vu->off, vu->end, o.buf != NULL ? o.buf : stext_dup(""));
}

static int stext_value(struct stext_ctx *c, const struct ynode *va,
                       const struct ynode *vb, const struct ynode *vu,
                       const char *path);

/* Join PATH and KEY into BUF. */
static void stext_path(char *buf, size_t n, const char *path, const char *key)
{
	snprintf(buf, n, "%s%s%s", path, path[0] ? "." : "", key);
}

/* The user's conditions.temperature node, or NULL. */
static const struct ynode *stext_cond_node(const struct stext_ctx *c)
{
	long jc = stext_find(c->uroot, "conditions");
	const struct ynode *cond = jc >= 0 ? c->uroot->kids[jc + 1] : NULL;
	long jt = stext_find(cond, "temperature");
	return jt >= 0 ? cond->kids[jt + 1] : NULL;
}

/* The value of device.KEY in the canonical tree ROOT, or NULL. */
static const struct ynode *stext_device_node(const struct ynode *root,
                                             const char *key)
{
	long jd = stext_find(root, "device");
	const struct ynode *dev = jd >= 0 ? root->kids[jd + 1] : NULL;
	long jk = stext_find(dev, key);
	return jk >= 0 ? dev->kids[jk + 1] : NULL;
}

/*
 * Carry the differences between canonical mappings TA and TB into the
 * user's mapping UM at PATH.
 */
static int stext_map(struct stext_ctx *c, const struct ynode *ta,
                     const struct ynode *tb, const struct ynode *um,
                     const char *path)
{
	char sub[256];
	for (size_t k = 0; k + 1 < tb->nkids; k += 2) {
		const struct ynode *kb = tb->kids[k], *vb = tb->kids[k + 1];
		long ja = stext_find(ta, kb->text);
		const struct ynode *va = ja >= 0 ? ta->kids[ja + 1] : NULL;
		if (stext_equal(va, vb))
			continue;
		stext_path(sub, sizeof sub, path, kb->text);
		long ju = stext_find(um, kb->text);
		const struct ynode *vu = ju >= 0 ? um->kids[ju + 1] : NULL;
		bool cond = strcmp(path, "device") == 0 &&
		            strcmp(kb->text, c->cond_b) == 0;
		/* a device temperature the file gives under conditions: */
		if (vu == NULL && cond) {
			vu = stext_cond_node(c);
			/* the conditions line held A's value of its own key */
			if (vu != NULL) {
				va = stext_device_node(c->ta_root, c->cond_a);
				c->cond_done = true;
			}
		}
		int rc = vu == NULL ? stext_insert(c, um, tb, kb, va, vb, path)
		                    : stext_value(c, va, vb, vu, sub);
		if (rc != 0)
			return -1;
		/* the file's other spelling of the same temperature changes too */
		if (ju >= 0 && cond) {
			const struct ynode *vc = stext_cond_node(c);
			if (vc != NULL) {
				c->cond_done = true;
				if (stext_value(c, va, vb, vc, "conditions.temperature") != 0)
					return -1;
			}
		}
	}
	/*
	 * A device that starts or stops heating itself: conditions.temperature
	 * now stands for another key, so it must say that key's value.
	 */
	if (strcmp(path, "device") == 0 && !c->cond_done &&
	    strcmp(c->cond_a, c->cond_b) != 0 && stext_find(um, c->cond_b) < 0) {
		const struct ynode *vc = stext_cond_node(c);
		const struct ynode *va = stext_device_node(c->ta_root, c->cond_a);
		long jb = stext_find(tb, c->cond_b);
		const struct ynode *vb = jb >= 0 ? tb->kids[jb + 1] : NULL;
		c->cond_done = true;
		if (vc != NULL && vb != NULL && !stext_equal(va, vb) &&
		    stext_value(c, va, vb, vc, "conditions.temperature") != 0)
			return -1;
	}
	for (size_t k = 0; ta != NULL && k + 1 < ta->nkids; k += 2) {
		const char *key = ta->kids[k]->text;
		if (stext_find(tb, key) >= 0)
			continue;
		long ju = stext_find(um, key);
		stext_path(sub, sizeof sub, path, key);
		if (ju >= 0 && stext_remove(c, um, ju, path) != 0)
			return -1;
	}
	/* a new model: the old model's preset means nothing to it */
	if (strcmp(path, "device") == 0) {
		long ma = stext_find(ta, "model"), mb = stext_find(tb, "model");
		long ju = stext_find(um, "preset");
		if (ma >= 0 && mb >= 0 && ju >= 0 &&
		    !stext_equal(ta->kids[ma + 1], tb->kids[mb + 1]) &&
		    stext_remove(c, um, ju, path) != 0)
			return -1;
	}
	return 0;
}

/* Carry the change from canonical VA to VB into the user's node VU. */
static int stext_value(struct stext_ctx *c, const struct ynode *va,
                       const struct ynode *vb, const struct ynode *vu,
                       const char *path)
{
	if (vb->type == YNODE_SCALAR) {
		if (vu->type != YNODE_SCALAR)
			return stext_fail(c, "cannot rewrite %s: the file holds a %s "
			                  "there", path, vu->type == YNODE_MAPPING
			                  ? "mapping" : "list");
		return stext_replace(c, va, vb, vu, path);
	}
	if (vb->type == YNODE_MAPPING) {
		if (vu->type != YNODE_MAPPING)
			return stext_fail(c, "cannot rewrite %s: the file holds a "
			                  "single value there", path);
		const struct ynode *ta = va != NULL && va->type == YNODE_MAPPING ? va
		                                                                 : NULL;
		return stext_map(c, ta, vb, vu, path);
	}
	/* a list: item by item when the lengths agree */
	if (va != NULL && va->type == YNODE_SEQUENCE && vu->type == YNODE_SEQUENCE &&
	    va->nkids == vb->nkids && vu->nkids == vb->nkids) {
		char sub[288];
		for (size_t k = 0; k < vb->nkids; k++) {
			if (stext_equal(va->kids[k], vb->kids[k]))
				continue;
			snprintf(sub, sizeof sub, "%s[%zu]", path, k);
			if (stext_value(c, va->kids[k], vb->kids[k], vu->kids[k], sub) != 0)
				return -1;
		}
		return 0;
	}
	/* else the whole list, when it stands on one line */
	if (vu->style != YSTYLE_FLOW && vu->type != YNODE_SCALAR)
		return stext_fail(c, "cannot rewrite the list %s: it changed length "
		                  "and is written as indented lines", path);
	struct stext o = { 0 };
	stext_flow(&o, vb);
	if (o.failed) {
		free(o.buf);
		c->nomem = true;
		return stext_fail(c, "out of memory");
	}
	c->changed++;
	return stext_edit(c, vu->off, vu->end, o.buf);
}

/* Order of edits: by offset, inserts before what starts there, then made. */
static int stext_edit_order(const void *x, const void *y)
{
	const struct stext_edit *a = x, *b = y;
	if (a->off != b->off)
		return a->off < b->off ? -1 : 1;
	bool ai = a->end == a->off, bi = b->end == b->off;
	if (ai != bi)
		return ai ? -1 : 1;
	return a->seq < b->seq ? -1 : a->seq > b->seq;
}

/* Apply the edits to the text into O; -1 when two of them overlap. */
static int stext_apply(struct stext_ctx *c, struct stext *o)
{
	if (c->nedits > 1)
		qsort(c->edits, c->nedits, sizeof *c->edits, stext_edit_order);
	size_t at = 0;
	for (size_t k = 0; k < c->nedits; k++) {
		const struct stext_edit *e = &c->edits[k];
		if (e->off < at)
			return stext_fail(c, "two changes touch the same text");
		stext_put(o, c->buf + at, e->off - at);
		stext_puts(o, e->text);
		at = e->end;
	}
	stext_put(o, c->buf + at, c->len - at);
	if (o->failed) {
		c->nomem = true;
		return stext_fail(c, "out of memory");
	}
	return 0;
}

/* The file's indentation step: how far its first nested mapping is in. */
static int stext_step(const struct ynode *root)
{
	for (size_t k = 1; k < root->nkids; k += 2) {
		const struct ynode *v = root->kids[k];
		if (v->type == YNODE_MAPPING && v->style == YSTYLE_BLOCK &&
		    v->nkids > 0) {
			int s = (int)v->kids[0]->col - (int)root->kids[k - 1]->col;
			if (s >= 1 && s <= 8)
				return s;
		}
	}
	return 2;
}

/* Free the edits of C. */
static void stext_ctx_fini(struct stext_ctx *c)
{
	for (size_t k = 0; k < c->nedits; k++)
		free(c->edits[k].text);
	free(c->edits);
	c->edits = NULL;
	c->nedits = c->cap = 0;
}

/*
 * Patch the kept text BASE to hold S (the file DEST); returns 0 with the
 * text in *OUT, or -1 with the reason in C->why (C->nomem when out of
 * memory).
 */
static int stext_patch(const struct session *s, const struct session_text *base,
                       const char *dest, struct stext_ctx *c, struct stext *out)
{
	struct session a, back;
	struct session_error err;
	if (session_load_buffer(&a, base->name != NULL ? base->name : dest,
	                        base->buf, base->len, &err) != SESSION_OK) {
		char msg[600];
		session_error_format(&err, msg, sizeof msg);
		return stext_fail(c, "the text it was read from no longer loads "
		                  "(%s)", msg);
	}
	char *ca = NULL, *cb = NULL;
	size_t la, lb;
	struct ytree *ta = NULL, *tb = NULL, *tu = NULL;
	int rc = -1;
	if (session_save_buffer(&a, &ca, &la, &err) != SESSION_OK ||
	    session_save_buffer(s, &cb, &lb, &err) != SESSION_OK ||
	    ytree_parse("", ca, la, &ta, &err) != SESSION_OK ||
	    ytree_parse("", cb, lb, &tb, &err) != SESSION_OK ||
	    ytree_parse("", base->buf, base->len, &tu, &err) != SESSION_OK) {
		stext_fail(c, "cannot compare the sessions: %s", err.message);
		goto done;
	}
	c->buf = base->buf;
	c->len = base->len;
	c->uroot = tu->root;
	c->ta_root = ta->root;
	c->step = stext_step(tu->root);
	c->cond_a = thermal_active(&a.device) ? "ambient_temperature"
	                                      : "temperature";
	c->cond_b = thermal_active(&s->device) ? "ambient_temperature"
	                                       : "temperature";
	if (stext_map(c, ta->root, tb->root, tu->root, "") != 0 ||
	    stext_apply(c, out) != 0)
		goto done;
	/* what will be written must read back as S, bit for bit */
	if (out->buf == NULL)
		stext_put(out, "", 0);
	if (session_load_buffer(&back, dest, out->buf != NULL ? out->buf : "",
	                        out->len, &err) != SESSION_OK) {
		char msg[600];
		session_error_format(&err, msg, sizeof msg);
		stext_fail(c, "the edited text did not load (%s)", msg);
		goto done;
	}
	bool same = session_equal(&back, s);
	session_fini(&back);
	if (!same) {
		stext_fail(c, "the edited text did not read back as the session");
		goto done;
	}
	rc = 0;
done:
	ytree_destroy(ta);
	ytree_destroy(tb);
	ytree_destroy(tu);
	free(ca);
	free(cb);
	session_fini(&a);
	return rc;
}

/* Write S into BASE's text. */
enum session_status session_patch_text(const struct session *s,
                                       const struct session_text *base,
                                       const char *dest, char **out,
                                       size_t *len,
                                       struct session_save_report *rep,
                                       struct session_error *err)
{
	struct session_save_report scratch;
	struct session_error escratch;
	if (rep == NULL)
		rep = &scratch;
	if (err == NULL)
		err = &escratch;
	memset(rep, 0, sizeof *rep);
	memset(err, 0, sizeof *err);
	*out = NULL;
	*len = 0;
	if (dest == NULL && base != NULL)
		dest = base->name;
	if (dest == NULL)
		dest = "(session)";
	rep->how = SESSION_SAVED_NEW;
	if (base != NULL && base->buf != NULL) {
		struct stext_ctx c = { 0 };
		struct stext o = { 0 };
		if (stext_patch(s, base, dest, &c, &o) == 0) {
			rep->how = c.nedits == 0 ? SESSION_SAVED_UNCHANGED
			                         : SESSION_SAVED_PATCHED;
			rep->changed = c.changed;
			rep->inserted = c.inserted;
			rep->removed = c.removed;
			stext_ctx_fini(&c);
			*out = o.buf;
			*len = o.len;
			return SESSION_OK;
		}
		free(o.buf);
		stext_ctx_fini(&c);
		if (c.nomem) {
			ytree_error_at(err, dest, 0, 0, "", "out of memory");
			return SESSION_IO_ERROR;
		}
		rep->how = SESSION_SAVED_CANONICAL;
		snprintf(rep->why, sizeof rep->why, "%s", c.why);
	}
	/* canonical form, keeping the text's leading comment block */
	char *comments = base != NULL && base->buf != NULL
	                 ? session_buffer_comments(base->buf, base->len) : NULL;
	enum session_status st = session_save_buffer_with(s, comments, out, len,
	                                                  err);
	free(comments);
	if (st != SESSION_OK)
		snprintf(err->file, sizeof err->file, "%s", dest);
	return st;
}

/* Save S to PATH keeping TEXT. */
enum session_status session_save_keeping_text(const struct session *s,
                                              struct session_text *text,
                                              const char *path,
                                              struct session_save_report *rep,
                                              struct session_error *err)
{
	struct session_error scratch;
	if (err == NULL)
		err = &scratch;
	char *buf;
	size_t len;
	enum session_status st = session_patch_text(s, text, path, &buf, &len, rep,
	                                            err);
	if (st != SESSION_OK)
		return st;
	char why[sizeof err->message];
	if (atomic_write_file(path, buf, len, why, sizeof why) != 0) {
		free(buf);
		memset(err, 0, sizeof *err);
		snprintf(err->file, sizeof err->file, "%s", path);
		/* the message starts with the path already; keep the reason only */
		size_t pl = strlen(path);
		const char *msg = why;
		if (strncmp(msg, path, pl) == 0 && msg[pl] == ':')
			msg += pl + 2;
		snprintf(err->message, sizeof err->message, "%s", msg);
		return SESSION_CANT_WRITE;
	}
	if (text != NULL) {
		char *name = stext_dup(path);
		if (name == NULL) {
			/* written; only the copy is lost: the next save is canonical */
			free(buf);
			session_text_fini(text);
			return SESSION_OK;
		}
		session_text_fini(text);
		text->name = name;
		text->buf = buf;
		text->len = len;
	} else {
		free(buf);
	}
	return SESSION_OK;
}
