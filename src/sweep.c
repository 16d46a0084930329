/*
 * sweep: the parallel sweep engine (include/coterie/sweep.h).
 *
 * Blocks. A sweep's permutation is cut into blocks that are independent
 * sets of at most n/64 nodes (BLOCK_SHARE, and at most BLOCK_NODES): a
 * node adjacent to one already in the block waits, in order, for a later
 * block (at most PEND_MAX wait), so the rows computed together interact
 * only through the column sums, and only by a small share of them.
 * Updating linked nodes together (Jacobi) oscillates on small dense
 * graphs; this keeps the sweep close to one node at a time (Gauss-Seidel).
 * Cutting a block reads only the graph and the permutation, so the
 * calling thread cuts the next block while the pool computes the rows of
 * the current one (run_block()).
 *
 * Summing the log-likelihood. The value after a sweep is not recomputed
 * (that would cost a large share of a fit on big graphs; DEVELOPERS.md
 * has the figures): the calling thread adds up, block by block in
 * permutation order, the change each block made. Row
 * u's objective f_u holds every term of l(F) with u in it, so for u alone
 * the change is its gain f1_u - f0_u (objective_ops.work_gain). The rows
 * of a block were all computed from the model at the block's start, and
 * the block is an independent set, so two of its rows share only the
 * non-edge term -F_u . F_v, which each f_u counted with the other's old
 * row. Writing a_u = new_u - old_u, the exact change is
 *     dL = sum_u gain_u - sum_{u < v in the block} a_u . a_v
 * except that a held-out pair (model.excl) is in no term of l(F) (and f_u
 * left it out too), so its a_u . a_v is not subtracted. block_gain()
 * takes the pair sum in block order as sum_v a_v . (a_u summed over
 * earlier u) with a dense k-vector, in O(entries changed); held-out pairs
 * inside the block are found through ll_pos. It runs on the calling
 * thread in block order, so the bits do not depend on the thread count.
 * The sum equals a recompute up to rounding (tests/unit/test_fit_loglik.c
 * and test_sweep.c bound it); DEVELOPERS.md says where the fit uses the
 * summed value and where it recomputes. Other modules refer here.
 *
 * Recomputing. sweep_objective() sums parts of LL_CHUNK nodes, computed
 * on the pool, in their fixed order: the same bits for any thread count.
 *
 * Sharing with other processes (sweep_set_group(), MPI). Each process
 * computes its fixed share of a block's rows (and of the recompute's
 * parts), then the shares are exchanged as packed rows (share_rows()) and
 * every process has every row of the block, as if it had computed them
 * all: block_gain() and apply_block() run unchanged, on every process,
 * in block order. Rows from other processes live in one more arena (the
 * slot after the threads'). A process short of memory still takes part in
 * the exchange and says so, so that every process fails at the same block.
 *
 * The one thing a newcomer gets wrong: workers read the model while rows
 * are computed, so rows are applied only after pool_end(), between blocks.
 */
#include "coterie/sweep.h"

#include <math.h>
#include <stdatomic.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/objective.h"
#include "coterie/pool.h"
#include "coterie/rng.h"
#include "coterie/util.h"

#define BLOCK_NODES 2048u /* a block has at most this many nodes ... */
#define BLOCK_SHARE 64u   /* ... and at most n / BLOCK_SHARE (at least 1) */
#define PEND_MAX (4u * BLOCK_NODES) /* nodes waiting for a later block */
#define LL_CHUNK 2048u    /* nodes per likelihood part */
#define POOL_MIN_ROWS 32u /* smaller blocks run on the calling thread alone */
#define RUN_IDS 32u          /* a sweep visits runs of this many consecutive ids ... */
#define RUN_MIN_NODES 65536u /* ... on graphs of at least this many nodes (sweep_order()) */

/* A row computed in a block: where its entries sit in a worker's arena. */
struct rowres {
	uint32_t nnz;
	int changed;
	unsigned owner;
	size_t at;
	double gain; /* the rise of the row objective (work_gain) */
};

struct arena {
	struct fentry *e;
	size_t len, cap;
};

