/*
 * fit: the fitting engine and its threads.
 *
 * Threads. fit_start() launches the fitting thread, which owns the working
 * model; it runs sweeps with a pool of (threads - 1) workers plus itself.
 * Readers never touch the model: after every sweep (and on pause, stop and
 * at the end) the fitting thread builds an immutable, reference-counted
 * snapshot and swaps it in under `lock`; fit_snapshot() takes a reference
 * under the same lock, so readers wait at most for a pointer swap. A byte
 * written to a pipe wakes a reader that poll()s fit_wake_fd().
 *
 * Determinism. Sweep s visits the nodes in a permutation drawn from
 * (seed, s). The permutation is cut into blocks whose boundaries depend
 * only on the graph; every row of a block is computed from the model as it
 * was at the start of the block (so it does not matter which thread
 * computes which row), and the new rows are applied in permutation order.
 *
 * Blocks are independent sets (a node adjacent to one already in the block
 * is deferred, in order, to a later block) of at most n/64 nodes, so the
 * rows computed together interact only through the column sums, and only by a small share of
 * them. Updating linked nodes together (Jacobi) oscillates on small dense
 * graphs; this keeps the sweep close to one-node-at-a-time (Gauss-Seidel).
 * So the bytes out depend on the seed, never on the thread count. Cutting a
 * block reads only the graph and the permutation, so the fitting thread
 * cuts the next block while the pool computes the rows of the current
 * one (pool_run), and the barriers spin briefly before they sleep
 * (barrier.h): on small graphs a block takes well under a millisecond.
 *
 * The likelihood. The trace's value after a sweep is not recomputed (that
 * cost 48 s of a 324 s fit at 10^6 nodes): the fitting thread adds up,
 * block by block in permutation order, the change each block made
 * (block_gain(): the rows' objective gains and the exact correction for
 * rows updated together), so it is the same for any thread count. It
 * equals a recompute up to rounding (relative 1e-13 to 1e-11 in
 * tests/unit/test_fit_loglik.c, no growth seen over 143 sweeps on email-Enron).
 * l(F) is computed afresh (compute_loglik(): fixed node ranges summed in
 * a fixed order) for the seeded model and after each reseeding move, and
 * only there: a start that levelled off or ran its sweeps keeps its summed
 * value, because a fit resumed from it (or extended past the plateau) must
 * add on to the very bits the uninterrupted fit added to.
 *
 * Control. pause/stop/extend are atomics read between blocks; a paused or
 * holding fit sleeps on a condition variable. The one thing a newcomer
 * gets wrong: workers read the model while the fitting thread applies
 * rows, so rows are applied only between the two pool barriers.
 */
#include "coterie/fit.h"

#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <pthread.h>
#include <signal.h>
#include <stdatomic.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include <unistd.h>

#include "coterie/barrier.h"
#include "coterie/graph.h"
#include "coterie/order.h"
#include "coterie/rng.h"
#include "coterie/util.h"

#define BLOCK_NODES 2048u /* a block has at most this many nodes ... */
#define BLOCK_SHARE 64u   /* ... and at most n / BLOCK_SHARE (at least 1) */
#define PEND_MAX (4u * BLOCK_NODES) /* nodes waiting for a later block */
#define LL_CHUNK 2048u    /* nodes per likelihood part */
#define POOL_MIN_ROWS 32u /* smaller blocks run on the fitting thread alone */
#define RATE_WINDOW 5u    /* sweeps per second over this many sweeps */
#define AGM_SHARE 19.0    /* rebuild a snapshot's AGM after 19x its (predicted) cost */

const char *fit_state_name(enum fit_state s)
{
	switch (s) {
	case FIT_READY: return "ready";
	case FIT_SEEDING: return "seeding";
	case FIT_FITTING: return "fitting";
	case FIT_PAUSED: return "paused";
	case FIT_LEVELLED: return "levelled";
	case FIT_STOPPED: return "stopped";
	case FIT_FINISHED: return "finished";
	case FIT_FAILED: return "failed";
	}
	return "unknown";
}

int fit_state_ended(enum fit_state s)
{
	return s == FIT_LEVELLED || s == FIT_STOPPED || s == FIT_FINISHED || s == FIT_FAILED;
}

void fit_params_default(struct fit_params *p)
{
	memset(p, 0, sizeof *p);
	p->k = 10;
	p->threads = 1;
	p->seed = 1;
	p->tol = 1e-4;
	p->patience = 3;
	p->max_sweeps = 500;
	p->epsilon = 0.0;
	p->starts = 3;
}

/* A row computed in a block: where its entries sit in a worker's arena. */
struct rowres {
	uint32_t nnz;
	int changed;
	unsigned owner;
	size_t at;
	double gain; /* the rise of the row objective (model_work_gain()) */
};

struct arena {
	struct fentry *e;
	size_t len, cap;
};

enum job { JOB_ROWS, JOB_LOGLIK, JOB_QUIT };

struct blockgen;
struct fit;
static uint32_t block_next(struct fit *f, struct blockgen *bg, uint32_t *blk);

struct best;

struct fit {
	const struct graph *g;
	/* The engine works on gw: g renumbered for locality (gi, with
	 * inner[u] the working id of g's node u), or g itself. Snapshots
	 * and origins are in g's ids; the working model is in gw's. */
	const struct graph *gw;
	struct graph gi;
	uint32_t *inner;
	const struct graph *excl;  /* held-out pairs in g's ids (borrowed) */
	struct graph excl_i;       /* the same in gw's ids */
	struct fit_params p;
	struct model m;

	/* published state, under lock */
	pthread_mutex_t lock;
	pthread_cond_t cond;
	struct snapshot *latest;
	struct snapshot *point; /* the newest one with a savepoint, not yet taken */
	enum fit_state state;

	atomic_int stop_req, pause_req, extend_req, interrupt_req, point_req;
	int wake[2];

	pthread_t thread;
	int started, joined;

	/* fitting-thread state */
	struct trace_point *trace;
	uint32_t ntrace, trace_cap;
	uint32_t sweep;
	uint32_t plateau_sweep;
	unsigned streak;
	double seconds_base, t0;
	struct seed_report seeds;
	struct fit_stats stats;
	int resumed;
	struct fit_savepoint *res_in;  /* owned: where an exact resume begins */
	struct fit_savepoint *res_out; /* owned until the next snapshot takes it */
	/* while the starts run (fit_main): the best earlier start, and the
	 * start as it levelled off while its reseeding moves run (else NULL) */
	const struct best *bestp;
	const struct fit_part *climbp;
	uint32_t start, starts, best_start;
	double best_loglik;
	uint32_t reseeds;
	/* the last AGM built for a snapshot, reused while it is recent */
	struct agm agm;
	int have_agm;
	double agm_time, agm_cost;
	uint64_t agm_nnz; /* strengths stored when it was built */
	uint32_t agm_sweep;

