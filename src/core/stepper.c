/*
 * stepper.c - the iterative methods, stepped by the caller.
 *
 * Every method keeps its own state in struct stepper and is reached through
 * a const table of (init, step) pairs; the generic part records the trace,
 * classifies the status and refuses to move a stopped stepper.
 *
 * Projection state.  The path alternates between the two curves.  In the
 * "voltage from the line" order the start point lies on the device curve
 * at (V0, I(V0)) and the moves are: horizontal to the line, vertical to the
 * device.  In the "voltage from the device" order the start point lies on
 * the load line at (V0, I_line(V0)) and the moves are: horizontal to the
 * device, vertical to the line.  Horizontal moves keep I, vertical moves
 * keep V.
 *
 * Error ratio.  For each move the ratio is (this move) / (previous move of
 * the same direction), signed; near a fixed point it tends to g'(x*)
 * (contraction-mapping theorem; Burden & Faires, Numerical Analysis,
 * 9th ed., 2010, sec. 2.2 and 2.4).
 */
#include "stepper.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "junction.h"

/* Smallest magnitudes treated as "zero" when testing relative changes. */
#define V_FLOOR 1e-300
#define I_FLOOR 1e-300
/* Consecutive growing moves that mean divergence. */
#define GROW_LIMIT 4
/* Consecutive non-shrinking moves that mean a stall. */
#define STALL_LIMIT 25

struct stepper {
	struct problem pb;
	struct solve_options o;
	struct trace_row *rows;
	size_t n, cap;
	enum step_status status;

	/* projection / relaxation */
	unsigned half;           /* half steps taken */
	double last_dv, last_di; /* previous horizontal / vertical move */
	unsigned grow, stall;    /* counters for divergence and stalls */
	double omega_used;

	/* Newton and Brent: bracket on the (intrinsic) voltage */
	double lo, hi, flo, fhi;
	double rser;             /* series resistance folded into the source */
	double x;                /* current iterate (intrinsic voltage) */
	bool have_bracket;       /* lo/hi given by the caller */
	/* Brent-Dekker state */
	double a, b, c, d, e, fa, fb, fc;
};

/* Method table entry. */
struct stepper_method {
	const char *name;
	int (*init)(struct stepper *s);
	enum step_status (*step)(struct stepper *s, struct trace_row *row);
};

static const char *const method_names[METHOD_COUNT] = {
	[METHOD_AUTO] = "auto",
	[METHOD_PROJECTION] = "projection",
	[METHOD_RELAXED] = "relaxed",
	[METHOD_NEWTON] = "newton",
	[METHOD_BRENT] = "brent",
};

static const char *const order_names[ORDER_COUNT] = {
	[ORDER_VOLTAGE_FROM_LINE] = "voltage-from-line",
	[ORDER_VOLTAGE_FROM_DEVICE] = "voltage-from-device",
};

static const char *const status_names[] = {
	[STEP_CONTINUE] = "running",
	[STEP_CONVERGED] = "converged",
	[STEP_DIVERGING] = "diverging",
	[STEP_CYCLING] = "cycling",
	[STEP_STALLED] = "stalled",
	[STEP_OUT_OF_DOMAIN] = "left the curve",
	[STEP_NON_FINITE] = "overflow",
	[STEP_CAP] = "step limit reached",
	[STEP_UNDEFINED] = "not defined here",
};

/* Fill O with the defaults. */
void solve_options_init(struct solve_options *o)
{
	o->method = METHOD_AUTO;
	o->order = ORDER_VOLTAGE_FROM_DEVICE;
	o->start_v = NAN;
	o->omega = 0.0;
	o->tol = 1e-12;
	o->max_steps = 200;
}

/* Name of method M. */
const char *solve_method_name(enum solve_method m)
{
	return (unsigned)m < METHOD_COUNT ? method_names[m] : "?";
}

/* Method from NAME; 0 or -1. */
int solve_method_from_name(const char *name, enum solve_method *m)
{
	for (unsigned k = 0; k < METHOD_COUNT; k++)
		if (strcmp(name, method_names[k]) == 0) {
			*m = (enum solve_method)k;
			return 0;
		}
	return -1;
}

/* Name of order O. */
const char *projection_order_name(enum projection_order o)
{
	return (unsigned)o < ORDER_COUNT ? order_names[o] : "?";
}

/* Order from NAME; 0 or -1. */
int projection_order_from_name(const char *name, enum projection_order *o)
{
	for (unsigned k = 0; k < ORDER_COUNT; k++)
		if (strcmp(name, order_names[k]) == 0) {
			*o = (enum projection_order)k;
			return 0;
		}
	return -1;
}

