/*
 * render.c - the load-line plot as a cell grid.
 *
 * Drawing order decides what shows where marks overlap: each role has a
 * priority and a cell only takes a mark of equal or higher priority, so the
 * operating point is never hidden by the path, nor the path by a curve.
 *
 * Curves are sampled twice: once per column (I from V) and once per row
 * (V from I, when the curve has an inverse).  Row sampling puts the steep
 * part of an exponential in the right column; the vertical gaps left
 * between two column samples are filled half in each column, so a curve
 * reads as one continuous stroke at any size.
 */
#include "render/render.h"

#include <float.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* Relative margin added beyond the frame's extreme values. */
#define FRAME_MARGIN 0.06
/* Half-width of the point frame, relative to the point's voltage. */
#define POINT_HALF_SPAN 0.25
/* Half-height of the point frame, relative to the point's current. */
#define POINT_HALF_CURRENT 0.75
/* Most ticks on an axis. */
#define MAX_TICKS 32
/* Longest tick label in bytes. */
#define LABEL_MAX 48

/* Draw priority of each role (higher wins). */
static const unsigned char render_priority[ROLE_COUNT] = {
	[ROLE_NONE] = 0,   [ROLE_AXIS] = 1,   [ROLE_LABEL] = 1,
	[ROLE_LINE] = 2,   [ROLE_DEVICE] = 3, [ROLE_PATH] = 4,
	[ROLE_NEWEST] = 5, [ROLE_START] = 6,  [ROLE_POINT] = 7,
	[ROLE_LEGEND] = 1,
};

/* Marks per role: ASCII, then Unicode. */
static const uint32_t render_marks[ROLE_COUNT][2] = {
	[ROLE_NONE] = { ' ', ' ' },
	[ROLE_AXIS] = { '|', 0x2502 },      /* │ */
	[ROLE_LABEL] = { 0, 0 },
	[ROLE_LINE] = { '#', 0x25AA },      /* ▪ */
	[ROLE_DEVICE] = { '*', 0x25CF },    /* ● */
	[ROLE_PATH] = { '.', 0x00B7 },      /* · */
	[ROLE_NEWEST] = { '=', 0x2501 },    /* ━ */
	[ROLE_START] = { 'o', 0x25CB },     /* ○ */
	[ROLE_POINT] = { '@', 0x25C9 },     /* ◉ */
	[ROLE_LEGEND] = { 0, 0 },
};

/* Words for each role in the legend. */
static const char *const render_role_names[ROLE_COUNT] = {
	[ROLE_NONE] = "",
	[ROLE_AXIS] = "axis",
	[ROLE_LABEL] = "label",
	[ROLE_LINE] = "load line",
	[ROLE_DEVICE] = "device",
	[ROLE_PATH] = "path",
	[ROLE_NEWEST] = "newest step",
	[ROLE_START] = "start",
	[ROLE_POINT] = "op. point",
	[ROLE_LEGEND] = "legend",
};

/* The order the legend lists the marks in. */
static const enum cell_role render_legend_order[] = {
	ROLE_POINT, ROLE_LINE, ROLE_DEVICE, ROLE_START, ROLE_PATH, ROLE_NEWEST,
};

/* Axis pieces: horizontal, y tick, x tick, corner (ASCII, Unicode). */
static const uint32_t render_axis_h[2] = { '-', 0x2500 };     /* ─ */
static const uint32_t render_tick_y[2] = { '+', 0x2524 };     /* ┤ */
static const uint32_t render_tick_x[2] = { '+', 0x252C };     /* ┬ */
static const uint32_t render_corner[2] = { '+', 0x2514 };     /* └ */
/* Newest-segment marks by direction in Unicode: vertical, diagonal. */
static const uint32_t render_newest_v = 0x2503;               /* ┃ */
static const uint32_t render_newest_d = 0x2022;               /* • */

/* Allocate a ROWS x COLS grid of blanks. */
int grid_init(struct grid *g, int rows, int cols)
{
	g->rows = 0;
	g->cols = 0;
	g->cells = NULL;
	return grid_resize(g, rows, cols);
}

/* Free G's cells. */
void grid_fini(struct grid *g)
{
	free(g->cells);
	g->cells = NULL;
	g->rows = 0;
	g->cols = 0;
}

/* Resize G to ROWS x COLS and blank it. */
int grid_resize(struct grid *g, int rows, int cols)
{
	if (rows < 0 || cols < 0)
		return -1;
	size_t n = (size_t)rows * (size_t)cols;
	if (n != (size_t)g->rows * (size_t)g->cols || g->cells == NULL) {
		struct cell *c = malloc(n > 0 ? n * sizeof *c : sizeof *c);
		if (c == NULL)
			return -1;
		free(g->cells);
		g->cells = c;
	}
	g->rows = rows;
	g->cols = cols;
	grid_clear(g);
	return 0;
}

/* Blank every cell. */
void grid_clear(struct grid *g)
{
	size_t n = (size_t)g->rows * (size_t)g->cols;
	for (size_t k = 0; k < n; k++) {
		g->cells[k].ch = ' ';
		g->cells[k].role = ROLE_NONE;
	}
}

