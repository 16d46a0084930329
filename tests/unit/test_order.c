/*
 * test_order: the breadth-first renumbering, the renumbered graph, and
 * strengths carried across it.
 *
 * References: breadth-first search as in Cormen, Leiserson, Rivest &
 * Stein, Introduction to Algorithms (3rd ed.), section 22.2, worked by
 * hand on the small graphs below; and the definition of a renumbered graph
 * (u-v an edge exactly when inner[u]-inner[v] is one).
 */
#include "helpers.h"

#include <stdlib.h>
#include <string.h>

#include "coterie/fit.h"
#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/order.h"

/* Edges 0-4, 4-1, 1-3, 2-5 (two components: 0 4 1 3 and 2 5). */
static struct graph *two_paths(void)
{
	static const uint32_t pairs[] = { 0, 4, 4, 1, 1, 3, 2, 5 };
	struct graph *g = graph_from_pairs(6, pairs, 4, NULL);
	assert_non_null(g);
	return g;
}

static void test_bfs_numbers_a_path_in_walking_order(void **state)
{
	(void)state;
	struct graph *g = two_paths();
	uint32_t inner[6];
	assert_int_equal(order_bfs(g, inner), 0);
	/* By hand: start at 0 (new 0), its neighbour 4 (1), then 4's new
	 * neighbour 1 (2), then 3 (3); the next component starts at its
	 * smallest id 2 (4), then 5 (5). */
	const uint32_t want[6] = { 0, 2, 4, 3, 1, 5 };
	assert_memory_equal(inner, want, sizeof want);
	graph_free(g);
}

static void test_renumbered_graph_has_the_same_edges(void **state)
{
	(void)state;
	struct graph *g = two_paths();
	uint32_t inner[6];
	assert_int_equal(order_bfs(g, inner), 0);
	struct graph h;
	assert_int_equal(order_graph(g, inner, &h), 0);
	assert_int_equal(h.n, g->n);
	assert_int_equal(h.m, g->m);
	for (uint32_t u = 0; u < g->n; u++) {
		assert_int_equal(graph_degree(&h, inner[u]), graph_degree(g, u));
		for (uint32_t v = 0; v < g->n; v++)
			assert_int_equal(graph_has_edge(&h, inner[u], inner[v]), graph_has_edge(g, u, v));
		/* rows stay strictly increasing (graph.h) */
		for (uint64_t i = h.off[inner[u]] + 1; i < h.off[inner[u] + 1]; i++)
			assert_true(h.adj[i - 1] < h.adj[i]);
	}
	order_graph_release(&h);
	graph_free(g);
}

static void test_strengths_come_back_in_the_graph_ids(void **state)
{
	(void)state;
	uint32_t inner[3] = { 2, 0, 1 };
	struct model m;
	assert_int_equal(model_init(&m, 3, 2, 0.1), 0);
	struct fcsr in;
	memset(&in, 0, sizeof in);
	in.n = 3;
	in.k = 2;
	uint64_t off[4] = { 0, 1, 1, 3 };
	struct fentry e[3] = { { 1, 0.5 }, { 0, 2.0 }, { 1, 3.0 } };
	double colsum[2] = { 2.0, 3.5 };
	in.off = off;
	in.e = e;
	in.colsum = colsum;
	assert_int_equal(model_import_order(&m, &in, inner), 0);
	/* node 0's row went to model row 2, node 2's to model row 1 */
	assert_int_equal(m.rows[2].nnz, 1);
	assert_int_equal(m.rows[1].nnz, 2);
	assert_int_equal(m.rows[0].nnz, 0);
	struct fcsr out;
	assert_int_equal(model_export_order(&m, inner, &out), 0);
	assert_fcsr_sane(&out);
	assert_memory_equal(out.off, off, sizeof off);
	for (int i = 0; i < 3; i++) {
		assert_int_equal(out.e[i].c, e[i].c);
		assert_true(out.e[i].v == e[i].v);
	}
	fcsr_release(&out);
	model_release(&m);
}

/* Two disjoint 5-cliques {0,2,4,6,8} and {1,3,5,7,9} (interleaved ids, so
 * the renumbering moves every node). Hand argument: with k = 2 the most
 * likely AGM puts each clique in one community (p = 1 inside, nothing
 * across), so a renumbered fit must hand back exactly the two cliques in
 * the graph's own ids. */
static void test_renumbered_fit_answers_in_graph_ids(void **state)
{
	(void)state;
	uint32_t pairs[40];
	uint64_t np = 0;
	for (uint32_t side = 0; side < 2; side++)
		for (uint32_t a = 0; a < 5; a++)
			for (uint32_t b = a + 1; b < 5; b++) {
				pairs[2 * np] = 2 * a + side;
				pairs[2 * np + 1] = 2 * b + side;
				np++;
			}
	struct graph *g = graph_from_pairs(10, pairs, np, NULL);
	assert_non_null(g);
	struct fit_params p;
	fit_params_default(&p);
	p.k = 2;
	p.renumber = 1;
	struct snapshot *s = test_fit_to_end(g, &p, NULL, NULL);
	assert_fcsr_sane(&s->F);
	const struct cover *c = &s->agm.cover;
	assert_int_equal(c->k, 2);
	for (uint32_t i = 0; i < 2; i++) {
		assert_int_equal(cover_size(c, i), 5);
		uint32_t side = c->mem[c->off[i]] % 2;
		for (uint64_t j = c->off[i]; j < c->off[i + 1]; j++)
			assert_int_equal(c->mem[j] % 2, side);
	}
	snapshot_release(s);
	graph_free(g);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_bfs_numbers_a_path_in_walking_order),
		cmocka_unit_test(test_renumbered_graph_has_the_same_edges),
		cmocka_unit_test(test_strengths_come_back_in_the_graph_ids),
		cmocka_unit_test(test_renumbered_fit_answers_in_graph_ids),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
