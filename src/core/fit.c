/*
 * fit.c - the fitting engine (see fit.h): checks the points, chooses the
 * free parameters, starts from the model's closed forms, runs MINPACK's
 * lmder (Moré 1978) and reports the fit with its standard errors.
 *
 * Scaling and bounds.  Each free parameter p is fitted through an
 * internal variable z of order one that starts at 1: a parameter that must
 * stay positive (every one whose table range starts at 0) as
 * p = p0 exp(z - 1), so the fit works in its log (ln Is, not Is) and can
 * never cross zero; any other as p = p0 + |p0| (z - 1) (|p0| = 1 when the
 * start is 0).  MINPACK then
 * scales z by its column norms as usual (mode 1).  A step that leaves a
 * parameter's valid range, or a set the model's validator refuses, makes
 * every residual huge, so the trust region shrinks back (the bound on an
 * upper limit is honoured that way).
 *
 * Uncertainty.  At the solution the Jacobian J of the weighted residuals
 * in z is formed again, its columns scaled to unit length and factored
 * by QR with column pivoting (MINPACK's qrfac); the rank test is on that
 * factor's diagonal.  The covariance of z is s^2 (J'J)^-1 (MINPACK's
 * covar) with s^2 = sum r^2 / (N - p), carried to the parameters by the
 * derivative of the transform (first order), and the correlations are
 * those of z (each transform is increasing).
 */
#include <math.h>
#include <stdarg.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cminpack.h>

#include "fit.h"
#include "fit_models.h"

#define ZERO_C 273.15

/* The residual given for a parameter set the model refuses. */
#define FIT_HUGE 1e10

/* Rank tests on the unit-column Jacobian: a column shorter than this
 * fraction of the longest has no effect; a QR diagonal below this is
 * dependent on the others. */
#define FIT_NO_EFFECT 1e-10
#define FIT_DEPENDENT 1e-8

/* The state of one fit. */
struct fit_engine {
	const struct fit_spec *spec;
	struct fit_ctx c;
	enum fit_weight weight;
	model_values p;             /* the current full parameter set */
	size_t nfree;
	int idx[FIT_MAX_FREE];
	bool logt[FIT_MAX_FREE];    /* fitted in its log */
	double p0[FIT_MAX_FREE];    /* start value: z = 1 */
	double sc[FIT_MAX_FREE];    /* scale of a linear one: |p0|, or 1 */
	double dy[MODEL_MAX_PARAMS];
	unsigned nfev, njev;
	bool eval_failed;
};

/* The names of the models that can be fitted. */
void fit_model_list(char *buf, size_t n)
{
	size_t o = 0;
	buf[0] = '\0';
	for (size_t k = 0; fit_specs[k] != NULL && o < n; k++)
		o += (size_t)snprintf(buf + o, n - o, "%s%s", k ? ", " : "",
		                      fit_specs[k]->type->name);
}

/* True when TYPE can be fitted. */
bool fit_model_supported(const struct model_type *type)
{
	return fit_spec_find(type) != NULL;
}

/* The axes of TYPE. */
enum fit_axes fit_model_axes(const struct model_type *type)
{
	const struct fit_spec *s = fit_spec_find(type);
	return s != NULL ? s->axes : FIT_AXES_VI;
}

/* The model's y at one point (see fit.h). */
double fit_model_value(const struct model_type *type, const double *p,
                       double x, double t)
{
	const struct fit_spec *s = fit_spec_find(type);
	if (s == NULL)
		return NAN;
	size_t zero = 0;
	struct fit_ctx c = { .type = type, .n = 1, .x = &x, .y = &x,
	                     .t = isfinite(t) ? &t : NULL, .order = &zero };
	double y;
	return s->eval(s, &c, p, 0, &y, NULL) == 0 ? y : NAN;
}

/* The residuals of a parameter set at the points (see fit.h). */
double fit_evaluate(const struct model_type *type, const double *p,
                    enum fit_weight w, size_t n, const double *x,
                    const double *y, const double *t, struct fit_point *out)
{
	if (fit_spec_find(type) == NULL)
		return NAN;
	double s = 0.0;
	for (size_t k = 0; k < n; k++) {
		struct fit_point *fp = &out[k];
		fp->x = x[k];
		fp->y = y[k];
		fp->t = t != NULL ? t[k] : NAN;
		fp->fitted = fit_model_value(type, p, x[k], fp->t);
		fp->resid_abs = fp->fitted - y[k];
		fp->resid_rel = fp->fitted / y[k] - 1.0;
		double r = w == FIT_WEIGHT_ABSOLUTE ? fp->resid_abs
		           : fp->fitted / y[k] > 0.0 ? log(fp->fitted / y[k]) : NAN;
		s += r * r;
	}
	return n > 0 ? sqrt(s / (double)n) : NAN;
}

