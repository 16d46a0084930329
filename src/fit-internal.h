/*
 * fit-internal: what the pieces of the fit share (fit.c: the fitting
 * thread, its controls and snapshots; starts.c: several starts, the
 * reseeding moves and keeping the best). Not for other modules: they use
 * fit.h, and the checkpoint code savepoint.h.
 */
#ifndef COTERIE_FIT_INTERNAL_H
#define COTERIE_FIT_INTERNAL_H

#define FIT_QUIET_EVERY 8u  /* every 8th sweep computes every row (fit.c, quiet_next()) */
#define FIT_QUIET_WAKE 10.0 /* the gain that wakes a row's neighbours, in plateau gains per row */
#define FIT_MOVE_TOL 1e-3   /* a reseeding move's climb levels off at this tolerance, or a looser --tol (starts.c) */


#include <pthread.h>
#include <stdatomic.h>

#include "coterie/agm.h"
#include "coterie/fit.h"
#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/rng.h"
#include "coterie/savepoint.h"
#include "coterie/sweep.h"

/* Whether entry e of row u of m is a membership by the rule of the
 * output (agm_is_member(): delta and two links' worth, read with the
 * column sums row u's links see; g: the graph m is fitted on, or the
 * view it is read on). The reseeding moves read the cover so: at delta
 * alone, which shrinks like 1/sqrt(n), every stray link is a membership
 * on a large graph, and the cover's background and joins with it (at
 * 10^6 nodes the background read at delta came out at 1e-10, against
 * 4e-6 planted; DEVELOPERS.md, "The merge move"). */
static inline int fit_is_member(const struct model *m, const struct graph *g, uint32_t u,
				struct fentry e)
{
	return agm_is_member(e.v, model_other_colsum(m, u)[e.c], m->delta, AGM_MIN_LINKS,
			     graph_degree(g, u));
}

struct fit {
	const struct graph *g;
	/* The engine works on gw: g renumbered for locality (gi, with
	 * inner[u] the working id of g's node u), or g itself. Snapshots
	 * and origins are in g's ids; the working model is in gw's. */
	const struct graph *gw;
	struct graph gi;
	uint32_t *inner;
	const struct graph *excl;  /* held-out pairs in g's ids (borrowed) */
	struct graph excl_i;       /* the same in gw's ids */
	/* a directed fit (g->paired): the pairs (F_u, H_u), which are no
	 * term of the likelihood (held out for good), and the undirected
	 * view the seeds are drawn from; owned, else NULL */
	struct graph *self_pairs, *view;
	struct fit_params p;
	struct model m;
	const struct objective_ops *ops; /* the likelihood (model_objective()) */
	struct sweep *sw;          /* the sweep engine on m and gw */

	/* published state, under lock */
	pthread_mutex_t lock;
	pthread_cond_t cond;
	struct snapshot *latest;
	struct snapshot *point; /* the newest one with a savepoint, not yet taken */
	enum fit_state state;

	atomic_int stop_req, pause_req, extend_req, interrupt_req, point_req;
	/* fit_share(): stop and interrupt are wishes (0, 1, 2) until agreed */
	int shared;
	atomic_int wish;
	/* fit_set_tol(): the plateau tolerance in force, as the bits of a
	 * double (f->p.tol keeps the one the fit began with) */
	atomic_uint_least64_t tol_bits;
	/* fit_extend_by(): -1 none, 0 to the next plateau, n > 0 sweeps */
	atomic_llong extend_by_req;
	int wake[2];

	pthread_t thread;
	int started, joined;

	/* fitting-thread state */
	struct trace_point *trace;
	uint32_t ntrace, trace_cap;
	uint32_t sweep;
	uint32_t plateau_sweep;
	unsigned streak;
	int awake_ok;              /* the sweep engine's awake flags are the model's */
	int warm_moves;            /* fit_origin.moves: a warm start makes the moves */
	int moving;                /* climbing after a reseeding move: the plateau at FIT_MOVE_TOL */
	int local;                 /* a move's climb: quiet sweeps only, from the rows it woke (starts.c) */
	uint32_t goal_sweep;       /* fit_extend_by(n): run to this sweep, then hold (0: none) */
	double seconds_base, t0;
	struct seed_report seeds;
	struct fit_stats stats;
	int resumed;
	struct fit_savepoint *res_in;  /* owned: where an exact resume begins */
	struct fit_savepoint *res_out; /* owned until the next snapshot takes it */
	uint32_t start, starts;
	uint32_t reseeds;
	/* the best start so far (best_start 0: none yet), as a
	 * savepoint holds it; in_starts while the starts run (savepoints
	 * can be made), climb the start as it levelled off while its
	 * reseeding moves run (else NULL) */
	struct fit_part best;
	uint32_t best_start, best_reseeds;
	enum fit_state best_state;
	double best_loglik;
	double best_score; /* what starts are compared by (starts.c); NAN: not yet scored */
	struct start_end *start_ends; /* starts entries (keep_best()), or NULL for one start */
	int in_starts;
	const struct fit_part *climb;
	/* l(F) after a reseeding move, recomputed (ll_moved set) */
	int ll_moved;
	double ll_moved_value;
	/* the last AGM built for a snapshot, reused while it is recent */
	struct agm agm;
	int have_agm;
	double agm_time, agm_cost;
	uint64_t agm_nnz; /* strengths stored when it was built */
	uint32_t agm_sweep;
	int live_agm;     /* fit_want_live_agm(): fitting snapshots rebuild it */
};

