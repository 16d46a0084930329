/*
 * savepoint: where an interrupted fit stands, so that a resumed one ends
 * with the bytes an uninterrupted one would have given (same seed, same
 * parameters). The fit makes one (fit_interrupt(), fit_want_savepoint())
 * and hands it out in a snapshot; the checkpoint writer and reader
 * (result.h) store it; fit_new() takes it back through struct fit_origin.
 * Only they need this header: fit.h declares the structs and nothing more.
 */
#ifndef COTERIE_SAVEPOINT_H
#define COTERIE_SAVEPOINT_H

#include <stdint.h>

#include "fcsr.h"
#include "fit.h"

/* One start's model at a point where it can go on: strengths, trace, the
 * sweep count and where the plateau rule first fired. The fit keeps its
 * best start so far in one, too. */
struct fit_part {
	struct fcsr F;
	struct trace_point *trace;
	uint32_t ntrace;
	uint32_t sweep, plateau_sweep;
	uint8_t *awake; /* F.n flags (0 or 1) in the graph's ids: the rows the
			 * next sweep visits if it is quiet (sweep.h); NULL:
			 * the next sweep visits every row */
};

/*
 *   start  the start in progress (1-based) of snapshot.starts
 *   phase  FIT_PHASE_CLIMB: cur is that start after its last whole sweep,
 *          still climbing to its first plateau; FIT_PHASE_RESEED: cur is
 *          that start as it levelled off, and its refinement moves are
 *          made again from there (they are drawn from the seed and the
 *          start, so they come out the same; the work of the moves made
 *          before the interrupt is done again).
 *   best   the most likely of the starts before it (best_start 0: none),
 *          with the state it ended in (LEVELLED or FINISHED), the
 *          refinement moves it kept and its final log-likelihood.
 */
enum { FIT_PHASE_CLIMB = 0, FIT_PHASE_RESEED = 1 };
struct fit_savepoint {
	uint32_t start, phase;
	struct fit_part cur;
	uint32_t best_start;
	struct fit_part best;
	uint32_t best_reseeds;
	enum fit_state best_state;
	double best_loglik;
};

/* Frees r and its parts; NULL is a no-op. */
void fit_savepoint_free(struct fit_savepoint *r);
/* Free the arrays of p and zero it. */
void fit_part_release(struct fit_part *p);

#endif
