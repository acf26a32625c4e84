/*
 * design.c - series resistance or source voltage for a target operating
 * point (see design.h).
 */
#include "design.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "kernel.h"
#include "network.h"
#include "verdict.h"

/* Row kind name. */
const char *design_row_name(enum design_row_kind k)
{
	switch (k) {
	case DESIGN_ROW_EXACT:
		return "exact";
	case DESIGN_ROW_LOWER:
		return "lower";
	case DESIGN_ROW_HIGHER:
		return "higher";
	}
	return "?";
}

/* Target name. */
const char *design_target_name(enum design_target t)
{
	switch (t) {
	case DESIGN_CURRENT:
		return "current";
	case DESIGN_VOLTAGE:
		return "voltage";
	case DESIGN_POWER:
		return "power";
	case DESIGN_RESULT:
		return "result";
	}
	return "?";
}

/* What RQ's target is called. */
const char *design_request_name(const struct design_request *rq)
{
	return rq->target == DESIGN_RESULT ? rq->result
	                                   : design_target_name(rq->target);
}

/* The value of result KEY at (V, I). */
int design_result_value(const struct problem *pb, const char *key, double v,
                        double i, double *out)
{
	struct model_extra ex;
	if (device_secondary(&pb->dev, &pb->src, v, i, &ex) != 0)
		return -1;
	for (size_t k = 0; k < ex.n; k++)
		if (strcmp(ex.v[k].key, key) == 0) {
			*out = ex.v[k].value;
			return 0;
		}
	return -1;
}

/* The unit of RQ's target on PB. */
enum qty_kind design_request_unit(const struct problem *pb,
                                  const struct design_request *rq)
{
	if (rq->target != DESIGN_RESULT)
		return design_target_unit(rq->target);
	struct model_extra ex;
	/* The kinds do not depend on the point: any point will do. */
	if (device_secondary(&pb->dev, &pb->src, 0.613, 1.37e-5, &ex) == 0)
		for (size_t k = 0; k < ex.n; k++)
			if (strcmp(ex.v[k].key, rq->result) == 0)
				return ex.v[k].kind;
	return QTY_NUMBER;
}

/* The unit of a target. */
enum qty_kind design_target_unit(enum design_target t)
{
	return t == DESIGN_CURRENT   ? QTY_CURRENT
	       : t == DESIGN_VOLTAGE ? QTY_VOLTAGE
	       : t == DESIGN_POWER   ? QTY_POWER
	                             : QTY_NUMBER;
}

/*
 * P - I V(I) on the device at I = SIDE X (SIDE is +1 forward, -1 reverse);
 * NaN where V(I) is undefined.
 */
static double design_power_gap_i(const struct device *d, double x, int side,
                                 double p)
{
	double v, i = side * x;
	if (device_voltage(d, i, &v) != 0)
		return NAN;
	return i * v - p;
}

/* V I(V) - P on the device at V = SIDE X. */
static double design_power_gap_v(const struct device *d, double x, int side,
                                 double p)
{
	double v = side * x;
	return v * device_current(d, v) - p;
}

/* The power gap of one device, target and side, for the kernel. */
struct design_gap_ctx {
	const struct device *d;
	double p;
	int in_current, side;
};

/* gap(x) of the context. */
static double design_gap_eval(void *ctx, double x, double *step)
{
	const struct design_gap_ctx *g = ctx;
	if (step != NULL)
		*step = NAN;
	return g->in_current ? design_power_gap_i(g->d, x, g->side, g->p)
	                     : design_power_gap_v(g->d, x, g->side, g->p);
}

/*
 * Solve gap(x) = 0 for x > 0 where gap increases from -P at 0: double an
 * upper end until gap > 0, then bisect to the last bit (kernel.h).  SIDE
 * picks the forward (+1) or reverse (-1) region; *X is the magnitude.
 * Returns 0 or -1.
 */
