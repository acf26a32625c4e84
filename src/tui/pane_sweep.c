/*
 * pane_sweep.c - the sweep view: the device current against the source
 * resistance RS (RP for a Norton source) from a tenth to ten times its
 * value on a log scale, swept by the core (sweep_run) and drawn by the
 * renderer's x-y plot in the plot's place.  The sweep runs when the view
 * opens and when the session changes while it is open.
 */
#include <math.h>
#include <stdbool.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "core/stability.h"
#include "core/sweep.h"
#include "tui/app.h"
#include "tui/panes.h"

/* Points of the sweep, RS/10 to RS*10 on a log scale. */
#define SWEEP_POINTS 61

/* The sweep view's own state. */
struct sweep_state {
	bool open;
	bool ok;                /* X, Y hold the sweep (else MSG says why) */
	double r;               /* the present RS or RP (the mark) */
	size_t n;
	double x[SWEEP_POINTS], y[SWEEP_POINTS];
	size_t multi;           /* steps with several operating points */
	size_t folds;
	double jump_up, jump_down; /* where the followed stable point jumps
	                              going up and going down (NaN: none) */
	char msg[256];
	struct grid grid;
	bool valid;             /* the grid shows the sweep */
};

/* Run the sweep again for the present session. */
static void pane_sweep_refresh(struct app *a, struct sweep_state *v)
{
	v->ok = false;
	v->n = 0;
	v->multi = v->folds = 0;
	v->msg[0] = '\0';
	v->valid = false;
	if (!a->pb_ok) {
		snprintf(v->msg, sizeof v->msg, "%.200s", a->pb_err);
		return;
	}
	bool norton = a->s.source.form != SOURCE_THEVENIN;
	struct sweep_spec sp = { .points = SWEEP_POINTS, .scale = SWEEP_LOG };
	char err[256];
	if (paramref_find(&a->pb, norton ? "rp" : "rs", &sp.param, err,
	                  sizeof err) != 0 || !(a->pb.src.r > 0.0) ||
	    !isfinite(a->pb.src.r)) {
		snprintf(v->msg, sizeof v->msg, "no sweep: the source has no finite, "
		         "non-zero %s to vary", norton ? "RP" : "RS");
		return;
	}
	v->r = a->pb.src.r;
	sp.from = v->r / 10.0;
	sp.to = v->r * 10.0;
	struct sweep_result res;
	if (sweep_run(&a->pb, &a->s.solver, &sp, &res) != 0) {
		snprintf(v->msg, sizeof v->msg, "no sweep: %.200s", res.message);
		sweep_result_fini(&res);
		return;
	}
	/* One value per step: the lowest-voltage point; NaN where none. */
	v->n = SWEEP_POINTS;
	for (size_t k = 0; k < v->n; k++) {
		v->x[k] = sweep_value(&sp, k);
		v->y[k] = NAN;
	}
	for (size_t k = 0; k < res.nrows; k++) {
		const struct sweep_row *r = &res.rows[k];
		if (r->step >= v->n)
			continue;
		if (r->index == 0)
			v->y[r->step] = r->i;
		if (r->index == 1)
			v->multi++;
	}
	v->folds = res.nfolds;
	/* Where the circuit jumps each way: the ends of the hysteresis. */
	struct stability_jump j;
	v->jump_up = stability_jumps(&a->pb, &a->s.reactive, &sp, &res, true,
	                             &j, 1) > 0 ? j.value : NAN;
	v->jump_down = stability_jumps(&a->pb, &a->s.reactive, &sp, &res, false,
	                               &j, 1) > 0 ? j.value : NAN;
	sweep_result_fini(&res);
	v->ok = true;
}

/* Show or hide the sweep view. */
static void pane_sweep_toggle(struct app *a, struct sweep_state *v)
{
	v->open = !v->open;
	v->valid = false;
	if (v->open) {
		pane_sweep_refresh(a, v);
		char jumps[160] = "";
		if (isfinite(v->jump_up) && isfinite(v->jump_down)) {
			char u[48], d[48];
			qty_format_short(u, sizeof u, v->jump_up, QTY_RESISTANCE, 3,
			                 app_unicode(a) ? 0 : 1);
			qty_format_short(d, sizeof d, v->jump_down, QTY_RESISTANCE, 3,
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
	if (!v->ok) {
		term_text(&a->term, box->row + 1, box->col + 1, v->msg, box->cols - 2,
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
		bool norton = a->s.source.form != SOURCE_THEVENIN;
		char title[256], now[48];
		qty_format_short(now, sizeof now, v->r, QTY_RESISTANCE, 5,
		                 app_unicode(a) ? 0 : 1);
		snprintf(title, sizeof title, "I vs %s (log) @ %s%s", norton ? "RP" : "RS",
		         now, v->multi || v->folds ? ", folds: lowest V drawn" : "");
		struct render_xy in = {
			.x = v->x, .y = v->y, .n = v->n, .log_x = true,
			.x_kind = QTY_RESISTANCE, .y_kind = QTY_CURRENT,
			.title = title,
			.names = app_unicode(a) ? (norton ? "I\xE2\x86\x91 RP\xE2\x86\x92"
			                                   : "I\xE2\x86\x91 RS\xE2\x86\x92")
			                         : (norton ? "I^ RP>" : "I^ RS>"),
			.x_mark = v->r, .unicode = app_unicode(a),
		};
		render_xy_plot(&in, &v->grid, NULL);
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
