/*
 * cli_thermal.c - the self-heating lines of the commands' reports (see
 * cli_thermal.h).
 */
#include "cli_thermal.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "cli_analysis.h"
#include "core/network.h"

/* Add KEY to T's margins when PB can vary it. */
static void cli_thermal_add(struct cli_thermal *t, const struct problem *pb,
                            const char *key)
{
	struct paramref r;
	if (t->n >= CLI_THERMAL_MARGINS || strlen(key) >= sizeof t->keys[0] ||
	    paramref_find(pb, key, &r, NULL, 0) != 0)
		return;
	snprintf(t->keys[t->n], sizeof t->keys[t->n], "%s", key);
	t->n++;
}

/* Work out the margins (see cli_thermal.h). */
void cli_thermal_init(struct cli_thermal *t, const struct problem *pb,
                      const struct solve_options *o)
{
	memset(t, 0, sizeof *t);
	t->active = thermal_active(&pb->dev);
	if (!t->active)
		return;
	cli_thermal_add(t, pb, "thermal_resistance");
	cli_thermal_add(t, pb, "ambient_temperature");
	if (pb->net != NULL) {
		/* the network's first voltage source: its supply */
		for (size_t k = 0; k < network_part_count(pb->net); k++) {
			const struct network_part *np = network_part(pb->net, k);
			if (np->kind != NETWORK_VOLTAGE_SOURCE)
				continue;
			char key[PARAMREF_KEY_MAX + 8];
			snprintf(key, sizeof key, "%s%s", PARAMREF_NETWORK_PREFIX,
			         np->name);
			cli_thermal_add(t, pb, key);
			break;
		}
	} else if (!isinf(pb->src.r)) {
		cli_thermal_add(t, pb, "vs");
	} else {
		cli_thermal_add(t, pb, "is");
	}
	cli_thermal_add(t, pb, "supply_voltage");
	for (size_t k = 0; k < t->n; k++)
		t->ok[k] = thermal_margin(pb, o, t->keys[k], &t->m[k], t->why[k],
		                          sizeof t->why[k]) == 0;
}

/* One line under a point. */
void cli_thermal_print_point(const struct problem *pb,
                             const struct op_point *p, const char *indent)
{
	struct thermal_eval ev;
	struct thermal_keys k;
	if (!thermal_active(&pb->dev) || !thermal_keys_of(pb->dev.type, &k) ||
	    thermal_point_info(pb, p->v, p->i, &ev) != 0)
		return;
	char tj[32], ta[32], th[32], w[32], g[32];
	cli_fmt(tj, sizeof tj, ev.tj, QTY_TEMPERATURE, 5);
	cli_fmt(ta, sizeof ta, pb->dev.p[k.tamb], QTY_TEMPERATURE, 5);
	cli_fmt(th, sizeof th, pb->dev.p[k.theta], QTY_THERMAL_RES, 4);
	cli_fmt(w, sizeof w, ev.p, QTY_POWER, 4);
	cli_fmt_number(g, sizeof g, ev.gain, 3, false);
	printf("%sjunction %s (ambient %s + %s x %s); loop gain G = %s: %s\n",
	       indent, tj, ta, th, w, g,
	       ev.gain < 1.0 ? "thermally stable"
	                     : "thermally unstable (the part leaves it)");
}

/* The words of one margin into BUF. */
static void cli_thermal_margin_words(const struct thermal_margin *m,
                                     const struct problem *pb, bool runaway,
                                     char *buf, size_t n)
{
	enum qty_kind u = paramref_unit(pb, &m->param);
	char now[40], fold[40], ftj[40], end[40], tjm[40], at[40];
	cli_fmt(now, sizeof now, m->now, u, 5);
	cli_fmt(fold, sizeof fold, m->fold, u, 5);
	cli_fmt(ftj, sizeof ftj, m->fold_tj, QTY_TEMPERATURE, 4);
	cli_fmt(end, sizeof end, m->t_end, QTY_TEMPERATURE, 4);
	cli_fmt(at, sizeof at, m->at_tjmax, u, 5);
	struct thermal_keys k;
	thermal_keys_of(pb->dev.type, &k);
	cli_fmt(tjm, sizeof tjm, pb->dev.p[k.tjmax], QTY_TEMPERATURE, 4);
	int w;
	if (!m->found)
		w = snprintf(buf, n, "%s now; no runaway up to Tj %s", now, end);
	else if (runaway)
		w = snprintf(buf, n, "%s now; needs %s %s (fold at Tj %s)", now,
		             m->fold < m->now ? "at most" : "at least", fold, ftj);
	else
		w = snprintf(buf, n, "%s now; runs away %s %s (Tj %s)", now,
		             m->fold > m->now ? "above" : "below", fold, ftj);
	if (w >= 0 && (size_t)w < n && !isnan(m->at_tjmax))
		snprintf(buf + w, n - (size_t)w, "; Tj reaches Tjmax %s at %s", tjm,
		         at);
}

