/*
 * keys.c - the front end's key map: one table binds keys to actions and
 * carries the help text the help overlay is generated from.
 */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "core/eseries.h"
#include "tui/app.h"

/* Steps a run takes between looks at the keyboard. */
#define RUN_CHUNK 16
/* Zoom factor of one zoom key press, and pan step in spans. */
#define ZOOM_STEP 1.5
#define PAN_STEP 0.2
/* Multipliers of the fine and coarse nudges of log-step parameters. */
#define LOG_FINE 1.01
#define LOG_COARSE 1.1
/* Relative fine and coarse nudges of linear parameters. */
#define LIN_FINE 0.01
#define LIN_COARSE 0.1

/* An action: changes the app, returns enum app_flags. */
typedef unsigned (*key_action)(struct app *a);

/* One binding: up to three keys, their label, the help line and action. */
struct key_binding {
	int keys[3];
	const char *label;
	const char *help;
	key_action run;
};

/* Step one projection. */
static unsigned key_step(struct app *a)
{
	enum step_status st = stepper_status(a->st);
	if (!a->pb_ok) {
		app_message(a, true, "%s", a->pb_err);
	} else if (st != STEP_CONTINUE) {
		app_message(a, st != STEP_CONVERGED, "the path has stopped: %s "
		            "(r restarts it)", step_status_name(st));
	} else {
		stepper_step(a->st);
		a->status[0] = '\0';
	}
	a->grid_ok = false;
	return APP_HANDLED | APP_REDRAW;
}

/* Run to convergence or the step cap, in chunks; any key interrupts. */
static unsigned key_run(struct app *a)
{
	if (!a->pb_ok) {
		app_message(a, true, "%s", a->pb_err);
		return APP_HANDLED | APP_REDRAW;
	}
	while (stepper_status(a->st) == STEP_CONTINUE) {
		for (int k = 0; k < RUN_CHUNK; k++)
			if (stepper_step(a->st) != STEP_CONTINUE)
				break;
		a->grid_ok = false;
		if (stepper_status(a->st) != STEP_CONTINUE)
			break;
		app_draw(a);
		int key = term_read_key(&a->term, 0);
		if (key != TK_NONE) {
			app_message(a, false, "run interrupted");
			return APP_HANDLED | APP_REDRAW;
		}
	}
	size_t n;
	stepper_trace(a->st, &n);
	enum step_status st = stepper_status(a->st);
	app_message(a, st != STEP_CONVERGED, "%s after %zu projections",
	            step_status_name(st), n - 1);
	return APP_HANDLED | APP_REDRAW;
}

/* Step back one projection (re-runs the path from its start). */
static unsigned key_back(struct app *a)
{
	size_t n;
	stepper_trace(a->st, &n);
	if (n <= 1) {
		app_message(a, false, "already at the start point");
		return APP_HANDLED | APP_REDRAW;
	}
	stepper_rewind(a->st, n - 2);
	a->status[0] = '\0';
	a->grid_ok = false;
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
	a->s.solver.order = a->s.solver.order == ORDER_VOLTAGE_FROM_LINE
	                    ? ORDER_VOLTAGE_FROM_DEVICE : ORDER_VOLTAGE_FROM_LINE;
	a->dirty = true;
	app_resolve(a);
	app_message(a, false, "order: voltage from the %s",
	            a->s.solver.order == ORDER_VOLTAGE_FROM_LINE ? "line" : "device");
	return APP_HANDLED | APP_REDRAW;
}

/* Start the path at the newest iterate's voltage. */
static unsigned key_anchor(struct app *a)
{
	const struct trace_row *last = stepper_last(a->st);
	if (last == NULL || !isfinite(last->v)) {
		app_message(a, true, "no iterate to start from");
		return APP_HANDLED | APP_REDRAW;
	}
	struct param p = { .id = PARAM_START, .label = "start V",
	                   .kind = QTY_VOLTAGE, .value = &a->s.solver.start_v };
	char err[256];
	if (app_param_set(a, &p, last->v, err, sizeof err) != 0)
		app_message(a, true, "%s", err);
	else
		app_message(a, false, "the path now starts at the newest iterate");
	return APP_HANDLED | APP_REDRAW;
}

/* Select the previous parameter. */
static unsigned key_up(struct app *a)
{
	if (a->sel > 0)
		a->sel--;
	return APP_HANDLED | APP_REDRAW;
}

