/*
 * pane_design.c - the design view: the series resistance (or source
 * voltage) that meets a target, from the core's design_solve, as three
 * rows (exact, the standard value below, the one above) with the point
 * and the error each gives.  Up/Down choose a row; Enter applies it to
 * the session; Esc closes.  Nothing here computes physics.
 */
#include <math.h>
#include <stdbool.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "core/safety.h"
#include "core/design.h"
#include "tui/app.h"
#include "tui/panes.h"

/* The question the design view asks: a target device current. */
#define DESIGN_ASK_TARGET 1

/* The design view's own state: a target, the rows the core designed. */
struct design_state {
	bool open;
	bool ok;                        /* RES holds rows (else RES.message) */
	struct design_request rq;
	struct design_result res;
	int sel;
};

/* Run the design for A's request and open the view with the result. */
static void pane_design_run(struct app *a, struct design_state *d)
{
	d->open = true;
	d->sel = 0;
	d->ok = false;
	memset(&d->res, 0, sizeof d->res);
	if (!a->pb_ok) {
		snprintf(d->res.message, sizeof d->res.message, "%s", a->pb_err);
		return;
	}
	/* The candidates' points come from the every-root solve, whatever
	 * method the path is drawn with (a diverging order finds none). */
	struct solve_options so = a->s.solver;
	so.method = METHOD_AUTO;
	d->ok = design_solve(&a->pb, &so, &d->rq, &a->s.analysis.ratings,
	                     &d->res) == 0;
	/* Start on the first standard value: the exact one is rarely bought. */
	if (d->ok && d->res.nrows > 1)
		d->sel = 1;
}

/* Open the view for the session's target, or ask for one. */
static void pane_design_open(struct app *a, struct design_state *d)
{
	if (session_design_request(&a->s, &d->rq) == 0) {
		pane_design_run(a, d);
		return;
	}
	app_ask(a, &pane_design, DESIGN_ASK_TARGET, false,
	        "design: target device current = ", NULL, NULL);
}

/* Design for a typed target device current and open the view. */
static void pane_design_target(struct app *a, struct design_state *d,
                               const char *text)
{
	double v;
	char err[256];
	if (qty_parse(text, QTY_CURRENT, &v, err, sizeof err) != QTY_OK) {
		app_ask(a, &pane_design, DESIGN_ASK_TARGET, false,
		        "design: target device current = ", text, err);
		return;
	}
	if (!(v > 0.0) || !isfinite(v)) {
		app_ask(a, &pane_design, DESIGN_ASK_TARGET, false,
		        "design: target device current = ", text,
		        "the target current must be above zero");
		return;
	}
	struct design_request *rq = &d->rq;
	rq->target = DESIGN_CURRENT;
	rq->value = v;
	rq->unknown = DESIGN_FOR_RS;
	rq->series = a->s.analysis.target.series;
	pane_design_run(a, d);
}

/* The unit of the request's target. */
static enum qty_kind pane_design_unit(enum design_target t)
{
	return t == DESIGN_CURRENT ? QTY_CURRENT
	       : t == DESIGN_VOLTAGE ? QTY_VOLTAGE : QTY_POWER;
}

