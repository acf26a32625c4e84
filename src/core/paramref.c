/*
 * paramref.c - problem parameters by key (see paramref.h).
 */
#include "paramref.h"

#include <math.h>
#include <stdbool.h>
#include <stdio.h>
#include <string.h>

#include "network.h"
#include "thermal.h"

static const char *const paramref_source_keys[] = { "vs", "rs", "is", "rp" };

/*
 * True when PB's source has the key of R, as the user stated it: vs and rs
 * for a Thevenin source, is and rp for a Norton one (rp only when finite:
 * an ideal current source has none); never for a network.
 */
static int paramref_source_ok(const struct problem *pb, enum paramref_kind k)
{
	if (pb->net != NULL)
		return 0;
	if (pb->src.form == SOURCE_NORTON)
		return k == PARAMREF_IS ||
		       (k == PARAMREF_RP && isfinite(pb->src.r));
	return (k == PARAMREF_VS || k == PARAMREF_RS) && isfinite(pb->src.r);
}

/*
 * Append the source keys PB has ("vs, rs", "is, rp" or "is") at AT in ERR,
 * then ", " and every device key; returns the new end.
 */
static size_t paramref_list_keys(const struct problem *pb, char *err,
                                 size_t errlen, size_t at)
{
	const char *sep = "";
	for (int k = 0; k < 4 && at < errlen; k++)
		if (paramref_source_ok(pb, (enum paramref_kind)k)) {
			at += (size_t)snprintf(err + at, errlen - at, "%s%s", sep,
			                       paramref_source_keys[k]);
			sep = ", ";
		}
	for (size_t k = 0; k < pb->dev.type->nparams && at < errlen; k++) {
		at += (size_t)snprintf(err + at, errlen - at, "%s%s", sep,
		                       pb->dev.type->params[k].key);
		sep = ", ";
	}
	return at;
}

/* Append ", source.network.<name>" for every part of PB's network. */
static size_t paramref_list_parts(const struct problem *pb, char *err,
                                  size_t errlen, size_t at, const char *lead)
{
	size_t n = network_part_count(pb->net);
	for (size_t k = 0; k < n && at < errlen; k++)
		at += (size_t)snprintf(err + at, errlen - at, "%s%s%s",
		                       k ? ", " : lead, PARAMREF_NETWORK_PREFIX,
		                       network_part(pb->net, k)->name);
	return at;
}

/* Look up the network part key KEY ("source.network.<name>"). */
static int paramref_find_part(const struct problem *pb, const char *key,
                              struct paramref *out, char *err, size_t errlen)
{
	const char *name = key + strlen(PARAMREF_NETWORK_PREFIX);
	if (pb->net == NULL) {
		if (err != NULL)
			snprintf(err, errlen, "%s: the source is not a network", key);
		return -1;
	}
	long k = network_find_part(pb->net, name);
	if (k < 0) {
		if (err != NULL) {
			size_t at = (size_t)snprintf(err, errlen, "%s: the network has "
			                             "no part called '%s' (valid: ", key,
			                             name);
			at = paramref_list_parts(pb, err, errlen, at, "");
			if (at < errlen)
				snprintf(err + at, errlen - at, ")");
		}
		return -1;
	}
	if (strlen(key) >= sizeof out->key) {
		if (err != NULL)
			snprintf(err, errlen, "%s: the part name is too long to vary "
			         "(at most %zu bytes)", key, sizeof out->key - 1 -
			         strlen(PARAMREF_NETWORK_PREFIX));
		return -1;
	}
	out->kind = PARAMREF_NETWORK;
	out->index = (int)k;
	snprintf(out->key, sizeof out->key, "%s", key);
	return 0;
}

