/*
 * test_sweep: the sweep engine driven directly, without the fitting
 * thread: on the present model (BigCLAM, model_objective()) and on a
 * second, trivial objective plugged in through the seam of objective.h.
 *
 * References: l(F) recomputed over all nodes (model_loglik(), itself
 * checked pair by pair in test_model.c) for the summed value; for the
 * separable quadratic -sum (F_uc - t_uc)^2, its closed form (a half step
 * toward the target from zero leaves F = (1 - 2^-s) t after s sweeps, so
 * the objective is -4^-s sum t^2; worked by hand).
 */
#include "helpers.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/fcsr.h"
#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/objective.h"
#include "coterie/rng.h"
#include "coterie/seed.h"
#include "coterie/sweep.h"

#define EPS 0.001

/* A planted ring big enough that blocks fill (n / 64 > 32 rows), so a
 * second thread really computes rows. */
static struct graph *ring(void)
{
	return test_planted_ring_of(NULL, 2400, 30, 120, 80, 0.25, EPS, 21);
}

static void seeded(struct model *m, const struct graph *g, uint32_t k)
{
	struct seed_report rep;
	assert_int_equal(model_init(m, g->n, k, EPS), 0);
	assert_int_equal(seed_model(g, m, 5, 0, &rep), 0);
}

static void test_sweeps_raise_the_loglik_and_sum_to_a_recompute(void **state)
{
	(void)state;
	struct graph *g = ring();
	struct model m;
	seeded(&m, g, 30);
	struct sweep *s = sweep_new(&m, g, model_objective(), 1);
	assert_non_null(s);
	double ll = sweep_objective(s), first = ll;
	/* parts of fixed ranges against one range: equal up to rounding */
	assert_true(fabs(ll - model_loglik(&m, g)) <= 1e-12 * fabs(ll));
	for (uint64_t k = 0; k < 8; k++) {
		double before = ll;
		assert_int_equal(sweep_run(s, 100 + k, NULL, NULL, &ll), 0);
		double again = model_loglik(&m, g);
		/* summed, not recomputed: equal up to rounding (sweep.c) */
		assert_true(fabs(ll - again) <= 1e-11 * fabs(again));
		assert_true(fabs(sweep_objective(s) - again) <= 1e-12 * fabs(again));
		assert_true(ll >= before - 1e-12 * fabs(before));
		assert_model_sane(&m);
	}
	assert_true(ll > first);
	sweep_free(s);
	model_release(&m);
	graph_free(g);
}

/* An engine of the given threads, its pool started, on a fresh seeded
 * model m (30 columns) of g. */
static struct sweep *engine(struct model *m, const struct graph *g, unsigned threads)
{
	seeded(m, g, 30);
	struct sweep *s = sweep_new(m, g, model_objective(), threads);
	assert_non_null(s);
	assert_int_equal(sweep_pool_start(s), 0);
	assert_int_equal(sweep_threads(s), threads);
	return s;
}

/* Stop and free engine s; m's strengths into out, then m released. */
static void engine_done(struct sweep *s, struct model *m, struct fcsr *out)
{
	sweep_pool_stop(s);
	sweep_free(s);
	assert_int_equal(model_export(m, out), 0);
	model_release(m);
}

/* k sweeps of a fresh seeded model with the given threads: the strengths
 * and the summed change. */
static double run_with_threads(const struct graph *g, unsigned threads, struct fcsr *out)
{
	struct model m;
	struct sweep *s = engine(&m, g, threads);
	double dl = 0.0;
	for (uint64_t k = 0; k < 5; k++)
		assert_int_equal(sweep_run(s, 7 + k, NULL, NULL, &dl), 0);
	struct objective_counts c;
	sweep_counts(s, &c);
	assert_true(c.rows >= 5u * g->n); /* every node visited every sweep */
	engine_done(s, &m, out);
	return dl;
}

/* Five sweeps of g on one thread and on two: the same bits. */
static void assert_threads_agree(const struct graph *g)
{
	struct fcsr a, b;
	double da = run_with_threads(g, 1, &a), db = run_with_threads(g, 2, &b);
	assert_memory_equal(&da, &db, sizeof da);
	assert_int_equal(a.off[a.n], b.off[b.n]);
	assert_memory_equal(a.off, b.off, ((size_t)a.n + 1) * sizeof *a.off);
	assert_memory_equal(a.e, b.e, a.off[a.n] * sizeof *a.e);
	assert_memory_equal(a.colsum, b.colsum, a.k * sizeof *a.colsum);
	fcsr_release(&a);
	fcsr_release(&b);
}

