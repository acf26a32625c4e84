/*
 * cmd_solve.c - `biasline solve FILE`: the operating point(s) of a session,
 * as a readable report or as CSV for scripts.
 */
#include <getopt.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "cli_analysis.h"
#include "cli_thermal.h"
#include "commands.h"
#include "csv.h"
#include "core/diagnose.h"
#include "core/remedy.h"
#include "core/models/models.h"
#include "core/safety.h"
#include "core/stability.h"
#include "core/sensitivity.h"
#include "core/solve.h"
#include "core/stepper.h"
#include "core/verdict.h"
#include "session/session.h"

/* What the command line asked for. */
struct solve_args {
	bool csv;
	bool trace;
	bool sensitivity;
	bool have_method, have_order;
	enum solve_method method;
	enum projection_order order;
	struct cli_sets sets;   /* --set KEY=VALUE */
	const char *file;
};

/* Print the usage of `solve` to OUT. */
static void solve_usage(FILE *out)
{
	fprintf(out,
	        "Usage: biasline solve [OPTIONS] FILE\n"
	        "\n"
	        "Find the operating point(s) where the session's load line meets\n"
	        "the device curve, and print each with its voltage, current, power\n"
	        "and differential resistance.\n"
	        "\n"
	        "Options:\n"
	        "  -f, --format FMT   text (default) or csv\n"
	        "  -m, --method M     auto, projection, relaxed, newton or brent\n"
	        "                     (default: the session's; auto scans for every\n"
	        "                     crossing and refines each with Newton)\n"
	        "  -o, --order O      voltage-from-line or voltage-from-device\n"
	        "                     (projection order; default: the session's)\n"
	        "  -t, --trace        print the iteration table (with --format csv,\n"
	        "                     the table replaces the points)\n"
	        "  -s, --sensitivity  print how each point moves with every parameter:\n"
	        "                     dV/dp, dI/dp and the normalised %% per %% (with\n"
	        "                     --format csv, the table replaces the points)\n"
	        CLI_SET_HELP
	        "  -h, --help         show this help and exit\n"
	        "  -V, --version      show the version and exit\n");
	static const enum exit_code codes[] = { EXIT_OK_CODE, EXIT_NO_POINT,
	                                        EXIT_USAGE, EXIT_DATA,
	                                        EXIT_NO_INPUT, EXIT_IO };
	exit_status_usage(out, codes, sizeof codes / sizeof codes[0]);
}

/* Parse the command line into A; returns -1 to exit with *CODE. */
static int solve_parse_args(int argc, char **argv, struct solve_args *a,
                            int *code)
{
	static const struct option opts[] = {
		{ "format", required_argument, NULL, 'f' },
		{ "method", required_argument, NULL, 'm' },
		{ "order", required_argument, NULL, 'o' },
		{ "trace", no_argument, NULL, 't' },
		{ "sensitivity", no_argument, NULL, 's' },
		{ "set", required_argument, NULL, CLI_OPT_SET },
		{ "help", no_argument, NULL, 'h' },
		{ "version", no_argument, NULL, 'V' },
		{ NULL, 0, NULL, 0 },
	};
	memset(a, 0, sizeof *a);
	optind = 1;
	opterr = 0;
	int c;
	while ((c = getopt_long(argc, argv, ":f:m:o:tshV", opts, NULL)) != -1) {
		switch (c) {
		case 'f':
			if (cli_parse_format("solve", optarg, &a->csv) != 0) {
				*code = EXIT_USAGE;
				return -1;
			}
			break;
		case 'm':
			if (solve_method_from_name(optarg, &a->method) != 0) {
				fprintf(stderr,
				        "biasline solve: --method: '%s' is not one of auto, "
				        "projection, relaxed, newton, brent\n", optarg);
				*code = EXIT_USAGE;
				return -1;
			}
			a->have_method = true;
			break;
		case 'o':
			if (projection_order_from_name(optarg, &a->order) != 0) {
				fprintf(stderr,
				        "biasline solve: --order: '%s' is not voltage-from-line "
				        "or voltage-from-device\n", optarg);
				*code = EXIT_USAGE;
				return -1;
			}
			a->have_order = true;
			break;
		case 't':
			a->trace = true;
			break;
		case 's':
			a->sensitivity = true;
			break;
		case CLI_OPT_SET:
			if (cli_add_set("solve", &a->sets, optarg) != 0) {
				*code = EXIT_USAGE;
				return -1;
			}
			break;
		default:
			*code = cli_shared_option("solve", c, argv, solve_usage);
			return -1;
		}
	}
	if (optind != argc - 1) {
		fprintf(stderr, "biasline solve: expected one FILE (try --help)\n");
		*code = EXIT_USAGE;
		return -1;
	}
	if (a->csv && a->trace && a->sensitivity) {
		fprintf(stderr, "biasline solve: CSV holds one table: give --trace "
		        "or --sensitivity, not both\n");
		*code = EXIT_USAGE;
		return -1;
	}
	a->file = argv[optind];
	return 0;
}

