/*
 * export: the graph with the fit as attributes, written by igraph.
 *
 * The idea: build an igraph_t of the graph (edges in our order, u < v by
 * u then v), hang the fit on it through igraph's C attribute handler
 * (igraph_cattribute_table), and let igraph's GraphML and GML writers do
 * the formats, the XML escaping and the GML entities included. Nothing
 * of a format is written here. The per-node figures come from the cover
 * result_cover_read() gives (what memberships.tsv holds, refined or not),
 * the strength columns from the strengths themselves, the edge figures
 * from the strengths by the rules of model.h (the probability, background
 * included) and inspect.h (which community explains an edge).
 *
 * igraph writes to a FILE *. For a file it writes to a tmpfile() that is
 * then copied through atomicfile.h, so the output appears whole or not at
 * all; "-" is standard output, written directly.
 *
 * The thing a newcomer gets wrong: igraph's attribute table and error
 * handlers are process (or thread) state. Both are swapped for the time
 * of one export and put back on every path out; the handler frees
 * igraph's temporaries and keeps the message, which goes on through
 * error(). Our own igraph objects are destroyed here, not by igraph.
 */
#include "coterie/export.h"

#include <errno.h>
#include <inttypes.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <igraph.h>

#include "coterie/agm.h"
#include "coterie/atomicfile.h"
#include "coterie/fcsr.h"
#include "coterie/graph.h"
#include "coterie/inspect.h"
#include "coterie/model.h"
#include "coterie/util.h"

/* igraph's last error, per thread as igraph's handler is. */
static _Thread_local char export_igraph_reason[512];

static void export_igraph_error(const char *reason, const char *file, int line,
				igraph_error_t code)
{
	(void)file;
	(void)line;
	snprintf(export_igraph_reason, sizeof export_igraph_reason, "%s: %s",
		 igraph_strerror(code), reason ? reason : "");
	IGRAPH_FINALLY_FREE();
}

char *export_name(const char *name, enum export_format fmt)
{
	return util_escape_dup(name, fmt == EXPORT_GML);
}

/* ---- a node's memberships, strongest first ---------------------------- */

struct membership {
	uint32_t comm;
	double strength;
};

static int stronger_first(const void *pa, const void *pb)
{
	const struct membership *a = pa, *b = pb;
	if (a->strength != b->strength)
		return a->strength > b->strength ? -1 : 1;
	return util_cmp_uint(a->comm, b->comm);
}

/* The cover's memberships by node: node u's are mem[off[u] .. off[u+1]),
 * strongest first, ties by community id. */
struct by_node {
	uint64_t *off;
	struct membership *mem;
};

static void by_node_release(struct by_node *b)
{
	free(b->off);
	free(b->mem);
}

static int by_node_build(struct by_node *b, const struct agm *a, uint32_t n)
{
	const struct cover *c = &a->cover;
	uint64_t total = c->off[c->k];
	uint64_t *off = util_calloc((size_t)n + 1, sizeof *off);
	struct membership *mem = util_malloc(total + 1, sizeof *mem);
	uint64_t *next = util_malloc((size_t)n + 1, sizeof *next);
	if (!off || !mem || !next) {
		UTIL_FREE_ALL(off, mem, next);
		return -1;
	}
	b->off = off;
	b->mem = mem;
	for (uint64_t j = 0; j < total; j++)
		b->off[c->mem[j] + 1]++;
	for (uint32_t u = 0; u < n; u++)
		b->off[u + 1] += b->off[u];
	memcpy(next, b->off, (size_t)n * sizeof *next);
	for (uint32_t i = 0; i < c->k; i++)
		for (uint64_t j = c->off[i]; j < c->off[i + 1]; j++)
			b->mem[next[c->mem[j]]++] = (struct membership){ a->comms[i].id,
									 a->strength[j] };
	free(next);
	for (uint32_t u = 0; u < n; u++)
		qsort(b->mem + b->off[u], (size_t)(b->off[u + 1] - b->off[u]), sizeof *b->mem,
		      stronger_first);
	return 0;
}

