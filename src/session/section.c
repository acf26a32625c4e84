/*
 * section.c - the generic table walker that loads a section, the generic
 * writer that saves one, shared field loaders/savers, "did you mean", and
 * the emitter helpers.
 */
#include "session/section.h"

#include <ctype.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>
#include <strings.h>

/* A short noun for KIND, for messages. */
static const char *section_noun(enum qty_kind kind)
{
	switch (kind) {
	case QTY_VOLTAGE: return "a voltage";
	case QTY_CURRENT: return "a current";
	case QTY_RESISTANCE: return "a resistance";
	case QTY_CONDUCTANCE: return "a conductance";
	case QTY_POWER: return "a power";
	case QTY_TEMPERATURE: return "a temperature";
	case QTY_ENERGY_EV: return "an energy";
	case QTY_THERMAL_COND: return "a thermal conductance";
	case QTY_PERCENT: return "a percentage";
	case QTY_CAPACITANCE: return "a capacitance";
	case QTY_INDUCTANCE: return "an inductance";
	case QTY_THERMAL_RES: return "a thermal resistance";
	case QTY_TEMPCO: return "a temperature coefficient";
	case QTY_NUMBER:
	case QTY_KIND_COUNT:
	default: return "a number";
	}
}

/* Join PARENT and KEY into a dotted path. */
void section_path(char *buf, size_t n, const char *parent, const char *key)
{
	if (parent == NULL || parent[0] == '\0')
		snprintf(buf, n, "%s", key);
	else
		snprintf(buf, n, "%s.%s", parent, key);
}

/* Edit distance of A and B, case-insensitive, '-' equal to '_'; capped. */
static size_t section_distance(const char *a, const char *b)
{
	enum { CAP = 64 };
	size_t la = strlen(a), lb = strlen(b);
	if (la >= CAP || lb >= CAP)
		return CAP;
	size_t row[CAP + 1];
	for (size_t j = 0; j <= lb; j++)
		row[j] = j;
	for (size_t i = 1; i <= la; i++) {
		size_t diag = row[0];
		row[0] = i;
		for (size_t j = 1; j <= lb; j++) {
			int ca = tolower((unsigned char)a[i - 1]);
			int cb = tolower((unsigned char)b[j - 1]);
			if (ca == '-')
				ca = '_';
			if (cb == '-')
				cb = '_';
			size_t best = diag + (ca == cb ? 0 : 1);
			if (row[j] + 1 < best)
				best = row[j] + 1;
			if (row[j - 1] + 1 < best)
				best = row[j - 1] + 1;
			diag = row[j];
			row[j] = best;
		}
	}
	return row[lb];
}

/* The closest candidate to WORD, or NULL when none is close. */
const char *section_suggest(const char *word, const char *const *cands,
                            size_t n)
{
	const char *best = NULL;
	size_t bestd = (size_t)-1;
	for (size_t k = 0; k < n; k++) {
		size_t d = section_distance(word, cands[k]);
		size_t len = strlen(cands[k]);
		size_t limit = len / 3 < 1 ? 1 : (len / 3 > 3 ? 3 : len / 3);
		if (d <= limit && d < bestd) {
			best = cands[k];
			bestd = d;
		}
	}
	return best;
}

/* Require V to be a scalar; returns 0 or -1 with an error. */
int section_need_scalar(struct load_ctx *c, const struct ynode *v,
                        const char *path, const char *expected)
{
	if (v->type == YNODE_SCALAR && !(v->plain && v->len == 0))
		return 0;
	char found[96];
	ytree_describe(v, found, sizeof found);
	ytree_error(c->err, c->name, v, path, "found %s, expected %s", found,
	            expected);
	return -1;
}

/* True when TEXT spells infinity or NaN in one of YAML's or C's ways. */
static bool section_is_nonfinite_word(const char *text)
{
	static const char *const words[] = {
		".inf", "+.inf", "-.inf", ".nan", "inf", "+inf", "-inf", "nan",
		"infinity", "+infinity", "-infinity",
	};
	while (*text == ' ' || *text == '\t')
		text++;
	char w[16];
	size_t n = 0;
	while (text[n] != '\0' && text[n] != ' ' && text[n] != '\t' && n + 1 < sizeof w) {
		w[n] = text[n];
		n++;
	}
	w[n] = '\0';
	for (size_t k = 0; k < sizeof words / sizeof words[0]; k++)
		if (strcasecmp(w, words[k]) == 0)
			return true;
	return false;
}

