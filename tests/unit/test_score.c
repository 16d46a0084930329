/* Tests for score: overlapping NMI, max form (McDaid, Greene & Hurley,
 * arXiv:1110.2515) and LFK form (Lancichinetti, Fortunato & Kertesz, New J.
 * Phys. 11, 033015, 2009); the Omega index (Collins & Dent 1988); the
 * average best-match F1 (Yang & Leskovec, WSDM 2013); plain NMI against
 * scikit-learn; the counts of score_sides(). */
#include <stdio.h>
#include "helpers.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/cover.h"
#include "coterie/rng.h"
#include "coterie/score.h"


/* Random cover: k communities, community i of size sizes[i] drawn
 * uniformly without replacement (members may overlap across communities). */
static void random_cover(struct cover *c, struct rng *r, uint32_t n, uint32_t k,
			 const uint32_t *sizes)
{
	uint32_t *perm = malloc(n * sizeof *perm);
	uint64_t total = 0;
	for (uint32_t i = 0; i < k; i++)
		total += sizes[i];
	uint32_t *node = malloc((total + 1) * sizeof *node);
	uint32_t *comm = malloc((total + 1) * sizeof *comm);
	assert_true(perm && node && comm);
	for (uint32_t u = 0; u < n; u++)
		perm[u] = u;
	uint64_t at = 0;
	for (uint32_t i = 0; i < k; i++) {
		rng_shuffle_u32(r, perm, n);
		for (uint32_t j = 0; j < sizes[i]; j++) {
			node[at] = perm[j];
			comm[at++] = i;
		}
	}
	assert_int_equal(cover_from_pairs(c, n, node, comm, total), 0);
	assert_cover_sane(c);
	free(perm);
	free(node);
	free(comm);
}

static const double L3 = 1.5849625007211562; /* log2(3) */

static void test_identical_covers_score_one(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 7);
	const uint32_t sizes[] = { 30, 5, 60, 12, 12, 1, 99 };
	struct cover a;
	random_cover(&a, &r, 100, 7, sizes);
	/* 1 for identical covers: both papers' definitions */
	assert_true(fabs(score_onmi_max(&a, &a) - 1.0) < 1e-12);
	assert_true(fabs(score_onmi_lfk(&a, &a) - 1.0) < 1e-12);
	cover_release(&a);
}

/*
 * Hand-worked, n = 8, h(w) = -(w/8) log2(w/8):
 *   X = { X1 = {0,1,2,3}, X2 = {4,5} },  Y = { Y1 = {0,1} }.
 *   H(X1) = h(4) + h(4) = 0.5 + 0.5 = 1
 *   H(X2) = h(2) + h(6) = 0.5 + 0.75 log2(4/3) = 2 - 0.75 log2 3 = 0.8112781
 *   H(Y1) = H(X2) = 0.8112781
 *   X1 vs Y1: a = 8-4 = 4, b = 0, c = 2, d = 2;
 *     h(a)+h(d) = 1 >= h(b)+h(c) = 0.5: accepted;
 *     H(X1,Y1) = 0.5 + 0 + 0.5 + 0.5 = 1.5
 *     H(X1|Y1) = 1.5 - 0.8112781 = 0.75 log2 3 - 0.5 = 0.6887219
 *     H(Y1|X1) = 1.5 - 1 = 0.5
 *   X2 vs Y1: a = 8-4 = 4, b = 2, c = 2, d = 0;
 *     h(a)+h(d) = 0.5 < h(b)+h(c) = 1: rejected, H(X2|Y) = H(X2),
 *     and Y1 given X2 likewise H(Y1).
 *   H(X|Y) = 0.6887219 + 0.8112781 = 1.5;  H(Y|X) = min(0.5, 0.8112781) = 0.5
 *   H(X) = 1.8112781, H(Y) = 0.8112781
 *   I = (1.8112781 - 1.5 + 0.8112781 - 0.5)/2 = 0.3112781 = 1.5 - 0.75 log2 3
 *   max form: I / max(H(X), H(Y)) = 0.3112781 / 1.8112781 = 0.1718555
 *   LFK form: 1 - (((0.6887219/1 + 0.8112781/0.8112781)/2) + 0.5/0.8112781)/2
 *           = 1 - (0.8443609 + 0.6163110)/2 = 0.2696638
 */
static void test_max_form_matches_hand_worked_example(void **state)
{
	(void)state;
	struct cover x, y;
	test_make_cover(&x, 8, 2, (const uint32_t[]){ 4, 2 }, (const uint32_t[]){ 0, 1, 2, 3, 4, 5 });
	test_make_cover(&y, 8, 1, (const uint32_t[]){ 2 }, (const uint32_t[]){ 0, 1 });
	double hy = 2.0 - 0.75 * L3;
	double want_max = (1.5 - 0.75 * L3) / (1.0 + hy);                       /* above */
	double want_lfk = 1.0 - 0.5 * (((0.75 * L3 - 0.5) + 1.0) / 2.0 + 0.5 / hy); /* above */
	assert_true(fabs(score_onmi_max(&x, &y) - want_max) < 1e-12);
	assert_true(fabs(score_onmi_max(&x, &y) - 0.1718555) < 1e-7);
	assert_true(fabs(score_onmi_lfk(&x, &y) - want_lfk) < 1e-12);
	assert_true(fabs(score_onmi_lfk(&x, &y) - 0.2696638) < 1e-7);
	cover_release(&x);
	cover_release(&y);
}

