/*
 * cmd_solve.c - `biasline solve FILE`: the operating point(s) of a session,
 * as a readable report or as CSV for scripts.
 */
#include <getopt.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "biasline_version.h"
#include "cli_analysis.h"
#include "commands.h"
#include "core/diagnose.h"
#include "core/models/models.h"
#include "core/safety.h"
#include "core/sensitivity.h"
#include "core/solve.h"
#include "core/stepper.h"
#include "session/session.h"

/* What the command line asked for. */
struct solve_args {
	bool csv;
	bool trace;
	bool sensitivity;
	bool have_method, have_order;
	enum solve_method method;
	enum projection_order order;
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
	        "  -h, --help         show this help and exit\n"
	        "  -V, --version      show the version and exit\n"
	        "\n"
	        "Exit status: 0 a verified point was found; 3 none was found;\n"
	        "64 bad usage; 65 bad data in FILE; 66 FILE cannot be read.\n");
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
			if (strcmp(optarg, "csv") == 0) {
				a->csv = true;
			} else if (strcmp(optarg, "text") == 0) {
				a->csv = false;
			} else {
				fprintf(stderr, "biasline solve: --format: '%s' is not text or csv\n",
				        optarg);
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
		case 'h':
			solve_usage(stdout);
			*code = EXIT_OK_CODE;
			return -1;
		case 'V':
			printf("biasline %s\n", BIASLINE_VERSION);
			*code = EXIT_OK_CODE;
			return -1;
		case ':':
			fprintf(stderr, "biasline solve: option '%s' needs a value\n",
			        argv[optind - 1]);
			*code = EXIT_USAGE;
			return -1;
		default:
			fprintf(stderr, "biasline solve: unknown option '%s' (try --help)\n",
			        argv[optind - 1]);
			*code = EXIT_USAGE;
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
 * implicit differentiation (core/sensitivity.h), as text or CSV.
 */
static void solve_print_sensitivity(const struct problem *pb,
                                    const struct solve_result *res, bool csv)
{
	if (csv)
		printf("point,parameter,value,dV_dp,dI_dp,dP_dp,sens_V,sens_I,"
		       "sens_P\n");
	else
		printf("\n  sensitivities (implicit differentiation; %% change per "
		       "%% change of the parameter)\n");
	for (size_t k = 0; k < res->n; k++) {
		struct sensitivity sv[PARAMREF_MAX];
		size_t n = sensitivity_all(pb, res->pts[k].v, res->pts[k].i, sv,
		                           sizeof sv / sizeof sv[0]);
		int w = 22; /* wide enough for the longest key (network parts) */
		for (size_t j = 0; j < n; j++) {
			size_t len = strlen(paramref_key(pb, &sv[j].param));
			if (len > (size_t)w)
				w = (int)len;
		}
		if (!csv)
			printf("  point %zu\n  %-*s %-12s %-11s %-11s %s\n", k + 1, w,
			       "parameter", "value", "S(V)", "S(I)", "S(P)");
		for (size_t j = 0; j < n; j++) {
			const struct sensitivity *s = &sv[j];
			const char *key = paramref_key(pb, &s->param);
			if (csv) {
				printf("%zu,%s,%.17g,%.17g,%.17g,%.17g,%.17g,%.17g,%.17g\n",
				       k + 1, key, s->value, s->dv, s->di, s->dp, s->sv,
				       s->si, s->sp);
				continue;
			}
			char v[48];
			qty_format_short(v, sizeof v, s->value,
			                 paramref_unit(pb, &s->param), 5, 1);
			/* + 0.0 turns a negative zero into a plain one */
			printf("  %-*s %-12s %-+11.4g %-+11.4g %+.4g\n", w, key, v,
			       s->sv + 0.0, s->si + 0.0, s->sp + 0.0);
		}
	}
}

/* Print the trace of the session's stepper, as text or CSV. */
static void solve_print_trace(const struct problem *pb,
                              const struct solve_options *o, bool csv)
{
	struct solve_options to = *o;
	if (to.method == METHOD_AUTO)
		to.method = METHOD_NEWTON;
	struct stepper *st = stepper_create();
	if (st == NULL)
		return;
	if (stepper_init(st, pb, &to) == 0)
		stepper_run(st);
	size_t n;
	const struct trace_row *rows = stepper_trace(st, &n);
	enum qty_kind rk = problem_residual_kind(pb);
	if (csv) {
		printf("k,voltage_V,current_A,residual_%s,step,ratio\n",
		       rk == QTY_VOLTAGE ? "V" : "A");
		for (size_t k = 0; k < n; k++)
			printf("%u,%.17g,%.17g,%.17g,%.17g,%.17g\n", rows[k].k, rows[k].v,
			       rows[k].i, rows[k].residual, rows[k].step, rows[k].ratio);
	} else {
		printf("\niteration (%s", solve_method_name(to.method));
		if (to.method == METHOD_PROJECTION || to.method == METHOD_RELAXED)
			printf(", %s", projection_order_name(to.order));
		printf("): %s\n", step_status_name(stepper_status(st)));
		printf("  %4s  %-12s %-12s %-12s %-12s %s\n", "k", "voltage",
		       "current", "residual", "step", "ratio");
		for (size_t k = 0; k < n; k++) {
			char v[32], i[32], r[32], s[32];
			qty_format(v, sizeof v, rows[k].v, QTY_VOLTAGE, 6, 1);
			qty_format(i, sizeof i, rows[k].i, QTY_CURRENT, 6, 1);
			qty_format(r, sizeof r, rows[k].residual, rk, 3, 1);
			if (isnan(rows[k].step))
				snprintf(s, sizeof s, "-");
			else
				snprintf(s, sizeof s, "%.3g", rows[k].step);
			printf("  %4u  %-12s %-12s %-12s %-12s ", rows[k].k, v, i, r, s);
			if (isnan(rows[k].ratio))
				printf("-\n");
			else
				printf("%.4g\n", rows[k].ratio);
		}
	}
	stepper_destroy(st);
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
		qty_format(b, sizeof b, ex.v[k].value, ex.v[k].kind, 5, 1);
		printf("%s%s = %s", k ? ", " : "", ex.v[k].label, b);
	}
	if (ex.region != NULL)
		printf("%sregion: %s", ex.n ? "; " : "", ex.region);
	printf("\n");
	if (ex.note[0] != '\0')
		printf("      %s%s\n", ex.warn ? "warning: " : "", ex.note);
}

