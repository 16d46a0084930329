/*
 * select-internal.h: what select.c and select_warm.c share; nothing
 * outside the select module includes it.
 */
#ifndef COTERIE_SELECT_INTERNAL_H
#define COTERIE_SELECT_INTERNAL_H

#include <stdint.h>

#include "coterie/fcsr.h"

struct graph;

/*
 * A start for a fit of k columns on train (borrowed) from the strengths
 * from (borrowed) of a fit of k or more columns ON THE SAME training
 * graph: the weakest columns dropped. *out receives a new matrix
 * (fcsr_release() it). Returns 0, or -1 (out of memory, or k above
 * from->k: no message; the caller then seeds).
 */
int select_warm_start(const struct fcsr *from, const struct graph *train, uint32_t k,
		      struct fcsr *out);

#endif
