/*
 * fit_merge: the merge move of the reseeding (starts.c), for a start that
 * levelled off with one true community cut into pieces.
 *
 * Where communities leak links and their sizes follow a power law, the
 * ego-net seeds land several times inside a large sparse community and
 * none in many small ones; the climb then levels off with the large one
 * held by several columns that meet edge to edge, and the small ones
 * left without a column. No single-row step can join two columns, and
 * the split move (reseed a weak column inside the largest community)
 * cannot either. The merge move reads the cover (the output's
 * membership rule, fit_is_member(), without the communities ending
 * sooner) and, for two columns A and B, counts the edges inside each,
 * those inside A n B, and those between A \ B and B \ A (eX among
 * NX = |A \ B| |B \ A| pairs).
 * It estimates the background the cover leaves, bg (edges whose ends
 * share no column over the pairs in no column), and asks two questions.
 * Are the edges between better explained as part of one block at the
 * union's density pm than by the background:
 *
 *   LR = eX ln(pm / bg) + (NX - eX) ln((1 - pm) / (1 - bg))?
 *
 * And, where A and B overlap, are all the pairs of A u B better explained
 * by one AGM block than by two overlapping ones, each at its
 * maximum-likelihood rate, a pair in A n B linked with probability
 * 1 - (1 - pA)(1 - pB)(1 - bg) as the AGM has it (fit_merge_block_gain())?
 * The gain of a join is the larger answer. Two pieces of one community
 * that meet edge to edge answer yes to the first; two overlapping halves
 * of one sparse community (the climb's other defect: on a 10^4-node
 * planted graph a 513-node community held by columns of 390 and 369
 * sharing 248, the edges between at a sixth of its density) to the
 * second, since two blocks over-predict the pairs they share; two
 * communities joined only by leaking links to neither. (The whole block
 * likelihood without the overlap's AGM form, union against two blocks
 * at their own densities, judges against every join: the climb leaves
 * each piece denser than the community it was cut from.) The move
 * makes the joins with a gain, the largest first, each column at most
 * once and at most limit of them (each node keeps the larger of its two
 * strengths), and plants each freed column on the ego-net where a new
 * column would gain the most: the block likelihood of its edges at their
 * own density less what the model gives its pairs now, among
 * MERGE_SAMPLE_PER_JOIN x limit random nodes, the ego-nets disjoint.
 * There must be such a host for every join made. The caller climbs
 * again and keeps the move only if l(F) rose, as for every move; after a
 * failure it halves limit.
 *
 * Directed models (two-sided rows, model_directed.h): the move is chosen
 * on the undirected view, each node's row there holding the larger of its
 * sending and receiving strengths, so a node is in a column when either
 * side is (collapse_sides()); the joins rewrite both rows of every node
 * and a freed column is planted on both rows of the view's ego-net, as
 * seeding does. There the climb leaves near copies of one large dense
 * community (columns sharing 80-95% of their members, measured in
 * DEVELOPERS.md), not pieces that meet edge to edge. The block test is
 * BigCLAM's only (not measured on the directed view or two kinds).
 *
 * Two-mode models (rows of two kinds, no view): the move is chosen on the
 * bipartite graph itself, and a block is a rectangle. A column A has
 * first-kind members S_A and second-kind R_A; its pairs are S_A x R_A
 * (NA = |S_A| |R_A|, not |A| (|A| - 1) / 2), the pairs between two
 * columns those of A \ B and B \ A of two kinds,
 *     NX = |S_A \ S_B| |R_B \ R_A| + |S_B \ S_A| |R_A \ R_B|,
 * (every edge met between A \ B and B \ A joins two kinds, so eX is
 * counted as before), and the background's pairs are the first kind
 * times the second less the rectangles. The LR above is unchanged with
 * these counts (derivation in DEVELOPERS.md). An ego-net of a graph of
 * two kinds is a star, whose pairs are all links (its block says
 * nothing); a host is the rectangle two steps out instead (two_hop():
 * the centre's partners P against the nodes of its kind with two links
 * or more into P), valued as above (block likelihood of its links among
 * its |S| |P| pairs less the model's). Hosts on stars were measured and
 * did worse (DEVELOPERS.md).
 *
 * The one thing a newcomer gets wrong: the counts are of the cover read
 * by the membership rule, not of the strengths; they only choose the
 * pairs. Whether the move is kept is the likelihood's decision alone.
 */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/agm.h"
#include "coterie/graph.h"
#include "coterie/rng.h"
#include "coterie/util.h"
#include "fit-internal.h"

/* Nodes whose ego-nets may host a freed column: 128 per join the move may
 * make, at least 4096. The share of sampled centres a move takes is what
 * matters, not the count: at 10^5 nodes (k 1142, 35 joins a move) 1,120
 * samples scored ONMI 0.745 (seeds 1-3), 4,096 0.816, 16,384 0.803; at
 * 10^6 (k 11765, 367 joins) a fixed 4,096 left small communities without
 * a column (DEVELOPERS.md, "The merge move at scale"). */
