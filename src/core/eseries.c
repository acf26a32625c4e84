/*
 * eseries.c - IEC 60063:2015 preferred-number tables and lookups.
 *
 * The tables are typed from memory of IEC 60063:2015.  The standard
 * builds each series from the geometric progression 10^(k/N), rounded to
 * two significant digits (E6-E24) or three (E48-E192), and keeps a few
 * older values that differ from that rounding: in E24 2.7, 3.0, 3.3, 3.6,
 * 3.9, 4.3, 4.7 and 8.2 (and so E12's 2.7, 3.3, 3.9, 4.7, 8.2 and E6's
 * 3.3, 4.7), in E192 9.20 (the progression gives 9.19).  tests/core/
 * test_eseries.c checks every entry against that rule and its exceptions.
 */
#include "eseries.h"

#include <math.h>
#include <string.h>

/* E24; E12 and E6 are every second and fourth entry. */
static const unsigned short eseries_e24[24] = {
	10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30,
	33, 36, 39, 43, 47, 51, 56, 62, 68, 75, 82, 91,
};

/* E192; E96 and E48 are every second and fourth entry. */
static const unsigned short eseries_e192[192] = {
	100, 101, 102, 104, 105, 106, 107, 109, 110, 111, 113, 114,
	115, 117, 118, 120, 121, 123, 124, 126, 127, 129, 130, 132,
	133, 135, 137, 138, 140, 142, 143, 145, 147, 149, 150, 152,
	154, 156, 158, 160, 162, 164, 165, 167, 169, 172, 174, 176,
	178, 180, 182, 184, 187, 189, 191, 193, 196, 198, 200, 203,
	205, 208, 210, 213, 215, 218, 221, 223, 226, 229, 232, 234,
	237, 240, 243, 246, 249, 252, 255, 258, 261, 264, 267, 271,
	274, 277, 280, 284, 287, 291, 294, 298, 301, 305, 309, 312,
	316, 320, 324, 328, 332, 336, 340, 344, 348, 352, 357, 361,
	365, 370, 374, 379, 383, 388, 392, 397, 402, 407, 412, 417,
	422, 427, 432, 437, 442, 448, 453, 459, 464, 470, 475, 481,
	487, 493, 499, 505, 511, 517, 523, 530, 536, 542, 549, 556,
	562, 569, 576, 583, 590, 597, 604, 612, 619, 626, 634, 642,
	649, 657, 665, 673, 681, 690, 698, 706, 715, 723, 732, 741,
	750, 759, 768, 777, 787, 796, 806, 816, 825, 835, 845, 856,
	866, 876, 887, 898, 909, 920, 931, 942, 953, 965, 976, 988,
};

/* Per series: name, values per decade, digits, and the table stride. */
static const struct {
	const char *name;
	size_t count;
	int digits;
	const unsigned short *table;
	size_t stride;
} eseries_info[ESERIES_COUNT] = {
	[ESERIES_E6] = { "E6", 6, 2, eseries_e24, 4 },
	[ESERIES_E12] = { "E12", 12, 2, eseries_e24, 2 },
	[ESERIES_E24] = { "E24", 24, 2, eseries_e24, 1 },
	[ESERIES_E48] = { "E48", 48, 3, eseries_e192, 4 },
	[ESERIES_E96] = { "E96", 96, 3, eseries_e192, 2 },
	[ESERIES_E192] = { "E192", 192, 3, eseries_e192, 1 },
};

/* Supported decades: values 1e-15 ... 1e15. */
#define ESERIES_DECADE_MIN (-15)
#define ESERIES_DECADE_MAX 14

/* Exact powers of ten 10^0 ... 10^22 (all exactly representable). */
static double eseries_pow10(int k)
{
	double p = 1.0;
	for (int j = 0; j < k; j++)
		p *= 10.0;
	return p;
}

/* True when S is a valid series. */
static int eseries_valid(enum eseries s)
{
	return (unsigned)s < ESERIES_COUNT;
}

/* The series name. */
const char *eseries_name(enum eseries s)
{
	return eseries_valid(s) ? eseries_info[s].name : "?";
}

/* Series from a name. */
int eseries_from_name(const char *name, enum eseries *s)
{
	if (name == NULL)
		return -1;
	const char *p = name;
	if (*p == 'E' || *p == 'e')
		p++;
	for (int k = 0; k < ESERIES_COUNT; k++) {
		if (strcmp(p, eseries_info[k].name + 1) == 0) {
			*s = (enum eseries)k;
			return 0;
		}
	}
	return -1;
}

