/*
 * plot_sweep.c - the sweep view: the device current against any parameter
 * (VS, RS, IS, RP, a device parameter, a part of a network source),
 * linear or logarithmic, swept by the core (sweep_run), and its plot
 * description.  The front end's sweep view and 'biasline plot --view
 * sweep' both draw this one.
 */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "core/sweep.h"
#include "render/plot.h"
#include "render/render_int.h"

/* The usual sweep: the source resistance a decade either way. */
int sweep_view_default(const struct problem *pb, bool norton,
                       struct sweep_view_spec *spec)
{
	memset(spec, 0, sizeof *spec);
	struct paramref r;
	double x;
	if (pb->net != NULL) {
		/* A network's equivalent is no part: its first resistor. */
		struct paramref all[PARAMREF_MAX];
		size_t n = paramref_all(pb, all, PARAMREF_MAX);
		size_t k = 0;
		while (k < n && !(all[k].kind == PARAMREF_NETWORK &&
		                  paramref_unit(pb, &all[k]) == QTY_RESISTANCE &&
		                  paramref_get(pb, &all[k]) > 0.0))
			k++;
		if (k == n)
			return -1;
		r = all[k];
		const char *key = paramref_key(pb, &r);
		snprintf(spec->key, sizeof spec->key, "%s", key);
		snprintf(spec->label, sizeof spec->label, "%s",
		         key + strlen(PARAMREF_NETWORK_PREFIX));
	} else {
		char err[256];
		if (paramref_find(pb, norton ? "rp" : "rs", &r, err, sizeof err) != 0)
			return -1;
		snprintf(spec->key, sizeof spec->key, "%s", norton ? "rp" : "rs");
		snprintf(spec->label, sizeof spec->label, "%s", norton ? "RP" : "RS");
	}
	x = paramref_get(pb, &r);
	if (!(x > 0.0) || !isfinite(x))
		return -1;
	spec->from = x / 10.0;
	spec->to = x * 10.0;
	spec->log = true;
	return 0;
}

/* Sweep SPEC on PB with O into SV. */
void sweep_view_run_spec(const struct problem *pb,
                         const struct solve_options *o,
                         const struct reactive_parts *rp,
                         const struct sweep_view_spec *spec,
                         struct sweep_view *sv)
{
	sweep_view_run_watched(pb, o, rp, spec, sv, NULL);
}