/*
 * Two partitions of n = 8, worked by hand as above:
 *   X = { {0..3}, {4..7} },  Y = { Y1 = {0..5}, Y2 = {6,7} }.
 *   H(X1) = H(X2) = 1; H(Y1) = H(Y2) = h(6) + h(2) = 2 - 0.75 log2 3.
 *   X1|Y1: a=2 b=2 c=0 d=4, 1 >= 0.5, H = 1.5 - H(Y1) = 0.75 log2 3 - 0.5
 *   X1|Y2: a=2 b=2 c=4 d=0, 0.5 < 1 rejected
 *   X2|Y1: a=0 b=4 c=2 d=2, 0.5 < 1 rejected
 *   X2|Y2: a=4 b=0 c=2 d=2, 1 >= 0.5, H = 0.75 log2 3 - 0.5
 *   Y1|X1 = 1.5 - 1 = 0.5, Y2|X2 = 0.5 (the others rejected)
 *   I = (2 - 2(0.75 log2 3 - 0.5) + 2 H(Y1) - 1)/2 = 3 - 1.5 log2 3
 *   max form: I / max(2, 2 H(Y1)) = 1.5 - 0.75 log2 3 = 0.3112781
 *   LFK form: 1 - ((0.75 log2 3 - 0.5) + 0.5/H(Y1))/2 = 0.3474833
 */
static void test_partitions_match_hand_worked_example(void **state)
{
	(void)state;
	struct cover x, y;
	test_make_cover(&x, 8, 2, (const uint32_t[]){ 4, 4 },
		   (const uint32_t[]){ 0, 1, 2, 3, 4, 5, 6, 7 });
	test_make_cover(&y, 8, 2, (const uint32_t[]){ 6, 2 },
		   (const uint32_t[]){ 0, 1, 2, 3, 4, 5, 6, 7 });
	double hy = 2.0 - 0.75 * L3;
	assert_true(fabs(score_onmi_max(&x, &y) - (1.5 - 0.75 * L3)) < 1e-12);  /* above */
	assert_true(fabs(score_onmi_max(&x, &y) - 0.3112781) < 1e-7);
	assert_true(fabs(score_onmi_lfk(&x, &y) - (1.0 - 0.5 * ((0.75 * L3 - 0.5) + 0.5 / hy))) <
		    1e-12); /* above */
	assert_true(fabs(score_onmi_lfk(&x, &y) - 0.3474833) < 1e-7);
	cover_release(&x);
	cover_release(&y);
}

/*
 * A community disjoint from X1 can still inform about it (the LFK
 * condition accepts it), so the pairs with no common node must be
 * evaluated. n = 100, X1 = {0..59}, Y1 = {99}:
 *   a = 39, b = 1, c = 60, d = 0 (b and c swap for Y given X)
 *   h(a) + h(d) = -0.39 log2 0.39 = 0.5297970
 *   h(b) + h(c) = -0.01 log2 0.01 - 0.6 log2 0.6 = 0.0664386 + 0.4421793 = 0.5086179
 *   accepted both ways. J = H(X1,Y1) = 0.5297970 + 0.0664386 + 0.4421793 = 1.0384150
 *   H(X1) = h(60) + h(40) = 0.9709506, H(Y1) = h(1) + h(99) = 0.0807931
 *   H(X1|Y1) = J - H(Y1) = 0.9576218; H(Y1|X1) = J - H(X1) = 0.0674644
 *   I = H(X1) + H(Y1) - J = 0.0133288; max form I / 0.9709506 = 0.0137275
 *   LFK: 1 - (0.9576218/0.9709506 + 0.0674644/0.0807931)/2 = 0.0893507
 * And the complement: X1 = {0..3}, Y1 = {4..7} of n = 8 gives a = 0,
 * b = c = 4, d = 0: h(a)+h(d) = 0 < 1, rejected both ways, so both forms
 * score 0 (LFK 2009, appendix: a complement carries no credit).
 */
static void test_disjoint_communities_are_scored_by_the_lfk_condition(void **state)
{
	(void)state;
	uint32_t m60[60];
	for (uint32_t i = 0; i < 60; i++)
		m60[i] = i;
	struct cover x, y;
	test_make_cover(&x, 100, 1, (const uint32_t[]){ 60 }, m60);
	test_make_cover(&y, 100, 1, (const uint32_t[]){ 1 }, (const uint32_t[]){ 99 });
	assert_true(fabs(score_onmi_max(&x, &y) - 0.0137275) < 1e-7); /* worked above */
	assert_true(fabs(score_onmi_lfk(&x, &y) - 0.0893507) < 1e-7); /* worked above */
	cover_release(&x);
	cover_release(&y);

	test_make_cover(&x, 8, 1, (const uint32_t[]){ 4 }, (const uint32_t[]){ 0, 1, 2, 3 });
	test_make_cover(&y, 8, 1, (const uint32_t[]){ 4 }, (const uint32_t[]){ 4, 5, 6, 7 });
	assert_true(score_onmi_max(&x, &y) == 0.0); /* rejected: worked above */
	assert_true(score_onmi_lfk(&x, &y) == 0.0);
	cover_release(&x);
	cover_release(&y);
}

/* ---- the definition over all pairs, written independently of src/score.c ---- */

static double hb(double w, double n)
{
	return w > 0 ? -(w / n) * log2(w / n) : 0.0;
}

static uint8_t *dense(const struct cover *c)
{
	uint8_t *d = calloc((size_t)c->k * c->n + 1, 1);
	assert_non_null(d);
	for (uint32_t i = 0; i < c->k; i++)
		for (uint64_t j = c->off[i]; j < c->off[i + 1]; j++)
			d[(size_t)i * c->n + c->mem[j]] = 1;
	return d;
}

