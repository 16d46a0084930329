/*
 * simulate: sample a graph from a planted AGM (see simulate.h).
 *
 * The idea, in four steps, each drawn from its own random stream derived
 * from the seed (so no step's draws depend on another's, or on threads):
 *
 *  1. Memberships per node: a random set of round(overlap * n) nodes gets
 *     2 .. max_memberships (uniformly), the rest 1.
 *  2. Community sizes: floor(X) with X from the power law of density
 *     ~ x^-gamma on [min, max + 1), drawn until they hold every membership
 *     (the last one trimmed, or dropped when trimming would take it below
 *     the minimum), or exactly k of them with -k. The per-node counts are
 *     then nudged (one at a time, over a random order of the nodes) until
 *     they add up to the sizes.
 *  3. Dealing: the membership slots (node u written m_u times) are shuffled
 *     and cut into the communities. A node dealt twice to one community is
 *     swapped with a random slot elsewhere that keeps both sides free of
 *     repeats.
 *  4. Edges: for each community, the pairs of its members are numbered
 *     0 .. s(s-1)/2 - 1 and visited by geometric skips (the gap to the next
 *     drawn pair is Geometric(p_c): floor(log(1-U) / log(1-p_c)); Batagelj
 *     & Brandes, Phys. Rev. E 71, 036113, 2005), so the
 *     cost is the number of pairs drawn, not the number of pairs. The
 *     background draws from all n(n-1)/2 pairs the same way, in 64 fixed
 *     slices of rows. The draws are independent, so a pair is drawn at
 *     least once with probability 1 - (1-eps) prod_{c in S} (1-p_c): the
 *     union of the draws, deduplicated, is exactly a sample of the AGM.
 *     Items (communities, slices) are shared out to the threads through an
 *     atomic counter; each item has its own stream, and the union is
 *     sorted (LSD radix sort of 64-bit keys) and deduplicated, so the result
 *     is the same set whichever thread drew what.
 *
 * The expected edge count is exact: pairs in exactly one community give
 * p_c each, so sum_c C(s_c, 2) p_c counts them; only the pairs sharing two
 * or more communities are listed (from the nodes in several), by the set
 * they share, and corrected to 1 - prod (1 - p_c). A mean-degree target is
 * met by bisection on the common scale of p_c over this exact expectation.
 *
 * The one thing a newcomer gets wrong: the pair decoder must step over
 * whole rows of the pair triangle (i -= j; j++) rather than compute square
 * roots, or rounding will skip or repeat pairs near row ends; and the
 * stream of an item must not depend on which thread draws it.
 */
#include "coterie/simulate.h"

#include <errno.h>
#include <fcntl.h>
#include <inttypes.h>
#include <limits.h>
#include <math.h>
#include <pthread.h>
#include <stdatomic.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include <jansson.h>

#include "coterie/rng.h"
#include "coterie/util.h"

/* Independent streams: one tag per step, one index per item. */
enum { S_MEMBERSHIPS = 1, S_SIZES, S_DEAL, S_LINKPROB, S_COMMUNITY, S_BACKGROUND };
#define BACKGROUND_SLICES 64u

static uint64_t mix64(uint64_t z)
{
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
	z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
	return z ^ (z >> 31);
}

static void stream(struct rng *r, uint64_t seed, uint64_t tag, uint64_t index)
{
	uint64_t x = mix64(seed + 0x9e3779b97f4a7c15ULL * (tag + 1));
	x = mix64(x ^ (index * 0xd1b54a32d192ed03ULL + 0x632be59bd9b4e019ULL));
	rng_init(r, x);
}

void simulate_params_default(struct simulate_params *p)
{
	memset(p, 0, sizeof *p);
	p->n = 1000;
	p->k = 0;
	p->size_min = 10;
	p->size_max = 100;
	p->size_exponent = 2.0;
	p->overlap = 0.1;
	p->max_memberships = 2;
	p->p_lo = p->p_hi = 1.0;
	p->mean_degree = 10.0;
	p->epsilon = 0.0;
	p->seed = 1;
	p->threads = 1;
}

int simulate_params_check(const struct simulate_params *p)
{
	if (p->n < 2 || p->n > SIMULATE_MAX_NODES)
		return error("the number of nodes must be from 2 to %u, not %u", SIMULATE_MAX_NODES,
			     p->n);
	if (p->size_min < 2 || p->size_min > p->size_max)
		return error("community sizes must satisfy 2 <= min <= max, not %u:%u", p->size_min,
			     p->size_max);
	if (p->size_max > p->n)
		return error("communities of up to %u members do not fit in %u nodes", p->size_max,
			     p->n);
	if (!(p->size_exponent >= 0.0 && p->size_exponent <= 100.0))
		return error("the size exponent must be from 0 to 100");
	if (!(p->overlap >= 0.0 && p->overlap <= 1.0))
		return error("the overlapping share must be from 0 to 1");
	if (p->max_memberships < 2 || p->max_memberships > SIMULATE_MAX_MEMBERSHIPS)
		return error("the most memberships per node must be from 2 to %u, not %u",
			     SIMULATE_MAX_MEMBERSHIPS, p->max_memberships);
	if (!(p->p_lo >= 0.0 && p->p_lo <= p->p_hi && p->p_hi <= 1.0))
		return error("link probabilities must satisfy 0 <= low <= high <= 1");
	if (!(p->mean_degree >= 0.0 && p->mean_degree < (double)p->n))
		return error("the mean degree must be from 0 to the number of nodes less one");
	if (p->mean_degree > 0.0 && p->p_hi <= 0.0)
		return error("a mean degree needs link probabilities above 0");
	if (p->even_degrees && !(p->mean_degree > 0.0))
		return error("even degrees need a mean degree to aim at");
	if (!(p->epsilon >= 0.0 && p->epsilon < 1.0))
		return error("the background probability must be from 0 to below 1");
	if (p->threads < 1)
		return error("at least one thread is needed");
	uint32_t cap = p->max_memberships;
	if (p->k) {
		if (p->k < cap)
			cap = p->k;
		if ((uint64_t)p->k * p->size_min > (uint64_t)p->n * cap)
			return error("%u communities of at least %u members need more than %u nodes "
				     "with at most %u memberships each", p->k, p->size_min, p->n, cap);
	}
	return 0;
}

