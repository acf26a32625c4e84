/*
 * thermal.c - the electrothermal operating point (see thermal.h).
 */
#include "thermal.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "heat.h"
#include "kernel.h"

/* Temperature step of the drift dV/dT|I (Richardson: h and h/2), K. */
#define THERMAL_DT_STEP 0.1
/* Grid intervals of the balance scan from the ambient to Tjmax. */
#define THERMAL_GRID 96
/* How far above Tjmax a runaway is followed, K (and never past this). */
#define THERMAL_RUNAWAY_SPAN 250.0
#define THERMAL_T_CEILING 990.0
/* Substitutions that settle a point's Tj under a heat that moves with T. */
#define THERMAL_TJ_ITERS 60
/* Samples of G between the ambient and Tjmax when nothing balances. */
#define THERMAL_GAIN_SAMPLES 32
/* Grid steps of the margin continuation. */
#define THERMAL_MARGIN_STEPS 240

/* The keys of TYPE (see thermal.h). */
bool thermal_keys_of(const struct model_type *type, struct thermal_keys *k)
{
	if (type == NULL)
		return false;
	k->temp = model_param_index(type, "temperature");
	k->theta = model_param_index(type, "thermal_resistance");
	k->tamb = model_param_index(type, "ambient_temperature");
	k->tjmax = model_param_index(type, "maximum_junction_temperature");
	return k->temp >= 0 && k->theta >= 0 && k->tamb >= 0 && k->tjmax >= 0 &&
	       type->voltage != NULL && type->current != NULL && type->monotone;
}

/*
 * True when DEV heats itself.  Every solve asks, so the usual answer is
 * quick: the self-heating keys end a model's table (MODEL_THERMAL_PARAMS,
 * models.h), and a model whose third-last key is not thermal_resistance,
 * or whose thermal resistance is 0, does not heat itself.
 */
bool thermal_active(const struct device *dev)
{
	const struct model_type *t = dev->type;
	if (t == NULL || t->nparams < 4)
		return false;
	size_t j = t->nparams - 3;
	if (!(dev->p[j] > 0.0) ||
	    strcmp(t->params[j].key, "thermal_resistance") != 0)
		return false;
	struct thermal_keys k;
	return thermal_keys_of(t, &k);
}

/* The temperature parameter of a self-heated DEV at its ambient. */
void thermal_normalise(struct device *dev)
{
	struct thermal_keys k;
	if (thermal_keys_of(dev->type, &k) && dev->p[k.theta] > 0.0)
		device_set_param(dev, (size_t)k.temp, dev->p[k.tamb]);
}

/* PB at junction temperature TJ without self-heating. */
void thermal_problem_at(const struct problem *pb, double tj, struct problem *q)
{
	struct thermal_keys k;
	*q = *pb;
	if (!thermal_keys_of(pb->dev.type, &k))
		return;
	device_set_param(&q->dev, (size_t)k.theta, 0.0);
	device_set_param(&q->dev, (size_t)k.temp, tj);
}

/* PB at its point's own junction temperature. */
void thermal_problem_at_point(const struct problem *pb, double v, double i,
                              struct problem *q)
{
	if (!thermal_active(&pb->dev)) {
		*q = *pb;
		return;
	}
	thermal_problem_at(pb, thermal_point_temperature(pb, v, i), q);
}

/*
 * Tj of the point (V, I): Ta + theta P(V, I), with P the heat of the
 * device at Tj itself.  A heat V I does not depend on the temperature, and
 * a transistor's (read off its curve at its base current) barely does, so
 * a few substitutions settle it; the result is the junction temperature
 * of a heat balance the point belongs to.
 */
double thermal_point_temperature(const struct problem *pb, double v, double i)
{
	struct thermal_keys k;
	if (!thermal_keys_of(pb->dev.type, &k)) {
		int t = model_param_index(pb->dev.type, "temperature");
		return t >= 0 ? pb->dev.p[t] : NAN;
	}
	const double *p = pb->dev.p;
	if (!(p[k.theta] > 0.0))
		return p[k.temp];
	struct device d = pb->dev;
	double t = p[k.tamb] + p[k.theta] * device_heat(&d, &pb->src, v, i);
	if (d.type->power == NULL)
		return t;
	for (int it = 0; it < THERMAL_TJ_ITERS && isfinite(t); it++) {
		device_set_param(&d, (size_t)k.temp, t);
		double tn = p[k.tamb] + p[k.theta] *
		            device_heat(&d, &pb->src, v, i);
		double step = tn - t;
		t = tn;
		if (!(fabs(step) > 1e-15 * fabs(t - HEAT_ZERO_C)))
			break;
	}
	return t;
}

/* V(I) of Q's device with the junction at T; 0 or -1. */
static int thermal_voltage_at(const struct problem *q, int itemp, double t,
                              double i, double *v)
{
	struct device d = q->dev;
	device_set_param(&d, (size_t)itemp, t);
	return device_voltage(&d, i, v) == 0 && isfinite(*v) ? 0 : -1;
}

