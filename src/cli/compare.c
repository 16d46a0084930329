/*
 * cli/compare: `coterie compare TRUTH FOUND [--json]`.
 *
 * Reads two covers (cover files, or result folders meaning their
 * memberships.tsv) into one node-name table, so both are covers of the
 * union of their nodes: a node missing from a file is in none of that
 * file's communities. Then prints the counts of each side and the scores
 * of score.h, as a table for people or as one JSON object. A file that
 * reads like an edge list (cover_looks_like_edges()) is still scored, with
 * a warning: the rule can misfire on unusual covers, so it never refuses.
 *
 * Node names are never printed; file names are, through util_escape()
 * (ASCII-only when the locale is not UTF-8), and JSON gets them as UTF-8
 * or, when they are not valid UTF-8, escaped.
 *
 * Exit status: 0, 1 (unreadable or malformed file, write error), 2 (bad
 * usage).
 */
#include <errno.h>
#include <getopt.h>
#include <inttypes.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include <jansson.h>

#include "cli.h"
#include "coterie/cover.h"
#include "coterie/result_commit.h"
#include "coterie/jsonout.h"
#include "coterie/score.h"

#define PATH_CAP 4096

static void compare_usage_short(FILE *out)
{
	fprintf(out, "usage: coterie compare TRUTH FOUND [--json]\n");
}

static void compare_usage(FILE *out)
{
	compare_usage_short(out);
	fprintf(out,
		"\n"
		"Score the cover FOUND against the cover TRUTH. Each is a file of\n"
		"node<TAB>community lines or a result folder (its memberships.tsv).\n"
		"Scores are computed over the nodes in either file; a node missing from\n"
		"one is in none of its communities. Prints overlapping NMI (max and LFK\n"
		"forms), the Omega index, the average best-match F1, plain NMI when both\n"
		"are partitions, and counts for each side. Warns when a file looks like\n"
		"an edge list (its community names are its node names).\n"
		"\n"
		"      --json      the same as one JSON object\n"
		"  -h, --help      this text\n");
}

enum { OPT_JSON = 256 };

struct side {
	char path[PATH_CAP]; /* the file read */
	struct cover c;
	struct score_side s;
};

/* A folder means its memberships.tsv. */
static int resolve(const char *arg, char *path)
{
	struct stat st;
	int dir = stat(arg, &st) == 0 && S_ISDIR(st.st_mode);
	char *in = dir ? result_file(arg, "memberships.tsv") : NULL; /* result_commit.h */
	if (dir && !in)
		return -1;
	int w = snprintf(path, PATH_CAP, "%s", in ? in : arg);
	free(in);
	if (w < 0 || w >= PATH_CAP) {
		char buf[256];
		return error("the file name is too long: %s", util_escape(arg, buf, sizeof buf, 1));
	}
	return 0;
}

static json_t *jside(const struct side *d)
{
	return json_pack("{s:o s:I s:I s:I s:I}", "file", jsonout_str(d->path), "communities",
			 (json_int_t)d->s.communities, "covered_nodes", (json_int_t)d->s.covered,
			 "overlapping_nodes", (json_int_t)d->s.overlapping, "only_in_this_file",
			 (json_int_t)d->s.only);
}

struct scores {
	double onmi_max, onmi_lfk, omega, f1, f1_tf, f1_ft, nmi;
	int partitions;
};

/* Nodes of the union that both files name. */
static uint32_t in_both(const struct side *t, const struct side *f, uint32_t n)
{
	return n - t->s.only - f->s.only;
}

static int print_json(const struct side *t, const struct side *f, uint32_t n,
		      const struct scores *sc)
{
	return jsonout_print(json_pack("{s:o s:o s:I s:I s:o s:o s:o s:o s:o s:o s:b s:o}",
		"truth", jside(t), "found", jside(f), "nodes", (json_int_t)n,
		"nodes_in_both", (json_int_t)in_both(t, f, n),
		"onmi_max", jsonout_real(sc->onmi_max), "onmi_lfk", jsonout_real(sc->onmi_lfk),
		"omega", jsonout_real(sc->omega), "f1", jsonout_real(sc->f1),
		"f1_truth_to_found", jsonout_real(sc->f1_tf),
		"f1_found_to_truth", jsonout_real(sc->f1_ft), "partitions", sc->partitions,
		"nmi", sc->partitions ? jsonout_real(sc->nmi) : json_null()), stdout, CLI_JSON_FLAGS);
}

/* Why plain NMI does not apply (the files hold every membership, so a
 * node of the union is in no community of a side only when it is
 * missing from that file). */
static const char *not_partitions(const struct side *t, const struct side *f)
{
	if (t->s.overlapping && f->s.overlapping)
		return "both files have nodes in two or more communities";
	if (t->s.overlapping)
		return "TRUTH has nodes in two or more communities";
	if (f->s.overlapping)
		return "FOUND has nodes in two or more communities";
	return "the files do not hold the same nodes";
}

