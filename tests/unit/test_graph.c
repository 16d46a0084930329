/*
 * Tests for graph loading (src/graph.c): edge lists in every separator,
 * comments, odd names, CRLF, gzip, stdin, cleaning counts, errors, the three
 * igraph formats, the open datasets' published sizes, fingerprints,
 * graph_from_pairs, and a fixed-seed mutation fuzz of all formats.
 *
 * Expected values are worked out by hand from the input written beside
 * them, or taken from the published sizes of the open datasets
 * (/work/shared/datasets/README.md and tests/data/README.md).
 */
#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <stdint.h>
#include <cmocka.h>

#include <fcntl.h>
#include <sys/wait.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>
#include <zlib.h>

#include "coterie/graph.h"
#include "coterie/rng.h"
#include "coterie/util.h"
#include "helpers.h"

/* ---- message capture ---------------------------------------------- */

static char captured[16384];
static int captured_count;
static int raw_control_seen;

static void capture_sink(int level, const char *msg)
{
	size_t used = strlen(captured);
	snprintf(captured + used, sizeof captured - used, "%d|%s\n", level, msg);
	captured_count++;
	for (const unsigned char *p = (const unsigned char *)msg; *p; p++)
		if (*p < 0x20 || *p == 0x7f)
			raw_control_seen = 1;
}

static void capture_start(void)
{
	captured[0] = '\0';
	captured_count = 0;
	raw_control_seen = 0;
	util_set_sink(capture_sink);
}

static void capture_stop(void)
{
	util_set_sink(NULL);
}

/* Number of captured messages holding s. */
static int captured_with(const char *s)
{
	int k = 0;
	for (const char *p = captured; (p = strstr(p, s)) != NULL; p += strlen(s))
		k++;
	return k;
}

/* ---- helpers ---------------------------------------------------------- */

static char tmpdir[256];

static int setup(void **state)
{
	(void)state;
	snprintf(tmpdir, sizeof tmpdir, "%s", test_tmpdir());
	return 0;
}

static int teardown(void **state)
{
	(void)state;
	util_set_sink(NULL);
	test_rmtree(tmpdir);
	return 0;
}

static const char *write_bytes(const char *name, const void *data, size_t len)
{
	static char path[512];
	snprintf(path, sizeof path, "%s/%s", tmpdir, name);
	/* a new file rather than a truncated one: ext4 flushes a file that was
	 * truncated and rewritten when it is closed, which is slow */
	unlink(path);
	FILE *f = fopen(path, "wb");
	assert_non_null(f);
	assert_int_equal(fwrite(data, 1, len, f), len);
	assert_int_equal(fclose(f), 0);
	return path;
}

static const char *write_text(const char *name, const char *text)
{
	return write_bytes(name, text, strlen(text));
}

static const char *write_gz(const char *name, const void *data, size_t len)
{
	static char path[512];
	snprintf(path, sizeof path, "%s/%s", tmpdir, name);
	unlink(path);
	gzFile gz = gzopen(path, "wb");
	assert_non_null(gz);
	if (len)
		assert_int_equal(gzwrite(gz, data, (unsigned)len), (int)len);
	assert_int_equal(gzclose(gz), Z_OK);
	return path;
}

/* Load quietly and check the struct rules. */
static struct graph *load(const char *path, enum graph_format fmt)
{
	capture_start();
	struct graph *g = graph_load(path, fmt);
	capture_stop();
	if (g)
		assert_graph_sane(g);
	return g;
}

static int linked(const struct graph *g, const char *a, const char *b)
{
	int64_t u = graph_find(g, a), v = graph_find(g, b);
	assert_true(u >= 0);
	assert_true(v >= 0);
	return graph_has_edge(g, (uint32_t)u, (uint32_t)v);
}

/* Every record read is a kept edge, a dropped self-loop or a merged
 * duplicate. */
static void assert_counts_add_up(const struct graph *g)
{
	assert_int_equal(g->report.edges_read,
			 g->m + g->report.self_loops + g->report.duplicates);
}

/* ---- edge lists: separators ------------------------------------------ */

static void test_tab_separated_names_may_hold_spaces(void **state)
{
	(void)state;
	/* 3 lines, names "new york", "san jose", "la", "x, y": 3 edges */
	const char *p = write_text("t.tsv", "new york\tsan jose\n"
					    "san jose\tla\n"
					    "la\tx, y\n");
	struct graph *g = load(p, GRAPH_FORMAT_AUTO);
	assert_non_null(g);
	assert_int_equal(g->report.format, GRAPH_FORMAT_EDGES);
	assert_int_equal(g->n, 4);
	assert_int_equal(g->m, 3);
	assert_true(linked(g, "new york", "san jose"));
	assert_true(linked(g, "la", "x, y"));
	assert_false(linked(g, "new york", "la"));
	assert_int_equal(g->report.extra_columns, 0);
	graph_free(g);
}

static void test_space_separated_on_runs_of_spaces(void **state)
{
	(void)state;
	/* runs of spaces and leading/trailing spaces: 2 edges a-b, b-c */
	const char *p = write_text("s.txt", "a    b\n   b c   \n");
	struct graph *g = load(p, GRAPH_FORMAT_EDGES);
	assert_non_null(g);
	assert_int_equal(g->n, 3);
	assert_int_equal(g->m, 2);
	assert_true(linked(g, "a", "b"));
	assert_true(linked(g, "b", "c"));
	assert_int_equal(g->report.extra_columns, 0);
	graph_free(g);
}

static void test_comma_separated_with_spaces_trimmed(void **state)
{
	(void)state;
	/* "a, b" -> a and b; "b c,d" -> "b c" and d (no tab: commas win) */
	const char *p = write_text("c.csv", "a, b\nb c,d\n d , a \n");
	struct graph *g = load(p, GRAPH_FORMAT_AUTO);
	assert_non_null(g);
	assert_int_equal(g->n, 4);
	assert_int_equal(g->m, 3);
	assert_true(linked(g, "a", "b"));
	assert_true(linked(g, "b c", "d"));
	assert_true(linked(g, "d", "a"));
	assert_int_equal(graph_find(g, " a"), -1);
	graph_free(g);
}

static void test_separator_is_chosen_per_line(void **state)
{
	(void)state;
	/* line 1 by tab, line 2 by comma, line 3 by spaces */
	const char *p = write_text("mix.txt", "p q\tr s\nr s,t\nt u\n");
	struct graph *g = load(p, GRAPH_FORMAT_EDGES);
	assert_non_null(g);
	assert_int_equal(g->n, 4);
	assert_true(linked(g, "p q", "r s"));
	assert_true(linked(g, "r s", "t"));
	assert_true(linked(g, "t", "u"));
	graph_free(g);
}

static void test_comment_and_blank_lines_are_skipped(void **state)
{
	(void)state;
	/* 7 lines, two of them edges */
	const char *p = write_text("cm.tsv", "# a comment\n"
					     "% another\n"
					     "\n"
					     "a\tb\n"
					     "   \t  \n"
					     "#x\ty\n"
					     "b\tc\n");
	struct graph *g = load(p, GRAPH_FORMAT_EDGES);
	assert_non_null(g);
	assert_int_equal(g->report.lines, 7);
	assert_int_equal(g->report.edges_read, 2);
	assert_int_equal(g->n, 3);
	assert_int_equal(graph_find(g, "#x"), -1);
	graph_free(g);
}

static void test_ids_follow_first_appearance(void **state)
{
	(void)state;
	const char *p = write_text("o.tsv", "z\ty\ny\tx\nw\tz\n");
	struct graph *g = load(p, GRAPH_FORMAT_EDGES);
	assert_non_null(g);
	assert_string_equal(graph_name(g, 0), "z");
	assert_string_equal(graph_name(g, 1), "y");
	assert_string_equal(graph_name(g, 2), "x");
	assert_string_equal(graph_name(g, 3), "w");
	assert_string_equal(g->source, p);
	graph_free(g);
}

static void test_odd_names_are_kept_byte_for_byte(void **state)
{
	(void)state;
	/* tests/data/graph/odd-names.tsv: 5 edges among 7 names */
	struct graph *g = load(test_data("graph/odd-names.tsv"), GRAPH_FORMAT_AUTO);
	assert_non_null(g);
	assert_int_equal(g->n, 7);
	assert_int_equal(g->m, 5);
	assert_true(linked(g, "Zo\xc3\xab \xc3\x85ngstr\xc3\xb6m", "\"quoted\""));
	assert_true(linked(g, "it's", "back\\slash"));
	assert_true(linked(g, "\x1b[31mred", "Zo\xc3\xab \xc3\x85ngstr\xc3\xb6m"));
	assert_true(linked(g, "\xe5\x90\x8d\xe5\x89\x8d", "\"quoted\""));
	assert_true(linked(g, "a,b c", "it's"));
	graph_free(g);
}

