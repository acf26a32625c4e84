/*
 * section_analysis.c - the target, ratings and tolerances sections, and
 * how they become design requests and tolerance cases.
 */
#include <ctype.h>
#include <math.h>
#include <stddef.h>
#include <stdio.h>
#include <string.h>

#include "core/paramref.h"
#include "session/analysis.h"
#include "session/section_analysis.h"
#include "session/section_network.h"

/* Fill A with "nothing given". */
void session_analysis_init(struct session_analysis *a)
{
	memset(a, 0, sizeof *a);
	a->target.current = a->target.voltage = a->target.power = NAN;
	a->target.solve_for = DESIGN_FOR_RS;
	a->target.series = ESERIES_E24;
	a->target.current_min = a->target.current_max = NAN;
	a->target.voltage_min = a->target.voltage_max = NAN;
	ratings_init(&a->ratings);
}

/* True when doubles X and Y have the same bits. */
static bool analysis_same(double x, double y)
{
	return memcmp(&x, &y, sizeof x) == 0;
}

/* True when A and B are the same. */
bool session_analysis_equal(const struct session_analysis *a,
                            const struct session_analysis *b)
{
	const struct session_target *p = &a->target, *q = &b->target;
	if (!analysis_same(p->current, q->current) ||
	    !analysis_same(p->voltage, q->voltage) ||
	    !analysis_same(p->power, q->power) || p->solve_for != q->solve_for ||
	    p->series != q->series ||
	    !analysis_same(p->current_min, q->current_min) ||
	    !analysis_same(p->current_max, q->current_max) ||
	    !analysis_same(p->voltage_min, q->voltage_min) ||
	    !analysis_same(p->voltage_max, q->voltage_max))
		return false;
	const struct ratings *r = &a->ratings, *t = &b->ratings;
	if (!analysis_same(r->device_max_power, t->device_max_power) ||
	    !analysis_same(r->device_max_current, t->device_max_current) ||
	    !analysis_same(r->resistor_power, t->resistor_power) ||
	    !analysis_same(r->ambient_temperature, t->ambient_temperature))
		return false;
	if (a->ntol != b->ntol)
		return false;
	for (size_t k = 0; k < a->ntol; k++) {
		const struct session_tolerance *x = &a->tol[k], *y = &b->tol[k];
		if (strcmp(x->key, y->key) != 0 || x->form != y->form ||
		    x->dist != y->dist || !analysis_same(x->a, y->a) ||
		    !analysis_same(x->b, y->b))
			return false;
	}
	return true;
}

/* ---- target ---------------------------------------------------------- */

/* Load solve_for: rs or vs. */
static int target_load_solve_for(struct load_ctx *c,
                                 const struct session_field *f,
                                 const struct ynode *key, const struct ynode *v,
                                 const char *path)
{
	(void)f;
	(void)key;
	if (section_need_scalar(c, v, path, "rs or vs") != 0)
		return -1;
	if (strcmp(v->text, "rs") == 0) {
		c->s->analysis.target.solve_for = DESIGN_FOR_RS;
	} else if (strcmp(v->text, "vs") == 0) {
		c->s->analysis.target.solve_for = DESIGN_FOR_VS;
	} else {
		char found[96];
		ytree_describe(v, found, sizeof found);
		ytree_error(c->err, c->name, v, path, "found %s, expected rs or vs",
		            found);
		return -1;
	}
	return 0;
}

/* Write solve_for. */
static int target_save_solve_for(struct emit_ctx *e,
                                 const struct session_field *f,
                                 const struct session *s)
{
	(void)f;
	return emit_scalar(e, s->analysis.target.solve_for == DESIGN_FOR_VS ? "vs"
	                                                                    : "rs",
	                   true);
}

/* solve_for is written when it is not the default. */
static bool target_present_solve_for(const struct session_field *f,
                                     const struct session *s)
{
	(void)f;
	return s->analysis.target.solve_for != DESIGN_FOR_RS;
}

/* Load series: E6 ... E192. */
static int target_load_series(struct load_ctx *c, const struct session_field *f,
                              const struct ynode *key, const struct ynode *v,
                              const char *path)
{
	(void)f;
	(void)key;
	if (section_need_scalar(c, v, path, "a series name (E6 ... E192)") != 0)
		return -1;
	if (eseries_from_name(v->text, &c->s->analysis.target.series) == 0)
		return 0;
	char found[96];
	ytree_describe(v, found, sizeof found);
	ytree_error(c->err, c->name, v, path,
	            "found %s, expected E6, E12, E24, E48, E96 or E192", found);
	return -1;
}