/* ------------------------------------------------------------------ */
/* The planted cover */

static uint32_t draw_size(struct rng *r, const struct simulate_params *p)
{
	double a = p->size_min, b = (double)p->size_max + 1.0, g = p->size_exponent;
	double u = rng_uniform(r), x;
	if (fabs(g - 1.0) < 1e-12) {
		x = a * exp(u * log(b / a));
	} else {
		double e = 1.0 - g;
		double lo = pow(a, e), hi = pow(b, e);
		x = pow(lo + u * (hi - lo), 1.0 / e);
	}
	double f = floor(x);
	if (!(f >= p->size_min))
		return p->size_min;
	if (f > p->size_max)
		return p->size_max;
	return (uint32_t)f;
}

/* The sizes: k of them, or as many as hold total memberships. */
static uint32_t *draw_sizes(const struct simulate_params *p, uint64_t total, uint32_t *k_out)
{
	struct rng r;
	stream(&r, p->seed, S_SIZES, 0);
	uint32_t cap = p->k ? p->k : 64, k = 0;
	uint32_t *s = util_malloc(cap, sizeof *s);
	if (!s)
		return NULL;
	if (p->k) {
		for (k = 0; k < p->k; k++)
			s[k] = draw_size(&r, p);
	} else {
		uint64_t sum = 0;
		while (sum < total) {
			uint32_t x = draw_size(&r, p);
			if (sum + x > total) {
				if (total - sum < p->size_min)
					break; /* dropped: the counts are nudged down instead */
				x = (uint32_t)(total - sum);
			}
			if (k == cap) {
				if (cap > UINT32_MAX / 2) {
					free(s);
					error("too many communities");
					return NULL;
				}
				uint32_t *t = util_realloc(s, (size_t)cap * 2, sizeof *s);
				if (!t) {
					free(s);
					return NULL;
				}
				s = t;
				cap *= 2;
			}
			s[k++] = x;
			sum += x;
		}
		if (k == 0) { /* fewer memberships than the smallest community */
			s[k++] = p->size_min;
		}
	}
	*k_out = k;
	return s;
}

/* Nudge the counts m[] (sum *cur) to add up to target, one membership at a
 * time over the order perm, at most cap each. Removals take from nodes in
 * several communities first, so every node stays covered. With
 * overlap > 0 (a fixed -k whose sizes hold fewer memberships than were
 * drawn) they first leave nodes of one community uncovered, as long as
 * the nodes in several communities stay at most that share of the
 * covered ones, so the asked-for overlap survives. Returns 0 or -1. */
static int nudge_counts(uint8_t *m, const uint32_t *perm, uint32_t n, uint64_t *cur,
			uint64_t target, uint32_t cap, double overlap)
{
	uint64_t covered = 0, several = 0;
	for (uint32_t u = 0; u < n; u++) {
		covered += m[u] >= 1;
		several += m[u] >= 2;
	}
	/* two cursors over perm: a single membership goes while the share
	 * allows it, else one membership of a node in several */
	for (uint32_t i = 0, j = 0; overlap > 0 && *cur > target;) {
		int single = (double)(covered - 1) * overlap >= (double)several;
		while (single && i < n && m[perm[i]] != 1)
			i++;
		while (!single && j < n && m[perm[j]] < 2)
			j++;
		if (single && i < n) {
			m[perm[i]] = 0;
			covered--;
		} else if (!single && j < n) {
			if (--m[perm[j]] == 1)
				several--;
		} else {
			break; /* the loops below finish the job */
		}
		(*cur)--;
	}
	while (*cur < target) {
		int moved = 0;
		for (uint32_t i = 0; i < n && *cur < target; i++)
			if (m[perm[i]] < cap) {
				m[perm[i]]++;
				(*cur)++;
				moved = 1;
			}
		if (!moved)
			return error("the communities hold more memberships than the nodes can take");
	}
	for (uint32_t floor_ = 2; *cur > target; floor_--) {
		int moved;
		do {
			moved = 0;
			for (uint32_t i = 0; i < n && *cur > target; i++)
				if (m[perm[i]] >= floor_) {
					m[perm[i]]--;
					(*cur)--;
					moved = 1;
				}
		} while (moved && *cur > target);
		if (floor_ == 1)
			break;
	}
	return *cur == target ? 0 : error("cannot fit the memberships to the community sizes");
}

static int cmp_u32(const void *a, const void *b)
{
	uint32_t x = *(const uint32_t *)a, y = *(const uint32_t *)b;
	return (x > y) - (x < y);
}

/* The community whose slots [off[c], off[c+1]) hold slot j. */
static uint32_t chunk_of(const uint64_t *off, uint32_t k, uint64_t j)
{
	uint32_t lo = 0, hi = k; /* off[lo] <= j < off[hi] */
	while (hi - lo > 1) {
		uint32_t mid = lo + (hi - lo) / 2;
		if (off[mid] <= j)
			lo = mid;
		else
			hi = mid;
	}
	return lo;
}

