/*
 * cover: a set of possibly overlapping communities over nodes 0..n-1.
 *
 * Rules (tests: assert_cover_sane()):
 *   - off[0] == 0, off[k] == total memberships, non-decreasing;
 *   - mem[off[c] .. off[c+1]) is strictly increasing, every id < n;
 *   - label[c] is a NUL-terminated name of community c (may be "").
 * Empty communities are allowed in a cover but dropped by the scores.
 */
#ifndef COTERIE_COVER_H
#define COTERIE_COVER_H

#include <stdint.h>

#include "coterie/names.h"

struct graph;

struct cover {
	uint32_t n;     /* nodes in the universe */
	uint32_t k;     /* communities */
	uint64_t *off;  /* k + 1 */
	uint32_t *mem;  /* off[k] node ids */
	char **label;   /* k labels, owned */
	int result_file; /* read from a file with a result's header (node,
			    community, strength): a cover by construction */
};

/* Build from a partition: membership[u] is u's community (>= 0), or < 0
 * for "in none". Communities are numbered in order of first appearance.
 * Returns 0 or -1. Release with cover_release(). */
int cover_from_membership(struct cover *out, uint32_t n, const int64_t *membership);

/* Build from (node, community) pairs; communities are numbered by their
 * first appearance; duplicate pairs are merged. Returns 0 or -1. */
int cover_from_pairs(struct cover *out, uint32_t n, const uint32_t *node,
		     const uint32_t *comm, uint64_t npairs);

/*
 * Read a cover file: "node<TAB>community" per line, a node on as many
 * lines as it has communities. Lines starting with '#' and blank lines are
 * skipped; columns after the community (a further TAB) are ignored; a
 * first line "node<TAB>community" naming no node is a header. Node
 * names are looked up in g (borrowed); unknown names are an error naming
 * file and line. Community labels are arbitrary strings, numbered by
 * first appearance. Returns 0 or -1.
 */
int cover_load(struct cover *out, const char *path, const struct graph *g);

/*
 * Read a cover file as cover_load() does, but with node names interned in
 * nodes (borrowed, grown: a table from names_new()) instead of looked up
 * in a graph; new names get the next id, 0, 1, 2, ... Two covers read into
 * the same table share ids; raise each one's n to names_count(nodes) after
 * the last read so both cover the union of their nodes (coterie compare).
 * out->n is the table's count after the read. The first data line
 * "node<TAB>community" is always a header. After the header
 * "node<TAB>community<TAB>strength" of a result's memberships.tsv
 * (cover_load() too), node names are unescaped as result.c writes them
 * (\t \n \r \\). A file with no membership is an error naming the file.
 * Returns 0 or -1.
 */
int cover_read(struct cover *out, const char *path, struct names *nodes);

/*
 * Signs that a file read as a cover is an edge list given by mistake: read
 * "u<TAB>v" as node and community, an edge list's communities are named
 * after its nodes, there are about as many of them as nodes, a node is
 * never in the community of its own name (that would be a self-loop), and
 * most nodes have two or more neighbours, so are in two or more
 * communities. Covers name communities otherwise (a real cover, or a
 * partition numbered 0, 1, ... whose nodes are numbers too, has far fewer
 * communities than nodes, or no overlaps).
 */
struct cover_edge_signs {
	uint32_t nodes;       /* nodes in at least one community of the file */
	uint32_t labels;      /* communities with a member */
	uint32_t named;       /* labels that are also names of those nodes */
	uint32_t self;        /* named communities holding the node of their name */
	uint32_t overlapping; /* nodes in two or more communities */
};

/*
 * Whether c, read by cover_read() with its node names in nodes (both
 * borrowed), looks like an edge list: no result header, at least 3 named
 * labels, named >= labels / 2, labels >= nodes / 2, self <= named / 10
 * and overlapping >= nodes / 5. Measured on tests/data: every edges.tsv
 * trips it; no truth.tsv, no nmi fixture and no memberships.tsv does
 * (those have the result header; a copy without it trips the rule only
 * when k is about n / 2 or more). why (may be NULL) gets the counts.
 * Returns 1 or 0; -1 with error() when out of memory.
 */
int cover_looks_like_edges(const struct cover *c, const struct names *nodes,
			   struct cover_edge_signs *why);

/* Check the rules above (offsets, ids in range, rows strictly
 * increasing). Returns 0, or -1 with a message. */
int cover_check(const struct cover *c);

/* 0 when a and b are covers of the same number of nodes, else -1 with a
 * message (both borrowed). */
int cover_same_n(const struct cover *a, const struct cover *b);

/* Free the contents of c and zero it; c itself is the caller's. NULL is a
 * no-op. */
void cover_release(struct cover *c);

static inline uint32_t cover_size(const struct cover *c, uint32_t i)
{
	return (uint32_t)(c->off[i + 1] - c->off[i]);
}

#endif
