/* Tests for simulate: sampling a planted AGM (Yang & Leskovec, ICDM 2012:
 * a pair sharing the set S of communities is linked with probability
 * P(u,v) = 1 - (1 - eps) prod_{c in S} (1 - p_c), independently of every
 * other pair).
 *
 * Statistical checks: the edges are independent Bernoulli(P(u,v)) draws,
 * so any count X of edges over a set of pairs has mean sum P and variance
 * sum P (1 - P) over those pairs, both computed here by visiting every
 * pair of the planted cover (the definition, not the library's shortcut).
 * A check passes when |X - mean| <= 5 sd; for a sum of many independent
 * draws (normal approximation) a false failure has probability about
 * 6e-7 per check. Seeds are fixed, so the tests are repeatable. */
#include "helpers.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/cover.h"
#include "coterie/fit.h"
#include "coterie/graph.h"
#include "coterie/score.h"
#include "coterie/simulate.h"

/* Rules of struct simulate (simulate.h). */
static void assert_simulate_sane(const struct simulate *s)
{
	assert_int_equal(s->truth.n, s->n);
	assert_int_equal(s->truth.k, s->k);
	assert_cover_sane(&s->truth);
	for (uint32_t c = 0; c < s->k; c++) {
		assert_true(cover_size(&s->truth, c) >= 2);
		assert_true(s->p[c] >= 0.0 && s->p[c] <= 1.0);
	}
	for (uint64_t i = 0; i < s->m; i++) {
		uint64_t u = s->edges[i] >> 32, v = s->edges[i] & 0xffffffffu;
		assert_true(u < v);
		assert_true(v < s->n);
		if (i)
			assert_true(s->edges[i - 1] < s->edges[i]);
	}
	assert_true(s->drawn_communities + s->drawn_background ==
		    s->m + s->mback + s->duplicates);
}

static void sim(struct simulate *s, const struct simulate_params *p)
{
	assert_int_equal(simulate_run(p, s), 0);
	assert_simulate_sane(s);
}

/* Each node's communities, increasing: lists[off[u] .. off[u+1]). */
struct memb {
	uint64_t *off;
	uint32_t *lists;
};

static void memb_build(struct memb *mb, const struct cover *c)
{
	mb->off = calloc((size_t)c->n + 1, sizeof *mb->off);
	mb->lists = malloc((c->off[c->k] + 1) * sizeof *mb->lists);
	uint64_t *fill = malloc(((size_t)c->n + 1) * sizeof *fill);
	assert_true(mb->off && mb->lists && fill);
	for (uint64_t i = 0; i < c->off[c->k]; i++)
		mb->off[c->mem[i] + 1]++;
	for (uint32_t u = 0; u < c->n; u++)
		mb->off[u + 1] += mb->off[u];
	memcpy(fill, mb->off, ((size_t)c->n + 1) * sizeof *fill);
	for (uint32_t k = 0; k < c->k; k++)
		for (uint64_t i = c->off[k]; i < c->off[k + 1]; i++)
			mb->lists[fill[c->mem[i]]++] = k;
	free(fill);
}

static void memb_free(struct memb *mb)
{
	free(mb->off);
	free(mb->lists);
}

static uint32_t memb_count(const struct memb *mb, uint32_t u)
{
	return (uint32_t)(mb->off[u + 1] - mb->off[u]);
}

/* P(u, v) by the definition (ICDM 2012): shared communities by merging. */
static double pair_prob(const struct memb *mb, const double *p, double eps, uint32_t u, uint32_t v)
{
	double stay = 1.0 - eps;
	uint64_t a = mb->off[u], b = mb->off[v];
	while (a < mb->off[u + 1] && b < mb->off[v + 1]) {
		if (mb->lists[a] == mb->lists[b]) {
			stay *= 1.0 - p[mb->lists[a]];
			a++;
			b++;
		} else if (mb->lists[a] < mb->lists[b]) {
			a++;
		} else {
			b++;
		}
	}
	return 1.0 - stay;
}

static int cmp_u64(const void *a, const void *b)
{
	uint64_t x = *(const uint64_t *)a, y = *(const uint64_t *)b;
	return (x > y) - (x < y);
}

static int has_edge(const struct simulate *s, uint32_t u, uint32_t v)
{
	uint64_t key = u < v ? ((uint64_t)u << 32) | v : ((uint64_t)v << 32) | u;
	return bsearch(&key, s->edges, s->m, sizeof key, cmp_u64) != NULL;
}

/* Each node's degree in the sampled edges (caller frees). */
static uint64_t *degrees_of(const struct simulate *s)
{
	uint64_t *deg = calloc(s->n ? s->n : 1, sizeof *deg);
	assert_non_null(deg);
	for (uint64_t i = 0; i < s->m; i++) {
		deg[s->edges[i] >> 32]++;
		deg[s->edges[i] & 0xffffffffu]++;
	}
	return deg;
}

static void assert_within_5sd(double x, double mean, double var)
{
	double sd = sqrt(var);
	if (fabs(x - mean) > 5.0 * sd + 1e-9)
		fail_msg("%.1f is more than 5 sd from its expectation %.3f (sd %.3f)", x, mean, sd);
}

