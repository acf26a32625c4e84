/*
 * axes.c - the data window's helpers, ticks (round steps in engineering
 * notation, or 1-2-5 per decade on a log axis), the mapping from data to
 * cells, and the axes drawn with their labels.
 */
#include <float.h>
#include <math.h>
#include <stdio.h>

#include "render/render_int.h"

/* Axis pieces: horizontal, y tick, x tick, corner (ASCII, Unicode). */
static const uint32_t render_axis_h[2] = { '-', 0x2500 };     /* ─ */
static const uint32_t render_tick_y[2] = { '+', 0x2524 };     /* ┤ */
static const uint32_t render_tick_x[2] = { '+', 0x252C };     /* ┬ */
static const uint32_t render_corner[2] = { '+', 0x2514 };     /* └ */

/* Widen [*LO, *HI] to hold X when X is finite. */
void render_include(double *lo, double *hi, double x)
{
	if (!isfinite(x))
		return;
	if (x < *lo)
		*lo = x;
	if (x > *hi)
		*hi = x;
}

/* Give [*LO, *HI] a usable, finite, non-empty span. */
void render_fix_span(double *lo, double *hi)
{
	if (!isfinite(*lo) || !isfinite(*hi)) {
		*lo = 0.0;
		*hi = 1.0;
	}
	double span = *hi - *lo;
	double mag = fmax(fabs(*lo), fabs(*hi));
	if (!(span > 1e-9 * mag) || !(span > DBL_MIN * 1e6)) {
		double half = mag > 0.0 ? 0.5 * mag : 1.0;
		*lo -= half;
		*hi += half;
	}
}

/* A round tick step (1, 2 or 5 times a power of ten) for about N ticks. */
static double render_tick_step(double span, int n)
{
	double raw = span / (n > 0 ? n : 1);
	double mag = pow(10.0, floor(log10(raw)));
	double f = raw / mag;
	double nice = f < 1.5 ? 1.0 : f < 3.5 ? 2.0 : f < 7.5 ? 5.0 : 10.0;
	return nice * mag;
}

/* Choose about N ticks over [LO, HI] labelled as KIND. */
void render_ticks_make(struct render_ticks *t, double lo, double hi,
                       int n, enum qty_kind kind, bool unicode)
{
	t->n = 0;
	t->width = 0;
	double step = render_tick_step(hi - lo, n);
	if (!(step > 0.0) || !isfinite(step))
		return;
	double k0 = ceil(lo / step - 1e-9);
	int e = (int)floor(log10(step) + 1e-9);
	for (int k = 0; k < MAX_TICKS; k++) {
		double v = (k0 + k) * step;
		if (v > hi + 1e-9 * step)
			break;
		if (fabs(v) < 1e-9 * step)
			v = 0.0;
		int sig = 1;
		if (v != 0.0) {
			/* Enough digits for the step, and all of the mantissa's
			 * integer part in engineering notation. */
			int d = (int)floor(log10(fabs(v)) + 1e-9);
			int e3 = 3 * (int)floor(d / 3.0);
			sig = d - e + 1;
			if (d - e3 + 1 > sig)
				sig = d - e3 + 1;
			if (sig < 1)
				sig = 1;
			if (sig > 7)
				sig = 7;
		}
		t->value[t->n] = v;
		qty_format(t->label[t->n], LABEL_MAX, v, kind, sig, unicode ? 0 : 1);
		int w = render_text_width(t->label[t->n]);
		if (w > t->width)
			t->width = w;
		t->n++;
	}
}

/*
 * Ticks of a logarithmic axis over [LO, HI] (log10 units) on NC columns:
 * 1, 2 and 5 per decade where their labels have room, else decades only.
 */
void render_ticks_log(struct render_ticks *t, double lo, double hi,
                      int nc, enum qty_kind kind, bool unicode)
{
	static const double mant[] = { 1.0, 2.0, 5.0 };
	/* Labels are up to about 9 cells ("500 kohm") and need a blank. */
	size_t nm = hi > lo && nc / (hi - lo) >= 3 * 10 ? 3 : 1;
	t->n = 0;
	t->width = 0;
	for (int e = (int)floor(lo); e <= (int)ceil(hi) && t->n < MAX_TICKS; e++) {
		for (size_t m = 0; m < nm && t->n < MAX_TICKS; m++) {
			double x = mant[m] * pow(10.0, e);
			double lx = log10(x);
			if (lx < lo - 1e-9 || lx > hi + 1e-9)
				continue;
			t->value[t->n] = lx;
			qty_format_short(t->label[t->n], LABEL_MAX, x, kind, 3,
			                 unicode ? 0 : 1);
			int w = render_text_width(t->label[t->n]);
			if (w > t->width)
				t->width = w;
			t->n++;
		}
	}
}