static void test_crlf_line_ends_are_stripped(void **state)
{
	(void)state;
	const char *p = write_text("crlf.tsv", "a\tb\r\nb\tc\r\n\r\nc c\r\n");
	struct graph *g = load(p, GRAPH_FORMAT_EDGES);
	assert_non_null(g);
	assert_int_equal(g->n, 3);
	assert_true(linked(g, "b", "c"));
	assert_int_equal(graph_find(g, "b\r"), -1);
	assert_int_equal(graph_find(g, "c\r"), -1);
	/* "c c" is a self-loop once the \r is gone */
	assert_int_equal(g->report.self_loops, 1);
	graph_free(g);
}

static void test_last_line_without_newline_is_read(void **state)
{
	(void)state;
	const char *p = write_text("nonl.tsv", "a\tb\nb\tc");
	struct graph *g = load(p, GRAPH_FORMAT_EDGES);
	assert_non_null(g);
	assert_int_equal(g->m, 2);
	assert_true(linked(g, "b", "c"));
	graph_free(g);
}

/* ---- gzip and stdin --------------------------------------------------- */

static void test_gz_file_is_decompressed(void **state)
{
	(void)state;
	const char *text = "a\tb\nb\tc\nc\ta\n";
	const char *p = write_gz("e.tsv.gz", text, strlen(text));
	struct graph *g = load(p, GRAPH_FORMAT_AUTO);
	assert_non_null(g);
	assert_int_equal(g->n, 3);
	assert_int_equal(g->m, 3);
	graph_free(g);

	/* gzip's magic bytes are enough, whatever the extension */
	p = write_gz("e.txt", text, strlen(text));
	g = load(p, GRAPH_FORMAT_AUTO);
	assert_non_null(g);
	assert_int_equal(g->m, 3);
	graph_free(g);

	/* the committed file: triangle x-y-z plus pendant w */
	g = load(test_data("graph/triangle.tsv.gz"), GRAPH_FORMAT_AUTO);
	assert_non_null(g);
	assert_int_equal(g->n, 4);
	assert_int_equal(g->m, 4);
	assert_true(linked(g, "z", "w"));
	graph_free(g);
}

static void test_truncated_gz_is_an_error(void **state)
{
	(void)state;
	char text[4000];
	for (size_t i = 0; i < sizeof text; i += 8)
		snprintf(text + i, sizeof text - i, "%03zu\t%03zu\n", i % 997, (i * 7) % 991);
	const char *p = write_gz("cut.tsv.gz", text, strlen(text));
	char path[512];
	snprintf(path, sizeof path, "%s", p);
	FILE *f = fopen(path, "rb");
	assert_non_null(f);
	unsigned char buf[8192];
	size_t len = fread(buf, 1, sizeof buf, f);
	fclose(f);
	assert_true(len > 40);
	write_bytes("cut.tsv.gz", buf, len / 2);
	capture_start();
	struct graph *g = graph_load(path, GRAPH_FORMAT_AUTO);
	capture_stop();
	assert_null(g);
	assert_true(captured_with("cut.tsv.gz") >= 1);
}

static void test_dash_reads_standard_input(void **state)
{
	(void)state;
	const char *p = write_text("in.tsv", "s1\ts2\ns2\ts3\n");
	int saved = dup(STDIN_FILENO);
	assert_true(saved >= 0);
	int fd = open(p, O_RDONLY);
	assert_true(fd >= 0);
	assert_int_equal(dup2(fd, STDIN_FILENO), STDIN_FILENO);
	close(fd);
	capture_start();
	struct graph *g = graph_load("-", GRAPH_FORMAT_AUTO);
	capture_stop();
	assert_int_equal(dup2(saved, STDIN_FILENO), STDIN_FILENO);
	close(saved);
	assert_non_null(g);
	assert_graph_sane(g);
	assert_int_equal(g->n, 3);
	assert_int_equal(g->m, 2);
	assert_string_equal(g->source, "-");
	assert_true(captured_with("stdin: 3 nodes, 2 edges") == 1);
	graph_free(g);

	/* compressed data on stdin too */
	const char *text = "a b\n";
	p = write_gz("in.gz", text, strlen(text));
	saved = dup(STDIN_FILENO);
	fd = open(p, O_RDONLY);
	assert_true(fd >= 0);
	dup2(fd, STDIN_FILENO);
	close(fd);
	g = load("-", GRAPH_FORMAT_EDGES);
	dup2(saved, STDIN_FILENO);
	close(saved);
	assert_non_null(g);
	assert_int_equal(g->m, 1);
	graph_free(g);
}

/* ---- cleaning ---------------------------------------------------------- */

static void test_duplicates_and_reversed_duplicates_are_merged(void **state)
{
	(void)state;
	/* a-b, a-b, b-a, b-c, c-b: 5 records, 2 edges, 3 merged */
	const char *p = write_text("dup.tsv", "a\tb\na\tb\nb\ta\nb\tc\nc\tb\n");
	capture_start();
	struct graph *g = graph_load(p, GRAPH_FORMAT_EDGES);
	capture_stop();
	assert_non_null(g);
	assert_graph_sane(g);
	assert_int_equal(g->report.edges_read, 5);
	assert_int_equal(g->m, 2);
	assert_int_equal(g->report.duplicates, 3);
	assert_int_equal(captured_with("merged 3 duplicate edges"), 1);
	assert_counts_add_up(g);
	graph_free(g);
}

static void test_self_loops_are_dropped_and_counted(void **state)
{
	(void)state;
	/* a-a, a-b, b-b, c-c: 1 edge; c appears only in a loop and stays,
	 * isolated */
	const char *p = write_text("loop.tsv", "a\ta\na\tb\nb\tb\nc\tc\n");
	capture_start();
	struct graph *g = graph_load(p, GRAPH_FORMAT_EDGES);
	capture_stop();
	assert_non_null(g);
	assert_graph_sane(g);
	assert_int_equal(g->n, 3);
	assert_int_equal(g->m, 1);
	assert_int_equal(g->report.self_loops, 3);
	assert_int_equal(g->report.isolated, 1);
	assert_int_equal(graph_degree(g, (uint32_t)graph_find(g, "c")), 0);
	assert_int_equal(captured_with("dropped 3 self-loops"), 1);
	assert_counts_add_up(g);
	graph_free(g);
}

static void test_third_column_is_ignored_with_one_notice(void **state)
{
	(void)state;
	/* 3 weighted lines and one plain line */
	const char *p = write_text("w.tsv", "a\tb\t0.5\nb\tc\t1\nc\ta\t2\nc\td\n");
	capture_start();
	struct graph *g = graph_load(p, GRAPH_FORMAT_EDGES);
	capture_stop();
	assert_non_null(g);
	assert_graph_sane(g);
	assert_int_equal(g->m, 4);
	assert_int_equal(g->report.extra_columns, 3);
	assert_int_equal(graph_find(g, "0.5"), -1);
	assert_int_equal(captured_with("third column"), 1);
	assert_int_equal(captured_with("ignored the third column on 3 lines"), 1);
	graph_free(g);
}

/* ---- edge lists: header lines and skipped lines --------------------------
 * The rule is graph.h's (struct graph_load_opts); the column names tested
 * are the usual ones of CSV exports: "source,target,weight" (Gephi,
 * networkx.to_pandas_edgelist), "from","to" (R igraph's as_data_frame,
 * quoted by write.csv), a byte order mark before the first field (Excel's
 * "CSV UTF-8"). Common practice, not a standard. */

static struct graph *load_with(const char *path, uint64_t skip, int no_header)
{
	struct graph_load_opts o = { .fmt = GRAPH_FORMAT_EDGES, .skip_lines = skip,
				     .no_header = no_header };
	capture_start();
	struct graph *g = graph_load_with(path, &o);
	capture_stop();
	if (g)
		assert_graph_sane(g);
	return g;
}

