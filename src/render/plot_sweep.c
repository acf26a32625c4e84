/*
 * plot_sweep.c - the sweep view: the device current against the source
 * resistance RS (RP for a Norton source) from a tenth to ten times its
 * value on a log scale, swept by the core (sweep_run), and its plot
 * description.  The front end's sweep view and 'biasline plot --view
 * sweep' both draw this one.
 */
#include <math.h>
#include <stdio.h>

#include "core/sweep.h"
#include "render/plot.h"
#include "render/render_int.h"

/* Run the sweep view's sweep of PB with O into SV. */
void sweep_view_run(const struct problem *pb, const struct solve_options *o,
                    const struct reactive_parts *rp, bool norton,
                    struct sweep_view *sv)
{
	sv->ok = false;
	sv->norton = norton;
	sv->n = 0;
	sv->multi = sv->folds = 0;
	sv->jump_up = sv->jump_down = NAN;
	sv->msg[0] = '\0';
	struct sweep_spec sp = { .points = SWEEP_VIEW_POINTS, .scale = SWEEP_LOG };
	char err[256];
	if (paramref_find(pb, norton ? "rp" : "rs", &sp.param, err,
	                  sizeof err) != 0 || !(pb->src.r > 0.0) ||
	    !isfinite(pb->src.r)) {
		snprintf(sv->msg, sizeof sv->msg, "no sweep: the source has no finite, "
		         "non-zero %s to vary", norton ? "RP" : "RS");
		return;
	}
	sv->r = pb->src.r;
	sp.from = sv->r / 10.0;
	sp.to = sv->r * 10.0;
	struct sweep_result res;
	if (sweep_run(pb, o, &sp, &res) != 0) {
		snprintf(sv->msg, sizeof sv->msg, "no sweep: %.200s", res.message);
		sweep_result_fini(&res);
		return;
	}
	/* One value per step: the lowest-voltage point; NaN where none. */
	sv->n = SWEEP_VIEW_POINTS;
	for (size_t k = 0; k < sv->n; k++) {
		sv->x[k] = sweep_value(&sp, k);
		sv->y[k] = NAN;
	}
	for (size_t k = 0; k < res.nrows; k++) {
		const struct sweep_row *r = &res.rows[k];
		if (r->step >= sv->n)
			continue;
		if (r->index == 0)
			sv->y[r->step] = r->i;
		if (r->index == 1)
			sv->multi++;
	}
	sv->folds = res.nfolds;
	/* Where the circuit jumps each way: the ends of the hysteresis. */
	struct stability_jump j;
	sv->jump_up = stability_jumps(pb, rp, &sp, &res, true, &j, 1) > 0
	              ? j.value : NAN;
	sv->jump_down = stability_jumps(pb, rp, &sp, &res, false, &j, 1) > 0
	                ? j.value : NAN;
	sweep_result_fini(&res);
	sv->ok = true;
}

/* The description of the sweep view SV. */
enum render_status render_desc_sweep(const struct sweep_view *sv, bool unicode,
                                     struct plot_desc *d)
{
	char title[256], now[48];
	qty_format_short(now, sizeof now, sv->r, QTY_RESISTANCE, 5, unicode ? 0 : 1);
	const char *r = sv->norton ? "RP" : "RS";
	snprintf(title, sizeof title, "I vs %s (log) @ %s%s", r, now,
	         sv->multi || sv->folds ? ", folds: lowest V drawn" : "");
	struct render_xy in = {
		.x = sv->x, .y = sv->y, .n = sv->n, .log_x = true,
		.x_kind = QTY_RESISTANCE, .y_kind = QTY_CURRENT,
		.title = title,
		.names = unicode ? (sv->norton ? "I\xE2\x86\x91 RP\xE2\x86\x92"
		                               : "I\xE2\x86\x91 RS\xE2\x86\x92")
		                 : (sv->norton ? "I^ RP>" : "I^ RS>"),
		.x_mark = sv->r, .unicode = unicode,
	};
	if (!sv->ok) {
		plot_desc_init(d);
		return RENDER_BAD_INPUT;
	}
	enum render_status st = render_desc_xy(&in, d);
	if (st != RENDER_OK)
		return st;
	snprintf(d->x.title, sizeof d->x.title, "source resistance %s", r);
	snprintf(d->y.title, sizeof d->y.title, "device current");
	char words[80];
	snprintf(words, sizeof words, "%s = %s", r, now);
	plot_desc_words(d, ROLE_POINT, words);
	if (isfinite(sv->jump_up) && isfinite(sv->jump_down)) {
		char u[48], w[48];
		qty_format_short(u, sizeof u, sv->jump_up, QTY_RESISTANCE, 3, 0);
		qty_format_short(w, sizeof w, sv->jump_down, QTY_RESISTANCE, 3, 0);
		plot_desc_caption(d, "the circuit jumps at %s going up and at %s "
		                  "going down (hysteresis)", u, w);
	}
	return RENDER_OK;
}
