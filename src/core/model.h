/*
 * model.h - the device interface: one const model_type per device model,
 * collected in a registry.  A device is a type plus its parameter values.
 *
 * Conventions.  V is the voltage across the device and I the current into
 * it, in the passive sign convention.  Every model gives current(V) when its
 * curve is single-valued in V, and voltage(I) when it is single-valued in I;
 * at least one of the two exists.  conductance(V) is dI/dV.
 *
 * A model with a series resistance (say a diode's bulk resistance) may
 * split itself into an intrinsic part and that resistance: solvers then
 * fold the resistance into the source and work on the intrinsic junction,
 * which is better conditioned.  current() always includes it.
 */
#ifndef BIASLINE_MODEL_H
#define BIASLINE_MODEL_H

#include <stdbool.h>
#include <stddef.h>

#include "quantity.h"

#define MODEL_MAX_PARAMS 16

/* One parameter of a model: key, unit, default, valid range and help. */
struct model_param {
	const char *key;      /* session-file key, snake_case full words */
	const char *label;    /* short label for the side pane */
	enum qty_kind kind;   /* unit of the value */
	double def;           /* default value; NAN when the key is required */
	double min, max;      /* valid range */
	bool min_open;        /* true: value must be > min, else >= min */
	bool max_open;        /* true: value must be < max, else <= max */
	bool log_step;        /* nudge multiplicatively (Is, resistances) */
	const char *help;     /* one line of help text */
	bool off_at_default;  /* the default means "not used" (0 K: no scaling,
	                         0 K/W: no self-heating); shown as "none" */
	const char *needs;    /* the key of a parameter this one only matters
	                         with (Eg needs reference_temperature), or NULL */
};

struct source;

/* A key a model used to take, and what to do instead (model_type.retired). */
struct model_retired {
	const char *key;
	const char *why;
};

/* A junction that is one Shockley exponential behind a series resistance. */
struct model_shockley {
	double is;     /* saturation current, A */
	double nvt;    /* n Vt, V */
	double rs;     /* the series resistance (series_resistance's value) */
};

/* Most constants a model derives from its parameters (model_type.prepare). */
#define MODEL_MAX_DERIVED 8

#define MODEL_MAX_EXTRA 8

/* One labelled result a model reports beside V and I. */
struct model_extra_value {
	const char *key;      /* snake_case for CSV and files: "collector_current" */
	const char *label;    /* short label for the side pane: "IC" */
	enum qty_kind kind;   /* unit of the value */
	double value;
};

/* What a model reports about an operating point beyond V and I. */
struct model_extra {
	size_t n;                                  /* values used */
	struct model_extra_value v[MODEL_MAX_EXTRA];
	const char *region;   /* "active", "saturated", ...; NULL when none */
	bool warn;            /* the point is outside what the model trusts */
	char note[200];       /* one line for the user, or "" */
};

/* Parameter values of a device, indexed like the type's table. */
typedef double model_values[MODEL_MAX_PARAMS];

/* One device model. */
struct model_type {
	const char *name;                  /* session-file name, "diode" */
	const char *summary;               /* one line for help screens */
	const struct model_param *params;
	size_t nparams;
	/* true when I(V) is strictly increasing everywhere (unique point) */
	bool monotone;

	/* I at V; NULL when the curve is not single-valued in V. */
	double (*current)(const double *p, double v);
	/* dI/dV at V; NULL only when current is NULL. */
	double (*conductance)(const double *p, double v);
	/*
	 * V at I into *V; returns 0, or -1 when I is outside the curve's range.
	 * NULL when the curve is not single-valued in I.
	 */
	int (*voltage)(const double *p, double i, double *v);
	/* dV/dI at I (the differential resistance); NULL when voltage is. */
	double (*resistance)(const double *p, double i);

	/* Natural voltage range for plots and the every-root scan. */
	void (*range)(const double *p, double *vmin, double *vmax);

	/*
	 * Extra validation beyond the table's ranges (cross-parameter rules).
	 * Returns 0, or -1 with a message naming the key in ERR.  May be NULL.
	 */
	int (*validate)(const double *p, char *err, size_t errlen);

	/*
	 * Optional series split: the series resistance in ohm, and the
	 * intrinsic current/conductance of the junction behind it.  NULL when
	 * the model has none.
	 */
	double (*series_resistance)(const double *p);
	double (*intrinsic_current)(const double *p, double vj);
	double (*intrinsic_conductance)(const double *p, double vj);

	/*
	 * Optional Newton step limiting for exponential junctions: given the
	 * previous and the proposed intrinsic voltage, return the limited one.
	 */
	double (*limit)(const double *p, double vnew, double vold);

	/*
	 * Optional: the intrinsic junction is one Shockley exponential,
	 * Ij(vj) = Is (exp(vj / (n Vt)) - 1), behind the series resistance.
	 * Fills OUT for P and returns 0 (or -1 when this parameter set has
	 * no such junction), so that the solvers take the closed form
	 * (junction.h).
	 */
	int (*shockley)(const double *p, struct model_shockley *out);

