/*
 * term.c - every curses call of the program lives here (see term.h).
 *
 * State kept outside the struct term_ctx: signal handlers cannot take a
 * context, so the stop flag is a volatile sig_atomic_t, and the reset
 * bytes and terminal modes a fatal-signal handler writes back are kept in
 * one static block filled once when the terminal opens and only read
 * after that.
 */
#define NCURSES_WIDECHAR 1
#define _XOPEN_SOURCE_EXTENDED 1

#include "tui/term.h"

#include <curses.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <term.h>
#include <termios.h>
#include <unistd.h>

/* The signal that asked to stop (0 = none). */
static volatile sig_atomic_t term_stop_flag;
/* Ctrl-C (SIGINT) was pressed and not yet read as TK_INTERRUPT. */
static volatile sig_atomic_t term_interrupt_flag;
/* Long work runs, and whether it was asked to stop. */
static volatile sig_atomic_t term_working;
static volatile sig_atomic_t term_work_flag;

/* What a fatal-signal handler needs to give the terminal back. */
static struct {
	volatile sig_atomic_t armed;
	char reset[256];          /* rmcup, cnorm, sgr0, rmkx */
	size_t reset_len;
	struct termios modes;     /* the modes before curses started */
	bool have_modes;
} term_rescue;

/* Colour pairs used for the plot roles and messages. */
enum term_pair {
	PAIR_LINE = 1, PAIR_DEVICE, PAIR_PATH, PAIR_NEWEST, PAIR_POINT,
	PAIR_ERROR, PAIR_GOOD, PAIR_AXIS,
};

/* Ask the main loop to stop: the handler for SIGHUP, SIGTERM, SIGQUIT. */
static void term_on_stop(int sig)
{
	term_stop_flag = sig;
	term_work_flag = 1;
}

/* Turn Ctrl-C into a key, or stop the long work: the handler for SIGINT. */
static void term_on_interrupt(int sig)
{
	(void)sig;
	if (term_working)
		term_work_flag = 1;
	else
		term_interrupt_flag = 1;
}

/* Give the terminal back and re-raise: the handler for fatal signals. */
static void term_on_fatal(int sig)
{
	if (term_rescue.armed) {
		ssize_t w = write(STDOUT_FILENO, term_rescue.reset, term_rescue.reset_len);
		(void)w;
		if (term_rescue.have_modes)
			tcsetattr(STDIN_FILENO, TCSANOW, &term_rescue.modes);
	}
	signal(sig, SIG_DFL);
	raise(sig);
}

/* Install the stop and fatal handlers (before curses, so it keeps them). */
static void term_install_signals(void)
{
	struct sigaction sa;
	memset(&sa, 0, sizeof sa);
	sigemptyset(&sa.sa_mask);
	sa.sa_handler = term_on_stop;
	sa.sa_flags = 0; /* no SA_RESTART: a blocking read returns at once */
	sigaction(SIGHUP, &sa, NULL);
	sigaction(SIGTERM, &sa, NULL);
	sigaction(SIGQUIT, &sa, NULL);
	sa.sa_handler = term_on_interrupt;
	sigaction(SIGINT, &sa, NULL);
	sa.sa_handler = term_on_fatal;
	sa.sa_flags = SA_RESETHAND;
	static const int fatal[] = { SIGSEGV, SIGBUS, SIGFPE, SIGILL, SIGABRT };
	for (size_t k = 0; k < sizeof fatal / sizeof fatal[0]; k++)
		sigaction(fatal[k], &sa, NULL);
	signal(SIGPIPE, SIG_IGN);
}

/* Append terminfo capability CAP to the rescue reset string. */
static void term_rescue_add(const char *cap)
{
	char *s = tigetstr(cap);
	if (s == NULL || s == (char *)-1)
		return;
	size_t n = strlen(s);
	if (term_rescue.reset_len + n >= sizeof term_rescue.reset)
		return;
	memcpy(term_rescue.reset + term_rescue.reset_len, s, n);
	term_rescue.reset_len += n;
}