static void params_overlapping(struct simulate_params *p, uint64_t seed)
{
	simulate_params_default(p);
	p->n = 600;
	p->size_min = 10;
	p->size_max = 80;
	p->overlap = 0.3;
	p->max_memberships = 3;
	p->p_lo = 0.05;
	p->p_hi = 0.4;
	p->mean_degree = 0.0;
	p->epsilon = 0.003;
	p->seed = seed;
	p->threads = 2;
}

/* ------------------------------------------------------------------ */

static void test_expected_edges_match_hand_computed_cover(void **state)
{
	(void)state;
	/* 4 nodes; community 0 = {0,1,2} with p 0.5, community 1 = {1,2,3} with
	 * p 0.4, eps 0.1. By hand, P = 1 - 0.9 * prod(1 - p_c):
	 *   (0,1), (0,2): 1 - 0.9*0.5 = 0.55 each
	 *   (1,2), in both: 1 - 0.9*0.5*0.6 = 0.73
	 *   (1,3), (2,3): 1 - 0.9*0.6 = 0.46 each
	 *   (0,3), in none: 0.1
	 * sum = 0.55 + 0.55 + 0.73 + 0.46 + 0.46 + 0.1 = 2.85 */
	const uint32_t sizes[] = { 3, 3 }, members[] = { 0, 1, 2, 1, 2, 3 };
	struct cover c;
	test_make_cover(&c, 4, 2, sizes, members);
	const double p[] = { 0.5, 0.4 };
	assert_true(fabs(simulate_expected_edges(&c, p, 0.1) - 2.85) < 1e-12);
	cover_release(&c);
}

static void test_expected_edges_match_every_pair_summed(void **state)
{
	(void)state;
	struct simulate_params p;
	params_overlapping(&p, 11);
	struct simulate s;
	sim(&s, &p);
	struct memb mb;
	memb_build(&mb, &s.truth);
	double e = 0.0;
	for (uint32_t u = 0; u < s.n; u++)
		for (uint32_t v = u + 1; v < s.n; v++)
			e += pair_prob(&mb, s.p, p.epsilon, u, v);
	/* the definition summed over all 179700 pairs; rounding only */
	assert_true(fabs(s.expected_edges - e) <= 1e-9 * e);
	memb_free(&mb);
	simulate_release(&s);
}

static void test_dense_overlap_is_counted_exactly(void **state)
{
	(void)state;
	/* every node in 2 to 5 of a few large communities: most pairs share
	 * two or more, in many different sets */
	struct simulate_params p;
	simulate_params_default(&p);
	p.n = 400;
	p.size_min = 100;
	p.size_max = 250;
	p.overlap = 1.0;
	p.max_memberships = 5;
	p.p_lo = 0.01;
	p.p_hi = 0.2;
	p.mean_degree = 0.0;
	p.epsilon = 0.01;
	p.seed = 2;
	struct simulate s;
	sim(&s, &p);
	struct memb mb;
	memb_build(&mb, &s.truth);
	double mean = 0.0, var = 0.0;
	uint64_t multi = 0;
	for (uint32_t u = 0; u < s.n; u++)
		for (uint32_t v = u + 1; v < s.n; v++) {
			double q = pair_prob(&mb, s.p, p.epsilon, u, v);
			mean += q;
			var += q * (1.0 - q);
			uint64_t a = mb.off[u], b = mb.off[v], shared = 0;
			while (a < mb.off[u + 1] && b < mb.off[v + 1]) {
				uint32_t x = mb.lists[a], y = mb.lists[b];
				shared += x == y;
				a += x <= y;
				b += y <= x;
			}
			multi += shared >= 2;
		}
	assert_true(multi > 10000); /* the case this test is about */
	/* the definition summed over every pair; rounding only */
	assert_true(fabs(s.expected_edges - mean) <= 1e-9 * mean);
	assert_within_5sd((double)s.m, mean, var);
	memb_free(&mb);
	simulate_release(&s);
}

static void test_edge_count_within_five_sd_of_the_model(void **state)
{
	(void)state;
	for (uint64_t seed = 1; seed <= 3; seed++) {
		struct simulate_params p;
		params_overlapping(&p, seed);
		struct simulate s;
		sim(&s, &p);
		struct memb mb;
		memb_build(&mb, &s.truth);
		double mean = 0.0, var = 0.0;
		for (uint32_t u = 0; u < s.n; u++)
			for (uint32_t v = u + 1; v < s.n; v++) {
				double q = pair_prob(&mb, s.p, p.epsilon, u, v);
				mean += q;
				var += q * (1.0 - q);
			}
		/* mean and variance of a sum of independent Bernoulli draws */
		assert_within_5sd((double)s.m, mean, var);
		memb_free(&mb);
		simulate_release(&s);
	}
}

