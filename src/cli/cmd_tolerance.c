/*
 * cmd_tolerance.c - `biasline tolerance FILE`: the worst case over the
 * session's tolerances, a seeded Monte Carlo run with percentiles, a
 * histogram and the yield, and the parts' ratings at the worst case.
 */
#include <getopt.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include "cli_analysis.h"
#include "cli_plot.h"
#include "cli_progress.h"
#include "commands.h"
#include "csv.h"
#include "core/safety.h"
#include "core/stability.h"
#include "core/tolerance.h"
#include "core/verdict.h"

/* What the command line asked for. */
struct tolerance_args {
	bool csv;
	unsigned long long trials, seed, bins;
	struct cli_sets sets;   /* --set KEY=VALUE */
	const char *file;
};

/* Print the usage of `tolerance` to OUT. */
static void tolerance_usage(FILE *out)
{
	fprintf(out,
	        "Usage: biasline tolerance [OPTIONS] FILE\n"
	        "\n"
	        "Vary the parameters within the session's tolerances: section and\n"
	        "report the worst case (every corner, and inside the box where the\n"
	        "extreme is not at a corner) of the device current, voltage, device\n"
	        "power and resistor power, then a seeded Monte Carlo run with mean,\n"
	        "standard deviation, percentiles, a histogram and the yield against\n"
	        "the target's current_min/max and voltage_min/max.  The ratings are\n"
	        "checked at the worst case.\n"
	        "\n"
	        "Options:\n"
	        "  -n, --trials N     Monte Carlo trials, 0 to %d (default 10000;\n"
	        "                     0: worst case only)\n"
	        "  -s, --seed S       generator seed (default 1); the same seed gives\n"
	        "                     the same numbers on every platform\n"
	        "  -b, --bins B       histogram bins, 1 to %d (default 20)\n"
	        "  -f, --format FMT   text (default) or csv (rows: section,output,\n"
	        "                     name,value)\n"
	        CLI_SET_HELP
	        "  -h, --help         show this help and exit\n"
	        "  -V, --version      show the version and exit\n"
	        "\n"
	        "A run over a second shows its progress on standard error when\n"
	        "that is a terminal; Ctrl-C stops it.  Trials that would take more\n"
	        "than 10 minutes (estimated in the first seconds) are stopped\n"
	        "there with the count that fits (exit 64).\n"
	        "A session without a tolerances: section is bad data (65); no\n"
	        "operating point at the nominal values is exit 3.\n",
	        TOL_MAX_TRIALS, TOL_MAX_BINS);
	static const enum exit_code codes[] = { EXIT_OK_CODE, EXIT_NO_POINT,
	                                        EXIT_USAGE, EXIT_DATA,
	                                        EXIT_NO_INPUT, EXIT_IO };
	exit_status_usage(out, codes, sizeof codes / sizeof codes[0]);
}

/* Parse the command line into A; returns -1 to exit with *CODE. */
static int tolerance_parse_args(int argc, char **argv, struct tolerance_args *a,
                                int *code)
{
	static const struct option opts[] = {
		{ "trials", required_argument, NULL, 'n' },
		{ "seed", required_argument, NULL, 's' },
		{ "bins", required_argument, NULL, 'b' },
		{ "format", required_argument, NULL, 'f' },
		{ "set", required_argument, NULL, CLI_OPT_SET },
		{ "help", no_argument, NULL, 'h' },
		{ "version", no_argument, NULL, 'V' },
		{ NULL, 0, NULL, 0 },
	};
	memset(a, 0, sizeof *a);
	a->trials = CLI_MC_TRIALS;
	a->seed = CLI_MC_SEED;
	a->bins = CLI_MC_BINS;
	optind = 1;
	opterr = 0;
	*code = EXIT_USAGE;
	int c;
	while ((c = getopt_long(argc, argv, ":n:s:b:f:hV", opts, NULL)) != -1) {
		switch (c) {
		case 'n':
			if (cli_parse_count("tolerance", "--trials", optarg, 0,
			                    TOL_MAX_TRIALS, &a->trials) != 0)
				return -1;
			break;
		case 's':
			if (cli_parse_count("tolerance", "--seed", optarg, 0,
			                    UINT64_MAX, &a->seed) != 0)
				return -1;
			break;
		case 'b':
			if (cli_parse_count("tolerance", "--bins", optarg, 1, TOL_MAX_BINS,
			                    &a->bins) != 0)
				return -1;
			break;
		case 'f':
			if (cli_parse_format("tolerance", optarg, &a->csv) != 0)
				return -1;
			break;
		case CLI_OPT_SET:
			if (cli_add_set("tolerance", &a->sets, optarg) != 0)
				return -1;
			break;
		default:
			*code = cli_shared_option("tolerance", c, argv, tolerance_usage);
			return -1;
		}
	}
	if (optind != argc - 1) {
		fprintf(stderr, "biasline tolerance: expected one FILE (try --help)\n");
		return -1;
	}
	a->file = argv[optind];
	*code = EXIT_OK_CODE;
	return 0;
}

