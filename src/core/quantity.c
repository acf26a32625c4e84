/*
 * quantity.c - parse and format physical quantities.
 *
 * Locale independence without touching the locale.  Parsing: our own scanner
 * checks the syntax and gathers the significant digits; the SI prefix and
 * the percent sign are folded into the decimal exponent; the digits are then
 * handed to strtod as one integer with an exponent ("47e2"), a form that has
 * no decimal separator and so reads the same in every locale.  strtod rounds
 * correctly, so "4.7k" gives exactly the double nearest 4700 (no product
 * 4.7 * 1e3 with a second rounding).  Formatting: the digits come from
 * snprintf("%.*e"), which rounds correctly; only the ASCII digits and the
 * exponent are taken from its output and the '.' is placed by us.
 *
 * Nothing here keeps state between calls and nothing calls setlocale,
 * uselocale or newlocale, so every function is safe to call from several
 * threads at once.
 */
#include "quantity.h"

#include <errno.h>
#include <math.h>
#include <stdbool.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* Significant digits kept before the rest is folded into a sticky digit.
 * Correct rounding of a binary64 needs at most 767 of them. */
#define QTY_MAX_DIGITS 800
/* Bound on a decimal exponent; beyond it every value is 0 or infinite. */
#define QTY_MAX_EXP 100000LL

/* A unit symbol as typed, and the kind it belongs to. */
struct qty_symbol {
	const char *text;
	enum qty_kind kind;
	int kelvin; /* 1: value is in kelvin, convert to degrees Celsius */
};

static const struct qty_symbol qty_symbols[] = {
	{ "V", QTY_VOLTAGE, 0 },
	{ "A", QTY_CURRENT, 0 },
	{ "\xce\xa9", QTY_RESISTANCE, 0 },     /* U+03A9 GREEK CAPITAL OMEGA */
	{ "\xe2\x84\xa6", QTY_RESISTANCE, 0 }, /* U+2126 OHM SIGN */
	{ "ohm", QTY_RESISTANCE, 0 },
	{ "ohms", QTY_RESISTANCE, 0 },
	{ "R", QTY_RESISTANCE, 0 },
	{ "S", QTY_CONDUCTANCE, 0 },
	{ "W", QTY_POWER, 0 },
	{ "\xc2\xb0\x43", QTY_TEMPERATURE, 0 }, /* U+00B0 DEGREE SIGN, C */
	{ "\xe2\x84\x83", QTY_TEMPERATURE, 0 }, /* U+2103 DEGREE CELSIUS */
	{ "degC", QTY_TEMPERATURE, 0 },
	{ "C", QTY_TEMPERATURE, 0 },
	{ "K", QTY_TEMPERATURE, 1 },
	{ "eV", QTY_ENERGY_EV, 0 },
	{ "W/K", QTY_THERMAL_COND, 0 },
	{ "%", QTY_PERCENT, 0 },
	{ "F", QTY_CAPACITANCE, 0 },
	{ "H", QTY_INDUCTANCE, 0 },
	{ "K/W", QTY_THERMAL_RES, 0 },
	{ "\xc2\xb0\x43/W", QTY_THERMAL_RES, 0 }, /* U+00B0, C/W */
	{ "degC/W", QTY_THERMAL_RES, 0 },
	{ "C/W", QTY_THERMAL_RES, 0 },
	{ "V/K", QTY_TEMPCO, 0 },
	{ "V/\xc2\xb0\x43", QTY_TEMPCO, 0 }, /* V/U+00B0 C */
	{ "V/degC", QTY_TEMPCO, 0 },
};

/* An SI prefix as typed and its power of ten. */
struct qty_prefix {
	const char *text;
	int exp10;
};

static const struct qty_prefix qty_prefixes[] = {
	{ "f", -15 }, { "p", -12 }, { "n", -9 },
	{ "u", -6 },
	{ "\xc2\xb5", -6 }, /* U+00B5 MICRO SIGN */
	{ "\xce\xbc", -6 }, /* U+03BC GREEK SMALL MU */
	{ "m", -3 }, { "k", 3 }, { "M", 6 }, { "G", 9 }, { "T", 12 },
};

static const char *const qty_units[QTY_KIND_COUNT] = {
	"", "V", "A", "\xce\xa9", "S", "W", "\xc2\xb0\x43", "eV", "W/K", "%",
	"F", "H", "K/W", "V/K",
};

static const char *const qty_units_ascii[QTY_KIND_COUNT] = {
	"", "V", "A", "ohm", "S", "W", "degC", "eV", "W/K", "%", "F", "H", "K/W",
	"V/K",
};

static const char *const qty_nouns[QTY_KIND_COUNT] = {
	"a number", "a voltage", "a current", "a resistance", "a conductance",
	"a power", "a temperature", "an energy", "a thermal conductance",
	"a percentage", "a capacitance", "an inductance", "a thermal resistance",
	"a temperature coefficient",
};

/* Return the canonical unit symbol of KIND. */
const char *qty_unit(enum qty_kind kind)
{
	return (unsigned)kind < QTY_KIND_COUNT ? qty_units[kind] : "";
}

/* Return the ASCII unit symbol of KIND. */
const char *qty_unit_ascii(enum qty_kind kind)
{
	return (unsigned)kind < QTY_KIND_COUNT ? qty_units_ascii[kind] : "";
}

/* Return a short noun for KIND. */
const char *qty_noun(enum qty_kind kind)
{
	return (unsigned)kind < QTY_KIND_COUNT ? qty_nouns[kind] : "a quantity";
}

