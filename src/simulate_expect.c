/*
 * simulate_expect: the exact expected edge count of an AGM, and p_c with
 * the scale that meets a mean-degree target (see simulate.c).
 *
 * The idea: pairs in exactly one community give p_c each, so
 * sum_c C(s_c, 2) p_c counts them; only the pairs sharing two or more
 * communities are listed, grouped by the set they share (struct multi),
 * and corrected to 1 - prod (1 - p_c). A newcomer's trap: a shared set must
 * be counted once, in the group of its first two communities.
 *
 * Two-mode (s->n1 > 0): only pairs of two kinds count: a community gives
 * a_c b_c pairs (its members of each kind), node types are split by kind,
 * and two types share pairs only when of two kinds (never a type with
 * itself); all pairs are n1 (n - n1).
 */
#include "simulate-internal.h"

#include <inttypes.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/util.h"

/* ------------------------------------------------------------------ */
/* Exact expectation */

/*
 * The pairs sharing two or more communities, grouped by the set shared:
 * nsets sets; set i is ids[off[i] .. off[i+1]) (increasing), shared by
 * count[i] pairs.
 *
 * Built from node types: the nodes in two or more communities, grouped by
 * their whole set of communities (a type, held by cnt nodes). Two nodes of
 * types A and B share A & B, and there are cnt_A cnt_B such pairs
 * (C(cnt_A, 2) when A = B). Only type pairs that share two communities or
 * more matter: they are found through the groups of types holding both c
 * and d, for each pair c < d, and a shared set is counted once, in the
 * group of its first two communities. With sparse overlap the types are
 * nodes and the groups tiny; with dense overlap the types are few.
 */
struct multi {
	uint64_t nsets;
	uint64_t *off;
	uint32_t *ids;
	uint64_t *count;
	uint64_t *sizes2; /* per community C(size, 2); two-mode a_c b_c */
	uint32_t k;
	uint32_t n1;      /* two-mode: ids below are the first kind; else 0 */
};

/* Two-mode: 1 when u and v are of one kind (their pair is no pair). */
static int same_kind(uint32_t n1, uint32_t u, uint32_t v)
{
	return n1 && (u < n1) == (v < n1);
}

/* The pairs that may be linked among n nodes. */
static double all_pairs(const struct multi *mu, uint32_t n)
{
	return mu->n1 ? (double)mu->n1 * (double)(n - mu->n1) : (double)n * ((double)n - 1.0) / 2.0;
}

static void multi_release(struct multi *mu)
{
	free(mu->off);
	free(mu->ids);
	free(mu->count);
	free(mu->sizes2);
	memset(mu, 0, sizeof *mu);
}

/* Node lists for the type sort (qsort has no context argument). */
static const uint64_t *sort_noff;
static const uint32_t *sort_ncom;

static int cmp_by_set(const void *a, const void *b)
{
	uint32_t u = *(const uint32_t *)a, v = *(const uint32_t *)b;
	uint64_t i = sort_noff[u], j = sort_noff[v];
	for (; i < sort_noff[u + 1] && j < sort_noff[v + 1]; i++, j++)
		if (sort_ncom[i] != sort_ncom[j])
			return sort_ncom[i] < sort_ncom[j] ? -1 : 1;
	uint64_t lu = sort_noff[u + 1] - sort_noff[u], lv = sort_noff[v + 1] - sort_noff[v];
	if (lu != lv)
		return lu < lv ? -1 : 1;
	return util_cmp_uint(u, v);
}

struct trip {
	uint32_t c, d, t;
};

static int cmp_trip(const void *a, const void *b)
{
	const struct trip *x = a, *y = b;
	if (x->c != y->c)
		return x->c < y->c ? -1 : 1;
	if (x->d != y->d)
		return x->d < y->d ? -1 : 1;
	return util_cmp_uint(x->t, y->t);
}