/* The unit of output O. */
static enum qty_kind tolerance_unit(enum tol_output o)
{
	return o == TOL_CURRENT ? QTY_CURRENT
	       : o == TOL_VOLTAGE ? QTY_VOLTAGE : QTY_POWER;
}

/* The CSV name of output O ("current_A"). */
static const char *tolerance_column(char *buf, size_t n, enum tol_output o)
{
	return csv_column_name(buf, n, tol_output_name(o), tolerance_unit(o));
}

/* Print the parameters of extreme E ("vs = 21.3 V, rs = 2.31 kohm"). */
static void tolerance_print_at(const struct tol_case *c,
                               const struct tol_extreme *e)
{
	for (size_t k = 0; k < c->nitems; k++) {
		char v[48];
		const struct paramref *r = &c->items[k].param;
		printf("%s%s = %s", k ? ", " : "", paramref_key(&c->pb, r),
		       cli_fmt(v, sizeof v, e->params[k], paramref_unit(&c->pb, r), 5));
	}
	printf("%s\n", e->interior ? "  (inside the box)" : "");
}

/* Print everything as text. */
static void tolerance_print_text(const char *file, const struct tol_case *c,
                                 const char *fold,
                                 const struct tol_worst *w,
                                 const struct tol_mc *mc,
                                 const struct tol_window *win, size_t nwin,
                                 const struct session *se)
{
	char a[48], b[48], d[48];
	int kw = 20; /* wide enough for most keys; network parts may be longer */
	for (size_t k = 0; k < c->nitems; k++) {
		int len = (int)strlen(paramref_key(&c->pb, &c->items[k].param));
		if (len > kw)
			kw = len;
	}
	printf("%s\n  tolerances\n    %-*s %-13s %-13s %-13s %s\n", file, kw, "",
	       "nominal", "minimum", "maximum", "distribution");
	for (size_t k = 0; k < c->nitems; k++) {
		const struct tol_item *it = &c->items[k];
		enum qty_kind u = paramref_unit(&c->pb, &it->param);
		printf("    %-*s %-13s %-13s %-13s %s\n", kw,
		       paramref_key(&c->pb, &it->param),
		       cli_fmt(d, sizeof d, paramref_get(&c->pb, &it->param), u, 5),
		       cli_fmt(a, sizeof a, it->lo, u, 5),
		       cli_fmt(b, sizeof b, it->hi, u, 5), tol_dist_name(it->dist));
	}
	if (w == NULL) {
		printf("\n  worst case skipped: more than %d tolerances (the Monte "
		       "Carlo extremes below are observations, not bounds)\n",
		       TOL_MAX_CORNER_ITEMS);
		goto monte_carlo;
	}
	printf("\n  worst case (%zu corners", w->corners);
	if (w->failed)
		printf(", %zu without an operating point", w->failed);
	printf(")\n");
	if (fold != NULL)
		printf("  %s\n", fold);
	printf("  %-16s %-13s %-13s %s\n", "", "nominal", "minimum", "maximum");
	for (int o = 0; o < TOL_NOUT; o++) {
		enum qty_kind u = tolerance_unit((enum tol_output)o);
		if (isnan(w->nominal[o])) {
			printf("  %-16s %s\n", tol_output_name((enum tol_output)o),
			       CLI_UNDEFINED);
			continue;
		}
		printf("  %-16s %-13s %-13s %s\n", tol_output_name((enum tol_output)o),
		       cli_fmt(a, sizeof a, w->nominal[o], u, 5),
		       cli_fmt(b, sizeof b, w->min[o].value, u, 5),
		       cli_fmt(d, sizeof d, w->max[o].value, u, 5));
	}
	for (int o = 0; o < TOL_NOUT; o += 3) {
		printf("  %s min at: ", tol_output_name((enum tol_output)o));
		tolerance_print_at(c, &w->min[o]);
		printf("  %s max at: ", tol_output_name((enum tol_output)o));
		tolerance_print_at(c, &w->max[o]);
	}
	/* The ratings at the worst case: each part at its own extreme. */
	const struct ratings *rt = &se->analysis.ratings;
	struct verdict vd;
	double im = fmax(fabs(w->min[TOL_CURRENT].value),
	                 fabs(w->max[TOL_CURRENT].value));
	double pd = fmax(fabs(w->min[TOL_DEVICE_POWER].value),
	                 fabs(w->max[TOL_DEVICE_POWER].value));
	/* A network's equivalent resistance is no physical part: rate none. */
	double pr = se->network != NULL ? NAN : w->max[TOL_RESISTOR_POWER].value;
	verdict_worst(pd, im, pr, c->form == SOURCE_NORTON ? "RP" : "RS", rt, &vd);
	printf("\n  ratings at worst (each part at its own extreme)\n");
	for (size_t k = 0; k < vd.nlines; k++)
		printf("    %s\n", vd.lines[k].words);
	if (se->network != NULL)
		printf("    the source is a network: its resistors' powers are not "
		       "the equivalent's;\n    check each one with 'biasline reduce "
		       "--nodes'\n");
monte_carlo:
	if (mc == NULL)
		return;
	printf("\n  Monte Carlo: %zu trials", mc->trials);
	if (mc->failed)
		printf(" (%zu without an operating point)", mc->failed);
	printf("\n  %-16s %-12s %-12s %-12s %-12s %s\n", "", "mean", "std dev",
	       "0.135 %", "median", "99.865 %");
	for (int o = 0; o < TOL_NOUT; o++) {
		enum qty_kind u = tolerance_unit((enum tol_output)o);
		const struct tol_stats *s = &mc->stats[o];
		char e1[48], e2[48];
		if (isnan(s->mean)) {
			printf("  %-16s %s\n", tol_output_name((enum tol_output)o),
			       CLI_UNDEFINED);
			continue;
		}
		printf("  %-16s %-12s %-12s %-12s %-12s %s\n",
		       tol_output_name((enum tol_output)o),
		       cli_fmt(a, sizeof a, s->mean, u, 5),
		       cli_fmt(b, sizeof b, s->sd, u, 3),
		       cli_fmt(d, sizeof d, s->pct[0], u, 5),
		       cli_fmt(e1, sizeof e1, s->pct[3], u, 5),
		       cli_fmt(e2, sizeof e2, s->pct[TOL_NPCT - 1], u, 5));
	}
	/* The histogram of the current, drawn from the counts. */
	const struct tol_hist *h = &mc->hist[TOL_CURRENT];
	size_t top = 1;
	for (size_t k = 0; k < h->nbins; k++)
		if (h->counts[k] > top)
			top = h->counts[k];
	printf("\n  current histogram\n");
	for (size_t k = 0; k < h->nbins; k++) {
		double lo = h->lo + (h->hi - h->lo) * (double)k / (double)h->nbins;
		int bar = (int)(40.0 * (double)h->counts[k] / (double)top + 0.5);
		printf("  %12s |%-40.*s %zu\n", cli_fmt(a, sizeof a, lo, QTY_CURRENT, 4),
		       bar, "########################################", h->counts[k]);
	}
	if (nwin > 0) {
		char y[32];
		printf("\n  yield %s %% (%zu of %zu trials) inside",
		       cli_fmt_number(y, sizeof y, 100.0 * mc->yield, 4, false),
		       mc->inside, mc->trials);
		for (size_t k = 0; k < nwin; k++) {
			enum qty_kind u = tolerance_unit(win[k].output);
			const char *name = tol_output_name(win[k].output);
			cli_fmt(a, sizeof a, win[k].lo, u, 5);
			cli_fmt(b, sizeof b, win[k].hi, u, 5);
			printf("%s ", k ? " and" : "");
			/* A window open on one side has no bound there. */
			if (isnan(win[k].lo))
				printf("%s at most %s", name, b);
			else if (isnan(win[k].hi))
				printf("%s at least %s", name, a);
			else
				printf("%s %s ... %s", name, a, b);
		}
		printf("\n");
	}
}

