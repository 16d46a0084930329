/*
 * select: choose k by held-out likelihood (see select.h).
 *
 * The held-out non-edges are drawn uniformly from all pairs that are not
 * edges, by rejection; duplicates are removed by sorting and drawn again,
 * so exactly as many non-edges as edges are held out (fewer only when the
 * graph is nearly complete). Everything is drawn from the fit's seed, so
 * the choice is as repeatable as the fit.
 *
 * The one thing a newcomer gets wrong: a held-out pair must leave the
 * likelihood, not become a non-edge; otherwise larger k is punished for
 * predicting the very edges that were hidden from it.
 */
#include "coterie/select.h"

#include <math.h>
#include <poll.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/fit.h"
#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/rng.h"
#include "coterie/util.h"

void select_params_default(struct select_params *sp, const struct graph *g)
{
	sp->kmin = 2;
	sp->kmax = g->n / 4 < 500 ? g->n / 4 : 500;
	if (sp->kmax < sp->kmin)
		sp->kmax = sp->kmin;
	sp->share = 0.1;
	sp->step = 1.25;
}

uint32_t select_grid(const struct select_params *sp, uint32_t *ks)
{
	uint32_t n = 0;
	double k = sp->kmin;
	while (n < 64 && (uint32_t)llround(k) <= sp->kmax) {
		uint32_t ki = (uint32_t)llround(k);
		if (n == 0 || ki > ks[n - 1])
			ks[n++] = ki;
		k *= sp->step;
	}
	if (n < 64 && (n == 0 || ks[n - 1] < sp->kmax))
		ks[n++] = sp->kmax;
	return n;
}

static int cmp_pair(const void *a, const void *b)
{
	const uint32_t *x = a, *y = b;
	if (x[0] != y[0])
		return x[0] < y[0] ? -1 : 1;
	return (x[1] > y[1]) - (x[1] < y[1]);
}

/* Split g into a training graph and held-out pairs. */
static int split(const struct graph *g, double share, uint64_t seed, struct graph **train,
		 struct graph **held, uint32_t **held_edges, uint64_t *nhe, uint32_t **held_non,
		 uint64_t *nhn)
{
	struct rng r;
	rng_init(&r, seed ^ 0x4e1d0a7ULL);
	uint64_t m = g->m;
	uint32_t *keep = util_malloc(2 * (m ? m : 1), sizeof *keep);
	uint32_t *he = util_malloc(2 * (m ? m : 1), sizeof *he);
	uint32_t *hn = util_malloc(2 * (m ? m : 1), sizeof *hn);
	uint32_t *all = NULL;
	if (!keep || !he || !hn)
		goto fail;
	uint64_t nk = 0, ne = 0;
	for (uint32_t u = 0; u < g->n; u++)
		for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++) {
			uint32_t v = g->adj[i];
			if (v < u)
				continue;
			uint32_t *dst = rng_uniform(&r) < share ? he + 2 * ne++ : keep + 2 * nk++;
			dst[0] = u;
			dst[1] = v;
		}
	double pairs = 0.5 * (double)g->n * ((double)g->n - 1.0);
	uint64_t want = ne;
	if ((double)want > pairs - (double)m)
		want = (uint64_t)(pairs - (double)m);
	uint64_t nn = 0;
	for (int round = 0; nn < want && round < 64; round++) {
		while (nn < want) {
			uint32_t u = (uint32_t)rng_below(&r, g->n), v = (uint32_t)rng_below(&r, g->n);
			if (u == v || graph_has_edge(g, u, v))
				continue;
			hn[2 * nn] = u < v ? u : v;
			hn[2 * nn + 1] = u < v ? v : u;
			nn++;
		}
		qsort(hn, nn, 2 * sizeof *hn, cmp_pair);
		uint64_t o = 0;
		for (uint64_t i = 0; i < nn; i++)
			if (o == 0 || cmp_pair(hn + 2 * i, hn + 2 * (o - 1)) != 0) {
				hn[2 * o] = hn[2 * i];
				hn[2 * o + 1] = hn[2 * i + 1];
				o++;
			}
		nn = o;
	}
	all = util_malloc(2 * (ne + nn ? ne + nn : 1), sizeof *all);
	if (!all)
		goto fail;
	memcpy(all, he, 2 * ne * sizeof *all);
	memcpy(all + 2 * ne, hn, 2 * nn * sizeof *all);
	*train = graph_from_pairs(g->n, keep, nk, NULL);
	*held = graph_from_pairs(g->n, all, ne + nn, NULL);
	free(all);
	free(keep);
	if (!*train || !*held) {
		graph_free(*train);
		graph_free(*held);
		free(he);
		free(hn);
		return -1;
	}
	*held_edges = he;
	*nhe = ne;
	*held_non = hn;
	*nhn = nn;
	return 0;