static int design_power_root(const struct device *d, double p, int in_current,
                             int side, double *x)
{
	struct design_gap_ctx g = { d, p, in_current, side };
	struct kernel_fn fn = { design_gap_eval, &g };
	double hi = in_current ? 1e-12 : 1e-3;
	double lo = 0.0, glo = -p;
	int k = 0;
	for (;; k++) {
		double gh = design_gap_eval(&g, hi, NULL);
		if (gh > 0.0)
			break;
		if (!(gh <= 0.0) || k > 200)
			return -1; /* undefined, or never reaches P */
		lo = hi;
		glo = gh;
		hi *= 2.0;
	}
	struct kernel_result r = kernel_bisect_solve(&fn, lo, glo, hi, false, 0.0);
	if (!r.ok)
		return -1;
	lo = r.lo;
	hi = r.hi;
	/* The end whose gap is smaller in size. */
	*x = fabs(design_gap_eval(&g, lo, NULL)) < fabs(design_gap_eval(&g, hi, NULL))
	         ? lo : hi;
	return lo > 0.0 || hi > 0.0 ? 0 : -1;
}

/* The device point meeting the target. */
int design_device_point(const struct problem *pb,
                        const struct design_request *rq, double *v, double *i,
                        char *err, size_t errlen)
{
	const struct device *d = &pb->dev;
	const struct model_type *t = d->type;
	int side = 1;
	if (!isfinite(rq->value)) {
		snprintf(err, errlen, "the target %s is not a finite number",
		         design_target_name(rq->target));
		return -1;
	}
	switch (rq->target) {
	case DESIGN_CURRENT:
		if (t->voltage == NULL) {
			snprintf(err, errlen,
			         "the %s curve is not single-valued in current: give a "
			         "voltage target instead", t->name);
			return -1;
		}
		if (device_voltage(d, rq->value, v) != 0 || !isfinite(*v)) {
			snprintf(err, errlen,
			         "the device cannot carry %.6g A (outside its curve)",
			         rq->value);
			return -1;
		}
		*i = rq->value;
		return 0;
	case DESIGN_VOLTAGE:
		if (t->current == NULL) {
			snprintf(err, errlen,
			         "the %s curve is not single-valued in voltage: give a "
			         "current target instead", t->name);
			return -1;
		}
		*v = rq->value;
		*i = device_current(d, *v);
		if (!isfinite(*i)) {
			snprintf(err, errlen, "the device current at %.6g V is not finite",
			         *v);
			return -1;
		}
		return 0;
	case DESIGN_POWER:
		if (!(rq->value > 0.0)) {
			snprintf(err, errlen,
			         "a power target must be above 0 W (a passive device "
			         "absorbs power on either side)");
			return -1;
		}
		/* The side the source drives the device to. */
		side = isfinite(pb->src.voc) && pb->src.voc < 0.0 ? -1 : 1;
		if (t->voltage != NULL) {
			if (design_power_root(d, rq->value, 1, side, i) != 0)
				goto no_power;
			*i *= side;
			if (device_voltage(d, *i, v) != 0)
				goto no_power;
		} else if (t->current != NULL) {
			if (design_power_root(d, rq->value, 0, side, v) != 0)
				goto no_power;
			*v *= side;
			*i = device_current(d, *v);
		} else {
			goto no_power;
		}
		return 0;
	case DESIGN_RESULT:
		break;
	}
	snprintf(err, errlen, "a result target has no device point of its own");
	return -1;
no_power:
	snprintf(err, errlen,
	         "no %s point of the device dissipates %.6g W",
	         side < 0 ? "reverse" : "forward", rq->value);
	return -1;
}

/* Copy PB with RS or VS replaced. */
int design_apply(const struct problem *pb, enum design_unknown u, double value,
                 struct problem *out)
{
	*out = *pb;
	if (isinf(pb->src.r) || !isfinite(pb->src.voc))
		return -1;
	if (u == DESIGN_FOR_RS) {
		if (!(value >= 0.0) || !isfinite(value))
			return -1;
		out->src.r = value;
	} else {
		if (!isfinite(value))
			return -1;
		out->src.voc = value;
	}
	out->src.isc = out->src.r > 0.0 ? out->src.voc / out->src.r : NAN;
	problem_bind(out);
	return 0;
}

