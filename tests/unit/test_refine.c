/* Tests for refine: the priced moves, the search never losing likelihood,
 * and what it recovers on planted graphs. */
#include "helpers.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/agm.h"
#include "coterie/cover.h"
#include "coterie/fit.h"
#include "coterie/graph.h"
#include "coterie/refine.h"
#include "coterie/rng.h"
#include "coterie/score.h"

/*
 * The worked example of test_agm.c: n = 5, A = {0,1,2,3}, B = {2,3,4},
 * edges 0-1, 0-2, 1-2, 2-3, 3-4, 1-4; epsilon = 0.1, p_A = 0.5, p_B = 0.4,
 * P(u,v) = 1 - (1 - epsilon) prod_{c shared} (1 - p_c) (Yang & Leskovec,
 * ICDM 2012, eq. 1 with epsilon as an all-pairs community).
 */
static const uint32_t ex_edges[] = { 0, 1, 0, 2, 1, 2, 2, 3, 3, 4, 1, 4 };
static const uint32_t ex_sizes[] = { 4, 3 };
static const uint32_t ex_members[] = { 0, 1, 2, 3, 2, 3, 4 };

static void test_delta_matches_hand_computed_moves(void **state)
{
	(void)state;
	struct graph *g = graph_from_pairs(5, ex_edges, 6, NULL);
	assert_non_null(g);
	struct cover c;
	test_make_cover(&c, 5, 2, ex_sizes, ex_members);
	double p[2] = { 0.5, 0.4 };
	struct refine *r = refine_new(g, &c, p, 0.1);
	assert_non_null(r);
	/*
	 * Node 4 joins A: only its pairs with A's members change.
	 *   pair  edge?  before (shared, P)   after (shared, P)      factor
	 *   4-0   no     -, 0.1  -> 0.9       A, 0.55   -> 0.45      0.45/0.9
	 *   4-1   yes    -, 0.1               A, 0.55                0.55/0.1
	 *   4-2   no     B, 0.46 -> 0.54      A,B, 0.73 -> 0.27      0.27/0.54
	 *   4-3   yes    B, 0.46              A,B, 0.73              0.73/0.46
	 * dL = ln 0.5 + ln 5.5 + ln 0.5 + ln(0.73/0.46) = 0.7802869...
	 */
	double want = log(0.5) + log(5.5) + log(0.5) + log(0.73 / 0.46);
	assert_true(fabs(refine_delta(r, 4, 0) - want) < 1e-12);
	/*
	 * Node 2 leaves B: its pairs with 3 and 4 change.
	 *   2-3   yes    A,B, 0.73            A, 0.55                0.55/0.73
	 *   2-4   no     B, 0.46 -> 0.54      -, 0.1    -> 0.9       0.9/0.54
	 * dL = ln(0.55/0.73) + ln(0.9/0.54) = 0.2277095...
	 */
	want = log(0.55 / 0.73) + log(0.9 / 0.54);
	assert_true(fabs(refine_delta(r, 2, 1) - want) < 1e-12);
	/* Node 0 joins B (one neighbour in B: node 2):
	 *   0-2   yes    A, 0.55              A,B, 0.73              0.73/0.55
	 *   0-3   no     A, 0.55 -> 0.45      A,B, 0.73 -> 0.27      0.27/0.45
	 *   0-4   no     -, 0.1  -> 0.9       B, 0.46   -> 0.54      0.54/0.9 */
	want = log(0.73 / 0.55) + log(0.27 / 0.45) + log(0.54 / 0.9);
	assert_true(fabs(refine_delta(r, 0, 1) - want) < 1e-12);
	refine_free(r);
	cover_release(&c);
	graph_free(g);
}

/* The AGM log-likelihood by its definition, over all n(n-1)/2 pairs
 * (Yang & Leskovec, ICDM 2012, eq. 1): independent of agm.c. */
static double pairs_loglik(const struct graph *g, const struct cover *c, const double *p,
			   double eps)
{
	uint32_t n = g->n;
	unsigned char *in = calloc((size_t)n * c->k, 1);
	assert_non_null(in);
	for (uint32_t i = 0; i < c->k; i++)
		for (uint64_t j = c->off[i]; j < c->off[i + 1]; j++)
			in[(size_t)c->mem[j] * c->k + i] = 1;
	double sum = 0.0;
	for (uint32_t u = 0; u < n; u++)
		for (uint32_t v = u + 1; v < n; v++) {
			double stay = 1.0 - eps;
			for (uint32_t i = 0; i < c->k; i++)
				if (in[(size_t)u * c->k + i] && in[(size_t)v * c->k + i])
					stay *= 1.0 - p[i];
			sum += graph_has_edge(g, u, v) ? log(1.0 - stay) : log(stay);
		}
	free(in);
	return sum;
}

