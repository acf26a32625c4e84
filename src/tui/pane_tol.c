/*
 * pane_tol.c - the tolerance view: the session's tolerances, the worst
 * case of the device current, voltage and powers (tol_worst_case), and on
 * request a seeded Monte Carlo run (tol_monte_carlo) with a text histogram
 * of the current.  The run happens on one key press, never per redraw.
 */
#include <math.h>
#include <stdbool.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "core/safety.h"
#include "session/analysis.h"
#include "core/stability.h"
#include "core/tolerance.h"
#include "tui/app.h"
#include "tui/panes.h"

/* Monte Carlo trials the view runs when asked, and its bins. */
#define TOL_TRIALS 10000
#define TOL_BINS 8
#define TOL_SEED 1

/* The tolerance view's own state. */
struct tol_state {
	bool open;
	bool have_case;         /* C was built (else MSG says why) */
	bool have_wc, have_mc;
	char msg[600];          /* why nothing can be shown, or "" */
	struct tol_case c;
	struct tol_worst w;
	struct verdict vd;      /* the ratings at worst (have_wc) */
	struct tol_mc mc;
};

/* The unit of output O. */
static enum qty_kind pane_tol_unit(enum tol_output o)
{
	return o == TOL_CURRENT ? QTY_CURRENT : o == TOL_VOLTAGE ? QTY_VOLTAGE
	       : QTY_POWER;
}

/* Open the view: build the case from the session and run the worst case. */
static void pane_tol_open(struct app *a, struct tol_state *t)
{
	t->open = true;
	t->have_case = t->have_wc = t->have_mc = false;
	t->msg[0] = '\0';
	if (!a->pb_ok) {
		snprintf(t->msg, sizeof t->msg, "%s", a->pb_err);
		return;
	}
	if (a->s.analysis.ntol == 0) {
		snprintf(t->msg, sizeof t->msg, "no tolerances in this session: "
		         "close this view, select a parameter (Up/Down) and press "
		         "%% to give it one (5%%, 0.2, 22..26 or 5%% normal)");
		return;
	}
	char err[600];
	if (session_tolerance_case(&a->s, &a->pb, &t->c, err, sizeof err) != 0) {
		snprintf(t->msg, sizeof t->msg, "%s", err);
		return;
	}
	t->have_case = true;
	if (t->c.nitems > TOL_MAX_CORNER_ITEMS) {
		snprintf(t->msg, sizeof t->msg, "more than %d tolerances: no worst "
		         "case (m runs the Monte Carlo trials)", TOL_MAX_CORNER_ITEMS);
		return;
	}
	struct app_work wk;
	char what[64];
	snprintf(what, sizeof what, "worst case, %zu corners",
	         (size_t)1 << t->c.nitems);
	app_work_begin(a, &wk, what);
	int rc = tol_worst_case_watched(&t->c, &t->w, &wk.core, err, sizeof err);
	enum app_work_end end = app_work_end(&wk);
	if (end != APP_WORK_DONE) {
		snprintf(t->msg, sizeof t->msg, "worst case %.300s: T twice runs "
		         "it again", err);
		app_message(a, false, "worst case %.200s", err);
		return;
	}
	if (rc != 0) {
		snprintf(t->msg, sizeof t->msg, "%s", err);
	} else {
		t->have_wc = true;
		/* Each part at its own extreme, held to the ratings (the words of
		 * 'biasline tolerance'); a network's equivalent is no part. */
		const struct tol_worst *w = &t->w;
		double im = fmax(fabs(w->min[TOL_CURRENT].value),
		                 fabs(w->max[TOL_CURRENT].value));
		double pd = fmax(fabs(w->min[TOL_DEVICE_POWER].value),
		                 fabs(w->max[TOL_DEVICE_POWER].value));
		double pr = a->s.network != NULL ? NAN
		            : w->max[TOL_RESISTOR_POWER].value;
		verdict_worst(pd, im, pr, t->c.form == SOURCE_NORTON ? "RP" : "RS",
		              &a->s.analysis.ratings, &t->vd);
	}
	/* Several points somewhere in the box: say so under the table. */
	if (!t->have_wc)
		return;
	snprintf(what, sizeof what, "folds over %zu corners",
	         (size_t)1 << t->c.nitems);
	app_work_begin(a, &wk, what);
	bool fold = stability_box_fold_watched(&t->c, err, sizeof err, &wk.core);
	if (app_work_end(&wk) != APP_WORK_DONE)
		snprintf(t->msg, sizeof t->msg, "the search for folds in the "
		         "tolerance box was stopped: T twice runs it again");
	else if (fold)
		snprintf(t->msg, sizeof t->msg, "%s", err);
}