static void test_csv_header_line_is_skipped_with_a_notice(void **state)
{
	(void)state;
	const char *p = write_text("h.csv", "source,target,weight\na,b,1\nb,c,2\n");
	struct graph *g = load(p, GRAPH_FORMAT_AUTO);
	assert_non_null(g);
	assert_int_equal(g->n, 3);
	assert_int_equal(g->m, 2);
	assert_int_equal(graph_find(g, "source"), -1);
	assert_int_equal(g->report.header_line, 1);
	assert_int_equal(g->report.lines, 3);
	assert_int_equal(captured_with("h.csv:1: skipped a header line 'source,target,weight'"), 1);
	assert_int_equal(captured_with("--no-header"), 1);
	graph_free(g);
	/* the fast path's usual line, name TAB name, is a header too */
	p = write_text("h.tsv", "Source\tTarget\na\tb\n");
	g = load(p, GRAPH_FORMAT_EDGES);
	assert_non_null(g);
	assert_int_equal(g->m, 1);
	assert_int_equal(graph_find(g, "Source"), -1);
	graph_free(g);
	/* and through gzip */
	const char *text = "from to\nx y\n";
	p = write_gz("h.txt.gz", text, strlen(text));
	g = load(p, GRAPH_FORMAT_AUTO);
	assert_non_null(g);
	assert_int_equal(g->m, 1);
	assert_int_equal(graph_find(g, "from"), -1);
	graph_free(g);
}

static void test_header_after_comments_quoted_or_after_a_bom_is_found(void **state)
{
	(void)state;
	const char *p = write_text("q.tsv", "# made by hand\n\n\"from\"\t\"to\"\r\nx\ty\r\n");
	struct graph *g = load(p, GRAPH_FORMAT_EDGES);
	assert_non_null(g);
	assert_int_equal(g->m, 1);
	assert_int_equal(g->report.header_line, 3);
	assert_int_equal(captured_with("q.tsv:3: skipped a header line"), 1);
	graph_free(g);
	p = write_text("bom.csv", "\xEF\xBB\xBFNode1,Node2\nx,y\n");
	g = load(p, GRAPH_FORMAT_EDGES);
	assert_non_null(g);
	assert_int_equal(g->n, 2);
	assert_int_equal(g->report.header_line, 1);
	graph_free(g);
	/* a header far down, after more than a chunk (1 MiB) of comments */
	size_t len = (size_t)3 << 20;
	char *big = malloc(len + 64);
	assert_non_null(big);
	size_t at = 0;
	while (at + 64 < len) {
		memset(big + at, 'x', 63);
		big[at] = '#';
		big[at + 63] = '\n';
		at += 64;
	}
	uint64_t comments = at / 64;
	at += (size_t)snprintf(big + at, 64, "u\tv\na\tb\n");
	p = write_bytes("late.tsv", big, at);
	free(big);
	g = load(p, GRAPH_FORMAT_EDGES);
	assert_non_null(g);
	assert_int_equal(g->m, 1);
	assert_int_equal(graph_find(g, "u"), -1);
	assert_int_equal(g->report.header_line, comments + 1);
	assert_int_equal(g->report.lines, comments + 2);
	graph_free(g);
}

static void test_word_above_a_number_in_the_third_column_is_a_header(void **state)
{
	(void)state;
	const char *p = write_text("b.csv", "Person1,Person2,Strength\nalice,bob,3\nbob,carol,0.5\n");
	struct graph *g = load(p, GRAPH_FORMAT_EDGES);
	assert_non_null(g);
	assert_int_equal(g->m, 2);
	assert_int_equal(graph_find(g, "Person1"), -1);
	assert_int_equal(g->report.header_line, 1);
	graph_free(g);
}

/* Node names are words too: only a line of column names, or a word over a
 * number, is a header; nothing is guessed past the first data line. */
static void test_node_names_that_are_words_stay_edges(void **state)
{
	(void)state;
	static const char *const kept[] = {
		"alice bob\nbob carol\n",          /* words, not column names */
		"source alice\nalice bob\n",       /* one column name only */
		"target target\na b\n",            /* the same name twice */
		"a,b,x\nc,d,y\n",                  /* no number below the word */
		"a,b,x\n",                         /* no line below */
		"1 2 3\n2 3 4\n",                  /* numbers */
		"a\tb\nsource\ttarget\n",          /* not the first data line */
		"source target extra\nx y\n",      /* "extra" is no column name */
	};
	for (size_t i = 0; i < sizeof kept / sizeof kept[0]; i++) {
		const char *p = write_text("k.txt", kept[i]);
		struct graph *g = load(p, GRAPH_FORMAT_EDGES);
		assert_non_null(g);
		assert_int_equal(g->report.header_line, 0);
		assert_int_equal(captured_with("header"), 0);
		assert_int_equal(g->report.edges_read, 1 + (strchr(kept[i], '\n')[1] != '\0'));
		graph_free(g);
	}
	/* a graph whose nodes are named source and target, said so */
	const char *p = write_text("st.tsv", "source\ttarget\ntarget\tsink\n");
	struct graph *g = load_with(p, 0, 1);
	assert_non_null(g);
	assert_int_equal(g->m, 2);
	assert_true(linked(g, "source", "target"));
	assert_int_equal(g->report.header_line, 0);
	assert_int_equal(captured_with("header"), 0);
	graph_free(g);
}

static void test_skip_lines_skips_any_lines_and_guesses_no_header(void **state)
{
	(void)state;
	const char *p = write_text("s.txt", "Edges of a graph\n(2 of them)\na b\nb c\n");
	struct graph *g = load_with(p, 2, 0);
	assert_non_null(g);
	assert_int_equal(g->m, 2);
	assert_int_equal(g->report.skipped_lines, 2);
	assert_int_equal(g->report.lines, 4);
	assert_int_equal(captured_with("s.txt: skipped the first 2 lines, as asked"), 1);
	graph_free(g);
	/* the line after the skipped ones is an edge, whatever it looks like */
	p = write_text("s2.txt", "# exported\nsource target\nb c\n");
	g = load_with(p, 1, 0);
	assert_non_null(g);
	assert_int_equal(g->m, 2);
	assert_true(linked(g, "source", "target"));
	graph_free(g);
	/* a line with a NUL byte is skipped without a word, when asked */
	p = write_bytes("s3.txt", "x\0y\na b\n", 8);
	g = load_with(p, 1, 0);
	assert_non_null(g);
	assert_int_equal(g->m, 1);
	graph_free(g);
	/* more lines skipped than the file has: no edge */
	p = write_text("s4.txt", "a b\n");
	g = load_with(p, 5, 0);
	assert_non_null(g);
	assert_int_equal(g->m, 0);
	assert_int_equal(g->report.skipped_lines, 1);
	graph_free(g);
	/* another format is read whole, with a warning */
	struct graph_load_opts o = { .skip_lines = 1 };
	capture_start();
	g = graph_load_with(test_data("graph/triangle-plus.gml"), &o);
	capture_stop();
	assert_non_null(g);
	assert_int_equal(g->m, 4);
	assert_int_equal(captured_with("a gml file is read whole"), 1);
	graph_free(g);
}

/* ---- errors ------------------------------------------------------------ */

static void test_line_with_one_name_is_an_error_naming_file_and_line(void **state)
{
	(void)state;
	const char *p = write_text("net.tsv", "# header\na\tb\nlonely\nc\td\n");
	capture_start();
	struct graph *g = graph_load(p, GRAPH_FORMAT_EDGES);
	capture_stop();
	assert_null(g);
	assert_int_equal(captured_with("net.tsv:3: expected two node names, found 1"), 1);
}

static void test_names_in_messages_are_escaped(void **state)
{
	(void)state;
	/* an ESC sequence as the lone name of line 1 */
	const char *p = write_text("esc.tsv", "\x1b]0;owned\x07\n");
	capture_start();
	struct graph *g = graph_load(p, GRAPH_FORMAT_EDGES);
	capture_stop();
	assert_null(g);
	assert_false(raw_control_seen);
	assert_int_equal(captured_with("esc.tsv:1: expected two node names, found 1"), 1);
	assert_int_equal(captured_with("\\e]0;owned\\x07"), 1);
}

static void test_nul_byte_is_an_error_naming_the_line(void **state)
{
	(void)state;
	const char text[] = "a\tb\nc\td\0e\n";
	const char *p = write_bytes("nul.tsv", text, sizeof text - 1);
	capture_start();
	struct graph *g = graph_load(p, GRAPH_FORMAT_EDGES);
	capture_stop();
	assert_null(g);
	assert_int_equal(captured_with("nul.tsv:2: expected text, found a NUL byte"), 1);
}

static void test_missing_file_is_an_error(void **state)
{
	(void)state;
	char path[512];
	snprintf(path, sizeof path, "%s/none.tsv", tmpdir);
	capture_start();
	struct graph *g = graph_load(path, GRAPH_FORMAT_AUTO);
	capture_stop();
	assert_null(g);
	assert_int_equal(captured_with("cannot open"), 1);
	assert_int_equal(captured_with("No such file or directory"), 1);
}

