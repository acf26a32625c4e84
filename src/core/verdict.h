/*
 * verdict.h - the one place that says, at one operating point, where the
 * power goes and whether each part is inside its rating: the device, the
 * source resistor (or each part of a network source) and the source, each
 * with its power, its rating when the session gives one, the margin left
 * and a plain verdict; and the target with the error to it.  The CLI
 * prints these lines as they are and the front end shows the same fields,
 * so both say the same words.
 *
 * The verdicts (enum ratings_verdict; ratings.h has the rules of thumb,
 * common practice):
 *   within rating  the part is at or below its rating (and a resistor at or
 *                  below RATINGS_USE_FRACTION of its derated rating);
 *   caution        a resistor above that fraction but not above its rating;
 *   over rating    above the rating (or the ambient leaves a resistor none);
 *   no rating      the session gives none for this part: the power alone.
 * Each comparison is made on the values themselves (power against rating,
 * never a rounded ratio), so a power exactly at its rating is within it
 * and one a unit in the last place above is over.
 */
#ifndef BIASLINE_VERDICT_H
#define BIASLINE_VERDICT_H

#include <stdbool.h>
#include <stddef.h>

#include "design.h"
#include "paramref.h"
#include "problem.h"
#include "ratings.h"
#include "source.h"

/* What one line is about. */
enum verdict_part {
	VERDICT_DEVICE_POWER,    /* the device's dissipation */
	VERDICT_DEVICE_CURRENT,  /* the device's current (only with a rating) */
	VERDICT_RESISTOR,        /* the source resistor or a network resistor */
	VERDICT_SOURCE,          /* the ideal source or a network source part */
	VERDICT_JUNCTION,        /* the junction temperature against its
	                            maximum (a self-heated part: thermal.h) */
};

/* Room for a line's name: a network part's name. */
#define VERDICT_NAME_MAX 56

/* One part at one point. */
struct verdict_line {
	enum verdict_part part;
	char name[VERDICT_NAME_MAX]; /* "device", "RS", "RP", "source", or the
	                                network part's name */
	enum qty_kind unit;     /* QTY_POWER, QTY_CURRENT for the current,
	                           QTY_TEMPERATURE for the junction */
	double value;           /* the power in W (absorbed; delivered for a
	                           source) or the current's magnitude in A */
	double rating;          /* what it is held to (a resistor's derated
	                           rating), NaN when none */
	double use;             /* value / rating, NaN when none (the junction:
	                           its rise over the ambient against the rise
	                           its maximum allows) */
	double margin;          /* 1 - use: the fraction of the rating left
	                           (negative when over), NaN when none */
	double suggested;       /* resistors: the smallest standard rating that
	                           meets the rule of thumb (NaN: none fits, or
	                           not a resistor) */
	enum ratings_verdict verdict;
	char words[224];        /* the line as the CLI prints it */
};

/* Most lines: device power, current and junction, the source's resistor
 * and source, and a network's parts. */
#define VERDICT_MAX_LINES (5 + PARAMREF_MAX_PARTS)

/* The target and how far the point is from it. */
struct verdict_target {
	bool given;
	enum design_target kind;
	double value;           /* the target, A, V or W (or the result's unit) */
	double achieved;        /* the same quantity at the point */
	double error_percent;   /* 100 (achieved - value) / value, as design's
	                           rows: above zero when the point is further
	                           from zero than the target (either sign) */
	char words[160];
};

/* Everything at one point. */
struct verdict {
	size_t nlines;
	struct verdict_line lines[VERDICT_MAX_LINES];
	enum ratings_verdict worst;  /* the worst verdict of any line */
	double derating;          /* the resistors' derating at the ambient */
	struct verdict_target target;
	char message[160];        /* why a network's parts are missing, or "" */
};

/*
 * The verdict at the point (V, I) of PB: the device (its power is the heat
 * it turns out: a transistor's own collector dissipation; and for a part
 * that heats itself, or one given a temperature above its
 * maximum_junction_temperature, the junction against that maximum), then
 * for a plain
 * source its resistor (RS in series for FORM Thevenin, RP across for
 * Norton) and the ideal source, or for a network source (PB->net) each
 * resistor and each source part from the node voltages at the point (the
 * parts' values as PB holds them).  R (may be NULL) gives the ratings, a
 * network's resistors each held to R->resistor_power; TARGET (may be NULL)
 * the target.  Fills OUT; a network that cannot be solved leaves its parts
 * out with the reason in OUT->message.
 */
void verdict_at(const struct problem *pb, enum source_form form, double v,
                double i, const struct ratings *r,
                const struct design_request *target, struct verdict *out);

/*
 * The verdict of the worst case: the largest device power P_DEVICE, device
 * current magnitude I_DEVICE and resistor power P_RESISTOR over a
 * tolerance box (NaN: not known, the line is left out), held to R (may be
 * NULL); RESISTOR names the resistor ("RS", "RP").  The words end "at
 * worst".
 */
void verdict_worst(double p_device, double i_device, double p_resistor,
                   const char *resistor, const struct ratings *r,
                   struct verdict *out);

/*
 * The target line alone: TARGET met by ACHIEVED (see struct verdict); PB
 * (may be NULL) gives a model result's unit.
 */
void verdict_target(const struct problem *pb,
                    const struct design_request *target, double achieved,
                    struct verdict_target *out);

#endif
