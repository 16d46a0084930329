/*
 * refine: local search on the discrete AGM after the relaxed fit.
 *
 * The idea. With q_c = -ln(1 - p_c), qeps = -ln(1 - epsilon) and
 * Q_uv = qeps + sum of q_c over the communities u and v share,
 *     L = sum_{uv in E} log(1 - e^{-Q_uv}) - sum_{uv not in E} Q_uv
 * (Yang & Leskovec, ICDM 2012, eq. 1 with the epsilon community; the
 * non-edge sum rearranged as in agm.c). Toggling node u's membership of
 * community c changes only the pairs (u, v) with v in c:
 *   join  (u not in c):  dL = sum_{v in N(u) cap c} log1p(w(Q_uv) (1 - e^{-q_c}))
 *                             - q_c (|c| - |N(u) cap c|)
 *   leave (u in c):      dL = - sum_{v in N(u) cap c} log1p(w(Q'_uv) (1 - e^{-q_c}))
 *                             + q_c (|c| - 1 - |N(u) cap c|)
 * with w(Q) = 1/expm1(Q) and Q' = Q minus q_c: the edge terms are
 *   log(1 - e^{-(Q+d)}) - log(1 - e^{-Q}) = log1p(w(Q) (1 - e^{-d})),
 * computed as such (no cancellation near the optimum), and the non-edge
 * terms are the pairs of u with c's other members that are not edges.
 * price() fills these for every community of u and of its neighbours at
 * once: one merge of the two sorted membership lists per edge gives the
 * shared set, Q_uv (summed afresh, never updated, so nothing drifts) and
 * which of v's communities u is not yet in. The cost is
 * O(sum over v in N(u) of |C(u)| + |C(v)|) = O(deg(u) * memberships).
 * Only the sizes of the communities and the membership lists are kept:
 * the internal edge counts the p step needs are rebuilt by agm.c each
 * round, in O(m * memberships), the same order as one round of moves.
 *
 * p step: agm_improve_p() climbs to the joint maximum of L over all q for
 * the cover as it stands (cyclic one-dimensional Newton steps on each q_c
 * with the others held fixed, each step safeguarded to rise, repeated to
 * convergence; L is concave in q), starting from the q in use. It is the
 * exact maximum-likelihood p of the cover, not the internal density: with
 * overlaps and a background the density is not the MLE.
 *
 * The one thing a newcomer gets wrong: a community with q_c = 0 (no edge
 * inside) prices every join and every leave at exactly 0, so it neither
 * grows nor shrinks; min_gain > 0 keeps such ties (and rounding noise)
 * from being taken as moves, which also guarantees the search ends.
 */
#include "coterie/refine.h"

#include <inttypes.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/rng.h"
#include "coterie/util.h"

#define REFINE_VISIT_MOVES 64u /* moves of one node per visit, at most */
#define REFINE_POLL 1024u      /* nodes between two calls of stop() */

struct refine {
	const struct graph *g;
	uint32_t n, k;
	double epsilon, qeps;
	double *q;         /* k */
	double *grow;      /* k: 1 - e^{-q_c}, kept in step with q */
	uint32_t *size;    /* k: members */
	char **label;      /* k, owned */
	uint32_t **row;    /* n: u's communities, strictly increasing */
	uint32_t *len, *cap;
	/* scratch for price() */
	double *gain;      /* k: the edge terms of toggling u in c */
	uint32_t *near;    /* k: u's neighbours in c */
	uint32_t *stamp;   /* k: gain and near are valid when stamp == epoch */
	uint32_t epoch;
	uint32_t *touched; /* the communities priced, in order of first touch */
	uint32_t ntouched;
	uint32_t *shared;  /* k: one edge's shared communities */
};

void refine_params_default(struct refine_params *p)
{
	memset(p, 0, sizeof *p);
	p->max_rounds = 50;
	p->min_gain = 1e-9;
	p->seed = 1;
}

void refine_free(struct refine *r)
{
	if (!r)
		return;
	UTIL_FREE_ALL(r->len, r->cap, r->q, r->grow, r->size, r->gain, r->near, r->stamp, r->touched,
		      r->shared);
	if (r->row)
		for (uint32_t u = 0; u < r->n; u++)
			free(r->row[u]);
	if (r->label)
		for (uint32_t c = 0; c < r->k; c++)
			free(r->label[c]);
	free(r->row);
	free(r->label);
	free(r);
}

