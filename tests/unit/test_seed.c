/*
 * test_seed: the starting communities: label propagation's clusters
 * (seed_clusters.c) and the ego-nets that fill the columns they leave.
 *
 * References: label propagation as defined by U. N. Raghavan, R. Albert
 * and S. Kumara, Phys. Rev. E 76, 036106 (2007), worked by hand on
 * cliques below; the starting strength is the AGM's link probability
 * 1 - exp(-(F^2 + qeps)) solved for F (Yang & Leskovec, WSDM 2013, eq. 1
 * with the background as a community everyone shares), the arithmetic in
 * the comments.
 */
#include "helpers.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/rng.h"
#include "coterie/seed.h"

/* Cliques of the given sizes, laid end to end (clique i on the next
 * sizes[i] ids); bridge: an edge from the last node of each clique to the
 * first of the next. */
static struct graph *cliques(const uint32_t *sizes, uint32_t nc, int bridge)
{
	uint32_t n = 0;
	uint64_t m = 0;
	for (uint32_t i = 0; i < nc; i++) {
		n += sizes[i];
		m += (uint64_t)sizes[i] * (sizes[i] - 1) / 2 + (bridge && i + 1 < nc);
	}
	uint32_t *pairs = malloc(2 * m * sizeof *pairs);
	assert_non_null(pairs);
	uint64_t e = 0;
	uint32_t first = 0;
	for (uint32_t i = 0; i < nc; i++) {
		for (uint32_t a = 0; a < sizes[i]; a++)
			for (uint32_t b = a + 1; b < sizes[i]; b++) {
				pairs[2 * e] = first + a;
				pairs[2 * e + 1] = first + b;
				e++;
			}
		if (bridge && i + 1 < nc) {
			pairs[2 * e] = first + sizes[i] - 1;
			pairs[2 * e + 1] = first + sizes[i];
			e++;
		}
		first += sizes[i];
	}
	struct graph *g = graph_from_pairs(n, pairs, m, NULL);
	free(pairs);
	assert_non_null(g);
	return g;
}

/* Every node of clique i carries one label, and cliques differ. */
static void assert_labels_are_cliques(const uint32_t *label, const uint32_t *sizes, uint32_t nc)
{
	uint32_t first = 0;
	for (uint32_t i = 0; i < nc; i++) {
		for (uint32_t a = 1; a < sizes[i]; a++)
			assert_int_equal(label[first + a], label[first]);
		uint32_t other = 0;
		for (uint32_t j = 0; j < i; j++) {
			assert_int_not_equal(label[first], label[other]);
			other += sizes[j];
		}
		first += sizes[i];
	}
}

static void test_propagation_settles_on_cliques(void **state)
{
	(void)state;
	/* Two 5-cliques joined by one edge, by hand: once two nodes of a
	 * clique share a label, every other member sees that label twice or
	 * more against once for any other, so each clique ends with one
	 * label; the bridge's ends see 4 neighbours of their own clique
	 * against 1 of the other, so no label crosses it. */
	static const uint32_t sizes[] = { 5, 5, 7 };
	struct graph *g = cliques(sizes, 3, 1);
	uint32_t label[17], again[17], passes = 0;
	for (uint64_t seed = 1; seed <= 20; seed++) {
		assert_int_equal(seed_propagate(g, seed, 0, label, &passes), 0);
		assert_labels_are_cliques(label, sizes, 3);
		assert_true(passes >= 1);
		/* the labels depend only on the graph and the seed */
		assert_int_equal(seed_propagate(g, seed, 0, again, NULL), 0);
		assert_memory_equal(label, again, sizeof label);
	}
	graph_free(g);
}

static void test_propagation_keeps_isolated_nodes_alone(void **state)
{
	(void)state;
	/* node 3 has no edge: its label stays its own id */
	static const uint32_t pairs[] = { 0, 1, 1, 2, 0, 2 };
	struct graph *g = graph_from_pairs(4, pairs, 3, NULL);
	assert_non_null(g);
	uint32_t label[4];
	assert_int_equal(seed_propagate(g, 3, 0, label, NULL), 0);
	assert_int_equal(label[3], 3);
	assert_int_equal(label[0], label[1]);
	assert_int_equal(label[1], label[2]);
	assert_int_not_equal(label[0], 3);
	graph_free(g);
}

/* The column of node u in m (its one entry), -1 when its row is empty. */
static int column_of(const struct model *m, uint32_t u)
{
	return m->rows[u].nnz == 0 ? -1 : (int)m->rows[u].e[0].c;
}

