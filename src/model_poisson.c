/*
 * model_poisson: the Poisson model of Ball, Karrer & Newman, "Efficient
 * and principled method for detecting communities in networks", Phys.
 * Rev. E 84, 036103 (2011), as a second objective behind objective.h.
 *
 * The weight (or multiplicity) w_uv of every pair is Poisson with mean
 * x_uv + q, x_uv = F_u . F_v, where q = model_qeps(epsilon) is the
 * background rate (BKN have none; ours keeps log(x + q) finite for an
 * edge whose ends share no community, as the background does in
 * BigCLAM, and P(weight > 0) = 1 - e^-q = epsilon, so --epsilon keeps
 * its meaning). The log-likelihood is
 *     l(F) = sum_{uv in E} [w_uv log(x_uv + q) - lgamma(w_uv + 1)]
 *            - sum_{u < v} (x_uv + q)
 * (held-out pairs, model.excl, are in neither sum). For integer weights
 * it is the Poisson log-probability of the weights; for other weights the
 * same expression, lgamma standing for log(w!): still <= 0, and the
 * lgamma terms are a constant of the graph, so the fit does not depend on
 * them.
 *
 * The idea: the non-edge term is linear, so with the column sums S the
 * terms of l(F) that hold u are
 *     f_u(r) = sum_{v in N(u)} w_uv log(r . F_v + q) - r . (S - F_u - X_u)
 * (X_u the sum of u's held-out partners' rows), and its gradient
 *     g_u = sum_{v in N(u)} w_uv F_v / (F_u . F_v + q) - (S - F_u - X_u):
 * a row costs O(deg(u) * nnz), as in BigCLAM. Unlike BigCLAM every pair,
 * edges included, pays -x_uv, so the neighbours' rows are not taken out
 * of the linear term. The update is BigCLAM's (model_row.c): a projected
 * gradient step (strengths below the floor to 0, capped at MODEL_FMAX)
 * with Armijo backtracking (model_backtrack()) from a first step that moves no strength by
 * more than STEP_REACH, along the free direction; a trial that clips
 * nothing beyond it is scored from x_v + a d_v (d_v = dir . F_v) without
 * reading the neighbour rows again.
 *
 * Two-sided (directed and two-mode graphs, model.nsend > 0; the graph B
 * of graph_directed.c, arc u -> v the edge u -- nsend + v): the weight of
 * an arc is Poisson with mean F_u . H_v + q and every (sending,
 * receiving) pair pays F_u . H_v + q. A sending row's terms are then
 *     f_u(r) = sum_{v in out(u)} w_uv log(r . H_v + q) - r . (S_H - X_u)
 * with S_H the receiving rows' column sums (model_other_colsum()): u's own
 * row is not on that side, so no "- F_u", and a directed node's own pair
 * (F_u, H_u) is a held-out partner in X_u (fit.c's self pairs in
 * model.excl). Symmetrically for a receiving row with S_F. Two rows of a
 * block share a term only across sides (OBJECTIVE_COUPLING_SIDES).
 *
 * The one thing a newcomer gets wrong: edge terms w log(x + q) can be
 * positive (x + q > 1), so the early exit of BigCLAM's trials (every edge
 * term is negative) does not carry over: every trial sums every term.
 */
#include "coterie/model_poisson.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/objective.h"
#include "coterie/util.h"

#define STEP_REACH 10.0 /* largest change of a strength in a first trial step */
#define X_FLOOR 1e-12   /* smallest x + q used in a gradient weight */

struct poisson_work {
	uint32_t k;
	double *cur, *acc, *oth, *dir, *trial; /* dense over candidates (k each) */
	uint32_t *stamp, *cand; /* stamp[c] = 1 for the candidates c, else 0 */
	uint32_t ncand;
	/* the live candidates, in candidate order: a nonzero strength or a
	 * nonzero free direction (the others stay at zero in every trial and
	 * add exactly zero to its sums, so the trials leave them out) */
	uint32_t *live;
	uint32_t nlive;
	double *xv, *dv; /* per neighbour: x + q, dir . F_v */
	size_t cap;
	struct fentry *out;
	const struct model *m; /* the row being updated, for poisson_trial() */
	const struct graph *g;
	uint32_t u;
	int lin;
	double gain, gmax;
	uint64_t rows, trials, visits, entries;
};

