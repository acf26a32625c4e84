/*
 * pane_side.c - the side pane: the operating points, the parameter list
 * with the selection shown inverted, the diagnosis from diagnose.h and
 * the convergence table with the newest row at the bottom.  Every number
 * shown comes from the core; nothing here computes physics.  For a device
 * that heats itself the points carry their junction temperature and loop
 * gain, and while the thermal view is open the diagnosis and the table
 * are the thermal loop's (core/thermal.h, thermal_stepper.h).
 */
#include <math.h>
#include <stdbool.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "core/safety.h"
#include "core/diagnose.h"
#include "core/remedy.h"
#include "core/eseries.h"
#include "core/thermal.h"
#include "core/verdict.h"
#include "session/analysis.h"
#include "tui/app.h"
#include "tui/panes.h"

/* Multipliers of the fine and coarse nudges of log-step parameters. */
#define LOG_FINE 1.01
#define LOG_COARSE 1.1
/* Relative fine and coarse nudges of linear parameters. */
#define LIN_FINE 0.01
#define LIN_COARSE 0.1
/* The question the side pane asks: a value for the selected row. */
#define SIDE_ASK_VALUE 1
/* The question the side pane asks: a tolerance for the selected row. */
#define SIDE_ASK_TOLERANCE 2

/* The side pane's own state. */
struct side_state {
	int sel;            /* the selected parameter row */
	bool hidden;        /* Tab hid the pane */
	/* The last remedy found, for the session as solved (app.changes: the
	 * path restarts with every change, so it stands for the path too):
	 * redraws while a failed path is shown reuse it. */
	bool have_remedy;
	unsigned remedy_changes;
	struct remedy remedy;
};

/* The remedy for A's failed path, run once per session change and path. */
static const struct remedy *pane_side_remedy(struct app *a,
                                             struct side_state *sd)
{
	if (!sd->have_remedy || sd->remedy_changes != a->changes) {
		sd->remedy_changes = a->changes;
		struct solve_options o = *stepper_options(a->st);
		remedy_find(&a->pb, &o, &sd->remedy);
		sd->have_remedy = true;
	}
	return &sd->remedy;
}

/* Format VALUE compactly in engineering notation without a unit ("-4.31m"). */
static char *pane_side_eng(char *buf, size_t n, double value, int sig)
{
	static const char prefixes[] = "fpnum kMGT";
	if (!isfinite(value)) {
		/* Not defined here (a table cell): a dash, never "nan". */
		snprintf(buf, n, "-");
		return buf;
	}
	if (value == 0.0) {
		snprintf(buf, n, "0");
		return buf;
	}
	int e3 = (int)floor(log10(fabs(value)) / 3.0);
	double m = value / pow(10.0, 3.0 * e3);
	/* Rounding may carry the mantissa to 1000. */
	char tmp[32];
	int d = (int)floor(log10(fabs(m)) + 1e-12) + 1;
	snprintf(tmp, sizeof tmp, "%.*f", sig - d > 0 ? sig - d : 0, m);
	if (fabs(atof(tmp)) >= 1000.0) {
		e3++;
		m /= 1000.0;
		d = 1;
		snprintf(tmp, sizeof tmp, "%.*f", sig - d > 0 ? sig - d : 0, m);
	}
	if (e3 >= -5 && e3 <= 4) {
		char p = prefixes[e3 + 5];
		if (p == ' ')
			snprintf(buf, n, "%s", tmp);
		else
			snprintf(buf, n, "%s%c", tmp, p);
	} else {
		/* Beyond the prefixes: a short exponent form, "3.3e73". */
		char e[32];
		snprintf(e, sizeof e, "%.1e", value);
		char *x = strchr(e, 'e');
		if (x != NULL) {
			char *src = x + 1;
			if (*src == '+')
				src++;
			bool neg = *src == '-';
			if (neg)
				src++;
			while (*src == '0' && src[1] != '\0')
				src++;
			snprintf(buf, n, "%.*se%s%s", (int)(x - e), e, neg ? "-" : "", src);
		} else {
			snprintf(buf, n, "%s", e);
		}
	}
	return buf;
}

/* An error ratio for a table cell: "+0.383" below 10 in size, else in
 * engineering notation; "-" where it is not defined. */
static void pane_side_ratio(char *buf, size_t n, double ratio)
{
	if (isfinite(ratio) && fabs(ratio) < 10.0)
		snprintf(buf, n, "%+.3f", ratio);
	else
		pane_side_eng(buf, n, ratio, 3);
}

/* Write a section header TITLE at ROW, COL, W wide. */
static void pane_header(struct app *a, int row, int col, int w, const char *title)
{
	char buf[128];
	snprintf(buf, sizeof buf, "%s %s ", app_unicode(a) ? "\xE2\x94\x80" : "-", title);
	/* Too wide: the parenthesis goes, whole, rather than a cut word. */
	char *paren = strstr(buf, " (");
	if (render_text_width(buf) - 1 > w && paren != NULL) {
		paren[0] = ' ';
		paren[1] = '\0';
	}
	int n = term_text(&a->term, row, col, buf, w, TS_HEADER);
	for (int k = n; k < w; k++)
		term_put(&a->term, row, col + k, app_unicode(a) ? 0x2500 : '-', TS_HEADER);
}

/* Write at most LINES lines of TEXT word-wrapped to W cells from ROW. */
static int pane_wrap(struct app *a, int row, int col, int w, int lines,
                     const char *text, enum term_style style)
{
	if (lines <= 0 || w <= 0)
		return 0;
	struct render_span sp[32];
	size_t n = render_wrap(text, w, sp, 32);
	int used = 0;
	for (size_t k = 0; k < n && k < 32 && used < lines; k++) {
		char line[512];
		size_t len = sp[k].len < sizeof line ? sp[k].len : sizeof line - 1;
		memcpy(line, text + sp[k].off, len);
		line[len] = '\0';
		term_text(&a->term, row + used++, col, line, w, style);
	}
	return used;
}

/* Lines TEXT needs when wrapped to W cells. */
static int pane_wrap_lines(const char *text, int w)
{
	return w > 0 ? (int)render_wrap(text, w, NULL, 0) : 0;
}

/* The verdict's style: plain when stable, an error otherwise. */
static enum term_style pane_verdict_style(enum stability v)
{
	return v == STABILITY_STABLE ? TS_NORMAL
	       : v == STABILITY_UNKNOWN ? TS_DIM : TS_ERROR;
}