/* starts.c: the reseeding moves of a fit that went on from a warm start
 * (fit_origin.moves) once its climb levelled off; returns how it ended. */
enum fit_state fit_run_moves(struct fit *f);

/* fit.c */
/* Build a snapshot of the current model and swap it in: 0 or -1. */
int fit_publish(struct fit *f, enum fit_state state);
void fit_set_state(struct fit *f, enum fit_state st);
/* Append (f->sweep, now, ll) to the trace: 0 or -1. */
int fit_trace_add(struct fit *f, double ll);
/* l(F) recomputed on the pool (timed in the stats). */
double fit_loglik(struct fit *f);
/* Run the current start until a plateau, max_sweeps or a stop; returns
 * how it ended. With extend, fit_extend() lets it run past plateaus. */
enum fit_state fit_run_start(struct fit *f, int extend);
/* The plateau tolerance in force (fit_set_tol()). */
double fit_tol(struct fit *f);
/* 1 when asked to stop or to be interrupted. */
int fit_stopping(struct fit *f);

/* starts.c */
/* Every start (or the rest of them after an exact resume) and their
 * reseeding moves; leaves the best start in the model. Returns how the
 * fit ended. */
enum fit_state fit_run_starts(struct fit *f);
/* A savepoint of the fit now, at the end of a sweep (NULL when out of
 * memory: the savepoint is a convenience; the fit goes on without it). */
struct fit_savepoint *fit_make_savepoint(struct fit *f);
/* A deep copy of a savepoint; NULL when out of memory. */
struct fit_savepoint *fit_savepoint_dup(const struct fit_savepoint *src);

/* The merge move (fit_merge.c): join at most limit pairs of columns that
 * hold pieces of one community (the edges between them more likely in
 * one block than in the background) and plant the freed columns on the
 * ego-nets a new column would explain best; *made gets the joins made.
 * 1 made, 0 nothing to join, -1 error. The caller climbs and keeps it
 * only if l(F) rose. BigCLAM, directed models (chosen on the
 * undirected view) and two-mode models; 0 for other models. */
int fit_merge_move(struct fit *f, struct rng *r, uint32_t limit, uint32_t *made);

/* The background the cover of m leaves on g (the merge move's bg): the
 * edges whose ends share no column over the pairs in no column, the
 * columns read by fit_is_member(); epsilon when that is 0 or above it;
 * NaN when out of memory. */
double fit_merge_background(const struct model *m, const struct graph *g);

/* The AGM's block test of the merge move for two overlapping columns A
 * and B: the log-likelihood of all the pairs of A u B as one block at
 * its maximum-likelihood rate less that of two overlapping blocks (a pair
 * of A n B linked with 1 - (1 - pA)(1 - pB)(1 - bg), pairs between A \ B
 * and B \ A at bg), pA and pB at their maximum. eI, NI: edges and pairs
 * inside A n B; eA, NA: A's other pairs; eB, NB: B's; eX, NX: between.
 * Positive: one block explains them better. Exposed for the tests. */
double fit_merge_block_gain(double eI, double NI, double eA, double NA, double eB, double NB,
			    double eX, double NX, double bg);

/* The sweep engine's awake flags (sweep.h) in g's ids, a copy (g->n
 * bytes, freed by the caller); NULL when they are not the model's
 * (awake_ok 0) or out of memory. */
uint8_t *fit_awake_copy(const struct fit *f);
/* Set them from g->n flags in g's ids (the model must be the one they
 * describe); awake_ok becomes 1. 0 or -1. */
int fit_awake_set(struct fit *f, const uint8_t *awake);

#endif
