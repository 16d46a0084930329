/*
 * fit: the fitting engine. Owns the working model, drives the sweep
 * engine (sweep.h) on its own thread, and publishes an immutable snapshot
 * after every sweep for readers (the batch command, the explorer).
 *
 * Several starts: with starts > 1 the fit seeds and runs to a plateau that
 * many times, each with its own sweep orders, and keeps the start with the
 * highest log-likelihood (the likelihood has many local maxima; the most
 * likely of a few is the maximum-likelihood answer the model asks for).
 * Snapshots show the start in progress; the final one is the best start.
 *
 * Reseeding: when a start levels off, the weakest column is emptied and
 * seeded again inside the largest community, and the fit runs to a
 * plateau again; the move is kept only if the likelihood rose (see
 * src/starts.c; no_reseed skips it). A fit that holds at a plateau
 * holds after the starts and their reseeding are done.
 *
 * Determinism: each sweep visits the nodes in a permutation drawn from
 * (seed, start, sweep); the sweep engine makes the result independent of
 * the thread count (sweep.h), so the same seed gives the same bytes for
 * any -j.
 *
 * All locking of the fit's state lives in fit.c (the pool's own in
 * pool.c). Control calls (pause, unpause, stop, extend, extend by, the
 * tolerance) are safe from any thread and never block on a sweep.
 */
#ifndef COTERIE_FIT_H
#define COTERIE_FIT_H

#include <stdint.h>

#include "agm.h"
#include "model.h"
#include "seed.h"

struct graph;

enum fit_state {
	FIT_READY = 0, /* made, not started */
	FIT_SEEDING,
	FIT_FITTING,
	FIT_PAUSED,
	FIT_LEVELLED, /* ended: the plateau rule fired */
	FIT_STOPPED,  /* ended: asked to stop; the model is kept */
	FIT_FINISHED, /* ended: reached max_sweeps */
	FIT_FAILED,   /* ended: an error (reported through error()) */
};

const char *fit_state_name(enum fit_state s);
/* 1 for the states that end a fit: LEVELLED (even while holding, the
 * model is final unless extended), STOPPED, FINISHED, FAILED. */
int fit_state_ended(enum fit_state s);

struct fit_params {
	uint32_t k;          /* communities (columns) */
	unsigned threads;    /* workers, >= 1 */
	uint64_t seed;
	double tol;          /* plateau: relative gain per sweep below this ... */
	unsigned patience;   /* ... for this many sweeps in a row */
	unsigned max_sweeps; /* hard limit on the sweep count (total, resumes included) */
	double epsilon;      /* background; <= 0 picks model_default_epsilon() */
	int past_plateau;    /* 1: do not stop at a plateau, only mark it */
	unsigned starts;     /* fit this many times (sweep orders differ) and
			      * keep the shortest code (starts.c); >= 1 */
	int no_reseed;       /* 1: skip the reseeding moves after a plateau */
	int hold_at_plateau; /* 1: at a plateau wait (state LEVELLED) for
			      * fit_extend() or fit_stop() instead of ending */
	enum model_kind model; /* the likelihood (model.h); 0: BigCLAM */
	int renumber;        /* 1: fit with the nodes renumbered breadth-first
			      * (order.h); 0 (default): in the graph's own
			      * ids. Results are in the graph's ids either
			      * way. Off by default (DEVELOPERS.md,
			      * performance notes). */
	enum seed_kind seeding; /* how each start is seeded (seed.h); 0,
			      * SEED_CLUSTERS, by default */
	int full_sweeps;     /* 1: every sweep computes every row (no quiet
			      * sweeps, sweep.h; for measurements: the
			      * commands leave it 0). Not stored in a
			      * checkpoint. */
};

/* Defaults: k 10, 1 thread, seed 1, tol 1e-4, patience 3, 500 sweeps,
 * 3 starts. */
void fit_params_default(struct fit_params *p);

struct trace_point {
	uint32_t sweep;   /* 0 is the seeded model */
	double seconds;   /* since the fit began, resumes included */
	double loglik;    /* l(F) after the sweep (summed or recomputed: sweep.c) */
};

/* Where the time went, for benchmarks (all starts and refinement moves
 * included; wall-clock seconds on the fitting thread). */
/* How a start ended, as the starts were compared (run.json's record):
 * its final l(F) and its cover's code length; NAN where unknown (a start
 * not ended in this process, or a model not judged by code length). */
struct start_end {
	double loglik, code;
};