/* Draw the design view centred in BOX. */
static void pane_design_draw(struct app *a, void *self, const struct rect *box)
{
	const struct design_state *d = self;
	int ascii = app_unicode(a) ? 0 : 1;
	bool for_rs = d->rq.unknown == DESIGN_FOR_RS;
	int w = box->cols - 4 < 74 ? box->cols - 4 : 74;
	/* The usual caution for any row's point (mains voltage, dissipation). */
	unsigned flags = 0;
	for (size_t k = 0; d->ok && k < d->res.nrows; k++) {
		const struct design_row *r = &d->res.rows[k];
		struct problem q;
		if (r->solved && design_apply(&a->pb, d->rq.unknown, r->value, &q) == 0)
			flags |= safety_check(&q, r->pt.v, r->pt.i);
	}
	char caution[320] = "";
	if (flags != 0)
		safety_message(flags, caution, sizeof caution);
	struct render_span cs[4];
	size_t ncs = render_wrap(caution, w - 4, cs, 4);
	if (ncs > 4)
		ncs = 4;
	int h = 11 + (ncs > 0 ? (int)ncs + 1 : 0);
	int top = box->row + (box->rows - h) / 2, left = box->col + (box->cols - w) / 2;
	app_overlay_box(a, top, left, h, w);
	char line[512], t[64], b[64], c[64], e[64], f[64];
	qty_format_short(t, sizeof t, d->rq.value, pane_design_unit(d->rq.target), 5,
	                 ascii);
	snprintf(line, sizeof line, "Design: device %s %s, solving for %s (%s)",
	         design_target_name(d->rq.target), t, for_rs ? "RS" : "VS",
	         eseries_name(d->rq.series));
	term_fill(&a->term, top, left, w, TS_TITLE);
	term_text(&a->term, top, left + 1, line, w - 2, TS_TITLE);
	int row = top + 2, x = left + 2, cw = w - 4;
	if (!d->ok) {
		snprintf(line, sizeof line, "no design: %s", d->res.message);
		struct render_span sp[4];
		size_t n = render_wrap(line, cw, sp, 4);
		for (size_t k = 0; k < n && k < 4; k++) {
			char part[512];
			size_t len = sp[k].len < sizeof part ? sp[k].len : sizeof part - 1;
			memcpy(part, line + sp[k].off, len);
			part[len] = '\0';
			term_text(&a->term, row++, x, part, cw, TS_ERROR);
		}
	} else {
		qty_format(b, sizeof b, d->res.v_target, QTY_VOLTAGE, 5, ascii);
		qty_format(c, sizeof c, d->res.i_target, QTY_CURRENT, 5, ascii);
		snprintf(line, sizeof line, "device at the target: %s, %s", b, c);
		term_text(&a->term, row++, x, line, cw, TS_NORMAL);
		row++;
		snprintf(line, sizeof line, "%-7s %-12s %-11s %-11s %-10s %s", "",
		         for_rs ? "RS" : "VS", "V", "I", "P(RS)", "error");
		term_text(&a->term, row++, x, line, cw, TS_HEADER);
		for (size_t k = 0; k < d->res.nrows; k++) {
			const struct design_row *r = &d->res.rows[k];
			qty_format_short(b, sizeof b, r->value,
			                 for_rs ? QTY_RESISTANCE : QTY_VOLTAGE,
			                 r->kind == DESIGN_ROW_EXACT ? 5 : 3, ascii);
			if (!r->solved) {
				snprintf(line, sizeof line, "%-7s %-12s (no operating point)",
				         design_row_name(r->kind), b);
			} else {
				qty_format(c, sizeof c, r->pt.v, QTY_VOLTAGE, 4, ascii);
				qty_format(e, sizeof e, r->pt.i, QTY_CURRENT, 4, ascii);
				qty_format(f, sizeof f, r->power.p_resistor, QTY_POWER, 3, ascii);
				snprintf(line, sizeof line, "%-7s %-12s %-11s %-11s %-10s %+.3g %%",
				         design_row_name(r->kind), b, c, e, f, r->error_percent);
			}
			enum term_style st = (int)k == d->sel ? TS_SELECTED : TS_NORMAL;
			if ((int)k == d->sel)
				term_fill(&a->term, row, x - 1, cw + 2, st);
			term_text(&a->term, row++, x, line, cw, st);
		}
		/* The chosen row's resistor rating, as the core suggests it. */
		const struct design_row *r = &d->res.rows[d->sel];
		if (for_rs && r->solved && !isnan(r->power.suggested_resistor_power)) {
			qty_format_short(b, sizeof b, r->power.suggested_resistor_power,
			                 QTY_POWER, 3, ascii);
			snprintf(line, sizeof line, "this RS needs a %s rating (at most "
			         "%.0f %% in use: common practice)", b,
			         100.0 * RATINGS_USE_FRACTION);
			term_text(&a->term, row++, x, line, cw, TS_DIM);
		}
	}
	row++;
	for (size_t k = 0; k < ncs; k++) {
		char part[320];
		size_t len = cs[k].len < sizeof part ? cs[k].len : sizeof part - 1;
		memcpy(part, caution + cs[k].off, len);
		part[len] = '\0';
		term_text(&a->term, row++, x, part, cw, TS_ERROR);
	}
	term_fill(&a->term, top + h - 1, left, w, TS_TITLE);
	term_text(&a->term, top + h - 1, left + 1,
	          "Up/Down choose  Enter apply  t new target  Esc close", w - 2,
	          TS_TITLE);
}

