/*
 * stability.c - the linearised circuit's verdict at an operating point
 * (see stability.h for the equations and their sources).
 */
#include "stability.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>

#include "network.h"
#include "paramref.h"
#include "quantity.h"
#include "solve.h"

/* Names of the verdicts. */
static const char *const stability_names[] = {
	[STABILITY_STABLE] = "stable",
	[STABILITY_UNSTABLE] = "unstable",
	[STABILITY_OSCILLATES] = "oscillates",
	[STABILITY_UNKNOWN] = "unknown",
};

/* Fill RP with "not given". */
void reactive_parts_init(struct reactive_parts *rp)
{
	rp->capacitance_across_device = NAN;
	rp->inductance_in_series = NAN;
}

/* The name of S. */
const char *stability_name(enum stability s)
{
	if ((int)s < 0 || s > STABILITY_UNKNOWN)
		return "unknown";
	return stability_names[s];
}

/* True when X is a usable positive value (a given part). */
static bool stability_given(double x)
{
	return isfinite(x) && x > 0.0;
}

/* Set OUT's verdict and reason. */
static void stability_set(struct stability_result *out, enum stability v,
                          const char *reason)
{
	out->verdict = v;
	snprintf(out->reason, sizeof out->reason, "%s", reason);
}

/* A current-controlled device: its thermal lag acts in series (R + r_d). */
static void stability_thermal(double r, double r_d, struct stability_result *out)
{
	out->dynamics = DYNAMICS_THERMAL;
	if (isinf(r)) {
		stability_set(out, STABILITY_STABLE, "a current source fixes the "
		              "current: nothing can run away");
		return;
	}
	double s = r + r_d;
	if (s > 0.0)
		stability_set(out, STABILITY_STABLE, "R + r_d > 0: the heating "
		              "settles back after a disturbance");
	else if (s < 0.0)
		stability_set(out, STABILITY_UNSTABLE, "R + r_d < 0: the part heats "
		              "away from this point (thermal runaway or a jump)");
	else
		stability_set(out, STABILITY_UNKNOWN, "R + r_d = 0: a fold, where "
		              "the point appears or vanishes");
}

/* A voltage-controlled device: C across it, L in series. */
static void stability_electrical(double r, double r_d, double c, double l,
                                 struct stability_result *out)
{
	out->dynamics = DYNAMICS_ELECTRICAL;
	bool cg = stability_given(c), lg = stability_given(l);
	double g = 1.0 / r_d;   /* 0 for a flat curve (r_d infinite) */
	if (isinf(r)) {
		/* A current source: C dv/dt = -g v; a series L carries a fixed current. */
		if (g > 0.0)
			stability_set(out, STABILITY_STABLE, "r_d > 0 under a current "
			              "source");
		else
			stability_set(out, STABILITY_UNSTABLE, "r_d < 0 under a current "
			              "source: the voltage runs off the point");
		return;
	}
	/* The sign of D = (1 + g R)/(L C). */
	double s = r == 0.0 ? 1.0 : 1.0 + r / r_d;
	if (s < 0.0) {
		stability_set(out, STABILITY_UNSTABLE, "1 + R/r_d < 0 (R > |r_d| on "
		              "a falling branch): a saddle, the circuit leaves it");
		return;
	}
	if (s == 0.0) {
		stability_set(out, STABILITY_UNKNOWN, "R = -r_d: a fold, where the "
		              "point appears or vanishes");
		return;
	}
	if (cg && lg) {
		out->trace = -g / c - r / l;
		out->det = s / (l * c);
		if (out->trace < 0.0)
			stability_set(out, STABILITY_STABLE, "T < 0 and D > 0: "
			              "disturbances die out");
		else
			stability_set(out, STABILITY_OSCILLATES, "L > R |r_d| C on a "
			              "falling branch: the circuit circles the point");
		return;
	}
	if (lg) {
		/* The device's own capacitance is tiny: T has the sign of -g. */
		if (g >= 0.0)
			stability_set(out, STABILITY_STABLE, "r_d > 0: disturbances die "
			              "out");
		else
			stability_set(out, STABILITY_OSCILLATES, "a falling branch with "
			              "series L and little C: the circuit circles the "
			              "point (a capacitance above L/(R |r_d|) steadies it)");
		return;
	}
	stability_set(out, STABILITY_STABLE, g >= 0.0
	              ? "r_d > 0: disturbances die out"
	              : "R < |r_d| on a falling branch: the device's capacitance "
	                "settles it (series inductance above R |r_d| C would not)");
}

