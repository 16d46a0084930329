/*
 * Tests for inspect: the node view, weak edges, missing links, members by
 * strength, community sorting and lookup.
 *
 * The hand-worked example (used by most tests below). Nine nodes, three
 * communities A = column 0, B = column 1, C = column 2, delta = 0.2:
 *
 *   node  A     B     C          members (strength >= 0.2)
 *   0     1.0   .     .          A: 0 1 2 3 8
 *   1     0.8   .     0.3        B: 3 4 5 6 8
 *   2     0.6   .     0.05       C: 1 4 5 7   (node 2's 0.05 is below delta)
 *   3     0.5   0.7   .
 *   4     .     1.0   1.0
 *   5     .     0.9   0.5
 *   6     .     0.5   .
 *   7     .     .     1.2
 *   8     0.7   0.5   .
 *
 * Seventeen edges; for each, the product F_u[c] F_v[c] per shared
 * community, the community explaining it (largest product, smaller id on
 * ties, none when nothing is shared), dot = F_u . F_v and 1 - e^-dot:
 *
 *   edge  products            explains  dot                     1 - e^-dot
 *   0-1   A .8                A         0.8                     0.550671
 *   0-2   A .6                A         0.6                     0.451188
 *   0-3   A .5                A         0.5                     0.393469
 *   0-4   (none)              none      0                       0
 *   1-2   A .48, C .015       A         .8*.6 + .3*.05 = 0.495  0.390429
 *   1-5   C .15               C         0.15                    0.139292
 *   1-7   C .36               C         0.36                    0.302324
 *   2-3   A .3                A         0.3                     0.259182
 *   2-7   C .06               C         0.06                    0.058235
 *   3-4   B .7                B         0.7                     0.503415
 *   3-5   B .63               B         0.63                    0.467408
 *   3-8   A .35, B .35 (tie)  A         .5*.7 + .7*.5 = 0.7     0.503415
 *   4-5   B .9, C .5          B         0.9 + 0.5 = 1.4         0.753403
 *   4-8   B .5                B         0.5                     0.393469
 *   5-6   B .45               B         0.45                    0.362372
 *   5-7   C .6                C         0.6                     0.451188
 *   6-7   (none)              none      0                       0
 *
 * The probabilities are e^-x worked out with python3's math.expm1
 * (Python 3, Debian); e.g. 1 - e^-0.495 = 1 - 0.609571 = 0.390429. The
 * ties are exact in binary floating point: 0.5 * 0.7 is 0.7 halved, so
 * 0.35 + 0.35 rounds to the same double as 0.7 * 1.0, and 1.0 * 0.5 is
 * 0.5 * 1.0.
 */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "helpers.h"

#include "coterie/agm.h"
#include "coterie/cover.h"
#include "coterie/graph.h"
#include "coterie/inspect.h"
#include "coterie/model.h"
#include "coterie/rng.h"

/* ---- building fixtures ------------------------------------------------ */

/* Strengths from a dense n x k table (zeros are not stored). */
static void fcsr_from_dense(struct fcsr *F, uint32_t n, uint32_t k, const double *dense)
{
	memset(F, 0, sizeof *F);
	F->n = n;
	F->k = k;
	F->off = calloc((size_t)n + 1, sizeof *F->off);
	F->e = calloc((size_t)n * k + 1, sizeof *F->e);
	F->colsum = calloc(k, sizeof *F->colsum);
	assert_non_null(F->off);
	assert_non_null(F->e);
	assert_non_null(F->colsum);
	uint64_t o = 0;
	for (uint32_t u = 0; u < n; u++) {
		F->off[u] = o;
		for (uint32_t c = 0; c < k; c++) {
			double v = dense[(size_t)u * k + c];
			if (v > 0) {
				F->e[o].c = c;
				F->e[o].v = v;
				F->colsum[c] += v;
				o++;
			}
		}
	}
	F->off[n] = o;
	assert_fcsr_sane(F);
}

static void fcsr_free_test(struct fcsr *F)
{
	free(F->off);
	free(F->e);
	free(F->colsum);
}

/* An AGM read from a dense table by hand, the way agm.h describes it:
 * members are F >= delta, columns without members are not listed, the
 * rest largest first with ties by id. Only the fields inspect reads are
 * filled (plus size). */
static void agm_by_hand(struct agm *a, uint32_t n, uint32_t k, const double *dense,
			double delta)
{
	memset(a, 0, sizeof *a);
	a->n = n;
	uint32_t *size = calloc(k, sizeof *size);
	uint32_t *col = calloc(k, sizeof *col);
	assert_non_null(size);
	assert_non_null(col);
	uint32_t kk = 0;
	for (uint32_t c = 0; c < k; c++) {
		for (uint32_t u = 0; u < n; u++)
			size[c] += dense[(size_t)u * k + c] >= delta;
		if (size[c])
			col[kk++] = c;
	}
	/* largest first, ties by id: insertion sort */
	for (uint32_t i = 1; i < kk; i++)
		for (uint32_t j = i; j > 0 && size[col[j]] > size[col[j - 1]]; j--) {
			uint32_t t = col[j];
			col[j] = col[j - 1];
			col[j - 1] = t;
		}
	a->cover.n = n;
	a->cover.k = kk;
	a->cover.off = calloc((size_t)kk + 1, sizeof *a->cover.off);
	a->cover.mem = calloc((size_t)n * k + 1, sizeof *a->cover.mem);
	a->cover.label = calloc((size_t)kk + 1, sizeof *a->cover.label);
	a->strength = calloc((size_t)n * k + 1, sizeof *a->strength);
	a->comms = calloc((size_t)kk + 1, sizeof *a->comms);
	uint64_t o = 0;
	for (uint32_t i = 0; i < kk; i++) {
		uint32_t c = col[i];
		a->cover.off[i] = o;
		for (uint32_t u = 0; u < n; u++) {
			double v = dense[(size_t)u * k + c];
			if (v >= delta) {
				a->cover.mem[o] = u;
				a->strength[o] = v;
				o++;
			}
		}
		a->cover.label[i] = strdup("");
		a->comms[i].id = c;
		a->comms[i].size = size[c];
	}
	a->cover.off[kk] = o;
	assert_cover_sane(&a->cover);
	free(size);
	free(col);
}

static void agm_free_test(struct agm *a)
{
	for (uint32_t i = 0; i < a->cover.k; i++)
		free(a->cover.label[i]);
	free(a->cover.label);
	free(a->cover.off);
	free(a->cover.mem);
	free(a->strength);
	free(a->comms);
}

#define HN 9
#define HK 3
#define HDELTA 0.2
static const double hand_F[HN * HK] = {
	1.0, 0,   0,    /* 0 */
	0.8, 0,   0.3,  /* 1 */
	0.6, 0,   0.05, /* 2 */
	0.5, 0.7, 0,    /* 3 */
	0,   1.0, 1.0,  /* 4 */
	0,   0.9, 0.5,  /* 5 */
	0,   0.5, 0,    /* 6 */
	0,   0,   1.2,  /* 7 */
	0.7, 0.5, 0,    /* 8 */
};
static const uint32_t hand_edges[] = {
	0, 1, 0, 2, 1, 2, 0, 3, 2, 3, /* A */
	3, 4, 4, 5, 3, 5, 5, 6,       /* B */
	1, 7, 5, 7, 2, 7,             /* C */
	1, 5, 3, 8, 6, 7, 0, 4, 4, 8, /* across */
};