/*
 * Draw the operating points; returns the rows used.  One point: its V, I
 * and power, then r_d and its stability.  Several: a table with a header
 * (the columns' units), one row per point, the selected one inverted and
 * the one the path is heading for marked with '>'; scrolled to keep the
 * selection when they do not all fit.
 */
static int pane_points(struct app *a, int row, int col, int w, int max)
{
	int ascii = app_unicode(a) ? 0 : 1;
	int used = 0;
	if (!a->pb_ok)
		return pane_wrap(a, row, col, w, max, a->pb_err, TS_ERROR);
	if (a->res.n == 0) {
		char run[400];
		if (stability_runaway(&a->pb, run, sizeof run))
			return pane_wrap(a, row, col, w, max, run, TS_ERROR);
		return pane_wrap(a, row, col, w, max, a->res.message[0] != '\0'
		                 ? a->res.message : "no operating point", TS_ERROR);
	}
	char line[192];
	if (a->res.n == 1) {
		char v[48], i[48], p[48], r[48];
		qty_format(v, sizeof v, a->res.pts[0].v, QTY_VOLTAGE, 5, ascii);
		qty_format(i, sizeof i, a->res.pts[0].i, QTY_CURRENT, 5, ascii);
		qty_format(p, sizeof p, a->res.pts[0].power, QTY_POWER, 5, ascii);
		if (w >= 40)
			snprintf(line, sizeof line, "V %s  I %s  P %s", v, i, p);
		else
			snprintf(line, sizeof line, "%s %s %s", v, i, p);
		term_text(&a->term, row + used++, col, line, w, TS_HEADER);
		if (used >= max)
			return used;
		struct stability_result sr = app_stability(a, 0);
		if (isfinite(a->res.pts[0].rd))
			qty_format_short(r, sizeof r, a->res.pts[0].rd, QTY_RESISTANCE, 4,
			                 ascii);
		else
			snprintf(r, sizeof r, "not defined");
		snprintf(line, sizeof line, "r_d %s  %s", r, stability_name(sr.verdict));
		term_text(&a->term, row + used++, col, line, w,
		          pane_verdict_style(sr.verdict));
		return used;
	}
	bool heading;
	size_t focus = app_focus_point(a, &heading);
	snprintf(line, sizeof line, "#  %-5s %-5s %s", "V(V)", "I(A)",
	         ascii ? "rd(ohm)" : "rd(\xCE\xA9)");
	term_text(&a->term, row + used++, col, line, w, TS_DIM);
	int room = max - used;
	if (room <= 0)
		return used;
	size_t first = 0, n = a->res.n;
	bool more = n > (size_t)room;
	size_t shown = more ? (size_t)(room > 1 ? room - 1 : 1) : n;
	if (a->point >= shown)
		first = a->point - shown + 1;
	for (size_t k = first; k < n && k < first + shown; k++) {
		const struct op_point *pt = &a->res.pts[k];
		char v[32], i[32], r[32];
		pane_side_eng(v, sizeof v, pt->v, 3);
		pane_side_eng(i, sizeof i, pt->i, 3);
		pane_side_eng(r, sizeof r, pt->rd, 3);
		struct stability_result sr = app_stability(a, k);
		const char *verdict = stability_name(sr.verdict);
		snprintf(line, sizeof line, "%zu%c %-5s %-5s %-5s %s", k + 1,
		         heading && k == focus ? '>' : ' ', v, i, r, verdict);
		if (render_text_width(line) > w && sr.verdict == STABILITY_OSCILLATES)
			snprintf(line, sizeof line, "%zu%c %-5s %-5s %-5s %s", k + 1,
			         heading && k == focus ? '>' : ' ', v, i, r, "oscill.");
		enum term_style st = k == a->point ? TS_SELECTED
		                     : pane_verdict_style(sr.verdict);
		if (k == a->point)
			term_fill(&a->term, row + used, col, w, st);
		term_text(&a->term, row + used++, col, line, w, st);
	}
	if (more && used < max) {
		snprintf(line, sizeof line, "%zu points: p selects", n);
		term_text(&a->term, row + used++, col, line, w, TS_DIM);
	}
	return used;
}

/*
 * Draw what the model reports beyond V and I at the first operating point
 * (a transistor's region and collector side, a thermistor's temperature):
 * "label value" items packed whole onto at most MAX lines, then the
 * model's note.  Returns rows used.
 */
static int pane_extra(struct app *a, int row, int col, int w, int max)
{
	struct model_extra ex;
	if (!a->pb_ok || a->res.n == 0 || max <= 0 ||
	    device_secondary(&a->pb.dev, &a->pb.src, a->res.pts[0].v,
	                     a->res.pts[0].i, &ex) != 0)
		return 0;
	int ascii = app_unicode(a) ? 0 : 1;
	int used = 0;
	/* Items take up to 4 lines, 2 when there is a note (which gets the
	 * rest: a warning says the values are approximate). */
	char note[256] = "";
	if (ex.note[0] != '\0')
		snprintf(note, sizeof note, "%s%s", ex.warn ? "warning: " : "", ex.note);
	int items_max = note[0] != '\0' ? 2 : 4;
	if (items_max > max)
		items_max = max;
	char line[256] = "";
	int lw = 0;
	if (ex.region != NULL) {
		snprintf(line, sizeof line, "%s", ex.region);
		lw = render_text_width(line);
	}
	for (size_t k = 0; k <= ex.n && used < items_max; k++) {
		char item[96] = "";
		int iw = 0;
		if (k < ex.n) {
			char v[64];
			qty_format(v, sizeof v, ex.v[k].value, ex.v[k].kind, 4, ascii);
			snprintf(item, sizeof item, "%s %s", ex.v[k].label, v);
			iw = render_text_width(item);
		}
		/* Flush the line when the item does not fit, or at the end. */
		if (k == ex.n || (lw > 0 && lw + 2 + iw > w)) {
			if (lw > 0)
				term_text(&a->term, row + used++, col, line, w,
				          ex.warn ? TS_ERROR : TS_NORMAL);
			line[0] = '\0';
			lw = 0;
		}
		if (k < ex.n && used < items_max) {
			size_t len = strlen(line);
			snprintf(line + len, sizeof line - len, "%s%s", lw > 0 ? "  " : "",
			         item);
			lw += (lw > 0 ? 2 : 0) + iw;
		}
	}
	if (note[0] != '\0' && used < max) {
		used += pane_wrap(a, row + used, col, w, max - used, note,
		                  ex.warn ? TS_ERROR : TS_DIM);
	}
	return used;
}