/* Classify the operating point. */
void stability_classify(const struct problem *pb, double r_d,
                        const struct reactive_parts *rp,
                        struct stability_result *out)
{
	out->r_d = r_d;
	out->trace = NAN;
	out->det = NAN;
	out->dynamics = DYNAMICS_ELECTRICAL;
	if (isnan(r_d) || r_d == 0.0 || isnan(pb->src.r)) {
		stability_set(out, STABILITY_UNKNOWN, "the differential resistance "
		              "is not defined here");
		return;
	}
	double c = rp != NULL ? rp->capacitance_across_device : NAN;
	double l = rp != NULL ? rp->inductance_in_series : NAN;
	if (pb->dev.type != NULL && pb->dev.type->current == NULL)
		stability_thermal(pb->src.r, r_d, out);
	else
		stability_electrical(pb->src.r, r_d, c, l, out);
}

/* The differential resistance at (V, I). */
double stability_rd(const struct problem *pb, double v, double i)
{
	const struct model_type *t = pb->dev.type;
	if (t == NULL)
		return NAN;
	if (t->current != NULL) {
		double g = device_conductance(&pb->dev, v);
		return isfinite(g) && g != 0.0 ? 1.0 / g : g == 0.0 ? INFINITY : NAN;
	}
	if (t->resistance != NULL)
		return t->resistance(pb->dev.p, i);
	return NAN;
}

/* One step of a sweep: its rows [first, first + n), its value. */
struct stability_step {
	size_t first, n;
	double value;
};

/* Whether point K of step S is stable. */
static bool stability_step_stable(const struct problem *pb,
                                  const struct reactive_parts *rp,
                                  const struct sweep_spec *sp,
                                  const struct sweep_result *res,
                                  const struct stability_step *s, size_t k)
{
	const struct sweep_row *r = &res->rows[s->first + k];
	struct problem q = *pb;
	if (paramref_set(&q, &sp->param, s->value) != 0)
		return false;
	struct stability_result sr;
	stability_classify(&q, stability_rd(&q, r->v, r->i), rp, &sr);
	return sr.verdict == STABILITY_STABLE;
}

/*
 * Where a pair was born or died between a step of NA points and one of NB
 * (NB = NA +- 2): the index J of the pair in the longer list that leaves
 * the other's points matched in order with the least voltage change.
 */
static size_t stability_pair(const struct sweep_row *a, size_t na,
                             const struct sweep_row *b, size_t nb)
{
	const struct sweep_row *lng = na > nb ? a : b, *sht = na > nb ? b : a;
	size_t nl = na > nb ? na : nb, best = 0;
	double bc = INFINITY;
	for (size_t j = 0; j + 1 < nl; j++) {
		double c = 0.0;
		for (size_t m = 0, x = 0; m < nl; m++) {
			if (m == j || m == j + 1)
				continue;
			c += fabs(lng[m].v - sht[x++].v);
		}
		if (c < bc) {
			bc = c;
			best = j;
		}
	}
	return best;
}

/* Follow the stable branch along the sweep (see stability.h). */
size_t stability_jumps(const struct problem *pb, const struct reactive_parts *rp,
                       const struct sweep_spec *sp, const struct sweep_result *res,
                       bool up, struct stability_jump *out, size_t max)
{
	size_t nsteps = sp->points, njumps = 0;
	if (nsteps == 0 || res->nrows == 0)
		return 0;
	struct stability_step *steps = calloc(nsteps, sizeof *steps);
	if (steps == NULL)
		return 0;
	for (size_t k = 0; k < nsteps; k++)
		steps[k].value = sweep_value(sp, k);
	for (size_t r = res->nrows; r-- > 0;) {
		size_t k = res->rows[r].step;
		if (k >= nsteps)
			continue;
		steps[k].first = r;
		steps[k].n++;
	}
	bool have = false;
	size_t t = 0, prev = 0;
	for (size_t c = 0; c < nsteps; c++) {
		size_t k = up ? c : nsteps - 1 - c;
		const struct stability_step *s = &steps[k];
		const struct sweep_row *rows = &res->rows[s->first];
		if (s->n == 0) {
			have = false;
			continue;
		}
		if (!have) {
			/* Start on the lowest (up) or highest (down) stable point. */
			for (size_t m = 0; m < s->n; m++) {
				size_t x = up ? m : s->n - 1 - m;
				if (stability_step_stable(pb, rp, sp, res, s, x)) {
					t = x;
					have = true;
					break;
				}
			}
			prev = k;
			continue;
		}
		const struct stability_step *p = &steps[prev];
		const struct sweep_row *old = &res->rows[p->first + t];
		bool died = false;
		size_t cand = t;
		if (s->n + 2 == p->n) {
			size_t j = stability_pair(&res->rows[p->first], p->n, rows, s->n);
			died = t == j || t == j + 1;
			cand = t < j ? t : t - 2;
		} else if (s->n == p->n + 2) {
			size_t j = stability_pair(&res->rows[p->first], p->n, rows, s->n);
			cand = t < j ? t : t + 2;
		} else if (s->n != p->n) {
			/* Any other change: the nearest point in voltage. */
			cand = 0;
			for (size_t m = 1; m < s->n; m++)
				if (fabs(rows[m].v - old->v) < fabs(rows[cand].v - old->v))
					cand = m;
		}
		if (!died && cand < s->n &&
		    stability_step_stable(pb, rp, sp, res, s, cand)) {
			t = cand;
			prev = k;
			continue;
		}
		/* The branch is gone: the nearest stable point left takes over. */
		size_t best = s->n;
		for (size_t m = 0; m < s->n; m++)
			if (stability_step_stable(pb, rp, sp, res, s, m) &&
			    (best == s->n ||
			     fabs(rows[m].v - old->v) < fabs(rows[best].v - old->v)))
				best = m;
		if (best == s->n) {
			have = false;
			continue;
		}
		if (njumps < max) {
			struct stability_jump *jp = &out[njumps];
			jp->value = 0.5 * (p->value + s->value);
			size_t after = k > prev ? k : prev;
			for (size_t f = 0; f < res->nfolds; f++)
				if (res->folds[f].step == after)
					jp->value = res->folds[f].value;
			jp->v_from = old->v;
			jp->i_from = old->i;
			jp->v_to = rows[best].v;
			jp->i_to = rows[best].i;
		}
		njumps++;
		t = best;
		prev = k;
	}
	free(steps);
	return njumps < max ? njumps : max;
}

