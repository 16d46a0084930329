/*
 * test_result: the result folder and the checkpoint.
 *
 * Every file is written from a snapshot built by hand below (a 7-node
 * graph, 3 communities, figures worked out on paper in fixture_init()),
 * then read back by a parser in this file that follows the formats as
 * documented at the top of src/result.c. The checkpoint layout is checked
 * the same way: this file walks the documented sections itself and
 * recomputes the checksum with its own FNV-1a, so a crafted file differs
 * from a good one in exactly the field under test.
 */
#include "helpers.h"

#include <dirent.h>
#include <errno.h>
#include <fcntl.h>
#include <inttypes.h>
#include <math.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/resource.h>
#include <sys/stat.h>
#include <unistd.h>

#include <jansson.h>

#include "coterie/background.h"
#include "coterie/agm.h"
#include "coterie/checkpoint.h"
#include "coterie/fit.h"
#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/refine.h"
#include "coterie/result.h"
#include "coterie/savepoint.h"
#include "coterie/select.h"
#include "coterie/util.h"

/* ------------------------------------------------------------------ */
/* Messages: captured so that refusals can be checked and stay quiet. */

static char last_msg[2048];
static int nmsg;

static void capture(int level, const char *msg)
{
	(void)level;
	snprintf(last_msg, sizeof last_msg, "%s", msg);
	nmsg++;
}

static void quiet_on(void)
{
	last_msg[0] = '\0';
	nmsg = 0;
	util_set_sink(capture);
}

static void quiet_off(void)
{
	util_set_sink(NULL);
}

/* ------------------------------------------------------------------ */
/* The fixture: a graph, parameters and a snapshot, all by hand. */

#define N 7
#define K 3

static const char *const node_names[N] = {
	"alice", "bob", "tab\there", "new\nline", "back\\slash", "cr\rname", "eve",
};
/* As memberships.tsv must write them (C escapes, C11 6.4.4.4). */
static const char *const escaped_names[N] = {
	"alice", "bob", "tab\\there", "new\\nline", "back\\\\slash", "cr\\rname", "eve",
};
static const uint32_t pairs[] = { 0, 1, 0, 2, 1, 2, 2, 3, 3, 4, 3, 5, 4, 5, 5, 6 };
#define NPAIRS 8

struct fixture {
	struct graph *g;
	struct fit_params p;
	struct snapshot s;
	struct result_meta meta;
	struct trace_point trace[5];
	uint64_t foff[N + 1];
	struct fentry fe[10];
	double colsum[K];
	uint64_t coff[K + 1];
	uint32_t cmem[9];
	double cstrength[9];
	char *labels[K];
	struct agm_community comms[K];
};

static struct fixture fx;

/* The writers take a struct result_model; the fixture is kept as the
 * snapshot a fit would publish, and pointed to (valid until the next call). */
static const struct result_model *model_of(const struct snapshot *s)
{
	static struct result_model m;
	result_model_of(&m, s);
	return &m;
}

static void fixture_init(void)
{
	memset(&fx, 0, sizeof fx);
	fx.g = graph_from_pairs(N, pairs, NPAIRS, node_names);
	assert_non_null(fx.g);
	assert_graph_sane(fx.g);

	fx.p.k = K;
	fx.p.threads = 2;
	fx.p.seed = 12345678901ULL;
	fx.p.tol = 1e-4;
	fx.p.patience = 3;
	fx.p.max_sweeps = 500;
	fx.p.epsilon = 0; /* "use the default" */
	fx.p.past_plateau = 0;
	fx.p.starts = 3;
	fx.p.no_reseed = 1;

	/* Strengths, row by row (community, value). */
	static const struct fentry fe[10] = {
		{ 0, 1.5 },              /* alice */
		{ 0, 1.2 },              /* bob */
		{ 0, 0.9 }, { 1, 0.4 },  /* tab\there */
		{ 1, 1.1 },              /* new\nline */
		{ 1, 0.8 }, { 2, 0.01 }, /* back\\slash: 0.01 is below delta */
		{ 1, 1.3 }, { 2, 0.3 },  /* cr\rname */
		{ 2, 0.7 },              /* eve */
	};
	static const uint64_t foff[N + 1] = { 0, 1, 2, 4, 5, 7, 9, 10 };
	memcpy(fx.fe, fe, sizeof fe);
	memcpy(fx.foff, foff, sizeof foff);
	fx.colsum[0] = 1.5 + 1.2 + 0.9;
	fx.colsum[1] = 0.4 + 1.1 + 0.8 + 1.3;
	fx.colsum[2] = 0.01 + 0.3 + 0.7;
	fx.s.F = (struct fcsr){ N, K, fx.foff, fx.fe, fx.colsum, NULL };
	assert_fcsr_sane(&fx.s.F);

	/* Trace: sweep 0 is the seeded model. -50/3 needs all 17 digits. */
	fx.trace[0] = (struct trace_point){ 0, 0.0, -30.5 };
	fx.trace[1] = (struct trace_point){ 1, 0.25, -20.25 };
	fx.trace[2] = (struct trace_point){ 2, 0.5, -17.125 };
	fx.trace[3] = (struct trace_point){ 3, 0.75, -50.0 / 3.0 + 0.1 };
	fx.trace[4] = (struct trace_point){ 4, 1.0009, -50.0 / 3.0 };

	fx.s.sweep = 4;
	fx.s.state = FIT_LEVELLED;
	fx.s.plateau = 1;
	fx.s.plateau_sweep = 3;
	fx.s.seconds = 1.25;
	fx.s.sweeps_per_sec = 4.0;
	fx.s.epsilon = 0.05;
	fx.s.delta = sqrt(-log(1 - 0.05)); /* DESIGN.md: delta = sqrt(-ln(1 - eps)) = 0.2265 */
	fx.s.ntrace = 5;
	fx.s.trace = fx.trace;

	/*
	 * Memberships F >= delta = 0.2265, largest community first:
	 *   column 1: {2, 3, 4, 5}; column 0: {0, 1, 2}; column 2: {5, 6}
	 * (node 4's 0.01 in column 2 is below delta). Degrees: 2 2 3 3 2 3 1, 2m = 16.
	 *   col 1: internal 2-3 3-4 3-5 4-5 = 4, volume 3+3+2+3 = 11, cut 0-2 1-2 5-6 = 3,
	 *          density 4/6, conductance 3 / min(11, 5) = 0.6
	 *   col 0: internal 0-1 0-2 1-2 = 3, volume 2+2+3 = 7, cut 2-3 = 1,
	 *          density 3/3 = 1, conductance 1 / min(7, 9) = 1/7
	 *   col 2: internal 5-6 = 1, volume 3+1 = 4, cut 3-5 4-5 = 2,
	 *          density 1, conductance 2 / min(4, 12) = 0.5
	 * Nodes 2 and 5 are in two communities; all 7 are covered.
	 * The p values are arbitrary inputs (the writer only copies them).
	 */
	static const uint64_t coff[K + 1] = { 0, 4, 7, 9 };
	static const uint32_t cmem[9] = { 2, 3, 4, 5, 0, 1, 2, 5, 6 };
	static const double cstr[9] = { 0.4, 1.1, 0.8, 1.3, 1.5, 1.2, 0.9, 0.3, 0.7 };
	memcpy(fx.coff, coff, sizeof coff);
	memcpy(fx.cmem, cmem, sizeof cmem);
	memcpy(fx.cstrength, cstr, sizeof cstr);
	fx.labels[0] = (char *)"1";
	fx.labels[1] = (char *)"0";
	fx.labels[2] = (char *)"2";
	fx.comms[0] = (struct agm_community){ 1, 4, 4, 11, 3, 4.0 / 6.0, 0.6, 0.61803398875 };
	fx.comms[1] = (struct agm_community){ 0, 3, 3, 7, 1, 1.0, 1.0 / 7.0, 0.987654321012 };
	fx.comms[2] = (struct agm_community){ 2, 2, 1, 4, 2, 1.0, 0.5, 0.25 };
	fx.s.agm.n = N;
	fx.s.agm.epsilon = 0.05;
	fx.s.agm.cover = (struct cover){ N, K, fx.coff, fx.cmem, fx.labels, 0 };
	fx.s.agm.strength = fx.cstrength;
	fx.s.agm.comms = fx.comms;
	fx.s.agm.loglik = -17.5;
	fx.s.agm.covered = 7;
	fx.s.agm.overlapping = 2;

	fx.meta.command_line = "coterie fit edges.tsv -k 3 -j 2";
	fx.meta.graph_path = "edges.tsv";
	fx.meta.wall_seconds = 2.5;
	fx.meta.peak_rss_kb = 0; /* unknown */
	fx.meta.status = "levelled";
}

static int setup(void **state)
{
	(void)state;
	fixture_init();
	return 0;
}

static int teardown(void **state)
{
	(void)state;
	graph_free(fx.g);
	fx.g = NULL;
	return 0;
}

/* ------------------------------------------------------------------ */
/* Files */

static char *path_in(const char *dir, const char *name)
{
	static char buf[4][4096];
	static int i;
	i = (i + 1) % 4;
	snprintf(buf[i], sizeof buf[i], "%s/%s", dir, name);
	return buf[i];
}

static unsigned char *slurp(const char *path, size_t *size)
{
	FILE *f = fopen(path, "rb");
	if (!f)
		fail_msg("cannot open %s: %s", path, strerror(errno));
	assert_int_equal(fseek(f, 0, SEEK_END), 0);
	long len = ftell(f);
	assert_true(len >= 0);
	rewind(f);
	unsigned char *buf = malloc((size_t)len + 1);
	assert_non_null(buf);
	assert_int_equal(fread(buf, 1, (size_t)len, f), (size_t)len);
	fclose(f);
	buf[len] = '\0';
	*size = (size_t)len;
	return buf;
}

static void spill(const char *path, const unsigned char *buf, size_t size)
{
	FILE *f = fopen(path, "wb");
	assert_non_null(f);
	assert_int_equal(fwrite(buf, 1, size, f), size);
	assert_int_equal(fclose(f), 0);
}

static int cmp_str(const void *a, const void *b)
{
	return strcmp(a, b);
}