/* A random graph of n nodes (link probability 0.15) and a random cover of
 * k communities (each node in each with probability 0.25). */
static struct graph *random_case(struct rng *r, uint32_t n, uint32_t k, struct cover *c)
{
	uint32_t *pairs = malloc(sizeof *pairs * n * n);
	uint32_t *node = malloc(sizeof *node * n * k), *comm = malloc(sizeof *comm * n * k);
	assert_non_null(pairs);
	assert_non_null(node);
	assert_non_null(comm);
	uint64_t np = 0, nm = 0;
	for (uint32_t u = 0; u < n; u++)
		for (uint32_t v = u + 1; v < n; v++)
			if (rng_uniform(r) < 0.15) {
				pairs[2 * np] = u;
				pairs[2 * np + 1] = v;
				np++;
			}
	for (uint32_t u = 0; u < n; u++)
		for (uint32_t i = 0; i < k; i++)
			if (rng_uniform(r) < 0.25) {
				node[nm] = u;
				comm[nm] = i;
				nm++;
			}
	struct graph *g = graph_from_pairs(n, pairs, np, NULL);
	assert_non_null(g);
	assert_int_equal(cover_from_pairs(c, n, node, comm, nm), 0);
	free(pairs);
	free(node);
	free(comm);
	return g;
}

static void test_delta_equals_loglik_difference_for_random_moves(void **state)
{
	(void)state;
	struct rng rng;
	rng_init(&rng, 77);
	const double eps = 0.01;
	for (int trial = 0; trial < 3; trial++) {
		struct cover c;
		struct graph *g = random_case(&rng, 40, 5, &c);
		double p[8];
		for (uint32_t i = 0; i < c.k; i++)
			p[i] = 0.02 + 0.9 * rng_uniform(&rng);
		struct refine *r = refine_new(g, &c, p, eps);
		assert_non_null(r);
		cover_release(&c);
		for (int t = 0; t < 200; t++) {
			uint32_t u = (uint32_t)rng_below(&rng, g->n), k;
			struct cover before, after;
			double pb[8];
			assert_int_equal(refine_cover(r, &before, pb), 0);
			k = before.k;
			uint32_t cc = (uint32_t)rng_below(&rng, k);
			double d = refine_delta(r, u, cc);
			assert_int_equal(refine_toggle(r, u, cc), 0);
			assert_int_equal(refine_cover(r, &after, NULL), 0);
			assert_cover_sane(&after);
			double lb = agm_loglik(g, &before, pb, eps);
			double la = agm_loglik(g, &after, pb, eps);
			/* agm_loglik is itself checked against the pair sum in
			 * test_agm.c; here the pair sum checks the difference too */
			assert_true(fabs(d - (la - lb)) <= 1e-9 * (1.0 + fabs(lb)));
			if (t % 20 == 0) {
				double want = pairs_loglik(g, &after, pb, eps) -
					      pairs_loglik(g, &before, pb, eps);
				assert_true(fabs(d - want) <= 1e-9 * (1.0 + fabs(lb)));
			}
			cover_release(&before);
			cover_release(&after);
		}
		refine_free(r);
		graph_free(g);
	}
}

/* A cover made worse on purpose: each membership of truth dropped with
 * probability drop, and extra random (node, community) memberships added,
 * add * (memberships of truth) of them. */
