/*
 * session_set.c - one value of a session by key, checked like the file
 * (see session_set.h).  The value goes through the loader's own parser
 * (section_parse_qty, or the field's loader) on a scalar node made for it,
 * so the messages are the file's; then the session must still give a
 * problem, or it is put back as it was.
 */
#include "session/session_set.h"

#include <ctype.h>
#include <math.h>
#include <stdio.h>
#include <string.h>
#include <strings.h>

#include "core/paramref.h"
#include "session/section.h"
#include "session/section_analysis.h"
#include "session/section_network.h"
#include "session/ytree.h"

/* Copy the N bytes at P into BUF (LEN bytes) without the spaces around. */
static size_t set_trim(const char *p, size_t n, char *buf, size_t len)
{
	while (n > 0 && isspace((unsigned char)*p)) {
		p++;
		n--;
	}
	while (n > 0 && isspace((unsigned char)p[n - 1]))
		n--;
	if (n >= len)
		return n;
	memcpy(buf, p, n);
	buf[n] = '\0';
	return n;
}

/* Split "KEY=VALUE". */
enum session_set_status session_set_split(const char *text, char *key,
                                          size_t keylen, const char **value,
                                          char *err, size_t errlen)
{
	const char *eq = strchr(text, '=');
	if (eq == NULL) {
		snprintf(err, errlen, "'%s' is not KEY=VALUE (e.g. rs=1k)", text);
		return SESSION_SET_BAD_SYNTAX;
	}
	size_t n = set_trim(text, (size_t)(eq - text), key, keylen);
	if (n == 0) {
		snprintf(err, errlen, "'%s' has no key before '=' (e.g. rs=1k)",
		         text);
		return SESSION_SET_BAD_SYNTAX;
	}
	if (n >= keylen) {
		snprintf(err, errlen, "the key of '%s' is longer than %zu bytes",
		         text, keylen - 1);
		return SESSION_SET_BAD_SYNTAX;
	}
	const char *v = eq + 1;
	while (isspace((unsigned char)*v))
		v++;
	if (*v == '\0') {
		snprintf(err, errlen, "%s: no value after '=' (e.g. %s=1k)", key, key);
		return SESSION_SET_BAD_SYNTAX;
	}
	*value = v;
	return SESSION_SET_OK;
}

/* The sections whose fields take a dotted key. */
static const struct session_section *const set_sections[] = {
	&section_target, &section_ratings, &section_solver,
};

/* The field of dotted KEY ("ratings.resistor_power"), or NULL. */
static const struct session_field *set_field(const char *key,
                                             const struct session_section **sec)
{
	for (size_t k = 0; k < sizeof set_sections / sizeof set_sections[0];
	     k++) {
		const struct session_section *s = set_sections[k];
		size_t n = strlen(s->key);
		if (strncmp(key, s->key, n) != 0 || key[n] != '.')
			continue;
		for (size_t j = 0; j < s->nfields; j++)
			if (strcmp(s->fields[j].key, key + n + 1) == 0 &&
			    s->fields[j].section == NULL) {
				*sec = s;
				return &s->fields[j];
			}
		*sec = s;
		return NULL;
	}
	*sec = NULL;
	return NULL;
}

/* A scalar node holding TEXT, as the loader sees a value. */
static struct ynode set_node(const char *text)
{
	struct ynode n;
	memset(&n, 0, sizeof n);
	n.type = YNODE_SCALAR;
	n.text = (char *)text; /* the loaders only read it */
	n.len = strlen(text);
	n.plain = true;
	return n;
}

/* The loader's message in ERR without the empty file part. */
static void set_message(const struct session_error *e, char *err,
                        size_t errlen)
{
	snprintf(err, errlen, "%s%s%s", e->key, e->key[0] ? ": " : "",
	         e->message);
}

/* The valid values of a target window: each minimum below its maximum. */
static int set_check_target(const struct session *s, const char *key,
                            char *err, size_t errlen)
{
	const struct session_target *t = &s->analysis.target;
	if (t->current_min >= t->current_max || t->voltage_min >= t->voltage_max) {
		snprintf(err, errlen, "%s: found a window minimum at or above its "
		         "maximum, expected min < max", key);
		return -1;
	}
	return 0;
}

/* True when TEXT says "no value": none (any case). */
static bool set_is_none(const char *text)
{
	return strcasecmp(text, "none") == 0;
}