static void *pw_work_new(const struct model *m)
{
	struct poisson_work *w = util_calloc(1, sizeof *w);
	if (!w)
		return NULL;
	size_t k = m->k;
	w->k = m->k;
	double *d = util_calloc(5 * k, sizeof *d);
	uint32_t *ids = util_calloc(3 * k, sizeof *ids);
	w->out = util_calloc(k, sizeof *w->out);
	if (!d || !ids || !w->out) {
		UTIL_FREE_ALL(d, ids, w->out, w);
		return NULL;
	}
	w->cur = d;
	w->acc = d + k;
	w->oth = d + 2 * k;
	w->dir = d + 3 * k;
	w->trial = d + 4 * k;
	w->stamp = ids;
	w->cand = ids + k;
	w->live = ids + 2 * k;
	return w;
}

static void pw_work_free(void *vw)
{
	struct poisson_work *w = vw;
	if (!w)
		return;
	UTIL_FREE_ALL(w->cur, w->stamp, w->out, w->xv, w);
}

static inline void add_cand(struct poisson_work *w, uint32_t c)
{
	if (!w->stamp[c]) {
		w->stamp[c] = 1;
		w->cand[w->ncand++] = c;
		w->cur[c] = w->acc[c] = w->oth[c] = w->trial[c] = 0.0;
	}
}

/* A new row: the last row's marks taken off through its candidate list,
 * u's own entries made candidates and held densely in cur. */
static void begin_row(const struct model *m, uint32_t u, struct poisson_work *w)
{
	while (w->ncand)
		w->stamp[w->cand[--w->ncand]] = 0;
	const struct frow *ru = &m->rows[u];
	for (uint32_t i = 0; i < ru->nnz; i++)
		add_cand(w, ru->e[i].c);
	for (uint32_t i = 0; i < ru->nnz; i++)
		w->cur[ru->e[i].c] = ru->e[i].v;
}

/* The held-out partners' rows: candidates, and their sum in oth (for now). */
static void gather_excl(const struct model *m, uint32_t u, struct poisson_work *w)
{
	if (m->excl)
		for (uint64_t i = m->excl->off[u]; i < m->excl->off[u + 1]; i++) {
			const struct frow *rv = &m->rows[m->excl->adj[i]];
			for (uint32_t j = 0; j < rv->nnz; j++) {
				add_cand(w, rv->e[j].c);
				w->oth[rv->e[j].c] += rv->e[j].v;
			}
		}
}

/* The candidates (u's row, its neighbours' and held-out partners' rows),
 * u's row densely in cur, the held-out partners' sum in oth (for now). */
static void gather(const struct model *m, const struct graph *g, uint32_t u,
		   struct poisson_work *w)
{
	begin_row(m, u, w);
	for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++) {
		const struct frow *rv = &m->rows[g->adj[i]];
		for (uint32_t j = 0; j < rv->nnz; j++)
			add_cand(w, rv->e[j].c);
	}
	gather_excl(m, u, w);
}

static double dense_dot(const double *dense, const struct frow *rv)
{
	double s = 0.0;
	for (uint32_t j = 0; j < rv->nnz; j++)
		s += dense[rv->e[j].c] * rv->e[j].v;
	return s;
}

static int grow(struct poisson_work *w, uint32_t deg)
{
	if (deg <= w->cap)
		return 0;
	size_t cap = deg + deg / 2;
	double *a = util_malloc(2 * cap, sizeof *a);
	if (!a)
		return -1;
	free(w->xv);
	w->xv = a;
	w->dv = a + cap;
	w->cap = cap;
	return 0;
}

