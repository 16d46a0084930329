/*
 * graph_formats: GML, GraphML and Pajek files, read by igraph, into a name
 * table and id pairs for graph_assemble(). These formats are for small and
 * middle-sized graphs: igraph's own copy of the graph is alive beside ours
 * while converting.
 *
 * The bytes are first copied (through zlib, so .gz and stdin work) into
 * memory, checked for the few things that would hurt (a GraphML DTD, which
 * could make libxml2 read other files or expand entities without bound; a
 * Pajek vertex count beyond our 32-bit ids, or more than PAJEK_UNLISTED
 * beyond the file's size in bytes, which igraph would allocate), then
 * written to a tmpfile() for igraph. Node names come from the first vertex
 * attribute, in this order, whose values are all present, non-empty and
 * distinct:
 *   GML      "label", "name", "id"
 *   GraphML  "name", "label", "id"  (igraph keeps the node's XML id in "id")
 *   Pajek    "id", "name"           (igraph keeps Pajek labels in "id")
 * and failing all of them, the 1-based position of the vertex in igraph's
 * order (which is the vertex number of a Pajek file), in decimal; a notice
 * says so (except for Pajek, where numbers are the usual names). Numeric
 * attributes are printed as integers when they are whole.
 *
 * With graph_load_opts.weighted the weights come from an edge attribute
 * (weight_attr, else "weight"); an edge without one, or with a weight
 * that is not a finite number above zero, is refused, named by its place
 * among the edges and its ends (igraph keeps no line numbers).
 *
 * The thing a newcomer gets wrong: igraph aborts the process on an error
 * by default. Its error handler is swapped, for the time of one read, for
 * one that frees igraph's temporaries and keeps the message (per thread,
 * as igraph's handlers are), which we pass on through error(); every early
 * return must put the old handlers back.
 */
#include "graph-internal.h"

#include <errno.h>
#include <inttypes.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

#include <igraph.h>

#include "coterie/util.h"

#define PAJEK_UNLISTED 1000000u /* vertices a Pajek file may declare beyond its size */

/* The last igraph error message, per thread (igraph's handler is too). */
static _Thread_local char igraph_reason[512];
static _Thread_local const char *igraph_shown;

static void igraph_keep_error(const char *reason, const char *file, int line,
			      igraph_error_t code)
{
	(void)file;
	(void)line;
	const char *what = igraph_strerror(code);
	if (reason && *reason)
		snprintf(igraph_reason, sizeof igraph_reason, "%s (%s)", reason, what);
	else
		snprintf(igraph_reason, sizeof igraph_reason, "%s", what);
	IGRAPH_FINALLY_FREE();
}

static void igraph_pass_warning(const char *reason, const char *file, int line)
{
	(void)file;
	(void)line;
	char esc[512];
	warning("%s: %s", igraph_shown ? igraph_shown : "igraph",
		util_escape(reason ? reason : "?", esc, sizeof esc, 1));
}

/* Read size bytes at most; -1 with error() on failure. */
static int64_t read_some(gzFile gz, char *buf, size_t size, const char *shown)
{
	if (size > (1u << 30))
		size = 1u << 30;
	int got = gzread(gz, buf, (unsigned)size);
	if (got < 0) {
		graph_input_error(gz, shown);
		return -1;
	}
	if (got == 0 && graph_input_error(gz, shown) < 0)
		return -1;
	return got;
}


/* Read all of path into memory (through zlib). */
static char *slurp(const char *path, const char *shown, size_t *out_len)
{
	gzFile gz = graph_open_input(path, shown, NULL);
	if (!gz)
		return NULL;
	size_t cap = 64 << 10, len = 0;
	char *buf = util_malloc(cap + 1, 1);
	if (!buf) {
		gzclose(gz);
		return NULL;
	}
	for (;;) {
		if (len == cap) {
			char *nb = cap > SIZE_MAX / 2 - 1 ? NULL : util_realloc(buf, cap * 2 + 1, 1);
			if (!nb) {
				free(buf);
				gzclose(gz);
				return NULL;
			}
			buf = nb;
			cap *= 2;
		}
		int64_t got = read_some(gz, buf + len, cap - len, shown);
		if (got < 0) {
			free(buf);
			gzclose(gz);
			return NULL;
		}
		if (got == 0)
			break;
		len += (size_t)got;
	}
	gzclose(gz);
	buf[len] = '\0';
	*out_len = len;
	return buf;
}

