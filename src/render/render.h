/*
 * render.h - the load-line plot as a pure raster: a problem, its operating
 * points and an iteration trace go in, a rows x cols grid of cells comes
 * out.  Each cell holds one Unicode code point (always single-width) and a
 * role that a front end may map to a colour; the characters alone read
 * correctly without colour.  No curses, no I/O.
 *
 * Axes: V (device voltage) across, I (device current) up.  The data window
 * comes from a frame (the whole load line, or a box around the operating
 * point), then a zoom factor and a pan offset in the view.
 *
 * Ownership: a grid is embedded (grid_init / grid_fini) and owns its cells.
 */
#ifndef BIASLINE_RENDER_H
#define BIASLINE_RENDER_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#include "core/problem.h"
#include "core/solve.h"
#include "core/stepper.h"
#include "core/thermal.h"
#include "core/thermal_stepper.h"

/* What a cell shows (decides its colour in the TUI). */
enum cell_role {
	ROLE_NONE,    /* blank */
	ROLE_AXIS,    /* axis lines and ticks */
	ROLE_LABEL,   /* tick labels and axis names */
	ROLE_LINE,    /* the load line */
	ROLE_DEVICE,  /* the device curve */
	ROLE_PATH,    /* the iteration path, older segments */
	ROLE_NEWEST,  /* the newest path segment */
	ROLE_START,   /* the start point */
	ROLE_POINT,   /* an operating point */
	ROLE_LEGEND,  /* the legend line */
	ROLE_COUNT
};

/* One cell: a single-width code point and its role. */
struct cell {
	uint32_t ch;
	unsigned char role;
};

/* A rows x cols raster. */
struct grid {
	int rows, cols;
	struct cell *cells;   /* rows * cols, row-major */
};

/* Smallest grid render_plot draws into. */
#define RENDER_MIN_ROWS 8
#define RENDER_MIN_COLS 30

/* Status of the render calls. */
enum render_status {
	RENDER_OK = 0,
	RENDER_TOO_SMALL,     /* the grid is below the minimum size */
	RENDER_NO_MEMORY,
	RENDER_BAD_INPUT,     /* a non-finite source or no device curve */
};

/* Which automatic frame the view starts from. */
enum render_frame {
	FRAME_LINE,   /* both load-line intercepts and every operating point */
	FRAME_POINT,  /* a box around the focus point and the newest
	                 RENDER_PATH_ROWS rows of the path: it follows a
	                 diverging path and magnifies as a converging one
	                 shrinks */
	FRAME_FIXED,  /* the view's fixed window (a session's stored ranges) */
};

/* The data window actually drawn. */
struct render_window {
	double v_lo, v_hi;    /* volts, left and right edge */
	double i_lo, i_hi;    /* amperes, bottom and top edge */
};

/* How to look at the plot. */
struct render_view {
	enum render_frame frame;
	struct render_window fixed;  /* the window of FRAME_FIXED */
	double zoom;          /* 1 = the frame; 2 = twice as close */
	double pan_v, pan_i;  /* centre offset in spans of the frame (0 = none) */
	bool unicode;         /* box-drawing and symbol characters */
	bool legend;          /* draw the legend line at the top */
};

/* Where the data area lies in the grid (cells, inclusive bounds). */
struct render_layout {
	int top, bottom;      /* first and last data row */
	int left, right;      /* first and last data column */
	int axis_row;         /* row of the V axis (below the data) */
	int axis_col;         /* column of the I axis (left of the data) */
	struct render_window win;
};

/* What to draw. */
struct render_input {
	const struct problem *pb;
	const struct op_point *pts;    /* operating points (may be NULL) */
	size_t npts;
	const struct trace_row *rows;  /* the path; row 0 = start (may be NULL) */
	size_t nrows;
	size_t focus;                  /* the point the point frame centres on
	                                  and zoom keeps in place (an index
	                                  into PTS; 0 when unsure) */
	bool labels;                   /* number the points (1, 2, ...) */
};

/* Projections (trace rows) the point frame holds with the point. */
#define RENDER_PATH_ROWS 6

/* Allocate a ROWS x COLS grid of blanks; returns 0 or -1 (no memory). */
int grid_init(struct grid *g, int rows, int cols);

/* Free G's cells; G may be initialised again. */
void grid_fini(struct grid *g);

/* Resize G to ROWS x COLS (contents cleared); returns 0 or -1. */
int grid_resize(struct grid *g, int rows, int cols);

/* Blank every cell. */
void grid_clear(struct grid *g);

/* The cell at ROW, COL (NULL outside). */
const struct cell *grid_at(const struct grid *g, int row, int col);

/*
 * Write row ROW of G as UTF-8 into BUF (at most N bytes, terminated),
 * trailing blanks removed.  Returns the length written.
 */
size_t grid_row_text(const struct grid *g, int row, char *buf, size_t n);

/* Decode one UTF-8 code point at *S and advance *S ('?' for bad bytes). */
uint32_t render_utf8_next(const char **s);

/* Number of code points (cells) in the UTF-8 string S. */
int render_text_width(const char *s);

/* One line of wrapped text: a byte span of the text. */
struct render_span {
	size_t off, len;
};