/* Name of status S. */
const char *step_status_name(enum step_status s)
{
	return (unsigned)s <= STEP_UNDEFINED ? status_names[s] : "?";
}

/* Allocate a stepper. */
struct stepper *stepper_create(void)
{
	return calloc(1, sizeof(struct stepper));
}

/* Free S. */
void stepper_destroy(struct stepper *s)
{
	if (s == NULL)
		return;
	free(s->rows);
	free(s);
}

/* Append ROW to the trace; -1 on no memory. */
static int stepper_push(struct stepper *s, const struct trace_row *row)
{
	if (s->n == s->cap) {
		size_t cap = s->cap ? 2 * s->cap : 64;
		struct trace_row *r = realloc(s->rows, cap * sizeof *r);
		if (r == NULL)
			return -1;
		s->rows = r;
		s->cap = cap;
	}
	s->rows[s->n++] = *row;
	return 0;
}

/* Relative-or-absolute "small" test for a change D of a quantity X. */
static bool stepper_small(double d, double x, double tol, double floor_)
{
	return fabs(d) <= tol * fabs(x) || fabs(d) <= floor_;
}

/* The automatic start voltage: 0 V, inside every model's domain. */
static double stepper_start_voltage(const struct stepper *s)
{
	return isnan(s->o.start_v) ? 0.0 : s->o.start_v;
}

/* ---------------------------------------------------------------------- */
/* Projections                                                             */

/* One projection move from point P; fills ROW.  Returns a status. */
static enum step_status project_move(const struct stepper *s,
                                     const struct trace_row *p,
                                     struct trace_row *row)
{
	const struct problem *pb = &s->pb;
	bool horizontal = (s->half % 2) == 0;
	*row = *p;
	if (s->o.order == ORDER_VOLTAGE_FROM_LINE) {
		if (horizontal) {
			if (source_is_ideal_current(&pb->src))
				return STEP_UNDEFINED;
			row->v = source_line_voltage(&pb->src, p->i);
			row->on = ON_LINE;
		} else {
			if (pb->dev.type->current == NULL)
				return STEP_UNDEFINED;
			row->i = device_current(&pb->dev, p->v);
			row->on = ON_DEVICE;
		}
	} else {
		if (horizontal) {
			if (pb->dev.type->voltage == NULL)
				return STEP_UNDEFINED;
			if (device_voltage(&pb->dev, p->i, &row->v) != 0)
				return STEP_OUT_OF_DOMAIN;
			row->on = ON_DEVICE;
		} else {
			if (source_is_ideal_voltage(&pb->src))
				return STEP_UNDEFINED;
			row->i = source_line_current(&pb->src, p->v);
			row->on = ON_LINE;
		}
	}
	if (!isfinite(row->v) || !isfinite(row->i))
		return STEP_NON_FINITE;
	return STEP_CONTINUE;
}

/* Start a projection path at the start voltage. */
static int project_init(struct stepper *s)
{
	const struct problem *pb = &s->pb;
	struct trace_row r0 = { .k = 0, .ratio = NAN, .step = NAN, .on = ON_START };
	r0.v = stepper_start_voltage(s);
	if (s->o.order == ORDER_VOLTAGE_FROM_LINE) {
		if (pb->dev.type->current == NULL || source_is_ideal_current(&pb->src)) {
			s->status = STEP_UNDEFINED;
			return -1;
		}
		r0.i = device_current(&pb->dev, r0.v);
	} else {
		if (pb->dev.type->voltage == NULL || source_is_ideal_voltage(&pb->src)) {
			s->status = STEP_UNDEFINED;
			return -1;
		}
		r0.i = source_line_current(&pb->src, r0.v);
	}
	if (!isfinite(r0.i)) {
		s->status = STEP_OUT_OF_DOMAIN;
		return -1;
	}
	r0.residual = problem_residual(pb, r0.v);
	s->last_dv = s->last_di = NAN;
	return stepper_push(s, &r0) == 0 ? 0 : -1;
}

/* Classify a move of size D after a previous one of size PREV. */
static void project_track(struct stepper *s, double d, double prev,
                          struct trace_row *row)
{
	row->ratio = (isnan(prev) || prev == 0.0) ? NAN : d / prev;
	if (!isnan(row->ratio) && fabs(row->ratio) > 1.0 && fabs(d) > 0.0)
		s->grow++;
	else
		s->grow = 0;
	if (!isnan(row->ratio) && fabs(row->ratio) > 0.999)
		s->stall++;
	else
		s->stall = 0;
}