/* Steps 1 to 3: fill s->truth. */
static int plant_cover(const struct simulate_params *p, struct simulate *s)
{
	uint32_t n = p->n;
	int rc = -1;
	uint8_t *m = util_calloc(n, 1);
	uint32_t *perm = util_malloc(n, sizeof *perm);
	uint32_t *sizes = NULL, *stamp = NULL, *slot = NULL, *dealt = NULL;
	uint64_t *doff = NULL;
	uint32_t k = 0;
	if (!m || !perm)
		goto out;
	struct rng r;
	stream(&r, p->seed, S_MEMBERSHIPS, 0);
	for (uint32_t u = 0; u < n; u++)
		perm[u] = u;
	rng_shuffle_u32(&r, perm, n);
	uint64_t over = (uint64_t)llround(p->overlap * n), total = 0;
	for (uint32_t i = 0; i < n; i++) {
		uint32_t u = perm[i];
		m[u] = (uint8_t)(i < over ? 2 + rng_below(&r, p->max_memberships - 1) : 1);
		total += m[u];
	}
	sizes = draw_sizes(p, total, &k);
	if (!sizes)
		goto out;
	uint64_t want = 0;
	for (uint32_t c = 0; c < k; c++)
		want += sizes[c];
	uint32_t cap = p->max_memberships < k ? p->max_memberships : k;
	for (uint32_t u = 0; u < n; u++)
		if (m[u] > cap) {
			total -= m[u] - cap;
			m[u] = (uint8_t)cap;
		}
	rng_shuffle_u32(&r, perm, n); /* a fresh order for the nudging */
	if (nudge_counts(m, perm, n, &total, want, cap, p->k ? p->overlap : 0.0))
		goto out;

	/* deal the slots */
	struct cover *cv = &s->truth;
	cv->n = n;
	cv->k = k;
	cv->off = util_malloc((size_t)k + 1, sizeof *cv->off);
	cv->label = util_calloc(k ? k : 1, sizeof *cv->label);
	slot = util_malloc(want ? want : 1, sizeof *slot);
	stamp = util_malloc(n, sizeof *stamp);
	if (!cv->off || !cv->label || !slot || !stamp)
		goto out;
	cv->off[0] = 0;
	for (uint32_t c = 0; c < k; c++)
		cv->off[c + 1] = cv->off[c] + sizes[c];
	uint64_t t = 0;
	for (uint32_t u = 0; u < n; u++)
		for (uint32_t i = 0; i < m[u]; i++)
			slot[t++] = u;
	struct rng rd;
	stream(&rd, p->seed, S_DEAL, 0);
	for (uint64_t i = want; i > 1; i--) { /* Fisher-Yates over 64-bit indices */
		uint64_t j = rng_below(&rd, i);
		uint32_t x = slot[i - 1];
		slot[i - 1] = slot[j];
		slot[j] = x;
	}
	/* the communities dealt so far, per node: dealt[doff[u] .. + ndealt[u]),
	 * at most m[u] of them (a node keeps its number of slots) */
	doff = util_malloc((size_t)n + 1, sizeof *doff);
	dealt = util_malloc(want ? want : 1, sizeof *dealt);
	if (!doff || !dealt)
		goto out;
	doff[0] = 0;
	for (uint32_t u = 0; u < n; u++)
		doff[u + 1] = doff[u] + m[u];
	memset(m, 0, n); /* from here m[u] counts u's dealt communities */
	memset(stamp, 0xff, (size_t)n * sizeof *stamp);
	for (uint32_t c = 0; c < k; c++) {
		uint64_t a = cv->off[c], b = cv->off[c + 1];
		for (uint64_t i = a; i < b; i++) {
			uint32_t u = slot[i];
			if (stamp[u] != c) {
				stamp[u] = c;
				continue;
			}
			/* u is twice in c: swap with a slot v elsewhere, v not in c, u not
			 * in v's community (checked there only if it is already dealt) */
			int done = 0;
			for (int tries = 0; tries < 100000 && !done; tries++) {
				uint64_t j = rng_below(&rd, want);
				if (j >= a && j < b)
					continue;
				uint32_t v = slot[j];
				if (stamp[v] == c)
					continue;
				uint32_t d = chunk_of(cv->off, k, j);
				if (d < c) {
					int has = 0;
					for (uint32_t x = 0; x < m[u] && !has; x++)
						has = dealt[doff[u] + x] == d;
					if (has)
						continue;
					for (uint32_t x = 0; x < m[v]; x++) /* v leaves d ... */
						if (dealt[doff[v] + x] == d) {
							dealt[doff[v] + x] = dealt[doff[v] + m[v] - 1];
							m[v]--;
							break;
						}
					dealt[doff[u] + m[u]++] = d; /* ... and u joins it */
				}
				slot[j] = u;
				slot[i] = v;
				stamp[v] = c;
				done = 1;
			}
			if (!done) {
				error("cannot deal the memberships without putting a node twice in a "
				      "community; try fewer memberships per node or smaller communities");
				goto out;
			}
		}
		for (uint64_t i = a; i < b; i++) {
			uint32_t u = slot[i];
			dealt[doff[u] + m[u]++] = c;
		}
	}
	for (uint32_t c = 0; c < k; c++) {
		qsort(slot + cv->off[c], sizes[c], sizeof *slot, cmp_u32);
		char lab[16];
		snprintf(lab, sizeof lab, "%u", c);
		if (!(cv->label[c] = util_strdup(lab)))
			goto out;
	}
	cv->mem = slot;
	slot = NULL;
	s->overlapping = s->uncovered = 0;
	for (uint32_t u = 0; u < n; u++) { /* m[u]: u's communities, all dealt */
		s->overlapping += m[u] >= 2;
		s->uncovered += m[u] == 0;
	}
	s->k = k;
	rc = 0;
out:
	free(m);
	free(perm);
	free(sizes);
	free(stamp);
	free(slot);
	free(dealt);
	free(doff);
	return rc;
}

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
	uint64_t *sizes2; /* per community C(size, 2) */
	uint32_t k;
};

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
	return (u > v) - (u < v);
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
	return (x->t > y->t) - (x->t < y->t);
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

