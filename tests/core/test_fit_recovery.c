/*
 * test_fit_recovery.c - the fit recovers known parameters from noisy
 * points, and its standard errors are honest: for every model in
 * fit_cases.h, 200 seeds of noise on points from a known parameter set;
 * each parameter must land within 3 reported standard errors of the truth
 * in at least 95 % of the seeds, and the mean reported standard error must
 * agree with the scatter of the estimates over the seeds within 20 % (a
 * check of the covariance s^2 (J'J)^-1; Seber & Wild, Nonlinear
 * Regression, Wiley 1989, ch. 2).  Both are judged in the fit's own
 * coordinates (the log of a positive parameter), where the first-order
 * theory is meant to hold.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include <cmocka.h>

#include "fit_cases.h"

#define SEEDS 200

/* One case over SEEDS seeds. */
static void recover(const struct fit_case *c)
{
	model_values truth;
	fit_case_truth(c, truth);
	double y[FIT_CASE_MAX_POINTS];
	double sum[FIT_MAX_FREE] = { 0 }, sum2[FIT_MAX_FREE] = { 0 };
	double se_sum[FIT_MAX_FREE] = { 0 };
	unsigned inside[FIT_MAX_FREE] = { 0 };
	size_t nfree = 0;
	int idx[FIT_MAX_FREE];
	for (uint64_t seed = 1; seed <= SEEDS; seed++) {
		struct fit_request rq;
		struct fit_result res;
		fit_case_request(c, seed, 1.0, y, NULL, &rq);
		if (fit_run(&rq, &res) != FIT_OK)
			fail_msg("%s, seed %llu: %s", c->name, (unsigned long long)seed,
			         res.message);
		nfree = res.nfree;
		memcpy(idx, res.idx, sizeof idx);
		for (size_t j = 0; j < nfree; j++) {
			int i = res.idx[j];
			bool lg = fit_case_logt(c->type, i);
			double z = lg ? log(res.p[i]) : res.p[i];
			double zt = lg ? log(truth[i]) : truth[i];
			double sz = lg ? res.se[j] / res.p[i] : res.se[j];
			sum[j] += z - zt;
			sum2[j] += (z - zt) * (z - zt);
			se_sum[j] += sz;
			if (fabs(z - zt) <= 3.0 * sz)
				inside[j]++;
		}
		fit_result_fini(&res);
	}
	for (size_t j = 0; j < nfree; j++) {
		double mean = sum[j] / SEEDS;
		double sd = sqrt((sum2[j] - SEEDS * mean * mean) / (SEEDS - 1));
		double se = se_sum[j] / SEEDS;
		const char *key = c->type->params[idx[j]].key;
		print_message("# %-34s %-22s within 3 se: %3u/%d  mean se %.3e  "
		              "scatter %.3e  ratio %.3f\n", c->name, key, inside[j],
		              SEEDS, se, sd, se / sd);
		if (inside[j] < (unsigned)(0.95 * SEEDS))
			fail_msg("%s: %s within 3 standard errors in only %u of %d seeds",
			         c->name, key, inside[j], SEEDS);
		if (fabs(se / sd - 1.0) > 0.2)
			fail_msg("%s: %s: mean standard error %.4g against a scatter of "
			         "%.4g (ratio %.3f, expected 0.8 to 1.2)", c->name, key, se,
			         sd, se / sd);
	}
}

/* Every case. */
static void test_recovery(void **state)
{
	(void)state;
	struct fit_case cs[16];
	size_t n = fit_cases(cs);
	for (size_t k = 0; k < n; k++)
		recover(&cs[k]);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_recovery),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