/* Write series. */
static int target_save_series(struct emit_ctx *e, const struct session_field *f,
                              const struct session *s)
{
	(void)f;
	return emit_scalar(e, eseries_name(s->analysis.target.series), true);
}

/* series is written when it is not the default. */
static bool target_present_series(const struct session_field *f,
                                  const struct session *s)
{
	(void)f;
	return s->analysis.target.series != ESERIES_E24;
}

/* Field indices of the target section. */
enum {
	TGT_CURRENT, TGT_VOLTAGE, TGT_POWER, TGT_SOLVE_FOR, TGT_SERIES,
	TGT_CURRENT_MIN, TGT_CURRENT_MAX, TGT_VOLTAGE_MIN, TGT_VOLTAGE_MAX,
	TGT_NFIELDS
};

/* At most one target; each window's minimum below its maximum. */
static int target_finish(struct load_ctx *c, const struct session_section *sec,
                         const struct ynode *key, const struct ynode *map,
                         const struct ynode *const *found,
                         const struct ynode *const *foundkey, const char *path)
{
	(void)sec;
	(void)key;
	(void)map;
	(void)found;
	int n = 0;
	const struct ynode *second = NULL;
	for (int k = TGT_CURRENT; k <= TGT_POWER; k++)
		if (foundkey[k] != NULL && n++ == 1)
			second = foundkey[k];
	if (n > 1) {
		ytree_error(c->err, c->name, second, path,
		            "found %d targets, expected one of current, voltage or "
		            "power", n);
		return -1;
	}
	const struct session_target *t = &c->s->analysis.target;
	if ((t->current_min >= t->current_max) ||
	    (t->voltage_min >= t->voltage_max)) {
		const struct ynode *at = t->current_min >= t->current_max
		                             ? foundkey[TGT_CURRENT_MIN]
		                             : foundkey[TGT_VOLTAGE_MIN];
		ytree_error(c->err, c->name, at, path,
		            "found a window minimum at or above its maximum, expected "
		            "min < max");
		return -1;
	}
	return 0;
}

static const struct session_field target_fields[TGT_NFIELDS] = {
	[TGT_CURRENT] = { .key = "current", .load = field_load_qty,
	                  .save = field_save_qty, .present = field_present_finite,
	                  .offset = offsetof(struct session, analysis.target.current),
	                  .kind = QTY_CURRENT, .min = -1e6, .max = 1e6,
	                  .help = "target device current in amperes" },
	[TGT_VOLTAGE] = { .key = "voltage", .load = field_load_qty,
	                  .save = field_save_qty, .present = field_present_finite,
	                  .offset = offsetof(struct session, analysis.target.voltage),
	                  .kind = QTY_VOLTAGE, .min = -1e9, .max = 1e9,
	                  .help = "target device voltage in volts" },
	[TGT_POWER] = { .key = "power", .load = field_load_qty,
	                .save = field_save_qty, .present = field_present_finite,
	                .offset = offsetof(struct session, analysis.target.power),
	                .kind = QTY_POWER, .min = 0.0, .max = 1e9,
	                .min_open = true,
	                .help = "target device power in watts" },
	[TGT_SOLVE_FOR] = { .key = "solve_for", .load = target_load_solve_for,
	                    .save = target_save_solve_for,
	                    .present = target_present_solve_for,
	                    .help = "what the design changes: rs (default) or vs" },
	[TGT_SERIES] = { .key = "series", .load = target_load_series,
	                 .save = target_save_series,
	                 .present = target_present_series,
	                 .help = "standard resistor series, E6 ... E192 "
	                         "(default E24)" },
	[TGT_CURRENT_MIN] = { .key = "current_min", .load = field_load_qty,
	                      .save = field_save_qty,
	                      .present = field_present_finite,
	                      .offset = offsetof(struct session,
	                                         analysis.target.current_min),
	                      .kind = QTY_CURRENT, .min = -1e6, .max = 1e6,
	                      .help = "lowest acceptable current (yield)" },
	[TGT_CURRENT_MAX] = { .key = "current_max", .load = field_load_qty,
	                      .save = field_save_qty,
	                      .present = field_present_finite,
	                      .offset = offsetof(struct session,
	                                         analysis.target.current_max),
	                      .kind = QTY_CURRENT, .min = -1e6, .max = 1e6,
	                      .help = "highest acceptable current (yield)" },
	[TGT_VOLTAGE_MIN] = { .key = "voltage_min", .load = field_load_qty,
	                      .save = field_save_qty,
	                      .present = field_present_finite,
	                      .offset = offsetof(struct session,
	                                         analysis.target.voltage_min),
	                      .kind = QTY_VOLTAGE, .min = -1e9, .max = 1e9,
	                      .help = "lowest acceptable voltage (yield)" },
	[TGT_VOLTAGE_MAX] = { .key = "voltage_max", .load = field_load_qty,
	                      .save = field_save_qty,
	                      .present = field_present_finite,
	                      .offset = offsetof(struct session,
	                                         analysis.target.voltage_max),
	                      .kind = QTY_VOLTAGE, .min = -1e9, .max = 1e9,
	                      .help = "highest acceptable voltage (yield)" },
};

