/*
 * graph_weights: edge weights, for the Poisson model (model_poisson.c).
 *
 * The idea: the rows of a graph are built from id pairs alone
 * (graph_csr.c, unchanged), and the weights are laid over them afterwards:
 * each record (u, v, w) finds v in u's sorted row and u in v's by binary
 * search and adds w there. So the CSR build keeps its two threads and its
 * bytes, an unweighted graph carries no weight array at all (g->wt NULL,
 * graph_weight() reads 1), and the weights of the records of one pair are
 * added in file order, whatever the thread count.
 *
 * Invariant: g->wt[i] is the weight of the edge at adj[i], equal in both
 * rows of the edge, finite and > 0.
 *
 * The one thing a newcomer gets wrong: a weight is checked on its own line
 * (graph_weight_parse(), where the file and line are known), but a sum of
 * many large weights can still overflow: graph_set_weights() checks the
 * sums too.
 */
#include "graph-internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/util.h"

#define WEIGHT_FIELD_MAX 64 /* a longer third field is no number we take */

const char *graph_weight_parse(const char *s, size_t len, double *out)
{
	char buf[WEIGHT_FIELD_MAX + 1];
	if (len == 0)
		return "empty";
	if (len > WEIGHT_FIELD_MAX)
		return "not a number";
	memcpy(buf, s, len);
	buf[len] = '\0';
	/* strtod() would take "inf", "nan", hexadecimal and leading spaces:
	 * a weight is written in decimal, with an optional exponent */
	for (size_t i = 0; i < len; i++)
		if (!strchr("0123456789.eE+-", buf[i]))
			return "not a number";
	char *end;
	double x = strtod(buf, &end);
	if (end != buf + len)
		return "not a number";
	if (!isfinite(x))
		return "too large";
	if (x == 0.0)
		return "zero";
	if (x < 0.0)
		return "negative";
	*out = x;
	return NULL;
}

/* Add w to the weight of v in u's row. */
static void add_at(struct graph *g, uint32_t u, uint32_t v, double w)
{
	const uint32_t *row = g->adj + g->off[u];
	size_t len = (size_t)(g->off[u + 1] - g->off[u]);
	size_t i = util_lower_bound_u32(row, len, v);
	if (i >= len || row[i] != v)
		BUG("edge %u-%u is not in the rows built from it", u, v);
	g->wt[g->off[u] + i] += w;
}

int graph_set_weights(struct graph *g, const uint32_t *pairs, const double *w, uint64_t npairs,
		      const char *shown)
{
	free(g->wt);
	g->wt = util_calloc(g->off[g->n] ? g->off[g->n] : 1, sizeof *g->wt);
	if (!g->wt)
		return -1;
	for (uint64_t i = 0; i < npairs; i++) {
		uint32_t u = pairs[2 * i], v = pairs[2 * i + 1];
		if (u == v)
			continue;
		add_at(g, u, v, w[i]);
		add_at(g, v, u, w[i]);
	}
	for (uint64_t i = 0; i < g->off[g->n]; i++)
		if (!isfinite(g->wt[i]) || !(g->wt[i] > 0.0)) {
			free(g->wt);
			g->wt = NULL;
			return error("%s: the weights of one pair add up past the largest number",
				     shown);
		}
	return 0;
}

double graph_total_weight(const struct graph *g)
{
	if (!g->wt)
		return (double)g->m;
	double s = 0.0;
	for (uint32_t u = 0; u < g->n; u++)
		for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++)
			if (g->adj[i] > u)
				s += g->wt[i];
	return s;
}

int graph_set_edge_weights(struct graph *g, const double *w)
{
	free(g->wt);
	g->wt = util_calloc(g->off[g->n] ? g->off[g->n] : 1, sizeof *g->wt);
	if (!g->wt)
		return -1;
	uint64_t e = 0;
	for (uint32_t u = 0; u < g->n; u++)
		for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++)
			if (g->adj[i] > u) {
				g->wt[i] = w[e];
				add_at(g, g->adj[i], u, w[e]);
				e++;
			}
	return 0;
}
