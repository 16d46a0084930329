/* Tests for agm: the AGM log-likelihood, the maximum-likelihood p_c and the
 * per-community figures. */
#include "helpers.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/agm.h"
#include "coterie/cover.h"
#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/rng.h"
#include "../../src/fit-internal.h"

/* A cover from k member lists laid end to end (sizes[i] members each),
 * every one of the k communities non-empty. */
static void make_cover(struct cover *c, uint32_t n, uint32_t k, const uint32_t *sizes,
		       const uint32_t *members)
{
	test_make_cover(c, n, k, sizes, members);
	assert_int_equal(c->k, k);
}

static struct graph *make_graph(uint32_t n, const uint32_t *pairs, uint64_t np)
{
	struct graph *g = graph_from_pairs(n, pairs, np, NULL);
	assert_non_null(g);
	assert_graph_sane(g);
	return g;
}

/*
 * The worked example. n = 5, A = {0,1,2,3}, B = {2,3,4},
 * edges 0-1, 0-2, 1-2, 2-3, 3-4, 1-4; epsilon = 0.1, p_A = 0.5, p_B = 0.4.
 * P(u,v) = 1 - (1 - epsilon) prod_{c shared} (1 - p_c) (Yang & Leskovec,
 * ICDM 2012, with epsilon as an all-pairs community):
 *   pair  shared  P                          edge?  factor    log
 *   0-1   A       1 - 0.9*0.5     = 0.55     yes    0.55      -0.5978370008
 *   0-2   A       0.55                       yes    0.55      -0.5978370008
 *   1-2   A       0.55                       yes    0.55      -0.5978370008
 *   2-3   A,B     1 - 0.9*0.5*0.6 = 0.73     yes    0.73      -0.3147107448
 *   3-4   B       1 - 0.9*0.6     = 0.46     yes    0.46      -0.7765287895
 *   1-4   -       0.1                        yes    0.1       -2.3025850930
 *   0-3   A       0.55                       no     0.45      -0.7985076962
 *   1-3   A       0.55                       no     0.45      -0.7985076962
 *   2-4   B       0.46                       no     0.54      -0.6161861394
 *   0-4   -       0.1                        no     0.9       -0.1053605157
 * Sum: 3(-0.5978370008) - 0.3147107448 - 0.7765287895 - 2.3025850930
 *      + 2(-0.7985076962) - 0.6161861394 - 0.1053605157 = -7.5058976771.
 */
static const uint32_t ex_edges[] = { 0, 1, 0, 2, 1, 2, 2, 3, 3, 4, 1, 4 };
static const uint32_t ex_sizes[] = { 4, 3 };
static const uint32_t ex_members[] = { 0, 1, 2, 3, 2, 3, 4 };

static void test_loglik_matches_hand_computed_example(void **state)
{
	(void)state;
	struct graph *g = make_graph(5, ex_edges, 6);
	struct cover c;
	make_cover(&c, 5, 2, ex_sizes, ex_members);
	double p[2] = { 0.5, 0.4 };
	/* Hand-worked table above: the product of the ten factors. */
	double want = 3 * log(0.55) + log(0.73) + log(0.46) + log(0.1) + 2 * log(0.45) +
		      log(0.54) + log(0.9);
	double got = agm_loglik(g, &c, p, 0.1);
	assert_true(fabs(got - want) <= 1e-12);
	assert_true(fabs(got - -7.5058976771) < 1e-9); /* the sum written out above */
	cover_release(&c);
	graph_free(g);
}

/*
 * The code length of the worked example above: the graph given the cover
 * (-loglik = 7.5058976771) plus the cover, each community's members named
 * among n = 5 nodes: ln C(5, 4) = ln 5 = 1.6094379124 for A and
 * ln C(5, 3) = ln 10 = 2.3025850930 for B. Sum: 11.4179206825.
 * (Two-part code of minimum description length, Rissanen 1978.)
 */
static void test_code_length_matches_hand_computed_example(void **state)
{
	(void)state;
	struct graph *g = make_graph(5, ex_edges, 6);
	struct cover c;
	make_cover(&c, 5, 2, ex_sizes, ex_members);
	double p[2] = { 0.5, 0.4 };
	struct agm a;
	assert_int_equal(agm_from_cover_p(&a, g, &c, 0.1, p), 0);
	assert_true(fabs(a.loglik - -7.5058976771) < 1e-9);
	assert_true(fabs(agm_code_length(&a, 5) - 11.4179206825) < 1e-9); /* the sum above */
	/* among 6 nodes (a sixth left out of both): ln C(6, 4) + ln C(6, 3) = ln 15 + ln 20 */
	assert_true(fabs(agm_code_length(&a, 6) - (7.5058976771 + log(15.0) + log(20.0))) < 1e-9);
	agm_release(&a);
	cover_release(&c);
	graph_free(g);
}

/*
 * The background fitted with the cover, worked by hand. n = 8,
 * A = {0,1,2,3} with 4 of its 6 pairs linked (0-1 0-2 1-2 2-3),
 * B = {4,5,6,7} with 3 of 6 (4-5 5-6 6-7), and 2 of the 16 pairs between
 * them linked (0-4 3-7). No pair shares two communities, so the p_c absorb
 * their pairs and the background is the share of linked pairs among the
 * 28 - 6 - 6 = 16 pairs sharing nothing: epsilon = 2/16 = 1/8. Then
 * 1 - (7/8)(1 - p_A) = 4/6 gives p_A = 13/21 and 1 - (7/8)(1 - p_B) = 3/6
 * gives p_B = 3/7, and
 *   L = 2 ln(1/8) + 14 ln(7/8)     (the 16 pairs between)
 *     + 4 ln(2/3) + 2 ln(1/3)      (A's pairs at 4/6)
 *     + 6 ln(1/2)                  (B's pairs at 3/6)
 *     = -4.1588830834 - 1.8694394967 - 1.6218604324 - 2.1972245773
 *       - 4.1588830834 = -14.0062906732;
 * the code length adds ln C(8, 4) twice: 2 ln 70 = 8.4969904841, 22.5032811573.
 */
static void test_background_fitted_matches_hand_computed_example(void **state)
{
	(void)state;
	static const uint32_t edges[] = { 0, 1, 0, 2, 1, 2, 2, 3, 4, 5, 5, 6, 6, 7, 0, 4, 3, 7 };
	static const uint32_t sizes[] = { 4, 4 };
	static const uint32_t members[] = { 0, 1, 2, 3, 4, 5, 6, 7 };
	struct graph *g = make_graph(8, edges, 9);
	struct cover c;
	make_cover(&c, 8, 2, sizes, members);
	double eps = 0.3, ll = 0.0; /* any start */
	assert_int_equal(agm_fit_background(g, &c, &eps, &ll), 0);
	assert_true(fabs(eps - 0.125) < 1e-9);
	assert_true(fabs(ll - -14.0062906732) < 1e-8);
	assert_true(fabs(agm_code_length_of(&c, ll, g) - 22.5032811573) < 1e-8);
	double p[2];
	assert_int_equal(agm_estimate_p(g, &c, eps, p), 0);
	assert_true(fabs(p[0] - 13.0 / 21.0) < 1e-8 && fabs(p[1] - 3.0 / 7.0) < 1e-8);
	cover_release(&c);
	graph_free(g);
}

/*
 * A two-mode graph, worked by hand: senders 0-2, receivers 3-5 (nsend 3);
 * only a sender and a receiver make a pair, 3 x 3 = 9 of them. A holds
 * senders 0, 1 and receivers 3, 4: 2 x 2 = 4 pairs, 3 linked (0-3 0-4
 * 1-3). Of the 9 - 4 = 5 pairs sharing nothing 1 is linked (2-5), so the
 * fitted background is 1/5 and 1 - (4/5)(1 - p_A) = 3/4 gives
 * p_A = 11/16. L = ln(1/5) + 4 ln(4/5) + 3 ln(3/4) + ln(1/4)
 *   = -1.6094379124 - 0.8925742053 - 0.8630462174 - 1.3862943611
 *   = -4.7513526962;
 * A names 2 of the 3 senders and 2 of the 3 receivers: ln 3 + ln 3 =
 * 2.1972245773, a code of 6.9485772735 (one-mode counting would name 4
 * of 6 nodes, ln 15, and count the same-side pairs as non-edges).
 */
