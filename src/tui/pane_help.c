/*
 * pane_help.c - the help overlay, generated from the key table's lines.
 */
#include <stdbool.h>
#include <stdio.h>

#include "tui/app.h"
#include "tui/panes.h"

/* The overlay's own state. */
struct help_state {
	bool shown;
};

/* Draw the help overlay centred in BOX (two columns when one does not fit). */
static void pane_help_draw(struct app *a, void *self, const struct rect *box)
{
	(void)self;
	int rows = box->rows, cols = box->cols;
	int n = (int)a->nhelp;
	int ncol = n + 3 <= rows - 2 ? 1 : 2;
	int per = (n + ncol - 1) / ncol;
	int w = ncol == 1 ? 52 : cols - 2;
	if (w > cols - 2)
		w = cols - 2;
	int h = per + 3 < rows - 2 ? per + 3 : rows - 2;
	int top = (rows - h) / 2, left = (cols - w) / 2;
	int cw = (w - 2) / ncol;
	app_overlay_box(a, top, left, h, w);
	term_fill(&a->term, top, left, w, TS_TITLE);
	term_text(&a->term, top, left + 1, "Keys (any key closes this help)", w - 2,
	          TS_TITLE);
	for (int k = 0; k < n; k++) {
		int c = k / per, r = k % per;
		if (r >= h - 2)
			continue;
		char line[160];
		snprintf(line, sizeof line, "%-11s %s", a->help[k].keys,
		         a->help[k].help);
		term_text(&a->term, top + 1 + r, left + 1 + c * cw, line, cw - 1,
		          TS_NORMAL);
	}
	term_fill(&a->term, top + h - 1, left, w, TS_TITLE);
}

/* While shown, any key closes the overlay. */
static unsigned pane_help_key(struct app *a, void *self, int key)
{
	(void)a;
	struct help_state *h = self;
	if (key == TK_RESIZE)
		return 0;
	h->shown = false;
	return APP_HANDLED | APP_REDRAW;
}

/* Show on its key. */
static unsigned pane_help_act(struct app *a, void *self, const struct action *act)
{
	(void)a;
	struct help_state *h = self;
	if (act->kind != ACT_OPEN)
		return 0;
	h->shown = true;
	return APP_REDRAW;
}

/* Visible while shown. */
static bool pane_help_visible(const struct app *a, const void *self)
{
	(void)a;
	return ((const struct help_state *)self)->shown;
}

/* The help overlay. */
const struct pane pane_help = {
	.name = "help",
	.slot = SLOT_SCREEN,
	.size = sizeof(struct help_state),
	.visible = pane_help_visible,
	.key = pane_help_key,
	.draw = pane_help_draw,
	.act = pane_help_act,
};
