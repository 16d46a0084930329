/*
 * memory: the fit's memory estimate and the process's limit.
 *
 * The estimate is measured, not derived: the peak resident size of short
 * fits (tests in DEVELOPERS.md's table: 10^4 to 3 x 10^6 edges, k 10 to
 * 1000, one and two threads) less what the process held before the fit
 * (the loaded graph) grows with the nodes, and per node with k up to a
 * ceiling: a node ends in a few communities however large k is (about one
 * strength entry per node on a levelled fit), while the rows, the
 * snapshots' AGMs and the allocator's slack cost about NODE_BYTES_MAX
 * bytes a node once k passes a few dozen. So
 *     fit bytes = n x NODE_BYTES_MAX x k / (k + K_HALF)
 *               + threads x (scratch of a few arrays of k + a block)
 *               + FIXED (the allocator's arenas, the trace, the writers)
 * which keeps within 25% of the measured peak over the table.
 * The one thing a newcomer gets wrong: the limit may count address space
 * (ulimit -v), where every thread's stack counts in full whether touched
 * or not (and glibc's per-thread arenas reserve 64 MiB each, but an arena
 * that cannot be mapped is simply not made, so they are not counted), and
 * AddressSanitizer's shadow would count terabytes; so the comparison is
 * made against what the process already maps, plus stacks.
 */
#include "coterie/memory.h"

#include <ctype.h>
#include <errno.h>
#include <inttypes.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/resource.h>
#include <unistd.h>

#include "coterie/fit.h"
#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/util.h"

#define NODE_BYTES_MAX 224u  /* a node's share once k is large (measured) */
#define K_HALF 12u           /* the k at which a node costs half of that */
#define THREAD_BYTES (256u << 10) /* a worker's block buffers (sweep.c) */
#define FIXED_BYTES (2u << 20)    /* arenas, trace, writers */
#define EXTRA_THREADS 3u /* the fitting thread, the pager, the autosave */

static uint64_t sat_add(uint64_t a, uint64_t b)
{
	return a > UINT64_MAX - b ? UINT64_MAX : a + b;
}

static uint64_t sat_mul(uint64_t a, uint64_t b)
{
	return b && a > UINT64_MAX / b ? UINT64_MAX : a * b;
}

uint64_t memory_fit_estimate(const struct graph *g, const struct fit_params *p)
{
	uint64_t k = p->k ? p->k : 1;
	uint64_t threads = p->threads ? p->threads : 1;
	uint64_t per_node = NODE_BYTES_MAX * k / (k + K_HALF);
	uint64_t total = sat_mul(g->n, per_node);
	total = sat_add(total, sat_mul(threads, sat_add(THREAD_BYTES, sat_mul(k, 64))));
	return sat_add(total, FIXED_BYTES);
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

/* What a fit of g with p would need in all, against a limit of the kind
 * virt says, given what the process maps and holds now. */
static uint64_t need_for(const struct graph *g, const struct fit_params *p, int virt,
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

/* What would fit instead, into buf: fewer threads at this k, or the
 * largest k (the estimate grows with k) at one thread. */
static void what_fits(const struct graph *g, const struct fit_params *p, int virt,
		      uint64_t mapped, uint64_t resident, uint64_t limit, char *buf, size_t cap)
{
	struct fit_params q = *p;
	for (q.threads = p->threads > 1 ? p->threads - 1 : 1; q.threads >= 1; q.threads--)
		if (need_for(g, &q, virt, mapped, resident) <= limit) {
			snprintf(buf, cap, "-j %u would fit", q.threads);
			return;
		}
	q.threads = 1;
	uint32_t lo = 0, hi = p->k; /* fits at lo (0: none), not at hi */
	while (hi - lo > 1) {
		uint32_t mid = lo + (hi - lo) / 2;
		q.k = mid;
		if (need_for(g, &q, virt, mapped, resident) <= limit)
			lo = mid;
		else
			hi = mid;
	}
	if (lo)
		snprintf(buf, cap, "-k %u -j 1 would fit", lo);
	else
		snprintf(buf, cap, "not even -k 1 -j 1 would fit");
}

int memory_check_fit(const struct graph *g, const struct fit_params *p)
{
	uint64_t limit, mapped = 0, resident = 0;
	const char *what;
	int virt;
	if (memory_limit(&limit, &what, &virt) || process_size(&mapped, &resident))
		return 0;
	uint64_t fit = memory_fit_estimate(g, p);
	uint64_t need = need_for(g, p, virt, mapped, resident);
	if (need <= limit)
		return 0;
	char a[32], b[32], c[32], instead[64];
	human(fit, a, sizeof a);
	human(need, b, sizeof b);
	human(limit, c, sizeof c);
	what_fits(g, p, virt, mapped, resident, limit, instead, sizeof instead);
	return error("not enough memory for this fit: it would need about %s more (%s in all, "
		     "an estimate for %" PRIu32 " nodes, %" PRIu64 " edges, k = %u and %u "
		     "thread%s), but %s is %s; %s",
		     a, b, g->n, g->m, p->k, p->threads, p->threads == 1 ? "" : "s", what, c,
		     instead);
}
