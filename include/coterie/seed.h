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
	/* seed_start() with SEED_CLUSTERS (the ego-net counts above are then
	 * those of the columns the clusters left) */
	uint32_t clusters;     /* clusters of 2 nodes or more found */
	uint32_t used_clusters; /* of those, seeded as columns */
	uint32_t passes;       /* label propagation's passes */
	uint32_t joins;        /* joins of pieces of one community (the
				* clusters above are counted after them) */
};

/* How the starting communities are drawn (fit_params.seeding). */
enum seed_kind {
	SEED_CLUSTERS = 0, /* label propagation's clusters, ego-nets for the rest */
	SEED_EGONETS = 1,  /* locally minimal ego-nets only (seed_model()) */
	SEED_KINDS
};

/* "clusters" or "ego-nets" ("unknown" out of range), static. */
const char *seed_kind_name(enum seed_kind k);
/* Parse a --seeding value. Returns 0, or -1 (with error()). */
int seed_kind_parse(const char *s, enum seed_kind *out);

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

/* Seed an all-zero model of m->k columns by the given kind: seed_model()
 * or seed_from_clusters(). */
int seed_start(const struct graph *g, struct model *m, enum seed_kind kind, uint64_t seed,
	       uint32_t variant, struct seed_report *rep);

/* Label propagation (seed_clusters.c): label[u] for every node (n values,
 * borrowed), drawn from (seed, variant); *passes (may be NULL) the passes
 * made. Returns 0 or -1. */
int seed_propagate(const struct graph *g, uint64_t seed, uint32_t variant, uint32_t *label,
		   uint32_t *passes);

/* Seed an all-zero model from label propagation's clusters: the k
 * likeliest clusters as columns, each member at the strength its
 * cluster's density asks, then ego-nets (seed_model(), drawn from the
 * same seed and variant) for the columns left; the variant draws another
 * propagation. rep may be NULL. Returns 0 or -1. */
int seed_from_clusters(const struct graph *g, struct model *m, uint64_t seed, uint32_t variant,
		       struct seed_report *rep);

/* Join the pieces of one community that label propagation left apart:
 * label[] (n values, as seed_propagate() leaves it) rewritten so that
 * the pieces of a join share one of their labels; *joins the joins made.
 * The rounds and the test are in seed_clusters.c. Returns 0 or -1. */
int seed_join_pieces(const struct graph *g, uint32_t *label, double epsilon, uint32_t *joins);

/* How many clusters seed_from_clusters() would take with k unbounded
 * (label propagation drawn from seed and variant, pieces joined, the
 * clusters denser than epsilon) into *count, and the nodes they hold into
 * *held. Returns 0 or -1. */
int seed_count_clusters(const struct graph *g, uint64_t seed, uint32_t variant, double epsilon,
			uint32_t *count, uint32_t *held);

/* How many distinct locally minimal ego-nets seed_model() (variant 0)
 * would take with k unbounded: the minima in its order, a centre inside
 * an ego-net already taken skipped. Returns 0 or -1. */
int seed_count_minima(const struct graph *g, uint32_t *count);

#endif
