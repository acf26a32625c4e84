/*
 * cmd_design.c - `biasline design FILE`: the series resistance (or source
 * voltage) that puts the device at a target current, voltage or power,
 * the standard values either side, what each gives, and the power in the
 * parts against their ratings (core/verdict.h's words); with --worst-case
 * each row's worst case over the session's tolerances.
 */
#include <getopt.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "cli_analysis.h"
#include "cli_progress.h"
#include "commands.h"
#include "csv.h"
#include "core/design.h"
#include "core/safety.h"
#include "core/verdict.h"

/* What the command line asked for. */
struct design_args {
	bool csv, worst;
	bool have_target, have_series, have_unknown;
	struct cli_sets sets;   /* --set KEY=VALUE */
	int stage;              /* a transistor stage's target (design_stage) */
	struct design_request rq;
	const char *part;       /* --solve-for source.network.NAME, or NULL */
	const char *file;
};

/* Print the usage of `design` to OUT. */
static void design_usage(FILE *out)
{
	fprintf(out,
	        "Usage: biasline design [OPTIONS] FILE\n"
	        "\n"
	        "Find the series resistance RS (or the source voltage VS) that puts\n"
	        "the device at a target current, voltage or power; show the nearest\n"
	        "standard resistors below and above the exact value with the point,\n"
	        "the error from the target and the power each gives, checked against\n"
	        "the session's ratings; the standard value nearer the target is\n"
	        "marked.  A target below zero is a point in the third quadrant: a\n"
	        "Zener shunt's reverse current on a negative source (-5m).\n"
	        "\n"
	        "Options:\n"
	        "  -c, --current I      target device current (12m, 12 mA; -5m reverse)\n"
	        "  -v, --voltage V      target device voltage\n"
	        "  -p, --power P        target device power\n"
	        "      --collector-current I  a transistor stage's (npn, pnp)\n"
	        "                       collector current\n"
	        "      --vce V          its collector-emitter voltage (VEC for a pnp)\n"
	        "      --drain-current I  a FET stage's (jfet, nmos) drain current\n"
	        "                       (one target; default: the session's target\n"
	        "                       section)\n"
	        "  -s, --series E       E6, E12, E24, E48, E96 or E192 (default E24)\n"
	        "  -S, --solve-for X    rs (default), vs, for a network source the\n"
	        "                       part to design (source.network.NAME, such\n"
	        "                       as a base divider's upper resistor), or a\n"
	        "                       device parameter (emitter_resistance)\n"
	        "  -w, --worst-case     also each row's worst case over the session's\n"
	        "                       tolerances: the current (nominal, min, max),\n"
	        "                       the largest resistor power, its verdict\n"
	        "                       against the ratings and the standard power\n"
	        "                       rating that fits\n"
	        "  -f, --format FMT     text (default) or csv\n"
	        CLI_SET_HELP
	        "  -h, --help           show this help and exit\n"
	        "  -V, --version        show the version and exit\n"
	        "\n"
	        "With --worst-case, a session without tolerances is bad data (65).\n");
	static const enum exit_code codes[] = { EXIT_OK_CODE, EXIT_NO_POINT,
	                                        EXIT_USAGE, EXIT_DATA,
	                                        EXIT_NO_INPUT, EXIT_IO };
	exit_status_usage(out, codes, sizeof codes / sizeof codes[0]);
}

/* The targets of a transistor stage (long options only). */
enum design_stage {
	STAGE_NONE,
	STAGE_COLLECTOR = 0x600, /* --collector-current */
	STAGE_VCE,               /* --vce */
	STAGE_DRAIN,             /* --drain-current */
};

/* Set the target kind K from option text ARG; -1 when bad or repeated. */
static int design_set_target(struct design_args *a, enum design_target k,
                             enum qty_kind unit, const char *opt,
                             const char *arg)
{
	if (a->have_target) {
		fprintf(stderr, "biasline design: give one of --current, --voltage, "
		        "--power, --collector-current, --vce or --drain-current\n");
		return -1;
	}
	if (cli_parse_qty("design", opt, arg, unit, &a->rq.value) != 0)
		return -1;
	a->rq.target = k;
	a->have_target = true;
	return 0;
}