static void test_two_sided_likelihood_and_code_by_hand(void **state)
{
	(void)state;
	static const uint32_t edges[] = { 0, 3, 0, 4, 1, 3, 2, 5 };
	static const uint32_t sizes[] = { 4 };
	static const uint32_t members[] = { 0, 1, 3, 4 };
	struct graph *g = make_graph(6, edges, 4);
	g->nsend = 3;
	struct cover c;
	make_cover(&c, 6, 1, sizes, members);
	double eps = 0.05, ll = 0.0;
	assert_int_equal(agm_fit_background(g, &c, &eps, &ll), 0);
	assert_true(fabs(eps - 0.2) < 1e-9);
	assert_true(fabs(ll - -4.7513526962) < 1e-8);
	assert_true(fabs(agm_code_length_of(&c, ll, g) - 6.9485772735) < 1e-8);
	double p = 11.0 / 16.0;
	assert_true(fabs(agm_loglik(g, &c, &p, 0.2) - -4.7513526962) < 1e-8);
	struct agm a;
	assert_int_equal(agm_from_cover(&a, g, &c, 0.2), 0);
	assert_true(fabs(a.comms[0].p - 11.0 / 16.0) < 1e-8);
	assert_true(fabs(a.comms[0].density - 0.75) < 1e-12); /* 3 of its 4 pairs */
	agm_release(&a);
	cover_release(&c);
	graph_free(g);
}

/*
 * A directed graph (paired: receiver 3 + i is node i): 3 x 3 - 3 = 6
 * ordered pairs, a node's own pair being none. A holds senders 0, 1, 2
 * and receivers 3, 4 (nodes 0 and 1): 3 x 2 - 2 own = 4 pairs (0->1,
 * 1->0, 2->0, 2->1), 3 linked (0->1 is 0-4, 1->0 is 1-3, 2->0 is 2-3).
 * Outside, 1 of the 2 pairs (0->2, 1->2) is linked (1->2 is 1-5): the
 * background 1/2, and 1 - (1/2)(1 - p_A) = 3/4 gives p_A = 1/2.
 * L = 2 ln(1/2) + 3 ln(3/4) + ln(1/4) = -3.6356349396; A names all 3
 * senders (ln 1) and 2 of 3 receivers (ln 3): code 4.7342472283.
 */
static void test_directed_likelihood_and_code_by_hand(void **state)
{
	(void)state;
	static const uint32_t edges[] = { 0, 4, 1, 3, 2, 3, 1, 5 };
	static const uint32_t sizes[] = { 5 };
	static const uint32_t members[] = { 0, 1, 2, 3, 4 };
	struct graph *g = make_graph(6, edges, 4);
	g->nsend = 3;
	g->paired = 1;
	struct cover c;
	make_cover(&c, 6, 1, sizes, members);
	double eps = 0.05, ll = 0.0;
	assert_int_equal(agm_fit_background(g, &c, &eps, &ll), 0);
	assert_true(fabs(eps - 0.5) < 1e-9);
	assert_true(fabs(ll - -3.6356349396) < 1e-8);
	assert_true(fabs(agm_code_length_of(&c, ll, g) - 4.7342472283) < 1e-8);
	cover_release(&c);
	graph_free(g);
}

/*
 * With overlapping pairs there is no closed form; the answer must be the
 * joint maximum: on the worked example above (A and B share 2-3), the
 * profile log-likelihood (p re-estimated at a fixed epsilon) falls on both
 * sides of the fitted epsilon, and equals the joint maximum there.
 */
static void test_background_fitted_is_the_profile_maximum(void **state)
{
	(void)state;
	struct graph *g = make_graph(5, ex_edges, 6);
	struct cover c;
	make_cover(&c, 5, 2, ex_sizes, ex_members);
	double eps = 0.01, ll = 0.0;
	assert_int_equal(agm_fit_background(g, &c, &eps, &ll), 0);
	assert_true(eps > 0.0 && eps < 1.0);
	struct agm at, lo, hi;
	assert_int_equal(agm_from_cover(&at, g, &c, eps), 0);
	assert_int_equal(agm_from_cover(&lo, g, &c, eps * 0.98), 0);
	assert_int_equal(agm_from_cover(&hi, g, &c, eps * 1.02), 0);
	assert_true(fabs(at.loglik - ll) < 1e-7);
	assert_true(lo.loglik < ll && hi.loglik < ll);
	agm_release(&at);
	agm_release(&lo);
	agm_release(&hi);
	cover_release(&c);
	graph_free(g);
}

/*
 * Closed form without overlapping pairs. If every pair shares at most one
 * community, L splits into one function per community:
 *     L_c(q) = m_c log(1 - exp(-(q + qeps))) - (pairs_c - m_c)(q + qeps) + const.
 * dL/dq = m_c w(q + qeps) - (pairs_c - m_c) with w(Q) = 1/(e^Q - 1); zero when
 *     e^Q - 1 = m_c / (pairs_c - m_c)  =>  e^{-Q} = 1 - m_c/pairs_c.
 * With epsilon = 0, Q = q and 1 - exp(-q) = p_c = m_c / pairs_c.
 * With epsilon > 0, e^{-Q} = (1 - epsilon)(1 - p_c), so
 *     p_c = 1 - (1 - m_c/pairs_c) / (1 - epsilon),
 * and when that is negative (m_c/pairs_c < epsilon) dL/dq < 0 already at
 * q = 0 (concave L), so the maximum is on the boundary, p_c = 0.
 *
 * Graph: A = {0,1,2,3} (pairs 6) with edges 0-1 0-2 1-2 (m 3);
 * B = {3,4,5,6,7} (pairs 10; shares node 3 with A, no pair) with edges
 * 3-4 4-5 5-6 6-7 (m 4); C = {8,9,10,11} (pairs 6) with edge 8-9 (m 1);
 * edges 0-7 and 2-5 share no community.
 */
static const uint32_t cf_edges[] = { 0, 1, 0, 2, 1, 2, 3, 4, 4, 5, 5, 6, 6, 7, 8, 9, 0, 7, 2, 5 };
static const uint32_t cf_sizes[] = { 4, 5, 4 };
static const uint32_t cf_members[] = { 0, 1, 2, 3, 3, 4, 5, 6, 7, 8, 9, 10, 11 };

static void test_p_closed_form_without_background(void **state)
{
	(void)state;
	struct graph *g = make_graph(12, cf_edges, 10);
	struct cover c;
	make_cover(&c, 12, 3, cf_sizes, cf_members);
	double p[3];
	assert_int_equal(agm_estimate_p(g, &c, 0.0, p), 0);
	assert_true(fabs(p[0] - 3.0 / 6.0) < 1e-10);  /* m/pairs, derived above */
	assert_true(fabs(p[1] - 4.0 / 10.0) < 1e-10); /* m/pairs */
	assert_true(fabs(p[2] - 1.0 / 6.0) < 1e-10);  /* m/pairs */
	/* Edges 0-7 and 2-5 share nothing: probability 0 with epsilon = 0. */
	assert_true(isinf(agm_loglik(g, &c, p, 0.0)) && agm_loglik(g, &c, p, 0.0) < 0);
	cover_release(&c);
	graph_free(g);
}

