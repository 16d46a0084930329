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

static void stop_all(struct slot *sl, uint32_t nslots)
{
	for (uint32_t i = 0; sl && i < nslots; i++)
		if (sl[i].f) {
			fit_stop(sl[i].f);
			fit_free(sl[i].f);
			sl[i].f = NULL;
		}
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

int stability_fit_runs(const struct graph *g, const struct fit_params *p,
		       const struct holdout *held, uint32_t first, uint32_t runs,
		       const struct stability_hooks *hooks, struct snapshot **snap)
{
	if (first >= runs)
		return 0;
	uint32_t todo = runs - first, threads = p->threads ? p->threads : 1;
	uint32_t nslots = todo < threads ? todo : threads;
	struct slot *sl = util_calloc(nslots, sizeof *sl);
	struct pollfd *pfd = util_calloc(nslots, sizeof *pfd);
	int rc = sl && pfd ? 0 : -1;
	uint32_t next = first;
	for (uint32_t r = first; r < runs; r++)
		snap[r] = NULL;
	while (rc == 0) {
		uint32_t active = 0;
		for (uint32_t i = 0; i < nslots && rc == 0; i++) {
			if (!sl[i].f && next < runs) {
				/* fewer runs than threads: slot i gets its share */
				unsigned t = todo < threads ? threads / nslots +
					     (i < threads % nslots) : 1;
				rc = slot_launch(&sl[i], g, p, held, next++, t);
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
			if (fit_state_ended(fit_get_state(sl[i].f)))
				rc = slot_take(&sl[i], p, hooks, snap);
		}
		if (rc == 0 && hooks && hooks->should_stop && hooks->should_stop(hooks->arg))
			rc = -2;
	}
	stop_all(sl, nslots);
	UTIL_FREE_ALL(sl, pfd);
	if (rc)
		for (uint32_t r = first; r < runs; r++) {
			snapshot_release(snap[r]);
			snap[r] = NULL;
		}
	return rc;
}
