/*
 * vector.c - the vector back end: a plot description drawn by cairo onto
 * an SVG or PNG surface that writes into memory.
 *
 * Layout, from the top: the title, the legend (wrapped), the data area
 * with its frame, light grid lines at the ticks and the tick labels, the
 * x axis title, and the caption lines; the y axis title runs up the left
 * edge.  Curves given as functions are sampled both ways (y of x across
 * the width, x of y up the height) and the samples merged in order, so an
 * exponential's steep part is as smooth as its flat part.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cairo.h>
#include <cairo-svg.h>
#include <fontconfig/fontconfig.h>

#include "render/render_int.h"
#include "render/vector.h"

/* pi, to double precision. */
#define VEC_PI 3.14159265358979323846

/* Samples of a curve each way. */
#define VEC_SAMPLES 1500
/* Font sizes, px. */
#define FONT_TITLE 15.0
#define FONT_TEXT 12.0
#define FONT_SMALL 11.0
/* Room around the picture, px. */
#define PAD 12.0

/* A colour. */
struct vec_rgb {
	double r, g, b;
};

/* How one role is stroked: colour, width and dash pattern (0: solid). */
struct vec_style {
	struct vec_rgb c;
	double width;
	double dash[2];
};

/* The styles; colours from a palette that stays apart for colour-blind
 * readers (Okabe & Ito 2002, "Color Universal Design"), line styles and
 * widths that stay apart in grey. */
static const struct vec_style vec_styles[ROLE_COUNT] = {
	[ROLE_NONE] = { { 0, 0, 0 }, 1.0, { 0, 0 } },
	[ROLE_AXIS] = { { 0, 0, 0 }, 1.0, { 0, 0 } },
	[ROLE_LABEL] = { { 0.35, 0.35, 0.35 }, 1.2, { 2.0, 3.0 } },
	[ROLE_LINE] = { { 0.0, 0.447, 0.698 }, 2.0, { 8.0, 4.0 } },
	[ROLE_DEVICE] = { { 0.835, 0.369, 0.0 }, 2.4, { 0, 0 } },
	[ROLE_PATH] = { { 0.30, 0.30, 0.30 }, 1.3, { 2.5, 2.5 } },
	[ROLE_NEWEST] = { { 0.0, 0.0, 0.0 }, 3.0, { 0, 0 } },
	[ROLE_START] = { { 0.0, 0.0, 0.0 }, 1.6, { 0, 0 } },
	[ROLE_POINT] = { { 0.0, 0.620, 0.451 }, 1.5, { 0, 0 } },
	[ROLE_LEGEND] = { { 0, 0, 0 }, 1.0, { 0, 0 } },
};

/* Fill colours of the point shapes (a stable point green, else purple). */
static const struct vec_rgb vec_stable = { 0.0, 0.620, 0.451 };
static const struct vec_rgb vec_unsteady = { 0.800, 0.475, 0.655 };
/* Bars of a histogram. */
static const struct vec_rgb vec_bar = { 0.337, 0.706, 0.914 };

/* The drawing state: cairo, the description and the data area. */
struct vec {
	cairo_t *cr;
	const struct plot_desc *d;
	double w, h;
	double left, top, right, bottom;
};

/* Set the source colour C. */
static void vec_colour(cairo_t *cr, struct vec_rgb c)
{
	cairo_set_source_rgb(cr, c.r, c.g, c.b);
}

/* Stroke with ROLE's style (dash pattern when DASHED). */
static void vec_style(cairo_t *cr, enum cell_role role, bool dashed)
{
	const struct vec_style *s = &vec_styles[role];
	vec_colour(cr, s->c);
	cairo_set_line_width(cr, s->width);
	if (dashed && s->dash[0] > 0.0)
		cairo_set_dash(cr, s->dash, 2, 0.0);
	else
		cairo_set_dash(cr, NULL, 0, 0.0);
}

/* X in data-area coordinates: log10 on a log axis (NaN where none). */
static double vec_xdata(const struct vec *v, double x)
{
	if (!v->d->x.log)
		return x;
	return x > 0.0 ? log10(x) : NAN;
}

/* Pixel column of the data x (already in axis units). */
static double vec_px(const struct vec *v, double ax)
{
	const struct plot_axis *a = &v->d->x;
	return v->left + (ax - a->lo) / (a->hi - a->lo) * (v->right - v->left);
}

/* Pixel row of the data y. */
static double vec_py(const struct vec *v, double y)
{
	const struct plot_axis *a = &v->d->y;
	return v->bottom - (y - a->lo) / (a->hi - a->lo) * (v->bottom - v->top);
}

/* Keep a pixel coordinate within a few spans of the picture. */
static double vec_clamp(double p, double lo, double hi)
{
	double span = hi - lo;
	return fmin(fmax(p, lo - 3.0 * span), hi + 3.0 * span);
}

