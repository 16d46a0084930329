/*
 * test_model_directed: the directed model (sending rows F, receiving rows
 * H, P(u -> v) = 1 - exp(-(F_u . H_v + qeps)); model_directed.h) on the
 * two-sided graph of graph_directed.c, two-mode graphs, and the checkpoint.
 *
 * References: a 4-node directed graph worked by hand (below); central
 * finite differences of the row objective for the gradient; the pair by
 * pair definition (model_directed_loglik_pairs(), O(n^2)); the sweep
 * engine's rule that a summed log-likelihood equals a recompute
 * (sweep.c) and identical bits for one and two threads (DEVELOPERS.md,
 * Determinism). The weighted form (arc weights Poisson with mean
 * F_u . H_v + qeps, model_poisson.h) by a second hand example, the same
 * finite differences and a pair-by-pair Poisson sum.
 */
#include "helpers.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/checkpoint.h"
#include "coterie/fit.h"
#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/model_directed.h"
#include "coterie/model_poisson.h"
#include "coterie/objective.h"
#include "coterie/result.h"
#include "coterie/result_weight.h"
#include "coterie/rng.h"
#include "coterie/sweep.h"
#include "coterie/util.h"

static struct graph *load_text_w(const char *text, int two_mode, int weighted)
{
	struct graph_load_opts o = { .directed = !two_mode, .two_mode = two_mode,
				     .weighted = weighted };
	return test_load_text("d.tsv", text, &o);
}

static struct graph *load_text(const char *text, int two_mode)
{
	return load_text_w(text, two_mode, 0);
}

/* A model of g's rows, two-sided, with the self pairs held out (as fit.c
 * does); *sp and *view to free. */
static void sided_model(struct model *m, const struct graph *g, uint32_t k, double eps,
			struct graph **sp, struct graph **view)
{
	assert_int_equal(model_init(m, g->n, k, eps), 0);
	assert_int_equal(model_directed_prepare(g, m, sp, view), 0);
	m->excl = *sp;
}

static void test_arcs_make_a_two_sided_graph(void **state)
{
	(void)state;
	/* a -> b twice, a self-arc, and the reverse b -> a */
	struct graph *g = load_text("a\tb\na\tb\na\ta\nb\ta\nb\tc\n", 0);
	assert_int_equal(g->n, 6); /* 3 nodes, two copies each */
	assert_int_equal(g->nsend, 3);
	assert_true(g->paired);
	assert_int_equal(g->m, 3); /* a->b, b->a, b->c */
	assert_int_equal(g->report.self_loops, 1);
	assert_int_equal(g->report.duplicates, 1);
	size_t len;
	const char *s = graph_side_name(g, 4, &len); /* b's receiving copy */
	assert_int_equal(len, 1);
	assert_memory_equal(s, "b", 1);
	assert_true(graph_side_of(g, 4));
	assert_true(graph_has_edge(g, 0, 4)); /* a -> b */
	assert_true(graph_has_edge(g, 1, 3)); /* b -> a */
	assert_false(graph_has_edge(g, 2, 4)); /* no c -> b */
	graph_free(g);
}

static void test_two_mode_names_repeat_across_kinds(void **state)
{
	(void)state;
	struct graph *g = load_text("x\ty\nx\tx\nw\ty\n", 1);
	assert_int_equal(g->nsend, 2); /* x, w */
	assert_int_equal(g->n, 4);     /* and y, x of the second kind */
	assert_false(g->paired);
	assert_int_equal(g->m, 3);     /* x -- x is a link between two nodes */
	assert_int_equal(g->report.self_loops, 0);
	graph_free(g);
}