/* A record: the pair count (two words, low first), the set's length, then
 * the ids padded with UINT32_MAX; RW words. Sorted by set. */
#define RW (3 + SIMULATE_MAX_MEMBERSHIPS)

static int cmp_rec(const void *a, const void *b)
{
	const uint32_t *x = a, *y = b;
	for (unsigned i = 2; i < RW; i++)
		if (x[i] != y[i])
			return x[i] < y[i] ? -1 : 1;
	return 0;
}

static uint64_t rec_count(const uint32_t *r)
{
	return (uint64_t)r[0] | (uint64_t)r[1] << 32;
}

/* Sort rec[0..n) and merge equal sets (adding counts); returns the new n. */
static uint64_t rec_compress(uint32_t *rec, uint64_t n)
{
	if (n < 2)
		return n;
	qsort(rec, n, RW * sizeof *rec, cmp_rec);
	uint64_t m = 0;
	for (uint64_t i = 0; i < n; i++) {
		uint32_t *r = rec + i * RW;
		if (m && !cmp_rec(rec + (m - 1) * RW, r)) {
			uint32_t *q = rec + (m - 1) * RW;
			uint64_t c = rec_count(q) + rec_count(r);
			q[0] = (uint32_t)c;
			q[1] = (uint32_t)(c >> 32);
		} else {
			if (m != i)
				memcpy(rec + m * RW, r, RW * sizeof *rec);
			m++;
		}
	}
	return m;
}

/* What multi_build() works with: each node's communities
 * (ncom[noff[u] .. noff[u+1]), increasing), the types (trep[t] a node of
 * type t, held by tcnt[t] nodes), the (c, d, type) triples sorted, and the
 * records of shared sets (RW words each). */
struct mwork {
	uint64_t *noff;
	uint32_t *ncom;
	uint32_t *trep;
	uint64_t *tcnt;
	uint32_t ntype;
	struct trip *tr;
	uint64_t ntrip;
	uint32_t *rec;
	uint64_t nrec, rcap;
};

static void mwork_release(struct mwork *w)
{
	UTIL_FREE_ALL(w->noff, w->ncom, w->trep, w->tcnt, w->tr, w->rec);
}

int simulate_node_lists(const struct cover *cv, uint64_t **noffp, uint32_t **ncomp)
{
	uint32_t n = cv->n, k = cv->k;
	uint64_t nm = cv->off[k];
	uint64_t *noff = util_calloc((size_t)n + 1, sizeof *noff);
	uint32_t *ncom = util_malloc(nm ? nm : 1, sizeof *ncom);
	uint64_t *fill = util_malloc((size_t)n + 1, sizeof *fill);
	if (!noff || !ncom || !fill) {
		UTIL_FREE_ALL(noff, ncom, fill);
		return -1;
	}
	for (uint64_t i = 0; i < nm; i++)
		noff[cv->mem[i] + 1]++;
	for (uint32_t u = 0; u < n; u++)
		noff[u + 1] += noff[u];
	memcpy(fill, noff, ((size_t)n + 1) * sizeof *fill);
	for (uint32_t c = 0; c < k; c++)
		for (uint64_t i = cv->off[c]; i < cv->off[c + 1]; i++)
			ncom[fill[cv->mem[i]]++] = c; /* increasing c per node */
	free(fill);
	*noffp = noff;
	*ncomp = ncom;
	return 0;
}

/* Each node's communities, and per community C(size, 2). Returns 0 or -1. */
static int node_lists(struct mwork *w, struct multi *mu, const struct cover *cv)
{
	uint32_t k = cv->k;
	mu->sizes2 = util_malloc(k ? k : 1, sizeof *mu->sizes2);
	if (!mu->sizes2 || simulate_node_lists(cv, &w->noff, &w->ncom))
		return -1;
	for (uint32_t c = 0; c < k; c++) {
		uint64_t sz = cover_size(cv, c), a = 0;
		if (!mu->n1) {
			mu->sizes2[c] = sz * (sz - (sz > 0)) / 2;
			continue;
		}
		while (a < sz && cv->mem[cv->off[c] + a] < mu->n1)
			a++;
		mu->sizes2[c] = a * (sz - a);
	}
	return 0;
}

