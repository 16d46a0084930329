/*
 * seed_clusters: starting communities from a partition found by label
 * propagation (U. N. Raghavan, R. Albert and S. Kumara, "Near linear time
 * algorithm to detect community structures in large-scale networks",
 * Phys. Rev. E 76, 036106, 2007).
 *
 * Label propagation: every node starts with a label of its own; in
 * random order each node takes the label most of its neighbours carry
 * (the sum of the edge weights on a weighted graph), keeping its own
 * when it is among the most carried, else drawing one of the tied at
 * random. A pass that changes fewer than one node in a thousand ends it.
 * The passes are asynchronous (a node sees the labels its earlier
 * neighbours took in the same pass), which keeps two-mode graphs from
 * the oscillation of the synchronous form. One thread, one rng: the
 * labels depend only on the graph and the seed.
 *
 * The clusters become columns: each cluster C of s >= 2 nodes and e
 * internal edges among N = s (s - 1) / 2 pairs, at density p = e / N, is
 * (on a graph of two kinds, a senders and s - a receivers: N = a (s - a)),
 * scored by the log-likelihood ratio of a block at its own density
 * against the background epsilon,
 *     G = e ln(p / eps) + (N - e) ln((1 - p) / (1 - eps)),
 * and the k clusters of the largest G (G > 0) are taken, the best first.
 * Every member of a cluster gets strength sqrt(max(-ln(1 - p) - qeps,
 * 0)) (floored) in its column: under the AGM a block alone at density p
 * needs 1 - exp(-(F^2 + qeps)) = p. When the clusters are fewer than k,
 * the other columns are seeded by ego-nets as seed_model() does.
 */
#include "coterie/seed.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/rng.h"
#include "coterie/util.h"

#define LP_MAX_PASSES 30u
#define LP_STILL 1000u    /* a pass changing fewer than n / LP_STILL nodes is the last */
#define CLUSTER_P_MAX 0.9 /* densities above are taken as this (a single edge has p = 1) */
#define CLUSTER_F_MIN 0.05 /* the least starting strength */

int seed_propagate(const struct graph *g, uint64_t seed, uint32_t variant, uint32_t *label,
		   uint32_t *passes)
{
	uint32_t n = g->n;
	uint32_t *order = util_malloc(n ? n : 1, sizeof *order);
	double *cnt = util_calloc(n ? n : 1, sizeof *cnt);
	uint32_t *touched = NULL, *tied = NULL;
	uint32_t maxdeg = 0;
	for (uint32_t u = 0; u < n; u++)
		if (graph_degree(g, u) > maxdeg)
			maxdeg = graph_degree(g, u);
	touched = util_malloc(maxdeg ? maxdeg : 1, sizeof *touched);
	tied = util_malloc(maxdeg ? maxdeg : 1, sizeof *tied);
	int rc = -1;
	if (!order || !cnt || !touched || !tied)
		goto out;
	struct rng r;
	rng_init(&r, seed ^ 0x1abe1abe1abeULL ^ ((uint64_t)variant << 40));
	for (uint32_t u = 0; u < n; u++) {
		label[u] = u;
		order[u] = u;
	}
	uint32_t pass = 0;
	while (pass < LP_MAX_PASSES) {
		pass++;
		rng_shuffle_u32(&r, order, n);
		uint32_t changed = 0;
		for (uint32_t i = 0; i < n; i++) {
			uint32_t u = order[i];
			uint32_t nt = 0;
			for (uint64_t j = g->off[u]; j < g->off[u + 1]; j++) {
				uint32_t l = label[g->adj[j]];
				if (cnt[l] == 0.0)
					touched[nt++] = l;
				cnt[l] += g->wt ? g->wt[j] : 1.0;
			}
			if (nt == 0)
				continue;
			double best = 0.0;
			for (uint32_t t = 0; t < nt; t++)
				if (cnt[touched[t]] > best)
					best = cnt[touched[t]];
			uint32_t ntied = 0;
			for (uint32_t t = 0; t < nt; t++)
				if (cnt[touched[t]] == best)
					tied[ntied++] = touched[t];
			if (cnt[label[u]] != best) {
				label[u] = tied[ntied == 1 ? 0 : rng_below(&r, ntied)];
				changed++;
			}
			for (uint32_t t = 0; t < nt; t++)
				cnt[touched[t]] = 0.0;
		}
		if ((uint64_t)changed * LP_STILL < n)
			break;
	}
	if (passes)
		*passes = pass;
	rc = 0;
out:
	UTIL_FREE_ALL(order, cnt, touched, tied);
	return rc;
}

