/*
 * graph: loading a network from a file into an undirected simple graph in
 * compressed sparse rows (see graph.h for the rules of the struct).
 *
 * Edge lists are streamed through zlib (gzdopen reads plain files
 * transparently, so one path serves plain files, .gz files and stdin) into a
 * large buffer, and cut into lines with memchr: nothing is allocated per
 * line. Each line is split in place:
 *   - a line holding a TAB is split on TABs only (names may hold spaces and
 *     commas, and are taken byte for byte);
 *   - else a line holding a comma is split on commas, and the spaces around
 *     each field are trimmed ("a, b" is the usual look of a CSV file);
 *   - else the line is split on runs of spaces.
 * Empty fields are skipped. A line that is empty or holds only spaces and
 * TABs is blank; a line whose first byte is '#' or '%' is a comment (so a
 * name cannot start a line with those bytes). A trailing '\r' is stripped.
 * Fields after the second are ignored and counted. A line with fewer than
 * two names, a NUL byte, or more than LINE_MAX_BYTES (16 MiB) bytes is an
 * error that names the file and line; names quoted in messages, like the
 * path itself, go through util_escape() first. An empty file (or one of comments only) is a
 * graph of 0 nodes: it loads, with the notice "0 nodes, 0 edges", and it is
 * for the caller to refuse it if it cannot use it.
 *
 * Names are interned in an open-addressing hash table (linear probing,
 * FNV-1a with a final mix) whose strings live in an arena of large chunks;
 * ids are handed out in order of first appearance. Each slot keeps the
 * name's first 8 bytes, so names shorter than that are compared without
 * reading the string. Lookups are done in
 * batches of lines with prefetches (see edge_flush), since on a large graph
 * each one is a couple of cache misses.
 *
 * GML, GraphML and Pajek go through igraph's readers. The bytes are first
 * copied (through zlib, so .gz and stdin work) into memory, checked for the
 * few things that would hurt (a GraphML DTD, which could make libxml2 read
 * other files or expand entities without bound; a Pajek vertex count beyond
 * our 32-bit ids, or more than a million beyond the file's size in bytes,
 * which igraph would allocate), then written to a tmpfile() for igraph. igraph's error
 * handler is swapped for one that frees igraph's temporaries and keeps the
 * message, which we pass on through error(). Node names come from the
 * first vertex attribute, in this order, whose values are all present,
 * non-empty and distinct:
 *   GML      "label", "name", "id"
 *   GraphML  "name", "label", "id"  (igraph keeps the node's XML id in "id")
 *   Pajek    "id", "name"           (igraph keeps Pajek labels in "id")
 * and failing all of them, the 1-based position of the vertex in igraph's
 * order (which is the vertex number of a Pajek file), in decimal; a notice
 * says so (except for Pajek, where numbers are the usual names). Numeric
 * attributes are printed as integers when they are whole. These formats are
 * for small and middle-sized graphs: igraph's own copy of the graph is
 * alive beside ours while converting.
 *
 * Building: the edge records are collected as id pairs in one growable
 * uint32 array; a counting pass by endpoint lays out the rows (each edge in
 * both rows, self-loops dropped), each row is sorted (insertion sort for
 * short rows, LSD radix sort on bytes for long ones) and deduplicated in
 * place, and the pair array is freed. So at most two copies of the edges
 * are alive at once. The thing a newcomer gets wrong: a duplicate record shows
 * up in both rows, so the entries removed are twice the duplicates.
 */
#include "coterie/graph.h"

#include <errno.h>
#include <fcntl.h>
#include <inttypes.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>
#include <sys/stat.h>
#include <unistd.h>

#include <igraph.h>
#include <zlib.h>

#include "coterie/util.h"

#define LINE_MAX_BYTES ((size_t)16 << 20) /* longest edge-list line */
#define READ_CHUNK ((size_t)256 << 10)    /* first size of the read buffer */
#define ARENA_CHUNK ((size_t)1 << 20)     /* largest arena chunk */
#define MAX_NODES ((uint64_t)UINT32_MAX - 1) /* most nodes: n < 2^32 - 1 */
#define SLOT_EMPTY UINT32_MAX
#define PAJEK_UNLISTED 1000000u /* vertices a Pajek file may declare beyond its size */

/* ------------------------------------------------------------------ */
/* Name table: open addressing into an arena                            */
/* ------------------------------------------------------------------ */

struct arena_chunk {
	struct arena_chunk *next;
	size_t cap;
	char data[];
};

