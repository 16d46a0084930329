/*
 * inspect: the analysis behind the explorer's panes and `coterie show`.
 *
 * The idea: every view is answered from what touches the thing looked at,
 * never from the whole graph, because the explorer asks on a key press
 * while a fit of a million nodes runs on another thread.
 *   - the node view walks u's edges and merges two sparse rows per edge:
 *     O(deg(u) nnz);
 *   - the weak edges walk the members' edges (O(vol(c) nnz), a binary
 *     search in the sorted member list tells members from outsiders) and
 *     keep only the offset + limit lowest in a bounded max-heap, so a
 *     page costs O(vol log(offset + limit)) and the total stays exact;
 *   - the missing links look only at the INSPECT_MISSING_POOL strongest
 *     members (picked with a bounded heap, not a sort of the community)
 *     and keep the best pairs in a bounded heap in the same way. Whether
 *     a pool pair is linked comes from merging u's sorted neighbours with
 *     the sorted pool (the answer graph_has_edge() gives, without a
 *     binary search per pair).
 * Nothing here has static or global state; only results are allocated
 * (plus the heaps, freed before returning). The two sorts that fill
 * caller buffers (members, communities) cannot report an allocation
 * failure, so they sort indexes in place with a comparator that takes a
 * context argument (an introsort written out below) instead of qsort()
 * and a global.
 *
 * Orders are total, so results never depend on the sort used: pairs by
 * probability then (u, v); strengths descending then id ascending;
 * community keys in the direction asked, ties always by id ascending.
 *
 * A weighted graph (the Poisson model) ranks its weak edges by the upper
 * tail P(W >= w) of the edge's weight w under Poisson(F_u . F_v): the
 * chance the communities give a weight at least this heavy. For w = 1 it
 * is 1 - exp(-F_u . F_v), the unweighted ranking, and a heavy edge the
 * communities barely explain gets a tiny tail and ranks first.
 *
 * The one thing a newcomer gets wrong: an edge between two members is
 * one edge, reported once with u < v; an edge from a member to an
 * outsider is reported with the member as u even when its id is larger.
 */
#include "coterie/inspect.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/agm.h"
#include "coterie/cover.h"
#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/util.h"

/* ---- small helpers ---------------------------------------------------- */

/* A total order on doubles: NaN below everything, equal NaNs equal. */
static int dbl_cmp(double a, double b)
{
	if (a < b)
		return -1;
	if (a > b)
		return 1;
	if (a == b)
		return 0;
	if (isnan(a))
		return isnan(b) ? 0 : -1;
	return 1;
}

/* The order of strengths: the stronger first (NaN last), ties by id
 * ascending. Negative when (sa, ida) comes before (sb, idb). */
static int stronger_first(double sa, uint32_t ida, double sb, uint32_t idb)
{
	int c = dbl_cmp(sb, sa);
	return c ? c : util_cmp_uint(ida, idb);
}

static uint32_t row_len(const struct fcsr *F, uint32_t u)
{
	return (uint32_t)(F->off[u + 1] - F->off[u]);
}

static const struct fentry *row_of(const struct fcsr *F, uint32_t u)
{
	return F->e + F->off[u];
}

/* Index into a of the community explaining the pair: the shared column
 * with the largest product, the smallest column on ties; -1 when the rows
 * share no column. Rows are sorted by column. */
static int64_t explain_index(const struct fentry *a, uint32_t na, const struct fentry *b,
			     uint32_t nb)
{
	int64_t best = -1;
	double bestp = 0.0;
	uint32_t i = 0, j = 0;
	while (i < na && j < nb) {
		if (a[i].c == b[j].c) {
			double p = a[i].v * b[j].v;
			if (best < 0 || p > bestp) {
				best = i;
				bestp = p;
			}
			i++;
			j++;
		} else if (a[i].c < b[j].c) {
			i++;
		} else {
			j++;
		}
	}
	return best;
}

