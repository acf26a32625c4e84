/*
 * verdict.c - power, ratings and target at one operating point, in the
 * words every front end prints (see verdict.h).
 */
#include "verdict.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "network.h"
#include "thermal.h"

/* VALUE of KIND for a sentence ("34.5 mW"). */
static const char *verdict_fmt(char *buf, size_t n, double value,
                               enum qty_kind kind)
{
	return qty_format_short(buf, n, value, kind, 4, 1);
}

/* A percentage for a sentence: "14", "105", "0.31". */
static const char *verdict_pct(char *buf, size_t n, double frac)
{
	snprintf(buf, n, "%.3g", 100.0 * frac + 0.0);
	return buf;
}

/* Start a line of OUT; returns it, or NULL when OUT is full. */
static struct verdict_line *verdict_add(struct verdict *out,
                                        enum verdict_part part,
                                        const char *name, enum qty_kind unit,
                                        double value)
{
	if (out->nlines >= VERDICT_MAX_LINES)
		return NULL;
	struct verdict_line *l = &out->lines[out->nlines++];
	memset(l, 0, sizeof *l);
	l->part = part;
	snprintf(l->name, sizeof l->name, "%s", name);
	l->unit = unit;
	l->value = value;
	l->rating = l->use = l->margin = l->suggested = NAN;
	l->verdict = RATINGS_NO_RATING;
	return l;
}

/* Hold L to RATING (NaN: none) with a caution above CAUTION_AT. */
static void verdict_hold(struct verdict *out, struct verdict_line *l,
                         double rating, double caution_at)
{
	l->rating = rating;
	if (!isnan(rating)) {
		l->use = rating > 0.0 ? l->value / rating : INFINITY;
		l->margin = 1.0 - l->use;
	}
	l->verdict = ratings_compare(l->value, rating, caution_at);
	if (l->verdict > out->worst)
		out->worst = l->verdict;
}

/* The device's power and current lines (WORST: " at worst" or ""). */
static void verdict_device(struct verdict *out, double p, double i,
                           const struct ratings *r, const char *worst)
{
	char a[48], b[48], c[16];
	struct verdict_line *l;
	if (!isnan(p) && (l = verdict_add(out, VERDICT_DEVICE_POWER, "device",
	                                  QTY_POWER, fabs(p))) != NULL) {
		verdict_hold(out, l, r != NULL ? r->device_max_power : NAN, NAN);
		verdict_fmt(a, sizeof a, l->value, QTY_POWER);
		if (l->verdict == RATINGS_NO_RATING)
			snprintf(l->words, sizeof l->words, "device dissipates %s%s", a,
			         worst);
		else if (l->verdict == RATINGS_OVER)
			snprintf(l->words, sizeof l->words, "device dissipates %s%s, "
			         "above its %s maximum: over rating", a, worst,
			         verdict_fmt(b, sizeof b, l->rating, QTY_POWER));
		else
			snprintf(l->words, sizeof l->words, "device dissipates %s%s, "
			         "%s %% of its %s maximum: within rating", a, worst,
			         verdict_pct(c, sizeof c, l->use),
			         verdict_fmt(b, sizeof b, l->rating, QTY_POWER));
	}
	if (r == NULL || isnan(r->device_max_current) || isnan(i))
		return;
	if ((l = verdict_add(out, VERDICT_DEVICE_CURRENT, "device current",
	                     QTY_CURRENT, fabs(i))) == NULL)
		return;
	verdict_hold(out, l, r->device_max_current, NAN);
	verdict_fmt(a, sizeof a, l->value, QTY_CURRENT);
	verdict_fmt(b, sizeof b, l->rating, QTY_CURRENT);
	if (l->verdict == RATINGS_OVER)
		snprintf(l->words, sizeof l->words, "device carries %s%s, above its "
		         "%s maximum: over rating", a, worst, b);
	else
		snprintf(l->words, sizeof l->words, "device carries %s%s, %s %% of "
		         "its %s maximum: within rating", a, worst,
		         verdict_pct(c, sizeof c, l->use), b);
}

/*
 * The junction of PB at (V, I) against its maximum junction temperature:
 * always for a part that heats itself, else only when the given
 * temperature is above the maximum.
 */