static void perturb(struct rng *r, const struct cover *truth, double drop, double add,
		    struct cover *out)
{
	uint64_t total = truth->off[truth->k], extra = (uint64_t)(add * (double)total);
	uint32_t *node = malloc(sizeof *node * (total + extra + 1));
	uint32_t *comm = malloc(sizeof *comm * (total + extra + 1));
	assert_non_null(node);
	assert_non_null(comm);
	uint64_t np = 0;
	for (uint32_t i = 0; i < truth->k; i++)
		for (uint64_t j = truth->off[i]; j < truth->off[i + 1]; j++)
			if (rng_uniform(r) >= drop) {
				node[np] = truth->mem[j];
				comm[np++] = i;
			}
	for (uint64_t e = 0; e < extra; e++) {
		node[np] = (uint32_t)rng_below(r, truth->n);
		comm[np++] = (uint32_t)rng_below(r, truth->k);
	}
	/* first appearance numbers the communities: make it 0..k-1 in order */
	uint32_t *n2 = malloc(sizeof *n2 * (np + truth->k)), *c2 = malloc(sizeof *c2 * (np + truth->k));
	assert_non_null(n2);
	assert_non_null(c2);
	uint64_t m = 0;
	for (uint32_t i = 0; i < truth->k; i++)
		for (uint64_t j = 0; j < np; j++)
			if (comm[j] == i) {
				n2[m] = node[j];
				c2[m++] = i;
			}
	assert_int_equal(cover_from_pairs(out, truth->n, n2, c2, m), 0);
	assert_int_equal(out->k, truth->k);
	free(node);
	free(comm);
	free(n2);
	free(c2);
}

static void test_refinement_never_lowers_loglik_and_ends_at_a_local_maximum(void **state)
{
	(void)state;
	struct rng rng;
	rng_init(&rng, 4242);
	for (int trial = 0; trial < 3; trial++) {
		struct cover truth, start;
		struct graph *g = test_planted_ring(&truth, 100 + (uint64_t)trial);
		assert_non_null(g);
		perturb(&rng, &truth, 0.3, 0.2, &start);
		const double eps = 0.002; /* the ring's background (tests/unit/helpers.c) */
		struct refine *r = refine_new(g, &start, NULL, eps);
		assert_non_null(r);
		double p0[8];
		struct cover c0;
		assert_int_equal(refine_cover(r, &c0, p0), 0);
		double l0 = agm_loglik(g, &c0, p0, eps);
		struct refine_params rp;
		refine_params_default(&rp);
		rp.seed = (uint64_t)trial;
		struct refine_report rep;
		assert_int_equal(refine_run(r, &rp, &rep), 0);
		struct cover c1;
		double p1[8];
		assert_int_equal(refine_cover(r, &c1, p1), 0);
		assert_cover_sane(&c1);
		double l1 = agm_loglik(g, &c1, p1, eps);
		printf("perturbed ring %d: loglik %.6f -> %.6f, +%llu -%llu memberships, %u rounds\n",
		       trial, l0, l1, (unsigned long long)rep.added, (unsigned long long)rep.removed,
		       rep.rounds);
		/* the report is the likelihood of the cover it leaves */
		assert_true(fabs(rep.loglik_before - l0) <= 1e-9 * fabs(l0));
		assert_true(fabs(rep.loglik_after - l1) <= 1e-9 * fabs(l1));
		assert_true(l1 >= l0);
		assert_true(rep.added + rep.removed > 0);
		assert_true(rep.converged);
		/* a local maximum: no single toggle gains more than min_gain
		 * (checked for every node and every community) */
		for (uint32_t u = 0; u < g->n; u++)
			for (uint32_t c = 0; c < c1.k; c++)
				assert_true(refine_delta(r, u, c) <= rp.min_gain);
		/* and p is the maximum-likelihood p of the cover it leaves */
		double pm[8];
		assert_int_equal(agm_estimate_p(g, &c1, eps, pm), 0);
		assert_true(agm_loglik(g, &c1, pm, eps) - l1 <= 1e-9 * fabs(l1));
		refine_free(r);
		cover_release(&c0);
		cover_release(&c1);
		cover_release(&start);
		cover_release(&truth);
		graph_free(g);
	}
}

static void test_refinement_recovers_a_perturbed_planted_cover(void **state)
{
	(void)state;
	struct rng rng;
	rng_init(&rng, 9);
	struct cover truth, start, found;
	struct graph *g = test_planted_ring(&truth, 2026);
	assert_non_null(g);
	/* a third of the planted memberships gone, and 20% as many wrong ones */
	perturb(&rng, &truth, 1.0 / 3.0, 0.2, &start);
	struct refine *r = refine_new(g, &start, NULL, 0.002);
	assert_non_null(r);
	struct refine_params rp;
	refine_params_default(&rp);
	struct refine_report rep;
	assert_int_equal(refine_run(r, &rp, &rep), 0);
	assert_int_equal(refine_cover(r, &found, NULL), 0);
	double before = score_onmi_max(&truth, &start), after = score_onmi_max(&truth, &found);
	printf("planted ring, perturbed: ONMI (max, McDaid et al. 2011) against the truth "
	       "%.4f -> %.4f; loglik %.2f -> %.2f; +%llu -%llu memberships in %u rounds, %.3f s\n",
	       before, after, rep.loglik_before, rep.loglik_after,
	       (unsigned long long)rep.added, (unsigned long long)rep.removed, rep.rounds,
	       rep.seconds);
	/* the truth is the planted cover (tests/unit/helpers.c): refinement must
	 * move the perturbed cover towards it */
	assert_true(after > before);
	refine_free(r);
	cover_release(&found);
	cover_release(&start);
	cover_release(&truth);
	graph_free(g);
}

