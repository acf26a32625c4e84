/*
 * desc.c - the plot description's container: items appended in drawing
 * order (growing array), copied polylines, legend entries and caption
 * lines.
 */
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "render/plot.h"

/* An empty description. */
void plot_desc_init(struct plot_desc *d)
{
	memset(d, 0, sizeof *d);
	d->x.hi = d->y.hi = 1.0;
}

/* Free the items and their arrays. */
void plot_desc_fini(struct plot_desc *d)
{
	for (size_t k = 0; k < d->nitems; k++) {
		free(d->items[k].x);
		free(d->items[k].y);
	}
	free(d->items);
	d->items = NULL;
	d->nitems = d->cap = 0;
}

/* Append an item of KIND with ROLE. */
struct plot_item *plot_desc_add(struct plot_desc *d, enum plot_kind kind,
                                enum cell_role role)
{
	if (d->nitems == d->cap) {
		size_t cap = d->cap ? 2 * d->cap : 32;
		struct plot_item *it = realloc(d->items, cap * sizeof *it);
		if (it == NULL) {
			d->no_memory = true;
			return NULL;
		}
		d->items = it;
		d->cap = cap;
	}
	struct plot_item *it = &d->items[d->nitems++];
	memset(it, 0, sizeof *it);
	it->kind = kind;
	it->role = role;
	it->shape = SHAPE_DOT;
	return it;
}

/* Append a polyline of N points, copied. */
struct plot_item *plot_desc_polyline(struct plot_desc *d, enum cell_role role,
                                     const double *x, const double *y,
                                     size_t n)
{
	double *cx = malloc((n ? n : 1) * sizeof *cx);
	double *cy = malloc((n ? n : 1) * sizeof *cy);
	struct plot_item *it = cx && cy ? plot_desc_add(d, PLOT_POLYLINE, role)
	                                : NULL;
	if (it == NULL) {
		free(cx);
		free(cy);
		d->no_memory = true;
		return NULL;
	}
	if (n > 0) {
		memcpy(cx, x, n * sizeof *cx);
		memcpy(cy, y, n * sizeof *cy);
	}
	it->x = cx;
	it->y = cy;
	it->n = n;
	return it;
}

/* Append the N bars of a histogram: edges EDGES[0..N], heights H[0..N-1]. */
struct plot_item *plot_desc_bars(struct plot_desc *d, enum cell_role role,
                                 const double *edges, const double *h, size_t n)
{
	struct plot_item *it = plot_desc_polyline(d, role, edges, h, n);
	if (it == NULL)
		return NULL;
	double *x = realloc(it->x, (n + 1) * sizeof *x);
	if (x == NULL) {
		d->no_memory = true;
		it->n = 0;
		return NULL;
	}
	x[n] = edges[n];
	it->x = x;
	it->kind = PLOT_BARS;
	return it;
}

/* Append a legend entry. */
void plot_desc_legend(struct plot_desc *d, enum cell_role role,
                      uint32_t text_mark, enum plot_shape shape,
                      const char *words)
{
	if (d->nlegend >= PLOT_MAX_LEGEND)
		return;
	struct plot_legend *l = &d->legend[d->nlegend++];
	l->role = role;
	l->text_mark = text_mark;
	l->shape = shape;
	snprintf(l->words, sizeof l->words, "%s", words);
}

/* Append a caption line. */
void plot_desc_caption(struct plot_desc *d, const char *fmt, ...)
{
	if (d->ncaption >= PLOT_MAX_CAPTION)
		return;
	va_list ap;
	va_start(ap, fmt);
	vsnprintf(d->caption[d->ncaption++], sizeof d->caption[0], fmt, ap);
	va_end(ap);
}

/* Give the first marker of D with ROLE the words WORDS. */
void plot_desc_words(struct plot_desc *d, enum cell_role role,
                     const char *words)
{
	for (size_t k = 0; k < d->nitems; k++)
		if (d->items[k].kind == PLOT_MARKER && d->items[k].role == role) {
			snprintf(d->items[k].words, sizeof d->items[k].words, "%s", words);
			return;
		}
}

/* The shape of an operating point with verdict S. */
enum plot_shape plot_shape_of(enum stability s)
{
	switch (s) {
	case STABILITY_STABLE:
		return SHAPE_DOT;
	case STABILITY_UNSTABLE:
		return SHAPE_SQUARE;
	case STABILITY_OSCILLATES:
		return SHAPE_DIAMOND;
	default:
		return SHAPE_TRIANGLE;
	}
}

/* Put TEXT before the caption's lines (the last line drops when full). */
void plot_desc_caption_first(struct plot_desc *d, const char *text)
{
	size_t n = d->ncaption < PLOT_MAX_CAPTION ? d->ncaption : PLOT_MAX_CAPTION - 1;
	memmove(d->caption[1], d->caption[0], n * sizeof d->caption[0]);
	snprintf(d->caption[0], sizeof d->caption[0], "%s", text);
	d->ncaption = n + 1;
}
