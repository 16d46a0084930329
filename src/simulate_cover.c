/*
 * simulate_cover: steps 1 to 3 of a planted graph (see simulate.c):
 * memberships per node, community sizes from a truncated power law, and
 * the dealing of the membership slots to the communities.
 *
 * Invariant: no node is twice in a community; a slot dealt twice is
 * swapped with one elsewhere that keeps both sides free of repeats, and
 * dealt[] tracks each node's communities so that a swap into an earlier
 * community is checked too. A newcomer's trap: the counts are nudged to
 * add up to the sizes before dealing, never after.
 *
 * Two-mode (p->second > 0): the dealing ignores the kinds; then
 * both_kinds() swaps a member of each community holding one kind only
 * with a member of the missing kind from another community that keeps it
 * (memberships per node unchanged).
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

/* The slots dealt so far, per node: dealt[doff[u] .. + cnt[u]), at most
 * the node's number of slots. */
struct dealing {
	uint32_t *slot;     /* the membership slots, cut into communities by off */
	const uint64_t *off;
	uint32_t k;
	uint64_t want;      /* slots */
	uint32_t *stamp;    /* the last community a node was seen in */
	uint64_t *doff;
	uint32_t *dealt;
	uint8_t *cnt;
	struct rng r;
};

/* Slot i of community c holds u, which c already has: swap it with a slot
 * j elsewhere whose node v is not in c, and u not in v's community
 * (checked there only when that one is already dealt). Returns 0 or -1. */
static int swap_repeat(struct dealing *d, uint32_t c, uint64_t i)
{
	uint64_t a = d->off[c], b = d->off[c + 1];
	uint32_t u = d->slot[i];
	for (int tries = 0; tries < 100000; tries++) {
		uint64_t j = rng_below(&d->r, d->want);
		if (j >= a && j < b)
			continue;
		uint32_t v = d->slot[j];
		if (d->stamp[v] == c)
			continue;
		uint32_t e = chunk_of(d->off, d->k, j);
		if (e < c) {
			int has = 0;
			for (uint32_t x = 0; x < d->cnt[u] && !has; x++)
				has = d->dealt[d->doff[u] + x] == e;
			if (has)
				continue;
			for (uint32_t x = 0; x < d->cnt[v]; x++) /* v leaves e ... */
				if (d->dealt[d->doff[v] + x] == e) {
					d->dealt[d->doff[v] + x] = d->dealt[d->doff[v] + d->cnt[v] - 1];
					d->cnt[v]--;
					break;
				}
			d->dealt[d->doff[u] + d->cnt[u]++] = e; /* ... and u joins it */
		}
		d->slot[j] = u;
		d->slot[i] = v;
		d->stamp[v] = c;
		return 0;
	}
	return error("cannot deal the memberships without putting a node twice in a "
		     "community; try fewer memberships per node or smaller communities");
}

/* Step 3: deal the slots (node u written m[u] times) to the communities
 * cut by off, into slot (want entries), with no node twice in one; m[u]
 * ends as the number of u's communities (unchanged: no slot is lost).
 * Returns 0 or -1. */
static int deal_slots(const struct simulate_params *p, uint8_t *m, uint32_t n,
		      const uint64_t *off, uint32_t k, uint64_t want, uint32_t *slot)
{
	struct dealing d = { slot, off, k, want, NULL, NULL, NULL, m, { { 0 } } };
	int rc = -1;
	uint64_t t = 0;
	for (uint32_t u = 0; u < n; u++)
		for (uint32_t i = 0; i < m[u]; i++)
			slot[t++] = u;
	simulate_stream(&d.r, p->seed, S_DEAL, 0);
	for (uint64_t i = want; i > 1; i--) { /* Fisher-Yates over 64-bit indices */
		uint64_t j = rng_below(&d.r, i);
		uint32_t x = slot[i - 1];
		slot[i - 1] = slot[j];
		slot[j] = x;
	}
	d.stamp = util_malloc(n, sizeof *d.stamp);
	d.doff = util_malloc((size_t)n + 1, sizeof *d.doff);
	d.dealt = util_malloc(want ? want : 1, sizeof *d.dealt);
	if (!d.stamp || !d.doff || !d.dealt)
		goto out;
	d.doff[0] = 0;
	for (uint32_t u = 0; u < n; u++)
		d.doff[u + 1] = d.doff[u] + m[u];
	memset(m, 0, n); /* from here m[u] counts u's dealt communities */
	memset(d.stamp, 0xff, (size_t)n * sizeof *d.stamp);
	for (uint32_t c = 0; c < k; c++) {
		for (uint64_t i = off[c]; i < off[c + 1]; i++) {
			uint32_t u = slot[i];
			if (d.stamp[u] != c)
				d.stamp[u] = c;
			else if (swap_repeat(&d, c, i))
				goto out;
		}
		for (uint64_t i = off[c]; i < off[c + 1]; i++) {
			uint32_t u = slot[i];
			d.dealt[d.doff[u] + m[u]++] = c;
		}
	}
	rc = 0;
out:
	free(d.stamp);
	free(d.doff);
	free(d.dealt);
	return rc;
}

/* Steps 1 and 2: memberships per node (m, n of them) and community sizes
 * (*sizes_out, *k_out of them, caller frees), the counts nudged to add up
 * to the sizes; *want is that sum. Returns 0 or -1. */