/* Free what RES owns. */
void fit_result_fini(struct fit_result *res)
{
	free(res->points);
	res->points = NULL;
}

/* Set RES's status and message. */
static enum fit_status fit_fail(struct fit_result *res, enum fit_status st,
                                const char *fmt, ...)
	__attribute__((format(printf, 3, 4)));
static enum fit_status fit_fail(struct fit_result *res, enum fit_status st,
                                const char *fmt, ...)
{
	va_list ap;
	va_start(ap, fmt);
	vsnprintf(res->message, sizeof res->message, fmt, ap);
	va_end(ap);
	res->status = st;
	return st;
}

/* Format X of KIND for a message ("650 mV"). */
static const char *fit_fmt(char *buf, size_t n, double x, enum qty_kind kind)
{
	return qty_format_short(buf, n, x, kind, 6, 1);
}

/* The key of parameter I. */
static const char *fit_key(const struct fit_engine *e, int i)
{
	return e->c.type->params[i].key;
}

/* The kinds of x and y. */
static enum qty_kind fit_xkind(const struct fit_spec *s)
{
	return s->axes == FIT_AXES_TR ? QTY_TEMPERATURE : QTY_VOLTAGE;
}
static enum qty_kind fit_ykind(const struct fit_spec *s)
{
	return s->axes == FIT_AXES_TR ? QTY_RESISTANCE : QTY_CURRENT;
}

/* Letters of x and y for messages. */
static const char *fit_xname(const struct fit_spec *s)
{
	return s->axes == FIT_AXES_TR ? "T" : "V";
}
static const char *fit_yname(const struct fit_spec *s)
{
	return s->axes == FIT_AXES_TR ? "R" : "I";
}

/* A point's sort key: temperature (NaN when none), then x, then row. */
struct fit_key {
	double t, x;
	size_t k;
};

/* qsort order of fit_key. */
static int fit_key_cmp(const void *a, const void *b)
{
	const struct fit_key *p = a, *q = b;
	if (isfinite(p->t) && p->t != q->t)
		return p->t < q->t ? -1 : 1;
	if (p->x != q->x)
		return p->x < q->x ? -1 : 1;
	return p->k < q->k ? -1 : (p->k > q->k);
}

/* Sort the points of C by (temperature, x) into C->order; 0 or -1. */
static int fit_sort(struct fit_ctx *c)
{
	struct fit_key *keys = malloc(c->n * sizeof *keys);
	if (keys == NULL)
		return -1;
	for (size_t k = 0; k < c->n; k++)
		keys[k] = (struct fit_key){ fit_ctx_temp(c, k), c->x[k], k };
	qsort(keys, c->n, sizeof *keys, fit_key_cmp);
	for (size_t k = 0; k < c->n; k++)
		c->order[k] = keys[k].k;
	free(keys);
	return 0;
}

/*
 * Check the points and sort them into temperature groups: finite values,
 * the signs the weighting needs, no two points of a group at one x, and
 * y strictly monotone in x within each group.
 */
