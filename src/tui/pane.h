/*
 * pane.h - a part of the screen with its own state: the shape every pane
 * file fills in, and the actions that carry requests between panes.
 *
 * A pane keeps its state to itself: the loop allocates SIZE zeroed bytes
 * for it and hands them back as SELF to every call.  Panes never call one
 * another; a request for another pane (open the design view, ask a
 * question on the bottom line, the session changed) is an action posted
 * with app_post, which the loop delivers after the key that caused it.
 *
 * Slots: each slot of the screen shows the top-most visible pane the pane
 * table lists for it.  Panes in the overlay slots (body, screen, bottom)
 * are modal: while visible they see every key first.  The plot and side
 * panes take keys only through the key table.
 */
#ifndef BIASLINE_PANE_H
#define BIASLINE_PANE_H

#include <stdbool.h>
#include <stddef.h>

struct app;
struct pane;

/* A rectangle of the screen, in cells. */
struct rect {
	int row, col, rows, cols;
};

/* Where a pane is drawn. */
enum pane_slot {
	SLOT_TITLE,    /* the top line */
	SLOT_MAIN,     /* the plot's area */
	SLOT_SIDE,     /* the side pane's column (no column when none is visible) */
	SLOT_BODY,     /* over the plot and the side pane: views */
	SLOT_SCREEN,   /* over the whole screen: help */
	SLOT_BOTTOM,   /* the bottom line */
	SLOT_COUNT
};

/* What an action asks. */
enum action_kind {
	ACT_OPEN,      /* TO's key was pressed: show it (a view may toggle) */
	ACT_CLOSE,     /* close every view that Esc closes (broadcast) */
	ACT_CHANGED,   /* the session or its solution changed (broadcast) */
	ACT_SELECT,    /* select the parameter row of key TEXT (broadcast) */
	ACT_ASK,       /* ask on the bottom line (broadcast; the prompt takes it) */
	ACT_ANSWER,    /* what was typed for TO's question TAG (TO NULL: the app) */
	ACT_PICTURE,   /* write the view as SVG (TO NULL: the loop gives it to
	                  the pane the plot's place shows) */
};

/* One request. */
struct action {
	enum action_kind kind;
	const struct pane *to;  /* the pane it is for; NULL: every pane */
	const struct pane *from;/* ASK: the asker (NULL: the app) */
	int tag;                /* the asker's question (ASK, ANSWER) */
	bool yesno;             /* ASK: a y/n question (answers "y" or "n") */
	bool default_no;        /* ASK: Enter answers a y/n question no */
	char text[1400];        /* ASK: the question; ANSWER: the text typed;
	                           SELECT: a parameter key */
	char initial[256];      /* ASK: the text the entry starts with */
	char error[1024];       /* ASK: why the last answer was refused, or "" */
};

/* Flags a key handler or an action handler returns. */
enum app_flags {
	APP_HANDLED = 1 << 0,   /* the key meant something */
	APP_REDRAW = 1 << 1,    /* draw the screen again */
	APP_QUIT = 1 << 2,      /* leave the loop */
};

/*
 * A pane.  Every function may be NULL: no state to set up or free, always
 * visible, no keys of its own, nothing drawn, no actions taken.  KEY and
 * ACT return enum app_flags (0: not taken).
 */
struct pane {
	const char *name;
	enum pane_slot slot;
	size_t size;            /* bytes of the pane's own state */
	void (*init)(struct app *a, void *self);
	void (*fini)(void *self);
	bool (*visible)(const struct app *a, const void *self);
	unsigned (*key)(struct app *a, void *self, int key);
	void (*draw)(struct app *a, void *self, const struct rect *r);
	unsigned (*act)(struct app *a, void *self, const struct action *act);
};

#endif