struct hand {
	struct graph *g;
	struct fcsr F;
	struct agm a;
};

static int hand_setup(void **state)
{
	struct hand *h = calloc(1, sizeof *h);
	assert_non_null(h);
	h->g = graph_from_pairs(HN, hand_edges, sizeof hand_edges / sizeof hand_edges[0] / 2,
				NULL);
	assert_non_null(h->g);
	assert_graph_sane(h->g);
	assert_int_equal(h->g->m, 17);
	fcsr_from_dense(&h->F, HN, HK, hand_F);
	agm_by_hand(&h->a, HN, HK, hand_F, HDELTA);
	/* sizes A 5, B 5, C 4: listed A, B, C, so index == id here */
	assert_int_equal(h->a.cover.k, 3);
	*state = h;
	return 0;
}

static int hand_teardown(void **state)
{
	struct hand *h = *state;
	graph_free(h->g);
	fcsr_free_test(&h->F);
	agm_free_test(&h->a);
	free(h);
	return 0;
}

#define TOL 5e-7 /* the hand values are rounded to six decimals */

/* ---- single pairs ----------------------------------------------------- */

static void test_pair_prob_matches_hand_computed(void **state)
{
	struct hand *h = *state;
	/* table in the header: 1 - e^-dot */
	assert_float_equal(inspect_pair_prob(&h->F, 1, 2), 0.390429, TOL); /* dot 0.495 */
	assert_float_equal(inspect_pair_prob(&h->F, 2, 1), 0.390429, TOL);
	assert_float_equal(inspect_pair_prob(&h->F, 4, 5), 0.753403, TOL); /* dot 1.4 */
	assert_float_equal(inspect_pair_prob(&h->F, 3, 8), 0.503415, TOL); /* dot 0.7 */
	assert_float_equal(inspect_pair_prob(&h->F, 1, 8), 0.428791, TOL); /* .8*.7 = 0.56 */
	assert_true(inspect_pair_prob(&h->F, 0, 4) == 0.0); /* nothing shared */
	assert_true(inspect_pair_prob(&h->F, 6, 7) == 0.0);
}

static void test_edge_view_splits_the_probability_by_community(void **state)
{
	struct hand *h = *state;
	/* pair 1-2 of the header's table, with epsilon 0.1 and p_A = 0.5,
	 * p_C = 0.3 set here. Products A .8*.6 = .48, C .3*.05 = .015 (A
	 * first, the larger); dot .495;
	 *   prob       = 1 - (1 - .1) e^-.495 = 1 - .9 * .609571 = 0.451386
	 *   prob_comms = 1 - e^-.495 = 0.390429
	 *   alone      A: 1 - e^-.48 = 0.381217, C: 1 - e^-.015 = 0.014888
	 *   members    A: both (.8, .6 >= .2); C: not (.05 < .2)
	 *   agm_prob   = 1 - (1 - .1)(1 - .5) = 0.55 (C not shared as members)
	 * (e^-x with python3's math.expm1) */
	for (uint32_t i = 0; i < h->a.cover.k; i++)
		h->a.comms[i].p = h->a.comms[i].id == 0 ? 0.5 : h->a.comms[i].id == 2 ? 0.3 : 0.9;
	struct inspect_edge e;
	assert_int_equal(inspect_edge(&e, h->g, &h->F, &h->a, 0.1, HDELTA, 0.0, 1, 2), 0);
	assert_true(e.linked);
	assert_float_equal(e.x, 0.495, 1e-12);
	assert_float_equal(e.prob, 0.451386, TOL);
	assert_float_equal(e.prob_comms, 0.390429, TOL);
	assert_float_equal(e.agm_prob, 0.55, 1e-12);
	assert_int_equal(e.nshare, 2);
	assert_int_equal(e.share[0].comm, 0);
	assert_float_equal(e.share[0].product, 0.48, 1e-12);
	assert_float_equal(e.share[0].alone, 0.381217, TOL);
	assert_true(e.share[0].both_members);
	assert_float_equal(e.share[0].p, 0.5, 0);
	assert_int_equal(e.share[1].comm, 2);
	assert_float_equal(e.share[1].alone, 0.014888, TOL);
	assert_false(e.share[1].both_members);
	inspect_edge_release(&e);
	/* 0-4 share nothing and are linked: only the background, 0.1 */
	assert_int_equal(inspect_edge(&e, h->g, &h->F, &h->a, 0.1, HDELTA, 0.0, 0, 4), 0);
	assert_true(e.linked);
	assert_int_equal(e.nshare, 0);
	assert_float_equal(e.prob, 0.1, 1e-12);
	assert_float_equal(e.agm_prob, 0.1, 1e-12);
	inspect_edge_release(&e);
	/* 0-8 are not linked: A .7 */
	assert_int_equal(inspect_edge(&e, h->g, &h->F, &h->a, 0.1, HDELTA, 0.0, 0, 8), 0);
	assert_false(e.linked);
	assert_int_equal(e.nshare, 1);
	inspect_edge_release(&e);
	/* bad pairs */
	assert_int_equal(inspect_edge(&e, h->g, &h->F, &h->a, 0.1, HDELTA, 0.0, 3, 3), -1);
	assert_int_equal(inspect_edge(&e, h->g, &h->F, &h->a, 0.1, HDELTA, 0.0, 3, HN), -1);
	inspect_edge_release(&e);
}

static void test_pair_prob_is_accurate_for_tiny_dot(void **state)
{
	(void)state;
	/* 1 - e^-x = x - x^2/2 + ... : for x = 1e-20 the answer is 1e-20 to
	 * double precision (Taylor series); 1 - exp(-x) would give 0. */
	double dense[2] = { 1e-10, 1e-10 };
	struct fcsr F;
	fcsr_from_dense(&F, 2, 1, dense);
	assert_float_equal(inspect_pair_prob(&F, 0, 1) / 1e-20, 1.0, 1e-12);
	fcsr_free_test(&F);
}

static void test_explaining_community_takes_largest_product_then_smaller_id(void **state)
{
	struct hand *h = *state;
	/* table in the header, "explains" column */
	assert_int_equal(inspect_explaining_community(&h->F, 1, 2), 0); /* .48 > .015 */
	assert_int_equal(inspect_explaining_community(&h->F, 4, 5), 1); /* .9 > .5 */
	assert_int_equal(inspect_explaining_community(&h->F, 3, 8), 0); /* .35 = .35 */
	assert_int_equal(inspect_explaining_community(&h->F, 8, 3), 0);
	assert_int_equal(inspect_explaining_community(&h->F, 2, 7), 2); /* sub-threshold counts */
	assert_int_equal(inspect_explaining_community(&h->F, 0, 4), -1);
	assert_int_equal(inspect_explaining_community(&h->F, 6, 7), -1);
	assert_int_equal(inspect_explaining_community(&h->F, 0, HN), -1); /* out of range */
}

/* ---- node view -------------------------------------------------------- */

