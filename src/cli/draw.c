/*
 * cli/draw: `coterie draw KIND DIR... -o FILE`: a figure of result
 * folders for a paper, as PDF, SVG or PNG (figure.h draws it).
 *
 * The kind names what is drawn and so which file of the folder is read;
 * a folder without that file is refused naming the file and what writes
 * it. The format is FILE's extension unless --format says otherwise, so
 * `-o fig.pdf` just works and `-o fig --format svg` too.
 *
 * Exit status: 0, 1 (a file missing or malformed, the figure not
 * written), 2 (bad usage).
 */
#include <getopt.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "cli.h"
#include "coterie/figure.h"

enum kind { KIND_TRACE, KIND_HELDOUT, KIND_SIZES, KIND_MEMBERSHIPS, KIND_AGREEMENT };

static const char *const kind_names[] = { "trace", "heldout", "sizes", "memberships",
					   "agreement" };

/* The usage line, and with full the whole help text. */
static void draw_usage(FILE *out, int full)
{
	fprintf(out, "usage: coterie draw KIND DIR... -o FILE [--format pdf|svg|png] [--dpi N]\n");
	if (!full)
		return;
	fprintf(out,
		"\n"
		"Draw a figure of the result folder DIR for a paper: one column wide (85 mm),\n"
		"text of 7 pt or more, colours that read in greyscale and for colour-blind\n"
		"readers. The format is FILE's extension (.pdf, .svg, .png) or --format.\n"
		"\n"
		"kinds:\n"
		"  trace        the log-likelihood after each sweep, with the seeded start,\n"
		"               the kept reseeding moves and the first plateau (trace.tsv)\n"
		"  heldout      the held-out log-likelihood of each k that -k auto scored,\n"
		"               its spread over held-out splits and the k chosen\n"
		"               (k-selection.tsv)\n"
		"  sizes        the community sizes, log-log: how many communities have s\n"
		"               members or more (memberships.tsv)\n"
		"  memberships  how many nodes are in 0, 1, 2, ... communities\n"
		"               (memberships.tsv, and run.json for the nodes in none)\n"
		"  agreement    two or more folders of one graph: with two, the Jaccard\n"
		"               index of every community of the first with every community\n"
		"               of the second; with more, for each pair of runs the mean\n"
		"               best-match Jaccard of the row run's communities\n"
		"\n"
		"  -o, --output FILE   the figure to write (replaced whole)\n"
		"      --format F      pdf, svg or png, whatever FILE's extension\n"
		"      --dpi N         PNG pixels per inch, 72 to 1200 (default %.0f: a figure\n"
		"                      of 85 x 63.5 mm is 1000 x 750 pixels)\n"
		"  -h, --help          this text\n",
		FIGURE_DPI_DEFAULT);
}

enum { OPT_FORMAT = 256, OPT_DPI };

/* Parse the options into o and *out; the operands stay at argv[optind..].
 * Returns -1 to go on, or the exit status. */
static int draw_parse(int argc, char **argv, struct figure_opts *o, const char **out)
{
	static const struct option opts[] = {
		{ "output", required_argument, NULL, 'o' },
		{ "format", required_argument, NULL, OPT_FORMAT },
		{ "dpi", required_argument, NULL, OPT_DPI },
		{ "help", no_argument, NULL, 'h' },
		{ NULL, 0, NULL, 0 },
	};
	const char *format = NULL;
	int c;
	cli_getopt_reset();
	while ((c = getopt_long(argc, argv, ":ho:", opts, NULL)) != -1) {
		switch (c) {
		case 'o': *out = optarg; break;
		case OPT_FORMAT: format = optarg; break;
		case OPT_DPI: o->dpi = cli_double("--dpi", optarg, 72, 1200); break;
		case 'h': draw_usage(stdout, 1); return 0;
		default: return cli_option_usage(c, argv, "draw");
		}
	}
	char buf[512];
	if (!*out) {
		error("draw needs the file to write: -o FILE");
		draw_usage(stderr, 0);
		return EXIT_USAGE;
	}
	if (format && figure_format_of_name(format, &o->format)) {
		error("--format expects pdf, svg or png, not '%s'", util_escape(format, buf, sizeof buf, 1));
		return EXIT_USAGE;
	}
	if (!format && figure_format_of_path(*out, &o->format)) {
		error("cannot tell the format of '%s': name it .pdf, .svg or .png, or give --format",
		      util_escape(*out, buf, sizeof buf, 1));
		return EXIT_USAGE;
	}
	return -1;
}

/* The kind named s: 0 and *k set, or -1. */
static int kind_of(const char *s, enum kind *k)
{
	for (size_t i = 0; i < sizeof kind_names / sizeof kind_names[0]; i++)
		if (!strcmp(s, kind_names[i])) {
			*k = (enum kind)i;
			return 0;
		}
	return -1;
}

static int draw_one(enum kind k, const char *dir, const char *out, const struct figure_opts *o)
{
	/* each kind reads then draws; the releases are no-ops on what a kind
	 * did not read (the readers zero their output, also on failure) */
	struct figure_trace t = { 0 };
	struct figure_kcurve kc = { 0 };
	struct figure_counts c = { 0 };
	int rc = -1;
	switch (k) {
	case KIND_TRACE: rc = figure_read_trace(dir, &t) ? -1 : figure_draw_trace(out, o, &t); break;
	case KIND_HELDOUT:
		rc = figure_read_kcurve(dir, &kc) ? -1 : figure_draw_kcurve(out, o, &kc);
		break;
	case KIND_SIZES:
		rc = figure_read_counts(dir, &c, NULL) ? -1 : figure_draw_sizes(out, o, &c);
		break;
	case KIND_MEMBERSHIPS:
		rc = figure_read_counts(dir, NULL, &c) ? -1 : figure_draw_memberships(out, o, &c);
		break;
	case KIND_AGREEMENT: break;
	}
	figure_trace_release(&t);
	figure_kcurve_release(&kc);
	figure_counts_release(&c);
	return rc;
}

int cmd_draw(int argc, char **argv)
{
	struct figure_opts o = { .format = FIGURE_PDF, .dpi = FIGURE_DPI_DEFAULT };
	const char *out = NULL;
	int st = draw_parse(argc, argv, &o, &out);
	if (st >= 0)
		return st;
	char buf[512];
	enum kind k;
	if (optind >= argc) {
		error("draw needs a kind of figure and a result folder");
		draw_usage(stderr, 0);
		return EXIT_USAGE;
	}
	if (kind_of(argv[optind], &k)) {
		error("unknown kind of figure '%s': trace, heldout, sizes, memberships or agreement",
		      util_escape(argv[optind], buf, sizeof buf, 1));
		return EXIT_USAGE;
	}
	int ndirs = argc - optind - 1;
	if (k == KIND_AGREEMENT ? ndirs < 2 : ndirs != 1) {
		if (k == KIND_AGREEMENT)
			error("draw agreement takes two result folders or more, not %d", ndirs);
		else
			error("draw %s takes one result folder, not %d", kind_names[k], ndirs);
		draw_usage(stderr, 0);
		return EXIT_USAGE;
	}
	int rc;
	if (k != KIND_AGREEMENT) {
		rc = draw_one(k, argv[optind + 1], out, &o);
	} else {
		struct figure_matrix m;
		rc = figure_agreement((const char *const *)argv + optind + 1, (uint32_t)ndirs, &m);
		if (!rc)
			rc = figure_draw_matrix(out, &o, &m);
		figure_matrix_release(&m);
	}
	figure_release_caches();
	return rc ? 1 : 0;
}
