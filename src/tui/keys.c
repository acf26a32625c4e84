/*
 * keys.c - the front end's key map: one table binds keys to actions and
 * carries the help text the help overlay is generated from.  A binding
 * runs an action on the shared state, hands the key to the pane it
 * belongs to (the plot's view keys, the side pane's parameter keys), or
 * opens a view.
 */
#include "tui/keys.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "tui/panes.h"

/* An action on the shared state: returns enum app_flags. */
typedef unsigned (*key_action)(struct app *a);

/* One binding: up to three keys, their label, the help line, what it does. */
struct key_binding {
	int keys[3];
	const char *label;
	const char *help;
	key_action run;            /* an action, or */
	const struct pane *to;     /* the pane the key is for, or */
	const struct pane *open;   /* the view the key opens */
};

/* What a binding does. */
#define RUN(f) .run = (f)
#define TO(p) .to = &(p)
#define OPEN(p) .open = &(p)
#define DOC .run = NULL

/* Step one projection. */
static unsigned key_step(struct app *a)
{
	app_step(a);
	return APP_HANDLED | APP_REDRAW;
}

/* Run to convergence or the step cap; the loop steps, any key stops. */
static unsigned key_run(struct app *a)
{
	if (!a->pb_ok) {
		app_message(a, true, "%s", a->pb_err);
		return APP_HANDLED | APP_REDRAW;
	}
	a->running = true;
	app_run_chunk(a);
	return APP_HANDLED | APP_REDRAW;
}

/* Step back one projection (re-runs the path from its start). */
static unsigned key_back(struct app *a)
{
	size_t n;
	if (a->thermal) {
		thermal_stepper_trace(a->tst, &n);
		if (n <= 1) {
			app_message(a, false, "already at the start point");
			return APP_HANDLED | APP_REDRAW;
		}
		thermal_stepper_rewind(a->tst, n - 2);
		a->status[0] = '\0';
		app_touch(a);
		return APP_HANDLED | APP_REDRAW;
	}
	stepper_trace(a->st, &n);
	if (n <= 1) {
		app_message(a, false, "already at the start point");
		return APP_HANDLED | APP_REDRAW;
	}
	stepper_rewind(a->st, n - 2);
	a->status[0] = '\0';
	app_touch(a);
	return APP_HANDLED | APP_REDRAW;
}

/* Restart the path from the start point. */
static unsigned key_reset(struct app *a)
{
	app_resolve(a);
	app_message(a, false, "path restarted from the start point");
	return APP_HANDLED | APP_REDRAW;
}

/* Flip the projection order. */
static unsigned key_order(struct app *a)
{
	enum projection_order o = a->s.solver.order == ORDER_VOLTAGE_FROM_LINE
	                          ? ORDER_VOLTAGE_FROM_DEVICE : ORDER_VOLTAGE_FROM_LINE;
	char err[256];
	if (app_param_set(a, PARAMS_ORDER, (double)o, err, sizeof err) != 0)
		app_message(a, true, "%s", err);
	else
		app_message(a, false, "order: voltage from the %s",
		            o == ORDER_VOLTAGE_FROM_LINE ? "line" : "device");
	return APP_HANDLED | APP_REDRAW;
}

/* Start the path at the newest iterate's voltage (thermal: its Tj). */
static unsigned key_anchor(struct app *a)
{
	if (a->thermal) {
		const struct thermal_row *t = thermal_stepper_last(a->tst);
		if (t == NULL || !isfinite(t->tj)) {
			app_message(a, true, "no iterate to start from");
			return APP_HANDLED | APP_REDRAW;
		}
		a->tstart = t->tj;
		thermal_stepper_init(a->tst, &a->pb, &a->s.solver, a->tstart);
		app_touch(a);
		app_message(a, false, "the thermal path now starts at the newest "
		            "junction temperature");
		return APP_HANDLED | APP_REDRAW;
	}
	const struct trace_row *last = stepper_last(a->st);
	if (last == NULL || !isfinite(last->v)) {
		app_message(a, true, "no iterate to start from");
		return APP_HANDLED | APP_REDRAW;
	}
	char err[256];
	if (app_param_set(a, PARAMS_START, last->v, err, sizeof err) != 0)
		app_message(a, true, "%s", err);
	else
		app_message(a, false, "the path now starts at the newest iterate");
	return APP_HANDLED | APP_REDRAW;
}

