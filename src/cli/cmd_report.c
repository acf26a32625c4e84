/*
 * cmd_report.c - 'biasline report SESSION': one file for a design review
 * or a lab notebook.  HTML (the default) is self-contained: inline CSS and
 * inline SVG, nothing fetched.  Markdown writes the same sections with the
 * figures beside it as SVG files.
 *
 * Nothing is computed here that another part of the program computes:
 * the points, their stability and diagnosis come from the core's own
 * calls, the figures from the plot descriptions 'plot' draws, and the
 * detailed sections are the text the commands themselves print ('solve',
 * 'design', 'tolerance'), run in this process with their standard output
 * and error captured, so a report says exactly what the commands say,
 * cautions included.
 */
#include <errno.h>
#include <getopt.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "biasline_version.h"
#include "cli_analysis.h"
#include "cli_plot.h"
#include "commands.h"
#include "core/diagnose.h"
#include "core/models/models.h"
#include "core/safety.h"
#include "core/solve.h"
#include "core/stability.h"
#include "core/stepper.h"
#include "core/thermal.h"
#include "render/plot.h"
#include "render/vector.h"
#include "session/atomic.h"
#include "session/session.h"

/* Projections of the session's solver the report's plot draws. */
#define REPORT_STEPS 6

/* What the command line asked for. */
struct report_args {
	bool markdown;
	const char *output;
	struct cli_sets sets;
	const char *file;
};

/* A growing text buffer. */
struct rbuf {
	char *p;
	size_t len, cap;
	bool failed;
};

/* Append LEN bytes of S to B. */
static void rbuf_put(struct rbuf *b, const char *s, size_t len)
{
	if (b->failed)
		return;
	if (b->len + len + 1 > b->cap) {
		size_t cap = b->cap ? b->cap : 16384;
		while (cap < b->len + len + 1)
			cap *= 2;
		char *p = realloc(b->p, cap);
		if (p == NULL) {
			b->failed = true;
			return;
		}
		b->p = p;
		b->cap = cap;
	}
	memcpy(b->p + b->len, s, len);
	b->len += len;
	b->p[b->len] = '\0';
}

/* Append the string literal S to B. */
#define rbuf_lit(b, s) rbuf_put((b), (s), sizeof(s) - 1)

/* Append formatted text to B. */
static void rbuf_printf(struct rbuf *b, const char *fmt, ...)
	__attribute__((format(printf, 2, 3)));
static void rbuf_printf(struct rbuf *b, const char *fmt, ...)
{
	char small[1024];
	va_list ap;
	va_start(ap, fmt);
	int n = vsnprintf(small, sizeof small, fmt, ap);
	va_end(ap);
	if (n < 0)
		return;
	if ((size_t)n < sizeof small) {
		rbuf_put(b, small, (size_t)n);
		return;
	}
	char *big = malloc((size_t)n + 1);
	if (big == NULL) {
		b->failed = true;
		return;
	}
	va_start(ap, fmt);
	vsnprintf(big, (size_t)n + 1, fmt, ap);
	va_end(ap);
	rbuf_put(b, big, (size_t)n);
	free(big);
}

/* Append TEXT to B with HTML's special characters escaped. */
static void rbuf_html(struct rbuf *b, const char *text)
{
	for (const char *s = text; *s != '\0'; s++) {
		switch (*s) {
		case '<': rbuf_lit(b, "&lt;"); break;
		case '>': rbuf_lit(b, "&gt;"); break;
		case '&': rbuf_lit(b, "&amp;"); break;
		case '"': rbuf_lit(b, "&quot;"); break;
		default: rbuf_put(b, s, 1); break;
		}
	}
}

/* Append TEXT to B for a Markdown table cell ('|' escaped). */
static void rbuf_md_cell(struct rbuf *b, const char *text)
{
	for (const char *s = text; *s != '\0'; s++) {
		if (*s == '|')
			rbuf_lit(b, "\\|");
		else if (*s != '\n')
			rbuf_put(b, s, 1);
	}
}

