/* Tests for stability: the best-match Jaccard index and the score of each
 * community against hand-worked covers, the folders-of-one-graph check,
 * and run.json's stability read back. */
#include <stdio.h>
#include "helpers.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "coterie/cover.h"
#include "coterie/model.h"
#include "coterie/stability.h"

static void pairs_cover(struct cover *c, uint32_t n, const uint32_t *node, const uint32_t *comm,
			uint64_t np)
{
	assert_int_equal(cover_from_pairs(c, n, node, comm, np), 0);
	assert_cover_sane(c);
}

/* x: {0,1,2,3} {4,5}; y: {0,1,2} {3,4,5} {6}. By hand (|a & b| / |a | b|):
 * x0 with y0: 3 / 4 = 0.75, with y1: 1 / 6; so best 0.75.
 * x1 with y1: 2 / 3; best 2/3. The other way: y0 best 0.75 (x0); y1 best
 * max(1/6, 2/3) = 2/3; y2 = {6} shares no node: 0. */
static void test_best_jaccard_matches_hand_worked_covers(void **state)
{
	(void)state;
	struct cover x, y;
	uint32_t xn[] = { 0, 1, 2, 3, 4, 5 }, xc[] = { 0, 0, 0, 0, 1, 1 };
	uint32_t yn[] = { 0, 1, 2, 3, 4, 5, 6 }, yc[] = { 0, 0, 0, 1, 1, 1, 2 };
	pairs_cover(&x, 7, xn, xc, 6);
	pairs_cover(&y, 7, yn, yc, 7);
	double bx[2], by[3];
	assert_int_equal(stability_best_jaccard(&x, &y, bx), 0);
	assert_true(fabs(bx[0] - 0.75) < 1e-15);
	assert_true(fabs(bx[1] - 2.0 / 3.0) < 1e-15);
	assert_int_equal(stability_best_jaccard(&y, &x, by), 0);
	assert_true(fabs(by[0] - 0.75) < 1e-15);
	assert_true(fabs(by[1] - 2.0 / 3.0) < 1e-15);
	assert_true(by[2] == 0);
	/* a cover against itself: every community matches itself whole */
	assert_int_equal(stability_best_jaccard(&y, &y, by), 0);
	for (int i = 0; i < 3; i++)
		assert_true(by[i] == 1);
	cover_release(&x);
	cover_release(&y);
}

static void test_best_jaccard_refuses_covers_of_other_sizes(void **state)
{
	(void)state;
	struct cover x, y;
	uint32_t n[] = { 0, 1 }, c[] = { 0, 0 };
	pairs_cover(&x, 2, n, c, 2);
	pairs_cover(&y, 3, n, c, 2);
	double b[1];
	assert_int_equal(stability_best_jaccard(&x, &y, b), -1);
	cover_release(&x);
	cover_release(&y);
}

/* kept x: {0,1,2,3} {4,5}; others y: {0,1,2} {3,4,5} {6} and
 * z: {0,1,2,3} {6}. By hand: x0 best in y 3/4 (y0), in z 4/4 (z0): mean
 * (0.75 + 1) / 2 = 0.875. x1 = {4,5} best in y 2/3 (y1 = {3,4,5}: 2
 * shared of 3), in z 0 (no shared node): mean 1/3. */
static void test_score_is_the_mean_best_match_over_the_other_runs(void **state)
{
	(void)state;
	struct cover x, o[2];
	uint32_t xn[] = { 0, 1, 2, 3, 4, 5 }, xc[] = { 0, 0, 0, 0, 1, 1 };
	uint32_t yn[] = { 0, 1, 2, 3, 4, 5, 6 }, yc[] = { 0, 0, 0, 1, 1, 1, 2 };
	uint32_t zn[] = { 0, 1, 2, 3, 6 }, zc[] = { 0, 0, 0, 0, 1 };
	pairs_cover(&x, 7, xn, xc, 6);
	pairs_cover(&o[0], 7, yn, yc, 7);
	pairs_cover(&o[1], 7, zn, zc, 5);
	double score[2], each[4];
	assert_int_equal(stability_score(&x, o, 2, score, each), 0);
	assert_true(fabs(score[0] - 0.875) < 1e-15);
	assert_true(fabs(score[1] - 1.0 / 3.0) < 1e-15);
	assert_true(fabs(each[0] - 0.75) < 1e-15 && each[1] == 1.0);
	assert_true(fabs(each[2] - 2.0 / 3.0) < 1e-15 && each[3] == 0.0);
	/* against itself alone: every community comes back whole */
	assert_int_equal(stability_score(&x, &x, 1, score, NULL), 0);
	assert_true(score[0] == 1.0 && score[1] == 1.0);
	/* no other run: nothing to score */
	assert_int_equal(stability_score(&x, o, 0, score, NULL), 0);
	assert_true(isnan(score[0]) && isnan(score[1]));
	cover_release(&x);
	cover_release(&o[0]);
	cover_release(&o[1]);
}

/* An empty community has no stability (NaN), and the mean skips it:
 * x = {0,1} {} {2,3} against y = {0,1} {2}: 1, NaN, 1/2 (|{2}| / |{2,3}|);
 * mean (1 + 0.5) / 2 = 0.75. */