/* What one thread computes rows with: the objective's work buffer, and
 * where the rows it computed in this block are kept. */
struct slot {
	void *work;
	struct arena arena;
};

/* The cutting of a sweep's permutation into blocks: where it stands. */
struct blockgen {
	const uint32_t *perm;
	uint32_t n, cap, pos, npend;
	uint32_t *pend, *next; /* PEND_MAX nodes each */
};

struct sweep {
	struct model *m;
	const struct graph *g;
	const struct objective_ops *ops;
	struct pool *pool;
	unsigned nslots; /* the threads asked for */
	struct slot *slots; /* nslots, then one whose arena holds other processes' rows */
	const struct sweep_group *grp; /* NULL: alone */
	unsigned char *pk;             /* this process's share, packed for grp */
	size_t pk_len, pk_cap;
	/* the block being computed */
	const uint32_t *block;
	uint32_t block_len;
	atomic_uint next;
	uint32_t job_end;     /* rows (or parts) [next, job_end) are this process's */
	atomic_int failed;
	struct rowres *res;   /* BLOCK_NODES */
	/* cutting blocks */
	uint32_t *perm;       /* n (one block with mark) */
	uint32_t *runs;       /* n / RUN_IDS + 1: the order of the runs (sweep_order()) */
	uint32_t *mark;       /* n: block membership and neighbourhood marks */
	uint32_t epoch;
	uint32_t *blk;        /* two buffers of BLOCK_NODES: this block and the next */
	uint32_t *pend;       /* two lists of PEND_MAX nodes waiting for a block (after blk) */
	struct blockgen *gen; /* set: run_block() cuts the next block into gen_out */
	uint32_t *gen_out;
	uint32_t gen_len;
	/* the recompute */
	unsigned char *parts; /* nparts of ops->part_size bytes */
	uint32_t nparts;
	/* the summed log-likelihood (block_gain()) */
	double *ll_col;       /* k: sum of the block's row changes so far */
	uint32_t *ll_stamp;   /* k: ll_col[c] is live when == ll_epoch */
	uint32_t ll_epoch;
	uint32_t *ll_pos;     /* n (only with held-out pairs): 1 + index in the block */
	/* quiet sweeps (sweep_set_quiet()) */
	uint8_t *moved;       /* n: the row's gain in this sweep passed wake_gain */
	uint8_t *awake;       /* n: visited by a quiet sweep */
	double wake_gain;
	int quiet;            /* this sweep computes awake rows only */
	uint64_t skipped;     /* rows a quiet sweep left as they were */
};

struct sweep *sweep_new(struct model *m, const struct graph *g, const struct objective_ops *ops,
			unsigned threads)
{
	struct sweep *s = util_calloc(1, sizeof *s);
	if (!s)
		return NULL;
	s->m = m;
	s->g = g;
	s->ops = ops;
	s->nslots = threads ? threads : 1;
	size_t n = g->n;
	s->pool = pool_new(s->nslots);
	s->slots = util_calloc(s->nslots + 1, sizeof *s->slots);
	s->res = util_calloc(BLOCK_NODES, sizeof *s->res);
	s->perm = util_calloc(2 * n + 1, sizeof *s->perm);
	s->blk = util_calloc(2 * BLOCK_NODES + 2 * PEND_MAX, sizeof *s->blk);
	s->nparts = (g->n + LL_CHUNK - 1) / LL_CHUNK;
	s->parts = util_calloc(s->nparts ? s->nparts : 1, ops->part_size);
	/* two-sided models keep the block's sending and receiving changes apart */
	size_t llk = (m->nsend ? 2 : 1) * (size_t)m->k;
	s->ll_col = util_calloc(llk, sizeof *s->ll_col);
	s->ll_stamp = util_calloc(llk, sizeof *s->ll_stamp);
	s->moved = util_calloc(2 * n + 1, 1);
	s->runs = util_calloc(n / RUN_IDS + 1, sizeof *s->runs);
	if (!s->pool || !s->slots || !s->res || !s->perm || !s->blk || !s->parts || !s->ll_col ||
	    !s->ll_stamp || !s->moved || !s->runs)
		goto fail;
	s->awake = s->moved + n;
	s->mark = s->perm + n;
	s->pend = s->blk + 2 * BLOCK_NODES;
	for (unsigned t = 0; t < s->nslots; t++)
		if (!(s->slots[t].work = ops->work_new(m)))
			goto fail;
	return s;
fail:
	sweep_free(s);
	return NULL;
}

