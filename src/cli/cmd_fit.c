/*
 * cmd_fit.c - `biasline fit --model MODEL --points FILE [SESSION]`: fit a
 * device model's parameters to measured points and print them with their
 * standard errors, correlations and every point's residual, as text, CSV
 * or a device section ready to paste into a session.
 *
 * The points come from a points file (session/points_file.h: the same
 * reader as the measured model's points_file:) or, without --points, from
 * SESSION's own measured points.  SESSION also gives the values the fit
 * holds (a transistor's current gain, a thermistor's dissipation
 * constant) when its device is of the model fitted.  CSV goes through
 * the one writer (csv.h), exit statuses come from exit_status.h.
 */
#include <ctype.h>
#include <getopt.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "cli_analysis.h"
#include "commands.h"
#include "csv.h"
#include "core/fit.h"
#include "core/models/models.h"
#include "session/points_file.h"
#include "session/session_fit.h"
#include "session/session_text.h"

/* Output formats. */
enum fit_format { FIT_TEXT, FIT_CSV, FIT_YAML };

#define FIT_MAX_FIX 16

/* What the command line asked for. */
struct fit_args {
	const char *model, *points, *session;
	const char *fix[FIT_MAX_FIX];
	size_t nfix;
	enum fit_weight weight;
	enum fit_format format;
	bool residuals;
	bool into;              /* write the fit into SESSION */
	struct cli_sets sets;   /* --set KEY=VALUE on SESSION */
};

/* Print the usage of `fit` to OUT. */
static void fit_usage(FILE *out)
{
	char models[200];
	fit_model_list(models, sizeof models);
	fprintf(out,
	        "Usage: biasline fit --model MODEL --points FILE [OPTIONS] [SESSION]\n"
	        "       biasline fit --model MODEL --points FILE --into SESSION\n"
	        "\n"
	        "Fit a device model's parameters to measured points by least\n"
	        "squares (Levenberg-Marquardt) and print each parameter with its\n"
	        "standard error, their correlations, every point's residual, the\n"
	        "RMS error and the degrees of freedom.  The points are (V, I) in\n"
	        "the device's passive sign convention (a zener's breakdown points\n"
	        "are negative), optionally with a third column T in degC (points\n"
	        "at two or more temperatures also fit the diode's bandgap); for\n"
	        "the thermistors they are (T, R).\n"
	        "\n"
	        "Models: %s.\n"
	        "\n"
	        "FILE: one point a line, separated by commas, semicolons or tabs;\n"
	        "'#' starts a comment; an optional header names the columns and\n"
	        "their units, e.g. \"V (V), I (mA)\".  SESSION, when given, holds\n"
	        "the values the fit does not fit (its device's, when the model is\n"
	        "the same); without --points its measured points are fitted.\n"
	        "\n"
	        "Options:\n"
	        "  -m, --model MODEL     the model to fit (default: SESSION's)\n"
	        "  -p, --points FILE     the points file\n"
	        "  -x, --fix KEY=VALUE   hold parameter KEY at VALUE (repeatable),\n"
	        "                        e.g. --fix series_resistance=0\n"
	        "  -w, --weight W        relative (default: residuals in ln I, or\n"
	        "                        ln R; each point by its relative error) or\n"
	        "                        absolute (residuals in A, or ohm)\n"
	        "  -f, --format FMT      text (default), csv (the parameters: key,\n"
	        "                        value, standard error, unit, role and a\n"
	        "                        correlation column per fitted key) or\n"
	        "                        yaml (a device: section ready to use)\n"
	        "  -r, --residuals       with --format csv: the points with their\n"
	        "                        fitted values and residuals instead\n"
	        "  -i, --into            write the fitted device into SESSION,\n"
	        "                        keeping the file's own text (comments,\n"
	        "                        units, order) and recording the fit's\n"
	        "                        points file, RMS error and date in a\n"
	        "                        comment above device:\n"
	        CLI_SET_HELP
	        "                       (on SESSION for this run, before its values\n"
	        "                       are used; not with --into)\n"
	        "  -h, --help            show this help and exit\n"
	        "  -V, --version         show the version and exit\n"
	        "\n"
	        "Points the fit cannot support (too few, a shared V, not monotone,\n"
	        "a parameter they do not determine) exit 65 with the rows or the\n"
	        "parameter to hold.\n",
	        models);
	static const enum exit_code codes[] = { EXIT_OK_CODE, EXIT_USAGE,
	                                        EXIT_DATA, EXIT_NO_INPUT,
	                                        EXIT_SOFTWARE, EXIT_CANT_CREATE,
	                                        EXIT_IO };
	exit_status_usage(out, codes, sizeof codes / sizeof codes[0]);
}

