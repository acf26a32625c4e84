/*
 * sensitivity.c - implicit differentiation of the operating point (see
 * sensitivity.h).
 */
#include "sensitivity.h"

#include <math.h>
#include <stdbool.h>
#include <string.h>

#include "thermal.h"

/* Relative difference step: about the cube root of the double epsilon,
 * which balances truncation and rounding for a central difference. */
#define SENS_REL_STEP 6e-6

/* The device current at V with parameter INDEX set to X. */
static double sens_current_with(const struct problem *pb, int index, double x,
                                double v)
{
	struct device d = pb->dev;
	device_set_param(&d, (size_t)index, x);
	return device_current(&d, v);
}

/*
 * One difference estimate of dI/dp at fixed V with step H: central when
 * both sides are inside the range, else the one-sided three-point rule
 * (-3 f0 + 4 f1 - f2) / (2 h).  NaN when neither fits.
 */
static double sens_difference(const struct problem *pb, int index, double v,
                              double h)
{
	const struct model_param *mp = &pb->dev.type->params[index];
	double p = pb->dev.p[index];
	bool down = paramref_in_range(mp, p - h);
	bool up = paramref_in_range(mp, p + h);
	if (down && up) {
		double a = sens_current_with(pb, index, p + h, v);
		double b = sens_current_with(pb, index, p - h, v);
		return (a - b) / (2.0 * h);
	}
	double s = up ? h : -h;
	if (!(up || down) || !paramref_in_range(mp, p + 2.0 * s))
		return NAN;
	double f0 = sens_current_with(pb, index, p, v);
	double f1 = sens_current_with(pb, index, p + s, v);
	double f2 = sens_current_with(pb, index, p + 2.0 * s, v);
	return (-3.0 * f0 + 4.0 * f1 - f2) / (2.0 * s);
}

/*
 * dI/dp at fixed V for device parameter INDEX: the difference estimate
 * with step h, checked against the one with h/2.  Both err by O(h^2) on a
 * smooth curve, so they agree to about 1e-10; when they do not, the model
 * is not smooth in p here (a switch such as a reference temperature at
 * 0 K meaning "off") and the result is NaN.
 */
double sensitivity_model_partial(const struct problem *pb, int index,
                                 double v)
{
	double p = pb->dev.p[index];
	double h = SENS_REL_STEP * fabs(p);
	if (h == 0.0)
		h = SENS_REL_STEP;
	double d1 = sens_difference(pb, index, v, h);
	double d2 = sens_difference(pb, index, v, 0.5 * h);
	double scale = fabs(device_current(&pb->dev, v)) / fmax(fabs(p), h);
	if (!isfinite(d1) || !isfinite(d2) ||
	    fabs(d1 - d2) > 1e-5 * fmax(fabs(d1), fabs(d2)) + 1e-9 * scale)
		return NAN;
	return d2;
}

/*
 * dF/dp for network part R at the operating point (V, I): the part moves
 * the reduced source (voc and r, or isc for an ideal current source), so
 * dF/dp = I dr/dp - dvoc/dp (or -disc/dp), with dvoc/dp and dr/dp taken
 * by a central difference of the whole reduction at p +- h.  The
 * reduction is linear in a source value and rational in a resistance,
 * smooth either way, so the difference errs by O(h^2).  NaN when either
 * side cannot be reduced.
 */
static double sens_network_fp(const struct problem *pb,
                              const struct paramref *r, double i)
{
	double p = paramref_get(pb, r);
	double h = SENS_REL_STEP * fabs(p);
	if (h == 0.0)
		h = SENS_REL_STEP;
	struct problem up = *pb, down = *pb;
	if (paramref_set(&up, r, p + h) != 0 ||
	    paramref_set(&down, r, p - h) != 0)
		return NAN;
	if (isinf(pb->src.r)) {
		if (!isinf(up.src.r) || !isinf(down.src.r))
			return NAN;
		return -(up.src.isc - down.src.isc) / (2.0 * h);
	}
	if (isinf(up.src.r) || isinf(down.src.r))
		return NAN;
	double dvoc = (up.src.voc - down.src.voc) / (2.0 * h);
	double dr = (up.src.r - down.src.r) / (2.0 * h);
	return i * dr - dvoc;
}

/*
 * dI/dp at fixed V for a source or network parameter R when the device's
 * curve takes something from its source (model_type.bind: a FET's drain
 * loop carries r): the central difference of the bound device current as
 * R moves the source, or the one-sided three-point rule where p - h is
 * not a valid value (rs = 0).  0 for a device that takes nothing from its
 * source; NaN when neither rule fits.
 */
static double sens_bound_partial(const struct problem *pb,
                                 const struct paramref *r, double v)
{
	if (pb->dev.type->bind == NULL || r->kind == PARAMREF_DEVICE)
		return 0.0;
	double p = paramref_get(pb, r);
	double h = SENS_REL_STEP * fabs(p);
	if (h == 0.0)
		h = SENS_REL_STEP;
	struct problem a = *pb, b = *pb, c = *pb;
	if (paramref_set(&a, r, p + h) != 0)
		return NAN;
	if (paramref_set(&b, r, p - h) == 0)
		return (device_current(&a.dev, v) - device_current(&b.dev, v)) /
		       (2.0 * h);
	if (paramref_set(&c, r, p + 2.0 * h) != 0)
		return NAN;
	return (-3.0 * device_current(&pb->dev, v) +
	        4.0 * device_current(&a.dev, v) - device_current(&c.dev, v)) /
	       (2.0 * h);
}