const struct session_section section_target = {
	.key = "target",
	.fields = target_fields,
	.nfields = TGT_NFIELDS,
	.finish = target_finish,
};

/* ---- ratings --------------------------------------------------------- */

static const struct session_field ratings_fields[] = {
	{ .key = "device_max_power", .load = field_load_qty,
	  .save = field_save_qty, .present = field_present_finite,
	  .offset = offsetof(struct session, analysis.ratings.device_max_power),
	  .kind = QTY_POWER, .min = 0.0, .max = 1e9, .min_open = true,
	  .help = "the device's maximum dissipation in watts" },
	{ .key = "device_max_current", .load = field_load_qty,
	  .save = field_save_qty, .present = field_present_finite,
	  .offset = offsetof(struct session, analysis.ratings.device_max_current),
	  .kind = QTY_CURRENT, .min = 0.0, .max = 1e6, .min_open = true,
	  .help = "the device's maximum current in amperes" },
	{ .key = "resistor_power", .load = field_load_qty,
	  .save = field_save_qty, .present = field_present_finite,
	  .offset = offsetof(struct session, analysis.ratings.resistor_power),
	  .kind = QTY_POWER, .min = 0.0, .max = 1e9, .min_open = true,
	  .help = "the source resistor's power rating in watts" },
	{ .key = "ambient_temperature", .load = field_load_qty,
	  .save = field_save_qty, .present = field_present_finite,
	  .offset = offsetof(struct session,
	                     analysis.ratings.ambient_temperature),
	  .kind = QTY_TEMPERATURE, .min = -273.15, .max = 1000.0,
	  .min_open = true,
	  .help = "ambient temperature for the resistor's derating, degC" },
};

const struct session_section section_ratings = {
	.key = "ratings",
	.fields = ratings_fields,
	.nfields = sizeof ratings_fields / sizeof ratings_fields[0],
};

/* ---- tolerances ------------------------------------------------------ */

static const char *const tol_source_keys[] = { "vs", "rs", "is", "rp" };
static const enum qty_kind tol_source_units[] = { QTY_VOLTAGE, QTY_RESISTANCE,
                                                  QTY_CURRENT, QTY_RESISTANCE };

/* Most network part keys an unknown-key message lists. */
#define TOL_MAX_NETWORK_KEYS 24

/*
 * Whether source key K (an index of tol_source_keys) is one of the keys
 * S's source has: vs and rs for a Thevenin source, is and rp for a Norton
 * one (is alone for an ideal current source), none for a network
 * (core/paramref.h).
 */
static bool tol_source_has(const struct session *s, int k)
{
	if (s->network != NULL)
		return false;
	if (s->source.form == SOURCE_NORTON)
		return k == 2 || (k == 3 && isfinite(s->source.rp));
	return k < 2;
}

/*
 * The unit of tolerance key KEY for the session's source and device; -1 if
 * unknown.  A network source takes its parts' key paths
 * ("source.network.<part name>") instead of vs, rs, is and rp.
 */
