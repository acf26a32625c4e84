/*
 * quantity.h - physical quantities: parsing numbers with SI prefixes and
 * unit symbols, and formatting them in engineering notation.
 *
 * Pure functions, no allocation, locale-independent (the decimal separator
 * is always '.', whatever LC_NUMERIC says).
 */
#ifndef BIASLINE_QUANTITY_H
#define BIASLINE_QUANTITY_H

#include <stdbool.h>
#include <stddef.h>

/* What a number stands for; decides which unit symbols are accepted. */
enum qty_kind {
	QTY_NUMBER,       /* dimensionless: no unit symbol allowed */
	QTY_VOLTAGE,      /* V */
	QTY_CURRENT,      /* A */
	QTY_RESISTANCE,   /* Ω, ohm, ohms, R */
	QTY_CONDUCTANCE,  /* S */
	QTY_POWER,        /* W */
	QTY_TEMPERATURE,  /* °C, ℃, degC, C; K is accepted and converted to °C */
	QTY_ENERGY_EV,    /* eV (band-gap energies) */
	QTY_THERMAL_COND, /* W/K (dissipation constant) */
	QTY_PERCENT,      /* % (value stored as a fraction: "5%" -> 0.05) */
	QTY_CAPACITANCE,  /* F */
	QTY_INDUCTANCE,   /* H */
	QTY_THERMAL_RES,  /* K/W (junction-to-ambient thermal resistance) */
	QTY_TEMPCO,       /* V/K (temperature coefficient of a voltage) */
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
 *
 * Details (all symbols case-sensitive):
 * - number: [+-] digits [. digits] [e|E [+-] digits]; ".5" and "5." are
 *   fine; hex, "inf", "nan", ".inf" are refused.  White space around the
 *   whole text is ignored.  Between number and prefix/unit: space, tab,
 *   U+00A0, U+2009 or U+202F; none between prefix and unit.
 * - prefixes: f p n u µ (U+00B5 or U+03BC) m k M G T.  Not allowed for
 *   QTY_NUMBER, QTY_TEMPERATURE, QTY_PERCENT or QTY_THERMAL_RES.
 * - units: V; A; Ω (U+03A9 or U+2126), ohm, ohms, R; S; W; °C, ℃ (U+2103),
 *   degC, C, K (kelvin, converted: 300 K -> 26.85); eV; W/K; %; K/W,
 *   °C/W, degC/W, C/W (a thermal resistance: a kelvin and a degree
 *   Celsius are the same step); V/K, V/°C, V/degC (so "-2 mV/K").
 * - "4k7" = 4.7k, "4R7" = 4.7 Ω: a prefix or R between integer digits
 *   stands for the decimal point.
 * - QTY_PERCENT reads the number as percent with or without the "%" sign:
 *   "5" and "5 %" both give 0.05.
 * - the result is the double nearest the decimal value (prefix included:
 *   "4.7k" is exactly 4700.0); an underflow gives 0 or a subnormal.
 */
enum qty_status qty_parse(const char *text, enum qty_kind kind, double *out,
                          char *err, size_t errlen);

/*
 * True when the number in TEXT has a digit other than 0 before its
 * exponent: a nonzero value was written, so a 0 read from it is an
 * underflow ("1e-400"), not a zero.
 */
bool qty_text_nonzero(const char *text);

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
 *
 * Details: SIG digits are always shown (no trimming: "1.000 V"); zero
 * prints as "0 V".  Prefixes f..T; beyond them the mantissa keeps an
 * exponent that is a multiple of 3 ("22e-18 A").  Temperatures, percents
 * and thermal resistances take no prefix ("25.0 °C", "5.00 %", "2155 K/W";
 * percent shows VALUE * 100).
 * QTY_NUMBER prints like "%.*g".  A truncated result is cut between UTF-8
 * sequences.
 */
char *qty_format(char *buf, size_t n, double value, enum qty_kind kind,
                 int sig, int ascii);

/*
 * As qty_format, but with trailing zeros of the mantissa dropped: for
 * values a person typed ("12 V", "2.2 kΩ"), where fixed digits are noise.
 */
char *qty_format_short(char *buf, size_t n, double value, enum qty_kind kind,
                       int sig, int ascii);

/*
 * Format VALUE as a plain number that reads back bit-for-bit ("%.17g"
 * shortened to the fewest digits that round-trip).  Locale-independent.
 */
char *qty_format_exact(char *buf, size_t n, double value);

#endif
