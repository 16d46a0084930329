/*
 * test_model: the relaxed log-likelihood, the row objective and gradient,
 * and the projected row update, checked against direct evaluation.
 *
 * The reference for every check here is the definition itself, evaluated
 * the slow way: the log-likelihood of Yang & Leskovec (WSDM 2013, eq. 3)
 * with a background community as in the AGM (ICDM 2012), summed over all
 * n(n-1)/2 pairs, and derivatives by central finite differences.
 */
#include "helpers.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/rng.h"

/* A random sparse model on a graph (from test_random_graph() in helpers.c). */
static void random_model(struct rng *r, struct model *m, uint32_t n, uint32_t k, double eps,
			 double density)
{
	assert_int_equal(model_init(m, n, k, eps), 0);
	struct fentry row[64];
	for (uint32_t u = 0; u < n; u++) {
		uint32_t nnz = 0;
		for (uint32_t c = 0; c < k; c++)
			if (rng_uniform(r) < density)
				row[nnz++] = (struct fentry){ c, 0.05 + 1.5 * rng_uniform(r) };
		assert_int_equal(model_set_row(m, u, row, nnz), 0);
	}
	assert_model_sane(m);
}

static double dense_dot(const struct model *m, uint32_t u, uint32_t v)
{
	const struct frow *a = &m->rows[u], *b = &m->rows[v];
	double s = 0;
	for (uint32_t i = 0; i < a->nnz; i++)
		for (uint32_t j = 0; j < b->nnz; j++)
			if (a->e[i].c == b->e[j].c)
				s += a->e[i].v * b->e[j].v;
	return s;
}

/* l(F) over all pairs, straight from the definition (held-out pairs in
 * m->excl skipped). */
static double direct_loglik(const struct model *m, const struct graph *g)
{
	double l = 0;
	for (uint32_t u = 0; u < g->n; u++)
		for (uint32_t v = u + 1; v < g->n; v++) {
			if (m->excl && graph_has_edge(m->excl, u, v))
				continue;
			double x = dense_dot(m, u, v) + m->qeps;
			/* log(1 - e^-x) in the accurate form log(-expm1(-x)): the naive
			 * one loses every digit at x ~ 1e-9 */
			l += graph_has_edge(g, u, v) ? log(-expm1(-x)) : -x;
		}
	return l;
}

static void test_loglik_matches_direct_pair_sum(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 11);
	for (int trial = 0; trial < 20; trial++) {
		uint32_t n = 5 + (uint32_t)rng_below(&r, 20);
		struct graph *g = test_random_graph(&r, n, 0.1 + 0.5 * rng_uniform(&r));
		struct model m;
		double eps = trial % 4 == 0 ? 1e-9 : 0.01 + 0.1 * rng_uniform(&r);
		random_model(&r, &m, n, 1 + (uint32_t)rng_below(&r, 6), eps, 0.5);
		double fast = model_loglik(&m, g), slow = direct_loglik(&m, g);
		assert_true(isfinite(fast));
		assert_true(fabs(fast - slow) <= 1e-9 * (1.0 + fabs(slow)));
		model_release(&m);
		graph_free(g);
	}
}

static void test_log1mexp_is_accurate_near_zero(void **state)
{
	(void)state;
	/* worked by hand: 1 - e^{-x} = x - x^2/2 + ..., so for x = 1e-20 the
	 * value is log(1e-20) = -20 ln 10 = -46.0517018598809 to 15 digits,
	 * where the naive log(1 - exp(-x)) gives log(0) = -inf */
	assert_true(fabs(model_log1mexp(1e-20) - (-46.0517018598809136)) < 1e-12);
	/* x = ln 2: 1 - 1/2 = 1/2, log = -ln 2 */
	assert_true(fabs(model_log1mexp(log(2.0)) + log(2.0)) < 1e-15);
	assert_true(isinf(model_log1mexp(0.0)) && model_log1mexp(0.0) < 0);
	/* large x: log(1 - e^-40) ~ -e^-40 = -4.248354255291589e-18 */
	assert_true(fabs(model_log1mexp(40.0) + 4.248354255291589e-18) < 1e-30);
}

