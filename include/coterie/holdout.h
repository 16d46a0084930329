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
 *   link AUC        the probability that a held-out edge has a larger
 *                   x than a held-out non-edge, ties counting one half
 *                   (the Mann-Whitney form of the area under the ROC
 *                   curve; Hanley & McNeil, Radiology 143, 1982),
 *                   computed exactly by sorting.
 */
#ifndef COTERIE_HOLDOUT_H
#define COTERIE_HOLDOUT_H

#include <stdint.h>

struct graph;
struct fcsr;

struct holdout {
	double share;         /* as asked */
	struct graph *train;  /* the graph without the held-out edges, with
			       * the source graph's names (copied) */
	struct graph *held;   /* the held-out pairs as a graph, for fit_exclude() */
	uint32_t *edges;      /* nedges pairs (u < v), sorted */
	uint32_t *non;        /* nnon pairs (u < v), sorted */
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

/* Score strengths F (borrowed; F->n == the graph's n) with background
 * epsilon on the held-out pairs: *loglik and *auc as above. *auc is NAN
 * when there is no held-out edge or no held-out non-edge. Returns 0 or -1
 * (out of memory). */
int holdout_score(const struct holdout *h, const struct fcsr *F, double epsilon, double *loglik,
		  double *auc);

/* The AUC of scores pos (npos, borrowed) against neg (nneg, borrowed):
 * the share of (pos, neg) pairs with pos > neg, ties counting 1/2, by one
 * sort, in O((npos + nneg) log(npos + nneg)). NAN when either is empty or
 * memory runs out. */
double holdout_auc(const double *pos, uint64_t npos, const double *neg, uint64_t nneg);

#endif
