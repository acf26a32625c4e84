/*
 * plot_line.c - the load-line plot: the frame (the whole load line, a box
 * around the operating point, or fixed ranges) with zoom and pan, the
 * layout, the legend, the two curves, the path and the points.
 *
 * Curves are sampled twice: once per column (I from V) and once per row
 * (V from I, when the curve has an inverse).  Row sampling puts the steep
 * part of an exponential in the right column; the vertical gaps left
 * between two column samples are filled half in each column, so a curve
 * reads as one continuous stroke at any size.
 */
#include <math.h>
#include <stdio.h>

#include "render/render_int.h"

/* Relative margin added beyond the frame's extreme values. */
#define FRAME_MARGIN 0.06
/* Half-width of the point frame, relative to the point's voltage. */
#define POINT_HALF_SPAN 0.25
/* Half-height of the point frame, relative to the point's current. */
#define POINT_HALF_CURRENT 0.75

/* The order the legend lists the marks in. */
static const enum cell_role render_legend_order[] = {
	ROLE_POINT, ROLE_LINE, ROLE_DEVICE, ROLE_START, ROLE_PATH, ROLE_NEWEST,
};

/* Fill V with the defaults. */
void render_view_init(struct render_view *v)
{
	v->frame = FRAME_LINE;
	v->fixed = (struct render_window){ 0.0, 0.0, 0.0, 0.0 };
	v->zoom = 1.0;
	v->pan_v = 0.0;
	v->pan_i = 0.0;
	v->unicode = false;
	v->legend = true;
}

/* The device's voltage at current I (NaN when it has none there). */
static double render_device_voltage(const struct device *dev, double i)
{
	double v;
	if (dev->type->voltage == NULL || device_voltage(dev, i, &v) != 0)
		return NAN;
	return v;
}

/* The device's current at V (NaN when it has none there). */
static double render_device_current(const struct device *dev, double v)
{
	if (dev->type->current == NULL)
		return NAN;
	return device_current(dev, v);
}

/* The frame holding both load-line intercepts and every operating point. */
static void render_frame_line(const struct render_input *in,
                              struct render_window *w)
{
	const struct source *s = &in->pb->src;
	double vlo = 0.0, vhi = 0.0, ilo = 0.0, ihi = 0.0;
	if (source_is_ideal_current(s)) {
		render_include(&ilo, &ihi, s->isc);
		render_include(&vlo, &vhi, render_device_voltage(&in->pb->dev, s->isc));
	} else if (source_is_ideal_voltage(s)) {
		render_include(&vlo, &vhi, s->voc);
		render_include(&ilo, &ihi, render_device_current(&in->pb->dev, s->voc));
	} else {
		render_include(&vlo, &vhi, s->voc);
		render_include(&ilo, &ihi, s->isc);
	}
	for (size_t k = 0; k < in->npts && in->pts != NULL; k++) {
		render_include(&vlo, &vhi, in->pts[k].v);
		render_include(&ilo, &ihi, in->pts[k].i);
	}
	render_fix_span(&vlo, &vhi);
	render_fix_span(&ilo, &ihi);
	/* Keep zero on the edge so the intercepts sit on the axes. */
	double dv = FRAME_MARGIN * (vhi - vlo), di = FRAME_MARGIN * (ihi - ilo);
	w->v_lo = vlo < 0.0 ? vlo - dv : vlo;
	w->v_hi = vhi > 0.0 ? vhi + dv : vhi;
	w->i_lo = ilo < 0.0 ? ilo - di : ilo;
	w->i_hi = ihi > 0.0 ? ihi + di : ihi;
}

/*
 * The frame around the first operating point.  The current window is the
 * point's current plus and minus three quarters of it; the voltage window
 * is as wide as the steeper of the two curves needs to cross that current
 * window, so a diode's knee fills the plot while a shallow load line runs
 * across it.  Without a usable current it falls back to slopes: a
 * current half-span that makes the two curves look alike.
 */
