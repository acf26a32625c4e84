/*
 * bench_solve.c - the solver against its honest limits, on random diode
 * circuits: the default solve (solve_problem, on problems whose device
 * was checked once when they were built, as session_problem and
 * paramref_set do) and its fast entry; a fast Wright omega closed form written here, with no
 * validation, verification or r_d (the physical limit of this problem);
 * the Lambert W closed form with GSL's W0; GSL's Brent-Dekker with the
 * tight bracket our solver would use and with the bracket a user would
 * give, [0, VS], on a residual capped against overflow; and a Monte Carlo
 * trial against a solve of that trial's own parameters.
 *
 * Usage: bench_solve [circuits [trials]]   (default 1000000 and 200000)
 *
 * The machine may be shared, so the work is cut into blocks of 1024
 * circuits (small enough to stay in a core's cache: a problem struct is
 * about 470 bytes), each timing every method on the same circuits in turn (CPU
 * time of this thread), and each ratio is the median over the blocks of
 * the ratio within a block; the Monte Carlo trials run in 9 blocks.  The
 * output ends with lines "ratio NAME VALUE".
 * The circuits are those of the solver tests (tests/core/core_check.h),
 * made outside the timed loops.
 */
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_roots.h>

#define CORE_CHECK_GSL
#include "core_check.h"

#include "core/models/models.h"
#include "core/solve.h"
#include "core/tolerance.h"

/* The methods timed. */
enum bench_method {
	BENCH_DEFAULT,     /* solve_problem, METHOD_AUTO */
	BENCH_FAST,        /* solve_fast */
	BENCH_OMEGA,       /* the closed form below */
	BENCH_LAMBERT,     /* closed form with gsl_sf_lambert_W0 */
	BENCH_BRENT_TIGHT, /* GSL brent on our bracket */
	BENCH_BRENT_USER,  /* GSL brent on [0, VS], residual capped */
	BENCH_COUNT
};

static const char *const bench_names[BENCH_COUNT] = {
	"solve_problem (default)", "solve_fast",
	"omega closed form", "Lambert W0 closed form", "GSL brent, tight bracket",
	"GSL brent, [0, VS]",
};

/* One circuit in the form each method needs. */
struct bench_case {
	struct problem pb;
	double is, nvt, r, vs;   /* junction view: r = source + series */
};

