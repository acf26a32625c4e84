/*
 * app.c - the state every pane shares and the services that change it
 * (see app.h).  The event loop is in tui.c.
 */
/* getpwnam() for "~user" in typed file names */
#define _POSIX_C_SOURCE 200809L

#include "tui/app.h"

#include <math.h>
#include <pwd.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>

#include "core/thermal.h"
#include "session/atomic.h"
#include "session/recovery.h"

/* Copy the string S into new memory (NULL when S is NULL or no memory). */
static char *app_strdup(const char *s)
{
	if (s == NULL)
		return NULL;
	size_t n = strlen(s) + 1;
	char *d = malloc(n);
	if (d != NULL)
		memcpy(d, s, n);
	return d;
}

/* Show a message on the status line. */
void app_message(struct app *a, bool error, const char *fmt, ...)
{
	va_list ap;
	va_start(ap, fmt);
	vsnprintf(a->status, sizeof a->status, fmt, ap);
	va_end(ap);
	a->status_error = error;
}

/* Seconds on the monotonic clock. */
static double app_now(void)
{
	struct timespec ts;
	clock_gettime(CLOCK_MONOTONIC, &ts);
	return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

/* The core's report on long work: look at the keyboard, show how far. */
static void app_work_report(void *ctx, double done)
{
	struct app_work *w = ctx;
	if (done >= 0.0)
		w->done = done;
	double t = app_now();
	if (t - w->polled < 1e-3 * APP_WORK_POLL_MS)
		return;
	w->polled = t;
	/* Esc or Ctrl-C stops; anything else is dropped (a resize is drawn
	 * when the work ends) */
	for (int key; (key = term_read_key(&w->a->term, 0)) != TK_NONE;) {
		if (key == TK_ESC || key == TK_INTERRUPT)
			term_work_cancel();
		if (key == TK_ERROR)
			break;
	}
	if (t - w->start < 1e-3 * APP_WORK_SHOW_MS || t - w->drawn < 0.1)
		return;
	w->drawn = t;
	w->shown = true;
	char line[200], left[48] = "";
	double rest = w->done > 0.0 ? (t - w->start) * (1.0 - w->done) / w->done
	                            : NAN;
	if (w->done >= 1.0)
		snprintf(left, sizeof left, ", finishing");
	else if (isfinite(rest))
		snprintf(left, sizeof left, ", about %.0f s left", ceil(rest));
	snprintf(line, sizeof line, "%s: %.0f %%%s (Esc stops)", w->what,
	         floor(100.0 * w->done), left);
	int rows, cols;
	term_size(&w->a->term, &rows, &cols);
	term_fill(&w->a->term, rows - 1, 0, cols, TS_NORMAL);
	term_text(&w->a->term, rows - 1, 0, line, cols, TS_HEADER);
	term_end(&w->a->term);
}

/* Start long work. */
void app_work_begin(struct app *a, struct app_work *w, const char *what)
{
	memset(w, 0, sizeof *w);
	w->a = a;
	snprintf(w->what, sizeof w->what, "%s", what);
	w->start = w->polled = app_now();
	w->core.stop = term_work_begin();
	w->core.report = app_work_report;
	w->core.ctx = w;
}

/* End long work. */
enum app_work_end app_work_end(struct app_work *w)
{
	bool stopped = *w->core.stop != 0;
	term_work_end();
	if (term_stop_signal() != 0)
		return APP_WORK_SIGNALLED;
	return stopped ? APP_WORK_CANCELLED : APP_WORK_DONE;
}

/* Fill A from the options. */
int app_init(struct app *a, const struct tui_options *opt, char *err,
             size_t errlen)
{
	memset(a, 0, sizeof *a);
	a->opt = *opt;
	a->st = stepper_create();
	a->tst = thermal_stepper_create();
	a->tstart = NAN;
	if (a->st == NULL || a->tst == NULL) {
		stepper_destroy(a->st);
		thermal_stepper_destroy(a->tst);
		snprintf(err, errlen, "out of memory");
		return -1;
	}
	if (opt->path != NULL) {
		struct session_error serr;
		enum session_status ss = session_load_file_text(&a->s, opt->path,
		                                                &a->text, &serr);
		if (ss != SESSION_OK) {
			session_error_format(&serr, err, errlen);
			stepper_destroy(a->st);
			thermal_stepper_destroy(a->tst);
			return ss == SESSION_NO_INPUT ? 66 : 65;
		}
		a->path = app_strdup(opt->path);
	} else {
		session_demo(&a->s);
	}
	app_resolve(a);
	a->qlen = 0;   /* nobody listens yet: the panes start from the state */
	app_message(a, false, "Space steps, g runs, ? lists every key");
	return 0;
}

/* Free what A owns. */
void app_fini(struct app *a)
{
	stepper_destroy(a->st);
	a->st = NULL;
	thermal_stepper_destroy(a->tst);
	a->tst = NULL;
	session_fini(&a->s);
	session_text_fini(&a->text);
	free(a->path);
	a->path = NULL;
	free(a->picture);
	a->picture = NULL;
}

/* Clear an overlay's box and its ring, and draw the side borders. */
void app_overlay_box(struct app *a, int top, int left, int h, int w)
{
	int rows, cols;
	term_size(&a->term, &rows, &cols);
	int r0 = top > 1 ? top - 1 : top, r1 = top + h < rows - 1 ? top + h : top + h - 1;
	int c0 = left > 0 ? left - 1 : left;
	int c1 = left + w < cols ? left + w : left + w - 1;
	for (int r = r0; r <= r1; r++)
		term_fill(&a->term, r, c0, c1 - c0 + 1, TS_NORMAL);
	uint32_t bar = app_unicode(a) ? 0x2502 : '|';
	for (int r = top + 1; r < top + h - 1; r++) {
		term_put(&a->term, r, left, bar, TS_TITLE);
		term_put(&a->term, r, left + w - 1, bar, TS_TITLE);
	}
}

/* Whether marks are Unicode. */
bool app_unicode(const struct app *a)
{
	return a->opt.unicode;
}

/* The point the diagnosis speaks of. */
size_t app_focus_point(const struct app *a, bool *heading)
{
	*heading = false;
	if (a->res.n == 0)
		return (size_t)-1;
	size_t sel = a->point < a->res.n ? a->point : 0;
	size_t n;
	const struct trace_row *rows = stepper_trace(a->st, &n);
	if (a->res.n == 1 || n < 2 || !isfinite(rows[n - 1].v) ||
	    !isfinite(rows[n - 1].i))
		return sel;
	/* Nearest in the plot's sense: each axis scaled by the points' spread
	 * (or the newest iterate's own size when the points share a value). */
	double vs = 0.0, is = 0.0;
	for (size_t k = 0; k < a->res.n; k++) {
		vs = fmax(vs, fabs(a->res.pts[k].v - a->res.pts[0].v));
		is = fmax(is, fabs(a->res.pts[k].i - a->res.pts[0].i));
	}
	if (!(vs > 0.0))
		vs = fmax(fabs(rows[n - 1].v), 1e-12);
	if (!(is > 0.0))
		is = fmax(fabs(rows[n - 1].i), 1e-15);
	size_t best = sel;
	double bd = INFINITY;
	for (size_t k = 0; k < a->res.n; k++) {
		double dv = (rows[n - 1].v - a->res.pts[k].v) / vs;
		double di = (rows[n - 1].i - a->res.pts[k].i) / is;
		double d = dv * dv + di * di;
		if (d < bd) {
			bd = d;
			best = k;
		}
	}
	*heading = true;
	return best;
}

/* The stability verdict of point K. */
struct stability_result app_stability(const struct app *a, size_t k)
{
	struct stability_result r;
	stability_classify(&a->pb, k < a->res.n ? a->res.pts[k].rd : NAN,
	                   &a->s.reactive, &r);
	return r;
}

/* Mark the plot's content as changed. */
void app_touch(struct app *a)
{
	a->gen++;
}

/* Queue an action. */
void app_post(struct app *a, const struct action *act)
{
	if (a->qlen >= APP_QUEUE) {
		app_message(a, true, "too many requests at once: one was dropped");
		return;
	}
	a->queue[(a->qhead + a->qlen) % APP_QUEUE] = *act;
	a->qlen++;
}

/* Ask a question on the bottom line. */
void app_ask(struct app *a, const struct pane *from, int tag, bool yesno,
             const char *question, const char *initial, const char *error)
{
	struct action act = { .kind = ACT_ASK, .to = NULL, .from = from,
	                      .tag = tag, .yesno = yesno,
	                      .default_no = from == NULL && tag == APP_ASK_OVERWRITE };
	snprintf(act.text, sizeof act.text, "%s", question);
	snprintf(act.initial, sizeof act.initial, "%s", initial ? initial : "");
	snprintf(act.error, sizeof act.error, "%s", error ? error : "");
	app_post(a, &act);
}

/* The stepper options for the path: the session's, "auto" drawn as projections. */
static struct solve_options app_path_options(const struct app *a)
{
	struct solve_options o = a->s.solver;
	if (o.method == METHOD_AUTO)
		o.method = METHOD_PROJECTION;
	return o;
}

/*
 * The circuit the load line shows: PB, or a self-heated device at its
 * coolest operating point's junction temperature (the ambient when it
 * has none).
 */
static void app_shown_problem(struct app *a)
{
	a->epb = a->pb;
	if (!thermal_active(&a->pb.dev))
		return;
	double tj = thermal_point_temperature(&a->pb, 0.0, 0.0);
	for (size_t k = 0; k < a->res.n; k++) {
		double t = thermal_point_temperature(&a->pb, a->res.pts[k].v,
		                                     a->res.pts[k].i);
		if (k == 0 || t < tj)
			tj = t;
	}
	thermal_problem_at(&a->pb, tj, &a->epb);
}

/* Solve again and restart the paths. */
void app_resolve(struct app *a)
{
	app_touch(a);
	a->changes++;
	a->running = false;
	a->res.n = 0;
	a->res.status = SOLVE_BAD_INPUT;
	a->res.message[0] = '\0';
	a->pb_ok = session_problem(&a->s, &a->pb, a->pb_err, sizeof a->pb_err) == 0;
	a->epb = a->pb;
	if (a->pb_ok) {
		struct solve_options so = a->s.solver;
		so.method = METHOD_AUTO;
		if (solve_problem(&a->pb, &so, &a->res) != SOLVE_OK)
			a->res.n = 0;
		app_shown_problem(a);
		struct solve_options po = app_path_options(a);
		stepper_init(a->st, &a->epb, &po);
		if (thermal_active(&a->pb.dev))
			thermal_stepper_init(a->tst, &a->pb, &a->s.solver, a->tstart);
	}
	if (a->thermal && !(a->pb_ok && thermal_active(&a->pb.dev))) {
		a->thermal = false;
		app_message(a, false, "the device no longer heats itself: back to "
		            "the load line");
	}
	if (a->point >= a->res.n)
		a->point = 0;
	struct action changed = { .kind = ACT_CHANGED };
	app_post(a, &changed);
}

/* Open or close the thermal view. */
void app_thermal_view(struct app *a, bool open)
{
	a->running = false;
	if (open && !(a->pb_ok && thermal_active(&a->pb.dev))) {
		app_message(a, true, "no thermal loop: the device does not heat "
		            "itself (give it thermal_resistance and "
		            "ambient_temperature)");
		return;
	}
	a->thermal = open;
	app_touch(a);
	if (open)
		app_message(a, false, "thermal plane: Space steps the thermal loop, "
		            "g runs it; H or Esc goes back");
	else
		app_message(a, false, "back to the load line");
}

/* A new undo entry for KEY (the oldest is forgotten when full). */
static struct app_change *app_undo_push(struct app *a, const char *key)
{
	if (a->nundo == APP_UNDO) {
		memmove(a->undo, a->undo + 1, (APP_UNDO - 1) * sizeof a->undo[0]);
		a->nundo--;
	}
	struct app_change *c = &a->undo[a->nundo++];
	memset(c, 0, sizeof *c);
	snprintf(c->key, sizeof c->key, "%s", key);
	return c;
}

/* Set KEY to VALUE, remembering the old value. */
int app_param_set(struct app *a, const char *key, double value, char *err,
                  size_t errlen)
{
	struct param p;
	if (params_find(&a->s, key, &p) != 0) {
		snprintf(err, errlen, "%s: this session has no such value", key);
		return -1;
	}
	double old = params_get(&a->s, &p);
	int ti = a->s.device.type != NULL
	         ? model_param_index(a->s.device.type, "temperature") : -1;
	double temp = ti >= 0 ? a->s.device.p[ti] : NAN;
	if (params_set(&a->s, &p, value, err, errlen) != 0)
		return -1;
	struct app_change *c = app_undo_push(a, key);
	c->old = old;
	/* the temperature a self-heated device's ambient carried along */
	c->temp_old = ti >= 0 && a->s.device.p[ti] != temp ? temp : NAN;
	a->dirty = true;
	app_resolve(a);
	return 0;
}

/* Make DEV the session's device, remembering the old one. */
int app_device_set(struct app *a, const struct device *dev, char *err,
                   size_t errlen)
{
	struct device old = a->s.device;
	struct device d = *dev;
	d.curve = old.curve;   /* the session owns its table either way */
	if (device_validate(&d, err, errlen) != 0)
		return -1;
	a->s.device = d;
	struct problem pb;
	if (session_problem(&a->s, &pb, err, errlen) != 0) {
		a->s.device = old;
		return -1;
	}
	struct app_change *c = app_undo_push(a, "device");
	c->device = true;
	c->old_device = old;
	a->dirty = true;
	app_resolve(a);
	return 0;
}

/* True when KEY names a target, rating or tolerance. */
bool app_key_is_analysis(const char *key)
{
	return strncmp(key, "target.", 7) == 0 ||
	       strncmp(key, "ratings.", 8) == 0 ||
	       strncmp(key, "tolerances.", 11) == 0;
}

/* The target, ratings or tolerances changed from OLD by KEY: remember
 * OLD for undo and solve again (nothing when nothing changed). */
static void app_analysis_changed(struct app *a, const char *key,
                                 const struct session_analysis *old)
{
	if (session_analysis_equal(old, &a->s.analysis))
		return;   /* nothing to undo or save */
	struct app_change *c = app_undo_push(a, key);
	c->analysis = true;
	c->old_analysis = *old;
	a->dirty = true;
	app_resolve(a);
}

/* Set KEY from typed TEXT, remembering the old value. */
int app_text_set(struct app *a, const char *key, const char *text, char *err,
                 size_t errlen)
{
	if (!app_key_is_analysis(key)) {
		/* A value of a row: typed with its unit, kept as a number. */
		struct param p;
		if (params_find(&a->s, key, &p) != 0) {
			snprintf(err, errlen, "%s: this session has no such value", key);
			return -1;
		}
		double v;
		if (qty_parse(text, p.unit, &v, err, errlen) != QTY_OK)
			return -1;
		return app_param_set(a, key, v, err, errlen);
	}
	struct session_analysis old = a->s.analysis;
	if (session_set_text(&a->s, key, text, err, errlen) != SESSION_SET_OK)
		return -1;
	app_analysis_changed(a, key, &old);
	return 0;
}

/* Undo the last change. */
int app_undo(struct app *a)
{
	while (a->nundo > 0) {
		struct app_change *cp = &a->undo[--a->nundo];
		if (cp->device) {
			a->s.device = cp->old_device;
			a->dirty = true;
			app_resolve(a);
			app_message(a, false, "undone: the device is the %s again",
			            a->s.device.type->name);
			return 0;
		}
		if (cp->analysis) {
			a->s.analysis = cp->old_analysis;
			a->dirty = true;
			app_resolve(a);
			app_message(a, false, "undone: the change of %s", cp->key);
			return 0;
		}
		char key[sizeof cp->key];
		snprintf(key, sizeof key, "%s", cp->key);
		double old = cp->old, temp_old = cp->temp_old;
		struct param p;
		char err[256];
		/* A row the session no longer has (a model changed) is skipped. */
		if (params_find(&a->s, key, &p) != 0 ||
		    params_set(&a->s, &p, old, err, sizeof err) != 0)
			continue;
		struct param t;
		if (!isnan(temp_old) && params_find(&a->s, "temperature", &t) == 0)
			params_set(&a->s, &t, temp_old, err, sizeof err);
		char buf[64];
		params_format(&a->s, &p, !app_unicode(a), buf, sizeof buf);
		a->dirty = true;
		app_resolve(a);
		struct action sel = { .kind = ACT_SELECT };
		snprintf(sel.text, sizeof sel.text, "%s", key);
		app_post(a, &sel);
		app_message(a, false, "undone: %s = %s", p.label, buf);
		return 0;
	}
	return -1;
}

/* The name of verdict line L as the screen shows it. */
static const char *app_verdict_name(const struct verdict_line *l)
{
	return l->part == VERDICT_DEVICE_CURRENT ? "device" : l->name;
}

/* Verdict line L in one or two lines of W cells. */
void app_verdict_text(const struct app *a, const struct verdict_line *l,
                      int w, char *one, char *two, size_t n)
{
	int ascii = app_unicode(a) ? 0 : 1;
	char v[48], r[48], m[48] = "";
	qty_format_short(v, sizeof v, l->value, l->unit, 4, ascii);
	two[0] = '\0';
	if (l->verdict == RATINGS_NO_RATING || !isfinite(l->rating)) {
		snprintf(one, n, "%s %s", app_verdict_name(l), v);
		return;
	}
	qty_format_short(r, sizeof r, l->rating, l->unit, 3, ascii);
	if (isfinite(l->margin))
		snprintf(m, sizeof m, ", margin %.0f %%", 100.0 * l->margin);
	const char *word = ratings_verdict_name(l->verdict);
	snprintf(one, n, "%s %s of %s%s  %s", app_verdict_name(l), v, r, m, word);
	if (render_text_width(one) <= w)
		return;
	snprintf(one, n, "%s %s  %s", app_verdict_name(l), v, word);
	snprintf(two, n, "  %.0f %% of %s%s", 100.0 * l->use, r, m);
	if (render_text_width(one) <= w)
		return;
	/* Still too wide ("junction 51.89 degC  within rating" in a narrow
	 * pane): the verdict word moves to the second line, never cut. */
	snprintf(one, n, "%s %s", app_verdict_name(l), v);
	snprintf(two, n, "  %s, %.0f %% of %s", word, 100.0 * l->use, r);
}

/* The target line of VD. */
void app_verdict_target(const struct app *a, const struct verdict *vd, int w,
                        char *buf, size_t n)
{
	const struct verdict_target *t = &vd->target;
	if (!t->given) {
		buf[0] = '\0';
		return;
	}
	if (render_text_width(t->words) <= w) {
		snprintf(buf, n, "%s", t->words);
		return;
	}
	int ascii = app_unicode(a) ? 0 : 1;
	char v[48];
	enum qty_kind u = t->kind == DESIGN_RESULT ? QTY_NUMBER
	                  : design_target_unit(t->kind);
	qty_format_short(v, sizeof v, t->value, u, 4, ascii);
	if (isfinite(t->error_percent))
		snprintf(buf, n, "target %s: error %+.3g %%", v, t->error_percent);
	else
		snprintf(buf, n, "target %s: no point", v);
}

/* Expand "~" and "~user" at the start of a typed file name. */
int app_expand_path(const char *in, char *out, size_t n)
{
	if (in[0] != '~') {
		if (snprintf(out, n, "%s", in) >= (int)n) {
			snprintf(out, n, "the file name is too long");
			return -1;
		}
		return 0;
	}
	size_t ul = strcspn(in + 1, "/");
	const char *rest = in + 1 + ul;
	const char *home;
	if (ul == 0) {
		home = getenv("HOME");
		if (home == NULL || home[0] == '\0') {
			snprintf(out, n, "cannot expand ~: HOME is not set");
			return -1;
		}
	} else {
		char user[256];
		if (ul >= sizeof user) {
			snprintf(out, n, "cannot expand ~: the user name is too long");
			return -1;
		}
		memcpy(user, in + 1, ul);
		user[ul] = '\0';
		const struct passwd *pw = getpwnam(user);
		if (pw == NULL || pw->pw_dir == NULL) {
			snprintf(out, n, "cannot expand ~%s: no such user", user);
			return -1;
		}
		home = pw->pw_dir;
	}
	if (snprintf(out, n, "%s%s", home, rest) >= (int)n) {
		snprintf(out, n, "the file name is too long");
		return -1;
	}
	return 0;
}

/* True when PATH is the session's own (existing) file. */
bool app_is_own_file(const struct app *a, const char *path)
{
	struct stat x, y;
	if (a->path == NULL || stat(a->path, &x) != 0 || stat(path, &y) != 0)
		return false;
	return x.st_dev == y.st_dev && x.st_ino == y.st_ino;
}

/* Ask for a file name for what is being written (the session or a
 * picture). */
static void app_ask_name(struct app *a, const char *initial, const char *error)
{
	app_ask(a, NULL, APP_ASK_SAVE_AS, false,
	        a->writing_picture ? "write SVG as: " : "save as: ", initial, error);
}

/* Ask for a file name to save the session to. */
void app_ask_save_as(struct app *a, const char *initial, const char *error)
{
	a->writing_picture = false;
	app_ask_name(a, initial, error);
}

/* True when PATH is the own file and changed since it was read. */
bool app_changed_on_disk(const struct app *a, const char *path)
{
	return a->text.buf != NULL && app_is_own_file(a, path) &&
	       session_text_matches_file(&a->text, path) == 0;
}

/* Ask before replacing PATH. */
void app_ask_overwrite(struct app *a, const char *path, const char *typed,
                       bool own)
{
	snprintf(a->pending, sizeof a->pending, "%s", path);
	snprintf(a->pending_typed, sizeof a->pending_typed, "%.255s", typed);
	char q[1100];
	if (own)
		snprintf(q, sizeof q, "%.1000s changed on disk since it was read: "
		         "replace it with this session? (y/N) ", path);
	else
		snprintf(q, sizeof q, "%.1000s exists: replace it? (y/N) ", path);
	app_ask(a, NULL, APP_ASK_OVERWRITE, true, q, NULL, NULL);
}

/* Save to PATH or the session's own file, keeping the file's text. */
int app_save(struct app *a, const char *path)
{
	const char *target = path != NULL ? path : a->path;
	if (target == NULL) {
		app_ask_save_as(a, "", NULL);
		return -1;
	}
	struct session_error serr;
	struct session_save_report rep;
	enum session_status ss = session_save_keeping_text(&a->s, &a->text, target,
	                                                   &rep, &serr);
	if (ss != SESSION_OK) {
		char msg[1024];
		session_error_format(&serr, msg, sizeof msg);
		app_message(a, true, "not saved: %s", msg);
		return -1;
	}
	/* The file is the newer copy now: recovery files are stale. */
	char rerr[256];
	recovery_remove(a->path, rerr, sizeof rerr);
	if (target != a->path) {
		char *copy = app_strdup(target);
		if (copy != NULL) {
			free(a->path);
			a->path = copy;
		}
		recovery_remove(a->path, rerr, sizeof rerr);
	}
	a->dirty = false;
	const char *base = strrchr(a->path, '/');
	base = base != NULL ? base + 1 : a->path;
	size_t n = rep.changed + rep.inserted + rep.removed;
	switch (rep.how) {
	case SESSION_SAVED_PATCHED:
		app_message(a, false, "saved %s: %zu value%s rewritten, the rest "
		            "kept as written", base, n, n == 1 ? "" : "s");
		break;
	case SESSION_SAVED_UNCHANGED:
		app_message(a, false, "saved %s (nothing had changed)", base);
		break;
	case SESSION_SAVED_CANONICAL:
		app_message(a, true, "saved %s in standard form (comments below "
		            "the top are lost): %s", base, rep.why);
		break;
	case SESSION_SAVED_NEW:
	default:
		app_message(a, false, "saved %s", base);
		break;
	}
	return 0;
}

/* Say on the status line why the thermal path stopped (ST). */
static void app_thermal_stopped(struct app *a, enum step_status st)
{
	size_t n;
	thermal_stepper_trace(a->tst, &n);
	const struct thermal_row *last = thermal_stepper_last(a->tst);
	char t[48];
	qty_format_short(t, sizeof t, last != NULL ? last->tj : NAN,
	                 QTY_TEMPERATURE, 4, app_unicode(a) ? 0 : 1);
	switch (st) {
	case STEP_CONVERGED:
		app_message(a, false, "thermal loop converged: Tj = %s after %zu "
		            "projections", t, n - 1);
		break;
	case STEP_DIVERGING:
		app_message(a, true, "thermal runaway: the junction passed its "
		            "maximum at %s (r restarts)", t);
		break;
	default:
		app_message(a, true, "the thermal path has stopped at %s: %s (r "
		            "restarts it)", t, step_status_name(st));
		break;
	}
}

/* Step the path once (the thermal path while the thermal view is open). */
void app_step(struct app *a)
{
	if (a->thermal) {
		enum step_status st = thermal_stepper_status(a->tst);
		if (st == STEP_CONTINUE)
			st = thermal_stepper_step(a->tst);
		if (st != STEP_CONTINUE)
			app_thermal_stopped(a, st);
		else
			a->status[0] = '\0';
		app_touch(a);
		return;
	}
	enum step_status st = stepper_status(a->st);
	if (!a->pb_ok) {
		app_message(a, true, "%s", a->pb_err);
	} else if (st != STEP_CONTINUE) {
		app_message(a, st != STEP_CONVERGED, "the path has stopped: %s "
		            "(r restarts it)", step_status_name(st));
	} else {
		stepper_step(a->st);
		a->status[0] = '\0';
	}
	app_touch(a);
}

/* Take one chunk of a run. */
void app_run_chunk(struct app *a)
{
	if (!a->pb_ok) {
		a->running = false;
		app_message(a, true, "%s", a->pb_err);
		return;
	}
	if (a->thermal) {
		for (int k = 0; k < APP_RUN_CHUNK; k++)
			if (thermal_stepper_status(a->tst) != STEP_CONTINUE ||
			    thermal_stepper_step(a->tst) != STEP_CONTINUE)
				break;
		app_touch(a);
		enum step_status st = thermal_stepper_status(a->tst);
		if (st != STEP_CONTINUE) {
			a->running = false;
			app_thermal_stopped(a, st);
		}
		return;
	}
	for (int k = 0; k < APP_RUN_CHUNK; k++)
		if (stepper_status(a->st) != STEP_CONTINUE ||
		    stepper_step(a->st) != STEP_CONTINUE)
			break;
	app_touch(a);
	enum step_status st = stepper_status(a->st);
	if (st == STEP_CONTINUE)
		return;
	a->running = false;
	size_t n;
	stepper_trace(a->st, &n);
	app_message(a, st != STEP_CONVERGED, "%s after %zu projections",
	            step_status_name(st), n - 1);
}

/* Answer the restore question: Y restores, otherwise the file is set aside. */
static unsigned app_restore(struct app *a, bool yes)
{
	char err[1024];
	if (!yes) {
		char aside[RECOVERY_PATH_MAX];
		if (recovery_set_aside(a->path, aside, sizeof aside, err,
		                       sizeof err) != 0) {
			app_message(a, true, "%s", err);
			return APP_HANDLED | APP_REDRAW;
		}
		const char *base = strrchr(aside, '/');
		app_message(a, false, "recovery file set aside as %s",
		            base != NULL ? base + 1 : aside);
		return APP_HANDLED | APP_REDRAW;
	}
	struct session tmp;
	char p[RECOVERY_PATH_MAX];
	struct session_error serr;
	if (recovery_find(a->path, p, sizeof p) != 1) {
		app_message(a, true, "cannot restore: the recovery file is gone");
		return APP_HANDLED | APP_REDRAW;
	}
	if (session_load_file(&tmp, p, &serr) != SESSION_OK) {
		session_error_format(&serr, err, sizeof err);
		app_message(a, true, "cannot restore: %s", err);
		return APP_HANDLED | APP_REDRAW;
	}
	session_fini(&a->s);
	a->s = tmp;
	a->dirty = true;
	a->nundo = 0;
	app_resolve(a);
	app_message(a, false, "restored the unsaved changes (s saves them)");
	return APP_HANDLED | APP_REDRAW;
}

/* Write the waiting picture to PATH; returns 0, or -1 with the status
 * line saying why. */
static int app_picture_to(struct app *a, const char *path)
{
	char err[1200];
	if (a->picture == NULL) {
		app_message(a, true, "no picture to write");
		return -1;
	}
	if (atomic_write_file(path, a->picture, a->picture_len, err,
	                      sizeof err) != 0) {
		app_message(a, true, "%s", err);
		return -1;
	}
	free(a->picture);
	a->picture = NULL;
	a->writing_picture = false;
	app_message(a, false, "wrote the view as %s (copy it off with scp or "
	            "rsync)", path);
	return 0;
}

/* Save (or write the picture) to the name PATH the user confirmed (TYPED
 * as typed); a failure asks for the name again with the reason. */
static unsigned app_save_to(struct app *a, const char *path, const char *typed)
{
	char name[sizeof a->pending];
	snprintf(name, sizeof name, "%s", path);
	if ((a->writing_picture ? app_picture_to(a, name) : app_save(a, name)) != 0) {
		char why[sizeof a->status];
		snprintf(why, sizeof why, "%s", a->status);
		app_ask_name(a, typed, why);
	}
	return APP_HANDLED | APP_REDRAW;
}

/*
 * Take a typed file name: expand ~, refuse a folder, and ask before
 * replacing a file other than the session's own.
 */
static unsigned app_save_as(struct app *a, const char *typed)
{
	if (typed[0] == '\0') {
		app_ask_name(a, "", "type a file name, or Esc");
		return APP_HANDLED | APP_REDRAW;
	}
	char path[sizeof a->pending];
	if (app_expand_path(typed, path, sizeof path) != 0) {
		app_ask_name(a, typed, path);
		return APP_HANDLED | APP_REDRAW;
	}
	struct stat st;
	if (stat(path, &st) == 0) {
		if (S_ISDIR(st.st_mode)) {
			char why[1100];
			snprintf(why, sizeof why, "%.1000s is a folder: type a file name "
			         "in it", path);
			app_ask_name(a, typed, why);
			return APP_HANDLED | APP_REDRAW;
		}
		/* A picture never goes over the session it shows. */
		if (a->writing_picture && app_is_own_file(a, path)) {
			app_ask_name(a, typed, "that is the session file: type another "
			             "name for the picture");
			return APP_HANDLED | APP_REDRAW;
		}
		if (a->writing_picture) {
			app_ask_overwrite(a, path, typed, false);
			return APP_HANDLED | APP_REDRAW;
		}
		bool own = app_is_own_file(a, path);
		if (!own || app_changed_on_disk(a, path)) {
			app_ask_overwrite(a, path, typed, own);
			return APP_HANDLED | APP_REDRAW;
		}
	}
	return app_save_to(a, path, typed);
}

/* The target's question. */
#define APP_TARGET_Q "target (10mA, -5mA, 2.1V or 20mW; KEY=VALUE for " \
	"solve_for, series, current_min/max, voltage_min/max; none removes): "
/* The ratings' question. */
#define APP_RATING_Q "rating KEY=VALUE (device_max_power, device_max_current, " \
	"resistor_power, ambient_temperature; VALUE none removes): "

/* Ask for the target. */
void app_ask_target(struct app *a, const char *initial, const char *error)
{
	char now[64] = "";
	const struct session_target *t = &a->s.analysis.target;
	int ascii = app_unicode(a) ? 0 : 1;
	if (initial == NULL) {
		if (isfinite(t->current))
			qty_format_short(now, sizeof now, t->current, QTY_CURRENT, 6, ascii);
		else if (isfinite(t->voltage))
			qty_format_short(now, sizeof now, t->voltage, QTY_VOLTAGE, 6, ascii);
		else if (isfinite(t->power))
			qty_format_short(now, sizeof now, t->power, QTY_POWER, 6, ascii);
		/* typed back, the value must parse: no thin spaces */
		for (char *c = now; *c != '\0'; c++)
			if (*c == ' ')
				memmove(c, c + 1, strlen(c));
		initial = now;
	}
	app_ask(a, NULL, APP_ASK_TARGET, false, APP_TARGET_Q, initial, error);
}

/* Ask for a rating. */
void app_ask_rating(struct app *a, const char *initial, const char *error)
{
	app_ask(a, NULL, APP_ASK_RATING, false, APP_RATING_Q, initial, error);
}

/* Take a typed target: a value (its unit says which), KEY=VALUE or none. */
static unsigned app_take_target(struct app *a, const char *text)
{
	char err[512], key[SESSION_SET_KEY_MAX];
	const char *value = NULL;
	if (strchr(text, '=') != NULL) {
		char k[SESSION_SET_KEY_MAX];
		if (session_set_split(text, k, sizeof k, &value, err, sizeof err) !=
		    SESSION_SET_OK) {
			app_ask_target(a, text, err);
			return APP_HANDLED | APP_REDRAW;
		}
		snprintf(key, sizeof key, "%s%.80s",
		         strncmp(k, "target.", 7) == 0 ? "" : "target.", k);
	} else if (strcmp(text, "none") == 0) {
		/* Every target kind goes, as one change. */
		struct session_analysis old = a->s.analysis;
		a->s.analysis.target.current = NAN;
		a->s.analysis.target.voltage = NAN;
		a->s.analysis.target.power = NAN;
		app_analysis_changed(a, "target", &old);
		app_message(a, false, "no target");
		return APP_HANDLED | APP_REDRAW;
	} else {
		double x;
		static const struct { enum qty_kind k; const char *key; } kinds[] = {
			{ QTY_CURRENT, "target.current" },
			{ QTY_VOLTAGE, "target.voltage" },
			{ QTY_POWER, "target.power" },
		};
		size_t j = 0;
		char first[512] = "";
		for (; j < 3; j++) {
			if (qty_parse(text, kinds[j].k, &x, err, sizeof err) == QTY_OK)
				break;
			if (j == 0)
				snprintf(first, sizeof first, "%s", err);
		}
		if (j == 3) {
			app_ask_target(a, text, first);
			return APP_HANDLED | APP_REDRAW;
		}
		snprintf(key, sizeof key, "%s", kinds[j].key);
		value = text;
	}
	if (app_text_set(a, key, value, err, sizeof err) != 0) {
		app_ask_target(a, text, err);
		return APP_HANDLED | APP_REDRAW;
	}
	app_message(a, false, "%s = %s", key, value);
	return APP_HANDLED | APP_REDRAW;
}

/* Take a typed rating KEY=VALUE. */
static unsigned app_take_rating(struct app *a, const char *text)
{
	char err[512], k[SESSION_SET_KEY_MAX], key[SESSION_SET_KEY_MAX];
	const char *value;
	if (session_set_split(text, k, sizeof k, &value, err, sizeof err) !=
	    SESSION_SET_OK) {
		app_ask_rating(a, text, err);
		return APP_HANDLED | APP_REDRAW;
	}
	snprintf(key, sizeof key, "%s%.80s",
	         strncmp(k, "ratings.", 8) == 0 ? "" : "ratings.", k);
	if (app_text_set(a, key, value, err, sizeof err) != 0) {
		app_ask_rating(a, text, err);
		return APP_HANDLED | APP_REDRAW;
	}
	app_message(a, false, "%s = %s", key, value);
	return APP_HANDLED | APP_REDRAW;
}

/* Take the answer to one of the app's own questions. */
unsigned app_answer(struct app *a, const struct action *act)
{
	bool yes = strcmp(act->text, "y") == 0;
	switch (act->tag) {
	case APP_ASK_SAVE_AS:
		return app_save_as(a, act->text);
	case APP_ASK_OVERWRITE:
		if (yes)
			return app_save_to(a, a->pending, a->pending_typed);
		app_ask_name(a, a->pending_typed,
		             "not replaced: type another name, or Esc");
		return APP_HANDLED | APP_REDRAW;
	case APP_ASK_QUIT:
		if (yes) {
			char err[512];
			recovery_remove(a->path, err, sizeof err);
			return APP_HANDLED | APP_QUIT;
		}
		app_message(a, false, "not quitting");
		return APP_HANDLED | APP_REDRAW;
	case APP_ASK_RESTORE:
		return app_restore(a, yes);
	case APP_ASK_TARGET:
		return app_take_target(a, act->text);
	case APP_ASK_RATING:
		return app_take_rating(a, act->text);
	default:
		return APP_HANDLED | APP_REDRAW;
	}
}

/*
 * Offer the recovery file before anything else when it is newer than the
 * file (work the file lacks); an older one is set aside, not deleted.
 */
void app_offer_recovery(struct app *a)
{
	char p[RECOVERY_PATH_MAX], err[512];
	time_t when = 0;
	enum recovery_state rs = recovery_check(a->path, p, sizeof p, &when);
	if (rs == RECOVERY_NEWER) {
		char stamp[64];
		struct tm tm;
		if (localtime_r(&when, &tm) == NULL ||
		    strftime(stamp, sizeof stamp, "%Y-%m-%d %H:%M", &tm) == 0)
			snprintf(stamp, sizeof stamp, "earlier");
		char q[512];
		snprintf(q, sizeof q, "a recovery file holds unsaved changes from %s, "
		         "newer than the %s: restore them? (y restores, n sets "
		         "the recovery file aside) ", stamp,
		         a->path != NULL ? "file" : "demo");
		app_ask(a, NULL, APP_ASK_RESTORE, true, q, NULL, NULL);
	} else if (rs == RECOVERY_OLDER) {
		char aside[RECOVERY_PATH_MAX];
		if (recovery_set_aside(a->path, aside, sizeof aside, err,
		                       sizeof err) == 0) {
			const char *base = strrchr(aside, '/');
			app_message(a, false, "the file is newer than its recovery "
			            "file; that was set aside as %s",
			            base != NULL ? base + 1 : aside);
		} else {
			app_message(a, true, "%s", err);
		}
	}
}

/* Write the recovery file when there is something to recover. */
void app_write_recovery(struct app *a)
{
	if (!a->dirty)
		return;
	struct session_error serr;
	if (recovery_save(&a->s, a->path, &serr) != SESSION_OK) {
		char msg[1024];
		session_error_format(&serr, msg, sizeof msg);
		fprintf(stderr, "biasline: recovery file not written: %s\n", msg);
	}
}

/* Write a picture of the view to a file named after the session. */
void app_write_picture(struct app *a, char *svg, size_t len, const char *suffix)
{
	free(a->picture);
	a->picture = svg;
	a->picture_len = len;
	a->writing_picture = true;
	char name[sizeof a->pending];
	if (a->path == NULL) {
		snprintf(name, sizeof name, "biasline-demo%s", suffix);
	} else {
		/* The session's name without its .yaml (or .yml) ending. */
		size_t n = strlen(a->path);
		if (n > 5 && strcmp(a->path + n - 5, ".yaml") == 0)
			n -= 5;
		else if (n > 4 && strcmp(a->path + n - 4, ".yml") == 0)
			n -= 4;
		if (n + strlen(suffix) >= sizeof a->pending_typed) {
			app_ask_name(a, "", "the session's name is too long: type a "
			             "name for the picture");
			return;
		}
		snprintf(name, sizeof name, "%.*s%s", (int)n, a->path, suffix);
	}
	app_save_as(a, name);
}
