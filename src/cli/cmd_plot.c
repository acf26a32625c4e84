/*
 * cmd_plot.c - 'biasline plot': print the load-line plot of a session file
 * as text, with the first N projections of the session's stepper drawn, for
 * reports and tests.
 */
#include <errno.h>
#include <getopt.h>
#include <stdbool.h>
#include <limits.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "biasline_version.h"
#include "cli_analysis.h"
#include "commands.h"
#include "core/safety.h"
#include "core/solve.h"
#include "core/stepper.h"
#include "render/render.h"
#include "session/session.h"

/* Largest plot the command draws. */
#define PLOT_MAX_COLS 1000
#define PLOT_MAX_ROWS 500
/* Most projections --steps accepts. */
#define PLOT_MAX_STEPS 100000

/* Print the command's usage to OUT. */
static void plot_usage(FILE *out)
{
	fprintf(out,
	        "Usage: biasline plot [OPTIONS] FILE\n"
	        "\n"
	        "Print the load-line plot of the session FILE as text: V across,\n"
	        "I up, the load line (#), the device curve (*), every operating\n"
	        "point (@), and the first N projections of the session's solver\n"
	        "from its start point (o), the newest one marked (=).\n"
	        "\n"
	        "Options:\n"
	        "  -w, --width=COLS    plot width in characters (default 80, min %d)\n"
	        "  -H, --height=ROWS   plot height in lines (default 24, min %d)\n"
	        "  -n, --steps=N       draw the first N projections (default 0)\n"
	        "  -u, --unicode       use line-drawing and symbol characters\n"
	        "  -p, --zoom-point    frame the first operating point instead of\n"
	        "                      the whole load line\n"
	        CLI_SET_HELP
	        "  -h, --help          show this help and exit\n"
	        "  -V, --version       show the version and exit\n",
	        RENDER_MIN_COLS, RENDER_MIN_ROWS);
	static const enum exit_code codes[] = { EXIT_OK_CODE, EXIT_USAGE,
	                                        EXIT_DATA, EXIT_NO_INPUT,
	                                        EXIT_IO };
	exit_status_usage(out, codes, sizeof codes / sizeof codes[0]);
}

/* Parse a whole decimal integer in [LO, HI] from TEXT into *OUT. */
static int plot_parse_int(const char *text, long lo, long hi, long *out)
{
	char *end;
	errno = 0;
	long v = strtol(text, &end, 10);
	if (end == text || *end != '\0' || errno == ERANGE || v < lo || v > hi)
		return -1;
	*out = v;
	return 0;
}

/* Run the path's stepper for up to NSTEPS projections; NULL on failure. */
static struct stepper *plot_run_path(const struct problem *pb,
                                     const struct solve_options *so,
                                     long nsteps)
{
	struct solve_options o = *so;
	/* "auto" is the whole-range solve; its path is the projection one. */
	if (o.method == METHOD_AUTO)
		o.method = METHOD_PROJECTION;
	struct stepper *st = stepper_create();
	if (st == NULL)
		return NULL;
	if (stepper_init(st, pb, &o) != 0) {
		fprintf(stderr, "biasline: plot: the path cannot start: %s\n",
		        step_status_name(stepper_status(st)));
		stepper_destroy(st);
		return NULL;
	}
	for (long k = 0; k < nsteps; k++)
		if (stepper_step(st) != STEP_CONTINUE)
			break;
	return st;
}

/* Print the core's safety caution for PB to stderr (stdout keeps the plot). */
static void plot_cautions(const struct problem *pb, const struct solve_result *res)
{
	unsigned flags = 0;
	for (size_t k = 0; k < res->n; k++)
		flags |= safety_check(pb, res->pts[k].v, res->pts[k].i);
	if (res->n == 0)
		flags |= safety_check(pb, 0.0, 0.0);
	if (flags != 0) {
		char msg[320];
		safety_message(flags, msg, sizeof msg);
		fprintf(stderr, "biasline: plot: %s\n", msg);
	}
}

/*
 * Print G to stdout, one line per row (a failed write is reported by
 * cli_finish_output).  Returns -1 when out of memory.
 */
static int plot_print(const struct grid *g)
{
	size_t n = (size_t)g->cols * 4 + 1;
	char *buf = malloc(n);
	if (buf == NULL)
		return -1;
	for (int r = 0; r < g->rows; r++) {
		grid_row_text(g, r, buf, n);
		puts(buf);
	}
	free(buf);
	return 0;
}

/* Take the session's stored view: fixed ranges and zoom. */
static void plot_view_from_session(struct render_view *v, const struct session *s)
{
	const struct session_view *sv = &s->view;
	if (!sv->autoscale) {
		v->frame = FRAME_FIXED;
		v->fixed = (struct render_window){ sv->v_min, sv->v_max,
		                                   sv->i_min, sv->i_max };
	}
	if (isfinite(sv->zoom) && sv->zoom > 0.0)
		v->zoom = sv->zoom;
}

