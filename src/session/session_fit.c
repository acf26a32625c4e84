/*
 * session_fit.c - a fit's request and points from a session (see
 * session_fit.h).
 */
/* realpath() */
#define _XOPEN_SOURCE 700

#include "session/session_fit.h"
#include "core/models/models.h"

#include <limits.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>


/* The request's values for TYPE from S. */
void session_fit_request(const struct session *s,
                         const struct model_type *type, enum fit_weight w,
                         struct fit_request *rq)
{
	memset(rq, 0, sizeof *rq);
	rq->type = type;
	rq->weight = w;
	struct device def;
	device_init(&def, type);
	memcpy(rq->p, def.p, sizeof rq->p);
	if (s != NULL && s->device.type == type)
		memcpy(rq->p, s->device.p, sizeof rq->p);
}

/* The columns for TYPE's axes. */
void session_fit_spec(const struct model_type *type, struct points_spec *spec)
{
	memset(spec, 0, sizeof *spec);
	spec->max_rows = FIT_MAX_POINTS;
	if (fit_model_axes(type) == FIT_AXES_TR) {
		spec->ncols = 2;
		spec->role[0] = POINTS_TEMPERATURE;
		spec->role[1] = POINTS_RESISTANCE;
	} else {
		spec->ncols = 3;
		spec->role[0] = POINTS_VOLTAGE;
		spec->role[1] = POINTS_CURRENT;
		spec->role[2] = POINTS_TEMPERATURE;
		spec->optional[2] = true;
	}
}

/* Read PATH for TYPE. */
enum session_status session_fit_read(const char *path,
                                     const struct model_type *type,
                                     struct session_fit_points *p,
                                     struct session_error *err)
{
	memset(p, 0, sizeof *p);
	struct points_spec spec;
	session_fit_spec(type, &spec);
	enum session_status st = points_file_read(path, "", &spec, &p->table, err);
	if (st != SESSION_OK)
		return st;
	if (p->table.n == 0) {
		memset(err, 0, sizeof *err);
		snprintf(err->file, sizeof err->file, "%s", path);
		snprintf(err->message, sizeof err->message, "no points (only blank "
		         "lines, comments or a header)");
		points_table_fini(&p->table);
		return SESSION_BAD_DATA;
	}
	p->owned = true;
	p->n = p->table.n;
	p->x = p->table.col[0];
	p->y = p->table.col[1];
	p->t = spec.ncols == 3 && p->table.present[2] ? p->table.col[2] : NULL;
	p->line = p->table.line;
	return SESSION_OK;
}

/* S's own points. */
int session_fit_own(const struct session *s, const struct model_type *type,
                    struct session_fit_points *p)
{
	memset(p, 0, sizeof *p);
	if (s->curve == NULL || fit_model_axes(type) != FIT_AXES_VI)
		return -1;
	p->n = s->curve->n;
	p->x = s->curve->v;
	p->y = s->curve->i;
	return 0;
}

/* Point RQ at P. */
void session_fit_use(struct fit_request *rq, const struct session_fit_points *p)
{
	rq->n = p->n;
	rq->x = p->x;
	rq->y = p->y;
	rq->t = p->t;
}

/* Free what P owns. */
void session_fit_points_fini(struct session_fit_points *p)
{
	if (p->owned)
		points_table_fini(&p->table);
	memset(p, 0, sizeof *p);
}

/* The length of the folder part of PATH ("" -> 0, "a/b.yaml" -> 1). */
static size_t session_fit_dirlen(const char *path)
{
	const char *slash = path != NULL ? strrchr(path, '/') : NULL;
	return slash != NULL ? (size_t)(slash - path) : 0;
}

/* Where fitted_to lies. */
int session_fitted_path(const struct session *s, const char *session_path,
                        char *buf, size_t n)
{
	if (s->fitted_to == NULL)
		return -1;
	size_t d = session_fit_dirlen(session_path);
	int w;
	if (s->fitted_to[0] == '/' || session_path == NULL ||
	    strchr(session_path, '/') == NULL)
		w = snprintf(buf, n, "%s", s->fitted_to);
	else
		w = snprintf(buf, n, "%.*s/%s", (int)d, session_path, s->fitted_to);
	return w >= 0 && (size_t)w < n ? 0 : -1;
}

/* The name to record for POINTS in SESSION_PATH. */
int session_fitted_name(const char *points, const char *session_path,
                        char *buf, size_t n)
{
	char rp[PATH_MAX], rs[PATH_MAX];
	if (realpath(points, rp) == NULL || realpath(session_path, rs) == NULL)
		return -1;
	size_t d = session_fit_dirlen(rs);
	int w;
	if (d > 0 && strncmp(rp, rs, d) == 0 && rp[d] == '/')
		w = snprintf(buf, n, "%s", rp + d + 1);
	else
		w = snprintf(buf, n, "%s", rp);
	return w >= 0 && (size_t)w < n ? 0 : -1;
}