/* Solve the problem with one candidate value and fill ROW. */
/* As design_apply, for any unknown of RQ. */
int design_apply_request(const struct problem *pb,
                         const struct design_request *rq, double value,
                         struct problem *out)
{
	if (rq->unknown != DESIGN_FOR_PART)
		return design_apply(pb, rq->unknown, value, out);
	*out = *pb;
	if (paramref_check(pb, &rq->part, value, NULL, 0) != 0)
		return -1;
	return paramref_set(out, &rq->part, value);
}

/* The unit of RQ's unknown. */
enum qty_kind design_unknown_unit(const struct problem *pb,
                                  const struct design_request *rq)
{
	switch (rq->unknown) {
	case DESIGN_FOR_RS:
		return QTY_RESISTANCE;
	case DESIGN_FOR_VS:
		return QTY_VOLTAGE;
	case DESIGN_FOR_PART:
		break;
	}
	return paramref_unit(pb, &rq->part);
}

/* The load line's residual at (V, I) with the part at X; NaN if X is bad. */
static double design_part_gap(const struct problem *pb,
                              const struct design_request *rq, double x,
                              double v, double i)
{
	struct problem q;
	if (design_apply_request(pb, rq, x, &q) != 0)
		return NAN;
	return source_line_residual(&q.src, v, i);
}

/* The part gap at fixed (V, I), for the kernel. */
struct design_part_ctx {
	const struct problem *pb;
	const struct design_request *rq;
	double v, i;
};

/* The gap with the part at X. */
static double design_part_eval(void *ctx, double x, double *step)
{
	const struct design_part_ctx *c = ctx;
	if (step != NULL)
		*step = NAN;
	return design_part_gap(c->pb, c->rq, x, c->v, c->i);
}

/* The most samples of a design grid. */
#define DESIGN_GRID_MAX 481

/*
 * The bracket of a zero of FN nearest the present value, from the
 * kernel's scan of NGRID samples (at most DESIGN_GRID_MAX): from 1e-6 to
 * 1e6 times BASE on a logarithmic grid (LOGSCALE), else from BASE - SPAN
 * to BASE + SPAN; sign changes and zeros only, each value being a solve.
 * Nearest by the distance of the bracket's middle (geometric on the
 * logarithmic grid) from BASE.  Returns 0 with [*LO, *HI] and F(*LO), or
 * -1 when F changes sign nowhere on the grid.
 */
static int design_grid_bracket(const struct kernel_fn *fn, int ngrid,
                               bool logscale, double base, double span,
                               double *lo, double *flo, double *hi)
{
	struct kernel_bracket br[DESIGN_GRID_MAX];
	struct kernel_scan sc;
	if (ngrid > DESIGN_GRID_MAX)
		ngrid = DESIGN_GRID_MAX;
	kernel_scan_init(&sc, fn, NULL, -1.0, br, DESIGN_GRID_MAX);
	for (int k = 0; k < ngrid; k++) {
		double x = logscale
		               ? base * pow(10.0, -6.0 + 12.0 * k / (ngrid - 1))
		               : base - span + 2.0 * span * k / (ngrid - 1);
		kernel_scan_push(&sc, x, fn->eval(fn->ctx, x, NULL));
	}
	kernel_scan_end(&sc);
	double best = INFINITY;
	for (size_t k = 0; k < sc.n; k++) {
		double d = logscale ? fabs(log(sqrt(br[k].lo * br[k].hi) / base))
		                    : fabs(0.5 * (br[k].lo + br[k].hi) - base);
		if (d < best) {
			best = d;
			*lo = br[k].lo;
			*hi = br[k].hi;
			*flo = br[k].flo;
		}
	}
	return best < INFINITY ? 0 : -1;
}

/*
 * The part value that puts the load line through (V, I).  A source's value
 * enters the reduced source linearly (superposition), so two evaluations
 * give it; a resistor's enters as a ratio of polynomials, so its value is
 * bracketed on a logarithmic grid (10^-6 to 10^6 times the present value)
 * and bisected in log space, taking the root nearest the present value.
 */
