/*
 * pane_sens.c - the sensitivity view: for the first operating point, how
 * much V and I change, in % per % of each parameter (the normalised
 * sensitivities the core computes by implicit differentiation of the
 * operating-point equation), biggest effect on I first.
 */
#include <math.h>
#include <stdbool.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "core/paramref.h"
#include "core/sensitivity.h"
#include "tui/app.h"
#include "tui/panes.h"

/* Parameters the view lists at most. */
#define SENS_MAX 48

/* The sensitivity view's own state. */
struct sens_state {
	bool open;
	size_t n;
	struct sensitivity s[SENS_MAX];
	char msg[256];          /* why nothing can be shown, or "" */
};

/* Order by |% of I per %|, largest first. */
static int pane_sens_cmp(const void *x, const void *y)
{
	double a = fabs(((const struct sensitivity *)x)->si);
	double b = fabs(((const struct sensitivity *)y)->si);
	if (isnan(a))
		a = -1.0;
	if (isnan(b))
		b = -1.0;
	return (a < b) - (a > b);
}

/* Open the view: the sensitivities at the first operating point. */
static void pane_sens_open(struct app *a, struct sens_state *v)
{
	v->open = true;
	v->n = 0;
	v->msg[0] = '\0';
	if (!a->pb_ok) {
		snprintf(v->msg, sizeof v->msg, "%s", a->pb_err);
		return;
	}
	if (a->res.n == 0) {
		snprintf(v->msg, sizeof v->msg, "no operating point: nothing to "
		         "differentiate");
		return;
	}
	v->n = sensitivity_all(&a->pb, a->res.pts[0].v, a->res.pts[0].i, v->s,
	                       SENS_MAX);
	if (v->n == 0)
		snprintf(v->msg, sizeof v->msg, "the point does not move smoothly "
		         "with the parameters here (a fold, or a curve given as V(I))");
	qsort(v->s, v->n, sizeof v->s[0], pane_sens_cmp);
}

/* Draw the sensitivity view centred in BOX. */
static void pane_sens_draw(struct app *a, void *self, const struct rect *box)
{
	const struct sens_state *v = self;
	int ascii = app_unicode(a) ? 0 : 1;
	int w = box->cols - 4 < 74 ? box->cols - 4 : 74;
	int top = box->row, left = box->col + (box->cols - w) / 2;
	int end = top + box->rows - 1;
	app_overlay_box(a, top, left, end - top + 1, w);
	term_fill(&a->term, top, left, w, TS_TITLE);
	term_text(&a->term, top, left + 1,
	          "Sensitivities at the first operating point (% per %)", w - 2,
	          TS_TITLE);
	int row = top + 1, x = left + 2, cw = w - 4;
	char line[256], val[48];
	if (v->msg[0] != '\0') {
		term_text(&a->term, row++, x, v->msg, cw, TS_ERROR);
	} else {
		snprintf(line, sizeof line, "%-30s %-13s %9s %9s", "parameter",
		         "value", "V", "I");
		term_text(&a->term, row++, x, line, cw, TS_HEADER);
		for (size_t k = 0; k < v->n && row < end - 1; k++) {
			const struct sensitivity *s = &v->s[k];
			qty_format_short(val, sizeof val, s->value,
			                 paramref_unit(&a->pb, &s->param), 5, ascii);
			snprintf(line, sizeof line, "%-30.30s %-13s %+9.3g %+9.3g",
			         paramref_key(&a->pb, &s->param), val, s->sv, s->si);
			term_text(&a->term, row++, x, line, cw, TS_NORMAL);
		}
		if (row < end)
			term_text(&a->term, row++, x,
			          "+1 means a 1 % rise of the parameter raises V or I by 1 %",
			          cw, TS_HEADER);
	}
	term_fill(&a->term, end, left, w, TS_TITLE);
	term_text(&a->term, end, left + 1, "Esc close", w - 2, TS_TITLE);
}

/* Keys while the view is open: Esc (or S again) closes; others are held. */
static unsigned pane_sens_key(struct app *a, void *self, int key)
{
	(void)a;
	struct sens_state *v = self;
	if (key == TK_RESIZE || key == 12)
		return 0;
	if (key == TK_ESC || key == 'q' || key == 'S')
		v->open = false;
	return APP_HANDLED | APP_REDRAW;
}

/* Open on S. */
static unsigned pane_sens_act(struct app *a, void *self, const struct action *act)
{
	if (act->kind != ACT_OPEN)
		return 0;
	pane_sens_open(a, self);
	return APP_REDRAW;
}

/* Visible while open. */
static bool pane_sens_visible(const struct app *a, const void *self)
{
	(void)a;
	return ((const struct sens_state *)self)->open;
}

/* The sensitivity overlay. */
const struct pane pane_sens = {
	.name = "sensitivity",
	.slot = SLOT_BODY,
	.size = sizeof(struct sens_state),
	.visible = pane_sens_visible,
	.key = pane_sens_key,
	.draw = pane_sens_draw,
	.act = pane_sens_act,
};
