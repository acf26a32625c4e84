/*
 * pane_fit.c - the points view: the points the device was fitted to (its
 * device.fitted_to file) or the measured model's own points, marked 'x'
 * on the device's curve through them, with every point's residual
 * listed; f fits the device's model to the points (fit_run: MINPACK's
 * Levenberg-Marquardt, core/fit.h) and shows the parameters with their
 * standard errors; Enter takes the fitted parameters into the session (u
 * undoes it).  The curve is the core's fit_model_value in the points' own
 * terms (I at V, or a thermistor's R at T); nothing here computes physics.
 */
#include <math.h>
#include <stdbool.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "core/fit.h"
#include "session/session_fit.h"
#include "tui/app.h"
#include "tui/panes.h"

/* Samples of the curve across the points. */
#define FIT_CURVE 121
/* The question the view asks: which model to fit measured points with. */
#define FIT_ASK_MODEL 1

/* The points view's own state. */
struct fit_state {
	bool open;
	bool have;                  /* PTS holds points (else MSG says why) */
	char source[256];           /* where they came from, as shown */
	char msg[700];
	struct session_fit_points pts;
	struct fit_point *resid;    /* the present device's residuals, or NULL */
	double rms;                 /* their RMS (NaN: not available) */
	bool fitted;                /* RES holds a fit of the points */
	struct fit_result res;
	const struct model_type *type; /* the model the curve is drawn for */
	double x[FIT_CURVE], y[FIT_CURVE];
	struct grid grid;
	bool valid;
};

/* The unit of the points' x and y for TYPE. */
static enum qty_kind pane_fit_xkind(const struct model_type *t)
{
	return fit_model_axes(t) == FIT_AXES_TR ? QTY_TEMPERATURE : QTY_VOLTAGE;
}
static enum qty_kind pane_fit_ykind(const struct model_type *t)
{
	return fit_model_axes(t) == FIT_AXES_TR ? QTY_RESISTANCE : QTY_CURRENT;
}

/* Drop what F holds. */
static void pane_fit_clear(struct fit_state *f)
{
	session_fit_points_fini(&f->pts);
	free(f->resid);
	f->resid = NULL;
	if (f->fitted)
		fit_result_fini(&f->res);
	f->fitted = false;
	f->have = false;
	f->valid = false;
	f->rms = NAN;
}

/* Sample the curve of TYPE with parameters P across the points. */
static void pane_fit_curve(struct fit_state *f, const struct model_type *type,
                           const double *p)
{
	double lo = INFINITY, hi = -INFINITY;
	for (size_t k = 0; k < f->pts.n; k++) {
		lo = fmin(lo, f->pts.x[k]);
		hi = fmax(hi, f->pts.x[k]);
	}
	double pad = 0.05 * (hi - lo);
	lo -= pad;
	hi += pad;
	f->type = type;
	for (int k = 0; k < FIT_CURVE; k++) {
		f->x[k] = lo + (hi - lo) * k / (FIT_CURVE - 1);
		f->y[k] = fit_model_value(type, p, f->x[k], NAN);
	}
	f->valid = false;
}

/* The residuals of the present device at the points (a measured device
 * passes through its own points: none). */
static void pane_fit_residuals(struct app *a, struct fit_state *f)
{
	free(f->resid);
	f->resid = NULL;
	f->rms = NAN;
	const struct model_type *t = a->s.device.type;
	if (!fit_model_supported(t))
		return;
	f->resid = calloc(f->pts.n, sizeof *f->resid);
	if (f->resid == NULL)
		return;
	f->rms = fit_evaluate(t, a->s.device.p, FIT_WEIGHT_RELATIVE, f->pts.n,
	                      f->pts.x, f->pts.y, f->pts.t, f->resid);
	if (!isfinite(f->rms)) {
		free(f->resid);
		f->resid = NULL;
	}
}