/* Tell whether C is an ASCII decimal digit (isdigit follows the locale). */
static int qty_is_digit(char c)
{
	return c >= '0' && c <= '9';
}

/* Return the length of the white space at S (ASCII only), 0 if none. */
static size_t qty_space_len(const char *s)
{
	return (*s == ' ' || *s == '\t' || *s == '\n' || *s == '\r' ||
	        *s == '\v' || *s == '\f') ? 1 : 0;
}

/* Return the length of a blank between number and unit at S, 0 if none:
 * space, tab, U+00A0 no-break space, U+2009 thin space, U+202F narrow
 * no-break space. */
static size_t qty_blank_len(const char *s)
{
	if (*s == ' ' || *s == '\t')
		return 1;
	if (strncmp(s, "\xc2\xa0", 2) == 0)
		return 2;
	if (strncmp(s, "\xe2\x80\x89", 3) == 0 ||
	    strncmp(s, "\xe2\x80\xaf", 3) == 0)
		return 3;
	return 0;
}

/* Find the unit symbol spelt exactly as S[0..N), or NULL. */
static const struct qty_symbol *qty_symbol_find(const char *s, size_t n)
{
	for (size_t k = 0; k < sizeof qty_symbols / sizeof qty_symbols[0]; k++)
		if (strlen(qty_symbols[k].text) == n &&
		    memcmp(qty_symbols[k].text, s, n) == 0)
			return &qty_symbols[k];
	return NULL;
}

/* Find the SI prefix that starts S[0..N), or NULL. */
static const struct qty_prefix *qty_prefix_find(const char *s, size_t n)
{
	for (size_t k = 0; k < sizeof qty_prefixes / sizeof qty_prefixes[0]; k++) {
		size_t len = strlen(qty_prefixes[k].text);
		if (len <= n && memcmp(qty_prefixes[k].text, s, len) == 0)
			return &qty_prefixes[k];
	}
	return NULL;
}

/*
 * Convert sign, integer digits IP[0..IN), fraction digits FP[0..FN) and a
 * decimal exponent E10 to the nearest double in *OUT; 0 on success, -1 on
 * overflow.
 */
static int qty_convert(int neg, const char *ip, size_t in, const char *fp,
                       size_t fn, long long e10, double *out)
{
	char buf[QTY_MAX_DIGITS + 32];
	size_t k = 0, nd = 0;
	int sticky = 0;
	long long e = e10;

	buf[k++] = neg ? '-' : '+';
	for (size_t i = 0; i < in; i++) {
		if (nd == 0 && ip[i] == '0')
			continue;
		if (nd < QTY_MAX_DIGITS) {
			buf[k++] = ip[i];
			nd++;
		} else {
			e++;
			sticky |= ip[i] != '0';
		}
	}
	for (size_t i = 0; i < fn; i++) {
		if (nd == 0 && fp[i] == '0') {
			e--;
			continue;
		}
		if (nd < QTY_MAX_DIGITS) {
			buf[k++] = fp[i];
			nd++;
			e--;
		} else {
			sticky |= fp[i] != '0';
		}
	}
	if (nd == 0) {
		*out = neg ? -0.0 : 0.0;
		return 0;
	}
	if (sticky) {
		/* Digits were dropped: a final 1 stands for them, so a value just
		 * above a halfway point is not read as the halfway point itself. */
		buf[k++] = '1';
		e--;
	}
	if (e > QTY_MAX_EXP)
		e = QTY_MAX_EXP;
	if (e < -QTY_MAX_EXP)
		e = -QTY_MAX_EXP;
	snprintf(buf + k, sizeof buf - k, "e%lld", e);

	int saved = errno;
	double v = strtod(buf, NULL);
	errno = saved; /* underflow to 0 or a subnormal is not an error here */
	if (isinf(v))
		return -1;
	*out = v;
	return 0;
}

/* What the scanner found in a text. */
struct qty_scan {
	int neg;
	const char *ip, *fp; /* integer and fraction digits */
	size_t in, fn;
	long long exp10;     /* exponent written after 'e' */
	const struct qty_prefix *prefix;
	const struct qty_symbol *symbol;
	int infix;           /* the prefix or R stood for the decimal point */
	const char *suffix;  /* start of the unknown suffix, for messages */
	size_t suffix_len;
};

/* Tell whether S[0..N) spells infinity or NaN, as C or YAML writes them. */
static int qty_is_nonfinite_word(const char *s, size_t n)
{
	static const char *const words[] = { "inf", "infinity", "nan" };
	if (n > 0 && (*s == '+' || *s == '-')) {
		s++;
		n--;
	}
	if (n > 0 && *s == '.') {
		s++;
		n--;
	}
	for (size_t w = 0; w < sizeof words / sizeof words[0]; w++) {
		size_t len = strlen(words[w]);
		if (len != n)
			continue;
		size_t i = 0;
		while (i < n && (s[i] | 0x20) == words[w][i])
			i++;
		if (i == n)
			return 1;
	}
	return 0;
}

/*
 * Scan S[0..N) (no surrounding white space) into SC.  Returns QTY_OK,
 * QTY_BAD_NUMBER, QTY_BAD_SUFFIX or QTY_NOT_FINITE (for "inf", "nan").
 */
static enum qty_status qty_scan_text(const char *s, size_t n,
                                     struct qty_scan *sc)
{
	const char *end = s + n, *p = s;