/* Copy of row u as entries. */
static uint32_t row_copy(const struct model *m, uint32_t u, struct fentry *out)
{
	if (m->rows[u].nnz)
		memcpy(out, m->rows[u].e, m->rows[u].nnz * sizeof *out);
	return m->rows[u].nnz;
}

static void test_row_objective_tracks_whole_loglik(void **state)
{
	(void)state;
	/* l(F with row u := r) - l(F) must equal obj(r) - obj(F_u): the column-sum
	 * identity (sum over non-neighbours = colsum - F_u - sum over neighbours)
	 * is exact, so only rounding separates the two */
	struct rng r;
	rng_init(&r, 12);
	for (int trial = 0; trial < 30; trial++) {
		uint32_t n = 6 + (uint32_t)rng_below(&r, 15), k = 1 + (uint32_t)rng_below(&r, 5);
		struct graph *g = test_random_graph(&r, n, 0.35);
		struct model m;
		random_model(&r, &m, n, k, 0.02, 0.6);
		struct model_work *w = model_work_new(k);
		uint32_t u = (uint32_t)rng_below(&r, n);
		struct fentry cur[16], trial_row[16];
		uint32_t ncur = row_copy(&m, u, cur);
		uint32_t nt = 0;
		for (uint32_t c = 0; c < k; c++)
			if (rng_uniform(&r) < 0.7)
				trial_row[nt++] = (struct fentry){ c, 0.1 + rng_uniform(&r) };
		double l0 = direct_loglik(&m, g);
		double o0 = model_row_objective(&m, g, u, cur, ncur, w);
		double o1 = model_row_objective(&m, g, u, trial_row, nt, w);
		assert_int_equal(model_set_row(&m, u, trial_row, nt), 0);
		double l1 = direct_loglik(&m, g);
		assert_true(fabs((l1 - l0) - (o1 - o0)) <= 1e-9 * (1.0 + fabs(l1)));
		model_work_free(w);
		model_release(&m);
		graph_free(g);
	}
}

static void test_row_gradient_matches_finite_differences(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 13);
	for (int trial = 0; trial < 30; trial++) {
		uint32_t n = 6 + (uint32_t)rng_below(&r, 15), k = 1 + (uint32_t)rng_below(&r, 5);
		struct graph *g = test_random_graph(&r, n, 0.4);
		struct model m;
		random_model(&r, &m, n, k, 0.03, 0.6);
		struct model_work *w = model_work_new(k);
		uint32_t u = (uint32_t)rng_below(&r, n);
		double grad[8];
		model_row_gradient(&m, g, u, w, grad);
		double dense[8] = { 0 };
		for (uint32_t i = 0; i < m.rows[u].nnz; i++)
			dense[m.rows[u].e[i].c] = m.rows[u].e[i].v;
		for (uint32_t c = 0; c < k; c++) {
			/* central differences where the strength is positive, forward at 0
			 * (the objective is defined only for nonnegative strengths) */
			double h = 1e-6, fd;
			struct fentry a[8], b[8];
			uint32_t na = 0, nb = 0;
			double lo = dense[c] > h ? dense[c] - h : dense[c];
			double hi = dense[c] + h;
			for (uint32_t cc = 0; cc < k; cc++) {
				double va = cc == c ? hi : dense[cc], vb = cc == c ? lo : dense[cc];
				if (va > 0)
					a[na++] = (struct fentry){ cc, va };
				if (vb > 0)
					b[nb++] = (struct fentry){ cc, vb };
			}
			fd = (model_row_objective(&m, g, u, a, na, w) -
			      model_row_objective(&m, g, u, b, nb, w)) / (hi - lo);
			double tolr = dense[c] > h ? 1e-6 : 1e-4; /* one-sided is O(h) */
			assert_true(fabs(fd - grad[c]) <= tolr * (1.0 + fabs(grad[c])));
		}
		model_work_free(w);
		model_release(&m);
		graph_free(g);
	}
}

