/*
 * test_model_poisson: the Poisson model of Ball, Karrer & Newman (Phys.
 * Rev. E 84, 036103, 2011) behind objective.h, and the edge weights it
 * reads.
 *
 * References: a 4-node weighted graph worked by hand (below); central
 * finite differences of the row objective for the gradient; the sweep
 * engine's own rule that a summed log-likelihood equals a recompute
 * (sweep.c), and identical bits for one and two threads (DEVELOPERS.md,
 * Determinism).
 */
#include "helpers.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/checkpoint.h"
#include "coterie/cover.h"
#include "coterie/fcsr.h"
#include "coterie/fit.h"
#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/model_poisson.h"
#include "coterie/objective.h"
#include "coterie/result.h"
#include "coterie/result_weight.h"
#include "coterie/rng.h"
#include "coterie/seed.h"
#include "coterie/sweep.h"
#include "coterie/util.h"

/*
 * The hand example. Nodes a b c d (ids 0 1 2 3 by first appearance),
 * edges a-b weight 2, b-c 1, c-d 3, a-c 1; k = 2, qeps = 0.1 (epsilon =
 * 1 - e^-0.1), strengths
 *     F_a = (1, 0), F_b = (1, 0.5), F_c = (0, 1), F_d = (0, 2).
 * Dots: x_ab = 1, x_ac = 0, x_ad = 0, x_bc = 0.5, x_bd = 1, x_cd = 2.
 * Edge terms w log(x + q):
 *     2 ln 1.1 + ln 0.6 + 3 ln 2.1 + ln 0.1
 *   = 0.19062036 - 0.51082562 + 2.22581203 - 2.30258509 = -0.39697832
 * lgamma(w + 1) = ln w!: ln 2 + ln 1 + ln 6 + ln 1 = 0.69314718 + 1.79175947
 *   = 2.48490665
 * all pairs: sum x = 1 + 0 + 0 + 0.5 + 1 + 2 = 4.5, and q C(4,2) = 0.6.
 *     l(F) = -0.39697832 - 2.48490665 - 4.5 - 0.6 = -7.98188497
 * Row b: N(b) = {a (w 2), c (w 1)}, S = (2, 3.5), S - F_b = (1, 3):
 *     g_b = 2 (1, 0) / 1.1 + 1 (0, 1) / 0.6 - (1, 3) = (9/11, -4/3)
 *     f_b = 2 ln 1.1 + ln 0.6 - F_b . (1, 3) = -0.32020526 - 2.5
 *         = -2.82020526
 */
static struct graph *hand_graph(void)
{
	/* the a-b weight comes as 1.5 + 0.5 (a duplicate, reversed) */
	struct graph_load_opts o = { .weighted = 1 };
	return test_load_text("w.tsv", "a\tb\t1.5\nb\tc\t1\nc\td\t3\na\tc\t1\nb\ta\t0.5\n", &o);
}

static void hand_model(struct model *m)
{
	assert_int_equal(model_init(m, 4, 2, -expm1(-0.1)), 0);
	struct fentry a[] = { { 0, 1.0 } }, b[] = { { 0, 1.0 }, { 1, 0.5 } }, c[] = { { 1, 1.0 } },
		      d[] = { { 1, 2.0 } };
	assert_int_equal(model_set_row(m, 0, a, 1), 0);
	assert_int_equal(model_set_row(m, 1, b, 2), 0);
	assert_int_equal(model_set_row(m, 2, c, 1), 0);
	assert_int_equal(model_set_row(m, 3, d, 1), 0);
}

static void test_weights_of_an_edge_list_add_up_in_both_rows(void **state)
{
	(void)state;
	struct graph *g = hand_graph();
	assert_int_equal(g->n, 4);
	assert_int_equal(g->m, 4);
	assert_non_null(g->wt);
	/* row of a (id 0): b (1) weight 1.5 + 0.5, c (2) weight 1 */
	assert_int_equal(g->adj[g->off[0]], 1);
	assert_true(g->wt[g->off[0]] == 2.0);
	assert_true(graph_total_weight(g) == 7.0); /* 2 + 1 + 3 + 1 */
	graph_free(g);
}

static void test_loglik_matches_the_hand_example(void **state)
{
	(void)state;
	struct graph *g = hand_graph();
	struct model m;
	hand_model(&m);
	/* worked above: -7.98188497 */
	assert_true(fabs(model_poisson_loglik(&m, g) - -7.98188497) < 1e-7);
	const struct objective_ops *ops = model_poisson_objective();
	void *w = ops->work_new(&m);
	assert_non_null(w);
	double grad[2];
	ops->row_gradient(&m, g, 1, w, grad);
	assert_true(fabs(grad[0] - 9.0 / 11.0) < 1e-12); /* (9/11, -4/3), above */
	assert_true(fabs(grad[1] - -4.0 / 3.0) < 1e-12);
	const struct frow *rb = &m.rows[1];
	assert_true(fabs(ops->row_objective(&m, g, 1, rb->e, rb->nnz, w) - -2.82020526) < 1e-7);
	ops->work_free(w);
	model_release(&m);
	graph_free(g);
}