static int plant_counts(const struct simulate_params *p, uint8_t *m, uint32_t *perm,
			uint32_t **sizes_out, uint32_t *k_out, uint64_t *want)
{
	uint32_t n = p->n, k = 0;
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
	uint32_t *sizes = draw_sizes(p, total, &k);
	if (!sizes)
		return -1;
	*sizes_out = sizes;
	*k_out = k;
	*want = 0;
	for (uint32_t c = 0; c < k; c++)
		*want += sizes[c];
	uint32_t cap = p->max_memberships < k ? p->max_memberships : k;
	for (uint32_t u = 0; u < n; u++)
		if (m[u] > cap) {
			total -= m[u] - cap;
			m[u] = (uint8_t)cap;
		}
	rng_shuffle_u32(&r, perm, n); /* a fresh order for the nudging */
	return nudge_counts(m, perm, n, &total, *want, cap, p->k ? p->overlap : 0.0);
}

/* Members of community c of cv below n1 (members are increasing). */
static uint64_t first_kind_count(const struct cover *cv, uint32_t c, uint32_t n1)
{
	return util_lower_bound_u32(cv->mem + cv->off[c], cv->off[c + 1] - cv->off[c], n1);
}

static int holds(const struct cover *cv, uint32_t c, uint32_t u)
{
	const uint32_t *a = cv->mem + cv->off[c];
	return bsearch(&u, a, cover_size(cv, c), sizeof *a, util_qsort_u32) != NULL;
}

/* Community c holds one kind only: swap one of its members with a member
 * of the missing kind of another community that holds two of that kind
 * or more, neither swapped node being already in the other community.
 * Returns 0 or -1 when no community can spare one. */
static int give_missing_kind(struct cover *cv, uint32_t c, uint32_t n1)
{
	uint64_t s = cover_size(cv, c), a = first_kind_count(cv, c, n1);
	int want_first = a == 0;
	for (uint32_t step = 1; step < cv->k; step++) {
		uint32_t d = (c + step) % cv->k;
		uint64_t da = first_kind_count(cv, d, n1), ds = cover_size(cv, d);
		if ((want_first ? da : ds - da) < 2)
			continue;
		uint64_t y0 = cv->off[d] + (want_first ? 0 : da), y1 = want_first ? cv->off[d] + da :
									       cv->off[d + 1];
		for (uint64_t i = cv->off[c]; i < cv->off[c] + s; i++) {
			if (holds(cv, d, cv->mem[i]))
				continue;
			for (uint64_t j = y0; j < y1; j++) {
				if (holds(cv, c, cv->mem[j]))
					continue;
				uint32_t t = cv->mem[i];
				cv->mem[i] = cv->mem[j];
				cv->mem[j] = t;
				qsort(cv->mem + cv->off[c], s, sizeof *cv->mem, util_qsort_u32);
				qsort(cv->mem + cv->off[d], ds, sizeof *cv->mem, util_qsort_u32);
				return 0;
			}
		}
	}
	return error("community %u of the planted cover holds one kind of node and no other "
		     "community can spare one of the other kind (raise the smaller kind's count)",
		     c);
}

/* Two-mode: every community holds both kinds (ids below n1, and not). */
static int both_kinds(struct cover *cv, uint32_t n1)
{
	for (uint32_t c = 0; c < cv->k; c++) {
		uint64_t a = first_kind_count(cv, c, n1);
		if ((a == 0 || a == cover_size(cv, c)) && give_missing_kind(cv, c, n1))
			return -1;
	}
	return 0;
}

/* Steps 1 to 3: fill s->truth. */
int simulate_plant_cover(const struct simulate_params *p, struct simulate *s)
{
	uint32_t n = p->n;
	int rc = -1;
	uint8_t *m = util_calloc(n, 1);
	uint32_t *perm = util_malloc(n, sizeof *perm);
	uint32_t *sizes = NULL, *slot = NULL;
	uint32_t k = 0;
	uint64_t want = 0;
	if (!m || !perm || plant_counts(p, m, perm, &sizes, &k, &want))
		goto out;
	struct cover *cv = &s->truth;
	cv->n = n;
	cv->k = k;
	cv->off = util_malloc((size_t)k + 1, sizeof *cv->off);
	cv->label = util_calloc(k ? k : 1, sizeof *cv->label);
	slot = util_malloc(want ? want : 1, sizeof *slot);
	if (!cv->off || !cv->label || !slot)
		goto out;
	cv->off[0] = 0;
	for (uint32_t c = 0; c < k; c++)
		cv->off[c + 1] = cv->off[c] + sizes[c];
	if (deal_slots(p, m, n, cv->off, k, want, slot))
		goto out;
	for (uint32_t c = 0; c < k; c++) {
		qsort(slot + cv->off[c], sizes[c], sizeof *slot, util_qsort_u32);
		char lab[16];
		snprintf(lab, sizeof lab, "%u", c);
		if (!(cv->label[c] = util_strdup(lab)))
			goto out;
	}
	cv->mem = slot;
	slot = NULL;
	if (p->second && both_kinds(cv, n - p->second))
		goto out;
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
	free(slot);
	return rc;
}