/* Print the usage of 'report' to OUT. */
static void report_usage(FILE *out)
{
	fprintf(out,
	        "Usage: biasline report [OPTIONS] FILE\n"
	        "\n"
	        "Write one file for a design review: the circuit, every operating\n"
	        "point with its stability and the projections' diagnosis, the\n"
	        "load-line plot, what 'solve' reports (power and ratings, the\n"
	        "cautions), the design candidates when the session has a target,\n"
	        "the worst case and Monte Carlo run with its histogram when it has\n"
	        "tolerances, the session text itself and the program's version.\n"
	        "HTML is one self-contained file (inline CSS and SVG, nothing\n"
	        "fetched); Markdown writes the figures beside it as SVG files\n"
	        "(OUT without .md, then -plot.svg, -histogram.svg and, for a\n"
	        "part that heats itself, -thermal.svg).  A part that heats\n"
	        "itself also gets its thermal plane.\n"
	        "\n"
	        "Options:\n"
	        "  -f, --format=FMT    html (default) or markdown\n"
	        "  -o, --output=OUT    write OUT (replaced atomically) instead of\n"
	        "                      standard output; markdown needs it\n"
	        CLI_SET_HELP
	        "  -h, --help          show this help and exit\n"
	        "  -V, --version       show the version and exit\n");
	static const enum exit_code codes[] = { EXIT_OK_CODE, EXIT_USAGE,
	                                        EXIT_DATA, EXIT_NO_INPUT,
	                                        EXIT_CANT_CREATE, EXIT_IO };
	exit_status_usage(out, codes, sizeof codes / sizeof codes[0]);
}

/* Parse the command line into A; returns -1 to exit with *CODE. */
static int report_parse_args(int argc, char **argv, struct report_args *a,
                             int *code)
{
	static const struct option opts[] = {
		{ "format", required_argument, NULL, 'f' },
		{ "output", required_argument, NULL, 'o' },
		{ "set", required_argument, NULL, CLI_OPT_SET },
		{ "help", no_argument, NULL, 'h' },
		{ "version", no_argument, NULL, 'V' },
		{ NULL, 0, NULL, 0 },
	};
	memset(a, 0, sizeof *a);
	*code = EXIT_USAGE;
	optind = 1;
	opterr = 0;
	int c;
	while ((c = getopt_long(argc, argv, ":f:o:hV", opts, NULL)) != -1) {
		switch (c) {
		case 'f':
			if (strcmp(optarg, "html") == 0)
				a->markdown = false;
			else if (strcmp(optarg, "markdown") == 0)
				a->markdown = true;
			else {
				fprintf(stderr, "biasline report: --format: '%s' is not html "
				        "or markdown\n", optarg);
				return -1;
			}
			break;
		case 'o':
			a->output = optarg;
			break;
		case CLI_OPT_SET:
			if (cli_add_set("report", &a->sets, optarg) != 0)
				return -1;
			break;
		default:
			*code = cli_shared_option("report", c, argv, report_usage);
			return -1;
		}
	}
	if (optind != argc - 1) {
		fprintf(stderr, "biasline report: expected one FILE (try --help)\n");
		return -1;
	}
	a->file = argv[optind];
	if (a->markdown && a->output == NULL) {
		fprintf(stderr, "biasline report: --format markdown writes the figures "
		        "beside the report: give --output OUT.md\n");
		return -1;
	}
	return 0;
}

/* Read all of F from its start into a new string; NULL on failure. */
static char *report_slurp(FILE *f)
{
	struct rbuf b = { 0 };
	char chunk[8192];
	size_t n;
	rewind(f);
	while ((n = fread(chunk, 1, sizeof chunk, f)) > 0)
		rbuf_put(&b, chunk, n);
	rbuf_put(&b, "", 0);
	if (b.failed) {
		free(b.p);
		return NULL;
	}
	return b.p;
}

/* A command's captured output: what it printed and its exit status. */
struct report_run {
	char *out, *err;
	int status;
};

/*
 * Run the command CMD (a cmd_* entry) on A's file with ARGS (the
 * command's name first) and A's --set options, its standard output and
 * error captured into R.  Returns 0, or -1 when the capture failed.
 */
