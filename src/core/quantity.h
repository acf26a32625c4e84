/*
 * quantity.h - physical quantities: parsing numbers with SI prefixes and
 * unit symbols, and formatting them in engineering notation.
 *
 * Pure functions, no allocation, locale-independent (the decimal separator
 * is always '.', whatever LC_NUMERIC says).
 */
#ifndef BIASLINE_QUANTITY_H
#define BIASLINE_QUANTITY_H

#include <stddef.h>

/* What a number stands for; decides which unit symbols are accepted. */
enum qty_kind {
	QTY_NUMBER,       /* dimensionless: no unit symbol allowed */
	QTY_VOLTAGE,      /* V */
	QTY_CURRENT,      /* A */
	QTY_RESISTANCE,   /* Ω, ohm, R (optional) */
	QTY_CONDUCTANCE,  /* S */
	QTY_POWER,        /* W */
	QTY_TEMPERATURE,  /* °C, degC, C; K is accepted and converted to °C */
	QTY_ENERGY_EV,    /* eV (band-gap energies) */
	QTY_THERMAL_COND, /* W/K (dissipation constant) */
	QTY_PERCENT,      /* % (value stored as a fraction: "5%" -> 0.05) */
	QTY_KIND_COUNT
};

/* Status of qty_parse. */
enum qty_status {
	QTY_OK = 0,
	QTY_EMPTY,        /* nothing but blanks */
	QTY_BAD_NUMBER,   /* no number, or a malformed one ("1e", "abc") */
	QTY_BAD_SUFFIX,   /* unknown prefix/unit or trailing garbage ("1kk") */
	QTY_WRONG_UNIT,   /* a unit of another quantity ("12 A" for a voltage) */
	QTY_NOT_FINITE,   /* NaN, infinity, or overflow */
};

/*
 * Parse TEXT as a quantity of KIND into *OUT.
 * Accepts a decimal number (optionally with exponent), an optional SI prefix
 * (p n u µ m k M G; also T and f), and an optional unit symbol of KIND, with
 * optional blanks between number and prefix/unit: "4.7k", "4.7 kΩ", "12 V",
 * "2.5p", "1e-14", "4k7" (prefix as decimal point).  On failure *OUT is left
 * untouched and, when ERR is not NULL, a one-line message saying what was
 * found and what was expected is written to ERR (at most ERRLEN bytes).
 */
enum qty_status qty_parse(const char *text, enum qty_kind kind, double *out,
                          char *err, size_t errlen);

/* The canonical unit symbol of KIND ("V", "A", "Ω", ...; "" for a number). */
const char *qty_unit(enum qty_kind kind);

/* Plain ASCII unit symbol of KIND ("ohm" for Ω, "degC" for °C). */
const char *qty_unit_ascii(enum qty_kind kind);

/* A short noun for KIND, for messages ("a voltage", "a resistance"). */
const char *qty_noun(enum qty_kind kind);

/*
 * Format VALUE in engineering notation with SIG significant digits (1..17)
 * and the unit of KIND: "654.3 mV", "4.31 mA", "1.5 kΩ".  ASCII selects
 * "ohm"/"u"/"degC" instead of "Ω"/"µ"/"°C".  Writes at most N bytes to BUF
 * (always terminated) and returns BUF.  Non-finite values print as "inf",
 * "-inf" or "nan".
 */
char *qty_format(char *buf, size_t n, double value, enum qty_kind kind,
                 int sig, int ascii);

/*
 * Format VALUE as a plain number that reads back bit-for-bit ("%.17g"
 * shortened to the fewest digits that round-trip).  Locale-independent.
 */
char *qty_format_exact(char *buf, size_t n, double value);

#endif
