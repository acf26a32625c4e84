/*
 * paramref.c - problem parameters by key (see paramref.h).
 */
#include "paramref.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

static const char *const paramref_source_keys[] = { "vs", "rs", "is", "rp" };

/* True when PB's source can take a change of R. */
static int paramref_source_ok(const struct problem *pb, enum paramref_kind k)
{
	double r = pb->src.r;
	if (k == PARAMREF_VS || k == PARAMREF_RS)
		return !isinf(r) && isfinite(pb->src.voc);
	return r > 0.0 && isfinite(pb->src.isc);
}

/* Look KEY up. */
int paramref_find(const struct problem *pb, const char *key,
                  struct paramref *out, char *err, size_t errlen)
{
	for (int k = 0; k < 4; k++) {
		if (strcmp(key, paramref_source_keys[k]) != 0)
			continue;
		out->kind = (enum paramref_kind)k;
		out->index = -1;
		if (!paramref_source_ok(pb, out->kind)) {
			if (err != NULL)
				snprintf(err, errlen, "%s cannot vary: the source is an "
				         "ideal %s source", key,
				         k < 2 ? "current" : "voltage");
			return -1;
		}
		return 0;
	}
	int idx = model_param_index(pb->dev.type, key);
	if (idx >= 0) {
		out->kind = PARAMREF_DEVICE;
		out->index = idx;
		return 0;
	}
	if (err != NULL) {
		size_t at = (size_t)snprintf(err, errlen,
		                             "unknown parameter '%s' (valid: vs, rs, "
		                             "is, rp", key);
		for (size_t k = 0; k < pb->dev.type->nparams && at < errlen; k++)
			at += (size_t)snprintf(err + at, errlen - at, ", %s",
			                       pb->dev.type->params[k].key);
		if (at < errlen)
			snprintf(err + at, errlen - at, ")");
	}
	return -1;
}

/* The key of R. */
const char *paramref_key(const struct problem *pb, const struct paramref *r)
{
	if (r->kind == PARAMREF_DEVICE)
		return pb->dev.type->params[r->index].key;
	return paramref_source_keys[r->kind];
}

/* The unit of R. */
enum qty_kind paramref_unit(const struct problem *pb, const struct paramref *r)
{
	switch (r->kind) {
	case PARAMREF_VS:
		return QTY_VOLTAGE;
	case PARAMREF_IS:
		return QTY_CURRENT;
	case PARAMREF_RS:
	case PARAMREF_RP:
		return QTY_RESISTANCE;
	case PARAMREF_DEVICE:
		break;
	}
	return pb->dev.type->params[r->index].kind;
}

/* R's value. */
double paramref_get(const struct problem *pb, const struct paramref *r)
{
	switch (r->kind) {
	case PARAMREF_VS:
		return pb->src.voc;
	case PARAMREF_IS:
		return pb->src.isc;
	case PARAMREF_RS:
	case PARAMREF_RP:
		return pb->src.r;
	case PARAMREF_DEVICE:
		break;
	}
	return pb->dev.p[r->index];
}

/* Whether X is inside MP's range (no message: cheap enough for loops). */
bool paramref_in_range(const struct model_param *mp, double x)
{
	if (!isfinite(x))
		return false;
	bool below = mp->min_open ? !(x > mp->min) : !(x >= mp->min);
	bool above = mp->max_open ? !(x < mp->max) : !(x <= mp->max);
	return !below && !above;
}

/* Whether X is a valid value of R. */
int paramref_check(const struct problem *pb, const struct paramref *r,
                   double x, char *err, size_t errlen)
{
	char tmp[8];
	if (err == NULL) {
		err = tmp;
		errlen = sizeof tmp;
	}
	if (r->kind == PARAMREF_DEVICE) {
		const struct model_param *mp = &pb->dev.type->params[r->index];
		if (paramref_in_range(mp, x))
			return 0;
		model_param_check(mp, x, err, errlen);
		return -1;
	}
	const char *key = paramref_source_keys[r->kind];
	if (!isfinite(x)) {
		snprintf(err, errlen, "%s must be a finite number", key);
		return -1;
	}
	if (!paramref_source_ok(pb, r->kind)) {
		snprintf(err, errlen, "%s cannot vary with this source", key);
		return -1;
	}
	if ((r->kind == PARAMREF_RS && x < 0.0) ||
	    (r->kind == PARAMREF_RP && !(x > 0.0))) {
		snprintf(err, errlen, "%s must be %s 0 ohm, not %.6g", key,
		         r->kind == PARAMREF_RS ? "at least" : "above", x);
		return -1;
	}
	return 0;
}

/* Set R to X. */
int paramref_set(struct problem *pb, const struct paramref *r, double x)
{
	struct source *s = &pb->src;
	if (!paramref_source_ok(pb, r->kind) && r->kind != PARAMREF_DEVICE)
		return -1;
	switch (r->kind) {
	case PARAMREF_VS:
		s->voc = x;
		s->isc = s->r > 0.0 ? x / s->r : NAN;
		return 0;
	case PARAMREF_RS:
		if (x < 0.0)
			return -1;
		s->r = x;
		s->isc = x > 0.0 ? s->voc / x : NAN;
		return 0;
	case PARAMREF_IS:
		s->isc = x;
		s->voc = isinf(s->r) ? NAN : x * s->r;
		return 0;
	case PARAMREF_RP:
		if (!(x > 0.0))
			return -1;
		s->r = x;
		s->voc = isinf(x) ? NAN : s->isc * x;
		return 0;
	case PARAMREF_DEVICE:
		pb->dev.p[r->index] = x;
		return 0;
	}
	return -1;
}

/* Every parameter PB can vary. */
size_t paramref_all(const struct problem *pb, struct paramref *out,
                    size_t max)
{
	size_t n = 0;
	if (paramref_source_ok(pb, PARAMREF_VS)) {
		if (n < max)
			out[n++] = (struct paramref){ PARAMREF_VS, -1 };
		if (n < max)
			out[n++] = (struct paramref){ PARAMREF_RS, -1 };
	} else if (paramref_source_ok(pb, PARAMREF_IS) && n < max) {
		out[n++] = (struct paramref){ PARAMREF_IS, -1 };
	}
	for (size_t k = 0; k < pb->dev.type->nparams && n < max; k++)
		out[n++] = (struct paramref){ PARAMREF_DEVICE, (int)k };
	return n;
}