/* A random weighted graph: G(n, p) with weights 1 .. 4 and a few halves. */
static struct graph *random_weighted(uint64_t seed)
{
	struct rng r;
	rng_init(&r, seed);
	struct graph *g = test_random_graph(&r, 60, 0.1);
	uint32_t *pairs = malloc(2 * g->m * sizeof *pairs);
	double *w = malloc(g->m * sizeof *w);
	assert_true(pairs && w);
	uint64_t e = 0;
	for (uint32_t u = 0; u < g->n; u++)
		for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++)
			if (g->adj[i] > u) {
				pairs[2 * e] = u;
				pairs[2 * e + 1] = g->adj[i];
				w[e++] = 1.0 + (double)rng_below(&r, 4) + 0.5 * (double)rng_below(&r, 2);
			}
	assert_int_equal(graph_set_weights(g, pairs, w, e, "test"), 0);
	free(pairs);
	free(w);
	assert_graph_sane(g);
	return g;
}

static void test_gradient_matches_finite_differences(void **state)
{
	(void)state;
	struct graph *g = random_weighted(3);
	struct model m;
	assert_int_equal(model_init(&m, g->n, 4, 0.01), 0);
	test_random_rows(&m, 4);
	int checked = test_check_row_gradient(&m, g, model_poisson_objective(), NULL);
	assert_true(checked >= 30);
	model_release(&m);
	graph_free(g);
}

/* Sweeps on the planted ring with weights 3 inside a community, 1 across:
 * the log-likelihood rises, the summed value is a recompute, and the
 * rows keep model.h's rules. */
static struct graph *weighted_ring(void)
{
	struct cover truth;
	struct graph *g = test_planted_ring_of(&truth, 2400, 30, 120, 80, 0.25, 0.001, 21);
	uint32_t *pairs = malloc(2 * g->m * sizeof *pairs);
	double *w = malloc(g->m * sizeof *w);
	assert_true(pairs && w);
	uint64_t e = 0;
	for (uint32_t u = 0; u < g->n; u++)
		for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++) {
			uint32_t v = g->adj[i];
			if (v < u)
				continue;
			/* community c holds nodes [80 c, 80 c + 120) on the ring */
			int same = 0;
			for (uint32_t c = 0; c < 30 && !same; c++) {
				uint32_t du = (u + 2400 - 80 * c) % 2400, dv = (v + 2400 - 80 * c) % 2400;
				same = du < 120 && dv < 120;
			}
			pairs[2 * e] = u;
			pairs[2 * e + 1] = v;
			w[e++] = same ? 3.0 : 1.0;
		}
	assert_int_equal(graph_set_weights(g, pairs, w, e, "ring"), 0);
	free(pairs);
	free(w);
	cover_release(&truth);
	return g;
}

static double sweeps(const struct graph *g, unsigned threads, struct fcsr *out)
{
	struct model m;
	struct seed_report rep;
	assert_int_equal(model_init(&m, g->n, 30, 0.001), 0);
	assert_int_equal(seed_model(g, &m, 5, 0, &rep), 0);
	return test_sweeps_sum_exactly(&m, g, model_poisson_objective(), threads,
				       model_poisson_loglik, 1e-11, out);
}

static void test_sweeps_sum_to_a_recompute_with_the_same_bits_for_any_thread_count(void **state)
{
	(void)state;
	struct graph *g = weighted_ring();
	struct fcsr a, b;
	double la = sweeps(g, 1, &a), lb = sweeps(g, 2, &b);
	assert_memory_equal(&la, &lb, sizeof la);
	assert_int_equal(a.off[a.n], b.off[b.n]);
	assert_memory_equal(a.e, b.e, a.off[a.n] * sizeof *a.e);
	fcsr_release(&a);
	fcsr_release(&b);
	graph_free(g);
}

/* Messages caught through util.h's sink. */
static char captured[4096];

static void capture_sink(int level, const char *msg)
{
	(void)level;
	size_t used = strlen(captured);
	snprintf(captured + used, sizeof captured - used, "%s\n", msg);
}

static void capture_on(void)
{
	captured[0] = '\0';
	util_set_sink(capture_sink);
}

static const char *captured_text(void)
{
	return captured;
}

static void capture_off(void)
{
	util_set_sink(NULL);
}

static void expect_refused(const char *text, const char *why)
{
	const char *dir = test_tmpdir();
	const char *path = test_write_file(dir, "bad.tsv", text);
	struct graph_load_opts o = { .weighted = 1 };
	capture_on();
	assert_null(graph_load_with(path, &o));
	assert_non_null(strstr(captured_text(), ":2: "));
	assert_non_null(strstr(captured_text(), why));
	capture_off();
	test_rmtree(dir);
}