/*
 * The hand example. Arcs a->b, b->c, c->a, d->a (ids 0 1 2 3 by first
 * appearance); k = 1, qeps = 0.1 (epsilon = 1 - e^-0.1), strengths
 *     F = (1, 0.5, 0, 0) (sending), H = (0, 1, 2, 0) (receiving).
 * Ordered pairs u != v, x = F_u H_v + 0.1:
 *     arcs: ab 1.1, bc 1.1, ca 0.1, da 0.1;
 *     non-arcs: ac 2.1, ad 0.1, ba 0.1, bd 0.1, cb 0.1, cd 0.1, db 0.1, dc 0.1 (sum 2.8).
 * ln(1 - e^-1.1) = ln(1 - 0.33287108) = -0.40477197;
 * ln(1 - e^-0.1) = ln(0.09516258) = -2.35216846;
 *     l = 2 (-0.40477197) + 2 (-2.35216846) - 2.8 = -8.31388087.
 * Sending row a: out(a) = {b}, S_H = 3, the others S_H - H_b - H_a = 2:
 *     g = H_b / expm1(1.1) - 2 = 1 / 2.00416602 - 2 = -1.50103934.
 * Receiving row c: in(c) = {b}, S_F = 1.5, S_F - F_b - F_c = 1:
 *     g = F_b / expm1(1.1) - 1 = 0.5 / 2.00416602 - 1 = -0.75051967.
 */
static void test_loglik_and_gradient_match_the_hand_example(void **state)
{
	(void)state;
	struct graph *g = load_text("a\tb\nb\tc\nc\ta\nd\ta\n", 0);
	struct model m;
	struct graph *sp, *view;
	sided_model(&m, g, 1, -expm1(-0.1), &sp, &view);
	struct fentry one = { 0, 1.0 }, half = { 0, 0.5 }, two = { 0, 2.0 };
	assert_int_equal(model_set_row(&m, 0, &one, 1), 0);  /* F_a */
	assert_int_equal(model_set_row(&m, 1, &half, 1), 0); /* F_b */
	assert_int_equal(model_set_row(&m, 5, &one, 1), 0);  /* H_b */
	assert_int_equal(model_set_row(&m, 6, &two, 1), 0);  /* H_c */
	assert_true(fabs(model_loglik(&m, g) - -8.31388087) < 1e-7);
	assert_true(fabs(model_directed_loglik_pairs(&m, g) - -8.31388087) < 1e-7);
	const struct objective_ops *ops = model_objective_of(MODEL_DIRECTED);
	void *w = ops->work_new(&m);
	double grad[1];
	ops->row_gradient(&m, g, 0, w, grad);
	assert_true(fabs(grad[0] - -1.50103934) < 1e-7);
	ops->row_gradient(&m, g, 6, w, grad);
	assert_true(fabs(grad[0] - -0.75051967) < 1e-7);
	ops->work_free(w);
	model_release(&m);
	graph_free(sp);
	graph_free(view);
	graph_free(g);
}

/* A random directed graph of n nodes: arcs inside blocks of 20 with
 * probability pin, else pout (the text of an edge list); with weighted a
 * third column, whole weights 1 to 5 (heavier inside a block). */
static char *random_arcs_w(uint32_t n, double pin, double pout, uint64_t seed, int weighted)
{
	struct rng r;
	rng_init(&r, seed);
	size_t cap = 1 << 16, len = 0;
	char *t = malloc(cap);
	assert_non_null(t);
	for (uint32_t u = 0; u < n; u++)
		for (uint32_t v = 0; v < n; v++) {
			if (u == v || rng_uniform(&r) >= (u / 20 == v / 20 ? pin : pout))
				continue;
			if (len + 32 > cap)
				assert_non_null(t = realloc(t, cap *= 2));
			if (weighted)
				len += (size_t)snprintf(t + len, cap - len, "n%u\tn%u\t%u\n", u, v,
							1 + (u / 20 == v / 20 ? 2 : 0) +
								(uint32_t)rng_below(&r, 3));
			else
				len += (size_t)snprintf(t + len, cap - len, "n%u\tn%u\n", u, v);
		}
	t[len] = '\0';
	return t;
}

static char *random_arcs(uint32_t n, double pin, double pout, uint64_t seed)
{
	return random_arcs_w(n, pin, pout, seed, 0);
}

static void test_gradient_matches_finite_differences(void **state)
{
	(void)state;
	char *text = random_arcs(60, 0.3, 0.02, 3);
	struct graph *g = load_text(text, 0);
	free(text);
	struct model m;
	struct graph *sp, *view;
	sided_model(&m, g, 4, 0.01, &sp, &view);
	test_random_rows(&m, 4);
	/* the summed pieces are the pair-by-pair definition */
	double l = model_loglik(&m, g), lp = model_directed_loglik_pairs(&m, g);
	assert_true(fabs(l - lp) <= 1e-10 * fabs(lp));
	/* the row objective holds every term with u: its change is l's */
	int checked = test_check_row_gradient(&m, g, model_objective_of(MODEL_DIRECTED),
					      model_directed_loglik_pairs);
	assert_true(checked >= 60);
	model_release(&m);
	graph_free(sp);
	graph_free(view);
	graph_free(g);
}