static enum fit_status fit_check_points(struct fit_engine *e,
                                        const struct fit_request *rq,
                                        struct fit_result *res)
{
	const struct fit_spec *s = e->spec;
	struct fit_ctx *c = &e->c;
	char a[48], b[48], d[48], f[48];
	for (size_t k = 0; k < c->n; k++) {
		double t = fit_ctx_temp(c, k);
		res->bad_point = k;
		if (!isfinite(c->x[k]) || !isfinite(c->y[k]) ||
		    (c->t != NULL && !isfinite(t)))
			return fit_fail(res, FIT_BAD_POINTS, "row %zu: a value is not a "
			                "finite number", k + 1);
		if (c->t != NULL && !(t > -ZERO_C))
			return fit_fail(res, FIT_BAD_POINTS, "row %zu: T = %s is at or "
			                "below absolute zero", k + 1,
			                fit_fmt(a, sizeof a, t, QTY_TEMPERATURE));
		if (s->axes == FIT_AXES_TR) {
			if (!(c->x[k] > -ZERO_C))
				return fit_fail(res, FIT_BAD_POINTS, "row %zu: T = %s is at "
				                "or below absolute zero", k + 1,
				                fit_fmt(a, sizeof a, c->x[k], QTY_TEMPERATURE));
			if (!(c->y[k] > 0.0))
				return fit_fail(res, FIT_BAD_POINTS, "row %zu: R = %s, "
				                "expected a resistance above 0", k + 1,
				                fit_fmt(a, sizeof a, c->y[k], QTY_RESISTANCE));
		} else if (rq->weight == FIT_WEIGHT_RELATIVE &&
		           !(c->x[k] * c->y[k] > 0.0)) {
			return fit_fail(res, FIT_BAD_POINTS,
			                "row %zu: V = %s and I = %s: relative weighting "
			                "takes ln I, which needs a current of the sign "
			                "of the voltage (the curve passes through 0 and "
			                "rises); drop the row or weight absolutely",
			                k + 1, fit_fmt(a, sizeof a, c->x[k], QTY_VOLTAGE),
			                fit_fmt(b, sizeof b, c->y[k], QTY_CURRENT));
		}
	}
	res->bad_point = SIZE_MAX;
	if (fit_sort(c) != 0)
		return fit_fail(res, FIT_NO_MEMORY, "out of memory");
	c->ngroups = 0;
	for (size_t j = 0; j < c->n; j++) {
		size_t k = c->order[j];
		double t = fit_ctx_temp(c, k);
		if (j == 0 || (c->t != NULL && t != fit_ctx_temp(c, c->order[j - 1]))) {
			c->gstart[c->ngroups] = j;
			c->gtemp[c->ngroups] = t;
			c->ngroups++;
			continue;
		}
		size_t h = c->order[j - 1];
		const char *tn = "";
		char tt[64] = "";
		if (c->t != NULL) {
			snprintf(tt, sizeof tt, " at %s",
			         fit_fmt(f, sizeof f, t, QTY_TEMPERATURE));
			tn = tt;
		}
		res->bad_point = h < k ? h : k;
		res->bad_point2 = h < k ? k : h;
		if (c->x[k] == c->x[h])
			return fit_fail(res, FIT_BAD_POINTS, "rows %zu and %zu share "
			                "%s = %s%s: the %s model gives one %s there; keep "
			                "one of them (or their mean)", res->bad_point + 1,
			                res->bad_point2 + 1, fit_xname(s),
			                fit_fmt(a, sizeof a, c->x[k], fit_xkind(s)), tn,
			                c->type->name, fit_yname(s));
		if ((s->slope > 0 && !(c->y[k] > c->y[h])) ||
		    (s->slope < 0 && !(c->y[k] < c->y[h])))
			return fit_fail(res, FIT_BAD_POINTS, "rows %zu and %zu: %s goes "
			                "from %s to %s as %s rises from %s to %s%s, but "
			                "the %s model's %s %s strictly with %s; check "
			                "those rows", h + 1, k + 1, fit_yname(s),
			                fit_fmt(a, sizeof a, c->y[h], fit_ykind(s)),
			                fit_fmt(b, sizeof b, c->y[k], fit_ykind(s)),
			                fit_xname(s),
			                fit_fmt(d, sizeof d, c->x[h], fit_xkind(s)),
			                fit_fmt(f, sizeof f, c->x[k], fit_xkind(s)), tn,
			                c->type->name,
			                s->axes == FIT_AXES_TR ? "resistance" : "current",
			                s->slope > 0 ? "rises" : "falls",
			                s->axes == FIT_AXES_TR ? "temperature" : "voltage");
	}
	c->gstart[c->ngroups] = c->n;
	res->bad_point = res->bad_point2 = SIZE_MAX;
	return FIT_OK;
}

/* Put parameter set Z (internal variables) into E->p. */
static void fit_unpack(struct fit_engine *e, const double *z)
{
	for (size_t j = 0; j < e->nfree; j++)
		e->p[e->idx[j]] = e->logt[j]
		                  ? e->p0[j] * exp(z[j] - 1.0)
		                  : e->p0[j] + e->sc[j] * (z[j] - 1.0);
}

/* dp/dz of free parameter J at the current set. */
static double fit_dpdz(const struct fit_engine *e, size_t j)
{
	return e->logt[j] ? e->p[e->idx[j]] : e->sc[j];
}

/* True when the current set is inside every range and the model's
 * validator (run when no held parameter is missing) accepts it. */
static bool fit_valid(const struct fit_engine *e, char *err, size_t n)
{
	const struct model_type *t = e->c.type;
	for (size_t j = 0; j < e->nfree; j++)
		if (model_param_check(&t->params[e->idx[j]], e->p[e->idx[j]], err,
		                      n) != 0)
			return false;
	for (size_t i = 0; i < t->nparams; i++)
		if (isnan(e->p[i]))
			return true;
	return t->validate == NULL || t->validate(e->p, err, n) == 0;
}

