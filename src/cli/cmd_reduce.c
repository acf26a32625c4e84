/*
 * cmd_reduce.c - 'biasline reduce FILE': the Thevenin equivalent of the
 * session's source at the device (Vth, Rth and Isc), and with --nodes the
 * device's operating point(s) with every node voltage and every part's
 * voltage, current and power there.
 *
 * A network source is reduced by core/network.c; a plain Thevenin or
 * Norton source is shown in the same terms.  CSV (csv.h) holds one table:
 * without --nodes one row vth_V,rth_ohm,isc_A; with --nodes one long
 * table of rows of four kinds (the equivalent, each operating point, each
 * node and each part at that point), every column empty where a kind has
 * no value.
 */
#include <getopt.h>
#include <math.h>
#include <stdbool.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "cli_analysis.h"
#include "commands.h"
#include "csv.h"
#include "core/network.h"
#include "core/quantity.h"
#include "core/solve.h"
#include "session/section_network.h"
#include "session/session.h"

/*
 * Above this DC voltage a circuit is no longer extra-low voltage and can be
 * hazardous to touch (the 60 V DC ELV limit, IEC 61140; common practice).
 */
#define REDUCE_ELV_DC 60.0

/*
 * A resistor dissipating more than this needs a deliberate power rating
 * (quarter-watt parts are the common default; common practice).
 */
#define REDUCE_RESISTOR_POWER 0.25

/* Output formats. */
enum reduce_format { FORMAT_TEXT, FORMAT_CSV };

/* Print the usage of 'reduce' to OUT. */
static void reduce_usage(FILE *out)
{
	fprintf(out,
	        "Usage: biasline reduce [OPTIONS] FILE\n"
	        "\n"
	        "Reduce the session's source (a network of resistors, voltage\n"
	        "sources and current sources, or a plain source) to its Thevenin\n"
	        "equivalent at the device: Vth, Rth and the short-circuit current.\n"
	        "With --nodes, also solve the device's operating point(s) and show\n"
	        "every node voltage and each part's voltage, current and power.\n"
	        "\n"
	        "Options:\n"
	        "  -f, --format FMT      text (default) or csv: one table, the\n"
	        "                        columns vth_V, rth_ohm, isc_A; with\n"
	        "                        --nodes the long table of biasline(1)\n"
	        "  -n, --nodes           solve the device and show the network there\n"
	        "  -r, --reference NODE  node voltages relative to NODE (default:\n"
	        "                        the device's negative terminal)\n"
	        CLI_SET_HELP
	        "  -h, --help            show this help and exit\n"
	        "  -V, --version         show the version and exit\n");
	static const enum exit_code codes[] = { EXIT_OK_CODE, EXIT_NO_POINT,
	                                        EXIT_USAGE, EXIT_DATA,
	                                        EXIT_NO_INPUT, EXIT_IO };
	exit_status_usage(out, codes, sizeof codes / sizeof codes[0]);
}

/* Format V of KIND for text output into BUF (6 significant digits). */
static const char *reduce_fmt(char *buf, size_t n, double v, enum qty_kind k)
{
	return cli_fmt_full(buf, n, v, k, 6);
}

/* The columns of the --nodes CSV table, in order. */
static const char *const reduce_long_columns[] = {
	"row", "point", "name", "part_kind", "from", "to", "voltage_V",
	"current_A", "power_W", "resistance_ohm",
};

/* Start the --nodes CSV table on W. */
static void reduce_long_header(struct csv *w)
{
	for (size_t k = 0;
	     k < sizeof reduce_long_columns / sizeof reduce_long_columns[0]; k++)
		csv_column(w, reduce_long_columns[k]);
	csv_end_row(w);
}

/*
 * One row of the --nodes table: ROW kind, POINT (0: none), NAME, the part's
 * KIND, FROM, TO (NULL: empty), and the numbers (NaN: empty).
 */
static void reduce_long_row(struct csv *w, const char *row, size_t point,
                            const char *name, const char *kind,
                            const char *from, const char *to, double v,
                            double i, double p, double r)
{
	csv_text(w, row);
	if (point > 0)
		csv_count(w, point);
	else
		csv_empty(w);
	csv_text(w, name);
	csv_text(w, kind);
	csv_text(w, from);
	csv_text(w, to);
	csv_number(w, v);
	csv_number(w, i);
	csv_number(w, p);
	csv_number(w, r);
	csv_end_row(w);
}

/*
 * Print the equivalent source SRC (load-line form) between POS and NEG: as
 * text, or as CSV into W (its own table, or with LONG one row of the
 * --nodes table).  A value that does not exist (the open-circuit voltage
 * of an ideal current source) is an empty field.
 */
