/*
 * graph_directed: directed and two-mode graphs as two-sided graphs.
 *
 * The idea: the directed model (model_directed.h) gives every node a
 * sending row F_u and a receiving row H_u, and an arc u -> v is a link
 * between F_u and H_v only. So a directed graph of n nodes is held as an
 * undirected bipartite graph of 2n nodes: node u (< nsend = n) is u's
 * sending copy, node n + u its receiving copy, and each arc u -> v is the
 * edge u -- n + v. The CSR row of a sending copy is u's out-adjacency, the
 * row of a receiving copy its in-adjacency. A two-mode graph is the same
 * with the first column's names as the senders and the second's as the
 * receivers (a name in both columns is two nodes), without the pairing.
 * Everything that works on a struct graph (the CSR, the checkpoint's
 * graph section, the fingerprint, blocks of the sweep) works unchanged.
 *
 * Names: a struct graph's names are distinct, and in a directed graph both
 * copies of u come from one name; so every sending copy is named
 * NAME GRAPH_SEND_TAG and every receiving copy NAME GRAPH_RECV_TAG. Both
 * sides are tagged and the two tags differ in their last four bytes, so
 * two tagged names are equal only when they are of one side and one name:
 * whatever bytes the input's names hold, no two nodes collide.
 * graph_side_name() gives the name back without its tag.
 *
 * Counts said to the user are of the nodes and arcs as given
 * (graph_describe()), never of the copies.
 *
 * Weights (fit --directed --weighted): each arc's weight goes with its
 * translated pair to graph_set_weights(), so the records of one arc add
 * up and u -> v and v -> u keep their own weights (two edges of B).
 *
 * The one thing a newcomer gets wrong: a self-arc u -> u joins two
 * different nodes of the bipartite graph (u and n + u); it is dropped here
 * (counted as a self-loop), since the pair (F_u, H_u) is no term of the
 * model (fit.c leaves it out as a held-out pair).
 */
#include <inttypes.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "graph-internal.h"
#include "coterie/util.h"

static const char *const side_tag[2] = { GRAPH_SEND_TAG, GRAPH_RECV_TAG };

/* Intern name s (len bytes) with the tag of side into t. */
static int64_t intern_tagged(struct names *t, const char *s, size_t len, int side, char **buf,
			     size_t *cap)
{
	size_t tl = strlen(side_tag[side]);
	if (len + tl + 1 > *cap) {
		size_t c = len + tl + 64;
		char *b = realloc(*buf, c);
		if (!b) {
			error("out of memory");
			return -1;
		}
		*buf = b;
		*cap = c;
	}
	memcpy(*buf, s, len);
	memcpy(*buf + len, side_tag[side], tl + 1);
	int added;
	return graph_intern(t, *buf, len + tl, &added);
}

/* The ids of one side: the original ids used on that side in order of
 * first appearance (two-mode), or all of them (paired). map[id] is 1 +
 * the side's index, 0 for unused. */
static uint32_t side_ids(const uint32_t *pairs, uint64_t npairs, int col, uint32_t n0,
			 int all, uint32_t *map, uint32_t *order)
{
	uint32_t cnt = 0;
	if (all) {
		for (uint32_t i = 0; i < n0; i++) {
			map[i] = i + 1;
			order[cnt++] = i;
		}
		return cnt;
	}
	for (uint64_t i = 0; i < npairs; i++) {
		uint32_t a = pairs[2 * i + col];
		if (!map[a]) {
			map[a] = ++cnt;
			order[cnt - 1] = a;
		}
	}
	return cnt;
}

