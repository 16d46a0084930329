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
	double t0 = util_now();
	for (unsigned turn = 1;; turn++) {
		if (atomic_load(&b->round) != r)
			return;
		cpu_relax();
		if ((turn & 255) == 0 && (util_now() - t0) * 1e9 > BARRIER_SPIN_NS)
			break;
	}
	pthread_mutex_lock(&b->mu);
	b->sleepers++;
	while (atomic_load(&b->round) == r)
		pthread_cond_wait(&b->cv, &b->mu);
	b->sleepers--;
	pthread_mutex_unlock(&b->mu);
}