/*
 * Draw the junction temperature and loop gain of the first point of a
 * device that heats itself (or why it has none); returns rows used.
 */
static int pane_junction(struct app *a, int row, int col, int w, int max)
{
	if (!a->pb_ok || max <= 0 || !thermal_active(&a->pb.dev))
		return 0;
	if (a->res.n == 0)
		return 0; /* pane_points shows the runaway message */
	struct thermal_eval ev;
	if (thermal_point_info(&a->pb, a->res.pts[0].v, a->res.pts[0].i,
	                       &ev) != 0)
		return 0;
	char t[48], g[48], line[160];
	qty_format(t, sizeof t, ev.tj, QTY_TEMPERATURE, 4, app_unicode(a) ? 0 : 1);
	snprintf(g, sizeof g, "%.3g", ev.gain + 0.0);
	const char *word = ev.gain < 1.0 ? "stable" : "unstable";
	snprintf(line, sizeof line, "Tj %s  G %s  %s", t, g, word);
	/* A narrow pane drops the blanks, then the word (the colour and the
	 * diagnosis below still say it), never cutting one. */
	if (render_text_width(line) > w)
		snprintf(line, sizeof line, "Tj %s G %s %s", t, g, word);
	if (render_text_width(line) > w)
		snprintf(line, sizeof line, "Tj %s  G %s", t, g);
	term_text(&a->term, row, col, line, w,
	          ev.gain < 1.0 ? TS_NORMAL : TS_ERROR);
	return 1;
}

/* Draw the core's safety caution for this case, if any; returns rows used. */
static int pane_caution(struct app *a, int row, int col, int w, int max)
{
	if (!a->pb_ok)
		return 0;
	unsigned flags = 0;
	for (size_t k = 0; k < a->res.n; k++)
		flags |= safety_check(&a->pb, a->res.pts[k].v, a->res.pts[k].i);
	if (a->res.n == 0)
		flags |= safety_check(&a->pb, 0.0, 0.0);
	if (flags == 0)
		return 0;
	char msg[320];
	safety_message(flags, msg, sizeof msg);
	return pane_wrap(a, row, col, w, max, msg, TS_ERROR);
}

/* How bad verdict V is, for ordering: over rating first. */
static int pane_severity(enum ratings_verdict v)
{
	return v == RATINGS_OVER ? 3 : v == RATINGS_CAUTION ? 2
	       : v == RATINGS_WITHIN ? 1 : 0;
}

/* One line of the ratings section, with the priority it keeps its row by
 * (0 kept longest). */
struct pane_vline {
	char text[160];
	enum term_style style;
	int prio;
};

/* Most lines of the ratings section. */
#define PANE_VLINES (2 * VERDICT_MAX_LINES + 1)

/*
 * The ratings section of the point (V, I) at width W into OUT: the parts
 * worst first, each with its power, rating, margin and verdict (verdict.h),
 * then the target and its error.  Returns the number of lines; *WORST gets
 * the worst verdict and *RATED whether any part has a rating.
 */
static size_t pane_vlines(struct app *a, double v, double i, int w,
                          struct pane_vline *out, enum ratings_verdict *worst,
                          bool *rated)
{
	struct verdict vd;
	session_verdict(&a->s, &a->pb, v, i, &vd);
	*worst = vd.worst;
	*rated = false;
	size_t order[VERDICT_MAX_LINES], n = 0;
	for (size_t k = 0; k < vd.nlines && k < VERDICT_MAX_LINES; k++)
		order[n++] = k;
	/* Worst first; the core's order among equals. */
	for (size_t k = 1; k < n; k++)
		for (size_t j = k; j > 0 && pane_severity(vd.lines[order[j]].verdict) >
		                            pane_severity(vd.lines[order[j - 1]].verdict);
		     j--) {
			size_t t = order[j];
			order[j] = order[j - 1];
			order[j - 1] = t;
		}
	size_t m = 0;
	for (size_t k = 0; k < n; k++) {
		const struct verdict_line *l = &vd.lines[order[k]];
		int sev = pane_severity(l->verdict);
		*rated = *rated || sev > 0;
		char one[160], two[160];
		app_verdict_text(a, l, w, one, two, sizeof one);
		enum term_style st = sev == 3 ? TS_ERROR : sev == 2 ? TS_HEADER
		                     : TS_NORMAL;
		snprintf(out[m].text, sizeof out[m].text, "%s", one);
		out[m].style = st;
		out[m++].prio = sev >= 2 ? 0 : sev == 1 ? 3 : 4;
		if (two[0] != '\0') {
			snprintf(out[m].text, sizeof out[m].text, "%s", two);
			out[m].style = sev >= 2 ? st : TS_DIM;
			out[m++].prio = sev >= 2 ? 2 : 5;
		}
	}
	char t[160];
	app_verdict_target(a, &vd, w, t, sizeof t);
	if (t[0] != '\0') {
		snprintf(out[m].text, sizeof out[m].text, "%s", t);
		out[m].style = TS_NORMAL;
		out[m++].prio = 1;
	}
	return m;
}

/* True when A's session gives a rating or a target. */
static bool pane_rated(const struct app *a)
{
	const struct ratings *r = &a->s.analysis.ratings;
	const struct session_target *t = &a->s.analysis.target;
	return isfinite(r->device_max_power) || isfinite(r->device_max_current) ||
	       isfinite(r->resistor_power) || isfinite(t->current) ||
	       isfinite(t->voltage) || isfinite(t->power);
}

/* True when A's session has a target. */
static bool pane_has_target(const struct app *a)
{
	const struct session_target *t = &a->s.analysis.target;
	return isfinite(t->current) || isfinite(t->voltage) || isfinite(t->power);
}

/*
 * Without ratings or a target: the parts' powers packed whole onto as few
 * lines as they take ("RS 145.3 mW  source 159.3 mW"), with no header; the
 * device's power is left out when the point's line shows it.  Rows used.
 */