static int tol_key_unit(const struct session *s, const char *key,
                        enum qty_kind *kind)
{
	long part = s->network != NULL ? session_network_find(s, key) : -1;
	if (part >= 0) {
		*kind = session_network_kind_unit(
		        network_part(s->network, (size_t)part)->kind);
		return 0;
	}
	for (int k = 0; k < 4; k++)
		if (tol_source_has(s, k) && strcmp(key, tol_source_keys[k]) == 0) {
			*kind = tol_source_units[k];
			return 0;
		}
	int idx = s->device.type ? model_param_index(s->device.type, key) : -1;
	if (idx < 0)
		return -1;
	*kind = s->device.type->params[idx].kind;
	return 0;
}

/* Report an unknown tolerance key K with a suggestion. */
static void tol_unknown_key(struct load_ctx *c, const struct ynode *k,
                            const char *path)
{
	const char *cands[4 + MODEL_MAX_PARAMS + TOL_MAX_NETWORK_KEYS];
	char netkeys[TOL_MAX_NETWORK_KEYS][SESSION_TOL_KEY_MAX];
	size_t n = 0;
	size_t nparts = c->s->network ? network_part_count(c->s->network) : 0;
	for (size_t j = 0; j < nparts && j < TOL_MAX_NETWORK_KEYS; j++) {
		snprintf(netkeys[j], sizeof netkeys[j], "%s%s", SESSION_NETWORK_PREFIX,
		         network_part(c->s->network, j)->name);
		cands[n++] = netkeys[j];
	}
	for (int j = 0; j < 4; j++)
		if (tol_source_has(c->s, j))
			cands[n++] = tol_source_keys[j];
	const struct model_type *t = c->s->device.type;
	for (size_t j = 0; t != NULL && j < t->nparams; j++)
		cands[n++] = t->params[j].key;
	char found[96], keys[1024] = "";
	size_t o = 0;
	for (size_t j = 0; j < n && o < sizeof keys; j++)
		o += (size_t)snprintf(keys + o, sizeof keys - o, "%s%s", j ? ", " : "",
		                      cands[j]);
	ytree_describe(k, found, sizeof found);
	const char *near = section_suggest(k->text, cands, n);
	bool source_key = false;
	for (int j = 0; j < 4; j++)
		source_key |= strcmp(k->text, tol_source_keys[j]) == 0;
	if (source_key && c->s->network == NULL)
		/* A key of the other form: say which keys this source has. */
		ytree_error(c->err, c->name, k, path,
		            "%s is not a key of this %s source; its keys: %s", found,
		            c->s->source.form == SOURCE_NORTON ? "Norton" : "Thevenin",
		            keys);
	else if (source_key)
		ytree_error(c->err, c->name, k, path,
		            "%s stands for the network's equivalent and cannot vary; "
		            "expected one of: %s", found, keys);
	else if (near != NULL)
		ytree_error(c->err, c->name, k, path,
		            "unknown parameter %s; did you mean '%s'?", found, near);
	else
		ytree_error(c->err, c->name, k, path,
		            "unknown parameter %s, expected one of: %s", found, keys);
}

/*
 * Parse a plus-minus scalar V for a parameter of unit KIND into T: "5%"
 * (per cent) or an amount in the unit (a plain number of degrees for a
 * temperature).  Returns 0 or -1.
 */
static int tol_parse_plus_minus(struct load_ctx *c, const struct ynode *v,
                                const char *path, enum qty_kind kind,
                                struct session_tolerance *t)
{
	if (section_need_scalar(c, v, path, "a tolerance (5% or an amount)") != 0)
		return -1;
	size_t len = strlen(v->text);
	while (len > 0 && isspace((unsigned char)v->text[len - 1]))
		len--;
	if (len > 0 && v->text[len - 1] == '%') {
		char num[64];
		double x;
		if (len - 1 >= sizeof num)
			goto bad;
		memcpy(num, v->text, len - 1);
		num[len - 1] = '\0';
		if (qty_parse(num, QTY_NUMBER, &x, NULL, 0) != QTY_OK ||
		    !(x >= 0.0 && x < 100.0))
			goto bad;
		t->form = SESSION_TOL_PERCENT;
		t->a = x;
		return 0;
	}
	enum qty_kind k = kind == QTY_TEMPERATURE ? QTY_NUMBER : kind;
	if (section_parse_qty(c, v, path, k, 0.0, 1e15, false, false, &t->a) != 0)
		return -1;
	t->form = SESSION_TOL_ABSOLUTE;
	return 0;
bad:;
	char found[96];
	ytree_describe(v, found, sizeof found);
	ytree_error(c->err, c->name, v, path,
	            "found %s, expected a per cent from 0%% up to (not including) "
	            "100%%, or an amount in %s", found,
	            kind == QTY_TEMPERATURE ? "degrees" : qty_unit_ascii(kind));
	return -1;
}