static int design_part_value(const struct problem *pb,
                             const struct design_request *rq, double v,
                             double i, double *out, char *err, size_t errlen)
{
	double x0 = paramref_get(pb, &rq->part);
	if (paramref_unit(pb, &rq->part) != QTY_RESISTANCE) {
		double h = fmax(fabs(x0), 1.0) * 1e-3;
		double f0 = design_part_gap(pb, rq, x0, v, i);
		double f1 = design_part_gap(pb, rq, x0 + h, v, i);
		double x = x0 - f0 * h / (f1 - f0);
		double fx = design_part_gap(pb, rq, x, v, i);
		if (!isfinite(x) || !(fabs(fx) <= 1e-9 * (fabs(v) + fabs(f0) + 1e-300))) {
			snprintf(err, errlen, "no value of this part puts the device at "
			         "the target");
			return -1;
		}
		*out = x;
		return 0;
	}
	struct design_part_ctx pc = { pb, rq, v, i };
	struct kernel_fn fn = { design_part_eval, &pc };
	double lo, hi, flo;
	if (design_grid_bracket(&fn, DESIGN_GRID_MAX, true, x0, 0.0, &lo, &flo,
	                        &hi) != 0) {
		snprintf(err, errlen, "no value of this resistor from 1e-6 to 1e6 "
		         "times its present value puts the device at the target");
		return -1;
	}
	struct kernel_result r = kernel_bisect_solve(&fn, lo, flo, hi, true, 1e-15);
	*out = r.x;
	return 0;
}

static void design_row_solve(const struct problem *pb,
                             const struct solve_options *o,
                             const struct design_request *rq,
                             const struct ratings *r, double v_t,
                             struct design_row *row)
{
	struct problem q;
	struct solve_result sr;
	row->solved = false;
	row->npoints = 0;
	row->achieved = NAN;
	row->error_percent = NAN;
	memset(&row->pt, 0, sizeof row->pt);
	row->pt.v = row->pt.i = NAN;
	memset(&row->power, 0, sizeof row->power);
	if (design_apply_request(pb, rq, row->value, &q) != 0)
		return;
	if (solve_problem(&q, o, &sr) != SOLVE_OK || sr.n == 0)
		return;
	/* With several points (a non-monotone device) take the nearest. */
	size_t best = 0;
	for (size_t k = 1; k < sr.n && !isnan(v_t); k++)
		if (fabs(sr.pts[k].v - v_t) < fabs(sr.pts[best].v - v_t))
			best = k;
	row->solved = true;
	row->npoints = sr.n;
	row->pt = sr.pts[best];
	switch (rq->target) {
	case DESIGN_CURRENT:
		row->achieved = row->pt.i;
		break;
	case DESIGN_VOLTAGE:
		row->achieved = row->pt.v;
		break;
	case DESIGN_POWER:
		row->achieved = row->pt.power;
		break;
	case DESIGN_RESULT:
		if (design_result_value(&q, rq->result, row->pt.v, row->pt.i,
		                        &row->achieved) != 0)
			row->achieved = NAN;
		break;
	}
	row->error_percent = 100.0 * (row->achieved - rq->value) / rq->value;
	ratings_check(&q, SOURCE_THEVENIN, row->pt.v, row->pt.i, r, &row->power);
}

/*
 * The targeted quantity when RQ's unknown is X: solve PB with X and take
 * the point nearest V_NEAR (NaN: the first); its (V, I) into *V, *I.  NaN
 * when X is not valid or there is no point.
 */
