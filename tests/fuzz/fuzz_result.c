/*
 * libFuzzer entry for the readers of a result folder's files other than
 * the checkpoint (fuzz_checkpoint.c has that one): what show, export,
 * draw, explore and a followed fit read. A valid small folder, the fit of
 * `coterie fit tests/data/karate/edges.tsv -k auto --refine --seed 1`
 * (tests/fuzz/result-folder, or $COTERIE_FUZZ_FOLDER), is copied once to
 * a temporary folder; the first byte of the input picks one of its files,
 * the rest replaces that file, and the readers of that file run:
 *
 *   0 memberships.tsv  result_cover_read() (run.json says refined, so it
 *                      reads this file), result_cover_check_folder(),
 *                      figure_read_counts(), stability_read_folders()
 *   1 communities.tsv  result_cover_read()
 *   2 k-selection.tsv  figure_read_kcurve()
 *   3 run.json         all the readers of 0 and 4, stability_read(),
 *                      stability_same_graph(), outdir_check_graph()
 *   4 trace.tsv        figure_read_trace()
 *   5 .coterie.progress follow_progress_read()
 *   6 .coterie.request  follow_request_take()
 *   7 .coterie.commit   result_file() (every reader opens files through
 *                      it), then every reader above
 *
 * and the file is put back. What reads must keep the rules the headers
 * promise (checked below); anything else (a crash, a sanitizer report, a
 * broken rule, a message with a raw control byte) is a finding.
 *
 * Build and run: make fuzz (run from the top folder).
 */
#define _GNU_SOURCE
#include <math.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "fuzz_common.h"
#include "coterie/agm.h"
#include "coterie/checkpoint.h"
#include "coterie/cover.h"
#include "coterie/figure.h"
#include "coterie/follow.h"
#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/names.h"
#include "coterie/outdir.h"
#include "coterie/result.h"
#include "coterie/result_commit.h"
#include "coterie/result_cover.h"
#include "coterie/stability.h"
#include "coterie/util.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

static const char *const files[8] = {
	"memberships.tsv", "communities.tsv", "k-selection.tsv", "run.json",
	"trace.tsv", ".coterie.progress", ".coterie.request", ".coterie.commit",
};

static const char *const kept[] = {
	"memberships.tsv", "communities.tsv", "k-selection.tsv", "run.json",
	"trace.tsv", "checkpoint.cot", ".coterie.manifest",
};
#define NKEPT (sizeof kept / sizeof *kept)

static char dir[256];
static struct checkpoint ck;
static char *orig[NKEPT];
static size_t orig_len[NKEPT];

static void put(const char *name, const void *buf, size_t len)
{
	char path[512];
	snprintf(path, sizeof path, "%s/%s", dir, name);
	FILE *f = fopen(path, "wb");
	if (!f || (len && fwrite(buf, 1, len, f) != len) || fclose(f))
		abort();
}

static char *slurp(const char *path, size_t *len)
{
	FILE *f = fopen(path, "rb");
	if (!f)
		return NULL;
	char *buf = malloc(1 << 20);
	if (!buf)
		abort();
	*len = fread(buf, 1, 1 << 20, f);
	fclose(f);
	return buf;
}

/* The temporary folder removed at exit. */
static void cleanup(void)
{
	char path[512];
	for (size_t i = 0; i < sizeof files / sizeof *files; i++) {
		snprintf(path, sizeof path, "%s/%s", dir, files[i]);
		unlink(path);
	}
	for (size_t i = 0; i < NKEPT; i++) {
		snprintf(path, sizeof path, "%s/%s", dir, kept[i]);
		unlink(path);
	}
	rmdir(dir);
}

/* The template copied into a new temporary folder, its checkpoint read. */
static void setup(void)
{
	const char *from = getenv("COTERIE_FUZZ_FOLDER");
	const char *tmp = getenv("TMPDIR") ? getenv("TMPDIR") : "/tmp";
	if (!from)
		from = "tests/fuzz/result-folder";
	snprintf(dir, sizeof dir, "%s/coterie-fuzz-result-XXXXXX", tmp);
	if (!mkdtemp(dir))
		abort();
	atexit(cleanup);
	for (size_t i = 0; i < NKEPT; i++) {
		char path[512];
		snprintf(path, sizeof path, "%s/%s", from, kept[i]);
		orig[i] = slurp(path, &orig_len[i]);
		if (!orig[i]) {
			fprintf(stderr, "fuzz_result: cannot read %s (run from the top folder, or "
				"set COTERIE_FUZZ_FOLDER)\n", path);
			abort();
		}
		put(kept[i], orig[i], orig_len[i]);
	}
	char path[512];
	snprintf(path, sizeof path, "%s/checkpoint.cot", dir);
	if (checkpoint_read(path, &ck) != 0)
		abort();
}

/* ---- the rules of what reads ---- */

static void check_agm(const struct agm *a, enum result_cover_from from)
{
	const struct graph *g = ck.graph;
	if (a->cover.n != g->n || cover_check(&a->cover) != 0 || from > RESULT_COVER_UNREFINED)
		__builtin_trap();
	for (uint32_t i = 0; i < a->cover.k; i++) {
		const struct agm_community *c = &a->comms[i];
		if (c->id >= ck.F.k || !(c->p >= 0.0 && c->p <= 1.0) ||
		    c->size != cover_size(&a->cover, i))
			__builtin_trap();
		for (uint64_t j = a->cover.off[i]; j < a->cover.off[i + 1]; j++)
			if (!isfinite(a->strength[j]) || a->strength[j] < 0)
				__builtin_trap();
	}
}

