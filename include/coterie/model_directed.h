/*
 * model_directed: the directed (and two-mode) form of the model, on a
 * two-sided graph (graph.h: nsend, paired; graph_directed.c).
 *
 * Every node u has a sending row F_u and a receiving row H_u, and
 *     P(u -> v) = 1 - exp(-(F_u . H_v + qeps)),
 * the directed form of BigCLAM's link function (Yang & Leskovec, WSDM
 * 2013), with separate sender and receiver factors as in factorisations
 * of directed and bipartite data (e.g. Gopalan, Hofman & Blei, UAI 2015).
 * The rows live in one struct model of the two-sided graph's n rows:
 * sending rows first (model.nsend), receiving rows after; the row update
 * is model_row.c's (the other side's column sums replace colsum), blocks
 * couple only a sending and a receiving row (sweep.c), and a directed
 * graph's pairs (F_u, H_u) are held out for good (no self-arcs).
 */
#ifndef COTERIE_MODEL_DIRECTED_H
#define COTERIE_MODEL_DIRECTED_H

#include <stdint.h>

#include "fcsr.h"
#include "seed.h"

struct graph;
struct model;

/* Make the all-zero model m of g's rows two-sided, and for a directed
 * graph (g->paired) make *self_pairs (the pairs to leave out) and *view
 * (the undirected view seeds are drawn from), else set both to NULL.
 * Caller frees both with graph_free(). Returns 0 or -1 (g not two-sided,
 * out of memory). */
int model_directed_prepare(const struct graph *g, struct model *m, struct graph **self_pairs,
			   struct graph **view);

/* Seed an all-zero two-sided model. The rule (ours, measured in
 * DEVELOPERS.md): a directed graph is seeded by seed_model() on its
 * undirected view, each seed ego-net giving its members strength 1 on
 * both rows (sending and receiving); a two-mode graph by seed_model() on
 * the bipartite graph itself (an ego-net is a node and its partners of
 * the other kind). view borrowed (NULL for two-mode). Returns 0 or -1. */
int model_directed_seed(const struct graph *g, const struct graph *view, struct model *m,
			enum seed_kind kind, uint64_t seed, uint32_t variant,
			struct seed_report *rep);

/* The column sums of each side of F (g two-sided, F its rows): into
 * sums (2 F->k values, borrowed): the sending rows', then the receiving. */
void model_directed_side_sums(const struct graph *g, const struct fcsr *F, double *sums);

/* Is entry j of F (in row u of a two-sided g) a membership? The rule of
 * agm_is_member() with the other side's column sum (sums from
 * model_directed_side_sums()) and u's degree on its side (out-degree for
 * a sending row, in-degree for a receiving one). */
int model_directed_member_at(const struct graph *g, const struct fcsr *F, const double *sums,
			     uint32_t u, uint64_t j, double delta);

/* The per-side cover of F (g two-sided, F its rows): community c holds
 * row u when entry (u, c) passes model_directed_member_at(), so a node
 * of a directed graph is in it once per side it is a member on (its
 * sending row u, its receiving row nsend + u); a two-mode node once.
 * out gets F->k communities (id = column, empty ones kept) over g->n
 * rows, no labels; caller releases with cover_release(). Returns 0, or
 * -1 with a message (not two-sided, rows and graph differ, out of memory). */
struct cover;
int model_directed_cover(const struct graph *g, const struct fcsr *F, double delta,
			 struct cover *out);

/* What communities.tsv of a two-sided fit says of a community. */
struct model_directed_figures {
	uint32_t size;            /* nodes with either side (directed: counted once) */
	uint32_t senders, receivers, both; /* two-mode: first kind, second kind, 0 */
	uint64_t arcs;            /* arcs from a sending member to a receiving member */
	uint64_t one_way;         /* of them, those whose reverse arc is not inside */
	double density;           /* arcs / (senders x receivers, less both) */
	double one_way_share;     /* one_way / arcs (0 with no arc) */
};

/* The figures of every community of the per-side cover sided (from
 * model_directed_cover() on g) into fig (sided->k entries, borrowed;
 * size 0 for a community with no member). The one computation behind
 * communities.tsv and the explorer's pane 2. Returns 0 or -1 (reported). */
int model_directed_figures(const struct graph *g, const struct cover *sided,
			   struct model_directed_figures *fig);

/* The log-likelihood pair by pair, for tests: over ordered pairs of a
 * sending and a receiving row (a directed graph's own pairs left out).
 * O(n^2 nnz). */
double model_directed_loglik_pairs(const struct model *m, const struct graph *g);

#endif