static int report_capture(int (*cmd)(int, char **), const char *const *args,
                          size_t nargs, const struct report_args *a,
                          struct report_run *r)
{
	memset(r, 0, sizeof *r);
	char *argv[8 + 2 * CLI_MAX_SETS];
	size_t n = 0;
	for (size_t k = 0; k < nargs; k++)
		argv[n++] = (char *)args[k];
	for (size_t k = 0; k < a->sets.n; k++) {
		argv[n++] = (char *)"--set";
		argv[n++] = (char *)a->sets.text[k];
	}
	argv[n++] = (char *)a->file;
	argv[n] = NULL;
	FILE *fo = tmpfile(), *fe = tmpfile();
	int so = -1, se = -1;
	if (fo == NULL || fe == NULL)
		goto fail;
	fflush(stdout);
	fflush(stderr);
	so = dup(STDOUT_FILENO);
	se = dup(STDERR_FILENO);
	if (so < 0 || se < 0 || dup2(fileno(fo), STDOUT_FILENO) < 0 ||
	    dup2(fileno(fe), STDERR_FILENO) < 0)
		goto fail;
	r->status = cmd((int)n, argv);
	fflush(stdout);
	fflush(stderr);
	dup2(so, STDOUT_FILENO);
	dup2(se, STDERR_FILENO);
	close(so);
	close(se);
	so = se = -1;
	r->out = report_slurp(fo);
	r->err = report_slurp(fe);
	fclose(fo);
	fclose(fe);
	if (r->out == NULL || r->err == NULL) {
		free(r->out);
		free(r->err);
		return -1;
	}
	return 0;
fail:
	if (so >= 0) {
		dup2(so, STDOUT_FILENO);
		close(so);
	}
	if (se >= 0) {
		dup2(se, STDERR_FILENO);
		close(se);
	}
	if (fo != NULL)
		fclose(fo);
	if (fe != NULL)
		fclose(fe);
	return -1;
}

/* Everything the report shows, worked out once. */
struct report {
	const struct report_args *a;
	bool loaded;                  /* S and PB hold the session */
	struct session s;
	struct problem pb;
	char *text;                   /* the session file's bytes */
	struct solve_result res;
	struct stability_result sr[SOLVE_MAX_POINTS];
	struct diagnosis diag;        /* the projections at the first point */
	unsigned cautions;            /* safety flags at the points */
	char *plot_svg, *hist_svg;    /* the figures (NULL: none) */
	size_t plot_len, hist_len;
	char *thermal_svg;            /* the thermal plane (NULL: none) */
	size_t thermal_len;
	char hist_why[600];           /* why there is no histogram */
	struct report_run solve, design, tolerance;
	bool have_design, have_tolerance;
};

/* The path of the session's solver, drawn in the plot. */
static struct stepper *report_path(const struct problem *pb,
                                   const struct solve_options *so)
{
	struct solve_options o = *so;
	if (o.method == METHOD_AUTO)
		o.method = METHOD_PROJECTION;
	struct stepper *st = stepper_create();
	if (st == NULL)
		return NULL;
	if (stepper_init(st, pb, &o) != 0) {
		stepper_destroy(st);
		return NULL;
	}
	for (int k = 0; k < REPORT_STEPS; k++)
		if (stepper_step(st) != STEP_CONTINUE)
			break;
	return st;
}

/* Draw the load-line plot and, with tolerances, the histogram. */
static int report_figures(struct report *r)
{
	struct render_view view;
	render_view_init(&view);
	view.unicode = true;
	struct stepper *st = report_path(&r->pb, &r->s.solver);
	struct render_input in = { &r->pb, r->res.pts, r->res.n, NULL, 0, 0, true };
	if (st != NULL)
		in.rows = stepper_trace(st, &in.nrows);
	struct render_notes notes = { r->a->file, &r->s.reactive };
	struct plot_desc d;
	int rc = 0;
	if (render_desc_line(&in, &view, &notes, &d) == RENDER_OK &&
	    render_vector(&d, VECTOR_SVG, VECTOR_WIDTH, VECTOR_HEIGHT, &r->plot_svg,
	                  &r->plot_len, NULL) != 0)
		rc = -1;
	plot_desc_fini(&d);
	stepper_destroy(st);
	char err[400];
	if (thermal_active(&r->pb.dev) &&
	    cli_plot_thermal(&r->s, &r->pb, REPORT_STEPS, true, 400, &d, err,
	                     sizeof err) == 0) {
		plot_desc_caption_first(&d, r->a->file);
		if (render_vector(&d, VECTOR_SVG, VECTOR_WIDTH, VECTOR_HEIGHT,
		                  &r->thermal_svg, &r->thermal_len, NULL) != 0)
			rc = -1;
	}
	plot_desc_fini(&d);
	if (r->s.analysis.ntol == 0) {
		snprintf(r->hist_why, sizeof r->hist_why, "the session has no "
		         "tolerances");
		return rc;
	}
	struct tol_mc *mc = malloc(sizeof *mc);
	if (mc == NULL)
		return -1;
	if (cli_plot_monte_carlo(&r->s, &r->pb, mc, r->hist_why,
	                         sizeof r->hist_why) == 0 &&
	    cli_plot_hist(&r->s, &r->res, mc, true, &d) == 0) {
		if (render_vector(&d, VECTOR_SVG, VECTOR_WIDTH, 440, &r->hist_svg,
		                  &r->hist_len, NULL) != 0)
			rc = -1;
		plot_desc_fini(&d);
	}
	free(mc);
	return rc;
}

