/*
 * test_render.c - raster tests of the load-line plot: the grid is checked
 * cell by cell against operating points computed independently of the
 * renderer (Ohm's law for a linear device; the Lambert W closed form for
 * a diode, evaluated with GSL), at several grid sizes.
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cmocka.h>
#include <gsl/gsl_sf_lambert.h>

#include "core/models/models.h"
#include "core/solve.h"
#include "render/render.h"

/* Grid sizes every case runs at (rows, cols). */
static const int sizes[][2] = { { 20, 60 }, { 30, 100 }, { 60, 200 }, { 24, 47 } };
#define NSIZES (sizeof sizes / sizeof sizes[0])

/* Print G to stderr when RENDER_TEST_SHOW is set (for eyeballing). */
static void show(const struct grid *g)
{
	if (getenv("RENDER_TEST_SHOW") == NULL)
		return;
	char buf[2048];
	for (int r = 0; r < g->rows; r++) {
		grid_row_text(g, r, buf, sizeof buf);
		fprintf(stderr, "%s\n", buf);
	}
}

/* A linear device of resistance RD as a power law with exponent 1. */
static void make_resistor(struct problem *pb, double vs, double rs, double rd)
{
	struct source_spec sp;
	source_spec_thevenin(&sp, vs, rs);
	char err[128];
	assert_int_equal(source_from_spec(&sp, &pb->src, err, sizeof err), 0);
	device_init(&pb->dev, &model_power_law);
	pb->dev.p[POWER_LAW_VREF] = 1.0;
	pb->dev.p[POWER_LAW_IREF] = 1.0 / rd;
	pb->dev.p[POWER_LAW_ALPHA] = 1.0;
}

/*
 * The operating point of a resistor RD behind VS, RS: the voltage divider
 * V = VS RD / (RS + RD), I = VS / (RS + RD) (Ohm's law, common practice).
 */
static struct op_point resistor_point(double vs, double rs, double rd)
{
	struct op_point p = { 0 };
	p.v = vs * rd / (rs + rd);
	p.i = vs / (rs + rd);
	return p;
}

/* A diode (no series resistance) behind VS, RS. */
static void make_diode(struct problem *pb, double vs, double rs, double is,
                       double n, double temp)
{
	struct source_spec sp;
	source_spec_thevenin(&sp, vs, rs);
	char err[128];
	assert_int_equal(source_from_spec(&sp, &pb->src, err, sizeof err), 0);
	device_init(&pb->dev, &model_diode);
	pb->dev.p[DIODE_IS] = is;
	pb->dev.p[DIODE_N] = n;
	pb->dev.p[DIODE_RS] = 0.0;
	pb->dev.p[DIODE_TEMP] = temp;
}

/*
 * The diode's operating point in closed form: I = (nVt/R) W0(Is R/(nVt)
 * exp((VS + Is R)/(nVt))) - Is (Banwell & Jayakumar, Electronics Letters
 * 36(4), 2000), W0 from GSL.
 */
static struct op_point diode_point(const struct problem *pb)
{
	double nvt = pb->dev.p[DIODE_N] * diode_thermal_voltage(pb->dev.p[DIODE_TEMP]);
	double is = pb->dev.p[DIODE_IS], r = pb->src.r, vs = pb->src.voc;
	/* ln of the argument; the argument itself may overflow. */
	double lx = log(is * r / nvt) + (vs + is * r) / nvt;
	double w;
	if (lx < 700.0) {
		w = gsl_sf_lambert_W0(exp(lx));
	} else {
		/* W solves w + ln w = ln x (Corless et al., Adv. Comput. Math.
		 * 5, 1996): Newton from w = ln x. */
		w = lx;
		for (int k = 0; k < 60; k++)
			w -= (w + log(w) - lx) / (1.0 + 1.0 / w);
	}
	struct op_point p = { 0 };
	p.i = nvt / r * w - is;
	p.v = vs - r * p.i;
	return p;
}

/* Render IN with VIEW into a fresh ROWS x COLS grid G; checks success. */
static void draw(struct grid *g, int rows, int cols,
                 const struct render_input *in, const struct render_view *view,
                 struct render_layout *lay)
{
	assert_int_equal(grid_init(g, rows, cols), 0);
	assert_int_equal(render_plot(in, view, g, lay), RENDER_OK);
	show(g);
}

/* The character at ROW, COL. */
static uint32_t ch_at(const struct grid *g, int row, int col)
{
	const struct cell *c = grid_at(g, row, col);
	assert_non_null(c);
	return c->ch;
}

/* Count cells with ROLE. */
static int count_role(const struct grid *g, enum cell_role role)
{
	int n = 0;
	for (int r = 0; r < g->rows; r++)
		for (int c = 0; c < g->cols; c++)
			if (grid_at(g, r, c)->role == role)
				n++;
	return n;
}

/* The load line's intercepts fall on the axes' end cells at every size. */
static void test_load_line_ends(void **state)
{
	(void)state;
	static const double cases[][3] = {
		{ 7.385, 1237.0, 3317.0 }, { 23.61, 48.7, 91.3 }, { 0.4381, 2.713e5, 9.12e4 },
	};
	for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
		for (size_t s = 0; s < NSIZES; s++) {
			struct problem pb;
			make_resistor(&pb, cases[k][0], cases[k][1], cases[k][2]);
			struct op_point pt = resistor_point(cases[k][0], cases[k][1], cases[k][2]);
			struct render_input in = { &pb, &pt, 1, NULL, 0, 0, false };
			struct render_view view;
			render_view_init(&view);
			struct grid g;
			struct render_layout lay;
			draw(&g, sizes[s][0], sizes[s][1], &in, &view, &lay);
			int r, c;
			/* (VS, 0): on the bottom data row. */
			assert_true(render_cell_of(&lay, cases[k][0], 0.0, &r, &c));
			assert_int_equal(r, lay.bottom);
			assert_int_equal(ch_at(&g, r, c), '#');
			/* (0, VS/RS): in the first data column. */
			assert_true(render_cell_of(&lay, 0.0, cases[k][0] / cases[k][1], &r, &c));
			assert_int_equal(c, lay.left);
			assert_int_equal(ch_at(&g, r, c), '#');
			/* Nothing of the line beyond VS on the bottom row. */
			assert_true(render_cell_of(&lay, cases[k][0], 0.0, &r, &c));
			for (int cc = c + 2; cc <= lay.right; cc++)
				assert_int_not_equal(ch_at(&g, lay.bottom, cc), '#');
			grid_fini(&g);
		}
	}
}