static int stop_now(void *arg)
{
	int *calls = arg;
	(*calls)++;
	return 1;
}

static void test_refinement_after_a_fit_keeps_ids_and_stops_when_asked(void **state)
{
	(void)state;
	struct cover truth;
	struct graph *g = test_planted_ring(&truth, 2026);
	assert_non_null(g);
	struct fit_params fp;
	fit_params_default(&fp);
	fp.k = 8;
	fp.threads = 2;
	fp.starts = 1;
	struct snapshot *s = test_fit_to_end(g, &fp, NULL, NULL);

	struct refine_params rp;
	refine_params_default(&rp);
	struct refine_report rep;
	struct agm out;
	assert_int_equal(refine_agm(g, &s->agm, &s->F, &rp, &out, &rep), 0);
	double before = score_onmi_max(&truth, &s->agm.cover);
	double after = score_onmi_max(&truth, &out.cover);
	printf("planted ring, after a fit (k 8, one start): ONMI %.4f -> %.4f; AGM loglik "
	       "%.2f -> %.2f; +%llu -%llu memberships in %u rounds, %.3f s\n", before, after,
	       rep.loglik_before, rep.loglik_after, (unsigned long long)rep.added,
	       (unsigned long long)rep.removed, rep.rounds, rep.seconds);
	assert_true(rep.loglik_before == s->agm.loglik);
	assert_true(rep.loglik_after == out.loglik);
	assert_true(out.loglik >= s->agm.loglik);
	/* out.loglik checked against the definition */
	double pv[64];
	assert_true(out.cover.k <= 64);
	for (uint32_t i = 0; i < out.cover.k; i++)
		pv[i] = out.comms[i].p;
	double brute = pairs_loglik(g, &out.cover, pv, out.epsilon);
	assert_true(fabs(out.loglik - brute) <= 1e-9 * fabs(brute));
	/* ids are the fit's columns, largest first, strengths from F */
	for (uint32_t i = 0; i < out.cover.k; i++) {
		assert_true(out.comms[i].id < fp.k);
		assert_int_equal(out.comms[i].size, cover_size(&out.cover, i));
		if (i > 0)
			assert_true(out.comms[i - 1].size > out.comms[i].size ||
				    (out.comms[i - 1].size == out.comms[i].size &&
				     out.comms[i - 1].id < out.comms[i].id));
		for (uint64_t j = out.cover.off[i]; j < out.cover.off[i + 1]; j++)
			assert_true(out.strength[j] >= 0.0);
	}
	agm_release(&out);

	/* asked to stop at once: no move, the fit's AGM comes back as it was */
	int calls = 0;
	rp.stop = stop_now;
	rp.arg = &calls;
	assert_int_equal(refine_agm(g, &s->agm, &s->F, &rp, &out, &rep), 0);
	assert_true(calls >= 1);
	assert_true(rep.stopped);
	assert_true(rep.added + rep.removed == 0);
	assert_true(out.loglik == s->agm.loglik);
	assert_int_equal(out.cover.k, s->agm.cover.k);
	agm_release(&out);
	snapshot_release(s);
	cover_release(&truth);
	graph_free(g);
}

/* Football (Girvan & Newman, PNAS 99, 7821-7826, 2002; tests/data/README.md):
 * 12 conferences; the refinement's effect on the ONMI with the conferences
 * is measured and printed, only the likelihood is asserted. */
