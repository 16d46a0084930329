/*
 * select: choose k by held-out likelihood (see select.h).
 *
 * The search keeps up to `threads` single-threaded fits running, started
 * in grid order, and poll()s their wake-up pipes. A finished fit is scored
 * at once; the scores are then taken in grid order (a point waits for all
 * those before it), which is where the best so far and the early stop are
 * decided, so the outcome is the same for any number of fits at once.
 * Fits started beyond the stopping point are stopped and discarded.
 *
 * The one thing a newcomer gets wrong: the held-out pairs must leave the
 * likelihood (fit_exclude()), not become non-edges; see holdout.c.
 */
#include "coterie/select.h"

#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <poll.h>
#include <pthread.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "coterie/fit.h"
#include "coterie/graph.h"
#include "coterie/holdout.h"
#include "coterie/model.h"
#include "coterie/seed.h"
#include "coterie/util.h"

int select_params_default(struct select_params *sp, const struct graph *g, uint32_t *minima)
{
	memset(sp, 0, sizeof *sp);
	sp->kmin = 2;
	sp->share = 0.1;
	sp->step = 1.25;
	uint32_t L;
	if (seed_count_minima(g, &L))
		return -1;
	if (minima)
		*minima = L;
	uint64_t top = 3 * (uint64_t)L;
	if (top < 10)
		top = 10;
	if (top > 500)
		top = 500;
	if (top > g->n / 4)
		top = g->n / 4;
	if (top < sp->kmin)
		top = sp->kmin;
	sp->kmax = (uint32_t)top;
	return 0;
}

static int parse_k(const char *s, size_t len, uint32_t *out)
{
	uint64_t v = 0;
	if (len == 0 || len > 9)
		return -1;
	for (size_t i = 0; i < len; i++) {
		if (s[i] < '0' || s[i] > '9')
			return -1;
		v = v * 10 + (uint64_t)(s[i] - '0');
	}
	if (v < 1 || v > MODEL_MAX_K)
		return -1;
	*out = (uint32_t)v;
	return 0;
}

int select_grid_parse(const char *s, struct select_params *sp)
{
	char shown[96];
	util_escape(s, shown, sizeof shown, 1);
	if (strchr(s, ',') || !strchr(s, ':')) {
		uint32_t n = 0;
		const char *p = s;
		for (;;) {
			const char *e = strchr(p, ',');
			size_t len = e ? (size_t)(e - p) : strlen(p);
			if (n == SELECT_MAX_GRID)
				return error("--k-grid takes at most %d values, '%s' has more",
					     SELECT_MAX_GRID, shown);
			if (parse_k(p, len, &sp->list[n]))
				return error("--k-grid expects A:B, A:B:RATIO or a list like 4,8,16 "
					     "of whole numbers from 1 to %u, not '%s'", MODEL_MAX_K,
					     shown);
			n++;
			if (!e)
				break;
			p = e + 1;
		}
		qsort(sp->list, n, sizeof *sp->list, util_qsort_u32);
		uint32_t o = 0;
		for (uint32_t i = 0; i < n; i++)
			if (o == 0 || sp->list[i] != sp->list[o - 1])
				sp->list[o++] = sp->list[i];
		sp->nlist = o;
		return 0;
	}
	const char *c1 = strchr(s, ':'), *c2 = strchr(c1 + 1, ':');
	uint32_t a, b;
	double ratio = sp->step;
	if (parse_k(s, (size_t)(c1 - s), &a) ||
	    parse_k(c1 + 1, c2 ? (size_t)(c2 - c1 - 1) : strlen(c1 + 1), &b))
		return error("--k-grid expects A:B, A:B:RATIO or a list like 4,8,16 of whole "
			     "numbers from 1 to %u, not '%s'", MODEL_MAX_K, shown);
	if (b < a)
		return error("--k-grid '%s': the last k is below the first", shown);
	if (c2) {
		char *end;
		errno = 0;
		ratio = strtod(c2 + 1, &end);
		if (errno || end == c2 + 1 || *end || !(ratio >= 1.01 && ratio <= 100.0))
			return error("--k-grid '%s': the ratio must be a number from 1.01 to 100",
				     shown);
	}
	sp->kmin = a;
	sp->kmax = b;
	sp->step = ratio;
	sp->nlist = 0;
	return 0;
}

uint32_t select_grid(const struct select_params *sp, uint32_t *ks)
{
	if (sp->nlist) {
		uint32_t n = sp->nlist < SELECT_MAX_GRID ? sp->nlist : SELECT_MAX_GRID;
		memcpy(ks, sp->list, n * sizeof *ks);
		return n;
	}
	uint32_t n = 0;
	double k = sp->kmin;
	while (n < SELECT_MAX_GRID && (uint32_t)llround(k) <= sp->kmax) {
		uint32_t ki = (uint32_t)llround(k);
		if (n == 0 || ki > ks[n - 1])
			ks[n++] = ki;
		k *= sp->step;
	}
	if (n < SELECT_MAX_GRID && (n == 0 || ks[n - 1] < sp->kmax))
		ks[n++] = sp->kmax;
	else if (n == SELECT_MAX_GRID && ks[n - 1] < sp->kmax)
		ks[n - 1] = sp->kmax; /* a very fine grid: still end at kmax */
	return n;
}