/* The types: overlapping nodes sorted by their sets. Returns 0 or -1. */
static int node_types(struct mwork *w, uint32_t n, uint32_t n1)
{
	const uint64_t *noff = w->noff;
	const uint32_t *ncom = w->ncom;
	uint32_t nover = 0;
	for (uint32_t u = 0; u < n; u++) {
		uint64_t d = noff[u + 1] - noff[u];
		if (d > SIMULATE_MAX_MEMBERSHIPS)
			return error("a node is in %" PRIu64 " communities; at most %u are supported",
				     d, SIMULATE_MAX_MEMBERSHIPS);
		nover += d >= 2;
	}
	uint32_t *over = util_malloc(nover ? nover : 1, sizeof *over);
	w->trep = util_malloc(nover ? nover : 1, sizeof *w->trep);
	w->tcnt = util_malloc(nover ? nover : 1, sizeof *w->tcnt);
	if (!over || !w->trep || !w->tcnt) {
		free(over);
		return -1;
	}
	nover = 0;
	for (uint32_t u = 0; u < n; u++)
		if (noff[u + 1] - noff[u] >= 2)
			over[nover++] = u;
	sort_noff = noff;
	sort_ncom = ncom;
	if (nover > 1)
		qsort(over, nover, sizeof *over, cmp_by_set);
	uint32_t ntype = 0;
	for (uint32_t i = 0; i < nover; i++) {
		uint32_t u = over[i];
		int same = 0;
		if (ntype) {
			uint32_t r = w->trep[ntype - 1];
			uint64_t lu = noff[u + 1] - noff[u], lr = noff[r + 1] - noff[r];
			same = lu == lr && !memcmp(ncom + noff[u], ncom + noff[r], lu * sizeof *ncom) &&
			       (!n1 || same_kind(n1, u, r));
		}
		if (same) {
			w->tcnt[ntype - 1]++;
		} else {
			w->trep[ntype] = u; /* a node of the type stands for its set */
			w->tcnt[ntype++] = 1;
		}
	}
	w->ntype = ntype;
	free(over);
	return 0;
}

/* The (c, d, type) triples for every pair c < d of a type's set, sorted,
 * and the refusal of too many type pairs to visit. Returns 0 or -1. */
static int type_triples(struct mwork *w)
{
	uint64_t ntrip = 0;
	for (uint32_t t = 0; t < w->ntype; t++) {
		uint64_t d = w->noff[w->trep[t] + 1] - w->noff[w->trep[t]];
		ntrip += d * (d - 1) / 2;
	}
	struct trip *tr = w->tr = util_malloc(ntrip ? ntrip : 1, sizeof *tr);
	if (!tr)
		return -1;
	w->ntrip = ntrip;
	uint64_t x = 0;
	for (uint32_t t = 0; t < w->ntype; t++) {
		uint32_t u = w->trep[t];
		for (uint64_t a = w->noff[u]; a < w->noff[u + 1]; a++)
			for (uint64_t b = a + 1; b < w->noff[u + 1]; b++)
				tr[x++] = (struct trip){ w->ncom[a], w->ncom[b], t };
	}
	if (ntrip > 1)
		qsort(tr, ntrip, sizeof *tr, cmp_trip);
	double bound = 0.0; /* type pairs visited by shared_sets() */
	for (uint64_t g = 0, h; g < ntrip; g = h) {
		for (h = g; h < ntrip && tr[h].c == tr[g].c && tr[h].d == tr[g].d; h++)
			;
		bound += (double)(h - g) * (double)(h - g + 1) / 2.0;
	}
	if (bound > SIMULATE_MAX_MULTI_PAIRS)
		return error("too many kinds of overlap to count exactly (%.3g pairs of membership "
			     "sets share two communities or more; at most %.3g): lower the overlap "
			     "or the memberships per node", bound, SIMULATE_MAX_MULTI_PAIRS);
	return 0;
}

