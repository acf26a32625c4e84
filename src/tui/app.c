/*
 * app.c - the front end's state, its changes, and the event loop.
 *
 * One turn of the loop: act on a stop signal (save the recovery file and
 * leave), draw when something asked for it, then block on the next key.
 * Nothing polls while idle: the read blocks until a key, a resize or a
 * signal arrives.
 */
/* getpwnam() for "~user" in typed file names */
#define _POSIX_C_SOURCE 200809L

#include "tui/app.h"

#include <math.h>
#include <pwd.h>
#include <signal.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>

#include "session/recovery.h"
#include "session/section_network.h"

/* Consecutive failed reads that mean the terminal is gone. */
#define APP_READ_FAILURES 8

/* The panes, bottom to top: keys go to the top-most that takes them. */
static const struct pane *const app_panes[] = {
	&pane_plot, &pane_sweep, &pane_side, &pane_design, &pane_tol, &pane_sens,
	&pane_help,
	&pane_prompt,
};

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

/* Take the session's stored view: fixed ranges and zoom. */
static void app_view_from_session(struct render_view *v, const struct session *s)
{
	const struct session_view *sv = &s->view;
	if (!sv->autoscale) {
		v->frame = FRAME_FIXED;
		v->fixed = (struct render_window){ sv->v_min, sv->v_max,
		                                   sv->i_min, sv->i_max };
	}
	if (isfinite(sv->zoom) && sv->zoom > 0.0)
		v->zoom = sv->zoom;
}

/* Fill A from the options. */
int app_init(struct app *a, const struct tui_options *opt, char *err,
             size_t errlen)
{
	memset(a, 0, sizeof *a);
	a->opt = *opt;
	render_view_init(&a->view);
	a->view.unicode = opt->unicode;
	if (grid_init(&a->grid, 0, 0) != 0) {
		snprintf(err, errlen, "out of memory");
		return -1;
	}
	a->st = stepper_create();
	if (a->st == NULL) {
		grid_fini(&a->grid);
		snprintf(err, errlen, "out of memory");
		return -1;
	}
	if (opt->path != NULL) {
		struct session_error serr;
		enum session_status ss = session_load_file(&a->s, opt->path, &serr);
		if (ss != SESSION_OK) {
			session_error_format(&serr, err, errlen);
			stepper_destroy(a->st);
			grid_fini(&a->grid);
			return ss == SESSION_NO_INPUT ? 66 : 65;
		}
		a->path = app_strdup(opt->path);
	} else {
		session_demo(&a->s);
	}
	app_view_from_session(&a->view, &a->s);
	for (size_t k = 0; k < sizeof app_panes / sizeof app_panes[0]; k++)
		if (app_panes[k]->init != NULL)
			app_panes[k]->init(a);
	app_resolve(a);
	app_message(a, false, "Space steps, g runs, ? lists every key");
	return 0;
}

/* Free what A owns. */
void app_fini(struct app *a)
{
	stepper_destroy(a->st);
	a->st = NULL;
	grid_fini(&a->grid);
	session_fini(&a->s);
	free(a->path);
	a->path = NULL;
}