static double pair_prob(const struct fcsr *F, uint32_t u, uint32_t v)
{
	double x = model_dot(row_of(F, u), row_len(F, u), row_of(F, v), row_len(F, v));
	return -expm1(-x);
}

/* The regularized lower incomplete gamma function P(a, x), a > 0, x >= 0:
 * the series for x < a + 1, else 1 - Q from Q's continued fraction by
 * the modified Lentz method (Press et al., Numerical Recipes, 2nd ed.,
 * section 6.2, eqs. 6.2.5 and 6.2.7), to a relative 1e-15. */
static double gamma_p(double a, double x)
{
	if (!(x > 0.0))
		return 0.0;
	if (isinf(x))
		return 1.0;
	double front = exp(a * log(x) - x - lgamma(a));
	if (x < a + 1.0) {
		double ap = a, del = 1.0 / a, sum = del;
		for (int n = 0; n < 1000 && fabs(del) > fabs(sum) * 1e-15; n++) {
			ap += 1.0;
			del *= x / ap;
			sum += del;
		}
		return sum * front;
	}
	const double tiny = 1e-300;
	double b = x + 1.0 - a, c = 1.0 / tiny, d = 1.0 / b, h = d;
	for (int i = 1; i < 1000; i++) {
		double an = -i * (i - a);
		b += 2.0;
		d = an * d + b;
		if (fabs(d) < tiny)
			d = tiny;
		c = b + an / c;
		if (fabs(c) < tiny)
			c = tiny;
		d = 1.0 / d;
		double del = d * c;
		h *= del;
		if (fabs(del - 1.0) < 1e-15)
			break;
	}
	return 1.0 - front * h;
}

double inspect_weight_tail(double w, double x)
{
	if (!(w > 0.0))
		return 1.0;
	if (w == 1.0)
		return -expm1(-x); /* exact for the unweighted case */
	return gamma_p(w, x);
}

static size_t add_sat(size_t a, size_t b)
{
	return a > SIZE_MAX - b ? SIZE_MAX : a + b;
}

/* ---- the single-pair questions ---------------------------------------- */

int64_t inspect_explaining_community(const struct fcsr *F, uint32_t u, uint32_t v)
{
	if (u >= F->n || v >= F->n)
		return -1;
	const struct fentry *ru = row_of(F, u);
	int64_t i = explain_index(ru, row_len(F, u), row_of(F, v), row_len(F, v));
	return i < 0 ? -1 : (int64_t)ru[i].c;
}

double inspect_pair_prob(const struct fcsr *F, uint32_t u, uint32_t v)
{
	if (u >= F->n || v >= F->n)
		return 0.0;
	return pair_prob(F, u, v);
}

/* ---- one pair ---------------------------------------------------------- */

static int share_cmp(const void *pa, const void *pb)
{
	const struct inspect_share *a = pa, *b = pb;
	return stronger_first(a->product, a->comm, b->product, b->comm);
}