/* Width of TEXT in the current font. */
static double vec_text_width(cairo_t *cr, const char *text)
{
	cairo_text_extents_t e;
	cairo_text_extents(cr, text, &e);
	return e.x_advance;
}

/* Set the font: SIZE px, bold when BOLD. */
static void vec_font(cairo_t *cr, double size, bool bold)
{
	cairo_select_font_face(cr, "sans-serif", CAIRO_FONT_SLANT_NORMAL,
	                       bold ? CAIRO_FONT_WEIGHT_BOLD
	                            : CAIRO_FONT_WEIGHT_NORMAL);
	cairo_set_font_size(cr, size);
}

/* Write TEXT with its baseline's left end at (X, Y). */
static void vec_text(cairo_t *cr, double x, double y, const char *text)
{
	cairo_move_to(cr, x, y);
	cairo_show_text(cr, text);
}

/* TEXT with a white halo, readable over lines. */
static void vec_text_halo(cairo_t *cr, double x, double y, const char *text,
                          struct vec_rgb c)
{
	cairo_save(cr);
	cairo_move_to(cr, x, y);
	cairo_text_path(cr, text);
	cairo_set_source_rgb(cr, 1, 1, 1);
	cairo_set_line_width(cr, 3.0);
	cairo_set_dash(cr, NULL, 0, 0.0);
	cairo_stroke_preserve(cr);
	vec_colour(cr, c);
	cairo_fill(cr);
	cairo_restore(cr);
}

/* An arrowhead at (X, Y) pointing along (DX, DY), SIZE px long. */
static void vec_arrowhead(cairo_t *cr, double x, double y, double dx, double dy,
                          double size)
{
	double l = hypot(dx, dy);
	if (!(l > 0.0))
		return;
	dx /= l;
	dy /= l;
	double bx = x - size * dx, by = y - size * dy;
	double nx = -dy * 0.45 * size, ny = dx * 0.45 * size;
	cairo_save(cr);
	cairo_set_dash(cr, NULL, 0, 0.0);
	cairo_move_to(cr, x, y);
	cairo_line_to(cr, bx + nx, by + ny);
	cairo_line_to(cr, bx - nx, by - ny);
	cairo_close_path(cr);
	cairo_fill(cr);
	cairo_restore(cr);
}

/* A marker of SHAPE for ROLE centred at (X, Y). */
static void vec_shape(cairo_t *cr, enum plot_shape shape, enum cell_role role,
                      double x, double y)
{
	double r = 5.5;
	cairo_save(cr);
	cairo_set_dash(cr, NULL, 0, 0.0);
	cairo_new_path(cr);
	switch (shape) {
	case SHAPE_DOT:
		cairo_arc(cr, x, y, r, 0.0, 2.0 * VEC_PI);
		vec_colour(cr, role == ROLE_POINT ? vec_stable : vec_styles[role].c);
		cairo_fill_preserve(cr);
		cairo_set_source_rgb(cr, 0, 0, 0);
		cairo_set_line_width(cr, 1.2);
		cairo_stroke(cr);
		break;
	case SHAPE_SQUARE:
		cairo_rectangle(cr, x - r, y - r, 2 * r, 2 * r);
		cairo_set_source_rgb(cr, 1, 1, 1);
		cairo_fill_preserve(cr);
		vec_colour(cr, vec_unsteady);
		cairo_set_line_width(cr, 2.0);
		cairo_stroke(cr);
		cairo_move_to(cr, x - r, y - r);
		cairo_line_to(cr, x + r, y + r);
		cairo_move_to(cr, x - r, y + r);
		cairo_line_to(cr, x + r, y - r);
		cairo_stroke(cr);
		break;
	case SHAPE_DIAMOND:
		r *= 1.3;
		cairo_move_to(cr, x, y - r);
		cairo_line_to(cr, x + r, y);
		cairo_line_to(cr, x, y + r);
		cairo_line_to(cr, x - r, y);
		cairo_close_path(cr);
		cairo_set_source_rgb(cr, 1, 1, 1);
		cairo_fill_preserve(cr);
		vec_colour(cr, vec_unsteady);
		cairo_set_line_width(cr, 2.0);
		cairo_stroke(cr);
		break;
	case SHAPE_TRIANGLE:
		r *= 1.3;
		cairo_move_to(cr, x, y - r);
		cairo_line_to(cr, x + 0.87 * r, y + 0.5 * r);
		cairo_line_to(cr, x - 0.87 * r, y + 0.5 * r);
		cairo_close_path(cr);
		cairo_set_source_rgb(cr, 1, 1, 1);
		cairo_fill_preserve(cr);
		vec_colour(cr, vec_unsteady);
		cairo_set_line_width(cr, 2.0);
		cairo_stroke(cr);
		break;
	case SHAPE_CIRCLE:
		/* A ring: what lies under the start (an intercept) shows. */
		cairo_arc(cr, x, y, r + 0.5, 0.0, 2.0 * VEC_PI);
		vec_colour(cr, vec_styles[role].c);
		cairo_set_line_width(cr, 1.8);
		cairo_stroke(cr);
		break;
	case SHAPE_TICK:
		cairo_rectangle(cr, x - 3.5, y - 3.5, 7.0, 7.0);
		vec_colour(cr, vec_styles[role].c);
		cairo_fill(cr);
		break;
	}
	cairo_restore(cr);
}