static void reduce_print_equivalent(FILE *out, struct csv *w, bool long_form,
                                    const struct source *src, const char *pos,
                                    const char *neg)
{
	double voc = source_is_ideal_current(src) ? NAN : src->voc;
	double isc = source_is_ideal_voltage(src) ? INFINITY : src->isc;
	if (w != NULL && long_form) {
		reduce_long_row(w, "equivalent", 0, "", "", pos ? pos : "",
		                neg ? neg : "", voc, isc, NAN, src->r);
		return;
	}
	if (w != NULL) {
		csv_column(w, "vth_V");
		csv_column(w, "rth_ohm");
		csv_column(w, "isc_A");
		csv_end_row(w);
		csv_number(w, voc);
		csv_number(w, src->r);
		csv_number(w, isc);
		csv_end_row(w);
		return;
	}
	char a[48];
	if (pos != NULL)
		fprintf(out, "Thevenin equivalent between %s (+) and %s (-):\n", pos,
		        neg);
	else
		fprintf(out, "Thevenin equivalent of the source:\n");
	if (source_is_ideal_current(src)) {
		fprintf(out, "  Vth  undefined (no finite open-circuit voltage)\n");
		fprintf(out, "  Rth  infinite: an ideal current source\n");
	} else {
		fprintf(out, "  Vth  %s\n", reduce_fmt(a, sizeof a, src->voc,
		                                       QTY_VOLTAGE));
		if (source_is_ideal_voltage(src))
			fprintf(out, "  Rth  0: an ideal voltage source\n");
		else
			fprintf(out, "  Rth  %s\n", reduce_fmt(a, sizeof a, src->r,
			                                       QTY_RESISTANCE));
	}
	if (source_is_ideal_voltage(src))
		fprintf(out, "  Isc  unbounded (no series resistance)\n");
	else
		fprintf(out, "  Isc  %s\n", reduce_fmt(a, sizeof a, src->isc,
		                                       QTY_CURRENT));
}

/* Print one operating point PT (K of N) in text. */
static void reduce_print_point(FILE *out, const struct op_point *pt, size_t k,
                               size_t n)
{
	char v[48], i[48], p[48];
	fprintf(out, "\nOperating point");
	if (n > 1)
		fprintf(out, " %zu of %zu", k + 1, n);
	fprintf(out, ": V = %s, I = %s, P = %s\n",
	        reduce_fmt(v, sizeof v, pt->v, QTY_VOLTAGE),
	        reduce_fmt(i, sizeof i, pt->i, QTY_CURRENT),
	        reduce_fmt(p, sizeof p, pt->power, QTY_POWER));
}

/* Widest node name of NET, at least MIN. */
static int reduce_node_width(const struct network *net, int min)
{
	int w = min;
	for (size_t k = 0; k < network_node_count(net); k++) {
		int l = (int)strlen(network_node_name(net, k));
		if (l > w)
			w = l;
	}
	return w;
}

/*
 * Print the node voltages NV (relative to node REF) and part states PS of
 * NET, at operating point K of N, as text, or as rows of the --nodes CSV
 * table into W.
 */
static void reduce_print_network(FILE *out, struct csv *w,
                                 const struct network *net, size_t ref,
                                 const double *nv,
                                 const struct network_part_state *ps,
                                 size_t k, size_t n)
{
	size_t nn = network_node_count(net), np = network_part_count(net);
	if (w != NULL) {
		for (size_t j = 0; j < nn; j++)
			reduce_long_row(w, "node", k + 1, network_node_name(net, j), "",
			                "", "", nv[j], NAN, NAN, NAN);
		for (size_t j = 0; j < np; j++) {
			const struct network_part *p = network_part(net, j);
			reduce_long_row(w, "part", k + 1, p->name,
			                session_network_kind_key(p->kind),
			                network_node_name(net, p->from),
			                network_node_name(net, p->to), ps[j].voltage,
			                ps[j].current, ps[j].power,
			                p->kind == NETWORK_RESISTOR ? p->value : NAN);
		}
		return;
	}
	(void)n;
	char a[48], b[48], c[48];
	int nw = reduce_node_width(net, 4);
	fprintf(out, "\nNode voltages (relative to %s):\n",
	        network_node_name(net, ref));
	for (size_t j = 0; j < nn; j++)
		fprintf(out, "  %-*s  %12s\n", nw, network_node_name(net, j),
		        reduce_fmt(a, sizeof a, nv[j], QTY_VOLTAGE));
	int pw = 4;
	for (size_t j = 0; j < np; j++) {
		int l = (int)strlen(network_part(net, j)->name);
		if (l > pw)
			pw = l;
	}
	fprintf(out, "\nParts (voltage = V(from) - V(to), current from -> to, "
	        "power > 0 absorbed):\n");
	fprintf(out, "  %-*s  %-14s  %12s  %12s  %12s\n", pw, "name", "kind",
	        "voltage", "current", "power");
	for (size_t j = 0; j < np; j++) {
		const struct network_part *p = network_part(net, j);
		fprintf(out, "  %-*s  %-14s  %12s  %12s  %12s\n", pw, p->name,
		        network_kind_name(p->kind),
		        reduce_fmt(a, sizeof a, ps[j].voltage, QTY_VOLTAGE),
		        reduce_fmt(b, sizeof b, ps[j].current, QTY_CURRENT),
		        reduce_fmt(c, sizeof c, ps[j].power, QTY_POWER));
	}
}

