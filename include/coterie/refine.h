/*
 * refine: the AGM refinement. After the relaxed fit, improve the discrete
 * answer (a cover and its link probabilities p_c) under the Affiliation
 * Graph Model itself (Yang & Leskovec, ICDM 2012; the likelihood as in
 * agm.h) by local search:
 *
 *   a round = re-estimate every p_c for the cover as it stands (the joint
 *             maximum, by agm_improve_p()), then visit the nodes (in an
 *             order drawn from the seed) and let each make, one at a time,
 *             the move that raises the log-likelihood most: join a
 *             community of one of its neighbours, or leave one of its own;
 *
 * The first round visits every node; a later one only the nodes a move of
 * the round before touched (the nodes that moved and their neighbours),
 * and when such a round makes no move the next visits every node again.
 * The search ends when a round visiting every node makes no move (a local
 * maximum: no single move and no change of p helps), when the round budget
 * is spent, or when stop() says so. Every
 * accepted move raises L by more than min_gain with p fixed and every p
 * step raises it with the cover fixed, so L never falls.
 *
 * Moves are priced incrementally: the state keeps, per community, its
 * size and the edges inside it, and per node its communities; the change
 * of L for every candidate move of node u together costs O(sum over u's
 * neighbours v of |C(u)| + |C(v)|), i.e. O(deg(u) * memberships), not
 * O(m). Exact discrete search is a hard combinatorial problem; this is a
 * local improvement from a good start.
 */
#ifndef COTERIE_REFINE_H
#define COTERIE_REFINE_H

#include <stdint.h>

#include "agm.h"
#include "cover.h"

struct graph;
struct fcsr;

struct refine_params {
	unsigned max_rounds;  /* at most this many rounds (>= 1) */
	double min_gain;      /* a move must raise L by more than this (>= 0) */
	uint64_t seed;        /* node orders */
	int (*stop)(void *arg); /* polled now and then (may be NULL): non-zero
				 * ends the search, keeping the moves so far */
	void *arg;            /* borrowed, passed to stop() */
};

/* Defaults: 50 rounds, min_gain 1e-9, seed 1, no stop(). */
void refine_params_default(struct refine_params *p);

struct refine_report {
	double loglik_before;  /* AGM log-likelihood of the start */
	double loglik_after;   /* and of the answer */
	uint64_t added;        /* memberships added by moves */
	uint64_t removed;      /* and removed */
	unsigned rounds;       /* rounds run */
	int converged;         /* 1: the last round made no move */
	int stopped;           /* 1: stop() ended it */
	double seconds;
};

/* The search state: a cover being changed and its p. Opaque. */
struct refine;

/* A state for graph g (borrowed; must outlive the state) starting from
 * cover c (copied) with link probabilities p (c->k values in [0, 1],
 * copied; NULL: estimated by maximum likelihood) and background epsilon in
 * (0, 1). Returns NULL on failure. Free with refine_free(). */
struct refine *refine_new(const struct graph *g, const struct cover *c, const double *p,
			  double epsilon);
/* refine_free(NULL) is a no-op. */
void refine_free(struct refine *r);

/* The change of the AGM log-likelihood, p fixed, if node u's membership
 * of community c were toggled (joined when u is not in c, left when it
 * is). NAN (with error()) for u or c out of range. */
double refine_delta(struct refine *r, uint32_t u, uint32_t c);
/* Toggle u's membership of c. Returns 0 or -1. */
int refine_toggle(struct refine *r, uint32_t u, uint32_t c);

/* The cover as it stands (same communities and labels as the start, some
 * perhaps empty) into out (release with cover_release()), and the p in
 * use into p (k values) when p is not NULL. Returns 0 or -1. */
int refine_cover(const struct refine *r, struct cover *out, double *p);

/* Run the search of the header comment from the state as it stands;
 * rep is filled (log-likelihoods computed afresh with agm_loglik()).
 * Returns 0 or -1. */
int refine_run(struct refine *r, const struct refine_params *p, struct refine_report *rep);

/*
 * The refinement of an AGM read from a fit: start from in's cover and p
 * (borrowed), search, and build out (release with agm_release()) with the
 * communities keeping in's ids, the p found, and strengths F[u][id] from F
 * (borrowed; 0 for a membership F does not hold; NULL: 1.0 for every
 * membership). When no move was made, out is a copy of
 * in. loglik_before is in->loglik and loglik_after is out->loglik.
 * Returns 0 or -1.
 */
int refine_agm(const struct graph *g, const struct agm *in, const struct fcsr *F,
	       const struct refine_params *p, struct agm *out, struct refine_report *rep);

#endif