/* One sample of a curve, in pixels. */
struct vec_pt {
	double x, y;
};

/* Order samples by x. */
static int vec_by_x(const void *a, const void *b)
{
	double p = ((const struct vec_pt *)a)->x, q = ((const struct vec_pt *)b)->x;
	return (p > q) - (p < q);
}

/* Order samples by y. */
static int vec_by_y(const void *a, const void *b)
{
	double p = ((const struct vec_pt *)a)->y, q = ((const struct vec_pt *)b)->y;
	return (p > q) - (p < q);
}

/*
 * Stroke the curve IT: samples of y(x) across the window and of x(y) up
 * it, merged in order (by x when y(x) is known), as one path broken where
 * the curve is not defined.
 */
static int vec_curve(struct vec *v, const struct plot_item *it)
{
	const struct plot_axis *ax = &v->d->x, *ay = &v->d->y;
	size_t cap = 2 * (VEC_SAMPLES + 1), n = 0;
	struct vec_pt *p = malloc(cap * sizeof *p);
	if (p == NULL)
		return -1;
	double span_x = v->right - v->left, span_y = v->bottom - v->top;
	if (it->y_of_x != NULL)
		for (size_t k = 0; k <= VEC_SAMPLES; k++) {
			double a = ax->lo + (ax->hi - ax->lo) * (double)k / VEC_SAMPLES;
			double x = ax->log ? pow(10.0, a) : a;
			double y = it->y_of_x(it->ctx, x);
			p[n].x = vec_px(v, a);
			p[n].y = isfinite(y) ? vec_clamp(vec_py(v, y), v->top, v->bottom)
			                     : NAN;
			n++;
		}
	if (it->x_of_y != NULL)
		for (size_t k = 0; k <= VEC_SAMPLES; k++) {
			double y = ay->lo + (ay->hi - ay->lo) * (double)k / VEC_SAMPLES;
			double a = vec_xdata(v, it->x_of_y(it->ctx, y));
			if (!isfinite(a))
				continue;
			double px = vec_px(v, a);
			if (px < v->left - span_x || px > v->right + span_x)
				continue;
			p[n].x = vec_clamp(px, v->left, v->right);
			p[n].y = vec_py(v, y);
			n++;
		}
	qsort(p, n, sizeof *p, it->y_of_x != NULL ? vec_by_x : vec_by_y);
	(void)span_y;
	cairo_t *cr = v->cr;
	vec_style(cr, it->role, true);
	bool pen = false;
	for (size_t k = 0; k < n; k++) {
		if (!isfinite(p[k].x) || !isfinite(p[k].y)) {
			pen = false;
			continue;
		}
		if (pen)
			cairo_line_to(cr, p[k].x, p[k].y);
		else
			cairo_move_to(cr, p[k].x, p[k].y);
		pen = true;
	}
	cairo_stroke(cr);
	free(p);
	return 0;
}

/* Stroke the polyline IT, broken at unusable points. */
static void vec_polyline(struct vec *v, const struct plot_item *it)
{
	cairo_t *cr = v->cr;
	vec_style(cr, it->role, true);
	bool pen = false;
	size_t run = 0;
	double lx = 0.0, ly = 0.0;
	for (size_t k = 0; k < it->n; k++) {
		double a = vec_xdata(v, it->x[k]), y = it->y[k];
		if (!isfinite(a) || !isfinite(y)) {
			pen = false;
			continue;
		}
		double px = vec_clamp(vec_px(v, a), v->left, v->right);
		double py = vec_clamp(vec_py(v, y), v->top, v->bottom);
		if (pen)
			cairo_line_to(cr, px, py);
		else
			cairo_move_to(cr, px, py);
		pen = true;
		run++;
		lx = px;
		ly = py;
	}
	cairo_stroke(cr);
	if (run == 1)
		vec_shape(cr, SHAPE_DOT, it->role, lx, ly);
}

/* One step of the path: older ones dotted with an arrow at the middle,
 * the newest thick with an arrowhead at its end. */