/* Sweep SPEC on PB with O into SV, watched by PR. */
void sweep_view_run_watched(const struct problem *pb,
                            const struct solve_options *o,
                            const struct reactive_parts *rp,
                            const struct sweep_view_spec *spec,
                            struct sweep_view *sv,
                            const struct progress *pr)
{
	sv->ok = false;
	sv->spec = *spec;
	sv->n = sv->nextra = 0;
	sv->multi = sv->folds = 0;
	sv->jump_up = sv->jump_down = NAN;
	sv->now = NAN;
	sv->msg[0] = '\0';
	struct sweep_spec sp = { .points = SWEEP_VIEW_POINTS, .from = spec->from,
	                         .to = spec->to,
	                         .scale = spec->log ? SWEEP_LOG : SWEEP_LINEAR };
	char err[300];
	if (paramref_find(pb, spec->key, &sp.param, err, sizeof err) != 0) {
		snprintf(sv->msg, sizeof sv->msg, "no sweep: %s", err);
		return;
	}
	sv->unit = paramref_unit(pb, &sp.param);
	sv->now = paramref_get(pb, &sp.param);
	struct sweep_result res;
	if (sweep_run_watched(pb, o, &sp, &res, pr) != 0) {
		snprintf(sv->msg, sizeof sv->msg, "no sweep of %s: %.300s", spec->key,
		         res.message);
		sweep_result_fini(&res);
		return;
	}
	/* The lowest-voltage point is the line (NaN where none); the other
	 * points of a folded curve are kept apart. */
	sv->n = SWEEP_VIEW_POINTS;
	for (size_t k = 0; k < sv->n; k++) {
		sv->x[k] = sweep_value(&sp, k);
		sv->y[k] = NAN;
	}
	for (size_t k = 0; k < res.nrows; k++) {
		const struct sweep_row *r = &res.rows[k];
		if (r->step >= sv->n)
			continue;
		if (r->index == 0) {
			sv->y[r->step] = r->i;
		} else if (sv->nextra < SWEEP_VIEW_EXTRA) {
			sv->ex[sv->nextra] = r->value;
			sv->ey[sv->nextra++] = r->i;
		}
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
	if (res.nrows == 0)
		snprintf(sv->msg, sizeof sv->msg, "no sweep of %s: no operating "
		         "point at any of the %d values", spec->key,
		         SWEEP_VIEW_POINTS);
	else
		sv->ok = true;
	sweep_result_fini(&res);
}

/* The usual sweep. */
void sweep_view_run(const struct problem *pb, const struct solve_options *o,
                    const struct reactive_parts *rp, bool norton,
                    struct sweep_view *sv)
{
	struct sweep_view_spec spec;
	if (sweep_view_default(pb, norton, &spec) != 0) {
		sv->ok = false;
		sv->n = sv->nextra = 0;
		sv->jump_up = sv->jump_down = NAN;
		snprintf(sv->msg, sizeof sv->msg, "no sweep: the source has no "
		         "finite, non-zero %s to vary",
		         pb->net != NULL ? "resistor" : norton ? "RP" : "RS");
		return;
	}
	sweep_view_run_spec(pb, o, rp, &spec, sv);
}

/* The description of the sweep view SV. */
enum render_status render_desc_sweep(const struct sweep_view *sv, bool unicode,
                                     struct plot_desc *d)
{
	if (!sv->ok) {
		plot_desc_init(d);
		return RENDER_BAD_INPUT;
	}
	int ascii = unicode ? 0 : 1;
	const char *label = sv->spec.label[0] != '\0' ? sv->spec.label
	                                             : sv->spec.key;
	char title[256], now[48], names[96];
	qty_format_short(now, sizeof now, sv->now, sv->unit, 5, ascii);
	snprintf(title, sizeof title, "I vs %s%s @ %s%s", label,
	         sv->spec.log ? " (log)" : "", now,
	         sv->nextra > 0 ? ", '.' other points" : "");
	/* Short names fit the corner; a long one stands as x. */
	const char *nm = strlen(label) <= 6 ? label : "x";
	snprintf(names, sizeof names, unicode ? "I\xE2\x86\x91 %s\xE2\x86\x92"
	                                      : "I^ %s>", nm);
	double lo = fmin(sv->spec.from, sv->spec.to);
	double hi = fmax(sv->spec.from, sv->spec.to);
	struct render_xy in = {
		.x = sv->x, .y = sv->y, .n = sv->n, .log_x = sv->spec.log,
		.x_kind = sv->unit, .y_kind = QTY_CURRENT,
		.title = title, .names = names,
		.x_mark = sv->now >= lo && sv->now <= hi ? sv->now : NAN,
		.unicode = unicode,
	};
	enum render_status st = render_desc_xy(&in, d);
	if (st != RENDER_OK)
		return st;
	if (strcmp(sv->spec.key, "rs") == 0 || strcmp(sv->spec.key, "rp") == 0)
		snprintf(d->x.title, sizeof d->x.title, "source resistance %s", label);
	else
		snprintf(d->x.title, sizeof d->x.title, "%s", label);
	snprintf(d->y.title, sizeof d->y.title, "device current");
	char words[96];
	snprintf(words, sizeof words, "%s = %s", label, now);
	plot_desc_words(d, ROLE_POINT, words);
	for (size_t k = 0; k < sv->nextra; k++) {
		struct plot_item *it = plot_desc_add(d, PLOT_MARKER, ROLE_PATH);
		if (it == NULL)
			return RENDER_NO_MEMORY;
		it->x0 = sv->ex[k];
		it->y0 = sv->ey[k];
	}
	char u[48] = "", w[48] = "";
	if (isfinite(sv->jump_up)) {
		qty_format_short(u, sizeof u, sv->jump_up, sv->unit, 3, ascii);
		struct plot_item *it = plot_desc_add(d, PLOT_VLINE, ROLE_NEWEST);
		if (it == NULL)
			return RENDER_NO_MEMORY;
		it->x0 = sv->jump_up;
		snprintf(it->words, sizeof it->words, "up");
	}
	if (isfinite(sv->jump_down)) {
		qty_format_short(w, sizeof w, sv->jump_down, sv->unit, 3, ascii);
		struct plot_item *it = plot_desc_add(d, PLOT_VLINE, ROLE_NEWEST);
		if (it == NULL)
			return RENDER_NO_MEMORY;
		it->x0 = sv->jump_down;
		snprintf(it->words, sizeof it->words, "down");
	}
	if (u[0] != '\0' && w[0] != '\0')
		plot_desc_caption(d, "the circuit jumps at %s going up and at %s "
		                  "going down (hysteresis)", u, w);
	else if (u[0] != '\0')
		plot_desc_caption(d, "the circuit jumps at %s going up", u);
	else if (w[0] != '\0')
		plot_desc_caption(d, "the circuit jumps at %s going down", w);
	return RENDER_OK;
}
