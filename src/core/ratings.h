/*
 * ratings.h - where the power goes at an operating point (the device, the
 * source resistor, the source) and how that compares with the parts'
 * ratings, with the margins and a suggested resistor power rating.
 *
 * Two rules of thumb are common practice, not a standard, and are named
 * as such wherever they are shown:
 *  - use a resistor at no more than RATINGS_USE_FRACTION of its rating;
 *  - film resistors carry their full rating up to RATINGS_FULL_LOAD_TEMP
 *    ambient and derate linearly to zero at RATINGS_ZERO_LOAD_TEMP.
 * A part's own datasheet overrides both.
 *
 * The words a person reads about these numbers (the verdicts and their
 * sentences) come from one place: verdict.h.
 */
#ifndef BIASLINE_RATINGS_H
#define BIASLINE_RATINGS_H

#include <stddef.h>

#include "problem.h"
#include "source.h"

/* Use at most half a resistor's rating (common practice). */
#define RATINGS_USE_FRACTION 0.5
/* Full rated power up to 70 degC ambient (common practice for film parts). */
#define RATINGS_FULL_LOAD_TEMP 70.0
/* Zero rated power at 155 degC ambient (common practice for film parts). */
#define RATINGS_ZERO_LOAD_TEMP 155.0

/* Optional ratings; NaN means "not given". */
struct ratings {
	double device_max_power;    /* W */
	double device_max_current;  /* A (magnitude) */
	double resistor_power;      /* W, the source resistor's rating */
	double ambient_temperature; /* degC, for the resistor's derating */
};

/* What an operating point exceeds. */
enum ratings_flags {
	RATINGS_DEVICE_POWER = 1 << 0,   /* device power above its maximum */
	RATINGS_DEVICE_CURRENT = 1 << 1, /* device current above its maximum */
	RATINGS_RESISTOR_POWER = 1 << 2, /* resistor above its derated rating */
	RATINGS_RESISTOR_USE = 1 << 3,   /* above the common-practice fraction */
	RATINGS_NO_RESISTOR = 1 << 4,    /* the ambient leaves no rating at all */
};

/* Power at one operating point and its comparison with the ratings. */
struct ratings_report {
	double p_device;     /* V * I, W */
	double p_resistor;   /* in the source resistor, W */
	double p_source;     /* delivered by the ideal source, W */
	double derating;     /* resistor derating factor at the ambient, 0..1 */
	double device_power_use;   /* p_device / max (NaN: no rating) */
	double device_current_use; /* |I| / max (NaN: no rating) */
	double resistor_use;       /* p_resistor / derated rating (NaN: none) */
	/* Smallest standard rating meeting the rule of thumb; NaN when above
	 * the table or the ambient leaves no rating. */
	double suggested_resistor_power;
	unsigned flags;      /* ratings_flags */
};

/* A plain verdict on one part against its rating, from best to worst. */
enum ratings_verdict {
	RATINGS_NO_RATING,  /* no rating given: the power alone */
	RATINGS_WITHIN,     /* within rating */
	RATINGS_CAUTION,    /* within rating, above the common-practice fraction */
	RATINGS_OVER,       /* over rating */
};

/* "no rating", "within rating", "caution", "over rating". */
const char *ratings_verdict_name(enum ratings_verdict v);

/*
 * The verdict of VALUE held to RATING (NaN: none), compared as values (at
 * the rating is within it, one ulp above is over).  CAUTION_AT (NaN: none)
 * is the level above which a part within its rating gets a caution.
 */
enum ratings_verdict ratings_compare(double value, double rating,
                                     double caution_at);

/* Fill R with "nothing given". */
void ratings_init(struct ratings *r);

/*
 * The resistor derating factor at ambient TEMP_C: 1 up to
 * RATINGS_FULL_LOAD_TEMP, linear to 0 at RATINGS_ZERO_LOAD_TEMP (NaN
 * TEMP_C: 1).
 */
double ratings_derating(double temp_c);

/*
 * The smallest standard resistor power rating (1/16, 1/10, 1/8, 1/4, 1/2,
 * 1, 2, 3, 5, 10, 25, 50, 100 W; common practice) that is >= P, or NaN when
 * P is above the table or not finite.
 */
double ratings_standard_power(double p);

/*
 * Power and rating check at (V, I) for PB.  FORM says where the source
 * resistor sits: in series (Thevenin: I^2 r) or in parallel (Norton:
 * V^2 / r).  R may be NULL (no ratings; the suggestion still uses the
 * rule of thumb at a 25 degC ambient).
 */
void ratings_check(const struct problem *pb, enum source_form form, double v,
                   double i, const struct ratings *r,
                   struct ratings_report *out);

#endif