static void vec_step(struct vec *v, const struct plot_item *it)
{
	double x0 = vec_px(v, vec_xdata(v, it->x0)), y0 = vec_py(v, it->y0);
	double x1 = vec_px(v, vec_xdata(v, it->x1)), y1 = vec_py(v, it->y1);
	if (!isfinite(x0) || !isfinite(y0) || !isfinite(x1) || !isfinite(y1))
		return;
	x0 = vec_clamp(x0, v->left, v->right);
	x1 = vec_clamp(x1, v->left, v->right);
	y0 = vec_clamp(y0, v->top, v->bottom);
	y1 = vec_clamp(y1, v->top, v->bottom);
	cairo_t *cr = v->cr;
	vec_style(cr, it->role, true);
	double len = hypot(x1 - x0, y1 - y0);
	if (it->role == ROLE_NEWEST) {
		/* Stop the line short of the head so the tip stays sharp. */
		double head = fmin(12.0, 0.6 * len);
		double t = len > 0.0 ? (len - 0.7 * head) / len : 0.0;
		cairo_move_to(cr, x0, y0);
		cairo_line_to(cr, x0 + t * (x1 - x0), y0 + t * (y1 - y0));
		cairo_stroke(cr);
		if (len > 2.0)
			vec_arrowhead(cr, x1, y1, x1 - x0, y1 - y0, head);
		return;
	}
	cairo_move_to(cr, x0, y0);
	cairo_line_to(cr, x1, y1);
	cairo_stroke(cr);
	if (len > 14.0)
		vec_arrowhead(cr, 0.5 * (x0 + x1) + 4.0 * (x1 - x0) / len,
		              0.5 * (y0 + y1) + 4.0 * (y1 - y0) / len, x1 - x0,
		              y1 - y0, 8.0);
}

/* A marker with its number and words beside it. */
static void vec_marker(struct vec *v, const struct plot_item *it)
{
	double a = vec_xdata(v, it->x0);
	if (!isfinite(a) || !isfinite(it->y0))
		return;
	double x = vec_px(v, a), y = vec_py(v, it->y0);
	if (x < v->left - 1.0 || x > v->right + 1.0 || y < v->top - 1.0 ||
	    y > v->bottom + 1.0)
		return;
	cairo_t *cr = v->cr;
	vec_shape(cr, it->shape, it->role, x, y);
	char label[128];
	if (it->tag[0] != '\0' && it->words[0] != '\0')
		snprintf(label, sizeof label, "%s %s", it->tag, it->words);
	else
		snprintf(label, sizeof label, "%s", it->tag[0] ? it->tag : it->words);
	if (label[0] == '\0')
		return;
	vec_font(cr, FONT_SMALL, true);
	double w = vec_text_width(cr, label);
	double tx = x + 9.0 + w <= v->right ? x + 9.0 : x - 9.0 - w;
	double ty = y - 9.0 >= v->top + FONT_SMALL ? y - 9.0 : y + 9.0 + FONT_SMALL;
	vec_text_halo(cr, tx, ty, label, (struct vec_rgb){ 0, 0, 0 });
}

/* The step IT leaves the window: an arrow on the edge and the far value. */
static void vec_off(struct vec *v, const struct plot_item *it)
{
	struct render_window w = { v->d->x.lo, v->d->x.hi, v->d->y.lo, v->d->y.hi };
	double a0 = vec_xdata(v, it->x0), a1 = vec_xdata(v, it->x1);
	double v0 = a0, i0 = it->y0, v1 = a1, i1 = it->y1;
	if (!render_clip(&w, &v0, &i0, &v1, &i1)) {
		v0 = 0.5 * (w.v_lo + w.v_hi);
		i0 = 0.5 * (w.i_lo + w.i_hi);
		v1 = a1;
		i1 = it->y1;
		if (!render_clip(&w, &v0, &i0, &v1, &i1))
			return;
	}
	double x0 = vec_px(v, v0), y0 = vec_py(v, i0);
	double x1 = vec_px(v, v1), y1 = vec_py(v, i1);
	cairo_t *cr = v->cr;
	vec_style(cr, ROLE_NEWEST, false);
	vec_arrowhead(cr, x1, y1, x1 - x0, y1 - y0, 16.0);
	char tv[48], ti[48], val[120];
	qty_format_short(tv, sizeof tv, it->x1, v->d->x.kind, 4, 0);
	qty_format_short(ti, sizeof ti, it->y1, v->d->y.kind, 4, 0);
	snprintf(val, sizeof val, "to %s, %s", tv, ti);
	vec_font(cr, FONT_SMALL, false);
	double tw = vec_text_width(cr, val);
	double tx = fmin(fmax(x1 - 0.5 * tw, v->left + 2.0), v->right - tw - 2.0);
	double ty = y1 < 0.5 * (v->top + v->bottom) ? y1 + 26.0 : y1 - 18.0;
	vec_text_halo(cr, tx, ty, val, (struct vec_rgb){ 0, 0, 0 });
}

/* The bars of a histogram. */
static void vec_bars(struct vec *v, const struct plot_item *it)
{
	cairo_t *cr = v->cr;
	for (size_t k = 0; k < it->n; k++) {
		if (!(it->y[k] > 0.0))
			continue;
		double x0 = vec_px(v, vec_xdata(v, it->x[k]));
		double x1 = vec_px(v, vec_xdata(v, it->x[k + 1]));
		double yt = vec_py(v, it->y[k]);
		cairo_rectangle(cr, x0, yt, x1 - x0, v->bottom - yt);
		vec_colour(cr, vec_bar);
		cairo_fill_preserve(cr);
		cairo_set_source_rgb(cr, 0, 0, 0);
		cairo_set_line_width(cr, 1.0);
		cairo_set_dash(cr, NULL, 0, 0.0);
		cairo_stroke(cr);
	}
}