#define MERGE_SAMPLE 4096u
#define MERGE_SAMPLE_PER_JOIN 128u
#define MERGE_MAX_ROW 64u  /* memberships of a row counted */
#define PF_OFF 8u /* neighbours ahead whose list offset find_joins() prefetches */
#define PF_COL 4u /* and whose list */
#define MERGE_MAX_EGO 256u /* larger ego-nets are not scored as hosts */

/* A join: columns a < b and its LR (gain). */
struct join {
	double gain;
	uint32_t a, b;
};

static int join_cmp(const void *x, const void *y)
{
	const struct join *p = x, *q = y;
	if (p->gain != q->gain)
		return p->gain > q->gain ? -1 : 1;
	if (p->a != q->a)
		return p->a < q->a ? -1 : 1;
	return p->b < q->b ? -1 : p->b > q->b;
}

/* The Bernoulli block log-likelihood of e edges among N pairs at its own
 * density. */

/* The columns of every node (its memberships), in row order: col[off[u] ..
 * off[u] + lim[u]) from the first MERGE_MAX_ROW entries of its row (the
 * ones find_joins() counts), the rest after them. Built once a move, the
 * move's one reading of the membership rule (the cover by column, the
 * background and the counts all come from it): the loops of
 * find_joins() read these small contiguous lists and a byte mark per
 * node instead of scanning the neighbours' rows, whose reads
 * (a miss for the row header, one for its entries) were nearly all of a
 * move's time (0.8 s a move at 10^5 nodes, about 20 s at 10^6). */
struct nodecols {
	uint64_t *off;
	uint32_t *lim;
	uint32_t *col;
};

static void nodecols_release(struct nodecols *nc)
{
	UTIL_FREE_ALL(nc->off, nc->lim, nc->col);
}

static int nodecols_build(struct nodecols *nc, const struct model *m, const struct graph *g)
{
	uint64_t tot = 0;
	for (uint32_t u = 0; u < m->n; u++)
		for (uint32_t i = 0; i < m->rows[u].nnz; i++)
			tot += (uint64_t)fit_is_member(m, g, u, m->rows[u].e[i]);
	nc->off = util_malloc((size_t)m->n + 1, sizeof *nc->off);
	nc->lim = util_malloc(m->n ? m->n : 1, sizeof *nc->lim);
	nc->col = util_malloc(tot ? tot : 1, sizeof *nc->col);
	if (!nc->off || !nc->lim || !nc->col)
		return -1;
	uint64_t o = 0;
	for (uint32_t u = 0; u < m->n; u++) {
		const struct frow *r = &m->rows[u];
		nc->off[u] = o;
		nc->lim[u] = UINT32_MAX;
		for (uint32_t i = 0; i < r->nnz; i++) {
			if (i == MERGE_MAX_ROW)
				nc->lim[u] = (uint32_t)(o - nc->off[u]);
			if (fit_is_member(m, g, u, r->e[i]))
				nc->col[o++] = r->e[i].c;
		}
		if (nc->lim[u] == UINT32_MAX)
			nc->lim[u] = (uint32_t)(o - nc->off[u]);
	}
	nc->off[m->n] = o;
	return 0;
}

/* The cover by column, the transpose of nc: members of c are
 * mem[off[c] .. off[c+1]), in node order. */
struct colcover {
	uint64_t *off;
	uint32_t *mem;
};

static int colcover_build(struct colcover *cc, uint32_t k, const struct nodecols *nc, uint32_t n)
{
	cc->off = util_calloc((size_t)k + 1, sizeof *cc->off);
	if (!cc->off)
		return -1;
	for (uint64_t t = 0; t < nc->off[n]; t++)
		cc->off[nc->col[t] + 1]++;
	for (uint32_t c = 0; c < k; c++)
		cc->off[c + 1] += cc->off[c];
	cc->mem = util_malloc(cc->off[k] ? cc->off[k] : 1, sizeof *cc->mem);
	uint64_t *fill = util_malloc((size_t)k + 1, sizeof *fill);
	if (!cc->mem || !fill) {
		free(fill);
		return -1;
	}
	memcpy(fill, cc->off, ((size_t)k + 1) * sizeof *fill);
	for (uint32_t u = 0; u < n; u++)
		for (uint64_t t = nc->off[u]; t < nc->off[u + 1]; t++)
			cc->mem[fill[nc->col[t]]++] = u;
	free(fill);
	return 0;
}

/* A two-mode model's column c (members in row order): its first-kind
 * members in *s, second-kind in *r. A one-mode column: all in *s, *r 0. */
