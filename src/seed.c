/*
 * seed: starting communities from locally minimal ego-nets (Gleich &
 * Seshadhri, KDD 2012).
 *
 * Triangles come from the forward algorithm: rank nodes by (degree, id),
 * orient every edge towards the higher rank, and for each oriented edge
 * u->v count the common out-neighbours; each triangle is found once, from
 * its lowest-ranked corner, in O(m^1.5) total.
 *
 * Small components: an ego-net that is a whole connected component has
 * conductance 0 and would win every seed; graphs such as e-mail networks
 * have hundreds of tiny components, and k seeds spent there leave the
 * giant component unseeded (nothing spreads into a region no seed
 * touches). Such seeds are therefore taken after every other local
 * minimum; on a graph made only of components they still come in order.
 *
 * Ties: in a clique every node's ego-net is the same set, so every node
 * is a local minimum. A seed is therefore skipped when its centre lies in
 * the ego-net of a seed already taken; otherwise k seeds could all be one
 * clique.
 */
#include "coterie/seed.h"

#include <stdlib.h>
#include <string.h>

#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/rng.h"
#include "coterie/util.h"

int seed_triangles(const struct graph *g, uint64_t *tri)
{
	uint32_t n = g->n;
	memset(tri, 0, (size_t)n * sizeof *tri);
	if (n == 0)
		return 0;
	uint64_t *ooff = util_malloc((size_t)n + 1, sizeof *ooff);
	uint32_t *oadj = util_malloc(g->m ? g->m : 1, sizeof *oadj);
	uint32_t *mark = util_calloc(n, sizeof *mark);
	int rc = -1;
	if (!ooff || !oadj || !mark)
		goto out;
	/* u -> v when (deg u, u) < (deg v, v) */
	uint64_t o = 0;
	for (uint32_t u = 0; u < n; u++) {
		ooff[u] = o;
		uint32_t du = graph_degree(g, u);
		for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++) {
			uint32_t v = g->adj[i];
			uint32_t dv = graph_degree(g, v);
			if (du < dv || (du == dv && u < v))
				oadj[o++] = v;
		}
	}
	ooff[n] = o;
	for (uint32_t u = 0; u < n; u++) {
		for (uint64_t i = ooff[u]; i < ooff[u + 1]; i++)
			mark[oadj[i]] = u + 1;
		for (uint64_t i = ooff[u]; i < ooff[u + 1]; i++) {
			uint32_t v = oadj[i];
			for (uint64_t j = ooff[v]; j < ooff[v + 1]; j++) {
				uint32_t w = oadj[j];
				if (mark[w] == u + 1) {
					tri[u]++;
					tri[v]++;
					tri[w]++;
				}
			}
		}
	}
	rc = 0;
out:
	UTIL_FREE_ALL(ooff, oadj, mark);
	return rc;
}

int seed_conductance(const struct graph *g, double *phi)
{
	uint64_t *tri = util_malloc(g->n ? g->n : 1, sizeof *tri);
	if (!tri || seed_triangles(g, tri)) {
		free(tri);
		return -1;
	}
	uint64_t total = 2 * g->m;
	for (uint32_t u = 0; u < g->n; u++) {
		uint64_t du = graph_degree(g, u);
		if (du == 0) {
			phi[u] = 1.0;
			continue;
		}
		uint64_t vol = du;
		for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++)
			vol += graph_degree(g, g->adj[i]);
		uint64_t internal = du + tri[u];
		uint64_t cut = vol - 2 * internal;
		uint64_t den = vol < total - vol ? vol : total - vol;
		phi[u] = den == 0 ? 1.0 : (double)cut / (double)den;
	}
	free(tri);
	return 0;
}

struct ranked {
	double phi;
	uint32_t u;
	int whole; /* the ego-net is a whole connected component (cut 0) */
};

static int cmp_ranked(const void *a, const void *b)
{
	const struct ranked *x = a, *y = b;
	if (x->whole != y->whole)
		return x->whole - y->whole;
	if (x->phi != y->phi)
		return x->phi < y->phi ? -1 : 1;
	return util_cmp_uint(x->u, y->u);
}

