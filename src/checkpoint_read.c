/*
 * checkpoint_read: reading a checkpoint back (checkpoint.h; the layout is
 * in coterie-files(5)).
 *
 * The idea: slurp the file (a regular file only: a FIFO would block),
 * check the magic, the version and the checksum, then decode the sections
 * from a bounded cursor (struct rd) and validate what they hold with the
 * writer's own validators (checkpoint-internal.h).
 *
 * The one thing a newcomer gets wrong: a checkpoint is hostile input. Every
 * count is checked against the bytes left *before* anything is allocated;
 * after such a check, running short in rd_u32() is a BUG(), not a damaged
 * file, so a new field must be covered by a check first.
 */
#include "checkpoint-internal.h"

#include <errno.h>
#include <fcntl.h>
#include <inttypes.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/savepoint.h"
#include "coterie/util.h"

/* ------------------------------------------------------------------ */
/* The checkpoint reader */

/* A cursor over bytes that are all in memory; every take is bounded. */
struct rd {
	const unsigned char *p;
	size_t left;
};

static int rd_take(struct rd *r, size_t n, const unsigned char **out)
{
	if (n > r->left)
		return -1;
	*out = r->p;
	r->p += n;
	r->left -= n;
	return 0;
}

static uint32_t dec_u32(const unsigned char *b)
{
	uint32_t x = 0;
	for (int i = 3; i >= 0; i--)
		x = (x << 8) | b[i];
	return x;
}

static uint64_t dec_u64(const unsigned char *b)
{
	uint64_t x = 0;
	for (int i = 7; i >= 0; i--)
		x = (x << 8) | b[i];
	return x;
}

static double dec_f64(const unsigned char *b)
{
	uint64_t bits = dec_u64(b);
	double x;
	memcpy(&x, &bits, sizeof x);
	return x;
}

/* Readers for fields whose space the caller has checked (against the
 * section length, or a count against r->left): running short here is a
 * bug in this file, not a damaged checkpoint. */
static const unsigned char *rd_must(struct rd *r, size_t n)
{
	const unsigned char *b;
	if (rd_take(r, n, &b))
		BUG("checkpoint reader overran its bounds (%zu > %zu)", n, r->left);
	return b;
}

static uint32_t rd_u32(struct rd *r)
{
	return dec_u32(rd_must(r, 4));
}

static uint64_t rd_u64(struct rd *r)
{
	return dec_u64(rd_must(r, 8));
}

static double rd_f64(struct rd *r)
{
	return dec_f64(rd_must(r, 8));
}

/* Every failure after the checksum goes through here. */
static int damaged(const char *path, const char *fmt, ...) COTERIE_PRINTF(2, 3);
static int damaged(const char *path, const char *fmt, ...)
{
	char msg[512];
	va_list ap;
	va_start(ap, fmt);
	vsnprintf(msg, sizeof msg, fmt, ap);
	va_end(ap);
	return error("%s is damaged: %s", path, msg);
}

/* Open the next section, which must carry tag; sec covers its payload. */
static int rd_section(const char *path, struct rd *r, const char *tag, struct rd *sec)
{
	const unsigned char *b;
	if (rd_take(r, CK_SECTION_HEAD, &b))
		return damaged(path, "the '%s' section is missing", tag);
	if (memcmp(b, tag, 4) != 0)
		return damaged(path, "expected the '%s' section", tag);
	uint64_t len = dec_u64(b + 4);
	if (len > r->left)
		return damaged(path, "the '%s' section claims %" PRIu64 " bytes, %zu are left",
			       tag, len, r->left);
	sec->p = r->p;
	sec->left = (size_t)len;
	r->p += len;
	r->left -= (size_t)len;
	return 0;
}

static int rd_section_end(const char *path, const struct rd *sec, const char *tag)
{
	if (sec->left != 0)
		return damaged(path, "the '%s' section has %zu bytes too many", tag, sec->left);
	return 0;
}

