/*
 * graph: loading a network from a file into an undirected simple graph in
 * compressed sparse rows (see graph.h for the rules of the struct).
 *
 * Edge lists are read through zlib (gzdopen reads plain files
 * transparently, so one path serves plain files, .gz files and stdin) in
 * chunks of 1 MiB that end at a line end (see "The reader" below: for a
 * regular file, .gz or not, a thread of its own reads or inflates ahead
 * while the lines are parsed). Nothing is allocated per line. The usual
 * line, "name TAB name" with no other TAB and no NUL, is found in one pass
 * over 64 bytes at a time (the TABs, newlines and NULs as bit masks,
 * SSE2 where there is one); every other line goes through the general
 * splitter. The fast path is only a shortcut: it takes a line only when
 * the splitter would give the same two names (so not a comment, and not a
 * blank line, which would start with a space), and it was checked to give
 * the same graphs, counts and messages as the splitter alone on the bench
 * graphs and on thousands of generated hostile files. Each line is split in
 * place:
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
 * power-of-two size, at most half full) whose strings live in an arena of
 * large chunks; ids are handed out in order of first appearance, so the
 * hash function shapes only the table, never a result. A slot is 16 bytes:
 * a name shorter than 8 bytes is kept whole in it (its NUL-padded head, so
 * the short names of most graphs, numbers, are compared without reading a
 * string and hashed by mixing that one word), a longer one by a pointer to
 * its copy; the slot also keeps 31 bits of the hash, so doubling the table
 * does not rehash the names. Lookups are done in batches of lines with
 * prefetches a fixed distance ahead (see edge_flush), since on a large
 * graph each one is a cache miss or two; the table asks for transparent
 * huge pages.
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
 * both rows, self-loops dropped), the pairs are scattered into them, each
 * row is sorted (insertion sort for short rows, LSD radix sort on bytes for
 * long ones) and deduplicated in place, and the pair array is freed. So at
 * most two copies of the edges are alive at once. From 65536 pairs on, the
 * count, the scatter and the sort run on two threads (see csr_build): the
 * rows are sorted, so the bytes are the same as a serial build's. The thing
 * a newcomer gets wrong: a duplicate record shows up in both rows, so the
 * entries removed are twice the duplicates.
 */
#include "coterie/graph.h"

#include <errno.h>
#include <fcntl.h>
#include <inttypes.h>
#include <math.h>
#include <pthread.h>
#include <signal.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>
#include <sys/mman.h>
#include <sys/stat.h>
#include <unistd.h>

#if defined(__SSE2__)
#include <emmintrin.h>
#endif

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
	uint64_t key; /* a short name's head (name_head()), or a long name's interned copy */
	uint32_t tag; /* SLOT_LONG for a name of 8 bytes or more | low 31 bits of its hash */
	uint32_t id;  /* SLOT_EMPTY when free */
};

#define SLOT_LONG 0x80000000u
#define SHORT_NAME 8 /* names shorter than this live in their slot's key */

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

/* name_head() for a name with at least 8 readable bytes from s (the
 * reader's buffers end in padding): one load and a mask. */