static void test_p_closed_form_with_background(void **state)
{
	(void)state;
	struct graph *g = make_graph(12, cf_edges, 10);
	struct cover c;
	make_cover(&c, 12, 3, cf_sizes, cf_members);
	double p[3], eps = 0.2;
	assert_int_equal(agm_estimate_p(g, &c, eps, p), 0);
	/* 1 - (1 - m/pairs)/(1 - epsilon), derived above */
	assert_true(fabs(p[0] - (1.0 - (1.0 - 3.0 / 6.0) / (1.0 - eps))) < 1e-10); /* 0.375 */
	assert_true(fabs(p[1] - (1.0 - (1.0 - 4.0 / 10.0) / (1.0 - eps))) < 1e-10); /* 0.25 */
	/* m/pairs = 1/6 < epsilon: the boundary maximum p = 0 (derived above) */
	assert_true(p[2] >= 0.0 && p[2] < 1e-9);
	assert_true(isfinite(agm_loglik(g, &c, p, eps)));
	cover_release(&c);
	graph_free(g);
}

/* Every p_c moved by +-1e-4 and +-1e-2 (staying in [0, 1)) must not raise
 * the likelihood: p is a maximum (the likelihood is concave in q, DESIGN.md). */
static void assert_p_is_maximum(const struct graph *g, const struct cover *c, const double *p,
				double eps)
{
	const double steps[] = { 1e-4, -1e-4, 1e-2, -1e-2 };
	double best = agm_loglik(g, c, p, eps);
	assert_true(isfinite(best));
	double *t = malloc(c->k * sizeof *t);
	assert_non_null(t);
	for (uint32_t i = 0; i < c->k; i++)
		for (size_t s = 0; s < sizeof steps / sizeof *steps; s++) {
			memcpy(t, p, c->k * sizeof *t);
			t[i] = p[i] + steps[s];
			if (t[i] < 0.0 || t[i] >= 1.0)
				continue;
			double l = agm_loglik(g, c, t, eps);
			assert_true(l <= best + 1e-12 * fabs(best));
		}
	free(t);
}

static void test_p_is_a_maximum_with_overlaps(void **state)
{
	(void)state;
	/* The worked example: pair 2-3 shares both A and B. */
	struct graph *g = make_graph(5, ex_edges, 6);
	struct cover c;
	make_cover(&c, 5, 2, ex_sizes, ex_members);
	double p[2];
	assert_int_equal(agm_estimate_p(g, &c, 0.1, p), 0);
	assert_true(p[0] > 0.0 && p[0] < 1.0 && p[1] > 0.0 && p[1] < 1.0);
	assert_p_is_maximum(g, &c, p, 0.1);
	cover_release(&c);
	graph_free(g);
}

/*
 * Figures for a hand-drawn graph: triangles 0-1-2 and 3-4-5 joined by 2-3,
 * and a pendant 5-6. n = 7, m = 8, degrees 2 2 3 3 2 3 1 (2m = 16).
 * Cover: C0 = {0,1,2}, C1 = {3,4,5,6}, C2 = {2,3}, C3 = {6}, C4 = {} (empty).
 *   C0: size 3, internal 3 (0-1 0-2 1-2), volume 2+2+3 = 7, cut 7-6 = 1,
 *       density 3/3 = 1, conductance 1/min(7, 9) = 1/7;
 *   C1: size 4, internal 4 (3-4 3-5 4-5 5-6), volume 3+2+3+1 = 9,
 *       cut 9-8 = 1, density 4/6, conductance 1/min(9, 7) = 1/7;
 *   C2: size 2, internal 1 (2-3), volume 6, cut 4, density 1,
 *       conductance 4/min(6, 10) = 2/3;
 *   C3: size 1, internal 0, volume 1, cut 1, density 0 (fewer than two
 *       members), conductance 1/min(1, 15) = 1.
 * Largest first: C1, C0, C2, C3; C4 is empty and not listed.
 * Covered nodes: all 7; in two or more: 2 (C0, C2), 3 (C1, C2), 6 (C1, C3).
 * p: C0 and C2 are cliques (the likelihood rises with q everywhere, so
 * q = AGM_QMAX); C3 has no pair (p = 0); C1 shares no pair with another
 * community, so p = 1 - (1 - 4/6)/(1 - epsilon) (closed form above).
 */
static void test_figures_match_hand_drawn_graph(void **state)
{
	(void)state;
	const uint32_t e[] = { 0, 1, 0, 2, 1, 2, 3, 4, 3, 5, 4, 5, 2, 3, 5, 6 };
	struct graph *g = make_graph(7, e, 8);
	const uint32_t sizes[] = { 3, 4, 2, 1 };
	const uint32_t mem[] = { 0, 1, 2, 3, 4, 5, 6, 2, 3, 6 };
	struct cover base, c;
	make_cover(&base, 7, 4, sizes, mem);
	/* Append an empty community C4 by hand. */
	c = base;
	c.k = 5;
	c.off = malloc(6 * sizeof *c.off);
	c.label = malloc(5 * sizeof *c.label);
	assert_non_null(c.off);
	assert_non_null(c.label);
	memcpy(c.off, base.off, 5 * sizeof *c.off);
	c.off[5] = c.off[4];
	memcpy(c.label, base.label, 4 * sizeof *c.label);
	c.label[4] = (char *)"empty";
	assert_cover_sane(&c);

	double eps = 0.05;
	struct agm a;
	assert_int_equal(agm_from_cover(&a, g, &c, eps), 0);
	assert_cover_sane(&a.cover);
	assert_int_equal(a.cover.k, 4);
	const uint32_t want_id[] = { 1, 0, 2, 3 };
	const uint32_t want_size[] = { 4, 3, 2, 1 };
	const uint64_t want_int[] = { 4, 3, 1, 0 };
	const uint64_t want_vol[] = { 9, 7, 6, 1 };
	const uint64_t want_cut[] = { 1, 1, 4, 1 };
	const double want_den[] = { 4.0 / 6.0, 1.0, 1.0, 0.0 };
	const double want_cond[] = { 1.0 / 7.0, 1.0 / 7.0, 2.0 / 3.0, 1.0 };
	for (uint32_t i = 0; i < 4; i++) { /* hand-worked table above */
		assert_int_equal(a.comms[i].id, want_id[i]);
		assert_int_equal(a.comms[i].size, want_size[i]);
		assert_int_equal(cover_size(&a.cover, i), want_size[i]);
		assert_int_equal(a.comms[i].internal_edges, want_int[i]);
		assert_int_equal(a.comms[i].volume, want_vol[i]);
		assert_int_equal(a.comms[i].cut, want_cut[i]);
		assert_true(fabs(a.comms[i].density - want_den[i]) < 1e-15);
		assert_true(fabs(a.comms[i].conductance - want_cond[i]) < 1e-15);
		assert_string_equal(a.cover.label[i], c.label[want_id[i]]);
		/* members are the input community's members */
		for (uint64_t j = 0; j < want_size[i]; j++)
			assert_int_equal(a.cover.mem[a.cover.off[i] + j],
					 c.mem[c.off[want_id[i]] + j]);
	}
	for (uint64_t j = 0; j < a.cover.off[a.cover.k]; j++)
		assert_true(a.strength[j] == 1.0);
	assert_true(fabs(a.comms[0].p - (1.0 - (1.0 - 4.0 / 6.0) / (1.0 - eps))) < 1e-10);
	assert_true(a.comms[1].p == -expm1(-AGM_QMAX)); /* clique */
	assert_true(a.comms[2].p == -expm1(-AGM_QMAX)); /* clique */
	assert_true(a.comms[3].p == 0.0);               /* no pair */
	assert_int_equal(a.covered, 7);
	assert_int_equal(a.overlapping, 3);
	assert_int_equal(a.n, 7);
	assert_true(a.epsilon == eps);
	/* The stored log-likelihood is that of the reported p. */
	double p[4];
	for (uint32_t i = 0; i < 4; i++)
		p[i] = a.comms[i].p;
	double l = agm_loglik(g, &a.cover, p, eps);
	assert_true(fabs(a.loglik - l) <= 1e-9 * fabs(l));
	agm_release(&a);
	agm_release(&a); /* released twice: a no-op the second time */

	free(c.off);
	free(c.label);
	cover_release(&base);
	graph_free(g);
}

