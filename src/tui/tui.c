/*
 * tui.c - the front end's entry point and its event loop.
 *
 * One turn of the loop: act on a stop signal (save the recovery file and
 * leave), draw when something asked for it, then wait for the next key
 * (blocking; while a run goes on, polling between chunks of steps).  A key
 * goes to the visible modal panes first (top down), then to the key
 * table; the actions it posted are delivered before the next draw.
 * Nothing polls while idle.
 */
#include "tui/tui.h"

#include <langinfo.h>
#include <locale.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "tui/keys.h"
#include "tui/panes.h"

/* Consecutive failed reads that mean the terminal is gone. */
#define LOOP_READ_FAILURES 8
/* Most actions delivered after one key (a guard against a request loop). */
#define LOOP_MAX_ACTIONS 64
/* Most key help lines. */
#define LOOP_MAX_HELP 64

/* The loop: the shared state and each pane's own. */
struct loop {
	struct app a;
	void *state[APP_MAX_PANES];
	struct key_help help[LOOP_MAX_HELP];
};

/* Whether pane K is visible now. */
static bool loop_visible(const struct loop *l, size_t k)
{
	const struct pane *p = pane_table[k];
	return p->visible == NULL || p->visible(&l->a, l->state[k]);
}

/* The index of pane P in the table (pane_count when it is not there). */
static size_t loop_index(const struct pane *p)
{
	size_t k = 0;
	while (k < pane_count && pane_table[k] != p)
		k++;
	return k;
}

/* The top-most visible pane of SLOT, or pane_count. */
static size_t loop_top(const struct loop *l, enum pane_slot slot)
{
	for (size_t k = pane_count; k-- > 0;)
		if (pane_table[k]->slot == slot && loop_visible(l, k))
			return k;
	return pane_count;
}

/* Deliver the queued actions; returns enum app_flags. */
static unsigned loop_deliver(struct loop *l)
{
	struct app *a = &l->a;
	unsigned flags = 0;
	for (int guard = 0; a->qlen > 0 && guard < LOOP_MAX_ACTIONS; guard++) {
		struct action act = a->queue[a->qhead];
		a->qhead = (a->qhead + 1) % APP_QUEUE;
		a->qlen--;
		if (act.kind == ACT_ANSWER && act.to == NULL) {
			flags |= app_answer(a, &act);
			continue;
		}
		/* A picture of what the plot's place shows now. */
		if (act.kind == ACT_PICTURE && act.to == NULL) {
			size_t top = loop_top(l, SLOT_MAIN);
			if (top == pane_count)
				continue;
			act.to = pane_table[top];
		}
		for (size_t k = 0; k < pane_count; k++) {
			const struct pane *p = pane_table[k];
			if (p->act == NULL || (act.to != NULL && act.to != p))
				continue;
			flags |= p->act(a, l->state[k], &act);
		}
		flags |= APP_REDRAW;
	}
	a->qlen = 0;
	return flags;
}

/* Set up the panes' states; returns 0 or -1 (no memory). */
static int loop_panes_init(struct loop *l)
{
	if (pane_count > APP_MAX_PANES)
		return -1;
	for (size_t k = 0; k < pane_count; k++) {
		size_t n = pane_table[k]->size;
		l->state[k] = n > 0 ? calloc(1, n) : NULL;
		if (n > 0 && l->state[k] == NULL)
			return -1;
	}
	for (size_t k = 0; k < pane_count; k++)
		if (pane_table[k]->init != NULL)
			pane_table[k]->init(&l->a, l->state[k]);
	return 0;
}

/* Free the panes' states. */
static void loop_panes_fini(struct loop *l)
{
	for (size_t k = 0; k < pane_count; k++) {
		if (l->state[k] == NULL)
			continue;
		if (pane_table[k]->fini != NULL)
			pane_table[k]->fini(l->state[k]);
		free(l->state[k]);
		l->state[k] = NULL;
	}
}

/*
 * Write TEXT wrapped at blanks to COLS cells, each line centred, from row
 * *ROW on (rows past ROWS are dropped); *ROW ends below the last line.
 */