static const char *find_bytes(const char *hay, size_t len, const char *needle)
{
	size_t nl = strlen(needle);
	const char *p = hay, *end = hay + len;
	while ((size_t)(end - p) >= nl) {
		const char *q = memchr(p, needle[0], (size_t)(end - p) - nl + 1);
		if (!q)
			return NULL;
		if (memcmp(q, needle, nl) == 0)
			return q;
		p = q + 1;
	}
	return NULL;
}

/* Refuse what igraph's readers would handle badly. */
static int precheck(enum graph_format fmt, const char *data, size_t len, const char *shown)
{
	if (fmt == GRAPH_FORMAT_GRAPHML) {
		if (find_bytes(data, len, "<!DOCTYPE") || find_bytes(data, len, "<!ENTITY"))
			return error("%s: GraphML with a DTD is refused (its entities could read "
				     "other files)", shown);
	}
	if (fmt == GRAPH_FORMAT_PAJEK) {
		/* every "*vertices N" line, wherever it is. A file may declare
		 * vertices it never lists, but igraph allocates them all: more
		 * than PAJEK_UNLISTED beyond the file's own size is refused, so
		 * a few bytes cannot ask for gigabytes (found by fuzz_graph) */
		uint64_t line = 1;
		for (size_t i = 0; i < len; i++) {
			if (data[i] == '\n')
				line++;
			if (data[i] != '*' || (i > 0 && data[i - 1] != '\n' && data[i - 1] != '\r'))
				continue;
			if (len - i < 9 || strncasecmp(data + i + 1, "vertices", 8) != 0)
				continue;
			size_t j = i + 9;
			while (j < len && (data[j] == ' ' || data[j] == '\t'))
				j++;
			uint64_t v = 0;
			while (j < len && data[j] >= '0' && data[j] <= '9') {
				v = v * 10 + (uint64_t)(data[j] - '0');
				if (v > GRAPH_MAX_NODES)
					return error("%s: " GRAPH_TOO_MANY, shown,
						     GRAPH_MAX_NODES);
				j++;
			}
			if (v > (uint64_t)len + PAJEK_UNLISTED)
				return error("%s:%" PRIu64 ": expected a vertex count near the vertices "
					     "the file lists, found %" PRIu64 " in a file of %zu bytes",
					     shown, line, v, len);
		}
	}
	return 0;
}

static const char *const *name_attrs(enum graph_format fmt)
{
	static const char *const gml[] = { "label", "name", "id", NULL };
	static const char *const graphml[] = { "name", "label", "id", NULL };
	static const char *const pajek[] = { "id", "name", NULL };
	switch (fmt) {
	case GRAPH_FORMAT_GML: return gml;
	case GRAPH_FORMAT_GRAPHML: return graphml;
	default: return pajek;
	}
}

/*
 * A name table holding vertex attribute attr for every vertex, or NULL
 * (quietly) when the attribute is missing, has a gap, or repeats a value.
 */
static struct names *names_from_attr(const igraph_t *ig, const char *attr)
{
	igraph_attribute_type_t type;
	if (!igraph_cattribute_has_attr(ig, IGRAPH_ATTRIBUTE_VERTEX, attr))
		return NULL;
	if (igraph_cattribute_table.gettype(ig, &type, IGRAPH_ATTRIBUTE_VERTEX, attr) !=
	    IGRAPH_SUCCESS)
		return NULL;
	if (type != IGRAPH_ATTRIBUTE_STRING && type != IGRAPH_ATTRIBUTE_NUMERIC)
		return NULL;
	igraph_integer_t n = igraph_vcount(ig);
	struct names *t = names_new((uint64_t)n);
	if (!t)
		return NULL;
	for (igraph_integer_t v = 0; v < n; v++) {
		char num[64];
		const char *s = num;
		if (type == IGRAPH_ATTRIBUTE_STRING) {
			s = igraph_cattribute_VAS(ig, attr, v);
		} else {
			double x = igraph_cattribute_VAN(ig, attr, v);
			if (!isfinite(x))
				s = NULL;
			else if (x == floor(x) && fabs(x) < 9007199254740992.0)
				snprintf(num, sizeof num, "%.0f", x);
			else
				snprintf(num, sizeof num, "%.17g", x);
		}
		int added = 0;
		if (!s || !*s || graph_intern(t, s, strlen(s), &added) < 0 || !added) {
			names_free(t);
			return NULL;
		}
	}
	return t;
}

