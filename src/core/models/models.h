/*
 * models.h - the model types the registry lists (one file each).
 */
#ifndef BIASLINE_MODELS_H
#define BIASLINE_MODELS_H

#include "../model.h"

extern const struct model_type model_diode;
extern const struct model_type model_power_law;

/* Parameter indices of the diode model. */
enum diode_param {
	DIODE_IS,       /* saturation_current, A */
	DIODE_N,        /* ideality */
	DIODE_RS,       /* series_resistance, ohm */
	DIODE_TEMP,     /* temperature, degC */
	DIODE_NPARAMS
};

/* Parameter indices of the power-law model. */
enum power_law_param {
	POWER_LAW_VREF,  /* reference_voltage, V */
	POWER_LAW_IREF,  /* reference_current, A */
	POWER_LAW_ALPHA, /* exponent */
	POWER_LAW_NPARAMS
};

/* Thermal voltage kT/q at TEMP_C degrees Celsius (2019 SI exact k and q). */
double diode_thermal_voltage(double temp_c);

#endif