/* Append the record of pairs node pairs sharing set (ns ids), compressing
 * or growing the records when full. Returns 0 or -1. */
static int add_record(struct mwork *w, uint64_t pairs, const uint32_t *set, uint32_t ns)
{
	if (w->nrec == w->rcap) {
		uint64_t before = w->nrec;
		if (w->nrec >= (1u << 20))
			w->nrec = rec_compress(w->rec, w->nrec);
		if (w->nrec > before / 2 || !w->rcap) { /* compressing did not free enough */
			uint64_t nc = w->rcap ? w->rcap * 2 : 1024;
			uint32_t *y = util_realloc(w->rec, nc, RW * sizeof *w->rec);
			if (!y)
				return -1;
			w->rec = y;
			w->rcap = nc;
		}
	}
	uint32_t *r = w->rec + w->nrec * RW;
	r[0] = (uint32_t)pairs;
	r[1] = (uint32_t)(pairs >> 32);
	r[2] = ns;
	for (unsigned z = 0; z < SIMULATE_MAX_MEMBERSHIPS; z++)
		r[3 + z] = z < ns ? set[z] : UINT32_MAX;
	w->nrec++;
	return 0;
}

/* The sets shared by two types of the group tr[g .. h) (all holding c and
 * d), each counted once: in the group of its first two communities. */
static int shared_sets(struct mwork *w, uint64_t g, uint64_t h, uint32_t n1)
{
	const struct trip *tr = w->tr;
	const uint64_t *noff = w->noff;
	const uint32_t *ncom = w->ncom;
	for (uint64_t i = g; i < h; i++)
		for (uint64_t j = i; j < h; j++) {
			uint32_t ta = tr[i].t, tb = tr[j].t, u = w->trep[ta], v = w->trep[tb];
			if (same_kind(n1, u, v))
				continue; /* two-mode: with itself too */
			uint32_t set[SIMULATE_MAX_MEMBERSHIPS];
			uint32_t ns = simulate_shared(noff, ncom, u, v, set);
			if (set[0] != tr[g].c || set[1] != tr[g].d)
				continue;
			uint64_t pairs = i == j ? w->tcnt[ta] * (w->tcnt[ta] - 1) / 2 :
						  w->tcnt[ta] * w->tcnt[tb];
			if (pairs && add_record(w, pairs, set, ns))
				return -1;
		}
	return 0;
}

static int multi_build(struct multi *mu, const struct cover *cv, uint32_t n1)
{
	struct mwork w;
	memset(mu, 0, sizeof *mu);
	memset(&w, 0, sizeof w);
	mu->k = cv->k;
	mu->n1 = n1;
	int rc = -1;
	if (node_lists(&w, mu, cv) || node_types(&w, cv->n, n1) || type_triples(&w))
		goto out;
	for (uint64_t g = 0, h; g < w.ntrip; g = h) {
		for (h = g; h < w.ntrip && w.tr[h].c == w.tr[g].c && w.tr[h].d == w.tr[g].d; h++)
			;
		if (shared_sets(&w, g, h, n1))
			goto out;
	}
	uint64_t nrec = rec_compress(w.rec, w.nrec), nids = 0;
	const uint32_t *rec = w.rec;
	for (uint64_t i = 0; i < nrec; i++)
		nids += rec[i * RW + 2];
	mu->off = util_malloc(nrec + 1, sizeof *mu->off);
	mu->ids = util_malloc(nids ? nids : 1, sizeof *mu->ids);
	mu->count = util_malloc(nrec ? nrec : 1, sizeof *mu->count);
	if (!mu->off || !mu->ids || !mu->count)
		goto out;
	mu->off[0] = 0;
	for (uint64_t i = 0; i < nrec; i++) {
		const uint32_t *r = rec + i * RW;
		memcpy(mu->ids + mu->off[i], r + 3, r[2] * sizeof *mu->ids);
		mu->off[i + 1] = mu->off[i] + r[2];
		mu->count[i] = rec_count(r);
	}
	mu->nsets = nrec;
	rc = 0;
out:
	mwork_release(&w);
	if (rc)
		multi_release(mu);
	return rc;
}

