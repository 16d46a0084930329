/*
 * checkpoint: the binary file that makes a result reopen and a fit resume
 * without the original graph (the layout is in coterie-files(5)).
 *
 * The idea: the writer and the reader share their validators (check_*()
 * below), so the writer can never save a file the reader would refuse;
 * what cannot be saved soundly is refused before anything is written, and
 * a savepoint that would be refused is left out with a warning rather than
 * losing the save.
 *
 * The one thing a newcomer gets wrong: a checkpoint is hostile input like
 * any other file. The reader slurps the file, checks the checksum, then
 * decodes from a bounded cursor (struct rd) that checks every count
 * against the bytes left *before* allocating; running short in an rd_u32()
 * after such a check is a BUG(), not a damaged file.
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

#include "coterie/atomicfile.h"
#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/result.h"
#include "coterie/result_commit.h"
#include "coterie/savepoint.h"
#include "coterie/util.h"

/* Little-endian encoders, byte by byte. */
static void put_u32(struct atomicfile *w, uint32_t x)
{
	unsigned char b[4];
	for (int i = 0; i < 4; i++)
		b[i] = (unsigned char)(x >> (8 * i));
	atomicfile_write(w, b, 4);
}

static void put_u64(struct atomicfile *w, uint64_t x)
{
	unsigned char b[8];
	for (int i = 0; i < 8; i++)
		b[i] = (unsigned char)(x >> (8 * i));
	atomicfile_write(w, b, 8);
}

static void put_f64(struct atomicfile *w, double x)
{
	uint64_t bits;
	memcpy(&bits, &x, sizeof bits);
	put_u64(w, bits);
}

/* ------------------------------------------------------------------ */
/* Validation shared by the writer and the reader. Each returns NULL when
 * all is well, or a description of the first problem written into why. */

const char *checkpoint_check_params(const struct fit_params *p, char *why, size_t cap)
{
	if (p->k == 0 || p->k > MODEL_MAX_K)
		snprintf(why, cap, "k is %" PRIu32 ", not between 1 and %u", p->k, MODEL_MAX_K);
	else if (p->threads == 0 || p->threads > CK_MAX_THREADS)
		snprintf(why, cap, "thread count %u is not between 1 and %u", p->threads,
			 CK_MAX_THREADS);
	else if (!isfinite(p->tol) || p->tol < 0)
		snprintf(why, cap, "tolerance %g is not a finite number >= 0", p->tol);
	else if (!(p->epsilon >= 0.0 && p->epsilon < 1.0))
		snprintf(why, cap, "background %g is not in [0, 1) (0: the default)", p->epsilon);
	else if (p->past_plateau != 0 && p->past_plateau != 1)
		snprintf(why, cap, "past_plateau is %d, not 0 or 1", p->past_plateau);
	else if (p->starts == 0 || p->starts > CK_MAX_STARTS)
		snprintf(why, cap, "start count %u is not between 1 and %u", p->starts,
			 CK_MAX_STARTS);
	else if (p->no_reseed != 0 && p->no_reseed != 1)
		snprintf(why, cap, "no_reseed is %d, not 0 or 1", p->no_reseed);
	else if ((unsigned)p->seeding >= SEED_KINDS)
		snprintf(why, cap, "seeding %u is not one this coterie knows", (unsigned)p->seeding);
	else if ((unsigned)p->model >= MODEL_KINDS)
		snprintf(why, cap, "model %u is not one this coterie knows", (unsigned)p->model);
	else
		return NULL;
	return why;
}

const char *checkpoint_check_state(const struct fit_params *p, uint32_t sweep,
				   uint32_t plateau_sweep, uint32_t state, double seconds,
				   double epsilon, char *why, size_t cap)
{
	if (sweep > p->max_sweeps)
		snprintf(why, cap, "sweep %" PRIu32 " is past the limit of %" PRIu32 " sweeps",
			 sweep, p->max_sweeps);
	else if (plateau_sweep > sweep)
		snprintf(why, cap, "plateau at sweep %" PRIu32 " after the last sweep %" PRIu32,
			 plateau_sweep, sweep);
	else if (state > FIT_FAILED)
		snprintf(why, cap, "unknown fit state %" PRIu32, state);
	else if (!isfinite(seconds) || seconds < 0)
		snprintf(why, cap, "elapsed time %g is not a finite number >= 0", seconds);
	else if (!(epsilon > 0.0 && epsilon < 1.0))
		snprintf(why, cap, "background %g is not in (0, 1)", epsilon);
	else
		return NULL;
	return why;
}

