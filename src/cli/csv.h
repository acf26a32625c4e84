/*
 * csv.h - the one CSV writer every command uses (RFC 4180).
 *
 * A table is a header row of unique column names, then records with
 * exactly as many fields.  Records end in CR LF (RFC 4180, section 2);
 * a field holding a comma, a double quote, CR or LF is put in double
 * quotes with each quote doubled; numbers are written in the shortest
 * decimal form that reads back to the same double (whole numbers in
 * full); a quantity with no
 * value here (NaN) is an empty field; an infinite one is "inf" or
 * "-inf".  One stream holds one table.
 *
 * Adding a column is one csv_column call in the header and one field call
 * in each record, in the same place: the writer counts the fields of each
 * record against the header, and refuses a duplicate column name, so a
 * mismatch shows as csv_ok() == false (the command then exits 70) rather
 * than as a broken file.
 */
#ifndef BIASLINE_CSV_H
#define BIASLINE_CSV_H

#include <stdbool.h>
#include <stddef.h>
#include <stdio.h>

#include "core/quantity.h"

#define CSV_MAX_COLUMNS 64
#define CSV_NAME_MAX 96

/* A table being written to a stream. */
struct csv {
	FILE *out;
	size_t ncols;            /* columns of the header */
	size_t field;            /* fields written in the current row */
	bool header_done;
	bool ok;                 /* false after a duplicate name or a bad row */
	char problem[160];       /* what went wrong first, when !ok */
	char names[CSV_MAX_COLUMNS][CSV_NAME_MAX];
};

/* Start a table on OUT. */
void csv_init(struct csv *w, FILE *out);

/* Add a column named NAME to the header (before the first record). */
void csv_column(struct csv *w, const char *name);

/* Add a column named KEY_UNIT for a quantity of KIND ("rs_ohm", "gain"). */
void csv_column_unit(struct csv *w, const char *key, enum qty_kind kind);

/* The column name for KEY in unit KIND into BUF: "rs_ohm", "ideality". */
const char *csv_column_name(char *buf, size_t n, const char *key,
                            enum qty_kind kind);

/* A text field (quoted when it must be). */
void csv_text(struct csv *w, const char *text);

/* A number field: shortest round trip; NaN empty; "inf", "-inf". */
void csv_number(struct csv *w, double v);

/*
 * The CSV text of a finite number V into BUF: whole numbers below 10^15
 * in full ("10000"), others in the shortest form that reads back to the
 * same double ("0.30000000000000004", "2.5e+06").
 */
const char *csv_format_number(char *buf, size_t n, double v);

/* A whole-number field. */
void csv_count(struct csv *w, unsigned long long v);

/* An empty field (no value here). */
void csv_empty(struct csv *w);

/* End the header or the current record. */
void csv_end_row(struct csv *w);

/* True while every row matched the header and the names were unique. */
bool csv_ok(const struct csv *w);

/*
 * The exit status of a command that wrote W: 0 when it is well formed,
 * else EXIT_SOFTWARE with a message "biasline CMD: internal error: ..."
 * on standard error.
 */
int csv_finish(const struct csv *w, const char *cmd);

#endif