static void render_frame_around(const struct render_input *in,
                                struct render_window *w)
{
	size_t focus = in->focus < in->npts ? in->focus : 0;
	const struct op_point *p = &in->pts[focus];
	const struct source *s = &in->pb->src;
	const struct device *d = &in->pb->dev;
	double hi = POINT_HALF_CURRENT * fabs(p->i);
	double hv = NAN;
	if (hi > 0.0 && isfinite(hi)) {
		double dv = fmax(fabs(render_device_voltage(d, p->i - hi) - p->v),
		                 fabs(render_device_voltage(d, p->i + hi) - p->v));
		double lv = source_is_ideal_current(s) ? NAN : s->r * hi;
		if (isfinite(dv) && dv > 0.0)
			hv = dv;
		if (isfinite(lv) && lv > 0.0 && !(hv <= lv))
			hv = lv;
	}
	if (!(hv > 0.0) || !isfinite(hv)) {
		hv = POINT_HALF_SPAN * fabs(p->v);
		if (!(hv > 0.0) && isfinite(s->voc))
			hv = POINT_HALF_SPAN * fabs(s->voc);
		if (!(hv > 0.0) || !isfinite(hv))
			hv = 1.0;
		double line = source_is_ideal_current(s) ? 0.0
		              : (s->r > 0.0 ? 1.0 / s->r : INFINITY);
		double dev = d->type->conductance != NULL
		             ? fabs(device_conductance(d, p->v)) : NAN;
		bool lok = isfinite(line) && line > 0.0;
		bool dok = isfinite(dev) && dev > 0.0;
		double slope = lok && dok ? sqrt(line * dev)
		               : lok ? line : dok ? dev : 0.0;
		hi = slope * hv;
		if (!(hi > 0.0) || !isfinite(hi))
			hi = 1e-3;
	}
	w->v_lo = p->v - hv;
	w->v_hi = p->v + hv;
	w->i_lo = p->i - hi;
	w->i_hi = p->i + hi;
}

/* Relative margin around the path in the point frame. */
#define PATH_MARGIN 0.12

/*
 * The point frame: around the focus point alone until the path has moved;
 * then the box holding the point and the newest RENDER_PATH_ROWS rows of
 * the path, with a margin, so the newest segment is always inside, a
 * diverging path is followed and a converging one magnified as its steps
 * shrink.  A box that has shrunk to nothing keeps a sliver of the size
 * rounding allows.
 */
static void render_frame_point(const struct render_input *in,
                               struct render_window *w)
{
	size_t focus = in->focus < in->npts ? in->focus : 0;
	const struct op_point *p = &in->pts[focus];
	size_t n = in->rows != NULL ? in->nrows : 0;
	if (n < 2) {
		render_frame_around(in, w);
		return;
	}
	double vlo = p->v, vhi = p->v, ilo = p->i, ihi = p->i;
	size_t first = n > RENDER_PATH_ROWS ? n - RENDER_PATH_ROWS : 0;
	for (size_t k = first; k < n; k++) {
		render_include(&vlo, &vhi, in->rows[k].v);
		render_include(&ilo, &ihi, in->rows[k].i);
	}
	double dv = vhi - vlo, di = ihi - ilo;
	/* A floor far below any step a person can see, far above rounding. */
	double fv = 1e-9 * fmax(fabs(vlo), fabs(vhi));
	double fi = 1e-9 * fmax(fabs(ilo), fabs(ihi));
	if (!(dv > fv) || !(di > fi)) {
		struct render_window around;
		render_frame_around(in, &around);
		/* Keep the aspect of the usual point frame at the path's size. */
		double sv = around.v_hi - around.v_lo, si = around.i_hi - around.i_lo;
		if (!(dv > fv) && di > fi)
			dv = di * sv / si;
		else if (!(di > fi) && dv > fv)
			di = dv * si / sv;
		else {
			dv = fmax(fv, 1e-12) * 1e3;
			di = dv * si / sv;
		}
		double cv = 0.5 * (vlo + vhi), ci = 0.5 * (ilo + ihi);
		vlo = cv - 0.5 * dv;
		vhi = cv + 0.5 * dv;
		ilo = ci - 0.5 * di;
		ihi = ci + 0.5 * di;
	}
	w->v_lo = vlo - PATH_MARGIN * dv;
	w->v_hi = vhi + PATH_MARGIN * dv;
	w->i_lo = ilo - PATH_MARGIN * di;
	w->i_hi = ihi + PATH_MARGIN * di;
}