const char *checkpoint_check_trace(const struct trace_point *t, uint32_t n, uint32_t sweep,
			       char *why, size_t cap)
{
	for (uint32_t i = 0; i < n; i++) {
		if (i > 0 && t[i].sweep <= t[i - 1].sweep) {
			snprintf(why, cap, "trace point %" PRIu32 " (sweep %" PRIu32
				 ") does not follow sweep %" PRIu32, i, t[i].sweep, t[i - 1].sweep);
			return why;
		}
		if (t[i].sweep > sweep) {
			snprintf(why, cap, "trace point %" PRIu32 " is for sweep %" PRIu32
				 ", after the last sweep %" PRIu32, i, t[i].sweep, sweep);
			return why;
		}
		/* every pair's log-probability is <= 0, so their sum is too
		 * (held-out pairs are left out, not added); CK_LOGLIK_SLACK
		 * allows rounding of the running sum near 0 */
		if (!isfinite(t[i].seconds) || t[i].seconds < 0 || !isfinite(t[i].loglik) ||
		    t[i].loglik > CK_LOGLIK_SLACK) {
			snprintf(why, cap, "trace point %" PRIu32 " has time %g and log-likelihood %g"
				 " (a time >= 0 and a log-likelihood <= 0 expected)", i,
				 t[i].seconds, t[i].loglik);
			return why;
		}
	}
	if (n > 0 && t[n - 1].sweep != sweep) {
		snprintf(why, cap, "the trace ends at sweep %" PRIu32 ", not at the last sweep %"
			 PRIu32, t[n - 1].sweep, sweep);
		return why;
	}
	return NULL;
}

/* Strengths: shape, offsets, and every entry. colsum is not read. */
const char *checkpoint_check_strengths(const struct fcsr *F, char *why, size_t cap)
{
	if (F->k == 0 || F->k > MODEL_MAX_K) {
		snprintf(why, cap, "k is %" PRIu32 ", not between 1 and %u", F->k, MODEL_MAX_K);
		return why;
	}
	if (!F->off || (F->off[F->n] > 0 && !F->e)) {
		snprintf(why, cap, "strengths are missing");
		return why;
	}
	if (F->off[0] != 0) {
		snprintf(why, cap, "the first row offset is %" PRIu64 ", not 0", F->off[0]);
		return why;
	}
	for (uint32_t u = 0; u < F->n; u++) {
		/* bounded by the last offset before any entry is looked at: a
		 * later row's offset may be the one that goes back down */
		if (F->off[u + 1] < F->off[u] || F->off[u + 1] > F->off[F->n]) {
			snprintf(why, cap, "row offsets decrease at node %" PRIu32, u);
			return why;
		}
		for (uint64_t i = F->off[u]; i < F->off[u + 1]; i++) {
			uint32_t c = F->e[i].c;
			double v = F->e[i].v;
			if (c >= F->k) {
				snprintf(why, cap, "node %" PRIu32 " has community %" PRIu32
					 " but k is %" PRIu32, u, c, F->k);
				return why;
			}
			if (i > F->off[u] && F->e[i - 1].c >= c) {
				snprintf(why, cap, "the strengths of node %" PRIu32
					 " are not sorted by community", u);
				return why;
			}
			if (!(v > 0.0 && v <= MODEL_FMAX)) {
				snprintf(why, cap, "node %" PRIu32 " has strength %g in community %" PRIu32
					 ", not in (0, %g]", u, v, c, MODEL_FMAX);
				return why;
			}
		}
	}
	return NULL;
}

/* One start's part of a savepoint: a trace ending at its sweep,
 * strengths of n x k. */