static void test_empty_file_is_a_graph_of_no_nodes(void **state)
{
	(void)state;
	/* chosen in graph.c: an empty edge list loads as 0 nodes, 0 edges */
	const char *p = write_text("empty.tsv", "");
	capture_start();
	struct graph *g = graph_load(p, GRAPH_FORMAT_EDGES);
	capture_stop();
	assert_non_null(g);
	assert_graph_sane(g);
	assert_int_equal(g->n, 0);
	assert_int_equal(g->m, 0);
	assert_int_equal(captured_with("0 nodes, 0 edges"), 1);
	graph_free(g);

	p = write_text("comments.tsv", "# nothing\n% at all\n");
	g = load(p, GRAPH_FORMAT_EDGES);
	assert_non_null(g);
	assert_int_equal(g->n, 0);
	graph_free(g);
}

static void test_long_lines_work_up_to_the_limit(void **state)
{
	(void)state;
	/* a 2 MiB name: longer than the first read buffer (1 MiB) */
	size_t big = (size_t)2 << 20;
	char *text = malloc(big + 16);
	assert_non_null(text);
	memset(text, 'n', big);
	memcpy(text + big, "\tb\nb\tc\n", 8);
	const char *p = write_bytes("long.tsv", text, big + 7);
	struct graph *g = load(p, GRAPH_FORMAT_EDGES);
	assert_non_null(g);
	assert_int_equal(g->n, 3);
	assert_int_equal(strlen(graph_name(g, 0)), big);
	graph_free(g);
	free(text);

	/* beyond the documented 16 MiB a line is refused, with its number */
	big = (size_t)17 << 20;
	text = malloc(big + 16);
	assert_non_null(text);
	memcpy(text, "a\tb\n", 4);
	memset(text + 4, 'x', big);
	memcpy(text + 4 + big, "\ty\n", 3);
	p = write_bytes("huge.tsv", text, big + 7);
	free(text);
	capture_start();
	g = graph_load(p, GRAPH_FORMAT_EDGES);
	capture_stop();
	assert_null(g);
	assert_int_equal(captured_with("huge.tsv:2: expected a line of at most 16 MiB"), 1);
}

/* Load "-" with the bytes fed through a pipe by a child process, so the
 * reader sees a pipe (read on the parser's own thread), not a file. */
static struct graph *load_through_pipe(const char *data, size_t len)
{
	int fds[2];
	assert_int_equal(pipe(fds), 0);
	pid_t pid = fork();
	assert_true(pid >= 0);
	if (pid == 0) {
		close(fds[0]);
		size_t done = 0;
		while (done < len) {
			ssize_t w = write(fds[1], data + done, len - done);
			if (w <= 0)
				_exit(1);
			done += (size_t)w;
		}
		_exit(0);
	}
	close(fds[1]);
	int saved = dup(STDIN_FILENO);
	assert_true(saved >= 0);
	assert_int_equal(dup2(fds[0], STDIN_FILENO), STDIN_FILENO);
	close(fds[0]);
	struct graph *g = load("-", GRAPH_FORMAT_EDGES);
	assert_int_equal(dup2(saved, STDIN_FILENO), STDIN_FILENO);
	close(saved);
	int status = 0;
	assert_int_equal(waitpid(pid, &status, 0), pid);
	return g;
}

static void test_large_input_reads_alike_from_file_gz_and_pipe(void **state)
{
	(void)state;
	/* A cycle v0 - v1 - ... - v(N-1) - v0, one line per edge (v(i), v(i+1 mod N)),
	 * several MiB: more than the loader's 1 MiB chunks, so lines straddle
	 * them, and enough pairs for the CSR to be built in two parts. Mixed in:
	 *   i % 7 == 0   the line ends in CRLF
	 *   i % 11 == 0  the names are separated by a space, not a TAB
	 *   i % 13 == 0  a third column (ignored, counted)
	 *   i % 17 == 0  then the same edge reversed (a duplicate)
	 *   i % 19 == 0  then a self-loop v(i) - v(i)
	 *   i % 1000 == 0 a comment line before the edge
	 * and at i == N/2 a line "LLL...L TAB v0" with a name of 3 MiB (longer
	 * than a chunk). The last line has no newline. By hand: N + 1 nodes,
	 * N + 1 edges, v0 of degree 3, the others of degree 2 (the long name 1). */
	enum { N = 200000 };
	size_t longlen = (size_t)3 << 20;
	size_t cap = (size_t)N * 64 + longlen + 64;
	char *text = malloc(cap);
	assert_non_null(text);
	size_t len = 0;
	uint64_t lines = 0, extra = 0, dups = 0, loops = 0;
	for (uint32_t i = 0; i < N; i++) {
		uint32_t j = (i + 1) % N;
		const char *sep = i % 11 == 0 ? " " : "\t";
		if (i % 1000 == 0) {
			len += (size_t)snprintf(text + len, cap - len, "# comment %u\n", i);
			lines++;
		}
		if (i == N / 2) {
			memset(text + len, 'L', longlen);
			len += longlen;
			len += (size_t)snprintf(text + len, cap - len, "\tv0\n");
			lines++;
		}
		len += (size_t)snprintf(text + len, cap - len, "v%u%sv%u%s%s", i, sep, j,
					i % 13 == 0 ? sep : "", i % 13 == 0 ? "w" : "");
		extra += i % 13 == 0;
		lines++;
		if (i + 1 < N)
			len += (size_t)snprintf(text + len, cap - len, "%s\n", i % 7 == 0 ? "\r" : "");
		if (i % 17 == 0 && i + 1 < N) {
			len += (size_t)snprintf(text + len, cap - len, "v%u\tv%u\n", j, i);
			dups++;
			lines++;
		}
		if (i % 19 == 0 && i + 1 < N) {
			len += (size_t)snprintf(text + len, cap - len, "v%u\tv%u\n", i, i);
			loops++;
			lines++;
		}
	}
	assert_true(len > ((size_t)5 << 20));
	char plain[512];
	snprintf(plain, sizeof plain, "%s", write_bytes("cycle.tsv", text, len));
	char gz[512];
	snprintf(gz, sizeof gz, "%s", write_gz("cycle.tsv.gz", text, len));

	struct graph *g[3] = { load(plain, GRAPH_FORMAT_AUTO), load(gz, GRAPH_FORMAT_AUTO),
			       load_through_pipe(text, len) };
	free(text);
	for (int k = 0; k < 3; k++) {
		assert_non_null(g[k]);
		assert_int_equal(g[k]->n, N + 1);
		assert_int_equal(g[k]->m, N + 1);
		assert_int_equal(g[k]->report.lines, lines);
		assert_int_equal(g[k]->report.extra_columns, extra);
		assert_int_equal(g[k]->report.duplicates, dups);
		assert_int_equal(g[k]->report.self_loops, loops);
		assert_int_equal(g[k]->report.edges_read, N + 1 + dups + loops);
		assert_int_equal(strlen(graph_name(g[k], N / 2 + 1)), longlen);
		/* ids by first appearance: v0 .. v(N/2) come first, then the long
		 * name, then v(N/2 + 1) onwards */
		for (uint32_t i = 0; i < N; i++) {
			char name[16];
			snprintf(name, sizeof name, "v%u", i);
			int64_t id = graph_find(g[k], name);
			assert_int_equal(id, i <= N / 2 ? i : i + 1);
			uint32_t want = i == 0 ? 3 : 2;
			assert_int_equal(graph_degree(g[k], (uint32_t)id), want);
			snprintf(name, sizeof name, "v%u", (i + 1) % N);
			assert_true(graph_has_edge(g[k], (uint32_t)id, (uint32_t)graph_find(g[k], name)));
		}
		assert_int_equal(graph_fingerprint(g[k]), graph_fingerprint(g[0]));
	}
	for (int k = 0; k < 3; k++)
		graph_free(g[k]);
}

