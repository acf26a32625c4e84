/*
 * pane_prompt.c - the bottom line: the last message, or a one-line prompt
 * (a value with SI prefix and unit, a file name, or a y/n question).
 */
#include <math.h>
#include <stdbool.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <sys/stat.h>

#include "tui/app.h"
#include "session/recovery.h"

/* The label of the open prompt into BUF. */
static void pane_prompt_label(struct app *a, char *buf, size_t n)
{
	struct param ps[APP_MAX_PARAMS];
	size_t np = app_params(a, ps, APP_MAX_PARAMS);
	switch (a->prompt.kind) {
	case PROMPT_VALUE:
		if ((size_t)a->sel < np)
			snprintf(buf, n, "%s = ", ps[a->sel].label);
		else
			snprintf(buf, n, "value = ");
		break;
	case PROMPT_SAVE_AS:
		snprintf(buf, n, "save as: ");
		break;
	case PROMPT_OVERWRITE:
		snprintf(buf, n, "%s exists: replace it? (y/N) ", a->prompt.pending);
		break;
	case PROMPT_QUIT:
		snprintf(buf, n, "unsaved changes: quit without saving? (y/n) ");
		break;
	case PROMPT_TARGET:
		snprintf(buf, n, "design: target device current = ");
		break;
	case PROMPT_RESTORE:
		snprintf(buf, n, "a recovery file holds unsaved changes from %s, "
		         "newer than the %s: restore them? (y restores, n sets "
		         "the recovery file aside) ", a->prompt.when,
		         a->path != NULL ? "file" : "demo");
		break;
	default:
		buf[0] = '\0';
		break;
	}
}

/* Most lines a prompt and its error take. */
#define PROMPT_MAX_LINES 12

/*
 * Split TEXT into lines of at most COLS cells, breaking after a blank when
 * there is one in the line, else anywhere.  Fills START[k] and LEN[k]
 * (bytes) and returns the number of lines (at least 1).
 */
static int pane_prompt_wrap(const char *text, int cols, const char **start,
                            size_t *len, int max)
{
	int n = 0;
	const char *p = text;
	if (cols < 1)
		cols = 1;
	do {
		const char *q = p, *brk = NULL;
		int w = 0;
		while (*q != '\0' && w < cols) {
			if (render_utf8_next(&q) == ' ')
				brk = q;
			w++;
		}
		if (*q != '\0' && brk != NULL && n + 1 < max)
			q = brk;
		start[n] = p;
		len[n] = (size_t)(q - p);
		n++;
		p = q;
	} while (*p != '\0' && n < max);
	return n;
}

/*
 * Draw the bottom line into BOX: the prompt, or the last message.  A
 * prompt or an error longer than the line wraps onto the rows above it,
 * so a question is whole on any screen (the too-small one included).
 */