static int pane_powers(struct app *a, int row, int col, int w, int max)
{
	size_t k = a->point < a->res.n ? a->point : 0;
	struct verdict vd;
	session_verdict(&a->s, &a->pb, a->res.pts[k].v, a->res.pts[k].i, &vd);
	char line[256] = "";
	int lw = 0, used = 0;
	for (size_t j = 0; j <= vd.nlines && used < max; j++) {
		char item[160] = "", two[160];
		int iw = 0;
		if (j < vd.nlines) {
			if (vd.lines[j].part == VERDICT_DEVICE_POWER && a->res.n == 1)
				continue;
			app_verdict_text(a, &vd.lines[j], w, item, two, sizeof item);
			iw = render_text_width(item);
		}
		if (j == vd.nlines || (lw > 0 && lw + 2 + iw > w)) {
			if (lw > 0)
				term_text(&a->term, row + used++, col, line, w, TS_NORMAL);
			line[0] = '\0';
			lw = 0;
		}
		if (j < vd.nlines) {
			size_t len = strlen(line);
			snprintf(line + len, sizeof line - len, "%s%s", lw > 0 ? "  " : "",
			         item);
			lw += (lw > 0 ? 2 : 0) + iw;
		}
	}
	return used;
}

/*
 * Draw the ratings section (its header and lines) in at most MAX rows;
 * returns rows used.  When the lines do not all fit, the least important
 * go first: the margins of parts within rating, then those parts, then the
 * parts without a rating; the worst part and the target stay.
 */
static int pane_ratings(struct app *a, int row, int col, int w, int max)
{
	if (!a->pb_ok || a->res.n == 0 || max < 2)
		return 0;
	struct pane_vline ln[PANE_VLINES];
	enum ratings_verdict worst;
	bool rated;
	/* The selected point (the one the table inverts). */
	size_t k = a->point < a->res.n ? a->point : 0;
	size_t n = pane_vlines(a, a->res.pts[k].v, a->res.pts[k].i, w, ln, &worst,
	                       &rated);
	int keep = 5, c = 0;
	for (; keep >= 0; keep--) {
		c = 0;
		for (size_t j = 0; j < n; j++)
			c += ln[j].prio <= keep;
		if (c <= max - 1)
			break;
	}
	/* The rows left go to the first lines of the next level. */
	int extra = max - 1 - c;
	if (!rated && !pane_has_target(a))
		return pane_powers(a, row, col, w, max);
	char title[96];
	if (rated)
		snprintf(title, sizeof title, "Ratings: %s", ratings_verdict_name(worst));
	else
		snprintf(title, sizeof title, "Power (no ratings)");
	pane_header(a, row, col, w, title);
	int used = 1;
	for (size_t j = 0; j < n && used < max; j++) {
		if (ln[j].prio == keep + 1 && extra > 0)
			extra--;
		else if (ln[j].prio > keep)
			continue;
		term_text(&a->term, row + used++, col, ln[j].text, w, ln[j].style);
	}
	return used;
}

/* Rows the ratings section would take at width W with no limit. */
static int pane_ratings_need(struct app *a, int w)
{
	if (!a->pb_ok || a->res.n == 0)
		return 0;
	struct pane_vline ln[PANE_VLINES];
	enum ratings_verdict worst;
	bool rated;
	size_t k = a->point < a->res.n ? a->point : 0;
	int n = (int)pane_vlines(a, a->res.pts[k].v, a->res.pts[k].i, w, ln,
	                         &worst, &rated);
	if (!rated && !pane_has_target(a))
		return n;   /* at most: packed, without a header */
	return 1 + n;
}

/* Draw the parameter list (scrolled to keep the selection); rows used. */
static int pane_params(struct app *a, struct side_state *sd, int row, int col,
                       int w, int max)
{
	struct param ps[PARAMS_MAX];
	int n = (int)params_list(&a->s, ps, PARAMS_MAX);
	if (sd->sel >= n)
		sd->sel = n - 1;
	if (sd->sel < 0)
		sd->sel = 0;
	if (n > 0)
		snprintf(a->selected, sizeof a->selected, "%.63s", ps[sd->sel].key);
	int first = 0;
	if (sd->sel >= max)
		first = sd->sel - max + 1;
	int used = 0;
	for (int k = first; k < n && used < max; k++) {
		char val[64], line[160], tol[64];
		params_format(&a->s, &ps[k], !app_unicode(a), val, sizeof val);
		snprintf(line, sizeof line, "%-8s %s", ps[k].label, val);
		/* Its tolerance beside it, when the row has room for it whole. */
		if (params_tolerance(&a->s, ps[k].key, true, !app_unicode(a), tol,
		                     sizeof tol) &&
		    render_text_width(line) + 1 + render_text_width(tol) <= w) {
			size_t len = strlen(line);
			snprintf(line + len, sizeof line - len, " %s", tol);
		}
		enum term_style st = k == sd->sel ? TS_SELECTED : TS_NORMAL;
		if (k == sd->sel)
			term_fill(&a->term, row + used, col, w, st);
		term_text(&a->term, row + used, col, line, w, st);
		used++;
	}
	return used;
}

/* The diagnosis as paragraphs, most important last to drop. */
struct pane_diag {
	int n;
	char text[4][640];
	enum term_style style[4];
	int optional;     /* index of the paragraph to drop first, or -1 */
};

/*
 * Build the thermal loop's diagnosis into D: G and what it means at the
 * balance (or the runaway), the path's state with G at its newest step,
 * and the remedy.
 */
static void pane_diag_thermal(struct app *a, struct pane_diag *d)
{
	struct thermal_diagnosis at, live;
	bool have = a->res.n > 0;
	double tcool = NAN;
	for (size_t k = 0; k < a->res.n; k++) {
		double t = thermal_point_temperature(&a->pb, a->res.pts[k].v,
		                                     a->res.pts[k].i);
		if (isnan(tcool) || t < tcool)
			tcool = t;
	}
	int ascii = app_unicode(a) ? 0 : 1;
	char t[48];
	/* First the short verdict, which fits the narrowest pane. */
	if (have) {
		thermal_diagnose(&a->pb, &a->s.solver, tcool, &at);
		qty_format_short(t, sizeof t, tcool, QTY_TEMPERATURE, 4, ascii);
		snprintf(d->text[d->n], sizeof d->text[0], "G %.3g at %s: %s",
		         at.gain + 0.0, t, at.stable ? "stable" : "runaway");
		d->style[d->n++] = at.stable ? TS_GOOD : TS_ERROR;
	} else {
		struct thermal_keys k;
		double tjmax = thermal_keys_of(a->pb.dev.type, &k)
		               ? a->pb.dev.p[k.tjmax] : NAN;
		qty_format_short(t, sizeof t, tjmax, QTY_TEMPERATURE, 4, ascii);
		snprintf(d->text[d->n], sizeof d->text[0], "runs away: no balance "
		         "up to Tjmax %s", t);
		d->style[d->n++] = TS_ERROR;
	}
	enum step_status st = thermal_stepper_status(a->tst);
	const struct thermal_row *last = thermal_stepper_last(a->tst);
	size_t n;
	thermal_stepper_trace(a->tst, &n);
	char g[48] = "-";
	if (last != NULL && isfinite(last->tj)) {
		thermal_diagnose(&a->pb, &a->s.solver, last->tj, &live);
		if (isfinite(live.gain))
			snprintf(g, sizeof g, "%.3g", live.gain + 0.0);
	}
	snprintf(d->text[d->n], sizeof d->text[0], "k=%zu %s: G %s here",
	         n > 0 ? n - 1 : 0, step_status_name(st), g);
	d->style[d->n++] = st == STEP_CONVERGED ? TS_GOOD
	                   : st == STEP_CONTINUE ? TS_NORMAL : TS_ERROR;
	/* Then what it means, or the remedy for a runaway (dropped first). */
	const char *more = have ? at.verdict : "";
	if (!have || st == STEP_DIVERGING)
		more = "lower the thermal resistance (a larger heat sink), add "
		       "series or emitter resistance, or drive with a current "
		       "source";
	if (more[0] != '\0') {
		snprintf(d->text[d->n], sizeof d->text[0], "%s", more);
		d->optional = d->n;
		d->style[d->n++] = TS_DIM;
	}
}