/*
 * Print cautions to ERR for what can hurt: voltages past the extra-low
 * voltage limit (the sources' values, and node voltages NV when not NULL),
 * and resistors past the common power rating (PS when not NULL).
 */
static void reduce_cautions(FILE *err, const struct network *net,
                            const double *nv,
                            const struct network_part_state *ps)
{
	bool high = false;
	for (size_t j = 0; j < network_part_count(net); j++) {
		const struct network_part *p = network_part(net, j);
		if (p->kind == NETWORK_VOLTAGE_SOURCE && fabs(p->value) > REDUCE_ELV_DC)
			high = true;
	}
	if (nv != NULL) {
		double lo = 0.0, hi = 0.0;
		for (size_t j = 0; j < network_node_count(net); j++) {
			lo = fmin(lo, nv[j]);
			hi = fmax(hi, nv[j]);
		}
		if (hi - lo > REDUCE_ELV_DC)
			high = true;
	}
	if (high)
		fprintf(err, "caution: this circuit has more than 60 V DC between "
		        "some of its nodes, above the extra-low-voltage limit: it can "
		        "be hazardous to touch.  Follow local electrical codes and "
		        "licensed practice when building or probing it.\n");
	if (ps == NULL)
		return;
	for (size_t j = 0; j < network_part_count(net); j++) {
		const struct network_part *p = network_part(net, j);
		if (p->kind == NETWORK_RESISTOR &&
		    fabs(ps[j].power) > REDUCE_RESISTOR_POWER) {
			char a[48];
			fprintf(err, "caution: resistor '%s' dissipates %s: choose its "
			        "power rating with margin (it runs hot; keep it clear "
			        "of other parts and of fingers)\n", p->name,
			        qty_format(a, sizeof a, ps[j].power, QTY_POWER, 3, 1));
		}
	}
}

/*
 * Check --reference NAME against S's network before anything is printed:
 * the index of the reference node into *REF (the device's negative
 * terminal without NAME).  Returns 0, or an exit status after a message.
 */
static int reduce_find_reference(const struct session *s, const char *name,
                                 size_t *ref)
{
	if (s->network == NULL) {
		if (name != NULL) {
			fprintf(stderr, "biasline reduce: --reference: the source is "
			        "not a network, so it has no nodes\n");
			return EXIT_USAGE;
		}
		return 0;
	}
	size_t pos;
	network_terminals(s->network, &pos, ref);
	if (name == NULL)
		return 0;
	long r = network_find_node(s->network, name);
	if (r < 0) {
		fprintf(stderr, "biasline reduce: --reference: no node '%s' in the "
		        "network\n", name);
		return EXIT_USAGE;
	}
	*ref = (size_t)r;
	return 0;
}

/*
 * Print each operating point RES of S's problem PB with the network around
 * it (node voltages relative to node REF), as text or, when W is not NULL,
 * as rows of the --nodes CSV table.  Returns an exit code.
 */