/* Parse the command line into A; returns -1 to exit with *CODE. */
static int fit_parse_args(int argc, char **argv, struct fit_args *a, int *code)
{
	static const struct option opts[] = {
		{ "model", required_argument, NULL, 'm' },
		{ "points", required_argument, NULL, 'p' },
		{ "fix", required_argument, NULL, 'x' },
		{ "weight", required_argument, NULL, 'w' },
		{ "format", required_argument, NULL, 'f' },
		{ "residuals", no_argument, NULL, 'r' },
		{ "into", no_argument, NULL, 'i' },
		{ "set", required_argument, NULL, CLI_OPT_SET },
		{ "help", no_argument, NULL, 'h' },
		{ "version", no_argument, NULL, 'V' },
		{ NULL, 0, NULL, 0 },
	};
	memset(a, 0, sizeof *a);
	optind = 1;
	opterr = 0;
	*code = EXIT_USAGE;
	int c;
	while ((c = getopt_long(argc, argv, ":m:p:x:w:f:rihV", opts, NULL)) != -1) {
		switch (c) {
		case 'm':
			a->model = optarg;
			break;
		case 'p':
			a->points = optarg;
			break;
		case 'x':
			if (a->nfix == FIT_MAX_FIX) {
				fprintf(stderr, "biasline fit: at most %d --fix options\n",
				        FIT_MAX_FIX);
				return -1;
			}
			a->fix[a->nfix++] = optarg;
			break;
		case 'w':
			if (strcmp(optarg, "relative") == 0) {
				a->weight = FIT_WEIGHT_RELATIVE;
			} else if (strcmp(optarg, "absolute") == 0) {
				a->weight = FIT_WEIGHT_ABSOLUTE;
			} else {
				fprintf(stderr, "biasline fit: --weight: '%s' is not "
				        "relative or absolute\n", optarg);
				return -1;
			}
			break;
		case 'f':
			if (strcmp(optarg, "text") == 0) {
				a->format = FIT_TEXT;
			} else if (strcmp(optarg, "csv") == 0) {
				a->format = FIT_CSV;
			} else if (strcmp(optarg, "yaml") == 0) {
				a->format = FIT_YAML;
			} else {
				fprintf(stderr, "biasline fit: --format: '%s' is not text, "
				        "csv or yaml\n", optarg);
				return -1;
			}
			break;
		case 'r':
			a->residuals = true;
			break;
		case 'i':
			a->into = true;
			break;
		case CLI_OPT_SET:
			if (cli_add_set("fit", &a->sets, optarg) != 0)
				return -1;
			break;
		default:
			*code = cli_shared_option("fit", c, argv, fit_usage);
			return -1;
		}
	}
	if (optind < argc - 1) {
		fprintf(stderr, "biasline fit: expected at most one SESSION (try "
		        "--help)\n");
		return -1;
	}
	if (optind == argc - 1)
		a->session = argv[optind];
	if (a->model == NULL && a->session == NULL) {
		fprintf(stderr, "biasline fit: --model is required without a "
		        "SESSION (try --help)\n");
		return -1;
	}
	if (a->points == NULL && a->session == NULL) {
		fprintf(stderr, "biasline fit: --points is required without a "
		        "SESSION (try --help)\n");
		return -1;
	}
	if (a->into && a->session == NULL) {
		fprintf(stderr, "biasline fit: --into needs the SESSION to write "
		        "into (try --help)\n");
		return -1;
	}
	if (a->into && a->sets.n > 0) {
		/* --set changes this run only; --into would write it to the file. */
		fprintf(stderr, "biasline fit: --set changes SESSION for this run "
		        "only, and --into writes SESSION: give one of them\n");
		return -1;
	}
	if (a->residuals && a->format != FIT_CSV) {
		fprintf(stderr, "biasline fit: --residuals goes with --format csv "
		        "(text shows both)\n");
		return -1;
	}
	*code = EXIT_OK_CODE;
	return 0;
}

/* The points fitted, whichever source they came from. */
struct fit_input {
	const char *source;           /* file name for messages */
	struct session_fit_points pts;
	size_t n;
	const double *x, *y, *t;
	const unsigned *line;         /* file line of each row, or NULL */
};

/* Take IN's points from IN->pts. */
static void fit_input_take(struct fit_input *in)
{
	in->n = in->pts.n;
	in->x = in->pts.x;
	in->y = in->pts.y;
	in->t = in->pts.t;
	in->line = in->pts.line;
}

/* Read the points of FILE for TYPE's axes into IN; returns 0 or the exit
 * status after printing why. */
