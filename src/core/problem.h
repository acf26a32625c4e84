/*
 * problem.h - an operating-point problem: a source and a device, and the
 * residual whose zeros are the operating points.
 *
 * With the internal source form (source.h) the residual in V is
 *
 *     F(V) = V + r * I_dev(V) - voc      (volts; finite r, including r = 0)
 *     F(V) = I_dev(V) - isc              (amperes; ideal current source)
 *
 * and its derivative F'(V) = 1 + r * g(V), or g(V).
 */
#ifndef BIASLINE_PROBLEM_H
#define BIASLINE_PROBLEM_H

#include <stdbool.h>
#include <stddef.h>

#include "model.h"
#include "source.h"

struct network;

/* Most network part values one problem can hold changed (a tolerance case
 * varies at most this many parameters at once). */
#define PROBLEM_NET_MAX_SET 16

/*
 * A source driving a device.
 *
 * NET is NULL for a source given directly.  For a source given as a
 * network it points at that network, borrowed: the caller (the session)
 * owns it and keeps it alive as long as the problem and its copies, and
 * nothing reached through a problem ever changes it.  SRC is then the
 * network's reduction.  A part's value is varied (paramref.h) by noting
 * the new value in NET_PART/NET_VALUE (NET_NSET entries) and reducing a
 * private copy of NET with every noted value into SRC, so a problem
 * copied by value carries its own part values.  Whoever builds a problem
 * by hand sets NET to NULL and NET_NSET to 0 (zeroing the whole struct is
 * enough).
 */
struct problem {
	struct source src;
	struct device dev;
	const struct network *net;
	size_t net_nset;
	size_t net_part[PROBLEM_NET_MAX_SET];
	double net_value[PROBLEM_NET_MAX_SET];
};

/*
 * Let the device take what its curve needs from the source (model.h:
 * bind; a FET's drain loop carries the source resistance).  Whoever sets
 * or changes PB's source or device calls this before using the problem:
 * session_problem, paramref_set and design_apply_request do.
 */
void problem_bind(struct problem *pb);

/* F(V) as above; NaN when the device has no current(V). */
double problem_residual(const struct problem *pb, double v);

/* dF/dV at V. */
double problem_residual_slope(const struct problem *pb, double v);

/* The unit of the residual: QTY_VOLTAGE or QTY_CURRENT. */
enum qty_kind problem_residual_kind(const struct problem *pb);

/*
 * The problem in the variable the bracketed methods and the every-root
 * scan work on: for a model with a series split, the junction voltage x
 * behind the series resistance Rs, which is folded into the source,
 *
 *     F(x) = x + (r + Rs) Ij(x) - voc       (finite r)
 *     F(x) = Ij(x) - isc                    (ideal current source)
 *
 * and for any other model with current(V) the device voltage itself
 * (Rs = 0, Ij = I).  It borrows PB, which must outlive it.
 */
struct problem_junction {
	const struct problem *pb;
	const struct model_type *t;
	const double *p;
	double rser;     /* Rs */
	double rt;       /* r + Rs */
	bool has_k;      /* the model's derived constants are in K */
	double k[MODEL_MAX_DERIVED];
};

/* Set J up for PB (PB's device must have current(V)). */
void problem_junction_init(struct problem_junction *j,
                           const struct problem *pb);

/* Ij(x), dIj/dx, F(x) and F'(x). */
double problem_junction_current(const struct problem_junction *j, double x);
double problem_junction_conductance(const struct problem_junction *j,
                                    double x);
double problem_junction_residual(const struct problem_junction *j, double x);
double problem_junction_slope(const struct problem_junction *j, double x);

/*
 * The device's (V, I) at junction voltage X, with I taken from the load
 * line where the device is the steeper curve (better conditioned there).
 */
void problem_junction_point(const struct problem_junction *j, double x,
                            double *v, double *i);

/*
 * The junction voltage at which the intrinsic curve carries I (its
 * inverse), or NaN where the model does not give it.
 */
double problem_junction_inverse(const struct problem_junction *j, double i);

/*
 * The model's Newton-step limiting of the junction voltage (VNEW, the
 * proposed value, from VOLD); VNEW itself when the model has none.
 */
double problem_junction_limit(const struct problem_junction *j, double vnew,
                              double vold);

#endif
