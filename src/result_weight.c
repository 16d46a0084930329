/*
 * result_weight: the observed and expected weight inside each community of
 * a weighted fit (result_weight.h), for communities.tsv.
 *
 * The idea: the expected weight over the pairs of a community C is
 *     sum_{u < v in C} (F_u . F_v + q)
 *       = (|R|^2 - sum_{u in C} |F_u|^2) / 2 + q |C| (|C| - 1) / 2,
 * with R = sum_{u in C} F_u, so a community costs the entries of its
 * members' rows, not |C|^2 dot products. R is kept dense over k with the
 * list of the columns it touched, cleared through that list (a cover of
 * 10^4 communities would otherwise pay k per community). The observed
 * weight walks the members' edges with the members marked: each edge
 * inside is met from both ends and counted from its smaller one.
 *
 * A two-sided fit (directed or two-mode weighted) is the same idea on the
 * pairs (sending member u, receiving member v): with R_S the sending
 * members' row sum and R_H the receiving members',
 *     sum_{u in S, v in R, v not u's own} (F_u . H_v + q)
 *       = R_S . R_H - sum_{u both} F_u . H_u + q (|S| |R| - both),
 * the own pairs (F_u, H_u) of a directed node that is a member on both
 * sides left out as the likelihood leaves them out (two-mode: none).
 * The observed weight walks the sending members' arcs (each arc once).
 *
 * The one thing a newcomer gets wrong: the expectation is the whole
 * model's (every community and the background) over the member pairs,
 * not community C's own share F_uC F_vC: it is what the observed weight
 * is set against. At a maximum of the Poisson likelihood the two agree
 * closely on a community's block (DEVELOPERS.md).
 */
#include "coterie/result_weight.h"

#include <stdlib.h>

#include "coterie/cover.h"
#include "coterie/fcsr.h"
#include "coterie/graph.h"
#include "coterie/util.h"

/* Dense sums over k with the list of the columns touched (see above). */
struct colsum {
	double *sum;
	uint32_t *touched;
	uint32_t nt;
};

static int colsum_init(struct colsum *cs, uint32_t k)
{
	cs->nt = 0;
	cs->sum = util_calloc(k ? k : 1, sizeof *cs->sum);
	cs->touched = util_malloc(k ? k : 1, sizeof *cs->touched);
	if (cs->sum && cs->touched)
		return 0;
	UTIL_FREE_ALL(cs->sum, cs->touched);
	return -1;
}

static void colsum_release(struct colsum *cs)
{
	UTIL_FREE_ALL(cs->sum, cs->touched);
}

/* Add row u of F into cs, and |F_u|^2 into *self unless NULL (entry by
 * entry, in the order of the first version: the one-mode file's bits). */
static void colsum_add(struct colsum *cs, const struct fcsr *F, uint32_t u, double *self)
{
	for (uint64_t j = F->off[u]; j < F->off[u + 1]; j++) {
		uint32_t c = F->e[j].c;
		if (cs->sum[c] == 0.0)
			cs->touched[cs->nt++] = c;
		cs->sum[c] += F->e[j].v;
		if (self)
			*self += F->e[j].v * F->e[j].v;
	}
}

/* Zero cs through its touched list. */
static void colsum_clear(struct colsum *cs)
{
	for (uint32_t t = 0; t < cs->nt; t++)
		cs->sum[cs->touched[t]] = 0.0;
	cs->nt = 0;
}

