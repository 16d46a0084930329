/* Tests for cover: covers from partitions, from pairs and from files. */
#include "helpers.h"

#include <stdio.h>
#include <string.h>

#include "coterie/cover.h"
#include "coterie/graph.h"
#include "coterie/util.h"

/* The last error message, captured through the message sink. */
static char last_msg[2048];

static void capture(int level, const char *msg)
{
	if (level == UTIL_ERROR)
		snprintf(last_msg, sizeof last_msg, "%s", msg);
}

static int setup(void **state)
{
	(void)state;
	last_msg[0] = '\0';
	util_set_sink(capture);
	return 0;
}

static int teardown(void **state)
{
	(void)state;
	util_set_sink(NULL);
	return 0;
}

static const char *const five[] = { "alice", "bob", "carol", "dave", "eve" };

static struct graph *five_graph(void)
{
	const uint32_t e[] = { 0, 1, 1, 2, 2, 3, 3, 4 };
	struct graph *g = graph_from_pairs(5, e, 4, five);
	assert_non_null(g);
	assert_graph_sane(g);
	return g;
}

static void assert_members(const struct cover *c, uint32_t i, const uint32_t *want, uint32_t len)
{
	assert_int_equal(cover_size(c, i), len);
	for (uint32_t j = 0; j < len; j++)
		assert_int_equal(c->mem[c->off[i] + j], want[j]);
}

static void test_load_reads_multi_membership_comments_and_blank_lines(void **state)
{
	(void)state;
	struct graph *g = five_graph();
	const char *dir = test_tmpdir();
	const char *path = test_write_file(dir, "truth.tsv",
					   "# node\tcommunity\n"
					   "bob\tred\n"
					   "alice\tred\n"
					   "\n"
					   "carol\tblue\r\n"
					   "   \n"
					   "alice\tblue\n"
					   "bob\tred\n"             /* duplicate: merged */
					   "dave\tgreen\t0.75\n"); /* extra column: ignored */
	struct cover c;
	assert_int_equal(cover_load(&c, path, g), 0);
	assert_cover_sane(&c);
	assert_int_equal(c.n, 5);
	assert_int_equal(c.k, 3);
	/* by first appearance: red, blue, green; members increasing */
	assert_string_equal(c.label[0], "red");
	assert_string_equal(c.label[1], "blue");
	assert_string_equal(c.label[2], "green");
	assert_members(&c, 0, (const uint32_t[]){ 0, 1 }, 2);
	assert_members(&c, 1, (const uint32_t[]){ 0, 2 }, 2);
	assert_members(&c, 2, (const uint32_t[]){ 3 }, 1);
	cover_release(&c);
	test_rmtree(dir);
	graph_free(g);
}

static void test_load_unknown_node_names_file_and_line(void **state)
{
	(void)state;
	struct graph *g = five_graph();
	const char *dir = test_tmpdir();
	const char *path = test_write_file(dir, "bad.tsv", "alice\tx\n# c\nzed\tx\n");
	struct cover c;
	assert_int_equal(cover_load(&c, path, g), -1);
	assert_non_null(strstr(last_msg, "bad.tsv:3:"));
	assert_non_null(strstr(last_msg, "unknown node 'zed'"));

	/* A name with an escape sequence is shown escaped, never raw. */
	path = test_write_file(dir, "esc.tsv", "\x1b[2Jevil\tx\n");
	assert_int_equal(cover_load(&c, path, g), -1);
	assert_non_null(strstr(last_msg, "esc.tsv:1:"));
	assert_null(strchr(last_msg, 0x1b));
	assert_non_null(strstr(last_msg, "\\e[2Jevil"));
	test_rmtree(dir);
	graph_free(g);
}

static void test_load_line_without_tab_is_an_error(void **state)
{
	(void)state;
	struct graph *g = five_graph();
	const char *dir = test_tmpdir();
	const char *path = test_write_file(dir, "space.tsv", "alice\tred\nbob red\n");
	struct cover c;
	assert_int_equal(cover_load(&c, path, g), -1);
	assert_non_null(strstr(last_msg, "space.tsv:2:"));
	assert_non_null(strstr(last_msg, "tab"));

	path = test_write_file(dir, "empty.tsv", "alice\t\n");
	assert_int_equal(cover_load(&c, path, g), -1);
	assert_non_null(strstr(last_msg, "empty.tsv:1:"));

	assert_int_equal(cover_load(&c, "/nonexistent/cover.tsv", g), -1);
	assert_non_null(strstr(last_msg, "cannot open"));
	test_rmtree(dir);
	graph_free(g);
}

/* A result's memberships.tsv (header "node community strength", see
 * src/result.c) reads as a cover; the header is only skipped as the first
 * line, elsewhere "node" is an unknown node like any other. */