static double q_of(double p)
{
	double q = -log1p(-p);
	return q < AGM_QMAX ? q : AGM_QMAX; /* also p = 1 */
}

static int row_push(struct refine *r, uint32_t u, uint32_t c)
{
	if (r->len[u] == r->cap[u]) {
		uint32_t cap = r->cap[u] ? 2 * r->cap[u] : 2;
		uint32_t *grown = util_realloc(r->row[u], cap, sizeof *grown);
		if (!grown)
			return -1;
		r->row[u] = grown;
		r->cap[u] = cap;
	}
	r->row[u][r->len[u]++] = c;
	return 0;
}

struct refine *refine_new(const struct graph *g, const struct cover *c, const double *p,
			  double epsilon)
{
	if (!(epsilon > 0.0 && epsilon < 1.0)) {
		error("background probability %g out of range (0, 1)", epsilon);
		return NULL;
	}
	if (c->n != g->n) {
		error("cover has %" PRIu32 " nodes, graph has %" PRIu32, c->n, g->n);
		return NULL;
	}
	if (cover_check(c) < 0)
		return NULL;
	for (uint32_t i = 0; p && i < c->k; i++)
		if (!(p[i] >= 0.0 && p[i] <= 1.0)) {
			error("link probability %g of community %" PRIu32 " out of range [0, 1]",
			      p[i], i);
			return NULL;
		}
	struct refine *r = util_calloc(1, sizeof *r);
	if (!r)
		return NULL;
	r->g = g;
	r->n = g->n;
	r->k = c->k;
	r->epsilon = epsilon;
	r->qeps = model_qeps(epsilon);
	size_t k1 = c->k ? c->k : 1, n1 = g->n ? g->n : 1;
	r->q = util_calloc(k1, sizeof *r->q);
	r->grow = util_calloc(k1, sizeof *r->grow);
	r->size = util_calloc(k1, sizeof *r->size);
	r->label = util_calloc(k1, sizeof *r->label);
	r->gain = util_calloc(k1, sizeof *r->gain);
	r->near = util_calloc(k1, sizeof *r->near);
	r->stamp = util_calloc(k1, sizeof *r->stamp);
	r->touched = util_malloc(k1, sizeof *r->touched);
	r->shared = util_malloc(k1, sizeof *r->shared);
	r->row = util_calloc(n1, sizeof *r->row);
	r->len = util_calloc(n1, sizeof *r->len);
	r->cap = util_calloc(n1, sizeof *r->cap);
	if (!r->q || !r->grow || !r->size || !r->label || !r->gain || !r->near || !r->stamp || !r->touched ||
	    !r->shared || !r->row || !r->len || !r->cap)
		goto fail;
	for (uint32_t i = 0; i < c->k; i++) {
		if (!(r->label[i] = util_strdup(c->label && c->label[i] ? c->label[i] : "")))
			goto fail;
		r->size[i] = cover_size(c, i);
		/* increasing i: every row comes out sorted */
		for (uint64_t j = c->off[i]; j < c->off[i + 1]; j++)
			if (row_push(r, c->mem[j], i) < 0)
				goto fail;
	}
	if (p) {
		for (uint32_t i = 0; i < c->k; i++)
			r->q[i] = q_of(p[i]);
	} else {
		if (agm_estimate_p(g, c, epsilon, r->q) < 0)
			goto fail;
		for (uint32_t i = 0; i < c->k; i++)
			r->q[i] = q_of(r->q[i]);
	}
	for (uint32_t i = 0; i < c->k; i++)
		r->grow[i] = -expm1(-r->q[i]);
	r->epoch = 1;
	return r;
fail:
	refine_free(r);
	return NULL;
}

static int has(const struct refine *r, uint32_t u, uint32_t c)
{
	const uint32_t *a = r->row[u];
	uint32_t lo = 0, hi = r->len[u];
	while (lo < hi) {
		uint32_t mid = lo + (hi - lo) / 2;
		if (a[mid] < c)
			lo = mid + 1;
		else if (a[mid] > c)
			hi = mid;
		else
			return 1;
	}
	return 0;
}

static void touch(struct refine *r, uint32_t c)
{
	if (r->stamp[c] == r->epoch)
		return;
	r->stamp[c] = r->epoch;
	r->gain[c] = 0.0;
	r->near[c] = 0;
	r->touched[r->ntouched++] = c;
}

/* Price every move of u: after it, gain[c] and near[c] hold the edge terms
 * and the neighbour count of toggling u in c for every c in touched[]
 * (u's own communities first, then its neighbours' in order of first
 * sight). */