/* The commands' rule (agm_is_member() with AGM_MIN_LINKS = 2) on the hand
 * example. Column sums: A 1 + .8 + .6 + .5 + .7 = 3.6, B .7 + 1 + .9 + .5
 * + .5 = 3.6, C .3 + .05 + 1 + .5 + 1.2 = 3.05. Degrees from the edge
 * table: node 1 four, node 3 five, node 8 two; links needed min(2, deg/2):
 * 2, 2, 1.
 *   node 3: A .5 x 3.6 = 1.8 < 2 (out), B .7 x 3.6 = 2.52 (in)
 *   node 1: A .8 x 3.6 = 2.88 (in),    C .3 x 3.05 = 0.915 < 2 (out)
 *   node 8: A .7 x 3.6 = 2.52 >= 1 (in), B .5 x 3.6 = 1.8 >= 1 (in)
 * so pair 3-8 shares A and B as strengths but only B as members: with
 * p_B = 0.4 set here, agm_prob = 1 - (1 - .1)(1 - .4) = 0.46. */
static void test_views_need_links_into_the_community(void **state)
{
	struct hand *h = *state;
	struct inspect_node nv;
	assert_int_equal(inspect_node(&nv, h->g, &h->F, HDELTA, AGM_MIN_LINKS, 3), 0);
	assert_int_equal(nv.naffil, 2);
	assert_int_equal(nv.nmember, 1);
	assert_int_equal(nv.affil[0].comm, 1); /* B .7 first */
	assert_true(nv.affil[0].member);
	assert_false(nv.affil[1].member);
	inspect_node_release(&nv);
	assert_int_equal(inspect_node(&nv, h->g, &h->F, HDELTA, AGM_MIN_LINKS, 1), 0);
	assert_int_equal(nv.nmember, 1);
	assert_int_equal(nv.affil[0].comm, 0); /* A .8 */
	assert_true(nv.affil[0].member);
	assert_false(nv.affil[1].member); /* C .3 */
	inspect_node_release(&nv);

	for (uint32_t i = 0; i < h->a.cover.k; i++)
		h->a.comms[i].p = h->a.comms[i].id == 1 ? 0.4 : 0.5;
	struct inspect_edge e;
	assert_int_equal(inspect_edge(&e, h->g, &h->F, &h->a, 0.1, HDELTA, AGM_MIN_LINKS, 3, 8),
			 0);
	assert_int_equal(e.nshare, 2);
	int sawA = 0, sawB = 0;
	for (uint32_t i = 0; i < e.nshare; i++) {
		if (e.share[i].comm == 0) {
			sawA = 1;
			assert_false(e.share[i].both_members);
		} else if (e.share[i].comm == 1) {
			sawB = 1;
			assert_true(e.share[i].both_members);
		}
	}
	assert_true(sawA && sawB);
	assert_float_equal(e.agm_prob, 0.46, 1e-12);
	inspect_edge_release(&e);
}

static void test_node_view_orders_affiliations_and_counts_explained_edges(void **state)
{
	struct hand *h = *state;
	struct inspect_node nv;

	/* node 3: B .7 before A .5. Its edges 3-0 (A), 3-2 (A), 3-4 (B),
	 * 3-5 (B), 3-8 (tie -> A): A explains 3, B 2, none unexplained. */
	assert_int_equal(inspect_node(&nv, h->g, &h->F, HDELTA, 0.0, 3), 0);
	assert_int_equal(nv.node, 3);
	assert_int_equal(nv.degree, 5);
	assert_int_equal(nv.naffil, 2);
	assert_int_equal(nv.nmember, 2);
	assert_int_equal(nv.unexplained, 0);
	assert_int_equal(nv.affil[0].comm, 1);
	assert_float_equal(nv.affil[0].strength, 0.7, 0);
	assert_int_equal(nv.affil[0].explained, 2);
	assert_int_equal(nv.affil[1].comm, 0);
	assert_int_equal(nv.affil[1].explained, 3);
	inspect_node_release(&nv);

	/* node 2: A .6 (member), C .05 (below delta .2, listed, not a member).
	 * Edges 2-0 A, 2-1 A (.48 > .015), 2-3 A, 2-7 C (.06). */
	assert_int_equal(inspect_node(&nv, h->g, &h->F, HDELTA, 0.0, 2), 0);
	assert_int_equal(nv.naffil, 2);
	assert_int_equal(nv.nmember, 1);
	assert_int_equal(nv.affil[0].comm, 0);
	assert_int_equal(nv.affil[0].member, 1);
	assert_int_equal(nv.affil[0].explained, 3);
	assert_int_equal(nv.affil[1].comm, 2);
	assert_int_equal(nv.affil[1].member, 0);
	assert_int_equal(nv.affil[1].explained, 1);
	assert_int_equal(nv.unexplained, 0);
	inspect_node_release(&nv);

	/* node 4: B 1.0 and C 1.0 tie, so B (smaller id) first. Edges 4-0
	 * none, 4-3 B, 4-5 B (.9 > .5), 4-8 B: B 3, C 0, unexplained 1. */
	assert_int_equal(inspect_node(&nv, h->g, &h->F, HDELTA, 0.0, 4), 0);
	assert_int_equal(nv.degree, 4);
	assert_int_equal(nv.naffil, 2);
	assert_int_equal(nv.nmember, 2);
	assert_int_equal(nv.affil[0].comm, 1);
	assert_int_equal(nv.affil[0].explained, 3);
	assert_int_equal(nv.affil[1].comm, 2);
	assert_int_equal(nv.affil[1].explained, 0);
	assert_int_equal(nv.unexplained, 1);
	inspect_node_release(&nv);

	/* node 7: C 1.2; edges 7-1 C, 7-2 C, 7-5 C, 7-6 none */
	assert_int_equal(inspect_node(&nv, h->g, &h->F, HDELTA, 0.0, 7), 0);
	assert_int_equal(nv.naffil, 1);
	assert_int_equal(nv.affil[0].comm, 2);
	assert_int_equal(nv.affil[0].explained, 3);
	assert_int_equal(nv.unexplained, 1);
	inspect_node_release(&nv);

	/* a higher delta makes fewer memberships: at 0.75 node 3 (.7, .5) has none */
	assert_int_equal(inspect_node(&nv, h->g, &h->F, 0.75, 0.0, 3), 0);
	assert_int_equal(nv.nmember, 0);
	assert_int_equal(nv.naffil, 2);
	inspect_node_release(&nv);
}

static void test_node_view_of_a_node_without_strengths(void **state)
{
	(void)state;
	/* path 0-1-2, node 1 has no strengths: every edge unexplained */
	const uint32_t e[] = { 0, 1, 1, 2 };
	struct graph *g = graph_from_pairs(3, e, 2, NULL);
	double dense[3] = { 1.0, 0, 1.0 };
	struct fcsr F;
	fcsr_from_dense(&F, 3, 1, dense);
	struct inspect_node nv;
	assert_int_equal(inspect_node(&nv, g, &F, 0.1, 0.0, 1), 0);
	assert_int_equal(nv.degree, 2);
	assert_int_equal(nv.naffil, 0);
	assert_int_equal(nv.nmember, 0);
	assert_int_equal(nv.unexplained, 2);
	inspect_node_release(&nv);
	inspect_node_release(NULL);
	fcsr_free_test(&F);
	graph_free(g);
}

static void test_node_view_rejects_bad_input(void **state)
{
	struct hand *h = *state;
	struct inspect_node nv;
	assert_int_equal(inspect_node(&nv, h->g, &h->F, HDELTA, 0.0, HN), -1);
	assert_null(nv.affil);
	struct fcsr short_F = h->F;
	short_F.n = HN - 1;
	assert_int_equal(inspect_node(&nv, h->g, &short_F, HDELTA, 0.0, 0), -1);
}