static void test_internal_edges_of_each_community_within_five_sd(void **state)
{
	(void)state;
	struct simulate_params p;
	params_overlapping(&p, 5);
	struct simulate s;
	sim(&s, &p);
	struct memb mb;
	memb_build(&mb, &s.truth);
	assert_true(s.k >= 10);
	for (uint32_t c = 0; c < s.k; c++) {
		const uint32_t *mem = s.truth.mem + s.truth.off[c];
		uint32_t sz = cover_size(&s.truth, c);
		double mean = 0.0, var = 0.0, x = 0.0;
		for (uint32_t i = 0; i < sz; i++)
			for (uint32_t j = i + 1; j < sz; j++) {
				double q = pair_prob(&mb, s.p, p.epsilon, mem[i], mem[j]);
				mean += q;
				var += q * (1.0 - q);
				x += has_edge(&s, mem[i], mem[j]);
			}
		/* the density of community c is p_c, raised by the background and
		 * by the other communities its pairs share */
		assert_within_5sd(x, mean, var);
	}
	memb_free(&mb);
	simulate_release(&s);
}

static void test_degrees_by_membership_count_within_five_sd(void **state)
{
	(void)state;
	struct simulate_params p;
	params_overlapping(&p, 7);
	struct simulate s;
	sim(&s, &p);
	struct memb mb;
	memb_build(&mb, &s.truth);
	uint64_t *deg = degrees_of(&s);
	for (uint32_t group = 1; group <= p.max_memberships; group++) {
		/* X = sum of the degrees of the nodes in `group` communities: an edge
		 * counts w = (ends in the group) times, so E X = sum w P and
		 * Var X = sum w^2 P (1 - P) over all pairs */
		double mean = 0.0, var = 0.0, x = 0.0;
		uint32_t members = 0;
		for (uint32_t u = 0; u < s.n; u++)
			if (memb_count(&mb, u) == group) {
				x += (double)deg[u];
				members++;
			}
		assert_true(members > 20);
		for (uint32_t u = 0; u < s.n; u++)
			for (uint32_t v = u + 1; v < s.n; v++) {
				double w = (memb_count(&mb, u) == group) + (memb_count(&mb, v) == group);
				if (w == 0)
					continue;
				double q = pair_prob(&mb, s.p, p.epsilon, u, v);
				mean += w * q;
				var += w * w * q * (1.0 - q);
			}
		assert_within_5sd(x, mean, var);
	}
	free(deg);
	memb_free(&mb);
	simulate_release(&s);
}

static void test_certain_links_give_exactly_the_shared_pairs(void **state)
{
	(void)state;
	/* p_c = 1 and eps = 0: P is 1 on pairs sharing a community, 0 elsewhere,
	 * so the sample is that set exactly; a skipped or repeated pair in the
	 * pair decoder would show */
	struct simulate_params p;
	params_overlapping(&p, 9);
	p.p_lo = p.p_hi = 1.0;
	p.epsilon = 0.0;
	struct simulate s;
	sim(&s, &p);
	struct memb mb;
	memb_build(&mb, &s.truth);
	uint64_t want = 0;
	for (uint32_t u = 0; u < s.n; u++)
		for (uint32_t v = u + 1; v < s.n; v++) {
			int shared = pair_prob(&mb, s.p, 0.0, u, v) == 1.0;
			want += shared;
			if (shared != has_edge(&s, u, v))
				fail_msg("pair %u-%u: shared %d, edge %d", u, v, shared, has_edge(&s, u, v));
		}
	assert_int_equal(s.m, want);
	assert_true(s.duplicates > 0); /* 30% overlap: some pairs share two */
	memb_free(&mb);
	simulate_release(&s);
}

static void test_background_is_uniform_over_pairs(void **state)
{
	(void)state;
	/* p_c = 0: every edge is background, Bernoulli(eps) per pair. The pairs
	 * are cut into 64 slices of rows; check the count of edges among the
	 * first n/4 nodes, the last n/4 and between the halves */
	struct simulate_params p;
	simulate_params_default(&p);
	p.n = 2000;
	p.p_lo = p.p_hi = 0.0;
	p.mean_degree = 0.0;
	p.epsilon = 0.01;
	p.threads = 3;
	struct simulate s;
	sim(&s, &p);
	double eps = p.epsilon, n = p.n, q = n / 4;
	double all = n * (n - 1) / 2, quarter = q * (q - 1) / 2, across = (n / 2) * (n / 2);
	double first = 0, last = 0, cross = 0;
	for (uint64_t i = 0; i < s.m; i++) {
		uint64_t u = s.edges[i] >> 32, v = s.edges[i] & 0xffffffffu;
		first += v < q;
		last += u >= n - q;
		cross += u < n / 2 && v >= n / 2;
	}
	/* binomial counts: mean N eps, variance N eps (1 - eps) */
	assert_within_5sd((double)s.m, all * eps, all * eps * (1 - eps));
	assert_within_5sd(first, quarter * eps, quarter * eps * (1 - eps));
	assert_within_5sd(last, quarter * eps, quarter * eps * (1 - eps));
	assert_within_5sd(cross, across * eps, across * eps * (1 - eps));
	assert_int_equal(s.drawn_communities, 0);
	simulate_release(&s);
}

/* The size law: X with density ~ x^-g on [a, b), size floor(X); so
 * P(size = s) = (F(s+1) - F(s)) with F(x) = (x^(1-g) - a^(1-g)) /
 * (b^(1-g) - a^(1-g)) (inverse-transform sampling, e.g. Clauset, Shalizi
 * & Newman, SIAM Review 51, 2009, appendix D, truncated at b). */
static double size_prob(double a, double b, double g, uint32_t s)
{
	double e = 1.0 - g;
	double lo = pow(a, e), hi = pow(b, e);
	return (pow(s + 1.0, e) - pow((double)s, e)) / (hi - lo);
}

