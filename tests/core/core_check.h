/*
 * core_check.h - shared helpers for the core test programs and the solver
 * benchmark: a small seeded PRNG, the random diode circuits every solver
 * test draws from, and an exact reference for a diode behind a resistor
 * that shares no code with src/core.
 *
 * Header-only (static functions) so each test program stays one file plus
 * this header; GSL is used only where a program links it (CORE_CHECK_GSL).
 */
#ifndef BIASLINE_CORE_CHECK_H
#define BIASLINE_CORE_CHECK_H

#include <math.h>
#include <stdint.h>

#ifdef CORE_CHECK_GSL
#include <gsl/gsl_sf_lambert.h>
#endif

/*
 * splitmix64 (Steele, Lea & Flood, "Fast splittable pseudorandom number
 * generators", OOPSLA 2014): a 64-bit state, one add and a mix per draw.
 */
struct check_rng {
	uint64_t s;
};

/* Next 64 random bits. */
static inline uint64_t check_rng_next(struct check_rng *r)
{
	uint64_t z = (r->s += 0x9e3779b97f4a7c15u);
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9u;
	z = (z ^ (z >> 27)) * 0x94d049bb133111ebu;
	return z ^ (z >> 31);
}

/* Uniform double in [0, 1) with 53 random bits. */
static inline double check_rng_unit(struct check_rng *r)
{
	return (double)(check_rng_next(r) >> 11) * 0x1.0p-53;
}

/* Uniform in [LO, HI). */
static inline double check_rng_uniform(struct check_rng *r, double lo, double hi)
{
	return lo + (hi - lo) * check_rng_unit(r);
}

/* Log-uniform in [LO, HI), LO > 0. */
static inline double check_rng_log_uniform(struct check_rng *r, double lo,
                                           double hi)
{
	return exp(check_rng_uniform(r, log(lo), log(hi)));
}

/* A diode behind a Thevenin source: the inputs of one random circuit. */
struct check_diode_circuit {
	double is;    /* saturation current, A */
	double n;     /* ideality */
	double rsd;   /* the diode's own series resistance, ohm */
	double temp;  /* junction temperature, degC */
	double vs;    /* source voltage, V */
	double rs;    /* source resistance, ohm */
};

/*
 * Draw one circuit from the distribution of the solver tests: Is 1e-15 to
 * 1e-7 A and RS 10 ohm to 100 kohm log-uniform, n 1 to 2.6, VS -60 to 60 V,
 * -40 to 125 degC, and half the time a diode series resistance up to 3.7 ohm.
 */
static inline void check_diode_circuit_draw(struct check_rng *r,
                                            struct check_diode_circuit *c)
{
	c->is = check_rng_log_uniform(r, 1e-15, 1e-7);
	c->n = check_rng_uniform(r, 1.0, 2.6);
	c->rsd = (check_rng_next(r) & 1u) ? check_rng_uniform(r, 0.0, 3.7) : 0.0;
	c->temp = check_rng_uniform(r, -40.0, 125.0);
	c->vs = check_rng_uniform(r, -60.0, 60.0);
	c->rs = check_rng_log_uniform(r, 10.0, 1e5);
}

/*
 * n kT/q from the exact SI constants (BIPM, The International System of
 * Units, 9th ed., 2019: k = 1.380649e-23 J/K, e = 1.602176634e-19 C,
 * 0 degC = 273.15 K), rounded to double: the problem statement's nVt.
 */
static inline double check_nvt(double n, double temp_c)
{
	return n * (1.380649e-23 * (temp_c + 273.15) / 1.602176634e-19);
}

/*
 * Solve w + ln w = X for w > 0: the Wright omega function (Corless &
 * Jeffrey, "The Wright omega function", AISC 2002), which is W0(exp(X))
 * without forming exp(X).  Halley's method in long double from the
 * asymptotic start w = X - ln X + ln X / X (Corless et al., "On the
 * Lambert W function", Adv. Comput. Math. 5, 1996, eq. 4.19), valid and
 * monotone for the X > 1 used here.
 */
static inline long double check_wright_omega(long double x)
{
	long double lx = logl(x);
	long double w = x - lx + lx / x;
	for (int k = 0; k < 50; k++) {
		long double f = w + logl(w) - x;
		long double f1 = 1.0L + 1.0L / w;
		long double f2 = -1.0L / (w * w);
		long double dw = f / (f1 - 0.5L * f * f2 / f1);
		w -= dw;
		if (fabsl(dw) <= 1e-21L * fabsl(w))
			break;
	}
	return w;
}

#ifdef CORE_CHECK_GSL
/*
 * The exact current of a Shockley diode (saturation current IS, nVt NVT)
 * behind a total series resistance R from a source VS (Banwell &
 * Jayakumar, "Exact analytical solution for current flow through diode
 * with series resistance", Electronics Letters 36(4), 2000):
 *
 *     I = (nVt/R) W0((Is R / nVt) exp((VS + Is R) / nVt)) - Is
 *
 * with W0 from GSL (gsl_sf_lambert_W0) while the argument is finite, and
 * through the Wright omega function of its logarithm where exp overflows.
 */
static inline long double check_diode_exact_current(double is, double nvt,
                                                    long double r, double vs)
{
	long double a = (long double)is * r / nvt;
	long double b = ((long double)vs + (long double)is * r) / nvt;
	long double lx = logl(a) + b;
	long double w;
	/* exp of the whole logarithm: under valgrind long double has only
	 * the range of double, where exp(b) alone may overflow. */
	if (lx < 700.0L)
		w = gsl_sf_lambert_W0((double)expl(lx));
	else
		w = check_wright_omega(lx);
	return (long double)nvt / r * w - is;
}
#endif

/* Relative difference |a - b| / max(|b|, floor). */
static inline double check_rel(double a, long double b, double floor_)
{
	long double d = fabsl((long double)a - b);
	long double s = fabsl(b) > floor_ ? fabsl(b) : floor_;
	return (double)(d / s);
}

#endif
