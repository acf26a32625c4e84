/*
 * model.c - the model registry and the generic device functions.
 */
#include "model.h"

#include <assert.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "models/models.h"
#include "problem.h"
#include "thermal.h"

/* Every model, in the order help screens list them. */
const struct model_type *const model_registry[] = {
	&model_diode,
	&model_power_law,
	&model_zener,
	&model_led,
	&model_tunnel,
	&model_npn,
	&model_pnp,
	&model_jfet,
	&model_nmos,
	&model_thermistor,
	&model_thermistor_sh,
	&model_measured,
	NULL,
};

/* Look a model up by name. */
const struct model_type *model_find(const char *name)
{
	for (size_t k = 0; model_registry[k] != NULL; k++)
		if (strcmp(model_registry[k]->name, name) == 0)
			return model_registry[k];
	return NULL;
}

/* Index of KEY in TYPE's table. */
int model_param_index(const struct model_type *type, const char *key)
{
	for (size_t k = 0; k < type->nparams; k++)
		if (strcmp(type->params[k].key, key) == 0)
			return (int)k;
	return -1;
}

/* Whether parameter K of TYPE takes part in the model at P. */
bool model_param_in_use(const struct model_type *type, const double *p,
                        size_t k)
{
	/* A chain of needs is short (Eg -> T0); the bound only guards a
	 * table that names itself. */
	for (int depth = 0; depth < 4 && k < type->nparams; depth++) {
		const struct model_param *mp = &type->params[k];
		if (mp->off_at_default && p[k] == mp->def)
			return false;
		if (mp->needs == NULL)
			return true;
		int j = model_param_index(type, mp->needs);
		if (j < 0)
			return true;
		k = (size_t)j;
	}
	return true;
}

/* Fill DEV with TYPE and its defaults. */
void device_init(struct device *dev, const struct model_type *type)
{
	dev->type = type;
	dev->curve = NULL;
	dev->checked = false;
	dev->junction = false;
	for (size_t k = 0; k < MODEL_MAX_PARAMS; k++)
		dev->p[k] = k < type->nparams ? type->params[k].def : 0.0;
	dev->has_k = false;
}

/* DEV's constants if they belong to its values (see model.h). */
const double *device_constants(const struct device *dev)
{
	if (!dev->has_k || memcmp(dev->kp, dev->p, sizeof dev->p) != 0)
		return NULL;
	return dev->k;
}

/* Derive DEV's constants once for its values (see model.h). */
void device_prepare(struct device *dev)
{
	if (dev->type == NULL || dev->type->prepare == NULL ||
	    device_constants(dev) != NULL)
		return;
	dev->has_k = dev->type->prepare(dev->p, dev->k) == 0;
	memcpy(dev->kp, dev->p, sizeof dev->p);
}

/*
 * The constants for evaluating DEV's whole current from them: current_k
 * is the current itself only for a model without a series split (else it
 * is the junction's, behind the resistance).
 */
static const double *device_whole_constants(const struct device *dev)
{
	const struct model_type *t = dev->type;
	if (t->current_k == NULL || t->series_resistance != NULL ||
	    t->intrinsic_current != NULL)
		return NULL;
	return device_constants(dev);
}

/* Describe the valid range of MP into BUF. */
static void model_param_describe_range(const struct model_param *mp, char *buf,
                                       size_t n)
{
	char lo[48], hi[48];
	/* limits as written in the table, without padding zeros: -273.15
	 * degC must not read as -273.1 degC */
	qty_format_short(lo, sizeof lo, mp->min, mp->kind, 6, 1);
	qty_format_short(hi, sizeof hi, mp->max, mp->kind, 6, 1);
	if (isinf(mp->max))
		snprintf(buf, n, "a value %s %s", mp->min_open ? ">" : ">=", lo);
	else if (isinf(mp->min))
		snprintf(buf, n, "a value %s %s", mp->max_open ? "<" : "<=", hi);
	else
		snprintf(buf, n, "a value in %s%s, %s%s", mp->min_open ? "(" : "[",
		         lo, hi, mp->max_open ? ")" : "]");
}

/* True when VALUE is finite and inside MP's range (no message). */
static inline bool model_param_ok(const struct model_param *mp, double value)
{
	bool below = mp->min_open ? !(value > mp->min) : !(value >= mp->min);
	bool above = mp->max_open ? !(value < mp->max) : !(value <= mp->max);
	return isfinite(value) && !below && !above;
}

/* Check one value against its table entry. */
int model_param_check(const struct model_param *mp, double value, char *err,
                      size_t errlen)
{
	if (model_param_ok(mp, value))
		return 0;
	/* Only a rejected value pays for formatting the range. */
	char range[128];
	model_param_describe_range(mp, range, sizeof range);
	if (isnan(value)) {
		snprintf(err, errlen, "%s: a value is required (%s)", mp->key, range);
		return -1;
	}
	if (!isfinite(value)) {
		snprintf(err, errlen, "%s: must be finite (%s)", mp->key, range);
		return -1;
	}
	char got[48];
	qty_format_short(got, sizeof got, value, mp->kind, 6, 1);
	snprintf(err, errlen, "%s: %s is out of range: expected %s", mp->key, got,
	         range);
	return -1;
}