/* Work out everything; returns 0 or an exit status. */
static int report_gather(struct report *r)
{
	const struct report_args *a = r->a;
	int code = cli_load_with("report", a->file, &a->sets, &r->s, &r->pb);
	if (code != 0)
		return code;
	r->loaded = true;
	struct session_error err;
	size_t len;
	if (session_read_file(a->file, &r->text, &len, &err) != SESSION_OK)
		r->text = NULL;
	struct solve_options o = r->s.solver;
	o.method = METHOD_AUTO;
	if (solve_problem(&r->pb, &o, &r->res) != SOLVE_OK)
		r->res.n = 0;
	for (size_t k = 0; k < r->res.n; k++) {
		const struct op_point *p = &r->res.pts[k];
		stability_classify(&r->pb, p->rd, &r->s.reactive, &r->sr[k]);
		r->cautions |= safety_check(&r->pb, p->v, p->i);
	}
	if (r->res.n == 0)
		r->cautions |= safety_check(&r->pb, 0.0, 0.0);
	if (r->res.n > 0)
		diagnose_at(&r->pb, r->s.solver.order, r->res.pts[0].v, r->s.solver.tol,
		            1.0, &r->diag);
	if (report_figures(r) != 0) {
		fprintf(stderr, "biasline report: %s: a figure could not be drawn\n",
		        a->file);
		return EXIT_SOFTWARE;
	}
	static const char *const solve[] = { "solve" };
	static const char *const design[] = { "design" };
	static const char *const design_wc[] = { "design", "--worst-case" };
	static const char *const tolerance[] = { "tolerance" };
	if (report_capture(cmd_solve, solve, 1, a, &r->solve) != 0)
		return EXIT_SOFTWARE;
	struct design_request rq;
	r->have_design = session_design_request(&r->s, &rq) == 0;
	r->have_tolerance = r->s.analysis.ntol > 0;
	if (r->have_design &&
	    report_capture(cmd_design, r->have_tolerance ? design_wc : design,
	                   r->have_tolerance ? 2 : 1, a, &r->design) != 0)
		return EXIT_SOFTWARE;
	if (r->have_tolerance &&
	    report_capture(cmd_tolerance, tolerance, 1, a, &r->tolerance) != 0)
		return EXIT_SOFTWARE;
	return 0;
}

/* Free what R holds. */
static void report_fini(struct report *r)
{
	free(r->text);
	free(r->plot_svg);
	free(r->hist_svg);
	free(r->thermal_svg);
	struct report_run *runs[] = { &r->solve, &r->design, &r->tolerance };
	for (size_t k = 0; k < 3; k++) {
		free(runs[k]->out);
		free(runs[k]->err);
	}
	session_fini(&r->s);
}

/* The source in words, as 'solve' writes it. */
static void report_source_words(const struct report *r, char *buf, size_t n)
{
	char a[48], b[48];
	if (isinf(r->pb.src.r)) {
		cli_fmt(a, sizeof a, r->pb.src.isc, QTY_CURRENT, 6);
		snprintf(buf, n, "ideal current source %s", a);
	} else {
		cli_fmt(a, sizeof a, r->pb.src.voc, QTY_VOLTAGE, 6);
		cli_fmt(b, sizeof b, r->pb.src.r, QTY_RESISTANCE, 6);
		snprintf(buf, n, "%s behind %s%s", a, b,
		         r->s.source.form == SOURCE_NORTON ? " (from the Norton form)"
		                                           : "");
	}
}

