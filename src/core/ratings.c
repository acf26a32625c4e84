/*
 * ratings.c - power at an operating point against the parts' ratings.
 */
#include "ratings.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

/* Standard resistor power ratings in watts (common practice). */
static const double ratings_table[] = {
	0.0625, 0.1, 0.125, 0.25, 0.5, 1.0, 2.0, 3.0, 5.0, 10.0, 25.0, 50.0, 100.0,
};

/* Verdict names. */
const char *ratings_verdict_name(enum ratings_verdict v)
{
	switch (v) {
	case RATINGS_NO_RATING:
		return "no rating";
	case RATINGS_WITHIN:
		return "within rating";
	case RATINGS_CAUTION:
		return "caution";
	case RATINGS_OVER:
		return "over rating";
	}
	return "?";
}

/* The verdict of VALUE against RATING, with a caution above CAUTION_AT. */
enum ratings_verdict ratings_compare(double value, double rating,
                                     double caution_at)
{
	if (isnan(rating))
		return RATINGS_NO_RATING;
	if (!(value <= rating))
		return RATINGS_OVER;
	if (!isnan(caution_at) && value > caution_at)
		return RATINGS_CAUTION;
	return RATINGS_WITHIN;
}

/* Fill R with "nothing given". */
void ratings_init(struct ratings *r)
{
	r->device_max_power = NAN;
	r->device_max_current = NAN;
	r->resistor_power = NAN;
	r->ambient_temperature = NAN;
}

/* Resistor derating factor at TEMP_C. */
double ratings_derating(double temp_c)
{
	if (isnan(temp_c) || temp_c <= RATINGS_FULL_LOAD_TEMP)
		return 1.0;
	if (temp_c >= RATINGS_ZERO_LOAD_TEMP)
		return 0.0;
	return (RATINGS_ZERO_LOAD_TEMP - temp_c) /
	       (RATINGS_ZERO_LOAD_TEMP - RATINGS_FULL_LOAD_TEMP);
}

/* Smallest standard rating >= P. */
double ratings_standard_power(double p)
{
	if (!isfinite(p))
		return NAN;
	for (size_t k = 0; k < sizeof ratings_table / sizeof ratings_table[0]; k++)
		if (ratings_table[k] >= p)
			return ratings_table[k];
	return NAN;
}

/* Power and rating check at (V, I). */
void ratings_check(const struct problem *pb, enum source_form form, double v,
                   double i, const struct ratings *r,
                   struct ratings_report *out)
{
	const struct source *s = &pb->src;
	memset(out, 0, sizeof *out);
	out->p_device = device_dissipation(&pb->dev, s, v, i);
	if (form == SOURCE_NORTON) {
		/* Current source IS with RP across it: RP carries V / RP. */
		out->p_resistor = isinf(s->r) || s->r == 0.0 ? 0.0 : v * v / s->r;
		out->p_source = isinf(s->isc) ? v * i : s->isc * v;
	} else {
		/* Voltage source VS with RS in series: RS carries I. */
		out->p_resistor = isinf(s->r) ? 0.0 : i * i * s->r;
		out->p_source = isinf(s->r) ? s->isc * v : s->voc * i;
	}
	double amb = r != NULL ? r->ambient_temperature : NAN;
	out->derating = ratings_derating(amb);
	out->device_power_use = NAN;
	out->device_current_use = NAN;
	out->resistor_use = NAN;
	if (r != NULL && isfinite(r->device_max_power)) {
		out->device_power_use = fabs(out->p_device) / r->device_max_power;
		if (out->device_power_use > 1.0)
			out->flags |= RATINGS_DEVICE_POWER;
	}
	if (r != NULL && isfinite(r->device_max_current)) {
		out->device_current_use = fabs(i) / r->device_max_current;
		if (out->device_current_use > 1.0)
			out->flags |= RATINGS_DEVICE_CURRENT;
	}
	if (out->derating <= 0.0)
		out->flags |= RATINGS_NO_RESISTOR;
	if (r != NULL && isfinite(r->resistor_power) && out->p_resistor > 0.0) {
		double avail = r->resistor_power * out->derating;
		out->resistor_use = avail > 0.0 ? out->p_resistor / avail : INFINITY;
		if (out->resistor_use > 1.0)
			out->flags |= RATINGS_RESISTOR_POWER;
		else if (out->resistor_use > RATINGS_USE_FRACTION)
			out->flags |= RATINGS_RESISTOR_USE;
	}
	out->suggested_resistor_power =
		out->derating > 0.0
			? ratings_standard_power(out->p_resistor /
			                         (RATINGS_USE_FRACTION * out->derating))
			: NAN;
}