static void test_sizes_follow_the_truncated_power_law(void **state)
{
	(void)state;
	struct simulate_params p;
	simulate_params_default(&p);
	p.n = 20000;
	p.k = 3000;
	p.size_min = 5;
	p.size_max = 60;
	p.size_exponent = 2.5;
	p.overlap = 0.2;
	p.max_memberships = 4;
	p.p_lo = p.p_hi = 0.0;
	p.mean_degree = 0.0;
	struct simulate s;
	sim(&s, &p);
	assert_int_equal(s.k, 3000); /* -k gives exactly k */
	double a = p.size_min, b = p.size_max + 1.0, g = p.size_exponent;
	double mean = 0.0, sq = 0.0, pmin = size_prob(a, b, g, p.size_min);
	for (uint32_t x = p.size_min; x <= p.size_max; x++) {
		mean += x * size_prob(a, b, g, x);
		sq += (double)x * x * size_prob(a, b, g, x);
	}
	double sum = 0.0, at_min = 0.0;
	for (uint32_t c = 0; c < s.k; c++) {
		uint32_t z = cover_size(&s.truth, c);
		assert_true(z >= p.size_min && z <= p.size_max);
		sum += z;
		at_min += z == p.size_min;
	}
	/* the sum of k independent sizes: mean k E, variance k Var */
	assert_within_5sd(sum, s.k * mean, s.k * (sq - mean * mean));
	/* how many are of the smallest size: binomial(k, P(min)) */
	assert_within_5sd(at_min, s.k * pmin, s.k * pmin * (1 - pmin));
	simulate_release(&s);
}

static void test_derived_communities_hold_every_membership(void **state)
{
	(void)state;
	/* without k: round(0.25 n) nodes get 2 .. 3 memberships, the others 1;
	 * the sizes are drawn until they hold them all, the last trimmed or
	 * dropped, so at most size_min - 1 memberships are taken back, from
	 * nodes in two or more */
	struct simulate_params p;
	simulate_params_default(&p);
	p.n = 4000;
	p.overlap = 0.25;
	p.max_memberships = 3;
	p.size_min = 8;
	p.size_max = 200;
	p.mean_degree = 0.0;
	p.p_lo = p.p_hi = 0.01;
	struct simulate s;
	sim(&s, &p);
	struct memb mb;
	memb_build(&mb, &s.truth);
	uint32_t over = 0, none = 0, most = 0;
	for (uint32_t u = 0; u < s.n; u++) {
		uint32_t m = memb_count(&mb, u);
		over += m >= 2;
		none += m == 0;
		most = m > most ? m : most;
	}
	assert_int_equal(none, 0);
	assert_int_equal(s.uncovered, 0);
	assert_int_equal(over, s.overlapping);
	assert_true(over <= 1000 && over + (p.size_min - 1) >= 1000);
	assert_true(most <= 3);
	/* the memberships: n + the extra ones, about (3 - 1 + 2 - 1) / 2 = 1.5
	 * per overlapping node; exact count n + sum (m_u - 1) */
	uint64_t extra = s.truth.off[s.k] - s.n;
	assert_true(extra >= 1000 - (p.size_min - 1) && extra <= 2000);
	memb_free(&mb);
	simulate_release(&s);
}

static void test_fixed_k_short_of_memberships_keeps_the_overlap_share(void **state)
{
	(void)state;
	/* -k 20 with sizes 10..100 holds a few hundred memberships, far fewer
	 * than the 1000 + 200 drawn for n = 1000 and overlap 0.2: nodes of one
	 * community are left uncovered first, so that the nodes in two or more
	 * stay 0.2 of the covered ones (before this rule the overlap was
	 * taken back first and none was left) */
	struct simulate_params p;
	simulate_params_default(&p);
	p.n = 1000;
	p.k = 20;
	p.overlap = 0.2;
	p.size_min = 10;
	p.size_max = 100;
	struct simulate s;
	sim(&s, &p);
	struct memb mb;
	memb_build(&mb, &s.truth);
	uint32_t over = 0, covered = 0;
	for (uint32_t u = 0; u < s.n; u++) {
		uint32_t m = memb_count(&mb, u);
		over += m >= 2;
		covered += m >= 1;
	}
	assert_int_equal(s.k, 20);
	assert_int_equal(over, s.overlapping);
	assert_int_equal(s.n - covered, s.uncovered);
	assert_true(covered < s.n);
	/* the share among the covered nodes: 0.2, up to one node of rounding
	 * each way */
	assert_true(over >= 1 && (double)over <= 0.2 * covered + 1.0 &&
		    (double)over >= 0.2 * covered - 1.0);
	memb_free(&mb);
	simulate_release(&s);
}

