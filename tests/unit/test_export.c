/*
 * Tests for export: the name rule, the graph's attributes read back by
 * igraph's own readers (GML and GraphML), and the Matrix Market file.
 *
 * The hand-worked example. Four nodes a, b, c, d; edges a-b, b-c, c-d;
 * two columns; background epsilon 0.1, so qeps = -ln(0.9):
 *
 *   node  col 0  col 1     memberships (strength >= 0.1, min_links 0)
 *   a     1.0    .         0
 *   b     0.5    0.2       0 and 1, 0 the stronger: "0;1"
 *   c     .      2.0       1
 *   d     .      .         none: strongest -1
 *
 *   edge  dot F_u.F_v   explains  P = 1 - exp(-(dot + qeps)) = 1 - 0.9 e^-dot
 *   a-b   0.5           0         1 - 0.9 * 0.6065307 = 0.4541224
 *   b-c   0.2 * 2 = 0.4 1         1 - 0.9 * 0.6703200 = 0.3967120
 *   c-d   0             none      1 - 0.9 = 0.1 (the background alone)
 *
 * (e^-0.5 and e^-0.4 from python3's math.exp.) Both communities have two
 * members, so they are listed by id (largest first, ties by id).
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "helpers.h"

#include <igraph.h>

#include "coterie/agm.h"
#include "coterie/export.h"
#include "coterie/fcsr.h"
#include "coterie/graph.h"

struct example {
	struct graph *g;
	struct fcsr F;
	struct agm a;
	struct export_fit x;
	uint64_t off[5];
	struct fentry e[4];
	double colsum[2];
};

static int setup(void **state)
{
	struct example *ex = calloc(1, sizeof *ex);
	static const char *const names[] = { "a", "b", "c", "d" };
	static const uint32_t pairs[] = { 0, 1, 1, 2, 2, 3 };
	ex->g = graph_from_pairs(4, pairs, 3, names);
	assert_non_null(ex->g);
	memcpy(ex->off, (uint64_t[]){ 0, 1, 3, 4, 4 }, sizeof ex->off);
	ex->e[0] = (struct fentry){ 0, 1.0 };
	ex->e[1] = (struct fentry){ 0, 0.5 };
	ex->e[2] = (struct fentry){ 1, 0.2 };
	ex->e[3] = (struct fentry){ 1, 2.0 };
	ex->colsum[0] = 1.5;
	ex->colsum[1] = 2.2;
	ex->F = (struct fcsr){ 4, 2, ex->off, ex->e, ex->colsum, NULL };
	assert_fcsr_sane(&ex->F);
	assert_int_equal(agm_from_strengths(&ex->a, ex->g, &ex->F, 0.1, 0.1, 0.0), 0);
	ex->x = (struct export_fit){ ex->g, &ex->F, &ex->a, 0.1 };
	*state = ex;
	return 0;
}

static int teardown(void **state)
{
	struct example *ex = *state;
	agm_release(&ex->a);
	graph_free(ex->g);
	free(ex);
	return 0;
}

static void expect_name(const char *in, enum export_format fmt, const char *want)
{
	char *got = export_name(in, fmt);
	assert_non_null(got);
	assert_string_equal(got, want);
	free(got);
}

static void test_name_escapes_what_a_reader_would_change(void **state)
{
	(void)state;
	expect_name("plain name", EXPORT_GRAPHML, "plain name");
	expect_name("a\tb\nc\rd\\e", EXPORT_GRAPHML, "a\\tb\\nc\\rd\\\\e");
	expect_name("x\033[2Jy\001\177", EXPORT_GRAPHML, "x\\e[2Jy\\x01\\x7f");
	expect_name("bad\377\376", EXPORT_GRAPHML, "bad\\xff\\xfe");
	/* quotes, < and & are left to igraph's writers */
	expect_name("\"q\" <&>", EXPORT_GML, "\"q\" <&>");
	/* é is U+00E9, C3 A9 in UTF-8: kept in GraphML, escaped in GML */
	expect_name("caf\303\251", EXPORT_GRAPHML, "caf\303\251");
	expect_name("caf\303\251", EXPORT_GML, "caf\\xc3\\xa9");
	/* U+FFFE (EF BF BE), which XML 1.0 forbids */
	expect_name("n\357\277\276", EXPORT_GRAPHML, "n\\xef\\xbf\\xbe");
	/* a backslash escape in a name stays apart from the byte it names */
	expect_name("\\x01", EXPORT_GRAPHML, "\\\\x01");
}

/* The example written in fmt with the given columns, read back by igraph. */
static void read_back(const struct example *ex, enum export_format fmt, uint32_t columns,
		      igraph_t *ig)
{
	FILE *f = tmpfile();
	assert_non_null(f);
	assert_int_equal(export_graph_stream(f, fmt, &ex->x, columns), 0);
	rewind(f);
	igraph_error_t rc = fmt == EXPORT_GML ? igraph_read_graph_gml(ig, f)
					      : igraph_read_graph_graphml(ig, f, 0);
	fclose(f);
	assert_int_equal(rc, IGRAPH_SUCCESS);
}

