/*
 * csv.c - the RFC 4180 writer (see csv.h).
 */
#include "csv.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "exit_status.h"

/* Start a table. */
void csv_init(struct csv *w, FILE *out)
{
	memset(w, 0, sizeof *w);
	w->out = out;
	w->ok = true;
}

/* Note the first thing that went wrong. */
static void csv_fail(struct csv *w, const char *what, const char *name)
{
	if (w->ok)
		snprintf(w->problem, sizeof w->problem, "%s%s%s%s", what,
		         name ? " '" : "", name ? name : "", name ? "'" : "");
	w->ok = false;
}

/* Write TEXT as one field, quoted when it holds , " CR or LF. */
static void csv_put_text(FILE *out, const char *text)
{
	if (strpbrk(text, ",\"\r\n") == NULL) {
		fputs(text, out);
		return;
	}
	fputc('"', out);
	for (const char *p = text; *p != '\0'; p++) {
		if (*p == '"')
			fputc('"', out);
		fputc(*p, out);
	}
	fputc('"', out);
}

/* The separator before a field, and the count. */
static void csv_next(struct csv *w)
{
	if (w->field > 0)
		fputc(',', w->out);
	w->field++;
}

/* A header column. */
void csv_column(struct csv *w, const char *name)
{
	if (w->header_done) {
		csv_fail(w, "a column after the first record:", name);
		return;
	}
	if (name[0] == '\0')
		csv_fail(w, "an empty column name", NULL);
	for (size_t k = 0; k < w->ncols && k < CSV_MAX_COLUMNS; k++)
		if (strcmp(w->names[k], name) == 0)
			csv_fail(w, "a duplicate column", name);
	if (w->ncols < CSV_MAX_COLUMNS)
		snprintf(w->names[w->ncols], CSV_NAME_MAX, "%s", name);
	else
		csv_fail(w, "too many columns at", name);
	w->ncols++;
	csv_next(w);
	csv_put_text(w->out, name);
}

/* The column name for KEY in KIND. */
const char *csv_column_name(char *buf, size_t n, const char *key,
                            enum qty_kind kind)
{
	const char *u = qty_unit_ascii(kind);
	if (u[0] == '\0')
		snprintf(buf, n, "%s", key);
	else if (strcmp(u, "%") == 0)
		snprintf(buf, n, "%s_percent", key);
	else if (strcmp(u, "W/K") == 0)
		snprintf(buf, n, "%s_W_per_K", key);
	else if (strcmp(u, "K/W") == 0)
		snprintf(buf, n, "%s_K_per_W", key);
	else if (strcmp(u, "V/K") == 0)
		snprintf(buf, n, "%s_V_per_K", key);
	else
		snprintf(buf, n, "%s_%s", key, u);
	return buf;
}

/* A header column with its unit. */
void csv_column_unit(struct csv *w, const char *key, enum qty_kind kind)
{
	char name[CSV_NAME_MAX];
	csv_column(w, csv_column_name(name, sizeof name, key, kind));
}

/* A record field is allowed here. */
static void csv_field(struct csv *w)
{
	if (!w->header_done)
		csv_fail(w, "a record field before the header ended", NULL);
	csv_next(w);
}

/* A text field. */
void csv_text(struct csv *w, const char *text)
{
	csv_field(w);
	csv_put_text(w->out, text != NULL ? text : "");
}

/* The text of a finite number. */
const char *csv_format_number(char *buf, size_t n, double v)
{
	if (v == 0.0) /* a negative zero too: it reads back equal */
		snprintf(buf, n, "0");
	else if (fabs(v) < 1e15 && v == nearbyint(v))
		snprintf(buf, n, "%.0f", v);
	else
		qty_format_exact(buf, n, v);
	return buf;
}

/* A number field. */
void csv_number(struct csv *w, double v)
{
	csv_field(w);
	if (isnan(v))
		return;
	if (isinf(v)) {
		fputs(v < 0 ? "-inf" : "inf", w->out);
		return;
	}
	char buf[48];
	fputs(csv_format_number(buf, sizeof buf, v), w->out);
}

/* A whole-number field. */
void csv_count(struct csv *w, unsigned long long v)
{
	csv_field(w);
	fprintf(w->out, "%llu", v);
}

/* An empty field. */
void csv_empty(struct csv *w)
{
	csv_field(w);
}

/* End a row. */
void csv_end_row(struct csv *w)
{
	if (!w->header_done) {
		if (w->ncols == 0)
			csv_fail(w, "a header without columns", NULL);
		w->header_done = true;
	} else if (w->field != w->ncols) {
		char what[96];
		snprintf(what, sizeof what, "a record of %zu fields under %zu "
		         "columns", w->field, w->ncols);
		csv_fail(w, what, NULL);
	}
	fputs("\r\n", w->out);
	w->field = 0;
}

/* Whether the table is well formed so far. */
bool csv_ok(const struct csv *w)
{
	return w->ok && w->field == 0;
}

/* The exit status of a command that wrote W. */
int csv_finish(const struct csv *w, const char *cmd)
{
	if (csv_ok(w))
		return EXIT_OK_CODE;
	fprintf(stderr, "biasline %s: internal error: the CSV table is broken "
	        "(%s)\n", cmd, w->ok ? "an unfinished record" : w->problem);
	return EXIT_SOFTWARE;
}