/*
 * Turn a transistor stage's target into RQ for PB's model: the collector
 * current and VCE (VEC for a pnp) are the model's own results; a FET's
 * drain current is its device current.  Prints and returns -1 when the
 * model has no such side.
 */
static int design_stage_target(int stage, const struct problem *pb,
                               struct design_request *rq, const char *file)
{
	const char *m = pb->dev.type->name;
	bool bjt = strcmp(m, "npn") == 0 || strcmp(m, "pnp") == 0;
	bool fet = strcmp(m, "jfet") == 0 || strcmp(m, "nmos") == 0;
	const char *opt = stage == STAGE_COLLECTOR ? "--collector-current"
	                  : stage == STAGE_VCE     ? "--vce"
	                                           : "--drain-current";
	if ((stage == STAGE_DRAIN && !fet) || (stage != STAGE_DRAIN && !bjt)) {
		fprintf(stderr, "biasline design: %s: %s needs %s device, not %s\n",
		        file, opt, stage == STAGE_DRAIN ? "a jfet or nmos"
		                                        : "an npn or pnp", m);
		return -1;
	}
	if (stage == STAGE_DRAIN) {
		rq->target = DESIGN_CURRENT; /* the gate loop carries ID */
		return 0;
	}
	rq->target = DESIGN_RESULT;
	snprintf(rq->result, sizeof rq->result, "%s",
	         stage == STAGE_COLLECTOR ? "collector_current"
	         : strcmp(m, "pnp") == 0  ? "emitter_collector_voltage"
	                                  : "collector_emitter_voltage");
	return 0;
}

/* Parse the command line into A; returns -1 to exit with *CODE. */
static int design_parse_args(int argc, char **argv, struct design_args *a,
                             int *code)
{
	static const struct option opts[] = {
		{ "current", required_argument, NULL, 'c' },
		{ "voltage", required_argument, NULL, 'v' },
		{ "power", required_argument, NULL, 'p' },
		{ "collector-current", required_argument, NULL, STAGE_COLLECTOR },
		{ "vce", required_argument, NULL, STAGE_VCE },
		{ "drain-current", required_argument, NULL, STAGE_DRAIN },
		{ "series", required_argument, NULL, 's' },
		{ "solve-for", required_argument, NULL, 'S' },
		{ "format", required_argument, NULL, 'f' },
		{ "worst-case", no_argument, NULL, 'w' },
		{ "set", required_argument, NULL, CLI_OPT_SET },
		{ "help", no_argument, NULL, 'h' },
		{ "version", no_argument, NULL, 'V' },
		{ NULL, 0, NULL, 0 },
	};
	memset(a, 0, sizeof *a);
	a->rq.series = ESERIES_E24;
	a->rq.unknown = DESIGN_FOR_RS;
	optind = 1;
	opterr = 0;
	*code = EXIT_USAGE;
	int c;
	while ((c = getopt_long(argc, argv, ":c:v:p:s:S:f:whV", opts, NULL)) != -1) {
		switch (c) {
		case 'c':
		case 'v':
		case 'p':
			if (design_set_target(a, c == 'c' ? DESIGN_CURRENT
			                         : c == 'v' ? DESIGN_VOLTAGE
			                                    : DESIGN_POWER,
			                      c == 'c' ? QTY_CURRENT
			                      : c == 'v' ? QTY_VOLTAGE : QTY_POWER,
			                      argv[optind - 1], optarg) != 0)
				return -1;
			break;
		case STAGE_COLLECTOR:
		case STAGE_VCE:
		case STAGE_DRAIN:
			if (design_set_target(a, DESIGN_CURRENT,
			                      c == STAGE_VCE ? QTY_VOLTAGE : QTY_CURRENT,
			                      argv[optind - 1], optarg) != 0)
				return -1;
			a->stage = c;
			break;
		case 's':
			if (eseries_from_name(optarg, &a->rq.series) != 0) {
				fprintf(stderr, "biasline design: --series: '%s' is not E6, "
				        "E12, E24, E48, E96 or E192\n", optarg);
				return -1;
			}
			a->have_series = true;
			break;
		case 'S':
			if (strcmp(optarg, "rs") == 0) {
				a->rq.unknown = DESIGN_FOR_RS;
			} else if (strcmp(optarg, "vs") == 0) {
				a->rq.unknown = DESIGN_FOR_VS;
			} else {
				/* A network part or a device parameter, looked up
				 * once the session is loaded. */
				a->rq.unknown = DESIGN_FOR_PART;
				a->part = optarg;
			}
			a->have_unknown = true;
			break;
		case 'f':
			if (cli_parse_format("design", optarg, &a->csv) != 0)
				return -1;
			break;
		case 'w':
			a->worst = true;
			break;
		case CLI_OPT_SET:
			if (cli_add_set("design", &a->sets, optarg) != 0)
				return -1;
			break;
		default:
			*code = cli_shared_option("design", c, argv, design_usage);
			return -1;
		}
	}
	if (optind != argc - 1) {
		fprintf(stderr, "biasline design: expected one FILE (try --help)\n");
		return -1;
	}
	a->file = argv[optind];
	*code = EXIT_OK_CODE;
	return 0;
}

