/*
 * agm_trim: where each community of a fit ends, read by the AGM's own
 * likelihood (agm_trim(), agm_from_strengths_trimmed()), and the coverage
 * said to the user in nodes as given (agm_coverage_as_given()).
 *
 * The membership rule (agm.h) reads a column down to delta; a community
 * whose relaxed strengths reach a few nodes tied to it by stray links
 * (communities that leak) then holds them. Each column's members, in
 * order of strength, are cut where the prefix's links are most likely as
 * one block at their own density against the background; the whole
 * cover so read is kept only if its AGM log-likelihood is not below the
 * cover at delta. A two-sided column (directed, two-mode) is read the
 * same way by side: its members of both sides in order of the links
 * expected from the other side, the block's pairs senders x receivers,
 * one threshold a side (a stray arc from a cohesive community's member
 * otherwise made a receiving-only member of its target). The thresholds travel with the strengths (fcsr.thr) so
 * that every reader of one entry (agm_member_at()) agrees with the cover.
 *
 * The one thing a newcomer gets wrong: thresholds are derived, never
 * stored; a reader of a checkpoint gets them again by reading it through
 * agm_from_strengths_trimmed() (result_cover.c), with the same result.
 */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/agm.h"
#include "coterie/fcsr.h"
#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/util.h"

double agm_block_loglik(double e, double N)
{
	if (N <= 0.0 || e <= 0.0 || e >= N)
		return 0.0;
	double p = e / N;
	return e * log(p) + (N - e) * log1p(-p);
}

double agm_join_lr(double eX, double NX, double pm, double lbg, double l1bg)
{
	return eX * (log(pm) - lbg) + (NX - eX) * (log1p(-pm) - l1bg);
}

struct ranked {
	double v; /* the order (descending) */
	double w; /* the strength (two-sided: v is the expected links) */
	uint32_t u;
};

static int ranked_cmp(const void *x, const void *y)
{
	const struct ranked *a = x, *b = y;
	if (a->v != b->v)
		return a->v > b->v ? -1 : 1;
	return a->u < b->u ? -1 : a->u > b->u;
}

/* The members of one column kept (rows[0 .. s) sorted in place, by .v):
 * the prefix whose links are likeliest as one block at their own density
 * against the background; s when the whole column is. Pairs: one-sided,
 * those among the prefix; two-sided, its senders x its receivers, less a
 * directed graph's own pairs (a node's sending and receiving copies: no
 * pair of the graph). pos: n zeros, left zeroed. */
static uint32_t column_kept(const struct graph *g, struct ranked *rows, uint32_t s, double le,
			    double l1e, uint32_t *pos)
{
	if (s < 3)
		return s;
	qsort(rows, s, sizeof *rows, ranked_cmp);
	int sided = g->nsend > 0;
	double E = 0.0, best = -HUGE_VAL, a = 0.0, b = 0.0, own = 0.0;
	uint32_t keep = s;
	for (uint32_t i = 0; i < s; i++) {
		uint32_t u = rows[i].u;
		for (uint64_t j = g->off[u]; j < g->off[u + 1]; j++)
			E += pos[g->adj[j]] != 0;
		pos[u] = i + 1;
		double P;
		if (sided) {
			*(graph_side_of(g, u) ? &b : &a) += 1.0;
			if (g->paired && pos[u < g->nsend ? u + g->nsend : u - g->nsend])
				own += 1.0;
			P = a * b - own;
		} else {
			P = (double)(i + 1) * i / 2;
		}
		if (!(P > 0.0))
			continue;
		double ll = agm_block_loglik(E, P) - (E * le + (P - E) * l1e);
		if (ll > best) {
			best = ll;
			keep = i + 1;
		}
	}
	for (uint32_t i = 0; i < s; i++)
		pos[rows[i].u] = 0;
	return keep;
}

/* The threshold of one column: its members (rows[0 .. s), by the rule at
 * delta) in order of strength; the strength of the last member kept, or 0
 * when the whole column is kept. */
static double column_threshold(const struct graph *g, struct ranked *rows, uint32_t s,
			       double le, double l1e, uint32_t *pos)
{
	uint32_t keep = column_kept(g, rows, s, le, l1e, pos);
	return keep < s ? rows[keep - 1].v : 0.0;
}

/* The thresholds of one column of a two-sided graph: its members of both
 * sides (rows[0 .. s), .v the expected links, strength times the other
 * side's sum, .w the strength) in that order; into th[0] (sending) and
 * th[1] (receiving) the strength of the side's last member kept, 0 when
 * the side is kept whole, above every strength when none of it is. */
