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

#include "core/sweep.h"
#include "tui/app.h"

/* Run the sweep again for the present session. */
void pane_sweep_refresh(struct app *a)
{
	struct sweep_view *v = &a->sweep;
	v->ok = false;
	v->n = 0;
	v->multi = v->folds = 0;
	v->msg[0] = '\0';
	a->grid_ok = false;
	if (!a->pb_ok) {
		snprintf(v->msg, sizeof v->msg, "%.200s", a->pb_err);
		return;
	}
	bool norton = a->s.source.form != SOURCE_THEVENIN;
	struct sweep_spec sp = { .points = APP_SWEEP_POINTS, .scale = SWEEP_LOG };
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
	v->n = APP_SWEEP_POINTS;
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
	sweep_result_fini(&res);
	v->ok = true;
}

/* Show or hide the sweep view. */
void pane_sweep_toggle(struct app *a)
{
	a->sweep.open = !a->sweep.open;
	a->grid_ok = false;
	if (a->sweep.open) {
		pane_sweep_refresh(a);
		app_message(a, false, "sweep of the device current: W or Esc closes; "
		            "keys still change the session");
	} else {
		app_message(a, false, "back to the load line");
	}
}

/* Draw the sweep plot into BOX. */
static void pane_sweep_draw(struct app *a, const struct rect *box)
{
	const struct sweep_view *v = &a->sweep;
	if (!v->ok) {
		term_text(&a->term, box->row + 1, box->col + 1, v->msg, box->cols - 2,
		          TS_ERROR);
		term_text(&a->term, box->row + 3, box->col + 1, "W or Esc closes the "
		          "sweep", box->cols - 2, TS_DIM);
		return;
	}
	if (a->grid.rows != box->rows || a->grid.cols != box->cols) {
		if (grid_resize(&a->grid, box->rows, box->cols) != 0) {
			term_text(&a->term, box->row, box->col, "out of memory", box->cols,
			          TS_ERROR);
			return;
		}
		a->grid_ok = false;
	}
	if (!a->grid_ok) {
		bool norton = a->s.source.form != SOURCE_THEVENIN;
		char title[256], now[48];
		qty_format_short(now, sizeof now, v->r, QTY_RESISTANCE, 5,
		                 a->view.unicode ? 0 : 1);
		snprintf(title, sizeof title, "I vs %s (log) @ %s%s", norton ? "RP" : "RS",
		         now, v->multi || v->folds ? ", folds: lowest V drawn" : "");
		struct render_xy in = {
			.x = v->x, .y = v->y, .n = v->n, .log_x = true,
			.x_kind = QTY_RESISTANCE, .y_kind = QTY_CURRENT,
			.title = title,
			.names = a->view.unicode ? (norton ? "I\xE2\x86\x91 RP\xE2\x86\x92"
			                                   : "I\xE2\x86\x91 RS\xE2\x86\x92")
			                         : (norton ? "I^ RP>" : "I^ RS>"),
			.x_mark = v->r, .unicode = a->view.unicode,
		};
		render_xy_plot(&in, &a->grid, NULL);
		a->grid_ok = true;
	}
	term_blit(&a->term, &a->grid, box->row, box->col);
}

/* While shown, Esc (or W through the key table) closes; other keys pass. */
static unsigned pane_sweep_key(struct app *a, int key)
{
	if (!a->sweep.open || key != TK_ESC)
		return 0;
	pane_sweep_toggle(a);
	return APP_HANDLED | APP_REDRAW;
}

/* Start hidden. */
static void pane_sweep_init(struct app *a)
{
	memset(&a->sweep, 0, sizeof a->sweep);
}

/* The sweep view. */
const struct pane pane_sweep = {
	.name = "sweep",
	.init = pane_sweep_init,
	.key = pane_sweep_key,
	.draw = pane_sweep_draw,
};
