/*
 * tui/sides: the explorer's reading of a two-sided fit (directed or
 * two-mode), curses-free so tests/unit/test_tui_view.c links it.
 *
 * The fit runs on the two-sided graph of graph_directed.c: a directed
 * graph's node i is two rows, its sending copy i and its receiving copy
 * nsend + i; a two-mode graph's node is one row on its kind's side. The
 * explorer keeps that graph (the snapshot, the AGM of pane 2, the pager's
 * edges are of its rows) and folds the copies back here: a node is named
 * without its tag, its two rows are shown side by side, and memberships
 * follow the per-side rule of memberships.tsv (the other side's column
 * sum and the row's own degree), so the panes and the files agree.
 *
 * Invariant: for a directed graph the view's selected node is always a
 * sending copy (sides_user()); the receiving copy is read from it.
 *
 * The one thing a newcomer gets wrong: the per-side members of a column
 * are a subset of the two-sided graph's AGM members (a side's sum is at
 * most the whole column's), so filtering the AGM's list is exact, and
 * nothing here scans the whole graph for one community.
 */
#include "sides.h"

#include <stdlib.h>
#include <string.h>

#include "coterie/agm.h"
#include "coterie/cover.h"
#include "coterie/fcsr.h"
#include "coterie/graph.h"
#include "coterie/inspect.h"
#include "coterie/model_directed.h"
#include "coterie/util.h"

uint32_t sides_user(const struct graph *g, uint32_t u)
{
	return g->paired && u >= g->nsend && u < g->n ? u - g->nsend : u;
}

const char *sides_name(const struct graph *g, uint32_t u, char *buf, size_t cap, int ascii)
{
	if (u >= g->n) {
		snprintf(buf, cap, "?");
		return buf;
	}
	size_t len;
	const char *s = graph_side_name(g, u, &len);
	char *plain = util_malloc(len + 1, 1);
	if (!plain) {
		snprintf(buf, cap, "?");
		return buf;
	}
	memcpy(plain, s, len);
	plain[len] = '\0';
	util_escape(plain, buf, cap, ascii);
	free(plain);
	return buf;
}

double *sides_sums(const struct graph *g, const struct fcsr *F)
{
	double *sums = util_malloc(2 * (size_t)F->k + 1, sizeof *sums);
	if (sums)
		model_directed_side_sums(g, F, sums);
	return sums;
}

/* The strength of row u in column c (0 when none) and whether it is a
 * membership by the per-side rule. */
static double row_at(const struct graph *g, const struct fcsr *F, const double *sums,
		     double delta, uint32_t u, uint32_t c, int *member)
{
	*member = 0;
	if (u >= F->n)
		return 0.0;
	uint64_t lo = F->off[u], hi = F->off[u + 1];
	while (lo < hi) { /* entries ascend by community */
		uint64_t mid = lo + (hi - lo) / 2;
		if (F->e[mid].c < c)
			lo = mid + 1;
		else
			hi = mid;
	}
	if (lo == F->off[u + 1] || F->e[lo].c != c)
		return 0.0;
	*member = model_directed_member_at(g, F, sums, u, lo, delta);
	return F->e[lo].v;
}

/* Add row u's entries to the affiliations (a community once). */
static void add_row(struct inspect_node *nv, struct sides_node *sn, const struct graph *g,
		    const struct fcsr *F, const double *sums, double delta, uint32_t u,
		    int receiving)
{
	for (uint64_t j = F->off[u]; j < F->off[u + 1]; j++) {
		uint32_t c = F->e[j].c, i;
		for (i = 0; i < nv->naffil && nv->affil[i].comm != c; i++)
			;
		if (i == nv->naffil) {
			nv->affil[i] = (struct inspect_affil){ .comm = c };
			sn->row[i] = (struct sides_row){ 0 };
			nv->naffil++;
		}
		unsigned bit = receiving ? SIDES_R : SIDES_S;
		double x = F->e[j].v;
		if (receiving)
			sn->row[i].r = x;
		else
			sn->row[i].s = x;
		if (model_directed_member_at(g, F, sums, u, j, delta))
			sn->row[i].member |= bit;
		if (x > nv->affil[i].strength)
			nv->affil[i].strength = x;
	}
}