static void col_sides(const struct model *m, const struct colcover *cc, uint32_t c, double *s,
		      double *r)
{
	uint64_t size = cc->off[c + 1] - cc->off[c];
	uint64_t first = m->nsend ? util_lower_bound_u32(cc->mem + cc->off[c], size, m->nsend)
				  : size;
	*s = (double)first;
	*r = (double)(size - first);
}

/* The pairs of column c: C(|c|, 2), or |S_c| |R_c| for a two-mode model. */
static double col_pairs(const struct model *m, const struct colcover *cc, uint32_t c)
{
	double s, r;
	col_sides(m, cc, c, &s, &r);
	return m->nsend ? s * r : s * (s - 1) / 2;
}

/* Edges inside each column (both ends members): ein[k]. */
static void count_inside(const struct model *m, const struct graph *g,
			 const struct colcover *cc, uint64_t *ein, uint8_t *mark)
{
	for (uint32_t c = 0; c < m->k; c++) {
		for (uint64_t i = cc->off[c]; i < cc->off[c + 1]; i++)
			mark[cc->mem[i]] = 1;
		uint64_t e2 = 0;
		for (uint64_t i = cc->off[c]; i < cc->off[c + 1]; i++) {
			uint32_t u = cc->mem[i];
			for (uint64_t j = g->off[u]; j < g->off[u + 1]; j++)
				e2 += mark[g->adj[j]];
		}
		ein[c] = e2 / 2;
		for (uint64_t i = cc->off[c]; i < cc->off[c + 1]; i++)
			mark[cc->mem[i]] = 0;
	}
}

/* Whether u and v are members of a common column (nc's lists are in
 * row order, so sorted). */
static int share_column(const struct nodecols *nc, uint32_t u, uint32_t v)
{
	uint64_t i = nc->off[u], ie = nc->off[u + 1], j = nc->off[v], je = nc->off[v + 1];
	while (i < ie && j < je) {
		if (nc->col[i] < nc->col[j])
			i++;
		else if (nc->col[i] > nc->col[j])
			j++;
		else
			return 1;
	}
	return 0;
}

/* The background the cover leaves: the edges whose ends share no column
 * over the pairs inside no column (a pair in two columns is taken out
 * twice, so a little high), at most epsilon. */
static double cover_background(const struct model *m, const struct graph *g,
			       const struct colcover *cc, const struct nodecols *nc)
{
	double pin = 0.0, n = (double)m->n;
	for (uint32_t c = 0; c < m->k; c++)
		pin += col_pairs(m, cc, c);
	/* two-mode: pairs of two kinds only */
	double all = m->nsend ? (double)m->nsend * (n - m->nsend) : n * (n - 1) / 2;
	uint64_t out = 0;
	for (uint32_t u = 0; u < g->n; u++)
		for (uint64_t j = g->off[u]; j < g->off[u + 1]; j++)
			if (g->adj[j] > u && !share_column(nc, u, g->adj[j]))
				out++;
	double bg = (double)out / (all - pin);
	return bg > 0.0 && bg < m->epsilon ? bg : m->epsilon;
}

double fit_merge_background(const struct model *m, const struct graph *g)
{
	struct nodecols nc = { 0 };
	struct colcover cc = { 0 };
	double bg = nodecols_build(&nc, m, g) || colcover_build(&cc, m->k, &nc, m->n)
			    ? NAN
			    : cover_background(m, g, &cc, &nc);
	nodecols_release(&nc);
	free(cc.off);
	free(cc.mem);
	return bg;
}

/* Add (or, with add 0, clear) u's memberships into ov (a two-mode
 * model's second-kind rows into ov + k). */
static void count_shared(const struct model *m, const struct nodecols *nc, uint32_t u,
			 uint64_t *ov, int add)
{
	if (m->nsend && u >= m->nsend)
		ov += m->k;
	for (uint64_t t = nc->off[u]; t < nc->off[u + 1]; t++)
		ov[nc->col[t]] = add ? ov[nc->col[t]] + 1 : 0;
}


/* The log-likelihood of e edges among N pairs, each linked with
 * probability 1 - exp(-x). */
static double rate_ll(double e, double N, double x)
{
	if (N <= 0.0)
		return 0.0;
	return (e > 0.0 ? e * log(-expm1(-x)) : 0.0) - (N - e) * x;
}

/* The q >= 0 that maximises rate_ll(e1, N1, q + y1) + rate_ll(e2, N2,
 * q + y2) (y1, y2 > 0), by Newton's method from q: the slope is convex
 * and falling in q, so from the left of the root each step stays left,
 * and one step from the right lands left of it. */
