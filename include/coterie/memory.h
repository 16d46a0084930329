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
 * process: the working model, the copies of the strengths that snapshots,
 * the best start, refinement and checkpoints keep, the AGM read from them,
 * and each thread's scratch space. An estimate, not a bound: a node is
 * taken to hold at most min(k, degree + 1) communities. Thread stacks are
 * not included (see memory_check_fit()). */
uint64_t memory_fit_estimate(const struct graph *g, const struct fit_params *p);

/* What limits this process: the smallest of physical memory, the
 * address-space and data limits (ulimit -v, ulimit -d), the cgroup's
 * memory.max, and COTERIE_MEMORY_LIMIT (bytes, or with a K, M or G
 * suffix: "as if the machine had that much", for tests). *what names it
 * (static text); *counts_virtual is 1 when the limit counts address space
 * (then thread stacks and mappings count against it). Returns 0, or -1
 * when nothing is known (no message). */
int memory_limit(uint64_t *bytes, const char **what, int *counts_virtual);

/* Refuse (error() with the estimate and the limit, -1) when a fit of g with
 * p would not fit beside what the process already uses; 0 otherwise, or
 * when the limit cannot be known. */
int memory_check_fit(const struct graph *g, const struct fit_params *p);

#endif
