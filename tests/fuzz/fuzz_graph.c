/*
 * libFuzzer entry for graph_load(): the first byte picks the format (and
 * whether the rest is gzip-compressed first), the rest is written to a
 * temporary file and loaded. A graph that loads must keep the rules of
 * graph.h; anything else (a crash, a sanitizer report, a broken rule) is a
 * finding.
 *
 * Build and run (clang with libFuzzer), from the top folder:
 *   clang -std=c11 -D_POSIX_C_SOURCE=200809L -D_DEFAULT_SOURCE -g -O1 \
 *     -fsanitize=fuzzer,address,undefined -Iinclude $(pkg-config --cflags igraph) \
 *     tests/fuzz/fuzz_graph.c src/graph*.c src/names.c src/util.c \
 *     $(pkg-config --libs igraph zlib) -lm -o build/fuzz_graph
 *   mkdir -p build/fuzz-corpus && ./build/fuzz_graph -max_total_time=60 build/fuzz-corpus
 * Temporary files go to $TMPDIR (default /tmp).
 */
#define _GNU_SOURCE
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include <zlib.h>

#include "fuzz_common.h"
#include "coterie/graph.h"
#include "coterie/util.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

static void check(const struct graph *g)
{
	if (g->off[0] != 0 || g->off[g->n] != 2 * g->m)
		__builtin_trap();
	if (g->report.edges_read != g->m + g->report.self_loops + g->report.duplicates)
		__builtin_trap();
	for (uint32_t u = 0; u < g->n; u++) {
		if (g->off[u] > g->off[u + 1])
			__builtin_trap();
		for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++) {
			uint32_t v = g->adj[i];
			if (v >= g->n || v == u || (i > g->off[u] && g->adj[i - 1] >= v) ||
			    !graph_has_edge(g, v, u))
				__builtin_trap();
		}
		if (!graph_name(g, u) || graph_find(g, graph_name(g, u)) != (int64_t)u)
			__builtin_trap();
	}
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
	static const struct {
		enum graph_format fmt;
		const char *ext;
	} kinds[4] = {
		{ GRAPH_FORMAT_EDGES, "tsv" },
		{ GRAPH_FORMAT_GML, "gml" },
		{ GRAPH_FORMAT_GRAPHML, "graphml" },
		{ GRAPH_FORMAT_PAJEK, "net" },
	};
	if (size < 1)
		return 0;
	unsigned mode = data[0];
	data++;
	size--;
	util_set_sink(fuzz_sink);
	const char *dir = getenv("TMPDIR") ? getenv("TMPDIR") : "/tmp";
	char path[512];
	int gz = (mode >> 2) & 1;
	snprintf(path, sizeof path, "%s/coterie-fuzz-%ld.%s%s", dir, (long)getpid(),
		 kinds[mode & 3].ext, gz ? ".gz" : "");
	unlink(path);
	if (gz) {
		gzFile f = gzopen(path, "wb");
		if (!f)
			return 0;
		if (size)
			gzwrite(f, data, (unsigned)size);
		gzclose(f);
	} else {
		FILE *f = fopen(path, "wb");
		if (!f)
			return 0;
		fwrite(data, 1, size, f);
		fclose(f);
	}
	/* bit 3: let the extension choose the format */
	enum graph_format fmt = (mode >> 3) & 1 ? GRAPH_FORMAT_AUTO : kinds[mode & 3].fmt;
	struct graph *g = graph_load(path, fmt);
	if (g) {
		check(g);
		graph_free(g);
	}
	unlink(path);
	return 0;
}