/* Open the view: find the points and the device's curve through them. */
static void pane_fit_open(struct app *a, struct fit_state *f)
{
	pane_fit_clear(f);
	f->open = true;
	f->msg[0] = '\0';
	const struct model_type *t = a->s.device.type;
	if (session_fit_own(&a->s, t, &f->pts) == 0) {
		snprintf(f->source, sizeof f->source, "the measured device's %zu "
		         "points", f->pts.n);
	} else if (a->s.fitted_to != NULL) {
		char path[1024];
		struct session_error err;
		if (session_fitted_path(&a->s, a->path, path, sizeof path) != 0) {
			snprintf(f->msg, sizeof f->msg, "device.fitted_to: the file name "
			         "is too long");
			return;
		}
		enum session_status st = session_fit_read(path, t, &f->pts, &err);
		if (st != SESSION_OK) {
			char m[600];
			session_error_format(&err, m, sizeof m);
			snprintf(f->msg, sizeof f->msg, "device.fitted_to: %s", m);
			return;
		}
		snprintf(f->source, sizeof f->source, "%zu points of %.200s",
		         f->pts.n, a->s.fitted_to);
	} else {
		snprintf(f->msg, sizeof f->msg, "no points to show: the device is "
		         "not a measured curve, and the session does not say which "
		         "points it was fitted to (biasline fit --points FILE --into "
		         "SESSION records it as device.fitted_to)");
		return;
	}
	f->have = true;
	pane_fit_residuals(a, f);
	if (fit_model_supported(t))
		pane_fit_curve(f, t, a->s.device.p);
	else
		f->type = NULL;   /* the points themselves are the curve */
}

/* Fit TYPE to the points. */
static void pane_fit_run(struct app *a, struct fit_state *f,
                         const struct model_type *type)
{
	if (!f->have)
		return;
	if (f->fitted)
		fit_result_fini(&f->res);
	f->fitted = false;
	struct fit_request rq;
	session_fit_request(&a->s, type, FIT_WEIGHT_RELATIVE, &rq);
	session_fit_use(&rq, &f->pts);
	enum fit_status st = fit_run(&rq, &f->res);
	if (st != FIT_OK) {
		app_message(a, true, "no fit: %s", f->res.message);
		fit_result_fini(&f->res);
		return;
	}
	f->fitted = true;
	pane_fit_curve(f, type, f->res.p);
	app_message(a, false, "%s fitted to %zu points: Enter takes the "
	            "parameters, Esc leaves the device as it is", type->name,
	            f->res.n);
}

/* Ask which model to fit measured points with. */
static void pane_fit_ask(struct app *a, const char *initial, const char *error)
{
	char models[200], q[300];
	fit_model_list(models, sizeof models);
	snprintf(q, sizeof q, "fit which model (%s) = ", models);
	app_ask(a, &pane_fit, FIT_ASK_MODEL, false, q, initial, error);
}

/* Take the fitted parameters into the session. */
static unsigned pane_fit_apply(struct app *a, struct fit_state *f)
{
	if (!f->fitted) {
		app_message(a, true, "f runs the fit first");
		return APP_HANDLED | APP_REDRAW;
	}
	struct device dev;
	device_init(&dev, f->res.type);
	memcpy(dev.p, f->res.p, sizeof dev.p);
	bool was_points = a->s.device.type != f->res.type && a->s.curve != NULL;
	char err[512];
	if (app_device_set(a, &dev, err, sizeof err) != 0) {
		app_message(a, true, "not taken: %s", err);
		return APP_HANDLED | APP_REDRAW;
	}
	app_message(a, false, "the device is the fitted %s now%s (u undoes it)",
	            f->res.type->name, was_points ? "; the measured points are "
	            "no longer the device" : "");
	f->open = false;
	return APP_HANDLED | APP_REDRAW;
}

/* Write TEXT wrapped to W cells from ROW, at most MAX lines; rows used. */
static int pane_fit_wrap(struct app *a, int row, int col, int w, int max,
                         const char *text, enum term_style st)
{
	struct render_span sp[10];
	size_t n = render_wrap(text, w, sp, 10);
	int used = 0;
	for (size_t k = 0; k < n && k < 10 && used < max; k++) {
		char part[720];
		size_t len = sp[k].len < sizeof part ? sp[k].len : sizeof part - 1;
		memcpy(part, text + sp[k].off, len);
		part[len] = '\0';
		term_text(&a->term, row + used++, col, part, w, st);
	}
	return used;
}