/* The thermal verdict and the margins. */
void cli_thermal_print_report(const struct cli_thermal *t,
                              const struct problem *pb,
                              const struct solve_options *o,
                              const struct solve_result *res)
{
	if (!t->active)
		return;
	/* the coolest stable point */
	const struct op_point *cool = NULL;
	double tcool = INFINITY;
	for (size_t k = 0; k < res->n; k++) {
		struct thermal_eval ev;
		if (thermal_point_info(pb, res->pts[k].v, res->pts[k].i, &ev) == 0 &&
		    ev.gain < 1.0 && ev.tj < tcool) {
			tcool = ev.tj;
			cool = &res->pts[k];
		}
	}
	bool runaway = res->n == 0 && res->status == SOLVE_NONE;
	/* Every balance, the unstable ones too (thresholds, not states). */
	struct thermal_result tr;
	thermal_solve(pb, o, &tr);
	bool unstable = false;
	for (size_t k = 0; k < tr.n; k++)
		unstable |= !tr.pts[k].stable;
	if (unstable) {
		char tm[32];
		printf("\n  heat balances up to Tjmax %s:\n",
		       cli_fmt(tm, sizeof tm, tr.tjmax, QTY_TEMPERATURE, 4));
		for (size_t k = 0; k < tr.n; k++) {
			char tj[32], g[32];
			printf("    %-12s G = %-8s %s\n",
			       cli_fmt(tj, sizeof tj, tr.pts[k].tj, QTY_TEMPERATURE, 5),
			       cli_fmt_number(g, sizeof g, tr.pts[k].gain, 3, false),
			       tr.pts[k].stable ? "stable: an operating point"
			                        : "unstable: heated past it, the part "
			                          "runs away");
		}
	}
	if (cool != NULL) {
		struct thermal_diagnosis d;
		thermal_diagnose(pb, o, tcool, &d);
		printf("\n  thermal loop (Tj <- Ta + theta P(Tj)): %s\n", d.verdict);
		if (d.advice[0] != '\0')
			printf("  advice: %s\n", d.advice);
	} else if (runaway) {
		printf("\n  %s\n", res->message);
	}
	if (t->n == 0)
		return;
	printf("\n  %s (the balance followed in Tj to the fold, G = 1)\n",
	       runaway ? "what a stable balance needs" : "margin to runaway");
	int wk = 0;
	for (size_t k = 0; k < t->n; k++)
		if ((int)strlen(t->keys[k]) > wk)
			wk = (int)strlen(t->keys[k]);
	for (size_t k = 0; k < t->n; k++) {
		char words[256];
		if (t->ok[k])
			cli_thermal_margin_words(&t->m[k], pb, runaway, words,
			                         sizeof words);
		else
			snprintf(words, sizeof words, "%s", t->why[k]);
		printf("    %-*s  %s\n", wk, t->keys[k], words);
	}
}

/* The CSV columns. */
void cli_thermal_csv_columns(const struct cli_thermal *t,
                             const struct problem *pb, struct csv *w)
{
	if (!t->active)
		return;
	csv_column(w, "junction_temperature_C");
	csv_column(w, "thermal_loop_gain");
	csv_column(w, "thermally_stable");
	for (size_t k = 0; k < t->n; k++) {
		struct paramref r;
		char key[PARAMREF_KEY_MAX + 16];
		enum qty_kind u = QTY_NUMBER;
		if (paramref_find(pb, t->keys[k], &r, NULL, 0) == 0)
			u = paramref_unit(pb, &r);
		snprintf(key, sizeof key, "runaway_%s", t->keys[k]);
		if (u == QTY_TEMPERATURE) {
			char name[CSV_NAME_MAX];
			snprintf(name, sizeof name, "%s_C", key);
			csv_column(w, name);
		} else {
			csv_column_unit(w, key, u);
		}
	}
}

/* The fields for point P. */
void cli_thermal_csv_fields(const struct cli_thermal *t,
                            const struct problem *pb,
                            const struct op_point *p, struct csv *w)
{
	if (!t->active)
		return;
	struct thermal_eval ev;
	if (thermal_point_info(pb, p->v, p->i, &ev) == 0) {
		csv_number(w, ev.tj);
		csv_number(w, ev.gain);
		csv_text(w, ev.gain < 1.0 ? "yes" : "no");
	} else {
		csv_empty(w);
		csv_empty(w);
		csv_empty(w);
	}
	for (size_t k = 0; k < t->n; k++)
		if (t->ok[k] && t->m[k].found)
			csv_number(w, t->m[k].fold);
		else
			csv_empty(w);
}

/* What a sweep's fold is (see cli_thermal.h). */
void cli_thermal_fold_words(const struct problem *pb,
                            const struct solve_options *o,
                            const struct paramref *r, double lo, double hi,
                            char *buf, size_t n)
{
	struct thermal_keys k;
	if (n > 0)
		buf[0] = '\0';
	if (!thermal_active(&pb->dev) || !thermal_keys_of(pb->dev.type, &k))
		return;
	/* the balances on either side of the fold */
	bool meet = false, edge = false;
	for (int side = 0; side < 2; side++) {
		struct problem q = *pb;
		if (paramref_set(&q, r, side ? hi : lo) != 0)
			continue;
		struct thermal_result tr;
		thermal_solve(&q, o, &tr);
		for (size_t j = 0; j < tr.n; j++) {
			if (fabs(tr.pts[j].gain - 1.0) < 0.05)
				meet = true;
			if (tr.pts[j].tj > q.dev.p[k.tjmax] - 0.5)
				edge = true;
		}
	}
	if (meet)
		snprintf(buf, n, "thermal runaway: a cool and a hot balance meet, "
		         "G = 1");
	else if (edge)
		snprintf(buf, n, "a balance crosses the maximum junction "
		         "temperature there");
}