/* The weighted residual of point K with model value Y. */
static double fit_resid(const struct fit_engine *e, size_t k, double y)
{
	double yk = e->c.y[k];
	if (e->weight == FIT_WEIGHT_ABSOLUTE)
		return y - yk;
	double q = y / yk;
	return q > 0.0 ? log(q) : NAN;
}

/* MINPACK's callback: residuals (IFLAG 1) or the Jacobian (IFLAG 2). */
static int fit_fcn(void *ctx, int m, int n, const double *z, double *fvec,
                   double *fjac, int ldfjac, int iflag)
{
	struct fit_engine *e = ctx;
	(void)n;
	fit_unpack(e, z);
	char err[200];
	bool ok = fit_valid(e, err, sizeof err);
	if (iflag == 1) {
		e->nfev++;
		for (int k = 0; k < m; k++) {
			double y;
			double r = ok && e->spec->eval(e->spec, &e->c, e->p, (size_t)k, &y,
			                               NULL) == 0
			           ? fit_resid(e, (size_t)k, y) : NAN;
			fvec[k] = isfinite(r) ? r : FIT_HUGE;
		}
		return 0;
	}
	if (iflag != 2)
		return 0;
	e->njev++;
	if (!ok)
		goto failed;
	for (int k = 0; k < m; k++) {
		double y;
		if (e->spec->eval(e->spec, &e->c, e->p, (size_t)k, &y, e->dy) != 0)
			goto failed;
		double w = e->weight == FIT_WEIGHT_ABSOLUTE ? 1.0 : 1.0 / y;
		for (size_t j = 0; j < e->nfree; j++) {
			double v = e->dy[e->idx[j]] * w * fit_dpdz(e, j);
			if (!isfinite(v))
				goto failed;
			fjac[(size_t)k + j * (size_t)ldfjac] = v;
		}
	}
	return 0;
failed:
	e->eval_failed = true;
	return -1;
}

/* The rank of the M x N unit-column matrix A (column major; A is
 * overwritten with its QR factor, R's diagonal restored); IPVT gets
 * MINPACK's 1-based pivots. */
static size_t fit_rank(double *a, int m, int n, int *ipvt)
{
	double rdiag[FIT_MAX_FREE], acnorm[FIT_MAX_FREE], wa[FIT_MAX_FREE];
	qrfac(m, n, a, m, 1, ipvt, n, rdiag, acnorm, wa);
	size_t r = 0;
	for (int j = 0; j < n; j++) {
		a[j + (size_t)j * (size_t)m] = rdiag[j];
		if (fabs(rdiag[j]) > FIT_DEPENDENT)
			r++;
	}
	return r;
}

/*
 * Copy the columns of J (M rows) whose bit is set in MASK into OUT scaled
 * to unit length; returns how many, or SIZE_MAX when one of them has no
 * effect (length below FIT_NO_EFFECT of the longest) with its index in
 * *DEAD.
 */
static size_t fit_unit_columns(const double *j, int m, size_t nfree,
                               unsigned mask, double *out, double *norm,
                               size_t *dead)
{
	double longest = 0.0;
	for (size_t c = 0; c < nfree; c++) {
		double s = 0.0;
		for (int k = 0; k < m; k++)
			s += j[(size_t)k + c * (size_t)m] * j[(size_t)k + c * (size_t)m];
		norm[c] = sqrt(s);
		if (mask & (1u << c))
			longest = fmax(longest, norm[c]);
	}
	size_t nc = 0;
	for (size_t c = 0; c < nfree; c++) {
		if (!(mask & (1u << c)))
			continue;
		if (!(norm[c] > FIT_NO_EFFECT * longest)) {
			*dead = c;
			return SIZE_MAX;
		}
		for (int k = 0; k < m; k++)
			out[(size_t)k + nc * (size_t)m] =
				j[(size_t)k + c * (size_t)m] / norm[c];
		nc++;
	}
	return nc;
}

