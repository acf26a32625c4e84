/*
 * models.h - the model types the registry lists (one file each).
 */
#ifndef BIASLINE_MODELS_H
#define BIASLINE_MODELS_H

#include "../model.h"

extern const struct model_type model_diode;
extern const struct model_type model_power_law;
extern const struct model_type model_zener;
extern const struct model_type model_led;
extern const struct model_type model_tunnel;
extern const struct model_type model_npn;
extern const struct model_type model_pnp;
extern const struct model_type model_jfet;
extern const struct model_type model_nmos;
extern const struct model_type model_thermistor;
extern const struct model_type model_thermistor_sh;
/* A device of this model needs its points in struct device.curve (see
 * measured.c); the session loader fills them from points:. */
extern const struct model_type model_measured;

/* Parameter indices of the diode model. */
enum diode_param {
	DIODE_IS,       /* saturation_current, A */
	DIODE_N,        /* ideality */
	DIODE_RS,       /* series_resistance, ohm */
	DIODE_TEMP,     /* temperature, degC */
	DIODE_TREF,     /* reference_temperature, degC; 0 K = no scaling */
	DIODE_EG,       /* bandgap, eV */
	DIODE_XTI,      /* saturation_exponent */
	DIODE_THETA,    /* thermal_resistance, K/W; 0 = no self-heating */
	DIODE_TAMB,     /* ambient_temperature, degC (with thermal_resistance) */
	DIODE_TJMAX,    /* maximum_junction_temperature, degC */
	DIODE_NPARAMS
};

/* Parameter indices of the power-law model. */
enum power_law_param {
	POWER_LAW_VREF,  /* reference_voltage, V */
	POWER_LAW_IREF,  /* reference_current, A */
	POWER_LAW_ALPHA, /* exponent */
	POWER_LAW_NPARAMS
};

/* Parameter indices of the zener model. */
enum zener_param {
	ZENER_VZ,       /* breakdown_voltage, V (positive) */
	ZENER_IZT,      /* test_current, A (positive) */
	ZENER_RZ,       /* dynamic_resistance, ohm */
	ZENER_IS,       /* saturation_current, A */
	ZENER_N,        /* ideality */
	ZENER_NB,       /* breakdown_ideality */
	ZENER_TEMP,     /* temperature, degC */
	ZENER_TC,       /* temperature_coefficient of Vz, V/K */
	ZENER_TREF,     /* reference_temperature of Vz, degC */
	ZENER_THETA,    /* thermal_resistance, K/W; 0 = no self-heating */
	ZENER_TAMB,     /* ambient_temperature, degC */
	ZENER_TJMAX,    /* maximum_junction_temperature, degC */
	ZENER_NPARAMS
};

/* Parameter indices of the LED model. */
enum led_param {
	LED_VF,         /* forward_voltage, V */
	LED_IF,         /* test_current, A */
	LED_N,          /* ideality */
	LED_RS,         /* series_resistance, ohm */
	LED_TEMP,       /* temperature, degC */
	LED_TC,         /* temperature_coefficient of Vf, V/K */
	LED_TREF,       /* reference_temperature of Vf, degC */
	LED_THETA,      /* thermal_resistance, K/W; 0 = no self-heating */
	LED_TAMB,       /* ambient_temperature, degC */
	LED_TJMAX,      /* maximum_junction_temperature, degC */
	LED_NPARAMS
};

/* The saturation current an LED's stated point implies. */
double led_saturation_current(const double *p);

/* Nominal peak wavelength in nm of LED preset NAME (from memory), or NaN. */
double led_preset_wavelength(const char *name);

/* Parameter indices of the tunnel-diode model. */
enum tunnel_param {
	TUNNEL_VP,      /* peak_voltage, V */
	TUNNEL_IP,      /* peak_current, A */
	TUNNEL_VV,      /* valley_voltage, V */
	TUNNEL_IV,      /* valley_current, A */
	TUNNEL_IS,      /* saturation_current, A */
	TUNNEL_N,       /* ideality */
	TUNNEL_TEMP,    /* temperature, degC */
	TUNNEL_NPARAMS
};

/*
 * The observed peak (*VPK, *IPK: where dI/dV turns negative) and valley of
 * a tunnel diode P.  Returns 0, or -1 when the curve has no peak.
 */
int tunnel_extrema(const double *p, double *vpk, double *ipk, double *vvl,
                   double *ivl);

/* Parameter indices of the npn and pnp base-bias models. */
enum bjt_param {
	BJT_IS,         /* saturation_current, A */
	BJT_N,          /* ideality */
	BJT_BETA,       /* current_gain */
	BJT_RE,         /* emitter_resistance, ohm */
	BJT_RC,         /* collector_resistance, ohm */
	BJT_VCC,        /* supply_voltage, V */
	BJT_BETAR,      /* reverse_current_gain */
	BJT_TEMP,       /* temperature, degC */
	BJT_TREF,       /* reference_temperature of Is, degC; 0 K = none */
	BJT_EG,         /* bandgap, eV */
	BJT_XTI,        /* saturation_exponent */
	BJT_THETA,      /* thermal_resistance, K/W; 0 = no self-heating */
	BJT_TAMB,       /* ambient_temperature, degC */
	BJT_TJMAX,      /* maximum_junction_temperature, degC */
	BJT_NPARAMS
};

/* Parameter indices of the jfet and nmos self-bias models. */
enum fet_param {
	FET_K,          /* jfet: saturation_current IDSS, A;
	                 * nmos: transconductance_parameter k, A/V^2 */
	FET_VTH,        /* jfet: pinch_off_voltage VP (< 0); nmos: threshold */
	FET_VDD,        /* supply_voltage, V */
	FET_RD,         /* drain_resistance, ohm */
	FET_NPARAMS
};

