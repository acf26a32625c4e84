/*
 * cli_plot.h - what 'plot' shares with 'report': the Monte Carlo run the
 * histogram view draws and its description, and the thermal plane.
 */
#ifndef BIASLINE_CLI_PLOT_H
#define BIASLINE_CLI_PLOT_H

#include <stdbool.h>
#include <stddef.h>

#include "core/solve.h"
#include "core/tolerance.h"
#include "render/plot.h"
#include "session/session.h"

/* The Monte Carlo run of the histogram view, as 'tolerance' runs it. */
#define CLI_MC_TRIALS 10000
#define CLI_MC_SEED 1
#define CLI_MC_BINS 20

/*
 * Run CLI_MC_TRIALS trials of S's tolerances on its problem PB (seed
 * CLI_MC_SEED, CLI_MC_BINS bins, S's target windows) into MC.  Returns 0,
 * or -1 with a message (no tolerances, a bad one, no point) in ERR.
 */
int cli_plot_monte_carlo(const struct session *s, const struct problem *pb,
                         struct tol_mc *mc, char *err, size_t errlen);

/*
 * The histogram of the device current of MC into D (initialised by the
 * call): the nominal point of RES (when it has one point) and S's current
 * window as dotted lines.  Returns 0 or -1 (nothing to draw).
 */
int cli_plot_hist(const struct session *s, const struct solve_result *res,
                  const struct tol_mc *mc, bool unicode, struct plot_desc *d);

/*
 * The thermal plane of S's problem PB (it must heat itself) into D
 * (initialised by the call): every balance, the first NSTEPS steps of the
 * thermal loop from the ambient, the heat made sampled NS times.  Returns
 * 0, or -1 with a message in ERR.
 */
int cli_plot_thermal(const struct session *s, const struct problem *pb,
                     size_t nsteps, bool unicode, size_t ns,
                     struct plot_desc *d, char *err, size_t errlen);

#endif
