/*
 * score: agreement between two covers of the same n nodes, by counting:
 * the Omega index, the average best-match F1, plain NMI of partitions and
 * the counts of each side. (The overlapping NMIs, built on entropies, are
 * in score_onmi.c.)
 *
 * These read a cover through a node -> communities index (struct nidx),
 * over every non-empty community (a community of all n nodes included:
 * unlike in the overlapping NMIs it carries pairs and matches).
 *
 * Omega (Collins & Dent 1988). For each of the M = n(n-1)/2 pairs of
 * nodes, t_A and t_B are the numbers of communities of A and of B holding
 * both. With N_A(k), N_B(k) the pairs having t = k and W the pairs having
 * t_A = t_B,   observed = W / M,   expected = sum_k N_A(k) N_B(k) / M^2,
 *   Omega = (observed - expected) / (1 - expected).
 * Pairs are not visited one by one: nodes with the same communities on
 * both sides form a class, and two classes relate as any two of their
 * nodes do. A few big communities (more than OMEGA_BIG_CLASSES classes;
 * at most OMEGA_MAX_BIG, both sides together) get a bit each, and every
 * pair is first counted as if it shared only big communities, from the
 * masks of its two classes (pairs of masks, at most 2^10 of them). Then
 * the pairs of classes that share a small community are enumerated
 * (O(sum over small communities of its classes squared)), and so are the
 * pairs inside one class: each adds its true (t_A, t_B) and takes back
 * its guess by mask. A giant community therefore costs nothing by itself.
 * When expected is exactly 1 (every pair shares the same number on both
 * sides, so observed is 1 too) and when M = 0, Omega is 1.
 *
 * The one thing a newcomer gets wrong here: the counts go through
 * unsigned wrap-around (a guess may be taken back before the true count
 * of the same bin is added); only the final counts are meaningful.
 */
#include "coterie/score.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/cover.h"
#include "coterie/util.h"


struct nidx {
	uint64_t *off;   /* n + 1 */
	uint32_t *com;   /* communities of node u: com[off[u] .. off[u+1]), increasing */
	uint32_t maxdeg; /* most communities of one node */
	uint32_t k;      /* non-empty communities */
};

static void nidx_release(struct nidx *x)
{
	free(x->off);
	free(x->com);
	memset(x, 0, sizeof *x);
}

static int nidx_build(struct nidx *x, const struct cover *c)
{
	memset(x, 0, sizeof *x);
	if (cover_check(c) < 0)
		return -1;
	uint64_t n = c->n, total = c->off[c->k];
	x->off = util_calloc((size_t)n + 1, sizeof *x->off);
	x->com = util_malloc((size_t)total, sizeof *x->com);
	uint64_t *at = util_malloc((size_t)n + 1, sizeof *at);
	if (!x->off || !x->com || !at) {
		free(at);
		nidx_release(x);
		return -1;
	}
	for (uint64_t j = 0; j < total; j++)
		x->off[c->mem[j] + 1]++;
	for (uint64_t u = 0; u < n; u++) {
		if (x->off[u + 1] > x->maxdeg)
			x->maxdeg = (uint32_t)x->off[u + 1];
		x->off[u + 1] += x->off[u];
	}
	memcpy(at, x->off, ((size_t)n + 1) * sizeof *at);
	for (uint32_t i = 0; i < c->k; i++) {
		if (c->off[i + 1] > c->off[i])
			x->k++;
		for (uint64_t j = c->off[i]; j < c->off[i + 1]; j++)
			x->com[at[c->mem[j]]++] = i;
	}
	free(at);
	return 0;
}

/* The indexes of a into A and of b into B, once a and b are known to cover
 * the same nodes: 0, or -1 with nothing left to release. */
static int nidx_build_both(struct nidx *A, struct nidx *B, const struct cover *a,
			   const struct cover *b)
{
	if (cover_same_n(a, b) < 0 || nidx_build(A, a) < 0)
		return -1;
	if (nidx_build(B, b) < 0) {
		nidx_release(A);
		return -1;
	}
	return 0;
}

static uint32_t nidx_deg(const struct nidx *x, uint32_t u)
{
	return (uint32_t)(x->off[u + 1] - x->off[u]);
}

