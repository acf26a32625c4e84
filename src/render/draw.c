/*
 * draw.c - data marks: clipped path segments and single markers.
 */
#include <math.h>

#include "render/render_int.h"

/* Newest-segment marks by direction in Unicode: vertical, diagonal. */
static const uint32_t render_newest_v = 0x2503;               /* ┃ */
static const uint32_t render_newest_d = 0x2022;               /* • */

/*
 * Clip the segment (V0,I0)-(V1,I1) to the window (Liang-Barsky); returns
 * false when nothing of it is inside.
 */
bool render_clip(const struct render_window *w, double *v0, double *i0,
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
void render_segment(struct grid *g, const struct render_layout *lay,
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
	/* Two samples per cell along the longer axis: with one, a sample
	 * that lands a rounding below a cell edge skips that cell. */
	double len = fmax(fabs(x1 - x0), fabs(y1 - y0));
	int n = (int)ceil(2.0 * len);
	if (n > 8 * (nr + nc))
		n = 8 * (nr + nc);
	for (int k = 0; k <= n; k++) {
		double t = n > 0 ? (double)k / n : 0.0;
		int c = render_cell_index(x0 + t * (x1 - x0), nc);
		int r = render_cell_index(y0 + t * (y1 - y0), nr);
		if (c >= 0 && r >= 0)
			render_put(g, lay->top + r, lay->left + c, ch, role);
	}
}

/* Put a one-point mark for (V, I) with ROLE when it is inside. */
void render_marker(struct grid *g, const struct render_layout *lay,
                   double v, double i, enum cell_role role, bool unicode)
{
	int r, c;
	if (isfinite(v) && isfinite(i) && render_cell_of(lay, v, i, &r, &c))
		render_put(g, r, c, render_mark(role, unicode), role);
}