/* A dotted vertical line with its words at the top. */
static void vec_vline(struct vec *v, const struct plot_item *it)
{
	double a = vec_xdata(v, it->x0);
	if (!isfinite(a))
		return;
	double x = vec_px(v, a);
	if (x < v->left || x > v->right)
		return;
	cairo_t *cr = v->cr;
	vec_style(cr, ROLE_LABEL, true);
	cairo_move_to(cr, x, v->top);
	cairo_line_to(cr, x, v->bottom);
	cairo_stroke(cr);
	vec_font(cr, FONT_SMALL, false);
	double w = vec_text_width(cr, it->words);
	double tx = x + 4.0 + w <= v->right ? x + 4.0 : x - 4.0 - w;
	vec_text_halo(cr, tx, v->top + FONT_SMALL + 2.0, it->words,
	              vec_styles[ROLE_LABEL].c);
}

/* Draw one item; -1 when out of memory. */
static int vec_item(struct vec *v, const struct plot_item *it)
{
	switch (it->kind) {
	case PLOT_CURVE:
		return vec_curve(v, it);
	case PLOT_POLYLINE:
		vec_polyline(v, it);
		break;
	case PLOT_STEP:
		vec_step(v, it);
		break;
	case PLOT_MARKER:
		vec_marker(v, it);
		break;
	case PLOT_OFF:
		vec_off(v, it);
		break;
	case PLOT_BARS:
		vec_bars(v, it);
		break;
	case PLOT_VLINE:
		vec_vline(v, it);
		break;
	}
	return 0;
}

/* One legend entry as drawn: the sample's kind and its words. */
struct vec_key {
	enum cell_role role;
	int sample;             /* 0 line, 1 marker, 2 bar, 3 arrow */
	enum plot_shape shape;
	char words[64];
};

/* Most legend entries once the points are split by verdict. */
#define VEC_MAX_KEYS (PLOT_MAX_LEGEND + 4)

/* The legend's entries: the points split by the shapes present. */
static size_t vec_keys(const struct plot_desc *d, struct vec_key *k)
{
	size_t n = 0;
	bool bars = false;
	for (size_t j = 0; j < d->nitems; j++)
		if (d->items[j].kind == PLOT_BARS)
			bars = true;
	for (size_t e = 0; e < d->nlegend && n < VEC_MAX_KEYS; e++) {
		const struct plot_legend *l = &d->legend[e];
		if (l->role == ROLE_POINT) {
			static const enum plot_shape shapes[] = { SHAPE_DOT, SHAPE_SQUARE,
			                                          SHAPE_DIAMOND, SHAPE_TRIANGLE };
			static const char *const words[] = { "stable point", "unstable point",
			                                     "oscillating point",
			                                     "point, stability unknown" };
			for (size_t s = 0; s < 4 && n < VEC_MAX_KEYS; s++) {
				bool seen = false;
				for (size_t j = 0; j < d->nitems; j++)
					if (d->items[j].kind == PLOT_MARKER &&
					    d->items[j].role == ROLE_POINT &&
					    d->items[j].shape == shapes[s])
						seen = true;
				if (!seen)
					continue;
				k[n] = (struct vec_key){ ROLE_POINT, 1, shapes[s], "" };
				snprintf(k[n].words, sizeof k[n].words, "%s", words[s]);
				n++;
			}
			continue;
		}
		k[n].role = l->role;
		k[n].shape = l->shape;
		k[n].sample = l->text_mark != 0 ? 3
		              : l->role == ROLE_START ? 1
		              : bars && l->role == ROLE_DEVICE ? 2 : 0;
		snprintf(k[n].words, sizeof k[n].words, "%s", l->words);
		n++;
	}
	return n;
}

/* Width of a legend entry's sample. */
#define KEY_SAMPLE 30.0

/* Lay out (DRAW false) or draw the legend from Y0 across the picture;
 * returns the height it takes. */