/* The cell at ROW, COL, or NULL outside. */
const struct cell *grid_at(const struct grid *g, int row, int col)
{
	if (row < 0 || col < 0 || row >= g->rows || col >= g->cols)
		return NULL;
	return &g->cells[(size_t)row * (size_t)g->cols + (size_t)col];
}

/* Encode code point CP as UTF-8 into OUT (4 bytes room); returns length. */
static size_t render_utf8_encode(uint32_t cp, char *out)
{
	if (cp < 0x80) {
		out[0] = (char)cp;
		return 1;
	}
	if (cp < 0x800) {
		out[0] = (char)(0xC0 | (cp >> 6));
		out[1] = (char)(0x80 | (cp & 0x3F));
		return 2;
	}
	if (cp < 0x10000) {
		out[0] = (char)(0xE0 | (cp >> 12));
		out[1] = (char)(0x80 | ((cp >> 6) & 0x3F));
		out[2] = (char)(0x80 | (cp & 0x3F));
		return 3;
	}
	out[0] = (char)(0xF0 | (cp >> 18));
	out[1] = (char)(0x80 | ((cp >> 12) & 0x3F));
	out[2] = (char)(0x80 | ((cp >> 6) & 0x3F));
	out[3] = (char)(0x80 | (cp & 0x3F));
	return 4;
}

/* Decode one UTF-8 code point at *S, advancing *S ('?' for bad bytes). */
uint32_t render_utf8_next(const char **s)
{
	const unsigned char *p = (const unsigned char *)*s;
	uint32_t cp;
	size_t len;
	if (p[0] < 0x80) {
		cp = p[0];
		len = 1;
	} else if ((p[0] & 0xE0) == 0xC0) {
		cp = p[0] & 0x1F;
		len = 2;
	} else if ((p[0] & 0xF0) == 0xE0) {
		cp = p[0] & 0x0F;
		len = 3;
	} else if ((p[0] & 0xF8) == 0xF0) {
		cp = p[0] & 0x07;
		len = 4;
	} else {
		*s += 1;
		return '?';
	}
	for (size_t k = 1; k < len; k++) {
		if ((p[k] & 0xC0) != 0x80) {
			*s += k;
			return '?';
		}
		cp = (cp << 6) | (p[k] & 0x3F);
	}
	*s += len;
	return cp;
}

/* Number of code points in the UTF-8 string S. */
int render_text_width(const char *s)
{
	int n = 0;
	while (*s != '\0') {
		render_utf8_next(&s);
		n++;
	}
	return n;
}

/* Write row ROW of G as UTF-8, trailing blanks removed. */
size_t grid_row_text(const struct grid *g, int row, char *buf, size_t n)
{
	if (n == 0)
		return 0;
	buf[0] = '\0';
	if (row < 0 || row >= g->rows)
		return 0;
	int last = g->cols - 1;
	while (last >= 0 && grid_at(g, row, last)->ch == ' ')
		last--;
	size_t len = 0;
	for (int c = 0; c <= last; c++) {
		char enc[4];
		size_t k = render_utf8_encode(grid_at(g, row, c)->ch, enc);
		if (len + k + 1 > n)
			break;
		memcpy(buf + len, enc, k);
		len += k;
	}
	buf[len] = '\0';
	return len;
}

/* Break TEXT into lines of at most WIDTH cells at blanks. */
size_t render_wrap(const char *text, int width, struct render_span *out,
                   size_t max)
{
	if (text == NULL || width < 1)
		return 0;
	size_t n = 0;
	const char *s = text;
	for (;;) {
		while (*s == ' ' || *s == '\n')
			s++;
		if (*s == '\0')
			break;
		/* Walk up to WIDTH cells, remembering the last blank seen. */
		const char *p = s, *blank = NULL, *stop = NULL;
		int cells = 0;
		while (*p != '\0' && *p != '\n' && cells < width) {
			if (*p == ' ')
				blank = p;
			render_utf8_next(&p);
			cells++;
		}
		if (*p == '\0' || *p == ' ' || *p == '\n')
			stop = p;                 /* the rest fits, or ends at a blank */
		else if (blank != NULL)
			stop = blank;             /* break at the last blank */
		else
			stop = p;                 /* one long word: cut it */
		const char *end = stop;
		while (end > s && end[-1] == ' ')
			end--;
		if (n < max && out != NULL)
			out[n] = (struct render_span){ (size_t)(s - text),
			                               (size_t)(end - s) };
		n++;
		s = stop;
	}
	return n;
}

/* Fill V with the defaults. */
void render_view_init(struct render_view *v)
{
	v->frame = FRAME_LINE;
	v->fixed = (struct render_window){ 0.0, 0.0, 0.0, 0.0 };
	v->zoom = 1.0;
	v->pan_v = 0.0;
	v->pan_i = 0.0;
	v->unicode = false;
	v->legend = true;
}

/* The mark for ROLE. */
uint32_t render_mark(enum cell_role role, bool unicode)
{
	if ((int)role < 0 || role >= ROLE_COUNT)
		return 0;
	return render_marks[role][unicode ? 1 : 0];
}

/* Legend words for ROLE. */
const char *render_role_name(enum cell_role role)
{
	if ((int)role < 0 || role >= ROLE_COUNT)
		return "";
	return render_role_names[role];
}

