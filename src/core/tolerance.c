/*
 * tolerance.c - worst case and Monte Carlo over parameter tolerances (see
 * tolerance.h).
 */
#include "tolerance.h"

#include <math.h>
#include <stddef.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "kernel.h"
#include "network.h"
#include "safety.h"
#include "sensitivity.h"
#include "solve.h"

/* How far golden section narrows the search along one parameter. */
#define TOL_GOLDEN_REL 1e-15
/* Redraws of a normal deviate outside the parameter's valid range. */
#define TOL_REDRAWS 100

const double tol_percentiles[TOL_NPCT] = { 0.135, 1.0, 5.0, 50.0, 95.0, 99.0,
                                           99.865 };

/* Output name. */
const char *tol_output_name(enum tol_output o)
{
	static const char *const names[TOL_NOUT] = {
		"current", "voltage", "device_power", "resistor_power",
	};
	return (unsigned)o < TOL_NOUT ? names[o] : "?";
}

/* Distribution name. */
const char *tol_dist_name(enum tol_dist d)
{
	return d == TOL_NORMAL ? "normal" : "uniform";
}

/* Distribution from its name. */
int tol_dist_from_name(const char *name, enum tol_dist *d)
{
	if (strcmp(name, "uniform") == 0)
		*d = TOL_UNIFORM;
	else if (strcmp(name, "normal") == 0)
		*d = TOL_NORMAL;
	else
		return -1;
	return 0;
}

/* splitmix64: one step of the seed expander. */
static uint64_t tol_splitmix64(uint64_t *x)
{
	uint64_t z = (*x += UINT64_C(0x9e3779b97f4a7c15));
	z = (z ^ (z >> 30)) * UINT64_C(0xbf58476d1ce4e5b9);
	z = (z ^ (z >> 27)) * UINT64_C(0x94d049bb133111eb);
	return z ^ (z >> 31);
}

/*
 * The ziggurat's layers (Marsaglia & Tsang, "The Ziggurat Method for
 * Generating Random Variables", J. Stat. Softw. 5(8), 2000): 256 strips
 * of equal area V under exp(-x^2/2), the base one with the tail beyond
 * R, which makes the top strip close exactly (the paper prints
 * 3.6541528853610088, and a 40-digit root of "the top strip's area is
 * V" agrees to 17 digits); V follows from R: r f(r) + the tail's area.
 */
#define TOL_ZIG_R 3.6541528853610088

/* Fill R's layer table: zx[0] = V / f(R) (the base strip's width with
 * its tail), zx[1] = R, zx[i+1] from the equal areas, zx[256] = 0. */
static void tol_zig_init(struct tol_rng *r)
{
	const double rr = TOL_ZIG_R;
	double fr = exp(-0.5 * rr * rr);
	double v = rr * fr + sqrt(0.5 * 3.141592653589793) * erfc(rr / sqrt(2.0));
	r->zx[0] = v / fr;
	r->zx[1] = rr;
	for (int i = 1; i < TOL_ZIG_LAYERS - 1; i++) {
		double xi = r->zx[i];
		r->zx[i + 1] = sqrt(-2.0 * log(v / xi + exp(-0.5 * xi * xi)));
	}
	r->zx[TOL_ZIG_LAYERS] = 0.0;
	for (int i = 0; i <= TOL_ZIG_LAYERS; i++)
		r->zf[i] = exp(-0.5 * r->zx[i] * r->zx[i]);
}

/* Seed R. */
void tol_rng_seed(struct tol_rng *r, uint64_t seed)
{
	uint64_t x = seed;
	for (int k = 0; k < 4; k++)
		r->s[k] = tol_splitmix64(&x);
	tol_zig_init(r);
}

/* Rotate left. */
static uint64_t tol_rotl(uint64_t x, int k)
{
	return (x << k) | (x >> (64 - k));
}

/* xoshiro256**. */
uint64_t tol_rng_next(struct tol_rng *r)
{
	uint64_t *s = r->s;
	uint64_t result = tol_rotl(s[1] * 5, 7) * 9;
	uint64_t t = s[1] << 17;
	s[2] ^= s[0];
	s[3] ^= s[1];
	s[1] ^= s[2];
	s[0] ^= s[3];
	s[2] ^= t;
	s[3] = tol_rotl(s[3], 45);
	return result;
}

/* Uniform in [0, 1): the top 53 bits. */
double tol_rng_uniform(struct tol_rng *r)
{
	return (double)(tol_rng_next(r) >> 11) * 0x1.0p-53;
}

/* Uniform in (0, 1]: for logarithms. */
static double tol_rng_uniform_pos(struct tol_rng *r)
{
	return (double)((tol_rng_next(r) >> 11) + 1) * 0x1.0p-53;
}

