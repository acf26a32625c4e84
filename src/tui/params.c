/*
 * params.c - session values by key for the front end (see params.h).
 */
#include "tui/params.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "core/thermal.h"
#include "session/section_network.h"
#include "session/session_set.h"

/* Start a row for KEY labelled LABEL in UNIT. */
static struct param params_row(const char *key, const char *label,
                               enum qty_kind unit)
{
	struct param p;
	memset(&p, 0, sizeof p);
	snprintf(p.key, sizeof p.key, "%s", key);
	snprintf(p.label, sizeof p.label, "%s", label);
	p.unit = unit;
	return p;
}

/* The rows of S. */
size_t params_list(const struct session *s, struct param *out, size_t max)
{
	size_t n = 0;
#define PUT(row) do { if (n < max) out[n++] = (row); } while (0)
	const struct network *nw = s->network;
	bool net = nw != NULL;
	size_t nparts = net ? network_part_count(nw) : 0;
	for (size_t k = 0; k < nparts && k < PARAMREF_MAX_PARTS; k++) {
		const struct network_part *pt = network_part(nw, k);
		char key[PARAMREF_KEY_MAX];
		snprintf(key, sizeof key, "%s%s", PARAMREF_NETWORK_PREFIX, pt->name);
		struct param p = params_row(key, pt->name,
		                            session_network_kind_unit(pt->kind));
		p.log_step = p.resistor = pt->kind == NETWORK_RESISTOR;
		PUT(p);
	}
	bool thevenin = s->source.form == SOURCE_THEVENIN;
	struct param a = params_row(thevenin ? "vs" : "is",
	                            thevenin ? (net ? "VS (net)" : "VS")
	                                     : (net ? "IS (net)" : "IS"),
	                            thevenin ? QTY_VOLTAGE : QTY_CURRENT);
	struct param b = params_row(thevenin ? "rs" : "rp",
	                            thevenin ? (net ? "RS (net)" : "RS")
	                                     : (net ? "RP (net)" : "RP"),
	                            QTY_RESISTANCE);
	a.readonly = b.readonly = net;
	b.log_step = true;
	b.resistor = !net;
	PUT(a);
	PUT(b);
	const struct model_type *mt = s->device.type;
	for (size_t k = 0; mt != NULL && k < mt->nparams; k++) {
		const struct model_param *mp = &mt->params[k];
		struct param p = params_row(mp->key, mp->label, mp->kind);
		p.log_step = mp->log_step;
		if (mp->kind == QTY_TEMPERATURE) {
			p.fine = 1.0;
			p.coarse = 10.0;
		}
		PUT(p);
	}
	struct param m = params_row(PARAMS_METHOD, "method", QTY_NUMBER);
	m.choice = true;
	PUT(m);
	struct param o = params_row(PARAMS_ORDER, "order", QTY_NUMBER);
	o.choice = true;
	PUT(o);
	PUT(params_row(PARAMS_START, "start V", QTY_VOLTAGE));
	struct param w = params_row(PARAMS_RELAXATION, "relaxation", QTY_NUMBER);
	w.fine = 0.01;
	w.coarse = 0.1;
	PUT(w);
#undef PUT
	return n;
}

/* Find KEY among S's rows. */
int params_find(const struct session *s, const char *key, struct param *out)
{
	struct param ps[PARAMS_MAX];
	size_t n = params_list(s, ps, PARAMS_MAX);
	for (size_t k = 0; k < n; k++) {
		if (strcmp(ps[k].key, key) == 0) {
			*out = ps[k];
			return 0;
		}
	}
	return -1;
}

/* Index of P's device parameter in S's model, or -1. */
static int params_device_index(const struct session *s, const struct param *p)
{
	if (s->device.type == NULL)
		return -1;
	return model_param_index(s->device.type, p->key);
}

/* Where P's number lives in S (NULL for a choice or a network part). */
static double *params_slot(struct session *s, const struct param *p)
{
	if (strcmp(p->key, "vs") == 0)
		return &s->source.vs;
	if (strcmp(p->key, "rs") == 0)
		return &s->source.rs;
	if (strcmp(p->key, "is") == 0)
		return &s->source.is;
	if (strcmp(p->key, "rp") == 0)
		return &s->source.rp;
	if (strcmp(p->key, PARAMS_START) == 0)
		return &s->solver.start_v;
	if (strcmp(p->key, PARAMS_RELAXATION) == 0)
		return &s->solver.omega;
	int k = params_device_index(s, p);
	return k >= 0 ? &s->device.p[k] : NULL;
}

