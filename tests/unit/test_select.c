/*
 * test_select: choosing k by held-out likelihood.
 *
 * The reference is the planted truth of the test generators (the ring of
 * tests/unit/helpers.c test_planted_ring(), 8 communities, and planted_ring()
 * below, any number): a held-out criterion that works must land near the
 * planted k (within the grid's neighbours of it) and prefer it to much
 * smaller k. The grid and the default bound are checked on cases worked
 * by hand.
 */
#include "helpers.h"

#include <math.h>
#include <poll.h>
#include <stdio.h>
#include <stdlib.h>

#include "coterie/cover.h"
#include "coterie/fit.h"
#include "coterie/graph.h"
#include "coterie/rng.h"
#include "coterie/select.h"

/* A planted AGM on a ring: k communities of size nodes, community c
 * starting at node c * (n / k), so each overlaps the next by
 * size - n / k nodes; p_c = pc inside, background eps. */
static struct graph *planted_ring(uint32_t n, uint32_t k, uint32_t size, double pc, double eps,
				  uint64_t seed)
{
	return test_planted_ring_of(NULL, n, k, size, n / k, pc, eps, seed);
}

/* c disjoint cliques of s nodes each. */
static struct graph *cliques(uint32_t c, uint32_t s)
{
	uint32_t *pairs = malloc(sizeof *pairs * c * s * s);
	uint64_t np = 0;
	for (uint32_t q = 0; q < c; q++)
		for (uint32_t i = 0; i < s; i++)
			for (uint32_t j = i + 1; j < s; j++) {
				pairs[2 * np] = q * s + i;
				pairs[2 * np + 1] = q * s + j;
				np++;
			}
	struct graph *g = graph_from_pairs(c * s, pairs, np, NULL);
	free(pairs);
	assert_non_null(g);
	return g;
}

static void test_grid_is_geometric_and_ends_at_kmax(void **state)
{
	(void)state;
	struct select_params sp = { 2, 12, 0.1, 1.25, 0, { 0 }, 0, 0, 0 };
	uint32_t ks[SELECT_MAX_GRID];
	uint32_t n = select_grid(&sp, ks);
	/* worked by hand: 2, 2.5 -> 3 (rounded), 3.125 -> 3 (dropped, not
	 * larger), 3.9 -> 4, 4.9 -> 5, 6.1 -> 6, 7.6 -> 8, 9.5 -> 10, 11.9 -> 12 */
	static const uint32_t want[] = { 2, 3, 4, 5, 6, 8, 10, 12 };
	assert_int_equal(n, 8);
	for (uint32_t i = 0; i < n; i++)
		assert_int_equal(ks[i], want[i]);
	struct select_params one = { 5, 5, 0.1, 2.0, 0, { 0 }, 0, 0, 0 };
	assert_int_equal(select_grid(&one, ks), 1);
	assert_int_equal(ks[0], 5);
}

static void test_grid_option_reads_ranges_ratios_and_lists(void **state)
{
	(void)state;
	struct select_params sp = { 2, 100, 0.1, 1.25, 0, { 0 }, 0, 0, 0 };
	uint32_t ks[SELECT_MAX_GRID];
	/* A:B keeps the ratio already set: 2:12 is the grid worked above */
	assert_int_equal(select_grid_parse("2:12", &sp), 0);
	assert_int_equal(select_grid(&sp, ks), 8);
	/* 2:12:2 by hand: 2, 4, 8, then 16 > 12 so the grid ends at 12 */
	assert_int_equal(select_grid_parse("2:12:2", &sp), 0);
	assert_int_equal(select_grid(&sp, ks), 4);
	assert_int_equal(ks[0], 2);
	assert_int_equal(ks[1], 4);
	assert_int_equal(ks[2], 8);
	assert_int_equal(ks[3], 12);
	/* a list, sorted and without repeats */
	assert_int_equal(select_grid_parse("16,4,8,4", &sp), 0);
	assert_int_equal(select_grid(&sp, ks), 3);
	assert_int_equal(ks[0], 4);
	assert_int_equal(ks[1], 8);
	assert_int_equal(ks[2], 16);
	/* one number is a list of one */
	assert_int_equal(select_grid_parse("7", &sp), 0);
	assert_int_equal(select_grid(&sp, ks), 1);
	assert_int_equal(ks[0], 7);
}