int inspect_edge(struct inspect_edge *out, const struct graph *g, const struct fcsr *F,
		 const struct agm *a, double epsilon, double delta, double min_links, uint32_t u,
		 uint32_t v)
{
	memset(out, 0, sizeof *out);
	if (F->n != g->n || u >= g->n || v >= g->n || u == v)
		return error("no pair (%u, %u) in a graph of %u nodes", u, v, g->n);
	out->u = u;
	out->v = v;
	out->linked = graph_has_edge(g, u, v);
	const struct fentry *ru = row_of(F, u), *rv = row_of(F, v);
	uint32_t nu = row_len(F, u), nv = row_len(F, v);
	out->share = util_calloc(nu < nv ? (nu ? nu : 1) : (nv ? nv : 1), sizeof *out->share);
	if (!out->share)
		return -1;
	double stay = 1.0 - epsilon; /* the AGM: no link from any shared community */
	for (uint32_t i = 0, j = 0; i < nu && j < nv;) {
		if (ru[i].c < rv[j].c) {
			i++;
		} else if (ru[i].c > rv[j].c) {
			j++;
		} else {
			struct inspect_share *sh = &out->share[out->nshare++];
			sh->comm = ru[i].c;
			sh->product = ru[i].v * rv[j].v;
			sh->alone = -expm1(-sh->product);
			sh->both_members = agm_member_at(g, F, u, F->off[u] + i, delta, min_links) &&
					   agm_member_at(g, F, v, F->off[v] + j, delta, min_links);
			int64_t ix = inspect_find_community(a, ru[i].c);
			sh->p = ix < 0 ? NAN : a->comms[ix].p;
			if (sh->both_members && ix >= 0)
				stay *= 1.0 - sh->p;
			out->x += sh->product;
			i++;
			j++;
		}
	}
	qsort(out->share, out->nshare, sizeof *out->share, share_cmp);
	double qeps = model_qeps(epsilon);
	out->prob = -expm1(-(out->x + qeps));
	out->prob_comms = -expm1(-out->x);
	out->agm_prob = 1.0 - stay;
	return 0;
}

void inspect_edge_release(struct inspect_edge *e)
{
	if (!e)
		return;
	free(e->share);
	memset(e, 0, sizeof *e);
}

/* ---- the node view ---------------------------------------------------- */

static int affil_cmp(const void *pa, const void *pb)
{
	const struct inspect_affil *a = pa, *b = pb;
	return stronger_first(a->strength, a->comm, b->strength, b->comm);
}

int inspect_node(struct inspect_node *out, const struct graph *g, const struct fcsr *F,
		 double delta, double min_links, uint32_t u)
{
	memset(out, 0, sizeof *out);
	if (F->n != g->n)
		return error("the strengths have %u rows but the graph has %u nodes", F->n,
			     g->n);
	if (u >= g->n)
		return error("no node %u in a graph of %u nodes", u, g->n);
	const struct fentry *ru = row_of(F, u);
	uint32_t nu = row_len(F, u);
	out->node = u;
	out->degree = graph_degree(g, u);
	if (nu) {
		out->affil = util_calloc(nu, sizeof *out->affil);
		if (!out->affil)
			return -1;
	}
	out->naffil = nu;
	for (uint32_t i = 0; i < nu; i++) {
		out->affil[i].comm = ru[i].c;
		out->affil[i].strength = ru[i].v;
		out->affil[i].member = agm_member_at(g, F, u, F->off[u] + i, delta, min_links);
		out->nmember += (uint32_t)out->affil[i].member;
	}
	/* affil[i] still matches row entry i here */
	for (uint64_t e = g->off[u]; e < g->off[u + 1]; e++) {
		uint32_t v = g->adj[e];
		int64_t i = explain_index(ru, nu, row_of(F, v), row_len(F, v));
		if (i < 0)
			out->unexplained++;
		else
			out->affil[i].explained++;
	}
	if (nu > 1)
		qsort(out->affil, nu, sizeof *out->affil, affil_cmp);
	return 0;
}

void inspect_node_release(struct inspect_node *n)
{
	if (!n)
		return;
	free(n->affil);
	memset(n, 0, sizeof *n);
}

/* ---- bounded heaps of pairs ------------------------------------------- */

/*
 * Keeps the cap pairs that come first in the order (prob ascending, or
 * descending when desc is set; then u, then v). The heap's root is the
 * last of those kept, so a newcomer either beats the root or is dropped.
 */
struct topk {
	struct inspect_pair *h;
	size_t n, cap;
	int desc;
	size_t seen; /* pairs offered: the total of the list */
};

static int pair_before(const struct inspect_pair *a, const struct inspect_pair *b, int desc)
{
	int c = dbl_cmp(a->prob, b->prob);
	if (c)
		return desc ? c > 0 : c < 0;
	if (a->u != b->u)
		return a->u < b->u;
	return a->v < b->v;
}