/* The linear term's sum for community c of u's row: S - F_u - X_u, or
 * for a two-sided model the other side's S - X_u (oc from
 * model_other_colsum(); cur = F_uc, excl = X_uc). One-mode keeps the
 * order of the subtractions (its bits). */
static inline double others(const struct model *m, const double *oc, uint32_t c, double cur,
			    double excl)
{
	return m->nsend ? oc[c] - excl : oc[c] - cur - excl;
}

/* The candidates (as gather()), the gradient into acc, the "others" S - F_u - X_u into
 * oth, the free direction, x_v + q into xv (when room), gmax; returns
 * f_u at the current row. */
static double gather_gradient(const struct model *m, const struct graph *g, uint32_t u,
			      struct poisson_work *w, int keep)
{
	double f = 0.0, q = m->qeps;
	const double *oc = model_other_colsum(m, u);
	begin_row(m, u, w);
	/* one pass over the neighbour rows gathers the candidates and takes
	 * the dot product (the sums in the order of dense_dot(), so the same
	 * bits as gather() then a second pass), then scatters the gradient
	 * from cache */
	const uint32_t *adj = g->adj + g->off[u];
	uint32_t deg = graph_degree(g, u);
	model_prefetch_first(m, adj, deg); /* the rows of later neighbours fetched ahead */
	for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++) {
		model_prefetch_next(m, adj, deg, (uint32_t)(i - g->off[u]));
		const struct frow *rv = &m->rows[g->adj[i]];
		double x = 0.0;
		for (uint32_t j = 0; j < rv->nnz; j++) {
			add_cand(w, rv->e[j].c);
			x += w->cur[rv->e[j].c] * rv->e[j].v;
		}
		x += q;
		double wt = graph_weight(g, i);
		f += wt * log(x);
		double a = wt / (x > X_FLOOR ? x : X_FLOOR);
		for (uint32_t j = 0; j < rv->nnz; j++)
			w->acc[rv->e[j].c] += a * rv->e[j].v;
		w->entries += rv->nnz;
		if (keep)
			w->xv[i - g->off[u]] = x;
	}
	w->visits += graph_degree(g, u);
	gather_excl(m, u, w);
	w->gmax = 0.0;
	w->nlive = 0;
	for (uint32_t i = 0; i < w->ncand; i++) {
		uint32_t c = w->cand[i];
		double oth = others(m, oc, c, w->cur[c], w->oth[c]);
		w->oth[c] = oth;
		w->acc[c] -= oth;
		f -= w->cur[c] * oth;
		w->dir[c] = w->cur[c] == 0.0 && w->acc[c] <= 0.0 ? 0.0 : w->acc[c];
		if (fabs(w->acc[c]) > w->gmax)
			w->gmax = fabs(w->acc[c]);
		if (w->cur[c] != 0.0 || w->dir[c] != 0.0)
			w->live[w->nlive++] = c;
	}
	return f;
}

/* f_u at the projected step of length a (the row into trial); *gd the
 * gradient times the move, *moved whether anything moved. */
static double trial(const struct model *m, const struct graph *g, uint32_t u,
		    struct poisson_work *w, int lin, double a, double *gd, int *moved)
{
	double f = 0.0, s = 0.0;
	int clipped = 0, mv = 0;
	for (uint32_t i = 0; i < w->nlive; i++) {
		uint32_t c = w->live[i];
		double free_v = w->cur[c] + a * w->dir[c], v = free_v;
		if (v < m->floor)
			v = 0.0;
		if (v > MODEL_FMAX)
			v = MODEL_FMAX;
		w->trial[c] = v;
		s += w->acc[c] * (v - w->cur[c]);
		f -= v * w->oth[c];
		mv |= v != w->cur[c];
		clipped |= v != free_v;
	}
	*gd = s;
	*moved = mv;
	if (!mv)
		return 0.0;
	w->trials++;
	uint32_t deg = graph_degree(g, u);
	int reread = !(lin && !clipped);
	const uint32_t *adj = g->adj + g->off[u];
	if (reread)
		model_prefetch_first(m, adj, deg);
	for (uint32_t i = 0; i < deg; i++) {
		uint64_t at = g->off[u] + i;
		if (reread)
			model_prefetch_next(m, adj, deg, i);
		double x = !reread ? w->xv[i] + a * w->dv[i]
				   : dense_dot(w->trial, &m->rows[g->adj[at]]) + m->qeps;
		/* a step along dir may take x to 0 or below only by rounding
		 * (x is a sum of products of nonnegative numbers): log of a
		 * nonpositive x is -inf, and the trial fails */
		f += graph_weight(g, at) * log(x);
	}
	if (reread)
		w->visits += deg;
	return f;
}