/*
 * Print the sensitivities of every point of RES to every parameter, by
 * implicit differentiation (core/sensitivity.h), as text or CSV; returns
 * the exit status of the CSV table (0 for text).
 */
static int solve_print_sensitivity(const struct problem *pb,
                                   const struct solve_result *res, bool csv)
{
	struct csv w;
	csv_init(&w, stdout);
	if (csv) {
		static const char *const cols[] = { "point", "parameter", "value",
		                                    "unit", "dV_dp", "dI_dp",
		                                    "dP_dp", "sens_V", "sens_I",
		                                    "sens_P" };
		for (size_t k = 0; k < sizeof cols / sizeof cols[0]; k++)
			csv_column(&w, cols[k]);
		csv_end_row(&w);
	} else {
		printf("\n  sensitivities (implicit differentiation; %% change per "
		       "%% change of the parameter)\n");
	}
	for (size_t k = 0; k < res->n; k++) {
		struct sensitivity sv[PARAMREF_MAX];
		size_t n = sensitivity_all(pb, res->pts[k].v, res->pts[k].i, sv,
		                           sizeof sv / sizeof sv[0]);
		int w_key = 22; /* wide enough for the longest key (network parts) */
		for (size_t j = 0; j < n; j++) {
			size_t len = strlen(paramref_key(pb, &sv[j].param));
			if (len > (size_t)w_key)
				w_key = (int)len;
		}
		if (!csv)
			printf("  point %zu\n  %-*s %-12s %-11s %-11s %s\n", k + 1,
			       w_key, "parameter", "value", "S(V)", "S(I)", "S(P)");
		for (size_t j = 0; j < n; j++) {
			const struct sensitivity *s = &sv[j];
			const char *key = paramref_key(pb, &s->param);
			enum qty_kind unit = paramref_unit(pb, &s->param);
			if (csv) {
				csv_count(&w, k + 1);
				csv_text(&w, key);
				csv_number(&w, s->value);
				csv_text(&w, qty_unit_ascii(unit));
				csv_number(&w, s->dv);
				csv_number(&w, s->di);
				csv_number(&w, s->dp);
				csv_number(&w, s->sv);
				csv_number(&w, s->si);
				csv_number(&w, s->sp);
				csv_end_row(&w);
				continue;
			}
			char v[48], a[32], b[32], c[32];
			printf("  %-*s %-12s %-11s %-11s %s\n", w_key, key,
			       cli_fmt(v, sizeof v, s->value, unit, 5),
			       cli_fmt_number(a, sizeof a, s->sv, 4, true),
			       cli_fmt_number(b, sizeof b, s->si, 4, true),
			       cli_fmt_number(c, sizeof c, s->sp, 4, true));
		}
	}
	return csv ? csv_finish(&w, "solve") : EXIT_OK_CODE;
}

/*
 * Print the trace of the session's stepper, as text or CSV; returns the
 * exit status of the CSV table (0 for text).
 */