/* Slurp a regular file. */
static int read_whole(const char *path, unsigned char **data, size_t *size)
{
	*data = NULL;
	*size = 0;
	/* O_NONBLOCK: a FIFO put where the checkpoint should be would block
	 * open() until someone writes to it; it is refused below instead */
	int fd = open(path, O_RDONLY | O_CLOEXEC | O_NONBLOCK);
	if (fd < 0)
		return error("cannot open '%s': %s", path, strerror(errno));
	struct stat st;
	if (fstat(fd, &st) != 0) {
		int e = errno;
		close(fd);
		return error("cannot read '%s': %s", path, strerror(e));
	}
	if (!S_ISREG(st.st_mode)) {
		close(fd);
		return error("cannot read '%s': not a regular file", path);
	}
	if (st.st_size < CK_HEADER_LEN + CK_SUM_LEN) {
		close(fd);
		return error("%s is not a coterie checkpoint (only %lld bytes)", path,
			     (long long)st.st_size);
	}
	if ((uintmax_t)st.st_size > (uintmax_t)(SIZE_MAX / 2)) {
		close(fd);
		return error("%s is too large to be read (%lld bytes)", path,
			     (long long)st.st_size);
	}
	size_t n = (size_t)st.st_size;
	unsigned char *buf = util_malloc(n, 1);
	if (!buf) {
		close(fd);
		return -1;
	}
	size_t got = 0;
	while (got < n) {
		ssize_t k = read(fd, buf + got, n - got);
		if (k < 0 && errno == EINTR)
			continue;
		if (k < 0) {
			int e = errno;
			free(buf);
			close(fd);
			return error("cannot read '%s': %s", path, strerror(e));
		}
		if (k == 0)
			break;
		got += (size_t)k;
	}
	close(fd);
	if (got != n) {
		free(buf);
		return error("cannot read '%s': it changed while being read", path);
	}
	*data = buf;
	*size = n;
	return 0;
}

static int cmp_name(const void *a, const void *b)
{
	return strcmp(*(char *const *)a, *(char *const *)b);
}

/* The m edges of the GRPH section into pairs (2m ids): each u < v < n,
 * in order, none repeated. Returns 0 or -1. */
static int read_edges(const char *path, struct rd *sec, uint32_t n, uint64_t m,
		      uint32_t *pairs)
{
	uint32_t pu = 0, pv = 0;
	for (uint64_t i = 0; i < m; i++) {
		uint32_t u = rd_u32(sec);
		uint32_t v = rd_u32(sec);
		if (u >= n || v >= n) {
			damaged(path, "edge %" PRIu64 " names node %" PRIu32 " of %" PRIu32, i,
				u >= n ? u : v, n);
			return -1;
		}
		if (u == v) {
			damaged(path, "edge %" PRIu64 " is a self-loop on node %" PRIu32, i, u);
			return -1;
		}
		if (u > v) {
			damaged(path, "edge %" PRIu64 " is stored as %" PRIu32 "-%" PRIu32
				", the larger id first", i, u, v);
			return -1;
		}
		if (i > 0 && (u < pu || (u == pu && v <= pv))) {
			damaged(path, "edge %" PRIu64 " (%" PRIu32 "-%" PRIu32
				") is out of order or repeated", i, u, v);
			return -1;
		}
		pairs[2 * i] = u;
		pairs[2 * i + 1] = v;
		pu = u;
		pv = v;
	}
	return 0;
}

/* The GRPH section: names and edges, rebuilt into a graph. */
static int read_graph(const char *path, struct rd *sec, uint64_t fingerprint,
		      struct graph **out)
{
	uint32_t n;
	uint64_t m;
	char why[300];
	*out = NULL;
	if (sec->left < 12)
		return damaged(path, "the graph section is too short");
	n = rd_u32(sec);
	m = rd_u64(sec);
	if (n >= UINT32_MAX)
		return damaged(path, "the graph has %" PRIu32 " nodes", n);
	/* each name takes at least its 4-byte length, each edge 8 bytes */
	if (n > sec->left / 4 || m > (sec->left - (size_t)n * 4) / 8)
		return damaged(path, "the graph claims %" PRIu32 " nodes and %" PRIu64
			       " edges in %zu bytes", n, m, sec->left);

	/* names: lengths first, to size one block for all of them */
	struct rd walk = *sec;
	size_t total = 0;
	for (uint32_t u = 0; u < n; u++) {
		const unsigned char *b;
		if (walk.left < 4)
			return damaged(path, "the name of node %" PRIu32 " runs past the section", u);
		uint32_t len = rd_u32(&walk);
		if (rd_take(&walk, len, &b))
			return damaged(path, "the name of node %" PRIu32 " runs past the section", u);
		if (memchr(b, '\0', len))
			return damaged(path, "the name of node %" PRIu32 " holds a NUL byte", u);
		total += (size_t)len + 1;
	}
	if (m > walk.left / 8)
		return damaged(path, "the graph claims %" PRIu64 " edges in %zu bytes", m, walk.left);

