/*
 * graph: graph_load() and the small public functions of graph.h (the rules
 * of struct graph are there).
 *
 * graph_load() (graph_load_with() with options: the format, lines to skip,
 * no header guessing) picks a reader by --format, or by the file's extension
 * (".gz" stripped first), edge lists otherwise and always for stdin; the
 * reader (graph_edgelist.c, graph_formats.c) turns the file into a name
 * table and id pairs, and graph_assemble() (graph_csr.c) into the rows;
 * what loading found is said here, once, in notices. Opening an input is
 * here too, as both readers use it: everything is read through zlib, which
 * reads plain files transparently, so plain, .gz and stdin are one path.
 *
 * The node names live in the graph's name table (names.h), reached only
 * through graph_name() and graph_find(). The thing a newcomer gets wrong:
 * the fingerprint hashes numbers as little-endian bytes, so it must never
 * hash a raw array in memory order, or checkpoints would not move between
 * machines.
 */
#include "graph-internal.h"

#include <errno.h>
#include <fcntl.h>
#include <inttypes.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>
#include <sys/stat.h>
#include <unistd.h>

#include "coterie/util.h"

static const char *const format_names[] = {
	[GRAPH_FORMAT_AUTO] = "auto",
	[GRAPH_FORMAT_EDGES] = "edges",
	[GRAPH_FORMAT_GML] = "gml",
	[GRAPH_FORMAT_GRAPHML] = "graphml",
	[GRAPH_FORMAT_PAJEK] = "pajek",
};

int graph_format_parse(const char *s, enum graph_format *out)
{
	for (size_t i = 0; i < sizeof format_names / sizeof format_names[0]; i++) {
		if (strcasecmp(s, format_names[i]) == 0) {
			*out = (enum graph_format)i;
			return 0;
		}
	}
	char shown[128];
	return error("unknown graph format '%s' (expected auto, edges, gml, graphml or pajek)",
		     util_escape(s, shown, sizeof shown, 0));
}

const char *graph_format_name(enum graph_format f)
{
	if ((unsigned)f < sizeof format_names / sizeof format_names[0])
		return format_names[f];
	return "unknown";
}

gzFile graph_open_input(const char *path, const char *shown, int *regular)
{
	int fd;
	if (strcmp(path, "-") == 0) {
		fd = dup(STDIN_FILENO);
		if (fd < 0) {
			error("cannot read standard input: %s", strerror(errno));
			return NULL;
		}
	} else {
		fd = open(path, O_RDONLY);
		if (fd < 0) {
			error("cannot open '%s': %s", shown, strerror(errno));
			return NULL;
		}
	}
	struct stat st;
	int isreg = fstat(fd, &st) == 0 && S_ISREG(st.st_mode);
	if (regular)
		*regular = isreg;
	if (!isreg && fstat(fd, &st) == 0 && S_ISDIR(st.st_mode)) {
		error("cannot read '%s': it is a folder", shown);
		close(fd);
		return NULL;
	}
	gzFile gz = gzdopen(fd, "rb");
	if (!gz) {
		error("cannot read '%s': out of memory", shown);
		close(fd);
		return NULL;
	}
	gzbuffer(gz, 1 << 17);
	return gz;
}

int graph_input_error(gzFile gz, const char *shown)
{
	int num = Z_OK;
	const char *msg = gzerror(gz, &num);
	if (num == Z_OK || num == Z_STREAM_END)
		return 0;
	if (num == Z_ERRNO)
		return error("cannot read '%s': %s", shown, strerror(errno));
	char esc[256];
	if (num == Z_BUF_ERROR)
		return error("cannot read '%s': compressed data ends too early", shown);
	return error("cannot read '%s': bad compressed data (%s)", shown,
		     util_escape(msg ? msg : "?", esc, sizeof esc, 1));
}


int64_t graph_intern(struct names *t, const char *s, size_t len, int *added)
{
	int64_t id = names_intern(t, s, len, added);
	if (id == NAMES_FULL)
		return error(GRAPH_TOO_MANY, GRAPH_MAX_NODES);
	return id;
}

