/*
 * plot_line.c - the load-line plot: the frame (the whole load line, a box
 * around the operating point, or fixed ranges) with zoom and pan, and its
 * description (plot.h): the legend, the two curves, the path and the
 * points with their stability, and the caption; render_plot draws it into
 * the character grid (raster.c).
 */
#include <math.h>
#include <stdio.h>

#include "render/plot.h"
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

/* The shape of each role's marker in the vector back end. */
static enum plot_shape render_legend_shape(enum cell_role role)
{
	return role == ROLE_START ? SHAPE_CIRCLE : SHAPE_DOT;
}

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

/* The legend's entries for IN (OFF: the newest step leaves the plot). */
static void render_line_legend(const struct render_input *in, bool off,
                               bool unicode, struct plot_desc *d)
{
	for (size_t k = 0; k < sizeof render_legend_order / sizeof render_legend_order[0]; k++) {
		enum cell_role role = render_legend_order[k];
		bool path = role == ROLE_PATH || role == ROLE_NEWEST;
		if (path && (in->rows == NULL || in->nrows < 2))
			continue;
		if (role == ROLE_START && (in->rows == NULL || in->nrows < 1))
			continue;
		plot_desc_legend(d, role, 0, render_legend_shape(role),
		                 render_role_name(role));
	}
	if (off)
		plot_desc_legend(d, ROLE_NEWEST, render_arrow(0, unicode), SHAPE_DOT,
		                 "off the plot");
}

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

/* A marker item at (X, Y) with ROLE and SHAPE (nothing when out of memory). */
static struct plot_item *render_add_marker(struct plot_desc *d,
                                           enum cell_role role,
                                           enum plot_shape shape, double x,
                                           double y)
{
	struct plot_item *it = plot_desc_add(d, PLOT_MARKER, role);
	if (it != NULL) {
		it->x0 = x;
		it->y0 = y;
		it->shape = shape;
	}
	return it;
}

/* The caption: the file, the source and device, and each point. */
static void render_line_caption(const struct render_input *in,
                                const char *name,
                                const struct stability_result *sr,
                                struct plot_desc *d)
{
	const struct source *s = &in->pb->src;
	char a[48], b[48];
	if (name != NULL && name[0] != '\0')
		plot_desc_caption(d, "%s", name);
	if (source_is_ideal_current(s)) {
		qty_format_short(a, sizeof a, s->isc, QTY_CURRENT, 5, 0);
		plot_desc_caption(d, "source: ideal current source %s; device: %s", a,
		                  in->pb->dev.type->name);
	} else {
		qty_format_short(a, sizeof a, s->voc, QTY_VOLTAGE, 5, 0);
		qty_format_short(b, sizeof b, s->r, QTY_RESISTANCE, 5, 0);
		plot_desc_caption(d, "source: %s behind %s; device: %s", a, b,
		                  in->pb->dev.type->name);
	}
	if (in->pts == NULL || in->npts == 0) {
		plot_desc_caption(d, "no operating point");
		return;
	}
	for (size_t k = 0; k < in->npts; k++) {
		char v[48], i[48];
		qty_format(v, sizeof v, in->pts[k].v, QTY_VOLTAGE, 6, 0);
		qty_format(i, sizeof i, in->pts[k].i, QTY_CURRENT, 6, 0);
		if (d->ncaption + 1 == PLOT_MAX_CAPTION && k + 1 < in->npts) {
			plot_desc_caption(d, "and %zu more points", in->npts - k);
			return;
		}
		plot_desc_caption(d, "point %zu: %s, %s, %s", k + 1, v, i,
		                  stability_name(sr[k].verdict));
	}
}

/* The description of the load-line plot. */
enum render_status render_desc_line(const struct render_input *in,
                                    const struct render_view *view,
                                    const struct render_notes *notes,
                                    struct plot_desc *d)
{
	plot_desc_init(d);
	struct render_window win;
	if (render_window_compute(in, view, &win) != RENDER_OK)
		return RENDER_BAD_INPUT;
	bool u = view->unicode;
	d->x = (struct plot_axis){ win.v_lo, win.v_hi, false, QTY_VOLTAGE,
	                           "device voltage" };
	d->y = (struct plot_axis){ win.i_lo, win.i_hi, false, QTY_CURRENT,
	                           "device current" };
	d->unicode = u;
	d->tags = in->labels;
	d->names = u ? "I\xE2\x86\x91 V\xE2\x86\x92" : "I^ V>";
	bool off = render_newest_off(in, &win);
	if (view->legend) {
		render_line_legend(in, off, u, d);
		d->legend_rows = 3;
	}