struct hnode {
	uint64_t hash;
	uint32_t node;
};

static int hnode_cmp(const void *pa, const void *pb)
{
	const struct hnode *a = pa, *b = pb;
	int c = util_cmp_uint(a->hash, b->hash);
	return c ? c : util_cmp_uint(a->node, b->node);
}

static int same_lists(const struct nidx *A, const struct nidx *B, uint32_t u, uint32_t v)
{
	uint32_t da = nidx_deg(A, u), db = nidx_deg(B, u);
	if (da != nidx_deg(A, v) || db != nidx_deg(B, v))
		return 0;
	return !memcmp(A->com + A->off[u], A->com + A->off[v], (size_t)da * sizeof *A->com) &&
	       !memcmp(B->com + B->off[u], B->com + B->off[v], (size_t)db * sizeof *B->com);
}

/* The classes' lists of one side: cls[coff[c] .. coff[c+1]) are the
 * classes (increasing) whose nodes are in community c. */
static int class_lists(const struct nidx *X, uint32_t kc, uint32_t ncls, const uint32_t *rep,
		       uint64_t **coff, uint32_t **cls)
{
	uint64_t total = 0;
	for (uint32_t p = 0; p < ncls; p++)
		total += nidx_deg(X, rep[p]);
	*coff = util_calloc((size_t)kc + 1, sizeof **coff);
	*cls = util_malloc((size_t)total, sizeof **cls);
	uint64_t *at = util_malloc((size_t)kc + 1, sizeof *at);
	if (!*coff || !*cls || !at) {
		free(at);
		return -1;
	}
	for (uint32_t p = 0; p < ncls; p++)
		for (uint64_t t = X->off[rep[p]]; t < X->off[rep[p] + 1]; t++)
			(*coff)[X->com[t] + 1]++;
	for (uint32_t c = 0; c < kc; c++)
		(*coff)[c + 1] += (*coff)[c];
	memcpy(at, *coff, ((size_t)kc + 1) * sizeof *at);
	for (uint32_t p = 0; p < ncls; p++)
		for (uint64_t t = X->off[rep[p]]; t < X->off[rep[p] + 1]; t++)
			(*cls)[at[X->com[t]]++] = p;
	free(at);
	return 0;
}

struct omega_acc {
	uint64_t *ha, *hb; /* N_A(k), N_B(k) */
	uint64_t agree;
};

/* Add (sign > 0) or take back (sign < 0) pairs sharing ta and tb
 * communities. Unsigned arithmetic wraps, so a count taken back before it
 * is added still ends right: every final count is a true count. */
static void omega_add(struct omega_acc *o, uint32_t ta, uint32_t tb, uint64_t pairs, int sign)
{
	if (sign < 0)
		pairs = (uint64_t)0 - pairs;
	o->ha[ta] += pairs;
	o->hb[tb] += pairs;
	if (ta == tb)
		o->agree += pairs;
}

static uint32_t popcount32(uint32_t x)
{
	uint32_t c = 0;
	for (; x; x &= x - 1)
		c++;
	return c;
}

/* Big communities: those holding more than OMEGA_BIG_CLASSES classes, at
 * most OMEGA_MAX_BIG of them (the most classes first), both sides
 * together. Their pairs are counted by masks, not enumerated. */
#define OMEGA_BIG_CLASSES 2048u
#define OMEGA_MAX_BIG 10u

struct bigc {
	uint64_t classes;
	uint32_t side, c;
};

static int bigc_cmp(const void *pa, const void *pb)
{
	const struct bigc *x = pa, *y = pb;
	if (x->classes != y->classes)
		return x->classes > y->classes ? -1 : 1;
	if (x->side != y->side)
		return x->side < y->side ? -1 : 1;
	return util_cmp_uint(x->c, y->c);
}

/* The state of one Omega computation; the steps below fill it in order. */
struct omega {
	struct nidx A, B;
	uint32_t ncls;          /* classes */
	uint32_t *rep, *w;      /* ncls: a node of each class, its size */
	uint64_t *coa, *cob;    /* class lists of A's and B's communities */
	uint32_t *cla, *clb;
	uint32_t *bitA, *bitB;  /* a big community's bit, 0 for a small one */
	uint32_t *mask;         /* ncls: the bits of the class's big communities */
	uint32_t maskA;         /* the bits that are A's */
	uint64_t *W;            /* 2^OMEGA_MAX_BIG: nodes of each mask */
	struct omega_acc o;
};