static void price(struct refine *r, uint32_t u)
{
	if (++r->epoch == 0) { /* wrapped: forget every stamp */
		memset(r->stamp, 0, (size_t)r->k * sizeof *r->stamp);
		r->epoch = 1;
	}
	r->ntouched = 0;
	const uint32_t *cu = r->row[u], lu = r->len[u];
	for (uint32_t i = 0; i < lu; i++)
		touch(r, cu[i]);
	const struct graph *g = r->g;
	for (uint64_t e = g->off[u]; e < g->off[u + 1]; e++) {
		uint32_t v = g->adj[e];
		const uint32_t *cv = r->row[v], lv = r->len[v];
		/* shared set and Q_uv */
		uint32_t ns = 0, a = 0, b = 0;
		double Q = r->qeps;
		while (a < lu && b < lv) {
			if (cu[a] < cv[b]) {
				a++;
			} else if (cv[b] < cu[a]) {
				b++;
			} else {
				r->shared[ns++] = cu[a];
				Q += r->q[cu[a]];
				a++;
				b++;
			}
		}
		/* joins: v's communities u is not in */
		if (lv > ns) {
			double w = 1.0 / expm1(Q);
			a = 0;
			for (b = 0; b < lv; b++) {
				uint32_t c = cv[b];
				while (a < lu && cu[a] < c)
					a++;
				if (a < lu && cu[a] == c)
					continue;
				touch(r, c);
				r->near[c]++;
				r->gain[c] += log1p(w * r->grow[c]);
			}
		}
		/* leaves: the shared communities, Q' summed without c */
		for (uint32_t i = 0; i < ns; i++) {
			uint32_t c = r->shared[i];
			double Qi = r->qeps;
			for (uint32_t j = 0; j < ns; j++)
				if (j != i)
					Qi += r->q[r->shared[j]];
			r->near[c]++;
			r->gain[c] -= log1p(r->grow[c] / expm1(Qi)); /* Qi > 0: qeps > 0 */
		}
	}
}

/* The change of L for toggling u in c, after price(r, u). */
static double priced(const struct refine *r, uint32_t u, uint32_t c)
{
	double gain = 0.0, near = 0.0, q = r->q[c], size = (double)r->size[c];
	if (r->stamp[c] == r->epoch) {
		gain = r->gain[c];
		near = (double)r->near[c];
	}
	if (has(r, u, c))
		return gain + (q > 0.0 ? q * (size - 1.0 - near) : 0.0);
	return gain - (q > 0.0 ? q * (size - near) : 0.0);
}

double refine_delta(struct refine *r, uint32_t u, uint32_t c)
{
	if (u >= r->n || c >= r->k) {
		error("no node %" PRIu32 " or community %" PRIu32 " to price", u, c);
		return NAN;
	}
	price(r, u);
	return priced(r, u, c);
}

static int apply(struct refine *r, uint32_t u, uint32_t c)
{
	uint32_t *a = r->row[u], len = r->len[u], at = 0;
	while (at < len && a[at] < c)
		at++;
	if (at < len && a[at] == c) {
		memmove(a + at, a + at + 1, (size_t)(len - at - 1) * sizeof *a);
		r->len[u]--;
		r->size[c]--;
		return 0;
	}
	if (row_push(r, u, c) < 0)
		return -1;
	a = r->row[u];
	memmove(a + at + 1, a + at, (size_t)(len - at) * sizeof *a);
	a[at] = c;
	r->size[c]++;
	return 0;
}

int refine_toggle(struct refine *r, uint32_t u, uint32_t c)
{
	if (u >= r->n || c >= r->k)
		return error("no node %" PRIu32 " or community %" PRIu32 " to toggle", u, c);
	return apply(r, u, c);
}