/* Names in dir, sorted, joined by spaces (hidden ones included). */
static void list_dir(const char *dir, char *out, size_t cap)
{
	DIR *d = opendir(dir);
	assert_non_null(d);
	char names[32][256];
	int n = 0;
	struct dirent *e;
	while ((e = readdir(d))) {
		if (!strcmp(e->d_name, ".") || !strcmp(e->d_name, ".."))
			continue;
		assert_true(n < 32);
		snprintf(names[n++], sizeof names[0], "%s", e->d_name);
	}
	closedir(d);
	qsort(names, (size_t)n, sizeof names[0], cmp_str);
	out[0] = '\0';
	for (int i = 0; i < n; i++) {
		if (i)
			strncat(out, " ", cap - strlen(out) - 1);
		strncat(out, names[i], cap - strlen(out) - 1);
	}
}

/* A TSV file as rows of fields; the text is modified in place. */
struct table {
	char *text;
	int nrows;
	int nfields[64];
	char *field[64][16];
};

static void table_load(struct table *t, const char *path)
{
	size_t size;
	memset(t, 0, sizeof *t);
	t->text = (char *)slurp(path, &size);
	assert_true(size > 0 && t->text[size - 1] == '\n'); /* every line ends in LF */
	char *line = t->text;
	while (*line) {
		char *nl = strchr(line, '\n');
		assert_non_null(nl);
		*nl = '\0';
		assert_true(t->nrows < 64);
		int nf = 0;
		char *f = line;
		for (;;) {
			char *tab = strchr(f, '\t');
			assert_true(nf < 16);
			t->field[t->nrows][nf++] = f;
			if (!tab)
				break;
			*tab = '\0';
			f = tab + 1;
		}
		t->nfields[t->nrows++] = nf;
		line = nl + 1;
	}
}

/* Undo the four escapes documented for memberships.tsv. */
static void unescape(const char *s, char *out)
{
	while (*s) {
		if (*s == '\\') {
			s++;
			switch (*s) {
			case 't': *out++ = '\t'; break;
			case 'n': *out++ = '\n'; break;
			case 'r': *out++ = '\r'; break;
			case '\\': *out++ = '\\'; break;
			default: fail_msg("unknown escape \\%c", *s);
			}
			s++;
		} else {
			*out++ = *s++;
		}
	}
	*out = '\0';
}

static double num(const char *s)
{
	char *end;
	double x = strtod(s, &end);
	assert_true(end != s && *end == '\0');
	return x;
}

/* %.6g keeps 6 significant digits: the relative error is at most 5e-6
 * (C11 7.21.6.1: rounding to the given number of significant digits). */
static void assert_6g(const char *field, double want)
{
	double got = num(field);
	assert_true(fabs(got - want) <= 5e-6 * fabs(want));
}

static const char *write_folder(void)
{
	const char *tmp = test_tmpdir();
	static char dir[4200];
	snprintf(dir, sizeof dir, "%s/out/run1", tmp);
	assert_int_equal(result_prepare_dir(dir), 0);
	assert_int_equal(result_write(dir, fx.g, &fx.p, model_of(&fx.s), &fx.meta), 0);
	return dir;
}

static void remove_folder(const char *dir)
{
	char top[4200];
	snprintf(top, sizeof top, "%s", dir);
	char *cut = strstr(top, "/out/run1");
	assert_non_null(cut);
	*cut = '\0';
	test_rmtree(top);
}

/* ------------------------------------------------------------------ */
/* The folder */

static void test_folder_holds_five_files_and_no_temporaries(void **state)
{
	(void)state;
	const char *dir = write_folder();
	char names[2048];
	list_dir(dir, names, sizeof names);
	/* the five files of result.h and the manifest of result_commit.h; no
	 * ".NAME.tmp-PID", no staged file and no probe left */
	assert_string_equal(names, ".coterie.manifest checkpoint.cot communities.tsv memberships.tsv "
			    "run.json trace.tsv");
	/* writing again over the same folder replaces the files, still no leftovers */
	assert_int_equal(result_write(dir, fx.g, &fx.p, model_of(&fx.s), &fx.meta), 0);
	list_dir(dir, names, sizeof names);
	assert_string_equal(names, ".coterie.manifest checkpoint.cot communities.tsv memberships.tsv "
			    "run.json trace.tsv");
	remove_folder(dir);
}

static void test_memberships_grouped_largest_first_by_decreasing_strength(void **state)
{
	(void)state;
	const char *dir = write_folder();
	struct table t;
	table_load(&t, path_in(dir, "memberships.tsv"));
	/* header as documented */
	assert_int_equal(t.nfields[0], 3);
	assert_string_equal(t.field[0][0], "node");
	assert_string_equal(t.field[0][1], "community");
	assert_string_equal(t.field[0][2], "strength");
	/* fixture_init(): column 1 (4 members) by 1.3 1.1 0.8 0.4, then column 0
	 * by 1.5 1.2 0.9, then column 2 by 0.7 0.3; node 4's 0.01 < delta is absent */
	static const struct {
		uint32_t node;
		const char *comm;
		double strength;
	} want[9] = {
		{ 5, "1", 1.3 }, { 3, "1", 1.1 }, { 4, "1", 0.8 }, { 2, "1", 0.4 },
		{ 0, "0", 1.5 }, { 1, "0", 1.2 }, { 2, "0", 0.9 },
		{ 6, "2", 0.7 }, { 5, "2", 0.3 },
	};
	assert_int_equal(t.nrows, 10);
	for (int i = 0; i < 9; i++) {
		char name[64];
		assert_int_equal(t.nfields[i + 1], 3); /* a TAB in a name must not split the row */
		assert_string_equal(t.field[i + 1][0], escaped_names[want[i].node]);
		unescape(t.field[i + 1][0], name);
		assert_string_equal(name, node_names[want[i].node]);
		assert_string_equal(t.field[i + 1][1], want[i].comm);
		assert_6g(t.field[i + 1][2], want[i].strength);
	}
	free(t.text);
	remove_folder(dir);
}

static void test_communities_tsv_lists_figures_largest_first(void **state)
{
	(void)state;
	const char *dir = write_folder();
	struct table t;
	table_load(&t, path_in(dir, "communities.tsv"));
	static const char *const head[9] = { "community", "size", "internal_edges", "density",
					     "conductance", "p", "volume", "cut", "stability" };
	assert_int_equal(t.nrows, 4);
	assert_int_equal(t.nfields[0], 9);
	for (int j = 0; j < 9; j++)
		assert_string_equal(t.field[0][j], head[j]);
	/* the figures worked out by hand in fixture_init() */
	static const struct {
		const char *id, *size, *internal;
		double density, conductance, p;
		const char *volume, *cut;
	} want[3] = {
		{ "1", "4", "4", 4.0 / 6.0, 0.6, 0.61803398875, "11", "3" },
		{ "0", "3", "3", 1.0, 1.0 / 7.0, 0.987654321012, "7", "1" },
		{ "2", "2", "1", 1.0, 0.5, 0.25, "4", "2" },
	};
	for (int i = 0; i < 3; i++) {
		char **f = t.field[i + 1];
		assert_int_equal(t.nfields[i + 1], 9);
		assert_string_equal(f[0], want[i].id);
		assert_string_equal(f[1], want[i].size);
		assert_string_equal(f[2], want[i].internal);
		assert_6g(f[3], want[i].density);
		assert_6g(f[4], want[i].conductance);
		/* p with %.9g: relative error at most 5e-9 */
		assert_true(fabs(num(f[5]) - want[i].p) <= 5e-9 * want[i].p);
		assert_string_equal(f[6], want[i].volume);
		assert_string_equal(f[7], want[i].cut);
		assert_string_equal(f[8], "NA"); /* no fit --repeats: not computed */
	}
	free(t.text);
	remove_folder(dir);
}

static void test_trace_tsv_round_trips_the_loglik_exactly(void **state)
{
	(void)state;
	const char *dir = write_folder();
	struct table t;
	table_load(&t, path_in(dir, "trace.tsv"));
	assert_int_equal(t.nrows, 6);
	assert_int_equal(t.nfields[0], 3);
	assert_string_equal(t.field[0][0], "sweep");
	assert_string_equal(t.field[0][1], "seconds");
	assert_string_equal(t.field[0][2], "loglik");
	for (int i = 0; i < 5; i++) {
		char **f = t.field[i + 1];
		char want[32];
		assert_int_equal(t.nfields[i + 1], 3);
		snprintf(want, sizeof want, "%d", i);
		assert_string_equal(f[0], want);
		/* seconds to the millisecond: 1.0009 prints as 1.001 */
		assert_true(fabs(num(f[1]) - fx.trace[i].seconds) <= 5e-4);
		/* 17 significant digits identify every double (C11 5.2.4.2.2,
		 * DBL_DECIMAL_DIG), so strtod gives back the same bits */
		double back = num(f[2]);
		assert_memory_equal(&back, &fx.trace[i].loglik, sizeof back);
	}
	assert_string_equal(t.field[5][1], "1.001");
	free(t.text);
	remove_folder(dir);
}

static json_t *get(json_t *o, const char *a, const char *b)
{
	json_t *x = json_object_get(o, a);
	assert_non_null(x);
	if (b) {
		x = json_object_get(x, b);
		if (!x)
			fail_msg("run.json has no %s.%s", a, b);
	}
	return x;
}

static void assert_keys(json_t *o, const char *const *keys, size_t n)
{
	assert_true(json_is_object(o));
	assert_int_equal(json_object_size(o), n);
	size_t i = 0;
	const char *key;
	json_t *v;
	json_object_foreach(o, key, v) {
		(void)v;
		assert_string_equal(key, keys[i]);
		i++;
	}
}