static void test_grid_option_refuses_malformed_values(void **state)
{
	(void)state;
	static const char *const bad[] = { "9:3", "0:4", "a", "4,,8", "4,8,", "2:8:1",
					   "2:8:x", "2:", ":8", "-2:8", "2:8:1e400", "", "1:2:3:4",
					   "99999999999" };
	for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
		struct select_params sp = { 2, 10, 0.1, 1.25, 0, { 0 }, 0, 0, 0 };
		assert_int_equal(select_grid_parse(bad[i], &sp), -1);
	}
}

static void test_default_bound_is_thrice_the_distinct_minimal_ego_nets(void **state)
{
	(void)state;
	/* by hand: in 10 disjoint 16-cliques every ego-net is its clique,
	 * cut 0, so conductance 0 and every node is a local minimum; counted
	 * once per clique (the others lie inside it): L = 10, and the bound
	 * is 3 L = 30 (within [10, 500], below n / 4 = 160 / 4 = 40) */
	struct graph *g = cliques(10, 16);
	struct select_params sp;
	uint32_t L;
	assert_int_equal(select_params_default(&sp, g, &L), 0);
	assert_int_equal(L, 10);
	assert_int_equal(sp.kmax, 30);
	assert_int_equal(sp.kmin, 2);
	graph_free(g);
	/* 3 cliques of 10: L = 3, 3 L = 9 is raised to 10, then capped at
	 * n / 4 = 30 / 4 = 7 */
	g = cliques(3, 10);
	assert_int_equal(select_params_default(&sp, g, &L), 0);
	assert_int_equal(L, 3);
	assert_int_equal(sp.kmax, 7);
	graph_free(g);
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
	assert_int_equal(select_params_default(&sp, g, NULL), 0);
	sp.kmax = 16;
	struct select_result res;
	assert_int_equal(select_k(g, &p, &sp, NULL, &res), 0);
	for (uint32_t i = 0; i < res.npts; i++) {
		printf("k %u held-out %.3f auc %.4f\n", res.pts[i].k, res.pts[i].heldout,
		       res.pts[i].auc);
		assert_true(isfinite(res.pts[i].heldout) && res.pts[i].heldout < 0);
		assert_true(res.pts[i].auc >= 0.0 && res.pts[i].auc <= 1.0);
	}
	/* planted k = 8; the grid around it is 6, 8, 10 */
	assert_true(res.best >= 6 && res.best <= 10);
	/* and k = 2 is clearly worse than the winner, by both measures */
	assert_int_equal(res.pts[0].k, 2);
	double top = -INFINITY, top_auc = 0;
	for (uint32_t i = 0; i < res.npts; i++)
		if (res.pts[i].k == res.best) {
			top = res.pts[i].heldout;
			top_auc = res.pts[i].auc;
		}
	assert_true(res.pts[0].heldout < top);
	assert_true(res.pts[0].auc < top_auc);
	/* the held-out pairs: 10% of the edges, as many non-edges */
	assert_int_equal(res.held_edges, (uint64_t)llround(0.1 * (double)g->m));
	assert_int_equal(res.held_non_edges, res.held_edges);
	select_result_release(&res);
	cover_release(&truth);
	graph_free(g);
}

