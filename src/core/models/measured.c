/*
 * measured.c - a device drawn from measured (V, I) points, interpolated by
 * the monotone piecewise cubic of Fritsch & Carlson ("Monotone Piecewise
 * Cubic Interpolation", SIAM J. Numer. Anal. 17(2), 1980): cubic Hermite
 * segments whose node slopes are limited so that monotone data give a
 * monotone curve, with no overshoot between points.
 *
 * The points must rise strictly in both V and I (a passive monotone
 * device); anything else is refused with the row number.  Outside the
 * measured range the curve continues as a straight line with the end
 * slope (the stated extrapolation rule), and the secondary hook raises a
 * warning when the operating point lies there.
 *
 * The table does not fit in the parameter array, so it hangs off the
 * device (struct device.curve, see model.h); the model finds it from the
 * parameter pointer, which always points into a struct device.
 */
#include <math.h>
#include <stddef.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "models.h"

/* The curve of the device whose parameter array is P (NULL when none). */
static const struct curve_data *measured_curve(const double *p)
{
	const struct device *d =
		(const struct device *)(const void *)((const char *)p -
		                                      offsetof(struct device, p));
	return d->curve;
}

/* Fritsch-Carlson node slopes of C (n >= 2 points, all steps > 0). */
static void curve_slopes(struct curve_data *c)
{
	size_t n = c->n;
	double *d = c->slope;
	/* Secant slopes, then the initial node slopes: ends one-sided,
	 * interior the mean of the neighbouring secants (step 1 of the
	 * algorithm; all secants are positive here). */
	for (size_t k = 0; k + 1 < n; k++)
		c->delta[k] = (c->i[k + 1] - c->i[k]) / (c->v[k + 1] - c->v[k]);
	d[0] = c->delta[0];
	d[n - 1] = c->delta[n - 2];
	for (size_t k = 1; k + 1 < n; k++)
		d[k] = 0.5 * (c->delta[k - 1] + c->delta[k]);
	/* Step 3: keep (alpha, beta) of every segment inside the circle of
	 * radius 3, a sufficient condition for monotonicity. */
	for (size_t k = 0; k + 1 < n; k++) {
		double a = d[k] / c->delta[k], b = d[k + 1] / c->delta[k];
		double s = a * a + b * b;
		if (s > 9.0) {
			double tau = 3.0 / sqrt(s);
			d[k] = tau * a * c->delta[k];
			d[k + 1] = tau * b * c->delta[k];
		}
	}
}

/* Check and copy the points into C (see models.h). */
int curve_data_init(struct curve_data *c, const double *v, const double *i,
                    size_t n, char *err, size_t errlen)
{
	memset(c, 0, sizeof *c);
	if (n < 2) {
		snprintf(err, errlen, "points: at least 2 (V, I) points are needed, "
		         "found %zu", n);
		return -1;
	}
	if (n > CURVE_MAX_POINTS) {
		snprintf(err, errlen, "points: at most %d points, found %zu",
		         CURVE_MAX_POINTS, n);
		return -1;
	}
	for (size_t k = 0; k < n; k++) {
		if (!isfinite(v[k]) || !isfinite(i[k])) {
			snprintf(err, errlen, "points: row %zu: V and I must be finite "
			         "numbers", k + 1);
			return -1;
		}
		if (k > 0 && !(v[k] > v[k - 1])) {
			snprintf(err, errlen, "points: row %zu: V = %.6g is %s row %zu "
			         "(%.6g): voltages must rise strictly", k + 1, v[k],
			         v[k] == v[k - 1] ? "the same as" : "below", k, v[k - 1]);
			return -1;
		}
		if (k > 0 && !(i[k] > i[k - 1])) {
			snprintf(err, errlen, "points: row %zu: I = %.6g is %s row %zu "
			         "(%.6g): currents must rise strictly (a monotone device)",
			         k + 1, i[k], i[k] == i[k - 1] ? "the same as" : "below",
			         k, i[k - 1]);
			return -1;
		}
	}
	double *buf = malloc(4 * n * sizeof *buf);
	if (buf == NULL) {
		snprintf(err, errlen, "points: out of memory");
		return -1;
	}
	memcpy(buf, v, n * sizeof *buf);
	memcpy(buf + n, i, n * sizeof *buf);
	c->n = n;
	c->v = buf;
	c->i = buf + n;
	c->slope = buf + 2 * n;
	c->delta = buf + 3 * n;
	curve_slopes(c);
	return 0;
}

/* Free what C holds. */
void curve_data_fini(struct curve_data *c)
{
	free(c->v);
	memset(c, 0, sizeof *c);
}

/* Deep-copy SRC into DST; 0 or -1 (no memory). */
int curve_data_copy(struct curve_data *dst, const struct curve_data *src)
{
	char err[64];
	return curve_data_init(dst, src->v, src->i, src->n, err, sizeof err);
}

/* Index k of the segment [v_k, v_k+1] holding X (0 or n-2 at the ends). */
static size_t curve_segment(const double *xs, size_t n, double x)
{
	size_t lo = 0, hi = n - 1;
	while (hi - lo > 1) {
		size_t mid = lo + (hi - lo) / 2;
		if (xs[mid] <= x)
			lo = mid;
		else
			hi = mid;
	}
	return lo;
}