/* Parse the mapping form of a tolerance. */
static int tol_parse_map(struct load_ctx *c, const struct ynode *v,
                         const char *path, enum qty_kind kind,
                         struct session_tolerance *t)
{
	static const char *const keys[] = { "plus_minus", "min", "max",
	                                     "distribution" };
	const struct ynode *got[4] = { NULL }, *gotkey[4] = { NULL };
	char sub[SECTION_PATH_MAX];
	for (size_t k = 0; k + 1 < v->nkids; k += 2) {
		const struct ynode *kn = v->kids[k];
		int j = 0;
		while (j < 4 && (kn->type != YNODE_SCALAR ||
		                 strcmp(kn->text, keys[j]) != 0))
			j++;
		char found[96];
		ytree_describe(kn, found, sizeof found);
		if (j == 4) {
			const char *near = kn->type == YNODE_SCALAR
			                       ? section_suggest(kn->text, keys, 4)
			                       : NULL;
			ytree_error(c->err, c->name, kn, path,
			            "unknown key %s%s%s%s, expected plus_minus, or min "
			            "and max, and optionally distribution", found,
			            near ? " (did you mean '" : "", near ? near : "",
			            near ? "'?)" : "");
			return -1;
		}
		if (gotkey[j] != NULL) {
			section_path(sub, sizeof sub, path, keys[j]);
			ytree_error(c->err, c->name, kn, sub,
			            "duplicate key (first given on line %u), expected "
			            "each key once", gotkey[j]->line);
			return -1;
		}
		gotkey[j] = kn;
		got[j] = v->kids[k + 1];
	}
	bool pm = got[0] != NULL, range = got[1] != NULL || got[2] != NULL;
	if (pm == range || (range && (got[1] == NULL || got[2] == NULL))) {
		ytree_error(c->err, c->name, v, path,
		            "expected either plus_minus, or both min and max");
		return -1;
	}
	if (pm) {
		section_path(sub, sizeof sub, path, "plus_minus");
		if (tol_parse_plus_minus(c, got[0], sub, kind, t) != 0)
			return -1;
	} else {
		section_path(sub, sizeof sub, path, "min");
		if (section_parse_qty(c, got[1], sub, kind, -1e15, 1e15, false, false,
		                      &t->a) != 0)
			return -1;
		section_path(sub, sizeof sub, path, "max");
		if (section_parse_qty(c, got[2], sub, kind, -1e15, 1e15, false, false,
		                      &t->b) != 0)
			return -1;
		if (!(t->a <= t->b)) {
			ytree_error(c->err, c->name, got[2], sub,
			            "found a maximum below the minimum, expected "
			            "min <= max");
			return -1;
		}
		t->form = SESSION_TOL_RANGE;
	}
	t->dist = TOL_UNIFORM;
	if (got[3] != NULL) {
		section_path(sub, sizeof sub, path, "distribution");
		if (section_need_scalar(c, got[3], sub, "uniform or normal") != 0)
			return -1;
		if (tol_dist_from_name(got[3]->text, &t->dist) != 0) {
			char found[96];
			ytree_describe(got[3], found, sizeof found);
			ytree_error(c->err, c->name, got[3], sub,
			            "found %s, expected uniform or normal", found);
			return -1;
		}
	}
	return 0;
}

