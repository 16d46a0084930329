/*
 * suggest: near names for a name that matched none.
 *
 * The idea: one pass over the names ranks each one by how it matches the
 * query, in tiers (folded-case equal, prefix, substring, small edit
 * distance), and keeps the best max of them in a small sorted array. The
 * first three tiers are the explorer's find (src/tui/find.c), so a user
 * who typed a part of a name gets the names the explorer would list.
 *
 * Invariants: the result depends only on the graph and the query (ties
 * by node id); the cost is O(n * |query|) plus O(|query|^2) per name of
 * similar length, bounded by capping the edit distance's query at 32
 * bytes. Bytes beyond ASCII compare exactly (no locale).
 */
#include "coterie/suggest.h"

#include <string.h>

#include "coterie/graph.h"

#define EDIT_MAX_QUERY 32

static unsigned char fold(unsigned char c)
{
	return (c >= 'A' && c <= 'Z') ? (unsigned char)(c + 32) : c;
}

/* 0 equal, 1 prefix, 2 inside, -1 none (folded; qlen > 0). */
static int substring_rank(const unsigned char *s, const unsigned char *q, size_t qlen)
{
	for (size_t i = 0; s[i]; i++) {
		size_t j = 0;
		while (j < qlen && s[i + j] && fold(s[i + j]) == fold(q[j]))
			j++;
		if (j == qlen)
			return i > 0 ? 2 : s[qlen] ? 1 : 0;
	}
	return -1;
}

/* Levenshtein distance of folded a (alen) and b (blen <= EDIT_MAX_QUERY + 2),
 * or limit + 1 when above limit. */
static size_t edit_distance(const unsigned char *a, size_t alen, const unsigned char *b,
			    size_t blen, size_t limit)
{
	size_t row[EDIT_MAX_QUERY + 4], prev_diag, tmp;
	for (size_t j = 0; j <= blen; j++)
		row[j] = j;
	for (size_t i = 1; i <= alen; i++) {
		prev_diag = row[0];
		row[0] = i;
		size_t best = row[0];
		for (size_t j = 1; j <= blen; j++) {
			tmp = row[j];
			size_t sub = prev_diag + (fold(a[i - 1]) != fold(b[j - 1]));
			size_t del = row[j] + 1, ins = row[j - 1] + 1;
			row[j] = sub < del ? (sub < ins ? sub : ins) : (del < ins ? del : ins);
			prev_diag = tmp;
			if (row[j] < best)
				best = row[j];
		}
		if (best > limit)
			return limit + 1;
	}
	return row[blen];
}

/* The tier of name for query: 0 to 3 (lower is nearer), -1 not near. */
static int rank_of(const char *name, const char *query, size_t qlen)
{
	const unsigned char *s = (const unsigned char *)name, *q = (const unsigned char *)query;
	int r = substring_rank(s, q, qlen);
	if (r >= 0)
		return r;
	if (qlen < 3 || qlen > EDIT_MAX_QUERY)
		return -1;
	size_t limit = qlen <= 5 ? 1 : 2, slen = strlen(name);
	if (slen + limit < qlen || slen > qlen + limit)
		return -1;
	/* the name is the short side here: at most qlen + limit bytes */
	return edit_distance(q, qlen, s, slen, limit) <= limit ? 3 : -1;
}

size_t suggest_nodes(const struct graph *g, const char *query, uint32_t *out, size_t max)
{
	size_t qlen = strlen(query), n = 0;
	int rank[64];
	if (max > 64)
		max = 64;
	if (qlen == 0 || max == 0)
		return 0;
	for (uint32_t u = 0; u < g->n; u++) {
		int r = rank_of(graph_name(g, u), query, qlen);
		if (r < 0 || (n == max && r >= rank[n - 1]))
			continue;
		/* insert after every kept name of the same or a better tier */
		size_t at = n < max ? n : max - 1;
		while (at > 0 && rank[at - 1] > r) {
			if (at < max) {
				rank[at] = rank[at - 1];
				out[at] = out[at - 1];
			}
			at--;
		}
		rank[at] = r;
		out[at] = u;
		if (n < max)
			n++;
	}
	return n;
}
