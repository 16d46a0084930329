/*
 * memory: how much memory a fit will take, how much this process may have,
 * and a refusal before a fit starts when the first exceeds the second (a
 * fit that dies of memory after an hour has lost the hour).
 */
#ifndef COTERIE_MEMORY_H
#define COTERIE_MEMORY_H

#include <stdint.h>

struct graph;
struct fit_params;

/* The bytes a fit of g (borrowed, already loaded) with p will add to the
 * resident size at its peak: a fixed part, a part a node and each further
 * thread's scratch, plus the larger of a part an entry of the predicted
 * fill (memory_fill_for(); the first sweeps) and a part an edge and an entry
 * of the fill (the end of the fit), fitted to measured peaks and scaled
 * by 1.1. An
 * estimate, not a bound. Thread stacks are not included (see
 * memory_check_fit()). Costs a pass over the nodes and a sample of edges. */
uint64_t memory_fit_estimate(const struct graph *g, const struct fit_params *p);

/* The predicted fill of a fit of g (borrowed) with k communities: the
 * most strength entries the model holds at once (in its first sweeps),
 * a node on average; from k, n / k and the mean degree times
 * memory_leak_share(). 0 for an empty graph or k = 0. */
double memory_fill(const struct graph *g, uint32_t k);

/* The fill a fit of g with p predicts: memory_fill(), capped when the
 * starts are seeded from clusters (p->seeding), which fill rows less
 * (src/memory.c says by how much it was measured). */
double memory_fill_for(const struct graph *g, const struct fit_params *p);

/* The share of g's edges (borrowed) that close no triangle, from a
 * sample of at most about 20,000 edges spread evenly over the edge list:
 * edges between communities rarely close one, so it measures how much the
 * communities leak. 0 for a graph without edges. */
double memory_leak_share(const struct graph *g);

/* What limits this process: the smallest of physical memory, the
 * address-space and data limits (ulimit -v, ulimit -d), the cgroup's
 * memory.max, and COTERIE_MEMORY_LIMIT (bytes, or with a K, M or G
 * suffix: "as if the machine had that much", for tests). *what names it
 * (static text); *counts_virtual is 1 when the limit counts address space
 * (then thread stacks and mappings count against it). Returns 0, or -1
 * when nothing is known (no message). */
int memory_limit(uint64_t *bytes, const char **what, int *counts_virtual);

/* Refuse (error() with the estimate, the limit and what would fit: -j 1
 * at this k, or the largest k at these threads; -1) when a fit of g with
 * p would not fit beside what the process already uses; 0 otherwise, or
 * when the limit cannot be known. */
int memory_check_fit(const struct graph *g, const struct fit_params *p);

/* Under an address-space limit (ulimit -v), cap glibc's malloc arenas at
 * one per 256 MiB of the limit: each arena past the first reserves 64 MiB
 * of address space, which neither the estimate nor the process counts
 * until a thread first allocates; at a limit of 117 MiB the fitting
 * thread's first allocation failed where the estimate said the fit would
 * fit. Call before any thread starts; nothing without a limit. */
void memory_limit_arenas(void);

#endif
