/*
 * model_row: one node's projected gradient step (model_update_row()),
 * its scratch space (struct model_work, one per thread), the row objective
 * and gradient the tests check it by, and the Armijo backtracking every
 * objective uses (model_backtrack()). The model's state is model.c's.
 *
 * The idea: the non-edge part of a row's objective would cost O(n), but
 *     sum_{v not in N(u), v != u} F_v = colsum - F_u - sum_{v in N(u)} F_v
 * so with the column sums kept current a row costs O(deg(u) * nnz).
 * Only communities present in u's row or in a neighbour's row can get a
 * positive gradient (elsewhere the gradient is -colsum[c] <= 0 at a zero
 * strength, and the projection keeps it at zero), so the update works on
 * that candidate set with dense scratch arrays of length k, reset after
 * each row through the candidate list.
 *
 * Sparsity: the projection sends strengths below MODEL_FLOOR * delta to 0,
 * not only negative ones. In the first sweeps an empty row next to many
 * communities sees a large positive gradient for every one of them (the
 * weight 1/expm1(x) is about 1/epsilon at x ~ 0); the plain projection
 * filled rows with dozens of tiny strengths that later sweeps removed
 * again. The floor keeps rows sparse (less memory, faster sweeps) at the
 * price of a slightly lower likelihood; the memberships lost are of
 * strengths far below the threshold delta (figures in DEVELOPERS.md).
 *
 * The one thing a newcomer gets wrong: colsum includes u's own current
 * row. The "others" sum must subtract the current row, not the trial one.
 */
#include "coterie/model.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/graph.h"
#include "coterie/util.h"

#define ARMIJO_SIGMA 1e-4
#define ARMIJO_TRIES 16
#define STEP_REACH 10.0 /* largest change of a strength in a first trial step */
#define X_FLOOR 1e-12 /* smallest x + qeps used in a gradient weight */
#define PROD_CHUNK 8u  /* edge terms of the gradient pass multiplied before one log() */
#define TRIAL_CHUNK 4u /* the same in a trial (its early exit is checked per chunk) */

struct model_work {
	uint32_t k;
	void *block;      /* holds every array of k values below */
	double *cur;      /* dense F_u over candidates */
	double *trial;    /* dense trial row over candidates */
	double *nbrsum;   /* dense sum of neighbour (and held-out partner) rows */
	double *acc;      /* dense gradient accumulator */
	uint32_t *stamp;  /* candidate marks */
	uint32_t epoch;
	uint32_t *cand;   /* candidate list */
	uint32_t ncand;
	double *wv;       /* per-neighbour weights (a block of 3 wv_cap: wv, xv, dv) */
	double *xv;       /* per-neighbour x = F_u . F_v + qeps */
	double *dv;       /* per-neighbour dir . F_v */
	size_t wv_cap;
	double *dir;      /* dense free direction over candidates */
	/* the live candidates (a positive strength or a positive gradient;
	 * the others stay at zero in every trial), packed in candidate
	 * order so the trials stream through them */
	uint32_t nlive;
	double gmax;      /* the largest |gradient| over the candidates */
	uint32_t *lc;     /* their communities */
	double *lcur, *lacc, *loth, *ltrial; /* F_u, gradient, others' sum, trial */
	struct fentry *out; /* the accepted row */
	double gain;      /* f1 - f0 of the last accepted row (model_work_gain()) */
	uint64_t rows, trials, visits; /* counters for model_work_counts() */
	uint64_t entries; /* neighbour entries read by gradient passes */
};

double model_work_gain(const struct model_work *w)
{
	return w->gain;
}

int model_gain_exact(const struct model *m)
{
	/* every x = F_u . F_v + qeps is then above the floor that
	 * gather_gradient() puts under the weight's x */
	return m->qeps > X_FLOOR;
}

uint64_t model_work_entries(const struct model_work *w)
{
	return w->entries;
}

void model_work_counts(const struct model_work *w, uint64_t *rows, uint64_t *trials,
		       uint64_t *visits)
{
	*rows = w->rows;
	*trials = w->trials;
	*visits = w->visits;
}