/* The strengths by column (F transposed): column c's entries are
 * node[start[c] .. start[c+1]) with their strengths in value, so a
 * strength attribute costs its own entries plus n, not n searches. */
struct by_column {
	uint64_t *start;
	uint32_t *node;
	double *value;
};

static int by_column_build(struct by_column *t, const struct fcsr *F)
{
	uint64_t nnz = F->off[F->n];
	t->start = util_calloc((size_t)F->k + 2, sizeof *t->start);
	t->node = util_malloc(nnz + 1, sizeof *t->node);
	t->value = util_malloc(nnz + 1, sizeof *t->value);
	if (!t->start || !t->node || !t->value) {
		UTIL_FREE_ALL(t->start, t->node, t->value);
		return -1;
	}
	for (uint64_t j = 0; j < nnz; j++)
		t->start[F->e[j].c + 2]++;
	for (uint32_t c = 0; c < F->k; c++)
		t->start[c + 2] += t->start[c + 1];
	/* start[c + 1] is the next free place of column c while filling */
	for (uint32_t u = 0; u < F->n; u++)
		for (uint64_t j = F->off[u]; j < F->off[u + 1]; j++) {
			uint64_t at = t->start[F->e[j].c + 1]++;
			t->node[at] = u;
			t->value[at] = F->e[j].v;
		}
	return 0;
}

/* ---- attributes ------------------------------------------------------- */

/* "3;17": the communities of one node into *buf (grown; *cap its size). */
static const char *comm_list(const struct by_node *b, uint32_t u, char **buf, size_t *cap)
{
	uint64_t k = b->off[u + 1] - b->off[u];
	size_t need = (size_t)k * 11 + 1;
	if (need > *cap) {
		char *nb = util_realloc(*buf, need, 1);
		if (!nb)
			return NULL;
		*buf = nb;
		*cap = need;
	}
	size_t o = 0;
	(*buf)[0] = '\0';
	for (uint64_t j = b->off[u]; j < b->off[u + 1]; j++)
		o += (size_t)snprintf(*buf + o, *cap - o, "%s%" PRIu32, o ? ";" : "",
				      b->mem[j].comm);
	return *buf;
}

/* name, label and communities: the string attributes of the nodes. */
static int node_strings(igraph_t *ig, const struct export_fit *x, const struct by_node *b,
			enum export_format fmt)
{
	uint32_t n = x->g->n;
	igraph_strvector_t names, comms;
	char *buf = NULL;
	size_t cap = 0;
	int rc = -1;
	if (igraph_strvector_init(&names, n) != IGRAPH_SUCCESS)
		return -1;
	if (igraph_strvector_init(&comms, n) != IGRAPH_SUCCESS) {
		igraph_strvector_destroy(&names);
		return -1;
	}
	for (uint32_t u = 0; u < n; u++) {
		char *e = export_name(graph_name(x->g, u), fmt);
		const char *list = comm_list(b, u, &buf, &cap);
		int bad = !e || !list || igraph_strvector_set(&names, u, e) != IGRAPH_SUCCESS ||
			  igraph_strvector_set(&comms, u, list) != IGRAPH_SUCCESS;
		free(e);
		if (bad)
			goto out;
	}
	if (SETVASV(ig, "name", &names) == IGRAPH_SUCCESS &&
	    SETVASV(ig, "label", &names) == IGRAPH_SUCCESS &&
	    SETVASV(ig, "communities", &comms) == IGRAPH_SUCCESS)
		rc = 0;
out:
	free(buf);
	igraph_strvector_destroy(&names);
	igraph_strvector_destroy(&comms);
	return rc;
}

/* strengthC for the first `columns` communities of the cover, through v
 * (borrowed scratch of n values). 0 or -1. */
