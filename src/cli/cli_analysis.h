/*
 * cli_analysis.h - what the commands share: loading a session into a
 * problem with the right exit status (every command that solves), and for
 * design, sweep and tolerance the --format choice, number formatting and
 * the safety caution.
 */
#ifndef BIASLINE_CLI_ANALYSIS_H
#define BIASLINE_CLI_ANALYSIS_H

#include <stdbool.h>
#include <stddef.h>
#include <stdio.h>

#include "core/problem.h"
#include "core/quantity.h"
#include "session/session.h"

/*
 * The options every command shares, and getopt_long's complaints.  C is
 * what getopt_long returned ('h', 'V', ':' for a missing value, anything
 * else for an unknown option; the option string starts with ':') in the
 * command CMD ("" for the front end), whose help USAGE prints.  Prints the
 * help or the version and returns EXIT_OK_CODE, or names the option and
 * returns EXIT_USAGE, always with one wording: "biasline CMD: ...".
 */
int cli_shared_option(const char *cmd, int c, char **argv,
                      void (*usage)(FILE *));

/*
 * Load FILE into SE and its problem into PB; on failure print
 * "biasline CMD: ..." and return the exit status (SE is then finied),
 * else return 0.
 */
int cli_load_problem(const char *cmd, const char *file, struct session *se,
                     struct problem *pb);

/* Most --set options one command takes. */
#define CLI_MAX_SETS 64

/* The getopt_long value of --set (it has no short form). */
#define CLI_OPT_SET 0x5e7

/* The --set KEY=VALUE options of a command line, in order. */
struct cli_sets {
	size_t n;
	const char *text[CLI_MAX_SETS];
};

/* The lines of --help that describe --set (a printf format: % is %%). */
#define CLI_SET_HELP \
	"      --set KEY=VALUE  change one value after loading FILE (repeat it\n" \
	"                       for more): vs, rs, is, rp, a device key,\n" \
	"                       source.network.PART, target.KEY, ratings.KEY,\n" \
	"                       solver.KEY or tolerances.PARAMETER; the value\n" \
	"                       may carry an SI prefix and unit (rs=4.7k,\n" \
	"                       vs=\"27 V\", tolerances.rs=5%%); none removes\n" \
	"                       a target, rating or tolerance\n"

/*
 * Add --set ARG to SETS after checking its form (KEY=VALUE); prints and
 * returns -1 (exit 64) when it is malformed or there are too many.
 */
int cli_add_set(const char *cmd, struct cli_sets *sets, const char *arg);

/*
 * Apply SETS (may be NULL) in order to the loaded session SE of FILE;
 * prints "biasline CMD: FILE: --set ...: why" and returns the exit status
 * (64 a key SE does not have, 65 a bad value; SE is left as it was after
 * the last good one), or 0.
 */
int cli_apply_sets(const char *cmd, const char *file,
                   const struct cli_sets *sets, struct session *se);

/*
 * As cli_load_problem, applying SETS (may be NULL) to the session after
 * loading, each checked like the file (session/session_set.h): a key the
 * session does not have exits 64, a bad value 65, each message naming
 * the key.
 */
int cli_load_with(const char *cmd, const char *file,
                  const struct cli_sets *sets, struct session *se,
                  struct problem *pb);

/* Parse a --format value into *CSV; prints and returns -1 when bad. */
int cli_parse_format(const char *cmd, const char *arg, bool *csv);

/*
 * Parse TEXT as a quantity of KIND for option OPT into *OUT; prints and
 * returns -1 when bad.
 */
int cli_parse_qty(const char *cmd, const char *opt, const char *text,
                  enum qty_kind kind, double *out);

/* Parse a count in [MIN, MAX] for option OPT; prints and returns -1. */
int cli_parse_count(const char *cmd, const char *opt, const char *text,
                    unsigned long long min, unsigned long long max,
                    unsigned long long *out);

/*
 * Format VALUE of KIND with SIG digits in engineering notation (ASCII),
 * trailing zeros dropped.  A value that is not defined (NaN) reads "not
 * defined here", an infinite one "infinite" (or "-infinite"): text output
 * never shows nan or inf.
 */
const char *cli_fmt(char *buf, size_t n, double value, enum qty_kind kind,
                    int sig);

/* cli_fmt keeping trailing zeros (fixed-width tables). */
const char *cli_fmt_full(char *buf, size_t n, double value,
                         enum qty_kind kind, int sig);

/* A plain number with printf's %+.*g, or the words of cli_fmt. */
const char *cli_fmt_number(char *buf, size_t n, double value, int sig,
                           bool sign);

/* The text every front end prints for a value that is not defined. */
#define CLI_UNDEFINED "not defined here"

/*
 * When SE's source is a network, print a note that vs and rs (and is, rp)
 * stand for its Thevenin (Norton) equivalent, not for one of its parts,
 * and that sweeps and tolerances vary the parts by their key paths.
 */
void cli_print_network_note(const struct session *se, const char *indent);

/* Print the safety caution for FLAGS (safety.h) with INDENT, if any. */
void cli_print_caution(unsigned flags, const char *indent);

#endif