static void test_mean_degree_target_is_met_in_expectation(void **state)
{
	(void)state;
	struct simulate_params p;
	params_overlapping(&p, 13);
	p.mean_degree = 12.0;
	p.p_lo = 0.5;
	p.p_hi = 1.0; /* weights: p_c = scale * w_c */
	struct simulate s;
	sim(&s, &p);
	struct memb mb;
	memb_build(&mb, &s.truth);
	double mean = 0.0, var = 0.0;
	for (uint32_t u = 0; u < s.n; u++)
		for (uint32_t v = u + 1; v < s.n; v++) {
			double q = pair_prob(&mb, s.p, p.epsilon, u, v);
			mean += q;
			var += q * (1.0 - q);
		}
	/* the target: n D / 2 expected edges, by the definition */
	assert_true(fabs(mean - p.n * p.mean_degree / 2.0) < 1e-6 * mean);
	assert_within_5sd((double)s.m, mean, var);
	/* one common scale: p_c / p_c' = w_c / w_c', all within [0.5, 1] scale */
	for (uint32_t c = 0; c < s.k; c++)
		assert_true(s.p[c] >= 0.5 * s.scale - 1e-12 && s.p[c] <= s.scale + 1e-12);
	memb_free(&mb);
	simulate_release(&s);
}

static void test_even_degrees_give_small_and_large_communities_alike(void **state)
{
	(void)state;
	/* p_c = scale / (s_c - 1): a member of c expects (s_c - 1) p_c = scale
	 * neighbours in c whatever its size. With no overlap and no background
	 * the expected degree is the scale for every covered node, so the
	 * degrees summed over the members of small communities and over those
	 * of large ones each match it within 5 sd (variance: every pair inside
	 * counts twice, 4 P (1 - P) per pair) */
	struct simulate_params p;
	simulate_params_default(&p);
	p.n = 3000;
	p.size_min = 10;
	p.size_max = 150;
	p.overlap = 0.0;
	p.mean_degree = 6.0;
	p.even_degrees = 1;
	p.seed = 17;
	struct simulate s;
	sim(&s, &p);
	uint64_t *deg = degrees_of(&s);
	double x[2] = { 0, 0 }, mean[2] = { 0, 0 }, var[2] = { 0, 0 };
	uint32_t groups[2] = { 0, 0 };
	for (uint32_t c = 0; c < s.k; c++) {
		uint32_t z = cover_size(&s.truth, c);
		assert_true(fabs(s.p[c] * (z - 1) - s.scale) < 1e-9 * s.scale);
		int big = z > 30;
		groups[big]++;
		for (uint64_t i = s.truth.off[c]; i < s.truth.off[c + 1]; i++) {
			x[big] += (double)deg[s.truth.mem[i]];
			mean[big] += s.scale;
		}
		var[big] += 4.0 * z * (z - 1) / 2.0 * s.p[c] * (1.0 - s.p[c]);
	}
	assert_true(groups[0] > 5 && groups[1] > 5);
	assert_within_5sd(x[0], mean[0], var[0]);
	assert_within_5sd(x[1], mean[1], var[1]);
	/* the covered nodes' mean degree is then the scale: n D / 2 edges */
	assert_true(fabs(s.expected_edges - p.n * p.mean_degree / 2.0) < 1e-6 * s.expected_edges);
	free(deg);
	simulate_release(&s);
}

static void test_unreachable_mean_degree_is_refused(void **state)
{
	(void)state;
	struct simulate_params p;
	simulate_params_default(&p);
	p.n = 1000;
	p.size_min = 5;
	p.size_max = 10;
	p.overlap = 0.0;
	/* every community complete: each node has at most 9 neighbours */
	p.mean_degree = 20.0;
	struct simulate s;
	assert_int_equal(simulate_run(&p, &s), -1);
	/* the background alone: eps (n - 1) = 0.05 * 999 ~ 50 > 20 */
	p.mean_degree = 5.0;
	p.epsilon = 0.05;
	assert_int_equal(simulate_run(&p, &s), -1);
	/* too many edges to hold: 100000 nodes, background 0.5 alone expects
	 * 0.5 * 100000 * 99999 / 2 ~ 2.5e9 > SIMULATE_MAX_EDGES (1e9) */
	simulate_params_default(&p);
	p.n = 100000;
	p.mean_degree = 0.0;
	p.epsilon = 0.5;
	assert_int_equal(simulate_run(&p, &s), -1);
}

static void test_bad_parameters_are_refused(void **state)
{
	(void)state;
	struct simulate_params p, q;
	simulate_params_default(&p);
	assert_int_equal(simulate_params_check(&p), 0);
	q = p;
	q.size_max = p.n + 1;
	assert_int_equal(simulate_params_check(&q), -1);
	q = p;
	q.size_min = 1;
	assert_int_equal(simulate_params_check(&q), -1);
	q = p;
	q.size_min = 50;
	q.size_max = 40;
	assert_int_equal(simulate_params_check(&q), -1);
	q = p;
	q.overlap = 1.5;
	assert_int_equal(simulate_params_check(&q), -1);
	q = p;
	q.max_memberships = SIMULATE_MAX_MEMBERSHIPS + 1;
	assert_int_equal(simulate_params_check(&q), -1);
	q = p;
	q.p_lo = 0.5;
	q.p_hi = 0.4;
	assert_int_equal(simulate_params_check(&q), -1);
	q = p;
	q.even_degrees = 1;
	q.mean_degree = 0.0; /* even degrees aim at a mean degree */
	assert_int_equal(simulate_params_check(&q), -1);
	q = p;
	q.epsilon = 1.0;
	assert_int_equal(simulate_params_check(&q), -1);
	q = p;
	q.k = 300; /* 300 communities of >= 10 need 3000 slots; 1000 nodes x 2 hold 2000 */
	assert_int_equal(simulate_params_check(&q), -1);
	assert_int_equal(simulate_prefix_check("v"), 0);
	assert_int_equal(simulate_prefix_check("#v"), -1);
	assert_int_equal(simulate_prefix_check("a\tb"), -1);
	assert_int_equal(simulate_prefix_check("a\x1b[31m"), -1);
}

