/*
 * pane_design.c - the design view: the value of RS, VS, a network part or
 * a device parameter that meets a target (a device current, voltage or
 * power of either sign; a transistor stage's collector current or VCE; a
 * FET's drain current), from the core's design_solve, as the rows of
 * 'biasline design': the exact value and the standard values either side,
 * each with its point and error, and with tolerances each row's worst
 * case (session_design_worst) with its verdict and the standard power
 * rating that fits.  The nearest standard row is chosen first; Enter
 * applies the chosen row through the parameter interface (u undoes it);
 * t types another target, s another unknown; Esc closes.  Nothing here
 * computes physics.
 */
#include <math.h>
#include <stdbool.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "core/design.h"
#include "core/safety.h"
#include "core/verdict.h"
#include "session/analysis.h"
#include "tui/app.h"
#include "tui/panes.h"

/* The questions the design view asks. */
#define DESIGN_ASK_TARGET 1
#define DESIGN_ASK_UNKNOWN 2

/* The design view's own state: a request, the rows the core designed. */
struct design_state {
	bool open;
	bool ok;                        /* RES holds rows (else RES.message) */
	bool have_rq;                   /* RQ holds a target */
	bool worst;                     /* the rows' worst cases ran */
	char worst_msg[600];            /* why they did not, or "" */
	char unknown[PARAMREF_KEY_MAX]; /* the unknown's key: "rs", "vs", a
	                                   part or a device key; "" = default */
	struct design_request rq;
	struct design_result res;
	struct verdict vd;              /* the chosen row's verdict */
	int sel;
};

/* The key and label of the request's unknown on A's problem. */
static const char *pane_design_unknown_key(const struct app *a,
                                   const struct design_request *rq)
{
	if (rq->unknown == DESIGN_FOR_RS)
		return "rs";
	if (rq->unknown == DESIGN_FOR_VS)
		return "vs";
	return paramref_key(&a->pb, &rq->part);
}

/* What the view calls the unknown: "RS", "VS", a part's name, a key. */
static const char *pane_design_label(const struct app *a,
                                     const struct design_request *rq)
{
	if (rq->unknown == DESIGN_FOR_RS)
		return "RS";
	if (rq->unknown == DESIGN_FOR_VS)
		return "VS";
	const char *k = paramref_key(&a->pb, &rq->part);
	size_t n = strlen(PARAMREF_NETWORK_PREFIX);
	return strncmp(k, PARAMREF_NETWORK_PREFIX, n) == 0 ? k + n : k;
}

/* The first resistor of A's network source ("" when none). */
static void pane_design_first_part(const struct app *a, char *key, size_t n)
{
	key[0] = '\0';
	struct param ps[PARAMS_MAX];
	size_t np = params_list(&a->s, ps, PARAMS_MAX);
	for (size_t k = 0; k < np; k++)
		if (ps[k].resistor && strncmp(ps[k].key, PARAMREF_NETWORK_PREFIX,
		                              strlen(PARAMREF_NETWORK_PREFIX)) == 0) {
			snprintf(key, n, "%.63s", ps[k].key);
			return;
		}
}

/*
 * Fill D's unknown from its key (or the default: the session target's
 * solve_for for a plain source, a network's first resistor).  Returns 0,
 * or -1 with the reason in ERR.
 */
static int pane_design_unknown(struct app *a, struct design_state *d,
                               char *err, size_t errlen)
{
	char key[PARAMREF_KEY_MAX];
	snprintf(key, sizeof key, "%s", d->unknown);
	if (key[0] == '\0') {
		if (a->s.network != NULL)
			pane_design_first_part(a, key, sizeof key);
		else
			snprintf(key, sizeof key, "%s",
			         a->s.analysis.target.solve_for == DESIGN_FOR_VS ? "vs"
			                                                         : "rs");
	}
	if (a->s.network == NULL && strcmp(key, "rs") == 0) {
		d->rq.unknown = DESIGN_FOR_RS;
		return 0;
	}
	if (a->s.network == NULL && strcmp(key, "vs") == 0) {
		d->rq.unknown = DESIGN_FOR_VS;
		return 0;
	}
	if (key[0] == '\0') {
		snprintf(err, errlen, "the source network has no resistor to design: "
		         "s names the part or device key to solve for");
		return -1;
	}
	struct paramref r;
	if (paramref_find(&a->pb, key, &r, err, errlen) != 0)
		return -1;
	if (r.kind != PARAMREF_NETWORK && r.kind != PARAMREF_DEVICE) {
		snprintf(err, errlen, "'%s' is not rs, vs, a network part or a device "
		         "parameter", key);
		return -1;
	}
	d->rq.unknown = DESIGN_FOR_PART;
	d->rq.part = r;
	return 0;
}