/* The device's model and parameters in words, as 'solve' writes them. */
static void report_device_words(const struct report *r, struct rbuf *b)
{
	const struct device *d = &r->pb.dev;
	rbuf_printf(b, "%s:", d->type->name);
	for (size_t k = 0; k < d->type->nparams; k++) {
		char a[48];
		cli_fmt(a, sizeof a, d->p[k], d->type->params[k].kind, 6);
		rbuf_printf(b, "%s %s = %s", k ? "," : "", d->type->params[k].label, a);
	}
	if (d->curve != NULL)
		rbuf_printf(b, " %zu measured points", d->curve->n);
}

/* One operating point's cells: voltage, current, power, r_d. */
static void report_point_cells(const struct op_point *p, char v[32], char i[32],
                               char w[32], char rd[32])
{
	cli_fmt_full(v, 32, p->v, QTY_VOLTAGE, 6);
	cli_fmt_full(i, 32, p->i, QTY_CURRENT, 6);
	cli_fmt_full(w, 32, p->power, QTY_POWER, 4);
	cli_fmt_full(rd, 32, p->rd, QTY_RESISTANCE, 4);
}

/* The report's style: print-friendly, no colour needed. */
static const char report_css[] =
	"body{font-family:sans-serif;max-width:60em;margin:1.5em auto;"
	"padding:0 1em;color:#111;line-height:1.4}"
	"h1{font-size:1.5em;margin-bottom:0.2em}h2{font-size:1.2em;"
	"border-bottom:1px solid #888;margin-top:1.6em}"
	"table{border-collapse:collapse;margin:0.6em 0}"
	"th,td{border:1px solid #999;padding:0.2em 0.6em;text-align:left}"
	"th{background:#eee}td.num{font-family:monospace;text-align:right}"
	"pre{background:#f6f6f6;border:1px solid #ccc;padding:0.6em;"
	"overflow-x:auto;font-size:0.85em}"
	".caution{border:3px solid #000;padding:0.6em;font-weight:bold;"
	"background:#fff4d6}.meta{color:#444}"
	"figure{margin:1em 0}figure svg{max-width:100%;height:auto;"
	"border:1px solid #ccc}figcaption{font-size:0.9em;color:#333}"
	"pre{white-space:pre-wrap}";

/*
 * Append SVG inline: without its XML declaration, every id prefixed with
 * PREFIX so two figures in one page keep their own glyphs and clips.
 */
static void report_inline_svg(struct rbuf *b, const char *svg,
                              const char *prefix)
{
	const char *s = strstr(svg, "<svg");
	if (s == NULL)
		return;
	size_t pl = strlen(prefix);
	while (*s != '\0') {
		if (strncmp(s, "id=\"", 4) == 0) {
			rbuf_put(b, s, 4);
			rbuf_put(b, prefix, pl);
			s += 4;
		} else if (strncmp(s, "\"#", 2) == 0 || strncmp(s, "(#", 2) == 0) {
			rbuf_put(b, s, 2);
			rbuf_put(b, prefix, pl);
			s += 2;
		} else {
			rbuf_put(b, s, 1);
			s++;
		}
	}
}

/* A command's text as a preformatted block (HTML). */
static void report_html_run(struct rbuf *b, const char *title,
                            const struct report_run *run)
{
	rbuf_printf(b, "<h3>%s</h3>\n<pre>", title);
	rbuf_html(b, run->out);
	if (run->err[0] != '\0') {
		rbuf_lit(b, "\n");
		rbuf_html(b, run->err);
	}
	rbuf_lit(b, "</pre>\n");
}

