/*
 * section_device.c - the device section: model: names a model in the
 * registry, and the other keys are that model's own parameter table
 * (key, unit, range, default, help), so a new model needs no loader code.
 * A model with named presets also takes preset:, applied before the keys.
 * A junction model with thermal_resistance above 0 heats itself
 * (core/thermal.h): its temperature is solved from ambient_temperature,
 * so temperature: is then an error and is not written back.
 * The measured model has no parameters but a table: points:, a list of
 * [V, I] pairs (see device_load_points), or points_file:, a two-column
 * V,I text file beside the session (points_file.h).
 */
#include <ctype.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "core/models/models.h"
#include "core/thermal.h"
#include "session/points_file.h"
#include "session/section.h"

/* True when TYPE is drawn from a table of points (device.curve). */
static bool device_has_points(const struct model_type *type)
{
	return type == &model_measured;
}

/* Report an unknown model name in V with a suggestion and the choices. */
static void device_unknown_model(struct load_ctx *c, const struct ynode *v,
                                 const char *path)
{
	const char *names[32];
	size_t n = 0;
	char list[256] = "";
	size_t o = 0;
	for (size_t k = 0; model_registry[k] != NULL && n < 32; k++) {
		names[n++] = model_registry[k]->name;
		if (o < sizeof list)
			o += (size_t)snprintf(list + o, sizeof list - o, "%s%s",
			                      k ? ", " : "", model_registry[k]->name);
	}
	char found[96];
	ytree_describe(v, found, sizeof found);
	const char *near = v->type == YNODE_SCALAR ? section_suggest(v->text, names, n)
	                                           : NULL;
	if (near != NULL)
		ytree_error(c->err, c->name, v, path,
		            "found %s, expected a model name (%s); did you mean '%s'?",
		            found, list, near);
	else
		ytree_error(c->err, c->name, v, path,
		            "found %s, expected a model name (%s)", found, list);
}

/* Report an unknown key K for model TYPE, suggesting a near key. */
static void device_unknown_key(struct load_ctx *c, const struct model_type *type,
                               const struct ynode *k, const char *path)
{
	const char *cands[MODEL_MAX_PARAMS + 5];
	size_t n = 0;
	cands[n++] = "model";
	if (type->presets != NULL)
		cands[n++] = "preset";
	if (device_has_points(type)) {
		cands[n++] = "points";
		cands[n++] = "points_file";
	}
	cands[n++] = "fitted_to";
	for (size_t j = 0; j < type->nparams; j++)
		cands[n++] = type->params[j].key;
	char found[96];
	ytree_describe(k, found, sizeof found);
	/* A key an earlier version took: say what to do instead. */
	for (const struct model_retired *r = type->retired;
	     r != NULL && r->key != NULL; r++)
		if (strcmp(k->text, r->key) == 0) {
			ytree_error(c->err, c->name, k, path,
			            "%s is no longer a key of the %s model: %s", found,
			            type->name, r->why);
			return;
		}
	const char *near = section_suggest(k->text, cands, n);
	if (near != NULL) {
		ytree_error(c->err, c->name, k, path,
		            "unknown key %s for the %s model; did you mean '%s'?",
		            found, type->name, near);
		return;
	}
	if (!device_has_points(type) && (strcmp(k->text, "points") == 0 ||
	                                 strcmp(k->text, "points_file") == 0)) {
		ytree_error(c->err, c->name, k, path,
		            "found %s, which only the measured model takes, expected "
		            "a parameter of the %s model", found, type->name);
		return;
	}
	for (size_t m = 0; model_registry[m] != NULL; m++)
		if (model_registry[m] != type &&
		    model_param_index(model_registry[m], k->text) >= 0) {
			ytree_error(c->err, c->name, k, path,
			            "found %s, a parameter of the %s model, expected a "
			            "parameter of the %s model", found,
			            model_registry[m]->name, type->name);
			return;
		}
	char keys[512] = "";
	size_t o = 0;
	for (size_t j = 0; j < n && o < sizeof keys; j++)
		o += (size_t)snprintf(keys + o, sizeof keys - o, "%s%s", j ? ", " : "",
		                      cands[j]);
	ytree_error(c->err, c->name, k, path,
	            "unknown key %s for the %s model, expected one of: %s", found,
	            type->name, keys);
}