/* The verdict at one row's point, for the session's form and target. */
static void design_row_verdict(const struct problem *pb,
                               const struct design_request *rq,
                               const struct ratings *rt,
                               const struct design_row *r, struct verdict *vd)
{
	struct problem q;
	if (design_apply_request(pb, rq, r->value, &q) != 0)
		q = *pb;
	verdict_at(&q, SOURCE_THEVENIN, r->pt.v, r->pt.i, rt, rq, vd);
}

/* Print the result as CSV; returns the table's exit status. */
static int design_print_csv(const struct problem *pb,
                            const struct design_request *rq,
                            const struct ratings *rt,
                            const struct design_result *res, bool worst)
{
	const char *col = rq->unknown == DESIGN_FOR_RS   ? "rs_ohm"
	                  : rq->unknown == DESIGN_FOR_VS ? "vs_V"
	                  : design_unknown_unit(pb, rq) == QTY_RESISTANCE
	                      ? "part_ohm"
	                  : design_unknown_unit(pb, rq) == QTY_VOLTAGE ? "part_V"
	                                                               : "part_A";
	static const char *const cols[] = {
		"voltage_V", "current_A", "power_W", "resistor_power_W",
		"source_power_W", "error_percent", "points", "suggested_resistor_W",
		"nearest", "verdict"
	};
	static const char *const wcols[] = {
		"current_min_A", "current_max_A", "voltage_min_V", "voltage_max_V",
		"device_power_max_W", "resistor_power_max_W", "worst_verdict",
		"worst_suggested_resistor_W", "result_min", "result_max"
	};
	struct csv w;
	csv_init(&w, stdout);
	csv_column(&w, "row");
	csv_column(&w, col);
	for (size_t k = 0; k < sizeof cols / sizeof cols[0]; k++)
		csv_column(&w, cols[k]);
	for (size_t k = 0; worst && k < sizeof wcols / sizeof wcols[0]; k++)
		csv_column(&w, wcols[k]);
	csv_end_row(&w);
	/* A network's equivalent resistor is no part: no power for it. */
	bool part = rq->unknown == DESIGN_FOR_PART;
	for (size_t k = 0; k < res->nrows; k++) {
		const struct design_row *r = &res->rows[k];
		/* A value without an operating point has only its value. */
		double nan = NAN;
		bool ok = r->solved;
		struct verdict vd;
		design_row_verdict(pb, rq, rt, r, &vd);
		csv_text(&w, design_row_name(r->kind));
		csv_number(&w, r->value);
		csv_number(&w, ok ? r->pt.v : nan);
		csv_number(&w, ok ? r->pt.i : nan);
		csv_number(&w, ok ? r->pt.power : nan);
		csv_number(&w, ok && !part ? r->power.p_resistor : nan);
		csv_number(&w, ok && !part ? r->power.p_source : nan);
		csv_number(&w, ok ? r->error_percent : nan);
		csv_count(&w, r->npoints);
		csv_number(&w, ok && !part ? r->power.suggested_resistor_power : nan);
		csv_text(&w, r->nearest ? "yes" : "no");
		if (ok)
			csv_text(&w, ratings_verdict_name(vd.worst));
		else
			csv_empty(&w);
		if (worst) {
			const struct design_worst *x = &r->worst;
			csv_number(&w, x->i_min);
			csv_number(&w, x->i_max);
			csv_number(&w, x->v_min);
			csv_number(&w, x->v_max);
			csv_number(&w, x->p_device_max);
			csv_number(&w, x->p_resistor_max);
			if (x->done)
				csv_text(&w, ratings_verdict_name(x->verdict));
			else
				csv_empty(&w);
			csv_number(&w, x->suggested_resistor_power);
			csv_number(&w, x->result_min);
			csv_number(&w, x->result_max);
		}
		csv_end_row(&w);
	}
	return csv_finish(&w, "design");
}

