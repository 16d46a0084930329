/*
 * select_run: the search for k (select_k(), select.c) on a thread of its
 * own, for a reader that must not block (the explorer's k screen).
 *
 * The thread runs select_k() with hooks that copy each point under the
 * lock and write a byte to a non-blocking pipe; the reader poll()s the
 * pipe and copies the points. The grid the reader sees grows as points
 * arrive: with the k an extension adds, and in a search by the curve's
 * shape with every k tried (it has no grid known in advance). The one
 * thing a newcomer gets wrong: select_run_free() must stop the search
 * and join its thread before the graph it borrows is freed.
 */
#include "coterie/select.h"

#include <errno.h>
#include <fcntl.h>
#include <pthread.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "coterie/fit.h"
#include "coterie/graph.h"
#include "coterie/util.h"

struct select_run {
	const struct graph *g;
	struct fit_params base;
	struct select_params sp;
	pthread_t thread;
	int joined;
	pthread_mutex_t lock;
	int wake[2];
	int shape;                                /* the k scored are the grid */
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
	if ((pt->added || r->shape) && r->ngrid < SELECT_MAX_GRID) { /* the grid grows, sorted */
		uint32_t i = r->ngrid;
		for (; i > 0 && r->grid[i - 1] > pt->k; i--)
			r->grid[i] = r->grid[i - 1];
		r->grid[i] = pt->k;
		r->ngrid++;
	}
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
	struct select_hooks hooks = { run_scored, run_should_stop, r, NULL };
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
	r->shape = select_by_shape(g->m, sp);
	r->ngrid = r->shape ? 0 : select_grid(sp, r->grid);
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

int select_run_by_shape(const struct select_run *r)
{
	return r->shape;
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