/* Work out the frame before zoom and pan. */
enum render_status render_frame_compute(const struct render_input *in,
                                        const struct render_view *view,
                                        struct render_window *f)
{
	if (in == NULL || in->pb == NULL || in->pb->dev.type == NULL ||
	    isnan(in->pb->src.r))
		return RENDER_BAD_INPUT;
	bool have_point = in->pts != NULL && in->npts > 0 &&
	                  isfinite(in->pts[0].v) && isfinite(in->pts[0].i);
	const struct render_window *x = &view->fixed;
	bool fixed_ok = isfinite(x->v_lo) && isfinite(x->v_hi) && x->v_hi > x->v_lo &&
	                isfinite(x->i_lo) && isfinite(x->i_hi) && x->i_hi > x->i_lo;
	if (view->frame == FRAME_POINT && have_point)
		render_frame_point(in, f);
	else if (view->frame == FRAME_FIXED && fixed_ok)
		*f = *x;
	else
		render_frame_line(in, f);
	return RENDER_OK;
}

/* Zoom about a data point. */
enum render_status render_zoom_about(const struct render_input *in,
                                     struct render_view *view, double factor,
                                     double v, double i)
{
	struct render_window f, w;
	if (!(factor > 0.0) || render_frame_compute(in, view, &f) != RENDER_OK ||
	    render_window_compute(in, view, &w) != RENDER_OK)
		return RENDER_BAD_INPUT;
	double sv = f.v_hi - f.v_lo, si = f.i_hi - f.i_lo;
	double zoom = view->zoom * factor;
	if (!isfinite(v) || !isfinite(i)) {
		v = 0.5 * (w.v_lo + w.v_hi);
		i = 0.5 * (w.i_lo + w.i_hi);
	}
	/* Where the point sits across the window now (0..1), kept after. */
	double tv = (v - w.v_lo) / (w.v_hi - w.v_lo);
	double ti = (i - w.i_lo) / (w.i_hi - w.i_lo);
	double cv = v - tv * sv / zoom + 0.5 * sv / zoom;
	double ci = i - ti * si / zoom + 0.5 * si / zoom;
	double pv = (cv - 0.5 * (f.v_lo + f.v_hi)) / sv;
	double pi = (ci - 0.5 * (f.i_lo + f.i_hi)) / si;
	if (!isfinite(pv) || !isfinite(pi) || !isfinite(zoom))
		return RENDER_BAD_INPUT;
	view->zoom = zoom;
	view->pan_v = pv;
	view->pan_i = pi;
	return RENDER_OK;
}

/* Work out the data window: the frame, then zoom and pan. */
enum render_status render_window_compute(const struct render_input *in,
                                         const struct render_view *view,
                                         struct render_window *win)
{
	struct render_window f;
	if (render_frame_compute(in, view, &f) != RENDER_OK)
		return RENDER_BAD_INPUT;
	double zoom = isfinite(view->zoom) && view->zoom > 0.0 ? view->zoom : 1.0;
	double pv = isfinite(view->pan_v) ? view->pan_v : 0.0;
	double pi = isfinite(view->pan_i) ? view->pan_i : 0.0;
	double sv = f.v_hi - f.v_lo, si = f.i_hi - f.i_lo;
	double cv = 0.5 * (f.v_lo + f.v_hi) + pv * sv;
	double ci = 0.5 * (f.i_lo + f.i_hi) + pi * si;
	win->v_lo = cv - 0.5 * sv / zoom;
	win->v_hi = cv + 0.5 * sv / zoom;
	win->i_lo = ci - 0.5 * si / zoom;
	win->i_hi = ci + 0.5 * si / zoom;
	if (!(win->v_hi > win->v_lo) || !(win->i_hi > win->i_lo) ||
	    !isfinite(win->v_hi - win->v_lo) || !isfinite(win->i_hi - win->i_lo))
		return RENDER_BAD_INPUT;
	return RENDER_OK;
}

/* One legend entry: a mark and its words. */
struct render_legend_item {
	uint32_t mark;
	const char *name;
};

