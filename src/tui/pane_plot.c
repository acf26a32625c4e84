/*
 * pane_plot.c - the plot pane: the renderer's grid copied to the screen,
 * and the view (frame, zoom, pan) it is drawn with.  The grid is rendered
 * again only when what it shows or its size changed.
 */
#include <math.h>
#include <stdbool.h>
#include <stdio.h>
#include <string.h>

#include "render/plot.h"
#include "render/vector.h"
#include "tui/app.h"
#include "tui/panes.h"

/* Zoom factor of one zoom key press, and pan step in spans. */
#define ZOOM_STEP 1.5
#define PAN_STEP 0.2

/* The plot's own state. */
struct plot_state {
	struct render_view view;
	struct grid grid;
	unsigned gen;      /* the app's change count the grid shows */
	bool valid;        /* the grid shows GEN with VIEW */
};

/* Take the session's stored view: fixed ranges and zoom. */
static void pane_plot_init(struct app *a, void *self)
{
	struct plot_state *p = self;
	render_view_init(&p->view);
	p->view.unicode = app_unicode(a);
	grid_init(&p->grid, 0, 0);
	const struct session_view *sv = &a->s.view;
	if (!sv->autoscale) {
		p->view.frame = FRAME_FIXED;
		p->view.fixed = (struct render_window){ sv->v_min, sv->v_max,
		                                        sv->i_min, sv->i_max };
	}
	if (isfinite(sv->zoom) && sv->zoom > 0.0)
		p->view.zoom = sv->zoom;
	/* The demo is about the path: frame it (z goes to the whole line). */
	if (a->path == NULL)
		p->view.frame = FRAME_POINT;
}

/* Free the grid. */
static void pane_plot_fini(void *self)
{
	struct plot_state *p = self;
	grid_fini(&p->grid);
}

/* What the plot shows: the solution, the path, the focus point. */
static void pane_plot_input(struct app *a, struct render_input *in)
{
	bool heading;
	size_t focus = app_focus_point(a, &heading);
	*in = (struct render_input){
		/* epb: a self-heated device's curve at its junction temperature */
		.pb = &a->epb, .pts = a->res.pts, .npts = a->res.n,
		.focus = focus == (size_t)-1 ? 0 : focus,
		.labels = a->res.n > 1,
	};
	in->rows = stepper_trace(a->st, &in->nrows);
}

/* Draw the plot into BOX, rendering again only when something changed. */
static void pane_plot_draw(struct app *a, void *self, const struct rect *box)
{
	struct plot_state *p = self;
	int row = box->row, col = box->col, rows = box->rows, cols = box->cols;
	if (!a->pb_ok) {
		term_text(&a->term, row + 1, col + 1, a->pb_err, cols - 2, TS_ERROR);
		return;
	}
	if (p->grid.rows != rows || p->grid.cols != cols) {
		if (grid_resize(&p->grid, rows, cols) != 0) {
			term_text(&a->term, row, col, "out of memory", cols, TS_ERROR);
			return;
		}
		p->valid = false;
	}
	if (!p->valid || p->gen != a->gen) {
		struct render_input in;
		pane_plot_input(a, &in);
		render_plot(&in, &p->view, &p->grid, NULL);
		p->valid = true;
		p->gen = a->gen;
	}
	term_blit(&a->term, &p->grid, row, col);
}

/* Cycle the frame: whole load line, operating point, the session's ranges. */
static void pane_plot_frame(struct app *a, struct plot_state *p)
{
	bool has_fixed = !a->s.view.autoscale;
	switch (p->view.frame) {
	case FRAME_LINE: p->view.frame = FRAME_POINT; break;
	/* (the point frame follows the path: it holds its newest steps) */
	case FRAME_POINT: p->view.frame = has_fixed ? FRAME_FIXED : FRAME_LINE; break;
	default: p->view.frame = FRAME_LINE; break;
	}
	p->view.zoom = 1.0;
	p->view.pan_v = p->view.pan_i = 0.0;
	app_message(a, false, "frame: %s", p->view.frame == FRAME_LINE
	            ? "whole load line" : p->view.frame == FRAME_POINT
	            ? "the path and its point" : "the session's ranges");
}

/* The view keys (the key table hands them here). */
static unsigned pane_plot_key(struct app *a, void *self, int key)
{
	struct plot_state *p = self;
	struct render_view *v = &p->view;
	switch (key) {
	case 'z':
		pane_plot_frame(a, p);
		break;
	case '>':
	case '<': {
		double f = key == '>' ? ZOOM_STEP : 1.0 / ZOOM_STEP;
		if ((key == '>' && !(v->zoom < 1e6)) || (key == '<' && !(v->zoom > 1e-3)))
			break;
		/* About the newest iterate while the path moves, else the point. */
		struct render_input in;
		pane_plot_input(a, &in);
		double av = NAN, ai = NAN;
		const struct trace_row *last = stepper_last(a->st);
		if (in.nrows > 1 && last != NULL && isfinite(last->v) &&
		    isfinite(last->i)) {
			av = last->v;
			ai = last->i;
		} else if (a->res.n > 0) {
			av = a->res.pts[in.focus].v;
			ai = a->res.pts[in.focus].i;
		}
		if (!a->pb_ok || render_zoom_about(&in, v, f, av, ai) != RENDER_OK)
			v->zoom *= f;
		break;
	}
	case TK_LEFT:
		v->pan_v -= PAN_STEP / v->zoom;
		break;
	case TK_RIGHT:
		v->pan_v += PAN_STEP / v->zoom;
		break;
	case TK_PGUP:
		v->pan_i += PAN_STEP / v->zoom;
		break;
	case TK_PGDN:
		v->pan_i -= PAN_STEP / v->zoom;
		break;
	case 'w':
		v->zoom = 1.0;
		v->pan_v = v->pan_i = 0.0;
		break;
	default:
		return 0;
	}
	/* Zoom, pan and frame are how the user looks, not the case: like the
	 * pan they stay out of the session, so a save does not change the
	 * file for them (the session's view: section only sets the start). */
	p->valid = false;
	return APP_HANDLED | APP_REDRAW;
}

/* Write the plot as the user sees it (frame, zoom, pan) as SVG. */
static unsigned pane_plot_act(struct app *a, void *self, const struct action *act)
{
	struct plot_state *p = self;
	if (act->kind != ACT_PICTURE)
		return 0;
	if (!a->pb_ok) {
		app_message(a, true, "no picture: %s", a->pb_err);
		return APP_HANDLED | APP_REDRAW;
	}
	struct render_input in;
	pane_plot_input(a, &in);
	in.labels = true;
	struct render_notes notes = { a->path != NULL ? a->path : "demo",
	                              &a->s.reactive };
	struct plot_desc d;
	char *svg = NULL;
	size_t len = 0;
	if (render_desc_line(&in, &p->view, &notes, &d) != RENDER_OK ||
	    render_vector(&d, VECTOR_SVG, VECTOR_WIDTH, VECTOR_HEIGHT, &svg, &len,
	                  NULL) != 0) {
		app_message(a, true, "the picture could not be drawn");
		svg = NULL;
	}
	plot_desc_fini(&d);
	if (svg != NULL)
		app_write_picture(a, svg, len, ".svg");
	return APP_HANDLED | APP_REDRAW;
}

/* The plot: always there, under the views that take its place. */
const struct pane pane_plot = {
	.name = "plot",
	.slot = SLOT_MAIN,
	.size = sizeof(struct plot_state),
	.init = pane_plot_init,
	.fini = pane_plot_fini,
	.key = pane_plot_key,
	.draw = pane_plot_draw,
	.act = pane_plot_act,
};
