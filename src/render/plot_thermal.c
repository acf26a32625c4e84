/*
 * plot_thermal.c - the thermal plane of a part that heats itself: the
 * junction temperature Tj across, heat up; the heat-removal line from
 * (Ta, 0) with slope 1/theta, the part's heat P(Tj) (each point an
 * electrical solve at that Tj: core/thermal.h), the thermal path of the
 * stepper (core/thermal_stepper.h), the balances and the maximum junction
 * temperature.
 *
 * The window runs from just below the ambient to a little past the
 * hottest thing worth seeing (a balance, the path, or Tjmax when nothing
 * balances), and up to a little above the largest heat there, so the
 * crossings of the two curves fill the plot.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>

#include "render/render_int.h"

/* Room left past the hottest temperature shown, as a share of the rise. */
#define THERMAL_SPAN 0.3
/* Room above the largest heat shown. */
#define THERMAL_HEADROOM 0.12
/* Most columns sampled (one electrical solve each). */
#define THERMAL_MAX_SAMPLES 1024

/* The legend: mark and words, in order. */
struct thermal_legend {
	enum cell_role role;
	const char *words;
};

static const struct thermal_legend thermal_legend[] = {
	{ ROLE_POINT, "balance" },
	{ ROLE_LINE, "heat removed" },
	{ ROLE_DEVICE, "heat made P(Tj)" },
	{ ROLE_START, "start" },
	{ ROLE_PATH, "path" },
	{ ROLE_NEWEST, "newest step" },
};

/* The legend line, as many entries as fit. */
static void thermal_draw_legend(struct grid *g, bool unicode)
{
	int col = 0;
	for (size_t k = 0; k < sizeof thermal_legend / sizeof thermal_legend[0];
	     k++) {
		int w = 2 + render_text_width(thermal_legend[k].words);
		if (col + w > g->cols)
			break;
		render_put(g, 0, col, render_mark(thermal_legend[k].role, unicode),
		           ROLE_LEGEND);
		render_text(g, 0, col + 2, thermal_legend[k].words, ROLE_LEGEND);
		col += w + 2;
	}
}

/* A segment of the plane from (T0, P0) to (T1, P1) with ROLE. */
static void thermal_segment(struct grid *g, const struct render_layout *lay,
                            double t0, double p0, double t1, double p1,
                            enum cell_role role, bool unicode)
{
	struct trace_row a = { .v = t0, .i = p0 }, b = { .v = t1, .i = p1 };
	render_segment(g, lay, &a, &b, role, unicode);
}

/* Draw the thermal plane of IN into G (see render.h). */
enum render_status render_thermal_plot(const struct render_thermal *in,
                                       struct grid *g,
                                       struct render_layout *lay_out)
{
	if (g->rows < RENDER_MIN_ROWS || g->cols < RENDER_MIN_COLS) {
		char msg[64];
		snprintf(msg, sizeof msg, "plot needs %dx%d", RENDER_MIN_COLS,
		         RENDER_MIN_ROWS);
		render_message(g, msg);
		return RENDER_TOO_SMALL;
	}
	struct thermal_keys k;
	if (in == NULL || in->pb == NULL || in->o == NULL ||
	    !thermal_active(&in->pb->dev) ||
	    !thermal_keys_of(in->pb->dev.type, &k)) {
		render_message(g, "no thermal plane: the device does not heat "
		               "itself (thermal_resistance is 0)");
		return RENDER_BAD_INPUT;
	}
	const double *p = in->pb->dev.p;
	double ta = p[k.tamb], theta = p[k.theta], tjmax = p[k.tjmax];

	/* Across: the ambient to past the hottest thing worth seeing. */
	double top = ta;
	for (size_t j = 0; in->pts != NULL && j < in->npts; j++)
		if (isfinite(in->pts[j].tj))
			top = fmax(top, in->pts[j].tj);
	for (size_t j = 0; in->rows != NULL && j < in->nrows; j++)
		if (isfinite(in->rows[j].tj))
			top = fmax(top, in->rows[j].tj);
	if (in->npts == 0)
		top = fmax(top, tjmax);
	double rise = fmax(top - ta, 1.0);
	double xlo = ta - 0.04 * rise * (1.0 + THERMAL_SPAN);
	double xhi = ta + rise * (1.0 + THERMAL_SPAN);

	struct render_layout lay;
	lay.top = in->legend ? 1 : 0;
	lay.axis_row = g->rows - 2;
	lay.bottom = g->rows - 3;
	int nr = lay.bottom - lay.top + 1;

