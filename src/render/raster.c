/*
 * raster.c - the character back end of a plot description: the layout
 * (header rows, tick-label margin), the axes and every item drawn into the
 * cell grid.
 *
 * Curves are sampled twice: once per column (y from x) and once per row
 * (x from y, when the curve has an inverse).  Row sampling puts the steep
 * part of an exponential in the right column; the vertical gaps left
 * between two column samples are filled half in each column, so a curve
 * reads as one continuous stroke at any size.
 */
#include <math.h>
#include <stdio.h>

#include "render/plot.h"
#include "render/render_int.h"

/* The off-plot arrows by direction (ASCII, Unicode): right, left, up, down. */
static const uint32_t render_arrows[4][2] = {
	{ '>', 0x2192 },  /* → */
	{ '<', 0x2190 },  /* ← */
	{ '^', 0x2191 },  /* ↑ */
	{ 'v', 0x2193 },  /* ↓ */
};

/* The arrow pointing DIR (0 right, 1 left, 2 up, 3 down). */
uint32_t render_arrow(int dir, bool unicode)
{
	return render_arrows[dir & 3][unicode ? 1 : 0];
}

/* The grid mark of legend entry L. */
static uint32_t raster_legend_mark(const struct plot_legend *l, bool unicode)
{
	return l->text_mark != 0 ? l->text_mark : render_mark(l->role, unicode);
}

/* Rows the legend of D takes on COLS cells (words never cut). */
static int raster_legend_rows(const struct plot_desc *d, int cols)
{
	int rows = d->nlegend > 0 ? 1 : 0, col = 0;
	for (size_t k = 0; k < d->nlegend; k++) {
		int w = 2 + render_text_width(d->legend[k].words);
		if (col > 0 && col + w > cols) {
			rows++;
			col = 0;
		}
		col += w + 2;
	}
	return rows;
}

/* The legend: each mark and what it stands for, wrapped onto its rows. */
static void raster_legend(struct grid *g, const struct plot_desc *d, int row0,
                          int max_rows)
{
	int row = 0, col = 0;
	for (size_t k = 0; k < d->nlegend; k++) {
		int w = 2 + render_text_width(d->legend[k].words);
		if (col > 0 && col + w > g->cols) {
			row++;
			col = 0;
		}
		if (row >= max_rows)
			break;
		render_put(g, row0 + row, col, raster_legend_mark(&d->legend[k], d->unicode),
		           ROLE_LEGEND);
		render_text(g, row0 + row, col + 2, d->legend[k].words, ROLE_LEGEND);
		col += w + 2;
	}
}

/* Work out the layout of D on ROWS x COLS and the ticks of both axes. */
static enum render_status raster_layout(const struct plot_desc *d, int rows,
                                        int cols, struct render_layout *lay,
                                        struct render_ticks *ty,
                                        struct render_ticks *tx,
                                        int *legend_rows)
{
	if (rows < RENDER_MIN_ROWS || cols < RENDER_MIN_COLS)
		return RENDER_TOO_SMALL;
	lay->win = (struct render_window){ d->x.lo, d->x.hi, d->y.lo, d->y.hi };
	lay->top = d->title[0] != '\0' ? 1 : 0;
	*legend_rows = 0;
	if (d->legend_rows > 0 && d->nlegend > 0) {
		*legend_rows = raster_legend_rows(d, cols);
		if (*legend_rows > d->legend_rows)
			*legend_rows = d->legend_rows;
		lay->top += *legend_rows;
	}
	lay->axis_row = rows - 2;
	lay->bottom = rows - 3;
	int nr = lay->bottom - lay->top + 1;
	render_ticks_make(ty, d->y.lo, d->y.hi, nr / 3 > 2 ? nr / 3 : 2,
	                  d->y.kind, d->unicode);
	int margin = ty->width + 1;
	if (margin > cols / 3)
		margin = cols / 3;
	lay->axis_col = margin;
	lay->left = margin + 1;
	lay->right = cols - 1;
	int nc = lay->right - lay->left + 1;
	if (d->x.log)
		render_ticks_log(tx, d->x.lo, d->x.hi, nc, d->x.kind, d->unicode);
	else
		render_ticks_make(tx, d->x.lo, d->x.hi, nc / 12 > 2 ? nc / 12 : 2,
		                  d->x.kind, d->unicode);
	return RENDER_OK;
}