/* Say which parameter the points cannot determine and what to hold. */
static enum fit_status fit_undetermined(const struct fit_engine *e,
                                        const double *jac, int m,
                                        struct fit_result *res, size_t dead)
{
	double *w = malloc((size_t)m * e->nfree * sizeof *w);
	double norm[FIT_MAX_FREE];
	int ipvt[FIT_MAX_FREE];
	size_t culprit = dead;
	unsigned all = (1u << e->nfree) - 1u;
	if (w != NULL && dead == SIZE_MAX) {
		/* the least important parameter whose removal leaves the rest
		 * independent */
		for (size_t c = e->nfree; c-- > 0 && culprit == SIZE_MAX;) {
			size_t d2 = SIZE_MAX;
			size_t nc = fit_unit_columns(jac, m, e->nfree, all & ~(1u << c), w,
			                             norm, &d2);
			if (nc != SIZE_MAX && fit_rank(w, m, (int)nc, ipvt) == nc)
				culprit = c;
		}
	}
	free(w);
	if (culprit == SIZE_MAX)
		culprit = e->nfree - 1;
	int i = e->idx[culprit];
	const char *hint = NULL;
	for (size_t k = 0; k < FIT_MAX_FREE && e->spec->free[k] != NULL; k++)
		if (strcmp(e->spec->free[k], fit_key(e, i)) == 0)
			hint = e->spec->hint[k];
	if (e->spec->law_key != NULL && strcmp(e->spec->law_key, fit_key(e, i)) == 0)
		hint = e->spec->law_hint;
	char val[48];
	fit_fmt(val, sizeof val, e->p[i], e->c.type->params[i].kind);
	char hold[96];
	if (hint != NULL)
		snprintf(hold, sizeof hold, "%s=%s", fit_key(e, i), hint);
	else
		snprintf(hold, sizeof hold, "%s=VALUE", fit_key(e, i));
	if (dead != SIZE_MAX)
		return fit_fail(res, FIT_UNDETERMINED,
		                "the points do not determine %s: it has no effect on "
		                "them (the fit drove it to %s); hold it, e.g. %s",
		                fit_key(e, i), val, hold);
	return fit_fail(res, FIT_UNDETERMINED,
	                "the points do not determine %s apart from the other "
	                "parameters (its effect on them is the same as theirs); "
	                "hold it, e.g. %s, or add points where it matters",
	                fit_key(e, i), hold);
}

/* Index of KEY in the model, or -1. */
static int fit_index(const struct fit_engine *e, const char *key)
{
	return key != NULL ? model_param_index(e->c.type, key) : -1;
}

/*
 * Choose the free parameters: the spec's list less those the user holds
 * (an alternate key standing in), the temperature law's when the points
 * span temperatures.  Also sets the points' temperature and the law's
 * reference temperature.  Then refuses when there are too few points.
 */