/* Exactly one operating-point mark, at the independently solved point. */
static void test_point_marker(void **state)
{
	(void)state;
	for (size_t s = 0; s < NSIZES; s++) {
		struct problem pb;
		make_resistor(&pb, 9.173, 2.207e3, 1.459e3);
		struct op_point pt = resistor_point(9.173, 2.207e3, 1.459e3);
		struct render_input in = { &pb, &pt, 1, NULL, 0, 0, false };
		struct render_view view;
		render_view_init(&view);
		struct grid g;
		struct render_layout lay;
		draw(&g, sizes[s][0], sizes[s][1], &in, &view, &lay);
		int r, c;
		assert_true(render_cell_of(&lay, pt.v, pt.i, &r, &c));
		assert_int_equal(ch_at(&g, r, c), '@');
		assert_int_equal(count_role(&g, ROLE_POINT), 1);
		grid_fini(&g);

		/* The diode, solved by Lambert W, framed on the point. */
		make_diode(&pb, 4.837, 1.183e3, 3.91e-14, 1.37, 31.6);
		pt = diode_point(&pb);
		view.frame = FRAME_POINT;
		draw(&g, sizes[s][0], sizes[s][1], &in, &view, &lay);
		assert_true(render_cell_of(&lay, pt.v, pt.i, &r, &c));
		assert_int_equal(ch_at(&g, r, c), '@');
		assert_int_equal(count_role(&g, ROLE_POINT), 1);
		/* The point frame centres the point. */
		assert_true(abs(2 * c - (lay.left + lay.right)) <= 2);
		assert_true(abs(2 * r - (lay.top + lay.bottom)) <= 2);
		grid_fini(&g);
	}
}

/* Parse "NUMBER [PREFIX]UNIT" at *S (ASCII labels); returns 0 or -1. */
static int parse_label(const char **s, char unit, double *out)
{
	char *end;
	double x = strtod(*s, &end);
	if (end == *s)
		return -1;
	while (*end == ' ')
		end++;
	static const char prefixes[] = "fpnumkMGT";
	static const double scale[] = { 1e-15, 1e-12, 1e-9, 1e-6, 1e-3,
	                                1e3, 1e6, 1e9, 1e12 };
	const char *p = strchr(prefixes, *end);
	if (*end != '\0' && p != NULL && end[1] == unit) {
		x *= scale[p - prefixes];
		end++;
	}
	if (*end != unit)
		return -1;
	*s = end + 1;
	*out = x;
	return 0;
}

/* Every tick label reads back as the value at its tick's cell. */
static void test_axis_labels(void **state)
{
	(void)state;
	for (size_t s = 0; s < NSIZES; s++) {
		struct problem pb;
		make_resistor(&pb, 14.93, 6.81e2, 2.279e3);
		struct op_point pt = resistor_point(14.93, 6.81e2, 2.279e3);
		struct render_input in = { &pb, &pt, 1, NULL, 0, 0, false };
		struct render_view view;
		render_view_init(&view);
		struct grid g;
		struct render_layout lay;
		draw(&g, sizes[s][0], sizes[s][1], &in, &view, &lay);
		char buf[2048];
		/* Current labels, left of the I axis at '+' ticks. */
		int ny = 0;
		double prev = INFINITY;
		for (int r = lay.top; r <= lay.bottom; r++) {
			if (ch_at(&g, r, lay.axis_col) != '+')
				continue;
			grid_row_text(&g, r, buf, sizeof buf);
			buf[lay.axis_col] = '\0';
			const char *p = buf;
			while (*p == ' ')
				p++;
			double val;
			assert_int_equal(parse_label(&p, 'A', &val), 0);
			assert_true(*p == '\0');
			int rr, cc;
			assert_true(render_cell_of(&lay, 0.5 * (lay.win.v_lo + lay.win.v_hi),
			                           val, &rr, &cc));
			assert_int_equal(rr, r);
			assert_true(val < prev);
			prev = val;
			ny++;
		}
		assert_true(ny >= 2);
		/* Voltage labels on the bottom row, over '+' ticks. */
		int row = lay.axis_row + 1, nx = 0;
		grid_row_text(&g, row, buf, sizeof buf);
		prev = -INFINITY;
		for (const char *p = buf; *p != '\0';) {
			if (*p == ' ' || p - buf < lay.axis_col) {
				p++;
				continue;
			}
			int c0 = (int)(p - buf);
			double val;
			assert_int_equal(parse_label(&p, 'V', &val), 0);
			int c1 = (int)(p - buf) - 1;
			int rr, cc;
			assert_true(render_cell_of(&lay, val, 0.5 * (lay.win.i_lo + lay.win.i_hi),
			                           &rr, &cc));
			assert_true(cc >= c0 && cc <= c1);
			assert_int_equal(ch_at(&g, lay.axis_row, cc), '+');
			assert_true(val > prev);
			prev = val;
			nx++;
		}
		assert_true(nx >= 2);
		grid_fini(&g);
	}
}

/*
 * A projection path in the "voltage from the line" order, built from the
 * curves directly: start on the device, then alternately horizontal to the
 * line and vertical to the device.  Fills N rows.
 */
