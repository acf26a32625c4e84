/*
 * section_source.c - the source section: Thevenin (vs, rs) or Norton
 * (is, optional rp; no rp = an ideal current source), the form inferred
 * from the keys or stated with form:; or a network (section_network.c)
 * alone, reduced to one of the two.
 */
#include <math.h>
#include <stddef.h>
#include <stdio.h>
#include <string.h>

#include "session/section.h"

enum { SRC_FORM, SRC_VS, SRC_RS, SRC_IS, SRC_RP, SRC_NETWORK, SRC_NFIELDS };

/* Load form: thevenin or norton. */
static int source_load_form(struct load_ctx *c, const struct session_field *f,
                            const struct ynode *key, const struct ynode *v,
                            const char *path)
{
	(void)f;
	(void)key;
	static const char *const names[] = { "thevenin", "norton" };
	if (section_need_scalar(c, v, path, "thevenin or norton") != 0)
		return -1;
	if (strcmp(v->text, "thevenin") == 0) {
		c->s->source.form = SOURCE_THEVENIN;
		return 0;
	}
	if (strcmp(v->text, "norton") == 0) {
		c->s->source.form = SOURCE_NORTON;
		return 0;
	}
	char found[96];
	ytree_describe(v, found, sizeof found);
	const char *near = section_suggest(v->text, names, 2);
	if (near != NULL)
		ytree_error(c->err, c->name, v, path,
		            "found %s, expected thevenin or norton; did you mean '%s'?",
		            found, near);
	else
		ytree_error(c->err, c->name, v, path,
		            "found %s, expected thevenin or norton", found);
	return -1;
}

/* Write the form. */
static int source_save_form(struct emit_ctx *e, const struct session_field *f,
                            const struct session *s)
{
	(void)f;
	return emit_scalar(e, s->source.form == SOURCE_NORTON ? "norton"
	                                                      : "thevenin", true);
}

/* form is written unless the source is a network. */
static bool source_present_form(const struct session_field *f,
                                 const struct session *s)
{
	(void)f;
	return s->network == NULL;
}

/* vs and rs are written for a Thevenin source. */
static bool source_present_thevenin(const struct session_field *f,
                                    const struct session *s)
{
	(void)f;
	return s->network == NULL && s->source.form == SOURCE_THEVENIN;
}

/* is is written for a Norton source. */
static bool source_present_norton(const struct session_field *f,
                                  const struct session *s)
{
	(void)f;
	return s->network == NULL && s->source.form == SOURCE_NORTON;
}

/* rp is written for a Norton source with a finite rp. */
static bool source_present_rp(const struct session_field *f,
                              const struct session *s)
{
	(void)f;
	return s->network == NULL && s->source.form == SOURCE_NORTON &&
	       isfinite(s->source.rp);
}

/* network is written for a network source. */
static bool source_present_network(const struct session_field *f,
                                   const struct session *s)
{
	(void)f;
	return s->network != NULL;
}