/* I(V) of Q's device with the junction at T (NaN when undefined). */
static double thermal_current_at(const struct problem *q, int itemp, double t,
                                 double v)
{
	struct device d = q->dev;
	device_set_param(&d, (size_t)itemp, t);
	return device_current(&d, v);
}

/*
 * The device's drift dV/dT at the fixed current I, for Q at junction
 * temperature TJ: central differences with steps h and h/2 combined by
 * Richardson extrapolation (the h^2 error terms cancel).  Where V(I) is
 * not defined (deep reverse bias) the drift of I at fixed V times -r_d.
 */
static double thermal_drift(const struct problem *q, int itemp, double tj,
                            double v, double i, double rd)
{
	const double h = THERMAL_DT_STEP;
	double a, b, c, d;
	if (thermal_voltage_at(q, itemp, tj + h, i, &a) == 0 &&
	    thermal_voltage_at(q, itemp, tj - h, i, &b) == 0 &&
	    thermal_voltage_at(q, itemp, tj + 0.5 * h, i, &c) == 0 &&
	    thermal_voltage_at(q, itemp, tj - 0.5 * h, i, &d) == 0) {
		double d1 = (a - b) / (2.0 * h), d2 = (c - d) / h;
		return (4.0 * d2 - d1) / 3.0;
	}
	double ia = thermal_current_at(q, itemp, tj + h, v);
	double ib = thermal_current_at(q, itemp, tj - h, v);
	double ic = thermal_current_at(q, itemp, tj + 0.5 * h, v);
	double id = thermal_current_at(q, itemp, tj - 0.5 * h, v);
	double di = (4.0 * (ic - id) / h - (ia - ib) / (2.0 * h)) / 3.0;
	return -rd * di;
}

/*
 * The heat of Q's device at (V, I) (model.h, device_dissipation) and its
 * partial derivatives at a fixed temperature into *PV and *PI: I and V for
 * a part whose heat is V I; else central differences of the model's own
 * power, with steps of 1e-5 of V and I (a transistor's IC VCE + IB VBE is
 * at most quadratic in them, so the difference errs only by rounding).
 */
static double thermal_heat(const struct problem *q, double v, double i,
                           double *pv, double *pi)
{
	double p = device_dissipation(&q->dev, &q->src, v, i);
	if (q->dev.type->power == NULL) {
		*pv = i;
		*pi = v;
		return p;
	}
	double hv = 1e-5 * fmax(fabs(v), 1e-6), hi = 1e-5 * fmax(fabs(i), 1e-15);
	*pv = (device_dissipation(&q->dev, &q->src, v + hv, i) -
	       device_dissipation(&q->dev, &q->src, v - hv, i)) / (2.0 * hv);
	*pi = (device_dissipation(&q->dev, &q->src, v, i + hi) -
	       device_dissipation(&q->dev, &q->src, v, i - hi)) / (2.0 * hi);
	return p;
}

/*
 * The heat's own drift with the junction temperature at a fixed (V, I),
 * for Q at TJ: 0 for a part whose heat is V I; else Richardson-extrapolated
 * central differences of the model's power (a transistor's power hook
 * finds its collector side from V through its curve, which moves with T).
 */
static double thermal_heat_dt(const struct problem *q, int itemp, double tj,
                              double v, double i)
{
	if (q->dev.type->power == NULL)
		return 0.0;
	const double h = THERMAL_DT_STEP;
	struct device d = q->dev;
	double f[4];
	const double at[4] = { tj + h, tj - h, tj + 0.5 * h, tj - 0.5 * h };
	for (int k = 0; k < 4; k++) {
		device_set_param(&d, (size_t)itemp, at[k]);
		f[k] = device_dissipation(&d, &q->src, v, i);
	}
	double d1 = (f[0] - f[1]) / (2.0 * h), d2 = (f[2] - f[3]) / h;
	return (4.0 * d2 - d1) / 3.0;
}

/*
 * The slopes of OUT's point (PT filled, Q the isothermal problem at its
 * Tj, THETA the thermal resistance) into OUT (see thermal.h).
 */
static void thermal_fill_slopes(const struct problem *q,
                                const struct thermal_keys *k, double theta,
                                struct thermal_eval *out)
{
	double v = out->pt.v, i = out->pt.i, rd = out->pt.rd;
	double pv, pi;
	out->p = thermal_heat(q, v, i, &pv, &pi);
	out->vt = thermal_drift(q, k->temp, out->tj, v, i, rd);
	double r = q->src.r;
	if (isinf(r)) {
		out->di_dt = 0.0;
		out->dv_dt = out->vt;
	} else {
		out->di_dt = -out->vt / (rd + r);
		out->dv_dt = -r * out->di_dt;
	}
	out->dp_dt = pv * out->dv_dt + pi * out->di_dt +
	             thermal_heat_dt(q, k->temp, out->tj, v, i);
	out->gain = theta * out->dp_dt;
}