static void omega_release(struct omega *m)
{
	UTIL_FREE_ALL(m->rep, m->w, m->bitA, m->bitB, m->mask, m->W, m->coa, m->cob, m->cla, m->clb,
		      m->o.ha, m->o.hb);
	nidx_release(&m->A);
	nidx_release(&m->B);
}

/* Classes: nodes with the same lists on both sides, found by hashing the
 * lists and comparing within a hash. */
static int omega_classes(struct omega *m, uint32_t n)
{
	const struct nidx *A = &m->A, *B = &m->B;
	struct hnode *hn = util_malloc(n, sizeof *hn);
	m->rep = util_malloc(n, sizeof *m->rep);
	m->w = util_calloc(n, sizeof *m->w);
	if (!hn || !m->rep || !m->w) {
		free(hn);
		return -1;
	}
	for (uint32_t u = 0; u < n; u++) {
		uint32_t da = nidx_deg(A, u), db = nidx_deg(B, u);
		uint64_t hh = util_fnv1a(UTIL_FNV_INIT, &da, sizeof da);
		hh = util_fnv1a(hh, A->com + A->off[u], (size_t)da * sizeof *A->com);
		hh = util_fnv1a(hh, &db, sizeof db);
		hh = util_fnv1a(hh, B->com + B->off[u], (size_t)db * sizeof *B->com);
		hn[u] = (struct hnode){ hh, u };
	}
	qsort(hn, n, sizeof *hn, hnode_cmp);
	for (uint32_t i = 0; i < n;) {
		uint32_t j = i;
		while (j < n && hn[j].hash == hn[i].hash)
			j++;
		uint32_t first = m->ncls; /* classes of this hash: first .. ncls-1 */
		for (uint32_t t = i; t < j; t++) {
			uint32_t u = hn[t].node, p = first;
			while (p < m->ncls && !same_lists(A, B, m->rep[p], u))
				p++;
			if (p == m->ncls)
				m->rep[m->ncls++] = u;
			m->w[p]++;
		}
		i = j;
	}
	free(hn);
	return 0;
}

/* The big communities get one bit each; mask[p] has the bits of class p's
 * big communities (A's and B's bits are apart), W[x] the nodes of mask x. */
static int omega_big(struct omega *m, uint32_t ka, uint32_t kb)
{
	m->bitA = util_calloc(ka + 1, sizeof *m->bitA);
	m->bitB = util_calloc(kb + 1, sizeof *m->bitB);
	m->mask = util_calloc(m->ncls, sizeof *m->mask);
	m->W = util_calloc((size_t)1 << OMEGA_MAX_BIG, sizeof *m->W);
	if (!m->bitA || !m->bitB || !m->mask || !m->W)
		return -1;
	struct bigc big[2 * OMEGA_MAX_BIG + 1];
	uint32_t nb = 0;
	for (uint32_t side = 0; side < 2; side++) {
		const uint64_t *coff = side ? m->cob : m->coa;
		uint32_t kc = side ? kb : ka;
		for (uint32_t c = 0; c < kc; c++) {
			uint64_t cl = coff[c + 1] - coff[c];
			if (cl <= OMEGA_BIG_CLASSES)
				continue;
			big[nb++] = (struct bigc){ cl, side, c };
			qsort(big, nb, sizeof *big, bigc_cmp);
			if (nb > OMEGA_MAX_BIG)
				nb = OMEGA_MAX_BIG;
		}
	}
	for (uint32_t i = 0; i < nb; i++) {
		if (big[i].side == 0) {
			m->bitA[big[i].c] = 1u << i;
			m->maskA |= 1u << i;
		} else {
			m->bitB[big[i].c] = 1u << i;
		}
	}
	for (uint32_t p = 0; p < m->ncls; p++) {
		uint32_t u = m->rep[p];
		for (uint64_t t = m->A.off[u]; t < m->A.off[u + 1]; t++)
			m->mask[p] |= m->bitA[m->A.com[t]];
		for (uint64_t t = m->B.off[u]; t < m->B.off[u + 1]; t++)
			m->mask[p] |= m->bitB[m->B.com[t]];
		m->W[m->mask[p]] += m->w[p];
	}
	return 0;
}

