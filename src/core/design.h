/*
 * design.h - design for a target: the series resistance RS (or the source
 * voltage VS) of a Thevenin source that puts the device's operating point
 * at a target current, voltage or power, and the standard resistors
 * either side of the exact value.
 *
 * The target fixes the device's point (V_t, I_t) on its own curve:
 *   current I_t:  V_t = V_dev(I_t)         (the model's voltage(I))
 *   voltage V_t:  I_t = I_dev(V_t)         (the model's current(V))
 *   power P:      V I(V) = P on the curve (monotone in the forward region;
 *                 solved by bisection in I, or in V when the model has no
 *                 voltage(I)), then as for a current target.
 * The load line through that point then gives, exactly,
 *   RS = (VS - V_t) / I_t        or        VS = V_t + RS I_t.
 * Each reported value is checked by a full solve (solve_problem) of the
 * problem with that value, and its error from the target is reported.
 *
 * A target on one of the model's own results (a transistor stage's
 * collector current or VCE, DESIGN_RESULT), or an unknown that changes the
 * device itself (a device parameter such as the emitter resistor), has no
 * device point fixed in advance: the exact value is then the root of
 * "the result at the solved point minus the target" in the unknown,
 * bracketed on a grid around the present value (logarithmic for a
 * resistance) and bisected, each evaluation a full solve.  Where the
 * result does not depend on the source (a transistor's collector side
 * depends only on IB), the device point is found first as for a current
 * target and the load line gives the value directly.
 *
 * Either sign: a target current (or voltage) below zero is a point in the
 * third quadrant, where a Zener shunt or a reverse-biased junction works
 * from a negative source; a power target is looked for on the side of the
 * source's sign (the reverse region when its open-circuit voltage is
 * below zero).
 *
 * Of the standard values either side, the one whose point lands nearer
 * the target (the smaller error) is marked nearest.  With tolerances
 * (tolerance.h), design_row_worst gives each row's worst case: the range
 * of the current, the largest resistor power held to the ratings with its
 * verdict (verdict.h) and the standard rating that fits.
 */
#ifndef BIASLINE_DESIGN_H
#define BIASLINE_DESIGN_H

#include <stdbool.h>
#include <stddef.h>

#include "eseries.h"
#include "paramref.h"
#include "problem.h"
#include "ratings.h"
#include "solve.h"
#include "tolerance.h"

/* What the target fixes. */
enum design_target {
	DESIGN_CURRENT,   /* device current, A */
	DESIGN_VOLTAGE,   /* device voltage, V */
	DESIGN_POWER,     /* device power, W */
	DESIGN_RESULT,    /* one of the model's own results (model.h's
	                     model_extra, by key): a transistor stage's
	                     collector_current or collector_emitter_voltage */
};

/* Room for a result key ("emitter_collector_voltage"). */
#define DESIGN_RESULT_MAX 32

/* What the design changes. */
enum design_unknown {
	DESIGN_FOR_RS,    /* the series resistance; VS stays */
	DESIGN_FOR_VS,    /* the source voltage; RS stays */
	DESIGN_FOR_PART,  /* a parameter by key (design_request.part): a part
	                     of a network source, or a device parameter such
	                     as a stage's emitter_resistance */
};

/* Which value a result row holds. */
enum design_row_kind {
	DESIGN_ROW_EXACT,   /* the exact value */
	DESIGN_ROW_LOWER,   /* the next standard value below it */
	DESIGN_ROW_HIGHER,  /* the next standard value above it */
};

/* A design request. */
struct design_request {
	enum design_target target;
	double value;              /* the target: A, V or W */
	enum design_unknown unknown;
	enum eseries series;       /* for the lower/higher rows (resistances) */
	struct paramref part;      /* DESIGN_FOR_PART: which part (paramref.h) */
	char result[DESIGN_RESULT_MAX]; /* DESIGN_RESULT: the result's key */
};

/* One row's worst case over the tolerance box (design_row_worst). */
struct design_worst {
	bool done;                 /* the worst case ran */
	double i_min, i_max;       /* device current, A */
	double v_min, v_max;       /* device voltage, V */
	double p_device_max;       /* largest device power, W */
	double result_min, result_max; /* a DESIGN_RESULT target's result
	                              (a stage's collector current) over the
	                              corners of the box; NaN otherwise */
	double p_resistor_max;     /* largest power in RS (RP), or in the
	                              designed resistor of a network source,
	                              W; NaN when there is none */
	double suggested_resistor_power; /* the standard rating that fits the
	                              rule of thumb at worst (NaN: none) */
	enum ratings_verdict resistor_verdict; /* RS against its rating */
	enum ratings_verdict verdict;  /* the worst of every part's verdict */
	char words[224];           /* the resistor's line ("RS dissipates ...
	                              at worst, ..."), or the device's */
	unsigned safety;           /* safety.h cautions over the box */
	char message[200];         /* why the worst case did not run, or "" */
};