static void topk_sift_down(struct inspect_pair *h, size_t n, size_t i, int desc)
{
	struct inspect_pair x = h[i];
	for (;;) {
		size_t c = 2 * i + 1;
		if (c >= n)
			break;
		if (c + 1 < n && pair_before(&h[c], &h[c + 1], desc))
			c++;
		if (!pair_before(&x, &h[c], desc))
			break;
		h[i] = h[c];
		i = c;
	}
	h[i] = x;
}

static void topk_push(struct topk *t, uint32_t u, uint32_t v, double prob)
{
	struct inspect_pair x = { u, v, prob };
	t->seen++;
	if (t->n < t->cap) {
		size_t i = t->n++;
		while (i > 0) {
			size_t p = (i - 1) / 2;
			if (!pair_before(&t->h[p], &x, t->desc))
				break;
			t->h[i] = t->h[p];
			i = p;
		}
		t->h[i] = x;
	} else if (t->cap && pair_before(&x, &t->h[0], t->desc)) {
		t->h[0] = x;
		topk_sift_down(t->h, t->n, 0, t->desc);
	}
}

/* Sort the heap into order, then hand the page [offset, offset + limit)
 * to *out (NULL when empty), the pairs offered to *total (when not NULL),
 * and free the rest. */
static void topk_finish(struct topk *t, size_t offset, size_t limit,
			struct inspect_pair **out, size_t *nout, size_t *total)
{
	if (total)
		*total = t->seen;
	for (size_t end = t->n; end > 1; end--) {
		struct inspect_pair x = t->h[0];
		t->h[0] = t->h[end - 1];
		t->h[end - 1] = x;
		topk_sift_down(t->h, end - 1, 0, t->desc);
	}
	*out = NULL;
	*nout = 0;
	if (offset < t->n && limit > 0) {
		size_t k = t->n - offset < limit ? t->n - offset : limit;
		memmove(t->h, t->h + offset, k * sizeof *t->h);
		struct inspect_pair *p = realloc(t->h, k * sizeof *t->h);
		*out = p ? p : t->h;
		*nout = k;
		t->h = NULL;
	}
	free(t->h);
	t->h = NULL;
}

static int topk_init(struct topk *t, size_t offset, size_t limit, uint64_t bound, int desc)
{
	size_t cap = add_sat(offset, limit);
	if (limit == 0)
		cap = 0;
	if (bound < cap)
		cap = (size_t)bound;
	t->n = 0;
	t->cap = cap;
	t->desc = desc;
	t->seen = 0;
	t->h = util_malloc(cap ? cap : 1, sizeof *t->h);
	return t->h ? 0 : -1;
}

/* Empties the answer of a list query, then checks the community index
 * against the model and the graph: 0 or -1 with a message. */
static int list_begin(const struct graph *g, const struct fcsr *F, const struct agm *a,
		      uint32_t index, struct inspect_pair **out, size_t *nout, size_t *total)
{
	*out = NULL;
	*nout = 0;
	if (total)
		*total = 0;
	if (F->n != g->n || a->cover.n != g->n)
		return error("the strengths (%u rows) and the communities (%u nodes) do not "
			     "match the graph (%u nodes)", F->n, a->cover.n, g->n);
	if (index >= a->cover.k)
		return error("no community at index %u (there are %u)", index, a->cover.k);
	return 0;
}

/* v is in the sorted list mem[0..n). */
static int in_sorted(const uint32_t *mem, uint32_t n, uint32_t v)
{
	size_t i = util_lower_bound_u32(mem, n, v);
	return i < n && mem[i] == v;
}

/* ---- weak edges ------------------------------------------------------- */