/*
 * A standard normal deviate by the ziggurat (Marsaglia & Tsang 2000).
 * One 64-bit draw gives the layer (bits 0-7), the sign (bit 8) and the
 * position (bits 11-63), so the three are independent (the correlation
 * Doornik found when they share bits, "An Improved Ziggurat Method to
 * Generate Normal Random Samples", 2005, cannot arise).  About 99 % of
 * draws end in the first test; the wedges need one exponential, the tail
 * Marsaglia's method (Ann. Math. Statist. 35, 1964).
 */
double tol_rng_normal(struct tol_rng *r)
{
	for (;;) {
		uint64_t bits = tol_rng_next(r);
		unsigned i = (unsigned)(bits & 0xff);
		double sign = (bits & 0x100) ? -1.0 : 1.0;
		double z = (double)(bits >> 11) * 0x1.0p-53 * r->zx[i];
		if (z < r->zx[i + 1])
			return sign * z;
		if (i == 0) {
			double a, b;
			do {
				a = -log(tol_rng_uniform_pos(r)) / TOL_ZIG_R;
				b = -log(tol_rng_uniform_pos(r));
			} while (b + b < a * a);
			return sign * (TOL_ZIG_R + a);
		}
		double y = r->zf[i] + tol_rng_uniform(r) * (r->zf[i + 1] - r->zf[i]);
		if (y < exp(-0.5 * z * z))
			return sign * z;
	}
}

/* Set up a case. */
void tol_case_init(struct tol_case *c, const struct problem *pb,
                   enum source_form form, const struct solve_options *o)
{
	memset(c, 0, sizeof *c);
	c->pb = *pb;
	/* checked once here; each evaluation checks what it changes */
	if (!c->pb.dev.checked)
		device_check(&c->pb.dev, NULL, 0);
	c->form = form;
	c->opts = *o;
	c->opts.method = METHOD_AUTO;
}

/* Add a tolerance. */
int tol_case_add(struct tol_case *c, const char *key, double lo, double hi,
                 enum tol_dist d, char *err, size_t errlen)
{
	struct paramref r;
	if (c->nitems >= TOL_MAX_ITEMS) {
		snprintf(err, errlen, "at most %d parameters can have a tolerance",
		         TOL_MAX_ITEMS);
		return -1;
	}
	if (paramref_find(&c->pb, key, &r, err, errlen) != 0)
		return -1;
	for (size_t k = 0; k < c->nitems; k++) {
		if (c->items[k].param.kind == r.kind &&
		    c->items[k].param.index == r.index) {
			snprintf(err, errlen, "%s has a tolerance already", key);
			return -1;
		}
	}
	if (!(lo <= hi)) {
		snprintf(err, errlen, "%s: the minimum %.6g is above the maximum %.6g",
		         key, lo, hi);
		return -1;
	}
	char why[200];
	for (int e = 0; e < 2; e++) {
		if (paramref_check(&c->pb, &r, e ? hi : lo, why, sizeof why) != 0) {
			snprintf(err, errlen, "%s: the tolerance reaches outside the "
			         "valid range: %s", key, why);
			return -1;
		}
	}
	c->items[c->nitems++] = (struct tol_item){ r, lo, hi, d };
	return 0;
}

/* The four outputs at the point (V, I) of Q. */
static void tol_outputs(const struct tol_case *c, const struct problem *q,
                        double v, double i, double *out)
{
	double r = q->src.r;
	out[TOL_CURRENT] = i;
	out[TOL_VOLTAGE] = v;
	out[TOL_DEVICE_POWER] = device_dissipation(&q->dev, &q->src, v, i);
	if (isinf(r) || r == 0.0)
		out[TOL_RESISTOR_POWER] = 0.0;
	else if (c->form == SOURCE_NORTON)
		out[TOL_RESISTOR_POWER] = v * v / r;
	else
		out[TOL_RESISTOR_POWER] = i * i * r;
}

/*
 * A run over one case: the items' references side by side, the working
 * problem the items are set in (each evaluation sets every item, so it
 * need not be copied again), and for a network source a copy of its
 * network that each evaluation writes its part values into and reduces
 * once (paramref_set_all), not once per part.
 */
struct tol_run {
	const struct tol_case *c;
	struct paramref refs[TOL_MAX_ITEMS];
	struct network *scratch;
	struct problem q;
	const struct progress *pr;   /* the caller's stop flag, or NULL */
	bool stopped;                /* it was set: every evaluation fails */
};

/* Start R over C; 0, or -1 when out of memory. */
static int tol_run_init(struct tol_run *r, const struct tol_case *c)
{
	bool parts = false;
	r->c = c;
	r->q = c->pb;
	r->scratch = NULL;
	r->pr = NULL;
	r->stopped = false;
	for (size_t k = 0; k < c->nitems; k++) {
		r->refs[k] = c->items[k].param;
		parts |= r->refs[k].kind == PARAMREF_NETWORK;
	}
	if (parts && c->pb.net != NULL) {
		r->scratch = network_copy(c->pb.net);
		if (r->scratch == NULL)
			return -1;
	}
	return 0;
}