/* ---- weak edges ------------------------------------------------------- */

struct want {
	uint32_t u, v;
	double prob;
};

static void assert_pairs(const struct inspect_pair *got, size_t n, const struct want *w)
{
	for (size_t i = 0; i < n; i++) {
		assert_int_equal(got[i].u, w[i].u);
		assert_int_equal(got[i].v, w[i].v);
		assert_float_equal(got[i].prob, w[i].prob, TOL);
	}
}

/* Community A (members 0 1 2 3 8): its 13 edges from the header table,
 * lowest probability first; 0-3 and 8-4 tie at 0.393469 and 3-4 and 3-8
 * at 0.503415, ordered by (u, v). 8-4 has the member 8 as u. */
static const struct want weak_A[] = {
	{ 0, 4, 0 },        { 2, 7, 0.058235 }, { 1, 5, 0.139292 }, { 2, 3, 0.259182 },
	{ 1, 7, 0.302324 }, { 1, 2, 0.390429 }, { 0, 3, 0.393469 }, { 8, 4, 0.393469 },
	{ 0, 2, 0.451188 }, { 3, 5, 0.467408 }, { 3, 4, 0.503415 }, { 3, 8, 0.503415 },
	{ 0, 1, 0.550671 },
};

/* Community C (members 1 4 5 7): 13 edges; the two zeros tie and go by u;
 * the member is u even when its id is larger (4-0, 7-6, 7-2, 5-3, 4-3, 1-0). */
static const struct want weak_C[] = {
	{ 4, 0, 0 },        { 7, 6, 0 },        { 7, 2, 0.058235 }, { 1, 5, 0.139292 },
	{ 1, 7, 0.302324 }, { 5, 6, 0.362372 }, { 1, 2, 0.390429 }, { 4, 8, 0.393469 },
	{ 5, 7, 0.451188 }, { 5, 3, 0.467408 }, { 4, 3, 0.503415 }, { 1, 0, 0.550671 },
	{ 4, 5, 0.753403 },
};

static void test_weak_edges_lists_member_edges_lowest_first(void **state)
{
	struct hand *h = *state;
	struct inspect_pair *p;
	size_t n, total;
	assert_int_equal(inspect_weak_edges(h->g, &h->F, &h->a, 0, 0, 100, &p, &n, &total), 0);
	assert_int_equal(total, 13);
	assert_int_equal(n, 13);
	assert_pairs(p, n, weak_A);
	free(p);

	assert_int_equal(inspect_weak_edges(h->g, &h->F, &h->a, 2, 0, 100, &p, &n, &total), 0);
	assert_int_equal(total, 13);
	assert_int_equal(n, 13);
	assert_pairs(p, n, weak_C);
	free(p);
}

static void test_weak_edges_pages_with_offset_and_limit(void **state)
{
	struct hand *h = *state;
	struct inspect_pair *p;
	size_t n, total;
	/* the first three */
	assert_int_equal(inspect_weak_edges(h->g, &h->F, &h->a, 0, 0, 3, &p, &n, &total), 0);
	assert_int_equal(n, 3);
	assert_int_equal(total, 13);
	assert_pairs(p, n, weak_A);
	free(p);
	/* ranks 6..9, across the 0.393469 tie */
	assert_int_equal(inspect_weak_edges(h->g, &h->F, &h->a, 0, 6, 4, &p, &n, &total), 0);
	assert_int_equal(n, 4);
	assert_pairs(p, n, weak_A + 6);
	free(p);
	/* a page running off the end is cut short */
	assert_int_equal(inspect_weak_edges(h->g, &h->F, &h->a, 0, 11, 5, &p, &n, NULL), 0);
	assert_int_equal(n, 2);
	assert_pairs(p, n, weak_A + 11);
	free(p);
	/* past the end and limit 0 give nothing, but the total stays exact */
	assert_int_equal(inspect_weak_edges(h->g, &h->F, &h->a, 0, 13, 5, &p, &n, &total), 0);
	assert_int_equal(n, 0);
	assert_int_equal(total, 13);
	free(p);
	assert_int_equal(inspect_weak_edges(h->g, &h->F, &h->a, 0, 0, 0, &p, &n, &total), 0);
	assert_int_equal(n, 0);
	assert_int_equal(total, 13);
	free(p);
	/* an unbounded request does not overflow offset + limit */
	assert_int_equal(inspect_weak_edges(h->g, &h->F, &h->a, 0, 1, SIZE_MAX, &p, &n, &total),
			 0);
	assert_int_equal(n, 12);
	assert_pairs(p, n, weak_A + 1);
	free(p);
}

static void test_weak_edges_rejects_bad_index(void **state)
{
	struct hand *h = *state;
	struct inspect_pair *p;
	size_t n, total;
	assert_int_equal(inspect_weak_edges(h->g, &h->F, &h->a, 3, 0, 5, &p, &n, &total), -1);
	assert_null(p);
	assert_int_equal(n, 0);
	assert_int_equal(inspect_missing_links(h->g, &h->F, &h->a, 3, 0, 5, &p, &n, &total), -1);
	assert_null(p);
}

/* ---- missing links ---------------------------------------------------- */

static void test_missing_links_lists_unlinked_member_pairs_strongest_first(void **state)
{
	struct hand *h = *state;
	struct inspect_pair *p;
	size_t n, total;

	/* A: members 0 1 2 3 8; linked 0-1 0-2 0-3 1-2 2-3 3-8; not linked:
	 *   0-8 dot 1.0*.7 = 0.70            1 - e^-0.70 = 0.503415
	 *   1-8 dot .8*.7 = 0.56             1 - e^-0.56 = 0.428791
	 *   2-8 dot .6*.7 = 0.42             1 - e^-0.42 = 0.342953
	 *   1-3 dot .8*.5 = 0.40             1 - e^-0.40 = 0.329680 */
	static const struct want miss_A[] = {
		{ 0, 8, 0.503415 }, { 1, 8, 0.428791 }, { 2, 8, 0.342953 }, { 1, 3, 0.329680 },
	};
	assert_int_equal(inspect_missing_links(h->g, &h->F, &h->a, 0, 0, 10, &p, &n, &total),
			 0);
	assert_int_equal(total, 4);
	assert_int_equal(n, 4);
	assert_pairs(p, n, miss_A);
	free(p);

	/* B: members 3 4 5 6 8; linked 3-4 3-5 3-8 4-5 4-8 5-6; not linked:
	 *   4-6 dot 1.0*.5 = 0.50    0.393469
	 *   5-8 dot .9*.5 = 0.45     0.362372
	 *   3-6 dot .7*.5 = 0.35     0.295312
	 *   6-8 dot .5*.5 = 0.25     0.221199
	 * paged: offset 1, limit 2 -> 5-8, 3-6 */
	static const struct want miss_B[] = {
		{ 4, 6, 0.393469 }, { 5, 8, 0.362372 }, { 3, 6, 0.295312 }, { 6, 8, 0.221199 },
	};
	assert_int_equal(inspect_missing_links(h->g, &h->F, &h->a, 1, 1, 2, &p, &n, &total),
			 0);
	assert_int_equal(total, 4);
	assert_int_equal(n, 2);
	assert_pairs(p, n, miss_B + 1);
	free(p);

	/* C: members 1 4 5 7; linked 1-5 1-7 4-5 5-7; not linked:
	 *   4-7 dot 1.0*1.2 = 1.2    0.698806
	 *   1-4 dot .3*1.0 = 0.3     0.259182 */
	static const struct want miss_C[] = { { 4, 7, 0.698806 }, { 1, 4, 0.259182 } };
	assert_int_equal(inspect_missing_links(h->g, &h->F, &h->a, 2, 0, 10, &p, &n, &total),
			 0);
	assert_int_equal(total, 2);
	assert_int_equal(n, 2);
	assert_pairs(p, n, miss_C);
	free(p);
}