static void pane_prompt_draw(struct app *a, const struct rect *box)
{
	int row = box->row, cols = box->cols;
	term_fill(&a->term, row, 0, cols, TS_NORMAL);
	if (a->prompt.kind == PROMPT_NONE) {
		const char *msg = a->status[0] != '\0' ? a->status
		                  : "Space step  g run  b back  o order  e edit  ? help  q quit";
		term_text(&a->term, row, 0, msg, cols, a->status_error ? TS_ERROR : TS_DIM);
		return;
	}
	char label[1400];
	pane_prompt_label(a, label, sizeof label);
	size_t ll = strlen(label);
	char whole[sizeof label + sizeof a->prompt.text];
	bool question = a->prompt.kind == PROMPT_QUIT ||
	                a->prompt.kind == PROMPT_RESTORE ||
	                a->prompt.kind == PROMPT_OVERWRITE;
	snprintf(whole, sizeof whole, "%s%s", label, question ? "" : a->prompt.text);
	const char *qs[PROMPT_MAX_LINES], *es[PROMPT_MAX_LINES];
	size_t ql[PROMPT_MAX_LINES], el[PROMPT_MAX_LINES];
	int nq = pane_prompt_wrap(whole, cols, qs, ql, PROMPT_MAX_LINES);
	int ne = a->prompt.error[0] != '\0'
	         ? pane_prompt_wrap(a->prompt.error, cols, es, el,
	                            PROMPT_MAX_LINES - nq)
	         : 0;
	/* the cursor goes after the typed text: a line of its own when full */
	const char *end = whole + strlen(whole);
	int last_w = 0;
	for (const char *p = qs[nq - 1]; p < end;) {
		render_utf8_next(&p);
		last_w++;
	}
	bool cursor_line = last_w >= cols && nq < PROMPT_MAX_LINES;
	int top = row - (nq + (cursor_line ? 1 : 0) + ne) + 1;
	if (top < 0)
		top = 0;
	int r = top;
	char line[sizeof whole];
	for (int k = 0; k < ne && r <= row; k++, r++) {
		snprintf(line, sizeof line, "%.*s", (int)el[k], es[k]);
		term_fill(&a->term, r, 0, cols, TS_NORMAL);
		term_text(&a->term, r, 0, line, cols, TS_ERROR);
	}
	int crow = r, ccol = 0;
	for (int k = 0; k < nq && r <= row; k++, r++) {
		term_fill(&a->term, r, 0, cols, TS_NORMAL);
		size_t off = (size_t)(qs[k] - whole);
		/* the label in bold, the typed text plain */
		int c = 0;
		if (off < ll) {
			size_t take = ll - off < ql[k] ? ll - off : ql[k];
			snprintf(line, sizeof line, "%.*s", (int)take, qs[k]);
			c = term_text(&a->term, r, 0, line, cols, TS_HEADER);
			snprintf(line, sizeof line, "%.*s", (int)(ql[k] - take),
			         qs[k] + take);
		} else {
			snprintf(line, sizeof line, "%.*s", (int)ql[k], qs[k]);
		}
		c += term_text(&a->term, r, c, line, cols - c, TS_NORMAL);
		crow = r;
		ccol = c;
	}
	if (cursor_line && r <= row) {
		term_fill(&a->term, r, 0, cols, TS_NORMAL);
		crow = r;
		ccol = 0;
	}
	term_cursor(&a->term, crow, ccol < cols ? ccol : cols - 1);
}

/* Open the prompt. */
void pane_prompt_open(struct app *a, enum prompt_kind kind, const char *initial)
{
	a->prompt.kind = kind;
	snprintf(a->prompt.text, sizeof a->prompt.text, "%s",
	         initial != NULL ? initial : "");
	a->prompt.len = strlen(a->prompt.text);
	a->prompt.error[0] = '\0';
	if (kind != PROMPT_OVERWRITE)
		a->prompt.pending[0] = '\0';
	a->prompt.when[0] = '\0';
}

/* Close the prompt. */
static void pane_prompt_close(struct app *a)
{
	a->prompt.kind = PROMPT_NONE;
	a->prompt.text[0] = '\0';
	a->prompt.len = 0;
	a->prompt.error[0] = '\0';
}

/* Take the typed value for the selected parameter. */
static unsigned pane_prompt_value(struct app *a)
{
	struct param ps[APP_MAX_PARAMS];
	size_t np = app_params(a, ps, APP_MAX_PARAMS);
	if ((size_t)a->sel >= np || ps[a->sel].choice) {
		pane_prompt_close(a);
		return APP_HANDLED | APP_REDRAW;
	}
	const struct param *p = &ps[a->sel];
	double v;
	char err[256];
	if (p->id == PARAM_START && strcmp(a->prompt.text, "auto") == 0) {
		v = NAN;
	} else if (qty_parse(a->prompt.text, p->kind, &v, err, sizeof err) != QTY_OK) {
		snprintf(a->prompt.error, sizeof a->prompt.error, "%s", err);
		return APP_HANDLED | APP_REDRAW;
	}
	if (app_param_set(a, p, v, err, sizeof err) != 0) {
		snprintf(a->prompt.error, sizeof a->prompt.error, "%s", err);
		return APP_HANDLED | APP_REDRAW;
	}
	/* The rows again: the value shown is the one now in the session. */
	char buf[64];
	np = app_params(a, ps, APP_MAX_PARAMS);
	if ((size_t)a->sel < np) {
		pane_side_value(a, &ps[a->sel], buf, sizeof buf);
		app_message(a, false, "%s = %s", ps[a->sel].label, buf);
	}
	pane_prompt_close(a);
	return APP_HANDLED | APP_REDRAW;
}

