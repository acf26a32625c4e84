/*
 * tui.c - the front end's entry point: locale, the app, the loop.
 */
#include "tui/tui.h"

#include <locale.h>
#include <stdio.h>

/* Run the front end. */
int tui_run(const struct tui_options *opt)
{
	/* Wide characters from the environment, but '.' in every number. */
	setlocale(LC_ALL, "");
	setlocale(LC_NUMERIC, "C");
	struct app a;
	char err[1024];
	int rc = app_init(&a, opt, err, sizeof err);
	if (rc != 0) {
		fprintf(stderr, "biasline: %s\n", err);
		return rc < 0 ? 70 : rc;
	}
	rc = app_run(&a);
	app_fini(&a);
	return rc;
}