/* Build the diagnosis paragraphs of A into D. */
static void pane_diag_build(struct app *a, struct side_state *sd,
                            struct pane_diag *d)
{
	d->n = 0;
	d->optional = -1;
	if (!a->pb_ok)
		return;
	if (a->thermal) {
		pane_diag_thermal(a, d);
		return;
	}
	enum projection_order order = a->s.solver.order;
	struct diagnosis at;
	bool heading = false;
	size_t focus = app_focus_point(a, &heading);
	bool have = focus != (size_t)-1;
	if (have) {
		/* on the curve through the point (a self-heated part's, at
		 * the point's own junction temperature) */
		struct problem fq;
		thermal_problem_at_point(&a->pb, a->res.pts[focus].v,
		                         a->res.pts[focus].i, &fq);
		diagnose_at(&fq, order, a->res.pts[focus].v, a->s.solver.tol, 1.0,
		            &at);
		char which[64] = "";
		if (a->res.n > 1)
			snprintf(which, sizeof which, " at point %zu%s", focus + 1,
			         heading ? " (the path's)" : " (selected)");
		/* How many projections from this path's start, to the stopping
		 * test's tolerance. */
		char count[96] = "";
		size_t nr;
		const struct trace_row *rows = stepper_trace(a->st, &nr);
		if (nr > 0 && fabs(at.gprime) < 1.0) {
			double p = diagnose_projections(&fq, order, a->res.pts[focus].v,
			                                a->res.pts[focus].i, rows[0].i,
			                                a->s.solver.tol);
			if (isfinite(p))
				snprintf(count, sizeof count, "; about %.0f projections from "
				         "the start", p);
		}
		snprintf(d->text[d->n], sizeof d->text[0], "predicted%s: %s%s", which,
		         at.verdict, count);
		d->style[d->n++] = fabs(at.gprime) < 1.0 ? TS_GOOD : TS_ERROR;
		char g[48], o[48];
		if (isfinite(at.gprime))
			pane_side_eng(g, sizeof g, at.gprime, 3);
		else
			snprintf(g, sizeof g, "not defined");
		if (isfinite(at.gprime_other))
			pane_side_eng(o, sizeof o, at.gprime_other, 3);
		else
			snprintf(o, sizeof o, "not defined");
		snprintf(d->text[d->n], sizeof d->text[0], "g' %s in this order, %s "
		         "in the other", g, o);
		d->optional = d->n;
		d->style[d->n++] = TS_NORMAL;
	}
	enum step_status st = stepper_status(a->st);
	const struct trace_row *last = stepper_last(a->st);
	char msg[320];
	struct diagnosis live;
	const struct diagnosis *dp = NULL;
	if (st != STEP_CONTINUE && last != NULL && isfinite(last->v)) {
		diagnose_at(&a->epb, order, last->v, a->s.solver.tol, 1.0, &live);
		dp = &live;
	}
	if (st != STEP_CONTINUE && st != STEP_CONVERGED) {
		/* A remedy that was run and converges, not a guess. */
		const struct remedy *rm = pane_side_remedy(a, sd);
		if (dp == NULL) {
			memset(&live, 0, sizeof live);
			dp = &live;
		}
		snprintf(live.advice, sizeof live.advice, "%s", rm->text);
	}
	size_t n;
	stepper_trace(a->st, &n);
	size_t k = n > 0 ? n - 1 : 0;
	if (st != STEP_CONTINUE) {
		/* (while the path can go on, the table's title counts the steps) */
		diagnose_status_message(st, order, dp, msg, sizeof msg);
		snprintf(d->text[d->n], sizeof d->text[0], "after %zu projection%s: %s",
		         k, k == 1 ? "" : "s", msg);
		d->style[d->n++] = st == STEP_CONVERGED ? TS_GOOD : TS_ERROR;
	}
	/* The remedy, unless the status line already carries one. */
	bool said = st != STEP_CONTINUE &&
	            (strstr(msg, at.advice) != NULL ||
	             (dp != NULL && dp->advice[0] != '\0'));
	if (have && at.advice[0] != '\0' && !said) {
		snprintf(d->text[d->n], sizeof d->text[0], "%s", at.advice);
		d->style[d->n++] = TS_DIM;
	}
}

/* Lines diagnosis D needs at width W (DROP: without the optional one). */
static int pane_diag_lines(const struct pane_diag *d, int w, bool drop)
{
	int lines = 0;
	for (int k = 0; k < d->n; k++)
		if (!(drop && k == d->optional))
			lines += pane_wrap_lines(d->text[k], w);
	return lines;
}

/* Draw diagnosis D in at most MAX lines; returns rows used. */
static int pane_diagnosis(struct app *a, const struct pane_diag *d, int row,
                          int col, int w, int max)
{
	bool drop = pane_diag_lines(d, w, false) > max;
	int used = 0;
	/* Whole paragraphs only: one that does not fit is left out, never cut. */
	for (int k = 0; k < d->n && used < max; k++) {
		if (drop && k == d->optional)
			continue;
		int need = pane_wrap_lines(d->text[k], w);
		if (used + need > max)
			continue;
		used += pane_wrap(a, row + used, col, w, max - used, d->text[k],
		                  d->style[k]);
	}
	return used;
}