typedef double (*pairs_fn)(const struct model *, const struct graph *);

/* Sweeps of a model of the kind on g from its seeds, checked against
 * the pair-by-pair recompute; the strengths in *out. */
static double sweeps(const struct graph *g, enum model_kind kind, pairs_fn pairs,
		     unsigned threads, struct fcsr *out)
{
	struct model m;
	struct graph *sp, *view;
	struct seed_report rep;
	sided_model(&m, g, 20, 0.002, &sp, &view);
	assert_int_equal(model_directed_seed(g, view, &m, SEED_CLUSTERS, 5, 0, &rep), 0);
	double ll = test_sweeps_sum_exactly(&m, g, model_objective_of(kind), threads, pairs, 1e-10,
					    out);
	graph_free(sp);
	graph_free(view);
	return ll;
}

/* One thread and two give the same log-likelihood and strengths, bit for
 * bit; frees g. */
static void assert_same_bits_for_any_thread_count(struct graph *g, enum model_kind kind,
						  pairs_fn pairs)
{
	struct fcsr a, b;
	double la = sweeps(g, kind, pairs, 1, &a), lb = sweeps(g, kind, pairs, 2, &b);
	assert_memory_equal(&la, &lb, sizeof la);
	assert_int_equal(a.off[a.n], b.off[b.n]);
	assert_memory_equal(a.e, b.e, a.off[a.n] * sizeof *a.e);
	fcsr_release(&a);
	fcsr_release(&b);
	graph_free(g);
}

static void test_sweeps_sum_to_a_recompute_with_the_same_bits_for_any_thread_count(void **state)
{
	(void)state;
	char *text = random_arcs(400, 0.25, 0.003, 9);
	struct graph *g = load_text(text, 0);
	free(text);
	assert_same_bits_for_any_thread_count(g, MODEL_DIRECTED, model_directed_loglik_pairs);
}

/* A checkpoint of a fit of the kind (one for each side arrangement) keeps
 * the model, the sides and, when weighted, the weights. */
static void assert_checkpoint_keeps_the_sides(int weighted)
{
	for (int two_mode = 0; two_mode < 2; two_mode++) {
		char *text = random_arcs_w(60, 0.3, 0.02, 5, weighted);
		struct graph *g = load_text_w(text, two_mode, weighted);
		free(text);
		struct fit_params p;
		fit_params_default(&p);
		p.k = 3;
		p.model = two_mode ? (weighted ? MODEL_TWO_MODE_POISSON : MODEL_TWO_MODE)
				   : (weighted ? MODEL_DIRECTED_POISSON : MODEL_DIRECTED);
		p.starts = 1;
		p.epsilon = 0.01;
		struct checkpoint ck;
		test_checkpoint_round_trip(g, &p, &ck);
		assert_int_equal(ck.params.model, p.model);
		assert_int_equal(ck.graph->nsend, g->nsend);
		assert_int_equal(ck.graph->paired, !two_mode);
		if (!weighted)
			assert_true(graph_fingerprint(ck.graph) == graph_fingerprint(g));
		if (weighted) {
			assert_non_null(ck.graph->wt);
			assert_memory_equal(ck.graph->wt, g->wt, g->off[g->n] * sizeof *g->wt);
		}
		checkpoint_release(&ck);
		graph_free(g);
	}
}

/* The checkpoint keeps the model and the sides; the graph read back is
 * two-sided again. */
static void test_checkpoint_keeps_the_sides(void **state)
{
	(void)state;
	assert_checkpoint_keeps_the_sides(0);
}

/* ---- arc weights: the Poisson model on the two-sided graph ---- */

/* The Poisson log-likelihood pair by pair (O(n^2)): every (sending,
 * receiving) row pair, not a directed node's own pair, not held out by
 * other means; w the arc's weight or 0. */