/* Free what R holds. */
static void tol_run_fini(struct tol_run *r)
{
	network_destroy(r->scratch);
	r->scratch = NULL;
}

/* The operating point with the items at X into R->q and *PT; 0 or -1. */
static int tol_run_point(struct tol_run *r, const double *x, double v_near,
                         struct op_point *pt)
{
	const struct tol_case *c = r->c;
	struct problem *q = &r->q;
	if (r->stopped || progress_stopped(r->pr)) {
		r->stopped = true;
		return -1;
	}
	if (paramref_set_all(q, r->refs, x, c->nitems, r->scratch) != 0)
		return -1;
	const struct model_type *t = q->dev.type;
	/* paramref_set_all checked the device: a trial it made invalid has
	 * no point */
	if (device_ready(&q->dev, NULL, 0) != 0)
		return -1;
	/* The fast unique solve for a monotone device, else every root. */
	if (t->monotone && solve_fast(q, c->opts.tol, pt) == 0)
		return 0;
	struct solve_result res;
	if (solve_problem(q, &c->opts, &res) != SOLVE_OK || res.n == 0)
		return -1;
	size_t best = 0;
	if (!isnan(v_near))
		for (size_t k = 1; k < res.n; k++)
			if (fabs(res.pts[k].v - v_near) < fabs(res.pts[best].v - v_near))
				best = k;
	*pt = res.pts[best];
	return 0;
}

/* Outputs at X within run R. */
static int tol_run_eval(struct tol_run *r, const double *x, double v_near,
                        double *out)
{
	struct op_point pt;
	if (tol_run_point(r, x, v_near, &pt) != 0)
		return -1;
	tol_outputs(r->c, &r->q, pt.v, pt.i, out);
	return 0;
}

/* Outputs at X. */
int tol_eval(const struct tol_case *c, const double *x, double v_near,
             double *out)
{
	struct tol_run r;
	if (tol_run_init(&r, c) != 0)
		return -1;
	int rc = tol_run_eval(&r, x, v_near, out);
	tol_run_fini(&r);
	return rc;
}

/* d(output O)/dx_k at X for each item into G; returns 0 or -1. */
static int tol_gradient(struct tol_run *run, const double *x, double v_near,
                        enum tol_output o, double *g)
{
	const struct tol_case *c = run->c;
	struct op_point pt;
	if (tol_run_point(run, x, v_near, &pt) != 0)
		return -1;
	const struct problem *q = &run->q;
	double v = pt.v, i = pt.i, r = q->src.r;
	for (size_t k = 0; k < c->nitems; k++) {
		struct sensitivity s;
		if (sensitivity_at(q, v, i, &c->items[k].param, &s) != 0)
			return -1;
		enum paramref_kind kind = c->items[k].param.kind;
		double dr = kind == PARAMREF_RS || kind == PARAMREF_RP ? 1.0 : 0.0;
		switch (o) {
		case TOL_CURRENT:
			g[k] = s.di;
			break;
		case TOL_VOLTAGE:
			g[k] = s.dv;
			break;
		case TOL_DEVICE_POWER:
			g[k] = s.dp;
			break;
		default:
			if (isinf(r) || r == 0.0)
				g[k] = 0.0;
			else if (c->form == SOURCE_NORTON)
				g[k] = 2.0 * v * s.dv / r - v * v / (r * r) * dr;
			else
				g[k] = 2.0 * i * r * s.di + i * i * dr;
			break;
		}
	}
	return 0;
}

/* Output O at X, signed so that larger is better (SIGN = +1 max, -1 min). */
static double tol_objective(struct tol_run *r, const double *x, double v_near,
                            enum tol_output o, double sign)
{
	double y[TOL_NOUT];
	if (tol_run_eval(r, x, v_near, y) != 0)
		return -INFINITY;
	return sign * y[o];
}

/* The objective along parameter K from the point X, for golden section. */
struct tol_line_ctx {
	struct tol_run *run;
	const double *x;
	size_t n, k;
	double v_near;
	enum tol_output o;
	double sign;
};

/* Minus the objective with parameter K at T (golden section minimises). */
static double tol_line_eval(void *ctx, double t, double *step)
{
	const struct tol_line_ctx *lc = ctx;
	double xs[TOL_MAX_ITEMS];
	if (step != NULL)
		*step = NAN;
	memcpy(xs, lc->x, lc->n * sizeof xs[0]);
	xs[lc->k] = t;
	return -tol_objective(lc->run, xs, lc->v_near, lc->o, lc->sign);
}

/*
 * From the extremum E (SIGN +1: a maximum), search inside the box along
 * every parameter whose derivative points into it, until none does.
 */
