/*
 * select_warm: the start of a fit of k columns made from a fit of another
 * k, for the refinement of `-k auto`'s search by the curve's shape
 * (select.c).
 *
 * Going down, the weakest columns (smallest column sums) are dropped and
 * the others keep their order. Going up, the strongest columns are split,
 * each at most once: in column c, u0 is the strongest member and the
 * pivot the strongest member not linked to u0 (else the second
 * strongest); the pivot and its neighbours in c (u0 excepted) move, with
 * their strengths, to a new column. The fit then climbs from there.
 *
 * The one thing a newcomer gets wrong: the fit started from must have
 * been made on the SAME training graph, with the same held-out pairs left
 * out of it; a start from a fit that saw the held-out pairs (the whole
 * graph, another split) would carry them into the fit scored on them.
 * Nothing here looks at held-out pairs; the caller (select.c) keeps the
 * fits of one split only.
 */
#include "select-internal.h"

#include <stdlib.h>
#include <string.h>

#include "coterie/graph.h"
#include "coterie/util.h"

static int alloc_fcsr(struct fcsr *o, uint32_t n, uint32_t k, uint64_t nnz)
{
	o->n = n;
	o->k = k;
	o->off = util_calloc((size_t)n + 1, sizeof *o->off);
	o->e = util_malloc(nnz ? nnz : 1, sizeof *o->e);
	o->colsum = util_calloc(k, sizeof *o->colsum);
	if (o->off && o->e && o->colsum)
		return 0;
	fcsr_release(o);
	return -1;
}

/* Column ids by decreasing column sum (ties by id). */
struct colsum {
	double s;
	uint32_t c;
};

static int cmp_by_sum(const void *a, const void *b)
{
	const struct colsum *x = a, *y = b;
	int c = util_cmp_double(y->s, x->s);
	return c ? c : util_cmp_uint(x->c, y->c);
}

static int cmp_entry(const void *a, const void *b)
{
	const struct fentry *x = a, *y = b;
	return util_cmp_uint(x->c, y->c);
}

static uint32_t *by_sum(const struct fcsr *F)
{
	uint32_t *ord = util_malloc(F->k, sizeof *ord);
	struct colsum *cs = util_malloc(F->k, sizeof *cs);
	if (!ord || !cs) {
		UTIL_FREE_ALL(ord, cs);
		return NULL;
	}
	for (uint32_t c = 0; c < F->k; c++)
		cs[c] = (struct colsum){ F->colsum[c], c };
	qsort(cs, F->k, sizeof *cs, cmp_by_sum);
	for (uint32_t c = 0; c < F->k; c++)
		ord[c] = cs[c].c;
	free(cs);
	return ord;
}

static void sums(struct fcsr *o)
{
	memset(o->colsum, 0, o->k * sizeof *o->colsum);
	for (uint64_t i = 0; i < o->off[o->n]; i++)
		o->colsum[o->e[i].c] += o->e[i].v;
}

static int drop(const struct fcsr *F, uint32_t k, struct fcsr *o)
{
	uint32_t *ord = by_sum(F), *map = util_malloc(F->k, sizeof *map);
	if (!ord || !map || alloc_fcsr(o, F->n, k, F->off[F->n])) {
		UTIL_FREE_ALL(ord, map);
		return -1;
	}
	for (uint32_t i = 0; i < F->k; i++)
		map[ord[i]] = i < k ? 0 : UINT32_MAX;
	for (uint32_t c = 0, id = 0; c < F->k; c++) /* the kept keep their order */
		if (map[c] == 0)
			map[c] = id++;
	uint64_t w = 0;
	for (uint32_t u = 0; u < F->n; u++) {
		for (uint64_t i = F->off[u]; i < F->off[u + 1]; i++)
			if (map[F->e[i].c] != UINT32_MAX)
				o->e[w++] = (struct fentry){ map[F->e[i].c], F->e[i].v };
		o->off[u + 1] = w;
	}
	sums(o);
	UTIL_FREE_ALL(ord, map);
	return 0;
}

