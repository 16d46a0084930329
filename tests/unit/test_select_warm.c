/*
 * test_select_warm: the warm starts of -k auto's refinement
 * (src/select_warm.c), on matrices small enough to work by hand: fewer
 * columns drop the weakest (smallest column sum) and keep the others in
 * order; more columns keep the fit's and add the columns a seeding of
 * that many would add (with no seeding given, or on a two-sided graph,
 * they are refused: the caller seeds).
 */
#include "helpers.h"

#include <stdlib.h>
#include <string.h>

#include "coterie/fcsr.h"
#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/seed.h"
#include "../../src/select-internal.h"

/* A matrix of n rows from (row, column, value) triples given row by row,
 * columns increasing within a row. */
static void make_fcsr(struct fcsr *F, uint32_t n, uint32_t k, const double (*t)[3], uint32_t nt)
{
	F->n = n;
	F->k = k;
	F->off = calloc(n + 1, sizeof *F->off);
	F->e = malloc(nt * sizeof *F->e);
	F->colsum = calloc(k, sizeof *F->colsum);
	F->thr = NULL;
	F->sidesum = NULL;
	assert_non_null(F->off);
	assert_non_null(F->e);
	assert_non_null(F->colsum);
	for (uint32_t i = 0; i < nt; i++) {
		uint32_t u = (uint32_t)t[i][0], c = (uint32_t)t[i][1];
		F->e[i] = (struct fentry){ c, t[i][2] };
		F->off[u + 1] = i + 1;
		F->colsum[c] += t[i][2];
	}
	for (uint32_t u = 1; u <= n; u++)
		if (F->off[u] < F->off[u - 1])
			F->off[u] = F->off[u - 1];
}

/* The strength of u in column c of F (0 when absent). */
static double at(const struct fcsr *F, uint32_t u, uint32_t c)
{
	for (uint64_t i = F->off[u]; i < F->off[u + 1]; i++)
		if (F->e[i].c == c)
			return F->e[i].v;
	return 0.0;
}

/* Two triangles {0, 1, 2} and {3, 4, 5}, no link between them. */
static struct graph *two_triangles(void)
{
	static const uint32_t pairs[] = { 0, 1, 0, 2, 1, 2, 3, 4, 3, 5, 4, 5 };
	return graph_from_pairs(6, pairs, 6, NULL);
}

static void test_fewer_columns_drop_the_weakest_and_keep_the_order(void **state)
{
	(void)state;
	struct graph *g = two_triangles();
	/* column sums: c0 = 3, c1 = 0.5 (the weakest), c2 = 2 */
	static const double t[][3] = { { 0, 0, 1 }, { 0, 1, 0.5 }, { 1, 0, 1 }, { 2, 0, 1 },
				       { 3, 2, 1 }, { 4, 2, 1 } };
	struct fcsr F, W;
	make_fcsr(&F, 6, 3, t, 6);
	assert_int_equal(select_warm_start(&F, g, 2, NULL, &W), 0);
	assert_fcsr_sane(&W);
	assert_int_equal(W.k, 2);
	/* c0 stays 0, c2 becomes 1; node 0 loses its 0.5 in the dropped c1 */
	assert_true(at(&W, 0, 0) == 1.0 && at(&W, 0, 1) == 0.0);
	assert_true(at(&W, 3, 1) == 1.0 && at(&W, 4, 1) == 1.0);
	assert_true(W.colsum[0] == 3.0 && W.colsum[1] == 2.0);
	assert_int_equal(W.off[6], 5);
	fcsr_release(&W);
	fcsr_release(&F);
	graph_free(g);
}

static void test_out_of_reach_and_same_k(void **state)
{
	(void)state;
	struct graph *g = two_triangles();
	static const double t[][3] = { { 0, 0, 1 }, { 1, 0, 1 } };
	struct fcsr F, W;
	make_fcsr(&F, 6, 1, t, 2);
	/* more columns without a seeding: no warm start (the caller seeds) */
	assert_int_equal(select_warm_start(&F, g, 2, NULL, &W), -1);
	assert_null(W.e);
	assert_int_equal(select_warm_start(&F, g, 1, NULL, &W), 0);
	assert_int_equal(W.k, 1);
	assert_true(at(&W, 1, 0) == 1.0);
	fcsr_release(&W);
	fcsr_release(&F);
	graph_free(g);
}

/* Up: the fit's column as it is (its climbed strengths, not the seed's),
 * then the seeding's next column; compared with seed_start() itself. */
static void test_more_columns_add_the_seedings_next_ones(void **state)
{
	(void)state;
	struct graph *g = two_triangles();
	/* a climbed fit of 1 column: the first triangle at uneven strengths */
	static const double t[][3] = { { 0, 0, 0.9 }, { 1, 0, 1.1 }, { 2, 0, 1.3 } };
	struct fcsr F, W;
	make_fcsr(&F, 6, 1, t, 3);
	const double eps = 0.01;
	for (int kind = SEED_CLUSTERS; kind < SEED_KINDS; kind++) {
		struct select_seeding sd = { (enum seed_kind)kind, 7, eps };
		struct model m;
		assert_int_equal(model_init(&m, 6, 3, eps), 0);
		assert_int_equal(seed_start(g, &m, sd.kind, sd.seed, 0, NULL), 0);
		assert_int_equal(select_warm_start(&F, g, 3, &sd, &W), 0);
		assert_fcsr_sane(&W);
		assert_int_equal(W.k, 3);
		uint64_t added = 0;
		for (uint32_t u = 0; u < 6; u++) {
			/* column 0: the fit's own strengths */
			assert_true(at(&W, u, 0) == at(&F, u, 0));
			for (uint32_t c = 1; c < 3; c++) { /* 1, 2: the seeding's */
				double v = 0.0;
				for (uint32_t i = 0; i < m.rows[u].nnz; i++)
					if (m.rows[u].e[i].c == c)
						v = m.rows[u].e[i].v;
				assert_true(at(&W, u, c) == v);
				added += v > 0.0;
			}
		}
		assert_true(added >= 3); /* a triangle's worth at least */
		assert_true(W.colsum[0] == F.colsum[0]);
		fcsr_release(&W);
		model_release(&m);
	}
	fcsr_release(&F);
	graph_free(g);
}

/* Up on a two-sided graph (seeded on a view, not row by row): refused. */
static void test_more_columns_on_two_sides_are_refused(void **state)
{
	(void)state;
	static const uint32_t pairs[] = { 0, 2, 1, 3, 0, 3 };
	struct graph *g = graph_from_pairs(4, pairs, 3, NULL);
	assert_non_null(g);
	g->nsend = 2; /* senders 0, 1; receivers 2, 3 */
	static const double t[][3] = { { 0, 0, 1 }, { 2, 0, 1 } };
	struct fcsr F, W;
	make_fcsr(&F, 4, 1, t, 2);
	struct select_seeding sd = { SEED_CLUSTERS, 1, 0.01 };
	assert_int_equal(select_warm_start(&F, g, 2, &sd, &W), -1);
	assert_null(W.e);
	g->nsend = 0;
	fcsr_release(&F);
	graph_free(g);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_fewer_columns_drop_the_weakest_and_keep_the_order),
		cmocka_unit_test(test_out_of_reach_and_same_k),
		cmocka_unit_test(test_more_columns_add_the_seedings_next_ones),
		cmocka_unit_test(test_more_columns_on_two_sides_are_refused),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
