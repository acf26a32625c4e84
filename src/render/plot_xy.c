/*
 * plot_xy.c - an x-y line plot (a sweep's result) and a histogram (a
 * Monte Carlo run's bins), each as a plot description: the window, a log
 * or linear x axis, the joined points and a mark at one x; the bars and
 * the dotted lines at the nominal value and the spec limits.
 */
#include <math.h>
#include <stdio.h>

#include "render/plot.h"
#include "render/render_int.h"

/* The description of the x-y plot IN. */
enum render_status render_desc_xy(const struct render_xy *in,
                                  struct plot_desc *d)
{
	plot_desc_init(d);
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
	if (used == 0)
		return RENDER_BAD_INPUT;
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
	d->x = (struct plot_axis){ xlo, xhi, in->log_x, in->x_kind, "" };
	d->y = (struct plot_axis){ ylo, yhi, false, in->y_kind, "" };
	if (in->title != NULL)
		snprintf(d->title, sizeof d->title, "%s", in->title);
	d->names = in->names;
	d->unicode = in->unicode;
	plot_desc_polyline(d, ROLE_DEVICE, in->x, in->y, in->n);

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
			struct plot_item *it = plot_desc_add(d, PLOT_MARKER, ROLE_POINT);
			if (it != NULL) {
				it->x0 = xm;
				it->y0 = y0 + t * (y1 - y0);
			}
			break;
		}
	}
	return d->no_memory ? RENDER_NO_MEMORY : RENDER_OK;
}

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
	struct plot_desc d;
	enum render_status st = render_desc_xy(in, &d);
	if (st == RENDER_BAD_INPUT)
		render_message(g, "nothing to plot: no points");
	else if (st == RENDER_NO_MEMORY)
		render_message(g, "out of memory");
	else
		st = render_desc_grid(&d, g, lay_out);
	plot_desc_fini(&d);
	return st;
}

/* The description of the histogram IN. */
enum render_status render_desc_hist(const struct render_hist *in,
                                    struct plot_desc *d)
{
	plot_desc_init(d);
	const struct tol_hist *h = in != NULL ? in->h : NULL;
	if (h == NULL || h->nbins == 0 || !isfinite(h->lo) || !isfinite(h->hi))
		return RENDER_BAD_INPUT;
	size_t nb = h->nbins, total = 0, most = 0;
	double edges[TOL_MAX_BINS + 1], counts[TOL_MAX_BINS];
	for (size_t k = 0; k < nb; k++) {
		counts[k] = (double)h->counts[k];
		total += h->counts[k];
		if (h->counts[k] > most)
			most = h->counts[k];
	}
	if (total == 0)
		return RENDER_BAD_INPUT;
	double lo = h->lo, hi = h->hi;
	if (!(hi > lo)) {
		/* Every trial alike: one bar around the value. */
		render_fix_span(&lo, &hi);
		nb = 1;
		counts[0] = (double)total;
		most = total;
	}
	for (size_t k = 0; k <= nb; k++)
		edges[k] = lo + (hi - lo) * (double)k / (double)nb;
	double xlo = lo, xhi = hi;
	render_include(&xlo, &xhi, in->nominal);
	render_include(&xlo, &xhi, in->lo_limit);
	render_include(&xlo, &xhi, in->hi_limit);
	double pad = 0.04 * (xhi - xlo);
	d->x = (struct plot_axis){ xlo - pad, xhi + pad, false, in->kind, "" };
	d->y = (struct plot_axis){ 0.0, 1.08 * (double)most, false, QTY_NUMBER,
	                           "trials" };
	if (in->x_title != NULL)
		snprintf(d->x.title, sizeof d->x.title, "%s", in->x_title);
	if (in->title != NULL)
		snprintf(d->title, sizeof d->title, "%s", in->title);
	d->unicode = in->unicode;
	d->names = in->unicode ? "n\xE2\x86\x91" : "n^";
	d->legend_rows = 1;
	plot_desc_legend(d, ROLE_DEVICE, 0, SHAPE_DOT, "trials per bin");
	plot_desc_bars(d, ROLE_DEVICE, edges, counts, nb);
	struct { double x; const char *words; } lines[] = {
		{ in->nominal, "nominal" },
		{ in->lo_limit, "min" },
		{ in->hi_limit, "max" },
	};
	for (size_t k = 0; k < sizeof lines / sizeof lines[0]; k++) {
		if (!isfinite(lines[k].x))
			continue;
		struct plot_item *it = plot_desc_add(d, PLOT_VLINE, ROLE_LABEL);
		if (it == NULL)
			break;
		it->x0 = lines[k].x;
		snprintf(it->words, sizeof it->words, "%s", lines[k].words);
	}
	return d->no_memory ? RENDER_NO_MEMORY : RENDER_OK;
}