static double rate_root(double e1, double N1, double y1, double e2, double N2, double y2,
			double q)
{
	for (int i = 0; i < 6; i++) {
		double s = -(N1 - e1) - (N2 - e2), c = 0.0;
		if (e1 > 0.0) {
			double d = expm1(q + y1);
			s += e1 / d;
			c -= e1 * (d + 1.0) / (d * d);
		}
		if (e2 > 0.0) {
			double d = expm1(q + y2);
			s += e2 / d;
			c -= e2 * (d + 1.0) / (d * d);
		}
		if (c == 0.0 || (q == 0.0 && s <= 0.0))
			return q;
		double next = q - s / c;
		q = next > 0.0 ? next : 0.0;
	}
	return q;
}

/*
 * What joining A and B gains under the AGM on the pairs of A u B: one
 * block at its own rate against two overlapping blocks (a pair in A n B
 * linked with 1 - (1 - pA)(1 - pB)(1 - bg), as the AGM has it; pairs
 * between A \ B and B \ A at bg), each at its maximum-likelihood rate.
 * eI, NI: inside A n B; eA, NA: the other pairs of A; eB, NB: of B;
 * eX, NX: between. The two-block likelihood is concave in the rates
 * qA = -ln(1 - pA), qB: coordinate ascent.
 */
double fit_merge_block_gain(double eI, double NI, double eA, double NA, double eB, double NB,
			    double eX, double NX, double bg)
{
	double qe = -log1p(-bg);
	double qa = NA > eA ? -log1p(-eA / NA) - qe : 1.0, qb = NB > eB ? -log1p(-eB / NB) - qe : 1.0;
	qa = qa > 0.0 ? qa : 0.0; /* from the pairs of A alone, B alone */
	qb = qb > 0.0 ? qb : 0.0;
	for (int r = 0; r < 4; r++) {
		qa = rate_root(eI, NI, qb + qe, eA, NA, qe, qa);
		qb = rate_root(eI, NI, qa + qe, eB, NB, qe, qb);
	}
	double two = rate_ll(eI, NI, qa + qb + qe) + rate_ll(eA, NA, qa + qe) +
		     rate_ll(eB, NB, qb + qe) + rate_ll(eX, NX, qe);
	double E = eI + eA + eB + eX, N = NI + NA + NB + NX;
	double x = E < N ? -log1p(-E / N) : 64.0;
	double one = rate_ll(E, N, x > qe ? x : qe);
	return one - two;
}

/* Whether the sorted list l[0 .. n) holds c. */
static int list_has(const uint32_t *l, uint64_t n, uint32_t c)
{
	uint64_t i = util_lower_bound_u32(l, n, c);
	return i < n && l[i] == c;
}

/* Every pair (a < b) with edges between A \ B and B \ A, or sharing
 * edges inside A n B, and a gain above 0, best first, in *out (allocated);
 * with blocks, the gain is the larger of the LR of the edges between and
 * fit_merge_block_gain() where A and B share two members or more. The count,
 * or -1. */
