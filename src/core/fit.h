/*
 * fit.h - device parameters from measured points: weighted nonlinear least
 * squares by Levenberg-Marquardt (MINPACK's lmder through cminpack; Moré,
 * "The Levenberg-Marquardt algorithm: implementation and theory", Lecture
 * Notes in Mathematics 630, 1978), with analytic Jacobians, parameters
 * scaled to order one, closed-form starting values, and standard errors
 * and correlations from the Jacobian at the solution.
 *
 * Points.  Most models are fitted to (V, I) points in the model's passive
 * sign convention, optionally each with its junction temperature T; the
 * thermistors to (T, R) points, the zero-power resistance R at body
 * temperature T.  Below, x is V (or T) and y is I (or R).
 *
 * Weighting.  Relative (the default for every model: junction currents and
 * thermistor resistances span decades): residual ln(y_model / y), so each
 * point counts by its relative error.  Absolute: residual y_model - y.
 *
 * Pure computation: no I/O.  fit_run allocates the per-point results;
 * fit_result_fini frees them.
 *
 * For a front end showing a fit: the points and their residuals are in
 * fit_result.points, the fitted device is fit_result.type with
 * fit_result.p, fit_model_value draws its curve in the points' own terms
 * and fit_evaluate lists the residuals of any other parameter set.
 */
#ifndef BIASLINE_FIT_H
#define BIASLINE_FIT_H

#include <stdbool.h>
#include <stddef.h>

#include "model.h"

/* Most parameters one fit adjusts. */
#define FIT_MAX_FREE 6

/* Most points one fit takes. */
#define FIT_MAX_POINTS 4096

/* What the points are. */
enum fit_axes {
	FIT_AXES_VI,   /* x = V (volts), y = I (amperes), optional T (degC) */
	FIT_AXES_TR,   /* x = T (degC), y = R (ohms) */
};

/* How the residuals are weighted. */
enum fit_weight {
	FIT_WEIGHT_RELATIVE,   /* ln(y_model / y) */
	FIT_WEIGHT_ABSOLUTE,   /* y_model - y */
};

/* Outcome of fit_run. */
enum fit_status {
	FIT_OK = 0,
	FIT_UNSUPPORTED,    /* the model cannot be fitted (measured, tunnel ...) */
	FIT_BAD_POINTS,     /* a point the model cannot take (sign, duplicate,
	                       not monotone, not finite); see bad_point */
	FIT_TOO_FEW,        /* fewer points than free parameters */
	FIT_UNDETERMINED,   /* the points do not determine a parameter (rank) */
	FIT_NO_START,       /* no starting point the model accepts */
	FIT_NO_CONVERGENCE, /* the iteration did not converge */
	FIT_OUT_OF_RANGE,   /* the best fit leaves the model's valid range */
	FIT_NO_MEMORY,
};

/* What to fit. */
struct fit_request {
	const struct model_type *type;
	/* Parameter values: those held (fixed, or not fitted by this model)
	 * are used as they are; NaN for a required key nobody gave is fine
	 * when the fit does not need it (a thermistor's dissipation constant). */
	model_values p;
	bool fixed[MODEL_MAX_PARAMS];  /* held by the user: never fitted */
	enum fit_weight weight;
	size_t n;                      /* points, 1 .. FIT_MAX_POINTS */
	const double *x, *y;           /* see the top of the file */
	const double *t;               /* (V, I) only: temperature of each
	                                  point in degC, or NULL (the model's) */
};

/* One point after the fit. */
struct fit_point {
	double x, y, t;      /* as given (t NaN when none) */
	double fitted;       /* the model's y at x (and t) */
	double resid_abs;    /* fitted - y, in y's unit */
	double resid_rel;    /* fitted / y - 1 */
};

/* The outcome.  On failure only status, message, bad_point and (for
 * FIT_TOO_FEW and FIT_UNDETERMINED) the free set are meaningful. */
struct fit_result {
	enum fit_status status;
	char message[600];         /* why it failed and what to do, or notes */
	size_t bad_point;          /* FIT_BAD_POINTS: index of the point
	                              named first (0-based); else SIZE_MAX */
	size_t bad_point2;         /* the other point of a pair, or SIZE_MAX */

	const struct model_type *type;
	model_values p;            /* the fitted parameter set (held ones as
	                              given, derived held ones filled in) */
	size_t nfree;
	int idx[FIT_MAX_FREE];     /* the fitted parameters, most important first */
	double se[FIT_MAX_FREE];   /* standard errors in the parameter's unit;
	                              NaN when dof = 0 */
	double corr[FIT_MAX_FREE][FIT_MAX_FREE];  /* correlation matrix */
	bool held_by_fit[MODEL_MAX_PARAMS];  /* held at a value the fit chose
	                                        (a power law's reference
	                                        voltage, a reference temperature) */
	size_t n;                  /* points */
	int dof;                   /* n - nfree */
	enum fit_weight weight;
	double rms;                /* sqrt(sum r^2 / n) of the weighted residuals */
	double sigma;              /* sqrt(sum r^2 / dof): the residual scale the
	                              standard errors use; NaN when dof = 0 */
	double max_corr;           /* largest |correlation| off the diagonal */
	size_t ntemps;             /* distinct temperatures among the points */
	unsigned nfev, njev;       /* residual and Jacobian evaluations */
	struct fit_point *points;  /* n of them, owned */
};

/* The axes model TYPE is fitted on; FIT_AXES_VI for models it cannot fit. */
enum fit_axes fit_model_axes(const struct model_type *type);

/* True when TYPE can be fitted. */
bool fit_model_supported(const struct model_type *type);

/* The names of the models that can be fitted, ", " separated, into BUF. */
void fit_model_list(char *buf, size_t n);

/*
 * Fit RQ's model to its points into RES (always initialised; call
 * fit_result_fini afterwards whatever the status).  Returns RES->status.
 */
enum fit_status fit_run(const struct fit_request *rq, struct fit_result *res);

/* Free what RES owns. */
void fit_result_fini(struct fit_result *res);

/*
 * The model's y at x (and t: degC, NaN for the model's own temperature)
 * for parameters P, as the fit sees it: the current at V (for npn and pnp
 * the collector current at VBE), or a thermistor's zero-power resistance
 * at T.  NaN when the model cannot give it.  For drawing the fitted curve
 * through the points.
 */
double fit_model_value(const struct model_type *type, const double *p,
                       double x, double t);

/*
 * The residuals of parameter set P of TYPE at N points X, Y (T may be
 * NULL), without fitting: OUT[k] (N of them, the caller's) as fit_run
 * fills its points.  Returns the RMS of the residuals weighted by W (as
 * fit_result.rms), NaN when the model cannot be evaluated at some point
 * or cannot be fitted.  For listing how far a device (say one the user
 * has nudged since the fit) lies from the points.
 */
double fit_evaluate(const struct model_type *type, const double *p,
                    enum fit_weight w, size_t n, const double *x,
                    const double *y, const double *t, struct fit_point *out);

/*
 * Steinhart & Hart's three-point closed form (Steinhart & Hart, "Calibration
 * curves for thermistors", Deep-Sea Research 15, 1968): the coefficients
 * A, B, C of 1/T = A + B ln R + C (ln R)^3 through three (T degC, R ohm)
 * points.  Returns 0, or -1 when two points share a temperature or a
 * resistance.
 */
int fit_steinhart_hart_three_point(const double t_c[3], const double r[3],
                                   double *a, double *b, double *c);

#endif
