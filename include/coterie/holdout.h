/*
 * holdout: node pairs hidden from a fit and used to score it.
 *
 * A split draws exactly round(share * m) of the graph's edges (at least
 * one) and as many pairs that are not edges, uniformly. The training graph
 * is the graph without the held-out edges; the held-out pairs, edges and
 * non-edges together, form a second graph that a fit leaves out of its
 * likelihood altogether (fit_exclude(), model.excl): they are neither
 * edges nor non-edges of the training problem.
 *
 * A fitted model is then scored on the held-out pairs, with
 * x_uv = F_u . F_v and qeps = -ln(1 - epsilon):
 *   log-likelihood  sum_{held edges} log(1 - exp(-(x + qeps)))
 *                   - sum_{held non-edges} (x + qeps)
 *                   (the Poisson model, weight w of a held-out edge:
 *                   sum_{held edges} [w log(x + qeps) - lgamma(w + 1)
 *                   - (x + qeps)] - sum_{held non-edges} (x + qeps),
 *                   the log-probability of the weights, 0 for a non-edge)
 *   link AUC        the probability that a held-out edge has a larger
 *                   x than a held-out non-edge, ties counting one half
 *                   (the Mann-Whitney form of the area under the ROC
 *                   curve; Hanley & McNeil, Radiology 143, 1982),
 *                   computed exactly by sorting.
 * A two-sided graph (directed, two-mode) holds out arcs u -> v as the
 * pairs (u, nsend + v) of its sending and receiving rows, so x is
 * F_u . H_v; its non-edges are such pairs too (holdout.c).
 */
#ifndef COTERIE_HOLDOUT_H
#define COTERIE_HOLDOUT_H

#include <stdint.h>

#include "model.h"

struct graph;
struct fcsr;

struct holdout {
	double share;         /* as asked */
	struct graph *train;  /* the graph without the held-out edges, with
			       * the source graph's names (copied) */
	struct graph *held;   /* the held-out pairs as a graph, for fit_exclude() */
	uint32_t *edges;      /* nedges pairs (u < v), sorted */
	uint32_t *non;        /* nnon pairs (u < v), sorted */
	double *wedges;       /* the held-out edges' weights (nedges), NULL
			       * when the graph is unweighted */
	uint64_t nedges, nnon;
};

/*
 * Split g (borrowed) holding out share (in (0, 0.5]) of its edges and as
 * many non-edges (fewer only when the graph is nearly complete), drawn
 * from seed. Returns 0, or -1 (reported) when g has no edge to spare or
 * memory runs out. Release with holdout_release().
 */
int holdout_split(struct holdout *h, const struct graph *g, double share, uint64_t seed);
void holdout_release(struct holdout *h);

/* Score strengths F (borrowed; F->n == the graph's n) of a fit of the
 * model kind with background epsilon on the held-out pairs: *loglik and
 * *auc as above (the two-sided kinds score as BigCLAM). *auc is NAN when
 * there is no held-out edge or no held-out non-edge. Returns 0 or -1 (out
 * of memory). */
int holdout_score(const struct holdout *h, const struct fcsr *F, double epsilon,
		  enum model_kind kind, double *loglik, double *auc);

/* One held-out pair's term of the log-likelihood above: x = F_u . F_v,
 * w its weight (1 for an edge of an unweighted graph, 0 for a non-edge). */
double holdout_pair_loglik(enum model_kind kind, double x, double qeps, double w);

/* The AUC of scores pos (npos, borrowed) against neg (nneg, borrowed):
 * the share of (pos, neg) pairs with pos > neg, ties counting 1/2, by one
 * sort, in O((npos + nneg) log(npos + nneg)). NAN when either is empty or
 * memory runs out. */
double holdout_auc(const double *pos, uint64_t npos, const double *neg, uint64_t nneg);

#endif