int refine_cover(const struct refine *r, struct cover *out, double *p)
{
	memset(out, 0, sizeof *out);
	out->n = r->n;
	out->k = r->k;
	out->off = util_calloc((size_t)r->k + 1, sizeof *out->off);
	out->label = util_calloc(r->k ? r->k : 1, sizeof *out->label);
	if (!out->off || !out->label)
		goto fail;
	for (uint32_t c = 0; c < r->k; c++) {
		out->off[c + 1] = out->off[c] + r->size[c];
		if (!(out->label[c] = util_strdup(r->label[c])))
			goto fail;
	}
	uint64_t total = out->off[r->k];
	out->mem = util_malloc(total ? total : 1, sizeof *out->mem);
	uint64_t *at = util_malloc((size_t)r->k + 1, sizeof *at);
	if (!out->mem || !at) {
		free(at);
		goto fail;
	}
	memcpy(at, out->off, ((size_t)r->k + 1) * sizeof *at);
	for (uint32_t u = 0; u < r->n; u++) /* increasing u: members come out sorted */
		for (uint32_t i = 0; i < r->len[u]; i++)
			out->mem[at[r->row[u][i]]++] = u;
	free(at);
	if (p)
		for (uint32_t c = 0; c < r->k; c++)
			p[c] = -expm1(-r->q[c]);
	return 0;
fail:
	cover_release(out);
	return -1;
}

/* L of the state, afresh. NAN on failure. */
static double state_loglik(const struct refine *r, double *p)
{
	struct cover c;
	if (refine_cover(r, &c, p) < 0)
		return NAN;
	double ll = agm_loglik(r->g, &c, p, r->epsilon);
	cover_release(&c);
	return ll;
}

/* The p step: q climbs to the maximum for the cover as it stands. */
static int p_step(struct refine *r, double *p)
{
	struct cover c;
	if (refine_cover(r, &c, p) < 0)
		return -1;
	int rc = agm_improve_p(r->g, &c, r->epsilon, p);
	cover_release(&c);
	if (rc < 0)
		return -1;
	for (uint32_t i = 0; i < r->k; i++) {
		r->q[i] = q_of(p[i]);
		r->grow[i] = -expm1(-r->q[i]);
	}
	return 0;
}

static int asked_to_stop(const struct refine_params *p)
{
	return p->stop && p->stop(p->arg);
}

int refine_run(struct refine *r, const struct refine_params *p, struct refine_report *rep)
{
	memset(rep, 0, sizeof *rep);
	double t0 = util_now();
	if (!(p->min_gain >= 0.0) || p->max_rounds < 1)
		return error("refinement needs min_gain >= 0 and at least one round");
	double *pv = util_malloc(r->k ? r->k : 1, sizeof *pv);
	uint32_t *perm = util_malloc(r->n ? r->n : 1, sizeof *perm);
	unsigned char *dirty = util_calloc(r->n ? r->n : 1, 1);
	unsigned char *next = util_calloc(r->n ? r->n : 1, 1);
	if (!pv || !perm || !dirty || !next)
		goto fail;
	rep->loglik_before = state_loglik(r, pv);
	if (isnan(rep->loglik_before))
		goto fail;
	for (uint32_t u = 0; u < r->n; u++)
		perm[u] = u;
	struct rng rng;
	rng_init(&rng, p->seed ^ 0xa63e11eULL);
	int fresh_p = 0; /* the q in use are the maximum for the cover as it stands */
	int full = 1;    /* this round visits every node, not only the dirty ones */
	while (rep->rounds < p->max_rounds && !rep->stopped) {
		if (p_step(r, pv) < 0)
			goto fail;
		fresh_p = 1;
		rep->rounds++;
		rng_shuffle_u32(&rng, perm, r->n);
		uint64_t moves = 0;
		for (uint32_t i = 0; i < r->n; i++) {
			if (i % REFINE_POLL == 0 && asked_to_stop(p)) {
				rep->stopped = 1;
				break;
			}
			uint32_t u = perm[i];
			if (!full && !dirty[u])
				continue;
			for (unsigned t = 0; t < REFINE_VISIT_MOVES; t++) {
				price(r, u);
				double best = p->min_gain;
				uint32_t pick = UINT32_MAX;
				for (uint32_t j = 0; j < r->ntouched; j++) {
					uint32_t c = r->touched[j];
					double d = priced(r, u, c);
					if (d > best) {
						best = d;
						pick = c;
					}
				}
				if (pick == UINT32_MAX)
					break;
				int joined = !has(r, u, pick);
				if (apply(r, u, pick) < 0)
					goto fail;
				moves++;
				next[u] = 1;
				for (uint64_t e = r->g->off[u]; e < r->g->off[u + 1]; e++)
					next[r->g->adj[e]] = 1;
				if (joined)
					rep->added++;
				else
					rep->removed++;
				fresh_p = 0;
			}
		}
		if (moves == 0 && !rep->stopped) {
			if (full) {
				rep->converged = 1;
				break;
			}
			full = 1; /* nothing moved near the moves: check every node */
		} else {
			full = 0;
		}
		unsigned char *swap = dirty;
		dirty = next;
		next = swap;
		memset(next, 0, r->n);
	}
	if (!fresh_p && !rep->stopped && p_step(r, pv) < 0)
		goto fail;
	rep->loglik_after = state_loglik(r, pv);
	if (isnan(rep->loglik_after))
		goto fail;
	rep->seconds = util_now() - t0;
	free(pv);
	free(perm);
	free(dirty);
	free(next);
	return 0;
fail:
	free(pv);
	free(perm);
	free(dirty);
	free(next);
	return -1;
}

