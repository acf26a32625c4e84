/*
 * app.h - the front end's state and the actions keys trigger.  One struct
 * app is passed to every function; nothing here calls curses (term.h does)
 * and nothing computes physics (core does: solve_problem, the stepper and
 * diagnose_*).
 *
 * Flow: a key runs an action, which changes the session and returns flags;
 * the loop redraws once when asked.  Every parameter change re-solves at
 * once and restarts the path from the same start point.
 */
#ifndef BIASLINE_APP_H
#define BIASLINE_APP_H

#include <stdbool.h>
#include <stddef.h>

#include "core/design.h"
#include "core/diagnose.h"
#include "core/solve.h"
#include "core/stepper.h"
#include "core/sensitivity.h"
#include "core/tolerance.h"
#include "render/render.h"
#include "session/session.h"
#include "tui/term.h"

/* Smallest screen the full layout needs. */
#define APP_MIN_ROWS 24
#define APP_MIN_COLS 80
/* Exit status when the terminal cannot be used (EX_UNAVAILABLE). */
#define APP_EXIT_UNAVAILABLE 69

/* What a key handler asks the loop to do (bit flags). */
enum app_flags {
	APP_HANDLED = 1 << 0,   /* the key meant something */
	APP_REDRAW = 1 << 1,    /* draw the screen again */
	APP_QUIT = 1 << 2,      /* leave the loop */
	APP_REPLOT = 1 << 3,    /* the plot must be rendered again */
};

/* What the one-line prompt is asking for. */
enum prompt_kind {
	PROMPT_NONE,
	PROMPT_VALUE,      /* an exact value for the selected parameter */
	PROMPT_SAVE_AS,    /* a file name to save to */
	PROMPT_OVERWRITE,  /* y/n: replace the existing file PENDING */
	PROMPT_QUIT,       /* y/n: quit without saving */
	PROMPT_RESTORE,    /* y/n: restore the recovery file or set it aside */
	PROMPT_TARGET,     /* a target device current for the design view */
};

/* The prompt on the bottom line. */
struct prompt {
	enum prompt_kind kind;
	char text[256];    /* what was typed (UTF-8) */
	size_t len;
	char error[1024];  /* why the last entry was refused, or "" */
	char pending[1024];/* PROMPT_OVERWRITE: the file to replace */
	char when[64];     /* PROMPT_RESTORE: when the recovery file was written */
};

/* Kinds of parameter rows in the side pane. */
enum param_id {
	PARAM_SOURCE_A,    /* vs (Thevenin) or is (Norton) */
	PARAM_SOURCE_B,    /* rs (Thevenin) or rp (Norton) */
	PARAM_DEVICE,      /* + index into the model's table */
	PARAM_METHOD = PARAM_DEVICE + MODEL_MAX_PARAMS,
	PARAM_ORDER,
	PARAM_START,
	PARAM_OMEGA,
	PARAM_NET,         /* + index of a part of the source's network */
};

/* One row of the parameter list. */
struct param {
	int id;                 /* enum param_id (device rows: PARAM_DEVICE + k) */
	const char *label;
	enum qty_kind kind;
	double *value;          /* where the value lives; NULL for a choice or a
	                           network part (set through PATH) */
	double cur;             /* the value when the rows were built */
	bool choice;            /* a choice cycled with + and - (method, order) */
	bool log_step;          /* nudge multiplicatively */
	double fine, coarse;    /* additive steps for linear rows (0: relative) */
	bool readonly;          /* shown, not editable (a network's equivalent) */
	long part;              /* the network part's index, or -1 */
	char path[64];          /* "source.network.<name>" of a part, or "" */
};

/* Most network parts listed as rows. */
#define APP_MAX_NET_PARTS 32
#define APP_MAX_PARAMS (MODEL_MAX_PARAMS + 8 + APP_MAX_NET_PARTS)

/* The design view: a target, the rows the core designed, the chosen row. */
struct design_view {
	bool open;
	bool ok;                        /* RES holds rows (else RES.message) */
	struct design_request rq;
	struct design_result res;
	int sel;
};

/* Monte Carlo trials the tolerance view runs when asked, and its bins. */
#define APP_TOL_TRIALS 10000
#define APP_TOL_BINS 8
#define APP_TOL_SEED 1

/* The tolerance view: the session's tolerances, worst case, Monte Carlo. */
struct tol_view {
	bool open;
	bool have_case;         /* C was built (else MSG says why) */
	bool have_wc, have_mc;
	char msg[600];          /* why nothing can be shown, or "" */
	struct tol_case c;
	struct tol_worst w;
	struct tol_mc mc;
};

/* Parameters the sensitivity view lists at most. */
#define APP_SENS_MAX 48

/* The sensitivity view: how the first operating point moves with each
 * parameter (sensitivity_all from the core). */
struct sens_view {
	bool open;
	size_t n;
	struct sensitivity s[APP_SENS_MAX];
	char msg[256];          /* why nothing can be shown, or "" */
};

/* Points of the sweep view, RS/10 to RS*10 on a log scale. */
#define APP_SWEEP_POINTS 61