/* Whether the part runs away (see stability.h). */
bool stability_runaway(const struct problem *pb, char *msg, size_t n)
{
	const struct model_type *t = pb->dev.type;
	if (t == NULL || t->current != NULL || t->current_range == NULL ||
	    !(isfinite(pb->src.r)) || !(pb->src.r >= 0.0))
		return false;
	double ilo, ihi, v;
	t->current_range(pb->dev.p, &ilo, &ihi);
	if (!(ihi > 0.0) || device_voltage(&pb->dev, ihi, &v) != 0)
		return false;
	/* At the end of the range the line still lies above the curve: the
	 * source would push more current than the part reaches at its limit. */
	double line_v = pb->src.voc - pb->src.r * ihi;
	if (!(line_v > v))
		return false;
	char a[48], b[48];
	qty_format_short(a, sizeof a, ihi, QTY_CURRENT, 4, 1);
	qty_format_short(b, sizeof b, v, QTY_VOLTAGE, 4, 1);
	snprintf(msg, n, "the part runs away: at the end of its range (%s at "
	         "%s, its maximum temperature) the source still drives more "
	         "current, so it heats past its limit; raise RS or lower VS",
	         a, b);
	return true;
}

/* Whether the tolerance box holds a fold (see stability.h). */
bool stability_box_fold(const struct tol_case *c, char *msg, size_t n)
{
	return stability_box_fold_watched(c, msg, n, NULL);
}

/* Whether the tolerance box holds a fold, watched. */
bool stability_box_fold_watched(const struct tol_case *c, char *msg, size_t n,
                                const struct progress *pr)
{
	if (c->nitems == 0 || c->nitems > TOL_MAX_CORNER_ITEMS)
		return false;
	struct solve_options o = c->opts;
	o.method = METHOD_AUTO;
	struct solve_result res;
	if (solve_problem(&c->pb, &o, &res) != SOLVE_OK)
		res.n = 0;
	size_t lo = res.n, hi = res.n;
	size_t corners = (size_t)1 << c->nitems;
	/* a network's parts are reduced once a corner, into one copy */
	struct network *scratch = c->pb.net != NULL ? network_copy(c->pb.net)
	                                            : NULL;
	bool stopped = false;
	for (size_t m = 0; m < corners && !stopped; m++) {
		if ((stopped = progress_stopped(pr)))
			break;
		progress_item(pr, m, corners);
		struct problem q = c->pb;
		if (tol_case_corner(c, m, &q, scratch) != 0)
			continue;
		if (solve_problem(&q, &o, &res) != SOLVE_OK)
			res.n = 0;
		if (res.n < lo)
			lo = res.n;
		if (res.n > hi)
			hi = res.n;
	}
	network_destroy(scratch);
	if (stopped || lo == hi)
		return false;
	snprintf(msg, n, "the tolerance box holds a fold: the circuit has %zu "
	         "operating point%s at some corners and %zu at others, so it may "
	         "sit on another branch than the nominal one (biasline sweep "
	         "shows where it jumps)", hi, hi == 1 ? "" : "s", lo);
	return true;
}
