/*
 * bench_montecarlo.c - cost of a Monte Carlo trial as a multiple of one
 * operating-point solve (a benchmark, not a test: it prints numbers).
 *
 * The case is an invented LED-like junction behind 2.2 kohm from 23.7 V
 * with four tolerances (vs, rs, saturation_current, temperature).  One
 * solve is solve_problem on the nominal case (and, for comparison, the
 * fast unique solve solve_fast that a trial of a monotone device uses, and
 * solve_problem on each trial's own drawn parameters);
 * one trial draws the
 * parameters, solves and records the outputs, and the run ends with the
 * statistics, percentiles and histograms.
 *
 * Times are CPU time of the process (CLOCK_PROCESS_CPUTIME_ID).  The
 * machine may be shared: besides one run of TRIALS trials against
 * TRIALS solves, the same work is done in 20 interleaved blocks and the
 * fastest block of each kind is compared, which a busy machine disturbs
 * least.
 *
 * Usage: bench_montecarlo [TRIALS]   (default 1000000)
 */
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <time.h>

#include "core/models/models.h"
#include "core/solve.h"
#include "core/tolerance.h"

/*
 * Seconds of CPU time used by this process: on a shared machine the time
 * spent waiting for a core does not count, only the work.
 */
static double bench_now(void)
{
	struct timespec ts;
	clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &ts);
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
	struct problem pb = { .net = NULL }; /* no network */
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

	/* One solve_problem per trial's own parameters: the same draws as a
	 * trial makes, done beforehand, so only the solves are timed. */
	double *xs = malloc(sizeof(double) * c.nitems * trials);
	if (xs == NULL) {
		free(mc);
		return 1;
	}
	struct tol_rng rng;
	tol_rng_seed(&rng, 4321);
	for (size_t k = 0; k < trials; k++)
		for (size_t j = 0; j < c.nitems; j++) {
			const struct tol_item *it = &c.items[j];
			double x;
			if (it->dist == TOL_UNIFORM)
				x = it->lo + (it->hi - it->lo) * tol_rng_uniform(&rng);
			else
				do
					x = 0.5 * (it->lo + it->hi) +
					    (it->hi - it->lo) / 6.0 * tol_rng_normal(&rng);
				while (paramref_check(&c.pb, &it->param, x, NULL, 0) != 0);
			xs[k * c.nitems + j] = x;
		}
	t0 = bench_now();
	for (size_t k = 0; k < trials; k++) {
		struct problem q = pb;
		struct solve_result res;
		for (size_t j = 0; j < c.nitems; j++)
			paramref_set(&q, &c.items[j].param, xs[k * c.nitems + j]);
		if (solve_problem(&q, &o, &res) != SOLVE_OK)
			return 1;
		sink += res.pts[0].i;
	}
	double t_varied = (bench_now() - t0) / (double)trials;
	free(xs);
	t0 = bench_now();
	if (tol_monte_carlo(&c, trials, 12345, 50, NULL, 0, mc, err, sizeof err)) {
		fprintf(stderr, "bench_montecarlo: %s\n", err);
		free(mc);
		return 1;
	}
	double t_trial = (bench_now() - t0) / (double)trials;
	size_t whole_failed = mc->failed;
	/* Interleaved blocks: the fastest of each kind. */
	enum { BLOCKS = 20 };
	size_t bn = trials / BLOCKS > 0 ? trials / BLOCKS : 1;
	double best_solve = 1e300, best_trial = 1e300;
	for (int b = 0; b < BLOCKS; b++) {
		t0 = bench_now();
		for (size_t k = 0; k < bn; k++) {
			struct problem q = pb;
			struct solve_result res;
			q.src.voc = 23.7 + 1e-9 * (double)(k & 1023);
			q.src.isc = q.src.voc / q.src.r;
			if (solve_problem(&q, &o, &res) != SOLVE_OK)
				return 1;
			sink += res.pts[0].i;
		}
		double ts = (bench_now() - t0) / (double)bn;
		t0 = bench_now();
		if (tol_monte_carlo(&c, bn, 777 + (uint64_t)b, 50, NULL, 0, mc, err,
		                    sizeof err)) {
			free(mc);
			return 1;
		}
		double tt = (bench_now() - t0) / (double)bn;
		if (ts < best_solve)
			best_solve = ts;
		if (tt < best_trial)
			best_trial = tt;
	}
	printf("whole runs of %zu (failed trials %zu)\n", trials, whole_failed);
	printf("one solve         %.3f us\n", 1e6 * t_solve);
	printf("one solve_fast    %.3f us\n", 1e6 * t_fast);
	printf("one trial         %.3f us\n", 1e6 * t_trial);
	printf("trial / solve     %.3f (target <= 1.5)\n", t_trial / t_solve);
	printf("trial / fast      %.3f\n", t_trial / t_fast);
	printf("one solve of the trial's own parameters %.3f us\n",
	       1e6 * t_varied);
	printf("trial / that solve %.3f (target <= 1.5)\n", t_trial / t_varied);
	printf("fastest of %d interleaved blocks of %zu\n", BLOCKS, bn);
	printf("one solve         %.3f us\n", 1e6 * best_solve);
	printf("one trial         %.3f us\n", 1e6 * best_trial);
	printf("trial / solve     %.3f (target <= 1.5)\n", best_trial / best_solve);
	printf("last block: current mean %.6g A, sd %.4g A (check %.3g)\n",
	       mc->stats[TOL_CURRENT].mean, mc->stats[TOL_CURRENT].sd,
	       sink / (4.0 * (double)trials));
	free(mc);
	return 0;
}