	char *block = util_malloc(total ? total : 1, 1);
	char **names = util_malloc(n, sizeof *names);
	char **sorted = util_malloc(n, sizeof *sorted);
	uint32_t *pairs = util_malloc((size_t)m * 2, sizeof *pairs);
	struct graph *g = NULL;
	int rc = -1;
	if (!block || !names || !sorted || !pairs)
		goto out;
	size_t o = 0;
	for (uint32_t u = 0; u < n; u++) {
		uint32_t len = rd_u32(sec);
		const unsigned char *b = rd_must(sec, len);
		memcpy(block + o, b, len);
		block[o + len] = '\0';
		names[u] = sorted[u] = block + o;
		o += (size_t)len + 1;
	}
	if (n > 1)
		qsort(sorted, n, sizeof *sorted, cmp_name);
	for (uint32_t u = 1; u < n; u++)
		if (strcmp(sorted[u - 1], sorted[u]) == 0) {
			damaged(path, "node name '%s' is given twice",
				util_escape(sorted[u], why, sizeof why, 0));
			goto out;
		}

	if (read_edges(path, sec, n, m, pairs))
		goto out;
	if (rd_section_end(path, sec, "GRPH"))
		goto out;

	g = graph_from_pairs(n, pairs, m, (const char *const *)names);
	if (!g) {
		error("%s: cannot rebuild the graph", path);
		goto out;
	}
	if (g->n != n || g->m != m) {
		damaged(path, "the graph rebuilt has %" PRIu32 " nodes and %" PRIu64
			" edges, the file lists %" PRIu32 " and %" PRIu64, g->n, g->m, n, m);
		goto out;
	}
	uint64_t fp = graph_fingerprint(g);
	if (fp != fingerprint) {
		damaged(path, "the graph's fingerprint is %016" PRIx64 ", the header says %016" PRIx64,
			fp, fingerprint);
		goto out;
	}
	/* the graph came from the checkpoint, not from "(pairs)" */
	char *src = util_strdup(path);
	if (!src)
		goto out;
	free(g->source);
	g->source = src;
	*out = g;
	g = NULL;
	rc = 0;
out:
	graph_free(g);
	free(pairs);
	free(sorted);
	free(names);
	free(block);
	return rc;
}

/* The STRN section, into F (allocated here). */
static int read_strengths(const char *path, struct rd *sec, struct fcsr *F)
{
	uint32_t n, k;
	uint64_t nnz;
	if (sec->left < 16)
		return damaged(path, "the strengths section is too short");
	n = rd_u32(sec);
	k = rd_u32(sec);
	nnz = rd_u64(sec);
	if (k == 0 || k > MODEL_MAX_K)
		return damaged(path, "the strengths have %" PRIu32 " columns, not 1 to %u", k,
			       MODEL_MAX_K);
	if ((uint64_t)n + 1 > sec->left / 8 ||
	    nnz > (sec->left - ((size_t)n + 1) * 8) / CK_ENTRY)
		return damaged(path, "the strengths claim %" PRIu32 " rows and %" PRIu64
			       " entries in %zu bytes", n, nnz, sec->left);
	F->n = n;
	F->k = k;
	F->off = util_malloc((size_t)n + 1, sizeof *F->off);
	F->e = util_malloc((size_t)nnz, sizeof *F->e);
	F->colsum = util_calloc(k, sizeof *F->colsum);
	F->thr = NULL;
	F->sidesum = NULL;
	if (!F->off || !F->e || !F->colsum)
		return -1;
	for (uint32_t u = 0; u <= n; u++)
		F->off[u] = rd_u64(sec);
	if (F->off[n] != nnz)
		return damaged(path, "the last row offset is %" PRIu64 ", not %" PRIu64, F->off[n],
			       nnz);
	for (uint64_t i = 0; i < nnz; i++) {
		F->e[i].c = rd_u32(sec);
		F->e[i].v = rd_f64(sec);
	}
	if (rd_section_end(path, sec, "STRN"))
		return -1;
	char why[256];
	const char *bad = checkpoint_check_strengths(F, why, sizeof why);
	if (bad)
		return damaged(path, "%s", bad);
	for (uint64_t i = 0; i < nnz; i++)
		F->colsum[F->e[i].c] += F->e[i].v;
	return 0;
}