	/* the pool */
	unsigned nthreads;
	pthread_t *workers;
	unsigned nworkers_started;
	struct barrier bar_start, bar_end; /* spin, then sleep (barrier.h) */
	int barriers;
	enum job job;
	const uint32_t *block;
	uint32_t block_len;
	atomic_uint next;
	struct model_work **work;
	struct arena *arena;
	struct rowres *res;
	uint32_t *mark; /* block membership and neighbourhood marks */
	uint32_t *blk;  /* two buffers of BLOCK_NODES: the current block and the next */
	struct blockgen *gen; /* set: pool_run() cuts the next block into gen_out */
	uint32_t *gen_out;
	uint32_t gen_len;
	uint32_t *pend; /* two lists of PEND_MAX nodes waiting for a block */
	uint32_t epoch;
	struct model_llpart *parts;
	uint32_t nparts;
	/* the log-likelihood summed during the sweep (block_gain()) */
	double ll_sweep;    /* change of l(F) over the blocks applied so far */
	double *ll_col;     /* k: sum of the block's row changes so far */
	uint32_t *ll_stamp; /* k: ll_col[c] is live when == ll_epoch */
	uint32_t ll_epoch;
	uint32_t *ll_pos;   /* n (only with held-out pairs): 1 + index in the block */
	int ll_moved;       /* the model changed outside a sweep (a reseeding move) */
	double ll_moved_value; /* ... and its exact log-likelihood */
	atomic_int worker_failed;
	int pool_go; /* under lock: 0 wait, 1 run, -1 leave (no barriers) */
};

/* ---- snapshots ---- */

void snapshot_release(struct snapshot *s)
{
	if (!s)
		return;
	if (__atomic_sub_fetch(&s->refs_, 1, __ATOMIC_ACQ_REL) > 0)
		return;
	free(s->trace);
	fcsr_release(&s->F);
	agm_release(&s->agm);
	fit_savepoint_free(s->savepoint);
	free(s);
}

void fit_savepoint_free(struct fit_savepoint *r)
{
	if (!r)
		return;
	fcsr_release(&r->cur.F);
	free(r->cur.trace);
	fcsr_release(&r->best.F);
	free(r->best.trace);
	free(r);
}

static int fcsr_dup(struct fcsr *dst, const struct fcsr *src)
{
	memset(dst, 0, sizeof *dst);
	uint64_t nnz = src->off[src->n];
	dst->off = util_malloc((size_t)src->n + 1, sizeof *dst->off);
	dst->e = util_malloc(nnz ? nnz : 1, sizeof *dst->e);
	dst->colsum = util_calloc(src->k, sizeof *dst->colsum);
	if (!dst->off || !dst->e || !dst->colsum) {
		fcsr_release(dst);
		return -1;
	}
	dst->n = src->n;
	dst->k = src->k;
	memcpy(dst->off, src->off, ((size_t)src->n + 1) * sizeof *dst->off);
	if (nnz)
		memcpy(dst->e, src->e, nnz * sizeof *dst->e);
	memcpy(dst->colsum, src->colsum, src->k * sizeof *dst->colsum);
	return 0;
}

/* A deep copy of part (strengths and trace); 0 or -1. */
static int part_dup(struct fit_part *dst, const struct fit_part *src)
{
	*dst = *src;
	memset(&dst->F, 0, sizeof dst->F);
	dst->trace = util_malloc(src->ntrace ? src->ntrace : 1, sizeof *dst->trace);
	if (!dst->trace)
		return -1;
	if (src->ntrace)
		memcpy(dst->trace, src->trace, src->ntrace * sizeof *dst->trace);
	if (fcsr_dup(&dst->F, &src->F)) {
		free(dst->trace);
		dst->trace = NULL;
		return -1;
	}
	return 0;
}

static struct fit_savepoint *resume_dup(const struct fit_savepoint *src)
{
	struct fit_savepoint *r = util_calloc(1, sizeof *r);
	if (!r)
		return NULL;
	*r = *src;
	memset(&r->cur, 0, sizeof r->cur);
	memset(&r->best, 0, sizeof r->best);
	if (part_dup(&r->cur, &src->cur) ||
	    (src->best_start && part_dup(&r->best, &src->best))) {
		fit_savepoint_free(r);
		return NULL;
	}
	return r;
}

static double rate_of(const struct trace_point *t, uint32_t n)
{
	if (n < 2)
		return 0.0;
	uint32_t back = n - 1 < RATE_WINDOW ? n - 1 : RATE_WINDOW;
	const struct trace_point *a = &t[n - 1 - back], *b = &t[n - 1];
	double dt = b->seconds - a->seconds;
	return dt > 0 ? (double)(b->sweep - a->sweep) / dt : 0.0;
}

static double elapsed(const struct fit *f)
{
	return f->seconds_base + (util_now() - f->t0);
}

/* Build a snapshot of the current model and swap it in. */
static int publish(struct fit *f, enum fit_state state)
{
	struct snapshot *s = util_calloc(1, sizeof *s);
	if (!s)
		return -1;
	s->refs_ = 1;
	s->sweep = f->sweep;
	s->start = f->start;
	s->starts = f->starts;
	s->best_start = f->best_start;
	s->best_loglik = f->best_loglik;
	s->reseeds = f->reseeds;
	s->state = state;
	s->plateau_sweep = f->plateau_sweep;
	s->plateau = f->plateau_sweep > 0;
	s->seconds = elapsed(f);
	s->epsilon = f->m.epsilon;
	s->delta = f->m.delta;
	s->seeds = f->seeds;
	if (f->res_out) {
		s->savepoint = f->res_out;
		f->res_out = NULL;
	}
	s->stats = f->stats;
	s->stats.rows = s->stats.trials = s->stats.visits = s->stats.entries = 0;
	for (unsigned t = 0; t < f->nthreads; t++) {
		uint64_t rows, trials, visits;
		model_work_counts(f->work[t], &rows, &trials, &visits);
		s->stats.rows += rows;
		s->stats.trials += trials;
		s->stats.visits += visits;
		s->stats.entries += model_work_entries(f->work[t]);
	}
	double t_pub = util_now();
	s->ntrace = f->ntrace;
	s->trace = util_malloc(f->ntrace ? f->ntrace : 1, sizeof *s->trace);
	if (!s->trace)
		goto fail;
	if (f->ntrace)
		memcpy(s->trace, f->trace, f->ntrace * sizeof *s->trace);
	s->sweeps_per_sec = rate_of(f->trace, f->ntrace);
	if (model_export_order(&f->m, f->inner, &s->F))
		goto fail;
	double now = util_now();
	/* the AGM's cost grows with the strengths stored: scale the last
	 * build's cost by their count (after the first sweeps rows are
	 * densest, 48 entries a node on the 10^6-node bench graph against 2
	 * at the plateau, and an AGM then cost a minute and 3.6 GB) */
	uint64_t nnz = s->F.off[s->F.n];
	double predicted = f->agm_cost * ((double)nnz + 1.0) / ((double)f->agm_nnz + 1.0);
	if (state != FIT_FITTING || !f->have_agm || now - f->agm_time >= AGM_SHARE * predicted) {
		if (agm_from_strengths(&s->agm, f->g, &s->F, f->m.epsilon, f->m.delta,
				       AGM_MIN_LINKS))
			goto fail;
		f->agm_time = util_now();
		f->agm_cost = f->agm_time - now;
		f->agm_nnz = nnz;
		agm_release(&f->agm);
		f->have_agm = agm_copy(&f->agm, &s->agm) == 0;
		f->agm_sweep = f->sweep;
	} else if (agm_copy(&s->agm, &f->agm)) {
		goto fail;
	}
	s->agm_sweep = f->agm_sweep;
	f->stats.publish_seconds += util_now() - t_pub;

	struct snapshot *old_point = NULL;
	pthread_mutex_lock(&f->lock);
	if (s->savepoint) {
		old_point = f->point;
		f->point = s;
		__atomic_add_fetch(&s->refs_, 1, __ATOMIC_ACQ_REL);
	}
	struct snapshot *old = f->latest;
	f->latest = s;
	f->state = state;
	pthread_cond_broadcast(&f->cond);
	pthread_mutex_unlock(&f->lock);
	snapshot_release(old);
	snapshot_release(old_point);
	char byte = 1;
	ssize_t w = write(f->wake[1], &byte, 1); /* full pipe: a wake-up is pending anyway */
	(void)w;
	return 0;
fail:
	snapshot_release(s);
	return -1;
}