struct slot {
	const char *name; /* the interned copy, so a probe skips names[] */
	uint32_t hash;    /* low bits of the full hash, to skip most compares */
	uint32_t id;      /* SLOT_EMPTY when free */
	uint64_t head;    /* the name's first 8 bytes, NUL-padded (name_head()) */
};

/* The first 8 bytes of s[0..len), zero-padded. A name shorter than 8
 * bytes is equal to another exactly when their heads are (the padding
 * marks where it ends; names hold no NUL), so looking up the short names
 * of most graphs (numbers) never touches the string: on a 10^6-node
 * graph with names in random order the string compare was a cache miss
 * per lookup and a quarter of the loading time. */
static uint64_t name_head(const char *s, size_t len)
{
	unsigned char b[8] = { 0 };
	memcpy(b, s, len < 8 ? len : 8);
	uint64_t h;
	memcpy(&h, b, 8);
	return h;
}

struct nametable {
	struct slot *slots;
	uint64_t mask;       /* capacity - 1; capacity is a power of two */
	uint32_t count;
	char **names;        /* count names, in id order */
	size_t names_cap;
	struct arena_chunk *chunks;
	char *cur;           /* free space in the newest chunk */
	size_t left;
};

static uint64_t name_hash(const char *s, size_t len)
{
	uint64_t h = UTIL_FNV_INIT;
	const unsigned char *p = (const unsigned char *)s;
	for (size_t i = 0; i < len; i++) {
		h ^= p[i];
		h *= 0x100000001b3ULL;
	}
	/* FNV's low bits are weak for short keys; finish with a mixer. */
	h ^= h >> 33;
	h *= 0xff51afd7ed558ccdULL;
	h ^= h >> 33;
	return h;
}

static void nametable_free(struct nametable *t)
{
	if (!t)
		return;
	struct arena_chunk *c = t->chunks;
	while (c) {
		struct arena_chunk *next = c->next;
		free(c);
		c = next;
	}
	free(t->slots);
	free(t->names);
	free(t);
}

static struct nametable *nametable_new(uint64_t expect)
{
	struct nametable *t = util_calloc(1, sizeof *t);
	if (!t)
		return NULL;
	uint64_t cap = 1024;
	while (cap < 2 * expect && cap < ((uint64_t)1 << 40))
		cap <<= 1;
	t->slots = util_malloc((size_t)cap, sizeof *t->slots);
	if (!t->slots) {
		free(t);
		return NULL;
	}
	for (uint64_t i = 0; i < cap; i++)
		t->slots[i].id = SLOT_EMPTY;
	t->mask = cap - 1;
	return t;
}

/* Slot index holding name, or the free slot where it would go. */
static uint64_t nametable_probe(const struct nametable *t, const char *s, size_t len,
				uint64_t h)
{
	uint64_t i = h & t->mask;
	uint32_t h32 = (uint32_t)h;
	uint64_t head = name_head(s, len);
	for (;;) {
		const struct slot *sl = &t->slots[i];
		if (sl->id == SLOT_EMPTY)
			return i;
		if (sl->hash == h32 && sl->head == head) {
			if (len < 8)
				return i;
			const char *nm = sl->name;
			/* s holds no NUL, so strncmp stops only at nm's end or at len */
			if (strncmp(nm, s, len) == 0 && nm[len] == '\0')
				return i;
		}
		i = (i + 1) & t->mask;
	}
}

static int nametable_grow(struct nametable *t)
{
	uint64_t cap = (t->mask + 1) * 2;
	struct slot *ns = util_malloc((size_t)cap, sizeof *ns);
	if (!ns)
		return -1;
	for (uint64_t i = 0; i < cap; i++)
		ns[i].id = SLOT_EMPTY;
	for (uint64_t i = 0; i <= t->mask; i++) {
		uint32_t id = t->slots[i].id;
		if (id == SLOT_EMPTY)
			continue;
		const char *nm = t->names[id];
		uint64_t h = name_hash(nm, strlen(nm));
		uint64_t j = h & (cap - 1);
		while (ns[j].id != SLOT_EMPTY)
			j = (j + 1) & (cap - 1);
		ns[j] = t->slots[i];
		ns[j].hash = (uint32_t)h;
	}
	free(t->slots);
	t->slots = ns;
	t->mask = cap - 1;
	return 0;
}