static void test_run_json_has_every_key_in_order_with_values(void **state)
{
	(void)state;
	const char *dir = write_folder();
	json_error_t jerr;
	/* parsed with jansson 2.14 (libjansson-dev), which keeps key order */
	json_t *root = json_load_file(path_in(dir, "run.json"), 0, &jerr);
	if (!root)
		fail_msg("run.json: %s at line %d", jerr.text, jerr.line);

	static const char *const top[] = { "coterie", "command", "graph", "parameters", "fit",
					   "k_selection", "background", "link_check", "agm_refine",
					   "stability", "warnings", "run" };
	static const char *const graph[] = { "path", "format", "nodes", "edges", "fingerprint",
					     "lines", "self_loops", "duplicates", "extra_columns",
					     "isolated", "directed_input" };
	static const char *const params[] = { "model", "k", "threads", "seed", "tol", "patience",
					      "max_sweeps", "epsilon", "delta", "min_links", "past_plateau",
					      "starts", "reseed", "seeding", "k_chosen_by" };
	static const char *const fit[] = { "status", "state", "sweeps", "plateau_sweep",
					   "seconds", "loglik", "agm_loglik", "communities",
					   "covered_nodes", "overlapping_nodes",
					   "communities_ended_sooner", "communities_left_out",
					   "start_kept", "reseeds_kept",
					   "seeds", "starts_judged", "memberships_from" };
	static const char *const run[] = { "wall_seconds", "peak_rss_kb" };
	assert_keys(root, top, 12);
	/* k was given, no background choice recorded and no link check was
	 * asked: all three null */
	assert_true(json_is_null(get(root, "k_selection", NULL)));
	assert_true(json_is_null(get(root, "background", NULL)));
	assert_true(json_is_null(get(root, "link_check", NULL)));
	assert_keys(get(root, "graph", NULL), graph, 11);
	assert_keys(get(root, "parameters", NULL), params, 15);
	assert_keys(get(root, "fit", NULL), fit, 17);
	assert_keys(get(root, "run", NULL), run, 2);

	assert_int_equal(json_integer_value(get(root, "coterie", "format")), 1);
	assert_string_equal(json_string_value(get(root, "command", NULL)), fx.meta.command_line);
	assert_string_equal(json_string_value(get(root, "graph", "path")), "edges.tsv");
	assert_string_equal(json_string_value(get(root, "graph", "format")), "edges");
	assert_int_equal(json_integer_value(get(root, "graph", "nodes")), N);
	assert_int_equal(json_integer_value(get(root, "graph", "edges")), NPAIRS);
	char hex[17];
	snprintf(hex, sizeof hex, "%016" PRIx64, graph_fingerprint(fx.g));
	assert_string_equal(json_string_value(get(root, "graph", "fingerprint")), hex);
	assert_true(json_is_false(get(root, "graph", "directed_input")));
	assert_int_equal(json_integer_value(get(root, "graph", "self_loops")), 0);

	assert_int_equal(json_integer_value(get(root, "parameters", "k")), K);
	assert_int_equal(json_integer_value(get(root, "parameters", "threads")), 2);
	assert_int_equal(json_integer_value(get(root, "parameters", "seed")), 12345678901LL);
	assert_true(json_real_value(get(root, "parameters", "tol")) == 1e-4);
	assert_int_equal(json_integer_value(get(root, "parameters", "patience")), 3);
	assert_int_equal(json_integer_value(get(root, "parameters", "max_sweeps")), 500);
	/* the background actually used, not the 0 meaning "default" */
	assert_true(json_real_value(get(root, "parameters", "epsilon")) == 0.05);
	assert_true(json_real_value(get(root, "parameters", "delta")) == fx.s.delta);
	assert_true(json_real_value(get(root, "parameters", "min_links")) == AGM_MIN_LINKS);
	assert_true(json_is_false(get(root, "parameters", "past_plateau")));
	assert_string_equal(json_string_value(get(root, "parameters", "seeding")), "clusters");
	/* the fixture's snapshot seeded nothing in this process */
	assert_true(json_is_null(get(root, "fit", "seeds")));

	assert_string_equal(json_string_value(get(root, "fit", "status")), "levelled");
	assert_string_equal(json_string_value(get(root, "fit", "state")), "levelled");
	assert_int_equal(json_integer_value(get(root, "fit", "sweeps")), 4);
	assert_int_equal(json_integer_value(get(root, "fit", "plateau_sweep")), 3);
	assert_true(json_real_value(get(root, "fit", "seconds")) == 1.25);
	assert_true(json_real_value(get(root, "fit", "loglik")) == -50.0 / 3.0);
	assert_true(json_real_value(get(root, "fit", "agm_loglik")) == -17.5);
	assert_int_equal(json_integer_value(get(root, "fit", "communities")), 3);
	assert_int_equal(json_integer_value(get(root, "fit", "covered_nodes")), 7);
	assert_int_equal(json_integer_value(get(root, "fit", "overlapping_nodes")), 2);
	assert_string_equal(json_string_value(get(root, "fit", "memberships_from")), "strengths");
	assert_true(json_is_null(get(root, "agm_refine", NULL))); /* --refine not asked */
	assert_true(json_is_null(get(root, "stability", NULL))); /* --repeats not asked */

	assert_true(json_real_value(get(root, "run", "wall_seconds")) == 2.5);
	assert_true(json_is_null(get(root, "run", "peak_rss_kb"))); /* 0 means unknown */
	json_decref(root);
	remove_folder(dir);
}

/* fit.seeds copies the last start's seed report (coterie-files(5)). */
static void test_run_json_records_how_the_last_start_began(void **state)
{
	(void)state;
	struct snapshot s = fx.s;
	s.starts = 3;
	s.seeds = (struct seed_report){ .local_minima = 9, .used_minima = 1, .cover = 0,
					.random = 1, .clusters = 7, .used_clusters = 1, .passes = 4,
					.joins = 2 };
	const char *tmp = test_tmpdir();
	char dir[4200];
	snprintf(dir, sizeof dir, "%s/out", tmp);
	assert_int_equal(result_write(dir, fx.g, &fx.p, model_of(&s), &fx.meta), 0);
	json_error_t jerr;
	json_t *root = json_load_file(path_in(dir, "run.json"), 0, &jerr);
	assert_non_null(root);
	json_t *js = get(root, "fit", "seeds");
	static const char *const keys[] = { "start",	     "propagation_passes",
					    "clusters_found", "pieces_joined",
					    "from_clusters", "from_ego_nets" };
	assert_keys(js, keys, 6);
	assert_int_equal(json_integer_value(json_object_get(js, "start")), 3);
	assert_int_equal(json_integer_value(json_object_get(js, "propagation_passes")), 4);
	assert_int_equal(json_integer_value(json_object_get(js, "clusters_found")), 7);
	assert_int_equal(json_integer_value(json_object_get(js, "pieces_joined")), 2);
	assert_int_equal(json_integer_value(json_object_get(js, "from_clusters")), 1);
	assert_int_equal(json_integer_value(json_object_get(js, "from_ego_nets")), 2);
	json_decref(root);
	test_rmtree(tmp);
}

static void test_run_json_records_the_agm_refinement(void **state)
{
	(void)state;
	struct result_meta meta = fx.meta;
	struct refine_report rep = { .loglik_before = -20.5, .loglik_after = -17.5, .added = 3,
				     .removed = 1, .rounds = 2, .converged = 1, .seconds = 0.25 };
	meta.refine = &rep;
	meta.refine_rounds = 7;
	const char *tmp = test_tmpdir();
	assert_int_equal(result_write(tmp, fx.g, &fx.p, model_of(&fx.s), &meta), 0);
	json_error_t jerr;
	json_t *root = json_load_file(path_in(tmp, "run.json"), 0, &jerr);
	assert_non_null(root);
	static const char *const keys[] = { "max_rounds", "done", "loglik_before", "loglik_after",
					    "moves_added", "moves_removed", "rounds", "converged",
					    "seconds" };
	assert_keys(get(root, "agm_refine", NULL), keys, 9);
	assert_int_equal(json_integer_value(get(root, "agm_refine", "max_rounds")), 7);
	assert_true(json_is_true(get(root, "agm_refine", "done")));
	assert_true(json_real_value(get(root, "agm_refine", "loglik_before")) == -20.5);
	assert_true(json_real_value(get(root, "agm_refine", "loglik_after")) == -17.5);
	assert_int_equal(json_integer_value(get(root, "agm_refine", "moves_added")), 3);
	assert_int_equal(json_integer_value(get(root, "agm_refine", "moves_removed")), 1);
	assert_int_equal(json_integer_value(get(root, "agm_refine", "rounds")), 2);
	assert_true(json_is_true(get(root, "agm_refine", "converged")));
	assert_string_equal(json_string_value(get(root, "fit", "memberships_from")),
			    "agm refinement");
	json_decref(root);

	/* asked but not done (interrupted first): the figures are null */
	meta.refine = NULL;
	assert_int_equal(result_write(tmp, fx.g, &fx.p, model_of(&fx.s), &meta), 0);
	root = json_load_file(path_in(tmp, "run.json"), 0, &jerr);
	assert_non_null(root);
	assert_true(json_is_false(get(root, "agm_refine", "done")));
	assert_true(json_is_null(get(root, "agm_refine", "loglik_after")));
	assert_string_equal(json_string_value(get(root, "fit", "memberships_from")), "strengths");
	json_decref(root);
	test_rmtree(tmp);
}

static void test_run_json_writes_big_seed_as_string_and_infinity_as_null(void **state)
{
	(void)state;
	struct fit_params p = fx.p;
	struct snapshot s = fx.s;
	struct result_meta meta = fx.meta;
	p.seed = UINT64_MAX;
	s.agm.loglik = -INFINITY;
	s.plateau_sweep = 0;
	meta.peak_rss_kb = 2048;
	meta.command_line = "bad \xff utf-8";
	const char *tmp = test_tmpdir();
	assert_int_equal(result_write(tmp, fx.g, &p, model_of(&s), &meta), 0);
	json_error_t jerr;
	json_t *root = json_load_file(path_in(tmp, "run.json"), 0, &jerr);
	assert_non_null(root);
	/* 2^64 - 1 = 18446744073709551615 does not fit JSON's usual int64 */
	assert_string_equal(json_string_value(get(root, "parameters", "seed")),
			    "18446744073709551615");
	assert_true(json_is_null(get(root, "fit", "agm_loglik")));   /* JSON has no infinity (RFC 8259 s. 6) */
	assert_true(json_is_null(get(root, "fit", "plateau_sweep"))); /* not yet fired */
	assert_int_equal(json_integer_value(get(root, "run", "peak_rss_kb")), 2048);
	/* invalid UTF-8 cannot be a JSON string (RFC 8259 s. 8.1): escaped */
	assert_string_equal(json_string_value(get(root, "command", NULL)), "bad \\xff utf-8");
	json_decref(root);
	test_rmtree(tmp);
}