static void print_text(const struct side *t, const struct side *f, uint32_t n,
		       const struct scores *sc, int ascii)
{
	char buf[PATH_CAP * 4];
	printf("truth  %s\n", util_escape(t->path, buf, sizeof buf, ascii));
	printf("found  %s\n\n", util_escape(f->path, buf, sizeof buf, ascii));
	printf("%-30s %10s %10s\n", "", "truth", "found");
	printf("%-30s %10" PRIu32 " %10" PRIu32 "\n", "communities", t->s.communities,
	       f->s.communities);
	printf("%-30s %10" PRIu32 " %10" PRIu32 "\n", "nodes in a community", t->s.covered,
	       f->s.covered);
	printf("%-30s %10" PRIu32 " %10" PRIu32 "\n", "nodes in two or more", t->s.overlapping,
	       f->s.overlapping);
	printf("%-30s %10" PRIu32 " %10" PRIu32 "\n", "nodes only in this file", t->s.only,
	       f->s.only);
	printf("%-30s %10" PRIu32 "\n", "nodes in either file (scored)", n);
	printf("%-30s %10" PRIu32 "\n\n", "nodes in both files", in_both(t, f, n));
	printf("%-30s %10.6f\n", "overlapping NMI, max form", sc->onmi_max);
	printf("%-30s %10.6f\n", "overlapping NMI, LFK form", sc->onmi_lfk);
	printf("%-30s %10.6f\n", "Omega index", sc->omega);
	printf("%-30s %10.6f\n", "F1, best match, average", sc->f1);
	printf("%-30s %10.6f\n", "  truth to found", sc->f1_tf);
	printf("%-30s %10.6f\n", "  found to truth", sc->f1_ft);
	if (sc->partitions)
		printf("%-30s %10.6f\n", "NMI (partitions)", sc->nmi);
	else
		printf("%-30s %10s  (%s)\n", "NMI (partitions)", "-", not_partitions(t, f));
}

/* Warn when a side reads like an edge list (cover_looks_like_edges()):
 * scored as a cover, it would give numbers that mean nothing. 0, or -1
 * with error(). */
static int warn_edge_list(const struct side *d, const char *which, const struct names *nodes)
{
	struct cover_edge_signs why;
	int r = cover_looks_like_edges(&d->c, nodes, &why);
	if (r <= 0)
		return r;
	char buf[PATH_CAP * 4];
	warning("%s '%s' looks like an edge list, not a cover: %" PRIu32 " of its %" PRIu32
		" community names are names of its nodes; a cover file holds node<TAB>community "
		"lines", which, util_escape(d->path, buf, sizeof buf, !proc_utf8()), why.named,
		why.labels);
	return 0;
}

int cmd_compare(int argc, char **argv)
{
	static const struct option opts[] = {
		{ "json", no_argument, NULL, OPT_JSON },
		{ "help", no_argument, NULL, 'h' },
		{ NULL, 0, NULL, 0 },
	};
	int json = 0, c;

	cli_getopt_reset();
	while ((c = getopt_long(argc, argv, ":h", opts, NULL)) != -1) {
		switch (c) {
		case OPT_JSON: json = 1; break;
		case 'h': compare_usage(stdout); return 0;
		default:
			cli_option_error(c, argv);
			compare_usage_short(stderr);
			return EXIT_USAGE;
		}
	}
	if (argc - optind != 2) {
		error("compare takes two covers, TRUTH and FOUND, not %d argument%s",
		      argc - optind, argc - optind == 1 ? "" : "s");
		compare_usage_short(stderr);
		return EXIT_USAGE;
	}

	struct side *t = calloc(1, sizeof *t), *f = calloc(1, sizeof *f);
	struct names *nodes = names_new(0);
	int rc = 1;
	if (!t || !f || !nodes) {
		error("out of memory");
		goto out;
	}
	if (resolve(argv[optind], t->path) || resolve(argv[optind + 1], f->path))
		goto out;
	if (cover_read(&t->c, t->path, nodes) || cover_read(&f->c, f->path, nodes))
		goto out;
	uint32_t n = names_count(nodes);
	t->c.n = f->c.n = n; /* both over the union of the nodes */
	if (warn_edge_list(t, "TRUTH", nodes) || warn_edge_list(f, "FOUND", nodes))
		goto out;

	struct scores sc;
	memset(&sc, 0, sizeof sc);
	if (score_sides(&t->c, &f->c, &t->s, &f->s))
		goto out;
	sc.onmi_max = score_onmi_max(&t->c, &f->c);
	sc.onmi_lfk = score_onmi_lfk(&t->c, &f->c);
	int om = score_omega(&t->c, &f->c, &sc.omega);
	sc.f1 = score_f1(&t->c, &f->c, &sc.f1_tf, &sc.f1_ft);
	int p = score_nmi(&t->c, &f->c, &sc.nmi);
	if (sc.onmi_max < 0 || sc.onmi_lfk < 0 || om < 0 || sc.f1 < 0 || p < 0)
		goto out;
	sc.partitions = p == 1;

	if (json) {
		if (print_json(t, f, n, &sc))
			goto out;
	} else {
		print_text(t, f, n, &sc, !proc_utf8());
	}
	if (fflush(stdout) || ferror(stdout)) {
		error("cannot write the output: %s", strerror(errno));
		goto out;
	}
	rc = 0;
out:
	if (t)
		cover_release(&t->c);
	if (f)
		cover_release(&f->c);
	free(t);
	free(f);
	names_free(nodes);
	return rc;
}