/* One projection (a half step). */
static enum step_status project_step(struct stepper *s, struct trace_row *row)
{
	const struct trace_row *p = &s->rows[s->n - 1];
	bool horizontal = (s->half % 2) == 0;
	enum step_status st = project_move(s, p, row);
	s->half++;
	row->k = s->half;
	if (st != STEP_CONTINUE)
		return st;
	row->residual = problem_residual(&s->pb, row->v);
	if (horizontal) {
		double d = row->v - p->v;
		row->step = fabs(d);
		project_track(s, d, s->last_dv, row);
		s->last_dv = d;
	} else {
		double d = row->i - p->i;
		row->step = fabs(d);
		project_track(s, d, s->last_di, row);
		s->last_di = d;
	}
	/* A path that stops moving in both directions has converged. */
	if (!isnan(s->last_dv) && !isnan(s->last_di) &&
	    stepper_small(s->last_dv, row->v, s->o.tol, V_FLOOR) &&
	    stepper_small(s->last_di, row->i, s->o.tol, I_FLOOR))
		return STEP_CONVERGED;
	/* Two moves of the same direction that retrace each other: a 2-cycle. */
	if (s->n >= 4) {
		const struct trace_row *q = &s->rows[s->n - 4];
		double dv = fabs(row->v - q->v), di = fabs(row->i - q->i);
		if (row->step > 0.0 && row->ratio < -0.999 && row->ratio > -1.001 &&
		    dv <= 1e-9 * fmax(fabs(row->v), V_FLOOR) &&
		    di <= 1e-9 * fmax(fabs(row->i), I_FLOOR))
			return STEP_CYCLING;
	}
	if (s->grow >= GROW_LIMIT)
		return STEP_DIVERGING;
	if (s->stall >= STALL_LIMIT)
		return STEP_STALLED;
	return STEP_CONTINUE;
}

/* ---------------------------------------------------------------------- */
/* Relaxed fixed point                                                      */

/* The full projection map g(I) for the order, and its slope; 0 or status. */
static enum step_status relax_map(const struct stepper *s, double i, double *gi,
                                  double *gp, double *vout)
{
	const struct problem *pb = &s->pb;
	double v;
	if (s->o.order == ORDER_VOLTAGE_FROM_LINE) {
		v = source_line_voltage(&pb->src, i);
		*gi = device_current(&pb->dev, v);
		*gp = -pb->src.r * device_conductance(&pb->dev, v);
	} else {
		if (device_voltage(&pb->dev, i, &v) != 0)
			return STEP_OUT_OF_DOMAIN;
		*gi = source_line_current(&pb->src, v);
		double rd = pb->dev.type->resistance
		                ? pb->dev.type->resistance(pb->dev.p, i)
		                : 1.0 / device_conductance(&pb->dev, v);
		*gp = -rd / pb->src.r;
	}
	*vout = v;
	if (!isfinite(*gi) || !isfinite(v))
		return STEP_NON_FINITE;
	return STEP_CONTINUE;
}

/* Start a relaxed path: the same start point as the projections. */
static int relax_init(struct stepper *s)
{
	return project_init(s);
}

/* One relaxed step I <- I + w (g(I) - I). */
static enum step_status relax_step(struct stepper *s, struct trace_row *row)
{
	const struct trace_row *p = &s->rows[s->n - 1];
	double gi, gp, v;
	*row = *p;
	row->k = p->k + 1;
	enum step_status st = relax_map(s, p->i, &gi, &gp, &v);
	if (st != STEP_CONTINUE)
		return st;
	double w = s->o.omega;
	if (!(w > 0.0)) {
		/* Optimal factor from the slope at this iterate: w* = 1/(1 - g'). */
		w = isfinite(gp) && gp != 1.0 ? 1.0 / (1.0 - gp) : 1.0;
	}
	s->omega_used = w;
	double inew = p->i + w * (gi - p->i);
	double d = inew - p->i;
	row->i = inew;
	if (s->o.order == ORDER_VOLTAGE_FROM_LINE) {
		row->v = source_line_voltage(&s->pb.src, inew);
		row->on = ON_LINE;
	} else {
		if (device_voltage(&s->pb.dev, inew, &row->v) != 0)
			return STEP_OUT_OF_DOMAIN;
		row->on = ON_DEVICE;
	}
	if (!isfinite(row->v) || !isfinite(row->i))
		return STEP_NON_FINITE;
	row->residual = problem_residual(&s->pb, row->v);
	row->step = fabs(d);
	project_track(s, d, s->last_di, row);
	s->last_di = d;
	if (stepper_small(d, inew, s->o.tol, I_FLOOR))
		return STEP_CONVERGED;
	if (s->grow >= GROW_LIMIT)
		return STEP_DIVERGING;
	if (s->stall >= STALL_LIMIT)
		return STEP_STALLED;
	return STEP_CONTINUE;
}