struct fit_stats {
	double seed_seconds;    /* seeding */
	double sweep_seconds;   /* sweeps: row updates, applying them, summing l(F) */
	double sweep_cpu_seconds; /* the fitting thread's CPU time in sweeps
				   * (all of it with one thread) */
	double loglik_seconds;  /* recomputing l(F) (start, reseed, end of a start) */
	double publish_seconds; /* building snapshots */
	uint32_t sweeps;        /* sweeps run */
	uint64_t rows;          /* row updates computed */
	uint64_t rows_skipped;  /* rows quiet sweeps left as they were (sweep.h) */
	uint64_t trials;        /* line-search trials evaluated */
	uint64_t visits;        /* neighbour rows read (model_work_counts()) */
	uint64_t entries;       /* their entries read in gradient passes (model_work_entries()) */
	uint32_t moves_local;   /* reseeding moves whose climb was local (starts.c) */
	uint32_t moves_plain;   /* and those that woke over half of the rows */
};

/* An immutable picture of the fit after a sweep. Take one with
 * fit_snapshot() and give it back with snapshot_release(). */
struct snapshot {
	uint32_t sweep;          /* of the current start */
	uint32_t start, starts;  /* which start this is (1-based), of how many */
	uint32_t best_start;     /* the best start so far (0: none done) */
	double best_loglik;      /* its final log-likelihood */
	struct start_end *start_ends; /* owned; starts entries (see below), or NULL */
	uint32_t reseeds;        /* reseeding moves kept in this start */
	enum fit_state state;
	int plateau;             /* the plateau rule has fired */
	uint32_t plateau_sweep;  /* where it first fired (0: not yet) */
	double seconds;          /* elapsed, resumes included */
	double sweeps_per_sec;   /* over the last few sweeps */
	double epsilon, delta;
	uint32_t ntrace;
	struct trace_point *trace;
	struct fcsr F;           /* a copy of the strengths (none while fitting
				  * unless fit_want_live_agm() or a savepoint) */
	struct agm agm;          /* memberships and figures read from F as it
				  * was after sweep agm_sweep: while fitting,
				  * the AGM is rebuilt only as often as keeps
				  * its cost under a twentieth of the time; every
				  * snapshot that ends or pauses a fit has a
				  * fresh one (agm_sweep == sweep) */
	uint32_t agm_sweep;
	struct seed_report seeds;
	struct fit_savepoint *savepoint; /* owned; in the last snapshot of an
				    * interrupted fit (see fit_interrupt())
				    * and in the one after
				    * fit_want_savepoint(), else NULL */
	struct fit_stats stats;  /* up to this snapshot (its own cost excluded) */
	uint8_t *awake;          /* owned; in a snapshot that ends a fit whose
				  * last sweep's awake flags describe F (g->n
				  * bytes, sweep.h), so that a resume goes on
				  * as the fit would have; else NULL */
	/* private */
	int refs_;
};

void snapshot_release(struct snapshot *s);
/* A copy of s (borrowed) of its own (one reference, no savepoint), for a
 * reader that shows another trace over the same strengths (a followed
 * fit, follow.h). NULL when out of memory (reported). */
struct snapshot *snapshot_copy(const struct snapshot *s);

/* Where an interrupted fit stands and one start's model in it: see
 * savepoint.h (only the checkpoint code and fit.c need their fields). */
struct fit_part;
struct fit_savepoint;
void fit_savepoint_free(struct fit_savepoint *r); /* NULL is a no-op */

/* Where a resumed fit starts; all borrowed and copied by fit_new(). */
struct fit_origin {
	const struct fcsr *F;
	const struct trace_point *trace;
	uint32_t ntrace;
	uint32_t sweep;
	double seconds;
	uint32_t plateau_sweep;
	/* NULL: go on from F as one start, without refinement (a fit that
	 * ended, or was stopped inside a sweep). Else: continue the starts
	 * exactly where an interrupt left them (F and the fields above are
	 * then not used; the parameters must be the saved ones). */
	const struct fit_savepoint *savepoint;
	/* g->n flags or NULL: the rows the first sweep visits if it is
	 * quiet (F's, or the savepoint's start in progress when it was
	 * climbing; sweep.h) */
	const uint8_t *awake;
	/* 0: go on as one start and stop at its plateau (a resume). 1: a
	 * warm start (the fits of -k auto's search, select.c): after the
	 * climb, the reseeding moves as after a start, unless p->no_reseed */
	int moves;
};

struct fit;

/* Make a fit of g (borrowed; must outlive the fit). origin NULL seeds a
 * new model; otherwise the fit continues from it (its shape must match:
 * n == g->n, k == p->k). Returns NULL on failure. Free with fit_free(). */
struct fit *fit_new(const struct graph *g, const struct fit_params *p,
		    const struct fit_origin *origin);