static int fit_read_points(const char *file, const struct model_type *type,
                           struct fit_input *in)
{
	struct session_error err;
	enum session_status st = session_fit_read(file, type, &in->pts, &err);
	if (st != SESSION_OK) {
		char msg[1024];
		session_error_format(&err, msg, sizeof msg);
		fprintf(stderr, "biasline fit: %s\n", msg);
		return (int)cli_exit_from_session(st);
	}
	in->source = file;
	fit_input_take(in);
	return 0;
}

/* Apply one --fix KEY=VALUE to RQ; returns 0 or prints and returns -1. */
static int fit_apply_fix(const char *arg, struct fit_request *rq)
{
	const char *eq = strchr(arg, '=');
	char key[64];
	if (eq == NULL || eq == arg || (size_t)(eq - arg) >= sizeof key) {
		fprintf(stderr, "biasline fit: --fix: '%s' is not KEY=VALUE\n", arg);
		return -1;
	}
	memcpy(key, arg, (size_t)(eq - arg));
	key[eq - arg] = '\0';
	int i = model_param_index(rq->type, key);
	if (i < 0) {
		fprintf(stderr, "biasline fit: --fix: the %s model has no key '%s'; "
		        "its keys:", rq->type->name, key);
		for (size_t k = 0; k < rq->type->nparams; k++)
			fprintf(stderr, "%s %s", k ? "," : "", rq->type->params[k].key);
		fprintf(stderr, "\n");
		return -1;
	}
	const struct model_param *mp = &rq->type->params[i];
	double v;
	char why[200] = "";
	if (qty_parse(eq + 1, mp->kind, &v, why, sizeof why) != QTY_OK ||
	    model_param_check(mp, v, why, sizeof why) != 0) {
		fprintf(stderr, "biasline fit: --fix %s: %s\n", key,
		        why[0] ? why : "not a number");
		return -1;
	}
	rq->p[i] = v;
	rq->fixed[i] = true;
	return 0;
}

/* Significant digits that show VALUE to well inside its standard error. */
static int fit_digits(double value, double se)
{
	if (!(se > 0.0) || !isfinite(se) || value == 0.0)
		return 6;
	int d = (int)ceil(log10(fabs(value) / se)) + 2;
	return d < 3 ? 3 : d > 12 ? 12 : d;
}

/* The kinds of the points' x and y. */
static enum qty_kind fit_xkind(const struct model_type *t)
{
	return fit_model_axes(t) == FIT_AXES_TR ? QTY_TEMPERATURE : QTY_VOLTAGE;
}
static enum qty_kind fit_ykind(const struct model_type *t)
{
	return fit_model_axes(t) == FIT_AXES_TR ? QTY_RESISTANCE : QTY_CURRENT;
}

/* Whether to list parameter I of RES beyond the fitted ones: held by the
 * user, chosen by the fit, or a value different from the default. */
static bool fit_shows(const struct fit_result *res, const bool *fixed, size_t i)
{
	const struct model_param *mp = &res->type->params[i];
	for (size_t j = 0; j < res->nfree; j++)
		if ((size_t)res->idx[j] == i)
			return false;
	if (fixed[i] || res->held_by_fit[i])
		return true;
	double v = res->p[i], d = mp->def;
	return isfinite(v) && !(v == d);
}

/* "relative weighting (residuals in ln I)" for RES. */
static const char *fit_weight_text(const struct fit_result *res)
{
	bool tr = fit_model_axes(res->type) == FIT_AXES_TR;
	if (res->weight == FIT_WEIGHT_RELATIVE)
		return tr ? "relative weighting (residuals in ln R)"
		          : "relative weighting (residuals in ln I)";
	return tr ? "absolute weighting (residuals in ohm)"
	          : "absolute weighting (residuals in A)";
}

/* The RMS error and residual scale of RES as text. */
static void fit_rms_text(const struct fit_result *res, char *buf, size_t n)
{
	char a[48], b[48];
	if (res->weight == FIT_WEIGHT_RELATIVE) {
		snprintf(a, sizeof a, "%.3g %%", 100.0 * res->rms);
		snprintf(b, sizeof b, "%.3g %%", 100.0 * res->sigma);
	} else {
		cli_fmt(a, sizeof a, res->rms, fit_ykind(res->type), 3);
		cli_fmt(b, sizeof b, res->sigma, fit_ykind(res->type), 3);
	}
	if (res->dof > 0)
		snprintf(buf, n, "RMS error %s, residual scale s = %s", a, b);
	else
		snprintf(buf, n, "RMS error %s", a);
}