static void test_k_selection_and_link_check_are_recorded(void **state)
{
	(void)state;
	/* a made-up search of three k (values chosen here, not computed) */
	struct select_point pts[3] = {
		{ 2, -120.5, 0.625, 10, 0.25, 0.0, 1, 0, 1, "grid", 0 },
		{ 4, -100.25, 0.75, 20, 0.5, 0.0, 1, 0, 3, "refine between 2 and 8", 8 },
		{ 8, -110.0, NAN, 30, 1.0, 0.0, 1, 0, 2, "grid", 0 },
	};
	struct select_result sel;
	memset(&sel, 0, sizeof sel);
	sel.best = 4;
	sel.ngrid = 4;
	sel.grid[0] = 2;
	sel.grid[1] = 4;
	sel.grid[2] = 8;
	sel.grid[3] = 16;
	sel.pts = pts;
	sel.npts = 3;
	sel.share = 0.1;
	sel.held_edges = 7;
	sel.held_non_edges = 7;
	struct result_links links = { 0.2, 14, 13, -30.5, 0.875 };
	/* a made-up search of two trials (values chosen here) */
	struct background_choice bg = {
		.rule = BACKGROUND_CODE, .density = 0.25, .epsilon = 0.175, .linked = 8,
		.ncand = 2,
		.cand = { { 1.0, 0.25, 3, -50.5, -60.25, 12, 0.5, 0.125, 70.5 },
			  { 0.7, 0.175, 8, -48.0, -61.0, 15, 0.75, 0.0625, NAN } },
	};
	struct result_meta meta = fx.meta;
	meta.k_auto = 1;
	meta.selection = &sel;
	meta.links = &links;
	meta.background = &bg;
	const char *tmp = test_tmpdir();
	assert_int_equal(result_write_selection(tmp, &sel), 0);
	assert_int_equal(result_write(tmp, fx.g, &fx.p, model_of(&fx.s), &meta), 0);

	struct table t;
	table_load(&t, path_in(tmp, "k-selection.tsv"));
	assert_int_equal(t.nrows, 4);
	static const char *const head[] = { "k", "heldout_loglik", "heldout_auc", "sweeps",
					    "seconds", "chosen", "folds", "heldout_loglik_sd",
					    "grid", "order", "reason", "warm_from" };
	assert_int_equal(t.nfields[0], 12);
	for (int i = 0; i < 12; i++)
		assert_string_equal(t.field[0][i], head[i]);
	assert_string_equal(t.field[2][10], "refine between 2 and 8");
	assert_string_equal(t.field[2][11], "8");
	assert_string_equal(t.field[3][9], "2");
	assert_string_equal(t.field[1][0], "2");
	assert_true(num(t.field[1][1]) == -120.5);
	assert_string_equal(t.field[1][2], "0.625000000"); /* %.9f */
	assert_string_equal(t.field[1][5], "no");
	assert_string_equal(t.field[2][5], "yes");
	assert_string_equal(t.field[3][2], "NA"); /* an undefined AUC */
	assert_string_equal(t.field[3][4], "1.000");
	free(t.text);

	json_error_t jerr;
	json_t *root = json_load_file(path_in(tmp, "run.json"), 0, &jerr);
	assert_non_null(root);
	assert_string_equal(json_string_value(get(root, "parameters", "k_chosen_by")),
			    "held-out likelihood");
	json_t *ks = get(root, "k_selection", NULL);
	static const char *const kkeys[] = { "criterion", "chosen", "grid", "held_out_share",
					     "held_out_edges", "held_out_non_edges", "folds", "rule",
					     "highest_mean_k", "standard_error",
					     "extended", "extension_bound", "chosen_at_edge",
					     "search", "start", "scores" };
	assert_keys(ks, kkeys, 16);
	assert_int_equal(json_integer_value(get(root, "k_selection", "chosen")), 4);
	json_t *grid = get(root, "k_selection", "grid");
	assert_int_equal(json_array_size(grid), 4);
	assert_int_equal(json_integer_value(json_array_get(grid, 3)), 16);
	json_t *scores = get(root, "k_selection", "scores");
	assert_int_equal(json_array_size(scores), 3);
	static const char *const skeys[] = { "k", "heldout_loglik", "heldout_auc", "sweeps",
					     "seconds", "heldout_loglik_sd", "folds", "added",
					     "order", "reason", "warm_from" };
	assert_keys(json_array_get(scores, 0), skeys, 11);
	assert_true(json_is_null(json_object_get(json_array_get(scores, 0), "warm_from")));
	assert_int_equal(json_integer_value(json_object_get(json_array_get(scores, 1),
							    "warm_from")), 8);
	assert_true(json_real_value(json_object_get(json_array_get(scores, 1), "heldout_loglik")) ==
		    -100.25);
	assert_true(json_is_null(json_object_get(json_array_get(scores, 2), "heldout_auc")));
	static const char *const lkeys[] = { "held_out_share", "held_out_edges",
					     "held_out_non_edges", "heldout_loglik", "heldout_auc" };
	assert_keys(get(root, "link_check", NULL), lkeys, 5);
	assert_int_equal(json_integer_value(get(root, "link_check", "held_out_non_edges")), 13);
	static const char *const bkeys[] = { "rule", "epsilon", "density", "linked_nodes",
					     "thin_share", "cover_share_wanted", "candidates" };
	assert_keys(get(root, "background", NULL), bkeys, 7);
	assert_string_equal(json_string_value(get(root, "background", "rule")), "code");
	assert_true(json_real_value(get(root, "background", "epsilon")) == 0.175);
	json_t *cands = get(root, "background", "candidates");
	assert_int_equal(json_array_size(cands), 2);
	static const char *const ckeys[] = { "multiple", "epsilon", "covered", "loglik",
					     "agm_loglik", "sweeps", "seconds",
					     "cover_background", "code_length" };
	assert_keys(json_array_get(cands, 1), ckeys, 9);
	assert_true(json_real_value(json_object_get(json_array_get(cands, 0), "code_length")) ==
		    70.5);
	assert_true(json_is_null(json_object_get(json_array_get(cands, 1), "code_length")));
	assert_int_equal(json_integer_value(json_object_get(json_array_get(cands, 1), "covered")),
			 8);
	assert_true(json_real_value(get(root, "link_check", "heldout_auc")) == 0.875);
	/* 7 held-out edges in one split and 14 for the link check: both are
	 * below CAVEAT_FEW_HELD_OUT, so both are said, each with a code */
	json_t *warn = get(root, "warnings", NULL);
	assert_true(json_is_array(warn));
	assert_true(json_array_size(warn) >= 2);
	assert_string_equal(json_string_value(json_object_get(json_array_get(warn, 0), "code")),
			    "few_held_out");
	assert_string_equal(json_string_value(json_object_get(json_array_get(warn, 1), "code")),
			    "few_check_pairs");
	static const char *const wkeys[] = { "code", "text" };
	assert_keys(json_array_get(warn, 0), wkeys, 2);
	json_decref(root);
	test_rmtree(tmp);
}

/* ------------------------------------------------------------------ */
/* The checkpoint layout, read by hand */

/* 64-bit FNV-1a: offset basis 14695981039346656037, prime 1099511628211
 * (Fowler, Noll & Vo; IETF draft-eastlake-fnv, section 2). */
static uint64_t fnv1a(const unsigned char *p, size_t n)
{
	uint64_t h = 14695981039346656037ULL;
	for (size_t i = 0; i < n; i++) {
		h ^= p[i];
		h *= 1099511628211ULL;
	}
	return h;
}

static uint64_t le(const unsigned char *p, int bytes)
{
	uint64_t x = 0;
	for (int i = bytes - 1; i >= 0; i--)
		x = (x << 8) | p[i];
	return x;
}

static void put_le(unsigned char *p, uint64_t x, int bytes)
{
	for (int i = 0; i < bytes; i++)
		p[i] = (unsigned char)(x >> (8 * i));
}

static void put_f64(unsigned char *p, double x)
{
	uint64_t bits;
	memcpy(&bits, &x, sizeof bits);
	put_le(p, bits, 8);
}

static void reseal(unsigned char *buf, size_t size)
{
	put_le(buf + size - 8, fnv1a(buf, size - 8), 8);
}

/* Offset of the payload of section tag, and its length. */
static size_t section(const unsigned char *buf, size_t size, const char *tag, size_t *len)
{
	size_t o = 24;
	while (o + 12 <= size - 8) {
		uint64_t l = le(buf + o + 4, 8);
		if (!memcmp(buf + o, tag, 4)) {
			*len = (size_t)l;
			return o + 12;
		}
		o += 12 + (size_t)l;
	}
	fail_msg("no section %s", tag);
	return 0;
}

static const char *checkpoint_file(char *dirbuf, size_t cap)
{
	snprintf(dirbuf, cap, "%s", test_tmpdir());
	static char path[4200];
	snprintf(path, sizeof path, "%s/checkpoint.cot", dirbuf);
	assert_int_equal(checkpoint_write(path, fx.g, &fx.p, model_of(&fx.s)), 0);
	return path;
}

static void test_checkpoint_layout_matches_the_documentation(void **state)
{
	(void)state;
	char dir[4096];
	const char *path = checkpoint_file(dir, sizeof dir);
	size_t size;
	unsigned char *buf = slurp(path, &size);
	assert_true(size > 32);
	assert_memory_equal(buf, "COTERIE\x1a", 8);
	assert_int_equal(le(buf + 8, 4), 4);   /* version */
	assert_int_equal(le(buf + 12, 4), 0);  /* reserved */
	assert_true(le(buf + 16, 8) == graph_fingerprint(fx.g));
	assert_true(le(buf + size - 8, 8) == fnv1a(buf, size - 8));

	/* the five sections in order, then SEED (the fixture has no RSUM,
	 * MODL or AWAK), filling the space up to the checksum */
	static const char *const tags[] = { "PARM", "STAT", "TRAC", "GRPH", "STRN", "SEED" };
	size_t o = 24;
	for (int i = 0; i < 6; i++) {
		assert_memory_equal(buf + o, tags[i], 4);
		o += 12 + (size_t)le(buf + o + 4, 8);
	}
	assert_int_equal(o, size - 8);

	size_t len, s;
	s = section(buf, size, "PARM", &len);
	assert_int_equal(len, 52);
	assert_int_equal(le(buf + s, 4), K);
	assert_int_equal(le(buf + s + 4, 4), 2);
	assert_true(le(buf + s + 8, 8) == 12345678901ULL);
	assert_int_equal(le(buf + s + 24, 4), 3);
	assert_int_equal(le(buf + s + 28, 4), 500);
	assert_int_equal(le(buf + s + 44, 4), 3); /* starts */
	assert_int_equal(le(buf + s + 48, 4), 1); /* no_reseed */
	s = section(buf, size, "STAT", &len);
	assert_int_equal(len, 28);
	assert_int_equal(le(buf + s, 4), 4);
	assert_int_equal(le(buf + s + 4, 4), 3);
	assert_int_equal(le(buf + s + 8, 4), FIT_LEVELLED);
	s = section(buf, size, "TRAC", &len);
	assert_int_equal(le(buf + s, 4), 5);
	assert_int_equal(len, 4 + 5 * 20);
	s = section(buf, size, "GRPH", &len);
	assert_int_equal(le(buf + s, 4), N);
	assert_int_equal(le(buf + s + 4, 8), NPAIRS);
	assert_int_equal(le(buf + s + 12, 4), 5);
	assert_memory_equal(buf + s + 16, "alice", 5);
	/* edges last, sorted, u < v: the last is 5-6 */
	assert_int_equal(le(buf + s + len - 8, 4), 5);
	assert_int_equal(le(buf + s + len - 4, 4), 6);
	s = section(buf, size, "STRN", &len);
	assert_int_equal(le(buf + s, 4), N);
	assert_int_equal(le(buf + s + 4, 4), K);
	assert_int_equal(le(buf + s + 8, 8), 10);
	assert_int_equal(len, 16 + (N + 1) * 8 + 10 * 12);
	s = section(buf, size, "SEED", &len);
	assert_int_equal(len, 4);
	assert_int_equal(le(buf + s, 4), 0); /* clusters */
	free(buf);
	test_rmtree(dir);
}