int result_weight_figures(const struct graph *g, const struct fcsr *F, const struct cover *cv,
			  double qeps, double *observed, double *expected)
{
	if (F->n != g->n || cv->n > g->n)
		return error("the strengths (%u rows) and the cover (%u nodes) are not of one "
			     "graph of %u nodes", F->n, cv->n, g->n);
	struct colsum cs;
	uint8_t *in = util_calloc(g->n ? g->n : 1, 1);
	if (!in || colsum_init(&cs, F->k)) {
		free(in);
		return -1;
	}
	for (uint32_t i = 0; i < cv->k; i++) {
		double self = 0.0, obs = 0.0;
		for (uint64_t a = cv->off[i]; a < cv->off[i + 1]; a++) {
			uint32_t u = cv->mem[a];
			in[u] = 1;
			colsum_add(&cs, F, u, &self);
		}
		for (uint64_t a = cv->off[i]; a < cv->off[i + 1]; a++) {
			uint32_t u = cv->mem[a];
			for (uint64_t j = g->off[u]; j < g->off[u + 1]; j++)
				if (g->adj[j] > u && in[g->adj[j]])
					obs += graph_weight(g, j);
		}
		double sq = 0.0;
		for (uint32_t t = 0; t < cs.nt; t++)
			sq += cs.sum[cs.touched[t]] * cs.sum[cs.touched[t]];
		colsum_clear(&cs);
		for (uint64_t a = cv->off[i]; a < cv->off[i + 1]; a++)
			in[cv->mem[a]] = 0;
		double s = (double)(cv->off[i + 1] - cv->off[i]);
		double x = 0.5 * (sq - self);
		expected[i] = (x > 0.0 ? x : 0.0) + qeps * 0.5 * s * (s - 1.0);
		observed[i] = obs;
	}
	colsum_release(&cs);
	free(in);
	return 0;
}

/* F_u . F_v of two rows of F (entries sorted by column). */
static double row_dot(const struct fcsr *F, uint32_t u, uint32_t v)
{
	double d = 0.0;
	uint64_t a = F->off[u], b = F->off[v];
	while (a < F->off[u + 1] && b < F->off[v + 1]) {
		if (F->e[a].c < F->e[b].c)
			a++;
		else if (F->e[a].c > F->e[b].c)
			b++;
		else
			d += F->e[a++].v * F->e[b++].v;
	}
	return d;
}

int result_weight_sided_figures(const struct graph *g, const struct fcsr *F,
				const struct cover *sided, double qeps, double *observed,
				double *expected)
{
	if (F->n != g->n || sided->n != g->n || !g->nsend)
		return error("the sided weight figures need the rows and a per-side cover of one "
			     "two-sided graph (%u rows, %u in the cover, %u nodes)", F->n, sided->n,
			     g->n);
	struct colsum cs;
	uint8_t *in = util_calloc(g->n ? g->n : 1, 1);
	if (!in || colsum_init(&cs, F->k)) {
		free(in);
		return -1;
	}
	uint32_t ns = g->nsend;
	for (uint32_t i = 0; i < sided->k; i++) {
		uint64_t a0 = sided->off[i], end = sided->off[i + 1];
		double senders = 0.0, receivers = 0.0, own = 0.0, both = 0.0, obs = 0.0, dot = 0.0;
		for (uint64_t a = a0; a < end; a++)
			in[sided->mem[a]] = 1;
		for (uint64_t a = a0; a < end; a++) { /* the sending rows: R_S, arcs */
			uint32_t u = sided->mem[a];
			if (graph_side_of(g, u))
				continue;
			senders++;
			colsum_add(&cs, F, u, NULL);
			for (uint64_t j = g->off[u]; j < g->off[u + 1]; j++)
				if (in[g->adj[j]])
					obs += graph_weight(g, j);
			if (g->paired && in[ns + u]) {
				both++;
				own += row_dot(F, u, ns + u);
			}
		}
		for (uint64_t a = a0; a < end; a++) { /* the receiving rows: R_S . R_H */
			uint32_t v = sided->mem[a];
			if (!graph_side_of(g, v))
				continue;
			receivers++;
			for (uint64_t j = F->off[v]; j < F->off[v + 1]; j++)
				dot += cs.sum[F->e[j].c] * F->e[j].v;
		}
		colsum_clear(&cs);
		for (uint64_t a = a0; a < end; a++)
			in[sided->mem[a]] = 0;
		double x = dot - own;
		expected[i] = (x > 0.0 ? x : 0.0) + qeps * (senders * receivers - both);
		observed[i] = obs;
	}
	colsum_release(&cs);
	free(in);
	return 0;
}
