/*
 * test_verdict.c - the ratings verdict and its words (core/verdict.h).
 *
 * References:
 *  - the verdict table: a part exactly at its rating is within it, one
 *    unit in the last place above is over (the rule as stated in
 *    verdict.h); the resistor's half-rating rule and its film derating
 *    (full to 70 degC, zero at 155 degC) are common practice;
 *  - the power balance: the power the sources deliver equals the power
 *    the resistors and the device absorb (Tellegen, Philips Res. Rep. 7,
 *    1952);
 *  - the divider's node voltage with a resistive load: the voltage
 *    divider and Ohm's law, V = E (R2 || RL) / (R1 + R2 || RL) (common
 *    practice).
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include <cmocka.h>

#include "core/models/models.h"
#include "core/network.h"
#include "core/solve.h"
#include "core/verdict.h"

/* One ulp above X. */
static double up(double x)
{
	return nextafter(x, INFINITY);
}

/* One ulp below X. */
static double down(double x)
{
	return nextafter(x, -INFINITY);
}

/* The line of VD about PART, or fail. */
static const struct verdict_line *line_of(const struct verdict *vd,
                                          enum verdict_part part)
{
	for (size_t k = 0; k < vd->nlines; k++)
		if (vd->lines[k].part == part)
			return &vd->lines[k];
	fail_msg("no line for part %d", (int)part);
	return NULL;
}

/* The comparison itself at and around a rating. */
static void test_compare_table(void **state)
{
	(void)state;
	static const double ratings[] = { 0.25, 0.0731, 3.17e-3, 1.0, 47.3 };
	for (size_t k = 0; k < sizeof ratings / sizeof ratings[0]; k++) {
		double r = ratings[k];
		assert_int_equal(ratings_compare(r, r, NAN), RATINGS_WITHIN);
		assert_int_equal(ratings_compare(down(r), r, NAN), RATINGS_WITHIN);
		assert_int_equal(ratings_compare(up(r), r, NAN), RATINGS_OVER);
		assert_int_equal(ratings_compare(up(r), NAN, NAN), RATINGS_NO_RATING);
		/* With a caution level: at it within, an ulp above a caution. */
		double c = 0.5 * r;
		assert_int_equal(ratings_compare(c, r, c), RATINGS_WITHIN);
		assert_int_equal(ratings_compare(up(c), r, c), RATINGS_CAUTION);
		assert_int_equal(ratings_compare(r, r, c), RATINGS_CAUTION);
		assert_int_equal(ratings_compare(up(r), r, c), RATINGS_OVER);
		assert_int_equal(ratings_compare(NAN, r, c), RATINGS_OVER);
	}
	assert_string_equal(ratings_verdict_name(RATINGS_WITHIN), "within rating");
	assert_string_equal(ratings_verdict_name(RATINGS_OVER), "over rating");
	assert_string_equal(ratings_verdict_name(RATINGS_CAUTION), "caution");
}

/* One row of the verdict table: values held to a set of ratings. */
struct vcase {
	double ambient;           /* degC, NaN: none */
	double p_device, i_device, p_resistor;
	enum ratings_verdict device, current, resistor;
	const char *words;        /* in the resistor's sentence */
};

