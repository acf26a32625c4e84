/*
 * fit_cases.h - the fitting problems test_fit and test_fit_recovery share:
 * for each model a true parameter set (high-entropy invented values), the
 * abscissae a bench sweep or a data sheet would give, the weighting and
 * the noise level, and seeded noisy points drawn from them.
 *
 * Header-only (static functions), like core_check.h.
 */
#ifndef BIASLINE_FIT_CASES_H
#define BIASLINE_FIT_CASES_H

#include <math.h>
#include <stdint.h>
#include <string.h>

#include "core_check.h"
#include "core/fit.h"
#include "core/models/models.h"

#define FIT_CASE_MAX_POINTS 40

/* One problem. */
struct fit_case {
	const char *name;
	const struct model_type *type;
	struct { const char *key; double value; } set[6];  /* truth, beyond defaults */
	size_t nfit;     /* the first NFIT keys of SET are fitted */
	struct { const char *key; double value; } hold[3]; /* held by the user */
	size_t n;
	double x[FIT_CASE_MAX_POINTS];
	double t[FIT_CASE_MAX_POINTS];   /* all NaN: no T column */
	bool has_t;
	enum fit_weight weight;
	double sigma;    /* noise: of ln y (relative) or of y (absolute) */
};

/* Fill X with N values evenly from A to B. */
static inline size_t fit_case_span(double *x, size_t at, size_t n, double a,
                                   double b)
{
	for (size_t k = 0; k < n; k++)
		x[at + k] = a + (b - a) * (double)k / (double)(n - 1);
	return at + n;
}

/* The problems; returns how many, filling CS (at least 12 slots). */
static inline size_t fit_cases(struct fit_case *cs)
{
	size_t n = 0;
	struct fit_case *c;

	c = &cs[n++];
	*c = (struct fit_case){ .name = "diode Is n Rs", .nfit = 3, .type = &model_diode,
	        .set = { { "saturation_current", 2.317e-14 }, { "ideality", 1.373 },
	                 { "series_resistance", 0.8317 } },
	        .weight = FIT_WEIGHT_RELATIVE, .sigma = 0.01 };
	c->n = fit_case_span(c->x, 0, 18, 0.3617, 1.0433);

	c = &cs[n++];
	*c = (struct fit_case){ .name = "diode over 3 temperatures (bandgap)", .nfit = 4,
	        .type = &model_diode,
	        .set = { { "saturation_current", 4.71e-15 }, { "ideality", 1.087 },
	                 { "series_resistance", 0.3911 }, { "bandgap", 1.143 },
	                 { "reference_temperature", 25.0 } },
	        .has_t = true, .weight = FIT_WEIGHT_RELATIVE, .sigma = 0.01 };
	{
		static const double temps[3] = { -10.3, 25.0, 84.7 };
		size_t at = 0;
		for (int g = 0; g < 3; g++) {
			size_t a0 = at;
			at = fit_case_span(c->x, at, 9, 0.3513 - 0.0021 * temps[g],
			                   0.8713 - 0.0014 * temps[g]);
			for (size_t k = a0; k < at; k++)
				c->t[k] = temps[g];
		}
		c->n = at;
	}

	c = &cs[n++];
	*c = (struct fit_case){ .name = "led Vf n Rs", .nfit = 3, .type = &model_led,
	        .set = { { "forward_voltage", 2.0873 }, { "ideality", 2.137 },
	                 { "series_resistance", 7.413 } },
	        .weight = FIT_WEIGHT_RELATIVE, .sigma = 0.01 };
	c->n = fit_case_span(c->x, 0, 16, 1.6031, 2.4377);

	c = &cs[n++];
	*c = (struct fit_case){ .name = "zener breakdown Vz rz nb", .nfit = 3,
	        .type = &model_zener,
	        .set = { { "breakdown_voltage", 5.137 }, { "dynamic_resistance", 13.71 },
	                 { "breakdown_ideality", 1.83 } },
	        .weight = FIT_WEIGHT_RELATIVE, .sigma = 0.01 };
	c->n = fit_case_span(c->x, 0, 16, -5.331, -4.7193);

	c = &cs[n++];
	*c = (struct fit_case){ .name = "zener both branches", .nfit = 5, .type = &model_zener,
	        .set = { { "breakdown_voltage", 6.2381 }, { "dynamic_resistance", 8.173 },
	                 { "breakdown_ideality", 1.417 }, { "saturation_current", 3.17e-13 },
	                 { "ideality", 1.291 } },
	        .weight = FIT_WEIGHT_RELATIVE, .sigma = 0.01 };
	{
		size_t at = fit_case_span(c->x, 0, 12, -6.391, -5.9213);
		c->n = fit_case_span(c->x, at, 9, 0.4417, 0.6813);
	}

	c = &cs[n++];
	*c = (struct fit_case){ .name = "power law (varistor) Iref alpha", .nfit = 2,
	        .type = &model_power_law,
	        .set = { { "reference_current", 1.13e-3 }, { "exponent", 23.71 } },
	        .hold = { { "reference_voltage", 27.3 } },
	        .weight = FIT_WEIGHT_RELATIVE, .sigma = 0.02 };
	c->n = fit_case_span(c->x, 0, 14, 23.11, 31.93);

	c = &cs[n++];
	*c = (struct fit_case){ .name = "power law (lamp), absolute", .nfit = 2, .type = &model_power_law,
	        .set = { { "reference_current", 0.4137 }, { "exponent", 0.5831 } },
	        .hold = { { "reference_voltage", 12.0 } },
	        .weight = FIT_WEIGHT_ABSOLUTE, .sigma = 2.3e-3 };
	c->n = fit_case_span(c->x, 0, 15, 0.813, 13.71);

	c = &cs[n++];
	*c = (struct fit_case){ .name = "npn VBE-IC Is n", .nfit = 2, .type = &model_npn,
	        .set = { { "saturation_current", 6.813e-15 }, { "ideality", 1.0173 },
	                 { "current_gain", 173.0 }, { "supply_voltage", 12.0 } },
	        .weight = FIT_WEIGHT_RELATIVE, .sigma = 0.01 };
	c->n = fit_case_span(c->x, 0, 13, 0.4813, 0.7391);

	c = &cs[n++];
	*c = (struct fit_case){ .name = "diode absolute", .nfit = 3, .type = &model_diode,
	        .set = { { "saturation_current", 1.713e-9 }, { "ideality", 1.913 },
	                 { "series_resistance", 2.371 } },
	        .weight = FIT_WEIGHT_ABSOLUTE, .sigma = 1.1e-5 };
	c->n = fit_case_span(c->x, 0, 17, 0.5513, 0.8713);

	c = &cs[n++];
	*c = (struct fit_case){ .name = "thermistor beta R0 B", .nfit = 2, .type = &model_thermistor,
	        .set = { { "resistance_at_reference", 10137.0 }, { "beta", 3931.7 } },
	        .weight = FIT_WEIGHT_RELATIVE, .sigma = 0.005 };
	c->n = fit_case_span(c->x, 0, 15, -19.3, 102.7);

	c = &cs[n++];
	*c = (struct fit_case){ .name = "thermistor beta absolute", .nfit = 2, .type = &model_thermistor,
	        .set = { { "resistance_at_reference", 4713.0 }, { "beta", 3471.3 } },
	        .weight = FIT_WEIGHT_ABSOLUTE, .sigma = 7.3 };
	c->n = fit_case_span(c->x, 0, 15, 0.7, 81.3);

	c = &cs[n++];
	*c = (struct fit_case){ .name = "thermistor Steinhart-Hart A B C", .nfit = 3,
	        .type = &model_thermistor_sh,
	        .set = { { "steinhart_hart_a", 1.1273e-3 }, { "steinhart_hart_b", 2.3417e-4 },
	                 { "steinhart_hart_c", 8.731e-8 } },
	        .weight = FIT_WEIGHT_RELATIVE, .sigma = 0.002 };
	c->n = fit_case_span(c->x, 0, 15, -39.7, 147.3);

	for (size_t k = 0; k < n; k++)
		if (!cs[k].has_t)
			for (size_t j = 0; j < FIT_CASE_MAX_POINTS; j++)
				cs[k].t[j] = NAN;
	return n;
}