static int64_t find_joins(const struct model *m, const struct graph *g,
			  const struct nodecols *ncp, const struct colcover *cc, const uint64_t *ein,
			  double bg, int blocks, struct join **out)
{
	uint32_t k = m->k;
	uint64_t *cnt = util_calloc(k, sizeof *cnt);
	uint64_t *cii = util_calloc(k, sizeof *cii); /* edges inside A n B */
	/* |A n B| (two-mode: of the first kind, then k of the second) */
	uint64_t *ov = util_calloc(m->nsend ? 2 * (size_t)k : k, sizeof *ov);
	uint32_t *touched = util_malloc(k, sizeof *touched);
	/* ustamp[c] == u + 1: u is in c, for the u at hand */
	uint32_t *ustamp = util_calloc(k, sizeof *ustamp);
	uint8_t *inA = util_calloc(m->n ? m->n : 1, 1); /* the members of the column at hand */
	const struct nodecols nc = *ncp;
	uint64_t njoin = 0, cap = 0;
	struct join *joins = NULL;
	double le = log(bg), l1e = log1p(-bg);
	int64_t rc = -1;
	if (!cnt || !cii || !touched || !ov || !ustamp || !inA)
		goto out;
	for (uint32_t a = 0; a < k; a++) {
		uint32_t nt = 0;
		for (uint64_t i = cc->off[a]; i < cc->off[a + 1]; i++) {
			count_shared(m, ncp, cc->mem[i], ov, 1);
			inA[cc->mem[i]] = 1;
		}
		for (uint64_t i = cc->off[a]; i < cc->off[a + 1]; i++) {
			uint32_t u = cc->mem[i];
			const uint32_t *lu = nc.col + nc.off[u];
			for (uint64_t t = 0; t < nc.off[u + 1] - nc.off[u]; t++)
				ustamp[lu[t]] = u + 1;
			uint64_t jend = g->off[u + 1];
			for (uint64_t j = g->off[u]; j < jend; j++) {
				/* the neighbours' lists are read at random: fetched
				 * ahead, the offsets PF_OFF on, the lists PF_COL on */
				if (j + PF_OFF < jend)
					__builtin_prefetch(&nc.off[g->adj[j + PF_OFF]]);
				if (j + PF_COL < jend)
					__builtin_prefetch(nc.col + nc.off[g->adj[j + PF_COL]]);
				uint32_t v = g->adj[j];
				const uint32_t *lv = nc.col + nc.off[v];
				if (inA[v]) {
					if (!blocks || v < u)
						continue; /* an edge inside A: counted once */
					for (uint32_t t = 0; t < nc.lim[u]; t++) {
						uint32_t b = lu[t];
						if (b <= a || !list_has(lv, nc.off[v + 1] - nc.off[v], b))
							continue;
						if (cii[b]++ == 0 && cnt[b] == 0)
							touched[nt++] = b;
					}
					continue;
				}
				for (uint32_t t = 0; t < nc.lim[v]; t++) {
					uint32_t b = lv[t];
					if (b <= a || ustamp[b] == u + 1)
						continue;
					if (cnt[b]++ == 0 && cii[b] == 0)
						touched[nt++] = b;
				}
			}
		}
		for (uint64_t i = cc->off[a]; i < cc->off[a + 1]; i++)
			inA[cc->mem[i]] = 0;
		for (uint32_t t = 0; t < nt; t++) {
			uint32_t b = touched[t];
			double na = (double)(cc->off[a + 1] - cc->off[a]);
			double nb = (double)(cc->off[b + 1] - cc->off[b]);
			double NA = col_pairs(m, cc, a), NB = col_pairs(m, cc, b);
			/* the pairs between A \ B and B \ A only */
			double NX = (na - (double)ov[b]) * (nb - (double)ov[b]);
			if (m->nsend) { /* two kinds: A \ B's first x B \ A's second, both ways */
				double sa, ra, sb, rb, os = (double)ov[b], orr = (double)ov[k + b];
				col_sides(m, cc, a, &sa, &ra);
				col_sides(m, cc, b, &sb, &rb);
				NX = (sa - os) * (rb - orr) + (sb - os) * (ra - orr);
			}
			double eA = (double)ein[a], eB = (double)ein[b], eX = (double)cnt[b];
			/* the log-likelihood ratio of the edges between: at the
			 * union's density against the background */
			double pm = (eA + eB + eX) / (NA + NB + NX);
			double gain = pm > 0.0 && pm < 1.0 ? agm_join_lr(eX, NX, pm, le, l1e) : -1.0;
			if (blocks && ov[b] >= 2) { /* overlapping: the AGM's own test too */
				double I = (double)ov[b], eI = (double)cii[b];
				double NI = I * (I - 1) / 2;
				double bgain = fit_merge_block_gain(eI, NI, eA - eI, NA - NI, eB - eI,
								     NB - NI, eX, NX, bg);
				gain = bgain > gain ? bgain : gain;
			}
			cnt[b] = 0;
			cii[b] = 0;
			if (!(gain > 0.0))
				continue;
			if (njoin == cap) {
				uint64_t want = 2 * cap + 64;
				struct join *grown = util_realloc(joins, want, sizeof *joins);
				if (!grown)
					goto out;
				joins = grown;
				cap = want;
			}
			joins[njoin++] = (struct join){ gain, a, b };
		}
		for (uint64_t i = cc->off[a]; i < cc->off[a + 1]; i++)
			count_shared(m, ncp, cc->mem[i], ov, 0);
	}
	if (njoin)
		qsort(joins, njoin, sizeof *joins, join_cmp);
	*out = joins;
	joins = NULL;
	rc = (int64_t)njoin;
out:
	free(cnt);
	free(cii);
	free(ov);
	free(touched);
	free(ustamp);
	free(inA);
	free(joins);
	return rc;
}

/* A two-mode host: the rectangle of u's partners P (the other kind) and
 * the nodes of u's kind with two links or more into P (u among them), at
 * most MERGE_MAX_EGO of them, in ego: P first (*np of them), then the
 * others; the count. cnt: n zeros, left zeroed. */
static uint32_t two_hop(const struct graph *g, uint32_t u, uint32_t *ego, uint32_t *np,
			uint32_t *cnt)
{
	uint32_t d = 0;
	for (uint64_t j = g->off[u]; j < g->off[u + 1]; j++)
		ego[d++] = g->adj[j];
	*np = d;
	uint32_t o = d;
	for (uint32_t i = 0; i < d; i++)
		for (uint64_t j = g->off[ego[i]]; j < g->off[ego[i] + 1]; j++)
			if (++cnt[g->adj[j]] == 2 && o < d + MERGE_MAX_EGO)
				ego[o++] = g->adj[j];
	for (uint32_t i = 0; i < d; i++)
		for (uint64_t j = g->off[ego[i]]; j < g->off[ego[i] + 1]; j++)
			cnt[g->adj[j]] = 0;
	if (o == d) /* u alone links to them: the star */
		ego[o++] = u;
	return o;
}

