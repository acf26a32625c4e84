/*
 * app.h - what every pane shares: the session, its problem and solution,
 * the iteration path, the status line, the undo list and the queue of
 * actions; and the services that change them.  Nothing here calls curses
 * (term.h does), computes physics (the core does) or knows a pane: panes
 * use this file, the loop (tui.c) walks the pane table (panes.h).
 *
 * Every change of a value goes through app_param_set, by the key params.h
 * names: it is checked, remembered for undo, solved again at once, and
 * the path restarts from the same start point.
 */
#ifndef BIASLINE_APP_H
#define BIASLINE_APP_H

#include <stdbool.h>
#include <stddef.h>

#include "core/progress.h"
#include "core/solve.h"
#include "core/stability.h"
#include "core/stepper.h"
#include "core/thermal_stepper.h"
#include "render/render.h"
#include "session/session.h"
#include "session/session_set.h"
#include "session/session_text.h"
#include "tui/pane.h"
#include "tui/params.h"
#include "tui/term.h"

/* Smallest screen the full layout needs. */
#define APP_MIN_ROWS 24
#define APP_MIN_COLS 80
/* Exit status when the terminal cannot be used (EX_UNAVAILABLE). */
#define APP_EXIT_UNAVAILABLE 69
/* Most panes the pane table may hold. */
#define APP_MAX_PANES 16
/* Actions waiting at once, and changes undo remembers. */
#define APP_QUEUE 16
#define APP_UNDO 64
/* Steps a run takes between looks at the keyboard. */
#define APP_RUN_CHUNK 16

/* Options from the command line. */
struct tui_options {
	const char *path;       /* session file, NULL for the demo */
	bool color;             /* false: --no-color or NO_COLOR */
	bool unicode;
};

/* One help line of the key table: the keys and what they do. */
struct key_help {
	const char *keys;
	const char *help;
};

/* One remembered change: KEY had OLD before it (a value), or the
 * session's target, ratings and tolerances were OLD_ANALYSIS (a change of
 * one of them by its dotted key). */
struct app_change {
	char key[SESSION_SET_KEY_MAX];
	bool analysis;
	double old;
	/* a self-heated device's temperature, which follows its ambient
	 * (params.c), had TEMP_OLD before the change: NaN when it did not move */
	double temp_old;
	struct session_analysis old_analysis;
	bool device;            /* the whole device was OLD_DEVICE (a fit) */
	struct device old_device;
};

/* What the panes share. */
struct app {
	struct term_ctx term;
	struct tui_options opt;
	struct session s;
	char *path;             /* the session's file (owned), NULL for the demo */
	struct session_text text; /* the file's text as read or last saved:
	                           a save changes only what changed in it */
	bool dirty;             /* changes not saved */

	struct problem pb;
	bool pb_ok;
	char pb_err[256];
	struct solve_result res;
	/* the circuit the load line shows and the path runs on: PB, or for a
	 * device that heats itself PB with the junction at the (coolest)
	 * operating point's temperature (core/thermal.h) */
	struct problem epb;
	struct stepper *st;
	size_t point;           /* the selected operating point (p) */
	/* the thermal loop of a device that heats itself: its path, started
	 * at TSTART (degC; NaN: the ambient), and whether the thermal view is
	 * open, when Space, g, b, r and a act on it instead */
	struct thermal_stepper *tst;
	double tstart;
	bool thermal;
	char selected[PARAMREF_KEY_MAX]; /* the selected parameter row's key
	                           (the side pane keeps it; W starts there) */
	bool running;           /* g: the loop steps until stopped or a key */
	unsigned gen;           /* counts changes of what the plot shows */
	unsigned changes;       /* counts solves of a changed session */

	struct app_change undo[APP_UNDO];
	size_t nundo;

	struct action queue[APP_QUEUE];
	size_t qhead, qlen;

	bool asking;            /* a question is open on the bottom line */
	char pending[1024];     /* the file a save-as would replace */
	char pending_typed[256];/* that name as typed */
	bool writing_picture;   /* the save-as questions are for PICTURE */
	char *picture;          /* an SVG waiting for its file (owned) */
	size_t picture_len;

	const struct key_help *help;  /* the key table's lines (set by the loop) */
	size_t nhelp;

