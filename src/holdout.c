/*
 * holdout: node pairs hidden from a fit and used to score it (see
 * holdout.h).
 *
 * Held-out edges are chosen by selection sampling (Knuth, TAOCP vol. 2,
 * 3.4.2, Algorithm S): one pass over the edges in order, each taken with
 * probability (still wanted) / (still to see), which gives exactly the
 * count asked for, uniformly. Non-edges are drawn uniformly from all
 * pairs by rejection; repeats are removed by sorting and drawn again.
 * Everything comes from the seed, so a split is as repeatable as a fit.
 *
 * The one thing a newcomer gets wrong: a held-out pair must leave the
 * likelihood, not become a non-edge; otherwise a model is punished for
 * predicting the very edges that were hidden from it. That is why the
 * held-out pairs travel as a graph of their own (for model.excl), and
 * why the non-edges are drawn from the whole graph, not from the
 * training one (a held-out edge is not a non-edge).
 */
#include "coterie/holdout.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/rng.h"
#include "coterie/util.h"

static int cmp_pair(const void *a, const void *b)
{
	const uint32_t *x = a, *y = b;
	int c = util_cmp_uint(x[0], y[0]);
	return c ? c : util_cmp_uint(x[1], y[1]);
}

void holdout_release(struct holdout *h)
{
	if (!h)
		return;
	graph_free(h->train);
	graph_free(h->held);
	UTIL_FREE_ALL(h->edges, h->non);
	memset(h, 0, sizeof *h);
}

int holdout_split(struct holdout *h, const struct graph *g, double share, uint64_t seed)
{
	memset(h, 0, sizeof *h);
	h->share = share;
	if (!(share > 0.0 && share <= 0.5))
		return error("the held-out share must be in (0, 0.5], not %g", share);
	uint64_t m = g->m;
	uint64_t want = (uint64_t)llround(share * (double)m);
	if (want < 1)
		want = 1;
	if (m < 2 || want >= m)
		return error("a graph of %llu edges has none to hold out", (unsigned long long)m);
	struct rng r;
	rng_init(&r, seed ^ 0x4e1d0a7ULL);
	uint32_t *keep = util_malloc(2 * (m - want), sizeof *keep);
	uint32_t *he = util_malloc(2 * want, sizeof *he);
	uint32_t *hn = util_malloc(2 * want, sizeof *hn);
	uint32_t *all = NULL;
	if (!keep || !he || !hn)
		goto fail;
	uint64_t nk = 0, ne = 0, seen = 0;
	for (uint32_t u = 0; u < g->n; u++)
		for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++) {
			uint32_t v = g->adj[i];
			if (v < u)
				continue;
			/* Algorithm S: take with probability (want - ne) / (m - seen) */
			int take = (double)(m - seen) * rng_uniform(&r) < (double)(want - ne);
			seen++;
			uint32_t *dst = take ? he + 2 * ne++ : keep + 2 * nk++;
			dst[0] = u;
			dst[1] = v;
		}
	if (ne != want || nk != m - want)
		BUG("the split took %llu edges, not %llu", (unsigned long long)ne,
		    (unsigned long long)want);
	double pairs = 0.5 * (double)g->n * ((double)g->n - 1.0);
	uint64_t wn = want;
	if ((double)wn > pairs - (double)m)
		wn = (uint64_t)(pairs - (double)m);
	uint64_t nn = 0;
	for (int round = 0; nn < wn && round < 64; round++) {
		uint64_t tries = 0;
		while (nn < wn && tries++ < 64 * wn + 1024) {
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
	all = util_malloc(2 * (ne + nn), sizeof *all);
	if (!all)
		goto fail;
	memcpy(all, he, 2 * ne * sizeof *all);
	memcpy(all + 2 * ne, hn, 2 * nn * sizeof *all);
	h->train = graph_with_edges(g, keep, nk);
	h->held = graph_from_pairs(g->n, all, ne + nn, NULL);
	free(all);
	free(keep);
	keep = NULL;
	if (!h->train || !h->held)
		goto fail;
	h->edges = he; /* already sorted: the pass above visits u < v in order */
	h->nedges = ne;
	h->non = hn;
	h->nnon = nn;
	return 0;
fail:
	free(keep);
	free(he);
	free(hn);
	graph_free(h->train);
	graph_free(h->held);
	h->train = h->held = NULL;
	return -1;
}

struct scored {
	double x;
	int pos;
};

static int cmp_scored(const void *a, const void *b)
{
	const struct scored *p = a, *q = b;
	int c = util_cmp_double(p->x, q->x);
	return c ? c : p->pos - q->pos;
}

double holdout_auc(const double *pos, uint64_t npos, const double *neg, uint64_t nneg)
{
	if (npos == 0 || nneg == 0)
		return NAN;
	struct scored *s = util_malloc(npos + nneg, sizeof *s);
	if (!s)
		return NAN;
	for (uint64_t i = 0; i < npos; i++)
		s[i] = (struct scored){ pos[i], 1 };
	for (uint64_t i = 0; i < nneg; i++)
		s[npos + i] = (struct scored){ neg[i], 0 };
	qsort(s, npos + nneg, sizeof *s, cmp_scored);
	/* walk groups of equal scores: each positive in a group beats every
	 * negative below the group and ties with the group's negatives */
	double wins = 0.0, below = 0.0;
	for (uint64_t i = 0; i < npos + nneg;) {
		uint64_t j = i;
		double a = 0.0, b = 0.0;
		while (j < npos + nneg && s[j].x == s[i].x) {
			if (s[j].pos)
				a += 1.0;
			else
				b += 1.0;
			j++;
		}
		wins += a * below + 0.5 * a * b;
		below += b;
		i = j;
	}
	free(s);
	return wins / ((double)npos * (double)nneg);
}

static double row_dot(const struct fcsr *F, uint32_t u, uint32_t v)
{
	return model_dot(F->e + F->off[u], (uint32_t)(F->off[u + 1] - F->off[u]), F->e + F->off[v],
			 (uint32_t)(F->off[v + 1] - F->off[v]));
}

int holdout_score(const struct holdout *h, const struct fcsr *F, double epsilon, double *loglik,
		  double *auc)
{
	double *xe = util_malloc(h->nedges ? h->nedges : 1, sizeof *xe);
	double *xn = util_malloc(h->nnon ? h->nnon : 1, sizeof *xn);
	if (!xe || !xn) {
		free(xe);
		free(xn);
		return -1;
	}
	double qeps = model_qeps(epsilon), l = 0.0;
	for (uint64_t i = 0; i < h->nedges; i++) {
		xe[i] = row_dot(F, h->edges[2 * i], h->edges[2 * i + 1]);
		l += model_log1mexp(xe[i] + qeps);
	}
	for (uint64_t i = 0; i < h->nnon; i++) {
		xn[i] = row_dot(F, h->non[2 * i], h->non[2 * i + 1]);
		l -= xn[i] + qeps;
	}
	*loglik = l;
	*auc = holdout_auc(xe, h->nedges, xn, h->nnon);
	free(xe);
	free(xn);
	return 0;
}