static int reduce_nodes(const struct session *s, const struct solve_result *res,
                        struct csv *w, size_t ref)
{
	const struct network *net = s->network;
	for (size_t k = 0; k < res->n && net == NULL; k++) {
		const struct op_point *pt = &res->pts[k];
		if (w != NULL)
			reduce_long_row(w, "point", k + 1, "", "", "", "", pt->v, pt->i,
			                pt->power, NAN);
		else
			reduce_print_point(stdout, pt, k, res->n);
	}
	if (net == NULL) {
		if (w == NULL)
			printf("\n(the source is not a network: no nodes to show)\n");
		return EXIT_OK_CODE;
	}
	size_t nn = network_node_count(net), np = network_part_count(net);
	double *nv = malloc(nn * sizeof *nv);
	struct network_part_state *ps = malloc(np * sizeof *ps);
	if (nv == NULL || ps == NULL) {
		free(nv);
		free(ps);
		fprintf(stderr, "biasline reduce: out of memory\n");
		return EXIT_SOFTWARE;
	}
	int rc = EXIT_OK_CODE;
	for (size_t k = 0; k < res->n && rc == EXIT_OK_CODE; k++) {
		const struct op_point *pt = &res->pts[k];
		struct network_diag d;
		if (network_solve_at(net, pt->v, pt->i, ref, nv, ps, &d) !=
		    NETWORK_OK) {
			fprintf(stderr, "biasline reduce: source.network: %s\n",
			        d.message);
			rc = EXIT_DATA;
			break;
		}
		if (w != NULL)
			reduce_long_row(w, "point", k + 1, "", "", "", "", pt->v, pt->i,
			                pt->power, NAN);
		else
			reduce_print_point(stdout, pt, k, res->n);
		reduce_print_network(stdout, w, net, ref, nv, ps, k, res->n);
		reduce_cautions(stderr, net, nv, ps);
	}
	free(nv);
	free(ps);
	return rc;
}

/* Reduce the source of one session file and print it. */
int cmd_reduce(int argc, char **argv)
{
	static const struct option opts[] = {
		{ "format", required_argument, NULL, 'f' },
		{ "nodes", no_argument, NULL, 'n' },
		{ "reference", required_argument, NULL, 'r' },
		{ "set", required_argument, NULL, CLI_OPT_SET },
		{ "help", no_argument, NULL, 'h' },
		{ "version", no_argument, NULL, 'V' },
		{ NULL, 0, NULL, 0 },
	};
	enum reduce_format fmt = FORMAT_TEXT;
	bool nodes = false;
	const char *refname = NULL;
	struct cli_sets sets = { 0 };
	int c;
	optind = 1;
	opterr = 0;
	while ((c = getopt_long(argc, argv, "+:f:nr:hV", opts, NULL)) != -1) {
		switch (c) {
		case 'f':
			if (strcmp(optarg, "text") == 0) {
				fmt = FORMAT_TEXT;
			} else if (strcmp(optarg, "csv") == 0) {
				fmt = FORMAT_CSV;
			} else {
				fprintf(stderr, "biasline reduce: --format: found '%s', "
				        "expected text or csv\n", optarg);
				return EXIT_USAGE;
			}
			break;
		case 'n':
			nodes = true;
			break;
		case 'r':
			refname = optarg;
			break;
		case CLI_OPT_SET:
			if (cli_add_set("reduce", &sets, optarg) != 0)
				return EXIT_USAGE;
			break;
		default:
			return cli_shared_option("reduce", c, argv, reduce_usage);
		}
	}
	if (argc - optind != 1) {
		fprintf(stderr, "biasline reduce: expected one FILE (try 'biasline "
		        "reduce --help')\n");
		return EXIT_USAGE;
	}
	if (refname != NULL && !nodes) {
		fprintf(stderr, "biasline reduce: --reference needs --nodes\n");
		return EXIT_USAGE;
	}
	struct session s;
	struct problem pb;
	int code = cli_load_with("reduce", argv[optind], &sets, &s, &pb);
	if (code != 0)
		return code;
	/* Everything that can refuse the request runs before any output. */
	size_t ref = 0;
	if ((code = reduce_find_reference(&s, refname, &ref)) != 0) {
		session_fini(&s);
		return code;
	}
	struct solve_result res;
	if (nodes) {
		solve_problem(&pb, &s.solver, &res);
		if (res.status != SOLVE_OK || res.n == 0) {
			fprintf(stderr, "biasline reduce: no operating point: %s\n",
			        res.message[0] ? res.message : "none found");
			session_fini(&s);
			return res.status == SOLVE_OK ? EXIT_NO_POINT
			                              : cli_exit_from_solve(res.status);
		}
	}
	const char *pos = NULL, *neg = NULL;
	size_t p, n;
	if (s.network != NULL && network_terminals(s.network, &p, &n) == 0) {
		pos = network_node_name(s.network, p);
		neg = network_node_name(s.network, n);
	}
	struct csv w;
	csv_init(&w, stdout);
	struct csv *wp = fmt == FORMAT_CSV ? &w : NULL;
	if (wp != NULL && nodes)
		reduce_long_header(wp);
	reduce_print_equivalent(stdout, wp, nodes, &pb.src, pos, neg);
	int rc = EXIT_OK_CODE;
	if (nodes)
		rc = reduce_nodes(&s, &res, wp, ref);
	else if (s.network != NULL)
		reduce_cautions(stderr, s.network, NULL, NULL);
	session_fini(&s);
	if (rc == EXIT_OK_CODE && wp != NULL)
		rc = csv_finish(wp, "reduce");
	return rc;
}
