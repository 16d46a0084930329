/*
 * model_directed: what the directed model adds to BigCLAM's machinery
 * (include/coterie/model_directed.h); the derivation of its row update
 * is in DEVELOPERS.md ("The directed model").
 *
 * The idea: a directed graph is a bipartite graph of sending and
 * receiving copies (graph_directed.c), and the directed likelihood is
 * BigCLAM's on that graph with the pairs restricted to one sending and
 * one receiving row. For a sending row u the terms holding F_u are
 *     f_u(r) = sum_{v in out(u)} log(1 - exp(-(r . H_v + q)))
 *              - r . (S_H - sum_{v in out(u)} H_v - H_u)
 * (S_H the receiving rows' column sums; H_u leaves the sum because the
 * pair (u, u) is no term), and its gradient is
 *     g_u = sum_{v in out(u)} H_v / expm1(F_u . H_v + q)
 *           - (S_H - sum_{v in out(u)} H_v - H_u),
 * so model_row.c's update does it all once colsum is the other side's and
 * H_u is a held-out partner (fit.c gives the self pairs as model.excl).
 * This file prepares the model, seeds it and reads memberships by side:
 * the per-side cover (rows of the two-sided graph as members; what
 * memberships.tsv lists and fit --repeats scores) and its figures (what
 * communities.tsv and the explorer's pane 2 show).
 *
 * The one thing a newcomer gets wrong: a snapshot's fcsr colsum is the
 * whole column (both sides); the membership rule needs the other side's
 * sums, which model_directed_side_sums() recomputes from the rows.
 */
#include "coterie/model_directed.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/agm.h"
#include "coterie/cover.h"
#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/seed.h"
#include "coterie/util.h"

int model_directed_prepare(const struct graph *g, struct model *m, struct graph **self_pairs,
			   struct graph **view)
{
	*self_pairs = *view = NULL;
	if (!g->nsend)
		return error("the directed and two-mode models need a graph read with --directed "
			     "or --two-mode");
	if (model_set_sides(m, g->nsend))
		return -1;
	if (!g->paired)
		return 0;
	if (!(*self_pairs = graph_self_pairs(g)) || !(*view = graph_undirected_view(g))) {
		graph_free(*self_pairs);
		*self_pairs = NULL;
		return -1;
	}
	return 0;
}

int model_directed_seed(const struct graph *g, const struct graph *view, struct model *m,
			enum seed_kind kind, uint64_t seed, uint32_t variant,
			struct seed_report *rep)
{
	if (!view)
		return seed_start(g, m, kind, seed, variant, rep);
	struct model one;
	if (model_init(&one, view->n, m->k, m->epsilon))
		return -1;
	int rc = seed_start(view, &one, kind, seed, variant, rep);
	for (uint32_t u = 0; rc == 0 && u < view->n; u++)
		if (model_set_row(m, u, one.rows[u].e, one.rows[u].nnz) ||
		    model_set_row(m, g->nsend + u, one.rows[u].e, one.rows[u].nnz))
			rc = -1;
	model_release(&one);
	return rc;
}

void model_directed_side_sums(const struct graph *g, const struct fcsr *F, double *sums)
{
	memset(sums, 0, 2 * (size_t)F->k * sizeof *sums);
	for (uint32_t u = 0; u < F->n; u++) {
		double *s = sums + (graph_side_of(g, u) ? F->k : 0);
		for (uint64_t j = F->off[u]; j < F->off[u + 1]; j++)
			s[F->e[j].c] += F->e[j].v;
	}
}

int model_directed_member_at(const struct graph *g, const struct fcsr *F, const double *sums,
			     uint32_t u, uint64_t j, double delta)
{
	int recv = graph_side_of(g, u);
	const double *other = sums + (recv ? 0 : F->k);
	uint32_t c = F->e[j].c;
	delta = fcsr_delta_at(F, c, recv, delta); /* the side's, from agm_trim() */
	return agm_is_member(F->e[j].v, other[c], delta, AGM_MIN_LINKS, graph_degree(g, u));
}