void sweep_free(struct sweep *s)
{
	if (!s)
		return;
	pool_free(s->pool);
	for (unsigned t = 0; s->slots && t < s->nslots; t++) {
		s->ops->work_free(s->slots[t].work);
		free(s->slots[t].arena.e);
	}
	if (s->slots)
		free(s->slots[s->nslots].arena.e);
	free(s->slots);
	free(s->pk);
	free(s->res);
	free(s->perm); /* and mark */
	free(s->blk);  /* and pend */
	free(s->parts);
	free(s->ll_col);
	free(s->ll_stamp);
	free(s->ll_pos);
	free(s->moved);
	free(s->runs);
	free(s);
}

int sweep_pool_start(struct sweep *s)
{
	return pool_start(s->pool);
}

void sweep_pool_stop(struct sweep *s)
{
	pool_stop(s->pool);
}

unsigned sweep_threads(const struct sweep *s)
{
	return pool_threads(s->pool);
}

void sweep_counts(const struct sweep *s, struct objective_counts *c)
{
	memset(c, 0, sizeof *c);
	for (unsigned t = 0; t < s->nslots; t++)
		s->ops->work_counts(s->slots[t].work, c);
}

/* ---- computing rows and parts on the pool ---- */

static int arena_push(struct arena *a, const struct fentry *e, uint32_t nnz, size_t *at)
{
	if (a->len + nnz > a->cap) {
		size_t cap = a->cap ? a->cap * 2 : 1024;
		while (cap < a->len + nnz)
			cap *= 2;
		struct fentry *ne = realloc(a->e, cap * sizeof *ne);
		if (!ne)
			return -1;
		a->e = ne;
		a->cap = cap;
	}
	if (nnz)
		memcpy(a->e + a->len, e, nnz * sizeof *e);
	*at = a->len;
	a->len += nnz;
	return 0;
}

/* Thread tid's share of the block's rows (a pool job). */
static void rows_job(void *arg, unsigned tid)
{
	struct sweep *s = arg;
	const struct graph *g = s->g;
	for (;;) {
		uint32_t i = atomic_fetch_add(&s->next, 1);
		if (i >= s->job_end)
			break;
		uint32_t u = s->block[i];
		/* the rows ahead in the block: their adjacency and own
		 * strengths are cold (blocks are scattered over the graph) */
		if (i + 2 < s->block_len) {
			uint32_t u2 = s->block[i + 2];
			__builtin_prefetch(&g->off[u2]);
			__builtin_prefetch(&s->m->rows[u2]);
		}
		if (i + 1 < s->block_len) {
			uint32_t u1 = s->block[i + 1];
			__builtin_prefetch(g->adj + g->off[u1]);
			__builtin_prefetch(s->m->rows[u1].e);
		}
		const struct fentry *row;
		uint32_t nnz;
		struct rowres *r = &s->res[i];
		r->changed = 0;
		if (s->quiet && !s->awake[u])
			continue;
		struct slot *sl = &s->slots[tid];
		if (s->ops->update_row(s->m, g, u, sl->work, &row, &nnz)) {
			if (arena_push(&sl->arena, row, nnz, &r->at)) {
				atomic_store(&s->failed, 1);
				continue;
			}
			r->gain = s->ops->work_gain(sl->work);
			r->changed = 1;
			r->nnz = nnz;
			r->owner = tid;
		}
	}
}

/* The next chunk of LL_CHUNK nodes [*u0, *u1), chunk *i, of a pool job
 * over chunks; 0 when the job's chunks are taken. */
