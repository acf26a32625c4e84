/*
 * pane_prompt.c - the bottom line: the last message, or a one-line prompt
 * for whichever pane asked (a value with SI prefix and unit, a file name,
 * or a y/n question).  The typed text goes back to the asker as an
 * ACT_ANSWER; the asker checks it and asks again with the reason when it
 * cannot take it.
 */
#include <stdbool.h>
#include <stdio.h>
#include <string.h>

#include "tui/app.h"
#include "tui/panes.h"

/* The prompt's own state. */
struct prompt_state {
	bool open;
	bool yesno;
	bool default_no;           /* Enter answers the y/n question no */
	const struct pane *from;   /* the asker (NULL: the app) */
	int tag;
	char label[1400];
	char text[256];            /* what was typed (UTF-8) */
	size_t len;
	char error[1024];          /* why the last entry was refused, or "" */
};

/* Most lines the last message takes (it wraps upwards). */
#define PROMPT_MAX_STATUS 3

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
static void pane_prompt_draw(struct app *a, void *self, const struct rect *box)
{
	struct prompt_state *p = self;
	int row = box->row, cols = box->cols;
	term_fill(&a->term, row, 0, cols, TS_NORMAL);
	if (!p->open) {
		const char *msg = a->status[0] != '\0' ? a->status
		                  : "Space step  g run  b back  o order  e edit  ? help  q quit";
		/* A long message wraps at blanks onto the rows above, whole. */
		struct render_span sp[PROMPT_MAX_STATUS];
		size_t n = render_wrap(msg, cols, sp, PROMPT_MAX_STATUS);
		if (n > PROMPT_MAX_STATUS)
			n = PROMPT_MAX_STATUS;
		int top = row - (int)n + 1;
		for (size_t k = 0; k < n; k++) {
			char line[512];
			size_t len = sp[k].len < sizeof line ? sp[k].len : sizeof line - 1;
			memcpy(line, msg + sp[k].off, len);
			line[len] = '\0';
			if (top + (int)k < 0)
				continue;
			term_fill(&a->term, top + (int)k, 0, cols, TS_NORMAL);
			term_text(&a->term, top + (int)k, 0, line, cols,
			          a->status_error ? TS_ERROR : TS_DIM);
		}
		return;
	}
	size_t ll = strlen(p->label);
	char whole[sizeof p->label + sizeof p->text];
	snprintf(whole, sizeof whole, "%s%s", p->label, p->yesno ? "" : p->text);
	const char *qs[PROMPT_MAX_LINES], *es[PROMPT_MAX_LINES];
	size_t ql[PROMPT_MAX_LINES], el[PROMPT_MAX_LINES];
	int nq = pane_prompt_wrap(whole, cols, qs, ql, PROMPT_MAX_LINES);
	int ne = p->error[0] != '\0'
	         ? pane_prompt_wrap(p->error, cols, es, el, PROMPT_MAX_LINES - nq)
	         : 0;
	/* the cursor goes after the typed text: a line of its own when full */
	const char *end = whole + strlen(whole);
	int last_w = 0;
	for (const char *q = qs[nq - 1]; q < end;) {
		render_utf8_next(&q);
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

/* Close the prompt. */
static void pane_prompt_close(struct app *a, struct prompt_state *p)
{
	a->asking = false;
	p->open = false;
	p->text[0] = '\0';
	p->len = 0;
	p->error[0] = '\0';
}

/* Send TEXT back to the asker and close. */
static void pane_prompt_answer(struct app *a, struct prompt_state *p,
                               const char *text)
{
	struct action act = { .kind = ACT_ANSWER, .to = p->from, .tag = p->tag };
	snprintf(act.text, sizeof act.text, "%s", text);
	pane_prompt_close(a, p);
	app_post(a, &act);
}

/* Append code point CP to the typed text as UTF-8. */
static void pane_prompt_type(struct prompt_state *p, uint32_t cp)
{
	char enc[4];
	size_t k;
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
	if (p->len + k + 1 < sizeof p->text) {
		memcpy(p->text + p->len, enc, k);
		p->len += k;
		p->text[p->len] = '\0';
		p->error[0] = '\0';
	}
}

/* Handle a key while the prompt is open (0 when it is closed). */
static unsigned pane_prompt_key(struct app *a, void *self, int key)
{
	struct prompt_state *p = self;
	if (!p->open || key == TK_RESIZE)
		return 0;
	if (p->yesno) {
		bool yes = key == 'y' || key == 'Y';
		bool no = key == 'n' || key == 'N' || key == TK_ESC ||
		          key == TK_INTERRUPT || (p->default_no && key == TK_ENTER);
		if (yes || no)
			pane_prompt_answer(a, p, yes ? "y" : "n");
		else
			snprintf(p->error, sizeof p->error, "press y or n");
		return APP_HANDLED | APP_REDRAW;
	}
	if (key == TK_ESC || key == TK_INTERRUPT) {
		pane_prompt_close(a, p);
		app_message(a, false, "cancelled");
	} else if (key == 21) {
		/* Ctrl-U clears the line, as in a shell */
		p->len = 0;
		p->text[0] = '\0';
		p->error[0] = '\0';
	} else if (key == TK_BACKSPACE) {
		/* Drop one whole UTF-8 sequence. */
		while (p->len > 0) {
			unsigned char c = (unsigned char)p->text[--p->len];
			if ((c & 0xC0) != 0x80)
				break;
		}
		p->text[p->len] = '\0';
	} else if (key == TK_ENTER) {
		char text[256];
		snprintf(text, sizeof text, "%s", p->text);
		pane_prompt_answer(a, p, text);
	} else if (key >= 0x20 && key < TK_BASE && key != 0x7F) {
		pane_prompt_type(p, (uint32_t)key);
	}
	return APP_HANDLED | APP_REDRAW;
}

/* Open on a question. */
static unsigned pane_prompt_act(struct app *a, void *self, const struct action *act)
{
	struct prompt_state *p = self;
	if (act->kind != ACT_ASK)
		return 0;
	p->open = true;
	a->asking = true;
	p->yesno = act->yesno;
	p->default_no = act->default_no;
	p->from = act->from;
	p->tag = act->tag;
	snprintf(p->label, sizeof p->label, "%s", act->text);
	snprintf(p->text, sizeof p->text, "%s", act->initial);
	p->len = strlen(p->text);
	snprintf(p->error, sizeof p->error, "%s", act->error);
	return APP_REDRAW;
}

/* The bottom line. */
const struct pane pane_prompt = {
	.name = "prompt",
	.slot = SLOT_BOTTOM,
	.size = sizeof(struct prompt_state),
	.key = pane_prompt_key,
	.draw = pane_prompt_draw,
	.act = pane_prompt_act,
};