/* Solve at TJ (see thermal.h). */
int thermal_eval_at(const struct problem *pb, const struct solve_options *o,
                    double tj, bool slopes, struct thermal_eval *out)
{
	struct thermal_keys k;
	memset(out, 0, sizeof *out);
	out->tj = tj;
	out->p = out->dv_dt = out->di_dt = out->dp_dt = out->vt = out->gain = NAN;
	if (!thermal_keys_of(pb->dev.type, &k) || !isfinite(tj))
		return -1;
	struct problem q;
	thermal_problem_at(pb, tj, &q);
	struct solve_options eo = *o;
	eo.method = METHOD_AUTO;
	struct solve_result res;
	if (solve_problem(&q, &eo, &res) != SOLVE_OK || res.n != 1)
		return -1;
	out->pt = res.pts[0];
	if (!slopes) {
		out->p = device_dissipation(&q.dev, &q.src, out->pt.v, out->pt.i);
		return isfinite(out->p) ? 0 : -1;
	}
	thermal_fill_slopes(&q, &k, pb->dev.p[k.theta], out);
	return isfinite(out->p) ? 0 : -1;
}

/* The same at a known point (see thermal.h). */
int thermal_point_info(const struct problem *pb, double v, double i,
                       struct thermal_eval *out)
{
	struct thermal_keys k;
	memset(out, 0, sizeof *out);
	if (!thermal_keys_of(pb->dev.type, &k))
		return -1;
	out->tj = thermal_point_temperature(pb, v, i);
	struct problem q;
	thermal_problem_at(pb, out->tj, &q);
	out->pt = (struct op_point){ .v = v, .i = i, .method = METHOD_AUTO };
	solve_finish_point(&q, &out->pt);
	thermal_fill_slopes(&q, &k, pb->dev.p[k.theta], out);
	return 0;
}

/* What the heat curve of a junction needs: the problem and the options. */
struct thermal_ctx {
	const struct problem *pb;
	const struct solve_options *o;
};

/* P(Tj) and dP/dTj of a junction: an electrical solve at TJ. */
static int thermal_power(void *ctx, double tj, double *p, double *dp)
{
	const struct thermal_ctx *c = ctx;
	struct thermal_eval ev;
	if (thermal_eval_at(c->pb, c->o, tj, dp != NULL, &ev) != 0)
		return -1;
	*p = ev.p;
	if (dp != NULL)
		*dp = ev.dp_dt;
	return 0;
}

/* Fill a balance from the heat root R. */
static int thermal_point_from(const struct problem *pb,
                              const struct solve_options *o,
                              const struct heat_root *r,
                              struct thermal_point *out)
{
	struct thermal_eval ev;
	if (thermal_eval_at(pb, o, r->t, true, &ev) != 0)
		return -1;
	out->tj = r->t;
	out->pt = ev.pt;
	out->pt.steps = r->iters;
	out->pt.tangent = r->tangent;
	out->p = ev.p;
	out->dp_dt = ev.dp_dt;
	out->gain = ev.gain;
	out->stable = ev.gain < 1.0;
	out->tangent = r->tangent;
	return 0;
}

/* Say why PB runs away into OUT->message. */
static void thermal_runaway_message(const struct problem *pb,
                                    struct thermal_result *out)
{
	char *m = out->message;
	size_t n = sizeof out->message;
	int w;
	double take = (out->tjmax - out->ta) / out->theta;
	const char *what = out->gain_reaches_one
	                   ? "thermal runaway (the loop gain G passes 1)"
	                   : "overheats (G stays below 1, but the balance lies "
	                     "past the rating)";
	if (isfinite(out->p_tjmax))
		w = snprintf(m, n,
		             "%s: no heat balance up to Tjmax %.4g degC, where the "
		             "part would make %.4g W but %.4g K/W from %.4g degC "
		             "removes %.4g W", what, out->tjmax, out->p_tjmax,
		             out->theta, out->ta, take);
	else
		w = snprintf(m, n,
		             "%s: no heat balance up to Tjmax %.4g degC (%.4g K/W "
		             "from %.4g degC removes %.4g W there)", what,
		             out->tjmax, out->theta, out->ta, take);
	if (w < 0 || (size_t)w >= n)
		return;
	if (out->has_hot) {
		struct model_extra ex;
		struct problem q;
		thermal_problem_at(pb, out->hot.tj, &q);
		bool sat = device_secondary(&q.dev, &q.src, out->hot.pt.v,
		                            out->hot.pt.i, &ex) == 0 &&
		           ex.region != NULL && strcmp(ex.region, "saturated") == 0;
		snprintf(m + w, n - (size_t)w, "; it would stop only at %.4g degC%s",
		         out->hot.tj,
		         sat ? " (saturated: the collector side limits the current)"
		             : " (where the circuit limits the current)");
	} else {
		snprintf(m + w, n - (size_t)w,
		         "; nothing in the circuit stops it up to %.4g degC",
		         out->t_ext);
	}
}