static int next_chunk(struct sweep *s, uint32_t *i, uint32_t *u0, uint32_t *u1)
{
	*i = atomic_fetch_add(&s->next, 1);
	if (*i >= s->job_end)
		return 0;
	*u0 = *i * LL_CHUNK;
	*u1 = *u0 + LL_CHUNK < s->g->n ? *u0 + LL_CHUNK : s->g->n;
	return 1;
}

/* Thread tid's share of the objective's parts (a pool job). */
static void parts_job(void *arg, unsigned tid)
{
	(void)tid;
	struct sweep *s = arg;
	uint32_t i, u0, u1;
	while (next_chunk(s, &i, &u0, &u1))
		s->ops->part_range(s->m, s->g, u0, u1, s->parts + (size_t)i * s->ops->part_size);
}

/* Thread tid's share of the awake flags (a pool job): a row is awake
 * for the next sweep when it or a neighbour moved in this one. Every
 * process of a group computes all of them (each has every row's flag). */
static void wake_job(void *arg, unsigned tid)
{
	(void)tid;
	struct sweep *s = arg;
	const struct graph *g = s->g;
	uint32_t i, u0, u1;
	while (next_chunk(s, &i, &u0, &u1))
		for (uint32_t u = u0; u < u1; u++) {
			uint8_t a = s->moved[u];
			for (uint64_t e = g->off[u]; e < g->off[u + 1] && !a; e++)
				a = s->moved[g->adj[e]];
			s->awake[u] = a;
		}
}

/* The awake flags from s->moved, on the pool. */
static void wake_all(struct sweep *s)
{
	atomic_store(&s->next, 0);
	s->job_end = s->nparts;
	pool_begin(s->pool, wake_job, s, s->nparts < 2);
	wake_job(s, 0);
	pool_end(s->pool);
}

/* This process's share [*lo, *hi) of len items (all of them when alone). */
static void share_of(const struct sweep *s, uint32_t len, unsigned rank, uint32_t *lo,
		     uint32_t *hi)
{
	if (!s->grp) {
		*lo = 0;
		*hi = len;
		return;
	}
	*lo = (uint32_t)((uint64_t)len * rank / s->grp->size);
	*hi = (uint32_t)((uint64_t)len * (rank + 1) / s->grp->size);
}

/* Every process's parts into s->parts: the shares are consecutive ranges
 * in rank order, so the concatenation is the parts in order. */
static int share_parts(struct sweep *s, uint32_t lo, uint32_t hi)
{
	size_t ps = s->ops->part_size;
	const unsigned char *all;
	const size_t *lens;
	if (s->grp->gather(s->grp->arg, s->parts + lo * ps, (hi - lo) * ps, &all, &lens))
		return -1;
	size_t total = 0;
	for (unsigned r = 0; r < s->grp->size; r++)
		total += lens[r];
	if (total != (size_t)s->nparts * ps)
		return error("the processes disagree on the likelihood's parts (%zu bytes, not %zu)",
			     total, (size_t)s->nparts * ps);
	memcpy(s->parts, all, total);
	return 0;
}

double sweep_objective(struct sweep *s)
{
	uint32_t lo, hi;
	share_of(s, s->nparts, s->grp ? s->grp->rank : 0, &lo, &hi);
	atomic_store(&s->next, lo);
	s->job_end = hi;
	pool_begin(s->pool, parts_job, s, hi - lo < 2);
	parts_job(s, 0);
	pool_end(s->pool);
	if (s->grp && share_parts(s, lo, hi))
		return NAN;
	return s->ops->part_combine(s->m, s->g, s->parts, s->nparts);
}

/* ---- cutting blocks ---- */

/* Put u in the block at index i and mark it and its neighbours. */
static void block_add(struct sweep *s, uint32_t *blk, uint32_t u, uint32_t i)
{
	blk[i] = u;
	s->mark[u] = s->epoch;
	for (uint64_t e = s->g->off[u]; e < s->g->off[u + 1]; e++)
		s->mark[s->g->adj[e]] = s->epoch;
}

/* The next block into blk; returns its length, 0 when the sweep is done
 * (a block is never empty before then: its first node is always taken).
 * It reads only the graph and the permutation, never the model, so it
 * may run while rows are being computed. */
