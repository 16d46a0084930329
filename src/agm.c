/*
 * agm: memberships read back as an Affiliation Graph Model, the maximum-
 * likelihood link probability of every community, and the figures shown
 * for each community.
 *
 * The idea. With q_c = -ln(1 - p_c) and Q_uv = qeps + sum_{c shared} q_c,
 *     L(q) = sum_{uv in E} log(1 - exp(-Q_uv)) - sum_{uv not in E} Q_uv.
 * The non-edge sum never needs the O(n^2) pairs: a non-edge inside c
 * contributes q_c once for each community it shares, so
 *     sum_{uv not in E} Q_uv = qeps (N2 - m) + sum_c q_c (pairs_c - m_c)
 * (swap the order of summation: sum over non-edge pairs of the sum over
 * their shared communities = sum over communities of q_c times the number
 * of non-edge pairs inside c, which is pairs_c - m_c), with N2 = n(n-1)/2,
 * pairs_c = |c|(|c|-1)/2 and m_c the edges inside c. Only the edge term
 * couples communities, and only through edges that share at least one
 * community, so everything costs O(sum over edges of the communities they
 * share) plus O(n + k): an index node -> communities (sorted) is built,
 * and each edge's shared set is the merge of its two ends' lists. Edges
 * that share exactly one community c all have Q = qeps + q_c, so they are
 * only counted (solo_c) and enter as solo_c log(1 - exp(-qeps - q_c)); only
 * edges sharing two or more are kept one by one: in a good cover those
 * are few, so the work follows them, not m.
 *
 * L is concave in q (log(1 - exp(-x)) is concave and Q is linear in q).
 * agm_estimate_p() does cyclic coordinate ascent: for one community at a
 * time a Newton step on
 *     f_c(q) = sum_{e in c} log(1 - exp(-Q_e)) - q (pairs_c - m_c),
 *     f_c'   = sum_{e in c} w(Q_e) - (pairs_c - m_c),  w(Q) = 1/expm1(Q),
 *     f_c''  = -sum_{e in c} exp(Q)/expm1(Q)^2,
 * projected onto [lo, AGM_QMAX] and halved until f_c rises. The rise is
 * computed as a difference, term by term,
 *     log(1 - e^{-(Q+d)}) - log(1 - e^{-Q}) = log1p(w(Q) (1 - e^{-d})),
 * so it stays exact near the optimum where f_c itself is flat.
 *
 * The one thing a newcomer gets wrong: an edge whose only positive term is
 * q_c has w = 1/q_c, infinite at q_c = 0. A community with internal edges
 * therefore keeps q_c >= AGM_QLO (p about 1e-12), never 0; communities
 * without internal edges sit at 0 and cliques at AGM_QMAX, both exactly.
 * With epsilon = 0 an edge sharing nothing has probability 0: its term is
 * -inf but does not depend on q, so it is left out of the estimate and
 * agm_loglik() honestly returns -INFINITY.
 */
#include "coterie/agm.h"

#include <inttypes.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/model_directed.h"
#include "coterie/util.h"

#define AGM_QLO 1e-12     /* lower bound of q for a community with edges */
#define AGM_PASSES 200    /* coordinate passes at most */
/* Newton steps per community per pass: one was fastest on planted graphs
 * (the neighbours move a community again anyway). */
#define AGM_INNER 1
#define AGM_RELTOL 1e-10  /* stop when no q moves more than this, relatively */
#define AGM_HALVINGS 60

/* Node -> communities, and the shared sets of edges sharing something. */
struct index {
	uint32_t n, k;
	uint64_t *noff;  /* n + 1 */
	uint32_t *ncom;  /* u's communities, increasing */
	uint64_t *mc;    /* k: edges inside each community */
	uint64_t *solo;  /* k: edges whose shared set is this community alone */
	uint64_t lonely; /* edges whose ends share no community */
	uint64_t ne;     /* edges sharing two or more */
	uint64_t *eoff;  /* ne + 1 */
	uint32_t *ecom;  /* shared communities of each such edge */
	uint64_t *coff;  /* k + 1: community -> its edges sharing two or more */
	uint64_t *cedge;
	double *pairs;   /* k: the pairs of each community that are terms of L */
	double allpairs; /* the pairs of the graph that are */
};

static void index_release(struct index *ix)
{
	UTIL_FREE_ALL(ix->noff, ix->ncom, ix->mc, ix->solo, ix->eoff, ix->ecom, ix->coff, ix->cedge,
		      ix->pairs);
	memset(ix, 0, sizeof *ix);
}

static int check_input(const struct graph *g, const struct cover *c, double epsilon)
{
	if (!(epsilon >= 0.0 && epsilon < 1.0))
		return error("background probability %g out of range [0, 1)", epsilon);
	if (c->n != g->n)
		return error("cover has %" PRIu32 " nodes, graph has %" PRIu32, c->n, g->n);
	return cover_check(c);
}

