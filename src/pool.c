/*
 * pool: worker threads and their spinning barriers (include/coterie/pool.h).
 *
 * The workers wait at `start` for a job, run it, and meet at `end`. They
 * are held on `go` until the barriers are sized: if a thread cannot be
 * made the pool runs with those that were, and a barrier must count
 * exactly the threads that meet at it.
 *
 * The barrier. A round ends when the n-th thread arrives: it resets the
 * count, then advances `round` under the mutex and wakes any sleeper. A
 * waiter spins on `round` and, after its spin, sleeps on the condition
 * variable after checking `round` again under the same mutex, so a
 * wake-up cannot be lost. The count is reset before the round advances,
 * so a thread that has seen the new round and arrives at the next one
 * counts afresh. The spin adapts: a wait that ends while spinning doubles
 * the next spin (up to POOL_SPIN_NS), one that has to sleep halves it;
 * with fewer free cores than threads the spin shrinks to nearly nothing
 * and the barrier sleeps at once, as a plain one would.
 *
 * The one thing a newcomer gets wrong: the spin must not call the clock
 * on every turn (it is a system call on some machines); it looks every
 * 256 turns.
 */
#include "coterie/pool.h"

#include <stdint.h>
#include <stdlib.h>

#include "coterie/util.h"

int pool_barrier_init(struct pool_barrier *b, unsigned n)
{
	b->n = n ? n : 1;
	atomic_init(&b->count, 0);
	atomic_init(&b->round, 0);
	b->sleepers = 0;
	atomic_init(&b->spin_ns, POOL_SPIN_NS);
	if (pthread_mutex_init(&b->mu, NULL))
		return error("cannot set up a barrier");
	if (pthread_cond_init(&b->cv, NULL)) {
		pthread_mutex_destroy(&b->mu);
		return error("cannot set up a barrier");
	}
	return 0;
}

void pool_barrier_destroy(struct pool_barrier *b)
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

void pool_barrier_wait(struct pool_barrier *b)
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
			if (limit < POOL_SPIN_NS)
				atomic_store_explicit(&b->spin_ns, limit * 2 + 1000 < POOL_SPIN_NS ?
							  limit * 2 + 1000 : POOL_SPIN_NS,
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

/* What a worker thread is started with. */
struct pool_slot {
	struct pool *p;
	unsigned tid;
};

struct pool {
	unsigned want;      /* threads asked for */
	unsigned nthreads;  /* threads that run a job (the caller's included) */
	pthread_t *workers; /* want entries; [1 .. started] are running */
	struct pool_slot *slots; /* want entries, one per worker */
	unsigned started;
	struct pool_barrier start, end;
	int barriers;
	pool_job_fn *fn; /* NULL: leave */
	void *arg;
	pthread_mutex_t lock;
	pthread_cond_t cond;
	int go; /* under lock: 0 wait, 1 run, -1 leave (no barriers) */
	int released; /* pool_begin() released the workers */
};

struct pool *pool_new(unsigned threads)
{
	struct pool *p = util_calloc(1, sizeof *p);
	if (!p)
		return NULL;
	p->want = threads ? threads : 1;
	p->nthreads = 1;
	pthread_mutex_init(&p->lock, NULL);
	pthread_cond_init(&p->cond, NULL);
	return p;
}

unsigned pool_threads(const struct pool *p)
{
	return p->nthreads;
}

static void *worker_main(void *arg)
{
	const struct pool_slot *slot = arg;
	struct pool *p = slot->p;
	unsigned tid = slot->tid;
	pthread_mutex_lock(&p->lock);
	while (p->go == 0)
		pthread_cond_wait(&p->cond, &p->lock);
	int go = p->go;
	pthread_mutex_unlock(&p->lock);
	if (go < 0)
		return NULL;
	for (;;) {
		pool_barrier_wait(&p->start);
		if (!p->fn)
			break;
		p->fn(p->arg, tid);
		pool_barrier_wait(&p->end);
	}
	return NULL;
}

static void set_go(struct pool *p, int go)
{
	pthread_mutex_lock(&p->lock);
	p->go = go;
	pthread_cond_broadcast(&p->cond);
	pthread_mutex_unlock(&p->lock);
}

int pool_start(struct pool *p)
{
	if (p->want <= 1 || p->started)
		return 0;
	if (!p->workers)
		p->workers = util_calloc(p->want, sizeof *p->workers);
	if (!p->slots)
		p->slots = util_calloc(p->want, sizeof *p->slots);
	if (!p->workers || !p->slots)
		return 0; /* run on the caller's thread alone */
	p->go = 0;
	for (unsigned t = 1; t < p->want; t++) {
		p->slots[t] = (struct pool_slot){ p, t };
		if (pthread_create(&p->workers[t], NULL, worker_main, &p->slots[t])) {
			warning("could start only %u of %u threads; fitting with those", t, p->want);
			break;
		}
		p->started++;
	}
	p->nthreads = p->started + 1;
	int rc = 0;
	if (p->nthreads > 1) {
		if (pool_barrier_init(&p->start, p->nthreads))
			rc = -1;
		else if (pool_barrier_init(&p->end, p->nthreads)) {
			pool_barrier_destroy(&p->start);
			rc = -1;
		} else
			p->barriers = 1;
	}
	set_go(p, rc == 0 ? 1 : -1);
	if (rc) {
		for (unsigned t = 1; t <= p->started; t++)
			pthread_join(p->workers[t], NULL);
		p->started = 0;
		p->nthreads = 1;
	}
	return 0;
}

void pool_stop(struct pool *p)
{
	if (p->started > 0) {
		p->fn = NULL;
		pool_barrier_wait(&p->start);
		for (unsigned t = 1; t <= p->started; t++)
			pthread_join(p->workers[t], NULL);
		p->started = 0;
	}
	if (p->barriers) {
		pool_barrier_destroy(&p->start);
		pool_barrier_destroy(&p->end);
		p->barriers = 0;
	}
	p->nthreads = 1;
}

void pool_free(struct pool *p)
{
	if (!p)
		return;
	pool_stop(p);
	free(p->workers);
	free(p->slots);
	pthread_mutex_destroy(&p->lock);
	pthread_cond_destroy(&p->cond);
	free(p);
}

void pool_begin(struct pool *p, pool_job_fn *fn, void *arg, int alone)
{
	p->fn = fn;
	p->arg = arg;
	p->released = p->nthreads > 1 && !alone;
	if (p->released)
		pool_barrier_wait(&p->start);
}

void pool_end(struct pool *p)
{
	if (p->released)
		pool_barrier_wait(&p->end);
	p->released = 0;
}
