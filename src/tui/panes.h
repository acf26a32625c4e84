/*
 * panes.h - the pane table: every pane of the front end, bottom to top.
 * A new view is one pane file, one line here and in panes.c, and its key
 * in the key table (keys.c).
 */
#ifndef BIASLINE_PANES_H
#define BIASLINE_PANES_H

#include <stddef.h>

#include "tui/pane.h"

extern const struct pane pane_title;   /* the title bar */
extern const struct pane pane_plot;    /* the load-line plot */
extern const struct pane pane_sweep;   /* the sweep plot (in the plot's place) */
extern const struct pane pane_thermal; /* the thermal plane (in the plot's place) */
extern const struct pane pane_side;    /* point, parameters, diagnosis, table */
extern const struct pane pane_design;  /* the design view */
extern const struct pane pane_tol;     /* the tolerance view */
extern const struct pane pane_sens;    /* the sensitivity view */
extern const struct pane pane_fit;     /* the points view */
extern const struct pane pane_help;    /* the help overlay */
extern const struct pane pane_prompt;  /* the bottom line and its prompt */

/* The panes, bottom to top (the loop draws in this order, keys go top down). */
extern const struct pane *const pane_table[];
extern const size_t pane_count;

#endif