static void test_one_and_two_threads_give_identical_bits(void **state)
{
	(void)state;
	struct graph *g = ring();
	assert_threads_agree(g);
	graph_free(g);
}

/* Quiet sweeps (sweep.h) on the planted ring: after a sweep in which no
 * row's gain passed wake_gain every row sleeps, and a quiet sweep then
 * leaves the model as it was, bit for bit; with a realistic wake gain a
 * schedule of quiet and full sweeps gives the same bits and the same
 * skipped rows on one thread and two, skips some rows, and its summed
 * l(F) still equals a recompute. */
static double quiet_schedule(const struct graph *g, unsigned threads, struct fcsr *out,
			     uint64_t *skipped)
{
	struct model m;
	struct sweep *s = engine(&m, g, threads);
	double ll = sweep_objective(s);
	for (uint64_t k = 0; k < 24; k++) {
		/* the fit's rule: full every 8th sweep and the first; a row
		 * wakes its neighbours past ten times 1e-4 of |l(F)| / n */
		sweep_set_quiet(s, k % 8 != 0, 10 * 1e-4 * fabs(ll) / g->n);
		assert_int_equal(sweep_run(s, 40 + k, NULL, NULL, &ll), 0);
		double again = model_loglik(&m, g);
		assert_true(fabs(ll - again) <= 1e-11 * fabs(again));
		assert_model_sane(&m);
	}
	*skipped = sweep_skipped(s);
	engine_done(s, &m, out);
	return ll;
}

static void test_quiet_sweeps_skip_sleeping_rows_and_keep_the_bits(void **state)
{
	(void)state;
	struct graph *g = ring();
	struct model m;
	struct sweep *s = engine(&m, g, 2);
	double dl = 0.0;
	sweep_set_quiet(s, 0, HUGE_VAL); /* a full sweep in which nothing wakes */
	assert_int_equal(sweep_run(s, 3, NULL, NULL, &dl), 0);
	const uint8_t *awake = sweep_awake(s);
	for (uint32_t u = 0; u < g->n; u++)
		assert_int_equal(awake[u], 0);
	struct fcsr before, after;
	assert_int_equal(model_export(&m, &before), 0);
	dl = 0.0;
	sweep_set_quiet(s, 1, HUGE_VAL);
	assert_int_equal(sweep_run(s, 4, NULL, NULL, &dl), 0);
	assert_true(dl == 0.0);
	assert_true(sweep_skipped(s) == g->n);
	assert_int_equal(model_export(&m, &after), 0);
	assert_memory_equal(before.off, after.off, ((size_t)g->n + 1) * sizeof *before.off);
	assert_memory_equal(before.e, after.e, before.off[g->n] * sizeof *before.e);
	/* a full sweep that wakes every row that changed: rows sleep only
	 * where neither they nor a neighbour changed */
	sweep_set_quiet(s, 0, -HUGE_VAL);
	assert_int_equal(sweep_run(s, 5, NULL, NULL, &dl), 0);
	uint32_t up = 0;
	for (uint32_t u = 0; u < g->n; u++)
		up += awake[u];
	assert_true(up > g->n / 2);
	fcsr_release(&before);
	fcsr_release(&after);
	sweep_pool_stop(s);
	sweep_free(s);
	model_release(&m);

	struct fcsr a, b;
	uint64_t sa, sb;
	double la = quiet_schedule(g, 1, &a, &sa), lb = quiet_schedule(g, 2, &b, &sb);
	assert_memory_equal(&la, &lb, sizeof la);
	assert_true(sa == sb);
	assert_true(sa > 0);
	assert_memory_equal(a.off, b.off, ((size_t)a.n + 1) * sizeof *a.off);
	assert_memory_equal(a.e, b.e, a.off[a.n] * sizeof *a.e);
	fcsr_release(&a);
	fcsr_release(&b);
	graph_free(g);
}

static int stop_at_third(void *arg)
{
	int *calls = arg;
	return ++*calls == 3;
}