/*
 * Draw the thermal path's table, newest last: k, Tj, heat, step and ratio
 * (the ratio tends to G), or without the step when narrow.
 */
static void pane_thermal_table(struct app *a, int row, int col, int w, int max)
{
	bool wide = w >= 38;
	char line[256];
	if (wide)
		snprintf(line, sizeof line, "%3s %8s %8s %7s %6s", "k", "Tj", "P",
		         "step", "ratio");
	else
		snprintf(line, sizeof line, "%3s %8s %8s %6s", "k", "Tj", "P", "ratio");
	term_text(&a->term, row, col, line, w, TS_HEADER);
	size_t n;
	const struct thermal_row *rows = thermal_stepper_trace(a->tst, &n);
	size_t show = (size_t)(max - 1);
	size_t first = n > show ? n - show : 0;
	for (size_t k = first; k < n; k++) {
		const struct thermal_row *r = &rows[k];
		char t[48], p[48], step[48], ratio[48];
		snprintf(t, sizeof t, "%.5g", r->tj);
		pane_side_eng(p, sizeof p, r->p, 4);
		pane_side_eng(step, sizeof step, r->step, 3);
		pane_side_ratio(ratio, sizeof ratio, r->ratio);
		if (wide)
			snprintf(line, sizeof line, "%3u %8s %8s %7s %6s", r->k, t, p,
			         step, ratio);
		else
			snprintf(line, sizeof line, "%3u %8s %8s %6s", r->k, t, p, ratio);
		term_text(&a->term, row + 1 + (int)(k - first), col, line, w,
		          k + 1 == n ? TS_HEADER : TS_NORMAL);
	}
}

/* Draw the convergence table with the newest row at the bottom. */
static void pane_conv_table(struct app *a, int row, int col, int w, int max)
{
	if (max < 2)
		return;
	if (a->thermal) {
		pane_thermal_table(a, row, col, w, max);
		return;
	}
	bool wide = w >= 42;
	char line[256];
	/* Units in the header: the residual is a current or a voltage
	 * (problem.h); the step changes V or I, whichever the half step moved. */
	const char *ru = problem_residual_kind(&a->pb) == QTY_VOLTAGE ? "F(V)"
	                                                               : "F(A)";
	if (wide)
		snprintf(line, sizeof line, "%3s %7s %7s %7s %7s %6s", "k", "V(V)",
		         "I(A)", ru, "step", "ratio");
	else
		snprintf(line, sizeof line, "%3s %8s %8s %7s", "k", "V(V)", "I(A)",
		         "ratio");
	term_text(&a->term, row, col, line, w, TS_HEADER);
	size_t n;
	const struct trace_row *rows = stepper_trace(a->st, &n);
	size_t show = (size_t)(max - 1);
	size_t first = n > show ? n - show : 0;
	for (size_t k = first; k < n; k++) {
		const struct trace_row *r = &rows[k];
		char v[48], i[48], res[48], step[48], ratio[48];
		pane_side_eng(v, sizeof v, r->v, 4);
		pane_side_eng(i, sizeof i, r->i, 4);
		pane_side_eng(res, sizeof res, r->residual, 3);
		/* Row 0 is the start point: it has no step yet ("-"). */
		pane_side_eng(step, sizeof step, r->step, 3);
		pane_side_ratio(ratio, sizeof ratio, r->ratio);
		if (wide)
			snprintf(line, sizeof line, "%3u %7s %7s %7s %7s %6s", r->k, v, i,
			         res, step, ratio);
		else
			snprintf(line, sizeof line, "%3u %8s %8s %7s", r->k, v, i, ratio);
		term_text(&a->term, row + 1 + (int)(k - first), col, line, w,
		          k + 1 == n ? TS_HEADER : TS_NORMAL);
	}
}

/* Draw the side pane into R. */
static void pane_side_draw(struct app *a, void *self, const struct rect *box)
{
	struct side_state *sd = self;
	int row = box->row, col = box->col, rows = box->rows, cols = box->cols;
	uint32_t bar = app_unicode(a) ? 0x2502 : '|';
	for (int r = 0; r < rows; r++)
		term_put(&a->term, row + r, col, bar, TS_DIM);
	int x = col + 2, w = cols - 2, y = row, end = row + rows;
	struct param ps[PARAMS_MAX];
	int nparams = (int)params_list(&a->s, ps, PARAMS_MAX);

	pane_header(a, y++, x, w, a->res.n > 1 ? "Operating points" : "Operating point");
	int pmax = a->res.n > 1 ? 1 + (int)a->res.n : a->res.n == 1 ? 2 : 9;
	if (a->res.n > 1 && pmax > 2 + rows / 6)
		pmax = 2 + rows / 6;
	y += pane_points(a, y, x, w, pmax);
	y += pane_junction(a, y, x, w, 1);
	y += pane_extra(a, y, x, w, 7);
	y += pane_caution(a, y, x, w, 9);
	/* Power and ratings: what they need, leaving the parameters, the
	 * diagnosis and the table their least (13 rows). */
	int vmax = pane_ratings_need(a, w);
	if (vmax > end - y - 13)
		vmax = end - y - 13;
	/* With ratings or a target, the worst line stays, whatever the room. */
	if (vmax < 2 && pane_rated(a) && end - y > 8)
		vmax = 2;
	y += pane_ratings(a, y, x, w, vmax);

	/* Share the rest.  The diagnosis gets the lines its text needs first
	 * (it carries the remedy), keeping room for the parameter header and
	 * 3 rows, and the table's title, header and one row; then the table
	 * gets up to 11 rows and the parameters (scrolled) what is left. */
	struct pane_diag dg;
	pane_diag_build(a, sd, &dg);
	int avail = end - y;
	int diag = pane_diag_lines(&dg, w, false);
	int room = avail - (1 + 3) - 1 - (1 + 2);
	if (diag > room)
		diag = pane_diag_lines(&dg, w, true);
	if (diag > room)
		diag = room;
	if (diag < 1)
		diag = 1;
	/* The table: its header and rows (the title is counted apart). */
	int table = avail - (1 + diag) - 1 - (1 + 4);
	if (table > 12)
		table = 12;
	if (table < 2)
		table = 2;
	int plines = avail - (1 + diag) - (1 + table) - 1;
	if (plines > nparams)
		plines = nparams;
	if (plines < 1)
		plines = 1;

	char title[96];
	snprintf(title, sizeof title, "Parameters (%s)", a->s.device.type != NULL
	         ? a->s.device.type->name : "no device");
	pane_header(a, y++, x, w, title);
	y += pane_params(a, sd, y, x, w, plines);
	if (y < end) {
		char dtitle[64];
		if (a->thermal)
			snprintf(dtitle, sizeof dtitle, "Diagnosis (thermal loop)");
		else
			snprintf(dtitle, sizeof dtitle, "Diagnosis (V from %s)",
			         a->s.solver.order == ORDER_VOLTAGE_FROM_LINE ? "line"
			                                                      : "device");
		pane_header(a, y++, x, w, dtitle);
		int dl = end - y - 3 < diag ? end - y - 3 : diag;
		if (dl > 0)
			pane_diagnosis(a, &dg, y, x, w, dl);
		y += dl > 0 ? dl : 0;
	}
	if (y < end - 1) {
		size_t nt;
		stepper_trace(a->st, &nt);
		char ctitle[64];
		if (a->thermal)
			thermal_stepper_trace(a->tst, &nt);
		snprintf(ctitle, sizeof ctitle, "%s (%zu projection%s%s)",
		         a->thermal ? "Thermal loop" : "Convergence",
		         nt > 0 ? nt - 1 : 0, nt == 2 ? "" : "s",
		         a->running ? ", running" : "");
		/* Narrow: the count by the table's own column name. */
		if (render_text_width(ctitle) + 3 > w)
			snprintf(ctitle, sizeof ctitle, "%s (k = %zu%s)",
			         a->thermal ? "Thermal loop" : "Convergence",
			         nt > 0 ? nt - 1 : 0, a->running ? ", running" : "");
		pane_header(a, y++, x, w, ctitle);
		pane_conv_table(a, y, x, w, end - y);
	}
}