/* Select the next parameter. */
static unsigned key_down(struct app *a)
{
	struct param ps[APP_MAX_PARAMS];
	size_t n = app_params(a, ps, APP_MAX_PARAMS);
	if ((size_t)a->sel + 1 < n)
		a->sel++;
	return APP_HANDLED | APP_REDRAW;
}

/* Nudge the selected parameter: DIR = +1/-1, COARSE for the big step. */
static unsigned key_nudge(struct app *a, int dir, bool coarse)
{
	struct param ps[APP_MAX_PARAMS];
	size_t n = app_params(a, ps, APP_MAX_PARAMS);
	if (a->sel < 0 || (size_t)a->sel >= n)
		return APP_HANDLED;
	const struct param *p = &ps[a->sel];
	if (p->id == PARAM_METHOD) {
		int m = (int)a->s.solver.method + dir;
		m = (m + METHOD_COUNT) % METHOD_COUNT;
		a->s.solver.method = (enum solve_method)m;
		a->dirty = true;
		app_resolve(a);
		app_message(a, false, "method: %s", solve_method_name(a->s.solver.method));
		return APP_HANDLED | APP_REDRAW;
	}
	if (p->id == PARAM_ORDER)
		return key_order(a);
	double v = p->cur, nv;
	if (p->id == PARAM_START && isnan(v))
		v = 0.0;
	if (p->log_step && v > 0.0) {
		double m = coarse ? LOG_COARSE : LOG_FINE;
		nv = dir > 0 ? v * m : v / m;
	} else if (p->fine > 0.0) {
		nv = v + dir * (coarse ? p->coarse : p->fine);
	} else {
		double step = fabs(v) * (coarse ? LIN_COARSE : LIN_FINE);
		if (!(step > 0.0))
			step = coarse ? 0.1 : 0.01;
		nv = v + dir * step;
	}
	char err[256];
	if (app_param_set(a, p, nv, err, sizeof err) != 0) {
		app_message(a, true, "%s", err);
	} else {
		char buf[64];
		qty_format(buf, sizeof buf, nv, p->kind, 5, a->view.unicode ? 0 : 1);
		app_message(a, false, "%s = %s", p->label, buf);
	}
	return APP_HANDLED | APP_REDRAW;
}

/* Fine nudge up. */
static unsigned key_fine_up(struct app *a) { return key_nudge(a, 1, false); }
/* Fine nudge down. */
static unsigned key_fine_down(struct app *a) { return key_nudge(a, -1, false); }
/* Coarse nudge up. */
static unsigned key_coarse_up(struct app *a) { return key_nudge(a, 1, true); }
/* Coarse nudge down. */
static unsigned key_coarse_down(struct app *a) { return key_nudge(a, -1, true); }

/*
 * Step the selected RS or RP to the next standard value along the
 * session's series (E24 unless its target section names another).
 */
static unsigned key_eseries(struct app *a, int dir)
{
	struct param ps[APP_MAX_PARAMS];
	size_t n = app_params(a, ps, APP_MAX_PARAMS);
	if (a->sel < 0 || (size_t)a->sel >= n)
		return APP_HANDLED;
	const struct param *p = &ps[a->sel];
	bool resistor = p->kind == QTY_RESISTANCE &&
	                (p->id == PARAM_SOURCE_B || p->part >= 0);
	if (!resistor) {
		app_message(a, true, "select RS, RP or a network resistor to step "
		            "along the standard values");
		return APP_HANDLED | APP_REDRAW;
	}
	enum eseries es = a->s.analysis.target.series;
	double nv;
	char err[256];
	if (eseries_step(es, p->cur, dir, &nv) != 0) {
		app_message(a, true, "%s: no %s value %s this one", p->label,
		            eseries_name(es), dir > 0 ? "above" : "below");
	} else if (app_param_set(a, p, nv, err, sizeof err) != 0) {
		app_message(a, true, "%s", err);
	} else {
		char buf[64];
		qty_format_short(buf, sizeof buf, nv, p->kind, 5,
		                 a->view.unicode ? 0 : 1);
		app_message(a, false, "%s = %s (%s)", p->label, buf, eseries_name(es));
	}
	return APP_HANDLED | APP_REDRAW;
}

/* RS/RP to the next standard value. */
static unsigned key_series_up(struct app *a) { return key_eseries(a, 1); }
/* RS/RP to the previous standard value. */
static unsigned key_series_down(struct app *a) { return key_eseries(a, -1); }