struct model_work *model_work_new(uint32_t k)
{
	struct model_work *w = util_calloc(1, sizeof *w);
	if (!w)
		return NULL;
	w->k = k;
	/* the arrays of k values in one block: nine of doubles, three of
	 * uint32_t, then the accepted row */
	size_t n = k;
	w->block = util_calloc(n, 9 * sizeof(double) + 3 * sizeof(uint32_t) + sizeof(struct fentry));
	if (!w->block) {
		free(w);
		return NULL;
	}
	double *d = w->block;
	double **dense[9] = { &w->cur, &w->trial, &w->nbrsum, &w->acc, &w->dir,
			      &w->lcur, &w->lacc, &w->loth, &w->ltrial };
	for (size_t i = 0; i < 9; i++)
		*dense[i] = d + i * n;
	uint32_t *ids = (uint32_t *)(d + 9 * n);
	w->stamp = ids;
	w->cand = ids + n;
	w->lc = ids + 2 * n;
	w->out = (struct fentry *)(ids + 3 * n);
	return w;
}

void model_work_free(struct model_work *w)
{
	if (!w)
		return;
	free(w->block);
	free(w->wv); /* xv and dv are in the same block */
	free(w);
}

static inline void add_candidate(struct model_work *w, uint32_t c)
{
	if (w->stamp[c] != w->epoch) {
		w->stamp[c] = w->epoch;
		w->cand[w->ncand++] = c;
		w->cur[c] = 0.0;
		w->trial[c] = 0.0;
		w->nbrsum[c] = 0.0;
		w->acc[c] = 0.0;
	}
}

/* A fresh candidate set holding u's own row (dense in w->cur). */
static inline void begin_row(const struct model *m, uint32_t u, struct model_work *w)
{
	if (++w->epoch == 0) { /* wrapped: clear marks */
		memset(w->stamp, 0, w->k * sizeof *w->stamp);
		w->epoch = 1;
	}
	w->ncand = 0;
	const struct frow *ru = &m->rows[u];
	for (uint32_t i = 0; i < ru->nnz; i++) {
		add_candidate(w, ru->e[i].c);
		w->cur[ru->e[i].c] = ru->e[i].v;
	}
}

/* The rows of u's neighbours in h into the candidates and the
 * neighbour sum. */
static void add_rows(const struct model *m, const struct graph *h, uint32_t u,
		     struct model_work *w)
{
	for (uint64_t i = h->off[u]; i < h->off[u + 1]; i++) {
		const struct frow *rv = &m->rows[h->adj[i]];
		for (uint32_t j = 0; j < rv->nnz; j++) {
			add_candidate(w, rv->e[j].c);
			w->nbrsum[rv->e[j].c] += rv->e[j].v;
		}
	}
}

/* Gather the candidate set of u, its current row (dense) and the sum of
 * its neighbours' rows. */
static void gather(const struct model *m, const struct graph *g, uint32_t u, struct model_work *w)
{
	begin_row(m, u, w);
	add_rows(m, g, u, w);
	/* held-out partners are neither edges nor non-edges: their rows leave
	 * the non-edge sum exactly as neighbours' rows do */
	if (m->excl)
		add_rows(m, m->excl, u, w);
}

/* Dot of a dense row (over candidates) with a sparse neighbour row. */
static double dense_dot(const double *dense, const struct frow *rv)
{
	double s = 0.0;
	for (uint32_t j = 0; j < rv->nnz; j++)
		s += dense[rv->e[j].c] * rv->e[j].v;
	return s;
}

/* Row objective with the trial row given densely; gather() must have run. */
static double objective_dense(const struct model *m, const struct graph *g, uint32_t u,
			      const struct model_work *w, const double *row)
{
	double f = 0.0;
	const double *oc = model_other_colsum(m, u);
	for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++)
		f += model_log1mexp(dense_dot(row, &m->rows[g->adj[i]]) + m->qeps);
	for (uint32_t i = 0; i < w->ncand; i++) {
		uint32_t c = w->cand[i];
		if (row[c] != 0.0)
			f -= row[c] * (m->nsend ? oc[c] - w->nbrsum[c] /* u is not on that side */
						: oc[c] - w->cur[c] - w->nbrsum[c]);
	}
	return f;
}