/* Every balance (see thermal.h). */
enum thermal_status thermal_solve(const struct problem *pb,
                                  const struct solve_options *o,
                                  struct thermal_result *out)
{
	struct thermal_keys k;
	memset(out, 0, sizeof *out);
	out->p_tjmax = NAN;
	out->t_ext = NAN;
	char err[256];
	if (!thermal_keys_of(pb->dev.type, &k)) {
		snprintf(out->message, sizeof out->message,
		         "the %s model does not heat itself", pb->dev.type->name);
		return out->status = THERMAL_BAD_INPUT;
	}
	if (device_ready(&pb->dev, err, sizeof err) != 0) {
		snprintf(out->message, sizeof out->message, "%s", err);
		return out->status = THERMAL_BAD_INPUT;
	}
	const double *p = pb->dev.p;
	out->theta = p[k.theta];
	out->ta = p[k.tamb];
	out->tjmax = p[k.tjmax];
	if (!(out->theta >= 0.0) || !(out->tjmax > out->ta)) {
		snprintf(out->message, sizeof out->message,
		         "maximum_junction_temperature must lie above "
		         "ambient_temperature");
		return out->status = THERMAL_BAD_INPUT;
	}
	struct thermal_ctx ctx = { pb, o };
	struct heat_curve hc = { thermal_power, &ctx };
	double tol = o->tol > 0.0 ? o->tol : 1e-12;
	double lo = out->ta;
	double h0;
	if (heat_residual(&hc, out->ta, out->theta, lo, &h0) != 0) {
		snprintf(out->message, sizeof out->message,
		         "no electrical operating point with the junction at the "
		         "ambient %.4g degC", out->ta);
		return out->status = THERMAL_FAILED;
	}
	/* A part that gives heat out (P < 0) balances below the ambient. */
	if (h0 > 0.0)
		lo = fmax(out->ta - 2.0 * h0 - 1.0, HEAT_ZERO_C + 1.0);
	struct heat_root roots[THERMAL_MAX_POINTS];
	size_t nr = heat_scan(&hc, out->ta, out->theta, lo, out->tjmax,
	                      THERMAL_GRID, tol, roots, THERMAL_MAX_POINTS);
	for (size_t j = 0; j < nr; j++)
		if (thermal_point_from(pb, o, &roots[j], &out->pts[out->n]) == 0)
			out->n++;
	if (out->n > 0)
		return out->status = THERMAL_OK;

	/* Runaway: what the heat path takes at Tjmax, and where (above the
	 * rating) the circuit would stop the climb, if anywhere. */
	double pt;
	if (thermal_power(&ctx, out->tjmax, &pt, NULL) == 0)
		out->p_tjmax = pt;
	out->t_ext = fmin(out->tjmax + THERMAL_RUNAWAY_SPAN, THERMAL_T_CEILING);
	if (out->t_ext > out->tjmax) {
		nr = heat_scan(&hc, out->ta, out->theta, out->tjmax, out->t_ext,
		               THERMAL_GRID, tol, roots, THERMAL_MAX_POINTS);
		for (size_t j = 0; j < nr && !out->has_hot; j++)
			if (roots[j].stable &&
			    thermal_point_from(pb, o, &roots[j], &out->hot) == 0)
				out->has_hot = true;
	}
	/* A runaway proper, or a part that only settles past its rating:
	 * the loop gain on the way to where it settles. */
	double tend = out->has_hot ? out->hot.tj : out->tjmax;
	out->gain_max = -INFINITY;
	for (int j = 0; j <= THERMAL_GAIN_SAMPLES; j++) {
		double t = out->ta + (tend - out->ta) * j / THERMAL_GAIN_SAMPLES;
		struct thermal_eval ev;
		if (thermal_eval_at(pb, o, t, true, &ev) == 0 && isfinite(ev.gain))
			out->gain_max = fmax(out->gain_max, ev.gain);
	}
	out->gain_reaches_one = !out->has_hot || out->gain_max >= 1.0;
	thermal_runaway_message(pb, out);
	return out->status = THERMAL_RUNAWAY;
}

/* Order operating points by voltage. */
static int thermal_cmp_v(const void *a, const void *b)
{
	const struct op_point *p = a, *q = b;
	return (p->v > q->v) - (p->v < q->v);
}

/* thermal_solve as a solve_result (see thermal.h). */
enum solve_status thermal_solve_points(const struct problem *pb,
                                       const struct solve_options *o,
                                       struct solve_result *out)
{
	struct thermal_result tr;
	thermal_solve(pb, o, &tr);
	out->n = 0;
	out->stop = STEP_CONTINUE;
	snprintf(out->message, sizeof out->message, "%.*s",
	         (int)sizeof out->message - 1, tr.message);
	for (size_t k = 0; k < tr.n && out->n < SOLVE_MAX_POINTS; k++)
		if (tr.pts[k].stable)
			out->pts[out->n++] = tr.pts[k].pt;
	qsort(out->pts, out->n, sizeof out->pts[0], thermal_cmp_v);
	switch (tr.status) {
	case THERMAL_OK:
		if (out->n == 0) {
			snprintf(out->message, sizeof out->message,
			         "no thermally stable balance up to the maximum "
			         "junction temperature %.4g degC (only one with G >= 1)",
			         tr.tjmax);
			return out->status = SOLVE_NONE;
		}
		out->stop = STEP_CONVERGED;
		return out->status = SOLVE_OK;
	case THERMAL_RUNAWAY:
		return out->status = SOLVE_NONE;
	case THERMAL_BAD_INPUT:
		return out->status = SOLVE_BAD_INPUT;
	case THERMAL_FAILED:
		break;
	}
	return out->status = SOLVE_FAILED;
}