/* Set up the colour pairs. */
static void term_init_colors(void)
{
	start_color();
	short bg = COLOR_BLACK;
	if (use_default_colors() == OK)
		bg = -1;
	init_pair(PAIR_LINE, COLOR_CYAN, bg);
	init_pair(PAIR_DEVICE, COLOR_YELLOW, bg);
	init_pair(PAIR_PATH, COLOR_GREEN, bg);
	init_pair(PAIR_NEWEST, COLOR_MAGENTA, bg);
	init_pair(PAIR_POINT, COLOR_RED, bg);
	init_pair(PAIR_ERROR, COLOR_RED, bg);
	init_pair(PAIR_GOOD, COLOR_GREEN, bg);
	init_pair(PAIR_AXIS, COLOR_BLUE, bg);
}

/* Open the terminal. */
int term_open(struct term_ctx *t, bool want_color, char *err, size_t errlen)
{
	t->screen = NULL;
	t->color = false;
	t->open = false;
	if (!isatty(STDIN_FILENO) || !isatty(STDOUT_FILENO)) {
		snprintf(err, errlen, "the front end needs a terminal on standard input "
		         "and output (for scripts use 'biasline solve' or 'biasline plot')");
		return -1;
	}
	const char *name = getenv("TERM");
	if (name == NULL || name[0] == '\0') {
		snprintf(err, errlen, "TERM is not set: set TERM to e.g. xterm-256color");
		return -1;
	}
	term_rescue.have_modes = tcgetattr(STDIN_FILENO, &term_rescue.modes) == 0;
	term_install_signals();
	SCREEN *sp = newterm(NULL, stdout, stdin);
	if (sp == NULL) {
		snprintf(err, errlen, "the terminal type '%s' is unknown here: set TERM "
		         "to e.g. xterm-256color", name);
		return -1;
	}
	t->screen = sp;
	t->open = true;
	term_rescue.reset_len = 0;
	term_rescue_add("rmcup");
	term_rescue_add("cnorm");
	term_rescue_add("sgr0");
	term_rescue_add("rmkx");
	term_rescue.armed = 1;
	cbreak();
	noecho();
	nonl();
	keypad(stdscr, TRUE);
	intrflush(stdscr, FALSE);
	if (getenv("ESCDELAY") == NULL)
		set_escdelay(50);
	curs_set(0);
	if (want_color && has_colors()) {
		term_init_colors();
		t->color = true;
	}
	return 0;
}

/* Restore the terminal. */
void term_close(struct term_ctx *t)
{
	if (!t->open)
		return;
	term_rescue.armed = 0;
	curs_set(1);
	endwin();
	delscreen(t->screen);
	t->screen = NULL;
	t->open = false;
}

/* The terminal's size. */
void term_size(const struct term_ctx *t, int *rows, int *cols)
{
	(void)t;
	getmaxyx(stdscr, *rows, *cols);
}

/* Read one key. */
int term_read_key(struct term_ctx *t, int timeout_ms)
{
	(void)t;
	if (term_interrupt_flag) {
		term_interrupt_flag = 0;
		return TK_INTERRUPT;
	}
	wtimeout(stdscr, timeout_ms);
	wint_t wc;
	int rc = wget_wch(stdscr, &wc);
	if (rc == ERR && term_interrupt_flag) {
		term_interrupt_flag = 0;
		return TK_INTERRUPT;
	}
	if (rc == ERR)
		return timeout_ms >= 0 && term_stop_flag == 0 ? TK_NONE : TK_ERROR;
	if (rc == KEY_CODE_YES) {
		switch (wc) {
		case KEY_UP: return TK_UP;
		case KEY_DOWN: return TK_DOWN;
		case KEY_LEFT: return TK_LEFT;
		case KEY_RIGHT: return TK_RIGHT;
		case KEY_PPAGE: return TK_PGUP;
		case KEY_NPAGE: return TK_PGDN;
		case KEY_HOME: return TK_HOME;
		case KEY_END: return TK_END;
		case KEY_BACKSPACE: return TK_BACKSPACE;
		case KEY_ENTER: return TK_ENTER;
		case KEY_RESIZE: return TK_RESIZE;
		case KEY_DC: return TK_DELETE;
		case KEY_F(1): return TK_F1;
		default: return TK_NONE;
		}
	}
	switch (wc) {
	case 8: case 127: return TK_BACKSPACE;
	case '\r': case '\n': return TK_ENTER;
	case 27: return TK_ESC;
	default: return (int)wc;
	}
}

/* The signal that asked to stop. */
int term_stop_signal(void)
{
	return term_stop_flag;
}

