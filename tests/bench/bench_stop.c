/*
 * bench_stop.c - how often long work looks at its stop flag, and how soon
 * it ends once the flag is set (a benchmark, not a test: it prints
 * numbers).
 *
 * progress.h promises that a Monte Carlo run, a worst case, the search
 * for folds in a tolerance box and a sweep read their stop flag at every
 * evaluation, well under 50 ms apart, so that a signal or a key stops the
 * front end's work at once.  For slow cases (a self-heated transistor, a
 * self-heated thermistor, a tunnel diode behind a long load line; the
 * values are invented) this prints the longest wall-clock gap between two
 * looks (the report is called at each), and the time from setting the
 * flag (after 0.2 s) to the call's return.
 *
 * Times are wall-clock (CLOCK_MONOTONIC): on a shared machine they
 * include waiting for a core, so a loaded machine shows longer gaps.
 *
 * Usage: bench_stop
 */
#include <signal.h>
#include <stdio.h>
#include <string.h>
#include <time.h>

#include "core/models/models.h"
#include "core/progress.h"
#include "core/stability.h"
#include "core/sweep.h"
#include "core/tolerance.h"

/* Seconds on the monotonic clock. */
static double bench_now(void)
{
	struct timespec ts;
	clock_gettime(CLOCK_MONOTONIC, &ts);
	return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

/* What the report measures. */
struct bench_watch {
	volatile sig_atomic_t flag;
	double start, last, gap, set_at, stop_after;
	unsigned long looks;
};

/* The report: the gap since the last look; set the flag when asked. */
static void bench_report(void *ctx, double done)
{
	(void)done;
	struct bench_watch *w = ctx;
	double t = bench_now();
	if (t - w->last > w->gap)
		w->gap = t - w->last;
	w->last = t;
	w->looks++;
	if (w->stop_after > 0.0 && !w->flag && t - w->start >= w->stop_after) {
		w->flag = 1;
		w->set_at = t;
	}
}

/* Start watching: STOP_AFTER seconds until the flag is set (0: never). */
static void bench_watch_start(struct bench_watch *w, struct progress *p,
                              double stop_after)
{
	memset(w, 0, sizeof *w);
	w->start = w->last = bench_now();
	w->stop_after = stop_after;
	p->stop = &w->flag;
	p->report = bench_report;
	p->ctx = w;
}

/* One case: a device, a source and two tolerances. */
struct bench_case {
	const char *name;
	const struct model_type *type;
	const char *key[8];
	double value[8];
	double vs, rs;
	const char *tol[2];     /* the keys varied (+-5 %) */
	const char *sweep;      /* swept over +-20 % */
};

/* Build case BC into C; 0 or -1. */
static int bench_build(const struct bench_case *bc, struct tol_case *c)
{
	memset(c, 0, sizeof *c);
	c->pb.net = NULL;
	device_init(&c->pb.dev, bc->type);
	for (int k = 0; k < 8 && bc->key[k] != NULL; k++) {
		int j = model_param_index(bc->type, bc->key[k]);
		if (j < 0)
			return -1;
		c->pb.dev.p[j] = bc->value[k];
	}
	struct source_spec sp;
	char err[256];
	source_spec_thevenin(&sp, bc->vs, bc->rs);
	if (source_from_spec(&sp, &c->pb.src, err, sizeof err) != 0 ||
	    device_validate(&c->pb.dev, err, sizeof err) != 0) {
		fprintf(stderr, "%s: %s\n", bc->name, err);
		return -1;
	}
	c->form = SOURCE_THEVENIN;
	solve_options_init(&c->opts);
	c->nitems = 2;
	for (size_t k = 0; k < 2; k++) {
		struct tol_item *it = &c->items[k];
		if (paramref_find(&c->pb, bc->tol[k], &it->param, err, sizeof err) != 0)
			return -1;
		double x = paramref_get(&c->pb, &it->param);
		it->lo = 0.95 * x;
		it->hi = 1.05 * x;
		it->dist = TOL_UNIFORM;
	}
	return 0;
}

/* Print one line: the job, its longest gap and how soon it stopped. */
static void bench_line(const char *name, const char *job,
                       const struct bench_watch *run,
                       const struct bench_watch *stop, double ended)
{
	printf("%-22s %-12s looks %8lu  longest gap %7.3f ms", name, job,
	       run->looks, 1e3 * run->gap);
	if (stop->set_at > 0.0)
		printf("  stopped %7.3f ms after the flag", 1e3 * (ended - stop->set_at));
	printf("\n");
}

/* Run the benchmark. */
int main(void)
{
	static const struct bench_case cases[] = {
		{ "self-heated npn", &model_npn,
		  { "saturation_current", "current_gain", "emitter_resistance",
		    "collector_resistance", "supply_voltage", "reference_temperature",
		    "thermal_resistance", "ambient_temperature" },
		  { 150e-15, 90.0, 1.0, 2.2, 12.0, 25.0, 33.0, 40.0 }, 0.75, 33.0,
		  { "rs", "vs" }, "vs" },
		{ "self-heated NTC", &model_thermistor,
		  { "resistance_at_reference", "beta", "dissipation_constant" },
		  { 10e3, 3977.0, 1.5e-3 }, 40.0, 2e3, { "rs", "beta" }, "beta" },
		{ "tunnel, 3 kV 10 Mohm", &model_tunnel, { NULL }, { 0.0 }, 3e3, 10e6,
		  { "rs", "vs" }, "rs" },
	};
	for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
		const struct bench_case *bc = &cases[k];
		struct tol_case c;
		if (bench_build(bc, &c) != 0) {
			fprintf(stderr, "bench_stop: %s: cannot build the case\n",
			        bc->name);
			return 1;
		}
		char err[600];
		struct progress p;
		struct bench_watch run, stop;
		/* Monte Carlo: 2000 trials whole, then 10^6 stopped at 0.2 s. */
		static struct tol_mc mc;
		bench_watch_start(&run, &p, 0.0);
		tol_monte_carlo_watched(&c, 2000, 1, 20, NULL, 0, &mc, &p, err,
		                        sizeof err);
		bench_watch_start(&stop, &p, 0.2);
		tol_monte_carlo_watched(&c, 1000000, 1, 20, NULL, 0, &mc, &p, err,
		                        sizeof err);
		bench_line(bc->name, "Monte Carlo", &run, &stop, bench_now());
		/* The worst case. */
		struct tol_worst w;
		bench_watch_start(&run, &p, 0.0);
		tol_worst_case_watched(&c, &w, &p, err, sizeof err);
		double whole = bench_now() - run.start;
		bench_watch_start(&stop, &p, 0.5 * whole);
		tol_worst_case_watched(&c, &w, &p, err, sizeof err);
		bench_line(bc->name, "worst case", &run, &stop, bench_now());
		/* The folds over the box's corners. */
		bench_watch_start(&run, &p, 0.0);
		stability_box_fold_watched(&c, err, sizeof err, &p);
		bench_line(bc->name, "box folds", &run, &run, bench_now());
		/* A sweep of 2000 points, then of 10^6 stopped at 0.2 s. */
		struct sweep_spec sp = { .points = 2000, .scale = SWEEP_LINEAR };
		if (paramref_find(&c.pb, bc->sweep, &sp.param, err, sizeof err) != 0)
			return 1;
		double x = paramref_get(&c.pb, &sp.param);
		sp.from = 0.8 * x;
		sp.to = 1.2 * x;
		struct sweep_result res;
		bench_watch_start(&run, &p, 0.0);
		if (sweep_run_watched(&c.pb, &c.opts, &sp, &res, &p) == 0)
			sweep_result_fini(&res);
		sp.points = 1000000;
		bench_watch_start(&stop, &p, 0.2);
		if (sweep_run_watched(&c.pb, &c.opts, &sp, &res, &p) == 0)
			sweep_result_fini(&res);
		bench_line(bc->name, "sweep", &run, &stop, bench_now());
	}
	return 0;
}