/* 1 when u and v share a planted community (merging their lists). */
static int shares_any(const struct memb *mb, uint32_t u, uint32_t v)
{
	uint64_t a = mb->off[u], b = mb->off[v];
	while (a < mb->off[u + 1] && b < mb->off[v + 1]) {
		if (mb->lists[a] == mb->lists[b])
			return 1;
		if (mb->lists[a] < mb->lists[b])
			a++;
		else
			b++;
	}
	return 0;
}

static void test_mixing_makes_that_share_of_the_edges_background(void **state)
{
	(void)state;
	/* The recipe of issue 12 made small: power-law sizes 20 .. 300,
	 * exponent 2, 10% of nodes in two communities, mean degree 20. For
	 * each share X, by visiting every pair with the definition of P(u, v):
	 *  - sum P = n D / 2 and sum P with eps 0 = (1 - X) n D / 2, so X of
	 *    the expected edges are the background's (E(eps) - E(0) over E);
	 *  - the pairs sharing no community, N0, counted here, equal
	 *    pairs_apart; each is an edge with probability eps (P with S
	 *    empty), so the edges between them are Binomial(N0, eps);
	 *  - the edges drawn by the background alone: per pair a Bernoulli of
	 *    eps prod (1 - p_c), summed to their mean and variance. */
	const double shares[] = { 0.1, 0.2, 0.3 };
	for (unsigned t = 0; t < 3; t++) {
		struct simulate_params p;
		simulate_params_default(&p);
		p.n = 3000;
		p.size_min = 20;
		p.size_max = 300;
		p.size_exponent = 2.0;
		p.overlap = 0.1;
		p.mean_degree = 20.0;
		p.mixing = shares[t];
		p.seed = 40 + t;
		p.threads = 2;
		struct simulate s;
		sim(&s, &p);
		struct memb mb;
		memb_build(&mb, &s.truth);
		double e = 0.0, e0 = 0.0, alone = 0.0, alone_var = 0.0;
		uint64_t n0 = 0, outside = 0;
		for (uint32_t u = 0; u < s.n; u++)
			for (uint32_t v = u + 1; v < s.n; v++) {
				double q0 = pair_prob(&mb, s.p, 0.0, u, v), b = s.epsilon * (1.0 - q0);
				e += q0 + b;
				e0 += q0;
				alone += b;
				alone_var += b * (1.0 - b);
				n0 += !shares_any(&mb, u, v);
			}
		for (uint64_t i = 0; i < s.m; i++)
			outside += !shares_any(&mb, (uint32_t)(s.edges[i] >> 32),
					       (uint32_t)(s.edges[i] & 0xffffffffu));
		double target = p.n * p.mean_degree / 2.0, eps = s.epsilon;
		assert_true(eps > 0.0);
		assert_true(fabs(e - target) < 1e-6 * target);
		assert_true(fabs(e0 - (1.0 - p.mixing) * target) < 1e-6 * target);
		assert_true(fabs(s.expected_edges - e) < 1e-6 * e);
		assert_true(fabs(s.expected_community_edges - e0) < 1e-6 * e);
		assert_true(s.pairs_apart == n0);
		assert_true(s.outside_edges == outside);
		assert_within_5sd((double)outside, (double)n0 * eps, (double)n0 * eps * (1.0 - eps));
		assert_within_5sd((double)s.background_only, alone, alone_var);
		assert_true(s.outside_edges <= s.background_only && s.background_only <= s.m);
		memb_free(&mb);
		simulate_release(&s);
	}
}

static void test_mixing_zero_or_absent_draws_the_same_graph(void **state)
{
	(void)state;
	/* mixing 0 solves eps 0: the p_c meet the whole mean degree, as with
	 * no mixing and no background */
	struct simulate_params p;
	simulate_params_default(&p);
	p.n = 2000;
	p.size_min = 20;
	p.size_max = 200;
	struct simulate a, b;
	sim(&a, &p);
	p.mixing = 0.0;
	sim(&b, &p);
	assert_true(b.epsilon == 0.0);
	assert_int_equal(a.m, b.m);
	assert_memory_equal(a.edges, b.edges, a.m * sizeof *a.edges);
	assert_memory_equal(a.p, b.p, a.k * sizeof *a.p);
	assert_int_equal(b.background_only, 0);
	simulate_release(&a);
	simulate_release(&b);
}