/* Fractional row of IT at X, clamped to [-1, NR]; NaN where undefined. */
static double raster_curve_row(const struct render_layout *lay,
                               const struct plot_item *it, double x, int nr)
{
	double y = it->y_of_x(it->ctx, x);
	if (isnan(y))
		return NAN;
	return fmin(fmax(render_fy(lay, y), -1.0), (double)nr);
}

/*
 * Draw the curve IT.  Per column, every row the curve passes through
 * between the column's two edges is marked (exact for a curve monotone
 * within a column); per row, the cell at the curve's x for the row's
 * centre y is marked too, which draws vertical lines and curves known
 * only as x(y).
 */
static void raster_curve(struct grid *g, const struct render_layout *lay,
                         const struct plot_item *it, uint32_t ch)
{
	int nr = lay->bottom - lay->top + 1, nc = lay->right - lay->left + 1;
	const struct render_window *w = &lay->win;
	double dv = (w->v_hi - w->v_lo) / nc, di = (w->i_hi - w->i_lo) / nr;
	if (it->y_of_x != NULL) {
		double yl = raster_curve_row(lay, it, w->v_lo, nr);
		for (int c = 0; c < nc; c++) {
			double yr = raster_curve_row(lay, it, w->v_lo + (c + 1) * dv, nr);
			double a = yl, b = yr;
			if (isnan(a))
				a = b;
			if (isnan(b))
				b = a;
			yl = yr;
			if (isnan(a))
				continue;
			/* Stay off rows the curve only touches at a corner. */
			double lo = fmin(a, b) + 1e-9, hi = fmax(a, b) - 1e-9;
			if (hi < lo)
				hi = lo;
			for (int r = (int)floor(lo); r <= (int)floor(hi); r++)
				if (r >= 0 && r < nr)
					render_put(g, lay->top + r, lay->left + c, ch, it->role);
		}
	}
	if (it->x_of_y == NULL)
		return;
	for (int r = 0; r < nr; r++) {
		double v = it->x_of_y(it->ctx, w->i_hi - (r + 0.5) * di);
		if (isnan(v))
			continue;
		int c = render_cell_index(render_fx(lay, v), nc);
		if (c >= 0)
			render_put(g, lay->top + r, lay->left + c, ch, it->role);
	}
}

/* X in layout units: log10 on a log axis (NaN where it has none). */
static double raster_x(const struct plot_desc *d, double x)
{
	if (!d->x.log)
		return x;
	return x > 0.0 ? log10(x) : NAN;
}

/* Draw the polyline IT: consecutive usable points joined. */
static void raster_polyline(struct grid *g, const struct render_layout *lay,
                            const struct plot_desc *d, const struct plot_item *it)
{
	struct trace_row a = { 0 }, b = { 0 };
	bool have_a = false;
	for (size_t k = 0; k < it->n; k++) {
		double x = raster_x(d, it->x[k]), y = it->y[k];
		if (!isfinite(x) || !isfinite(y)) {
			have_a = false;
			continue;
		}
		b.v = x;
		b.i = y;
		if (have_a)
			render_segment(g, lay, &a, &b, it->role, d->unicode);
		else
			render_marker(g, lay, b.v, b.i, it->role, d->unicode);
		a = b;
		have_a = true;
	}
}

/*
 * Mark where the step A-B leaves the plot: an arrow on the edge where the
 * segment (or, when it misses the window, the line from the window's
 * centre towards B) crosses it, pointing the way B lies, and B's value
 * beside it (the coordinates that are off the plot).
 */
