/*
 * test_memory: the leak share, the fill and the estimate's shape.
 *
 * References: the definition of the leak share (edges that close no
 * triangle over all edges), worked by hand on the small graphs below; the
 * estimate is checked for the properties the refusal relies on (it grows
 * with k and with threads), not for its fitted constants, which
 * tests/bench/memory_table.sh measures.
 */
#include "helpers.h"

#include <math.h>
#include <stdlib.h>

#include "coterie/fit.h"
#include "coterie/graph.h"
#include "coterie/memory.h"
#include "coterie/rng.h"

/* Two triangles 0-1-2 and 3-4-5 joined by the edge 2-3: 7 edges, 6 of
 * them in a triangle, so the share is 1/7. */
static void test_leak_share_of_two_triangles_and_a_bridge(void **state)
{
	(void)state;
	static const uint32_t pairs[] = { 0, 1, 1, 2, 0, 2, 3, 4, 4, 5, 3, 5, 2, 3 };
	struct graph *g = graph_from_pairs(6, pairs, 7, NULL);
	assert_non_null(g);
	assert_true(memory_leak_share(g) > 1.0 / 7 - 1e-12);
	assert_true(memory_leak_share(g) < 1.0 / 7 + 1e-12);
	graph_free(g);
}

/* A star 0-1, 0-2, 0-3, 0-4 closes no triangle: share 1; a 4-clique
 * (6 edges, every one in two triangles): share 0. */
static void test_leak_share_of_a_star_and_a_clique(void **state)
{
	(void)state;
	static const uint32_t star[] = { 0, 1, 0, 2, 0, 3, 0, 4 };
	static const uint32_t clique[] = { 0, 1, 0, 2, 0, 3, 1, 2, 1, 3, 2, 3 };
	struct graph *g = graph_from_pairs(5, star, 4, NULL);
	assert_non_null(g);
	assert_true(memory_leak_share(g) == 1.0);
	graph_free(g);
	g = graph_from_pairs(4, clique, 6, NULL);
	assert_non_null(g);
	assert_true(memory_leak_share(g) == 0.0);
	graph_free(g);
}

/* On a random graph (most edges in no triangle), the fill and the
 * estimate grow with k, the estimate with threads, and the fill never
 * passes k. */
static void test_estimate_grows_with_k_and_threads(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 7);
	struct graph *g = test_random_graph(&r, 2000, 0.005);
	assert_true(memory_leak_share(g) > 0.9);
	struct fit_params p;
	fit_params_default(&p);
	p.threads = 1;
	uint64_t last = 0;
	double last_fill = 0.0;
	for (uint32_t k = 2; k <= 1024; k *= 2) {
		p.k = k;
		uint64_t e = memory_fit_estimate(g, &p);
		double fill = memory_fill(g, k);
		assert_true(e > last);
		assert_true(fill >= last_fill);
		assert_true(fill <= (double)k);
		last = e;
		last_fill = fill;
	}
	p.k = 100;
	uint64_t one = memory_fit_estimate(g, &p);
	p.threads = 4;
	assert_true(memory_fit_estimate(g, &p) > one);
	graph_free(g);
}

/* On a dense graph (400 nodes, edge probability 0.5: about 100 edges a
 * node, m / n, against 23.0 / 2.3 = 10 where the two phases meet) the end of
 * the fit is the larger peak: at one thread the estimate is
 * 1.1 x (1265838 + 80.4 n + 2.3 fill m), the formula of src/memory.c
 * worked here with the fill memory_fill() predicts; on a sparse one
 * (0.005, 5 edges a node) it is the sweeps' 1.1 x (1265838 + 80.4 n +
 * 23.0 fill n). */
static void test_estimate_takes_the_larger_phase(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 11);
	struct fit_params p;
	fit_params_default(&p);
	p.threads = 1;
	p.k = 50;
	struct graph *g = test_random_graph(&r, 400, 0.5);
	double fill = memory_fill(g, p.k);
	double end = 1.1 * (1265838.0 + 80.4 * 400 + 2.3 * fill * (double)g->m);
	assert_true(fabs((double)memory_fit_estimate(g, &p) - end) <= 1.0);
	graph_free(g);
	g = test_random_graph(&r, 2000, 0.005);
	fill = memory_fill(g, p.k);
	double sweeps = 1.1 * (1265838.0 + 80.4 * 2000 + 23.0 * fill * 2000);
	assert_true(fabs((double)memory_fit_estimate(g, &p) - sweeps) <= 1.0);
	graph_free(g);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_leak_share_of_two_triangles_and_a_bridge),
		cmocka_unit_test(test_leak_share_of_a_star_and_a_clique),
		cmocka_unit_test(test_estimate_grows_with_k_and_threads),
		cmocka_unit_test(test_estimate_takes_the_larger_phase),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