void graph_free(struct graph *g)
{
	if (!g)
		return;
	names_free(g->names);
	UTIL_FREE_ALL(g->off, g->adj, g->wt, g->source, g);
}

const char *graph_name(const struct graph *g, uint32_t u)
{
	return names_name(g->names, u);
}

int64_t graph_find(const struct graph *g, const char *name)
{
	if (!g || !g->names || !name)
		return -1;
	return names_find(g->names, name);
}

int graph_has_edge(const struct graph *g, uint32_t u, uint32_t v)
{
	if (u >= g->n || v >= g->n)
		return 0;
	if (graph_degree(g, u) > graph_degree(g, v)) {
		uint32_t t = u;
		u = v;
		v = t;
	}
	const uint32_t *a = g->adj + g->off[u];
	uint32_t deg = graph_degree(g, u);
	size_t i = util_lower_bound_u32(a, deg, v);
	return i < deg && a[i] == v;
}

/* Hash len words of width bytes (8 or 4) at a as little-endian bytes, so
 * the fingerprint does not depend on the machine that wrote a checkpoint. */
static uint64_t fnv_words(uint64_t h, const void *a, uint64_t len, int width)
{
	const uint64_t *a64 = a;
	const uint32_t *a32 = a;
	unsigned char buf[4096];
	size_t o = 0;
	for (uint64_t i = 0; i < len; i++) {
		uint64_t x = width == 8 ? a64[i] : a32[i];
		for (int b = 0; b < width; b++)
			buf[o++] = (unsigned char)(x >> (8 * b));
		if (o == sizeof buf) {
			h = util_fnv1a(h, buf, o);
			o = 0;
		}
	}
	return util_fnv1a(h, buf, o);
}

uint64_t graph_fingerprint(const struct graph *g)
{
	uint64_t h = UTIL_FNV_INIT;
	uint64_t head[2] = { g->n, g->m };
	h = fnv_words(h, head, 2, 8);
	h = fnv_words(h, g->off, (uint64_t)g->n + 1, 8);
	h = fnv_words(h, g->adj, 2 * g->m, 4);
	for (uint32_t u = 0; u < g->n; u++) {
		const char *nm = graph_name(g, u);
		h = util_fnv1a(h, nm, strlen(nm) + 1);
	}
	return h;
}

/* A name table of n names: those of graph like (borrowed) when given, else
 * names[u] (borrowed) when given, else u in decimal. NULL with error() for
 * a missing or repeated name. */
static struct names *names_of_nodes(uint32_t n, const char *const *names,
				    const struct graph *like)
{
	struct names *t = names_new(n);
	if (!t)
		return NULL;
	for (uint32_t u = 0; u < n; u++) {
		char num[16];
		const char *nm = num;
		if (like) {
			nm = graph_name(like, u);
		} else if (names) {
			nm = names[u];
			if (!nm) {
				error("node %" PRIu32 " has no name", u);
				names_free(t);
				return NULL;
			}
		} else {
			snprintf(num, sizeof num, "%" PRIu32, u);
		}
		int added;
		if (graph_intern(t, nm, strlen(nm), &added) < 0) {
			names_free(t);
			return NULL;
		}
		if (!added) {
			char shown[256];
			error("duplicate node name '%s'", util_escape(nm, shown, sizeof shown, 0));
			names_free(t);
			return NULL;
		}
	}
	return t;
}

/* 0 when every id of the pairs is below n, else -1 with error(). */
static int check_pairs(uint32_t n, const uint32_t *pairs, uint64_t npairs)
{
	for (uint64_t i = 0; i < 2 * npairs; i++)
		if (pairs[i] >= n)
			return error("edge %" PRIu64 " names node %" PRIu32 " of a graph of %" PRIu32
				     " nodes", i / 2, pairs[i], n);
	return 0;
}

