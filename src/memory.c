/*
 * memory: the fit's memory estimate and the process's limit.
 *
 * The estimate follows where fit.c keeps strengths. With E the entries the
 * model may hold (a node in at most min(k, degree + 1) communities: its
 * row update only proposes the communities of its neighbours, and seeding
 * and refinement put it in one more) and C = (n + 1) offsets + E entries +
 * k column sums, the bytes of one compressed copy of the strengths:
 *   the working model       n rows + 2 E entries (rows grow by doubling)
 *   strength copies         COPIES x C: the newest snapshot, one held by a
 *                           reader, one being written as a checkpoint, the
 *                           best start, refinement's saved model, the
 *                           climb kept for an interrupt, and the resume
 *                           point's two
 *   the AGM of a snapshot   per copy: memberships (E x (id + strength)),
 *                           per-node and per-community figures
 *   per thread              scratch of a few arrays of k, plus its share
 *                           of a block of new rows
 *   the fitting thread      a permutation and marks over the nodes
 * The one thing a newcomer gets wrong: the limit may count address space
 * (ulimit -v), where every thread's stack counts in full whether touched
 * or not, and AddressSanitizer's shadow would count terabytes; so the
 * comparison is made against what the process already maps, plus stacks.
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

#define COPIES 8u        /* compressed copies of the strengths alive at once */
#define AGM_COPIES 3u    /* AGMs alive at once (snapshots and the fit's own) */
#define BLOCK_ROWS 2048u /* rows computed together (fit.c, BLOCK_NODES) */
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
	uint64_t n = g->n, k = p->k ? p->k : 1;
	uint64_t entries = 0;
	for (uint32_t u = 0; u < g->n; u++) {
		uint64_t deg = g->off[u + 1] - g->off[u];
		entries = sat_add(entries, deg + 1 < k ? deg + 1 : k);
	}
	uint64_t ent = sizeof(struct fentry);
	uint64_t copy = sat_add(sat_add(sat_mul(n + 1, 8), sat_mul(entries, ent)), sat_mul(k, 8));
	uint64_t model = sat_add(sat_mul(n, sizeof(struct frow)), sat_mul(sat_mul(entries, 2), ent));
	/* an AGM: members and strengths, node figures, community figures */
	uint64_t agm = sat_add(sat_add(sat_mul(entries, 12), sat_mul(n, 16)), sat_mul(k, 128));
	uint64_t threads = p->threads ? p->threads : 1;
	uint64_t per_thread = sat_add(sat_mul(k, 48), sat_mul(BLOCK_ROWS, sat_mul(k < 64 ? k : 64,
										    ent)));
	uint64_t total = model;
	total = sat_add(total, sat_mul(COPIES, copy));
	total = sat_add(total, sat_mul(AGM_COPIES, agm));
	total = sat_add(total, sat_mul(threads, per_thread));
	total = sat_add(total, sat_mul(n, 12)); /* permutation, marks, trace slack */
	return total;
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

int memory_check_fit(const struct graph *g, const struct fit_params *p)
{
	uint64_t limit, mapped = 0, resident = 0;
	const char *what;
	int virt;
	if (memory_limit(&limit, &what, &virt) || process_size(&mapped, &resident))
		return 0;
	uint64_t fit = memory_fit_estimate(g, p);
	uint64_t need;
	if (virt) {
		struct rlimit st;
		uint64_t stack = 8ull << 20;
		if (getrlimit(RLIMIT_STACK, &st) == 0 && st.rlim_cur != RLIM_INFINITY)
			stack = (uint64_t)st.rlim_cur;
		uint64_t threads = (uint64_t)(p->threads ? p->threads : 1) + EXTRA_THREADS;
		need = sat_add(sat_add(mapped, fit), sat_mul(threads, stack));
	} else {
		need = sat_add(resident, fit);
	}
	if (need <= limit)
		return 0;
	char a[32], b[32], c[32];
	human(fit, a, sizeof a);
	human(need, b, sizeof b);
	human(limit, c, sizeof c);
	return error("not enough memory for this fit: it would need about %s more (%s in all, "
		     "an estimate for %" PRIu32 " nodes, %" PRIu64 " edges, k = %u and %u "
		     "thread%s), but %s is %s; try a smaller -k or fewer threads (-j)",
		     a, b, g->n, g->m, p->k, p->threads, p->threads == 1 ? "" : "s", what, c);
}