static void test_row_update_raises_row_objective_and_loglik(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 14);
	int improved = 0;
	for (int trial = 0; trial < 40; trial++) {
		uint32_t n = 8 + (uint32_t)rng_below(&r, 20), k = 1 + (uint32_t)rng_below(&r, 6);
		struct graph *g = test_random_graph(&r, n, 0.3);
		struct model m;
		random_model(&r, &m, n, k, 0.02, 0.4);
		struct model_work *w = model_work_new(k);
		uint32_t u = (uint32_t)rng_below(&r, n);
		struct fentry cur[8];
		uint32_t ncur = row_copy(&m, u, cur);
		double o0 = model_row_objective(&m, g, u, cur, ncur, w);
		double l0 = model_loglik(&m, g);
		const struct fentry *nr;
		uint32_t nn;
		if (model_update_row(&m, g, u, w, &nr, &nn)) {
			struct fentry keep[8];
			memcpy(keep, nr, nn * sizeof *keep);
			double o1 = model_row_objective(&m, g, u, keep, nn, w);
			assert_true(o1 > o0);
			for (uint32_t i = 0; i < nn; i++) {
				assert_true(keep[i].v > 0 && keep[i].v <= MODEL_FMAX);
				if (i)
					assert_true(keep[i - 1].c < keep[i].c);
			}
			assert_int_equal(model_set_row(&m, u, keep, nn), 0);
			assert_model_sane(&m);
			assert_true(model_loglik(&m, g) > l0);
			improved++;
		}
		model_work_free(w);
		model_release(&m);
		graph_free(g);
	}
	assert_true(improved > 20); /* random rows are far from optimal */
}

static void test_export_import_round_trip(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 15);
	struct graph *g = test_random_graph(&r, 30, 0.2);
	struct model a, b;
	random_model(&r, &a, 30, 5, 0.01, 0.5);
	struct fcsr f;
	assert_int_equal(model_export(&a, &f), 0);
	assert_fcsr_sane(&f);
	assert_int_equal(model_init(&b, 30, 5, 0.01), 0);
	assert_int_equal(model_import(&b, &f), 0);
	assert_true(model_loglik(&a, g) == model_loglik(&b, g));
	fcsr_release(&f);
	model_release(&a);
	model_release(&b);
	graph_free(g);
}

/* model_pack(): the rows move into one slab in row order and keep every
 * bit; a row that outgrows its room afterwards leaves the slab, one that
 * shrinks stays in it, and both read back as written (the reference is
 * the rows before packing, and model_set_row's own contract). */
