/*
 * fit_models.h - private to the fit: what each model fits and how (one
 * const fit_spec per model, in fit_models.c), and the context the engine
 * (fit.c) hands the specs.
 */
#ifndef BIASLINE_FIT_MODELS_H
#define BIASLINE_FIT_MODELS_H

#include <math.h>
#include <stdbool.h>
#include <stddef.h>

#include "fit.h"

/* When a default free parameter is fitted. */
enum fit_need {
	FIT_NEED_NONE = 0,
	FIT_NEED_FORWARD,  /* only when some points are forward (V > 0, I > 0);
	                      else held silently */
	FIT_NEED_REVERSE,  /* needs points in breakdown (V < 0, I < 0): refused
	                      without them */
};

/* The points as the specs see them, sorted into temperature groups. */
struct fit_ctx {
	const struct model_type *type;
	size_t n;
	const double *x, *y, *t;   /* t NULL: the model's own temperature */
	size_t *order;             /* indices sorted by (temperature, x) */
	size_t ngroups;
	size_t *gstart;            /* group g is order[gstart[g] .. gstart[g+1]) */
	double *gtemp;             /* group temperature, degC (NaN: none) */
	size_t ref_group;          /* the group at (or nearest) the reference */
	bool fixed[MODEL_MAX_PARAMS];  /* held by the user */
};

struct fit_spec;

/*
 * Starting values: write the free parameters (FREE[i] true) of P from
 * closed forms on the points; held ones are read, never written.  Returns
 * 0, or -1 when the points give no estimate.
 */
typedef int (*fit_start_fn)(const struct fit_spec *s, const struct fit_ctx *c,
                            double *p, const bool *free);

/*
 * The model's y at point K for parameters P into *Y, and dy/dp_i for every
 * parameter the spec can fit into DY[i] (when DY is not NULL).  Returns 0,
 * or -1 when the model cannot be evaluated there.
 */
typedef int (*fit_eval_fn)(const struct fit_spec *s, const struct fit_ctx *c,
                           const double *p, size_t k, double *y, double *dy);

/* How one model is fitted. */
struct fit_spec {
	const struct model_type *type;
	enum fit_axes axes;
	int slope;                           /* +1: y rises with x; -1: falls */
	/* Parameters fitted by default, most important first, with the value
	 * to suggest when the points cannot determine one, when each is
	 * fitted, and an alternate key fitted instead when the first is held
	 * by the user (a power law held at its reference current fits its
	 * reference voltage). */
	const char *free[FIT_MAX_FREE];
	const char *hint[FIT_MAX_FREE];
	enum fit_need need[FIT_MAX_FREE];
	const char *alt[FIT_MAX_FREE];
	const char *temp_key;      /* set from the points' temperature, or NULL */
	const char *law_key;       /* fitted when the points span temperatures */
	const char *law_hint;
	const char *law_ref_key;   /* the temperature the law is referred to */
	fit_start_fn start;
	fit_eval_fn eval;
};

/* The spec of TYPE, or NULL when it cannot be fitted. */
const struct fit_spec *fit_spec_find(const struct model_type *type);

/* The spec table, NULL-terminated. */
extern const struct fit_spec *const fit_specs[];

/* Temperature of point K in degC, NaN when the points carry none. */
static inline double fit_ctx_temp(const struct fit_ctx *c, size_t k)
{
	return c->t != NULL ? c->t[k] : NAN;
}

#endif
