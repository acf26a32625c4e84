/*
 * source.c - Thevenin and Norton sources reduced to one load-line form.
 */
#include "source.h"

#include <math.h>
#include <stdio.h>

/* Fill SPEC with a Thevenin source. */
void source_spec_thevenin(struct source_spec *spec, double vs, double rs)
{
	spec->form = SOURCE_THEVENIN;
	spec->vs = vs;
	spec->rs = rs;
	spec->is = 0.0;
	spec->rp = INFINITY;
}

/* Fill SPEC with a Norton source. */
void source_spec_norton(struct source_spec *spec, double is, double rp)
{
	spec->form = SOURCE_NORTON;
	spec->vs = 0.0;
	spec->rs = 0.0;
	spec->is = is;
	spec->rp = rp;
}

/* Check SPEC and reduce it to the internal form. */
int source_from_spec(const struct source_spec *spec, struct source *out,
                     char *err, size_t errlen)
{
	if (spec->form == SOURCE_THEVENIN) {
		if (!isfinite(spec->vs)) {
			snprintf(err, errlen, "vs: the source voltage must be a finite number");
			return -1;
		}
		if (!isfinite(spec->rs) || spec->rs < 0.0) {
			snprintf(err, errlen, "rs: the source resistance must be finite and >= 0");
			return -1;
		}
		out->form = SOURCE_THEVENIN;
		out->voc = spec->vs;
		out->r = spec->rs;
		out->isc = spec->rs > 0.0 ? spec->vs / spec->rs : NAN;
		return 0;
	}
	if (!isfinite(spec->is)) {
		snprintf(err, errlen, "is: the source current must be a finite number");
		return -1;
	}
	if (isnan(spec->rp) || spec->rp <= 0.0) {
		snprintf(err, errlen,
		         "rp: the parallel resistance must be > 0 (omit it for an ideal current source)");
		return -1;
	}
	out->form = SOURCE_NORTON;
	out->isc = spec->is;
	out->r = spec->rp;
	out->voc = isinf(spec->rp) ? NAN : spec->is * spec->rp;
	if (isinf(spec->rp))
		return 0;
	if (!isfinite(out->voc)) {
		snprintf(err, errlen, "is, rp: the open-circuit voltage is * rp overflows");
		return -1;
	}
	return 0;
}

/* True when the load line is vertical. */
bool source_is_ideal_voltage(const struct source *s)
{
	return s->r == 0.0;
}

/* True when the load line is horizontal. */
bool source_is_ideal_current(const struct source *s)
{
	return isinf(s->r);
}

/* Current on the load line at voltage V. */
double source_line_current(const struct source *s, double v)
{
	if (s->r == 0.0)
		return NAN;
	if (isinf(s->r))
		return s->isc;
	return (s->voc - v) / s->r;
}

/* Voltage on the load line at current I. */
double source_line_voltage(const struct source *s, double i)
{
	if (isinf(s->r))
		return NAN;
	return s->voc - s->r * i;
}

/* Signed distance of (V, I) from the load line. */
double source_line_residual(const struct source *s, double v, double i)
{
	if (isinf(s->r))
		return i - s->isc;
	return v + s->r * i - s->voc;
}