/* Run the design for D's request and open the view with the result. */
static void pane_design_run(struct app *a, struct design_state *d)
{
	d->open = true;
	d->sel = 0;
	d->ok = false;
	d->worst = false;
	d->worst_msg[0] = '\0';
	memset(&d->res, 0, sizeof d->res);
	memset(&d->vd, 0, sizeof d->vd);
	if (!a->pb_ok) {
		snprintf(d->res.message, sizeof d->res.message, "%s", a->pb_err);
		return;
	}
	if (pane_design_unknown(a, d, d->res.message, sizeof d->res.message) != 0)
		return;
	/* The candidates' points come from the every-root solve, whatever
	 * method the path is drawn with (a diverging order finds none). */
	struct solve_options so = a->s.solver;
	so.method = METHOD_AUTO;
	d->ok = design_solve(&a->pb, &so, &d->rq, &a->s.analysis.ratings,
	                     &d->res) == 0;
	if (!d->ok)
		return;
	/* The nearest standard value first: it is what gets bought. */
	if (d->res.nearest >= 0)
		d->sel = d->res.nearest;
	else if (d->res.nrows > 1)
		d->sel = 1;
	if (a->s.analysis.ntol == 0)
		snprintf(d->worst_msg, sizeof d->worst_msg, "no tolerances: %% on a "
		         "value adds one, and each row then shows its worst case");
	else {
		struct app_work wk;
		app_work_begin(a, &wk, "worst case of each row");
		int rc = session_design_worst_watched(&a->s, &a->pb, &d->rq, &d->res,
		                                      d->worst_msg,
		                                      sizeof d->worst_msg, &wk.core);
		if (app_work_end(&wk) != APP_WORK_DONE) {
			for (size_t k = 0; k < d->res.nrows; k++)
				d->res.rows[k].worst.done = false;
			snprintf(d->worst_msg, sizeof d->worst_msg, "worst case stopped: "
			         "D twice runs it again");
		} else if (rc == 0) {
			d->worst = true;
		}
	}
}

/* The verdict at the chosen row's point. */
static void pane_design_verdict(struct app *a, struct design_state *d)
{
	memset(&d->vd, 0, sizeof d->vd);
	if (!d->ok || d->sel < 0 || (size_t)d->sel >= d->res.nrows)
		return;
	const struct design_row *r = &d->res.rows[d->sel];
	struct problem q;
	if (!r->solved || design_apply_request(&a->pb, &d->rq, r->value, &q) != 0)
		return;
	verdict_at(&q, a->s.source.form, r->pt.v, r->pt.i,
	           &a->s.analysis.ratings, &d->rq, &d->vd);
}

/* The target question. */
static void pane_design_ask_target(struct app *a, const char *initial,
                                   const char *error)
{
	const char *m = a->s.device.type != NULL ? a->s.device.type->name : "";
	bool bjt = strcmp(m, "npn") == 0 || strcmp(m, "pnp") == 0;
	bool fet = strcmp(m, "jfet") == 0 || strcmp(m, "nmos") == 0;
	char q[256];
	snprintf(q, sizeof q, "design: target (10mA, -5mA for a reverse current, "
	         "2.1V, 20mW%s) = ",
	         bjt ? "; ic=1m collector current, vce=5 its voltage"
	         : fet ? "; id=2m drain current" : "");
	app_ask(a, &pane_design, DESIGN_ASK_TARGET, false, q, initial, error);
}

