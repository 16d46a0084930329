/*
 * model: the relaxed model's state (BigCLAM and the sided models share
 * it): strengths as sparse rows, the column sums, the background epsilon
 * and the quantities derived from it (qeps = -ln(1 - epsilon), the
 * threshold delta, the floor), the log-likelihood of the whole graph, the
 * copies in and out of an fcsr, and the objective.h table that hands the
 * row update (model_row.c) to the sweep engine.
 *
 * Invariants: a row is sorted by community and holds only strengths in
 * (0, MODEL_FMAX]; colsum[c] is the sum of column c over the rows (over
 * each side's rows, k values per side, in a two-sided model), kept
 * current by model_set_row(), the only writer of rows.
 *
 * The log-likelihood needs no O(n^2) pass: the non-edge dot products are
 * the dot product of all pairs, 1/2 (|colsum|^2 - sum_u |F_u|^2), less
 * those of the edges and of the held-out pairs (model.excl), which are
 * neither edges nor non-edges. The one thing a newcomer gets wrong: in a
 * two-sided model the pairs are sending x receiving only (colsum of one
 * side dotted with the other's), and a snapshot's colsum (model_export())
 * is the whole column's, both sides added.
 */
#include "coterie/model.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>
#ifdef __GLIBC__
#include <malloc.h>
#endif

#include "coterie/graph.h"
#include "coterie/model_poisson.h"
#include "coterie/objective.h"
#include "coterie/util.h"

double model_default_epsilon(const struct graph *g)
{
	double n = g->n;
	double eps = n > 1 ? 2.0 * (double)g->m / (n * (n - 1.0)) : 0.0;
	if (g->nsend) { /* two-sided: links over sending x receiving pairs */
		double pairs = (double)g->nsend * (n - g->nsend) - (g->paired ? g->nsend : 0.0);
		eps = pairs > 0 ? (double)g->m / pairs : 0.0;
	}
	if (!(eps >= 1e-12))
		eps = 1e-12;
	if (eps > 0.5)
		eps = 0.5;
	return eps;
}

double model_qeps(double epsilon)
{
	return -log1p(-epsilon);
}

static void set_epsilon(struct model *m, double epsilon)
{
	m->epsilon = epsilon;
	m->qeps = model_qeps(epsilon);
	m->delta = sqrt(m->qeps);
	m->floor = MODEL_FLOOR * m->delta;
}

int model_init(struct model *m, uint32_t n, uint32_t k, double epsilon)
{
	memset(m, 0, sizeof *m);
	if (k == 0 || k > MODEL_MAX_K)
		return error("the number of communities must be between 1 and %u, not %u",
			     MODEL_MAX_K, k);
	if (!(epsilon >= 0.0 && epsilon < 1.0))
		return error("the background probability must be in [0, 1), not %g", epsilon);
	m->n = n;
	m->k = k;
	set_epsilon(m, epsilon);
	m->rows = util_calloc(n, sizeof *m->rows);
	m->colsum = util_calloc(k, sizeof *m->colsum);
	if (!m->rows || !m->colsum) {
		model_release(m);
		return -1;
	}
	return 0;
}

int model_set_sides(struct model *m, uint32_t nsend)
{
	if (nsend == 0 || nsend >= m->n)
		return error("a two-sided model needs rows on both sides (%u of %u send)", nsend,
			     m->n);
	double *cs = util_calloc(2 * (size_t)m->k, sizeof *cs);
	if (!cs)
		return -1;
	free(m->colsum);
	m->colsum = cs;
	m->nsend = nsend;
	model_recount(m);
	return 0;
}

/* The column sums row u adds to: its side's. */
static inline double *own_colsum(struct model *m, uint32_t u)
{
	return m->nsend && u >= m->nsend ? m->colsum + m->k : m->colsum;
}

/* Whether row entries e sit in the slab (and must not be freed alone). */
static inline int in_slab(const struct model *m, const struct fentry *e)
{
	uintptr_t p = (uintptr_t)e, lo = (uintptr_t)m->slab;
	return m->slab && p >= lo && p < lo + m->slab_len * sizeof *m->slab;
}

void model_release(struct model *m)
{
	if (!m)
		return;
	if (m->rows)
		for (uint32_t u = 0; u < m->n; u++)
			if (!in_slab(m, m->rows[u].e))
				free(m->rows[u].e);
	free(m->slab);
	free(m->rows);
	free(m->colsum);
	memset(m, 0, sizeof *m);
}