void select_result_release(struct select_result *r)
{
	if (!r)
		return;
	free(r->pts);
	memset(r, 0, sizeof *r);
}

/* One fit of the search. */
struct slot {
	struct fit *f;
	uint32_t idx; /* into the grid */
};

static int slot_launch(struct slot *sl, const struct holdout *h, const struct fit_params *p,
		       uint32_t k, uint32_t idx)
{
	struct fit_params q = *p;
	q.k = k;
	sl->idx = idx;
	sl->f = fit_new(h->train, &q, NULL);
	if (!sl->f)
		return -1;
	fit_exclude(sl->f, h->held);
	if (fit_start(sl->f)) {
		fit_free(sl->f);
		sl->f = NULL;
		return -1;
	}
	return 0;
}

/* Score a fit that ended; frees it. Returns 0 or -1. */
static int slot_score(struct slot *sl, const struct holdout *h, uint32_t k,
		      struct select_point *pt)
{
	enum fit_state st = fit_wait(sl->f);
	struct snapshot *s = fit_snapshot(sl->f);
	int rc = -1;
	if (st != FIT_FAILED) {
		double l, auc;
		rc = holdout_score(h, &s->F, s->epsilon, &l, &auc);
		*pt = (struct select_point){ k, l, auc, s->sweep, s->seconds };
	}
	snapshot_release(s);
	fit_free(sl->f);
	sl->f = NULL;
	return rc;
}

int select_k(const struct graph *g, const struct fit_params *base, const struct select_params *sp,
	     const struct select_hooks *hooks, struct select_result *res)
{
	memset(res, 0, sizeof *res);
	if (!(sp->share > 0.0 && sp->share <= 0.5) || (!sp->nlist && (!(sp->step > 1.0) ||
	    sp->kmin < 1 || sp->kmax < sp->kmin)))
		return error("choosing k needs 1 <= kmin <= kmax, a held-out share in (0, 0.5] "
			     "and a grid step above 1");
	if (g->m < 10)
		return error("a graph of %llu edges is too small to choose k by held-out "
			     "likelihood", (unsigned long long)g->m);
	uint32_t nk = select_grid(sp, res->grid);
	res->ngrid = nk;
	res->share = sp->share;
	struct holdout h;
	if (holdout_split(&h, g, sp->share, base->seed))
		return -1;
	res->held_edges = h.nedges;
	res->held_non_edges = h.nnon;
	struct fit_params p = *base;
	if (!(p.epsilon > 0.0))
		p.epsilon = model_default_epsilon(g); /* the whole graph's, for every k */
	p.hold_at_plateau = 0;
	p.past_plateau = 0;
	uint32_t nslots = base->threads < nk ? base->threads : nk;
	if (nslots < 1)
		nslots = 1;
	p.threads = 1;
	struct select_point *pts = util_calloc(nk, sizeof *pts);
	unsigned char *done = util_calloc(nk, 1);
	struct slot *sl = util_calloc(nslots, sizeof *sl);
	struct pollfd *pfd = util_calloc(nslots, sizeof *pfd);
	int rc = pts && done && sl && pfd ? 0 : -1;
	uint32_t next = 0, consumed = 0, bi = 0, worse = 0;
	int halt = 0;
	while (rc == 0) {
		uint32_t active = 0;
		for (uint32_t i = 0; i < nslots && rc == 0; i++) {
			if (!sl[i].f && !halt && next < nk) {
				rc = slot_launch(&sl[i], &h, &p, res->grid[next], next);
				next++;
			}
			active += sl[i].f != NULL;
		}
		if (rc || active == 0)
			break;
		for (uint32_t i = 0; i < nslots; i++)
			pfd[i] = (struct pollfd){ sl[i].f ? fit_wake_fd(sl[i].f) : -1, POLLIN, 0 };
		poll(pfd, nslots, 200);
		for (uint32_t i = 0; i < nslots && rc == 0; i++) {
			if (!sl[i].f)
				continue;
			fit_drain_wake(sl[i].f);
			if (!fit_state_ended(fit_get_state(sl[i].f)))
				continue;
			uint32_t idx = sl[i].idx;
			rc = slot_score(&sl[i], &h, res->grid[idx], &pts[idx]);
			done[idx] = 1;
		}
		/* the decisions, in grid order */
		while (rc == 0 && !halt && consumed < nk && done[consumed]) {
			if (hooks && hooks->scored)
				hooks->scored(&pts[consumed], hooks->arg);
			if (consumed == 0 || pts[consumed].heldout > pts[bi].heldout) {
				bi = consumed;
				worse = 0;
			} else if (++worse >= 2 && !sp->nlist) {
				halt = 1;
			}
			consumed++;
		}
		if (consumed == nk)
			halt = 1;
		if (rc == 0 && hooks && hooks->should_stop && hooks->should_stop(hooks->arg))
			rc = -2;
		if (halt) /* fits started past the stopping point are not needed */
			for (uint32_t i = 0; i < nslots; i++)
				if (sl[i].f) {
					fit_stop(sl[i].f);
					fit_free(sl[i].f);
					sl[i].f = NULL;
				}
	}
	for (uint32_t i = 0; sl && i < nslots; i++)
		if (sl[i].f) {
			fit_stop(sl[i].f);
			fit_free(sl[i].f);
		}
	free(sl);
	free(pfd);
	free(done);
	holdout_release(&h);
	if (rc || consumed == 0) {
		free(pts);
		res->pts = NULL;
		return rc ? rc : -1;
	}
	res->best = pts[bi].k;
	res->pts = pts;
	res->npts = consumed;
	return 0;
}