/*
 * Apply the named preset in V to the device: the preset's values first,
 * then the keys given in the file override them.  The canonical form
 * (tidy) writes every value out and drops the preset name; a save into
 * the user's text (session_text.h) keeps it.
 */
static int device_apply_preset(struct load_ctx *c, const struct model_type *type,
                               const struct ynode *v, const char *path)
{
	char sub[SECTION_PATH_MAX];
	section_path(sub, sizeof sub, path, "preset");
	if (type->presets == NULL || type->apply_preset == NULL) {
		ytree_error(c->err, c->name, v, sub,
		            "the %s model has no presets, expected its parameters "
		            "instead", type->name);
		return -1;
	}
	if (section_need_scalar(c, v, sub, "a preset name") != 0)
		return -1;
	if (type->apply_preset(v->text, c->s->device.p) == 0)
		return 0;
	const char *names[32];
	size_t n = 0;
	char list[256] = "";
	size_t o = 0;
	for (; type->presets[n] != NULL && n < 32; n++) {
		names[n] = type->presets[n];
		if (o < sizeof list)
			o += (size_t)snprintf(list + o, sizeof list - o, "%s%s",
			                      n ? ", " : "", names[n]);
	}
	char found[96];
	ytree_describe(v, found, sizeof found);
	const char *near = section_suggest(v->text, names, n);
	if (near != NULL)
		ytree_error(c->err, c->name, v, sub,
		            "found %s, expected a preset of the %s model (%s); did "
		            "you mean '%s'?", found, type->name, list, near);
	else
		ytree_error(c->err, c->name, v, sub,
		            "found %s, expected a preset of the %s model (%s)", found,
		            type->name, list);
	return -1;
}

/*
 * Load points: V, a list of [V, I] pairs, into the session's table.  Each
 * value is a number or a quantity with its unit; a row that breaks the
 * strict rise in V or I is reported at its own line.
 */
static int device_load_points(struct load_ctx *c, const struct ynode *key,
                              const struct ynode *v, const char *path)
{
	char found[96];
	ytree_describe(v, found, sizeof found);
	if (v->type != YNODE_SEQUENCE) {
		ytree_error(c->err, c->name, v, path,
		            "found %s, expected a list of [V, I] pairs", found);
		return -1;
	}
	size_t n = v->nkids;
	if (n < 2) {
		ytree_error(c->err, c->name, n > 0 ? v : key, path,
		            "found %zu point%s, expected at least 2 [V, I] pairs", n,
		            n == 1 ? "" : "s");
		return -1;
	}
	if (n > CURVE_MAX_POINTS) {
		ytree_error(c->err, c->name, v->kids[CURVE_MAX_POINTS], path,
		            "found %zu points, expected at most %d", n,
		            CURVE_MAX_POINTS);
		return -1;
	}
	double *vs = malloc(2 * n * sizeof *vs);
	if (vs == NULL) {
		ytree_error(c->err, c->name, v, path, "out of memory");
		return -1;
	}
	double *is = vs + n;
	char sub[SECTION_PATH_MAX + 16];
	int rc = 0;
	for (size_t k = 0; k < n && rc == 0; k++) {
		const struct ynode *row = v->kids[k];
		snprintf(sub, sizeof sub, "%s[%zu]", path, k);
		if (row->type != YNODE_SEQUENCE || row->nkids != 2) {
			ytree_describe(row, found, sizeof found);
			ytree_error(c->err, c->name, row, sub,
			            "row %zu: found %s, expected a pair [V, I] of two "
			            "numbers", k + 1, found);
			rc = -1;
			break;
		}
		rc = section_parse_qty(c, row->kids[0], sub, QTY_VOLTAGE, -INFINITY,
		                       INFINITY, false, false, &vs[k]);
		if (rc == 0)
			rc = section_parse_qty(c, row->kids[1], sub, QTY_CURRENT,
			                       -INFINITY, INFINITY, false, false, &is[k]);
	}
	char why[256];
	if (rc == 0 &&
	    session_set_curve(c->s, vs, is, n, why, sizeof why) != 0) {
		/* the core names the row; find it again for its line */
		const struct ynode *at = v;
		for (size_t k = 1; k < n; k++)
			if (!(vs[k] > vs[k - 1]) || !(is[k] > is[k - 1])) {
				at = v->kids[k];
				break;
			}
		const char *msg = why;
		if (strncmp(msg, "points: ", 8) == 0)
			msg += 8;
		ytree_error(c->err, c->name, at, path, "%s", msg);
		rc = -1;
	}
	free(vs);
	return rc;
}