static void test_communities_listed_largest_first_ties_by_id(void **state)
{
	(void)state;
	const uint32_t e[] = { 0, 1, 1, 2, 2, 3, 3, 4, 4, 5 };
	struct graph *g = make_graph(6, e, 5);
	/* sizes 2, 3, 3, 1, 3: order ids 1, 2, 4 (size 3, by id), 0, 3 */
	const uint32_t sizes[] = { 2, 3, 3, 1, 3 };
	const uint32_t mem[] = { 0, 1, 0, 1, 2, 3, 4, 5, 5, 1, 2, 3 };
	struct cover c;
	make_cover(&c, 6, 5, sizes, mem);
	struct agm a;
	assert_int_equal(agm_from_cover(&a, g, &c, 0.01), 0);
	const uint32_t want[] = { 1, 2, 4, 0, 3 };
	assert_int_equal(a.cover.k, 5);
	for (uint32_t i = 0; i < 5; i++) /* DESIGN: largest first, ties by id */
		assert_int_equal(a.comms[i].id, want[i]);
	agm_release(&a);
	cover_release(&c);
	graph_free(g);
}

/*
 * Strengths by hand, n = 4, k = 4, delta = 0.5:
 *   u0: c0 0.5 (exactly delta: member), c2 0.3
 *   u1: c0 0.8, c3 0.49999 (below)
 *   u2: c2 1.2, c3 0.8
 *   u3: c0 0.1, c2 0.6
 * Column 1 is empty. Edges 0-1 1-2 2-3, so degrees 1 2 2 1 and the links
 * needed (agm_is_member(): min(2, degree / 2)) are 0.5 1 1 0.5; column
 * sums 1.4, 0, 2.1, 1.29999. Every strength >= delta also passes that:
 *   u0 c0 0.5 x 1.4 = 0.70 >= 0.5;  u1 c0 0.8 x 1.4 = 1.12 >= 1;
 *   u2 c2 1.2 x 2.1 = 2.52 >= 1;    u2 c3 0.8 x 1.29999 = 1.04 >= 1;
 *   u3 c2 0.6 x 2.1 = 1.26 >= 0.5.
 * Members: c0 {0,1}, c2 {2,3}, c3 {2}; sizes 2 2 1, so the order is c0,
 * c2 (tie by id), c3. c0 and c2 hold one pair each, both linked
 * (cliques), c3 has no pair.
 */
static void test_from_strengths_thresholds_at_delta_inclusive(void **state)
{
	(void)state;
	const uint32_t e[] = { 0, 1, 1, 2, 2, 3 };
	struct graph *g = make_graph(4, e, 3);
	struct fentry ent[] = {
		{ 0, 0.5 }, { 2, 0.3 }, { 0, 0.8 }, { 3, 0.49999 },
		{ 2, 1.2 }, { 3, 0.8 }, { 0, 0.1 }, { 2, 0.6 },
	};
	uint64_t off[] = { 0, 2, 4, 6, 8 };
	double colsum[] = { 1.4, 0.0, 2.1, 1.29999 };
	struct fcsr F = { 4, 4, off, ent, colsum, NULL };
	assert_fcsr_sane(&F);
	struct agm a;
	assert_int_equal(agm_from_strengths(&a, g, &F, 0.01, 0.5, 0.0), 0);
	assert_cover_sane(&a.cover);
	assert_int_equal(a.cover.k, 3);
	assert_int_equal(a.comms[0].id, 0);
	assert_int_equal(a.comms[1].id, 2);
	assert_int_equal(a.comms[2].id, 3);
	assert_string_equal(a.cover.label[0], "0");
	assert_string_equal(a.cover.label[1], "2");
	assert_string_equal(a.cover.label[2], "3");
	const uint32_t want_mem[] = { 0, 1, 2, 3, 2 };
	const double want_str[] = { 0.5, 0.8, 1.2, 0.6, 0.8 };
	assert_int_equal(a.cover.off[3], 5);
	for (int j = 0; j < 5; j++) {
		assert_int_equal(a.cover.mem[j], want_mem[j]);
		assert_true(a.strength[j] == want_str[j]);
	}
	assert_int_equal(a.comms[0].internal_edges, 1);
	assert_int_equal(a.comms[1].internal_edges, 1);
	assert_true(a.comms[0].p == -expm1(-AGM_QMAX)); /* one pair, linked */
	assert_true(a.comms[2].p == 0.0);               /* no pair */
	assert_int_equal(a.covered, 4);
	assert_int_equal(a.overlapping, 1); /* node 2: c2 and c3 */
	agm_release(&a);

	struct fcsr bad = { 3, 4, off, ent, colsum, NULL }; /* 3 rows, 4 nodes */
	assert_int_equal(agm_from_strengths(&a, g, &bad, 0.01, 0.5, 0.0), -1);
	graph_free(g);
}

/*
 * The links test of the membership rule, by hand. delta = 0.1; edges 0-1
 * 0-2 0-3 0-4 1-2, so degrees 4 2 2 1 1 0 and the links needed
 * (min(2, degree / 2)) are 2 1 1 0.5 0.5 0. Strengths:
 *   u0: c0 0.6, c1 0.3;  u1: c0 0.9;  u2: c0 0.9;  u3: c1 1.0;
 *   u4: c1 1.0;  u5: c1 0.2
 * Column sums 2.4 and 2.5. All strengths are >= delta, but
 *   u0 c0 0.6 x 2.4 = 1.44 < 2 and u0 c1 0.3 x 2.5 = 0.75 < 2: out;
 *   u1 c0, u2 c0 0.9 x 2.4 = 2.16 >= 1: in;
 *   u3 c1, u4 c1 1.0 x 2.5 = 2.5 >= 0.5: in;
 *   u5 c1 0.2 x 2.5 = 0.5 >= 0 (no links to give): in.
 * So c0 {1,2}, c1 {3,4,5}: c1 first (larger), node 0 in none.
 */
static void test_from_strengths_needs_links_into_the_community(void **state)
{
	(void)state;
	const uint32_t e[] = { 0, 1, 0, 2, 0, 3, 0, 4, 1, 2 };
	struct graph *g = make_graph(6, e, 5);
	struct fentry ent[] = {
		{ 0, 0.6 }, { 1, 0.3 }, { 0, 0.9 }, { 0, 0.9 }, { 1, 1.0 }, { 1, 1.0 }, { 1, 0.2 },
	};
	uint64_t off[] = { 0, 2, 3, 4, 5, 6, 7 };
	double colsum[] = { 2.4, 2.5 };
	struct fcsr F = { 6, 2, off, ent, colsum, NULL };
	assert_fcsr_sane(&F);
	struct agm a;
	assert_int_equal(agm_from_strengths(&a, g, &F, 0.01, 0.1, AGM_MIN_LINKS), 0);
	assert_cover_sane(&a.cover);
	assert_int_equal(a.cover.k, 2);
	assert_int_equal(a.comms[0].id, 1);
	assert_int_equal(a.comms[1].id, 0);
	const uint32_t want_mem[] = { 3, 4, 5, 1, 2 };
	assert_int_equal(a.cover.off[2], 5);
	for (int j = 0; j < 5; j++)
		assert_int_equal(a.cover.mem[j], want_mem[j]);
	assert_int_equal(a.covered, 5);
	assert_int_equal(a.overlapping, 0);
	for (uint64_t j = 0; j < 7; j++) /* the per-entry test agrees */
		assert_int_equal(agm_member_at(g, &F, j < 2 ? 0 : (uint32_t)j - 1, j, 0.1, AGM_MIN_LINKS),
				 j >= 2);
	agm_release(&a);

	/* u0 c0 at 0.9: 0.9 x 2.7 = 2.43 >= 2, so node 0 joins c0 */
	ent[0].v = 0.9;
	colsum[0] = 2.7;
	assert_int_equal(agm_from_strengths(&a, g, &F, 0.01, 0.1, AGM_MIN_LINKS), 0);
	assert_int_equal(a.comms[0].size, 3);
	assert_int_equal(a.comms[1].size, 3);
	assert_int_equal(a.covered, 6);
	agm_release(&a);
	graph_free(g);
}