/* The bytes of path, checked by precheck(), in a temporary file rewound
 * for igraph. NULL with error(); the caller closes it with fclose(). */
static FILE *spool(const char *path, const char *shown, enum graph_format fmt)
{
	size_t len = 0;
	char *data = slurp(path, shown, &len);
	if (!data)
		return NULL;
	if (precheck(fmt, data, len, shown) < 0) {
		free(data);
		return NULL;
	}
	FILE *tf = tmpfile();
	if (!tf) {
		error("cannot make a temporary file for '%s': %s", shown, strerror(errno));
		free(data);
		return NULL;
	}
	if ((len && fwrite(data, 1, len, tf) != len) || fflush(tf) != 0) {
		error("cannot write a temporary file for '%s': %s", shown, strerror(errno));
		free(data);
		fclose(tf);
		return NULL;
	}
	free(data);
	rewind(tf);
	return tf;
}

/* The names of ig's n vertices by the rules of the header, with the notice
 * that says which were used. NULL with error(); caller frees with
 * names_free(). */
static struct names *igraph_names(const igraph_t *ig, enum graph_format fmt,
				  const char *shown)
{
	igraph_integer_t n = igraph_vcount(ig);
	const char *const *attrs = name_attrs(fmt);
	for (int i = 0; attrs[i]; i++) {
		struct names *t = names_from_attr(ig, attrs[i]);
		if (!t)
			continue;
		if (i > 0)
			notice("%s: nodes are named by their '%s'", shown, attrs[i]);
		return t;
	}
	struct names *t = names_new((uint64_t)n);
	if (!t)
		return NULL;
	for (igraph_integer_t v = 0; v < n; v++) {
		char num[32];
		int added;
		snprintf(num, sizeof num, "%" PRId64, (int64_t)v + 1);
		if (graph_intern(t, num, strlen(num), &added) < 0) {
			names_free(t);
			return NULL;
		}
	}
	if (n > 0 && fmt != GRAPH_FORMAT_PAJEK)
		notice("%s: no vertex attribute gives distinct names; nodes are named "
		       "1 to %" PRId64 " in file order", shown, (int64_t)n);
	return t;
}

/* The weights of ig's ne edges from the numeric edge attribute attr, into
 * w (ne values). There is no line to name: an edge is named by its place
 * among the file's edges (1-based) and its ends. 0 or -1 with error(). */
static int igraph_weights(const igraph_t *ig, const struct names *t, const char *attr,
			  const char *shown, double *w)
{
	igraph_attribute_type_t type;
	char esc[300];
	util_escape(attr, esc, sizeof esc, 0);
	if (!igraph_cattribute_has_attr(ig, IGRAPH_ATTRIBUTE_EDGE, attr))
		return error("%s: expected the edge attribute '%s' for the weights, found none",
			     shown, esc);
	if (igraph_cattribute_table.gettype(ig, &type, IGRAPH_ATTRIBUTE_EDGE, attr) !=
		    IGRAPH_SUCCESS ||
	    type != IGRAPH_ATTRIBUTE_NUMERIC)
		return error("%s: expected numbers in the edge attribute '%s', found another kind",
			     shown, esc);
	igraph_integer_t ne = igraph_ecount(ig);
	for (igraph_integer_t e = 0; e < ne; e++) {
		double x = igraph_cattribute_EAN(ig, attr, e);
		if (isfinite(x) && x > 0.0) {
			w[e] = x;
			continue;
		}
		char a[300], b[300];
		util_escape(names_name(t, (uint32_t)IGRAPH_FROM(ig, e)), a, sizeof a, 0);
		util_escape(names_name(t, (uint32_t)IGRAPH_TO(ig, e)), b, sizeof b, 0);
		return error("%s: edge %" PRId64 " ('%s' - '%s'): expected a weight above zero in "
			     "'%s', found %s", shown, (int64_t)e + 1, a, b, esc,
			     isnan(x) ? "none" : isinf(x) ? "an infinite one" : x == 0.0 ? "zero"
										   : "a negative one");
	}
	return 0;
}