/* What a new column on u's ego-net (u and its neighbours, d + 1 nodes)
 * would gain, about: the block likelihood of its E edges among its
 * N = (d + 1) d / 2 pairs at their own density, less what the model
 * gives those pairs now (each pair at 1 - exp(-(F_v . F_w + qeps))).
 * ego: d + 1 entries of scratch; nbr: n entries, a stamp per centre
 * (nbr[w] == v + 1: w is a neighbour of v). */
static double ego_value(const struct model *m, const struct graph *g, uint32_t u,
			uint32_t *ego, uint32_t *nbr)
{
	uint32_t d = 0;
	ego[d++] = u;
	for (uint64_t j = g->off[u]; j < g->off[u + 1]; j++)
		ego[d++] = g->adj[j];
	double E = 0.0, now = 0.0;
	if (m->nsend) { /* two-mode: the rectangle's pairs */
		uint32_t np, t = two_hop(g, u, ego, &np, nbr);
		for (uint32_t i = np; i < t; i++) {
			const struct frow *rw = &m->rows[ego[i]];
			for (uint64_t j = g->off[ego[i]]; j < g->off[ego[i] + 1]; j++)
				nbr[g->adj[j]] = 1;
			for (uint32_t a = 0; a < np; a++) {
				const struct frow *rv = &m->rows[ego[a]];
				double x = model_dot(rv->e, rv->nnz, rw->e, rw->nnz) + m->qeps;
				if (nbr[ego[a]]) {
					E += 1.0;
					now += model_log1mexp(x);
				} else {
					now -= x;
				}
			}
			for (uint64_t j = g->off[ego[i]]; j < g->off[ego[i] + 1]; j++)
				nbr[g->adj[j]] = 0;
		}
		return agm_block_loglik(E, (double)np * (t - np)) - now;
	}
	for (uint32_t i = 0; i < d; i++) {
		uint32_t v = ego[i];
		const struct frow *rv = &m->rows[v];
		for (uint64_t j = g->off[v]; j < g->off[v + 1]; j++)
			nbr[g->adj[j]] = v + 1;
		for (uint32_t t = i + 1; t < d; t++) {
			uint32_t w = ego[t];
			const struct frow *rw = &m->rows[w];
			double x = model_dot(rv->e, rv->nnz, rw->e, rw->nnz) + m->qeps;
			if (nbr[w] == v + 1) {
				E += 1.0;
				now += log(-expm1(-x));
			} else {
				now -= x;
			}
		}
	}
	/* the stamps of v + 1 may be read again by a later centre: clear */
	for (uint32_t i = 0; i < d; i++)
		for (uint64_t j = g->off[ego[i]]; j < g->off[ego[i] + 1]; j++)
			nbr[g->adj[j]] = 0;
	double N = (double)d * (d - 1) / 2;
	return agm_block_loglik(E, N) - now;
}

struct centre {
	double value; /* what a column planted here would gain, about */
	uint32_t u;
};

static int centre_cmp(const void *x, const void *y)
{
	const struct centre *p = x, *q = y;
	if (p->value != q->value)
		return p->value > q->value ? -1 : 1;
	return p->u < q->u ? -1 : p->u > q->u;
}

/* Centres of disjoint ego-nets the model explains badly, the best first,
 * in *out (allocated), sampled MERGE_SAMPLE_PER_JOIN to a join of the
 * limit (at least MERGE_SAMPLE, at most every node): an ego-net of d + 1 nodes
 * with U of its edges left to the background is worth about the block
 * likelihood of U edges among its (d + 1) d / 2 pairs against the
 * background bg. The count, or -1. mark: n zeros, left zeroed. */
static int64_t pick_centres(const struct model *m, const struct graph *g, struct rng *r,
			    struct centre **out, uint8_t *mark, uint32_t limit)
{
	uint64_t want = (uint64_t)MERGE_SAMPLE_PER_JOIN * limit;
	if (want < MERGE_SAMPLE)
		want = MERGE_SAMPLE;
	uint32_t tries = g->n < want ? g->n : (uint32_t)want;
	struct centre *cand = util_malloc(tries ? tries : 1, sizeof *cand);
	uint32_t *ego = util_malloc(2 * MERGE_MAX_EGO + 1, sizeof *ego);
	uint32_t *nbr = util_calloc(g->n, sizeof *nbr);
	if (!cand || !ego || !nbr) {
		free(cand);
		free(ego);
		free(nbr);
		return -1;
	}
	uint32_t nc = 0;
	for (uint32_t t = 0; t < tries; t++) {
		uint32_t u = tries == g->n ? t : (uint32_t)rng_below(r, g->n);
		uint32_t d = graph_degree(g, u);
		if (d < 2 || d > MERGE_MAX_EGO)
			continue;
		double value = ego_value(m, g, u, ego, nbr);
		if (value > 0.0)
			cand[nc++] = (struct centre){ value, u };
	}
	free(ego);
	free(nbr);
	qsort(cand, nc, sizeof *cand, centre_cmp);
	uint32_t got = 0;
	for (uint32_t i = 0; i < nc; i++) {
		uint32_t u = cand[i].u;
		if (mark[u])
			continue;
		cand[got++] = cand[i];
		mark[u] = 1;
		for (uint64_t j = g->off[u]; j < g->off[u + 1]; j++)
			mark[g->adj[j]] = 1;
	}
	for (uint32_t i = 0; i < got; i++) {
		uint32_t u = cand[i].u;
		mark[u] = 0;
		for (uint64_t j = g->off[u]; j < g->off[u + 1]; j++)
			mark[g->adj[j]] = 0;
	}
	*out = cand;
	return got;
}