/*
 * agm_trim() by hand. Nodes 0-3 form a clique (6 edges); node 4 has one
 * link, to 0, and node 5 one, to 1. One column: strengths 1.0 for 0-3,
 * 0.5 for 4, 0.4 for 5 (column sum 4.9). epsilon 0.1, so delta =
 * sqrt(-ln 0.9) = 0.3246; every node passes the rule at delta (4: 0.5 x
 * 4.9 = 2.45 >= min(2, 1/2); 5: 0.4 x 4.9 = 1.96 >= 0.5). The prefixes in
 * order of strength (ties by id), gain = E ln(E/P) + (P-E) ln(1-E/P)
 * - [E ln 0.1 + (P-E) ln 0.9]:
 *   {0,1}       E 1 P 1:   0 + 2.3026                         =  2.3026
 *   {0,1,2}     E 3 P 3:                                      =  6.9078
 *   {0..3}      E 6 P 6:   6 x 2.302585                       = 13.8155
 *   {0..3,4}    E 7 P 10:  -6.10864 + 16.43417                = 10.3255
 *   {0..3,4,5}  E 8 P 15:  -10.36385 + 19.15820               =  8.7944
 * so the community ends after node 3: its threshold is 1.0, and 4 and 5
 * are no longer members.
 */
static void test_trim_ends_a_community_at_its_dense_core(void **state)
{
	(void)state;
	const uint32_t e[] = { 0, 1, 0, 2, 0, 3, 1, 2, 1, 3, 2, 3, 0, 4, 1, 5 };
	struct graph *g = make_graph(6, e, 8);
	struct fentry ent[] = { { 0, 1.0 }, { 0, 1.0 }, { 0, 1.0 }, { 0, 1.0 }, { 0, 0.5 }, { 0, 0.4 } };
	uint64_t off[] = { 0, 1, 2, 3, 4, 5, 6 };
	double colsum[] = { 4.9 };
	struct fcsr F = { .n = 6, .k = 1, .off = off, .e = ent, .colsum = colsum };
	double delta = sqrt(-log1p(-0.1));
	for (uint64_t j = 0; j < 6; j++)
		assert_true(agm_member_at(g, &F, (uint32_t)j, j, delta, AGM_MIN_LINKS));
	assert_int_equal(agm_trim(g, &F, 0.1, delta, AGM_MIN_LINKS), 0);
	assert_non_null(F.thr);
	assert_true(F.thr[0] == 1.0);
	for (uint64_t j = 0; j < 6; j++) /* the per-entry test reads the threshold */
		assert_int_equal(agm_member_at(g, &F, (uint32_t)j, j, delta, AGM_MIN_LINKS), j < 4);

	/* the reading keeps the trimmed cover only if the AGM likelihood does
	 * not fall; whichever it keeps, it is the better of the two and F's
	 * thresholds agree with it */
	struct agm at, a0;
	free(F.thr);
	F.thr = NULL;
	assert_int_equal(agm_from_strengths(&a0, g, &F, 0.1, delta, AGM_MIN_LINKS), 0);
	assert_int_equal(agm_from_strengths_trimmed(&at, g, &F, 0.1, delta, AGM_MIN_LINKS), 0);
	assert_true(at.loglik >= a0.loglik);
	uint32_t members = (uint32_t)at.cover.off[at.cover.k];
	assert_int_equal(members, F.thr ? 4u : 6u);
	assert_int_equal(at.ended_sooner, F.thr ? 1u : 0u);
	agm_release(&at);
	agm_release(&a0);
	free(F.thr);
	graph_free(g);
}

/*
 * Columns left out for their code length (agm_trim.c). First, by hand, a
 * column that does not pay for its names but whose members are its own:
 * kept. n = 8, epsilon = 1/15 (held). Column 0: nodes 0-4, 9 of their 10
 * pairs linked (all but 3-4); column 1: nodes 5-7, linked 5-6 and 6-7; one
 * more edge, 4-5, between them. No overlap, so each p is closed form:
 * 1 - (1 - eps)(1 - p_c) = e_c / N_c.
 *   column 1: 1 - p = (1/3) / (14/15) = 5/14, q = ln 2.8 = 1.029619;
 *     leaving it out, its non-edge stops paying q and its two edges fall
 *     from probability 2/3 to eps:
 *     dL = 1.029619 + 2 (ln(1/15) - ln(2/3)) = 1.029619 - 4.605170 = -3.575551,
 *     and naming its 3 members among 8 costs ln C(8, 3) = ln 56 = 4.025352:
 *     the code would change by 3.575551 - 4.025352 = -0.449801;
 *   column 0: 1 - p = 0.1 / (14/15), q = ln(28/3) = 2.233592;
 *     dL = 2.233592 + 9 (ln(1/15) - ln 0.9) = -21.190615: +17.165263.
 * Column 1 would shorten the code, but none of its members is in another
 * community: it is their only description, and it stays (only a column
 * at least half of whose members keep another community is a candidate).
 * The trimmed reading keeps both columns whole (column 0's prefixes gain
 * 2.708, 8.124, 16.248, 21.191; column 1's 2.708, 3.576).
 */
static void test_column_of_its_own_members_is_kept(void **state)
{
	(void)state;
	const uint32_t e[] = { 0, 1, 0, 2, 0, 3, 0, 4, 1, 2, 1, 3, 1, 4, 2, 3, 2, 4,
			       5, 6, 6, 7, 4, 5 };
	struct graph *g = make_graph(8, e, 12);
	struct fentry ent[] = { { 0, 1.0 }, { 0, 1.0 }, { 0, 1.0 }, { 0, 1.0 },
				{ 0, 1.0 }, { 1, 1.0 }, { 1, 1.0 }, { 1, 1.0 } };
	uint64_t off[] = { 0, 1, 2, 3, 4, 5, 6, 7, 8 };
	double colsum[] = { 5.0, 3.0 };
	struct fcsr F = { .n = 8, .k = 2, .off = off, .e = ent, .colsum = colsum };
	double eps = 1.0 / 15.0, delta = sqrt(-log1p(-eps));
	struct agm at;
	assert_int_equal(agm_from_strengths_trimmed(&at, g, &F, eps, delta, AGM_MIN_LINKS), 0);
	assert_int_equal(at.cover.k, 2);
	assert_int_equal(at.dropped, 0);
	/* the hand-worked figures of the code it would have saved: p */
	for (uint32_t i = 0; i < 2; i++)
		assert_true(fabs(at.comms[i].p - (at.comms[i].id ? 1.0 - 5.0 / 14.0
								 : 1.0 - 1.5 / 14.0)) < 1e-9);
	agm_release(&at);
	free(F.thr);
	graph_free(g);
}

/*
 * A column whose members mostly keep another community and that does not
 * pay for its names is left out. n = 10, epsilon = 0.05. Column 0: nodes
 * 0-5, 14 of their 15 pairs linked (all but 4-5). Column 1: nodes 3-6
 * (3 of its 4 members in column 0 too), linked 3-4, 3-5 (also pairs of
 * column 0) and 5-6; nodes 7-9 in none (7-8, 8-9). Both columns are read
 * whole (column 1's prefixes 3,4 / 3-5 / 3-6 gain 3.0, 4.1, 5.0 against
 * the background). Left out: the cover then has column 0 alone, node 6
 * in none, and its code length (agm_code_length_of(), p estimated again)
 * is shorter than with both columns, by what the rule predicts with p
 * held or more.
 */