static double vec_legend(struct vec *v, double y0, bool draw)
{
	struct vec_key keys[VEC_MAX_KEYS];
	size_t n = vec_keys(v->d, keys);
	if (n == 0)
		return 0.0;
	cairo_t *cr = v->cr;
	vec_font(cr, FONT_SMALL, false);
	double row_h = 18.0, x = PAD, y = y0;
	for (size_t k = 0; k < n; k++) {
		double w = KEY_SAMPLE + 6.0 + vec_text_width(cr, keys[k].words);
		if (x > PAD && x + w > v->w - PAD) {
			x = PAD;
			y += row_h;
		}
		if (draw) {
			double cy = y + 0.5 * row_h;
			const struct vec_key *e = &keys[k];
			switch (e->sample) {
			case 0:
				vec_style(cr, e->role, true);
				cairo_move_to(cr, x, cy);
				cairo_line_to(cr, x + KEY_SAMPLE, cy);
				cairo_stroke(cr);
				if (e->role == ROLE_NEWEST || e->role == ROLE_PATH)
					vec_arrowhead(cr, x + KEY_SAMPLE, cy, 1.0, 0.0,
					              e->role == ROLE_NEWEST ? 10.0 : 7.0);
				break;
			case 1:
				vec_shape(cr, e->shape, e->role, x + 0.5 * KEY_SAMPLE, cy);
				break;
			case 2:
				cairo_rectangle(cr, x + 6.0, cy - 6.0, KEY_SAMPLE - 12.0, 12.0);
				vec_colour(cr, vec_bar);
				cairo_fill_preserve(cr);
				cairo_set_source_rgb(cr, 0, 0, 0);
				cairo_set_line_width(cr, 1.0);
				cairo_set_dash(cr, NULL, 0, 0.0);
				cairo_stroke(cr);
				break;
			default:
				vec_style(cr, ROLE_NEWEST, false);
				vec_arrowhead(cr, x + KEY_SAMPLE - 4.0, cy, 1.0, 0.0, 14.0);
				break;
			}
			vec_font(cr, FONT_SMALL, false);
			cairo_set_source_rgb(cr, 0, 0, 0);
			vec_text(cr, x + KEY_SAMPLE + 6.0, cy + 4.0, e->words);
		}
		x += w + 18.0;
	}
	return y + row_h - y0;
}

/* The title of axis A with its unit: "device voltage (V)". */
static void vec_axis_title(const struct plot_axis *a, char *buf, size_t n)
{
	const char *unit = qty_unit(a->kind);
	const char *t = a->title[0] != '\0' ? a->title : "";
	if (unit[0] != '\0')
		snprintf(buf, n, "%s%s(%s%s)", t, t[0] ? " " : "",
		         a->log ? "log, " : "", unit);
	else
		snprintf(buf, n, "%s", t);
}

/* The ticks of both axes for the data area now laid out. */
static void vec_ticks(const struct vec *v, struct render_ticks *tx,
                      struct render_ticks *ty)
{
	const struct plot_desc *d = v->d;
	double wpx = v->right - v->left, hpx = v->bottom - v->top;
	int nx = (int)(wpx / 90.0), ny = (int)(hpx / 45.0);
	if (d->x.log)
		render_ticks_log(tx, d->x.lo, d->x.hi, (int)(wpx / 8.0), d->x.kind, true);
	else
		render_ticks_make(tx, d->x.lo, d->x.hi, nx > 2 ? nx : 2, d->x.kind, true);
	render_ticks_make(ty, d->y.lo, d->y.hi, ny > 2 ? ny : 2, d->y.kind, true);
}

