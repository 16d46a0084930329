/* Shared test helpers; see helpers.h. */
#include "helpers.h"

#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "coterie/checkpoint.h"
#include "coterie/cover.h"
#include "coterie/fit.h"
#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/objective.h"
#include "coterie/result.h"
#include "coterie/rng.h"
#include "coterie/sweep.h"
#include "coterie/util.h"

void assert_graph_sane(const struct graph *g)
{
	assert_non_null(g);
	assert_int_equal(g->off[0], 0);
	assert_int_equal(g->off[g->n], 2 * g->m);
	for (uint32_t u = 0; u < g->n; u++) {
		assert_true(g->off[u] <= g->off[u + 1]);
		for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++) {
			uint32_t v = g->adj[i];
			assert_true(v < g->n);
			assert_true(v != u);
			if (i > g->off[u])
				assert_true(g->adj[i - 1] < v);
			assert_true(graph_has_edge(g, v, u));
			if (g->wt) { /* graph.h: finite, > 0, the same in both rows */
				assert_true(isfinite(g->wt[i]) && g->wt[i] > 0.0);
				const uint32_t *rv = g->adj + g->off[v];
				uint64_t j = g->off[v] + util_lower_bound_u32(rv, graph_degree(g, v), u);
				assert_true(g->wt[j] == g->wt[i]);
			}
		}
		assert_non_null(graph_name(g, u));
		assert_int_equal(graph_find(g, graph_name(g, u)), u);
	}
}

void assert_model_sane(const struct model *m)
{
	/* a two-sided model keeps each side's sums (model.h) */
	uint32_t cols = (m->nsend ? 2 : 1) * m->k;
	double *sum = calloc(cols ? cols : 1, sizeof *sum);
	assert_non_null(sum);
	for (uint32_t u = 0; u < m->n; u++) {
		const struct frow *r = &m->rows[u];
		assert_true(r->nnz <= r->cap || r->nnz == 0);
		for (uint32_t i = 0; i < r->nnz; i++) {
			assert_true(r->e[i].c < m->k);
			if (i)
				assert_true(r->e[i - 1].c < r->e[i].c);
			assert_true(r->e[i].v > 0 && r->e[i].v <= MODEL_FMAX);
			sum[r->e[i].c + (m->nsend && u >= m->nsend ? m->k : 0)] += r->e[i].v;
		}
	}
	for (uint32_t c = 0; c < cols; c++)
		assert_true(fabs(sum[c] - m->colsum[c]) <= 1e-9 * (1.0 + fabs(sum[c])));
	free(sum);
}

void assert_fcsr_sane(const struct fcsr *f)
{
	assert_int_equal(f->off[0], 0);
	for (uint32_t u = 0; u < f->n; u++) {
		assert_true(f->off[u] <= f->off[u + 1]);
		for (uint64_t i = f->off[u]; i < f->off[u + 1]; i++) {
			assert_true(f->e[i].c < f->k);
			if (i > f->off[u])
				assert_true(f->e[i - 1].c < f->e[i].c);
			assert_true(f->e[i].v > 0 && f->e[i].v <= MODEL_FMAX);
		}
	}
}

void assert_same_strengths(const struct fcsr *a, const struct fcsr *b)
{
	assert_int_equal(a->n, b->n);
	assert_memory_equal(a->off, b->off, ((size_t)a->n + 1) * sizeof *a->off);
	for (uint64_t i = 0; i < a->off[a->n]; i++) {
		assert_int_equal(a->e[i].c, b->e[i].c);
		assert_true(a->e[i].v == b->e[i].v);
	}
}

void assert_cover_sane(const struct cover *c)
{
	assert_int_equal(c->off[0], 0);
	for (uint32_t i = 0; i < c->k; i++) {
		assert_true(c->off[i] <= c->off[i + 1]);
		for (uint64_t j = c->off[i]; j < c->off[i + 1]; j++) {
			assert_true(c->mem[j] < c->n);
			if (j > c->off[i])
				assert_true(c->mem[j - 1] < c->mem[j]);
		}
		assert_non_null(c->label[i]);
	}
}

const char *test_data(const char *rel)
{
	static char buf[4096];
	const char *root = getenv("COTERIE_TEST_DATA");
	snprintf(buf, sizeof buf, "%s/%s", root ? root : "tests/data", rel);
	return buf;
}

const char *test_tmpdir(void)
{
	static char buf[256];
	const char *t = getenv("TMPDIR");
	snprintf(buf, sizeof buf, "%s/coterie-test-XXXXXX", t ? t : "/tmp");
	if (!mkdtemp(buf))
		fail_msg("mkdtemp: %s", strerror(errno));
	return buf;
}

void test_rmtree(const char *dir)
{
	char cmd[4200];
	if (!dir || !strstr(dir, "coterie-test-"))
		return;
	snprintf(cmd, sizeof cmd, "rm -rf '%s'", dir);
	if (system(cmd) != 0)
		fprintf(stderr, "warning: could not remove %s\n", dir);
}