double model_row_objective(const struct model *m, const struct graph *g, uint32_t u,
			   const struct fentry *r, uint32_t nnz, struct model_work *w)
{
	gather(m, g, u, w);
	/* entries of r outside the candidate set still count in the linear term */
	for (uint32_t i = 0; i < nnz; i++)
		add_candidate(w, r[i].c);
	for (uint32_t i = 0; i < nnz; i++)
		w->trial[r[i].c] = r[i].v;
	double f = objective_dense(m, g, u, w, w->trial);
	for (uint32_t i = 0; i < w->ncand; i++)
		w->trial[w->cand[i]] = 0.0;
	return f;
}

/* Room for deg per-neighbour values; 0 when it cannot be had (the
 * update then works without them). */
static int grow_scratch(struct model_work *w, uint32_t deg)
{
	if (deg <= w->wv_cap)
		return 1;
	size_t cap = deg + deg / 2;
	/* nothing in them outlives a row: no need to keep the contents */
	double *a = malloc(3 * cap * sizeof *a);
	if (!a)
		return 0;
	free(w->wv);
	w->wv = a;
	w->xv = a + cap;
	w->dv = a + 2 * cap;
	w->wv_cap = cap;
	return 1;
}

/* The candidates, the neighbour sum and the gradient in one pass over the
 * neighbour rows (the two-pass form, gather() then a second pass, is the
 * reference in tests/unit/test_model.c): each row
 * is read once for the candidates, the neighbour sum and the dot product,
 * and once more (from L1) to scatter its share of the gradient. The sums
 * run in the same order as in the two-pass form, so the results are the
 * same bits. Returns the objective at the current row. */
static double gather_gradient(const struct model *m, const struct graph *g, uint32_t u,
			      struct model_work *w)
{
	begin_row(m, u, w);
	uint32_t epoch = w->epoch;
	double f = 0.0, qeps = m->qeps, q = 1.0;
	unsigned nq = 0;
	const uint32_t *adj = g->adj + g->off[u];
	uint32_t deg = graph_degree(g, u);
	int keep = grow_scratch(w, deg);
	/* the rows of later neighbours are fetched ahead (model.h); the
	 * log() calls between the neighbours keep the processor from
	 * overlapping the misses by itself */
	model_prefetch_first(m, adj, deg);
	for (uint32_t i = 0; i < deg; i++) {
		model_prefetch_next(m, adj, deg, i);
		const struct frow *rv = &m->rows[adj[i]];
		const struct fentry *e = rv->e;
		uint32_t nnz = rv->nnz;
		w->entries += nnz;
		double x = 0.0;
		for (uint32_t j = 0; j < nnz; j++) {
			uint32_t c = e[j].c;
			double v = e[j].v;
			if (w->stamp[c] != epoch) {
				w->stamp[c] = epoch;
				w->cand[w->ncand++] = c;
				w->cur[c] = 0.0;
				w->trial[c] = 0.0;
				w->nbrsum[c] = 0.0;
				w->acc[c] = 0.0;
			}
			x += w->cur[c] * v;
			w->nbrsum[c] += v;
		}
		x += qeps;
		/* one expm1 gives both the weight and the objective's term:
		 * 1 - e^-x = 1 / (1 + 1 / em); the terms are multiplied
		 * PROD_CHUNK at a time and the product's log taken once */
		double wt = 1.0 / expm1(x > X_FLOOR ? x : X_FLOOR);
		q *= 1.0 / (1.0 + wt);
		if (++nq == PROD_CHUNK) {
			f += log(q);
			q = 1.0;
			nq = 0;
		}
		for (uint32_t j = 0; j < nnz; j++)
			w->acc[e[j].c] += e[j].v * wt;
		if (keep) {
			w->xv[i] = x;
			w->wv[i] = wt;
		}
	}
	if (nq)
		f += log(q);
	w->visits += deg;
	if (m->excl)
		add_rows(m, m->excl, u, w);
	/* the gradient's last term, and in the same pass the largest
	 * gradient, the free direction (dir: the gradient, except where a
	 * zero strength would only be pushed below zero) and the live
	 * candidates (those with a nonzero dir) packed for the trials */
	double gmax = 0.0;
	uint32_t nlive = 0;
	/* two-sided: the other side's sums, which do not hold u's own row */
	const double *oc = model_other_colsum(m, u);
	for (uint32_t i = 0; i < w->ncand; i++) {
		uint32_t c = w->cand[i];
		double cur = w->cur[c];
		double others = m->nsend ? oc[c] - w->nbrsum[c] : oc[c] - cur - w->nbrsum[c];
		double a = w->acc[c] - others;
		w->acc[c] = a;
		f -= cur * others;
		if (fabs(a) > gmax)
			gmax = fabs(a);
		if (cur == 0.0 && a <= 0.0) {
			w->dir[c] = 0.0;
			continue;
		}
		w->dir[c] = a;
		w->lc[nlive] = c;
		w->lcur[nlive] = cur;
		w->lacc[nlive] = a;
		w->loth[nlive] = others;
		nlive++;
	}
	w->nlive = nlive;
	w->gmax = gmax;
	return f;
}