/* Take the typed target current and open the design view. */
static unsigned pane_prompt_target(struct app *a)
{
	double v;
	char err[256];
	if (qty_parse(a->prompt.text, QTY_CURRENT, &v, err, sizeof err) != QTY_OK) {
		snprintf(a->prompt.error, sizeof a->prompt.error, "%s", err);
		return APP_HANDLED | APP_REDRAW;
	}
	if (!(v > 0.0) || !isfinite(v)) {
		snprintf(a->prompt.error, sizeof a->prompt.error,
		         "the target current must be above zero");
		return APP_HANDLED | APP_REDRAW;
	}
	pane_prompt_close(a);
	pane_design_target(a, v);
	return APP_HANDLED | APP_REDRAW;
}

/* Answer the restore question: Y restores, otherwise the file is set aside. */
static unsigned pane_prompt_restore(struct app *a, bool yes)
{
	pane_prompt_close(a);
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
	app_resolve(a);
	app_message(a, false, "restored the unsaved changes (s saves them)");
	return APP_HANDLED | APP_REDRAW;
}

/* Save to the name PATH the user confirmed; failures keep the prompt open. */
static unsigned pane_prompt_save_to(struct app *a, const char *path)
{
	char name[sizeof a->prompt.pending];
	snprintf(name, sizeof name, "%s", path);
	if (app_save(a, name) != 0) {
		/* back to the name, with the reason, to type another place */
		char typed[sizeof a->prompt.text], why[sizeof a->prompt.error];
		/* TEXT holds the typed name in both prompts (see save_as) */
		snprintf(typed, sizeof typed, "%s", a->prompt.text);
		snprintf(why, sizeof why, "%s", a->status);
		pane_prompt_open(a, PROMPT_SAVE_AS, typed);
		snprintf(a->prompt.error, sizeof a->prompt.error, "%s", why);
		return APP_HANDLED | APP_REDRAW;
	}
	pane_prompt_close(a);
	return APP_HANDLED | APP_REDRAW;
}

/*
 * Take the typed file name: expand ~, refuse a folder, and ask before
 * replacing a file other than the session's own.
 */
static unsigned pane_prompt_save_as(struct app *a)
{
	if (a->prompt.len == 0) {
		snprintf(a->prompt.error, sizeof a->prompt.error,
		         "type a file name, or Esc");
		return APP_HANDLED | APP_REDRAW;
	}
	char path[sizeof a->prompt.pending];
	if (app_expand_path(a->prompt.text, path, sizeof path) != 0) {
		snprintf(a->prompt.error, sizeof a->prompt.error, "%s", path);
		return APP_HANDLED | APP_REDRAW;
	}
	struct stat st;
	if (stat(path, &st) == 0) {
		if (S_ISDIR(st.st_mode)) {
			if (snprintf(a->prompt.error, sizeof a->prompt.error,
			             "%s is a folder: type a file name in it", path) < 0)
				a->prompt.error[0] = '\0';
			return APP_HANDLED | APP_REDRAW;
		}
		if (!app_is_own_file(a, path)) {
			char typed[sizeof a->prompt.text];
			snprintf(typed, sizeof typed, "%s", a->prompt.text);
			pane_prompt_open(a, PROMPT_OVERWRITE, typed);
			snprintf(a->prompt.pending, sizeof a->prompt.pending, "%s", path);
			/* the typed name waits in TEXT, shown only if the answer is no */
			a->prompt.len = 0;
			return APP_HANDLED | APP_REDRAW;
		}
	}
	return pane_prompt_save_to(a, path);
}