/* Long work starts. */
const volatile sig_atomic_t *term_work_begin(void)
{
	term_work_flag = term_stop_flag != 0;
	term_working = 1;
	return &term_work_flag;
}

/* Ask the long work to stop. */
void term_work_cancel(void)
{
	term_work_flag = 1;
}

/* The long work is over. */
void term_work_end(void)
{
	term_working = 0;
	term_work_flag = 0;
}

/* Start a frame. */
void term_begin(struct term_ctx *t)
{
	(void)t;
	werase(stdscr);
}

/* The curses attributes and colour pair of STYLE. */
static attr_t term_attr(const struct term_ctx *t, enum term_style style, short *pair)
{
	*pair = 0;
	attr_t a = A_NORMAL;
	switch ((int)style) {
	case TS_TITLE: case TS_SELECTED: a = A_REVERSE; break;
	case TS_HEADER: a = A_BOLD; break;
	case TS_ERROR: a = A_BOLD; *pair = PAIR_ERROR; break;
	case TS_DIM: a = A_DIM; break;
	case TS_GOOD: a = A_BOLD; *pair = PAIR_GOOD; break;
	case TS_ROLE + ROLE_AXIS: *pair = PAIR_AXIS; break;
	case TS_ROLE + ROLE_LINE: *pair = PAIR_LINE; break;
	case TS_ROLE + ROLE_DEVICE: *pair = PAIR_DEVICE; break;
	case TS_ROLE + ROLE_PATH: *pair = PAIR_PATH; break;
	case TS_ROLE + ROLE_NEWEST: a = A_BOLD; *pair = PAIR_NEWEST; break;
	case TS_ROLE + ROLE_START: a = A_BOLD; break;
	case TS_ROLE + ROLE_POINT: a = A_BOLD; *pair = PAIR_POINT; break;
	case TS_ROLE + ROLE_LEGEND: a = A_DIM; break;
	default: break;
	}
	if (!t->color)
		*pair = 0;
	return a;
}

/* Put one code point. */
void term_put(struct term_ctx *t, int row, int col, uint32_t ch,
              enum term_style style)
{
	short pair;
	attr_t a = term_attr(t, style, &pair);
	wchar_t ws[2] = { (wchar_t)ch, L'\0' };
	cchar_t cc;
	if (ch < 0x20 || ch == 0x7F)
		ws[0] = L'?';
	if (setcchar(&cc, ws, a, pair, NULL) == OK)
		mvadd_wch(row, col, &cc);
}

/* Write UTF-8 text. */
int term_text(struct term_ctx *t, int row, int col, const char *text, int maxw,
              enum term_style style)
{
	int rows, cols;
	getmaxyx(stdscr, rows, cols);
	if (row < 0 || row >= rows)
		return 0;
	int limit = cols - col;
	if (maxw >= 0 && maxw < limit)
		limit = maxw;
	int n = 0;
	const char *s = text;
	while (*s != '\0' && n < limit) {
		uint32_t cp = render_utf8_next(&s);
		term_put(t, row, col + n, cp, style);
		n++;
	}
	return n;
}

/* Fill cells with blanks. */
void term_fill(struct term_ctx *t, int row, int col, int maxw, enum term_style style)
{
	for (int k = 0; k < maxw; k++)
		term_put(t, row, col + k, ' ', style);
}

/* Copy a grid. */
void term_blit(struct term_ctx *t, const struct grid *g, int row, int col)
{
	for (int r = 0; r < g->rows; r++)
		for (int c = 0; c < g->cols; c++) {
			const struct cell *x = grid_at(g, r, c);
			if (x->ch == ' ' && x->role == ROLE_NONE)
				continue;
			term_put(t, row + r, col + c, x->ch,
			         (enum term_style)(TS_ROLE + x->role));
		}
}

/* Show or hide the cursor. */
void term_cursor(struct term_ctx *t, int row, int col)
{
	(void)t;
	if (row < 0) {
		curs_set(0);
		return;
	}
	move(row, col);
	curs_set(1);
}

/* End a frame. */
void term_end(struct term_ctx *t)
{
	(void)t;
	wnoutrefresh(stdscr);
	doupdate();
}

/* Repaint everything next frame. */
void term_touch_all(struct term_ctx *t)
{
	(void)t;
	clearok(curscr, TRUE);
}
