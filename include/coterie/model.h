/*
 * model: the nonnegative relaxation of the affiliation model (Yang &
 * Leskovec, WSDM 2013), held as sparse rows of strengths.
 *
 * Each node u has strengths F[u][c] >= 0; only positive ones are stored.
 * With background epsilon (a community everyone shares, as in the AGM) and
 * qeps = -ln(1 - epsilon), the probability of a link is
 *     P(u,v) = 1 - exp(-(F_u . F_v + qeps))
 * and the log-likelihood of the graph is
 *     l(F) = sum_{uv in E} log(1 - exp(-(x_uv + qeps)))
 *            - sum_{uv not in E} (x_uv + qeps),     x_uv = F_u . F_v.
 * With epsilon = 0 this is exactly the relaxed objective of DESIGN.md; the
 * background keeps every term finite (no log(0) for an edge whose ends
 * share nothing) and adds only a constant to the non-edge part.
 *
 * Rules (tests: assert_model_sane()):
 *   - every row's entries are sorted by community, strictly increasing;
 *   - every stored value v satisfies 0 < v <= MODEL_FMAX;
 *   - colsum[c] equals the sum of column c (up to rounding).
 */
#ifndef COTERIE_MODEL_H
#define COTERIE_MODEL_H

#include <stddef.h>
#include <stdint.h>

#include "fcsr.h"

struct graph;

#define MODEL_FMAX 1000.0 /* strengths are capped here */
#define MODEL_FLOOR 0.1   /* the update sends strengths below MODEL_FLOOR * delta to 0 */
#define MODEL_MAX_K 1000000u

struct frow {
	uint32_t nnz, cap;
	struct fentry *e;
};

struct model {
	uint32_t n, k;
	double epsilon; /* background link probability */
	double qeps;    /* -ln(1 - epsilon) */
	double delta;   /* membership threshold sqrt(qeps) */
	double floor;   /* strengths below this become 0 (MODEL_FLOOR * delta) */
	struct frow *rows; /* n rows */
	double *colsum;    /* k column sums; with nsend, 2k: the sending rows'
			      sums, then the receiving rows' (model_set_sides()) */
	/* 0: one kind of row, every pair of rows a term. Else a two-sided
	 * model (model_directed.h): rows [0, nsend) send, [nsend, n)
	 * receive, and only pairs of a sending and a receiving row are terms
	 * of the likelihood (x = F_u . H_v); same-side rows never meet. */
	uint32_t nsend;
	/* Held-out pairs (borrowed, may be NULL): pairs left out of the
	 * likelihood altogether, neither edges nor non-edges. Must not share
	 * a pair with the graph's edges. Used to choose k. */
	const struct graph *excl;
	/* The slab (model_pack()): every row's entries in row order, each
	 * row with a little room to grow. A row that outgrows its room moves
	 * to a block of its own until the next pack. NULL before the first
	 * pack. */
	struct fentry *slab;
	size_t slab_len;
};

/* The default background: the graph's density 2m / (n (n - 1)), kept
 * within [1e-12, 0.5]. */
double model_default_epsilon(const struct graph *g);

/* qeps = -ln(1 - epsilon) for a background probability epsilon in [0, 1)
 * (the one place it is computed: every module that turns epsilon into a
 * rate calls this). */
double model_qeps(double epsilon);

/* Set up an all-zero model. epsilon in [0, 1). Returns 0 or -1. */
int model_init(struct model *m, uint32_t n, uint32_t k, double epsilon);
void model_release(struct model *m);

/* Make an all-zero model two-sided: rows [0, nsend) send and [nsend, n)
 * receive (0 < nsend < n). colsum grows to 2k. Returns 0 or -1. */
int model_set_sides(struct model *m, uint32_t nsend);

/* The column sums row u's update reads as "the other rows": the other
 * side's in a two-sided model, else colsum (k values, borrowed). */
static inline const double *model_other_colsum(const struct model *m, uint32_t u)
{
	return m->nsend && u < m->nsend ? m->colsum + m->k : m->colsum;
}

/* Prefetching the rows of a node's neighbours adj[0 .. deg) as a pass
 * reads them in order: the row headers MODEL_PF_FAR neighbours ahead (the
 * first ones all at once, model_prefetch_first()), the entries
 * MODEL_PF_NEAR ahead (by then the header is in cache); without it every
 * neighbour costs two dependent cache misses. Call model_prefetch_next()
 * before reading neighbour i. No effect on any result. */
#define MODEL_PF_FAR 8u
#define MODEL_PF_NEAR 4u
static inline void model_prefetch_first(const struct model *m, const uint32_t *adj, uint32_t deg)
{
	for (uint32_t i = 0; i < deg && i < MODEL_PF_FAR; i++)
		__builtin_prefetch(&m->rows[adj[i]]);
}

static inline void model_prefetch_next(const struct model *m, const uint32_t *adj, uint32_t deg,
				       uint32_t i)
{
	if (i + MODEL_PF_FAR < deg)
		__builtin_prefetch(&m->rows[adj[i + MODEL_PF_FAR]]);
	if (i + MODEL_PF_NEAR < deg)
		__builtin_prefetch(m->rows[adj[i + MODEL_PF_NEAR]].e);
}