/* Open the prompt to type an exact value for the selected parameter. */
static unsigned key_edit(struct app *a)
{
	struct param ps[APP_MAX_PARAMS];
	size_t n = app_params(a, ps, APP_MAX_PARAMS);
	if (a->sel < 0 || (size_t)a->sel >= n)
		return APP_HANDLED;
	if (ps[a->sel].choice)
		return key_nudge(a, 1, false);
	char err[256];
	if (ps[a->sel].readonly) {
		app_param_set(a, &ps[a->sel], 0.0, err, sizeof err);
		app_message(a, true, "%s", err);
		return APP_HANDLED | APP_REDRAW;
	}
	pane_prompt_open(a, PROMPT_VALUE, NULL);
	return APP_HANDLED | APP_REDRAW;
}

/* Cycle the frame: whole load line, operating point, the session's ranges. */
static unsigned key_frame(struct app *a)
{
	bool has_fixed = !a->s.view.autoscale;
	switch (a->view.frame) {
	case FRAME_LINE: a->view.frame = FRAME_POINT; break;
	case FRAME_POINT: a->view.frame = has_fixed ? FRAME_FIXED : FRAME_LINE; break;
	default: a->view.frame = FRAME_LINE; break;
	}
	a->view.zoom = 1.0;
	a->view.pan_v = a->view.pan_i = 0.0;
	a->grid_ok = false;
	app_message(a, false, "frame: %s", a->view.frame == FRAME_LINE
	            ? "whole load line" : a->view.frame == FRAME_POINT
	            ? "operating point" : "the session's ranges");
	return APP_HANDLED | APP_REDRAW;
}

/* Zoom in. */
static unsigned key_zoom_in(struct app *a)
{
	if (a->view.zoom < 1e6)
		a->view.zoom *= ZOOM_STEP;
	a->grid_ok = false;
	return APP_HANDLED | APP_REDRAW;
}

/* Zoom out. */
static unsigned key_zoom_out(struct app *a)
{
	if (a->view.zoom > 1e-3)
		a->view.zoom /= ZOOM_STEP;
	a->grid_ok = false;
	return APP_HANDLED | APP_REDRAW;
}

/* Pan by DV, DI screens. */
static unsigned key_pan(struct app *a, double dv, double di)
{
	a->view.pan_v += dv / a->view.zoom;
	a->view.pan_i += di / a->view.zoom;
	a->grid_ok = false;
	return APP_HANDLED | APP_REDRAW;
}

/* Pan left. */
static unsigned key_pan_left(struct app *a) { return key_pan(a, -PAN_STEP, 0.0); }
/* Pan right. */
static unsigned key_pan_right(struct app *a) { return key_pan(a, PAN_STEP, 0.0); }
/* Pan up. */
static unsigned key_pan_up(struct app *a) { return key_pan(a, 0.0, PAN_STEP); }
/* Pan down. */
static unsigned key_pan_down(struct app *a) { return key_pan(a, 0.0, -PAN_STEP); }

/* Reset zoom and pan. */
static unsigned key_whole(struct app *a)
{
	a->view.zoom = 1.0;
	a->view.pan_v = a->view.pan_i = 0.0;
	a->grid_ok = false;
	return APP_HANDLED | APP_REDRAW;
}

/* Show or hide the side pane. */
static unsigned key_side(struct app *a)
{
	a->side_hidden = !a->side_hidden;
	a->grid_ok = false;
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
		pane_prompt_open(a, PROMPT_SAVE_AS, "");
		return APP_HANDLED | APP_REDRAW;
	}
	if (app_save(a, NULL) != 0) {
		char why[sizeof a->prompt.error];
		snprintf(why, sizeof why, "%s", a->status);
		pane_prompt_open(a, PROMPT_SAVE_AS, a->path);
		snprintf(a->prompt.error, sizeof a->prompt.error, "%s", why);
	}
	return APP_HANDLED | APP_REDRAW;
}

/* Save under another name: the prompt starts with the present one. */
static unsigned key_save_as(struct app *a)
{
	pane_prompt_open(a, PROMPT_SAVE_AS, a->path != NULL ? a->path : "");
	return APP_HANDLED | APP_REDRAW;
}

/* Repaint every cell. */
static unsigned key_redraw(struct app *a)
{
	term_touch_all(&a->term);
	a->grid_ok = false;
	return APP_HANDLED | APP_REDRAW;
}

/* Open the design view (asks for a target current when none is set). */
static unsigned key_design(struct app *a)
{
	pane_design_open(a);
	return APP_HANDLED | APP_REDRAW;
}