void model_row_gradient(const struct model *m, const struct graph *g, uint32_t u,
			struct model_work *w, double *grad)
{
	gather_gradient(m, g, u, w);
	/* outside the candidates the gradient is -(colsum - F_u - nbrsum) = -colsum */
	const double *oc = model_other_colsum(m, u);
	for (uint32_t c = 0; c < m->k; c++)
		grad[c] = -oc[c];
	for (uint32_t i = 0; i < w->ncand; i++)
		grad[w->cand[i]] = w->acc[w->cand[i]];
}

/* w->ltrial = the projected step of the given length over the live
 * candidates, *linear = the row objective's linear part there; returns 1 when it clipped a strength the free direction
 * would not have (when lin). The other candidates would stay at zero and
 * add exactly zero to gd, so leaving them out changes no bit. */
static int set_trial(const struct model *m, struct model_work *w, double step, int lin,
		     int *moved, double *gd, double *linear)
{
	int clipped = 0, mv = 0;
	double s = 0.0, l = 0.0, floor = m->floor;
	const double *cur = w->lcur, *acc = w->lacc, *oth = w->loth;
	double *trial = w->ltrial;
	for (uint32_t i = 0; i < w->nlive; i++) {
		double free_v = cur[i] + step * acc[i]; /* the free direction is acc here */
		double v = free_v;
		if (v < floor)
			v = 0.0;
		if (v > MODEL_FMAX)
			v = MODEL_FMAX;
		trial[i] = v;
		s += acc[i] * (v - cur[i]);
		l -= v * oth[i]; /* a zero v subtracts a zero: the sum is as if skipped */
		mv |= v != cur[i];
		clipped |= v != free_v;
	}
	*gd = s;
	*linear = l;
	*moved = mv;
	return lin && clipped;
}

/* 1 - e^-y, 0 unless y > 0 (its log is then -inf, as model_log1mexp's) */
static inline double one_minus_exp(double y)
{
	return y > 0.0 ? -expm1(-y) : 0.0;
}

/* The row objective at the projected step of the given length (into
 * w->ltrial): from the x_v and d_v when nothing was clipped, else by
 * reading the neighbour rows again. The linear part comes first; every
 * edge term is negative, so once the running sum falls below `need` the
 * trial has failed whatever the other neighbours add, and the rest is
 * skipped (the value returned is then only an upper bound, below need).
 * Most trials of the backtracking fail, and most fail after a few
 * neighbours. The edge terms are taken TRIAL_CHUNK at a time as the log
 * of a product of the 1 - e^-y (each in (0, 1], so four cannot
 * underflow), one log() per chunk instead of one per neighbour; the
 * early exit is checked after each chunk. */
static double eval_trial(const struct model *m, const struct graph *g, uint32_t u,
			 struct model_work *w, int lin, double step, double need, int *moved,
			 double *gd)
{
	double f1;
	int clipped = set_trial(m, w, step, lin, moved, gd, &f1);
	if (!*moved)
		return 0.0;
	w->trials++;
	need = fmax(need + ARMIJO_SIGMA * *gd, need);
	uint32_t deg = graph_degree(g, u);
	uint32_t i = 0;
	if (!lin || clipped) {
		for (uint32_t j = 0; j < w->nlive; j++)
			w->trial[w->lc[j]] = w->ltrial[j];
		const uint32_t *adj = g->adj + g->off[u];
		while (i < deg && f1 >= need) {
			uint32_t end = deg - i > TRIAL_CHUNK ? i + TRIAL_CHUNK : deg;
			double q = 1.0;
			for (; i < end; i++)
				q *= one_minus_exp(dense_dot(w->trial, &m->rows[adj[i]]) + m->qeps);
			f1 += log(q);
		}
		w->visits += i;
		return f1;
	}
	while (i < deg && f1 >= need) {
		uint32_t end = deg - i > TRIAL_CHUNK ? i + TRIAL_CHUNK : deg;
		double q = 1.0;
		for (; i < end; i++)
			q *= one_minus_exp(w->xv[i] + step * w->dv[i]);
		f1 += log(q);
	}
	return f1;
}

