/*
 * panes.c - the pane table (see panes.h).
 */
#include "tui/panes.h"

const struct pane *const pane_table[] = {
	&pane_title,
	&pane_plot, &pane_sweep, &pane_thermal,
	&pane_side,
	&pane_design, &pane_tol, &pane_sens, &pane_fit,
	&pane_help,
	&pane_prompt,
};

const size_t pane_count = sizeof pane_table / sizeof pane_table[0];