static void test_refinement_of_a_football_fit_is_measured(void **state)
{
	(void)state;
	struct graph *g = graph_load(test_data("football/edges.tsv"), GRAPH_FORMAT_EDGES);
	assert_non_null(g);
	struct cover truth;
	assert_int_equal(cover_load(&truth, test_data("football/truth.tsv"), g), 0);
	struct fit_params fp;
	fit_params_default(&fp);
	fp.k = 12;
	fp.threads = 2;
	struct snapshot *s = test_fit_to_end(g, &fp, NULL, NULL);
	struct refine_params rp;
	refine_params_default(&rp);
	struct refine_report rep;
	struct agm out;
	assert_int_equal(refine_agm(g, &s->agm, &s->F, &rp, &out, &rep), 0);
	printf("football (k 12, 3 starts): ONMI with the conferences %.4f -> %.4f; AGM loglik "
	       "%.2f -> %.2f; +%llu -%llu memberships in %u rounds, %.4f s\n",
	       score_onmi_max(&truth, &s->agm.cover), score_onmi_max(&truth, &out.cover),
	       rep.loglik_before, rep.loglik_after, (unsigned long long)rep.added,
	       (unsigned long long)rep.removed, rep.rounds, rep.seconds);
	assert_true(out.loglik >= s->agm.loglik);
	agm_release(&out);
	snapshot_release(s);
	cover_release(&truth);
	graph_free(g);
}

/* Nothing to improve: no community at all, and a community without an
 * edge inside (its maximum-likelihood p is 0, so every move is worth 0). */
static void test_empty_covers_are_left_alone(void **state)
{
	(void)state;
	struct graph *g = graph_from_pairs(5, ex_edges, 6, NULL);
	assert_non_null(g);
	struct cover none;
	assert_int_equal(cover_from_pairs(&none, 5, NULL, NULL, 0), 0);
	assert_int_equal(none.k, 0);
	struct refine *r = refine_new(g, &none, NULL, 0.1);
	assert_non_null(r);
	struct refine_params rp;
	refine_params_default(&rp);
	struct refine_report rep;
	assert_int_equal(refine_run(r, &rp, &rep), 0);
	assert_true(rep.converged);
	assert_true(rep.added + rep.removed == 0);
	/* no community: every pair has probability epsilon = 0.1 (Yang &
	 * Leskovec 2012, eq. 1), 6 edges and 4 non-edges */
	assert_true(fabs(rep.loglik_after - (6 * log(0.1) + 4 * log(0.9))) < 1e-12);
	refine_free(r);
	cover_release(&none);

	static const uint32_t sizes[] = { 2 };
	static const uint32_t members[] = { 0, 3 }; /* 0-3 is not an edge */
	struct cover lone;
	test_make_cover(&lone, 5, 1, sizes, members);
	r = refine_new(g, &lone, NULL, 0.1);
	assert_non_null(r);
	assert_int_equal(refine_run(r, &rp, &rep), 0);
	assert_true(rep.converged);
	assert_true(rep.added + rep.removed == 0);
	refine_free(r);
	cover_release(&lone);
	graph_free(g);
}

static void test_rejects_bad_input(void **state)
{
	(void)state;
	struct graph *g = graph_from_pairs(5, ex_edges, 6, NULL);
	struct cover c;
	test_make_cover(&c, 5, 2, ex_sizes, ex_members);
	double p[2] = { 0.5, 0.4 }, bad[2] = { 0.5, 1.5 };
	assert_null(refine_new(g, &c, p, 0.0)); /* epsilon must be > 0 */
	assert_null(refine_new(g, &c, p, 1.0));
	assert_null(refine_new(g, &c, bad, 0.1));
	struct refine *r = refine_new(g, &c, p, 0.1);
	assert_non_null(r);
	assert_true(isnan(refine_delta(r, 5, 0)));
	assert_true(isnan(refine_delta(r, 0, 2)));
	assert_int_equal(refine_toggle(r, 0, 2), -1);
	struct refine_params rp;
	refine_params_default(&rp);
	rp.max_rounds = 0;
	struct refine_report rep;
	assert_int_equal(refine_run(r, &rp, &rep), -1);
	refine_free(r);
	refine_free(NULL);
	cover_release(&c);
	graph_free(g);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_delta_matches_hand_computed_moves),
		cmocka_unit_test(test_delta_equals_loglik_difference_for_random_moves),
		cmocka_unit_test(test_refinement_never_lowers_loglik_and_ends_at_a_local_maximum),
		cmocka_unit_test(test_refinement_recovers_a_perturbed_planted_cover),
		cmocka_unit_test(test_refinement_after_a_fit_keeps_ids_and_stops_when_asked),
		cmocka_unit_test(test_refinement_of_a_football_fit_is_measured),
		cmocka_unit_test(test_empty_covers_are_left_alone),
		cmocka_unit_test(test_rejects_bad_input),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