/* Print each row's worst case as text. */
static void design_print_worst(const struct problem *pb,
                               const struct design_request *rq,
                               const struct design_result *res, bool for_rs)
{
	char a[48], b[48], c[48], d[48], e[48], f[48];
	enum qty_kind uk = design_unknown_unit(pb, rq);
	bool part = rq->unknown == DESIGN_FOR_PART;
	/* A stage's result (IC, VCE) is what its designer watches. */
	bool result = rq->target == DESIGN_RESULT;
	enum qty_kind yk = result ? design_request_unit(pb, rq) : QTY_CURRENT;
	const char *label = "I";
	struct model_extra ex;
	if (result && device_secondary(&pb->dev, &pb->src, res->v_target,
	                               res->i_target, &ex) == 0)
		for (size_t k = 0; k < ex.n; k++)
			if (strcmp(ex.v[k].key, rq->result) == 0)
				label = ex.v[k].label;
	char h1[32], h2[32], h3[32];
	snprintf(h1, sizeof h1, "%s nominal", label);
	snprintf(h2, sizeof h2, "%s min", label);
	snprintf(h3, sizeof h3, "%s max", label);
	printf("\n  worst case over the tolerances (every corner of the box)\n");
	printf("  %-7s %-13s %-12s %-12s %-12s %-12s %-14s %s\n", "",
	       part ? "value" : for_rs ? "RS" : "VS", h1, h2, h3,
	       part ? "P(part) max" : "P(RS) max", "verdict", "fits");
	bool rated = false;
	for (size_t k = 0; k < res->nrows; k++) {
		const struct design_row *r = &res->rows[k];
		const struct design_worst *w = &r->worst;
		/* The exact value is no part to buy when standard ones follow. */
		if (for_rs && r->kind == DESIGN_ROW_EXACT && res->nrows > 1)
			continue;
		cli_fmt(a, sizeof a, r->value, uk, for_rs ? 3 : 6);
		if (!w->done) {
			printf("  %-7s %-13s (%s)\n", design_row_name(r->kind), a,
			       w->message[0] ? w->message : "no operating point");
			continue;
		}
		/* A part without a resistor of its own has no power to rate. */
		bool has = !isnan(w->p_resistor_max);
		rated = rated || has;
		printf("  %-7s %-13s %-12s %-12s %-12s %-12s %-14s %s\n",
		       design_row_name(r->kind), a,
		       cli_fmt(b, sizeof b, result ? r->achieved : r->pt.i, yk, 5),
		       cli_fmt(c, sizeof c, result ? w->result_min : w->i_min, yk, 5),
		       cli_fmt(d, sizeof d, result ? w->result_max : w->i_max, yk, 5),
		       has ? cli_fmt(e, sizeof e, w->p_resistor_max, QTY_POWER, 4)
		           : "-",
		       ratings_verdict_name(w->verdict),
		       !has || isnan(w->suggested_resistor_power)
		           ? "-"
		           : cli_fmt(f, sizeof f, w->suggested_resistor_power,
		                     QTY_POWER, 3));
	}
	for (size_t k = 0; k < res->nrows; k++) {
		const struct design_row *r = &res->rows[k];
		if (!r->worst.done || r->worst.words[0] == '\0' ||
		    (for_rs && r->kind == DESIGN_ROW_EXACT && res->nrows > 1))
			continue;
		printf("  %s %s: %s\n", design_row_name(r->kind),
		       cli_fmt(a, sizeof a, r->value, uk, for_rs ? 3 : 6),
		       r->worst.words);
	}
	if (part)
		printf("  (the source is a network: %s'biasline reduce --nodes' "
		       "shows every part at a point)\n",
		       rated ? "the designed resistor is rated over the corners; "
		             : "");
}