/* Select the next operating point (the diagnosis speaks of it). */
static unsigned key_point(struct app *a)
{
	if (a->res.n < 2) {
		app_message(a, false, "%s", a->res.n == 1 ? "only one operating point"
		            : "no operating point to select");
		return APP_HANDLED | APP_REDRAW;
	}
	a->point = (a->point + 1) % a->res.n;
	app_touch(a);
	const struct op_point *p = &a->res.pts[a->point];
	char v[48], i[48];
	int ascii = app_unicode(a) ? 0 : 1;
	qty_format_short(v, sizeof v, p->v, QTY_VOLTAGE, 4, ascii);
	qty_format_short(i, sizeof i, p->i, QTY_CURRENT, 4, ascii);
	struct stability_result sr = app_stability(a, a->point);
	app_message(a, false, "point %zu of %zu: %s, %s, %s", a->point + 1,
	            a->res.n, v, i, stability_name(sr.verdict));
	return APP_HANDLED | APP_REDRAW;
}

/* Show or hide the thermal plane of a device that heats itself. */
static unsigned key_thermal(struct app *a)
{
	app_thermal_view(a, !a->thermal);
	return APP_HANDLED | APP_REDRAW;
}

/* Ask for the target. */
static unsigned key_target(struct app *a)
{
	app_ask_target(a, NULL, NULL);
	return APP_HANDLED | APP_REDRAW;
}

/* Ask for a rating. */
static unsigned key_rating(struct app *a)
{
	app_ask_rating(a, NULL, NULL);
	return APP_HANDLED | APP_REDRAW;
}

/* Undo the last change of a value. */
static unsigned key_undo(struct app *a)
{
	if (app_undo(a) != 0)
		app_message(a, false, "nothing to undo");
	return APP_HANDLED | APP_REDRAW;
}

/* Close the view Esc closes. */
static unsigned key_escape(struct app *a)
{
	struct action act = { .kind = ACT_CLOSE };
	app_post(a, &act);
	return APP_HANDLED | APP_REDRAW;
}

/*
 * Save to the session's file (the demo asks for a name).  When that fails
 * (a read-only folder, a full disk) the session stays open and unsaved and
 * the save-as prompt opens with the reason, so another place can be typed.
 */
static unsigned key_save(struct app *a)
{
	if (a->path == NULL) {
		app_ask_save_as(a, "", NULL);
		return APP_HANDLED | APP_REDRAW;
	}
	if (app_changed_on_disk(a, a->path)) {
		app_ask_overwrite(a, a->path, a->path, true);
		return APP_HANDLED | APP_REDRAW;
	}
	if (app_save(a, NULL) != 0) {
		char why[sizeof a->status];
		snprintf(why, sizeof why, "%s", a->status);
		app_ask_save_as(a, a->path, why);
	}
	return APP_HANDLED | APP_REDRAW;
}

/* Save under another name: the prompt starts with the present one. */
static unsigned key_save_as(struct app *a)
{
	app_ask_save_as(a, a->path != NULL ? a->path : "", NULL);
	return APP_HANDLED | APP_REDRAW;
}

/* Write the view the plot's place shows as SVG (its pane draws it). */
static unsigned key_picture(struct app *a)
{
	struct action act = { .kind = ACT_PICTURE };
	app_post(a, &act);
	return APP_HANDLED | APP_REDRAW;
}

/* Repaint every cell. */
static unsigned key_redraw(struct app *a)
{
	term_touch_all(&a->term);
	app_touch(a);
	return APP_HANDLED | APP_REDRAW;
}

/* Quit, asking first when there are unsaved changes. */
static unsigned key_quit(struct app *a)
{
	if (a->dirty) {
		app_ask(a, NULL, APP_ASK_QUIT, true,
		        "unsaved changes: quit without saving? (y/n) ", NULL, NULL);
		return APP_HANDLED | APP_REDRAW;
	}
	return APP_HANDLED | APP_QUIT;
}

/*
 * The key map.  The help overlay lists it in this order.  Rows without
 * keys document what a key does inside a view (the view's pane takes it).
 */
