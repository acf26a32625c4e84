/*
 * pane_help.c - the help overlay, generated from the key table.
 */
#include <math.h>
#include <stdbool.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "tui/app.h"

/* Draw the help overlay centred in R (two columns when one does not fit). */
static void pane_help_draw(struct app *a, const struct rect *box)
{
	int rows = box->rows, cols = box->cols;
	struct key_help help[64];
	int n = (int)keys_help(help, 64);
	int ncol = n + 3 <= rows - 2 ? 1 : 2;
	int per = (n + ncol - 1) / ncol;
	int w = ncol == 1 ? 52 : cols - 2;
	if (w > cols - 2)
		w = cols - 2;
	int h = per + 3 < rows - 2 ? per + 3 : rows - 2;
	int top = (rows - h) / 2, left = (cols - w) / 2;
	int cw = (w - 2) / ncol;
	for (int r = 0; r < h; r++)
		term_fill(&a->term, top + r, left, w, TS_NORMAL);
	term_fill(&a->term, top, left, w, TS_TITLE);
	term_text(&a->term, top, left + 1, "Keys (any key closes this help)", w - 2,
	          TS_TITLE);
	for (int k = 0; k < n; k++) {
		int c = k / per, r = k % per;
		if (r >= h - 2)
			continue;
		char line[160];
		snprintf(line, sizeof line, "%-11s %s", help[k].keys, help[k].help);
		term_text(&a->term, top + 1 + r, left + 1 + c * cw, line, cw - 1,
		          TS_NORMAL);
	}
	term_fill(&a->term, top + h - 1, left, w, TS_TITLE);
}

/* Start hidden. */
static void pane_help_init(struct app *a)
{
	a->help = false;
}

/* While shown, any key closes the overlay; otherwise keys pass on. */
static unsigned pane_help_key(struct app *a, int key)
{
	if (!a->help || key == TK_RESIZE)
		return 0;
	a->help = false;
	return APP_HANDLED | APP_REDRAW;
}

/* The help overlay. */
const struct pane pane_help = {
	.name = "help",
	.init = pane_help_init,
	.key = pane_help_key,
	.draw = pane_help_draw,
};
