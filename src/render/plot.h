/*
 * plot.h - the plot description: what a plot shows, in data units, before
 * any back end draws it.  Each plot (the load line, the sweep, the
 * tolerance histogram, the thermal plane) first builds one description;
 * then a back end draws it: the character grid (render_desc_grid, what the
 * terminal and 'biasline plot' show) or a vector picture (vector.h: SVG and
 * PNG through cairo).  So the picture in a design review is the picture on
 * the screen, drawn twice.
 *
 * A description holds the two axes (window, unit, log or linear, title),
 * the items in drawing order (curves given as functions the back end
 * samples at its own resolution, polylines, path steps, markers with a
 * number and words, bars, a vertical line, the "off the plot" arrow), the
 * legend, a title and caption lines.  Items are drawn in order; in the
 * character grid a cell keeps the mark of the highest priority (grid.c).
 *
 * Ownership: a description is embedded (plot_desc_init / plot_desc_fini)
 * and owns its items and their copied arrays; a curve's function context
 * is the caller's (the problem), which must outlive the description.
 */
#ifndef BIASLINE_RENDER_PLOT_H
#define BIASLINE_RENDER_PLOT_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#include "core/paramref.h"
#include "core/quantity.h"
#include "core/stability.h"
#include "core/tolerance.h"
#include "render/render.h"

/* What one item is. */
enum plot_kind {
	PLOT_CURVE,     /* y of x and/or x of y, sampled by the back end */
	PLOT_POLYLINE,  /* points joined in order; a non-finite point breaks it */
	PLOT_STEP,      /* one step of a path from (x0, y0) to (x1, y1) */
	PLOT_MARKER,    /* one point at (x0, y0) with a shape, number and words */
	PLOT_OFF,       /* the step (x0, y0)-(x1, y1) leaves the window: an arrow
	                   on the edge and the far end's value */
	PLOT_BARS,      /* a histogram: n bars, edges x[0..n], heights y[0..n-1] */
	PLOT_VLINE,     /* a dotted vertical line at x0 with words at its top */
};

/* Marker shapes of the vector back end (print without colour). */
enum plot_shape {
	SHAPE_DOT,          /* filled disc: a stable point, a curve's mark */
	SHAPE_SQUARE,       /* open square with a cross: an unstable point */
	SHAPE_DIAMOND,      /* open diamond: a point that oscillates */
	SHAPE_TRIANGLE,     /* open triangle: stability unknown */
	SHAPE_CIRCLE,       /* open circle: the path's start */
	SHAPE_TICK,         /* small filled square: a load-line intercept */
};

/* One item. */
struct plot_item {
	enum plot_kind kind;
	enum cell_role role;
	/* PLOT_CURVE: either function may be NULL (not both). */
	double (*y_of_x)(const void *ctx, double x);
	double (*x_of_y)(const void *ctx, double y);
	const void *ctx;
	/* PLOT_POLYLINE and PLOT_BARS: owned copies. */
	double *x, *y;
	size_t n;
	/* PLOT_STEP, PLOT_OFF: from (x0, y0) to (x1, y1); PLOT_MARKER,
	 * PLOT_VLINE: at (x0, y0). */
	double x0, y0, x1, y1;
	enum plot_shape shape;
	char tag[16];     /* a point's number ("1"), or "" */
	char words[96];   /* what the vector back end writes beside it */
};

/* One axis: its window, unit and title. */
struct plot_axis {
	double lo, hi;        /* the window; log10 of the values on a log axis */
	bool log;
	enum qty_kind kind;   /* the ticks' unit */
	char title[64];       /* "device voltage" (the unit is added) */
};

/* One legend entry. */
struct plot_legend {
	enum cell_role role;
	uint32_t text_mark;   /* the grid's mark (0: the role's own) */
	enum plot_shape shape;/* for a marker role */
	char words[48];
};

/* Most legend entries and caption lines. */
#define PLOT_MAX_LEGEND 16
#define PLOT_MAX_CAPTION 6

/* A whole plot. */
struct plot_desc {
	struct plot_axis x, y;
	char title[256];                      /* "" for none */
	char caption[PLOT_MAX_CAPTION][256];  /* file, source, point, ... */
	size_t ncaption;
	struct plot_legend legend[PLOT_MAX_LEGEND];
	size_t nlegend;
	int legend_rows;      /* grid: rows the legend may wrap onto (0: none) */
	const char *names;    /* grid: axis names in the corner ("I^ V>") */
	bool tags;            /* grid: write the markers' numbers */
	bool unicode;         /* grid: box-drawing and symbol characters */
	struct plot_item *items;
	size_t nitems, cap;
	bool no_memory;       /* an append failed: the description is partial */
};

