/*
 * tui/sides: what the explorer shows of a two-sided fit (directed or
 * two-mode; graph.h nsend, model_directed.h), with no curses: node names
 * without their side tag, a node's sending and receiving strengths side
 * by side, and a community's members by side, all by the per-side
 * membership rule of memberships.tsv (model_directed_member_at()).
 */
#ifndef COTERIE_TUI_SIDES_H
#define COTERIE_TUI_SIDES_H

#include <stddef.h>
#include <stdint.h>

#include "coterie/inspect.h"
#include "coterie/model_directed.h"

struct agm;
struct graph;
struct fcsr;
struct inspect_node;

/* Which members pane 3 lists ('d'). */
enum sides_filter {
	SIDES_ALL = 0,   /* every member, one row a node, its side in a column */
	SIDES_SENDING,   /* sending members (two-mode: of the first kind) */
	SIDES_RECEIVING, /* receiving members (two-mode: of the second kind) */
};

/* Side bits of a membership. */
#define SIDES_S 1u
#define SIDES_R 2u

/* One row of a node's view: a community and both sides' strengths (0
 * where the row has none) and which of them are memberships. */
struct sides_row {
	double s, r;
	unsigned member; /* SIDES_S | SIDES_R bits */
};

/* A node of a two-sided graph: the rows beside the inspect_node that
 * carries the community, the larger strength and "member on some side"
 * (so the cursor, 'a' and Enter work as for a one-mode node). */
struct sides_node {
	uint32_t outdeg, indeg; /* directed: arcs out and in; two-mode: the degree in outdeg */
	int kind;               /* -1 directed; two-mode 0 first kind, 1 second */
	uint32_t nsend, nrecv;  /* communities it sends, receives in (memberships) */
	struct sides_row *row;  /* row[i] is nv->affil[i]'s (owned) */
};

/* The node a row of g stands for: a directed graph's receiving copy
 * nsend + i is node i (its sending copy); any other row is itself. */
uint32_t sides_user(const struct graph *g, uint32_t u);

/* u's name without its side tag, made safe (util_escape(); ASCII only
 * when ascii) into buf. Returns buf. */
const char *sides_name(const struct graph *g, uint32_t u, char *buf, size_t cap, int ascii);

/* The per-side column sums of F (2 F->k values, allocated; caller frees),
 * or NULL (reported). */
double *sides_sums(const struct graph *g, const struct fcsr *F);

/* The view of node u (sides_user() applied) under F with sums from
 * sides_sums(): nv (release with inspect_node_release()) and sn (release
 * with sides_node_release()), strongest first. Returns 0 or -1. */
int sides_node(struct inspect_node *nv, struct sides_node *sn, const struct graph *g,
	       const struct fcsr *F, const double *sums, double delta, uint32_t u);
void sides_node_release(struct sides_node *sn);

/* The members of column c under filter, from the n rows cand (borrowed:
 * the members of c in the AGM of the two-sided graph, a superset of the
 * per-side members since a side's column sum is at most the whole one):
 * nodes (sides_user()) into out, their strengths (the larger passing one
 * for SIDES_ALL) into strength and side bits into side, strongest first,
 * ties by node. The three buffers hold n entries. Returns the count, or
 * -1 (out of memory, reported). */
int64_t sides_members(const struct graph *g, const struct fcsr *F, const double *sums,
		      double delta, uint32_t c, const uint32_t *cand, uint32_t n,
		      enum sides_filter filter, uint32_t *out, double *strength, uint8_t *side);

/* Pane 2's figures of every column of F (F->k entries, by community id;
 * caller frees), those communities.tsv of a two-sided fit writes
 * (model_directed_figures() on the per-side cover), or NULL (reported). */
struct model_directed_figures *sides_figures(const struct graph *g, const struct fcsr *F,
					     double delta);

/* The communities of a (the two-sided graph's AGM) that have a member by
 * the per-side rule, as indexes into a->comms sorted by key read on fig
 * (nfig entries by id): size, arcs inside (INSPECT_BY_EDGES), density,
 * the one-way share (INSPECT_BY_CONDUCTANCE), senders (INSPECT_BY_P) or
 * id; descending unless ascending, ties by id. order holds a->cover.k.
 * Returns how many are kept (as many as communities.tsv has rows), or 0
 * when out of memory (reported). */
uint32_t sides_sort_communities(const struct agm *a, const struct model_directed_figures *fig,
				uint32_t nfig, enum inspect_key key, int ascending,
				uint32_t *order);

/* What key sorts a two-sided fit's pane 2 by, in words. */
const char *sides_sort_name(enum inspect_key key);

#endif