/* The sweep view: the device current against RS (or RP), from the core. */
struct sweep_view {
	bool open;
	bool ok;                /* X, Y hold the sweep (else MSG says why) */
	double r;               /* the present RS or RP (the mark) */
	size_t n;
	double x[APP_SWEEP_POINTS], y[APP_SWEEP_POINTS];
	size_t multi;           /* steps with several operating points */
	size_t folds;
	char msg[256];
};

/* Options from the command line. */
struct tui_options {
	const char *path;       /* session file, NULL for the demo */
	bool color;             /* false: --no-color or NO_COLOR */
	bool unicode;
};

/* The whole front end. */
struct app {
	struct term_ctx term;
	struct tui_options opt;
	struct session s;
	char *path;             /* the session's file (owned), NULL for the demo */
	bool dirty;             /* changes not saved */

	struct problem pb;
	bool pb_ok;
	char pb_err[256];
	struct solve_result res;
	struct stepper *st;

	struct render_view view;
	struct grid grid;
	bool grid_ok;           /* the grid shows the current state */

	int sel;                /* selected parameter row */
	bool side_hidden;
	bool help;
	struct design_view design;
	struct tol_view tol;
	struct sens_view sens;
	struct sweep_view sweep;
	struct prompt prompt;
	char status[256];       /* the last message */
	bool status_error;
};

/* Fill A from the options: load the session or the demo, solve. */
int app_init(struct app *a, const struct tui_options *opt, char *err,
             size_t errlen);

/* Free what A owns. */
void app_fini(struct app *a);

/* Build the parameter rows of A's session into OUT; returns the count. */
size_t app_params(struct app *a, struct param *out, size_t max);

/* Re-solve, restart the path from the start point, and mark the plot. */
void app_resolve(struct app *a);

/*
 * Set parameter row P to VALUE after checking it; on refusal the old value
 * is kept and ERR says why.  Returns 0 or -1.
 */
int app_param_set(struct app *a, const struct param *p, double value,
                  char *err, size_t errlen);

/* Show MSG on the status line (ERROR: styled as an error). */
void app_message(struct app *a, bool error, const char *fmt, ...)
#if defined(__GNUC__)
	__attribute__((format(printf, 3, 4)))
#endif
	;

/*
 * Save to PATH (NULL: the session's own file; the demo asks for a name).
 * On failure the session stays as it was, unsaved, the status line says
 * why, and -1 is returned.  Returns 0 when saved.
 */
int app_save(struct app *a, const char *path);

/*
 * Expand a typed file name IN into OUT: "~" and "~/..." take $HOME,
 * "~user/..." that user's home folder.  Returns 0, or -1 with a message in
 * OUT when the name cannot be expanded.
 */
int app_expand_path(const char *in, char *out, size_t n);

/* True when PATH names the same existing file as the session's own. */
bool app_is_own_file(const struct app *a, const char *path);

/* Draw the whole screen. */
void app_draw(struct app *a);

/* Handle key KEY; returns enum app_flags. */
unsigned app_key(struct app *a, int key);

/* Run the front end until quit; returns the exit status. */
int app_run(struct app *a);

/* One help line of the key table: the keys and what they do. */
struct key_help {
	const char *keys;
	const char *help;
};

/* Fill OUT with up to MAX help lines from the key table; returns the count. */
size_t keys_help(struct key_help *out, size_t max);

/* Run the action bound to KEY in the key table; APP_HANDLED when found. */
unsigned keys_dispatch(struct app *a, int key);

/* A rectangle of the screen, in cells. */
struct rect {
	int row, col, rows, cols;
};

/*
 * A pane: a part of the screen with its own setup, keys and drawing.
 * init may be NULL; key is NULL for a pane without keys of its own and
 * returns 0 for a key it does not take (the key table then gets it).
 */
struct pane {
	const char *name;
	void (*init)(struct app *a);
	unsigned (*key)(struct app *a, int key);
	void (*draw)(struct app *a, const struct rect *r);
};

extern const struct pane pane_plot;    /* the plot */
extern const struct pane pane_side;    /* point, parameters, diagnosis, table */
extern const struct pane pane_help;    /* the help overlay */
extern const struct pane pane_design;  /* the design overlay */
extern const struct pane pane_tol;     /* the tolerance overlay */
extern const struct pane pane_sens;    /* the sensitivity overlay */
extern const struct pane pane_sweep;   /* the sweep plot (in the plot's place) */
extern const struct pane pane_prompt;  /* the bottom line and its prompt */

/* The shown value of parameter row P ("2.2000 kohm", "V from line"). */
void pane_side_value(struct app *a, const struct param *p, char *buf, size_t n);

/*
 * Open the design view: for the session's target when it has one, else
 * ask for a target current (the prompt then calls pane_design_target).
 */
void pane_design_open(struct app *a);

/* Design for a device current of CURRENT amperes and show the view. */
void pane_design_target(struct app *a, double current);

/* Open the tolerance view: the worst case now, Monte Carlo on request. */
void pane_tol_open(struct app *a);

/* Open the sensitivity view at the first operating point. */
void pane_sens_open(struct app *a);

/* Show or hide the sweep view. */
void pane_sweep_toggle(struct app *a);

/* Run the sweep again for the present session (while the view is open). */
void pane_sweep_refresh(struct app *a);

/* Open the prompt for KIND (the text starts as INITIAL, may be NULL). */
void pane_prompt_open(struct app *a, enum prompt_kind kind, const char *initial);
#endif