static int index_nodes(struct index *ix, const struct cover *c)
{
	ix->n = c->n;
	ix->k = c->k;
	ix->noff = util_calloc((size_t)c->n + 1, sizeof *ix->noff);
	ix->ncom = util_malloc((size_t)c->off[c->k], sizeof *ix->ncom);
	ix->mc = util_calloc(c->k, sizeof *ix->mc);
	if (!ix->noff || !ix->ncom || !ix->mc)
		return -1;
	for (uint64_t j = 0; j < c->off[c->k]; j++)
		ix->noff[c->mem[j] + 1]++;
	for (uint32_t u = 0; u < c->n; u++)
		ix->noff[u + 1] += ix->noff[u];
	uint64_t *at = util_malloc(c->n, sizeof *at);
	if (!at)
		return -1;
	memcpy(at, ix->noff, (size_t)c->n * sizeof *at);
	for (uint32_t i = 0; i < c->k; i++) /* increasing i: lists come out sorted */
		for (uint64_t j = c->off[i]; j < c->off[i + 1]; j++)
			ix->ncom[at[c->mem[j]]++] = i;
	free(at);
	return 0;
}

static double pairs_of(uint64_t size)
{
	return size < 2 ? 0.0 : (double)(size * (size - 1) / 2);
}

/*
 * The pairs that are terms of the likelihood: of a one-mode graph every
 * pair, n(n-1)/2, and s(s-1)/2 of a community of s members; of a
 * two-sided graph (graph.h: senders [0, nsend), receivers after) only a
 * sender with a receiver, nsend (n - nsend) and s_send s_recv, less
 * every node's own pair (sender i, receiver nsend + i) when paired (a
 * directed graph: no arc from a node to itself). 0 or -1.
 */
static int index_pairs(struct index *ix, const struct graph *g, const struct cover *c)
{
	ix->pairs = util_malloc(c->k ? c->k : 1, sizeof *ix->pairs);
	if (!ix->pairs)
		return -1;
	uint64_t n = c->n;
	if (!g->nsend) {
		ix->allpairs = pairs_of(n);
		for (uint32_t i = 0; i < c->k; i++)
			ix->pairs[i] = pairs_of(cover_size(c, i));
		return 0;
	}
	uint64_t ns = g->nsend;
	ix->allpairs = (double)(ns * (n - ns)) - (g->paired ? (double)ns : 0.0);
	uint32_t *seen = g->paired ? util_calloc(ns ? ns : 1, sizeof *seen) : NULL;
	if (g->paired && !seen)
		return -1;
	for (uint32_t i = 0; i < c->k; i++) {
		uint64_t send = 0, own = 0;
		for (uint64_t j = c->off[i]; j < c->off[i + 1]; j++)
			if (c->mem[j] < ns) {
				send++;
				if (seen)
					seen[c->mem[j]] = i + 1;
			}
		for (uint64_t j = c->off[i]; seen && j < c->off[i + 1]; j++)
			if (c->mem[j] >= ns && seen[c->mem[j] - ns] == i + 1)
				own++; /* both copies of one node: that pair is no term */
		ix->pairs[i] = (double)(send * (cover_size(c, i) - send)) - (double)own;
	}
	free(seen);
	return 0;
}

/* Communities shared by u and v (merge of two sorted lists) into out when
 * not NULL; returns how many. */
static uint32_t shared(const struct index *ix, uint32_t u, uint32_t v, uint32_t *out)
{
	const uint32_t *a = ix->ncom + ix->noff[u], *ae = ix->ncom + ix->noff[u + 1];
	const uint32_t *b = ix->ncom + ix->noff[v], *be = ix->ncom + ix->noff[v + 1];
	uint32_t count = 0;
	while (a < ae && b < be) {
		if (*a < *b) {
			a++;
		} else if (*b < *a) {
			b++;
		} else {
			if (out)
				out[count] = *a;
			count++;
			a++;
			b++;
		}
	}
	return count;
}

/* Internal edge counts, and the shared sets of edges sharing two or more
 * communities with community -> such edges. An edge sharing one community
 * c alone has Q = qeps + q_c, the same as every other such edge of c, so
 * those are only counted (solo): most edges of a planted graph are, and
 * the estimate then costs O(k + pairs of the overlapping edges) a pass. */
