/*
 * tolerance.h - worst case and Monte Carlo over parameter tolerances.
 *
 * Each varied parameter (a paramref.h key) has a range [lo, hi] and a
 * distribution for Monte Carlo: uniform over the range, or normal with
 * mean at the middle and the half-range as 3 sigma (values drawn outside
 * the parameter's valid range are drawn again).
 *
 * Outputs: the device current and voltage, the device power V I and the
 * power in the source resistor (I^2 r in series, V^2 / r in parallel).
 * Where a case has several operating points, the one nearest the nominal
 * point's voltage is followed.
 *
 * Worst case: every corner of the box (up to TOL_MAX_CORNER_ITEMS
 * parameters: 4096 corners), then for each output's minimum and maximum a
 * check that the extremum is not inside the box: at the best corner the
 * derivative along each parameter (sensitivity.h) must point out of the
 * box (the Karush-Kuhn-Tucker condition for a box); where it points in,
 * the output is searched along that parameter (golden section) and the
 * search repeats from the better point.
 *
 * Monte Carlo: N trials from a seeded xoshiro256** generator (Blackman &
 * Vigna, "Scrambled linear pseudorandom number generators", ACM TOMS 47,
 * 2021) seeded by splitmix64 (Steele, Lea & Flood, OOPSLA 2014), so a seed
 * gives the same numbers on every platform; normal deviates by the
 * ziggurat (Marsaglia & Tsang, J. Stat. Softw. 5(8), 2000).  Reported:
 * mean, standard deviation, percentiles (linear interpolation between
 * order statistics, Hyndman & Fan 1996 definition 7), a histogram as data
 * and, with a spec window, the yield.  Mean, deviation and extremes are
 * kept as the trials run; only the voltage and current of each trial are
 * stored (and the source resistance when a tolerance moves it), and the
 * percentiles are found from a fine histogram of those.
 */
#ifndef BIASLINE_TOLERANCE_H
#define BIASLINE_TOLERANCE_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#include "paramref.h"
#include "progress.h"
#include "problem.h"
#include "source.h"
#include "stepper.h"

/* Most parameters with a tolerance; the worst case takes at most 12. */
#define TOL_MAX_ITEMS 16
#define TOL_MAX_CORNER_ITEMS 12
/* Most Monte Carlo trials. */
#define TOL_MAX_TRIALS 10000000
/* Most histogram bins. */
#define TOL_MAX_BINS 200

/* Monte Carlo distribution of one parameter. */
enum tol_dist {
	TOL_UNIFORM,
	TOL_NORMAL,     /* the half-range is 3 sigma */
};

/* The outputs. */
enum tol_output {
	TOL_CURRENT,
	TOL_VOLTAGE,
	TOL_DEVICE_POWER,
	TOL_RESISTOR_POWER,
	TOL_NOUT
};

/* One parameter with a tolerance. */
struct tol_item {
	struct paramref param;
	double lo, hi;          /* lo <= hi */
	enum tol_dist dist;
};

/* A case: the nominal problem and its tolerances. */
struct tol_case {
	struct problem pb;
	enum source_form form;  /* where the source resistor sits */
	struct solve_options opts;
	size_t nitems;
	struct tol_item items[TOL_MAX_ITEMS];
};

/* An extremum of one output and where it is. */
struct tol_extreme {
	double value;
	double params[TOL_MAX_ITEMS];  /* the parameter values there */
	bool interior;          /* found inside the box, not at a corner */
};

/* The worst case. */
struct tol_worst {
	double nominal[TOL_NOUT];
	struct tol_extreme min[TOL_NOUT], max[TOL_NOUT];
	size_t corners;         /* corners evaluated */
	size_t failed;          /* corners with no operating point */
};

/* Percentiles reported, in per cent. */
#define TOL_NPCT 7
extern const double tol_percentiles[TOL_NPCT];

/* Statistics of one output. */
struct tol_stats {
	double mean, sd, min, max;
	double pct[TOL_NPCT];
};

/* A histogram: NBINS equal bins from LO to HI (edges lo + k (hi-lo)/nbins). */
struct tol_hist {
	double lo, hi;
	size_t nbins;
	size_t counts[TOL_MAX_BINS];
};

/* A spec window on one output for the yield; NaN ends are open. */
struct tol_window {
	enum tol_output output;
	double lo, hi;
};

/* A Monte Carlo run. */
struct tol_mc {
	size_t trials, failed;  /* failed: no operating point */
	struct tol_stats stats[TOL_NOUT];
	struct tol_hist hist[TOL_NOUT];
	bool has_window;
	size_t inside;          /* trials inside every window */
	double yield;           /* inside / trials (NaN without a window) */
};

