/*
 * eseries.h - the preferred-number series of IEC 60063:2015 (E6, E12, E24,
 * E48, E96, E192) and lookups along them across decades.
 *
 * A series is a table of mantissas in [1, 10): E6 to E24 with two
 * significant digits, E48 to E192 with three.  A value of the series is a
 * mantissa times a power of ten; values are formed as integer times or
 * over an exact power of ten, so 4.7e3 here equals the double that "4.7e3"
 * parses to.  Inputs from 1e-15 up to (not including) 1e15 are supported.
 *
 * Lookups treat a value within ESERIES_SNAP (relative) of a series value as
 * that value, so a computed 4699.9999999 is "on" 4.7k.
 */
#ifndef BIASLINE_ESERIES_H
#define BIASLINE_ESERIES_H

#include <stddef.h>

/* Relative distance within which a value counts as a series value. */
#define ESERIES_SNAP 1e-9

/* The series. */
enum eseries {
	ESERIES_E6,
	ESERIES_E12,
	ESERIES_E24,
	ESERIES_E48,
	ESERIES_E96,
	ESERIES_E192,
	ESERIES_COUNT
};

/* The series name, "E24". */
const char *eseries_name(enum eseries s);

/* Series from a name ("E24", "e24" or "24"); returns 0 or -1. */
int eseries_from_name(const char *name, enum eseries *s);

/* Number of values per decade (6 ... 192). */
size_t eseries_count(enum eseries s);

/* Significant digits of the series' mantissas (2 or 3). */
int eseries_digits(enum eseries s);

/*
 * The K-th mantissa of S (0 <= K < count) as an integer with
 * eseries_digits(S) digits: 47 for 4.7 in E24, 920 for 9.20 in E192.
 * Returns 0 when K is out of range.
 */
unsigned eseries_mantissa(enum eseries s, size_t k);

/*
 * The largest series value <= X into *OUT.  Returns 0, or -1 when X is not
 * finite and positive or outside the supported range.
 */
int eseries_lower(enum eseries s, double x, double *out);

/* The smallest series value >= X into *OUT; returns 0 or -1 as above. */
int eseries_higher(enum eseries s, double x, double *out);

/*
 * The series value nearest X on a logarithmic scale (the smaller ratio;
 * an exact tie goes to the higher value) into *OUT; returns 0 or -1.
 */
int eseries_nearest(enum eseries s, double x, double *out);

/*
 * One step along the series from X: the next value strictly above X when
 * DIR > 0, strictly below when DIR < 0 (X on the series moves to its
 * neighbour; X between values moves to the one on that side).  Returns 0,
 * or -1 (bad X, DIR == 0, or the end of the supported range).
 */
int eseries_step(enum eseries s, double x, int dir, double *out);

#endif