/* Replace row u by the nnz entries e (borrowed; sorted, positive, capped
 * on the way in) and keep colsum up to date. Returns 0 or -1. */
int model_set_row(struct model *m, uint32_t u, const struct fentry *e, uint32_t nnz);

/* Move every row's entries into one slab in row order (rows with nearby
 * ids then have their entries on nearby cache lines: with ids in order
 * of first appearance in the file, many of a node's neighbours'), each with a
 * quarter more room than it holds, plus one. Changes no value. Rows
 * denser than 16 entries on average (the first sweeps' fill) are left
 * where they are, and so are all rows when the slab cannot be had (it
 * is only for speed). The sweep engine packs after every sweep. */
void model_pack(struct model *m);

/* Recompute colsum from the rows (after loading a checkpoint, say). */
void model_recount(struct model *m);

/* Sparse dot product of two sorted rows. */
double model_dot(const struct fentry *a, uint32_t na, const struct fentry *b, uint32_t nb);

/* log(1 - exp(-x)) for x > 0: log(-expm1(-x)) for small x, log1p(-exp(-x))
 * for large; -inf at 0. */
double model_log1mexp(double x);

/* The whole-graph log-likelihood l(F) above, in O(m nnz + n nnz); pairs
 * in m->excl are left out. */
double model_loglik(const struct model *m, const struct graph *g);

/* The same in pieces, so threads can share the work: the parts over nodes
 * [u0, u1) (edges counted from their smaller end), then combined. Summing
 * parts of fixed ranges in a fixed order gives the same bits every time. */
struct model_llpart {
	double edge_log; /* sum over edges of log(1 - exp(-(x + qeps))) */
	double edge_dot; /* sum over edges of x */
	double self_sq;  /* sum over nodes of F_u . F_u */
	double excl_dot; /* sum over held-out pairs of x */
};
void model_loglik_range(const struct model *m, const struct graph *g, uint32_t u0, uint32_t u1,
			struct model_llpart *part);
double model_loglik_combine(const struct model *m, const struct graph *g,
			    const struct model_llpart *parts, size_t nparts);

/* The pair terms every model built on F_u . F_v shares, over nodes
 * [u0, u1): the sum of F_u . F_u, and of x over held-out pairs (from
 * their smaller end). Then the sum of x over all pairs u < v from the
 * whole sum of F_u . F_u: (|colsum|^2 - sum_u |F_u|^2) / 2. */
void model_pair_parts(const struct model *m, uint32_t u0, uint32_t u1, double *self_sq,
		      double *excl_dot);
double model_all_dot(const struct model *m, double self_sq);

/* Copy the model into compressed rows. Returns 0 or -1. Release the copy
 * with fcsr_release(). */
int model_export(const struct model *m, struct fcsr *out);
/* Load compressed rows into an initialised model of the same shape. */
int model_import(struct model *m, const struct fcsr *in);
/* The same with the model's nodes renumbered (order.h): row u of the
 * copy is model row inner[u], and row u of in goes to model row
 * inner[u]. inner borrowed (n values); NULL is the identity. */
int model_export_order(const struct model *m, const uint32_t *inner, struct fcsr *out);
int model_import_order(struct model *m, const struct fcsr *in, const uint32_t *inner);

/*
 * One node's update (src/model_row.c). A struct model_work holds a thread's scratch space
 * (dense arrays of length k, reused across rows). The update reads the
 * model (neighbour rows, colsum) and never writes it, so many threads may
 * compute rows at once; the caller applies the result with
 * model_set_row(). The neighbour rows could as well be borrowed copies
 * from another process: nothing but m->rows[v] for v in N(u) and
 * m->colsum is read.
 */
struct model_work;
struct model_work *model_work_new(uint32_t k);
void model_work_free(struct model_work *w);
/* What w has done so far, for benchmarks: rows updated, line-search trials
 * evaluated, and neighbour rows read (each row's gradient pass and each
 * trial count deg(u)). */
void model_work_counts(const struct model_work *w, uint64_t *rows, uint64_t *trials,
		       uint64_t *visits);
/* Strength entries of neighbour rows read by the gradient passes (each
 * row's first pass over its neighbours), for benchmarks: over the visits
 * counted in a sweep, the density the fit actually met. */
uint64_t model_work_entries(const struct model_work *w);

/* The row objective of u if its row were r (nnz entries): the terms of
 * l(F) that involve u, namely
 *   sum_{v in N(u)} log(1 - exp(-(r . F_v + qeps))) - r . (colsum - F_u - sum_{v in N(u)} F_v)
 * where F_u is u's current row in the model (held-out partners of u, if
 * any, are subtracted in the last sum like neighbours). */
double model_row_objective(const struct model *m, const struct graph *g, uint32_t u,
			   const struct fentry *r, uint32_t nnz, struct model_work *w);

/* The gradient of the row objective at u's current row, for every
 * community c, into grad (k doubles, borrowed): the one-pass gradient
 * model_update_row() steps along (tests/unit/test_model.c checks it bit
 * for bit against a two-pass reference). */