/* The next section, a TRAC one, into a new array. */
static int read_trace(const char *path, struct rd *r, struct trace_point **out, uint32_t *nout)
{
	struct rd sec;
	if (rd_section(path, r, "TRAC", &sec))
		return -1;
	uint32_t nt;
	if (sec.left < 4)
		return damaged(path, "the trace section is too short");
	nt = rd_u32(&sec);
	if (nt > sec.left / CK_TRACE_POINT)
		return damaged(path, "the trace claims %" PRIu32 " points in %zu bytes", nt,
			       sec.left);
	*out = util_malloc(nt ? nt : 1, sizeof **out);
	if (!*out)
		return -1;
	*nout = nt;
	for (uint32_t i = 0; i < nt; i++) {
		(*out)[i].sweep = rd_u32(&sec);
		(*out)[i].seconds = rd_f64(&sec);
		(*out)[i].loglik = rd_f64(&sec);
	}
	return rd_section_end(path, &sec, "TRAC");
}

/* A part of the RSUM section: a TRAC and a STRN section (sweep and
 * plateau_sweep are read by the caller). */
static int read_part(const char *path, struct rd *r, struct fit_part *pt)
{
	struct rd sec;
	if (read_trace(path, r, &pt->trace, &pt->ntrace))
		return -1;
	if (rd_section(path, r, "STRN", &sec))
		return -1;
	return read_strengths(path, &sec, &pt->F);
}

static int read_resume(const char *path, struct rd *sec, struct checkpoint *ck)
{
	struct fit_savepoint *r = util_calloc(1, sizeof *r);
	if (!r)
		return -1;
	ck->savepoint = r;
	if (sec->left < CK_RSUM_HEAD)
		return damaged(path, "the resume section is too short");
	r->start = rd_u32(sec);
	r->phase = rd_u32(sec);
	r->cur.sweep = rd_u32(sec);
	r->cur.plateau_sweep = rd_u32(sec);
	if (read_part(path, sec, &r->cur))
		return -1;
	if (sec->left < 4)
		return damaged(path, "the resume section is too short");
	r->best_start = rd_u32(sec);
	if (r->best_start) {
		if (sec->left < CK_RSUM_BEST)
			return damaged(path, "the resume section is too short");
		r->best.sweep = rd_u32(sec);
		r->best.plateau_sweep = rd_u32(sec);
		r->best_reseeds = rd_u32(sec);
		uint32_t state = rd_u32(sec);
		if (state > FIT_FAILED)
			return damaged(path, "unknown fit state %" PRIu32, state);
		r->best_state = (enum fit_state)state;
		r->best_loglik = rd_f64(sec);
		if (read_part(path, sec, &r->best))
			return -1;
	}
	if (rd_section_end(path, sec, "RSUM"))
		return -1;
	char why[256];
	const char *bad = checkpoint_check_resume(r, ck->graph->n, &ck->params, why, sizeof why);
	if (bad)
		return damaged(path, "%s", bad);
	return 0;
}

/* The optional AWAK section: n flags, one bit each (checkpoint.c). */
static int read_awake(const char *path, struct rd *sec, struct checkpoint *ck)
{
	uint32_t n = ck->graph->n;
	if (sec->left != ((size_t)n + 7) / 8)
		return damaged(path, "the awake section holds %zu bytes for %" PRIu32 " nodes",
			       sec->left, n);
	if (n % 8 && (sec->p[sec->left - 1] >> (n % 8)))
		return damaged(path, "the awake section sets bits past the last node");
	if (!(ck->awake = util_malloc(n ? n : 1, 1)))
		return -1;
	for (uint32_t u = 0; u < n; u++)
		ck->awake[u] = (sec->p[u / 8] >> (u % 8)) & 1u;
	sec->p += sec->left;
	sec->left = 0;
	return rd_section_end(path, sec, "AWAK");
}

/* The optional MODL section: the model and, when flagged, the weights of
 * the graph's edges (in the GRPH section's order). Absent: BigCLAM on an
 * unweighted graph. */