	char status[256];       /* the last message */
	bool status_error;
};

/* Fill A from the options: load the session or the demo, solve. */
int app_init(struct app *a, const struct tui_options *opt, char *err,
             size_t errlen);

/* Free what A owns. */
void app_fini(struct app *a);

/* Solve again, restart the path from the start point, tell the panes. */
void app_resolve(struct app *a);

/* Mark what the plot shows as changed (a step, a view move). */
void app_touch(struct app *a);

/*
 * The operating point the diagnosis speaks of: while the path is under way
 * (it has left its start), the point nearest the newest iterate (*HEADING
 * set true); otherwise the selected one.  Returns an index into a->res, or
 * (size_t)-1 when there is no point.
 */
size_t app_focus_point(const struct app *a, bool *heading);

/* The stability verdict of point K of A's solution. */
struct stability_result app_stability(const struct app *a, size_t k);

/*
 * Clear an overlay box of H rows and W columns at TOP, LEFT, and the ring
 * of cells around it (inside the screen), and draw its side borders, so
 * nothing under it shows through.  Its first and last rows are left for
 * the title and foot bars the overlay draws.
 */
void app_overlay_box(struct app *a, int top, int left, int h, int w);

/* Whether the user asked for Unicode marks (else ASCII). */
bool app_unicode(const struct app *a);

/*
 * Set the session's value KEY (params.h) to VALUE after checking it,
 * remember the old value for undo, and solve again.  Returns 0, or -1 with
 * ERR saying why (the session unchanged).
 */
int app_param_set(struct app *a, const char *key, double value, char *err,
                  size_t errlen);

/*
 * Set the session's KEY (session_set.h: a parameter, "target.current",
 * "ratings.resistor_power", "tolerances.rs", ...) to the typed TEXT, checked
 * as the file is ("none" takes an optional one away), remember the old
 * value for undo, and solve again.  Returns 0, or -1 with ERR saying why
 * (the session unchanged).
 */
int app_text_set(struct app *a, const char *key, const char *text, char *err,
                 size_t errlen);

/*
 * Make DEV (a model and its values; a measured device's table stays the
 * session's) the session's device after checking it, remember the old one
 * for undo, and solve again.  Returns 0, or -1 with ERR saying why.
 */
int app_device_set(struct app *a, const struct device *dev, char *err,
                   size_t errlen);

/* True when KEY names a target, rating or tolerance (app_text_set). */
bool app_key_is_analysis(const char *key);

/*
 * Verdict line L (core/verdict.h) for a column W cells wide: ONE gets the
 * part, its power (or current) and the verdict words, with its rating and
 * margin when they fit on the same line; otherwise TWO gets them ("" when
 * there is no rating).  Each is N bytes.
 */
void app_verdict_text(const struct app *a, const struct verdict_line *l,
                      int w, char *one, char *two, size_t n);

/* The target line of VD in W cells ("target 10 mA: error -3.2 %"). */
void app_verdict_target(const struct app *a, const struct verdict *vd, int w,
                        char *buf, size_t n);

/* Put back the value the last change replaced; returns 0, or -1 when none. */
int app_undo(struct app *a);

/* Show MSG on the status line (ERROR: styled as an error). */
void app_message(struct app *a, bool error, const char *fmt, ...)
#if defined(__GNUC__)
	__attribute__((format(printf, 3, 4)))
#endif
	;

/* Queue ACT for the loop to deliver (dropped, with a message, when full). */
void app_post(struct app *a, const struct action *act);

/*
 * Ask QUESTION on the bottom line for pane FROM (NULL: the app) as
 * question TAG; the answer comes back as ACT_ANSWER.  INITIAL and ERROR
 * may be NULL.
 */
void app_ask(struct app *a, const struct pane *from, int tag, bool yesno,
             const char *question, const char *initial, const char *error);

/* The questions the app itself asks (ACT_ANSWER with TO NULL). */
enum app_question {
	APP_ASK_SAVE_AS = 1,
	APP_ASK_OVERWRITE,   /* y/N: replace the existing file PENDING */
	APP_ASK_QUIT,
	APP_ASK_RESTORE,     /* y/n: restore the recovery file or set it aside */
	APP_ASK_TARGET,      /* the target: a value with its unit, KEY=VALUE, none */
	APP_ASK_RATING,      /* a rating: KEY=VALUE */
};

