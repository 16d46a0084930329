/*
 * memory: the fit's memory estimate and the process's limit.
 *
 * The estimate is measured, not derived: what a fit adds to the resident
 * size is a fixed part, a part a node and a part an entry of the "fill",
 * the most strength entries the rows hold at once (in the first sweeps:
 * a node whose row shares no community with a neighbour's takes that
 * neighbour's communities, then most are dropped again). The fill is
 * what a formula of n, degrees, k and threads alone cannot know: at equal
 * n, degrees and k it is 5x larger on a graph whose communities leak. So
 * it is predicted from a leak measure taken before the fit, the share of
 * edges that close no triangle (edges between communities rarely do),
 * with k and n / k; the constants are fitted to the peaks of
 * tests/bench/memory_table.sh and scaled by 1.1 (an estimate far below
 * the peak starts fits that do not fit). The peak is in the first
 * sweeps on most graphs, but at the end (the final AGM index counts every
 * edge times the communities its ends share) on graphs of many edges a
 * node: the estimate is the larger of the two.
 * The one thing a newcomer gets wrong: the limit may count address space
 * (ulimit -v), where every thread's stack counts in full whether touched
 * or not, and AddressSanitizer's shadow would count terabytes; so the
 * comparison is made against what the process already maps, plus stacks.
 */
#include "coterie/memory.h"

#include <ctype.h>
#include <errno.h>
#include <inttypes.h>
#include <malloc.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/resource.h>
#include <unistd.h>

#include "coterie/fit.h"
#include "coterie/graph.h"
#include "coterie/util.h"

#define EXTRA_THREADS 3u /* the fitting thread, the pager, the autosave */

static uint64_t sat_add(uint64_t a, uint64_t b)
{
	return a > UINT64_MAX - b ? UINT64_MAX : a + b;
}

static uint64_t sat_mul(uint64_t a, uint64_t b)
{
	return b && a > UINT64_MAX / b ? UINT64_MAX : a * b;
}

/* Whether the sorted rows a and b share a value (a is the shorter);
 * stops at the first one. */
static int rows_meet(const uint32_t *a, uint64_t na, const uint32_t *b, uint64_t nb)
{
	for (uint64_t i = 0; i < na; i++) {
		uint64_t lo = 0, hi = nb;
		while (lo < hi) {
			uint64_t mid = lo + (hi - lo) / 2;
			if (b[mid] < a[i])
				lo = mid + 1;
			else
				hi = mid;
		}
		if (lo < nb && b[lo] == a[i])
			return 1;
	}
	return 0;
}

#define LEAK_SAMPLE 20000u /* edges looked at for the leak share */

double memory_leak_share(const struct graph *g)
{
	uint64_t m = g->off[g->n] / 2;
	if (!m)
		return 0.0;
	uint64_t stride = m > LEAK_SAMPLE ? m / LEAK_SAMPLE : 1, seen = 0, open = 0, idx = 0;
	for (uint32_t u = 0; u < g->n; u++) {
		for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++) {
			uint32_t v = g->adj[i];
			if (v < u)
				continue;
			if (idx++ % stride)
				continue;
			const uint32_t *a = g->adj + g->off[u], *b = g->adj + g->off[v];
			uint64_t na = g->off[u + 1] - g->off[u], nb = g->off[v + 1] - g->off[v];
			seen++;
			open += na <= nb ? !rows_meet(a, na, b, nb) : !rows_meet(b, nb, a, na);
		}
	}
	return (double)open / (double)seen;
}

/*
 * The fill: the most strength entries the model holds at once, a node on
 * average (the peak of rows in the first sweeps), fitted in logarithms to
 * the measured peaks (DEVELOPERS.md, "The memory estimate against the
 * peak"; tests/bench/memory_table.sh): with lk = ln k, lx = ln(mean
 * degree x leak share) (the edges of a node that close no triangle, at
 * least 0.05) and ln = ln(n / k) (at least 0),
 *   ln fill = F0 + F1 lk + F2 lx + F3 lx lk + F4 ln + F5 ln lk.
 * Capped at k. (It was also capped at twice the mean of min(k, degree +
 * 1), which the fills of 10^4-10^5 nodes never passed; at 10^6 nodes and
 * k 11765, mean degree 20, the first sweep holds 97.5 entries a row, 4.6
 * times min(k, degree + 1), where the formula says 110 and that cap said
 * 42: the estimate was then a third below the peak. Session 6.)
 */
