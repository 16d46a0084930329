/*
 * graph: an undirected simple graph in compressed sparse rows, with the
 * node names of the file it came from.
 *
 * Rules (checked by the tests' assert_graph_sane()):
 *   - off[0] == 0, off[n] == 2 * m, off is non-decreasing;
 *   - adj[off[u] .. off[u+1]) holds u's neighbours, strictly increasing,
 *     never u itself; v is in u's row exactly when u is in v's row;
 *   - graph_name(g, u) is a NUL-terminated string, distinct for distinct
 *     u; graph_find(g, graph_name(g, u)) == u.
 * Node ids are 32-bit: a graph with 2^32 - 1 nodes or more is refused.
 * Ids are given in order of first appearance in the file.
 */
#ifndef COTERIE_GRAPH_H
#define COTERIE_GRAPH_H

#include <stddef.h>
#include <stdint.h>

enum graph_format {
	GRAPH_FORMAT_AUTO = 0, /* by extension, ".gz" stripped first; else edges */
	GRAPH_FORMAT_EDGES,    /* two names per line, tab/space/comma */
	GRAPH_FORMAT_GML,
	GRAPH_FORMAT_GRAPHML,
	GRAPH_FORMAT_PAJEK,
};

/* What loading found; also written to run.json. */
struct graph_report {
	enum graph_format format;  /* the format actually read */
	uint64_t lines;            /* lines read (edge lists) */
	uint64_t edges_read;       /* edge records before cleaning */
	uint64_t self_loops;       /* dropped */
	uint64_t duplicates;       /* merged (including u-v after v-u) */
	uint64_t extra_columns;    /* lines whose extra columns were ignored */
	uint64_t isolated;         /* nodes of degree 0 (kept) */
	int directed_input;        /* the file declared a directed graph */
	uint64_t skipped_lines;    /* edge lists: lines skipped as asked (skip_lines) */
	uint64_t header_line;      /* edge lists: the line taken for a header, or 0 */
};

/*
 * How graph_load_with() reads a file. Zero-initialised means graph_load():
 * the format by extension, no line skipped, a header line recognised.
 *
 * The header rule (edge lists only, on the first line that is not a
 * comment or blank, after any skipped lines): that line is a header when
 *   - it has two or more fields and every one is a usual column name
 *     (source, target, from, to, weight, u, v, src, dst, node1, node2, ...:
 *     graph_edgelist.c has the list; any case, double quotes around a
 *     field allowed), the first two different; or
 *   - its third field is not a number while the third field of the next
 *     such line is one ("alice,bob,strength" over "carol,dave,3").
 * A header is skipped with a notice naming the file and line. A graph
 * whose first edge really joins nodes named like columns is read whole
 * with no_header set.
 */
struct graph_load_opts {
	enum graph_format fmt;
	uint64_t skip_lines; /* edge lists: the first lines skipped, whatever they hold */
	int no_header;       /* edge lists: never take a line for a header; skip_lines > 0
				implies it (the user said where the edges start) */
	int weighted;        /* read edge weights: an edge list's third column, the
				edge attribute weight_attr of GML/GraphML (graph_weights.c) */
	const char *weight_attr; /* GML/GraphML: the attribute; NULL is "weight" */
	int directed;        /* read lines (GML/GraphML: edges of a directed graph) as
				arcs into a two-sided graph (graph_directed.c) */
	int two_mode;        /* the first column's names and the second's are two
				kinds of nodes: a two-sided graph (graph_directed.c) */
};

struct names; /* the node names, both ways: graph_name(), graph_find() */

struct graph {
	uint32_t n;        /* nodes */
	uint64_t m;        /* undirected edges, each counted once */
	uint64_t *off;     /* n + 1 row offsets */
	uint32_t *adj;     /* 2 * m neighbour ids */
	double *wt;        /* NULL (unweighted), or 2 * m weights parallel to adj:
			      the weight of edge u-v in both rows, finite and > 0,
			      the sum of the records of that pair (graph_weights.c) */
	/* 0: a one-mode graph. Else a two-sided graph (graph_directed.c):
	 * nodes [0, nsend) are senders, [nsend, n) receivers, every edge
	 * joins a sender to a receiver (an arc, or a two-mode link); with
	 * paired, n = 2 nsend and receiver nsend + i is sender i's own node
	 * (a directed graph; that pair is no term of the likelihood). */
	uint32_t nsend;
	int paired;
	struct names *names; /* private to graph*.c: use graph_name(), graph_find() */
	struct graph_report report;
	char *source;      /* the path it was loaded from ("-" for stdin) */
};

/* Parse a --format value ("edges", "gml", "graphml", "pajek", "auto").
 * Returns 0, or -1 (with error()) for an unknown name. */
int graph_format_parse(const char *s, enum graph_format *out);
/* The name of a format ("edges", ...; "unknown" out of range), static. */
const char *graph_format_name(enum graph_format f);