static void set_state(struct fit *f, enum fit_state st)
{
	pthread_mutex_lock(&f->lock);
	f->state = st;
	pthread_mutex_unlock(&f->lock);
}

/* ---- the pool ---- */

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

/* The share of the current job done by thread tid. */
static void run_job(struct fit *f, unsigned tid)
{
	if (f->job == JOB_ROWS) {
		for (;;) {
			uint32_t i = atomic_fetch_add(&f->next, 1);
			if (i >= f->block_len)
				break;
			uint32_t u = f->block[i];
			/* the rows ahead in the block: their adjacency and own
			 * strengths are cold (blocks are scattered over the graph) */
			if (i + 2 < f->block_len) {
				uint32_t u2 = f->block[i + 2];
				__builtin_prefetch(&f->gw->off[u2]);
				__builtin_prefetch(&f->m.rows[u2]);
			}
			if (i + 1 < f->block_len) {
				uint32_t u1 = f->block[i + 1];
				__builtin_prefetch(f->gw->adj + f->gw->off[u1]);
				__builtin_prefetch(f->m.rows[u1].e);
			}
			const struct fentry *row;
			uint32_t nnz;
			struct rowres *r = &f->res[i];
			r->changed = 0;
			if (model_update_row(&f->m, f->gw, u, f->work[tid], &row, &nnz)) {
				if (arena_push(&f->arena[tid], row, nnz, &r->at)) {
					atomic_store(&f->worker_failed, 1);
					continue;
				}
				r->gain = model_work_gain(f->work[tid]);
				r->changed = 1;
				r->nnz = nnz;
				r->owner = tid;
			}
		}
	} else if (f->job == JOB_LOGLIK) {
		for (;;) {
			uint32_t i = atomic_fetch_add(&f->next, 1);
			if (i >= f->nparts)
				break;
			uint32_t u0 = i * LL_CHUNK;
			uint32_t u1 = u0 + LL_CHUNK < f->gw->n ? u0 + LL_CHUNK : f->gw->n;
			model_loglik_range(&f->m, f->gw, u0, u1, &f->parts[i]);
		}
	}
}

static void *worker_main(void *arg)
{
	void **pack = arg;
	struct fit *f = pack[0];
	unsigned tid = (unsigned)(uintptr_t)pack[1];
	free(pack);
	pthread_mutex_lock(&f->lock);
	while (f->pool_go == 0)
		pthread_cond_wait(&f->cond, &f->lock);
	int go = f->pool_go;
	pthread_mutex_unlock(&f->lock);
	if (go < 0)
		return NULL;
	for (;;) {
		barrier_wait(&f->bar_start);
		if (f->job == JOB_QUIT)
			break;
		run_job(f, tid);
		barrier_wait(&f->bar_end);
	}
	return NULL;
}

/* Run the current job on every thread; returns when all are done. A
 * small block runs on the fitting thread alone: waking the pool would
 * cost more than it saves (who computes a row never changes the row). */
static void pool_run(struct fit *f)
{
	atomic_store(&f->next, 0);
	int alone = f->job == JOB_ROWS ? f->block_len < POOL_MIN_ROWS : f->nparts < 2;
	if (f->nthreads > 1 && !alone)
		barrier_wait(&f->bar_start);
	if (f->job == JOB_ROWS && f->gen) { /* the next block, while the workers start on this one */
		f->gen_len = block_next(f, f->gen, f->gen_out);
		f->gen = NULL;
	}
	run_job(f, 0);
	if (f->nthreads > 1 && !alone)
		barrier_wait(&f->bar_end);
}

/* Start the workers. They wait on `pool_go` until the barriers exist, so
 * that if a thread cannot be created the pool runs with those that were:
 * the barriers are sized only once the count is known. */
static int pool_start(struct fit *f)
{
	if (f->nthreads <= 1)
		return 0;
	f->workers = util_calloc(f->nthreads, sizeof *f->workers);
	if (!f->workers) {
		f->nthreads = 1;
		return 0;
	}
	unsigned want = f->nthreads;
	for (unsigned t = 1; t < want; t++) {
		void **pack = util_malloc(2, sizeof *pack);
		if (!pack)
			break;
		pack[0] = f;
		pack[1] = (void *)(uintptr_t)t;
		if (pthread_create(&f->workers[t], NULL, worker_main, pack)) {
			free(pack);
			warning("could start only %u of %u threads; fitting with those", t, want);
			break;
		}
		f->nworkers_started++;
	}
	f->nthreads = f->nworkers_started + 1;
	int rc = 0;
	if (f->nthreads > 1) {
		if (barrier_init(&f->bar_start, f->nthreads))
			rc = -1;
		else if (barrier_init(&f->bar_end, f->nthreads)) {
			barrier_destroy(&f->bar_start);
			rc = -1;
		} else
			f->barriers = 1;
	}
	pthread_mutex_lock(&f->lock);
	f->pool_go = rc == 0 ? 1 : -1;
	pthread_cond_broadcast(&f->cond);
	pthread_mutex_unlock(&f->lock);
	if (rc) {
		for (unsigned t = 1; t <= f->nworkers_started; t++)
			pthread_join(f->workers[t], NULL);
		f->nworkers_started = 0;
		f->nthreads = 1;
	}
	return 0;
}

static void pool_stop(struct fit *f)
{
	if (f->nworkers_started > 0) {
		f->job = JOB_QUIT;
		barrier_wait(&f->bar_start);
		for (unsigned t = 1; t <= f->nworkers_started; t++)
			pthread_join(f->workers[t], NULL);
		f->nworkers_started = 0;
	}
	if (f->barriers) {
		barrier_destroy(&f->bar_start);
		barrier_destroy(&f->bar_end);
		f->barriers = 0;
	}
}

/* ---- sweeps ---- */

/* CPU time of the calling thread (the fitting thread's share of a sweep;
 * unlike wall time, blind to other programs on the machine). */
static double thread_cpu(void)
{
	struct timespec ts;
	if (clock_gettime(CLOCK_THREAD_CPUTIME_ID, &ts))
		return 0.0;
	return (double)ts.tv_sec + ts.tv_nsec / 1e9;
}

static double compute_loglik(struct fit *f)
{
	double t = util_now();
	f->job = JOB_LOGLIK;
	pool_run(f);
	double ll = model_loglik_combine(&f->m, f->gw, f->parts, f->nparts);
	f->stats.loglik_seconds += util_now() - t;
	return ll;
}

