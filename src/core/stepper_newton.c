/*
 * stepper_newton.c - safeguarded Newton-Raphson with junction limiting,
 * stepped one iteration at a time: kernel.h's Newton in the junction
 * variable (problem.h), inside the sign-change bracket the stepper finds
 * or is given.  Each step evaluates the residual and its slope at the
 * iterate, keeps the bracket, and moves; the trace shows the point moved
 * to.  The ratio column is dx_k / dx_{k-1}^2, which settles at Newton's
 * error constant f'' / 2f' when the convergence is quadratic.
 */
#include <math.h>

#include "kernel.h"
#include "stepper_type.h"

/* The Newton state. */
struct newton_state {
	struct problem_junction j;
	struct kernel_newton kn;
	enum kernel_status kst;
	double last_dx;
};

/* F and its Newton step F/F' in the junction variable. */
static double newton_eval(void *ctx, double x, double *step)
{
	const struct problem_junction *j = ctx;
	double f = problem_junction_residual(j, x);
	if (step != NULL)
		*step = f / problem_junction_slope(j, x);
	return f;
}

/* The model's limiting. */
static double newton_limit(void *ctx, double xnew, double xold)
{
	return problem_junction_limit(ctx, xnew, xold);
}

/*
 * Start inside the bracket: at the start voltage when it is given and
 * inside, else at the upper end (for a forward-biased junction the convex
 * side, from which Newton descends monotonically onto the root).
 */
static int newton_set(void *state, const struct stepper_env *env,
                      struct trace_row *r0, enum step_status *st)
{
	struct newton_state *ns = state;
	double lo, flo, hi, fhi;
	if (env->pb.dev.type->current == NULL) {
		*st = STEP_OUT_OF_DOMAIN;
		return -1;
	}
	problem_junction_init(&ns->j, &env->pb);
	if (stepper_find_bracket(env, &ns->j, &lo, &flo, &hi, &fhi) != 0) {
		*st = STEP_OUT_OF_DOMAIN;
		return -1;
	}
	kernel_newton_set(&ns->kn, lo, flo, hi, fhi, env->o.start_v);
	ns->kn.limit = newton_limit;
	ns->kn.limit_ctx = &ns->j;
	ns->kst = KERNEL_CONTINUE;
	ns->last_dx = NAN;
	stepper_junction_row(&ns->j, ns->kn.x, r0);
	r0->on = ON_START;
	return 0;
}

/* One safeguarded Newton step with limiting. */
static enum step_status newton_iterate(void *state,
                                       const struct stepper_env *env,
                                       const struct trace_row *p,
                                       struct trace_row *row)
{
	struct newton_state *ns = state;
	struct kernel_fn fn = { newton_eval, &ns->j };
	(void)env;
	ns->kst = kernel_newton_iterate(&ns->kn, &fn);
	double dx = ns->kn.dx;
	*row = *p;
	row->k = p->k + 1;
	stepper_junction_row(&ns->j, ns->kn.x, row);
	row->step = fabs(dx);
	row->ratio = (isnan(ns->last_dx) || ns->last_dx == 0.0)
	                 ? NAN
	                 : dx / (ns->last_dx * ns->last_dx);
	ns->last_dx = dx;
	if (!isfinite(row->v) || !isfinite(row->i))
		return STEP_NON_FINITE;
	return STEP_CONTINUE;
}

/* Converged on a zero residual, a step or a bracket below the tolerance. */
static enum step_status newton_test(const void *state,
                                    const struct stepper_env *env,
                                    const struct trace_row *rows, size_t n,
                                    double tol)
{
	const struct newton_state *ns = state;
	(void)env;
	(void)rows;
	if (n < 2)
		return STEP_CONTINUE;
	const struct kernel_newton *kn = &ns->kn;
	if (ns->kst == KERNEL_DONE ||
	    stepper_small(kn->dx, kn->x, tol, STEPPER_V_FLOOR) ||
	    kn->hi - kn->lo <= tol * fabs(kn->x))
		return STEP_CONVERGED;
	return STEP_CONTINUE;
}

const struct stepper_type stepper_type_newton = {
	.name = "newton",
	.size = sizeof(struct newton_state),
	.set = newton_set,
	.iterate = newton_iterate,
	.test = newton_test,
};