/* One CSV row SECTION,OUTPUT,NAME,VALUE. */
static void tolerance_csv_row(struct csv *w, const char *section,
                              const char *output, const char *name,
                              double value)
{
	csv_text(w, section);
	csv_text(w, output);
	csv_text(w, name);
	csv_number(w, value);
	csv_end_row(w);
}

/*
 * Print everything as CSV rows section,output,name,value; returns the
 * table's exit status.
 */
static int tolerance_print_csv(const struct tol_case *c,
                               const struct tol_worst *w,
                               const struct tol_mc *mc)
{
	char col[64], nm[PARAMREF_KEY_MAX + 32];
	struct csv t;
	csv_init(&t, stdout);
	csv_column(&t, "section");
	csv_column(&t, "output");
	csv_column(&t, "name");
	csv_column(&t, "value");
	csv_end_row(&t);
	for (int o = 0; o < TOL_NOUT && w != NULL; o++) {
		tolerance_column(col, sizeof col, (enum tol_output)o);
		tolerance_csv_row(&t, "nominal", col, "value", w->nominal[o]);
		const struct tol_extreme *ex[2] = { &w->min[o], &w->max[o] };
		for (int m = 0; m < 2; m++) {
			const char *mm = m ? "max" : "min";
			tolerance_csv_row(&t, "worst_case", col, mm, ex[m]->value);
			snprintf(nm, sizeof nm, "%s_inside", mm);
			tolerance_csv_row(&t, "worst_case", col, nm,
			                  ex[m]->interior ? 1.0 : 0.0);
			for (size_t k = 0; k < c->nitems; k++) {
				snprintf(nm, sizeof nm, "%s_at_%s", mm,
				         paramref_key(&c->pb, &c->items[k].param));
				tolerance_csv_row(&t, "worst_case", col, nm,
				                  ex[m]->params[k]);
			}
		}
	}
	if (mc != NULL) {
		tolerance_csv_row(&t, "monte_carlo", "all", "trials",
		                  (double)mc->trials);
		tolerance_csv_row(&t, "monte_carlo", "all", "failed",
		                  (double)mc->failed);
		for (int o = 0; o < TOL_NOUT; o++) {
			const struct tol_stats *s = &mc->stats[o];
			tolerance_column(col, sizeof col, (enum tol_output)o);
			tolerance_csv_row(&t, "monte_carlo", col, "mean", s->mean);
			tolerance_csv_row(&t, "monte_carlo", col, "sd", s->sd);
			tolerance_csv_row(&t, "monte_carlo", col, "min", s->min);
			tolerance_csv_row(&t, "monte_carlo", col, "max", s->max);
			for (int p = 0; p < TOL_NPCT; p++) {
				snprintf(nm, sizeof nm, "p%g", tol_percentiles[p]);
				tolerance_csv_row(&t, "monte_carlo", col, nm, s->pct[p]);
			}
			const struct tol_hist *h = &mc->hist[o];
			char edge[48];
			for (size_t k = 0; k < h->nbins; k++) {
				double lo = h->lo + (h->hi - h->lo) * (double)k /
				                    (double)h->nbins;
				csv_format_number(edge, sizeof edge, lo);
				tolerance_csv_row(&t, "histogram", col, edge,
				                  (double)h->counts[k]);
			}
			tolerance_csv_row(&t, "histogram", col, "upper_edge", h->hi);
		}
		if (mc->has_window) {
			tolerance_csv_row(&t, "yield", "all", "inside",
			                  (double)mc->inside);
			tolerance_csv_row(&t, "yield", "all", "fraction", mc->yield);
		}
	}
	return csv_finish(&t, "tolerance");
}

