/*
 * render_int.h - what the renderer's files share among themselves (not for
 * callers: render.h is the interface).
 */
#ifndef BIASLINE_RENDER_INT_H
#define BIASLINE_RENDER_INT_H

#include "render/render.h"

/* Most ticks on an axis. */
#define MAX_TICKS 32
/* Longest tick label in bytes. */
#define LABEL_MAX 48

/* Ticks of one axis: values and their labels. */
struct render_ticks {
	int n;
	double value[MAX_TICKS];
	char label[MAX_TICKS][LABEL_MAX];
	int width;   /* widest label in cells */
};

/* text.c: encode code point CP as UTF-8 into OUT (4 bytes room); length. */
size_t render_utf8_encode(uint32_t cp, char *out);

/* grid.c: put CH with ROLE at ROW, COL if inside and ROLE's priority allows. */
void render_put(struct grid *g, int row, int col, uint32_t ch,
                enum cell_role role);

/* grid.c: write UTF-8 TEXT at ROW from COL with ROLE, clipped to the grid. */
void render_text(struct grid *g, int row, int col, const char *text,
                 enum cell_role role);

/* grid.c: write a one-line message MSG into G after blanking it. */
void render_message(struct grid *g, const char *msg);

/*
 * draw.c: clip the segment (V0,I0)-(V1,I1) to the window (Liang-Barsky);
 * false when nothing of it is inside.
 */
bool render_clip(const struct render_window *w, double *v0, double *i0,
                 double *v1, double *i1);

/* draw.c: draw one path segment A-B with ROLE, its mark chosen by direction. */
void render_segment(struct grid *g, const struct render_layout *lay,
                    const struct trace_row *a, const struct trace_row *b,
                    enum cell_role role, bool unicode);

/* draw.c: put a one-point mark for (V, I) with ROLE when it is inside. */
void render_marker(struct grid *g, const struct render_layout *lay,
                   double v, double i, enum cell_role role, bool unicode);

/* axes.c: widen [*LO, *HI] to hold X when X is finite. */
void render_include(double *lo, double *hi, double x);

/* axes.c: give [*LO, *HI] a usable, finite, non-empty span. */
void render_fix_span(double *lo, double *hi);

/* axes.c: choose about N ticks over [LO, HI] labelled as KIND. */
void render_ticks_make(struct render_ticks *t, double lo, double hi, int n,
                       enum qty_kind kind, bool unicode);

/*
 * axes.c: ticks of a logarithmic axis over [LO, HI] (log10 units) on NC
 * columns: 1, 2 and 5 per decade where their labels have room.
 */
void render_ticks_log(struct render_ticks *t, double lo, double hi, int nc,
                      enum qty_kind kind, bool unicode);

/* axes.c: fractional column of V within the data area (0 = left edge). */
double render_fx(const struct render_layout *lay, double v);

/* axes.c: fractional row of I within the data area (0 = top edge). */
double render_fy(const struct render_layout *lay, double i);

/* axes.c: cell index of fractional coordinate X in [0, N), or -1 outside. */
int render_cell_index(double x, int n);

/* axes.c: draw both axes, their ticks and labels, and the axis NAMES. */
void render_axes(struct grid *g, const struct render_layout *lay,
                 const struct render_ticks *ty, const struct render_ticks *tx,
                 bool unicode, const char *names);

/* raster.c: the arrow pointing DIR (0 right, 1 left, 2 up, 3 down). */
uint32_t render_arrow(int dir, bool unicode);

struct plot_desc;

/* raster.c: the layout the description D takes on a ROWS x COLS grid. */
enum render_status render_desc_layout(const struct plot_desc *d, int rows,
                                      int cols, struct render_layout *lay);

#endif