/* Apply the chosen row to the session: RS (or VS) takes its value. */
static unsigned pane_design_apply(struct app *a, struct design_state *d)
{
	if (!d->ok || d->sel < 0 || (size_t)d->sel >= d->res.nrows)
		return APP_HANDLED | APP_REDRAW;
	const struct design_row *r = &d->res.rows[d->sel];
	bool for_rs = d->rq.unknown == DESIGN_FOR_RS;
	if (a->s.source.form != SOURCE_THEVENIN) {
		app_message(a, true, "the design sets RS or VS of a Thevenin source; "
		            "this session's source is a Norton one");
		return APP_HANDLED | APP_REDRAW;
	}
	const char *key = for_rs ? "rs" : "vs";
	char err[256];
	if (app_param_set(a, key, r->value, err, sizeof err) != 0) {
		app_message(a, true, "%s", err);
		return APP_HANDLED | APP_REDRAW;
	}
	struct param p;
	char b[64] = "";
	if (params_find(&a->s, key, &p) == 0)
		params_format(&a->s, &p, !app_unicode(a), b, sizeof b);
	app_message(a, false, "%s = %s (the %s row of the design)", p.label, b,
	            design_row_name(r->kind));
	struct action sel = { .kind = ACT_SELECT };
	snprintf(sel.text, sizeof sel.text, "%s", key);
	app_post(a, &sel);
	d->open = false;
	return APP_HANDLED | APP_REDRAW;
}

/* Keys while the view is open: choose, apply, new target, close. */
static unsigned pane_design_key(struct app *a, void *self, int key)
{
	struct design_state *d = self;
	if (key == TK_RESIZE)
		return 0;
	switch (key) {
	case TK_UP:
		if (d->sel > 0)
			d->sel--;
		break;
	case TK_DOWN:
		if ((size_t)d->sel + 1 < d->res.nrows)
			d->sel++;
		break;
	case TK_ENTER:
		return pane_design_apply(a, d);
	case 't':
		d->open = false;
		app_ask(a, &pane_design, DESIGN_ASK_TARGET, false,
		        "design: target device current = ", NULL, NULL);
		break;
	case TK_ESC:
	case 'q':
	case 'D':
		d->open = false;
		break;
	case 12:
		return 0;   /* Ctrl-L still repaints */
	default:
		break;
	}
	return APP_HANDLED | APP_REDRAW;
}

/* Open on D; take a typed target. */
static unsigned pane_design_act(struct app *a, void *self,
                                const struct action *act)
{
	struct design_state *d = self;
	if (act->kind == ACT_OPEN)
		pane_design_open(a, d);
	else if (act->kind == ACT_ANSWER && act->tag == DESIGN_ASK_TARGET)
		pane_design_target(a, d, act->text);
	else
		return 0;
	return APP_REDRAW;
}

/* Visible while open. */
static bool pane_design_visible(const struct app *a, const void *self)
{
	(void)a;
	return ((const struct design_state *)self)->open;
}

/* The design overlay. */
const struct pane pane_design = {
	.name = "design",
	.slot = SLOT_BODY,
	.size = sizeof(struct design_state),
	.visible = pane_design_visible,
	.key = pane_design_key,
	.draw = pane_design_draw,
	.act = pane_design_act,
};
