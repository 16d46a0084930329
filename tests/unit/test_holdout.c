/*
 * test_holdout: splitting a graph into training edges and held-out pairs,
 * and scoring a model on the held-out pairs (log-likelihood, link AUC).
 *
 * References: the AUC as the Mann-Whitney statistic, P(edge score >
 * non-edge score) + P(equal) / 2 (Hanley & McNeil, Radiology 143, 1982),
 * worked by hand below and cross-checked against a pair-by-pair count;
 * the held-out log-likelihood from its definition in holdout.h (the
 * Poisson one: Ball, Karrer & Newman, PRE 84, 036103, 2011, the weight of
 * a pair Poisson with mean x + qeps, worked by hand below).
 */
#include "helpers.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/graph.h"
#include "coterie/holdout.h"
#include "coterie/model.h"
#include "coterie/rng.h"
#include "coterie/util.h"

static void test_auc_counts_ties_as_half(void **state)
{
	(void)state;
	/* by hand: edges {3, 2, 1} against non-edges {2, 0}: (3,2) win,
	 * (3,0) win, (2,2) tie 1/2, (2,0) win, (1,2) loss, (1,0) win:
	 * 4.5 of 6 pairs = 0.75 */
	const double pos[] = { 3, 2, 1 }, neg[] = { 2, 0 };
	assert_true(fabs(holdout_auc(pos, 3, neg, 2) - 0.75) < 1e-15);
	/* all scores equal: every pair a tie, 1/2 */
	const double same[] = { 1, 1, 1 };
	assert_true(fabs(holdout_auc(same, 3, same, 2) - 0.5) < 1e-15);
	/* perfectly separated: 1 one way, 0 the other */
	assert_true(holdout_auc(pos, 3, (const double[]){ 0.5 }, 1) == 1.0);
	assert_true(holdout_auc((const double[]){ 0.5 }, 1, pos, 3) == 0.0);
	/* undefined without one side */
	assert_true(isnan(holdout_auc(pos, 3, neg, 0)));
	assert_true(isnan(holdout_auc(pos, 0, neg, 2)));
}

static void test_auc_by_sorting_equals_pair_by_pair_count(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 5);
	for (int trial = 0; trial < 50; trial++) {
		uint64_t np = 1 + rng_below(&r, 40), nn = 1 + rng_below(&r, 40);
		double pos[40], neg[40];
		/* few distinct values, so ties are common */
		for (uint64_t i = 0; i < np; i++)
			pos[i] = (double)rng_below(&r, 6);
		for (uint64_t i = 0; i < nn; i++)
			neg[i] = (double)rng_below(&r, 5);
		double wins = 0;
		for (uint64_t i = 0; i < np; i++)
			for (uint64_t j = 0; j < nn; j++)
				wins += pos[i] > neg[j] ? 1.0 : pos[i] == neg[j] ? 0.5 : 0.0;
		assert_true(fabs(holdout_auc(pos, np, neg, nn) - wins / (double)(np * nn)) < 1e-12);
	}
}

static void test_split_holds_out_the_share_asked_and_as_many_non_edges(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 8);
	for (int trial = 0; trial < 10; trial++) {
		struct graph *g = test_random_graph(&r, 30 + (uint32_t)rng_below(&r, 40), 0.2);
		double share = trial % 2 ? 0.1 : 0.25;
		struct holdout h;
		assert_int_equal(holdout_split(&h, g, share, (uint64_t)trial), 0);
		assert_graph_sane(h.train);
		assert_graph_sane(h.held);
		/* exactly round(share * m) edges, and as many non-edges */
		assert_int_equal(h.nedges, (uint64_t)llround(share * (double)g->m));
		assert_int_equal(h.nnon, h.nedges);
		assert_int_equal(h.train->m + h.nedges, g->m);
		assert_int_equal(h.held->m, h.nedges + h.nnon);
		for (uint64_t i = 0; i < h.nedges; i++) {
			uint32_t u = h.edges[2 * i], v = h.edges[2 * i + 1];
			assert_true(u < v && graph_has_edge(g, u, v) && !graph_has_edge(h.train, u, v));
			assert_true(graph_has_edge(h.held, u, v));
		}
		for (uint64_t i = 0; i < h.nnon; i++) {
			uint32_t u = h.non[2 * i], v = h.non[2 * i + 1];
			assert_true(u < v && !graph_has_edge(g, u, v) && graph_has_edge(h.held, u, v));
		}
		/* every training edge is an edge of g and not held out */
		for (uint32_t u = 0; u < g->n; u++)
			for (uint64_t i = h.train->off[u]; i < h.train->off[u + 1]; i++) {
				assert_true(graph_has_edge(g, u, h.train->adj[i]));
				assert_false(graph_has_edge(h.held, u, h.train->adj[i]));
			}
		/* the names travel with the training graph */
		assert_string_equal(graph_name(h.train, g->n - 1), graph_name(g, g->n - 1));
		holdout_release(&h);
		graph_free(g);
	}
}

