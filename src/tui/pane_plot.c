/*
 * pane_plot.c - the plot pane: the renderer's grid copied to the screen.
 * The grid is rendered again only when the state or the size changed.
 */
#include <math.h>
#include <stdbool.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "tui/app.h"

/* Draw the plot into R, rendering again only when something changed. */
static void pane_plot_draw(struct app *a, const struct rect *box)
{
	int row = box->row, col = box->col, rows = box->rows, cols = box->cols;
	if (!a->pb_ok) {
		term_text(&a->term, row + 1, col + 1, a->pb_err, cols - 2, TS_ERROR);
		return;
	}
	if (a->grid.rows != rows || a->grid.cols != cols) {
		if (grid_resize(&a->grid, rows, cols) != 0) {
			term_text(&a->term, row, col, "out of memory", cols, TS_ERROR);
			return;
		}
		a->grid_ok = false;
	}
	if (!a->grid_ok) {
		struct render_input in = { &a->pb, a->res.pts, a->res.n, NULL, 0 };
		in.rows = stepper_trace(a->st, &in.nrows);
		render_plot(&in, &a->view, &a->grid, NULL);
		a->grid_ok = true;
	}
	term_blit(&a->term, &a->grid, row, col);
}


/* The plot pane: no keys of its own (the key table moves the view). */
const struct pane pane_plot = {
	.name = "plot",
	.init = NULL,
	.key = NULL,
	.draw = pane_plot_draw,
};
