/*
 * session_fit.h - what a fit of device parameters (core/fit.h) takes from
 * a session, shared by 'biasline fit' and the front end's points view:
 * the request's starting and held values, the points (a points file read
 * for the model's axes, or the session's own measured points), and where
 * the file the device was fitted to (device.fitted_to) lies.
 *
 * Ownership: a session_fit_points that read a file owns its table
 * (session_fit_points_fini frees it); one taken from a session borrows
 * the session's table.
 */
#ifndef BIASLINE_SESSION_FIT_H
#define BIASLINE_SESSION_FIT_H

#include <stdbool.h>
#include <stddef.h>

#include "core/fit.h"
#include "session/points_file.h"
#include "session/session.h"

/* The points a fit takes, whichever source they came from. */
struct session_fit_points {
	size_t n;
	const double *x, *y, *t;      /* t: NULL when the points have none */
	const unsigned *line;         /* file line of each row, or NULL */
	bool owned;                   /* TABLE holds them (a file was read) */
	struct points_table table;
};

/*
 * Fill RQ for fitting TYPE with weighting W: the values it starts from
 * and holds are TYPE's defaults, or S's device values when S (may be
 * NULL) has a device of TYPE.  No parameter is fixed and no points are
 * set (session_fit_use).
 */
void session_fit_request(const struct session *s,
                         const struct model_type *type, enum fit_weight w,
                         struct fit_request *rq);

/* The columns a points file holds for TYPE's axes: V, I and an optional
 * T, or T and R for a thermistor. */
void session_fit_spec(const struct model_type *type, struct points_spec *spec);

/*
 * Read the points file PATH for TYPE into P.  Returns SESSION_OK, or the
 * reader's status with ERR filled; no rows at all is SESSION_BAD_DATA.
 */
enum session_status session_fit_read(const char *path,
                                     const struct model_type *type,
                                     struct session_fit_points *p,
                                     struct session_error *err);

/*
 * S's own measured points (a measured device's table) for TYPE into P
 * (borrowed).  Returns 0, or -1 when S has none or TYPE is fitted on
 * other axes.
 */
int session_fit_own(const struct session *s, const struct model_type *type,
                    struct session_fit_points *p);

/* Point RQ at P's points. */
void session_fit_use(struct fit_request *rq, const struct session_fit_points *p);

/* Free what P owns. */
void session_fit_points_fini(struct session_fit_points *p);

/*
 * The path of S's device.fitted_to as seen from here: relative to the
 * folder of the session file SESSION_PATH (may be NULL) unless absolute.
 * Returns 0, or -1 when S has none or the path is too long.
 */
int session_fitted_path(const struct session *s, const char *session_path,
                        char *buf, size_t n);

/*
 * The name to record as device.fitted_to for the points file POINTS (as
 * given on the command line) in the session file SESSION_PATH: relative
 * to the session's folder when the points lie in it or below, else the
 * absolute path.  Returns 0, or -1 when it cannot be worked out.
 */
int session_fitted_name(const char *points, const char *session_path,
                        char *buf, size_t n);

#endif