/* g seeded from clusters into a fresh model of k columns (background
 * eps, seed 7 unless given), checked sane; the report in *rep. */
static void seeded(const struct graph *g, struct model *m, uint32_t k, double eps, uint64_t seed,
		   struct seed_report *rep)
{
	assert_int_equal(model_init(m, g->n, k, eps), 0);
	assert_int_equal(seed_from_clusters(g, m, seed, 0, rep), 0);
	assert_model_sane(m);
}

static void test_cluster_columns_take_the_clusters_at_their_density(void **state)
{
	(void)state;
	static const uint32_t sizes[] = { 5, 5 };
	struct graph *g = cliques(sizes, 2, 1);
	struct model m;
	struct seed_report rep;
	seeded(g, &m, 2, 0.01, 7, &rep);
	assert_int_equal(rep.used_clusters, 2);
	/* Each clique is a cluster of 10 edges among 10 pairs, p = 1, taken
	 * as CLUSTER_P_MAX = 0.9; qeps = -ln(1 - 0.01) = 0.0100503; so
	 * F = sqrt(-ln(1 - 0.9) - qeps) = sqrt(2.3025851 - 0.0100503)
	 *   = sqrt(2.2925348) = 1.5141119 (by hand). */
	int c0 = column_of(&m, 0), c1 = column_of(&m, 5);
	assert_true(c0 >= 0 && c1 >= 0 && c0 != c1);
	for (uint32_t u = 0; u < 10; u++) {
		assert_int_equal(m.rows[u].nnz, 1);
		assert_int_equal(column_of(&m, u), u < 5 ? c0 : c1);
		assert_true(fabs(m.rows[u].e[0].v - 1.5141119) < 1e-6);
	}
	model_release(&m);
	graph_free(g);
}

static void test_more_clusters_than_k_keep_the_likeliest(void **state)
{
	(void)state;
	/* Cliques of 4, 6 and 5 nodes, no bridges. A clique of s nodes is
	 * e = N = s (s - 1) / 2 edges at p = 1, so its ratio against the
	 * background is G = e ln(1 / eps) + 0: 6 edges, 15 and 10. With
	 * k = 2 the 6-clique comes first (column 0), then the 5-clique; the
	 * 4-clique's nodes start with empty rows. */
	static const uint32_t sizes[] = { 4, 6, 5 };
	struct graph *g = cliques(sizes, 3, 0);
	struct model m;
	struct seed_report rep;
	seeded(g, &m, 2, 0.05, 1, &rep);
	assert_int_equal(rep.clusters, 3);
	assert_int_equal(rep.used_clusters, 2);
	for (uint32_t u = 0; u < 4; u++)
		assert_int_equal(m.rows[u].nnz, 0);
	for (uint32_t u = 4; u < 10; u++)
		assert_int_equal(column_of(&m, u), 0);
	for (uint32_t u = 10; u < 15; u++)
		assert_int_equal(column_of(&m, u), 1);
	model_release(&m);
	graph_free(g);
}

static void test_fewer_clusters_than_k_fill_with_ego_nets(void **state)
{
	(void)state;
	static const uint32_t sizes[] = { 5, 5 };
	struct graph *g = cliques(sizes, 2, 1);
	struct model m;
	struct seed_report rep;
	seeded(g, &m, 4, 0.01, 7, &rep);
	assert_int_equal(rep.used_clusters, 2);
	/* the clusters take columns 0 and 1; the ego-nets the rest, at
	 * strength 1 as seed_model() plants them */
	assert_int_equal(rep.used_minima + rep.cover + rep.random, 2);
	double mass[4] = { 0, 0, 0, 0 };
	for (uint32_t u = 0; u < g->n; u++)
		for (uint32_t i = 0; i < m.rows[u].nnz; i++) {
			mass[m.rows[u].e[i].c] += m.rows[u].e[i].v;
			if (m.rows[u].e[i].c >= 2)
				assert_true(m.rows[u].e[i].v == 1.0);
		}
	for (uint32_t c = 0; c < 4; c++)
		assert_true(mass[c] > 0.0);
	model_release(&m);
	graph_free(g);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_propagation_settles_on_cliques),
		cmocka_unit_test(test_propagation_keeps_isolated_nodes_alone),
		cmocka_unit_test(test_cluster_columns_take_the_clusters_at_their_density),
		cmocka_unit_test(test_more_clusters_than_k_keep_the_likeliest),
		cmocka_unit_test(test_fewer_clusters_than_k_fill_with_ego_nets),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
