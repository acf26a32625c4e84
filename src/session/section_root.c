/*
 * section_root.c - the top level of a session file: the format version,
 * the sections in canonical order, free notes, and the conditions section
 * (operating conditions that models with a matching parameter take over).
 */
#include <math.h>
#include <stddef.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "core/thermal.h"
#include "session/section.h"
#include "session/section_analysis.h"

/* Load format_version: an integer no higher than ours. */
static int root_load_version(struct load_ctx *c, const struct session_field *f,
                             const struct ynode *key, const struct ynode *v,
                             const char *path)
{
	(void)f;
	(void)key;
	if (section_need_scalar(c, v, path, "a format version number") != 0)
		return -1;
	char *end = NULL;
	long n = strtol(v->text, &end, 10);
	char found[96];
	ytree_describe(v, found, sizeof found);
	if (end == v->text || *end != '\0' || n < 1) {
		ytree_error(c->err, c->name, v, path,
		            "found %s, expected a whole number such as %d", found,
		            SESSION_FORMAT_VERSION);
		return -1;
	}
	if (n > SESSION_FORMAT_VERSION) {
		ytree_error(c->err, c->name, v, path,
		            "found format version %ld, expected %d or lower: the file "
		            "was written by a newer biasline; update biasline to read it",
		            n, SESSION_FORMAT_VERSION);
		return -1;
	}
	return 0;
}

/* Write format_version: always ours. */
static int root_save_version(struct emit_ctx *e, const struct session_field *f,
                             const struct session *s)
{
	(void)f;
	(void)s;
	char buf[16];
	snprintf(buf, sizeof buf, "%d", SESSION_FORMAT_VERSION);
	return emit_scalar(e, buf, true);
}

/* Load the notes: any text. */
static int root_load_notes(struct load_ctx *c, const struct session_field *f,
                           const struct ynode *key, const struct ynode *v,
                           const char *path)
{
	(void)f;
	(void)key;
	if (v->type != YNODE_SCALAR) {
		char found[96];
		ytree_describe(v, found, sizeof found);
		ytree_error(c->err, c->name, v, path, "found %s, expected text", found);
		return -1;
	}
	char *t = malloc(v->len + 1);
	if (t == NULL) {
		ytree_error(c->err, c->name, v, path, "out of memory");
		return -1;
	}
	memcpy(t, v->text, v->len + 1);
	free(c->s->notes);
	c->s->notes = t;
	return 0;
}

/* Write the notes. */
static int root_save_notes(struct emit_ctx *e, const struct session_field *f,
                           const struct session *s)
{
	(void)f;
	return emit_scalar(e, s->notes, false);
}

/* The notes are written when there are any. */
static bool root_present_notes(const struct session_field *f,
                               const struct session *s)
{
	(void)f;
	return s->notes != NULL;
}

/* Always written. */
static bool root_present_always(const struct session_field *f,
                                const struct session *s)
{
	(void)f;
	(void)s;
	return true;
}

/*
 * Fold conditions.temperature into the device's temperature parameter
 * when the model has one (its ambient_temperature when the device heats
 * itself: the junction temperature is then solved); both given and
 * different is an error naming both lines.
 */
static int root_finish(struct load_ctx *c, const struct session_section *sec,
                       const struct ynode *key, const struct ynode *map,
                       const struct ynode *const *found,
                       const struct ynode *const *foundkey, const char *path)
{
	(void)sec;
	(void)key;
	(void)map;
	(void)found;
	(void)foundkey;
	(void)path;
	struct session *s = c->s;
	if (isnan(s->conditions.temperature))
		return 0;
	struct thermal_keys tk;
	bool heated = thermal_active(&s->device) &&
	              thermal_keys_of(s->device.type, &tk);
	const char *dkey = heated ? "ambient_temperature" : "temperature";
	int k = model_param_index(s->device.type, dkey);
	if (k < 0)
		return 0;
	const struct ynode *cond = ytree_get(ytree_get(map, "conditions"),
	                                     "temperature");
	const struct ynode *dev = ytree_get(ytree_get(map, "device"), dkey);
	if (dev != NULL && s->device.p[k] != s->conditions.temperature) {
		char a[96], b[96];
		ytree_describe(cond, a, sizeof a);
		ytree_describe(dev, b, sizeof b);
		ytree_error(c->err, c->name, cond, "conditions.temperature",
		            "found %s, which differs from device.%s %s on line %u: "
		            "expected one temperature (give it in one place)", a,
		            dkey, b, dev->line);
		return -1;
	}
	s->device.p[k] = s->conditions.temperature;
	s->conditions.temperature = NAN;
	if (!heated)
		return 0;
	thermal_normalise(&s->device);
	char why[256];
	if (device_validate(&s->device, why, sizeof why) != 0) {
		ytree_error(c->err, c->name, cond, "conditions.temperature", "%s",
		            why);
		return -1;
	}
	return 0;
}

