/*
 * cmd_plot.c - 'biasline plot': the load-line plot of a session file, with
 * the first N projections of the session's stepper drawn, or the sweep or
 * Monte Carlo histogram view, as text (the character grid the front end
 * shows) or as an SVG or PNG picture of the same plot description.
 */
#include <errno.h>
#include <getopt.h>
#include <stdbool.h>
#include <limits.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "cli_analysis.h"
#include "cli_plot.h"
#include "cli_progress.h"
#include "commands.h"
#include "core/safety.h"
#include "core/solve.h"
#include "core/stepper.h"
#include "core/thermal.h"
#include "core/thermal_stepper.h"
#include "core/tolerance.h"
#include "render/plot.h"
#include "render/render.h"
#include "render/vector.h"
#include "session/analysis.h"
#include "session/atomic.h"
#include "session/session.h"

/* Largest plot the command draws. */
#define PLOT_MAX_COLS 1000
#define PLOT_MAX_ROWS 500
/* Most projections --steps accepts. */
#define PLOT_MAX_STEPS 100000

/* The views 'plot' draws. */
enum plot_view {
	VIEW_LOAD_LINE,
	VIEW_SWEEP,
	VIEW_HISTOGRAM,
	VIEW_THERMAL,
};

/* The views' names, by enum plot_view. */
static const char *const plot_view_names[] = { "load-line", "sweep",
                                               "histogram", "thermal" };