/* Load the tolerances: one entry per parameter key, in file order. */
static int tol_load(struct load_ctx *c, const struct session_section *sec,
                    const struct ynode *key, const struct ynode *map,
                    const char *path)
{
	(void)sec;
	(void)key;
	struct session_analysis *a = &c->s->analysis;
	char sub[SECTION_PATH_MAX];
	a->ntol = 0;
	for (size_t k = 0; k + 1 < map->nkids; k += 2) {
		const struct ynode *kn = map->kids[k], *v = map->kids[k + 1];
		char found[96];
		if (kn->type != YNODE_SCALAR) {
			ytree_describe(kn, found, sizeof found);
			ytree_error(c->err, c->name, kn, path,
			            "found %s as a key, expected a parameter key", found);
			return -1;
		}
		section_path(sub, sizeof sub, path, kn->text);
		enum qty_kind kind;
		if (tol_key_unit(c->s, kn->text, &kind) != 0) {
			tol_unknown_key(c, kn, sub);
			return -1;
		}
		for (size_t j = 0; j < a->ntol; j++)
			if (strcmp(a->tol[j].key, kn->text) == 0) {
				ytree_error(c->err, c->name, kn, sub,
				            "duplicate key, expected each parameter once");
				return -1;
			}
		if (a->ntol >= TOL_MAX_ITEMS) {
			ytree_error(c->err, c->name, kn, sub,
			            "found more than %d tolerances, expected at most %d",
			            TOL_MAX_ITEMS, TOL_MAX_ITEMS);
			return -1;
		}
		struct session_tolerance t = { .dist = TOL_UNIFORM };
		snprintf(t.key, sizeof t.key, "%s", kn->text);
		int rc = v->type == YNODE_MAPPING
		             ? tol_parse_map(c, v, sub, kind, &t)
		             : tol_parse_plus_minus(c, v, sub, kind, &t);
		if (rc != 0)
			return -1;
		a->tol[a->ntol++] = t;
	}
	return 0;
}

/* Write a plus-minus amount: "5%" or a number. */
static int tol_save_plus_minus(struct emit_ctx *e,
                               const struct session_tolerance *t)
{
	if (t->form == SESSION_TOL_ABSOLUTE)
		return emit_number(e, t->a);
	char buf[48];
	emit_number_text(buf, sizeof buf - 1, t->a);   /* 10%, not 1e+01% */
	strcat(buf, "%");
	return emit_scalar(e, buf, true);
}

/* Write the tolerances. */
static int tol_save(struct emit_ctx *e, const struct session_section *sec,
                    const struct session *s)
{
	(void)sec;
	const struct session_analysis *a = &s->analysis;
	if (emit_mapping_start(e, false) != 0)
		return -1;
	for (size_t k = 0; k < a->ntol; k++) {
		const struct session_tolerance *t = &a->tol[k];
		if (emit_scalar(e, t->key, true) != 0)
			return -1;
		if (t->form != SESSION_TOL_RANGE && t->dist == TOL_UNIFORM) {
			if (tol_save_plus_minus(e, t) != 0)
				return -1;
			continue;
		}
		if (emit_mapping_start(e, true) != 0)
			return -1;
		if (t->form == SESSION_TOL_RANGE) {
			if (emit_scalar(e, "min", true) != 0 || emit_number(e, t->a) != 0 ||
			    emit_scalar(e, "max", true) != 0 || emit_number(e, t->b) != 0)
				return -1;
		} else if (emit_scalar(e, "plus_minus", true) != 0 ||
		           tol_save_plus_minus(e, t) != 0) {
			return -1;
		}
		if (t->dist != TOL_UNIFORM &&
		    (emit_scalar(e, "distribution", true) != 0 ||
		     emit_scalar(e, tol_dist_name(t->dist), true) != 0))
			return -1;
		if (emit_mapping_end(e) != 0)
			return -1;
	}
	return emit_mapping_end(e);
}

/* The tolerances section is written when it has entries. */
bool section_tolerances_present(const struct session_field *f,
                                const struct session *s)
{
	(void)f;
	return s->analysis.ntol > 0;
}

const struct session_section section_tolerances = {
	.key = "tolerances",
	.fields = NULL,
	.nfields = 0,
	.load = tol_load,
	.save = tol_save,
};

/* ---- from the session to the core ------------------------------------ */

/* The design request of S's target. */
int session_design_request(const struct session *s, struct design_request *rq)
{
	const struct session_target *t = &s->analysis.target;
	if (!isnan(t->current)) {
		rq->target = DESIGN_CURRENT;
		rq->value = t->current;
	} else if (!isnan(t->voltage)) {
		rq->target = DESIGN_VOLTAGE;
		rq->value = t->voltage;
	} else if (!isnan(t->power)) {
		rq->target = DESIGN_POWER;
		rq->value = t->power;
	} else {
		return -1;
	}
	rq->unknown = t->solve_for;
	rq->series = t->series;
	return 0;
}