static void tol_refine(struct tol_run *run, double v_near, enum tol_output o,
                       double sign, struct tol_extreme *e)
{
	const struct tol_case *c = run->c;
	size_t n = c->nitems;
	double x[TOL_MAX_ITEMS], g[TOL_MAX_ITEMS];
	memcpy(x, e->params, n * sizeof x[0]);
	double best = sign * e->value;
	for (size_t pass = 0; pass < 2 * n + 2; pass++) {
		if (tol_gradient(run, x, v_near, o, g) != 0)
			return;
		bool moved = false;
		for (size_t k = 0; k < n; k++) {
			double lo = c->items[k].lo, hi = c->items[k].hi;
			double gk = sign * g[k];
			if (!(hi > lo) || !isfinite(gk))
				continue;
			/* Out of the box at the upper end is up, at the lower down. */
			bool inward = (x[k] >= hi && gk < 0.0) || (x[k] <= lo && gk > 0.0) ||
			              (x[k] > lo && x[k] < hi);
			if (!inward || fabs(gk) * (hi - lo) <= 1e-12 * fabs(best))
				continue;
			/* Golden-section search for the best point along k. */
			struct tol_line_ctx lc = { run, x, n, k, v_near, o, sign };
			struct kernel_fn fn = { tol_line_eval, &lc };
			struct kernel_result kr =
				kernel_golden_solve(&fn, lo, hi, TOL_GOLDEN_REL, 0.0);
			double xk = kr.x, fk = -kr.fx;
			if (fk > best + 1e-14 * fabs(best)) {
				best = fk;
				x[k] = xk;
				moved = true;
				e->interior = true;
			}
		}
		if (!moved)
			break;
	}
	memcpy(e->params, x, n * sizeof x[0]);
	e->value = sign * best;
}

/* The worst case. */
int tol_worst_case(const struct tol_case *c, struct tol_worst *out, char *err,
                   size_t errlen)
{
	return tol_worst_case_watched(c, out, NULL, err, errlen);
}

/* The worst case, watched. */
int tol_worst_case_watched(const struct tol_case *c, struct tol_worst *out,
                           const struct progress *pr, char *err,
                           size_t errlen)
{
	memset(out, 0, sizeof *out);
	size_t n = c->nitems;
	if (n > TOL_MAX_CORNER_ITEMS) {
		snprintf(err, errlen, "the worst case takes at most %d parameters "
		         "with a tolerance (%zu given): use Monte Carlo",
		         TOL_MAX_CORNER_ITEMS, n);
		return -1;
	}
	struct tol_run run;
	if (tol_run_init(&run, c) != 0) {
		snprintf(err, errlen, "out of memory");
		return -1;
	}
	run.pr = pr;
	double x0[TOL_MAX_ITEMS] = { 0 };
	for (size_t k = 0; k < n; k++)
		x0[k] = paramref_get(&c->pb, &c->items[k].param);
	if (tol_run_eval(&run, x0, NAN, out->nominal) != 0) {
		tol_run_fini(&run);
		if (run.stopped)
			snprintf(err, errlen, "stopped before the nominal point");
		else
			snprintf(err, errlen, "no operating point at the nominal values");
		return -1;
	}
	double v_nom = out->nominal[TOL_VOLTAGE];
	for (int o = 0; o < TOL_NOUT; o++) {
		out->min[o].value = INFINITY;
		out->max[o].value = -INFINITY;
	}
	size_t ncorners = (size_t)1 << n;
	for (size_t m = 0; m < ncorners; m++) {
		double x[TOL_MAX_ITEMS], y[TOL_NOUT];
		for (size_t k = 0; k < n; k++)
			x[k] = (m >> k) & 1 ? c->items[k].hi : c->items[k].lo;
		out->corners++;
		progress_item(pr, m, ncorners);
		if (tol_run_eval(&run, x, v_nom, y) != 0) {
			if (run.stopped)
				break;
			out->failed++;
			continue;
		}
		for (int o = 0; o < TOL_NOUT; o++) {
			if (y[o] < out->min[o].value) {
				out->min[o].value = y[o];
				memcpy(out->min[o].params, x, n * sizeof x[0]);
			}
			if (y[o] > out->max[o].value) {
				out->max[o].value = y[o];
				memcpy(out->max[o].params, x, n * sizeof x[0]);
			}
		}
	}
	if (run.stopped) {
		tol_run_fini(&run);
		snprintf(err, errlen, "stopped after %zu of %zu corners", out->corners,
		         ncorners);
		return -1;
	}
	if (out->failed == out->corners) {
		tol_run_fini(&run);
		snprintf(err, errlen, "no corner of the tolerance box has an "
		         "operating point");
		return -1;
	}
	for (int o = 0; o < TOL_NOUT; o++) {
		/* An output no corner defines (model.h, power) has no extremes. */
		if (!isfinite(out->min[o].value) || !isfinite(out->nominal[o])) {
			out->min[o].value = out->max[o].value = NAN;
			continue;
		}
		tol_refine(&run, v_nom, (enum tol_output)o, 1.0, &out->max[o]);
		tol_refine(&run, v_nom, (enum tol_output)o, -1.0, &out->min[o]);
	}
	tol_run_fini(&run);
	if (run.stopped) {
		snprintf(err, errlen, "stopped while searching inside the box");
		return -1;
	}
	return 0;
}

