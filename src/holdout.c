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
 *
 * Every model reads the split the same way. A weighted graph's training
 * graph keeps the weights of its edges and the held-out edges keep
 * theirs (h->wedges) for the Poisson score. A two-sided graph (directed,
 * two-mode: graph_directed.c) draws its non-edges among the pairs the
 * model has, one sending and one receiving row, never a node's own pair;
 * its training graph keeps the sides, and for a directed graph the held
 * graph also holds the own pairs (F_u, H_u), since fit_exclude() takes
 * the place of the fit's own list of them (fit.c).
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
	UTIL_FREE_ALL(h->edges, h->non, h->wedges);
	memset(h, 0, sizeof *h);
}

/* A pair the model has that is not an edge, drawn uniformly: any two
 * nodes of a one-mode graph; a sending and a receiving row of a
 * two-sided one, not a node's own pair. Returns 0 when the draw is
 * rejected (the caller draws again), else 1 with the pair in p (p[0] <
 * p[1]). */
static int draw_non_edge(const struct graph *g, struct rng *r, uint32_t *p)
{
	uint32_t u, v;
	if (g->nsend) {
		u = (uint32_t)rng_below(r, g->nsend);
		v = g->nsend + (uint32_t)rng_below(r, g->n - g->nsend);
		if (g->paired && v == g->nsend + u)
			return 0;
	} else {
		u = (uint32_t)rng_below(r, g->n);
		v = (uint32_t)rng_below(r, g->n);
		if (u == v)
			return 0;
	}
	if (graph_has_edge(g, u, v))
		return 0;
	p[0] = u < v ? u : v;
	p[1] = u < v ? v : u;
	return 1;
}

/* The pairs of the model's likelihood (edges and non-edges). */
static double model_pairs(const struct graph *g)
{
	if (g->nsend)
		return (double)g->nsend * (double)(g->n - g->nsend) -
		       (g->paired ? (double)g->nsend : 0.0);
	return 0.5 * (double)g->n * ((double)g->n - 1.0);
}

/* Draw up to want non-edges into hn, distinct and sorted; the count. */
static uint64_t draw_non_edges(const struct graph *g, struct rng *r, uint64_t want,
			       uint32_t *hn)
{
	uint64_t nn = 0;
	for (int round = 0; nn < want && round < 64; round++) {
		uint64_t tries = 0;
		while (nn < want && tries++ < 64 * want + 1024)
			nn += (uint64_t)draw_non_edge(g, r, hn + 2 * nn);
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
	return nn;
}

/* The training graph: g's nodes, sides and names with the kept edges
 * (nk pairs) and, for a weighted g, their weights wk. NULL on failure. */
static struct graph *train_graph(const struct graph *g, const uint32_t *keep, const double *wk,
				 uint64_t nk)
{
	struct graph *t = graph_with_edges(g, keep, nk);
	if (!t)
		return NULL;
	t->nsend = g->nsend;
	t->paired = g->paired;
	if (wk && graph_set_weights(t, keep, wk, nk, "(training edges)")) {
		graph_free(t);
		return NULL;
	}
	return t;
}

/* The held graph: the held-out pairs (ne edges he, nn non-edges hn) and,
 * for a directed g, every node's own pair. NULL on failure. */
static struct graph *held_graph(const struct graph *g, const uint32_t *he, uint64_t ne,
				const uint32_t *hn, uint64_t nn)
{
	uint64_t own = g->paired ? g->nsend : 0;
	uint32_t *all = util_malloc(2 * (ne + nn + own) + 1, sizeof *all);
	if (!all)
		return NULL;
	memcpy(all, he, 2 * ne * sizeof *all);
	memcpy(all + 2 * ne, hn, 2 * nn * sizeof *all);
	for (uint64_t i = 0; i < own; i++) {
		all[2 * (ne + nn + i)] = (uint32_t)i;
		all[2 * (ne + nn + i) + 1] = g->nsend + (uint32_t)i;
	}
	struct graph *x = graph_with_edges(g, all, ne + nn + own);
	free(all);
	return x;
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
	double *wk = g->wt ? util_malloc(m - want, sizeof *wk) : NULL;
	double *wh = g->wt ? util_malloc(want, sizeof *wh) : NULL;
	if (!keep || !he || !hn || (g->wt && (!wk || !wh)))
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
			if (g->wt)
				*(take ? wh + ne : wk + nk) = g->wt[i];
			uint32_t *dst = take ? he + 2 * ne++ : keep + 2 * nk++;
			dst[0] = u;
			dst[1] = v;
		}
	if (ne != want || nk != m - want)
		BUG("the split took %llu edges, not %llu", (unsigned long long)ne,
		    (unsigned long long)want);
	double pairs = model_pairs(g);
	uint64_t wn = want;
	if ((double)wn > pairs - (double)m)
		wn = (uint64_t)(pairs - (double)m);
	uint64_t nn = draw_non_edges(g, &r, wn, hn);
	h->train = train_graph(g, keep, wk, nk);
	h->held = held_graph(g, he, ne, hn, nn);
	UTIL_FREE_ALL(keep, wk);
	keep = NULL;
	wk = NULL;
	if (!h->train || !h->held)
		goto fail;
	h->edges = he; /* already sorted: the pass above visits u < v in order */
	h->wedges = wh;
	h->nedges = ne;
	h->non = hn;
	h->nnon = nn;
	return 0;
fail:
	UTIL_FREE_ALL(keep, he, hn, wk, wh);
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

double holdout_pair_loglik(enum model_kind kind, double x, double qeps, double w)
{
	if (model_kind_weighted(kind))
		return w > 0.0 ? w * log(x + qeps) - lgamma(w + 1.0) - (x + qeps) : -(x + qeps);
	return w > 0.0 ? model_log1mexp(x + qeps) : -(x + qeps);
}

int holdout_score(const struct holdout *h, const struct fcsr *F, double epsilon,
		  enum model_kind kind, double *loglik, double *auc)
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
		l += holdout_pair_loglik(kind, xe[i], qeps, h->wedges ? h->wedges[i] : 1.0);
	}
	for (uint64_t i = 0; i < h->nnon; i++) {
		xn[i] = row_dot(F, h->non[2 * i], h->non[2 * i + 1]);
		l += holdout_pair_loglik(kind, xn[i], qeps, 0.0);
	}
	*loglik = l;
	*auc = holdout_auc(xe, h->nedges, xn, h->nnon);
	free(xe);
	free(xn);
	return 0;
}
