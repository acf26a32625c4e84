/*
 * cmd_sweep.c - `biasline sweep FILE --param KEY --from X --to Y`: the
 * operating point(s) along a sweep of one parameter, one row per point,
 * with the folds where the number of points changes.
 */
#include <getopt.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "cli_analysis.h"
#include "cli_thermal.h"
#include "cli_progress.h"
#include "commands.h"
#include "csv.h"
#include "core/safety.h"
#include "core/stability.h"
#include "core/sweep.h"

/* What the command line asked for. */
struct sweep_args {
	bool csv, log;
	const char *param, *from, *to, *file;
	unsigned long long points;
	struct cli_sets sets;   /* --set KEY=VALUE */
};

/* Print the usage of `sweep` to OUT. */
static void sweep_usage(FILE *out)
{
	fprintf(out,
	        "Usage: biasline sweep [OPTIONS] --param KEY --from X --to Y FILE\n"
	        "\n"
	        "Solve the session at each value of one parameter and print every\n"
	        "operating point: voltage, current and device power.  Each step\n"
	        "continues from the last; where the number of points changes (a\n"
	        "fold: the circuit jumps) the value is located and reported.\n"
	        "\n"
	        "Options:\n"
	        "  -P, --param KEY    vs or rs (Thevenin source), is or rp (Norton\n"
	        "                     source) or a device parameter key\n"
	        "                     (temperature, saturation_current, ...); for a\n"
	        "                     network source, a part's value as\n"
	        "                     source.network.<part name> (quote it when the\n"
	        "                     name has spaces) instead of vs, rs, is, rp\n"
	        "  -a, --from X       first value, with the parameter's unit\n"
	        "  -b, --to Y         last value\n"
	        "  -n, --points N     number of values, 1 to %d (default 51)\n"
	        "  -l, --log          logarithmic spacing (X and Y of one sign)\n"
	        "  -f, --format FMT   text (default) or csv; CSV rows are\n"
	        "                     step,KEY_UNIT,point,count,voltage_V,current_A,\n"
	        "                     power_W and folds go to standard error\n"
	        CLI_SET_HELP
	        "  -h, --help         show this help and exit\n"
	        "  -V, --version      show the version and exit\n"
	        "\n"
	        "Steps without an operating point are reported and are no "
	        "failure.\n"
	        "A sweep over a second shows its progress on standard error when\n"
	        "that is a terminal; Ctrl-C stops it.  Points that would take more\n"
	        "than 10 minutes (estimated in the first seconds) are stopped\n"
	        "there with the count that fits (exit 64).\n",
	        SWEEP_MAX_POINTS);
	static const enum exit_code codes[] = { EXIT_OK_CODE, EXIT_USAGE,
	                                        EXIT_DATA, EXIT_NO_INPUT,
	                                        EXIT_IO };
	exit_status_usage(out, codes, sizeof codes / sizeof codes[0]);
}

/* Parse the command line into A; returns -1 to exit with *CODE. */
static int sweep_parse_args(int argc, char **argv, struct sweep_args *a,
                            int *code)
{
	static const struct option opts[] = {
		{ "param", required_argument, NULL, 'P' },
		{ "from", required_argument, NULL, 'a' },
		{ "to", required_argument, NULL, 'b' },
		{ "points", required_argument, NULL, 'n' },
		{ "log", no_argument, NULL, 'l' },
		{ "format", required_argument, NULL, 'f' },
		{ "set", required_argument, NULL, CLI_OPT_SET },
		{ "help", no_argument, NULL, 'h' },
		{ "version", no_argument, NULL, 'V' },
		{ NULL, 0, NULL, 0 },
	};
	memset(a, 0, sizeof *a);
	a->points = 51;
	optind = 1;
	opterr = 0;
	*code = EXIT_USAGE;
	int c;
	while ((c = getopt_long(argc, argv, ":P:a:b:n:lf:hV", opts, NULL)) != -1) {
		switch (c) {
		case 'P':
			a->param = optarg;
			break;
		case 'a':
			a->from = optarg;
			break;
		case 'b':
			a->to = optarg;
			break;
		case 'n':
			if (cli_parse_count("sweep", "--points", optarg, 1,
			                    SWEEP_MAX_POINTS, &a->points) != 0)
				return -1;
			break;
		case 'l':
			a->log = true;
			break;
		case 'f':
			if (cli_parse_format("sweep", optarg, &a->csv) != 0)
				return -1;
			break;
		case CLI_OPT_SET:
			if (cli_add_set("sweep", &a->sets, optarg) != 0)
				return -1;
			break;
		default:
			*code = cli_shared_option("sweep", c, argv, sweep_usage);
			return -1;
		}
	}
	if (a->param == NULL || a->from == NULL || a->to == NULL) {
		fprintf(stderr, "biasline sweep: --param, --from and --to are "
		        "required (try --help)\n");
		return -1;
	}
	if (optind != argc - 1) {
		fprintf(stderr, "biasline sweep: expected one FILE (try --help)\n");
		return -1;
	}
	a->file = argv[optind];
	*code = EXIT_OK_CODE;
	return 0;
}