#define F0 (-0.8757)
#define F1 0.1646
#define F2 0.4469
#define F3 0.0744
#define F4 (-0.2024)
#define F5 0.0545
/* Bytes the fit adds beside the resident size at the check, at its two
 * peaks. In the first sweeps (rows full): a fixed part, a part a node and
 * a part an entry of the predicted fill, fitted (least squares over the
 * 32 fits of tests/bench/memory_table.sh at -j 2, the high-water mark
 * after each sweep) with memory_fill()'s prediction itself as the
 * regressor, so that the constants absorb its bias. At the end (the
 * final AGM index: every edge times the communities its ends share, the
 * checkpoint written): the fixed and node parts plus END_BYTES an edge
 * and an entry of the fill; it passes the first on graphs of many edges a
 * node (mean degree 40: 47 MiB at the end against 32 in the sweeps).
 * Session 6 refitted ENTRY_BYTES and END_BYTES together (the others
 * kept; a grid over both, least squares of ln(estimate / peak) over the
 * 64 fits, the two mean-degree-40 ones and planted graphs of 2x10^5 and
 * 10^6 nodes with mixing 0.2, all at --max-sweeps 10), after fitting
 * snapshots stopped copying the rows.
 * The larger of the two is scaled by MARGIN: the fitted rows then lie
 * within -9%..+16% of the peak, the others -15%..+44% (refitted in
 * session 6, DEVELOPERS.md). */
#define MARGIN 1.1
#define FIXED_BYTES 1265838.0 /* the pool, the first snapshot, the trace */
#define NODE_BYTES 80.4        /* rows, offsets, permutation, marks, AGM node figures */
#define ENTRY_BYTES 23.0       /* an entry of the fill: the row (grown by half), the
				* AGM read from it (session 6: fitting snapshots no
				* longer copy the rows; was 35.6 with the copy) */
#define END_BYTES 2.3          /* an edge and an entry of the fill, at the end */
#define THREAD_BYTES 262144.0  /* a further thread's scratch, beside 64 bytes a community */
/* Seeds from clusters (seed_clusters.c, the default) fill the rows far
 * less than ego-nets, on which the fill above was fitted: rows start
 * with one entry, not with every overlapping ego-net's. Measured in
 * session 14 on the leaky planted graphs (mixing 0.2, mean degree 20,
 * leak share 0.51-0.52, so x = mean degree x leak share = 10.3), the
 * fill that the peak RSS implies under the constants above: 11.8 at 2x10^4
 * nodes (k 197), 8.7 at 10^5 (k 1142), 10.2 at 2x10^5 (k 2374), 13.4 at
 * 10^6 (k 11765), against memory_fill()'s 10.6, 29.0, 43.2, 110.3. The
 * fill from clusters is capped at 1.5 x (at least 4): estimates then
 * -5%, +27%, +22% and +9% of the measured peaks (DEVELOPERS.md). */
#define CLUSTER_FILL_PER_LEAK 1.5
#define CLUSTER_FILL_MIN 4.0

/* mean degree x leak share: the neighbours a node has outside triangles */
static double leak_degree(const struct graph *g)
{
	return (double)g->off[g->n] / g->n * memory_leak_share(g);
}

/* memory_fill() with leak_degree() given. */
static double fill_at(const struct graph *g, uint32_t k, double x)
{
	double n = g->n, kk = k;
	double lk = log(kk), lx = log(x > 0.05 ? x : 0.05), ln = log(n > kk ? n / kk : 1.0);
	double fill = exp(F0 + F1 * lk + F2 * lx + F3 * lx * lk + F4 * ln + F5 * ln * lk);
	if (fill > kk)
		fill = kk;
	return fill;
}

double memory_fill(const struct graph *g, uint32_t k)
{
	return g->n && k ? fill_at(g, k, leak_degree(g)) : 0.0;
}

double memory_fill_for(const struct graph *g, const struct fit_params *p)
{
	if (!g->n)
		return 0.0;
	/* the leak share is sampled once for both */
	double x = leak_degree(g), fill = fill_at(g, p->k ? p->k : 1, x);
	if (p->seeding != SEED_CLUSTERS)
		return fill;
	double cap = CLUSTER_FILL_PER_LEAK * x;
	if (cap < CLUSTER_FILL_MIN)
		cap = CLUSTER_FILL_MIN;
	return fill < cap ? fill : cap;
}

uint64_t memory_fit_estimate(const struct graph *g, const struct fit_params *p)
{
	uint32_t k = p->k ? p->k : 1;
	double threads = p->threads > 1 ? p->threads - 1 : 0;
	double fill = memory_fill_for(g, p), base = FIXED_BYTES + NODE_BYTES * g->n;
	double sweeps = base + ENTRY_BYTES * fill * g->n;
	double end = base + END_BYTES * fill * (double)g->m;
	double bytes = (sweeps > end ? sweeps : end) + threads * (THREAD_BYTES + 64.0 * k);
	bytes *= MARGIN;
	return bytes >= 1.8e19 ? UINT64_MAX : (uint64_t)bytes;
}