int model_set_row(struct model *m, uint32_t u, const struct fentry *e, uint32_t nnz)
{
	struct frow *r = &m->rows[u];
	double *colsum = own_colsum(m, u);
	for (uint32_t i = 0; i < r->nnz; i++)
		colsum[r->e[i].c] -= r->e[i].v;
	if (nnz > r->cap) {
		uint32_t cap = nnz < 4 ? 4 : nnz + nnz / 2;
		if (cap > m->k)
			cap = m->k;
		/* a row in the slab leaves it: its old room stays there */
		struct fentry *ne = in_slab(m, r->e) ? util_malloc(cap, sizeof *ne)
						     : util_realloc(r->e, cap, sizeof *ne);
		if (!ne) {
			for (uint32_t i = 0; i < r->nnz; i++)
				colsum[r->e[i].c] += r->e[i].v;
			return -1;
		}
		r->e = ne;
		r->cap = cap;
	} else if (r->cap > 16 && nnz < r->cap / 4 && !in_slab(m, r->e)) {
		/* rows are densest in the first sweeps: give the room back */
		uint32_t cap = nnz < 4 ? 4 : nnz + nnz / 2;
		struct fentry *ne = realloc(r->e, cap * sizeof *ne);
		if (ne) { /* a failed shrink keeps the larger block */
			r->e = ne;
			r->cap = cap;
		}
	}
	uint32_t o = 0;
	for (uint32_t i = 0; i < nnz; i++) {
		double v = e[i].v;
		if (!(v > 0.0))
			continue;
		if (v > MODEL_FMAX)
			v = MODEL_FMAX;
		r->e[o].c = e[i].c;
		r->e[o].v = v;
		colsum[e[i].c] += v;
		o++;
	}
	r->nnz = o;
	return 0;
}

#define PACK_MEAN_MAX 16u /* model_pack() packs rows of at most this many entries on average */
#define TRIM_MIN_BYTES (1u << 20) /* ... and hands freed rows back when they held this much */

/* The room a row of nnz entries gets in the slab. */
static inline uint32_t slab_room(const struct model *m, uint32_t nnz)
{
	uint32_t room = nnz + 1 + nnz / 4;
	return room < m->k ? room : m->k;
}

void model_pack(struct model *m)
{
	size_t len = 0, nnz = 0, loose = 0;
	for (uint32_t u = 0; u < m->n; u++) {
		const struct frow *r = &m->rows[u];
		len += slab_room(m, r->nnz);
		nnz += r->nnz;
		if (!in_slab(m, r->e))
			loose += r->cap;
	}
	/* rows as dense as in the first sweeps are left where they are: a
	 * slab then would double their memory for a sweep or two, and they
	 * thin out again (DEVELOPERS.md, "Sweeps in runs") */
	if (nnz > (size_t)PACK_MEAN_MAX * m->n || len == 0)
		return;
	struct fentry *slab = util_malloc(len, sizeof *slab);
	if (!slab)
		return;
	size_t at = 0;
	for (uint32_t u = 0; u < m->n; u++) {
		struct frow *r = &m->rows[u];
		uint32_t room = slab_room(m, r->nnz);
		if (r->nnz)
			memcpy(slab + at, r->e, r->nnz * sizeof *slab);
		if (!in_slab(m, r->e))
			free(r->e);
		r->e = slab + at;
		r->cap = room;
		at += room;
	}
	free(m->slab);
	m->slab = slab;
	m->slab_len = len;
#ifdef __GLIBC__
	/* the rows just freed lay among each other on the heap: give their
	 * pages back when they were many (the first pack after the fill of
	 * the first sweeps); later packs free only the rows that outgrew
	 * their room, and trimming every sweep would cost more than it gives */
	if (loose * sizeof *slab >= TRIM_MIN_BYTES && loose >= len / 4)
		malloc_trim(0);
#endif
}

void model_recount(struct model *m)
{
	memset(m->colsum, 0, (m->nsend ? 2 : 1) * (size_t)m->k * sizeof *m->colsum);
	for (uint32_t u = 0; u < m->n; u++) {
		double *colsum = own_colsum(m, u);
		for (uint32_t i = 0; i < m->rows[u].nnz; i++)
			colsum[m->rows[u].e[i].c] += m->rows[u].e[i].v;
	}
}

double model_dot(const struct fentry *a, uint32_t na, const struct fentry *b, uint32_t nb)
{
	double s = 0.0;
	uint32_t i = 0, j = 0;
	while (i < na && j < nb) {
		if (a[i].c == b[j].c)
			s += a[i++].v * b[j++].v;
		else if (a[i].c < b[j].c)
			i++;
		else
			j++;
	}
	return s;
}