static void verdict_junction(struct verdict *out, const struct problem *pb,
                             double v, double i)
{
	struct thermal_keys k;
	if (!thermal_keys_of(pb->dev.type, &k))
		return;
	const double *p = pb->dev.p;
	bool heated = thermal_active(&pb->dev);
	double tj = thermal_point_temperature(pb, v, i), tjmax = p[k.tjmax];
	if (!heated && !(tj > tjmax))
		return;
	struct verdict_line *l = verdict_add(out, VERDICT_JUNCTION, "junction",
	                                     QTY_TEMPERATURE, tj);
	if (l == NULL)
		return;
	l->rating = tjmax;
	l->verdict = ratings_compare(tj, tjmax, NAN);
	if (heated && tjmax > p[k.tamb]) {
		l->use = (tj - p[k.tamb]) / (tjmax - p[k.tamb]);
		l->margin = 1.0 - l->use;
	}
	if (l->verdict > out->worst)
		out->worst = l->verdict;
	char a[48], b[48], c[48];
	verdict_fmt(a, sizeof a, tj, QTY_TEMPERATURE);
	verdict_fmt(b, sizeof b, tjmax, QTY_TEMPERATURE);
	snprintf(c, sizeof c, "%.3g K", fabs(tjmax - tj));
	if (l->verdict == RATINGS_OVER)
		snprintf(l->words, sizeof l->words, "junction at %s, %s above its %s "
		         "maximum: over rating", a, c, b);
	else
		snprintf(l->words, sizeof l->words, "junction at %s, %s below its %s "
		         "maximum: within rating", a, c, b);
}

/* A resistor NAME dissipating P, held to R's resistor rating. */
static void verdict_resistor(struct verdict *out, const char *name, double p,
                             const struct ratings *r, const char *worst)
{
	struct verdict_line *l = verdict_add(out, VERDICT_RESISTOR, name,
	                                     QTY_POWER, fabs(p));
	if (l == NULL)
		return;
	double der = out->derating;
	double given = r != NULL ? r->resistor_power : NAN;
	double avail = isnan(given) ? NAN : given * der;
	verdict_hold(out, l, avail, RATINGS_USE_FRACTION * avail);
	l->suggested = der > 0.0 ? ratings_standard_power(
	                                   l->value / (RATINGS_USE_FRACTION * der))
	                         : NAN;
	char a[48], b[48], s[48], c[16], fits[96] = "";
	verdict_fmt(a, sizeof a, l->value, QTY_POWER);
	if (!isnan(l->suggested))
		snprintf(fits, sizeof fits, "a %s part fits",
		         verdict_fmt(s, sizeof s, l->suggested, QTY_POWER));
	else
		snprintf(fits, sizeof fits, "no standard rating up to 100 W fits");
	const char *amb = der < 1.0 ? " at this ambient" : "";
	if (der <= 0.0) {
		/* No resistor can carry any power at this ambient. */
		if (l->value > 0.0) {
			l->verdict = RATINGS_OVER;
			out->worst = RATINGS_OVER;
		}
		snprintf(l->words, sizeof l->words,
		         "%s dissipates %s%s; at %.4g degC ambient a film resistor "
		         "has no power rating left (derated to zero at %.4g degC, "
		         "common practice)%s", name, a, worst,
		         r != NULL ? r->ambient_temperature : NAN,
		         RATINGS_ZERO_LOAD_TEMP,
		         l->verdict == RATINGS_OVER ? ": over rating" : "");
		return;
	}
	verdict_fmt(b, sizeof b, l->rating, QTY_POWER);
	switch (l->verdict) {
	case RATINGS_NO_RATING:
		snprintf(l->words, sizeof l->words, "%s dissipates %s%s; %s (at most "
		         "%.0f %% of the rating%s: common practice)", name, a, worst,
		         fits, 100.0 * RATINGS_USE_FRACTION,
		         der < 1.0 ? ", derated for the ambient" : "");
		break;
	case RATINGS_WITHIN:
		snprintf(l->words, sizeof l->words, "%s dissipates %s%s, %s %% of its "
		         "%s rating%s: within rating", name, a, worst,
		         verdict_pct(c, sizeof c, l->use), b, amb);
		break;
	case RATINGS_CAUTION:
		snprintf(l->words, sizeof l->words, "%s dissipates %s%s, %s %% of its "
		         "%s rating%s: caution (common practice keeps it at or below "
		         "%.0f %%; %s)", name, a, worst,
		         verdict_pct(c, sizeof c, l->use), b, amb,
		         100.0 * RATINGS_USE_FRACTION, fits);
		break;
	case RATINGS_OVER:
		snprintf(l->words, sizeof l->words, "%s dissipates %s%s, %s %% of its "
		         "%s rating%s: over rating (%s)", name, a, worst,
		         verdict_pct(c, sizeof c, l->use), b, amb, fits);
		break;
	}
}

/* A source NAME delivering P (negative: absorbing). */
static void verdict_source(struct verdict *out, const char *name, double p)
{
	struct verdict_line *l = verdict_add(out, VERDICT_SOURCE, name,
	                                     QTY_POWER, p);
	if (l == NULL)
		return;
	char a[48];
	snprintf(l->words, sizeof l->words, "%s %s %s", name,
	         p < 0.0 ? "absorbs" : "delivers",
	         verdict_fmt(a, sizeof a, fabs(p), QTY_POWER));
}