static void test_pack_keeps_rows_and_lets_them_grow(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 31);
	struct graph *g = test_random_graph(&r, 40, 0.2);
	struct model a, b;
	random_model(&r, &a, 40, 12, 0.01, 0.3);
	random_model(&r, &b, 40, 12, 0.01, 0.0); /* same shape, rows copied below */
	for (uint32_t u = 0; u < 40; u++)
		assert_int_equal(model_set_row(&b, u, a.rows[u].e, a.rows[u].nnz), 0);
	double before = model_loglik(&a, g);
	model_pack(&a);
	assert_non_null(a.slab);
	assert_model_sane(&a);
	assert_true(model_loglik(&a, g) == before);
	for (uint32_t u = 0; u < 40; u++) {
		assert_int_equal(a.rows[u].nnz, b.rows[u].nnz);
		assert_memory_equal(a.rows[u].e, b.rows[u].e, a.rows[u].nnz * sizeof *a.rows[u].e);
		/* in row order, each row after the last one's room */
		if (u > 0)
			assert_ptr_equal(a.rows[u].e, a.rows[u - 1].e + a.rows[u - 1].cap);
	}
	/* row 3 grows to every community (beyond its room), row 5 empties */
	struct fentry full[12];
	for (uint32_t c = 0; c < 12; c++)
		full[c] = (struct fentry){ c, 0.25 + 0.01 * c };
	struct fentry *room5 = a.rows[5].e;
	assert_int_equal(model_set_row(&a, 3, full, 12), 0);
	assert_int_equal(model_set_row(&b, 3, full, 12), 0);
	assert_int_equal(model_set_row(&a, 5, NULL, 0), 0);
	assert_int_equal(model_set_row(&b, 5, NULL, 0), 0);
	assert_ptr_equal(a.rows[5].e, room5);
	assert_model_sane(&a);
	assert_true(model_loglik(&a, g) == model_loglik(&b, g));
	/* a second pack takes the grown row back in and frees the first slab */
	model_pack(&a);
	assert_model_sane(&a);
	assert_int_equal(a.rows[3].nnz, 12);
	assert_ptr_equal(a.rows[4].e, a.rows[3].e + a.rows[3].cap);
	assert_true(model_loglik(&a, g) == model_loglik(&b, g));
	model_release(&a);
	model_release(&b);
	/* rows denser than 16 entries on average (about 24 of 40 here) are
	 * not packed: they stay where they are, every bit as they were */
	struct model d;
	random_model(&r, &d, 40, 40, 0.01, 0.6);
	double dense = model_loglik(&d, g);
	model_pack(&d);
	assert_null(d.slab);
	assert_model_sane(&d);
	assert_true(model_loglik(&d, g) == dense);
	model_release(&d);
	graph_free(g);
}

static void test_model_refuses_bad_shapes(void **state)
{
	(void)state;
	struct model m;
	assert_int_equal(model_init(&m, 10, 0, 0.1), -1);
	assert_int_equal(model_init(&m, 10, 3, 1.0), -1);
	assert_int_equal(model_init(&m, 10, 3, -0.1), -1);
	assert_int_equal(model_init(&m, 10, MODEL_MAX_K + 1, 0.1), -1);
}

static void test_default_epsilon_is_density(void **state)
{
	(void)state;
	/* a path of 4 nodes: 3 edges of 6 pairs, density 2*3/(4*3) = 0.5 */
	uint32_t pairs[] = { 0, 1, 1, 2, 2, 3 };
	struct graph *g = graph_from_pairs(4, pairs, 3, NULL);
	assert_true(fabs(model_default_epsilon(g) - 0.5) < 1e-15);
	graph_free(g);
	/* 5 nodes, 1 edge: 2/(5*4) = 0.1; delta = sqrt(-ln 0.9) = 0.32459... */
	uint32_t one[] = { 0, 1 };
	g = graph_from_pairs(5, one, 1, NULL);
	struct model m;
	assert_int_equal(model_init(&m, 5, 2, model_default_epsilon(g)), 0);
	assert_true(fabs(m.epsilon - 0.1) < 1e-15);
	assert_true(fabs(m.delta - sqrt(-log(0.9))) < 1e-15);
	model_release(&m);
	graph_free(g);
}

/* A random graph and a disjoint random set of held-out pairs. */
static void random_split(struct rng *r, uint32_t n, double p, double hold, struct graph **g,
			 struct graph **excl)
{
	uint32_t *e = malloc(sizeof *e * n * n), *h = malloc(sizeof *h * n * n);
	uint64_t ne = 0, nh = 0;
	for (uint32_t u = 0; u < n; u++)
		for (uint32_t v = u + 1; v < n; v++) {
			if (rng_uniform(r) < hold) {
				h[2 * nh] = u;
				h[2 * nh + 1] = v;
				nh++;
			} else if (rng_uniform(r) < p) {
				e[2 * ne] = u;
				e[2 * ne + 1] = v;
				ne++;
			}
		}
	*g = graph_from_pairs(n, e, ne, NULL);
	*excl = graph_from_pairs(n, h, nh, NULL);
	free(e);
	free(h);
	assert_non_null(*g);
	assert_non_null(*excl);
}

