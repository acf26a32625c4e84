/*
 * cli_thermal.h - what the commands print about a device that heats
 * itself (core/thermal.h): each point's junction temperature and loop
 * gain, the thermal loop's verdict, and the margins to runaway in the
 * thermal resistance, the ambient and the supply.
 */
#ifndef BIASLINE_CLI_THERMAL_H
#define BIASLINE_CLI_THERMAL_H

#include <stdbool.h>
#include <stddef.h>

#include "core/problem.h"
#include "core/solve.h"
#include "core/thermal.h"
#include "csv.h"

/* The margins one report shows: theta, Ta, the supply, VCC. */
#define CLI_THERMAL_MARGINS 4

/* The margins of a problem, worked out once. */
struct cli_thermal {
	bool active;                 /* the device heats itself */
	size_t n;                    /* margins asked for */
	char keys[CLI_THERMAL_MARGINS][PARAMREF_KEY_MAX];
	bool ok[CLI_THERMAL_MARGINS];/* the margin could be followed */
	struct thermal_margin m[CLI_THERMAL_MARGINS];
	char why[CLI_THERMAL_MARGINS][160]; /* why not, when !ok */
};

/*
 * Work out the margins of PB with O into T (T->active false and nothing
 * else when PB does not heat itself): thermal_resistance,
 * ambient_temperature, the source's voltage (vs; is for a Norton source;
 * a network's first voltage source part) and the model's supply_voltage.
 */
void cli_thermal_init(struct cli_thermal *t, const struct problem *pb,
                      const struct solve_options *o);

/* One line under point P of PB: Tj, how it comes about, G, stability. */
void cli_thermal_print_point(const struct problem *pb,
                             const struct op_point *p, const char *indent);

/*
 * The thermal loop's verdict at the coolest stable point of RES (or the
 * runaway), and the margins.
 */
void cli_thermal_print_report(const struct cli_thermal *t,
                              const struct problem *pb,
                              const struct solve_options *o,
                              const struct solve_result *res);

/*
 * The CSV columns junction_temperature_C, thermal_loop_gain,
 * thermally_stable and one runaway_<key>_<unit> per margin (the value at
 * the fold; empty when none was found).
 */
void cli_thermal_csv_columns(const struct cli_thermal *t,
                             const struct problem *pb, struct csv *w);

/* The fields of those columns for point P. */
void cli_thermal_csv_fields(const struct cli_thermal *t,
                            const struct problem *pb,
                            const struct op_point *p, struct csv *w);

/*
 * What a sweep's fold at parameter R = X (between LO and HI) is for a
 * self-heated PB, into BUF: a runaway (a cool and a hot balance meet at
 * G = 1) or a balance crossing the maximum junction temperature.  ""
 * when PB does not heat itself or neither is seen.
 */
void cli_thermal_fold_words(const struct problem *pb,
                            const struct solve_options *o,
                            const struct paramref *r, double lo, double hi,
                            char *buf, size_t n);

#endif