static void column_thresholds_sided(const struct graph *g, struct ranked *rows, uint32_t s,
				    double le, double l1e, uint32_t *pos, double *th)
{
	uint32_t keep = column_kept(g, rows, s, le, l1e, pos);
	double last[2] = { 0.0, 0.0 }, top[2] = { 0.0, 0.0 };
	uint32_t kept[2] = { 0, 0 }, all[2] = { 0, 0 };
	for (uint32_t i = 0; i < s; i++) {
		int side = graph_side_of(g, rows[i].u);
		all[side]++;
		if (rows[i].w > top[side])
			top[side] = rows[i].w;
		if (i < keep) {
			kept[side]++;
			last[side] = rows[i].w; /* the side's weakest kept */
		}
	}
	for (int side = 0; side < 2; side++)
		th[side] = kept[side] == all[side] ? 0.0
			   : kept[side] ? last[side] : nextafter(top[side], HUGE_VAL);
}

int agm_trim(const struct graph *g, struct fcsr *F, double epsilon, double delta,
	     double min_links)
{
	free(F->thr);
	F->thr = NULL;
	if (F->n != g->n || !(epsilon > 0.0 && epsilon < 1.0) || F->k == 0)
		return F->n == g->n ? 0 : error("strengths and graph differ in size");
	/* a two-sided graph's rows are read by side: 2 k thresholds */
	int sided = g->nsend > 0;
	if (sided && !F->sidesum && agm_side_sums(g, F))
		return -1;
	uint64_t *off = util_calloc((size_t)F->k + 1, sizeof *off);
	uint32_t *pos = util_calloc(g->n, sizeof *pos);
	double *thr = util_calloc((sided ? 2 : 1) * (size_t)F->k, sizeof *thr);
	struct ranked *rows = NULL;
	int rc = -1;
	if (!off || !pos || !thr)
		goto out;
	for (uint32_t u = 0; u < F->n; u++)
		for (uint64_t j = F->off[u]; j < F->off[u + 1]; j++)
			if (agm_member_at(g, F, u, j, delta, min_links))
				off[F->e[j].c + 1]++;
	for (uint32_t c = 0; c < F->k; c++)
		off[c + 1] += off[c];
	if (!(rows = util_malloc(off[F->k] ? off[F->k] : 1, sizeof *rows)))
		goto out;
	for (uint32_t u = 0; u < F->n; u++) /* column by column, through off[] as a cursor */
		for (uint64_t j = F->off[u]; j < F->off[u + 1]; j++)
			if (agm_member_at(g, F, u, j, delta, min_links))
			{
				uint32_t c = F->e[j].c;
				double v = F->e[j].v;
				/* two-sided: by the links expected from the other side */
				double x = sided ? v * F->sidesum[c + (graph_side_of(g, u) ? 0 : F->k)]
						 : v;
				rows[off[c]++] = (struct ranked){ x, v, u };
			}
	for (uint32_t c = F->k; c > 0; c--) /* the cursors moved each start one column on */
		off[c] = off[c - 1];
	off[0] = 0;
	double le = log(epsilon), l1e = log1p(-epsilon);
	for (uint32_t c = 0; c < F->k; c++) {
		uint32_t s = (uint32_t)(off[c + 1] - off[c]);
		if (sided) {
			double th[2];
			column_thresholds_sided(g, rows + off[c], s, le, l1e, pos, th);
			thr[c] = th[0];
			thr[F->k + c] = th[1];
		} else {
			thr[c] = column_threshold(g, rows + off[c], s, le, l1e, pos);
		}
	}
	F->thr = thr;
	thr = NULL;
	rc = 0;
out:
	free(off);
	free(pos);
	free(thr);
	free(rows);
	return rc;
}