/* Print RES as text. */
static void fit_print_text(const struct fit_result *res,
                           const struct fit_input *in, const bool *fixed)
{
	const struct model_type *t = res->type;
	printf("%s fitted to %zu point%s of %s, %s\n\n", t->name, res->n,
	       res->n == 1 ? "" : "s", in->source, fit_weight_text(res));
	printf("  %-24s %-16s %s\n", "parameter", "value", "standard error");
	for (size_t j = 0; j < res->nfree; j++) {
		const struct model_param *mp = &t->params[res->idx[j]];
		double v = res->p[res->idx[j]], se = res->se[j];
		char a[48], b[48], rel[32] = "";
		cli_fmt(a, sizeof a, v, mp->kind, fit_digits(v, se));
		if (isfinite(se)) {
			cli_fmt(b, sizeof b, se, mp->kind, 2);
			if (v != 0.0)
				snprintf(rel, sizeof rel, " (%.2g %%)", 100.0 * se / fabs(v));
		} else {
			snprintf(b, sizeof b, "-");
		}
		printf("  %-24s %-16s %s%s\n", mp->key, a, b, rel);
	}
	/* the held keys, wrapped to 78 columns */
	size_t col = 0;
	for (size_t i = 0; i < t->nparams; i++) {
		if (!fit_shows(res, fixed, i))
			continue;
		char a[48], item[160];
		cli_fmt(a, sizeof a, res->p[i], t->params[i].kind, 6);
		snprintf(item, sizeof item, "%s = %s%s", t->params[i].key, a,
		         !res->held_by_fit[i] ? ""
		         : strcmp(t->params[i].key, "temperature") == 0
		           ? " (the points')" : " (chosen by the fit)");
		if (col == 0) {
			col = (size_t)printf("  held: %s", item);
		} else if (col + 2 + strlen(item) > 78) {
			printf(",\n");
			col = (size_t)printf("        %s", item);
		} else {
			col += (size_t)printf(", %s", item);
		}
	}
	if (col > 0)
		printf("\n");
	if (res->nfree > 1 && res->dof > 0) {
		printf("\n  correlation\n");
		for (size_t i = 0; i < res->nfree; i++) {
			printf("  %-24s", t->params[res->idx[i]].key);
			for (size_t j = 0; j <= i; j++)
				printf(" %7.4f", res->corr[i][j]);
			printf("\n");
		}
	}
	enum qty_kind xk = fit_xkind(t), yk = fit_ykind(t);
	bool tr = fit_model_axes(t) == FIT_AXES_TR;
	bool temps = in->t != NULL;
	printf("\n  %4s %5s  %-11s %s%-13s %-13s %-12s %s\n", "row", "line",
	       tr ? "T" : "V", temps ? "T          " : "",
	       tr ? "R measured" : "I measured", tr ? "R fitted" : "I fitted",
	       "residual", "relative");
	for (size_t k = 0; k < res->n; k++) {
		const struct fit_point *fp = &res->points[k];
		char x[48], tt[48] = "", y[48], f[48], r[48];
		cli_fmt(x, sizeof x, fp->x, xk, 5);
		if (temps) {
			char t4[40];
			cli_fmt(t4, sizeof t4, fp->t, QTY_TEMPERATURE, 4);
			snprintf(tt, sizeof tt, "%-10s", t4);
		}
		cli_fmt(y, sizeof y, fp->y, yk, 5);
		cli_fmt(f, sizeof f, fp->fitted, yk, 5);
		cli_fmt(r, sizeof r, fp->resid_abs, yk, 3);
		char ln[16] = "-";
		if (in->line != NULL)
			snprintf(ln, sizeof ln, "%u", in->line[k]);
		printf("  %4zu %5s  %-11s %s%s%-13s %-13s %-12s %+.3g %%\n", k + 1, ln,
		       x, tt, temps ? " " : "", y, f, r, 100.0 * fp->resid_rel);
	}
	char rms[300];
	fit_rms_text(res, rms, sizeof rms);
	printf("\n  N = %zu points, %zu free parameter%s, %d degree%s of "
	       "freedom\n  %s\n", res->n, res->nfree, res->nfree == 1 ? "" : "s",
	       res->dof, res->dof == 1 ? "" : "s", rms);
	if (res->dof > 0)
		printf("  (s: the root of the sum of squares over the degrees of "
		       "freedom; it scales\n  the standard errors)\n");
	if (res->dof == 0)
		printf("  note: no degrees of freedom: the curve passes through every "
		       "point, so the\n  standard errors are unknown; add points or "
		       "hold a parameter (--fix)\n");
	for (size_t i = 0; i < res->nfree; i++)
		for (size_t j = 0; j < i; j++)
			if (res->dof > 0 && fabs(res->corr[i][j]) > 0.999)
				printf("  note: %s and %s are correlated at %.5f: the points "
				       "barely tell\n  them apart; points over a wider range "
				       "would\n", t->params[res->idx[j]].key,
				       t->params[res->idx[i]].key, res->corr[i][j]);
}