/* Swap two doubles. */
static void tol_swap(double *a, double *b)
{
	double t = *a;
	*a = *b;
	*b = t;
}

/*
 * Rearrange A[LEFT..RIGHT] so that A[K] is the K-th smallest, everything
 * before it no larger and everything after it no smaller: Floyd and
 * Rivest's SELECT (Floyd & Rivest, "Algorithm 489: The algorithm SELECT",
 * CACM 18(3), 1975), which first narrows the range to a small sample
 * around K, so a large array costs little more than one pass.
 */
static void tol_select_range(double *a, ptrdiff_t left, ptrdiff_t right,
                             ptrdiff_t k)
{
	while (right > left) {
		if (right - left > 600) {
			double n = (double)(right - left + 1);
			double i = (double)(k - left + 1);
			double z = log(n);
			double s = 0.5 * exp(2.0 * z / 3.0);
			double sd = 0.5 * sqrt(z * s * (n - s) / n) *
			            (i - n / 2.0 < 0.0 ? -1.0 : 1.0);
			ptrdiff_t nl = (ptrdiff_t)((double)k - i * s / n + sd);
			ptrdiff_t nr = (ptrdiff_t)((double)k + (n - i) * s / n + sd);
			tol_select_range(a, nl > left ? nl : left, nr < right ? nr : right,
			                 k);
		}
		double t = a[k];
		ptrdiff_t i = left, j = right;
		tol_swap(&a[left], &a[k]);
		if (a[right] > t)
			tol_swap(&a[right], &a[left]);
		while (i < j) {
			tol_swap(&a[i], &a[j]);
			i++;
			j--;
			while (a[i] < t)
				i++;
			while (a[j] > t)
				j--;
		}
		if (a[left] == t) {
			tol_swap(&a[left], &a[j]);
		} else {
			j++;
			tol_swap(&a[j], &a[right]);
		}
		if (j <= k)
			left = j + 1;
		if (k <= j)
			right = j - 1;
	}
}

/* A[K] the K-th smallest of A[0..N), partitioned around it. */
static void tol_select(double *a, size_t n, size_t k)
{
	if (n > 1)
		tol_select_range(a, 0, (ptrdiff_t)n - 1, (ptrdiff_t)k);
}

/*
 * Put the order statistics RANKS (NR of them, increasing, within
 * [LO, HI)) of A in place: select the middle rank, then the ranks below it
 * in the part below and the ranks above in the part above, so M ranks cost
 * about N log M comparisons instead of N M.
 */
static void tol_multiselect(double *a, size_t lo, size_t hi,
                            const size_t *ranks, size_t nr)
{
	if (nr == 0 || hi - lo < 2)
		return;
	size_t m = nr / 2, k = ranks[m];
	tol_select(a + lo, hi - lo, k - lo);
	size_t left = m, right = m + 1;
	while (left > 0 && ranks[left - 1] == k)
		left--;
	while (right < nr && ranks[right] == k)
		right++;
	tol_multiselect(a, lo, k, ranks, left);
	tol_multiselect(a, k + 1, hi, ranks + right, nr - right);
}

/* A mean, deviation and range kept as values arrive (tol_acc_add). */
struct tol_acc {
	size_t n;
	double shift, s1, s2, mn, mx;
};

/*
 * Take X: sums of the data shifted by the first value, which keeps the
 * rounding of the mean and the variance small (and exact for equal
 * values); Chan, Golub & LeVeque, Am. Stat. 37(3), 1983.
 */
static void tol_acc_add(struct tol_acc *a, double x)
{
	if (a->n++ == 0) {
		a->shift = a->mn = a->mx = x;
		a->s1 = a->s2 = 0.0;
		return;
	}
	double d = x - a->shift;
	a->s1 += d;
	a->s2 += d * d;
	if (x < a->mn)
		a->mn = x;
	if (x > a->mx)
		a->mx = x;
}

/*
 * The stored trials of a run: V and I of each, R of each or R0 for all,
 * and the device power of each when the model has its own (model.h,
 * power; else it is V I).
 */
struct tol_cols {
	const double *v, *i, *r, *p;
	double r0;
	enum source_form form;
	size_t n;
};

/* Output O of stored trial K, with tol_outputs' arithmetic. */
static double tol_col(const struct tol_cols *c, enum tol_output o, size_t k)
{
	double v = c->v[k], i = c->i[k], r;
	switch (o) {
	case TOL_CURRENT:
		return i;
	case TOL_VOLTAGE:
		return v;
	case TOL_DEVICE_POWER:
		return c->p != NULL ? c->p[k] : v * i;
	default:
		r = c->r != NULL ? c->r[k] : c->r0;
		if (isinf(r) || r == 0.0)
			return 0.0;
		return c->form == SOURCE_NORTON ? v * v / r : i * i * r;
	}
}

/* Bins of the histogram that locates the percentiles' order statistics. */
#define TOL_LOCATOR_BINS 4096

