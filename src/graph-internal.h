/*
 * graph-internal.h: what the pieces of the graph module share, and nothing
 * else includes (as git's refs-internal.h). The pieces:
 *   graph.c           graph_load()'s dispatch, opening an input, the small
 *                     public functions;
 *   graph_csr.c       id pairs into the CSR rows, on two threads;
 *   graph_edgelist.c  the edge-list reader;
 *   graph_formats.c   GML, GraphML and Pajek through igraph.
 * A reader turns a file into a name table (names.h) and id pairs, and
 * hands both to graph_assemble(), the one way a struct graph is made.
 */
#ifndef COTERIE_GRAPH_INTERNAL_H
#define COTERIE_GRAPH_INTERNAL_H

#include <inttypes.h>
#include <stdint.h>

#include <zlib.h>

#include "coterie/graph.h"
#include "coterie/names.h"

#define GRAPH_MAX_NODES NAMES_MAX /* most nodes: n < 2^32 - 1 */
/* The message of a graph with too many nodes, for error(..., GRAPH_MAX_NODES). */
#define GRAPH_TOO_MANY "too many nodes: ids are 32-bit, at most %" PRIu64 " nodes"

/*
 * Wrap a name table (taken, freed on failure) and npairs id pairs
 * (borrowed; ids < the table's count) into a graph: self-loops dropped,
 * duplicates merged, both counted in the report (rep borrowed, may be
 * NULL), source copied. NULL with error() on failure; caller frees with
 * graph_free(). (graph_csr.c)
 */
struct graph *graph_assemble(struct names *t, const uint32_t *pairs, uint64_t npairs,
			     const struct graph_report *rep, const char *source);

/* graph_assemble() for a two-sided graph (graph_directed.c): the pairs
 * are arcs (first id sends), or with two_mode links from a first-column
 * node to a second-column node, two kinds whose names may repeat. w (NULL:
 * unweighted) holds one weight a pair, laid on the two-sided graph's
 * edges by graph_set_weights() (a dropped self-arc's weight with it);
 * shown names the input in messages. t taken. NULL with error(); caller
 * frees with graph_free(). */
struct graph *graph_assemble_sided(struct names *t, const uint32_t *pairs, uint64_t npairs,
				   const double *w, const struct graph_report *rep,
				   const char *source, const char *shown, int two_mode);

/* graph_assemble() or graph_assemble_sided() as o asks (o borrowed), then
 * the weights w (NULL: none; one a pair, borrowed). NULL with error(). */
static inline struct graph *graph_assemble_as(struct names *t, const uint32_t *pairs,
					      uint64_t npairs, const double *w,
					      const struct graph_report *rep, const char *source,
					      const char *shown, const struct graph_load_opts *o)
{
	if (o && (o->directed || o->two_mode))
		return graph_assemble_sided(t, pairs, npairs, w, rep, source, shown, !o->directed);
	struct graph *g = graph_assemble(t, pairs, npairs, rep, source);
	if (g && w && graph_set_weights(g, pairs, w, npairs, shown)) {
		graph_free(g);
		return NULL;
	}
	return g;
}

/* names_intern() for node names: the table full is the error "too many
 * nodes". Returns the id, or -1 with error(). (graph.c) */
int64_t graph_intern(struct names *t, const char *s, size_t len, int *added);

/* Open path ("-" = stdin) for reading through zlib, plain or gzip alike;
 * shown is the path made safe for messages (borrowed). *regular (may be
 * NULL) says whether it is a regular file. NULL with error(); the caller
 * closes with gzclose(). (graph.c) */
gzFile graph_open_input(const char *path, const char *shown, int *regular);

/* After gzread() returned < 0, or 0 at the end: report a zlib or read
 * problem with error() and return -1, or return 0 when there was none.
 * (graph.c) */
int graph_input_error(gzFile gz, const char *shown);

/* The readers behind graph_load(): NULL with error() on failure, caller
 * frees with graph_free(). path and shown are borrowed. */
struct graph *graph_load_edges(const char *path, const char *shown,
				const struct graph_load_opts *o);
struct graph *graph_load_igraph(const char *path, const char *shown, enum graph_format fmt,
				 const struct graph_load_opts *o);

/* Parse the weight field s (len bytes, not NUL-terminated) of a weighted
 * record: a finite number > 0. Returns NULL and *out, or what is wrong
 * with it ("not a number", "zero", ...), static. (graph_weights.c) */
const char *graph_weight_parse(const char *s, size_t len, double *out);

#endif