/* ---------------------------------------------------------------------- */
/* Bracketed methods: Newton with limiting, and Brent-Dekker                */

/*
 * The bracketed methods work on the intrinsic problem when the model has a
 * series split: vj + (r + Rs) Ij(vj) = voc.  For an ideal current source
 * the residual is Ij(vj) - isc.
 */

/* Intrinsic current at X. */
static double br_current(const struct stepper *s, double x)
{
	const struct model_type *t = s->pb.dev.type;
	return t->intrinsic_current ? t->intrinsic_current(s->pb.dev.p, x)
	                            : t->current(s->pb.dev.p, x);
}

/* Intrinsic conductance at X. */
static double br_conductance(const struct stepper *s, double x)
{
	const struct model_type *t = s->pb.dev.type;
	return t->intrinsic_conductance ? t->intrinsic_conductance(s->pb.dev.p, x)
	                                : t->conductance(s->pb.dev.p, x);
}

/* The bracketed residual at X. */
static double br_residual(const struct stepper *s, double x)
{
	double i = br_current(s, x);
	if (isinf(s->pb.src.r))
		return i - s->pb.src.isc;
	return x + (s->pb.src.r + s->rser) * i - s->pb.src.voc;
}

/* Its slope at X. */
static double br_slope(const struct stepper *s, double x)
{
	double g = br_conductance(s, x);
	if (isinf(s->pb.src.r))
		return g;
	return 1.0 + (s->pb.src.r + s->rser) * g;
}

/* The scan range: the device's range widened to 0 V and voc. */
static void br_range(const struct stepper *s, double *lo, double *hi)
{
	device_range(&s->pb.dev, lo, hi);
	*lo = fmin(*lo, 0.0);
	*hi = fmax(*hi, 0.0);
	if (isfinite(s->pb.src.voc)) {
		*lo = fmin(*lo, s->pb.src.voc);
		*hi = fmax(*hi, s->pb.src.voc);
	}
}

/* Fill ROW for intrinsic voltage X. */
static void br_row(const struct stepper *s, double x, struct trace_row *row)
{
	double i = br_current(s, x);
	double rt = s->pb.src.r + s->rser;
	/* Prefer the line's current where the device is the steeper curve. */
	if (isfinite(rt) && rt > 0.0 && rt * br_conductance(s, x) > 1.0)
		i = (s->pb.src.voc - x) / rt;
	row->v = x + s->rser * i;
	row->i = i;
	row->residual = br_residual(s, x);
	row->on = ON_BOTH;
}

/*
 * Lower the upper end of a bracket [0, voc] of a monotone device to the
 * intrinsic voltage at which the device alone carries voc / (r + Rs): the
 * current on the load line cannot be larger, so the residual there is
 * >= 0 and finite even where the residual at voc overflows exp().  Without
 * it Newton falls back to bisection from an overflowing end and then
 * descends on the exponential by about nVt per step, and Brent starts
 * from a non-finite value.
 */
static void br_tighten(struct stepper *s)
{
	const struct model_type *t = s->pb.dev.type;
	double rt = s->pb.src.r + s->rser;
	double voc = s->pb.src.voc;
	if (!(voc > 0.0) || !(rt > 0.0) || !isfinite(rt))
		return;
	double est = NAN;
	if (t->intrinsic_voltage != NULL)
		est = t->intrinsic_voltage(s->pb.dev.p, voc / rt);
	else if (t->series_resistance == NULL && t->voltage != NULL &&
	         t->voltage(s->pb.dev.p, voc / rt, &est) != 0)
		est = NAN;
	if (!(est > s->lo && est < s->hi))
		return;
	double f = br_residual(s, est);
	if (f >= 0.0 && isfinite(f)) {
		s->hi = est;
		s->fhi = f;
	}
}

/*
 * Find a sign-change bracket of the residual containing the root nearest
 * the start voltage: scan outwards from the device's natural range.
 */
