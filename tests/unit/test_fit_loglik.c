/*
 * test_fit_loglik: the log-likelihood the fit traces after each sweep is
 * summed from the rows' objective gains during the sweep (fit.c,
 * block_gain()), not recomputed; it must equal the log-likelihood of the
 * model after that sweep computed from scratch.
 *
 * Reference: the log-likelihood l(F) of the nonnegative relaxation of the
 * affiliation model, Yang & Leskovec, "Overlapping community detection at
 * scale: a nonnegative matrix factorization approach", WSDM 2013 (the
 * equation test_model.c checks the slow way), with the background
 * epsilon of the AGM as in include/coterie/model.h:
 *     l(F) = sum_{uv in E} log(1 - exp(-(F_u . F_v + qeps)))
 *            - sum_{uv not in E, u < v} (F_u . F_v + qeps)
 * with held-out pairs (holdout.h) in neither sum. brute_loglik() below
 * evaluates it pair by pair over all n (n - 1) / 2 pairs, sharing no code
 * with model.c or fit.c but the dot product of two sorted sparse rows.
 *
 * The model after sweep s is had by running the same fit (same seed, so
 * the same trajectory) with max_sweeps = s: the longer fit's trace point
 * s is the summed value, the shorter fit's model the one it describes.
 */
#include "helpers.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/fit.h"
#include "coterie/graph.h"
#include "coterie/holdout.h"
#include "coterie/model.h"
#include "coterie/rng.h"

#define SWEEPS 8u

static double background; /* --epsilon of the fits; 0 for the default */

/* l(F) from its definition, over every pair. */
static double brute_loglik(const struct graph *g, const struct graph *excl, const struct fcsr *F,
			   double epsilon)
{
	double qeps = -log1p(-epsilon);
	uint8_t *kind = calloc(g->n, 1); /* 1 edge, 2 held out, for the current u */
	assert_non_null(kind);
	double ll = 0.0;
	for (uint32_t u = 0; u < g->n; u++) {
		for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++)
			kind[g->adj[i]] = 1;
		if (excl)
			for (uint64_t i = excl->off[u]; i < excl->off[u + 1]; i++)
				kind[excl->adj[i]] = 2;
		for (uint32_t v = u + 1; v < g->n; v++) {
			if (kind[v] == 2)
				continue;
			double x = model_dot(F->e + F->off[u], (uint32_t)(F->off[u + 1] - F->off[u]),
					     F->e + F->off[v], (uint32_t)(F->off[v + 1] - F->off[v]));
			if (kind[v] == 1)
				ll += log(-expm1(-(x + qeps)));
			else
				ll -= x + qeps;
		}
		for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++)
			kind[g->adj[i]] = 0;
		if (excl)
			for (uint64_t i = excl->off[u]; i < excl->off[u + 1]; i++)
				kind[excl->adj[i]] = 0;
	}
	free(kind);
	return ll;
}

static struct snapshot *fit_for(const struct graph *g, const struct graph *excl, uint32_t k,
				unsigned threads, int renumber, unsigned sweeps)
{
	struct fit_params p;
	fit_params_default(&p);
	p.k = k;
	p.threads = threads;
	p.seed = 5;
	p.starts = 1;
	p.no_reseed = 1;
	p.past_plateau = 1; /* exactly `sweeps` sweeps */
	p.max_sweeps = sweeps;
	p.renumber = renumber;
	p.epsilon = background;
	struct fit *f = fit_new(g, &p, NULL);
	assert_non_null(f);
	if (excl)
		fit_exclude(f, excl);
	assert_int_equal(fit_start(f), 0);
	assert_int_equal(fit_wait(f), FIT_FINISHED);
	struct snapshot *s = fit_snapshot(f);
	fit_free(f);
	assert_int_equal(s->sweep, sweeps);
	assert_int_equal(s->ntrace, sweeps + 1);
	return s;
}

static void assert_close(double got, double want)
{
	/* our tolerance: rounding of ~1e6 terms summed in another order */
	if (!(fabs(got - want) <= 1e-9 * fabs(want))) {
		fprintf(stderr, "summed %.17g, from scratch %.17g (relative %.3g)\n", got, want,
			fabs(got - want) / fabs(want));
		fail();
	}
}

/* Every trace point of a fit of SWEEPS sweeps against l(F) of the model
 * it describes; -j 1 and -j 2 must give the same bits. */