/* H(X_i|Y) for every informative X_i over every Y_j (non-constant ones);
 * returns the number of informative X_i, entropies in hx, conditionals in cx. */
static uint32_t brute_cond(const struct cover *a, const struct cover *b, double *hx, double *cx)
{
	uint8_t *da = dense(a), *db = dense(b);
	double n = a->n;
	uint32_t cnt = 0;
	for (uint32_t i = 0; i < a->k; i++) {
		double x = cover_size(a, i);
		if (x == 0 || x == n)
			continue;
		double H = hb(x, n) + hb(n - x, n), best = H;
		for (uint32_t j = 0; j < b->k; j++) {
			double y = cover_size(b, j);
			if (y == 0 || y == n)
				continue;
			double A = 0, B = 0, C = 0, D = 0;
			for (uint32_t u = 0; u < a->n; u++) {
				int xi = da[(size_t)i * a->n + u], yj = db[(size_t)j * b->n + u];
				A += !xi && !yj;
				B += !xi && yj;
				C += xi && !yj;
				D += xi && yj;
			}
			if (hb(A, n) + hb(D, n) >= hb(B, n) + hb(C, n)) {
				double v = hb(A, n) + hb(B, n) + hb(C, n) + hb(D, n) -
					   (hb(y, n) + hb(n - y, n));
				if (v < best)
					best = v;
			}
		}
		hx[cnt] = H;
		cx[cnt] = best;
		cnt++;
	}
	free(da);
	free(db);
	return cnt;
}

static void brute_scores(const struct cover *a, const struct cover *b, double *mx, double *lfk)
{
	double *ha = malloc((a->k + 1) * sizeof *ha), *ca = malloc((a->k + 1) * sizeof *ca);
	double *hb_ = malloc((b->k + 1) * sizeof *hb_), *cb = malloc((b->k + 1) * sizeof *cb);
	assert_true(ha && ca && hb_ && cb);
	uint32_t ka = brute_cond(a, b, ha, ca), kb = brute_cond(b, a, hb_, cb);
	assert_true(ka > 0 && kb > 0);
	double HX = 0, HY = 0, sx = 0, sy = 0, rx = 0, ry = 0;
	for (uint32_t i = 0; i < ka; i++) {
		HX += ha[i];
		sx += ca[i];
		rx += ca[i] / ha[i];
	}
	for (uint32_t j = 0; j < kb; j++) {
		HY += hb_[j];
		sy += cb[j];
		ry += cb[j] / hb_[j];
	}
	*mx = 0.5 * (HX - sx + HY - sy) / (HX > HY ? HX : HY); /* McDaid et al. */
	*lfk = 1.0 - 0.5 * (rx / ka + ry / kb);                /* LFK 2009 */
	free(ha);
	free(ca);
	free(hb_);
	free(cb);
}

static void test_sparse_evaluation_matches_all_pairs(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 99);
	for (int trial = 0; trial < 20; trial++) {
		uint32_t n = 20 + (uint32_t)rng_below(&r, 100);
		uint32_t ka = 1 + (uint32_t)rng_below(&r, 12), kb = 1 + (uint32_t)rng_below(&r, 12);
		uint32_t sa[16], sb[16];
		/* sizes from tiny to nearly everything, repeats included */
		for (uint32_t i = 0; i < ka; i++)
			sa[i] = 1 + (uint32_t)rng_below(&r, i % 3 == 0 ? n - 1 : n / 4 + 1);
		for (uint32_t i = 0; i < kb; i++)
			sb[i] = 1 + (uint32_t)rng_below(&r, i % 3 == 1 ? n - 1 : n / 4 + 1);
		struct cover a, b;
		random_cover(&a, &r, n, ka, sa);
		random_cover(&b, &r, n, kb, sb);
		double mx, lfk;
		brute_scores(&a, &b, &mx, &lfk);
		assert_true(fabs(score_onmi_max(&a, &b) - mx) < 1e-12);
		assert_true(fabs(score_onmi_lfk(&a, &b) - lfk) < 1e-12);
		cover_release(&a);
		cover_release(&b);
	}
}

static void test_scores_are_symmetric_and_in_unit_range(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 5);
	for (int trial = 0; trial < 10; trial++) {
		uint32_t sa[6], sb[9];
		for (int i = 0; i < 6; i++)
			sa[i] = 1 + (uint32_t)rng_below(&r, 80);
		for (int i = 0; i < 9; i++)
			sb[i] = 1 + (uint32_t)rng_below(&r, 40);
		struct cover a, b;
		random_cover(&a, &r, 150, 6, sa);
		random_cover(&b, &r, 150, 9, sb);
		double m1 = score_onmi_max(&a, &b), m2 = score_onmi_max(&b, &a);
		double l1 = score_onmi_lfk(&a, &b), l2 = score_onmi_lfk(&b, &a);
		/* both definitions are symmetric in X and Y by construction */
		assert_true(fabs(m1 - m2) < 1e-12);
		assert_true(fabs(l1 - l2) < 1e-12);
		assert_true(m1 >= 0.0 && m1 <= 1.0 && l1 >= 0.0 && l1 <= 1.0);
		cover_release(&a);
		cover_release(&b);
	}
}

