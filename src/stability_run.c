/*
 * stability_run: the repeated fits of fit --repeats, several at once.
 *
 * Like select.c's search, it keeps up to `threads` fits running and
 * poll()s their wake-up pipes; a fit that ends hands over its final
 * snapshot and the next run starts in its slot. With fewer runs than
 * threads, the threads are shared among the runs instead (a fit's result
 * does not depend on its thread count: the sweep engine applies rows in
 * permutation order), so the answer is the same on any machine.
 *
 * Run r is seeded p->seed + r, so any run can be made again alone with
 * `coterie fit --seed S+r` at the same k and epsilon.
 *
 * The one thing a newcomer would get wrong: every run must see the same
 * graph and the same held-out pairs as the kept one, else their covers
 * are of different problems and the scores mean nothing.
 */
#include "coterie/stability.h"

#include <poll.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/graph.h"
#include "coterie/holdout.h"
#include "coterie/util.h"

struct slot {
	struct fit *f;
	uint32_t run;
};

static int slot_launch(struct slot *sl, const struct graph *g, const struct fit_params *p,
		       const struct holdout *held, uint32_t run, unsigned threads)
{
	struct fit_params q = *p;
	q.seed = p->seed + run;
	q.threads = threads;
	q.hold_at_plateau = 0;
	sl->run = run;
	sl->f = fit_new(held ? held->train : g, &q, NULL);
	if (!sl->f)
		return -1;
	if (held)
		fit_exclude(sl->f, held->held);
	if (fit_start(sl->f)) {
		fit_free(sl->f);
		sl->f = NULL;
		return -1;
	}
	return 0;
}

/* Stop the fit of a slot, if it has one, and let it go. */
static void slot_drop(struct slot *sl)
{
	if (!sl->f)
		return;
	fit_stop(sl->f); /* fit_free() joins the thread */
	fit_free(sl->f);
	sl->f = NULL;
}

/* A slot's fit has ended: its snapshot into snap[run]; frees the fit. */
static int slot_take(struct slot *sl, const struct fit_params *p,
		     const struct stability_hooks *hooks, struct snapshot **snap)
{
	enum fit_state st = fit_wait(sl->f);
	struct snapshot *s = fit_snapshot(sl->f);
	fit_free(sl->f);
	sl->f = NULL;
	if (st == FIT_FAILED || s->ntrace == 0) {
		snapshot_release(s);
		return error("the fit from seed %llu failed",
			     (unsigned long long)(p->seed + sl->run));
	}
	snap[sl->run] = s;
	if (hooks && hooks->ended)
		hooks->ended(sl->run, p->seed + sl->run, s->trace[s->ntrace - 1].loglik, hooks->arg);
	return 0;
}

/* Wait (up to 200 ms) until a fit of sl has ended: its slot, or nslots
 * when none has yet. */
static uint32_t next_ended(struct slot *sl, uint32_t nslots, struct pollfd *pfd)
{
	uint32_t np = 0;
	for (uint32_t i = 0; i < nslots; i++)
		if (sl[i].f)
			pfd[np++] = (struct pollfd){ fit_wake_fd(sl[i].f), POLLIN, 0 };
	if (np)
		poll(pfd, np, 200);
	uint32_t ended = nslots;
	for (uint32_t i = nslots; i-- > 0;) {
		if (!sl[i].f)
			continue;
		fit_drain_wake(sl[i].f);
		if (fit_state_ended(fit_get_state(sl[i].f)))
			ended = i;
	}
	return ended;
}

int stability_fit_runs(const struct graph *g, const struct fit_params *p,
		       const struct holdout *held, uint32_t first, uint32_t runs,
		       const struct stability_hooks *hooks, struct snapshot **snap)
{
	if (first >= runs)
		return 0;
	uint32_t todo = runs - first, threads = p->threads ? p->threads : 1;
	uint32_t nslots = todo < threads ? todo : threads, taken = 0, next = first;
	struct slot *sl = util_calloc(nslots, sizeof *sl);
	struct pollfd *pfd = util_calloc(nslots, sizeof *pfd);
	int rc = sl && pfd ? 0 : -1;
	for (uint32_t r = first; r < runs; r++)
		snap[r] = NULL;
	/* fewer runs than threads: each slot gets its share of them */
	for (uint32_t i = 0; i < nslots && rc == 0; i++)
		rc = slot_launch(&sl[i], g, p, held, next++,
				 todo < threads ? threads / nslots + (i < threads % nslots) : 1);
	while (rc == 0 && taken < todo) {
		uint32_t i = next_ended(sl, nslots, pfd);
		if (i < nslots) {
			rc = slot_take(&sl[i], p, hooks, snap);
			taken++;
			if (rc == 0 && next < runs)
				rc = slot_launch(&sl[i], g, p, held, next++, 1);
		}
		if (rc == 0 && hooks && hooks->should_stop && hooks->should_stop(hooks->arg))
			rc = -2;
	}
	for (uint32_t i = 0; sl && i < nslots; i++)
		slot_drop(&sl[i]);
	UTIL_FREE_ALL(sl, pfd);
	if (rc)
		for (uint32_t r = first; r < runs; r++) {
			snapshot_release(snap[r]);
			snap[r] = NULL;
		}
	return rc;
}