/* The unknown question. */
static void pane_design_ask_unknown(struct app *a, struct design_state *d,
                                    const char *initial, const char *error)
{
	char q[256];
	snprintf(q, sizeof q, "design: solve for (%sa device key such as "
	         "emitter_resistance) = ",
	         a->s.network != NULL ? "a network part's name, or " : "rs, vs, or ");
	char now[PARAMREF_KEY_MAX] = "";
	if (initial == NULL && d->have_rq)
		snprintf(now, sizeof now, "%s", pane_design_label(a, &d->rq));
	app_ask(a, &pane_design, DESIGN_ASK_UNKNOWN, false, q,
	        initial != NULL ? initial : now, error);
}

/* Open the view for the session's target, or ask for one. */
static void pane_design_open(struct app *a, struct design_state *d)
{
	struct design_request rq = d->rq;
	if (session_design_request(&a->s, &rq) == 0) {
		d->rq = rq;
		d->have_rq = true;
		pane_design_run(a, d);
		pane_design_verdict(a, d);
		return;
	}
	if (d->have_rq) {
		pane_design_run(a, d);
		pane_design_verdict(a, d);
		return;
	}
	pane_design_ask_target(a, NULL, NULL);
}

/*
 * Read a typed target into RQ: "ic=", "vce=" (a bipolar stage), "id=" (a
 * FET), else a value whose unit says current, voltage or power (a bare
 * number is a current).  Returns 0, or -1 with the reason in ERR.
 */
static int pane_design_parse(struct app *a, const char *text,
                             struct design_request *rq, char *err,
                             size_t errlen)
{
	const char *m = a->s.device.type != NULL ? a->s.device.type->name : "";
	bool bjt = strcmp(m, "npn") == 0 || strcmp(m, "pnp") == 0;
	bool fet = strcmp(m, "jfet") == 0 || strcmp(m, "nmos") == 0;
	const char *eq = strchr(text, '=');
	if (eq != NULL) {
		size_t kl = (size_t)(eq - text);
		while (kl > 0 && text[kl - 1] == ' ')
			kl--;
		const char *v = eq + 1;
		bool ic = kl == 2 && strncmp(text, "ic", 2) == 0;
		bool vce = kl == 3 && strncmp(text, "vce", 3) == 0;
		bool id = kl == 2 && strncmp(text, "id", 2) == 0;
		if (!ic && !vce && !id) {
			snprintf(err, errlen, "'%.*s' is not ic, vce or id", (int)kl, text);
			return -1;
		}
		if ((ic || vce) && !bjt) {
			snprintf(err, errlen, "%s needs an npn or pnp device, not %s",
			         ic ? "ic" : "vce", m);
			return -1;
		}
		if (id && !fet) {
			snprintf(err, errlen, "id needs a jfet or nmos device, not %s", m);
			return -1;
		}
		if (qty_parse(v, vce ? QTY_VOLTAGE : QTY_CURRENT, &rq->value, err,
		              errlen) != QTY_OK)
			return -1;
		if (id) {
			rq->target = DESIGN_CURRENT;   /* the gate loop carries ID */
		} else {
			rq->target = DESIGN_RESULT;
			snprintf(rq->result, sizeof rq->result, "%s",
			         ic ? "collector_current"
			         : strcmp(m, "pnp") == 0 ? "emitter_collector_voltage"
			                                 : "collector_emitter_voltage");
		}
		return 0;
	}
	static const struct { enum qty_kind k; enum design_target t; } kinds[] = {
		{ QTY_CURRENT, DESIGN_CURRENT },
		{ QTY_VOLTAGE, DESIGN_VOLTAGE },
		{ QTY_POWER, DESIGN_POWER },
	};
	char first[256] = "";
	for (size_t j = 0; j < 3; j++) {
		if (qty_parse(text, kinds[j].k, &rq->value, err, errlen) == QTY_OK) {
			rq->target = kinds[j].t;
			if (!isfinite(rq->value) || rq->value == 0.0) {
				snprintf(err, errlen, "the target must be a finite value "
				         "other than zero");
				return -1;
			}
			return 0;
		}
		if (j == 0)
			snprintf(first, sizeof first, "%s", err);
	}
	snprintf(err, errlen, "%s", first);
	return -1;
}

