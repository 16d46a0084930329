/*
 * pool: a fixed set of threads that run one job function together, block
 * after block, meeting at two barriers that spin briefly before they
 * sleep. The sweep engine (sweep.h) is its one user: the pool decides who
 * runs, never what is computed.
 *
 * A job is fn(arg, tid) run by every thread of the pool, tid 0 being the
 * caller's own thread; the threads share the work through an atomic
 * counter of their own (the job's business). pool_begin() releases the
 * workers into the job, the caller may do other work (the sweep cuts the
 * next block there) and then its share, and pool_end() waits until every
 * thread has finished. All memory written before pool_begin() is visible
 * to the job, and all the job wrote is visible after pool_end().
 *
 * Why barriers that spin: the pool meets twice per block of rows,
 * hundreds of times a sweep. A sleeping barrier (pthread_barrier_t) costs
 * a futex wake-up and a trip through the scheduler each time, which on
 * small graphs is as long as the block itself; spinning for a few tens of
 * microseconds first lets a waiter still on its core leave as soon as the
 * last thread arrives. Past the spin (at most POOL_SPIN_NS, shorter while
 * spins keep failing: see pool.c) the waiter sleeps, so long gaps (the
 * likelihood, snapshots, a paused fit) cost no CPU.
 */
#ifndef COTERIE_POOL_H
#define COTERIE_POOL_H

#include <pthread.h>
#include <stdatomic.h>

#define POOL_SPIN_NS 50000.0 /* a barrier spins at most this long before sleeping */

/* A reusable barrier for n threads: spin, then sleep. */
struct pool_barrier {
	unsigned n;           /* threads that meet */
	atomic_uint count;    /* arrived in the current round */
	atomic_uint round;    /* rounds completed */
	_Atomic double spin_ns; /* how long a waiter spins now (adapts; a heuristic) */
	unsigned sleepers;    /* under mu */
	pthread_mutex_t mu;
	pthread_cond_t cv;
};

/* For n >= 1 threads. Returns 0 or -1 (reported). */
int pool_barrier_init(struct pool_barrier *b, unsigned n);
void pool_barrier_destroy(struct pool_barrier *b);
/* Wait until all n threads have called it in this round. */
void pool_barrier_wait(struct pool_barrier *b);

typedef void pool_job_fn(void *arg, unsigned tid);

struct pool;

/* A pool that will run with up to `threads` threads (the caller's
 * included); no thread is made yet. NULL when out of memory. Free with
 * pool_free(). */
struct pool *pool_new(unsigned threads);
/* Make the worker threads (they inherit the caller's signal mask). If a
 * thread cannot be made the pool runs with those that were (a warning
 * says so). Returns 0; the pool then has pool_threads() threads. */
int pool_start(struct pool *p);
/* Join the workers (no job may be running); pool_start() may follow. */
void pool_stop(struct pool *p);
/* Stops the pool if started, then frees. NULL is a no-op. */
void pool_free(struct pool *p);
/* Threads that run a job now: 1 before pool_start(). */
unsigned pool_threads(const struct pool *p);

/* Release the workers into fn(arg, tid) for tid 1 .. threads - 1. With
 * alone set (or one thread) nothing is released: the caller does all. */
void pool_begin(struct pool *p, pool_job_fn *fn, void *arg, int alone);
/* Call after the caller ran fn(arg, 0): waits for the workers. */
void pool_end(struct pool *p);

#endif
