/*
 * test_select: choosing k by held-out likelihood.
 *
 * The reference is the planted truth of the test generator (8 communities,
 * tests/helpers.c test_planted_ring()): a held-out criterion that works
 * must prefer the planted k to much smaller and much larger ones.
 */
#include "helpers.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>

#include "coterie/cover.h"
#include "coterie/fit.h"
#include "coterie/graph.h"
#include "coterie/select.h"

static void test_grid_is_geometric_and_ends_at_kmax(void **state)
{
	(void)state;
	struct select_params sp = { 2, 12, 0.1, 1.25 };
	uint32_t ks[64];
	uint32_t n = select_grid(&sp, ks);
	/* worked by hand: 2, 2.5 -> 3 (rounded), 3.125 -> 3 (dropped, not
	 * larger), 3.9 -> 4, 4.9 -> 5, 6.1 -> 6, 7.6 -> 8, 9.5 -> 10, 11.9 -> 12 */
	static const uint32_t want[] = { 2, 3, 4, 5, 6, 8, 10, 12 };
	assert_int_equal(n, 8);
	for (uint32_t i = 0; i < n; i++)
		assert_int_equal(ks[i], want[i]);
	struct select_params one = { 5, 5, 0.1, 2.0 };
	assert_int_equal(select_grid(&one, ks), 1);
	assert_int_equal(ks[0], 5);
}

static void test_planted_k_wins_the_held_out_likelihood(void **state)
{
	(void)state;
	struct cover truth;
	struct graph *g = test_planted_ring(&truth, 7);
	assert_non_null(g);
	struct fit_params p;
	fit_params_default(&p);
	p.threads = 2;
	struct select_params sp;
	select_params_default(&sp, g);
	sp.kmax = 16;
	uint32_t best, n;
	struct select_point *pts;
	assert_int_equal(select_k(g, &p, &sp, NULL, &best, &pts, &n), 0);
	for (uint32_t i = 0; i < n; i++) {
		printf("k %u held-out %.3f\n", pts[i].k, pts[i].heldout);
		assert_true(isfinite(pts[i].heldout) && pts[i].heldout < 0);
	}
	/* planted k = 8; the grid around it is 6, 8, 10 */
	assert_true(best >= 6 && best <= 10);
	/* and k = 2 is clearly worse than the winner */
	assert_int_equal(pts[0].k, 2);
	double top = -INFINITY;
	for (uint32_t i = 0; i < n; i++)
		if (pts[i].k == best)
			top = pts[i].heldout;
	assert_true(pts[0].heldout < top);
	free(pts);
	cover_release(&truth);
	graph_free(g);
}

static void test_same_seed_same_choice(void **state)
{
	(void)state;
	struct cover truth;
	struct graph *g = test_planted_ring(&truth, 9);
	struct fit_params p;
	fit_params_default(&p);
	p.starts = 1;
	struct select_params sp;
	select_params_default(&sp, g);
	sp.kmax = 10;
	uint32_t b1, b2, n1, n2;
	struct select_point *a, *b;
	assert_int_equal(select_k(g, &p, &sp, NULL, &b1, &a, &n1), 0);
	p.threads = 2;
	assert_int_equal(select_k(g, &p, &sp, NULL, &b2, &b, &n2), 0);
	assert_int_equal(b1, b2);
	assert_int_equal(n1, n2);
	for (uint32_t i = 0; i < n1; i++)
		assert_true(a[i].heldout == b[i].heldout);
	free(a);
	free(b);
	cover_release(&truth);
	graph_free(g);
}

static void test_bad_parameters_are_refused(void **state)
{
	(void)state;
	struct cover truth;
	struct graph *g = test_planted_ring(&truth, 3);
	struct fit_params p;
	fit_params_default(&p);
	struct select_params sp = { 5, 4, 0.1, 1.25 };
	uint32_t best, n;
	struct select_point *pts;
	assert_int_equal(select_k(g, &p, &sp, NULL, &best, &pts, &n), -1);
	sp = (struct select_params){ 2, 4, 0.9, 1.25 };
	assert_int_equal(select_k(g, &p, &sp, NULL, &best, &pts, &n), -1);
	cover_release(&truth);
	graph_free(g);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_grid_is_geometric_and_ends_at_kmax),
		cmocka_unit_test(test_planted_k_wins_the_held_out_likelihood),
		cmocka_unit_test(test_same_seed_same_choice),
		cmocka_unit_test(test_bad_parameters_are_refused),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
