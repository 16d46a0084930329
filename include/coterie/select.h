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
 * Parallel: up to base->threads fits run at once, each on one thread.
 * Every fit is deterministic and the early stop is decided in grid order,
 * so the scores and the choice do not depend on the thread count.
 */
#ifndef COTERIE_SELECT_H
#define COTERIE_SELECT_H

#include <stdint.h>

struct graph;
struct fit_params;

#define SELECT_MAX_GRID 64

struct select_params {
	uint32_t kmin, kmax; /* geometric grid bounds (inclusive) */
	double share;        /* share of the edges held out, (0, 0.5] */
	double step;         /* grid ratio, > 1 */
	uint32_t nlist;      /* > 0: the grid is list[0 .. nlist), increasing */
	uint32_t list[SELECT_MAX_GRID];
};

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

/* The grid for sp, into ks (room for SELECT_MAX_GRID); returns how many. */
uint32_t select_grid(const struct select_params *sp, uint32_t *ks);

struct select_point {
	uint32_t k;
	double heldout;   /* held-out log-likelihood */
	double auc;       /* held-out link AUC (NAN when undefined) */
	uint32_t sweeps;  /* of the fit that scored it */
	double seconds;
};

/* Called after each k is scored, in grid order (may be NULL). Return
 * nonzero from should_stop (may be NULL; polled a few times a second) to
 * abandon the search; select_k() then returns -2. */
struct select_hooks {
	void (*scored)(const struct select_point *pt, void *arg);
	int (*should_stop)(void *arg);
	void *arg;
};

struct select_result {
	uint32_t best;                    /* the chosen k */
	uint32_t ngrid;                   /* the grid asked for */
	uint32_t grid[SELECT_MAX_GRID];
	struct select_point *pts;         /* npts points scored, grid order; owned */
	uint32_t npts;
	double share;                     /* held-out share of the edges */
	uint64_t held_edges, held_non_edges;
};

void select_result_release(struct select_result *r);

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
/* Copy the points scored so far (grid order) into pts (room for
 * SELECT_MAX_GRID) and the grid into grid/ngrid; returns the count and
 * sets *done once the search has ended. */
uint32_t select_run_points(struct select_run *r, struct select_point *pts, uint32_t *grid,
			   uint32_t *ngrid, int *done);
/* Ask the search to stop (it ends with -2). */
void select_run_stop(struct select_run *r);
/* Wait for the end; returns select_k()'s value and, on 0, fills *res. */
int select_run_finish(struct select_run *r, struct select_result *res);
/* Stops, joins and frees; select_run_free(NULL) is a no-op. */
void select_run_free(struct select_run *r);

#endif
