/*
 * libFuzzer entry for checkpoint_read(): the input is a checkpoint
 * file. Its last 8 bytes are overwritten with the FNV-1a checksum of the
 * bytes before them (when there are at least 32), so the fuzzer reaches
 * the parser behind the checksum instead of being stopped by it on every
 * input; the checksum test itself is covered by tests/unit/test_result.c. The
 * bytes go to a memfd, read back through /proc/self/fd, so no disk is
 * touched. A checkpoint that reads must keep the rules the reader promises
 * (checkpoint.h, model.h, graph.h); anything else (a crash, a sanitizer report,
 * a broken rule, a message with a raw control byte) is a finding.
 *
 * Build and run: make fuzz (which builds every harness with clang and runs
 * each for FUZZ_SECONDS on its corpus copied from tests/fuzz/corpus/NAME).
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
#include "coterie/fit.h"
#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/checkpoint.h"
#include "coterie/result.h"
#include "coterie/savepoint.h"
#include "coterie/util.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

static void check_fcsr(const struct fcsr *F, uint32_t n, uint32_t k)
{
	if (F->n != n || F->k != k || F->off[0] != 0)
		__builtin_trap();
	for (uint32_t u = 0; u < n; u++) {
		if (F->off[u] > F->off[u + 1])
			__builtin_trap();
		for (uint64_t i = F->off[u]; i < F->off[u + 1]; i++)
			if (F->e[i].c >= k || !(F->e[i].v > 0 && F->e[i].v <= MODEL_FMAX) ||
			    (i > F->off[u] && F->e[i - 1].c >= F->e[i].c))
				__builtin_trap();
	}
}

static void check_trace(const struct trace_point *t, uint32_t n, uint32_t sweep)
{
	for (uint32_t i = 0; i < n; i++)
		if (t[i].sweep > sweep || (i && t[i].sweep <= t[i - 1].sweep))
			__builtin_trap();
}

static void check(const struct checkpoint *ck)
{
	const struct graph *g = ck->graph;
	if (!g || g->off[0] != 0 || g->off[g->n] != 2 * g->m ||
	    graph_fingerprint(g) != ck->fingerprint)
		__builtin_trap();
	for (uint32_t u = 0; u < g->n; u++) {
		for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++) {
			uint32_t v = g->adj[i];
			if (v >= g->n || v == u || (i > g->off[u] && g->adj[i - 1] >= v))
				__builtin_trap();
		}
		if (!graph_name(g, u) || graph_find(g, graph_name(g, u)) != (int64_t)u)
			__builtin_trap();
	}
	if (ck->params.k < 1 || ck->params.k > MODEL_MAX_K || ck->params.starts < 1 ||
	    ck->plateau_sweep > ck->sweep)
		__builtin_trap();
	check_fcsr(&ck->F, g->n, ck->params.k);
	check_trace(ck->trace, ck->ntrace, ck->sweep);
	const struct fit_savepoint *r = ck->savepoint;
	if (r) {
		if (r->start < 1 || r->start > ck->params.starts || r->best_start >= r->start ||
		    r->phase > FIT_PHASE_RESEED || r->cur.ntrace < 1)
			__builtin_trap();
		check_fcsr(&r->cur.F, g->n, ck->params.k);
		check_trace(r->cur.trace, r->cur.ntrace, r->cur.sweep);
		if (r->best_start) {
			check_fcsr(&r->best.F, g->n, ck->params.k);
			check_trace(r->best.trace, r->best.ntrace, r->best.sweep);
		}
	}
	struct fit_origin o;
	checkpoint_origin(ck, &o);
	if (o.F != &ck->F || o.savepoint != ck->savepoint)
		__builtin_trap();
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
	static unsigned char *buf;
	static size_t cap;
	util_set_sink(fuzz_sink);
	if (size > cap) {
		free(buf);
		cap = size;
		buf = malloc(cap);
		if (!buf)
			abort();
	}
	if (size)
		memcpy(buf, data, size);
	if (size >= 32) {
		uint64_t sum = util_fnv1a(UTIL_FNV_INIT, buf, size - 8);
		for (int i = 0; i < 8; i++)
			buf[size - 8 + i] = (unsigned char)(sum >> (8 * i));
	}
	char path[64];
	fuzz_file(buf, size, path);
	struct checkpoint ck;
	if (checkpoint_read(path, &ck) == 0) {
		check(&ck);
		checkpoint_release(&ck);
	}
	return 0;
}