static int br_bracket(struct stepper *s)
{
	const struct model_type *t = s->pb.dev.type;
	if (t->current == NULL)
		return -1;
	s->rser = t->series_resistance ? t->series_resistance(s->pb.dev.p) : 0.0;
	if (s->have_bracket) {
		s->flo = br_residual(s, s->lo);
		s->fhi = br_residual(s, s->hi);
		return 0;
	}
	double lo, hi;
	br_range(s, &lo, &hi);
	if (t->monotone && isfinite(s->pb.src.voc)) {
		/* One root, between 0 and voc when I(0) = 0; keep the general scan
		 * below as the fallback for curves that do not pass the origin. */
		double a = fmin(0.0, s->pb.src.voc), b = fmax(0.0, s->pb.src.voc);
		double fa = br_residual(s, a), fb = br_residual(s, b);
		if (fa <= 0.0 && fb >= 0.0) {
			s->lo = a, s->hi = b, s->flo = fa, s->fhi = fb;
			br_tighten(s);
			return 0;
		}
	}
	/* Sample the range and take the sign change nearest the start. */
	enum { NSAMP = 2000 };
	double x0 = stepper_start_voltage(s);
	double best = INFINITY;
	double xp = lo, fp = br_residual(s, lo);
	int found = -1;
	for (int k = 1; k <= NSAMP; k++) {
		double x = lo + (hi - lo) * k / NSAMP;
		double f = br_residual(s, x);
		if (isfinite(f) && isfinite(fp) && ((fp <= 0.0 && f >= 0.0) ||
		                                    (fp >= 0.0 && f <= 0.0))) {
			double dist = fabs(0.5 * (x + xp) - x0);
			if (dist < best) {
				best = dist;
				s->lo = xp, s->hi = x, s->flo = fp, s->fhi = f;
				found = 0;
			}
		}
		xp = x, fp = f;
	}
	return found;
}

/* Start Newton inside the bracket: at the start voltage when it is given
 * and inside, else at the upper end (for a forward-biased junction the
 * convex side, from which Newton descends monotonically onto the root). */
static int newton_init(struct stepper *s)
{
	struct trace_row r0 = { .k = 0, .ratio = NAN, .step = NAN };
	if (br_bracket(s) != 0) {
		s->status = STEP_OUT_OF_DOMAIN;
		return -1;
	}
	double x = s->o.start_v;
	if (!(x >= s->lo && x <= s->hi))
		x = s->hi;
	s->x = x;
	br_row(s, x, &r0);
	r0.on = ON_START;
	s->last_dv = NAN;
	return stepper_push(s, &r0) == 0 ? 0 : -1;
}

/* One safeguarded Newton step with limiting. */
static enum step_status newton_step(struct stepper *s, struct trace_row *row)
{
	const struct trace_row *p = &s->rows[s->n - 1];
	double x = s->x;
	double f = br_residual(s, x);
	/*
	 * Keep the end whose residual has the other sign.  The residual may
	 * fall through the root (a negative-resistance branch crossed by a
	 * flat load line), so the side comes from the signs at the ends, not
	 * from assuming F increases.  An overflow (+-inf) still has a sign;
	 * NaN says nothing and leaves the bracket as it is.
	 */
	if (!isnan(f) && f != 0.0) {
		bool lo_negative = s->flo < 0.0 || (s->flo == 0.0 && s->fhi > 0.0);
		if ((f < 0.0) == lo_negative) {
			s->lo = x;
			s->flo = f;
		} else {
			s->hi = x;
			s->fhi = f;
		}
	}
	double d = br_slope(s, x);
	double step = f / d;
	double xn = x - step;
	bool tiny = f == 0.0 || (isfinite(step) && fabs(step) <= s->o.tol * fabs(x));
	if (!tiny) {
		if (s->pb.dev.type->limit && isfinite(xn))
			xn = s->pb.dev.type->limit(s->pb.dev.p, xn, x);
		if (!(xn > s->lo && xn < s->hi))
			xn = 0.5 * (s->lo + s->hi); /* outside the bracket: bisect */
	}
	double dx = xn - x;
	s->x = xn;
	*row = *p;
	row->k = p->k + 1;
	br_row(s, xn, row);
	row->step = fabs(dx);
	row->ratio = (isnan(s->last_dv) || s->last_dv == 0.0)
	                 ? NAN
	                 : dx / (s->last_dv * s->last_dv);
	s->last_dv = dx;
	if (!isfinite(row->v) || !isfinite(row->i))
		return STEP_NON_FINITE;
	if (tiny || stepper_small(dx, xn, s->o.tol, V_FLOOR) ||
	    s->hi - s->lo <= s->o.tol * fabs(xn))
		return STEP_CONVERGED;
	return STEP_CONTINUE;
}

/* Start Brent-Dekker on the bracket. */
static int brent_init(struct stepper *s)
{
	struct trace_row r0 = { .k = 0, .ratio = NAN, .step = NAN };
	if (br_bracket(s) != 0) {
		s->status = STEP_OUT_OF_DOMAIN;
		return -1;
	}
	s->a = s->lo, s->fa = s->flo;
	s->b = s->hi, s->fb = s->fhi;
	s->c = s->a, s->fc = s->fa;
	s->d = s->e = s->b - s->a;
	br_row(s, s->b, &r0);
	r0.on = ON_START;
	s->last_dv = NAN;
	return stepper_push(s, &r0) == 0 ? 0 : -1;
}