static void test_checkpoint_round_trip_keeps_every_field(void **state)
{
	(void)state;
	char dir[4096];
	const char *path = checkpoint_file(dir, sizeof dir);
	struct checkpoint ck;
	assert_int_equal(checkpoint_read(path, &ck), 0);

	assert_true(ck.fingerprint == graph_fingerprint(fx.g));
	assert_graph_sane(ck.graph);
	assert_true(graph_fingerprint(ck.graph) == graph_fingerprint(fx.g));
	assert_int_equal(ck.graph->n, N);
	assert_int_equal(ck.graph->m, NPAIRS);
	for (uint32_t u = 0; u < N; u++)
		assert_string_equal(graph_name(ck.graph, u), node_names[u]);
	for (uint32_t i = 0; i < NPAIRS; i++)
		assert_true(graph_has_edge(ck.graph, pairs[2 * i], pairs[2 * i + 1]));

	assert_int_equal(ck.params.k, K);
	assert_int_equal(ck.params.threads, 2);
	assert_true(ck.params.seed == 12345678901ULL);
	assert_true(ck.params.tol == 1e-4);
	assert_int_equal(ck.params.patience, 3);
	assert_int_equal(ck.params.max_sweeps, 500);
	assert_true(ck.params.epsilon == 0);
	assert_int_equal(ck.params.past_plateau, 0);
	assert_int_equal(ck.params.starts, 3);
	assert_int_equal(ck.params.no_reseed, 1);
	assert_null(ck.savepoint);

	assert_int_equal(ck.sweep, 4);
	assert_int_equal(ck.plateau_sweep, 3);
	assert_int_equal(ck.state, FIT_LEVELLED);
	assert_true(ck.seconds == 1.25);
	assert_true(ck.epsilon == 0.05);
	assert_int_equal(ck.ntrace, 5);
	for (int i = 0; i < 5; i++) {
		assert_int_equal(ck.trace[i].sweep, fx.trace[i].sweep);
		assert_memory_equal(&ck.trace[i].seconds, &fx.trace[i].seconds, sizeof(double));
		assert_memory_equal(&ck.trace[i].loglik, &fx.trace[i].loglik, sizeof(double));
	}

	assert_fcsr_sane(&ck.F);
	assert_int_equal(ck.F.n, N);
	assert_int_equal(ck.F.k, K);
	assert_memory_equal(ck.F.off, fx.foff, sizeof fx.foff);
	for (int i = 0; i < 10; i++) {
		assert_int_equal(ck.F.e[i].c, fx.fe[i].c);
		assert_memory_equal(&ck.F.e[i].v, &fx.fe[i].v, sizeof(double)); /* bitwise */
	}
	for (int c = 0; c < K; c++)
		assert_true(fabs(ck.F.colsum[c] - fx.colsum[c]) <= 1e-12);

	struct fit_origin o;
	checkpoint_origin(&ck, &o);
	assert_ptr_equal(o.F, &ck.F);
	assert_ptr_equal(o.trace, ck.trace);
	assert_int_equal(o.ntrace, 5);
	assert_int_equal(o.sweep, 4);
	assert_int_equal(o.plateau_sweep, 3);
	assert_true(o.seconds == 1.25);

	checkpoint_release(&ck);
	assert_null(ck.graph);
	assert_null(ck.trace);
	checkpoint_release(&ck); /* twice is harmless */
	checkpoint_release(NULL);
	test_rmtree(dir);
}

static void test_checkpoint_refuses_every_flipped_byte(void **state)
{
	(void)state;
	char dir[4096];
	const char *path = checkpoint_file(dir, sizeof dir);
	size_t size;
	unsigned char *good = slurp(path, &size);
	unsigned char *buf = malloc(size);
	assert_non_null(buf);
	struct checkpoint ck;
	quiet_on();
	for (size_t i = 0; i < size; i++) {
		static const unsigned char masks[] = { 0x01, 0x80, 0xff };
		for (int j = 0; j < 3; j++) {
			memcpy(buf, good, size);
			buf[i] ^= masks[j];
			spill(path, buf, size);
			if (checkpoint_read(path, &ck) != -1)
				fail_msg("flipping byte %zu with %02x was not noticed", i, masks[j]);
			assert_null(ck.graph);
			assert_null(ck.trace);
			/* past the magic and version, only the checksum can tell */
			if (i >= 12 && !strstr(last_msg, "checksum mismatch"))
				fail_msg("byte %zu: %s", i, last_msg);
		}
	}
	quiet_off();
	free(buf);
	free(good);
	test_rmtree(dir);
}

static void test_checkpoint_refuses_every_truncation(void **state)
{
	(void)state;
	char dir[4096];
	const char *path = checkpoint_file(dir, sizeof dir);
	size_t size;
	unsigned char *good = slurp(path, &size);
	struct checkpoint ck;
	quiet_on();
	for (size_t len = 0; len < size; len++) {
		spill(path, good, len);
		if (checkpoint_read(path, &ck) != -1)
			fail_msg("a checkpoint cut to %zu of %zu bytes was read", len, size);
		assert_true(strstr(last_msg, path) != NULL); /* the message names the file */
	}
	/* and one byte too many */
	unsigned char *longer = malloc(size + 1);
	memcpy(longer, good, size);
	longer[size] = 0;
	spill(path, longer, size + 1);
	assert_int_equal(checkpoint_read(path, &ck), -1);
	quiet_off();
	free(longer);
	free(good);
	test_rmtree(dir);
}

/* A good checkpoint changed by one field and sealed with a valid checksum. */
struct crafted {
	const char *path;
	unsigned char *good;
	size_t size;
	unsigned char *buf;
	size_t parm, stat, trac, grph, strn; /* payload offsets */
	size_t grph_len;
};

static void craft_begin(struct crafted *c, const char *path)
{
	c->path = path;
	c->good = slurp(path, &c->size);
	c->buf = malloc(c->size + 64);
	assert_non_null(c->buf);
	size_t len;
	c->parm = section(c->good, c->size, "PARM", &len);
	c->stat = section(c->good, c->size, "STAT", &len);
	c->trac = section(c->good, c->size, "TRAC", &len);
	c->grph = section(c->good, c->size, "GRPH", &c->grph_len);
	c->strn = section(c->good, c->size, "STRN", &len);
	memcpy(c->buf, c->good, c->size);
}

/* Seal buf (size bytes), read it; it must be refused naming the file and
 * saying want. Then restore buf to the good file. */
static void craft_refused(struct crafted *c, size_t size, const char *want, int line)
{
	struct checkpoint ck;
	reseal(c->buf, size);
	spill(c->path, c->buf, size);
	quiet_on();
	int rc = checkpoint_read(c->path, &ck);
	quiet_off();
	if (rc != -1)
		fail_msg("line %d: a crafted checkpoint was accepted", line);
	if (!strstr(last_msg, c->path) || !strstr(last_msg, want))
		fail_msg("line %d: expected '%s' in: %s", line, want, last_msg);
	assert_null(ck.graph);
	memcpy(c->buf, c->good, c->size);
}

#define REFUSED(c, want) craft_refused(c, (c)->size, want, __LINE__)