static void test_column_that_does_not_pay_for_its_names_is_left_out(void **state)
{
	(void)state;
	const uint32_t e[] = { 0, 1, 0, 2, 0, 3, 0, 4, 0, 5, 1, 2, 1, 3, 1, 4, 1, 5, 2, 3,
			       2, 4, 2, 5, 3, 4, 3, 5, 5, 6, 7, 8, 8, 9 };
	struct graph *g = make_graph(10, e, 17);
	struct fentry ent[] = { { 0, 1.0 }, { 0, 1.0 }, { 0, 1.0 }, { 0, 1.0 }, { 1, 1.0 },
				{ 0, 1.0 }, { 1, 1.0 }, { 0, 1.0 }, { 1, 1.0 }, { 1, 1.0 } };
	uint64_t off[] = { 0, 1, 2, 3, 5, 7, 9, 10, 10, 10, 10 };
	double colsum[] = { 6.0, 4.0 };
	struct fcsr F = { .n = 10, .k = 2, .off = off, .e = ent, .colsum = colsum };
	double eps = 0.05, delta = sqrt(-log1p(-eps));
	struct agm a0, at;
	assert_int_equal(agm_from_strengths_every_column(&a0, g, &F, eps, delta, AGM_MIN_LINKS),
			 0);
	assert_int_equal(a0.cover.k, 2);
	assert_int_equal(a0.covered, 7);
	assert_int_equal(agm_from_strengths_trimmed(&at, g, &F, eps, delta, AGM_MIN_LINKS), 0);
	assert_int_equal(at.cover.k, 1);
	assert_int_equal(at.dropped, 1);
	assert_int_equal(at.comms[0].id, 0);
	assert_int_equal(at.comms[0].size, 6);
	assert_int_equal(at.covered, 6);
	double before = agm_code_length_of(&a0.cover, a0.loglik, g);
	double after = agm_code_length_of(&at.cover, at.loglik, g);
	printf("code length with both columns %.4f, column 1 left out %.4f\n", before, after);
	assert_true(after < before);
	/* every reader of one entry agrees: column 1 has no member */
	for (uint32_t u = 0; u < 10; u++)
		for (uint64_t j = off[u]; j < off[u + 1]; j++)
			assert_int_equal(agm_member_at(g, &F, u, j, delta, AGM_MIN_LINKS),
					 ent[j].c == 0);
	agm_release(&at);
	agm_release(&a0);
	free(F.thr);
	graph_free(g);
}

/*
 * agm_trim() on two sides, by hand (a two-mode graph: senders 0-2,
 * receivers 3-6). Senders 0, 1, 2 link to every receiver 3, 4, 5 (9
 * links); receiver 6 has one link, from 0. One column: strength 1.0 for
 * 0-5, 0.3 for 6; by side the sums are 3 (sending) and 3.3 (receiving).
 * epsilon 0.01, delta = sqrt(-ln 0.99) = 0.1003: every entry passes the
 * rule (6: 0.3 x 3 = 0.9 >= min(2, 1/2)). In order of the links expected
 * from the other side (strength x the other side's sum): 0, 1, 2 (3.3),
 * then 3, 4, 5 (3.0), then 6 (0.9); pairs = senders x receivers; gain =
 * E ln(E/P) + (P-E) ln(1-E/P) - [E ln 0.01 + (P-E) ln 0.99]:
 *   {0,1,2,3}        E 3 P 3:                         3 x 4.60517 = 13.8155
 *   {0,1,2,3,4}      E 6 P 6:                                      = 27.6310
 *   {0,1,2,3,4,5}    E 9 P 9:                                      = 41.4465
 *   {.., 6}          E 10 P 12: -1.82322 - 3.58352 + 46.05170 + 0.02010 = 40.6651
 * (prefixes with no receiver have no pairs), so the column ends after 5:
 * the senders are kept whole (threshold 0) and the receivers end at 1.0,
 * which leaves 6 out.
 */
static void test_trim_on_two_sides(void **state)
{
	(void)state;
	const uint32_t e[] = { 0, 3, 0, 4, 0, 5, 1, 3, 1, 4, 1, 5, 2, 3, 2, 4, 2, 5, 0, 6 };
	struct graph *g = make_graph(7, e, 10);
	g->nsend = 3;
	struct fentry ent[] = { { 0, 1.0 }, { 0, 1.0 }, { 0, 1.0 }, { 0, 1.0 },
				{ 0, 1.0 }, { 0, 1.0 }, { 0, 0.3 } };
	uint64_t off[] = { 0, 1, 2, 3, 4, 5, 6, 7 };
	double colsum[] = { 6.3 };
	struct fcsr F = { .n = 7, .k = 1, .off = off, .e = ent, .colsum = colsum };
	double delta = sqrt(-log1p(-0.01));
	assert_int_equal(agm_side_sums(g, &F), 0);
	assert_true(fabs(F.sidesum[0] - 3.0) < 1e-12 && fabs(F.sidesum[1] - 3.3) < 1e-12);
	for (uint64_t j = 0; j < 7; j++)
		assert_true(agm_member_at(g, &F, (uint32_t)j, j, delta, AGM_MIN_LINKS));
	assert_int_equal(agm_trim(g, &F, 0.01, delta, AGM_MIN_LINKS), 0);
	assert_non_null(F.thr);
	assert_true(F.thr[0] == 0.0); /* sending: whole */
	assert_true(F.thr[1] == 1.0); /* receiving: ends at 5 */
	for (uint64_t j = 0; j < 7; j++)
		assert_int_equal(agm_member_at(g, &F, (uint32_t)j, j, delta, AGM_MIN_LINKS), j < 6);
	/* a copy keeps both sides' thresholds */
	struct fcsr C;
	assert_int_equal(fcsr_copy(&C, &F), 0);
	assert_true(C.thr[0] == 0.0 && C.thr[1] == 1.0);
	fcsr_release(&C);
	free(F.thr);
	free(F.sidesum);
	g->nsend = 0;
	graph_free(g);
}

/* The rule's edges, by hand: both tests are inclusive. */
static void test_member_rule_boundaries(void **state)
{
	(void)state;
	assert_true(agm_is_member(1.0, 2.0, 0.5, AGM_MIN_LINKS, 10));    /* 1.0 x 2.0 = 2 >= min(2, 5) */
	assert_false(agm_is_member(0.999, 2.0, 0.5, AGM_MIN_LINKS, 10)); /* 1.998 < 2 */
	assert_true(agm_is_member(1.0, 1.0, 0.5, AGM_MIN_LINKS, 2));     /* 1 >= min(2, 1) */
	assert_false(agm_is_member(0.9, 1.0, 0.5, AGM_MIN_LINKS, 2));    /* 0.9 < 1 */
	assert_false(agm_is_member(0.4, 100.0, 0.5, AGM_MIN_LINKS, 10)); /* below delta, 40 links or not */
	assert_true(agm_is_member(0.5, 0.0, 0.5, AGM_MIN_LINKS, 0));     /* degree 0: delta alone */
}

/* ---- brute force, O(n^2), written independently of src/agm.c ---- */

struct brute {
	uint32_t n, k;
	uint32_t *mask; /* per pair (u < v, row-major): bit c when both in c */
	uint8_t *edge;
	uint64_t npairs;
};

static void brute_init(struct brute *b, const struct graph *g, const struct cover *c)
{
	assert_true(c->k <= 32);
	b->n = g->n;
	b->k = c->k;
	b->npairs = (uint64_t)g->n * (g->n - 1) / 2;
	b->mask = calloc(b->npairs, sizeof *b->mask);
	b->edge = calloc(b->npairs, 1);
	uint32_t *nodemask = calloc(g->n, sizeof *nodemask);
	assert_true(b->mask && b->edge && nodemask);
	for (uint32_t i = 0; i < c->k; i++)
		for (uint64_t j = c->off[i]; j < c->off[i + 1]; j++)
			nodemask[c->mem[j]] |= 1u << i;
	uint64_t at = 0;
	for (uint32_t u = 0; u < g->n; u++)
		for (uint32_t v = u + 1; v < g->n; v++, at++) {
			b->mask[at] = nodemask[u] & nodemask[v];
			b->edge[at] = (uint8_t)graph_has_edge(g, u, v);
		}
	free(nodemask);
}

/* The AGM likelihood straight from its definition (DESIGN.md): the
 * product over all pairs of P or 1 - P, P = 1 - (1-eps) prod (1 - p_c). */