static const char *check_part(const struct fit_part *pt, uint32_t n, const struct fit_params *p,
			      const char *what, char *why, size_t cap)
{
	char sub[200];
	const char *bad = NULL;
	uint32_t k = p->k;
	if (pt->ntrace == 0 || !pt->trace)
		bad = "its trace is empty";
	else if (pt->sweep > p->max_sweeps)
		bad = "its last sweep is past the limit of sweeps";
	else if (pt->plateau_sweep > pt->sweep)
		bad = "its plateau comes after its last sweep";
	else if (pt->trace[pt->ntrace - 1].sweep != pt->sweep)
		bad = "its trace does not end at its last sweep";
	else if ((bad = checkpoint_check_trace(pt->trace, pt->ntrace, pt->sweep, sub, sizeof sub)))
		;
	else if ((bad = checkpoint_check_strengths(&pt->F, sub, sizeof sub)))
		;
	else if (pt->F.n != n || pt->F.k != k)
		bad = "its strengths are not of the graph's shape";
	if (!bad)
		return NULL;
	snprintf(why, cap, "%s: %s", what, bad);
	return why;
}

const char *checkpoint_check_resume(const struct fit_savepoint *r, uint32_t n,
				const struct fit_params *p, char *why, size_t cap)
{
	const char *bad;
	if (r->start == 0 || r->start > p->starts)
		snprintf(why, cap, "the interrupted start %" PRIu32 " is not between 1 and %u",
			 r->start, p->starts);
	else if (r->phase != FIT_PHASE_CLIMB && r->phase != FIT_PHASE_RESEED)
		snprintf(why, cap, "unknown phase %" PRIu32 " of the interrupted start", r->phase);
	else if (r->best_start >= r->start)
		snprintf(why, cap, "the best start %" PRIu32 " is not before start %" PRIu32,
			 r->best_start, r->start);
	else if ((bad = check_part(&r->cur, n, p, "the interrupted start", why, cap)))
		return bad;
	else if (!r->best_start)
		return NULL;
	else if (r->best_state != FIT_LEVELLED && r->best_state != FIT_FINISHED)
		snprintf(why, cap, "the best start ended in state %u, not levelled or finished",
			 (unsigned)r->best_state);
	else if ((bad = check_part(&r->best, n, p, "the best start", why, cap)))
		return bad;
	else if (!(r->best_loglik == r->best.trace[r->best.ntrace - 1].loglik))
		snprintf(why, cap, "the best start's log-likelihood is not its trace's last");
	else
		return NULL;
	return why;
}

/* ------------------------------------------------------------------ */
/* The checkpoint writer */

struct ck_args {
	const struct graph *g;
	const struct fit_params *p;
	const struct result_model *m;
	const struct fit_savepoint *savepoint; /* m->savepoint when it is sound, else NULL */
	struct fit_params saved;               /* *p as stored (see stored_params()) */
};

static void put_section(struct atomicfile *w, const char *tag, uint64_t len)
{
	atomicfile_write(w, tag, 4);
	put_u64(w, len);
}

static uint64_t trace_section_len(uint32_t n)
{
	return 4 + (uint64_t)n * CK_TRACE_POINT;
}

static void put_trace_section(struct atomicfile *w, const struct trace_point *t, uint32_t n)
{
	put_section(w, "TRAC", trace_section_len(n));
	put_u32(w, n);
	for (uint32_t i = 0; i < n; i++) {
		put_u32(w, t[i].sweep);
		put_f64(w, t[i].seconds);
		put_f64(w, t[i].loglik);
	}
}

static uint64_t strn_section_len(const struct fcsr *F)
{
	return 4 + 4 + 8 + ((uint64_t)F->n + 1) * 8 + F->off[F->n] * CK_ENTRY;
}

static void put_strn_section(struct atomicfile *w, const struct fcsr *F)
{
	uint64_t nnz = F->off[F->n];
	put_section(w, "STRN", strn_section_len(F));
	put_u32(w, F->n);
	put_u32(w, F->k);
	put_u64(w, nnz);
	for (uint32_t u = 0; u <= F->n; u++)
		put_u64(w, F->off[u]);
	for (uint64_t i = 0; i < nnz; i++) {
		put_u32(w, F->e[i].c);
		put_f64(w, F->e[i].v);
	}
}