static void check_summed_trace(const struct graph *g, const struct graph *excl, uint32_t k,
			       int renumber)
{
	struct snapshot *a = fit_for(g, excl, k, 2, renumber, SWEEPS);
	struct snapshot *a1 = fit_for(g, excl, k, 1, renumber, SWEEPS);
	for (uint32_t t = 0; t <= SWEEPS; t++)
		assert_true(a->trace[t].loglik == a1->trace[t].loglik);
	double worst = 0.0, worst_model = 0.0;
	unsigned moved = 0;
	for (unsigned s = 1; s <= SWEEPS; s++) {
		struct snapshot *b = s == SWEEPS ? a : fit_for(g, excl, k, 2, renumber, s);
		double exact = brute_loglik(g, excl, &b->F, b->epsilon);
		/* the summed point of the longer fit (for s < SWEEPS) ... */
		assert_close(a->trace[s].loglik, exact);
		/* ... and the last point, recomputed when the start ended */
		assert_close(b->trace[s].loglik, exact);
		double rel = fabs(a->trace[s].loglik - exact) / fabs(exact);
		if (rel > worst)
			worst = rel;
		/* against model.c's own recompute (the fit's last point) */
		rel = fabs(a->trace[s].loglik - b->trace[s].loglik) / fabs(exact);
		if (rel > worst_model)
			worst_model = rel;
		/* the sweeps move the model: the check is not of a fixed point
		 * (a quiet sweep may find every row asleep, sweep.h: most
		 * sweeps must move it) */
		moved += a->trace[s].loglik != a->trace[s - 1].loglik;
		if (b != a)
			snapshot_release(b);
	}
	assert_true(2 * moved >= SWEEPS);
	printf("n %u, k %u%s%s, %u sweeps (%u moved the model): summed log-likelihood within "
	       "%.2g (relative) of the pair-by-pair one, %.2g of model_loglik()\n",
	       g->n, k, excl ? ", held-out pairs" : "", renumber ? ", renumbered" : "", SWEEPS,
	       moved, worst, worst_model);
	snapshot_release(a);
	snapshot_release(a1);
}

static void test_summed_loglik_matches_recomputed_on_football(void **state)
{
	(void)state;
	/* 115 nodes: blocks of one node, so only the rows' own gains count */
	struct graph *g = graph_load(test_data("football/edges.tsv"), GRAPH_FORMAT_AUTO);
	assert_non_null(g);
	check_summed_trace(g, NULL, 12, 0);
	graph_free(g);
}

static void test_summed_loglik_matches_recomputed_with_large_blocks(void **state)
{
	(void)state;
	/* 1,600 nodes: blocks of 25, so rows updated together interact */
	struct graph *g = test_planted_ring_of(NULL, 1600, 32, 80, 50, 0.25, 0.001, 11);
	check_summed_trace(g, NULL, 32, 0);
	check_summed_trace(g, NULL, 32, 1);
	graph_free(g);
}

static void test_summed_loglik_matches_recomputed_on_a_random_graph(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 3);
	struct graph *g = test_random_graph(&r, 1000, 0.01);
	check_summed_trace(g, NULL, 10, 0);
	graph_free(g);
}

static void test_summed_loglik_leaves_held_out_pairs_out(void **state)
{
	(void)state;
	/* held out: a fifth of the edges and as many non-edges, so many
	 * held-out pairs fall in one block (the pair term they are not in) */
	struct graph *g = test_planted_ring_of(NULL, 1600, 32, 80, 50, 0.25, 0.001, 12);
	struct holdout h;
	assert_int_equal(holdout_split(&h, g, 0.2, 9), 0);
	check_summed_trace(h.train, h.held, 32, 0);
	check_summed_trace(h.train, h.held, 32, 1);
	holdout_release(&h);
	graph_free(g);
}

static void test_loglik_with_a_tiny_background_matches_recomputed(void **state)
{
	(void)state;
	/* below 1e-12 the row update floors x in its f0 (model_gain_exact()),
	 * so the fit must not trust the gains there */
	struct graph *g = graph_load(test_data("football/edges.tsv"), GRAPH_FORMAT_AUTO);
	assert_non_null(g);
	background = 1e-15;
	check_summed_trace(g, NULL, 12, 0);
	background = 0.0;
	graph_free(g);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_summed_loglik_matches_recomputed_on_football),
		cmocka_unit_test(test_summed_loglik_matches_recomputed_with_large_blocks),
		cmocka_unit_test(test_summed_loglik_matches_recomputed_on_a_random_graph),
		cmocka_unit_test(test_summed_loglik_leaves_held_out_pairs_out),
		cmocka_unit_test(test_loglik_with_a_tiny_background_matches_recomputed),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
