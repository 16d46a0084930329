/*
 * inspect: the analysis behind the explorer's panes and `coterie show`.
 * The panes and the show command only format what these functions return,
 * so the two always agree.
 *
 * The probability the communities give a pair is 1 - exp(-F_u . F_v)
 * (the background epsilon left out, so a pair the communities do not
 * explain at all reads 0). An edge is explained by the community with the
 * largest product F_u[c] F_v[c]; an edge with no shared positive strength
 * is explained by none (the background).
 *
 * Everything here reads borrowed, immutable data (a graph and a snapshot's
 * strengths and AGM) and allocates only its result, so it is safe on any
 * thread while a fit runs.
 */
#ifndef COTERIE_INSPECT_H
#define COTERIE_INSPECT_H

#include <stddef.h>
#include <stdint.h>

struct graph;
struct fcsr;
struct agm;

/* One of a node's affiliations. */
struct inspect_affil {
	uint32_t comm;      /* community id (model column) */
	double strength;    /* F[u][comm] > 0 */
	int member;         /* a membership by agm_is_member() */
	uint32_t explained; /* u's edges this community explains */
};

struct inspect_node {
	uint32_t node;
	uint32_t degree;
	uint32_t naffil;             /* every positive strength, strongest first */
	struct inspect_affil *affil; /* owned */
	uint32_t nmember;            /* how many of them are memberships */
	uint32_t unexplained;        /* edges explained by no community */
};

/* The node view of u; memberships by agm_is_member() with delta and
 * min_links (F->colsum must be filled). Returns 0 or -1; release with
 * inspect_node_release(). */
int inspect_node(struct inspect_node *out, const struct graph *g, const struct fcsr *F,
		 double delta, double min_links, uint32_t u);
void inspect_node_release(struct inspect_node *n);

/* The community explaining edge (u, v), or -1 for none. */
int64_t inspect_explaining_community(const struct fcsr *F, uint32_t u, uint32_t v);

/* Probability the communities give the pair (u, v): 1 - exp(-F_u . F_v). */
double inspect_pair_prob(const struct fcsr *F, uint32_t u, uint32_t v);

/* One community's part in a pair's probability. */
struct inspect_share {
	uint32_t comm;     /* community id (model column) */
	double product;    /* F_u[c] F_v[c] > 0 */
	double alone;      /* 1 - exp(-product): the probability c alone gives */
	int both_members;  /* both are members (agm_is_member()) */
	double p;          /* the AGM p_c; NAN when c is no listed community */
};

/* Everything the model says about one pair. */
struct inspect_edge {
	uint32_t u, v;
	int linked;                  /* (u, v) is an edge of the graph */
	double x;                    /* F_u . F_v, the sum of the products */
	double prob;                 /* 1 - exp(-(x + qeps)): the model, background included */
	double prob_comms;           /* 1 - exp(-x): the communities alone, as in the panes */
	double agm_prob;             /* the AGM read back: 1 - (1 - epsilon) prod (1 - p_c)
				      * over the communities both belong to */
	uint32_t nshare;
	struct inspect_share *share; /* owned; largest product first, ties by id */
};

/* The pair view of (u, v) (u != v, both < n) under strengths F and the
 * AGM a read from them with epsilon, delta and min_links (all borrowed).
 * Returns 0 or -1; release with inspect_edge_release(). */
int inspect_edge(struct inspect_edge *out, const struct graph *g, const struct fcsr *F,
		 const struct agm *a, double epsilon, double delta, double min_links, uint32_t u,
		 uint32_t v);
void inspect_edge_release(struct inspect_edge *e);

struct inspect_pair {
	uint32_t u, v;  /* u is the member of the community (for edges) */
	double prob;
};

/* P(W >= w) for W ~ Poisson(x), w > 0 (the regularized lower incomplete
 * gamma function P(w, x), so also for weights that are not whole):
 * 1 - exp(-x) for w = 1, 0 for x = 0; 1 for w <= 0. */
double inspect_weight_tail(double w, double x);

/*
 * Edges touching members of community a->comms[index] (each edge once),
 * lowest probability first, ties by (u, v). On a weighted graph (g->wt)
 * the "probability" is inspect_weight_tail(w_uv, F_u . F_v): how likely
 * the communities make a weight at least as heavy as the edge's. Fills at most limit pairs
 * starting at rank offset into *out (caller frees with free()), sets *nout
 * and, if total is not NULL, the number of such edges. Returns 0 or -1.
 */
int inspect_weak_edges(const struct graph *g, const struct fcsr *F, const struct agm *a,
		       uint32_t index, size_t offset, size_t limit,
		       struct inspect_pair **out, size_t *nout, size_t *total);

/*
 * Pairs of members of community a->comms[index] that are not linked,
 * highest probability first. Considers the INSPECT_MISSING_POOL members
 * with the largest strength in the community (all of them when fewer), so
 * the cost stays bounded on huge communities. Same conventions as above.
 */
#define INSPECT_MISSING_POOL 2000u
int inspect_missing_links(const struct graph *g, const struct fcsr *F, const struct agm *a,
			  uint32_t index, size_t offset, size_t limit,
			  struct inspect_pair **out, size_t *nout, size_t *total);

/* The members of a->comms[index] by strength, strongest first (ties by
 * node id): node ids into order (cover_size entries, borrowed buffer) and
 * their strengths into strength (may be NULL). */
void inspect_members(const struct agm *a, uint32_t index, uint32_t *order, double *strength);

enum inspect_key {
	INSPECT_BY_SIZE = 0,
	INSPECT_BY_EDGES,
	INSPECT_BY_DENSITY,
	INSPECT_BY_CONDUCTANCE,
	INSPECT_BY_P,
	INSPECT_BY_ID,
};
/* Indexes 0..a->cover.k-1 of the communities sorted by key (descending
 * unless ascending is set; ties by id) into order (borrowed buffer). */
void inspect_sort_communities(const struct agm *a, enum inspect_key key, int ascending,
			      uint32_t *order);

/* Index into a->comms of the community with id, or -1. */
int64_t inspect_find_community(const struct agm *a, uint32_t id);

#endif