static const struct session_field root_fields[] = {
	{ .key = "format_version", .load = root_load_version,
	  .save = root_save_version, .present = root_present_always,
	  .help = "version of the session file format" },
	{ .key = "source", .load = field_load_section, .save = field_save_section,
	  .present = field_present_section, .section = &section_source,
	  .required = true,
	  .help = "the source: vs and rs (Thevenin) or is and rp (Norton)" },
	{ .key = "device", .load = field_load_section, .save = field_save_section,
	  .present = field_present_section, .section = &section_device,
	  .required = true, .help = "the device: model and its parameters" },
	{ .key = "conditions", .load = field_load_section,
	  .save = field_save_section, .present = field_present_section,
	  .section = &section_conditions, .help = "operating conditions" },
	{ .key = "solver", .load = field_load_section, .save = field_save_section,
	  .present = field_present_section, .section = &section_solver,
	  .help = "how the operating point is found" },
	{ .key = "view", .load = field_load_section, .save = field_save_section,
	  .present = field_present_section, .section = &section_view,
	  .help = "the plot's axes" },
	{ .key = "reactive_parts", .load = field_load_section,
	  .save = field_save_section, .present = field_present_section,
	  .section = &section_reactive,
	  .help = "capacitance across the device, inductance in series" },
	{ .key = "target", .load = field_load_section, .save = field_save_section,
	  .present = field_present_section, .section = &section_target,
	  .help = "what to design for: current, voltage or power" },
	{ .key = "ratings", .load = field_load_section,
	  .save = field_save_section, .present = field_present_section,
	  .section = &section_ratings, .help = "the parts' ratings" },
	{ .key = "tolerances", .load = field_load_section,
	  .save = field_save_section, .present = section_tolerances_present,
	  .section = &section_tolerances,
	  .help = "per-parameter tolerances for worst case and Monte Carlo" },
	{ .key = "notes", .load = root_load_notes, .save = root_save_notes,
	  .present = root_present_notes, .help = "free text" },
};

const struct session_section section_root = {
	.key = "",
	.fields = root_fields,
	.nfields = sizeof root_fields / sizeof root_fields[0],
	.finish = root_finish,
};

static const struct session_field conditions_fields[] = {
	{ .key = "temperature", .load = field_load_qty, .save = field_save_qty,
	  .present = field_present_finite,
	  .offset = offsetof(struct session, conditions.temperature),
	  .kind = QTY_TEMPERATURE, .min = -273.15, .max = 1000.0,
	  .min_open = true,
	  .help = "ambient temperature in degrees Celsius" },
};

const struct session_section section_conditions = {
	.key = "conditions",
	.fields = conditions_fields,
	.nfields = sizeof conditions_fields / sizeof conditions_fields[0],
};

static const struct session_field reactive_fields[] = {
	{ .key = "capacitance_across_device", .load = field_load_qty,
	  .save = field_save_qty, .present = field_present_finite,
	  .offset = offsetof(struct session, reactive.capacitance_across_device),
	  .kind = QTY_CAPACITANCE, .min = 0.0, .max = 1.0, .min_open = true,
	  .help = "capacitance across the device (F), for the stability verdict" },
	{ .key = "inductance_in_series", .load = field_load_qty,
	  .save = field_save_qty, .present = field_present_finite,
	  .offset = offsetof(struct session, reactive.inductance_in_series),
	  .kind = QTY_INDUCTANCE, .min = 0.0, .max = 1e3, .min_open = true,
	  .help = "inductance in series with the source (H), for the stability "
	          "verdict" },
};

const struct session_section section_reactive = {
	.key = "reactive_parts",
	.fields = reactive_fields,
	.nfields = sizeof reactive_fields / sizeof reactive_fields[0],
};