/* Open the tolerance view (worst case now; m there runs Monte Carlo). */
static unsigned key_tolerance(struct app *a)
{
	pane_tol_open(a);
	return APP_HANDLED | APP_REDRAW;
}

/* Open the sensitivity view (% change of V and I per % of each parameter). */
static unsigned key_sensitivity(struct app *a)
{
	pane_sens_open(a);
	return APP_HANDLED | APP_REDRAW;
}

/* Show or hide the sweep of the device current against RS. */
static unsigned key_sweep(struct app *a)
{
	pane_sweep_toggle(a);
	return APP_HANDLED | APP_REDRAW;
}

/* Show the help overlay. */
static unsigned key_help(struct app *a)
{
	a->help = true;
	return APP_HANDLED | APP_REDRAW;
}

/* Quit, asking first when there are unsaved changes. */
static unsigned key_quit(struct app *a)
{
	if (a->dirty) {
		pane_prompt_open(a, PROMPT_QUIT, NULL);
		return APP_HANDLED | APP_REDRAW;
	}
	return APP_HANDLED | APP_QUIT;
}

/*
 * The key map.  The help overlay lists it in this order.  Rows without
 * keys document what a key does inside a view (the view's pane takes it).
 */
static const struct key_binding key_table[] = {
	{ { ' ' }, "Space", "step one projection", key_step },
	{ { 'g' }, "g", "run on; any key stops", key_run },
	{ { 'b', TK_BACKSPACE }, "b Backspace", "step back one projection", key_back },
	{ { 'r' }, "r", "restart the path", key_reset },
	{ { 'o' }, "o", "flip projection order", key_order },
	{ { 'a' }, "a", "start at newest iterate", key_anchor },
	{ { TK_UP }, "Up", "select parameter above", key_up },
	{ { TK_DOWN }, "Down", "select parameter below", key_down },
	{ { '+', '=' }, "+", "raise value a little", key_fine_up },
	{ { '-' }, "-", "lower value a little", key_fine_down },
	{ { ']' }, "]", "raise value a lot", key_coarse_up },
	{ { '[' }, "[", "lower value a lot", key_coarse_down },
	{ { '}' }, "}", "RS/RP/part: next E24 up", key_series_up },
	{ { '{' }, "{", "RS/RP/part: E24 down", key_series_down },
	{ { 'e', TK_ENTER }, "e Enter", "type a value: 2.2k, 15m", key_edit },
	{ { 'D' }, "D", "design RS for a target", key_design },
	{ { 'T' }, "T", "tolerance: worst case", key_tolerance },
	{ { 0 }, "m", "(tolerance) Monte Carlo", NULL },
	{ { 'S' }, "S", "sensitivities, % per %", key_sensitivity },
	{ { 'W' }, "W", "sweep: I against RS/RP", key_sweep },
	{ { 0 }, "Up/Down", "(view) choose a row", NULL },
	{ { 0 }, "Enter", "(view) apply the row", NULL },
	{ { 0 }, "t", "(design) new target", NULL },
	{ { 0 }, "Esc", "(view) close it", NULL },
	{ { 'z' }, "z", "frame: line/point/ranges", key_frame },
	{ { '>' }, ">", "zoom in", key_zoom_in },
	{ { '<' }, "<", "zoom out", key_zoom_out },
	{ { TK_LEFT }, "Left", "pan to lower V", key_pan_left },
	{ { TK_RIGHT }, "Right", "pan to higher V", key_pan_right },
	{ { TK_PGUP }, "PgUp", "pan to higher I", key_pan_up },
	{ { TK_PGDN }, "PgDn", "pan to lower I", key_pan_down },
	{ { 'w' }, "w", "undo zoom and pan", key_whole },
	{ { '\t' }, "Tab", "hide/show side pane", key_side },
	{ { 's' }, "s", "save (demo: asks a name)", key_save },
	{ { 'A' }, "A", "save as another file", key_save_as },
	{ { 12 }, "Ctrl-L", "repaint the screen", key_redraw },
	{ { '?', TK_F1 }, "? F1", "this help", key_help },
	{ { 'q' }, "q Ctrl-C", "quit (asks if unsaved)", key_quit },
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

/* Run the action bound to KEY. */
unsigned keys_dispatch(struct app *a, int key)
{
	for (size_t k = 0; k < NKEYS; k++)
		for (size_t j = 0; j < 3; j++)
			if (key_table[k].keys[j] != 0 && key_table[k].keys[j] == key)
				return key_table[k].run(a);
	return 0;
}