/* Set a field of a section (target, ratings, solver) from TEXT. */
static enum session_set_status set_section_field(struct session *s,
                                                 const char *key,
                                                 const struct session_section *sec,
                                                 const struct session_field *f,
                                                 const char *text, char *err,
                                                 size_t errlen)
{
	if (f == NULL) {
		char keys[512] = "";
		size_t at = 0;
		for (size_t j = 0; j < sec->nfields && at < sizeof keys; j++)
			at += (size_t)snprintf(keys + at, sizeof keys - at, "%s%s.%s",
			                       j ? ", " : "", sec->key,
			                       sec->fields[j].key);
		snprintf(err, errlen, "%s: unknown key (valid: %s)", key, keys);
		return SESSION_SET_BAD_KEY;
	}
	if (set_is_none(text)) {
		/* Only an optional number can be taken away. */
		if (f->load != field_load_qty || sec == &section_solver) {
			snprintf(err, errlen, "%s: cannot be none; give a value", key);
			return SESSION_SET_BAD_VALUE;
		}
		*field_double(s, f) = NAN;
		return SESSION_SET_OK;
	}
	struct session_error e;
	memset(&e, 0, sizeof e);
	struct load_ctx c = { .name = "", .err = &e, .s = s };
	struct ynode n = set_node(text);
	struct session_target old = s->analysis.target;
	if (sec == &section_target &&
	    (f->offset == offsetof(struct session, analysis.target.current) ||
	     f->offset == offsetof(struct session, analysis.target.voltage) ||
	     f->offset == offsetof(struct session, analysis.target.power))) {
		/* One target at a time: the new one replaces the old. */
		s->analysis.target.current = NAN;
		s->analysis.target.voltage = NAN;
		s->analysis.target.power = NAN;
	}
	if (f->load(&c, f, NULL, &n, key) != 0) {
		s->analysis.target = old;
		set_message(&e, err, errlen);
		return SESSION_SET_BAD_VALUE;
	}
	if (sec == &section_target && set_check_target(s, key, err, errlen) != 0) {
		s->analysis.target = old;
		return SESSION_SET_BAD_VALUE;
	}
	return SESSION_SET_OK;
}

/* The file's range for a source key (the source section's table). */
static const struct session_field *set_source_field(const char *key)
{
	for (size_t j = 0; j < section_source.nfields; j++)
		if (strcmp(section_source.fields[j].key, key) == 0)
			return &section_source.fields[j];
	return NULL;
}

/* Check X against the source section's range of KEY. */
static int set_source_range(const char *key, double x, char *err,
                            size_t errlen)
{
	const struct session_field *f = set_source_field(key);
	if (f == NULL || isinf(x))
		return 0; /* an ideal source's infinite rp is written by leaving it out */
	bool below = f->min_open ? !(x > f->min) : !(x >= f->min);
	bool above = f->max_open ? !(x < f->max) : !(x <= f->max);
	if (below || above) {
		snprintf(err, errlen, "source.%s: the change makes it %.6g, outside "
		         "%s%.6g, %.6g%s", key, x, f->min_open ? "(" : "[", f->min,
		         f->max, f->max_open ? ")" : "]");
		return -1;
	}
	return 0;
}

/* Write the problem's source Q back into S's source in S's own form. */
static int set_source_back(struct session *s, const struct problem *q,
                           char *err, size_t errlen)
{
	if (s->source.form == SOURCE_NORTON) {
		if (set_source_range("is", q->src.isc, err, errlen) != 0 ||
		    set_source_range("rp", q->src.r, err, errlen) != 0)
			return -1;
		source_spec_norton(&s->source, q->src.isc, q->src.r);
	} else {
		if (set_source_range("vs", q->src.voc, err, errlen) != 0 ||
		    set_source_range("rs", q->src.r, err, errlen) != 0)
			return -1;
		source_spec_thevenin(&s->source, q->src.voc, q->src.r);
	}
	return 0;
}