static void test_missing_links_of_a_clique_is_empty(void **state)
{
	(void)state;
	/* a triangle, all three members: every pair is linked */
	const uint32_t e[] = { 0, 1, 1, 2, 0, 2 };
	struct graph *g = graph_from_pairs(3, e, 3, NULL);
	double dense[3] = { 1, 1, 1 };
	struct fcsr F;
	struct agm a;
	fcsr_from_dense(&F, 3, 1, dense);
	agm_by_hand(&a, 3, 1, dense, 0.5);
	struct inspect_pair *p;
	size_t n, total;
	assert_int_equal(inspect_missing_links(g, &F, &a, 0, 0, 10, &p, &n, &total), 0);
	assert_int_equal(n, 0);
	assert_int_equal(total, 0);
	free(p);
	agm_free_test(&a);
	fcsr_free_test(&F);
	graph_free(g);
}

/* ---- members ---------------------------------------------------------- */

static void test_members_come_strongest_first_ties_by_id(void **state)
{
	struct hand *h = *state;
	uint32_t order[5];
	double s[5];
	/* A: 0 (1.0), 1 (.8), 8 (.7), 2 (.6), 3 (.5) */
	inspect_members(&h->a, 0, order, s);
	const uint32_t wantA[5] = { 0, 1, 8, 2, 3 };
	const double wantAs[5] = { 1.0, 0.8, 0.7, 0.6, 0.5 };
	for (int i = 0; i < 5; i++) {
		assert_int_equal(order[i], wantA[i]);
		assert_float_equal(s[i], wantAs[i], 0);
	}
	/* B: 4 (1.0), 5 (.9), 3 (.7), 6 and 8 tie at .5 -> 6 first */
	inspect_members(&h->a, 1, order, NULL);
	const uint32_t wantB[5] = { 4, 5, 3, 6, 8 };
	for (int i = 0; i < 5; i++)
		assert_int_equal(order[i], wantB[i]);
	/* C: 7 (1.2), 4 (1.0), 5 (.5), 1 (.3) */
	inspect_members(&h->a, 2, order, s);
	const uint32_t wantC[4] = { 7, 4, 5, 1 };
	for (int i = 0; i < 4; i++)
		assert_int_equal(order[i], wantC[i]);
	assert_float_equal(s[3], 0.3, 0);
}

/* ---- sorting and finding communities ---------------------------------- */

/* Five communities with hand-chosen figures (ties on purpose):
 *   index  id  size  edges  density  conductance  p
 *   0      7   5     6      0.6      0.25         0.5
 *   1      2   3     3      1.0      0.5          0.9
 *   2      4   5     4      0.4      0.25         0.3
 *   3      0   2     1      1.0      0.75         0.9
 *   4      9   4     4      0.6667   0.1          0.3
 * The expected orders below are sorted by hand: by the key in the
 * direction asked, ties by id ascending. */
static void five_comms(struct agm *a, struct agm_community *c)
{
	memset(a, 0, sizeof *a);
	memset(c, 0, 5 * sizeof *c);
	const uint32_t id[5] = { 7, 2, 4, 0, 9 };
	const uint32_t size[5] = { 5, 3, 5, 2, 4 };
	const uint64_t edges[5] = { 6, 3, 4, 1, 4 };
	const double dens[5] = { 0.6, 1.0, 0.4, 1.0, 4.0 / 6.0 };
	const double cond[5] = { 0.25, 0.5, 0.25, 0.75, 0.1 };
	const double p[5] = { 0.5, 0.9, 0.3, 0.9, 0.3 };
	for (int i = 0; i < 5; i++) {
		c[i].id = id[i];
		c[i].size = size[i];
		c[i].internal_edges = edges[i];
		c[i].density = dens[i];
		c[i].conductance = cond[i];
		c[i].p = p[i];
	}
	a->cover.k = 5;
	a->comms = c;
}

static void assert_order(const uint32_t *got, const uint32_t *want, int n)
{
	for (int i = 0; i < n; i++)
		assert_int_equal(got[i], want[i]);
}

static void test_sort_communities_by_each_key_both_ways(void **state)
{
	(void)state;
	struct agm a;
	struct agm_community c[5];
	uint32_t o[5];
	five_comms(&a, c);
	static const struct {
		enum inspect_key key;
		uint32_t desc[5], asc[5];
	} cases[] = {
		{ INSPECT_BY_SIZE, { 2, 0, 4, 1, 3 }, { 3, 1, 4, 2, 0 } },
		{ INSPECT_BY_EDGES, { 0, 2, 4, 1, 3 }, { 3, 1, 2, 4, 0 } },
		{ INSPECT_BY_DENSITY, { 3, 1, 4, 0, 2 }, { 2, 0, 4, 3, 1 } },
		{ INSPECT_BY_CONDUCTANCE, { 3, 1, 2, 0, 4 }, { 4, 2, 0, 1, 3 } },
		{ INSPECT_BY_P, { 3, 1, 0, 2, 4 }, { 2, 4, 0, 3, 1 } },
		{ INSPECT_BY_ID, { 4, 0, 2, 1, 3 }, { 3, 1, 2, 0, 4 } },
	};
	for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
		inspect_sort_communities(&a, cases[i].key, 0, o);
		assert_order(o, cases[i].desc, 5);
		inspect_sort_communities(&a, cases[i].key, 1, o);
		assert_order(o, cases[i].asc, 5);
	}
}

static void test_find_community_by_id(void **state)
{
	(void)state;
	struct agm a;
	struct agm_community c[5];
	five_comms(&a, c);
	assert_int_equal(inspect_find_community(&a, 4), 2);
	assert_int_equal(inspect_find_community(&a, 9), 4);
	assert_int_equal(inspect_find_community(&a, 7), 0);
	assert_int_equal(inspect_find_community(&a, 5), -1);
	assert_int_equal(inspect_find_community(&a, UINT32_MAX), -1);
}

/* The same views through the real agm_from_strengths(). The hand table is
 * laid out with its columns reversed (C, B, A = columns 0, 1, 2, plus an
 * empty column 3), so the AGM lists A (5 members, id 2) and B (5, id 1)
 * as B, A by its rule "largest first, ties by id", then C (4, id 0):
 * indexes and ids differ and only inspect_find_community() links them. */