int model_backtrack(model_trial_fn trial, void *ctx, double f0, double step, double *gain)
{
	for (int t = 0; t < ARMIJO_TRIES; t++, step *= 0.5) {
		int moved;
		double gd;
		double f1 = trial(ctx, step, &gd, &moved);
		if (!moved)
			return 0;
		if (f1 >= f0 + ARMIJO_SIGMA * gd && f1 > f0) {
			*gain = f1 - f0;
			return 1;
		}
	}
	return 0;
}

/* eval_trial() as a model_trial_fn. */
struct trial_ctx {
	const struct model *m;
	const struct graph *g;
	uint32_t u;
	struct model_work *w;
	int lin;
	double f0;
};

static double bigclam_trial(void *ctx, double step, double *gd, int *moved)
{
	struct trial_ctx *c = ctx;
	return eval_trial(c->m, c->g, c->u, c->w, c->lin, step, c->f0, moved, gd);
}

int model_update_row(const struct model *m, const struct graph *g, uint32_t u,
		     struct model_work *w, const struct fentry **out, uint32_t *out_nnz)
{
	double f0 = gather_gradient(m, g, u, w);
	w->rows++;
	if (w->ncand == 0)
		return 0;
	int accepted = 0;
	/* the first trial moves no strength by more than STEP_REACH: a node
	 * with an empty row next to a community sees a gradient of about
	 * 1 / expm1(qeps) ~ 1 / epsilon, and a unit step would shoot to the
	 * cap and cost a dozen halvings of log() over every neighbour */
	double gmax = w->gmax; /* gather_gradient() found it, the live candidates and dir */
	double step = gmax > STEP_REACH ? STEP_REACH / gmax : 1.0;
	uint32_t deg = graph_degree(g, u);
	const uint32_t *adj = g->adj + g->off[u];
	/* The free direction: the gradient, except where a zero strength
	 * would only be pushed below zero. Along it the edge terms are
	 * log(1 - exp(-(x_v + a d_v))) with d_v = dir . F_v, so one more pass
	 * (from cache: the rows were just read) gives every d_v, and a trial
	 * whose projection clips nothing beyond the free direction is scored
	 * from x_v and d_v without reading the rows again. */
	int lin = deg <= w->wv_cap;
	if (lin) {
		for (uint32_t i = 0; i < deg; i++)
			w->dv[i] = dense_dot(w->dir, &m->rows[adj[i]]);
		w->visits += deg;
	}
	/* Plain backtracking from the reach limit (a search from near the
	 * Cauchy step needs fewer trials but levels off lower: DEVELOPERS.md);
	 * an accepted trial summed every term (the early exit only cuts
	 * trials that fail), so f1 is the objective */
	struct trial_ctx tc = { m, g, u, w, lin, f0 };
	accepted = model_backtrack(bigclam_trial, &tc, f0, step, &w->gain);
	if (!accepted)
		return 0;
	/* keep the positive entries, then sort those few by community (the
	 * candidates are many more than the entries kept) */
	uint32_t o = 0;
	for (uint32_t i = 0; i < w->nlive; i++)
		if (w->ltrial[i] > 0.0) {
			w->trial[w->lc[i]] = w->ltrial[i];
			w->cand[o++] = w->lc[i];
		}
	if (o > 32)
		qsort(w->cand, o, sizeof *w->cand, util_qsort_u32);
	else
		for (uint32_t i = 1; i < o; i++) {
			uint32_t c = w->cand[i], j = i;
			for (; j > 0 && w->cand[j - 1] > c; j--)
				w->cand[j] = w->cand[j - 1];
			w->cand[j] = c;
		}
	for (uint32_t i = 0; i < o; i++) {
		w->out[i].c = w->cand[i];
		w->out[i].v = w->trial[w->cand[i]];
	}
	*out = w->out;
	*out_nnz = o;
	return 1;
}