static enum fit_status fit_choose(struct fit_engine *e,
                                  const struct fit_request *rq,
                                  struct fit_result *res)
{
	const struct fit_spec *s = e->spec;
	struct fit_ctx *c = &e->c;
	char a[48], b[48];
	bool forward = false, reverse = false;
	for (size_t k = 0; k < c->n; k++) {
		forward |= c->x[k] > 0.0 && c->y[k] > 0.0;
		reverse |= c->x[k] < 0.0 && c->y[k] < 0.0;
	}
	size_t ntemps = c->t != NULL ? c->ngroups : 0;
	res->ntemps = ntemps;
	int it = fit_index(e, s->temp_key);
	if (ntemps >= 1 && it < 0)
		return fit_fail(res, FIT_BAD_POINTS, "the %s model has no "
		                "temperature; drop the T column", c->type->name);
	if (ntemps >= 1 && rq->fixed[it])
		return fit_fail(res, FIT_BAD_POINTS, "%s is held and also given "
		                "for each point by the T column; drop one of the two",
		                s->temp_key);
	if (ntemps == 1) {
		e->p[it] = c->gtemp[0];
		res->held_by_fit[it] = true;
	}
	int il = fit_index(e, s->law_key), iref = fit_index(e, s->law_ref_key);
	if (ntemps >= 2 && il < 0)
		return fit_fail(res, FIT_BAD_POINTS,
		                "the points span %zu temperatures (%s to %s) but the "
		                "%s model has no temperature law; fit one temperature "
		                "at a time, or the diode model (its bandgap)", ntemps,
		                fit_fmt(a, sizeof a, c->gtemp[0], QTY_TEMPERATURE),
		                fit_fmt(b, sizeof b, c->gtemp[ntemps - 1],
		                        QTY_TEMPERATURE), c->type->name);
	if (ntemps >= 2 && !(e->p[iref] > -ZERO_C)) {
		/* the law's reference: the measured temperature nearest 25 degC */
		double best = c->gtemp[0];
		for (size_t g = 1; g < ntemps; g++)
			if (fabs(c->gtemp[g] - 25.0) < fabs(best - 25.0))
				best = c->gtemp[g];
		e->p[iref] = best;
		res->held_by_fit[iref] = true;
	}
	if (iref >= 0 && e->p[iref] > -ZERO_C && ntemps >= 1) {
		c->ref_group = 0;
		for (size_t g = 1; g < c->ngroups; g++)
			if (fabs(c->gtemp[g] - e->p[iref]) <
			    fabs(c->gtemp[c->ref_group] - e->p[iref]))
				c->ref_group = g;
	}
	e->nfree = 0;
	for (size_t k = 0; k < FIT_MAX_FREE && s->free[k] != NULL; k++) {
		int i = fit_index(e, s->free[k]);
		if (rq->fixed[i]) {
			int ia = fit_index(e, s->alt[k]);
			if (ia >= 0 && !rq->fixed[ia])
				e->idx[e->nfree++] = ia;
			continue;
		}
		if (s->need[k] == FIT_NEED_FORWARD && !forward)
			continue;
		if (s->need[k] == FIT_NEED_REVERSE && !reverse)
			return fit_fail(res, FIT_TOO_FEW,
			                "%s needs points in breakdown, where V < 0 and "
			                "I < 0 in the passive sign convention (5 mA of "
			                "reverse current is I = -5m); the %s points have "
			                "none", s->free[k], c->type->name);
		e->idx[e->nfree++] = i;
	}
	if (ntemps >= 2 && !rq->fixed[il])
		e->idx[e->nfree++] = il;
	res->nfree = e->nfree;
	memcpy(res->idx, e->idx, sizeof res->idx);
	if (e->nfree == 0)
		return fit_fail(res, FIT_TOO_FEW, "every parameter the %s model "
		                "fits is held: nothing left to fit", c->type->name);
	if (c->n < e->nfree) {
		char list[200] = "", hold[200] = "";
		size_t o = 0, h = 0, need = e->nfree - c->n;
		for (size_t j = 0; j < e->nfree; j++)
			o += (size_t)snprintf(list + o, sizeof list - o, "%s%s",
			                      j ? ", " : "", fit_key(e, e->idx[j]));
		/* suggest the least important ones, with their usual value */
		for (size_t j = e->nfree; j-- > 0 && need > 0;) {
			const char *hint = NULL;
			for (size_t k = 0; k < FIT_MAX_FREE && s->free[k] != NULL; k++)
				if (strcmp(s->free[k], fit_key(e, e->idx[j])) == 0)
					hint = s->hint[k];
			if (e->idx[j] == il)
				hint = s->law_hint;
			if (hint == NULL)
				continue;
			h += (size_t)snprintf(hold + h, sizeof hold - h, "%s%s=%s",
			                      h ? " and " : "", fit_key(e, e->idx[j]), hint);
			need--;
		}
		return fit_fail(res, FIT_TOO_FEW,
		                "%zu point%s for %zu free parameters (%s): hold %zu of "
		                "them%s%s, or add points", c->n, c->n == 1 ? "" : "s",
		                e->nfree, list, e->nfree - c->n,
		                h ? ", e.g. " : "", hold);
	}
	return FIT_OK;
}

/* Fill the per-point results, RMS and degrees of freedom of RES. */
static enum fit_status fit_points(struct fit_engine *e, struct fit_result *res,
                                  double *ssr)
{
	struct fit_ctx *c = &e->c;
	res->points = calloc(c->n, sizeof *res->points);
	if (res->points == NULL)
		return fit_fail(res, FIT_NO_MEMORY, "out of memory");
	double s = 0.0;
	for (size_t k = 0; k < c->n; k++) {
		struct fit_point *fp = &res->points[k];
		fp->x = c->x[k];
		fp->y = c->y[k];
		fp->t = fit_ctx_temp(c, k);
		double y = NAN;
		if (e->spec->eval(e->spec, c, e->p, k, &y, NULL) != 0)
			y = NAN;
		fp->fitted = y;
		fp->resid_abs = y - c->y[k];
		fp->resid_rel = y / c->y[k] - 1.0;
		double r = fit_resid(e, k, y);
		s += r * r;
	}
	*ssr = s;
	res->rms = sqrt(s / (double)c->n);
	return isfinite(s) ? FIT_OK
	                   : fit_fail(res, FIT_NO_CONVERGENCE, "the fitted model "
	                              "cannot be evaluated at every point");
}

/*
 * The standard errors and correlations from the Jacobian at the solution,
 * after the rank test.
 */