void model_row_gradient(const struct model *m, const struct graph *g, uint32_t u,
			struct model_work *w, double *grad);

/*
 * Projected gradient step with Armijo backtracking: F_u <- F_u + a g with
 * strengths below m->floor (MODEL_FLOOR * delta) set to 0,
 * capped at MODEL_FMAX, trying a = a0, a0/2, a0/4, ... (a0 = 1, or less so
 * that no strength moves by more than 10 in the first trial) until the objective
 * rises by at least 1e-4 * g . (new - old). On success *out points into
 * w's storage (valid until the next call with w) with *out_nnz entries and
 * the function returns 1; it returns 0 when no step improves the row (the
 * caller keeps the old row).
 */
int model_update_row(const struct model *m, const struct graph *g, uint32_t u,
		     struct model_work *w, const struct fentry **out, uint32_t *out_nnz);

/* The backtracking of a row update, shared by every objective: trial(ctx,
 * a, &gd, &moved) is the row objective at the projected step of length a
 * (gd: the gradient times the move; moved: whether any strength moved).
 * Tries a, a/2, a/4, ... (16 at most) until f1 >= f0 + 1e-4 gd and
 * f1 > f0: then *gain = f1 - f0 and 1; 0 when no trial passed or one
 * moved nothing. */
typedef double (*model_trial_fn)(void *ctx, double step, double *gd, int *moved);
int model_backtrack(model_trial_fn trial, void *ctx, double f0, double step, double *gain);

/* The rise f1 - f0 of u's row objective (model_row_objective()) made by
 * the last update of w that returned 1. The row objective holds every
 * term of l(F) that involves u, so with the other rows fixed this is the
 * change of l(F) (the sweep engine sums it instead of recomputing l(F):
 * sweep.c). f0 and f1 are the values the line search compared, so it equals
 * model_row_objective(new) - model_row_objective(old) only up to
 * rounding. */
double model_work_gain(const struct model_work *w);
/* 1 when the gains are the change of l(F) (up to rounding): when qeps is
 * above the floor (1e-12) the update puts under x in f0's edge terms, that
 * is for every background probability the fit would choose itself; 0 for
 * a smaller --epsilon, where f0 is off for links whose ends share
 * nothing. */
int model_gain_exact(const struct model *m);

/* The present model as the sweep engine sees it (objective.h): BigCLAM
 * with a background, rows coupled through -F_u . F_v. Static; never NULL. */
struct objective_ops;
const struct objective_ops *model_objective(void);

/* Which likelihood a fit maximises (fit_params.model; run.json and the
 * checkpoint record it). The strengths are a struct model for each. */
enum model_kind {
	MODEL_BIGCLAM = 0, /* links: 1 - exp(-F_u . F_v) (this file) */
	MODEL_POISSON = 1, /* weights: Poisson(F_u . F_v) (model_poisson.h) */
	MODEL_DIRECTED = 2, /* arcs: 1 - exp(-F_u . H_v), sending and receiving rows
			       of one node set (model_directed.h) */
	MODEL_TWO_MODE = 3, /* the same between two kinds of nodes */
	MODEL_DIRECTED_POISSON = 4, /* arc weights: Poisson(F_u . H_v) (model_poisson.h) */
	MODEL_TWO_MODE_POISSON = 5, /* the same between two kinds of nodes */
	MODEL_KINDS
};
/* 1 for the two-sided kinds (directed, two-mode; weighted or not). */
static inline int model_kind_sided(enum model_kind kind)
{
	return kind == MODEL_DIRECTED || kind == MODEL_TWO_MODE ||
	       kind == MODEL_DIRECTED_POISSON || kind == MODEL_TWO_MODE_POISSON;
}
/* 1 for the kinds whose pairs carry a Poisson weight (model_poisson.h). */
static inline int model_kind_weighted(enum model_kind kind)
{
	return kind == MODEL_POISSON || kind == MODEL_DIRECTED_POISSON ||
	       kind == MODEL_TWO_MODE_POISSON;
}
/* 1 for the directed kinds (a node's two rows are a pair: graph.paired). */
static inline int model_kind_directed(enum model_kind kind)
{
	return kind == MODEL_DIRECTED || kind == MODEL_DIRECTED_POISSON;
}
/* The weighted form of kind (bigclam -> poisson, directed -> directed-poisson,
 * two-mode -> two-mode-poisson; a weighted kind is its own). */
static inline enum model_kind model_kind_with_weights(enum model_kind kind)
{
	switch (kind) {
	case MODEL_BIGCLAM: return MODEL_POISSON;
	case MODEL_DIRECTED: return MODEL_DIRECTED_POISSON;
	case MODEL_TWO_MODE: return MODEL_TWO_MODE_POISSON;
	default: return kind;
	}
}
/* "bigclam", "poisson", "directed", "two-mode", "directed-poisson",
 * "two-mode-poisson" (static); "unknown" out of range. */
const char *model_kind_name(enum model_kind kind);
/* The objective of a kind (static), or NULL out of range. */
const struct objective_ops *model_objective_of(enum model_kind kind);

#endif