static void test_gz_cut_inside_a_large_file_is_an_error(void **state)
{
	(void)state;
	/* 3 MiB of edge lines, compressed, cut in the middle: an error naming
	 * the file, whichever chunk the reader was filling */
	size_t cap = (size_t)3 << 20, len = 0;
	char *text = malloc(cap + 32);
	assert_non_null(text);
	for (uint32_t i = 0; len < cap; i++)
		len += (size_t)snprintf(text + len, cap + 32 - len, "%u\t%u\n", i % 100003,
					(i * 7919u) % 100019);
	char path[512];
	snprintf(path, sizeof path, "%s", write_gz("bigcut.tsv.gz", text, len));
	free(text);
	FILE *f = fopen(path, "rb");
	assert_non_null(f);
	assert_int_equal(fseek(f, 0, SEEK_END), 0);
	long size = ftell(f);
	assert_true(size > 1000);
	char *gzb = malloc((size_t)size);
	assert_non_null(gzb);
	rewind(f);
	assert_int_equal(fread(gzb, 1, (size_t)size, f), (size_t)size);
	fclose(f);
	write_bytes("bigcut.tsv.gz", gzb, (size_t)size / 2);
	free(gzb);
	capture_start();
	struct graph *g = graph_load(path, GRAPH_FORMAT_AUTO);
	capture_stop();
	assert_null(g);
	assert_int_equal(captured_with("bigcut.tsv.gz': compressed data ends too early"), 1);
}

/* ---- igraph formats ---------------------------------------------------- */

/* The graph of tests/data/graph/triangle-plus.*: triangle ann-bob-cy,
 * pendant dee on cy, isolated eve, and bob-ann listed again. */
static void check_triangle_plus(const struct graph *g, enum graph_format fmt)
{
	assert_int_equal(g->report.format, fmt);
	assert_int_equal(g->n, 5);
	assert_int_equal(g->m, 4);
	assert_int_equal(g->report.edges_read, 5);
	assert_int_equal(g->report.duplicates, 1);
	assert_int_equal(g->report.isolated, 1);
	assert_int_equal(g->report.directed_input, 0);
	assert_true(linked(g, "ann", "bob"));
	assert_true(linked(g, "cy", "ann"));
	assert_true(linked(g, "dee", "cy"));
	assert_false(linked(g, "dee", "ann"));
	assert_int_equal(graph_degree(g, (uint32_t)graph_find(g, "eve")), 0);
	assert_counts_add_up(g);
}

static void test_gml_keeps_labels_and_isolated_nodes(void **state)
{
	(void)state;
	struct graph *g = load(test_data("graph/triangle-plus.gml"), GRAPH_FORMAT_AUTO);
	assert_non_null(g);
	check_triangle_plus(g, GRAPH_FORMAT_GML);
	graph_free(g);
}

static void test_graphml_keeps_names_and_isolated_nodes(void **state)
{
	(void)state;
	struct graph *g = load(test_data("graph/triangle-plus.graphml"), GRAPH_FORMAT_AUTO);
	assert_non_null(g);
	check_triangle_plus(g, GRAPH_FORMAT_GRAPHML);
	graph_free(g);
}

static void test_pajek_keeps_labels_and_isolated_nodes(void **state)
{
	(void)state;
	struct graph *g = load(test_data("graph/triangle-plus.net"), GRAPH_FORMAT_AUTO);
	assert_non_null(g);
	check_triangle_plus(g, GRAPH_FORMAT_PAJEK);
	graph_free(g);
}

static void test_same_graph_in_three_formats_has_one_fingerprint(void **state)
{
	(void)state;
	struct graph *a = load(test_data("graph/triangle-plus.gml"), GRAPH_FORMAT_AUTO);
	struct graph *b = load(test_data("graph/triangle-plus.graphml"), GRAPH_FORMAT_AUTO);
	struct graph *c = load(test_data("graph/triangle-plus.net"), GRAPH_FORMAT_AUTO);
	assert_non_null(a);
	assert_non_null(b);
	assert_non_null(c);
	assert_true(graph_fingerprint(a) == graph_fingerprint(b));
	assert_true(graph_fingerprint(a) == graph_fingerprint(c));
	graph_free(a);
	graph_free(b);
	graph_free(c);
}

static void test_directed_gml_is_read_undirected_with_a_notice(void **state)
{
	(void)state;
	capture_start();
	struct graph *g = graph_load(test_data("graph/directed.gml"), GRAPH_FORMAT_AUTO);
	capture_stop();
	assert_non_null(g);
	assert_graph_sane(g);
	/* arcs a->b, b->c, c->a, b->a, c->c: a triangle, 1 merged, 1 loop */
	assert_int_equal(g->report.directed_input, 1);
	assert_int_equal(g->n, 3);
	assert_int_equal(g->m, 3);
	assert_int_equal(g->report.duplicates, 1);
	assert_int_equal(g->report.self_loops, 1);
	assert_int_equal(captured_with("read as undirected"), 1);
	graph_free(g);
}

static void test_directed_graphml_is_named_by_ids(void **state)
{
	(void)state;
	struct graph *g = load(test_data("graph/directed.graphml"), GRAPH_FORMAT_AUTO);
	assert_non_null(g);
	assert_int_equal(g->report.directed_input, 1);
	assert_int_equal(g->n, 3);
	assert_int_equal(g->m, 2);
	assert_true(linked(g, "p", "q"));
	assert_true(linked(g, "r", "q"));
	graph_free(g);
}

static void test_directed_pajek_is_named_by_vertex_numbers(void **state)
{
	(void)state;
	struct graph *g = load(test_data("graph/directed.net"), GRAPH_FORMAT_AUTO);
	assert_non_null(g);
	/* arcs 1->2, 2->3, 3->2: 2 edges, 1 merged; vertex 4 isolated */
	assert_int_equal(g->report.directed_input, 1);
	assert_int_equal(g->n, 4);
	assert_int_equal(g->m, 2);
	assert_int_equal(g->report.duplicates, 1);
	assert_int_equal(g->report.isolated, 1);
	assert_true(linked(g, "1", "2"));
	assert_true(linked(g, "3", "2"));
	graph_free(g);
}

static void test_gml_with_repeated_labels_falls_back_to_ids(void **state)
{
	(void)state;
	/* nolabel.gml: names "x", "x" and none; ids 7, 8, 9 */
	struct graph *g = load(test_data("graph/nolabel.gml"), GRAPH_FORMAT_AUTO);
	assert_non_null(g);
	assert_int_equal(g->n, 3);
	assert_true(linked(g, "7", "8"));
	assert_true(linked(g, "8", "9"));
	graph_free(g);
}

static void test_igraph_format_in_gz_and_by_argument(void **state)
{
	(void)state;
	const char *gml = "graph [ node [ id 1 label \"u\" ] node [ id 2 label \"v\" ]\n"
			  "edge [ source 1 target 2 ] ]\n";
	const char *p = write_gz("g.gml.gz", gml, strlen(gml));
	struct graph *g = load(p, GRAPH_FORMAT_AUTO);
	assert_non_null(g);
	assert_int_equal(g->report.format, GRAPH_FORMAT_GML);
	assert_true(linked(g, "u", "v"));
	graph_free(g);

	/* the format argument wins over the extension */
	p = write_text("g.txt", gml);
	g = load(p, GRAPH_FORMAT_GML);
	assert_non_null(g);
	assert_int_equal(g->report.format, GRAPH_FORMAT_GML);
	assert_int_equal(g->m, 1);
	graph_free(g);
}

static void test_igraph_parse_error_is_reported_and_not_fatal(void **state)
{
	(void)state;
	const char *p = write_text("bad.gml", "graph [ edge [ source 1 target 2 ] ]\n");
	capture_start();
	struct graph *g = graph_load(p, GRAPH_FORMAT_AUTO);
	capture_stop();
	assert_null(g);
	assert_int_equal(captured_with("bad.gml: cannot read gml"), 1);

	p = write_text("bad.net", "*Vertices 2\n*Edges\n1 9\n");
	capture_start();
	g = graph_load(p, GRAPH_FORMAT_AUTO);
	capture_stop();
	assert_null(g);
	assert_int_equal(captured_with("bad.net: cannot read pajek"), 1);

	p = write_text("bad.graphml", "<graphml><graph>");
	capture_start();
	g = graph_load(p, GRAPH_FORMAT_AUTO);
	capture_stop();
	assert_null(g);
	assert_int_equal(captured_with("bad.graphml: cannot read graphml"), 1);
}

static void test_graphs_of_2_to_the_32_minus_1_nodes_are_refused(void **state)
{
	(void)state;
	/* graph.h: ids are 32-bit, n = 2^32 - 1 = 4294967295 is refused */
	const char *p = write_text("big.net", "*Vertices 4294967295\n*Edges\n1 2\n");
	capture_start();
	struct graph *g = graph_load(p, GRAPH_FORMAT_AUTO);
	assert_null(g);
	assert_null(graph_from_pairs(UINT32_MAX, NULL, 0, NULL));
	capture_stop();
	assert_int_equal(captured_with("too many nodes"), 2);
}