static void test_checkpoint_refuses_bad_contents_under_a_valid_checksum(void **state)
{
	(void)state;
	char dir[4096];
	const char *path = checkpoint_file(dir, sizeof dir);
	struct crafted c;
	craft_begin(&c, path);
	struct checkpoint ck;

	/* control: resealing the good bytes changes nothing */
	reseal(c.buf, c.size);
	assert_memory_equal(c.buf, c.good, c.size);

	/* huge counts in a file of a few hundred bytes: refused before any
	 * allocation (under AddressSanitizer a 2^40-element malloc would abort) */
	put_le(c.buf + c.grph + 4, 1ULL << 40, 8);
	REFUSED(&c, "claim");
	put_le(c.buf + c.grph, 0xfffffffeULL, 4);
	REFUSED(&c, "claim");
	put_le(c.buf + c.grph + 12, 0xffffffffULL, 4); /* length of the first name */
	REFUSED(&c, "runs past");
	put_le(c.buf + c.trac, 0xffffffffULL, 4);
	REFUSED(&c, "claim");
	put_le(c.buf + c.strn + 8, 1ULL << 40, 8);
	REFUSED(&c, "claim");
	put_le(c.buf + c.strn, 0xfffffffeULL, 4);
	REFUSED(&c, "claim");
	put_le(c.buf + c.grph - 8, 1ULL << 62, 8); /* the GRPH section length */
	REFUSED(&c, "section");

	/* strengths: entry 0 is (community 0, 1.5); entries start after
	 * n, k, nnz and the N + 1 offsets */
	size_t e0 = c.strn + 16 + (N + 1) * 8;
	put_le(c.buf + e0, K, 4);
	REFUSED(&c, "community 3");
	put_f64(c.buf + e0 + 4, NAN);
	REFUSED(&c, "strength");
	put_f64(c.buf + e0 + 4, -1.0);
	REFUSED(&c, "strength");
	put_f64(c.buf + e0 + 4, 0.0);
	REFUSED(&c, "strength");
	put_f64(c.buf + e0 + 4, INFINITY);
	REFUSED(&c, "strength");
	put_f64(c.buf + e0 + 4, MODEL_FMAX * 2);
	REFUSED(&c, "strength");
	/* row 2 holds entries 2 and 3: (0, 0.9), (1, 0.4); make them (1, 1) */
	put_le(c.buf + e0 + 2 * 12, 1, 4);
	REFUSED(&c, "sorted");
	put_le(c.buf + c.strn + 16 + N * 8, 9, 8); /* off[n] != nnz */
	REFUSED(&c, "offset");
	/* row 0 claims entries far past the end, row 1 goes back down: refused
	 * before row 0's entries are read (found by tests/fuzz/fuzz_checkpoint) */
	put_le(c.buf + c.strn + 16 + 1 * 8, 1000, 8);
	REFUSED(&c, "offsets decrease at node 0");

	/* edges: the last 8 * NPAIRS bytes of GRPH; edge 0 is 0-1, edge 1 is 0-2 */
	size_t ed = c.grph + c.grph_len - 8 * NPAIRS;
	put_le(c.buf + ed + 4, 0, 4);
	REFUSED(&c, "self-loop");
	put_le(c.buf + ed, 1, 4);
	put_le(c.buf + ed + 4, 0, 4);
	REFUSED(&c, "larger id first");
	put_le(c.buf + ed + 4, N, 4);
	REFUSED(&c, "names node 7");
	put_le(c.buf + ed + 8 + 4, 1, 4); /* edge 1 becomes 0-1 again */
	REFUSED(&c, "repeated");

	/* names: "bob" (node 1) and "eve" (node 6) have the same length */
	size_t nm1 = c.grph + 12 + 4 + 5 + 4; /* after n, m, "alice" */
	assert_memory_equal(c.buf + nm1, "bob", 3);
	size_t nm6 = c.grph + c.grph_len - 8 * NPAIRS - 3;
	assert_memory_equal(c.buf + nm6, "eve", 3);
	memcpy(c.buf + nm6, "bob", 3);
	REFUSED(&c, "given twice");
	c.buf[nm1 + 1] = '\0';
	REFUSED(&c, "NUL");

	/* the graph must be the one the header names */
	c.buf[16] ^= 1;
	REFUSED(&c, "fingerprint");

	/* parameters, state and trace */
	put_le(c.buf + c.parm, MODEL_MAX_K + 1, 4);
	put_le(c.buf + c.strn + 4, MODEL_MAX_K + 1, 4);
	REFUSED(&c, "k is");
	put_le(c.buf + c.parm + 4, 0, 4);
	REFUSED(&c, "threads");
	put_f64(c.buf + c.parm + 16, NAN);
	REFUSED(&c, "tolerance");
	put_le(c.buf + c.strn + 4, K + 1, 4); /* strengths wider than k */
	REFUSED(&c, "columns");
	put_le(c.buf + c.stat + 4, 5, 4); /* plateau after the last sweep */
	REFUSED(&c, "plateau");
	put_le(c.buf + c.stat + 8, 99, 4);
	REFUSED(&c, "state");
	put_f64(c.buf + c.stat + 20, 1.5);
	REFUSED(&c, "background");
	put_f64(c.buf + c.trac + 4 + 2 * 20 + 12, NAN); /* loglik of point 2 */
	REFUSED(&c, "trace point 2");
	put_le(c.buf + c.trac + 4 + 3 * 20, 1, 4); /* sweeps must increase */
	REFUSED(&c, "trace point 3");
	put_le(c.buf + c.trac + 4 + 4 * 20, 5, 4); /* after the last sweep */
	REFUSED(&c, "trace point 4");

	/* a format from the future, and bytes nobody described */
	put_le(c.buf + 8, CHECKPOINT_VERSION + 1, 4);
	REFUSED(&c, "newer coterie");
	put_le(c.buf + c.parm + 44, 0, 4); /* starts */
	REFUSED(&c, "starts 0");
	put_le(c.buf + c.parm + 48, 2, 4); /* no_reseed */
	REFUSED(&c, "no_reseed 2");
	put_le(c.buf + 8, 0, 4);
	REFUSED(&c, "format 0");
	put_le(c.buf + 12, 1, 4);
	REFUSED(&c, "reserved");
	memcpy(c.buf + c.size - 8, "\0\0\0\0\0\0\0\0", 8); /* 8 extra bytes before the checksum */
	craft_refused(&c, c.size + 8, "unexpected bytes", __LINE__);
	put_le(c.buf + c.trac - 8, 4 + 5 * 20 + 4, 8); /* TRAC longer than its points */
	REFUSED(&c, "too many");

	/* after all that, the good file still reads */
	spill(path, c.good, c.size);
	assert_int_equal(checkpoint_read(path, &ck), 0);
	checkpoint_release(&ck);
	free(c.buf);
	free(c.good);
	test_rmtree(dir);
}

/* Each field is checked against what it means, not only its range: a
 * checkpoint with a recomputed checksum but sweep 4294967295, a
 * log-likelihood of 1e308 or max_sweeps 0 is refused (issue 18). PARM:
 * k, threads, seed, tol, patience, max_sweeps (+28), epsilon (+32), ...;
 * STAT: sweep, plateau_sweep, state, seconds (+12), epsilon (+20); trace
 * point i at 4 + 20 i: sweep, seconds (+4), loglik (+12). The fixture ran
 * 4 sweeps of at most 500. */
static void test_checkpoint_checks_fields_against_their_meaning(void **state)
{
	(void)state;
	char dir[4096];
	const char *path = checkpoint_file(dir, sizeof dir);
	struct crafted c;
	craft_begin(&c, path);

	put_le(c.buf + c.stat, 0xffffffffULL, 4);
	REFUSED(&c, "past the limit of 500 sweeps");
	put_le(c.buf + c.parm + 28, 0, 4);
	REFUSED(&c, "sweep 4 is past the limit of 0 sweeps");
	put_le(c.buf + c.parm + 28, 3, 4);
	REFUSED(&c, "past the limit of 3 sweeps");
	put_le(c.buf + c.stat, 6, 4); /* within the limit, but the trace stops at 4 */
	REFUSED(&c, "the trace ends at sweep 4, not at the last sweep 6");
	/* a log-likelihood is a sum of log-probabilities: never above 0 */
	put_f64(c.buf + c.trac + 4 + 1 * 20 + 12, 1e308);
	REFUSED(&c, "trace point 1");
	put_f64(c.buf + c.trac + 4 + 1 * 20 + 12, 0.5);
	REFUSED(&c, "log-likelihood <= 0");
	put_f64(c.buf + c.trac + 4 + 2 * 20 + 4, -1.0); /* time of point 2 */
	REFUSED(&c, "trace point 2");
	put_f64(c.buf + c.stat + 12, -1.0);
	REFUSED(&c, "elapsed time");
	put_f64(c.buf + c.stat + 12, INFINITY);
	REFUSED(&c, "elapsed time");
	put_f64(c.buf + c.stat + 20, 0.0); /* the model's background is never 0 */
	REFUSED(&c, "background 0 is not in (0, 1)");
	put_f64(c.buf + c.stat + 20, -0.25);
	REFUSED(&c, "background");
	put_f64(c.buf + c.parm + 32, -0.25); /* the asked one may be 0, not below */
	REFUSED(&c, "background -0.25");

	/* the writer refuses the same (it shares the validators) */
	struct trace_point saved = fx.trace[1];
	fx.trace[1].loglik = 1e308;
	quiet_on();
	assert_int_equal(checkpoint_write(path, fx.g, &fx.p, model_of(&fx.s)), -1);
	quiet_off();
	assert_non_null(strstr(last_msg, "log-likelihood"));
	fx.trace[1] = saved;

	/* a fit resumed with --max-sweeps below the sweeps it has run stops
	 * at once: its checkpoint stores those sweeps as its limit, so it
	 * still reads back (and means the same) */
	fx.p.max_sweeps = 2;
	assert_int_equal(checkpoint_write(path, fx.g, &fx.p, model_of(&fx.s)), 0);
	fx.p.max_sweeps = 500;
	struct checkpoint ck;
	assert_int_equal(checkpoint_read(path, &ck), 0);
	assert_int_equal(ck.params.max_sweeps, 4);
	assert_int_equal(ck.sweep, 4);
	checkpoint_release(&ck);
	free(c.buf);
	free(c.good);
	test_rmtree(dir);
}

/* Format 1 (before starts and no_reseed were stored) still reads: its
 * PARM section is the first 44 bytes of ours. Such a fit resumed as one
 * start without refinement, and reads back so. */
static void test_checkpoint_reads_format_1(void **state)
{
	(void)state;
	char dir[4096];
	const char *path = checkpoint_file(dir, sizeof dir);
	size_t size, len;
	unsigned char *good = slurp(path, &size);
	size_t parm = section(good, size, "PARM", &len);
	unsigned char *old = malloc(size);
	assert_non_null(old);
	/* PARM's last 8 bytes and the SEED section (16 bytes, last before
	 * the checksum) left out */
	memcpy(old, good, parm + 44);
	memcpy(old + parm + 44, good + parm + 52, size - 24 - parm - 52);
	size_t osize = size - 8 - 16;
	put_le(old + 8, 1, 4);
	put_le(old + parm - 8, 44, 8);
	reseal(old, osize);
	spill(path, old, osize);
	struct checkpoint ck;
	assert_int_equal(checkpoint_read(path, &ck), 0);
	assert_int_equal(ck.params.k, K);
	assert_int_equal(ck.params.max_sweeps, 500);
	assert_int_equal(ck.params.starts, 1);
	assert_int_equal(ck.params.no_reseed, 1);
	assert_int_equal(ck.params.seeding, SEED_EGONETS); /* the only seeding before format 4 */
	assert_int_equal(ck.F.off[ck.F.n], 10);
	checkpoint_release(&ck);
	/* a format-1 file with format-2 parameters is refused */
	put_le(good + 8, 1, 4);
	reseal(good, size);
	spill(path, good, size);
	quiet_on();
	assert_int_equal(checkpoint_read(path, &ck), -1);
	quiet_off();
	assert_non_null(strstr(last_msg, "parameters take 52 bytes, not 44"));
	free(old);
	free(good);
	test_rmtree(dir);
}

