/*
 * test_pool: the spinning barrier of the sweep engine's pool.
 *
 * Reference: the definition of a barrier (no thread leaves round r until
 * every thread has arrived in round r; POSIX pthread_barrier_wait(),
 * IEEE Std 1003.1-2017), checked with a counter each thread bumps before
 * it waits: after the barrier of round r every thread must see exactly
 * n * (r + 1) bumps, by hand from n threads each adding one per round.
 */
#include "helpers.h"

#include <pthread.h>
#include <stdatomic.h>
#include <time.h>

#include "coterie/pool.h"

#define THREADS 3
#define ROUNDS 1000

struct shared {
	struct pool_barrier b;
	atomic_uint arrived;
	atomic_int bad;
	int sleepy; /* one thread dawdles now and then, past the spin */
};

struct arg {
	struct shared *s;
	unsigned id;
};

static void *run(void *p)
{
	struct arg *a = p;
	struct shared *s = a->s;
	for (unsigned r = 0; r < ROUNDS; r++) {
		if (s->sleepy && a->id == 0 && r % 250 == 0) {
			/* 2 ms, well past POOL_SPIN_NS: the others must sleep and be woken */
			struct timespec ts = { 0, 2000000 };
			nanosleep(&ts, NULL);
		}
		atomic_fetch_add(&s->arrived, 1);
		pool_barrier_wait(&s->b);
		if (atomic_load(&s->arrived) < THREADS * (r + 1))
			atomic_store(&s->bad, 1);
		/* and no one may bump round r + 1 before everyone read round r */
		pool_barrier_wait(&s->b);
	}
	return NULL;
}

static void run_threads(int sleepy)
{
	struct shared s;
	atomic_init(&s.arrived, 0);
	atomic_init(&s.bad, 0);
	s.sleepy = sleepy;
	assert_int_equal(pool_barrier_init(&s.b, THREADS), 0);
	pthread_t t[THREADS];
	struct arg a[THREADS];
	for (unsigned i = 0; i < THREADS; i++) {
		a[i] = (struct arg){ &s, i };
		assert_int_equal(pthread_create(&t[i], NULL, run, &a[i]), 0);
	}
	for (unsigned i = 0; i < THREADS; i++)
		pthread_join(t[i], NULL);
	pool_barrier_destroy(&s.b);
	assert_int_equal(atomic_load(&s.bad), 0);
	/* by hand: THREADS threads, one bump per round */
	assert_int_equal(atomic_load(&s.arrived), THREADS * ROUNDS);
}

static void test_no_thread_leaves_a_round_before_all_arrive(void **state)
{
	(void)state;
	run_threads(0);
}

static void test_waiters_that_fell_asleep_are_woken(void **state)
{
	(void)state;
	run_threads(1);
}

static void test_one_thread_never_waits(void **state)
{
	(void)state;
	struct pool_barrier b;
	assert_int_equal(pool_barrier_init(&b, 1), 0);
	for (int i = 0; i < 10; i++)
		pool_barrier_wait(&b); /* would hang if a lone thread waited for a second one */
	pool_barrier_destroy(&b);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_no_thread_leaves_a_round_before_all_arrive),
		cmocka_unit_test(test_waiters_that_fell_asleep_are_woken),
		cmocka_unit_test(test_one_thread_never_waits),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