static void test_split_depends_on_the_seed_only(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 9);
	struct graph *g = test_random_graph(&r, 50, 0.2);
	struct holdout a, b, c;
	assert_int_equal(holdout_split(&a, g, 0.1, 3), 0);
	assert_int_equal(holdout_split(&b, g, 0.1, 3), 0);
	assert_int_equal(holdout_split(&c, g, 0.1, 4), 0);
	assert_int_equal(a.nedges, b.nedges);
	assert_memory_equal(a.edges, b.edges, 2 * a.nedges * sizeof *a.edges);
	assert_memory_equal(a.non, b.non, 2 * a.nnon * sizeof *a.non);
	assert_true(memcmp(a.edges, c.edges, 2 * a.nedges * sizeof *a.edges) != 0 ||
		    memcmp(a.non, c.non, 2 * a.nnon * sizeof *a.non) != 0);
	holdout_release(&a);
	holdout_release(&b);
	holdout_release(&c);
	graph_free(g);
}

static void test_split_refuses_what_it_cannot_do(void **state)
{
	(void)state;
	const uint32_t one[] = { 0, 1 };
	struct graph *g = graph_from_pairs(3, one, 1, NULL);
	struct holdout h;
	assert_int_equal(holdout_split(&h, g, 0.1, 1), -1); /* one edge: none to spare */
	graph_free(g);
	struct rng r;
	rng_init(&r, 2);
	g = test_random_graph(&r, 20, 0.3);
	assert_int_equal(holdout_split(&h, g, 0.6, 1), -1);
	assert_int_equal(holdout_split(&h, g, 0.0, 1), -1);
	graph_free(g);
}

/* The small model of the hand examples below: 4 nodes, one community,
 * F = (1, 1, 0.5, 0); held out the edge 0-1 and the non-edges 0-2, 2-3.
 * Everything points into static arrays: nothing to release. */
static void hand_model(struct holdout *h, struct fcsr *F)
{
	static uint32_t he[] = { 0, 1 }, hn[] = { 0, 2, 2, 3 };
	static uint64_t off[] = { 0, 1, 2, 3, 3 };
	static struct fentry e[] = { { 0, 1.0 }, { 0, 1.0 }, { 0, 0.5 } };
	static double colsum[] = { 2.5 };
	memset(h, 0, sizeof *h);
	h->edges = he;
	h->nedges = 1;
	h->non = hn;
	h->nnon = 2;
	*F = (struct fcsr){ 4, 1, off, e, colsum, NULL };
}

static void test_score_matches_definition_on_a_small_model(void **state)
{
	(void)state;
	/* by hand: 4 nodes, one community; F = (1, 1, 0.5, 0) in it.
	 * held-out edge 0-1: x = 1; held-out non-edges 0-2 (x = 0.5) and
	 * 2-3 (x = 0). epsilon 0.1, qeps = -ln 0.9.
	 * loglik = log(1 - e^{-(1 + qeps)}) - (0.5 + qeps) - (0 + qeps)
	 * AUC: the edge (1) beats both non-edges (0.5, 0): 1 */
	struct holdout h;
	struct fcsr F;
	hand_model(&h, &F);
	double l, auc, qeps = -log(0.9);
	assert_int_equal(holdout_score(&h, &F, 0.1, MODEL_BIGCLAM, &l, &auc), 0);
	double want = log(1.0 - exp(-(1.0 + qeps))) - (0.5 + qeps) - qeps;
	assert_true(fabs(l - want) < 1e-12);
	assert_true(auc == 1.0);
}

/* A graph read from text (arcs, two-mode links or weighted edges). */
static struct graph *load_text(const char *text, const struct graph_load_opts *o)
{
	return test_load_text("g.tsv", text, o);
}

/* Random lines "a<TAB>b[<TAB>w]" over n names, each pair with probability p. */
static char *random_lines(struct rng *r, uint32_t n, double p, int weights)
{
	size_t cap = (size_t)n * n * 24 + 1, len = 0;
	char *t = util_malloc(cap, 1);
	assert_non_null(t);
	for (uint32_t a = 0; a < n; a++)
		for (uint32_t b = 0; b < n; b++)
			if (a != b && rng_uniform(r) < p)
				len += (size_t)snprintf(t + len, cap - len, weights ? "%u\t%u\t%u\n"
										 : "%u\t%u\n",
							a, b, 1 + (unsigned)rng_below(r, 5));
	t[len] = 0;
	return t;
}

/* What every split of a two-sided graph keeps: its sides in the training
 * graph, non-edges of one sending and one receiving row (never a node's
 * own pair), and, directed, every own pair in the held graph. */