/* What the branch continuation of one parameter needs. */
struct thermal_branch {
	const struct problem *pb;
	const struct solve_options *o;
	struct thermal_keys k;
	struct paramref r;
	enum { BRANCH_THETA, BRANCH_AMBIENT, BRANCH_OTHER } kind;
};

/* F(X) = T - Ta - theta P(T) of the branch's problem with R set to X. */
static int thermal_branch_f(const struct thermal_branch *b, double t, double x,
                            double *f)
{
	struct problem q = *b->pb;
	if (paramref_check(&q, &b->r, x, NULL, 0) != 0 ||
	    paramref_set(&q, &b->r, x) != 0)
		return -1;
	struct thermal_eval ev;
	if (thermal_eval_at(&q, b->o, t, false, &ev) != 0)
		return -1;
	*f = t - q.dev.p[b->k.tamb] - q.dev.p[b->k.theta] * ev.p;
	return isfinite(*f) ? 0 : -1;
}

/* F(X) at the temperature T for the kernel: NaN where it fails. */
struct thermal_value_fn {
	const struct thermal_branch *b;
	double t;
};

static double thermal_value_eval(void *ctx, double x, double *step)
{
	const struct thermal_value_fn *vf = ctx;
	double f;
	if (step != NULL)
		*step = NAN;
	return thermal_branch_f(vf->b, vf->t, x, &f) == 0 ? f : NAN;
}

/*
 * The value X of the branch's parameter that makes T a balance, from the
 * guess X0: closed forms for the thermal resistance and the ambient, else
 * a secant search that widens a bracket and then keeps it, and the
 * kernel's Brent-Dekker inside it.  Returns 0, or -1.
 */
static int thermal_branch_value(const struct thermal_branch *b, double t,
                                double x0, double *x)
{
	const double *p = b->pb->dev.p;
	if (b->kind != BRANCH_OTHER) {
		struct thermal_eval ev;
		if (thermal_eval_at(b->pb, b->o, t, false, &ev) != 0)
			return -1;
		if (b->kind == BRANCH_THETA) {
			if (!(ev.p > 0.0))
				return -1;
			*x = (t - p[b->k.tamb]) / ev.p;
		} else {
			*x = t - p[b->k.theta] * ev.p;
		}
		return isfinite(*x) ? 0 : -1;
	}
	double xa = x0, fa;
	if (thermal_branch_f(b, t, xa, &fa) != 0)
		return -1;
	if (fa == 0.0) {
		*x = xa;
		return 0;
	}
	/* A second point a small change of X away, then secant steps (each
	 * at most four times the last) until F changes sign. */
	double h = 1e-4 * fmax(fabs(x0), 1e-2);
	double xb = xa + h, fb;
	if (thermal_branch_f(b, t, xb, &fb) != 0) {
		xb = xa - h;
		if (thermal_branch_f(b, t, xb, &fb) != 0)
			return -1;
	}
	bool bracket = false;
	for (int it = 0; it < 80 && !bracket; it++) {
		if (fb == 0.0) {
			*x = xb;
			return 0;
		}
		if ((fb < 0.0) != (fa < 0.0)) {
			bracket = true;
			break;
		}
		double last = xb - xa;
		double step = (fb != fa) ? -fb * last / (fb - fa) : last;
		/* The secant may land on the root without crossing it. */
		if (fabs(fb) <= 1e-13 * fmax(fabs(t - HEAT_ZERO_C), 1.0) ||
		    fabs(step) <= 1e-15 * fabs(xb)) {
			*x = xb;
			return 0;
		}
		if (!isfinite(step) || step == 0.0)
			step = last;
		if (fabs(step) > 4.0 * fabs(last))
			step = copysign(4.0 * fabs(last), step);
		double xn = xb + step, fn;
		int tries = 0;
		while (thermal_branch_f(b, t, xn, &fn) != 0 && tries++ < 40) {
			step *= 0.5;
			xn = xb + step;
		}
		if (tries > 40)
			return -1;
		xa = xb;
		fa = fb;
		xb = xn;
		fb = fn;
	}
	if (!bracket)
		return -1;
	/* Brent-Dekker in [xa, xb] (kernel.h). */
	struct thermal_value_fn vf = { b, t };
	struct kernel_fn fn = { thermal_value_eval, &vf };
	double lo = fmin(xa, xb), hi = fmax(xa, xb);
	struct kernel_result r =
		kernel_brent_solve(&fn, lo, lo == xa ? fa : fb, hi, lo == xa ? fb : fa,
		                   1e-14, 0.0);
	if (!r.ok || !isfinite(r.x))
		return -1;
	*x = r.x;
	return 0;
}

/*
 * G - 1 on the branch at T: the loop gain of the problem with the
 * parameter at its branch value X(T) (from the guess X0, written back to
 * *X).  0 or -1.
 */