/* Maechler (2012), "Accurately computing log(1 - exp(-|a|))", CRAN Rmpfr
 * vignette: log(-expm1(-x)) below ln 2, log1p(-exp(-x)) above. */
double model_log1mexp(double x)
{
	if (x <= 0.0)
		return -INFINITY;
	if (x <= 0.693147180559945309)
		return log(-expm1(-x));
	return log1p(-exp(-x));
}

void model_pair_parts(const struct model *m, uint32_t u0, uint32_t u1, double *self_sq,
		      double *excl_dot)
{
	double ss = 0.0, xd = 0.0;
	for (uint32_t u = u0; u < u1; u++) {
		const struct frow *ru = &m->rows[u];
		for (uint32_t i = 0; i < ru->nnz; i++)
			ss += ru->e[i].v * ru->e[i].v;
		if (m->excl)
			for (uint64_t i = m->excl->off[u]; i < m->excl->off[u + 1]; i++) {
				uint32_t v = m->excl->adj[i];
				if (v > u)
					xd += model_dot(ru->e, ru->nnz, m->rows[v].e, m->rows[v].nnz);
			}
	}
	*self_sq = ss;
	*excl_dot = xd;
}

double model_all_dot(const struct model *m, double self_sq)
{
	if (m->nsend) { /* sending x receiving pairs: S_send . S_recv */
		double d = 0.0;
		for (uint32_t c = 0; c < m->k; c++)
			d += m->colsum[c] * m->colsum[m->k + c];
		return d;
	}
	double col_sq = 0.0;
	for (uint32_t c = 0; c < m->k; c++)
		col_sq += m->colsum[c] * m->colsum[c];
	return 0.5 * (col_sq - self_sq);
}

void model_loglik_range(const struct model *m, const struct graph *g, uint32_t u0, uint32_t u1,
			struct model_llpart *part)
{
	part->edge_log = part->edge_dot = 0.0;
	model_pair_parts(m, u0, u1, &part->self_sq, &part->excl_dot);
	for (uint32_t u = u0; u < u1; u++) {
		const struct frow *ru = &m->rows[u];
		for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++) {
			uint32_t v = g->adj[i];
			if (v < u)
				continue;
			const struct frow *rv = &m->rows[v];
			double x = model_dot(ru->e, ru->nnz, rv->e, rv->nnz);
			part->edge_log += model_log1mexp(x + m->qeps);
			part->edge_dot += x;
		}
	}
}

double model_loglik_combine(const struct model *m, const struct graph *g,
			    const struct model_llpart *parts, size_t nparts)
{
	double edge_log = 0.0, edge_dot = 0.0, self_sq = 0.0, excl_dot = 0.0;
	for (size_t i = 0; i < nparts; i++) {
		edge_log += parts[i].edge_log;
		edge_dot += parts[i].edge_dot;
		self_sq += parts[i].self_sq;
		excl_dot += parts[i].excl_dot;
	}
	double all_dot = model_all_dot(m, self_sq);
	double nonedge_dot = all_dot - edge_dot - excl_dot;
	if (nonedge_dot < 0.0)
		nonedge_dot = 0.0; /* rounding only */
	double n = g->n;
	double pairs = m->nsend ? (double)m->nsend * (n - m->nsend) : 0.5 * n * (n - 1.0);
	double nonedges = pairs - (double)g->m - (m->excl ? (double)m->excl->m : 0.0);
	return edge_log - nonedge_dot - m->qeps * nonedges;
}

double model_loglik(const struct model *m, const struct graph *g)
{
	struct model_llpart part;
	model_loglik_range(m, g, 0, g->n, &part);
	return model_loglik_combine(m, g, &part, 1);
}

int model_export(const struct model *m, struct fcsr *out)
{
	return model_export_order(m, NULL, out);
}