/* Row u with every dropped column c folded into into[c] (the larger
 * strength kept; into[c] < 0: c is not dropped). buf: k + 1 entries.
 * 0 or -1. */
static int rewrite_row(struct model *m, uint32_t u, const int32_t *into, struct fentry *buf)
{
	const struct frow *row = &m->rows[u];
	uint32_t o = 0;
	int changed = 0;
	for (uint32_t i = 0; i < row->nnz; i++) {
		struct fentry e = row->e[i];
		if (into[e.c] >= 0) { /* a dropped column: fold into its keeper */
			e.c = (uint32_t)into[e.c];
			changed = 1;
		}
		buf[o++] = e;
	}
	if (!changed)
		return 0;
	/* sort by column and fold duplicates (keep the larger) */
	for (uint32_t a = 1; a < o; a++)
		for (uint32_t b = a; b > 0 && buf[b - 1].c > buf[b].c; b--) {
			struct fentry t = buf[b];
			buf[b] = buf[b - 1];
			buf[b - 1] = t;
		}
	uint32_t w = 0;
	for (uint32_t a = 0; a < o; a++) {
		if (w && buf[w - 1].c == buf[a].c) {
			if (buf[a].v > buf[w - 1].v)
				buf[w - 1].v = buf[a].v;
			continue;
		}
		buf[w++] = buf[a];
	}
	return model_set_row(m, u, buf, w);
}

/* Row u with column c set to v (added in order when absent). */
static int put_entry(struct model *m, uint32_t u, uint32_t c, double v, struct fentry *buf)
{
	const struct frow *row = &m->rows[u];
	uint32_t o = 0, put = 0;
	for (uint32_t i = 0; i < row->nnz; i++) {
		if (!put && row->e[i].c >= c) {
			buf[o++] = (struct fentry){ c, v };
			put = 1;
			if (row->e[i].c == c)
				continue;
		}
		buf[o++] = row->e[i];
	}
	if (!put)
		buf[o++] = (struct fentry){ c, v };
	return model_set_row(m, u, buf, o);
}

/* The one-mode picture of a directed model on its undirected view
 * (view->n nodes, view->n == m->nsend): node u's row holds, column by
 * column, the larger of F_uc and H_uc, so u is in c at delta when either
 * side is. The background is twice the arcs' (a pair of nodes is linked
 * when an arc joins them either way) and delta is the directed model's.
 * The merge move only reads it to choose joins and hosts. 0 or -1. */
static int collapse_sides(const struct model *m, const struct graph *view, struct model *one)
{
	double eps = 2.0 * m->epsilon < 0.5 ? 2.0 * m->epsilon : 0.5;
	struct fentry *buf = util_malloc(2 * (size_t)m->k + 1, sizeof *buf);
	if (!buf || model_init(one, view->n, m->k, eps)) {
		free(buf);
		return -1;
	}
	one->delta = m->delta;
	for (uint32_t u = 0; u < view->n; u++) {
		const struct frow *a = &m->rows[u], *b = &m->rows[m->nsend + u];
		uint32_t i = 0, j = 0, o = 0;
		while (i < a->nnz || j < b->nnz) {
			if (j == b->nnz || (i < a->nnz && a->e[i].c < b->e[j].c))
				buf[o++] = a->e[i++];
			else if (i == a->nnz || b->e[j].c < a->e[i].c)
				buf[o++] = b->e[j++];
			else {
				buf[o] = a->e[i++];
				if (b->e[j].v > buf[o].v)
					buf[o].v = b->e[j].v;
				o++, j++;
			}
		}
		if (model_set_row(one, u, buf, o)) {
			free(buf);
			model_release(one);
			return -1;
		}
	}
	free(buf);
	return 0;
}

/* Column c planted at strength 1 on the ego-net of centre (in the graph
 * pg the move was chosen on): on both rows of each node of a directed
 * model (both: pg its undirected view), else on the node's row (a
 * two-mode model's star, whose rows are pg's). 0 or -1. */