static void test_views_agree_on_an_agm_from_strengths(void **state)
{
	struct hand *h = *state;
	double dense[HN * 4];
	for (uint32_t u = 0; u < HN; u++) {
		for (uint32_t c = 0; c < HK; c++)
			dense[u * 4 + (HK - 1 - c)] = hand_F[u * HK + c];
		dense[u * 4 + 3] = 0;
	}
	struct fcsr F;
	fcsr_from_dense(&F, HN, 4, dense);
	struct agm a;
	assert_int_equal(agm_from_strengths(&a, h->g, &F, 0.01, HDELTA, 0.0), 0);
	assert_int_equal(a.cover.k, 3);
	int64_t iA = inspect_find_community(&a, 2), iB = inspect_find_community(&a, 1),
		iC = inspect_find_community(&a, 0);
	assert_int_equal(iB, 0);
	assert_int_equal(iA, 1);
	assert_int_equal(iC, 2);
	assert_int_equal(inspect_find_community(&a, 3), -1); /* empty column */

	struct inspect_pair *p;
	size_t n, total;
	/* the weak edges of A and C are the header's, whatever the columns are */
	assert_int_equal(inspect_weak_edges(h->g, &F, &a, (uint32_t)iA, 0, 20, &p, &n, &total),
			 0);
	assert_int_equal(n, 13);
	assert_pairs(p, n, weak_A);
	free(p);
	assert_int_equal(inspect_weak_edges(h->g, &F, &a, (uint32_t)iC, 0, 20, &p, &n, &total),
			 0);
	assert_int_equal(n, 13);
	assert_pairs(p, n, weak_C);
	free(p);
	/* B's members by strength: 4, 5, 3, then 6 and 8 tied at .5 */
	uint32_t order[5];
	inspect_members(&a, (uint32_t)iB, order, NULL);
	const uint32_t wantB[5] = { 4, 5, 3, 6, 8 };
	assert_order(order, wantB, 5);
	/* node 3 now has B (.7, id 1) and A (.5, id 2); the 3-8 tie
	 * (.35 each) goes to the smaller id, which is now B: A explains
	 * 3-0 and 3-2, B explains 3-4, 3-5 and 3-8. */
	struct inspect_node nv;
	assert_int_equal(inspect_node(&nv, h->g, &F, HDELTA, 0.0, 3), 0);
	assert_int_equal(nv.affil[0].comm, 1);
	assert_int_equal(nv.affil[0].explained, 3);
	assert_int_equal(nv.affil[1].comm, 2);
	assert_int_equal(nv.affil[1].explained, 2);
	inspect_node_release(&nv);
	agm_release(&a);
	fcsr_free_test(&F);
}

/* ---- randomized checks against brute force ---------------------------- */

/* The brute-force answers, written straight from the definitions in
 * inspect.h with dense rows and all pairs. */

static double dense_dot(const double *D, uint32_t k, uint32_t u, uint32_t v)
{
	double s = 0;
	for (uint32_t c = 0; c < k; c++)
		s += D[(size_t)u * k + c] * D[(size_t)v * k + c];
	return s;
}

static int64_t dense_explain(const double *D, uint32_t k, uint32_t u, uint32_t v)
{
	int64_t best = -1;
	double bp = 0;
	for (uint32_t c = 0; c < k; c++) {
		double a = D[(size_t)u * k + c], b = D[(size_t)v * k + c];
		if (a > 0 && b > 0 && (best < 0 || a * b > bp)) {
			best = c;
			bp = a * b;
		}
	}
	return best;
}

static int cmp_asc(const void *pa, const void *pb)
{
	const struct inspect_pair *a = pa, *b = pb;
	if (a->prob != b->prob)
		return a->prob < b->prob ? -1 : 1;
	if (a->u != b->u)
		return a->u < b->u ? -1 : 1;
	return (a->v > b->v) - (a->v < b->v);
}

static int cmp_desc(const void *pa, const void *pb)
{
	const struct inspect_pair *a = pa, *b = pb;
	if (a->prob != b->prob)
		return a->prob > b->prob ? -1 : 1;
	if (a->u != b->u)
		return a->u < b->u ? -1 : 1;
	return (a->v > b->v) - (a->v < b->v);
}

static int is_member(const struct agm *a, uint32_t i, uint32_t v)
{
	for (uint64_t j = a->cover.off[i]; j < a->cover.off[i + 1]; j++)
		if (a->cover.mem[j] == v)
			return 1;
	return 0;
}

static void assert_same_pairs(const struct inspect_pair *got, const struct inspect_pair *want,
			      size_t n)
{
	for (size_t i = 0; i < n; i++) {
		assert_int_equal(got[i].u, want[i].u);
		assert_int_equal(got[i].v, want[i].v);
		assert_true(got[i].prob == want[i].prob);
	}
}

typedef int (*list_fn)(const struct graph *, const struct fcsr *, const struct agm *,
		       uint32_t, size_t, size_t, struct inspect_pair **, size_t *, size_t *);

/* The whole list at once, then pages of every size 1..9 concatenated,
 * then a few odd windows: all must equal the brute-force list. */
static void check_listing(list_fn fn, const struct graph *g, const struct fcsr *F,
			  const struct agm *a, uint32_t i, const struct inspect_pair *want,
			  size_t nwant)
{
	struct inspect_pair *p;
	size_t n, total;
	assert_int_equal(fn(g, F, a, i, 0, SIZE_MAX, &p, &n, &total), 0);
	assert_int_equal(total, nwant);
	assert_int_equal(n, nwant);
	assert_same_pairs(p, want, n);
	free(p);
	for (size_t page = 1; page <= 9; page++) {
		size_t off = 0;
		for (;;) {
			assert_int_equal(fn(g, F, a, i, off, page, &p, &n, &total), 0);
			assert_int_equal(total, nwant);
			assert_same_pairs(p, want + off, n);
			free(p);
			if (n < page) {
				assert_int_equal(off + n, nwant);
				break;
			}
			off += n;
		}
	}
	const size_t win[][2] = { { 0, 1 }, { 3, 0 }, { 5, 100 }, { 1000000, 3 } };
	for (size_t w = 0; w < 4; w++) {
		assert_int_equal(fn(g, F, a, i, win[w][0], win[w][1], &p, &n, NULL), 0);
		size_t expect = win[w][0] >= nwant ? 0 : nwant - win[w][0];
		if (expect > win[w][1])
			expect = win[w][1];
		assert_int_equal(n, expect);
		assert_same_pairs(p, want + (win[w][0] < nwant ? win[w][0] : 0), n);
		free(p);
	}
}

static void random_dense(struct rng *r, double *D, uint32_t n, uint32_t k, uint32_t empty_col)
{
	/* strengths from a small set so that ties happen */
	static const double vals[] = { 0.25, 0.5, 0.75, 1.0, 1.5 };
	for (uint32_t u = 0; u < n; u++)
		for (uint32_t c = 0; c < k; c++)
			D[(size_t)u * k + c] = (c != empty_col && rng_uniform(r) < 0.35)
						       ? vals[rng_below(r, 5)]
						       : 0.0;
}