static int read_trimmed(struct agm *out, const struct graph *g, struct fcsr *F, double epsilon,
			double delta, double min_links)
{
	free(F->thr);
	F->thr = NULL;
	if (agm_side_sums(g, F)) /* a two-sided fit's rows read by side */
		return -1;
	if (agm_from_strengths(out, g, F, epsilon, delta, min_links))
		return -1;
	struct agm trimmed;
	if (agm_trim(g, F, epsilon, delta, min_links)) {
		agm_release(out);
		return -1;
	}
	/* no column ends sooner (or none was read): the trimmed cover is this
	 * one and its AGM the same bits, kept as an equal likelihood is below;
	 * not built twice (the live snapshots of a fit's first sweeps) */
	uint32_t sooner = 0; /* columns cut (two-sided: on either side) */
	for (uint32_t c = 0; F->thr && c < F->k; c++)
		sooner += F->thr[c] > delta || (g->nsend && F->thr[F->k + c] > delta);
	if (!sooner)
		return 0;
	if (agm_from_strengths(&trimmed, g, F, epsilon, delta, min_links)) {
		agm_release(out);
		return -1;
	}
	if (trimmed.loglik >= out->loglik) { /* the AGM's likelihood must not fall */
		agm_release(out);
		*out = trimmed;
		out->ended_sooner += sooner;
	} else {
		agm_release(&trimmed);
		free(F->thr);
		F->thr = NULL;
	}
	return 0;
}

/* ---- Columns that do not pay for their members' names ----
 *
 * A column whose removal from the cover shortens the two-part code length
 * (agm_code_length_of()) is left out: the link probability its pairs lose
 * costs fewer nats than naming its members among the n nodes,
 * ln C(n, s). With every other p held, dropping community c changes the
 * AGM log-likelihood by
 *     q_c (pairs_c - m_c) + sum_{edges uv in c} [ln(1 - e^-(Q_uv - q_c)) - ln(1 - e^-Q_uv)]
 * (its non-edges no longer pay q_c; its edges lose q_c from their rate
 * Q_uv = qeps + the q of the communities u and v share), in one pass over
 * the edges. The p refitted after a drop can only raise the likelihood,
 * so a drop this says shortens the code does. Columns of one round share
 * no member, so their pairs are apart and their changes add up; the
 * cover is read again after each round (new p), DROP_ROUNDS at most.
 * Only a column at least half of whose members are in another community
 * too is a candidate: one whose members are mostly its own is their only
 * description, and ln C(n, s) is too crude a price to judge a small sparse
 * community by (planted graphs of 600 nodes, mixing 0.3, at their k: 4-9
 * real communities of about 20 nodes left out, ONMI 0.08-0.25 lower;
 * every column left out there had most members to itself, every one on
 * the LFR graph below shared most of them).
 * Why: a fit asked for more communities than the graph holds fills the
 * rest with columns that overlap real ones (a sub-block of hubs, a few
 * boundary nodes of several communities); each adds memberships, and
 * overlapping NMI fell from 0.99 to 0.72 on an LFR graph of 90
 * communities fitted with k 150 (DEVELOPERS.md, "Columns that do not pay
 * for their names"). A two-sided column's pairs are its senders x its
 * receivers (less a directed node's own pair) and its names are by side,
 * as agm_code_length_of() counts them. Not on weighted fits: the AGM's
 * code length does not see the weights a column holds (C. elegans
 * --weighted, k 6: the synapses inside communities fell from 0.755 to
 * 0.536, fit_open_directed.sh). */
#define DROP_ROUNDS 16

/* The cover's communities by node: node u's in list[off[u] .. off[u + 1]),
 * ascending. 0 or -1. */
static int node_lists(const struct cover *c, uint32_t n, uint64_t **off_out, uint32_t **list_out)
{
	uint64_t total = c->off[c->k];
	uint64_t *off = util_calloc((size_t)n + 1, sizeof *off);
	uint32_t *list = util_malloc(total ? total : 1, sizeof *list);
	if (!off || !list) {
		UTIL_FREE_ALL(off, list);
		return -1;
	}
	for (uint64_t j = 0; j < total; j++)
		off[c->mem[j] + 1]++;
	for (uint32_t u = 0; u < n; u++)
		off[u + 1] += off[u];
	for (uint32_t i = 0; i < c->k; i++) /* through off[] as cursors */
		for (uint64_t j = c->off[i]; j < c->off[i + 1]; j++)
			list[off[c->mem[j]]++] = i;
	for (uint32_t u = n; u > 0; u--)
		off[u] = off[u - 1];
	off[0] = 0;
	*off_out = off;
	*list_out = list;
	return 0;
}

/* The pairs of cover community i and the nats its members' names cost:
 * one-mode, s(s-1)/2 and ln C(n, s); two-sided, its senders x its
 * receivers less a directed node's own pair, named by side (agm.c).
 * seen: nsend zeros or NULL (not paired), marked with i + 1. */
