/*
 * stepper_projection.c - plain fixed-point projections, one per step.
 *
 * The path alternates between the two curves.  In the "voltage from the
 * line" order the start point lies on the device curve at (V0, I(V0)) and
 * the moves are: horizontal to the line, vertical to the device.  In the
 * "voltage from the device" order the start point lies on the load line at
 * (V0, I_line(V0)) and the moves are: horizontal to the device, vertical
 * to the line.  Horizontal moves keep I, vertical moves keep V; the k-th
 * move is horizontal when k is odd.
 *
 * Error ratio.  For each move the ratio is (this move) / (previous move of
 * the same direction), signed; near a fixed point it tends to g'(x*)
 * (contraction-mapping theorem; Burden & Faires, Numerical Analysis,
 * 9th ed., 2010, sec. 2.2 and 2.4).
 */
#include <math.h>

#include "stepper_type.h"

/* The projection state. */
struct projection_state {
	unsigned half;           /* half steps taken */
	double last_dv, last_di; /* previous horizontal / vertical move */
};

/* The start row of a projection path at the start voltage. */
int stepper_projection_start(const struct stepper_env *env,
                             struct trace_row *r0, enum step_status *st)
{
	const struct problem *pb = &env->pb;
	r0->v = stepper_start_voltage(env);
	if (env->o.order == ORDER_VOLTAGE_FROM_LINE) {
		if (pb->dev.type->current == NULL || source_is_ideal_current(&pb->src)) {
			*st = STEP_UNDEFINED;
			return -1;
		}
		r0->i = device_current(&pb->dev, r0->v);
	} else {
		if (pb->dev.type->voltage == NULL || source_is_ideal_voltage(&pb->src)) {
			*st = STEP_UNDEFINED;
			return -1;
		}
		r0->i = source_line_current(&pb->src, r0->v);
	}
	if (!isfinite(r0->i)) {
		*st = STEP_OUT_OF_DOMAIN;
		return -1;
	}
	r0->residual = problem_residual(pb, r0->v);
	return 0;
}

/* The ratio of move D to the previous one of its direction, PREV. */
void stepper_track(double d, double prev, struct trace_row *row)
{
	row->ratio = (isnan(prev) || prev == 0.0) ? NAN : d / prev;
}

/*
 * How many moves at the end of the trace grew (|ratio| > 1, and moved)
 * and how many did not shrink (|ratio| > 0.999), each counted back from
 * the newest row until one does not.
 */
void stepper_tail_counts(const struct trace_row *rows, size_t n,
                         unsigned *grow, unsigned *stall)
{
	*grow = 0;
	*stall = 0;
	bool g = true, s = true;
	for (size_t k = n; k-- > 1 && (g || s);) {
		double r = rows[k].ratio;
		g = g && !isnan(r) && fabs(r) > 1.0 && rows[k].step > 0.0;
		s = s && !isnan(r) && fabs(r) > 0.999;
		*grow += g;
		*stall += s;
	}
}

/* Start a projection path. */
static int projection_set(void *state, const struct stepper_env *env,
                          struct trace_row *r0, enum step_status *st)
{
	struct projection_state *ps = state;
	ps->half = 0;
	ps->last_dv = ps->last_di = NAN;
	return stepper_projection_start(env, r0, st);
}

/* One projection move from P into ROW. */
static enum step_status projection_move(const struct stepper_env *env,
                                        bool horizontal,
                                        const struct trace_row *p,
                                        struct trace_row *row)
{
	const struct problem *pb = &env->pb;
	*row = *p;
	if (env->o.order == ORDER_VOLTAGE_FROM_LINE) {
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

/* One projection (a half step). */
static enum step_status projection_iterate(void *state,
                                           const struct stepper_env *env,
                                           const struct trace_row *p,
                                           struct trace_row *row)
{
	struct projection_state *ps = state;
	bool horizontal = (ps->half % 2) == 0;
	enum step_status st = projection_move(env, horizontal, p, row);
	ps->half++;
	row->k = ps->half;
	if (st != STEP_CONTINUE)
		return st;
	row->residual = problem_residual(&env->pb, row->v);
	if (horizontal) {
		double d = row->v - p->v;
		row->step = fabs(d);
		stepper_track(d, ps->last_dv, row);
		ps->last_dv = d;
	} else {
		double d = row->i - p->i;
		row->step = fabs(d);
		stepper_track(d, ps->last_di, row);
		ps->last_di = d;
	}
	return STEP_CONTINUE;
}

/*
 * Converged when the path stops moving in both directions; a 2-cycle when
 * two moves of one direction retrace each other; diverging or stalled
 * from the tail of ratios.
 */
static enum step_status projection_test(const void *state,
                                        const struct stepper_env *env,
                                        const struct trace_row *rows, size_t n,
                                        double tol)
{
	const struct projection_state *ps = state;
	(void)env;
	if (n < 2)
		return STEP_CONTINUE;
	const struct trace_row *row = &rows[n - 1];
	/*
	 * A contraction with rate q leaves an error of about q / (1 - q)
	 * times its last move (the a-posteriori bound; Burden & Faires,
	 * Numerical Analysis, 9th ed., 2010, thm 2.3 corollary): the moves
	 * must be that much below the tolerance, so that the point stopped at
	 * is within it of the intersection, not merely moving by less.
	 */
	double rate = fabs(row->ratio), excess = 1.0;
	if (rate > 0.5 && rate < 1.0)
		excess = rate / (1.0 - rate);
	if (!isnan(ps->last_dv) && !isnan(ps->last_di) &&
	    stepper_small(excess * ps->last_dv, row->v, tol, STEPPER_V_FLOOR) &&
	    stepper_small(excess * ps->last_di, row->i, tol, STEPPER_I_FLOOR))
		return STEP_CONVERGED;
	if (n >= 5) {
		const struct trace_row *q = &rows[n - 5];
		double dv = fabs(row->v - q->v), di = fabs(row->i - q->i);
		if (row->step > 0.0 && row->ratio < -0.999 && row->ratio > -1.001 &&
		    dv <= 1e-9 * fmax(fabs(row->v), STEPPER_V_FLOOR) &&
		    di <= 1e-9 * fmax(fabs(row->i), STEPPER_I_FLOOR))
			return STEP_CYCLING;
	}
	unsigned grow, stall;
	stepper_tail_counts(rows, n, &grow, &stall);
	if (grow >= STEPPER_GROW_LIMIT)
		return STEP_DIVERGING;
	if (stall >= STEPPER_STALL_LIMIT)
		return STEP_STALLED;
	return STEP_CONTINUE;
}

const struct stepper_type stepper_type_projection = {
	.name = "projection",
	.size = sizeof(struct projection_state),
	.set = projection_set,
	.iterate = projection_iterate,
	.test = projection_test,
};