/* Every pair first as if it shared the big communities only: by mask. */
static void omega_count_by_mask(struct omega *m)
{
	uint32_t nkey = 0, key[1u << OMEGA_MAX_BIG], maskA = m->maskA;
	const uint64_t *W = m->W;
	for (uint32_t x = 0; x < (1u << OMEGA_MAX_BIG); x++)
		if (W[x])
			key[nkey++] = x;
	for (uint32_t i = 0; i < nkey; i++) {
		uint32_t x = key[i];
		omega_add(&m->o, popcount32(x & maskA), popcount32(x & ~maskA),
			  W[x] * (W[x] - 1) / 2, 1);
		for (uint32_t j = i + 1; j < nkey; j++) {
			uint32_t y = key[j];
			omega_add(&m->o, popcount32(x & y & maskA), popcount32(x & y & ~maskA),
				  W[x] * W[y], 1);
		}
	}
}

/* For class p: count in mt[q] the small communities of one side (X) that
 * hold p and a later class q, listing each q met first in touched. */
static void omega_meet_small(const struct omega *m, int side, uint32_t p, uint32_t *ma,
			     uint32_t *mb, uint32_t *touched, uint32_t *nt)
{
	const struct nidx *X = side ? &m->B : &m->A;
	const uint64_t *coff = side ? m->cob : m->coa;
	const uint32_t *cl = side ? m->clb : m->cla;
	const uint32_t *bit = side ? m->bitB : m->bitA;
	uint32_t *mt = side ? mb : ma, u = m->rep[p];
	for (uint64_t t = X->off[u]; t < X->off[u + 1]; t++) {
		uint32_t c = X->com[t];
		if (bit[c])
			continue; /* big: counted by mask */
		/* classes after p (p + 1 fits: p < ncls): the list is increasing */
		uint64_t lo = coff[c] + util_lower_bound_u32(cl + coff[c],
							     (size_t)(coff[c + 1] - coff[c]), p + 1);
		for (uint64_t s2 = lo; s2 < coff[c + 1]; s2++) {
			uint32_t q = cl[s2];
			if (ma[q] == 0 && mb[q] == 0)
				touched[(*nt)++] = q;
			mt[q]++;
		}
	}
}

/* Then the pairs that share a small community, and the pairs inside a
 * class, corrected: their guess by mask is taken back. */
static int omega_count_small(struct omega *m)
{
	uint32_t ncls = m->ncls, maskA = m->maskA;
	const uint32_t *w = m->w, *mask = m->mask;
	uint32_t *ma = util_calloc(ncls, sizeof *ma);
	uint32_t *mb = util_calloc(ncls, sizeof *mb);
	uint32_t *touched = util_malloc(ncls, sizeof *touched);
	if (!ma || !mb || !touched) {
		free(ma);
		free(mb);
		free(touched);
		return -1;
	}
	for (uint32_t p = 0; p < ncls; p++) {
		uint32_t u = m->rep[p], nt = 0;
		for (int side = 0; side < 2; side++)
			omega_meet_small(m, side, p, ma, mb, touched, &nt);
		for (uint32_t t = 0; t < nt; t++) {
			uint32_t q = touched[t], both = mask[p] & mask[q];
			uint32_t ga = popcount32(both & maskA), gb = popcount32(both & ~maskA);
			uint64_t pairs = (uint64_t)w[p] * w[q];
			omega_add(&m->o, ga + ma[q], gb + mb[q], pairs, 1);
			omega_add(&m->o, ga, gb, pairs, -1);
			ma[q] = mb[q] = 0;
		}
		uint64_t inside = (uint64_t)w[p] * (w[p] - 1) / 2;
		omega_add(&m->o, nidx_deg(&m->A, u), nidx_deg(&m->B, u), inside, 1);
		omega_add(&m->o, popcount32(mask[p] & maskA), popcount32(mask[p] & ~maskA), inside,
			  -1);
	}
	free(ma);
	free(mb);
	free(touched);
	return 0;
}