static void loop_draw_centred(struct app *a, int *row, int rows, int cols,
                              const char *text, enum term_style style)
{
	struct render_span sp[8];
	size_t n = render_wrap(text, cols, sp, 8);
	for (size_t k = 0; k < n && k < 8 && *row < rows; k++, (*row)++) {
		char line[128];
		int len = (int)(sp[k].len < sizeof line ? sp[k].len : sizeof line - 1);
		memcpy(line, text + sp[k].off, (size_t)len);
		line[len] = '\0';
		int w = render_text_width(line);
		term_text(&a->term, *row, w < cols ? (cols - w) / 2 : 0, line, cols,
		          style);
	}
}

/*
 * Draw the "terminal too small" screen for ROWS x COLS: the notice and
 * the hint wrapped at blanks, so nothing is cut however narrow it is.
 */
static void loop_draw_small(struct app *a, int rows, int cols)
{
	char what[64], need[64], msg[sizeof what + sizeof need + 2];
	snprintf(what, sizeof what, "terminal too small: %dx%d", cols, rows);
	snprintf(need, sizeof need, "needs at least %dx%d", APP_MIN_COLS,
	         APP_MIN_ROWS);
	snprintf(msg, sizeof msg, "%s, %s", what, need);
	const char *hint = "resize the window, or press q to quit";
	if (cols < 1 || rows < 1)
		return;
	/* one line when it fits, else broken after the size */
	bool one = render_text_width(msg) <= cols;
	int nm = one ? 1 : (int)(render_wrap(what, cols, NULL, 0) +
	                         render_wrap(need, cols, NULL, 0));
	int nh = (int)render_wrap(hint, cols, NULL, 0);
	/* centred as one block: the notice, a blank line, the hint */
	int r = (rows - (nm + 1 + nh)) / 2;
	if (r < 0)
		r = 0;
	if (one) {
		loop_draw_centred(a, &r, rows, cols, msg, TS_ERROR);
	} else {
		loop_draw_centred(a, &r, rows, cols, what, TS_ERROR);
		loop_draw_centred(a, &r, rows, cols, need, TS_ERROR);
	}
	r++;
	loop_draw_centred(a, &r, rows, cols, hint, TS_NORMAL);
}

/* Width of the side column on a screen COLS wide. */
static int loop_side_width(int cols)
{
	return cols >= 140 ? 52 : cols >= 100 ? 44 : 32;
}

/* Draw the whole screen: each slot shows its top-most visible pane. */
static void loop_draw(struct loop *l)
{
	struct app *a = &l->a;
	int rows, cols;
	term_size(&a->term, &rows, &cols);
	term_begin(&a->term);
	term_cursor(&a->term, -1, 0);
	if (rows < APP_MIN_ROWS || cols < APP_MIN_COLS) {
		loop_draw_small(a, rows, cols);
		/* a question is never hidden: it wraps above the bottom line;
		 * the last message (what an answer did) shows there too */
		size_t k = loop_top(l, SLOT_BOTTOM);
		if ((a->asking || a->status[0] != '\0') && k < pane_count) {
			struct rect bottom = { rows - 1, 0, 1, cols };
			pane_table[k]->draw(a, l->state[k], &bottom);
		}
		term_end(&a->term);
		return;
	}
	int side = loop_top(l, SLOT_SIDE) < pane_count ? loop_side_width(cols) : 0;
	struct rect box[SLOT_COUNT] = {
		[SLOT_TITLE] = { 0, 0, 1, cols },
		[SLOT_MAIN] = { 1, 0, rows - 2, cols - side },
		[SLOT_SIDE] = { 1, cols - side, rows - 2, side },
		[SLOT_BODY] = { 1, 0, rows - 2, cols },
		[SLOT_SCREEN] = { 0, 0, rows, cols },
		[SLOT_BOTTOM] = { rows - 1, 0, 1, cols },
	};
	for (int s = 0; s < SLOT_COUNT; s++) {
		size_t k = loop_top(l, (enum pane_slot)s);
		if (k < pane_count && pane_table[k]->draw != NULL)
			pane_table[k]->draw(a, l->state[k], &box[s]);
	}
	term_end(&a->term);
}