static double design_achieved(const struct problem *pb,
                              const struct solve_options *o,
                              const struct design_request *rq, double x,
                              double v_near, double *v, double *i)
{
	struct problem q;
	struct solve_result sr;
	if (design_apply_request(pb, rq, x, &q) != 0 ||
	    solve_problem(&q, o, &sr) != SOLVE_OK || sr.n == 0)
		return NAN;
	size_t best = 0;
	for (size_t k = 1; k < sr.n && !isnan(v_near); k++)
		if (fabs(sr.pts[k].v - v_near) < fabs(sr.pts[best].v - v_near))
			best = k;
	*v = sr.pts[best].v;
	*i = sr.pts[best].i;
	double y;
	switch (rq->target) {
	case DESIGN_CURRENT:
		return *i;
	case DESIGN_VOLTAGE:
		return *v;
	case DESIGN_POWER:
		return *v * *i;
	case DESIGN_RESULT:
		return design_result_value(&q, rq->result, *v, *i, &y) == 0 ? y
		                                                            : NAN;
	}
	return NAN;
}

/* The present value of RQ's unknown in PB. */
static double design_present(const struct problem *pb,
                             const struct design_request *rq)
{
	switch (rq->unknown) {
	case DESIGN_FOR_RS:
		return pb->src.r;
	case DESIGN_FOR_VS:
		return pb->src.voc;
	case DESIGN_FOR_PART:
		break;
	}
	return paramref_get(pb, &rq->part);
}

/* The targeted quantity minus the target with the unknown at X. */
struct design_general_ctx {
	const struct problem *pb;
	const struct solve_options *o;
	const struct design_request *rq;
};

/* design_achieved - target at X, for the kernel. */
static double design_general_eval(void *ctx, double x, double *step)
{
	const struct design_general_ctx *c = ctx;
	double v, i;
	if (step != NULL)
		*step = NAN;
	return design_achieved(c->pb, c->o, c->rq, x, NAN, &v, &i) - c->rq->value;
}

/*
 * The general design (see design.h): the root in the unknown of the
 * targeted quantity at the solved point minus the target, bracketed on a
 * grid around the present value and bisected.  Fills OUT's target point.
 */
static int design_general(const struct problem *pb,
                          const struct solve_options *o,
                          const struct design_request *rq, double *exact,
                          struct design_result *out)
{
	double x0 = design_present(pb, rq);
	bool logscale = design_unknown_unit(pb, rq) == QTY_RESISTANCE;
	double base = logscale ? (x0 > 0.0 && isfinite(x0) ? x0 : 1e3) : x0;
	double span = 10.0 * (fabs(x0) + 1.0);
	double v, i, lo, hi, flo;
	struct design_general_ctx gc = { pb, o, rq };
	struct kernel_fn fn = { design_general_eval, &gc };
	if (design_grid_bracket(&fn, 241, logscale, base, span, &lo, &flo, &hi) !=
	    0) {
		snprintf(out->message, sizeof out->message,
		         "no value of %s from %s puts the %s at %.6g: the target is "
		         "out of this stage's reach",
		         rq->unknown == DESIGN_FOR_RS   ? "RS"
		         : rq->unknown == DESIGN_FOR_VS ? "VS"
		                                        : paramref_key(pb, &rq->part),
		         logscale ? "1e-6 to 1e6 times its present value"
		                  : "around its present value",
		         design_request_name(rq), rq->value);
		return -1;
	}
	struct kernel_result r = kernel_bisect_solve(&fn, lo, flo, hi, logscale, 0.0);
	lo = r.lo;
	hi = r.hi;
	*exact = logscale ? sqrt(lo * hi) : 0.5 * (lo + hi);
	if (isnan(design_achieved(pb, o, rq, *exact, NAN, &v, &i))) {
		snprintf(out->message, sizeof out->message,
		         "the value found leaves no operating point");
		return -1;
	}
	out->v_target = v;
	out->i_target = i;
	return 0;
}

/* Whether RQ needs the general design (see design.h). */
static bool design_is_general(const struct problem *pb,
                              const struct design_request *rq)
{
	/* A curve bound to the source (model_type.bind: a FET's drain loop
	 * carries r) moves with a change of r, so the device point at the
	 * target does not give the value in closed form. */
	bool bound = pb->dev.type->bind != NULL && rq->unknown != DESIGN_FOR_VS;
	return bound || rq->target == DESIGN_RESULT ||
	       (rq->unknown == DESIGN_FOR_PART &&
	        rq->part.kind == PARAMREF_DEVICE);
}