/* The true parameters of C (defaults, then its set and held keys). */
static inline void fit_case_truth(const struct fit_case *c, double *p)
{
	struct device d;
	device_init(&d, c->type);
	memcpy(p, d.p, sizeof d.p);
	for (size_t k = 0; k < 6 && c->set[k].key != NULL; k++)
		p[model_param_index(c->type, c->set[k].key)] = c->set[k].value;
	for (size_t k = 0; k < 3 && c->hold[k].key != NULL; k++)
		p[model_param_index(c->type, c->hold[k].key)] = c->hold[k].value;
}

/* A standard normal draw (Box & Muller, Ann. Math. Stat. 29, 1958). */
static inline double fit_case_normal(struct check_rng *r)
{
	double u1 = check_rng_unit(r), u2 = check_rng_unit(r);
	if (u1 < 1e-300)
		u1 = 1e-300;
	return sqrt(-2.0 * log(u1)) * cos(6.283185307179586 * u2);
}

/*
 * Noisy points of C for SEED, with the case's noise times SCALE, into Y
 * (true values into Y0 when not NULL),
 * and the request RQ over them: the model's defaults with only the held
 * keys set (and the temperature law's reference when the points span
 * temperatures, as a user would give it).
 */
static inline void fit_case_request(const struct fit_case *c, uint64_t seed,
                                    double scale, double *y, double *y0,
                                    struct fit_request *rq)
{
	model_values truth;
	fit_case_truth(c, truth);
	struct check_rng r = { seed * 0x2545f4914f6cdd1dull + 0x1234567u };
	for (size_t k = 0; k < c->n; k++) {
		double yt = fit_model_value(c->type, truth, c->x[k], c->t[k]);
		if (y0 != NULL)
			y0[k] = yt;
		double e = scale * c->sigma * fit_case_normal(&r);
		y[k] = c->weight == FIT_WEIGHT_RELATIVE ? yt * exp(e) : yt + e;
	}
	memset(rq, 0, sizeof *rq);
	struct device d;
	device_init(&d, c->type);
	memcpy(rq->p, d.p, sizeof d.p);
	rq->type = c->type;
	/* what a user knows about the part but does not fit */
	static const char *const known[] = { "current_gain", "supply_voltage",
	                                     "reference_temperature", NULL };
	for (size_t k = 0; known[k] != NULL; k++) {
		int i = model_param_index(c->type, known[k]);
		if (i >= 0)
			rq->p[i] = truth[i];
	}
	for (size_t k = 0; k < 3 && c->hold[k].key != NULL; k++) {
		int i = model_param_index(c->type, c->hold[k].key);
		rq->p[i] = c->hold[k].value;
		rq->fixed[i] = true;
	}
	rq->weight = c->weight;
	rq->n = c->n;
	rq->x = c->x;
	rq->y = y;
	rq->t = c->has_t ? c->t : NULL;
}

/* The fit's internal coordinate of parameter I of TYPE: the log of one
 * that must be positive, else the value (as fit.c fits them). */
static inline bool fit_case_logt(const struct model_type *type, int i)
{
	return type->params[i].min >= 0.0;
}

#endif