/*
 * Print the folds of RES to OUT; for a self-heated PB (with O and the
 * swept R) what each fold is.
 */
static void sweep_print_folds(FILE *out, const char *prefix, const char *key,
                              enum qty_kind unit, const struct sweep_result *res,
                              const struct problem *pb,
                              const struct solve_options *o,
                              const struct paramref *r)
{
	for (size_t k = 0; k < res->nfolds; k++) {
		const struct sweep_fold *f = &res->folds[k];
		char v[48], what[160];
		fprintf(out, "%sfold: %zu -> %zu operating point%s at %s = %s "
		        "(between steps %zu and %zu)\n", prefix, f->n_before,
		        f->n_after, f->n_after == 1 ? "" : "s", key,
		        cli_fmt(v, sizeof v, f->value, unit, 6), f->step - 1, f->step);
		cli_thermal_fold_words(pb, o, r, f->lo, f->hi, what, sizeof what);
		if (what[0] != '\0')
			fprintf(out, "%s  (%s)\n", prefix, what);
	}
}

/*
 * Tj and G of sweep row R of PB (the swept parameter P set to the row's
 * value) into *EV (NaN when not known).
 */
static void sweep_thermal_row(const struct problem *pb,
                              const struct paramref *p,
                              const struct sweep_row *r,
                              struct thermal_eval *ev)
{
	struct problem q = *pb;
	if (paramref_set(&q, p, r->value) != 0 ||
	    thermal_point_info(&q, r->v, r->i, ev) != 0) {
		ev->tj = NAN;
		ev->gain = NAN;
		ev->p = NAN;
	}
}

/*
 * Print to OUT where the circuit jumps between stable branches when the
 * parameter moves slowly up, and down, through the folds of RES, and the
 * hysteresis loop when it jumps both ways.
 */
static void sweep_print_jumps(FILE *out, const char *prefix, const char *key,
                              enum qty_kind unit, const struct problem *pb,
                              const struct session *se,
                              const struct sweep_spec *sp,
                              const struct sweep_result *res)
{
	if (res->nfolds == 0)
		return;
	struct stability_jump up[8], down[8];
	size_t nu = stability_jumps(pb, &se->reactive, sp, res, true, up, 8);
	size_t nd = stability_jumps(pb, &se->reactive, sp, res, false, down, 8);
	for (int pass = 0; pass < 2; pass++) {
		const struct stability_jump *j = pass == 0 ? up : down;
		size_t n = pass == 0 ? nu : nd;
		for (size_t k = 0; k < n; k++) {
			char a[48], v0[48], i0[48], v1[48], i1[48];
			fprintf(out, "%sjump %s: at %s = %s the stable point at %s, %s "
			        "vanishes; the circuit jumps to %s, %s\n", prefix,
			        pass == 0 ? "going up" : "going down", key,
			        cli_fmt(a, sizeof a, j[k].value, unit, 6),
			        cli_fmt(v0, sizeof v0, j[k].v_from, QTY_VOLTAGE, 5),
			        cli_fmt(i0, sizeof i0, j[k].i_from, QTY_CURRENT, 5),
			        cli_fmt(v1, sizeof v1, j[k].v_to, QTY_VOLTAGE, 5),
			        cli_fmt(i1, sizeof i1, j[k].i_to, QTY_CURRENT, 5));
		}
	}
	if (nu > 0 && nd > 0) {
		char a[48], b[48];
		double lo = fmin(up[0].value, down[nd - 1].value);
		double hi = fmax(up[0].value, down[nd - 1].value);
		fprintf(out, "%shysteresis: between %s = %s and %s the circuit sits on "
		        "either branch, the one it came from\n", prefix, key,
		        cli_fmt(a, sizeof a, lo, unit, 6),
		        cli_fmt(b, sizeof b, hi, unit, 6));
	}
}