static int cmp_entry(const void *a, const void *b)
{
	return util_cmp_uint(((const struct fentry *)a)->c, ((const struct fentry *)b)->c);
}

/* trial() as a model_trial_fn (model_backtrack()): the row being updated
 * is named in the work buffer. */
static double poisson_trial(void *ctx, double step, double *gd, int *moved)
{
	struct poisson_work *w = ctx;
	return trial(w->m, w->g, w->u, w, w->lin, step, gd, moved);
}

/* objective.h's update_row. */
static int pw_update_row(const struct model *m, const struct graph *g, uint32_t u, void *vw,
		     const struct fentry **out, uint32_t *out_nnz)
{
	struct poisson_work *w = vw;
	uint32_t deg = graph_degree(g, u);
	int lin = grow(w, deg) == 0;
	double f0 = gather_gradient(m, g, u, w, lin);
	w->rows++;
	if (w->ncand == 0)
		return 0;
	if (lin) {
		for (uint32_t i = 0; i < deg; i++)
			w->dv[i] = dense_dot(w->dir, &m->rows[g->adj[g->off[u] + i]]);
		w->visits += deg;
	}
	double a = w->gmax > STEP_REACH ? STEP_REACH / w->gmax : 1.0;
	w->m = m;
	w->g = g;
	w->u = u;
	w->lin = lin;
	if (!model_backtrack(poisson_trial, w, f0, a, &w->gain))
		return 0;
	/* the positive entries, sorted by community (the candidate list
	 * stays whole: the next row takes its marks off through it) */
	uint32_t o = 0;
	for (uint32_t i = 0; i < w->ncand; i++)
		if (w->trial[w->cand[i]] > 0.0)
			w->out[o++] = (struct fentry){ w->cand[i], w->trial[w->cand[i]] };
	qsort(w->out, o, sizeof *w->out, cmp_entry);
	*out = w->out;
	*out_nnz = o;
	return 1;
}

static double pw_work_gain(const void *w)
{
	return ((const struct poisson_work *)w)->gain;
}

/* f0 and f1 are both the exact objective (the floor touches only the
 * gradient's weights), so the gains are the change of l(F). */
static int pw_gain_exact(const struct model *m)
{
	(void)m;
	return 1;
}

static void pw_work_counts(const void *vw, struct objective_counts *c)
{
	const struct poisson_work *w = vw;
	c->rows += w->rows;
	c->trials += w->trials;
	c->visits += w->visits;
	c->entries += w->entries;
}

/* The log-likelihood's terms over nodes [u0, u1) (edges counted from
 * their smaller end), combined in order by pw_part_combine(): the same
 * bits for any split into ranges. */
enum {
	EDGE_LOG,    /* sum over edges of w log(x + qeps) */
	EDGE_LGAMMA, /* sum over edges of lgamma(w + 1) */
	SELF_SQ,     /* sum over nodes of F_u . F_u */
	EXCL_DOT,    /* sum over held-out pairs of x */
	TERMS
};
struct poisson_llpart {
	double t[TERMS];
};