static void test_random_graphs_match_brute_force(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 20240611);
	for (int round = 0; round < 6; round++) {
		uint32_t n = 30 + (uint32_t)rng_below(&r, 40);
		uint32_t k = 3 + (uint32_t)rng_below(&r, 4);
		double delta = 0.5;
		double *D = malloc((size_t)n * k * sizeof *D);
		assert_non_null(D);
		random_dense(&r, D, n, k, (uint32_t)(round % k));
		struct graph *g = test_random_graph(&r, n, 0.05 + 0.05 * (round % 3));
		struct fcsr F;
		struct agm a;
		fcsr_from_dense(&F, n, k, D);
		agm_by_hand(&a, n, k, D, delta);

		/* single pairs: all of them */
		for (uint32_t u = 0; u < n; u++)
			for (uint32_t v = 0; v < n; v++) {
				assert_int_equal(inspect_explaining_community(&F, u, v),
						 dense_explain(D, k, u, v));
				assert_true(inspect_pair_prob(&F, u, v) ==
					    -expm1(-dense_dot(D, k, u, v)));
			}

		/* node views */
		for (uint32_t u = 0; u < n; u++) {
			struct inspect_node nv;
			assert_int_equal(inspect_node(&nv, g, &F, delta, 0.0, u), 0);
			uint32_t want_cnt[8] = { 0 }, unexpl = 0, naff = 0, nmem = 0;
			for (uint64_t e = g->off[u]; e < g->off[u + 1]; e++) {
				int64_t c = dense_explain(D, k, u, g->adj[e]);
				if (c < 0)
					unexpl++;
				else
					want_cnt[c]++;
			}
			for (uint32_t c = 0; c < k; c++) {
				naff += D[(size_t)u * k + c] > 0;
				nmem += D[(size_t)u * k + c] >= delta;
			}
			assert_int_equal(nv.degree, graph_degree(g, u));
			assert_int_equal(nv.naffil, naff);
			assert_int_equal(nv.nmember, nmem);
			assert_int_equal(nv.unexplained, unexpl);
			uint32_t sum = nv.unexplained;
			for (uint32_t i = 0; i < nv.naffil; i++) {
				const struct inspect_affil *f = &nv.affil[i];
				assert_true(f->strength == D[(size_t)u * k + f->comm]);
				assert_int_equal(f->member, f->strength >= delta);
				assert_int_equal(f->explained, want_cnt[f->comm]);
				sum += f->explained;
				if (i) {
					const struct inspect_affil *pf = &nv.affil[i - 1];
					assert_true(pf->strength > f->strength ||
						    (pf->strength == f->strength &&
						     pf->comm < f->comm));
				}
			}
			assert_int_equal(sum, nv.degree);
			inspect_node_release(&nv);
		}

		/* per community: weak edges, missing links, members */
		size_t cap = (size_t)n * n;
		struct inspect_pair *want = malloc(cap * sizeof *want);
		assert_non_null(want);
		for (uint32_t i = 0; i < a.cover.k; i++) {
			size_t nw = 0;
			for (uint32_t u = 0; u < n; u++)
				for (uint32_t v = u + 1; v < n; v++) {
					if (!graph_has_edge(g, u, v))
						continue;
					int mu = is_member(&a, i, u), mv = is_member(&a, i, v);
					if (!mu && !mv)
						continue;
					struct inspect_pair x = { mu ? u : v, mu ? v : u,
								  -expm1(-dense_dot(D, k, u, v)) };
					want[nw++] = x;
				}
			qsort(want, nw, sizeof *want, cmp_asc);
			check_listing(inspect_weak_edges, g, &F, &a, i, want, nw);

			nw = 0;
			for (uint32_t u = 0; u < n; u++)
				for (uint32_t v = u + 1; v < n; v++)
					if (is_member(&a, i, u) && is_member(&a, i, v) &&
					    !graph_has_edge(g, u, v)) {
						struct inspect_pair x = {
							u, v, -expm1(-dense_dot(D, k, u, v))
						};
						want[nw++] = x;
					}
			qsort(want, nw, sizeof *want, cmp_desc);
			check_listing(inspect_missing_links, g, &F, &a, i, want, nw);

			uint32_t s = cover_size(&a.cover, i);
			uint32_t *order = malloc((s + 1) * sizeof *order);
			double *str = malloc((s + 1) * sizeof *str);
			assert_non_null(order);
			assert_non_null(str);
			inspect_members(&a, i, order, str);
			uint32_t c = a.comms[i].id;
			for (uint32_t j = 0; j < s; j++) {
				assert_true(is_member(&a, i, order[j]));
				assert_true(str[j] == D[(size_t)order[j] * k + c]);
				if (j)
					assert_true(str[j - 1] > str[j] ||
						    (str[j - 1] == str[j] && order[j - 1] < order[j]));
			}
			free(order);
			free(str);
		}
		free(want);
		agm_free_test(&a);
		fcsr_free_test(&F);
		graph_free(g);
		free(D);
	}
}

/* Brute-force community sort: insertion sort with the rule spelled out. */
static double key_of(const struct agm_community *c, enum inspect_key key)
{
	switch (key) {
	case INSPECT_BY_SIZE: return c->size;
	case INSPECT_BY_EDGES: return (double)c->internal_edges;
	case INSPECT_BY_DENSITY: return c->density;
	case INSPECT_BY_CONDUCTANCE: return c->conductance;
	case INSPECT_BY_P: return c->p;
	case INSPECT_BY_ID: default: return c->id;
	}
}

static void test_sort_communities_matches_brute_force_on_many(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 7);
	const uint32_t sizes[] = { 0, 1, 2, 17, 40, 333 };
	for (size_t si = 0; si < sizeof sizes / sizeof sizes[0]; si++) {
		uint32_t k = sizes[si];
		struct agm_community *c = calloc(k + 1, sizeof *c);
		uint32_t *ids = malloc((k + 1) * sizeof *ids);
		uint32_t *o = malloc((k + 1) * sizeof *o);
		uint32_t *w = malloc((k + 1) * sizeof *w);
		assert_non_null(c);
		assert_non_null(ids);
		assert_non_null(o);
		assert_non_null(w);
		for (uint32_t i = 0; i < k; i++)
			ids[i] = i * 3;
		rng_shuffle_u32(&r, ids, k);
		for (uint32_t i = 0; i < k; i++) {
			/* few distinct values: many ties */
			c[i].id = ids[i];
			c[i].size = 1 + (uint32_t)rng_below(&r, 5);
			c[i].internal_edges = rng_below(&r, 4);
			c[i].density = 0.25 * (double)rng_below(&r, 5);
			c[i].conductance = 0.5 * (double)rng_below(&r, 3);
			c[i].p = 0.1 * (double)rng_below(&r, 4);
		}
		struct agm a;
		memset(&a, 0, sizeof a);
		a.cover.k = k;
		a.comms = c;
		for (int key = INSPECT_BY_SIZE; key <= INSPECT_BY_ID; key++)
			for (int asc = 0; asc <= 1; asc++) {
				for (uint32_t i = 0; i < k; i++)
					w[i] = i;
				for (uint32_t i = 1; i < k; i++)
					for (uint32_t j = i; j > 0; j--) {
						const struct agm_community *x = &c[w[j]],
									   *y = &c[w[j - 1]];
						double kx = key_of(x, key), ky = key_of(y, key);
						int first = kx != ky ? (asc ? kx < ky : kx > ky)
								     : x->id < y->id;
						if (!first)
							break;
						uint32_t t = w[j];
						w[j] = w[j - 1];
						w[j - 1] = t;
					}
				inspect_sort_communities(&a, key, asc, o);
				for (uint32_t i = 0; i < k; i++)
					assert_int_equal(o[i], w[i]);
			}
		free(c);
		free(ids);
		free(o);
		free(w);
	}
}

struct ms {
	double s;
	uint32_t id;
};

static int cmp_ms(const void *pa, const void *pb)
{
	const struct ms *a = pa, *b = pb;
	if (a->s != b->s)
		return a->s > b->s ? -1 : 1;
	return (a->id > b->id) - (a->id < b->id);
}

/* A community bigger than the pool: only the INSPECT_MISSING_POOL
 * strongest members (ties by id) are paired. Brute force: sort every
 * member, take the first 2000, list every unlinked pair. */