static void test_empty_community_is_not_scored(void **state)
{
	(void)state;
	uint64_t off[] = { 0, 2, 2, 4 };
	uint32_t mem[] = { 0, 1, 2, 3 };
	struct cover x = { .n = 4, .k = 3, .off = off, .mem = mem };
	struct cover y;
	uint32_t yn[] = { 0, 1, 2 }, yc[] = { 0, 0, 1 };
	pairs_cover(&y, 4, yn, yc, 3);
	double score[3];
	assert_int_equal(stability_score(&x, &y, 1, score, NULL), 0);
	assert_true(score[0] == 1.0 && isnan(score[1]) && score[2] == 0.5);
	struct stability st = { .runs = 2, .k = 3, .score = score };
	assert_true(fabs(stability_mean(&st) - 0.75) < 1e-15);
	cover_release(&y);
}

static void folder(const char *dir, const char *fp, const char *stab)
{
	char run[1024];
	mkdir(dir, 0777);
	snprintf(run, sizeof run, "{\"graph\": {\"fingerprint\": \"%s\"}, \"fit\": {\"sweeps\": 7},"
		 " \"stability\": %s}", fp, stab);
	test_write_file(dir, "run.json", run);
}

static void test_folders_of_other_graphs_are_refused(void **state)
{
	(void)state;
	const char *tmp = test_tmpdir();
	char a[512], b[512], c[512], d[512];
	snprintf(a, sizeof a, "%s/a", tmp);
	snprintf(b, sizeof b, "%s/b", tmp);
	snprintf(c, sizeof c, "%s/c", tmp);
	snprintf(d, sizeof d, "%s/d", tmp);
	folder(a, "00000000000000aa", "null");
	folder(b, "00000000000000aa", "null");
	folder(c, "00000000000000bb", "null");
	mkdir(d, 0777); /* says nothing: let through */
	const char *same[] = { a, b, d }, *other[] = { a, d, c };
	assert_int_equal(stability_same_graph(same, 3), 0);
	assert_int_equal(stability_same_graph(other, 3), -1);
	/* the manifest speaks when run.json does not */
	test_write_file(d, ".coterie.manifest", "coterie commit 1\nrun 1\ngraph 00000000000000bb\nend\n");
	const char *ad[] = { a, d };
	assert_int_equal(stability_same_graph(ad, 2), -1);
	test_rmtree(tmp);
}

static void test_read_gives_scores_by_community_id(void **state)
{
	(void)state;
	const char *tmp = test_tmpdir();
	char a[512], b[512];
	snprintf(a, sizeof a, "%s/a", tmp);
	snprintf(b, sizeof b, "%s/b", tmp);
	folder(a, "00000000000000aa", "{\"communities\": [{\"community\": 3, \"stability\": 0.5},"
	       " {\"community\": 0, \"stability\": 1}, {\"community\": 1, \"stability\": 7}]}");
	folder(b, "00000000000000aa", "null");
	double *s;
	uint32_t n, sweep;
	assert_int_equal(stability_read(a, &s, &n, &sweep), 0);
	assert_int_equal(n, 4);
	assert_int_equal(sweep, 7);
	assert_true(s[0] == 1.0 && s[3] == 0.5);
	assert_true(isnan(s[1]) && isnan(s[2])); /* 7 is no score; 2 not listed */
	free(s);
	assert_int_equal(stability_read(b, &s, &n, &sweep), 0);
	assert_null(s);
	assert_int_equal(n, 0);
	test_rmtree(tmp);
}

/* fuzz_result: a run.json of a few bytes naming community 16777215 (2^24
 * - 1) made the reader allocate an array of 2^24 scores (128 MiB). An id
 * is a model column, below MODEL_MAX_K: one at or past it is not read. */
static void test_read_ignores_ids_past_any_model_column(void **state)
{
	(void)state;
	const char *tmp = test_tmpdir();
	char a[512];
	snprintf(a, sizeof a, "%s/a", tmp);
	folder(a, "00000000000000aa", "{\"communities\": [{\"community\": 16777215, "
	       "\"stability\": 0.5}, {\"community\": 1000000, \"stability\": 0.5}, "
	       "{\"community\": 2, \"stability\": 0.25}]}");
	double *s;
	uint32_t n, sweep;
	assert_int_equal(stability_read(a, &s, &n, &sweep), 0);
	assert_int_equal(n, 3);
	assert_true(s[2] == 0.25);
	free(s);
	folder(a, "00000000000000aa", "{\"communities\": [{\"community\": 999999, "
	       "\"stability\": 0.5}]}");
	assert_int_equal(stability_read(a, &s, &n, &sweep), 0);
	assert_int_equal(n, MODEL_MAX_K); /* the largest column a fit allows */
	assert_true(s[MODEL_MAX_K - 1] == 0.5);
	free(s);
	test_rmtree(tmp);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_best_jaccard_matches_hand_worked_covers),
		cmocka_unit_test(test_best_jaccard_refuses_covers_of_other_sizes),
		cmocka_unit_test(test_score_is_the_mean_best_match_over_the_other_runs),
		cmocka_unit_test(test_empty_community_is_not_scored),
		cmocka_unit_test(test_folders_of_other_graphs_are_refused),
		cmocka_unit_test(test_read_gives_scores_by_community_id),
		cmocka_unit_test(test_read_ignores_ids_past_any_model_column),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