/* The dissipation of PB with R at P + T, at (V + T DV, I + T DI). */
static double sens_power_along(const struct problem *pb,
                               const struct paramref *r, double p, double t,
                               double v, double i, double dv, double di,
                               bool *ok)
{
	struct problem q = *pb;
	if (t != 0.0 && paramref_set(&q, r, p + t) != 0) {
		*ok = false;
		return NAN;
	}
	*ok = true;
	return device_dissipation(&q.dev, &q.src, v + t * dv, i + t * di);
}

/*
 * dP/dp of a device whose dissipation is not V I (model_type.power): the
 * difference of P along the point's own tangent (p + t, V + t dV/dp,
 * I + t dI/dp), central, or one-sided where p - h is not a valid value.
 */
static double sens_power_partial(const struct problem *pb,
                                 const struct paramref *r, double v, double i,
                                 double dv, double di)
{
	double p = paramref_get(pb, r);
	double h = SENS_REL_STEP * fabs(p);
	if (h == 0.0)
		h = SENS_REL_STEP;
	bool ok1, ok2;
	double a = sens_power_along(pb, r, p, h, v, i, dv, di, &ok1);
	double b = sens_power_along(pb, r, p, -h, v, i, dv, di, &ok2);
	if (ok1 && ok2)
		return (a - b) / (2.0 * h);
	double f0 = sens_power_along(pb, r, p, 0.0, v, i, dv, di, &ok2);
	double f2 = sens_power_along(pb, r, p, 2.0 * h, v, i, dv, di, &ok2);
	if (!ok1 || !ok2)
		return NAN;
	return (-3.0 * f0 + 4.0 * a - f2) / (2.0 * h);
}

/* (P / Y) DY, NaN when Y is 0. */
static double sens_norm(double p, double y, double dy)
{
	return y != 0.0 ? p / y * dy : NAN;
}

/* Sensitivities of (V, I) to R. */
int sensitivity_at(const struct problem *pb, double v, double i,
                   const struct paramref *r, struct sensitivity *out)
{
	memset(out, 0, sizeof *out);
	out->param = *r;
	out->value = paramref_get(pb, r);
	if (pb->dev.type->current == NULL)
		return -1;
	/* A self-heated part moves with its junction temperature too. */
	if (thermal_active(&pb->dev))
		return thermal_sensitivity(pb, v, i, r, out);
	/* A thermal resistance of 0 switches self-heating off: the point
	 * jumps from the given temperature to the ambient as it leaves 0, so
	 * there is no derivative there. */
	struct thermal_keys tk;
	if (r->kind == PARAMREF_DEVICE && thermal_keys_of(pb->dev.type, &tk) &&
	    r->index == tk.theta)
		return -1;
	const struct source *s = &pb->src;
	bool amps = isinf(s->r); /* the residual is in amperes */
	double fv = problem_residual_slope(pb, v);
	double g = device_conductance(&pb->dev, v);
	double fp = 0.0, ip = 0.0; /* dF/dp, and dI/dp at fixed V */
	switch (r->kind) {
	case PARAMREF_VS:
		if (amps)
			return -1;
		fp = -1.0;
		break;
	case PARAMREF_RS:
		if (amps)
			return -1;
		fp = i;
		break;
	case PARAMREF_IS:
		fp = amps ? -1.0 : -s->r;
		break;
	case PARAMREF_RP:
		if (amps)
			return -1;
		fp = i - s->isc;
		break;
	case PARAMREF_DEVICE:
		ip = sensitivity_model_partial(pb, r->index, v);
		fp = amps ? ip : s->r * ip;
		break;
	case PARAMREF_NETWORK:
		fp = sens_network_fp(pb, r, i);
		break;
	}
	if (r->kind != PARAMREF_DEVICE) {
		/* A device bound to its source moves with it: F = V + r I(V; p)
		 * - voc gains r dI/dp (or dI/dp when F is in amperes). */
		ip = sens_bound_partial(pb, r, v);
		fp += amps ? ip : s->r * ip;
	}
	if (!isfinite(fv) || fv == 0.0 || !isfinite(fp) || !isfinite(g))
		return -1;
	out->dv = -fp / fv;
	out->di = g * out->dv + ip;
	double pw = device_dissipation(&pb->dev, &pb->src, v, i);
	out->dp = pb->dev.type->power != NULL
	                  ? sens_power_partial(pb, r, v, i, out->dv, out->di)
	                  : i * out->dv + v * out->di;
	out->sv = sens_norm(out->value, v, out->dv);
	out->si = sens_norm(out->value, i, out->di);
	out->sp = sens_norm(out->value, pw, out->dp);
	return 0;
}

/* Sensitivities to every parameter. */
size_t sensitivity_all(const struct problem *pb, double v, double i,
                       struct sensitivity *out, size_t max)
{
	struct paramref refs[PARAMREF_MAX];
	size_t nr = paramref_all(pb, refs, sizeof refs / sizeof refs[0]);
	size_t n = 0;
	for (size_t k = 0; k < nr && n < max; k++)
		if (sensitivity_at(pb, v, i, &refs[k], &out[n]) == 0)
			n++;
	return n;
}