/*
 * The message for a target current I of the wrong sign for a source of
 * VOC: the current flows the way the source drives it, so a reverse
 * current (a Zener shunt's) is a target below zero on a source below zero.
 */
static void design_wrong_sign(struct design_result *out, double i, double voc)
{
	snprintf(out->message, sizeof out->message,
	         "the target current %.6g A has the wrong sign for a %.6g V "
	         "source: it would need a negative series resistance; the "
	         "current flows the way the source drives it, so %s is %.6g A",
	         i, voc,
	         voc < 0.0 ? "a reverse current (a Zener shunt's) of that size"
	                   : "a forward current of that size",
	         -i);
}

/*
 * Mark the standard row whose point is nearer the target (the smaller
 * error; an exact tie goes to the higher value, as eseries_nearest does).
 */
static void design_mark_nearest(struct design_result *out)
{
	out->nearest = -1;
	double best = INFINITY;
	for (size_t k = 0; k < out->nrows; k++) {
		const struct design_row *r = &out->rows[k];
		if (r->kind == DESIGN_ROW_EXACT || !r->solved ||
		    !isfinite(r->error_percent))
			continue;
		double e = fabs(r->error_percent);
		if (e < best || (e == best && r->kind == DESIGN_ROW_HIGHER)) {
			best = e;
			out->nearest = (int)k;
		}
	}
	if (out->nearest >= 0)
		out->rows[out->nearest].nearest = true;
}

/*
 * Over the corners of C's box, following the point nearest V_NOM: the
 * largest power in network part PART (when PART >= 0) into *PMAX, and the
 * range of model result KEY (when not NULL) into *RMIN, *RMAX.  Each is
 * NaN when a corner has no point or no such value.
 */
static void design_corners(const struct tol_case *c, long part,
                           const char *key, double v_nom, double *pmax,
                           double *rmin, double *rmax,
                           const struct progress *pr)
{
	const char *name = part >= 0 ? network_part(c->pb.net, (size_t)part)->name
	                             : NULL;
	size_t ncorners = (size_t)1 << c->nitems;
	*pmax = part >= 0 ? -INFINITY : NAN;
	*rmin = key != NULL ? INFINITY : NAN;
	*rmax = key != NULL ? -INFINITY : NAN;
	/* a network's parts are reduced once a corner, into one copy */
	struct network *scratch = c->pb.net != NULL ? network_copy(c->pb.net)
	                                            : NULL;
	for (size_t m = 0; m < ncorners; m++) {
		struct problem q = c->pb;
		bool ok = !progress_stopped(pr) &&
		          tol_case_corner(c, m, &q, scratch) == 0;
		struct solve_result sr;
		/* the corner's values were checked where they were set
		 * (paramref_set_all): the solve refuses an invalid corner */
		if (!ok || solve_problem(&q, &c->opts, &sr) != SOLVE_OK || sr.n == 0) {
			*pmax = *rmin = *rmax = NAN;
			break;
		}
		size_t best = 0;
		for (size_t k = 1; k < sr.n; k++)
			if (fabs(sr.pts[k].v - v_nom) < fabs(sr.pts[best].v - v_nom))
				best = k;
		double v = sr.pts[best].v, i = sr.pts[best].i, y;
		if (key != NULL) {
			if (design_result_value(&q, key, v, i, &y) != 0)
				y = NAN;
			*rmin = fmin(*rmin, y);
			*rmax = fmax(*rmax, y);
			if (isnan(y))
				*rmin = *rmax = NAN;
		}
		if (name == NULL)
			continue;
		struct verdict vd;
		verdict_at(&q, SOURCE_THEVENIN, v, i, NULL, NULL, &vd);
		bool found = false;
		for (size_t k = 0; k < vd.nlines; k++)
			if (vd.lines[k].part == VERDICT_RESISTOR &&
			    strcmp(vd.lines[k].name, name) == 0) {
				*pmax = fmax(*pmax, vd.lines[k].value);
				found = true;
			}
		if (!found)
			*pmax = NAN;
	}
	network_destroy(scratch);
}

