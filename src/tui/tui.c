/*
 * tui.c - the front end's entry point: locale, the app, the loop.
 */
#include "tui/tui.h"

#include <langinfo.h>
#include <locale.h>
#include <stdio.h>
#include <string.h>

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
	struct app a;
	char err[1024];
	int rc = app_init(&a, &o, err, sizeof err);
	if (rc != 0) {
		fprintf(stderr, "biasline: %s\n", err);
		return rc < 0 ? 70 : rc;
	}
	if (no_utf8)
		app_message(&a, true, "--unicode needs a UTF-8 locale (LANG); "
		            "showing ASCII marks");
	rc = app_run(&a);
	app_fini(&a);
	return rc;
}