static uint32_t block_next(struct sweep *s, struct blockgen *bg, uint32_t *blk)
{
	if (bg->pos >= bg->n && bg->npend == 0)
		return 0;
	if (++s->epoch == 0) {
		memset(s->mark, 0, bg->n * sizeof *s->mark);
		s->epoch = 1;
	}
	uint32_t nb = 0, nnext = 0, cap = bg->cap;
	for (uint32_t j = 0; j < bg->npend; j++) {
		uint32_t u = bg->pend[j];
		if (nb < cap && s->mark[u] != s->epoch)
			block_add(s, blk, u, nb++);
		else
			bg->next[nnext++] = u;
	}
	while (nb < cap && bg->pos < bg->n && nnext < PEND_MAX) {
		uint32_t u = bg->perm[bg->pos++];
		if (s->mark[u] == s->epoch)
			bg->next[nnext++] = u;
		else
			block_add(s, blk, u, nb++);
	}
	uint32_t *swap = bg->pend;
	bg->pend = bg->next;
	bg->next = swap;
	bg->npend = nnext;
	return nb;
}

/* Compute the rows of the current block on the pool (a small block on
 * the calling thread alone: waking the pool would cost more than it
 * saves, and who computes a row never changes the row), cutting the
 * next block meanwhile. */
static void run_block(struct sweep *s)
{
	uint32_t lo, hi;
	share_of(s, s->block_len, s->grp ? s->grp->rank : 0, &lo, &hi);
	for (uint32_t i = 0; s->grp && i < s->block_len; i++)
		s->res[i].changed = 0; /* rows of other processes, until they arrive */
	atomic_store(&s->next, lo);
	s->job_end = hi;
	pool_begin(s->pool, rows_job, s, hi - lo < POOL_MIN_ROWS);
	if (s->gen) {
		s->gen_len = block_next(s, s->gen, s->gen_out);
		s->gen = NULL;
	}
	rows_job(s, 0);
	pool_end(s->pool);
}

/* ---- the change of l(F) a block makes (see the top of the file) ---- */

/* (new_u - old_u) . (new_v - old_v) for rows j and i of the block, read
 * before either is applied. */
static double change_dot(const struct sweep *s, uint32_t j, uint32_t i)
{
	const struct frow *ou = &s->m->rows[s->block[j]], *ov = &s->m->rows[s->block[i]];
	const struct rowres *ru = &s->res[j], *rv = &s->res[i];
	const struct fentry *nu = s->slots[ru->owner].arena.e + ru->at;
	const struct fentry *nv = s->slots[rv->owner].arena.e + rv->at;
	return model_dot(nu, ru->nnz, nv, rv->nnz) - model_dot(nu, ru->nnz, ov->e, ov->nnz) -
	       model_dot(ou->e, ou->nnz, nv, rv->nnz) + model_dot(ou->e, ou->nnz, ov->e, ov->nnz);
}

/* sum_{u < v in the block} a_u . a_v, in block order, over all pairs; in
 * a two-sided model (OBJECTIVE_COUPLING_SIDES) over the pairs of a
 * sending and a receiving row only: a row's change meets the sum of the
 * other side's earlier changes (ll_col[k..2k) holds the receiving rows'). */