/* The off-plot marks, by direction (ASCII, Unicode). */
static const uint32_t render_off_right[2] = { '>', 0x2192 };  /* → */
static const uint32_t render_off_left[2] = { '<', 0x2190 };   /* ← */
static const uint32_t render_off_up[2] = { '^', 0x2191 };     /* ↑ */
static const uint32_t render_off_down[2] = { 'v', 0x2193 };   /* ↓ */

/* The legend's entries for IN (OFF: the newest step leaves the plot). */
static size_t render_legend_items(const struct render_input *in, bool off,
                                  bool unicode, struct render_legend_item *out)
{
	size_t n = 0;
	int u = unicode ? 1 : 0;
	for (size_t k = 0; k < sizeof render_legend_order / sizeof render_legend_order[0]; k++) {
		enum cell_role role = render_legend_order[k];
		bool path = role == ROLE_PATH || role == ROLE_NEWEST;
		if (path && (in->rows == NULL || in->nrows < 2))
			continue;
		if (role == ROLE_START && (in->rows == NULL || in->nrows < 1))
			continue;
		out[n].mark = render_mark(role, unicode);
		out[n].name = render_role_name(role);
		n++;
	}
	if (off) {
		out[n].mark = render_off_right[u];
		out[n].name = "off the plot";
		n++;
	}
	return n;
}

/* Rows the legend's N ITEMS take on COLS cells (words never cut). */
static int render_legend_rows(const struct render_legend_item *items, size_t n,
                              int cols)
{
	int rows = n > 0 ? 1 : 0, col = 0;
	for (size_t k = 0; k < n; k++) {
		int w = 2 + render_text_width(items[k].name);
		if (col > 0 && col + w > cols) {
			rows++;
			col = 0;
		}
		col += w + 2;
	}
	return rows;
}

/* The legend: each mark and what it stands for, wrapped onto its rows. */
static void render_legend(struct grid *g, const struct render_legend_item *items,
                          size_t n, int max_rows)
{
	int row = 0, col = 0;
	for (size_t k = 0; k < n; k++) {
		int w = 2 + render_text_width(items[k].name);
		if (col > 0 && col + w > g->cols) {
			row++;
			col = 0;
		}
		if (row >= max_rows)
			break;
		render_put(g, row, col, items[k].mark, ROLE_LEGEND);
		render_text(g, row, col + 2, items[k].name, ROLE_LEGEND);
		col += w + 2;
	}
}

/* True when the newest point of IN's path lies outside window W. */
static bool render_newest_off(const struct render_input *in,
                              const struct render_window *w)
{
	if (in->rows == NULL || in->nrows < 2)
		return false;
	const struct trace_row *b = &in->rows[in->nrows - 1];
	if (!isfinite(b->v) || !isfinite(b->i))
		return false;
	return b->v < w->v_lo || b->v > w->v_hi || b->i < w->i_lo || b->i > w->i_hi;
}

/* Work out the layout and the ticks of both axes. */
static enum render_status render_layout_ticks(const struct render_input *in,
                                              const struct render_view *view,
                                              int rows, int cols,
                                              struct render_layout *lay,
                                              struct render_ticks *ty,
                                              struct render_ticks *tx)
{
	if (rows < RENDER_MIN_ROWS || cols < RENDER_MIN_COLS)
		return RENDER_TOO_SMALL;
	enum render_status st = render_window_compute(in, view, &lay->win);
	if (st != RENDER_OK)
		return st;
	lay->top = 0;
	if (view->legend) {
		struct render_legend_item items[16];
		size_t n = render_legend_items(in, render_newest_off(in, &lay->win),
		                               view->unicode, items);
		lay->top = render_legend_rows(items, n, cols);
		if (lay->top > 3)
			lay->top = 3;
	}
	lay->axis_row = rows - 2;
	lay->bottom = rows - 3;
	int nr = lay->bottom - lay->top + 1;
	render_ticks_make(ty, lay->win.i_lo, lay->win.i_hi, nr / 3 > 2 ? nr / 3 : 2,
	                  QTY_CURRENT, view->unicode);
	int margin = ty->width + 1;
	if (margin > cols / 3)
		margin = cols / 3;
	lay->axis_col = margin;
	lay->left = margin + 1;
	lay->right = cols - 1;
	int nc = lay->right - lay->left + 1;
	render_ticks_make(tx, lay->win.v_lo, lay->win.v_hi, nc / 12 > 2 ? nc / 12 : 2,
	                  QTY_VOLTAGE, view->unicode);
	return RENDER_OK;
}