/* The tolerance case of S on PB. */
int session_tolerance_case(const struct session *s, const struct problem *pb,
                           struct tol_case *c, char *err, size_t errlen)
{
	tol_case_init(c, pb, s->source.form, &s->solver);
	for (size_t k = 0; k < s->analysis.ntol; k++) {
		const struct session_tolerance *t = &s->analysis.tol[k];
		struct paramref r;
		char why[400];
		if (paramref_find(pb, t->key, &r, why, sizeof why) != 0) {
			snprintf(err, errlen, "tolerances.%s: %s", t->key, why);
			return -1;
		}
		double x = paramref_get(pb, &r), lo, hi;
		switch (t->form) {
		case SESSION_TOL_PERCENT:
			lo = x - fabs(x) * t->a / 100.0;
			hi = x + fabs(x) * t->a / 100.0;
			break;
		case SESSION_TOL_ABSOLUTE:
			lo = x - t->a;
			hi = x + t->a;
			break;
		default:
			lo = t->a;
			hi = t->b;
			break;
		}
		if (tol_case_add(c, t->key, lo, hi, t->dist, why, sizeof why) != 0) {
			snprintf(err, errlen, "tolerances.%s", why);
			return -1;
		}
	}
	return 0;
}

/* The spec windows of S's target. */
size_t session_target_windows(const struct session *s, struct tol_window *w)
{
	const struct session_target *t = &s->analysis.target;
	size_t n = 0;
	if (!isnan(t->current_min) || !isnan(t->current_max))
		w[n++] = (struct tol_window){ TOL_CURRENT, t->current_min,
		                              t->current_max };
	if (!isnan(t->voltage_min) || !isnan(t->voltage_max))
		w[n++] = (struct tol_window){ TOL_VOLTAGE, t->voltage_min,
		                              t->voltage_max };
	return n;
}

/* The worst case of each row of a design. */
int session_design_worst(const struct session *s, const struct problem *pb,
                         const struct design_request *rq,
                         struct design_result *res, char *err, size_t errlen)
{
	return session_design_worst_watched(s, pb, rq, res, err, errlen, NULL);
}

/* Row K of N of a design's worst cases: its fraction within the whole. */
struct session_rows_progress {
	const struct progress *outer;
	size_t k, n;
};

/* Report a row's fraction DONE as a fraction of all rows. */
static void session_rows_report(void *ctx, double done)
{
	const struct session_rows_progress *p = ctx;
	p->outer->report(p->outer->ctx, done < 0.0 ? -1.0
	                 : ((double)p->k + done) / (double)p->n);
}

/* The worst case of each row, watched. */
int session_design_worst_watched(const struct session *s,
                                 const struct problem *pb,
                                 const struct design_request *rq,
                                 struct design_result *res, char *err,
                                 size_t errlen, const struct progress *pr)
{
	if (s->analysis.ntol == 0) {
		snprintf(err, errlen, "no tolerances: section (e.g. tolerances: "
		         "{rs: 5%%, vs: 10%%})");
		return -1;
	}
	for (size_t k = 0; k < res->nrows; k++) {
		struct design_row *r = &res->rows[k];
		struct problem q;
		struct tol_case c;
		if (!r->solved || design_apply_request(pb, rq, r->value, &q) != 0)
			continue;
		/* The tolerances around the row's own value. */
		if (session_tolerance_case(s, &q, &c, err, errlen) != 0)
			return -1;
		struct session_rows_progress rp = { pr, k, res->nrows };
		struct progress inner = { pr != NULL ? pr->stop : NULL,
		                          pr != NULL && pr->report != NULL
		                          ? session_rows_report : NULL, &rp };
		design_row_worst_watched(&c, &s->analysis.ratings, rq, &r->worst,
		                         &inner);
		if (progress_stopped(pr)) {
			snprintf(err, errlen, "stopped at row %zu of %zu", k + 1,
			         res->nrows);
			return -1;
		}
	}
	return 0;
}

/* The verdict at (V, I) with S's form, ratings and target. */
void session_verdict(const struct session *s, const struct problem *pb,
                     double v, double i, struct verdict *out)
{
	struct design_request rq;
	bool target = session_design_request(s, &rq) == 0;
	verdict_at(pb, s->source.form, v, i, &s->analysis.ratings,
	           target ? &rq : NULL, out);
}