/* Parse TEXT for parameter REF of PB into *X with the file's checks. */
static enum session_set_status set_parse_param(struct session *s,
                                               const struct problem *pb,
                                               const struct paramref *ref,
                                               const char *key,
                                               const char *text, double *x,
                                               char *err, size_t errlen)
{
	enum qty_kind kind = paramref_unit(pb, ref);
	double lo = -INFINITY, hi = INFINITY;
	bool lo_open = false, hi_open = false;
	if (ref->kind == PARAMREF_DEVICE) {
		const struct model_param *mp = &pb->dev.type->params[ref->index];
		lo = mp->min;
		hi = mp->max;
		lo_open = mp->min_open;
		hi_open = mp->max_open;
	} else if (ref->kind != PARAMREF_NETWORK) {
		const struct session_field *f = set_source_field(key);
		if (f != NULL) {
			lo = f->min;
			hi = f->max;
			lo_open = f->min_open;
			hi_open = f->max_open;
		}
	}
	struct session_error e;
	memset(&e, 0, sizeof e);
	struct load_ctx c = { .name = "", .err = &e, .s = s };
	struct ynode n = set_node(text);
	if (section_parse_qty(&c, &n, key, kind, lo, hi, lo_open, hi_open, x) !=
	    0) {
		set_message(&e, err, errlen);
		return SESSION_SET_BAD_VALUE;
	}
	char why[400];
	if (paramref_check(pb, ref, *x, why, sizeof why) != 0) {
		snprintf(err, errlen, "%s: %s", key, why);
		return SESSION_SET_BAD_VALUE;
	}
	return SESSION_SET_OK;
}

/* Set parameter KEY from TEXT. */
static enum session_set_status set_param(struct session *s, const char *key,
                                         const char *text, char *err,
                                         size_t errlen)
{
	struct problem pb;
	char why[600];
	if (session_problem(s, &pb, why, sizeof why) != 0) {
		snprintf(err, errlen, "%s: the session has no valid problem to "
		         "change (%s)", key, why);
		return SESSION_SET_BAD_VALUE;
	}
	struct paramref ref;
	if (paramref_find(&pb, key, &ref, why, sizeof why) != 0) {
		/* paramref's message names the key already. */
		snprintf(err, errlen, "%s", why);
		return SESSION_SET_BAD_KEY;
	}
	double x;
	enum session_set_status st = set_parse_param(s, &pb, &ref, key, text, &x,
	                                             err, errlen);
	if (st != SESSION_SET_OK)
		return st;
	struct session keep;
	session_init(&keep);
	if (session_copy(&keep, s) != 0) {
		session_fini(&keep);
		snprintf(err, errlen, "%s: out of memory", key);
		return SESSION_SET_BAD_VALUE;
	}
	int rc = 0;
	switch (ref.kind) {
	case PARAMREF_DEVICE:
		s->device.p[ref.index] = x;
		break;
	case PARAMREF_NETWORK:
		rc = session_network_set_value(s, key, x, why, sizeof why);
		if (rc != 0)
			snprintf(err, errlen, "%s: %s", key, why);
		break;
	default: {
		struct problem q = pb;
		rc = paramref_set(&q, &ref, x);
		if (rc != 0)
			snprintf(err, errlen, "%s: the source cannot take %.6g", key, x);
		else
			rc = set_source_back(s, &q, err, errlen);
		break;
	}
	}
	if (rc == 0 && session_problem(s, &pb, why, sizeof why) != 0) {
		snprintf(err, errlen, "%s: %s", key, why);
		rc = -1;
	}
	if (rc != 0) {
		session_fini(s);
		*s = keep;
		return SESSION_SET_BAD_VALUE;
	}
	session_fini(&keep);
	return SESSION_SET_OK;
}

/* The prefix of a tolerance's key. */
#define SET_TOL_PREFIX "tolerances."

/* Remove the tolerance on PARAM from S; returns whether there was one. */
static bool set_tol_remove(struct session *s, const char *param)
{
	struct session_analysis *a = &s->analysis;
	for (size_t k = 0; k < a->ntol; k++)
		if (strcmp(a->tol[k].key, param) == 0) {
			memmove(&a->tol[k], &a->tol[k + 1],
			        (a->ntol - k - 1) * sizeof a->tol[0]);
			a->ntol--;
			return true;
		}
	return false;
}

/*
 * Set the tolerance on the parameter of KEY ("tolerances.rs") from TEXT,
 * written as in the file ("5%", "0.5", "{min: 22, max: 26}",
 * "{plus_minus: 5%, distribution: normal}"), or remove it with "none".
 * The text goes through the file's own parser as a one-line document.
 */