/* Print the text report of RES. */
static void solve_print_text(const char *file, const struct session *se,
                             const struct problem *pb,
                             const struct solve_options *o,
                             const struct solve_result *res)
{
	char a[48], b[48];
	printf("%s\n", file);
	if (isinf(pb->src.r)) {
		qty_format_short(a, sizeof a, pb->src.isc, QTY_CURRENT, 6, 1);
		printf("  source   ideal current source %s\n", a);
	} else {
		qty_format_short(a, sizeof a, pb->src.voc, QTY_VOLTAGE, 6, 1);
		qty_format_short(b, sizeof b, pb->src.r, QTY_RESISTANCE, 6, 1);
		printf("  source   %s behind %s%s\n", a, b,
		       se->source.form == SOURCE_NORTON ? " (from the Norton form)" : "");
	}
	printf("  device   %s:", pb->dev.type->name);
	for (size_t k = 0; k < pb->dev.type->nparams; k++) {
		const struct model_param *mp = &pb->dev.type->params[k];
		qty_format_short(a, sizeof a, pb->dev.p[k], mp->kind, 6, 1);
		printf("%s %s = %s", k ? "," : "", mp->label, a);
	}
	if (pb->dev.curve != NULL)
		printf(" %zu measured points", pb->dev.curve->n);
	printf("\n  method   %s\n\n", solve_method_name(o->method));
	printf("  %zu operating point%s\n", res->n, res->n == 1 ? "" : "s");
	printf("  %-3s %-13s %-13s %-13s %-13s %s\n", "#", "voltage", "current",
	       "power", "r_d", "steps");
	for (size_t k = 0; k < res->n; k++) {
		const struct op_point *p = &res->pts[k];
		char v[32], i[32], w[32], r[32];
		qty_format(v, sizeof v, p->v, QTY_VOLTAGE, 6, 1);
		qty_format(i, sizeof i, p->i, QTY_CURRENT, 6, 1);
		qty_format(w, sizeof w, p->power, QTY_POWER, 4, 1);
		qty_format(r, sizeof r, p->rd, QTY_RESISTANCE, 4, 1);
		printf("  %-3zu %-13s %-13s %-13s %-13s %u%s\n", k + 1, v, i, w, r,
		       p->steps, p->tangent ? "  (touching point)" : "");
		solve_print_extra(pb, p);
	}
	/* How the projections would behave at the (first) point. */
	if (res->n > 0) {
		struct diagnosis d;
		diagnose_at(pb, o->order, res->pts[0].v, o->tol, 1.0, &d);
		printf("\n  projections (%s): %s\n", projection_order_name(o->order),
		       d.verdict);
		if (d.advice[0] != '\0')
			printf("  advice: %s\n", d.advice);
	}
	unsigned flags = 0;
	for (size_t k = 0; k < res->n; k++)
		flags |= safety_check(pb, res->pts[k].v, res->pts[k].i);
	if (res->n == 0)
		flags |= safety_check(pb, 0.0, 0.0);
	if (flags != 0) {
		char msg[320];
		safety_message(flags, msg, sizeof msg);
		printf("\n  %s\n", msg);
	}
}