static int index_edges(struct index *ix, const struct graph *g)
{
	uint64_t total = 0, ecap = 1024, ccap = 2048;
	uint32_t most = 1; /* the most communities one node is in */
	for (uint32_t u = 0; u < ix->n; u++)
		if (ix->noff[u + 1] - ix->noff[u] > most)
			most = (uint32_t)(ix->noff[u + 1] - ix->noff[u]);
	uint32_t *common = util_malloc(most, sizeof *common);
	ix->solo = util_calloc(ix->k ? ix->k : 1, sizeof *ix->solo);
	ix->eoff = util_malloc(ecap, sizeof *ix->eoff);
	ix->ecom = util_malloc(ccap, sizeof *ix->ecom);
	ix->coff = util_calloc((size_t)ix->k + 1, sizeof *ix->coff);
	if (!common || !ix->solo || !ix->eoff || !ix->ecom || !ix->coff)
		goto fail;
	ix->ne = 0;
	ix->lonely = 0;
	ix->eoff[0] = 0;
	for (uint32_t u = 0; u < g->n; u++)
		for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++) {
			uint32_t v = g->adj[i];
			if (v <= u)
				continue;
			uint32_t s = shared(ix, u, v, common);
			if (s == 0) {
				ix->lonely++;
				continue;
			}
			for (uint32_t j = 0; j < s; j++)
				ix->mc[common[j]]++;
			if (s == 1) {
				ix->solo[common[0]]++;
				continue;
			}
			if (ix->ne + 2 > ecap) { /* one pass: the lists grow by doubling */
				uint64_t *grown = util_realloc(ix->eoff, (size_t)(2 * ecap),
							       sizeof *grown);
				if (!grown)
					goto fail;
				ix->eoff = grown;
				ecap *= 2;
			}
			if (total + s > ccap) {
				uint64_t want = 2 * ccap > total + s ? 2 * ccap : total + s;
				uint32_t *grown = util_realloc(ix->ecom, (size_t)want, sizeof *grown);
				if (!grown)
					goto fail;
				ix->ecom = grown;
				ccap = want;
			}
			memcpy(ix->ecom + total, common, (size_t)s * sizeof *common);
			total += s;
			ix->eoff[++ix->ne] = total;
		}
	free(common);
	common = NULL;
	ix->cedge = util_malloc((size_t)total, sizeof *ix->cedge);
	if (!ix->cedge)
		goto fail;
	for (uint32_t c = 0; c < ix->k; c++)
		ix->coff[c + 1] = ix->coff[c] + (ix->mc[c] - ix->solo[c]);
	uint64_t *cur = util_malloc((size_t)ix->k + 1, sizeof *cur);
	if (!cur)
		return -1;
	memcpy(cur, ix->coff, ((size_t)ix->k + 1) * sizeof *cur);
	for (uint64_t e = 0; e < ix->ne; e++)
		for (uint64_t j = ix->eoff[e]; j < ix->eoff[e + 1]; j++)
			ix->cedge[cur[ix->ecom[j]]++] = e;
	free(cur);
	return 0;
fail:
	free(common);
	return -1; /* index_build() releases the rest */
}

static int index_build(struct index *ix, const struct graph *g, const struct cover *c)
{
	memset(ix, 0, sizeof *ix);
	if (index_nodes(ix, c) < 0 || index_pairs(ix, g, c) < 0 || index_edges(ix, g) < 0) {
		index_release(ix);
		return -1;
	}
	return 0;
}

static double log1mexp(double x)
{
	return log(-expm1(-x)); /* log(1 - e^{-x}); -inf at 0, 0 at +inf */
}

/* L(q) from the index: the edge terms plus the per-community non-edge
 * decomposition of the header comment. */
static double loglik_index(const struct index *ix, const struct cover *c, const double *q,
			   double qeps, uint64_t m)
{
	double sum = 0.0;
	for (uint64_t e = 0; e < ix->ne; e++) {
		double Q = qeps;
		for (uint64_t j = ix->eoff[e]; j < ix->eoff[e + 1]; j++)
			Q += q[ix->ecom[j]];
		sum += log1mexp(Q);
	}
	for (uint32_t i = 0; ix->solo && i < c->k; i++)
		if (ix->solo[i])
			sum += (double)ix->solo[i] * log1mexp(qeps + q[i]);
	if (ix->lonely)
		sum += (double)ix->lonely * log1mexp(qeps);
	if (qeps > 0.0)
		sum -= qeps * (ix->allpairs - (double)m);
	for (uint32_t i = 0; i < c->k; i++) {
		double coef = ix->pairs[i] - (double)ix->mc[i];
		if (coef > 0.0)
			sum -= q[i] * coef;
	}
	return sum;
}

/* w(Q) = 1/expm1(Q) and e^Q/expm1(Q)^2 with one exponential, without
 * cancellation: below 1 from expm1(-Q), above it from exp(-Q). */
static void weights(double x, double *w, double *hterm)
{
	double t, d; /* e^{-x}, 1 - e^{-x} */
	if (x < 1.0) {
		d = -expm1(-x);
		t = 1.0 - d;
	} else {
		t = exp(-x);
		d = 1.0 - t;
	}
	*w = t / d;
	*hterm = *w / d;
}

/* One community's Newton steps (at most AGM_INNER); Q is kept in step.
 * w is scratch space, one value for each of c's edges sharing two or more
 * communities. Returns the largest relative change. */