/* Build the parameter rows of A's session. */
size_t app_params(struct app *a, struct param *out, size_t max)
{
	size_t n = 0;
	struct source_spec *sp = &a->s.source;
#define ADD(...) do { if (n < max) { out[n] = (struct param){ __VA_ARGS__ }; \
	out[n].part = -1; if (out[n].value != NULL) out[n].cur = *out[n].value; \
	n++; } } while (0)
	/* A network source: its parts are edited; VS and RS are its reduction. */
	const struct network *nw = a->s.network;
	bool net = nw != NULL;
	size_t nparts = net ? network_part_count(nw) : 0;
	for (size_t k = 0; k < nparts && k < APP_MAX_NET_PARTS && n < max; k++) {
		const struct network_part *pt = network_part(nw, k);
		ADD(.id = PARAM_NET + (int)k, .label = pt->name,
		    .kind = session_network_kind_unit(pt->kind), .cur = pt->value,
		    .log_step = pt->kind == NETWORK_RESISTOR);
		out[n - 1].part = (long)k;
		snprintf(out[n - 1].path, sizeof out[n - 1].path, "%s%s",
		         SESSION_NETWORK_PREFIX, pt->name);
	}
	if (sp->form == SOURCE_THEVENIN) {
		ADD(.id = PARAM_SOURCE_A, .label = net ? "VS (net)" : "VS",
		    .kind = QTY_VOLTAGE, .value = &sp->vs, .readonly = net);
		ADD(.id = PARAM_SOURCE_B, .label = net ? "RS (net)" : "RS",
		    .kind = QTY_RESISTANCE, .value = &sp->rs, .log_step = true,
		    .readonly = net);
	} else {
		ADD(.id = PARAM_SOURCE_A, .label = net ? "IS (net)" : "IS",
		    .kind = QTY_CURRENT, .value = &sp->is, .readonly = net);
		ADD(.id = PARAM_SOURCE_B, .label = net ? "RP (net)" : "RP",
		    .kind = QTY_RESISTANCE, .value = &sp->rp, .log_step = true,
		    .readonly = net);
	}
	const struct model_type *mt = a->s.device.type;
	for (size_t k = 0; mt != NULL && k < mt->nparams; k++) {
		const struct model_param *mp = &mt->params[k];
		double fine = 0.0, coarse = 0.0;
		if (mp->kind == QTY_TEMPERATURE) {
			fine = 1.0;
			coarse = 10.0;
		}
		ADD(.id = PARAM_DEVICE + (int)k, .label = mp->label, .kind = mp->kind,
		    .value = &a->s.device.p[k], .log_step = mp->log_step,
		    .fine = fine, .coarse = coarse);
	}
	ADD(.id = PARAM_METHOD, .label = "method", .kind = QTY_NUMBER, .choice = true);
	ADD(.id = PARAM_ORDER, .label = "order", .kind = QTY_NUMBER, .choice = true);
	ADD(.id = PARAM_START, .label = "start V", .kind = QTY_VOLTAGE,
	    .value = &a->s.solver.start_v, .fine = 0.0, .coarse = 0.0);
	ADD(.id = PARAM_OMEGA, .label = "omega", .kind = QTY_NUMBER,
	    .value = &a->s.solver.omega, .fine = 0.01, .coarse = 0.1);
#undef ADD
	return n;
}

/* The stepper options for the path: the session's, "auto" drawn as projections. */
static struct solve_options app_path_options(const struct app *a)
{
	struct solve_options o = a->s.solver;
	if (o.method == METHOD_AUTO)
		o.method = METHOD_PROJECTION;
	return o;
}

/* Re-solve and restart the path. */
void app_resolve(struct app *a)
{
	a->grid_ok = false;
	a->res.n = 0;
	a->res.status = SOLVE_BAD_INPUT;
	a->res.message[0] = '\0';
	a->pb_ok = session_problem(&a->s, &a->pb, a->pb_err, sizeof a->pb_err) == 0;
	if (!a->pb_ok)
		return;
	struct solve_options so = a->s.solver;
	so.method = METHOD_AUTO;
	if (solve_problem(&a->pb, &so, &a->res) != SOLVE_OK)
		a->res.n = 0;
	struct solve_options po = app_path_options(a);
	stepper_init(a->st, &a->pb, &po);
	if (a->sweep.open)
		pane_sweep_refresh(a);
}

/* The parts of a session a parameter change can touch. */
struct app_backup {
	struct source_spec source;
	struct device device;
	struct solve_options solver;
};

/* Check the changed session: source, device, solver and the problem. */
static int app_check(struct app *a, char *err, size_t errlen)
{
	struct source src;
	if (source_from_spec(&a->s.source, &src, err, errlen) != 0)
		return -1;
	if (device_validate(&a->s.device, err, errlen) != 0)
		return -1;
	double w = a->s.solver.omega;
	if (!(w >= 0.0 && w < 2.0)) {
		snprintf(err, errlen, "omega: must be 0 (optimal) or in (0, 2)");
		return -1;
	}
	double v0 = a->s.solver.start_v;
	if (!isnan(v0) && !isfinite(v0)) {
		snprintf(err, errlen, "start: must be a finite voltage");
		return -1;
	}
	struct problem pb;
	return session_problem(&a->s, &pb, err, errlen);
}

/* Set a network part's value: reduce again, check, or put the old back. */
static int app_part_set(struct app *a, const struct param *p, double value,
                        char *err, size_t errlen)
{
	if (session_network_set_value(&a->s, p->path, value, err, errlen) != 0)
		return -1;
	if (app_check(a, err, errlen) != 0) {
		char ignored[256];
		session_network_set_value(&a->s, p->path, p->cur, ignored,
		                          sizeof ignored);
		return -1;
	}
	a->dirty = true;
	app_resolve(a);
	return 0;
}

