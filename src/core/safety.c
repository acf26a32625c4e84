/*
 * safety.c - cautions for high voltage and hot parts.
 */
#include "safety.h"

#include <math.h>
#include <stdio.h>

#include "thermal.h"

/* Which cautions apply at (V, I). */
unsigned safety_check(const struct problem *pb, double v, double i)
{
	unsigned f = 0;
	const struct source *s = &pb->src;
	double vmax = fabs(v);
	if (isfinite(s->voc))
		vmax = fmax(vmax, fabs(s->voc));
	if (vmax > SAFETY_DC_VOLTAGE)
		f |= SAFETY_HIGH_VOLTAGE;
	if (fabs(device_dissipation(&pb->dev, s, v, i)) > SAFETY_HOT_POWER)
		f |= SAFETY_HOT_DEVICE;
	/* A transistor's supply and drain or collector voltages count too. */
	struct model_extra ex;
	if (device_secondary(&pb->dev, s, v, i, &ex) == 0)
		for (size_t k = 0; k < ex.n; k++)
			if (ex.v[k].kind == QTY_VOLTAGE &&
			    fabs(ex.v[k].value) > SAFETY_DC_VOLTAGE)
				f |= SAFETY_HIGH_VOLTAGE;
	if (thermal_active(&pb->dev) &&
	    thermal_point_temperature(pb, v, i) > SAFETY_HOT_SURFACE_C)
		f |= SAFETY_HOT_SURFACE;
	if (isfinite(s->r) && s->r > 0.0 && s->r * i * i > SAFETY_HOT_POWER)
		f |= SAFETY_HOT_RESISTOR;
	return f;
}

/* One line of caution text for FLAGS. */
void safety_message(unsigned flags, char *buf, size_t n)
{
	if (flags == 0) {
		if (n > 0)
			buf[0] = '\0';
		return;
	}
	const char *what;
	unsigned hot = SAFETY_HOT_DEVICE | SAFETY_HOT_RESISTOR | SAFETY_HOT_SURFACE;
	if ((flags & SAFETY_HIGH_VOLTAGE) && (flags & hot))
		what = "hazardous voltage and hot parts";
	else if (flags & SAFETY_HIGH_VOLTAGE)
		what = "a voltage above the extra-low-voltage range (60 V DC)";
	else if (flags == SAFETY_HOT_SURFACE)
		what = "a junction above 60 degC: its case and heat sink get hot "
		       "enough to burn";
	else if (flags & SAFETY_HOT_SURFACE)
		what = "parts dissipating more than 2 W and a junction above 60 "
		       "degC (hot enough to burn)";
	else
		what = "parts dissipating more than 2 W (they get hot enough to burn)";
	snprintf(buf, n,
	         "CAUTION: this case involves %s. Follow your local electrical "
	         "codes; work on such circuits belongs to qualified, licensed people.",
	         what);
}