static enum fit_status fit_covariance(struct fit_engine *e, const double *z,
                                      double ssr, struct fit_result *res)
{
	int m = (int)e->c.n, n = (int)e->nfree;
	double *jac = malloc(2 * (size_t)m * (size_t)n * sizeof *jac);
	double *fv = malloc((size_t)m * sizeof *fv);
	if (jac == NULL || fv == NULL) {
		free(jac);
		free(fv);
		return fit_fail(res, FIT_NO_MEMORY, "out of memory");
	}
	double *unit = jac + (size_t)m * (size_t)n;
	enum fit_status st = FIT_OK;
	if (fit_fcn(e, m, n, z, fv, jac, m, 2) != 0) {
		st = fit_fail(res, FIT_NO_CONVERGENCE, "the model's derivatives cannot "
		              "be evaluated at the solution");
		goto out;
	}
	double norm[FIT_MAX_FREE];
	int ipvt[FIT_MAX_FREE];
	size_t dead = SIZE_MAX;
	size_t nc = fit_unit_columns(jac, m, e->nfree, (1u << n) - 1u, unit, norm,
	                             &dead);
	if (nc == SIZE_MAX || fit_rank(unit, m, n, ipvt) < (size_t)n) {
		st = fit_undetermined(e, jac, m, res, dead);
		goto out;
	}
	/* (J'J)^-1 of the unit columns in the upper triangle of UNIT */
	double wa[FIT_MAX_FREE];
	covar(n, unit, m, ipvt, FIT_DEPENDENT, wa);
	double s2 = res->dof > 0 ? ssr / res->dof : NAN;
	res->sigma = sqrt(s2);
	res->max_corr = 0.0;
	for (int i = 0; i < n; i++) {
		for (int j = 0; j < n; j++) {
			int lo = i < j ? i : j, hi = i < j ? j : i;
			double cij = unit[lo + (size_t)hi * (size_t)m];
			double cii = unit[i + (size_t)i * (size_t)m];
			double cjj = unit[j + (size_t)j * (size_t)m];
			res->corr[i][j] = cij / sqrt(cii * cjj);
			if (i != j)
				res->max_corr = fmax(res->max_corr, fabs(res->corr[i][j]));
		}
		double var_z = s2 * unit[i + (size_t)i * (size_t)m] /
		               (norm[i] * norm[i]);
		res->se[i] = fit_dpdz(e, (size_t)i) * sqrt(var_z);
	}
out:
	free(jac);
	free(fv);
	return st;
}

/* Fit (see fit.h). */
enum fit_status fit_run(const struct fit_request *rq, struct fit_result *res)
{
	memset(res, 0, sizeof *res);
	res->bad_point = res->bad_point2 = SIZE_MAX;
	res->type = rq->type;
	res->weight = rq->weight;
	res->n = rq->n;
	res->sigma = NAN;
	memcpy(res->p, rq->p, sizeof res->p);
	struct fit_engine e = { .spec = fit_spec_find(rq->type) };
	if (e.spec == NULL) {
		char list[160];
		fit_model_list(list, sizeof list);
		return fit_fail(res, FIT_UNSUPPORTED, "the %s model cannot be "
		                "fitted; models that can: %s",
		                rq->type != NULL ? rq->type->name : "(none)", list);
	}
	if (rq->n < 1 || rq->n > FIT_MAX_POINTS)
		return fit_fail(res, FIT_TOO_FEW, "%zu points, expected 1 to %d",
		                rq->n, FIT_MAX_POINTS);
	e.weight = rq->weight;
	memcpy(e.p, rq->p, sizeof e.p);
	e.c = (struct fit_ctx){ .type = rq->type, .n = rq->n, .x = rq->x,
	                        .y = rq->y,
	                        .t = e.spec->axes == FIT_AXES_VI ? rq->t : NULL };
	memcpy(e.c.fixed, rq->fixed, sizeof e.c.fixed);
	e.c.order = malloc(rq->n * sizeof *e.c.order);
	e.c.gstart = malloc((rq->n + 1) * sizeof *e.c.gstart);
	e.c.gtemp = malloc(rq->n * sizeof *e.c.gtemp);
	double *work = NULL;
	int *ipvt = NULL;
	enum fit_status st;
	if (e.c.order == NULL || e.c.gstart == NULL || e.c.gtemp == NULL) {
		st = fit_fail(res, FIT_NO_MEMORY, "out of memory");
		goto out;
	}
	st = fit_check_points(&e, rq, res);
	if (st == FIT_OK)
		st = fit_choose(&e, rq, res);
	if (st != FIT_OK)
		goto out;