int inspect_weak_edges(const struct graph *g, const struct fcsr *F, const struct agm *a,
		       uint32_t index, size_t offset, size_t limit,
		       struct inspect_pair **out, size_t *nout, size_t *total)
{
	if (list_begin(g, F, a, index, out, nout, total) < 0)
		return -1;
	const uint32_t *mem = a->cover.mem + a->cover.off[index];
	uint32_t s = cover_size(&a->cover, index);
	uint64_t vol = 0;
	for (uint32_t i = 0; i < s; i++)
		vol += graph_degree(g, mem[i]);

	struct topk t;
	if (topk_init(&t, offset, limit, vol, 0) < 0)
		return -1;
	for (uint32_t i = 0; i < s; i++) {
		uint32_t u = mem[i];
		for (uint64_t e = g->off[u]; e < g->off[u + 1]; e++) {
			uint32_t v = g->adj[e];
			if (v < u && in_sorted(mem, s, v))
				continue; /* reported from v's side */
			double x = model_dot(row_of(F, u), row_len(F, u), row_of(F, v),
					     row_len(F, v));
			topk_push(&t, u, v, inspect_weight_tail(graph_weight(g, e), x));
		}
	}
	topk_finish(&t, offset, limit, out, nout, total);
	return 0;
}

/* ---- missing links ---------------------------------------------------- */

struct member {
	double s;
	uint32_t id;
};

/* a is weaker than b: lower strength, or equal strength and larger id */
static int member_weaker(const struct member *a, const struct member *b)
{
	return stronger_first(a->s, a->id, b->s, b->id) > 0;
}

/* A min-heap (weakest at the root) of the pool strongest members. */
static void pool_sift_down(struct member *h, size_t n, size_t i)
{
	struct member x = h[i];
	for (;;) {
		size_t c = 2 * i + 1;
		if (c >= n)
			break;
		if (c + 1 < n && member_weaker(&h[c + 1], &h[c]))
			c++;
		if (!member_weaker(&h[c], &x))
			break;
		h[i] = h[c];
		i = c;
	}
	h[i] = x;
}

/* The ids of the pool strongest members of a->comms[index], ascending.
 * Returns the array (caller frees) with *np entries, or NULL. */
static uint32_t *strongest_members(const struct agm *a, uint32_t index, uint32_t pool,
				   uint32_t *np)
{
	const uint32_t *mem = a->cover.mem + a->cover.off[index];
	const double *str = a->strength ? a->strength + a->cover.off[index] : NULL;
	uint32_t s = cover_size(&a->cover, index);
	uint32_t n = s < pool ? s : pool;
	uint32_t *ids = util_malloc(n ? n : 1, sizeof *ids);
	if (!ids)
		return NULL;
	*np = n;
	if (s <= pool) {
		if (n)
			memcpy(ids, mem, (size_t)n * sizeof *ids);
		return ids; /* already ascending */
	}
	struct member *h = util_malloc(n, sizeof *h);
	if (!h) {
		free(ids);
		return NULL;
	}
	for (uint32_t i = 0; i < s; i++) {
		struct member x = { str ? str[i] : 1.0, mem[i] };
		if (i < n) {
			size_t j = i;
			while (j > 0) {
				size_t p = (j - 1) / 2;
				if (!member_weaker(&x, &h[p]))
					break;
				h[j] = h[p];
				j = p;
			}
			h[j] = x;
		} else if (member_weaker(&h[0], &x)) {
			h[0] = x;
			pool_sift_down(h, n, 0);
		}
	}
	for (uint32_t i = 0; i < n; i++)
		ids[i] = h[i].id;
	free(h);
	qsort(ids, n, sizeof *ids, util_qsort_u32);
	return ids;
}

