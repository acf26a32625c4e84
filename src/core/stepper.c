/*
 * stepper.c - the generic part of the stepped methods: names, the trace,
 * the status, and replay.
 *
 * Each method is a const struct stepper_type in its own file
 * (stepper_projection.c, stepper_relaxed.c, stepper_newton.c,
 * stepper_brent.c; see stepper_type.h).  This file allocates the method's
 * state, records the start row and every step, runs the method's test
 * after each step unless the caller steps with stepper_iterate and tests
 * for itself, and refuses to move a stopped stepper.  A path is a pure
 * function of the problem, the options and the caller's bracket, all kept
 * as given: rewinding starts again from them and replays the same steps,
 * bit for bit.
 */
#include "stepper.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "stepper_type.h"

struct stepper {
	struct stepper_env env;
	const struct stepper_type *type;
	void *state;             /* the method's state, type->size bytes */
	size_t state_cap;
	struct trace_row *rows;
	size_t n, cap;
	enum step_status status;
};

/* The method behind each name: METHOD_AUTO steps like Newton. */
static const struct stepper_type *const stepper_types[METHOD_COUNT] = {
	[METHOD_AUTO] = &stepper_type_newton,
	[METHOD_PROJECTION] = &stepper_type_projection,
	[METHOD_RELAXED] = &stepper_type_relaxed,
	[METHOD_NEWTON] = &stepper_type_newton,
	[METHOD_BRENT] = &stepper_type_brent,
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

/* |D| within TOL |X|, or below FLOOR. */
bool stepper_small(double d, double x, double tol, double floor_)
{
	return fabs(d) <= tol * fabs(x) || fabs(d) <= floor_;
}

/* The start voltage of the options: 0 V, inside every model's domain,
 * when automatic. */
double stepper_start_voltage(const struct stepper_env *env)
{
	return isnan(env->o.start_v) ? 0.0 : env->o.start_v;
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
	free(s->state);
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

/*
 * Start a new path for PB with O and the caller's bracket B (NULL: none),
 * keeping the trace's memory.
 */
static int stepper_start(struct stepper *s, const struct problem *pb,
                         const struct solve_options *o, const struct bracket *b)
{
	s->n = 0;
	s->type = NULL;
	s->env.pb = *pb;
	s->env.o = *o;
	s->env.have_bracket = b != NULL;
	if (b != NULL)
		s->env.bracket = *b;
	else
		memset(&s->env.bracket, 0, sizeof s->env.bracket);
	if (!(s->env.o.tol > 0.0))
		s->env.o.tol = 1e-12;
	if (s->env.o.max_steps == 0)
		s->env.o.max_steps = 200;
	s->status = STEP_CONTINUE;
	/* Nothing steps on parameters that were never checked valid. */
	if ((unsigned)o->method >= METHOD_COUNT ||
	    device_ready(&s->env.pb.dev, NULL, 0) != 0) {
		s->status = STEP_UNDEFINED;
		return -1;
	}
	const struct stepper_type *t = stepper_types[o->method];
	if (t->size > s->state_cap) {
		void *st = realloc(s->state, t->size);
		if (st == NULL) {
			s->status = STEP_NON_FINITE;
			return -1;
		}
		s->state = st;
		s->state_cap = t->size;
	}
	memset(s->state, 0, t->size);
	s->type = t;
	struct trace_row r0 = { .k = 0, .ratio = NAN, .step = NAN, .on = ON_START };
	enum step_status st = STEP_NON_FINITE;
	if (t->set(s->state, &s->env, &r0, &st) != 0) {
		s->status = st == STEP_CONTINUE ? STEP_NON_FINITE : st;
		return -1;
	}
	if (stepper_push(s, &r0) != 0) {
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
		s->n = 0;
		s->type = NULL;
		s->status = STEP_UNDEFINED;
		return -1;
	}
	return stepper_start(s, pb, o, b);
}

/* Advance one step without testing for convergence. */
enum step_status stepper_iterate(struct stepper *s)
{
	if (s->status != STEP_CONTINUE || s->n == 0 || s->type == NULL)
		return s->status;
	if (s->n > s->env.o.max_steps) {
		s->status = STEP_CAP;
		return s->status;
	}
	struct trace_row row;
	enum step_status st =
		s->type->iterate(s->state, &s->env, &s->rows[s->n - 1], &row);
	if (st == STEP_CONTINUE && stepper_push(s, &row) != 0)
		st = STEP_NON_FINITE;
	if (st != STEP_CONTINUE)
		s->status = st;
	return st;
}

/* The method's test on the path so far. */
enum step_status stepper_test(const struct stepper *s)
{
	if (s->status != STEP_CONTINUE || s->type == NULL || s->n == 0)
		return s->status;
	return s->type->test(s->state, &s->env, s->rows, s->n, s->env.o.tol);
}

/* Advance one step and test. */
enum step_status stepper_step(struct stepper *s)
{
	if (s->status != STEP_CONTINUE || s->n == 0)
		return s->status;
	enum step_status st = stepper_iterate(s);
	if (st != STEP_CONTINUE)
		return st;
	st = stepper_test(s);
	if (st == STEP_CONTINUE && s->n > s->env.o.max_steps)
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
	struct problem pb = s->env.pb;
	struct solve_options o = s->env.o;
	struct bracket b = s->env.bracket;
	bool have = s->env.have_bracket;
	if (stepper_start(s, &pb, &o, have ? &b : NULL) != 0)
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
	return &s->env.pb;
}

/* The options. */
const struct solve_options *stepper_options(const struct stepper *s)
{
	return &s->env.o;
}

/* The relaxation factor of the last relaxed step. */
double stepper_omega(const struct stepper *s)
{
	if (s->type != &stepper_type_relaxed || s->n == 0)
		return NAN;
	return stepper_relaxed_omega(s->state);
}
