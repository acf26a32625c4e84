/*
 * cmd_check.c - 'biasline check FILE...': validate session files, one line
 * per file; every file is checked, and the exit status is the worst one's.
 */
#include <getopt.h>
#include <stdio.h>

#include "cli_analysis.h"
#include "commands.h"
#include "session/session.h"

/* Print the usage of 'check' to OUT. */
static void check_usage(FILE *out)
{
	fprintf(out,
	        "Usage: biasline check [OPTIONS] FILE...\n"
	        "\n"
	        "Validate session files.  Checks every FILE: prints \"FILE: ok\" for\n"
	        "each valid one and the error of each other one as\n"
	        "FILE:LINE:COL: KEY: MESSAGE.\n"
	        "\n"
	        "The exit status is the worst file's (66 wins over 65).\n"
	        "\n"
	        "Options:\n"
	        "  -q, --quiet    print errors only\n"
	        "  -h, --help     show this help and exit\n"
	        "  -V, --version  show the version and exit\n");
	static const enum exit_code codes[] = { EXIT_OK_CODE, EXIT_USAGE,
	                                        EXIT_DATA, EXIT_NO_INPUT,
	                                        EXIT_IO };
	exit_status_usage(out, codes, sizeof codes / sizeof codes[0]);
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
	while ((c = getopt_long(argc, argv, "+:qhV", opts, NULL)) != -1) {
		switch (c) {
		case 'q':
			quiet = 1;
			break;
		default:
			return cli_shared_option("check", c, argv, check_usage);
		}
	}
	if (optind >= argc) {
		fprintf(stderr, "biasline check: no FILE given (try 'biasline "
		        "check --help')\n");
		return EXIT_USAGE;
	}
	int worst = EXIT_OK_CODE;
	for (int k = optind; k < argc; k++) {
		struct session s;
		struct session_error err;
		enum session_status st = session_load_file(&s, argv[k], &err);
		if (st != SESSION_OK) {
			char line[1024];
			session_error_format(&err, line, sizeof line);
			fflush(stdout);
			fprintf(stderr, "%s\n", line);
			/* A file that could not be read at all is worse than one
			 * that was read and found invalid. */
			if (st == SESSION_NO_INPUT)
				worst = EXIT_NO_INPUT;
			else if (worst == EXIT_OK_CODE)
				worst = EXIT_DATA;
			continue;
		}
		session_fini(&s);
		if (!quiet)
			printf("%s: ok\n", argv[k]);
	}
	return fflush(stdout) == 0 ? worst : EXIT_IO;
}