/* Put CH with ROLE at ROW, COL if it is inside and ROLE's priority allows. */
static void render_put(struct grid *g, int row, int col, uint32_t ch,
                       enum cell_role role)
{
	if (row < 0 || col < 0 || row >= g->rows || col >= g->cols)
		return;
	struct cell *c = &g->cells[(size_t)row * (size_t)g->cols + (size_t)col];
	if (render_priority[role] < render_priority[c->role])
		return;
	c->ch = ch;
	c->role = (unsigned char)role;
}

/* Write UTF-8 TEXT at ROW from COL with ROLE, clipped to the grid. */
static void render_text(struct grid *g, int row, int col, const char *text,
                        enum cell_role role)
{
	const char *s = text;
	while (*s != '\0') {
		uint32_t cp = render_utf8_next(&s);
		render_put(g, row, col++, cp, role);
	}
}

/* Widen [*LO, *HI] to hold X when X is finite. */
static void render_include(double *lo, double *hi, double x)
{
	if (!isfinite(x))
		return;
	if (x < *lo)
		*lo = x;
	if (x > *hi)
		*hi = x;
}

/* Give [*LO, *HI] a usable, finite, non-empty span. */
static void render_fix_span(double *lo, double *hi)
{
	if (!isfinite(*lo) || !isfinite(*hi)) {
		*lo = 0.0;
		*hi = 1.0;
	}
	double span = *hi - *lo;
	double mag = fmax(fabs(*lo), fabs(*hi));
	if (!(span > 1e-9 * mag) || !(span > DBL_MIN * 1e6)) {
		double half = mag > 0.0 ? 0.5 * mag : 1.0;
		*lo -= half;
		*hi += half;
	}
}

/* The device's voltage at current I (NaN when it has none there). */
static double render_device_voltage(const struct device *dev, double i)
{
	double v;
	if (dev->type->voltage == NULL || device_voltage(dev, i, &v) != 0)
		return NAN;
	return v;
}

/* The device's current at V (NaN when it has none there). */
static double render_device_current(const struct device *dev, double v)
{
	if (dev->type->current == NULL)
		return NAN;
	return device_current(dev, v);
}

/* The frame holding both load-line intercepts and every operating point. */
static void render_frame_line(const struct render_input *in,
                              struct render_window *w)
{
	const struct source *s = &in->pb->src;
	double vlo = 0.0, vhi = 0.0, ilo = 0.0, ihi = 0.0;
	if (source_is_ideal_current(s)) {
		render_include(&ilo, &ihi, s->isc);
		render_include(&vlo, &vhi, render_device_voltage(&in->pb->dev, s->isc));
	} else if (source_is_ideal_voltage(s)) {
		render_include(&vlo, &vhi, s->voc);
		render_include(&ilo, &ihi, render_device_current(&in->pb->dev, s->voc));
	} else {
		render_include(&vlo, &vhi, s->voc);
		render_include(&ilo, &ihi, s->isc);
	}
	for (size_t k = 0; k < in->npts && in->pts != NULL; k++) {
		render_include(&vlo, &vhi, in->pts[k].v);
		render_include(&ilo, &ihi, in->pts[k].i);
	}
	render_fix_span(&vlo, &vhi);
	render_fix_span(&ilo, &ihi);
	/* Keep zero on the edge so the intercepts sit on the axes. */
	double dv = FRAME_MARGIN * (vhi - vlo), di = FRAME_MARGIN * (ihi - ilo);
	w->v_lo = vlo < 0.0 ? vlo - dv : vlo;
	w->v_hi = vhi > 0.0 ? vhi + dv : vhi;
	w->i_lo = ilo < 0.0 ? ilo - di : ilo;
	w->i_hi = ihi > 0.0 ? ihi + di : ihi;
}

/*
 * The frame around the first operating point.  The current window is the
 * point's current plus and minus three quarters of it; the voltage window
 * is as wide as the steeper of the two curves needs to cross that current
 * window, so a diode's knee fills the plot while a shallow load line runs
 * across it.  Without a usable current it falls back to slopes: a
 * current half-span that makes the two curves look alike.
 */
static void render_frame_point(const struct render_input *in,
                               struct render_window *w)
{
	const struct op_point *p = &in->pts[0];
	const struct source *s = &in->pb->src;
	const struct device *d = &in->pb->dev;
	double hi = POINT_HALF_CURRENT * fabs(p->i);
	double hv = NAN;
	if (hi > 0.0 && isfinite(hi)) {
		double dv = fmax(fabs(render_device_voltage(d, p->i - hi) - p->v),
		                 fabs(render_device_voltage(d, p->i + hi) - p->v));
		double lv = source_is_ideal_current(s) ? NAN : s->r * hi;
		if (isfinite(dv) && dv > 0.0)
			hv = dv;
		if (isfinite(lv) && lv > 0.0 && !(hv <= lv))
			hv = lv;
	}
	if (!(hv > 0.0) || !isfinite(hv)) {
		hv = POINT_HALF_SPAN * fabs(p->v);
		if (!(hv > 0.0) && isfinite(s->voc))
			hv = POINT_HALF_SPAN * fabs(s->voc);
		if (!(hv > 0.0) || !isfinite(hv))
			hv = 1.0;
		double line = source_is_ideal_current(s) ? 0.0
		              : (s->r > 0.0 ? 1.0 / s->r : INFINITY);
		double dev = d->type->conductance != NULL
		             ? fabs(device_conductance(d, p->v)) : NAN;
		bool lok = isfinite(line) && line > 0.0;
		bool dok = isfinite(dev) && dev > 0.0;
		double slope = lok && dok ? sqrt(line * dev)
		               : lok ? line : dok ? dev : 0.0;
		hi = slope * hv;
		if (!(hi > 0.0) || !isfinite(hi))
			hi = 1e-3;
	}
	w->v_lo = p->v - hv;
	w->v_hi = p->v + hv;
	w->i_lo = p->i - hi;
	w->i_hi = p->i + hi;
}

