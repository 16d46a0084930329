/* Tests for cover: covers from partitions, from pairs and from files. */
#include "helpers.h"

#include <stdio.h>
#include <stdlib.h>
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

/* cover_read(): two files into one node table share ids; each new name
 * takes the next id, so the second file's new nodes follow the first's. */
static void test_read_shares_node_ids_between_files(void **state)
{
	(void)state;
	const char *dir = test_tmpdir();
	char pa[4096];
	snprintf(pa, sizeof pa, "%s", test_write_file(dir, "a.tsv", "x\tred\ny\tred\r\nz\tblue\n"));
	const char *pb = test_write_file(dir, "b.tsv", "# found\nw\t1\nz\t1\nx\t2\n");
	struct names *nodes = names_new(0);
	assert_non_null(nodes);
	struct cover a, b;
	assert_int_equal(cover_read(&a, pa, nodes), 0);
	assert_int_equal(a.n, 3);
	assert_int_equal(cover_read(&b, pb, nodes), 0);
	assert_int_equal(b.n, 4);
	assert_int_equal(names_count(nodes), 4);
	assert_string_equal(names_name(nodes, 0), "x");
	assert_string_equal(names_name(nodes, 1), "y"); /* CR removed */
	assert_string_equal(names_name(nodes, 3), "w");
	assert_null(names_name(nodes, 4));
	a.n = b.n = names_count(nodes);
	assert_cover_sane(&a);
	assert_cover_sane(&b);
	assert_members(&a, 0, (const uint32_t[]){ 0, 1 }, 2);
	assert_members(&b, 0, (const uint32_t[]){ 2, 3 }, 2); /* z = 2, w = 3 */
	assert_members(&b, 1, (const uint32_t[]){ 0 }, 1);
	cover_release(&a);
	cover_release(&b);
	names_free(nodes);
	test_rmtree(dir);
}

/* Node names are bytes: invalid UTF-8, escape sequences and a name of
 * 100000 bytes are kept as they are; after memberships.tsv's header the
 * escapes result.c writes (\t \n \r \\, src/result.c) are undone, and
 * other backslashes are kept. */
static void test_read_keeps_hostile_names_and_unescapes_memberships(void **state)
{
	(void)state;
	const char *dir = test_tmpdir();
	size_t L = 100000;
	char *text = malloc(L + 64);
	assert_non_null(text);
	memset(text, 'n', L);
	snprintf(text + L, 64, "\tc\n\xff\xfe\x1b[2J\tc\n");
	const char *p = test_write_file(dir, "odd.tsv", text);
	struct names *nodes = names_new(0);
	struct cover c;
	assert_int_equal(cover_read(&c, p, nodes), 0);
	assert_int_equal(strlen(names_name(nodes, 0)), L);
	assert_string_equal(names_name(nodes, 1), "\xff\xfe\x1b[2J");
	cover_release(&c);

	p = test_write_file(dir, "memberships.tsv",
			    "node\tcommunity\tstrength\n"
			    "a\\tb\t0\t1\n"
			    "c\\\\d\\n\t0\t1\n"
			    "e\\x\t0\t1\n");
	assert_int_equal(cover_read(&c, p, nodes), 0);
	assert_string_equal(names_name(nodes, 2), "a\tb");
	assert_string_equal(names_name(nodes, 3), "c\\d\n");
	assert_string_equal(names_name(nodes, 4), "e\\x");
	cover_release(&c);

	/* a plain cover file is read as bytes: no unescaping */
	p = test_write_file(dir, "plain.tsv", "node\tcommunity\na\\tb\t0\n");
	assert_int_equal(cover_read(&c, p, nodes), 0);
	assert_string_equal(names_name(nodes, 5), "a\\tb");
	cover_release(&c);
	names_free(nodes);
	free(text);
	test_rmtree(dir);
}

/* With no graph to say what a node is, a file without memberships (empty,
 * comments only, or a header only) is an error naming the file. */
static void test_read_refuses_a_file_without_memberships(void **state)
{
	(void)state;
	const char *dir = test_tmpdir();
	struct names *nodes = names_new(0);
	struct cover c;
	const char *p = test_write_file(dir, "empty.tsv", "");
	assert_int_equal(cover_read(&c, p, nodes), -1);
	assert_non_null(strstr(last_msg, "empty.tsv:1: expected node<TAB>community lines"));
	p = test_write_file(dir, "header.tsv", "# x\nnode\tcommunity\tstrength\n");
	assert_int_equal(cover_read(&c, p, nodes), -1);
	assert_non_null(strstr(last_msg, "header.tsv:3:"));
	p = test_write_file(dir, "bad.tsv", "a\tb\nc d\n");
	assert_int_equal(cover_read(&c, p, nodes), -1);
	assert_non_null(strstr(last_msg, "bad.tsv:2: expected node<TAB>community"));
	names_free(nodes);
	test_rmtree(dir);
}

