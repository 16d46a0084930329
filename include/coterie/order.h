/*
 * order: renumbering a graph's nodes for locality.
 *
 * The fitting engine reads, for every node, the strength rows of all its
 * neighbours. With ids in order of first appearance in a file those rows
 * lie anywhere in memory; after a breadth-first renumbering a node's
 * neighbours have nearby ids, so their rows share cache lines and pages.
 * The fit renumbers internally and maps back when it hands strengths
 * out: names, files and every result stay in the graph's own ids.
 */
#ifndef COTERIE_ORDER_H
#define COTERIE_ORDER_H

#include <stdint.h>

struct graph;

/* A breadth-first order: inner[u] is u's new id (a permutation of 0..n-1).
 * Components are taken in order of their smallest id, each from that
 * node; neighbours are queued in id order. inner is borrowed (g->n
 * values). Returns 0 or -1. */
int order_bfs(const struct graph *g, uint32_t *inner);

/* out = g with node u renamed inner[u]: off and adj only (rows sorted,
 * names and index NULL). Release with order_graph_release(). Returns 0
 * or -1. */
int order_graph(const struct graph *g, const uint32_t *inner, struct graph *out);
void order_graph_release(struct graph *out);

#endif