	/* The heat made, one electrical solve per column edge (the columns
	 * are not known before the margin is: sample generously). */
	size_t ns = (size_t)g->cols + 1;
	if (ns > THERMAL_MAX_SAMPLES)
		ns = THERMAL_MAX_SAMPLES;
	double *ts = malloc(2 * ns * sizeof *ts);
	if (ts == NULL) {
		render_message(g, "out of memory");
		return RENDER_NO_MEMORY;
	}
	double *ps = ts + ns;
	double ylo = 0.0, yhi = 0.0;
	for (size_t j = 0; j < ns; j++) {
		ts[j] = xlo + (xhi - xlo) * (double)j / (double)(ns - 1);
		struct thermal_eval ev;
		ps[j] = thermal_eval_at(in->pb, in->o, ts[j], false, &ev) == 0
		        ? ev.p : NAN;
		render_include(&ylo, &yhi, ps[j]);
	}
	for (size_t j = 0; in->rows != NULL && j < in->nrows; j++)
		render_include(&ylo, &yhi, in->rows[j].p);
	/* The heat line at the hottest balance or Tjmax, so it shows. */
	render_include(&ylo, &yhi, (fmin(top, tjmax) - ta) / theta);
	render_fix_span(&ylo, &yhi);
	yhi += THERMAL_HEADROOM * (yhi - ylo);
	if (ylo < 0.0)
		ylo -= THERMAL_HEADROOM * (yhi - ylo);
	lay.win = (struct render_window){ xlo, xhi, ylo, yhi };

	struct render_ticks ty, tx;
	bool u = in->unicode;
	render_ticks_make(&ty, ylo, yhi, nr / 3 > 2 ? nr / 3 : 2, QTY_POWER, u);
	int margin = ty.width + 1;
	if (margin > g->cols / 3)
		margin = g->cols / 3;
	lay.axis_col = margin;
	lay.left = margin + 1;
	lay.right = g->cols - 1;
	int nc = lay.right - lay.left + 1;
	render_ticks_make(&tx, xlo, xhi, nc / 12 > 2 ? nc / 12 : 2,
	                  QTY_TEMPERATURE, u);

	grid_clear(g);
	if (in->legend)
		thermal_draw_legend(g, u);
	render_axes(g, &lay, &ty, &tx, u,
	            u ? "P\xE2\x86\x91 Tj\xE2\x86\x92" : "P^ Tj>");
	/* The maximum junction temperature: a dotted column and its name. */
	int row, col;
	if (render_cell_of(&lay, tjmax, 0.5 * (ylo + yhi), &row, &col)) {
		for (int r = lay.top; r <= lay.bottom; r++)
			if ((r - lay.top) % 2 == 1)
				render_put(g, r, col, ':', ROLE_LABEL);
		int at = col + 1 + 5 <= lay.right ? col + 1 : col - 5;
		render_text(g, lay.top, at, "Tjmax", ROLE_LABEL);
	}
	/* The heat removed: from (Ta, 0) with slope 1/theta. */
	thermal_segment(g, &lay, ta, 0.0, xhi, (xhi - ta) / theta, ROLE_LINE, u);
	render_marker(g, &lay, ta, 0.0, ROLE_LINE, u);
	/* The heat made. */
	for (size_t j = 1; j < ns; j++)
		if (isfinite(ps[j - 1]) && isfinite(ps[j]))
			thermal_segment(g, &lay, ts[j - 1], ps[j - 1], ts[j], ps[j],
			                ROLE_DEVICE, u);
	free(ts);
	/* The path, its start, and the balances. */
	if (in->rows != NULL && in->nrows > 0) {
		for (size_t j = 1; j < in->nrows; j++)
			thermal_segment(g, &lay, in->rows[j - 1].tj, in->rows[j - 1].p,
			                in->rows[j].tj, in->rows[j].p,
			                j + 1 == in->nrows ? ROLE_NEWEST : ROLE_PATH, u);
		render_marker(g, &lay, in->rows[0].tj, in->rows[0].p, ROLE_START, u);
	}
	for (size_t j = 0; in->pts != NULL && j < in->npts; j++)
		render_marker(g, &lay, in->pts[j].tj, in->pts[j].p, ROLE_POINT, u);
	if (lay_out != NULL)
		*lay_out = lay;
	return RENDER_OK;
}