static void raster_off(struct grid *g, const struct render_layout *lay,
                       const struct plot_desc *d, const struct plot_item *it)
{
	const struct render_window *w = &lay->win;
	bool unicode = d->unicode;
	double av = raster_x(d, it->x0), bv = raster_x(d, it->x1);
	double ai = it->y0, bi = it->y1;
	double v0 = av, i0 = ai, v1 = bv, i1 = bi;
	if (!render_clip(w, &v0, &i0, &v1, &i1)) {
		v0 = 0.5 * (w->v_lo + w->v_hi);
		i0 = 0.5 * (w->i_lo + w->i_hi);
		v1 = bv;
		i1 = bi;
		if (!render_clip(w, &v0, &i0, &v1, &i1))
			return;
	}
	int nr = lay->bottom - lay->top + 1, nc = lay->right - lay->left + 1;
	int c = render_cell_index(render_fx(lay, v1), nc);
	int r = render_cell_index(render_fy(lay, i1), nr);
	if (c < 0)
		c = render_fx(lay, v1) < 0.0 ? 0 : nc - 1;
	if (r < 0)
		r = render_fy(lay, i1) < 0.0 ? 0 : nr - 1;
	/* The way B lies: the axis it is further out on, in spans. */
	double ov = bv < w->v_lo ? (w->v_lo - bv) / (w->v_hi - w->v_lo)
	            : bv > w->v_hi ? (bv - w->v_hi) / (w->v_hi - w->v_lo) : 0.0;
	double oi = bi < w->i_lo ? (w->i_lo - bi) / (w->i_hi - w->i_lo)
	            : bi > w->i_hi ? (bi - w->i_hi) / (w->i_hi - w->i_lo) : 0.0;
	uint32_t arrow = ov >= oi ? render_arrow(bv < w->v_lo ? 1 : 0, unicode)
	                          : render_arrow(bi > w->i_hi ? 2 : 3, unicode);
	render_put(g, lay->top + r, lay->left + c, arrow, ROLE_NEWEST);
	char val[96], tv[40], ti[40];
	qty_format_short(tv, sizeof tv, it->x1, d->x.kind, 4, unicode ? 0 : 1);
	qty_format_short(ti, sizeof ti, bi, d->y.kind, 4, unicode ? 0 : 1);
	if (ov > 0.0 && oi > 0.0)
		snprintf(val, sizeof val, "%s, %s", tv, ti);
	else
		snprintf(val, sizeof val, "%s", ov > 0.0 ? tv : ti);
	int vw = render_text_width(val);
	/* Beside the arrow, inside the data area: left of it on the right
	 * edge, right of it elsewhere; on the row below at the top edge. */
	int tc = lay->left + c + 2;
	if (tc + vw - 1 > lay->right)
		tc = lay->left + c - 1 - vw;
	if (tc < lay->left)
		tc = lay->left;
	int tr = lay->top + r + (r == 0 ? 1 : r == nr - 1 ? -1 : 0);
	render_text(g, tr, tc, val, ROLE_NEWEST);
}

/* A marker and, when the description asks, its number beside it. */
static void raster_marker(struct grid *g, const struct render_layout *lay,
                          const struct plot_desc *d, const struct plot_item *it)
{
	double x = raster_x(d, it->x0);
	render_marker(g, lay, x, it->y0, it->role, d->unicode);
	int r, c;
	if (d->tags && it->tag[0] != '\0' && isfinite(x) && isfinite(it->y0) &&
	    render_cell_of(lay, x, it->y0, &r, &c)) {
		/* The number beside the point, inside the data area. */
		int w = render_text_width(it->tag);
		int tc = c + 1 + w - 1 <= lay->right ? c + 1 : c - w;
		render_text(g, r, tc, it->tag, it->role);
	}
}

