/*
 * stepper_brent.c - Brent-Dekker bracketing, stepped one evaluation at a
 * time: kernel.h's Brent in the junction variable (problem.h) on the
 * sign-change bracket the stepper finds or is given.  The trace shows the
 * best point so far after each evaluation.
 */
#include <float.h>
#include <math.h>

#include "kernel.h"
#include "stepper_type.h"

/* The Brent state. */
struct brent_state {
	struct problem_junction j;
	struct kernel_brent kb;
	enum kernel_status kst;
	double last_dx;
};

/* F in the junction variable. */
static double brent_eval(void *ctx, double x, double *step)
{
	if (step != NULL)
		*step = NAN;
	return problem_junction_residual(ctx, x);
}

/* Start Brent-Dekker on the bracket. */
static int brent_set(void *state, const struct stepper_env *env,
                     struct trace_row *r0, enum step_status *st)
{
	struct brent_state *bs = state;
	double lo, flo, hi, fhi;
	if (env->pb.dev.type->current == NULL) {
		*st = STEP_OUT_OF_DOMAIN;
		return -1;
	}
	problem_junction_init(&bs->j, &env->pb);
	if (stepper_find_bracket(env, &bs->j, &lo, &flo, &hi, &fhi) != 0) {
		*st = STEP_OUT_OF_DOMAIN;
		return -1;
	}
	/* The kernel narrows to rounding; the test below decides when the
	 * bracket is tight enough. */
	kernel_brent_set(&bs->kb, lo, flo, hi, fhi, 0.0, 0.0);
	bs->kst = KERNEL_CONTINUE;
	bs->last_dx = NAN;
	stepper_junction_row(&bs->j, bs->kb.b, r0);
	r0->on = ON_START;
	return 0;
}

/* One Brent-Dekker iteration. */
static enum step_status brent_iterate(void *state,
                                      const struct stepper_env *env,
                                      const struct trace_row *p,
                                      struct trace_row *row)
{
	struct brent_state *bs = state;
	struct kernel_fn fn = { brent_eval, &bs->j };
	(void)env;
	double bold = bs->kb.b;
	enum kernel_status ks = kernel_brent_iterate(&bs->kb, &fn);
	bs->kst = ks;
	if (ks == KERNEL_NONFINITE)
		return STEP_NON_FINITE;
	*row = *p;
	row->k = p->k + 1;
	stepper_junction_row(&bs->j, bs->kb.b, row);
	row->step = fabs(bs->kb.b - bold);
	row->ratio = (isnan(bs->last_dx) || bs->last_dx == 0.0)
	                 ? NAN
	                 : row->step / bs->last_dx;
	bs->last_dx = row->step;
	if (!isfinite(row->v) || !isfinite(row->i))
		return STEP_NON_FINITE;
	return STEP_CONTINUE;
}

/*
 * Converged on a zero residual, a bracket [b, c] that holds the
 * intersection within the tolerance in both V and I, or a bracket that
 * rounding will not let narrow further.  The currents across the bracket
 * follow from the residuals already known: on the device Ij = (F - x +
 * voc) / rt, on the line (voc - x) / rt; the intersection's current lies
 * between both pairs, so the narrower range bounds its distance.
 */
static enum step_status brent_test(const void *state,
                                   const struct stepper_env *env,
                                   const struct trace_row *rows, size_t n,
                                   double tol)
{
	const struct brent_state *bs = state;
	(void)rows;
	if (n < 2)
		return STEP_CONTINUE;
	const struct kernel_brent *kb = &bs->kb;
	if (kb->fb == 0.0 || bs->kst == KERNEL_DONE)
		return STEP_CONVERGED;
	double w = fabs(kb->c - kb->b);
	if (!(w <= (DBL_EPSILON + tol) * fabs(kb->b) + 2e-300))
		return STEP_CONTINUE;
	double rt = bs->j.rt;
	if (isinf(env->pb.src.r) || !(rt > 0.0))
		return STEP_CONVERGED;
	double ib = (kb->fb - kb->b + env->pb.src.voc) / rt;
	double di = fmin(fabs((kb->fc - kb->fb) - (kb->c - kb->b)), w) / rt;
	return di <= 0.5 * tol * fabs(ib) + 1e-300 ? STEP_CONVERGED
	                                           : STEP_CONTINUE;
}

const struct stepper_type stepper_type_brent = {
	.name = "brent",
	.size = sizeof(struct brent_state),
	.set = brent_set,
	.iterate = brent_iterate,
	.test = brent_test,
};