static int multi_build(struct multi *mu, const struct cover *cv)
{
	memset(mu, 0, sizeof *mu);
	uint32_t n = cv->n, k = cv->k;
	uint64_t nm = cv->off[k];
	int rc = -1;
	uint64_t *noff = util_calloc((size_t)n + 1, sizeof *noff);
	uint32_t *ncom = util_malloc(nm ? nm : 1, sizeof *ncom);
	uint64_t *fill = NULL, *tcnt = NULL;
	uint32_t *over = NULL, *trep = NULL, *rec = NULL;
	struct trip *tr = NULL;
	mu->k = k;
	mu->sizes2 = util_malloc(k ? k : 1, sizeof *mu->sizes2);
	if (!noff || !ncom || !mu->sizes2)
		goto out;
	for (uint32_t c = 0; c < k; c++) {
		uint64_t sz = cover_size(cv, c);
		mu->sizes2[c] = sz * (sz - (sz > 0)) / 2;
		for (uint64_t i = cv->off[c]; i < cv->off[c + 1]; i++)
			noff[cv->mem[i] + 1]++;
	}
	for (uint32_t u = 0; u < n; u++)
		noff[u + 1] += noff[u];
	if (!(fill = util_malloc((size_t)n + 1, sizeof *fill)))
		goto out;
	memcpy(fill, noff, ((size_t)n + 1) * sizeof *fill);
	for (uint32_t c = 0; c < k; c++)
		for (uint64_t i = cv->off[c]; i < cv->off[c + 1]; i++)
			ncom[fill[cv->mem[i]]++] = c; /* increasing c per node */

	/* the types: overlapping nodes sorted by their sets */
	uint32_t nover = 0;
	for (uint32_t u = 0; u < n; u++) {
		uint64_t d = noff[u + 1] - noff[u];
		if (d > SIMULATE_MAX_MEMBERSHIPS) {
			error("a node is in %" PRIu64 " communities; at most %u are supported", d,
			      SIMULATE_MAX_MEMBERSHIPS);
			goto out;
		}
		nover += d >= 2;
	}
	over = util_malloc(nover ? nover : 1, sizeof *over);
	trep = util_malloc(nover ? nover : 1, sizeof *trep);
	tcnt = util_malloc(nover ? nover : 1, sizeof *tcnt);
	if (!over || !trep || !tcnt)
		goto out;
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
			uint32_t r = trep[ntype - 1];
			uint64_t lu = noff[u + 1] - noff[u], lr = noff[r + 1] - noff[r];
			same = lu == lr && !memcmp(ncom + noff[u], ncom + noff[r], lu * sizeof *ncom);
		}
		if (same) {
			tcnt[ntype - 1]++;
		} else {
			trep[ntype] = u; /* a node of the type stands for its set */
			tcnt[ntype++] = 1;
		}
	}
	uint64_t ntrip = 0;
	for (uint32_t t = 0; t < ntype; t++) {
		uint64_t d = noff[trep[t] + 1] - noff[trep[t]];
		ntrip += d * (d - 1) / 2;
	}
	tr = util_malloc(ntrip ? ntrip : 1, sizeof *tr);
	if (!tr)
		goto out;
	uint64_t x = 0;
	for (uint32_t t = 0; t < ntype; t++) {
		uint32_t u = trep[t];
		for (uint64_t a = noff[u]; a < noff[u + 1]; a++)
			for (uint64_t b = a + 1; b < noff[u + 1]; b++)
				tr[x++] = (struct trip){ ncom[a], ncom[b], t };
	}
	if (ntrip > 1)
		qsort(tr, ntrip, sizeof *tr, cmp_trip);
	double bound = 0.0; /* type pairs visited below */
	for (uint64_t g = 0, h; g < ntrip; g = h) {
		for (h = g; h < ntrip && tr[h].c == tr[g].c && tr[h].d == tr[g].d; h++)
			;
		bound += (double)(h - g) * (double)(h - g + 1) / 2.0;
	}
	if (bound > SIMULATE_MAX_MULTI_PAIRS) {
		error("too many kinds of overlap to count exactly (%.3g pairs of membership sets "
		      "share two communities or more; at most %.3g): lower the overlap or the "
		      "memberships per node", bound, SIMULATE_MAX_MULTI_PAIRS);
		goto out;
	}
	uint64_t nrec = 0, rcap = 0;
	for (uint64_t g = 0; g < ntrip;) {
		uint64_t h = g;
		while (h < ntrip && tr[h].c == tr[g].c && tr[h].d == tr[g].d)
			h++;
		for (uint64_t i = g; i < h; i++)
			for (uint64_t j = i; j < h; j++) {
				uint32_t ta = tr[i].t, tb = tr[j].t, u = trep[ta], v = trep[tb];
				uint32_t set[SIMULATE_MAX_MEMBERSHIPS], ns = 0;
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
				/* counted once: in the group of the set's first two */
				if (set[0] != tr[g].c || set[1] != tr[g].d)
					continue;
				uint64_t pairs = i == j ? tcnt[ta] * (tcnt[ta] - 1) / 2 : tcnt[ta] * tcnt[tb];
				if (!pairs)
					continue;
				if (nrec == rcap) {
					uint64_t before = nrec;
					if (nrec >= (1u << 20))
						nrec = rec_compress(rec, nrec);
					if (nrec > before / 2 || !rcap) { /* compressing did not free enough */
						uint64_t nc = rcap ? rcap * 2 : 1024;
						uint32_t *y = util_realloc(rec, nc, RW * sizeof *rec);
						if (!y)
							goto out;
						rec = y;
						rcap = nc;
					}
				}
				uint32_t *r = rec + nrec * RW;
				r[0] = (uint32_t)pairs;
				r[1] = (uint32_t)(pairs >> 32);
				r[2] = ns;
				for (unsigned z = 0; z < SIMULATE_MAX_MEMBERSHIPS; z++)
					r[3 + z] = z < ns ? set[z] : UINT32_MAX;
				nrec++;
			}
		g = h;
	}
	nrec = rec_compress(rec, nrec);
	uint64_t nids = 0;
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
	free(noff);
	free(ncom);
	free(fill);
	free(over);
	free(trep);
	free(tcnt);
	free(tr);
	free(rec);
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
	double pairs = (double)n * ((double)n - 1.0) / 2.0;
	return eps * pairs + (1.0 - eps) * (one + corr);
}

double simulate_expected_edges(const struct cover *c, const double *p, double epsilon)
{
	struct multi mu;
	if (multi_build(&mu, c))
		return -1.0;
	double e = multi_expected(&mu, c->n, p, epsilon);
	multi_release(&mu);
	return e;
}