const char *test_write_file(const char *dir, const char *name, const char *text)
{
	static char path[4096];
	snprintf(path, sizeof path, "%s/%s", dir, name);
	FILE *f = fopen(path, "wb");
	if (!f)
		fail_msg("cannot write %s: %s", path, strerror(errno));
	fputs(text, f);
	fclose(f);
	return path;
}

/* G(n, p), drawn pair by pair from r. */
struct graph *test_random_graph(struct rng *r, uint32_t n, double p)
{
	uint32_t *pairs = malloc(sizeof *pairs * n * n);
	uint64_t np = 0;
	for (uint32_t u = 0; u < n; u++)
		for (uint32_t v = u + 1; v < n; v++)
			if (rng_uniform(r) < p) {
				pairs[2 * np] = u;
				pairs[2 * np + 1] = v;
				np++;
			}
	struct graph *g = graph_from_pairs(n, pairs, np, NULL);
	free(pairs);
	assert_non_null(g);
	assert_graph_sane(g);
	return g;
}

/*
 * A small AGM sampler on a ring of n nodes: k communities of size nodes,
 * community c starting at node c * step, so each overlaps the next by
 * size - step nodes. Each community links its members with probability
 * pc, every pair with background eps (P = 1 - (1 - eps) prod (1 - p_c), as
 * in the AGM). truth may be NULL.
 */
struct graph *test_planted_ring_of(struct cover *truth, uint32_t n, uint32_t k, uint32_t size,
				   uint32_t step, double pc, double eps, uint64_t seed)
{
	if (truth) {
		uint32_t *node = malloc(sizeof *node * k * size);
		uint32_t *comm = malloc(sizeof *comm * k * size);
		for (uint32_t c = 0; c < k; c++)
			for (uint32_t i = 0; i < size; i++) {
				node[c * size + i] = (c * step + i) % n;
				comm[c * size + i] = c;
			}
		assert_int_equal(cover_from_pairs(truth, n, node, comm, (uint64_t)k * size), 0);
		free(node);
		free(comm);
	}
	struct rng r;
	rng_init(&r, seed);
	uint32_t *pairs = malloc(sizeof *pairs * n * n);
	uint64_t np = 0;
	for (uint32_t u = 0; u < n; u++)
		for (uint32_t v = u + 1; v < n; v++) {
			double stay = 1.0 - eps;
			for (uint32_t c = 0; c < k; c++) {
				uint32_t lo = c * step, hi = lo + size; /* ring interval [lo, hi) */
				int iu = (u >= lo && u < hi) || (u + n >= lo && u + n < hi);
				int iv = (v >= lo && v < hi) || (v + n >= lo && v + n < hi);
				if (iu && iv)
					stay *= 1.0 - pc;
			}
			if (rng_uniform(&r) < 1.0 - stay) {
				pairs[2 * np] = u;
				pairs[2 * np + 1] = v;
				np++;
			}
		}
	struct graph *g = graph_from_pairs(n, pairs, np, NULL);
	free(pairs);
	assert_non_null(g);
	return g;
}

/* 8 communities of 60 nodes on a ring of 400, each overlapping the next by
 * 10 nodes, so 80 nodes are in two communities; p_c 0.3, background 0.002. */
struct graph *test_planted_ring(struct cover *truth, uint64_t seed)
{
	return test_planted_ring_of(truth, 400, 8, 60, 50, 0.3, 0.002, seed);
}

void test_make_cover(struct cover *c, uint32_t n, uint32_t k, const uint32_t *sizes,
		     const uint32_t *members)
{
	uint64_t total = 0;
	for (uint32_t i = 0; i < k; i++)
		total += sizes[i];
	uint32_t *comm = malloc((total + 1) * sizeof *comm);
	assert_non_null(comm);
	uint64_t at = 0;
	for (uint32_t i = 0; i < k; i++)
		for (uint32_t j = 0; j < sizes[i]; j++)
			comm[at++] = i;
	assert_int_equal(cover_from_pairs(c, n, members, comm, total), 0);
	assert_cover_sane(c);
	free(comm);
}

struct snapshot *test_fit_to_end(const struct graph *g, const struct fit_params *p,
				 const struct fit_origin *o, int *state)
{
	struct fit *f = fit_new(g, p, o);
	assert_non_null(f);
	assert_int_equal(fit_start(f), 0);
	enum fit_state st = fit_wait(f);
	if (state)
		*state = (int)st;
	struct snapshot *s = fit_snapshot(f);
	assert_non_null(s);
	fit_free(f);
	return s;
}