static int thermal_branch_gain(const struct thermal_branch *b, double t,
                               double x0, double *x, double *g1)
{
	if (thermal_branch_value(b, t, x0, x) != 0)
		return -1;
	struct problem q = *b->pb;
	if (paramref_set(&q, &b->r, *x) != 0)
		return -1;
	struct thermal_eval ev;
	if (thermal_eval_at(&q, b->o, t, true, &ev) != 0 || !isfinite(ev.gain))
		return -1;
	*g1 = ev.gain - 1.0;
	return 0;
}

/*
 * A function of T along the branch for the kernel: G - 1 (FOLD) or the
 * branch value X(T) times SIGN (the golden-section search's).  Each value
 * starts from the last X found; NaN where it fails, noted in FAILED.
 */
struct thermal_along {
	const struct thermal_branch *b;
	bool fold;
	double sign;
	double guess;   /* X at the last T evaluated */
	bool failed;
};

static double thermal_along_eval(void *ctx, double t, double *step)
{
	struct thermal_along *al = ctx;
	double x, f;
	if (step != NULL)
		*step = NAN;
	int rc = al->fold ? thermal_branch_gain(al->b, t, al->guess, &x, &f)
	                  : thermal_branch_value(al->b, t, al->guess, &x);
	if (rc != 0) {
		al->failed = true;
		return NAN;
	}
	al->guess = x;
	return al->fold ? f : al->sign * x;
}

/*
 * The fold in [A, C], where X(T) turns back: the zero of G - 1 along the
 * branch (dX/dT has the sign of 1 - G), by the kernel's Brent-Dekker to
 * 1e-13 of the absolute temperature.  Returns 0 with *T and *X, or -1
 * when G - 1 does not change sign there (or cannot be had).
 */
static int thermal_branch_fold(const struct thermal_branch *b, double a,
                               double c, double guess, double *t, double *x)
{
	double xa, xc, fa, fc;
	if (thermal_branch_gain(b, a, guess, &xa, &fa) != 0 ||
	    thermal_branch_gain(b, c, guess, &xc, &fc) != 0 ||
	    (fa < 0.0) == (fc < 0.0))
		return -1;
	struct thermal_along al = { b, true, 1.0, 0.5 * (xa + xc), false };
	struct kernel_fn fn = { thermal_along_eval, &al };
	struct kernel_result r = kernel_brent_solve(
		&fn, a, fa, c, fc, 0.0, 1e-13 * fmax(fabs(a - HEAT_ZERO_C), 1.0));
	double g1;
	if (al.failed || !isfinite(r.x) ||
	    thermal_branch_gain(b, r.x, al.guess, x, &g1) != 0)
		return -1;
	*t = r.x;
	return 0;
}

/*
 * The extremum of X(T) on the branch in [A, C] by the kernel's golden
 * section, to 1e-10 of the absolute temperature: a maximum when MAX is
 * true.  *T and *X get it; 0 or -1.
 */
static int thermal_branch_extremum(const struct thermal_branch *b, double a,
                                   double c, double guess, bool max,
                                   double *t, double *x)
{
	struct thermal_along al = { b, false, max ? -1.0 : 1.0, guess, false };
	struct kernel_fn fn = { thermal_along_eval, &al };
	struct kernel_golden g;
	kernel_golden_set(&g, &fn, a, c);
	for (int k = 0; k < KERNEL_MAX_ITER && !al.failed && g.x1 < g.x2 &&
	                g.b - g.a > 1e-10 * fmax(fabs(g.a - HEAT_ZERO_C), 1.0);
	     k++)
		kernel_golden_iterate(&g, &fn);
	if (al.failed)
		return -1;
	double fmin_;
	*t = kernel_golden_best(&g, &fmin_);
	*x = al.sign * fmin_;
	return 0;
}