static int solve_print_trace(const struct problem *pb,
                             const struct solve_options *o, bool csv)
{
	struct solve_options to = *o;
	if (to.method == METHOD_AUTO)
		to.method = METHOD_NEWTON;
	struct stepper *st = stepper_create();
	if (st == NULL) {
		fprintf(stderr, "biasline solve: out of memory\n");
		return EXIT_SOFTWARE;
	}
	if (stepper_init(st, pb, &to) == 0)
		stepper_run(st);
	size_t n;
	const struct trace_row *rows = stepper_trace(st, &n);
	enum qty_kind rk = problem_residual_kind(pb);
	int code = EXIT_OK_CODE;
	if (csv) {
		struct csv w;
		csv_init(&w, stdout);
		csv_column(&w, "k");
		csv_column(&w, "voltage_V");
		csv_column(&w, "current_A");
		csv_column_unit(&w, "residual", rk);
		csv_column(&w, "step");
		csv_column(&w, "ratio");
		csv_end_row(&w);
		for (size_t k = 0; k < n; k++) {
			csv_count(&w, rows[k].k);
			csv_number(&w, rows[k].v);
			csv_number(&w, rows[k].i);
			csv_number(&w, rows[k].residual);
			csv_number(&w, rows[k].step);
			csv_number(&w, rows[k].ratio);
			csv_end_row(&w);
		}
		code = csv_finish(&w, "solve");
	} else {
		printf("\niteration (%s", solve_method_name(to.method));
		if (to.method == METHOD_PROJECTION || to.method == METHOD_RELAXED)
			printf(", %s", projection_order_name(to.order));
		printf("): %s\n", step_status_name(stepper_status(st)));
		printf("  %4s  %-12s %-12s %-12s %-12s %s\n", "k", "voltage",
		       "current", "residual", "step", "ratio");
		for (size_t k = 0; k < n; k++) {
			char v[32], i[32], r[32], s[32], q[32];
			cli_fmt_full(v, sizeof v, rows[k].v, QTY_VOLTAGE, 6);
			cli_fmt_full(i, sizeof i, rows[k].i, QTY_CURRENT, 6);
			cli_fmt_full(r, sizeof r, rows[k].residual, rk, 3);
			if (isnan(rows[k].step))
				snprintf(s, sizeof s, "-");
			else
				cli_fmt_number(s, sizeof s, rows[k].step, 3, false);
			if (isnan(rows[k].ratio))
				snprintf(q, sizeof q, "-");
			else
				cli_fmt_number(q, sizeof q, rows[k].ratio, 4, false);
			printf("  %4u  %-12s %-12s %-12s %-12s %s\n", rows[k].k, v, i,
			       r, s, q);
		}
	}
	stepper_destroy(st);
	return code;
}

/* Print what the model reports beyond V and I at P (IC, VCE, region...). */
static void solve_print_extra(const struct problem *pb, const struct op_point *p)
{
	struct model_extra ex;
	if (device_secondary(&pb->dev, &pb->src, p->v, p->i, &ex) != 0)
		return;
	printf("      ");
	for (size_t k = 0; k < ex.n; k++) {
		char b[48];
		cli_fmt_full(b, sizeof b, ex.v[k].value, ex.v[k].kind, 5);
		printf("%s%s = %s", k ? ", " : "", ex.v[k].label, b);
	}
	if (ex.region != NULL)
		printf("%sregion: %s", ex.n ? "; " : "", ex.region);
	printf("\n");
	if (ex.note[0] != '\0')
		printf("      %s%s\n", ex.warn ? "warning: " : "", ex.note);
}

/*
 * Print the power in each part at every point of RES against SE's ratings,
 * and the error to SE's target (core/verdict.h's words).
 */
