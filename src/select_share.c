/*
 * select_share: `-k auto`'s fits spread over the processes of a group
 * (coterie-mpi; select.c's search_pass() with select_hooks.group set).
 *
 * The search is a series of batches, each decided in the order of its
 * k whatever order its fits end in (select.c's header), so spreading it
 * needs no new rule: every process runs the same search, fits only its
 * tasks (task t of a batch is process t % P's), and at the end of a
 * round the scores (and, for the shape search's warm starts, the kept
 * strengths) of every finished task go to every process through one
 * gather (sweep.h's struct sweep_group, the exchange the sweeps use).
 * Every process then decides the same points from the same bytes: the
 * same choice and k-selection.tsv as one process, for any P.
 *
 * What goes out, per finished task: its number, the fold score (three
 * f64, two u32), and with keep the strengths (n, k, nnz, off[n + 1],
 * the 12-byte entries, colsum[k]): a fit's F is a few entries a node.
 * Doubles travel as their bytes, so scores are the fitted process's bits.
 *
 * The one thing a newcomer gets wrong: this is a collective. Every
 * process must reach it at the same round of the same batch, so a
 * process asked to stop (an interrupt) stops its own fits and still
 * comes here with *stop set; every process then stops together.
 */
#include <stdlib.h>
#include <string.h>

#include "coterie/sweep.h"
#include "coterie/util.h"
#include "select-internal.h"

/* A writer into a buffer sized beforehand (score_bytes()). */
struct wbuf {
	unsigned char *b;
	size_t len;
};

static void put(struct wbuf *w, const void *p, size_t n)
{
	memcpy(w->b + w->len, p, n);
	w->len += n;
}

static void put_u32(struct wbuf *w, uint32_t v)
{
	put(w, &v, sizeof v);
}

/* The bytes put_score() writes for sc. */
static size_t score_bytes(const struct fold_score *sc, int keep)
{
	size_t b = 4 + 3 * 8 + 3 * 4;
	const struct fcsr *F = &sc->F;
	if (keep && F->e)
		b += 4 + 4 + 8 + ((size_t)F->n + 1) * sizeof *F->off +
		     (size_t)F->off[F->n] * sizeof *F->e + (size_t)F->k * sizeof *F->colsum;
	return b;
}

static void put_score(struct wbuf *w, uint32_t t, const struct fold_score *sc, int keep)
{
	put_u32(w, t);
	put(w, &sc->ll, sizeof sc->ll);
	put(w, &sc->auc, sizeof sc->auc);
	put(w, &sc->seconds, sizeof sc->seconds);
	put_u32(w, sc->sweeps);
	put_u32(w, sc->warm_from);
	const struct fcsr *F = &sc->F;
	uint32_t has = keep && F->e;
	put_u32(w, has);
	if (!has)
		return;
	uint64_t nnz = F->off[F->n];
	put_u32(w, F->n);
	put_u32(w, F->k);
	put(w, &nnz, sizeof nnz);
	put(w, F->off, ((size_t)F->n + 1) * sizeof *F->off);
	put(w, F->e, (size_t)nnz * sizeof *F->e);
	put(w, F->colsum, (size_t)F->k * sizeof *F->colsum);
}

/* A reader over one process's bytes; every take checks the size. */
struct rbuf {
	const unsigned char *b;
	size_t len, at;
};

static int take(struct rbuf *r, void *p, size_t n)
{
	if (n > r->len - r->at)
		return -1;
	memcpy(p, r->b + r->at, n);
	r->at += n;
	return 0;
}

