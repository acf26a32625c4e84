/*
 * points_file.h - tables of measured points in text files: the reader
 * shared by the measured model's points_file: and by `biasline fit`.
 *
 * Format.  One point a line; fields separated by commas, semicolons or
 * tabs (whichever the first line that is not blank or a comment uses);
 * blank lines skipped; '#' starts a comment (a whole line, or the end of
 * one).  The first line may be a header naming the columns, each name
 * optionally followed by its unit in parentheses or brackets:
 *
 *     V (V), I (mA), T (degC)
 *
 * With a header, columns are found by name (V/voltage/VF/VBE..., I/
 * current/IF/IC..., T/temperature..., R/resistance...) and columns with
 * other names are ignored; when no name is known the columns are taken in
 * the caller's order.  A unit in the header applies to every plain number
 * of its column; without one a value is a number in SI units.  A value may
 * carry its own prefix and unit ("1.2 mA", "4k7") unless the header's unit
 * has a prefix ("20m" under "I (mA)" is refused as unclear).
 *
 * Every error names the file, the line, the column (the character where
 * the field starts) and the row (the N-th point).
 */
#ifndef BIASLINE_POINTS_FILE_H
#define BIASLINE_POINTS_FILE_H

#include <stdbool.h>
#include <stddef.h>

#include "core/quantity.h"
#include "session/session.h"

#define POINTS_MAX_COLUMNS 4

/* What a column holds. */
enum points_role {
	POINTS_VOLTAGE,      /* V, volts */
	POINTS_CURRENT,      /* I, amperes */
	POINTS_TEMPERATURE,  /* T, degrees Celsius (K converted) */
	POINTS_RESISTANCE,   /* R, ohms */
};

/* The columns a caller wants, in their default (headerless) order. */
struct points_spec {
	size_t ncols;                              /* 1 .. POINTS_MAX_COLUMNS */
	enum points_role role[POINTS_MAX_COLUMNS];
	bool optional[POINTS_MAX_COLUMNS];         /* only trailing ones */
	size_t max_rows;                           /* refuse more rows */
};

/*
 * The points read: column C of row K is col[C][K] (in the spec's order);
 * a missing optional column has present[C] false and col[C] NULL.  LINE[K]
 * is row K's line in the file and COLUMN[C][K] the character where its
 * field starts.  Owned: points_table_fini frees.
 */
struct points_table {
	size_t n;
	bool present[POINTS_MAX_COLUMNS];
	double *col[POINTS_MAX_COLUMNS];
	unsigned *line;
	unsigned *column[POINTS_MAX_COLUMNS];
	char unit[POINTS_MAX_COLUMNS][32];         /* header unit, or "" */
	bool base_unit[POINTS_MAX_COLUMNS];        /* it has no prefix */
};

/*
 * Parse LEN bytes of TEXT (need not be terminated) as a points table per
 * SPEC into T.  NAME is the file name for messages and KEY the dotted key
 * they carry ("" for none).  Returns 0, or -1 with ERR filled (T is then
 * empty).  Zero rows is not an error here: the caller says how many it
 * needs.
 */
int points_parse(const char *name, const char *key, const char *text,
                 size_t len, const struct points_spec *spec,
                 struct points_table *t, struct session_error *err);

/*
 * Read the regular file PATH (at most 1 MiB) and parse it as above.
 * Returns SESSION_OK, SESSION_NO_INPUT when the file cannot be read, or
 * SESSION_BAD_DATA for bad content, with ERR filled.
 */
enum session_status points_file_read(const char *path, const char *key,
                                     const struct points_spec *spec,
                                     struct points_table *t,
                                     struct session_error *err);

/* Free what T holds (T may be filled again afterwards). */
void points_table_fini(struct points_table *t);

/* The letter of ROLE for messages and CSV headings: "V", "I", "T", "R". */
const char *points_role_letter(enum points_role role);

/* The quantity kind of ROLE. */
enum qty_kind points_role_kind(enum points_role role);

#endif
