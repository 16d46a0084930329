/* Tests for figure: the agreement matrix of two and three folders, the readers of
 * trace.tsv, k-selection.tsv and memberships.tsv (values, the marks from
 * run.json, refusals naming file and line), and the formats of names. */
#include <stdio.h>
#include "helpers.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "coterie/cover.h"
#include "coterie/figure.h"

/* The same covers as files: A = {a,b,c,d} "p", {e,f} "q"; B = {a,b,c}
 * "r", {d,e,f} "s". Rows of A largest first (p, q); columns by the rows'
 * best matches (r for p, s for q). Cells by hand: p-r 3/4, p-s 1/6, q-r 0,
 * q-s 2/3. */
static void test_agreement_of_two_folders_orders_and_scores(void **state)
{
	(void)state;
	char a[4096], b[4096];
	const char *dir = test_tmpdir();
	snprintf(a, sizeof a, "%s/A", dir);
	snprintf(b, sizeof b, "%s/B", dir);
	assert_int_equal(mkdir(a, 0700), 0);
	assert_int_equal(mkdir(b, 0700), 0);
	test_write_file(a, "memberships.tsv",
			"node\tcommunity\tstrength\na\tp\t1\nb\tp\t1\nc\tp\t1\nd\tp\t1\n"
			"e\tq\t1\nf\tq\t1\n");
	test_write_file(b, "memberships.tsv",
			"node\tcommunity\tstrength\nd\ts\t1\ne\ts\t1\nf\ts\t1\n"
			"a\tr\t1\nb\tr\t1\nc\tr\t1\n");
	const char *dirs[] = { a, b };
	struct figure_matrix m;
	assert_int_equal(figure_agreement(dirs, 2, &m), 0);
	assert_int_equal(m.rows, 2);
	assert_int_equal(m.cols, 2);
	assert_string_equal(m.row_label[0], "p");
	assert_string_equal(m.row_label[1], "q");
	assert_string_equal(m.col_label[0], "r");
	assert_string_equal(m.col_label[1], "s");
	assert_true(fabs(m.v[0] - 0.75) < 1e-15);
	assert_true(fabs(m.v[1] - 1.0 / 6.0) < 1e-15);
	assert_true(m.v[2] == 0);
	assert_true(fabs(m.v[3] - 2.0 / 3.0) < 1e-15);
	figure_matrix_release(&m);

	/* three folders: run x run; A in B: mean(3/4, 2/3) = 17/24 */
	const char *three[] = { a, b, a };
	assert_int_equal(figure_agreement(three, 3, &m), 0);
	assert_int_equal(m.rows, 3);
	assert_true(fabs(m.v[0 * 3 + 1] - 17.0 / 24.0) < 1e-15);
	assert_true(m.v[0 * 3 + 2] == 1);
	assert_string_equal(m.row_label[2], "run 3"); /* the same name as run 1 */
	figure_matrix_release(&m);
	test_rmtree(dir);
}

static void test_trace_reader_takes_marks_from_run_json(void **state)
{
	(void)state;
	const char *dir = test_tmpdir();
	test_write_file(dir, "trace.tsv",
			"sweep\tseconds\tloglik\n0\t0.000\t-20\n1\t0.001\t-12.5\n2\t0.002\t-12\n");
	struct figure_trace t;
	assert_int_equal(figure_read_trace(dir, &t), 0);
	assert_int_equal(t.n, 3);
	assert_true(t.p[1].x == 1 && t.p[1].y == -12.5);
	assert_int_equal(t.plateau_sweep, 0);
	figure_trace_release(&t);
	test_write_file(dir, "run.json",
			"{\"parameters\": {\"starts\": 3}, \"fit\": {\"plateau_sweep\": 2, "
			"\"start_kept\": 2, \"reseeds_kept\": 0}}");
	assert_int_equal(figure_read_trace(dir, &t), 0);
	assert_int_equal(t.plateau_sweep, 2);
	assert_int_equal(t.start_kept, 2);
	assert_int_equal(t.starts, 3);
	assert_int_equal(t.reseeds_kept, 0);
	figure_trace_release(&t);
	test_write_file(dir, "trace.tsv", "sweep\tseconds\tloglik\n0\t0\t-20\n1\t0\tinf\n");
	assert_int_equal(figure_read_trace(dir, &t), -1);
	test_write_file(dir, "trace.tsv", "sweep\tseconds\tloglik\n");
	assert_int_equal(figure_read_trace(dir, &t), -1);
	test_rmtree(dir);
}

