/*
 * pane_thermal.c - the thermal view: in the plot's place, the thermal
 * plane of a part that heats itself (render_thermal_plot: heat removed
 * against heat made, the thermal path, the balances) and, when there is
 * room, the load-line plot redrawn with the junction at the thermal path's
 * newest temperature below it.  H opens and closes it; while it is open
 * Space, g, b and r step the thermal loop (app.h: a->thermal).
 */
#include <math.h>
#include <stdbool.h>
#include <stdio.h>
#include <string.h>

#include "core/thermal.h"
#include "render/plot.h"
#include "render/vector.h"
#include "tui/app.h"
#include "tui/panes.h"

/* The thermal view's own state. */
struct thermal_view {
	struct grid plane, elec;
	unsigned gen;              /* the app's change count the grids show */
	bool valid;
	struct thermal_result tr;  /* every balance of the present session */
	bool tr_ok;
};

/* Solve the balances again (the session changed). */
static void pane_thermal_refresh(struct app *a, struct thermal_view *v)
{
	v->valid = false;
	v->tr_ok = a->pb_ok && thermal_active(&a->pb.dev) &&
	           thermal_solve(&a->pb, &a->s.solver, &v->tr) != THERMAL_BAD_INPUT;
}

/* Set up the grids and the balances. */
static void pane_thermal_init(struct app *a, void *self)
{
	struct thermal_view *v = self;
	grid_init(&v->plane, 0, 0);
	grid_init(&v->elec, 0, 0);
	pane_thermal_refresh(a, v);
}

/* Free the grids. */
static void pane_thermal_fini(void *self)
{
	struct thermal_view *v = self;
	grid_fini(&v->plane);
	grid_fini(&v->elec);
}

/* Size G to ROWS x COLS; false when out of memory. */
static bool pane_thermal_size(struct grid *g, int rows, int cols, bool *valid)
{
	if (g->rows == rows && g->cols == cols)
		return true;
	*valid = false;
	return grid_resize(g, rows, cols) == 0;
}

/*
 * Render the load-line plot of the circuit with its junction at TJ (the
 * thermal path's newest temperature) into V->elec, with the electrical
 * point there marked.
 */
static void pane_thermal_elec(struct app *a, struct thermal_view *v,
                              double tj)
{
	struct problem q;
	thermal_problem_at(&a->pb, tj, &q);
	struct op_point pt = { .v = NAN, .i = NAN };
	struct thermal_eval ev;
	if (thermal_eval_at(&a->pb, &a->s.solver, tj, false, &ev) == 0)
		pt = ev.pt;
	struct render_input in = { .pb = &q, .pts = &pt,
	                           .npts = isfinite(pt.v) ? 1 : 0 };
	struct render_view view;
	render_view_init(&view);
	view.unicode = app_unicode(a);
	view.legend = false;
	view.frame = FRAME_POINT;
	render_plot(&in, &view, &v->elec, NULL);
}

