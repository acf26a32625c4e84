/*
 * bench_montecarlo.c - cost of a Monte Carlo trial as a multiple of one
 * operating-point solve (a benchmark, not a test: it prints numbers).
 *
 * The case is an invented LED-like junction behind 2.2 kohm from 23.7 V
 * with four tolerances (vs, rs, saturation_current, temperature).  One
 * solve is solve_problem on the nominal case (and, for comparison, the
 * fast unique solve solve_fast that a trial of a monotone device uses);
 * one trial draws the
 * parameters, solves and records the outputs, and the run ends with the
 * statistics, percentiles and histograms.
 *
 * Usage: bench_montecarlo [TRIALS]   (default 1000000)
 */
#include <stdio.h>
#include <stdlib.h>
#include <time.h>

#include "core/models/models.h"
#include "core/solve.h"
#include "core/tolerance.h"

/* Seconds from a monotonic clock. */
static double bench_now(void)
{
	struct timespec ts;
	clock_gettime(CLOCK_MONOTONIC, &ts);
	return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

/* Run the benchmark. */
int main(int argc, char **argv)
{
	size_t trials = argc > 1 ? (size_t)strtoull(argv[1], NULL, 10) : 1000000;
	if (trials < 1 || trials > TOL_MAX_TRIALS) {
		fprintf(stderr, "bench_montecarlo: trials must be 1 to %d\n",
		        TOL_MAX_TRIALS);
		return 2;
	}
	struct problem pb;
	struct source_spec sp;
	char err[256];
	source_spec_thevenin(&sp, 23.7, 2.2e3);
	if (source_from_spec(&sp, &pb.src, err, sizeof err) != 0)
		return 1;
	device_init(&pb.dev, &model_diode);
	pb.dev.p[DIODE_IS] = 3.17e-18;
	pb.dev.p[DIODE_N] = 1.93;
	pb.dev.p[DIODE_RS] = 1.37;
	pb.dev.p[DIODE_TEMP] = 27.3;
	struct solve_options o;
	solve_options_init(&o);

	/* One solve, repeated, with a value that changes so nothing is
	 * hoisted out of the loop. */
	double t0 = bench_now(), sink = 0.0;
	for (size_t k = 0; k < trials; k++) {
		struct problem q = pb;
		struct solve_result res;
		q.src.voc = 23.7 + 1e-9 * (double)(k & 1023);
		q.src.isc = q.src.voc / q.src.r;
		if (solve_problem(&q, &o, &res) != SOLVE_OK)
			return 1;
		sink += res.pts[0].i;
	}
	double t_solve = (bench_now() - t0) / (double)trials;

	/* The fast unique solve alone (what a trial uses for this device). */
	t0 = bench_now();
	for (size_t k = 0; k < trials; k++) {
		struct problem q = pb;
		struct op_point pt;
		q.src.voc = 23.7 + 1e-9 * (double)(k & 1023);
		q.src.isc = q.src.voc / q.src.r;
		if (solve_fast(&q, o.tol, &pt) != 0)
			return 1;
		sink += pt.i;
	}
	double t_fast = (bench_now() - t0) / (double)trials;

	struct tol_case c;
	tol_case_init(&c, &pb, SOURCE_THEVENIN, &o);
	if (tol_case_add(&c, "vs", 21.33, 26.07, TOL_UNIFORM, err, sizeof err) ||
	    tol_case_add(&c, "rs", 2.09e3, 2.31e3, TOL_NORMAL, err, sizeof err) ||
	    tol_case_add(&c, "saturation_current", 1.6e-18, 4.7e-18, TOL_NORMAL,
	                 err, sizeof err) ||
	    tol_case_add(&c, "temperature", 0.0, 60.0, TOL_UNIFORM, err,
	                 sizeof err)) {
		fprintf(stderr, "bench_montecarlo: %s\n", err);
		return 1;
	}
	struct tol_mc *mc = malloc(sizeof *mc);
	if (mc == NULL)
		return 1;
	t0 = bench_now();
	if (tol_monte_carlo(&c, trials, 12345, 50, NULL, 0, mc, err, sizeof err)) {
		fprintf(stderr, "bench_montecarlo: %s\n", err);
		free(mc);
		return 1;
	}
	double t_trial = (bench_now() - t0) / (double)trials;
	printf("trials            %zu (failed %zu)\n", mc->trials, mc->failed);
	printf("one solve         %.3f us\n", 1e6 * t_solve);
	printf("one solve_fast    %.3f us\n", 1e6 * t_fast);
	printf("one trial         %.3f us\n", 1e6 * t_trial);
	printf("trial / solve     %.3f (target <= 1.5)\n", t_trial / t_solve);
	printf("trial / fast      %.3f\n", t_trial / t_fast);
	printf("current mean      %.6g A, sd %.4g A (check %.3g)\n",
	       mc->stats[TOL_CURRENT].mean, mc->stats[TOL_CURRENT].sd,
	       sink / (2.0 * (double)trials));
	free(mc);
	return 0;
}