/* The selected row of S's rows into *P; returns false when there is none. */
static bool pane_side_selected(struct app *a, struct side_state *sd,
                               struct param *p)
{
	struct param ps[PARAMS_MAX];
	size_t n = params_list(&a->s, ps, PARAMS_MAX);
	if (sd->sel < 0 || (size_t)sd->sel >= n)
		return false;
	*p = ps[sd->sel];
	return true;
}

/* Nudge the selected row: DIR = +1/-1, COARSE for the big step. */
static void pane_side_nudge(struct app *a, struct side_state *sd, int dir,
                            bool coarse)
{
	struct param p;
	if (!pane_side_selected(a, sd, &p))
		return;
	double v = params_get(&a->s, &p), nv;
	if (p.choice) {
		int n = params_choices(&p);
		if (strcmp(p.key, PARAMS_ORDER) == 0)
			dir = 1;   /* two orders: either key flips */
		nv = (double)((((int)v + dir) % n + n) % n);
		if (strcmp(p.key, PARAMS_ORDER) == 0) {
			char err[256];
			if (app_param_set(a, p.key, nv, err, sizeof err) != 0)
				app_message(a, true, "%s", err);
			else
				app_message(a, false, "order: voltage from the %s",
				            a->s.solver.order == ORDER_VOLTAGE_FROM_LINE
				            ? "line" : "device");
			return;
		}
		char err[256];
		if (app_param_set(a, p.key, nv, err, sizeof err) != 0)
			app_message(a, true, "%s", err);
		else
			app_message(a, false, "method: %s",
			            solve_method_name(a->s.solver.method));
		return;
	}
	if (strcmp(p.key, PARAMS_START) == 0 && isnan(v))
		v = 0.0;
	if (p.log_step && v > 0.0) {
		double m = coarse ? LOG_COARSE : LOG_FINE;
		nv = dir > 0 ? v * m : v / m;
	} else if (p.fine > 0.0) {
		nv = v + dir * (coarse ? p.coarse : p.fine);
	} else {
		double step = fabs(v) * (coarse ? LIN_COARSE : LIN_FINE);
		if (!(step > 0.0))
			step = coarse ? 0.1 : 0.01;
		nv = v + dir * step;
	}
	char err[256];
	if (app_param_set(a, p.key, nv, err, sizeof err) != 0) {
		app_message(a, true, "%s", err);
	} else {
		char buf[64];
		qty_format(buf, sizeof buf, nv, p.unit, 5, app_unicode(a) ? 0 : 1);
		app_message(a, false, "%s = %s", p.label, buf);
	}
}

/*
 * Step the selected RS, RP or network resistor to the next standard value
 * along the session's series (E24 unless its target section names another).
 */
static void pane_side_eseries(struct app *a, struct side_state *sd, int dir)
{
	struct param p;
	if (!pane_side_selected(a, sd, &p))
		return;
	if (!p.resistor) {
		app_message(a, true, "select RS, RP or a network resistor to step "
		            "along the standard values");
		return;
	}
	enum eseries es = a->s.analysis.target.series;
	double nv;
	char err[256];
	if (eseries_step(es, params_get(&a->s, &p), dir, &nv) != 0) {
		app_message(a, true, "%s: no %s value %s this one", p.label,
		            eseries_name(es), dir > 0 ? "above" : "below");
	} else if (app_param_set(a, p.key, nv, err, sizeof err) != 0) {
		app_message(a, true, "%s", err);
	} else {
		char buf[64];
		qty_format_short(buf, sizeof buf, nv, p.unit, 5, app_unicode(a) ? 0 : 1);
		app_message(a, false, "%s = %s (%s)", p.label, buf, eseries_name(es));
	}
}

/* Ask for an exact value of the selected row. */
static void pane_side_edit(struct app *a, struct side_state *sd)
{
	struct param p;
	if (!pane_side_selected(a, sd, &p))
		return;
	if (p.choice) {
		pane_side_nudge(a, sd, 1, false);
		return;
	}
	char err[256];
	if (p.readonly) {
		params_set(&a->s, &p, 0.0, err, sizeof err);
		app_message(a, true, "%s", err);
		return;
	}
	char q[128];
	snprintf(q, sizeof q, "%s = ", p.label);
	app_ask(a, &pane_side, SIDE_ASK_VALUE, false, q, NULL, NULL);
}

/* The tolerance question for row P, starting from INITIAL (NULL: the
 * row's present tolerance) with ERROR (may be NULL). */