static void make_path(const struct problem *pb, double v0, struct trace_row *rows,
                      size_t n)
{
	rows[0] = (struct trace_row){ .k = 0, .v = v0,
	                              .i = device_current(&pb->dev, v0), .on = ON_START };
	for (size_t k = 1; k < n; k++) {
		rows[k] = rows[k - 1];
		rows[k].k = (unsigned)k;
		if (k % 2 == 1) {
			rows[k].v = source_line_voltage(&pb->src, rows[k - 1].i);
			rows[k].on = ON_LINE;
		} else {
			rows[k].i = device_current(&pb->dev, rows[k - 1].v);
			rows[k].on = ON_DEVICE;
		}
	}
}

/* True when cell ROW, COL lies on one of the first NSEG segments of ROWS. */
static bool on_path(const struct render_layout *lay, const struct trace_row *rows,
                    size_t nseg, int row, int col)
{
	for (size_t k = 1; k <= nseg; k++) {
		int r0, c0, r1, c1;
		if (!render_cell_of(lay, rows[k - 1].v, rows[k - 1].i, &r0, &c0) ||
		    !render_cell_of(lay, rows[k].v, rows[k].i, &r1, &c1))
			continue;
		int rlo = r0 < r1 ? r0 : r1, rhi = r0 < r1 ? r1 : r0;
		int clo = c0 < c1 ? c0 : c1, chi = c0 < c1 ? c1 : c0;
		if (row >= rlo && row <= rhi && col >= clo && col <= chi)
			return true;
	}
	return false;
}

/* After N projections: the start mark, the path, and the newest segment. */
static void test_path_after_steps(void **state)
{
	(void)state;
	static const size_t steps[] = { 1, 2, 5, 8 };
	for (size_t s = 0; s < NSIZES; s++) {
		for (size_t q = 0; q < sizeof steps / sizeof steps[0]; q++) {
			size_t n = steps[q] + 1;
			struct problem pb;
			make_resistor(&pb, 8.411, 1.629e3, 2.351e3);
			struct op_point pt = resistor_point(8.411, 1.629e3, 2.351e3);
			struct trace_row rows[16];
			make_path(&pb, 1.217, rows, n);
			struct render_input in = { &pb, &pt, 1, rows, n, 0, false };
			struct render_view view;
			render_view_init(&view);
			struct grid g;
			struct render_layout lay;
			draw(&g, sizes[s][0], sizes[s][1], &in, &view, &lay);
			int r, c;
			assert_true(render_cell_of(&lay, rows[0].v, rows[0].i, &r, &c));
			assert_int_equal(ch_at(&g, r, c), 'o');
			/* The newest segment's far end carries the newest mark. */
			assert_true(render_cell_of(&lay, rows[n - 1].v, rows[n - 1].i, &r, &c));
			uint32_t head = ch_at(&g, r, c);
			assert_true(head == '=' || head == '@');
			assert_true(count_role(&g, ROLE_NEWEST) >= 1);
			/* Every path cell lies on a segment; newest ones on the last. */
			for (int rr = 0; rr < g.rows; rr++) {
				for (int cc = 0; cc < g.cols; cc++) {
					int role = grid_at(&g, rr, cc)->role;
					if (role == ROLE_PATH)
						assert_true(on_path(&lay, rows, n - 1, rr, cc));
					if (role == ROLE_NEWEST) {
						assert_true(on_path(&lay, rows + n - 2, 1, rr, cc));
					}
				}
			}
			/* Every earlier iterate is marked by the path. */
			for (size_t k = 1; k + 1 < n; k++) {
				assert_true(render_cell_of(&lay, rows[k].v, rows[k].i, &r, &c));
				int role = grid_at(&g, r, c)->role;
				assert_true(role == ROLE_PATH || role == ROLE_NEWEST ||
				            role == ROLE_POINT || role == ROLE_START);
			}
			if (n > 2)
				assert_true(count_role(&g, ROLE_PATH) >= 1);
			else
				assert_int_equal(count_role(&g, ROLE_PATH), 0);
			grid_fini(&g);
		}
	}
}

/* Flood from ROW, COL over cells whose role is in MASK; returns cells seen. */
static int flood(const struct grid *g, unsigned mask, int row, int col, char *seen)
{
	int n = 0;
	int *stack = malloc(sizeof(int) * 2 * (size_t)(g->rows * g->cols + 1));
	assert_non_null(stack);
	int top = 0;
	stack[top++] = row;
	stack[top++] = col;
	seen[row * g->cols + col] = 1;
	while (top > 0) {
		int c = stack[--top], r = stack[--top];
		n++;
		for (int dr = -1; dr <= 1; dr++) {
			for (int dc = -1; dc <= 1; dc++) {
				const struct cell *x = grid_at(g, r + dr, c + dc);
				if (x == NULL || !(mask & (1u << x->role)) ||
				    seen[(r + dr) * g->cols + c + dc])
					continue;
				seen[(r + dr) * g->cols + c + dc] = 1;
				stack[top++] = r + dr;
				stack[top++] = c + dc;
			}
		}
	}
	free(stack);
	return n;
}

/* Cells with a role in MASK form one 8-connected stroke. */
static void assert_one_stroke(const struct grid *g, unsigned mask)
{
	char *seen = calloc((size_t)(g->rows * g->cols), 1);
	assert_non_null(seen);
	int total = 0, first_r = -1, first_c = -1;
	for (int r = 0; r < g->rows; r++)
		for (int c = 0; c < g->cols; c++)
			if (mask & (1u << grid_at(g, r, c)->role)) {
				total++;
				if (first_r < 0) {
					first_r = r;
					first_c = c;
				}
			}
	assert_true(total > 0);
	assert_int_equal(flood(g, mask, first_r, first_c, seen), total);
	free(seen);
}

/*
 * A diode whose short-circuit current lies far above its knee: the whole
 * frame still shows the device as one stroke reaching the top, and the
 * point frame shows the knee spread over many columns.
 */