/* Ask for the session's target (t) or a rating (R) on the bottom line. */
void app_ask_target(struct app *a, const char *initial, const char *error);
void app_ask_rating(struct app *a, const char *initial, const char *error);

/* Take the answer ACT to one of the app's own questions; enum app_flags. */
unsigned app_answer(struct app *a, const struct action *act);

/* Ask whether to restore the recovery file, when one exists. */
void app_offer_recovery(struct app *a);

/* Write the recovery file when there are unsaved changes. */
void app_write_recovery(struct app *a);

/*
 * Save to PATH (NULL: the session's own file; the demo asks for a name).
 * On failure the session stays as it was, unsaved, the status line says
 * why, and -1 is returned.  Returns 0 when saved.
 */
int app_save(struct app *a, const char *path);

/*
 * Ask for a file name to save to, starting from INITIAL (may be NULL),
 * with the reason ERROR (may be NULL) the last try failed.
 */
void app_ask_save_as(struct app *a, const char *initial, const char *error);

/*
 * Write the picture SVG (LEN bytes; A takes it over) to a file named after
 * the session, its name ending in SUFFIX (".svg", "-sweep.svg"), beside
 * the session file (the demo: in the working folder).  An existing file is
 * never replaced unasked: the save-as questions ask (y/N), and a no or a
 * failure asks for another name.
 */
void app_write_picture(struct app *a, char *svg, size_t len, const char *suffix);

/*
 * Expand a typed file name IN into OUT: "~" and "~/..." take $HOME,
 * "~user/..." that user's home folder.  Returns 0, or -1 with a message in
 * OUT when the name cannot be expanded.
 */
int app_expand_path(const char *in, char *out, size_t n);

/* True when PATH names the same existing file as the session's own. */
bool app_is_own_file(const struct app *a, const char *path);

/*
 * True when PATH is the session's own file and it no longer holds the text
 * the session was read from (or last saved as): someone changed it since.
 */
bool app_changed_on_disk(const struct app *a, const char *path);

/*
 * Ask before replacing PATH (TYPED as the user typed it): the session's own
 * file changed on disk (OWN), or another existing file.
 */
void app_ask_overwrite(struct app *a, const char *path, const char *typed,
                       bool own);

/*
 * Long work a pane runs inside one key (a Monte Carlo run, a worst case,
 * a sweep): hand &W->core to the core's _watched call between
 * app_work_begin and app_work_end.  The core reads the stop flag at every
 * evaluation and tells the report, which looks at the keyboard at least
 * every APP_WORK_POLL_MS (Esc or Ctrl-C stops the work; other keys are
 * dropped) and, once the work has run APP_WORK_SHOW_MS, shows WHAT and
 * the fraction done on the bottom line.  SIGTERM, SIGQUIT and SIGHUP stop
 * it too; the loop then saves the recovery file and leaves as always.
 */
#define APP_WORK_POLL_MS 20
#define APP_WORK_SHOW_MS 500

/* How long work ended. */
enum app_work_end {
	APP_WORK_DONE,
	APP_WORK_CANCELLED,   /* Esc or Ctrl-C */
	APP_WORK_SIGNALLED,   /* a stop signal: the loop leaves next */
};

/* One piece of long work (on the caller's stack). */
struct app_work {
	struct progress core;
	struct app *a;
	char what[96];
	double start, polled, drawn, done;  /* seconds, monotonic; fraction */
	bool shown;
};

/* Start long work described by WHAT ("Monte Carlo, 10000 trials"). */
void app_work_begin(struct app *a, struct app_work *w, const char *what);

/* End it: how it ended. */
enum app_work_end app_work_end(struct app_work *w);

/* Step the path once; the status line says why when it cannot move. */
void app_step(struct app *a);

/* Take up to APP_RUN_CHUNK steps of a run; stops the run at its end. */
void app_run_chunk(struct app *a);

/*
 * Open (OPEN) or close the thermal view; it opens only for a device that
 * heats itself (else the status line says what it needs).
 */
void app_thermal_view(struct app *a, bool open);

#endif
