/*
 * cli/export: `coterie export DIR [--graphml FILE] [--gml FILE]
 * [--matrix FILE] [--strength-columns N|all] [--graph FILE]`.
 *
 * Writes a result folder's fit for other tools (export.h): the graph with
 * the fit as attributes in GraphML or GML, the strength matrix in Matrix
 * Market format. Any result folder serves: a finished fit, a fit of -k
 * auto, a refined one (its cover is memberships.tsv's, as show reads it),
 * or a folder holding only an interrupted fit's checkpoint.partial.cot.
 *
 * The checkpoint carries the graph the fit was made on (names and edges),
 * so no graph file is needed. --graph FILE names one anyway: it is read
 * and refused unless its fingerprint (names and edges, graph.h) is the
 * fit's, so a script can be sure which graph the attributes belong to.
 * What is written is always the checkpoint's graph, which the strengths'
 * rows are numbered by.
 *
 * Exit status: 0, 1 (unreadable folder, another graph, write error), 2
 * (bad usage). Nothing here calls exit() but the option parsers of
 * common.c.
 */
#include <getopt.h>
#include <inttypes.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "cli.h"
#include "coterie/agm.h"
#include "coterie/atomicfile.h"
#include "coterie/checkpoint.h"
#include "coterie/export.h"
#include "coterie/model.h"
#include "coterie/outdir.h"
#include "coterie/result.h"
#include "coterie/result_cover.h"

#define EXPORT_DEFAULT_COLUMNS 10u

static void export_usage_short(FILE *out)
{
	fprintf(out,
		"usage: coterie export DIR [--graphml FILE] [--gml FILE] [--matrix FILE]\n"
		"                          [--strength-columns N|all] [--graph FILE [--format F]]\n");
}

static void export_usage(FILE *out)
{
	export_usage_short(out);
	fprintf(out,
		"\n"
		"Write the fit of the result folder DIR for other tools. DIR may hold a\n"
		"finished fit, a fit of -k auto, or only an interrupted fit's checkpoint.\n"
		"\n"
		"      --graphml FILE    the graph with the fit as node and edge attributes,\n"
		"                        in GraphML (FILE '-' is standard output)\n"
		"      --gml FILE        the same in GML (ASCII: other bytes of names escaped)\n"
		"      --matrix FILE     the strengths, nodes x communities, in Matrix Market\n"
		"                        format, with FILE.rows.txt and FILE.cols.txt beside\n"
		"                        it naming rows and columns (a final .mtx is dropped\n"
		"                        from those names)\n"
		"      --strength-columns N|all\n"
		"                        one strength attribute for each of the N largest\n"
		"                        communities (default %u; 0 for none)\n"
		"      --graph FILE      check that FILE is the graph of the fit (its\n"
		"                        fingerprint); another graph is refused (exit 1)\n"
		"      --format F        how to read --graph: edges, gml, graphml, pajek, auto\n"
		"      --skip-lines N    with --graph: skip the first N lines of an edge list\n"
		"      --no-header       with --graph: never take a line for a header\n"
		"  -h, --help            this text\n"
		"\n"
		"Node attributes: name, label, communities (\"3;17\", strongest first),\n"
		"strongest (-1 for none), ncommunities, strengthC; edge attributes:\n"
		"probability, explained (1 or 0), community (-1 for none). coterie(1) has\n"
		"the details.\n",
		EXPORT_DEFAULT_COLUMNS);
}

/* The four options that name a file come first, in the order of
 * file_of()'s table. */
enum {
	OPT_GRAPHML = CLI_OPT_OWN,
	OPT_GML,
	OPT_MATRIX,
	OPT_GRAPH,
	OPT_COLUMNS,
};

struct export_args {
	const char *dir, *graphml, *gml, *matrix, *graph;
	uint32_t columns;
	struct cli_fit_opts load; /* --format, --skip-lines, --no-header for --graph */
};

/* Where the option c that names a file keeps it, or NULL. */
static const char **file_of(struct export_args *o, int c)
{
	const char **files[] = { &o->graphml, &o->gml, &o->matrix, &o->graph };
	return c >= OPT_GRAPHML && c <= OPT_GRAPH ? files[c - OPT_GRAPHML] : NULL;
}

/* The command line into *o. Returns 0 to go on; else -1, and *status is
 * 0 after --help or EXIT_USAGE after a message. */
