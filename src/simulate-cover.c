/*
 * simulate-cover: steps 1 to 3 of a planted graph (see simulate.c):
 * memberships per node, community sizes from a truncated power law, and
 * the dealing of the membership slots to the communities.
 *
 * Invariant: no node is twice in a community; a slot dealt twice is
 * swapped with one elsewhere that keeps both sides free of repeats, and
 * dealt[] tracks each node's communities so that a swap into an earlier
 * community is checked too. A newcomer's trap: the counts are nudged to
 * add up to the sizes before dealing, never after.
 */
#include "simulate-internal.h"

#include <inttypes.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/util.h"

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
	simulate_stream(&r, p->seed, S_SIZES, 0);
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
int simulate_plant_cover(const struct simulate_params *p, struct simulate *s)
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
	simulate_stream(&r, p->seed, S_MEMBERSHIPS, 0);
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
	simulate_stream(&rd, p->seed, S_DEAL, 0);
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