/* Sum over pairs of P(u, v). Pairs sharing none: epsilon each. */
static double multi_expected(const struct multi *mu, uint32_t n, const double *p, double eps)
{
	double one = 0.0; /* sum of p_c over the pairs inside each community */
	for (uint32_t c = 0; c < mu->k; c++)
		one += (double)mu->sizes2[c] * p[c];
	double corr = 0.0; /* union minus sum, for pairs sharing two or more */
	for (uint64_t i = 0; i < mu->nsets; i++) {
		double prod = 1.0, sum = 0.0;
		for (uint64_t j = mu->off[i]; j < mu->off[i + 1]; j++) {
			prod *= 1.0 - p[mu->ids[j]];
			sum += p[mu->ids[j]];
		}
		corr += (double)mu->count[i] * ((1.0 - prod) - sum);
	}
	return eps * all_pairs(mu, n) + (1.0 - eps) * (one + corr);
}

double simulate_expected_edges(const struct cover *c, const double *p, double epsilon)
{
	struct multi mu;
	if (multi_build(&mu, c, 0))
		return -1.0;
	double e = multi_expected(&mu, c->n, p, epsilon);
	multi_release(&mu);
	return e;
}

/* Node pairs sharing at least one community: the pairs of each
 * community, less the repeats of pairs sharing several (a pair sharing
 * |S| communities is in |S| communities' pairs). */
static uint64_t multi_pairs_together(const struct multi *mu)
{
	uint64_t t = 0;
	for (uint32_t c = 0; c < mu->k; c++)
		t += mu->sizes2[c];
	for (uint64_t i = 0; i < mu->nsets; i++)
		t -= mu->count[i] * (mu->off[i + 1] - mu->off[i] - 1);
	return t;
}

/*
 * The scale of the weights w (k of them) that gives target expected edges
 * with background eps, into *scale (p_c = min(1, scale w_c) left in pc).
 * p_c is non-decreasing in the scale, and so is the expectation: bisection
 * finds it. what names the target in messages, and mixing says what to
 * raise. Returns 0 or -1.
 */
static int solve_scale(const struct multi *mu, uint32_t n, const double *w, double *pc,
		       double target, double eps, const char *what, int mixing, double *scale)
{
	uint32_t k = mu->k;
	double wmin = 1.0; /* the scale beyond which every p_c is 1 */
	for (uint32_t c = 0; c < k; c++)
		if (w[c] > 0.0 && w[c] < wmin)
			wmin = w[c];
	double hi = 1.0 / wmin, lo = 0.0;
	for (uint32_t c = 0; c < k; c++)
		pc[c] = fmin(1.0, hi * w[c]);
	double top = multi_expected(mu, n, pc, eps);
	double bottom = eps * all_pairs(mu, n);
	if (top < target)
		return error("%s of %g is out of reach: these communities give at most %.6g (%s)",
			     what, 2.0 * target / n, 2.0 * top / n,
			     mixing ? "raise the sizes or the overlap, or lower the mixing" :
				      "raise the sizes, the overlap or epsilon");
	if (bottom > target)
		return error("%s of %g is out of reach: the background alone gives %.6g (lower "
			     "epsilon)", what, 2.0 * target / n, 2.0 * bottom / n);
	for (int it = 0; it < 200 && hi - lo > 1e-15 * hi; it++) {
		double mid = 0.5 * (lo + hi);
		for (uint32_t c = 0; c < k; c++)
			pc[c] = fmin(1.0, mid * w[c]);
		if (multi_expected(mu, n, pc, eps) < target)
			lo = mid;
		else
			hi = mid;
	}
	*scale = 0.5 * (lo + hi);
	return 0;
}