static enum session_set_status set_tolerance(struct session *s,
                                             const char *key,
                                             const char *text, char *err,
                                             size_t errlen)
{
	const char *param = key + strlen(SET_TOL_PREFIX);
	if (set_is_none(text)) {
		set_tol_remove(s, param);
		return SESSION_SET_OK;
	}
	/* "KEY": TEXT with the key quoted (a part's name may hold anything). */
	char doc[512];
	size_t at = 0;
	doc[at++] = '"';
	for (const char *p = param; *p != '\0' && at + 4 < sizeof doc; p++) {
		if (*p == '"' || *p == '\\')
			doc[at++] = '\\';
		doc[at++] = *p;
	}
	int w = snprintf(doc + at, sizeof doc - at, "\": %s\n", text);
	if (w < 0 || (size_t)w >= sizeof doc - at || strchr(text, '\n') != NULL) {
		snprintf(err, errlen, "%s: the value is too long or spans lines", key);
		return SESSION_SET_BAD_VALUE;
	}
	struct session_error e;
	memset(&e, 0, sizeof e);
	struct ytree *t = NULL;
	if (ytree_parse("", doc, strlen(doc), &t, &e) != SESSION_OK) {
		snprintf(err, errlen, "%s: '%s' is not a tolerance (5%%, an amount, "
		         "or {min: A, max: B})", key, text);
		return SESSION_SET_BAD_VALUE;
	}
	/* Load the one entry alone, then merge it into the session's list. */
	struct session_analysis keep = s->analysis;
	struct load_ctx c = { .name = "", .err = &e, .s = s };
	int rc = section_tolerances.load(&c, &section_tolerances, NULL, t->root,
	                                 "tolerances");
	ytree_destroy(t);
	struct session_tolerance got = s->analysis.tol[0];
	s->analysis = keep;
	if (rc != 0) {
		set_message(&e, err, errlen);
		return e.key[0] != '\0' && strcmp(e.key, key) == 0 &&
		               strstr(e.message, "unknown parameter") != NULL
		           ? SESSION_SET_BAD_KEY
		           : SESSION_SET_BAD_VALUE;
	}
	bool had = false;
	for (size_t k = 0; k < s->analysis.ntol; k++)
		if (strcmp(s->analysis.tol[k].key, param) == 0) {
			s->analysis.tol[k] = got;
			had = true;
		}
	if (!had) {
		if (s->analysis.ntol >= TOL_MAX_ITEMS) {
			snprintf(err, errlen, "%s: at most %d tolerances", key,
			         TOL_MAX_ITEMS);
			return SESSION_SET_BAD_VALUE;
		}
		s->analysis.tol[s->analysis.ntol++] = got;
	}
	/* The range must fit the parameter's own (as the commands check). */
	struct problem pb;
	struct tol_case tc;
	char why[600];
	if (session_problem(s, &pb, why, sizeof why) == 0 &&
	    session_tolerance_case(s, &pb, &tc, why, sizeof why) != 0) {
		s->analysis = keep;
		snprintf(err, errlen, "%s", why);
		return SESSION_SET_BAD_VALUE;
	}
	return SESSION_SET_OK;
}

/* Set KEY from TEXT. */
enum session_set_status session_set_text(struct session *s, const char *key,
                                         const char *value, char *err,
                                         size_t errlen)
{
	if (strncmp(key, SET_TOL_PREFIX, strlen(SET_TOL_PREFIX)) == 0)
		return set_tolerance(s, key, value, err, errlen);
	const struct session_section *sec;
	const struct session_field *f = set_field(key, &sec);
	if (sec != NULL)
		return set_section_field(s, key, sec, f, value, err, errlen);
	return set_param(s, key, value, err, errlen);
}

/* Set KEY to X. */
enum session_set_status session_set_value(struct session *s, const char *key,
                                          double x, char *err, size_t errlen)
{
	char text[48];
	if (!isfinite(x)) {
		snprintf(err, errlen, "%s: found %g, expected a finite number", key,
		         x);
		return SESSION_SET_BAD_VALUE;
	}
	qty_format_exact(text, sizeof text, x);
	return session_set_text(s, key, text, err, errlen);
}

/* Set "KEY=VALUE". */
enum session_set_status session_set_assignment(struct session *s,
                                               const char *text, char *err,
                                               size_t errlen)
{
	char key[SESSION_SET_KEY_MAX];
	const char *value;
	enum session_set_status st = session_set_split(text, key, sizeof key,
	                                               &value, err, errlen);
	if (st != SESSION_SET_OK)
		return st;
	return session_set_text(s, key, value, err, errlen);
}