/* The whole report as HTML. */
static void report_html(const struct report *r, struct rbuf *b)
{
	const char *file = r->a->file;
	char src[160];
	report_source_words(r, src, sizeof src);
	rbuf_lit(b, "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n"
	         "<meta charset=\"utf-8\">\n<title>Operating point report: ");
	rbuf_html(b, file);
	rbuf_printf(b, "</title>\n<style>%s</style>\n</head>\n<body>\n", report_css);
	rbuf_lit(b, "<h1>Operating point report: ");
	rbuf_html(b, file);
	rbuf_printf(b, "</h1>\n<p class=\"meta\">biasline %s</p>\n", BIASLINE_VERSION);
	if (r->cautions != 0) {
		char msg[400];
		safety_message(r->cautions, msg, sizeof msg);
		rbuf_lit(b, "<p class=\"caution\">");
		rbuf_html(b, msg);
		rbuf_lit(b, "</p>\n");
	}

	rbuf_lit(b, "<h2>Circuit</h2>\n<table>\n<tr><th>source</th><td>");
	rbuf_html(b, src);
	rbuf_lit(b, "</td></tr>\n<tr><th>device</th><td>");
	struct rbuf dev = { 0 };
	report_device_words(r, &dev);
	rbuf_html(b, dev.p != NULL ? dev.p : "");
	free(dev.p);
	rbuf_printf(b, "</td></tr>\n<tr><th>solver</th><td>%s, %s</td></tr>\n"
	            "</table>\n", solve_method_name(r->s.solver.method),
	            projection_order_name(r->s.solver.order));

	rbuf_printf(b, "<h2>Operating points</h2>\n<p>%zu operating point%s "
	            "(every crossing, refined by Newton's method)</p>\n",
	            r->res.n, r->res.n == 1 ? "" : "s");
	if (r->res.n > 0) {
		rbuf_lit(b, "<table id=\"points\">\n<tr><th>#</th><th>voltage</th>"
		         "<th>current</th><th>power</th><th>r_d</th><th>stability</th>"
		         "<th>why</th></tr>\n");
		for (size_t k = 0; k < r->res.n; k++) {
			char v[32], i[32], w[32], rd[32];
			report_point_cells(&r->res.pts[k], v, i, w, rd);
			rbuf_printf(b, "<tr><td>%zu</td><td class=\"num\">%s</td>"
			            "<td class=\"num\">%s</td><td class=\"num\">%s</td>"
			            "<td class=\"num\">%s</td><td>%s</td><td>", k + 1, v, i,
			            w, rd, stability_name(r->sr[k].verdict));
			rbuf_html(b, r->sr[k].reason);
			rbuf_lit(b, "</td></tr>\n");
		}
		rbuf_lit(b, "</table>\n<p>projections (");
		rbuf_html(b, projection_order_name(r->s.solver.order));
		rbuf_lit(b, ") at point 1: ");
		rbuf_html(b, r->diag.verdict);
		if (r->diag.advice[0] != '\0') {
			rbuf_lit(b, "<br>advice: ");
			rbuf_html(b, r->diag.advice);
		}
		rbuf_lit(b, "</p>\n");
	}
	if (r->plot_svg != NULL) {
		rbuf_lit(b, "<figure>\n");
		report_inline_svg(b, r->plot_svg, "plot-");
		rbuf_printf(b, "\n<figcaption>The load line and the device curve with "
		            "every operating point and the first %d projections of "
		            "the session's solver.</figcaption>\n</figure>\n",
		            REPORT_STEPS);
	}
	report_html_run(b, "What 'biasline solve' reports (power, ratings, "
	                "cautions)", &r->solve);
	if (r->thermal_svg != NULL) {
		rbuf_lit(b, "<h2>Self-heating</h2>\n<figure>\n");
		report_inline_svg(b, r->thermal_svg, "thermal-");
		rbuf_printf(b, "\n<figcaption>The heat the part makes and the heat "
		            "its mounting removes against the junction temperature, "
		            "every balance and the first %d steps of the thermal "
		            "loop.</figcaption>\n</figure>\n", REPORT_STEPS);
	}

	rbuf_lit(b, "<h2>Design candidates</h2>\n");
	if (r->have_design)
		report_html_run(b, r->have_tolerance ? "biasline design --worst-case"
		                                     : "biasline design", &r->design);
	else
		rbuf_lit(b, "<p>The session has no target: section.</p>\n");

	rbuf_lit(b, "<h2>Tolerances</h2>\n");
	if (r->have_tolerance) {
		report_html_run(b, "biasline tolerance", &r->tolerance);
		if (r->hist_svg != NULL) {
			rbuf_lit(b, "<figure>\n");
			report_inline_svg(b, r->hist_svg, "hist-");
			rbuf_lit(b, "\n<figcaption>The device current over the Monte "
			         "Carlo trials.</figcaption>\n</figure>\n");
		} else {
			rbuf_lit(b, "<p>No histogram: ");
			rbuf_html(b, r->hist_why);
			rbuf_lit(b, "</p>\n");
		}
	} else {
		rbuf_lit(b, "<p>The session has no tolerances: section.</p>\n");
	}

	rbuf_lit(b, "<h2>Session file</h2>\n<pre id=\"session\">");
	rbuf_html(b, r->text != NULL ? r->text : "(could not be read again)");
	rbuf_printf(b, "</pre>\n<p class=\"meta\">Made by biasline %s from ",
	            BIASLINE_VERSION);
	rbuf_html(b, file);
	rbuf_lit(b, ". The cautions follow common practice; local codes and "
	         "licensed practice come first.</p>\n</body>\n</html>\n");
}

