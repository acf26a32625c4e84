/*
 * bench_solve.c - time the default solver on random diode circuits against
 * GSL's Brent-Dekker solver on the same residual and against the Lambert W
 * closed form, and report the largest error against the exact solution.
 *
 * Usage: bench_solve [circuits]   (default 1000000)
 *
 * The circuits are those of the solver tests (tests/core/core_check.h).
 * They are made in blocks outside the timed loops; each method solves the
 * same block, so the times compare like with like.
 */
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

/* Circuits per block. */
#define BLOCK 4096

/* The methods timed. */
enum bench_method {
	BENCH_AUTO,    /* solve_problem, METHOD_AUTO */
	BENCH_VALID,   /* solve_problem_valid (validated once, outside) */
	BENCH_FAST,    /* solve_fast */
	BENCH_BRENT,   /* gsl_root_fsolver_brent */
	BENCH_LAMBERT, /* closed form with gsl_sf_lambert_W0 */
	BENCH_COUNT
};

static const char *const bench_names[BENCH_COUNT] = {
	"solve_problem (auto)", "solve_problem_valid", "solve_fast", "GSL brent",
	"Lambert W0 closed form",
};

/* One circuit in the form each method needs. */
struct bench_case {
	struct problem pb;
	double is, nvt, r, vs;   /* junction view: r = source + series */
};

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

/* Nanoseconds now. */
static double bench_now(void)
{
	struct timespec ts;
	clock_gettime(CLOCK_MONOTONIC, &ts);
	return 1e9 * (double)ts.tv_sec + (double)ts.tv_nsec;
}

/*
 * w + ln w = X in double by Halley from X - ln X (Corless & Jeffrey 2002):
 * the closed form's branch for arguments whose exp overflows.
 */
static double bench_wright_omega(double x)
{
	double w = x - log(x);
	for (int k = 0; k < 6; k++) {
		double f = w + log(w) - x;
		double f1 = 1.0 + 1.0 / w;
		double dw = f / (f1 + 0.5 * f / (w * w * f1));
		w -= dw;
		if (fabs(dw) <= 1e-16 * w)
			break;
	}
	return w;
}

/* The closed-form current (Banwell & Jayakumar 2000). */
static double bench_lambert(const struct bench_case *c)
{
	double a = c->is * c->r / c->nvt;
	double b = (c->vs + c->is * c->r) / c->nvt;
	double lx = log(a) + b;
	double w;
	if (lx >= 700.0)
		w = bench_wright_omega(lx);
	else
		w = gsl_sf_lambert_W0(b < 700.0 ? a * exp(b) : exp(lx));
	return c->nvt / c->r * w - c->is;
}

/*
 * GSL Brent on the junction residual, bracketed like our solver: from
 * min(0, VS) to the junction voltage at which the diode alone carries
 * VS / r (finite where VS itself would overflow exp), stopped when the
 * bracket is below 1e-12 relative.  Returns the current.
 */
static double bench_brent(gsl_root_fsolver *fs, const struct bench_case *c)
{
	struct brent_params bp = { c->is, c->nvt, c->r, c->vs };
	gsl_function fn = { brent_residual, &bp };
	if (c->vs == 0.0)
		return 0.0;
	double lo = fmin(0.0, c->vs), hi = fmax(0.0, c->vs);
	if (c->vs > 0.0) {
		double est = c->nvt * log1p(c->vs / (c->r * c->is));
		if (est < hi)
			hi = est;
	}
	if (gsl_root_fsolver_set(fs, &fn, lo, hi) != GSL_SUCCESS)
		return NAN;
	for (int it = 0; it < 200; it++) {
		gsl_root_fsolver_iterate(fs);
		if (gsl_root_test_interval(gsl_root_fsolver_x_lower(fs),
		                           gsl_root_fsolver_x_upper(fs), 0.0,
		                           1e-12) == GSL_SUCCESS)
			break;
	}
	double vj = gsl_root_fsolver_root(fs);
	/* The current from the better-conditioned side, as our solver does. */
	double g = c->is / c->nvt * exp(vj / c->nvt);
	return c->r * g > 1.0 ? (c->vs - vj) / c->r : c->is * expm1(vj / c->nvt);
}

/* Fill block B of N circuits from RNG. */
static void bench_fill(struct check_rng *rng, struct bench_case *b, size_t n)
{
	for (size_t k = 0; k < n; k++) {
		struct check_diode_circuit c;
		struct source_spec sp;
		char err[200];
		check_diode_circuit_draw(rng, &c);
		source_spec_thevenin(&sp, c.vs, c.rs);
		if (source_from_spec(&sp, &b[k].pb.src, err, sizeof err) != 0)
			abort(); /* a bench program, not library code */
		device_init(&b[k].pb.dev, &model_diode);
		b[k].pb.dev.p[DIODE_IS] = c.is;
		b[k].pb.dev.p[DIODE_N] = c.n;
		b[k].pb.dev.p[DIODE_RS] = c.rsd;
		b[k].pb.dev.p[DIODE_TEMP] = c.temp;
		/* Validated once here, untimed, for solve_problem_valid. */
		if (device_validate(&b[k].pb.dev, err, sizeof err) != 0)
			abort();
		b[k].is = c.is;
		b[k].nvt = check_nvt(c.n, c.temp);
		b[k].r = c.rs + c.rsd;
		b[k].vs = c.vs;
	}
}

