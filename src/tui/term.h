/*
 * term.h - the terminal: the only module that calls curses.  It opens and
 * restores the terminal, reads keys, and draws cells and text into the
 * next frame, which term_end sends with one doupdate (curses sends only
 * the cells that changed).
 *
 * Signals: term_open installs handlers.  SIGHUP, SIGTERM and SIGQUIT only
 * set a flag (term_stop_signal reads it); the loop saves and exits.  SIGINT
 * (Ctrl-C) only sets a flag too, and the next read returns it as the key
 * TK_INTERRUPT, so Ctrl-C acts like a key (the loop treats it as q).
 * While long work runs (term_work_begin .. term_work_end) every one of
 * those signals also sets the work's stop flag, and Ctrl-C only that: it
 * stops the work and is no key.  Fatal
 * signals (SIGSEGV, SIGBUS, SIGFPE, SIGILL, SIGABRT) write the terminal's
 * saved reset strings, restore its modes and re-raise.
 */
#ifndef BIASLINE_TERM_H
#define BIASLINE_TERM_H

#include <signal.h>
#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#include "render/render.h"

/* Keys beyond Unicode code points. */
enum term_key {
	TK_NONE = -1,      /* nothing read (zero-timeout poll) */
	TK_ERROR = -2,     /* the read failed (signal, or terminal gone) */
	TK_BASE = 0x110000,
	TK_UP, TK_DOWN, TK_LEFT, TK_RIGHT, TK_PGUP, TK_PGDN, TK_HOME, TK_END,
	TK_BACKSPACE, TK_ENTER, TK_ESC, TK_RESIZE, TK_DELETE, TK_F1,
	TK_INTERRUPT,      /* Ctrl-C (SIGINT) */
};

/* Styles of text and cells; the plot roles follow TS_ROLE. */
enum term_style {
	TS_NORMAL,
	TS_TITLE,      /* title bar */
	TS_SELECTED,   /* selected list row: always inverted (A_REVERSE) */
	TS_HEADER,     /* section headers: bold */
	TS_ERROR,      /* messages about errors: bold (and red with colour) */
	TS_DIM,        /* hints */
	TS_GOOD,       /* converged */
	TS_ROLE,       /* + enum cell_role: plot cells */
	TS_COUNT = TS_ROLE + ROLE_COUNT
};

/* An open terminal (embedded; term_open / term_close). */
struct term_ctx {
	void *screen;      /* the curses SCREEN */
	bool color;        /* colour in use */
	bool open;
};

/*
 * Open the terminal: signal handlers, newterm on stdin/stdout, keypad,
 * no echo, blocking reads, ESCDELAY 50 ms unless set, hidden cursor, and
 * colours when WANT_COLOR and the terminal has them.  Returns 0, or -1
 * with a message in ERR (unknown TERM, not a terminal).
 */
int term_open(struct term_ctx *t, bool want_color, char *err, size_t errlen);

/* Restore the terminal (safe to call twice). */
void term_close(struct term_ctx *t);

/* The terminal's size now. */
void term_size(const struct term_ctx *t, int *rows, int *cols);

/*
 * Read one key: a Unicode code point or an enum term_key.  TIMEOUT_MS < 0
 * blocks; 0 polls (TK_NONE when nothing waits).
 */
int term_read_key(struct term_ctx *t, int timeout_ms);

/* The signal (SIGHUP, SIGTERM, SIGQUIT) that asked the program to stop, or 0. */
int term_stop_signal(void);

/*
 * Long work starts: the flag it must read at every step (core/progress.h),
 * set by SIGHUP, SIGTERM, SIGQUIT, Ctrl-C and term_work_cancel until
 * term_work_end.
 */
const volatile sig_atomic_t *term_work_begin(void);

/* Ask the long work to stop (its cancel key). */
void term_work_cancel(void);

/* The long work is over: Ctrl-C is a key again. */
void term_work_end(void);

/* Start a frame: blank the next screen image. */
void term_begin(struct term_ctx *t);

/* Put one code point at ROW, COL in STYLE. */
void term_put(struct term_ctx *t, int row, int col, uint32_t ch,
              enum term_style style);

/*
 * Write UTF-8 TEXT at ROW, COL in STYLE, at most MAXW cells (< 0: to the
 * right edge).  Returns the number of cells written.
 */
int term_text(struct term_ctx *t, int row, int col, const char *text, int maxw,
              enum term_style style);

/* Fill MAXW cells from ROW, COL with blanks in STYLE. */
void term_fill(struct term_ctx *t, int row, int col, int maxw, enum term_style style);

/* Copy grid G to ROW, COL, each cell styled by its role. */
void term_blit(struct term_ctx *t, const struct grid *g, int row, int col);

/* Show the cursor at ROW, COL (a prompt), or hide it when ROW < 0. */
void term_cursor(struct term_ctx *t, int row, int col);

/* End a frame: send the changes to the terminal. */
void term_end(struct term_ctx *t);

/* Make the next term_end repaint every cell (Ctrl-L). */
void term_touch_all(struct term_ctx *t);

#endif
