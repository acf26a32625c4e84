/*
 * pane_sweep.c - the sweep view: the device current against the source
 * resistance RS (RP for a Norton source) from a tenth to ten times its
 * value on a log scale, swept and described by the renderer's sweep view
 * (render/plot_sweep.c, which 'biasline plot --view sweep' draws too) and
 * drawn into the plot's place.  The sweep runs when the view
 * opens and when the session changes while it is open.
 */
#include <math.h>
#include <stdbool.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "core/stability.h"
#include "core/sweep.h"
#include "render/plot.h"
#include "render/vector.h"
#include "tui/app.h"
#include "tui/panes.h"

/* The sweep view's own state. */
struct sweep_state {
	bool open;
	struct sweep_view sv;   /* the sweep (render/plot.h) */
	struct grid grid;
	bool valid;             /* the grid shows the sweep */
};

/* Run the sweep again for the present session. */
static void pane_sweep_refresh(struct app *a, struct sweep_state *v)
{
	v->valid = false;
	if (!a->pb_ok) {
		v->sv.ok = false;
		snprintf(v->sv.msg, sizeof v->sv.msg, "%.200s", a->pb_err);
		return;
	}
	sweep_view_run(&a->pb, &a->s.solver, &a->s.reactive,
	               a->s.source.form != SOURCE_THEVENIN, &v->sv);
}

/* Show or hide the sweep view. */
static void pane_sweep_toggle(struct app *a, struct sweep_state *v)
{
	v->open = !v->open;
	v->valid = false;
	if (v->open) {
		pane_sweep_refresh(a, v);
		char jumps[160] = "";
		if (isfinite(v->sv.jump_up) && isfinite(v->sv.jump_down)) {
			char u[48], d[48];
			qty_format_short(u, sizeof u, v->sv.jump_up, QTY_RESISTANCE, 3,
			                 app_unicode(a) ? 0 : 1);
			qty_format_short(d, sizeof d, v->sv.jump_down, QTY_RESISTANCE, 3,
			                 app_unicode(a) ? 0 : 1);
			snprintf(jumps, sizeof jumps, "; the circuit jumps at %s going up "
			         "and at %s going down (hysteresis)", u, d);
		}
		app_message(a, false, "sweep of the device current: W or Esc closes; "
		            "keys still change the session%s", jumps);
	} else {
		app_message(a, false, "back to the load line");
	}
}

/* Draw the sweep plot into BOX. */
static void pane_sweep_draw(struct app *a, void *self, const struct rect *box)
{
	struct sweep_state *v = self;
	if (!v->sv.ok) {
		term_text(&a->term, box->row + 1, box->col + 1, v->sv.msg, box->cols - 2,
		          TS_ERROR);
		term_text(&a->term, box->row + 3, box->col + 1, "W or Esc closes the "
		          "sweep", box->cols - 2, TS_DIM);
		return;
	}
	if (v->grid.rows != box->rows || v->grid.cols != box->cols) {
		if (grid_resize(&v->grid, box->rows, box->cols) != 0) {
			term_text(&a->term, box->row, box->col, "out of memory", box->cols,
			          TS_ERROR);
			return;
		}
		v->valid = false;
	}
	if (!v->valid) {
		struct plot_desc d;
		enum render_status st = render_desc_sweep(&v->sv, app_unicode(a), &d);
		if (st == RENDER_OK)
			render_desc_grid(&d, &v->grid, NULL);
		plot_desc_fini(&d);
		if (st != RENDER_OK) {
			term_text(&a->term, box->row + 1, box->col + 1,
			          "nothing to plot: no points", box->cols - 2, TS_ERROR);
			return;
		}
		v->valid = true;
	}
	term_blit(&a->term, &v->grid, box->row, box->col);
}

/* Open or close on W; close on Esc; sweep again when the session changes. */
static unsigned pane_sweep_act(struct app *a, void *self, const struct action *act)
{
	struct sweep_state *v = self;
	switch (act->kind) {
	case ACT_OPEN:
		pane_sweep_toggle(a, v);
		return APP_REDRAW;
	case ACT_CLOSE:
		if (!v->open)
			return 0;
		pane_sweep_toggle(a, v);
		return APP_REDRAW;
	case ACT_CHANGED:
		if (v->open)
			pane_sweep_refresh(a, v);
		return v->open ? APP_REDRAW : 0;
	case ACT_PICTURE: {
		struct plot_desc d;
		char *svg = NULL;
		size_t len = 0;
		if (render_desc_sweep(&v->sv, true, &d) == RENDER_OK) {
			plot_desc_caption_first(&d, a->path != NULL ? a->path : "demo");
			if (render_vector(&d, VECTOR_SVG, VECTOR_WIDTH, VECTOR_HEIGHT, &svg,
			                  &len, NULL) != 0)
				svg = NULL;
		}
		plot_desc_fini(&d);
		if (svg != NULL)
			app_write_picture(a, svg, len, "-sweep.svg");
		else
			app_message(a, true, "no picture: %s", v->sv.ok ? "it could not "
			            "be drawn" : v->sv.msg);
		return APP_HANDLED | APP_REDRAW;
	}
	default:
		return 0;
	}
}

/* Set up the grid. */
static void pane_sweep_init(struct app *a, void *self)
{
	(void)a;
	struct sweep_state *v = self;
	grid_init(&v->grid, 0, 0);
}

/* Free the grid. */
static void pane_sweep_fini(void *self)
{
	struct sweep_state *v = self;
	grid_fini(&v->grid);
}

/* Visible while open. */
static bool pane_sweep_visible(const struct app *a, const void *self)
{
	(void)a;
	return ((const struct sweep_state *)self)->open;
}

/* The sweep view: in the plot's place while open. */
const struct pane pane_sweep = {
	.name = "sweep",
	.slot = SLOT_MAIN,
	.size = sizeof(struct sweep_state),
	.init = pane_sweep_init,
	.fini = pane_sweep_fini,
	.visible = pane_sweep_visible,
	.draw = pane_sweep_draw,
	.act = pane_sweep_act,
};
