/*
 * graph_csr: id pairs into an undirected graph in compressed sparse rows
 * (the rules are in graph.h), the last step of every reader.
 *
 * The edge records arrive as id pairs in one uint32 array; a counting pass
 * by endpoint lays out the rows (each edge in both rows, self-loops
 * dropped), the pairs are scattered into them, each row is sorted
 * (insertion sort for short rows, LSD radix sort on bytes for long ones)
 * and deduplicated in place. So at most two copies of the edges are alive
 * at once (the caller frees the pairs after). From CSR_MIN_PAIRS pairs on,
 * the count, the scatter and the sort run on two threads (see csr_build):
 * the rows are sorted, so the bytes are the same as a serial build's.
 *
 * The thing a newcomer gets wrong: a duplicate record shows up in both
 * rows, so the entries removed are twice the duplicates.
 */
#include "graph-internal.h"

#include <pthread.h>
#include <signal.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/util.h"

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

/* Start fetching, for writing, the counters of the two ids at pair q. A
 * macro: GCC 12 drops the prefetches of an inline function. */
#if defined(__GNUC__)
#define prefetch_counters(cnt, q)                                              \
	do {                                                                   \
		__builtin_prefetch(&(cnt)[(q)[0]], 1);                          \
		__builtin_prefetch(&(cnt)[(q)[1]], 1);                          \
	} while (0)
#else
#define prefetch_counters(cnt, q) ((void)0)
#endif

static void csr_count(struct csr_part *c)
{
	uint64_t loops = 0, *cnt = c->cnt;
	const uint32_t *p = c->pairs;
	for (uint64_t i = c->p0; i < c->p1; i++) {
		uint32_t a = p[2 * i], b = p[2 * i + 1];
		if (i + CSR_PREFETCH < c->p1)
			prefetch_counters(cnt, p + 2 * (i + CSR_PREFETCH));
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
		if (i + CSR_PREFETCH < c->p1)
			prefetch_counters(cur, p + 2 * (i + CSR_PREFETCH));
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
/* Part t counts pairs [npairs t/np, npairs (t+1)/np); each gets n + 1
 * counters. -1 when out of memory (the counters made are freed later by
 * csr_free_counts()). */
static int csr_share_pairs(struct csr_part *parts, int np, const uint32_t *pairs,
			   uint64_t npairs, uint32_t n)
{
	for (int t = 0; t < np; t++) {
		struct csr_part *c = &parts[t];
		c->pairs = pairs;
		c->p0 = npairs * (uint64_t)t / (uint64_t)np;
		c->p1 = npairs * (uint64_t)(t + 1) / (uint64_t)np;
		c->cnt = util_calloc((size_t)n + 1, sizeof *c->cnt);
		if (!c->cnt)
			return -1;
	}
	return 0;
}

static void csr_free_counts(struct csr_part *parts, int np)
{
	for (int t = 0; t < np; t++) {
		free(parts[t].cnt);
		parts[t].cnt = NULL;
	}
}

/* After the count: off[u] = start of row u, and part t's cursor in row u =
 * off[u] + the counts of parts < t. Returns the entries, off[n]. */
static uint64_t csr_lay_out(struct csr_part *parts, int np, uint64_t *off, uint32_t n)
{
	uint64_t total = 0;
	for (uint32_t u = 0; u < n; u++) {
		off[u] = total;
		for (int t = 0; t < np; t++) {
			uint64_t k = parts[t].cnt[u];
			parts[t].cnt[u] = total;
			total += k;
		}
	}
	off[n] = total;
	return total;
}

/* The rows [lo, hi) of part t for the sort step start at the first row at
 * or after t/np of the total entries (a walk over off[], non-decreasing). */
static void csr_share_rows(struct csr_part *parts, int np, uint64_t *off, uint32_t n,
			   uint64_t total)
{
	int passes = 1;
	while (passes < 4 && ((uint64_t)n - 1) >> (8 * passes))
		passes++;
	uint32_t lo = 0;
	for (int t = 0; t < np; t++) {
		struct csr_part *c = &parts[t];
		uint32_t hi = n;
		if (t + 1 < np) {
			uint64_t want = total * (uint64_t)(t + 1) / (uint64_t)np;
			for (hi = lo; hi < n && off[hi] < want; hi++)
				;
		}
		c->off = off;
		c->lo = lo;
		c->hi = hi;
		c->end = off[hi];
		c->passes = passes;
		lo = hi;
	}
}

/* After the sort: move the compacted ranges of the parts together and
 * shift their offsets. Returns the entries kept, or -1 when a part ran out
 * of memory. */
static int64_t csr_compact(struct csr_part *parts, int np, uint64_t *off, uint32_t *adj)
{
	uint64_t w = 0;
	for (int t = 0; t < np; t++) {
		struct csr_part *c = &parts[t];
		if (c->failed)
			return error("out of memory");
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
	return (int64_t)w;
}

/*
 * Fill g->off, g->adj and g->m from npairs id pairs (borrowed), counting
 * self-loops, duplicates and isolated nodes into g->report. g->n is set.
 */
static int csr_build(struct graph *g, const uint32_t *pairs, uint64_t npairs)
{
	uint32_t n = g->n;
	int np = npairs >= CSR_MIN_PAIRS && n > 1 ? CSR_THREADS : 1;
	struct csr_part parts[CSR_THREADS];
	memset(parts, 0, sizeof parts);
	uint64_t *off = util_calloc((size_t)n + 1, sizeof *off);
	uint32_t *adj = NULL;
	if (!off)
		return -1;
	if (csr_share_pairs(parts, np, pairs, npairs, n) < 0)
		goto fail;
	csr_step(parts, np, 0);
	uint64_t loops = 0;
	for (int t = 0; t < np; t++)
		loops += parts[t].loops;
	uint64_t total = csr_lay_out(parts, np, off, n);
	adj = util_malloc(total ? (size_t)total : 1, sizeof *adj);
	if (!adj)
		goto fail;
	util_advise_huge(adj, (size_t)total * sizeof *adj);
	for (int t = 0; t < np; t++)
		parts[t].adj = adj;
	csr_step(parts, np, 1);
	csr_free_counts(parts, np);
	csr_share_rows(parts, np, off, n, total);
	csr_step(parts, np, 2);
	int64_t kept = csr_compact(parts, np, off, adj);
	if (kept < 0)
		goto fail;
	uint64_t w = (uint64_t)kept;
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
	csr_free_counts(parts, np);
	free(adj);
	free(off);
	return -1;
}

struct graph *graph_assemble(struct names *t, const uint32_t *pairs, uint64_t npairs,
			     const struct graph_report *rep, const char *source)
{
	struct graph *g = util_calloc(1, sizeof *g);
	if (!g) {
		names_free(t);
		return NULL;
	}
	g->names = t;
	g->n = names_count(t);
	names_trim(t);
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