static void test_pajek_vertex_counts_far_beyond_the_file_are_refused(void **state)
{
	(void)state;
	/* 709551615 vertices declared in a file of 43 bytes would have igraph
	 * allocate gigabytes (found by tests/fuzz/fuzz_graph) */
	const char *p = write_text("huge.net", "% a comment\n*Vertices 709551615\n*Edges\n1 2\n");
	capture_start();
	struct graph *g = graph_load(p, GRAPH_FORMAT_AUTO);
	capture_stop();
	assert_null(g);
	assert_int_equal(captured_with("huge.net:2: expected a vertex count near the vertices the "
				       "file lists, found 709551615"), 1);
	/* a million unlisted vertices are still accepted (isolated nodes) */
	p = write_text("many.net", "*Vertices 1000000\n*Edges\n1 2\n");
	util_set_quiet(1);
	g = graph_load(p, GRAPH_FORMAT_AUTO);
	util_set_quiet(0);
	assert_non_null(g);
	assert_int_equal(g->n, 1000000);
	assert_int_equal(g->m, 1);
	graph_free(g);
}

static void test_graphml_with_a_dtd_is_refused(void **state)
{
	(void)state;
	/* an external entity would pull another file into a node name */
	const char *p = write_text("xxe.graphml",
				   "<?xml version=\"1.0\"?>\n"
				   "<!DOCTYPE g [ <!ENTITY x SYSTEM \"file:///etc/passwd\"> ]>\n"
				   "<graphml><key id=\"k\" for=\"node\" attr.name=\"name\" "
				   "attr.type=\"string\"/><graph edgedefault=\"undirected\">"
				   "<node id=\"a\"><data key=\"k\">&x;</data></node>"
				   "<node id=\"b\"/><edge source=\"a\" target=\"b\"/>"
				   "</graph></graphml>\n");
	capture_start();
	struct graph *g = graph_load(p, GRAPH_FORMAT_AUTO);
	capture_stop();
	assert_null(g);
	assert_int_equal(captured_with("DTD is refused"), 1);
}

/* ---- open datasets ------------------------------------------------------ */

static void check_dataset(const char *rel, uint32_t n, uint64_t m)
{
	struct graph *g = load(test_data(rel), GRAPH_FORMAT_AUTO);
	assert_non_null(g);
	assert_int_equal(g->n, n);
	assert_int_equal(g->m, m);
	assert_int_equal(g->report.self_loops, 0);
	assert_int_equal(g->report.duplicates, 0);
	graph_free(g);
}

static void test_open_datasets_have_their_published_sizes(void **state)
{
	(void)state;
	/* W. W. Zachary, J. Anthropological Research 33, 452-473 (1977):
	 * 34 members, 78 ties */
	check_dataset("karate/edges.tsv", 34, 78);
	/* M. Girvan, M. E. J. Newman, PNAS 99, 7821-7826 (2002):
	 * 115 teams, 613 games */
	check_dataset("football/edges.tsv", 115, 613);
	/* V. Krebs, via M. E. J. Newman's network data: 105 books, 441 links */
	check_dataset("polbooks/edges.tsv", 105, 441);
	/* D. Lusseau et al., Behav. Ecol. Sociobiol. 54, 396-405 (2003):
	 * 62 dolphins, 159 associations */
	check_dataset("dolphins/edges.tsv", 62, 159);
	/* D. E. Knuth, The Stanford GraphBase (1993): 77 characters,
	 * 254 co-appearances */
	check_dataset("lesmis/edges.tsv", 77, 254);
}

static void test_karate_degrees_match_networkx(void **state)
{
	(void)state;
	struct graph *g = load(test_data("karate/edges.tsv"), GRAPH_FORMAT_AUTO);
	assert_non_null(g);
	/* python3-networkx 3.6.1: karate_club_graph().degree(0) == 16 and
	 * .degree(33) == 17 (Zachary 1977: the instructor and the
	 * administrator) */
	assert_int_equal(graph_degree(g, (uint32_t)graph_find(g, "0")), 16);
	assert_int_equal(graph_degree(g, (uint32_t)graph_find(g, "33")), 17);
	graph_free(g);
}

/* ---- fingerprints, lookups, pairs -------------------------------------- */

static void test_fingerprint_is_stable_and_sees_one_edge(void **state)
{
	(void)state;
	struct graph *a = load(test_data("karate/edges.tsv"), GRAPH_FORMAT_AUTO);
	struct graph *b = load(test_data("karate/edges.tsv"), GRAPH_FORMAT_AUTO);
	assert_non_null(a);
	assert_non_null(b);
	assert_true(graph_fingerprint(a) == graph_fingerprint(b));

	/* the same file with its last edge moved to another pair */
	FILE *f = fopen(test_data("karate/edges.tsv"), "rb");
	assert_non_null(f);
	char text[4096];
	size_t len = fread(text, 1, sizeof text - 1, f);
	fclose(f);
	text[len] = '\0';
	assert_true(len > 10 && text[len - 1] == '\n');
	text[len - 1] = '\0';
	char *last = strrchr(text, '\n');
	assert_non_null(last);
	char changed[4200];
	/* karate has no 0-9 tie: checked below before the comparison */
	snprintf(changed, sizeof changed, "%.*s\n0\t9\n", (int)(last - text), text);
	assert_false(linked(a, "0", "9"));
	const char *p = write_text("karate-changed.tsv", changed);
	struct graph *c = load(p, GRAPH_FORMAT_AUTO);
	assert_non_null(c);
	assert_int_equal(c->m, a->m);
	assert_true(graph_fingerprint(a) != graph_fingerprint(c));

	/* and a renamed node changes it too */
	struct graph *d = graph_from_pairs(2, (const uint32_t[]){ 0, 1 }, 1, NULL);
	struct graph *e = graph_from_pairs(2, (const uint32_t[]){ 0, 1 }, 1,
					   (const char *const[]){ "0", "2" });
	assert_non_null(d);
	assert_non_null(e);
	assert_true(graph_fingerprint(d) != graph_fingerprint(e));
	graph_free(a);
	graph_free(b);
	graph_free(c);
	graph_free(d);
	graph_free(e);
}

static void test_find_and_has_edge(void **state)
{
	(void)state;
	const char *p = write_text("f.tsv", "hub\ta\nhub\tb\nhub\tc\na\tb\n");
	struct graph *g = load(p, GRAPH_FORMAT_EDGES);
	assert_non_null(g);
	assert_int_equal(graph_find(g, "hub"), 0);
	assert_int_equal(graph_find(g, "c"), 3);
	assert_int_equal(graph_find(g, "nobody"), -1);
	assert_int_equal(graph_find(g, "hu"), -1);
	assert_int_equal(graph_find(g, "hubb"), -1);
	assert_int_equal(graph_find(g, ""), -1);
	assert_true(graph_has_edge(g, 0, 3));
	assert_true(graph_has_edge(g, 3, 0));
	assert_false(graph_has_edge(g, 1, 3));
	assert_false(graph_has_edge(g, 0, 0));
	assert_false(graph_has_edge(g, 0, 99));
	assert_int_equal(graph_degree(g, 0), 3);
	graph_free(g);
}

static int cmp_u64(const void *a, const void *b)
{
	uint64_t x = *(const uint64_t *)a, y = *(const uint64_t *)b;
	return x < y ? -1 : x > y;
}

