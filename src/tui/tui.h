/*
 * tui.h - the terminal front end's entry point.
 */
#ifndef BIASLINE_TUI_H
#define BIASLINE_TUI_H

#include "tui/app.h"

/*
 * Run the front end with OPT until the user quits or a signal stops it.
 * Returns the exit status: 0, 65/66 for a session that cannot be loaded,
 * 69 when the terminal cannot be used, 128 + N after signal N.
 */
int tui_run(const struct tui_options *opt);

#endif