static double newton_community(const struct index *ix, uint32_t c, double nonedge,
			       double qeps, double *q, double *Q, double *w)
{
	const uint64_t *edge = ix->cedge + ix->coff[c];
	uint64_t mcount = ix->coff[c + 1] - ix->coff[c];
	double solo = (double)ix->solo[c], wsolo = 0.0;
	double worst = 0.0;

	for (int it = 0; it < AGM_INNER; it++) {
		double g = -nonedge, hs = 0.0;
		if (solo > 0.0) { /* the edges sharing c alone, all at qeps + q_c */
			double hterm;
			weights(qeps + q[c], &wsolo, &hterm);
			g += solo * wsolo;
			hs += solo * hterm;
		}
		for (uint64_t j = 0; j < mcount; j++) {
			double hterm;
			weights(Q[edge[j]], &w[j], &hterm);
			g += w[j];
			hs += hterm;
		}
		double qc = q[c], target;
		if (hs > 0.0 && isfinite(hs) && isfinite(g))
			target = qc + g / hs;
		else
			target = g > 0.0 ? AGM_QMAX : AGM_QLO;
		if (!(target >= AGM_QLO)) /* also NaN */
			target = AGM_QLO;
		if (target > AGM_QMAX)
			target = AGM_QMAX;
		double dq = target - qc;
		int ok = 0;
		for (int h = 0; h < AGM_HALVINGS && dq != 0.0; h++) {
			double shrink = -expm1(-dq); /* 1 - e^{-dq} */
			double rise = -dq * nonedge;
			if (solo > 0.0)
				rise += solo * log1p(shrink * wsolo);
			for (uint64_t j = 0; j < mcount; j++)
				rise += log1p(shrink * w[j]);
			if (rise > 0.0) {
				ok = 1;
				break;
			}
			dq *= 0.5;
		}
		if (!ok)
			break;
		q[c] = qc + dq;
		for (uint64_t j = 0; j < mcount; j++)
			Q[edge[j]] += dq;
		double rel = fabs(dq) / fmax(q[c], AGM_QLO);
		if (rel > worst)
			worst = rel;
		if (rel < AGM_RELTOL)
			break;
	}
	return worst;
}

/* Q of every edge sharing two or more communities: qeps + the q of the
 * communities it shares. */
static void edges_q(const struct index *ix, const double *q, double qeps, double *Q)
{
	for (uint64_t e = 0; e < ix->ne; e++) {
		double x = qeps;
		for (uint64_t j = ix->eoff[e]; j < ix->eoff[e + 1]; j++)
			x += q[ix->ecom[j]];
		Q[e] = x;
	}
}

/* The maximum-likelihood q for the index; q has ix->k values. With warm,
 * q holds a starting point on entry (else the closed form without
 * overlaps is used): every step rises, so the answer is at least as likely
 * as a warm start. */
static int estimate_q(const struct index *ix, double qeps, double *q,
		      int warm)
{
	uint64_t most = 0;
	for (uint32_t i = 0; i < ix->k; i++)
		if (ix->coff[i + 1] - ix->coff[i] > most)
			most = ix->coff[i + 1] - ix->coff[i];
	uint32_t *active = util_malloc(ix->k, sizeof *active);
	double *Q = util_malloc((size_t)ix->ne, sizeof *Q);
	double *w = util_malloc((size_t)most, sizeof *w);
	int rc = -1;
	if (!active || !Q || !w)
		goto out;
	uint32_t nact = 0;
	for (uint32_t i = 0; i < ix->k; i++) {
		double P = ix->pairs[i], m = (double)ix->mc[i];
		if (m == 0.0) {
			q[i] = 0.0; /* no edges inside (or < 2 members): p = 0 */
		} else if (m >= P) {
			q[i] = AGM_QMAX; /* a clique: L rises with q_c everywhere */
		} else {
			/* Start from the answer without overlaps (test_agm.c derives it). */
			double q0 = warm && q[i] >= 0.0 ? q[i] : -log1p(-m / P) - qeps;
			q[i] = fmin(fmax(q0, AGM_QLO), AGM_QMAX);
			active[nact++] = i;
		}
	}
	for (int pass = 0; pass < AGM_PASSES && nact; pass++) {
		edges_q(ix, q, qeps, Q); /* afresh: no drift */
		double worst = 0.0;
		for (uint32_t a = 0; a < nact; a++) {
			uint32_t i = active[a];
			double nonedge = ix->pairs[i] - (double)ix->mc[i];
			double r = newton_community(ix, i, nonedge, qeps, q, Q, w);
			if (r > worst)
				worst = r;
		}
		if (worst < AGM_RELTOL)
			break;
	}
	rc = 0;
out:
	free(active);
	free(Q);
	free(w);
	return rc;
}

int agm_estimate_p(const struct graph *g, const struct cover *c, double epsilon, double *p)
{
	struct index ix;
	if (check_input(g, c, epsilon) < 0 || index_build(&ix, g, c) < 0)
		return -1;
	int rc = estimate_q(&ix, model_qeps(epsilon), p, 0);
	if (rc == 0)
		for (uint32_t i = 0; i < c->k; i++)
			p[i] = -expm1(-p[i]);
	index_release(&ix);
	return rc;
}