/* Take candidates in order as centres while fewer than k: a candidate
 * inside an ego-net already taken is skipped. taken[u]: 2 for a centre,
 * 1 for a member of a taken ego-net. Returns the new number of centres. */
static uint32_t take_centres(const struct graph *g, const struct ranked *cand, uint32_t nc,
			     uint32_t k, uint32_t *centre, uint32_t ns, uint8_t *taken)
{
	for (uint32_t i = 0; i < nc && ns < k; i++) {
		uint32_t u = cand[i].u;
		if (taken[u])
			continue;
		centre[ns++] = u;
		taken[u] = 2;
		for (uint64_t j = g->off[u]; j < g->off[u + 1]; j++)
			if (!taken[g->adj[j]])
				taken[g->adj[j]] = 1;
	}
	return ns;
}

/* The locally minimal ego-nets (no neighbour of lower conductance) into
 * cand, in the order seed_model() takes them; returns how many. */
static uint32_t rank_minima(const struct graph *g, const double *phi, struct ranked *cand)
{
	uint32_t nc = 0;
	for (uint32_t u = 0; u < g->n; u++) {
		if (graph_degree(g, u) == 0)
			continue;
		int minimal = 1;
		for (uint64_t i = g->off[u]; i < g->off[u + 1] && minimal; i++)
			if (phi[g->adj[i]] < phi[u])
				minimal = 0;
		if (minimal)
			cand[nc++] = (struct ranked){ phi[u], u, phi[u] == 0.0 };
	}
	qsort(cand, nc, sizeof *cand, cmp_ranked);
	return nc;
}

int seed_count_minima(const struct graph *g, uint32_t *count)
{
	uint32_t n = g->n;
	double *phi = util_malloc(n ? n : 1, sizeof *phi);
	struct ranked *cand = util_malloc(n ? n : 1, sizeof *cand);
	uint32_t *centre = util_malloc(n ? n : 1, sizeof *centre);
	uint8_t *taken = util_calloc(n ? n : 1, 1);
	int rc = -1;
	if (phi && cand && centre && taken && seed_conductance(g, phi) == 0) {
		uint32_t nc = rank_minima(g, phi, cand);
		*count = take_centres(g, cand, nc, UINT32_MAX, centre, 0, taken);
		rc = 0;
	}
	free(phi);
	free(cand);
	free(centre);
	free(taken);
	return rc;
}

int seed_model(const struct graph *g, struct model *m, uint64_t seed, uint32_t variant,
	       struct seed_report *rep)
{
	struct seed_report local = { 0 };
	uint32_t n = g->n, k = m->k;
	int rc = -1;
	double *phi = util_malloc(n ? n : 1, sizeof *phi);
	struct ranked *cand = util_malloc(n ? n : 1, sizeof *cand);
	uint32_t *centre = util_malloc(k, sizeof *centre);
	uint8_t *taken = util_calloc(n ? n : 1, 1); /* 1: in a chosen ego-net, 2: a centre */
	uint32_t *cnt = NULL;
	uint64_t *roff = NULL;
	struct fentry *ent = NULL;
	if (!phi || !cand || !centre || !taken || seed_conductance(g, phi))
		goto out;

	uint32_t nc = rank_minima(g, phi, cand);
	local.local_minima = nc;
	struct rng r;
	rng_init(&r, seed ^ 0x5eed5eed5eedULL ^ ((uint64_t)variant << 40));
	if (variant > 0) {
		/* another start: a random half of the candidates, in the same
		 * order; the fill below then reaches what they leave out */
		uint32_t kept = 0;
		for (uint32_t i = 0; i < nc; i++)
			if (rng_below(&r, 2))
				cand[kept++] = cand[i];
		nc = kept;
	}

	uint32_t ns = take_centres(g, cand, nc, k, centre, 0, taken);
	local.used_minima = ns;