static int trace_add(struct fit *f, double ll)
{
	if (f->ntrace == f->trace_cap) {
		uint32_t cap = f->trace_cap ? f->trace_cap * 2 : 64;
		struct trace_point *nt = util_realloc(f->trace, cap, sizeof *nt);
		if (!nt)
			return -1;
		f->trace = nt;
		f->trace_cap = cap;
	}
	f->trace[f->ntrace++] = (struct trace_point){ f->sweep, elapsed(f), ll };
	return 0;
}

/* Sleep while paused; returns 1 when asked to stop meanwhile. */
static int wait_while_paused(struct fit *f)
{
	if (!atomic_load(&f->pause_req))
		return atomic_load(&f->stop_req);
	publish(f, FIT_PAUSED);
	pthread_mutex_lock(&f->lock);
	while (atomic_load(&f->pause_req) && !atomic_load(&f->stop_req) &&
	       !atomic_load(&f->interrupt_req))
		pthread_cond_wait(&f->cond, &f->lock);
	f->state = FIT_FITTING;
	pthread_mutex_unlock(&f->lock);
	return atomic_load(&f->stop_req);
}

/* The cutting of a sweep's permutation into blocks: where it stands. */
struct blockgen {
	const uint32_t *perm;
	uint32_t n, cap, pos, npend;
	uint32_t *pend, *next; /* PEND_MAX nodes each */
};

/* Put u in the block at index i and mark it and its neighbours. */
static void block_add(struct fit *f, uint32_t *blk, uint32_t u, uint32_t i)
{
	blk[i] = u;
	f->mark[u] = f->epoch;
	for (uint64_t e = f->gw->off[u]; e < f->gw->off[u + 1]; e++)
		f->mark[f->gw->adj[e]] = f->epoch;
}

/* (new_u - old_u) . (new_v - old_v) for rows j and i of the block, read
 * before either is applied. */
static double change_dot(const struct fit *f, uint32_t j, uint32_t i)
{
	const struct frow *ou = &f->m.rows[f->block[j]], *ov = &f->m.rows[f->block[i]];
	const struct rowres *ru = &f->res[j], *rv = &f->res[i];
	const struct fentry *nu = f->arena[ru->owner].e + ru->at;
	const struct fentry *nv = f->arena[rv->owner].e + rv->at;
	return model_dot(nu, ru->nnz, nv, rv->nnz) - model_dot(nu, ru->nnz, ov->e, ov->nnz) -
	       model_dot(ou->e, ou->nnz, nv, rv->nnz) + model_dot(ou->e, ou->nnz, ov->e, ov->nnz);
}

/*
 * The change of l(F) (model.h) that applying the block's rows will make;
 * call before they are applied. Row u's objective f_u holds every term of
 * l(F) with u in it, so for u alone dL = f1_u - f0_u (its gain). The rows
 * of a block were all computed from the model at the block's start, and
 * the block is an independent set, so two of its rows share only the
 * non-edge term -F_u . F_v, which each f_u counted with the other's old
 * row. Writing a_u = new_u - old_u, the exact change is
 *     dL = sum_u gain_u - sum_{u < v in the block} a_u . a_v
 * except that a held-out pair (m->excl) is in no term of l(F) (and f_u
 * left it out too), so its a_u . a_v is not subtracted. The pair sum is
 * taken in block order as sum_v a_v . (a_u summed over earlier u) with a
 * dense k-vector, in O(entries changed); held-out pairs inside the block
 * are found through ll_pos. Everything runs on the fitting thread in
 * block order, so the bits do not depend on the thread count.
 */
static double block_gain(struct fit *f)
{
	double gain = 0.0, cross = 0.0;
	if (++f->ll_epoch == 0) {
		memset(f->ll_stamp, 0, f->m.k * sizeof *f->ll_stamp);
		f->ll_epoch = 1;
	}
	uint32_t ep = f->ll_epoch;
	for (uint32_t j = 0; j < f->block_len; j++) {
		const struct rowres *rr = &f->res[j];
		if (!rr->changed)
			continue;
		gain += rr->gain;
		const struct frow *o = &f->m.rows[f->block[j]];
		const struct fentry *e = f->arena[rr->owner].e + rr->at;
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
			if (f->ll_stamp[c] != ep) {
				f->ll_stamp[c] = ep;
				f->ll_col[c] = 0.0;
			}
			cross += d * f->ll_col[c];
			f->ll_col[c] += d;
		}
	}
	const struct graph *x = f->m.excl;
	if (x && f->ll_pos) {
		for (uint32_t j = 0; j < f->block_len; j++)
			f->ll_pos[f->block[j]] = j + 1;
		for (uint32_t j = 0; j < f->block_len; j++) {
			if (!f->res[j].changed)
				continue;
			uint32_t u = f->block[j];
			for (uint64_t t = x->off[u]; t < x->off[u + 1]; t++) {
				uint32_t i = f->ll_pos[x->adj[t]];
				if (i > j + 1 && f->res[i - 1].changed)
					cross -= change_dot(f, j, i - 1);
			}
		}
		for (uint32_t j = 0; j < f->block_len; j++)
			f->ll_pos[f->block[j]] = 0;
	}
	return gain - cross;
}

/* The next block into blk; returns its length, 0 when the sweep is done
 * (a block is never empty before then: its first node is always taken).
 * It reads only the graph and the permutation, never the model, so it
 * may run while rows are being computed. */
static uint32_t block_next(struct fit *f, struct blockgen *bg, uint32_t *blk)
{
	if (bg->pos >= bg->n && bg->npend == 0)
		return 0;
	if (++f->epoch == 0) {
		memset(f->mark, 0, bg->n * sizeof *f->mark);
		f->epoch = 1;
	}
	uint32_t nb = 0, nnext = 0, cap = bg->cap;
	for (uint32_t j = 0; j < bg->npend; j++) {
		uint32_t u = bg->pend[j];
		if (nb < cap && f->mark[u] != f->epoch)
			block_add(f, blk, u, nb++);
		else
			bg->next[nnext++] = u;
	}
	while (nb < cap && bg->pos < bg->n && nnext < PEND_MAX) {
		uint32_t u = bg->perm[bg->pos++];
		if (f->mark[u] == f->epoch)
			bg->next[nnext++] = u;
		else
			block_add(f, blk, u, nb++);
	}
	uint32_t *swap = bg->pend;
	bg->pend = bg->next;
	bg->next = swap;
	bg->npend = nnext;
	return nb;
}

/* One sweep; returns 1 if interrupted by a stop request, -1 on error. */
static int sweep_once(struct fit *f, uint32_t *perm)
{
	uint32_t n = f->gw->n;
	struct rng r;
	uint64_t start = f->start > 1 ? f->start - 1 : 0;
	rng_init(&r, f->p.seed * 0x9e3779b97f4a7c15ULL + f->sweep + (start << 32));
	for (uint32_t i = 0; i < n; i++)
		perm[i] = i;
	rng_shuffle_u32(&r, perm, n);

	uint32_t cap = n / BLOCK_SHARE;
	if (cap < 1)
		cap = 1;
	if (cap > BLOCK_NODES)
		cap = BLOCK_NODES;
	/* a node adjacent to one already in the block waits (in order) for a
	 * later block, so blocks stay large however dense the graph */
	struct blockgen bg = { perm, n, cap, 0, 0, f->pend, f->pend + PEND_MAX };
	/* two block buffers: the fitting thread cuts the next block while
	 * the pool computes the rows of this one (pool_run) */
	uint32_t cur = 0;
	uint32_t nb = block_next(f, &bg, f->blk);
	while (nb > 0) {
		if (wait_while_paused(f))
			return 1;
		f->gen = &bg;
		f->gen_out = f->blk + (1 - cur) * BLOCK_NODES;
		f->gen_len = 0;
		f->block = f->blk + cur * BLOCK_NODES;
		f->block_len = nb;
		for (unsigned t = 0; t < f->nthreads; t++)
			f->arena[t].len = 0;
		f->job = JOB_ROWS;
		pool_run(f);
		if (atomic_load(&f->worker_failed))
			return error("out of memory while fitting");
		f->ll_sweep += block_gain(f);
		for (uint32_t j = 0; j < f->block_len; j++) {
			const struct rowres *rr = &f->res[j];
			if (!rr->changed)
				continue;
			if (model_set_row(&f->m, f->block[j], f->arena[rr->owner].e + rr->at, rr->nnz))
				return -1;
		}
		nb = f->gen_len;
		cur = 1 - cur;
	}
	return 0;
}