/* The target line. */
void verdict_target(const struct problem *pb,
                    const struct design_request *target, double achieved,
                    struct verdict_target *out)
{
	memset(out, 0, sizeof *out);
	out->value = out->achieved = out->error_percent = NAN;
	if (target == NULL || !isfinite(target->value))
		return;
	enum qty_kind u = pb != NULL ? design_request_unit(pb, target)
	                             : design_target_unit(target->target);
	out->given = true;
	out->kind = target->target;
	out->value = target->value;
	out->achieved = achieved;
	/* As design.c: above zero when the point is further from zero. */
	out->error_percent = target->value != 0.0
	                         ? 100.0 * (achieved - target->value) /
	                               target->value
	                         : NAN;
	char a[48], b[48];
	verdict_fmt(a, sizeof a, target->value, u);
	verdict_fmt(b, sizeof b, achieved, u);
	if (isfinite(out->error_percent))
		snprintf(out->words, sizeof out->words, "target %s %s; the point has "
		         "%s: error %+.3g %%", design_request_name(target), a, b,
		         out->error_percent + 0.0);
	else
		snprintf(out->words, sizeof out->words, "target %s %s; the point has "
		         "%s", design_request_name(target), a, b);
}

/* Start OUT for ratings R. */
static void verdict_start(struct verdict *out, const struct ratings *r)
{
	memset(out, 0, sizeof *out);
	out->worst = RATINGS_NO_RATING;
	out->derating = ratings_derating(r != NULL ? r->ambient_temperature : NAN);
	verdict_target(NULL, NULL, NAN, &out->target);
}

/* A network's parts at (V, I), with PB's changed part values. */
static void verdict_network(const struct problem *pb, double v, double i,
                            const struct ratings *r, struct verdict *out)
{
	struct network *net = network_copy(pb->net);
	size_t nn = network_node_count(pb->net), np = network_part_count(pb->net);
	double *nv = malloc((nn ? nn : 1) * sizeof *nv);
	struct network_part_state *ps = malloc((np ? np : 1) * sizeof *ps);
	size_t pos, neg;
	struct network_diag d;
	if (net == NULL || nv == NULL || ps == NULL) {
		snprintf(out->message, sizeof out->message, "out of memory");
		goto done;
	}
	for (size_t k = 0; k < pb->net_nset; k++)
		network_set_value(net, pb->net_part[k], pb->net_value[k]);
	if (network_terminals(net, &pos, &neg) != 0 ||
	    network_solve_at(net, v, i, neg, nv, ps, &d) != NETWORK_OK) {
		snprintf(out->message, sizeof out->message,
		         "the network's parts cannot be solved at this point");
		goto done;
	}
	for (size_t k = 0; k < np; k++) {
		const struct network_part *p = network_part(net, k);
		if (p->kind == NETWORK_RESISTOR)
			verdict_resistor(out, p->name, ps[k].power, r, "");
		else
			verdict_source(out, p->name, -ps[k].power);
	}
done:
	network_destroy(net);
	free(nv);
	free(ps);
}

/* The verdict at (V, I). */
void verdict_at(const struct problem *pb, enum source_form form, double v,
                double i, const struct ratings *r,
                const struct design_request *target, struct verdict *out)
{
	verdict_start(out, r);
	verdict_device(out, device_dissipation(&pb->dev, &pb->src, v, i), i, r,
	               "");
	verdict_junction(out, pb, v, i);
	if (pb->net != NULL) {
		verdict_network(pb, v, i, r, out);
	} else {
		struct ratings_report rep;
		ratings_check(pb, form, v, i, NULL, &rep);
		const struct source *s = &pb->src;
		bool norton = form == SOURCE_NORTON;
		/* An ideal source (r = 0 or r = inf) has no resistor to rate. */
		if (!isinf(s->r) && s->r > 0.0)
			verdict_resistor(out, norton ? "RP" : "RS", rep.p_resistor, r,
			                 "");
		verdict_source(out, "source", rep.p_source);
	}
	if (target != NULL) {
		double got = target->target == DESIGN_CURRENT   ? i
		             : target->target == DESIGN_VOLTAGE ? v
		             : target->target == DESIGN_POWER   ? v * i
		                                                : NAN;
		if (target->target == DESIGN_RESULT &&
		    design_result_value(pb, target->result, v, i, &got) != 0)
			got = NAN;
		verdict_target(pb, target, got, &out->target);
	}
}

/* The verdict of the worst case. */
void verdict_worst(double p_device, double i_device, double p_resistor,
                   const char *resistor, const struct ratings *r,
                   struct verdict *out)
{
	verdict_start(out, r);
	verdict_device(out, p_device, i_device, r, " at worst");
	if (!isnan(p_resistor))
		verdict_resistor(out, resistor, p_resistor, r, " at worst");
}
