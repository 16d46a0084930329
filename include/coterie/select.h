/*
 * select: choose the number of communities by held-out likelihood.
 *
 * A random share of the edges and as many random non-edges are held out
 * (holdout.h): removed from the graph and left out of the likelihood
 * altogether (not treated as non-edges). For each k of a grid the model is
 * fitted to the rest, and the held-out pairs are scored by their
 * log-likelihood and by the link AUC (holdout_score()). The k with the
 * highest held-out log-likelihood wins (the AUC is reported beside it, not
 * used to choose). Every fit uses the whole graph's background epsilon,
 * so the scores of different k are comparable.
 *
 * The grid is geometric, kmin, kmin * step, ... rounded and without
 * repeats, ending at kmax; or an explicit list. A geometric grid stops
 * early once two k in a row (in grid order) score below the best so far;
 * an explicit list is scored in full.
 *
 * Folds: on a small graph one split is noise (62 nodes, 16 held-out
 * edges: seeds 1, 2, 3 chose 8, 2 and 15), so each k is scored on F
 * distinct splits (select_folds()), each fit leaving out its own split's
 * pairs, and the k with the best MEAN held-out log-likelihood wins; the
 * spread (standard deviation over folds) is reported beside it. Fold 0
 * is the split and the fit seed of a one-fold search, so a graph large
 * enough for one fold is scored exactly as before.
 *
 * The grid's edge: when a geometric grid's largest k scores best, the
 * grid is extended beyond it (same ratio) while the scores rise, up to
 * n/4, MODEL_MAX_K and what memory allows (the default grid's cap of 500
 * is lifted there); when its smallest k scores best and is above 2, down
 * to 2. An explicit list is never extended. Points added are marked
 * (select_point.added); a choice still on the edge sets select_result.edge.
 *
 * The search by the curve's shape (select_by_shape(): a geometric grid on
 * a graph of one fold, 20,000 edges or more at share 0.1). The held-out
 * curve rises with k, then falls or flattens, and on large graphs the
 * fits of small k are as dear as those near the top (a fit at k 15 of a
 * 20,000-node graph took more sweeps than one at k 200), so instead of the
 * grid: k0 from seeds (with seeds from clusters, sp->start_clusters: the
 * clusters that seeding finds on the training split, seed_count_clusters();
 * else sp->start, the number L of locally minimal ego-nets of the default
 * grid; up to n/4: the grid's cap of 500 bounds the cost of a full grid,
 * not where the top is), then k0 / f and k0 f, f the refinement's last
 * step (below);
 * while the best is the largest (smallest) k tried, a walk by the factor
 * r = step^2, past the grid's edge as an extension would go; then, one
 * gap a round, the gap around the best on the side of the vertex of the
 * parabola through the three scores around it (in ln k) is halved in log
 * k, until both gaps around the best are within one grid step (half of
 * one, ratio sqrt(step), when the split holds SELECT_FINE_EDGES held-out
 * edges or more). Its first fit (k0) makes the reseeding moves after its
 * climb, as the final fit does (unless base->no_reseed), and so does every
 * other fit, warm ones too (fit_origin.moves), when the split holds fewer
 * than SELECT_FINE_EDGES held-out edges; above, the others skip them (their
 * cost); a fit below a k already tried starts from the fit of the nearest k
 * above it (same split: there is only one) with its weakest columns
 * dropped, one above every k tried from the fit of the nearest k below
 * with the columns its seeding adds (select_warm.c; on a two-sided graph
 * from seeds). Each point
 * says why it was tried (select_point.reason) and in which order (.order).
 *
 * Parallel: up to base->threads fits run at once, each on one thread.
 * Every fit is deterministic and the early stop is decided in grid order,
 * so the scores and the choice do not depend on the thread count.
 */
#ifndef COTERIE_SELECT_H
#define COTERIE_SELECT_H

#include <stdint.h>

struct graph;
struct fit_params;
struct sweep_group;

#define SELECT_MAX_GRID 128 /* points of a search, extension included */
#define SELECT_MAX_LIST 64  /* values of --k-grid LIST */
#define SELECT_MAX_FOLDS 10
#define SELECT_REASON 40  /* room for a point's reason, NUL included */

