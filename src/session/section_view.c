/*
 * section_view.c - the view section: automatic or fixed axis ranges and a
 * zoom factor.
 */
#include <stddef.h>
#include <stdio.h>
#include <string.h>

#include "session/section.h"

/* Load autoscale: true or false (YAML 1.2 core schema spellings). */
static int view_load_bool(struct load_ctx *c, const struct session_field *f,
                          const struct ynode *key, const struct ynode *v,
                          const char *path)
{
	(void)key;
	bool *out = (bool *)(void *)((char *)c->s + f->offset);
	if (v->type == YNODE_SCALAR && v->plain) {
		if (strcmp(v->text, "true") == 0) {
			*out = true;
			return 0;
		}
		if (strcmp(v->text, "false") == 0) {
			*out = false;
			return 0;
		}
	}
	char found[96];
	ytree_describe(v, found, sizeof found);
	ytree_error(c->err, c->name, v, path, "found %s, expected true or false",
	            found);
	return -1;
}

/* Write a boolean. */
static int view_save_bool(struct emit_ctx *e, const struct session_field *f,
                          const struct session *s)
{
	const bool *b = (const bool *)(const void *)((const char *)s + f->offset);
	return emit_scalar(e, *b ? "true" : "false", true);
}

/* Load a range: a list of two finite quantities, the first below the second. */
static int view_load_range(struct load_ctx *c, const struct session_field *f,
                           const struct ynode *key, const struct ynode *v,
                           const char *path)
{
	(void)key;
	if (v->type != YNODE_SEQUENCE || v->nkids != 2) {
		char found[96];
		if (v->type == YNODE_SEQUENCE)
			snprintf(found, sizeof found, "a list of %zu values", v->nkids);
		else
			ytree_describe(v, found, sizeof found);
		ytree_error(c->err, c->name, v, path,
		            "found %s, expected a list of two values [min, max]", found);
		return -1;
	}
	double lo, hi;
	if (section_parse_qty(c, v->kids[0], path, f->kind, f->min, f->max, false,
	                      false, &lo) != 0 ||
	    section_parse_qty(c, v->kids[1], path, f->kind, f->min, f->max, false,
	                      false, &hi) != 0)
		return -1;
	if (!(lo < hi)) {
		char a[96], b[96];
		ytree_describe(v->kids[0], a, sizeof a);
		ytree_describe(v->kids[1], b, sizeof b);
		ytree_error(c->err, c->name, v, path,
		            "found [%s, %s], expected the minimum below the maximum",
		            a, b);
		return -1;
	}
	*field_double(c->s, f) = lo;
	*(double *)(void *)((char *)c->s + f->offset2) = hi;
	return 0;
}

/* Write a range as a flow list. */
static int view_save_range(struct emit_ctx *e, const struct session_field *f,
                           const struct session *s)
{
	double lo = *field_double_const(s, f);
	double hi = *(const double *)(const void *)((const char *)s + f->offset2);
	if (emit_sequence_start(e, true) != 0 || emit_number(e, lo) != 0 ||
	    emit_number(e, hi) != 0)
		return -1;
	return emit_sequence_end(e);
}

static const struct session_field view_fields[] = {
	{ .key = "autoscale", .load = view_load_bool, .save = view_save_bool,
	  .offset = offsetof(struct session, view.autoscale),
	  .help = "true: the axes follow the problem; false: the ranges below" },
	{ .key = "voltage_range", .load = view_load_range,
	  .save = view_save_range, .offset = offsetof(struct session, view.v_min),
	  .offset2 = offsetof(struct session, view.v_max),
	  .kind = QTY_VOLTAGE, .min = -1e12, .max = 1e12,
	  .help = "[min, max] of the voltage axis" },
	{ .key = "current_range", .load = view_load_range,
	  .save = view_save_range, .offset = offsetof(struct session, view.i_min),
	  .offset2 = offsetof(struct session, view.i_max),
	  .kind = QTY_CURRENT, .min = -1e12, .max = 1e12,
	  .help = "[min, max] of the current axis" },
	{ .key = "zoom", .load = field_load_qty, .save = field_save_qty,
	  .offset = offsetof(struct session, view.zoom), .kind = QTY_NUMBER,
	  .min = 0.0, .max = 1e6, .min_open = true,
	  .help = "zoom factor, 1 = the automatic frame" },
};

const struct session_section section_view = {
	.key = "view",
	.fields = view_fields,
	.nfields = sizeof view_fields / sizeof view_fields[0],
};