/* Work out the data window: the frame, then zoom and pan. */
enum render_status render_window_compute(const struct render_input *in,
                                         const struct render_view *view,
                                         struct render_window *win)
{
	if (in == NULL || in->pb == NULL || in->pb->dev.type == NULL ||
	    isnan(in->pb->src.r))
		return RENDER_BAD_INPUT;
	struct render_window f;
	bool have_point = in->pts != NULL && in->npts > 0 &&
	                  isfinite(in->pts[0].v) && isfinite(in->pts[0].i);
	const struct render_window *x = &view->fixed;
	bool fixed_ok = isfinite(x->v_lo) && isfinite(x->v_hi) && x->v_hi > x->v_lo &&
	                isfinite(x->i_lo) && isfinite(x->i_hi) && x->i_hi > x->i_lo;
	if (view->frame == FRAME_POINT && have_point)
		render_frame_point(in, &f);
	else if (view->frame == FRAME_FIXED && fixed_ok)
		f = *x;
	else
		render_frame_line(in, &f);
	double zoom = isfinite(view->zoom) && view->zoom > 0.0 ? view->zoom : 1.0;
	double pv = isfinite(view->pan_v) ? view->pan_v : 0.0;
	double pi = isfinite(view->pan_i) ? view->pan_i : 0.0;
	double sv = f.v_hi - f.v_lo, si = f.i_hi - f.i_lo;
	double cv = 0.5 * (f.v_lo + f.v_hi) + pv * sv;
	double ci = 0.5 * (f.i_lo + f.i_hi) + pi * si;
	win->v_lo = cv - 0.5 * sv / zoom;
	win->v_hi = cv + 0.5 * sv / zoom;
	win->i_lo = ci - 0.5 * si / zoom;
	win->i_hi = ci + 0.5 * si / zoom;
	if (!(win->v_hi > win->v_lo) || !(win->i_hi > win->i_lo) ||
	    !isfinite(win->v_hi - win->v_lo) || !isfinite(win->i_hi - win->i_lo))
		return RENDER_BAD_INPUT;
	return RENDER_OK;
}

/* Ticks of one axis: values and their labels. */
struct render_ticks {
	int n;
	double value[MAX_TICKS];
	char label[MAX_TICKS][LABEL_MAX];
	int width;   /* widest label in cells */
};

/* A round tick step (1, 2 or 5 times a power of ten) for about N ticks. */
static double render_tick_step(double span, int n)
{
	double raw = span / (n > 0 ? n : 1);
	double mag = pow(10.0, floor(log10(raw)));
	double f = raw / mag;
	double nice = f < 1.5 ? 1.0 : f < 3.5 ? 2.0 : f < 7.5 ? 5.0 : 10.0;
	return nice * mag;
}

/* Choose about N ticks over [LO, HI] labelled as KIND. */
static void render_ticks_make(struct render_ticks *t, double lo, double hi,
                              int n, enum qty_kind kind, bool unicode)
{
	t->n = 0;
	t->width = 0;
	double step = render_tick_step(hi - lo, n);
	if (!(step > 0.0) || !isfinite(step))
		return;
	double k0 = ceil(lo / step - 1e-9);
	int e = (int)floor(log10(step) + 1e-9);
	for (int k = 0; k < MAX_TICKS; k++) {
		double v = (k0 + k) * step;
		if (v > hi + 1e-9 * step)
			break;
		if (fabs(v) < 1e-9 * step)
			v = 0.0;
		int sig = 1;
		if (v != 0.0) {
			/* Enough digits for the step, and all of the mantissa's
			 * integer part in engineering notation. */
			int d = (int)floor(log10(fabs(v)) + 1e-9);
			int e3 = 3 * (int)floor(d / 3.0);
			sig = d - e + 1;
			if (d - e3 + 1 > sig)
				sig = d - e3 + 1;
			if (sig < 1)
				sig = 1;
			if (sig > 7)
				sig = 7;
		}
		t->value[t->n] = v;
		qty_format(t->label[t->n], LABEL_MAX, v, kind, sig, unicode ? 0 : 1);
		int w = render_text_width(t->label[t->n]);
		if (w > t->width)
			t->width = w;
		t->n++;
	}
}

/* Fractional column of V within the data area (0 = left edge). */
static double render_fx(const struct render_layout *lay, double v)
{
	const struct render_window *w = &lay->win;
	return (v - w->v_lo) / (w->v_hi - w->v_lo) * (lay->right - lay->left + 1);
}

/* Fractional row of I within the data area (0 = top edge). */
static double render_fy(const struct render_layout *lay, double i)
{
	const struct render_window *w = &lay->win;
	return (w->i_hi - i) / (w->i_hi - w->i_lo) * (lay->bottom - lay->top + 1);
}