static char *arena_copy(struct nametable *t, const char *s, size_t len)
{
	if (len + 1 > t->left) {
		/* chunks double from 4 KiB to ARENA_CHUNK: small graphs stay small */
		size_t normal = t->chunks ? t->chunks->cap * 2 : 4096;
		if (normal > ARENA_CHUNK)
			normal = ARENA_CHUNK;
		size_t cap = len + 1 > normal ? len + 1 : normal;
		struct arena_chunk *c = util_malloc(1, sizeof *c + cap);
		if (!c)
			return NULL;
		c->cap = cap;
		if (len + 1 > ARENA_CHUNK / 4 && t->chunks) {
			/* a big name gets a chunk of its own, behind the current one */
			c->next = t->chunks->next;
			t->chunks->next = c;
			memcpy(c->data, s, len);
			c->data[len] = '\0';
			return c->data;
		}
		c->next = t->chunks;
		t->chunks = c;
		t->cur = c->data;
		t->left = cap;
	}
	char *p = t->cur;
	memcpy(p, s, len);
	p[len] = '\0';
	t->cur += len + 1;
	t->left -= len + 1;
	return p;
}

/*
 * Id of name s[0..len) (no NUL inside), adding it when new. *added tells
 * which. Returns -1 with error() on failure (memory, too many nodes).
 */
static int64_t nametable_intern_h(struct nametable *t, const char *s, size_t len, uint64_t h,
				  int *added)
{
	uint64_t i = nametable_probe(t, s, len, h);
	if (t->slots[i].id != SLOT_EMPTY) {
		*added = 0;
		return t->slots[i].id;
	}
	*added = 1;
	if ((uint64_t)t->count >= MAX_NODES)
		return error("too many nodes: ids are 32-bit, at most %" PRIu64 " nodes",
			     MAX_NODES);
	if ((uint64_t)t->count + 1 > (t->mask + 1) / 2) {
		if (nametable_grow(t) < 0)
			return -1;
		i = nametable_probe(t, s, len, h);
	}
	if (t->count == t->names_cap) {
		size_t cap = t->names_cap ? t->names_cap * 2 : 1024;
		char **nn = util_realloc(t->names, cap, sizeof *nn);
		if (!nn)
			return -1;
		t->names = nn;
		t->names_cap = cap;
	}
	char *copy = arena_copy(t, s, len);
	if (!copy)
		return -1;
	uint32_t id = t->count++;
	t->names[id] = copy;
	t->slots[i].name = copy;
	t->slots[i].hash = (uint32_t)h;
	t->slots[i].id = id;
	t->slots[i].head = name_head(s, len);
	return id;
}

static int64_t nametable_intern(struct nametable *t, const char *s, size_t len, int *added)
{
	return nametable_intern_h(t, s, len, name_hash(s, len), added);
}

/* Start fetching the slot where a name of hash h would be probed first. */
static void nametable_prefetch(const struct nametable *t, uint64_t h)
{
#if defined(__GNUC__)
	__builtin_prefetch(&t->slots[h & t->mask]);
#else
	(void)t;
	(void)h;
#endif
}

static int64_t nametable_find(const struct nametable *t, const char *s)
{
	size_t len = strlen(s);
	uint64_t i = nametable_probe(t, s, len, name_hash(s, len));
	return t->slots[i].id == SLOT_EMPTY ? -1 : (int64_t)t->slots[i].id;
}

/* ------------------------------------------------------------------ */
/* Pairs and the CSR build                                              */
/* ------------------------------------------------------------------ */

struct pairbuf {
	uint32_t *v; /* 2 * len ids */
	uint64_t len;
	uint64_t cap;
};

static int pairbuf_push(struct pairbuf *p, uint32_t a, uint32_t b)
{
	if (p->len == p->cap) {
		uint64_t cap = p->cap ? p->cap * 2 : 4096;
		if (cap > SIZE_MAX / 2)
			return error("out of memory: too many edges");
		uint32_t *nv = util_realloc(p->v, (size_t)cap * 2, sizeof *nv);
		if (!nv)
			return -1;
		p->v = nv;
		p->cap = cap;
	}
	p->v[2 * p->len] = a;
	p->v[2 * p->len + 1] = b;
	p->len++;
	return 0;
}

static void insertion_sort(uint32_t *a, uint64_t len)
{
	for (uint64_t i = 1; i < len; i++) {
		uint32_t x = a[i];
		uint64_t j = i;
		while (j > 0 && a[j - 1] > x) {
			a[j] = a[j - 1];
			j--;
		}
		a[j] = x;
	}
}