/* Design for a typed target and open the view. */
static void pane_design_target(struct app *a, struct design_state *d,
                               const char *text)
{
	char err[256];
	struct design_request rq = d->rq;
	if (!d->have_rq)
		rq.series = a->s.analysis.target.series;
	if (pane_design_parse(a, text, &rq, err, sizeof err) != 0) {
		pane_design_ask_target(a, text, err);
		return;
	}
	d->rq = rq;
	d->have_rq = true;
	pane_design_run(a, d);
	pane_design_verdict(a, d);
}

/* Design for a typed unknown. */
static void pane_design_take_unknown(struct app *a, struct design_state *d,
                                     const char *text)
{
	char key[PARAMREF_KEY_MAX], err[600];
	snprintf(key, sizeof key, "%s", text);
	/* A part's bare name stands for its key. */
	if (a->s.network != NULL && strchr(text, '.') == NULL &&
	    strcmp(text, "rs") != 0 && strcmp(text, "vs") != 0 &&
	    (a->s.device.type == NULL ||
	     model_param_index(a->s.device.type, text) < 0))
		snprintf(key, sizeof key, "%s%.48s", PARAMREF_NETWORK_PREFIX, text);
	struct design_state t = *d;
	snprintf(t.unknown, sizeof t.unknown, "%s", key);
	if (pane_design_unknown(a, &t, err, sizeof err) != 0) {
		pane_design_ask_unknown(a, d, text, err);
		return;
	}
	snprintf(d->unknown, sizeof d->unknown, "%s", key);
	if (!d->have_rq) {
		pane_design_ask_target(a, NULL, NULL);
		return;
	}
	pane_design_run(a, d);
	pane_design_verdict(a, d);
}