/* "123", "64M", "2G": bytes; 0 on a bad value. */
static uint64_t parse_bytes(const char *s)
{
	char *end;
	errno = 0;
	unsigned long long v = strtoull(s, &end, 10);
	if (errno || end == s || s[0] == '-')
		return 0;
	uint64_t mul = 1;
	switch (toupper((unsigned char)*end)) {
	case '\0': break;
	case 'K': mul = 1ull << 10; end++; break;
	case 'M': mul = 1ull << 20; end++; break;
	case 'G': mul = 1ull << 30; end++; break;
	default: return 0;
	}
	if (*end)
		return 0;
	return sat_mul(v, mul);
}

/* The first line of a small file as a number of bytes; 0 for "max",
 * a missing file or anything else. */
static uint64_t read_limit_file(const char *path)
{
	FILE *f = fopen(path, "r");
	if (!f)
		return 0;
	char line[64];
	uint64_t v = 0;
	if (fgets(line, sizeof line, f)) {
		line[strcspn(line, "\n")] = '\0';
		v = parse_bytes(line);
	}
	fclose(f);
	return v;
}

/* cgroup v2 memory.max of our own group (from /proc/self/cgroup), else
 * cgroup v1's limit; 0 when none. */
static uint64_t cgroup_limit(void)
{
	FILE *f = fopen("/proc/self/cgroup", "r");
	uint64_t v = 0;
	if (f) {
		char line[1024];
		while (!v && fgets(line, sizeof line, f)) {
			if (strncmp(line, "0::", 3) != 0)
				continue;
			line[strcspn(line, "\n")] = '\0';
			char path[1200];
			snprintf(path, sizeof path, "/sys/fs/cgroup%s/memory.max", line + 3);
			if (strstr(line + 3, "..") == NULL)
				v = read_limit_file(path);
		}
		fclose(f);
	}
	if (!v) {
		v = read_limit_file("/sys/fs/cgroup/memory/memory.limit_in_bytes");
		if (v >= (1ull << 60))
			v = 0; /* v1 says "no limit" with a huge number */
	}
	return v;
}

int memory_limit(uint64_t *bytes, const char **what, int *counts_virtual)
{
	uint64_t best = 0;
	const char *name = NULL;
	int virt = 0;
	long pages = sysconf(_SC_PHYS_PAGES), psize = sysconf(_SC_PAGESIZE);
	if (pages > 0 && psize > 0) {
		best = sat_mul((uint64_t)pages, (uint64_t)psize);
		name = "the machine's physical memory";
	}
	uint64_t cg = cgroup_limit();
	if (cg && (!best || cg < best)) {
		best = cg;
		name = "the memory limit of this process's cgroup";
	}
	static const struct {
		int res;
		const char *name;
	} rl[] = {
		{ RLIMIT_AS, "the address-space limit (ulimit -v)" },
		{ RLIMIT_DATA, "the data-size limit (ulimit -d)" },
	};
	for (size_t i = 0; i < sizeof rl / sizeof rl[0]; i++) {
		struct rlimit r;
		if (getrlimit(rl[i].res, &r) == 0 && r.rlim_cur != RLIM_INFINITY &&
		    (!best || (uint64_t)r.rlim_cur < best)) {
			best = (uint64_t)r.rlim_cur;
			name = rl[i].name;
			virt = 1;
		}
	}
	const char *env = getenv("COTERIE_MEMORY_LIMIT");
	uint64_t ev = env ? parse_bytes(env) : 0;
	if (ev && (!best || ev < best)) {
		best = ev;
		name = "COTERIE_MEMORY_LIMIT";
		virt = 0;
	}
	if (!best)
		return -1;
	*bytes = best;
	*what = name;
	*counts_virtual = virt;
	return 0;
}

/* The process's mapped and resident bytes now (/proc/self/statm). */
static int process_size(uint64_t *mapped, uint64_t *resident)
{
	FILE *f = fopen("/proc/self/statm", "r");
	if (!f)
		return -1;
	unsigned long long size, res;
	int ok = fscanf(f, "%llu %llu", &size, &res) == 2;
	fclose(f);
	long psize = sysconf(_SC_PAGESIZE);
	if (!ok || psize <= 0)
		return -1;
	*mapped = sat_mul(size, (uint64_t)psize);
	*resident = sat_mul(res, (uint64_t)psize);
	return 0;
}