static void recount_colsum(struct fit *f)
{
	/* rounding drift in colsum from millions of incremental updates; done
	 * after every sweep (O(nnz), small beside the sweep) so that a fit
	 * resumed from a checkpoint, whose colsum is recounted on import,
	 * continues bit for bit as the uninterrupted fit would */
	model_recount(&f->m);
}

static struct fit_savepoint *make_resume(struct fit *f, const struct best *b,
				      const struct fit_part *climb);

/* Run the current start from its seeded (or resumed) model until a
 * plateau, max_sweeps or a stop; returns how it ended. After fit_extend()
 * (when extend is set) a plateau no longer ends it. */
static enum fit_state run_start(struct fit *f, uint32_t *perm, int extend)
{
	/* l(F) of the model as the start (re)enters here: the trace's last
	 * point, or the exact value after a reseeding move; each sweep adds
	 * the change summed by block_gain(). A resumed fit starts from the
	 * saved trace (stored bit for bit), so it adds up exactly as the
	 * uninterrupted fit did. */
	double ll_now = f->ll_moved ? f->ll_moved_value
		      : f->ntrace ? f->trace[f->ntrace - 1].loglik
				  : compute_loglik(f);
	f->ll_moved = 0;
	while (f->sweep < f->p.max_sweeps) {
		if (atomic_load(&f->stop_req) || atomic_load(&f->interrupt_req))
			return FIT_STOPPED;
		double t = util_now(), c = thread_cpu();
		f->ll_sweep = 0.0;
		int rc = sweep_once(f, perm);
		if (rc < 0)
			return FIT_FAILED;
		f->sweep++;
		recount_colsum(f);
		f->stats.sweep_seconds += util_now() - t;
		f->stats.sweep_cpu_seconds += thread_cpu() - c;
		f->stats.sweeps++;
		/* (recomputed when the gains are not l(F)'s change: an
		 * --epsilon below 1e-12, see model_gain_exact()) */
		double ll = model_gain_exact(&f->m) ? ll_now + f->ll_sweep : compute_loglik(f);
		ll_now = ll;
		double prev = f->ntrace ? f->trace[f->ntrace - 1].loglik : ll;
		if (trace_add(f, ll))
			return FIT_FAILED;
		if (rc == 1)
			return FIT_STOPPED;
		double gain = (ll - prev) / (fabs(prev) > 0 ? fabs(prev) : 1.0);
		f->streak = gain < f->p.tol ? f->streak + 1 : 0;
		int fired = f->streak >= f->p.patience;
		if (fired && f->plateau_sweep == 0)
			f->plateau_sweep = f->sweep;
		if (fired && !f->p.past_plateau && !(extend && atomic_load(&f->extend_req)))
			return FIT_LEVELLED;
		if (f->bestp && atomic_exchange(&f->point_req, 0)) {
			fit_savepoint_free(f->res_out);
			f->res_out = make_resume(f, f->bestp, f->climbp);
		}
		publish(f, FIT_FITTING);
	}
	return FIT_FINISHED;
}

/* A levelled fit that should hold: publish, wait for fit_extend() or
 * fit_stop(), and on extend go on fitting past plateaus. */
static enum fit_state hold(struct fit *f, uint32_t *perm)
{
	publish(f, FIT_LEVELLED);
	pthread_mutex_lock(&f->lock);
	while (!atomic_load(&f->extend_req) && !atomic_load(&f->stop_req) &&
	       !atomic_load(&f->interrupt_req))
		pthread_cond_wait(&f->cond, &f->lock);
	pthread_mutex_unlock(&f->lock);
	if (!atomic_load(&f->extend_req))
		return FIT_LEVELLED;
	set_state(f, FIT_FITTING);
	publish(f, FIT_FITTING);
	return run_start(f, perm, 1);
}

/*
 * Reseeding moves. A start often levels off with one column spread over
 * two true communities and another wasted on a sliver of a third. A move
 * takes the weakest column (smallest column sum), empties it, and seeds it
 * again inside the largest community (the ego-net of one of its members,
 * restricted to that community), then fits to a plateau again. The move
 * is kept only if the log-likelihood rose; otherwise the model goes back.
 * Moves stop after RESEED_FAILS failures in a row, RESEED_MAX moves, or
 * when they have used as many sweeps as the climb to the first plateau.
 */
#define RESEED_MAX 12u
#define RESEED_FAILS 3u
#define RESEED_MIN_BUDGET 30u

static int reseed_column(struct fit *f, struct rng *r)
{
	struct model *m = &f->m;
	uint32_t k = m->k, n = m->n;
	if (k < 2)
		return 0;
	uint32_t *size = util_calloc(k, sizeof *size);
	struct fentry *buf = util_malloc((size_t)k + 1, sizeof *buf);
	if (!size || !buf) {
		free(size);
		free(buf);
		return -1;
	}
	for (uint32_t u = 0; u < n; u++)
		for (uint32_t i = 0; i < m->rows[u].nnz; i++)
			if (m->rows[u].e[i].v >= m->delta)
				size[m->rows[u].e[i].c]++;
	uint32_t host = 0;
	for (uint32_t c = 1; c < k; c++)
		if (size[c] > size[host])
			host = c;
	uint32_t victim = host == 0 ? 1 : 0;
	for (uint32_t c = 0; c < k; c++)
		if (c != host && m->colsum[c] < m->colsum[victim])
			victim = c;
	int rc = 0;
	if (size[host] < 2)
		goto out;
	/* a random member of the host */
	uint32_t pick = (uint32_t)rng_below(r, size[host]), centre = 0;
	for (uint32_t u = 0, seen = 0; u < n; u++)
		for (uint32_t i = 0; i < m->rows[u].nnz; i++)
			if (m->rows[u].e[i].c == host && m->rows[u].e[i].v >= m->delta) {
				if (seen++ == pick)
					centre = u;
			}
	/* empty the victim column */
	for (uint32_t u = 0; u < n; u++) {
		const struct frow *row = &m->rows[u];
		uint32_t o = 0, had = 0;
		for (uint32_t i = 0; i < row->nnz; i++) {
			if (row->e[i].c == victim)
				had = 1;
			else
				buf[o++] = row->e[i];
		}
		if (had && model_set_row(m, u, buf, o))
			goto fail;
	}
	/* seed it on the centre and its neighbours inside the host */
	for (uint64_t j = f->gw->off[centre]; j <= f->gw->off[centre + 1]; j++) {
		uint32_t u = j < f->gw->off[centre + 1] ? f->gw->adj[j] : centre;
		const struct frow *row = &m->rows[u];
		int in_host = u == centre;
		for (uint32_t i = 0; i < row->nnz; i++)
			if (row->e[i].c == host && row->e[i].v >= m->delta)
				in_host = 1;
		if (!in_host)
			continue;
		uint32_t o = 0, put = 0;
		for (uint32_t i = 0; i < row->nnz; i++) {
			if (!put && row->e[i].c > victim) {
				buf[o++] = (struct fentry){ victim, 1.0 };
				put = 1;
			}
			buf[o++] = row->e[i];
		}
		if (!put)
			buf[o++] = (struct fentry){ victim, 1.0 };
		if (model_set_row(m, u, buf, o))
			goto fail;
	}
	model_recount(m);
	rc = 1;
	goto out;
fail:
	rc = -1;
out:
	free(size);
	free(buf);
	return rc;
}