/* Values per decade. */
size_t eseries_count(enum eseries s)
{
	return eseries_valid(s) ? eseries_info[s].count : 0;
}

/* Significant digits. */
int eseries_digits(enum eseries s)
{
	return eseries_valid(s) ? eseries_info[s].digits : 0;
}

/* The K-th mantissa as an integer. */
unsigned eseries_mantissa(enum eseries s, size_t k)
{
	if (!eseries_valid(s) || k >= eseries_info[s].count)
		return 0;
	return eseries_info[s].table[k * eseries_info[s].stride];
}

/*
 * Value number J of S counted from 1 at 10^0 (J may be negative): the
 * mantissa times 10^decade, formed with one correctly rounded operation.
 */
static double eseries_value(enum eseries s, long j)
{
	long n = (long)eseries_info[s].count;
	long dec = j >= 0 ? j / n : -((-j + n - 1) / n);
	long k = j - dec * n;
	double m = (double)eseries_mantissa(s, (size_t)k);
	long e = dec - (eseries_info[s].digits - 1);
	return e >= 0 ? m * eseries_pow10((int)e) : m / eseries_pow10((int)-e);
}

/* Index range of the supported values. */
static void eseries_span(enum eseries s, long *jmin, long *jmax)
{
	long n = (long)eseries_info[s].count;
	*jmin = (long)ESERIES_DECADE_MIN * n;
	*jmax = (long)(ESERIES_DECADE_MAX + 1) * n - 1;
}

/* True when X lies in the supported range [1e-15, 1e15). */
static int eseries_in_range(double x)
{
	return isfinite(x) && x >= 1e-15 * (1.0 - ESERIES_SNAP) && x < 1e15;
}

/*
 * The index of the largest value <= X (with the snap allowance) into *J,
 * for X in the supported range, and whether X is on that value.
 */
static long eseries_floor_index(enum eseries s, double x, int *on)
{
	long jmin, jmax;
	eseries_span(s, &jmin, &jmax);
	long n = (long)eseries_info[s].count;
	/* A guess from the logarithm, then exact comparisons either way. */
	long g = (long)floor(log10(x) * (double)n);
	if (g < jmin)
		g = jmin;
	if (g > jmax)
		g = jmax;
	double xs = x * (1.0 + ESERIES_SNAP);
	while (g > jmin && eseries_value(s, g) > xs)
		g--;
	while (g < jmax && eseries_value(s, g + 1) <= xs)
		g++;
	double v = eseries_value(s, g);
	*on = fabs(v - x) <= ESERIES_SNAP * v;
	return g;
}

/* The largest series value <= X. */
int eseries_lower(enum eseries s, double x, double *out)
{
	int on;
	if (!eseries_valid(s) || !eseries_in_range(x))
		return -1;
	*out = eseries_value(s, eseries_floor_index(s, x, &on));
	return 0;
}

/* The smallest series value >= X. */
int eseries_higher(enum eseries s, double x, double *out)
{
	int on;
	long jmin, jmax;
	if (!eseries_valid(s) || !eseries_in_range(x))
		return -1;
	eseries_span(s, &jmin, &jmax);
	long j = eseries_floor_index(s, x, &on);
	if (on) {
		*out = eseries_value(s, j);
		return 0;
	}
	if (j >= jmax)
		return -1;
	*out = eseries_value(s, j + 1);
	return 0;
}

/* The nearest series value on a log scale. */
int eseries_nearest(enum eseries s, double x, double *out)
{
	double lo, hi;
	if (eseries_lower(s, x, &lo) != 0)
		return -1;
	if (eseries_higher(s, x, &hi) != 0) {
		*out = lo;
		return 0;
	}
	/* The smaller of the ratios x/lo and hi/x; a tie goes up. */
	*out = x / lo < hi / x ? lo : hi;
	return 0;
}

/* One step along the series. */
int eseries_step(enum eseries s, double x, int dir, double *out)
{
	int on;
	long jmin, jmax;
	if (dir == 0 || !eseries_valid(s) || !eseries_in_range(x))
		return -1;
	eseries_span(s, &jmin, &jmax);
	long j = eseries_floor_index(s, x, &on);
	if (dir > 0) {
		if (j >= jmax)
			return -1;
		*out = eseries_value(s, j + 1);
	} else if (on) {
		if (j <= jmin)
			return -1;
		*out = eseries_value(s, j - 1);
	} else {
		*out = eseries_value(s, j);
	}
	return 0;
}