/* Handle a key; returns enum app_flags. */
static unsigned loop_key(struct loop *l, int key)
{
	struct app *a = &l->a;
	if (key == TK_RESIZE)
		return APP_HANDLED | APP_REDRAW;
	/* Ctrl-C is q: it quits (asking when unsaved) or closes a view; in a
	 * prompt or question it cancels, as Esc does. */
	if (key == TK_INTERRUPT)
		key = a->asking ? TK_ESC : 'q';
	/* Modal panes first, top down. */
	for (size_t k = pane_count; k-- > 0;) {
		const struct pane *p = pane_table[k];
		if (p->slot < SLOT_BODY || p->key == NULL || !loop_visible(l, k))
			continue;
		unsigned f = p->key(a, l->state[k], key);
		if (f & APP_HANDLED)
			return f;
	}
	int rows, cols;
	term_size(&a->term, &rows, &cols);
	if ((rows < APP_MIN_ROWS || cols < APP_MIN_COLS) && key != 'q' && key != 12)
		return APP_HANDLED;   /* only quitting makes sense on that screen */
	unsigned f;
	const struct pane *to = keys_dispatch(a, key, &f);
	if (to != NULL) {
		size_t k = loop_index(to);
		if (k < pane_count && to->key != NULL)
			f = to->key(a, l->state[k], key) | APP_HANDLED;
	}
	if (!(f & APP_HANDLED)) {
		app_message(a, true, "no action on that key: ? lists the keys");
		f |= APP_REDRAW;
	}
	return f;
}

/* Run the loop until quit; returns the exit status. */
static int loop_run(struct loop *l)
{
	struct app *a = &l->a;
	char err[512];
	if (term_open(&a->term, a->opt.color, err, sizeof err) != 0) {
		fprintf(stderr, "biasline: %s\n", err);
		return APP_EXIT_UNAVAILABLE;
	}
	app_offer_recovery(a);
	loop_deliver(l);
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
			loop_draw(l);
			redraw = false;
		}
		int key = term_read_key(&a->term, a->running ? 0 : -1);
		if (key == TK_ERROR) {
			if (term_stop_signal() != 0)
				continue;
			if (++failures >= LOOP_READ_FAILURES) {
				/* The terminal is gone (hangup without a signal). */
				term_close(&a->term);
				app_write_recovery(a);
				status = 74;
				break;
			}
			continue;
		}
		failures = 0;
		unsigned f;
		if (a->running && key == TK_NONE) {
			app_run_chunk(a);
			f = APP_REDRAW;
		} else if (key == TK_NONE) {
			continue;
		} else if (a->running && key != TK_RESIZE) {
			a->running = false;
			app_message(a, false, "run interrupted");
			f = APP_REDRAW;
		} else {
			f = loop_key(l, key);
		}
		f |= loop_deliver(l);
		if (f & APP_QUIT)
			break;
		if (f & APP_REDRAW)
			redraw = true;
	}
	term_close(&a->term);
	return status;
}

/* Run the front end. */
int tui_run(const struct tui_options *opt)
{
	/* Wide characters from the environment, but '.' in every number. */
	setlocale(LC_ALL, "");
	setlocale(LC_NUMERIC, "C");
	/* Symbols need a UTF-8 terminal; elsewhere the ASCII marks stay. */
	struct tui_options o = *opt;
	const char *cs = nl_langinfo(CODESET);
	bool no_utf8 = o.unicode && (cs == NULL || strcmp(cs, "UTF-8") != 0);
	if (no_utf8)
		o.unicode = false;
	struct loop *l = calloc(1, sizeof *l);
	if (l == NULL) {
		fprintf(stderr, "biasline: out of memory\n");
		return 70;
	}
	char err[1024];
	int rc = app_init(&l->a, &o, err, sizeof err);
	if (rc != 0) {
		fprintf(stderr, "biasline: %s\n", err);
		free(l);
		return rc < 0 ? 70 : rc;
	}
	l->a.nhelp = keys_help(l->help, LOOP_MAX_HELP);
	l->a.help = l->help;
	if (loop_panes_init(l) != 0) {
		fprintf(stderr, "biasline: out of memory\n");
		loop_panes_fini(l);
		app_fini(&l->a);
		free(l);
		return 70;
	}
	if (no_utf8)
		app_message(&l->a, true, "--unicode needs a UTF-8 locale (LANG); "
		            "showing ASCII marks");
	rc = loop_run(l);
	loop_panes_fini(l);
	app_fini(&l->a);
	free(l);
	return rc;
}