int agm_improve_p(const struct graph *g, const struct cover *c, double epsilon, double *p)
{
	for (uint32_t i = 0; i < c->k; i++)
		if (!(p[i] >= 0.0 && p[i] <= 1.0))
			return error("link probability %g of community %" PRIu32 " out of range [0, 1]",
				     p[i], i);
	struct index ix;
	if (check_input(g, c, epsilon) < 0 || index_build(&ix, g, c) < 0)
		return -1;
	for (uint32_t i = 0; i < c->k; i++)
		p[i] = -log1p(-p[i]); /* q; +inf for p = 1 is capped by estimate_q() */
	int rc = estimate_q(&ix, model_qeps(epsilon), p, 1);
	for (uint32_t i = 0; i < c->k; i++)
		p[i] = -expm1(-p[i]);
	index_release(&ix);
	return rc;
}

/* The background's coordinate of the joint maximum: qeps with q held.
 * Every edge's Q holds qeps, every non-edge costs qeps, so
 *     dL/dqeps = sum_edges w(Q_e) - (pairs - m),  w(Q) = 1/expm1(Q),
 * a concave function of qeps; Newton steps with halvings that must rise.
 * Q (ix->ne values) is kept in step. Returns the relative change. */
static double newton_background(const struct index *ix, const struct cover *c, const double *q,
				double nonedge, double *qeps, double *Q)
{
	double g = -nonedge, hs = 0.0, w, hterm;
	if (ix->lonely) {
		weights(*qeps, &w, &hterm);
		g += (double)ix->lonely * w;
		hs += (double)ix->lonely * hterm;
	}
	for (uint32_t i = 0; i < c->k; i++)
		if (ix->solo[i]) {
			weights(*qeps + q[i], &w, &hterm);
			g += (double)ix->solo[i] * w;
			hs += (double)ix->solo[i] * hterm;
		}
	for (uint64_t e = 0; e < ix->ne; e++) {
		weights(Q[e], &w, &hterm);
		g += w;
		hs += hterm;
	}
	double target = hs > 0.0 && isfinite(hs) && isfinite(g) ? *qeps + g / hs :
			g > 0.0 ? AGM_QMAX : AGM_QLO;
	if (!(target >= AGM_QLO))
		target = AGM_QLO;
	if (target > AGM_QMAX)
		target = AGM_QMAX;
	double dq = target - *qeps;
	for (int h = 0; h < AGM_HALVINGS && dq != 0.0; h++) {
		/* the rise of L, each edge's term log(1 - e^{-Q}) moved by dq */
		double rise = -dq * nonedge;
		if (ix->lonely)
			rise += (double)ix->lonely * (log1mexp(*qeps + dq) - log1mexp(*qeps));
		for (uint32_t i = 0; i < c->k; i++)
			if (ix->solo[i])
				rise += (double)ix->solo[i] *
					(log1mexp(*qeps + q[i] + dq) - log1mexp(*qeps + q[i]));
		for (uint64_t e = 0; e < ix->ne; e++)
			rise += log1mexp(Q[e] + dq) - log1mexp(Q[e]);
		if (rise > 0.0) {
			*qeps += dq;
			for (uint64_t e = 0; e < ix->ne; e++)
				Q[e] += dq;
			return fabs(dq) / fmax(*qeps, AGM_QLO);
		}
		dq *= 0.5;
	}
	return 0.0;
}

int agm_fit_background(const struct graph *g, const struct cover *c, double *epsilon,
		       double *loglik)
{
	struct index ix;
	if (check_input(g, c, *epsilon) < 0 || index_build(&ix, g, c) < 0)
		return -1;
	double *q = util_malloc(c->k ? c->k : 1, sizeof *q);
	double *Q = util_malloc(ix.ne ? (size_t)ix.ne : 1, sizeof *Q);
	int rc = -1;
	if (!q || !Q)
		goto out;
	double nonedge = ix.allpairs - (double)g->m, qeps = model_qeps(*epsilon);
	if (qeps < AGM_QLO)
		qeps = AGM_QLO;
	if (estimate_q(&ix, qeps, q, 0) < 0)
		goto out;
	for (int pass = 0; pass < AGM_PASSES; pass++) {
		edges_q(&ix, q, qeps, Q);
		double moved = newton_background(&ix, c, q, nonedge, &qeps, Q);
		if (estimate_q(&ix, qeps, q, 1) < 0)
			goto out;
		if (moved < AGM_RELTOL)
			break;
	}
	*epsilon = -expm1(-qeps);
	*loglik = loglik_index(&ix, c, q, qeps, g->m);
	rc = 0;
out:
	free(q);
	free(Q);
	index_release(&ix);
	return rc;
}

/* ln Gamma(x) for x > 0; lgamma_r: lgamma() writes the global signgam,
 * a race between the threads of -k auto and --repeats */