/* Seconds of CPU time of this thread (waiting for a core does not count). */
static double bench_now(void)
{
	struct timespec ts;
	clock_gettime(CLOCK_THREAD_CPUTIME_ID, &ts);
	return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

/* ---------------------------------------------------------------------- */
/* The limit: Wright omega, as fast as it goes                             */

/*
 * ln x to about 1e-9, for starting values only: x = 2^e m with m in
 * [sqrt(1/2), sqrt(2)), ln m = 2 atanh(s), s = (m - 1)/(m + 1), |s| <
 * 0.172, to s^9 (common practice).  X must be a positive normal number.
 */
static double bench_log_rough(double x)
{
	uint64_t bits;
	memcpy(&bits, &x, sizeof bits);
	int e = (int)((bits >> 52) & 0x7ff) - 1023;
	bits = (bits & 0x000fffffffffffffu) | 0x3ff0000000000000u;
	double m;
	memcpy(&m, &bits, sizeof m);
	if (m > 1.4142135623730951) {
		m *= 0.5;
		e++;
	}
	double s = (m - 1.0) / (m + 1.0), s2 = s * s;
	double atanh_ = s * (1.0 + s2 * (1.0 / 3 + s2 * (1.0 / 5 + s2 * (1.0 / 7 +
	                                                               s2 / 9))));
	return e * 0.6931471805599453 + 2.0 * atanh_;
}

/*
 * omega(x), w + ln w = x, to a few ulp: e^x below -37.5; else a start
 * (the series of W(e^x) below -2, the Taylor series about 1, or the
 * asymptotic expansion through 1/x^4 above 2.5 with a rough ln x;
 * Corless et al., Adv. Comput. Math. 5, 1996) and Fritsch-Shafer-Crowley
 * steps (CACM 16(2), 1973): one where the start is good to 1e-4, which
 * from x = 5 it is, two below.  The step is what makes the closed form
 * good to 1e-15: the expansion alone is 1e-13 at x = 400.
 */
static double bench_omega(double x)
{
	double w;
	int steps = 1;
	if (x < -37.5)
		return exp(x);
	if (x < -2.0) {
		double y = exp(x);
		w = y * (1.0 + y * (-1.0 + y * (1.5 + y * (-8.0 / 3 + y * 125.0 / 24))));
		steps = x < -4.0 ? 1 : 2;
	} else if (x <= 2.5) {
		double d = x - 1.0;
		w = 1.0 + d * (0.5 + d * (1.0 / 16 + d * (-1.0 / 192 +
		                                           d * (-1.0 / 3072 + d * 13.0 / 61440))));
		steps = 2;
	} else {
		double l = bench_log_rough(x), ix = 1.0 / x;
		w = x - l + l * ix * (1.0 + ix * ((l - 2.0) * 0.5 +
		     ix * ((6.0 + l * (-9.0 + 2.0 * l)) / 6.0 +
		           ix * (-12.0 + l * (36.0 + l * (-22.0 + 3.0 * l))) / 12.0)));
		steps = x < 5.0 ? 2 : 1;
	}
	for (int k = 0; k < steps; k++) {
		double r = x - w - log(w), wp = 1.0 + w;
		double q = wp * (wp + (2.0 / 3.0) * r);
		w += w * r / wp * (q - 0.5 * r) / (q - r);
	}
	return w;
}

/*
 * The omega closed form of the current, nVt / R (omega(x) - a), from the
 * same problem struct the solver reads (so both pay for the same memory):
 * Is, n and T of the diode (no reference temperature in these circuits),
 * the source's voc and r and the diode's Rs.
 */
static double bench_omega_current(const struct bench_case *c)
{
	const double *p = c->pb.dev.p;
	double nvt = p[DIODE_N] * (1.380649e-23 * (p[DIODE_TEMP] + 273.15) /
	                           1.602176634e-19);
	double r = c->pb.src.r + p[DIODE_RS], is = p[DIODE_IS];
	double a = is * r / nvt;
	double x = log(a) + (c->pb.src.voc / nvt + a);
	return nvt / r * (bench_omega(x) - a);
}

/* ---------------------------------------------------------------------- */
/* The baselines                                                           */

/* Parameters of the Brent residual. */
struct brent_params {
	double is, nvt, r, vs;
};

/* vj + r Is (exp(vj/nVt) - 1) - VS: the junction residual. */
static double brent_residual(double vj, void *p)
{
	const struct brent_params *b = p;
	return vj + b->r * b->is * expm1(vj / b->nvt) - b->vs;
}

/* The same with the exponent capped at 700: finite everywhere, same sign. */
static double brent_residual_capped(double vj, void *p)
{
	const struct brent_params *b = p;
	return vj + b->r * b->is * expm1(fmin(vj / b->nvt, 700.0)) - b->vs;
}

/* The closed-form current with GSL's W0 (Banwell & Jayakumar 2000). */
static double bench_lambert(const struct bench_case *c)
{
	double a = c->is * c->r / c->nvt;
	double b = (c->vs + c->is * c->r) / c->nvt;
	double lx = log(a) + b;
	double w;
	if (lx >= 700.0)
		w = (double)check_wright_omega(lx);
	else
		w = gsl_sf_lambert_W0(b < 700.0 ? a * exp(b) : exp(lx));
	return c->nvt / c->r * w - c->is;
}

/*
 * GSL Brent on the junction residual from LO to HI, stopped when the
 * bracket is below 1e-12 relative; the current from the better-conditioned
 * side, as our solver takes it.  NaN when GSL refuses the bracket.
 */
static double bench_brent(gsl_root_fsolver *fs, const struct bench_case *c,
                          double lo, double hi, bool capped)
{
	struct brent_params bp = { c->is, c->nvt, c->r, c->vs };
	gsl_function fn = { capped ? brent_residual_capped : brent_residual, &bp };
	if (c->vs == 0.0)
		return 0.0;
	if (gsl_root_fsolver_set(fs, &fn, lo, hi) != GSL_SUCCESS)
		return NAN;
	for (int it = 0; it < 400; it++) {
		gsl_root_fsolver_iterate(fs);
		if (gsl_root_test_interval(gsl_root_fsolver_x_lower(fs),
		                           gsl_root_fsolver_x_upper(fs), 0.0,
		                           1e-12) == GSL_SUCCESS)
			break;
	}
	double vj = gsl_root_fsolver_root(fs);
	double g = c->is / c->nvt * exp(vj / c->nvt);
	return c->r * g > 1.0 ? (c->vs - vj) / c->r : c->is * expm1(vj / c->nvt);
}

/* The tight bracket: up to the junction voltage carrying VS / r alone. */
static double bench_brent_tight(gsl_root_fsolver *fs, const struct bench_case *c)
{
	double lo = fmin(0.0, c->vs), hi = fmax(0.0, c->vs);
	if (c->vs > 0.0) {
		double est = c->nvt * log1p(c->vs / (c->r * c->is));
		if (est < hi)
			hi = est;
	}
	return bench_brent(fs, c, lo, hi, false);
}

/* The user's bracket: [0, VS] (or [VS, 0]). */
static double bench_brent_user(gsl_root_fsolver *fs, const struct bench_case *c)
{
	return bench_brent(fs, c, fmin(0.0, c->vs), fmax(0.0, c->vs), true);
}

/* ---------------------------------------------------------------------- */
/* Running                                                                 */

/* Fill N circuits from RNG. */
static void bench_fill(struct check_rng *rng, struct bench_case *b, size_t n)
{
	for (size_t k = 0; k < n; k++) {
		struct check_diode_circuit c;
		struct source_spec sp;
		char err[200];
		check_diode_circuit_draw(rng, &c);
		source_spec_thevenin(&sp, c.vs, c.rs);
		memset(&b[k].pb, 0, sizeof b[k].pb);
		if (source_from_spec(&sp, &b[k].pb.src, err, sizeof err) != 0)
			abort(); /* a bench program, not library code */
		device_init(&b[k].pb.dev, &model_diode);
		b[k].pb.dev.p[DIODE_IS] = c.is;
		b[k].pb.dev.p[DIODE_N] = c.n;
		b[k].pb.dev.p[DIODE_RS] = c.rsd;
		b[k].pb.dev.p[DIODE_TEMP] = c.temp;
		/* Checked once where it is built (untimed), as session_problem
		 * does: the solves take it as it is. */
		if (device_check(&b[k].pb.dev, err, sizeof err) != 0)
			abort();
		b[k].is = c.is;
		b[k].nvt = check_nvt(c.n, c.temp);
		b[k].r = c.rs + c.rsd;
		b[k].vs = c.vs;
	}
}

/* Solve N circuits of B with method M into OUT; returns seconds. */
static double bench_run(enum bench_method m, const struct bench_case *b,
                        size_t n, double *out, gsl_root_fsolver *fs)
{
	struct solve_options o;
	solve_options_init(&o);
	double t0 = bench_now();
	for (size_t k = 0; k < n; k++) {
		switch (m) {
		case BENCH_DEFAULT: {
			struct solve_result res;
			out[k] = solve_problem(&b[k].pb, &o, &res) == SOLVE_OK
			             ? res.pts[0].i : NAN;
			break;
		}
		case BENCH_FAST: {
			struct op_point pt;
			out[k] = solve_fast(&b[k].pb, o.tol, &pt) == 0 ? pt.i : NAN;
			break;
		}
		case BENCH_OMEGA:
			out[k] = bench_omega_current(&b[k]);
			break;
		case BENCH_LAMBERT:
			out[k] = bench_lambert(&b[k]);
			break;
		case BENCH_BRENT_TIGHT:
			out[k] = bench_brent_tight(fs, &b[k]);
			break;
		default:
			out[k] = bench_brent_user(fs, &b[k]);
			break;
		}
	}
	return bench_now() - t0;
}

/* Order doubles (qsort). */
static int bench_cmp(const void *a, const void *b)
{
	double x = *(const double *)a, y = *(const double *)b;
	return (x > y) - (x < y);
}

/* The median of N values of X (reordered). */
static double bench_median(double *x, size_t n)
{
	qsort(x, n, sizeof *x, bench_cmp);
	return n % 2 ? x[n / 2] : 0.5 * (x[n / 2 - 1] + x[n / 2]);
}

/*
 * One Monte Carlo block: TRIALS trials of an invented LED-like case (the
 * tolerance tests' case: 23.7 V through 2.2 kohm, four tolerances), and
 * solve_problem on the same number of parameter sets drawn the same way
 * beforehand.  Returns the ratio of the times; *NS_TRIAL, *NS_SOLVE get
 * the times per item.
 */
static double bench_montecarlo(size_t trials, uint64_t seed, double *xs,
                               double *ns_trial, double *ns_solve)
{
	struct problem pb = { .net = NULL };
	struct source_spec sp;
	char err[256];
	source_spec_thevenin(&sp, 23.7, 2.2e3);
	if (source_from_spec(&sp, &pb.src, err, sizeof err) != 0)
		abort();
	device_init(&pb.dev, &model_diode);
	pb.dev.p[DIODE_IS] = 3.17e-18;
	pb.dev.p[DIODE_N] = 1.93;
	pb.dev.p[DIODE_RS] = 1.37;
	pb.dev.p[DIODE_TEMP] = 27.3;
	struct solve_options o;
	solve_options_init(&o);
	struct tol_case c;
	tol_case_init(&c, &pb, SOURCE_THEVENIN, &o);
	if (tol_case_add(&c, "vs", 21.33, 26.07, TOL_UNIFORM, err, sizeof err) ||
	    tol_case_add(&c, "rs", 2.09e3, 2.31e3, TOL_NORMAL, err, sizeof err) ||
	    tol_case_add(&c, "saturation_current", 1.6e-18, 4.7e-18, TOL_NORMAL,
	                 err, sizeof err) ||
	    tol_case_add(&c, "temperature", 0.0, 60.0, TOL_UNIFORM, err,
	                 sizeof err))
		abort();
	struct tol_rng rng;
	tol_rng_seed(&rng, seed ^ 0x9e3779b97f4a7c15u);
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
	volatile double sink = 0.0;
	double t0 = bench_now();
	for (size_t k = 0; k < trials; k++) {
		struct problem q = pb;
		struct solve_result res;
		for (size_t j = 0; j < c.nitems; j++)
			paramref_set(&q, &c.items[j].param, xs[k * c.nitems + j]);
		if (solve_problem(&q, &o, &res) == SOLVE_OK)
			sink += res.pts[0].i;
	}
	double t_solve = bench_now() - t0;
	struct tol_mc *mc = malloc(sizeof *mc);
	if (mc == NULL)
		abort();
	t0 = bench_now();
	if (tol_monte_carlo(&c, trials, seed, 50, NULL, 0, mc, err, sizeof err))
		abort();
	double t_trial = bench_now() - t0;
	sink += mc->stats[TOL_CURRENT].mean;
	free(mc);
	*ns_trial = 1e9 * t_trial / (double)trials;
	*ns_solve = 1e9 * t_solve / (double)trials;
	return t_trial / t_solve;
}

int main(int argc, char **argv)
{
	long total = argc > 1 ? strtol(argv[1], NULL, 10) : 1000000L;
	long trials = argc > 2 ? strtol(argv[2], NULL, 10) : 200000L;
	if (total <= 0)
		total = 1000000L;
	if (trials < 9)
		trials = 200000L;
	size_t bn = 1024;
	long nblocks = (total + (long)bn - 1) / (long)bn;
	if (nblocks < 3)
		nblocks = 3;
	enum { MC_BLOCKS = 9 };
	size_t mcn = (size_t)trials / MC_BLOCKS;
	struct bench_case *b = malloc(bn * sizeof *b);
	struct bench_case *dir = malloc(bn * sizeof *dir);
	double *cur = malloc((BENCH_COUNT + 1) * bn * sizeof *cur);
	double *xs = malloc(4 * mcn * sizeof *xs);
	double *ratio = malloc(8 * (size_t)nblocks * sizeof *ratio);
	gsl_root_fsolver *fs = gsl_root_fsolver_alloc(gsl_root_fsolver_brent);
	if (b == NULL || dir == NULL || cur == NULL || xs == NULL ||
	    ratio == NULL || fs == NULL) {
		fprintf(stderr, "bench_solve: out of memory\n");
		return 1;
	}
	gsl_set_error_handler_off();
	struct check_rng rng = { 0x2385a7c1e9u };
	double sec[BENCH_COUNT] = { 0 };
	double maxerr[BENCH_COUNT] = { 0 };
	long failed[BENCH_COUNT] = { 0 };
	double dir_sec[2][2] = { { 0 } }; /* [forward/reverse][default/omega] */
	size_t dir_n[2] = { 0 };
	double mc_trial = 0.0, mc_solve = 0.0;
	volatile double sink = 0.0;
	enum { R_OMEGA, R_FWD, R_REV, R_USER, R_TIGHT, R_MC, R_LAMBERT, R_NR };
	double *rb[R_NR];
	for (int k = 0; k < R_NR; k++)
		rb[k] = ratio + (size_t)k * (size_t)nblocks;
	for (long blk = 0; blk < nblocks; blk++) {
		bench_fill(&rng, b, bn);
		double t[BENCH_COUNT];
		/* Every method on the same block, starting at a different one
		 * each block so that no method always runs first. */
		for (int j = 0; j < BENCH_COUNT; j++) {
			int m = (int)((j + blk) % BENCH_COUNT);
			t[m] = bench_run((enum bench_method)m, b, bn, cur + (size_t)m * bn,
			                 fs);
			sec[m] += t[m];
		}
		/* By bias direction: the forward circuits, then the reverse. */
		double td[2][2];
		for (int d = 0; d < 2; d++) {
			size_t nd = 0;
			for (size_t k = 0; k < bn; k++)
				if ((b[k].vs > 0.0) == (d == 0))
					dir[nd++] = b[k];
			dir_n[d] += nd;
			for (int j = 0; j < 2; j++) {
				int m = (j + (int)blk) % 2;
				td[d][m] = bench_run(m ? BENCH_OMEGA : BENCH_DEFAULT, dir, nd,
				                     cur + BENCH_COUNT * bn, fs);
				dir_sec[d][m] += td[d][m];
			}
		}
		rb[R_OMEGA][blk] = t[BENCH_DEFAULT] / t[BENCH_OMEGA];
		rb[R_FWD][blk] = td[0][0] / td[0][1];
		rb[R_REV][blk] = td[1][0] / td[1][1];
		rb[R_USER][blk] = t[BENCH_DEFAULT] / t[BENCH_BRENT_USER];
		rb[R_TIGHT][blk] = t[BENCH_DEFAULT] / t[BENCH_BRENT_TIGHT];
		rb[R_LAMBERT][blk] = t[BENCH_DEFAULT] / t[BENCH_LAMBERT];
		/* Errors against the exact solution in long double (untimed). */
		for (size_t k = 0; k < bn; k++) {
			long double ref = check_diode_exact_current(
				b[k].is, b[k].nvt, (long double)b[k].pb.src.r +
				                       b[k].pb.dev.p[DIODE_RS],
				b[k].vs);
			for (int m = 0; m < BENCH_COUNT; m++) {
				double v = cur[(size_t)m * bn + k];
				if (!isfinite(v)) {
					failed[m]++;
					continue;
				}
				sink += v;
				double e = check_rel(v, ref, b[k].is);
				if (e > maxerr[m])
					maxerr[m] = e;
			}
		}
	}
	for (int blk = 0; blk < MC_BLOCKS; blk++) {
		double ts, tt;
		rb[R_MC][blk] = bench_montecarlo(mcn, 777 + (uint64_t)blk, xs, &tt, &ts);
		mc_trial += tt;
		mc_solve += ts;
	}
	size_t n = bn * (size_t)nblocks;
	printf("%zu random diode circuits in %ld interleaved blocks (Is 1e-15..1e-7 "
	       "A, n 1..2.6, RS 10..100k, VS +-60 V, -40..125 degC); CPU time\n",
	       n, nblocks);
	for (int m = 0; m < BENCH_COUNT; m++)
		printf("  %-26s %8.1f ns/solve   max rel error %.3g   failed %ld\n",
		       bench_names[m], 1e9 * sec[m] / (double)n, maxerr[m], failed[m]);
	printf("  by direction: forward %zu, default %.1f ns, omega %.1f ns; "
	       "reverse %zu, default %.1f ns, omega %.1f ns\n",
	       dir_n[0], 1e9 * dir_sec[0][0] / (double)dir_n[0],
	       1e9 * dir_sec[0][1] / (double)dir_n[0], dir_n[1],
	       1e9 * dir_sec[1][0] / (double)dir_n[1],
	       1e9 * dir_sec[1][1] / (double)dir_n[1]);
	printf("  Monte Carlo (4 tolerances, %d blocks of %zu trials): trial %.1f ns, "
	       "solve of its own parameters %.1f ns\n", MC_BLOCKS, mcn,
	       mc_trial / MC_BLOCKS, mc_solve / MC_BLOCKS);
	printf("  default/lambert (median)   %.3f\n",
	       bench_median(rb[R_LAMBERT], (size_t)nblocks));
	printf("targets: default/omega <= 1.5 both ways, default/brent_user <= 0.2, "
	       "default/brent_tight <= 0.35, montecarlo/own_solve <= 1.5\n");
	printf("ratio default/omega %.3f\n", bench_median(rb[R_OMEGA], (size_t)nblocks));
	printf("ratio forward.default/omega %.3f\n",
	       bench_median(rb[R_FWD], (size_t)nblocks));
	printf("ratio reverse.default/omega %.3f\n",
	       bench_median(rb[R_REV], (size_t)nblocks));
	printf("ratio default/brent_user %.3f\n",
	       bench_median(rb[R_USER], (size_t)nblocks));
	printf("ratio default/brent_tight %.3f\n",
	       bench_median(rb[R_TIGHT], (size_t)nblocks));
	printf("ratio montecarlo/own_solve %.3f\n",
	       bench_median(rb[R_MC], MC_BLOCKS));
	gsl_root_fsolver_free(fs);
	free(ratio);
	free(xs);
	free(cur);
	free(dir);
	free(b);
	return sink == 12345.678 ? 2 : 0;
}