static void test_diode_far_intercept(void **state)
{
	(void)state;
	for (size_t s = 0; s < NSIZES; s++) {
		struct problem pb;
		make_diode(&pb, 47.3, 2.61e3, 2.17e-15, 1.08, 22.7);
		struct op_point pt = diode_point(&pb);
		struct render_input in = { &pb, &pt, 1, NULL, 0, 0, false };
		struct render_view view;
		render_view_init(&view);
		struct grid g;
		struct render_layout lay;
		draw(&g, sizes[s][0], sizes[s][1], &in, &view, &lay);
		unsigned mask = 1u << ROLE_DEVICE | 1u << ROLE_POINT;
		assert_one_stroke(&g, mask);
		bool top = false;
		for (int c = lay.left; c <= lay.right; c++)
			if (grid_at(&g, lay.top, c)->role == ROLE_DEVICE)
				top = true;
		assert_true(top);
		grid_fini(&g);

		view.frame = FRAME_POINT;
		draw(&g, sizes[s][0], sizes[s][1], &in, &view, &lay);
		assert_one_stroke(&g, mask);
		int cmin = g.cols, cmax = -1;
		for (int r = lay.top; r <= lay.bottom; r++)
			for (int c = lay.left; c <= lay.right; c++)
				if (grid_at(&g, r, c)->role == ROLE_DEVICE) {
					cmin = c < cmin ? c : cmin;
					cmax = c > cmax ? c : cmax;
				}
		/* The knee bends over at least a quarter of the width. */
		assert_true(cmax - cmin >= (lay.right - lay.left) / 4);
		grid_fini(&g);
	}
}

/* Ideal sources: a vertical load line at VS, a horizontal one at IS. */
static void test_ideal_sources(void **state)
{
	(void)state;
	for (size_t s = 0; s < NSIZES; s++) {
		struct problem pb;
		make_resistor(&pb, 3.847, 0.0, 1.733e3);
		struct op_point pt = { .v = 3.847, .i = 3.847 / 1.733e3 };
		struct render_input in = { &pb, &pt, 1, NULL, 0, 0, false };
		struct render_view view;
		render_view_init(&view);
		struct grid g;
		struct render_layout lay;
		draw(&g, sizes[s][0], sizes[s][1], &in, &view, &lay);
		int r, c, n = 0;
		assert_true(render_cell_of(&lay, 3.847, 0.0, &r, &c));
		for (int rr = 0; rr < g.rows; rr++)
			for (int cc = 0; cc < g.cols; cc++)
				if (grid_at(&g, rr, cc)->role == ROLE_LINE) {
					assert_int_equal(cc, c);
					n++;
				}
		assert_true(n >= (lay.bottom - lay.top) / 2);
		grid_fini(&g);

		struct source_spec sp;
		char err[128];
		source_spec_norton(&sp, 2.913e-3, INFINITY);
		assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
		pt = (struct op_point){ .v = 2.913e-3 * 1.733e3, .i = 2.913e-3 };
		draw(&g, sizes[s][0], sizes[s][1], &in, &view, &lay);
		assert_true(render_cell_of(&lay, 0.0, 2.913e-3, &r, &c));
		n = 0;
		for (int rr = 0; rr < g.rows; rr++)
			for (int cc = 0; cc < g.cols; cc++)
				if (grid_at(&g, rr, cc)->role == ROLE_LINE) {
					assert_int_equal(rr, r);
					n++;
				}
		assert_true(n >= (lay.right - lay.left) / 2);
		assert_true(render_cell_of(&lay, pt.v, pt.i, &r, &c));
		assert_int_equal(ch_at(&g, r, c), '@');
		grid_fini(&g);
	}
}

/* Zoom narrows the window about its centre; pan moves the centre. */
static void test_zoom_pan(void **state)
{
	(void)state;
	struct problem pb;
	make_resistor(&pb, 6.271, 8.21e2, 1.907e3);
	struct op_point pt = resistor_point(6.271, 8.21e2, 1.907e3);
	struct render_input in = { &pb, &pt, 1, NULL, 0, 0, false };
	struct render_view view;
	render_view_init(&view);
	struct render_window w1, w2;
	assert_int_equal(render_window_compute(&in, &view, &w1), RENDER_OK);
	view.zoom = 2.5;
	view.pan_v = 0.125;
	view.pan_i = -0.375;
	assert_int_equal(render_window_compute(&in, &view, &w2), RENDER_OK);
	double sv = w1.v_hi - w1.v_lo, si = w1.i_hi - w1.i_lo;
	assert_float_equal(w2.v_hi - w2.v_lo, sv / 2.5, 1e-12 * sv);
	assert_float_equal(w2.i_hi - w2.i_lo, si / 2.5, 1e-12 * si);
	assert_float_equal(0.5 * (w2.v_lo + w2.v_hi),
	                    0.5 * (w1.v_lo + w1.v_hi) + 0.125 * sv, 1e-12 * sv);
	assert_float_equal(0.5 * (w2.i_lo + w2.i_hi),
	                    0.5 * (w1.i_lo + w1.i_hi) - 0.375 * si, 1e-12 * si);
	/* The line frame holds both intercepts and the point. */
	assert_true(w1.v_lo <= 0.0 && w1.v_hi >= 6.271);
	assert_true(w1.i_lo <= 0.0 && w1.i_hi >= 6.271 / 8.21e2);
	/* A fixed window is used as given. */
	struct render_view fv;
	render_view_init(&fv);
	fv.frame = FRAME_FIXED;
	fv.fixed = (struct render_window){ -0.4137, 3.291, -1.173e-3, 1.219e-2 };
	struct render_window w3;
	assert_int_equal(render_window_compute(&in, &fv, &w3), RENDER_OK);
	assert_float_equal(w3.v_lo, -0.4137, 1e-12);
	assert_float_equal(w3.v_hi, 3.291, 1e-12);
	assert_float_equal(w3.i_lo, -1.173e-3, 1e-15);
	assert_float_equal(w3.i_hi, 1.219e-2, 1e-15);
	/* An empty fixed window falls back to the whole line. */
	fv.fixed.v_hi = fv.fixed.v_lo;
	assert_int_equal(render_window_compute(&in, &fv, &w3), RENDER_OK);
	assert_float_equal(w3.v_lo, w1.v_lo, 1e-12);
	assert_float_equal(w3.v_hi, w1.v_hi, 1e-12);
	/* A point zoomed out of view leaves no point mark. */
	view.zoom = 40.0;
	view.pan_v = -0.4;
	view.pan_i = 0.4;
	struct grid g;
	struct render_layout lay;
	draw(&g, 30, 100, &in, &view, &lay);
	assert_int_equal(count_role(&g, ROLE_POINT), 0);
	grid_fini(&g);
}

