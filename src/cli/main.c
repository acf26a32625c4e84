/*
 * main.c - the biasline program: dispatch to a subcommand, or open the
 * terminal front end when the first argument is not a subcommand.
 */
#include <stdio.h>
#include <string.h>
#include <unistd.h>

#include "biasline_version.h"
#include "commands.h"

/* One subcommand: its name, entry point and a line for --help. */
struct command {
	const char *name;
	int (*run)(int argc, char **argv);
	const char *summary;
};

static const struct command commands[] = {
	{ "solve", cmd_solve, "find the operating point(s) of a session file" },
	{ "check", cmd_check, "validate session files" },
	{ "tidy", cmd_tidy, "print a session file in canonical form" },
	{ "plot", cmd_plot, "draw the load-line plot as text, SVG or PNG" },
	{ "reduce", cmd_reduce, "reduce a network source to its Thevenin equivalent" },
	{ "design", cmd_design, "choose RS (or VS) for a target current, voltage or power" },
	{ "sweep", cmd_sweep, "solve along a sweep of one parameter" },
	{ "tolerance", cmd_tolerance, "worst case and Monte Carlo over the tolerances" },
	{ "fit", cmd_fit, "fit a device model's parameters to measured points" },
	{ "report", cmd_report, "one HTML (or Markdown) file for a design review" },
};

/* Print the program's usage to OUT. */
static void main_usage(FILE *out)
{
	fprintf(out,
	        "Usage: biasline [--no-color] [--unicode] [FILE]\n"
	        "       biasline COMMAND [OPTIONS] FILE...\n"
	        "\n"
	        "Find where a source's load line meets a nonlinear device's I-V\n"
	        "curve, watch the fixed-point projections converge or diverge,\n"
	        "and keep the operating point inside its ratings.\n"
	        "\n"
	        "Without a command, opens the terminal front end on FILE, or on a\n"
	        "built-in demo when no FILE is given.\n"
	        "\n"
	        "Commands:\n");
	for (size_t k = 0; k < sizeof commands / sizeof commands[0]; k++)
		fprintf(out, "  %-10s %s\n", commands[k].name, commands[k].summary);
	fprintf(out,
	        "\n"
	        "Run 'biasline COMMAND --help' for a command's options; see\n"
	        "biasline(1) for the session file format and the keys.\n"
	        "\n"
	        "Options:\n"
	        "  -h, --help     show this help and exit\n"
	        "  -V, --version  show the version and exit\n");
	size_t n;
	const struct exit_status_info *t = exit_status_table(&n);
	enum exit_code codes[16];
	for (size_t k = 0; k < n && k < 16; k++)
		codes[k] = t[k].code;
	exit_status_usage(out, codes, n < 16 ? n : 16);
}

/* Dispatch to a subcommand, or the front end. */
int main(int argc, char **argv)
{
	if (argc >= 2) {
		const char *a = argv[1];
		if (strcmp(a, "-h") == 0 || strcmp(a, "--help") == 0) {
			main_usage(stdout);
			return cli_finish_output(NULL, EXIT_OK_CODE);
		}
		if (strcmp(a, "-V") == 0 || strcmp(a, "--version") == 0) {
			printf("biasline %s\n", BIASLINE_VERSION);
			return cli_finish_output(NULL, EXIT_OK_CODE);
		}
		/* A failed write to standard output is exit 74 in every command. */
		for (size_t k = 0; k < sizeof commands / sizeof commands[0]; k++)
			if (strcmp(a, commands[k].name) == 0)
				return cli_finish_output(commands[k].name,
				                         commands[k].run(argc - 1, argv + 1));
		if (a[0] != '-' && access(a, F_OK) != 0 && strchr(a, '.') == NULL &&
		    strchr(a, '/') == NULL) {
			fprintf(stderr,
			        "biasline: '%s' is neither a command nor a file "
			        "(try 'biasline --help')\n", a);
			return EXIT_USAGE;
		}
	}
	return cmd_tui(argc, argv);
}