static double brute_loglik(const struct brute *b, const double *p, double eps)
{
	double sum = 0.0;
	for (uint64_t i = 0; i < b->npairs; i++) {
		double keep = 1.0 - eps;
		for (uint32_t c = 0; c < b->k; c++)
			if (b->mask[i] >> c & 1)
				keep *= 1.0 - p[c];
		sum += b->edge[i] ? log(1.0 - keep) : log(keep);
	}
	return sum;
}

/* dL/dq_c: edges sharing c contribute 1/expm1(Q), non-edges -1. */
static double brute_grad(const struct brute *b, const double *q, double qeps, uint32_t c)
{
	double g = 0.0;
	for (uint64_t i = 0; i < b->npairs; i++) {
		if (!(b->mask[i] >> c & 1))
			continue;
		if (!b->edge[i]) {
			g -= 1.0;
			continue;
		}
		double Q = qeps;
		for (uint32_t d = 0; d < b->k; d++)
			if (b->mask[i] >> d & 1)
				Q += q[d];
		g += 1.0 / expm1(Q);
	}
	return g;
}

/* Maximise the brute likelihood over p by cyclic golden-section search
 * on each p_c in [0, 1 - 1e-13] (a maximiser independent of src/agm.c). */
static void brute_maximise(const struct brute *b, double eps, double *p)
{
	const double gr = (sqrt(5.0) - 1.0) / 2.0;
	for (uint32_t c = 0; c < b->k; c++)
		p[c] = 0.5;
	for (int cycle = 0; cycle < 300; cycle++) {
		double moved = 0.0;
		for (uint32_t c = 0; c < b->k; c++) {
			double lo = 0.0, hi = 1.0 - 1e-13, old = p[c];
			double x1 = hi - gr * (hi - lo), x2 = lo + gr * (hi - lo);
			p[c] = x1;
			double f1 = brute_loglik(b, p, eps);
			p[c] = x2;
			double f2 = brute_loglik(b, p, eps);
			while (hi - lo > 1e-12) {
				if (f1 < f2) {
					lo = x1;
					x1 = x2;
					f1 = f2;
					x2 = lo + gr * (hi - lo);
					p[c] = x2;
					f2 = brute_loglik(b, p, eps);
				} else {
					hi = x2;
					x2 = x1;
					f2 = f1;
					x1 = hi - gr * (hi - lo);
					p[c] = x1;
					f1 = brute_loglik(b, p, eps);
				}
			}
			p[c] = 0.5 * (lo + hi);
			if (fabs(p[c] - old) > moved)
				moved = fabs(p[c] - old);
		}
		if (moved < 1e-11)
			break;
	}
}

static void brute_release(struct brute *b)
{
	free(b->mask);
	free(b->edge);
}

/* A planted AGM on 40 nodes: 4 overlapping communities, each node in each
 * with probability 0.3, pairs linked as the model says. */
static struct graph *planted(struct rng *r, uint32_t n, struct cover *c, double eps0)
{
	const double ptrue[4] = { 0.5, 0.3, 0.6, 0.2 };
	uint32_t node[400], comm[400], np = 0, nodemask[64] = { 0 };
	assert_true(n <= 64);
	for (uint32_t k = 0; k < 4; k++)
		for (uint32_t u = 0; u < n; u++)
			if (rng_uniform(r) < 0.3) {
				node[np] = u;
				comm[np++] = k;
				nodemask[u] |= 1u << k;
			}
	assert_int_equal(cover_from_pairs(c, n, node, comm, np), 0);
	assert_int_equal(c->k, 4);
	uint32_t *pairs = malloc((size_t)n * n * sizeof *pairs);
	assert_non_null(pairs);
	uint64_t ne = 0;
	for (uint32_t u = 0; u < n; u++)
		for (uint32_t v = u + 1; v < n; v++) {
			double keep = 1.0 - eps0;
			for (uint32_t k = 0; k < 4; k++)
				if ((nodemask[u] & nodemask[v]) >> k & 1)
					keep *= 1.0 - ptrue[k];
			if (rng_uniform(r) < 1.0 - keep) {
				pairs[2 * ne] = u;
				pairs[2 * ne + 1] = v;
				ne++;
			}
		}
	struct graph *g = make_graph(n, pairs, ne);
	free(pairs);
	return g;
}

static void test_random_graph_matches_brute_force(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 20240611);
	for (int trial = 0; trial < 3; trial++) {
		struct cover c;
		double eps = 0.02;
		struct graph *g = planted(&r, 40, &c, eps);
		struct brute b;
		brute_init(&b, g, &c);

		/* Log-likelihood at arbitrary p: the O(n^2) definition. */
		for (int t = 0; t < 5; t++) {
			double p[4];
			for (int i = 0; i < 4; i++)
				p[i] = 0.05 + 0.9 * rng_uniform(&r);
			double want = brute_loglik(&b, p, eps), got = agm_loglik(g, &c, p, eps);
			assert_true(fabs(got - want) <= 1e-10 * fabs(want));
		}

		/* The estimate: agrees with an independent maximiser, is a
		 * stationary point of the brute-force likelihood, and a maximum. */
		double p[4], pb[4], q[4], qeps = -log1p(-eps);
		assert_int_equal(agm_estimate_p(g, &c, eps, p), 0);
		brute_maximise(&b, eps, pb);
		for (int i = 0; i < 4; i++) {
			assert_true(fabs(p[i] - pb[i]) < 1e-6);
			q[i] = -log1p(-p[i]);
		}
		for (uint32_t i = 0; i < 4; i++) {
			double gr = brute_grad(&b, q, qeps, i);
			if (p[i] > 1e-9 && p[i] < 1.0 - 1e-9)
				assert_true(fabs(gr) < 1e-7 * (1.0 + cover_size(&c, i) * cover_size(&c, i)));
		}
		assert_p_is_maximum(g, &c, p, eps);
		double lb = brute_loglik(&b, p, eps);
		assert_true(fabs(agm_loglik(g, &c, p, eps) - lb) <= 1e-10 * fabs(lb));

		struct agm a;
		assert_int_equal(agm_from_cover(&a, g, &c, eps), 0);
		assert_true(fabs(a.loglik - lb) <= 1e-9 * fabs(lb));
		agm_release(&a);
		brute_release(&b);
		cover_release(&c);
		graph_free(g);
	}
}

/* agm_improve_p() from any start reaches the maximum agm_estimate_p()
 * finds (L is concave in q: one maximum), never below the start; and
 * agm_from_cover_p() keeps the p it is given. */
static void test_improve_p_reaches_the_maximum_from_any_start(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 515);
	for (int trial = 0; trial < 3; trial++) {
		struct cover c;
		double eps = 0.02;
		struct graph *g = planted(&r, 40, &c, eps);
		struct brute b;
		brute_init(&b, g, &c);
		double best[4], p[4], start;
		assert_int_equal(agm_estimate_p(g, &c, eps, best), 0);
		for (int t = 0; t < 4; t++) {
			for (int i = 0; i < 4; i++)
				p[i] = t == 3 ? 1.0 : rng_uniform(&r); /* t 3: the edge of the range */
			start = brute_loglik(&b, p, eps);
			assert_int_equal(agm_improve_p(g, &c, eps, p), 0);
			for (int i = 0; i < 4; i++)
				assert_true(fabs(p[i] - best[i]) < 1e-6);
			/* the O(n^2) definition: never below the start */
			assert_true(brute_loglik(&b, p, eps) >= start);
		}
		struct agm a;
		assert_int_equal(agm_from_cover_p(&a, g, &c, eps, best), 0);
		for (uint32_t i = 0; i < a.cover.k; i++)
			assert_true(fabs(a.comms[i].p - best[a.comms[i].id]) <= 1e-15);
		double lb = brute_loglik(&b, best, eps);
		assert_true(fabs(a.loglik - lb) <= 1e-9 * fabs(lb));
		agm_release(&a);
		p[0] = 1.5;
		assert_int_equal(agm_improve_p(g, &c, eps, p), -1);
		assert_int_equal(agm_from_cover_p(&a, g, &c, eps, p), -1);
		brute_release(&b);
		cover_release(&c);
		graph_free(g);
	}
}