	memset(sc, 0, sizeof *sc);
	if (qty_is_nonfinite_word(s, n))
		return QTY_NOT_FINITE;
	if (p < end && (*p == '+' || *p == '-')) {
		sc->neg = *p == '-';
		p++;
	}
	sc->ip = p;
	while (p < end && qty_is_digit(*p))
		p++;
	sc->in = (size_t)(p - sc->ip);
	sc->fp = p;

	/* "4k7", "4R7": a prefix or R between integer digits. */
	if (sc->in > 0 && p < end) {
		const struct qty_prefix *pre = qty_prefix_find(p, (size_t)(end - p));
		size_t len = pre ? strlen(pre->text) : (*p == 'R' ? 1 : 0);
		if (len > 0 && p + len < end && qty_is_digit(p[len])) {
			sc->infix = 1;
			sc->prefix = pre;
			if (!pre)
				sc->symbol = qty_symbol_find("R", 1);
			p += len;
			sc->fp = p;
			while (p < end && qty_is_digit(*p))
				p++;
			sc->fn = (size_t)(p - sc->fp);
		}
	}
	if (!sc->infix && p < end && *p == '.') {
		p++;
		sc->fp = p;
		while (p < end && qty_is_digit(*p))
			p++;
		sc->fn = (size_t)(p - sc->fp);
	}
	if (sc->in + sc->fn == 0)
		return QTY_BAD_NUMBER;

	if (!sc->infix && p < end && (*p == 'e' || *p == 'E')) {
		const char *q = p + 1;
		int eneg = 0;
		if (q < end && (*q == '+' || *q == '-')) {
			eneg = *q == '-';
			q++;
		}
		if (q < end && qty_is_digit(*q)) {
			long long x = 0;
			while (q < end && qty_is_digit(*q)) {
				if (x < 1000000000LL)
					x = x * 10 + (*q - '0');
				q++;
			}
			sc->exp10 = eneg ? -x : x;
			p = q;
		} else if (!(end - p == 2 && p[0] == 'e' && p[1] == 'V')) {
			return QTY_BAD_NUMBER; /* "1e", "1e+", but not "1eV" */
		}
	}
	if (p < end && (qty_is_digit(*p) || *p == '.' || *p == '+' ||
	                *p == '-'))
		return QTY_BAD_NUMBER; /* "1.2.3", "1k5.2", "1-2" */

	/* Suffix: blanks, then [prefix] [unit]. */
	for (size_t b; (b = qty_blank_len(p)) > 0 && p + b <= end;)
		p += b;
	sc->suffix = p;
	sc->suffix_len = (size_t)(end - p);
	if (p == end)
		return QTY_OK;
	if (qty_is_digit(*p))
		return QTY_BAD_NUMBER; /* "1 2" */
	if (sc->symbol)
		return QTY_BAD_SUFFIX; /* "4R7 V": R already was the unit */
	const struct qty_symbol *sym = qty_symbol_find(p, (size_t)(end - p));
	if (sym) {
		sc->symbol = sym;
		return QTY_OK;
	}
	if (sc->prefix)
		return QTY_BAD_SUFFIX; /* "4k7k" */
	const struct qty_prefix *pre = qty_prefix_find(p, (size_t)(end - p));
	if (!pre)
		return QTY_BAD_SUFFIX;
	p += strlen(pre->text);
	sc->prefix = pre;
	if (p == end)
		return QTY_OK;
	sym = qty_symbol_find(p, (size_t)(end - p));
	if (!sym)
		return QTY_BAD_SUFFIX;
	sc->symbol = sym;
	return QTY_OK;
}

/* Copy TEXT[0..LEN) into Q (size QN >= 8) for a message: at most 40 bytes,
 * control characters shown as '?', never cutting a UTF-8 sequence. */
static void qty_quote(const char *text, size_t len, char *q, size_t qn)
{
	size_t k = 0, limit = qn - 4 < 40 ? qn - 4 : 40;
	const unsigned char *s = (const unsigned char *)text;
	const unsigned char *end = s + len;

	while (s < end && k < limit) {
		q[k++] = (*s < 0x20 || *s == 0x7f) ? '?' : (char)*s;
		s++;
	}
	if (s < end) {
		while (k > 0 && (*s & 0xc0) == 0x80) {
			k--;
			s--;
		}
		q[k++] = '.';
		q[k++] = '.';
		q[k++] = '.';
	}
	q[k] = '\0';
}

/* Write what KIND expects ("a voltage (V)") into BUF of size N. */
static void qty_expected(enum qty_kind kind, char *buf, size_t n)
{
	if (kind == QTY_NUMBER || (unsigned)kind >= QTY_KIND_COUNT)
		snprintf(buf, n, "a plain number");
	else
		snprintf(buf, n, "%s (%s)", qty_noun(kind), qty_unit(kind));
}