/* LSD radix sort on bytes; passes = bytes needed for ids < n. */
static void radix_sort(uint32_t *a, uint64_t len, uint32_t *tmp, int passes)
{
	uint32_t *src = a, *dst = tmp;
	for (int p = 0; p < passes; p++) {
		uint64_t cnt[257] = { 0 };
		int shift = 8 * p;
		for (uint64_t i = 0; i < len; i++)
			cnt[((src[i] >> shift) & 0xff) + 1]++;
		if (cnt[((src[0] >> shift) & 0xff) + 1] == len)
			continue; /* every key has this byte: nothing to move */
		for (int b = 0; b < 256; b++)
			cnt[b + 1] += cnt[b];
		for (uint64_t i = 0; i < len; i++)
			dst[cnt[(src[i] >> shift) & 0xff]++] = src[i];
		uint32_t *t = src;
		src = dst;
		dst = t;
	}
	if (src != a)
		memcpy(a, src, len * sizeof *a);
}

/*
 * Fill g->off, g->adj and g->m from npairs id pairs (borrowed), counting
 * self-loops and duplicates into g->report. g->n is set.
 */
static int csr_build(struct graph *g, const uint32_t *pairs, uint64_t npairs)
{
	uint32_t n = g->n;
	uint64_t *off = util_calloc((size_t)n + 1, sizeof *off);
	if (!off)
		return -1;
	uint64_t loops = 0;
	for (uint64_t i = 0; i < npairs; i++) {
		uint32_t a = pairs[2 * i], b = pairs[2 * i + 1];
		if (a == b) {
			loops++;
			continue;
		}
		off[a + 1]++;
		off[b + 1]++;
	}
	for (uint32_t u = 0; u < n; u++)
		off[u + 1] += off[u];
	uint64_t total = off[n];
	uint32_t *adj = util_malloc((size_t)total, sizeof *adj);
	if (!adj) {
		free(off);
		return -1;
	}
	/* off[u] walks from the start of row u to its end (= start of u + 1) */
	for (uint64_t i = 0; i < npairs; i++) {
		uint32_t a = pairs[2 * i], b = pairs[2 * i + 1];
		if (a == b)
			continue;
		adj[off[a]++] = b;
		adj[off[b]++] = a;
	}
	memmove(off + 1, off, (size_t)n * sizeof *off);
	off[0] = 0;

	uint64_t maxdeg = 0;
	for (uint32_t u = 0; u < n; u++)
		if (off[u + 1] - off[u] > maxdeg)
			maxdeg = off[u + 1] - off[u];
	uint32_t *tmp = NULL;
	if (maxdeg > 64) {
		tmp = util_malloc((size_t)maxdeg, sizeof *tmp);
		if (!tmp) {
			free(adj);
			free(off);
			return -1;
		}
	}
	int passes = 1;
	while (passes < 4 && ((uint64_t)n - 1) >> (8 * passes))
		passes++;

	uint64_t w = 0, s = 0;
	for (uint32_t u = 0; u < n; u++) {
		uint64_t e = off[u + 1];
		uint64_t len = e - s;
		if (len > 64)
			radix_sort(adj + s, len, tmp, passes);
		else
			insertion_sort(adj + s, len);
		off[u] = w;
		uint64_t row = w;
		for (uint64_t i = s; i < e; i++)
			if (w == row || adj[w - 1] != adj[i])
				adj[w++] = adj[i];
		s = e;
	}
	off[n] = w;
	free(tmp);
	if (w < total) {
		uint32_t *shrunk = realloc(adj, (w ? w : 1) * sizeof *adj);
		if (shrunk)
			adj = shrunk;
	}
	g->off = off;
	g->adj = adj;
	g->m = w / 2;
	g->report.self_loops = loops;
	g->report.duplicates = (total - w) / 2;
	g->report.isolated = 0;
	for (uint32_t u = 0; u < n; u++)
		if (off[u + 1] == off[u])
			g->report.isolated++;
	return 0;
}

/* Wrap a name table (taken) and pairs (borrowed) into a graph. */
static struct graph *graph_assemble(struct nametable *t, const uint32_t *pairs, uint64_t npairs,
				    const struct graph_report *rep, const char *source)
{
	struct graph *g = util_calloc(1, sizeof *g);
	if (!g) {
		nametable_free(t);
		return NULL;
	}
	g->index = t;
	g->n = t->count;
	if (t->count < t->names_cap) {
		char **nn = realloc(t->names, (t->count ? t->count : 1) * sizeof *nn);
		if (nn) {
			t->names = nn;
			t->names_cap = t->count;
		}
	}
	if (!t->names) {
		t->names = util_malloc(1, sizeof *t->names);
		if (!t->names) {
			graph_free(g);
			return NULL;
		}
		t->names_cap = 1;
	}
	g->names = t->names;
	if (rep)
		g->report = *rep;
	g->report.edges_read = npairs;
	g->source = util_strdup(source);
	if (!g->source || csr_build(g, pairs, npairs) < 0) {
		graph_free(g);
		return NULL;
	}
	return g;
}