/* Cell index of fractional coordinate X in [0, N), or -1 outside. */
static int render_cell_index(double x, int n)
{
	if (!(x >= 0.0)) {
		if (x > -1e-9 * n)
			return 0;
		return -1;
	}
	if (x >= n) {
		if (x <= n + 1e-9 * n)
			return n - 1;
		return -1;
	}
	return (int)x;
}

/* The cell of (V, I); true when inside the data area. */
bool render_cell_of(const struct render_layout *lay, double v, double i,
                    int *row, int *col)
{
	int nc = lay->right - lay->left + 1, nr = lay->bottom - lay->top + 1;
	int c = render_cell_index(render_fx(lay, v), nc);
	int r = render_cell_index(render_fy(lay, i), nr);
	if (c < 0 || r < 0)
		return false;
	*row = lay->top + r;
	*col = lay->left + c;
	return true;
}

/* Work out the layout and the ticks of both axes. */
static enum render_status render_layout_ticks(const struct render_input *in,
                                              const struct render_view *view,
                                              int rows, int cols,
                                              struct render_layout *lay,
                                              struct render_ticks *ty,
                                              struct render_ticks *tx)
{
	if (rows < RENDER_MIN_ROWS || cols < RENDER_MIN_COLS)
		return RENDER_TOO_SMALL;
	enum render_status st = render_window_compute(in, view, &lay->win);
	if (st != RENDER_OK)
		return st;
	lay->top = view->legend ? 1 : 0;
	lay->axis_row = rows - 2;
	lay->bottom = rows - 3;
	int nr = lay->bottom - lay->top + 1;
	render_ticks_make(ty, lay->win.i_lo, lay->win.i_hi, nr / 3 > 2 ? nr / 3 : 2,
	                  QTY_CURRENT, view->unicode);
	int margin = ty->width + 1;
	if (margin > cols / 3)
		margin = cols / 3;
	lay->axis_col = margin;
	lay->left = margin + 1;
	lay->right = cols - 1;
	int nc = lay->right - lay->left + 1;
	render_ticks_make(tx, lay->win.v_lo, lay->win.v_hi, nc / 12 > 2 ? nc / 12 : 2,
	                  QTY_VOLTAGE, view->unicode);
	return RENDER_OK;
}

/* Work out where the data area lies. */
enum render_status render_layout_compute(const struct render_input *in,
                                         const struct render_view *view,
                                         int rows, int cols,
                                         struct render_layout *lay)
{
	struct render_ticks ty, tx;
	return render_layout_ticks(in, view, rows, cols, lay, &ty, &tx);
}

/* Draw both axes, their ticks and labels. */
static void render_axes(struct grid *g, const struct render_layout *lay,
                        const struct render_ticks *ty,
                        const struct render_ticks *tx, bool unicode,
                        const char *names)
{
	int u = unicode ? 1 : 0;
	for (int r = lay->top; r <= lay->bottom; r++)
		render_put(g, r, lay->axis_col, render_marks[ROLE_AXIS][u], ROLE_AXIS);
	for (int c = lay->left; c <= lay->right; c++)
		render_put(g, lay->axis_row, c, render_axis_h[u], ROLE_AXIS);
	render_put(g, lay->axis_row, lay->axis_col, render_corner[u], ROLE_AXIS);

	int nr = lay->bottom - lay->top + 1, nc = lay->right - lay->left + 1;
	for (int k = 0; k < ty->n; k++) {
		int r = render_cell_index(render_fy(lay, ty->value[k]), nr);
		if (r < 0)
			continue;
		r += lay->top;
		render_put(g, r, lay->axis_col, render_tick_y[u], ROLE_AXIS);
		int w = render_text_width(ty->label[k]);
		int c0 = lay->axis_col - w;
		render_text(g, r, c0 < 0 ? 0 : c0, ty->label[k], ROLE_LABEL);
	}
	int next_free = 0;
	int label_row = lay->axis_row + 1;
	for (int k = 0; k < tx->n; k++) {
		int c = render_cell_index(render_fx(lay, tx->value[k]), nc);
		if (c < 0)
			continue;
		c += lay->left;
		render_put(g, lay->axis_row, c, render_tick_x[u], ROLE_AXIS);
		int w = render_text_width(tx->label[k]);
		int c0 = c - w / 2;
		if (c0 + w > g->cols)
			c0 = g->cols - w;
		if (c0 < next_free || c0 < 0)
			continue;
		render_text(g, label_row, c0, tx->label[k], ROLE_LABEL);
		next_free = c0 + w + 1;
	}
	/* Axis names in the corner below the current labels, when free. */
	if (names == NULL)
		return;
	int nw = render_text_width(names);
	if (nw < next_free || next_free == 0) {
		bool free_cells = true;
		for (int c = 0; c < nw; c++)
			if (grid_at(g, label_row, c)->role != ROLE_NONE)
				free_cells = false;
		if (free_cells && nw <= lay->axis_col)
			render_text(g, label_row, 0, names, ROLE_LABEL);
	}
}