/* The order of the node view: the larger strength first, ties by id. */
struct sorted_row {
	struct inspect_affil a;
	struct sides_row r;
};

static int sorted_cmp(const void *pa, const void *pb)
{
	const struct sorted_row *a = pa, *b = pb;
	int c = util_cmp_double(b->a.strength, a->a.strength);
	return c ? c : util_cmp_uint(a->a.comm, b->a.comm);
}

int sides_node(struct inspect_node *nv, struct sides_node *sn, const struct graph *g,
	       const struct fcsr *F, const double *sums, double delta, uint32_t u)
{
	memset(nv, 0, sizeof *nv);
	memset(sn, 0, sizeof *sn);
	u = sides_user(g, u);
	if (u >= g->n || F->n != g->n)
		return error("no node %u in the two-sided graph", u);
	uint32_t in = g->paired ? g->nsend + u : u;
	uint64_t cap = (F->off[u + 1] - F->off[u]) + (in != u ? F->off[in + 1] - F->off[in] : 0);
	nv->affil = util_calloc(cap ? cap : 1, sizeof *nv->affil);
	sn->row = util_calloc(cap ? cap : 1, sizeof *sn->row);
	if (!nv->affil || !sn->row) {
		inspect_node_release(nv);
		sides_node_release(sn);
		return -1;
	}
	nv->node = u;
	sn->kind = g->paired ? -1 : graph_side_of(g, u);
	if (g->paired) {
		sn->outdeg = graph_degree(g, u);
		sn->indeg = graph_degree(g, in);
		add_row(nv, sn, g, F, sums, delta, u, 0);
		add_row(nv, sn, g, F, sums, delta, in, 1);
	} else {
		sn->outdeg = graph_degree(g, u);
		add_row(nv, sn, g, F, sums, delta, u, sn->kind == 1);
	}
	nv->degree = sn->outdeg + (g->paired ? sn->indeg : 0);
	struct sorted_row *t = util_malloc(nv->naffil ? nv->naffil : 1, sizeof *t);
	if (!t) {
		inspect_node_release(nv);
		sides_node_release(sn);
		return -1;
	}
	for (uint32_t i = 0; i < nv->naffil; i++) {
		nv->affil[i].member = sn->row[i].member != 0;
		t[i] = (struct sorted_row){ nv->affil[i], sn->row[i] };
	}
	qsort(t, nv->naffil, sizeof *t, sorted_cmp);
	for (uint32_t i = 0; i < nv->naffil; i++) {
		nv->affil[i] = t[i].a;
		sn->row[i] = t[i].r;
		nv->nmember += (uint32_t)nv->affil[i].member;
		sn->nsend += (sn->row[i].member & SIDES_S) != 0;
		sn->nrecv += (sn->row[i].member & SIDES_R) != 0;
	}
	free(t);
	return 0;
}

void sides_node_release(struct sides_node *sn)
{
	free(sn->row);
	memset(sn, 0, sizeof *sn);
}

struct member_row {
	uint32_t node;
	unsigned side;
	double s, r;
};

static int by_node(const void *pa, const void *pb)
{
	const struct member_row *a = pa, *b = pb;
	return util_cmp_uint(a->node, b->node);
}

static double shown_strength(const struct member_row *m)
{
	return m->s > m->r ? m->s : m->r;
}

static int by_strength(const void *pa, const void *pb)
{
	const struct member_row *a = pa, *b = pb;
	int c = util_cmp_double(shown_strength(b), shown_strength(a));
	return c ? c : util_cmp_uint(a->node, b->node);
}