static void test_kcurve_reader_reads_by_column_name(void **state)
{
	(void)state;
	const char *dir = test_tmpdir();
	/* columns in another order, one unknown: read by name */
	test_write_file(dir, "k-selection.tsv",
			"chosen\tk\textra\theldout_loglik\tfolds\theldout_loglik_sd\tgrid\n"
			"no\t2\tz\t-30\t4\t2.5\tasked\nyes\t4\tz\t-20\t4\t1\tasked\n"
			"no\t8\tz\t-25\t4\t3\tadded\n");
	struct figure_kcurve k;
	assert_int_equal(figure_read_kcurve(dir, &k), 0);
	assert_int_equal(k.n, 3);
	assert_int_equal(k.chosen, 4);
	assert_true(k.p[0].sd == 2.5 && k.p[0].folds == 4 && !k.p[0].added);
	assert_true(k.p[2].added);
	figure_kcurve_release(&k);
	test_write_file(dir, "k-selection.tsv", "k\theldout_loglik\tchosen\n4\t-1\tmaybe\n");
	assert_int_equal(figure_read_kcurve(dir, &k), -1);
	test_write_file(dir, "k-selection.tsv", "k\theldout_loglik\tchosen\n4\t-1\tno\n3\t-1\tno\n");
	assert_int_equal(figure_read_kcurve(dir, &k), -1);
	test_rmtree(dir);
	assert_int_equal(figure_read_kcurve(dir, &k), -1); /* no folder at all */
}

/* Sizes 3 and 2 of 5 named nodes; run.json says 8 nodes, so 3 in none;
 * node c is in both: memberships 0: 3, 1: 4, 2: 1. */
static void test_counts_reader_adds_the_nodes_in_none(void **state)
{
	(void)state;
	const char *dir = test_tmpdir();
	test_write_file(dir, "memberships.tsv",
			"node\tcommunity\tstrength\na\t0\t1\nb\t0\t1\nc\t0\t1\nc\t1\t1\nd\t1\t1\n"
			"e\t2\t1\n");
	struct figure_counts s, m;
	assert_int_equal(figure_read_counts(dir, &s, &m), 0);
	assert_int_equal(s.max, 3);
	assert_true(s.count[3] == 1 && s.count[2] == 1 && s.count[1] == 1);
	assert_false(m.zero_known);
	assert_true(m.count[1] == 4 && m.count[2] == 1);
	figure_counts_release(&s);
	figure_counts_release(&m);
	test_write_file(dir, "run.json", "{\"graph\": {\"nodes\": 8}}");
	assert_int_equal(figure_read_counts(dir, NULL, &m), 0);
	assert_true(m.zero_known);
	assert_true(m.count[0] == 3 && m.total == 8);
	figure_counts_release(&m);
	test_rmtree(dir);
}

static void test_formats_by_extension_and_name(void **state)
{
	(void)state;
	enum figure_format f;
	assert_int_equal(figure_format_of_path("a/b.PNG", &f), 0);
	assert_int_equal(f, FIGURE_PNG);
	assert_int_equal(figure_format_of_path("x.svg", &f), 0);
	assert_int_equal(f, FIGURE_SVG);
	assert_int_equal(figure_format_of_path("dir.pdf/fig", &f), -1);
	assert_int_equal(figure_format_of_path("fig", &f), -1);
	assert_int_equal(figure_format_of_name("pdf", &f), 0);
	assert_int_equal(f, FIGURE_PDF);
	assert_int_equal(figure_format_of_name("eps", &f), -1);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_agreement_of_two_folders_orders_and_scores),
		cmocka_unit_test(test_trace_reader_takes_marks_from_run_json),
		cmocka_unit_test(test_kcurve_reader_reads_by_column_name),
		cmocka_unit_test(test_counts_reader_adds_the_nodes_in_none),
		cmocka_unit_test(test_formats_by_extension_and_name),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