/* The legend line: each mark and what it stands for, as many as fit. */
static void render_legend(struct grid *g, bool unicode)
{
	int col = 0;
	for (size_t k = 0; k < sizeof render_legend_order / sizeof render_legend_order[0]; k++) {
		enum cell_role role = render_legend_order[k];
		const char *name = render_role_names[role];
		int w = 2 + render_text_width(name);
		if (col + w > g->cols)
			break;
		render_put(g, 0, col, render_mark(role, unicode), ROLE_LEGEND);
		render_text(g, 0, col + 2, name, ROLE_LEGEND);
		col += w + 2;
	}
}

/* A curve as two optional functions: I of V, and V of I. */
struct render_curve {
	double (*i_of_v)(const void *ctx, double v);
	double (*v_of_i)(const void *ctx, double i);
	const void *ctx;
};

/* Load-line current at V. */
static double render_line_i(const void *ctx, double v)
{
	return source_line_current(ctx, v);
}

/* Load-line voltage at I. */
static double render_line_v(const void *ctx, double i)
{
	return source_line_voltage(ctx, i);
}

/* Device current at V. */
static double render_dev_i(const void *ctx, double v)
{
	return render_device_current(ctx, v);
}

/* Device voltage at I. */
static double render_dev_v(const void *ctx, double i)
{
	return render_device_voltage(ctx, i);
}

/* Fractional row of CV at V, clamped to [-1, NR]; NaN where undefined. */
static double render_curve_row(const struct render_layout *lay,
                               const struct render_curve *cv, double v, int nr)
{
	double i = cv->i_of_v(cv->ctx, v);
	if (isnan(i))
		return NAN;
	return fmin(fmax(render_fy(lay, i), -1.0), (double)nr);
}

/*
 * Draw curve CV with mark CH and ROLE.  Per column, every row the curve
 * passes through between the column's two edges is marked (exact for a
 * curve monotone within a column); per row, the cell at the curve's
 * voltage for the row's centre current is marked too, which draws
 * vertical lines and curves known only as V(I).
 */
static void render_curve_draw(struct grid *g, const struct render_layout *lay,
                              const struct render_curve *cv, uint32_t ch,
                              enum cell_role role)
{
	int nr = lay->bottom - lay->top + 1, nc = lay->right - lay->left + 1;
	const struct render_window *w = &lay->win;
	double dv = (w->v_hi - w->v_lo) / nc, di = (w->i_hi - w->i_lo) / nr;
	if (cv->i_of_v != NULL) {
		double yl = render_curve_row(lay, cv, w->v_lo, nr);
		for (int c = 0; c < nc; c++) {
			double yr = render_curve_row(lay, cv, w->v_lo + (c + 1) * dv, nr);
			double a = yl, b = yr;
			if (isnan(a))
				a = b;
			if (isnan(b))
				b = a;
			yl = yr;
			if (isnan(a))
				continue;
			/* Stay off rows the curve only touches at a corner. */
			double lo = fmin(a, b) + 1e-9, hi = fmax(a, b) - 1e-9;
			if (hi < lo)
				hi = lo;
			for (int r = (int)floor(lo); r <= (int)floor(hi); r++)
				if (r >= 0 && r < nr)
					render_put(g, lay->top + r, lay->left + c, ch, role);
		}
	}
	if (cv->v_of_i == NULL)
		return;
	for (int r = 0; r < nr; r++) {
		double v = cv->v_of_i(cv->ctx, w->i_hi - (r + 0.5) * di);
		if (isnan(v))
			continue;
		int c = render_cell_index(render_fx(lay, v), nc);
		if (c >= 0)
			render_put(g, lay->top + r, lay->left + c, ch, role);
	}
}

/*
 * Clip the segment (V0,I0)-(V1,I1) to the window (Liang-Barsky); returns
 * false when nothing of it is inside.
 */
static bool render_clip(const struct render_window *w, double *v0, double *i0,
                        double *v1, double *i1)
{
	double dv = *v1 - *v0, di = *i1 - *i0;
	if (!isfinite(*v0) || !isfinite(*i0) || !isfinite(dv) || !isfinite(di))
		return false;
	double p[4] = { -dv, dv, -di, di };
	double q[4] = { *v0 - w->v_lo, w->v_hi - *v0, *i0 - w->i_lo, w->i_hi - *i0 };
	double t0 = 0.0, t1 = 1.0;
	for (int k = 0; k < 4; k++) {
		if (p[k] == 0.0) {
			if (q[k] < 0.0)
				return false;
			continue;
		}
		double t = q[k] / p[k];
		if (p[k] < 0.0) {
			if (t > t1)
				return false;
			if (t > t0)
				t0 = t;
		} else {
			if (t < t0)
				return false;
			if (t < t1)
				t1 = t;
		}
	}
	double a = *v0, b = *i0;
	*v0 = a + t0 * dv;
	*i0 = b + t0 * di;
	*v1 = a + t1 * dv;
	*i1 = b + t1 * di;
	return true;
}