static void test_chosen_k_lands_near_the_planted_k_with_the_default_grid(void **state)
{
	(void)state;
	/* planted rings with 5 and 12 communities (planted_ring() above), the
	 * default grid from the graph; "near" is the planted k or a grid
	 * neighbour of it (1.25 apart, so within about 25%) */
	static const struct {
		uint32_t n, k, size;
		double pc;
	} cases[] = { { 300, 5, 70, 0.3 }, { 480, 12, 50, 0.35 } };
	for (size_t t = 0; t < sizeof cases / sizeof cases[0]; t++) {
		struct graph *g = planted_ring(cases[t].n, cases[t].k, cases[t].size, cases[t].pc,
					       0.002, 100 + t);
		struct fit_params p;
		fit_params_default(&p);
		p.threads = 2;
		p.starts = 1;
		struct select_params sp;
		uint32_t L;
		assert_int_equal(select_params_default(&sp, g, &L), 0);
		struct select_result res;
		assert_int_equal(select_k(g, &p, &sp, NULL, &res), 0);
		printf("planted %u: %u minimal ego-nets, grid to %u, chose %u\n", cases[t].k, L,
		       sp.kmax, res.best);
		assert_true(sp.kmax >= cases[t].k); /* the bound leaves room for the truth */
		double lo = cases[t].k / 1.3, hi = cases[t].k * 1.3;
		assert_true(res.best >= lo && res.best <= hi);
		select_result_release(&res);
		graph_free(g);
	}
}

static void test_same_seed_same_choice_for_any_thread_count(void **state)
{
	(void)state;
	struct cover truth;
	struct graph *g = test_planted_ring(&truth, 9);
	struct fit_params p;
	fit_params_default(&p);
	p.starts = 1;
	struct select_params sp;
	assert_int_equal(select_params_default(&sp, g, NULL), 0);
	sp.kmax = 10;
	struct select_result a, b;
	p.threads = 1;
	assert_int_equal(select_k(g, &p, &sp, NULL, &a), 0);
	p.threads = 3; /* three fits at once */
	assert_int_equal(select_k(g, &p, &sp, NULL, &b), 0);
	assert_int_equal(a.best, b.best);
	assert_int_equal(a.npts, b.npts);
	for (uint32_t i = 0; i < a.npts; i++) {
		assert_int_equal(a.pts[i].k, b.pts[i].k);
		assert_true(a.pts[i].heldout == b.pts[i].heldout);
		assert_true(a.pts[i].auc == b.pts[i].auc);
		assert_int_equal(a.pts[i].sweeps, b.pts[i].sweeps);
	}
	select_result_release(&a);
	select_result_release(&b);
	cover_release(&truth);
	graph_free(g);
}

static void test_search_on_its_own_thread_reports_every_point(void **state)
{
	(void)state;
	struct cover truth;
	struct graph *g = test_planted_ring(&truth, 9);
	struct fit_params p;
	fit_params_default(&p);
	p.starts = 1;
	p.threads = 2;
	struct select_params sp;
	assert_int_equal(select_params_default(&sp, g, NULL), 0);
	assert_int_equal(select_grid_parse("3,5,8", &sp), 0);
	struct select_result direct;
	assert_int_equal(select_k(g, &p, &sp, NULL, &direct), 0);
	assert_int_equal(direct.npts, 3); /* a list is scored in full */
	struct select_run *run = select_run_start(g, &p, &sp);
	assert_non_null(run);
	struct select_point pts[SELECT_MAX_GRID];
	uint32_t grid[SELECT_MAX_GRID], ngrid, n = 0;
	int done = 0;
	while (!done) {
		struct pollfd pfd = { select_run_wake_fd(run), POLLIN, 0 };
		poll(&pfd, 1, 1000);
		select_run_drain(run);
		uint32_t now = select_run_points(run, pts, grid, &ngrid, &done);
		assert_true(now >= n); /* points only arrive */
		n = now;
	}
	assert_int_equal(ngrid, 3);
	assert_int_equal(grid[2], 8);
	struct select_result res;
	assert_int_equal(select_run_finish(run, &res), 0);
	assert_int_equal(n, 3);
	assert_int_equal(res.best, direct.best);
	for (uint32_t i = 0; i < n; i++)
		assert_true(pts[i].heldout == direct.pts[i].heldout);
	select_result_release(&res);
	select_result_release(&direct);
	select_run_free(run);
	select_run_free(NULL);
	cover_release(&truth);
	graph_free(g);
}