/* ------------------------------------------------------------------ */
/* Public small functions                                               */
/* ------------------------------------------------------------------ */

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

void graph_free(struct graph *g)
{
	if (!g)
		return;
	nametable_free(g->index);
	free(g->off);
	free(g->adj);
	free(g->source);
	free(g);
}

int64_t graph_find(const struct graph *g, const char *name)
{
	if (!g || !g->index || !name)
		return -1;
	return nametable_find(g->index, name);
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
	uint64_t lo = g->off[u], hi = g->off[u + 1];
	while (lo < hi) {
		uint64_t mid = lo + (hi - lo) / 2;
		if (g->adj[mid] < v)
			lo = mid + 1;
		else
			hi = mid;
	}
	return lo < g->off[u + 1] && g->adj[lo] == v;
}

/* Hash values as little-endian bytes, so the fingerprint does not depend
 * on the machine that wrote a checkpoint. */
static uint64_t fnv_u64s(uint64_t h, const uint64_t *a, uint64_t len)
{
	unsigned char buf[4096];
	size_t o = 0;
	for (uint64_t i = 0; i < len; i++) {
		for (int b = 0; b < 8; b++)
			buf[o++] = (unsigned char)(a[i] >> (8 * b));
		if (o == sizeof buf) {
			h = util_fnv1a(h, buf, o);
			o = 0;
		}
	}
	return util_fnv1a(h, buf, o);
}