/* Too small grids get a message, not a crash; Unicode mode is valid UTF-8. */
static void test_small_and_unicode(void **state)
{
	(void)state;
	struct problem pb;
	make_resistor(&pb, 5.113, 1.07e3, 2.2e3);
	struct op_point pt = resistor_point(5.113, 1.07e3, 2.2e3);
	struct render_input in = { &pb, &pt, 1, NULL, 0, 0, false };
	struct render_view view;
	render_view_init(&view);
	static const int small[][2] = { { 0, 0 }, { 1, 1 }, { 7, 80 }, { 24, 29 } };
	for (size_t k = 0; k < sizeof small / sizeof small[0]; k++) {
		struct grid g;
		assert_int_equal(grid_init(&g, small[k][0], small[k][1]), 0);
		assert_int_equal(render_plot(&in, &view, &g, NULL), RENDER_TOO_SMALL);
		grid_fini(&g);
	}
	view.unicode = true;
	struct trace_row rows[6];
	make_path(&pb, 0.731, rows, 6);
	in.rows = rows;
	in.nrows = 6;
	struct grid g;
	struct render_layout lay;
	draw(&g, 30, 100, &in, &view, &lay);
	char buf[4096];
	grid_row_text(&g, lay.axis_row, buf, sizeof buf);
	assert_non_null(strstr(buf, "\xE2\x94\x94"));        /* └ */
	assert_non_null(strstr(buf, "\xE2\x94\x80"));        /* ─ */
	int r, c;
	assert_true(render_cell_of(&lay, pt.v, pt.i, &r, &c));
	assert_int_equal(ch_at(&g, r, c), 0x25C9);
	/* No ASCII curve marks are left in Unicode mode. */
	for (int rr = lay.top; rr <= lay.bottom; rr++)
		for (int cc = lay.left; cc <= lay.right; cc++) {
			uint32_t ch = ch_at(&g, rr, cc);
			assert_true(ch == ' ' || ch >= 0x80);
		}
	grid_fini(&g);
	/* A bad source gives a status, not a crash. */
	pb.src.r = NAN;
	assert_int_equal(grid_init(&g, 30, 100), 0);
	assert_int_equal(render_plot(&in, &view, &g, NULL), RENDER_BAD_INPUT);
	grid_fini(&g);
}

/* One word-wrap case: text, width, and the lines joined with '|'. */
struct wrap_case {
	const char *text;
	int width;
	const char *want;
};

/*
 * Word wrapping at blanks: each line fits the width, no word is split
 * unless it alone is wider, and joining the lines with blanks gives the
 * text back (greedy line filling, common practice).
 */
static void test_wrap(void **state)
{
	(void)state;
	static const struct wrap_case cases[] = {
		{ "", 10, "" },
		{ "   ", 10, "" },
		{ "short", 10, "short" },
		{ "exactly ten", 11, "exactly ten" },
		{ "exactly ten", 10, "exactly|ten" },
		{ "this order diverges here (|g'| = 84.9); the other order "
		  "contracts: switch to voltage-from-line", 30,
		  "this order diverges here (|g'||= 84.9); the other order|"
		  "contracts: switch to|voltage-from-line" },
		{ "abcdefghijkl mn", 5, "abcde|fghij|kl mn" },
		{ "two  blanks  kept inside", 12, "two  blanks|kept inside" },
		{ "line one\nline two", 40, "line one|line two" },
		/* Width counts cells, not bytes: "µ" and "Ω" are one cell each. */
		{ "4.7 k\xCE\xA9 at 2.385 \xC2\xB5" "A", 9,
		  "4.7 k\xCE\xA9 at|2.385 \xC2\xB5" "A" },
		{ "x", 1, "x" },
	};
	for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
		const struct wrap_case *c = &cases[k];
		struct render_span sp[16];
		size_t n = render_wrap(c->text, c->width, sp, 16);
		char got[512] = "";
		size_t len = 0;
		for (size_t j = 0; j < n && j < 16; j++) {
			char line[256];
			assert_true(sp[j].len < sizeof line);
			memcpy(line, c->text + sp[j].off, sp[j].len);
			line[sp[j].len] = '\0';
			assert_true(render_text_width(line) <= c->width);
			len += (size_t)snprintf(got + len, sizeof got - len, "%s%s",
			                        j > 0 ? "|" : "", line);
		}
		if (strcmp(got, c->want) != 0)
			fail_msg("case %zu: got \"%s\", want \"%s\"", k, got, c->want);
		/* The count alone, without room for spans, agrees. */
		assert_int_equal(render_wrap(c->text, c->width, NULL, 0), n);
	}
	assert_int_equal(render_wrap("text", 0, NULL, 0), 0);
	assert_int_equal(render_wrap(NULL, 10, NULL, 0), 0);
}

/*
 * The x-y plot of a sweep: the current of a resistor RD behind VS and RS,
 * I = VS / (RS + RD) (Ohm's law, common practice), against RS on a log
 * axis from 100 ohm to 100 kohm.  Every point lands in a curve cell, the
 * curve falls from left to right, the decade labels sit under their
 * ticks, the mark sits on the curve and bad points break the line.
 */
