/*
 * simulate_weights: step 5 of simulate (with --weighted), the weight of
 * every edge drawn, so the planted graph is a sample of the Poisson model
 * of Ball, Karrer & Newman (Phys. Rev. E 84, 036103, 2011) that
 * model_poisson.c fits.
 *
 * The idea: the AGM's link probability of a pair sharing the set S of
 * communities, 1 - (1 - epsilon) prod_{c in S} (1 - p_c), is 1 - e^-L for
 * the rate L = qeps + sum_{c in S} -ln(1 - p_c) (qeps = -ln(1 - epsilon)).
 * So the edges already drawn are the pairs whose Poisson(L) count is
 * above zero, and the weight of an edge is that count given that it is
 * above zero: a zero-truncated Poisson(L) draw. Planted strengths
 * F[u][c] = sqrt(-ln(1 - p_c)) for the members of c make L = F_u . F_v +
 * qeps, the model's own mean. With --mixing the background is part of L,
 * as it is of the link probability.
 *
 * Each edge draws from its own stream (S_WEIGHT, edge index), so the
 * weights do not depend on the thread count, nor the edges on the weights.
 * A rate is capped at SIM_RATE_MAX (p_c = 1 would make it infinite).
 * Directed: the arcs of the second draw (s->back) follow the edges, with
 * streams m, m + 1, ...: an arc's rate is its pair's (both directions
 * share the communities), as F_u . H_v + qeps with F = H planted.
 * Two-mode: the same rate over a pair of two kinds.
 */
#include "simulate-internal.h"

#include <math.h>
#include <stdlib.h>

#include "coterie/model.h"
#include "coterie/util.h"

#define SIM_RATE_MAX 1000.0

/* A Poisson(L) count given that it is at least 1. Below L = 1 by
 * inversion of the truncated law (P(1) = L e^-L / (1 - e^-L), then
 * P(k + 1) = P(k) L / (k + 1)); from 1 on by counting unit-rate arrivals
 * before L and drawing again while none came (at most 1/(1 - e^-1), 1.6
 * draws on average). */
static double truncated_poisson(struct rng *r, double L)
{
	if (L < 1.0) {
		double u = rng_uniform(r), pk = L / expm1(L), cum = pk;
		double k = 1.0;
		while (u > cum && pk > 0.0) {
			pk *= L / (k + 1.0);
			cum += pk;
			k += 1.0;
		}
		return k;
	}
	for (;;) {
		double t = 0.0, k = 0.0;
		for (;;) {
			t -= log1p(-rng_uniform(r)); /* an Exp(1) gap; uniform is in [0, 1) */
			if (t > L)
				break;
			k += 1.0;
		}
		if (k >= 1.0)
			return k;
	}
}

int simulate_draw_weights(const struct simulate_params *p, struct simulate *s)
{
	uint64_t *noff = NULL;
	uint32_t *ncom = NULL;
	double *rate = util_malloc(s->k ? s->k : 1, sizeof *rate);
	uint64_t all = s->m + s->mback;
	s->weights = util_malloc(all ? all : 1, sizeof *s->weights);
	if (!rate || !s->weights || simulate_node_lists(&s->truth, &noff, &ncom)) {
		UTIL_FREE_ALL(rate, noff, ncom);
		return -1;
	}
	for (uint32_t c = 0; c < s->k; c++)
		rate[c] = s->p[c] < 1.0 ? -log1p(-s->p[c]) : SIM_RATE_MAX;
	double qeps = model_qeps(s->epsilon);
	for (uint64_t i = 0; i < all; i++) {
		uint64_t key = i < s->m ? s->edges[i] : s->back[i - s->m];
		uint32_t u = (uint32_t)(key >> 32), v = (uint32_t)(key & 0xffffffffu);
		uint32_t set[SIMULATE_MAX_MEMBERSHIPS];
		uint32_t ns = simulate_shared(noff, ncom, u, v, set);
		double L = qeps;
		for (uint32_t j = 0; j < ns; j++)
			L += rate[set[j]];
		if (L > SIM_RATE_MAX)
			L = SIM_RATE_MAX;
		struct rng r;
		simulate_stream(&r, p->seed, S_WEIGHT, i);
		s->weights[i] = L > 0.0 ? truncated_poisson(&r, L) : 1.0;
	}
	UTIL_FREE_ALL(rate, noff, ncom);
	return 0;
}