/* Print the parameters of RES as one CSV table; returns the exit status. */
static int fit_print_csv(const struct fit_result *res, const bool *fixed)
{
	const struct model_type *t = res->type;
	struct csv w;
	char name[CSV_NAME_MAX];
	csv_init(&w, stdout);
	csv_column(&w, "key");
	csv_column(&w, "value");
	csv_column(&w, "standard_error");
	csv_column(&w, "unit");
	csv_column(&w, "role");
	for (size_t j = 0; j < res->nfree; j++) {
		snprintf(name, sizeof name, "corr_%s", t->params[res->idx[j]].key);
		csv_column(&w, name);
	}
	csv_end_row(&w);
	for (size_t j = 0; j < res->nfree; j++) {
		const struct model_param *mp = &t->params[res->idx[j]];
		csv_text(&w, mp->key);
		csv_number(&w, res->p[res->idx[j]]);
		csv_number(&w, res->se[j]);
		csv_text(&w, qty_unit_ascii(mp->kind));
		csv_text(&w, "fitted");
		for (size_t i = 0; i < res->nfree; i++)
			csv_number(&w, res->dof > 0 ? res->corr[j][i] : NAN);
		csv_end_row(&w);
	}
	for (size_t i = 0; i < t->nparams; i++) {
		if (!fit_shows(res, fixed, i))
			continue;
		csv_text(&w, t->params[i].key);
		csv_number(&w, res->p[i]);
		csv_empty(&w);
		csv_text(&w, qty_unit_ascii(t->params[i].kind));
		csv_text(&w, "held");
		for (size_t j = 0; j < res->nfree; j++)
			csv_empty(&w);
		csv_end_row(&w);
	}
	return csv_finish(&w, "fit");
}

/* Print the points of RES with their residuals as one CSV table; returns
 * the exit status. */
static int fit_print_residuals(const struct fit_result *res,
                               const struct fit_input *in)
{
	enum qty_kind xk = fit_xkind(res->type), yk = fit_ykind(res->type);
	bool tr = fit_model_axes(res->type) == FIT_AXES_TR;
	struct csv w;
	csv_init(&w, stdout);
	csv_column(&w, "row");
	csv_column(&w, "line");
	csv_column_unit(&w, tr ? "temperature" : "voltage", xk);
	if (in->t != NULL)
		csv_column_unit(&w, "temperature", QTY_TEMPERATURE);
	csv_column_unit(&w, tr ? "resistance" : "current", yk);
	csv_column_unit(&w, "fitted", yk);
	csv_column_unit(&w, "residual", yk);
	csv_column(&w, "relative_residual");
	csv_end_row(&w);
	for (size_t k = 0; k < res->n; k++) {
		const struct fit_point *fp = &res->points[k];
		csv_count(&w, k + 1);
		if (in->line != NULL)
			csv_count(&w, in->line[k]);
		else
			csv_empty(&w);
		csv_number(&w, fp->x);
		if (in->t != NULL)
			csv_number(&w, fp->t);
		csv_number(&w, fp->y);
		csv_number(&w, fp->fitted);
		csv_number(&w, fp->resid_abs);
		csv_number(&w, fp->resid_rel);
		csv_end_row(&w);
	}
	return csv_finish(&w, "fit");
}

/* Today's date (YYYY-MM-DD), or SOURCE_DATE_EPOCH's when set, into BUF. */
static void fit_date(char *buf, size_t n)
{
	time_t now = time(NULL);
	const char *sde = getenv("SOURCE_DATE_EPOCH");
	if (sde != NULL && sde[0] != '\0') {
		char *end;
		long long v = strtoll(sde, &end, 10);
		if (*end == '\0')
			now = (time_t)v;
	}
	struct tm tm;
	if (gmtime_r(&now, &tm) == NULL || strftime(buf, n, "%Y-%m-%d", &tm) == 0)
		snprintf(buf, n, "(unknown date)");
}