/*
 * One Brent-Dekker iteration (Brent, Algorithms for Minimization Without
 * Derivatives, 1973, ch. 4; the same scheme as GSL's brent solver).
 */
static enum step_status brent_step(struct stepper *s, struct trace_row *row)
{
	const struct trace_row *p = &s->rows[s->n - 1];
	double a = s->a, b = s->b, c = s->c, d = s->d, e = s->e;
	double fa = s->fa, fb = s->fb, fc = s->fc;
	if ((fb < 0.0 && fc < 0.0) || (fb > 0.0 && fc > 0.0)) {
		c = a, fc = fa;
		d = e = b - a;
	}
	if (fabs(fc) < fabs(fb)) {
		a = b, b = c, c = a;
		fa = fb, fb = fc, fc = fa;
	}
	double tol = 0.5 * 2.2204460492503131e-16 * fabs(b) +
	             0.5 * s->o.tol * fabs(b) + 1e-300;
	double m = 0.5 * (c - b);
	double bold = b;
	if (fb == 0.0 || fabs(m) <= tol) {
		s->a = a, s->b = b, s->c = c, s->fa = fa, s->fb = fb, s->fc = fc;
		*row = *p;
		row->k = p->k + 1;
		br_row(s, b, row);
		row->step = 0.0;
		return STEP_CONVERGED;
	}
	if (fabs(e) < tol || fabs(fa) <= fabs(fb)) {
		d = m, e = m; /* bisection */
	} else {
		double pp, q, r, ss = fb / fa;
		if (a == c) {
			pp = 2.0 * m * ss;
			q = 1.0 - ss;
		} else {
			q = fa / fc;
			r = fb / fc;
			pp = ss * (2.0 * m * q * (q - r) - (b - a) * (r - 1.0));
			q = (q - 1.0) * (r - 1.0) * (ss - 1.0);
		}
		if (pp > 0.0)
			q = -q;
		else
			pp = -pp;
		if (2.0 * pp < fmin(3.0 * m * q - fabs(tol * q), fabs(e * q))) {
			e = d;
			d = pp / q;
		} else {
			d = m, e = m;
		}
	}
	a = b, fa = fb;
	b += fabs(d) > tol ? d : (m > 0.0 ? tol : -tol);
	fb = br_residual(s, b);
	s->a = a, s->b = b, s->c = c, s->d = d, s->e = e;
	s->fa = fa, s->fb = fb, s->fc = fc;
	*row = *p;
	row->k = p->k + 1;
	br_row(s, b, row);
	row->step = fabs(b - bold);
	row->ratio = (isnan(s->last_dv) || s->last_dv == 0.0)
	                 ? NAN
	                 : row->step / s->last_dv;
	s->last_dv = row->step;
	if (!isfinite(fb))
		return STEP_NON_FINITE;
	return STEP_CONTINUE;
}

/* Golden-section minimum of |residual| on [a, b]; returns x, *FMIN. */
static double br_golden(const struct stepper *s, double a, double b,
                        double *fmin_)
{
	const double phi = 0.6180339887498949;
	double x1 = b - phi * (b - a), x2 = a + phi * (b - a);
	double f1 = fabs(br_residual(s, x1)), f2 = fabs(br_residual(s, x2));
	for (int k = 0; k < 200 && b - a > 1e-15 * (fabs(a) + fabs(b)); k++) {
		if (f1 < f2) {
			b = x2, x2 = x1, f2 = f1;
			x1 = b - phi * (b - a);
			f1 = fabs(br_residual(s, x1));
		} else {
			a = x1, x1 = x2, f1 = f2;
			x2 = a + phi * (b - a);
			f2 = fabs(br_residual(s, x2));
		}
	}
	*fmin_ = fmin(f1, f2);
	return f1 < f2 ? x1 : x2;
}

/* The residual in current of a curve given as V(I): V(I) + r I - voc. */
static double scan_residual_i(const struct problem *pb, double i)
{
	double v;
	if (device_voltage(&pb->dev, i, &v) != 0)
		return NAN;
	return v + pb->src.r * i - pb->src.voc;
}

