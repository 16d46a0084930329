/*
 * tui/pager: fetches pages of the weak-edge and missing-link lists on a
 * worker thread, so that no key press waits for them.
 *
 * Those two lists are the explorer's only costly questions: a page of
 * missing links ranks every pair of up to INSPECT_MISSING_POOL members
 * (millions of pairs), and a page deep in a list keeps a heap of
 * offset + limit entries. The UI thread submits a request and goes on;
 * the worker answers it and writes a byte to a pipe the UI polls. A
 * newer request replaces one not yet started, and a result whose id is
 * not the newest is dropped by the UI, so a burst of keys costs at most
 * one stale computation.
 *
 * Ownership: a request carries a snapshot reference taken by the UI with
 * fit_snapshot(); the worker releases it. The graph is borrowed and
 * immutable. The worker never touches the view or curses; everything it
 * shares with the UI is in struct pager, under its lock.
 */
#include "pager.h"

#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "coterie/agm.h"
#include "coterie/fit.h"
#include "coterie/graph.h"
#include "coterie/inspect.h"
#include "coterie/proc.h"
#include "coterie/util.h"

/* Is u a member (agm_is_member()) of column id in snapshot s of a fit of g? */
static int member_of(const struct graph *g, const struct snapshot *s, uint32_t u, uint32_t id)
{
	const struct fcsr *F = &s->F;
	if (u >= F->n || u >= g->n)
		return 0;
	for (uint64_t i = F->off[u]; i < F->off[u + 1]; i++)
		if (F->e[i].c == id)
			return agm_member_at(g, F, u, i, s->delta, AGM_MIN_LINKS);
	return 0;
}

void pager_answer(const struct page_req *rq, struct page_res *res)
{
	*res = (struct page_res){ .id = rq->id, .comm_id = rq->comm_id, .mode = rq->mode,
				  .off = rq->off, .gen = rq->gen };
	const struct snapshot *s = rq->snap;
	int64_t idx = inspect_find_community(&s->agm, rq->comm_id);
	if (idx < 0)
		return; /* emptied since: an empty list */
	struct inspect_pair *pairs = NULL;
	size_t n = 0, total = 0;
	int rc;
	if (rq->mode == EDGES_WEAK)
		rc = inspect_weak_edges(rq->g, &s->F, &s->agm, (uint32_t)idx, rq->off, rq->limit,
					&pairs, &n, &total);
	else
		rc = inspect_missing_links(rq->g, &s->F, &s->agm, (uint32_t)idx, rq->off,
					   rq->limit, &pairs, &n, &total);
	if (rc) {
		res->failed = 1;
		return;
	}
	res->rows = util_calloc(n ? n : 1, sizeof *res->rows);
	if (!res->rows) {
		free(pairs);
		res->failed = 1;
		return;
	}
	for (size_t i = 0; i < n; i++) {
		res->rows[i].u = pairs[i].u;
		res->rows[i].v = pairs[i].v;
		res->rows[i].prob = pairs[i].prob;
		res->rows[i].outside = rq->mode == EDGES_WEAK && !member_of(rq->g, s, pairs[i].v,
									       rq->comm_id);
	}
	free(pairs);
	res->n = n;
	res->total = total;
}

static void *pager_main(void *arg)
{
	struct pager *p = arg;
	for (;;) {
		pthread_mutex_lock(&p->lock);
		while (!p->quit && !p->has_req)
			pthread_cond_wait(&p->cond, &p->lock);
		if (p->quit) {
			pthread_mutex_unlock(&p->lock);
			break;
		}
		struct page_req rq = p->req;
		p->has_req = 0;
		pthread_mutex_unlock(&p->lock);

		struct page_res res;
		pager_answer(&rq, &res);
		snapshot_release(rq.snap);

		pthread_mutex_lock(&p->lock);
		if (p->has_res)
			free(p->res.rows); /* never taken: superseded */
		p->res = res;
		p->has_res = 1;
		pthread_mutex_unlock(&p->lock);
		char b = 1;
		ssize_t w = write(p->fd[1], &b, 1); /* full pipe: a wake-up is pending anyway */
		(void)w;
	}
	return NULL;
}

int pager_start(struct pager *p)
{
	memset(p, 0, sizeof *p);
	p->fd[0] = p->fd[1] = -1;
	if (proc_pipe(p->fd))
		return -1;
	pthread_mutex_init(&p->lock, NULL);
	pthread_cond_init(&p->cond, NULL);
	int rc = proc_thread_start(&p->thread, pager_main, p); /* signals stay with the UI */
	if (rc) {
		pthread_mutex_destroy(&p->lock);
		pthread_cond_destroy(&p->cond);
		close(p->fd[0]);
		close(p->fd[1]);
		p->fd[0] = p->fd[1] = -1;
		return error("cannot start the page thread: %s", strerror(rc));
	}
	p->running = 1;
	return 0;
}

void pager_stop(struct pager *p)
{
	if (!p->running)
		return;
	pthread_mutex_lock(&p->lock);
	p->quit = 1;
	pthread_cond_broadcast(&p->cond);
	pthread_mutex_unlock(&p->lock);
	pthread_join(p->thread, NULL);
	if (p->has_req)
		snapshot_release(p->req.snap);
	if (p->has_res)
		free(p->res.rows);
	p->has_req = p->has_res = 0;
	pthread_mutex_destroy(&p->lock);
	pthread_cond_destroy(&p->cond);
	for (int i = 0; i < 2; i++)
		if (p->fd[i] >= 0)
			close(p->fd[i]);
	p->fd[0] = p->fd[1] = -1;
	p->running = 0;
}

void pager_submit(struct pager *p, const struct page_req *rq)
{
	pthread_mutex_lock(&p->lock);
	if (p->has_req)
		snapshot_release(p->req.snap); /* replaced before it started */
	p->req = *rq;
	p->has_req = 1;
	pthread_cond_signal(&p->cond);
	pthread_mutex_unlock(&p->lock);
}

int pager_take(struct pager *p, struct page_res *out)
{
	char buf[64];
	while (read(p->fd[0], buf, sizeof buf) > 0)
		;
	pthread_mutex_lock(&p->lock);
	int have = p->has_res;
	if (have) {
		*out = p->res;
		p->has_res = 0;
	}
	pthread_mutex_unlock(&p->lock);
	return have;
}

int pager_fd(const struct pager *p)
{
	return p->fd[0];
}