static void pw_part_range(const struct model *m, const struct graph *g, uint32_t u0,
			  uint32_t u1, void *vpart)
{
	struct poisson_llpart *part = vpart;
	memset(part, 0, sizeof *part);
	model_pair_parts(m, u0, u1, &part->t[SELF_SQ], &part->t[EXCL_DOT]);
	for (uint32_t u = u0; u < u1; u++) {
		const struct frow *ru = &m->rows[u];
		/* each edge from its smaller end: the row's part above u */
		uint64_t above = g->off[u] + util_lower_bound_u32(g->adj + g->off[u],
								  graph_degree(g, u), u);
		for (uint64_t i = above; i < g->off[u + 1]; i++) {
			const struct frow *rv = &m->rows[g->adj[i]];
			double x = model_dot(ru->e, ru->nnz, rv->e, rv->nnz);
			double wt = graph_weight(g, i);
			part->t[EDGE_LOG] += wt * log(x + m->qeps);
			part->t[EDGE_LGAMMA] += lgamma(wt + 1.0);
		}
	}
}

static double pw_part_combine(const struct model *m, const struct graph *g, const void *vparts,
			      size_t nparts)
{
	const struct poisson_llpart *parts = vparts;
	double t[TERMS] = { 0.0 };
	for (size_t i = 0; i < nparts; i++)
		for (int j = 0; j < TERMS; j++)
			t[j] += parts[i].t[j];
	double pair_dot = model_all_dot(m, t[SELF_SQ]) - t[EXCL_DOT];
	if (pair_dot < 0.0)
		pair_dot = 0.0; /* rounding only */
	double n = g->n;
	double all = m->nsend ? (double)m->nsend * (n - m->nsend) : 0.5 * n * (n - 1.0);
	double pairs = all - (m->excl ? (double)m->excl->m : 0.0);
	return t[EDGE_LOG] - t[EDGE_LGAMMA] - pair_dot - m->qeps * pairs;
}

double model_poisson_loglik(const struct model *m, const struct graph *g)
{
	struct poisson_llpart part;
	pw_part_range(m, g, 0, g->n, &part);
	return pw_part_combine(m, g, &part, 1);
}

static double pw_row_objective(const struct model *m, const struct graph *g, uint32_t u,
			       const struct fentry *r, uint32_t nnz, void *vw)
{
	struct poisson_work *w = vw;
	gather(m, g, u, w);
	for (uint32_t i = 0; i < nnz; i++)
		add_cand(w, r[i].c);
	for (uint32_t i = 0; i < nnz; i++)
		w->trial[r[i].c] = r[i].v;
	double f = 0.0;
	const double *oc = model_other_colsum(m, u);
	for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++)
		f += graph_weight(g, i) * log(dense_dot(w->trial, &m->rows[g->adj[i]]) + m->qeps);
	for (uint32_t i = 0; i < w->ncand; i++) {
		uint32_t c = w->cand[i];
		f -= w->trial[c] * others(m, oc, c, w->cur[c], w->oth[c]);
		w->trial[c] = 0.0;
	}
	return f;
}

static void pw_row_gradient(const struct model *m, const struct graph *g, uint32_t u, void *vw,
			    double *grad)
{
	struct poisson_work *w = vw;
	gather_gradient(m, g, u, w, 0);
	const double *oc = model_other_colsum(m, u);
	for (uint32_t c = 0; c < m->k; c++)
		grad[c] = -oc[c]; /* outside the candidates F_u and X_u are 0 there */
	for (uint32_t i = 0; i < w->ncand; i++)
		grad[w->cand[i]] = w->acc[w->cand[i]];
}

static const struct objective_ops poisson_ops =
	OBJECTIVE_OPS_INIT("poisson", pw_, struct poisson_llpart, 1);

/* The two-sided form: the same functions (they read model.nsend); only
 * the coupling of a block's rows differs. */
static const struct objective_ops poisson_sided_ops =
	OBJECTIVE_OPS_INIT("directed-poisson", pw_, struct poisson_llpart,
			   OBJECTIVE_COUPLING_SIDES);

const struct objective_ops *model_poisson_objective(void)
{
	return &poisson_ops;
}

const struct objective_ops *model_poisson_sided_objective(void)
{
	return &poisson_sided_ops;
}
