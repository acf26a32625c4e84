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
 *
 * The plane is built as a plot description (plot.h), so the character
 * grid and the vector pictures draw the same thing; the heat made is
 * sampled by the caller's count (the grid: one per column edge).
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>

#include "render/plot.h"
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

/* Append the step (T0, P0)-(T1, P1) with ROLE to D. */
static void thermal_step(struct plot_desc *d, double t0, double p0, double t1,
                         double p1, enum cell_role role)
{
	struct plot_item *it = plot_desc_add(d, PLOT_STEP, role);
	if (it != NULL) {
		it->x0 = t0;
		it->y0 = p0;
		it->x1 = t1;
		it->y1 = p1;
	}
}

/* Append a marker of ROLE and SHAPE at (T, P) to D. */
static struct plot_item *thermal_marker(struct plot_desc *d, enum cell_role role,
                                        enum plot_shape shape, double t, double p)
{
	struct plot_item *it = plot_desc_add(d, PLOT_MARKER, role);
	if (it != NULL) {
		it->x0 = t;
		it->y0 = p;
		it->shape = shape;
	}
	return it;
}

/* The description of the thermal plane of IN, P(Tj) sampled NS times. */
enum render_status render_desc_thermal(const struct render_thermal *in,
                                       size_t ns, struct plot_desc *d)
{
	plot_desc_init(d);
	struct thermal_keys k;
	if (in == NULL || in->pb == NULL || in->o == NULL ||
	    !thermal_active(&in->pb->dev) ||
	    !thermal_keys_of(in->pb->dev.type, &k))
		return RENDER_BAD_INPUT;
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

	/* The heat made, one electrical solve per sample. */
	if (ns < 2)
		ns = 2;
	if (ns > THERMAL_MAX_SAMPLES)
		ns = THERMAL_MAX_SAMPLES;
	double *ts = malloc(2 * ns * sizeof *ts);
	if (ts == NULL)
		return RENDER_NO_MEMORY;
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

	bool u = in->unicode;
	d->x = (struct plot_axis){ xlo, xhi, false, QTY_TEMPERATURE,
	                           "junction temperature" };
	d->y = (struct plot_axis){ ylo, yhi, false, QTY_POWER, "heat" };
	d->unicode = u;
	d->names = u ? "P\xE2\x86\x91 Tj\xE2\x86\x92" : "P^ Tj>";
	if (in->legend) {
		d->legend_rows = 1;
		for (size_t j = 0; j < sizeof thermal_legend / sizeof thermal_legend[0];
		     j++)
			plot_desc_legend(d, thermal_legend[j].role, 0,
			                 thermal_legend[j].role == ROLE_START ? SHAPE_CIRCLE
			                                                      : SHAPE_DOT,
			                 thermal_legend[j].words);
	}
	/* The maximum junction temperature: a dotted line and its name. */
	struct plot_item *it = plot_desc_add(d, PLOT_VLINE, ROLE_LABEL);
	if (it != NULL) {
		it->x0 = tjmax;
		snprintf(it->words, sizeof it->words, "Tjmax");
	}
	/* The heat removed: from (Ta, 0) with slope 1/theta. */
	double hx[2] = { ta, xhi }, hy[2] = { 0.0, (xhi - ta) / theta };
	plot_desc_polyline(d, ROLE_LINE, hx, hy, 2);
	thermal_marker(d, ROLE_LINE, SHAPE_TICK, ta, 0.0);
	/* The heat made: consecutive solved samples joined. */
	plot_desc_polyline(d, ROLE_DEVICE, ts, ps, ns);
	free(ts);
	/* The path, its start, and the balances. */
	if (in->rows != NULL && in->nrows > 0) {
		for (size_t j = 1; j < in->nrows; j++)
			thermal_step(d, in->rows[j - 1].tj, in->rows[j - 1].p,
			             in->rows[j].tj, in->rows[j].p,
			             j + 1 == in->nrows ? ROLE_NEWEST : ROLE_PATH);
		thermal_marker(d, ROLE_START, SHAPE_CIRCLE, in->rows[0].tj,
		               in->rows[0].p);
	}
	char t[48], w[48];
	for (size_t j = 0; in->pts != NULL && j < in->npts; j++) {
		const struct thermal_point *b = &in->pts[j];
		it = thermal_marker(d, ROLE_POINT, b->stable ? SHAPE_DOT : SHAPE_SQUARE,
		                    b->tj, b->p);
		if (it != NULL) {
			snprintf(it->tag, sizeof it->tag, "%u", (unsigned)(j + 1));
			snprintf(it->words, sizeof it->words, "%s",
			         b->stable ? "stable" : "runs away");
		}
		qty_format_short(t, sizeof t, b->tj, QTY_TEMPERATURE, 5, 0);
		qty_format_short(w, sizeof w, b->p, QTY_POWER, 5, 0);
		plot_desc_caption(d, "balance %zu: Tj = %s, heat %s, loop gain %.3g "
		                  "(%s)", j + 1, t, w, b->gain,
		                  b->stable ? "stable" : "runs away");
	}
	if (in->npts == 0)
		plot_desc_caption(d, "no balance up to Tjmax: the part runs away");
	return d->no_memory ? RENDER_NO_MEMORY : RENDER_OK;
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
	struct plot_desc d;
	/* The columns are not known before the margin is: sample each column
	 * edge of the widest data area generously. */
	enum render_status st = render_desc_thermal(in, (size_t)g->cols + 1, &d);
	if (st == RENDER_BAD_INPUT)
		render_message(g, "no thermal plane: the device does not heat "
		               "itself (thermal_resistance is 0)");
	else if (st == RENDER_NO_MEMORY)
		render_message(g, "out of memory");
	else
		st = render_desc_grid(&d, g, lay_out);
	plot_desc_fini(&d);
	return st;
}