struct by_id {
	uint32_t id, at;
};

static int by_id_cmp(const void *pa, const void *pb)
{
	const struct by_id *a = pa, *b = pb;
	return util_cmp_uint(a->id, b->id);
}

/* F[u][c], or 0 when row u holds no entry for c. */
static double strength_of(const struct fcsr *F, uint32_t u, uint32_t c)
{
	uint64_t lo = F->off[u], hi = F->off[u + 1];
	while (lo < hi) {
		uint64_t mid = lo + (hi - lo) / 2;
		uint32_t mc = F->e[mid].c;
		if (mc < c)
			lo = mid + 1;
		else if (mc > c)
			hi = mid;
		else
			return F->e[mid].v;
	}
	return 0.0;
}

int refine_agm(const struct graph *g, const struct agm *in, const struct fcsr *F,
	       const struct refine_params *p, struct agm *out, struct refine_report *rep)
{
	double t0 = util_now();
	const struct cover *ic = &in->cover;
	uint32_t k = ic->k;
	struct by_id *ord = NULL;
	double *pv = NULL;
	struct refine *r = NULL;
	struct cover c, found;
	memset(&c, 0, sizeof c);
	memset(&found, 0, sizeof found);
	memset(out, 0, sizeof *out);
	if (F && F->n != g->n)
		return error("strengths have %" PRIu32 " rows, graph has %" PRIu32 " nodes", F->n,
			     g->n);
	/* the start, communities by increasing id: sizes tie by id afterwards */
	ord = util_malloc(k ? k : 1, sizeof *ord);
	pv = util_malloc(k ? k : 1, sizeof *pv);
	c.n = ic->n;
	c.k = k;
	c.off = util_calloc((size_t)k + 1, sizeof *c.off);
	c.label = util_calloc(k ? k : 1, sizeof *c.label);
	c.mem = util_malloc(ic->off && ic->off[k] ? ic->off[k] : 1, sizeof *c.mem);
	if (!ord || !pv || !c.off || !c.label || !c.mem)
		goto fail;
	for (uint32_t i = 0; i < k; i++)
		ord[i] = (struct by_id){ in->comms[i].id, i };
	qsort(ord, k, sizeof *ord, by_id_cmp);
	for (uint32_t j = 0; j < k; j++) {
		uint32_t i = ord[j].at;
		uint32_t size = cover_size(ic, i);
		c.off[j + 1] = c.off[j] + size;
		memcpy(c.mem + c.off[j], ic->mem + ic->off[i], (size_t)size * sizeof *c.mem);
		if (!(c.label[j] = util_strdup(ic->label[i] ? ic->label[i] : "")))
			goto fail;
		pv[j] = in->comms[i].p;
	}
	r = refine_new(g, &c, pv, in->epsilon);
	if (!r || refine_run(r, p, rep) < 0)
		goto fail;
	if (rep->added + rep->removed == 0) {
		if (agm_copy(out, in) < 0)
			goto fail;
	} else {
		if (refine_cover(r, &found, pv) < 0 ||
		    agm_from_cover_p(out, g, &found, in->epsilon, pv) < 0)
			goto fail;
		for (uint32_t i = 0; i < out->cover.k; i++) {
			uint32_t id = ord[out->comms[i].id].id; /* index in found -> column */
			out->comms[i].id = id;
			for (uint64_t j = out->cover.off[i]; j < out->cover.off[i + 1]; j++)
				out->strength[j] = F ? strength_of(F, out->cover.mem[j], id) : 1.0;
		}
	}
	rep->loglik_before = in->loglik;
	rep->loglik_after = out->loglik;
	rep->seconds = util_now() - t0;
	refine_free(r);
	cover_release(&c);
	cover_release(&found);
	free(ord);
	free(pv);
	return 0;
fail:
	agm_release(out);
	refine_free(r);
	cover_release(&c);
	cover_release(&found);
	free(ord);
	free(pv);
	return -1;
}