struct graph *graph_assemble_sided(struct names *t, const uint32_t *pairs, uint64_t npairs,
				   const double *w, const struct graph_report *rep,
				   const char *source, const char *shown, int two_mode)
{
	uint32_t n0 = names_count(t);
	struct graph *g = NULL;
	struct names *b = NULL;
	char *buf = NULL;
	size_t cap = 0;
	uint32_t *map = util_calloc(2 * (size_t)n0 + 1, sizeof *map);
	uint32_t *order = util_malloc(2 * (size_t)n0 + 1, sizeof *order);
	uint32_t *bp = util_malloc(2 * npairs + 1, sizeof *bp);
	double *bw = w ? util_malloc(npairs + 1, sizeof *bw) : NULL; /* the kept pairs' weights */
	struct graph_report r = *rep;
	if (!map || !order || !bp || (w && !bw))
		goto out;
	uint32_t ns = side_ids(pairs, npairs, 0, n0, !two_mode, map, order);
	uint32_t nr = side_ids(pairs, npairs, 1, n0, !two_mode, map + n0, order + ns);
	if ((uint64_t)ns + nr > GRAPH_MAX_NODES) {
		error("%s: " GRAPH_TOO_MANY, source, GRAPH_MAX_NODES);
		goto out;
	}
	if (!(b = names_new((uint64_t)ns + nr)))
		goto out;
	for (uint32_t i = 0; i < ns + nr; i++) {
		const char *s = names_name(t, order[i]);
		if (intern_tagged(b, s, strlen(s), i >= ns, &buf, &cap) < 0)
			goto out;
	}
	uint64_t np = 0, self = 0;
	for (uint64_t i = 0; i < npairs; i++) {
		uint32_t a = pairs[2 * i], c = pairs[2 * i + 1];
		if (!two_mode && a == c) {
			self++;
			continue;
		}
		bp[2 * np] = map[a] - 1;
		bp[2 * np + 1] = ns + map[n0 + c] - 1;
		if (bw)
			bw[np] = w[i];
		np++;
	}
	g = graph_assemble(b, bp, np, &r, source);
	b = NULL;
	if (g && bw && graph_set_weights(g, bp, bw, np, shown)) {
		graph_free(g);
		g = NULL;
	}
	if (g) {
		g->report.edges_read = npairs;
		g->report.self_loops += self;
		g->nsend = ns;
		g->paired = !two_mode;
	}
out:
	names_free(b);
	names_free(t);
	UTIL_FREE_ALL(map, order, bp, bw, buf);
	return g;
}

int graph_side_of(const struct graph *g, uint32_t u)
{
	return g->nsend && u >= g->nsend;
}

const char *graph_side_name(const struct graph *g, uint32_t u, size_t *len)
{
	const char *s = graph_name(g, u);
	size_t l = strlen(s);
	if (g->nsend) {
		size_t tl = strlen(side_tag[graph_side_of(g, u)]);
		l = l >= tl ? l - tl : 0;
	}
	*len = l;
	return s;
}

void graph_describe(const struct graph *g, char *buf, size_t len)
{
	unsigned long long m = (unsigned long long)g->m;
	if (!g->nsend)
		snprintf(buf, len, "%" PRIu32 " node%s, %llu edge%s", g->n, g->n == 1 ? "" : "s", m,
			 m == 1 ? "" : "s");
	else if (g->paired)
		snprintf(buf, len, "%" PRIu32 " node%s, %llu arc%s", g->nsend,
			 g->nsend == 1 ? "" : "s", m, m == 1 ? "" : "s");
	else
		snprintf(buf, len, "%" PRIu32 " + %" PRIu32 " nodes of two kinds, %llu link%s",
			 g->nsend, g->n - g->nsend, m, m == 1 ? "" : "s");
}

int graph_check_sides(const struct graph *g, uint32_t nsend, int paired, char *why, size_t len)
{
	if (nsend == 0 || nsend >= g->n || (paired && (uint64_t)2 * nsend != g->n)) {
		snprintf(why, len, "%u senders of %u nodes cannot be a %s graph", nsend, g->n,
			 paired ? "directed" : "two-mode");
		return -1;
	}
	for (uint32_t u = 0; u < g->n; u++)
		for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++)
			if ((u < nsend) == (g->adj[i] < nsend)) {
				snprintf(why, len, "edge %u -- %u joins two nodes of one side", u,
					 g->adj[i]);
				return -1;
			}
	return 0;
}

struct graph *graph_self_pairs(const struct graph *g)
{
	uint32_t n = g->nsend;
	uint32_t *p = util_malloc(2 * (size_t)n + 1, sizeof *p);
	if (!p)
		return NULL;
	for (uint32_t i = 0; i < n; i++) {
		p[2 * i] = i;
		p[2 * i + 1] = n + i;
	}
	struct graph *x = graph_with_edges(g, p, n);
	free(p);
	return x;
}

struct graph *graph_undirected_view(const struct graph *g)
{
	uint32_t n = g->nsend;
	uint64_t m = 0;
	uint32_t *p = util_malloc(2 * g->m + 1, sizeof *p);
	if (!p)
		return NULL;
	for (uint32_t u = 0; u < n; u++)
		for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++) {
			p[2 * m] = u;
			p[2 * m + 1] = g->adj[i] - n;
			m++;
		}
	struct graph *v = graph_from_pairs(n, p, m, NULL);
	free(p);
	return v;
}