static void test_mixing_is_refused_with_epsilon_or_without_mean_degree(void **state)
{
	(void)state;
	struct simulate_params p, q;
	simulate_params_default(&p);
	p.mixing = 0.2;
	assert_int_equal(simulate_params_check(&p), 0);
	q = p;
	q.epsilon = 0.001; /* mixing solves epsilon */
	assert_int_equal(simulate_params_check(&q), -1);
	q = p;
	q.mean_degree = 0.0; /* nothing to share out */
	assert_int_equal(simulate_params_check(&q), -1);
	q = p;
	q.mixing = 1.0; /* no community edge left */
	assert_int_equal(simulate_params_check(&q), -1);
	/* out of reach within the communities: complete communities of 5 to
	 * 10 give each node at most 9 neighbours, short of 0.5 x 30 */
	q = p;
	q.size_min = 5;
	q.size_max = 10;
	q.overlap = 0.0;
	q.mean_degree = 30.0;
	q.mixing = 0.5;
	struct simulate s;
	assert_int_equal(simulate_run(&q, &s), -1);
}

/* Two-mode: every community holds both kinds, every edge joins the two
 * kinds, the expectation is the definition summed over the pairs of two
 * kinds (and pairs_apart counted there), and threads change nothing. */
static void test_two_mode_links_only_kinds_with_exact_expectation(void **state)
{
	(void)state;
	struct simulate_params p;
	params_overlapping(&p, 12);
	p.n = 350;
	p.second = 250;
	struct simulate s, t;
	sim(&s, &p);
	assert_int_equal(s.n, 600);
	assert_int_equal(s.n1, 350);
	for (uint32_t c = 0; c < s.k; c++) {
		const uint32_t *mem = s.truth.mem + s.truth.off[c];
		uint32_t sz = cover_size(&s.truth, c);
		assert_true(mem[0] < 350 && mem[sz - 1] >= 350); /* both kinds */
	}
	for (uint64_t i = 0; i < s.m; i++)
		assert_true((s.edges[i] >> 32) < 350 && (s.edges[i] & 0xffffffffu) >= 350);
	struct memb mb;
	memb_build(&mb, &s.truth);
	double e = 0.0;
	uint64_t apart = 0;
	for (uint32_t u = 0; u < 350; u++)
		for (uint32_t v = 350; v < 600; v++) {
			e += pair_prob(&mb, s.p, p.epsilon, u, v);
			apart += !shares_any(&mb, u, v);
		}
	/* the definition summed over the 350 x 250 pairs of two kinds */
	assert_true(fabs(s.expected_edges - e) <= 1e-9 * e);
	assert_int_equal(s.pairs_apart, apart);
	assert_true(s.pairs == 350.0 * 250.0);
	p.threads = 1;
	sim(&t, &p);
	assert_int_equal(t.m, s.m);
	assert_memory_equal(t.edges, s.edges, s.m * sizeof *s.edges);
	memb_free(&mb);
	simulate_release(&s);
	simulate_release(&t);
}

static void test_same_seed_same_graph_whatever_the_threads(void **state)
{
	(void)state;
	struct simulate_params p;
	params_overlapping(&p, 21);
	struct simulate a, b, c;
	p.threads = 1;
	sim(&a, &p);
	p.threads = 3;
	sim(&b, &p);
	p.seed = 22;
	sim(&c, &p);
	assert_int_equal(a.k, b.k);
	assert_int_equal(a.m, b.m);
	assert_memory_equal(a.edges, b.edges, a.m * sizeof *a.edges);
	assert_memory_equal(a.truth.off, b.truth.off, ((size_t)a.k + 1) * sizeof *a.truth.off);
	assert_memory_equal(a.truth.mem, b.truth.mem, a.truth.off[a.k] * sizeof *a.truth.mem);
	assert_memory_equal(a.p, b.p, a.k * sizeof *a.p);
	/* another seed: another graph */
	assert_false(a.m == c.m && !memcmp(a.edges, c.edges, a.m * sizeof *a.edges));
	simulate_release(&a);
	simulate_release(&b);
	simulate_release(&c);
}

static void test_written_files_read_back(void **state)
{
	(void)state;
	struct simulate_params p;
	params_overlapping(&p, 3);
	/* eps 0.03: a node is isolated with probability below 0.97^599 ~ 1e-8 */
	p.epsilon = 0.03;
	struct simulate s;
	sim(&s, &p);
	const char *dir = test_tmpdir();
	char d[4096];
	snprintf(d, sizeof d, "%s", dir);
	assert_int_equal(simulate_dir_taken(d), 0);
	struct simulate_meta meta = { "test", "n", 0.5 };
	assert_int_equal(simulate_write(d, &s, &p, &meta), 0);
	assert_int_equal(simulate_dir_taken(d), 1);
	char path[4200];
	snprintf(path, sizeof path, "%s/%s", d, SIMULATE_EDGES);
	struct graph *g = graph_load(path, GRAPH_FORMAT_AUTO);
	assert_non_null(g);
	/* every edge read back, between the nodes of the same names */
	assert_int_equal(g->m, s.m);
	assert_int_equal(g->n, s.n - s.isolated);
	for (uint64_t i = 0; i < s.m; i += 97) {
		char a[32], b[32];
		snprintf(a, sizeof a, "n%u", (unsigned)(s.edges[i] >> 32));
		snprintf(b, sizeof b, "n%u", (unsigned)(s.edges[i] & 0xffffffffu));
		int64_t u = graph_find(g, a), v = graph_find(g, b);
		assert_true(u >= 0 && v >= 0);
		assert_true(graph_has_edge(g, (uint32_t)u, (uint32_t)v));
	}
	/* the truth file reads back as the same memberships, by name */
	assert_int_equal(s.isolated, 0);
	uint64_t nm = s.truth.off[s.k];
	uint32_t *node = malloc(nm * sizeof *node), *comm = malloc(nm * sizeof *comm);
	assert_true(node && comm);
	for (uint32_t c = 0; c < s.k; c++)
		for (uint64_t i = s.truth.off[c]; i < s.truth.off[c + 1]; i++) {
			char a[32];
			snprintf(a, sizeof a, "n%u", s.truth.mem[i]);
			int64_t u = graph_find(g, a);
			assert_true(u >= 0);
			node[i] = (uint32_t)u;
			comm[i] = c;
		}
	struct cover want, back;
	assert_int_equal(cover_from_pairs(&want, g->n, node, comm, nm), 0);
	snprintf(path, sizeof path, "%s/%s", d, SIMULATE_TRUTH);
	assert_int_equal(cover_load(&back, path, g), 0);
	assert_int_equal(back.k, want.k);
	assert_memory_equal(back.off, want.off, ((size_t)want.k + 1) * sizeof *want.off);
	assert_memory_equal(back.mem, want.mem, nm * sizeof *want.mem);
	cover_release(&want);
	cover_release(&back);
	free(node);
	free(comm);
	graph_free(g);
	test_rmtree(d);
	simulate_release(&s);
}