/*
 * Planted communities against random ones of the same sizes. Under
 * independence the mutual information of every pair is 0 in expectation;
 * what remains is the finite-sample bias of the plug-in entropies, of
 * order 1/n per pair, so with n = 2000 both forms stay far below the 0.05
 * used here. The sizes (300 to 900) are large enough for many pairs to
 * pass the LFK condition, so the conditional entropies are really
 * computed, not all rejected. A copy of the truth with 5% of each
 * community's members swapped for outsiders must score far higher.
 */
static void test_random_cover_of_same_sizes_scores_low(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 31337);
	uint32_t sizes[20];
	for (int i = 0; i < 20; i++)
		sizes[i] = 300 + 150 * (uint32_t)(i % 5);
	struct cover truth, found;
	random_cover(&truth, &r, 2000, 20, sizes);
	random_cover(&found, &r, 2000, 20, sizes);
	double rm = score_onmi_max(&truth, &found), rl = score_onmi_lfk(&truth, &found);
	assert_true(rm >= 0.0 && rm < 0.05);
	assert_true(rl >= 0.0 && rl < 0.05);

	/* the noisy copy: member j of community i replaced when j % 20 == 0 */
	uint64_t total = truth.off[truth.k];
	uint32_t *node = malloc(total * sizeof *node), *comm = malloc(total * sizeof *comm);
	uint8_t *in = malloc(2000);
	assert_true(node && comm && in);
	uint64_t at = 0;
	for (uint32_t i = 0; i < truth.k; i++) {
		memset(in, 0, 2000);
		for (uint64_t j = truth.off[i]; j < truth.off[i + 1]; j++)
			in[truth.mem[j]] = 1;
		for (uint64_t j = truth.off[i]; j < truth.off[i + 1]; j++) {
			uint32_t u = truth.mem[j];
			if ((j - truth.off[i]) % 20 == 0) {
				do
					u = (uint32_t)rng_below(&r, 2000);
				while (in[u]);
				in[u] = 1;
			}
			node[at] = u;
			comm[at++] = i;
		}
	}
	struct cover noisy;
	assert_int_equal(cover_from_pairs(&noisy, 2000, node, comm, at), 0);
	assert_true(score_onmi_max(&truth, &noisy) > rm + 0.3);
	assert_true(score_onmi_lfk(&truth, &noisy) > rl + 0.3);
	free(node);
	free(comm);
	free(in);
	cover_release(&noisy);
	cover_release(&truth);
	cover_release(&found);
}

/* Empty communities and a community of every node are constant variables
 * (H = 0) and are ignored; two covers with nothing left score 1 when they
 * have the same non-empty communities, else 0 (score.h). */
static void test_constant_communities_and_mismatched_covers(void **state)
{
	(void)state;
	struct cover x, y, none, all;
	test_make_cover(&x, 8, 2, (const uint32_t[]){ 4, 2 }, (const uint32_t[]){ 0, 1, 2, 3, 4, 5 });
	/* the same communities plus one of all 8 nodes */
	test_make_cover(&y, 8, 3, (const uint32_t[]){ 4, 8, 2 },
		   (const uint32_t[]){ 0, 1, 2, 3, 0, 1, 2, 3, 4, 5, 6, 7, 4, 5 });
	assert_true(fabs(score_onmi_max(&x, &y) - 1.0) < 1e-12);
	assert_true(fabs(score_onmi_lfk(&x, &y) - 1.0) < 1e-12);

	test_make_cover(&none, 8, 0, NULL, NULL);
	test_make_cover(&all, 8, 1, (const uint32_t[]){ 8 },
		   (const uint32_t[]){ 0, 1, 2, 3, 4, 5, 6, 7 });
	assert_true(score_onmi_max(&none, &none) == 1.0);
	assert_true(score_onmi_lfk(&none, &none) == 1.0);
	assert_true(score_onmi_max(&all, &all) == 1.0);
	assert_true(score_onmi_max(&none, &all) == 0.0);
	assert_true(score_onmi_max(&none, &x) == 0.0);
	assert_true(score_onmi_lfk(&x, &none) == 0.0);

	struct cover other;
	test_make_cover(&other, 9, 1, (const uint32_t[]){ 2 }, (const uint32_t[]){ 0, 1 });
	assert_true(score_onmi_max(&x, &other) == -1.0); /* different n */
	assert_true(score_onmi_lfk(&other, &x) == -1.0);
	cover_release(&x);
	cover_release(&y);
	cover_release(&none);
	cover_release(&all);
	cover_release(&other);
}

/* ==== Omega index, best-match F1, plain NMI, counts ==================== */

/*
 * Omega index (Collins & Dent 1988), worked by hand. n = 5,
 *   A = { A1 = {0,1,2}, A2 = {2,3} },  B = { B1 = {0,1}, B2 = {1,2,3}, B3 = {1,2} }.
 * Communities shared by each of the 10 pairs (t_A, t_B):
 *   01 (1,1)  02 (1,0)  03 (0,0)  04 (0,0)  12 (1,2)
 *   13 (0,1)  14 (0,0)  23 (1,1)  24 (0,0)  34 (0,0)
 *   agreeing: 01 03 04 14 23 24 34 = 7, observed = 7/10 = 0.7
 *   N_A: t=0 6, t=1 4;  N_B: t=0 6, t=1 3, t=2 1
 *   expected = (6*6 + 4*3 + 0*1) / 10^2 = 0.48
 *   Omega = (0.7 - 0.48) / (1 - 0.48) = 0.22 / 0.52 = 11/26 = 0.4230769
 * With a sixth node in no community of either cover, the 5 new pairs all
 * agree at (0,0): observed = 12/15, N_A = (11, 4), N_B = (11, 3, 1),
 *   expected = (121 + 12)/225 = 133/225,
 *   Omega = (180 - 133)/(225 - 133) = 47/92 = 0.5108696
 */
