/*
 * What the pieces of the simulate module share: simulate.c (parameters,
 * the four steps in order), simulate_cover.c (steps 1 to 3: the planted
 * cover), simulate_expect.c (the exact expected edge count and p_c),
 * simulate_edges.c (step 4: the edges), simulate_weights.c (step 5, the
 * weights, with --weighted), simulate_write.c (the planted
 * folder). Not for other modules.
 */
#ifndef COTERIE_SIMULATE_INTERNAL_H
#define COTERIE_SIMULATE_INTERNAL_H

#include <stdint.h>

#include "coterie/rng.h"
#include "coterie/simulate.h"

/* Independent streams: one tag per step, one index per item. */
enum { S_MEMBERSHIPS = 1, S_SIZES, S_DEAL, S_LINKPROB, S_COMMUNITY, S_BACKGROUND, S_WEIGHT };
#define BACKGROUND_SLICES 64u

/* Seed r with the stream of (seed, tag, index): no step's draws depend on
 * another's, and an item's do not depend on the thread drawing it. */
void simulate_stream(struct rng *r, uint64_t seed, uint64_t tag, uint64_t index);

/* Each node's communities of cover cv (borrowed), increasing:
 * (*ncom)[(*noff)[u] .. (*noff)[u + 1]). Both caller frees with free().
 * Returns 0 or -1 (memory). */
int simulate_node_lists(const struct cover *cv, uint64_t **noff, uint32_t **ncom);
/* The communities u and v share, increasing, into set (room for
 * SIMULATE_MAX_MEMBERSHIPS), from simulate_node_lists()' arrays; returns
 * their count. (simulate_expect.c) */
uint32_t simulate_shared(const uint64_t *noff, const uint32_t *ncom, uint32_t u, uint32_t v,
			 uint32_t *set);

/* Steps 1 to 3: fill s->truth, s->k, s->overlapping, s->uncovered.
 * Returns 0 or -1 with a message. */
int simulate_plant_cover(const struct simulate_params *p, struct simulate *s);
/* Step 2b: s->p (k probabilities), s->scale and s->expected_edges.
 * Returns 0 or -1 with a message. */
int simulate_plant_probabilities(const struct simulate_params *p, struct simulate *s);
/* Step 4: s->edges, s->m and the draw counts. Returns 0 or -1. */
int simulate_draw_edges(const struct simulate_params *p, struct simulate *s);
/* Step 5 (p->weighted): s->weights, a zero-truncated Poisson count of
 * each edge's planted rate (simulate_weights.c). Returns 0 or -1. */
int simulate_draw_weights(const struct simulate_params *p, struct simulate *s);

#endif