/* One candidate value and what it gives. */
struct design_row {
	enum design_row_kind kind;
	double value;              /* RS in ohm or VS in V */
	bool solved;               /* a verified operating point was found */
	size_t npoints;            /* operating points with this value */
	struct op_point pt;        /* the one nearest the target's point */
	double achieved;           /* the targeted quantity at PT */
	double error_percent;      /* 100 (achieved - target) / target */
	struct ratings_report power; /* power and ratings at PT */
	bool nearest;              /* the standard value nearest the target */
	struct design_worst worst; /* filled by design_row_worst, else !done */
};

#define DESIGN_MAX_ROWS 3

/* The result of a design. */
struct design_result {
	double v_target, i_target; /* the device point that meets the target */
	size_t nrows;
	struct design_row rows[DESIGN_MAX_ROWS];
	int nearest;               /* index of the nearest standard row, or -1
	                              (no standard rows, or none solved) */
	char message[256];         /* why the design failed, or "" */
};

/* Row kind name: "exact", "lower", "higher". */
const char *design_row_name(enum design_row_kind k);

/* Target name: "current", "voltage", "power", "result". */
const char *design_target_name(enum design_target t);

/*
 * The device point (V, I) at which the target RQ is met on PB's device.
 * Returns 0, or -1 with a message in ERR.
 */
int design_device_point(const struct problem *pb,
                        const struct design_request *rq, double *v, double *i,
                        char *err, size_t errlen);

/*
 * Copy PB into OUT with RS (DESIGN_FOR_RS) or VS (DESIGN_FOR_VS) set to
 * VALUE, the other source quantity kept.  Returns 0, or -1 when PB's
 * source has no finite series resistance (an ideal current source).
 */
int design_apply(const struct problem *pb, enum design_unknown u, double value,
                 struct problem *out);

/*
 * As design_apply, for any unknown of RQ (a network part too): OUT is PB
 * with the unknown set to VALUE.  Returns 0, or -1 when VALUE is not valid.
 */
int design_apply_request(const struct problem *pb,
                         const struct design_request *rq, double value,
                         struct problem *out);

/* The unit of RQ's unknown (a resistance, a voltage or a current). */
enum qty_kind design_unknown_unit(const struct problem *pb,
                                  const struct design_request *rq);

/*
 * Design for RQ on PB (its source in Thevenin form: VS = voc, RS = r),
 * solving each row with O; R (may be NULL) gives the ratings checked at
 * each row's point.  Returns 0 with the rows (exact, then lower and higher
 * for a resistance) and the nearest marked, or -1 with a plain-language
 * reason in OUT->message.  The rows' worst cases are left for
 * design_row_worst.
 */
int design_solve(const struct problem *pb, const struct solve_options *o,
                 const struct design_request *rq, const struct ratings *r,
                 struct design_result *out);

/*
 * The worst case of one row: C is the tolerance case built on the row's
 * problem (design_apply_request with the row's value, so a tolerance on
 * the designed part follows its new value), R (may be NULL) the ratings,
 * RQ (may be NULL) the request.  For a plain source the resistor is RS
 * (RP); for a network source whose designed part is a resistor, that part
 * is rated, its largest power taken over the corners of the box (where an
 * output monotone in each parameter has its extremes); for a model result
 * target (a collector current) its range over the corners too.  Fills OUT and
 * returns 0, or -1 with the reason in OUT->message (no tolerances, too
 * many for the corners, no point at a corner).
 */
int design_row_worst(const struct tol_case *c, const struct ratings *r,
                     const struct design_request *rq,
                     struct design_worst *out);

/* design_row_worst watched by PR (progress.h; may be NULL): stopped, it
 * returns -1 with OUT->message saying so. */
int design_row_worst_watched(const struct tol_case *c, const struct ratings *r,
                             const struct design_request *rq,
                             struct design_worst *out,
                             const struct progress *pr);

/* The unit of a target of kind T: a current, a voltage or a power
 * (QTY_NUMBER for DESIGN_RESULT: see design_request_unit). */
enum qty_kind design_target_unit(enum design_target t);

/* The unit of RQ's target on PB (a result's own unit). */
enum qty_kind design_request_unit(const struct problem *pb,
                                  const struct design_request *rq);

/* What RQ's target is called: "current", or the result's key. */
const char *design_request_name(const struct design_request *rq);

/*
 * The value of PB's model result KEY at the point (V, I) into *OUT;
 * returns 0, or -1 when the model has no such result.
 */
int design_result_value(const struct problem *pb, const char *key, double v,
                        double i, double *out);

#endif