/* Infer or check the form, require its keys, and canonicalise the rest. */
static int source_finish(struct load_ctx *c, const struct session_section *sec,
                         const struct ynode *key, const struct ynode *map,
                         const struct ynode *const *found,
                         const struct ynode *const *foundkey, const char *path)
{
	(void)sec;
	struct source_spec *sp = &c->s->source;
	bool thev = foundkey[SRC_VS] != NULL || foundkey[SRC_RS] != NULL;
	bool nort = foundkey[SRC_IS] != NULL || foundkey[SRC_RP] != NULL;
	const struct ynode *at = key != NULL ? key : map;
	char sub[SECTION_PATH_MAX];

	if (foundkey[SRC_NETWORK] != NULL) {
		for (int k = 0; k < SRC_NETWORK; k++)
			if (foundkey[k] != NULL) {
				section_path(sub, sizeof sub, path, foundkey[k]->text);
				ytree_error(c->err, c->name, foundkey[k], sub,
				            "found '%s' beside network (line %u), expected "
				            "the network alone: it is reduced to the source",
				            foundkey[k]->text, foundkey[SRC_NETWORK]->line);
				return -1;
			}
		return 0;
	}

	if (thev && nort) {
		const struct ynode *t = foundkey[SRC_VS] ? foundkey[SRC_VS]
		                                         : foundkey[SRC_RS];
		const struct ynode *n = foundkey[SRC_IS] ? foundkey[SRC_IS]
		                                         : foundkey[SRC_RP];
		const struct ynode *later = t->line > n->line ||
		                            (t->line == n->line && t->col > n->col) ? t : n;
		section_path(sub, sizeof sub, path, later->text);
		ytree_error(c->err, c->name, later, sub,
		            "found both Thevenin keys (vs, rs) and Norton keys (is, "
		            "rp) - '%s' on line %u and '%s' on line %u; expected one form",
		            t->text, t->line, n->text, n->line);
		return -1;
	}
	if (foundkey[SRC_FORM] == NULL)
		sp->form = nort ? SOURCE_NORTON : SOURCE_THEVENIN;
	if (sp->form == SOURCE_THEVENIN && nort) {
		const struct ynode *n = foundkey[SRC_IS] ? foundkey[SRC_IS]
		                                         : foundkey[SRC_RP];
		section_path(sub, sizeof sub, path, n->text);
		ytree_error(c->err, c->name, n, sub,
		            "found the Norton key '%s' in a source with form: thevenin "
		            "(line %u), expected vs and rs", n->text,
		            found[SRC_FORM]->line);
		return -1;
	}
	if (sp->form == SOURCE_NORTON && thev) {
		const struct ynode *t = foundkey[SRC_VS] ? foundkey[SRC_VS]
		                                         : foundkey[SRC_RS];
		section_path(sub, sizeof sub, path, t->text);
		ytree_error(c->err, c->name, t, sub,
		            "found the Thevenin key '%s' in a source with form: norton "
		            "(line %u), expected is and optionally rp", t->text,
		            found[SRC_FORM]->line);
		return -1;
	}
	if (sp->form == SOURCE_THEVENIN) {
		static const int need[] = { SRC_VS, SRC_RS };
		for (size_t k = 0; k < 2; k++)
			if (found[need[k]] == NULL) {
				const struct session_field *f = &sec->fields[need[k]];
				section_path(sub, sizeof sub, path, f->key);
				ytree_error(c->err, c->name, at, sub,
				            "missing required key '%s' in source (%s); a "
				            "Thevenin source needs vs and rs", f->key, f->help);
				return -1;
			}
		source_spec_thevenin(sp, sp->vs, sp->rs);
	} else {
		if (found[SRC_IS] == NULL) {
			section_path(sub, sizeof sub, path, "is");
			ytree_error(c->err, c->name, at, sub,
			            "missing required key 'is' in source (%s); a Norton "
			            "source needs is, and rp unless it is ideal",
			            sec->fields[SRC_IS].help);
			return -1;
		}
		source_spec_norton(sp, sp->is, found[SRC_RP] != NULL ? sp->rp : INFINITY);
	}
	struct source out;
	char why[256];
	if (source_from_spec(sp, &out, why, sizeof why) != 0) {
		ytree_error(c->err, c->name, at, path, "%s", why);
		return -1;
	}
	return 0;
}

static const struct session_field source_fields[SRC_NFIELDS] = {
	[SRC_FORM] = { .key = "form", .load = source_load_form,
	               .save = source_save_form, .present = source_present_form,
	               .help = "thevenin (vs, rs) or norton (is, rp)" },
	[SRC_VS] = { .key = "vs", .load = field_load_qty, .save = field_save_qty,
	             .present = source_present_thevenin,
	             .offset = offsetof(struct session, source.vs),
	             .kind = QTY_VOLTAGE, .min = -1e9, .max = 1e9,
	             .help = "open-circuit voltage in volts" },
	[SRC_RS] = { .key = "rs", .load = field_load_qty, .save = field_save_qty,
	             .present = source_present_thevenin,
	             .offset = offsetof(struct session, source.rs),
	             .kind = QTY_RESISTANCE, .min = 0.0, .max = 1e15,
	             .help = "series resistance in ohms, 0 for an ideal source" },
	[SRC_IS] = { .key = "is", .load = field_load_qty, .save = field_save_qty,
	             .present = source_present_norton,
	             .offset = offsetof(struct session, source.is),
	             .kind = QTY_CURRENT, .min = -1e6, .max = 1e6,
	             .help = "short-circuit current in amperes" },
	[SRC_RP] = { .key = "rp", .load = field_load_qty, .save = field_save_qty,
	             .present = source_present_rp,
	             .offset = offsetof(struct session, source.rp),
	             .kind = QTY_RESISTANCE, .min = 0.0, .max = 1e15,
	             .min_open = true,
	             .help = "parallel resistance in ohms; omit for an ideal "
	                     "current source" },
	[SRC_NETWORK] = { .key = "network", .load = field_load_section,
	                  .save = field_save_section,
	                  .present = source_present_network,
	                  .section = &section_network,
	                  .help = "a resistive network with sources, reduced to "
	                          "the source" },
};

const struct session_section section_source = {
	.key = "source",
	.fields = source_fields,
	.nfields = SRC_NFIELDS,
	.finish = source_finish,
};