/* The fixture's model as a part: trace and strengths up to sweep 4. */
static struct fit_part fixture_part(void)
{
	struct fit_part pt = { fx.s.F, fx.trace, 5, 4, 3, NULL };
	return pt;
}

/* An interrupted fit (fit.h, struct fit_savepoint) round-trips through the
 * RSUM section, and damage inside it is refused. */
static void test_checkpoint_keeps_where_an_interrupt_left_the_starts(void **state)
{
	(void)state;
	struct fit_savepoint r;
	memset(&r, 0, sizeof r);
	r.start = 2;
	r.phase = FIT_PHASE_RESEED;
	r.cur = fixture_part();
	r.best_start = 1;
	r.best = fixture_part();
	r.best.ntrace = 4; /* the best start ended at sweep 3 */
	r.best.sweep = 3;
	r.best.plateau_sweep = 2;
	r.best_reseeds = 2;
	r.best_state = FIT_LEVELLED;
	r.best_loglik = fx.trace[3].loglik;
	fx.s.savepoint = &r;
	char dir[4096];
	const char *path = checkpoint_file(dir, sizeof dir);
	fx.s.savepoint = NULL;

	struct checkpoint ck;
	assert_int_equal(checkpoint_read(path, &ck), 0);
	assert_non_null(ck.savepoint);
	const struct fit_savepoint *q = ck.savepoint;
	assert_int_equal(q->start, 2);
	assert_int_equal(q->phase, FIT_PHASE_RESEED);
	assert_int_equal(q->cur.sweep, 4);
	assert_int_equal(q->cur.plateau_sweep, 3);
	assert_int_equal(q->cur.ntrace, 5);
	assert_memory_equal(&q->cur.trace[3].loglik, &fx.trace[3].loglik, sizeof(double));
	assert_int_equal(q->cur.F.off[N], 10);
	assert_memory_equal(q->cur.F.e, fx.fe, sizeof fx.fe);
	assert_int_equal(q->best_start, 1);
	assert_int_equal(q->best.sweep, 3);
	assert_int_equal(q->best.plateau_sweep, 2);
	assert_int_equal(q->best.ntrace, 4);
	assert_int_equal(q->best_reseeds, 2);
	assert_int_equal(q->best_state, FIT_LEVELLED);
	assert_memory_equal(&q->best_loglik, &fx.trace[3].loglik, sizeof(double));
	assert_memory_equal(q->best.F.e, fx.fe, sizeof fx.fe);
	struct fit_origin o;
	checkpoint_origin(&ck, &o);
	assert_ptr_equal(o.savepoint, ck.savepoint);
	checkpoint_release(&ck);
	assert_null(ck.savepoint);

	/* damage under a valid checksum: RSUM payload = start, phase, sweep,
	 * plateau_sweep, then a TRAC section */
	struct crafted c;
	craft_begin(&c, path);
	size_t len;
	size_t rs = section(c.good, c.size, "RSUM", &len);
	put_le(c.buf + rs, 4, 4); /* start 4 of 3 */
	REFUSED(&c, "interrupted start 4");
	put_le(c.buf + rs, 0, 4);
	REFUSED(&c, "interrupted start 0");
	put_le(c.buf + rs, 1, 4); /* the best start (1) is not before it */
	REFUSED(&c, "best start 1");
	put_le(c.buf + rs + 4, 7, 4);
	REFUSED(&c, "phase 7");
	put_le(c.buf + rs + 8, 9, 4); /* the trace ends at sweep 4, not 9 */
	REFUSED(&c, "interrupted start");
	put_le(c.buf + rs + 12, 5, 4); /* plateau after the last sweep */
	REFUSED(&c, "plateau");
	put_le(c.buf + rs + 16 + 12, 0xffffffffULL, 4); /* trace count */
	REFUSED(&c, "claim");
	/* the interrupted start's last sweep within max_sweeps (+28 of PARM:
	 * 4 is the STAT sweep too, so only the parts can break a limit of 3
	 * once STAT's own sweep is lowered along with its trace) */
	put_le(c.buf + rs + 8, 0xffffffffULL, 4);
	REFUSED(&c, "interrupted start");
	put_f64(c.buf + rs + 16 + 12 + 4 + 2 * 20 + 12, 1e308); /* its trace's point 2 */
	REFUSED(&c, "interrupted start: trace point 2");
	put_le(c.buf + rs - 8, 1ULL << 40, 8); /* the RSUM length */
	REFUSED(&c, "RSUM");
	craft_refused(&c, rs - 12 + 4, "section", __LINE__); /* cut inside the tag */
	free(c.buf);
	free(c.good);

	/* a savepoint the reader would refuse is left out, with a warning,
	 * and the rest is saved: a save is not lost for it */
	r.start = 4; /* of 3 starts */
	fx.s.savepoint = &r;
	quiet_on();
	assert_int_equal(checkpoint_write(path, fx.g, &fx.p, model_of(&fx.s)), 0);
	quiet_off();
	fx.s.savepoint = NULL;
	assert_non_null(strstr(last_msg, "saved without its savepoint"));
	assert_int_equal(checkpoint_read(path, &ck), 0);
	assert_null(ck.savepoint);
	assert_int_equal(ck.sweep, 4);
	checkpoint_release(&ck);
	test_rmtree(dir);
}

/* The SEED section (coterie-files(5), format 4): the seeding comes back
 * as written; a kind this coterie does not know, a section of the wrong
 * length and a format-4 file without it are refused. */
static void test_checkpoint_keeps_the_seeding(void **state)
{
	(void)state;
	char dir[4096];
	snprintf(dir, sizeof dir, "%s", test_tmpdir());
	char path[4200];
	snprintf(path, sizeof path, "%s/checkpoint.cot", dir);
	struct fit_params p = fx.p;
	p.seeding = SEED_EGONETS;
	assert_int_equal(checkpoint_write(path, fx.g, &p, model_of(&fx.s)), 0);
	struct checkpoint ck;
	assert_int_equal(checkpoint_read(path, &ck), 0);
	assert_int_equal(ck.params.seeding, SEED_EGONETS);
	checkpoint_release(&ck);

	struct crafted c;
	craft_begin(&c, path);
	size_t len;
	size_t at = section(c.good, c.size, "SEED", &len);
	assert_int_equal(len, 4);
	assert_int_equal(le(c.good + at, 4), 1);
	put_le(c.buf + at, 2, 4);
	REFUSED(&c, "seeding 2 is not one this coterie knows");
	put_le(c.buf + at - 8, 0, 8); /* an empty section; its 4 bytes left over */
	REFUSED(&c, "the seeding takes 0 bytes, not 4");
	/* the section cut off: the checksum follows STRN */
	memcpy(c.buf + at - 12, c.good + c.size - 8, 8);
	craft_refused(&c, c.size - 16, "the 'SEED' section is missing", __LINE__);
	free(c.good);
	free(c.buf);
	test_rmtree(dir);
}

/* The AWAK section (coterie-files(5)): the awake flags of a fit's last
 * sweep (sweep.h) come back as written, through checkpoint_origin(), and
 * a section of the wrong length or with a bit set past the last node is
 * refused. N = 7 nodes: one byte, bits 0..6. */
static void test_checkpoint_keeps_the_awake_flags(void **state)
{
	(void)state;
	char dir[4096];
	snprintf(dir, sizeof dir, "%s", test_tmpdir());
	char path[4200];
	snprintf(path, sizeof path, "%s/checkpoint.cot", dir);
	static const uint8_t flags[N] = { 1, 0, 0, 1, 1, 0, 1 };
	struct result_model m = *model_of(&fx.s);
	m.awake = flags;
	assert_int_equal(checkpoint_write(path, fx.g, &fx.p, &m), 0);
	struct checkpoint ck;
	assert_int_equal(checkpoint_read(path, &ck), 0);
	assert_non_null(ck.awake);
	assert_memory_equal(ck.awake, flags, N);
	struct fit_origin o;
	checkpoint_origin(&ck, &o);
	assert_ptr_equal(o.awake, ck.awake);
	checkpoint_release(&ck);

	struct crafted c;
	craft_begin(&c, path);
	size_t len;
	size_t at = section(c.good, c.size, "AWAK", &len);
	assert_int_equal(len, 1);
	/* bits 0, 3, 4, 6: 0x59 */
	assert_int_equal(c.good[at], 0x59);
	c.buf[at] = 0x59 | 0x80; /* node 7 does not exist */
	REFUSED(&c, "past the last node");
	put_le(c.buf + at - 8, 2, 8); /* two bytes for seven nodes */
	REFUSED(&c, "awake section holds 2 bytes for 7 nodes");
	put_le(c.buf + at - 8, 1000, 8); /* past the end of the file */
	REFUSED(&c, "'AWAK' section claims 1000 bytes");
	put_le(c.buf + at - 8, 0, 8); /* none: the byte is then left over */
	REFUSED(&c, "awake section holds 0 bytes");
	free(c.good);
	free(c.buf);

	/* without flags there is no section and none comes back */
	m.awake = NULL;
	assert_int_equal(checkpoint_write(path, fx.g, &fx.p, &m), 0);
	assert_int_equal(checkpoint_read(path, &ck), 0);
	assert_null(ck.awake);
	checkpoint_release(&ck);
	test_rmtree(dir);
}

static void test_checkpoint_refuses_what_is_not_a_checkpoint(void **state)
{
	(void)state;
	const char *dir = test_tmpdir();
	struct checkpoint ck;
	quiet_on();
	const char *p = test_write_file(dir, "edges.tsv", "a\tb\nb\tc\nc\ta\nthis is text, not a checkpoint\n");
	assert_int_equal(checkpoint_read(p, &ck), -1);
	assert_non_null(strstr(last_msg, "not a coterie checkpoint"));
	assert_int_equal(checkpoint_read(dir, &ck), -1); /* a folder */
	assert_non_null(strstr(last_msg, "not a regular file"));
	assert_int_equal(checkpoint_read(path_in(dir, "missing.cot"), &ck), -1);
	assert_non_null(strstr(last_msg, "missing.cot"));
	quiet_off();
	test_rmtree(dir);
}

/* ------------------------------------------------------------------ */
/* Atomic writes and the folder check */