/* An empty description (zero items, no axes). */
void plot_desc_init(struct plot_desc *d);

/* Free what D owns; D may be initialised again. */
void plot_desc_fini(struct plot_desc *d);

/*
 * Append an item of KIND with ROLE (its other fields zero, shape SHAPE_DOT)
 * and return it, or NULL when out of memory (D->no_memory is then set).
 * The pointer is valid until the next append.
 */
struct plot_item *plot_desc_add(struct plot_desc *d, enum plot_kind kind,
                                enum cell_role role);

/* Append a polyline of the N points (X[k], Y[k]), copied; NULL on no memory. */
struct plot_item *plot_desc_polyline(struct plot_desc *d, enum cell_role role,
                                     const double *x, const double *y,
                                     size_t n);

/* Append N histogram bars: EDGES[0..N] and heights H[0..N-1], copied. */
struct plot_item *plot_desc_bars(struct plot_desc *d, enum cell_role role,
                                 const double *edges, const double *h, size_t n);

/* Append a legend entry (ignored past PLOT_MAX_LEGEND). */
void plot_desc_legend(struct plot_desc *d, enum cell_role role,
                      uint32_t text_mark, enum plot_shape shape,
                      const char *words);

/* Append a caption line (printf format; ignored past PLOT_MAX_CAPTION). */
void plot_desc_caption(struct plot_desc *d, const char *fmt, ...)
	__attribute__((format(printf, 2, 3)));

/* Put TEXT (a file name) before D's caption lines. */
void plot_desc_caption_first(struct plot_desc *d, const char *text);

/* Give the first marker of D with ROLE the words WORDS. */
void plot_desc_words(struct plot_desc *d, enum cell_role role,
                     const char *words);

/* The shape of an operating point with verdict S. */
enum plot_shape plot_shape_of(enum stability s);

/* What a picture of the load line says beyond the grid (plot.h). */
struct render_notes {
	const char *name;                       /* the session's file (may be NULL) */
	const struct reactive_parts *reactive;  /* for the points' stability
	                                           verdicts (NULL: none given) */
};

/*
 * The description of the load-line plot of IN with VIEW into D
 * (initialised by the call; plot_desc_fini frees it): the window (frame,
 * zoom, pan), the legend, the load line and its intercepts, the device
 * curve, the path and its start, the "off the plot" arrow and every
 * operating point with its number and stability verdict (under
 * NOTES->reactive), and the caption (NOTES->name, the source, each
 * point).  NOTES may be NULL (no file name, no reactive parts given).
 * Returns RENDER_OK, RENDER_BAD_INPUT or RENDER_NO_MEMORY.
 */
enum render_status render_desc_line(const struct render_input *in,
                                    const struct render_view *view,
                                    const struct render_notes *notes,
                                    struct plot_desc *d);

/*
 * The description of the x-y plot IN into D (initialised by the call);
 * the caller may then give the axes their titles (D->x.title, D->y.title)
 * and the mark its words (plot_desc_words).
 * Returns RENDER_OK, RENDER_BAD_INPUT (no usable point) or
 * RENDER_NO_MEMORY.
 */
enum render_status render_desc_xy(const struct render_xy *in,
                                  struct plot_desc *d);

/* Points of the sweep view. */
#define SWEEP_VIEW_POINTS 61
/* Most other points (a folded curve's other branches) the view keeps. */
#define SWEEP_VIEW_EXTRA (3 * SWEEP_VIEW_POINTS)

/* What the sweep view sweeps: a parameter by its key (core/paramref.h:
 * vs, rs, is, rp, a device key, source.network.NAME), from, to, scale. */
struct sweep_view_spec {
	char key[PARAMREF_KEY_MAX];
	char label[PARAMREF_KEY_MAX];  /* as titled: "RS", a part's name, "T" */
	double from, to;
	bool log;
};

