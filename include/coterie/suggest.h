/*
 * suggest: nodes whose names are near a name that matched none, for the
 * message of a command given a wrong name (`coterie show --node`).
 */
#ifndef COTERIE_SUGGEST_H
#define COTERIE_SUGGEST_H

#include <stddef.h>
#include <stdint.h>

struct graph;

#define SUGGEST_MAX 10 /* names a message lists at most */

/*
 * Up to max node ids of g (borrowed) whose names are near query, best
 * first, into out (max entries, borrowed buffer): the name equal to query
 * with ASCII letters folded, then names starting with it, then names
 * holding it (as the explorer's find matches), then, for queries of 3 to
 * 32 bytes, names within a small edit distance (1 up to 5 bytes, else 2);
 * each tier by node id. Returns how many were written; never fails.
 */
size_t suggest_nodes(const struct graph *g, const char *query, uint32_t *out, size_t max);

#endif