/*
 * Join the folder of the session file NAME with REL (kept as it is when
 * absolute or when NAME has no folder) into BUF; 0, or -1 when too long.
 */
static int device_points_path(const char *name, const char *rel, char *buf,
                              size_t n)
{
	const char *slash = strrchr(name, '/');
	int w;
	if (rel[0] == '/' || slash == NULL)
		w = snprintf(buf, n, "%s", rel);
	else
		w = snprintf(buf, n, "%.*s/%s", (int)(slash - name), name, rel);
	return w >= 0 && (size_t)w < n ? 0 : -1;
}

/*
 * Load fitted_to: FILE, the points file the device was fitted to (written
 * by 'biasline fit --into'; read by the front end's points view).  Only
 * the name is kept: the file is read when someone looks at it.
 */
static int device_load_fitted_to(struct load_ctx *c, const struct ynode *v,
                                 const char *path)
{
	if (section_need_scalar(c, v, path, "a file name") != 0)
		return -1;
	if (v->len == 0 || memchr(v->text, '\0', v->len) != NULL) {
		ytree_error(c->err, c->name, v, path,
		            "found an empty name, expected the points file's name");
		return -1;
	}
	char *t = malloc(v->len + 1);
	if (t == NULL) {
		ytree_error(c->err, c->name, v, path, "out of memory");
		return -1;
	}
	memcpy(t, v->text, v->len);
	t[v->len] = '\0';
	free(c->s->fitted_to);
	c->s->fitted_to = t;
	return 0;
}

/*
 * Load points_file: V, a table of V,I rows beside the session (the format
 * of points_file.h: comma, semicolon or tab separated, '#' comments, a
 * header with names and units), into the session's table.  Errors name
 * the points file, its line and column, and the row.
 */
static int device_load_points_file(struct load_ctx *c, const struct ynode *v,
                                   const char *path)
{
	if (section_need_scalar(c, v, path, "a file name") != 0)
		return -1;
	char file[1024], why[256];
	if (device_points_path(c->name, v->text, file, sizeof file) != 0) {
		ytree_error(c->err, c->name, v, path,
		            "the file name is too long, expected at most %zu bytes",
		            sizeof file - 1);
		return -1;
	}
	static const struct points_spec spec = {
		.ncols = 2,
		.role = { POINTS_VOLTAGE, POINTS_CURRENT },
		.max_rows = CURVE_MAX_POINTS,
	};
	struct points_table t;
	enum session_status st = points_file_read(file, path, &spec, &t, c->err);
	if (st == SESSION_NO_INPUT) {
		/* a file that cannot be read is the session's error, at its key,
		 * and missing input (66) as for the session file itself */
		char msg[sizeof c->err->message];
		memcpy(msg, c->err->message, sizeof msg);
		ytree_error(c->err, c->name, v, path, "%s: %s", file, msg);
		c->status = SESSION_NO_INPUT;
		return -1;
	}
	if (st != SESSION_OK)
		return -1;
	int rc = 0;
	if (t.n < 2) {
		ytree_error(c->err, c->name, v, path,
		            "%s holds %zu point%s, expected at least 2 V,I rows", file,
		            t.n, t.n == 1 ? "" : "s");
		rc = -1;
	}
	const double *vs = t.col[0], *is = t.col[1];
	if (rc == 0 &&
	    session_set_curve(c->s, vs, is, t.n, why, sizeof why) != 0) {
		/* the core names the row; find it again for its line */
		unsigned at = 0;
		for (size_t k = 1; k < t.n && at == 0; k++)
			if (!(vs[k] > vs[k - 1]) || !(is[k] > is[k - 1]))
				at = t.line[k];
		const char *msg = why;
		if (strncmp(msg, "points: ", 8) == 0)
			msg += 8;
		if (at > 0)
			ytree_error_at(c->err, file, at, 1, path, "%s", msg);
		else
			ytree_error(c->err, c->name, v, path, "%s", msg);
		rc = -1;
	}
	points_table_fini(&t);
	return rc;
}