static void test_xy_plot(void **state)
{
	(void)state;
	const double vs = 11.85, rd = 2385.0;
	enum { N = 31 };
	double x[N], y[N];
	for (int k = 0; k < N; k++) {
		x[k] = 100.0 * pow(10.0, 3.0 * k / (N - 1));
		y[k] = vs / (x[k] + rd);
	}
	for (size_t s = 0; s < NSIZES; s++) {
		int rows = sizes[s][0], cols = sizes[s][1];
		struct render_xy in = { x, y, N, true, QTY_RESISTANCE, QTY_CURRENT,
		                        "I against RS", "I^ RS>", 4.7e3, false };
		struct grid g;
		struct render_layout lay;
		assert_int_equal(grid_init(&g, rows, cols), 0);
		assert_int_equal(render_xy_plot(&in, &g, &lay), RENDER_OK);
		show(&g);
		int prev_row = -1;
		for (int k = 0; k < N; k++) {
			int r, c;
			assert_true(render_cell_of(&lay, log10(x[k]), y[k], &r, &c));
			const struct cell *cl = grid_at(&g, r, c);
			assert_true(cl->role == ROLE_DEVICE || cl->role == ROLE_POINT);
			/* Falling current: never a higher row to the right. */
			assert_true(r >= prev_row);
			prev_row = r;
		}
		/* The mark at 4.7 kohm, on the curve's row there (one cell slack
		 * for reading between the points). */
		int mr, mc;
		assert_true(render_cell_of(&lay, log10(4.7e3), vs / (4.7e3 + rd), &mr, &mc));
		bool found = false;
		for (int dr = -1; dr <= 1; dr++)
			for (int dc = -1; dc <= 1; dc++) {
				const struct cell *cl = grid_at(&g, mr + dr, mc + dc);
				if (cl != NULL && cl->role == ROLE_POINT)
					found = true;
			}
		assert_true(found);
		/* Decade labels on the label row, centred on their ticks. */
		char buf[4096];
		grid_row_text(&g, lay.axis_row + 1, buf, sizeof buf);
		assert_non_null(strstr(buf, "1 kohm"));
		assert_non_null(strstr(buf, "10 kohm"));
		int tr, tc;
		assert_true(render_cell_of(&lay, 3.0, 0.0, &tr, &tc));
		assert_int_equal(ch_at(&g, lay.axis_row, tc), '+');
		/* Zero is on the current axis, and the title on the top line. */
		assert_true(lay.win.i_lo <= 0.0);
		grid_row_text(&g, 0, buf, sizeof buf);
		assert_non_null(strstr(buf, "I against RS"));
		grid_fini(&g);
	}
	/* A bad point breaks the line, no point at all is refused, and a
	 * grid below the minimum gets a message. */
	y[N / 2] = NAN;
	struct render_xy in = { x, y, N, true, QTY_RESISTANCE, QTY_CURRENT, NULL,
	                        NULL, NAN, false };
	struct grid g;
	assert_int_equal(grid_init(&g, 24, 60), 0);
	assert_int_equal(render_xy_plot(&in, &g, NULL), RENDER_OK);
	in.n = 0;
	assert_int_equal(render_xy_plot(&in, &g, NULL), RENDER_BAD_INPUT);
	grid_fini(&g);
	assert_int_equal(grid_init(&g, 5, 20), 0);
	in.n = N;
	assert_int_equal(render_xy_plot(&in, &g, NULL), RENDER_TOO_SMALL);
	grid_fini(&g);
}

/* A self-heated LED (260 K/W, -3.1 mV/K) or npn stage for the plane. */
static void make_heated(struct problem *pb, bool npn, double theta)
{
	struct source_spec sp;
	char err[256];
	memset(pb, 0, sizeof *pb);
	if (npn) {
		source_spec_thevenin(&sp, 0.655, 33.0);
		device_init(&pb->dev, &model_npn);
		pb->dev.p[BJT_IS] = 150e-15;
		pb->dev.p[BJT_BETA] = 90.0;
		pb->dev.p[BJT_RC] = 2.2;
		pb->dev.p[BJT_VCC] = 12.0;
		pb->dev.p[BJT_TREF] = 25.0;
		pb->dev.p[BJT_THETA] = theta;
		pb->dev.p[BJT_TAMB] = 40.0;
	} else {
		source_spec_thevenin(&sp, 12.0, 1e3);
		device_init(&pb->dev, &model_led);
		pb->dev.p[LED_TC] = -3.1e-3;
		pb->dev.p[LED_THETA] = theta;
		pb->dev.p[LED_TAMB] = 45.0;
	}
	assert_int_equal(source_from_spec(&sp, &pb->src, err, sizeof err), 0);
	thermal_normalise(&pb->dev);
	if (device_validate(&pb->dev, err, sizeof err) != 0)
		fail_msg("%s", err);
}

/* The role at the cell of (T, P) under LAY (ROLE_NONE outside). */
static enum cell_role role_at(const struct grid *g,
                              const struct render_layout *lay, double t,
                              double p)
{
	int r, c;
	if (!render_cell_of(lay, t, p, &r, &c))
		return ROLE_NONE;
	return (enum cell_role)grid_at(g, r, c)->role;
}

/*
 * The highest role at the cell of (T, P) or the cells above and below it:
 * a line drawn one sample per cell may cross the point's column a row off
 * where it falls between two samples.
 */
static enum cell_role role_near(const struct grid *g,
                                const struct render_layout *lay, double t,
                                double p)
{
	int r, c;
	if (!render_cell_of(lay, t, p, &r, &c))
		return ROLE_NONE;
	enum cell_role best = ROLE_NONE;
	for (int d = -1; d <= 1; d++) {
		const struct cell *x = grid_at(g, r + d, c);
		if (x != NULL && x->role > best && x->role != ROLE_LEGEND)
			best = (enum cell_role)x->role;
	}
	return best;
}

/*
 * The thermal plane: the heat-removal line through (Ta, 0) with slope
 * 1/theta (checked at cells of its own equation), the heat made at cells
 * of electrical solves, each balance and the path's ends where the inputs
 * put them, Tjmax marked when it is in the window, and refusals.
 */
