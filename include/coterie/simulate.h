/*
 * simulate: sample a graph from a planted Affiliation Graph Model (Yang &
 * Leskovec, "Community-affiliation graph model for overlapping network
 * community detection", ICDM 2012). Two nodes u, v sharing the set S of
 * communities are linked, independently of every other pair, with
 *   P(u, v) = 1 - (1 - epsilon) * prod_{c in S} (1 - p_c).
 *
 * The planted cover: a share of the nodes (--overlap) is in 2 .. max
 * memberships (uniformly), the rest in one; community sizes are drawn from
 * a truncated power law; the membership slots are dealt to the communities
 * at random, so no node is twice in one community. See simulate.c.
 */
#ifndef COTERIE_SIMULATE_H
#define COTERIE_SIMULATE_H

#include <stdint.h>

#include "cover.h"

#define SIMULATE_MAX_NODES 2000000000u  /* node ids and names stay below 2^31 */
#define SIMULATE_MAX_MEMBERSHIPS 16u
#define SIMULATE_MAX_EDGES 1e9        /* expected edges (8 bytes each, twice, to sort) */
#define SIMULATE_MAX_MULTI_PAIRS 2e8  /* pairs of nodes sharing two communities or more */

struct simulate_params {
	uint32_t n;               /* nodes, >= 2 */
	uint32_t k;               /* communities; 0: as many as the memberships fill */
	uint32_t size_min;        /* community sizes, 2 <= size_min <= size_max <= n */
	uint32_t size_max;
	double size_exponent;     /* sizes floor(X), X with density ~ x^-exponent on
				   * [size_min, size_max + 1); >= 0 */
	double overlap;           /* share of nodes in two or more communities, [0, 1] */
	uint32_t max_memberships; /* those nodes have 2 .. this many, uniformly */
	double p_lo, p_hi;        /* p_c uniform in [p_lo, p_hi] (0 <= lo <= hi <= 1);
				   * with mean_degree > 0 these are relative weights */
	double mean_degree;       /* > 0: scale every p_c by one factor so that the
				   * expected mean degree is this */
	int even_degrees;         /* 1: weights also divided by (size - 1), so each
				   * membership brings the same expected number of
				   * neighbours; needs mean_degree > 0 */
	double epsilon;           /* background link probability, [0, 1) */
	double mixing;            /* negative: off (the default). In [0, 1): the
				   * share of the expected edges that are
				   * background edges (see struct simulate);
				   * needs mean_degree > 0 and epsilon 0: p_c are
				   * scaled so the communities alone expect
				   * (1 - mixing) n mean_degree / 2 edges, and
				   * epsilon is solved so that all expect
				   * n mean_degree / 2 */
	int weighted;             /* 1: each edge gets a weight, its count under the
				   * Poisson model with the planted rates, given
				   * that it is above zero (simulate_weights.c) */
	int directed;             /* 1: arcs; each direction of a pair drawn on its
				   * own from the same cover (simulate.c), so
				   * P(u -> v) is the AGM's P(u, v); not with
				   * weighted */
	uint32_t second;          /* > 0: a two-mode graph: n nodes of the first
				   * kind (ids 0 .. n-1) and this many of the
				   * second (ids n .. n+second-1); the cover is
				   * planted on all n + second nodes, every
				   * community holds both kinds, and only pairs
				   * of two kinds are linked (simulate.c); sizes,
				   * mean degree and mixing count all nodes; not
				   * with directed or weighted */
	uint64_t seed;
	unsigned threads;         /* >= 1; the result does not depend on it */
};

/* Defaults: 1000 nodes, k derived, sizes 10 .. 100 with exponent 2,
 * overlap 0.1 with at most 2 memberships, p_c 1 scaled to mean degree 10,
 * epsilon 0, mixing off, seed 1, 1 thread. */
void simulate_params_default(struct simulate_params *p);

/* Check the parameters (ranges, sizes against n, enough room for the
 * memberships). Returns 0 or -1 with a message naming the problem. */
int simulate_params_check(const struct simulate_params *p);

/*
 * A sampled planted graph.
 * Rules (tests: assert_simulate_sane() in tests/unit/test_simulate.c):
 *   - truth is a cover of n nodes and k communities (cover.h rules), every
 *     community with at least 2 members and no node twice;
 *   - p[c] in [0, 1] for every community;
 *   - edges[0 .. m) are keys (u << 32) | v with u < v < n, strictly
 *     increasing (so sorted by u, then v, with no duplicate); two-mode:
 *     u < n1 <= v;
 *   - drawn_communities + drawn_background == m + mback + duplicates;
 *   - outside_edges <= background_only <= m.
 *
 * Background edges. The background overlaps the communities (a pair in a
 * community can be drawn by both), so "background edges" means the edges
 * the background adds: E(epsilon) - E(0) expected, where E(e) is the
 * expected edge count with background e; E(epsilon) - E(0) =
 * epsilon (pairs - E(0)). Drawn, they are the edges that only the
 * background drew (background_only). Among them, the edges whose ends
 * share no community (outside_edges) can be told from the graph and the
 * truth alone: each of the pairs_apart such pairs is an edge with
 * probability epsilon.
 */