/* Check every parameter of DEV. */
int device_validate(const struct device *dev, char *err, size_t errlen)
{
	if (dev->type == NULL) {
		snprintf(err, errlen, "model: no device model given");
		return -1;
	}
	/*
	 * Strictly inside the range is valid whatever the ends' kinds (and
	 * rules out NaN and infinities): two compares per value, as every
	 * solve validates.  Anything else takes the full test.
	 */
	const struct model_param *mp = dev->type->params;
	for (size_t k = 0; k < dev->type->nparams; k++) {
		double x = dev->p[k];
		if (x > mp[k].min && x < mp[k].max)
			continue;
		if (isfinite(x) && ((x == mp[k].min && !mp[k].min_open) ||
		                    (x == mp[k].max && !mp[k].max_open)))
			continue; /* on a closed end */
		return model_param_check(&mp[k], x, err, errlen);
	}
	if (dev->type->validate != NULL)
		return dev->type->validate(dev->p, err, errlen);
	return 0;
}

/* Whether DEV is one Shockley junction that does not heat itself, with
 * its constants into *SK. */
static bool device_junction_of(const struct device *dev,
                               struct model_shockley *sk)
{
	const struct model_type *t = dev->type;
	return t->shockley != NULL && !thermal_active(dev) &&
	       t->shockley(dev->p, sk) == 0;
}

/* Validate DEV and note the answer, and its junction constants. */
int device_check(struct device *dev, char *err, size_t errlen)
{
	int rc = device_validate(dev, err, errlen);
	dev->checked = rc == 0;
	dev->junction = dev->checked && device_junction_of(dev, &dev->sk);
	return rc;
}

/* device_ready's work past the flag (see model.h). */
int device_recheck(const struct device *dev, char *err, size_t errlen)
{
	if (!dev->checked)
		return device_validate(dev, err, errlen);
	/* Tests run with this: a stale flag on parameters that are not valid
	 * would otherwise solve them silently. */
	assert(device_validate(dev, NULL, 0) == 0 &&
	       "a device marked checked is not valid: a write forgot to clear it");
#ifndef NDEBUG
	struct model_shockley sk;
	bool junction = device_junction_of(dev, &sk);
	assert(junction == dev->junction &&
	       (!junction || (sk.is == dev->sk.is && sk.nvt == dev->sk.nvt &&
	                      sk.rs == dev->sk.rs)) &&
	       "a checked device's junction constants are stale");
#endif
	return 0;
}

/* Device current at V. */
double device_current(const struct device *dev, double v)
{
	if (dev->type->current == NULL)
		return NAN;
	const double *k = device_whole_constants(dev);
	if (k != NULL)
		return dev->type->current_k(dev->p, k, v);
	return dev->type->current(dev->p, v);
}

/* dI/dV at V. */
double device_conductance(const struct device *dev, double v)
{
	if (dev->type->conductance == NULL)
		return NAN;
	const double *k = device_whole_constants(dev);
	if (k != NULL && dev->type->conductance_k != NULL)
		return dev->type->conductance_k(dev->p, k, v);
	return dev->type->conductance(dev->p, v);
}

/* Device voltage at I. */
int device_voltage(const struct device *dev, double i, double *v)
{
	if (dev->type->voltage == NULL)
		return -1;
	return dev->type->voltage(dev->p, i, v);
}

/* Natural plotting and scanning range. */
void device_range(const struct device *dev, double *vmin, double *vmax)
{
	dev->type->range(dev->p, vmin, vmax);
}

/* The model's extra results at (V, I). */
int device_secondary(const struct device *dev, const struct source *src,
                     double v, double i, struct model_extra *out)
{
	memset(out, 0, sizeof *out);
	if (dev->type->secondary == NULL)
		return -1;
	/* A device that heats itself reports at the point's own junction
	 * temperature (a transistor reads its collector side off the curve
	 * there: thermal.h). */
	const double *p = dev->p;
	struct problem at;
	if (src != NULL && thermal_active(dev)) {
		struct problem q = { .src = *src, .dev = *dev };
		thermal_problem_at_point(&q, v, i, &at);
		p = at.dev.p;
	}
	if (dev->type->secondary(p, src, v, i, out) != 0) {
		memset(out, 0, sizeof *out);
		return -1;
	}
	return 0;
}

/* The power the device dissipates. */
double device_dissipation(const struct device *dev, const struct source *src,
                          double v, double i)
{
	/* A device that heats itself: its power at the point's own Tj. */
	if (src != NULL && dev->type != NULL && dev->type->power != NULL &&
	    thermal_active(dev)) {
		struct problem q = { .src = *src, .dev = *dev }, at;
		thermal_problem_at_point(&q, v, i, &at);
		return device_heat(&at.dev, src, v, i);
	}
	return device_heat(dev, src, v, i);
}

/* The model's power at its own temperature parameter (see model.h). */
double device_heat(const struct device *dev, const struct source *src,
                   double v, double i)
{
	if (dev->type != NULL && dev->type->power != NULL)
		return dev->type->power(dev->p, src, v, i);
	return v * i;
}