/* Golden-section minimum of |scan_residual_i| on [a, b]; returns I. */
static double scan_golden_i(const struct problem *pb, double a, double b,
                            double *fmin_)
{
	const double phi = 0.6180339887498949;
	double x1 = b - phi * (b - a), x2 = a + phi * (b - a);
	double f1 = fabs(scan_residual_i(pb, x1)), f2 = fabs(scan_residual_i(pb, x2));
	for (int k = 0; k < 200 && b - a > 1e-15 * (fabs(a) + fabs(b)); k++) {
		if (f1 < f2) {
			b = x2, x2 = x1, f2 = f1;
			x1 = b - phi * (b - a);
			f1 = fabs(scan_residual_i(pb, x1));
		} else {
			a = x1, x1 = x2, f1 = f2;
			x2 = a + phi * (b - a);
			f2 = fabs(scan_residual_i(pb, x2));
		}
	}
	*fmin_ = fmin(f1, f2);
	return f1 < f2 ? x1 : x2;
}

/* The every-root scan in current for a curve given as V(I). */
static size_t stepper_scan_current(const struct problem *pb,
                                   struct bracket *out, size_t max)
{
	enum { NSAMP = 4000 };
	const struct model_type *t = pb->dev.type;
	if (t->voltage == NULL || t->current_range == NULL ||
	    !isfinite(pb->src.r) || !isfinite(pb->src.voc))
		return 0;
	double lo, hi;
	t->current_range(pb->dev.p, &lo, &hi);
	if (!(lo < hi) || !isfinite(lo) || !isfinite(hi))
		return 0;
	size_t n = 0;
	double x[3], f[3];
	x[1] = lo, f[1] = scan_residual_i(pb, lo);
	x[0] = x[1], f[0] = f[1];
	for (int k = 1; k <= NSAMP && n < max; k++) {
		x[2] = lo + (hi - lo) * k / NSAMP;
		f[2] = scan_residual_i(pb, x[2]);
		if (isfinite(f[1]) && isfinite(f[2])) {
			if (f[1] == 0.0) {
				if (n == 0 || out[n - 1].hi < x[1])
					out[n++] = (struct bracket){ x[1], x[1], false, true };
			} else if ((f[1] < 0.0 && f[2] > 0.0) || (f[1] > 0.0 && f[2] < 0.0)) {
				out[n++] = (struct bracket){ x[1], x[2], false, true };
			} else if (k >= 2 && fabs(f[1]) < fabs(f[0]) && fabs(f[1]) < fabs(f[2]) &&
			           ((f[0] > 0.0) == (f[1] > 0.0)) &&
			           ((f[2] > 0.0) == (f[1] > 0.0))) {
				double fm, xm = scan_golden_i(pb, x[0], x[2], &fm);
				double vm = fm + pb->src.voc - pb->src.r * xm;
				double scale = fabs(vm) + fabs(pb->src.voc) + 1e-300;
				if (fm <= 1e-9 * scale)
					out[n++] = (struct bracket){ xm, xm, true, true };
			}
		}
		x[0] = x[1], f[0] = f[1];
		x[1] = x[2], f[1] = f[2];
	}
	return n;
}

/* Scan for every crossing (see stepper.h). */
size_t stepper_scan(const struct problem *pb, struct bracket *out, size_t max)
{
	enum { NSAMP = 4000 };
	struct stepper s = { .pb = *pb };
	const struct model_type *t = pb->dev.type;
	if (max == 0)
		return 0;
	if (t->current == NULL)
		return stepper_scan_current(pb, out, max);
	s.rser = t->series_resistance ? t->series_resistance(pb->dev.p) : 0.0;
	double lo, hi;
	br_range(&s, &lo, &hi);
	size_t n = 0;
	double x[3], f[3];
	x[1] = lo, f[1] = br_residual(&s, lo);
	x[0] = x[1], f[0] = f[1];
	for (int k = 1; k <= NSAMP && n < max; k++) {
		x[2] = lo + (hi - lo) * k / NSAMP;
		f[2] = br_residual(&s, x[2]);
		if (isfinite(f[1]) && isfinite(f[2])) {
			if (f[1] == 0.0) {
				if (n == 0 || out[n - 1].hi < x[1])
					out[n++] = (struct bracket){ x[1], x[1], false, false };
			} else if ((f[1] < 0.0 && f[2] > 0.0) || (f[1] > 0.0 && f[2] < 0.0)) {
				out[n++] = (struct bracket){ x[1], x[2], false, false };
			} else if (k >= 2 && fabs(f[1]) < fabs(f[0]) && fabs(f[1]) < fabs(f[2]) &&
			           ((f[0] > 0.0) == (f[1] > 0.0)) &&
			           ((f[2] > 0.0) == (f[1] > 0.0))) {
				/* A dip towards zero without a sign change: a tangent? */
				double fm, xm = br_golden(&s, x[0], x[2], &fm);
				double scale = fabs(xm) + fabs(pb->src.voc) + 1e-300;
				if (isinf(pb->src.r))
					scale = fabs(pb->src.isc) + 1e-300;
				if (fm <= 1e-9 * scale)
					out[n++] = (struct bracket){ xm, xm, true, false };
			}
		}
		x[0] = x[1], f[0] = f[1];
		x[1] = x[2], f[1] = f[2];
	}
	return n;
}