static void test_folds_aim_at_two_thousand_held_out_edges(void **state)
{
	(void)state;
	/* by hand: share 0.1 of 20,000 edges holds out 2,000: one fold; of
	 * 5,000, 500: ceil(2000 / 500) = 4; of 613 (football), 61.3: 33,
	 * capped at 10; of 10 edges, 1: capped at 10 */
	assert_int_equal(select_folds(20000, 0.1), 1);
	assert_int_equal(select_folds(1000000, 0.1), 1);
	assert_int_equal(select_folds(5000, 0.1), 4);
	assert_int_equal(select_folds(613, 0.1), SELECT_MAX_FOLDS);
	assert_int_equal(select_folds(10, 0.1), SELECT_MAX_FOLDS);
}

static void test_folds_give_mean_and_spread_and_one_fold_is_the_old_split(void **state)
{
	(void)state;
	struct cover truth;
	struct graph *g = test_planted_ring(&truth, 6);
	struct fit_params p;
	fit_params_default(&p);
	p.starts = 1;
	p.threads = 2;
	struct select_params sp;
	assert_int_equal(select_params_default(&sp, g, NULL), 0);
	assert_int_equal(select_grid_parse("4,6", &sp), 0);
	sp.folds = 1;
	struct select_result one, three;
	assert_int_equal(select_k(g, &p, &sp, NULL, &one), 0);
	sp.folds = 3;
	assert_int_equal(select_k(g, &p, &sp, NULL, &three), 0);
	assert_int_equal(one.folds, 1);
	assert_int_equal(three.folds, 3);
	for (uint32_t i = 0; i < 2; i++) {
		assert_int_equal(one.pts[i].folds, 1);
		assert_true(one.pts[i].heldout_sd == 0.0);
		assert_int_equal(three.pts[i].folds, 3);
		assert_true(three.pts[i].heldout_sd >= 0.0);
		assert_false(three.pts[i].added);
	}
	/* fold 0 of three is the one-fold split: its pairs are the same */
	assert_true(one.held_edges == three.held_edges);
	select_result_release(&one);
	select_result_release(&three);
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
	struct select_params sp = { 5, 4, 0.1, 1.25, 0, { 0 }, 0, 0, 0 };
	struct select_result res;
	assert_int_equal(select_k(g, &p, &sp, NULL, &res), -1);
	sp = (struct select_params){ 2, 4, 0.9, 1.25, 0, { 0 }, 0, 0, 0 };
	assert_int_equal(select_k(g, &p, &sp, NULL, &res), -1);
	cover_release(&truth);
	graph_free(g);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_grid_is_geometric_and_ends_at_kmax),
		cmocka_unit_test(test_grid_option_reads_ranges_ratios_and_lists),
		cmocka_unit_test(test_grid_option_refuses_malformed_values),
		cmocka_unit_test(test_default_bound_is_thrice_the_distinct_minimal_ego_nets),
		cmocka_unit_test(test_planted_k_wins_the_held_out_likelihood),
		cmocka_unit_test(test_chosen_k_lands_near_the_planted_k_with_the_default_grid),
		cmocka_unit_test(test_same_seed_same_choice_for_any_thread_count),
		cmocka_unit_test(test_search_on_its_own_thread_reports_every_point),
		cmocka_unit_test(test_folds_aim_at_two_thousand_held_out_edges),
		cmocka_unit_test(test_folds_give_mean_and_spread_and_one_fold_is_the_old_split),
		cmocka_unit_test(test_bad_parameters_are_refused),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