/* Our graph from igraph's ig (borrowed). NULL with error(). */
static struct graph *from_igraph(const igraph_t *ig, enum graph_format fmt, const char *path,
				 const char *shown, const struct graph_load_opts *o)
{
	igraph_integer_t n = igraph_vcount(ig), ne = igraph_ecount(ig);
	if ((uint64_t)n > GRAPH_MAX_NODES) {
		error("%s: " GRAPH_TOO_MANY, shown, GRAPH_MAX_NODES);
		return NULL;
	}
	struct names *t = igraph_names(ig, fmt, shown);
	if (!t)
		return NULL;
	struct graph *g = NULL;
	uint32_t *pairs = NULL;
	double *w = NULL;
	igraph_vector_int_t el;
	if (igraph_vector_int_init(&el, 0) != IGRAPH_SUCCESS) {
		error("%s: out of memory", shown);
		names_free(t);
		return NULL;
	}
	if (igraph_get_edgelist(ig, &el, 0) != IGRAPH_SUCCESS) {
		error("%s: out of memory", shown);
		goto out;
	}
	pairs = util_malloc((size_t)ne * 2 + 1, sizeof *pairs);
	if (!pairs)
		goto out;
	for (igraph_integer_t i = 0; i < 2 * ne; i++)
		pairs[i] = (uint32_t)VECTOR(el)[i];
	if (o->weighted &&
	    (!(w = util_malloc((size_t)ne + 1, sizeof *w)) ||
	     igraph_weights(ig, t, o->weight_attr ? o->weight_attr : "weight", shown, w)))
		goto out;
	struct graph_report rep = { .format = fmt };
	if (igraph_is_directed(ig)) {
		rep.directed_input = 1;
		if (!o->directed)
			notice("%s: the graph is directed; it is read as undirected", shown);
	}
	g = graph_assemble_as(t, pairs, (uint64_t)ne, w, &rep, path, shown, o);
	t = NULL;
out:
	igraph_vector_int_destroy(&el);
	free(pairs);
	free(w);
	names_free(t);
	return g;
}

struct graph *graph_load_igraph(const char *path, const char *shown, enum graph_format fmt,
				 const struct graph_load_opts *o)
{
	FILE *tf = spool(path, shown, fmt);
	if (!tf)
		return NULL;
	igraph_t ig;
	igraph_error_handler_t *old_err = igraph_set_error_handler(igraph_keep_error);
	igraph_warning_handler_t *old_warn = igraph_set_warning_handler(igraph_pass_warning);
	igraph_attribute_table_t *old_attr = igraph_set_attribute_table(&igraph_cattribute_table);
	igraph_shown = shown;
	igraph_reason[0] = '\0';
	igraph_error_t rc;
	switch (fmt) {
	case GRAPH_FORMAT_GML: rc = igraph_read_graph_gml(&ig, tf); break;
	case GRAPH_FORMAT_GRAPHML: rc = igraph_read_graph_graphml(&ig, tf, 0); break;
	default: rc = igraph_read_graph_pajek(&ig, tf); break;
	}
	fclose(tf);
	struct graph *g = NULL;
	if (rc != IGRAPH_SUCCESS) {
		char esc[600];
		error("%s: cannot read %s: %s", shown, graph_format_name(fmt),
		      util_escape(igraph_reason[0] ? igraph_reason : igraph_strerror(rc), esc,
				  sizeof esc, 1));
	} else {
		g = from_igraph(&ig, fmt, path, shown, o);
		igraph_destroy(&ig);
	}
	igraph_set_attribute_table(old_attr);
	igraph_set_warning_handler(old_warn);
	igraph_set_error_handler(old_err);
	igraph_shown = NULL;
	return g;
}