/* Parse TEXT as a quantity of KIND. */
enum qty_status qty_parse(const char *text, enum qty_kind kind, double *out,
                          char *err, size_t errlen)
{
	char q[48], want[64];
	int say = err != NULL && errlen > 0;
	const char *s = text ? text : "";
	size_t n;

	if ((unsigned)kind >= QTY_KIND_COUNT)
		kind = QTY_NUMBER;
	qty_quote(s, strlen(s), q, sizeof q);
	qty_expected(kind, want, sizeof want);

	while (qty_space_len(s))
		s++;
	n = strlen(s);
	while (n > 0 && qty_space_len(s + n - 1))
		n--;
	if (n == 0) {
		if (say)
			snprintf(err, errlen, "empty value, expected %s", want);
		return QTY_EMPTY;
	}

	struct qty_scan sc;
	enum qty_status st = qty_scan_text(s, n, &sc);
	if (st == QTY_NOT_FINITE) {
		if (say)
			snprintf(err, errlen, "\"%s\" is not a finite number, "
			         "expected %s", q, want);
		return st;
	}
	if (st == QTY_BAD_NUMBER) {
		if (say)
			snprintf(err, errlen, "\"%s\" is not a valid number, "
			         "expected %s", q, want);
		return st;
	}
	if (st == QTY_BAD_SUFFIX) {
		char suf[48];
		qty_quote(sc.suffix ? sc.suffix : "", sc.suffix_len, suf,
		          sizeof suf);
		if (say)
			snprintf(err, errlen, "\"%s\": unknown prefix or unit \"%s\", "
			         "expected %s", q, suf, want);
		return st;
	}
	if (sc.symbol && sc.symbol->kind != kind) {
		if (say)
			snprintf(err, errlen, "\"%s\" is %s, expected %s", q,
			         qty_noun(sc.symbol->kind), want);
		return QTY_WRONG_UNIT;
	}
	if (sc.prefix && (kind == QTY_NUMBER || kind == QTY_TEMPERATURE ||
	                  kind == QTY_PERCENT || kind == QTY_THERMAL_RES)) {
		if (say)
			snprintf(err, errlen, "\"%s\": %s takes no SI prefix, "
			         "expected %s", q, qty_noun(kind), want);
		return QTY_BAD_SUFFIX;
	}

	long long e10 = sc.exp10;
	if (sc.prefix)
		e10 += sc.prefix->exp10;
	if (kind == QTY_PERCENT)
		e10 -= 2;
	double v;
	if (qty_convert(sc.neg, sc.ip, sc.in, sc.fp, sc.fn, e10, &v) != 0) {
		if (say)
			snprintf(err, errlen, "\"%s\" is too large, expected %s", q,
			         want);
		return QTY_NOT_FINITE;
	}
	if (sc.symbol && sc.symbol->kelvin)
		v -= 273.15; /* t/°C = T/K - 273.15 */
	*out = v;
	return QTY_OK;
}

/* Round |A| (finite) to SIG digits: digits into D (no terminator), decimal
 * exponent of the first digit into *X. */
static void qty_digits(double a, int sig, char *d, int *x)
{
	char tmp[64];
	const char *p = tmp;
	int nd = 0, e = 0, eneg = 0;

	snprintf(tmp, sizeof tmp, "%.*e", sig - 1, fabs(a));
	for (; *p && *p != 'e' && *p != 'E'; p++)
		if (qty_is_digit(*p) && nd < sig)
			d[nd++] = *p;
	while (nd < sig)
		d[nd++] = '0';
	if (*p)
		p++;
	if (*p == '+' || *p == '-')
		eneg = *p++ == '-';
	for (; qty_is_digit(*p); p++)
		e = e * 10 + (*p - '0');
	*x = eneg ? -e : e;
}

/* Append S to BUF (size N) at *K, keeping room for the terminator. */
static void qty_put(char *buf, size_t n, size_t *k, const char *s)
{
	while (*s && *k + 1 < n)
		buf[(*k)++] = *s++;
	buf[*k] = '\0';
}

/* Append digits D[0..ND), the first at decimal exponent X, in positional
 * form; TRIM drops trailing fraction zeros (as "%g" does). */
static void qty_put_fixed(char *buf, size_t n, size_t *k, const char *d,
                          int nd, int x, int trim)
{
	char tmp[128];
	size_t t = 0;

	if (x >= 0) {
		for (int i = 0; i <= x; i++)
			tmp[t++] = i < nd ? d[i] : '0';
		if (nd > x + 1) {
			tmp[t++] = '.';
			for (int i = x + 1; i < nd; i++)
				tmp[t++] = d[i];
		}
	} else {
		tmp[t++] = '0';
		tmp[t++] = '.';
		for (int i = 0; i < -x - 1; i++)
			tmp[t++] = '0';
		for (int i = 0; i < nd; i++)
			tmp[t++] = d[i];
	}
	tmp[t] = '\0';
	if (trim && memchr(tmp, '.', t)) {
		while (t > 0 && tmp[t - 1] == '0')
			tmp[--t] = '\0';
		if (t > 0 && tmp[t - 1] == '.')
			tmp[--t] = '\0';
	}
	qty_put(buf, n, k, tmp);
}

/* Append an exponent "e+05" style (at least two digits, like printf). */
static void qty_put_exp(char *buf, size_t n, size_t *k, int x, int plus)
{
	char tmp[16];
	snprintf(tmp, sizeof tmp, plus ? "e%+03d" : "e%d", x);
	qty_put(buf, n, k, tmp);
}

/* Write VALUE like printf's "%.*g" with precision P, always with '.'. */
static void qty_put_g(char *buf, size_t n, size_t *k, double value, int p)
{
	char d[20];
	int x;

	qty_digits(value, p, d, &x);
	if (signbit(value))
		qty_put(buf, n, k, "-");
	if (x < p && x >= -4) {
		qty_put_fixed(buf, n, k, d, p, x, 1);
	} else {
		qty_put_fixed(buf, n, k, d, p, 0, 1);
		qty_put_exp(buf, n, k, x, 1);
	}
}