static void solve_print_verdict(const struct session *se,
                                const struct problem *pb,
                                const struct solve_result *res)
{
	for (size_t k = 0; k < res->n; k++) {
		struct verdict vd;
		session_verdict(se, pb, res->pts[k].v, res->pts[k].i, &vd);
		if (res->n > 1)
			printf("\n  power and ratings at point %zu\n", k + 1);
		else
			printf("\n  power and ratings\n");
		for (size_t j = 0; j < vd.nlines; j++)
			printf("    %s\n", vd.lines[j].words);
		if (vd.message[0] != '\0')
			printf("    (%s)\n", vd.message);
		if (vd.target.given)
			printf("    %s\n", vd.target.words);
	}
}

/* Print the text report of RES. */
static void solve_print_text(const char *file, const struct session *se,
                             const struct problem *pb,
                             const struct solve_options *o,
                             const struct solve_result *res,
                             const char *unreached)
{
	char a[48], b[48];
	printf("%s\n", file);
	if (isinf(pb->src.r)) {
		cli_fmt(a, sizeof a, pb->src.isc, QTY_CURRENT, 6);
		printf("  source   ideal current source %s\n", a);
	} else {
		cli_fmt(a, sizeof a, pb->src.voc, QTY_VOLTAGE, 6);
		cli_fmt(b, sizeof b, pb->src.r, QTY_RESISTANCE, 6);
		printf("  source   %s behind %s%s\n", a, b,
		       se->source.form == SOURCE_NORTON ? " (from the Norton form)" : "");
	}
	printf("  device   %s:", pb->dev.type->name);
	/* Only what acts: no "T0 = -273.15 degC" for "no scaling". */
	bool first = true;
	for (size_t k = 0; k < pb->dev.type->nparams; k++) {
		const struct model_param *mp = &pb->dev.type->params[k];
		if (!model_param_in_use(pb->dev.type, pb->dev.p, k))
			continue;
		cli_fmt(a, sizeof a, pb->dev.p[k], mp->kind, 6);
		printf("%s %s = %s", first ? "" : ",", mp->label, a);
		first = false;
	}
	if (pb->dev.curve != NULL)
		printf(" %zu measured points", pb->dev.curve->n);
	printf("\n  method   %s\n\n", solve_method_name(o->method));
	printf("  %zu operating point%s%s\n", res->n, res->n == 1 ? "" : "s",
	       unreached != NULL ? " (found by auto; not reached by the method)"
	                         : "");
	if (unreached != NULL)
		printf("  %s\n", unreached);
	printf("  %-3s %-13s %-13s %-13s %-13s %-10s %s\n", "#", "voltage",
	       "current", "power", "r_d", "stability", "steps");
	for (size_t k = 0; k < res->n; k++) {
		const struct op_point *p = &res->pts[k];
		char v[32], i[32], w[32], r[32];
		cli_fmt_full(v, sizeof v, p->v, QTY_VOLTAGE, 6);
		cli_fmt_full(i, sizeof i, p->i, QTY_CURRENT, 6);
		cli_fmt_full(w, sizeof w, p->power, QTY_POWER, 4);
		cli_fmt_full(r, sizeof r, p->rd, QTY_RESISTANCE, 4);
		struct stability_result sr;
		stability_classify(pb, p->rd, &se->reactive, &sr);
		printf("  %-3zu %-13s %-13s %-13s %-13s %-10s %u%s\n", k + 1, v, i, w,
		       r, stability_name(sr.verdict), p->steps,
		       p->tangent ? "  (touching point)" : "");
		if (sr.verdict != STABILITY_STABLE)
			printf("      %s: %s\n", stability_name(sr.verdict), sr.reason);
		solve_print_extra(pb, p);
		cli_thermal_print_point(pb, p, "      ");
	}
	solve_print_verdict(se, pb, res);
	/* How the projections would behave at the (first) point, on the
	 * curve through it (a self-heated part's, at its junction temperature). */
	if (res->n > 0) {
		struct diagnosis d;
		struct problem at;
		thermal_problem_at_point(pb, res->pts[0].v, res->pts[0].i, &at);
		diagnose_at(&at, o->order, res->pts[0].v, o->tol, 1.0, &d);
		printf("\n  projections (%s): %s\n", projection_order_name(o->order),
		       d.verdict);
		if (d.advice[0] != '\0')
			printf("  advice: %s\n", d.advice);
	}
	struct cli_thermal th;
	cli_thermal_init(&th, pb, o);
	cli_thermal_print_report(&th, pb, o, res);
	unsigned flags = 0;
	for (size_t k = 0; k < res->n; k++)
		flags |= safety_check(pb, res->pts[k].v, res->pts[k].i);
	if (res->n == 0)
		flags |= safety_check(pb, 0.0, 0.0);
	/* A part that runs away gets hot, whatever the cold point says. */
	if (th.active && res->n == 0 && res->status == SOLVE_NONE)
		flags |= SAFETY_HOT_SURFACE;
	if (flags != 0) {
		char msg[320];
		safety_message(flags, msg, sizeof msg);
		printf("\n  %s\n", msg);
	}
}

