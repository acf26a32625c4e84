/*
 * bench_costs.c - costs that should grow only as the work does, each at
 * three sizes with the time per item and the scaling exponent
 * (d log time / d log size between the smallest and the largest):
 *
 *   tolerance  one evaluation of a tolerance case over N network parts:
 *              every value set and the network reduced once
 *              (paramref_set_all), against one reduction per part
 *              (paramref_set each), the way it was;
 *   tunnel     the every-root scan of a tunnel diode, its constants
 *              derived once per scan, against deriving them at every
 *              sample (the model's own current(), as before);
 *   sweep      a sweep of a diode's source voltage over N points with
 *              its CSV rows formatted (shortest round-trip numbers),
 *              against what a point cost before: Newton continued from
 *              the previous point (the stepper, as the sweep ran it) and
 *              the row through printf("%.17g");
 *   format     one number in the shortest form that reads back, against
 *              printf("%.17g") and against the exact search it replaced;
 *   nodes      building a ladder network of N nodes (node lookup by
 *              name through a hash index).
 *
 * All times are CPU time of this thread, the best of several repeats.
 * Usage: bench_costs   (no arguments)
 */
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "core/models/models.h"
#include "core/network.h"
#include "core/paramref.h"
#include "core/quantity.h"
#include "core/solve.h"
#include "core/sweep.h"
#include "core/tolerance.h"