/* Entry point of `biasline sweep`. */
int cmd_sweep(int argc, char **argv)
{
	struct sweep_args a;
	int code;
	if (sweep_parse_args(argc, argv, &a, &code) != 0)
		return code;
	struct session se;
	struct problem pb;
	if ((code = cli_load_with("sweep", a.file, &a.sets, &se, &pb)) != 0)
		return code;
	struct sweep_spec sp = { .points = (size_t)a.points,
	                         .scale = a.log ? SWEEP_LOG : SWEEP_LINEAR };
	char err[600];
	if (paramref_find(&pb, a.param, &sp.param, err, sizeof err) != 0) {
		fprintf(stderr, "biasline sweep: --param: %s\n", err);
		session_fini(&se);
		return EXIT_USAGE;
	}
	enum qty_kind unit = paramref_unit(&pb, &sp.param);
	if (cli_parse_qty("sweep", "--from", a.from, unit, &sp.from) != 0 ||
	    cli_parse_qty("sweep", "--to", a.to, unit, &sp.to) != 0) {
		session_fini(&se);
		return EXIT_USAGE;
	}
	struct sweep_result res;
	struct cli_progress pr;
	cli_progress_begin(&pr, "biasline sweep", cli_progress_limit());
	int rc = sweep_run_watched(&pb, &se.solver, &sp, &res, &pr.core);
	int sig = cli_progress_end(&pr);
	if (rc != 0 && sig == 0 &&
	    cli_progress_over(&pr, "sweep", a.file, a.points, "points",
	                      "--points")) {
		session_fini(&se);
		return EXIT_USAGE;
	}
	if (rc != 0) {
		fprintf(stderr, "biasline sweep: %s\n", res.message);
		session_fini(&se);
		cli_progress_reraise(sig);
		return EXIT_USAGE;
	}
	const char *key = paramref_key(&pb, &sp.param);
	bool heated = thermal_active(&pb.dev);
	unsigned flags = 0;
	if (a.csv) {
		struct csv w;
		csv_init(&w, stdout);
		csv_column(&w, "step");
		csv_column_unit(&w, key, unit);
		csv_column(&w, "point");
		csv_column(&w, "count");
		csv_column(&w, "voltage_V");
		csv_column(&w, "current_A");
		csv_column(&w, "power_W");
		if (heated) {
			csv_column(&w, "heat_W");
			csv_column(&w, "junction_temperature_C");
			csv_column(&w, "thermal_loop_gain");
		}
		csv_end_row(&w);
		for (size_t k = 0; k < res.nrows; k++) {
			const struct sweep_row *r = &res.rows[k];
			csv_count(&w, r->step);
			csv_number(&w, r->value);
			csv_count(&w, r->index + 1);
			csv_count(&w, r->count);
			csv_number(&w, r->v);
			csv_number(&w, r->i);
			csv_number(&w, r->p);
			if (heated) {
				struct thermal_eval ev;
				sweep_thermal_row(&pb, &sp.param, r, &ev);
				csv_number(&w, ev.p);
				csv_number(&w, ev.tj);
				csv_number(&w, ev.gain);
			}
			csv_end_row(&w);
		}
		code = csv_finish(&w, "sweep");
		sweep_print_folds(stderr, "biasline sweep: ", key, unit, &res, &pb,
		                  &se.solver, &sp.param);
		sweep_print_jumps(stderr, "biasline sweep: ", key, unit, &pb, &se, &sp,
		                  &res);
	} else {
		char a1[48], a2[48], v[48], i[48], p[48];
		printf("%s\n  sweep    %s from %s to %s, %zu %s points\n\n", a.file,
		       key, cli_fmt(a1, sizeof a1, sp.from, unit, 6),
		       cli_fmt(a2, sizeof a2, sp.to, unit, 6), sp.points,
		       a.log ? "logarithmic" : "linear");
		int w = strlen(key) > 14 ? (int)strlen(key) : 14;
		printf("  %-5s %-*s %-5s %-13s %-13s %s\n", "step", w, key, "point",
		       "voltage", "current", heated ? "heat        Tj          G"
		                                     : "power");
		for (size_t k = 0; k < res.nrows; k++) {
			const struct sweep_row *r = &res.rows[k];
			struct thermal_eval ev;
			if (heated)
				sweep_thermal_row(&pb, &sp.param, r, &ev);
			printf("  %-5zu %-*s %zu/%-3zu %-13s %-13s %s", r->step, w,
			       cli_fmt(a1, sizeof a1, r->value, unit, 5), r->index + 1,
			       r->count, cli_fmt(v, sizeof v, r->v, QTY_VOLTAGE, 6),
			       cli_fmt(i, sizeof i, r->i, QTY_CURRENT, 6),
			       cli_fmt(p, sizeof p, heated ? ev.p : r->p, QTY_POWER, 4));
			if (heated) {
				char t[32], g[32];
				printf("%*s%-11s %s", 12 - (int)strlen(p), "",
				       cli_fmt(t, sizeof t, ev.tj, QTY_TEMPERATURE, 5),
				       cli_fmt_number(g, sizeof g, ev.gain, 3, false));
			}
			printf("\n");
		}
		if (res.nfolds > 0)
			printf("\n");
		sweep_print_folds(stdout, "  ", key, unit, &res, &pb, &se.solver,
		                  &sp.param);
		sweep_print_jumps(stdout, "  ", key, unit, &pb, &se, &sp, &res);
	}
	if (res.failed > 0)
		fprintf(stderr, "biasline sweep: %zu of %zu steps have no operating "
		        "point\n", res.failed, sp.points);
	/* The caution covers every step. */
	for (size_t k = 0; k < res.nrows; k++) {
		struct problem q = pb;
		paramref_set(&q, &sp.param, res.rows[k].value);
		flags |= safety_check(&q, res.rows[k].v, res.rows[k].i);
	}
	if (a.csv && flags != 0) {
		char msg[512];
		safety_message(flags, msg, sizeof msg);
		fprintf(stderr, "biasline sweep: %s\n", msg);
	} else if (!a.csv) {
		cli_print_caution(flags, "  ");
	}
	sweep_result_fini(&res);
	session_fini(&se);
	return code;
}
