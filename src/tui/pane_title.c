/*
 * pane_title.c - the title bar: the program, the file (its start dropped
 * when short of room, never the modified mark) and the operating point.
 */
#include <stdio.h>
#include <string.h>

#include "tui/app.h"
#include "tui/panes.h"

/* Draw the title bar into BOX (one row). */
static void pane_title_draw(struct app *a, void *self, const struct rect *box)
{
	(void)self;
	int cols = box->cols, row = box->row;
	term_fill(&a->term, row, 0, cols, TS_TITLE);
	char right[160] = "";
	int ascii = app_unicode(a) ? 0 : 1;
	if (a->res.n > 0) {
		char v[48], i[48], which[64] = "";
		size_t k = a->point < a->res.n ? a->point : 0;
		qty_format(v, sizeof v, a->res.pts[k].v, QTY_VOLTAGE, 5, ascii);
		qty_format(i, sizeof i, a->res.pts[k].i, QTY_CURRENT, 5, ascii);
		if (a->res.n > 1)
			snprintf(which, sizeof which, " (%zu of %zu)", k + 1, a->res.n);
		snprintf(right, sizeof right, "point %s, %s%s  ? help ", v, i, which);
	} else {
		snprintf(right, sizeof right, "no operating point  ? help ");
	}
	int rw = render_text_width(right);
	char head[64];
	snprintf(head, sizeof head, " biasline %s ", a->dirty ? "[modified]" : "");
	const char *name = a->path != NULL ? a->path : "demo (not saved to a file)";
	int room = cols - rw - 2 - render_text_width(head);
	int nw = render_text_width(name);
	char shown[512];
	if (room > 3 && nw > room) {
		const char *p = name;
		for (int skip = nw - (room - 3); skip > 0 && *p != '\0'; skip--)
			render_utf8_next(&p);
		snprintf(shown, sizeof shown, "...%s", p);
	} else {
		snprintf(shown, sizeof shown, "%s", name);
	}
	int c = term_text(&a->term, row, 0, head, cols - rw - 1, TS_TITLE);
	term_text(&a->term, row, c, shown, cols - rw - 1 - c, TS_TITLE);
	term_text(&a->term, row, cols - rw, right, rw, TS_TITLE);
}

/* The title bar. */
const struct pane pane_title = {
	.name = "title",
	.slot = SLOT_TITLE,
	.draw = pane_title_draw,
};