static int read_model(const char *path, struct rd *sec, struct checkpoint *ck)
{
	struct graph *g = ck->graph;
	if (sec->left < 8)
		return damaged(path, "the model section is too short");
	uint32_t model = rd_u32(sec), weighted = rd_u32(sec);
	if (model >= MODEL_KINDS || weighted > 1)
		return damaged(path, "model %" PRIu32 " or weight flag %" PRIu32 " out of range",
			       model, weighted);
	ck->params.model = (enum model_kind)model;
	if (model_kind_sided(ck->params.model)) {
		char why[160];
		if (sec->left < 4)
			return damaged(path, "the model section is too short");
		uint32_t nsend = rd_u32(sec);
		int paired = model_kind_directed(ck->params.model);
		if (graph_check_sides(g, nsend, paired, why, sizeof why))
			return damaged(path, "%s", why);
		g->nsend = nsend;
		g->paired = paired;
	}
	if (!weighted)
		return rd_section_end(path, sec, "MODL");
	if (sec->left / 8 != g->m || sec->left % 8)
		return damaged(path, "the model section holds %zu bytes of weights for %" PRIu64
			       " edges", sec->left, g->m);
	double *w = util_malloc(g->m + 1, sizeof *w);
	if (!w)
		return -1;
	for (uint64_t i = 0; i < g->m; i++) {
		w[i] = rd_f64(sec);
		if (!isfinite(w[i]) || !(w[i] > 0.0)) {
			double bad = w[i];
			free(w);
			return damaged(path, "the weight of edge %" PRIu64 " is %g, not a finite "
				       "number above zero", i, bad);
		}
	}
	int rc = graph_set_edge_weights(g, w);
	free(w);
	return rc;
}

static int read_body(const char *path, struct rd *body, uint32_t version,
		     struct checkpoint *ck)
{
	struct rd sec;
	char why[256];
	const char *bad;

	if (rd_section(path, body, "PARM", &sec))
		return -1;
	size_t plen = version == 1 ? CK_PARM_LEN_V1 : CK_PARM_LEN;
	if (sec.left != plen)
		return damaged(path, "the parameters take %zu bytes, not %zu", sec.left, plen);
	uint32_t threads, pp, starts = 1, norefine = 1;
	struct fit_params *p = &ck->params;
	p->k = rd_u32(&sec);
	threads = rd_u32(&sec);
	p->seed = rd_u64(&sec);
	p->tol = rd_f64(&sec);
	p->patience = rd_u32(&sec);
	p->max_sweeps = rd_u32(&sec);
	p->epsilon = rd_f64(&sec);
	pp = rd_u32(&sec);
	if (version >= 2) {
		starts = rd_u32(&sec);
		norefine = rd_u32(&sec);
	}
	if (threads == 0 || threads > CK_MAX_THREADS || pp > 1 || starts == 0 ||
	    starts > CK_MAX_STARTS || norefine > 1) {
		return damaged(path, "threads %" PRIu32 ", past_plateau %" PRIu32 ", starts %" PRIu32
			       " or no_reseed %" PRIu32 " out of range", threads, pp, starts, norefine);
	}
	p->threads = threads;
	p->past_plateau = (int)pp;
	/* format 1 did not store them; its fits resumed as one start, unrefined */
	p->starts = starts;
	p->no_reseed = (int)norefine;
	if ((bad = checkpoint_check_params(p, why, sizeof why)))
		return damaged(path, "%s", bad);

	if (rd_section(path, body, "STAT", &sec))
		return -1;
	if (sec.left != CK_STAT_LEN)
		return damaged(path, "the state takes %zu bytes, not %d", sec.left, CK_STAT_LEN);
	uint32_t state;
	ck->sweep = rd_u32(&sec);
	ck->plateau_sweep = rd_u32(&sec);
	state = rd_u32(&sec);
	ck->seconds = rd_f64(&sec);
	ck->epsilon = rd_f64(&sec);
	if ((bad = checkpoint_check_state(p, ck->sweep, ck->plateau_sweep, state, ck->seconds, ck->epsilon,
			       why, sizeof why)))
		return damaged(path, "%s", bad);
	ck->state = (enum fit_state)state;

	if (read_trace(path, body, &ck->trace, &ck->ntrace))
		return -1;
	if ((bad = checkpoint_check_trace(ck->trace, ck->ntrace, ck->sweep, why, sizeof why)))
		return damaged(path, "%s", bad);

	if (rd_section(path, body, "GRPH", &sec))
		return -1;
	if (read_graph(path, &sec, ck->fingerprint, &ck->graph))
		return -1;