static double poisson_pairs(const struct model *m, const struct graph *g)
{
	double l = 0.0;
	for (uint32_t u = 0; u < g->nsend; u++)
		for (uint32_t v = g->nsend; v < g->n; v++) {
			if (g->paired && v == g->nsend + u)
				continue;
			double x = model_dot(m->rows[u].e, m->rows[u].nnz, m->rows[v].e,
					     m->rows[v].nnz) + m->qeps;
			double w = 0.0;
			for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++)
				if (g->adj[i] == v)
					w = graph_weight(g, i);
			l += (w > 0.0 ? w * log(x) - lgamma(w + 1.0) : 0.0) - x;
		}
	return l;
}

/*
 * The hand example of the weighted directed model. Arcs a->b weight 2,
 * b->c 1, c->a 3, d->a 1; k = 1, qeps = 0.1; F = (1, 0.5, 0, 0),
 * H = (0, 1, 2, 0) as above, so x + q: ab 1.1, bc 1.1, ca 0.1, da 0.1, and
 * the 8 non-arcs sum to 2.8 (every ordered pair u != v: 2.4 + 2.8 = 5.2).
 *     l = 2 ln 1.1 - ln 2! + ln 1.1 + 3 ln 0.1 - ln 3! + ln 0.1 - 5.2
 *       = 3 (0.09531018) + 4 (-2.30258509) - 0.69314718 - 1.79175947 - 5.2
 *       = -16.60931648.
 * Sending row a: out(a) = {b} (w 2), S_H = 3, H_a = 0 (its own pair):
 *     g = 2 H_b / 1.1 - (3 - 0) = 1.81818182 - 3 = -1.18181818.
 * Receiving row c: in(c) = {b} (w 1), S_F = 1.5, F_c = 0:
 *     g = F_b / 1.1 - 1.5 = 0.45454545 - 1.5 = -1.04545455.
 * Receiving row a: in(a) = {c, d}, both with F = 0; its own pair (F_a = 1)
 * is out: g = 0 - (1.5 - 1) = -0.5.
 */
static void test_weighted_loglik_and_gradient_match_the_hand_example(void **state)
{
	(void)state;
	struct graph *g = load_text_w("a\tb\t2\nb\tc\t1\nc\ta\t3\nd\ta\t1\n", 0, 1);
	assert_non_null(g->wt);
	struct model m;
	struct graph *sp, *view;
	sided_model(&m, g, 1, -expm1(-0.1), &sp, &view);
	struct fentry one = { 0, 1.0 }, half = { 0, 0.5 }, two = { 0, 2.0 };
	assert_int_equal(model_set_row(&m, 0, &one, 1), 0);  /* F_a */
	assert_int_equal(model_set_row(&m, 1, &half, 1), 0); /* F_b */
	assert_int_equal(model_set_row(&m, 5, &one, 1), 0);  /* H_b */
	assert_int_equal(model_set_row(&m, 6, &two, 1), 0);  /* H_c */
	assert_true(fabs(model_poisson_loglik(&m, g) - -16.60931648) < 1e-7);
	assert_true(fabs(poisson_pairs(&m, g) - -16.60931648) < 1e-7);
	const struct objective_ops *ops = model_objective_of(MODEL_DIRECTED_POISSON);
	assert_int_equal(ops->coupling, OBJECTIVE_COUPLING_SIDES);
	void *w = ops->work_new(&m);
	double grad[1];
	ops->row_gradient(&m, g, 0, w, grad);
	assert_true(fabs(grad[0] - -1.18181818) < 1e-7);
	ops->row_gradient(&m, g, 6, w, grad);
	assert_true(fabs(grad[0] - -1.04545455) < 1e-7);
	ops->row_gradient(&m, g, 4, w, grad);
	assert_true(fabs(grad[0] - -0.5) < 1e-12);
	ops->work_free(w);
	model_release(&m);
	graph_free(sp);
	graph_free(view);
	graph_free(g);
}

/* Central finite differences of the row objective (one-sided at 0) match
 * the row gradient, and the row objective's change is l's, for directed
 * and two-mode weighted graphs. */
