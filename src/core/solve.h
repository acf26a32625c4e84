/*
 * solve.h - finding operating points: the every-root scan, a fast single
 * solve for monotone devices, and verification.
 */
#ifndef BIASLINE_SOLVE_H
#define BIASLINE_SOLVE_H

#include <stdbool.h>
#include <stddef.h>

#include "problem.h"
#include "stepper.h"

#define SOLVE_MAX_POINTS 16

/* One operating point. */
struct op_point {
	double v, i;       /* device voltage and current */
	double power;      /* V * I, W */
	double rd;         /* differential resistance dV/dI, ohm (may be < 0) */
	double residual;   /* |F| at the point, in the residual's unit */
	unsigned steps;    /* iterations the refining method took */
	enum solve_method method;
	bool tangent;      /* a touching point (double root), not a crossing */
};

/* Why a solve ended. */
enum solve_status {
	SOLVE_OK,          /* at least one verified point */
	SOLVE_NONE,        /* no crossing in the device's range */
	SOLVE_FAILED,      /* the method stopped without a verified point */
	SOLVE_BAD_INPUT,   /* the problem cannot be solved as stated */
};

/* All operating points found. */
struct solve_result {
	enum solve_status status;
	size_t n;
	struct op_point pts[SOLVE_MAX_POINTS];
	enum step_status stop;   /* for a single-method solve: why it stopped */
	char message[256];       /* plain-language reason when not SOLVE_OK */
};

/*
 * Solve PB with O.  METHOD_AUTO scans the device's range for every crossing
 * (or takes the unique bracket of a monotone device) and refines each with
 * safeguarded Newton; any other method runs that stepper from O's start
 * point and reports the one point it reaches.  Points are sorted by voltage.
 * A device that heats itself (thermal.h: thermal_resistance > 0) is solved
 * with its junction temperature: every thermally stable heat balance up to
 * its maximum junction temperature, each an electrical solve at its Tj,
 * whatever the method; SOLVE_NONE with the reason when it runs away
 * (thermal.h has the unstable balances too).
 */
enum solve_status solve_problem(const struct problem *pb,
                                const struct solve_options *o,
                                struct solve_result *out);

/*
 * solve_problem with METHOD_AUTO that also hands back the brackets of the
 * every-root scan it ran (BR, room for SOLVE_MAX_POINTS; *NB of them, 0
 * when the answer came without a scan), for a caller that looks further
 * at the same problem (a sweep's continuation) without scanning again.
 */
enum solve_status solve_problem_brackets(const struct problem *pb,
                                         const struct solve_options *o,
                                         struct solve_result *out,
                                         struct bracket *br, size_t *nb);

/*
 * The fast path for one operating point of a monotone device with a finite
 * source resistance (or any source): safeguarded Newton in the bracket.
 * Returns 0 and fills *PT, or -1 (always for a device that heats itself).
 */
int solve_fast(const struct problem *pb, double tol, struct op_point *pt);

/* Fill PT's derived fields (power, rd, residual) from V and I. */
void solve_finish_point(const struct problem *pb, struct op_point *pt);

/*
 * Check that (V, I) is an operating point of PB to relative tolerance TOL
 * (at least a few ulp): that an intersection of the device curve and the
 * load line lies within TOL |V| of V and TOL |I| of I (for a device that
 * heats itself, the curve at the point's own junction temperature).  The
 * distance is measured, not inferred from a residual: a small interval
 * around the point across which the residual changes sign holds the
 * intersection, and the currents and voltages both curves allow across
 * it bound how far it is (where that interval is below what rounding
 * resolves, a residual at the rounding level passes).
 */
bool solve_verify(const struct problem *pb, double v, double i, double tol);

#endif