/* Step 2b: p_c, and the scale for a mean degree target. */
static int plant_probabilities(const struct simulate_params *p, struct simulate *s)
{
	uint32_t k = s->k;
	double *w = util_malloc(k ? k : 1, sizeof *w);
	s->p = util_malloc(k ? k : 1, sizeof *s->p);
	if (!w || !s->p) {
		free(w);
		return -1;
	}
	struct rng r;
	stream(&r, p->seed, S_LINKPROB, 0);
	for (uint32_t c = 0; c < k; c++)
		w[c] = p->p_lo == p->p_hi ? p->p_lo : p->p_lo + (p->p_hi - p->p_lo) * rng_uniform(&r);
	if (p->even_degrees)
		for (uint32_t c = 0; c < k; c++)
			w[c] /= (double)cover_size(&s->truth, c) - 1.0; /* sizes >= 2 */
	struct multi mu;
	if (multi_build(&mu, &s->truth)) {
		free(w);
		return -1;
	}
	int rc = 0;
	s->scale = 1.0;
	if (p->mean_degree > 0.0) {
		double target = p->mean_degree * p->n / 2.0;
		double wmin = 1.0; /* the scale beyond which every p_c is 1 */
		for (uint32_t c = 0; c < k; c++)
			if (w[c] > 0.0 && w[c] < wmin)
				wmin = w[c];
		/* p_c = min(1, scale w_c) is non-decreasing in the scale, and so is
		 * the expectation: bisection finds the scale */
		double hi = 1.0 / wmin, lo = 0.0;
		for (uint32_t c = 0; c < k; c++)
			s->p[c] = fmin(1.0, hi * w[c]);
		double top = multi_expected(&mu, p->n, s->p, p->epsilon);
		double bottom = p->epsilon * p->n * (p->n - 1.0) / 2.0;
		if (top < target) {
			rc = error("a mean degree of %g is out of reach: these communities give at "
				   "most %.6g (raise the sizes, the overlap or epsilon)",
				   p->mean_degree, 2.0 * top / p->n);
		} else if (bottom > target) {
			rc = error("a mean degree of %g is out of reach: the background alone gives "
				   "%.6g (lower epsilon)", p->mean_degree, 2.0 * bottom / p->n);
		} else {
			for (int it = 0; it < 200 && hi - lo > 1e-15 * hi; it++) {
				double mid = 0.5 * (lo + hi);
				for (uint32_t c = 0; c < k; c++)
					s->p[c] = fmin(1.0, mid * w[c]);
				if (multi_expected(&mu, p->n, s->p, p->epsilon) < target)
					lo = mid;
				else
					hi = mid;
			}
			s->scale = 0.5 * (lo + hi);
		}
	}
	for (uint32_t c = 0; c < k; c++)
		s->p[c] = fmin(1.0, s->scale * w[c]);
	s->expected_edges = multi_expected(&mu, p->n, s->p, p->epsilon);
	if (!rc && s->expected_edges > SIMULATE_MAX_EDGES)
		rc = error("the model expects %.4g edges; at most %.3g can be drawn (lower the "
			   "link probabilities, the mean degree or epsilon)", s->expected_edges,
			   SIMULATE_MAX_EDGES);
	multi_release(&mu);
	free(w);
	return rc;
}

/* ------------------------------------------------------------------ */
/* Step 4: drawing the pairs */

struct ebuf {
	uint64_t *a;
	size_t len, cap;
	uint64_t drawn_c, drawn_b;
	int err;
};

static int ebuf_push(struct ebuf *b, uint64_t key)
{
	if (b->len == b->cap) {
		size_t nc = b->cap ? b->cap + b->cap / 2 : 1 << 16;
		uint64_t *x = realloc(b->a, nc * sizeof *x);
		if (!x)
			return -1;
		b->a = x;
		b->cap = nc;
	}
	b->a[b->len++] = key;
	return 0;
}

/*
 * Draw each pair (i, j), i < j, with rows j in [j0, j1), independently with
 * probability prob, by geometric skips over the pair index
 * t = sum_{r < j} r + i. ids maps a row/column number to a node (NULL: the
 * number itself). Returns pairs drawn, or -1 on memory failure.
 */
static int64_t draw_pairs(struct ebuf *b, struct rng *r, const uint32_t *ids, uint64_t j0,
			  uint64_t j1, double prob)
{
	if (prob <= 0.0 || j1 <= j0 || j1 < 2)
		return 0;
	if (j0 < 1)
		j0 = 1;
	/* pairs in the slice, exactly: j1 <= 2^31 keeps j1 (j1 - 1) below 2^62 */
	uint64_t total = (j1 * (j1 - 1) - j0 * (j0 - 1)) / 2;
	double lq = prob < 1.0 ? log1p(-prob) : 0.0;
	uint64_t i = 0, j = j0, t = 0; /* (i, j) is pair t of the slice */
	int64_t drawn = 0;
	for (;;) {
		if (prob < 1.0) {
			double skip = floor(log1p(-rng_uniform(r)) / lq);
			if (!(skip < (double)(total - t)))
				break;
			uint64_t sk = (uint64_t)skip;
			if (sk >= total - t)
				break;
			t += sk;
			i += sk;
			while (i >= j) { /* whole rows: exact in integers */
				i -= j;
				j++;
			}
		}
		uint64_t u = ids ? ids[i] : i, v = ids ? ids[j] : j;
		if (ebuf_push(b, (u << 32) | v))
			return -1;
		drawn++;
		if (++t >= total)
			break;
		if (++i == j) {
			i = 0;
			if (++j >= j1)
				break;
		}
	}
	return drawn;
}

struct work {
	const struct simulate_params *p;
	const struct simulate *s;
	uint64_t bounds[BACKGROUND_SLICES + 1];
	uint32_t slices;
	uint64_t items;
	atomic_uint_fast64_t next;
	struct ebuf *bufs;
};

struct worker {
	struct work *w;
	unsigned id;
};

static void *work_run(void *arg)
{
	struct worker *me = arg;
	struct work *w = me->w;
	struct ebuf *b = &w->bufs[me->id];
	const struct cover *cv = &w->s->truth;
	for (;;) {
		uint64_t it = atomic_fetch_add(&w->next, 1);
		if (it >= w->items || b->err)
			break;
		struct rng r;
		int64_t d;
		if (it < cv->k) {
			uint32_t c = (uint32_t)it;
			stream(&r, w->p->seed, S_COMMUNITY, c);
			d = draw_pairs(b, &r, cv->mem + cv->off[c], 0, cover_size(cv, c), w->s->p[c]);
			if (d >= 0)
				b->drawn_c += (uint64_t)d;
		} else {
			uint64_t sl = it - cv->k;
			stream(&r, w->p->seed, S_BACKGROUND, sl);
			d = draw_pairs(b, &r, NULL, w->bounds[sl], w->bounds[sl + 1], w->p->epsilon);
			if (d >= 0)
				b->drawn_b += (uint64_t)d;
		}
		if (d < 0)
			b->err = 1;
	}
	return NULL;
}