/* Read one file into a fresh node table and apply the edge-list rule. */
static int edge_like(const char *path, struct cover_edge_signs *why)
{
	struct names *nodes = names_new(0);
	assert_non_null(nodes);
	struct cover c;
	assert_int_equal(cover_read(&c, path, nodes), 0);
	int r = cover_looks_like_edges(&c, nodes, why);
	cover_release(&c);
	names_free(nodes);
	return r;
}

/* An edge list read as a cover: its "communities" are its nodes. The open
 * datasets' edges.tsv (tests/data/README.md) trip the rule; their truth
 * files and the plain-NMI fixtures do not. The karate counts are worked
 * from tests/data/karate/edges.tsv (first and second columns). */
static void test_an_edge_list_read_as_a_cover_looks_like_one(void **state)
{
	(void)state;
	struct cover_edge_signs why;
	char path[4096];
	snprintf(path, sizeof path, "%s", test_data("karate/edges.tsv"));
	assert_int_equal(edge_like(path, &why), 1);
	assert_int_equal(why.self, 0);        /* no self-loop in karate */
	assert_true(why.named >= 3);
	assert_true(2 * why.named >= why.labels);
	assert_true(2 * why.labels >= why.nodes);
	static const char *const edges[] = { "dolphins/edges.tsv", "football/edges.tsv",
					     "lesmis/edges.tsv", "polbooks/edges.tsv" };
	for (size_t i = 0; i < sizeof edges / sizeof edges[0]; i++) {
		snprintf(path, sizeof path, "%s", test_data(edges[i]));
		assert_int_equal(edge_like(path, NULL), 1);
	}
	static const char *const covers[] = {
		"karate/truth.tsv", "football/truth.tsv", "football/truth-evans.tsv",
		"polbooks/truth.tsv", "nmi/singletons.a.tsv", "nmi/large.a.tsv",
	};
	for (size_t i = 0; i < sizeof covers / sizeof covers[0]; i++) {
		snprintf(path, sizeof path, "%s", test_data(covers[i]));
		assert_int_equal(edge_like(path, NULL), 0);
	}
}

/* Covers whose community names are node names too must not trip it: a
 * partition numbered like its nodes (no overlap), a cover where nodes sit
 * in the community of their own name, few communities, and any file with
 * a result's header. */
static void test_covers_named_like_their_nodes_are_not_edge_lists(void **state)
{
	(void)state;
	const char *dir = test_tmpdir();
	char text[4096];
	size_t at = 0;
	/* 12 nodes 0..11 in 6 groups named 0..5, shuffled: labels all node names */
	static const int part[12] = { 3, 0, 5, 1, 4, 2, 0, 1, 2, 3, 4, 5 };
	for (int u = 0; u < 12; u++)
		at += (size_t)snprintf(text + at, sizeof text - at, "%d\t%d\n", u, part[u]);
	struct cover_edge_signs why;
	assert_int_equal(edge_like(test_write_file(dir, "part.tsv", text), &why), 0);
	assert_int_equal(why.named, 6);
	assert_int_equal(why.overlapping, 0);
	/* the same nodes in two groups each, every group holding its namesake */
	at = 0;
	for (int u = 0; u < 12; u++)
		at += (size_t)snprintf(text + at, sizeof text - at, "%d\t%d\n%d\t%d\n", u, u % 8,
				       u, (u + 1) % 8);
	assert_int_equal(edge_like(test_write_file(dir, "self.tsv", text), &why), 0);
	assert_int_equal(why.self, 8);
	/* an edge list (a ring 0-1-...-11 with chords), named as it is... */
	at = 0;
	for (int u = 0; u < 12; u++)
		at += (size_t)snprintf(text + at, sizeof text - at, "%d\t%d\n%d\t%d\n", u,
				       (u + 1) % 12, u, (u + 5) % 12);
	assert_int_equal(edge_like(test_write_file(dir, "ring.tsv", text), &why), 1);
	/* ...is a cover when it says it is a result's memberships.tsv */
	char headed[4200];
	snprintf(headed, sizeof headed, "node\tcommunity\tstrength\n%s", text);
	assert_int_equal(edge_like(test_write_file(dir, "m.tsv", headed), NULL), 0);
	test_rmtree(dir);
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
		cmocka_unit_test_setup_teardown(test_read_shares_node_ids_between_files, setup,
						teardown),
		cmocka_unit_test_setup_teardown(
		    test_read_keeps_hostile_names_and_unescapes_memberships, setup, teardown),
		cmocka_unit_test_setup_teardown(test_read_refuses_a_file_without_memberships,
						setup, teardown),
		cmocka_unit_test_setup_teardown(test_an_edge_list_read_as_a_cover_looks_like_one,
						setup, teardown),
		cmocka_unit_test_setup_teardown(
		    test_covers_named_like_their_nodes_are_not_edge_lists, setup, teardown),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