/*
 * The order statistics RANK[0..NR) (increasing) of output O of C into
 * VAL, exactly, given CNT: a fine histogram of the values over [MN, MX]
 * (TOL_LOCATOR_BINS bins; the bin of a value is a monotone function of
 * it, so every value of a lower bin is no larger).  One pass gathers the
 * values of the bins that hold the wanted ranks, and selection within
 * those few finds them.  Where the wanted bins hold most of the data (a
 * few values repeated) the whole column is selected in place instead.
 * Returns 0, or -1 when out of memory.
 */
static int tol_order_stats(const struct tol_cols *c, enum tol_output o,
                           double mn, double mx, const size_t *cnt,
                           const size_t *rank, size_t nr, double *val)
{
	size_t n = c->n;
	if (!(mx > mn)) {
		for (size_t j = 0; j < nr; j++)
			val[j] = mn; /* every value is the same */
		return 0;
	}
	double scale = TOL_LOCATOR_BINS / (mx - mn);
	/* Where each wanted rank sits: its bin and the first rank of it. */
	size_t bin[2 * TOL_NPCT], first[2 * TOL_NPCT];
	size_t below = 0, b = 0, total = 0;
	for (size_t j = 0; j < nr; j++) {
		while (below + cnt[b] <= rank[j]) {
			below += cnt[b];
			b++;
		}
		bin[j] = b;
		first[j] = below;
		if (j == 0 || bin[j] != bin[j - 1])
			total += cnt[b];
	}
	double *buf = total <= n / 2 ? malloc((total + 1) * sizeof *buf) : NULL;
	short *slot_of = buf != NULL ? malloc(TOL_LOCATOR_BINS * sizeof *slot_of)
	                             : NULL;
	if (slot_of == NULL) {
		/* Few bins hold most values: select in a copy of the column. */
		free(buf);
		double *col = malloc(n * sizeof *col);
		if (col == NULL)
			return -1;
		for (size_t k = 0; k < n; k++)
			col[k] = tol_col(c, o, k);
		tol_multiselect(col, 0, n, rank, nr);
		for (size_t j = 0; j < nr; j++)
			val[j] = col[rank[j]];
		free(col);
		return 0;
	}
	/* Gather each wanted bin's values, bin after bin, into BUF. */
	size_t off[2 * TOL_NPCT], fill[2 * TOL_NPCT], slot[2 * TOL_NPCT];
	size_t nb = 0, at = 0;
	for (size_t k = 0; k < TOL_LOCATOR_BINS; k++)
		slot_of[k] = -1;
	for (size_t j = 0; j < nr; j++) {
		if (j == 0 || bin[j] != bin[j - 1]) {
			off[nb] = at;
			fill[nb] = 0;
			at += cnt[bin[j]];
			slot_of[bin[j]] = (short)nb;
			nb++;
		}
		slot[j] = nb - 1;
	}
	for (size_t k = 0; k < n; k++) {
		double x = tol_col(c, o, k);
		size_t bk = (size_t)((x - mn) * scale);
		int sl = slot_of[bk < TOL_LOCATOR_BINS ? bk : TOL_LOCATOR_BINS - 1];
		if (sl >= 0)
			buf[off[sl] + fill[sl]++] = x;
	}
	for (size_t j = 0; j < nr; j++) {
		size_t s = slot[j], len = cnt[bin[j]];
		tol_select(buf + off[s], len, rank[j] - first[j]);
		val[j] = buf[off[s] + rank[j] - first[j]];
	}
	free(slot_of);
	free(buf);
	return 0;
}

/*
 * Statistics and histogram of output O of the stored trials C, whose
 * mean and range A kept (A->n < C->n: a trial had no value for it, as a
 * FET's drain power on an ideal current source, model.h power: then it
 * has no statistics); 0, or -1 when out of memory.
 */
