/*
 * libFuzzer entry for the cover readers: cover_read(), what `coterie
 * compare TRUTH FOUND` reads (names interned in a shared table), and
 * cover_load(), what reads a cover against a graph's names (a small graph
 * made here, whose names include "node" so a header line is ambiguous).
 * The first byte picks the reader: bit 0 cover_load(), else cover_read()
 * of the rest twice into one table, as compare reads two covers, both
 * raised to the union of their nodes; bit 1 also scores the two covers
 * against each other (what compare does next). The rest is the file,
 * written to a memfd and read back through /proc/self/fd.
 *
 * A cover that reads must pass cover_check() and keep cover.h's rules
 * (n of the table or graph, a label per community); anything else (a
 * crash, a sanitizer report, a broken rule, a message with a raw control
 * byte) is a finding.
 *
 * Build and run: make fuzz (every harness with clang, each for
 * FUZZ_SECONDS on its corpus tests/fuzz/corpus/NAME).
 */
#define _GNU_SOURCE
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/mman.h>
#include <unistd.h>

#include "fuzz_common.h"
#include "coterie/cover.h"
#include "coterie/graph.h"
#include "coterie/names.h"
#include "coterie/score.h"
#include "coterie/util.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

static void check(const struct cover *c, uint32_t n)
{
	if (c->n != n || cover_check(c) != 0 || !c->off || !c->label)
		__builtin_trap();
	for (uint32_t i = 0; i < c->k; i++)
		if (!c->label[i] || !c->label[i][0])
			__builtin_trap();
}

/* A graph whose names a cover is read against: made once. */
static struct graph *small_graph(void)
{
	static const char text[] = "a\tb\nb\tc\nc\ta\nnode\ta\n1\t2\n2\t3\n3\t1\nx#y\t1\n";
	char path[256];
	const char *dir = getenv("TMPDIR") ? getenv("TMPDIR") : "/tmp";
	snprintf(path, sizeof path, "%s/coterie-fuzz-cover-%ld.tsv", dir, (long)getpid());
	FILE *f = fopen(path, "w");
	if (!f)
		abort();
	fputs(text, f);
	fclose(f);
	struct graph *g = graph_load(path, GRAPH_FORMAT_EDGES);
	unlink(path);
	if (!g)
		abort();
	return g;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
	static struct graph *g;
	util_set_sink(fuzz_sink);
	if (!g)
		g = small_graph();
	if (size < 1)
		return 0;
	unsigned mode = data[0];
	data++;
	size--;
	char path[64];
	fuzz_file(data, size, path);
	struct cover a, b;
	if (mode & 1) {
		if (cover_load(&a, path, g) == 0) {
			check(&a, g->n);
			cover_release(&a);
		}
		return 0;
	}
	struct names *nodes = names_new(0);
	if (!nodes)
		abort();
	int ra = cover_read(&a, path, nodes);
	if (ra == 0 && names_count(nodes) != a.n)
		__builtin_trap();
	int rb = cover_read(&b, path, nodes);
	if (ra != rb)
		__builtin_trap(); /* the same bytes read the same way */
	if (ra == 0) {
		uint32_t n = names_count(nodes);
		if (b.n != n || b.k != a.k || a.off[a.k] != b.off[b.k])
			__builtin_trap();
		a.n = n;
		check(&a, n);
		check(&b, n);
		if (cover_looks_like_edges(&a, nodes, NULL) < 0)
			__builtin_trap();
		if (mode & 2) {
			double nmi, omega;
			score_nmi(&a, &b, &nmi);
			score_omega(&a, &b, &omega);
			score_f1(&a, &b, NULL, NULL);
			score_onmi_max(&a, &b);
			score_onmi_lfk(&a, &b);
		}
		cover_release(&a);
		cover_release(&b);
	}
	names_free(nodes);
	return 0;
}