/*
 * Break UTF-8 TEXT into lines of at most WIDTH cells (WIDTH >= 1), at
 * blanks where it can (the blank at a break is dropped; a word longer than
 * WIDTH is cut between code points; a newline always breaks).  Writes up to MAX spans to OUT (may
 * be NULL when MAX is 0) and returns how many lines the whole text needs,
 * which may exceed MAX.  Empty text needs 0 lines.
 */
size_t render_wrap(const char *text, int width, struct render_span *out,
                   size_t max);

/* An x-y line plot: N points (X[k], Y[k]) joined in order. */
struct render_xy {
	const double *x, *y;
	size_t n;
	bool log_x;             /* logarithmic x axis (points with x <= 0 skipped) */
	enum qty_kind x_kind, y_kind;   /* units of the tick labels */
	const char *title;      /* top line (may be NULL: no title line) */
	const char *names;      /* axis names under the y labels, "I^ RS>" (or NULL) */
	double x_mark;          /* mark the curve at this x with ROLE_POINT (NaN: none) */
	bool unicode;
};

/*
 * Draw IN into G: axes with labelled ticks (1, 2, 5 per decade on a log
 * axis), the y axis including zero, the points joined with ROLE_DEVICE
 * marks (non-finite points break the line), the mark at X_MARK.  The
 * layout (may be NULL) gets the data area; on a log axis its x window is
 * in log10 units.  Returns RENDER_OK, RENDER_TOO_SMALL or RENDER_BAD_INPUT
 * (no usable point), with a message in G for the last two.
 */
enum render_status render_xy_plot(const struct render_xy *in, struct grid *g,
                                  struct render_layout *lay_out);

/* The thermal plane of a part that heats itself (core/thermal.h). */
struct render_thermal {
	const struct problem *pb;          /* must heat itself */
	const struct solve_options *o;     /* tolerance of the electrical solves */
	const struct thermal_point *pts;   /* the balances (may be NULL) */
	size_t npts;
	const struct thermal_row *rows;    /* the thermal path (may be NULL) */
	size_t nrows;
	bool unicode;
	bool legend;                       /* the legend line at the top */
};

/*
 * Draw the thermal plane of IN into G: junction temperature across (in
 * layout terms the v axis), heat up (the i axis); the heat-removal line
 * from (Ta, 0) with slope 1/theta (ROLE_LINE), the heat made P(Tj), one
 * electrical solve per column (ROLE_DEVICE), the maximum junction
 * temperature as a dotted column, the path (ROLE_PATH, ROLE_NEWEST, its
 * start ROLE_START) and the balances (ROLE_POINT).  LAY (may be NULL)
 * gets the layout.  Returns RENDER_OK, RENDER_TOO_SMALL, RENDER_NO_MEMORY
 * or RENDER_BAD_INPUT (a device that does not heat itself), with a
 * message in G for the last three.
 */
enum render_status render_thermal_plot(const struct render_thermal *in,
                                       struct grid *g,
                                       struct render_layout *lay_out);

/* Fill V with the defaults: whole-line frame, zoom 1, ASCII, legend on. */
void render_view_init(struct render_view *v);

/* The mark drawn for ROLE in the chosen character set (0 for none). */
uint32_t render_mark(enum cell_role role, bool unicode);

/* Plain words for ROLE in the legend ("load line", "device", ...). */
const char *render_role_name(enum cell_role role);

/*
 * Work out the frame of IN and VIEW before zoom and pan into *F.  Returns
 * RENDER_OK or RENDER_BAD_INPUT.
 */
enum render_status render_frame_compute(const struct render_input *in,
                                        const struct render_view *view,
                                        struct render_window *f);

/*
 * Zoom VIEW by FACTOR (> 1 closer) keeping the data point (V, I) where it
 * is on the screen: the pan is adjusted.  Returns RENDER_OK or
 * RENDER_BAD_INPUT (VIEW unchanged).
 */
enum render_status render_zoom_about(const struct render_input *in,
                                     struct render_view *view, double factor,
                                     double v, double i);

/*
 * Work out the data window for IN and VIEW (the frame, then zoom and pan).
 * Returns RENDER_OK or RENDER_BAD_INPUT.
 */
enum render_status render_window_compute(const struct render_input *in,
                                         const struct render_view *view,
                                         struct render_window *win);

/*
 * Work out where the data area of a ROWS x COLS grid lies for IN and VIEW
 * (the left margin depends on the tick labels).
 */
enum render_status render_layout_compute(const struct render_input *in,
                                         const struct render_view *view,
                                         int rows, int cols,
                                         struct render_layout *lay);

/*
 * The cell of the data point (V, I) under LAY into *ROW, *COL.  Returns
 * true when it lies inside the data area.
 */
bool render_cell_of(const struct render_layout *lay, double v, double i,
                    int *row, int *col);

/*
 * Draw the plot of IN with VIEW into G (its whole size), and when LAY is
 * not NULL report the layout used.  Returns RENDER_OK, or a status with G
 * holding a one-line message.
 */
enum render_status render_plot(const struct render_input *in,
                               const struct render_view *view,
                               struct grid *g, struct render_layout *lay);

#endif