static double ln_gamma(double x)
{
	int sign;
	return lgamma_r(x, &sign);
}

double agm_ln_choose(double n, double s)
{
	return s > 0 && s < n ? ln_gamma(n + 1.0) - ln_gamma(s + 1.0) - ln_gamma(n - s + 1.0) : 0.0;
}

double agm_code_length(const struct agm *a, uint32_t n)
{
	double nats = -a->loglik;
	for (uint32_t i = 0; i < a->cover.k; i++)
		nats += agm_ln_choose((double)n, (double)cover_size(&a->cover, i));
	return nats;
}

double agm_code_length_of(const struct cover *c, double loglik, const struct graph *g)
{
	double nats = -loglik, ns = (double)g->nsend, nr = (double)g->n - ns;
	for (uint32_t i = 0; i < c->k; i++) {
		if (!g->nsend) {
			nats += agm_ln_choose((double)g->n, (double)cover_size(c, i));
			continue;
		}
		uint64_t send = 0; /* senders among the senders, receivers among the receivers */
		for (uint64_t j = c->off[i]; j < c->off[i + 1]; j++)
			send += c->mem[j] < g->nsend;
		nats += agm_ln_choose(ns, (double)send) +
			agm_ln_choose(nr, (double)(cover_size(c, i) - send));
	}
	return nats;
}

double agm_loglik(const struct graph *g, const struct cover *c, const double *p, double epsilon)
{
	struct index ix;
	memset(&ix, 0, sizeof ix);
	if (check_input(g, c, epsilon) < 0 || index_nodes(&ix, c) < 0 ||
	    index_pairs(&ix, g, c) < 0) {
		index_release(&ix);
		return NAN;
	}
	uint32_t most = 1; /* the most communities one node is in */
	for (uint32_t u = 0; u < g->n; u++)
		if (ix.noff[u + 1] - ix.noff[u] > most)
			most = (uint32_t)(ix.noff[u + 1] - ix.noff[u]);
	double *q = util_malloc(c->k, sizeof *q);
	uint32_t *common = util_malloc(most, sizeof *common);
	if (!q || !common) {
		free(q);
		free(common);
		index_release(&ix);
		return NAN;
	}
	for (uint32_t i = 0; i < c->k; i++)
		q[i] = -log1p(-p[i]);
	double qeps = model_qeps(epsilon), sum = 0.0;
	uint64_t lonely = 0;
	/* One pass over the edges, shared sets merged on the fly (nothing stored). */
	for (uint32_t u = 0; u < g->n; u++) {
		for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++) {
			uint32_t v = g->adj[i];
			if (v <= u)
				continue;
			uint32_t ns = shared(&ix, u, v, common);
			if (ns == 0) {
				lonely++;
				continue;
			}
			double Q = qeps;
			for (uint32_t j = 0; j < ns; j++) {
				Q += q[common[j]];
				ix.mc[common[j]]++;
			}
			sum += log1mexp(Q);
		}
	}
	free(common);
	ix.lonely = lonely;
	ix.ne = 0; /* the edge terms are already in sum */
	sum += loglik_index(&ix, c, q, qeps, g->m);
	free(q);
	index_release(&ix);
	return sum;
}

struct order {
	uint32_t id, size;
};

static int order_cmp(const void *pa, const void *pb)
{
	const struct order *a = pa, *b = pb;
	if (a->size != b->size)
		return a->size > b->size ? -1 : 1;
	return util_cmp_uint(a->id, b->id);
}

/* Sorts ord (nord communities and their sizes) largest first and lays out
 * out->cover for the non-empty ones: k, the offsets, the labels (the id in
 * decimal, or from->label[id] when from is given) and room for the members
 * and strengths; (*ids)[i] is the id of community i. Returns 0 or -1 (what
 * was allocated stays in out and *ids for the caller to free). */
static int layout(struct agm *out, struct order *ord, uint32_t nord, const struct cover *from,
		  uint32_t **ids)
{
	qsort(ord, nord, sizeof *ord, order_cmp);
	uint32_t k = 0;
	while (k < nord && ord[k].size > 0) /* empty communities are not listed */
		k++;
	struct cover *cv = &out->cover;
	cv->k = k;
	cv->off = util_calloc((size_t)k + 1, sizeof *cv->off);
	cv->label = util_calloc(k, sizeof *cv->label);
	*ids = util_malloc(k, sizeof **ids);
	if (!cv->off || !cv->label || !*ids)
		return -1;
	for (uint32_t i = 0; i < k; i++) {
		char buf[16];
		(*ids)[i] = ord[i].id;
		cv->off[i + 1] = cv->off[i] + ord[i].size;
		if (!from)
			snprintf(buf, sizeof buf, "%" PRIu32, ord[i].id);
		if (!(cv->label[i] = util_strdup(from ? from->label[ord[i].id] : buf)))
			return -1;
	}
	cv->mem = util_malloc((size_t)cv->off[k], sizeof *cv->mem);
	out->strength = util_malloc((size_t)cv->off[k], sizeof *out->strength);
	return cv->mem && out->strength ? 0 : -1;
}