/* The bars of a histogram, filled down to the lower edge. */
static void raster_bars(struct grid *g, const struct render_layout *lay,
                        const struct plot_desc *d, const struct plot_item *it)
{
	int nr = lay->bottom - lay->top + 1, nc = lay->right - lay->left + 1;
	uint32_t ch = render_mark(it->role, d->unicode);
	for (size_t k = 0; k < it->n; k++) {
		if (!(it->y[k] > 0.0))
			continue;
		double x0 = render_fx(lay, raster_x(d, it->x[k]));
		double x1 = render_fx(lay, raster_x(d, it->x[k + 1]));
		double yt = render_fy(lay, it->y[k]);
		int c0 = (int)floor(fmax(x0, 0.0)), c1 = (int)ceil(fmin(x1, nc)) - 1;
		if (c1 < c0)
			c1 = c0;
		int r0 = (int)floor(fmax(yt, 0.0));
		for (int c = c0; c <= c1 && c < nc; c++)
			for (int r = r0; r < nr; r++)
				render_put(g, lay->top + r, lay->left + c, ch, it->role);
	}
}

/* A dotted column at the item's x with its words at the top. */
static void raster_vline(struct grid *g, const struct render_layout *lay,
                         const struct plot_desc *d, const struct plot_item *it)
{
	int row, col;
	double x = raster_x(d, it->x0);
	if (!isfinite(x) ||
	    !render_cell_of(lay, x, 0.5 * (lay->win.i_lo + lay->win.i_hi), &row,
	                    &col))
		return;
	for (int r = lay->top; r <= lay->bottom; r++)
		if ((r - lay->top) % 2 == 1)
			render_put(g, r, col, ':', it->role);
	int w = render_text_width(it->words);
	int at = col + 1 + w <= lay->right ? col + 1 : col - w;
	render_text(g, lay->top, at, it->words, it->role);
}

/* Draw one item of D. */
static void raster_item(struct grid *g, const struct render_layout *lay,
                        const struct plot_desc *d, const struct plot_item *it)
{
	switch (it->kind) {
	case PLOT_CURVE:
		raster_curve(g, lay, it, render_mark(it->role, d->unicode));
		break;
	case PLOT_POLYLINE:
		raster_polyline(g, lay, d, it);
		break;
	case PLOT_STEP: {
		struct trace_row a = { .v = raster_x(d, it->x0), .i = it->y0 };
		struct trace_row b = { .v = raster_x(d, it->x1), .i = it->y1 };
		render_segment(g, lay, &a, &b, it->role, d->unicode);
		break;
	}
	case PLOT_MARKER:
		raster_marker(g, lay, d, it);
		break;
	case PLOT_OFF:
		raster_off(g, lay, d, it);
		break;
	case PLOT_BARS:
		raster_bars(g, lay, d, it);
		break;
	case PLOT_VLINE:
		raster_vline(g, lay, d, it);
		break;
	}
}

/* The layout D takes on ROWS x COLS (render_layout_compute's work). */
enum render_status render_desc_layout(const struct plot_desc *d, int rows,
                                      int cols, struct render_layout *lay)
{
	struct render_ticks ty, tx;
	int lr;
	return raster_layout(d, rows, cols, lay, &ty, &tx, &lr);
}

/* Draw D into G with the character back end. */
enum render_status render_desc_grid(const struct plot_desc *d, struct grid *g,
                                    struct render_layout *lay_out)
{
	struct render_layout lay;
	struct render_ticks ty, tx;
	int lr;
	if (raster_layout(d, g->rows, g->cols, &lay, &ty, &tx, &lr) != RENDER_OK) {
		char msg[64];
		snprintf(msg, sizeof msg, "plot needs %dx%d", RENDER_MIN_COLS,
		         RENDER_MIN_ROWS);
		render_message(g, msg);
		return RENDER_TOO_SMALL;
	}
	grid_clear(g);
	int row0 = 0;
	if (d->title[0] != '\0') {
		render_text(g, 0, 0, d->title, ROLE_LEGEND);
		row0 = 1;
	}
	if (lr > 0)
		raster_legend(g, d, row0, lr);
	render_axes(g, &lay, &ty, &tx, d->unicode, d->names);
	for (size_t k = 0; k < d->nitems; k++)
		raster_item(g, &lay, d, &d->items[k]);
	if (lay_out != NULL)
		*lay_out = lay;
	return RENDER_OK;
}