/* Layers of the ziggurat the normal deviates come from. */
#define TOL_ZIG_LAYERS 256

/* The generator state, and the ziggurat's layer table (tol_rng_seed). */
struct tol_rng {
	uint64_t s[4];
	double zx[TOL_ZIG_LAYERS + 1];   /* layer edges, zx[0] > zx[1] = r */
	double zf[TOL_ZIG_LAYERS + 1];   /* exp(-zx^2 / 2) */
};

/* Output name: "current", "voltage", "device_power", "resistor_power". */
const char *tol_output_name(enum tol_output o);

/* Distribution name and back ("uniform", "normal"); 0 or -1. */
const char *tol_dist_name(enum tol_dist d);
int tol_dist_from_name(const char *name, enum tol_dist *d);

/* Seed R with SEED (splitmix64 expands it to the state). */
void tol_rng_seed(struct tol_rng *r, uint64_t seed);

/* The next 64 random bits (xoshiro256**). */
uint64_t tol_rng_next(struct tol_rng *r);

/* A uniform deviate in [0, 1) with 53 random bits. */
double tol_rng_uniform(struct tol_rng *r);

/* A standard normal deviate (ziggurat). */
double tol_rng_normal(struct tol_rng *r);

/*
 * Set up C for PB (copied), FORM and O with no tolerances.  Then add items
 * with tol_case_add.
 */
void tol_case_init(struct tol_case *c, const struct problem *pb,
                   enum source_form form, const struct solve_options *o);

/*
 * Add a tolerance on KEY from LO to HI with distribution D.  Returns 0, or
 * -1 with a message (unknown key, a key given twice, lo > hi, an end
 * outside the parameter's range, too many items).
 */
int tol_case_add(struct tol_case *c, const char *key, double lo, double hi,
                 enum tol_dist d, char *err, size_t errlen);

/*
 * Set Q, a copy of C's problem, to corner M of C's box: item K at its
 * high end when bit K of M is set, else at its low end, with a network's
 * parts reduced once for all of them (paramref_set_all), not once per
 * part.  SCRATCH, when not NULL, is a copy of C's network (network_copy)
 * the caller keeps across corners.  Returns 0, or -1 when the corner
 * cannot be set.
 */
int tol_case_corner(const struct tol_case *c, size_t m, struct problem *q,
                    struct network *scratch);

/*
 * The outputs of C with the items set to X (NITEMS values) into OUT
 * (TOL_NOUT values), following the point nearest V_NEAR (NaN: the lowest
 * in voltage).  Returns 0, or -1 when there is no operating point.
 */
int tol_eval(const struct tol_case *c, const double *x, double v_near,
             double *out);

/* The worst case of C into *OUT; returns 0, or -1 with a message. */
int tol_worst_case(const struct tol_case *c, struct tol_worst *out, char *err,
                   size_t errlen);

/*
 * tol_worst_case watched by PR (progress.h; may be NULL): the stop flag
 * is read at every evaluation and a stop returns -1 with "stopped ...".
 */
int tol_worst_case_watched(const struct tol_case *c, struct tol_worst *out,
                           const struct progress *pr, char *err,
                           size_t errlen);

/*
 * TRIALS Monte Carlo trials of C from SEED into *OUT with NBINS histogram
 * bins (1 ... TOL_MAX_BINS) and NW spec windows W (NW may be 0): a trial
 * passes when it is inside every window; a trial with no operating point
 * fails.
 * Returns 0, or -1 with a message (bad counts, no memory, no point at the
 * nominal values).
 */
int tol_monte_carlo(const struct tol_case *c, size_t trials, uint64_t seed,
                    size_t nbins, const struct tol_window *w, size_t nw,
                    struct tol_mc *out, char *err, size_t errlen);

/*
 * tol_monte_carlo watched by PR (progress.h; may be NULL): the stop flag
 * is read at every trial and a stop returns -1 with "stopped after ...".
 */
int tol_monte_carlo_watched(const struct tol_case *c, size_t trials,
                            uint64_t seed, size_t nbins,
                            const struct tol_window *w, size_t nw,
                            struct tol_mc *out, const struct progress *pr,
                            char *err, size_t errlen);

/*
 * The safety cautions (safety.h flags) over the tolerance box: the largest
 * device voltage, device power and resistor power the worst case W and the
 * trials MC found (either may be NULL), with the source at the larger end
 * of a vs tolerance.
 */
unsigned tol_safety(const struct tol_case *c, const struct tol_worst *w,
                    const struct tol_mc *mc);

#endif