static void test_weighted_gradient_matches_finite_differences(void **state)
{
	(void)state;
	for (int two_mode = 0; two_mode < 2; two_mode++) {
		char *text = random_arcs_w(60, 0.3, 0.02, 3, 1);
		struct graph *g = load_text_w(text, two_mode, 1);
		free(text);
		struct model m;
		struct graph *sp, *view;
		sided_model(&m, g, 4, 0.01, &sp, &view);
		test_random_rows(&m, 4);
		double l = model_poisson_loglik(&m, g), lp = poisson_pairs(&m, g);
		assert_true(fabs(l - lp) <= 1e-10 * fabs(lp));
		int checked = test_check_row_gradient(
			&m, g,
			model_objective_of(two_mode ? MODEL_TWO_MODE_POISSON : MODEL_DIRECTED_POISSON),
			poisson_pairs);
		assert_true(checked >= 60);
		model_release(&m);
		graph_free(sp);
		graph_free(view);
		graph_free(g);
	}
}

static void test_weighted_sweeps_sum_to_a_recompute_with_the_same_bits(void **state)
{
	(void)state;
	char *text = random_arcs_w(400, 0.25, 0.003, 9, 1);
	struct graph *g = load_text_w(text, 0, 1);
	free(text);
	assert_same_bits_for_any_thread_count(g, MODEL_DIRECTED_POISSON, poisson_pairs);
}

/* Arc weights go with their arcs into the two-sided graph: records of one
 * arc add up, the two directions of a pair keep their own, a self-arc's
 * weight goes with it. */
static void test_arc_weights_follow_their_arcs(void **state)
{
	(void)state;
	struct graph *g = load_text_w("a\tb\t2\nb\ta\t5\na\tb\t1.5\na\ta\t7\n", 0, 1);
	assert_int_equal(g->m, 2);
	assert_true(graph_total_weight(g) == 8.5);
	for (uint64_t i = g->off[0]; i < g->off[1]; i++) /* a's sending copy: a -> b */
		assert_true(g->wt[i] == 3.5);
	for (uint64_t i = g->off[1]; i < g->off[2]; i++) /* b -> a */
		assert_true(g->wt[i] == 5.0);
	graph_free(g);
}

/* The checkpoint of a weighted two-sided fit keeps the model, the sides
 * and the weights. */
static void test_checkpoint_keeps_the_sides_and_the_weights(void **state)
{
	(void)state;
	assert_checkpoint_keeps_the_sides(1);
}

/*
 * communities.tsv's weight figures of a two-sided weighted fit
 * (result_weight_sided_figures()), by hand. Directed: arcs a->b 2, b->c 1,
 * c->a 3, d->a 1 (ids 0-3, receiving rows 4-7), k = 2, qeps = 0.1,
 *     F_a = (1, 0), F_b = (0.5, 1), F_c = (0, 1), F_d = 0;
 *     H_a = (0, 1), H_b = (1, 0), H_c = (2, 0.5), H_d = 0.
 * Community 0: senders {a, b}, receivers {b, c} (b on both sides, its own
 * pair out). Pairs ab 1, ac 2, bc 0.5*2 + 1*0.5 = 1.5: 4.5, plus 0.1 x 3
 * pairs = 4.8 (by the formula: R_S = (1.5, 1), R_H = (3, 0.5), R_S.R_H = 5,
 * less F_b.H_b = 0.5: 4.5). Observed a->b 2 + b->c 1 = 3.
 * Community 1: senders {b, c, d}, receivers {a, c} (c both). Pairs ba 1,
 * bc 1.5, ca 1, da 0, dc 0: 3.5, plus 0.1 x (3 x 2 - 1) = 4.0 (R_S = (0.5, 2),
 * R_H = (2, 1.5): 4, less F_c.H_c = 0.5). Observed b->c 1 + c->a 3 + d->a 1
 * = 5 (a->b is not inside: b is no receiving member).
 * Two-mode: links x-p 2, y-p 1, y-q 4 (first kind x, y = rows 0, 1; second
 * p, q = rows 2, 3), k = 1, F_x = 1, F_y = 2, H_p = 1, H_q = 0.5, one
 * community of all four: pairs xp 1, xq 0.5, yp 2, yq 1 = 4.5, plus 0.1 x 4
 * = 4.9 (no own pairs); observed 2 + 1 + 4 = 7.
 */