static void test_bad_weights_are_refused_with_the_line(void **state)
{
	(void)state;
	expect_refused("a b 1\nb c 0\n", "(zero)");
	expect_refused("a b 1\nb c -2\n", "(negative)");
	expect_refused("a b 1\nb c nan\n", "(not a number)");
	expect_refused("a b 1\nb c inf\n", "(not a number)");
	expect_refused("a b 1\nb c 1e400\n", "(too large)");
	expect_refused("a b 1\nb c x1\n", "(not a number)");
	expect_refused("a b 1\nb c\n", "expected a weight in the third column");
}

static void test_gml_weights_come_from_the_edge_attribute(void **state)
{
	(void)state;
	const char *dir = test_tmpdir();
	const char *path = test_write_file(
		dir, "w.gml",
		"graph [\n node [ id 1 label \"a\" ]\n node [ id 2 label \"b\" ]\n"
		" node [ id 3 label \"c\" ]\n edge [ source 1 target 2 strength 2.5 ]\n"
		" edge [ source 2 target 3 strength 4 ]\n]\n");
	struct graph_load_opts o = { .weighted = 1, .weight_attr = "strength" };
	struct graph *g = graph_load_with(path, &o);
	assert_non_null(g);
	assert_graph_sane(g);
	assert_true(graph_total_weight(g) == 6.5);
	graph_free(g);
	o.weight_attr = NULL; /* "weight": absent here */
	capture_on();
	assert_null(graph_load_with(path, &o));
	assert_non_null(strstr(captured_text(), "'weight'"));
	capture_off();
	test_rmtree(dir);
}

/* The checkpoint of a Poisson fit keeps the model and the weights; the
 * fit resumed from it as one start ends where one uninterrupted fit of
 * the same sweeps does. */
static void test_checkpoint_keeps_the_model_and_the_weights(void **state)
{
	(void)state;
	struct graph *g = hand_graph();
	struct fit_params p;
	fit_params_default(&p);
	p.k = 2;
	p.model = MODEL_POISSON;
	p.starts = 1;
	struct checkpoint ck;
	test_checkpoint_round_trip(g, &p, &ck);
	assert_int_equal(ck.params.model, MODEL_POISSON);
	assert_non_null(ck.graph->wt);
	assert_graph_sane(ck.graph);
	assert_true(graph_total_weight(ck.graph) == 7.0);
	checkpoint_release(&ck);
	graph_free(g);
}

/* communities.tsv's weight figures (result_weight.h) on the hand example:
 * community 0 = {a, b, c}, community 1 = {c, d} (c in both).
 *   0: pairs ab, ac, bc: x = 1, 0, 0.5, so expected 1.5 + 3 (0.1) = 1.8;
 *      by the formula R = (2, 1.5), |R|^2 = 6.25, sum |F_u|^2 = 1 + 1.25 + 1
 *      = 3.25, (6.25 - 3.25) / 2 = 1.5; observed weights 2 + 1 + 1 = 4.
 *   1: pair cd: x = 2, expected 2.1; observed 3. */
static void test_weight_figures_match_the_hand_example(void **state)
{
	(void)state;
	struct graph *g = hand_graph();
	struct model m;
	hand_model(&m);
	struct fcsr F;
	assert_int_equal(model_export(&m, &F), 0);
	uint64_t off[] = { 0, 3, 5 };
	uint32_t mem[] = { 0, 1, 2, 2, 3 };
	struct cover cv = { .n = 4, .k = 2, .off = off, .mem = mem };
	double obs[2], exp_w[2];
	assert_int_equal(result_weight_figures(g, &F, &cv, 0.1, obs, exp_w), 0);
	assert_true(obs[0] == 4.0 && obs[1] == 3.0);
	assert_true(fabs(exp_w[0] - 1.8) < 1e-12);
	assert_true(fabs(exp_w[1] - 2.1) < 1e-12);
	fcsr_release(&F);
	model_release(&m);
	graph_free(g);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_weights_of_an_edge_list_add_up_in_both_rows),
		cmocka_unit_test(test_loglik_matches_the_hand_example),
		cmocka_unit_test(test_weight_figures_match_the_hand_example),
		cmocka_unit_test(test_gradient_matches_finite_differences),
		cmocka_unit_test(test_sweeps_sum_to_a_recompute_with_the_same_bits_for_any_thread_count),
		cmocka_unit_test(test_bad_weights_are_refused_with_the_line),
		cmocka_unit_test(test_gml_weights_come_from_the_edge_attribute),
		cmocka_unit_test(test_checkpoint_keeps_the_model_and_the_weights),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
