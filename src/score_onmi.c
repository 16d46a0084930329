/*
 * score_onmi: the overlapping NMI of two covers of the same n nodes, in
 * the max-normalised form (McDaid, Greene & Hurley, arXiv:1110.2515) and
 * in the form of Lancichinetti, Fortunato & Kertesz (New J. Phys. 11,
 * 033015): the measures built on entropies. The measures built on counts
 * (the Omega index, the best-match F1, plain NMI, the counts) are in
 * score.c.
 *
 * Each community is a binary variable over the nodes. With h(w) =
 * -(w/n) log2(w/n) (0 for w = 0), H(X_i) = h(|X_i|) + h(n - |X_i|). For a
 * pair (X_i, Y_j) the joint entropy comes from the four cell counts
 *     a = n - |X_i u Y_j|, b = |Y_j \ X_i|, c = |X_i \ Y_j|, d = |X_i n Y_j|,
 * and H(X_i|Y_j) = h(a) + h(b) + h(c) + h(d) - H(Y_j), taken only when
 * h(a) + h(d) >= h(b) + h(c) (LFK's condition: otherwise Y_j is closer to
 * X_i's complement and counts as no information, H(X_i)). H(X_i|Y) is the
 * least over j. (The papers write h(w) = -w log2(w/n) or with
 * probabilities; the factor n cancels in every ratio below.)
 *     max form:  I = (H(X) - sum_i H(X_i|Y) + H(Y) - sum_j H(Y_j|X)) / 2,
 *                NMI = I / max(H(X), H(Y)),  H(X) = sum_i H(X_i);
 *     LFK form:  1 - (mean_i H(X_i|Y)/H(X_i) + mean_j H(Y_j|X)/H(Y_j)) / 2.
 *
 * Constant variables. An empty community and a community of all n nodes
 * both have H = 0: they say nothing about any node, and the LFK ratio
 * would be 0/0. Both are ignored (in the max form this changes nothing,
 * since they add 0 to every sum and a constant Y_j never lowers an
 * H(X_i|Y_j) below H(X_i)). A cover left with no informative community
 * scores 1 against another such cover with the same non-empty communities
 * (none, or the whole set) and 0 otherwise; against a cover that has
 * informative communities it scores 0.
 *
 * Speed. Intersections are counted sparsely through a node -> communities
 * index, so only pairs with d > 0 are visited: O(sum over nodes of
 * |X(u)| |Y(u)|). Pairs with d = 0 still count: for them the candidate
 * H(X_i|Y_j) depends only on |X_i| and |Y_j|, so the Y communities are
 * grouped by size and, for each X_i, each size that has at least one
 * community not meeting X_i is evaluated once with d = 0. That costs
 * O(distinct sizes) per X_i, at most about sqrt(2 * memberships).
 *
 * The one thing a newcomer gets wrong: skipping the d = 0 pairs. A large
 * X_i and a small Y_j outside it can pass the LFK condition (n = 100,
 * |X_i| = 60, |Y_j| = 1), so ignoring them gives wrong answers.
 */
#include "coterie/score.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/cover.h"
#include "coterie/util.h"

/* The informative communities of one cover and their index. */
struct side {
	uint32_t k;          /* informative communities */
	uint64_t *size;      /* k */
	const uint32_t **mem;/* k: members (borrowed from the cover) */
	double *H;           /* k: H(X_i) */
	uint64_t *noff;      /* n + 1 */
	uint32_t *ncom;      /* node -> informative communities */
	uint32_t ngrp;       /* distinct sizes */
	uint64_t *gval;      /* ngrp sizes */
	uint32_t *gcount;    /* communities of each size */
	uint32_t *grp;       /* k: group of each community */
	int has_full;        /* a community of all n nodes (n > 0) */
};

static double h(double w, double n)
{
	if (w <= 0.0)
		return 0.0;
	double p = w / n;
	return -p * log2(p);
}