	if (rd_section(path, body, "STRN", &sec))
		return -1;
	if (read_strengths(path, &sec, &ck->F))
		return -1;
	if (ck->F.n != ck->graph->n)
		return damaged(path, "the strengths have %" PRIu32 " rows for %" PRIu32 " nodes",
			       ck->F.n, ck->graph->n);
	if (ck->F.k != p->k)
		return damaged(path, "the strengths have %" PRIu32 " columns but k is %" PRIu32,
			       ck->F.k, p->k);
	if (version >= 2 && body->left >= CK_SECTION_HEAD && !memcmp(body->p, "RSUM", 4)) {
		if (rd_section(path, body, "RSUM", &sec) || read_resume(path, &sec, ck))
			return -1;
	}
	if (version >= 2 && body->left >= CK_SECTION_HEAD && !memcmp(body->p, "MODL", 4)) {
		if (rd_section(path, body, "MODL", &sec) || read_model(path, &sec, ck))
			return -1;
	}
	if (version >= 3 && body->left >= CK_SECTION_HEAD && !memcmp(body->p, "AWAK", 4)) {
		if (rd_section(path, body, "AWAK", &sec) || read_awake(path, &sec, ck))
			return -1;
	}
	/* format 4 on: the seeding; before it every fit seeded by ego-nets */
	p->seeding = SEED_EGONETS;
	if (version >= 4) {
		if (rd_section(path, body, "SEED", &sec))
			return -1;
		if (sec.left != 4)
			return damaged(path, "the seeding takes %zu bytes, not 4", sec.left);
		uint32_t kind = rd_u32(&sec);
		if (kind >= SEED_KINDS)
			return damaged(path, "seeding %" PRIu32 " is not one this coterie knows",
				       kind);
		p->seeding = (enum seed_kind)kind;
	}
	if (body->left != 0)
		return damaged(path, "%zu unexpected bytes after the last section", body->left);
	return 0;
}

int checkpoint_read(const char *path, struct checkpoint *out)
{
	unsigned char *data;
	size_t size;
	memset(out, 0, sizeof *out);
	if (read_whole(path, &data, &size))
		return -1;
	int rc = -1;
	if (memcmp(data, CK_MAGIC, CK_MAGIC_LEN) != 0) {
		error("%s is not a coterie checkpoint", path);
		goto out;
	}
	uint32_t version = dec_u32(data + 8);
	if (version > CHECKPOINT_VERSION) {
		error("%s was made by a newer coterie (checkpoint format %" PRIu32
		      "; this one reads format %u)", path, version, CHECKPOINT_VERSION);
		goto out;
	}
	if (util_fnv1a(UTIL_FNV_INIT, data, size - CK_SUM_LEN) != dec_u64(data + size - CK_SUM_LEN)) {
		error("%s is damaged (checksum mismatch)", path);
		goto out;
	}
	if (version == 0) {
		damaged(path, "unknown checkpoint format 0");
		goto out;
	}
	if (dec_u32(data + 12) != 0) {
		damaged(path, "the reserved header field is not 0");
		goto out;
	}
	out->fingerprint = dec_u64(data + 16);
	struct rd body = { data + CK_HEADER_LEN, size - CK_HEADER_LEN - CK_SUM_LEN };
	rc = read_body(path, &body, version, out);
out:
	free(data);
	if (rc)
		checkpoint_release(out);
	return rc;
}

void checkpoint_release(struct checkpoint *ck)
{
	if (!ck)
		return;
	graph_free(ck->graph);
	free(ck->trace);
	fcsr_release(&ck->F);
	fit_savepoint_free(ck->savepoint);
	free(ck->awake);
	memset(ck, 0, sizeof *ck);
}

void checkpoint_origin(const struct checkpoint *ck, struct fit_origin *o)
{
	memset(o, 0, sizeof *o);
	o->F = &ck->F;
	o->trace = ck->trace;
	o->ntrace = ck->ntrace;
	o->sweep = ck->sweep;
	o->seconds = ck->seconds;
	o->plateau_sweep = ck->plateau_sweep;
	o->savepoint = ck->savepoint;
	o->awake = ck->awake;
}

int checkpoint_read_fingerprint(const char *path, uint64_t *fingerprint)
{
	int fd = open(path, O_RDONLY | O_CLOEXEC | O_NONBLOCK);
	if (fd < 0)
		return -1;
	unsigned char head[CK_HEADER_LEN];
	struct stat st;
	ssize_t got = fstat(fd, &st) == 0 && S_ISREG(st.st_mode) ? read(fd, head, sizeof head) : -1;
	close(fd);
	if (got != CK_HEADER_LEN || memcmp(head, CK_MAGIC, CK_MAGIC_LEN) != 0)
		return -1;
	*fingerprint = dec_u64(head + 16);
	return 0;
}
