/*
 * cmd_reduce.c - 'biasline reduce FILE': the Thevenin equivalent of the
 * session's source at the device (Vth, Rth and Isc), and with --nodes the
 * device's operating point(s) with every node voltage and every part's
 * voltage, current and power there.
 *
 * A network source is reduced by core/network.c; a plain Thevenin or
 * Norton source is shown in the same terms.  CSV follows RFC 4180; with
 * --nodes it holds three tables (equivalent, nodes, parts), each with a
 * header row, separated by one empty line.
 */
#include <getopt.h>
#include <math.h>
#include <stdbool.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "biasline_version.h"
#include "cli_analysis.h"
#include "commands.h"
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
	        "Exit status: 0 done, 3 no operating point (--nodes), 64 bad\n"
	        "command line, 65 the file is not a valid session or the network\n"
	        "cannot be reduced, 66 the file cannot be read, 74 output error.\n"
	        "\n"
	        "Options:\n"
	        "  -f, --format FMT      text (default) or csv; csv columns vth_V,\n"
	        "                        rth_ohm, isc_A\n"
	        "  -n, --nodes           solve the device and show the network there\n"
	        "  -r, --reference NODE  node voltages relative to NODE (default:\n"
	        "                        the device's negative terminal)\n"
	        "  -h, --help            show this help and exit\n"
	        "  -V, --version         show the version and exit\n");
}

/* Write TEXT as one CSV field (quoted when it needs to be) to OUT. */
static void reduce_csv_text(FILE *out, const char *text)
{
	if (strpbrk(text, ",\"\r\n") == NULL) {
		fputs(text, out);
		return;
	}
	fputc('"', out);
	for (const char *p = text; *p != '\0'; p++) {
		if (*p == '"')
			fputc('"', out);
		fputc(*p, out);
	}
	fputc('"', out);
}

/* Write V as an exact CSV number ("inf", "nan" when not finite). */
static void reduce_csv_number(FILE *out, double v)
{
	char buf[48];
	fputs(qty_format_exact(buf, sizeof buf, v), out);
}

/* Format V of KIND for text output into BUF (6 significant digits). */
static const char *reduce_fmt(char *buf, size_t n, double v, enum qty_kind k)
{
	return qty_format(buf, n, v, k, 6, 1);
}