/* graph_from_pairs()'s graph on the names in t (taken). */
static struct graph *from_pairs(struct names *t, const uint32_t *pairs, uint64_t npairs)
{
	if (!t)
		return NULL;
	struct graph_report rep = { .format = GRAPH_FORMAT_EDGES };
	return graph_assemble(t, pairs, npairs, &rep, "(pairs)");
}

struct graph *graph_from_pairs(uint32_t n, const uint32_t *pairs, uint64_t npairs,
			       const char *const *names)
{
	if ((uint64_t)n > GRAPH_MAX_NODES) {
		error(GRAPH_TOO_MANY, GRAPH_MAX_NODES);
		return NULL;
	}
	if (check_pairs(n, pairs, npairs) < 0)
		return NULL;
	return from_pairs(names_of_nodes(n, names, NULL), pairs, npairs);
}

struct graph *graph_with_edges(const struct graph *g, const uint32_t *pairs, uint64_t npairs)
{
	if (check_pairs(g->n, pairs, npairs) < 0)
		return NULL;
	return from_pairs(names_of_nodes(g->n, NULL, g), pairs, npairs);
}

static enum graph_format format_by_name(const char *path)
{
	size_t len = strlen(path);
	if (len > 3 && strcasecmp(path + len - 3, ".gz") == 0)
		len -= 3;
	static const struct {
		const char *ext;
		enum graph_format fmt;
	} exts[] = {
		{ ".gml", GRAPH_FORMAT_GML },       { ".graphml", GRAPH_FORMAT_GRAPHML },
		{ ".xml", GRAPH_FORMAT_GRAPHML },   { ".net", GRAPH_FORMAT_PAJEK },
		{ ".paj", GRAPH_FORMAT_PAJEK },     { ".pajek", GRAPH_FORMAT_PAJEK },
	};
	for (size_t i = 0; i < sizeof exts / sizeof exts[0]; i++) {
		size_t el = strlen(exts[i].ext);
		if (len > el && strncasecmp(path + len - el, exts[i].ext, el) == 0)
			return exts[i].fmt;
	}
	return GRAPH_FORMAT_EDGES;
}

struct graph *graph_load(const char *path, enum graph_format fmt)
{
	struct graph_load_opts o = { .fmt = fmt };
	return graph_load_with(path, &o);
}

struct graph *graph_load_with(const char *path, const struct graph_load_opts *o)
{
	enum graph_format fmt = o->fmt;
	if (!path) {
		error("no graph file given");
		return NULL;
	}
	int is_stdin = strcmp(path, "-") == 0;
	char *shown = is_stdin ? util_strdup("stdin") : util_escape_dup(path, 0);
	if (!shown)
		return NULL;
	if (fmt == GRAPH_FORMAT_AUTO)
		fmt = is_stdin ? GRAPH_FORMAT_EDGES : format_by_name(path);
	struct graph *g;
	switch (fmt) {
	case GRAPH_FORMAT_EDGES: g = graph_load_edges(path, shown, o); break;
	case GRAPH_FORMAT_GML:
	case GRAPH_FORMAT_GRAPHML:
	case GRAPH_FORMAT_PAJEK:
		if (o->skip_lines || o->no_header)
			warning("%s: skipping lines and header lines is for edge lists; a %s file "
				"is read whole", shown, graph_format_name(fmt));
		g = graph_load_igraph(path, shown, fmt, o);
		break;
	default:
		error("unknown graph format %d", (int)fmt);
		g = NULL;
	}
	if (g) {
		char size[160];
		graph_describe(g, size, sizeof size);
		notice("%s: %s", shown, size);
		if (g->report.self_loops)
			notice("%s: dropped %" PRIu64 " self-loop%s", shown, g->report.self_loops,
			       g->report.self_loops == 1 ? "" : "s");
		if (g->report.duplicates)
			notice("%s: merged %" PRIu64 " duplicate edge%s", shown,
			       g->report.duplicates, g->report.duplicates == 1 ? "" : "s");
		if (g->report.isolated)
			notice("%s: %" PRIu64 " isolated node%s kept", shown, g->report.isolated,
			       g->report.isolated == 1 ? "" : "s");
	}
	free(shown);
	return g;
}

