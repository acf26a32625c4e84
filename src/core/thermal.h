/*
 * thermal.h - the second loop: a junction that heats itself.
 *
 * A junction model (diode, led, zener, npn, pnp) with a thermal
 * resistance theta > 0 (thermal_resistance, K/W, junction to ambient)
 * does not run at a given temperature: its junction sits at
 *
 *     Tj = Ta + theta P(Tj)
 *
 * where P(Tj) is the heat it turns out at the electrical operating point
 * the circuit has when the junction is at Tj (V I, or a transistor's own
 * IC VCE + IB VBE: model_type.dissipation), and Ta the ambient
 * (ambient_temperature).  Each value of P(Tj) is an electrical solve of
 * the device at Tj (solve.h); the heat balance is solved around it
 * (heat.h): every balance between the ambient and the maximum junction
 * temperature (maximum_junction_temperature), each with its loop gain
 *
 *     G = theta dP/dTj,
 *
 * stable when G < 1 (the criterion dP/dT < 1/theta; sources in heat.h).
 * dP/dTj is taken along the electrical solution by implicit
 * differentiation: with the device's temperature drift at a fixed current
 * vT = dV/dT|I (a Richardson-extrapolated central difference of the
 * model's V(I) at Tj +- h, no new solve), its differential resistance
 * r_d and the source resistance r,
 *
 *     dI/dTj = -vT / (r_d + r),  dV/dTj = -r dI/dTj   (finite r)
 *     dI/dTj = 0,                dV/dTj = vT          (ideal current source)
 *     dP/dTj = dP/dV dV/dTj + dP/dI dI/dTj + dP/dT|V,I
 *
 * (the last term 0 for a heat V I; a transistor's power hook reads its
 * collector side off its curve, which moves with T: central differences
 * of the model's power).
 *
 * With no balance at or below the maximum junction temperature the part
 * runs away; the report says what the heat path can take there and where,
 * if anywhere, the circuit itself would stop it.
 *
 * The margin to runaway in a parameter X (theta, the ambient, the supply,
 * or any key of paramref.h) is found by continuation of the balance along
 * Tj: at each Tj the value X(Tj) that makes Tj a balance (theta =
 * (Tj - Ta)/P, Ta = Tj - theta P, or a root solve in X), followed upward
 * from the present balance until X turns back -- the fold, where G = 1 and
 * the stable balance meets the unstable one and both vanish.
 *
 * A device without a thermal resistance (0) is not touched: every
 * function here then leaves the isothermal solve as it was.
 */
#ifndef BIASLINE_THERMAL_H
#define BIASLINE_THERMAL_H

#include <stdbool.h>
#include <stddef.h>

#include "diagnose.h"
#include "paramref.h"
#include "problem.h"
#include "sensitivity.h"
#include "solve.h"

/* Most balances one solve reports. */
#define THERMAL_MAX_POINTS 8

/* The self-heating keys of a model: indices into its table. */
struct thermal_keys {
	int temp;    /* temperature (the junction's, set to Tj for a solve) */
	int theta;   /* thermal_resistance, K/W */
	int tamb;    /* ambient_temperature, degC */
	int tjmax;   /* maximum_junction_temperature, degC */
};

/*
 * Fill K for TYPE and return true when TYPE can heat itself: it has the
 * four keys, a V(I) curve and a monotone I(V) (one electrical point at
 * each junction temperature).
 */
bool thermal_keys_of(const struct model_type *type, struct thermal_keys *k);

/* True when DEV heats itself: its model can and thermal_resistance > 0. */
bool thermal_active(const struct device *dev);

/*
 * Keep DEV's temperature parameter at its ambient when DEV heats itself
 * (the junction at zero power: what an isothermal view of it shows).  The
 * session does so on load, so a saved and reloaded device is the same.
 */
void thermal_normalise(struct device *dev);

/*
 * PB with its device at junction temperature TJ and the thermal
 * resistance set to 0 (the isothermal problem at TJ) into *Q.  PB's model
 * must have the keys (thermal_keys_of).
 */
void thermal_problem_at(const struct problem *pb, double tj,
                        struct problem *q);

/*
 * PB as it stands at its operating point (V, I): the isothermal problem at
 * the point's junction temperature (thermal_point_temperature) when PB
 * heats itself, else PB itself, into *Q.  The electrical curve through
 * the point, for diagnoses and plots.
 */
void thermal_problem_at_point(const struct problem *pb, double v, double i,
                              struct problem *q);

/*
 * The junction temperature of PB's operating point (V, I): Ta + theta
 * P(V, I) when PB heats itself, else the device's temperature parameter,
 * or NaN when the model has none.
 */
double thermal_point_temperature(const struct problem *pb, double v,
                                 double i);

/* One electrical solve at a junction temperature, with its slopes. */
struct thermal_eval {
	double tj;             /* the junction temperature, degC */
	struct op_point pt;    /* V, I, V I, r_d of the device at TJ */
	double p;              /* the heat turned out, W */
	double dv_dt, di_dt;   /* the point's drift along the load line */
	double dp_dt;          /* dP/dTj, W/K */
	double vt;             /* dV/dT at a fixed current, V/K */
	double gain;           /* theta dP/dTj (0 when theta is 0) */
};

/*
 * Solve PB's circuit electrically with the junction at TJ (O's tolerance;
 * the method is always the every-root solve) into *OUT, with the slopes
 * when SLOPES is true (else they are NaN).  Returns 0, or -1 when there
 * is not exactly one electrical point at TJ.
 */