static int plant_ego(struct model *m, const struct graph *pg, uint32_t centre, uint32_t col,
		     int both, struct fentry *buf)
{
	if (m->nsend && !both) { /* two-mode: the rectangle of two_hop() */
		uint32_t *ego = util_malloc(2 * MERGE_MAX_EGO + 1, sizeof *ego);
		uint32_t *cnt = util_calloc(pg->n, sizeof *cnt);
		int rc = ego && cnt ? 0 : -1;
		uint32_t np, t = rc ? 0 : two_hop(pg, centre, ego, &np, cnt);
		for (uint32_t i = 0; i < t && !rc; i++)
			rc = put_entry(m, ego[i], col, 1.0, buf);
		free(ego);
		free(cnt);
		return rc;
	}
	for (uint64_t j = pg->off[centre]; j <= pg->off[centre + 1]; j++) {
		uint32_t u = j < pg->off[centre + 1] ? pg->adj[j] : centre;
		if (put_entry(m, u, col, 1.0, buf) ||
		    (both && put_entry(m, m->nsend + u, col, 1.0, buf)))
			return -1;
	}
	return 0;
}

/* Column c's strength summed over every row (both sides of a two-mode
 * model's column sums). */
static double col_mass(const struct model *m, uint32_t c)
{
	return m->colsum[c] + (m->nsend ? m->colsum[m->k + c] : 0.0);
}

int fit_merge_move(struct fit *f, struct rng *r, uint32_t limit, uint32_t *made)
{
	struct model *m = &f->m;
	*made = 0;
	/* a directed model is judged on its undirected view, a two-mode one
	 * (two-sided rows, no view) on its own graph of two kinds */
	if (m->k < 2 || f->gw->n == 0 || limit == 0)
		return 0;
	struct model one;
	const struct model *pm = m;      /* the model the move is chosen on */
	const struct graph *g = f->gw;   /* and its graph */
	int directed = m->nsend && f->view;
	if (directed) {
		if (collapse_sides(m, f->view, &one))
			return -1;
		pm = &one;
		g = f->view;
	}
	struct nodecols nc = { 0 };
	struct colcover cc = { 0 };
	uint64_t *ein = util_calloc(m->k, sizeof *ein);
	uint8_t *mark = util_calloc(g->n > m->k ? g->n : m->k, 1);
	int32_t *into = util_malloc(m->k, sizeof *into);
	struct fentry *buf = util_malloc((size_t)m->k + 1, sizeof *buf);
	uint32_t *freed = util_malloc(m->k, sizeof *freed);
	struct join *joins = NULL;
	struct centre *cen = NULL;
	int rc = -1;
	if (!ein || !mark || !into || !buf || !freed || nodecols_build(&nc, pm, g) ||
	    colcover_build(&cc, m->k, &nc, pm->n))
		goto out;
	count_inside(pm, g, &cc, ein, mark);
	double bg = cover_background(pm, g, &cc, &nc);
	int64_t ncen = pick_centres(pm, g, r, &cen, mark, limit);
	if (ncen < 0)
		goto out;
	if (ncen == 0) {
		rc = 0;
		goto out;
	}
	int64_t nj = find_joins(pm, g, &nc, &cc, ein, bg, !m->nsend, &joins);
	if (nj < 0)
		goto out;
	/* the least costly joins with the most valuable centres, while the
	 * pair gains: join i frees the column planted on centre i */
	for (uint32_t c = 0; c < m->k; c++)
		into[c] = -1;
	uint8_t *taken = mark; /* k zeros (mark is zeroed, max(n, k) long) */
	uint32_t nfreed = 0;
	for (int64_t i = 0; i < nj && nfreed < (uint64_t)ncen && nfreed < limit; i++) {
		uint32_t a = joins[i].a, b = joins[i].b;
		if (taken[a] || taken[b])
			continue;
		taken[a] = taken[b] = 1;
		uint32_t keep = col_mass(pm, a) >= col_mass(pm, b) ? a : b;
		uint32_t drop = keep == a ? b : a;
		into[drop] = (int32_t)keep;
		freed[nfreed++] = drop;
	}
	memset(taken, 0, m->k);
	*made = nfreed;
	if (nfreed == 0) {
		rc = 0;
		goto out;
	}
	for (uint32_t u = 0; u < m->n; u++)
		if (rewrite_row(m, u, into, buf))
			goto out;
	for (uint32_t i = 0; i < nfreed; i++)
		if (plant_ego(m, g, cen[i].u, freed[i], directed, buf))
			goto out;
	model_recount(m);
	rc = 1;
out:
	if (pm != m)
		model_release(&one);
	nodecols_release(&nc);
	free(cc.off);
	free(cc.mem);
	free(ein);
	free(mark);
	free(into);
	free(buf);
	free(freed);
	free(joins);
	free(cen);
	return rc;
}