/* Work out where the data area lies. */
enum render_status render_layout_compute(const struct render_input *in,
                                         const struct render_view *view,
                                         int rows, int cols,
                                         struct render_layout *lay)
{
	struct render_ticks ty, tx;
	return render_layout_ticks(in, view, rows, cols, lay, &ty, &tx);
}

/* A curve as two optional functions: I of V, and V of I. */
struct render_curve {
	double (*i_of_v)(const void *ctx, double v);
	double (*v_of_i)(const void *ctx, double i);
	const void *ctx;
};

/* Load-line current at V. */
static double render_line_i(const void *ctx, double v)
{
	return source_line_current(ctx, v);
}

/* Load-line voltage at I. */
static double render_line_v(const void *ctx, double i)
{
	return source_line_voltage(ctx, i);
}

/* Device current at V. */
static double render_dev_i(const void *ctx, double v)
{
	return render_device_current(ctx, v);
}

/* Device voltage at I. */
static double render_dev_v(const void *ctx, double i)
{
	return render_device_voltage(ctx, i);
}

/* Fractional row of CV at V, clamped to [-1, NR]; NaN where undefined. */
static double render_curve_row(const struct render_layout *lay,
                               const struct render_curve *cv, double v, int nr)
{
	double i = cv->i_of_v(cv->ctx, v);
	if (isnan(i))
		return NAN;
	return fmin(fmax(render_fy(lay, i), -1.0), (double)nr);
}

/*
 * Draw curve CV with mark CH and ROLE.  Per column, every row the curve
 * passes through between the column's two edges is marked (exact for a
 * curve monotone within a column); per row, the cell at the curve's
 * voltage for the row's centre current is marked too, which draws
 * vertical lines and curves known only as V(I).
 */
static void render_curve_draw(struct grid *g, const struct render_layout *lay,
                              const struct render_curve *cv, uint32_t ch,
                              enum cell_role role)
{
	int nr = lay->bottom - lay->top + 1, nc = lay->right - lay->left + 1;
	const struct render_window *w = &lay->win;
	double dv = (w->v_hi - w->v_lo) / nc, di = (w->i_hi - w->i_lo) / nr;
	if (cv->i_of_v != NULL) {
		double yl = render_curve_row(lay, cv, w->v_lo, nr);
		for (int c = 0; c < nc; c++) {
			double yr = render_curve_row(lay, cv, w->v_lo + (c + 1) * dv, nr);
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
					render_put(g, lay->top + r, lay->left + c, ch, role);
		}
	}
	if (cv->v_of_i == NULL)
		return;
	for (int r = 0; r < nr; r++) {
		double v = cv->v_of_i(cv->ctx, w->i_hi - (r + 0.5) * di);
		if (isnan(v))
			continue;
		int c = render_cell_index(render_fx(lay, v), nc);
		if (c >= 0)
			render_put(g, lay->top + r, lay->left + c, ch, role);
	}
}

/*
 * Mark where the newest step A-B leaves the plot: an arrow on the edge
 * where the segment (or, when it misses the window, the line from the
 * window's centre towards B) crosses it, pointing the way B lies, and B's
 * value beside it (the coordinates that are off the plot).
 */
