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
	"F", "H",
};

static const char *const qty_units_ascii[QTY_KIND_COUNT] = {
	"", "V", "A", "ohm", "S", "W", "degC", "eV", "W/K", "%", "F", "H",
};

static const char *const qty_nouns[QTY_KIND_COUNT] = {
	"a number", "a voltage", "a current", "a resistance", "a conductance",
	"a power", "a temperature", "an energy", "a thermal conductance",
	"a percentage", "a capacitance", "an inductance",
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
	                  kind == QTY_PERCENT)) {
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
	} else if (kind == QTY_TEMPERATURE || kind == QTY_PERCENT) {
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

/* Format VALUE with the fewest digits that read back bit-for-bit. */
char *qty_format_exact(char *buf, size_t n, double value)
{
	char out[64];

	if (buf == NULL || n == 0)
		return buf;
	if (!isfinite(value))
		return qty_format(buf, n, value, QTY_NUMBER, 17, 1);
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