double test_sweeps_sum_exactly(struct model *m, const struct graph *g,
			       const struct objective_ops *ops, unsigned threads,
			       double (*recompute)(const struct model *, const struct graph *),
			       double rel, struct fcsr *out)
{
	struct sweep *s = sweep_new(m, g, ops, threads);
	assert_non_null(s);
	sweep_pool_start(s);
	double ll = sweep_objective(s);
	for (uint64_t k = 0; k < 6; k++) {
		double before = ll;
		assert_int_equal(sweep_run(s, 7 + k, NULL, NULL, &ll), 0);
		double again = recompute(m, g);
		assert_true(fabs(ll - again) <= rel * fabs(again)); /* sweep.c */
		assert_true(ll >= before - 1e-12 * fabs(before));
	}
	assert_model_sane(m);
	sweep_pool_stop(s);
	sweep_free(s);
	assert_int_equal(model_export(m, out), 0);
	model_release(m);
	return ll;
}

struct graph *test_load_text(const char *name, const char *text, const struct graph_load_opts *o)
{
	const char *dir = test_tmpdir();
	struct graph *g = graph_load_with(test_write_file(dir, name, text), o);
	assert_non_null(g);
	assert_graph_sane(g);
	test_rmtree(dir);
	return g;
}

void test_random_rows(struct model *m, uint64_t seed)
{
	struct rng r;
	rng_init(&r, seed);
	struct fentry e[TEST_ROW_MAX_K];
	assert_true(m->k <= TEST_ROW_MAX_K);
	for (uint32_t u = 0; u < m->n; u++) {
		uint32_t nnz = 0;
		for (uint32_t c = 0; c < m->k; c++)
			if (rng_uniform(&r) < 0.5)
				e[nnz++] = (struct fentry){ c, 0.05 + rng_uniform(&r) };
		assert_int_equal(model_set_row(m, u, e, nnz), 0);
	}
}

/* The change of the row objective of u when its row becomes bump equals
 * the change of recompute(): the row objective holds every term with u. */
static void check_row_change(struct model *m, const struct graph *g, uint32_t u,
			     const struct objective_ops *ops, void *w,
			     double (*recompute)(const struct model *, const struct graph *))
{
	uint32_t k = m->k;
	struct fentry bump[TEST_ROW_MAX_K], keep[TEST_ROW_MAX_K];
	for (uint32_t c = 0; c < k; c++)
		bump[c] = (struct fentry){ c, 0.3 + 0.1 * c };
	double f0 = ops->row_objective(m, g, u, m->rows[u].e, m->rows[u].nnz, w);
	double f1 = ops->row_objective(m, g, u, bump, k, w);
	uint32_t kn = m->rows[u].nnz;
	if (kn)
		memcpy(keep, m->rows[u].e, kn * sizeof *keep);
	double l0 = recompute(m, g);
	assert_int_equal(model_set_row(m, u, bump, k), 0);
	double l1 = recompute(m, g);
	assert_int_equal(model_set_row(m, u, keep, kn), 0);
	assert_true(fabs((f1 - f0) - (l1 - l0)) <= 1e-9 * (1.0 + fabs(l0)));
}

int test_check_row_gradient(struct model *m, const struct graph *g,
			    const struct objective_ops *ops,
			    double (*recompute)(const struct model *, const struct graph *))
{
	uint32_t k = m->k;
	assert_true(k <= TEST_ROW_MAX_K);
	void *w = ops->work_new(m);
	assert_non_null(w);
	double grad[TEST_ROW_MAX_K], h = 1e-6;
	int checked = 0;
	for (uint32_t u = 0; u < g->n; u += 7) {
		ops->row_gradient(m, g, u, w, grad);
		struct fentry row[TEST_ROW_MAX_K], lo[TEST_ROW_MAX_K], hi[TEST_ROW_MAX_K];
		for (uint32_t i = 0; i < k; i++)
			row[i] = (struct fentry){ i, 0.0 };
		for (uint32_t i = 0; i < m->rows[u].nnz; i++)
			row[m->rows[u].e[i].c].v = m->rows[u].e[i].v;
		for (uint32_t c = 0; c < k; c++) {
			memcpy(lo, row, k * sizeof *lo);
			memcpy(hi, row, k * sizeof *hi);
			/* central where the strength is positive, one-sided at 0 */
			double cur = row[c].v, a = cur > h ? cur - h : cur;
			lo[c].v = a;
			hi[c].v = cur + h;
			double fd = (ops->row_objective(m, g, u, hi, k, w) -
				     ops->row_objective(m, g, u, lo, k, w)) / (cur + h - a);
			assert_true(fabs(fd - grad[c]) <= 1e-4 * (1.0 + fabs(grad[c])));
			checked++;
		}
		if (recompute)
			check_row_change(m, g, u, ops, w, recompute);
	}
	ops->work_free(w);
	return checked;
}

void test_checkpoint_round_trip(const struct graph *g, const struct fit_params *p,
				struct checkpoint *ck)
{
	struct snapshot *s = test_fit_to_end(g, p, NULL, NULL);
	struct result_model rm;
	result_model_of(&rm, s);
	const char *dir = test_tmpdir();
	char path[4096];
	snprintf(path, sizeof path, "%s/ck.cot", dir);
	assert_int_equal(checkpoint_write(path, g, p, &rm), 0);
	assert_int_equal(checkpoint_read(path, ck), 0);
	snapshot_release(s);
	test_rmtree(dir);
}
