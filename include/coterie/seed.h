/*
 * seed: starting communities from locally minimal ego-nets (Gleich &
 * Seshadhri, KDD 2012).
 *
 * The ego-net of u is {u} + N(u). Its volume is the sum of the degrees of
 * its nodes; its internal edges are deg(u) + t(u), t(u) the triangles
 * through u; its cut is volume - 2 * internal. Conductance is
 * cut / min(volume, 2m - volume). u is a seed when its ego-net's
 * conductance is no larger than that of any neighbour's ego-net.
 */
#ifndef COTERIE_SEED_H
#define COTERIE_SEED_H

#include <stdint.h>

struct graph;
struct model;

struct seed_report {
	uint32_t local_minima; /* locally minimal ego-nets found */
	uint32_t used_minima;  /* of those, used as seeds */
	uint32_t cover;        /* ego-nets of uncovered nodes added next */
	uint32_t random;       /* random ego-nets added to reach k */
};

/* Triangles through each node, in O(m^1.5) (forward algorithm on a
 * degree ordering). tri: n values, borrowed. Returns 0 or -1. */
int seed_triangles(const struct graph *g, uint64_t *tri);

/* Ego-net conductance of every node into phi (n values, borrowed); nodes
 * of degree 0, and ego-nets covering the whole volume, get 1.0. */
int seed_conductance(const struct graph *g, double *phi);

/* Seed an all-zero model of m->k columns: column c gets strength 1 for
 * every node of the c-th seed ego-net. Seeds are the locally minimal
 * ego-nets by increasing conductance (ties by node id; ego-nets that are a
 * whole connected component after all others; a centre inside an ego-net
 * already chosen is skipped), then ego-nets of
 * randomly drawn nodes (rng seeded by seed) until k. Variant 0 is the
 * order above; variant v > 0 (the fit's later starts) keeps a random half
 * of the local minima and fills in random order, both drawn from
 * (seed, v), so that a start can escape two seeds that fell in one
 * community. rep may be NULL.
 * Returns 0 or -1. */
int seed_model(const struct graph *g, struct model *m, uint64_t seed, uint32_t variant,
	       struct seed_report *rep);

/* How many distinct locally minimal ego-nets seed_model() (variant 0)
 * would take with k unbounded: the minima in its order, a centre inside
 * an ego-net already taken skipped. Returns 0 or -1. */
int seed_count_minima(const struct graph *g, uint32_t *count);

#endif