/* Fractional column of V within the data area (0 = left edge). */
double render_fx(const struct render_layout *lay, double v)
{
	const struct render_window *w = &lay->win;
	return (v - w->v_lo) / (w->v_hi - w->v_lo) * (lay->right - lay->left + 1);
}

/* Fractional row of I within the data area (0 = top edge). */
double render_fy(const struct render_layout *lay, double i)
{
	const struct render_window *w = &lay->win;
	return (w->i_hi - i) / (w->i_hi - w->i_lo) * (lay->bottom - lay->top + 1);
}

/* Cell index of fractional coordinate X in [0, N), or -1 outside. */
int render_cell_index(double x, int n)
{
	if (!(x >= 0.0)) {
		if (x > -1e-9 * n)
			return 0;
		return -1;
	}
	if (x >= n) {
		if (x <= n + 1e-9 * n)
			return n - 1;
		return -1;
	}
	return (int)x;
}

/* The cell of (V, I); true when inside the data area. */
bool render_cell_of(const struct render_layout *lay, double v, double i,
                    int *row, int *col)
{
	int nc = lay->right - lay->left + 1, nr = lay->bottom - lay->top + 1;
	int c = render_cell_index(render_fx(lay, v), nc);
	int r = render_cell_index(render_fy(lay, i), nr);
	if (c < 0 || r < 0)
		return false;
	*row = lay->top + r;
	*col = lay->left + c;
	return true;
}

/* Draw both axes, their ticks and labels. */
void render_axes(struct grid *g, const struct render_layout *lay,
                 const struct render_ticks *ty,
                 const struct render_ticks *tx, bool unicode,
                 const char *names)
{
	int u = unicode ? 1 : 0;
	for (int r = lay->top; r <= lay->bottom; r++)
		render_put(g, r, lay->axis_col, render_mark(ROLE_AXIS, unicode), ROLE_AXIS);
	for (int c = lay->left; c <= lay->right; c++)
		render_put(g, lay->axis_row, c, render_axis_h[u], ROLE_AXIS);
	render_put(g, lay->axis_row, lay->axis_col, render_corner[u], ROLE_AXIS);

	int nr = lay->bottom - lay->top + 1, nc = lay->right - lay->left + 1;
	for (int k = 0; k < ty->n; k++) {
		int r = render_cell_index(render_fy(lay, ty->value[k]), nr);
		if (r < 0)
			continue;
		r += lay->top;
		render_put(g, r, lay->axis_col, render_tick_y[u], ROLE_AXIS);
		int w = render_text_width(ty->label[k]);
		int c0 = lay->axis_col - w;
		render_text(g, r, c0 < 0 ? 0 : c0, ty->label[k], ROLE_LABEL);
	}
	int next_free = 0;
	int label_row = lay->axis_row + 1;
	for (int k = 0; k < tx->n; k++) {
		int c = render_cell_index(render_fx(lay, tx->value[k]), nc);
		if (c < 0)
			continue;
		c += lay->left;
		render_put(g, lay->axis_row, c, render_tick_x[u], ROLE_AXIS);
		int w = render_text_width(tx->label[k]);
		int c0 = c - w / 2;
		if (c0 + w > g->cols)
			c0 = g->cols - w;
		if (c0 < next_free || c0 < 0)
			continue;
		render_text(g, label_row, c0, tx->label[k], ROLE_LABEL);
		next_free = c0 + w + 1;
	}
	/* Axis names in the corner below the current labels, when free. */
	if (names == NULL)
		return;
	int nw = render_text_width(names);
	if (nw < next_free || next_free == 0) {
		bool free_cells = true;
		for (int c = 0; c < nw; c++)
			if (grid_at(g, label_row, c)->role != ROLE_NONE)
				free_cells = false;
		if (free_cells && nw <= lay->axis_col)
			render_text(g, label_row, 0, names, ROLE_LABEL);
	}
}