/* The worst case of one row. */
int design_row_worst(const struct tol_case *c, const struct ratings *r,
                     const struct design_request *rq,
                     struct design_worst *out)
{
	return design_row_worst_watched(c, r, rq, out, NULL);
}

/* The worst case of one row, watched. */
int design_row_worst_watched(const struct tol_case *c, const struct ratings *r,
                             const struct design_request *rq,
                             struct design_worst *out,
                             const struct progress *pr)
{
	memset(out, 0, sizeof *out);
	out->i_min = out->i_max = out->v_min = out->v_max = NAN;
	out->p_device_max = out->p_resistor_max = NAN;
	out->result_min = out->result_max = NAN;
	out->suggested_resistor_power = NAN;
	if (c->nitems == 0) {
		snprintf(out->message, sizeof out->message, "no tolerances");
		return -1;
	}
	if (c->nitems > TOL_MAX_CORNER_ITEMS) {
		snprintf(out->message, sizeof out->message, "more than %d "
		         "tolerances: the worst case cannot run",
		         TOL_MAX_CORNER_ITEMS);
		return -1;
	}
	struct tol_worst w;
	if (tol_worst_case_watched(c, &w, pr, out->message,
	                           sizeof out->message) != 0)
		return -1;
	out->i_min = w.min[TOL_CURRENT].value;
	out->i_max = w.max[TOL_CURRENT].value;
	out->v_min = w.min[TOL_VOLTAGE].value;
	out->v_max = w.max[TOL_VOLTAGE].value;
	out->p_device_max = fmax(fabs(w.min[TOL_DEVICE_POWER].value),
	                         fabs(w.max[TOL_DEVICE_POWER].value));
	/* A network's equivalent resistance is no part: the designed
	 * resistor of the network is rated instead, over the corners. */
	const char *rname = c->form == SOURCE_NORTON ? "RP" : "RS";
	long part = -1;
	if (c->pb.net == NULL) {
		out->p_resistor_max = w.max[TOL_RESISTOR_POWER].value;
	} else if (rq != NULL && rq->unknown == DESIGN_FOR_PART &&
	           rq->part.kind == PARAMREF_NETWORK &&
	           network_part(c->pb.net, (size_t)rq->part.index)->kind ==
	                   NETWORK_RESISTOR) {
		part = rq->part.index;
		rname = network_part(c->pb.net, (size_t)part)->name;
	}
	const char *key = rq != NULL && rq->target == DESIGN_RESULT ? rq->result
	                                                           : NULL;
	if (part >= 0 || key != NULL) {
		double pmax;
		design_corners(c, part, key, w.nominal[TOL_VOLTAGE], &pmax,
		               &out->result_min, &out->result_max, pr);
		if (progress_stopped(pr)) {
			snprintf(out->message, sizeof out->message, "stopped");
			return -1;
		}
		if (part >= 0)
			out->p_resistor_max = pmax;
	}
	struct verdict vd;
	verdict_worst(out->p_device_max, fmax(fabs(out->i_min), fabs(out->i_max)),
	              out->p_resistor_max, rname, r, &vd);
	out->verdict = vd.worst;
	out->resistor_verdict = RATINGS_NO_RATING;
	const struct verdict_line *shown = vd.nlines > 0 ? &vd.lines[0] : NULL;
	for (size_t k = 0; k < vd.nlines; k++)
		if (vd.lines[k].part == VERDICT_RESISTOR) {
			shown = &vd.lines[k];
			out->resistor_verdict = shown->verdict;
			out->suggested_resistor_power = shown->suggested;
		}
	if (shown != NULL)
		snprintf(out->words, sizeof out->words, "%s", shown->words);
	out->safety = tol_safety(c, &w, NULL);
	out->done = true;
	return 0;
}

