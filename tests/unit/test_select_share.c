/*
 * test_select_share: the exchange of -k auto's scores among processes
 * (src/select_share.c) without MPI: a fake group of 2 whose gather
 * returns bytes recorded from each process's own call, as MPI_Allgatherv
 * would. A score and its kept strengths arrive bit for bit; a stop asked
 * on one process reaches the other; a failed process, or bytes cut
 * short, make every process fail.
 */
#include "helpers.h"

#include <stdlib.h>
#include <string.h>

#include "coterie/fcsr.h"
#include "coterie/sweep.h"
#include "../../src/select-internal.h"

/* The fake group: slot[r] holds process r's bytes of its last call;
 * gather() records the caller's (rank me) and returns every slot. */
struct fake {
	unsigned me;
	unsigned char slot[2][4096];
	size_t len[2];
	unsigned char all[8192];
	size_t lens[2];
};

static int fake_gather(void *arg, const void *mine, size_t len, const unsigned char **all,
		       const size_t **lens)
{
	struct fake *f = arg;
	assert_true(len <= sizeof f->slot[0]);
	if (len)
		memcpy(f->slot[f->me], mine, len);
	f->len[f->me] = len;
	size_t at = 0;
	for (unsigned r = 0; r < 2; r++) {
		memcpy(f->all + at, f->slot[r], f->len[r]);
		f->lens[r] = f->len[r];
		at += f->len[r];
	}
	*all = f->all;
	*lens = f->lens;
	return 0;
}

/* The bytes of a process with nothing to say (stop 0, no task). */
static void fake_quiet(struct fake *f, unsigned r)
{
	memset(f->slot[r], 0, 8);
	f->len[r] = 8;
}

/* A 3 x 2 strength matrix, rows {0: c0 0.5}, {1: c1 0.25, c0 -}, {2: -}. */
static void small_fcsr(struct fcsr *F)
{
	F->n = 3;
	F->k = 2;
	F->off = calloc(4, sizeof *F->off);
	F->e = malloc(2 * sizeof *F->e);
	F->colsum = malloc(2 * sizeof *F->colsum);
	assert_non_null(F->off);
	assert_non_null(F->e);
	assert_non_null(F->colsum);
	F->e[0] = (struct fentry){ 0, 0.5 };
	F->e[1] = (struct fentry){ 1, 0.1 + 0.2 }; /* not a round binary number */
	F->off[1] = 1;
	F->off[2] = 2;
	F->off[3] = 2;
	F->colsum[0] = 0.5;
	F->colsum[1] = 0.1 + 0.2;
}

static void test_a_score_and_its_strengths_arrive_bit_for_bit(void **state)
{
	(void)state;
	struct fake f;
	memset(&f, 0, sizeof f);
	struct sweep_group g = { 0, 2, fake_gather, &f };
	/* process 1 fitted task 1 (1 % 2 == 1) of the round [0, 2) */
	struct fold_score sc1[2], sc0[2];
	unsigned char done1[2] = { 0, 1 }, done0[2] = { 1, 0 };
	memset(sc1, 0, sizeof sc1);
	memset(sc0, 0, sizeof sc0);
	sc1[1] = (struct fold_score){ -123.456789, 0.8125, 1.5, 17, 40, { 0, 0, 0, 0, 0, NULL } };
	small_fcsr(&sc1[1].F);
	sc0[0] = (struct fold_score){ -99.0, 0.75, 0.5, 9, 0, { 0, 0, 0, 0, 0, NULL } };
	int stop = 0;
	/* process 1 speaks first; process 0 then sees both */
	fake_quiet(&f, 0);
	f.me = 1;
	g.rank = 1;
	assert_int_equal(select_share_round(&g, 0, &stop, 0, 2, sc1, done1, 1), 0);
	f.me = 0;
	g.rank = 0;
	assert_int_equal(select_share_round(&g, 0, &stop, 0, 2, sc0, done0, 1), 0);
	assert_int_equal(stop, 0);
	assert_int_equal(done0[1], 1);
	assert_memory_equal(&sc0[1].ll, &sc1[1].ll, sizeof(double));
	assert_memory_equal(&sc0[1].auc, &sc1[1].auc, sizeof(double));
	assert_int_equal(sc0[1].sweeps, 17);
	assert_int_equal(sc0[1].warm_from, 40);
	const struct fcsr *a = &sc0[1].F, *b = &sc1[1].F;
	assert_int_equal(a->n, 3);
	assert_int_equal(a->k, 2);
	assert_memory_equal(a->off, b->off, 4 * sizeof *a->off);
	assert_memory_equal(a->e, b->e, 2 * sizeof *a->e);
	assert_memory_equal(a->colsum, b->colsum, 2 * sizeof *a->colsum);
	/* without keep, no strengths travel */
	struct fold_score sc2[2];
	unsigned char done2[2] = { 1, 0 };
	memset(sc2, 0, sizeof sc2);
	f.me = 1;
	g.rank = 1;
	assert_int_equal(select_share_round(&g, 0, &stop, 0, 2, sc1, done1, 0), 0);
	f.me = 0;
	g.rank = 0;
	assert_int_equal(select_share_round(&g, 0, &stop, 0, 2, sc2, done2, 0), 0);
	assert_null(sc2[1].F.e);
	assert_memory_equal(&sc2[1].ll, &sc1[1].ll, sizeof(double));
	for (int t = 0; t < 2; t++) {
		fcsr_release(&sc0[t].F);
		fcsr_release(&sc1[t].F);
	}
}

static void test_stops_and_failures_reach_every_process(void **state)
{
	(void)state;
	struct fake f;
	memset(&f, 0, sizeof f);
	struct sweep_group g = { 1, 2, fake_gather, &f };
	struct fold_score sc[2];
	unsigned char done[2] = { 0, 0 };
	memset(sc, 0, sizeof sc);
	int stop = 1; /* process 1 was interrupted */
	fake_quiet(&f, 0);
	f.me = 1;
	assert_int_equal(select_share_round(&g, 0, &stop, 0, 2, sc, done, 0), 0);
	f.me = 0;
	g.rank = 0;
	stop = 0;
	assert_int_equal(select_share_round(&g, 0, &stop, 0, 2, sc, done, 0), 0);
	assert_int_equal(stop, 1);
	/* process 1 failed: it sends nothing, and process 0 fails too */
	f.len[1] = 0;
	stop = 0;
	assert_int_equal(select_share_round(&g, 0, &stop, 0, 2, sc, done, 0), -1);
	/* bytes cut short: a task announced but missing */
	memset(f.slot[1], 0, 8);
	f.slot[1][4] = 1; /* count 1, no task follows */
	f.len[1] = 8;
	assert_int_equal(select_share_round(&g, 0, &stop, 0, 2, sc, done, 0), -1);
	/* a task that is not the sender's (0 % 2 != 1) */
	uint32_t bad[3] = { 0, 1, 0 };
	memcpy(f.slot[1], bad, sizeof bad);
	f.len[1] = sizeof bad;
	assert_int_equal(select_share_round(&g, 0, &stop, 0, 2, sc, done, 0), -1);
	assert_int_equal(select_share_all(&g, 1), 0 /* process 1's slot is not 1 byte */);
	f.slot[1][0] = 1;
	f.len[1] = 1;
	assert_int_equal(select_share_all(&g, 1), 1);
	assert_int_equal(select_share_all(&g, 0), 0);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_a_score_and_its_strengths_arrive_bit_for_bit),
		cmocka_unit_test(test_stops_and_failures_reach_every_process),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