/* Draw one path segment with ROLE, its mark chosen by direction. */
static void render_segment(struct grid *g, const struct render_layout *lay,
                           const struct trace_row *a, const struct trace_row *b,
                           enum cell_role role, bool unicode)
{
	double v0 = a->v, i0 = a->i, v1 = b->v, i1 = b->i;
	if (!render_clip(&lay->win, &v0, &i0, &v1, &i1))
		return;
	uint32_t ch = render_mark(role, unicode);
	if (unicode && role == ROLE_NEWEST) {
		if (a->v == b->v && a->i != b->i)
			ch = render_newest_v;
		else if (a->v != b->v && a->i != b->i)
			ch = render_newest_d;
	}
	int nr = lay->bottom - lay->top + 1, nc = lay->right - lay->left + 1;
	double x0 = render_fx(lay, v0), y0 = render_fy(lay, i0);
	double x1 = render_fx(lay, v1), y1 = render_fy(lay, i1);
	double len = fmax(fabs(x1 - x0), fabs(y1 - y0));
	int n = (int)ceil(len);
	if (n > 4 * (nr + nc))
		n = 4 * (nr + nc);
	for (int k = 0; k <= n; k++) {
		double t = n > 0 ? (double)k / n : 0.0;
		int c = render_cell_index(x0 + t * (x1 - x0), nc);
		int r = render_cell_index(y0 + t * (y1 - y0), nr);
		if (c >= 0 && r >= 0)
			render_put(g, lay->top + r, lay->left + c, ch, role);
	}
}

/* Put a one-point mark for (V, I) with ROLE when it is inside. */
static void render_marker(struct grid *g, const struct render_layout *lay,
                          double v, double i, enum cell_role role, bool unicode)
{
	int r, c;
	if (isfinite(v) && isfinite(i) && render_cell_of(lay, v, i, &r, &c))
		render_put(g, r, c, render_mark(role, unicode), role);
}

/* Write a one-line message MSG into G after blanking it. */
static void render_message(struct grid *g, const char *msg)
{
	grid_clear(g);
	if (g->rows > 0)
		render_text(g, 0, 0, msg, ROLE_LABEL);
}

/* Draw the plot of IN with VIEW into G. */
enum render_status render_plot(const struct render_input *in,
                               const struct render_view *view,
                               struct grid *g, struct render_layout *lay_out)
{
	struct render_layout lay;
	struct render_ticks ty, tx;
	enum render_status st =
		render_layout_ticks(in, view, g->rows, g->cols, &lay, &ty, &tx);
	if (st == RENDER_TOO_SMALL) {
		char msg[64];
		snprintf(msg, sizeof msg, "plot needs %dx%d", RENDER_MIN_COLS,
		         RENDER_MIN_ROWS);
		render_message(g, msg);
		return st;
	}
	if (st != RENDER_OK) {
		render_message(g, "nothing to plot: the source or device is not valid");
		return st;
	}
	grid_clear(g);
	bool u = view->unicode;
	if (view->legend)
		render_legend(g, u);
	render_axes(g, &lay, &ty, &tx, u,
	            u ? "I\xE2\x86\x91 V\xE2\x86\x92" : "I^ V>");

	struct render_curve line = { render_line_i, render_line_v, &in->pb->src };
	render_curve_draw(g, &lay, &line, render_mark(ROLE_LINE, u), ROLE_LINE);
	/* The intercepts may sit on a cell corner: mark their cells too. */
	const struct source *src = &in->pb->src;
	if (!source_is_ideal_current(src))
		render_marker(g, &lay, src->voc, 0.0, ROLE_LINE, u);
	if (!source_is_ideal_voltage(src))
		render_marker(g, &lay, 0.0, src->isc, ROLE_LINE, u);
	struct render_curve dev = {
		in->pb->dev.type->current != NULL ? render_dev_i : NULL,
		in->pb->dev.type->voltage != NULL ? render_dev_v : NULL,
		&in->pb->dev,
	};
	render_curve_draw(g, &lay, &dev, render_mark(ROLE_DEVICE, u), ROLE_DEVICE);

	if (in->rows != NULL && in->nrows > 0) {
		for (size_t k = 1; k < in->nrows; k++)
			render_segment(g, &lay, &in->rows[k - 1], &in->rows[k],
			               k + 1 == in->nrows ? ROLE_NEWEST : ROLE_PATH, u);
		render_marker(g, &lay, in->rows[0].v, in->rows[0].i, ROLE_START, u);
	}
	for (size_t k = 0; k < in->npts && in->pts != NULL; k++)
		render_marker(g, &lay, in->pts[k].v, in->pts[k].i, ROLE_POINT, u);
	if (lay_out != NULL)
		*lay_out = lay;
	return RENDER_OK;
}

/*
 * Ticks of a logarithmic axis over [LO, HI] (log10 units) on NC columns:
 * 1, 2 and 5 per decade where their labels have room, else decades only.
 */
static void render_ticks_log(struct render_ticks *t, double lo, double hi,
                             int nc, enum qty_kind kind, bool unicode)
{
	static const double mant[] = { 1.0, 2.0, 5.0 };
	/* Labels are up to about 9 cells ("500 kohm") and need a blank. */
	size_t nm = hi > lo && nc / (hi - lo) >= 3 * 10 ? 3 : 1;
	t->n = 0;
	t->width = 0;
	for (int e = (int)floor(lo); e <= (int)ceil(hi) && t->n < MAX_TICKS; e++) {
		for (size_t m = 0; m < nm && t->n < MAX_TICKS; m++) {
			double x = mant[m] * pow(10.0, e);
			double lx = log10(x);
			if (lx < lo - 1e-9 || lx > hi + 1e-9)
				continue;
			t->value[t->n] = lx;
			qty_format_short(t->label[t->n], LABEL_MAX, x, kind, 3,
			                 unicode ? 0 : 1);
			int w = render_text_width(t->label[t->n]);
			if (w > t->width)
				t->width = w;
			t->n++;
		}
	}
}