/* Everything after out->cover (largest first), out->strength and the ids
 * are in place: p (estimated, or given by pgiven[ids[i]]), figures, the
 * log-likelihood and node counts. */
static int finish(struct agm *out, const struct graph *g, const uint32_t *ids,
		  const double *pgiven)
{
	const struct cover *c = &out->cover;
	struct index ix;
	if (index_build(&ix, g, c) < 0)
		return -1;
	double qeps = model_qeps(out->epsilon);
	double *q = util_malloc(c->k, sizeof *q);
	out->comms = util_calloc(c->k, sizeof *out->comms);
	if (q && pgiven)
		for (uint32_t i = 0; i < c->k; i++)
			q[i] = -log1p(-pgiven[ids[i]]);
	if (!q || !out->comms || (!pgiven && estimate_q(&ix, qeps, q, 0) < 0)) {
		free(q);
		index_release(&ix);
		return -1;
	}
	for (uint32_t i = 0; i < c->k; i++) {
		struct agm_community *ac = &out->comms[i];
		ac->id = ids[i];
		ac->size = cover_size(c, i);
		ac->internal_edges = ix.mc[i];
		for (uint64_t j = c->off[i]; j < c->off[i + 1]; j++)
			ac->volume += graph_degree(g, c->mem[j]);
		ac->cut = ac->volume - 2 * ac->internal_edges;
		double P = ix.pairs[i];
		ac->density = P > 0.0 ? (double)ac->internal_edges / P : 0.0;
		uint64_t rest = 2 * g->m - ac->volume;
		uint64_t den = ac->volume < rest ? ac->volume : rest;
		ac->conductance = den ? (double)ac->cut / (double)den : 1.0;
		ac->p = -expm1(-q[i]);
	}
	out->loglik = loglik_index(&ix, c, q, qeps, g->m);
	for (uint32_t u = 0; u < c->n; u++) {
		uint64_t d = ix.noff[u + 1] - ix.noff[u];
		out->covered += d >= 1;
		out->overlapping += d >= 2;
	}
	free(q);
	index_release(&ix);
	return 0;
}

static int agm_begin(struct agm *out, const struct graph *g, double epsilon)
{
	memset(out, 0, sizeof *out);
	if (!(epsilon >= 0.0 && epsilon < 1.0))
		return error("background probability %g out of range [0, 1)", epsilon);
	out->n = g->n;
	out->epsilon = epsilon;
	out->cover.n = g->n;
	return 0;
}

int agm_side_sums(const struct graph *g, struct fcsr *F)
{
	free(F->sidesum);
	F->sidesum = NULL;
	if (!g->nsend)
		return 0;
	if (!(F->sidesum = util_malloc(2 * (size_t)F->k + 1, sizeof *F->sidesum))) {
		free(F->thr); /* thresholds by side go with the sums by side */
		F->thr = NULL;
		return -1;
	}
	model_directed_side_sums(g, F, F->sidesum);
	return 0;
}

int agm_member_at(const struct graph *g, const struct fcsr *F, uint32_t u, uint64_t j,
		  double delta, double min_links)
{
	uint32_t c = F->e[j].c;
	/* a two-sided row against the other side's sum (model_directed.h),
	 * at its own side's threshold */
	int sided = g->nsend && F->sidesum, recv = sided && graph_side_of(g, u);
	delta = fcsr_delta_at(F, c, recv, delta);
	double sum = sided ? F->sidesum[c + (recv ? 0 : F->k)] : F->colsum[c];
	return agm_is_member(F->e[j].v, sum, delta, min_links, graph_degree(g, u));
}