	/*
	 * Optional: constants the model derives from its parameters by a
	 * solve of their own (a tunnel diode's excess-current constants, a
	 * zener's breakdown amplitude and series resistance).  PREPARE fills
	 * K (MODEL_MAX_DERIVED values) from P and returns 0, or -1 when P
	 * gives none; CURRENT_K and CONDUCTANCE_K are the current and
	 * conductance the junction view evaluates (problem.h: the intrinsic
	 * ones of a model with a series split, else current and conductance)
	 * given K.  A caller that evaluates one parameter set many times (the
	 * scan, a stepped Newton, an inner junction solve) derives once;
	 * current() and conductance() derive on every call, so a device keeps
	 * its constants (struct device, device_prepare) and device_current
	 * uses them while its values are the ones they came from.
	 */
	int (*prepare)(const double *p, double *k);
	double (*current_k)(const double *p, const double *k, double v);
	double (*conductance_k)(const double *p, const double *k, double v);

	/*
	 * Optional, for a curve given as V(I): the curve as a function of a
	 * parameter T along it, with I rising as T does, so that the scan
	 * needs no inner solve (a self-heated thermistor's signed temperature
	 * rise: V and I follow from the heat balance directly).  POINT_AT
	 * gives (V, I) at T, returning 0 or -1; PARAM_RANGE the range of T
	 * matching current_range; PARAM_RISING the interval of T where V
	 * rises with T (the load line's residual rises there too, so it
	 * holds at most one crossing).
	 */
	int (*point_at)(const double *p, double t, double *v, double *i);
	void (*param_range)(const double *p, double *t0, double *t1);
	void (*param_rising)(const double *p, double *t0, double *t1);

	/*
	 * Optional: the curve's inflections, the junction voltages (the
	 * variable of the junction view, problem.h) where its conductance
	 * turns from falling to rising or back.  Between them and beyond the
	 * outer ones the conductance is monotone, so the residual's slope is
	 * too, and a load line crosses each piece at most twice: the
	 * every-root scan then brackets every crossing exactly instead of
	 * sampling (stepper.h).  Writes at most MAX values, increasing, and
	 * returns how many; the model promises there are no others.
	 */
	size_t (*inflections)(const double *p, double *x, size_t max);

	/*
	 * Optional starting estimate of the intrinsic voltage at which the
	 * intrinsic current equals I (I > 0), used to seed Newton.
	 */
	double (*intrinsic_voltage)(const double *p, double i);

	/*
	 * Optional named presets: a NULL-terminated list of names, and the
	 * function that writes a preset's values into P (every parameter the
	 * preset defines; others untouched).  Returns 0, or -1 for an unknown
	 * name.  Both NULL when the model has none.
	 */
	const char *const *presets;
	int (*apply_preset)(const char *name, double *p);

	/*
	 * Optional results beyond V and I at the operating point (V, I) with
	 * source SRC (a transistor's collector side and region, a thermistor's
	 * temperature).  Fills OUT and returns 0, or -1 when they cannot be
	 * given.  NULL when the model has none.
	 */
	int (*secondary)(const double *p, const struct source *src, double v,
	                 double i, struct model_extra *out);

	/*
	 * Optional current range of a curve given only as V(I) (current is
	 * NULL): the currents where voltage() is defined, for the every-root
	 * scan and for plots.  NULL for curves with current(V).
	 */
	void (*current_range)(const double *p, double *imin, double *imax);

	/*
	 * Optional: copy into P what the curve takes from the source that
	 * biases the device, into the slots after the table's parameters
	 * (P[nparams] on; device_init zeroes them).  A FET's drain loop
	 * carries the source resistor, so its transfer curve depends on the
	 * source's r.  problem_bind calls it whenever a problem's source
	 * changes.  NULL for a curve that is the device's own.
	 */
	void (*bind)(double *p, const struct source *src);

	/*
	 * Optional: the power the device dissipates at the point (V, I) with
	 * source SRC, when that is not V I: a transistor's V and I are its
	 * input loop's (VGS and ID, or VB and IB), and its heat is made in
	 * the output loop (ID VDS; IC VCE + IB VBE).  NULL: V I.
	 */
	double (*power)(const double *p, const struct source *src, double v,
	                double i);

	/*
	 * Optional: keys this model took in earlier versions, each with what
	 * to do instead, so that an old file is refused with that advice
	 * rather than as a misspelling.  Ends with { NULL, NULL }.
	 */
	const struct model_retired *retired;
};

struct curve_data;

/*
 * A device: its model and parameter values, and for a model drawn from a
 * table of points (models/measured.c) the table, borrowed: whoever fills
 * CURVE owns it and keeps it alive while the device is used.  A model that
 * uses CURVE finds it from P (P always points at a device's p array); NULL
 * for every other model.
 *
 * CHECKED says that P, as it stands, passed device_validate: parameters
 * are checked once, where they change (device_check, paramref_set), not
 * in every solve.  The solvers take a checked device as it is and check
 * any other one first (so a device built by hand is still refused with
 * its key).  Whoever writes P or CURVE directly clears it, or writes
 * through device_set_param, which does.
 *
 * JUNCTION and SK are noted with CHECKED and mean something only while it
 * holds: JUNCTION says the device is one Shockley junction that does not
 * heat itself (model_type.shockley answers, thermal_resistance is 0),
 * with its constants in SK, so that a solve goes straight to the closed
 * form without deriving Is(T) and n Vt again.
 */