int64_t sides_members(const struct graph *g, const struct fcsr *F, const double *sums,
		      double delta, uint32_t c, const uint32_t *cand, uint32_t n,
		      enum sides_filter filter, uint32_t *out, double *strength, uint8_t *side)
{
	struct member_row *m = util_malloc(n ? n : 1, sizeof *m);
	if (!m)
		return -1;
	uint32_t k = 0;
	for (uint32_t i = 0; i < n; i++) {
		uint32_t u = cand[i];
		int recv = graph_side_of(g, u), member;
		if ((filter == SIDES_SENDING && recv) || (filter == SIDES_RECEIVING && !recv))
			continue;
		double x = row_at(g, F, sums, delta, u, c, &member);
		if (!member)
			continue;
		m[k++] = (struct member_row){ sides_user(g, u), recv ? SIDES_R : SIDES_S,
					      recv ? 0.0 : x, recv ? x : 0.0 };
	}
	/* a directed node's two copies make one row */
	qsort(m, k, sizeof *m, by_node);
	uint32_t w = 0;
	for (uint32_t i = 0; i < k; i++) {
		if (w && m[w - 1].node == m[i].node) {
			m[w - 1].side |= m[i].side;
			m[w - 1].s += m[i].s;
			m[w - 1].r += m[i].r;
		} else {
			m[w++] = m[i];
		}
	}
	qsort(m, w, sizeof *m, by_strength);
	for (uint32_t i = 0; i < w; i++) {
		out[i] = m[i].node;
		strength[i] = shown_strength(&m[i]);
		side[i] = (uint8_t)m[i].side;
	}
	free(m);
	return w;
}

struct model_directed_figures *sides_figures(const struct graph *g, const struct fcsr *F,
					     double delta)
{
	struct cover sided;
	struct model_directed_figures *fig = util_malloc((size_t)F->k + 1, sizeof *fig);
	if (!fig || model_directed_cover(g, F, delta, &sided)) {
		free(fig);
		return NULL;
	}
	if (model_directed_figures(g, &sided, fig)) {
		free(fig);
		fig = NULL;
	}
	cover_release(&sided);
	return fig;
}

/* A row of the sort: the key's value (negated when the largest come
 * first), the community id, its index in the AGM. */
struct fig_row {
	double x;
	uint32_t id, index;
};

static int fig_row_cmp(const void *pa, const void *pb)
{
	const struct fig_row *a = pa, *b = pb;
	int c = util_cmp_double(a->x, b->x);
	return c ? c : util_cmp_uint(a->id, b->id);
}

static double fig_key(const struct model_directed_figures *f, enum inspect_key key, uint32_t id)
{
	switch (key) {
	case INSPECT_BY_SIZE: return f->size;
	case INSPECT_BY_EDGES: return (double)f->arcs;
	case INSPECT_BY_DENSITY: return f->density;
	case INSPECT_BY_CONDUCTANCE: return f->one_way_share;
	case INSPECT_BY_P: return f->senders;
	case INSPECT_BY_ID:
	default: return id;
	}
}

uint32_t sides_sort_communities(const struct agm *a, const struct model_directed_figures *fig,
				uint32_t nfig, enum inspect_key key, int ascending,
				uint32_t *order)
{
	struct fig_row *r = util_malloc(a->cover.k ? a->cover.k : 1, sizeof *r);
	if (!r)
		return 0;
	uint32_t n = 0;
	for (uint32_t i = 0; i < a->cover.k; i++) {
		uint32_t id = a->comms[i].id;
		if (id >= nfig || !fig[id].size)
			continue; /* no member on either side: not in communities.tsv */
		double x = fig_key(&fig[id], key, id);
		r[n++] = (struct fig_row){ ascending ? x : -x, id, i };
	}
	qsort(r, n, sizeof *r, fig_row_cmp);
	for (uint32_t i = 0; i < n; i++)
		order[i] = r[i].index;
	free(r);
	return n;
}

const char *sides_sort_name(enum inspect_key key)
{
	switch (key) {
	case INSPECT_BY_SIZE: return "size";
	case INSPECT_BY_EDGES: return "arcs inside";
	case INSPECT_BY_DENSITY: return "density";
	case INSPECT_BY_CONDUCTANCE: return "one-way share";
	case INSPECT_BY_P: return "senders";
	case INSPECT_BY_ID:
	default: return "id";
	}
}