/* Reseed a levelled start; returns how the fit ended (LEVELLED when the
 * moves ran out, or STOPPED/FINISHED/FAILED when something else ended it). */
static enum fit_state reseed(struct fit *f, uint32_t *perm)
{
	struct rng r;
	rng_init(&r, f->p.seed ^ 0x7ef1e5ULL ^ ((uint64_t)f->start << 48));
	struct fcsr saved;
	memset(&saved, 0, sizeof saved);
	enum fit_state st = FIT_LEVELLED;
	unsigned fails = 0;
	/* the moves may spend at most as many sweeps as the climb did (and at
	 * least RESEED_MIN_BUDGET), so reseeding at most about doubles a fit */
	uint32_t budget = f->sweep > RESEED_MIN_BUDGET ? f->sweep : RESEED_MIN_BUDGET;
	uint32_t spent = 0;
	for (unsigned move = 0; move < RESEED_MAX && fails < RESEED_FAILS && spent < budget;
	     move++) {
		if (atomic_load(&f->stop_req) || atomic_load(&f->interrupt_req)) {
			fcsr_release(&saved);
			return FIT_STOPPED;
		}
		double before = f->trace[f->ntrace - 1].loglik;
		uint32_t ntrace = f->ntrace, sweep = f->sweep, plateau = f->plateau_sweep;
		fcsr_release(&saved);
		if (model_export(&f->m, &saved))
			return FIT_FAILED;
		int rc = reseed_column(f, &r);
		if (rc <= 0) {
			fcsr_release(&saved);
			return rc < 0 ? FIT_FAILED : FIT_LEVELLED;
		}
		/* the move rewrote a whole column: l(F) afresh (the trace keeps
		 * `before`, against which the plateau rule measures the gain) */
		f->ll_moved_value = compute_loglik(f);
		f->ll_moved = 1;
		f->streak = 0;
		st = run_start(f, perm, 0);
		spent += f->sweep - sweep;
		if (st == FIT_FAILED) {
			fcsr_release(&saved);
			return st;
		}
		double after = f->trace[f->ntrace - 1].loglik;
		if (after > before) {
			fails = 0;
			f->reseeds++;
		} else {
			if (model_import(&f->m, &saved)) {
				fcsr_release(&saved);
				return FIT_FAILED;
			}
			f->ntrace = ntrace;
			f->sweep = sweep;
			f->plateau_sweep = plateau;
			fails++;
		}
		if (st != FIT_LEVELLED)
			break;
	}
	fcsr_release(&saved);
	return st;
}

/* The most likely start so far. */
struct best {
	int have;
	struct fcsr F;
	struct trace_point *trace;
	uint32_t ntrace, sweep, plateau_sweep, reseeds;
	enum fit_state state;
};

static int keep_best(struct fit *f, struct best *b, enum fit_state st)
{
	double ll = f->trace[f->ntrace - 1].loglik;
	if (b->have && !(ll > f->best_loglik))
		return 0;
	fcsr_release(&b->F);
	free(b->trace);
	b->trace = util_malloc(f->ntrace, sizeof *b->trace);
	if (!b->trace || model_export(&f->m, &b->F))
		return -1;
	memcpy(b->trace, f->trace, f->ntrace * sizeof *b->trace);
	b->ntrace = f->ntrace;
	b->sweep = f->sweep;
	b->plateau_sweep = f->plateau_sweep;
	b->reseeds = f->reseeds;
	b->state = st;
	b->have = 1;
	f->best_start = f->start;
	f->best_loglik = ll;
	return 0;
}

static int restore_best(struct fit *f, struct best *b)
{
	if (model_import(&f->m, &b->F))
		return -1;
	memcpy(f->trace, b->trace, b->ntrace * sizeof *b->trace);
	f->ntrace = b->ntrace;
	f->sweep = b->sweep;
	f->plateau_sweep = b->plateau_sweep;
	f->reseeds = b->reseeds;
	return 0;
}

/* The fit's model and trace now, as a part. */
static int part_of_model(struct fit *f, struct fit_part *p)
{
	memset(p, 0, sizeof *p);
	p->trace = util_malloc(f->ntrace ? f->ntrace : 1, sizeof *p->trace);
	if (!p->trace || model_export(&f->m, &p->F)) {
		free(p->trace);
		p->trace = NULL;
		return -1;
	}
	memcpy(p->trace, f->trace, f->ntrace * sizeof *p->trace);
	p->ntrace = f->ntrace;
	p->sweep = f->sweep;
	p->plateau_sweep = f->plateau_sweep;
	return 0;
}

/* Load a part as the current start's model and trace. The plateau streak
 * is counted again from the trace, with the arithmetic of run_start(). */
static int part_load(struct fit *f, const struct fit_part *p)
{
	if (model_import(&f->m, &p->F))
		return -1;
	f->ntrace = 0;
	for (uint32_t i = 0; i < p->ntrace; i++) {
		if (trace_add(f, 0))
			return -1;
		f->trace[i] = p->trace[i];
	}
	f->sweep = p->sweep;
	f->plateau_sweep = p->plateau_sweep;
	f->streak = 0;
	for (uint32_t i = 1; i < p->ntrace; i++) {
		double prev = p->trace[i - 1].loglik, ll = p->trace[i].loglik;
		double gain = (ll - prev) / (fabs(prev) > 0 ? fabs(prev) : 1.0);
		f->streak = gain < f->p.tol ? f->streak + 1 : 0;
	}
	return 0;
}

/* What an exact resume of start f->start needs, at the end of a sweep:
 * climb is the start as it levelled off when its reseeding moves are
 * running, else NULL. NULL when out of memory (the savepoint is a
 * convenience; the fit goes on without it). */
static struct fit_savepoint *make_resume(struct fit *f, const struct best *b,
				      const struct fit_part *climb)
{
	struct fit_savepoint *r = util_calloc(1, sizeof *r);
	if (!r)
		return NULL;
	r->start = f->start;
	r->phase = climb ? FIT_PHASE_RESEED : FIT_PHASE_CLIMB;
	int rc = climb ? part_dup(&r->cur, climb) : part_of_model(f, &r->cur);
	if (rc == 0 && b->have) {
		struct fit_part bp = { b->F, b->trace, b->ntrace, b->sweep, b->plateau_sweep };
		r->best_start = f->best_start;
		r->best_reseeds = b->reseeds;
		r->best_state = b->state;
		r->best_loglik = f->best_loglik;
		rc = part_dup(&r->best, &bp);
	}
	if (rc) {
		fit_savepoint_free(r);
		return NULL;
	}
	return r;
}