/* Stops and joins the thread if running, then frees. fit_free(NULL) is a no-op. */
void fit_free(struct fit *f);

/* Leave the pairs of excl (borrowed; same nodes as the graph, no pair in
 * common with its edges) out of the likelihood, as held-out pairs. Call
 * before fit_start(). */
void fit_exclude(struct fit *f, const struct graph *excl);

/* Ask that every snapshot published while fitting carry the strengths
 * and the AGM of a recent model (the AGM rebuilt as often as keeps it
 * under about a twentieth of the fitting thread's time;
 * snapshot.agm_sweep says which sweep), for a reader that shows the
 * communities as they form (the explorer). Without it a fitting snapshot
 * carries no strengths (F has n = k = 0; a savepoint's snapshot still
 * carries them) and the last AGM built (on the model before seeding, at a
 * pause or at a plateau), which costs nothing and may be empty: the batch
 * command reads the strengths and the AGM only of the final snapshot.
 * Call before fit_start(). */
void fit_want_live_agm(struct fit *f);

/* Launch the fitting thread. Returns 0 or -1. */
int fit_start(struct fit *f);
void fit_pause(struct fit *f);
void fit_unpause(struct fit *f);
/* Ask the fit to end after the current block; the model so far is kept
 * and a final snapshot published. */
void fit_stop(struct fit *f);
/* Ask the fit to end after the sweep in progress (a paused fit goes on to
 * the end of it first), and to leave in its last snapshot what an exact
 * resume needs (snapshot.savepoint), unless fit_stop() comes too. */
void fit_interrupt(struct fit *f);

struct sweep_group;
/* Share the fit's sweeps with other processes running the same fit
 * (sweep.h, struct sweep_group; borrowed, it must outlive f); before
 * fit_start(). Then fit_stop() and fit_interrupt() only record a wish
 * (fit_wish()) that the group carries to every process, and each acts on
 * it at the same block with fit_agree(): a fit that stopped on one
 * process alone would leave the others waiting in an exchange. */
void fit_share(struct fit *f, const struct sweep_group *grp);
/* The wish of a shared fit: 0 none, 1 interrupt, 2 stop. Any thread. */
int fit_wish(struct fit *f);
/* What every process agreed (the largest wish of any): as fit_interrupt()
 * (1) or fit_stop() (2) on a fit alone. On the fitting thread, inside
 * the group's exchange; 0 does nothing. */
void fit_agree(struct fit *f, int wish);
/* Ask that the next sweep to end publish a snapshot with a savepoint
 * (snapshot.savepoint), for a periodic checkpoint that resumes exactly. A fit
 * continued as one start (fit_origin without savepoint) never makes one. */
void fit_want_savepoint(struct fit *f);
/* The newest snapshot that carried a savepoint, if one was published
 * since the last call, else NULL; it is not returned twice. Caller releases
 * with snapshot_release(). */
struct snapshot *fit_take_savepoint(struct fit *f);
/* Let a fit that levelled off (or is about to) run on until stopped or
 * max_sweeps: a fit holding at a plateau goes on fitting. Replaces an
 * earlier fit_extend_by(). Has no effect after the thread ended. */
void fit_extend(struct fit *f);
/* Let a fit that holds at a plateau (or is fitting past its starts) go
 * on for n more sweeps from the next one, then hold again (state
 * LEVELLED); n == 0: until the plateau rule fires again, its streak
 * counted afresh at the tolerance then in force. Replaces an earlier
 * fit_extend() or fit_extend_by(). The sweep limit still ends the fit
 * (FINISHED). Read between sweeps; a request made while the starts run
 * waits for them. No effect after the thread ended. */
void fit_extend_by(struct fit *f, uint32_t n);
/* Change the plateau tolerance (relative gain per sweep) from the next
 * sweep on; tol > 0. The sweeps themselves never depend on it, so the
 * same seed gives the same model at every sweep: only where the fit
 * stops changes. fit_get_params() keeps the tolerance the fit began
 * with; fit_get_tol() gives the one in force. */
void fit_set_tol(struct fit *f, double tol);
double fit_get_tol(struct fit *f);

/* Wait for the thread to end; returns the final state. */
enum fit_state fit_wait(struct fit *f);
enum fit_state fit_get_state(struct fit *f);

/* The newest snapshot (never NULL after fit_new(): the seeded or resumed
 * model is published first). Caller releases with snapshot_release(). */
struct snapshot *fit_snapshot(struct fit *f);

/* A descriptor that becomes readable when something new is published;
 * call fit_drain_wake() after poll() says so. */
int fit_wake_fd(struct fit *f);
void fit_drain_wake(struct fit *f);

const struct fit_params *fit_get_params(const struct fit *f);

#endif