fail:
	free(keep);
	free(he);
	free(hn);
	free(all);
	return -1;
}

static double row_dot(const struct fcsr *F, uint32_t u, uint32_t v)
{
	return model_dot(F->e + F->off[u], (uint32_t)(F->off[u + 1] - F->off[u]), F->e + F->off[v],
			 (uint32_t)(F->off[v + 1] - F->off[v]));
}

/* Fit k on the training graph; score the held-out pairs. Returns 0, -1
 * on error, -2 when stopped. */
static int score(const struct graph *train, const struct graph *held, const struct fit_params *base,
		 uint32_t k, const uint32_t *he, uint64_t nhe, const uint32_t *hn, uint64_t nhn,
		 const struct select_hooks *hooks, struct select_point *pt)
{
	struct fit_params p = *base;
	p.k = k;
	p.hold_at_plateau = 0;
	p.past_plateau = 0;
	struct fit *f = fit_new(train, &p, NULL);
	if (!f)
		return -1;
	fit_exclude(f, held);
	if (fit_start(f)) {
		fit_free(f);
		return -1;
	}
	int stopped = 0;
	while (!fit_state_ended(fit_get_state(f))) {
		struct pollfd pfd = { fit_wake_fd(f), POLLIN, 0 };
		poll(&pfd, 1, 200);
		fit_drain_wake(f);
		if (!stopped && hooks && hooks->should_stop && hooks->should_stop(hooks->arg)) {
			fit_stop(f);
			stopped = 1;
		}
	}
	enum fit_state st = fit_wait(f);
	struct snapshot *s = fit_snapshot(f);
	int rc = 0;
	if (stopped) {
		rc = -2;
	} else if (st == FIT_FAILED) {
		rc = -1;
	} else {
		double qeps = -log1p(-s->epsilon), l = 0.0;
		for (uint64_t i = 0; i < nhe; i++)
			l += model_log1mexp(row_dot(&s->F, he[2 * i], he[2 * i + 1]) + qeps);
		for (uint64_t i = 0; i < nhn; i++)
			l -= row_dot(&s->F, hn[2 * i], hn[2 * i + 1]) + qeps;
		*pt = (struct select_point){ k, l, s->sweep, s->seconds };
	}
	snapshot_release(s);
	fit_free(f);
	return rc;
}

int select_k(const struct graph *g, const struct fit_params *base, const struct select_params *sp,
	     const struct select_hooks *hooks, uint32_t *best, struct select_point **pts,
	     uint32_t *npts)
{
	*pts = NULL;
	*npts = 0;
	if (!(sp->share > 0.0 && sp->share <= 0.5) || !(sp->step > 1.0) || sp->kmin < 1 ||
	    sp->kmax < sp->kmin)
		return error("choosing k needs 1 <= kmin <= kmax, a held-out share in (0, 0.5] "
			     "and a grid step above 1");
	if (g->m < 10)
		return error("a graph of %llu edges is too small to choose k by held-out "
			     "likelihood", (unsigned long long)g->m);
	uint32_t ks[64];
	uint32_t nk = select_grid(sp, ks);
	struct graph *train = NULL, *held = NULL;
	uint32_t *he = NULL, *hn = NULL;
	uint64_t nhe = 0, nhn = 0;
	if (split(g, sp->share, base->seed, &train, &held, &he, &nhe, &hn, &nhn))
		return -1;
	struct fit_params p = *base;
	if (!(p.epsilon > 0.0))
		p.epsilon = model_default_epsilon(g); /* the whole graph's, for every k */
	struct select_point *out = util_calloc(nk, sizeof *out);
	int rc = out ? 0 : -1;
	uint32_t n = 0, bi = 0, worse = 0;
	for (uint32_t i = 0; rc == 0 && i < nk; i++) {
		rc = score(train, held, &p, ks[i], he, nhe, hn, nhn, hooks, &out[n]);
		if (rc)
			break;
		if (hooks && hooks->scored)
			hooks->scored(&out[n], hooks->arg);
		if (n == 0 || out[n].heldout > out[bi].heldout) {
			bi = n;
			worse = 0;
		} else if (++worse >= 2) {
			n++;
			break;
		}
		n++;
	}
	graph_free(train);
	graph_free(held);
	free(he);
	free(hn);
	if (rc) {
		free(out);
		return rc;
	}
	*best = out[bi].k;
	*pts = out;
	*npts = n;
	return 0;
}