static void read_cover(void)
{
	struct agm a;
	enum result_cover_from from;
	double delta = sqrt(model_qeps(ck.epsilon));
	if (result_cover_read(&a, dir, &ck, delta, &from) == 0) {
		check_agm(&a, from);
		result_cover_check_folder(dir, &ck, &a);
		agm_release(&a);
	}
	result_cover_check_folder(dir, &ck, NULL);
}

static void check_counts(const struct figure_counts *c)
{
	uint64_t sum = 0;
	for (uint32_t v = 0; v <= c->max; v++)
		sum += c->count[v];
	if (sum != c->total || (c->max && !c->count[c->max]))
		__builtin_trap();
}

static void read_counts(void)
{
	struct figure_counts sizes, members;
	if (figure_read_counts(dir, &sizes, &members) == 0) {
		check_counts(&sizes);
		check_counts(&members);
		figure_counts_release(&sizes);
		figure_counts_release(&members);
	}
	struct names *nodes = names_new(0);
	struct cover c;
	const char *dirs[1] = { dir };
	if (!nodes)
		abort();
	if (stability_read_folders(dirs, 1, nodes, &c) == 0) {
		if (c.n != names_count(nodes) || cover_check(&c))
			__builtin_trap();
		cover_release(&c);
	}
	names_free(nodes);
}

static void read_trace(void)
{
	struct figure_trace t;
	if (figure_read_trace(dir, &t) == 0) {
		if (t.n < 1)
			__builtin_trap();
		for (uint32_t i = 0; i < t.n; i++)
			if (!isfinite(t.p[i].y) || (i && t.p[i].x <= t.p[i - 1].x))
				__builtin_trap();
		figure_trace_release(&t);
	}
}

static void read_kcurve(void)
{
	struct figure_kcurve k;
	if (figure_read_kcurve(dir, &k) == 0) {
		int chosen_seen = k.chosen == 0;
		if (k.n < 1)
			__builtin_trap();
		for (uint32_t i = 0; i < k.n; i++) {
			if (k.p[i].k < 1 || (i && k.p[i].k <= k.p[i - 1].k) ||
			    !isfinite(k.p[i].loglik) || !isfinite(k.p[i].sd))
				__builtin_trap();
			chosen_seen |= k.p[i].k == k.chosen;
		}
		if (!chosen_seen)
			__builtin_trap();
		figure_kcurve_release(&k);
	}
}

static void read_run(void)
{
	double *score = NULL;
	uint32_t nid, sweep;
	if (stability_read(dir, &score, &nid, &sweep) == 0) {
		if (nid > MODEL_MAX_K || (nid && !score))
			__builtin_trap();
		for (uint32_t i = 0; i < nid; i++)
			if (!isnan(score[i]) && !(score[i] >= 0 && score[i] <= 1))
				__builtin_trap();
		free(score);
	}
	const char *dirs[2] = { dir, dir };
	stability_same_graph(dirs, 2);
	outdir_check_graph(dir, ck.graph, 0);
}

static void read_progress(void)
{
	struct follow_progress p;
	if (follow_progress_read(dir, &p) != 1)
		return;
	if (!p.host[0] || p.ntrace > FOLLOW_TRACE_MAX || p.start > p.starts ||
	    p.state > FIT_FAILED || p.taken > FOLLOW_SAVE || !isfinite(p.written) ||
	    !isfinite(p.seconds) || !isfinite(p.sweeps_per_sec))
		__builtin_trap();
	/* the header's promise: the host name is printable ASCII only */
	for (const char *c = p.host; *c; c++)
		if (*c <= ' ' || *c > '~')
			__builtin_trap();
	for (uint32_t i = 0; i < p.ntrace; i++)
		if ((i && p.trace[i].sweep <= p.trace[i - 1].sweep) ||
		    !isfinite(p.trace[i].seconds) || !isfinite(p.trace[i].loglik))
			__builtin_trap();
}

static void read_commit(void)
{
	result_commit_pending(dir);
	for (size_t i = 0; i < NKEPT; i++) {
		char *path = result_file(dir, kept[i]);
		if (!path || strncmp(path, dir, strlen(dir)) || strchr(path + strlen(dir) + 1, '/'))
			__builtin_trap(); /* always a file of the folder */
		free(path);
	}
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
	util_set_sink(fuzz_sink);
	if (!dir[0])
		setup();
	if (size < 1)
		return 0;
	unsigned mode = data[0] & 7;
	data++;
	size--;
	put(files[mode], data, size);
	switch (mode) {
	case 0:
		read_cover();
		read_counts();
		break;
	case 1:
		read_cover();
		break;
	case 2:
		read_kcurve();
		break;
	case 3:
		read_cover();
		read_counts();
		read_trace();
		read_run();
		break;
	case 4:
		read_trace();
		break;
	case 5:
		read_progress();
		break;
	case 6:
		if ((unsigned)follow_request_take(dir) > FOLLOW_SAVE)
			__builtin_trap();
		break;
	case 7:
		read_commit();
		read_cover();
		read_counts();
		read_trace();
		read_kcurve();
		read_run();
		break;
	}
	/* put the folder back as it was */
	if (mode < 5) {
		put(files[mode], orig[mode], orig_len[mode]);
	} else {
		char path[512];
		snprintf(path, sizeof path, "%s/%s", dir, files[mode]);
		unlink(path);
	}
	return 0;
}
