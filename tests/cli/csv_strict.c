/*
 * csv_strict.c - a strict RFC 4180 reader for the tests: it accepts only
 * what the RFC's grammar (section 2 and its ABNF) allows, with a header
 * row, and checks that the header names are unique and non-empty and that
 * every record has as many fields as the header.
 *
 *   csv_strict FILE           check; print "N records, M columns"
 *   csv_strict -t FILE        check; print each record (header included)
 *                             with its fields decoded and joined by TAB
 *   csv_strict -c NAME FILE   check; print the decoded values of column
 *                             NAME, one a line
 *
 * Exit status: 0 the file is strict RFC 4180, 1 it is not (the first
 * problem and its byte offset go to standard error), 2 bad usage or an
 * unreadable file.
 *
 * The rules (Shafranovich, RFC 4180, 2005, section 2): records end in
 * CRLF (the last one may end the file without it); fields are separated
 * by commas; a field is either plain TEXTDATA (no comma, double quote, CR
 * or LF) or enclosed in double quotes, inside which a double quote is
 * written twice and commas, CR and LF are data; nothing may follow a
 * closing quote but a comma, CRLF or the end of the file.
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define MAX_FIELDS 256

/* The file read whole. */
struct text {
	char *s;
	size_t n;
};

/* One decoded record. */
struct record {
	size_t nf;
	char *f[MAX_FIELDS];
};

/* Report a problem at byte OFF and exit 1. */
static void fail(const char *what, size_t off)
{
	fprintf(stderr, "csv_strict: not RFC 4180 at byte %zu: %s\n", off, what);
	exit(1);
}

/* Read PATH whole. */
static struct text slurp(const char *path)
{
	struct text t = { NULL, 0 };
	FILE *f = fopen(path, "rb");
	if (f == NULL) {
		perror(path);
		exit(2);
	}
	size_t cap = 0;
	for (;;) {
		if (t.n + 4096 + 1 > cap) {
			cap = 2 * cap + 8192;
			t.s = realloc(t.s, cap);
			if (t.s == NULL)
				exit(2);
		}
		size_t got = fread(t.s + t.n, 1, 4096, f);
		t.n += got;
		if (got == 0)
			break;
	}
	fclose(f);
	t.s[t.n] = '\0';
	return t;
}

/*
 * Parse one record starting at *AT into R (fields malloc'd); advance *AT
 * past its CRLF.
 */
static void parse_record(const struct text *t, size_t *at, struct record *r)
{
	size_t i = *at;
	r->nf = 0;
	for (;;) {
		if (r->nf >= MAX_FIELDS)
			fail("too many fields", i);
		char *buf = malloc(t->n - i + 1);
		size_t k = 0;
		if (buf == NULL)
			exit(2);
		if (i < t->n && t->s[i] == '"') {
			i++;
			for (;;) {
				if (i >= t->n)
					fail("a quoted field is not closed", i);
				if (t->s[i] == '"') {
					if (i + 1 < t->n && t->s[i + 1] == '"') {
						buf[k++] = '"';
						i += 2;
						continue;
					}
					i++;
					break;
				}
				buf[k++] = t->s[i++];
			}
			if (i < t->n && t->s[i] != ',' && t->s[i] != '\r')
				fail("text after a closing quote", i);
		} else {
			while (i < t->n && t->s[i] != ',' && t->s[i] != '\r') {
				if (t->s[i] == '"')
					fail("a double quote in an unquoted field", i);
				if (t->s[i] == '\n')
					fail("a bare LF (records end in CRLF)", i);
				buf[k++] = t->s[i++];
			}
		}
		buf[k] = '\0';
		r->f[r->nf++] = buf;
		if (i >= t->n)
			break;
		if (t->s[i] == ',') {
			i++;
			continue;
		}
		/* t->s[i] == '\r' */
		if (i + 1 >= t->n || t->s[i + 1] != '\n')
			fail("a bare CR (records end in CRLF)", i);
		i += 2;
		break;
	}
	*at = i;
}

/* Free R's fields. */
static void free_record(struct record *r)
{
	for (size_t k = 0; k < r->nf; k++)
		free(r->f[k]);
	r->nf = 0;
}

int main(int argc, char **argv)
{
	int tsv = 0;
	const char *column = NULL;
	int a = 1;
	if (a < argc && strcmp(argv[a], "-t") == 0) {
		tsv = 1;
		a++;
	} else if (a + 1 < argc && strcmp(argv[a], "-c") == 0) {
		column = argv[a + 1];
		a += 2;
	}
	if (a != argc - 1) {
		fprintf(stderr, "usage: csv_strict [-t | -c NAME] FILE\n");
		return 2;
	}
	struct text t = slurp(argv[a]);
	if (t.n == 0)
		fail("an empty file (no header)", 0);
	if (t.n < 2 || t.s[t.n - 2] != '\r' || t.s[t.n - 1] != '\n')
		fail("the last record does not end in CRLF", t.n);
	size_t at = 0, nrec = 0;
	struct record head, r;
	parse_record(&t, &at, &head);
	for (size_t k = 0; k < head.nf; k++) {
		if (head.f[k][0] == '\0')
			fail("an empty column name in the header", 0);
		for (size_t j = 0; j < k; j++)
			if (strcmp(head.f[j], head.f[k]) == 0) {
				fprintf(stderr, "csv_strict: column '%s' twice\n", head.f[k]);
				fail("a duplicate column name", 0);
			}
	}
	long col = -1;
	if (column != NULL) {
		for (size_t k = 0; k < head.nf; k++)
			if (strcmp(head.f[k], column) == 0)
				col = (long)k;
		if (col < 0) {
			fprintf(stderr, "csv_strict: no column '%s'\n", column);
			return 1;
		}
	}
	if (tsv)
		for (size_t k = 0; k < head.nf; k++)
			printf("%s%s", head.f[k], k + 1 < head.nf ? "\t" : "\n");
	while (at < t.n) {
		size_t start = at;
		parse_record(&t, &at, &r);
		if (r.nf != head.nf) {
			fprintf(stderr, "csv_strict: record %zu has %zu fields, the "
			        "header %zu\n", nrec + 1, r.nf, head.nf);
			fail("a record of the wrong length", start);
		}
		if (tsv)
			for (size_t k = 0; k < r.nf; k++)
				printf("%s%s", r.f[k], k + 1 < r.nf ? "\t" : "\n");
		if (col >= 0)
			printf("%s\n", r.f[col]);
		free_record(&r);
		nrec++;
	}
	if (!tsv && col < 0)
		printf("%zu records, %zu columns\n", nrec, head.nf);
	free_record(&head);
	free(t.s);
	return 0;
}