static void test_held_out_pairs_leave_the_likelihood(void **state)
{
	(void)state;
	/* the definition with the held-out pairs simply left out of both sums,
	 * against the column-sum forms of the whole and the row objective */
	struct rng r;
	rng_init(&r, 16);
	for (int trial = 0; trial < 20; trial++) {
		uint32_t n = 6 + (uint32_t)rng_below(&r, 15), k = 1 + (uint32_t)rng_below(&r, 5);
		struct graph *g, *x;
		random_split(&r, n, 0.35, 0.2, &g, &x);
		struct model m;
		random_model(&r, &m, n, k, 0.02, 0.6);
		m.excl = x;
		double fast = model_loglik(&m, g), slow = direct_loglik(&m, g);
		assert_true(fabs(fast - slow) <= 1e-9 * (1.0 + fabs(slow)));
		struct model_work *w = model_work_new(k);
		uint32_t u = (uint32_t)rng_below(&r, n);
		struct fentry cur[16], tr[16];
		uint32_t ncur = row_copy(&m, u, cur), nt = 0;
		for (uint32_t c = 0; c < k; c++)
			if (rng_uniform(&r) < 0.7)
				tr[nt++] = (struct fentry){ c, 0.1 + rng_uniform(&r) };
		double o0 = model_row_objective(&m, g, u, cur, ncur, w);
		double o1 = model_row_objective(&m, g, u, tr, nt, w);
		assert_int_equal(model_set_row(&m, u, tr, nt), 0);
		double l1 = direct_loglik(&m, g);
		assert_true(fabs((l1 - slow) - (o1 - o0)) <= 1e-9 * (1.0 + fabs(l1)));
		model_work_free(w);
		model_release(&m);
		graph_free(g);
		graph_free(x);
	}
}

static void test_row_gradient_with_held_out_pairs_matches_pair_by_pair_sum(void **state)
{
	(void)state;
	/* the gradient from the definition, pair by pair and with no column
	 * sums: d l / d F_uc = sum over v != u not held out with u of
	 *   F_vc e^{-y} / (1 - e^{-y})   (uv an edge; y = F_u.F_v + qeps)
	 *   - F_vc                        (uv a non-edge)
	 * (differentiating l(F) in model.h term by term) */
	struct rng r;
	rng_init(&r, 17);
	for (int trial = 0; trial < 30; trial++) {
		uint32_t n = 6 + (uint32_t)rng_below(&r, 15), k = 1 + (uint32_t)rng_below(&r, 5);
		struct graph *g, *x;
		random_split(&r, n, 0.35, 0.25, &g, &x);
		struct model m;
		random_model(&r, &m, n, k, 0.02, 0.6);
		m.excl = x;
		struct model_work *w = model_work_new(k);
		uint32_t u = (uint32_t)rng_below(&r, n);
		double grad[8], want[8] = { 0 };
		model_row_gradient(&m, g, u, w, grad);
		for (uint32_t v = 0; v < n; v++) {
			if (v == u || graph_has_edge(x, u, v))
				continue;
			double y = dense_dot(&m, u, v) + m.qeps;
			double wgt = graph_has_edge(g, u, v) ? exp(-y) / -expm1(-y) : -1.0;
			for (uint32_t j = 0; j < m.rows[v].nnz; j++)
				want[m.rows[v].e[j].c] += wgt * m.rows[v].e[j].v;
		}
		for (uint32_t c = 0; c < k; c++)
			assert_true(fabs(grad[c] - want[c]) <= 1e-9 * (1.0 + fabs(want[c])));
		model_work_free(w);
		model_release(&m);
		graph_free(g);
		graph_free(x);
	}
}

/*
 * The reference gradient: the older two-pass form the engine once used.
 * Pass one gathers the candidates (communities of u's row, its
 * neighbours' and held-out partners' rows) and the neighbour sum; pass
 * two takes each neighbour's weight 1 / expm1(x), x = F_u . F_v + qeps
 * (floored at 1e-12 as model_row.c does), and scatters it. The real one
 * (model_row_gradient(), the pass model_update_row() steps along) does
 * both in one pass and must give the same bits: its sums run in the same
 * order.
 */