/*
 * The model's extra results at the points of RES, for the CSV header: the
 * first point's, or those at (0, 0) when there is none (a model reports
 * the same keys at every point).  False when the model has none.
 */
static bool solve_extra_keys(const struct problem *pb,
                             const struct solve_result *res,
                             struct model_extra *ex)
{
	double v = res->n > 0 ? res->pts[0].v : 0.0;
	double i = res->n > 0 ? res->pts[0].i : 0.0;
	return device_secondary(&pb->dev, &pb->src, v, i, ex) == 0;
}

/* Print RES as CSV; returns the table's exit status. */
static int solve_print_csv(const struct session *se, const struct problem *pb,
                           const struct solve_options *o,
                           const struct solve_result *res)
{
	struct cli_thermal th;
	cli_thermal_init(&th, pb, o);
	/* The model's extra results follow as columns. */
	struct model_extra ex;
	bool extra = solve_extra_keys(pb, res, &ex);
	struct csv w;
	csv_init(&w, stdout);
	static const char *const cols[] = { "point", "voltage_V", "current_A",
	                                    "power_W", "rd_ohm", "steps",
	                                    "method", "tangent", "stability" };
	for (size_t k = 0; k < sizeof cols / sizeof cols[0]; k++)
		csv_column(&w, cols[k]);
	if (extra) {
		for (size_t k = 0; k < ex.n; k++)
			csv_column_unit(&w, ex.v[k].key, ex.v[k].kind);
		csv_column(&w, "region");
		csv_column(&w, "flagged");
	}
	cli_thermal_csv_columns(&th, pb, &w);
	csv_end_row(&w);
	for (size_t k = 0; k < res->n; k++) {
		const struct op_point *p = &res->pts[k];
		struct stability_result sr;
		stability_classify(pb, p->rd, &se->reactive, &sr);
		csv_count(&w, k + 1);
		csv_number(&w, p->v);
		csv_number(&w, p->i);
		csv_number(&w, p->power);
		csv_number(&w, p->rd);
		csv_count(&w, p->steps);
		csv_text(&w, solve_method_name(p->method));
		csv_text(&w, p->tangent ? "yes" : "no");
		csv_text(&w, stability_name(sr.verdict));
		if (extra) {
			struct model_extra e;
			if (device_secondary(&pb->dev, &pb->src, p->v, p->i, &e) == 0) {
				for (size_t j = 0; j < e.n; j++)
					csv_number(&w, e.v[j].value);
				csv_text(&w, e.region != NULL ? e.region : "");
				csv_text(&w, e.warn ? "yes" : "no");
			} else {
				for (size_t j = 0; j < ex.n + 2; j++)
					csv_empty(&w);
			}
		}
		cli_thermal_csv_fields(&th, pb, p, &w);
		csv_end_row(&w);
	}
	return csv_finish(&w, "solve");
}

/*
 * Why the requested method of O reached none of the points ROB holds
 * (found by the every-root solve), and what converges instead, into BUF:
 * a run stopped by the step limit while still closing in says how many
 * more steps it needed (diagnose_projections from its last iterate).
 */