/* Set a parameter after checking it. */
int app_param_set(struct app *a, const struct param *p, double value,
                  char *err, size_t errlen)
{
	if (p->readonly) {
		snprintf(err, errlen, "%s is the equivalent of the session's source "
		         "network: change one of the network's parts (listed first)",
		         p->label);
		return -1;
	}
	if (p->part >= 0)
		return app_part_set(a, p, value, err, errlen);
	if (p->value == NULL) {
		snprintf(err, errlen, "%s: choose with + and -", p->label);
		return -1;
	}
	struct app_backup b = { a->s.source, a->s.device, a->s.solver };
	*p->value = value;
	if (app_check(a, err, errlen) != 0) {
		a->s.source = b.source;
		a->s.device = b.device;
		a->s.solver = b.solver;
		return -1;
	}
	a->dirty = true;
	app_resolve(a);
	return 0;
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

/* Save to PATH or the session's own file. */
int app_save(struct app *a, const char *path)
{
	const char *target = path != NULL ? path : a->path;
	if (target == NULL) {
		pane_prompt_open(a, PROMPT_SAVE_AS, "");
		return -1;
	}
	a->s.view.zoom = a->view.zoom;
	struct session_error serr;
	enum session_status ss = session_save_file(&a->s, target, &serr);
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
	app_message(a, false, "saved %s", target);
	return 0;
}

/* Draw the "terminal too small" screen for ROWS x COLS. */
static void app_draw_small(struct app *a, int rows, int cols)
{
	char msg[128];
	snprintf(msg, sizeof msg, "terminal too small: %dx%d, needs at least %dx%d",
	         cols, rows, APP_MIN_COLS, APP_MIN_ROWS);
	int w = render_text_width(msg);
	int r = rows / 2, c = w < cols ? (cols - w) / 2 : 0;
	term_text(&a->term, r > 0 ? r - 1 : 0, c, msg, cols, TS_ERROR);
	const char *hint = "resize the window, or press q to quit";
	int hw = render_text_width(hint);
	term_text(&a->term, r + 1 < rows ? r + 1 : 0, hw < cols ? (cols - hw) / 2 : 0,
	          hint, cols, TS_NORMAL);
}

/* Width of the side pane on a screen COLS wide (0 when hidden). */
static int app_side_width(const struct app *a, int cols)
{
	if (a->side_hidden)
		return 0;
	return cols >= 140 ? 52 : cols >= 100 ? 44 : 32;
}

/* Draw the title bar on row 0, COLS wide. */
static void app_draw_title(struct app *a, int cols)
{
	term_fill(&a->term, 0, 0, cols, TS_TITLE);
	char right[160] = "";
	int ascii = a->view.unicode ? 0 : 1;
	if (a->res.n > 0) {
		char v[48], i[48];
		qty_format(v, sizeof v, a->res.pts[0].v, QTY_VOLTAGE, 5, ascii);
		qty_format(i, sizeof i, a->res.pts[0].i, QTY_CURRENT, 5, ascii);
		snprintf(right, sizeof right, "point %s, %s%s  ? help ", v, i,
		         a->res.n > 1 ? " (+more)" : "");
	} else {
		snprintf(right, sizeof right, "no operating point  ? help ");
	}
	int rw = render_text_width(right);
	/* The name loses its start, never the modified mark, when short of room. */
	char head[64];
	snprintf(head, sizeof head, " biasline %s ", a->dirty ? "[modified]" : "");
	const char *name = a->path != NULL ? a->path : "demo (not saved to a file)";
	int room = cols - rw - 2 - render_text_width(head);
	int nw = render_text_width(name);
	char shown[512];
	if (room > 3 && nw > room) {
		const char *p = name;
		for (int skip = nw - (room - 3); skip > 0 && *p != '\0'; skip--)
			render_utf8_next(&p);
		snprintf(shown, sizeof shown, "...%s", p);
	} else {
		snprintf(shown, sizeof shown, "%s", name);
	}
	int c = term_text(&a->term, 0, 0, head, cols - rw - 1, TS_TITLE);
	term_text(&a->term, 0, c, shown, cols - rw - 1 - c, TS_TITLE);
	term_text(&a->term, 0, cols - rw, right, rw, TS_TITLE);
}

/* Draw the whole screen. */
void app_draw(struct app *a)
{
	int rows, cols;
	term_size(&a->term, &rows, &cols);
	term_begin(&a->term);
	term_cursor(&a->term, -1, 0);
	if (rows < APP_MIN_ROWS || cols < APP_MIN_COLS) {
		a->grid_ok = false;
		app_draw_small(a, rows, cols);
		/* a question is never hidden: it wraps above the bottom line;
		 * the last message (what an answer did) shows there too */
		if (a->prompt.kind != PROMPT_NONE || a->status[0] != '\0') {
			struct rect bottom = { rows - 1, 0, 1, cols };
			pane_prompt.draw(a, &bottom);
		}
		term_end(&a->term);
		return;
	}
	app_draw_title(a, cols);
	int side = app_side_width(a, cols);
	struct rect plot = { 1, 0, rows - 2, cols - side };
	struct rect pane = { 1, cols - side, rows - 2, side };
	struct rect all = { 0, 0, rows, cols };
	struct rect bottom = { rows - 1, 0, 1, cols };
	if (a->sweep.open)
		pane_sweep.draw(a, &plot);
	else
		pane_plot.draw(a, &plot);
	if (side > 0)
		pane_side.draw(a, &pane);
	struct rect body = { 1, 0, rows - 2, cols };
	if (a->design.open)
		pane_design.draw(a, &body);
	if (a->tol.open)
		pane_tol.draw(a, &body);
	if (a->sens.open)
		pane_sens.draw(a, &body);
	if (a->help)
		pane_help.draw(a, &all);
	pane_prompt.draw(a, &bottom);
	term_end(&a->term);
}

/* Handle a key. */
unsigned app_key(struct app *a, int key)
{
	if (key == TK_RESIZE) {
		a->grid_ok = false;
		return APP_HANDLED | APP_REDRAW;
	}
	/* Ctrl-C is q: it quits (asking when unsaved) or closes a view; in a
	 * prompt or question it cancels, as Esc does. */
	if (key == TK_INTERRUPT)
		key = a->prompt.kind != PROMPT_NONE ? TK_ESC : 'q';
	for (size_t k = sizeof app_panes / sizeof app_panes[0]; k-- > 0;) {
		if (app_panes[k]->key == NULL)
			continue;
		unsigned f = app_panes[k]->key(a, key);
		if (f & APP_HANDLED)
			return f;
	}
	int rows, cols;
	term_size(&a->term, &rows, &cols);
	if (rows < APP_MIN_ROWS || cols < APP_MIN_COLS) {
		/* Only quitting makes sense on the too-small screen. */
		if (key != 'q' && key != 12)
			return APP_HANDLED;
	}
	unsigned f = keys_dispatch(a, key);
	if (!(f & APP_HANDLED)) {
		app_message(a, true, "no action on that key: ? lists the keys");
		f |= APP_REDRAW;
	}
	return f;
}

/* Write the recovery file when there is something to recover. */
static void app_write_recovery(struct app *a)
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

/*
 * Offer the recovery file before anything else when it is newer than the
 * file (work the file lacks); an older one is set aside, not deleted.
 */
static void app_offer_recovery(struct app *a)
{
	char p[RECOVERY_PATH_MAX], err[512];
	time_t when = 0;
	enum recovery_state rs = recovery_check(a->path, p, sizeof p, &when);
	if (rs == RECOVERY_NEWER) {
		pane_prompt_open(a, PROMPT_RESTORE, NULL);
		struct tm tm;
		if (localtime_r(&when, &tm) == NULL ||
		    strftime(a->prompt.when, sizeof a->prompt.when,
		             "%Y-%m-%d %H:%M", &tm) == 0)
			snprintf(a->prompt.when, sizeof a->prompt.when, "earlier");
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

/* Run the front end until quit. */
int app_run(struct app *a)
{
	char err[512];
	if (term_open(&a->term, a->opt.color, err, sizeof err) != 0) {
		fprintf(stderr, "biasline: %s\n", err);
		return APP_EXIT_UNAVAILABLE;
	}
	app_offer_recovery(a);
	int status = 0, failures = 0;
	bool redraw = true;
	for (;;) {
		int sig = term_stop_signal();
		if (sig != 0) {
			term_close(&a->term);
			app_write_recovery(a);
			status = 128 + sig;
			break;
		}
		if (redraw) {
			app_draw(a);
			redraw = false;
		}
		int key = term_read_key(&a->term, -1);
		if (key == TK_ERROR) {
			if (term_stop_signal() != 0)
				continue;
			if (++failures >= APP_READ_FAILURES) {
				/* The terminal is gone (hangup without a signal). */
				term_close(&a->term);
				app_write_recovery(a);
				status = 74;
				break;
			}
			continue;
		}
		failures = 0;
		if (key == TK_NONE)
			continue;
		unsigned f = app_key(a, key);
		if (f & APP_QUIT)
			break;
		if (f & (APP_REDRAW | APP_REPLOT))
			redraw = true;
	}
	term_close(&a->term);
	return status;
}
