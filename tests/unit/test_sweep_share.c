/*
 * The sweeps shared among processes (sweep.c's struct sweep_group, what
 * coterie-mpi hands every fit) without MPI: P fits of one graph run on
 * threads of this process, each with a group whose gather is an allgather
 * through memory (every rank's bytes in rank order, as MPI_Allgatherv
 * hands them; a barrier on either side). Each rank computes its share of
 * every block's rows and applies the others' rows from the exchange; each
 * must end as the fit made alone, bit for bit: the same strengths, the
 * same trace, the same sweep (DEVELOPERS.md, "The fit across processes").
 * The command tests check the same through mpirun where MPI is present
 * (fit_mpi.sh); this one runs wherever make check does.
 */
#include "helpers.h"

#include <pthread.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/cover.h"
#include "coterie/fit.h"
#include "coterie/graph.h"
#include "coterie/sweep.h"

#define MAXP 3

struct hub {
	unsigned size;
	pthread_barrier_t bar;
	unsigned char *slot[MAXP];
	size_t len[MAXP];
	unsigned long calls; /* rank 0's gathers */
};

struct member {
	struct hub *h;
	unsigned rank;
	unsigned char *all;
	size_t lens[MAXP];
	struct sweep_group sg;
};

/* Every rank's bytes, in rank order, to every rank: each writes its own
 * slot, all meet, each copies every slot, all meet again (no slot is
 * written while another rank may still read it). */
static int hub_gather(void *arg, const void *mine, size_t len, const unsigned char **all,
		      const size_t **lens)
{
	struct member *m = arg;
	struct hub *h = m->h;
	h->slot[m->rank] = malloc(len ? len : 1);
	if (!h->slot[m->rank])
		return -1;
	memcpy(h->slot[m->rank], mine, len);
	h->len[m->rank] = len;
	pthread_barrier_wait(&h->bar);
	size_t total = 0;
	for (unsigned r = 0; r < h->size; r++)
		total += h->len[r];
	free(m->all);
	m->all = malloc(total ? total : 1);
	if (!m->all)
		return -1;
	size_t at = 0;
	for (unsigned r = 0; r < h->size; r++) {
		memcpy(m->all + at, h->slot[r], h->len[r]);
		m->lens[r] = h->len[r];
		at += h->len[r];
	}
	if (m->rank == 0)
		h->calls++;
	pthread_barrier_wait(&h->bar);
	free(h->slot[m->rank]);
	h->slot[m->rank] = NULL;
	*all = m->all;
	*lens = m->lens;
	return 0;
}

static void assert_same_fit(const struct snapshot *a, const struct snapshot *b)
{
	assert_int_equal(a->state, b->state);
	assert_int_equal(a->sweep, b->sweep);
	assert_int_equal(a->best_start, b->best_start);
	assert_int_equal(a->ntrace, b->ntrace);
	for (uint32_t t = 0; t < a->ntrace; t++)
		assert_true(a->trace[t].loglik == b->trace[t].loglik);
	assert_same_strengths(&a->F, &b->F);
	assert_int_equal(a->agm.cover.k, b->agm.cover.k);
	assert_memory_equal(a->agm.cover.off, b->agm.cover.off,
			    ((size_t)a->agm.cover.k + 1) * sizeof *a->agm.cover.off);
	assert_memory_equal(a->agm.cover.mem, b->agm.cover.mem,
			    a->agm.cover.off[a->agm.cover.k] * sizeof *a->agm.cover.mem);
}

/* The fit of g with p on P ranks, each its own fit on its own threads;
 * every rank's final snapshot against alone's. Returns rank 0's gathers. */
static unsigned long fit_shared(const struct graph *g, const struct fit_params *p, unsigned P,
				const struct snapshot *alone)
{
	struct hub h = { .size = P };
	struct member m[MAXP];
	struct fit *f[MAXP];
	assert_int_equal(pthread_barrier_init(&h.bar, NULL, P), 0);
	for (unsigned r = 0; r < P; r++) {
		m[r] = (struct member){ .h = &h, .rank = r };
		m[r].sg = (struct sweep_group){ r, P, hub_gather, &m[r] };
		f[r] = fit_new(g, p, NULL);
		assert_non_null(f[r]);
		fit_share(f[r], &m[r].sg);
	}
	for (unsigned r = 0; r < P; r++)
		assert_int_equal(fit_start(f[r]), 0);
	for (unsigned r = 0; r < P; r++) {
		enum fit_state st = fit_wait(f[r]);
		assert_true(st == FIT_LEVELLED || st == FIT_FINISHED);
		struct snapshot *s = fit_snapshot(f[r]);
		assert_same_fit(s, alone);
		snapshot_release(s);
		fit_free(f[r]);
		free(m[r].all);
	}
	pthread_barrier_destroy(&h.bar);
	return h.calls;
}

static void check_graph(const struct graph *g, uint32_t k, unsigned starts, const char *what)
{
	struct fit_params p;
	fit_params_default(&p);
	p.k = k;
	p.threads = 1;
	p.seed = 3;
	p.starts = starts;
	int st;
	struct snapshot *alone = test_fit_to_end(g, &p, NULL, &st);
	for (unsigned P = 2; P <= MAXP; P++) {
		unsigned long calls = fit_shared(g, &p, P, alone);
		printf("%s: %u ranks, %lu exchanges, sweep %u, loglik %.10g: as alone\n", what, P,
		       calls, alone->sweep, alone->ntrace ? alone->trace[alone->ntrace - 1].loglik
							  : 0.0);
		assert_true(calls > 0);
	}
	/* two threads a rank: the same again (a rank's rows split among its
	 * threads, as -j does alone) */
	p.threads = 2;
	fit_shared(g, &p, 2, alone);
	snapshot_release(alone);
}

static void test_shared_sweeps_end_as_the_fit_alone(void **state)
{
	(void)state;
	/* a planted ring of overlapping communities (helpers.c), blocks of
	 * many rows; then football, blocks of one row (n / 64 < 2) */
	struct cover truth;
	struct graph *g = test_planted_ring_of(&truth, 1500, 30, 80, 50, 0.3, 0.002, 7);
	check_graph(g, 30, 1, "planted ring, 1500 nodes");
	cover_release(&truth);
	graph_free(g);
	g = graph_load(test_data("football/edges.tsv"), GRAPH_FORMAT_AUTO);
	assert_non_null(g);
	check_graph(g, 12, 3, "football, 3 starts");
	graph_free(g);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_shared_sweeps_end_as_the_fit_alone),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