static int strength_columns(igraph_t *ig, const struct export_fit *x, uint32_t columns,
			    igraph_vector_t *v)
{
	const struct agm *a = x->cover;
	uint32_t want = a->cover.k < columns ? a->cover.k : columns, i = 0;
	struct by_column t;
	if (want == 0)
		return 0;
	if (by_column_build(&t, x->F))
		return -1;
	for (; i < want; i++) {
		uint32_t c = a->comms[i].id;
		char key[32];
		snprintf(key, sizeof key, "strength%" PRIu32, c);
		igraph_vector_null(v);
		for (uint64_t j = t.start[c]; j < t.start[c + 1]; j++)
			VECTOR(*v)[t.node[j]] = t.value[j];
		if (SETVANV(ig, key, v) != IGRAPH_SUCCESS)
			break;
	}
	UTIL_FREE_ALL(t.start, t.node, t.value);
	return i == want ? 0 : -1;
}

/* strongest, ncommunities and one strengthC per column asked for. */
static int node_numbers(igraph_t *ig, const struct export_fit *x, const struct by_node *b,
			uint32_t columns)
{
	uint32_t n = x->g->n;
	igraph_vector_t v;
	if (igraph_vector_init(&v, n) != IGRAPH_SUCCESS)
		return -1;
	int rc = -1;
	for (uint32_t u = 0; u < n; u++)
		VECTOR(v)[u] = b->off[u + 1] > b->off[u] ? (double)b->mem[b->off[u]].comm : -1.0;
	if (SETVANV(ig, "strongest", &v) != IGRAPH_SUCCESS)
		goto out;
	for (uint32_t u = 0; u < n; u++)
		VECTOR(v)[u] = (double)(b->off[u + 1] - b->off[u]);
	if (SETVANV(ig, "ncommunities", &v) != IGRAPH_SUCCESS)
		goto out;
	rc = strength_columns(ig, x, columns, &v);
out:
	igraph_vector_destroy(&v);
	return rc;
}

/* probability, explained and community of every edge, in edge order. */
static int edge_numbers(igraph_t *ig, const struct export_fit *x)
{
	const struct graph *g = x->g;
	const struct fcsr *F = x->F;
	double qeps = model_qeps(x->epsilon);
	igraph_vector_t prob, expl, comm;
	if (igraph_vector_init(&prob, (igraph_integer_t)g->m) != IGRAPH_SUCCESS)
		return -1;
	if (igraph_vector_init(&expl, (igraph_integer_t)g->m) != IGRAPH_SUCCESS) {
		igraph_vector_destroy(&prob);
		return -1;
	}
	if (igraph_vector_init(&comm, (igraph_integer_t)g->m) != IGRAPH_SUCCESS) {
		igraph_vector_destroy(&prob);
		igraph_vector_destroy(&expl);
		return -1;
	}
	uint64_t e = 0;
	for (uint32_t u = 0; u < g->n; u++)
		for (uint64_t j = g->off[u]; j < g->off[u + 1]; j++) {
			uint32_t v = g->adj[j];
			if (v < u)
				continue;
			double dot = model_dot(F->e + F->off[u], (uint32_t)(F->off[u + 1] - F->off[u]),
					       F->e + F->off[v], (uint32_t)(F->off[v + 1] - F->off[v]));
			int64_t c = inspect_explaining_community(F, u, v);
			VECTOR(prob)[e] = -expm1(-(dot + qeps));
			VECTOR(expl)[e] = c >= 0;
			VECTOR(comm)[e] = (double)c;
			e++;
		}
	int rc = SETEANV(ig, "probability", &prob) == IGRAPH_SUCCESS &&
			 SETEANV(ig, "explained", &expl) == IGRAPH_SUCCESS &&
			 SETEANV(ig, "community", &comm) == IGRAPH_SUCCESS ? 0 : -1;
	igraph_vector_destroy(&prob);
	igraph_vector_destroy(&expl);
	igraph_vector_destroy(&comm);
	return rc;
}