static void side_release(struct side *s)
{
	UTIL_FREE_ALL(s->size, s->mem, s->H, s->noff, s->ncom, s->gval, s->gcount, s->grp);
	memset(s, 0, sizeof *s);
}

static int side_build(struct side *s, const struct cover *c)
{
	uint64_t n = c->n, total = 0;
	memset(s, 0, sizeof *s);
	if (cover_check(c) < 0)
		return -1;
	for (uint32_t i = 0; i < c->k; i++) {
		uint64_t sz = cover_size(c, i);
		if (sz > 0 && sz < n) {
			s->k++;
			total += sz;
		} else if (sz == n && n > 0) {
			s->has_full = 1;
		}
	}
	s->size = util_malloc(s->k, sizeof *s->size);
	s->mem = util_malloc(s->k, sizeof *s->mem);
	s->H = util_malloc(s->k, sizeof *s->H);
	s->noff = util_calloc((size_t)n + 1, sizeof *s->noff);
	s->ncom = util_malloc((size_t)total, sizeof *s->ncom);
	s->gval = util_malloc(s->k, sizeof *s->gval);
	s->gcount = util_calloc(s->k, sizeof *s->gcount);
	s->grp = util_malloc(s->k, sizeof *s->grp);
	uint64_t *at = util_malloc((size_t)n + 1, sizeof *at);
	if (!s->size || !s->mem || !s->H || !s->noff || !s->ncom || !s->gval || !s->gcount ||
	    !s->grp || !at) {
		free(at);
		side_release(s);
		return -1;
	}
	uint32_t x = 0;
	for (uint32_t i = 0; i < c->k; i++) {
		uint64_t sz = cover_size(c, i);
		if (sz == 0 || sz >= n)
			continue;
		s->size[x] = sz;
		s->mem[x] = c->mem + c->off[i];
		s->H[x] = h((double)sz, (double)n) + h((double)(n - sz), (double)n);
		for (uint64_t j = 0; j < sz; j++)
			s->noff[s->mem[x][j] + 1]++;
		x++;
	}
	for (uint64_t u = 0; u < n; u++)
		s->noff[u + 1] += s->noff[u];
	memcpy(at, s->noff, ((size_t)n + 1) * sizeof *at);
	for (uint32_t i = 0; i < s->k; i++)
		for (uint64_t j = 0; j < s->size[i]; j++)
			s->ncom[at[s->mem[i][j]]++] = i;
	free(at);

	/* Group by size: distinct sizes sorted, then each community's group. */
	memcpy(s->gval, s->size, (size_t)s->k * sizeof *s->gval);
	if (s->k)
		qsort(s->gval, s->k, sizeof *s->gval, util_qsort_u64);
	for (uint32_t i = 0; i < s->k; i++)
		if (i == 0 || s->gval[i] != s->gval[s->ngrp - 1])
			s->gval[s->ngrp++] = s->gval[i];
	for (uint32_t i = 0; i < s->k; i++) {
		uint32_t lo = 0, hi = s->ngrp; /* binary search: gval[lo] == size */
		while (hi - lo > 1) {
			uint32_t mid = lo + (hi - lo) / 2;
			if (s->gval[mid] <= s->size[i])
				lo = mid;
			else
				hi = mid;
		}
		s->grp[i] = lo;
		s->gcount[lo]++;
	}
	return 0;
}

/* H(X_i|Y_j) by the cell counts, or HX (no information) when LFK's
 * condition fails. */
static double cond_pair(double n, double x, double y, double d, double HX, double HY)
{
	double a = n - x - y + d, b = y - d, c = x - d;
	double ha = h(a, n), hb = h(b, n), hc = h(c, n), hd = h(d, n);
	if (ha + hd >= hb + hc)
		return fmin(HX, ha + hb + hc + hd - HY);
	return HX;
}