/* True when P is a network part. */
static bool params_is_part(const struct param *p)
{
	return strncmp(p->key, PARAMREF_NETWORK_PREFIX,
	               strlen(PARAMREF_NETWORK_PREFIX)) == 0;
}

/* The value of P in S. */
double params_get(const struct session *s, const struct param *p)
{
	if (strcmp(p->key, PARAMS_METHOD) == 0)
		return (double)s->solver.method;
	if (strcmp(p->key, PARAMS_ORDER) == 0)
		return (double)s->solver.order;
	if (params_is_part(p)) {
		long k = session_network_find(s, p->key);
		return k >= 0 ? network_part(s->network, (size_t)k)->value : NAN;
	}
	double *slot = params_slot((struct session *)s, p);
	return slot != NULL ? *slot : NAN;
}

/* Check S after a change: source, device, solver ranges, the problem. */
static int params_check(const struct session *s, char *err, size_t errlen)
{
	struct source src;
	if (source_from_spec(&s->source, &src, err, errlen) != 0)
		return -1;
	if (device_validate(&s->device, err, errlen) != 0)
		return -1;
	/* The loader's range: auto (0) or a factor in (0, 2]. */
	double w = s->solver.omega;
	if (!(w >= 0.0 && w <= 2.0)) {
		snprintf(err, errlen, "relaxation: must be auto (0) or a factor in "
		         "(0, 2]");
		return -1;
	}
	double v0 = s->solver.start_v;
	if (!isnan(v0) && !isfinite(v0)) {
		snprintf(err, errlen, "start_voltage: must be a finite voltage or auto");
		return -1;
	}
	struct problem pb;
	return session_problem(s, &pb, err, errlen);
}

/* Set P to VALUE in S after checking. */
int params_set(struct session *s, const struct param *p, double value,
               char *err, size_t errlen)
{
	if (p->readonly) {
		snprintf(err, errlen, "%s is the equivalent of the session's source "
		         "network: change one of the network's parts (listed first)",
		         p->label);
		return -1;
	}
	if (p->choice) {
		int n = params_choices(p);
		if (!(value >= 0.0 && value < n) || value != floor(value)) {
			snprintf(err, errlen, "%s: no such choice", p->label);
			return -1;
		}
		if (strcmp(p->key, PARAMS_METHOD) == 0)
			s->solver.method = (enum solve_method)(int)value;
		else
			s->solver.order = (enum projection_order)(int)value;
		return 0;
	}
	if (params_slot(s, p) == NULL && !params_is_part(p)) {
		snprintf(err, errlen, "%s: no such parameter in this session", p->key);
		return -1;
	}
	if (strcmp(p->key, PARAMS_START) == 0 ||
	    strcmp(p->key, PARAMS_RELAXATION) == 0) {
		double *slot = params_slot(s, p);
		double old = *slot;
		*slot = value;
		if (params_check(s, err, errlen) != 0) {
			*slot = old;
			return -1;
		}
		return 0;
	}
	struct thermal_keys tk;
	if (thermal_active(&s->device) && thermal_keys_of(s->device.type, &tk) &&
	    model_param_index(s->device.type, p->key) == tk.temp) {
		snprintf(err, errlen, "%s is solved when the device heats itself: "
		         "change ambient_temperature (or thermal_resistance)",
		         p->label);
		return -1;
	}
	/* The source, the device and a network's parts: checked as
	 * --set KEY=VALUE and the file are (session_set.h). */
	if (session_set_value(s, p->key, value, err, errlen) != SESSION_SET_OK)
		return -1;
	/* a self-heated junction's temperature follows its ambient, as a
	 * loaded session's does (core/thermal.h) */
	thermal_normalise(&s->device);
	return 0;
}