/* Draw the whole picture; -1 when out of memory. */
static int vec_draw(struct vec *v, struct vector_frame *frame)
{
	cairo_t *cr = v->cr;
	const struct plot_desc *d = v->d;
	cairo_set_source_rgb(cr, 1, 1, 1);
	cairo_paint(cr);
	cairo_set_line_cap(cr, CAIRO_LINE_CAP_BUTT);
	cairo_set_line_join(cr, CAIRO_LINE_JOIN_ROUND);

	/* From the top: title and legend. */
	double y = PAD;
	if (d->title[0] != '\0')
		y += FONT_TITLE + 8.0;
	double legend_y = y;
	y += vec_legend(v, legend_y, false);
	v->top = y + 10.0;
	/* From the bottom: caption, axis title, tick labels. */
	double cap_h = d->ncaption > 0 ? (double)d->ncaption * 16.0 + 6.0 : 0.0;
	v->bottom = v->h - PAD - cap_h - 20.0 - 22.0;
	/* The y tick labels decide the left margin. */
	v->left = 0.0;
	v->right = v->w - PAD - 14.0;
	struct render_ticks tx, ty;
	vec_font(cr, FONT_SMALL, false);
	v->left = v->right - 100.0; /* provisional, for the tick density */
	vec_ticks(v, &tx, &ty);
	double lw = 0.0;
	for (int k = 0; k < ty.n; k++)
		lw = fmax(lw, vec_text_width(cr, ty.label[k]));
	v->left = PAD + 20.0 + lw + 8.0;
	/* Edges on pixel centres: a one-pixel frame stays crisp. */
	v->left = floor(v->left) + 0.5;
	v->right = floor(v->right) + 0.5;
	v->top = floor(v->top) + 0.5;
	v->bottom = floor(v->bottom) + 0.5;
	if (v->bottom - v->top < 40.0 || v->right - v->left < 40.0)
		return -2;
	vec_ticks(v, &tx, &ty);

	if (d->title[0] != '\0') {
		vec_font(cr, FONT_TITLE, true);
		cairo_set_source_rgb(cr, 0, 0, 0);
		vec_text(cr, PAD, PAD + FONT_TITLE, d->title);
	}
	vec_legend(v, legend_y, true);

	/* Grid lines and tick labels. */
	cairo_set_dash(cr, NULL, 0, 0.0);
	cairo_set_line_width(cr, 1.0);
	vec_font(cr, FONT_SMALL, false);
	for (int k = 0; k < tx.n; k++) {
		double x = vec_px(v, tx.value[k]);
		if (x < v->left - 0.5 || x > v->right + 0.5)
			continue;
		cairo_set_source_rgb(cr, 0.88, 0.88, 0.88);
		cairo_move_to(cr, x, v->top);
		cairo_line_to(cr, x, v->bottom);
		cairo_stroke(cr);
		cairo_set_source_rgb(cr, 0, 0, 0);
		cairo_move_to(cr, x, v->bottom);
		cairo_line_to(cr, x, v->bottom + 5.0);
		cairo_stroke(cr);
		double w = vec_text_width(cr, tx.label[k]);
		vec_text(cr, x - 0.5 * w, v->bottom + 18.0, tx.label[k]);
	}
	for (int k = 0; k < ty.n; k++) {
		double yy = vec_py(v, ty.value[k]);
		if (yy < v->top - 0.5 || yy > v->bottom + 0.5)
			continue;
		cairo_set_source_rgb(cr, 0.88, 0.88, 0.88);
		cairo_move_to(cr, v->left, yy);
		cairo_line_to(cr, v->right, yy);
		cairo_stroke(cr);
		cairo_set_source_rgb(cr, 0, 0, 0);
		cairo_move_to(cr, v->left - 5.0, yy);
		cairo_line_to(cr, v->left, yy);
		cairo_stroke(cr);
		double w = vec_text_width(cr, ty.label[k]);
		vec_text(cr, v->left - 8.0 - w, yy + 4.0, ty.label[k]);
	}
	/* Axis titles. */
	char t[96];
	vec_font(cr, FONT_TEXT, false);
	vec_axis_title(&d->x, t, sizeof t);
	vec_text(cr, 0.5 * (v->left + v->right) - 0.5 * vec_text_width(cr, t),
	         v->bottom + 38.0, t);
	vec_axis_title(&d->y, t, sizeof t);
	cairo_save(cr);
	cairo_translate(cr, PAD + 12.0, 0.5 * (v->top + v->bottom) +
	                0.5 * vec_text_width(cr, t));
	cairo_rotate(cr, -0.5 * VEC_PI);
	vec_text(cr, 0.0, 0.0, t);
	cairo_restore(cr);
	/* Caption. */
	vec_font(cr, FONT_SMALL, false);
	for (size_t k = 0; k < d->ncaption; k++)
		vec_text(cr, PAD, v->h - PAD - (double)(d->ncaption - 1 - k) * 16.0 - 2.0,
		         d->caption[k]);

	/* The items, clipped to the data area. */
	cairo_save(cr);
	cairo_rectangle(cr, v->left, v->top, v->right - v->left, v->bottom - v->top);
	cairo_clip(cr);
	int rc = 0;
	for (size_t k = 0; k < d->nitems && rc == 0; k++)
		if (d->items[k].kind != PLOT_MARKER && d->items[k].kind != PLOT_OFF)
			rc = vec_item(v, &d->items[k]);
	cairo_restore(cr);
	/* The frame, then markers and labels on top (unclipped by a hair, so
	 * a point on an axis shows whole). */
	cairo_set_source_rgb(cr, 0, 0, 0);
	cairo_set_line_width(cr, 1.0);
	cairo_set_dash(cr, NULL, 0, 0.0);
	cairo_rectangle(cr, v->left, v->top, v->right - v->left, v->bottom - v->top);
	cairo_stroke(cr);
	for (size_t k = 0; k < d->nitems && rc == 0; k++)
		if (d->items[k].kind == PLOT_MARKER || d->items[k].kind == PLOT_OFF)
			rc = vec_item(v, &d->items[k]);
	if (frame != NULL)
		*frame = (struct vector_frame){ v->w, v->h, v->left, v->top, v->right,
		                                v->bottom };
	return rc;
}

/* A growing buffer cairo writes into. */
struct vec_buf {
	char *p;
	size_t len, cap;
	bool failed;
};

/* cairo's write callback: append to the buffer. */
static cairo_status_t vec_write(void *closure, const unsigned char *data,
                                unsigned int length)
{
	struct vec_buf *b = closure;
	if (b->len + length + 1 > b->cap) {
		size_t cap = b->cap ? b->cap : 65536;
		while (cap < b->len + length + 1)
			cap *= 2;
		char *p = realloc(b->p, cap);
		if (p == NULL) {
			b->failed = true;
			return CAIRO_STATUS_WRITE_ERROR;
		}
		b->p = p;
		b->cap = cap;
	}
	memcpy(b->p + b->len, data, length);
	b->len += length;
	b->p[b->len] = '\0';
	return CAIRO_STATUS_SUCCESS;
}