struct simulate {
	uint32_t n, k;            /* n: all nodes (two-mode: both kinds) */
	uint32_t n1;              /* two-mode: ids below n1 are the first kind;
				   * 0 otherwise */
	double pairs;             /* the pairs that may be linked: n(n-1)/2;
				   * directed, ordered: n(n-1); two-mode, the
				   * pairs of two kinds: n1 (n - n1) */
	struct cover truth;       /* the planted memberships; owned */
	double *p;                /* k link probabilities; owned */
	double epsilon;
	double scale;             /* the factor applied to the weights of p_c
				   * (1 without a mean degree target) */
	uint64_t m;               /* edges */
	uint64_t *edges;          /* m keys, see above; owned */
	double *weights;          /* NULL, or (weighted) m + mback weights, whole
				   * numbers >= 1, of edges[i] then (directed)
				   * back[i - m]; owned */
	uint64_t mback;           /* directed: the arcs v -> u of the second draw, */
	uint64_t *back;           /* as keys (u << 32) | v, u < v (edges[] are u -> v); owned */
	uint64_t drawn_communities; /* pairs drawn by the communities ... */
	uint64_t drawn_background;  /* ... and by the background, before merging */
	uint64_t duplicates;        /* pairs drawn more than once */
	uint64_t overlapping;       /* nodes in two or more communities */
	uint64_t uncovered;         /* nodes in none */
	uint64_t isolated;          /* nodes with no edge (absent from edges.tsv) */
	/* Directed: the counts from here on (and m + mback against the
	 * drawn and duplicate counts) are of both directions' draws. */
	double expected_edges;      /* sum over all pairs of P(u, v), exactly */
	double expected_community_edges; /* the same with epsilon 0 */
	uint64_t pairs_apart;       /* node pairs sharing no community, exactly */
	uint64_t background_only;   /* edges drawn by the background alone */
	uint64_t outside_edges;     /* edges whose ends share no community */
};

/*
 * Sample a planted graph with parameters p (borrowed) into out (whose old
 * contents are not freed). The same parameters give the same graph,
 * whatever p->threads is. With p->mixing >= 0, out->epsilon is the
 * background solved (else p->epsilon). Returns 0, or -1 with a message
 * (bad parameters, memory, a mean degree out of reach, more than SIMULATE_MAX_EDGES edges
 * expected, more than SIMULATE_MAX_MULTI_PAIRS pairs sharing two or more
 * communities). Release with simulate_release().
 */
int simulate_run(const struct simulate_params *p, struct simulate *out);
void simulate_release(struct simulate *s);

/*
 * The exact expected number of edges of the AGM on cover c (borrowed) with
 * link probabilities p (borrowed, c->k of them) and background epsilon:
 * the sum over node pairs of P(u, v), computed without visiting every pair
 * (pairs in one community are counted per community; only the pairs that
 * share two or more are listed). Returns -1.0 with a message on failure.
 */
double simulate_expected_edges(const struct cover *c, const double *p, double epsilon);

/* What simulate.json records beyond the parameters. All borrowed. */
struct simulate_meta {
	const char *command_line; /* may be NULL */
	const char *prefix;       /* node names are prefix + id; "" for plain ids */
	double seconds;           /* sampling time */
};

/* The rules for a node name prefix: printable, no TAB, newline, CR or
 * backslash, not starting with '#' or '%', at most 64 bytes. Returns 0 or
 * -1 with a message. */
int simulate_prefix_check(const char *prefix);

/* 1 when dir holds a non-empty edges.tsv or truth.tsv (a planted graph
 * that writing would replace), else 0. */
int simulate_dir_taken(const char *dir);

/*
 * Write dir/edges.tsv, dir/truth.tsv, dir/planted.tsv and dir/simulate.json
 * (formats in coterie-files(5)), each to a temporary name, synced and
 * renamed into place. dir must exist. All arguments borrowed.
 * Returns 0 or -1 with a message naming the file.
 */
int simulate_write(const char *dir, const struct simulate *s, const struct simulate_params *p,
		   const struct simulate_meta *meta);

#define SIMULATE_EDGES "edges.tsv"
#define SIMULATE_TRUTH "truth.tsv"
#define SIMULATE_PLANTED "planted.tsv"
#define SIMULATE_JSON "simulate.json"

#endif