/* After an interrupt that let the sweep end (not a hard stop): keep the
 * savepoint for the last snapshot. */
static void keep_resume(struct fit *f, const struct best *b, const struct fit_part *climb)
{
	if (atomic_load(&f->stop_req) || !atomic_load(&f->interrupt_req))
		return;
	struct fit_savepoint *r = make_resume(f, b, climb);
	if (r) {
		fit_savepoint_free(f->res_out);
		f->res_out = r;
	}
}

/* Start r (0-based) from a fresh seeding: 0 or -1. */
static int begin_start(struct fit *f, uint32_t r)
{
	if (r > 0) {
		for (uint32_t u = 0; u < f->gw->n; u++)
			model_set_row(&f->m, u, NULL, 0);
		model_recount(&f->m);
		f->ntrace = 0;
		f->sweep = 0;
		f->reseeds = 0;
		f->streak = 0;
		f->plateau_sweep = 0;
	}
	set_state(f, FIT_SEEDING);
	double t = util_now();
	int seeded = seed_model(f->gw, &f->m, f->p.seed, r, &f->seeds);
	f->stats.seed_seconds += util_now() - t;
	if (seeded || trace_add(f, compute_loglik(f)))
		return -1;
	publish(f, FIT_FITTING);
	return 0;
}

static void *fit_main(void *arg)
{
	struct fit *f = arg;
	enum fit_state final = FIT_FAILED;
	struct best best;
	memset(&best, 0, sizeof best);
	uint32_t *perm = util_malloc(f->gw->n ? f->gw->n : 1, sizeof *perm);
	f->t0 = util_now();
	if (!perm || pool_start(f))
		goto out;

	if (f->resumed) {
		publish(f, FIT_FITTING);
		final = run_start(f, perm, 1);
		if (final == FIT_LEVELLED && f->p.hold_at_plateau)
			final = hold(f, perm);
		goto out;
	}
	uint32_t r0 = 0;
	const struct fit_savepoint *ri = f->res_in;
	if (ri) {
		r0 = ri->start - 1;
		if (ri->best_start) {
			if (fcsr_dup(&best.F, &ri->best.F))
				goto out;
			best.trace = util_malloc(ri->best.ntrace, sizeof *best.trace);
			if (!best.trace)
				goto out;
			memcpy(best.trace, ri->best.trace, ri->best.ntrace * sizeof *best.trace);
			best.ntrace = ri->best.ntrace;
			best.sweep = ri->best.sweep;
			best.plateau_sweep = ri->best.plateau_sweep;
			best.reseeds = ri->best_reseeds;
			best.state = ri->best_state;
			best.have = 1;
			f->best_start = ri->best_start;
			f->best_loglik = ri->best_loglik;
		}
	}
	f->bestp = &best;
	for (uint32_t r = r0; r < f->starts; r++) {
		f->start = r + 1;
		f->climbp = NULL;
		struct fit_part climb;
		int climbed = 0;
		enum fit_state st;
		if (ri && r == r0) {
			/* an exact resume: the start where the interrupt left it */
			f->reseeds = 0;
			if (part_load(f, &ri->cur)) {
				final = FIT_FAILED;
				break;
			}
			publish(f, FIT_FITTING);
			if (ri->phase == FIT_PHASE_CLIMB) {
				st = run_start(f, perm, 0);
			} else {
				st = FIT_LEVELLED;
				climb = ri->cur;
				climbed = 1;
			}
		} else {
			if (begin_start(f, r)) {
				final = FIT_FAILED;
				break;
			}
			st = run_start(f, perm, 0);
		}
		if (st == FIT_LEVELLED && !f->p.no_reseed) {
			/* kept for an interrupt during the moves (see keep_resume) */
			if (!climbed) {
				if (part_of_model(f, &climb)) {
					final = FIT_FAILED;
					break;
				}
				climbed = 2;
			}
			f->climbp = &climb;
			st = reseed(f, perm);
			f->climbp = NULL;
		} else if (climbed) {
			climbed = 0; /* reseeding is off: the climb is not needed */
		}
		if (st == FIT_STOPPED)
			keep_resume(f, &best, climbed ? &climb : NULL);
		if (climbed == 2) {
			fcsr_release(&climb.F);
			free(climb.trace);
		}
		if (st == FIT_FAILED) {
			final = FIT_FAILED;
			break;
		}
		if (keep_best(f, &best, st)) {
			final = FIT_FAILED;
			break;
		}
		final = st;
		if (st == FIT_STOPPED)
			break;
	}
	f->bestp = NULL;
	f->climbp = NULL;
	if (final != FIT_FAILED && best.have && f->best_start != f->start) {
		enum fit_state keep = final == FIT_STOPPED ? FIT_STOPPED : best.state;
		if (restore_best(f, &best))
			final = FIT_FAILED;
		else
			final = keep;
	}
	if (final == FIT_LEVELLED && f->p.hold_at_plateau) {
		f->streak = 0;
		final = hold(f, perm);
	}
out:
	pool_stop(f);
	free(perm);
	fcsr_release(&best.F);
	free(best.trace);
	if (publish(f, final)) {
		set_state(f, FIT_FAILED);
		char byte = 1;
		ssize_t w = write(f->wake[1], &byte, 1);
		(void)w;
	}
	return NULL;
}

/* ---- the public face ---- */

