/*
 * kernel.h - the numerical kernel: bracketed root finding and minimisation
 * of a function of one real variable.  Every solver in src/core calls
 * these; there is one copy of each method and one set of caps.
 *
 *   safeguarded Newton-Raphson in a kept sign-change bracket (Newton's
 *       step, bisection whenever it would leave the bracket: the scheme
 *       of rtsafe, Press, Teukolsky, Vetterling & Flannery, Numerical
 *       Recipes, 3rd ed., Cambridge 2007, sec. 9.4)
 *   Brent-Dekker root finding (Brent, Algorithms for Minimization Without
 *       Derivatives, Prentice-Hall 1973, ch. 4)
 *   bisection, on values or on the sign alone (Burden & Faires,
 *       Numerical Analysis, 9th ed., Brooks/Cole 2010, sec. 2.1)
 *   golden-section minimisation (Kiefer, Proc. AMS 4(3), 1953)
 *   the sampling scan: sign changes between samples (Bolzano's theorem:
 *       a continuous function that changes sign has a zero between), and
 *       dips of |F| between samples refined by golden section (a
 *       crossing pair or a tangent that the samples stepped over)
 *
 * Shape (GSL's roots/): each method keeps its state in a plain struct,
 * started by _set and advanced by _iterate, which evaluates the function
 * once and never decides convergence; the caller owns the loop and the
 * test (kernel_test_*).  "Not converged yet" is a normal return.  A small
 * driver per method runs the usual loop for callers that need no more.
 */
#ifndef BIASLINE_KERNEL_H
#define BIASLINE_KERNEL_H

#include <stdbool.h>
#include <stddef.h>

/* The one iteration cap of every root-finding loop. */
#define KERNEL_MAX_ITER 400

/*
 * A function of one variable.  EVAL returns F(X); when STEP is not NULL it
 * also stores the Newton correction F/F' at X there (NaN when there is
 * none), so a caller may supply a better-conditioned step than F/F' (a
 * step in the inverse function, say) with the same sign convention.
 */
struct kernel_fn {
	double (*eval)(void *ctx, double x, double *step);
	void *ctx;
};

/* What an iteration reports. */
enum kernel_status {
	KERNEL_CONTINUE,   /* moved; test for convergence */
	KERNEL_DONE,       /* F is exactly 0 at the iterate, or (Brent) the
	                      bracket is below the least step: nothing left */
	KERNEL_NONFINITE,  /* F is NaN or infinite where it must not be */
};

/* What the last Newton iteration did. */
enum kernel_move {
	KERNEL_MOVE_NONE,      /* not moved yet */
	KERNEL_MOVE_NEWTON,    /* a full Newton step */
	KERNEL_MOVE_LIMITED,   /* a Newton step shortened by the limiter */
	KERNEL_MOVE_BISECTION, /* the step left the bracket: bisected */
};

/*
 * Safeguarded Newton-Raphson in a kept bracket [lo, hi] across which F
 * changes sign.  Each iteration evaluates F and its step at X, moves the
 * bracket end of the same sign to X (F may rise or fall through the root:
 * the side comes from the signs at the ends; an overflow still has a
 * sign, a NaN moves nothing), and steps to X - step; a step that is not
 * finite or leaves the open bracket bisects it instead, so the iteration
 * can neither leave the bracket nor stall.  LIMIT, when set, may shorten
 * a step first (junction-voltage limiting, Nagel, UC Berkeley ERL Memo
 * M520, 1975).
 */
struct kernel_newton {
	double lo, hi;       /* the kept bracket */
	double flo, fhi;     /* F at its ends (the signs matter) */
	double x;            /* the next point to evaluate */
	double fx;           /* F at the point evaluated last */
	double dx;           /* the last move: new x - old x */
	double step;         /* the Newton step F/F' evaluated last */
	enum kernel_move move;
	double (*limit)(void *ctx, double xnew, double xold);
	void *limit_ctx;
};

/*
 * Start S on [LO, HI] with F(LO) = FLO and F(HI) = FHI of opposite signs
 * (or either 0) at X0 (inside the bracket; otherwise the end HI).
 */
void kernel_newton_set(struct kernel_newton *s, double lo, double flo,
                       double hi, double fhi, double x0);

/* One evaluation and one move (see above). */
enum kernel_status kernel_newton_iterate(struct kernel_newton *s,
                                         const struct kernel_fn *fn);

/*
 * Brent-Dekker: inverse quadratic interpolation, secant and bisection on
 * a kept sign-change bracket [b, c], b the best point so far.  TOL sets
 * the least step (REL |b| + ABS, plus rounding), as in Brent's zero().
 */
struct kernel_brent {
	double a, b, c, d, e;
	double fa, fb, fc;
	double rel, abs;
};

/* Start S on [LO, HI] with F(LO) = FLO, F(HI) = FHI of opposite signs. */
void kernel_brent_set(struct kernel_brent *s, double lo, double flo, double hi,
                      double fhi, double rel, double abs);

/* One evaluation; afterwards [lower, upper] brackets the root, b best. */
enum kernel_status kernel_brent_iterate(struct kernel_brent *s,
                                        const struct kernel_fn *fn);

/* The bracket of S and its best point. */
double kernel_brent_lower(const struct kernel_brent *s);
double kernel_brent_upper(const struct kernel_brent *s);

/*
 * Golden-section search for a minimum of F on [a, b]: two interior points
 * at the golden ratio, the worse end dropped each iteration.
 */