static void solve_why_not(const struct problem *pb,
                          const struct solve_options *o,
                          const struct solve_result *res,
                          const struct solve_result *rob, char *buf, size_t n)
{
	struct remedy rm;
	remedy_find(pb, o, &rm);
	if (res->stop == STEP_CAP) {
		struct stepper *st = stepper_create();
		double more = NAN;
		if (st != NULL && stepper_init(st, pb, o) == 0) {
			stepper_run(st);
			const struct trace_row *last = stepper_last(st);
			size_t best = 0;
			for (size_t k = 1; last != NULL && k < rob->n; k++)
				if (fabs(rob->pts[k].v - last->v) <
				    fabs(rob->pts[best].v - last->v))
					best = k;
			if (last != NULL && (o->method == METHOD_PROJECTION))
				more = diagnose_projections(pb, o->order, rob->pts[best].v,
				                            rob->pts[best].i, last->i,
				                            o->tol);
		}
		stepper_destroy(st);
		if (isfinite(more)) {
			snprintf(buf, n, "not converged after %u steps (about %.0f more "
			         "needed): raise solver.step_limit, or %s", o->max_steps,
			         fmax(more, 1.0), rm.text);
			return;
		}
		snprintf(buf, n, "not converged after %u steps: %s", o->max_steps,
		         rm.text);
		return;
	}
	snprintf(buf, n, "%s stopped (%s): %s", solve_method_name(o->method),
	         step_status_name(res->stop), rm.text);
}

/* Entry point of `biasline solve`. */
int cmd_solve(int argc, char **argv)
{
	struct solve_args a;
	int code = EXIT_OK_CODE;
	if (solve_parse_args(argc, argv, &a, &code) != 0)
		return code;

	struct session se;
	struct problem pb;
	if ((code = cli_load_with("solve", a.file, &a.sets, &se, &pb)) != 0)
		return code;
	struct solve_options o = se.solver;
	if (a.have_method)
		o.method = a.method;
	if (a.have_order)
		o.order = a.order;

	struct solve_result res;
	solve_problem(&pb, &o, &res);
	/* A method that reached no point: list the points the every-root solve
	 * finds, say why, and name a setting that converges. */
	char why[400];
	const char *unreached = NULL;
	if (res.status != SOLVE_OK && o.method != METHOD_AUTO) {
		struct solve_options ao = o;
		ao.method = METHOD_AUTO;
		struct solve_result rob;
		if (solve_problem(&pb, &ao, &rob) == SOLVE_OK && rob.n > 0) {
			solve_why_not(&pb, &o, &res, &rob, why, sizeof why);
			unreached = why;
			res = rob;
		}
	}
	/* CSV carries one table: the trace when asked for, else the points. */
	int out = EXIT_OK_CODE;
	if (a.csv && a.trace)
		out = solve_print_trace(&pb, &o, true);
	else if (a.csv && a.sensitivity)
		out = solve_print_sensitivity(&pb, &res, true);
	else if (a.csv)
		out = solve_print_csv(&se, &pb, &o, &res);
	else
		solve_print_text(a.file, &se, &pb, &o, &res, unreached);
	if (a.trace && !a.csv && out == EXIT_OK_CODE)
		out = solve_print_trace(&pb, &o, false);
	if (a.sensitivity && !a.csv && out == EXIT_OK_CODE)
		out = solve_print_sensitivity(&pb, &res, false);
	if (unreached != NULL) {
		fprintf(stderr, "biasline solve: %s: %s: %s\n", a.file,
		        solve_method_name(o.method), unreached);
		code = EXIT_NOT_REACHED;
	} else if (res.status != SOLVE_OK) {
		char run[400];
		fprintf(stderr, "biasline solve: %s: no operating point: %s\n", a.file,
		        stability_runaway(&pb, run, sizeof run) ? run : res.message);
		code = cli_exit_from_solve(res.status);
	}
	if (out != EXIT_OK_CODE)
		code = out;
	session_fini(&se);
	return code;
}