static double block_cross(struct sweep *s)
{
	double cross = 0.0;
	uint32_t k = s->m->k, nsend = s->m->nsend;
	int sides = s->ops->coupling == OBJECTIVE_COUPLING_SIDES;
	if (++s->ll_epoch == 0) {
		memset(s->ll_stamp, 0, (nsend ? 2 : 1) * (size_t)k * sizeof *s->ll_stamp);
		s->ll_epoch = 1;
	}
	uint32_t ep = s->ll_epoch;
	for (uint32_t j = 0; j < s->block_len; j++) {
		const struct rowres *rr = &s->res[j];
		if (!rr->changed)
			continue;
		/* own: where this row's change is added; other: what it meets */
		uint32_t own = 0, other = 0;
		if (sides) {
			own = s->block[j] >= nsend ? k : 0;
			other = k - own;
		}
		const struct frow *o = &s->m->rows[s->block[j]];
		const struct fentry *e = s->slots[rr->owner].arena.e + rr->at;
		uint32_t a = 0, b = 0;
		while (a < o->nnz || b < rr->nnz) {
			uint32_t c;
			double d;
			if (b == rr->nnz || (a < o->nnz && o->e[a].c < e[b].c)) {
				c = o->e[a].c;
				d = -o->e[a++].v;
			} else if (a == o->nnz || e[b].c < o->e[a].c) {
				c = e[b].c;
				d = e[b++].v;
			} else {
				c = e[b].c;
				d = e[b++].v - o->e[a++].v;
			}
			if (d == 0.0)
				continue;
			if (s->ll_stamp[c + own] != ep) {
				s->ll_stamp[c + own] = ep;
				s->ll_col[c + own] = 0.0;
			}
			if (s->ll_stamp[c + other] != ep) {
				s->ll_stamp[c + other] = ep;
				s->ll_col[c + other] = 0.0;
			}
			cross += d * s->ll_col[c + other];
			s->ll_col[c + own] += d;
		}
	}
	return cross;
}

/* cross less the part of it that belongs to held-out pairs inside the
 * block (they are in no term of l(F)). */
static double block_cross_held_out(struct sweep *s, double cross)
{
	const struct graph *x = s->m->excl;
	for (uint32_t j = 0; j < s->block_len; j++)
		s->ll_pos[s->block[j]] = j + 1;
	for (uint32_t j = 0; j < s->block_len; j++) {
		if (!s->res[j].changed)
			continue;
		uint32_t u = s->block[j];
		for (uint64_t t = x->off[u]; t < x->off[u + 1]; t++) {
			uint32_t i = s->ll_pos[x->adj[t]];
			if (i > j + 1 && s->res[i - 1].changed)
				cross -= change_dot(s, j, i - 1);
		}
	}
	for (uint32_t j = 0; j < s->block_len; j++)
		s->ll_pos[s->block[j]] = 0;
	return cross;
}

/* The change of l(F) that applying the block's rows will make; call
 * before they are applied. */
static double block_gain(struct sweep *s)
{
	double gain = 0.0;
	for (uint32_t j = 0; j < s->block_len; j++)
		if (s->res[j].changed)
			gain += s->res[j].gain;
	if (!s->ops->coupling)
		return gain;
	double cross = block_cross(s);
	if (s->m->excl)
		cross = block_cross_held_out(s, cross);
	return gain - cross;
}

/* ---- sharing a block's rows with other processes ---- */

/* A packed share: u32 failed, then for each of its rows in block order
 * u32 nnz (UNCHANGED when the row stays), and for a changed row its f64
 * gain and nnz entries of 12 bytes (struct fentry is packed). */
#define UNCHANGED UINT32_MAX

static int pack_bytes(struct sweep *s, const void *p, size_t len)
{
	if (s->pk_len + len > s->pk_cap) {
		size_t nc = s->pk_cap ? s->pk_cap * 2 : 4096;
		while (nc < s->pk_len + len)
			nc *= 2;
		unsigned char *np = realloc(s->pk, nc);
		if (!np)
			return -1;
		s->pk = np;
		s->pk_cap = nc;
	}
	memcpy(s->pk + s->pk_len, p, len);
	s->pk_len += len;
	return 0;
}

/* Rows [lo, hi) of the block, packed into s->pk. */
static int pack_share(struct sweep *s, uint32_t lo, uint32_t hi)
{
	s->pk_len = 0;
	uint32_t failed = (uint32_t)atomic_load(&s->failed);
	int rc = pack_bytes(s, &failed, sizeof failed);
	for (uint32_t i = lo; i < hi && !rc; i++) {
		const struct rowres *rr = &s->res[i];
		uint32_t nnz = rr->changed ? rr->nnz : UNCHANGED;
		rc = pack_bytes(s, &nnz, sizeof nnz);
		if (rr->changed && !rc)
			rc = pack_bytes(s, &rr->gain, sizeof rr->gain) ||
			     pack_bytes(s, s->slots[rr->owner].arena.e + rr->at,
					(size_t)rr->nnz * sizeof(struct fentry));
	}
	return rc;
}