/* Print RES as CSV. */
static void solve_print_csv(const struct problem *pb,
                            const struct solve_result *res)
{
	/* The model's extra results (same for every row) follow as columns. */
	struct model_extra ex;
	bool extra = res->n > 0 && device_secondary(&pb->dev, &pb->src, res->pts[0].v,
	                                            res->pts[0].i, &ex) == 0;
	printf("point,voltage_V,current_A,power_W,rd_ohm,steps,method,tangent");
	if (extra) {
		for (size_t k = 0; k < ex.n; k++) {
			const char *u = qty_unit_ascii(ex.v[k].kind);
			printf(",%s%s%s", ex.v[k].key, u[0] ? "_" : "", u);
		}
		printf(",region");
	}
	printf("\n");
	for (size_t k = 0; k < res->n; k++) {
		const struct op_point *p = &res->pts[k];
		printf("%zu,%.17g,%.17g,%.17g,%.17g,%u,%s,%s", k + 1, p->v, p->i,
		       p->power, p->rd, p->steps, solve_method_name(p->method),
		       p->tangent ? "yes" : "no");
		if (extra) {
			struct model_extra e;
			if (device_secondary(&pb->dev, &pb->src, p->v, p->i, &e) == 0) {
				for (size_t j = 0; j < e.n; j++)
					printf(",%.17g", e.v[j].value);
				printf(",%s", e.region ? e.region : "");
			}
		}
		printf("\n");
	}
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
	if ((code = cli_load_problem("solve", a.file, &se, &pb)) != 0)
		return code;
	struct solve_options o = se.solver;
	if (a.have_method)
		o.method = a.method;
	if (a.have_order)
		o.order = a.order;

	struct solve_result res;
	solve_problem(&pb, &o, &res);
	/* CSV carries one table: the trace when asked for, else the points. */
	if (a.csv && a.trace)
		solve_print_trace(&pb, &o, true);
	else if (a.csv && a.sensitivity)
		solve_print_sensitivity(&pb, &res, true);
	else if (a.csv)
		solve_print_csv(&pb, &res);
	else
		solve_print_text(a.file, &se, &pb, &o, &res);
	if (a.trace && !a.csv)
		solve_print_trace(&pb, &o, false);
	if (a.sensitivity && !a.csv)
		solve_print_sensitivity(&pb, &res, false);
	if (res.status != SOLVE_OK) {
		fprintf(stderr, "biasline solve: %s: no operating point: %s\n", a.file,
		        res.message);
		code = res.status == SOLVE_BAD_INPUT ? EXIT_DATA : EXIT_NO_POINT;
	}
	session_fini(&se);
	return code;
}