/* Print RES as a device section with the fit recorded in comments. */
static void fit_print_yaml(const struct fit_result *res,
                           const struct fit_input *in, const bool *fixed)
{
	const struct model_type *t = res->type;
	char date[32], rms[300];
	fit_date(date, sizeof date);
	fit_rms_text(res, rms, sizeof rms);
	printf("# fitted by biasline fit on %s to %zu point%s of %s,\n# %s;\n",
	       date, res->n, res->n == 1 ? "" : "s", in->source,
	       fit_weight_text(res));
	printf("# %s; N = %zu, %d degree%s of freedom\n", rms, res->n, res->dof,
	       res->dof == 1 ? "" : "s");
	printf("device:\n  model: %s\n", t->name);
	for (size_t j = 0; j < res->nfree; j++) {
		const struct model_param *mp = &t->params[res->idx[j]];
		double v = res->p[res->idx[j]], se = res->se[j];
		char a[48], b[48], line[128];
		cli_fmt(a, sizeof a, v, mp->kind, fit_digits(v, se));
		snprintf(line, sizeof line, "  %s: %s", mp->key, a);
		if (isfinite(se))
			printf("%-44s # +- %s (standard error)\n", line,
			       cli_fmt(b, sizeof b, se, mp->kind, 2));
		else
			printf("%-44s # exact through the points: no standard error\n",
			       line);
	}
	for (size_t i = 0; i < t->nparams; i++) {
		if (!fit_shows(res, fixed, i))
			continue;
		char a[48], line[128];
		cli_fmt(a, sizeof a, res->p[i], t->params[i].kind, 6);
		snprintf(line, sizeof line, "  %s: %s", t->params[i].key, a);
		printf("%-44s # held%s\n", line,
		       res->held_by_fit[i] ? " (chosen by the fit, or the points')" : "");
	}
	for (size_t i = 0; i < t->nparams; i++)
		if (isnan(res->p[i]))
			printf("  # %s: required, and not in the points: set it here\n",
			       t->params[i].key);
	/* The points file, as given (device.fitted_to: the front end's
	 * points view reads it); quoted when YAML would read it otherwise. */
	if (in->pts.owned) {
		bool plain = in->source[0] != '\0';
		for (const char *c = in->source; *c != '\0'; c++)
			if (!(isalnum((unsigned char)*c) || strchr("._/-+", *c) != NULL))
				plain = false;
		if (plain && strchr("-.", in->source[0]) == NULL) {
			printf("  fitted_to: %s\n", in->source);
		} else {
			printf("  fitted_to: '");
			for (const char *c = in->source; *c != '\0'; c++)
				printf(*c == '\'' ? "''" : "%c", *c);
			printf("'\n");
		}
	}
}

/* Print a refusal of the fit with where it points in the file. */
static void fit_print_refusal(const struct fit_result *res,
                              const struct fit_input *in)
{
	if (res->bad_point != SIZE_MAX && in->line != NULL)
		fprintf(stderr, "biasline fit: %s:%u: %s\n", in->source,
		        in->line[res->bad_point], res->message);
	else
		fprintf(stderr, "biasline fit: %s: %s\n", in->source, res->message);
	if (res->status == FIT_TOO_FEW || res->status == FIT_UNDETERMINED)
		fprintf(stderr, "biasline fit: hold a parameter with --fix KEY=VALUE\n");
}

/* The three comment lines that record a fit (file, date, weighting, RMS
 * error, N, degrees of freedom) into BUF. */
static void fit_record(const struct fit_result *res, const struct fit_input *in,
                       char *buf, size_t n)
{
	char date[32], rms[300];
	fit_date(date, sizeof date);
	fit_rms_text(res, rms, sizeof rms);
	int o = snprintf(buf, n, "# fitted by biasline fit on %s to %zu point%s "
	                 "of %s,\n# %s;\n# %s; N = %zu, %d degree%s of freedom\n",
	                 date, res->n, res->n == 1 ? "" : "s", in->source,
	                 fit_weight_text(res), rms, res->n, res->dof,
	                 res->dof == 1 ? "" : "s");
	if (res->dof <= 0 || o < 0 || (size_t)o >= n)
		return;
	size_t at = (size_t)o;
	at += (size_t)snprintf(buf + at, n - at, "# standard errors:");
	for (size_t j = 0; j < res->nfree && at < n; j++) {
		const struct model_param *mp = &res->type->params[res->idx[j]];
		char e[48];
		at += (size_t)snprintf(buf + at, n - at, "%s %s %s", j ? "," : "",
		                       mp->key, cli_fmt(e, sizeof e, res->se[j],
		                                        mp->kind, 2));
	}
	if (at < n)
		snprintf(buf + at, n - at, "\n");
}

/* VALUE to the digits shown beside standard error SE (fit_digits): what
 * a session should keep of a fitted number. */
static double fit_round(double value, double se)
{
	char b[48];
	snprintf(b, sizeof b, "%.*g", fit_digits(value, se), value);
	return strtod(b, NULL);
}

/* True when the LEN bytes at S start with PREFIX. */
static bool fit_starts(const char *s, size_t len, const char *prefix)
{
	size_t n = strlen(prefix);
	return len >= n && memcmp(s, prefix, n) == 0;
}