static void human(uint64_t b, char *buf, size_t cap)
{
	if (b >= (1ull << 30))
		snprintf(buf, cap, "%.1f GiB", (double)b / (double)(1ull << 30));
	else if (b >= (1ull << 20))
		snprintf(buf, cap, "%.0f MiB", (double)b / (double)(1ull << 20));
	else
		snprintf(buf, cap, "%.0f KiB", (double)b / 1024.0);
}

/* The bytes a fit of g with p needs beside what the process holds now,
 * against the limit: the estimate plus the resident size, or (a limit of
 * address space) plus everything mapped and every thread's stack. */
static uint64_t need_of(const struct graph *g, const struct fit_params *p, int virt,
			uint64_t mapped, uint64_t resident)
{
	uint64_t fit = memory_fit_estimate(g, p);
	if (!virt)
		return sat_add(resident, fit);
	struct rlimit st;
	uint64_t stack = 8ull << 20;
	if (getrlimit(RLIMIT_STACK, &st) == 0 && st.rlim_cur != RLIM_INFINITY)
		stack = (uint64_t)st.rlim_cur;
	uint64_t threads = (uint64_t)(p->threads ? p->threads : 1) + EXTRA_THREADS;
	return sat_add(sat_add(mapped, fit), sat_mul(threads, stack));
}

/* What would fit instead, into buf: -j 1 at p's k, else the largest k at
 * p's threads (the estimate grows with k, so a bisection finds it). */
static void what_fits(const struct graph *g, const struct fit_params *p, int virt,
		      uint64_t mapped, uint64_t resident, uint64_t limit, char *buf, size_t cap)
{
	struct fit_params q = *p;
	uint32_t lo = 1, hi = p->k; /* need(lo) fits unless lo == 0 below; need(hi) does not */
	q.k = 2;
	if (p->k <= 2 || need_of(g, &q, virt, mapped, resident) > limit) {
		lo = 0;
	} else {
		lo = 2;
		while (hi - lo > 1) {
			q.k = lo + (hi - lo) / 2;
			if (need_of(g, &q, virt, mapped, resident) <= limit)
				lo = q.k;
			else
				hi = q.k;
		}
	}
	q = *p;
	q.threads = 1;
	int one = p->threads > 1 && need_of(g, &q, virt, mapped, resident) <= limit;
	if (one)
		snprintf(buf, cap, "-j 1 would fit at k = %u", p->k);
	else if (lo)
		snprintf(buf, cap, "k = %u is the largest that would fit at %u thread%s", lo,
			 p->threads, p->threads == 1 ? "" : "s");
	else if (p->threads > 1)
		/* threads already started map stacks and arenas of their own,
		 * counted in what the process maps now: fewer may well fit */
		snprintf(buf, cap, "no k of 2 or more would fit at %u threads; try fewer "
			 "threads (-j 1)", p->threads);
	else
		snprintf(buf, cap, "no k of 2 or more would fit at 1 thread; free memory or "
			 "raise the limit");
}

int memory_check_fit(const struct graph *g, const struct fit_params *p)
{
	uint64_t limit, mapped = 0, resident = 0;
	const char *what;
	int virt;
	if (memory_limit(&limit, &what, &virt) || process_size(&mapped, &resident))
		return 0;
	uint64_t need = need_of(g, p, virt, mapped, resident);
	if (need <= limit)
		return 0;
	uint64_t fit = memory_fit_estimate(g, p);
	char a[32], b[32], c[32], alt[160];
	human(fit, a, sizeof a);
	human(need, b, sizeof b);
	human(limit, c, sizeof c);
	what_fits(g, p, virt, mapped, resident, limit, alt, sizeof alt);
	return error("not enough memory for this fit: it would need about %s more (%s in all, "
		     "an estimate for %" PRIu32 " nodes, %" PRIu64 " edges, k = %u and %u "
		     "thread%s), but %s is %s; %s",
		     a, b, g->n, g->m, p->k, p->threads, p->threads == 1 ? "" : "s", what, c, alt);
}

void memory_limit_arenas(void)
{
#ifdef M_ARENA_MAX
	struct rlimit r;
	if (getrlimit(RLIMIT_AS, &r) || r.rlim_cur == RLIM_INFINITY)
		return;
	uint64_t arenas = (uint64_t)r.rlim_cur / (256ull << 20);
	mallopt(M_ARENA_MAX, arenas < 1 ? 1 : arenas > 64 ? 64 : (int)arenas);
#endif
}