int agm_from_strengths(struct agm *out, const struct graph *g, const struct fcsr *F,
		       double epsilon, double delta, double min_links)
{
	struct order *ord = NULL;
	uint32_t *slot = NULL, *ids = NULL;
	uint64_t *at = NULL;

	if (agm_begin(out, g, epsilon) < 0)
		return -1;
	if (F->n != g->n)
		return error("strengths have %" PRIu32 " rows, graph has %" PRIu32 " nodes", F->n,
			     g->n);
	ord = util_calloc(F->k, sizeof *ord);
	slot = util_malloc(F->k, sizeof *slot);
	if (!ord || !slot)
		goto fail;
	for (uint32_t c = 0; c < F->k; c++)
		ord[c].id = c;
	for (uint64_t j = 0; j < F->off[F->n]; j++) {
		if (F->e[j].c >= F->k) {
			error("strength entry %" PRIu64 ": community %" PRIu32 " out of range", j,
			      F->e[j].c);
			goto fail;
		}
	}
	if (!F->colsum && F->k > 0) {
		error("strengths without column sums");
		goto fail;
	}
	for (uint32_t u = 0; u < F->n; u++)
		for (uint64_t j = F->off[u]; j < F->off[u + 1]; j++)
			if (agm_member_at(g, F, u, j, delta, min_links))
				ord[F->e[j].c].size++;
	if (layout(out, ord, F->k, NULL, &ids) < 0)
		goto fail;
	struct cover *cv = &out->cover;
	uint32_t k = cv->k;
	at = util_malloc((size_t)k + 1, sizeof *at);
	if (!at)
		goto fail;
	for (uint32_t c = 0; c < F->k; c++)
		slot[c] = UINT32_MAX;
	for (uint32_t i = 0; i < k; i++)
		slot[ids[i]] = i;
	memcpy(at, cv->off, ((size_t)k + 1) * sizeof *at);
	for (uint32_t u = 0; u < F->n; u++) /* increasing u: members come out sorted */
		for (uint64_t j = F->off[u]; j < F->off[u + 1]; j++) {
			if (!agm_member_at(g, F, u, j, delta, min_links))
				continue;
			uint64_t pos = at[slot[F->e[j].c]]++;
			cv->mem[pos] = u;
			out->strength[pos] = F->e[j].v;
		}
	if (finish(out, g, ids, NULL) < 0)
		goto fail;
	free(ord);
	free(slot);
	free(ids);
	free(at);
	return 0;
fail:
	free(ord);
	free(slot);
	free(ids);
	free(at);
	agm_release(out);
	return -1;
}

int agm_from_cover(struct agm *out, const struct graph *g, const struct cover *c, double epsilon)
{
	return agm_from_cover_p(out, g, c, epsilon, NULL);
}

int agm_from_cover_p(struct agm *out, const struct graph *g, const struct cover *c,
		     double epsilon, const double *p)
{
	struct order *ord = NULL;
	uint32_t *ids = NULL;

	if (agm_begin(out, g, epsilon) < 0 || check_input(g, c, epsilon) < 0)
		return -1;
	for (uint32_t i = 0; p && i < c->k; i++)
		if (!(p[i] >= 0.0 && p[i] <= 1.0))
			return error("link probability %g of community %" PRIu32 " out of range [0, 1]",
				     p[i], i);
	ord = util_malloc(c->k, sizeof *ord);
	if (!ord)
		return -1;
	for (uint32_t i = 0; i < c->k; i++)
		ord[i] = (struct order){ i, cover_size(c, i) };
	if (layout(out, ord, c->k, c, &ids) < 0)
		goto fail;
	struct cover *cv = &out->cover;
	uint32_t k = cv->k;
	for (uint32_t i = 0; i < k; i++) {
		uint32_t src = ord[i].id;
		memcpy(cv->mem + cv->off[i], c->mem + c->off[src],
		       (size_t)ord[i].size * sizeof *cv->mem);
	}
	for (uint64_t j = 0; j < cv->off[k]; j++)
		out->strength[j] = 1.0;
	if (finish(out, g, ids, p) < 0)
		goto fail;
	free(ord);
	free(ids);
	return 0;
fail:
	free(ord);
	free(ids);
	agm_release(out);
	return -1;
}

void agm_release(struct agm *a)
{
	if (!a)
		return;
	cover_release(&a->cover);
	free(a->strength);
	free(a->comms);
	memset(a, 0, sizeof *a);
}

int agm_copy(struct agm *dst, const struct agm *src)
{
	*dst = (struct agm){ .n = src->n, .epsilon = src->epsilon, .loglik = src->loglik,
			     .covered = src->covered, .overlapping = src->overlapping,
			     .ended_sooner = src->ended_sooner, .dropped = src->dropped };
	uint32_t k = src->cover.k;
	uint64_t total = src->cover.off ? src->cover.off[k] : 0;
	struct cover *cv = &dst->cover;
	cv->n = src->cover.n;
	cv->k = k;
	cv->off = util_malloc((size_t)k + 1, sizeof *cv->off);
	cv->mem = util_malloc(total ? total : 1, sizeof *cv->mem);
	cv->label = util_calloc(k ? k : 1, sizeof *cv->label);
	dst->strength = util_malloc(total ? total : 1, sizeof *dst->strength);
	dst->comms = util_malloc(k ? k : 1, sizeof *dst->comms);
	if (!cv->off || !cv->mem || !cv->label || !dst->strength || !dst->comms)
		goto fail;
	if (src->cover.off)
		memcpy(cv->off, src->cover.off, ((size_t)k + 1) * sizeof *cv->off);
	else
		cv->off[0] = 0;
	if (total) {
		memcpy(cv->mem, src->cover.mem, total * sizeof *cv->mem);
		memcpy(dst->strength, src->strength, total * sizeof *dst->strength);
	}
	if (k)
		memcpy(dst->comms, src->comms, k * sizeof *dst->comms);
	for (uint32_t i = 0; i < k; i++)
		if (!(cv->label[i] = util_strdup(src->cover.label[i] ? src->cover.label[i] : "")))
			goto fail;
	return 0;
fail:
	agm_release(dst);
	return -1;
}