/* out[i] = H(X_i|Y) for every informative X_i. */
static int conditional(const struct side *X, const struct side *Y, uint64_t n, double *out)
{
	uint32_t *cnt = util_calloc(Y->k, sizeof *cnt);
	uint32_t *touched = util_malloc(Y->k, sizeof *touched);
	uint32_t *gtouch = util_calloc(Y->ngrp, sizeof *gtouch);
	if (!cnt || !touched || !gtouch) {
		free(cnt);
		free(touched);
		free(gtouch);
		return -1;
	}
	double nn = (double)n;
	for (uint32_t i = 0; i < X->k; i++) {
		uint32_t nt = 0;
		for (uint64_t j = 0; j < X->size[i]; j++) {
			uint32_t u = X->mem[i][j];
			for (uint64_t t = Y->noff[u]; t < Y->noff[u + 1]; t++) {
				uint32_t y = Y->ncom[t];
				if (cnt[y]++ == 0)
					touched[nt++] = y;
			}
		}
		double x = (double)X->size[i], HX = X->H[i], best = HX;
		for (uint32_t t = 0; t < nt; t++) {
			uint32_t y = touched[t];
			double v = cond_pair(nn, x, (double)Y->size[y], (double)cnt[y], HX, Y->H[y]);
			if (v < best)
				best = v;
			gtouch[Y->grp[y]]++;
			cnt[y] = 0;
		}
		/* Communities not meeting X_i, one candidate per size. */
		for (uint32_t g = 0; g < Y->ngrp; g++) {
			if (gtouch[g] < Y->gcount[g]) {
				double y = (double)Y->gval[g];
				double HY = h(y, nn) + h(nn - y, nn);
				double v = cond_pair(nn, x, y, 0.0, HX, HY);
				if (v < best)
					best = v;
			}
			gtouch[g] = 0;
		}
		out[i] = best < 0.0 ? 0.0 : best;
	}
	free(cnt);
	free(touched);
	free(gtouch);
	return 0;
}

enum form { FORM_MAX, FORM_LFK };

static double onmi(const struct cover *a, const struct cover *b, enum form form)
{
	struct side X, Y;
	double *hx = NULL, *hy = NULL, result = -1.0;

	if (cover_same_n(a, b) < 0 || side_build(&X, a) < 0)
		return -1.0;
	if (side_build(&Y, b) < 0) {
		side_release(&X);
		return -1.0;
	}
	if (X.k == 0 || Y.k == 0) {
		if (X.k == 0 && Y.k == 0)
			result = X.has_full == Y.has_full ? 1.0 : 0.0;
		else
			result = 0.0;
		goto out;
	}
	hx = util_malloc(X.k, sizeof *hx);
	hy = util_malloc(Y.k, sizeof *hy);
	if (!hx || !hy || conditional(&X, &Y, a->n, hx) < 0 ||
	    conditional(&Y, &X, a->n, hy) < 0)
		goto out;
	if (form == FORM_MAX) {
		double HX = 0, HY = 0, cx = 0, cy = 0;
		for (uint32_t i = 0; i < X.k; i++) {
			HX += X.H[i];
			cx += hx[i];
		}
		for (uint32_t j = 0; j < Y.k; j++) {
			HY += Y.H[j];
			cy += hy[j];
		}
		double I = 0.5 * ((HX - cx) + (HY - cy));
		result = I / fmax(HX, HY); /* HX, HY > 0: informative communities */
	} else {
		double sx = 0, sy = 0;
		for (uint32_t i = 0; i < X.k; i++)
			sx += hx[i] / X.H[i];
		for (uint32_t j = 0; j < Y.k; j++)
			sy += hy[j] / Y.H[j];
		result = 1.0 - 0.5 * (sx / X.k + sy / Y.k);
	}
	if (result < 0.0)
		result = 0.0;
	if (result > 1.0)
		result = 1.0;
out:
	free(hx);
	free(hy);
	side_release(&X);
	side_release(&Y);
	return result;
}

double score_onmi_max(const struct cover *a, const struct cover *b)
{
	return onmi(a, b, FORM_MAX);
}

double score_onmi_lfk(const struct cover *a, const struct cover *b)
{
	return onmi(a, b, FORM_LFK);
}