/* Draw the view into BOX: the plane, and the load line below when it fits. */
static void pane_thermal_draw(struct app *a, void *self, const struct rect *box)
{
	struct thermal_view *v = self;
	if (!a->pb_ok) {
		term_text(&a->term, box->row + 1, box->col + 1, a->pb_err,
		          box->cols - 2, TS_ERROR);
		return;
	}
	if (!thermal_active(&a->pb.dev) || !v->tr_ok) {
		term_text(&a->term, box->row + 1, box->col + 1,
		          "no thermal loop: the device does not heat itself; give "
		          "it thermal_resistance (K/W) and ambient_temperature",
		          box->cols - 2, TS_ERROR);
		term_text(&a->term, box->row + 3, box->col + 1, "H or Esc closes the "
		          "thermal view", box->cols - 2, TS_DIM);
		return;
	}
	/* Split: the plane on top, a title line, the load line under it. */
	bool split = box->rows >= 2 * RENDER_MIN_ROWS + 1;
	int top = split ? (box->rows * 3) / 5 : box->rows;
	if (split && box->rows - top - 1 < RENDER_MIN_ROWS)
		top = box->rows - 1 - RENDER_MIN_ROWS;
	int low = box->rows - top - 1;
	if (!pane_thermal_size(&v->plane, top, box->cols, &v->valid) ||
	    (split && !pane_thermal_size(&v->elec, low, box->cols, &v->valid))) {
		term_text(&a->term, box->row, box->col, "out of memory", box->cols,
		          TS_ERROR);
		return;
	}
	const struct thermal_row *last = thermal_stepper_last(a->tst);
	double tj = last != NULL ? last->tj : NAN;
	if (!v->valid || v->gen != a->gen) {
		size_t n;
		const struct thermal_row *rows = thermal_stepper_trace(a->tst, &n);
		struct render_thermal in = {
			&a->pb, &a->s.solver, v->tr.pts, v->tr.n, rows, n,
			app_unicode(a), true,
		};
		render_thermal_plot(&in, &v->plane, NULL);
		if (split)
			pane_thermal_elec(a, v, tj);
		v->valid = true;
		v->gen = a->gen;
	}
	term_blit(&a->term, &v->plane, box->row, box->col);
	if (!split)
		return;
	char t[48], line[160];
	qty_format_short(t, sizeof t, tj, QTY_TEMPERATURE, 4,
	                 app_unicode(a) ? 0 : 1);
	snprintf(line, sizeof line, "load line at Tj %s", t);
	term_text(&a->term, box->row + top, box->col, line, box->cols, TS_HEADER);
	term_blit(&a->term, &v->elec, box->row + top + 1, box->col);
}

/* Close on Esc; solve the balances again when the session changes. */
static unsigned pane_thermal_act(struct app *a, void *self,
                                 const struct action *act)
{
	struct thermal_view *v = self;
	switch (act->kind) {
	case ACT_CLOSE:
		if (!a->thermal)
			return 0;
		app_thermal_view(a, false);
		return APP_REDRAW;
	case ACT_CHANGED:
		pane_thermal_refresh(a, v);
		return a->thermal ? APP_REDRAW : 0;
	case ACT_PICTURE: {
		/* The plane as shown: the balances and the thermal path so far. */
		size_t n;
		const struct thermal_row *rows = thermal_stepper_trace(a->tst, &n);
		struct render_thermal in = {
			&a->pb, &a->s.solver, v->tr.pts, v->tr.n, rows, n, true, true,
		};
		struct plot_desc d;
		plot_desc_init(&d);
		char *svg = NULL;
		size_t len = 0;
		if (a->pb_ok && v->tr_ok &&
		    render_desc_thermal(&in, 400, &d) == RENDER_OK) {
			plot_desc_caption_first(&d, a->path != NULL ? a->path : "demo");
			if (render_vector(&d, VECTOR_SVG, VECTOR_WIDTH, VECTOR_HEIGHT, &svg,
			                  &len, NULL) != 0)
				svg = NULL;
		}
		plot_desc_fini(&d);
		if (svg != NULL)
			app_write_picture(a, svg, len, "-thermal.svg");
		else
			app_message(a, true, "no picture of the thermal plane: the "
			            "device does not heat itself");
		return APP_HANDLED | APP_REDRAW;
	}
	default:
		return 0;
	}
}

/* Visible while the keys step the thermal loop. */
static bool pane_thermal_visible(const struct app *a, const void *self)
{
	(void)self;
	return a->thermal;
}

/* The thermal view: in the plot's place while open. */
const struct pane pane_thermal = {
	.name = "thermal",
	.slot = SLOT_MAIN,
	.size = sizeof(struct thermal_view),
	.init = pane_thermal_init,
	.fini = pane_thermal_fini,
	.visible = pane_thermal_visible,
	.draw = pane_thermal_draw,
	.act = pane_thermal_act,
};