/* Entry point of 'biasline plot'. */
int cmd_plot(int argc, char **argv)
{
	static const struct option longopts[] = {
		{ "width", required_argument, NULL, 'w' },
		{ "height", required_argument, NULL, 'H' },
		{ "steps", required_argument, NULL, 'n' },
		{ "unicode", no_argument, NULL, 'u' },
		{ "zoom-point", no_argument, NULL, 'p' },
		{ "set", required_argument, NULL, CLI_OPT_SET },
		{ "help", no_argument, NULL, 'h' },
		{ "version", no_argument, NULL, 'V' },
		{ NULL, 0, NULL, 0 },
	};
	long cols = 80, rows = 24, nsteps = 0;
	bool zoom_point = false;
	struct cli_sets sets = { 0 };
	struct render_view view;
	render_view_init(&view);
	optind = 1;
	opterr = 0;
	int ch;
	while ((ch = getopt_long(argc, argv, ":w:H:n:uphV", longopts, NULL)) != -1) {
		switch (ch) {
		case 'w':
			if (plot_parse_int(optarg, RENDER_MIN_COLS, PLOT_MAX_COLS, &cols) != 0) {
				fprintf(stderr, "biasline: plot: --width wants a whole number "
				        "from %d to %d, not '%s'\n", RENDER_MIN_COLS,
				        PLOT_MAX_COLS, optarg);
				return EXIT_USAGE;
			}
			break;
		case 'H':
			if (plot_parse_int(optarg, RENDER_MIN_ROWS, PLOT_MAX_ROWS, &rows) != 0) {
				fprintf(stderr, "biasline: plot: --height wants a whole number "
				        "from %d to %d, not '%s'\n", RENDER_MIN_ROWS,
				        PLOT_MAX_ROWS, optarg);
				return EXIT_USAGE;
			}
			break;
		case 'n':
			if (plot_parse_int(optarg, 0, PLOT_MAX_STEPS, &nsteps) != 0) {
				fprintf(stderr, "biasline: plot: --steps wants a whole number "
				        "from 0 to %d, not '%s'\n", PLOT_MAX_STEPS, optarg);
				return EXIT_USAGE;
			}
			break;
		case 'u':
			view.unicode = true;
			break;
		case 'p':
			zoom_point = true;
			break;
		case CLI_OPT_SET:
			if (cli_add_set("plot", &sets, optarg) != 0)
				return EXIT_USAGE;
			break;
		case 'h':
			plot_usage(stdout);
			return EXIT_OK_CODE;
		case 'V':
			printf("biasline %s\n", BIASLINE_VERSION);
			return EXIT_OK_CODE;
		case ':':
			fprintf(stderr, "biasline: plot: option '%s' needs a value\n",
			        argv[optind - 1]);
			return EXIT_USAGE;
		default:
			fprintf(stderr, "biasline: plot: unknown option '%s' "
			        "(try 'biasline plot --help')\n", argv[optind - 1]);
			return EXIT_USAGE;
		}
	}
	if (argc - optind != 1) {
		fprintf(stderr, "biasline: plot: give exactly one session FILE "
		        "(try 'biasline plot --help')\n");
		return EXIT_USAGE;
	}

	struct session s;
	struct problem pb;
	int code = cli_load_with("plot", argv[optind], &sets, &s, &pb);
	if (code != 0)
		return code;

	plot_view_from_session(&view, &s);
	if (zoom_point) {
		view.frame = FRAME_POINT;
		view.zoom = 1.0;
	}
	struct solve_options so = s.solver;
	so.method = METHOD_AUTO;
	struct solve_result res;
	if (solve_problem(&pb, &so, &res) != SOLVE_OK) {
		fprintf(stderr, "biasline: plot: no operating point marked: %s\n",
		        res.message);
		res.n = 0;
	}
	plot_cautions(&pb, &res);
	struct stepper *st = plot_run_path(&pb, &s.solver, nsteps);
	struct render_input in = { &pb, res.pts, res.n, NULL, 0, 0, false };
	if (st != NULL)
		in.rows = stepper_trace(st, &in.nrows);

	int rc = EXIT_OK_CODE;
	struct grid g;
	if (grid_init(&g, (int)rows, (int)cols) != 0) {
		fprintf(stderr, "biasline: plot: out of memory\n");
		rc = EXIT_SOFTWARE;
	} else {
		enum render_status rs = render_plot(&in, &view, &g, NULL);
		if (rs != RENDER_OK) {
			fprintf(stderr, "biasline: plot: %s: nothing to plot\n", argv[optind]);
			rc = EXIT_DATA;
		} else if (plot_print(&g) != 0) {
			fprintf(stderr, "biasline: plot: out of memory\n");
			rc = EXIT_SOFTWARE;
		}
		grid_fini(&g);
	}
	stepper_destroy(st);
	session_fini(&s);
	return rc;
}