static void column_pairs(const struct cover *c, const struct graph *g, uint32_t i, uint32_t *seen,
			 double *pairs, double *names)
{
	double s = (double)(c->off[i + 1] - c->off[i]);
	uint32_t ns = g->nsend;
	if (!ns) {
		*pairs = s * (s - 1.0) / 2.0;
		*names = agm_ln_choose((double)g->n, s);
		return;
	}
	double send = 0.0, own = 0.0;
	for (uint64_t j = c->off[i]; j < c->off[i + 1]; j++)
		if (c->mem[j] < ns) {
			send += 1.0;
			if (seen)
				seen[c->mem[j]] = i + 1;
		}
	for (uint64_t j = c->off[i]; seen && j < c->off[i + 1]; j++)
		own += c->mem[j] >= ns && seen[c->mem[j] - ns] == i + 1;
	*pairs = send * (s - send) - own;
	*names = agm_ln_choose((double)ns, send) + agm_ln_choose((double)(g->n - ns), s - send);
}

/* Into dcl[i] the change of the code length if cover community i of a
 * were left out with every p held, HUGE_VAL for a column that is no
 * candidate (fewer than half of its members in another community); q
 * gets each community's rate -ln(1 - p). 0 or -1. */
static int drop_gains(const struct agm *a, const struct graph *g, double *dcl, double *q)
{
	const struct cover *c = &a->cover;
	uint32_t n = g->n, k = c->k;
	uint64_t *off = NULL, most = 0;
	uint32_t *list = NULL, *sh = NULL, *seen = NULL;
	int rc = -1;
	if (node_lists(c, n, &off, &list))
		return -1;
	for (uint32_t u = 0; u < n; u++)
		if (off[u + 1] - off[u] > most)
			most = off[u + 1] - off[u];
	if (!(sh = util_malloc(most ? most : 1, sizeof *sh)) ||
	    (g->paired && !(seen = util_calloc(g->nsend ? g->nsend : 1, sizeof *seen))))
		goto out;
	for (uint32_t i = 0; i < k; i++) {
		double p = a->comms[i].p, pairs, names;
		q[i] = p < 1.0 ? -log1p(-p) : AGM_QMAX;
		if (q[i] > AGM_QMAX)
			q[i] = AGM_QMAX;
		column_pairs(c, g, i, seen, &pairs, &names);
		dcl[i] = -(q[i] * (pairs - (double)a->comms[i].internal_edges)) - names;
		uint64_t elsewhere = 0; /* members in another community too */
		for (uint64_t j = c->off[i]; j < c->off[i + 1]; j++)
			elsewhere += off[c->mem[j] + 1] - off[c->mem[j]] > 1;
		if (2 * elsewhere < c->off[i + 1] - c->off[i])
			dcl[i] = HUGE_VAL;
	}
	double qeps = -log1p(-a->epsilon);
	for (uint32_t u = 0; u < n; u++) {
		const uint32_t *cu = list + off[u];
		uint64_t nu = off[u + 1] - off[u];
		for (uint64_t e = g->off[u]; nu && e < g->off[u + 1]; e++) {
			uint32_t v = g->adj[e];
			if (v <= u)
				continue;
			const uint32_t *cv = list + off[v];
			uint64_t nv = off[v + 1] - off[v], x = 0, y = 0;
			uint32_t nsh = 0; /* the communities u and v share, and their rate */
			double Q = qeps;
			while (x < nu && y < nv) {
				if (cu[x] == cv[y]) {
					Q += q[cu[x]];
					sh[nsh++] = cu[x];
					x++;
					y++;
				} else if (cu[x] < cv[y]) {
					x++;
				} else {
					y++;
				}
			}
			double now = nsh ? model_log1mexp(Q) : 0.0;
			for (uint32_t t = 0; t < nsh; t++)
				dcl[sh[t]] -= model_log1mexp(Q - q[sh[t]]) - now;
		}
	}
	rc = 0;
out:
	UTIL_FREE_ALL(off, list, sh, seen);
	return rc;
}

struct drop_rank {
	double dcl;
	uint32_t i;
};

static int drop_rank_cmp(const void *x, const void *y)
{
	const struct drop_rank *a = x, *b = y;
	if (a->dcl != b->dcl)
		return a->dcl < b->dcl ? -1 : 1;
	return a->i < b->i ? -1 : a->i > b->i;
}

/* Leave out of *out (read from F) the columns that do not pay for their
 * names, through F->thr (a dropped column's threshold is above every
 * strength). 0 or -1. */
