/*
 * section_solver.c - the solver section: method, projection order, start
 * voltage ("auto" or a voltage), relaxation factor ("auto" = the optimal
 * factor from the slopes, or a number in (0, 2]), tolerance and step limit.
 */
#include <errno.h>
#include <limits.h>
#include <math.h>
#include <stddef.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "session/section.h"

/* Report that V is not one of the N names from NAME_OF, with a suggestion. */
static void solver_bad_name(struct load_ctx *c, const struct ynode *v,
                            const char *path, const char *const *names,
                            size_t n)
{
	char list[256] = "";
	size_t o = 0;
	for (size_t k = 0; k < n && o < sizeof list; k++)
		o += (size_t)snprintf(list + o, sizeof list - o, "%s%s", k ? ", " : "",
		                      names[k]);
	char found[96];
	ytree_describe(v, found, sizeof found);
	const char *near = section_suggest(v->text, names, n);
	if (near != NULL)
		ytree_error(c->err, c->name, v, path,
		            "found %s, expected one of: %s; did you mean '%s'?", found,
		            list, near);
	else
		ytree_error(c->err, c->name, v, path, "found %s, expected one of: %s",
		            found, list);
}

/* Load the method name. */
static int solver_load_method(struct load_ctx *c, const struct session_field *f,
                              const struct ynode *key, const struct ynode *v,
                              const char *path)
{
	(void)f;
	(void)key;
	if (section_need_scalar(c, v, path, "a method name") != 0)
		return -1;
	enum solve_method m;
	if (solve_method_from_name(v->text, &m) == 0) {
		c->s->solver.method = m;
		return 0;
	}
	const char *names[METHOD_COUNT];
	for (int k = 0; k < METHOD_COUNT; k++)
		names[k] = solve_method_name((enum solve_method)k);
	solver_bad_name(c, v, path, names, METHOD_COUNT);
	return -1;
}

/* Write the method name. */
static int solver_save_method(struct emit_ctx *e, const struct session_field *f,
                              const struct session *s)
{
	(void)f;
	return emit_scalar(e, solve_method_name(s->solver.method), true);
}

/* Load the projection order name. */
static int solver_load_order(struct load_ctx *c, const struct session_field *f,
                             const struct ynode *key, const struct ynode *v,
                             const char *path)
{
	(void)f;
	(void)key;
	if (section_need_scalar(c, v, path, "a projection order") != 0)
		return -1;
	enum projection_order o;
	if (projection_order_from_name(v->text, &o) == 0) {
		c->s->solver.order = o;
		return 0;
	}
	const char *names[ORDER_COUNT];
	for (int k = 0; k < ORDER_COUNT; k++)
		names[k] = projection_order_name((enum projection_order)k);
	solver_bad_name(c, v, path, names, ORDER_COUNT);
	return -1;
}

/* Write the projection order name. */
static int solver_save_order(struct emit_ctx *e, const struct session_field *f,
                             const struct session *s)
{
	(void)f;
	return emit_scalar(e, projection_order_name(s->solver.order), true);
}

/* Load a number that may be "auto" (stored as AUTO_VALUE). */
static int solver_load_auto(struct load_ctx *c, const struct session_field *f,
                            const struct ynode *v, const char *path,
                            double auto_value, double *out)
{
	if (v->type == YNODE_SCALAR && strcmp(v->text, "auto") == 0) {
		*out = auto_value;
		return 0;
	}
	return section_parse_qty(c, v, path, f->kind, f->min, f->max, f->min_open,
	                         f->max_open, out);
}

/* Load start_voltage: "auto" (NaN) or a voltage. */
static int solver_load_start(struct load_ctx *c, const struct session_field *f,
                             const struct ynode *key, const struct ynode *v,
                             const char *path)
{
	(void)key;
	return solver_load_auto(c, f, v, path, NAN, &c->s->solver.start_v);
}

/* Write start_voltage. */
static int solver_save_start(struct emit_ctx *e, const struct session_field *f,
                             const struct session *s)
{
	(void)f;
	if (isnan(s->solver.start_v))
		return emit_scalar(e, "auto", true);
	return emit_number(e, s->solver.start_v);
}

/* Load relaxation: "auto" (0, the optimal factor) or a number in (0, 2]. */
static int solver_load_relax(struct load_ctx *c, const struct session_field *f,
                             const struct ynode *key, const struct ynode *v,
                             const char *path)
{
	(void)key;
	return solver_load_auto(c, f, v, path, 0.0, &c->s->solver.omega);
}

/* Write relaxation. */
static int solver_save_relax(struct emit_ctx *e, const struct session_field *f,
                             const struct session *s)
{
	(void)f;
	if (s->solver.omega == 0.0)
		return emit_scalar(e, "auto", true);
	return emit_number(e, s->solver.omega);
}

/* Load step_limit: a whole number in range. */
static int solver_load_steps(struct load_ctx *c, const struct session_field *f,
                             const struct ynode *key, const struct ynode *v,
                             const char *path)
{
	(void)key;
	if (section_need_scalar(c, v, path, "a whole number of steps") != 0)
		return -1;
	char *end = NULL;
	errno = 0;
	const char *t = v->text;
	long long n = (t[0] >= '0' && t[0] <= '9') ? strtoll(t, &end, 10) : -1;
	if (end == NULL || end == t || *end != '\0' || errno == ERANGE ||
	    n < (long long)f->min || n > (long long)f->max) {
		char found[96];
		ytree_describe(v, found, sizeof found);
		ytree_error(c->err, c->name, v, path,
		            "found %s, expected a whole number of steps from %.0f to %.0f",
		            found, f->min, f->max);
		return -1;
	}
	c->s->solver.max_steps = (unsigned)n;
	return 0;
}

/* Write step_limit. */
static int solver_save_steps(struct emit_ctx *e, const struct session_field *f,
                             const struct session *s)
{
	(void)f;
	char buf[24];
	snprintf(buf, sizeof buf, "%u", s->solver.max_steps);
	return emit_scalar(e, buf, true);
}

static const struct session_field solver_fields[] = {
	{ .key = "method", .load = solver_load_method, .save = solver_save_method,
	  .help = "auto, projection, relaxed, newton or brent" },
	{ .key = "order", .load = solver_load_order, .save = solver_save_order,
	  .help = "projection order: voltage-from-line or voltage-from-device" },
	{ .key = "start_voltage", .load = solver_load_start,
	  .save = solver_save_start, .kind = QTY_VOLTAGE, .min = -1e9,
	  .max = 1e9, .help = "start voltage, or auto" },
	{ .key = "relaxation", .load = solver_load_relax,
	  .save = solver_save_relax, .kind = QTY_NUMBER, .min = 0.0, .max = 2.0,
	  .min_open = true,
	  .help = "relaxation factor in (0, 2], or auto for the optimal one" },
	{ .key = "tolerance", .load = field_load_qty, .save = field_save_qty,
	  .offset = offsetof(struct session, solver.tol), .kind = QTY_NUMBER,
	  .min = 0.0, .max = 0.1, .min_open = true,
	  .help = "relative tolerance, e.g. 1e-12" },
	{ .key = "step_limit", .load = solver_load_steps,
	  .save = solver_save_steps, .min = 1, .max = 1000000,
	  .help = "most steps before giving up" },
};

const struct session_section section_solver = {
	.key = "solver",
	.fields = solver_fields,
	.nfields = sizeof solver_fields / sizeof solver_fields[0],
};