static void test_between_blocks_can_end_a_sweep(void **state)
{
	(void)state;
	struct graph *g = ring();
	struct model m;
	seeded(&m, g, 30);
	struct sweep *s = sweep_new(&m, g, model_objective(), 1);
	int calls = 0;
	double dl = 0.0;
	assert_int_equal(sweep_run(s, 3, stop_at_third, &calls, &dl), 1);
	assert_int_equal(calls, 3);
	/* two blocks were applied, and the sum still tracks them */
	double again = model_loglik(&m, g);
	sweep_free(s);
	struct model m0;
	seeded(&m0, g, 30);
	double l0 = model_loglik(&m0, g);
	assert_true(fabs((l0 + dl) - again) <= 1e-11 * fabs(again));
	assert_true(dl > 0.0);
	model_release(&m0);
	model_release(&m);
	graph_free(g);
}

/* ---- a second objective: -sum_u sum_c (F_uc - t_uc)^2 ---- */

#define QK 4u

/* The target: between 1 and 5 where (u + c) is not a multiple of 3. */
static double target(uint32_t u, uint32_t c)
{
	return (u + c) % 3 == 0 ? 0.0 : 1.0 + (double)((7 * u + 3 * c) % 5);
}

struct qwork {
	struct fentry out[QK];
	double gain;
	uint64_t rows;
};

static void *q_work_new(const struct model *m)
{
	(void)m;
	return calloc(1, sizeof(struct qwork));
}

static void q_work_free(void *w)
{
	free(w);
}

static double q_row(const struct fentry *r, uint32_t nnz, uint32_t u)
{
	double dense[QK] = { 0 }, f = 0.0;
	for (uint32_t i = 0; i < nnz; i++)
		dense[r[i].c] = r[i].v;
	for (uint32_t c = 0; c < QK; c++)
		f -= (dense[c] - target(u, c)) * (dense[c] - target(u, c));
	return f;
}

static double q_row_objective(const struct model *m, const struct graph *g, uint32_t u,
			      const struct fentry *r, uint32_t nnz, void *w)
{
	(void)m, (void)g, (void)w;
	return q_row(r, nnz, u);
}

static void q_row_gradient(const struct model *m, const struct graph *g, uint32_t u, void *w,
			   double *grad)
{
	(void)g, (void)w;
	double dense[QK] = { 0 };
	for (uint32_t i = 0; i < m->rows[u].nnz; i++)
		dense[m->rows[u].e[i].c] = m->rows[u].e[i].v;
	for (uint32_t c = 0; c < QK; c++)
		grad[c] = -2.0 * (dense[c] - target(u, c));
}

/* Half a Newton step: F <- F + (t - F) / 2 (the gradient times 1/4). */
static int q_update_row(const struct model *m, const struct graph *g, uint32_t u, void *vw,
			const struct fentry **out, uint32_t *out_nnz)
{
	struct qwork *w = vw;
	double grad[QK];
	q_row_gradient(m, g, u, w, grad);
	const struct frow *row = &m->rows[u];
	uint32_t o = 0;
	for (uint32_t c = 0; c < QK; c++) {
		double cur = 0.0;
		for (uint32_t i = 0; i < row->nnz; i++)
			if (row->e[i].c == c)
				cur = row->e[i].v;
		double v = cur + 0.25 * grad[c];
		if (v > 0.0)
			w->out[o++] = (struct fentry){ c, v };
	}
	w->gain = q_row(w->out, o, u) - q_row(row->e, row->nnz, u);
	w->rows++;
	*out = w->out;
	*out_nnz = o;
	return 1;
}

static double q_work_gain(const void *w)
{
	return ((const struct qwork *)w)->gain;
}

static int q_gain_exact(const struct model *m)
{
	(void)m;
	return 1;
}

static void q_work_counts(const void *w, struct objective_counts *c)
{
	c->rows += ((const struct qwork *)w)->rows;
}

static void q_part_range(const struct model *m, const struct graph *g, uint32_t u0, uint32_t u1,
			 void *part)
{
	(void)g;
	double f = 0.0;
	for (uint32_t u = u0; u < u1; u++)
		f += q_row(m->rows[u].e, m->rows[u].nnz, u);
	*(double *)part = f;
}

static double q_part_combine(const struct model *m, const struct graph *g, const void *parts,
			     size_t nparts)
{
	(void)m, (void)g;
	double f = 0.0;
	for (size_t i = 0; i < nparts; i++)
		f += ((const double *)parts)[i];
	return f;
}

