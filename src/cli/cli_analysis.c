/*
 * cli_analysis.c - helpers shared by the design, sweep and tolerance
 * commands (see cli_analysis.h).
 */
#include "cli_analysis.h"

#include <errno.h>
#include <getopt.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "biasline_version.h"
#include "commands.h"
#include "core/safety.h"
#include "session/session_set.h"

/* Help, version and the bad-option messages of every command. */
int cli_shared_option(const char *cmd, int c, char **argv,
                      void (*usage)(FILE *))
{
	const char *sp = cmd[0] != '\0' ? " " : "";
	switch (c) {
	case 'h':
		usage(stdout);
		return EXIT_OK_CODE;
	case 'V':
		printf("biasline %s\n", BIASLINE_VERSION);
		return EXIT_OK_CODE;
	case ':':
		fprintf(stderr, "biasline%s%s: option '%s' needs a value (try "
		        "'biasline%s%s --help')\n", sp, cmd, argv[optind - 1], sp,
		        cmd);
		return EXIT_USAGE;
	default:
		fprintf(stderr, "biasline%s%s: unknown option '%s' (try "
		        "'biasline%s%s --help')\n", sp, cmd, argv[optind - 1], sp,
		        cmd);
		return EXIT_USAGE;
	}
}

/* Load FILE and build its problem. */
int cli_load_problem(const char *cmd, const char *file, struct session *se,
                     struct problem *pb)
{
	return cli_load_with(cmd, file, NULL, se, pb);
}

/* Check and keep one --set. */
int cli_add_set(const char *cmd, struct cli_sets *sets, const char *arg)
{
	char key[SESSION_SET_KEY_MAX], err[300];
	const char *value;
	if (session_set_split(arg, key, sizeof key, &value, err, sizeof err) !=
	    SESSION_SET_OK) {
		fprintf(stderr, "biasline %s: --set: %s\n", cmd, err);
		return -1;
	}
	if (sets->n >= CLI_MAX_SETS) {
		fprintf(stderr, "biasline %s: --set: at most %d of them\n", cmd,
		        CLI_MAX_SETS);
		return -1;
	}
	sets->text[sets->n++] = arg;
	return 0;
}

/* Apply the --set options to a loaded session. */
int cli_apply_sets(const char *cmd, const char *file,
                   const struct cli_sets *sets, struct session *se)
{
	for (size_t k = 0; sets != NULL && k < sets->n; k++) {
		char why[1024];
		enum session_set_status st = session_set_assignment(
		        se, sets->text[k], why, sizeof why);
		if (st != SESSION_SET_OK) {
			fprintf(stderr, "biasline %s: %s: --set %s: %s\n", cmd, file,
			        sets->text[k], why);
			return st == SESSION_SET_BAD_VALUE ? EXIT_DATA : EXIT_USAGE;
		}
	}
	return 0;
}

/* Load FILE, apply the --set options and build its problem. */
int cli_load_with(const char *cmd, const char *file,
                  const struct cli_sets *sets, struct session *se,
                  struct problem *pb)
{
	struct session_error err;
	enum session_status ls = session_load_file(se, file, &err);
	if (ls != SESSION_OK) {
		char msg[1024];
		session_error_format(&err, msg, sizeof msg);
		fprintf(stderr, "biasline %s: %s\n", cmd, msg);
		return cli_exit_from_session(ls);
	}
	int rc = cli_apply_sets(cmd, file, sets, se);
	if (rc != 0) {
		session_fini(se);
		return rc;
	}
	char emsg[512];
	if (session_problem(se, pb, emsg, sizeof emsg) != 0) {
		fprintf(stderr, "biasline %s: %s: %s\n", cmd, file, emsg);
		session_fini(se);
		return EXIT_DATA;
	}
	return 0;
}

/* Parse --format. */
int cli_parse_format(const char *cmd, const char *arg, bool *csv)
{
	if (strcmp(arg, "csv") == 0) {
		*csv = true;
		return 0;
	}
	if (strcmp(arg, "text") == 0) {
		*csv = false;
		return 0;
	}
	fprintf(stderr, "biasline %s: --format: '%s' is not text or csv\n", cmd,
	        arg);
	return -1;
}

/* Parse a quantity option. */
int cli_parse_qty(const char *cmd, const char *opt, const char *text,
                  enum qty_kind kind, double *out)
{
	char why[200] = "";
	if (qty_parse(text, kind, out, why, sizeof why) == QTY_OK)
		return 0;
	fprintf(stderr, "biasline %s: %s: %s\n", cmd, opt,
	        why[0] ? why : "not a number");
	return -1;
}

/* Parse a count option. */
int cli_parse_count(const char *cmd, const char *opt, const char *text,
                    unsigned long long min, unsigned long long max,
                    unsigned long long *out)
{
	char *end;
	errno = 0;
	unsigned long long v = strtoull(text, &end, 10);
	if (text[0] == '\0' || text[0] == '-' || *end != '\0' || errno != 0 ||
	    v < min || v > max) {
		fprintf(stderr, "biasline %s: %s: '%s' is not a whole number from "
		        "%llu to %llu\n", cmd, opt, text, min, max);
		return -1;
	}
	*out = v;
	return 0;
}

/* The words for a value that is not finite; NULL when it is. */
static const char *cli_nonfinite(double value)
{
	if (isnan(value))
		return CLI_UNDEFINED;
	if (isinf(value))
		return value < 0 ? "-infinite" : "infinite";
	return NULL;
}

/* Engineering notation, ASCII units. */
const char *cli_fmt(char *buf, size_t n, double value, enum qty_kind kind,
                    int sig)
{
	const char *w = cli_nonfinite(value);
	if (w != NULL) {
		snprintf(buf, n, "%s", w);
		return buf;
	}
	return qty_format_short(buf, n, value, kind, sig, 1);
}

/* Engineering notation with trailing zeros. */
const char *cli_fmt_full(char *buf, size_t n, double value,
                         enum qty_kind kind, int sig)
{
	const char *w = cli_nonfinite(value);
	if (w != NULL) {
		snprintf(buf, n, "%s", w);
		return buf;
	}
	return qty_format(buf, n, value, kind, sig, 1);
}

/* A plain number. */
const char *cli_fmt_number(char *buf, size_t n, double value, int sig,
                           bool sign)
{
	const char *w = cli_nonfinite(value);
	if (w != NULL)
		snprintf(buf, n, "%s", w);
	else
		/* + 0.0 turns a negative zero into a plain one */
		snprintf(buf, n, sign ? "%+.*g" : "%.*g", sig, value + 0.0);
	return buf;
}

/* Print the safety caution. */
void cli_print_caution(unsigned flags, const char *indent)
{
	if (flags == 0)
		return;
	char msg[512];
	safety_message(flags, msg, sizeof msg);
	printf("\n%s%s\n", indent, msg);
}

/* The note about a network source. */
void cli_print_network_note(const struct session *se, const char *indent)
{
	if (se->network == NULL)
		return;
	printf("%snote: the source is a network; vs and rs here are its Thevenin\n"
	       "%s      equivalent (is and rp its Norton one), not one of its parts;\n"
	       "%s      sweeps and tolerances vary a part as source.network.<name>\n",
	       indent, indent, indent);
}