static int tol_summarise(const struct tol_cols *c, enum tol_output o,
                         const struct tol_acc *a, size_t nbins,
                         struct tol_stats *st, struct tol_hist *h)
{
	size_t n = c->n;
	if (a->n < n) {
		memset(h->counts, 0, sizeof h->counts);
		h->lo = h->hi = NAN;
		h->nbins = nbins;
		st->mean = st->sd = st->min = st->max = NAN;
		for (int p = 0; p < TOL_NPCT; p++)
			st->pct[p] = NAN;
		return 0;
	}
	double dmean = a->s1 / (double)n;
	double ss = a->s2 - a->s1 * dmean;
	st->mean = a->shift + dmean;
	st->sd = n > 1 && ss > 0.0 ? sqrt(ss / (double)(n - 1)) : 0.0;
	st->min = a->mn;
	st->max = a->mx;
	/* One pass: the histogram asked for, and the fine one that locates
	 * the percentiles. */
	size_t *cnt = calloc(TOL_LOCATOR_BINS, sizeof *cnt);
	if (cnt == NULL)
		return -1;
	memset(h->counts, 0, sizeof h->counts);
	double w = a->mx - a->mn, scale = w > 0.0 ? (double)nbins / w : 0.0;
	double lscale = w > 0.0 ? TOL_LOCATOR_BINS / w : 0.0;
	for (size_t k = 0; k < n; k++) {
		double d = tol_col(c, o, k) - a->mn;
		size_t b = (size_t)(d * scale), lb = (size_t)(d * lscale);
		h->counts[b < nbins ? b : nbins - 1]++;
		cnt[lb < TOL_LOCATOR_BINS ? lb : TOL_LOCATOR_BINS - 1]++;
	}
	h->lo = a->mn;
	h->hi = a->mx;
	h->nbins = nbins;
	/*
	 * Percentiles: the order statistic at or below each position h and
	 * the one above it, x[floor h] + (h - floor h) (x[floor h + 1] -
	 * x[floor h]) (Hyndman & Fan 1996, definition 7).
	 */
	size_t rank[2 * TOL_NPCT], nr = 0;
	double pos[TOL_NPCT];
	size_t lo[TOL_NPCT];
	for (int p = 0; p < TOL_NPCT; p++) {
		pos[p] = (double)(n - 1) * tol_percentiles[p] / 100.0;
		lo[p] = (size_t)floor(pos[p]);
		if (lo[p] > n - 1)
			lo[p] = n - 1;
		size_t want[2] = { lo[p], lo[p] + 1 < n ? lo[p] + 1 : lo[p] };
		for (int e = 0; e < 2; e++)
			if (nr == 0 || rank[nr - 1] < want[e])
				rank[nr++] = want[e];
	}
	double val[2 * TOL_NPCT];
	int rc = tol_order_stats(c, o, a->mn, a->mx, cnt, rank, nr, val);
	free(cnt);
	if (rc != 0)
		return -1;
	for (int p = 0; p < TOL_NPCT; p++) {
		size_t j = 0;
		while (rank[j] != lo[p])
			j++;
		double x = val[j];
		if (pos[p] > (double)lo[p] && lo[p] + 1 < n)
			x += (pos[p] - (double)lo[p]) * (val[j + 1] - x);
		st->pct[p] = x;
	}
	return 0;
}

/* One draw of item IT. */
static double tol_draw(const struct tol_case *c, const struct tol_item *it,
                       struct tol_rng *rng)
{
	double mid = 0.5 * (it->lo + it->hi), half = 0.5 * (it->hi - it->lo);
	if (it->dist == TOL_UNIFORM)
		return it->lo + (it->hi - it->lo) * tol_rng_uniform(rng);
	for (int k = 0; k < TOL_REDRAWS; k++) {
		double x = mid + half / 3.0 * tol_rng_normal(rng);
		/* Inside the box is valid (both ends were checked); outside it,
		 * ask the parameter's own range. */
		if ((x >= it->lo && x <= it->hi) ||
		    paramref_check(&c->pb, &it->param, x, NULL, 0) == 0)
			return x;
	}
	return mid;
}

/* Monte Carlo. */
int tol_monte_carlo(const struct tol_case *c, size_t trials, uint64_t seed,
                    size_t nbins, const struct tol_window *w, size_t nw,
                    struct tol_mc *out, char *err, size_t errlen)
{
	return tol_monte_carlo_watched(c, trials, seed, nbins, w, nw, out, NULL,
	                               err, errlen);
}