/* Copy SRC into BUF of size N, cutting only between UTF-8 sequences. */
static void qty_copy_out(char *buf, size_t n, const char *src)
{
	size_t len = strlen(src);
	if (len >= n) {
		len = n - 1;
		while (len > 0 && ((unsigned char)src[len] & 0xc0) == 0x80)
			len--;
	}
	memcpy(buf, src, len);
	buf[len] = '\0';
}

/* A nonzero digit before the exponent (see quantity.h). */
bool qty_text_nonzero(const char *text)
{
	for (const char *p = text; *p != '\0' && *p != 'e' && *p != 'E'; p++)
		if (*p >= '1' && *p <= '9')
			return true;
	return false;
}

/* Format VALUE in engineering notation with the unit of KIND. */
char *qty_format(char *buf, size_t n, double value, enum qty_kind kind,
                 int sig, int ascii)
{
	static const char *const pre_utf8[] = {
		"f", "p", "n", "\xc2\xb5", "m", "", "k", "M", "G", "T" };
	static const char *const pre_ascii[] = {
		"f", "p", "n", "u", "m", "", "k", "M", "G", "T" };
	char out[128], d[20];
	size_t k = 0;
	int x;

	if (buf == NULL || n == 0)
		return buf;
	if (sig < 1)
		sig = 1;
	if (sig > 17)
		sig = 17;
	if ((unsigned)kind >= QTY_KIND_COUNT)
		kind = QTY_NUMBER;
	const char *unit = ascii ? qty_unit_ascii(kind) : qty_unit(kind);
	out[0] = '\0';

	if (isnan(value)) {
		qty_put(out, sizeof out, &k, "nan");
	} else if (isinf(value)) {
		qty_put(out, sizeof out, &k, value < 0 ? "-inf" : "inf");
	} else if (kind == QTY_NUMBER) {
		qty_put_g(out, sizeof out, &k, value, sig);
	} else if (value == 0.0) {
		qty_put(out, sizeof out, &k, "0 ");
		qty_put(out, sizeof out, &k, unit);
	} else if (kind == QTY_TEMPERATURE || kind == QTY_PERCENT ||
	           kind == QTY_THERMAL_RES) {
		/* No prefix: positional with SIG digits, e-notation far out. */
		double v = kind == QTY_PERCENT ? value * 100.0 : value;
		qty_digits(v, sig, d, &x);
		if (v < 0)
			qty_put(out, sizeof out, &k, "-");
		if (x >= -5 && x < 9) {
			qty_put_fixed(out, sizeof out, &k, d, sig, x, 0);
		} else {
			qty_put_fixed(out, sizeof out, &k, d, sig, 0, 0);
			qty_put_exp(out, sizeof out, &k, x, 0);
		}
		qty_put(out, sizeof out, &k, " ");
		qty_put(out, sizeof out, &k, unit);
	} else {
		qty_digits(value, sig, d, &x);
		/* Floor division: exponent of the prefix, a multiple of 3. */
		int e3 = (x >= 0 ? x / 3 : -((-x + 2) / 3)) * 3;
		if (value < 0)
			qty_put(out, sizeof out, &k, "-");
		qty_put_fixed(out, sizeof out, &k, d, sig, x - e3, 0);
		if (e3 >= -15 && e3 <= 12) {
			qty_put(out, sizeof out, &k, " ");
			qty_put(out, sizeof out, &k,
			        (ascii ? pre_ascii : pre_utf8)[(e3 + 15) / 3]);
		} else {
			qty_put_exp(out, sizeof out, &k, e3, 0);
			qty_put(out, sizeof out, &k, " ");
		}
		qty_put(out, sizeof out, &k, unit);
	}
	qty_copy_out(buf, n, out);
	return buf;
}

/* ---------------------------------------------------------------------- */
/* Shortest round-trip digits: Grisu3                                      */

/*
 * Loitsch's Grisu3 ("Printing Floating-Point Numbers Quickly and
 * Accurately with Integers", PLDI 2010): the boundaries of the interval
 * that reads back to the double, scaled by a cached power of ten into a
 * 64-bit window, then digits of the upper boundary until the rest lies
 * inside the interval, and the last digit weeded towards the value.  It
 * gives the shortest digits that read back, closest to the value, or
 * says it cannot be sure (about 0.5 % of doubles), and then the exact
 * but slow search below runs.
 */

/* A 64-bit significand and a binary exponent: f 2^e. */
struct qty_fp {
	uint64_t f;
	int e;
};

/*
 * 10^k for k = -348, -340, ..., 340 as a rounded 64-bit significand and
 * binary exponent (f 2^e, 2^63 <= f < 2^64), made with exact rational
 * arithmetic (a Python script: Fraction(10)**k scaled and rounded to
 * nearest, ties to even).
 */
