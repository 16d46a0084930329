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
 * of the linear term. The update is BigCLAM's (model.c): a projected
 * gradient step (strengths below the floor to 0, capped at MODEL_FMAX)
 * with Armijo backtracking from a first step that moves no strength by
 * more than STEP_REACH, along the free direction; a trial that clips
 * nothing beyond it is scored from x_v + a d_v (d_v = dir . F_v) without
 * reading the neighbour rows again.
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

#define ARMIJO_SIGMA 1e-4
#define ARMIJO_TRIES 16
#define STEP_REACH 10.0 /* largest change of a strength in a first trial step */
#define X_FLOOR 1e-12   /* smallest x + q used in a gradient weight */

struct poisson_work {
	uint32_t k;
	double *cur, *acc, *oth, *dir, *trial; /* dense over candidates (k each) */
	uint32_t *stamp, *cand;
	uint32_t epoch, ncand;
	double *xv, *dv; /* per neighbour: x + q, dir . F_v */
	size_t cap;
	struct fentry *out;
	double gain, gmax;
	uint64_t rows, trials, visits, entries;
};

static void *pw_new(const struct model *m)
{
	struct poisson_work *w = util_calloc(1, sizeof *w);
	if (!w)
		return NULL;
	size_t k = m->k;
	w->k = m->k;
	double *d = util_calloc(5 * k, sizeof *d);
	uint32_t *ids = util_calloc(2 * k, sizeof *ids);
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
	return w;
}

static void pw_free(void *vw)
{
	struct poisson_work *w = vw;
	if (!w)
		return;
	UTIL_FREE_ALL(w->cur, w->stamp, w->out, w->xv, w);
}

static inline void add_cand(struct poisson_work *w, uint32_t c)
{
	if (w->stamp[c] != w->epoch) {
		w->stamp[c] = w->epoch;
		w->cand[w->ncand++] = c;
		w->cur[c] = w->acc[c] = w->oth[c] = w->trial[c] = 0.0;
	}
}

/* The candidates (u's row, its neighbours' and held-out partners' rows),
 * u's row densely in cur, the held-out partners' sum in oth (for now). */
static void gather(const struct model *m, const struct graph *g, uint32_t u,
		   struct poisson_work *w)
{
	if (++w->epoch == 0) {
		memset(w->stamp, 0, w->k * sizeof *w->stamp);
		w->epoch = 1;
	}
	w->ncand = 0;
	const struct frow *ru = &m->rows[u];
	for (uint32_t i = 0; i < ru->nnz; i++) {
		add_cand(w, ru->e[i].c);
		w->cur[ru->e[i].c] = ru->e[i].v;
	}
	for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++) {
		const struct frow *rv = &m->rows[g->adj[i]];
		for (uint32_t j = 0; j < rv->nnz; j++)
			add_cand(w, rv->e[j].c);
	}
	if (m->excl)
		for (uint64_t i = m->excl->off[u]; i < m->excl->off[u + 1]; i++) {
			const struct frow *rv = &m->rows[m->excl->adj[i]];
			for (uint32_t j = 0; j < rv->nnz; j++) {
				add_cand(w, rv->e[j].c);
				w->oth[rv->e[j].c] += rv->e[j].v;
			}
		}
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

/* After gather(): the gradient into acc, the "others" S - F_u - X_u into
 * oth, the free direction, x_v + q into xv (when room), gmax; returns
 * f_u at the current row. */