/* Seconds of CPU time of this thread. */
static double bench_now(void)
{
	struct timespec ts;
	clock_gettime(CLOCK_THREAD_CPUTIME_ID, &ts);
	return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

/* The exponent between (N0, T0) and (N1, T1). */
static double bench_exponent(double n0, double t0, double n1, double t1)
{
	return log(t1 / t0) / log(n1 / n0);
}

/*
 * A ladder of N resistor rungs from a 12 V source: nodes n0..nN, a
 * series resistor and a shunt resistor per rung, the terminals at the
 * last node and ground.  Values are invented.
 */
static struct network *bench_ladder(size_t n)
{
	struct network *net = network_create();
	char a[32], b[32], name[32];
	if (net == NULL)
		return NULL;
	network_add_part(net, "supply", NETWORK_VOLTAGE_SOURCE, 12.0, "ground",
	                 "n0");
	for (size_t k = 0; k < n; k++) {
		snprintf(a, sizeof a, "n%zu", k);
		snprintf(b, sizeof b, "n%zu", k + 1);
		snprintf(name, sizeof name, "rs%zu", k);
		network_add_part(net, name, NETWORK_RESISTOR, 100.0 + (double)k, a, b);
		snprintf(name, sizeof name, "rp%zu", k);
		network_add_part(net, name, NETWORK_RESISTOR, 4700.0 + 3.0 * (double)k,
		                 b, "ground");
	}
	snprintf(a, sizeof a, "n%zu", n);
	network_set_terminals(net, a, "ground");
	return net;
}

/* A diode fed from a ladder of N rungs, with every series rung varied. */
static void bench_tolerance(void)
{
	static const size_t sizes[3] = { 3, 6, 12 };
	double per_new[3], per_old[3];
	for (int s = 0; s < 3; s++) {
		size_t n = sizes[s];
		struct network *net = bench_ladder(n);
		struct problem pb = { .net = net };
		struct source_spec sp;
		char err[256];
		if (net == NULL || network_reduce(net, NULL, &sp, NULL) != NETWORK_OK ||
		    source_from_spec(&sp, &pb.src, err, sizeof err) != 0)
			abort();
		device_init(&pb.dev, &model_diode);
		pb.dev.p[DIODE_IS] = 2.7e-14;
		pb.dev.p[DIODE_N] = 1.41;
		struct paramref refs[12];
		double x[12];
		for (size_t k = 0; k < n; k++) {
			char key[64];
			snprintf(key, sizeof key, "source.network.rs%zu", k);
			if (paramref_find(&pb, key, &refs[k], err, sizeof err) != 0)
				abort();
			x[k] = (100.0 + (double)k) * 1.05;
		}
		struct network *scratch = network_copy(net);
		enum { REPS = 400 };
		double best_new = 1e300, best_old = 1e300;
		volatile double sink = 0.0;
		for (int rep = 0; rep < 5; rep++) {
			double t0 = bench_now();
			for (int r = 0; r < REPS; r++) {
				struct problem q = pb;
				struct op_point pt;
				if (paramref_set_all(&q, refs, x, n, scratch) == 0 &&
				    solve_fast(&q, 1e-12, &pt) == 0)
					sink += pt.i;
			}
			double t1 = bench_now();
			for (int r = 0; r < REPS; r++) {
				struct problem q = pb;
				struct op_point pt;
				int ok = 0;
				for (size_t k = 0; k < n; k++)
					ok |= paramref_set(&q, &refs[k], x[k]);
				if (ok == 0 && solve_fast(&q, 1e-12, &pt) == 0)
					sink += pt.i;
			}
			double t2 = bench_now();
			if (t1 - t0 < best_new)
				best_new = t1 - t0;
			if (t2 - t1 < best_old)
				best_old = t2 - t1;
		}
		per_new[s] = best_new / REPS;
		per_old[s] = best_old / REPS;
		printf("tolerance  %2zu parts: one evaluation %8.2f us (one reduction), "
		       "%8.2f us (one per part), %.1fx\n", n, 1e6 * per_new[s],
		       1e6 * per_old[s], per_old[s] / per_new[s]);
		network_destroy(scratch);
		network_destroy(net);
	}
	printf("tolerance  exponent over parts: %.2f (one reduction), %.2f "
	       "(one per part)\n",
	       bench_exponent(3, per_new[0], 12, per_new[2]),
	       bench_exponent(3, per_old[0], 12, per_old[2]));
}

/* The default tunnel diode behind 2.37 kohm from 0.95 V (invented). */
static void bench_tunnel(void)
{
	struct problem pb = { .net = NULL };
	struct source_spec sp;
	char err[256];
	source_spec_thevenin(&sp, 0.95, 2370.0);
	if (source_from_spec(&sp, &pb.src, err, sizeof err) != 0)
		abort();
	device_init(&pb.dev, &model_tunnel);
	struct bracket br[SOLVE_MAX_POINTS];
	double best = 1e300, best_old = 1e300;
	size_t nb = 0;
	volatile double sink = 0.0;
	for (int rep = 0; rep < 5; rep++) {
		double t0 = bench_now();
		for (int r = 0; r < 20; r++)
			nb = stepper_scan(&pb, br, SOLVE_MAX_POINTS);
		double t1 = bench_now();
		/* The same number of samples, each through current(), which
		 * derives the constants on every call. */
		for (int r = 0; r < 20; r++)
			for (int k = 0; k <= 4000; k++)
				sink += device_current(&pb.dev, -0.0325 + 1.0 * k / 4000);
		double t2 = bench_now();
		if ((t1 - t0) / 20 < best)
			best = (t1 - t0) / 20;
		if ((t2 - t1) / 20 < best_old)
			best_old = (t2 - t1) / 20;
	}
	printf("tunnel     scan: %.3f ms (%zu crossings); 4001 samples deriving "
	       "at each: %.3f ms, %.1fx\n", 1e3 * best, nb, 1e3 * best_old,
	       best_old / best);
}

/* A diode's source voltage swept over N points, rows formatted. */
static void bench_sweep(void)
{
	static const size_t sizes[3] = { 1000, 10000, 100000 };
	double per[3], per_old[3];
	char *buf = malloc(200);
	if (buf == NULL)
		abort();
	for (int s = 0; s < 3; s++) {
		struct problem pb = { .net = NULL };
		struct source_spec sp;
		char err[256];
		source_spec_thevenin(&sp, 5.0, 470.0);
		if (source_from_spec(&sp, &pb.src, err, sizeof err) != 0)
			abort();
		device_init(&pb.dev, &model_diode);
		pb.dev.p[DIODE_IS] = 2.7e-14;
		pb.dev.p[DIODE_N] = 1.41;
		pb.dev.p[DIODE_RS] = 0.37;
		struct solve_options o;
		solve_options_init(&o);
		struct sweep_spec spec = { .from = 0.5, .to = 23.7, .points = sizes[s],
		                           .scale = SWEEP_LINEAR };
		if (paramref_find(&pb, "vs", &spec.param, err, sizeof err) != 0)
			abort();
		double best = 1e300, best_old = 1e300;
		volatile size_t sink = 0;
		for (int rep = 0; rep < 3; rep++) {
			struct sweep_result res;
			double t0 = bench_now();
			if (sweep_run(&pb, &o, &spec, &res) != 0)
				abort();
			for (size_t k = 0; k < res.nrows; k++) {
				const struct sweep_row *r = &res.rows[k];
				const double f[4] = { r->value, r->v, r->i, r->p };
				for (int j = 0; j < 4; j++)
					sink += strlen(qty_format_exact(buf, 200, f[j]));
			}
			double t1 = bench_now();
			/* Before: Newton from the previous point, %.17g rows. */
			struct solve_options no = o;
			no.method = METHOD_NEWTON;
			double vprev = NAN;
			for (size_t k = 0; k < spec.points; k++) {
				struct problem q = pb;
				struct solve_result sr;
				double x = sweep_value(&spec, k);
				paramref_set(&q, &spec.param, x);
				no.start_v = vprev;
				if (solve_problem(&q, &no, &sr) != SOLVE_OK)
					continue;
				vprev = sr.pts[0].v;
				sink += (size_t)snprintf(buf, 200, "%.17g,%.17g,%.17g,%.17g", x,
				                         sr.pts[0].v, sr.pts[0].i,
				                         sr.pts[0].power);
			}
			double t2 = bench_now();
			if (t1 - t0 < best)
				best = t1 - t0;
			if (t2 - t1 < best_old)
				best_old = t2 - t1;
			sweep_result_fini(&res);
		}
		per[s] = best / (double)sizes[s];
		per_old[s] = best_old / (double)sizes[s];
		printf("sweep      %6zu points: %.3f us a point (closed form, shortest "
		       "numbers); before %.3f us (Newton continued, %%.17g), %.1fx\n",
		       sizes[s], 1e6 * per[s], 1e6 * per_old[s], per_old[s] / per[s]);
	}
	printf("sweep      exponent over points: %.2f\n",
	       bench_exponent(1000, per[0] * 1000, 100000, per[2] * 100000));
	free(buf);
}

/* One number: shortest round trip, %.17g, and the exact search. */
static void bench_format(void)
{
	enum { N = 200000 };
	double *v = malloc(N * sizeof *v);
	char buf[64];
	if (v == NULL)
		abort();
	uint64_t s = 0x2385a7c1e9u;
	for (int k = 0; k < N; k++) {
		s = s * 6364136223846793005u + 1442695040888963407u;
		v[k] = ldexp((double)(s >> 11), -53) * pow(10.0, (int)(s % 24) - 12);
	}
	volatile size_t sink = 0;
	double t0 = bench_now();
	for (int k = 0; k < N; k++)
		sink += strlen(qty_format_exact(buf, sizeof buf, v[k]));
	double t1 = bench_now();
	for (int k = 0; k < N; k++)
		sink += (size_t)snprintf(buf, sizeof buf, "%.17g", v[k]);
	double t2 = bench_now();
	/* The exact search: the first precision whose "%g" reads back. */
	for (int k = 0; k < N / 10; k++)
		for (int p = 1; p <= 17; p++) {
			snprintf(buf, sizeof buf, "%.*g", p, v[k]);
			if (strtod(buf, NULL) == v[k])
				break;
		}
	double t3 = bench_now();
	printf("format     one number: %.0f ns shortest, %.0f ns %%.17g, %.0f ns "
	       "by searching the precision\n", 1e9 * (t1 - t0) / N,
	       1e9 * (t2 - t1) / N, 1e9 * (t3 - t2) / (N / 10));
	free(v);
}

/* A ladder of N rungs: 2N + 1 parts, N + 2 nodes. */
static void bench_nodes(void)
{
	static const size_t sizes[3] = { 1000, 4000, 16000 };
	double per[3];
	for (int s = 0; s < 3; s++) {
		double best = 1e300;
		for (int rep = 0; rep < 3; rep++) {
			double t0 = bench_now();
			struct network *net = bench_ladder(sizes[s]);
			double t1 = bench_now();
			if (net == NULL)
				abort();
			network_destroy(net);
			if (t1 - t0 < best)
				best = t1 - t0;
		}
		per[s] = best / (double)sizes[s];
		printf("nodes      %5zu rungs: %.3f us a rung to build\n", sizes[s],
		       1e6 * per[s]);
	}
	printf("nodes      exponent over rungs: %.2f\n",
	       bench_exponent(1000, per[0] * 1000, 16000, per[2] * 16000));
}

int main(void)
{
	bench_tolerance();
	bench_tunnel();
	bench_sweep();
	bench_format();
	bench_nodes();
	return 0;
}