/* Process r's rows [lo, hi) from its packed bytes p[0, len) into res[]
 * and the arena of other processes' rows; *failed when it ran out of
 * memory. 0 or -1 (bytes that do not parse). */
static int unpack_share(struct sweep *s, const unsigned char *p, size_t len, uint32_t lo,
			uint32_t hi, uint32_t *failed)
{
	struct arena *a = &s->slots[s->nslots].arena;
	size_t at = 0;
	if (len < sizeof *failed)
		return -1;
	memcpy(failed, p, sizeof *failed);
	if (*failed)
		return 0;
	at += sizeof *failed;
	for (uint32_t i = lo; i < hi; i++) {
		uint32_t nnz;
		if (len - at < sizeof nnz)
			return -1;
		memcpy(&nnz, p + at, sizeof nnz);
		at += sizeof nnz;
		struct rowres *rr = &s->res[i];
		rr->changed = nnz != UNCHANGED;
		if (!rr->changed)
			continue;
		size_t bytes = (size_t)nnz * sizeof(struct fentry);
		if (nnz > s->m->k || len - at < sizeof rr->gain + bytes)
			return -1;
		memcpy(&rr->gain, p + at, sizeof rr->gain);
		at += sizeof rr->gain;
		if (arena_push(a, (const struct fentry *)(const void *)(p + at), nnz, &rr->at)) {
			*failed = 1;
			return 0;
		}
		at += bytes;
		rr->nnz = nnz;
		rr->owner = s->nslots;
	}
	return at == len ? 0 : -1;
}

/* Every process's share of the block's rows, to every process: after it
 * res[] holds the whole block. -1 (reported) when any process failed. */
static int share_rows(struct sweep *s)
{
	const struct sweep_group *grp = s->grp;
	uint32_t lo, hi, any_failed = 0;
	share_of(s, s->block_len, grp->rank, &lo, &hi);
	static const uint32_t failed_share = 1;
	const void *mine;
	size_t mine_len;
	if (pack_share(s, lo, hi)) {
		atomic_store(&s->failed, 1);
		mine = &failed_share;
		mine_len = sizeof failed_share;
	} else {
		mine = s->pk;
		mine_len = s->pk_len;
	}
	const unsigned char *all;
	const size_t *lens;
	if (grp->gather(grp->arg, mine, mine_len, &all, &lens))
		return -1;
	size_t at = 0;
	for (unsigned r = 0; r < grp->size; r++) {
		uint32_t failed = 0;
		share_of(s, s->block_len, r, &lo, &hi);
		if (r != grp->rank && unpack_share(s, all + at, lens[r], lo, hi, &failed))
			return error("the rows of process %u do not parse", r);
		any_failed |= failed;
		at += lens[r];
	}
	if (any_failed)
		return error("out of memory while fitting (on process %s)",
			     atomic_load(&s->failed) ? "this one" : "another one");
	return 0;
}

void sweep_set_group(struct sweep *s, const struct sweep_group *grp)
{
	s->grp = grp;
}

/* ---- one sweep ---- */

static int apply_block(struct sweep *s)
{
	for (uint32_t j = 0; j < s->block_len; j++) {
		const struct rowres *rr = &s->res[j];
		if (s->quiet && !s->awake[s->block[j]])
			s->skipped++;
		if (!rr->changed)
			continue;
		s->moved[s->block[j]] = rr->gain > s->wake_gain;
		if (model_set_row(s->m, s->block[j], s->slots[rr->owner].arena.e + rr->at, rr->nnz))
			return -1;
	}
	return 0;
}

/* The sweep's order into s->perm: a random permutation of runs of
 * RUN_IDS consecutive ids on graphs of RUN_MIN_NODES nodes or more, of
 * single ids below. A graph's ids come in order of first appearance in
 * its file (graph.h), so a node's neighbours first named on its own
 * lines get the ids after it (and the fit's optional breadth-first
 * renumbering, order.h, does the same by design): the nodes of a run
 * then share many neighbours, whose rows are read from cache while the
 * run is computed, where a permutation of single ids fetches every
 * neighbour's row from memory once the rows outgrow the cache
 * (DEVELOPERS.md, "Sweeps in runs"). Where the ids carry no locality
 * the runs cost nothing either. Small graphs keep the plain
 * permutation: their rows are in cache anyway. */