static void reference_row_gradient(const struct model *m, const struct graph *g, uint32_t u,
				   double *grad)
{
	uint32_t k = m->k;
	double *cur = calloc(k, sizeof *cur), *nbr = calloc(k, sizeof *nbr);
	double *acc = calloc(k, sizeof *acc);
	char *cand = calloc(k, 1);
	assert_non_null(cur);
	assert_non_null(nbr);
	assert_non_null(acc);
	assert_non_null(cand);
	const struct frow *ru = &m->rows[u];
	for (uint32_t i = 0; i < ru->nnz; i++) {
		cand[ru->e[i].c] = 1;
		cur[ru->e[i].c] = ru->e[i].v;
	}
	for (int pass = 0; pass < 2; pass++) {
		const struct graph *h = pass == 0 ? g : m->excl;
		if (!h)
			continue;
		for (uint64_t i = h->off[u]; i < h->off[u + 1]; i++) {
			const struct frow *rv = &m->rows[h->adj[i]];
			for (uint32_t j = 0; j < rv->nnz; j++) {
				cand[rv->e[j].c] = 1;
				nbr[rv->e[j].c] += rv->e[j].v;
			}
		}
	}
	for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++) {
		const struct frow *rv = &m->rows[g->adj[i]];
		double x = 0.0;
		for (uint32_t j = 0; j < rv->nnz; j++)
			x += cur[rv->e[j].c] * rv->e[j].v;
		x += m->qeps;
		double wt = 1.0 / expm1(x > 1e-12 ? x : 1e-12);
		for (uint32_t j = 0; j < rv->nnz; j++)
			acc[rv->e[j].c] += rv->e[j].v * wt;
	}
	for (uint32_t c = 0; c < k; c++)
		grad[c] = cand[c] ? acc[c] - (m->colsum[c] - cur[c] - nbr[c]) : -m->colsum[c];
	free(cur);
	free(nbr);
	free(acc);
	free(cand);
}

static void test_row_gradient_matches_the_two_pass_reference_bit_for_bit(void **state)
{
	(void)state;
	struct rng r;
	rng_init(&r, 18);
	for (int trial = 0; trial < 40; trial++) {
		uint32_t n = 6 + (uint32_t)rng_below(&r, 25), k = 1 + (uint32_t)rng_below(&r, 8);
		struct graph *g, *x;
		random_split(&r, n, 0.35, trial % 2 ? 0.2 : 0.0, &g, &x);
		struct model m;
		random_model(&r, &m, n, k, trial % 5 == 0 ? 1e-13 : 0.02, 0.5);
		m.excl = trial % 2 ? x : NULL;
		struct model_work *w = model_work_new(k);
		for (uint32_t u = 0; u < n; u++) {
			double grad[8], want[8];
			model_row_gradient(&m, g, u, w, grad);
			reference_row_gradient(&m, g, u, want);
			assert_memory_equal(grad, want, k * sizeof *grad);
		}
		model_work_free(w);
		model_release(&m);
		graph_free(g);
		graph_free(x);
	}
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_loglik_matches_direct_pair_sum),
		cmocka_unit_test(test_log1mexp_is_accurate_near_zero),
		cmocka_unit_test(test_row_objective_tracks_whole_loglik),
		cmocka_unit_test(test_row_gradient_matches_finite_differences),
		cmocka_unit_test(test_row_update_raises_row_objective_and_loglik),
		cmocka_unit_test(test_export_import_round_trip),
		cmocka_unit_test(test_pack_keeps_rows_and_lets_them_grow),
		cmocka_unit_test(test_model_refuses_bad_shapes),
		cmocka_unit_test(test_default_epsilon_is_density),
		cmocka_unit_test(test_held_out_pairs_leave_the_likelihood),
		cmocka_unit_test(test_row_gradient_with_held_out_pairs_matches_pair_by_pair_sum),
		cmocka_unit_test(test_row_gradient_matches_the_two_pass_reference_bit_for_bit),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