int model_export_order(const struct model *m, const uint32_t *inner, struct fcsr *out)
{
	memset(out, 0, sizeof *out);
	out->n = m->n;
	out->k = m->k;
	out->off = util_malloc((size_t)m->n + 1, sizeof *out->off);
	out->colsum = util_malloc(m->k, sizeof *out->colsum);
	if (!out->off || !out->colsum)
		goto fail;
	uint64_t nnz = 0;
	out->off[0] = 0;
	for (uint32_t u = 0; u < m->n; u++) {
		nnz += m->rows[inner ? inner[u] : u].nnz;
		out->off[u + 1] = nnz;
	}
	out->e = util_malloc(nnz, sizeof *out->e);
	if (!out->e)
		goto fail;
	for (uint32_t u = 0; u < m->n; u++) {
		const struct frow *r = &m->rows[inner ? inner[u] : u];
		if (r->nnz)
			memcpy(out->e + out->off[u], r->e, r->nnz * sizeof *out->e);
	}
	memcpy(out->colsum, m->colsum, m->k * sizeof *out->colsum);
	if (m->nsend) /* a snapshot's colsum is the whole column's */
		for (uint32_t c = 0; c < m->k; c++)
			out->colsum[c] += m->colsum[m->k + c];
	return 0;
fail:
	fcsr_release(out);
	return -1;
}

int model_import(struct model *m, const struct fcsr *in)
{
	return model_import_order(m, in, NULL);
}

int model_import_order(struct model *m, const struct fcsr *in, const uint32_t *inner)
{
	if (in->n != m->n || in->k != m->k)
		return error("saved strengths are %u x %u, the model is %u x %u", in->n, in->k,
			     m->n, m->k);
	for (uint32_t u = 0; u < m->n; u++)
		if (model_set_row(m, inner ? inner[u] : u, in->e + in->off[u],
				  (uint32_t)(in->off[u + 1] - in->off[u])))
			return -1;
	model_recount(m);
	return 0;
}

/* ---- the seam (objective.h) ---- */

static void *ops_work_new(const struct model *m)
{
	return model_work_new(m->k);
}

static void ops_work_free(void *w)
{
	model_work_free(w);
}

static int ops_update_row(const struct model *m, const struct graph *g, uint32_t u, void *w,
			  const struct fentry **out, uint32_t *out_nnz)
{
	return model_update_row(m, g, u, w, out, out_nnz);
}

static double ops_work_gain(const void *w)
{
	return model_work_gain(w);
}

static void ops_work_counts(const void *vw, struct objective_counts *c)
{
	uint64_t rows, trials, visits;
	model_work_counts(vw, &rows, &trials, &visits);
	c->rows += rows;
	c->trials += trials;
	c->visits += visits;
	c->entries += model_work_entries(vw);
}

static void ops_part_range(const struct model *m, const struct graph *g, uint32_t u0, uint32_t u1,
			   void *part)
{
	model_loglik_range(m, g, u0, u1, part);
}

static double ops_part_combine(const struct model *m, const struct graph *g, const void *parts,
			       size_t nparts)
{
	return model_loglik_combine(m, g, parts, nparts);
}

static double ops_row_objective(const struct model *m, const struct graph *g, uint32_t u,
				const struct fentry *r, uint32_t nnz, void *w)
{
	return model_row_objective(m, g, u, r, nnz, w);
}

static void ops_row_gradient(const struct model *m, const struct graph *g, uint32_t u, void *w,
			     double *grad)
{
	model_row_gradient(m, g, u, w, grad);
}

static int ops_gain_exact(const struct model *m)
{
	return model_gain_exact(m);
}

static const struct objective_ops bigclam_ops =
	OBJECTIVE_OPS_INIT("bigclam", ops_, struct model_llpart, 1);

/* A two-sided model (model_directed.h) is BigCLAM's row update on the
 * sending/receiving rows: only the coupling of a block's rows differs. */
static const struct objective_ops sided_ops =
	OBJECTIVE_OPS_INIT("directed", ops_, struct model_llpart, OBJECTIVE_COUPLING_SIDES);

const struct objective_ops *model_objective(void)
{
	return &bigclam_ops;
}

const char *model_kind_name(enum model_kind kind)
{
	switch (kind) {
	case MODEL_BIGCLAM: return "bigclam";
	case MODEL_POISSON: return "poisson";
	case MODEL_DIRECTED: return "directed";
	case MODEL_TWO_MODE: return "two-mode";
	case MODEL_DIRECTED_POISSON: return "directed-poisson";
	case MODEL_TWO_MODE_POISSON: return "two-mode-poisson";
	default: return "unknown";
	}
}

const struct objective_ops *model_objective_of(enum model_kind kind)
{
	switch (kind) {
	case MODEL_BIGCLAM: return model_objective();
	case MODEL_POISSON: return model_poisson_objective();
	case MODEL_DIRECTED:
	case MODEL_TWO_MODE: return &sided_ops;
	case MODEL_DIRECTED_POISSON:
	case MODEL_TWO_MODE_POISSON: return model_poisson_sided_objective();
	default: return NULL;
	}
}