static const struct {
	uint64_t f;
	int e, k;
} qty_pow10[] = {
{ UINT64_C(0xfa8fd5a0081c0288), -1220, -348 },
	{ UINT64_C(0xbaaee17fa23ebf76), -1193, -340 },
	{ UINT64_C(0x8b16fb203055ac76), -1166, -332 },
	{ UINT64_C(0xcf42894a5dce35ea), -1140, -324 },
	{ UINT64_C(0x9a6bb0aa55653b2d), -1113, -316 },
	{ UINT64_C(0xe61acf033d1a45df), -1087, -308 },
	{ UINT64_C(0xab70fe17c79ac6ca), -1060, -300 },
	{ UINT64_C(0xff77b1fcbebcdc4f), -1034, -292 },
	{ UINT64_C(0xbe5691ef416bd60c), -1007, -284 },
	{ UINT64_C(0x8dd01fad907ffc3c), -980, -276 },
	{ UINT64_C(0xd3515c2831559a83), -954, -268 },
	{ UINT64_C(0x9d71ac8fada6c9b5), -927, -260 },
	{ UINT64_C(0xea9c227723ee8bcb), -901, -252 },
	{ UINT64_C(0xaecc49914078536d), -874, -244 },
	{ UINT64_C(0x823c12795db6ce57), -847, -236 },
	{ UINT64_C(0xc21094364dfb5637), -821, -228 },
	{ UINT64_C(0x9096ea6f3848984f), -794, -220 },
	{ UINT64_C(0xd77485cb25823ac7), -768, -212 },
	{ UINT64_C(0xa086cfcd97bf97f4), -741, -204 },
	{ UINT64_C(0xef340a98172aace5), -715, -196 },
	{ UINT64_C(0xb23867fb2a35b28e), -688, -188 },
	{ UINT64_C(0x84c8d4dfd2c63f3b), -661, -180 },
	{ UINT64_C(0xc5dd44271ad3cdba), -635, -172 },
	{ UINT64_C(0x936b9fcebb25c996), -608, -164 },
	{ UINT64_C(0xdbac6c247d62a584), -582, -156 },
	{ UINT64_C(0xa3ab66580d5fdaf6), -555, -148 },
	{ UINT64_C(0xf3e2f893dec3f126), -529, -140 },
	{ UINT64_C(0xb5b5ada8aaff80b8), -502, -132 },
	{ UINT64_C(0x87625f056c7c4a8b), -475, -124 },
	{ UINT64_C(0xc9bcff6034c13053), -449, -116 },
	{ UINT64_C(0x964e858c91ba2655), -422, -108 },
	{ UINT64_C(0xdff9772470297ebd), -396, -100 },
	{ UINT64_C(0xa6dfbd9fb8e5b88f), -369, -92 },
	{ UINT64_C(0xf8a95fcf88747d94), -343, -84 },
	{ UINT64_C(0xb94470938fa89bcf), -316, -76 },
	{ UINT64_C(0x8a08f0f8bf0f156b), -289, -68 },
	{ UINT64_C(0xcdb02555653131b6), -263, -60 },
	{ UINT64_C(0x993fe2c6d07b7fac), -236, -52 },
	{ UINT64_C(0xe45c10c42a2b3b06), -210, -44 },
	{ UINT64_C(0xaa242499697392d3), -183, -36 },
	{ UINT64_C(0xfd87b5f28300ca0e), -157, -28 },
	{ UINT64_C(0xbce5086492111aeb), -130, -20 },
	{ UINT64_C(0x8cbccc096f5088cc), -103, -12 },
	{ UINT64_C(0xd1b71758e219652c), -77, -4 },
	{ UINT64_C(0x9c40000000000000), -50, 4 },
	{ UINT64_C(0xe8d4a51000000000), -24, 12 },
	{ UINT64_C(0xad78ebc5ac620000), 3, 20 },
	{ UINT64_C(0x813f3978f8940984), 30, 28 },
	{ UINT64_C(0xc097ce7bc90715b3), 56, 36 },
	{ UINT64_C(0x8f7e32ce7bea5c70), 83, 44 },
	{ UINT64_C(0xd5d238a4abe98068), 109, 52 },
	{ UINT64_C(0x9f4f2726179a2245), 136, 60 },
	{ UINT64_C(0xed63a231d4c4fb27), 162, 68 },
	{ UINT64_C(0xb0de65388cc8ada8), 189, 76 },
	{ UINT64_C(0x83c7088e1aab65db), 216, 84 },
	{ UINT64_C(0xc45d1df942711d9a), 242, 92 },
	{ UINT64_C(0x924d692ca61be758), 269, 100 },
	{ UINT64_C(0xda01ee641a708dea), 295, 108 },
	{ UINT64_C(0xa26da3999aef774a), 322, 116 },
	{ UINT64_C(0xf209787bb47d6b85), 348, 124 },
	{ UINT64_C(0xb454e4a179dd1877), 375, 132 },
	{ UINT64_C(0x865b86925b9bc5c2), 402, 140 },
	{ UINT64_C(0xc83553c5c8965d3d), 428, 148 },
	{ UINT64_C(0x952ab45cfa97a0b3), 455, 156 },
	{ UINT64_C(0xde469fbd99a05fe3), 481, 164 },
	{ UINT64_C(0xa59bc234db398c25), 508, 172 },
	{ UINT64_C(0xf6c69a72a3989f5c), 534, 180 },
	{ UINT64_C(0xb7dcbf5354e9bece), 561, 188 },
	{ UINT64_C(0x88fcf317f22241e2), 588, 196 },
	{ UINT64_C(0xcc20ce9bd35c78a5), 614, 204 },
	{ UINT64_C(0x98165af37b2153df), 641, 212 },
	{ UINT64_C(0xe2a0b5dc971f303a), 667, 220 },
	{ UINT64_C(0xa8d9d1535ce3b396), 694, 228 },
	{ UINT64_C(0xfb9b7cd9a4a7443c), 720, 236 },
	{ UINT64_C(0xbb764c4ca7a44410), 747, 244 },
	{ UINT64_C(0x8bab8eefb6409c1a), 774, 252 },
	{ UINT64_C(0xd01fef10a657842c), 800, 260 },
	{ UINT64_C(0x9b10a4e5e9913129), 827, 268 },
	{ UINT64_C(0xe7109bfba19c0c9d), 853, 276 },
	{ UINT64_C(0xac2820d9623bf429), 880, 284 },
	{ UINT64_C(0x80444b5e7aa7cf85), 907, 292 },
	{ UINT64_C(0xbf21e44003acdd2d), 933, 300 },
	{ UINT64_C(0x8e679c2f5e44ff8f), 960, 308 },
	{ UINT64_C(0xd433179d9c8cb841), 986, 316 },
	{ UINT64_C(0x9e19db92b4e31ba9), 1013, 324 },
	{ UINT64_C(0xeb96bf6ebadf77d9), 1039, 332 },
	{ UINT64_C(0xaf87023b9bf0ee6b), 1066, 340 },
};