/* Run the Monte Carlo trials (on the m key). */
static void pane_tol_run(struct app *a, struct tol_state *t)
{
	if (!t->have_case)
		return;
	struct tol_window win[2];
	size_t nwin = session_target_windows(&a->s, win);
	char err[600], what[64];
	snprintf(what, sizeof what, "Monte Carlo, %d trials", TOL_TRIALS);
	struct app_work wk;
	app_work_begin(a, &wk, what);
	t->have_mc = tol_monte_carlo_watched(&t->c, TOL_TRIALS, TOL_SEED,
	                                     TOL_BINS, win, nwin, &t->mc,
	                                     &wk.core, err, sizeof err) == 0;
	enum app_work_end end = app_work_end(&wk);
	if (end != APP_WORK_DONE) {
		t->have_mc = false;
		app_message(a, false, "Monte Carlo %s: m runs it again", err);
	} else if (t->have_mc) {
		app_message(a, false, "%zu Monte Carlo trials done", t->mc.trials);
	} else {
		snprintf(t->msg, sizeof t->msg, "%s", err);
	}
}

/* Write TEXT wrapped to W cells from ROW, at most MAX lines; rows used. */
static int pane_tol_wrap(struct app *a, int row, int col, int w, int max,
                         const char *text, enum term_style st)
{
	struct render_span sp[8];
	size_t n = render_wrap(text, w, sp, 8);
	int used = 0;
	for (size_t k = 0; k < n && k < 8 && used < max; k++) {
		char part[640];
		size_t len = sp[k].len < sizeof part ? sp[k].len : sizeof part - 1;
		memcpy(part, text + sp[k].off, len);
		part[len] = '\0';
		term_text(&a->term, row + used++, col, part, w, st);
	}
	return used;
}