/* Draw the plot of the curve and the points into the grid for BOX. */
static void pane_fit_plot(struct app *a, struct fit_state *f,
                          const struct rect *box)
{
	if (f->grid.rows != box->rows || f->grid.cols != box->cols) {
		if (grid_resize(&f->grid, box->rows, box->cols) != 0)
			return;
		f->valid = false;
	}
	if (!f->valid) {
		const struct model_type *t = a->s.device.type;
		const struct model_type *ct = f->type != NULL ? f->type : t;
		bool own = f->type == NULL;
		char title[160];
		snprintf(title, sizeof title, "%s%s through the points (x)",
		         f->fitted ? "fitted " : "", ct->name);
		char names[32];
		bool tr = fit_model_axes(ct) == FIT_AXES_TR;
		snprintf(names, sizeof names, app_unicode(a)
		         ? (tr ? "R\xE2\x86\x91 T\xE2\x86\x92" : "I\xE2\x86\x91 V\xE2\x86\x92")
		         : (tr ? "R^ T>" : "I^ V>"));
		struct render_xy in = {
			.x = own ? f->pts.x : f->x, .y = own ? f->pts.y : f->y,
			.n = own ? f->pts.n : FIT_CURVE,
			.x_kind = pane_fit_xkind(ct), .y_kind = pane_fit_ykind(ct),
			.title = title, .names = names, .x_mark = NAN,
			.unicode = app_unicode(a),
		};
		struct render_layout lay;
		if (render_xy_plot(&in, &f->grid, &lay) == RENDER_OK)
			for (size_t k = 0; k < f->pts.n; k++) {
				int r, c;
				if (render_cell_of(&lay, f->pts.x[k], f->pts.y[k], &r, &c)) {
					struct cell *cl = &f->grid.cells[r * f->grid.cols + c];
					cl->ch = 'x';
					cl->role = ROLE_POINT;
				}
			}
		f->valid = true;
	}
	term_blit(&a->term, &f->grid, box->row, box->col);
}

/* Draw the list: each point and its residual, then the fit. */
static void pane_fit_list(struct app *a, struct fit_state *f, int row, int col,
                          int w, int end)
{
	int ascii = app_unicode(a) ? 0 : 1;
	const struct model_type *ct = f->fitted ? f->res.type : a->s.device.type;
	bool tr = fit_model_axes(ct) == FIT_AXES_TR;
	char line[256], b0[48], b1[48], b2[48];
	row += pane_fit_wrap(a, row, col, w, 2, f->source, TS_HEADER);
	const struct fit_point *fp = f->fitted ? f->res.points : f->resid;
	if (fp == NULL) {
		row += pane_fit_wrap(a, row, col, w, end - row, "the measured device "
		                     "passes through its own points: f fits a model "
		                     "to them", TS_DIM);
	}
	snprintf(line, sizeof line, "%-8s %-8s %s", tr ? "T" : "V",
	         tr ? "R" : "I", fp != NULL ? "residual" : "");
	term_text(&a->term, row++, col, line, w, TS_HEADER);
	/* Room for the points, keeping the fit's lines below them. */
	int below = f->fitted ? 3 + (int)f->res.nfree : 2;
	size_t shown = f->pts.n;
	if ((int)shown > end - row - below)
		shown = end - row - below > 1 ? (size_t)(end - row - below - 1) : 1;
	for (size_t k = 0; k < f->pts.n && k < shown && row < end; k++) {
		qty_format_short(b0, sizeof b0, f->pts.x[k], pane_fit_xkind(ct), 4,
		                 ascii);
		qty_format_short(b1, sizeof b1, f->pts.y[k], pane_fit_ykind(ct), 4,
		                 ascii);
		if (fp != NULL && isfinite(fp[k].resid_rel))
			snprintf(b2, sizeof b2, "%+.3g %%", 100.0 * fp[k].resid_rel);
		else
			snprintf(b2, sizeof b2, "%s", fp != NULL ? "-" : "");
		snprintf(line, sizeof line, "%-8s %-8s %s", b0, b1, b2);
		term_text(&a->term, row++, col, line, w, TS_NORMAL);
	}
	if (shown < f->pts.n && row < end) {
		snprintf(line, sizeof line, "(%zu more points)", f->pts.n - shown);
		term_text(&a->term, row++, col, line, w, TS_DIM);
	}
	if (!f->fitted) {
		if (isfinite(f->rms) && row < end) {
			snprintf(line, sizeof line, "the %s: RMS %.3g %%", ct->name,
			         100.0 * f->rms);
			term_text(&a->term, row++, col, line, w, TS_NORMAL);
		}
		return;
	}
	if (row < end) {
		snprintf(line, sizeof line, "fit: RMS %.3g %%, %d dof",
		         100.0 * f->res.rms, f->res.dof);
		term_text(&a->term, row++, col, line, w, TS_HEADER);
	}
	for (size_t j = 0; j < f->res.nfree && row < end; j++) {
		const struct model_param *mp = &ct->params[f->res.idx[j]];
		qty_format_short(b0, sizeof b0, f->res.p[f->res.idx[j]], mp->kind, 5,
		                 ascii);
		if (isfinite(f->res.se[j]))
			qty_format_short(b1, sizeof b1, f->res.se[j], mp->kind, 2, ascii);
		else
			snprintf(b1, sizeof b1, "-");
		snprintf(line, sizeof line, "%s %s %s %s", mp->label, b0,
		         ascii ? "+-" : "\xC2\xB1", b1);
		if (render_text_width(line) > w)
			snprintf(line, sizeof line, "%s %s", mp->label, b0);
		term_text(&a->term, row++, col, line, w, TS_NORMAL);
	}
}