int inspect_missing_links(const struct graph *g, const struct fcsr *F, const struct agm *a,
			  uint32_t index, size_t offset, size_t limit,
			  struct inspect_pair **out, size_t *nout, size_t *total)
{
	if (list_begin(g, F, a, index, out, nout, total) < 0)
		return -1;
	uint32_t np = 0;
	uint32_t *pool = strongest_members(a, index, INSPECT_MISSING_POOL, &np);
	if (!pool)
		return -1;
	uint64_t bound = (uint64_t)np * (np ? np - 1 : 0) / 2;
	struct topk t;
	if (topk_init(&t, offset, limit, bound, 1) < 0) {
		free(pool);
		return -1;
	}
	for (uint32_t i = 0; i < np; i++) {
		uint32_t u = pool[i];
		const struct fentry *ru = row_of(F, u);
		uint32_t nu = row_len(F, u);
		/* the pool and u's neighbours are both ascending: one merge
		 * tells linked from unlinked in O(deg(u) + pool) */
		const uint32_t *nb = g->adj + g->off[u], *nend = g->adj + g->off[u + 1];
		for (uint32_t j = i + 1; j < np; j++) {
			uint32_t v = pool[j];
			while (nb < nend && *nb < v)
				nb++;
			if (nb < nend && *nb == v)
				continue;
			/* a two-sided graph: only a sending and a receiving row
			 * make a pair of the model, and a node's own two rows none */
			if (g->nsend && (graph_side_of(g, u) == graph_side_of(g, v) ||
					 (g->paired && v == g->nsend + u)))
				continue;
			double x = model_dot(ru, nu, row_of(F, v), row_len(F, v));
			topk_push(&t, u, v, -expm1(-x));
		}
	}
	free(pool);
	topk_finish(&t, offset, limit, out, nout, total);
	return 0;
}

/* ---- in-place sort of indexes with a context -------------------------- */

/* 1 when index a must come before index b */
typedef int (*before_fn)(const void *ctx, uint32_t a, uint32_t b);

static void ctx_sift_down(uint32_t *x, size_t n, size_t i, before_fn before, const void *ctx)
{
	uint32_t v = x[i];
	for (;;) {
		size_t c = 2 * i + 1;
		if (c >= n)
			break;
		if (c + 1 < n && before(ctx, x[c], x[c + 1]))
			c++;
		if (!before(ctx, v, x[c]))
			break;
		x[i] = x[c];
		i = c;
	}
	x[i] = v;
}

static void ctx_heapsort(uint32_t *x, size_t n, before_fn before, const void *ctx)
{
	for (size_t i = n / 2; i-- > 0;)
		ctx_sift_down(x, n, i, before, ctx);
	for (size_t end = n; end > 1; end--) {
		uint32_t t = x[0];
		x[0] = x[end - 1];
		x[end - 1] = t;
		ctx_sift_down(x, end - 1, 0, before, ctx);
	}
}

static void ctx_insertion(uint32_t *x, size_t n, before_fn before, const void *ctx)
{
	for (size_t i = 1; i < n; i++) {
		uint32_t t = x[i];
		size_t j = i;
		while (j > 0 && before(ctx, t, x[j - 1])) {
			x[j] = x[j - 1];
			j--;
		}
		x[j] = t;
	}
}

static void swap_u32(uint32_t *a, uint32_t *b)
{
	uint32_t t = *a;
	*a = *b;
	*b = t;
}

/* Introsort: quicksort with a median of three and Hoare's partition,
 * heapsort when the recursion gets too deep, insertion sort for short
 * runs. Recurses on the smaller side, so the stack stays O(log n). */
