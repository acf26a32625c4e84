/*
 * cmd_tui.c - the terminal front end: biasline [options] [FILE].
 */
#include <getopt.h>
#include <stdio.h>
#include <stdlib.h>

#include "cli_analysis.h"
#include "commands.h"
#include "tui/tui.h"

/* Print the front end's usage to OUT. */
static void tui_usage(FILE *out)
{
	fprintf(out,
	        "Usage: biasline [--no-color] [--unicode] [FILE]\n"
	        "\n"
	        "Open the terminal front end on the session FILE, or on the built-in\n"
	        "demo without one.  Press ? inside for the keys.\n"
	        "\n"
	        "Options:\n"
	        "  -C, --no-color  no colour (also when NO_COLOR is set)\n"
	        "  -u, --unicode   line-drawing and symbol characters in the plot\n"
	        "  -h, --help      show this help and exit\n"
	        "  -V, --version   show the version and exit\n");
	static const enum exit_code codes[] = { EXIT_OK_CODE, EXIT_USAGE,
	                                        EXIT_DATA, EXIT_NO_INPUT,
	                                        EXIT_NO_TERMINAL };
	exit_status_usage(out, codes, sizeof codes / sizeof codes[0]);
	fprintf(out, "  128+N stopped by signal N (unsaved changes then go to the\n"
	        "        recovery file)\n");
}

/* Entry point of the front end. */
int cmd_tui(int argc, char **argv)
{
	static const struct option longopts[] = {
		{ "no-color", no_argument, NULL, 'C' },
		{ "unicode", no_argument, NULL, 'u' },
		{ "help", no_argument, NULL, 'h' },
		{ "version", no_argument, NULL, 'V' },
		{ NULL, 0, NULL, 0 },
	};
	const char *nc = getenv("NO_COLOR");
	struct tui_options opt = { NULL, nc == NULL || nc[0] == '\0', false };
	optind = 1;
	opterr = 0;
	int ch;
	while ((ch = getopt_long(argc, argv, ":CuhV", longopts, NULL)) != -1) {
		switch (ch) {
		case 'C':
			opt.color = false;
			break;
		case 'u':
			opt.unicode = true;
			break;
		default:
			return cli_shared_option("", ch, argv, tui_usage);
		}
	}
	if (argc - optind > 1) {
		fprintf(stderr, "biasline: give at most one session FILE\n");
		return EXIT_USAGE;
	}
	if (argc - optind == 1)
		opt.path = argv[optind];
	return tui_run(&opt);
}