/*
 * Load a graph. path "-" reads standard input (edge-list format unless fmt
 * says otherwise). Edge lists ending in ".gz" (or starting with gzip's
 * magic bytes) are decompressed on the fly. Errors name the file and line
 * and return NULL. Notices (counts) go through notice().
 * Caller frees with graph_free().
 */
struct graph *graph_load(const char *path, enum graph_format fmt);

/* graph_load() with the options of o (borrowed; see struct graph_load_opts).
 * skip_lines and no_header are for edge lists: with another format they
 * are ignored with a warning. NULL with error(); caller frees with
 * graph_free(). */
struct graph *graph_load_with(const char *path, const struct graph_load_opts *o);

/*
 * Build a graph from id pairs (tests, simulation). names may be NULL, in
 * which case node u is named by its decimal id. Self-loops and duplicates
 * are cleaned as by graph_load(). pairs is borrowed (2 * npairs ids < n).
 * Caller frees with graph_free(); NULL on failure.
 */
struct graph *graph_from_pairs(uint32_t n, const uint32_t *pairs, uint64_t npairs,
			       const char *const *names);

/*
 * A graph on the nodes of g (borrowed: same n, ids and names) with other
 * edges: npairs id pairs (borrowed, ids < g->n), cleaned as by
 * graph_from_pairs(). Caller frees with graph_free(); NULL on failure.
 */
struct graph *graph_with_edges(const struct graph *g, const uint32_t *pairs, uint64_t npairs);

/* ---- two-sided graphs: directed and two-mode (graph_directed.c) ---- */

/* The tags that end every node name of a two-sided graph: a sending copy
 * is "NAME [out]", a receiving copy "NAME [in]" (both sides tagged, so
 * names never collide, whatever the input's names hold). */
#define GRAPH_SEND_TAG " [out]"
#define GRAPH_RECV_TAG " [in]"

/* 0 when u sends (or g is one-mode), 1 when u receives. */
int graph_side_of(const struct graph *g, uint32_t u);
/* u's name without its side's tag: the pointer (borrowed, as
 * graph_name()) and its length in *len (not NUL-terminated there). */
const char *graph_side_name(const struct graph *g, uint32_t u, size_t *len);
/* The size of g as the user gave it, into buf (len bytes, truncated):
 * "N nodes, M edges"; directed, "N nodes, M arcs" (not the 2N copies);
 * two-mode, "A + B nodes of two kinds, M links". */
void graph_describe(const struct graph *g, char *buf, size_t len);
/* 0 when g can be two-sided with nsend senders (paired: a directed graph,
 * n = 2 nsend), every edge joining a sender to a receiver; else -1 with
 * what is wrong in why (len bytes). For readers of saved graphs. */
int graph_check_sides(const struct graph *g, uint32_t nsend, int paired, char *why, size_t len);
/* A paired graph's own pairs (sender i, receiver nsend + i) as a graph on
 * g's nodes (as graph_with_edges()); NULL on failure; graph_free(). */
struct graph *graph_self_pairs(const struct graph *g);
/* A paired graph's undirected view: nsend nodes named by id, u -- v when
 * an arc joins them either way; NULL on failure; graph_free(). */
struct graph *graph_undirected_view(const struct graph *g);

/* Free g and everything it holds. graph_free(NULL) is a no-op. */
void graph_free(struct graph *g);

static inline uint32_t graph_degree(const struct graph *g, uint32_t u)
{
	return (uint32_t)(g->off[u + 1] - g->off[u]);
}

/* The weight of the edge at adj[i]: 1 in an unweighted graph. */
static inline double graph_weight(const struct graph *g, uint64_t i)
{
	return g->wt ? g->wt[i] : 1.0;
}

/*
 * Weights for g's edges (graph_weights.c): npairs records (2 * npairs ids
 * and npairs weights, borrowed, in file order), self-loops skipped, the
 * records of one pair added up in file order. Replaces g->wt. Returns 0,
 * or -1 with error() (a sum that overflows, naming shown; out of memory).
 */
int graph_set_weights(struct graph *g, const uint32_t *pairs, const double *w, uint64_t npairs,
		      const char *shown);

/* Weights for g's edges given in the order u < v, by u then by v (a
 * checkpoint's order): w borrowed, g->m values, finite and > 0. Replaces
 * g->wt. Returns 0 or -1 (out of memory). */
int graph_set_edge_weights(struct graph *g, const double *w);

/* The sum of the weights of all edges (m in an unweighted graph). */
double graph_total_weight(const struct graph *g);

/* The name of node u < g->n (borrowed, valid until graph_free()). */
const char *graph_name(const struct graph *g, uint32_t u);
/* Id of a node by exact name, or -1. */
int64_t graph_find(const struct graph *g, const char *name);
/* 1 when u and v are linked (binary search of the shorter row). */
int graph_has_edge(const struct graph *g, uint32_t u, uint32_t v);

/* A fingerprint of the structure and the names: equal graphs, equal
 * fingerprints. Used to refuse resuming a checkpoint on another graph. */
uint64_t graph_fingerprint(const struct graph *g);

#endif