	struct plot_item *it = plot_desc_add(d, PLOT_CURVE, ROLE_LINE);
	if (it != NULL) {
		it->y_of_x = render_line_i;
		it->x_of_y = render_line_v;
		it->ctx = &in->pb->src;
	}
	/* The intercepts may sit on a cell corner: mark them too. */
	const struct source *src = &in->pb->src;
	if (!source_is_ideal_current(src))
		render_add_marker(d, ROLE_LINE, SHAPE_TICK, src->voc, 0.0);
	if (!source_is_ideal_voltage(src))
		render_add_marker(d, ROLE_LINE, SHAPE_TICK, 0.0, src->isc);
	it = plot_desc_add(d, PLOT_CURVE, ROLE_DEVICE);
	if (it != NULL) {
		it->y_of_x = in->pb->dev.type->current != NULL ? render_dev_i : NULL;
		it->x_of_y = in->pb->dev.type->voltage != NULL ? render_dev_v : NULL;
		it->ctx = &in->pb->dev;
	}

	if (in->rows != NULL && in->nrows > 0) {
		for (size_t k = 1; k < in->nrows; k++) {
			it = plot_desc_add(d, PLOT_STEP,
			                   k + 1 == in->nrows ? ROLE_NEWEST : ROLE_PATH);
			if (it == NULL)
				break;
			it->x0 = in->rows[k - 1].v;
			it->y0 = in->rows[k - 1].i;
			it->x1 = in->rows[k].v;
			it->y1 = in->rows[k].i;
		}
		render_add_marker(d, ROLE_START, SHAPE_CIRCLE, in->rows[0].v,
		                  in->rows[0].i);
	}
	if (off && (it = plot_desc_add(d, PLOT_OFF, ROLE_NEWEST)) != NULL) {
		it->x0 = in->rows[in->nrows - 2].v;
		it->y0 = in->rows[in->nrows - 2].i;
		it->x1 = in->rows[in->nrows - 1].v;
		it->y1 = in->rows[in->nrows - 1].i;
	}
	struct stability_result sr[SOLVE_MAX_POINTS];
	size_t npts = in->pts != NULL ? in->npts : 0;
	if (npts > SOLVE_MAX_POINTS)
		npts = SOLVE_MAX_POINTS;
	for (size_t k = 0; k < npts; k++) {
		stability_classify(in->pb, in->pts[k].rd,
		                   notes != NULL ? notes->reactive : NULL, &sr[k]);
		it = render_add_marker(d, ROLE_POINT, plot_shape_of(sr[k].verdict),
		                       in->pts[k].v, in->pts[k].i);
		if (it == NULL)
			break;
		snprintf(it->tag, sizeof it->tag, "%zu", k + 1);
		snprintf(it->words, sizeof it->words, "%s",
		         stability_name(sr[k].verdict));
	}
	struct render_input cin = *in;
	cin.npts = npts;
	render_line_caption(&cin, notes != NULL ? notes->name : NULL, sr, d);
	return d->no_memory ? RENDER_NO_MEMORY : RENDER_OK;
}

/* Work out where the data area lies. */
enum render_status render_layout_compute(const struct render_input *in,
                                         const struct render_view *view,
                                         int rows, int cols,
                                         struct render_layout *lay)
{
	if (rows < RENDER_MIN_ROWS || cols < RENDER_MIN_COLS)
		return RENDER_TOO_SMALL;
	struct plot_desc d;
	enum render_status st = render_desc_line(in, view, NULL, &d);
	if (st == RENDER_OK)
		st = render_desc_layout(&d, rows, cols, lay);
	plot_desc_fini(&d);
	return st;
}

/* Draw the plot of IN with VIEW into G. */
enum render_status render_plot(const struct render_input *in,
                               const struct render_view *view,
                               struct grid *g, struct render_layout *lay_out)
{
	if (g->rows < RENDER_MIN_ROWS || g->cols < RENDER_MIN_COLS) {
		char msg[64];
		snprintf(msg, sizeof msg, "plot needs %dx%d", RENDER_MIN_COLS,
		         RENDER_MIN_ROWS);
		render_message(g, msg);
		return RENDER_TOO_SMALL;
	}
	struct plot_desc d;
	enum render_status st = render_desc_line(in, view, NULL, &d);
	if (st == RENDER_BAD_INPUT)
		render_message(g, "nothing to plot: the source or device is not valid");
	else if (st == RENDER_NO_MEMORY)
		render_message(g, "out of memory");
	else
		st = render_desc_grid(&d, g, lay_out);
	plot_desc_fini(&d);
	return st;
}