/* Draw the tolerance view centred in BOX. */
static void pane_tol_draw(struct app *a, void *self, const struct rect *box)
{
	const struct tol_state *t = self;
	int ascii = app_unicode(a) ? 0 : 1;
	int w = box->cols - 4 < 74 ? box->cols - 4 : 74;
	int h = box->rows;
	int top = box->row, left = box->col + (box->cols - w) / 2;
	app_overlay_box(a, top, left, h, w);
	char line[640], b0[48], b1[48], b2[48];
	term_fill(&a->term, top, left, w, TS_TITLE);
	snprintf(line, sizeof line, "Tolerance: %zu parameters varied",
	         t->have_case ? t->c.nitems : (size_t)0);
	term_text(&a->term, top, left + 1, line, w - 2, TS_TITLE);
	int row = top + 1, x = left + 2, cw = w - 4, end = top + h - 1;
	/* Lines the rest needs: the worst case, its ratings, the trials. */
	int need = 0, words = 0;
	if (t->have_wc) {
		need += 2 + TOL_NOUT + 1;
		for (size_t k = 0; k < t->vd.nlines; k++)
			words += (int)render_wrap(t->vd.lines[k].words, cw - 2, NULL, 0);
	}
	if (t->have_mc)
		need += 3 + (int)t->mc.hist[TOL_CURRENT].nbins + 1;
	/* The ratings in the CLI's words when they fit, else one line each. */
	bool compact = row + need + words >= end;
	need += compact ? (int)t->vd.nlines : words;
	/* The tolerances themselves, as 'biasline tolerance' lists them, when
	 * there is room (the side pane shows them beside each value too). */
	if (t->have_case && row + 1 + (int)t->c.nitems + need < end) {
		snprintf(line, sizeof line, "%-15s %-12s %-12s %-12s %s", "tolerance",
		         "nominal", "minimum", "maximum", "distribution");
		term_text(&a->term, row++, x, line, cw, TS_HEADER);
		for (size_t k = 0; k < t->c.nitems; k++) {
			const struct tol_item *it = &t->c.items[k];
			enum qty_kind u = paramref_unit(&t->c.pb, &it->param);
			qty_format(b0, sizeof b0, paramref_get(&t->c.pb, &it->param), u,
			           5, ascii);
			qty_format(b1, sizeof b1, it->lo, u, 5, ascii);
			qty_format(b2, sizeof b2, it->hi, u, 5, ascii);
			/* The key as in the file, or its label when that is too
			 * long for the column (never cut mid-word). */
			const char *key = paramref_key(&t->c.pb, &it->param);
			struct param p;
			if (render_text_width(key) > 15 && params_find(&a->s, key, &p) == 0)
				key = p.label;
			snprintf(line, sizeof line, "%-15s %-12s %-12s %-12s %s", key, b0,
			         b1, b2, tol_dist_name(it->dist));
			term_text(&a->term, row++, x, line, cw, TS_NORMAL);
		}
	}
	if (t->have_wc) {
		snprintf(line, sizeof line, "worst case over %zu corners%s",
		         t->w.corners, t->w.failed ? " (some without a point)" : "");
		term_text(&a->term, row++, x, line, cw, TS_NORMAL);
		snprintf(line, sizeof line, "%-15s %-12s %-12s %s", "", "nominal",
		         "minimum", "maximum");
		term_text(&a->term, row++, x, line, cw, TS_HEADER);
		for (int o = 0; o < TOL_NOUT && row < end; o++) {
			enum qty_kind u = pane_tol_unit((enum tol_output)o);
			qty_format(b0, sizeof b0, t->w.nominal[o], u, 5, ascii);
			qty_format(b1, sizeof b1, t->w.min[o].value, u, 5, ascii);
			qty_format(b2, sizeof b2, t->w.max[o].value, u, 5, ascii);
			snprintf(line, sizeof line, "%-15s %-12s %-12s %s",
			         tol_output_name((enum tol_output)o), b0, b1, b2);
			term_text(&a->term, row++, x, line, cw, TS_NORMAL);
		}
		if (t->vd.nlines > 0 && row < end) {
			snprintf(line, sizeof line, "ratings at worst (each part at its "
			         "own extreme): %s", ratings_verdict_name(t->vd.worst));
			term_text(&a->term, row++, x, line, cw, TS_HEADER);
		}
		for (size_t k = 0; k < t->vd.nlines && row < end; k++) {
			const struct verdict_line *l = &t->vd.lines[k];
			enum term_style st = l->verdict == RATINGS_OVER ? TS_ERROR
			                     : l->verdict == RATINGS_CAUTION ? TS_HEADER
			                     : TS_NORMAL;
			if (compact) {
				char one[160], two[160];
				app_verdict_text(a, l, cw - 2, one, two, sizeof one);
				term_text(&a->term, row++, x + 2, one, cw - 2, st);
			} else {
				row += pane_tol_wrap(a, row, x + 2, cw - 2, end - row,
				                     l->words, st);
			}
		}
	}
	if (t->msg[0] != '\0' && row < end)
		row += pane_tol_wrap(a, row, x, cw, end - row, t->msg,
		                     t->have_case ? TS_ERROR : TS_HEADER);
	if (t->have_mc && row + 2 < end) {
		const struct tol_stats *s = &t->mc.stats[TOL_CURRENT];
		qty_format(b0, sizeof b0, s->mean, QTY_CURRENT, 4, ascii);
		qty_format(b1, sizeof b1, s->sd, QTY_CURRENT, 3, ascii);
		snprintf(line, sizeof line, "Monte Carlo, %zu trials (seed %d): "
		         "I mean %s, sd %s", t->mc.trials, TOL_SEED, b0, b1);
		row++;
		row += pane_tol_wrap(a, row, x, cw, 2, line, TS_HEADER);
		const struct tol_hist *hg = &t->mc.hist[TOL_CURRENT];
		size_t most = 1;
		for (size_t k = 0; k < hg->nbins; k++)
			if (hg->counts[k] > most)
				most = hg->counts[k];
		int barw = cw - 24 > 40 ? 40 : cw - 24;
		for (size_t k = 0; k < hg->nbins && row < end; k++) {
			double lo = hg->lo + (hg->hi - hg->lo) * (double)k / (double)hg->nbins;
			int bar = barw > 0 ? (int)(barw * (double)hg->counts[k] / (double)most
			                           + 0.5) : 0;
			char bars[64];
			memset(bars, '#', (size_t)bar);
			bars[bar] = '\0';
			qty_format(b0, sizeof b0, lo, QTY_CURRENT, 4, ascii);
			snprintf(line, sizeof line, "%12s |%-*s %zu", b0, barw, bars,
			         hg->counts[k]);
			term_text(&a->term, row++, x, line, cw, TS_NORMAL);
		}
		if (t->mc.has_window && row < end) {
			snprintf(line, sizeof line, "yield %.4g %% inside the target's window",
			         100.0 * t->mc.yield);
			term_text(&a->term, row++, x, line, cw, TS_NORMAL);
		}
	}
	unsigned flags = t->have_case ? tol_safety(&t->c, t->have_wc ? &t->w : NULL,
	                                           t->have_mc ? &t->mc : NULL)
	                              : 0;
	if (flags != 0 && row + 1 < end) {
		char caution[320];
		safety_message(flags, caution, sizeof caution);
		row++;
		row += pane_tol_wrap(a, row, x, cw, end - row, caution, TS_ERROR);
	}
	term_fill(&a->term, end, left, w, TS_TITLE);
	char foot[128];
	snprintf(foot, sizeof foot, "%s  Esc close", t->have_case
	         ? "m run the Monte Carlo trials (10000)" : "");
	term_text(&a->term, end, left + 1, foot, w - 2, TS_TITLE);
}

/* Keys while the view is open: m runs the trials, Esc closes. */
static unsigned pane_tol_key(struct app *a, void *self, int key)
{
	struct tol_state *t = self;
	if (key == TK_RESIZE || key == 12)
		return 0;
	if (key == 'm') {
		pane_tol_run(a, t);
	} else if (key == TK_ESC || key == 'q' || key == 'T') {
		t->open = false;
	}
	return APP_HANDLED | APP_REDRAW;
}

/* Open on T. */
static unsigned pane_tol_act(struct app *a, void *self, const struct action *act)
{
	if (act->kind != ACT_OPEN)
		return 0;
	pane_tol_open(a, self);
	return APP_REDRAW;
}

/* Visible while open. */
static bool pane_tol_visible(const struct app *a, const void *self)
{
	(void)a;
	return ((const struct tol_state *)self)->open;
}

/* The tolerance overlay. */
const struct pane pane_tol = {
	.name = "tolerance",
	.slot = SLOT_BODY,
	.size = sizeof(struct tol_state),
	.visible = pane_tol_visible,
	.key = pane_tol_key,
	.draw = pane_tol_draw,
	.act = pane_tol_act,
};