static void test_omega_matches_hand_worked_example(void **state)
{
	(void)state;
	struct cover a, b;
	double om;
	for (uint32_t n = 5; n <= 6; n++) {
		test_make_cover(&a, n, 2, (const uint32_t[]){ 3, 2 },
				(const uint32_t[]){ 0, 1, 2, 2, 3 });
		test_make_cover(&b, n, 3, (const uint32_t[]){ 2, 3, 2 },
				(const uint32_t[]){ 0, 1, 1, 2, 3, 1, 2 });
		assert_int_equal(score_omega(&a, &b, &om), 0);
		if (n == 5)
			assert_true(fabs(om - 11.0 / 26.0) < 1e-12); /* worked above */
		else
			assert_true(fabs(om - 47.0 / 92.0) < 1e-12); /* worked above */
		assert_true(fabs(om - (n == 5 ? 0.4230769 : 0.5108696)) < 1e-7);
		cover_release(&a);
		cover_release(&b);
	}
}

/*
 * Average best-match F1 (Yang & Leskovec, WSDM 2013), worked by hand,
 * F1(C, D) = 2|C n D| / (|C| + |D|). n = 5,
 *   A = { A1 = {0,1,2}, A2 = {2,3} },  B = { B1 = {0}, B2 = {1,2,3,4} }.
 *   A1: B1 2/4 = 0.5, B2 2*2/7 = 4/7 -> 4/7;  A2: B1 0, B2 2*2/6 = 2/3 -> 2/3
 *   A to B = (4/7 + 2/3)/2 = 13/21
 *   B1: A1 1/2, A2 0 -> 1/2;  B2: A1 4/7, A2 2/3 -> 2/3
 *   B to A = (1/2 + 2/3)/2 = 7/12
 *   F1 = (13/21 + 7/12)/2 = 101/168 = 0.6011905
 */
static void test_f1_matches_hand_worked_example(void **state)
{
	(void)state;
	struct cover a, b;
	test_make_cover(&a, 5, 2, (const uint32_t[]){ 3, 2 }, (const uint32_t[]){ 0, 1, 2, 2, 3 });
	test_make_cover(&b, 5, 2, (const uint32_t[]){ 1, 4 }, (const uint32_t[]){ 0, 1, 2, 3, 4 });
	double ab, ba;
	assert_true(fabs(score_f1(&a, &b, &ab, &ba) - 101.0 / 168.0) < 1e-12); /* above */
	assert_true(fabs(ab - 13.0 / 21.0) < 1e-12);
	assert_true(fabs(ba - 7.0 / 12.0) < 1e-12);
	assert_true(fabs(score_f1(&b, &a, &ba, &ab) - 0.6011905) < 1e-7);
	assert_true(fabs(ab - 13.0 / 21.0) < 1e-12); /* the halves swap with the order */
	cover_release(&a);
	cover_release(&b);
}

/*
 * One overlapping cover, every measure by hand. n = 6, node 3 in two
 * communities of X, node 5 in none of X:
 *   X = { X1 = {0,1,2,3}, X2 = {3,4} },  Y = { Y1 = {0,1,2}, Y2 = {3,4,5} }.
 * Entropies with h(w) = -(w/6) log2(w/6), L3 = log2 3:
 *   h(1) = (1 + L3)/6, h(2) = L3/3, h(3) = 1/2, h(4) = (2/3)(L3 - 1)
 *   H(X1) = H(X2) = h(4) + h(2) = L3 - 2/3 = 0.9182958;  H(Y1) = H(Y2) = 1
 *   X1,Y1: a=2 b=0 c=1 d=3; h(2)+h(3) = 1.0283 >= h(0)+h(1) = 0.4308, kept;
 *          J = h(2) + h(1) + h(3) = (4 + 3 L3)/6 = 1.4591479
 *   X1,Y2: a=0 b=2 c=3 d=1; 0.4308 < 1.0283, discarded
 *   X2,Y1: a=1 b=3 c=2 d=0; 0.4308 < 1.0283, discarded
 *   X2,Y2: a=3 b=1 c=0 d=2; kept, J = h(3) + h(1) + h(2) = 1.4591479
 *   H(Xi|Y) = J - 1 = (L3 - 2/3)/2 = 0.4591479;  H(Yj|X) = J - H(Xi) = (8 - 3 L3)/6
 *   I = (2 H(X1) - 2(J - 1) + 2 - 2(J - H(X1)))/2 = L3 - 2/3
 *   max form: I / max(2 H(X1), 2) = (L3 - 2/3)/2 = 0.4591479
 *   LFK form: 1 - (1/2 + (8 - 3 L3)/6)/2 = (1 + 3 L3)/12 = 0.4795740
 * Omega: pairs sharing a community, (t_X, t_Y): 01 02 12 (1,1), 03 13 23
 *   (1,0), 34 (1,1), 35 45 (0,1); the other 6 pairs (0,0).
 *   agree = 3 + 1 + 6 = 10 of 15; N_X = (8, 7), N_Y = (9, 6)
 *   expected = (8*9 + 7*6)/225 = 114/225; Omega = (150 - 114)/(225 - 114) = 12/37
 * F1: X1 best Y1 2*3/7 = 6/7, X2 best Y2 2*2/5 = 4/5; Y1 best X1 6/7, Y2
 *   best X2 4/5; both halves (6/7 + 4/5)/2 = 29/35 = 0.8285714.
 */
