/*
 * pane_sweep.c - the sweep view: the device current against any parameter
 * (VS, RS, IS, RP, a device parameter such as the temperature, a part of a
 * network source), linear or logarithmic, swept and described by the
 * renderer's sweep view (render/plot_sweep.c, which 'biasline plot --view
 * sweep' draws too) and drawn into the plot's place.  W asks what to
 * sweep, starting from the selected parameter row with a range around its
 * value; the lowest-voltage point is the line, the other points of a
 * folded curve are dots, and the values where the circuit jumps (the
 * followed stable point dies at a fold, stability_jumps) are dotted
 * columns, named on the status line.  The sweep runs again when the
 * session changes while the view is open.
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

/* The question the view asks: what to sweep. */
#define SWEEP_ASK_SPEC 1

/* The sweep view's own state. */
struct sweep_state {
	bool open;
	char typed[256];        /* the request as typed ("rs 330..33k log") */
	struct sweep_view sv;   /* the sweep (render/plot.h) */
	struct grid grid;
	bool valid;             /* the grid shows the sweep */
};

/* The label of KEY for titles: "RS", a part's name, the device key. */
static const char *pane_sweep_label(const struct app *a, const char *key,
                                    char *buf, size_t n)
{
	struct param p;
	if (params_find(&a->s, key, &p) == 0) {
		snprintf(buf, n, "%s", p.label);
		/* "RS (net)": the equivalent is never swept, but be plain. */
		char *sp = strstr(buf, " (");
		if (sp != NULL)
			*sp = '\0';
	} else {
		snprintf(buf, n, "%s", key);
	}
	return buf;
}

/*
 * The sweep request that W offers for the row KEY (the selected one): a
 * decade either side on a log scale for a resistance or any value that
 * steps logarithmically, -40 to 125 degC for a temperature (the usual
 * industrial range: common practice), otherwise from half to twice the
 * value (0 to twice a source voltage).  Writes "KEY FROM..TO log|lin".
 */
static void pane_sweep_default(const struct app *a, const char *selected,
                               char *out, size_t n)
{
	struct param p;
	bool ok = params_find(&a->s, selected, &p) == 0 && !p.choice &&
	          !p.readonly && strncmp(p.key, "solver.", 7) != 0;
	if (!ok) {
		/* The source's resistance, or a network's first part. */
		struct param ps[PARAMS_MAX];
		size_t np = params_list(&a->s, ps, PARAMS_MAX);
		ok = false;
		for (size_t k = 0; k < np && !ok; k++)
			if (ps[k].resistor) {
				p = ps[k];
				ok = true;
			}
		if (!ok) {
			snprintf(out, n, "%s", a->s.network != NULL ? "" : "rs");
			return;
		}
	}
	double x = params_get(&a->s, &p);
	char f[48], t[48];
	bool log = (p.log_step || p.resistor) && x > 0.0;
	double lo, hi;
	if (p.unit == QTY_TEMPERATURE) {
		lo = -40.0;
		hi = 125.0;
	} else if (log) {
		lo = x / 10.0;
		hi = x * 10.0;
	} else if (p.unit == QTY_VOLTAGE && x != 0.0) {
		lo = x > 0.0 ? 0.0 : 2.0 * x;
		hi = x > 0.0 ? 2.0 * x : 0.0;
	} else if (x != 0.0) {
		lo = x > 0.0 ? x / 2.0 : 2.0 * x;
		hi = x > 0.0 ? 2.0 * x : x / 2.0;
	} else {
		lo = -1.0;
		hi = 1.0;
	}
	/* With the unit and no spaces, so it reads back as typed. */
	qty_format_short(f, sizeof f, lo, p.unit, 4, 1);
	qty_format_short(t, sizeof t, hi, p.unit, 4, 1);
	for (char *c = f; *c != '\0'; c++)
		if (*c == ' ')
			memmove(c, c + 1, strlen(c));
	for (char *c = t; *c != '\0'; c++)
		if (*c == ' ')
			memmove(c, c + 1, strlen(c));
	/* A part's name is what a person types. */
	const char *k = p.key;
	size_t pl = strlen(PARAMREF_NETWORK_PREFIX);
	if (strncmp(k, PARAMREF_NETWORK_PREFIX, pl) == 0)
		k += pl;
	snprintf(out, n, "%s %s..%s %s", k, f, t, log ? "log" : "lin");
}