static void test_thermal_plane(void **state)
{
	(void)state;
	struct solve_options o;
	solve_options_init(&o);
	const double thetas[][2] = { { 0, 260.0 }, { 1, 33.0 }, { 1, 28.0 } };
	for (size_t k = 0; k < 3; k++) {
		struct problem pb;
		make_heated(&pb, thetas[k][0] != 0.0, thetas[k][1]);
		struct thermal_result tr;
		thermal_solve(&pb, &o, &tr);
		struct thermal_stepper *st = thermal_stepper_create();
		assert_int_equal(thermal_stepper_init(st, &pb, &o, NAN), 0);
		for (int j = 0; j < 9; j++)
			thermal_stepper_step(st);
		size_t n;
		const struct thermal_row *rows = thermal_stepper_trace(st, &n);
		int key = model_param_index(pb.dev.type, "ambient_temperature");
		double ta = pb.dev.p[key], theta = thetas[k][1];
		for (size_t z = 0; z < NSIZES; z++) {
			struct grid g;
			assert_int_equal(grid_init(&g, sizes[z][0], sizes[z][1]), 0);
			struct render_thermal in = { &pb, &o, tr.pts, tr.n, rows, n,
			                             z == 1, true };
			struct render_layout lay;
			assert_int_equal(render_thermal_plot(&in, &g, &lay), RENDER_OK);
			show(&g);
			const struct render_window *w = &lay.win;
			/* the heat line, at a few temperatures inside the window */
			for (int j = 1; j < 8; j++) {
				double t = ta + j * (w->v_hi - ta) / 8.0;
				double pl = (t - ta) / theta;
				if (pl < w->i_hi && role_near(&g, &lay, t, pl) < ROLE_LINE)
					fail_msg("case %zu, %dx%d: no heat line at %.6g degC, "
					         "%.6g W", k, sizes[z][0], sizes[z][1], t, pl);
			}
			assert_true(role_at(&g, &lay, ta, 0.0) >= ROLE_LINE);
			/* the heat made: one electrical solve at each column */
			for (int j = 1; j < 6; j++) {
				double t = w->v_lo + j * (w->v_hi - w->v_lo) / 6.0;
				struct thermal_eval ev;
				assert_int_equal(thermal_eval_at(&pb, &o, t, false, &ev), 0);
				if (ev.p < w->i_hi)
					assert_true(role_near(&g, &lay, t, ev.p) >= ROLE_LINE);
			}
			for (size_t j = 0; j < tr.n; j++)
				assert_int_equal(role_at(&g, &lay, tr.pts[j].tj, tr.pts[j].p),
				                 ROLE_POINT);
			assert_true(role_at(&g, &lay, rows[0].tj, rows[0].p) >= ROLE_START);
			assert_true(role_at(&g, &lay, rows[n - 1].tj, rows[n - 1].p) >=
			            ROLE_NEWEST);
			char buf[2048];
			grid_row_text(&g, 0, buf, sizeof buf);
			assert_non_null(strstr(buf, "balance"));
			/* Tjmax in the window is named on the data area's top row */
			grid_row_text(&g, lay.top, buf, sizeof buf);
			assert_true((strstr(buf, "Tjmax") != NULL) ==
			            (150.0 < w->v_hi && 150.0 > w->v_lo));
			grid_fini(&g);
		}
		thermal_stepper_destroy(st);
	}
	/* a device that does not heat itself, and a grid below the minimum */
	struct problem cold;
	make_heated(&cold, false, 0.0);
	struct render_thermal in = { &cold, &o, NULL, 0, NULL, 0, false, true };
	struct grid g;
	assert_int_equal(grid_init(&g, 24, 80), 0);
	assert_int_equal(render_thermal_plot(&in, &g, NULL), RENDER_BAD_INPUT);
	char buf[256];
	grid_row_text(&g, 0, buf, sizeof buf);
	assert_non_null(strstr(buf, "does not heat itself"));
	grid_fini(&g);
	make_heated(&cold, false, 260.0);
	assert_int_equal(grid_init(&g, 5, 20), 0);
	assert_int_equal(render_thermal_plot(&in, &g, NULL), RENDER_TOO_SMALL);
	grid_fini(&g);
}

/* Run every render test. */
/* True when grid row ROW holds the text T. */
static bool row_has(const struct grid *g, int row, const char *t)
{
	char buf[4096];
	grid_row_text(g, row, buf, sizeof buf);
	return strstr(buf, t) != NULL;
}

/* True when any row of G holds the text T. */
static bool grid_has(const struct grid *g, const char *t)
{
	for (int r = 0; r < g->rows; r++)
		if (row_has(g, r, t))
			return true;
	return false;
}

/*
 * A diverging path (RD < RS: g' = -RS/RD, about -1.8) whose newest step
 * leaves the whole-line frame is drawn to the edge: an arrow on the data
 * area's border pointing the way it went, the far end's value beside it,
 * and the legend says what the arrow means.
 */