struct select_params {
	uint32_t kmin, kmax; /* geometric grid bounds (inclusive) */
	double share;        /* share of the edges held out, (0, 0.5] */
	double step;         /* grid ratio, > 1 */
	uint32_t nlist;      /* > 0: the grid is list[0 .. nlist), increasing */
	uint32_t list[SELECT_MAX_LIST];
	uint32_t folds;      /* splits per k; 0: select_folds() decides */
	uint32_t start;      /* the k a search by the curve's shape begins at
			      * (0: the grid's geometric middle); kept within
			      * [kmin, kmax] */
	int full;            /* 1: score the whole grid even on a graph of one
			      * fold (no search by the shape) */
	int start_clusters;  /* 1: a search by the shape with seeds from
			      * clusters begins at the clusters that seeding
			      * finds on the training split
			      * (seed_count_clusters()), not at start */
};

/*
 * Whether select_k() searches by the curve's shape (1) or scores the grid
 * (0) for a graph of m edges: the shape for a geometric grid on a graph
 * that gets one fold (select_folds() == 1, 20,000 edges or more at share
 * 0.1), unless sp->full; a list and the folds of a small graph are
 * scored in full, as they always were.
 */
int select_by_shape(uint64_t m, const struct select_params *sp);

/*
 * The folds for a graph of m edges holding out share of them: enough
 * splits that about SELECT_FOLD_EDGES held-out edges score each k, at
 * most SELECT_MAX_FOLDS, at least 1: ceil(SELECT_FOLD_EDGES / (share * m)).
 * So a graph of 20,000 edges or more (at share 0.1) gets one fold, and
 * the folds of a smaller one cost about as much as one fold of a
 * 20,000-edge graph: the search is never dearer than there.
 */
#define SELECT_FOLD_EDGES 2000

/*
 * The search by the shape refines to half a grid step (ratio sqrt(step))
 * when its split holds at least this many held-out edges (graphs of
 * 200,000 edges or more at the default share), else to one grid step.
 * Measured on leaky planted graphs (DEVELOPERS.md, "-k auto on large
 * graphs", session 10): at 10^5 nodes (100,000 held-out edges) half a
 * step found the top one step missed (1,142 planted: 975 -> 1090 chosen,
 * ONMI 0.814 -> 0.885); at 3,000 nodes (2,100 held-out edges, seeds 1-7)
 * the finer points chased the scores' noise (mean ONMI 0.864 -> 0.853,
 * three seeds worse, one better).
 */
#define SELECT_FINE_EDGES 20000
uint32_t select_folds(uint64_t m, double share);

/*
 * The default grid for g: kmin 2, ratio 1.25, share 0.1, and kmax from
 * the graph: three times the number L of distinct locally minimal
 * ego-nets (Gleich & Seshadhri, KDD 2012; see seed.h), counted as
 * seed_model() takes them (by increasing conductance, a centre inside an
 * ego-net already counted skipped), kept within [10, 500] and then at
 * most n / 4 (but at least kmin). Why: each such ego-net is a distinct
 * candidate community, but where communities overlap or are dense a
 * neighbour's ego-net often has the lower conductance, so one minimum
 * stands for several communities and L undercounts them (on planted
 * rings, L = 3 for 5 communities and 8 for 12); and a community needs a
 * few nodes. No conductance threshold: the ego-nets of planted AGM
 * communities with p_c = 0.3 all have conductance above 0.5.
 * *minima (may be NULL) receives L. Returns 0 or -1 (out of memory).
 */
int select_params_default(struct select_params *sp, const struct graph *g, uint32_t *minima);

/*
 * Parse a --k-grid value into sp: "A:B" (geometric from A to B with the
 * ratio already in sp), "A:B:RATIO", or a list "4,8,16" (sorted, repeats
 * dropped). Every k in [1, MODEL_MAX_K]. Returns 0, or -1 with a message
 * saying what was expected.
 */
int select_grid_parse(const char *s, struct select_params *sp);

/* The grid for sp, into ks (room for SELECT_MAX_GRID; at most
 * SELECT_MAX_LIST are used); returns how many. */
uint32_t select_grid(const struct select_params *sp, uint32_t *ks);

struct select_point {
	uint32_t k;
	double heldout;    /* held-out log-likelihood, mean over the folds */
	double auc;        /* held-out link AUC, mean (NAN when undefined) */
	uint32_t sweeps;   /* of the fits that scored it, mean rounded */
	double seconds;    /* of those fits, summed */
	double heldout_sd; /* the log-likelihood's standard deviation over the
			    * folds (sample form; 0 with one fold) */
	uint32_t folds;
	int added;         /* 1: beyond the grid asked for (its edge scored best) */
	uint32_t order;    /* 1-based: the order the points were decided in */
	char reason[SELECT_REASON]; /* why this k was tried: "grid", "start",
				     * "bracket", "walk up", "walk down",
				     * "extend past edge", "refine between A
				     * and B" (A, B the k around it) */
	uint32_t warm_from; /* 0: its fits started from seeds; else the k
			     * of the fit on the same split it started from
			     * (a larger k, its weakest columns dropped) */
};