/* A fenced block of TEXT with a fence longer than any run of backticks. */
static void report_md_block(struct rbuf *b, const char *info, const char *text)
{
	size_t run = 0, most = 0;
	for (const char *s = text; *s != '\0'; s++) {
		run = *s == '`' ? run + 1 : 0;
		if (run > most)
			most = run;
	}
	size_t fence = most >= 3 ? most + 1 : 3;
	for (size_t k = 0; k < fence; k++)
		rbuf_lit(b, "`");
	rbuf_printf(b, "%s\n", info);
	rbuf_put(b, text, strlen(text));
	if (b->len > 0 && b->p[b->len - 1] != '\n')
		rbuf_lit(b, "\n");
	for (size_t k = 0; k < fence; k++)
		rbuf_lit(b, "`");
	rbuf_lit(b, "\n\n");
}

/* A command's text as a fenced block (Markdown). */
static void report_md_run(struct rbuf *b, const char *title,
                          const struct report_run *run)
{
	rbuf_printf(b, "### %s\n\n", title);
	struct rbuf t = { 0 };
	rbuf_put(&t, run->out, strlen(run->out));
	rbuf_put(&t, run->err, strlen(run->err));
	report_md_block(b, "text", t.p != NULL ? t.p : "");
	free(t.p);
}

/* The whole report as Markdown, the figures named PLOT, HIST and THERMAL. */
static void report_markdown(const struct report *r, struct rbuf *b,
                            const char *plot, const char *hist,
                            const char *thermal)
{
	char src[160];
	report_source_words(r, src, sizeof src);
	rbuf_printf(b, "# Operating point report: %s\n\nbiasline %s\n\n", r->a->file,
	            BIASLINE_VERSION);
	if (r->cautions != 0) {
		char msg[400];
		safety_message(r->cautions, msg, sizeof msg);
		rbuf_printf(b, "> **%s**\n\n", msg);
	}
	rbuf_printf(b, "## Circuit\n\n| | |\n|---|---|\n| source | ");
	rbuf_md_cell(b, src);
	rbuf_lit(b, " |\n| device | ");
	struct rbuf dev = { 0 };
	report_device_words(r, &dev);
	rbuf_md_cell(b, dev.p != NULL ? dev.p : "");
	free(dev.p);
	rbuf_printf(b, " |\n| solver | %s, %s |\n\n",
	            solve_method_name(r->s.solver.method),
	            projection_order_name(r->s.solver.order));
	rbuf_printf(b, "## Operating points\n\n%zu operating point%s\n\n", r->res.n,
	            r->res.n == 1 ? "" : "s");
	if (r->res.n > 0) {
		rbuf_printf(b, "| # | voltage | current | power | r_d | stability | "
		            "why |\n|---|---|---|---|---|---|---|\n");
		for (size_t k = 0; k < r->res.n; k++) {
			char v[32], i[32], w[32], rd[32];
			report_point_cells(&r->res.pts[k], v, i, w, rd);
			rbuf_printf(b, "| %zu | %s | %s | %s | %s | %s | ", k + 1, v, i, w,
			            rd, stability_name(r->sr[k].verdict));
			rbuf_md_cell(b, r->sr[k].reason);
			rbuf_lit(b, " |\n");
		}
		rbuf_printf(b, "\nprojections (%s) at point 1: ",
		            projection_order_name(r->s.solver.order));
		rbuf_md_cell(b, r->diag.verdict);
		if (r->diag.advice[0] != '\0') {
			rbuf_lit(b, "  \nadvice: ");
			rbuf_md_cell(b, r->diag.advice);
		}
		rbuf_lit(b, "\n\n");
	}
	if (r->plot_svg != NULL)
		rbuf_printf(b, "![The load line, the device curve, every operating "
		            "point and the first %d projections](%s)\n\n", REPORT_STEPS,
		            plot);
	report_md_run(b, "What `biasline solve` reports (power, ratings, cautions)",
	              &r->solve);
	if (r->thermal_svg != NULL)
		rbuf_printf(b, "## Self-heating\n\n![The heat made and removed "
		            "against the junction temperature, every balance and the "
		            "first %d thermal steps](%s)\n\n", REPORT_STEPS, thermal);
	rbuf_printf(b, "## Design candidates\n\n");
	if (r->have_design)
		report_md_run(b, r->have_tolerance ? "biasline design --worst-case"
		                                   : "biasline design", &r->design);
	else
		rbuf_printf(b, "The session has no target: section.\n\n");
	rbuf_printf(b, "## Tolerances\n\n");
	if (r->have_tolerance) {
		report_md_run(b, "biasline tolerance", &r->tolerance);
		if (r->hist_svg != NULL)
			rbuf_printf(b, "![The device current over the Monte Carlo "
			            "trials](%s)\n\n", hist);
		else
			rbuf_printf(b, "No histogram: %s\n\n", r->hist_why);
	} else {
		rbuf_printf(b, "The session has no tolerances: section.\n\n");
	}
	rbuf_printf(b, "## Session file\n\n");
	report_md_block(b, "yaml", r->text != NULL ? r->text
	                                           : "(could not be read again)\n");
	rbuf_printf(b, "Made by biasline %s from %s. The cautions follow common "
	            "practice; local codes and licensed practice come first.\n",
	            BIASLINE_VERSION, r->a->file);
}

