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
 * Pieces joined (seed_join_pieces()). Where communities are large and
 * sparse (2,000 members, 15 links a node inside, leaking a fifth of their
 * links), propagation stops with such a community cut into pieces, each
 * denser than the community; as columns the pieces cost the climb and the
 * merge moves most of a fit and are often never joined (a 2x10^5-node
 * graph of 2,374 planted communities: 3,377 clusters; at k 2483 its two
 * largest communities ended in 33 columns each). Rounds of joins, by the
 * merge move's first question (fit_merge.c) asked of the clusters and the
 * graph's density: are the edges between two clusters better explained as
 * part of one block at the union's density than by the background? There
 * 1,008 joins left 2,370 clusters. The test is pairwise: a community cut
 * into pieces of a few dozen nodes, with a handful of edges between two
 * of them, stays in pieces (DEVELOPERS.md, "Pieces joined before
 * seeding").
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

#include "coterie/agm.h"
#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/rng.h"
#include "coterie/util.h"

#define LP_MAX_PASSES 30u
#define LP_STILL 1000u    /* a pass changing fewer than n / LP_STILL nodes is the last */
#define CLUSTER_P_MAX 0.9 /* densities above are taken as this (a single edge has p = 1) */
#define CLUSTER_F_MIN 0.05 /* the least starting strength */
#define JOIN_MAX_ROUNDS 64u /* rounds of joins at most (16 ended the 2x10^5-node graph) */

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

/* ---- joining the pieces of one community ---- */

/* A pair of clusters (labels a < b) and the edges between them. */
struct cpair {
	uint32_t a, b;
	uint64_t e;
};

static int cpair_cmp(const void *x, const void *y)
{
	const struct cpair *p = x, *q = y;
	if (p->a != q->a)
		return p->a < q->a ? -1 : 1;
	return p->b < q->b ? -1 : p->b > q->b;
}

struct cjoin {
	double gain;
	uint32_t a, b;
	uint64_t e;
};

static int cjoin_cmp(const void *x, const void *y)
{
	const struct cjoin *p = x, *q = y;
	if (p->gain != q->gain)
		return p->gain > q->gain ? -1 : 1;
	if (p->a != q->a)
		return p->a < q->a ? -1 : 1;
	return p->b < q->b ? -1 : p->b > q->b;
}

/* Sort pr[0 .. *np) and add up the edges of equal pairs, dropping a
 * pair of one cluster. */
static void cpairs_merge(struct cpair *pr, uint64_t *np)
{
	qsort(pr, *np, sizeof *pr, cpair_cmp);
	uint64_t o = 0;
	for (uint64_t i = 0; i < *np; i++) {
		if (pr[i].a == pr[i].b)
			continue;
		if (o && pr[o - 1].a == pr[i].a && pr[o - 1].b == pr[i].b)
			pr[o - 1].e += pr[i].e;
		else
			pr[o++] = pr[i];
	}
	*np = o;
}

/* The clusters' graph: every pair of clusters with edges between them
 * (labels of clusters of 2 nodes or more and of lone nodes alike), into
 * *out (*np pairs). Returns 0 or -1. */
static int cluster_pairs(const struct graph *g, const uint32_t *label, struct cpair **out,
			 uint64_t *np)
{
	uint64_t nx = 0;
	for (uint32_t u = 0; u < g->n; u++)
		for (uint64_t j = g->off[u]; j < g->off[u + 1]; j++)
			if (g->adj[j] > u && label[g->adj[j]] != label[u])
				nx++;
	struct cpair *pr = util_malloc(nx ? nx : 1, sizeof *pr);
	if (!pr)
		return -1;
	uint64_t i = 0;
	for (uint32_t u = 0; u < g->n; u++)
		for (uint64_t j = g->off[u]; j < g->off[u + 1]; j++) {
			uint32_t a = label[u], b = label[g->adj[j]];
			if (g->adj[j] > u && a != b)
				pr[i++] = a < b ? (struct cpair){ a, b, 1 } : (struct cpair){ b, a, 1 };
		}
	*np = nx;
	cpairs_merge(pr, np);
	*out = pr;
	return 0;
}

/*
 * Join the pieces of one community that label propagation left apart
 * (label[], size[], inside[], first[] rewritten; a joined cluster keeps
 * the label of one of its pieces). A round scores every pair of clusters
 * with edges between them, eX edges among NX pairs, by the likelihood
 * ratio of those edges as part of one block at the union's density pm
 * against the background eps,
 *     LR = eX ln(pm / eps) + (NX - eX) ln((1 - pm) / (1 - eps)),
 * (the merge move's first question, fit_merge.c) and makes the joins of
 * positive LR, the largest first, each cluster at most once; rounds go on
 * until one makes no join or JOIN_MAX_ROUNDS. *joins: the joins made.
 * Returns 0 or -1.
 */
static int join_pieces(const struct graph *g, uint32_t *label, uint32_t *size, uint64_t *inside,
		       uint32_t *first, double eps, uint32_t *joins)
{
	uint32_t n = g->n;
	int sided = g->nsend > 0;
	struct cpair *pr = NULL;
	struct cjoin *jn = NULL;
	uint64_t np = 0;
	uint32_t *parent = util_malloc(n ? n : 1, sizeof *parent);
	uint8_t *done = util_calloc(n ? n : 1, 1);
	int rc = -1;
	*joins = 0;
	if (!parent || !done || cluster_pairs(g, label, &pr, &np))
		goto out;
	jn = util_malloc(np ? np : 1, sizeof *jn);
	if (!jn)
		goto out;
	for (uint32_t l = 0; l < n; l++)
		parent[l] = l;
	double le = log(eps), l1e = log1p(-eps);
	for (unsigned round = 0; round < JOIN_MAX_ROUNDS && np; round++) {
		uint64_t nj = 0;
		for (uint64_t i = 0; i < np; i++) {
			uint32_t a = pr[i].a, b = pr[i].b;
			double ex = (double)pr[i].e, sa = size[a], sb = size[b];
			double fa = sided ? first[a] : 0.0, fb = sided ? first[b] : 0.0;
			double nx = sided ? fa * (sb - fb) + fb * (sa - fa) : sa * sb;
			double s = sa + sb, f = fa + fb;
			double nu = sided ? f * (s - f) : s * (s - 1) / 2;
			if (!(nx > ex) || !(nu > 0.0))
				continue;
			double pm = ((double)inside[a] + (double)inside[b] + ex) / nu;
			if (!(pm > eps) || !(pm < 1.0))
				continue;
			double gain = agm_join_lr(ex, nx, pm, le, l1e);
			if (gain > 0.0)
				jn[nj++] = (struct cjoin){ gain, a, b, pr[i].e };
		}
		qsort(jn, nj, sizeof *jn, cjoin_cmp);
		uint32_t made = 0;
		for (uint64_t i = 0; i < nj; i++) {
			uint32_t a = jn[i].a, b = jn[i].b;
			if (done[a] || done[b])
				continue;
			done[a] = done[b] = 1;
			parent[b] = a;
			size[a] += size[b];
			inside[a] += inside[b] + jn[i].e;
			size[b] = 0;
			inside[b] = 0;
			if (sided) {
				first[a] += first[b];
				first[b] = 0;
			}
			made++;
		}
		for (uint64_t i = 0; i < nj; i++)
			done[jn[i].a] = done[jn[i].b] = 0;
		*joins += made;
		if (!made)
			break;
		/* a cluster absorbed this round points at one that was not */
		for (uint64_t i = 0; i < np; i++) {
			uint32_t a = parent[pr[i].a], b = parent[pr[i].b];
			pr[i] = a < b ? (struct cpair){ a, b, pr[i].e } : (struct cpair){ b, a, pr[i].e };
		}
		cpairs_merge(pr, &np);
	}
	for (uint32_t u = 0; u < n; u++) {
		uint32_t l = label[u];
		while (parent[l] != l)
			l = parent[l];
		label[u] = l;
	}
	rc = 0;
out:
	UTIL_FREE_ALL(pr, jn, parent, done);
	return rc;
}

/* size[], inside[] and first[] (sided graphs; NULL otherwise) of the
 * clusters of label[], each n values, zeroed by the caller. */
static void cluster_counts(const struct graph *g, const uint32_t *label, uint32_t *size,
			   uint64_t *inside, uint32_t *first)
{
	for (uint32_t u = 0; u < g->n; u++) {
		size[label[u]]++;
		if (first && u < g->nsend)
			first[label[u]]++;
		for (uint64_t j = g->off[u]; j < g->off[u + 1]; j++)
			if (g->adj[j] > u && label[g->adj[j]] == label[u])
				inside[label[u]]++;
	}
}

int seed_join_pieces(const struct graph *g, uint32_t *label, double epsilon, uint32_t *joins)
{
	uint32_t n = g->n;
	uint32_t *size = util_calloc(n ? n : 1, sizeof *size);
	uint64_t *inside = util_calloc(n ? n : 1, sizeof *inside);
	uint32_t *first = g->nsend ? util_calloc(n, sizeof *first) : NULL;
	int rc = -1;
	if (size && inside && (!g->nsend || first)) {
		cluster_counts(g, label, size, inside, first);
		rc = join_pieces(g, label, size, inside, first, epsilon > 0.0 ? epsilon : 1e-12,
				 joins);
	}
	UTIL_FREE_ALL(size, inside, first);
	return rc;
}

/* Label propagation's clusters, pieces joined, scored: label[] maps a
 * node to its cluster, cl[0 .. kept) the clusters of positive gain, the
 * best first. */
struct clusters {
	uint32_t *label, *size, *first;
	uint64_t *inside;
	struct cluster *cl;
	uint32_t found, kept, passes, joins;
};

static void clusters_release(struct clusters *c)
{
	UTIL_FREE_ALL(c->label, c->size, c->inside, c->first, c->cl);
}

/* The clusters of g drawn from (seed, variant), scored against the
 * background eps (the strengths' floor qeps). Returns 0 or -1. */
static int clusters_find(const struct graph *g, uint64_t seed, uint32_t variant, double eps,
			 double qeps, struct clusters *c)
{
	uint32_t n = g->n;
	memset(c, 0, sizeof *c);
	c->label = util_malloc(n ? n : 1, sizeof *c->label);
	c->size = util_calloc(n ? n : 1, sizeof *c->size);
	c->inside = util_calloc(n ? n : 1, sizeof *c->inside);
	c->first = g->nsend ? util_calloc(n, sizeof *c->first) : NULL;
	uint32_t *label = c->label, *size = c->size, *first = c->first;
	uint64_t *inside = c->inside;
	if (!label || !size || !inside || (g->nsend && !first))
		return -1;
	/* the joins are judged against the graph's density, not against the
	 * background of the fit (eps): a small graph's fits try backgrounds
	 * down to a tenth of its density (background.c), and there the joins
	 * at those backgrounds changed its seeds (polbooks, k 3, seeds 1-9:
	 * mean ONMI 0.407 -> 0.403, karate 0.707 -> 0.685; with the density,
	 * both as without joins; DEVELOPERS.md) */
	double pairs = g->nsend ? (double)g->nsend * (double)(n - g->nsend) : (double)n * (n - 1) / 2;
	double density = pairs > 0.0 ? (double)g->m / pairs : 0.0;
	if (seed_propagate(g, seed, variant, label, &c->passes))
		return -1;
	cluster_counts(g, label, size, inside, first); /* the joins keep them up to date */
	if (join_pieces(g, label, size, inside, first, density > 0.0 ? density : 1e-12, &c->joins))
		return -1;
	/* a graph of two kinds (two-mode: only pairs across are terms)
	 * counts the first kind's members apart: pairs = a * (s - a) */
	int sided = g->nsend > 0;
	if (eps <= 0.0)
		eps = 1e-12;
	uint32_t nc = 0;
	for (uint32_t l = 0; l < n; l++)
		if (size[l] >= 2)
			nc++;
	c->found = nc;
	c->cl = util_malloc(nc ? nc : 1, sizeof *c->cl);
	if (!c->cl)
		return -1;
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
		double f2 = -log1p(-pc) - qeps;
		double f = f2 > 0.0 ? sqrt(f2) : 0.0;
		c->cl[kept++] = (struct cluster){ gain, f > CLUSTER_F_MIN ? f : CLUSTER_F_MIN, l };
	}
	qsort(c->cl, kept, sizeof *c->cl, cluster_cmp);
	c->kept = kept;
	return 0;
}