/* The entry of column c in row u of o, or NULL. */
static struct fentry *entry(struct fcsr *o, uint32_t u, uint32_t c)
{
	for (uint64_t i = o->off[u]; i < o->off[u + 1]; i++)
		if (o->e[i].c == c)
			return &o->e[i];
	return NULL;
}

/* Split column c of o (members mem[0 .. nm)) into c and column nc. */
static void split_one(struct fcsr *o, const struct graph *g, uint32_t c, uint32_t nc,
		      const uint32_t *mem, uint32_t nm, uint32_t *stamp)
{
	uint32_t u0 = UINT32_MAX, p = UINT32_MAX, p2 = UINT32_MAX;
	double s0 = 0, sp = 0, s2 = 0;
	for (uint32_t i = 0; i < nm; i++) {
		double v = entry(o, mem[i], c)->v;
		if (v > s0) {
			p2 = u0, s2 = s0;
			u0 = mem[i], s0 = v;
		} else if (v > s2) {
			p2 = mem[i], s2 = v;
		}
		stamp[mem[i]] = c + 1;
	}
	for (uint32_t i = 0; i < nm; i++) {
		double v = entry(o, mem[i], c)->v;
		if (mem[i] != u0 && v > sp && !graph_has_edge(g, u0, mem[i]))
			p = mem[i], sp = v;
	}
	if (p == UINT32_MAX)
		p = p2;
	if (p == UINT32_MAX)
		return;
	entry(o, p, c)->c = nc;
	for (uint64_t i = g->off[p]; i < g->off[p + 1]; i++) {
		uint32_t v = g->adj[i];
		struct fentry *e;
		if (v != u0 && stamp[v] == c + 1 && (e = entry(o, v, c)))
			e->c = nc;
	}
}

static int split(const struct fcsr *F, const struct graph *g, uint32_t k, struct fcsr *o)
{
	uint64_t nnz = F->off[F->n];
	uint32_t *ord = by_sum(F), *cnt = util_calloc((size_t)F->k + 1, sizeof *cnt);
	uint32_t *mem = util_malloc(nnz ? nnz : 1, sizeof *mem);
	uint32_t *stamp = util_calloc(F->n, sizeof *stamp);
	uint64_t *at = util_calloc((size_t)F->k + 1, sizeof *at);
	if (!ord || !cnt || !mem || !stamp || !at || alloc_fcsr(o, F->n, k, nnz)) {
		UTIL_FREE_ALL(ord, cnt, mem, stamp, at);
		return -1;
	}
	memcpy(o->off, F->off, ((size_t)F->n + 1) * sizeof *o->off);
	memcpy(o->e, F->e, nnz * sizeof *o->e);
	for (uint64_t i = 0; i < nnz; i++) /* members by column (CSC) */
		at[F->e[i].c + 1]++;
	for (uint32_t c = 0; c < F->k; c++)
		at[c + 1] += at[c];
	for (uint32_t u = 0; u < F->n; u++)
		for (uint64_t i = F->off[u]; i < F->off[u + 1]; i++) {
			uint32_t c = F->e[i].c;
			mem[at[c] + cnt[c]++] = u;
		}
	for (uint32_t j = 0; j < k - F->k; j++) {
		uint32_t c = ord[j];
		split_one(o, g, c, F->k + j, mem + at[c], cnt[c], stamp);
	}
	for (uint32_t u = 0; u < o->n; u++)
		qsort(o->e + o->off[u], o->off[u + 1] - o->off[u], sizeof *o->e, cmp_entry);
	sums(o);
	UTIL_FREE_ALL(ord, cnt, mem, stamp, at);
	return 0;
}

int select_warm_start(const struct fcsr *from, const struct graph *train, uint32_t k,
		      struct fcsr *out)
{
	memset(out, 0, sizeof *out);
	if (k == 0 || from->n != train->n || k > 2 * (uint64_t)from->k)
		return -1;
	if (k == from->k)
		return fcsr_copy(out, from);
	return k < from->k ? drop(from, k, out) : split(from, train, k, out);
}