/* Interpolated current at V, and its slope into *G. */
static double curve_eval(const struct curve_data *c, double v, double *g)
{
	size_t n = c->n;
	if (v <= c->v[0]) {
		*g = c->slope[0];
		return c->i[0] + c->slope[0] * (v - c->v[0]);
	}
	if (v >= c->v[n - 1]) {
		*g = c->slope[n - 1];
		return c->i[n - 1] + c->slope[n - 1] * (v - c->v[n - 1]);
	}
	size_t k = curve_segment(c->v, n, v);
	double h = c->v[k + 1] - c->v[k];
	double t = (v - c->v[k]) / h, t2 = t * t, t3 = t2 * t;
	double y0 = c->i[k], y1 = c->i[k + 1];
	double m0 = h * c->slope[k], m1 = h * c->slope[k + 1];
	*g = ((6.0 * t2 - 6.0 * t) * (y0 - y1) + (3.0 * t2 - 4.0 * t + 1.0) * m0 +
	      (3.0 * t2 - 2.0 * t) * m1) / h;
	return (2.0 * t3 - 3.0 * t2 + 1.0) * y0 + (t3 - 2.0 * t2 + t) * m0 +
	       (-2.0 * t3 + 3.0 * t2) * y1 + (t3 - t2) * m1;
}

/* Current at V. */
static double measured_current(const double *p, double v)
{
	const struct curve_data *c = measured_curve(p);
	double g;
	return c != NULL ? curve_eval(c, v, &g) : NAN;
}

/* dI/dV at V. */
static double measured_conductance(const double *p, double v)
{
	const struct curve_data *c = measured_curve(p);
	double g = NAN;
	if (c != NULL)
		curve_eval(c, v, &g);
	return g;
}

/* Voltage at I: the inverse, segment by segment. */
static int measured_voltage(const double *p, double i, double *v)
{
	const struct curve_data *c = measured_curve(p);
	if (c == NULL || !isfinite(i))
		return -1;
	size_t n = c->n;
	if (i <= c->i[0]) {
		*v = c->v[0] + (i - c->i[0]) / c->slope[0];
		return 0;
	}
	if (i >= c->i[n - 1]) {
		*v = c->v[n - 1] + (i - c->i[n - 1]) / c->slope[n - 1];
		return 0;
	}
	size_t k = curve_segment(c->i, n, i);
	return model_invert(measured_current, measured_conductance, p, i, c->v[k],
	                    c->v[k + 1], v);
}

/* dV/dI at I. */
static double measured_resistance(const double *p, double i)
{
	double v;
	if (measured_voltage(p, i, &v) != 0)
		return NAN;
	return 1.0 / measured_conductance(p, v);
}

/* The measured span, widened by a tenth each way. */
static void measured_range(const double *p, double *vmin, double *vmax)
{
	const struct curve_data *c = measured_curve(p);
	if (c == NULL) {
		*vmin = -1.0;
		*vmax = 1.0;
		return;
	}
	double span = c->v[c->n - 1] - c->v[0];
	*vmin = c->v[0] - 0.1 * span;
	*vmax = c->v[c->n - 1] + 0.1 * span;
}

/* A measured device needs its points. */
static int measured_validate(const double *p, char *err, size_t errlen)
{
	const struct curve_data *c = measured_curve(p);
	if (c == NULL || c->n < 2) {
		snprintf(err, errlen, "points: a measured device needs its (V, I) "
		         "points, at least 2");
		return -1;
	}
	return 0;
}

/* Warn when the point lies outside the measured range. */
static int measured_secondary(const double *p, const struct source *src,
                              double v, double i, struct model_extra *out)
{
	(void)src;
	(void)i;
	const struct curve_data *c = measured_curve(p);
	if (c == NULL)
		return -1;
	double lo = c->v[0], hi = c->v[c->n - 1];
	out->n = 0;
	out->v[out->n++] = (struct model_extra_value){ "measured_from", "Vfirst",
	                                               QTY_VOLTAGE, lo };
	out->v[out->n++] = (struct model_extra_value){ "measured_to", "Vlast",
	                                               QTY_VOLTAGE, hi };
	out->warn = v < lo || v > hi;
	out->region = out->warn ? "extrapolated" : "measured";
	if (out->warn)
		snprintf(out->note, sizeof out->note,
		         "%.4g V is outside the measured %.4g V to %.4g V: the curve "
		         "there is a straight line with the end slope, not data",
		         v, lo, hi);
	else
		out->note[0] = '\0';
	return 0;
}

const struct model_type model_measured = {
	.name = "measured",
	.summary = "measured (V, I) points, monotone cubic (Fritsch-Carlson)",
	.params = NULL,
	.nparams = 0,
	.monotone = true,
	.current = measured_current,
	.conductance = measured_conductance,
	.voltage = measured_voltage,
	.resistance = measured_resistance,
	.range = measured_range,
	.validate = measured_validate,
	.secondary = measured_secondary,
};