static int export_parse(int argc, char **argv, struct export_args *o, int *status)
{
	static const struct option opts[] = {
		{ "graphml", required_argument, NULL, OPT_GRAPHML },
		{ "gml", required_argument, NULL, OPT_GML },
		{ "matrix", required_argument, NULL, OPT_MATRIX },
		{ "graph", required_argument, NULL, OPT_GRAPH },
		{ "strength-columns", required_argument, NULL, OPT_COLUMNS },
		{ "format", required_argument, NULL, CLI_OPT_FORMAT },
		{ "skip-lines", required_argument, NULL, CLI_OPT_SKIP_LINES },
		{ "no-header", no_argument, NULL, CLI_OPT_NO_HEADER },
		{ "help", no_argument, NULL, 'h' },
		{ NULL, 0, NULL, 0 },
	};
	cli_getopt_reset();
	for (int c; (c = getopt_long(argc, argv, ":h", opts, NULL)) != -1;) {
		const char **file = file_of(o, c);
		if (file) {
			*file = optarg;
		} else if (c == OPT_COLUMNS) {
			o->columns = strcmp(optarg, "all")
				? cli_u32("--strength-columns", optarg, 0, MODEL_MAX_K)
				: EXPORT_ALL_COLUMNS;
		} else if (c == 'h') {
			export_usage(stdout);
			*status = 0;
			return -1;
		} else if (!cli_fit_opts_take(&o->load, c, optarg)) {
			/* --format, --skip-lines and --no-header are taken above */
			*status = cli_option_usage(c, argv, "export");
			return -1;
		}
	}
	*status = EXIT_USAGE;
	if (argc - optind != 1)
		error(argc == optind ? "export needs a result folder"
				     : "export takes one result folder");
	else if (!o->graphml && !o->gml && !o->matrix)
		error("nothing to write: give --graphml, --gml or --matrix");
	else if (o->matrix && !strcmp(o->matrix, "-"))
		error("--matrix writes three files and needs a file name, not '-'");
	else if (o->graphml && o->gml && !strcmp(o->graphml, "-") && !strcmp(o->gml, "-"))
		error("only one of --graphml and --gml can go to standard output");
	else {
		o->dir = argv[optind];
		return 0;
	}
	export_usage_short(stderr);
	return -1;
}

/* The fit of the folder: its result, or the unfinished fit when it has
 * no result yet (said). 0, or -1 with a message. */
static int export_read(const char *dir, struct checkpoint *ck)
{
	char shown[1024];
	util_escape(dir, shown, sizeof shown, 1);
	char *path = atomicfile_path(dir, RESULT_CHECKPOINT);
	if (!path)
		return -1;
	int partial = outdir_has_partial(dir), only_partial = partial && access(path, F_OK) != 0;
	if (only_partial) {
		free(path);
		path = atomicfile_path(dir, RESULT_PARTIAL);
		if (!path)
			return -1;
	}
	int rc = checkpoint_read(path, ck);
	free(path);
	if (rc == 0 && only_partial)
		notice("'%s' holds no result yet, only an unfinished fit (%s, %" PRIu32
		       " sweeps): it is the one exported", shown, RESULT_PARTIAL, ck->sweep);
	else if (rc == 0 && partial)
		notice("'%s' also holds an unfinished fit (%s): the result exported is the one "
		       "written before it", shown, RESULT_PARTIAL);
	return rc;
}

/* The graph named by --graph, checked against the fit's fingerprint:
 * the graph (caller frees with graph_free()), or NULL with a message. */
static struct graph *export_graph_file(const struct export_args *o, const struct checkpoint *ck)
{
	struct graph *g = cli_graph_load(&o->load, o->graph);
	if (!g)
		return NULL;
	uint64_t fp = graph_fingerprint(g);
	if (fp == ck->fingerprint && g->n == ck->graph->n)
		return g;
	char b1[1024], b2[1024];
	error("'%s' is not the graph of the fit in '%s' (fingerprint %016" PRIx64
	      ", the fit's %016" PRIx64 "; %" PRIu32 " nodes and %" PRIu64 " edges, the fit's %"
	      PRIu32 " and %" PRIu64 ")",
	      util_escape(o->graph, b1, sizeof b1, 1), util_escape(o->dir, b2, sizeof b2, 1), fp,
	      ck->fingerprint, g->n, g->m, ck->graph->n, ck->graph->m);
	graph_free(g);
	return NULL;
}

/* Every output asked for, standard output last so that messages about
 * files come before it ends. 0 or -1. */
static int export_write(const struct export_args *o, const struct export_fit *x)
{
	int rc = 0;
	if (o->matrix && export_matrix(o->matrix, x))
		rc = -1;
	if (o->graphml && strcmp(o->graphml, "-") && export_graph(o->graphml, EXPORT_GRAPHML, x,
								  o->columns))
		rc = -1;
	if (o->gml && strcmp(o->gml, "-") && export_graph(o->gml, EXPORT_GML, x, o->columns))
		rc = -1;
	if (o->graphml && !strcmp(o->graphml, "-") && export_graph("-", EXPORT_GRAPHML, x,
								   o->columns))
		rc = -1;
	if (o->gml && !strcmp(o->gml, "-") && export_graph("-", EXPORT_GML, x, o->columns))
		rc = -1;
	return rc;
}

int cmd_export(int argc, char **argv)
{
	struct export_args o;
	memset(&o, 0, sizeof o);
	o.columns = EXPORT_DEFAULT_COLUMNS;
	cli_fit_opts_init(&o.load);
	int status;
	if (export_parse(argc, argv, &o, &status))
		return status;

	struct checkpoint ck;
	memset(&ck, 0, sizeof ck);
	if (export_read(o.dir, &ck))
		return 1;
	if (o.graph) {
		struct graph *file = export_graph_file(&o, &ck);
		if (!file) {
			checkpoint_release(&ck);
			return 1;
		}
		graph_free(file);
	}
	double delta = sqrt(model_qeps(ck.epsilon));
	struct agm cover;
	enum result_cover_from from;
	if (result_cover_read(&cover, o.dir, &ck, delta, &from)) {
		checkpoint_release(&ck);
		return 1;
	}
	result_cover_check_folder(o.dir, &ck, from == RESULT_COVER_REFINED ? NULL : &cover);
	struct export_fit x = { ck.graph, &ck.F, &cover, ck.epsilon };
	int rc = export_write(&o, &x);
	agm_release(&cover);
	checkpoint_release(&ck);
	return rc ? 1 : 0;
}