static void render_off_marker(struct grid *g, const struct render_layout *lay,
                              const struct trace_row *a,
                              const struct trace_row *b, bool unicode)
{
	const struct render_window *w = &lay->win;
	int u = unicode ? 1 : 0;
	double v0 = a->v, i0 = a->i, v1 = b->v, i1 = b->i;
	if (!render_clip(w, &v0, &i0, &v1, &i1)) {
		v0 = 0.5 * (w->v_lo + w->v_hi);
		i0 = 0.5 * (w->i_lo + w->i_hi);
		v1 = b->v;
		i1 = b->i;
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
	double ov = b->v < w->v_lo ? (w->v_lo - b->v) / (w->v_hi - w->v_lo)
	            : b->v > w->v_hi ? (b->v - w->v_hi) / (w->v_hi - w->v_lo) : 0.0;
	double oi = b->i < w->i_lo ? (w->i_lo - b->i) / (w->i_hi - w->i_lo)
	            : b->i > w->i_hi ? (b->i - w->i_hi) / (w->i_hi - w->i_lo) : 0.0;
	uint32_t arrow = ov >= oi ? (b->v < w->v_lo ? render_off_left[u]
	                                            : render_off_right[u])
	                          : (b->i > w->i_hi ? render_off_up[u]
	                                            : render_off_down[u]);
	render_put(g, lay->top + r, lay->left + c, arrow, ROLE_NEWEST);
	char val[96], tv[40], ti[40];
	qty_format_short(tv, sizeof tv, b->v, QTY_VOLTAGE, 4, unicode ? 0 : 1);
	qty_format_short(ti, sizeof ti, b->i, QTY_CURRENT, 4, unicode ? 0 : 1);
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

/* Draw the plot of IN with VIEW into G. */
enum render_status render_plot(const struct render_input *in,
                               const struct render_view *view,
                               struct grid *g, struct render_layout *lay_out)
{
	struct render_layout lay;
	struct render_ticks ty, tx;
	enum render_status st =
		render_layout_ticks(in, view, g->rows, g->cols, &lay, &ty, &tx);
	if (st == RENDER_TOO_SMALL) {
		char msg[64];
		snprintf(msg, sizeof msg, "plot needs %dx%d", RENDER_MIN_COLS,
		         RENDER_MIN_ROWS);
		render_message(g, msg);
		return st;
	}
	if (st != RENDER_OK) {
		render_message(g, "nothing to plot: the source or device is not valid");
		return st;
	}
	grid_clear(g);
	bool u = view->unicode;
	bool off = render_newest_off(in, &lay.win);
	if (view->legend) {
		struct render_legend_item items[16];
		size_t n = render_legend_items(in, off, u, items);
		render_legend(g, items, n, lay.top);
	}
	render_axes(g, &lay, &ty, &tx, u,
	            u ? "I\xE2\x86\x91 V\xE2\x86\x92" : "I^ V>");

	struct render_curve line = { render_line_i, render_line_v, &in->pb->src };
	render_curve_draw(g, &lay, &line, render_mark(ROLE_LINE, u), ROLE_LINE);
	/* The intercepts may sit on a cell corner: mark their cells too. */
	const struct source *src = &in->pb->src;
	if (!source_is_ideal_current(src))
		render_marker(g, &lay, src->voc, 0.0, ROLE_LINE, u);
	if (!source_is_ideal_voltage(src))
		render_marker(g, &lay, 0.0, src->isc, ROLE_LINE, u);
	struct render_curve dev = {
		in->pb->dev.type->current != NULL ? render_dev_i : NULL,
		in->pb->dev.type->voltage != NULL ? render_dev_v : NULL,
		&in->pb->dev,
	};
	render_curve_draw(g, &lay, &dev, render_mark(ROLE_DEVICE, u), ROLE_DEVICE);

	if (in->rows != NULL && in->nrows > 0) {
		for (size_t k = 1; k < in->nrows; k++)
			render_segment(g, &lay, &in->rows[k - 1], &in->rows[k],
			               k + 1 == in->nrows ? ROLE_NEWEST : ROLE_PATH, u);
		render_marker(g, &lay, in->rows[0].v, in->rows[0].i, ROLE_START, u);
	}
	if (off)
		render_off_marker(g, &lay, &in->rows[in->nrows - 2],
		                  &in->rows[in->nrows - 1], u);
	for (size_t k = 0; k < in->npts && in->pts != NULL; k++) {
		render_marker(g, &lay, in->pts[k].v, in->pts[k].i, ROLE_POINT, u);
		int r, c;
		if (in->labels && render_cell_of(&lay, in->pts[k].v, in->pts[k].i, &r, &c)) {
			/* The point's number beside it, inside the data area. */
			char tag[24];
			snprintf(tag, sizeof tag, "%zu", k + 1);
			int w = render_text_width(tag);
			int tc = c + 1 + w - 1 <= lay.right ? c + 1 : c - w;
			render_text(g, r, tc, tag, ROLE_POINT);
		}
	}
	if (lay_out != NULL)
		*lay_out = lay;
	return RENDER_OK;
}
