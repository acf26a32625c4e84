/*
 * pane_prompt.c - the bottom line: the last message, or a one-line prompt
 * (a value with SI prefix and unit, a file name, or a y/n question).
 */
#include <math.h>
#include <stdbool.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

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
	case PROMPT_QUIT:
		snprintf(buf, n, "unsaved changes: quit without saving? (y/n) ");
		break;
	case PROMPT_TARGET:
		snprintf(buf, n, "design: target device current = ");
		break;
	case PROMPT_RESTORE:
		snprintf(buf, n, "a recovery file from an unclean exit exists: "
		         "restore it? (y/n) ");
		break;
	default:
		buf[0] = '\0';
		break;
	}
}

/* Draw the bottom line (the prompt, or the last message) into R. */
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
	char label[160];
	pane_prompt_label(a, label, sizeof label);
	int c = term_text(&a->term, row, 0, label, cols, TS_HEADER);
	c += term_text(&a->term, row, c, a->prompt.text, cols - c, TS_NORMAL);
	int cursor = c;
	if (a->prompt.error[0] != '\0' && c + 3 < cols)
		term_text(&a->term, row, c + 2, a->prompt.error, cols - c - 2, TS_ERROR);
	term_cursor(&a->term, row, cursor < cols ? cursor : cols - 1);
}

/* Open the prompt. */
void pane_prompt_open(struct app *a, enum prompt_kind kind, const char *initial)
{
	a->prompt.kind = kind;
	snprintf(a->prompt.text, sizeof a->prompt.text, "%s",
	         initial != NULL ? initial : "");
	a->prompt.len = strlen(a->prompt.text);
	a->prompt.error[0] = '\0';
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

/* Answer the restore question: Y restores, otherwise the file goes. */
static unsigned pane_prompt_restore(struct app *a, bool yes)
{
	pane_prompt_close(a);
	char err[1024];
	if (!yes) {
		recovery_remove(a->path, err, sizeof err);
		app_message(a, false, "recovery file discarded");
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

/* Handle a key while the prompt is open (0 when it is closed). */
static unsigned pane_prompt_key(struct app *a, int key)
{
	enum prompt_kind kind = a->prompt.kind;
	if (kind == PROMPT_NONE || key == TK_RESIZE)
		return 0;
	if (kind == PROMPT_QUIT || kind == PROMPT_RESTORE) {
		bool yes = key == 'y' || key == 'Y';
		bool no = key == 'n' || key == 'N' || key == TK_ESC;
		if (!yes && !no)
			return APP_HANDLED;
		if (kind == PROMPT_RESTORE)
			return pane_prompt_restore(a, yes);
		pane_prompt_close(a);
		if (yes) {
			char err[512];
			recovery_remove(a->path, err, sizeof err);
			return APP_HANDLED | APP_QUIT;
		}
		app_message(a, false, "not quitting");
		return APP_HANDLED | APP_REDRAW;
	}
	if (key == TK_ESC) {
		pane_prompt_close(a);
		app_message(a, false, "cancelled");
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
		if (kind == PROMPT_SAVE_AS) {
			if (a->prompt.len == 0) {
				snprintf(a->prompt.error, sizeof a->prompt.error,
				         "type a file name, or Esc");
				return APP_HANDLED | APP_REDRAW;
			}
			char name[256];
			snprintf(name, sizeof name, "%s", a->prompt.text);
			if (app_save(a, name) != 0) {
				snprintf(a->prompt.error, sizeof a->prompt.error, "%s", a->status);
				return APP_HANDLED | APP_REDRAW;
			}
			pane_prompt_close(a);
			return APP_HANDLED | APP_REDRAW;
		}
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