/* ---- the search on a thread of its own ---- */

struct select_run {
	const struct graph *g;
	struct fit_params base;
	struct select_params sp;
	pthread_t thread;
	int joined;
	pthread_mutex_t lock;
	int wake[2];
	int stop;                                 /* under lock */
	struct select_point pts[SELECT_MAX_GRID]; /* under lock */
	uint32_t npts;
	uint32_t grid[SELECT_MAX_GRID];
	uint32_t ngrid;
	int done;
	int rc;
	struct select_result res;
};

static void run_wake(struct select_run *r)
{
	char b = 1;
	ssize_t w = write(r->wake[1], &b, 1); /* full pipe: a wake-up is pending anyway */
	(void)w;
}

static void run_scored(const struct select_point *pt, void *arg)
{
	struct select_run *r = arg;
	pthread_mutex_lock(&r->lock);
	if (r->npts < SELECT_MAX_GRID)
		r->pts[r->npts++] = *pt;
	pthread_mutex_unlock(&r->lock);
	run_wake(r);
}

static int run_should_stop(void *arg)
{
	struct select_run *r = arg;
	pthread_mutex_lock(&r->lock);
	int s = r->stop;
	pthread_mutex_unlock(&r->lock);
	return s;
}

static void *run_main(void *arg)
{
	struct select_run *r = arg;
	struct select_hooks hooks = { run_scored, run_should_stop, r };
	struct select_result res;
	int rc = select_k(r->g, &r->base, &r->sp, &hooks, &res);
	pthread_mutex_lock(&r->lock);
	r->rc = rc;
	if (rc == 0)
		r->res = res;
	r->done = 1;
	pthread_mutex_unlock(&r->lock);
	run_wake(r);
	return NULL;
}

struct select_run *select_run_start(const struct graph *g, const struct fit_params *base,
				    const struct select_params *sp)
{
	struct select_run *r = util_calloc(1, sizeof *r);
	if (!r)
		return NULL;
	r->g = g;
	r->base = *base;
	r->sp = *sp;
	r->ngrid = select_grid(sp, r->grid);
	r->joined = 1;
	if (pipe(r->wake)) {
		error("cannot make a pipe: %s", strerror(errno));
		free(r);
		return NULL;
	}
	for (int i = 0; i < 2; i++) {
		fcntl(r->wake[i], F_SETFL, fcntl(r->wake[i], F_GETFL) | O_NONBLOCK);
		fcntl(r->wake[i], F_SETFD, FD_CLOEXEC);
	}
	pthread_mutex_init(&r->lock, NULL);
	if (pthread_create(&r->thread, NULL, run_main, r)) {
		error("cannot start a thread to choose k");
		select_run_free(r);
		return NULL;
	}
	r->joined = 0;
	return r;
}

int select_run_wake_fd(const struct select_run *r)
{
	return r->wake[0];
}

void select_run_drain(struct select_run *r)
{
	char buf[64];
	while (read(r->wake[0], buf, sizeof buf) > 0)
		;
}

uint32_t select_run_points(struct select_run *r, struct select_point *pts, uint32_t *grid,
			   uint32_t *ngrid, int *done)
{
	pthread_mutex_lock(&r->lock);
	uint32_t n = r->npts;
	memcpy(pts, r->pts, n * sizeof *pts);
	memcpy(grid, r->grid, r->ngrid * sizeof *grid);
	*ngrid = r->ngrid;
	*done = r->done;
	pthread_mutex_unlock(&r->lock);
	return n;
}

void select_run_stop(struct select_run *r)
{
	pthread_mutex_lock(&r->lock);
	r->stop = 1;
	pthread_mutex_unlock(&r->lock);
}

int select_run_finish(struct select_run *r, struct select_result *res)
{
	if (!r->joined) {
		pthread_join(r->thread, NULL);
		r->joined = 1;
	}
	if (r->rc == 0) {
		*res = r->res; /* the points move to the caller */
		memset(&r->res, 0, sizeof r->res);
	}
	return r->rc;
}

void select_run_free(struct select_run *r)
{
	if (!r)
		return;
	if (!r->joined) {
		select_run_stop(r);
		pthread_join(r->thread, NULL);
	}
	select_result_release(&r->res);
	pthread_mutex_destroy(&r->lock);
	close(r->wake[0]);
	close(r->wake[1]);
	free(r);
}