static void test_overlapping_cover_worked_by_hand_for_every_measure(void **state)
{
	(void)state;
	struct cover x, y;
	test_make_cover(&x, 6, 2, (const uint32_t[]){ 4, 2 }, (const uint32_t[]){ 0, 1, 2, 3, 3, 4 });
	test_make_cover(&y, 6, 2, (const uint32_t[]){ 3, 3 }, (const uint32_t[]){ 0, 1, 2, 3, 4, 5 });
	double om, ab, ba, nmi = 42;
	assert_true(fabs(score_onmi_max(&x, &y) - (L3 - 2.0 / 3.0) / 2.0) < 1e-12); /* above */
	assert_true(fabs(score_onmi_max(&x, &y) - 0.4591479) < 1e-7);
	assert_true(fabs(score_onmi_lfk(&x, &y) - (1.0 + 3.0 * L3) / 12.0) < 1e-12); /* above */
	assert_true(fabs(score_onmi_lfk(&x, &y) - 0.4795740) < 1e-7);
	assert_int_equal(score_omega(&x, &y, &om), 0);
	assert_true(fabs(om - 12.0 / 37.0) < 1e-12); /* above */
	assert_true(fabs(score_f1(&x, &y, &ab, &ba) - 29.0 / 35.0) < 1e-12); /* above */
	assert_true(fabs(ab - 29.0 / 35.0) < 1e-12 && fabs(ba - 29.0 / 35.0) < 1e-12);
	assert_int_equal(score_nmi(&x, &y, &nmi), 0); /* X is no partition */
	cover_release(&x);
	cover_release(&y);
}

/* The Omega index over every pair, straight from Collins & Dent's
 * definition, written independently of score.c's classes of nodes. */
static double brute_omega(const struct cover *a, const struct cover *b)
{
	uint8_t *da = dense(a), *db = dense(b);
	uint32_t n = a->n, kmax = (a->k > b->k ? a->k : b->k) + 1;
	double *na = calloc(kmax, sizeof *na), *nb = calloc(kmax, sizeof *nb);
	assert_true(na && nb);
	double M = 0, agree = 0;
	for (uint32_t u = 0; u < n; u++)
		for (uint32_t v = u + 1; v < n; v++) {
			uint32_t ta = 0, tb = 0;
			for (uint32_t i = 0; i < a->k; i++)
				ta += da[(size_t)i * n + u] && da[(size_t)i * n + v];
			for (uint32_t j = 0; j < b->k; j++)
				tb += db[(size_t)j * n + u] && db[(size_t)j * n + v];
			M++;
			agree += ta == tb;
			na[ta]++;
			nb[tb]++;
		}
	double exp_ = 0;
	for (uint32_t k = 0; k < kmax; k++)
		exp_ += na[k] * nb[k] / (M * M);
	free(na);
	free(nb);
	free(da);
	free(db);
	return (agree / M - exp_) / (1.0 - exp_);
}

/* Covers with nested and repeated communities, so many nodes share the
 * same lists (the classes score.c enumerates) and pairs share 2 or more. */
static void nested_cover(struct cover *c, struct rng *r, uint32_t n, uint32_t k)
{
	uint32_t sizes[16];
	for (uint32_t i = 0; i < k; i++)
		sizes[i] = 1 + (uint32_t)rng_below(r, n - 1);
	if (k > 2)
		sizes[k - 1] = sizes[k - 2]; /* a repeated size */
	random_cover(c, r, n, k, sizes);
}

static void test_omega_matches_all_pairs_definition(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 4242);
	for (int trial = 0; trial < 30; trial++) {
		uint32_t n = 2 + (uint32_t)rng_below(&r, 60);
		struct cover a, b;
		nested_cover(&a, &r, n, 1 + (uint32_t)rng_below(&r, 10));
		nested_cover(&b, &r, n, 1 + (uint32_t)rng_below(&r, 10));
		double om, want = brute_omega(&a, &b);
		assert_int_equal(score_omega(&a, &b, &om), 0);
		if (isfinite(want)) /* expected = 1 is the limit case tested elsewhere */
			assert_true(fabs(om - want) < 1e-12);
		cover_release(&a);
		cover_release(&b);
	}
}

/* Omega with communities big enough (more than 2048 kinds of member, see
 * score.c) to be counted by masks rather than pair by pair, against the
 * all-pairs definition (Collins & Dent 1988) over 4000 nodes, computed
 * here with one bit per community and node. */