/* Draw the x-y line plot IN into G. */
enum render_status render_xy_plot(const struct render_xy *in, struct grid *g,
                                  struct render_layout *lay_out)
{
	if (g->rows < RENDER_MIN_ROWS || g->cols < RENDER_MIN_COLS) {
		char msg[64];
		snprintf(msg, sizeof msg, "plot needs %dx%d", RENDER_MIN_COLS,
		         RENDER_MIN_ROWS);
		render_message(g, msg);
		return RENDER_TOO_SMALL;
	}
	/* The window: every usable point, x in log10 units on a log axis. */
	double xlo = INFINITY, xhi = -INFINITY, ylo = INFINITY, yhi = -INFINITY;
	size_t used = 0;
	for (size_t k = 0; in != NULL && in->x != NULL && in->y != NULL && k < in->n;
	     k++) {
		double x = in->x[k], y = in->y[k];
		if (!isfinite(x) || !isfinite(y) || (in->log_x && !(x > 0.0)))
			continue;
		double px = in->log_x ? log10(x) : x;
		xlo = fmin(xlo, px);
		xhi = fmax(xhi, px);
		ylo = fmin(ylo, y);
		yhi = fmax(yhi, y);
		used++;
	}
	if (used == 0) {
		render_message(g, "nothing to plot: no points");
		return RENDER_BAD_INPUT;
	}
	render_fix_span(&xlo, &xhi);
	/* Zero on the y axis when the values are all of one sign. */
	if (ylo > 0.0)
		ylo = 0.0;
	if (yhi < 0.0)
		yhi = 0.0;
	render_fix_span(&ylo, &yhi);
	double pad = 0.05 * (yhi - ylo);
	if (yhi > 0.0)
		yhi += pad;
	if (ylo < 0.0)
		ylo -= pad;

	struct render_layout lay;
	struct render_ticks ty, tx;
	lay.win = (struct render_window){ xlo, xhi, ylo, yhi };
	bool titled = in->title != NULL && in->title[0] != '\0';
	lay.top = titled ? 1 : 0;
	lay.axis_row = g->rows - 2;
	lay.bottom = g->rows - 3;
	int nr = lay.bottom - lay.top + 1;
	render_ticks_make(&ty, ylo, yhi, nr / 3 > 2 ? nr / 3 : 2, in->y_kind,
	                  in->unicode);
	int margin = ty.width + 1;
	if (margin > g->cols / 3)
		margin = g->cols / 3;
	lay.axis_col = margin;
	lay.left = margin + 1;
	lay.right = g->cols - 1;
	int nc = lay.right - lay.left + 1;
	if (in->log_x)
		render_ticks_log(&tx, xlo, xhi, nc, in->x_kind, in->unicode);
	else
		render_ticks_make(&tx, xlo, xhi, nc / 12 > 2 ? nc / 12 : 2, in->x_kind,
		                  in->unicode);

	grid_clear(g);
	bool u = in->unicode;
	if (titled)
		render_text(g, 0, 0, in->title, ROLE_LEGEND);
	render_axes(g, &lay, &ty, &tx, u, in->names);
	/* The curve: consecutive usable points joined. */
	struct trace_row a = { 0 }, b = { 0 };
	bool have_a = false;
	for (size_t k = 0; k < in->n; k++) {
		double x = in->x[k], y = in->y[k];
		if (!isfinite(x) || !isfinite(y) || (in->log_x && !(x > 0.0))) {
			have_a = false;
			continue;
		}
		b.v = in->log_x ? log10(x) : x;
		b.i = y;
		if (have_a)
			render_segment(g, &lay, &a, &b, ROLE_DEVICE, u);
		else
			render_marker(g, &lay, b.v, b.i, ROLE_DEVICE, u);
		a = b;
		have_a = true;
	}
	/* The mark: the curve's value at X_MARK, read between its points. */
	double xm = in->x_mark;
	if (isfinite(xm) && (!in->log_x || xm > 0.0)) {
		double pm = in->log_x ? log10(xm) : xm;
		for (size_t k = 0; k + 1 < in->n; k++) {
			double x0 = in->x[k], x1 = in->x[k + 1];
			double y0 = in->y[k], y1 = in->y[k + 1];
			if (!isfinite(x0) || !isfinite(x1) || !isfinite(y0) || !isfinite(y1) ||
			    (in->log_x && !(x0 > 0.0 && x1 > 0.0)))
				continue;
			double p0 = in->log_x ? log10(x0) : x0;
			double p1 = in->log_x ? log10(x1) : x1;
			if (!(pm >= fmin(p0, p1) && pm <= fmax(p0, p1)))
				continue;
			double t = p1 != p0 ? (pm - p0) / (p1 - p0) : 0.0;
			render_marker(g, &lay, pm, y0 + t * (y1 - y0), ROLE_POINT, u);
			break;
		}
	}
	if (lay_out != NULL)
		*lay_out = lay;
	return RENDER_OK;
}