/* Print the result as text; returns the safety flags of all rows. */
static unsigned design_print_text(const char *file, const struct problem *pb,
                                  const struct design_request *rq,
                                  const struct ratings *rt,
                                  const struct design_result *res, bool worst)
{
	char a[48], b[48], c[48], d[48], e[48];
	enum qty_kind tk = design_request_unit(pb, rq);
	bool for_part = rq->unknown == DESIGN_FOR_PART;
	bool for_rs = rq->unknown == DESIGN_FOR_RS ||
	              (for_part && design_unknown_unit(pb, rq) == QTY_RESISTANCE);
	enum qty_kind uk = design_unknown_unit(pb, rq);
	const char *uname = for_part ? paramref_key(pb, &rq->part)
	                    : rq->unknown == DESIGN_FOR_RS ? "RS" : "VS";
	printf("%s\n", file);
	printf("  target   %s %s %s, solving for %s",
	       rq->target == DESIGN_RESULT ? "stage" : "device",
	       design_request_name(rq),
	       cli_fmt(a, sizeof a, rq->value, tk, 6), uname);
	if (for_part)
		printf(" (%s)\n", eseries_name(rq->series));
	else if (for_rs)
		printf(" (VS = %s, %s)\n", cli_fmt(b, sizeof b, pb->src.voc,
		                                   QTY_VOLTAGE, 6),
		       eseries_name(rq->series));
	else
		printf(" (RS = %s)\n", cli_fmt(b, sizeof b, pb->src.r, QTY_RESISTANCE,
		                                6));
	printf("  device   at the target: %s, %s\n\n",
	       cli_fmt(a, sizeof a, res->v_target, QTY_VOLTAGE, 6),
	       cli_fmt(b, sizeof b, res->i_target, QTY_CURRENT, 6));
	printf("  %-7s %-13s %-12s %-12s %-12s %-12s %s\n", "",
	       for_part ? "value" : for_rs ? "RS" : "VS",
	       "voltage", "current", "P(device)", for_part ? "" : "P(RS)", "error");
	unsigned flags = 0;
	for (size_t k = 0; k < res->nrows; k++) {
		const struct design_row *r = &res->rows[k];
		cli_fmt(a, sizeof a, r->value, uk, for_rs && k > 0 ? 3 : 6);
		if (!r->solved) {
			printf("  %-7s %-13s (no operating point)\n",
			       design_row_name(r->kind), a);
			continue;
		}
		char g[32];
		printf("  %-7s %-13s %-12s %-12s %-12s %-12s %s %%%s%s\n",
		       design_row_name(r->kind), a,
		       cli_fmt(b, sizeof b, r->pt.v, QTY_VOLTAGE, 5),
		       cli_fmt(c, sizeof c, r->pt.i, QTY_CURRENT, 5),
		       cli_fmt(d, sizeof d, r->pt.power, QTY_POWER, 4),
		       for_part ? ""
		                : cli_fmt(e, sizeof e, r->power.p_resistor, QTY_POWER, 4),
		       cli_fmt_number(g, sizeof g, r->error_percent, 3, true),
		       r->nearest ? "  (nearest)" : "",
		       r->npoints > 1 ? "  (several points)" : "");
		struct problem q;
		if (design_apply_request(pb, rq, r->value, &q) == 0)
			flags |= safety_check(&q, r->pt.v, r->pt.i);
	}
	/* Power and ratings at each value a part can have. */
	for (size_t k = 0; k < res->nrows; k++) {
		const struct design_row *r = &res->rows[k];
		if (!r->solved || (for_rs && r->kind == DESIGN_ROW_EXACT))
			continue;
		struct verdict vd;
		design_row_verdict(pb, rq, rt, r, &vd);
		printf("\n  %s %s%s\n", design_row_name(r->kind),
		       cli_fmt(a, sizeof a, r->value, uk, for_rs ? 3 : 6),
		       r->nearest ? " (nearest)" : "");
		for (size_t j = 0; j < vd.nlines; j++)
			printf("    %s\n", vd.lines[j].words);
		if (vd.message[0] != '\0')
			printf("    (%s)\n", vd.message);
	}
	if (worst)
		design_print_worst(pb, rq, res, for_rs);
	return flags;
}