/* Every part at and one ulp around its rating, through verdict_worst. */
static void test_verdict_table(void **state)
{
	(void)state;
	const double pmax = 0.0731, imax = 0.0317, rp = 0.3127;
	/* The derated rating as the core forms it: rating times factor. */
	const double hot = 97.3;
	const double avail_hot = rp * ratings_derating(hot);
	const struct vcase cases[] = {
		{ NAN, pmax, imax, rp, RATINGS_WITHIN, RATINGS_WITHIN,
		  RATINGS_CAUTION, "caution" },
		{ NAN, up(pmax), up(imax), up(rp), RATINGS_OVER, RATINGS_OVER,
		  RATINGS_OVER, "over rating" },
		{ NAN, down(pmax), down(imax), 0.5 * rp, RATINGS_WITHIN,
		  RATINGS_WITHIN, RATINGS_WITHIN, "within rating" },
		{ NAN, 0.0, 0.0, up(0.5 * rp), RATINGS_WITHIN, RATINGS_WITHIN,
		  RATINGS_CAUTION, "common practice keeps it at or below 50 %" },
		{ hot, pmax, imax, avail_hot, RATINGS_WITHIN, RATINGS_WITHIN,
		  RATINGS_CAUTION, "at this ambient" },
		{ hot, pmax, imax, up(avail_hot), RATINGS_WITHIN, RATINGS_WITHIN,
		  RATINGS_OVER, "over rating" },
		{ 163.0, pmax, imax, 1e-6, RATINGS_WITHIN, RATINGS_WITHIN,
		  RATINGS_OVER, "no power rating left" },
	};
	struct ratings r;
	ratings_init(&r);
	r.device_max_power = pmax;
	r.device_max_current = imax;
	r.resistor_power = rp;
	for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
		const struct vcase *c = &cases[k];
		r.ambient_temperature = c->ambient;
		struct verdict vd;
		verdict_worst(c->p_device, c->i_device, c->p_resistor, "RS", &r, &vd);
		const struct verdict_line *d = line_of(&vd, VERDICT_DEVICE_POWER);
		const struct verdict_line *i = line_of(&vd, VERDICT_DEVICE_CURRENT);
		const struct verdict_line *s = line_of(&vd, VERDICT_RESISTOR);
		if (d->verdict != c->device || i->verdict != c->current ||
		    s->verdict != c->resistor)
			fail_msg("case %zu: %d %d %d, expected %d %d %d", k,
			         (int)d->verdict, (int)i->verdict, (int)s->verdict,
			         (int)c->device, (int)c->current, (int)c->resistor);
		if (strstr(s->words, c->words) == NULL)
			fail_msg("case %zu: '%s' lacks '%s'", k, s->words, c->words);
		assert_non_null(strstr(s->words, "at worst"));
		enum ratings_verdict w = d->verdict;
		if (i->verdict > w)
			w = i->verdict;
		if (s->verdict > w)
			w = s->verdict;
		assert_int_equal(vd.worst, w);
		/* The margin is what is left of the rating. */
		if (isfinite(s->use))
			assert_true(s->margin == 1.0 - s->use);
	}
	/* Without ratings: no verdicts, the rule of thumb's suggestion. */
	struct verdict vd;
	verdict_worst(0.0413, 0.0213, 0.0713, "RS", NULL, &vd);
	assert_int_equal(vd.nlines, 2); /* no current line without a rating */
	assert_int_equal(vd.worst, RATINGS_NO_RATING);
	const struct verdict_line *s = line_of(&vd, VERDICT_RESISTOR);
	assert_true(s->suggested == 0.25); /* 2 x 71.3 mW -> 1/4 W */
	assert_non_null(strstr(s->words, "a 250 mW part fits"));
}

/* A plain Thevenin source: three lines whose powers balance. */
static void test_verdict_thevenin(void **state)
{
	(void)state;
	struct problem pb;
	memset(&pb, 0, sizeof pb);
	struct source_spec sp;
	char err[200];
	source_spec_thevenin(&sp, 17.3, 1.37e3);
	assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
	device_init(&pb.dev, &model_diode);
	pb.dev.p[DIODE_IS] = 2.31e-15;
	pb.dev.p[DIODE_N] = 1.73;
	struct solve_options o;
	solve_options_init(&o);
	struct solve_result res;
	assert_int_equal(solve_problem(&pb, &o, &res), SOLVE_OK);
	double v = res.pts[0].v, i = res.pts[0].i;
	struct ratings r;
	ratings_init(&r);
	r.resistor_power = 0.5;
	struct design_request rq = { .target = DESIGN_CURRENT, .value = 0.0113 };
	struct verdict vd;
	verdict_at(&pb, SOURCE_THEVENIN, v, i, &r, &rq, &vd);
	assert_int_equal(vd.nlines, 3);
	double pd = line_of(&vd, VERDICT_DEVICE_POWER)->value;
	double pr = line_of(&vd, VERDICT_RESISTOR)->value;
	double ps = line_of(&vd, VERDICT_SOURCE)->value;
	assert_true(fabs(pd + pr - ps) <= 1e-12 * ps);
	assert_true(fabs(pr - i * i * 1.37e3) <= 1e-14 * pr);
	assert_int_equal(line_of(&vd, VERDICT_DEVICE_POWER)->verdict,
	                 RATINGS_NO_RATING);
	assert_true(vd.target.given);
	assert_true(fabs(vd.target.error_percent -
	                 100.0 * (i - 0.0113) / 0.0113) < 1e-9);
	assert_non_null(strstr(vd.target.words, "target current"));
	/* The Norton reading of the same line: RP across, V^2 / RP. */
	verdict_at(&pb, SOURCE_NORTON, v, i, &r, NULL, &vd);
	assert_string_equal(line_of(&vd, VERDICT_RESISTOR)->name, "RP");
	assert_true(fabs(line_of(&vd, VERDICT_RESISTOR)->value - v * v / 1.37e3) <=
	            1e-14);
	assert_false(vd.target.given);
}