/* Print the command's usage to OUT. */
static void plot_usage(FILE *out)
{
	fprintf(out,
	        "Usage: biasline plot [OPTIONS] FILE\n"
	        "\n"
	        "Draw the load-line plot of the session FILE: V across, I up, the\n"
	        "load line (#), the device curve (*), every operating point (@),\n"
	        "and the first N projections of the session's solver from its\n"
	        "start point (o), the newest one marked (=).  As text it is the\n"
	        "front end's picture; as SVG or PNG the same plot with a legend,\n"
	        "each point's stability and a caption naming FILE, the source and\n"
	        "the points.\n"
	        "\n"
	        "Options:\n"
	        "  -f, --format=FMT    text (default), svg or png\n"
	        "  -v, --view=VIEW     load-line (default); sweep: the current\n"
	        "                      against RS (RP) from a tenth to ten times it;\n"
	        "                      histogram: the device current over %d Monte\n"
	        "                      Carlo trials of the session's tolerances\n"
	        "                      (seed %d, %d bins, as 'tolerance' runs them);\n"
	        "                      thermal: heat made and removed against the\n"
	        "                      junction temperature of a part that heats\n"
	        "                      itself, with the first N thermal steps\n"
	        "  -o, --output=FILE   write FILE (replaced atomically) instead of\n"
	        "                      standard output (PNG needs it on a terminal)\n"
	        "  -w, --width=N       width: characters for text (default 80, min\n"
	        "                      %d), pixels for svg and png (default %d)\n"
	        "  -H, --height=N      height: lines for text (default 24, min %d),\n"
	        "                      pixels for svg and png (default %d)\n"
	        "  -n, --steps=N       draw the first N projections (default 0)\n"
	        "  -u, --unicode       text: line-drawing and symbol characters\n"
	        "  -p, --zoom-point    frame the first operating point instead of\n"
	        "                      the whole load line\n"
	        CLI_SET_HELP
	        "  -h, --help          show this help and exit\n"
	        "  -V, --version       show the version and exit\n",
	        CLI_MC_TRIALS, CLI_MC_SEED, CLI_MC_BINS,
	        RENDER_MIN_COLS, VECTOR_WIDTH, RENDER_MIN_ROWS, VECTOR_HEIGHT);
	static const enum exit_code codes[] = { EXIT_OK_CODE,
	                                        EXIT_USAGE, EXIT_DATA,
	                                        EXIT_NO_INPUT, EXIT_CANT_CREATE,
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
 * G as text, one line per row, into a new buffer *OUT of *LEN bytes.
 * Returns -1 when out of memory.
 */
static int plot_grid_text(const struct grid *g, char **out, size_t *len)
{
	size_t row = (size_t)g->cols * 4 + 2;
	char *buf = malloc(row * (size_t)g->rows + 1);
	if (buf == NULL)
		return -1;
	size_t n = 0;
	for (int r = 0; r < g->rows; r++) {
		n += grid_row_text(g, r, buf + n, row - 1);
		buf[n++] = '\n';
	}
	buf[n] = '\0';
	*out = buf;
	*len = n;
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

/* The histogram description of the device current of MC. */
int cli_plot_hist(const struct session *s, const struct solve_result *res,
                  const struct tol_mc *mc, bool unicode, struct plot_desc *d)
{
	struct tol_window win[2];
	size_t nwin = session_target_windows(s, win);
	struct render_hist in = {
		.h = &mc->hist[TOL_CURRENT], .kind = QTY_CURRENT,
		.x_title = "device current",
		.nominal = res != NULL && res->n == 1 ? res->pts[0].i : NAN,
		.lo_limit = NAN, .hi_limit = NAN, .unicode = unicode,
	};
	for (size_t k = 0; k < nwin; k++)
		if (win[k].output == TOL_CURRENT) {
			in.lo_limit = win[k].lo;
			in.hi_limit = win[k].hi;
		}
	char title[160];
	snprintf(title, sizeof title, "device current over %zu Monte Carlo trials",
	         mc->trials);
	in.title = title;
	if (render_desc_hist(&in, d) != RENDER_OK)
		return -1;
	if (mc->failed > 0)
		plot_desc_caption(d, "%zu trials without an operating point are not "
		                  "drawn", mc->failed);
	return 0;
}

/* Run the default Monte Carlo trials of S's tolerances into MC. */
int cli_plot_monte_carlo(const struct session *s, const struct problem *pb,
                         struct tol_mc *mc, char *err, size_t errlen)
{
	struct tol_case c;
	if (s->analysis.ntol == 0) {
		snprintf(err, errlen, "no tolerances: section (e.g. tolerances: "
		         "{rs: 5%%, vs: 10%%})");
		return -1;
	}
	if (session_tolerance_case(s, pb, &c, err, errlen) != 0)
		return -1;
	struct tol_window win[2];
	size_t nwin = session_target_windows(s, win);
	struct cli_progress pr;
	cli_progress_begin(&pr, "biasline: Monte Carlo", 0.0);
	int rc = tol_monte_carlo_watched(&c, CLI_MC_TRIALS, CLI_MC_SEED,
	                                 CLI_MC_BINS, win, nwin, mc, &pr.core,
	                                 err, errlen);
	int sig = cli_progress_end(&pr);
	if (sig != 0) {
		fprintf(stderr, "biasline: Monte Carlo %s\n", err);
		cli_progress_reraise(sig);
	}
	return rc;
}

/* The thermal plane of S with the first NSTEPS thermal steps. */
int cli_plot_thermal(const struct session *s, const struct problem *pb,
                     size_t nsteps, bool unicode, size_t ns,
                     struct plot_desc *d, char *err, size_t errlen)
{
	plot_desc_init(d);
	if (!thermal_active(&pb->dev)) {
		snprintf(err, errlen, "the device does not heat itself: give it "
		         "thermal_resistance (K/W) and ambient_temperature");
		return -1;
	}
	struct thermal_result *tr = malloc(sizeof *tr);
	struct thermal_stepper *ts = thermal_stepper_create();
	int rc = -1;
	if (tr == NULL || ts == NULL) {
		snprintf(err, errlen, "out of memory");
	} else if (thermal_solve(pb, &s->solver, tr) == THERMAL_BAD_INPUT) {
		snprintf(err, errlen, "the thermal loop cannot be solved as stated");
	} else {
		struct render_thermal in = { pb, &s->solver, tr->pts, tr->n, NULL, 0,
		                             unicode, true };
		if (thermal_stepper_init(ts, pb, &s->solver, NAN) == 0) {
			for (size_t k = 0; k < nsteps; k++)
				if (thermal_stepper_step(ts) != STEP_CONTINUE)
					break;
			in.rows = thermal_stepper_trace(ts, &in.nrows);
		}
		enum render_status st = render_desc_thermal(&in, ns, d);
		if (st == RENDER_OK)
			rc = 0;
		else
			snprintf(err, errlen, "%s", st == RENDER_NO_MEMORY
			         ? "out of memory" : "no thermal plane");
	}
	thermal_stepper_destroy(ts);
	free(tr);
	return rc;
}

/* What the command line asked for. */
struct plot_args {
	long cols, rows, nsteps;
	bool have_cols, have_rows;
	bool zoom_point, unicode;
	enum plot_view view;
	bool vector;
	enum vector_format format;
	const char *output;
	struct cli_sets sets;
	const char *file;
};

/* Parse the command line into A; returns -1 to exit with *CODE. */
static int plot_parse_args(int argc, char **argv, struct plot_args *a,
                           int *code)
{
	static const struct option longopts[] = {
		{ "format", required_argument, NULL, 'f' },
		{ "view", required_argument, NULL, 'v' },
		{ "output", required_argument, NULL, 'o' },
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
	memset(a, 0, sizeof *a);
	a->view = VIEW_LOAD_LINE;
	*code = EXIT_USAGE;
	optind = 1;
	opterr = 0;
	int ch;
	while ((ch = getopt_long(argc, argv, ":f:v:o:w:H:n:uphV", longopts,
	                         NULL)) != -1) {
		switch (ch) {
		case 'f':
			if (strcmp(optarg, "text") == 0)
				a->vector = false;
			else if (vector_format_from_name(optarg, &a->format) == 0)
				a->vector = true;
			else {
				fprintf(stderr, "biasline: plot: --format: '%s' is not one of "
				        "text, svg, png\n", optarg);
				return -1;
			}
			break;
		case 'v': {
			size_t k, nv = sizeof plot_view_names / sizeof plot_view_names[0];
			for (k = 0; k < nv; k++)
				if (strcmp(optarg, plot_view_names[k]) == 0)
					break;
			if (k == nv) {
				fprintf(stderr, "biasline: plot: --view: '%s' is not one of "
				        "load-line, sweep, histogram, thermal\n", optarg);
				return -1;
			}
			a->view = (enum plot_view)k;
			break;
		}
		case 'o':
			a->output = optarg;
			break;
		case 'w':
			if (plot_parse_int(optarg, 1, VECTOR_MAX, &a->cols) != 0) {
				fprintf(stderr, "biasline: plot: --width wants a whole number, "
				        "not '%s'\n", optarg);
				return -1;
			}
			a->have_cols = true;
			break;
		case 'H':
			if (plot_parse_int(optarg, 1, VECTOR_MAX, &a->rows) != 0) {
				fprintf(stderr, "biasline: plot: --height wants a whole number, "
				        "not '%s'\n", optarg);
				return -1;
			}
			a->have_rows = true;
			break;
		case 'n':
			if (plot_parse_int(optarg, 0, PLOT_MAX_STEPS, &a->nsteps) != 0) {
				fprintf(stderr, "biasline: plot: --steps wants a whole number "
				        "from 0 to %d, not '%s'\n", PLOT_MAX_STEPS, optarg);
				return -1;
			}
			break;
		case 'u':
			a->unicode = true;
			break;
		case 'p':
			a->zoom_point = true;
			break;
		case CLI_OPT_SET:
			if (cli_add_set("plot", &a->sets, optarg) != 0)
				return -1;
			break;
		default:
			*code = cli_shared_option("plot", ch, argv, plot_usage);
			return -1;
		}
	}
	if (argc - optind != 1) {
		fprintf(stderr, "biasline: plot: give exactly one session FILE "
		        "(try 'biasline plot --help')\n");
		return -1;
	}
	a->file = argv[optind];
	/* The size: characters for text, pixels for a picture. */
	long wlo = a->vector ? VECTOR_MIN : RENDER_MIN_COLS;
	long whi = a->vector ? VECTOR_MAX : PLOT_MAX_COLS;
	long hlo = a->vector ? VECTOR_MIN : RENDER_MIN_ROWS;
	long hhi = a->vector ? VECTOR_MAX : PLOT_MAX_ROWS;
	if (!a->have_cols)
		a->cols = a->vector ? VECTOR_WIDTH : 80;
	if (!a->have_rows)
		a->rows = a->vector ? VECTOR_HEIGHT : 24;
	if (a->cols < wlo || a->cols > whi) {
		fprintf(stderr, "biasline: plot: --width wants a whole number from %ld "
		        "to %ld for %s, not %ld\n", wlo, whi,
		        a->vector ? "a picture (pixels)" : "text", a->cols);
		return -1;
	}
	if (a->rows < hlo || a->rows > hhi) {
		fprintf(stderr, "biasline: plot: --height wants a whole number from %ld "
		        "to %ld for %s, not %ld\n", hlo, hhi,
		        a->vector ? "a picture (pixels)" : "text", a->rows);
		return -1;
	}
	if (a->vector && a->format == VECTOR_PNG && a->output == NULL &&
	    isatty(STDOUT_FILENO)) {
		fprintf(stderr, "biasline: plot: a PNG is binary: give --output FILE "
		        "or redirect standard output\n");
		return -1;
	}
	return 0;
}

/* Write LEN bytes of BUF to A's output file (atomically) or stdout. */
static int plot_write(const struct plot_args *a, const char *buf, size_t len)
{
	if (a->output != NULL) {
		char err[512];
		if (atomic_write_file(a->output, buf, len, err, sizeof err) != 0) {
			fprintf(stderr, "biasline: plot: %s\n", err);
			return EXIT_CANT_CREATE;
		}
		return EXIT_OK_CODE;
	}
	if (fwrite(buf, 1, len, stdout) != len || fflush(stdout) != 0) {
		fprintf(stderr, "biasline: plot: writing the plot failed\n");
		return EXIT_IO;
	}
	return EXIT_OK_CODE;
}

/* Draw D as A asks into a new buffer; returns 0 or an exit status. */
static int plot_draw(const struct plot_args *a, const struct plot_desc *d,
                     char **buf, size_t *len)
{
	if (a->vector) {
		if (render_vector(d, a->format, (int)a->cols, (int)a->rows, buf, len,
		                  NULL) != 0) {
			fprintf(stderr, "biasline: plot: %s: the picture could not be "
			        "drawn\n", a->file);
			return EXIT_SOFTWARE;
		}
		return 0;
	}
	struct grid g;
	if (grid_init(&g, (int)a->rows, (int)a->cols) != 0) {
		fprintf(stderr, "biasline: plot: out of memory\n");
		return EXIT_SOFTWARE;
	}
	int rc = 0;
	if (render_desc_grid(d, &g, NULL) != RENDER_OK) {
		fprintf(stderr, "biasline: plot: %s: nothing to plot\n", a->file);
		rc = EXIT_DATA;
	} else if (plot_grid_text(&g, buf, len) != 0) {
		fprintf(stderr, "biasline: plot: out of memory\n");
		rc = EXIT_SOFTWARE;
	}
	grid_fini(&g);
	return rc;
}

/* Entry point of 'biasline plot'. */
int cmd_plot(int argc, char **argv)
{
	struct plot_args a;
	int code;
	if (plot_parse_args(argc, argv, &a, &code) != 0)
		return code;
	struct session s;
	struct problem pb;
	code = cli_load_with("plot", a.file, &a.sets, &s, &pb);
	if (code != 0)
		return code;

	struct render_view view;
	render_view_init(&view);
	view.unicode = a.unicode;
	plot_view_from_session(&view, &s);
	if (a.zoom_point) {
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

	struct plot_desc d;
	struct stepper *st = NULL;
	enum render_status rs = RENDER_OK;
	char err[600];
	code = EXIT_OK_CODE;
	if (a.view == VIEW_LOAD_LINE) {
		st = plot_run_path(&pb, &s.solver, a.nsteps);
		struct render_input in = { &pb, res.pts, res.n, NULL, 0, 0, false };
		if (st != NULL)
			in.rows = stepper_trace(st, &in.nrows);
		struct render_notes notes = { a.file, &s.reactive };
		rs = render_desc_line(&in, &view, &notes, &d);
	} else if (a.view == VIEW_SWEEP) {
		struct sweep_view *sv = malloc(sizeof *sv);
		if (sv == NULL) {
			plot_desc_init(&d);
			rs = RENDER_NO_MEMORY;
		} else {
			sweep_view_run(&pb, &s.solver, &s.reactive,
			               s.source.form != SOURCE_THEVENIN, sv);
			if (!sv->ok) {
				fprintf(stderr, "biasline: plot: %s: %s\n", a.file, sv->msg);
				code = EXIT_DATA;
			}
			rs = render_desc_sweep(sv, a.unicode || a.vector, &d);
			if (rs == RENDER_OK)
				plot_desc_caption_first(&d, a.file);
			free(sv);
		}
	} else if (a.view == VIEW_THERMAL) {
		plot_desc_init(&d);
		if (cli_plot_thermal(&s, &pb, (size_t)a.nsteps,
		                     a.unicode || a.vector,
		                     a.vector ? 400 : (size_t)a.cols + 1, &d, err,
		                     sizeof err) != 0) {
			fprintf(stderr, "biasline: plot: %s: %s\n", a.file, err);
			code = EXIT_DATA;
		} else {
			plot_desc_caption_first(&d, a.file);
		}
	} else {
		struct tol_mc *mc = malloc(sizeof *mc);
		plot_desc_init(&d);
		if (mc == NULL) {
			rs = RENDER_NO_MEMORY;
		} else if (cli_plot_monte_carlo(&s, &pb, mc, err, sizeof err) != 0) {
			fprintf(stderr, "biasline: plot: %s: %s\n", a.file, err);
			code = EXIT_DATA;
		} else {
			plot_desc_fini(&d);
			if (cli_plot_hist(&s, &res, mc, a.unicode || a.vector, &d) != 0)
				rs = RENDER_BAD_INPUT;
			else
				plot_desc_caption_first(&d, a.file);
		}
		free(mc);
	}
	if (code == EXIT_OK_CODE && rs == RENDER_NO_MEMORY) {
		fprintf(stderr, "biasline: plot: out of memory\n");
		code = EXIT_SOFTWARE;
	} else if (code == EXIT_OK_CODE && rs != RENDER_OK) {
		fprintf(stderr, "biasline: plot: %s: nothing to plot\n", a.file);
		code = EXIT_DATA;
	}
	char *buf = NULL;
	size_t len = 0;
	if (code == EXIT_OK_CODE)
		code = plot_draw(&a, &d, &buf, &len);
	if (code == EXIT_OK_CODE)
		code = plot_write(&a, buf, len);
	free(buf);
	plot_desc_fini(&d);
	stepper_destroy(st);
	session_fini(&s);
	return code;
}