/* Parameter indices of the thermistor models (beta and Steinhart-Hart). */
enum thermistor_param {
	THERM_R0 = 0,   /* beta: resistance_at_reference, ohm */
	THERM_T0 = 1,   /* beta: reference_temperature, degC */
	THERM_B = 2,    /* beta: beta, K */
	THERM_SH_A = 0, /* Steinhart-Hart: steinhart_hart_a */
	THERM_SH_B = 1, /* Steinhart-Hart: steinhart_hart_b, 1/K */
	THERM_SH_C = 2, /* Steinhart-Hart: steinhart_hart_c, 1/K */
	THERM_DELTA = 3,/* dissipation_constant, W/K */
	THERM_TAMB = 4, /* ambient_temperature, degC */
	THERM_TMAX = 5, /* maximum_temperature, degC */
	THERM_NPARAMS = 6
};

/* Zero-power resistance of thermistor model T (either form) at T_C degC. */
double thermistor_resistance_at(const struct model_type *t, const double *p,
                                double t_c);

/*
 * The voltage maximum of thermistor model T: body temperature *T_C (degC),
 * current *I and voltage *V.  Returns 0, or -1 when there is none below
 * the rated maximum temperature.
 */
int thermistor_peak(const struct model_type *t, const double *p, double *t_c,
                    double *i, double *v);

/* Body temperature *T_C (degC) at current I; 0, or -1 outside the domain. */
int thermistor_temperature(const struct model_type *t, const double *p,
                           double i, double *t_c);

#define CURVE_MAX_POINTS 4096

/*
 * Measured (V, I) points of a device and their Fritsch-Carlson node
 * slopes.  Filled by curve_data_init, which allocates; curve_data_fini
 * frees.  A device borrows it through struct device.curve.
 */
struct curve_data {
	size_t n;          /* points, 2 .. CURVE_MAX_POINTS */
	double *v;         /* voltages, strictly rising */
	double *i;         /* currents, strictly rising */
	double *slope;     /* dI/dV at each point */
	double *delta;     /* secant slope of each segment (n - 1) */
};

/*
 * Check N points (V[k], I[k]) and copy them into C with their slopes.
 * Returns 0, or -1 with a message naming the row (1-based) in ERR: fewer
 * than 2 points, a non-finite value, a voltage or current that does not
 * rise strictly.
 */
int curve_data_init(struct curve_data *c, const double *v, const double *i,
                    size_t n, char *err, size_t errlen);

/* Free what C holds (C may be initialised again afterwards). */
void curve_data_fini(struct curve_data *c);

/* Deep-copy SRC into DST; 0, or -1 when out of memory. */
int curve_data_copy(struct curve_data *dst, const struct curve_data *src);

/* Thermal voltage kT/q at TEMP_C degrees Celsius (2019 SI exact k and q). */
double diode_thermal_voltage(double temp_c);

/*
 * Saturation current at junction temperature T_C of a junction whose
 * saturation current is IS_REF at TREF_C (degrees Celsius), with band gap
 * EG_EV (eV), exponent M and ideality N (see diode.c for the law and its
 * source).  TREF_C at or below absolute zero means "IS_REF is already at
 * T_C": IS_REF is returned unchanged.
 */
double diode_scaled_saturation(double is_ref, double t_c, double tref_c,
                               double eg_ev, double m, double n);

/*
 * The self-heating keys of a junction model's table (thermal.h reads them
 * by key): thermal_resistance, ambient_temperature and
 * maximum_junction_temperature with default TJMAX and its help line HELP.
 * THETA, TAMB and TJMAX_I are the model's indices of the three, which must
 * be the last three of the table in this order (the solver's quick test
 * of whether a device heats itself looks there).
 */
#define MODEL_THERMAL_PARAMS(THETA, TAMB, TJMAX_I, TJMAX, HELP)                 \
	[THETA] = { "thermal_resistance", "Rth", QTY_THERMAL_RES, 0.0, 0.0, 1e5,   \
	            false, false, false,                                           \
	            "junction-to-ambient thermal resistance; 0: no self-heating",  \
	            .off_at_default = true },                                      \
	[TAMB] = { "ambient_temperature", "Ta", QTY_TEMPERATURE, 25.0, -273.15,    \
	           1000.0, true, false, false,                                     \
	           "ambient temperature (used with thermal_resistance)",           \
	           .needs = "thermal_resistance" },                                \
	[TJMAX_I] = { "maximum_junction_temperature", "Tjmax", QTY_TEMPERATURE,    \
	              TJMAX, -273.15, 1000.0, true, false, false, HELP }

/*
 * The rules every self-heated junction shares: with a thermal resistance
 * above 0 the maximum junction temperature must lie above the ambient.
 * Returns 0, or -1 with a message naming the key in ERR.
 */
int model_thermal_check(const double *p, int theta, int tamb, int tjmax,
                        char *err, size_t errlen);

/*
 * Solve F(X) = TARGET for X in [LO, HI] where F is increasing with
 * derivative DF (both called with P): safeguarded Newton-Raphson in a kept
 * bracket, bisection when a step leaves it.  Returns 0 with *X, or -1 when
 * [LO, HI] does not bracket TARGET.
 */
int model_invert(double (*f)(const double *p, double x),
                 double (*df)(const double *p, double x), const double *p,
                 double target, double lo, double hi, double *x);

#endif