/* Design for RQ on PB. */
int design_solve(const struct problem *pb, const struct solve_options *o,
                 const struct design_request *rq, const struct ratings *r,
                 struct design_result *out)
{
	memset(out, 0, sizeof *out);
	out->v_target = out->i_target = NAN;
	out->nearest = -1;
	const struct source *s = &pb->src;
	if (isinf(s->r) || !isfinite(s->voc)) {
		snprintf(out->message, sizeof out->message,
		         "an ideal current source fixes the current by itself: give "
		         "a source with a finite resistance (vs and rs)");
		return -1;
	}
	if (rq->unknown == DESIGN_FOR_RS && rq->target == DESIGN_CURRENT &&
	    rq->value * s->voc < 0.0) {
		/* A passive device takes current in the direction of the source. */
		design_wrong_sign(out, rq->value, s->voc);
		return -1;
	}
	double v, i, exact = NAN; /* set on every path that goes on */
	if (rq->target == DESIGN_RESULT) {
		double y;
		struct model_extra ex;
		if (device_secondary(&pb->dev, &pb->src, 0.613, 1.37e-5, &ex) != 0 ||
		    design_result_value(pb, rq->result, 0.613, 1.37e-5, &y) != 0) {
			size_t at = (size_t)snprintf(out->message, sizeof out->message,
			                             "the %s model has no result '%s'",
			                             pb->dev.type->name, rq->result);
			for (size_t k = 0; k < ex.n && at < sizeof out->message; k++)
				at += (size_t)snprintf(out->message + at,
				                       sizeof out->message - at, "%s%s",
				                       k ? ", " : " (its results: ",
				                       ex.v[k].key);
			if (ex.n > 0 && at < sizeof out->message)
				snprintf(out->message + at, sizeof out->message - at, ")");
			return -1;
		}
	}
	if (design_is_general(pb, rq)) {
		if (design_general(pb, o, rq, &exact, out) != 0)
			return -1;
		v = out->v_target;
		i = out->i_target;
	} else if (design_device_point(pb, rq, &v, &i, out->message,
	                               sizeof out->message) != 0) {
		return -1;
	} else {
		out->v_target = v;
		out->i_target = i;
	}
	if (design_is_general(pb, rq)) {
		/* found above */
	} else if (rq->unknown == DESIGN_FOR_PART) {
		if (design_part_value(pb, rq, v, i, &exact, out->message,
		                      sizeof out->message) != 0)
			return -1;
	} else if (rq->unknown == DESIGN_FOR_VS) {
		exact = v + s->r * i;
	} else {
		if (i == 0.0) {
			snprintf(out->message, sizeof out->message,
			         "the device carries no current at the target, so no "
			         "finite series resistance puts it there");
			return -1;
		}
		exact = (s->voc - v) / i;
		if (!(exact >= 0.0)) {
			if (i > 0.0)
				snprintf(out->message, sizeof out->message,
				         "the source voltage %.6g V is not above the device "
				         "voltage %.6g V at the target: no series resistance "
				         "reaches %.6g A; raise VS above %.6g V",
				         s->voc, v, i, v);
			else
				design_wrong_sign(out, i, s->voc);
			return -1;
		}
	}
	if (!isfinite(exact)) {
		snprintf(out->message, sizeof out->message,
		         "the exact value is not finite");
		return -1;
	}
	out->rows[out->nrows].kind = DESIGN_ROW_EXACT;
	out->rows[out->nrows++].value = exact;
	if (design_unknown_unit(pb, rq) == QTY_RESISTANCE) {
		double lo, hi;
		if (eseries_lower(rq->series, exact, &lo) == 0) {
			out->rows[out->nrows].kind = DESIGN_ROW_LOWER;
			out->rows[out->nrows++].value = lo;
		}
		if (eseries_higher(rq->series, exact, &hi) == 0) {
			out->rows[out->nrows].kind = DESIGN_ROW_HIGHER;
			out->rows[out->nrows++].value = hi;
		}
	}
	for (size_t k = 0; k < out->nrows; k++)
		design_row_solve(pb, o, rq, r, v, &out->rows[k]);
	design_mark_nearest(out);
	return 0;
}