/* The sweep view's data: the device current against the parameter. */
struct sweep_view {
	bool ok;                /* X, Y hold the sweep (else MSG says why) */
	struct sweep_view_spec spec;
	enum qty_kind unit;     /* the parameter's unit */
	double now;             /* its present value (the mark) */
	size_t n;
	double x[SWEEP_VIEW_POINTS], y[SWEEP_VIEW_POINTS]; /* lowest-V points */
	size_t nextra;          /* the other points of a folded curve */
	double ex[SWEEP_VIEW_EXTRA], ey[SWEEP_VIEW_EXTRA];
	size_t multi;           /* steps with several operating points */
	size_t folds;
	double jump_up, jump_down; /* where the followed stable point jumps
	                              going up and going down (NaN: none) */
	char msg[400];
};

/*
 * The usual sweep of PB into SPEC: its source resistance (RP when NORTON;
 * a network source's first resistor) from a tenth to ten times its value
 * on a log scale.  Returns 0, or -1 when PB has no such resistance.
 */
int sweep_view_default(const struct problem *pb, bool norton,
                       struct sweep_view_spec *spec);

/*
 * Sweep SPEC's parameter of PB with the solver options O in
 * SWEEP_VIEW_POINTS steps, keeping the lowest-voltage point of each step
 * as the line and the others as points, and where the circuit (with the
 * reactive parts RP, may be NULL) jumps each way, into SV (SV->ok false
 * with SV->msg saying exactly why when it cannot run).
 */
void sweep_view_run_spec(const struct problem *pb,
                         const struct solve_options *o,
                         const struct reactive_parts *rp,
                         const struct sweep_view_spec *spec,
                         struct sweep_view *sv);

/* sweep_view_run_spec watched by PR (core/progress.h; may be NULL): a
 * stop leaves SV->ok false, SV->msg saying how far it got. */
void sweep_view_run_watched(const struct problem *pb,
                            const struct solve_options *o,
                            const struct reactive_parts *rp,
                            const struct sweep_view_spec *spec,
                            struct sweep_view *sv,
                            const struct progress *pr);

/* The usual sweep (sweep_view_default, then sweep_view_run_spec). */
void sweep_view_run(const struct problem *pb, const struct solve_options *o,
                    const struct reactive_parts *rp, bool norton,
                    struct sweep_view *sv);

/*
 * The description of the sweep view SV into D (initialised by the call):
 * titled "I vs RS (log) @ value", the present value marked, the other
 * points of a folded curve as dots and the jumps as dotted vertical lines.
 * Returns RENDER_OK, RENDER_BAD_INPUT (SV holds no sweep) or
 * RENDER_NO_MEMORY.
 */
enum render_status render_desc_sweep(const struct sweep_view *sv, bool unicode,
                                     struct plot_desc *d);

/* A histogram to describe: a Monte Carlo run's bins (core/tolerance.h). */
struct render_hist {
	const struct tol_hist *h;
	enum qty_kind kind;       /* the binned quantity's unit */
	const char *title;        /* may be NULL */
	const char *x_title;      /* "device current" */
	double nominal;           /* a line at the nominal value (NaN: none) */
	double lo_limit, hi_limit;/* spec window lines (NaN: open) */
	bool unicode;
};

/*
 * The description of the histogram IN into D (initialised by the call):
 * count up, the binned value across, the bars, the nominal value and the
 * spec limits as dotted lines.  Returns RENDER_OK, RENDER_BAD_INPUT (no
 * bins or no trials) or RENDER_NO_MEMORY.
 */
enum render_status render_desc_hist(const struct render_hist *in,
                                    struct plot_desc *d);

/*
 * The description of the thermal plane of IN into D (initialised by the
 * call), the heat made sampled NS times across (2 .. 1024; the grid
 * samples one per column edge): Tj across, heat up, the heat removed
 * (ROLE_LINE), the heat made (ROLE_DEVICE), Tjmax as a dotted line, the
 * thermal path, and each balance numbered with its verdict (stable, or
 * runs away) and in the caption with its loop gain.  Returns RENDER_OK,
 * RENDER_BAD_INPUT (the device does not heat itself) or RENDER_NO_MEMORY.
 */
enum render_status render_desc_thermal(const struct render_thermal *in,
                                       size_t ns, struct plot_desc *d);

/*
 * Draw D into G (its whole size) with the character back end; LAY (may be
 * NULL) gets the layout.  Returns RENDER_OK or RENDER_TOO_SMALL (with a
 * message in G).
 */
enum render_status render_desc_grid(const struct plot_desc *d, struct grid *g,
                                    struct render_layout *lay);

#endif