/* The value of P as shown. */
void params_format(const struct session *s, const struct param *p, bool ascii,
                   char *buf, size_t n)
{
	double v = params_get(s, p);
	if (strcmp(p->key, PARAMS_METHOD) == 0) {
		snprintf(buf, n, "%s", solve_method_name(s->solver.method));
	} else if (strcmp(p->key, PARAMS_ORDER) == 0) {
		snprintf(buf, n, "V from %s", s->solver.order == ORDER_VOLTAGE_FROM_LINE
		         ? "line" : "device");
	} else if (strcmp(p->key, PARAMS_START) == 0 && isnan(v)) {
		snprintf(buf, n, "auto (0 V)");
	} else if (strcmp(p->key, PARAMS_RELAXATION) == 0 && v == 0.0) {
		snprintf(buf, n, "auto (optimal)");
	} else {
		/* Values a person typed: no padding zeros ("12 fA", "110e-21 A"). */
		qty_format_short(buf, n, v, p->unit, 5, ascii ? 1 : 0);
		/* A device parameter that takes no part at these values: its
		 * "off" default reads "none", one that waits on another is
		 * marked, so 0 K or 0 K/W never reads as a real setting. */
		int k = params_device_index(s, p);
		if (k >= 0 && !model_param_in_use(s->device.type, s->device.p,
		                                  (size_t)k)) {
			const struct model_param *mp = &s->device.type->params[k];
			if (mp->off_at_default && v == mp->def)
				snprintf(buf, n, "none");
			else {
				size_t len = strlen(buf);
				snprintf(buf + len, n - len, " (unused)");
			}
		}
	}
}

/* The number of entries of choice P. */
int params_choices(const struct param *p)
{
	if (strcmp(p->key, PARAMS_METHOD) == 0)
		return METHOD_COUNT;
	if (strcmp(p->key, PARAMS_ORDER) == 0)
		return ORDER_COUNT;
	return 0;
}

/* The tolerance S gives KEY. */
bool params_tolerance(const struct session *s, const char *key, bool shown,
                      bool ascii, char *buf, size_t n)
{
	buf[0] = '\0';
	const struct session_tolerance *t = NULL;
	for (size_t k = 0; k < s->analysis.ntol; k++)
		if (strcmp(s->analysis.tol[k].key, key) == 0)
			t = &s->analysis.tol[k];
	struct param p;
	if (t == NULL || params_find(s, key, &p) != 0)
		return false;
	const char *pm = !shown ? "" : ascii ? "+-" : "\xC2\xB1";
	char a[48], b[48];
	/* The width of a temperature is a plain number of degrees. */
	enum qty_kind u = p.unit == QTY_TEMPERATURE ? QTY_NUMBER : p.unit;
	switch (t->form) {
	case SESSION_TOL_PERCENT:
		snprintf(buf, n, "%s%.6g%%", pm, t->a);
		break;
	case SESSION_TOL_ABSOLUTE:
		qty_format_short(a, sizeof a, t->a, u, 6, ascii ? 1 : 0);
		snprintf(buf, n, "%s%s", pm, a);
		break;
	default:
		qty_format_short(a, sizeof a, t->a, p.unit, 6, ascii ? 1 : 0);
		qty_format_short(b, sizeof b, t->b, p.unit, 6, ascii ? 1 : 0);
		snprintf(buf, n, "%s..%s", a, b);
		break;
	}
	if (t->dist == TOL_NORMAL) {
		size_t len = strlen(buf);
		snprintf(buf + len, n - len, " normal");
	}
	return true;
}

/* The file's form of a typed tolerance. */
void params_tolerance_typed(const char *typed, char *out, size_t n)
{
	char t[256];
	snprintf(t, sizeof t, "%s", typed);
	/* trim */
	char *p = t;
	while (*p == ' ')
		p++;
	size_t len = strlen(p);
	while (len > 0 && p[len - 1] == ' ')
		p[--len] = '\0';
	if (p[0] == '{' || p[0] == '\0') {
		snprintf(out, n, "%s", p);
		return;
	}
	/* A trailing distribution word. */
	const char *dist = NULL;
	char *sp = strrchr(p, ' ');
	if (sp != NULL && (strcmp(sp + 1, "normal") == 0 ||
	                   strcmp(sp + 1, "uniform") == 0)) {
		dist = sp + 1;
		*sp = '\0';
		while (sp > p && sp[-1] == ' ')
			*--sp = '\0';
	}
	char *dots = strstr(p, "..");
	if (dots != NULL) {
		*dots = '\0';
		snprintf(out, n, "{min: %s, max: %s%s%s}", p, dots + 2,
		         dist ? ", distribution: " : "", dist ? dist : "");
	} else if (dist != NULL) {
		snprintf(out, n, "{plus_minus: %s, distribution: %s}", p, dist);
	} else {
		snprintf(out, n, "%s", p);
	}
}