static void test_two_part_build_matches_sorted_unique_entries(void **state)
{
	(void)state;
	/* 200000 random records among 50000 nodes (enough for the CSR to be
	 * built in two parts), with a hub at each end of the id range (rows
	 * radix-sorted in both parts), repeats and self-loops; checked against
	 * every (row, neighbour) entry of the records sorted with qsort and
	 * made unique. */
	const uint32_t n = 50000, k = 200000;
	uint32_t *pairs = malloc(2 * (size_t)k * sizeof *pairs);
	uint64_t *ent = malloc(2 * (size_t)k * sizeof *ent);
	assert_non_null(pairs);
	assert_non_null(ent);
	struct rng r;
	rng_init(&r, 11);
	uint64_t ne = 0, loops = 0;
	for (uint32_t i = 0; i < k; i++) {
		uint32_t a = (uint32_t)rng_below(&r, n), b = (uint32_t)rng_below(&r, n);
		if (i % 7 == 0)
			a = i % 2 ? 0 : n - 1;         /* the hubs */
		if (i % 11 == 0)
			b = (uint32_t)rng_below(&r, 40); /* repeats */
		if (i % 101 == 0)
			b = a;                           /* self-loops */
		pairs[2 * i] = a;
		pairs[2 * i + 1] = b;
		if (a == b) {
			loops++;
			continue;
		}
		ent[ne++] = (uint64_t)a << 32 | b;
		ent[ne++] = (uint64_t)b << 32 | a;
	}
	qsort(ent, ne, sizeof *ent, cmp_u64);
	uint64_t uniq = 0;
	for (uint64_t i = 0; i < ne; i++)
		if (uniq == 0 || ent[uniq - 1] != ent[i])
			ent[uniq++] = ent[i];
	struct graph *g = graph_from_pairs(n, pairs, k, NULL);
	assert_non_null(g);
	assert_graph_sane(g);
	assert_int_equal(g->m, uniq / 2);
	assert_int_equal(g->report.self_loops, loops);
	assert_int_equal(g->report.duplicates, (ne - uniq) / 2);
	uint64_t j = 0;
	for (uint32_t u = 0; u < n; u++) {
		for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++, j++) {
			assert_true(j < uniq);
			assert_int_equal(ent[j] >> 32, u);
			assert_int_equal(ent[j] & 0xffffffffu, g->adj[i]);
		}
	}
	assert_int_equal(j, uniq);
	graph_free(g);
	free(pairs);
	free(ent);
}

static void test_from_pairs_cleans_like_loading(void **state)
{
	(void)state;
	/* 0-1, 1-0, 2-2, 1-2, 1-2: edges 0-1 and 1-2, 2 merged, 1 loop,
	 * node 3 isolated */
	const uint32_t pairs[] = { 0, 1, 1, 0, 2, 2, 1, 2, 1, 2 };
	struct graph *g = graph_from_pairs(4, pairs, 5, NULL);
	assert_non_null(g);
	assert_graph_sane(g);
	assert_int_equal(g->n, 4);
	assert_int_equal(g->m, 2);
	assert_int_equal(g->report.duplicates, 2);
	assert_int_equal(g->report.self_loops, 1);
	assert_int_equal(g->report.isolated, 1);
	assert_string_equal(graph_name(g, 3), "3");
	assert_int_equal(graph_find(g, "2"), 2);
	graph_free(g);

	const char *const names[] = { "x", "y", "z" };
	g = graph_from_pairs(3, (const uint32_t[]){ 2, 0 }, 1, names);
	assert_non_null(g);
	assert_graph_sane(g);
	assert_true(linked(g, "z", "x"));
	graph_free(g);

	g = graph_from_pairs(0, NULL, 0, NULL);
	assert_non_null(g);
	assert_graph_sane(g);
	graph_free(g);

	capture_start();
	/* an id out of range, and a repeated name, are refused */
	assert_null(graph_from_pairs(2, (const uint32_t[]){ 0, 2 }, 1, NULL));
	assert_null(graph_from_pairs(2, (const uint32_t[]){ 0, 1 }, 1,
				     (const char *const[]){ "same", "same" }));
	capture_stop();
	assert_int_equal(captured_count, 2);
	graph_free(NULL);
}

static void test_with_edges_keeps_the_nodes_and_names(void **state)
{
	(void)state;
	const char *const names[] = { "x", "y", "z", "w" };
	struct graph *g = graph_from_pairs(4, (const uint32_t[]){ 0, 1, 1, 2 }, 2, names);
	assert_non_null(g);
	/* 2-3 twice and a loop: cleaned as by graph_from_pairs() */
	struct graph *h = graph_with_edges(g, (const uint32_t[]){ 2, 3, 3, 2, 0, 0 }, 3);
	assert_non_null(h);
	assert_graph_sane(h);
	assert_int_equal(h->n, 4);
	assert_int_equal(h->m, 1);
	assert_int_equal(h->report.duplicates, 1);
	assert_int_equal(h->report.self_loops, 1);
	for (uint32_t u = 0; u < 4; u++)
		assert_string_equal(graph_name(h, u), names[u]);
	assert_true(linked(h, "z", "w"));
	assert_false(linked(h, "x", "y"));
	capture_start();
	assert_null(graph_with_edges(g, (const uint32_t[]){ 0, 4 }, 1)); /* id out of range */
	capture_stop();
	assert_int_equal(captured_count, 1);
	graph_free(h);
	graph_free(g);
}

static int cmp_u32(const void *a, const void *b)
{
	uint32_t x = *(const uint32_t *)a, y = *(const uint32_t *)b;
	return x < y ? -1 : x > y;
}

static void test_long_rows_are_sorted_and_deduplicated(void **state)
{
	(void)state;
	/* A hub with 20000 random records among 70000 nodes (so the radix sort
	 * runs on three bytes), checked against qsort + unique. */
	const uint32_t n = 70000, k = 20000;
	uint32_t *pairs = malloc(2 * (size_t)k * sizeof *pairs);
	uint32_t *ref = malloc((size_t)k * sizeof *ref);
	assert_non_null(pairs);
	assert_non_null(ref);
	struct rng r;
	rng_init(&r, 7);
	for (uint32_t i = 0; i < k; i++) {
		uint32_t v = 1 + (uint32_t)rng_below(&r, n - 1);
		if (i % 5 == 0)
			v = 1 + (uint32_t)rng_below(&r, 300); /* plenty of repeats */
		pairs[2 * i] = i % 2 ? 0 : v;
		pairs[2 * i + 1] = i % 2 ? v : 0;
		ref[i] = v;
	}
	qsort(ref, k, sizeof *ref, cmp_u32);
	uint32_t uniq = 0;
	for (uint32_t i = 0; i < k; i++)
		if (uniq == 0 || ref[uniq - 1] != ref[i])
			ref[uniq++] = ref[i];
	struct graph *g = graph_from_pairs(n, pairs, k, NULL);
	assert_non_null(g);
	assert_graph_sane(g);
	assert_int_equal(graph_degree(g, 0), uniq);
	assert_int_equal(g->report.duplicates, k - uniq);
	assert_memory_equal(g->adj + g->off[0], ref, uniq * sizeof *ref);
	graph_free(g);
	free(pairs);
	free(ref);
}

static void test_format_names_parse_both_ways(void **state)
{
	(void)state;
	enum graph_format f;
	const enum graph_format all[] = { GRAPH_FORMAT_AUTO, GRAPH_FORMAT_EDGES,
					  GRAPH_FORMAT_GML, GRAPH_FORMAT_GRAPHML,
					  GRAPH_FORMAT_PAJEK };
	for (size_t i = 0; i < sizeof all / sizeof all[0]; i++) {
		assert_int_equal(graph_format_parse(graph_format_name(all[i]), &f), 0);
		assert_int_equal(f, all[i]);
	}
	assert_string_equal(graph_format_name(GRAPH_FORMAT_PAJEK), "pajek");
	capture_start();
	assert_int_equal(graph_format_parse("csv\x1b", &f), -1);
	capture_stop();
	assert_false(raw_control_seen);
	assert_int_equal(captured_with("unknown graph format"), 1);
}

/* ---- mutation fuzz ------------------------------------------------------ */

struct seed_input {
	const char *name; /* file name: its extension picks the format */
	enum graph_format fmt;
	const char *text;
};

static const struct seed_input seeds[] = {
	{ "a.tsv", GRAPH_FORMAT_EDGES, "# c\na\tb\nb\tc c\t3\nc c\ta\n\nd\td\n" },
	{ "b.csv", GRAPH_FORMAT_EDGES, "x, y\r\ny,z\r\n%c\r\nz , x ,1\r\n" },
	{ "c.txt", GRAPH_FORMAT_EDGES, "1 2\n2 3\n3 1\n1 2\n4  5 6\n" },
	{ "d.gml", GRAPH_FORMAT_GML,
	  "graph [ directed 0\n node [ id 1 label \"a\" ]\n node [ id 2 label \"b\" ]\n"
	  " node [ id 3 ]\n edge [ source 1 target 2 ]\n edge [ source 2 target 2 ] ]\n" },
	{ "e.graphml", GRAPH_FORMAT_GRAPHML,
	  "<?xml version=\"1.0\"?>\n<graphml xmlns=\"http://graphml.graphdrawing.org/xmlns\">"
	  "<key id=\"k\" for=\"node\" attr.name=\"name\" attr.type=\"string\"/>"
	  "<graph edgedefault=\"directed\"><node id=\"n0\"><data key=\"k\">p</data></node>"
	  "<node id=\"n1\"/><node id=\"n2\"/><edge source=\"n0\" target=\"n1\"/>"
	  "<edge source=\"n1\" target=\"n2\"/></graph></graphml>\n" },
	{ "f.net", GRAPH_FORMAT_PAJEK,
	  "*Vertices 4\n1 \"a\"\n2 \"b\"\n*Edges\n1 2\n2 3\n*Arcs\n3 4\n4 4\n" },
};