struct cluster {
	double gain, f;
	uint32_t label;
};

static int cluster_cmp(const void *a, const void *b)
{
	const struct cluster *x = a, *y = b;
	if (x->gain != y->gain)
		return x->gain > y->gain ? -1 : 1;
	return util_cmp_uint(x->label, y->label);
}

/* ln(a / b) weighted by w, 0 when w is 0 */
static double wlog(double w, double a, double b)
{
	return w > 0.0 ? w * log(a / b) : 0.0;
}

int seed_from_clusters(const struct graph *g, struct model *m, uint64_t seed, uint32_t variant,
		       struct seed_report *rep)
{
	uint32_t n = g->n, k = m->k;
	int rc = -1;
	uint32_t *label = util_malloc(n ? n : 1, sizeof *label);
	uint32_t *size = util_calloc(n ? n : 1, sizeof *size);
	uint64_t *inside = util_calloc(n ? n : 1, sizeof *inside);
	uint32_t *first = g->nsend ? util_calloc(n, sizeof *first) : NULL;
	struct cluster *cl = NULL;
	struct model rest;
	int have_rest = 0;
	if (!label || !size || !inside || (g->nsend && !first))
		goto out;
	uint32_t passes;
	if (seed_propagate(g, seed, variant, label, &passes))
		goto out;
	/* a graph of two kinds (two-mode: only pairs across are terms)
	 * counts the first kind's members apart: pairs = a * (s - a) */
	int sided = g->nsend > 0;
	for (uint32_t u = 0; u < n; u++) {
		size[label[u]]++;
		if (sided && u < g->nsend)
			first[label[u]]++;
		for (uint64_t j = g->off[u]; j < g->off[u + 1]; j++)
			if (g->adj[j] > u && label[g->adj[j]] == label[u])
				inside[label[u]]++;
	}
	uint32_t nc = 0;
	for (uint32_t l = 0; l < n; l++)
		if (size[l] >= 2)
			nc++;
	cl = util_malloc(nc ? nc : 1, sizeof *cl);
	if (!cl)
		goto out;
	double eps = m->epsilon > 0.0 ? m->epsilon : 1e-12;
	uint32_t kept = 0;
	for (uint32_t l = 0; l < n; l++) {
		if (size[l] < 2 || inside[l] == 0)
			continue;
		double s = size[l], e = (double)inside[l];
		double N = sided ? (double)first[l] * (s - first[l]) : s * (s - 1) / 2;
		double p = e / N;
		if (p <= eps)
			continue;
		double gain = wlog(e, p, eps) + wlog(N - e, 1.0 - p, 1.0 - eps);
		double pc = p < CLUSTER_P_MAX ? p : CLUSTER_P_MAX;
		double f2 = -log1p(-pc) - m->qeps;
		double f = f2 > 0.0 ? sqrt(f2) : 0.0;
		cl[kept++] = (struct cluster){ gain, f > CLUSTER_F_MIN ? f : CLUSTER_F_MIN, l };
	}
	qsort(cl, kept, sizeof *cl, cluster_cmp);
	uint32_t used = kept < k ? kept : k;
	/* size[] now maps a label to its column + 1 (0: none) */
	uint32_t *col1 = size;
	memset(col1, 0, (size_t)n * sizeof *col1);
	for (uint32_t c = 0; c < used; c++)
		col1[cl[c].label] = c + 1;
	struct seed_report local = { 0 };
	if (used < k) {
		if (model_init(&rest, n, k - used, m->epsilon))
			goto out;
		have_rest = 1;
		if (seed_model(g, &rest, seed, variant, &local))
			goto out;
	}
	local.clusters = nc;
	local.used_clusters = used;
	local.passes = passes;
	struct fentry *buf = util_malloc((size_t)k, sizeof *buf);
	if (!buf)
		goto out;
	for (uint32_t u = 0; u < n; u++) {
		uint32_t nnz = 0, c1 = col1[label[u]];
		if (c1)
			buf[nnz++] = (struct fentry){ c1 - 1, cl[c1 - 1].f };
		if (have_rest)
			for (uint32_t i = 0; i < rest.rows[u].nnz; i++)
				buf[nnz++] = (struct fentry){ used + rest.rows[u].e[i].c,
							      rest.rows[u].e[i].v };
		if (model_set_row(m, u, buf, nnz)) {
			free(buf);
			goto out;
		}
	}
	free(buf);
	model_recount(m);
	if (rep)
		*rep = local;
	rc = 0;
out:
	if (have_rest)
		model_release(&rest);
	UTIL_FREE_ALL(label, size, inside, first, cl);
	return rc;
}
