/* quantity.c - provisional formatter until the quantity module lands. */
#include "quantity.h"

#include <stdio.h>

/* Provisional: plain %g. */
char *qty_format(char *buf, size_t n, double value, enum qty_kind kind,
                 int sig, int ascii)
{
	(void)kind;
	(void)ascii;
	snprintf(buf, n, "%.*g", sig, value);
	return buf;
}
