/*
 * bench_costs.c - costs that should grow only as the work does.  Each
 * line gives the time per item at one of three sizes; each group ends
 * with the scaling exponent fitted over the three (the least-squares
 * slope of log time against log size: 1 is linear):
 *
 *   tolerance  one evaluation of a tolerance case over N network parts
 *              (3, 6, 12): every value set and the network reduced once
 *              (paramref_set_all), against one reduction per part
 *              (paramref_set each, the way it was); exponent of the time
 *              per evaluation over N;
 *   corners    the worst case over N network parts and the check for a
 *              fold inside the box, per corner (2^N corners), against the
 *              fold check setting the parts one by one (as it did);
 *   tunnel     N samples of a tunnel diode's curve (1000, 4000, 16000)
 *              with its constants derived once (prepare, current_k),
 *              kept by the device (device_current after problem_bind),
 *              and derived at every sample (current(), as the every-root
 *              scan did); the scan itself; a sweep of N points through
 *              its folds, per point;
 *   sweep      a diode's source voltage swept over N points (1000, 10^4,
 *              10^5) with its CSV numbers formatted, against what a point
 *              cost before (Newton continued from the previous point and
 *              printf("%.17g")); and an n-channel MOSFET stage (a curve
 *              that is scanned at every point) over N points (200, 800,
 *              3200), against each previous point continued by a Newton
 *              solve of its own, which scans again (as it was);
 *   format     N numbers (10^4, 10^5, 10^6) in the shortest form that
 *              reads back, against printf("%.17g") and against the exact
 *              search it replaced (the first "%.*g" that reads back);
 *   nodes      building a ladder network of N rungs (1000, 4000, 16000;
 *              node lookup by name through a hash index).
 *
 * All times are CPU time of this thread, the best of several repeats.
 * Usage: bench_costs   (no arguments; about half a minute)
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
#include "core/stability.h"
#include "core/sweep.h"
#include "core/tolerance.h"

/* Seconds of CPU time of this thread. */
static double bench_now(void)
{
	struct timespec ts;
	clock_gettime(CLOCK_THREAD_CPUTIME_ID, &ts);
	return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

/* The least-squares slope of log T against log N over three points. */
static double bench_exponent(const double *n, const double *t)
{
	double mx = 0.0, my = 0.0, sxx = 0.0, sxy = 0.0;
	for (int k = 0; k < 3; k++) {
		mx += log(n[k]) / 3.0;
		my += log(t[k]) / 3.0;
	}
	for (int k = 0; k < 3; k++) {
		double dx = log(n[k]) - mx;
		sxx += dx * dx;
		sxy += dx * (log(t[k]) - my);
	}
	return sxy / sxx;
}

/* Least-squares exponents of three total times T_K = PER_K * N_K. */
static double bench_exponent_per(const double *n, const double *per)
{
	double t[3];
	for (int k = 0; k < 3; k++)
		t[k] = per[k] * n[k];
	return bench_exponent(n, t);
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

/* A diode fed from a ladder NET (its problem into PB). */
static void bench_ladder_problem(struct network *net, struct problem *pb)
{
	struct source_spec sp;
	char err[256];
	memset(pb, 0, sizeof *pb);
	pb->net = net;
	if (net == NULL || network_reduce(net, NULL, &sp, NULL) != NETWORK_OK ||
	    source_from_spec(&sp, &pb->src, err, sizeof err) != 0)
		abort();
	device_init(&pb->dev, &model_diode);
	pb->dev.p[DIODE_IS] = 2.7e-14;
	pb->dev.p[DIODE_N] = 1.41;
	problem_bind(pb);
}

/* One evaluation with every series rung varied, at 3, 6 and 12 parts. */
static void bench_tolerance(void)
{
	static const double sizes[3] = { 3, 6, 12 };
	double per_new[3], per_old[3];
	for (int s = 0; s < 3; s++) {
		size_t n = (size_t)sizes[s];
		struct network *net = bench_ladder(n);
		struct problem pb;
		bench_ladder_problem(net, &pb);
		char err[256];
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
			best_new = fmin(best_new, t1 - t0);
			best_old = fmin(best_old, t2 - t1);
		}
		per_new[s] = best_new / REPS;
		per_old[s] = best_old / REPS;
		printf("tolerance  %2zu parts: one evaluation %8.2f us (one reduction), "
		       "%8.2f us (one per part), %.1fx\n", n, 1e6 * per_new[s],
		       1e6 * per_old[s], per_old[s] / per_new[s]);
		network_destroy(scratch);
		network_destroy(net);
	}
	printf("tolerance  exponent of an evaluation over parts: %.2f (one "
	       "reduction), %.2f (one per part)\n",
	       bench_exponent(sizes, per_new), bench_exponent(sizes, per_old));
}

/* The fold check the way it was: each corner's parts set one by one. */
static size_t bench_fold_old(const struct tol_case *c)
{
	size_t corners = (size_t)1 << c->nitems, points = 0;
	for (size_t m = 0; m < corners; m++) {
		struct problem q = c->pb;
		bool ok = true;
		for (size_t k = 0; k < c->nitems && ok; k++) {
			const struct tol_item *it = &c->items[k];
			ok = paramref_set(&q, &it->param,
			                  (m >> k) & 1u ? it->hi : it->lo) == 0;
		}
		struct solve_result res;
		if (ok && solve_problem(&q, &c->opts, &res) == SOLVE_OK)
			points += res.n;
	}
	return points;
}

/* The worst case and the fold check per corner, at 3, 6 and 12 parts. */
static void bench_corners(void)
{
	static const double sizes[3] = { 3, 6, 12 };
	double per[3], per_fold[3], per_fold_old[3];
	for (int s = 0; s < 3; s++) {
		size_t n = (size_t)sizes[s];
		struct network *net = bench_ladder(n);
		struct problem pb;
		bench_ladder_problem(net, &pb);
		struct solve_options o;
		solve_options_init(&o);
		struct tol_case c;
		tol_case_init(&c, &pb, SOURCE_THEVENIN, &o);
		char err[256], key[64], msg[400];
		for (size_t k = 0; k < n; k++) {
			double x = 100.0 + (double)k;
			snprintf(key, sizeof key, "source.network.rs%zu", k);
			if (tol_case_add(&c, key, 0.95 * x, 1.05 * x, TOL_UNIFORM, err,
			                 sizeof err) != 0)
				abort();
		}
		double corners = (double)((size_t)1 << n);
		int reps = n < 12 ? 20 : 2;
		double best = 1e300, best_fold = 1e300, best_old = 1e300;
		volatile size_t sink = 0;
		for (int rep = 0; rep < 3; rep++) {
			struct tol_worst w;
			double t0 = bench_now();
			for (int r = 0; r < reps; r++)
				if (tol_worst_case(&c, &w, err, sizeof err) == 0)
					sink += w.corners;
			double t1 = bench_now();
			for (int r = 0; r < reps; r++)
				sink += stability_box_fold(&c, msg, sizeof msg);
			double t2 = bench_now();
			for (int r = 0; r < reps; r++)
				sink += bench_fold_old(&c);
			double t3 = bench_now();
			best = fmin(best, (t1 - t0) / reps);
			best_fold = fmin(best_fold, (t2 - t1) / reps);
			best_old = fmin(best_old, (t3 - t2) / reps);
		}
		per[s] = best / corners;
		per_fold[s] = best_fold / corners;
		per_fold_old[s] = best_old / corners;
		printf("corners    %2zu parts, %4.0f corners: worst case %.2f us a "
		       "corner; fold check %.2f us a corner, before %.2f us, %.1fx\n",
		       n, corners, 1e6 * per[s], 1e6 * per_fold[s],
		       1e6 * per_fold_old[s], per_fold_old[s] / per_fold[s]);
		network_destroy(net);
	}
	printf("corners    exponent of a corner over parts: %.2f (worst case), "
	       "%.2f (fold check), %.2f (fold check before)\n",
	       bench_exponent(sizes, per), bench_exponent(sizes, per_fold),
	       bench_exponent(sizes, per_fold_old));
}

/* The default tunnel diode behind RS from VS into PB (values invented). */
static void bench_tunnel_problem(struct problem *pb, double vs, double rs)
{
	struct source_spec sp;
	char err[256];
	memset(pb, 0, sizeof *pb);
	source_spec_thevenin(&sp, vs, rs);
	if (source_from_spec(&sp, &pb->src, err, sizeof err) != 0)
		abort();
	device_init(&pb->dev, &model_tunnel);
}

/* The tunnel diode's curve: constants once or at every sample; sweeps. */
static void bench_tunnel(void)
{
	struct problem pb, kept;
	bench_tunnel_problem(&pb, 0.95, 2370.0);
	kept = pb;
	problem_bind(&kept); /* the device keeps its constants */
	static const double sizes[3] = { 1000, 4000, 16000 };
	double per_once[3], per_each[3], per_kept[3];
	volatile double sink = 0.0;
	for (int s = 0; s < 3; s++) {
		int n = (int)sizes[s];
		double best_once = 1e300, best_each = 1e300, best_kept = 1e300;
		for (int rep = 0; rep < 5; rep++) {
			double t0 = bench_now();
			double k[MODEL_MAX_DERIVED];
			if (model_tunnel.prepare(pb.dev.p, k) != 0)
				abort();
			for (int j = 0; j < n; j++)
				sink += model_tunnel.current_k(pb.dev.p, k,
				                               -0.0325 + 1.0 * j / n);
			double t1 = bench_now();
			for (int j = 0; j < n; j++)
				sink += device_current(&pb.dev, -0.0325 + 1.0 * j / n);
			double t2 = bench_now();
			for (int j = 0; j < n; j++)
				sink += device_current(&kept.dev, -0.0325 + 1.0 * j / n);
			double t3 = bench_now();
			best_once = fmin(best_once, t1 - t0);
			best_each = fmin(best_each, t2 - t1);
			best_kept = fmin(best_kept, t3 - t2);
		}
		per_once[s] = best_once / n;
		per_each[s] = best_each / n;
		per_kept[s] = best_kept / n;
		printf("tunnel     %5d samples: %.1f ns a sample (constants once), "
		       "%.1f ns (device_current, kept by the device), %.1f ns "
		       "(derived at each), %.1fx\n", n, 1e9 * per_once[s],
		       1e9 * per_kept[s], 1e9 * per_each[s],
		       per_each[s] / per_once[s]);
	}
	printf("tunnel     exponent over samples: %.2f (once), %.2f (kept), %.2f "
	       "(at each)\n", bench_exponent_per(sizes, per_once),
	       bench_exponent_per(sizes, per_kept),
	       bench_exponent_per(sizes, per_each));
	struct bracket br[SOLVE_MAX_POINTS];
	size_t nb = 0;
	double best = 1e300;
	for (int rep = 0; rep < 5; rep++) {
		double t0 = bench_now();
		for (int r = 0; r < 200; r++)
			nb = stepper_scan(&pb, br, SOLVE_MAX_POINTS);
		best = fmin(best, (bench_now() - t0) / 200);
	}
	printf("tunnel     the every-root scan: %.2f us (%zu crossings, cut at "
	       "the inflection); 4001 samples deriving at each cost %.0f us\n",
	       1e6 * best, nb, 1e6 * 4001 * per_each[0]);
	/* A sweep of VS through both folds behind 470 ohm. */
	static const double points[3] = { 500, 2000, 8000 };
	double per[3];
	struct problem sw;
	bench_tunnel_problem(&sw, 0.45, 470.0);
	struct solve_options o;
	solve_options_init(&o);
	char err[256];
	for (int s = 0; s < 3; s++) {
		struct sweep_spec spec = { .from = 0.0, .to = 0.9,
		                           .points = (size_t)points[s],
		                           .scale = SWEEP_LINEAR };
		if (paramref_find(&sw, "vs", &spec.param, err, sizeof err) != 0)
			abort();
		double b = 1e300;
		size_t rows = 0, folds = 0;
		for (int rep = 0; rep < 3; rep++) {
			struct sweep_result res;
			double t0 = bench_now();
			if (sweep_run(&sw, &o, &spec, &res) != 0)
				abort();
			b = fmin(b, bench_now() - t0);
			rows = res.nrows;
			folds = res.nfolds;
			sweep_result_fini(&res);
		}
		per[s] = b / points[s];
		printf("tunnel     sweep of %4.0f points (%zu rows, %zu folds): "
		       "%.2f us a point\n", points[s], rows, folds, 1e6 * per[s]);
	}
	printf("tunnel     exponent over sweep points: %.2f\n",
	       bench_exponent_per(points, per));
}

/* A diode's source voltage swept over N points, rows formatted. */
static void bench_sweep(void)
{
	static const double sizes[3] = { 1000, 10000, 100000 };
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
		struct sweep_spec spec = { .from = 0.5, .to = 23.7,
		                           .points = (size_t)sizes[s],
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
			best = fmin(best, t1 - t0);
			best_old = fmin(best_old, t2 - t1);
			sweep_result_fini(&res);
		}
		per[s] = best / sizes[s];
		per_old[s] = best_old / sizes[s];
		printf("sweep      diode %6.0f points: %.3f us a point (closed form, "
		       "shortest numbers); before %.3f us (Newton continued, "
		       "%%.17g), %.1fx\n", sizes[s], 1e6 * per[s], 1e6 * per_old[s],
		       per_old[s] / per[s]);
	}
	printf("sweep      diode exponent over points: %.2f (before %.2f)\n",
	       bench_exponent_per(sizes, per), bench_exponent_per(sizes, per_old));
	free(buf);
}