static uint64_t fnv_u32s(uint64_t h, const uint32_t *a, uint64_t len)
{
	unsigned char buf[4096];
	size_t o = 0;
	for (uint64_t i = 0; i < len; i++) {
		for (int b = 0; b < 4; b++)
			buf[o++] = (unsigned char)(a[i] >> (8 * b));
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
	h = fnv_u64s(h, head, 2);
	h = fnv_u64s(h, g->off, (uint64_t)g->n + 1);
	h = fnv_u32s(h, g->adj, 2 * g->m);
	for (uint32_t u = 0; u < g->n; u++)
		h = util_fnv1a(h, g->names[u], strlen(g->names[u]) + 1);
	return h;
}

struct graph *graph_from_pairs(uint32_t n, const uint32_t *pairs, uint64_t npairs,
			       const char *const *names)
{
	if ((uint64_t)n > MAX_NODES) {
		error("too many nodes: ids are 32-bit, at most %" PRIu64 " nodes", MAX_NODES);
		return NULL;
	}
	for (uint64_t i = 0; i < 2 * npairs; i++) {
		if (pairs[i] >= n) {
			error("edge %" PRIu64 " names node %" PRIu32 " of a graph of %" PRIu32
			      " nodes", i / 2, pairs[i], n);
			return NULL;
		}
	}
	struct nametable *t = nametable_new(n);
	if (!t)
		return NULL;
	for (uint32_t u = 0; u < n; u++) {
		char num[16];
		const char *nm = num;
		if (names) {
			nm = names[u];
			if (!nm) {
				error("node %" PRIu32 " has no name", u);
				nametable_free(t);
				return NULL;
			}
		} else {
			snprintf(num, sizeof num, "%" PRIu32, u);
		}
		int added;
		if (nametable_intern(t, nm, strlen(nm), &added) < 0) {
			nametable_free(t);
			return NULL;
		}
		if (!added) {
			char shown[256];
			error("duplicate node name '%s'", util_escape(nm, shown, sizeof shown, 0));
			nametable_free(t);
			return NULL;
		}
	}
	struct graph_report rep = { .format = GRAPH_FORMAT_EDGES };
	return graph_assemble(t, pairs, npairs, &rep, "(pairs)");
}

/* ------------------------------------------------------------------ */
/* Input                                                                */
/* ------------------------------------------------------------------ */

/* Open path ("-" = stdin) for reading through zlib. NULL with error(). */
static gzFile open_input(const char *path, const char *shown)
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
	if (fstat(fd, &st) == 0 && S_ISDIR(st.st_mode)) {
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

/* After gzread returned < 0 or 0 at the end: report a zlib problem. */
static int input_error(gzFile gz, const char *shown)
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

/* Read size bytes at most; -1 with error() on failure. */
static int64_t read_some(gzFile gz, char *buf, size_t size, const char *shown)
{
	if (size > (1u << 30))
		size = 1u << 30;
	int got = gzread(gz, buf, (unsigned)size);
	if (got < 0) {
		input_error(gz, shown);
		return -1;
	}
	if (got == 0 && input_error(gz, shown) < 0)
		return -1;
	return got;
}

/* Cut one field out of line[*pos..len) for the given separator mode.
 * Returns 1 with [*b, *e) set, 0 when no field is left. */
enum sep_mode { SEP_TAB, SEP_COMMA, SEP_SPACE };

static int next_field(const char *line, size_t len, size_t *pos, enum sep_mode mode,
		      size_t *b, size_t *e)
{
	size_t i = *pos;
	if (mode == SEP_SPACE) {
		while (i < len && line[i] == ' ')
			i++;
		if (i == len) {
			*pos = i;
			return 0;
		}
		size_t s = i;
		while (i < len && line[i] != ' ')
			i++;
		*b = s;
		*e = i;
		*pos = i;
		return 1;
	}
	char sep = mode == SEP_TAB ? '\t' : ',';
	while (i < len) {
		const char *q = memchr(line + i, sep, len - i);
		size_t end = q ? (size_t)(q - line) : len;
		size_t s = i, t = end;
		if (mode == SEP_COMMA) {
			while (s < t && line[s] == ' ')
				s++;
			while (t > s && line[t - 1] == ' ')
				t--;
		}
		i = q ? end + 1 : len;
		if (t > s) {
			*b = s;
			*e = t;
			*pos = i;
			return 1;
		}
	}
	*pos = len;
	return 0;
}

static int is_blank(const char *line, size_t len)
{
	for (size_t i = 0; i < len; i++)
		if (line[i] != ' ' && line[i] != '\t')
			return 0;
	return 1;
}

/*
 * Lines are resolved in batches: the names of up to BATCH lines (pointing
 * into the read buffer, so a batch is flushed before the buffer moves) are
 * hashed, their slots prefetched, then the names those slots point at, and
 * only then looked up one by one. On a large graph every lookup is two
 * cache misses; this lets them overlap.
 */
#define BATCH 128

struct pending {
	const char *s[2];
	size_t len[2];
	uint64_t h[2];
	uint64_t lineno;
};

struct edge_state {
	struct nametable *t;
	struct pairbuf pairs;
	struct graph_report rep;
	int max_fields;
	const char *shown;
	struct pending batch[BATCH];
	int nbatch;
};

static int edge_flush(struct edge_state *st)
{
	struct nametable *t = st->t;
	int nb = st->nbatch;
	st->nbatch = 0;
	for (int i = 0; i < nb; i++)
		for (int k = 0; k < 2; k++)
			nametable_prefetch(t, st->batch[i].h[k]);
#if defined(__GNUC__)
	for (int i = 0; i < nb; i++) {
		for (int k = 0; k < 2; k++) {
			const struct slot *sl = &t->slots[st->batch[i].h[k] & t->mask];
			if (sl->id != SLOT_EMPTY && sl->hash == (uint32_t)st->batch[i].h[k])
				__builtin_prefetch(sl->name);
		}
	}
#endif
	for (int i = 0; i < nb; i++) {
		const struct pending *pe = &st->batch[i];
		int64_t id[2];
		for (int k = 0; k < 2; k++) {
			int added;
			id[k] = nametable_intern_h(t, pe->s[k], pe->len[k], pe->h[k], &added);
			if (id[k] < 0)
				return error("%s:%" PRIu64 ": cannot add the node", st->shown,
					     pe->lineno);
		}
		if (pairbuf_push(&st->pairs, (uint32_t)id[0], (uint32_t)id[1]) < 0)
			return -1;
	}
	return 0;
}

/* One line (no newline, no '\r' at the end). 0 or -1 with error(). */
static int edge_line(struct edge_state *st, const char *line, size_t len, uint64_t lineno)
{
	if (len == 0 || line[0] == '#' || line[0] == '%')
		return 0;
	if (memchr(line, '\0', len))
		return error("%s:%" PRIu64 ": expected text, found a NUL byte", st->shown, lineno);
	if (is_blank(line, len))
		return 0;
	enum sep_mode mode = memchr(line, '\t', len)   ? SEP_TAB
			     : memchr(line, ',', len) ? SEP_COMMA
						      : SEP_SPACE;
	size_t pos = 0, b[2] = { 0, 0 }, e[2] = { 0, 0 };
	int found = 0;
	while (found < 2 && next_field(line, len, &pos, mode, &b[found], &e[found]))
		found++;
	if (found < 2) {
		if (found == 0)
			return error("%s:%" PRIu64 ": expected two node names, found 0", st->shown,
				     lineno);
		char name[65], esc[300];
		size_t l = e[0] - b[0] < 64 ? e[0] - b[0] : 64;
		memcpy(name, line + b[0], l);
		name[l] = '\0';
		return error("%s:%" PRIu64 ": expected two node names, found 1 ('%s')", st->shown,
			     lineno, util_escape(name, esc, sizeof esc, 0));
	}
	size_t b3, e3;
	int fields = 2;
	while (next_field(line, len, &pos, mode, &b3, &e3))
		fields++;
	if (fields > 2) {
		st->rep.extra_columns++;
		if (fields > st->max_fields)
			st->max_fields = fields;
	}
	struct pending *pe = &st->batch[st->nbatch++];
	for (int k = 0; k < 2; k++) {
		pe->s[k] = line + b[k];
		pe->len[k] = e[k] - b[k];
		pe->h[k] = name_hash(pe->s[k], pe->len[k]);
	}
	pe->lineno = lineno;
	return st->nbatch == BATCH ? edge_flush(st) : 0;
}

static struct graph *load_edges(const char *path, const char *shown)
{
	gzFile gz = open_input(path, shown);
	if (!gz)
		return NULL;
	struct edge_state st = { .shown = shown };
	st.rep.format = GRAPH_FORMAT_EDGES;
	st.t = nametable_new(0);
	size_t cap = READ_CHUNK;
	char *buf = util_malloc(cap, 1);
	if (!st.t || !buf)
		goto fail;
	size_t start = 0, len = 0; /* unconsumed bytes are buf[start..len) */
	uint64_t lineno = 0;
	int eof = 0;
	for (;;) {
		char *nl = memchr(buf + start, '\n', len - start);
		if (!nl) {
			if (eof) {
				if (start == len)
					break;
				nl = buf + len; /* a last line without newline */
			} else {
				/* move the partial line to the front and read more;
				 * the pending names point into buf: resolve them first */
				if (edge_flush(&st) < 0)
					goto fail;
				if (start > 0) {
					memmove(buf, buf + start, len - start);
					len -= start;
					start = 0;
				}
				if (len == cap) {
					if (cap >= LINE_MAX_BYTES) {
						error("%s:%" PRIu64 ": expected a line of at most %zu "
						      "MiB, found a longer one", shown, lineno + 1,
						      LINE_MAX_BYTES >> 20);
						goto fail;
					}
					char *nb = util_realloc(buf, cap * 2, 1);
					if (!nb)
						goto fail;
					buf = nb;
					cap *= 2;
				}
				int64_t got = read_some(gz, buf + len, cap - len, shown);
				if (got < 0)
					goto fail;
				if (got == 0)
					eof = 1;
				len += (size_t)got;
				continue;
			}
		}
		size_t ll = (size_t)(nl - (buf + start));
		const char *line = buf + start;
		lineno++;
		if (ll > 0 && line[ll - 1] == '\r')
			ll--;
		if (edge_line(&st, line, ll, lineno) < 0)
			goto fail;
		start = (size_t)(nl - buf) + (nl < buf + len ? 1 : 0);
	}
	if (edge_flush(&st) < 0)
		goto fail;
	free(buf);
	buf = NULL;
	gzclose(gz);
	gz = NULL;
	st.rep.lines = lineno;

	struct graph *g = graph_assemble(st.t, st.pairs.v, st.pairs.len, &st.rep, path);
	st.t = NULL;
	free(st.pairs.v);
	if (g && g->report.extra_columns) {
		if (st.max_fields == 3)
			notice("%s: ignored the third column on %" PRIu64 " lines", shown,
			       g->report.extra_columns);
		else
			notice("%s: ignored the columns after the second on %" PRIu64 " lines",
			       shown, g->report.extra_columns);
	}
	return g;
fail:
	free(buf);
	if (gz)
		gzclose(gz);
	nametable_free(st.t);
	free(st.pairs.v);
	return NULL;
}

/* ------------------------------------------------------------------ */
/* igraph formats                                                       */
/* ------------------------------------------------------------------ */

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

/* Read all of path into memory (through zlib). */
static char *slurp(const char *path, const char *shown, size_t *out_len)
{
	gzFile gz = open_input(path, shown);
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
				if (v > MAX_NODES)
					return error("%s: too many nodes: ids are 32-bit, at most %"
						     PRIu64 " nodes", shown, MAX_NODES);
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
static struct nametable *names_from_attr(const igraph_t *ig, const char *attr)
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
	struct nametable *t = nametable_new((uint64_t)n);
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
		if (!s || !*s || nametable_intern(t, s, strlen(s), &added) < 0 || !added) {
			nametable_free(t);
			return NULL;
		}
	}
	return t;
}

static struct graph *load_igraph(const char *path, const char *shown, enum graph_format fmt)
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
	struct nametable *t = NULL;
	uint32_t *pairs = NULL;
	igraph_vector_int_t el;
	int have_el = 0;
	if (rc != IGRAPH_SUCCESS) {
		char esc[600];
		error("%s: cannot read %s: %s", shown, graph_format_name(fmt),
		      util_escape(igraph_reason[0] ? igraph_reason : igraph_strerror(rc), esc,
				  sizeof esc, 1));
		goto out;
	}
	igraph_integer_t n = igraph_vcount(&ig), ne = igraph_ecount(&ig);
	if ((uint64_t)n > MAX_NODES) {
		error("%s: too many nodes: ids are 32-bit, at most %" PRIu64 " nodes", shown,
		      MAX_NODES);
		goto destroy;
	}
	const char *const *attrs = name_attrs(fmt);
	const char *used = NULL;
	for (int i = 0; attrs[i] && !t; i++) {
		t = names_from_attr(&ig, attrs[i]);
		if (t)
			used = attrs[i];
	}
	if (!t) {
		t = nametable_new((uint64_t)n);
		if (!t)
			goto destroy;
		for (igraph_integer_t v = 0; v < n; v++) {
			char num[32];
			int added;
			snprintf(num, sizeof num, "%" PRId64, (int64_t)v + 1);
			if (nametable_intern(t, num, strlen(num), &added) < 0)
				goto destroy;
		}
		if (n > 0 && fmt != GRAPH_FORMAT_PAJEK)
			notice("%s: no vertex attribute gives distinct names; nodes are named "
			       "1 to %" PRId64 " in file order", shown, (int64_t)n);
	} else if (used != attrs[0]) {
		notice("%s: nodes are named by their '%s'", shown, used);
	}
	if (igraph_vector_int_init(&el, 0) != IGRAPH_SUCCESS) {
		error("%s: out of memory", shown);
		goto destroy;
	}
	have_el = 1;
	if (igraph_get_edgelist(&ig, &el, 0) != IGRAPH_SUCCESS) {
		error("%s: out of memory", shown);
		goto destroy;
	}
	pairs = util_malloc((size_t)ne * 2 + 1, sizeof *pairs);
	if (!pairs)
		goto destroy;
	for (igraph_integer_t i = 0; i < 2 * ne; i++)
		pairs[i] = (uint32_t)VECTOR(el)[i];
	struct graph_report rep = { .format = fmt };
	if (igraph_is_directed(&ig)) {
		rep.directed_input = 1;
		notice("%s: the graph is directed; it is read as undirected", shown);
	}
	g = graph_assemble(t, pairs, (uint64_t)ne, &rep, path);
	t = NULL;
destroy:
	if (have_el)
		igraph_vector_int_destroy(&el);
	igraph_destroy(&ig);
out:
	free(pairs);
	nametable_free(t);
	igraph_set_attribute_table(old_attr);
	igraph_set_warning_handler(old_warn);
	igraph_set_error_handler(old_err);
	igraph_shown = NULL;
	return g;
}

/* ------------------------------------------------------------------ */
/* graph_load                                                           */
/* ------------------------------------------------------------------ */

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
	case GRAPH_FORMAT_EDGES: g = load_edges(path, shown); break;
	case GRAPH_FORMAT_GML:
	case GRAPH_FORMAT_GRAPHML:
	case GRAPH_FORMAT_PAJEK: g = load_igraph(path, shown, fmt); break;
	default:
		error("unknown graph format %d", (int)fmt);
		g = NULL;
	}
	if (g) {
		notice("%s: %" PRIu32 " node%s, %" PRIu64 " edge%s", shown, g->n,
		       g->n == 1 ? "" : "s", g->m, g->m == 1 ? "" : "s");
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