static void test_planted_graph_is_recovered_by_the_fit(void **state)
{
	(void)state;
	/* An easy planted graph: 600 nodes, communities of 40 to 80, 10% of the
	 * nodes in two, p_c 0.4, background 0.002. The relaxed AGM is fitted
	 * with the planted k; the ONMI (max form, McDaid et al. 2011) of the
	 * answer against the truth must exceed 0.8: the planted cover is by
	 * construction the model the fit maximises, well separated here
	 * (inside 0.4 against 0.002 outside). */
	struct simulate_params p;
	simulate_params_default(&p);
	p.n = 600;
	p.size_min = 40;
	p.size_max = 80;
	p.size_exponent = 1.5;
	p.overlap = 0.1;
	p.max_memberships = 2;
	p.p_lo = p.p_hi = 0.4;
	p.mean_degree = 0.0;
	p.epsilon = 0.002;
	p.seed = 4;
	struct simulate s;
	sim(&s, &p);
	uint32_t *pairs = malloc(2 * s.m * sizeof *pairs + 1);
	assert_non_null(pairs);
	for (uint64_t i = 0; i < s.m; i++) {
		pairs[2 * i] = (uint32_t)(s.edges[i] >> 32);
		pairs[2 * i + 1] = (uint32_t)(s.edges[i] & 0xffffffffu);
	}
	struct graph *g = graph_from_pairs(s.n, pairs, s.m, NULL);
	free(pairs);
	assert_non_null(g);
	struct fit_params fp;
	fit_params_default(&fp);
	fp.k = s.k;
	fp.threads = 2;
	fp.seed = 1;
	fp.starts = 2;
	fp.max_sweeps = 200;
	struct snapshot *snap = test_fit_to_end(g, &fp, NULL, NULL);
	double onmi = score_onmi_max(&s.truth, &snap->agm.cover);
	print_message("ONMI %.3f\n", onmi);
	if (!(onmi > 0.8))
		fail_msg("ONMI %.3f of the fit against the planted cover (k %u)", onmi, s.k);
	snapshot_release(snap);
	graph_free(g);
	simulate_release(&s);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_expected_edges_match_hand_computed_cover),
		cmocka_unit_test(test_expected_edges_match_every_pair_summed),
		cmocka_unit_test(test_dense_overlap_is_counted_exactly),
		cmocka_unit_test(test_edge_count_within_five_sd_of_the_model),
		cmocka_unit_test(test_internal_edges_of_each_community_within_five_sd),
		cmocka_unit_test(test_degrees_by_membership_count_within_five_sd),
		cmocka_unit_test(test_certain_links_give_exactly_the_shared_pairs),
		cmocka_unit_test(test_background_is_uniform_over_pairs),
		cmocka_unit_test(test_sizes_follow_the_truncated_power_law),
		cmocka_unit_test(test_derived_communities_hold_every_membership),
		cmocka_unit_test(test_fixed_k_short_of_memberships_keeps_the_overlap_share),
		cmocka_unit_test(test_mean_degree_target_is_met_in_expectation),
		cmocka_unit_test(test_even_degrees_give_small_and_large_communities_alike),
		cmocka_unit_test(test_unreachable_mean_degree_is_refused),
		cmocka_unit_test(test_bad_parameters_are_refused),
		cmocka_unit_test(test_mixing_makes_that_share_of_the_edges_background),
		cmocka_unit_test(test_mixing_zero_or_absent_draws_the_same_graph),
		cmocka_unit_test(test_mixing_is_refused_with_epsilon_or_without_mean_degree),
		cmocka_unit_test(test_same_seed_same_graph_whatever_the_threads),
		cmocka_unit_test(test_written_files_read_back),
		cmocka_unit_test(test_planted_graph_is_recovered_by_the_fit),
		cmocka_unit_test(test_two_mode_links_only_kinds_with_exact_expectation),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
