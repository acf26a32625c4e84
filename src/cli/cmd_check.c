/*
 * cmd_check.c - 'biasline check FILE...': validate session files, one line
 * per file; stop at the first that is not valid.
 */
#include <getopt.h>
#include <stdio.h>

#include "biasline_version.h"
#include "commands.h"
#include "session/session.h"

/* Print the usage of 'check' to OUT. */
static void check_usage(FILE *out)
{
	fprintf(out,
	        "Usage: biasline check [OPTIONS] FILE...\n"
	        "\n"
	        "Validate session files.  Prints \"FILE: ok\" for each valid file;\n"
	        "stops at the first file that is not valid and prints its error as\n"
	        "FILE:LINE:COL: KEY: MESSAGE.\n"
	        "\n"
	        "Exit status: 0 all valid, 65 a file is not a valid session,\n"
	        "66 a file cannot be read, 64 bad command line.\n"
	        "\n"
	        "Options:\n"
	        "  -q, --quiet    print errors only\n"
	        "  -h, --help     show this help and exit\n"
	        "  -V, --version  show the version and exit\n");
}

/* Validate each FILE argument. */
int cmd_check(int argc, char **argv)
{
	static const struct option opts[] = {
		{ "quiet", no_argument, NULL, 'q' },
		{ "help", no_argument, NULL, 'h' },
		{ "version", no_argument, NULL, 'V' },
		{ NULL, 0, NULL, 0 },
	};
	int quiet = 0, c;
	optind = 1;
	opterr = 0;
	while ((c = getopt_long(argc, argv, "+qhV", opts, NULL)) != -1) {
		switch (c) {
		case 'q':
			quiet = 1;
			break;
		case 'h':
			check_usage(stdout);
			return EXIT_OK_CODE;
		case 'V':
			printf("biasline %s\n", BIASLINE_VERSION);
			return EXIT_OK_CODE;
		default:
			fprintf(stderr, "biasline check: unknown option '%s' (try "
			        "'biasline check --help')\n", argv[optind - 1]);
			return EXIT_USAGE;
		}
	}
	if (optind >= argc) {
		fprintf(stderr, "biasline check: no FILE given (try 'biasline "
		        "check --help')\n");
		return EXIT_USAGE;
	}
	for (int k = optind; k < argc; k++) {
		struct session s;
		struct session_error err;
		enum session_status st = session_load_file(&s, argv[k], &err);
		if (st != SESSION_OK) {
			char line[1024];
			session_error_format(&err, line, sizeof line);
			fprintf(stderr, "%s\n", line);
			return st == SESSION_NO_INPUT ? EXIT_NO_INPUT : EXIT_DATA;
		}
		session_fini(&s);
		if (!quiet)
			printf("%s: ok\n", argv[k]);
	}
	return fflush(stdout) == 0 ? EXIT_OK_CODE : EXIT_IO;
}