/* Entry point of `biasline tolerance`. */
int cmd_tolerance(int argc, char **argv)
{
	struct tolerance_args a;
	int code;
	if (tolerance_parse_args(argc, argv, &a, &code) != 0)
		return code;
	struct session se;
	struct problem pb;
	if ((code = cli_load_with("tolerance", a.file, &a.sets, &se, &pb)) != 0)
		return code;
	struct tol_case c;
	struct tol_worst w;
	struct tol_mc mc;
	char err[600], fold[400];
	bool folded = false;
	code = EXIT_OK_CODE;
	if (se.analysis.ntol == 0) {
		fprintf(stderr, "biasline tolerance: %s: no tolerances: section "
		        "(e.g. tolerances: {rs: 5%%, vs: 10%%})\n", a.file);
		code = EXIT_DATA;
	} else if (session_tolerance_case(&se, &pb, &c, err, sizeof err) != 0) {
		fprintf(stderr, "biasline tolerance: %s: %s\n", a.file, err);
		code = EXIT_DATA;
	} else if (c.nitems > TOL_MAX_CORNER_ITEMS && a.trials == 0) {
		fprintf(stderr, "biasline tolerance: %s: more than %d tolerances: "
		        "the worst case cannot run; give --trials\n", a.file,
		        TOL_MAX_CORNER_ITEMS);
		code = EXIT_USAGE;
	} else if (c.nitems <= TOL_MAX_CORNER_ITEMS) {
		struct cli_progress pr;
		cli_progress_begin(&pr, "biasline tolerance: worst case", 0.0);
		int rc = tol_worst_case_watched(&c, &w, &pr.core, err, sizeof err);
		int sig = cli_progress_end(&pr);
		if (rc != 0) {
			fprintf(stderr, "biasline tolerance: %s: %s\n", a.file, err);
			session_fini(&se);
			cli_progress_reraise(sig);
			return EXIT_NO_POINT;
		}
		/* Several points somewhere in the box (said in the text). */
		if (!a.csv) {
			cli_progress_begin(&pr, "biasline tolerance: folds", 0.0);
			folded = stability_box_fold_watched(&c, fold, sizeof fold,
			                                    &pr.core);
			sig = cli_progress_end(&pr);
			if (sig != 0) {
				fprintf(stderr, "biasline tolerance: %s: stopped while "
				        "looking for folds in the box\n", a.file);
				session_fini(&se);
				cli_progress_reraise(sig);
				return EXIT_NO_POINT;
			}
		}
	}
	if (code != EXIT_OK_CODE) {
		session_fini(&se);
		return code;
	}
	struct tol_window win[2];
	size_t nwin = session_target_windows(&se, win);
	bool have_mc = a.trials > 0;
	if (have_mc) {
		struct cli_progress pr;
		cli_progress_begin(&pr, "biasline tolerance: Monte Carlo",
		                   cli_progress_limit());
		int rc = tol_monte_carlo_watched(&c, (size_t)a.trials, a.seed,
		                                 (size_t)a.bins, win, nwin, &mc,
		                                 &pr.core, err, sizeof err);
		int sig = cli_progress_end(&pr);
		if (rc != 0 && sig == 0 &&
		    cli_progress_over(&pr, "tolerance", a.file, a.trials,
		                      "Monte Carlo trials", "--trials")) {
			session_fini(&se);
			return EXIT_USAGE;
		}
		if (rc != 0) {
			fprintf(stderr, "biasline tolerance: %s: %s\n", a.file, err);
			session_fini(&se);
			cli_progress_reraise(sig);
			return EXIT_NO_POINT;
		}
	}
	const struct tol_worst *wp = c.nitems <= TOL_MAX_CORNER_ITEMS ? &w : NULL;
	const struct tol_mc *mp = have_mc ? &mc : NULL;
	unsigned flags = tol_safety(&c, wp, mp);
	if (a.csv) {
		code = tolerance_print_csv(&c, wp, mp);
		if (flags != 0) {
			char msg[512];
			safety_message(flags, msg, sizeof msg);
			fprintf(stderr, "biasline tolerance: %s\n", msg);
		}
	} else {
		tolerance_print_text(a.file, &c, folded ? fold : NULL, wp, mp, win,
		                     nwin, &se);
		cli_print_network_note(&se, "  ");
		cli_print_caution(flags, "  ");
	}
	session_fini(&se);
	return code;
}
