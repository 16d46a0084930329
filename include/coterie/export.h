/*
 * export: a fit written for other tools. The graph with the fit as node
 * and edge attributes (GraphML and GML, through igraph's writers and its
 * C attribute handler), and the strength matrix in Matrix Market
 * coordinate format with a file of row names and one of column names
 * beside it. The attributes and files are described in coterie(1),
 * "coterie export".
 */
#ifndef COTERIE_EXPORT_H
#define COTERIE_EXPORT_H

#include <stdint.h>
#include <stdio.h>

struct agm;
struct fcsr;
struct graph;

/* What is exported, all borrowed: the graph the fit was made on, its
 * strengths (F->n == g->n; rows sorted by community, as fcsr.h rules),
 * the cover memberships.tsv holds (result_cover_read(): community ids are
 * model columns, strength parallel to cover.mem), and the background
 * epsilon of the fit. */
struct export_fit {
	const struct graph *g;
	const struct fcsr *F;
	const struct agm *cover;
	double epsilon;
};

enum export_format {
	EXPORT_GRAPHML = 0,
	EXPORT_GML,
};

/* All of the cover's communities get a strength column. */
#define EXPORT_ALL_COLUMNS UINT32_MAX

/*
 * A node name as the exported graphs of format fmt carry it: the name as
 * util_escape() shows it on a terminal (printable UTF-8 kept; backslash,
 * control bytes, invalid UTF-8 and the other bytes util.h lists as C
 * escapes: \\, \t, \n, \r, \e, \xHH), so no reader changes it and
 * distinct names stay distinct. GML is ASCII (its specification asks for
 * it and networkx refuses anything else, while igraph's reader decodes no
 * numeric entity), so there every non-ASCII byte is \xHH too. Returns a
 * new string (caller frees with free()), or NULL when out of memory
 * (reported).
 */
char *export_name(const char *name, enum export_format fmt);

/*
 * Write the graph of x with the fit as attributes in format fmt to out
 * (borrowed, left open): per node name and label (export_name()),
 * communities ("3;17", strongest first), strongest (-1 for none),
 * ncommunities, and strengthC for the first `columns` communities of the
 * cover (largest first; EXPORT_ALL_COLUMNS for all); per edge its
 * probability under the model, explained (1 or 0) and community (the
 * community that explains it, -1 for none), by inspect.h's rule. Edges
 * in the graph's order (u < v, by u then v). Returns 0, or -1 with a
 * message (igraph's, or the write error).
 */
int export_graph_stream(FILE *out, enum export_format fmt, const struct export_fit *x,
			uint32_t columns);

/* The same to path, atomically (atomicfile.h), or to standard output
 * for "-". Returns 0 or -1 with a message naming path. */
int export_graph(const char *path, enum export_format fmt, const struct export_fit *x,
		 uint32_t columns);

/* The files written beside the matrix path: path without a final
 * ".mtx", then ".rows.txt" and ".cols.txt". Both newly allocated (caller
 * frees with free()); returns 0 or -1 (out of memory, reported). */
int export_matrix_names(const char *path, char **rows, char **cols);

/*
 * Write the strengths x->F, n x k, every positive entry, to path in
 * Matrix Market coordinate real general format (1-based indices, %.17g),
 * with the node names one per line in the rows file (escaped as
 * memberships.tsv writes them) and the community ids 0 .. k-1 in the
 * cols file (export_matrix_names()). The three files are staged, then
 * renamed together (atomicfile.h). Returns 0 or -1 with a message.
 */
int export_matrix(const char *path, const struct export_fit *x);

#endif