static void test_rejects_bad_input(void **state)
{
	(void)state;
	struct graph *g = make_graph(5, ex_edges, 6);
	struct cover c;
	make_cover(&c, 5, 2, ex_sizes, ex_members);
	double p[2];
	assert_int_equal(agm_estimate_p(g, &c, 1.0, p), -1);  /* epsilon must be < 1 */
	assert_int_equal(agm_estimate_p(g, &c, -0.1, p), -1);
	assert_int_equal(agm_estimate_p(g, &c, NAN, p), -1);
	c.n = 6; /* a cover of another node set */
	assert_int_equal(agm_estimate_p(g, &c, 0.1, p), -1);
	assert_true(isnan(agm_loglik(g, &c, p, 0.1)));
	struct agm a;
	assert_int_equal(agm_from_cover(&a, g, &c, 0.1), -1);
	c.n = 5;
	agm_release(NULL);
	cover_release(&c);
	graph_free(g);
}

/* The merge move's block test (fit_merge_block_gain()), checked two ways.
 * By hand, two blocks that do not overlap: A and B have 10 edges among 20
 * pairs each, none among the 40 pairs between, bg 1e-9. Two blocks at
 * their own rates (p = 0.5; with no pair shared the AGM's rates are the
 * blocks' densities): 2 x (10 ln 0.5 + 10 ln 0.5) = -27.7259, the pairs
 * between -40 x 1e-9. One block: 20 edges among 80 pairs, p = 0.25:
 * 20 ln 0.25 + 60 ln 0.75 = -27.7259 - 17.2609 = -44.9868. Gain -17.2609.
 * And against a plain grid search over pA, pB (the reference lives here):
 * a block of one community cut into two overlapping halves, the shared
 * pairs at the same density as the rest (0.03), the pairs between at a
 * sixth of it, as measured on the leaky 10^4-node graph (DEVELOPERS.md);
 * two blocks over-predict the shared pairs, so one block must win. */
static double ref_ll(double e, double N, double p)
{
	return N > 0.0 ? e * log(p) + (N - e) * log1p(-p) : 0.0;
}

static void test_merge_block_gain_by_hand_and_by_grid(void **state)
{
	(void)state;
	double g = fit_merge_block_gain(0, 0, 10, 20, 10, 20, 0, 40, 1e-9);
	assert_true(fabs(g - (-17.2609)) < 1e-3);

	double bg = 0.0005;
	double NI = 248.0 * 247 / 2, NA = 142.0 * 141 / 2 + 142.0 * 248;
	double NB = 121.0 * 120 / 2 + 121.0 * 248, NX = 142.0 * 121;
	double eI = round(0.0315 * NI), eA = round(0.0338 * NA), eB = round(0.0355 * NB);
	double eX = round(0.0058 * NX);
	double two = -INFINITY;
	for (int i = 1; i < 600; i++)
		for (int j = 1; j < 600; j++) {
			double pa = i / 10000.0, pb = j / 10000.0;
			double l = ref_ll(eI, NI, 1 - (1 - pa) * (1 - pb) * (1 - bg)) +
				   ref_ll(eA, NA, 1 - (1 - pa) * (1 - bg)) +
				   ref_ll(eB, NB, 1 - (1 - pb) * (1 - bg)) + ref_ll(eX, NX, bg);
			two = l > two ? l : two;
		}
	double E = eI + eA + eB + eX, N = NI + NA + NB + NX;
	double grid_gain = ref_ll(E, N, E / N) - two;
	g = fit_merge_block_gain(eI, NI, eA, NA, eB, NB, eX, NX, bg);
	assert_true(g > 0.0);
	/* the code's two blocks are at their maximum, the grid's near it */
	assert_true(g <= grid_gain + 1e-6);
	assert_true(g > grid_gain - 1.0);
}

/* The background the merge move reads from the cover counts a column's
 * members by the output's rule (fit_is_member(): delta and two links'
 * worth), not by delta alone. Worked by hand: two 4-cliques {0..3} and
 * {4..7} joined by the edge 3-4, epsilon 0.1, so delta =
 * sqrt(-ln 0.9) = 0.3246; column 0 at 1 on 0..3, column 1 at 1 on 4..7,
 * and node 4 (degree 4: it needs min(2, 4/2) = 2 links' worth) at s in
 * column 0. s = 0.4: 0.4 >= delta but 0.4 x colsum 4.4 = 1.76 < 2, not a
 * member; the cover is the two cliques (12 pairs inside, 28 - 12 = 16
 * outside) and 3-4 is the one edge outside: bg = 1/16 = 0.0625. (At
 * delta alone node 4 was a member, no edge was outside and bg fell to
 * its floor, as it did for nearly every edge of a 10^6-node graph.)
 * s = 0.5: 0.5 x 4.5 = 2.25 >= 2, a member; column 0 is {0..4} (10
 * pairs), 16 inside, 12 outside, no edge outside: bg 0, read as
 * epsilon (0.1). */
static void test_merge_background_reads_the_membership_rule(void **state)
{
	(void)state;
	static const uint32_t e[] = { 0, 1, 0, 2, 0, 3, 1, 2, 1, 3, 2, 3, 4, 5, 4, 6,
				      4, 7, 5, 6, 5, 7, 6, 7, 3, 4 };
	struct graph *g = make_graph(8, e, 13);
	for (int pass = 0; pass < 2; pass++) {
		double s = pass == 0 ? 0.4 : 0.5;
		struct model m;
		assert_int_equal(model_init(&m, 8, 2, 0.1), 0);
		assert_true(fabs(m.delta - 0.32459) < 1e-4);
		for (uint32_t u = 0; u < 8; u++) {
			struct fentry row[2] = { { u < 4 ? 0 : 1, 1.0 }, { 1, 1.0 } };
			uint32_t nnz = 1;
			if (u == 4) {
				row[0] = (struct fentry){ 0, s };
				nnz = 2;
			}
			assert_int_equal(model_set_row(&m, u, row, nnz), 0);
		}
		model_recount(&m);
		double bg = fit_merge_background(&m, g);
		assert_true(fabs(bg - (pass == 0 ? 1.0 / 16 : 0.1)) < 1e-12);
		model_release(&m);
	}
	graph_free(g);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_loglik_matches_hand_computed_example),
		cmocka_unit_test(test_code_length_matches_hand_computed_example),
		cmocka_unit_test(test_background_fitted_matches_hand_computed_example),
		cmocka_unit_test(test_background_fitted_is_the_profile_maximum),
		cmocka_unit_test(test_two_sided_likelihood_and_code_by_hand),
		cmocka_unit_test(test_directed_likelihood_and_code_by_hand),
		cmocka_unit_test(test_p_closed_form_without_background),
		cmocka_unit_test(test_p_closed_form_with_background),
		cmocka_unit_test(test_p_is_a_maximum_with_overlaps),
		cmocka_unit_test(test_figures_match_hand_drawn_graph),
		cmocka_unit_test(test_communities_listed_largest_first_ties_by_id),
		cmocka_unit_test(test_from_strengths_thresholds_at_delta_inclusive),
		cmocka_unit_test(test_from_strengths_needs_links_into_the_community),
		cmocka_unit_test(test_member_rule_boundaries),
		cmocka_unit_test(test_random_graph_matches_brute_force),
		cmocka_unit_test(test_improve_p_reaches_the_maximum_from_any_start),
		cmocka_unit_test(test_rejects_bad_input),
		cmocka_unit_test(test_trim_ends_a_community_at_its_dense_core),
		cmocka_unit_test(test_trim_on_two_sides),
		cmocka_unit_test(test_column_of_its_own_members_is_kept),
		cmocka_unit_test(test_column_that_does_not_pay_for_its_names_is_left_out),
		cmocka_unit_test(test_merge_block_gain_by_hand_and_by_grid),
		cmocka_unit_test(test_merge_background_reads_the_membership_rule),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