/*
 * An n-channel MOSFET stage swept over VS: the curve is scanned at every
 * point; before, each previous point was also continued by a Newton solve
 * of its own, which scanned the problem again.  Values invented.
 */
static void bench_sweep_scanned(void)
{
	static const double sizes[3] = { 200, 800, 3200 };
	double per[3], per_old[3];
	struct problem pb = { .net = NULL };
	struct source_spec sp;
	char err[256];
	source_spec_thevenin(&sp, 4.7, 1500.0);
	if (source_from_spec(&sp, &pb.src, err, sizeof err) != 0)
		abort();
	device_init(&pb.dev, &model_nmos);
	pb.dev.p[FET_K] = 2.2e-3;
	pb.dev.p[FET_VTH] = 1.35;
	pb.dev.p[FET_VDD] = 12.0;
	pb.dev.p[FET_RD] = 1.8e3;
	problem_bind(&pb);
	struct solve_options o;
	solve_options_init(&o);
	for (int s = 0; s < 3; s++) {
		struct sweep_spec spec = { .from = 1.0, .to = 9.0,
		                           .points = (size_t)sizes[s],
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
			sink += res.nrows;
			sweep_result_fini(&res);
			double t1 = bench_now();
			/* Before: the scan, then a Newton solve from the point. */
			struct solve_options no = o;
			double vprev = NAN;
			for (size_t k = 0; k < spec.points; k++) {
				struct problem q = pb;
				struct solve_result sr, one;
				paramref_set(&q, &spec.param, sweep_value(&spec, k));
				no.method = METHOD_AUTO;
				no.start_v = NAN;
				if (solve_problem(&q, &no, &sr) == SOLVE_OK)
					sink += sr.n;
				no.method = METHOD_NEWTON;
				no.start_v = vprev;
				if (k > 0 && solve_problem(&q, &no, &one) == SOLVE_OK)
					sink += one.n;
				vprev = sr.n > 0 ? sr.pts[0].v : NAN;
			}
			double t2 = bench_now();
			best = fmin(best, t1 - t0);
			best_old = fmin(best_old, t2 - t1);
		}
		per[s] = best / sizes[s];
		per_old[s] = best_old / sizes[s];
		printf("sweep      nmos  %6.0f points: %.1f us a point (one scan); "
		       "before %.1f us (a second scan to continue), %.1fx\n",
		       sizes[s], 1e6 * per[s], 1e6 * per_old[s], per_old[s] / per[s]);
	}
	printf("sweep      nmos exponent over points: %.2f (before %.2f)\n",
	       bench_exponent_per(sizes, per), bench_exponent_per(sizes, per_old));
}