/* Describe the range [MIN, MAX] of KIND into BUF. */
static void section_describe_range(char *buf, size_t n, enum qty_kind kind,
                                   double min, double max, bool min_open,
                                   bool max_open)
{
	char lo[48], hi[48];
	/* the limits are round numbers: no padding zeros ("1 GV") */
	qty_format_short(lo, sizeof lo, min, kind, 6, 1);
	qty_format_short(hi, sizeof hi, max, kind, 6, 1);
	if (isinf(max) && isinf(min))
		snprintf(buf, n, "any finite value");
	else if (isinf(max))
		snprintf(buf, n, "a value %s %s", min_open ? ">" : ">=", lo);
	else if (isinf(min))
		snprintf(buf, n, "a value %s %s", max_open ? "<" : "<=", hi);
	else
		snprintf(buf, n, "a value in %s%s, %s%s", min_open ? "(" : "[", lo, hi,
		         max_open ? ")" : "]");
}

/* Parse scalar V as a quantity of KIND within a range. */
int section_parse_qty(struct load_ctx *c, const struct ynode *v,
                      const char *path, enum qty_kind kind, double min,
                      double max, bool min_open, bool max_open, double *out)
{
	char expected[64];
	snprintf(expected, sizeof expected, "%s", section_noun(kind));
	if (section_need_scalar(c, v, path, expected) != 0)
		return -1;
	char found[96];
	ytree_describe(v, found, sizeof found);
	if (section_is_nonfinite_word(v->text)) {
		ytree_error(c->err, c->name, v, path,
		            "found %s, expected %s that is a finite number", found,
		            expected);
		return -1;
	}
	double x;
	char why[160] = "";
	enum qty_status st = qty_parse(v->text, kind, &x, why, sizeof why);
	if (st != QTY_OK) {
		/* qty_parse's message already says what was found and expected */
		if (why[0] != '\0')
			ytree_error(c->err, c->name, v, path, "%s", why);
		else
			ytree_error(c->err, c->name, v, path,
			            "found %s, expected %s", found, expected);
		return -1;
	}
	if (!isfinite(x)) {
		ytree_error(c->err, c->name, v, path,
		            "found %s, expected %s that is a finite number", found,
		            expected);
		return -1;
	}
	if (x == 0.0 && qty_text_nonzero(v->text)) {
		ytree_error(c->err, c->name, v, path,
		            "found %s, which is too small for a number to hold (it "
		            "reads as 0); write 0 for zero", found);
		return -1;
	}
	bool below = min_open ? !(x > min) : !(x >= min);
	bool above = max_open ? !(x < max) : !(x <= max);
	if (below || above) {
		char range[128];
		section_describe_range(range, sizeof range, kind, min, max, min_open,
		                       max_open);
		ytree_error(c->err, c->name, v, path,
		            "found %s, which is out of range: expected %s", found,
		            range);
		return -1;
	}
	*out = x;
	return 0;
}

/* Load a quantity field. */
int field_load_qty(struct load_ctx *c, const struct session_field *f,
                   const struct ynode *key, const struct ynode *v,
                   const char *path)
{
	(void)key;
	return section_parse_qty(c, v, path, f->kind, f->min, f->max, f->min_open,
	                         f->max_open, field_double(c->s, f));
}

/* Write a quantity field as an exact plain number. */
int field_save_qty(struct emit_ctx *e, const struct session_field *f,
                   const struct session *s)
{
	return emit_number(e, *field_double_const(s, f));
}

/* Load a nested section. */
int field_load_section(struct load_ctx *c, const struct session_field *f,
                       const struct ynode *key, const struct ynode *v,
                       const char *path)
{
	if (v->type != YNODE_MAPPING) {
		char found[96];
		ytree_describe(v, found, sizeof found);
		ytree_error(c->err, c->name, v, path,
		            "found %s, expected a mapping of %s keys", found, f->key);
		return -1;
	}
	return section_load(c, f->section, key, v, path);
}

/* Write a nested section. */
int field_save_section(struct emit_ctx *e, const struct session_field *f,
                       const struct session *s)
{
	return section_save(e, f->section, s);
}

/* A nested section is written when any of its fields is. */
bool field_present_section(const struct session_field *f,
                           const struct session *s)
{
	return section_present(f->section, s);
}

/* A number field is written when it is finite. */
bool field_present_finite(const struct session_field *f,
                          const struct session *s)
{
	return isfinite(*field_double_const(s, f));
}