int main(int argc, char **argv)
{
	long total = argc > 1 ? strtol(argv[1], NULL, 10) : 1000000L;
	if (total <= 0)
		total = 1000000L;
	struct bench_case *b = malloc(BLOCK * sizeof *b);
	double *cur = malloc(BENCH_COUNT * BLOCK * sizeof *cur);
	gsl_root_fsolver *fs = gsl_root_fsolver_alloc(gsl_root_fsolver_brent);
	if (b == NULL || cur == NULL || fs == NULL) {
		fprintf(stderr, "bench_solve: out of memory\n");
		return 1;
	}
	gsl_set_error_handler_off();
	struct check_rng rng = { 0x2385a7c1e9u };
	double ns[BENCH_COUNT] = { 0 };
	double maxerr[BENCH_COUNT] = { 0 };
	long failed[BENCH_COUNT] = { 0 };
	volatile double sink = 0.0;
	struct solve_options o;
	solve_options_init(&o);
	for (long done = 0; done < total; done += BLOCK) {
		size_t n = (size_t)(total - done < BLOCK ? total - done : BLOCK);
		bench_fill(&rng, b, n);
		for (int m = 0; m < BENCH_COUNT; m++) {
			double *out = cur + (size_t)m * BLOCK;
			double t0 = bench_now();
			for (size_t k = 0; k < n; k++) {
				switch (m) {
				case BENCH_AUTO: {
					struct solve_result res;
					out[k] = solve_problem(&b[k].pb, &o, &res) == SOLVE_OK
					             ? res.pts[0].i : NAN;
					break;
				}
				case BENCH_VALID: {
					struct solve_result res;
					out[k] = solve_problem_valid(&b[k].pb, &o, &res) == SOLVE_OK
					             ? res.pts[0].i : NAN;
					break;
				}
				case BENCH_FAST: {
					struct op_point pt;
					out[k] = solve_fast(&b[k].pb, o.tol, &pt) == 0 ? pt.i : NAN;
					break;
				}
				case BENCH_BRENT:
					out[k] = bench_brent(fs, &b[k]);
					break;
				default:
					out[k] = bench_lambert(&b[k]);
					break;
				}
			}
			ns[m] += bench_now() - t0;
			for (size_t k = 0; k < n; k++)
				sink += out[k];
		}
		/* Errors against the exact solution in long double (untimed). */
		for (size_t k = 0; k < n; k++) {
			long double ref = check_diode_exact_current(b[k].is, b[k].nvt,
			                                            (long double)b[k].pb.src.r +
			                                                b[k].pb.dev.p[DIODE_RS],
			                                            b[k].vs);
			for (int m = 0; m < BENCH_COUNT; m++) {
				double v = cur[(size_t)m * BLOCK + k];
				if (!isfinite(v)) {
					failed[m]++;
					continue;
				}
				double e = check_rel(v, ref, b[k].is);
				if (e > maxerr[m])
					maxerr[m] = e;
			}
		}
	}
	printf("%ld random diode circuits (Is 1e-15..1e-7 A, n 1..2.6, RS 10..100k, "
	       "VS +-60 V, -40..125 degC)\n", total);
	for (int m = 0; m < BENCH_COUNT; m++)
		printf("  %-24s %8.1f ns/solve   max rel error %.3g   failed %ld\n",
		       bench_names[m], ns[m] / (double)total, maxerr[m], failed[m]);
	printf("  auto / brent   = %.3f   (target <= 0.3)\n",
	       ns[BENCH_AUTO] / ns[BENCH_BRENT]);
	printf("  auto / lambert = %.3f   (target <= 2)\n",
	       ns[BENCH_AUTO] / ns[BENCH_LAMBERT]);
	printf("  valid / brent  = %.3f\n", ns[BENCH_VALID] / ns[BENCH_BRENT]);
	printf("  valid / lambert= %.3f\n", ns[BENCH_VALID] / ns[BENCH_LAMBERT]);
	printf("  fast / brent   = %.3f\n", ns[BENCH_FAST] / ns[BENCH_BRENT]);
	printf("  fast / lambert = %.3f\n", ns[BENCH_FAST] / ns[BENCH_LAMBERT]);
	gsl_root_fsolver_free(fs);
	free(cur);
	free(b);
	return sink == 12345.678 ? 2 : 0;
}