static void sweep_order(struct sweep *s, struct rng *r)
{
	uint32_t n = s->g->n;
	if (n < RUN_MIN_NODES) {
		for (uint32_t i = 0; i < n; i++)
			s->perm[i] = i;
		rng_shuffle_u32(r, s->perm, n);
		return;
	}
	uint32_t nr = (n + RUN_IDS - 1) / RUN_IDS;
	for (uint32_t i = 0; i < nr; i++)
		s->runs[i] = i;
	rng_shuffle_u32(r, s->runs, nr);
	uint32_t o = 0;
	for (uint32_t i = 0; i < nr; i++) {
		uint32_t u0 = s->runs[i] * RUN_IDS;
		uint32_t u1 = n - u0 > RUN_IDS ? u0 + RUN_IDS : n;
		for (uint32_t u = u0; u < u1; u++)
			s->perm[o++] = u;
	}
}

int sweep_run(struct sweep *s, uint64_t order_seed, sweep_between_fn *between, void *arg,
	      double *dl)
{
	uint32_t n = s->g->n;
	if (s->m->excl && !s->ll_pos && !(s->ll_pos = util_calloc(n, sizeof *s->ll_pos)))
		return -1;
	memset(s->moved, 0, n);
	struct rng r;
	rng_init(&r, order_seed);
	sweep_order(s, &r);
	uint32_t cap = n / BLOCK_SHARE;
	if (cap < 1)
		cap = 1;
	if (cap > BLOCK_NODES)
		cap = BLOCK_NODES;
	struct blockgen bg = { s->perm, n, cap, 0, 0, s->pend, s->pend + PEND_MAX };
	uint32_t cur = 0; /* which of the two block buffers holds this block */
	uint32_t nb = block_next(s, &bg, s->blk);
	int rc = 0;
	while (nb > 0) {
		if (between && between(arg)) {
			rc = 1;
			break;
		}
		s->gen = &bg;
		s->gen_out = s->blk + (1 - cur) * BLOCK_NODES;
		s->gen_len = 0;
		s->block = s->blk + cur * BLOCK_NODES;
		s->block_len = nb;
		for (unsigned t = 0; t <= s->nslots; t++)
			s->slots[t].arena.len = 0;
		run_block(s);
		if (s->grp && share_rows(s))
			return -1;
		if (atomic_load(&s->failed))
			return error("out of memory while fitting");
		*dl += block_gain(s);
		if (apply_block(s))
			return -1;
		nb = s->gen_len;
		cur = 1 - cur;
	}
	/* rounding drift in colsum from millions of incremental updates:
	 * recounted after every sweep (O(nnz), small beside the sweep) so a
	 * fit resumed from a checkpoint, whose colsum is recounted on
	 * import, goes on bit for bit as the uninterrupted fit would */
	model_recount(s->m);
	model_pack(s->m);
	if (rc == 0)
		wake_all(s);
	return rc;
}

void sweep_set_quiet(struct sweep *s, int quiet, double wake_gain)
{
	s->quiet = quiet;
	s->wake_gain = wake_gain;
}

uint64_t sweep_skipped(const struct sweep *s)
{
	return s->skipped;
}

const uint8_t *sweep_awake(const struct sweep *s)
{
	return s->awake;
}

void sweep_set_awake(struct sweep *s, const uint8_t *awake)
{
	memcpy(s->awake, awake, s->g->n);
}

uint64_t sweep_wake(struct sweep *s, const uint8_t *changed)
{
	uint32_t n = s->g->n;
	memcpy(s->moved, changed, n);
	wake_all(s);
	uint64_t woke = 0;
	for (uint32_t u = 0; u < n; u++)
		woke += s->awake[u];
	return woke;
}
