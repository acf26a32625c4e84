/*
 * thermal_stepper.h - the thermal loop stepped one projection at a time,
 * like the electrical stepper (stepper.h): init / step / status, with a
 * trace, so that a front end can draw the path growing one segment per key.
 *
 * The thermal plane has the junction temperature Tj across and the heat
 * P up.  Two curves meet there: the heat-removal line P = (Tj - Ta)/theta
 * from (Ta, 0) with slope 1/theta, and the device's P(Tj), each point of
 * it an electrical solve at Tj (thermal.h).  One projection is a half
 * step:
 *
 *     vertical to the device:        P_k = P(Tj_k)          (the part heats)
 *     horizontal to the heat line:   Tj_k+1 = Ta + theta P_k (the heat flows)
 *
 * so a full step is the map g(Tj) = Ta + theta P(Tj), whose slope is the
 * loop gain G (heat.h).  0 < G < 1 staircases in, -1 < G < 0 spirals in,
 * G > 1 staircases out: thermal runaway.  G < -1 spirals out, but only the
 * iteration overshoots there: the part itself settles (G < 1).
 *
 * The path stops converged when a full step moves Tj by no more than the
 * tolerance (relative to the absolute temperature), diverging when Tj
 * passes the maximum junction temperature (the part runs away), cycling
 * on a 2-cycle, out of domain when the electrical solve fails, at the cap
 * after the options' max_steps projections.
 */
#ifndef BIASLINE_THERMAL_STEPPER_H
#define BIASLINE_THERMAL_STEPPER_H

#include <stddef.h>

#include "problem.h"
#include "stepper.h"

/* One projection of the thermal path. */
struct thermal_row {
	unsigned k;         /* step number; 0 is the start point */
	double tj;          /* junction temperature, degC */
	double p;           /* heat, W: P(Tj) on the device curve, or on the
	                       heat line (Tj - Ta)/theta */
	double v, i;        /* the electrical point behind the row: at TJ for
	                       a device row, the one whose heat moved the
	                       junction here for a heat-line row (NaN at the
	                       start) */
	double step;        /* the last full step's change of Tj (NaN first) */
	double ratio;       /* step / previous step: tends to G (NaN first) */
	enum point_on on;   /* ON_START, ON_DEVICE or ON_LINE (the heat line) */
};

struct thermal_stepper;

/* Allocate a stepper; free with thermal_stepper_destroy.  NULL on no memory. */
struct thermal_stepper *thermal_stepper_create(void);

/* Free S (NULL is fine). */
void thermal_stepper_destroy(struct thermal_stepper *s);

/*
 * Start a path for PB (which must heat itself: thermal_active) with O (both
 * copied) at junction temperature START (NaN: the ambient, a cold part
 * switched on).  The start point lies on the heat line.  Returns 0, or -1
 * (status STEP_UNDEFINED) when PB does not heat itself.
 */
int thermal_stepper_init(struct thermal_stepper *s, const struct problem *pb,
                         const struct solve_options *o, double start);

/* One projection; returns the status after it (a stopped path stays put). */
enum step_status thermal_stepper_step(struct thermal_stepper *s);

/* The status now. */
enum step_status thermal_stepper_status(const struct thermal_stepper *s);

/* Step until not STEP_CONTINUE; returns the final status. */
enum step_status thermal_stepper_run(struct thermal_stepper *s);

/* Re-run the path from its start up to N steps (steps back when N < now). */
enum step_status thermal_stepper_rewind(struct thermal_stepper *s, size_t n);

/* The trace so far: *N rows (row 0 is the start point). */
const struct thermal_row *thermal_stepper_trace(const struct thermal_stepper *s,
                                                size_t *n);

/* The newest row (NULL before init). */
const struct thermal_row *thermal_stepper_last(const struct thermal_stepper *s);

/* The problem the stepper runs on. */
const struct problem *thermal_stepper_problem(const struct thermal_stepper *s);

#endif