static double gradient(const struct model *m, const struct graph *g, uint32_t u,
		       struct poisson_work *w, int keep)
{
	double f = 0.0, q = m->qeps;
	for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++) {
		const struct frow *rv = &m->rows[g->adj[i]];
		double x = dense_dot(w->cur, rv) + q;
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
	w->gmax = 0.0;
	for (uint32_t i = 0; i < w->ncand; i++) {
		uint32_t c = w->cand[i];
		double oth = m->colsum[c] - w->cur[c] - w->oth[c];
		w->oth[c] = oth;
		w->acc[c] -= oth;
		f -= w->cur[c] * oth;
		w->dir[c] = w->cur[c] == 0.0 && w->acc[c] <= 0.0 ? 0.0 : w->acc[c];
		if (fabs(w->acc[c]) > w->gmax)
			w->gmax = fabs(w->acc[c]);
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
	for (uint32_t i = 0; i < w->ncand; i++) {
		uint32_t c = w->cand[i];
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
	for (uint32_t i = 0; i < deg; i++) {
		uint64_t at = g->off[u] + i;
		double x = lin && !clipped ? w->xv[i] + a * w->dv[i]
					   : dense_dot(w->trial, &m->rows[g->adj[at]]) + m->qeps;
		/* a step along dir may take x to 0 or below only by rounding
		 * (x is a sum of products of nonnegative numbers): log of a
		 * nonpositive x is -inf, and the trial fails */
		f += graph_weight(g, at) * log(x);
	}
	if (!(lin && !clipped))
		w->visits += deg;
	return f;
}

/* objective.h's update_row. */
static int pw_update(const struct model *m, const struct graph *g, uint32_t u, void *vw,
		     const struct fentry **out, uint32_t *out_nnz)
{
	struct poisson_work *w = vw;
	uint32_t deg = graph_degree(g, u);
	int lin = grow(w, deg) == 0;
	gather(m, g, u, w);
	double f0 = gradient(m, g, u, w, lin);
	w->rows++;
	if (w->ncand == 0)
		return 0;
	if (lin) {
		for (uint32_t i = 0; i < deg; i++)
			w->dv[i] = dense_dot(w->dir, &m->rows[g->adj[g->off[u] + i]]);
		w->visits += deg;
	}
	double a = w->gmax > STEP_REACH ? STEP_REACH / w->gmax : 1.0;
	int accepted = 0;
	for (int t = 0; t < ARMIJO_TRIES; t++, a *= 0.5) {
		double gd;
		int moved;
		double f1 = trial(m, g, u, w, lin, a, &gd, &moved);
		if (!moved)
			break;
		if (f1 >= f0 + ARMIJO_SIGMA * gd && f1 > f0) {
			w->gain = f1 - f0;
			accepted = 1;
			break;
		}
	}
	if (!accepted)
		return 0;
	uint32_t o = 0;
	for (uint32_t i = 0; i < w->ncand; i++)
		if (w->trial[w->cand[i]] > 0.0)
			w->cand[o++] = w->cand[i];
	qsort(w->cand, o, sizeof *w->cand, util_qsort_u32);
	for (uint32_t i = 0; i < o; i++) {
		w->out[i].c = w->cand[i];
		w->out[i].v = w->trial[w->cand[i]];
	}
	*out = w->out;
	*out_nnz = o;
	return 1;
}

static double pw_gain(const void *w)
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

static void pw_counts(const void *vw, struct objective_counts *c)
{
	const struct poisson_work *w = vw;
	c->rows += w->rows;
	c->trials += w->trials;
	c->visits += w->visits;
	c->entries += w->entries;
}

void model_poisson_loglik_range(const struct model *m, const struct graph *g, uint32_t u0, uint32_t u1,
			  struct model_poisson_llpart *part)
{
	memset(part, 0, sizeof *part);
	for (uint32_t u = u0; u < u1; u++) {
		const struct frow *ru = &m->rows[u];
		for (uint32_t i = 0; i < ru->nnz; i++)
			part->self_sq += ru->e[i].v * ru->e[i].v;
		if (m->excl)
			for (uint64_t i = m->excl->off[u]; i < m->excl->off[u + 1]; i++) {
				uint32_t v = m->excl->adj[i];
				if (v > u)
					part->excl_dot += model_dot(ru->e, ru->nnz, m->rows[v].e,
								    m->rows[v].nnz);
			}
		for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++) {
			uint32_t v = g->adj[i];
			if (v < u)
				continue;
			double x = model_dot(ru->e, ru->nnz, m->rows[v].e, m->rows[v].nnz);
			double wt = graph_weight(g, i);
			part->edge_log += wt * log(x + m->qeps);
			part->edge_lgamma += lgamma(wt + 1.0);
		}
	}
}

double model_poisson_loglik_combine(const struct model *m, const struct graph *g,
			      const struct model_poisson_llpart *parts, size_t nparts)
{
	double edge_log = 0.0, lg = 0.0, self_sq = 0.0, excl_dot = 0.0, col_sq = 0.0;
	for (size_t i = 0; i < nparts; i++) {
		edge_log += parts[i].edge_log;
		lg += parts[i].edge_lgamma;
		self_sq += parts[i].self_sq;
		excl_dot += parts[i].excl_dot;
	}
	for (uint32_t c = 0; c < m->k; c++)
		col_sq += m->colsum[c] * m->colsum[c];
	double pair_dot = 0.5 * (col_sq - self_sq) - excl_dot;
	if (pair_dot < 0.0)
		pair_dot = 0.0; /* rounding only */
	double n = g->n;
	double pairs = 0.5 * n * (n - 1.0) - (m->excl ? (double)m->excl->m : 0.0);
	return edge_log - lg - pair_dot - m->qeps * pairs;
}

double model_poisson_loglik(const struct model *m, const struct graph *g)
{
	struct model_poisson_llpart part;
	model_poisson_loglik_range(m, g, 0, g->n, &part);
	return model_poisson_loglik_combine(m, g, &part, 1);
}

static void pw_part_range(const struct model *m, const struct graph *g, uint32_t u0, uint32_t u1,
			  void *part)
{
	model_poisson_loglik_range(m, g, u0, u1, part);
}

static double pw_part_combine(const struct model *m, const struct graph *g, const void *parts,
			      size_t nparts)
{
	return model_poisson_loglik_combine(m, g, parts, nparts);
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
	for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++)
		f += graph_weight(g, i) * log(dense_dot(w->trial, &m->rows[g->adj[i]]) + m->qeps);
	for (uint32_t i = 0; i < w->ncand; i++) {
		uint32_t c = w->cand[i];
		f -= w->trial[c] * (m->colsum[c] - w->cur[c] - w->oth[c]);
		w->trial[c] = 0.0;
	}
	return f;
}

static void pw_row_gradient(const struct model *m, const struct graph *g, uint32_t u, void *vw,
			    double *grad)
{
	struct poisson_work *w = vw;
	gather(m, g, u, w);
	gradient(m, g, u, w, 0);
	for (uint32_t c = 0; c < m->k; c++)
		grad[c] = -m->colsum[c]; /* outside the candidates F_u and X_u are 0 there */
	for (uint32_t i = 0; i < w->ncand; i++)
		grad[w->cand[i]] = w->acc[w->cand[i]];
}

static const struct objective_ops poisson_ops = {
	.name = "poisson",
	.work_new = pw_new,
	.work_free = pw_free,
	.update_row = pw_update,
	.work_gain = pw_gain,
	.gain_exact = pw_gain_exact,
	.work_counts = pw_counts,
	.part_size = sizeof(struct model_poisson_llpart),
	.part_range = pw_part_range,
	.part_combine = pw_part_combine,
	.row_objective = pw_row_objective,
	.row_gradient = pw_row_gradient,
	.coupling = 1,
};

const struct objective_ops *model_poisson_objective(void)
{
	return &poisson_ops;
}
