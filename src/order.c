/*
 * order: a breadth-first renumbering and the renumbered graph.
 *
 * The idea: breadth-first search puts a node's neighbours (the queue is
 * filled from its row) in a run of consecutive ids, and most of a
 * community's members within a few runs, so the strength rows a row
 * update reads are close together. It costs O(n + m) and one copy of the
 * graph's rows.
 *
 * The one thing a newcomer gets wrong: inner maps old to new. The
 * renumbered graph's row inner[u] holds inner[v] for every neighbour v
 * of u, sorted again (the graph rules want rows increasing).
 */
#include "coterie/order.h"

#include <stdlib.h>
#include <string.h>

#include "coterie/graph.h"
#include "coterie/util.h"

int order_bfs(const struct graph *g, uint32_t *inner)
{
	uint32_t n = g->n;
	uint32_t *queue = util_malloc(n ? n : 1, sizeof *queue);
	if (!queue)
		return -1;
	for (uint32_t u = 0; u < n; u++)
		inner[u] = UINT32_MAX;
	uint32_t head = 0, tail = 0;
	for (uint32_t s = 0; s < n; s++) {
		if (inner[s] != UINT32_MAX)
			continue;
		inner[s] = tail;
		queue[tail++] = s;
		while (head < tail) {
			uint32_t u = queue[head++];
			for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++) {
				uint32_t v = g->adj[i];
				if (inner[v] == UINT32_MAX) {
					inner[v] = tail;
					queue[tail++] = v;
				}
			}
		}
	}
	free(queue);
	return 0;
}

int order_graph(const struct graph *g, const uint32_t *inner, struct graph *out)
{
	uint32_t n = g->n;
	memset(out, 0, sizeof *out);
	out->n = n;
	out->m = g->m;
	out->off = util_malloc((size_t)n + 1, sizeof *out->off);
	out->adj = util_malloc(g->m ? 2 * g->m : 1, sizeof *out->adj);
	uint32_t *outer = util_malloc(n ? n : 1, sizeof *outer);
	if (!out->off || !out->adj || !outer) {
		free(outer);
		order_graph_release(out);
		return -1;
	}
	for (uint32_t u = 0; u < n; u++)
		outer[inner[u]] = u;
	out->off[0] = 0;
	for (uint32_t i = 0; i < n; i++) {
		uint32_t u = outer[i];
		uint64_t o = out->off[i];
		uint32_t d = graph_degree(g, u);
		uint32_t *row = out->adj + o;
		for (uint32_t j = 0; j < d; j++)
			row[j] = inner[g->adj[g->off[u] + j]];
		if (d > 16) {
			qsort(row, d, sizeof *row, util_qsort_u32);
		} else {
			for (uint32_t j = 1; j < d; j++) {
				uint32_t x = row[j], k = j;
				for (; k > 0 && row[k - 1] > x; k--)
					row[k] = row[k - 1];
				row[k] = x;
			}
		}
		out->off[i + 1] = o + d;
	}
	free(outer);
	return 0;
}

void order_graph_release(struct graph *out)
{
	if (!out)
		return;
	free(out->off);
	free(out->adj);
	memset(out, 0, sizeof *out);
}