static void test_sided_weight_figures_match_the_hand_example(void **state)
{
	(void)state;
	struct graph *g = load_text_w("a\tb\t2\nb\tc\t1\nc\ta\t3\nd\ta\t1\n", 0, 1);
	struct model m;
	struct graph *sp, *view;
	sided_model(&m, g, 2, -expm1(-0.1), &sp, &view);
	struct fentry fa[] = { { 0, 1.0 } }, fb[] = { { 0, 0.5 }, { 1, 1.0 } }, fc[] = { { 1, 1.0 } },
		      ha[] = { { 1, 1.0 } }, hb[] = { { 0, 1.0 } }, hc[] = { { 0, 2.0 }, { 1, 0.5 } };
	assert_int_equal(model_set_row(&m, 0, fa, 1), 0);
	assert_int_equal(model_set_row(&m, 1, fb, 2), 0);
	assert_int_equal(model_set_row(&m, 2, fc, 1), 0);
	assert_int_equal(model_set_row(&m, 4, ha, 1), 0);
	assert_int_equal(model_set_row(&m, 5, hb, 1), 0);
	assert_int_equal(model_set_row(&m, 6, hc, 2), 0);
	struct fcsr F;
	assert_int_equal(model_export(&m, &F), 0);
	uint64_t off[] = { 0, 4, 9 };
	uint32_t mem[] = { 0, 1, 5, 6, 1, 2, 3, 4, 6 };
	struct cover cv = { .n = 8, .k = 2, .off = off, .mem = mem };
	double obs[2], expw[2];
	assert_int_equal(result_weight_sided_figures(g, &F, &cv, 0.1, obs, expw), 0);
	assert_true(obs[0] == 3.0 && obs[1] == 5.0);
	assert_true(fabs(expw[0] - 4.8) < 1e-12);
	assert_true(fabs(expw[1] - 4.0) < 1e-12);
	/* a one-mode graph is refused */
	struct graph *one = graph_undirected_view(g);
	assert_int_equal(result_weight_sided_figures(one, &F, &cv, 0.1, obs, expw), -1);
	graph_free(one);
	fcsr_release(&F);
	model_release(&m);
	graph_free(sp);
	graph_free(view);
	graph_free(g);

	g = load_text_w("x\tp\t2\ny\tp\t1\ny\tq\t4\n", 1, 1);
	assert_int_equal(g->nsend, 2);
	sided_model(&m, g, 1, -expm1(-0.1), &sp, &view);
	struct fentry one1 = { 0, 1.0 }, two = { 0, 2.0 }, half = { 0, 0.5 };
	assert_int_equal(model_set_row(&m, 0, &one1, 1), 0); /* F_x */
	assert_int_equal(model_set_row(&m, 1, &two, 1), 0);  /* F_y */
	assert_int_equal(model_set_row(&m, 2, &one1, 1), 0); /* H_p */
	assert_int_equal(model_set_row(&m, 3, &half, 1), 0); /* H_q */
	assert_int_equal(model_export(&m, &F), 0);
	uint64_t off2[] = { 0, 4 };
	uint32_t mem2[] = { 0, 1, 2, 3 };
	struct cover cv2 = { .n = 4, .k = 1, .off = off2, .mem = mem2 };
	assert_int_equal(result_weight_sided_figures(g, &F, &cv2, 0.1, obs, expw), 0);
	assert_true(obs[0] == 7.0);
	assert_true(fabs(expw[0] - 4.9) < 1e-12);
	fcsr_release(&F);
	model_release(&m);
	graph_free(sp);
	graph_free(view);
	graph_free(g);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_arcs_make_a_two_sided_graph),
		cmocka_unit_test(test_two_mode_names_repeat_across_kinds),
		cmocka_unit_test(test_loglik_and_gradient_match_the_hand_example),
		cmocka_unit_test(test_gradient_matches_finite_differences),
		cmocka_unit_test(test_sweeps_sum_to_a_recompute_with_the_same_bits_for_any_thread_count),
		cmocka_unit_test(test_checkpoint_keeps_the_sides),
		cmocka_unit_test(test_weighted_loglik_and_gradient_match_the_hand_example),
		cmocka_unit_test(test_weighted_gradient_matches_finite_differences),
		cmocka_unit_test(test_weighted_sweeps_sum_to_a_recompute_with_the_same_bits),
		cmocka_unit_test(test_arc_weights_follow_their_arcs),
		cmocka_unit_test(test_checkpoint_keeps_the_sides_and_the_weights),
		cmocka_unit_test(test_sided_weight_figures_match_the_hand_example),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