/* Append TEXT to B with XML's special characters escaped. */
static void vec_xml_escape(struct vec_buf *b, const char *text)
{
	for (const char *s = text; *s != '\0' && !b->failed; s++) {
		const char *rep = *s == '<' ? "&lt;" : *s == '>' ? "&gt;"
		                  : *s == '&' ? "&amp;" : NULL;
		if (rep != NULL)
			vec_write(b, (const unsigned char *)rep, (unsigned)strlen(rep));
		else
			vec_write(b, (const unsigned char *)s, 1);
	}
}

/*
 * Put a <title> (the title or the first caption line) and the <desc>
 * naming the data area and window right after the SVG's opening tag.
 */
static int vec_svg_annotate(struct vec_buf *b, const struct plot_desc *d,
                            const struct vector_frame *f)
{
	char *open = strstr(b->p, "<svg");
	char *end = open != NULL ? strchr(open, '>') : NULL;
	if (end == NULL)
		return -1;
	size_t at = (size_t)(end + 1 - b->p);
	struct vec_buf n = { 0 };
	vec_write(&n, (const unsigned char *)b->p, (unsigned)at);
	const char *title = d->title[0] ? d->title
	                    : d->ncaption > 0 ? d->caption[0] : "biasline plot";
	vec_write(&n, (const unsigned char *)"\n<title>", 8);
	vec_xml_escape(&n, title);
	char desc[512];
	int len = snprintf(desc, sizeof desc,
	                   "</title>\n<desc>biasline plot area %.3f %.3f %.3f %.3f "
	                   "window %.17g %.17g %.17g %.17g log-x %d</desc>",
	                   f->left, f->top, f->right, f->bottom, d->x.lo, d->x.hi,
	                   d->y.lo, d->y.hi, d->x.log ? 1 : 0);
	vec_write(&n, (const unsigned char *)desc, (unsigned)len);
	vec_write(&n, (const unsigned char *)b->p + at, (unsigned)(b->len - at));
	if (n.failed) {
		free(n.p);
		return -1;
	}
	free(b->p);
	*b = n;
	return 0;
}

/* Draw D as FORMAT into memory. */
int render_vector(const struct plot_desc *d, enum vector_format format, int w,
                  int h, char **out, size_t *len, struct vector_frame *frame)
{
	*out = NULL;
	*len = 0;
	if (w < VECTOR_MIN || w > VECTOR_MAX || h < VECTOR_MIN || h > VECTOR_MAX ||
	    d->no_memory || !(d->x.hi > d->x.lo) || !(d->y.hi > d->y.lo))
		return -1;
	struct vec_buf b = { 0 };
	cairo_surface_t *s;
	if (format == VECTOR_SVG) {
		s = cairo_svg_surface_create_for_stream(vec_write, &b, w, h);
		cairo_svg_surface_restrict_to_version(s, CAIRO_SVG_VERSION_1_1);
		cairo_svg_surface_set_document_unit(s, CAIRO_SVG_UNIT_PX);
	} else {
		s = cairo_image_surface_create(CAIRO_FORMAT_RGB24, w, h);
	}
	cairo_t *cr = cairo_create(s);
	struct vec v = { cr, d, w, h, 0, 0, 0, 0 };
	struct vector_frame f;
	int rc = vec_draw(&v, &f);
	if (cairo_status(cr) != CAIRO_STATUS_SUCCESS)
		rc = -1;
	cairo_destroy(cr);
	if (format == VECTOR_PNG && rc == 0 &&
	    cairo_surface_write_to_png_stream(s, vec_write, &b) != CAIRO_STATUS_SUCCESS)
		rc = -1;
	cairo_surface_finish(s);
	if (cairo_surface_status(s) != CAIRO_STATUS_SUCCESS)
		rc = -1;
	cairo_surface_destroy(s);
	if (rc == 0 && (b.failed || b.p == NULL))
		rc = -1;
	if (rc == 0 && format == VECTOR_SVG && vec_svg_annotate(&b, d, &f) != 0)
		rc = -1;
	/* Every cairo object is gone: let cairo and fontconfig free their
	 * font caches, so a picture leaves nothing behind (a front end that
	 * writes one now and then pays a font lookup each time). */
	cairo_debug_reset_static_data();
	FcFini();
	if (rc != 0) {
		free(b.p);
		return -1;
	}
	*out = b.p;
	*len = b.len;
	if (frame != NULL)
		*frame = f;
	return 0;
}

/* Parse a format's name. */
int vector_format_from_name(const char *name, enum vector_format *f)
{
	if (strcmp(name, "svg") == 0)
		*f = VECTOR_SVG;
	else if (strcmp(name, "png") == 0)
		*f = VECTOR_PNG;
	else
		return -1;
	return 0;
}