static inline uint64_t name_head_padded(const char *s, size_t len)
{
#if defined(__BYTE_ORDER__) && __BYTE_ORDER__ == __ORDER_LITTLE_ENDIAN__
	uint64_t h;
	memcpy(&h, s, 8);
	return len < 8 ? h & ((UINT64_C(1) << (8 * len)) - 1) : h;
#else
	return name_head(s, len);
#endif
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

static inline uint64_t hash_mix(uint64_t h)
{
	h ^= h >> 33;
	h *= 0xff51afd7ed558ccdULL;
	h ^= h >> 33;
	h *= 0xc4ceb9fe1a85ec53ULL;
	h ^= h >> 33;
	return h;
}

/* The hash of a name: its head mixed for a short name (no loop, no
 * string), eight bytes at a time for a long one. Only the table's layout
 * depends on it: ids follow first appearance whatever the hash. */
static inline uint64_t name_hash_head(const char *s, size_t len, uint64_t head)
{
	if (len < SHORT_NAME)
		return hash_mix(head);
	uint64_t h = (uint64_t)len * 0x9e3779b97f4a7c15ULL;
	size_t i = 0;
	for (; i + 8 <= len; i += 8) {
		uint64_t w;
		memcpy(&w, s + i, 8);
		h = (h ^ w) * 0x100000001b3ULL;
		h ^= h >> 29;
	}
	if (i < len)
		h = (h ^ name_head(s + i, len - i)) * 0x100000001b3ULL;
	return hash_mix(h);
}

static uint64_t name_hash(const char *s, size_t len)
{
	return name_hash_head(s, len, name_head(s, len));
}

static inline uint32_t name_tag(size_t len, uint64_t h)
{
	return ((uint32_t)h & ~SLOT_LONG) | (len >= SHORT_NAME ? SLOT_LONG : 0);
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

/* Ask for transparent huge pages on a large block that is accessed at
 * random (the name table, the rows while they are filled): fewer TLB
 * misses. Only the 2 MiB-aligned middle is advised; failure is harmless. */
static void advise_huge(void *p, size_t len)
{
#if defined(MADV_HUGEPAGE)
	const uintptr_t huge = (uintptr_t)2 << 20;
	if (len < 2 * huge)
		return;
	uintptr_t b = ((uintptr_t)p + huge - 1) & ~(huge - 1);
	uintptr_t e = ((uintptr_t)p + len) & ~(huge - 1);
	if (e > b)
		madvise((void *)b, e - b, MADV_HUGEPAGE);
#else
	(void)p;
	(void)len;
#endif
}

/* Slots for a table of cap entries, every one free. Large tables ask for
 * transparent huge pages: lookups land anywhere in them. */
static struct slot *slots_alloc(uint64_t cap)
{
	struct slot *sl = util_malloc((size_t)cap, sizeof *sl);
	if (!sl)
		return NULL;
	advise_huge(sl, (size_t)cap * sizeof *sl);
	memset(sl, 0xff, (size_t)cap * sizeof *sl); /* id = SLOT_EMPTY */
	return sl;
}

static struct nametable *nametable_new(uint64_t expect)
{
	struct nametable *t = util_calloc(1, sizeof *t);
	if (!t)
		return NULL;
	uint64_t cap = 1024;
	while (cap < 2 * expect && cap < ((uint64_t)1 << 40))
		cap <<= 1;
	t->slots = slots_alloc(cap);
	if (!t->slots) {
		free(t);
		return NULL;
	}
	t->mask = cap - 1;
	return t;
}

/* Slot index holding name s[0..len) (head = name_head(), h its hash), or
 * the free slot where it would go. */
static inline uint64_t nametable_probe(const struct nametable *t, const char *s, size_t len,
				       uint64_t h, uint64_t head)
{
	uint64_t i = h & t->mask;
	uint32_t tag = name_tag(len, h);
	for (;;) {
		const struct slot *sl = &t->slots[i];
		if (sl->id == SLOT_EMPTY)
			return i;
		if (sl->tag == tag) {
			if (len < SHORT_NAME) {
				if (sl->key == head)
					return i;
			} else {
				const char *nm = (const char *)(uintptr_t)sl->key;
				/* s holds no NUL, so strncmp stops only at nm's end or at len */
				if (strncmp(nm, s, len) == 0 && nm[len] == '\0')
					return i;
			}
		}
		i = (i + 1) & t->mask;
	}
}

/* Double the table. Below 2^31 slots the tag's hash bits give the new
 * place without touching the names. */
static int nametable_grow(struct nametable *t)
{
	uint64_t cap = (t->mask + 1) * 2;
	struct slot *ns = slots_alloc(cap);
	if (!ns)
		return -1;
	for (uint64_t i = 0; i <= t->mask; i++) {
		const struct slot *sl = &t->slots[i];
		if (sl->id == SLOT_EMPTY)
			continue;
		uint64_t h = sl->tag & ~SLOT_LONG;
		if (cap > ((uint64_t)1 << 31)) {
			if (sl->tag & SLOT_LONG) {
				const char *nm = (const char *)(uintptr_t)sl->key;
				h = name_hash(nm, strlen(nm));
			} else {
				h = hash_mix(sl->key);
			}
		}
		uint64_t j = h & (cap - 1);
		while (ns[j].id != SLOT_EMPTY)
			j = (j + 1) & (cap - 1);
		ns[j] = *sl;
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
 * Id of name s[0..len) (no NUL inside; head = name_head(), h its hash),
 * adding it when new. *added tells which. Returns -1 with error() on
 * failure (memory, too many nodes).
 */
static int64_t nametable_intern_h(struct nametable *t, const char *s, size_t len, uint64_t h,
				  uint64_t head, int *added)
{
	uint64_t i = nametable_probe(t, s, len, h, head);
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
		i = nametable_probe(t, s, len, h, head);
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
	t->slots[i].key = len < SHORT_NAME ? head : (uint64_t)(uintptr_t)copy;
	t->slots[i].tag = name_tag(len, h);
	t->slots[i].id = id;
	return id;
}

static int64_t nametable_intern(struct nametable *t, const char *s, size_t len, int *added)
{
	uint64_t head = name_head(s, len);
	return nametable_intern_h(t, s, len, name_hash_head(s, len, head), head, added);
}

static int64_t nametable_find(const struct nametable *t, const char *s)
{
	size_t len = strlen(s);
	uint64_t head = name_head(s, len);
	uint64_t i = nametable_probe(t, s, len, name_hash_head(s, len, head), head);
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
 * The CSR build runs on CSR_THREADS threads (the caller and helpers) in
 * three steps, each ending in a join:
 *   count    part t counts the endpoints of its share of the pairs into
 *            its own array cnt[t] (no shared writes, no branch on ranges);
 *   (serial) the prefix sums give off[], and cnt[t][u] becomes part t's
 *            cursor in row u: after the entries of parts 0..t-1;
 *   scatter  part t writes its share of the pairs into those places;
 *            the counters are random accesses into n entries, so the
 *            ones CSR_PREFETCH pairs ahead are prefetched (a fifth off
 *            the scatter on the 10^6-node graph);
 *   sort     part t sorts and deduplicates the rows of a range holding
 *            about 1/CSR_THREADS of the entries, compacting them to the
 *            range's start;
 *   (serial) the compacted ranges are moved together.
 * Rows are sorted, so the order in which the parts filled a row does not
 * show: the result is the same bytes for any number of parts.
 */
#define CSR_THREADS 2
#define CSR_MIN_PAIRS 65536 /* below this one part does everything */
#define CSR_PREFETCH 32     /* pairs between a counter's prefetch and its use */

struct csr_part {
	int step;             /* 0 count, 1 scatter, 2 sort */
	const uint32_t *pairs;
	uint64_t p0, p1;      /* the share of pairs [p0, p1) */
	uint64_t *cnt;        /* counts, then cursors (n entries) */
	uint64_t *off;        /* shared */
	uint32_t *adj;        /* shared */
	uint32_t lo, hi;      /* rows of the sort step */
	uint64_t end;         /* off[hi] before the sort step */
	uint64_t w;           /* end of the compacted range */
	uint64_t loops;
	int passes;
	int failed;
};

static void csr_count(struct csr_part *c)
{
	uint64_t loops = 0, *cnt = c->cnt;
	const uint32_t *p = c->pairs;
	for (uint64_t i = c->p0; i < c->p1; i++) {
		uint32_t a = p[2 * i], b = p[2 * i + 1];
#if defined(__GNUC__)
		if (i + CSR_PREFETCH < c->p1) {
			__builtin_prefetch(&cnt[p[2 * (i + CSR_PREFETCH)]], 1);
			__builtin_prefetch(&cnt[p[2 * (i + CSR_PREFETCH) + 1]], 1);
		}
#endif
		uint64_t same = a == b;
		loops += same;
		cnt[a] += 1 - same;
		cnt[b] += 1 - same;
	}
	c->loops = loops;
}

static void csr_scatter(struct csr_part *c)
{
	uint64_t *cur = c->cnt;
	uint32_t *adj = c->adj;
	const uint32_t *p = c->pairs;
	for (uint64_t i = c->p0; i < c->p1; i++) {
		uint32_t a = p[2 * i], b = p[2 * i + 1];
#if defined(__GNUC__)
		if (i + CSR_PREFETCH < c->p1) {
			__builtin_prefetch(&cur[p[2 * (i + CSR_PREFETCH)]], 1);
			__builtin_prefetch(&cur[p[2 * (i + CSR_PREFETCH) + 1]], 1);
		}
#endif
		if (a == b)
			continue;
		adj[cur[a]++] = b;
		adj[cur[b]++] = a;
	}
}

static void csr_sort(struct csr_part *c)
{
	uint64_t *off = c->off;
	uint32_t *adj = c->adj;
	uint64_t maxdeg = 0;
	for (uint32_t u = c->lo; u < c->hi; u++) {
		uint64_t e = u + 1 == c->hi ? c->end : off[u + 1];
		if (e - off[u] > maxdeg)
			maxdeg = e - off[u];
	}
	uint32_t *tmp = NULL;
	if (maxdeg > 64) {
		tmp = malloc((size_t)maxdeg * sizeof *tmp);
		if (!tmp) {
			c->failed = 1;
			return;
		}
	}
	uint64_t w = c->lo < c->hi ? off[c->lo] : c->end, s = w;
	for (uint32_t u = c->lo; u < c->hi; u++) {
		uint64_t e = u + 1 == c->hi ? c->end : off[u + 1];
		uint64_t len = e - s;
		if (len > 64)
			radix_sort(adj + s, len, tmp, c->passes);
		else
			insertion_sort(adj + s, len);
		off[u] = w;
		uint64_t row = w;
		for (uint64_t i = s; i < e; i++)
			if (w == row || adj[w - 1] != adj[i])
				adj[w++] = adj[i];
		s = e;
	}
	c->w = w;
	free(tmp);
}

static void *csr_run(void *arg)
{
	struct csr_part *c = arg;
	switch (c->step) {
	case 0: csr_count(c); break;
	case 1: csr_scatter(c); break;
	default: csr_sort(c); break;
	}
	return NULL;
}

/* Run one step on parts[0..np): helpers for 1..np-1, the caller does 0.
 * A helper that cannot start is run by the caller afterwards. */
static void csr_step(struct csr_part *parts, int np, int step)
{
	pthread_t th[CSR_THREADS];
	int started[CSR_THREADS] = { 0 };
	sigset_t all, old;
	sigfillset(&all);
	pthread_sigmask(SIG_BLOCK, &all, &old);
	for (int t = 0; t < np; t++)
		parts[t].step = step;
	for (int t = 1; t < np; t++)
		started[t] = pthread_create(&th[t], NULL, csr_run, &parts[t]) == 0;
	pthread_sigmask(SIG_SETMASK, &old, NULL);
	csr_run(&parts[0]);
	for (int t = 1; t < np; t++) {
		if (started[t])
			pthread_join(th[t], NULL);
		else
			csr_run(&parts[t]);
	}
}

/*
 * Fill g->off, g->adj and g->m from npairs id pairs (borrowed), counting
 * self-loops and duplicates into g->report. g->n is set.
 */
static int csr_build(struct graph *g, const uint32_t *pairs, uint64_t npairs)
{
	uint32_t n = g->n;
	int np = npairs >= CSR_MIN_PAIRS && n > 1 ? CSR_THREADS : 1;
	struct csr_part parts[CSR_THREADS];
	memset(parts, 0, sizeof parts);
	uint64_t *off = util_calloc((size_t)n + 1, sizeof *off);
	uint32_t *adj = NULL;
	int t;
	if (!off)
		return -1;
	for (t = 0; t < np; t++) {
		struct csr_part *c = &parts[t];
		c->pairs = pairs;
		c->p0 = npairs * (uint64_t)t / (uint64_t)np;
		c->p1 = npairs * (uint64_t)(t + 1) / (uint64_t)np;
		c->cnt = util_calloc((size_t)n + 1, sizeof *c->cnt);
		if (!c->cnt)
			goto fail;
	}
	csr_step(parts, np, 0);
	uint64_t loops = 0;
	for (t = 0; t < np; t++)
		loops += parts[t].loops;
	/* off[u] = start of row u; part t's cursor = off[u] + counts of parts < t */
	uint64_t total = 0;
	for (uint32_t u = 0; u < n; u++) {
		off[u] = total;
		for (t = 0; t < np; t++) {
			uint64_t k = parts[t].cnt[u];
			parts[t].cnt[u] = total;
			total += k;
		}
	}
	off[n] = total;
	adj = util_malloc(total ? (size_t)total : 1, sizeof *adj);
	if (!adj)
		goto fail;
	advise_huge(adj, (size_t)total * sizeof *adj);
	for (t = 0; t < np; t++)
		parts[t].adj = adj;
	csr_step(parts, np, 1);
	for (t = 0; t < np; t++) {
		free(parts[t].cnt);
		parts[t].cnt = NULL;
	}

	int passes = 1;
	while (passes < 4 && ((uint64_t)n - 1) >> (8 * passes))
		passes++;
	/* rows [lo, hi) of part t start at the first row at or after t/np of
	 * the entries */
	uint32_t lo = 0;
	for (t = 0; t < np; t++) {
		struct csr_part *c = &parts[t];
		uint32_t hi = n;
		if (t + 1 < np) {
			uint64_t want = total * (uint64_t)(t + 1) / (uint64_t)np;
			uint32_t a = lo, b = n; /* first u in [lo, n] with off[u] >= want */
			while (a < b) {
				uint32_t mid = a + (b - a) / 2;
				if (off[mid] < want)
					a = mid + 1;
				else
					b = mid;
			}
			hi = a;
		}
		c->off = off;
		c->lo = lo;
		c->hi = hi;
		c->end = off[hi];
		c->passes = passes;
		lo = hi;
	}
	csr_step(parts, np, 2);
	uint64_t w = 0;
	for (t = 0; t < np; t++) {
		struct csr_part *c = &parts[t];
		if (c->failed) {
			error("out of memory");
			goto fail;
		}
		if (c->lo == c->hi)
			continue;
		uint64_t from = off[c->lo]; /* the range's own start: off[lo] was not moved */
		if (from != w) {
			memmove(adj + w, adj + from, (size_t)(c->w - from) * sizeof *adj);
			for (uint32_t u = c->lo; u < c->hi; u++)
				off[u] -= from - w;
		}
		w += c->w - from;
	}
	off[n] = w;
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
fail:
	for (t = 0; t < np; t++)
		free(parts[t].cnt);
	free(adj);
	free(off);
	return -1;
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
static gzFile open_input(const char *path, const char *shown, int *regular)
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
 * The reader: the bytes of the input in chunks that end at a line end.
 * A ring of RING_CHUNKS buffers is filled in order (through gzread, so
 * plain, gzip and stdin are one path); each chunk holds the unfinished
 * line of the one before it, then as much new input as fits, and is handed
 * over up to its last newline (all of it at the end of the input). A line
 * that does not fit makes its chunk grow, up to LINE_MAX_BYTES. Errors
 * (zlib's, the line limit) are kept in the chunk and reported by the
 * parser when it reaches it, after every line before them, as a serial
 * loop would.
 *
 * For a regular file the chunks are filled by a thread of their own (a
 * .gz file is inflated there while the parser works on the chunk before:
 * the load takes about the longer of the two rather than their sum). A
 * pipe, a FIFO or a terminal is read on the parser's own thread when it
 * needs the next chunk: a read there may block for ever, and the parser
 * could not stop a thread stuck in it after an error.
 */
#define RING_CHUNKS 4
#define CHUNK_BYTES ((size_t)1 << 20) /* a chunk's first size */
#define CHUNK_PAD 64                  /* readable bytes after a chunk's data */

struct chunk {
	char *data;   /* cap + CHUNK_PAD bytes */
	size_t cap;
	size_t len;   /* bytes handed over (whole lines, or all at the end) */
	size_t total; /* bytes held: len + the unfinished line */
	int last;     /* the end of the input, or an error */
	int fail;     /* 0, or one of the FAIL_ below */
	int err_no;   /* errno of a failed read */
};

enum { FAIL_READ = 1, FAIL_LINE = 2, FAIL_MEMORY = 3 };

struct reader {
	gzFile gz;
	struct chunk ring[RING_CHUNKS];
	uint64_t made;     /* chunks filled */
	uint64_t used;     /* chunks the parser is done with */
	int stop;          /* the parser gave up: the thread ends */
	int threaded;
	pthread_t thread;
	pthread_mutex_t mu;
	pthread_cond_t cv;
};

/* The last '\n' in data[from..to), or NULL. */
static const char *last_newline(const char *data, size_t from, size_t to)
{
	while (to > from) {
		to--;
		if (data[to] == '\n')
			return data + to;
	}
	return NULL;
}

/* Fill chunk number k from the unfinished line of chunk k - 1 and the
 * input. Touches only that chunk, the tail of the one before, and gz. */
static void chunk_fill(struct reader *rd, uint64_t k)
{
	struct chunk *c = &rd->ring[k % RING_CHUNKS];
	const struct chunk *prev = k ? &rd->ring[(k - 1) % RING_CHUNKS] : NULL;
	size_t carry = prev ? prev->total - prev->len : 0;
	c->len = c->total = 0;
	c->last = c->fail = c->err_no = 0;
	/* a chunk grown for a long line goes back to the usual size */
	size_t want = CHUNK_BYTES;
	while (want < LINE_MAX_BYTES && want < 2 * carry)
		want *= 2;
	if (!c->data || c->cap != want) {
		free(c->data);
		c->data = malloc(want + CHUNK_PAD);
		c->cap = c->data ? want : 0;
		if (!c->data) {
			c->fail = FAIL_MEMORY;
			c->last = 1;
			return;
		}
	}
	if (carry)
		memcpy(c->data, prev->data + prev->len, carry);
	size_t total = carry;
	for (;;) {
		int eof = 0;
		while (total < c->cap) {
			size_t ask = c->cap - total;
			if (ask > (1u << 30))
				ask = 1u << 30;
			int got = gzread(rd->gz, c->data + total, (unsigned)ask);
			if (got < 0) {
				c->fail = FAIL_READ;
				break;
			}
			if (got == 0) {
				int num = Z_OK;
				gzerror(rd->gz, &num);
				if (num != Z_OK && num != Z_STREAM_END)
					c->fail = FAIL_READ;
				eof = 1;
				break;
			}
			total += (size_t)got;
		}
		if (c->fail) {
			c->err_no = errno;
			c->last = 1;
			/* the lines read before the error are still parsed */
			const char *nl = last_newline(c->data, 0, total);
			c->len = nl ? (size_t)(nl - c->data) + 1 : 0;
			c->total = c->len;
			break;
		}
		const char *nl = last_newline(c->data, carry, total);
		if (eof) {
			c->len = c->total = total;
			c->last = 1;
			break;
		}
		if (nl) {
			c->len = (size_t)(nl - c->data) + 1;
			c->total = total;
			break;
		}
		/* one unfinished line fills the chunk */
		if (c->cap >= LINE_MAX_BYTES) {
			c->len = c->total = 0;
			c->fail = FAIL_LINE;
			c->last = 1;
			break;
		}
		char *nd = realloc(c->data, 2 * c->cap + CHUNK_PAD);
		if (!nd) {
			c->fail = FAIL_MEMORY;
			c->last = 1;
			c->len = c->total = 0;
			break;
		}
		c->data = nd;
		carry = total;
		c->cap *= 2;
	}
	memset(c->data + c->total, 0, CHUNK_PAD); /* special_bits() and name_head_padded() read here */
}

static void *reader_main(void *arg)
{
	struct reader *rd = arg;
	for (uint64_t k = 0;; k++) {
		pthread_mutex_lock(&rd->mu);
		/* chunk k reuses the buffer of chunk k - RING_CHUNKS, and its
		 * carry comes from chunk k - 1, which the parser only reads */
		while (!rd->stop && k >= rd->used + RING_CHUNKS)
			pthread_cond_wait(&rd->cv, &rd->mu);
		int stop = rd->stop;
		pthread_mutex_unlock(&rd->mu);
		if (stop)
			return NULL;
		chunk_fill(rd, k);
		int last = rd->ring[k % RING_CHUNKS].last;
		pthread_mutex_lock(&rd->mu);
		rd->made = k + 1;
		pthread_cond_broadcast(&rd->cv);
		pthread_mutex_unlock(&rd->mu);
		if (last)
			return NULL;
	}
}

static void reader_start(struct reader *rd, gzFile gz, int regular)
{
	memset(rd, 0, sizeof *rd);
	rd->gz = gz;
	gzbuffer(gz, 1 << 20);
	if (!regular)
		return;
	if (pthread_mutex_init(&rd->mu, NULL))
		return;
	if (pthread_cond_init(&rd->cv, NULL)) {
		pthread_mutex_destroy(&rd->mu);
		return;
	}
	sigset_t all, old;
	sigfillset(&all);
	pthread_sigmask(SIG_BLOCK, &all, &old);
	rd->threaded = pthread_create(&rd->thread, NULL, reader_main, rd) == 0;
	pthread_sigmask(SIG_SETMASK, &old, NULL);
	if (!rd->threaded) {
		pthread_cond_destroy(&rd->cv);
		pthread_mutex_destroy(&rd->mu);
	}
}

/* Chunk number k (k == the chunks used so far): wait for it, or fill it. */
static const struct chunk *reader_next(struct reader *rd, uint64_t k)
{
	if (!rd->threaded) {
		chunk_fill(rd, k);
		return &rd->ring[k % RING_CHUNKS];
	}
	pthread_mutex_lock(&rd->mu);
	while (rd->made <= k)
		pthread_cond_wait(&rd->cv, &rd->mu);
	pthread_mutex_unlock(&rd->mu);
	return &rd->ring[k % RING_CHUNKS];
}

static void reader_done_with(struct reader *rd, uint64_t k)
{
	if (!rd->threaded)
		return;
	pthread_mutex_lock(&rd->mu);
	rd->used = k + 1;
	pthread_cond_broadcast(&rd->cv);
	pthread_mutex_unlock(&rd->mu);
}

/* Stop the thread (if any), free the buffers; gz stays open. */
static void reader_end(struct reader *rd)
{
	if (rd->threaded) {
		pthread_mutex_lock(&rd->mu);
		rd->stop = 1;
		pthread_cond_broadcast(&rd->cv);
		pthread_mutex_unlock(&rd->mu);
		pthread_join(rd->thread, NULL);
		pthread_cond_destroy(&rd->cv);
		pthread_mutex_destroy(&rd->mu);
		rd->threaded = 0;
	}
	for (int i = 0; i < RING_CHUNKS; i++) {
		free(rd->ring[i].data);
		rd->ring[i].data = NULL;
	}
}

/*
 * Lines are resolved in batches: the names of up to BATCH lines (pointing
 * into the current chunk, so a batch is flushed before the chunk is given
 * back) are hashed first; then, while they are looked up one by one, the
 * slots of the line PREFETCH_AHEAD further on are prefetched, and the
 * long names in the slots of the line half as far on. On a large graph
 * every lookup is a cache miss or two; this lets them overlap (measured
 * better than prefetching the whole batch first).
 */
#define BATCH 128
#define PREFETCH_AHEAD 32 /* lines between a slot's prefetch and its lookup */

struct pending {
	const char *s[2];
	size_t len[2];
	uint64_t h[2];
	uint64_t head[2];
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

/* Start fetching the slots where the names of a line are probed first. A
 * macro: GCC 12 drops the prefetches of an inline function, which it
 * takes for one without effects. */
#if defined(__GNUC__)
#define prefetch_slots(t, pe)                                                  \
	do {                                                                   \
		__builtin_prefetch(&(t)->slots[(pe)->h[0] & (t)->mask]);        \
		__builtin_prefetch(&(t)->slots[(pe)->h[1] & (t)->mask]);        \
	} while (0)
#else
#define prefetch_slots(t, pe) ((void)0)
#endif

static int edge_flush(struct edge_state *st)
{
	struct nametable *t = st->t;
	int nb = st->nbatch;
	st->nbatch = 0;
	if (st->pairs.cap - st->pairs.len < (uint64_t)nb) {
		uint64_t cap = st->pairs.cap ? st->pairs.cap * 2 : 4096;
		if (cap > SIZE_MAX / 2 / sizeof *st->pairs.v)
			return error("out of memory: too many edges");
		uint32_t *nv = util_realloc(st->pairs.v, (size_t)cap * 2, sizeof *nv);
		if (!nv)
			return -1;
		st->pairs.v = nv;
		st->pairs.cap = cap;
	}
	uint32_t *out = st->pairs.v + 2 * st->pairs.len;
	for (int i = 0; i < nb && i < PREFETCH_AHEAD; i++)
		prefetch_slots(t, &st->batch[i]);
	for (int i = 0; i < nb; i++) {
		const struct pending *pe = &st->batch[i];
		if (i + PREFETCH_AHEAD < nb)
			prefetch_slots(t, &st->batch[i + PREFETCH_AHEAD]);
#if defined(__GNUC__)
		/* the slots of the line half as far on are in: fetch their long names */
		for (int k = 0; k < 2 && i + PREFETCH_AHEAD / 2 < nb; k++) {
			const struct pending *pn = &st->batch[i + PREFETCH_AHEAD / 2];
			if (pn->len[k] < SHORT_NAME)
				continue;
			const struct slot *sl = &t->slots[pn->h[k] & t->mask];
			if (sl->id != SLOT_EMPTY && sl->tag == name_tag(pn->len[k], pn->h[k]))
				__builtin_prefetch((const char *)(uintptr_t)sl->key);
		}
#endif
		for (int k = 0; k < 2; k++) {
			int added;
			int64_t id = nametable_intern_h(t, pe->s[k], pe->len[k], pe->h[k],
							pe->head[k], &added);
			if (id < 0)
				return error("%s:%" PRIu64 ": cannot add the node", st->shown,
					     pe->lineno);
			out[2 * i + k] = (uint32_t)id;
		}
		st->pairs.len++;
	}
	return 0;
}

static inline int edge_push(struct edge_state *st, const char *a, size_t la, const char *b,
			    size_t lb, uint64_t lineno)
{
	struct pending *pe = &st->batch[st->nbatch++];
	pe->s[0] = a;
	pe->len[0] = la;
	pe->head[0] = name_head_padded(a, la);
	pe->h[0] = name_hash_head(a, la, pe->head[0]);
	pe->s[1] = b;
	pe->len[1] = lb;
	pe->head[1] = name_head_padded(b, lb);
	pe->h[1] = name_hash_head(b, lb, pe->head[1]);
	pe->lineno = lineno;
	return st->nbatch == BATCH ? edge_flush(st) : 0;
}

/* One line (no newline, no '\r' at the end), by the rules of the header.
 * Lines in chunks only: names may be read 8 bytes at a time. 0 or -1 with
 * error(). */
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
	return edge_push(st, line + b[0], e[0] - b[0], line + b[1], e[1] - b[1], lineno);
}

/* The bytes that matter to the fast path (TAB, newline, NUL) among the 64
 * at p, as bits. */
static inline uint64_t special_bits(const char *p)
{
#if defined(__SSE2__)
	const __m128i tab = _mm_set1_epi8('\t'), nl = _mm_set1_epi8('\n');
	const __m128i zero = _mm_setzero_si128();
	uint64_t bits = 0;
	for (int i = 0; i < 4; i++) {
		__m128i v = _mm_loadu_si128((const __m128i *)(const void *)(p + 16 * i));
		__m128i m = _mm_or_si128(_mm_or_si128(_mm_cmpeq_epi8(v, tab), _mm_cmpeq_epi8(v, nl)),
					 _mm_cmpeq_epi8(v, zero));
		bits |= (uint64_t)(uint32_t)_mm_movemask_epi8(m) << (16 * i);
	}
	return bits;
#else
	uint64_t bits = 0;
	for (int i = 0; i < 64; i++)
		if (p[i] == '\t' || p[i] == '\n' || p[i] == '\0')
			bits |= UINT64_C(1) << i;
	return bits;
#endif
}

/* The index of the lowest set bit of x (x != 0). */
static inline size_t ctz64(uint64_t x)
{
#if defined(__GNUC__)
	return (size_t)__builtin_ctzll(x);
#else
	size_t i = 0;
	while (!(x & 1)) {
		x >>= 1;
		i++;
	}
	return i;
#endif
}

/* A line [s, e) (e at its newline, or the end of the input), tab the
 * first TAB in it or NULL, clean when it holds no NUL and at most one
 * TAB. The usual line, "name TAB name", is taken here; any other goes to
 * edge_line(), so both give the same result. */
static inline int edge_line_at(struct edge_state *st, const char *s, const char *e,
			       const char *tab, int clean, uint64_t lineno)
{
	const char *end = e > s && e[-1] == '\r' ? e - 1 : e;
	/* not a comment, not blank (a blank line would start with a space) */
	if (clean && tab && tab > s && end > tab + 1 && *s != '#' && *s != '%' && *s != ' ')
		return edge_push(st, s, (size_t)(tab - s), tab + 1, (size_t)(end - tab - 1),
				 lineno);
	return edge_line(st, s, (size_t)(end - s), lineno);
}

/* The lines of one chunk: data[0..len), padded, whole lines unless last. */
static int edge_chunk(struct edge_state *st, const char *data, size_t len, int last,
		      uint64_t *lineno)
{
	const char *s = data, *tab = NULL;
	int clean = 1;
	uint64_t ln = *lineno;
	for (size_t base = 0; base < len; base += 64) {
		uint64_t bits = special_bits(data + base);
		if (len - base < 64)
			bits &= (UINT64_C(1) << (len - base)) - 1;
		while (bits) {
			const char *q = data + base + ctz64(bits);
			bits &= bits - 1;
			if (*q == '\n') {
				ln++;
				if (edge_line_at(st, s, q, tab, clean, ln) < 0)
					return -1;
				s = q + 1;
				tab = NULL;
				clean = 1;
			} else if (*q == '\t' && !tab) {
				tab = q;
			} else {
				clean = 0;
			}
		}
	}
	if (last && s < data + len) {
		ln++;
		if (edge_line_at(st, s, data + len, tab, clean, ln) < 0)
			return -1;
	}
	*lineno = ln;
	return 0;
}

static struct graph *load_edges(const char *path, const char *shown)
{
	int regular = 0;
	gzFile gz = open_input(path, shown, &regular);
	if (!gz)
		return NULL;
	struct reader rd;
	reader_start(&rd, gz, regular);
	struct edge_state st = { .shown = shown };
	st.rep.format = GRAPH_FORMAT_EDGES;
	st.t = nametable_new(0);
	if (!st.t)
		goto fail;
	uint64_t lineno = 0;
	for (uint64_t k = 0;; k++) {
		const struct chunk *c = reader_next(&rd, k);
		if (edge_chunk(&st, c->data, c->len, c->last && !c->fail, &lineno) < 0 ||
		    edge_flush(&st) < 0)
			goto fail;
		if (c->fail == FAIL_LINE) {
			error("%s:%" PRIu64 ": expected a line of at most %zu MiB, found a longer one",
			      shown, lineno + 1, LINE_MAX_BYTES >> 20);
			goto fail;
		}
		if (c->fail == FAIL_MEMORY) {
			error("out of memory");
			goto fail;
		}
		if (c->fail == FAIL_READ) {
			int err_no = c->err_no;
			reader_end(&rd); /* the thread no longer uses gz */
			errno = err_no;
			input_error(gz, shown);
			goto fail;
		}
		if (c->last)
			break;
		reader_done_with(&rd, k);
	}
	reader_end(&rd);
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
	reader_end(&rd);
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
	gzFile gz = open_input(path, shown, NULL);
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
