/*
 * objective: the seam between the sweep engine and a likelihood.
 *
 * The sweep engine (sweep.h) knows rows of strengths (struct model: sparse
 * rows and their column sums) and nothing of what they mean. Everything it
 * asks of the likelihood goes through one struct objective_ops, called
 * once per row (never per neighbour entry, so the indirect call costs
 * nothing measurable):
 *   - update_row: the new row of u from the model as it stands (read
 *     only: many threads call it at once, each with its own work buffer),
 *     or 0 to keep the row; work_gain: the rise of the row objective
 *     that update made;
 *   - part_range / part_combine: the whole objective summed over fixed
 *     node ranges and then combined in a fixed order, so a recompute has
 *     the same bits for any thread count;
 *   - coupling: how two rows updated together in one block interact. The
 *     engine's blocks are independent sets, so for BigCLAM (and a Poisson
 *     likelihood) two rows of a block share only the non-edge term
 *     -F_u . F_v: coupling 1. Rows that do not interact at all: 0.
 * row_objective and row_gradient are for tests and checks; the engine
 * never calls them.
 *
 * How a second likelihood plugs in: write its functions beside model.c
 * (say poisson.c, with poisson_objective() returning its ops), storing its
 * strengths in a struct model (a directed fit keeps its out- and
 * in-strengths as one row of 2k columns); hand the ops to sweep_new().
 * The engine, the snapshots (struct fcsr) and the explorer stay as they
 * are. The one rule: update_row must only read the model, and
 * work_gain() must be the change of the whole objective when that row
 * alone changes (sweep.c sums the log-likelihood from it).
 */
#ifndef COTERIE_OBJECTIVE_H
#define COTERIE_OBJECTIVE_H

#include <stddef.h>
#include <stdint.h>

struct fentry;
struct graph;
struct model;

/* What a work buffer has done, for benchmarks: rows updated, line-search
 * trials, neighbour rows read, and their entries read by gradient passes. */
struct objective_counts {
	uint64_t rows, trials, visits, entries;
};

struct objective_ops {
	const char *name;
	/* A thread's scratch space for rows of m; NULL when out of memory. */
	void *(*work_new)(const struct model *m);
	void (*work_free)(void *work); /* NULL is a no-op */
	/* The new row of u: 1 with *out (in work, valid until its next use)
	 * and *out_nnz set, 0 to keep the row. Reads m and g only. */
	int (*update_row)(const struct model *m, const struct graph *g, uint32_t u, void *work,
			  const struct fentry **out, uint32_t *out_nnz);
	/* The rise of u's row objective made by the last update of work that
	 * returned 1: the change of the whole objective with the other rows
	 * fixed. */
	double (*work_gain)(const void *work);
	/* 1 when work_gain() is that change up to rounding (else the engine's
	 * caller recomputes the objective after each sweep). */
	int (*gain_exact)(const struct model *m);
	/* Adds what work has done to *c. */
	void (*work_counts)(const void *work, struct objective_counts *c);
	/* The whole objective: part_size bytes a part; the part of nodes
	 * [u0, u1); the objective from parts of consecutive ranges. */
	size_t part_size;
	void (*part_range)(const struct model *m, const struct graph *g, uint32_t u0, uint32_t u1,
			   void *part);
	double (*part_combine)(const struct model *m, const struct graph *g, const void *parts,
			       size_t nparts);
	/* u's row objective if its row were r (nnz entries), and its gradient
	 * at u's current row into grad (k values); for tests. */
	double (*row_objective)(const struct model *m, const struct graph *g, uint32_t u,
				const struct fentry *r, uint32_t nnz, void *work);
	void (*row_gradient)(const struct model *m, const struct graph *g, uint32_t u, void *work,
			     double *grad);
	/* 1: two rows of a block share the term -F_u . F_v of the objective
	 * (unless they are held-out pairs, model.excl); 0: rows do not interact;
	 * OBJECTIVE_COUPLING_SIDES: only a sending and a receiving row of a
	 * two-sided model (model.nsend) share it. */
	int coupling;
};

#define OBJECTIVE_COUPLING_SIDES 2

/* The ops of an objective whose functions are named PREFIX##work_new,
 * PREFIX##work_free, ... after the fields (parts of type PART), so that
 * every objective's table is this one line and cannot miss a field. */
#define OBJECTIVE_OPS_INIT(NAME, PREFIX, PART, COUPLING)                                    \
	{                                                                                  \
		.name = NAME, .work_new = PREFIX##work_new, .work_free = PREFIX##work_free,  \
		.update_row = PREFIX##update_row, .work_gain = PREFIX##work_gain,            \
		.gain_exact = PREFIX##gain_exact, .work_counts = PREFIX##work_counts,        \
		.part_size = sizeof(PART), .part_range = PREFIX##part_range,                 \
		.part_combine = PREFIX##part_combine, .row_objective = PREFIX##row_objective, \
		.row_gradient = PREFIX##row_gradient, .coupling = COUPLING                   \
	}

#endif
