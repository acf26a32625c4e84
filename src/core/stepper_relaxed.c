/*
 * stepper_relaxed.c - the relaxed fixed point: one whole projection step
 * blended, I <- I + w (g(I) - I), with a fixed factor w or, when the
 * options give none, the optimal w* = 1 / (1 - g') from the slope at each
 * iterate (relaxed rate 1 - w + w g'; Burden & Faires, Numerical
 * Analysis, 9th ed., 2010, sec. 2.4).  Starts where the projections do.
 */
#include <math.h>

#include "stepper_type.h"

/* The relaxed state. */
struct relaxed_state {
	double last_di;     /* the previous change of I */
	double omega_used;  /* the factor of the last step */
};

/* The factor the last step used. */
double stepper_relaxed_omega(const void *state)
{
	const struct relaxed_state *rs = state;
	return rs->omega_used;
}

/* The full projection map g(I) for the order, and its slope; a status. */
static enum step_status relaxed_map(const struct stepper_env *env, double i,
                                    double *gi, double *gp, double *vout)
{
	const struct problem *pb = &env->pb;
	double v;
	if (env->o.order == ORDER_VOLTAGE_FROM_LINE) {
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

/* Start a relaxed path. */
static int relaxed_set(void *state, const struct stepper_env *env,
                       struct trace_row *r0, enum step_status *st)
{
	struct relaxed_state *rs = state;
	rs->last_di = NAN;
	rs->omega_used = NAN;
	return stepper_projection_start(env, r0, st);
}

/* One relaxed step. */
static enum step_status relaxed_iterate(void *state,
                                        const struct stepper_env *env,
                                        const struct trace_row *p,
                                        struct trace_row *row)
{
	struct relaxed_state *rs = state;
	double gi, gp, v;
	*row = *p;
	row->k = p->k + 1;
	enum step_status st = relaxed_map(env, p->i, &gi, &gp, &v);
	if (st != STEP_CONTINUE)
		return st;
	double w = env->o.omega;
	if (!(w > 0.0))
		w = isfinite(gp) && gp != 1.0 ? 1.0 / (1.0 - gp) : 1.0;
	rs->omega_used = w;
	double inew = p->i + w * (gi - p->i);
	double d = inew - p->i;
	row->i = inew;
	if (env->o.order == ORDER_VOLTAGE_FROM_LINE) {
		row->v = source_line_voltage(&env->pb.src, inew);
		row->on = ON_LINE;
	} else {
		if (device_voltage(&env->pb.dev, inew, &row->v) != 0)
			return STEP_OUT_OF_DOMAIN;
		row->on = ON_DEVICE;
	}
	if (!isfinite(row->v) || !isfinite(row->i))
		return STEP_NON_FINITE;
	row->residual = problem_residual(&env->pb, row->v);
	row->step = fabs(d);
	stepper_track(d, rs->last_di, row);
	rs->last_di = d;
	return STEP_CONTINUE;
}

/* Converged when the current stops moving; diverging or stalled from the
 * tail of ratios. */
static enum step_status relaxed_test(const void *state,
                                     const struct stepper_env *env,
                                     const struct trace_row *rows, size_t n,
                                     double tol)
{
	(void)state;
	(void)env;
	if (n < 2)
		return STEP_CONTINUE;
	const struct trace_row *row = &rows[n - 1];
	/* The move times q / (1 - q) bounds the error of a contraction with
	 * rate q (as in the projection test). */
	double q = fabs(row->ratio), excess = 1.0;
	if (q > 0.5 && q < 1.0)
		excess = q / (1.0 - q);
	if (stepper_small(excess * row->step, row->i, tol, STEPPER_I_FLOOR))
		return STEP_CONVERGED;
	unsigned grow, stall;
	stepper_tail_counts(rows, n, &grow, &stall);
	if (grow >= STEPPER_GROW_LIMIT)
		return STEP_DIVERGING;
	if (stall >= STEPPER_STALL_LIMIT)
		return STEP_STALLED;
	return STEP_CONTINUE;
}

const struct stepper_type stepper_type_relaxed = {
	.name = "relaxed",
	.size = sizeof(struct relaxed_state),
	.set = relaxed_set,
	.iterate = relaxed_iterate,
	.test = relaxed_test,
};
