/*
 * barrier: a reusable thread barrier that spins briefly before it sleeps.
 *
 * The fit's pool meets at two barriers per block of rows, hundreds of
 * times a sweep. A sleeping barrier (pthread_barrier_t) costs a futex
 * wake-up and a trip through the scheduler each time, which on small
 * graphs is as long as the block itself; spinning for a few tens of
 * microseconds first lets a waiter that is still on its core leave as
 * soon as the last thread arrives. Past the spin (at most BARRIER_SPIN_NS,
 * shorter while spins keep failing: see barrier.c) the waiter sleeps on a condition variable, so long gaps (the likelihood, the
 * snapshots between sweeps, a paused fit) cost no CPU.
 *
 * Owner: fit.c's pool. All memory written before barrier_wait() by any
 * thread is visible to every thread after it returns.
 */
#ifndef COTERIE_BARRIER_H
#define COTERIE_BARRIER_H

#include <pthread.h>
#include <stdatomic.h>

#define BARRIER_SPIN_NS 50000.0 /* spin at most this long before sleeping */

struct barrier {
	unsigned n;           /* threads that meet */
	atomic_uint count;    /* arrived in the current round */
	atomic_uint round;    /* rounds completed */
	_Atomic double spin_ns; /* how long a waiter spins now (adapts; a heuristic) */
	unsigned sleepers;    /* under mu */
	pthread_mutex_t mu;
	pthread_cond_t cv;
};

/* For n >= 1 threads. Returns 0 or -1 (reported). */
int barrier_init(struct barrier *b, unsigned n);
void barrier_destroy(struct barrier *b);
/* Wait until all n threads have called it in this round. */
void barrier_wait(struct barrier *b);

#endif