/*
 * Put the fit's record RECORD in the comments right above the top-level
 * device: line of TEXT, in place of an earlier record there.  Only
 * comments change, so the text still reads as the same session.  Returns
 * 1 done, 0 no device: line to put it above, -1 out of memory.
 */
static int fit_put_record(struct session_text *text, const char *record)
{
	const char *b = text->buf;
	size_t len = text->len, dev = SIZE_MAX;
	for (size_t at = 0; at < len;) {
		const char *nl = memchr(b + at, '\n', len - at);
		size_t ll = nl != NULL ? (size_t)(nl - (b + at)) : len - at;
		if (fit_starts(b + at, ll, "device")) {
			size_t k = 6;
			while (k < ll && (b[at + k] == ' ' || b[at + k] == '\t'))
				k++;
			if (k < ll && b[at + k] == ':') {
				dev = at;
				break;
			}
		}
		at += ll + (nl != NULL);
	}
	if (dev == SIZE_MAX)
		return 0;
	/* an earlier record: the comment lines from "# fitted by biasline
	 * fit" down to device: (walking up while the lines are comments) */
	size_t from = dev;
	for (size_t end = dev; end > 0;) {
		size_t ls = end - 1;   /* the '\n' ending the line above */
		while (ls > 0 && b[ls - 1] != '\n')
			ls--;
		size_t ll = end - ls;
		if (!fit_starts(b + ls, ll, "# "))
			break;
		if (fit_starts(b + ls, ll, "# fitted by biasline fit ")) {
			from = ls;
			break;
		}
		end = ls;
	}
	size_t rl = strlen(record);
	size_t nlen = from + rl + (len - dev);
	char *nb = malloc(nlen + 1);
	if (nb == NULL)
		return -1;
	memcpy(nb, b, from);
	memcpy(nb + from, record, rl);
	memcpy(nb + from + rl, b + dev, len - dev);
	nb[nlen] = '\0';
	char *name = text->name;
	text->name = NULL;
	int rc = session_text_set(text, name, nb, nlen);
	free(name);
	free(nb);
	return rc == 0 ? 1 : -1;
}

/*
 * Write the fitted device of RES into the session SE read from PATH with
 * TEXT, keeping the user's text.  Returns the exit status.
 */
static int fit_write_into(struct session *se, struct session_text *text,
                          const char *path, const struct fit_result *res,
                          const struct fit_input *in)
{
	const struct model_type *t = res->type;
	for (size_t i = 0; i < t->nparams; i++)
		if (isnan(res->p[i])) {
			fprintf(stderr, "biasline fit: not written into %s: the %s model "
			        "needs %s, which the points do not give; hold it with "
			        "--fix %s=VALUE\n", path, t->name, t->params[i].key,
			        t->params[i].key);
			return EXIT_DATA;
		}
	struct device dev;
	device_init(&dev, t);
	memcpy(dev.p, res->p, sizeof dev.p);
	for (size_t j = 0; j < res->nfree; j++)
		dev.p[res->idx[j]] = fit_round(res->p[res->idx[j]], res->se[j]);
	char why[512];
	if (device_validate(&dev, why, sizeof why) != 0) {
		fprintf(stderr, "biasline fit: not written into %s: %s\n", path, why);
		return EXIT_DATA;
	}
	bool was_points = se->device.type != t && se->curve != NULL;
	se->device = dev;   /* a measured device's table stays owned by SE */
	/* The points file, for whoever looks at the fit again (the front
	 * end's points view): none when the points were the session's own. */
	char name[1024];
	free(se->fitted_to);
	se->fitted_to = NULL;
	if (in->pts.owned &&
	    session_fitted_name(in->source, path, name, sizeof name) == 0) {
		se->fitted_to = strdup(name);
		if (se->fitted_to == NULL) {
			fprintf(stderr, "biasline fit: out of memory\n");
			return EXIT_SOFTWARE;
		}
	}
	char record[1400];
	fit_record(res, in, record, sizeof record);
	int put = fit_put_record(text, record);
	if (put < 0) {
		fprintf(stderr, "biasline fit: out of memory\n");
		return EXIT_SOFTWARE;
	}
	struct session_error err;
	struct session_save_report rep;
	enum session_status st = session_save_keeping_text(se, text, path, &rep,
	                                                   &err);
	if (st != SESSION_OK) {
		char msg[1024];
		session_error_format(&err, msg, sizeof msg);
		fprintf(stderr, "biasline fit: not written into %s: %s\n", path, msg);
		return (int)cli_exit_from_session(st);
	}
	size_t n = rep.changed + rep.inserted + rep.removed;
	switch (rep.how) {
	case SESSION_SAVED_CANONICAL:
		fprintf(stderr, "biasline fit: %s written in standard form (comments "
		        "below the top are lost): %s\n", path, rep.why);
		break;
	case SESSION_SAVED_UNCHANGED:
		fprintf(stderr, "biasline fit: %s already held this device\n", path);
		break;
	default:
		fprintf(stderr, "biasline fit: wrote the %s device into %s: %zu "
		        "value%s rewritten, the rest kept as written%s\n", t->name,
		        path, n, n == 1 ? "" : "s",
		        put ? "; the fit's record is in a comment above device:"
		            : "");
		break;
	}
	if (was_points)
		fprintf(stderr, "biasline fit: the session's measured points are "
		        "no longer its device; the points file keeps them\n");
	return EXIT_OK_CODE;
}

