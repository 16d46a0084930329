/*
 * simulate: sample a graph from a planted AGM (see simulate.h).
 *
 * The idea, in four steps, each drawn from its own random stream derived
 * from the seed (so no step's draws depend on another's, or on threads):
 *
 *  1. Memberships per node: a random set of round(overlap * n) nodes gets
 *     2 .. max_memberships (uniformly), the rest 1.
 *  2. Community sizes: floor(X) with X from the power law of density
 *     ~ x^-gamma on [min, max + 1), drawn until they hold every membership
 *     (the last one trimmed, or dropped when trimming would take it below
 *     the minimum), or exactly k of them with -k. The per-node counts are
 *     then nudged (one at a time, over a random order of the nodes) until
 *     they add up to the sizes.
 *  3. Dealing: the membership slots (node u written m_u times) are shuffled
 *     and cut into the communities. A node dealt twice to one community is
 *     swapped with a random slot elsewhere that keeps both sides free of
 *     repeats.
 *  4. Edges: for each community, the pairs of its members are numbered
 *     0 .. s(s-1)/2 - 1 and visited by geometric skips (the gap to the next
 *     drawn pair is Geometric(p_c): floor(log(1-U) / log(1-p_c)); Batagelj
 *     & Brandes, Phys. Rev. E 71, 036113, 2005), so the
 *     cost is the number of pairs drawn, not the number of pairs. The
 *     background draws from all n(n-1)/2 pairs the same way, in 64 fixed
 *     slices of rows. The draws are independent, so a pair is drawn at
 *     least once with probability 1 - (1-eps) prod_{c in S} (1-p_c): the
 *     union of the draws, deduplicated, is exactly a sample of the AGM.
 *     Items (communities, slices) are shared out to the threads through an
 *     atomic counter; each item has its own stream, and the union is
 *     sorted (LSD radix sort of 64-bit keys) and deduplicated, so the result
 *     is the same set whichever thread drew what.
 *
 * The expected edge count is exact: pairs in exactly one community give
 * p_c each, so sum_c C(s_c, 2) p_c counts them; only the pairs sharing two
 * or more communities are listed (from the nodes in several), by the set
 * they share, and corrected to 1 - prod (1 - p_c). A mean-degree target is
 * met by bisection on the common scale of p_c over this exact expectation.
 *
 * Directed (--directed): the arcs v -> u, u < v, are a second draw of
 * the same cover from streams of their own; the counts are of both draws.
 * Two-mode (--two-mode): the cover is planted on all nodes of both kinds,
 * each community then made to hold both kinds (simulate_cover.c), and
 * step 4 draws only pairs of two kinds, a community's first-kind members
 * against its second-kind ones (a rectangle, not a triangle, of pairs);
 * the expectation counts those pairs only (simulate_expect.c).
 *
 * The one thing a newcomer gets wrong: the pair decoder must step over
 * whole rows of the pair triangle (i -= j; j++) rather than compute square
 * roots, or rounding will skip or repeat pairs near row ends; and the
 * stream of an item must not depend on which thread draws it.
 */
#include "simulate-internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/util.h"

static uint64_t mix64(uint64_t z)
{
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
	z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
	return z ^ (z >> 31);
}

void simulate_stream(struct rng *r, uint64_t seed, uint64_t tag, uint64_t index)
{
	uint64_t x = mix64(seed + 0x9e3779b97f4a7c15ULL * (tag + 1));
	x = mix64(x ^ (index * 0xd1b54a32d192ed03ULL + 0x632be59bd9b4e019ULL));
	rng_init(r, x);
}

void simulate_params_default(struct simulate_params *p)
{
	memset(p, 0, sizeof *p);
	p->n = 1000;
	p->k = 0;
	p->size_min = 10;
	p->size_max = 100;
	p->size_exponent = 2.0;
	p->overlap = 0.1;
	p->max_memberships = 2;
	p->p_lo = p->p_hi = 1.0;
	p->mean_degree = 10.0;
	p->epsilon = 0.0;
	p->mixing = -1.0;
	p->seed = 1;
	p->threads = 1;
}

int simulate_params_check(const struct simulate_params *p)
{
	if (p->n < 2 || p->n > SIMULATE_MAX_NODES)
		return error("the number of nodes must be from 2 to %u, not %u", SIMULATE_MAX_NODES,
			     p->n);
	if (p->second && (p->second > SIMULATE_MAX_NODES - p->n))
		return error("%u nodes of the first kind and %u of the second are more than %u",
			     p->n, p->second, SIMULATE_MAX_NODES);
	if (p->second && p->directed)
		return error("a two-mode planted graph cannot be directed");
	uint32_t all = p->n + p->second; /* both kinds */
	if (p->size_min < 2 || p->size_min > p->size_max)
		return error("community sizes must satisfy 2 <= min <= max, not %u:%u", p->size_min,
			     p->size_max);
	if (p->size_max > all)
		return error("communities of up to %u members do not fit in %u nodes", p->size_max,
			     all);
	if (!(p->size_exponent >= 0.0 && p->size_exponent <= 100.0))
		return error("the size exponent must be from 0 to 100");
	if (!(p->overlap >= 0.0 && p->overlap <= 1.0))
		return error("the overlapping share must be from 0 to 1");
	if (p->max_memberships < 2 || p->max_memberships > SIMULATE_MAX_MEMBERSHIPS)
		return error("the most memberships per node must be from 2 to %u, not %u",
			     SIMULATE_MAX_MEMBERSHIPS, p->max_memberships);
	if (!(p->p_lo >= 0.0 && p->p_lo <= p->p_hi && p->p_hi <= 1.0))
		return error("link probabilities must satisfy 0 <= low <= high <= 1");
	if (!(p->mean_degree >= 0.0 && p->mean_degree < (double)all))
		return error("the mean degree must be from 0 to the number of nodes less one");
	if (p->mean_degree > 0.0 && p->p_hi <= 0.0)
		return error("a mean degree needs link probabilities above 0");
	if (p->even_degrees && !(p->mean_degree > 0.0))
		return error("even degrees need a mean degree to aim at");
	if (!(p->epsilon >= 0.0 && p->epsilon < 1.0))
		return error("the background probability must be from 0 to below 1");
	if (p->mixing >= 0.0) {
		if (!(p->mixing < 1.0))
			return error("the mixing share must be from 0 to below 1");
		if (p->epsilon > 0.0)
			return error("mixing and epsilon cannot both be given: mixing solves epsilon");
		if (!(p->mean_degree > 0.0))
			return error("mixing needs a mean degree to share out");
	}
	if (p->threads < 1)
		return error("at least one thread is needed");
	uint32_t cap = p->max_memberships;
	if (p->k) {
		if (p->k < cap)
			cap = p->k;
		if ((uint64_t)p->k * p->size_min > (uint64_t)all * cap)
			return error("%u communities of at least %u members need more than %u nodes "
				     "with at most %u memberships each", p->k, p->size_min, all, cap);
	}
	return 0;
}

