/*
 * select-internal.h: what select.c and select_warm.c share; nothing
 * outside the select module includes it.
 */
#ifndef COTERIE_SELECT_INTERNAL_H
#define COTERIE_SELECT_INTERNAL_H

#include <stdint.h>

#include "coterie/fcsr.h"
#include "coterie/seed.h"

struct graph;
struct sweep_group;

/* One fold's score of one k (select.c's search_pass()). */
struct fold_score {
	double ll, auc, seconds;
	uint32_t sweeps;
	uint32_t warm_from; /* the k its start came from (0: seeds) */
	struct fcsr F;      /* its strengths, when the search keeps them */
};

/* How the search's fits are seeded, for a warm start upward. */
struct select_seeding {
	enum seed_kind kind;
	uint64_t seed;  /* the fold's seed (variant 0: the first start's) */
	double epsilon; /* the search's background */
};

/*
 * A start for a fit of k columns on train (borrowed) from the strengths
 * from (borrowed) of a fit ON THE SAME training graph. Down (k below
 * from->k): the weakest columns dropped. Up (k above from->k; sd not
 * NULL, a one-sided graph): from's columns as they are, then the columns
 * from->k .. k-1 of the seeding a fit of k would start from (sd; for
 * clusters, the next clusters by likelihood, then ego-nets), so the new
 * fit starts where a seeded one would, with its first columns already
 * climbed. *out receives a new matrix (fcsr_release() it). Returns 0, or
 * -1 (out of memory, or no warm start of that kind: no message; the
 * caller then seeds).
 */
int select_warm_start(const struct fcsr *from, const struct graph *train, uint32_t k,
		      const struct select_seeding *sd, struct fcsr *out);

/*
 * The end of a round of a search shared among processes (select_share.c):
 * this process's finished tasks in [t0, t1) (those with done[t] set; a
 * task t is this process's when t % size == rank) go to every process,
 * the others' arrive in sc[] (their kept strengths copied, when keep)
 * and set done[]. *stop: in, this process was asked to stop; out, some
 * process was. failed: this process failed (it sends nothing, and every
 * process returns -1). A collective. 0, or -1 (reported; sc[] then holds
 * what was unpacked, released by the caller as usual).
 */
int select_share_round(const struct sweep_group *grp, int failed, int *stop, uint32_t t0,
		       uint32_t t1, struct fold_score *sc, unsigned char *done, int keep);

/* 1 when ok is nonzero on every process of grp (a collective), -1 on a
 * failed exchange (reported). */
int select_share_all(const struct sweep_group *grp, int ok);

#endif