/* LSD radix sort of a[0..n) by bytes, skipping bytes where every key agrees;
 * tmp has room for n. Returns the array holding the sorted keys. */
static uint64_t *radix_sort(uint64_t *a, uint64_t *tmp, size_t n)
{
	size_t (*cnt)[256] = calloc(8, sizeof *cnt);
	if (!cnt) {
		error("out of memory sorting the edges");
		return NULL;
	}
	for (size_t i = 0; i < n; i++) {
		uint64_t x = a[i];
		for (int byte = 0; byte < 8; byte++)
			cnt[byte][(x >> (8 * byte)) & 0xff]++;
	}
	for (int byte = 0; byte < 8; byte++) {
		size_t *c = cnt[byte];
		int trivial = 0;
		for (int v = 0; v < 256; v++)
			if (c[v] == n) {
				trivial = 1;
				break;
			}
		if (trivial || n == 0)
			continue;
		size_t sum = 0;
		for (int v = 0; v < 256; v++) {
			size_t x = c[v];
			c[v] = sum;
			sum += x;
		}
		int sh = 8 * byte;
		for (size_t i = 0; i < n; i++) {
			uint64_t x = a[i];
			tmp[c[(x >> sh) & 0xff]++] = x;
		}
		uint64_t *t = a;
		a = tmp;
		tmp = t;
	}
	free(cnt);
	return a;
}

static int draw_edges(const struct simulate_params *p, struct simulate *s)
{
	struct work *w = util_calloc(1, sizeof *w);
	if (!w)
		return -1;
	w->p = p;
	w->s = s;
	w->slices = p->epsilon > 0.0 ? BACKGROUND_SLICES : 0;
	/* slices of rows holding about equal numbers of pairs */
	for (uint32_t b = 0; b <= w->slices; b++)
		w->bounds[b] = (uint64_t)llround((double)p->n * sqrt((double)b / BACKGROUND_SLICES));
	if (w->slices)
		w->bounds[w->slices] = p->n;
	w->items = (uint64_t)s->k + w->slices;
	atomic_init(&w->next, 0);
	unsigned nt = p->threads;
	if (nt > w->items)
		nt = w->items ? (unsigned)w->items : 1;
	w->bufs = util_calloc(nt, sizeof *w->bufs);
	struct worker *ws = util_calloc(nt, sizeof *ws);
	pthread_t *th = util_calloc(nt, sizeof *th);
	int rc = -1;
	if (!w->bufs || !ws || !th)
		goto out;
	unsigned started = 0;
	for (unsigned t = 0; t < nt; t++) {
		ws[t] = (struct worker){ w, t };
		if (t == 0)
			continue;
		if (pthread_create(&th[t], NULL, work_run, &ws[t]) != 0) {
			w->bufs[t].err = 0; /* this worker never ran; the others share its items */
			break;
		}
		started = t;
	}
	work_run(&ws[0]);
	for (unsigned t = 1; t <= started; t++)
		pthread_join(th[t], NULL);
	uint64_t total = 0;
	s->drawn_communities = s->drawn_background = 0;
	for (unsigned t = 0; t < nt; t++) {
		if (w->bufs[t].err) {
			error("out of memory drawing the edges");
			goto out;
		}
		total += w->bufs[t].len;
		s->drawn_communities += w->bufs[t].drawn_c;
		s->drawn_background += w->bufs[t].drawn_b;
	}
	uint64_t *all = util_malloc(total ? total : 1, sizeof *all);
	if (!all)
		goto out;
	uint64_t o = 0;
	for (unsigned t = 0; t < nt; t++) {
		if (w->bufs[t].len)
			memcpy(all + o, w->bufs[t].a, w->bufs[t].len * sizeof *all);
		o += w->bufs[t].len;
		free(w->bufs[t].a);
		w->bufs[t].a = NULL;
	}
	uint64_t *tmp = util_malloc(total ? total : 1, sizeof *tmp);
	if (!tmp) {
		free(all);
		goto out;
	}
	uint64_t *sorted = radix_sort(all, tmp, total);
	if (!sorted) {
		free(all);
		free(tmp);
		goto out;
	}
	free(sorted == all ? tmp : all);
	uint64_t m = 0;
	for (uint64_t i = 0; i < total; i++)
		if (m == 0 || sorted[m - 1] != sorted[i])
			sorted[m++] = sorted[i];
	uint64_t *shrunk = m ? realloc(sorted, m * sizeof *sorted) : NULL;
	s->edges = shrunk ? shrunk : sorted;
	s->m = m;
	s->duplicates = total - m;
	rc = 0;
out:
	if (w->bufs)
		for (unsigned t = 0; t < nt; t++)
			free(w->bufs[t].a);
	free(w->bufs);
	free(ws);
	free(th);
	free(w);
	return rc;
}

int simulate_run(const struct simulate_params *p, struct simulate *out)
{
	memset(out, 0, sizeof *out);
	if (simulate_params_check(p))
		return -1;
	out->n = p->n;
	out->epsilon = p->epsilon;
	if (plant_cover(p, out) || plant_probabilities(p, out) || draw_edges(p, out)) {
		simulate_release(out);
		return -1;
	}
	uint8_t *seen = util_calloc(p->n, 1);
	if (!seen) {
		simulate_release(out);
		return -1;
	}
	for (uint64_t i = 0; i < out->m; i++) {
		seen[out->edges[i] >> 32] = 1;
		seen[out->edges[i] & 0xffffffffu] = 1;
	}
	out->isolated = 0;
	for (uint32_t u = 0; u < p->n; u++)
		out->isolated += !seen[u];
	free(seen);
	return 0;
}