#define QTY_POW10_FIRST (-348)
#define QTY_POW10_STEP 8

/* The product rounded to 64 bits (the upper half of 128, rounded). */
static struct qty_fp qty_fp_mul(struct qty_fp x, struct qty_fp y)
{
	const uint64_t m32 = UINT64_C(0xffffffff);
	uint64_t a = x.f >> 32, b = x.f & m32, c = y.f >> 32, d = y.f & m32;
	uint64_t ac = a * c, bc = b * c, ad = a * d, bd = b * d;
	uint64_t tmp = (bd >> 32) + (ad & m32) + (bc & m32) + (UINT64_C(1) << 31);
	return (struct qty_fp){ ac + (ad >> 32) + (bc >> 32) + (tmp >> 32),
	                        x.e + y.e + 64 };
}

/* Shift X left until its top bit is set. */
static struct qty_fp qty_fp_normalize(struct qty_fp x)
{
	while (!(x.f & (UINT64_C(1) << 63))) {
		x.f <<= 1;
		x.e--;
	}
	return x;
}

/* The largest power of ten not above N (< 2^32), and its digit count. */
static void qty_biggest_pow10(uint32_t n, uint32_t *power, int *digits)
{
	uint32_t p = 1;
	int k = 1;
	while (k < 10 && n / p >= 10) {
		p *= 10;
		k++;
	}
	*power = p;
	*digits = k;
}

/*
 * Move the last digit of BUF towards the value while it stays inside the
 * interval, and say whether the result is safely the closest (Grisu3's
 * round_weed: all distances are in units of the scaled exponent).
 */
static bool qty_round_weed(char *buf, int len, uint64_t dist_high_w,
                           uint64_t unsafe, uint64_t rest, uint64_t ten_kappa,
                           uint64_t unit)
{
	uint64_t small = dist_high_w - unit, big = dist_high_w + unit;
	while (rest < small && unsafe - rest >= ten_kappa &&
	       (rest + ten_kappa < small ||
	        small - rest >= rest + ten_kappa - small)) {
		buf[len - 1]--;
		rest += ten_kappa;
	}
	if (rest < big && unsafe - rest >= ten_kappa &&
	    (rest + ten_kappa < big || big - rest > rest + ten_kappa - big))
		return false;
	return 2 * unit <= rest && rest <= unsafe - 4 * unit;
}

/*
 * The digits of the scaled upper boundary HIGH until the rest is inside
 * the interval [LOW, HIGH] (W the scaled value; all of one exponent in
 * [-60, -32]); *KAPPA gets the decimal exponent of the last digit.
 */
static bool qty_digit_gen(struct qty_fp low, struct qty_fp w,
                          struct qty_fp high, char *buf, int *len, int *kappa)
{
	uint64_t unit = 1;
	struct qty_fp too_low = { low.f - unit, low.e };
	struct qty_fp too_high = { high.f + unit, high.e };
	uint64_t unsafe = too_high.f - too_low.f;
	int shift = -w.e;
	uint64_t one = UINT64_C(1) << shift;
	uint32_t integrals = (uint32_t)(too_high.f >> shift);
	uint64_t fractionals = too_high.f & (one - 1);
	uint32_t divisor;
	int digits;
	qty_biggest_pow10(integrals, &divisor, &digits);
	*kappa = digits;
	*len = 0;
	while (*kappa > 0) {
		buf[(*len)++] = (char)('0' + integrals / divisor);
		integrals %= divisor;
		(*kappa)--;
		uint64_t rest = ((uint64_t)integrals << shift) + fractionals;
		if (rest < unsafe)
			return qty_round_weed(buf, *len, too_high.f - w.f, unsafe, rest,
			                      (uint64_t)divisor << shift, unit);
		divisor /= 10;
	}
	for (;;) {
		fractionals *= 10;
		unit *= 10;
		unsafe *= 10;
		buf[(*len)++] = (char)('0' + (fractionals >> shift));
		fractionals &= one - 1;
		(*kappa)--;
		if (fractionals < unsafe)
			return qty_round_weed(buf, *len, (too_high.f - w.f) * unit, unsafe,
			                      fractionals, one, unit);
	}
}

/*
 * The shortest digits of |V| (positive, finite, normal or subnormal) that
 * read back to V, into BUF (no terminator), *LEN of them, the first at
 * decimal exponent *X; false when Grisu3 cannot vouch for them.
 */