/* Look KEY up. */
int paramref_find(const struct problem *pb, const char *key,
                  struct paramref *out, char *err, size_t errlen)
{
	memset(out, 0, sizeof *out);
	if (strncmp(key, PARAMREF_NETWORK_PREFIX,
	            strlen(PARAMREF_NETWORK_PREFIX)) == 0)
		return paramref_find_part(pb, key, out, err, errlen);
	for (int k = 0; k < 4; k++) {
		if (strcmp(key, paramref_source_keys[k]) != 0)
			continue;
		out->kind = (enum paramref_kind)k;
		out->index = -1;
		if (pb->net != NULL) {
			if (err != NULL) {
				size_t at = (size_t)snprintf(
				        err, errlen, "%s cannot vary: the source is a "
				        "network and %s stands for its equivalent; vary "
				        "one of its parts instead (", key, key);
				at = paramref_list_parts(pb, err, errlen, at, "");
				if (at < errlen)
					snprintf(err + at, errlen - at, ")");
			}
			return -1;
		}
		if (!paramref_source_ok(pb, out->kind)) {
			if (err != NULL) {
				bool norton = pb->src.form == SOURCE_NORTON;
				size_t at = (size_t)snprintf(
				        err, errlen, "%s is not a key of this source: it is "
				        "%s (its keys: ", key,
				        !norton ? "a Thevenin source, vs behind rs"
				        : isfinite(pb->src.r)
				            ? "a Norton source, is beside rp"
				            : "an ideal current source, is alone");
				at = paramref_list_keys(pb, err, errlen, at);
				if (at < errlen)
					snprintf(err + at, errlen - at, ")");
			}
			return -1;
		}
		return 0;
	}
	int idx = model_param_index(pb->dev.type, key);
	struct thermal_keys tk;
	if (idx >= 0 && thermal_active(&pb->dev) &&
	    thermal_keys_of(pb->dev.type, &tk) && idx == tk.temp) {
		if (err != NULL)
			snprintf(err, errlen, "%s cannot vary: with thermal_resistance "
			         "the junction temperature is solved; vary "
			         "ambient_temperature instead", key);
		return -1;
	}
	if (idx >= 0) {
		out->kind = PARAMREF_DEVICE;
		out->index = idx;
		return 0;
	}
	if (err != NULL && pb->net != NULL) {
		size_t at = (size_t)snprintf(err, errlen,
		                             "unknown parameter '%s' (valid: ", key);
		at = paramref_list_parts(pb, err, errlen, at, "");
		for (size_t k = 0; k < pb->dev.type->nparams && at < errlen; k++)
			at += (size_t)snprintf(err + at, errlen - at, ", %s",
			                       pb->dev.type->params[k].key);
		if (at < errlen)
			snprintf(err + at, errlen - at, ")");
	} else if (err != NULL) {
		size_t at = (size_t)snprintf(err, errlen,
		                             "unknown parameter '%s' (valid: ", key);
		at = paramref_list_keys(pb, err, errlen, at);
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
	if (r->kind == PARAMREF_NETWORK)
		return r->key;
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
	case PARAMREF_NETWORK:
		switch (network_part(pb->net, (size_t)r->index)->kind) {
		case NETWORK_VOLTAGE_SOURCE:
			return QTY_VOLTAGE;
		case NETWORK_CURRENT_SOURCE:
			return QTY_CURRENT;
		default:
			return QTY_RESISTANCE;
		}
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
	case PARAMREF_NETWORK:
		for (size_t k = 0; k < pb->net_nset; k++)
			if (pb->net_part[k] == (size_t)r->index)
				return pb->net_value[k];
		return network_part(pb->net, (size_t)r->index)->value;
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
	if (r->kind == PARAMREF_NETWORK) {
		const struct network_part *np =
		        pb->net != NULL ? network_part(pb->net, (size_t)r->index)
		                        : NULL;
		if (np == NULL) {
			snprintf(err, errlen, "%s: the source has no such part", r->key);
			return -1;
		}
		if (!isfinite(x)) {
			snprintf(err, errlen, "%s must be a finite number", r->key);
			return -1;
		}
		if (np->kind == NETWORK_RESISTOR && !(x > 0.0)) {
			snprintf(err, errlen, "%s must be above 0 ohm, not %.6g", r->key,
			         x);
			return -1;
		}
		return 0;
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

/*
 * Set network part R to X: note it among PB's changed values, and reduce a
 * private copy of the network with every noted value into PB's source.
 * PB is left as it was when this fails.
 */
static int paramref_set_part(struct problem *pb, const struct paramref *r,
                             double x)
{
	if (pb->net == NULL || network_part(pb->net, (size_t)r->index) == NULL ||
	    paramref_check(pb, r, x, NULL, 0) != 0)
		return -1;
	size_t slot = 0;
	while (slot < pb->net_nset && pb->net_part[slot] != (size_t)r->index)
		slot++;
	if (slot >= PROBLEM_NET_MAX_SET)
		return -1;
	struct network *copy = network_copy(pb->net);
	if (copy == NULL)
		return -1;
	for (size_t k = 0; k < pb->net_nset; k++)
		network_set_value(copy, pb->net_part[k], pb->net_value[k]);
	network_set_value(copy, (size_t)r->index, x);
	struct source_spec spec;
	struct source src;
	char why[8];
	int rc = -1;
	if (network_reduce(copy, NULL, &spec, NULL) == NETWORK_OK &&
	    source_from_spec(&spec, &src, why, sizeof why) == 0) {
		pb->src = src;
		pb->net_part[slot] = (size_t)r->index;
		pb->net_value[slot] = x;
		if (slot == pb->net_nset)
			pb->net_nset++;
		rc = 0;
	}
	network_destroy(copy);
	return rc;
}

/* Set R to X, without binding the device to the changed source. */
static int paramref_set_value(struct problem *pb, const struct paramref *r,
                              double x)
{
	struct source *s = &pb->src;
	if (r->kind == PARAMREF_NETWORK)
		return paramref_set_part(pb, r, x);
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
		device_set_param(&pb->dev, (size_t)r->index, x);
		return 0;
	case PARAMREF_NETWORK:
		break;
	}
	return -1;
}

/* Set R to X, let the device see the source it now has, and check a
 * changed device once here rather than in every solve. */
int paramref_set(struct problem *pb, const struct paramref *r, double x)
{
	if (paramref_set_value(pb, r, x) != 0)
		return -1;
	problem_bind(pb);
	if (r->kind == PARAMREF_DEVICE)
		device_check(&pb->dev, NULL, 0);
	return 0;
}

/* Every parameter PB can vary. */
size_t paramref_all(const struct problem *pb, struct paramref *out,
                    size_t max)
{
	size_t n = 0;
	size_t nparts = pb->net != NULL ? network_part_count(pb->net) : 0;
	for (size_t k = 0; k < nparts && k < PARAMREF_MAX_PARTS && n < max; k++) {
		char key[PARAMREF_KEY_MAX + 8];
		snprintf(key, sizeof key, "%s%s", PARAMREF_NETWORK_PREFIX,
		         network_part(pb->net, k)->name);
		if (paramref_find_part(pb, key, &out[n], NULL, 0) == 0 &&
		    out[n].index == (int)k)
			n++;
	}
	for (int k = 0; k < 4 && n < max; k++)
		if (paramref_source_ok(pb, (enum paramref_kind)k))
			out[n++] = (struct paramref){ (enum paramref_kind)k, -1, "" };
	/* A self-heated junction's temperature is solved, not a parameter. */
	struct thermal_keys tk;
	int skip = thermal_active(&pb->dev) && thermal_keys_of(pb->dev.type, &tk)
	           ? tk.temp : -1;
	for (size_t k = 0; k < pb->dev.type->nparams && n < max; k++)
		if ((int)k != skip)
			out[n++] = (struct paramref){ PARAMREF_DEVICE, (int)k, "" };
	return n;
}

/*
 * Set every R[k] to X[k]: a network source's parts are all noted first
 * and the network reduced once (into SCRATCH when given, a copy of PB's
 * network the caller keeps across calls: then no copy either).
 */
int paramref_set_all(struct problem *pb, const struct paramref *r,
                     const double *x, size_t n, struct network *scratch)
{
	bool parts = false, device = false;
	for (size_t k = 0; k < n; k++) {
		if (r[k].kind == PARAMREF_DEVICE) {
			/* checked once, after the last */
			device_set_param(&pb->dev, (size_t)r[k].index, x[k]);
			device = true;
			continue;
		}
		if (r[k].kind != PARAMREF_NETWORK) {
			if (paramref_set(pb, &r[k], x[k]) != 0)
				return -1;
			continue;
		}
		if (pb->net == NULL ||
		    network_part(pb->net, (size_t)r[k].index) == NULL ||
		    paramref_check(pb, &r[k], x[k], NULL, 0) != 0)
			return -1;
		size_t slot = 0;
		while (slot < pb->net_nset && pb->net_part[slot] != (size_t)r[k].index)
			slot++;
		if (slot >= PROBLEM_NET_MAX_SET)
			return -1;
		pb->net_part[slot] = (size_t)r[k].index;
		pb->net_value[slot] = x[k];
		if (slot == pb->net_nset)
			pb->net_nset++;
		parts = true;
	}
	if (device) {
		problem_bind(pb);
		device_check(&pb->dev, NULL, 0);
	}
	if (!parts)
		return 0;
	struct network *net = scratch != NULL ? scratch : network_copy(pb->net);
	if (net == NULL)
		return -1;
	for (size_t k = 0; k < pb->net_nset; k++)
		network_set_value(net, pb->net_part[k], pb->net_value[k]);
	struct source_spec spec;
	struct source src;
	char why[8];
	int rc = -1;
	if (network_reduce(net, NULL, &spec, NULL) == NETWORK_OK &&
	    source_from_spec(&spec, &src, why, sizeof why) == 0) {
		pb->src = src;
		/* as paramref_set: a curve that takes the source's r sees it */
		problem_bind(pb);
		rc = 0;
	}
	if (net != scratch)
		network_destroy(net);
	return rc;
}