static void test_off_plot(void **state)
{
	(void)state;
	for (size_t s = 0; s < NSIZES; s++) {
		struct problem pb;
		make_resistor(&pb, 8.411, 1.629e3, 0.913e3);
		struct op_point pt = resistor_point(8.411, 1.629e3, 0.913e3);
		struct trace_row rows[32];
		struct render_view view;
		render_view_init(&view);
		size_t n = 3;
		struct render_window w;
		bool off = false;
		for (; n < 32 && !off; n++) {
			make_path(&pb, pt.v * 1.1, rows, n);
			struct render_input in = { &pb, &pt, 1, rows, n, 0, false };
			assert_int_equal(render_window_compute(&in, &view, &w), RENDER_OK);
			const struct trace_row *b = &rows[n - 1];
			off = b->v < w.v_lo || b->v > w.v_hi || b->i < w.i_lo || b->i > w.i_hi;
			if (off)
				break;
		}
		assert_true(off);
		struct render_input in = { &pb, &pt, 1, rows, n, 0, false };
		struct grid g;
		struct render_layout lay;
		draw(&g, sizes[s][0], sizes[s][1], &in, &view, &lay);
		const struct trace_row *b = &rows[n - 1];
		/* The arrow: a newest-step cell on the border of the data area. */
		int arrows = 0;
		for (int r = lay.top; r <= lay.bottom; r++)
			for (int c = lay.left; c <= lay.right; c++) {
				const struct cell *x = grid_at(&g, r, c);
				bool edge = r == lay.top || r == lay.bottom || c == lay.left ||
				            c == lay.right;
				if (x->role == ROLE_NEWEST && edge &&
				    (x->ch == '<' || x->ch == '>' || x->ch == '^' || x->ch == 'v'))
					arrows++;
			}
		assert_int_equal(arrows, 1);
		/* The far end's value, as the axis that it is off. */
		char want[48];
		if (b->v < w.v_lo || b->v > w.v_hi)
			qty_format_short(want, sizeof want, b->v, QTY_VOLTAGE, 4, 1);
		else
			qty_format_short(want, sizeof want, b->i, QTY_CURRENT, 4, 1);
		assert_true(grid_has(&g, want));
		assert_true(row_has(&g, 0, "off the plot") ||
		            row_has(&g, 1, "off the plot") ||
		            row_has(&g, 2, "off the plot"));
		grid_fini(&g);
	}
}

/*
 * The point frame holds the point and the newest projections: as a
 * converging spiral (g' = -RS/RD, about -0.69) shrinks, every full step
 * magnifies the plot, and the newest point stays inside.
 */
static void test_frame_magnifies(void **state)
{
	(void)state;
	struct problem pb;
	make_resistor(&pb, 8.411, 1.629e3, 2.351e3);
	struct op_point pt = resistor_point(8.411, 1.629e3, 2.351e3);
	struct trace_row rows[40];
	struct render_view view;
	render_view_init(&view);
	view.frame = FRAME_POINT;
	double prev_v = INFINITY, prev_i = INFINITY;
	for (size_t n = 8; n <= 30; n += 2) {
		make_path(&pb, pt.v * 1.37, rows, n);
		struct render_input in = { &pb, &pt, 1, rows, n, 0, false };
		struct render_window w;
		assert_int_equal(render_window_compute(&in, &view, &w), RENDER_OK);
		double sv = w.v_hi - w.v_lo, si = w.i_hi - w.i_lo;
		assert_true(sv < prev_v && si < prev_i);
		const struct trace_row *b = &rows[n - 1];
		assert_true(b->v >= w.v_lo && b->v <= w.v_hi);
		assert_true(b->i >= w.i_lo && b->i <= w.i_hi);
		assert_true(pt.v >= w.v_lo && pt.v <= w.v_hi);
		prev_v = sv;
		prev_i = si;
	}
	/* After 28 projections the frame is far smaller than the first. */
	make_path(&pb, pt.v * 1.37, rows, 8);
	struct render_input first = { &pb, &pt, 1, rows, 8, 0, false };
	struct render_window w0;
	assert_int_equal(render_window_compute(&first, &view, &w0), RENDER_OK);
	assert_true(prev_v < 0.05 * (w0.v_hi - w0.v_lo));
}

/*
 * At 80x24 the plot is 22 rows by 48 columns: with a path, three points
 * and their numbers, every legend entry is there whole, and each point
 * is numbered beside its mark.
 */
static void test_labels_80x24(void **state)
{
	(void)state;
	struct problem pb;
	const struct model_type *mt = model_find("tunnel");
	assert_non_null(mt);
	device_init(&pb.dev, mt);
	struct source_spec sp;
	char err[128];
	source_spec_thevenin(&sp, 0.47, 420.0);
	assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
	struct solve_options o;
	solve_options_init(&o);
	struct solve_result res;
	assert_int_equal(solve_problem(&pb, &o, &res), SOLVE_OK);
	assert_int_equal(res.n, 3);
	struct trace_row rows[4];
	rows[0] = (struct trace_row){ .v = 0.0, .i = 0.0 };
	rows[1] = (struct trace_row){ .v = 0.47, .i = 0.0 };
	rows[2] = (struct trace_row){ .v = 0.47, .i = device_current(&pb.dev, 0.47) };
	struct render_input in = { &pb, res.pts, res.n, rows, 3, 0, true };
	struct render_view view;
	render_view_init(&view);
	struct grid g;
	struct render_layout lay;
	draw(&g, 22, 48, &in, &view, &lay);
	static const char *const names[] = { "op. point", "load line", "device",
	                                     "start", "path", "newest step" };
	for (size_t k = 0; k < sizeof names / sizeof names[0]; k++)
		assert_true(row_has(&g, 0, names[k]) || row_has(&g, 1, names[k]));
	for (size_t k = 0; k < res.n; k++) {
		int r, c;
		assert_true(render_cell_of(&lay, res.pts[k].v, res.pts[k].i, &r, &c));
		char want = (char)('1' + k);
		bool found = false;
		for (int dc = -1; dc <= 1; dc += 2) {
			const struct cell *x = grid_at(&g, r, c + dc);
			if (x != NULL && x->ch == (uint32_t)want && x->role == ROLE_POINT)
				found = true;
		}
		assert_true(found);
	}
	grid_fini(&g);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_load_line_ends),
		cmocka_unit_test(test_point_marker),
		cmocka_unit_test(test_axis_labels),
		cmocka_unit_test(test_path_after_steps),
		cmocka_unit_test(test_diode_far_intercept),
		cmocka_unit_test(test_ideal_sources),
		cmocka_unit_test(test_zoom_pan),
		cmocka_unit_test(test_small_and_unicode),
		cmocka_unit_test(test_wrap),
		cmocka_unit_test(test_xy_plot),
		cmocka_unit_test(test_off_plot),
		cmocka_unit_test(test_frame_magnifies),
		cmocka_unit_test(test_labels_80x24),
		cmocka_unit_test(test_thermal_plane),
	};
	return cmocka_run_group_tests_name("render", tests, NULL, NULL);
}