static void test_load_skips_a_memberships_header(void **state)
{
	(void)state;
	struct graph *g = five_graph();
	const char *dir = test_tmpdir();
	const char *path = test_write_file(dir, "memberships.tsv",
					   "node\tcommunity\tstrength\n"
					   "eve\t7\t0.5\n"
					   "dave\t7\t1.25\n");
	struct cover c;
	assert_int_equal(cover_load(&c, path, g), 0);
	assert_int_equal(c.k, 1);
	assert_string_equal(c.label[0], "7");
	assert_members(&c, 0, (const uint32_t[]){ 3, 4 }, 2);
	cover_release(&c);

	path = test_write_file(dir, "late.tsv", "eve\t7\nnode\tcommunity\n");
	assert_int_equal(cover_load(&c, path, g), -1);
	assert_non_null(strstr(last_msg, "late.tsv:2: unknown node 'node'"));
	test_rmtree(dir);
	graph_free(g);
}

static void test_load_empty_file_gives_empty_cover(void **state)
{
	(void)state;
	struct graph *g = five_graph();
	const char *dir = test_tmpdir();
	const char *path = test_write_file(dir, "none.tsv", "# nothing\n\n");
	struct cover c;
	assert_int_equal(cover_load(&c, path, g), 0);
	assert_cover_sane(&c);
	assert_int_equal(c.k, 0);
	assert_int_equal(c.n, 5);
	cover_release(&c);
	test_rmtree(dir);
	graph_free(g);
}

static void test_from_membership_numbers_by_first_appearance(void **state)
{
	(void)state;
	/* node:        0   1  2  3   4  5  6 */
	const int64_t m[] = { -1, 5, 2, 5, -3, 2, 7 };
	struct cover c;
	assert_int_equal(cover_from_membership(&c, 7, m), 0);
	assert_cover_sane(&c);
	assert_int_equal(c.k, 3);
	assert_string_equal(c.label[0], "5");
	assert_string_equal(c.label[1], "2");
	assert_string_equal(c.label[2], "7");
	assert_members(&c, 0, (const uint32_t[]){ 1, 3 }, 2);
	assert_members(&c, 1, (const uint32_t[]){ 2, 5 }, 2);
	assert_members(&c, 2, (const uint32_t[]){ 6 }, 1);
	cover_release(&c);
}

static void test_from_pairs_merges_duplicates(void **state)
{
	(void)state;
	const uint32_t node[] = { 3, 1, 3, 0, 2, 0, 3 };
	const uint32_t comm[] = { 9, 9, 9, 4, 9, 4, 4 };
	struct cover c;
	assert_int_equal(cover_from_pairs(&c, 5, node, comm, 7), 0);
	assert_cover_sane(&c);
	assert_int_equal(c.k, 2);
	assert_int_equal(c.off[2], 5); /* 7 pairs, 2 duplicates */
	assert_string_equal(c.label[0], "9");
	assert_string_equal(c.label[1], "4");
	assert_members(&c, 0, (const uint32_t[]){ 1, 2, 3 }, 3);
	assert_members(&c, 1, (const uint32_t[]){ 0, 3 }, 2);
	cover_release(&c);

	const uint32_t bad[] = { 5 }; /* node 5 of 5 */
	assert_int_equal(cover_from_pairs(&c, 5, bad, comm, 1), -1);
	assert_non_null(strstr(last_msg, "out of range"));
	cover_release(&c);
}

static void test_release_is_safe_on_zeroed_and_released(void **state)
{
	(void)state;
	struct cover c;
	memset(&c, 0, sizeof c);
	cover_release(&c);
	cover_release(NULL);
	const uint32_t node[] = { 0 }, comm[] = { 0 };
	assert_int_equal(cover_from_pairs(&c, 1, node, comm, 1), 0);
	cover_release(&c);
	cover_release(&c);
	assert_null(c.off);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test_setup_teardown(
		    test_load_reads_multi_membership_comments_and_blank_lines, setup, teardown),
		cmocka_unit_test_setup_teardown(test_load_unknown_node_names_file_and_line, setup,
						teardown),
		cmocka_unit_test_setup_teardown(test_load_line_without_tab_is_an_error, setup,
						teardown),
		cmocka_unit_test_setup_teardown(test_load_skips_a_memberships_header, setup,
						teardown),
		cmocka_unit_test_setup_teardown(test_load_empty_file_gives_empty_cover, setup,
						teardown),
		cmocka_unit_test_setup_teardown(test_from_membership_numbers_by_first_appearance,
						setup, teardown),
		cmocka_unit_test_setup_teardown(test_from_pairs_merges_duplicates, setup,
						teardown),
		cmocka_unit_test_setup_teardown(test_release_is_safe_on_zeroed_and_released, setup,
						teardown),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