/* True when any field of SEC is present in S. */
bool section_present(const struct session_section *sec, const struct session *s)
{
	if (sec->save != NULL)
		return true;
	for (size_t k = 0; k < sec->nfields; k++) {
		const struct session_field *f = &sec->fields[k];
		if (f->present == NULL || f->present(f, s))
			return true;
	}
	return false;
}

/* Report an unknown key K in section SEC with a suggestion. */
static void section_unknown_key(struct load_ctx *c,
                                const struct session_section *sec,
                                const struct ynode *k, const char *path)
{
	const char *cands[SECTION_MAX_FIELDS];
	size_t n = 0;
	for (size_t j = 0; j < sec->nfields && n < SECTION_MAX_FIELDS; j++)
		cands[n++] = sec->fields[j].key;
	const char *near = section_suggest(k->text, cands, n);
	char found[96];
	ytree_describe(k, found, sizeof found);
	char keys[512] = "";
	size_t o = 0;
	for (size_t j = 0; j < n && o < sizeof keys; j++)
		o += (size_t)snprintf(keys + o, sizeof keys - o, "%s%s",
		                      j ? ", " : "", cands[j]);
	char where[80];
	snprintf(where, sizeof where, "%s%s", sec->key[0] ? "in " : "at the top",
	         sec->key);
	if (near != NULL)
		ytree_error(c->err, c->name, k, path,
		            "unknown key %s %s; did you mean '%s'?", found, where, near);
	else
		ytree_error(c->err, c->name, k, path,
		            "unknown key %s %s, expected one of: %s", found, where, keys);
}

/* Check that K is a usable key; returns 0 or -1 with an error. */
static int section_check_key(struct load_ctx *c, const struct ynode *k,
                             const char *parent)
{
	if (k->type == YNODE_SCALAR && k->len > 0)
		return 0;
	char found[96];
	ytree_describe(k, found, sizeof found);
	ytree_error(c->err, c->name, k, parent, "found %s as a key, expected a key name",
	            found);
	return -1;
}

/* Load mapping MAP as section SEC. */
int section_load(struct load_ctx *c, const struct session_section *sec,
                 const struct ynode *key, const struct ynode *map,
                 const char *path)
{
	if (sec->load != NULL)
		return sec->load(c, sec, key, map, path);

	const struct ynode *found[SECTION_MAX_FIELDS] = { NULL };
	const struct ynode *foundkey[SECTION_MAX_FIELDS] = { NULL };
	char sub[SECTION_PATH_MAX];

	/* keys in file order: known and not repeated */
	for (size_t k = 0; k + 1 < map->nkids; k += 2) {
		const struct ynode *kn = map->kids[k];
		if (section_check_key(c, kn, path) != 0)
			return -1;
		size_t j = 0;
		while (j < sec->nfields && strcmp(sec->fields[j].key, kn->text) != 0)
			j++;
		section_path(sub, sizeof sub, path, kn->text);
		if (j == sec->nfields) {
			section_unknown_key(c, sec, kn, sub);
			return -1;
		}
		if (foundkey[j] != NULL) {
			ytree_error(c->err, c->name, kn, sub,
			            "duplicate key (first given on line %u), expected "
			            "each key once", foundkey[j]->line);
			return -1;
		}
		foundkey[j] = kn;
		found[j] = map->kids[k + 1];
	}
	/* fields in table order */
	for (size_t j = 0; j < sec->nfields; j++) {
		const struct session_field *f = &sec->fields[j];
		section_path(sub, sizeof sub, path, f->key);
		if (found[j] == NULL) {
			if (f->required) {
				const struct ynode *at = key != NULL ? key : map;
				ytree_error(c->err, c->name, at, sub,
				            "missing required key '%s' in %s (%s)", f->key,
				            sec->key[0] ? sec->key : "the session",
				            f->help);
				return -1;
			}
			continue;
		}
		if (f->load(c, f, foundkey[j], found[j], sub) != 0)
			return -1;
	}
	if (sec->finish != NULL)
		return sec->finish(c, sec, key, map, found, foundkey, path);
	return 0;
}

/* Write section SEC of S as a mapping. */
int section_save(struct emit_ctx *e, const struct session_section *sec,
                 const struct session *s)
{
	if (sec->save != NULL)
		return sec->save(e, sec, s);
	if (emit_mapping_start(e, false) != 0)
		return -1;
	for (size_t j = 0; j < sec->nfields; j++) {
		const struct session_field *f = &sec->fields[j];
		if (f->present != NULL && !f->present(f, s))
			continue;
		if (emit_scalar(e, f->key, true) != 0 || f->save(e, f, s) != 0)
			return -1;
	}
	return emit_mapping_end(e);
}