static void check_sided_split(const struct graph *g, const struct holdout *h)
{
	assert_int_equal(h->train->nsend, g->nsend);
	assert_int_equal(h->train->paired, g->paired);
	assert_int_equal(h->nnon, h->nedges);
	for (uint64_t i = 0; i < h->nnon; i++) {
		uint32_t u = h->non[2 * i], v = h->non[2 * i + 1];
		assert_true(u < g->nsend && v >= g->nsend && !graph_has_edge(g, u, v));
		assert_false(g->paired && v == g->nsend + u);
	}
	uint64_t own = g->paired ? g->nsend : 0;
	assert_int_equal(h->held->m, h->nedges + h->nnon + own);
	for (uint64_t i = 0; i < own; i++)
		assert_true(graph_has_edge(h->held, (uint32_t)i, g->nsend + (uint32_t)i));
	for (uint32_t u = 0; u < g->n; u++) /* no training edge is held out */
		for (uint64_t i = h->train->off[u]; i < h->train->off[u + 1]; i++)
			assert_false(graph_has_edge(h->held, u, h->train->adj[i]));
}

static void test_split_of_a_two_sided_graph_stays_on_its_sides(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 11);
	for (int two_mode = 0; two_mode < 2; two_mode++) {
		char *text = random_lines(&r, 30, 0.15, 0);
		struct graph_load_opts o = { .directed = !two_mode, .two_mode = two_mode };
		struct graph *g = load_text(text, &o);
		free(text);
		assert_true(g->nsend > 0);
		for (uint64_t seed = 1; seed <= 5; seed++) {
			struct holdout h;
			assert_int_equal(holdout_split(&h, g, 0.2, seed), 0);
			check_sided_split(g, &h);
			holdout_release(&h);
		}
		graph_free(g);
	}
}

static void test_split_of_a_weighted_graph_keeps_the_weights(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 12);
	char *text = random_lines(&r, 40, 0.1, 1);
	struct graph_load_opts o = { .weighted = 1 };
	struct graph *g = load_text(text, &o);
	free(text);
	assert_non_null(g->wt);
	struct holdout h;
	assert_int_equal(holdout_split(&h, g, 0.25, 3), 0);
	assert_non_null(h.wedges);
	assert_non_null(h.train->wt);
	for (uint64_t i = 0; i < h.nedges; i++) { /* each held-out edge's own weight */
		uint32_t u = h.edges[2 * i], v = h.edges[2 * i + 1];
		uint64_t at = g->off[u] + util_lower_bound_u32(g->adj + g->off[u], graph_degree(g, u), v);
		assert_true(h.wedges[i] == g->wt[at]);
	}
	for (uint32_t u = 0; u < h.train->n; u++) /* and each training edge's */
		for (uint64_t i = h.train->off[u]; i < h.train->off[u + 1]; i++) {
			uint32_t v = h.train->adj[i];
			uint64_t at = g->off[u] +
				      util_lower_bound_u32(g->adj + g->off[u], graph_degree(g, u), v);
			assert_true(h.train->wt[i] == g->wt[at]);
		}
	holdout_release(&h);
	graph_free(g);
}

static void test_poisson_score_matches_definition_on_a_small_model(void **state)
{
	(void)state;
	/* the model of the test above, the held-out edge 0-1 of weight 3:
	 * Poisson with mean x + qeps = 1 + qeps, log P(3) = 3 log(1 + qeps)
	 * - log 3! - (1 + qeps); the non-edges (weight 0): -(0.5 + qeps) and
	 * -(0 + qeps). log 3! = log 6 = lgamma(4). AUC as before: 1. */
	struct holdout h;
	struct fcsr F;
	hand_model(&h, &F);
	double w[] = { 3.0 };
	h.wedges = w;
	double l, auc, qeps = -log(0.9);
	assert_int_equal(holdout_score(&h, &F, 0.1, MODEL_POISSON, &l, &auc), 0);
	double want = 3.0 * log(1.0 + qeps) - log(6.0) - (1.0 + qeps) - (0.5 + qeps) - qeps;
	assert_true(fabs(l - want) < 1e-12);
	assert_true(auc == 1.0);
	/* the two-sided kinds score as BigCLAM (weights are not theirs) */
	h.wedges = NULL;
	assert_int_equal(holdout_score(&h, &F, 0.1, MODEL_DIRECTED, &l, &auc), 0);
	want = log(1.0 - exp(-(1.0 + qeps))) - (0.5 + qeps) - qeps;
	assert_true(fabs(l - want) < 1e-12);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_auc_counts_ties_as_half),
		cmocka_unit_test(test_auc_by_sorting_equals_pair_by_pair_count),
		cmocka_unit_test(test_split_holds_out_the_share_asked_and_as_many_non_edges),
		cmocka_unit_test(test_split_depends_on_the_seed_only),
		cmocka_unit_test(test_split_refuses_what_it_cannot_do),
		cmocka_unit_test(test_score_matches_definition_on_a_small_model),
		cmocka_unit_test(test_split_of_a_two_sided_graph_stays_on_its_sides),
		cmocka_unit_test(test_split_of_a_weighted_graph_keeps_the_weights),
		cmocka_unit_test(test_poisson_score_matches_definition_on_a_small_model),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