/* Omega from the final counts over M pairs. */
static double omega_value(const struct omega *m, uint64_t M)
{
	const struct omega_acc *o = &m->o;
	uint32_t top = m->A.maxdeg < m->B.maxdeg ? m->A.maxdeg : m->B.maxdeg;
	for (uint32_t k = 0; k <= top; k++)
		if (o->ha[k] == M && o->hb[k] == M)
			return 1.0; /* expected = observed = 1 */
	long double LM = (long double)M, exp_ = 0.0L;
	for (uint32_t k = 0; k <= top; k++)
		exp_ += ((long double)o->ha[k] / LM) * ((long double)o->hb[k] / LM);
	long double obs = (long double)o->agree / LM;
	return (double)((obs - exp_) / (1.0L - exp_));
}

int score_omega(const struct cover *a, const struct cover *b, double *out)
{
	struct omega m;
	memset(&m, 0, sizeof m);
	uint32_t n = a->n;

	if (nidx_build_both(&m.A, &m.B, a, b) < 0)
		return -1;
	uint64_t M = (uint64_t)n * (n ? n - 1 : 0) / 2;
	if (M == 0) {
		omega_release(&m);
		*out = 1.0;
		return 0;
	}
	m.o.ha = util_calloc((size_t)m.A.maxdeg + 1, sizeof *m.o.ha);
	m.o.hb = util_calloc((size_t)m.B.maxdeg + 1, sizeof *m.o.hb);
	int rc = -1;
	if (!m.o.ha || !m.o.hb || omega_classes(&m, n) < 0 ||
	    class_lists(&m.A, a->k, m.ncls, m.rep, &m.coa, &m.cla) < 0 ||
	    class_lists(&m.B, b->k, m.ncls, m.rep, &m.cob, &m.clb) < 0 ||
	    omega_big(&m, a->k, b->k) < 0)
		goto out;
	omega_count_by_mask(&m);
	if (omega_count_small(&m) < 0)
		goto out;
	*out = omega_value(&m, M);
	rc = 0;
out:
	omega_release(&m);
	return rc;
}

/*
 * Average best-match F1 (Yang & Leskovec, WSDM 2013, section 5):
 *   F1(C, D) = 2 |C n D| / (|C| + |D|),
 *   F1avg = 1/2 [ mean_{C in A} max_{D in B} F1(C, D)
 *               + mean_{D in B} max_{C in A} F1(C, D) ].
 * best[i] for each X_i: only communities meeting X_i can have F1 > 0, so
 * they are found through Y's node index.
 */
static int best_f1(const struct cover *X, const struct cover *Y, const struct nidx *Yi,
		   double *mean)
{
	uint32_t *cnt = util_calloc(Y->k, sizeof *cnt);
	uint32_t *touched = util_malloc(Y->k, sizeof *touched);
	if (!cnt || !touched) {
		free(cnt);
		free(touched);
		return -1;
	}
	double sum = 0.0;
	uint32_t kx = 0;
	for (uint32_t i = 0; i < X->k; i++) {
		uint64_t x = cover_size(X, i);
		if (x == 0)
			continue;
		kx++;
		uint32_t nt = 0;
		for (uint64_t j = X->off[i]; j < X->off[i + 1]; j++) {
			uint32_t u = X->mem[j];
			for (uint64_t t = Yi->off[u]; t < Yi->off[u + 1]; t++)
				if (cnt[Yi->com[t]]++ == 0)
					touched[nt++] = Yi->com[t];
		}
		double best = 0.0;
		for (uint32_t t = 0; t < nt; t++) {
			uint32_t y = touched[t];
			double f = 2.0 * cnt[y] / ((double)x + (double)cover_size(Y, y));
			if (f > best)
				best = f;
			cnt[y] = 0;
		}
		sum += best;
	}
	*mean = kx ? sum / kx : 0.0;
	free(cnt);
	free(touched);
	return 0;
}