	/* starting values: the model's closed forms for the free parameters */
	bool free_[MODEL_MAX_PARAMS] = { false };
	for (size_t j = 0; j < e.nfree; j++)
		free_[e.idx[j]] = true;
	model_values before;
	memcpy(before, e.p, sizeof before);
	if (e.spec->start(e.spec, &e.c, e.p, free_) != 0) {
		st = fit_fail(res, FIT_NO_START, "the points give no starting "
		              "estimate for the %s model; check that they are in "
		              "its sign convention and units", rq->type->name);
		goto out;
	}
	for (size_t i = 0; i < rq->type->nparams; i++)
		if (!free_[i] && isnan(before[i]) && isfinite(e.p[i]))
			res->held_by_fit[i] = true;
	for (size_t j = 0; j < e.nfree; j++) {
		int i = e.idx[j];
		e.p0[j] = e.p[i];
		e.logt[j] = rq->type->params[i].min >= 0.0;
		if (!isfinite(e.p0[j]) || (e.logt[j] && !(e.p0[j] > 0.0))) {
			st = fit_fail(res, FIT_NO_START, "the points give no starting "
			              "value for %s", rq->type->params[i].key);
			goto out;
		}
		e.sc[j] = e.p0[j] != 0.0 ? fabs(e.p0[j]) : 1.0;
	}

	int m = (int)rq->n, n = (int)e.nfree;
	size_t lw = (size_t)m * (size_t)n + 5u * (size_t)n + (size_t)m * 2u +
	            (size_t)n;
	work = calloc(lw, sizeof *work);
	ipvt = calloc((size_t)n, sizeof *ipvt);
	if (work == NULL || ipvt == NULL) {
		st = fit_fail(res, FIT_NO_MEMORY, "out of memory");
		goto out;
	}
	double *z = work, *fvec = z + n, *fjac = fvec + m, *diag = fjac + (size_t)m * n;
	double *qtf = diag + n, *wa1 = qtf + n, *wa2 = wa1 + n, *wa3 = wa2 + n;
	double *wa4 = wa3 + n;
	for (int j = 0; j < n; j++)
		z[j] = 1.0;
	fit_unpack(&e, z);
	char why[200];
	if (!fit_valid(&e, why, sizeof why)) {
		st = fit_fail(res, FIT_NO_START, "the starting estimate from the "
		              "points is not a valid %s: %s", rq->type->name, why);
		goto out;
	}
	fit_fcn(&e, m, n, z, fvec, NULL, m, 1);
	for (int k = 0; k < m; k++)
		if (fvec[k] == FIT_HUGE) {
			res->bad_point = (size_t)k;
			st = fit_fail(res, FIT_NO_START, "row %d: the starting estimate "
			              "cannot be evaluated there", k + 1);
			goto out;
		}
	int nfev = 0, njev = 0;
	/* Stop on the step (xtol), not on the relative fall of the sum of
	 * squares: near the minimum that falls as the square of the error,
	 * so ftol = 1e-14 would leave the parameters 1e-7 standard errors
	 * off.  xtol = 1e-12 puts z within about that of the minimum. */
	int info = lmder(fit_fcn, &e, m, n, z, fvec, fjac, m, 0.0, 1e-12, 0.0,
	                 400 * (n + 1), diag, 1, 100.0, 0, &nfev, &njev, ipvt, qtf,
	                 wa1, wa2, wa3, wa4);
	res->nfev = e.nfev;
	res->njev = e.njev;
	fit_unpack(&e, z);
	memcpy(res->p, e.p, sizeof res->p);
	if (e.eval_failed || info == 0 || info == 5 || info < 0) {
		st = fit_fail(res, FIT_NO_CONVERGENCE,
		              info == 5 ? "no convergence in %d evaluations; hold a "
		                          "parameter or check the points"
		                        : "the iteration stopped after %d evaluations: "
		                          "the model could not be evaluated on its way",
		              nfev);
		goto out;
	}
	res->dof = m - n;
	double ssr = NAN;
	st = fit_points(&e, res, &ssr);
	if (st == FIT_OK)
		st = fit_covariance(&e, z, ssr, res);
	if (st == FIT_OK && !fit_valid(&e, why, sizeof why))
		st = fit_fail(res, FIT_OUT_OF_RANGE, "the best fit is not a valid %s: "
		              "%s; hold a parameter at a valid value", rq->type->name,
		              why);
	if (st == FIT_OK)
		res->status = FIT_OK;
out:
	free(work);
	free(ipvt);
	free(e.c.order);
	free(e.c.gstart);
	free(e.c.gtemp);
	return st;
}