static int drop_columns(struct agm *out, const struct graph *g, struct fcsr *F, double epsilon,
			double delta, double min_links)
{
	if (g->wt || out->cover.k < 2 || !(epsilon > 0.0))
		return 0;
	uint32_t n = g->n;
	double *dcl = NULL, *q = NULL;
	struct drop_rank *rank = NULL;
	uint8_t *taken = NULL;
	int rc = -1;
	for (int round = 0; round < DROP_ROUNDS; round++) {
		uint32_t k = out->cover.k;
		free(dcl);
		free(q);
		free(rank);
		dcl = util_malloc(k, sizeof *dcl);
		q = util_malloc(k, sizeof *q);
		rank = util_malloc(k, sizeof *rank);
		if (!dcl || !q || !rank || drop_gains(out, g, dcl, q))
			goto out;
		uint32_t nr = 0;
		for (uint32_t i = 0; i < k; i++)
			if (dcl[i] < 0.0)
				rank[nr++] = (struct drop_rank){ dcl[i], i };
		if (!nr || nr == k)
			break; /* none to drop; or all, which is no cover */
		qsort(rank, nr, sizeof *rank, drop_rank_cmp);
		if (!taken && !(taken = util_calloc(n, 1)))
			goto out;
		memset(taken, 0, n);
		/* two-sided: a threshold a side (agm_trim()) */
		if (!F->thr && !(F->thr = util_calloc((g->nsend ? 2 : 1) * (size_t)F->k,
						       sizeof *F->thr)))
			goto out;
		uint32_t picked = 0;
		for (uint32_t r = 0; r < nr; r++) {
			const struct cover *c = &out->cover;
			uint32_t i = rank[r].i, hit = 0;
			for (uint64_t j = c->off[i]; j < c->off[i + 1] && !hit; j++)
				hit = taken[c->mem[j]];
			if (hit)
				continue; /* shares members with a column dropped this round */
			for (uint64_t j = c->off[i]; j < c->off[i + 1]; j++)
				taken[c->mem[j]] = 1;
			F->thr[out->comms[i].id] = HUGE_VAL;
			if (g->nsend)
				F->thr[F->k + out->comms[i].id] = HUGE_VAL;
			picked++;
		}
		struct agm next;
		if (agm_from_strengths(&next, g, F, epsilon, delta, min_links))
			goto out;
		next.ended_sooner = out->ended_sooner;
		next.dropped = out->dropped + picked;
		agm_release(out);
		*out = next;
	}
	rc = 0;
out:
	free(dcl);
	free(q);
	free(rank);
	free(taken);
	return rc;
}

int agm_from_strengths_every_column(struct agm *out, const struct graph *g, struct fcsr *F,
				    double epsilon, double delta, double min_links)
{
	return read_trimmed(out, g, F, epsilon, delta, min_links);
}

int agm_from_strengths_trimmed(struct agm *out, const struct graph *g, struct fcsr *F,
			       double epsilon, double delta, double min_links)
{
	if (read_trimmed(out, g, F, epsilon, delta, min_links))
		return -1;
	if (drop_columns(out, g, F, epsilon, delta, min_links)) {
		agm_release(out);
		return -1;
	}
	return 0;
}

int agm_coverage_as_given(const struct agm *a, const struct graph *g, uint32_t *covered,
			  uint32_t *overlapping, uint32_t *nodes)
{
	if (!g->paired) {
		*covered = a->covered;
		*overlapping = a->overlapping;
		*nodes = g->n;
		return 0;
	}
	uint32_t n = g->nsend;
	uint32_t *count = util_calloc(n ? n : 1, sizeof *count);
	uint32_t *last = util_malloc(n ? n : 1, sizeof *last); /* community seen last, + 1 */
	if (!count || !last) {
		free(count);
		free(last);
		return -1;
	}
	memset(last, 0, (size_t)n * sizeof *last);
	for (uint32_t c = 0; c < a->cover.k; c++)
		for (uint64_t i = a->cover.off[c]; i < a->cover.off[c + 1]; i++) {
			uint32_t u = a->cover.mem[i];
			u = u >= n ? u - n : u; /* the receiving copy's own node */
			if (u < n && last[u] != c + 1) {
				last[u] = c + 1;
				count[u]++;
			}
		}
	*covered = *overlapping = 0;
	for (uint32_t u = 0; u < n; u++) {
		*covered += count[u] > 0;
		*overlapping += count[u] > 1;
	}
	*nodes = n;
	free(count);
	free(last);
	return 0;
}