static void check_attributes(void **state, enum export_format fmt)
{
	struct example *ex = *state;
	igraph_t ig;
	read_back(ex, fmt, EXPORT_ALL_COLUMNS, &ig);
	assert_int_equal(igraph_vcount(&ig), 4);
	assert_int_equal(igraph_ecount(&ig), 3);
	static const char *const names[] = { "a", "b", "c", "d" };
	static const char *const comms[] = { "0", "0;1", "1", "" };
	static const double strongest[] = { 0, 0, 1, -1 }, count[] = { 1, 2, 1, 0 };
	static const double s0[] = { 1.0, 0.5, 0, 0 }, s1[] = { 0, 0.2, 2.0, 0 };
	for (int v = 0; v < 4; v++) {
		assert_string_equal(VAS(&ig, "name", v), names[v]);
		assert_string_equal(VAS(&ig, "label", v), names[v]);
		assert_string_equal(VAS(&ig, "communities", v), comms[v]);
		assert_true(VAN(&ig, "strongest", v) == strongest[v]);
		assert_true(VAN(&ig, "ncommunities", v) == count[v]);
		assert_true(VAN(&ig, "strength0", v) == s0[v]);
		assert_true(VAN(&ig, "strength1", v) == s1[v]);
	}
	/* the probabilities of the table above, to its 7 digits */
	static const double prob[] = { 0.4541224, 0.3967120, 0.1 }, by[] = { 0, 1, -1 };
	for (int e = 0; e < 3; e++) {
		igraph_integer_t from, to;
		igraph_edge(&ig, e, &from, &to);
		assert_int_equal(from < to ? from : to, e);
		assert_int_equal(from < to ? to : from, e + 1);
		assert_true(fabs(EAN(&ig, "probability", e) - prob[e]) < 5e-8);
		assert_true(EAN(&ig, "community", e) == by[e]);
		assert_true(EAN(&ig, "explained", e) == (by[e] >= 0));
	}
	igraph_destroy(&ig);
}

static void test_gml_carries_the_fit_as_igraph_reads_it(void **state)
{
	check_attributes(state, EXPORT_GML);
}

static void test_graphml_carries_the_fit_as_igraph_reads_it(void **state)
{
	check_attributes(state, EXPORT_GRAPHML);
}

static void test_strength_columns_for_the_largest_only(void **state)
{
	struct example *ex = *state;
	igraph_t ig;
	read_back(ex, EXPORT_GRAPHML, 1, &ig);
	assert_true(igraph_cattribute_has_attr(&ig, IGRAPH_ATTRIBUTE_VERTEX, "strength0"));
	assert_false(igraph_cattribute_has_attr(&ig, IGRAPH_ATTRIBUTE_VERTEX, "strength1"));
	igraph_destroy(&ig);
	read_back(ex, EXPORT_GML, 0, &ig);
	assert_false(igraph_cattribute_has_attr(&ig, IGRAPH_ATTRIBUTE_VERTEX, "strength0"));
	igraph_destroy(&ig);
}

static char *slurp(const char *path)
{
	FILE *f = fopen(path, "rb");
	assert_non_null(f);
	static char buf[4096];
	size_t n = fread(buf, 1, sizeof buf - 1, f);
	buf[n] = '\0';
	fclose(f);
	return buf;
}

static void test_matrix_market_file_by_hand(void **state)
{
	struct example *ex = *state;
	const char *dir = test_tmpdir();
	char path[1024], p2[1100];
	snprintf(path, sizeof path, "%s/F.mtx", dir);
	assert_int_equal(export_matrix(path, &ex->x), 0);
	/* the NIST layout: banner, comments, "rows cols entries", then
	 * 1-based "i j value"; 0.2 to 17 digits is 0.20000000000000001 */
	assert_string_equal(slurp(path),
			    "%%MatrixMarket matrix coordinate real general\n"
			    "% coterie strengths: rows are nodes, columns communities (the .rows.txt\n"
			    "% and .cols.txt files beside this one name them)\n"
			    "4 2 4\n"
			    "1 1 1\n"
			    "2 1 0.5\n"
			    "2 2 0.20000000000000001\n"
			    "3 2 2\n");
	snprintf(p2, sizeof p2, "%s/F.rows.txt", dir);
	assert_string_equal(slurp(p2), "a\nb\nc\nd\n");
	snprintf(p2, sizeof p2, "%s/F.cols.txt", dir);
	assert_string_equal(slurp(p2), "0\n1\n");
	test_rmtree(dir);
}

static void test_matrix_names_beside_it(void **state)
{
	(void)state;
	char *r, *c;
	assert_int_equal(export_matrix_names("out/F.mtx", &r, &c), 0);
	assert_string_equal(r, "out/F.rows.txt");
	assert_string_equal(c, "out/F.cols.txt");
	free(r);
	free(c);
	assert_int_equal(export_matrix_names("strengths", &r, &c), 0);
	assert_string_equal(r, "strengths.rows.txt");
	assert_string_equal(c, "strengths.cols.txt");
	free(r);
	free(c);
}

int main(void)
{
	/* igraph's readers keep attributes only with a handler, for the whole
	 * life of the graphs read (igraph_destroy() frees them through it) */
	igraph_set_attribute_table(&igraph_cattribute_table);
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_name_escapes_what_a_reader_would_change),
		cmocka_unit_test_setup_teardown(test_gml_carries_the_fit_as_igraph_reads_it, setup,
						teardown),
		cmocka_unit_test_setup_teardown(test_graphml_carries_the_fit_as_igraph_reads_it,
						setup, teardown),
		cmocka_unit_test_setup_teardown(test_strength_columns_for_the_largest_only, setup,
						teardown),
		cmocka_unit_test_setup_teardown(test_matrix_market_file_by_hand, setup, teardown),
		cmocka_unit_test(test_matrix_names_beside_it),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
