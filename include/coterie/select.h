/*
 * select: choose the number of communities by held-out likelihood.
 *
 * A random share of the edges and as many random non-edges are held out:
 * removed from the graph and left out of the likelihood altogether (not
 * treated as non-edges). For each k of a geometric grid the model is fitted
 * to the rest, and the held-out pairs are scored:
 *     sum_{held edges} log(1 - exp(-(x + qeps))) - sum_{held non-edges} (x + qeps)
 * The k with the highest score wins. The grid stops early once two k in a
 * row score below the best. Every fit uses the whole graph's background
 * epsilon, so the scores are comparable.
 */
#ifndef COTERIE_SELECT_H
#define COTERIE_SELECT_H

#include <stdint.h>

struct graph;
struct fit_params;

struct select_params {
	uint32_t kmin, kmax; /* grid bounds (inclusive) */
	double share;        /* share of the edges held out, (0, 0.5] */
	double step;         /* grid ratio, > 1 */
};

/* kmin 2, kmax min(n / 4, 500) (at least kmin), share 0.1, step 1.25. */
void select_params_default(struct select_params *sp, const struct graph *g);

struct select_point {
	uint32_t k;
	double heldout;   /* held-out log-likelihood */
	uint32_t sweeps;  /* of the fit that scored it */
	double seconds;
};

/* Called after each k is scored (may be NULL). Return nonzero from
 * should_stop (may be NULL; polled a few times a second) to abandon the
 * search; select_k() then returns -2. */
struct select_hooks {
	void (*scored)(const struct select_point *pt, void *arg);
	int (*should_stop)(void *arg);
	void *arg;
};

/*
 * Score the grid on g (borrowed) with fit parameters base (k ignored).
 * On success returns 0, sets *best to the chosen k and *pts / *npts to
 * the points scored (caller frees *pts with free()). Returns -1 on error
 * (reported), -2 when stopped.
 */
int select_k(const struct graph *g, const struct fit_params *base, const struct select_params *sp,
	     const struct select_hooks *hooks, uint32_t *best, struct select_point **pts,
	     uint32_t *npts);

/* The grid for sp, into ks (room for 64); returns how many. */
uint32_t select_grid(const struct select_params *sp, uint32_t *ks);

#endif