/* Load the device: the model first, then its parameters in file order. */
static int device_load(struct load_ctx *c, const struct session_section *sec,
                       const struct ynode *key, const struct ynode *map,
                       const char *path)
{
	(void)sec;
	char sub[SECTION_PATH_MAX];
	const struct ynode *model = NULL, *modelkey = NULL;
	const struct ynode *preset = NULL, *presetkey = NULL;
	for (size_t k = 0; k + 1 < map->nkids; k += 2) {
		const struct ynode *kn = map->kids[k];
		if (kn->type != YNODE_SCALAR) {
			char found[96];
			ytree_describe(kn, found, sizeof found);
			ytree_error(c->err, c->name, kn, path,
			            "found %s as a key, expected a key name", found);
			return -1;
		}
		const struct ynode **slot = NULL, **slotkey = NULL;
		if (strcmp(kn->text, "model") == 0) {
			slot = &model;
			slotkey = &modelkey;
		} else if (strcmp(kn->text, "preset") == 0) {
			slot = &preset;
			slotkey = &presetkey;
		} else {
			continue;
		}
		section_path(sub, sizeof sub, path, kn->text);
		if (*slotkey != NULL) {
			ytree_error(c->err, c->name, kn, sub,
			            "duplicate key (first given on line %u), expected "
			            "each key once", (*slotkey)->line);
			return -1;
		}
		*slotkey = kn;
		*slot = map->kids[k + 1];
	}
	section_path(sub, sizeof sub, path, "model");
	if (model == NULL) {
		char list[256] = "";
		size_t o = 0;
		for (size_t k = 0; model_registry[k] != NULL && o < sizeof list; k++)
			o += (size_t)snprintf(list + o, sizeof list - o, "%s%s",
			                      k ? ", " : "", model_registry[k]->name);
		ytree_error(c->err, c->name, key != NULL ? key : map, sub,
		            "missing required key 'model' in device (one of: %s)",
		            list);
		return -1;
	}
	if (section_need_scalar(c, model, sub, "a model name") != 0)
		return -1;
	const struct model_type *type = model_find(model->text);
	if (type == NULL) {
		device_unknown_model(c, model, sub);
		return -1;
	}
	device_init(&c->s->device, type);
	if (preset != NULL && device_apply_preset(c, type, preset, path) != 0)
		return -1;

	const struct ynode *seen[MODEL_MAX_PARAMS] = { NULL };
	const struct ynode *pointskey = NULL, *fittedkey = NULL;
	for (size_t k = 0; k + 1 < map->nkids; k += 2) {
		const struct ynode *kn = map->kids[k];
		const struct ynode *v = map->kids[k + 1];
		if (kn == modelkey || kn == presetkey)
			continue;
		section_path(sub, sizeof sub, path, kn->text);
		bool inline_points = strcmp(kn->text, "points") == 0;
		if (device_has_points(type) &&
		    (inline_points || strcmp(kn->text, "points_file") == 0)) {
			if (pointskey != NULL) {
				bool same = strcmp(pointskey->text, kn->text) == 0;
				ytree_error(c->err, c->name, kn, sub,
				            same ? "duplicate key (first given on line %u), "
				                   "expected each key once"
				                 : "points given twice (points: or "
				                   "points_file: on line %u), expected one "
				                   "of the two", pointskey->line);
				return -1;
			}
			pointskey = kn;
			if ((inline_points ? device_load_points(c, kn, v, sub)
			                   : device_load_points_file(c, v, sub)) != 0)
				return -1;
			continue;
		}
		if (strcmp(kn->text, "fitted_to") == 0) {
			if (fittedkey != NULL) {
				ytree_error(c->err, c->name, kn, sub,
				            "duplicate key (first given on line %u), "
				            "expected each key once", fittedkey->line);
				return -1;
			}
			fittedkey = kn;
			if (device_load_fitted_to(c, v, sub) != 0)
				return -1;
			continue;
		}
		int j = model_param_index(type, kn->text);
		if (j < 0) {
			device_unknown_key(c, type, kn, sub);
			return -1;
		}
		if (seen[j] != NULL) {
			ytree_error(c->err, c->name, kn, sub,
			            "duplicate key (first given on line %u), expected "
			            "each key once", seen[j]->line);
			return -1;
		}
		seen[j] = kn;
		const struct model_param *mp = &type->params[j];
		double x;
		if (section_parse_qty(c, v, sub, mp->kind, -INFINITY, INFINITY, false,
		                      false, &x) != 0)
			return -1;
		char why[256];
		if (model_param_check(mp, x, why, sizeof why) != 0) {
			/* model_param_check names the key first; keep the rest */
			const char *msg = why;
			size_t kl = strlen(mp->key);
			if (strncmp(msg, mp->key, kl) == 0 && msg[kl] == ':')
				msg += kl + 1;
			while (*msg == ' ')
				msg++;
			char found[96];
			ytree_describe(v, found, sizeof found);
			ytree_error(c->err, c->name, v, sub, "found %s: %s", found, msg);
			return -1;
		}
		c->s->device.p[j] = x;
	}
	for (size_t j = 0; j < type->nparams; j++)
		if (seen[j] == NULL && isnan(c->s->device.p[j])) {
			section_path(sub, sizeof sub, path, type->params[j].key);
			ytree_error(c->err, c->name, key != NULL ? key : map, sub,
			            "missing required key '%s' for the %s model (%s)",
			            type->params[j].key, type->name, type->params[j].help);
			return -1;
		}
	if (device_has_points(type) && pointskey == NULL) {
		section_path(sub, sizeof sub, path, "points");
		ytree_error(c->err, c->name, key != NULL ? key : map, sub,
		            "missing required key 'points' for the %s model (a list "
		            "of at least 2 [V, I] pairs, or points_file: a V,I "
		            "file)", type->name);
		return -1;
	}
	/* A self-heated junction: its temperature is solved from the
	 * ambient, so a given one is a mistake, not a second opinion. */
	struct thermal_keys tk;
	if (thermal_active(&c->s->device) && thermal_keys_of(type, &tk)) {
		if (seen[tk.temp] != NULL) {
			section_path(sub, sizeof sub, path, "temperature");
			ytree_error(c->err, c->name, seen[tk.temp], sub,
			            "found a junction temperature with thermal_resistance "
			            "given: the junction temperature is then solved, so "
			            "give ambient_temperature instead");
			return -1;
		}
		thermal_normalise(&c->s->device);
	}
	char why[256];
	if (device_validate(&c->s->device, why, sizeof why) != 0) {
		ytree_error(c->err, c->name, key != NULL ? key : map, path, "%s", why);
		return -1;
	}
	return 0;
}

