/*
 * cmd_tidy.c - 'biasline tidy FILE': print a session file in canonical form
 * (keys in the standard order, every number exact), or rewrite it in place
 * atomically.
 */
#include <getopt.h>
#include <stdio.h>
#include <stdlib.h>

#include "cli_analysis.h"
#include "commands.h"
#include "session/atomic.h"
#include "session/session.h"

/* Print the usage of 'tidy' to OUT. */
static void tidy_usage(FILE *out)
{
	fprintf(out,
	        "Usage: biasline tidy [OPTIONS] FILE\n"
	        "\n"
	        "Print the session in FILE in canonical form: every key in the\n"
	        "standard order, defaults written out, numbers exact.  The comment\n"
	        "block at the top of the file is kept; other comments are not.\n"
	        "\n"
	        "Options:\n"
	        "  -i, --in-place  rewrite FILE (atomically) instead of printing\n"
	        "  -h, --help      show this help and exit\n"
	        "  -V, --version   show the version and exit\n");
	static const enum exit_code codes[] = { EXIT_OK_CODE, EXIT_USAGE,
	                                        EXIT_DATA, EXIT_NO_INPUT,
	                                        EXIT_SOFTWARE, EXIT_CANT_CREATE,
	                                        EXIT_IO };
	exit_status_usage(out, codes, sizeof codes / sizeof codes[0]);
}

/* Print or rewrite one file in canonical form. */
int cmd_tidy(int argc, char **argv)
{
	static const struct option opts[] = {
		{ "in-place", no_argument, NULL, 'i' },
		{ "help", no_argument, NULL, 'h' },
		{ "version", no_argument, NULL, 'V' },
		{ NULL, 0, NULL, 0 },
	};
	int in_place = 0, c;
	optind = 1;
	opterr = 0;
	while ((c = getopt_long(argc, argv, "+:ihV", opts, NULL)) != -1) {
		switch (c) {
		case 'i':
			in_place = 1;
			break;
		default:
			return cli_shared_option("tidy", c, argv, tidy_usage);
		}
	}
	if (argc - optind != 1) {
		fprintf(stderr, "biasline tidy: expected one FILE (try 'biasline "
		        "tidy --help')\n");
		return EXIT_USAGE;
	}
	const char *path = argv[optind];
	struct session s;
	struct session_error err;
	char line[1024];
	enum session_status st = session_load_file(&s, path, &err);
	if (st != SESSION_OK) {
		session_error_format(&err, line, sizeof line);
		fprintf(stderr, "%s\n", line);
		return cli_exit_from_session(st);
	}
	char *comments = session_file_comments(path);
	char *buf;
	size_t len;
	st = session_save_buffer_with(&s, comments, &buf, &len, &err);
	free(comments);
	session_fini(&s);
	if (st != SESSION_OK) {
		session_error_format(&err, line, sizeof line);
		fprintf(stderr, "biasline tidy: %s\n", line);
		return EXIT_SOFTWARE;
	}
	if (in_place) {
		char why[512];
		int rc = atomic_write_file(path, buf, len, why, sizeof why);
		free(buf);
		if (rc != 0) {
			fprintf(stderr, "biasline tidy: %s\n", why);
			return EXIT_CANT_CREATE;
		}
		return EXIT_OK_CODE;
	}
	/* A failed write is reported by cli_finish_output (main.c). */
	fwrite(buf, 1, len, stdout);
	free(buf);
	return EXIT_OK_CODE;
}
