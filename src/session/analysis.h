/*
 * analysis.h - the parts of a session that design, sweep and tolerance
 * read: an optional target, the parts' ratings and per-parameter
 * tolerances, and how they become core requests.
 *
 *   target:
 *     current: 10m          # at most one of current, voltage, power
 *     solve_for: rs         # rs (default) or vs
 *     series: E24           # standard series for RS (default E24)
 *     current_min: 9.5m     # spec window for the Monte Carlo yield:
 *     current_max: 10.5m    #   any of current_min/max, voltage_min/max
 *   ratings:
 *     device_max_power: 75m
 *     device_max_current: 30m
 *     resistor_power: 250m
 *     ambient_temperature: 40
 *   tolerances:             # per parameter key: vs, rs, is, rp or a
 *     rs: 5%                #   device key; "5%" = +-5 % of the value,
 *     vs: {min: 22, max: 26}          # "0.5" = +-0.5 in its unit
 *     saturation_current: {plus_minus: 50%, distribution: normal}
 *
 * A normal distribution takes the half-range as 3 sigma; uniform is the
 * default.  The plus_minus of a temperature is a plain number of degrees.
 */
#ifndef BIASLINE_SESSION_ANALYSIS_H
#define BIASLINE_SESSION_ANALYSIS_H

#include <stdbool.h>
#include <stddef.h>

#include "core/design.h"
#include "core/eseries.h"
#include "core/ratings.h"
#include "core/tolerance.h"
#include "core/verdict.h"

/* Longest tolerance key in bytes ("source.network." and a part name fit). */
#define SESSION_TOL_KEY_MAX 64

/* How a tolerance was written. */
enum session_tol_form {
	SESSION_TOL_PERCENT,    /* +- a per cent of the nominal value */
	SESSION_TOL_ABSOLUTE,   /* +- a in the parameter's unit */
	SESSION_TOL_RANGE,      /* from a to b */
};

/* One tolerance as written. */
struct session_tolerance {
	char key[SESSION_TOL_KEY_MAX];
	enum session_tol_form form;
	double a, b;
	enum tol_dist dist;
};

/* The optional target (NaN: not given). */
struct session_target {
	double current, voltage, power;    /* at most one is given */
	enum design_unknown solve_for;
	enum eseries series;
	double current_min, current_max;   /* yield windows; NaN = open */
	double voltage_min, voltage_max;
};

/* What design, sweep and tolerance read from a session. */
struct session_analysis {
	struct session_target target;
	struct ratings ratings;
	size_t ntol;
	struct session_tolerance tol[TOL_MAX_ITEMS];
};

struct session;

/* Fill A with "nothing given". */
void session_analysis_init(struct session_analysis *a);

/* True when A and B are the same, every number bit for bit. */
bool session_analysis_equal(const struct session_analysis *a,
                            const struct session_analysis *b);

/*
 * The design request of S's target (kind and value), with SOLVE_FOR and
 * SERIES from the target.  Returns 0, or -1 when S has no target.
 */
int session_design_request(const struct session *s, struct design_request *rq);

/*
 * The tolerance case of S on its problem PB (session_problem): each
 * tolerance turned into a [lo, hi] range around PB's values.  Returns 0,
 * or -1 with a message naming the key ("tolerances.rs: ...").
 */
int session_tolerance_case(const struct session *s, const struct problem *pb,
                           struct tol_case *c, char *err, size_t errlen);

/* The spec windows of S's target into W (at most 2); returns how many. */
size_t session_target_windows(const struct session *s, struct tol_window *w);

/*
 * The worst case of each solved row of RES (design_solve on S's problem
 * PB for RQ) over S's tolerances, each built around the row's own value,
 * held to S's ratings (design_row_worst fills rows[k].worst).  Returns 0,
 * or -1 with a message when S has no tolerances or one cannot be built.
 */
int session_design_worst(const struct session *s, const struct problem *pb,
                         const struct design_request *rq,
                         struct design_result *res, char *err, size_t errlen);

/* session_design_worst watched by PR (core/progress.h; may be NULL; the
 * fraction runs over all rows): stopped, -1 with ERR saying so. */
int session_design_worst_watched(const struct session *s,
                                 const struct problem *pb,
                                 const struct design_request *rq,
                                 struct design_result *res, char *err,
                                 size_t errlen, const struct progress *pr);

/*
 * The ratings verdict at the point (V, I) of S's problem PB, with S's
 * source form, ratings and target (core/verdict.h).
 */
void session_verdict(const struct session *s, const struct problem *pb,
                     double v, double i, struct verdict *out);

#endif