/* The margin in KEY (see thermal.h). */
int thermal_margin(const struct problem *pb, const struct solve_options *o,
                   const char *key, struct thermal_margin *out, char *err,
                   size_t errlen)
{
	struct thermal_branch b = { .pb = pb, .o = o };
	memset(out, 0, sizeof *out);
	out->tj = out->fold = out->fold_tj = out->at_tjmax = out->t_end = NAN;
	if (!thermal_active(&pb->dev) || !thermal_keys_of(pb->dev.type, &b.k)) {
		snprintf(err, errlen, "the device does not heat itself "
		         "(thermal_resistance is 0)");
		return -1;
	}
	if (paramref_find(pb, key, &b.r, err, errlen) != 0)
		return -1;
	out->param = b.r;
	out->now = paramref_get(pb, &b.r);
	b.kind = BRANCH_OTHER;
	if (b.r.kind == PARAMREF_DEVICE && b.r.index == b.k.theta)
		b.kind = BRANCH_THETA;
	else if (b.r.kind == PARAMREF_DEVICE && b.r.index == b.k.tamb)
		b.kind = BRANCH_AMBIENT;
	else if (b.r.kind == PARAMREF_DEVICE &&
	         (b.r.index == b.k.temp || b.r.index == b.k.tjmax)) {
		snprintf(err, errlen, "%s does not move the heat balance", key);
		return -1;
	}
	const double *p = pb->dev.p;
	double ta = p[b.k.tamb], tjmax = p[b.k.tjmax];

	/* Where to start: the coolest stable balance now, else low down. */
	struct thermal_result tr;
	thermal_solve(pb, o, &tr);
	if (tr.status == THERMAL_BAD_INPUT || tr.status == THERMAL_FAILED) {
		snprintf(err, errlen, "%s", tr.message);
		return -1;
	}
	double t0;
	for (size_t j = 0; j < tr.n && !out->has_point; j++)
		if (tr.pts[j].stable) {
			out->has_point = true;
			out->tj = tr.pts[j].tj;
		}
	if (out->has_point)
		t0 = out->tj;
	else if (b.kind == BRANCH_AMBIENT)
		t0 = fmax(ta - 150.0, HEAT_ZERO_C + 73.15);
	else
		t0 = ta + 0.5;
	double t_end = fmin(fmax(tjmax, t0) + 150.0, THERMAL_T_CEILING);
	out->t_end = t_end;
	if (!(t_end > t0)) {
		snprintf(err, errlen, "no room above %.4g degC to follow the "
		         "balance", t0);
		return -1;
	}
	double x0;
	if (out->has_point) {
		x0 = out->now;
	} else if (thermal_branch_value(&b, t0, out->now, &x0) != 0) {
		snprintf(err, errlen, "no heat balance to follow in %s", key);
		return -1;
	}
	/* Follow X(T) up until it turns back. */
	double dt = (t_end - t0) / THERMAL_MARGIN_STEPS;
	double tprev2 = NAN, tprev = t0, xprev = x0;
	int dir = 0;
	bool tjmax_seen = false;
	for (int s = 1; s <= THERMAL_MARGIN_STEPS; s++) {
		double t = t0 + s * dt, x;
		if (thermal_branch_value(&b, t, xprev, &x) != 0)
			break;
		int d = (x > xprev) - (x < xprev);
		if (dir == 0)
			dir = d;
		if (!tjmax_seen && tprev < tjmax && t >= tjmax) {
			double xt;
			if (thermal_branch_value(&b, tjmax, xprev, &xt) == 0)
				out->at_tjmax = xt;
			tjmax_seen = true;
		}
		if (dir != 0 && d != 0 && d != dir) {
			double a = isnan(tprev2) ? t0 : tprev2, tf, xf;
			if (thermal_branch_fold(&b, a, t, xprev, &tf, &xf) == 0 ||
			    thermal_branch_extremum(&b, a, t, xprev, dir > 0, &tf,
			                            &xf) == 0) {
				out->found = true;
				out->fold = xf;
				out->fold_tj = tf;
			}
			break;
		}
		tprev2 = tprev;
		tprev = t;
		xprev = x;
	}
	/* The rating only matters when the branch reaches it before the fold. */
	if (out->found && out->fold_tj <= tjmax)
		out->at_tjmax = NAN;
	if (!out->has_point && !isnan(out->at_tjmax) && t0 >= tjmax)
		out->at_tjmax = NAN;
	return 0;
}

/* PB's thermal resistance. */
static double theta_of(const struct problem *pb, const struct thermal_keys *k)
{
	return pb->dev.p[k->theta];
}

/* (P / Y) DY, NaN when Y is 0. */
static double thermal_norm(double p, double y, double dy)
{
	return y != 0.0 ? p / y * dy : NAN;
}

/*
 * dP/dp at a fixed (V, I) for device parameter INDEX of Q: the heat's own
 * dependence on the parameter (a transistor's gain sets IC from IB).  A
 * central difference, one-sided at the edge of the parameter's range; 0
 * for a model whose heat is V I.
 */
static double thermal_diss_partial(const struct problem *q, int index,
                                   double v, double i)
{
	if (q->dev.type->power == NULL)
		return 0.0;
	const struct model_param *mp = &q->dev.type->params[index];
	double p = q->dev.p[index];
	double h = 6e-6 * fabs(p);
	if (h == 0.0)
		h = 6e-6;
	struct device d = q->dev;
	bool up = paramref_in_range(mp, p + h), down = paramref_in_range(mp, p - h);
	if (up && down) {
		device_set_param(&d, (size_t)index, p + h);
		double a = device_dissipation(&d, &q->src, v, i);
		device_set_param(&d, (size_t)index, p - h);
		double b = device_dissipation(&d, &q->src, v, i);
		return (a - b) / (2.0 * h);
	}
	double st = up ? h : -h;
	double f0 = device_dissipation(&d, &q->src, v, i);
	device_set_param(&d, (size_t)index, p + st);
	double f1 = device_dissipation(&d, &q->src, v, i);
	device_set_param(&d, (size_t)index, p + 2.0 * st);
	double f2 = device_dissipation(&d, &q->src, v, i);
	return (-3.0 * f0 + 4.0 * f1 - f2) / (2.0 * st);
}

