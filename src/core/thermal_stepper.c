/*
 * thermal_stepper.c - the thermal loop, one projection per step (see
 * thermal_stepper.h).
 */
#include "thermal_stepper.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "heat.h"
#include "thermal.h"

/* The path and what it runs on. */
struct thermal_stepper {
	struct problem pb;
	struct solve_options o;
	struct thermal_keys keys;
	double start;
	enum step_status status;
	struct thermal_row *rows;
	size_t n, cap;
};

/* Allocate a stepper. */
struct thermal_stepper *thermal_stepper_create(void)
{
	struct thermal_stepper *s = calloc(1, sizeof *s);
	if (s != NULL)
		s->status = STEP_UNDEFINED;
	return s;
}

/* Free S. */
void thermal_stepper_destroy(struct thermal_stepper *s)
{
	if (s == NULL)
		return;
	free(s->rows);
	free(s);
}

/* Append ROW; 0, or -1 when out of memory. */
static int thermal_stepper_push(struct thermal_stepper *s,
                                const struct thermal_row *row)
{
	if (s->n == s->cap) {
		size_t nc = s->cap ? 2 * s->cap : 64;
		struct thermal_row *nr = realloc(s->rows, nc * sizeof *nr);
		if (nr == NULL)
			return -1;
		s->rows = nr;
		s->cap = nc;
	}
	s->rows[s->n++] = *row;
	return 0;
}

/* The heat line's value at TJ. */
static double thermal_stepper_line(const struct thermal_stepper *s, double tj)
{
	const double *p = s->pb.dev.p;
	return (tj - p[s->keys.tamb]) / p[s->keys.theta];
}

/* Start a path (see thermal_stepper.h). */
int thermal_stepper_init(struct thermal_stepper *s, const struct problem *pb,
                         const struct solve_options *o, double start)
{
	s->n = 0;
	s->pb = *pb;
	s->o = *o;
	if (!thermal_active(&pb->dev) || !thermal_keys_of(pb->dev.type, &s->keys)) {
		s->status = STEP_UNDEFINED;
		return -1;
	}
	double ta = pb->dev.p[s->keys.tamb];
	s->start = isfinite(start) ? start : ta;
	struct thermal_row r = {
		.k = 0, .tj = s->start, .p = thermal_stepper_line(s, s->start),
		.v = NAN, .i = NAN, .step = NAN, .ratio = NAN, .on = ON_START,
	};
	if (thermal_stepper_push(s, &r) != 0) {
		s->status = STEP_UNDEFINED;
		return -1;
	}
	s->status = STEP_CONTINUE;
	return 0;
}

/* The status after the heat-line row LAST (a full step just ended). */
static enum step_status thermal_stepper_test(const struct thermal_stepper *s,
                                             const struct thermal_row *last)
{
	const double *p = s->pb.dev.p;
	double tol = s->o.tol > 0.0 ? s->o.tol : 1e-12;
	if (!isfinite(last->tj) || !isfinite(last->step))
		return STEP_NON_FINITE;
	if (fabs(last->step) <= tol * fmax(fabs(last->tj - HEAT_ZERO_C), 1.0))
		return STEP_CONVERGED;
	if (last->tj > p[s->keys.tjmax])
		return STEP_DIVERGING;
	/* A 2-cycle: back where it was two full steps ago, not converging. */
	if (s->n >= 5) {
		const struct thermal_row *before = &s->rows[s->n - 5];
		if (fabs(last->tj - before->tj) <=
		        1e-9 * fmax(fabs(last->tj - HEAT_ZERO_C), 1.0) &&
		    fabs(last->ratio + 1.0) < 1e-3)
			return STEP_CYCLING;
	}
	return STEP_CONTINUE;
}

/* One projection (see thermal_stepper.h). */
enum step_status thermal_stepper_step(struct thermal_stepper *s)
{
	if (s->status != STEP_CONTINUE || s->n == 0)
		return s->status;
	if (s->o.max_steps > 0 && s->n > s->o.max_steps)
		return s->status = STEP_CAP;
	const struct thermal_row *last = &s->rows[s->n - 1];
	struct thermal_row r = { .k = (unsigned)s->n, .step = NAN, .ratio = NAN };
	if (last->on != ON_DEVICE) {
		/* Vertical: the part at this Tj turns out P(Tj). */
		struct thermal_eval ev;
		if (thermal_eval_at(&s->pb, &s->o, last->tj, false, &ev) != 0)
			return s->status = STEP_OUT_OF_DOMAIN;
		r.tj = last->tj;
		r.p = ev.p;
		r.v = ev.pt.v;
		r.i = ev.pt.i;
		r.on = ON_DEVICE;
		if (!isfinite(r.p))
			s->status = STEP_NON_FINITE;
	} else {
		/* Horizontal: the heat flows out and sets the next Tj. */
		const double *p = s->pb.dev.p;
		r.tj = p[s->keys.tamb] + p[s->keys.theta] * last->p;
		r.p = last->p;
		r.v = last->v;
		r.i = last->i;
		r.on = ON_LINE;
		/* The previous heat-line (or start) row: one full step back. */
		const struct thermal_row *from = &s->rows[s->n - 2];
		r.step = r.tj - from->tj;
		if (isfinite(from->step) && from->step != 0.0)
			r.ratio = r.step / from->step;
	}
	if (thermal_stepper_push(s, &r) != 0)
		return s->status = STEP_NON_FINITE;
	if (s->status == STEP_CONTINUE && r.on == ON_LINE)
		s->status = thermal_stepper_test(s, &s->rows[s->n - 1]);
	return s->status;
}

/* The status now. */
enum step_status thermal_stepper_status(const struct thermal_stepper *s)
{
	return s->status;
}

/* Step to the end. */
enum step_status thermal_stepper_run(struct thermal_stepper *s)
{
	while (thermal_stepper_step(s) == STEP_CONTINUE)
		;
	return s->status;
}

/* Re-run up to N steps. */
enum step_status thermal_stepper_rewind(struct thermal_stepper *s, size_t n)
{
	if (s->n == 0)
		return s->status;
	if (thermal_stepper_init(s, &s->pb, &s->o, s->start) != 0)
		return s->status;
	while (s->n <= n && thermal_stepper_step(s) == STEP_CONTINUE)
		;
	return s->status;
}

/* The trace. */
const struct thermal_row *thermal_stepper_trace(const struct thermal_stepper *s,
                                                size_t *n)
{
	*n = s->n;
	return s->rows;
}

/* The newest row. */
const struct thermal_row *thermal_stepper_last(const struct thermal_stepper *s)
{
	return s->n > 0 ? &s->rows[s->n - 1] : NULL;
}

/* The problem. */
const struct problem *thermal_stepper_problem(const struct thermal_stepper *s)
{
	return &s->pb;
}