static const struct objective_ops quadratic = {
	.name = "quadratic",
	.work_new = q_work_new,
	.work_free = q_work_free,
	.update_row = q_update_row,
	.work_gain = q_work_gain,
	.gain_exact = q_gain_exact,
	.work_counts = q_work_counts,
	.part_size = sizeof(double),
	.part_range = q_part_range,
	.part_combine = q_part_combine,
	.row_objective = q_row_objective,
	.row_gradient = q_row_gradient,
	.coupling = 0,
};

/* The quadratic objective on g for the given sweeps, on one thread and
 * two: every sweep must take every row exactly once (a row taken twice
 * would halve its distance twice, a row left out not at all, and the
 * closed form would miss). */
static void quadratic_sweeps(const struct graph *g, int sweeps)
{
	double sum_t2 = 0.0;
	for (uint32_t u = 0; u < g->n; u++)
		for (uint32_t c = 0; c < QK; c++)
			sum_t2 += target(u, c) * target(u, c);
	for (unsigned threads = 1; threads <= 2; threads++) {
		struct model m;
		assert_int_equal(model_init(&m, g->n, QK, EPS), 0);
		struct sweep *s = sweep_new(&m, g, &quadratic, threads);
		assert_non_null(s);
		sweep_pool_start(s);
		double ll = sweep_objective(s);
		assert_true(fabs(ll + sum_t2) <= 1e-12 * sum_t2);
		for (int k = 1; k <= sweeps; k++) {
			assert_int_equal(sweep_run(s, (uint64_t)k, NULL, NULL, &ll), 0);
			double want = -sum_t2 * pow(0.25, k);
			assert_true(fabs(ll - want) <= 1e-9 * sum_t2);
			assert_true(fabs(sweep_objective(s) - want) <= 1e-9 * sum_t2);
		}
		struct objective_counts c;
		sweep_counts(s, &c);
		assert_int_equal(c.rows, (uint64_t)sweeps * g->n);
		if (sweeps >= 12) /* at the maximum, 0, to within 4^-12 of where it started */
			assert_true(fabs(ll) < 1e-7 * sum_t2);
		sweep_free(s);
		model_release(&m);
	}
}

static void test_a_second_objective_plugs_into_the_engine(void **state)
{
	(void)state;
	struct graph *g = ring();
	quadratic_sweeps(g, 12);
	graph_free(g);
}

/* On graphs of 65,536 nodes or more a sweep takes its rows in runs of
 * consecutive ids (sweep.c, sweep_order()); the runs must still cover
 * every row once, the last short run included (70,001 = 2,187 runs of 32
 * and one of 17), and give the same bits on one thread and two. */
static struct graph *big_groups(uint32_t n)
{
	/* groups of 40 consecutive ids, linked inside with probability 0.2,
	 * and every node to one random node (built pair by pair: the planted
	 * ring's generator visits all n^2 pairs) */
	struct rng r;
	rng_init(&r, 5);
	size_t cap = (size_t)n * 5, np = 0;
	uint32_t *pairs = malloc(2 * cap * sizeof *pairs);
	assert_non_null(pairs);
	for (uint32_t u = 0; u < n; u++) {
		for (uint32_t v = u + 1; v < n && v / 40 == u / 40; v++)
			if (rng_uniform(&r) < 0.2 && np < cap) {
				pairs[2 * np] = u;
				pairs[2 * np++ + 1] = v;
			}
		if (np < cap) {
			pairs[2 * np] = u;
			pairs[2 * np++ + 1] = (uint32_t)(rng_uniform(&r) * n) % n;
		}
	}
	struct graph *g = graph_from_pairs(n, pairs, np, NULL);
	assert_non_null(g);
	free(pairs);
	return g;
}

static void test_runs_of_ids_take_every_row_once(void **state)
{
	(void)state;
	struct graph *g = big_groups(70001);
	quadratic_sweeps(g, 3);
	assert_threads_agree(g);
	graph_free(g);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_sweeps_raise_the_loglik_and_sum_to_a_recompute),
		cmocka_unit_test(test_one_and_two_threads_give_identical_bits),
		cmocka_unit_test(test_quiet_sweeps_skip_sleeping_rows_and_keep_the_bits),
		cmocka_unit_test(test_between_blocks_can_end_a_sweep),
		cmocka_unit_test(test_a_second_objective_plugs_into_the_engine),
		cmocka_unit_test(test_runs_of_ids_take_every_row_once),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