/* N numbers: shortest round trip, %.17g, and the exact search. */
static void bench_format(void)
{
	static const double sizes[3] = { 1e4, 1e5, 1e6 };
	enum { NMAX = 1000000 };
	double *v = malloc(NMAX * sizeof *v);
	char buf[64];
	if (v == NULL)
		abort();
	uint64_t s = 0x2385a7c1e9u;
	for (int k = 0; k < NMAX; k++) {
		s = s * 6364136223846793005u + 1442695040888963407u;
		v[k] = ldexp((double)(s >> 11), -53) * pow(10.0, (int)(s % 24) - 12);
	}
	double per[3], per17[3], per_search[3];
	volatile size_t sink = 0;
	for (int z = 0; z < 3; z++) {
		int n = (int)sizes[z];
		double b0 = 1e300, b1 = 1e300, b2 = 1e300;
		for (int rep = 0; rep < 3; rep++) {
			double t0 = bench_now();
			for (int k = 0; k < n; k++)
				sink += strlen(qty_format_exact(buf, sizeof buf, v[k]));
			double t1 = bench_now();
			for (int k = 0; k < n; k++)
				sink += (size_t)snprintf(buf, sizeof buf, "%.17g", v[k]);
			double t2 = bench_now();
			/* The exact search: the first precision whose "%g" reads
			 * back, over a tenth of the numbers. */
			for (int k = 0; k < n / 10; k++)
				for (int p = 1; p <= 17; p++) {
					snprintf(buf, sizeof buf, "%.*g", p, v[k]);
					if (strtod(buf, NULL) == v[k])
						break;
				}
			double t3 = bench_now();
			b0 = fmin(b0, t1 - t0);
			b1 = fmin(b1, t2 - t1);
			b2 = fmin(b2, t3 - t2);
		}
		per[z] = b0 / n;
		per17[z] = b1 / n;
		per_search[z] = b2 / (n / 10);
		printf("format     %7d numbers: %.0f ns a number shortest, %.0f ns "
		       "%%.17g (%.1fx), %.0f ns by searching the precision\n", n,
		       1e9 * per[z], 1e9 * per17[z], per17[z] / per[z],
		       1e9 * per_search[z]);
	}
	printf("format     exponent over numbers: %.2f (shortest), %.2f "
	       "(%%.17g)\n", bench_exponent_per(sizes, per),
	       bench_exponent_per(sizes, per17));
	free(v);
}

/* A ladder of N rungs: 2N + 1 parts, N + 2 nodes. */
static void bench_nodes(void)
{
	static const double sizes[3] = { 1000, 4000, 16000 };
	double per[3];
	for (int s = 0; s < 3; s++) {
		double best = 1e300;
		for (int rep = 0; rep < 3; rep++) {
			double t0 = bench_now();
			struct network *net = bench_ladder((size_t)sizes[s]);
			double t1 = bench_now();
			if (net == NULL)
				abort();
			network_destroy(net);
			best = fmin(best, t1 - t0);
		}
		per[s] = best / sizes[s];
		printf("nodes      %5.0f rungs: %.3f us a rung to build\n", sizes[s],
		       1e6 * per[s]);
	}
	printf("nodes      exponent over rungs: %.2f\n",
	       bench_exponent_per(sizes, per));
}

/* Run every group. */
int main(void)
{
	bench_tolerance();
	bench_corners();
	bench_tunnel();
	bench_sweep();
	bench_sweep_scanned();
	bench_format();
	bench_nodes();
	return 0;
}