/* The optional RSUM section: where an interrupted fit stands. */
static void put_resume_section(struct atomicfile *w, const struct fit_savepoint *r)
{
	uint64_t len = CK_RSUM_HEAD + CK_SECTION_HEAD + trace_section_len(r->cur.ntrace) +
		       CK_SECTION_HEAD + strn_section_len(&r->cur.F) + 4;
	if (r->best_start)
		len += CK_RSUM_BEST + CK_SECTION_HEAD + trace_section_len(r->best.ntrace) +
		       CK_SECTION_HEAD + strn_section_len(&r->best.F);
	put_section(w, "RSUM", len);
	put_u32(w, r->start);
	put_u32(w, r->phase);
	put_u32(w, r->cur.sweep);
	put_u32(w, r->cur.plateau_sweep);
	put_trace_section(w, r->cur.trace, r->cur.ntrace);
	put_strn_section(w, &r->cur.F);
	put_u32(w, r->best_start);
	if (r->best_start) {
		put_u32(w, r->best.sweep);
		put_u32(w, r->best.plateau_sweep);
		put_u32(w, r->best_reseeds);
		put_u32(w, (uint32_t)r->best_state);
		put_f64(w, r->best_loglik);
		put_trace_section(w, r->best.trace, r->best.ntrace);
		put_strn_section(w, &r->best.F);
	}
}

/* The optional MODL section, written only for another model than BigCLAM
 * or a weighted graph (so a BigCLAM checkpoint keeps its bytes): the
 * model, whether weights follow, and the weights in the GRPH section's
 * edge order. */
static void put_model_section(struct atomicfile *w, const struct graph *g,
			      const struct fit_params *p)
{
	int sided = model_kind_sided(p->model);
	put_section(w, "MODL", 8 + (sided ? 4 : 0) + (g->wt ? g->m * 8 : 0));
	put_u32(w, (uint32_t)p->model);
	put_u32(w, g->wt ? 1 : 0);
	if (sided) /* a two-sided graph: its senders come first */
		put_u32(w, g->nsend);
	if (g->wt)
		for (uint32_t u = 0; u < g->n; u++)
			for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++)
				if (g->adj[i] > u)
					put_f64(w, g->wt[i]);
}

/* The optional AWAK section (format 3 on), written when the fit's last
 * sweep left awake flags (sweep.h) for where a resume goes on: one bit a
 * node, node u in bit u % 8 of byte u / 8, the bits past n zero. */
static void put_awake_section(struct atomicfile *w, const struct graph *g, const uint8_t *awake)
{
	uint64_t len = ((uint64_t)g->n + 7) / 8;
	put_section(w, "AWAK", len);
	unsigned char byte = 0;
	for (uint32_t u = 0; u < g->n; u++) {
		if (awake[u])
			byte |= (unsigned char)(1u << (u % 8));
		if (u % 8 == 7 || u + 1 == g->n) {
			atomicfile_write(w, &byte, 1);
			byte = 0;
		}
	}
}

static int fill_checkpoint(struct atomicfile *w, const void *arg)
{
	const struct ck_args *a = arg;
	const struct graph *g = a->g;
	const struct fit_params *p = &a->saved;
	const struct result_model *s = a->m;
	const struct fcsr *F = s->F;

	atomicfile_sum_start(w);
	atomicfile_write(w, CK_MAGIC, CK_MAGIC_LEN);
	put_u32(w, CHECKPOINT_VERSION);
	put_u32(w, 0);
	put_u64(w, graph_fingerprint(g));

	put_section(w, "PARM", CK_PARM_LEN);
	put_u32(w, p->k);
	put_u32(w, p->threads);
	put_u64(w, p->seed);
	put_f64(w, p->tol);
	put_u32(w, p->patience);
	put_u32(w, p->max_sweeps);
	put_f64(w, p->epsilon);
	put_u32(w, (uint32_t)p->past_plateau);
	put_u32(w, p->starts);
	put_u32(w, (uint32_t)p->no_reseed);

	put_section(w, "STAT", CK_STAT_LEN);
	put_u32(w, s->sweep);
	put_u32(w, s->plateau_sweep);
	put_u32(w, (uint32_t)s->state);
	put_f64(w, s->seconds);
	put_f64(w, s->epsilon);

	put_trace_section(w, s->trace, s->ntrace);

	uint64_t glen = 4 + 8 + (uint64_t)g->n * 4 + g->m * 8;
	for (uint32_t u = 0; u < g->n; u++)
		glen += strlen(graph_name(g, u));
	put_section(w, "GRPH", glen);
	put_u32(w, g->n);
	put_u64(w, g->m);
	for (uint32_t u = 0; u < g->n; u++) {
		size_t len = strlen(graph_name(g, u));
		put_u32(w, (uint32_t)len);
		atomicfile_write(w, graph_name(g, u), len);
	}
	uint64_t written = 0;
	for (uint32_t u = 0; u < g->n; u++)
		for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++)
			if (g->adj[i] > u) {
				put_u32(w, u);
				put_u32(w, g->adj[i]);
				written++;
			}
	if (written != g->m)
		return error("cannot write checkpoint: the graph lists %" PRIu64
			     " edges but holds %" PRIu64, g->m, written);

	put_strn_section(w, F);
	if (a->savepoint)
		put_resume_section(w, a->savepoint);
	if (p->model != MODEL_BIGCLAM || g->wt)
		put_model_section(w, g, p);
	if (s->awake)
		put_awake_section(w, g, s->awake);
	/* format 4 on: how the starts are seeded (a later start of a resumed
	 * fit seeds as the first did) */
	put_section(w, "SEED", 4);
	put_u32(w, (uint32_t)p->seeding);

	put_u64(w, atomicfile_sum(w));
	return 0;
}

