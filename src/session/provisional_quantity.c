/*
 * provisional_quantity.c - stand-ins for qty_parse and qty_format_exact,
 * built only while src/core/quantity.c lacks them (see meson.build): plain
 * numbers with an optional SI prefix letter, no unit symbols.  Deleted once
 * the quantity module lands.
 */
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "core/quantity.h"

/* Stand-in: a number and an optional SI prefix letter. */
enum qty_status qty_parse(const char *text, enum qty_kind kind, double *out,
                          char *err, size_t errlen)
{
	(void)kind;
	while (*text == ' ')
		text++;
	if (*text == '\0') {
		if (err != NULL)
			snprintf(err, errlen, "empty");
		return QTY_EMPTY;
	}
	char *end;
	errno = 0;
	double x = strtod(text, &end);
	if (end == text) {
		if (err != NULL)
			snprintf(err, errlen, "not a number");
		return QTY_BAD_NUMBER;
	}
	static const char prefixes[] = "fpnumkMGT";
	static const double scale[] = { 1e-15, 1e-12, 1e-9, 1e-6, 1e-3,
	                                1e3, 1e6, 1e9, 1e12 };
	while (*end == ' ')
		end++;
	if (*end != '\0') {
		const char *p = strchr(prefixes, *end);
		if (p == NULL || end[1] != '\0') {
			if (err != NULL)
				snprintf(err, errlen, "unknown suffix '%s'", end);
			return QTY_BAD_SUFFIX;
		}
		x *= scale[p - prefixes];
	}
	if (!isfinite(x) || errno == ERANGE) {
		if (err != NULL)
			snprintf(err, errlen, "not finite");
		return QTY_NOT_FINITE;
	}
	*out = x;
	return QTY_OK;
}

/* Stand-in: the shortest %.Ng that reads back exactly. */
char *qty_format_exact(char *buf, size_t n, double value)
{
	for (int p = 1; p <= 17; p++) {
		snprintf(buf, n, "%.*g", p, value);
		if (strtod(buf, NULL) == value)
			break;
	}
	return buf;
}