/* The edges of keys[0 .. m) whose ends share no community, marking
 * their ends in seen. */
static uint64_t count_outside(const uint64_t *keys, uint64_t m, const uint64_t *noff,
			      const uint32_t *ncom, uint8_t *seen)
{
	uint64_t outside = 0;
	for (uint64_t i = 0; i < m; i++) {
		uint32_t u = (uint32_t)(keys[i] >> 32), v = (uint32_t)(keys[i] & 0xffffffffu);
		seen[u] = seen[v] = 1;
		uint64_t a = noff[u], b = noff[v];
		while (a < noff[u + 1] && b < noff[v + 1] && ncom[a] != ncom[b]) {
			if (ncom[a] < ncom[b])
				a++;
			else
				b++;
		}
		outside += !(a < noff[u + 1] && b < noff[v + 1]);
	}
	return outside;
}

/* The isolated nodes, and the edges (directed: arcs of both draws) whose
 * ends share no community (s->outside_edges). Returns 0 or -1. */
static int count_isolated_and_outside(struct simulate *s)
{
	uint32_t n = s->n;
	uint8_t *seen = util_calloc(n, 1);
	uint64_t *noff = NULL;
	uint32_t *ncom = NULL;
	if (!seen || simulate_node_lists(&s->truth, &noff, &ncom)) {
		free(seen);
		return -1;
	}
	s->outside_edges = count_outside(s->edges, s->m, noff, ncom, seen) +
			   count_outside(s->back, s->mback, noff, ncom, seen);
	s->isolated = 0;
	for (uint32_t u = 0; u < n; u++)
		s->isolated += !seen[u];
	UTIL_FREE_ALL(seen, noff, ncom);
	return 0;
}

/* A directed graph's arcs v -> u (u < v): a draw of the same cover and
 * probabilities from a stream of their own (the arcs u -> v are the usual
 * draw, made after this one), so the two directions of a pair are
 * independent and each has the AGM's probability. The draw's counts are
 * kept in back_counts[4] (communities, background, duplicates, background
 * alone) to be added to the other draw's. */
static int draw_back(const struct simulate_params *p, struct simulate *out,
		     uint64_t back_counts[4])
{
	struct simulate_params q = *p;
	q.seed = p->seed ^ 0x5eed0fd1ec7edULL;
	if (simulate_draw_edges(&q, out))
		return -1;
	out->back = out->edges;
	out->mback = out->m;
	out->edges = NULL;
	out->m = 0;
	back_counts[0] = out->drawn_communities;
	back_counts[1] = out->drawn_background;
	back_counts[2] = out->duplicates;
	back_counts[3] = out->background_only;
	return 0;
}

/* Directed: the counts and expectations of both directions' draws. */
static void count_both_draws(struct simulate *s, const uint64_t back_counts[4])
{
	s->drawn_communities += back_counts[0];
	s->drawn_background += back_counts[1];
	s->duplicates += back_counts[2];
	s->background_only += back_counts[3];
	s->expected_edges *= 2.0;
	s->expected_community_edges *= 2.0;
	s->pairs_apart *= 2;
	s->pairs *= 2.0;
}

int simulate_run(const struct simulate_params *p, struct simulate *out)
{
	memset(out, 0, sizeof *out);
	if (simulate_params_check(p))
		return -1;
	/* two-mode: the steps see all nodes of both kinds as n, the
	 * second kind's count as q.second */
	struct simulate_params q = *p;
	q.n = p->n + p->second;
	out->n = q.n;
	out->n1 = p->second ? p->n : 0;
	out->epsilon = p->epsilon;
	uint64_t back_counts[4] = { 0, 0, 0, 0 };
	int rc = simulate_plant_cover(&q, out) || simulate_plant_probabilities(&q, out) ||
			 (q.directed && draw_back(&q, out, back_counts)) ||
			 simulate_draw_edges(&q, out) || count_isolated_and_outside(out) ||
			 (q.weighted && simulate_draw_weights(&q, out)) ? -1 : 0;
	if (!rc && q.directed)
		count_both_draws(out, back_counts);
	if (rc)
		simulate_release(out); /* on failure out holds nothing */
	return rc;
}

void simulate_release(struct simulate *s)
{
	if (!s)
		return;
	cover_release(&s->truth);
	free(s->p);
	free(s->edges);
	free(s->weights);
	free(s->back);
	memset(s, 0, sizeof *s);
}