struct device {
	const struct model_type *type;
	model_values p;
	const struct curve_data *curve;
	/*
	 * The model's derived constants (model_type.prepare) and the values
	 * KP they were derived from, filled by device_prepare: while P holds
	 * exactly those values they serve every evaluation, so the constants
	 * are derived once per change of the parameters, not per call.  A
	 * write to P needs no care: the constants then no longer match and
	 * are not used until device_prepare runs again.
	 */
	double k[MODEL_MAX_DERIVED];
	model_values kp;
	bool has_k;
	bool checked;
	bool junction;
	struct model_shockley sk;
};

/* The registry: all models, NULL-terminated. */
extern const struct model_type *const model_registry[];

/* Look a model up by its session-file name; NULL when unknown. */
const struct model_type *model_find(const char *name);

/*
 * Whether parameter K of TYPE, at the values P, takes part in the model:
 * false when it is at a default that means "not used", or when the
 * parameter it needs is not in use.  For reports that list only what acts.
 */
bool model_param_in_use(const struct model_type *type, const double *p,
                        size_t k);

/* Index of KEY in TYPE's parameter table, or -1. */
int model_param_index(const struct model_type *type, const char *key);

/* Fill DEV with TYPE and its default parameter values. */
void device_init(struct device *dev, const struct model_type *type);

/*
 * Check one value against its table entry.  Returns 0, or -1 with a message
 * naming the key and the valid range in ERR.
 */
int model_param_check(const struct model_param *mp, double value,
                      char *err, size_t errlen);

/*
 * Check every parameter of DEV (ranges, required keys, then the model's own
 * validator).  Returns 0, or -1 with a message naming the key in ERR (ERR
 * may be NULL when ERRLEN is 0).
 */
int device_validate(const struct device *dev, char *err, size_t errlen);

/*
 * Derive DEV's constants for its current values, unless it holds them
 * already (model_type.prepare; nothing for a model without).  problem_bind
 * calls it, so a problem's device has them after every change.
 */
void device_prepare(struct device *dev);

/* DEV's derived constants when they are those of its current values,
 * else NULL. */
const double *device_constants(const struct device *dev);

/*
 * device_validate, and note the answer in DEV->checked (and what a solve
 * needs of a valid device: DEV->junction, DEV->sk): the call for whoever
 * builds or changes a device that will be solved.
 */
int device_check(struct device *dev, char *err, size_t errlen);

/*
 * Whether DEV may be solved as it is: 0 when it is checked or valid now,
 * else -1 with device_validate's message in ERR.  A checked device costs
 * one test; a debug build validates it all the same and aborts when the
 * flag lies (a write that forgot to clear it) or the noted junction
 * constants are not what the parameters give, so the tests catch one.
 * DEVICE_RECHECK is the part past the flag.
 */
int device_recheck(const struct device *dev, char *err, size_t errlen);
static inline int device_ready(const struct device *dev, char *err,
                               size_t errlen)
{
#ifdef NDEBUG
	if (dev->checked)
		return 0;
#endif
	return device_recheck(dev, err, errlen);
}

/* Set parameter K of DEV to X; DEV must be checked again before a solve. */
static inline void device_set_param(struct device *dev, size_t k, double x)
{
	dev->p[k] = x;
	dev->checked = false;
}

/* Device current at V (NaN when the model has no current(V)). */
double device_current(const struct device *dev, double v);

/* dI/dV at V (NaN when the model has no current(V)). */
double device_conductance(const struct device *dev, double v);

/* Device voltage at I into *V; returns 0 or -1 (undefined there). */
int device_voltage(const struct device *dev, double i, double *v);

/* Natural plotting and scanning range. */
void device_range(const struct device *dev, double *vmin, double *vmax);

/*
 * The model's extra results at (V, I) with source SRC into OUT (see
 * model_type.secondary), for a device that heats itself at the point's own
 * junction temperature (thermal.h).  Returns 0, or -1 (OUT then has n = 0)
 * when the model has none.
 */
int device_secondary(const struct device *dev, const struct source *src,
                     double v, double i, struct model_extra *out);

/* Device power V*I at (V, I). */
static inline double device_power(double v, double i) { return v * i; }

/*
 * The power DEV dissipates at (V, I) with source SRC: the model's own
 * (model_type.power) or V I; for a device that heats itself, at the
 * point's own junction temperature (thermal.h).  Ratings, tolerances,
 * cautions and every printed device power use this.
 */
double device_dissipation(const struct device *dev, const struct source *src,
                          double v, double i);

/*
 * The same at the temperature DEV's parameters give, even for a device
 * that heats itself (device_dissipation takes the point's own junction
 * temperature then, and the heat balance itself needs this one).
 */
double device_heat(const struct device *dev, const struct source *src,
                   double v, double i);

#endif