/* The electrothermal sensitivities (see thermal.h). */
int thermal_sensitivity(const struct problem *pb, double v, double i,
                        const struct paramref *r, struct sensitivity *out)
{
	struct thermal_keys k;
	memset(out, 0, sizeof *out);
	out->param = *r;
	out->value = paramref_get(pb, r);
	if (!thermal_keys_of(pb->dev.type, &k))
		return -1;
	struct thermal_eval ev;
	if (thermal_point_info(pb, v, i, &ev) != 0 || !isfinite(ev.gain))
		return -1;
	struct problem q;
	thermal_problem_at(pb, ev.tj, &q);
	double pv, pi;
	thermal_heat(&q, v, i, &pv, &pi);
	bool dev = r->kind == PARAMREF_DEVICE;
	double vp = 0.0, ip = 0.0, direct = 0.0;
	if (dev && r->index == k.tamb) {
		direct = 1.0;
	} else if (dev && r->index == k.theta) {
		direct = ev.p;
	} else if (!(dev && (r->index == k.tjmax || r->index == k.temp))) {
		/* every other parameter moves the circuit at a fixed Tj */
		struct sensitivity s0;
		if (sensitivity_at(&q, v, i, r, &s0) != 0)
			return -1;
		vp = s0.dv;
		ip = s0.di;
		if (dev)
			direct = theta_of(pb, &k) * thermal_diss_partial(&q, r->index,
			                                                 v, i);
	}
	double den = 1.0 - ev.gain;
	if (!(den != 0.0) || !isfinite(den))
		return -1;
	double theta = theta_of(pb, &k);
	double dt = (direct + theta * (pv * vp + pi * ip)) / den;
	out->dv = vp + ev.dv_dt * dt;
	out->di = ip + ev.di_dt * dt;
	out->dp = i * out->dv + v * out->di;
	if (!isfinite(out->dv) || !isfinite(out->di))
		return -1;
	out->sv = thermal_norm(out->value, v, out->dv);
	out->si = thermal_norm(out->value, i, out->di);
	out->sp = thermal_norm(out->value, v * i, out->dp);
	return 0;
}

/* Diagnose the thermal loop at TJ (see thermal.h). */
void thermal_diagnose(const struct problem *pb, const struct solve_options *o,
                      double tj, struct thermal_diagnosis *d)
{
	memset(d, 0, sizeof *d);
	d->tj = tj;
	d->gain = NAN;
	d->shape = SHAPE_UNDEFINED;
	d->steps_to_tol = NAN;
	struct thermal_eval ev;
	if (!thermal_active(&pb->dev) ||
	    thermal_eval_at(pb, o, tj, true, &ev) != 0 || !isfinite(ev.gain)) {
		snprintf(d->verdict, sizeof d->verdict,
		         "no thermal loop at %.4g degC: the electrical solve fails "
		         "there", tj);
		return;
	}
	double g = ev.gain;
	d->gain = g;
	d->stable = g < 1.0;
	if (fabs(fabs(g) - 1.0) <= 1e-9)
		d->shape = SHAPE_NEUTRAL;
	else if (g < -1.0)
		d->shape = SHAPE_SPIRAL_OUT;
	else if (g < 0.0)
		d->shape = SHAPE_SPIRAL_IN;
	else if (g < 1.0)
		d->shape = SHAPE_STAIRCASE_IN;
	else
		d->shape = SHAPE_STAIRCASE_OUT;
	double tol = o->tol > 0.0 ? o->tol : 1e-12;
	if (fabs(g) < 1.0 && g != 0.0)
		d->steps_to_tol = ceil(log(tol) / log(fabs(g)));
	else if (g == 0.0)
		d->steps_to_tol = 1.0;
	switch (d->shape) {
	case SHAPE_STAIRCASE_IN:
		snprintf(d->verdict, sizeof d->verdict,
		         "G = %.3g at %.4g degC: thermally stable; the loop "
		         "staircases in, each turn keeps %.3g %% of the error",
		         g, tj, 100.0 * g);
		break;
	case SHAPE_SPIRAL_IN:
		snprintf(d->verdict, sizeof d->verdict,
		         "G = %.3g at %.4g degC: thermally stable; heating lowers "
		         "the dissipation, the loop spirals in", g, tj);
		break;
	case SHAPE_SPIRAL_OUT:
		snprintf(d->verdict, sizeof d->verdict,
		         "G = %.3g at %.4g degC: the part settles (G < 1) but the "
		         "plain iteration overshoots and spirals out", g, tj);
		snprintf(d->advice, sizeof d->advice,
		         "the projections overshoot, the part does not: its heat "
		         "flows smoothly; read the balance from the solve");
		break;
	case SHAPE_STAIRCASE_OUT:
		snprintf(d->verdict, sizeof d->verdict,
		         "G = %.3g at %.4g degC: thermal runaway; each kelvin of "
		         "heating brings %.3g K more (dP/dTj > 1/theta)", g, tj, g);
		snprintf(d->advice, sizeof d->advice,
		         "lower the thermal resistance (a larger heat sink), add "
		         "series or emitter resistance, or drive with a current "
		         "source");
		break;
	case SHAPE_NEUTRAL:
		snprintf(d->verdict, sizeof d->verdict,
		         "G = %.3g at %.4g degC: at the edge of runaway (G = 1)",
		         g, tj);
		break;
	case SHAPE_UNDEFINED:
		break;
	}
}