struct kernel_golden {
	double a, b;         /* the interval */
	double x1, x2;       /* interior points, x1 < x2 */
	double f1, f2;       /* F there */
};

/* Start S on [A, B] (two evaluations). */
void kernel_golden_set(struct kernel_golden *s, const struct kernel_fn *fn,
                       double a, double b);

/* One evaluation; the interval shrinks by 0.618. */
void kernel_golden_iterate(struct kernel_golden *s, const struct kernel_fn *fn);

/* The best point of S so far, and F there into *FMIN. */
double kernel_golden_best(const struct kernel_golden *s, double *fmin);

/*
 * Tests, pure functions the caller picks (GSL's gsl_root_test_*): true
 * when the step DX at X is within ABS + REL |X|, or the bracket [LO, HI]
 * is within ABS + REL min(|LO|, |HI|) (or REL times the larger end when
 * it straddles 0).
 */
bool kernel_test_delta(double dx, double x, double abs, double rel);
bool kernel_test_interval(double lo, double hi, double abs, double rel);

/* A driver's result. */
struct kernel_result {
	double x;            /* the root or minimum */
	double fx;           /* F there (the last value seen) */
	double lo, hi;       /* the final bracket */
	unsigned iters;
	bool ok;             /* converged to the requested tolerance */
};

/*
 * Newton on [LO, HI] (F(LO) = FLO, F(HI) = FHI of opposite signs) from X0
 * until a full Newton step is within REL |x| (the step is taken: the
 * error after it is of the order of its square), the bracket within REL,
 * or KERNEL_MAX_ITER.  LIMIT/LIMIT_CTX as in struct kernel_newton (LIMIT
 * may be NULL).
 */
struct kernel_result kernel_newton_solve(const struct kernel_fn *fn, double lo,
                                         double flo, double hi, double fhi,
                                         double x0, double rel,
                                         double (*limit)(void *, double,
                                                         double),
                                         void *limit_ctx);

/* Brent-Dekker on [LO, HI] until the bracket is within REL (+ABS). */
struct kernel_result kernel_brent_solve(const struct kernel_fn *fn, double lo,
                                        double flo, double hi, double fhi,
                                        double rel, double abs);

/*
 * Bisection of a sign change of F between LO (F(LO) = FLO) and HI (either
 * may be the larger), at the geometric mean when LOG (both ends of one
 * sign) or the middle, until the interval is within REL of its larger end
 * (0: to the last bit) or KERNEL_MAX_ITER: for functions that are merely
 * continuous, or known only by their sign.
 */
struct kernel_result kernel_bisect_solve(const struct kernel_fn *fn, double lo,
                                         double flo, double hi, bool log,
                                         double rel);

/*
 * Bisection on the sign of a sign-change bracket [*LO, *HI] of F (F(*LO)
 * = *FLO, F(*HI) = *FHI; either may be infinite, as where an exponential
 * overflows) until both ends are finite and it is no wider than WIDTH
 * (INFINITY: finite ends are enough), or F is 0 at a middle (both ends
 * move there, both values 0), or KERNEL_MAX_ITER.  Returns the halvings
 * taken, or -1 when F is NaN at a middle or no double lies between the
 * ends (the bracket is then as far as it got).
 */
int kernel_narrow(const struct kernel_fn *fn, double *lo, double *flo,
                  double *hi, double *fhi, double width);

/* Golden section on [A, B] until the interval is within REL (+ABS). */
struct kernel_result kernel_golden_solve(const struct kernel_fn *fn, double a,
                                         double b, double rel, double abs);

/* A bracket the scan found. */
struct kernel_bracket {
	double lo, hi;       /* lo == hi: F is 0 there, or a tangent point */
	double flo, fhi;
	bool tangent;        /* |F| touches 0 without a sign change */
};

/*
 * The sampling scan.  The caller pushes samples (x, F(x)) in increasing x
 * (kernel_scan_push); the scan records every sign change between
 * neighbours, every exact zero, and at every dip of |F| (a sample with
 * smaller |F| than both neighbours and no sign change) refines the
 * dip between the neighbours by golden section: a point past zero by more
 * than TANGENT times SCALE(x) splits it into two crossings, and a minimum
 * of |F| within that allowance of zero is a tangent point.  A TANGENT
 * below 0 asks for sign changes and zeros only (no dip is refined: for a
 * function each value of which is a costly solve of its own).
 * Non-finite samples break the chain.  Brackets come out in increasing x,
 * at most MAX of them.
 */
struct kernel_scan {
	const struct kernel_fn *fn;
	double (*scale)(void *ctx, double x);  /* the size of F's terms at x */
	double tangent;                        /* relative tangent allowance */
	struct kernel_bracket *out;
	size_t max, n;
	double x[3], f[3];
	size_t seen;                           /* samples in x/f, up to 3 */
	bool full;                             /* MAX brackets reached */
};

/* Start S writing into OUT (room for MAX). */
void kernel_scan_init(struct kernel_scan *s, const struct kernel_fn *fn,
                      double (*scale)(void *ctx, double x), double tangent,
                      struct kernel_bracket *out, size_t max);

/* Take the next sample X (above every earlier one) and F there. */
void kernel_scan_push(struct kernel_scan *s, double x, double f);

/* After the last sample: record it when F is exactly 0 there. */
void kernel_scan_end(struct kernel_scan *s);

#endif