	/* fill: first the lowest-conductance ego-nets whose centre lies
	 * outside every chosen ego-net (so the fill reaches parts of the
	 * graph no seed touches), then random nodes not yet a centre, then
	 * any node at all */
	uint32_t nr = 0;
	for (uint32_t u = 0; u < n; u++)
		if (graph_degree(g, u) > 0)
			cand[nr++] = (struct ranked){ phi[u], u, 0 };
	qsort(cand, nr, sizeof *cand, cmp_ranked);
	if (variant > 0)
		for (uint32_t i = nr; i > 1; i--) {
			uint32_t j = (uint32_t)rng_below(&r, i);
			struct ranked t = cand[i - 1];
			cand[i - 1] = cand[j];
			cand[j] = t;
		}
	uint32_t before = ns;
	ns = take_centres(g, cand, nr, k, centre, ns, taken);
	local.cover = ns - before;
	uint32_t *pool = (uint32_t *)cand; /* cand is done with; reuse its memory */
	for (int pass = 1; pass < 3 && ns < k; pass++) {
		uint32_t np = 0;
		for (uint32_t u = 0; u < n; u++)
			if (pass == 2 || taken[u] != 2)
				pool[np++] = u;
		while (ns < k && np > 0) {
			uint32_t i = (uint32_t)rng_below(&r, np);
			uint32_t u = pool[i];
			pool[i] = pool[--np];
			if (pass == 1 && taken[u] == 2)
				continue;
			centre[ns++] = u;
			taken[u] = 2;
			local.random++;
		}
		if (pass == 2 && ns < k)
			pass = 1; /* k > n: draw again from every node */
	}

	/* rows: column c holds 1 for every node of seed c's ego-net; filling
	 * columns in order keeps each row sorted */
	cnt = util_calloc(n ? n : 1, sizeof *cnt);
	roff = util_malloc((size_t)n + 1, sizeof *roff);
	if (!cnt || !roff)
		goto out;
	for (uint32_t c = 0; c < ns; c++) {
		uint32_t u = centre[c];
		cnt[u]++;
		for (uint64_t j = g->off[u]; j < g->off[u + 1]; j++)
			cnt[g->adj[j]]++;
	}
	roff[0] = 0;
	for (uint32_t u = 0; u < n; u++)
		roff[u + 1] = roff[u] + cnt[u];
	ent = util_malloc(roff[n] ? roff[n] : 1, sizeof *ent);
	if (!ent)
		goto out;
	memset(cnt, 0, (size_t)n * sizeof *cnt);
	for (uint32_t c = 0; c < ns; c++) {
		uint32_t u = centre[c];
		ent[roff[u] + cnt[u]++] = (struct fentry){ c, 1.0 };
		for (uint64_t j = g->off[u]; j < g->off[u + 1]; j++) {
			uint32_t v = g->adj[j];
			ent[roff[v] + cnt[v]++] = (struct fentry){ c, 1.0 };
		}
	}
	for (uint32_t u = 0; u < n; u++)
		if (model_set_row(m, u, ent + roff[u], cnt[u]))
			goto out;
	model_recount(m);
	rc = 0;
out:
	if (rep)
		*rep = local;
	free(phi);
	free(cand);
	free(centre);
	free(taken);
	free(cnt);
	free(roff);
	free(ent);
	return rc;
}

const char *seed_kind_name(enum seed_kind k)
{
	switch (k) {
	case SEED_CLUSTERS: return "clusters";
	case SEED_EGONETS: return "ego-nets";
	default: return "unknown";
	}
}

int seed_kind_parse(const char *s, enum seed_kind *out)
{
	for (int k = 0; k < SEED_KINDS; k++)
		if (!strcmp(s, seed_kind_name((enum seed_kind)k))) {
			*out = (enum seed_kind)k;
			return 0;
		}
	return error("--seeding takes clusters or ego-nets, not '%s'", s);
}

int seed_start(const struct graph *g, struct model *m, enum seed_kind kind, uint64_t seed,
	       uint32_t variant, struct seed_report *rep)
{
	return kind == SEED_EGONETS ? seed_model(g, m, seed, variant, rep)
				    : seed_from_clusters(g, m, seed, variant, rep);
}