/* Print the equivalent source SRC (load-line form) between POS and NEG. */
static void reduce_print_equivalent(FILE *out, enum reduce_format fmt,
                                    const struct source *src, const char *pos,
                                    const char *neg)
{
	if (fmt == FORMAT_CSV) {
		fputs("vth_V,rth_ohm,isc_A\n", out);
		reduce_csv_number(out, src->voc);
		fputc(',', out);
		reduce_csv_number(out, src->r);
		fputc(',', out);
		reduce_csv_number(out, src->isc);
		fputc('\n', out);
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
 * NET, at operating point K of N, as text or CSV.
 */
static void reduce_print_network(FILE *out, enum reduce_format fmt,
                                 const struct network *net, size_t ref,
                                 const double *nv,
                                 const struct network_part_state *ps,
                                 size_t k, size_t n)
{
	size_t nn = network_node_count(net), np = network_part_count(net);
	if (fmt == FORMAT_CSV) {
		fputs("\npoint,node,voltage_V\n", out);
		for (size_t j = 0; j < nn; j++) {
			fprintf(out, "%zu,", k + 1);
			reduce_csv_text(out, network_node_name(net, j));
			fputc(',', out);
			reduce_csv_number(out, nv[j]);
			fputc('\n', out);
		}
		fputs("\npoint,part,kind,from,to,voltage_V,current_A,power_W\n", out);
		for (size_t j = 0; j < np; j++) {
			const struct network_part *p = network_part(net, j);
			fprintf(out, "%zu,", k + 1);
			reduce_csv_text(out, p->name);
			fprintf(out, ",%s,", session_network_kind_key(p->kind));
			reduce_csv_text(out, network_node_name(net, p->from));
			fputc(',', out);
			reduce_csv_text(out, network_node_name(net, p->to));
			fputc(',', out);
			reduce_csv_number(out, ps[j].voltage);
			fputc(',', out);
			reduce_csv_number(out, ps[j].current);
			fputc(',', out);
			reduce_csv_number(out, ps[j].power);
			fputc('\n', out);
		}
		return;
	}
	(void)n;
	char a[48], b[48], c[48];
	int w = reduce_node_width(net, 4);
	fprintf(out, "\nNode voltages (relative to %s):\n",
	        network_node_name(net, ref));
	for (size_t j = 0; j < nn; j++)
		fprintf(out, "  %-*s  %12s\n", w, network_node_name(net, j),
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
 * Solve S's problem PB and print each operating point with the network
 * around it.  Returns an exit code.
 */
static int reduce_nodes(const struct session *s, const struct problem *pb,
                        enum reduce_format fmt, const char *refname)
{
	struct solve_result res;
	solve_problem(pb, &s->solver, &res);
	if (res.status != SOLVE_OK || res.n == 0) {
		fprintf(stderr, "biasline reduce: no operating point: %s\n",
		        res.message[0] ? res.message : "none found");
		return EXIT_NO_POINT;
	}
	const struct network *net = s->network;
	if (net == NULL && refname != NULL) {
		fprintf(stderr, "biasline reduce: --reference: the source is not a "
		        "network, so it has no nodes\n");
		return EXIT_USAGE;
	}
	if (net == NULL) {
		for (size_t k = 0; k < res.n; k++) {
			if (fmt == FORMAT_TEXT) {
				reduce_print_point(stdout, &res.pts[k], k, res.n);
				continue;
			}
			if (k == 0)
				fputs("\npoint,voltage_V,current_A,power_W\n", stdout);
			fprintf(stdout, "%zu,", k + 1);
			reduce_csv_number(stdout, res.pts[k].v);
			fputc(',', stdout);
			reduce_csv_number(stdout, res.pts[k].i);
			fputc(',', stdout);
			reduce_csv_number(stdout, res.pts[k].power);
			fputc('\n', stdout);
		}
		if (fmt == FORMAT_TEXT)
			printf("\n(the source is not a network: no nodes to show)\n");
		return EXIT_OK_CODE;
	}
	size_t pos, ref;
	network_terminals(net, &pos, &ref);
	if (refname != NULL) {
		long r = network_find_node(net, refname);
		if (r < 0) {
			fprintf(stderr, "biasline reduce: --reference: no node '%s' in "
			        "the network\n", refname);
			return EXIT_USAGE;
		}
		ref = (size_t)r;
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
	if (fmt == FORMAT_CSV) {
		fputs("\npoint,voltage_V,current_A,power_W\n", stdout);
		for (size_t k = 0; k < res.n; k++) {
			fprintf(stdout, "%zu,", k + 1);
			reduce_csv_number(stdout, res.pts[k].v);
			fputc(',', stdout);
			reduce_csv_number(stdout, res.pts[k].i);
			fputc(',', stdout);
			reduce_csv_number(stdout, res.pts[k].power);
			fputc('\n', stdout);
		}
	}
	for (size_t k = 0; k < res.n && rc == EXIT_OK_CODE; k++) {
		struct network_diag d;
		if (network_solve_at(net, res.pts[k].v, res.pts[k].i, ref, nv, ps,
		                     &d) != NETWORK_OK) {
			fprintf(stderr, "biasline reduce: source.network: %s\n",
			        d.message);
			rc = EXIT_DATA;
			break;
		}
		if (fmt == FORMAT_TEXT)
			reduce_print_point(stdout, &res.pts[k], k, res.n);
		reduce_print_network(stdout, fmt, net, ref, nv, ps, k, res.n);
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
		{ "help", no_argument, NULL, 'h' },
		{ "version", no_argument, NULL, 'V' },
		{ NULL, 0, NULL, 0 },
	};
	enum reduce_format fmt = FORMAT_TEXT;
	bool nodes = false;
	const char *refname = NULL;
	int c;
	optind = 1;
	opterr = 0;
	while ((c = getopt_long(argc, argv, "+f:nr:hV", opts, NULL)) != -1) {
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
		case 'h':
			reduce_usage(stdout);
			return EXIT_OK_CODE;
		case 'V':
			printf("biasline %s\n", BIASLINE_VERSION);
			return EXIT_OK_CODE;
		default:
			if (optopt != 0 && strchr("fr", optopt) != NULL)
				fprintf(stderr, "biasline reduce: option '%s' needs a "
				        "value (try 'biasline reduce --help')\n",
				        argv[optind - 1]);
			else
				fprintf(stderr, "biasline reduce: unknown option '%s' (try "
				        "'biasline reduce --help')\n", argv[optind - 1]);
			return EXIT_USAGE;
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
	int code = cli_load_problem("reduce", argv[optind], &s, &pb);
	if (code != 0)
		return code;
	const char *pos = NULL, *neg = NULL;
	size_t p, n;
	if (s.network != NULL && network_terminals(s.network, &p, &n) == 0) {
		pos = network_node_name(s.network, p);
		neg = network_node_name(s.network, n);
	}
	reduce_print_equivalent(stdout, fmt, &pb.src, pos, neg);
	int rc = EXIT_OK_CODE;
	if (nodes)
		rc = reduce_nodes(&s, &pb, fmt, refname);
	else if (s.network != NULL)
		reduce_cautions(stderr, s.network, NULL, NULL);
	session_fini(&s);
	if (fflush(stdout) != 0 || ferror(stdout)) {
		perror("biasline reduce: writing the output");
		return EXIT_IO;
	}
	return rc;
}