/* Step 2b: p_c, the scale for a mean degree target, and with mixing the
 * background: the communities aim at (1 - mixing) of the target with no
 * background, giving E(0); then E(eps) = E(0) + eps (pairs - E(0)) meets
 * the whole target T exactly at eps = (T - E(0)) / (pairs - E(0)). */
int simulate_plant_probabilities(const struct simulate_params *p, struct simulate *s)
{
	uint32_t k = s->k;
	double *w = util_malloc(k ? k : 1, sizeof *w);
	s->p = util_malloc(k ? k : 1, sizeof *s->p);
	if (!w || !s->p) {
		free(w);
		return -1;
	}
	struct rng r;
	simulate_stream(&r, p->seed, S_LINKPROB, 0);
	for (uint32_t c = 0; c < k; c++)
		w[c] = p->p_lo == p->p_hi ? p->p_lo : p->p_lo + (p->p_hi - p->p_lo) * rng_uniform(&r);
	if (p->even_degrees)
		for (uint32_t c = 0; c < k; c++)
			w[c] /= (double)cover_size(&s->truth, c) - 1.0; /* sizes >= 2 */
	struct multi mu;
	if (multi_build(&mu, &s->truth, s->n1)) {
		free(w);
		return -1;
	}
	int rc = 0, mixing = p->mixing >= 0.0;
	double pairs = all_pairs(&mu, p->n);
	s->pairs = pairs;
	s->scale = 1.0;
	if (p->mean_degree > 0.0) {
		double target = p->mean_degree * p->n / 2.0;
		if (mixing)
			rc = solve_scale(&mu, p->n, w, s->p, (1.0 - p->mixing) * target, 0.0,
					 "a mean degree within the communities", 1, &s->scale);
		else
			rc = solve_scale(&mu, p->n, w, s->p, target, p->epsilon, "a mean degree", 0,
					 &s->scale);
		for (uint32_t c = 0; c < k; c++)
			s->p[c] = fmin(1.0, s->scale * w[c]);
		if (!rc && mixing) {
			double e0 = multi_expected(&mu, p->n, s->p, 0.0);
			s->epsilon = p->mixing > 0.0 ? fmax(0.0, (target - e0) / (pairs - e0)) : 0.0;
		}
	}
	for (uint32_t c = 0; c < k; c++)
		s->p[c] = fmin(1.0, s->scale * w[c]);
	s->expected_edges = multi_expected(&mu, p->n, s->p, s->epsilon);
	s->expected_community_edges = multi_expected(&mu, p->n, s->p, 0.0);
	s->pairs_apart = (s->n1 ? (uint64_t)s->n1 * (p->n - s->n1) : (uint64_t)p->n * (p->n - 1) / 2) -
			 multi_pairs_together(&mu);
	if (!rc && s->expected_edges > SIMULATE_MAX_EDGES)
		rc = error("the model expects %.4g edges; at most %.3g can be drawn (lower the "
			   "link probabilities, the mean degree or epsilon)", s->expected_edges,
			   SIMULATE_MAX_EDGES);
	multi_release(&mu);
	free(w);
	return rc;
}

uint32_t simulate_shared(const uint64_t *noff, const uint32_t *ncom, uint32_t u, uint32_t v,
			 uint32_t *set)
{
	uint32_t ns = 0;
	uint64_t a = noff[u], b = noff[v];
	while (a < noff[u + 1] && b < noff[v + 1]) {
		if (ncom[a] == ncom[b]) {
			set[ns++] = ncom[a];
			a++;
			b++;
		} else if (ncom[a] < ncom[b]) {
			a++;
		} else {
			b++;
		}
	}
	return ns;
}
