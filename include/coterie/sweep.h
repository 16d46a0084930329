/*
 * sweep: the parallel sweep engine. One sweep visits every node once, in
 * a permutation drawn from a seed (of runs of 32 consecutive ids on
 * graphs of 65,536 nodes or more, for the cache), and replaces its row of
 * strengths by the objective's update (objective.h); after the sweep the
 * rows are packed (model_pack()). A pool of threads (pool.h)
 * computes the rows. It knows nothing of starts, snapshots or the
 * fitting thread: fit.c drives it, and a test can drive it alone.
 *
 * Determinism: the permutation is cut into blocks that depend only on the
 * graph and the permutation; the rows of a block are computed from the
 * model as it was at the block's start and applied in permutation order,
 * and the change of the objective is summed on the calling thread in that
 * order. So the same seed gives the same bits for any thread count.
 */
#ifndef COTERIE_SWEEP_H
#define COTERIE_SWEEP_H

#include <stdint.h>

#include "objective.h"

struct graph;
struct model;
struct sweep;

/* An engine for the rows of m on the graph g (both borrowed: they must
 * outlive it; m->n == g->n) with the likelihood ops (borrowed, usually
 * static) and up to `threads` threads. The held-out pairs are m->excl,
 * read at each sweep. NULL when out of memory. Free with sweep_free(). */
struct sweep *sweep_new(struct model *m, const struct graph *g, const struct objective_ops *ops,
			unsigned threads);
/* Stops the pool if started, then frees. NULL is a no-op. */
void sweep_free(struct sweep *s);

/* Make the worker threads (they inherit the calling thread's signal
 * mask); without it everything runs on the calling thread. Returns 0 (a
 * pool short of threads runs with those it has). */
int sweep_pool_start(struct sweep *s);
/* Join the worker threads. */
void sweep_pool_stop(struct sweep *s);
/* Threads that compute rows now (1 before sweep_pool_start()). */
unsigned sweep_threads(const struct sweep *s);

/* Called between blocks with the model consistent (every row so far
 * applied, no row being computed); nonzero ends the sweep there. */
typedef int sweep_between_fn(void *arg);

/* One sweep in the permutation drawn from order_seed; between (may be
 * NULL) runs before each block. Adds the change of the objective that the
 * applied rows made to *dl (exact up to rounding when ops->gain_exact()),
 * then recounts the column sums. Returns 0 when the sweep ended, 1 when
 * between ended it, -1 on error (reported). */
int sweep_run(struct sweep *s, uint64_t order_seed, sweep_between_fn *between, void *arg,
	      double *dl);
/* The whole objective recomputed on the pool over fixed node ranges
 * summed in a fixed order: the same bits for any thread count. */
double sweep_objective(struct sweep *s);
/* What the threads' work buffers have done so far, summed. */
void sweep_counts(const struct sweep *s, struct objective_counts *c);

/* Quiet sweeps. After each sweep the engine knows which rows are awake:
 * those whose update in that sweep raised the objective by more than
 * wake_gain, and every neighbour of one. A quiet sweep computes the awake
 * rows only and leaves the others as they are (their neighbours hardly
 * moved, so their updates would hardly move them); a full one computes
 * every row. Which rows are awake depends only on the rows applied, so a
 * quiet sweep keeps the determinism above (and across processes). The
 * caller (fit.c) says which kind the next sweep is and the gain that
 * wakes; awake flags describe the model only as the last sweep left it. */
void sweep_set_quiet(struct sweep *s, int quiet, double wake_gain);
/* Rows the quiet sweeps so far left as they were. */
uint64_t sweep_skipped(const struct sweep *s);
/* The awake flags (n bytes, 0 or 1) after the last sweep, borrowed; and
 * setting them (n bytes, copied), for a savepoint taken back. */
const uint8_t *sweep_awake(const struct sweep *s);
void sweep_set_awake(struct sweep *s, const uint8_t *awake);
/* The awake flags as after a sweep in which exactly the rows flagged in
 * changed (n bytes) moved: those rows and their neighbours (a reseeding
 * move's rows, starts.c). Returns how many rows are awake. */
uint64_t sweep_wake(struct sweep *s, const uint8_t *changed);

/* Sweeps shared among processes that each hold the whole graph and model
 * (MPI: src/mpi_group.c, built into coterie-mpi only). Every process runs
 * the same sweeps on the same blocks; of a block of len rows, process
 * `rank` computes rows [len * rank / size, len * (rank + 1) / size) with
 * its threads, gather() hands every process the rows of all, and each
 * applies them in permutation order: every model stays the one-process
 * model bit for bit. A recompute shares its parts the same way, and the
 * parts are combined in their fixed order on every process. */
struct sweep_group {
	unsigned rank, size;
	/* Every process's bytes in rank order. mine (len bytes, borrowed)
	 * goes out; *all is the concatenation and (*lens)[r] process r's
	 * length (both owned by the group, valid until its next call). A
	 * collective: every process calls it at the same point of the same
	 * sweep. 0, or -1 (reported). */
	int (*gather)(void *arg, const void *mine, size_t len, const unsigned char **all,
		      const size_t **lens);
	void *arg;
};

/* Share s's sweeps and recomputes with a group (borrowed: it must
 * outlive s; NULL: alone again). */
void sweep_set_group(struct sweep *s, const struct sweep_group *grp);

#endif