/* Draw the view over the body: the plot on the left, the list beside it. */
static void pane_fit_draw(struct app *a, void *self, const struct rect *box)
{
	struct fit_state *f = self;
	int side = box->cols >= 140 ? 52 : box->cols >= 100 ? 44 : 32;
	app_overlay_box(a, box->row, box->col, box->rows, box->cols);
	int end = box->row + box->rows - 1;
	term_fill(&a->term, box->row, box->col, box->cols, TS_TITLE);
	term_text(&a->term, box->row, box->col + 1, f->have
	          ? "Points and residuals" : "Points", box->cols - 2, TS_TITLE);
	if (!f->have) {
		pane_fit_wrap(a, box->row + 2, box->col + 2, box->cols - 4,
		              end - box->row - 3, f->msg, TS_ERROR);
	} else {
		struct rect pr = { box->row + 1, box->col + 1, box->rows - 2,
		                   box->cols - side - 2 };
		pane_fit_plot(a, f, &pr);
		pane_fit_list(a, f, box->row + 1, box->col + box->cols - side,
		              side - 2, end);
	}
	term_fill(&a->term, end, box->col, box->cols, TS_TITLE);
	term_text(&a->term, end, box->col + 1, f->have
	          ? "f fit the points  Enter take the fit  Esc close"
	          : "Esc close", box->cols - 2, TS_TITLE);
}

/* Keys while open: fit, take the fit, close. */
static unsigned pane_fit_key(struct app *a, void *self, int key)
{
	struct fit_state *f = self;
	if (key == TK_RESIZE || key == 12)
		return 0;
	switch (key) {
	case 'f':
		if (!f->have)
			break;
		if (fit_model_supported(a->s.device.type)) {
			pane_fit_run(a, f, a->s.device.type);
		} else {
			/* measured points: the model to fit is the user's choice */
			f->open = false;
			pane_fit_ask(a, "diode", NULL);
		}
		break;
	case TK_ENTER:
		return pane_fit_apply(a, f);
	case TK_ESC:
	case 'q':
	case 'F':
		f->open = false;
		break;
	default:
		break;
	}
	return APP_HANDLED | APP_REDRAW;
}

/* Open on F; take the model to fit. */
static unsigned pane_fit_act(struct app *a, void *self, const struct action *act)
{
	struct fit_state *f = self;
	if (act->kind == ACT_OPEN) {
		pane_fit_open(a, f);
		return APP_REDRAW;
	}
	if (act->kind == ACT_ANSWER && act->tag == FIT_ASK_MODEL) {
		const struct model_type *t = model_find(act->text);
		if (t == NULL || !fit_model_supported(t)) {
			pane_fit_ask(a, act->text, t == NULL ? "no such model"
			             : "that model cannot be fitted");
			return APP_REDRAW;
		}
		f->open = true;
		pane_fit_run(a, f, t);
		return APP_REDRAW;
	}
	return 0;
}

/* Set up the grid. */
static void pane_fit_init(struct app *a, void *self)
{
	(void)a;
	struct fit_state *f = self;
	grid_init(&f->grid, 0, 0);
	f->rms = NAN;
}

/* Free what the view holds. */
static void pane_fit_fini(void *self)
{
	struct fit_state *f = self;
	pane_fit_clear(f);
	grid_fini(&f->grid);
}

/* Visible while open. */
static bool pane_fit_visible(const struct app *a, const void *self)
{
	(void)a;
	return ((const struct fit_state *)self)->open;
}

/* The points view: over the plot and the side pane while open. */
const struct pane pane_fit = {
	.name = "fit",
	.slot = SLOT_BODY,
	.size = sizeof(struct fit_state),
	.init = pane_fit_init,
	.fini = pane_fit_fini,
	.visible = pane_fit_visible,
	.key = pane_fit_key,
	.draw = pane_fit_draw,
	.act = pane_fit_act,
};