/* ---------------------------------------------------------------------- */

static const struct stepper_method methods[METHOD_COUNT] = {
	[METHOD_AUTO] = { "auto", newton_init, newton_step },
	[METHOD_PROJECTION] = { "projection", project_init, project_step },
	[METHOD_RELAXED] = { "relaxed", relax_init, relax_step },
	[METHOD_NEWTON] = { "newton", newton_init, newton_step },
	[METHOD_BRENT] = { "brent", brent_init, brent_step },
};

/* Start a new path (with the bracket B when not NULL). */
static int stepper_start(struct stepper *s, const struct problem *pb,
                         const struct solve_options *o, const struct bracket *b)
{
	struct trace_row *rows = s->rows;
	size_t cap = s->cap;
	memset(s, 0, sizeof *s);
	if (b != NULL) {
		s->have_bracket = true;
		s->lo = b->lo;
		s->hi = b->hi;
	}
	s->rows = rows;
	s->cap = cap;
	s->pb = *pb;
	s->o = *o;
	if (!(s->o.tol > 0.0))
		s->o.tol = 1e-12;
	if (s->o.max_steps == 0)
		s->o.max_steps = 200;
	s->omega_used = NAN;
	s->status = STEP_CONTINUE;
	if ((unsigned)o->method >= METHOD_COUNT) {
		s->status = STEP_UNDEFINED;
		return -1;
	}
	if (methods[o->method].init(s) != 0) {
		if (s->status == STEP_CONTINUE)
			s->status = STEP_NON_FINITE;
		return -1;
	}
	return 0;
}

/* Start a new path. */
int stepper_init(struct stepper *s, const struct problem *pb,
                 const struct solve_options *o)
{
	return stepper_start(s, pb, o, NULL);
}

/* Start a bracketed method on B. */
int stepper_init_bracket(struct stepper *s, const struct problem *pb,
                         const struct solve_options *o, const struct bracket *b)
{
	if (o->method != METHOD_NEWTON && o->method != METHOD_BRENT &&
	    o->method != METHOD_AUTO) {
		s->status = STEP_UNDEFINED;
		return -1;
	}
	return stepper_start(s, pb, o, b);
}

/* Advance one step. */
enum step_status stepper_step(struct stepper *s)
{
	if (s->status != STEP_CONTINUE || s->n == 0)
		return s->status;
	if (s->n > s->o.max_steps) {
		s->status = STEP_CAP;
		return s->status;
	}
	struct trace_row row;
	enum step_status st = methods[s->o.method].step(s, &row);
	if (st == STEP_CONTINUE || st == STEP_CONVERGED || st == STEP_DIVERGING ||
	    st == STEP_CYCLING || st == STEP_STALLED) {
		if (stepper_push(s, &row) != 0)
			st = STEP_NON_FINITE;
	}
	if (st == STEP_CONTINUE && s->n > s->o.max_steps)
		st = STEP_CAP;
	s->status = st;
	return st;
}

/* The status now. */
enum step_status stepper_status(const struct stepper *s)
{
	return s->status;
}

/* Step until stopped. */
enum step_status stepper_run(struct stepper *s)
{
	while (stepper_step(s) == STEP_CONTINUE)
		;
	return s->status;
}

/* Re-run the path from its start up to N steps. */
enum step_status stepper_rewind(struct stepper *s, size_t n)
{
	struct problem pb = s->pb;
	struct solve_options o = s->o;
	struct bracket b = { s->lo, s->hi, false, false };
	if (stepper_start(s, &pb, &o, s->have_bracket ? &b : NULL) != 0)
		return s->status;
	while (s->n < n + 1 && stepper_step(s) == STEP_CONTINUE)
		;
	return s->status;
}

/* The trace so far. */
const struct trace_row *stepper_trace(const struct stepper *s, size_t *n)
{
	*n = s->n;
	return s->rows;
}

/* The newest point. */
const struct trace_row *stepper_last(const struct stepper *s)
{
	return s->n ? &s->rows[s->n - 1] : NULL;
}

/* The problem. */
const struct problem *stepper_problem(const struct stepper *s)
{
	return &s->pb;
}

/* The options. */
const struct solve_options *stepper_options(const struct stepper *s)
{
	return &s->o;
}

/* The relaxation factor of the last relaxed step. */
double stepper_omega(const struct stepper *s)
{
	return s->omega_used;
}