/* Each row's worst case over SE's tolerances; returns 0 or an exit code. */
static int design_worst_rows(const char *file, const struct session *se,
                             const struct problem *pb,
                             const struct design_request *rq,
                             struct design_result *res)
{
	char err[600];
	struct cli_progress pr;
	cli_progress_begin(&pr, "biasline design: worst case", 0.0);
	int rc = session_design_worst_watched(se, pb, rq, res, err, sizeof err,
	                                      &pr.core);
	int sig = cli_progress_end(&pr);
	if (rc != 0) {
		fprintf(stderr, "biasline design: %s: --worst-case: %s\n", file, err);
		cli_progress_reraise(sig);
		return EXIT_DATA;
	}
	return 0;
}

/* Entry point of `biasline design`. */
int cmd_design(int argc, char **argv)
{
	struct design_args a;
	int code;
	if (design_parse_args(argc, argv, &a, &code) != 0)
		return code;
	struct session se;
	struct problem pb;
	if ((code = cli_load_with("design", a.file, &a.sets, &se, &pb)) != 0)
		return code;
	struct design_request rq = a.rq;
	if (!a.have_target) {
		if (session_design_request(&se, &rq) != 0) {
			fprintf(stderr, "biasline design: %s: no target: give --current, "
			        "--voltage or --power, or a target: section\n", a.file);
			session_fini(&se);
			return EXIT_USAGE;
		}
		if (a.have_series)
			rq.series = a.rq.series;
		if (a.have_unknown)
			rq.unknown = a.rq.unknown;
	}
	if (a.stage != STAGE_NONE &&
	    design_stage_target(a.stage, &pb, &rq, a.file) != 0) {
		session_fini(&se);
		return EXIT_USAGE;
	}
	if (rq.unknown == DESIGN_FOR_PART) {
		char err[512];
		if (paramref_find(&pb, a.part, &rq.part, err, sizeof err) != 0 ||
		    (rq.part.kind != PARAMREF_NETWORK &&
		     rq.part.kind != PARAMREF_DEVICE)) {
			if (rq.part.kind != PARAMREF_NETWORK &&
			    rq.part.kind != PARAMREF_DEVICE && err[0] == '\0')
				snprintf(err, sizeof err, "'%s' is not rs, vs, a network "
				         "part or a device parameter", a.part);
			fprintf(stderr, "biasline design: %s: --solve-for: %s\n", a.file,
			        err);
			session_fini(&se);
			return EXIT_USAGE;
		}
	} else if (se.network != NULL) {
		/* The equivalent's RS or VS is no part anyone can change. */
		fprintf(stderr, "biasline design: %s: the source is a network: name "
		        "the part to design with --solve-for source.network.NAME\n",
		        a.file);
		session_fini(&se);
		return EXIT_USAGE;
	}
	struct design_result res;
	code = EXIT_OK_CODE;
	if (design_solve(&pb, &se.solver, &rq, &se.analysis.ratings, &res) != 0) {
		fprintf(stderr, "biasline design: %s: %s\n", a.file, res.message);
		code = EXIT_NO_POINT;
	} else if (a.worst &&
	           (code = design_worst_rows(a.file, &se, &pb, &rq, &res)) != 0) {
		/* reported */
	} else if (a.csv) {
		code = design_print_csv(&pb, &rq, &se.analysis.ratings, &res, a.worst);
	} else {
		unsigned flags = design_print_text(a.file, &pb, &rq,
		                                   &se.analysis.ratings, &res,
		                                   a.worst);
		for (size_t k = 0; a.worst && k < res.nrows; k++)
			flags |= res.rows[k].worst.safety;
		cli_print_network_note(&se, "  ");
		cli_print_caution(flags, "  ");
	}
	session_fini(&se);
	return code;
}