int seed_count_clusters(const struct graph *g, uint64_t seed, uint32_t variant, double epsilon,
			uint32_t *count, uint32_t *held)
{
	struct clusters c;
	int rc = clusters_find(g, seed, variant, epsilon, 0.0, &c);
	if (rc == 0) {
		*count = c.kept;
		*held = 0;
		for (uint32_t i = 0; i < c.kept; i++)
			*held += c.size[c.cl[i].label];
	}
	clusters_release(&c);
	return rc;
}

int seed_from_clusters(const struct graph *g, struct model *m, uint64_t seed, uint32_t variant,
		       struct seed_report *rep)
{
	uint32_t n = g->n, k = m->k;
	int rc = -1;
	struct model rest;
	int have_rest = 0;
	struct clusters c;
	if (clusters_find(g, seed, variant, m->epsilon, m->qeps, &c))
		goto out;
	uint32_t *label = c.label, *size = c.size, kept = c.kept, nc = c.found, passes = c.passes;
	struct cluster *cl = c.cl;
	uint32_t used = kept < k ? kept : k;
	/* size[] now maps a label to its column + 1 (0: none) */
	uint32_t *col1 = size;
	memset(col1, 0, (size_t)n * sizeof *col1);
	for (uint32_t i = 0; i < used; i++)
		col1[cl[i].label] = i + 1;
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
	local.joins = c.joins;
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
	clusters_release(&c);
	return rc;
}