/*
 * Read a typed request "KEY FROM..TO [log|lin]" (KEY may hold spaces: a
 * part's name) into SPEC.  Returns 0, or -1 with the reason in ERR.
 */
static int pane_sweep_parse(struct app *a, struct sweep_view_spec *spec,
                            const char *text, char *err, size_t errlen)
{
	char buf[256];
	snprintf(buf, sizeof buf, "%.255s", text);
	size_t len = strlen(buf);
	while (len > 0 && buf[len - 1] == ' ')
		buf[--len] = '\0';
	bool log = false;
	char *sp = strrchr(buf, ' ');
	if (sp != NULL && (strcmp(sp + 1, "log") == 0 || strcmp(sp + 1, "lin") == 0
	                   || strcmp(sp + 1, "linear") == 0)) {
		log = strcmp(sp + 1, "log") == 0;
		*sp = '\0';
		sp = strrchr(buf, ' ');
	}
	if (sp == NULL || strstr(sp + 1, "..") == NULL) {
		snprintf(err, errlen, "type the parameter, then FROM..TO (e.g. rs "
		         "1k..100k log, temperature -40..125)");
		return -1;
	}
	char *range = sp + 1;
	*sp = '\0';
	char *key = buf;
	while (*key == ' ')
		key++;
	len = strlen(key);
	while (len > 0 && key[len - 1] == ' ')
		key[--len] = '\0';
	char full[PARAMREF_KEY_MAX];
	snprintf(full, sizeof full, "%s", key);
	struct paramref r;
	char why[600];
	if (paramref_find(&a->pb, full, &r, why, sizeof why) != 0) {
		/* A part by its bare name. */
		snprintf(full, sizeof full, "%s%.48s", PARAMREF_NETWORK_PREFIX, key);
		if (a->s.network == NULL ||
		    paramref_find(&a->pb, full, &r, err, errlen) != 0) {
			snprintf(err, errlen, "%s", why);
			return -1;
		}
	}
	enum qty_kind unit = paramref_unit(&a->pb, &r);
	char *dots = strstr(range, "..");
	*dots = '\0';
	double from, to;
	if (qty_parse(range, unit, &from, err, errlen) != QTY_OK ||
	    qty_parse(dots + 2, unit, &to, err, errlen) != QTY_OK)
		return -1;
	if (!(from != to)) {
		snprintf(err, errlen, "FROM and TO are the same: give a range");
		return -1;
	}
	if (log && !(from * to > 0.0)) {
		snprintf(err, errlen, "a log sweep needs FROM and TO of one sign, "
		         "neither zero (type lin for a linear one)");
		return -1;
	}
	memset(spec, 0, sizeof *spec);
	snprintf(spec->key, sizeof spec->key, "%s", full);
	pane_sweep_label(a, full, spec->label, sizeof spec->label);
	spec->from = from;
	spec->to = to;
	spec->log = log;
	return 0;
}

/* Run the sweep again for the present session. */
static void pane_sweep_refresh(struct app *a, struct sweep_state *v)
{
	v->valid = false;
	if (!a->pb_ok) {
		v->sv.ok = false;
		snprintf(v->sv.msg, sizeof v->sv.msg, "no sweep: %.300s", a->pb_err);
		return;
	}
	struct sweep_view_spec spec = v->sv.spec;
	char what[96];
	snprintf(what, sizeof what, "sweep of %.40s, %d points", spec.key,
	         SWEEP_VIEW_POINTS);
	struct app_work wk;
	app_work_begin(a, &wk, what);
	sweep_view_run_watched(&a->pb, &a->s.solver, &a->s.reactive, &spec,
	                       &v->sv, &wk.core);
	app_work_end(&wk);
}