/* A divider network into a resistive load: every part from its nodes. */
static void test_verdict_network(void **state)
{
	(void)state;
	const double e = 12.7, r1 = 4.73e3, r2 = 2.21e3, rl = 1.37e3;
	struct network *net = network_create();
	assert_non_null(net);
	assert_true(network_add_part(net, "supply", NETWORK_VOLTAGE_SOURCE, e,
	                             "gnd", "top") >= 0);
	assert_true(network_add_part(net, "R1", NETWORK_RESISTOR, r1, "top",
	                             "mid") >= 0);
	assert_true(network_add_part(net, "R2", NETWORK_RESISTOR, r2, "mid",
	                             "gnd") >= 0);
	assert_int_equal(network_set_terminals(net, "mid", "gnd"), 0);
	struct problem pb;
	memset(&pb, 0, sizeof pb);
	struct source_spec sp;
	char err[200];
	assert_int_equal(network_reduce(net, NULL, &sp, NULL), NETWORK_OK);
	assert_int_equal(source_from_spec(&sp, &pb.src, err, sizeof err), 0);
	pb.net = net;
	device_init(&pb.dev, &model_power_law); /* exponent 1: a resistor */
	pb.dev.p[POWER_LAW_VREF] = 1.0;
	pb.dev.p[POWER_LAW_IREF] = 1.0 / rl;
	pb.dev.p[POWER_LAW_ALPHA] = 1.0;
	double rpar = r2 * rl / (r2 + rl);
	double v = e * rpar / (r1 + rpar), i = v / rl;
	struct ratings r;
	ratings_init(&r);
	r.resistor_power = 0.0301; /* R1 takes about 23.8 mW: a caution */
	struct verdict vd;
	verdict_at(&pb, SOURCE_THEVENIN, v, i, &r, NULL, &vd);
	assert_string_equal(vd.message, "");
	assert_int_equal(vd.nlines, 4); /* device, supply, R1, R2 */
	double p1 = (e - v) * (e - v) / r1, p2 = v * v / r2;
	for (size_t k = 0; k < vd.nlines; k++) {
		const struct verdict_line *l = &vd.lines[k];
		if (strcmp(l->name, "R1") == 0) {
			assert_true(fabs(l->value - p1) <= 1e-12 * p1);
			assert_int_equal(l->verdict, RATINGS_CAUTION);
		} else if (strcmp(l->name, "R2") == 0) {
			assert_true(fabs(l->value - p2) <= 1e-12 * p2);
			assert_int_equal(l->verdict, RATINGS_WITHIN);
		} else if (strcmp(l->name, "supply") == 0) {
			double ps = e * (e - v) / r1;
			assert_true(fabs(l->value - ps) <= 1e-12 * ps);
			assert_int_equal(l->part, VERDICT_SOURCE);
			assert_true(fabs(l->value - p1 - p2 - v * i) <= 1e-12 * ps);
		}
	}
	/* A part changed in the problem is used as changed. */
	struct paramref ref;
	assert_int_equal(paramref_find(&pb, "source.network.R1", &ref, err,
	                               sizeof err), 0);
	assert_int_equal(paramref_set(&pb, &ref, 2.0 * r1), 0);
	v = e * rpar / (2.0 * r1 + rpar);
	verdict_at(&pb, SOURCE_THEVENIN, v, v / rl, &r, NULL, &vd);
	p1 = (e - v) * (e - v) / (2.0 * r1);
	for (size_t k = 0; k < vd.nlines; k++)
		if (strcmp(vd.lines[k].name, "R1") == 0)
			assert_true(fabs(vd.lines[k].value - p1) <= 1e-12 * p1);
	network_destroy(net);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_compare_table),
		cmocka_unit_test(test_verdict_table),
		cmocka_unit_test(test_verdict_thevenin),
		cmocka_unit_test(test_verdict_network),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