int model_directed_cover(const struct graph *g, const struct fcsr *F, double delta,
			 struct cover *out)
{
	memset(out, 0, sizeof *out);
	if (F->n != g->n || !g->nsend)
		return error("a per-side cover needs the rows of a two-sided graph (%u rows, %u "
			     "nodes)", F->n, g->n);
	double *sums = util_malloc(2 * (size_t)F->k + 1, sizeof *sums);
	out->off = util_calloc((size_t)F->k + 1, sizeof *out->off);
	out->mem = util_malloc(F->off[F->n] + 1, sizeof *out->mem);
	uint64_t *at = util_malloc((size_t)F->k + 1, sizeof *at);
	if (!sums || !out->off || !out->mem || !at) {
		UTIL_FREE_ALL(sums, at);
		cover_release(out);
		return -1;
	}
	out->n = g->n;
	out->k = F->k;
	model_directed_side_sums(g, F, sums);
	/* twice over the entries: count each column, then fill it in row
	 * order, so every column's members come out increasing */
	for (int fill = 0; fill < 2; fill++) {
		for (uint32_t u = 0; u < F->n; u++)
			for (uint64_t j = F->off[u]; j < F->off[u + 1]; j++)
				if (F->e[j].c < F->k && model_directed_member_at(g, F, sums, u, j, delta)) {
					if (fill)
						out->mem[at[F->e[j].c]++] = u;
					else
						out->off[F->e[j].c + 1]++;
				}
		for (uint32_t c = 0; !fill && c < F->k; c++) {
			out->off[c + 1] += out->off[c];
			at[c] = out->off[c];
		}
	}
	UTIL_FREE_ALL(sums, at);
	return 0;
}

int model_directed_figures(const struct graph *g, const struct cover *sided,
			   struct model_directed_figures *fig)
{
	if (sided->n != g->n || !g->nsend)
		return error("figures by side need a per-side cover of a two-sided graph");
	uint8_t *in = util_calloc((size_t)g->n + 1, 1); /* rows of the column at hand */
	if (!in)
		return -1;
	uint32_t ns = g->nsend;
	for (uint32_t c = 0; c < sided->k; c++) {
		struct model_directed_figures *f = &fig[c];
		memset(f, 0, sizeof *f);
		for (uint64_t j = sided->off[c]; j < sided->off[c + 1]; j++)
			in[sided->mem[j]] = 1;
		for (uint64_t j = sided->off[c]; j < sided->off[c + 1]; j++) {
			uint32_t u = sided->mem[j];
			if (graph_side_of(g, u)) {
				f->receivers++;
				continue;
			}
			f->senders++;
			f->both += g->paired && in[ns + u];
			for (uint64_t t = g->off[u]; t < g->off[u + 1]; t++) {
				uint32_t v = g->adj[t];
				if (!in[v])
					continue;
				f->arcs++;
				/* directed: the reverse arc v -> u inside as well? */
				if (!g->paired || !(in[v - ns] && in[ns + u] && graph_has_edge(g, v - ns, ns + u)))
					f->one_way++;
			}
		}
		for (uint64_t j = sided->off[c]; j < sided->off[c + 1]; j++)
			in[sided->mem[j]] = 0;
		f->size = f->senders + f->receivers - f->both;
		double pairs = (double)f->senders * f->receivers - (g->paired ? f->both : 0);
		f->density = pairs > 0 ? (double)f->arcs / pairs : 0.0;
		f->one_way_share = f->arcs ? (double)f->one_way / (double)f->arcs : 0.0;
	}
	free(in);
	return 0;
}

double model_directed_loglik_pairs(const struct model *m, const struct graph *g)
{
	double l = 0.0;
	for (uint32_t u = 0; u < g->nsend; u++)
		for (uint32_t v = g->nsend; v < g->n; v++) {
			if (g->paired && v == g->nsend + u)
				continue;
			double x = model_dot(m->rows[u].e, m->rows[u].nnz, m->rows[v].e,
					     m->rows[v].nnz) + m->qeps;
			l += graph_has_edge(g, u, v) ? model_log1mexp(x) : -x;
		}
	return l;
}