/* Monte Carlo, watched. */
int tol_monte_carlo_watched(const struct tol_case *c, size_t trials,
                            uint64_t seed, size_t nbins,
                            const struct tol_window *w, size_t nw,
                            struct tol_mc *out, const struct progress *pr,
                            char *err, size_t errlen)
{
	memset(out, 0, sizeof *out);
	if (trials < 1 || trials > TOL_MAX_TRIALS) {
		snprintf(err, errlen, "trials must be 1 to %d", TOL_MAX_TRIALS);
		return -1;
	}
	if (nbins < 1 || nbins > TOL_MAX_BINS) {
		snprintf(err, errlen, "histogram bins must be 1 to %d", TOL_MAX_BINS);
		return -1;
	}
	size_t n = c->nitems;
	struct tol_run run;
	if (tol_run_init(&run, c) != 0) {
		snprintf(err, errlen, "out of memory");
		return -1;
	}
	run.pr = pr;
	double x0[TOL_MAX_ITEMS] = { 0 }, y0[TOL_NOUT];
	for (size_t k = 0; k < n; k++)
		x0[k] = paramref_get(&c->pb, &c->items[k].param);
	if (tol_run_eval(&run, x0, NAN, y0) != 0) {
		tol_run_fini(&run);
		snprintf(err, errlen, "no operating point at the nominal values");
		return -1;
	}
	/* The source resistance is kept per trial only when an item moves it. */
	bool keep_r = false;
	for (size_t k = 0; k < n; k++) {
		enum paramref_kind kind = c->items[k].param.kind;
		keep_r |= kind == PARAMREF_RS || kind == PARAMREF_RP ||
		          kind == PARAMREF_NETWORK;
	}
	/* The device power too when the model has its own. */
	bool keep_p = c->pb.dev.type->power != NULL;
	size_t ncols = 2 + keep_r + keep_p;
	double *buf = malloc(sizeof(double) * ncols * trials);
	if (buf == NULL) {
		tol_run_fini(&run);
		snprintf(err, errlen, "out of memory for %zu trials", trials);
		return -1;
	}
	double *cv = buf, *ci = buf + trials, *next = buf + 2 * trials;
	double *cr = keep_r ? next : NULL;
	double *cp = keep_p ? (keep_r ? next + trials : next) : NULL;
	struct tol_acc acc[TOL_NOUT];
	memset(acc, 0, sizeof acc);
	struct tol_rng rng;
	tol_rng_seed(&rng, seed);
	size_t m = 0;
	out->trials = trials;
	out->has_window = nw > 0;
	for (size_t t = 0; t < trials; t++) {
		double x[TOL_MAX_ITEMS], y[TOL_NOUT];
		for (size_t k = 0; k < n; k++)
			x[k] = tol_draw(c, &c->items[k], &rng);
		progress_item(pr, t, trials);
		if (tol_run_eval(&run, x, y0[TOL_VOLTAGE], y) != 0) {
			if (run.stopped) {
				tol_run_fini(&run);
				free(buf);
				snprintf(err, errlen, "stopped after %zu of %zu trials", t,
				         trials);
				return -1;
			}
			out->failed++;
			continue;
		}
		cv[m] = y[TOL_VOLTAGE];
		ci[m] = y[TOL_CURRENT];
		if (cr != NULL)
			cr[m] = run.q.src.r;
		if (cp != NULL)
			cp[m] = y[TOL_DEVICE_POWER];
		m++;
		for (int o = 0; o < TOL_NOUT; o++)
			if (isfinite(y[o])) /* else the output has no statistics */
				tol_acc_add(&acc[o], y[o]);
		if (nw > 0) {
			bool in = true;
			for (size_t j = 0; j < nw && in; j++) {
				double q = y[w[j].output];
				in = !(q < w[j].lo) && !(q > w[j].hi);
			}
			out->inside += in;
		}
	}
	tol_run_fini(&run);
	if (m == 0) {
		free(buf);
		snprintf(err, errlen, "no trial had an operating point");
		return -1;
	}
	struct tol_cols cols = { cv, ci, cr, cp, c->pb.src.r, c->form, m };
	for (int o = 0; o < TOL_NOUT; o++)
		if (tol_summarise(&cols, (enum tol_output)o, &acc[o], nbins,
		                  &out->stats[o], &out->hist[o]) != 0) {
			free(buf);
			snprintf(err, errlen, "out of memory for %zu trials", trials);
			return -1;
		}
	out->yield = nw > 0 ? (double)out->inside / (double)trials : NAN;
	free(buf);
	return 0;
}

/* The largest magnitude of output O over W and MC (either may be NULL). */
static double tol_largest(const struct tol_worst *w, const struct tol_mc *mc,
                          enum tol_output o)
{
	double m = 0.0;
	if (w != NULL)
		m = fmax(fabs(w->min[o].value), fabs(w->max[o].value));
	if (mc != NULL)
		m = fmax(m, fmax(fabs(mc->stats[o].min), fabs(mc->stats[o].max)));
	return m;
}

/* The safety cautions over the tolerance box. */
unsigned tol_safety(const struct tol_case *c, const struct tol_worst *w,
                    const struct tol_mc *mc)
{
	struct problem q = c->pb;
	for (size_t k = 0; k < c->nitems; k++)
		if (c->items[k].param.kind == PARAMREF_VS)
			q.src.voc = fabs(c->items[k].lo) > fabs(c->items[k].hi)
			                ? c->items[k].lo : c->items[k].hi;
	unsigned f = safety_check(&q, tol_largest(w, mc, TOL_VOLTAGE), 0.0);
	if (tol_largest(w, mc, TOL_DEVICE_POWER) > SAFETY_HOT_POWER)
		f |= SAFETY_HOT_DEVICE;
	if (tol_largest(w, mc, TOL_RESISTOR_POWER) > SAFETY_HOT_POWER)
		f |= SAFETY_HOT_RESISTOR;
	return f;
}

/* Set Q to corner M of C's box (see tolerance.h). */
int tol_case_corner(const struct tol_case *c, size_t m, struct problem *q,
                    struct network *scratch)
{
	struct paramref refs[TOL_MAX_ITEMS];
	double x[TOL_MAX_ITEMS];
	for (size_t k = 0; k < c->nitems; k++) {
		refs[k] = c->items[k].param;
		x[k] = (m >> k) & 1u ? c->items[k].hi : c->items[k].lo;
	}
	return paramref_set_all(q, refs, x, c->nitems, scratch);
}