/* The igraph graph of x->g with every attribute: 0 or -1 (ig empty). */
static int build(igraph_t *ig, const struct export_fit *x, enum export_format fmt,
		 uint32_t columns)
{
	const struct graph *g = x->g;
	igraph_vector_int_t el;
	if (igraph_vector_int_init(&el, (igraph_integer_t)(2 * g->m)) != IGRAPH_SUCCESS)
		return -1;
	uint64_t e = 0;
	for (uint32_t u = 0; u < g->n; u++)
		for (uint64_t j = g->off[u]; j < g->off[u + 1]; j++)
			if (g->adj[j] > u) {
				VECTOR(el)[e++] = u;
				VECTOR(el)[e++] = g->adj[j];
			}
	igraph_error_t made = igraph_create(ig, &el, (igraph_integer_t)g->n, IGRAPH_UNDIRECTED);
	igraph_vector_int_destroy(&el);
	if (made != IGRAPH_SUCCESS)
		return -1;
	struct by_node b = { NULL, NULL };
	int rc = by_node_build(&b, x->cover, g->n);
	if (rc == 0)
		rc = node_strings(ig, x, &b, fmt) || node_numbers(ig, x, &b, columns) ||
			     edge_numbers(ig, x) ? -1 : 0;
	by_node_release(&b);
	if (rc)
		igraph_destroy(ig);
	return rc;
}

int export_graph_stream(FILE *out, enum export_format fmt, const struct export_fit *x,
			uint32_t columns)
{
	if (x->F->n != x->g->n || x->cover->n != x->g->n)
		return error("the strengths or the cover do not match the graph (%" PRIu32
			     " nodes)", x->g->n);
	igraph_error_handler_t *old_err = igraph_set_error_handler(export_igraph_error);
	igraph_attribute_table_t *old_attr = igraph_set_attribute_table(&igraph_cattribute_table);
	export_igraph_reason[0] = '\0';
	igraph_t ig;
	int rc = build(&ig, x, fmt, columns);
	if (rc == 0) {
		igraph_error_t w = fmt == EXPORT_GML
			? igraph_write_graph_gml(&ig, out, IGRAPH_WRITE_GML_DEFAULT_SW, NULL,
						 "coterie export")
			: igraph_write_graph_graphml(&ig, out, 0);
		rc = w == IGRAPH_SUCCESS ? 0 : -1;
		igraph_destroy(&ig);
	}
	igraph_set_attribute_table(old_attr);
	igraph_set_error_handler(old_err);
	if (rc) {
		char buf[600];
		return error("igraph could not write the graph: %s",
			     util_escape(export_igraph_reason[0] ? export_igraph_reason
								  : "out of memory",
					 buf, sizeof buf, 1));
	}
	return 0;
}

/* ---- to a file, atomically -------------------------------------------- */

struct graph_job {
	enum export_format fmt;
	const struct export_fit *x;
	uint32_t columns;
};

/* igraph writes to a tmpfile(), copied into w: the atomic file sees the
 * bytes igraph wrote, whole. */
static int fill_graph(struct atomicfile *w, const void *arg)
{
	const struct graph_job *job = arg;
	FILE *tf = tmpfile();
	if (!tf)
		return error("cannot make a temporary file: %s", strerror(errno));
	int rc = export_graph_stream(tf, job->fmt, job->x, job->columns);
	if (rc == 0 && (fflush(tf) != 0 || ferror(tf) || fseek(tf, 0, SEEK_SET) != 0))
		rc = error("cannot write a temporary file: %s", strerror(errno));
	while (rc == 0 && !atomicfile_failed(w)) {
		char *room = atomicfile_room(w, 1u << 16);
		size_t got = fread(room, 1, 1u << 16, tf);
		atomicfile_advance(w, got);
		if (got < 1u << 16) {
			if (ferror(tf))
				rc = error("cannot read a temporary file back: %s", strerror(errno));
			break;
		}
	}
	fclose(tf);
	return rc;
}

int export_graph(const char *path, enum export_format fmt, const struct export_fit *x,
		 uint32_t columns)
{
	if (strcmp(path, "-") != 0) {
		struct graph_job job = { fmt, x, columns };
		return atomicfile_replace(path, fill_graph, &job);
	}
	if (export_graph_stream(stdout, fmt, x, columns))
		return -1;
	if (fflush(stdout) != 0 || ferror(stdout))
		return error("cannot write to standard output: %s", strerror(errno));
	return 0;
}