void simulate_release(struct simulate *s)
{
	if (!s)
		return;
	cover_release(&s->truth);
	free(s->p);
	free(s->edges);
	memset(s, 0, sizeof *s);
}

/* ------------------------------------------------------------------ */
/* Writing */

int simulate_prefix_check(const char *prefix)
{
	size_t len = strlen(prefix);
	if (len > 64)
		return error("the node name prefix is longer than 64 bytes");
	if (prefix[0] == '#' || prefix[0] == '%')
		return error("a node name prefix cannot start with '#' or '%%' (a comment in an "
			     "edge list)");
	for (size_t i = 0; i < len; i++) {
		unsigned char ch = (unsigned char)prefix[i];
		if (ch < 0x20 || ch == 0x7f || ch == '\\' || ch == ' ' || ch == ',')
			return error("a node name prefix cannot hold control bytes, spaces, commas "
				     "or backslashes");
	}
	return 0;
}

static const char *planted_files[] = { SIMULATE_EDGES, SIMULATE_TRUTH };

int simulate_dir_taken(const char *dir)
{
	for (size_t i = 0; i < sizeof planted_files / sizeof *planted_files; i++) {
		char path[4096];
		struct stat st;
		if ((size_t)snprintf(path, sizeof path, "%s/%s", dir, planted_files[i]) >= sizeof path)
			continue;
		if (stat(path, &st) == 0 && st.st_size > 0)
			return 1;
	}
	return 0;
}

/* A file written through a big buffer to DIR/.NAME.tmp-PID, then synced and
 * renamed onto DIR/NAME. */
struct out {
	int fd;
	int err; /* errno of the first failure */
	char *buf;
	size_t len, cap;
	char path[4096], tmp[4096];
};

static int out_open(struct out *o, const char *dir, const char *name)
{
	memset(o, 0, sizeof *o);
	o->fd = -1;
	if ((size_t)snprintf(o->path, sizeof o->path, "%s/%s", dir, name) >= sizeof o->path ||
	    (size_t)snprintf(o->tmp, sizeof o->tmp, "%s/.%s.tmp-%ld", dir, name,
			     (long)getpid()) >= sizeof o->tmp)
		return error("the folder name '%s' is too long", dir);
	o->cap = 1u << 22;
	if (!(o->buf = util_malloc(o->cap, 1)))
		return -1;
	o->fd = open(o->tmp, O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC | O_NOFOLLOW, 0666);
	if (o->fd < 0) {
		free(o->buf);
		o->buf = NULL;
		return error("cannot write '%s': %s", o->path, strerror(errno));
	}
	return 0;
}

static void out_flush(struct out *o)
{
	size_t done = 0;
	while (done < o->len && !o->err) {
		ssize_t w = write(o->fd, o->buf + done, o->len - done);
		if (w < 0) {
			if (errno == EINTR)
				continue;
			o->err = errno;
		} else {
			done += (size_t)w;
		}
	}
	o->len = 0;
}

/* Room for at least want bytes. */
static inline char *out_room(struct out *o, size_t want)
{
	if (o->cap - o->len < want)
		out_flush(o);
	return o->buf + o->len;
}

static void out_str(struct out *o, const char *s)
{
	size_t n = strlen(s);
	while (n) {
		size_t room = o->cap - o->len;
		if (!room) {
			out_flush(o);
			continue;
		}
		size_t x = n < room ? n : room;
		memcpy(o->buf + o->len, s, x);
		o->len += x;
		s += x;
		n -= x;
	}
}

/* Finish: flush, sync, close, rename; or on failure (or abandon) remove
 * the temporary file. Returns 0 or -1 with a message. */
static int out_close(struct out *o, int abandon)
{
	int rc = 0;
	if (o->fd >= 0) {
		if (!abandon) {
			out_flush(o);
			if (!o->err && fsync(o->fd) != 0)
				o->err = errno;
		}
		if (close(o->fd) != 0 && !o->err)
			o->err = errno;
		o->fd = -1;
		if (abandon || o->err) {
			if (!abandon)
				rc = error("cannot write '%s': %s", o->path, strerror(o->err));
			else
				rc = -1;
			unlink(o->tmp);
		} else if (rename(o->tmp, o->path) != 0) {
			rc = error("cannot replace '%s': %s", o->path, strerror(errno));
			unlink(o->tmp);
		}
	}
	free(o->buf);
	o->buf = NULL;
	return rc;
}

static const char digits2[] =
	"00010203040506070809101112131415161718192021222324252627282930313233343536373839"
	"40414243444546474849505152535455565758596061626364656667686970717273747576777879"
	"8081828384858687888990919293949596979899";

/* Write x in decimal at p; returns the end. */
static inline char *put_u32(char *p, uint32_t x)
{
	char t[10];
	int i = 10;
	while (x >= 100) {
		uint32_t q = x / 100, r = x - q * 100;
		x = q;
		t[--i] = digits2[2 * r + 1];
		t[--i] = digits2[2 * r];
	}
	if (x >= 10) {
		t[--i] = digits2[2 * x + 1];
		t[--i] = digits2[2 * x];
	} else {
		t[--i] = (char)('0' + x);
	}
	memcpy(p, t + i, (size_t)(10 - i));
	return p + (10 - i);
}

static inline char *put_name(char *p, const char *prefix, size_t plen, uint32_t u)
{
	memcpy(p, prefix, plen);
	return put_u32(p + plen, u);
}

static void write_edges(struct out *o, const struct simulate *s, const struct simulate_params *p,
			const char *prefix)
{
	char head[256];
	snprintf(head, sizeof head,
		 "# coterie simulate: planted AGM, %u nodes, %" PRIu64 " edges, %u communities, "
		 "seed %" PRIu64 "\n", s->n, s->m, s->k, p->seed);
	out_str(o, head);
	size_t plen = strlen(prefix), line = 2 * (plen + 10) + 2;
	for (uint64_t i = 0; i < s->m; i++) {
		char *q = out_room(o, line), *q0 = q;
		q = put_name(q, prefix, plen, (uint32_t)(s->edges[i] >> 32));
		*q++ = '\t';
		q = put_name(q, prefix, plen, (uint32_t)(s->edges[i] & 0xffffffffu));
		*q++ = '\n';
		o->len += (size_t)(q - q0);
	}
}