/* Write the device: the model, then every parameter in table order. */
static int device_save(struct emit_ctx *e, const struct session_section *sec,
                       const struct session *s)
{
	(void)sec;
	const struct model_type *type = s->device.type;
	if (type == NULL) {
		e->failed = true;
		ytree_error_at(e->err, "", 0, 0, "device.model",
		               "the session has no device model");
		return -1;
	}
	if (emit_mapping_start(e, false) != 0 || emit_scalar(e, "model", true) != 0 ||
	    emit_scalar(e, type->name, true) != 0)
		return -1;
	/* A self-heated junction's temperature is solved: not written. */
	struct thermal_keys tk;
	int solved = thermal_active(&s->device) && thermal_keys_of(type, &tk)
	             ? tk.temp : -1;
	for (size_t j = 0; j < type->nparams; j++)
		if ((int)j != solved &&
		    (emit_scalar(e, type->params[j].key, true) != 0 ||
		     emit_number(e, s->device.p[j]) != 0))
			return -1;
	const struct curve_data *cv = s->device.curve;
	if (device_has_points(type) && cv != NULL) {
		if (emit_scalar(e, "points", true) != 0 ||
		    emit_sequence_start(e, false) != 0)
			return -1;
		for (size_t k = 0; k < cv->n; k++)
			if (emit_sequence_start(e, true) != 0 ||
			    emit_number(e, cv->v[k]) != 0 ||
			    emit_number(e, cv->i[k]) != 0 || emit_sequence_end(e) != 0)
				return -1;
		if (emit_sequence_end(e) != 0)
			return -1;
	}
	if (s->fitted_to != NULL &&
	    (emit_scalar(e, "fitted_to", true) != 0 ||
	     emit_scalar(e, s->fitted_to, false) != 0))
		return -1;
	return emit_mapping_end(e);
}

const struct session_section section_device = {
	.key = "device",
	.load = device_load,
	.save = device_save,
};