int thermal_eval_at(const struct problem *pb, const struct solve_options *o,
                    double tj, bool slopes, struct thermal_eval *out);

/*
 * The same for a known operating point (V, I) of PB: Tj from the balance
 * (thermal_point_temperature) and the slopes there, no electrical solve.
 * Returns 0, or -1 when PB's model has no self-heating keys.
 */
int thermal_point_info(const struct problem *pb, double v, double i,
                       struct thermal_eval *out);

/* One heat balance. */
struct thermal_point {
	double tj;             /* junction temperature, degC */
	struct op_point pt;    /* the electrical point at TJ */
	double p;              /* heat, W */
	double dp_dt;          /* W/K */
	double gain;           /* G = theta dP/dTj */
	bool stable;           /* G < 1 */
	bool tangent;          /* the fold itself (G = 1 within rounding) */
};

/* How a self-heated solve ended. */
enum thermal_status {
	THERMAL_OK,            /* at least one balance up to Tjmax */
	THERMAL_RUNAWAY,       /* none: the part runs away (or overheats) */
	THERMAL_FAILED,        /* the electrical solve failed on the way */
	THERMAL_BAD_INPUT,     /* the problem cannot be solved as stated */
};

/* Every balance of a self-heated part, and what limits a runaway. */
struct thermal_result {
	enum thermal_status status;
	double theta, ta, tjmax;
	size_t n;              /* balances at or below tjmax, rising Tj */
	struct thermal_point pts[THERMAL_MAX_POINTS];
	double p_tjmax;        /* heat at tjmax, W (NaN: no solve there) */
	/* no balance up to tjmax: whether it runs away proper (nothing stops
	 * it, or the loop gain reaches 1 on the way to where it stops) or
	 * only overheats (G stays below 1 up to a balance past the rating),
	 * and the largest G seen on the way */
	bool gain_reaches_one;
	double gain_max;
	bool has_hot;          /* runaway: a balance above tjmax up to t_ext */
	struct thermal_point hot;  /* the first such balance */
	double t_ext;          /* how far above tjmax a runaway was followed */
	char message[400];     /* why not THERMAL_OK, or "" */
};

/*
 * Every balance of PB (which must heat itself: thermal_active) with O's
 * tolerance into *OUT.  Returns OUT->status.
 */
enum thermal_status thermal_solve(const struct problem *pb,
                                  const struct solve_options *o,
                                  struct thermal_result *out);

/*
 * thermal_solve as a solve_result (solve.h): the thermally stable balances
 * as operating points sorted by voltage (an unstable one is no state the
 * part stays in: heated past it, it runs away; cooled, it falls back to
 * the cool one), SOLVE_NONE with the runaway message.  The solver calls it
 * for a device that heats itself.
 */
enum solve_status thermal_solve_points(const struct problem *pb,
                                       const struct solve_options *o,
                                       struct solve_result *out);

/* How far a parameter can move before the stable balance vanishes. */
struct thermal_margin {
	struct paramref param; /* what is varied */
	double now;            /* its value now */
	bool has_point;        /* a stable balance exists now (up to t_end) */
	double tj;             /* its junction temperature (NaN: none) */
	bool found;            /* a fold was found up to t_end */
	double fold;           /* the value at the fold: runaway past it */
	double fold_tj;        /* the junction temperature at the fold */
	/* the value at which the stable balance reaches tjmax before the
	 * fold (NaN: the fold comes first, or no branch reaches tjmax) */
	double at_tjmax;
	double t_end;          /* how far up in Tj the branch was followed */
};

/*
 * The margin of PB (which must heat itself) in the parameter KEY
 * (paramref.h: "thermal_resistance", "ambient_temperature", "vs", ...)
 * into *OUT.  Returns 0, or -1 with a message in ERR (an unknown key, a
 * parameter PB's source cannot vary, no branch to follow).
 */
int thermal_margin(const struct problem *pb, const struct solve_options *o,
                   const char *key, struct thermal_margin *out, char *err,
                   size_t errlen);

/*
 * The sensitivities of the operating point (V, I) of PB, which heats
 * itself, to R (see sensitivity.h) by implicit differentiation of the
 * coupled equations: the isothermal sensitivities at the point's Tj
 * (dV/dp|T, dI/dp|T), then
 *
 *     dTj/dp = (dTa/dp + P dtheta/dp + theta (dP/dp|V,I
 *               + dP/dV dV/dp|T + dP/dI dI/dp|T)) / (1 - G)
 *     dV/dp = dV/dp|T + dV/dTj dTj/dp,  dI/dp = dI/dp|T + dI/dTj dTj/dp.
 *
 * (dP/dp|V,I: the heat's own dependence on a device parameter, by a
 * central difference).  Returns 0, or -1 at the fold (G = 1) or where the
 * isothermal one fails.
 */
int thermal_sensitivity(const struct problem *pb, double v, double i,
                        const struct paramref *r, struct sensitivity *out);

/* The thermal loop at one junction temperature, in words. */
struct thermal_diagnosis {
	double tj;             /* degC */
	double gain;           /* G = theta dP/dTj (the map's slope) */
	enum path_shape shape; /* of the plain iteration Tj <- Ta + theta P(Tj) */
	bool stable;           /* the part itself settles: G < 1 */
	double steps_to_tol;   /* predicted iterations to the tolerance */
	char verdict[160];
	char advice[256];
};

/* Diagnose PB's thermal loop at TJ (O's tolerance) into *D. */
void thermal_diagnose(const struct problem *pb, const struct solve_options *o,
                      double tj, struct thermal_diagnosis *d);

#endif
