/*
 * barrier: spin, then sleep (see include/coterie/barrier.h).
 *
 * A round ends when the n-th thread arrives: it resets the count, then
 * advances `round` under the mutex and wakes any sleeper. A waiter spins
 * on `round` and, after BARRIER_SPIN_NS, sleeps on the condition variable
 * after checking `round` again under the same mutex, so a wake-up cannot
 * be lost. The count is reset before the round advances, so a thread that
 * has seen the new round and arrives at the next one counts afresh.
 *
 * The spin adapts: a wait that ends while spinning doubles the next spin
 * (up to BARRIER_SPIN_NS), one that has to sleep halves it. When the
 * machine has fewer free cores than the pool has threads, the thread
 * being waited for is often off its core and spinning only burns the
 * waiter's share; the spin then shrinks to nearly nothing and the
 * barrier sleeps at once, as a plain one would.
 *
 * The one thing a newcomer gets wrong: the spin must not call the clock
 * on every turn (it is a system call on some machines); it looks every
 * 256 turns.
 */
#include "coterie/barrier.h"

#include <time.h>

#include "coterie/util.h"

int barrier_init(struct barrier *b, unsigned n)
{
	b->n = n ? n : 1;
	atomic_init(&b->count, 0);
	atomic_init(&b->round, 0);
	b->sleepers = 0;
	atomic_init(&b->spin_ns, BARRIER_SPIN_NS);
	if (pthread_mutex_init(&b->mu, NULL))
		return error("cannot set up a barrier");
	if (pthread_cond_init(&b->cv, NULL)) {
		pthread_mutex_destroy(&b->mu);
		return error("cannot set up a barrier");
	}
	return 0;
}

void barrier_destroy(struct barrier *b)
{
	pthread_cond_destroy(&b->cv);
	pthread_mutex_destroy(&b->mu);
}

static inline void cpu_relax(void)
{
#if defined(__x86_64__) || defined(__i386__)
	__builtin_ia32_pause();
#elif defined(__aarch64__)
	__asm__ __volatile__("yield");
#endif
}

void barrier_wait(struct barrier *b)
{
	unsigned r = atomic_load(&b->round);
	if (atomic_fetch_add(&b->count, 1) + 1 == b->n) {
		atomic_store(&b->count, 0);
		pthread_mutex_lock(&b->mu);
		atomic_store(&b->round, r + 1);
		if (b->sleepers)
			pthread_cond_broadcast(&b->cv);
		pthread_mutex_unlock(&b->mu);
		return;
	}
	double t0 = util_now(), limit = atomic_load_explicit(&b->spin_ns, memory_order_relaxed);
	for (unsigned turn = 1;; turn++) {
		if (atomic_load(&b->round) != r) {
			/* the spin paid: allow a longer one next time */
			if (limit < BARRIER_SPIN_NS)
				atomic_store_explicit(&b->spin_ns, limit * 2 + 1000 < BARRIER_SPIN_NS ?
							  limit * 2 + 1000 : BARRIER_SPIN_NS,
						      memory_order_relaxed);
			return;
		}
		cpu_relax();
		if ((turn & 255) == 0 && (util_now() - t0) * 1e9 > limit)
			break;
	}
	/* it did not: spin half as long next time */
	atomic_store_explicit(&b->spin_ns, limit / 2, memory_order_relaxed);
	pthread_mutex_lock(&b->mu);
	b->sleepers++;
	while (atomic_load(&b->round) == r)
		pthread_cond_wait(&b->cv, &b->mu);
	b->sleepers--;
	pthread_mutex_unlock(&b->mu);
}