static void write_truth(struct out *o, const struct simulate *s, const char *prefix)
{
	out_str(o, "node\tcommunity\n");
	size_t plen = strlen(prefix), line = plen + 10 + 1 + 10 + 1;
	const struct cover *cv = &s->truth;
	for (uint32_t c = 0; c < cv->k; c++)
		for (uint64_t i = cv->off[c]; i < cv->off[c + 1]; i++) {
			char *q = out_room(o, line), *q0 = q;
			q = put_name(q, prefix, plen, cv->mem[i]);
			*q++ = '\t';
			q = put_u32(q, c);
			*q++ = '\n';
			o->len += (size_t)(q - q0);
		}
}

static void write_planted(struct out *o, const struct simulate *s)
{
	out_str(o, "community\tsize\tp\n");
	for (uint32_t c = 0; c < s->k; c++) {
		char *q = out_room(o, 64);
		int w = snprintf(q, 64, "%u\t%u\t%.17g\n", c, cover_size(&s->truth, c), s->p[c]);
		o->len += (size_t)w;
	}
}

#if JSON_INTEGER_IS_LONG_LONG
#define J_INT_MAX LLONG_MAX
#else
#define J_INT_MAX LONG_MAX
#endif

static json_t *j_u64(uint64_t x)
{
	if (x <= (uint64_t)J_INT_MAX)
		return json_integer((json_int_t)x);
	char dec[32];
	snprintf(dec, sizeof dec, "%" PRIu64, x);
	return json_string(dec);
}

static char *simulate_json(const struct simulate *s, const struct simulate_params *p,
			   const struct simulate_meta *meta)
{
	double pmin = 1.0, pmax = 0.0;
	for (uint32_t c = 0; c < s->k; c++) {
		pmin = fmin(pmin, s->p[c]);
		pmax = fmax(pmax, s->p[c]);
	}
	if (s->k == 0)
		pmin = pmax = 0.0;
	char *cmd = meta && meta->command_line ? util_escape_dup(meta->command_line, 1) : NULL;
	char *pre = util_escape_dup(meta && meta->prefix ? meta->prefix : "", 1);
	json_t *root = json_pack(
		"{s:i, s:o, s:s, s:{s:I, s:o, s:I, s:I, s:f, s:f, s:I, s:[f, f], s:o, s:b, s:f, s:o, s:I, "
		"s:s}, s:{s:I, s:I, s:I, s:I, s:I, s:I, s:I, s:f, s:f, s:f, s:f, s:I, s:I, s:I, "
		"s:f, s:f}, s:f, s:{s:s, s:s, s:s}}",
		"format", 1,
		"command", cmd ? json_string(cmd) : json_null(),
		"model", "AGM (Yang & Leskovec, ICDM 2012)",
		"parameters",
		"nodes", (json_int_t)p->n,
		"communities", p->k ? json_integer(p->k) : json_null(),
		"size_min", (json_int_t)p->size_min,
		"size_max", (json_int_t)p->size_max,
		"size_exponent", p->size_exponent,
		"overlap", p->overlap,
		"max_memberships", (json_int_t)p->max_memberships,
		"link_prob", p->p_lo, p->p_hi,
		"mean_degree", p->mean_degree > 0 ? json_real(p->mean_degree) : json_null(),
		"even_degrees", p->even_degrees ? 1 : 0,
		"epsilon", p->epsilon,
		"seed", j_u64(p->seed),
		"threads", (json_int_t)p->threads,
		"prefix", pre ? pre : "",
		"realised",
		"nodes", (json_int_t)s->n,
		"communities", (json_int_t)s->k,
		"memberships", (json_int_t)s->truth.off[s->k],
		"overlapping_nodes", (json_int_t)s->overlapping,
		"uncovered_nodes", (json_int_t)s->uncovered,
		"edges", (json_int_t)s->m,
		"isolated_nodes", (json_int_t)s->isolated,
		"mean_degree", 2.0 * (double)s->m / s->n,
		"expected_edges", s->expected_edges,
		"expected_mean_degree", 2.0 * s->expected_edges / s->n,
		"p_scale", s->scale,
		"pairs_drawn_by_communities", (json_int_t)s->drawn_communities,
		"pairs_drawn_by_background", (json_int_t)s->drawn_background,
		"duplicates_merged", (json_int_t)s->duplicates,
		"p_min", pmin,
		"p_max", pmax,
		"seconds", meta ? meta->seconds : 0.0,
		"files",
		"edges", SIMULATE_EDGES,
		"truth", SIMULATE_TRUTH,
		"planted", SIMULATE_PLANTED);
	free(cmd);
	free(pre);
	if (!root)
		return NULL;
	char *text = json_dumps(root, JSON_INDENT(2) | JSON_PRESERVE_ORDER);
	json_decref(root);
	return text;
}

int simulate_write(const char *dir, const struct simulate *s, const struct simulate_params *p,
		   const struct simulate_meta *meta)
{
	const char *prefix = meta && meta->prefix ? meta->prefix : "";
	if (simulate_prefix_check(prefix))
		return -1;
	char *json = simulate_json(s, p, meta);
	if (!json)
		return error("cannot build '%s'", SIMULATE_JSON);
	struct out o;
	int rc = -1;
	/* simulate.json last: it marks a folder whose files belong together */
	if (out_open(&o, dir, SIMULATE_EDGES))
		goto out;
	write_edges(&o, s, p, prefix);
	if (out_close(&o, 0))
		goto out;
	if (out_open(&o, dir, SIMULATE_TRUTH))
		goto out;
	write_truth(&o, s, prefix);
	if (out_close(&o, 0))
		goto out;
	if (out_open(&o, dir, SIMULATE_PLANTED))
		goto out;
	write_planted(&o, s);
	if (out_close(&o, 0))
		goto out;
	if (out_open(&o, dir, SIMULATE_JSON))
		goto out;
	out_str(&o, json);
	out_str(&o, "\n");
	if (out_close(&o, 0))
		goto out;
	rc = util_sync_dir(dir);
out:
	free(json);
	return rc;
}