/* Called after each k is scored (may be NULL): in grid order, then the
 * points an extension adds (upwards in increasing, downwards in
 * decreasing k). Return
 * nonzero from should_stop (may be NULL; polled a few times a second) to
 * abandon the search; select_k() then returns -2. */
struct select_hooks {
	void (*scored)(const struct select_point *pt, void *arg);
	int (*should_stop)(void *arg);
	void *arg;
	/* NULL (or a group of one): the fits run here. Else every process
	 * of the group (borrowed; sweep.h) runs select_k() alike and fits
	 * its share of each batch (task t of a batch, a k on a fold, on
	 * process t % size, up to threads at once); the scores are
	 * exchanged at the end of each round and decided alike, so every
	 * process returns the same result as one process would. A stop
	 * asked on one process stops every process at its round's end. */
	const struct sweep_group *group;
};

struct select_result {
	uint32_t best;                    /* the chosen k: with several folds
					   * the smallest k within one standard
					   * error of the highest mean (select.c,
					   * one_se()), else the highest score */
	uint32_t best_mean;               /* the k of the highest mean */
	double se;                        /* with several folds: that point's
					   * standard error, sd / sqrt(folds) */
	uint32_t ngrid;                   /* the grid asked for */
	uint32_t grid[SELECT_MAX_GRID];
	struct select_point *pts;         /* npts points scored, increasing k
					   * (extension included); owned */
	uint32_t npts;
	double share;                     /* held-out share of the edges */
	uint64_t held_edges, held_non_edges; /* of one fold */
	uint32_t folds;
	int list;                         /* the grid was a list (never extended) */
	int extended;                     /* +1 up, -1 down, 0 not */
	uint32_t bound;                   /* how far up an extension could go */
	int shape;                        /* 1: searched by the curve's shape
					   * (select_by_shape()), 0: the grid */
	uint32_t start;                   /* the shape search's first k */
	int edge;                         /* the choice is still the largest
					   * (+1) or smallest above 2 (-1) k
					   * scored, with no further k to try */
};

void select_result_release(struct select_result *r);

/* The one-standard-error rule (select.c): of the np points, the smallest k
 * whose held-out score is within one standard error (sd / sqrt(folds)) of
 * the score of best_k, the k of the highest mean; *se gets that error (0
 * with one fold, and then best_k is returned). The choice of select_k()
 * with several folds, and of the explorer's k screen when the search ends. */
uint32_t select_one_se(const struct select_point *pts, uint32_t np, uint32_t best_k, double *se);

/*
 * Score the grid on g (borrowed) with fit parameters base (k ignored;
 * threads is how many fits run at once). On success returns 0 and fills
 * *res (release with select_result_release()). Returns -1 on error
 * (reported), -2 when stopped.
 */
int select_k(const struct graph *g, const struct fit_params *base, const struct select_params *sp,
	     const struct select_hooks *hooks, struct select_result *res);

/*
 * The same search on a thread of its own, for a reader that must not
 * block (the explorer). g, base and sp are borrowed (g must outlive the
 * run; base and sp are copied). NULL on failure. The wake descriptor
 * becomes readable when a point is scored or the search ends.
 */
struct select_run;
struct select_run *select_run_start(const struct graph *g, const struct fit_params *base,
				    const struct select_params *sp);
int select_run_wake_fd(const struct select_run *r);
void select_run_drain(struct select_run *r);
/* Copy the points scored so far (in the order scored: the grid's, then
 * an extension's) into pts (room for SELECT_MAX_GRID) and the grid into
 * grid/ngrid (increasing; the points an extension scored are added to it
 * as they come); returns the count and sets *done once the search has
 * ended. */
uint32_t select_run_points(struct select_run *r, struct select_point *pts, uint32_t *grid,
			   uint32_t *ngrid, int *done);
/* 1 when the run searches by the curve's shape (select_by_shape()): its
 * grid is then the k tried so far, growing as they are scored. */
int select_run_by_shape(const struct select_run *r);
/* Ask the search to stop (it ends with -2). */
void select_run_stop(struct select_run *r);
/* Wait for the end; returns select_k()'s value and, on 0, fills *res. */
int select_run_finish(struct select_run *r, struct select_result *res);
/* Stops, joins and frees; select_run_free(NULL) is a no-op. */
void select_run_free(struct select_run *r);

#endif