/* The parameters as stored: a fit resumed with a --max-sweeps below the
 * sweeps it had already run stops at once, as if its limit were those
 * sweeps; that limit is stored, so that "sweep <= max_sweeps" holds in
 * every checkpoint. */
static void stored_params(const struct fit_params *p, const struct result_model *s,
			  struct fit_params *out)
{
	*out = *p;
	uint32_t most = s->sweep;
	const struct fit_savepoint *r = s->savepoint;
	if (r && r->cur.sweep > most)
		most = r->cur.sweep;
	if (r && r->best_start && r->best.sweep > most)
		most = r->best.sweep;
	if (out->max_sweeps < most)
		out->max_sweeps = most;
}

/* Refuse to save what the reader would refuse: 0 or -1. A savepoint
 * the reader would refuse is left out with a warning rather than losing
 * the save (*resume says which). p is the parameters as stored. */
static int checkpoint_ok(const char *path, const struct graph *g, const struct fit_params *p,
			 const struct result_model *s, const struct fit_savepoint **resume)
{
	char why[256];
	const char *bad = NULL;
	if (s->F->n != g->n)
		return error("cannot write checkpoint '%s': the strengths have %" PRIu32
			     " rows for a graph of %" PRIu32 " nodes", path, s->F->n, g->n);
	if (s->F->k != p->k)
		return error("cannot write checkpoint '%s': the strengths have %" PRIu32
			     " columns but k is %" PRIu32, path, s->F->k, p->k);
	if (s->ntrace > 0 && !s->trace)
		return error("cannot write checkpoint '%s': the trace is missing", path);
	for (uint32_t u = 0; u < g->n && !bad; u++)
		if (strlen(graph_name(g, u)) > UINT32_MAX)
			bad = "a node name is longer than 4 GiB";
	if (!bad)
		bad = checkpoint_check_params(p, why, sizeof why);
	if (!bad)
		bad = checkpoint_check_state(p, s->sweep, s->plateau_sweep, (uint32_t)s->state, s->seconds,
				  s->epsilon, why, sizeof why);
	if (!bad)
		bad = checkpoint_check_trace(s->trace, s->ntrace, s->sweep, why, sizeof why);
	if (!bad)
		bad = checkpoint_check_strengths(s->F, why, sizeof why);
	if (bad)
		return error("cannot write checkpoint '%s': %s", path, bad);
	*resume = s->savepoint;
	if (s->savepoint && (bad = checkpoint_check_resume(s->savepoint, g->n, p, why, sizeof why))) {
		warning("'%s' is saved without its savepoint (%s): a resumed fit goes on as "
			"one start", path, bad);
		*resume = NULL;
	}
	return 0;
}

int checkpoint_write(const char *path, const struct graph *g, const struct fit_params *p,
		     const struct result_model *m)
{
	struct ck_args a = { g, p, m, NULL, { 0 } };
	stored_params(p, m, &a.saved);
	if (checkpoint_ok(path, g, &a.saved, m, &a.savepoint))
		return -1;
	return atomicfile_replace(path, fill_checkpoint, &a);
}

int checkpoint_stage(struct result_commit *c, const char *name, const struct graph *g,
		     const struct fit_params *p, const struct result_model *m)
{
	struct ck_args a = { g, p, m, NULL, { 0 } };
	stored_params(p, m, &a.saved);
	if (checkpoint_ok(name, g, &a.saved, m, &a.savepoint))
		return -1;
	return result_commit_stage(c, name, fill_checkpoint, &a);
}