static bool qty_grisu3(double v, char *buf, int *len, int *x)
{
	uint64_t bits;
	memcpy(&bits, &v, sizeof bits);
	uint64_t frac = bits & UINT64_C(0x000fffffffffffff);
	int bexp = (int)((bits >> 52) & 0x7ff);
	struct qty_fp w;
	if (bexp == 0)
		w = (struct qty_fp){ frac, -1074 };
	else
		w = (struct qty_fp){ frac | (UINT64_C(1) << 52), bexp - 1075 };
	/* The boundaries halfway to the neighbours; the lower one is nearer
	 * when the significand is a power of two (the gap below halves). */
	struct qty_fp mplus = qty_fp_normalize((struct qty_fp){ (w.f << 1) + 1,
	                                                         w.e - 1 });
	struct qty_fp mminus;
	if (frac == 0 && bexp > 1)
		mminus = (struct qty_fp){ (w.f << 2) - 1, w.e - 2 };
	else
		mminus = (struct qty_fp){ (w.f << 1) - 1, w.e - 1 };
	mminus.f <<= mminus.e - mplus.e;
	mminus.e = mplus.e;
	w = qty_fp_normalize(w);
	/* A cached 10^-k putting the product's exponent in [-60, -32]. */
	int want = -60 - (w.e + 64);            /* lowest acceptable exponent */
	double kd = ceil((want + 63) * 0.30102999566398114);
	int idx = ((int)kd - QTY_POW10_FIRST + QTY_POW10_STEP - 1) / QTY_POW10_STEP;
	if (idx < 0 || idx >= (int)(sizeof qty_pow10 / sizeof qty_pow10[0]))
		return false;
	while (idx > 0 && qty_pow10[idx - 1].e + w.e + 64 >= -60)
		idx--;
	while (qty_pow10[idx].e + w.e + 64 < -60)
		idx++;
	if (qty_pow10[idx].e + w.e + 64 > -32)
		return false;
	struct qty_fp c = { qty_pow10[idx].f, qty_pow10[idx].e };
	int mk = qty_pow10[idx].k;
	struct qty_fp sw = qty_fp_mul(w, c);
	struct qty_fp slow = qty_fp_mul(mminus, c);
	struct qty_fp shigh = qty_fp_mul(mplus, c);
	int kappa;
	if (!qty_digit_gen(slow, sw, shigh, buf, len, &kappa))
		return false;
	/* value = digits 10^(kappa - mk): the first digit's exponent. */
	*x = kappa - mk + *len - 1;
	return true;
}

/*
 * Lay out the digits D[0..LEN) (no trailing zeros), the first at decimal
 * exponent X, as "%.<LEN>g" would, into OUT (room for 32): positional for
 * -4 <= X < LEN, else d.ddde+XX.
 */
static void qty_layout_g(char *out, bool neg, const char *d, int len, int x)
{
	size_t k = 0;
	if (neg)
		out[k++] = '-';
	if (x < len && x >= -4) {
		if (x >= 0) {
			for (int i = 0; i <= x; i++)
				out[k++] = d[i];
			if (len > x + 1) {
				out[k++] = '.';
				for (int i = x + 1; i < len; i++)
					out[k++] = d[i];
			}
		} else {
			out[k++] = '0';
			out[k++] = '.';
			for (int i = 0; i < -x - 1; i++)
				out[k++] = '0';
			for (int i = 0; i < len; i++)
				out[k++] = d[i];
		}
	} else {
		out[k++] = d[0];
		if (len > 1) {
			out[k++] = '.';
			for (int i = 1; i < len; i++)
				out[k++] = d[i];
		}
		out[k++] = 'e';
		out[k++] = x < 0 ? '-' : '+';
		int ax = x < 0 ? -x : x;
		if (ax >= 100)
			out[k++] = (char)('0' + ax / 100);
		out[k++] = (char)('0' + ax / 10 % 10);
		out[k++] = (char)('0' + ax % 10);
	}
	out[k] = '\0';
}

/* Format VALUE with the fewest digits that read back bit-for-bit. */
char *qty_format_exact(char *buf, size_t n, double value)
{
	char out[64];

	if (buf == NULL || n == 0)
		return buf;
	if (!isfinite(value))
		return qty_format(buf, n, value, QTY_NUMBER, 17, 1);
	char d[24];
	int len, x;
	if (value != 0.0 && qty_grisu3(fabs(value), d, &len, &x)) {
		qty_layout_g(out, signbit(value), d, len, x);
		qty_copy_out(buf, n, out);
		return buf;
	}
	/* The exact search: the first precision whose "%g" reads back. */
	for (int p = 1; p <= 17; p++) {
		size_t k = 0;
		double back;
		qty_put_g(out, sizeof out, &k, value, p);
		if (qty_parse(out, QTY_NUMBER, &back, NULL, 0) == QTY_OK &&
		    memcmp(&back, &value, sizeof back) == 0)
			break;
	}
	qty_copy_out(buf, n, out);
	return buf;
}

/* Engineering format without trailing zeros in the mantissa. */
char *qty_format_short(char *buf, size_t n, double value, enum qty_kind kind,
                       int sig, int ascii)
{
	qty_format(buf, n, value, kind, sig, ascii);
	char *dot = strchr(buf, '.');
	if (dot == NULL)
		return buf;
	char *end = dot + 1;
	while (*end >= '0' && *end <= '9')
		end++;
	char *cut = end;
	while (cut > dot + 1 && cut[-1] == '0')
		cut--;
	if (cut == dot + 1)
		cut = dot;
	memmove(cut, end, strlen(end) + 1);
	return buf;
}