struct fit *fit_new(const struct graph *g, const struct fit_params *p,
		    const struct fit_origin *origin)
{
	if (p->k == 0 || p->k > MODEL_MAX_K) {
		error("the number of communities must be between 1 and %u", MODEL_MAX_K);
		return NULL;
	}
	if (g->n < 2) {
		error("a graph of %u node%s has no communities to find", g->n, g->n == 1 ? "" : "s");
		return NULL;
	}
	struct fit *f = util_calloc(1, sizeof *f);
	if (!f)
		return NULL;
	f->g = g;
	f->gw = g;
	f->p = *p;
	f->wake[0] = f->wake[1] = -1;
	if (f->p.threads < 1)
		f->p.threads = 1;
	if (f->p.patience < 1)
		f->p.patience = 1;
	if (f->p.starts < 1)
		f->p.starts = 1;
	f->starts = origin && !origin->savepoint ? 1 : f->p.starts;
	f->start = 1;
	f->nthreads = f->p.threads;
	double eps = p->epsilon > 0 ? p->epsilon : model_default_epsilon(g);
	f->p.epsilon = eps;
	pthread_mutex_init(&f->lock, NULL);
	pthread_cond_init(&f->cond, NULL);
	if (model_init(&f->m, g->n, p->k, eps))
		goto fail;
	if (p->renumber) {
		f->inner = util_malloc(g->n, sizeof *f->inner);
		if (!f->inner || order_bfs(g, f->inner) || order_graph(g, f->inner, &f->gi))
			goto fail;
		f->gw = &f->gi;
	}
	if (pipe(f->wake)) {
		error("cannot make a pipe: %s", strerror(errno));
		goto fail;
	}
	for (int i = 0; i < 2; i++) {
		fcntl(f->wake[i], F_SETFL, fcntl(f->wake[i], F_GETFL) | O_NONBLOCK);
		fcntl(f->wake[i], F_SETFD, FD_CLOEXEC);
	}
	f->work = util_calloc(f->nthreads, sizeof *f->work);
	f->arena = util_calloc(f->nthreads, sizeof *f->arena);
	f->res = util_calloc(BLOCK_NODES, sizeof *f->res);
	f->nparts = (g->n + LL_CHUNK - 1) / LL_CHUNK;
	f->parts = util_calloc(f->nparts, sizeof *f->parts);
	f->mark = util_calloc(g->n, sizeof *f->mark);
	f->blk = util_calloc(2 * BLOCK_NODES, sizeof *f->blk);
	f->pend = util_calloc(2 * PEND_MAX, sizeof *f->pend);
	f->ll_col = util_calloc(p->k, sizeof *f->ll_col);
	f->ll_stamp = util_calloc(p->k, sizeof *f->ll_stamp);
	if (!f->work || !f->arena || !f->res || !f->parts || !f->mark || !f->blk || !f->pend ||
	    !f->ll_col || !f->ll_stamp)
		goto fail;
	for (unsigned t = 0; t < f->nthreads; t++)
		if (!(f->work[t] = model_work_new(p->k)))
			goto fail;
	if (origin && origin->savepoint) {
		const struct fit_savepoint *ri = origin->savepoint;
		if (ri->start < 1 || ri->start > f->starts || ri->best_start >= ri->start ||
		    ri->cur.F.n != g->n || ri->cur.F.k != p->k ||
		    (ri->best_start && (ri->best.F.n != g->n || ri->best.F.k != p->k ||
					ri->best.ntrace == 0))) {
			error("the saved fit does not match the graph and its parameters");
			goto fail;
		}
		if (!(f->res_in = resume_dup(ri)))
			goto fail;
		f->start = ri->start;
	} else if (origin) {
		if (origin->F->n != g->n || origin->F->k != p->k) {
			error("the saved fit is %u x %u but the graph and -k ask for %u x %u",
			      origin->F->n, origin->F->k, g->n, p->k);
			goto fail;
		}
		if (model_import_order(&f->m, origin->F, f->inner))
			goto fail;
		f->resumed = 1;
		f->sweep = origin->sweep;
		f->seconds_base = origin->seconds;
		f->plateau_sweep = origin->plateau_sweep;
		for (uint32_t i = 0; i < origin->ntrace; i++) {
			if (trace_add(f, 0))
				goto fail;
			f->trace[i] = origin->trace[i];
		}
	}
	/* the first snapshot: the resumed model, or an empty one before seeding */
	f->t0 = util_now();
	if (publish(f, FIT_READY))
		goto fail;
	return f;
fail:
	fit_free(f);
	return NULL;
}

void fit_exclude(struct fit *f, const struct graph *excl)
{
	f->excl = excl;
}

int fit_start(struct fit *f)
{
	if (f->started)
		return error("the fit is already running");
	f->m.excl = f->excl;
	if (f->excl && f->inner) {
		order_graph_release(&f->excl_i);
		if (order_graph(f->excl, f->inner, &f->excl_i))
			return -1;
		f->m.excl = &f->excl_i;
	}
	if (f->excl && !f->ll_pos && !(f->ll_pos = util_calloc(f->g->n, sizeof *f->ll_pos)))
		return -1;
	/* the fitting thread and its workers take no signals: the command
	 * layer handles them on its own thread */
	sigset_t all, old;
	sigfillset(&all);
	pthread_sigmask(SIG_BLOCK, &all, &old);
	int rc = pthread_create(&f->thread, NULL, fit_main, f);
	pthread_sigmask(SIG_SETMASK, &old, NULL);
	if (rc)
		return error("cannot start the fitting thread: %s", strerror(rc));
	f->started = 1;
	return 0;
}

static void poke(struct fit *f)
{
	pthread_mutex_lock(&f->lock);
	pthread_cond_broadcast(&f->cond);
	pthread_mutex_unlock(&f->lock);
}

void fit_pause(struct fit *f)
{
	atomic_store(&f->pause_req, 1);
	poke(f);
}

void fit_unpause(struct fit *f)
{
	atomic_store(&f->pause_req, 0);
	poke(f);
}

void fit_stop(struct fit *f)
{
	atomic_store(&f->stop_req, 1);
	poke(f);
}

void fit_interrupt(struct fit *f)
{
	atomic_store(&f->interrupt_req, 1);
	atomic_store(&f->pause_req, 0);
	poke(f);
}

void fit_want_savepoint(struct fit *f)
{
	atomic_store(&f->point_req, 1);
}

struct snapshot *fit_take_savepoint(struct fit *f)
{
	pthread_mutex_lock(&f->lock);
	struct snapshot *s = f->point;
	f->point = NULL;
	pthread_mutex_unlock(&f->lock);
	return s;
}

void fit_extend(struct fit *f)
{
	atomic_store(&f->extend_req, 1);
	poke(f);
}

enum fit_state fit_wait(struct fit *f)
{
	if (f->started && !f->joined) {
		pthread_join(f->thread, NULL);
		f->joined = 1;
	}
	return fit_get_state(f);
}

enum fit_state fit_get_state(struct fit *f)
{
	pthread_mutex_lock(&f->lock);
	enum fit_state s = f->state;
	pthread_mutex_unlock(&f->lock);
	return s;
}

struct snapshot *fit_snapshot(struct fit *f)
{
	pthread_mutex_lock(&f->lock);
	struct snapshot *s = f->latest;
	if (s)
		__atomic_add_fetch(&s->refs_, 1, __ATOMIC_ACQ_REL);
	pthread_mutex_unlock(&f->lock);
	return s;
}

int fit_wake_fd(struct fit *f)
{
	return f->wake[0];
}

void fit_drain_wake(struct fit *f)
{
	char buf[256];
	while (read(f->wake[0], buf, sizeof buf) > 0)
		;
}

const struct fit_params *fit_get_params(const struct fit *f)
{
	return &f->p;
}

void fit_free(struct fit *f)
{
	if (!f)
		return;
	if (f->started && !f->joined) {
		fit_stop(f);
		fit_wait(f);
	}
	snapshot_release(f->latest);
	snapshot_release(f->point);
	fit_savepoint_free(f->res_in);
	fit_savepoint_free(f->res_out);
	agm_release(&f->agm);
	model_release(&f->m);
	order_graph_release(&f->gi);
	order_graph_release(&f->excl_i);
	free(f->inner);
	if (f->work)
		for (unsigned t = 0; t < f->p.threads; t++)
			model_work_free(f->work[t]);
	free(f->work);
	if (f->arena)
		for (unsigned t = 0; t < f->p.threads; t++)
			free(f->arena[t].e);
	free(f->arena);
	free(f->res);
	free(f->parts);
	free(f->mark);
	free(f->blk);
	free(f->pend);
	free(f->ll_col);
	free(f->ll_stamp);
	free(f->ll_pos);
	free(f->trace);
	free(f->workers);
	for (int i = 0; i < 2; i++)
		if (f->wake[i] >= 0)
			close(f->wake[i]);
	pthread_mutex_destroy(&f->lock);
	pthread_cond_destroy(&f->cond);
	free(f);
}