/* Entry point of `biasline fit`. */
int cmd_fit(int argc, char **argv)
{
	struct fit_args a;
	int code;
	if (fit_parse_args(argc, argv, &a, &code) != 0)
		return code;
	struct session se;
	struct session_text text;
	session_text_init(&text);
	bool have_session = false;
	if (a.session != NULL) {
		struct session_error err;
		enum session_status ls =
			a.into ? session_load_file_text(&se, a.session, &text, &err)
			       : session_load_file(&se, a.session, &err);
		if (ls != SESSION_OK) {
			char msg[1024];
			session_error_format(&err, msg, sizeof msg);
			fprintf(stderr, "biasline fit: %s\n", msg);
			return (int)cli_exit_from_session(ls);
		}
		have_session = true;
		if ((code = cli_apply_sets("fit", a.session, &a.sets, &se)) != 0) {
			session_fini(&se);
			return code;
		}
	} else if (a.sets.n > 0) {
		fprintf(stderr, "biasline fit: --set changes a SESSION: give one\n");
		return EXIT_USAGE;
	}
	const struct model_type *type =
		a.model != NULL ? model_find(a.model) : se.device.type;
	if (type == NULL || !fit_model_supported(type)) {
		char models[200];
		fit_model_list(models, sizeof models);
		fprintf(stderr, "biasline fit: %s '%s' %s; models that can be "
		        "fitted%s: %s\n",
		        a.model != NULL ? "--model" : "the session's model",
		        a.model != NULL ? a.model : type->name,
		        type == NULL ? "is not a model" : "cannot be fitted",
		        a.model != NULL ? "" : " (give one with --model)", models);
		if (have_session)
			session_fini(&se);
		session_text_fini(&text);
		return EXIT_USAGE;
	}
	struct fit_request rq;
	session_fit_request(have_session ? &se : NULL, type, a.weight, &rq);
	for (size_t k = 0; k < a.nfix; k++)
		if (fit_apply_fix(a.fix[k], &rq) != 0) {
			if (have_session)
				session_fini(&se);
			session_text_fini(&text);
			return EXIT_USAGE;
		}

	struct fit_input in = { 0 };
	if (a.points != NULL) {
		code = fit_read_points(a.points, type, &in);
		if (code != 0) {
			if (have_session)
				session_fini(&se);
			session_text_fini(&text);
			return code;
		}
	} else if (session_fit_own(&se, type, &in.pts) == 0) {
		in.source = a.session;
		fit_input_take(&in);
	} else {
		fprintf(stderr, "biasline fit: %s has no measured points to fit "
		        "(a measured device's points: or points_file:); give "
		        "--points FILE\n", a.session);
		session_fini(&se);
		session_text_fini(&text);
		return EXIT_USAGE;
	}
	session_fit_use(&rq, &in.pts);

	struct fit_result res;
	enum fit_status st = fit_run(&rq, &res);
	code = EXIT_OK_CODE;
	if (st != FIT_OK) {
		fit_print_refusal(&res, &in);
		code = st == FIT_NO_MEMORY ? EXIT_SOFTWARE : EXIT_DATA;
	} else if (a.format == FIT_CSV) {
		code = a.residuals ? fit_print_residuals(&res, &in)
		                   : fit_print_csv(&res, rq.fixed);
	} else if (a.format == FIT_YAML) {
		fit_print_yaml(&res, &in, rq.fixed);
	} else {
		fit_print_text(&res, &in, rq.fixed);
	}
	if (code == EXIT_OK_CODE && a.into)
		code = fit_write_into(&se, &text, a.session, &res, &in);
	fit_result_fini(&res);
	session_text_fini(&text);
	session_fit_points_fini(&in.pts);
	if (have_session)
		session_fini(&se);
	/* a failed write is reported by cli_finish_output (main.c) */
	return code;
}