/* Answer a yes/no question: quit, restore, or replace a file. */
static unsigned pane_prompt_answer(struct app *a, int key)
{
	enum prompt_kind kind = a->prompt.kind;
	bool yes = key == 'y' || key == 'Y';
	bool no = key == 'n' || key == 'N' || key == TK_ESC;
	/* replacing a file: anything but y is no (Enter takes the default) */
	if (kind == PROMPT_OVERWRITE && key == TK_ENTER)
		no = true;
	if (!yes && !no) {
		snprintf(a->prompt.error, sizeof a->prompt.error, "press y or n");
		return APP_HANDLED | APP_REDRAW;
	}
	if (kind == PROMPT_RESTORE)
		return pane_prompt_restore(a, yes);
	if (kind == PROMPT_OVERWRITE) {
		if (yes)
			return pane_prompt_save_to(a, a->prompt.pending);
		char typed[sizeof a->prompt.text];
		snprintf(typed, sizeof typed, "%s", a->prompt.text);
		pane_prompt_open(a, PROMPT_SAVE_AS, typed);
		snprintf(a->prompt.error, sizeof a->prompt.error,
		         "not replaced: type another name, or Esc");
		return APP_HANDLED | APP_REDRAW;
	}
	pane_prompt_close(a);
	if (yes) {
		char err[512];
		recovery_remove(a->path, err, sizeof err);
		return APP_HANDLED | APP_QUIT;
	}
	app_message(a, false, "not quitting");
	return APP_HANDLED | APP_REDRAW;
}

/* Handle a key while the prompt is open (0 when it is closed). */
static unsigned pane_prompt_key(struct app *a, int key)
{
	enum prompt_kind kind = a->prompt.kind;
	if (kind == PROMPT_NONE || key == TK_RESIZE)
		return 0;
	if (kind == PROMPT_QUIT || kind == PROMPT_RESTORE ||
	    kind == PROMPT_OVERWRITE)
		return pane_prompt_answer(a, key);
	if (key == TK_ESC) {
		pane_prompt_close(a);
		app_message(a, false, "cancelled");
		return APP_HANDLED | APP_REDRAW;
	}
	if (key == 21) {
		/* Ctrl-U clears the line, as in a shell */
		a->prompt.len = 0;
		a->prompt.text[0] = '\0';
		a->prompt.error[0] = '\0';
		return APP_HANDLED | APP_REDRAW;
	}
	if (key == TK_BACKSPACE) {
		/* Drop one whole UTF-8 sequence. */
		while (a->prompt.len > 0) {
			unsigned char c = (unsigned char)a->prompt.text[--a->prompt.len];
			if ((c & 0xC0) != 0x80)
				break;
		}
		a->prompt.text[a->prompt.len] = '\0';
		return APP_HANDLED | APP_REDRAW;
	}
	if (key == TK_ENTER) {
		if (kind == PROMPT_VALUE)
			return pane_prompt_value(a);
		if (kind == PROMPT_TARGET)
			return pane_prompt_target(a);
		if (kind == PROMPT_SAVE_AS)
			return pane_prompt_save_as(a);
	}
	if (key >= 0x20 && key < TK_BASE && key != 0x7F) {
		char enc[8];
		size_t k;
		uint32_t cp = (uint32_t)key;
		if (cp < 0x80) {
			enc[0] = (char)cp;
			k = 1;
		} else if (cp < 0x800) {
			enc[0] = (char)(0xC0 | (cp >> 6));
			enc[1] = (char)(0x80 | (cp & 0x3F));
			k = 2;
		} else if (cp < 0x10000) {
			enc[0] = (char)(0xE0 | (cp >> 12));
			enc[1] = (char)(0x80 | ((cp >> 6) & 0x3F));
			enc[2] = (char)(0x80 | (cp & 0x3F));
			k = 3;
		} else {
			enc[0] = (char)(0xF0 | (cp >> 18));
			enc[1] = (char)(0x80 | ((cp >> 12) & 0x3F));
			enc[2] = (char)(0x80 | ((cp >> 6) & 0x3F));
			enc[3] = (char)(0x80 | (cp & 0x3F));
			k = 4;
		}
		if (a->prompt.len + k + 1 < sizeof a->prompt.text) {
			memcpy(a->prompt.text + a->prompt.len, enc, k);
			a->prompt.len += k;
			a->prompt.text[a->prompt.len] = '\0';
			a->prompt.error[0] = '\0';
		}
	}
	return APP_HANDLED | APP_REDRAW;
}

/* Start with no prompt open. */
static void pane_prompt_init(struct app *a)
{
	a->prompt.kind = PROMPT_NONE;
	a->prompt.text[0] = '\0';
	a->prompt.len = 0;
	a->prompt.error[0] = '\0';
}

/* The bottom line. */
const struct pane pane_prompt = {
	.name = "prompt",
	.init = pane_prompt_init,
	.key = pane_prompt_key,
	.draw = pane_prompt_draw,
};