static void test_omega_with_giant_communities_matches_all_pairs(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 2026);
	const uint32_t n = 4000;
	/* A: a giant of 3000 and 40 of 150; B: two big (2500, 2200), 30 of 200 */
	uint32_t sa[41], sb[32];
	sa[0] = 3000;
	for (int i = 1; i < 41; i++)
		sa[i] = 150;
	sb[0] = 2500;
	sb[1] = 2200;
	for (int i = 2; i < 32; i++)
		sb[i] = 200;
	struct cover a, b;
	random_cover(&a, &r, n, 41, sa);
	random_cover(&b, &r, n, 32, sb);
	uint64_t *ba = calloc(n, sizeof *ba), *bb = calloc(n, sizeof *bb);
	assert_true(ba && bb);
	for (uint32_t i = 0; i < a.k; i++)
		for (uint64_t j = a.off[i]; j < a.off[i + 1]; j++)
			ba[a.mem[j]] |= (uint64_t)1 << i;
	for (uint32_t i = 0; i < b.k; i++)
		for (uint64_t j = b.off[i]; j < b.off[i + 1]; j++)
			bb[b.mem[j]] |= (uint64_t)1 << i;
	double na[65] = { 0 }, nb[65] = { 0 }, M = 0, agree = 0;
	for (uint32_t u = 0; u < n; u++)
		for (uint32_t v = u + 1; v < n; v++) {
			int ta = __builtin_popcountll(ba[u] & ba[v]);
			int tb = __builtin_popcountll(bb[u] & bb[v]);
			M++;
			agree += ta == tb;
			na[ta]++;
			nb[tb]++;
		}
	double exp_ = 0;
	for (int k = 0; k < 65; k++)
		exp_ += na[k] * nb[k] / (M * M);
	double want = (agree / M - exp_) / (1.0 - exp_), om;
	assert_int_equal(score_omega(&a, &b, &om), 0);
	assert_true(fabs(om - want) < 1e-12);
	assert_int_equal(score_omega(&b, &a, &om), 0);
	assert_true(fabs(om - want) < 1e-12);
	assert_int_equal(score_omega(&a, &a, &om), 0);
	assert_true(fabs(om - 1.0) < 1e-12);
	free(ba);
	free(bb);
	cover_release(&a);
	cover_release(&b);
}

/* Identical covers: 1 for every measure (each paper's definition gives 1
 * at equality; Omega: observed = 1). */
static void test_every_measure_is_one_for_identical_covers(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 11);
	for (int trial = 0; trial < 10; trial++) {
		struct cover a;
		nested_cover(&a, &r, 10 + (uint32_t)rng_below(&r, 90), 1 + (uint32_t)rng_below(&r, 12));
		double om, ab, ba, nmi = -1;
		assert_true(fabs(score_onmi_max(&a, &a) - 1.0) < 1e-12);
		assert_true(fabs(score_onmi_lfk(&a, &a) - 1.0) < 1e-12);
		assert_int_equal(score_omega(&a, &a, &om), 0);
		assert_true(fabs(om - 1.0) < 1e-12);
		assert_true(fabs(score_f1(&a, &a, &ab, &ba) - 1.0) < 1e-12);
		assert_true(ab == 1.0 && ba == 1.0);
		cover_release(&a);

		/* a partition, for plain NMI as well */
		uint32_t n = 5 + (uint32_t)rng_below(&r, 50);
		int64_t *lab = malloc(n * sizeof *lab);
		assert_non_null(lab);
		for (uint32_t u = 0; u < n; u++)
			lab[u] = (int64_t)rng_below(&r, 1 + trial);
		assert_int_equal(cover_from_membership(&a, n, lab), 0);
		assert_int_equal(score_nmi(&a, &a, &nmi), 1);
		assert_true(fabs(nmi - 1.0) < 1e-12);
		assert_int_equal(score_omega(&a, &a, &om), 0);
		assert_true(fabs(om - 1.0) < 1e-12);
		free(lab);
		cover_release(&a);
	}
}

/* ONMI max, Omega and the average F1 are symmetric in their arguments by
 * definition (each is built from symmetric terms). */
static void test_symmetric_measures_are_symmetric(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 77);
	for (int trial = 0; trial < 20; trial++) {
		uint32_t n = 3 + (uint32_t)rng_below(&r, 120);
		struct cover a, b;
		nested_cover(&a, &r, n, 1 + (uint32_t)rng_below(&r, 12));
		nested_cover(&b, &r, n, 1 + (uint32_t)rng_below(&r, 12));
		double o1, o2;
		assert_int_equal(score_omega(&a, &b, &o1), 0);
		assert_int_equal(score_omega(&b, &a, &o2), 0);
		assert_true(fabs(o1 - o2) < 1e-12 && o1 <= 1.0 + 1e-12);
		assert_true(fabs(score_f1(&a, &b, NULL, NULL) - score_f1(&b, &a, NULL, NULL)) < 1e-12);
		assert_true(fabs(score_onmi_max(&a, &b) - score_onmi_max(&b, &a)) < 1e-12);
		cover_release(&a);
		cover_release(&b);
	}
}

/* Plain NMI against scikit-learn 1.2.1 (Debian python3-sklearn
 * 1.2.1+dfsg-1), normalized_mutual_info_score with average_method=
 * 'arithmetic': tests/data/nmi/expected.tsv, written by
 * tests/data/nmi/make.py from the partitions beside it. */
static void test_plain_nmi_matches_scikit_learn(void **state)
{
	(void)state;
	char path[4096];
	snprintf(path, sizeof path, "%s", test_data("nmi/expected.tsv"));
	FILE *f = fopen(path, "r");
	assert_non_null(f);
	char line[256];
	int cases = 0;
	while (fgets(line, sizeof line, f)) {
		if (line[0] == '#')
			continue;
		char name[64];
		double want;
		assert_int_equal(sscanf(line, "%63s %lf", name, &want), 2);
		char pa[4096], pb[4096], rel[128];
		snprintf(rel, sizeof rel, "nmi/%s.a.tsv", name);
		snprintf(pa, sizeof pa, "%s", test_data(rel));
		snprintf(rel, sizeof rel, "nmi/%s.b.tsv", name);
		snprintf(pb, sizeof pb, "%s", test_data(rel));
		struct names *nodes = names_new(0);
		struct cover a, b;
		assert_non_null(nodes);
		assert_int_equal(cover_read(&a, pa, nodes), 0);
		assert_int_equal(cover_read(&b, pb, nodes), 0);
		a.n = b.n = names_count(nodes);
		double got = -1;
		assert_int_equal(score_nmi(&a, &b, &got), 1);
		assert_true(fabs(got - want) < 1e-9); /* scikit-learn 1.2.1, see above */
		cover_release(&a);
		cover_release(&b);
		names_free(nodes);
		cases++;
	}
	fclose(f);
	assert_int_equal(cases, 9);
}