static void ctx_sort_rec(uint32_t *x, size_t n, unsigned depth, before_fn before,
			 const void *ctx)
{
	while (n > 16) {
		if (depth == 0) {
			ctx_heapsort(x, n, before, ctx);
			return;
		}
		depth--;
		size_t mid = (n - 1) / 2;
		if (before(ctx, x[mid], x[0]))
			swap_u32(&x[mid], &x[0]);
		if (before(ctx, x[n - 1], x[mid])) {
			swap_u32(&x[n - 1], &x[mid]);
			if (before(ctx, x[mid], x[0]))
				swap_u32(&x[mid], &x[0]);
		}
		uint32_t p = x[mid];
		size_t i = 0, j = n - 1;
		for (;;) {
			while (before(ctx, x[i], p))
				i++;
			while (before(ctx, p, x[j]))
				j--;
			if (i >= j)
				break;
			swap_u32(&x[i], &x[j]);
			i++;
			j--;
		}
		/* [0, j] come no later than p, [j + 1, n) no earlier */
		size_t left = j + 1;
		if (left < n - left) {
			ctx_sort_rec(x, left, depth, before, ctx);
			x += left;
			n -= left;
		} else {
			ctx_sort_rec(x + left, n - left, depth, before, ctx);
			n = left;
		}
	}
	ctx_insertion(x, n, before, ctx);
}

static void ctx_sort(uint32_t *x, size_t n, before_fn before, const void *ctx)
{
	unsigned depth = 0;
	for (size_t m = n; m > 1; m >>= 1)
		depth += 2;
	ctx_sort_rec(x, n, depth, before, ctx);
}

/* ---- members and communities ------------------------------------------ */

/* Positions in a community's member list: ids ascend with positions, so
 * the position breaks ties exactly as the id would. */
static int member_pos_before(const void *ctx, uint32_t a, uint32_t b)
{
	const double *s = ctx;
	return stronger_first(s[a], a, s[b], b) < 0;
}

void inspect_members(const struct agm *a, uint32_t index, uint32_t *order, double *strength)
{
	if (index >= a->cover.k)
		return;
	uint64_t off = a->cover.off[index];
	uint32_t s = cover_size(&a->cover, index);
	for (uint32_t i = 0; i < s; i++)
		order[i] = i;
	if (a->strength)
		ctx_sort(order, s, member_pos_before, a->strength + off);
	for (uint32_t i = 0; i < s; i++) {
		uint32_t pos = order[i];
		if (strength)
			strength[i] = a->strength ? a->strength[off + pos] : 1.0;
		order[i] = a->cover.mem[off + pos];
	}
}

struct comm_sort {
	const struct agm_community *c;
	enum inspect_key key;
	int ascending;
};

static int key_cmp(const struct agm_community *a, const struct agm_community *b,
		   enum inspect_key key)
{
	switch (key) {
	case INSPECT_BY_SIZE:
		return util_cmp_uint(a->size, b->size);
	case INSPECT_BY_EDGES:
		return util_cmp_uint(a->internal_edges, b->internal_edges);
	case INSPECT_BY_DENSITY:
		return dbl_cmp(a->density, b->density);
	case INSPECT_BY_CONDUCTANCE:
		return dbl_cmp(a->conductance, b->conductance);
	case INSPECT_BY_P:
		return dbl_cmp(a->p, b->p);
	case INSPECT_BY_ID:
	default:
		return util_cmp_uint(a->id, b->id);
	}
}

static int comm_before(const void *ctx, uint32_t i, uint32_t j)
{
	const struct comm_sort *cs = ctx;
	const struct agm_community *a = &cs->c[i], *b = &cs->c[j];
	int c = key_cmp(a, b, cs->key);
	if (c)
		return cs->ascending ? c < 0 : c > 0;
	if (a->id != b->id)
		return a->id < b->id;
	return i < j;
}

void inspect_sort_communities(const struct agm *a, enum inspect_key key, int ascending,
			      uint32_t *order)
{
	struct comm_sort cs = { a->comms, key, ascending };
	for (uint32_t i = 0; i < a->cover.k; i++)
		order[i] = i;
	ctx_sort(order, a->cover.k, comm_before, &cs);
}

int64_t inspect_find_community(const struct agm *a, uint32_t id)
{
	for (uint32_t i = 0; i < a->cover.k; i++)
		if (a->comms[i].id == id)
			return i;
	return -1;
}