/* Say what the sweep shows on the status line. */
static void pane_sweep_tell(struct app *a, struct sweep_state *v)
{
	const struct sweep_view *sv = &v->sv;
	if (!sv->ok) {
		app_message(a, true, "%s", sv->msg);
		return;
	}
	int ascii = app_unicode(a) ? 0 : 1;
	char jumps[200] = "";
	char u[48], d[48];
	if (isfinite(sv->jump_up))
		qty_format_short(u, sizeof u, sv->jump_up, sv->unit, 3, ascii);
	if (isfinite(sv->jump_down))
		qty_format_short(d, sizeof d, sv->jump_down, sv->unit, 3, ascii);
	if (isfinite(sv->jump_up) && isfinite(sv->jump_down))
		snprintf(jumps, sizeof jumps, "; ':' marks the jumps: at %s going "
		         "up, at %s going down (hysteresis)", u, d);
	else if (isfinite(sv->jump_up))
		snprintf(jumps, sizeof jumps, "; ':' marks a jump at %s going up", u);
	else if (isfinite(sv->jump_down))
		snprintf(jumps, sizeof jumps, "; ':' marks a jump at %s going down", d);
	else if (sv->folds > 0)
		snprintf(jumps, sizeof jumps, "; %zu fold%s, no jump of the stable "
		         "point", sv->folds, sv->folds == 1 ? "" : "s");
	app_message(a, false, "sweep: W asks again, Esc closes%s", jumps);
}

/* Ask what to sweep, starting from INITIAL, with ERROR (may be NULL). */
static void pane_sweep_ask(struct app *a, const char *initial,
                           const char *error)
{
	app_ask(a, &pane_sweep, SWEEP_ASK_SPEC, false, "sweep (parameter "
	        "FROM..TO, then log or lin) = ", initial, error);
}

/* Take a typed request: sweep and show it. */
static unsigned pane_sweep_take(struct app *a, struct sweep_state *v,
                                const char *text)
{
	char err[600];
	struct sweep_view_spec spec;
	if (pane_sweep_parse(a, &spec, text, err, sizeof err) != 0) {
		pane_sweep_ask(a, text, err);
		return APP_HANDLED | APP_REDRAW;
	}
	snprintf(v->typed, sizeof v->typed, "%.255s", text);
	v->sv.spec = spec;
	pane_sweep_refresh(a, v);
	if (!v->sv.ok) {
		pane_sweep_ask(a, text, v->sv.msg);
		return APP_HANDLED | APP_REDRAW;
	}
	v->open = true;
	v->valid = false;
	pane_sweep_tell(a, v);
	return APP_HANDLED | APP_REDRAW;
}

/* Draw the sweep plot into BOX. */
static void pane_sweep_draw(struct app *a, void *self, const struct rect *box)
{
	struct sweep_state *v = self;
	if (!v->sv.ok) {
		term_text(&a->term, box->row + 1, box->col + 1, v->sv.msg,
		          box->cols - 2, TS_ERROR);
		term_text(&a->term, box->row + 3, box->col + 1, "W asks what to "
		          "sweep; Esc closes the sweep", box->cols - 2, TS_DIM);
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

/* Write the sweep as SVG beside the session (P). */
static unsigned pane_sweep_picture(struct app *a, struct sweep_state *v)
{
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

/* Open (asking what to sweep) or close on W; close on Esc; sweep again
 * when the session changes; write the picture on P. */
static unsigned pane_sweep_act(struct app *a, void *self, const struct action *act)
{
	struct sweep_state *v = self;
	switch (act->kind) {
	case ACT_OPEN: {
		char initial[256];
		if (v->open && v->typed[0] != '\0')
			snprintf(initial, sizeof initial, "%s", v->typed);
		else
			pane_sweep_default(a, a->selected, initial, sizeof initial);
		pane_sweep_ask(a, initial, NULL);
		return APP_REDRAW;
	}
	case ACT_ANSWER:
		if (act->tag != SWEEP_ASK_SPEC)
			return 0;
		return pane_sweep_take(a, v, act->text);
	case ACT_CLOSE:
		if (!v->open)
			return 0;
		v->open = false;
		app_message(a, false, "back to the load line");
		return APP_REDRAW;
	case ACT_CHANGED:
		if (!v->open)
			return 0;
		pane_sweep_refresh(a, v);
		return APP_REDRAW;
	case ACT_PICTURE:
		return pane_sweep_picture(a, v);
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
	v->sv.jump_up = v->sv.jump_down = NAN;
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