double score_f1(const struct cover *a, const struct cover *b, double *a_to_b, double *b_to_a)
{
	struct nidx A, B;
	double ab = 0.0, ba = 0.0, result = -1.0;
	if (nidx_build_both(&A, &B, a, b) < 0)
		return -1.0;
	if (A.k == 0 || B.k == 0) {
		/* no community on one side: nothing to match */
		ab = ba = result = (A.k == 0 && B.k == 0) ? 1.0 : 0.0;
	} else if (best_f1(a, b, &B, &ab) == 0 && best_f1(b, a, &A, &ba) == 0) {
		result = 0.5 * (ab + ba);
	}
	if (result >= 0.0) {
		if (a_to_b)
			*a_to_b = ab;
		if (b_to_a)
			*b_to_a = ba;
	}
	nidx_release(&A);
	nidx_release(&B);
	return result;
}

/*
 * Plain NMI of two partitions, in natural logarithms (the base cancels):
 *   I = sum_ij (n_ij/n) ln(n n_ij / (a_i b_j)),  H(A) = -sum_i (a_i/n) ln(a_i/n),
 *   NMI = I / ((H(A) + H(B)) / 2),
 * the arithmetic normalisation of scikit-learn's
 * normalized_mutual_info_score, with its limit cases: 1 when both have a
 * single community, 0 when I = 0 otherwise.
 */
int score_nmi(const struct cover *a, const struct cover *b, double *out)
{
	struct nidx A, B;
	int rc = 0;
	uint32_t *cnt = NULL, *touched = NULL;
	if (nidx_build_both(&A, &B, a, b) < 0)
		return -1;
	uint32_t n = a->n;
	if (n == 0 || A.maxdeg != 1 || B.maxdeg != 1)
		goto out;
	for (uint32_t u = 0; u < n; u++)
		if (nidx_deg(&A, u) != 1 || nidx_deg(&B, u) != 1)
			goto out;
	rc = 1;
	if (A.k == 1 && B.k == 1) {
		*out = 1.0;
		goto out;
	}
	cnt = util_calloc(b->k, sizeof *cnt);
	touched = util_malloc(b->k, sizeof *touched);
	if (!cnt || !touched) {
		rc = -1;
		goto out;
	}
	double nn = (double)n, ln_n = log(nn), I = 0.0, ha = 0.0, hb_ = 0.0;
	for (uint32_t i = 0; i < a->k; i++) {
		uint64_t ai = cover_size(a, i);
		if (ai == 0)
			continue;
		ha -= ((double)ai / nn) * (log((double)ai) - ln_n);
		uint32_t nt = 0;
		for (uint64_t j = a->off[i]; j < a->off[i + 1]; j++) {
			uint32_t y = B.com[B.off[a->mem[j]]];
			if (cnt[y]++ == 0)
				touched[nt++] = y;
		}
		for (uint32_t t = 0; t < nt; t++) {
			uint32_t y = touched[t];
			double nij = cnt[y], bj = (double)cover_size(b, y);
			I += (nij / nn) * (log(nij) + ln_n - log((double)ai) - log(bj));
			cnt[y] = 0;
		}
	}
	for (uint32_t j = 0; j < b->k; j++) {
		uint64_t bj = cover_size(b, j);
		if (bj)
			hb_ -= ((double)bj / nn) * (log((double)bj) - ln_n);
	}
	if (A.k == 1 || B.k == 1 || I <= 0.0)
		*out = 0.0; /* a single community carries no information */
	else
		*out = I / (0.5 * (ha + hb_));
out:
	free(cnt);
	free(touched);
	nidx_release(&A);
	nidx_release(&B);
	return rc;
}

int score_sides(const struct cover *a, const struct cover *b, struct score_side *sa,
		struct score_side *sb)
{
	struct nidx A, B;
	if (nidx_build_both(&A, &B, a, b) < 0)
		return -1;
	memset(sa, 0, sizeof *sa);
	memset(sb, 0, sizeof *sb);
	sa->communities = A.k;
	sb->communities = B.k;
	for (uint32_t u = 0; u < a->n; u++) {
		uint32_t da = nidx_deg(&A, u), db = nidx_deg(&B, u);
		sa->covered += da > 0;
		sa->overlapping += da > 1;
		sa->only += da > 0 && db == 0;
		sb->covered += db > 0;
		sb->overlapping += db > 1;
		sb->only += db > 0 && da == 0;
	}
	nidx_release(&A);
	nidx_release(&B);
	return 0;
}