static const struct key_binding key_table[] = {
	{ { ' ' }, "Space", "step one projection", RUN(key_step) },
	{ { 'g' }, "g", "run on; any key stops", RUN(key_run) },
	{ { 'b', TK_BACKSPACE }, "b Backspace", "step back one projection", RUN(key_back) },
	{ { 'r' }, "r", "restart the path", RUN(key_reset) },
	{ { 'o' }, "o", "flip projection order", RUN(key_order) },
	{ { 'a' }, "a", "start at newest iterate", RUN(key_anchor) },
	{ { 'p' }, "p", "select the next point", RUN(key_point) },
	{ { TK_UP, TK_DOWN }, "Up Down", "select a parameter", TO(pane_side) },
	{ { '+', '=', '-' }, "+ -", "raise/lower a little", TO(pane_side) },
	{ { ']', '[' }, "] [", "raise/lower a lot", TO(pane_side) },
	{ { '}', '{' }, "} {", "resistor: E24 up/down", TO(pane_side) },
	{ { 'e', TK_ENTER }, "e Enter", "type a value: 2.2k, 15m", TO(pane_side) },
	{ { '%' }, "%", "tolerance on the value", TO(pane_side) },
	{ { 't' }, "t", "target: 10mA, 2V, none", RUN(key_target) },
	{ { 'R' }, "R", "rating: resistor_power=", RUN(key_rating) },
	{ { 'u' }, "u", "undo the last change", RUN(key_undo) },
	{ { 'D' }, "D", "design RS, VS or a part", OPEN(pane_design) },
	{ { 'T' }, "T", "tolerance: worst case", OPEN(pane_tol) },
	{ { 0 }, "m", "(tolerance) Monte Carlo", DOC },
	{ { 'S' }, "S", "sensitivities, % per %", OPEN(pane_sens) },
	{ { 'F' }, "F", "fitted points, residuals", OPEN(pane_fit) },
	{ { 0 }, "f", "(points) fit them", DOC },
	{ { 'W' }, "W", "sweep any value: I vs it", OPEN(pane_sweep) },
	{ { 'H' }, "H", "self-heating plane", RUN(key_thermal) },
	{ { 0 }, "Up/Down", "(view) choose a row", DOC },
	{ { 0 }, "Enter", "(view) apply the row", DOC },
	{ { 0 }, "t s", "(design) target, unknown", DOC },
	{ { TK_ESC }, "Esc", "close a view, stop work", RUN(key_escape) },
	{ { 'z' }, "z", "frame: line/path/ranges", TO(pane_plot) },
	{ { '>', '<' }, "> <", "zoom in/out", TO(pane_plot) },
	{ { TK_LEFT, TK_RIGHT }, "Left Right", "pan to lower/higher V", TO(pane_plot) },
	{ { TK_PGUP, TK_PGDN }, "PgUp PgDn", "pan to higher/lower I", TO(pane_plot) },
	{ { 'w' }, "w", "undo zoom and pan", TO(pane_plot) },
	{ { '\t' }, "Tab", "hide/show side pane", TO(pane_side) },
	{ { 's' }, "s", "save (demo: asks a name)", RUN(key_save) },
	{ { 'A' }, "A", "save as another file", RUN(key_save_as) },
	{ { 'P' }, "P", "write the view as SVG", RUN(key_picture) },
	{ { 12 }, "Ctrl-L", "repaint the screen", RUN(key_redraw) },
	{ { '?', TK_F1 }, "? F1", "this help", OPEN(pane_help) },
	{ { 'q' }, "q Ctrl-C", "quit (asks if unsaved)", RUN(key_quit) },
};
#define NKEYS (sizeof key_table / sizeof key_table[0])

/* The help lines, generated from the key map. */
size_t keys_help(struct key_help *out, size_t max)
{
	size_t n = 0;
	for (; n < NKEYS && n < max; n++) {
		out[n].keys = key_table[n].label;
		out[n].help = key_table[n].help;
	}
	return n;
}

/* Act on KEY from the table. */
const struct pane *keys_dispatch(struct app *a, int key, unsigned *flags)
{
	*flags = 0;
	for (size_t k = 0; k < NKEYS; k++) {
		const struct key_binding *b = &key_table[k];
		bool match = false;
		for (size_t j = 0; j < 3; j++)
			if (b->keys[j] != 0 && b->keys[j] == key)
				match = true;
		if (!match)
			continue;
		if (b->run != NULL) {
			*flags = b->run(a);
			return NULL;
		}
		if (b->open != NULL) {
			struct action act = { .kind = ACT_OPEN, .to = b->open };
			app_post(a, &act);
			*flags = APP_HANDLED | APP_REDRAW;
			return NULL;
		}
		*flags = APP_HANDLED | APP_REDRAW;
		return b->to;
	}
	return NULL;
}