static void pane_side_ask_tolerance(struct app *a, const struct param *p,
                                    const char *initial, const char *error)
{
	char q[256], now[64];
	snprintf(q, sizeof q, "tolerance on %s (5%%, 0.1k, 3k..3.6k; add normal "
	         "for a normal spread; none removes) = ", p->label);
	if (initial == NULL) {
		params_tolerance(&a->s, p->key, false, true, now, sizeof now);
		/* typed back, a value must parse: no space before its unit */
		for (char *c = now; *c != '\0'; c++)
			if (*c == ' ' && c[1] != 'n')
				memmove(c, c + 1, strlen(c));
		initial = now;
	}
	app_ask(a, &pane_side, SIDE_ASK_TOLERANCE, false, q, initial, error);
}

/* Ask for a tolerance on the selected row. */
static void pane_side_tolerance(struct app *a, struct side_state *sd)
{
	struct param p;
	if (!pane_side_selected(a, sd, &p))
		return;
	if (p.choice || strncmp(p.key, "solver.", 7) == 0) {
		app_message(a, true, "%s is a solver setting: a tolerance goes on "
		            "the source, the device or a network part", p.label);
		return;
	}
	if (p.readonly) {
		app_message(a, true, "%s is the equivalent of the source network: "
		            "give the tolerance to one of its parts (listed first)",
		            p.label);
		return;
	}
	pane_side_ask_tolerance(a, &p, NULL, NULL);
}

/* Take a typed tolerance for the selected row. */
static unsigned pane_side_take_tolerance(struct app *a, struct side_state *sd,
                                         const char *text)
{
	struct param p;
	if (!pane_side_selected(a, sd, &p))
		return APP_HANDLED | APP_REDRAW;
	char key[SESSION_SET_KEY_MAX], value[512], err[600];
	snprintf(key, sizeof key, "tolerances.%s", p.key);
	params_tolerance_typed(text, value, sizeof value);
	if (value[0] == '\0') {
		pane_side_ask_tolerance(a, &p, text, "type a tolerance, none, or Esc");
		return APP_HANDLED | APP_REDRAW;
	}
	if (app_text_set(a, key, value, err, sizeof err) != 0) {
		pane_side_ask_tolerance(a, &p, text, err);
		return APP_HANDLED | APP_REDRAW;
	}
	char now[64];
	if (params_tolerance(&a->s, p.key, true, !app_unicode(a), now, sizeof now))
		app_message(a, false, "tolerance on %s: %s (T shows the worst case)",
		            p.label, now);
	else
		app_message(a, false, "no tolerance on %s", p.label);
	return APP_HANDLED | APP_REDRAW;
}

/* The side pane's keys, handed over by the key table. */
static unsigned pane_side_key(struct app *a, void *self, int key)
{
	struct side_state *sd = self;
	switch (key) {
	case TK_UP:
	case TK_DOWN: {
		struct param ps[PARAMS_MAX];
		size_t n = params_list(&a->s, ps, PARAMS_MAX);
		if (key == TK_UP && sd->sel > 0)
			sd->sel--;
		if (key == TK_DOWN && (size_t)sd->sel + 1 < n)
			sd->sel++;
		if ((size_t)sd->sel < n)
			snprintf(a->selected, sizeof a->selected, "%.63s", ps[sd->sel].key);
		break;
	}
	case '+': case '=': pane_side_nudge(a, sd, 1, false); break;
	case '-': pane_side_nudge(a, sd, -1, false); break;
	case ']': pane_side_nudge(a, sd, 1, true); break;
	case '[': pane_side_nudge(a, sd, -1, true); break;
	case '}': pane_side_eseries(a, sd, 1); break;
	case '{': pane_side_eseries(a, sd, -1); break;
	case 'e': case TK_ENTER: pane_side_edit(a, sd); break;
	case '%': pane_side_tolerance(a, sd); break;
	case '\t':
		sd->hidden = !sd->hidden;
		app_touch(a);
		break;
	default:
		return 0;
	}
	return APP_HANDLED | APP_REDRAW;
}

/* Take a typed value for the selected row. */
static unsigned pane_side_answer(struct app *a, struct side_state *sd,
                                 const char *text)
{
	struct param p;
	if (!pane_side_selected(a, sd, &p) || p.choice)
		return APP_HANDLED | APP_REDRAW;
	double v;
	char err[256];
	char q[128];
	snprintf(q, sizeof q, "%s = ", p.label);
	if (strcmp(p.key, PARAMS_START) == 0 && strcmp(text, "auto") == 0) {
		v = NAN;
	} else if (strcmp(p.key, PARAMS_RELAXATION) == 0 &&
	           strcmp(text, "auto") == 0) {
		v = 0.0;
	} else if (qty_parse(text, p.unit, &v, err, sizeof err) != QTY_OK) {
		app_ask(a, &pane_side, SIDE_ASK_VALUE, false, q, text, err);
		return APP_HANDLED | APP_REDRAW;
	}
	if (app_param_set(a, p.key, v, err, sizeof err) != 0) {
		app_ask(a, &pane_side, SIDE_ASK_VALUE, false, q, text, err);
		return APP_HANDLED | APP_REDRAW;
	}
	char buf[64];
	params_format(&a->s, &p, !app_unicode(a), buf, sizeof buf);
	app_message(a, false, "%s = %s", p.label, buf);
	return APP_HANDLED | APP_REDRAW;
}

/* Select a row by key; take an answer. */
static unsigned pane_side_act(struct app *a, void *self, const struct action *act)
{
	struct side_state *sd = self;
	if (act->kind == ACT_ANSWER && act->tag == SIDE_ASK_VALUE)
		return pane_side_answer(a, sd, act->text);
	if (act->kind == ACT_ANSWER && act->tag == SIDE_ASK_TOLERANCE)
		return pane_side_take_tolerance(a, sd, act->text);
	if (act->kind != ACT_SELECT)
		return 0;
	struct param ps[PARAMS_MAX];
	size_t n = params_list(&a->s, ps, PARAMS_MAX);
	for (size_t k = 0; k < n; k++)
		if (strcmp(ps[k].key, act->text) == 0)
			sd->sel = (int)k;
	return APP_REDRAW;
}

/* Shown unless Tab hid it. */
static bool pane_side_visible(const struct app *a, const void *self)
{
	(void)a;
	const struct side_state *sd = self;
	return !sd->hidden;
}

/* The side pane. */
const struct pane pane_side = {
	.name = "side",
	.slot = SLOT_SIDE,
	.size = sizeof(struct side_state),
	.visible = pane_side_visible,
	.key = pane_side_key,
	.draw = pane_side_draw,
	.act = pane_side_act,
};