/* Write TEXT wrapped to W cells from ROW, at most MAX lines; rows used. */
static int pane_design_wrap(struct app *a, int row, int col, int w, int max,
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

/* The style of verdict V. */
static enum term_style pane_design_style(enum ratings_verdict v)
{
	return v == RATINGS_OVER ? TS_ERROR : v == RATINGS_CAUTION ? TS_HEADER
	       : TS_NORMAL;
}

/* What the rows' worst-case column measures: "I", or a result's label. */
static const char *pane_design_ylabel(struct app *a,
                                      const struct design_state *d)
{
	if (d->rq.target != DESIGN_RESULT)
		return "I";
	struct model_extra ex;
	if (device_secondary(&a->pb.dev, &a->pb.src, d->res.v_target,
	                     d->res.i_target, &ex) == 0)
		for (size_t k = 0; k < ex.n; k++)
			if (strcmp(ex.v[k].key, d->rq.result) == 0)
				return ex.v[k].label;
	return d->rq.result;
}

/* Draw the design view centred in BOX. */
static void pane_design_draw(struct app *a, void *self, const struct rect *box)
{
	struct design_state *d = self;
	int ascii = app_unicode(a) ? 0 : 1;
	int w = box->cols - 4 < 96 ? box->cols - 4 : 96;
	int h = box->rows;
	int top = box->row, left = box->col + (box->cols - w) / 2;
	int row = top + 1, x = left + 2, cw = w - 4, end = top + h - 1;
	app_overlay_box(a, top, left, h, w);
	bool rs = d->rq.unknown == DESIGN_FOR_RS;
	enum qty_kind uk = d->ok ? design_unknown_unit(&a->pb, &d->rq)
	                         : QTY_RESISTANCE;
	bool resistor = uk == QTY_RESISTANCE;
	bool part = d->rq.unknown == DESIGN_FOR_PART;
	char line[640], t[64], b[64], c[64], e[64], f[64], g[64];
	if (d->have_rq)
		qty_format_short(t, sizeof t, d->rq.value,
		                 design_request_unit(&a->pb, &d->rq), 5, ascii);
	else
		snprintf(t, sizeof t, "(none)");
	snprintf(line, sizeof line, "Design: %s %s %s, solving for %s%s%s%s",
	         d->rq.target == DESIGN_RESULT ? "stage" : "device",
	         design_request_name(&d->rq), t,
	         d->ok || d->rq.unknown != DESIGN_FOR_PART || a->s.network == NULL
	             ? pane_design_label(a, &d->rq) : "a part",
	         resistor ? " (" : "", resistor ? eseries_name(d->rq.series) : "",
	         resistor ? ")" : "");
	term_fill(&a->term, top, left, w, TS_TITLE);
	term_text(&a->term, top, left + 1, line, w - 2, TS_TITLE);
	if (!d->ok) {
		snprintf(line, sizeof line, "no design: %s", d->res.message);
		row += pane_design_wrap(a, row, x, cw, end - row, line, TS_ERROR);
	} else {
		const char *un = pane_design_label(a, &d->rq);
		qty_format(b, sizeof b, d->res.v_target, QTY_VOLTAGE, 5, ascii);
		qty_format(c, sizeof c, d->res.i_target, QTY_CURRENT, 5, ascii);
		snprintf(line, sizeof line, "device at the target: %s, %s", b, c);
		term_text(&a->term, row++, x, line, cw, TS_NORMAL);
		/* A stage's result (IC, VCE) is what its designer reads. */
		bool result = d->rq.target == DESIGN_RESULT;
		enum qty_kind rk = result ? design_request_unit(&a->pb, &d->rq)
		                          : QTY_CURRENT;
		snprintf(line, sizeof line, "  %-6s %-11s %-9s %-9s %-9s %s", "",
		         render_text_width(un) <= 11 ? un : "value", "V",
		         result ? pane_design_ylabel(a, d) : "I",
		         part ? "P(device)" : "P(RS)", "error");
		term_text(&a->term, row++, x, line, cw, TS_HEADER);
		for (size_t k = 0; k < d->res.nrows && row < end; k++) {
			const struct design_row *r = &d->res.rows[k];
			qty_format_short(b, sizeof b, r->value, uk,
			                 r->kind == DESIGN_ROW_EXACT ? 5 : 3, ascii);
			if (!r->solved) {
				snprintf(line, sizeof line, "  %-6s %-11s (no operating point)",
				         design_row_name(r->kind), b);
			} else {
				qty_format_short(c, sizeof c, r->pt.v, QTY_VOLTAGE, 4, ascii);
				qty_format_short(e, sizeof e, result ? r->achieved : r->pt.i,
				                 rk, 4, ascii);
				qty_format_short(f, sizeof f, part ? r->pt.power
				                                   : r->power.p_resistor,
				                 QTY_POWER, 4, ascii);
				snprintf(line, sizeof line, "%c %-6s %-11s %-9s %-9s %-9s "
				         "%+.3g %%%s", (int)k == d->sel ? '>' : ' ',
				         design_row_name(r->kind), b, c, e, f,
				         /* the exact row's rounding is no error */
				         fabs(r->error_percent) < 1e-9 ? 0.0
				                                       : r->error_percent,
				         r->nearest ? "  nearest" : "");
			}
			enum term_style st = (int)k == d->sel ? TS_SELECTED : TS_NORMAL;
			if ((int)k == d->sel)
				term_fill(&a->term, row, x - 1, cw + 2, st);
			term_text(&a->term, row++, x, line, cw, st);
		}
		/* Each standard row's worst case, as 'design --worst-case'. */
		if (d->worst && row + 2 < end) {
			const char *yl = pane_design_ylabel(a, d);
			enum qty_kind yk = rk;
			term_text(&a->term, row++, x, "worst case over the tolerances",
			          cw, TS_HEADER);
			char h1[48], h2[48];
			snprintf(h1, sizeof h1, "%.32s min", yl);
			snprintf(h2, sizeof h2, "%.32s max", yl);
			snprintf(line, sizeof line, "  %-6s %-8s %-9s %-9s %-9s %-13s %s",
			         "", render_text_width(un) <= 8 ? un : "value", h1, h2,
			         part ? "P(part)" : "P(RS) max", "verdict", "fits");
			term_text(&a->term, row++, x, line, cw, TS_HEADER);
			for (size_t k = 0; k < d->res.nrows && row < end; k++) {
				const struct design_row *r = &d->res.rows[k];
				const struct design_worst *wc = &r->worst;
				if (resistor && r->kind == DESIGN_ROW_EXACT &&
				    d->res.nrows > 1)
					continue;  /* no part to buy */
				qty_format_short(b, sizeof b, r->value, uk, 3, ascii);
				if (!wc->done) {
					snprintf(line, sizeof line, "  %-6s %-8s (%s)",
					         design_row_name(r->kind), b, wc->message[0]
					         ? wc->message : "no operating point");
					term_text(&a->term, row++, x, line, cw, TS_DIM);
					continue;
				}
				bool has = !isnan(wc->p_resistor_max);
				qty_format_short(c, sizeof c, result ? wc->result_min
				                                     : wc->i_min, yk, 4, ascii);
				qty_format_short(e, sizeof e, result ? wc->result_max
				                                     : wc->i_max, yk, 4, ascii);
				if (has)
					qty_format_short(f, sizeof f, wc->p_resistor_max,
					                 QTY_POWER, 4, ascii);
				else
					snprintf(f, sizeof f, "-");
				if (has && !isnan(wc->suggested_resistor_power))
					qty_format_short(g, sizeof g, wc->suggested_resistor_power,
					                 QTY_POWER, 3, ascii);
				else
					snprintf(g, sizeof g, "-");
				snprintf(line, sizeof line, "%c %-6s %-8s %-9s %-9s %-9s "
				         "%-13s %s", (int)k == d->sel ? '>' : ' ',
				         design_row_name(r->kind), b, c, e, f,
				         ratings_verdict_name(wc->verdict), g);
				term_text(&a->term, row++, x, line, cw,
				          pane_design_style(wc->verdict));
			}
		}
		/* The chosen row: its worst case in words, then the parts at its
		 * nominal point (verdict.h), worst first when rows are short. */
		const struct design_row *r = &d->res.rows[d->sel];
		int room = end - row - 1;
		if (room > 0)
			row++;
		if (d->worst && r->worst.done && r->worst.words[0] != '\0' && room > 1) {
			qty_format_short(b, sizeof b, r->value, uk, 5, ascii);
			snprintf(line, sizeof line, "%s %s: %s",
			         design_row_name(r->kind), b, r->worst.words);
			row += pane_design_wrap(a, row, x, cw, end - row, line,
			                        pane_design_style(r->worst.verdict));
		} else if (!d->worst && room > 1) {
			row += pane_design_wrap(a, row, x, cw, end - row, d->worst_msg,
			                        a->s.analysis.ntol > 0 ? TS_ERROR : TS_DIM);
		}
		if (r->solved && row < end) {
			qty_format_short(b, sizeof b, r->value, uk, 5, ascii);
			snprintf(line, sizeof line, "at the %s row (%s):",
			         design_row_name(r->kind), b);
			term_text(&a->term, row++, x, line, cw, TS_HEADER);
			for (int sev = 3; sev >= 0; sev--)
				for (size_t k = 0; k < d->vd.nlines && row < end; k++) {
					const struct verdict_line *l = &d->vd.lines[k];
					int s = l->verdict == RATINGS_OVER ? 3
					        : l->verdict == RATINGS_CAUTION ? 2
					        : l->verdict == RATINGS_WITHIN ? 1 : 0;
					if (s != sev)
						continue;
					char one[160], two[160];
					app_verdict_text(a, l, cw - 2, one, two, sizeof one);
					term_text(&a->term, row++, x + 2, one, cw - 2,
					          pane_design_style(l->verdict));
					if (two[0] != '\0' && row < end)
						term_text(&a->term, row++, x + 2, two, cw - 2,
						          TS_DIM);
				}
		}
		/* The usual caution for the chosen row's point. */
		struct problem q;
		unsigned flags = 0;
		if (r->solved &&
		    design_apply_request(&a->pb, &d->rq, r->value, &q) == 0)
			flags = safety_check(&q, r->pt.v, r->pt.i);
		if (d->worst)
			flags |= r->worst.safety;
		if (flags != 0 && row + 1 < end) {
			char caution[320];
			safety_message(flags, caution, sizeof caution);
			row += pane_design_wrap(a, row, x, cw, end - row, caution,
			                        TS_ERROR);
		}
	}
	(void)rs;
	term_fill(&a->term, end, left, w, TS_TITLE);
	term_text(&a->term, end, left + 1,
	          "Up/Down choose  Enter apply  t target  s solve for  Esc close",
	          w - 2, TS_TITLE);
}

/* Apply the chosen row to the session through the parameter interface. */
static unsigned pane_design_apply(struct app *a, struct design_state *d)
{
	if (!d->ok || d->sel < 0 || (size_t)d->sel >= d->res.nrows)
		return APP_HANDLED | APP_REDRAW;
	const struct design_row *r = &d->res.rows[d->sel];
	if (d->rq.unknown != DESIGN_FOR_PART &&
	    a->s.source.form != SOURCE_THEVENIN) {
		app_message(a, true, "the design sets RS or VS of a Thevenin source; "
		            "this session's source is a Norton one");
		return APP_HANDLED | APP_REDRAW;
	}
	char key[PARAMREF_KEY_MAX];
	snprintf(key, sizeof key, "%s", pane_design_unknown_key(a, &d->rq));
	char err[600];
	if (app_param_set(a, key, r->value, err, sizeof err) != 0) {
		app_message(a, true, "%s", err);
		return APP_HANDLED | APP_REDRAW;
	}
	struct param p;
	char b[64] = "";
	if (params_find(&a->s, key, &p) == 0)
		params_format(&a->s, &p, !app_unicode(a), b, sizeof b);
	app_message(a, false, "%s = %s (the %s row of the design; u undoes it)",
	            p.label, b, design_row_name(r->kind));
	struct action sel = { .kind = ACT_SELECT };
	snprintf(sel.text, sizeof sel.text, "%s", key);
	app_post(a, &sel);
	d->open = false;
	return APP_HANDLED | APP_REDRAW;
}

/* Keys while the view is open: choose, apply, new target, close. */
static unsigned pane_design_key(struct app *a, void *self, int key)
{
	struct design_state *d = self;
	if (key == TK_RESIZE)
		return 0;
	switch (key) {
	case TK_UP:
		if (d->sel > 0)
			d->sel--;
		pane_design_verdict(a, d);
		break;
	case TK_DOWN:
		if ((size_t)d->sel + 1 < d->res.nrows)
			d->sel++;
		pane_design_verdict(a, d);
		break;
	case TK_ENTER:
		return pane_design_apply(a, d);
	case 't':
		d->open = false;
		pane_design_ask_target(a, NULL, NULL);
		break;
	case 's':
		d->open = false;
		pane_design_ask_unknown(a, d, NULL, NULL);
		break;
	case TK_ESC:
	case 'q':
	case 'D':
		d->open = false;
		break;
	case 12:
		return 0;   /* Ctrl-L still repaints */
	default:
		break;
	}
	return APP_HANDLED | APP_REDRAW;
}

/* Open on D; take a typed target or unknown. */
static unsigned pane_design_act(struct app *a, void *self,
                                const struct action *act)
{
	struct design_state *d = self;
	if (act->kind == ACT_OPEN)
		pane_design_open(a, d);
	else if (act->kind == ACT_ANSWER && act->tag == DESIGN_ASK_TARGET)
		pane_design_target(a, d, act->text);
	else if (act->kind == ACT_ANSWER && act->tag == DESIGN_ASK_UNKNOWN)
		pane_design_take_unknown(a, d, act->text);
	else
		return 0;
	return APP_REDRAW;
}

/* Visible while open. */
static bool pane_design_visible(const struct app *a, const void *self)
{
	(void)a;
	return ((const struct design_state *)self)->open;
}

/* The design overlay. */
const struct pane pane_design = {
	.name = "design",
	.slot = SLOT_BODY,
	.size = sizeof(struct design_state),
	.visible = pane_design_visible,
	.key = pane_design_key,
	.draw = pane_design_draw,
	.act = pane_design_act,
};