static void test_prepare_dir_makes_parents_and_leaves_nothing(void **state)
{
	(void)state;
	const char *tmp = test_tmpdir();
	char dir[4200], names[1024];
	snprintf(dir, sizeof dir, "%s/a/b/c/", tmp);
	assert_int_equal(result_prepare_dir(dir), 0);
	struct stat st;
	assert_int_equal(stat(dir, &st), 0);
	assert_true(S_ISDIR(st.st_mode));
	list_dir(dir, names, sizeof names);
	assert_string_equal(names, ""); /* the probe file is gone */
	assert_int_equal(result_prepare_dir(dir), 0); /* an existing folder is fine */
	test_rmtree(tmp);
}

static void test_prepare_dir_refuses_what_cannot_be_written(void **state)
{
	(void)state;
	const char *tmp = test_tmpdir();
	char dir[4200];
	const char *file = test_write_file(tmp, "somefile", "x\n");
	quiet_on();
	/* an existing regular file is not a folder */
	assert_int_equal(result_prepare_dir(file), -1);
	assert_non_null(strstr(last_msg, "somefile"));
	assert_non_null(strstr(last_msg, "not a folder"));
	/* a folder under a regular file cannot be made, even by root */
	snprintf(dir, sizeof dir, "%s/somefile/out", tmp);
	assert_int_equal(result_prepare_dir(dir), -1);
	assert_non_null(strstr(last_msg, "somefile"));
	if (geteuid() != 0) {
		/* root bypasses permission bits, so this half runs only for others */
		snprintf(dir, sizeof dir, "%s/locked", tmp);
		assert_int_equal(mkdir(dir, 0500), 0);
		assert_int_equal(result_prepare_dir(dir), -1);
		assert_non_null(strstr(last_msg, "cannot write to"));
		assert_non_null(strstr(last_msg, "Permission denied")); /* strerror(EACCES), glibc */
		chmod(dir, 0700);
	}
	quiet_off();
	test_rmtree(tmp);
}

static void test_failed_write_keeps_the_old_file_and_no_temporary(void **state)
{
	(void)state;
	char dir[4096], names[1024];
	const char *path = checkpoint_file(dir, sizeof dir);
	size_t size, after;
	unsigned char *old = slurp(path, &size);

	/* 1. the disk "fills up" mid-file: a 100-byte file size limit makes
	 * write() fail with EFBIG (POSIX setrlimit, RLIMIT_FSIZE) */
	struct rlimit saved, small;
	assert_int_equal(getrlimit(RLIMIT_FSIZE, &saved), 0);
	small = saved;
	small.rlim_cur = 100;
	void (*oldsig)(int) = signal(SIGXFSZ, SIG_IGN);
	assert_int_equal(setrlimit(RLIMIT_FSIZE, &small), 0);
	struct snapshot s = fx.s;
	s.sweep = 5; /* a different file would have been written */
	quiet_on();
	int rc = checkpoint_write(path, fx.g, &fx.p, model_of(&s));
	quiet_off();
	assert_int_equal(setrlimit(RLIMIT_FSIZE, &saved), 0);
	signal(SIGXFSZ, oldsig);
	assert_int_equal(rc, -1);
	assert_non_null(strstr(last_msg, "cannot write"));
	unsigned char *now = slurp(path, &after);
	assert_int_equal(after, size);
	assert_memory_equal(now, old, size);
	free(now);
	list_dir(dir, names, sizeof names);
	assert_string_equal(names, "checkpoint.cot");

	/* 2. a snapshot that does not fit the graph is refused before writing */
	s = fx.s;
	s.F.n = N - 1;
	quiet_on();
	assert_int_equal(checkpoint_write(path, fx.g, &fx.p, model_of(&s)), -1);
	quiet_off();
	now = slurp(path, &after);
	assert_memory_equal(now, old, size);
	free(now);

	/* 3. the rename fails (the target is a folder): the temporary goes */
	char target[4200];
	snprintf(target, sizeof target, "%s/blocked", dir);
	assert_int_equal(mkdir(target, 0700), 0);
	quiet_on();
	assert_int_equal(checkpoint_write(target, fx.g, &fx.p, model_of(&fx.s)), -1);
	quiet_off();
	list_dir(dir, names, sizeof names);
	assert_string_equal(names, "blocked checkpoint.cot");

	free(old);
	test_rmtree(dir);
}

/* ------------------------------------------------------------------ */
/* With the real engine */

static struct snapshot *fit_karate(const struct graph *g, const struct fit_params *p,
				   const struct fit_origin *o)
{
	int st;
	struct snapshot *s = test_fit_to_end(g, p, o, &st);
	assert_int_equal(st, FIT_FINISHED);
	return s;
}

static void test_resume_through_the_checkpoint_matches_the_uninterrupted_fit(void **state)
{
	(void)state;
	/* Zachary's karate club, 34 nodes / 78 edges (tests/data/README.md) */
	util_set_quiet(1);
	struct graph *g = graph_load(test_data("karate/edges.tsv"), GRAPH_FORMAT_AUTO);
	util_set_quiet(0);
	assert_non_null(g);
	struct fit_params p;
	fit_params_default(&p);
	p.k = 3;
	p.seed = 7;
	p.starts = 1; /* a resumed fit continues one start */
	p.past_plateau = 1; /* run to max_sweeps both times */
	p.max_sweeps = 6;
	struct snapshot *whole = fit_karate(g, &p, NULL);
	p.max_sweeps = 3;
	struct snapshot *half = fit_karate(g, &p, NULL);

	const char *dir = test_tmpdir();
	struct result_meta meta = { "coterie fit karate", "karate/edges.tsv", 1.0, 0, "finished", 0,
				    NULL, 0, NULL, NULL, NULL, NULL };
	assert_int_equal(result_write(dir, g, &p, model_of(half), &meta), 0);

	/* the folder agrees with the snapshot it was written from */
	struct table t;
	table_load(&t, path_in(dir, "memberships.tsv"));
	assert_int_equal(t.nrows - 1, half->agm.cover.off[half->agm.cover.k]);
	free(t.text);
	table_load(&t, path_in(dir, "communities.tsv"));
	assert_int_equal(t.nrows - 1, half->agm.cover.k);
	free(t.text);
	table_load(&t, path_in(dir, "trace.tsv"));
	assert_int_equal(t.nrows - 1, half->ntrace);
	free(t.text);

	struct checkpoint ck;
	assert_int_equal(checkpoint_read(path_in(dir, RESULT_CHECKPOINT), &ck), 0);
	assert_true(ck.fingerprint == graph_fingerprint(g));
	assert_int_equal(ck.sweep, 3);
	assert_int_equal(ck.F.off[ck.F.n], half->F.off[half->F.n]);
	for (uint64_t i = 0; i < ck.F.off[ck.F.n]; i++) {
		assert_int_equal(ck.F.e[i].c, half->F.e[i].c);
		assert_memory_equal(&ck.F.e[i].v, &half->F.e[i].v, sizeof(double));
	}

	/* fit.h: a resumed fit continues exactly as the uninterrupted one */
	struct fit_params p2 = ck.params;
	p2.max_sweeps = 6;
	struct fit_origin o;
	checkpoint_origin(&ck, &o);
	struct snapshot *resumed = fit_karate(ck.graph, &p2, &o);
	assert_int_equal(resumed->sweep, whole->sweep);
	assert_int_equal(resumed->ntrace, whole->ntrace);
	for (uint32_t i = 0; i < whole->ntrace; i++)
		assert_memory_equal(&resumed->trace[i].loglik, &whole->trace[i].loglik, sizeof(double));
	assert_memory_equal(resumed->F.off, whole->F.off, ((size_t)whole->F.n + 1) * sizeof(uint64_t));
	for (uint64_t i = 0; i < whole->F.off[whole->F.n]; i++) {
		assert_int_equal(resumed->F.e[i].c, whole->F.e[i].c);
		assert_memory_equal(&resumed->F.e[i].v, &whole->F.e[i].v, sizeof(double));
	}

	snapshot_release(resumed);
	checkpoint_release(&ck);
	snapshot_release(half);
	snapshot_release(whole);
	graph_free(g);
	test_rmtree(dir);
}

static void test_checkpoint_release_is_safe_on_zeroed_struct(void **state)
{
	(void)state;
	struct checkpoint ck;
	memset(&ck, 0, sizeof ck);
	checkpoint_release(&ck);
	checkpoint_release(NULL);
	assert_null(ck.graph);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_folder_holds_five_files_and_no_temporaries),
		cmocka_unit_test(test_memberships_grouped_largest_first_by_decreasing_strength),
		cmocka_unit_test(test_communities_tsv_lists_figures_largest_first),
		cmocka_unit_test(test_trace_tsv_round_trips_the_loglik_exactly),
		cmocka_unit_test(test_run_json_has_every_key_in_order_with_values),
		cmocka_unit_test(test_run_json_records_how_the_last_start_began),
		cmocka_unit_test(test_run_json_records_the_agm_refinement),
		cmocka_unit_test(test_run_json_writes_big_seed_as_string_and_infinity_as_null),
		cmocka_unit_test(test_k_selection_and_link_check_are_recorded),
		cmocka_unit_test(test_checkpoint_layout_matches_the_documentation),
		cmocka_unit_test(test_checkpoint_round_trip_keeps_every_field),
		cmocka_unit_test(test_checkpoint_refuses_every_flipped_byte),
		cmocka_unit_test(test_checkpoint_refuses_every_truncation),
		cmocka_unit_test(test_checkpoint_refuses_bad_contents_under_a_valid_checksum),
		cmocka_unit_test(test_checkpoint_refuses_what_is_not_a_checkpoint),
		cmocka_unit_test(test_checkpoint_checks_fields_against_their_meaning),
	cmocka_unit_test(test_checkpoint_reads_format_1),
		cmocka_unit_test(test_checkpoint_keeps_where_an_interrupt_left_the_starts),
		cmocka_unit_test(test_prepare_dir_makes_parents_and_leaves_nothing),
		cmocka_unit_test(test_prepare_dir_refuses_what_cannot_be_written),
		cmocka_unit_test(test_failed_write_keeps_the_old_file_and_no_temporary),
		cmocka_unit_test(test_resume_through_the_checkpoint_matches_the_uninterrupted_fit),
		cmocka_unit_test(test_checkpoint_keeps_the_awake_flags),
		cmocka_unit_test(test_checkpoint_keeps_the_seeding),
		cmocka_unit_test(test_checkpoint_release_is_safe_on_zeroed_struct),
	};
	return cmocka_run_group_tests(tests, setup, teardown);
}
