/*
 * keys.h - the key table: every key of the main screen, what it does, and
 * the help text the help overlay and the man page list in its order.
 */
#ifndef BIASLINE_KEYS_H
#define BIASLINE_KEYS_H

#include <stddef.h>

#include "tui/app.h"

/* Fill OUT with up to MAX help lines from the key table; returns the count. */
size_t keys_help(struct key_help *out, size_t max);

/*
 * Act on KEY from the table: run its action, or post ACT_OPEN to the view
 * it opens; *FLAGS gets enum app_flags (0 when the table has no such key).
 * Returns the pane the key belongs to when the key is that pane's to
 * handle (the loop hands it to that pane's key function), else NULL.
 */
const struct pane *keys_dispatch(struct app *a, int key, unsigned *flags);

#endif