static const char fuzz_bytes[] = "\t ,\n\r#%\"[]<>/*0123456789-=&;ab\x1b\xc3\xff";

static size_t mutate(struct rng *r, unsigned char *buf, size_t len, size_t cap)
{
	int rounds = 1 + (int)rng_below(r, 4);
	for (int k = 0; k < rounds; k++) {
		size_t at = len ? (size_t)rng_below(r, len) : 0;
		unsigned char c = rng_below(r, 4) == 0
					  ? (unsigned char)rng_below(r, 256)
					  : (unsigned char)fuzz_bytes[rng_below(r, sizeof fuzz_bytes - 1)];
		switch (rng_below(r, 6)) {
		case 0: /* replace a byte */
			if (len)
				buf[at] = c;
			break;
		case 1: /* insert a byte */
			if (len < cap) {
				memmove(buf + at + 1, buf + at, len - at);
				buf[at] = c;
				len++;
			}
			break;
		case 2: /* delete a run */
			if (len) {
				size_t run = 1 + (size_t)rng_below(r, 8);
				if (run > len - at)
					run = len - at;
				memmove(buf + at, buf + at + run, len - at - run);
				len -= run;
			}
			break;
		case 3: /* duplicate a run */
			if (len) {
				size_t run = 1 + (size_t)rng_below(r, 32);
				if (run > len - at)
					run = len - at;
				if (len + run <= cap) {
					memmove(buf + at + run, buf + at, len - at);
					len += run;
				}
			}
			break;
		case 4: /* truncate */
			len = at;
			break;
		default: /* flip a bit */
			if (len)
				buf[at] ^= (unsigned char)(1u << rng_below(r, 8));
			break;
		}
	}
	return len;
}

static void quiet_sink(int level, const char *msg)
{
	(void)level;
	for (const unsigned char *p = (const unsigned char *)msg; *p; p++)
		if (*p < 0x20 || *p == 0x7f)
			raw_control_seen = 1;
}

static void test_mutation_fuzz_loads_only_sane_graphs(void **state)
{
	(void)state;
	enum { ROUNDS = 3000, CAP = 4096 };
	unsigned char *buf = malloc(CAP);
	assert_non_null(buf);
	struct rng r;
	rng_init(&r, 20240601);
	int loaded = 0, refused = 0;
	raw_control_seen = 0;
	util_set_sink(quiet_sink);
	for (int i = 0; i < ROUNDS; i++) {
		const struct seed_input *s = &seeds[rng_below(&r, sizeof seeds / sizeof seeds[0])];
		size_t len = strlen(s->text);
		memcpy(buf, s->text, len);
		len = mutate(&r, buf, len, CAP);
		const char *p;
		char name[64];
		enum graph_format fmt = rng_below(&r, 4) == 0 ? GRAPH_FORMAT_AUTO : s->fmt;
		unsigned how = (unsigned)rng_below(&r, 8);
		if (how == 0) {
			/* compressed, then the compressed bytes mutated too */
			snprintf(name, sizeof name, "%s.gz", s->name);
			unsigned char z[CAP + 64];
			size_t zlen;
			p = write_gz(name, buf, len);
			FILE *f = fopen(p, "rb");
			assert_non_null(f);
			zlen = fread(z, 1, sizeof z, f);
			fclose(f);
			if (rng_below(&r, 2))
				zlen = mutate(&r, z, zlen, sizeof z);
			p = write_bytes(name, z, zlen);
		} else {
			p = write_bytes(s->name, buf, len);
		}
		struct graph *g = graph_load(p, fmt);
		if (g) {
			assert_graph_sane(g);
			assert_counts_add_up(g);
			assert_true(g->report.isolated <= g->n);
			loaded++;
			graph_free(g);
		} else {
			refused++;
		}
	}
	util_set_sink(NULL);
	free(buf);
	assert_false(raw_control_seen);
	/* the mutations are small: both outcomes must occur, or the fuzz
	 * exercises nothing */
	assert_true(loaded > ROUNDS / 10);
	assert_true(refused > ROUNDS / 20);
}

/* An optional argument runs only the tests whose names match it. */
int main(int argc, char **argv)
{
	if (argc > 1)
		cmocka_set_test_filter(argv[1]);
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_tab_separated_names_may_hold_spaces),
		cmocka_unit_test(test_space_separated_on_runs_of_spaces),
		cmocka_unit_test(test_comma_separated_with_spaces_trimmed),
		cmocka_unit_test(test_separator_is_chosen_per_line),
		cmocka_unit_test(test_comment_and_blank_lines_are_skipped),
		cmocka_unit_test(test_ids_follow_first_appearance),
		cmocka_unit_test(test_odd_names_are_kept_byte_for_byte),
		cmocka_unit_test(test_crlf_line_ends_are_stripped),
		cmocka_unit_test(test_last_line_without_newline_is_read),
		cmocka_unit_test(test_gz_file_is_decompressed),
		cmocka_unit_test(test_truncated_gz_is_an_error),
		cmocka_unit_test(test_dash_reads_standard_input),
		cmocka_unit_test(test_duplicates_and_reversed_duplicates_are_merged),
		cmocka_unit_test(test_self_loops_are_dropped_and_counted),
		cmocka_unit_test(test_third_column_is_ignored_with_one_notice),
		cmocka_unit_test(test_csv_header_line_is_skipped_with_a_notice),
		cmocka_unit_test(test_header_after_comments_quoted_or_after_a_bom_is_found),
		cmocka_unit_test(test_word_above_a_number_in_the_third_column_is_a_header),
		cmocka_unit_test(test_node_names_that_are_words_stay_edges),
		cmocka_unit_test(test_skip_lines_skips_any_lines_and_guesses_no_header),
		cmocka_unit_test(test_line_with_one_name_is_an_error_naming_file_and_line),
		cmocka_unit_test(test_names_in_messages_are_escaped),
		cmocka_unit_test(test_nul_byte_is_an_error_naming_the_line),
		cmocka_unit_test(test_missing_file_is_an_error),
		cmocka_unit_test(test_empty_file_is_a_graph_of_no_nodes),
		cmocka_unit_test(test_long_lines_work_up_to_the_limit),
		cmocka_unit_test(test_large_input_reads_alike_from_file_gz_and_pipe),
		cmocka_unit_test(test_two_part_build_matches_sorted_unique_entries),
		cmocka_unit_test(test_gz_cut_inside_a_large_file_is_an_error),
		cmocka_unit_test(test_gml_keeps_labels_and_isolated_nodes),
		cmocka_unit_test(test_graphml_keeps_names_and_isolated_nodes),
		cmocka_unit_test(test_pajek_keeps_labels_and_isolated_nodes),
		cmocka_unit_test(test_same_graph_in_three_formats_has_one_fingerprint),
		cmocka_unit_test(test_directed_gml_is_read_undirected_with_a_notice),
		cmocka_unit_test(test_directed_graphml_is_named_by_ids),
		cmocka_unit_test(test_directed_pajek_is_named_by_vertex_numbers),
		cmocka_unit_test(test_gml_with_repeated_labels_falls_back_to_ids),
		cmocka_unit_test(test_igraph_format_in_gz_and_by_argument),
		cmocka_unit_test(test_igraph_parse_error_is_reported_and_not_fatal),
		cmocka_unit_test(test_graphs_of_2_to_the_32_minus_1_nodes_are_refused),
		cmocka_unit_test(test_pajek_vertex_counts_far_beyond_the_file_are_refused),
		cmocka_unit_test(test_graphml_with_a_dtd_is_refused),
		cmocka_unit_test(test_open_datasets_have_their_published_sizes),
		cmocka_unit_test(test_karate_degrees_match_networkx),
		cmocka_unit_test(test_fingerprint_is_stable_and_sees_one_edge),
		cmocka_unit_test(test_find_and_has_edge),
		cmocka_unit_test(test_from_pairs_cleans_like_loading),
		cmocka_unit_test(test_with_edges_keeps_the_nodes_and_names),
		cmocka_unit_test(test_long_rows_are_sorted_and_deduplicated),
		cmocka_unit_test(test_format_names_parse_both_ways),
		cmocka_unit_test(test_mutation_fuzz_loads_only_sane_graphs),
	};
	return cmocka_run_group_tests(tests, setup, teardown);
}