static int take_fcsr(struct rbuf *r, struct fcsr *F)
{
	uint32_t n, k;
	uint64_t nnz;
	memset(F, 0, sizeof *F);
	if (take(r, &n, sizeof n) || take(r, &k, sizeof k) || take(r, &nnz, sizeof nnz))
		return -1;
	size_t left = r->len - r->at;
	if (n >= left / sizeof *F->off || nnz > left / sizeof *F->e || k > left / sizeof(double))
		return -1;
	F->n = n;
	F->k = k;
	F->off = util_malloc((size_t)n + 1, sizeof *F->off);
	F->e = util_malloc(nnz ? (size_t)nnz : 1, sizeof *F->e);
	F->colsum = util_malloc(k ? k : 1, sizeof *F->colsum);
	if (!F->off || !F->e || !F->colsum || take(r, F->off, ((size_t)n + 1) * sizeof *F->off) ||
	    F->off[n] != nnz || take(r, F->e, (size_t)nnz * sizeof *F->e) ||
	    take(r, F->colsum, (size_t)k * sizeof *F->colsum)) {
		fcsr_release(F);
		return -1;
	}
	return 0;
}

/* Process p's tasks from its bytes into sc[] and done[]. 0 or -1. */
static int unpack(struct rbuf *r, uint32_t p, uint32_t P, uint32_t t0, uint32_t t1,
		  struct fold_score *sc, unsigned char *done, int *stop)
{
	uint32_t st, count;
	if (take(r, &st, sizeof st) || take(r, &count, sizeof count))
		return -1;
	if (st)
		*stop = 1;
	for (uint32_t i = 0; i < count; i++) {
		uint32_t t, has;
		struct fold_score x;
		memset(&x, 0, sizeof x);
		if (take(r, &t, sizeof t) || t < t0 || t >= t1 || t % P != p || done[t] ||
		    take(r, &x.ll, sizeof x.ll) || take(r, &x.auc, sizeof x.auc) ||
		    take(r, &x.seconds, sizeof x.seconds) || take(r, &x.sweeps, sizeof x.sweeps) ||
		    take(r, &x.warm_from, sizeof x.warm_from) || take(r, &has, sizeof has) ||
		    (has && take_fcsr(r, &x.F)))
			return -1;
		sc[t] = x;
		done[t] = 1;
	}
	return r->at == r->len ? 0 : -1;
}

int select_share_round(const struct sweep_group *grp, int failed, int *stop, uint32_t t0,
		       uint32_t t1, struct fold_score *sc, unsigned char *done, int keep)
{
	uint32_t P = grp->size, me = grp->rank, count = 0;
	size_t size = 8;
	for (uint32_t t = t0; t < t1 && !failed; t++)
		if (t % P == me && done[t]) {
			count++;
			size += score_bytes(&sc[t], keep);
		}
	struct wbuf w = { failed ? NULL : util_malloc(size, 1), 0 };
	if (w.b) {
		put_u32(&w, *stop ? 1 : 0);
		put_u32(&w, count);
		for (uint32_t t = t0; t < t1; t++)
			if (t % P == me && done[t])
				put_score(&w, t, &sc[t], keep);
	} else if (!failed) {
		error("out of memory sharing the scores of -k auto");
	}
	/* w.len 0 (failed, or out of memory): still take part, with
	 * nothing, and every process fails */
	const unsigned char *all;
	const size_t *lens;
	int rc = grp->gather(grp->arg, w.b, w.len, &all, &lens);
	int bad = !w.b;
	free(w.b);
	if (rc)
		return -1;
	size_t at = 0;
	for (uint32_t p = 0; p < P; p++) {
		struct rbuf r = { all + at, lens[p], 0 };
		at += lens[p];
		if (lens[p] == 0 || (p != me && unpack(&r, p, P, t0, t1, sc, done, stop)))
			bad = 1;
	}
	if (bad)
		return error("-k auto: a process's scores did not arrive whole");
	return 0;
}

int select_share_all(const struct sweep_group *grp, int ok)
{
	unsigned char mine = ok != 0;
	const unsigned char *all;
	const size_t *lens;
	if (grp->gather(grp->arg, &mine, 1, &all, &lens))
		return -1;
	int every = 1;
	for (uint32_t p = 0; p < grp->size; p++)
		every = every && lens[p] == 1 && all[p];
	return every;
}
