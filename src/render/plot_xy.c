/*
 * plot_xy.c - an x-y line plot (a sweep's result): its window, log or
 * linear x axis, the joined points and a mark at one x.
 */
#include <math.h>
#include <stdio.h>

#include "render/render_int.h"

/* Draw the x-y line plot IN into G. */
enum render_status render_xy_plot(const struct render_xy *in, struct grid *g,
                                  struct render_layout *lay_out)
{
	if (g->rows < RENDER_MIN_ROWS || g->cols < RENDER_MIN_COLS) {
		char msg[64];
		snprintf(msg, sizeof msg, "plot needs %dx%d", RENDER_MIN_COLS,
		         RENDER_MIN_ROWS);
		render_message(g, msg);
		return RENDER_TOO_SMALL;
	}
	/* The window: every usable point, x in log10 units on a log axis. */
	double xlo = INFINITY, xhi = -INFINITY, ylo = INFINITY, yhi = -INFINITY;
	size_t used = 0;
	for (size_t k = 0; in != NULL && in->x != NULL && in->y != NULL && k < in->n;
	     k++) {
		double x = in->x[k], y = in->y[k];
		if (!isfinite(x) || !isfinite(y) || (in->log_x && !(x > 0.0)))
			continue;
		double px = in->log_x ? log10(x) : x;
		xlo = fmin(xlo, px);
		xhi = fmax(xhi, px);
		ylo = fmin(ylo, y);
		yhi = fmax(yhi, y);
		used++;
	}
	if (used == 0) {
		render_message(g, "nothing to plot: no points");
		return RENDER_BAD_INPUT;
	}
	render_fix_span(&xlo, &xhi);
	/* Zero on the y axis when the values are all of one sign. */
	if (ylo > 0.0)
		ylo = 0.0;
	if (yhi < 0.0)
		yhi = 0.0;
	render_fix_span(&ylo, &yhi);
	double pad = 0.05 * (yhi - ylo);
	if (yhi > 0.0)
		yhi += pad;
	if (ylo < 0.0)
		ylo -= pad;

	struct render_layout lay;
	struct render_ticks ty, tx;
	lay.win = (struct render_window){ xlo, xhi, ylo, yhi };
	bool titled = in->title != NULL && in->title[0] != '\0';
	lay.top = titled ? 1 : 0;
	lay.axis_row = g->rows - 2;
	lay.bottom = g->rows - 3;
	int nr = lay.bottom - lay.top + 1;
	render_ticks_make(&ty, ylo, yhi, nr / 3 > 2 ? nr / 3 : 2, in->y_kind,
	                  in->unicode);
	int margin = ty.width + 1;
	if (margin > g->cols / 3)
		margin = g->cols / 3;
	lay.axis_col = margin;
	lay.left = margin + 1;
	lay.right = g->cols - 1;
	int nc = lay.right - lay.left + 1;
	if (in->log_x)
		render_ticks_log(&tx, xlo, xhi, nc, in->x_kind, in->unicode);
	else
		render_ticks_make(&tx, xlo, xhi, nc / 12 > 2 ? nc / 12 : 2, in->x_kind,
		                  in->unicode);

	grid_clear(g);
	bool u = in->unicode;
	if (titled)
		render_text(g, 0, 0, in->title, ROLE_LEGEND);
	render_axes(g, &lay, &ty, &tx, u, in->names);
	/* The curve: consecutive usable points joined. */
	struct trace_row a = { 0 }, b = { 0 };
	bool have_a = false;
	for (size_t k = 0; k < in->n; k++) {
		double x = in->x[k], y = in->y[k];
		if (!isfinite(x) || !isfinite(y) || (in->log_x && !(x > 0.0))) {
			have_a = false;
			continue;
		}
		b.v = in->log_x ? log10(x) : x;
		b.i = y;
		if (have_a)
			render_segment(g, &lay, &a, &b, ROLE_DEVICE, u);
		else
			render_marker(g, &lay, b.v, b.i, ROLE_DEVICE, u);
		a = b;
		have_a = true;
	}
	/* The mark: the curve's value at X_MARK, read between its points. */
	double xm = in->x_mark;
	if (isfinite(xm) && (!in->log_x || xm > 0.0)) {
		double pm = in->log_x ? log10(xm) : xm;
		for (size_t k = 0; k + 1 < in->n; k++) {
			double x0 = in->x[k], x1 = in->x[k + 1];
			double y0 = in->y[k], y1 = in->y[k + 1];
			if (!isfinite(x0) || !isfinite(x1) || !isfinite(y0) || !isfinite(y1) ||
			    (in->log_x && !(x0 > 0.0 && x1 > 0.0)))
				continue;
			double p0 = in->log_x ? log10(x0) : x0;
			double p1 = in->log_x ? log10(x1) : x1;
			if (!(pm >= fmin(p0, p1) && pm <= fmax(p0, p1)))
				continue;
			double t = p1 != p0 ? (pm - p0) / (p1 - p0) : 0.0;
			render_marker(g, &lay, pm, y0 + t * (y1 - y0), ROLE_POINT, u);
			break;
		}
	}
	if (lay_out != NULL)
		*lay_out = lay;
	return RENDER_OK;
}