/* NMI is for partitions only: a node in two communities, or in none, and
 * it does not apply (score.h). */
static void test_plain_nmi_needs_two_partitions(void **state)
{
	(void)state;
	struct cover a, b;
	double v = 42;
	test_make_cover(&a, 4, 2, (const uint32_t[]){ 2, 2 }, (const uint32_t[]){ 0, 1, 2, 3 });
	test_make_cover(&b, 4, 2, (const uint32_t[]){ 3, 2 }, (const uint32_t[]){ 0, 1, 2, 2, 3 });
	assert_int_equal(score_nmi(&a, &b, &v), 0); /* node 2 in two */
	cover_release(&b);
	test_make_cover(&b, 4, 2, (const uint32_t[]){ 2, 1 }, (const uint32_t[]){ 0, 1, 3 });
	assert_int_equal(score_nmi(&b, &a, &v), 0); /* node 2 in none */
	assert_true(v == 42);
	cover_release(&a);
	cover_release(&b);
}

/* Counts: A = {0,1,2},{2,3} and B = {0,1},{1,2,3,4},{1,2} of n = 6 (node
 * 5 in neither, node 4 only in B): by inspection A has 2 communities, 4
 * covered nodes (0-3), 1 overlapping (2), none only in A; B has 3, 5
 * covered (0-4), 2 overlapping (1 in three, 2 in two), 1 only in B (4). */
static void test_sides_count_communities_and_nodes(void **state)
{
	(void)state;
	struct cover a, b;
	test_make_cover(&a, 6, 2, (const uint32_t[]){ 3, 2 }, (const uint32_t[]){ 0, 1, 2, 2, 3 });
	test_make_cover(&b, 6, 3, (const uint32_t[]){ 2, 4, 2 },
			(const uint32_t[]){ 0, 1, 1, 2, 3, 4, 1, 2 });
	struct score_side sa, sb;
	assert_int_equal(score_sides(&a, &b, &sa, &sb), 0);
	assert_int_equal(sa.communities, 2);
	assert_int_equal(sa.covered, 4);
	assert_int_equal(sa.overlapping, 1);
	assert_int_equal(sa.only, 0);
	assert_int_equal(sb.communities, 3);
	assert_int_equal(sb.covered, 5);
	assert_int_equal(sb.overlapping, 2);
	assert_int_equal(sb.only, 1);
	cover_release(&a);
	cover_release(&b);
}

/* Limit cases of score.h: one node (no pair) and every pair sharing the
 * same number of communities on both sides (expected = 1) give Omega 1;
 * different n is an error. */
static void test_omega_limit_cases(void **state)
{
	(void)state;
	struct cover a, b, c;
	double om = 0;
	test_make_cover(&a, 1, 1, (const uint32_t[]){ 1 }, (const uint32_t[]){ 0 });
	assert_int_equal(score_omega(&a, &a, &om), 0);
	assert_true(om == 1.0);
	cover_release(&a);
	test_make_cover(&a, 3, 1, (const uint32_t[]){ 3 }, (const uint32_t[]){ 0, 1, 2 });
	test_make_cover(&b, 3, 2, (const uint32_t[]){ 3, 3 }, (const uint32_t[]){ 0, 1, 2, 0, 1, 2 });
	assert_int_equal(score_omega(&a, &a, &om), 0);
	assert_true(om == 1.0);
	/* all pairs at 1 against all pairs at 2: observed 0, expected 0, Omega 0 */
	assert_int_equal(score_omega(&a, &b, &om), 0);
	assert_true(om == 0.0);
	test_make_cover(&c, 4, 1, (const uint32_t[]){ 2 }, (const uint32_t[]){ 0, 1 });
	assert_int_equal(score_omega(&a, &c, &om), -1);
	assert_true(score_f1(&a, &c, NULL, NULL) == -1.0);
	cover_release(&a);
	cover_release(&b);
	cover_release(&c);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_identical_covers_score_one),
		cmocka_unit_test(test_max_form_matches_hand_worked_example),
		cmocka_unit_test(test_partitions_match_hand_worked_example),
		cmocka_unit_test(test_disjoint_communities_are_scored_by_the_lfk_condition),
		cmocka_unit_test(test_sparse_evaluation_matches_all_pairs),
		cmocka_unit_test(test_scores_are_symmetric_and_in_unit_range),
		cmocka_unit_test(test_random_cover_of_same_sizes_scores_low),
		cmocka_unit_test(test_constant_communities_and_mismatched_covers),
		cmocka_unit_test(test_omega_matches_hand_worked_example),
		cmocka_unit_test(test_f1_matches_hand_worked_example),
		cmocka_unit_test(test_overlapping_cover_worked_by_hand_for_every_measure),
		cmocka_unit_test(test_omega_matches_all_pairs_definition),
		cmocka_unit_test(test_omega_with_giant_communities_matches_all_pairs),
		cmocka_unit_test(test_every_measure_is_one_for_identical_covers),
		cmocka_unit_test(test_symmetric_measures_are_symmetric),
		cmocka_unit_test(test_plain_nmi_matches_scikit_learn),
		cmocka_unit_test(test_plain_nmi_needs_two_partitions),
		cmocka_unit_test(test_sides_count_communities_and_nodes),
		cmocka_unit_test(test_omega_limit_cases),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