/* Write LEN bytes of DATA to PATH atomically; returns 0 or an exit status. */
static int report_write_file(const char *path, const char *data, size_t len)
{
	char err[512];
	if (atomic_write_file(path, data, len, err, sizeof err) != 0) {
		fprintf(stderr, "biasline report: %s\n", err);
		return EXIT_CANT_CREATE;
	}
	return 0;
}

/* Entry point of 'biasline report'. */
int cmd_report(int argc, char **argv)
{
	struct report_args a;
	int code;
	if (report_parse_args(argc, argv, &a, &code) != 0)
		return code;
	struct report r;
	memset(&r, 0, sizeof r);
	r.a = &a;
	code = report_gather(&r);
	if (code != 0) {
		if (r.loaded)
			report_fini(&r);
		return code;
	}
	struct rbuf b = { 0 };
	if (!a.markdown) {
		report_html(&r, &b);
	} else {
		/* The figures beside OUT: its name without .md, then -plot.svg. */
		size_t n = strlen(a.output);
		size_t stem = n > 3 && strcmp(a.output + n - 3, ".md") == 0 ? n - 3 : n;
		char *plot = malloc(stem + 20), *hist = malloc(stem + 20);
		char *therm = malloc(stem + 20);
		if (plot == NULL || hist == NULL || therm == NULL) {
			b.failed = true;
		} else {
			snprintf(plot, stem + 20, "%.*s-plot.svg", (int)stem, a.output);
			snprintf(hist, stem + 20, "%.*s-histogram.svg", (int)stem, a.output);
			snprintf(therm, stem + 20, "%.*s-thermal.svg", (int)stem, a.output);
			/* The report links them by name, beside it. */
			const char *pb = strrchr(plot, '/'), *hb = strrchr(hist, '/');
			const char *tb = strrchr(therm, '/');
			report_markdown(&r, &b, pb ? pb + 1 : plot, hb ? hb + 1 : hist,
			                tb ? tb + 1 : therm);
			if (r.plot_svg != NULL && !b.failed)
				code = report_write_file(plot, r.plot_svg, r.plot_len);
			if (code == 0 && r.hist_svg != NULL && !b.failed)
				code = report_write_file(hist, r.hist_svg, r.hist_len);
			if (code == 0 && r.thermal_svg != NULL && !b.failed)
				code = report_write_file(therm, r.thermal_svg, r.thermal_len);
		}
		free(plot);
		free(hist);
		free(therm);
	}
	if (b.failed) {
		fprintf(stderr, "biasline report: out of memory\n");
		code = EXIT_SOFTWARE;
	} else if (code == 0 && a.output != NULL) {
		code = report_write_file(a.output, b.p, b.len);
	} else if (code == 0 && (fwrite(b.p, 1, b.len, stdout) != b.len ||
	                         fflush(stdout) != 0)) {
		fprintf(stderr, "biasline report: writing the report failed\n");
		code = EXIT_IO;
	}
	free(b.p);
	report_fini(&r);
	return code;
}
