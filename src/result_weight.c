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
 * The one thing a newcomer gets wrong: the expectation is the whole
 * model's (every community and the background) over the member pairs,
 * not community C's own share F_uC F_vC: it is what the observed weight
 * is set against.
 */
#include "coterie/result_weight.h"

#include <stdlib.h>

#include "coterie/cover.h"
#include "coterie/fcsr.h"
#include "coterie/graph.h"
#include "coterie/util.h"

int result_weight_figures(const struct graph *g, const struct fcsr *F, const struct cover *cv,
			  double qeps, double *observed, double *expected)
{
	if (F->n != g->n || cv->n > g->n)
		return error("the strengths (%u rows) and the cover (%u nodes) are not of one "
			     "graph of %u nodes", F->n, cv->n, g->n);
	double *sum = util_calloc(F->k ? F->k : 1, sizeof *sum);
	uint32_t *touched = util_malloc(F->k ? F->k : 1, sizeof *touched);
	uint8_t *in = util_calloc(g->n ? g->n : 1, 1);
	if (!sum || !touched || !in) {
		UTIL_FREE_ALL(sum, touched, in);
		return -1;
	}
	for (uint32_t i = 0; i < cv->k; i++) {
		uint32_t nt = 0;
		double self = 0.0, obs = 0.0;
		for (uint64_t a = cv->off[i]; a < cv->off[i + 1]; a++) {
			uint32_t u = cv->mem[a];
			in[u] = 1;
			for (uint64_t j = F->off[u]; j < F->off[u + 1]; j++) {
				uint32_t c = F->e[j].c;
				if (sum[c] == 0.0)
					touched[nt++] = c;
				sum[c] += F->e[j].v;
				self += F->e[j].v * F->e[j].v;
			}
		}
		for (uint64_t a = cv->off[i]; a < cv->off[i + 1]; a++) {
			uint32_t u = cv->mem[a];
			for (uint64_t j = g->off[u]; j < g->off[u + 1]; j++)
				if (g->adj[j] > u && in[g->adj[j]])
					obs += graph_weight(g, j);
		}
		double sq = 0.0;
		for (uint32_t t = 0; t < nt; t++) {
			sq += sum[touched[t]] * sum[touched[t]];
			sum[touched[t]] = 0.0;
		}
		for (uint64_t a = cv->off[i]; a < cv->off[i + 1]; a++)
			in[cv->mem[a]] = 0;
		double s = (double)(cv->off[i + 1] - cv->off[i]);
		double x = 0.5 * (sq - self);
		expected[i] = (x > 0.0 ? x : 0.0) + qeps * 0.5 * s * (s - 1.0);
		observed[i] = obs;
	}
	UTIL_FREE_ALL(sum, touched, in);
	return 0;
}
