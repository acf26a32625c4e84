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

/* Seed R. */
void tol_rng_seed(struct tol_rng *r, uint64_t seed)
{
	uint64_t x = seed;
	for (int k = 0; k < 4; k++)
		r->s[k] = tol_splitmix64(&x);
	r->has_spare = false;
	r->spare = 0.0;
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

/* Standard normal by the polar method; the second deviate is kept. */
double tol_rng_normal(struct tol_rng *r)
{
	if (r->has_spare) {
		r->has_spare = false;
		return r->spare;
	}
	double u, v, s;
	do {
		u = 2.0 * tol_rng_uniform(r) - 1.0;
		v = 2.0 * tol_rng_uniform(r) - 1.0;
		s = u * u + v * v;
	} while (s >= 1.0 || s == 0.0);
	double f = sqrt(-2.0 * log(s) / s);
	r->spare = v * f;
	r->has_spare = true;
	return u * f;
}

/* Set up a case. */
void tol_case_init(struct tol_case *c, const struct problem *pb,
                   enum source_form form, const struct solve_options *o)
{
	memset(c, 0, sizeof *c);
	c->pb = *pb;
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

/* The operating point of C at X into *Q and *PT; 0 or -1. */
static int tol_point(const struct tol_case *c, const double *x, double v_near,
                     struct problem *q, struct op_point *pt)
{
	*q = c->pb;
	for (size_t k = 0; k < c->nitems; k++) {
		const struct paramref *r = &c->items[k].param;
		if (r->kind == PARAMREF_DEVICE)
			q->dev.p[r->index] = x[k]; /* the common case, inline */
		else if (paramref_set(q, r, x[k]) != 0)
			return -1;
	}
	const struct model_type *t = q->dev.type;
	if (t->validate != NULL) {
		char err[8];
		if (t->validate(q->dev.p, err, sizeof err) != 0)
			return -1;
	}
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

/* Outputs at X. */
int tol_eval(const struct tol_case *c, const double *x, double v_near,
             double *out)
{
	struct problem q;
	struct op_point pt;
	if (tol_point(c, x, v_near, &q, &pt) != 0)
		return -1;
	tol_outputs(c, &q, pt.v, pt.i, out);
	return 0;
}

/* d(output O)/dx_k at X for each item into G; returns 0 or -1. */
static int tol_gradient(const struct tol_case *c, const double *x,
                        double v_near, enum tol_output o, double *g)
{
	struct problem q;
	struct op_point pt;
	if (tol_point(c, x, v_near, &q, &pt) != 0)
		return -1;
	double v = pt.v, i = pt.i, r = q.src.r;
	for (size_t k = 0; k < c->nitems; k++) {
		struct sensitivity s;
		if (sensitivity_at(&q, v, i, &c->items[k].param, &s) != 0)
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
static double tol_objective(const struct tol_case *c, const double *x,
                            double v_near, enum tol_output o, double sign)
{
	double y[TOL_NOUT];
	if (tol_eval(c, x, v_near, y) != 0)
		return -INFINITY;
	return sign * y[o];
}

/* The objective along parameter K from the point X, for golden section. */
struct tol_line_ctx {
	const struct tol_case *c;
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
	return -tol_objective(lc->c, xs, lc->v_near, lc->o, lc->sign);
}

/*
 * From the extremum E (SIGN +1: a maximum), search inside the box along
 * every parameter whose derivative points into it, until none does.
 */
static void tol_refine(const struct tol_case *c, double v_near,
                       enum tol_output o, double sign, struct tol_extreme *e)
{
	size_t n = c->nitems;
	double x[TOL_MAX_ITEMS], g[TOL_MAX_ITEMS];
	memcpy(x, e->params, n * sizeof x[0]);
	double best = sign * e->value;
	for (size_t pass = 0; pass < 2 * n + 2; pass++) {
		if (tol_gradient(c, x, v_near, o, g) != 0)
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
			struct tol_line_ctx lc = { c, x, n, k, v_near, o, sign };
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
	memset(out, 0, sizeof *out);
	size_t n = c->nitems;
	if (n > TOL_MAX_CORNER_ITEMS) {
		snprintf(err, errlen, "the worst case takes at most %d parameters "
		         "with a tolerance (%zu given): use Monte Carlo",
		         TOL_MAX_CORNER_ITEMS, n);
		return -1;
	}
	double x0[TOL_MAX_ITEMS];
	for (size_t k = 0; k < n; k++)
		x0[k] = paramref_get(&c->pb, &c->items[k].param);
	if (tol_eval(c, x0, NAN, out->nominal) != 0) {
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
		if (tol_eval(c, x, v_nom, y) != 0) {
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
	if (out->failed == out->corners) {
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
		tol_refine(c, v_nom, (enum tol_output)o, 1.0, &out->max[o]);
		tol_refine(c, v_nom, (enum tol_output)o, -1.0, &out->min[o]);
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

/* Statistics and histogram of the N values in A (reordered). */
static void tol_summarise(double *a, size_t n, size_t nbins,
                          struct tol_stats *st, struct tol_hist *h)
{
	/* An output the device does not define (a FET's drain power on an
	 * ideal current source: model.h, power) has no statistics. */
	for (size_t k = 0; k < n; k++)
		if (!isfinite(a[k])) {
			memset(h->counts, 0, sizeof h->counts);
			h->lo = h->hi = NAN;
			h->nbins = nbins;
			st->mean = st->sd = st->min = st->max = NAN;
			for (int p = 0; p < TOL_NPCT; p++)
				st->pct[p] = NAN;
			return;
		}
	/* Sums of the data shifted by the first value, which keeps the
	 * rounding of the mean and the variance small (and exact for equal
	 * values); Chan, Golub & LeVeque, Am. Stat. 37(3), 1983. */
	double shift = a[0], sum = 0.0, mn = a[0], mx = a[0];
	for (size_t k = 0; k < n; k++) {
		double x = a[k];
		sum += x - shift;
		if (x < mn)
			mn = x;
		if (x > mx)
			mx = x;
	}
	double dmean = sum / (double)n, mean = shift + dmean, ss = 0.0;
	memset(h->counts, 0, sizeof h->counts);
	double w = mx - mn, scale = w > 0.0 ? (double)nbins / w : 0.0;
	for (size_t k = 0; k < n; k++) {
		double d = (a[k] - shift) - dmean;
		ss += d * d;
		size_t b = (size_t)((a[k] - mn) * scale);
		h->counts[b < nbins ? b : nbins - 1]++;
	}
	st->mean = mean;
	st->sd = n > 1 ? sqrt(ss / (double)(n - 1)) : 0.0;
	st->min = mn;
	st->max = mx;
	h->lo = mn;
	h->hi = mx;
	h->nbins = nbins;
	/*
	 * Percentiles: select the order statistic below each (the ranks in
	 * increasing order, together); the one just above it is then the
	 * smallest value between it and the next selected rank, which
	 * selection has already placed between the two.
	 */
	size_t ranks[TOL_NPCT];
	double pos[TOL_NPCT];
	for (int p = 0; p < TOL_NPCT; p++) {
		pos[p] = (double)(n - 1) * tol_percentiles[p] / 100.0;
		size_t lo = (size_t)floor(pos[p]);
		ranks[p] = lo < n ? lo : n - 1;
	}
	tol_multiselect(a, 0, n, ranks, TOL_NPCT);
	for (int p = 0; p < TOL_NPCT; p++) {
		size_t lo = ranks[p];
		double x = a[lo];
		if (pos[p] > (double)lo && lo + 1 < n) {
			size_t end = n;
			for (int q = p + 1; q < TOL_NPCT; q++)
				if (ranks[q] > lo) {
					end = ranks[q] + 1;
					break;
				}
			double next = a[lo + 1];
			for (size_t k = lo + 2; k < end; k++)
				if (a[k] < next)
					next = a[k];
			x += (pos[p] - (double)lo) * (next - x);
		}
		st->pct[p] = x;
	}
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
	double x0[TOL_MAX_ITEMS], y0[TOL_NOUT];
	for (size_t k = 0; k < n; k++)
		x0[k] = paramref_get(&c->pb, &c->items[k].param);
	if (tol_eval(c, x0, NAN, y0) != 0) {
		snprintf(err, errlen, "no operating point at the nominal values");
		return -1;
	}
	double *buf = malloc(sizeof(double) * TOL_NOUT * trials);
	if (buf == NULL) {
		snprintf(err, errlen, "out of memory for %zu trials", trials);
		return -1;
	}
	double *col[TOL_NOUT];
	for (int o = 0; o < TOL_NOUT; o++)
		col[o] = buf + (size_t)o * trials;
	struct tol_rng rng;
	tol_rng_seed(&rng, seed);
	size_t m = 0;
	out->trials = trials;
	out->has_window = nw > 0;
	for (size_t t = 0; t < trials; t++) {
		double x[TOL_MAX_ITEMS], y[TOL_NOUT];
		for (size_t k = 0; k < n; k++)
			x[k] = tol_draw(c, &c->items[k], &rng);
		if (tol_eval(c, x, y0[TOL_VOLTAGE], y) != 0) {
			out->failed++;
			continue;
		}
		for (int o = 0; o < TOL_NOUT; o++)
			col[o][m] = y[o];
		m++;
		if (nw > 0) {
			bool in = true;
			for (size_t j = 0; j < nw && in; j++) {
				double q = y[w[j].output];
				in = !(q < w[j].lo) && !(q > w[j].hi);
			}
			out->inside += in;
		}
	}
	if (m == 0) {
		free(buf);
		snprintf(err, errlen, "no trial had an operating point");
		return -1;
	}
	for (int o = 0; o < TOL_NOUT; o++)
		tol_summarise(col[o], m, nbins, &out->stats[o], &out->hist[o]);
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