static void test_missing_links_uses_only_the_strongest_pool(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 99);
	const uint32_t n = INSPECT_MISSING_POOL + 150, k = 2;
	double *D = calloc((size_t)n * k, sizeof *D);
	assert_non_null(D);
	for (uint32_t u = 0; u < n; u++) {
		/* column 0: everyone a member, with strengths on a coarse grid
		 * so that the cut at the pool boundary falls inside a tie */
		D[(size_t)u * k] = 0.5 + 0.01 * (double)rng_below(&r, 60);
		if (rng_uniform(&r) < 0.3)
			D[(size_t)u * k + 1] = 0.25 + 0.25 * (double)rng_below(&r, 4);
	}
	uint32_t *e = malloc((size_t)n * 8 * sizeof *e);
	assert_non_null(e);
	for (uint32_t i = 0; i < n * 4; i++) {
		e[i] = (uint32_t)rng_below(&r, n);
	}
	struct graph *g = graph_from_pairs(n, e, n * 2, NULL);
	free(e);
	assert_non_null(g);
	struct fcsr F;
	struct agm a;
	fcsr_from_dense(&F, n, k, D);
	agm_by_hand(&a, n, k, D, 0.5);
	assert_int_equal(a.comms[0].id, 0);
	assert_int_equal(cover_size(&a.cover, 0), n);

	struct ms *all = malloc(n * sizeof *all);
	assert_non_null(all);
	for (uint32_t u = 0; u < n; u++) {
		all[u].s = D[(size_t)u * k];
		all[u].id = u;
	}
	qsort(all, n, sizeof *all, cmp_ms);
	/* the boundary really is inside a tie (else the test is weaker) */
	assert_true(all[INSPECT_MISSING_POOL - 1].s == all[INSPECT_MISSING_POOL].s);
	char *in = calloc(n, 1);
	assert_non_null(in);
	for (uint32_t i = 0; i < INSPECT_MISSING_POOL; i++)
		in[all[i].id] = 1;
	size_t cap = (size_t)INSPECT_MISSING_POOL * INSPECT_MISSING_POOL / 2;
	struct inspect_pair *want = malloc(cap * sizeof *want);
	assert_non_null(want);
	size_t nw = 0;
	for (uint32_t u = 0; u < n; u++) {
		if (!in[u])
			continue;
		for (uint32_t v = u + 1; v < n; v++)
			if (in[v] && !graph_has_edge(g, u, v)) {
				struct inspect_pair x = { u, v, -expm1(-dense_dot(D, k, u, v)) };
				want[nw++] = x;
			}
	}
	qsort(want, nw, sizeof *want, cmp_desc);

	struct inspect_pair *p;
	size_t np, total;
	assert_int_equal(inspect_missing_links(g, &F, &a, 0, 0, 200, &p, &np, &total), 0);
	assert_int_equal(total, nw);
	assert_int_equal(np, 200);
	assert_same_pairs(p, want, np);
	free(p);
	/* a page deep in the list, and the very end (the weakest pairs, which
	 * are the ones most sensitive to who is in the pool) */
	assert_int_equal(inspect_missing_links(g, &F, &a, 0, nw / 2, 50, &p, &np, NULL), 0);
	assert_int_equal(np, 50);
	assert_same_pairs(p, want + nw / 2, np);
	free(p);
	assert_int_equal(inspect_missing_links(g, &F, &a, 0, nw - 30, 50, &p, &np, NULL), 0);
	assert_int_equal(np, 30);
	assert_same_pairs(p, want + nw - 30, np);
	free(p);

	free(want);
	free(in);
	free(all);
	agm_free_test(&a);
	fcsr_free_test(&F);
	graph_free(g);
	free(D);
}

/* The weighted weak-edge score, P(W >= w) for W ~ Poisson(x). By hand:
 * w = 1 gives 1 - e^-x (0.5: 0.393469340287); w = 2 gives
 * 1 - e^-x (1 + x) (0.5: 1 - 0.60653066 * 1.5 = 0.090204010431). The rest
 * against scipy.special.gammainc(w, x), scipy 1.10.1 as in Debian 12. */
static void test_weight_tail_is_the_poisson_upper_tail(void **state)
{
	(void)state;
	static const double t[][3] = {
		{ 1, 0.5, 0.3934693402873665 },  { 2, 0.5, 0.09020401043104986 },
		{ 5, 1.0, 0.003659846827343713 }, { 10, 2.0, 4.649807501726386e-05 },
		{ 3, 20.0, 0.9999995444850495 },  { 2.5, 1.7, 0.36143007689620493 },
		{ 50, 30.0, 0.0005188914625480344 }, { 4, 4.0, 0.566529879633291 },
	};
	for (size_t i = 0; i < sizeof t / sizeof t[0]; i++)
		assert_true(fabs(inspect_weight_tail(t[i][0], t[i][1]) - t[i][2]) <=
			    1e-12 * t[i][2]);
	assert_true(inspect_weight_tail(3, 0.0) == 0.0);
	/* heavier is less likely at the same mean */
	assert_true(inspect_weight_tail(6, 2.0) < inspect_weight_tail(5, 2.0));
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test_setup_teardown(test_edge_view_splits_the_probability_by_community,
						hand_setup, hand_teardown),
		cmocka_unit_test_setup_teardown(test_pair_prob_matches_hand_computed, hand_setup,
						hand_teardown),
		cmocka_unit_test(test_pair_prob_is_accurate_for_tiny_dot),
		cmocka_unit_test_setup_teardown(
		    test_explaining_community_takes_largest_product_then_smaller_id, hand_setup,
		    hand_teardown),
		cmocka_unit_test_setup_teardown(test_views_need_links_into_the_community, hand_setup,
						hand_teardown),
		cmocka_unit_test_setup_teardown(
		    test_node_view_orders_affiliations_and_counts_explained_edges, hand_setup,
		    hand_teardown),
		cmocka_unit_test(test_node_view_of_a_node_without_strengths),
		cmocka_unit_test_setup_teardown(test_node_view_rejects_bad_input, hand_setup,
						hand_teardown),
		cmocka_unit_test_setup_teardown(test_weak_edges_lists_member_edges_lowest_first,
						hand_setup, hand_teardown),
		cmocka_unit_test_setup_teardown(test_weak_edges_pages_with_offset_and_limit,
						hand_setup, hand_teardown),
		cmocka_unit_test_setup_teardown(test_weak_edges_rejects_bad_index, hand_setup,
						hand_teardown),
		cmocka_unit_test_setup_teardown(
		    test_missing_links_lists_unlinked_member_pairs_strongest_first, hand_setup,
		    hand_teardown),
		cmocka_unit_test(test_missing_links_of_a_clique_is_empty),
		cmocka_unit_test_setup_teardown(test_members_come_strongest_first_ties_by_id,
						hand_setup, hand_teardown),
		cmocka_unit_test(test_sort_communities_by_each_key_both_ways),
		cmocka_unit_test(test_find_community_by_id),
		cmocka_unit_test_setup_teardown(test_views_agree_on_an_agm_from_strengths,
						hand_setup, hand_teardown),
		cmocka_unit_test(test_random_graphs_match_brute_force),
		cmocka_unit_test(test_sort_communities_matches_brute_force_on_many),
		cmocka_unit_test(test_missing_links_uses_only_the_strongest_pool),
		cmocka_unit_test(test_weight_tail_is_the_poisson_upper_tail),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