/* Emit event EV (consumed either way); records an emitter failure. */
static int emit_event(struct emit_ctx *e, yaml_event_t *ev)
{
	if (e->failed) {
		/* not handed to the emitter, so still ours to free */
		yaml_event_delete(ev);
		return -1;
	}
	if (!yaml_emitter_emit(e->em, ev)) {
		e->failed = true;
		ytree_error_at(e->err, "", 0, 0, "", "cannot write YAML: %s",
		               e->em->problem != NULL ? e->em->problem : "emitter error");
		return -1;
	}
	return 0;
}

/* Report that an event could not be built (bad UTF-8 or no memory). */
static int emit_no_memory(struct emit_ctx *e)
{
	e->failed = true;
	ytree_error_at(e->err, "", 0, 0, "",
	               "cannot build a YAML value (text that is not valid "
	               "UTF-8, or out of memory)");
	return -1;
}

/* Emit a scalar: PLAIN forces plain style, else the emitter picks one. */
int emit_scalar(struct emit_ctx *e, const char *text, bool plain)
{
	yaml_event_t ev;
	yaml_scalar_style_t style = plain ? YAML_PLAIN_SCALAR_STYLE
	                                  : YAML_ANY_SCALAR_STYLE;
	if (!plain && strchr(text, '\n') != NULL)
		style = YAML_LITERAL_SCALAR_STYLE;
	if (!yaml_scalar_event_initialize(&ev, NULL, NULL,
	                                  (yaml_char_t *)(uintptr_t)text,
	                                  (int)strlen(text), 1, 1, style))
		return emit_no_memory(e);
	return emit_event(e, &ev);
}

/* V as the shortest text that reads back exactly, in fixed notation when
 * that is exact ("1500" reads better than "1.5e+03"), into BUF (N >= 40). */
void emit_number_text(char *buf, size_t n, double v)
{
	qty_format_exact(buf, n, v);
	if (strstr(buf, "e+") != NULL && fabs(v) < 1e15) {
		for (int d = 0; d <= 17; d++) {
			char fixed[40];
			double back;
			snprintf(fixed, sizeof fixed, "%.*f", d, v);
			if (qty_parse(fixed, QTY_NUMBER, &back, NULL, 0) == QTY_OK &&
			    memcmp(&back, &v, sizeof v) == 0) {
				snprintf(buf, n, "%s", fixed);
				break;
			}
		}
	}
}

/* Emit V as an exact plain number. */
int emit_number(struct emit_ctx *e, double v)
{
	if (!isfinite(v)) {
		e->failed = true;
		ytree_error_at(e->err, "", 0, 0, "",
		               "cannot write a non-finite number");
		return -1;
	}
	char buf[40];
	emit_number_text(buf, sizeof buf, v);
	return emit_scalar(e, buf, true);
}

/* Start a mapping (FLOW: inline braces). */
int emit_mapping_start(struct emit_ctx *e, bool flow)
{
	yaml_event_t ev;
	if (!yaml_mapping_start_event_initialize(&ev, NULL, NULL, 1,
	                                         flow ? YAML_FLOW_MAPPING_STYLE
	                                              : YAML_BLOCK_MAPPING_STYLE))
		return emit_no_memory(e);
	return emit_event(e, &ev);
}

/* End a mapping. */
int emit_mapping_end(struct emit_ctx *e)
{
	yaml_event_t ev;
	if (!yaml_mapping_end_event_initialize(&ev))
		return emit_no_memory(e);
	return emit_event(e, &ev);
}

/* Start a sequence (FLOW: inline brackets). */
int emit_sequence_start(struct emit_ctx *e, bool flow)
{
	yaml_event_t ev;
	if (!yaml_sequence_start_event_initialize(&ev, NULL, NULL, 1,
	                                          flow ? YAML_FLOW_SEQUENCE_STYLE
	                                               : YAML_BLOCK_SEQUENCE_STYLE))
		return emit_no_memory(e);
	return emit_event(e, &ev);
}

/* End a sequence. */
int emit_sequence_end(struct emit_ctx *e)
{
	yaml_event_t ev;
	if (!yaml_sequence_end_event_initialize(&ev))
		return emit_no_memory(e);
	return emit_event(e, &ev);
}
