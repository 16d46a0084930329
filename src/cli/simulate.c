/*
 * cli/simulate: `coterie simulate [options] -o DIR`.
 *
 * Parses the options into struct simulate_params, refuses a folder that
 * already holds a planted graph (unless --force), samples, writes, and
 * says what it made. All the work is in src/simulate.c. An interrupt
 * while sampling ends the process at once (nothing is written yet); one
 * while writing is held until the files are in place, then exits 130.
 */
#include <getopt.h>
#include <inttypes.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "cli.h"
#include "coterie/result.h"
#include "coterie/simulate.h"

static void simulate_usage(FILE *out)
{
	fprintf(out,
		"usage: coterie simulate -o DIR [options]\n"
		"\n"
		"Sample a graph from a planted affiliation graph model (AGM) and write\n"
		"DIR/edges.tsv, DIR/truth.tsv, DIR/planted.tsv and DIR/simulate.json.\n"
		"A pair sharing communities S is linked with probability\n"
		"1 - (1 - epsilon) * prod over S of (1 - p_c).\n"
		"\n"
		"  -n, --nodes N           nodes (default 1000)\n"
		"  -k, --communities N     communities (default: as many as the\n"
		"                          memberships fill)\n"
		"      --sizes MIN:MAX     community sizes (default 10:100, MAX at most N)\n"
		"      --size-exponent X   sizes from a power law ~ s^-X (default 2)\n"
		"      --overlap X         share of nodes in two or more communities\n"
		"                          (default 0.1)\n"
		"      --max-memberships N those nodes are in 2 to N, uniformly (default 2)\n"
		"      --link-prob P|A:B   p_c of every community, or uniform in [A, B]; used\n"
		"                          as given unless --mean-degree is given too (then\n"
		"                          they are weights; default 1)\n"
		"      --mean-degree D     scale every p_c by one factor so that the expected\n"
		"                          mean degree is D (default 10, unless --link-prob\n"
		"                          is given; 0: off)\n"
		"      --even-degrees      also divide each p_c by (size - 1), so every\n"
		"                          membership brings as many neighbours (needs\n"
		"                          --mean-degree)\n"
		"      --epsilon X         background link probability (default 0)\n"
		"      --mixing X          share of the edges that are background edges,\n"
		"                          in [0, 1): the p_c are scaled so the communities\n"
		"                          expect (1 - X) of the mean degree, and epsilon is\n"
		"                          solved for the rest (needs a mean degree; not\n"
		"                          with --epsilon); simulate.json records both\n"
		"      --weighted          give each edge a weight: its count under the Poisson\n"
		"                          model of the planted rates (Ball, Karrer & Newman\n"
		"                          2011), given that it is above zero; a third column\n"
		"                          (with --directed or --two-mode, of every arc or link)\n"
		"      --directed          arcs: each direction of a pair drawn on its own with\n"
		"                          the pair's probability (for fit --directed)\n"
		"      --two-mode M        two kinds of node (for fit --two-mode): -n nodes of\n"
		"                          the first kind, M of the second (named after the\n"
		"                          first: ids N .. N+M-1); every community holds both\n"
		"                          kinds; only pairs of two kinds are linked; the\n"
		"                          sizes, mean degree and mixing count all nodes\n"
		"      --prefix STR        node names STR0, STR1, ... (default: 0, 1, ...)\n"
		"  -o, --output DIR        folder to write (made if missing; required)\n"
		"      --force             replace a planted graph already in DIR\n"
		"  -j, --threads N         threads (default: every core); same result\n"
		"      --seed N            random seed (default 1); same seed, same bytes\n"
		"  -q, --quiet             no notices\n"
		"  -h, --help              this text\n");
}

/* "A:B" or "A" into lo, hi (a single value gives lo == hi). */
static void parse_range_double(const char *opt, const char *arg, double lo_bound, double hi_bound,
			       double *lo, double *hi)
{
	const char *colon = strchr(arg, ':');
	if (!colon) {
		*lo = *hi = cli_double(opt, arg, lo_bound, hi_bound);
		return;
	}
	char a[64], b[64];
	if (colon - arg >= (long)sizeof a || strlen(colon + 1) >= sizeof b)
		die(EXIT_USAGE, "%s expects P or LOW:HIGH", opt);
	memcpy(a, arg, (size_t)(colon - arg));
	a[colon - arg] = '\0';
	strcpy(b, colon + 1);
	*lo = cli_double(opt, a, lo_bound, hi_bound);
	*hi = cli_double(opt, b, *lo, hi_bound);
}

static void parse_sizes(const char *arg, uint32_t *lo, uint32_t *hi)
{
	const char *colon = strchr(arg, ':');
	char a[32], b[32];
	if (!colon || colon - arg >= (long)sizeof a || strlen(colon + 1) >= sizeof b)
		die(EXIT_USAGE, "--sizes expects MIN:MAX, e.g. 10:100");
	memcpy(a, arg, (size_t)(colon - arg));
	a[colon - arg] = '\0';
	strcpy(b, colon + 1);
	*lo = cli_u32("--sizes", a, 2, SIMULATE_MAX_NODES);
	*hi = cli_u32("--sizes", b, *lo, SIMULATE_MAX_NODES);
}

enum {
	OPT_SIZES = CLI_OPT_OWN,
	OPT_SIZE_EXPONENT,
	OPT_OVERLAP,
	OPT_MAX_MEMBERSHIPS,
	OPT_LINK_PROB,
	OPT_MEAN_DEGREE,
	OPT_PREFIX,
	OPT_FORCE,
	OPT_EVEN_DEGREES,
	OPT_MIXING,
	OPT_WEIGHTED,
	OPT_DIRECTED,
	OPT_TWO_MODE,
};

/* The command line. */
struct sim_args {
	struct simulate_params p;
	const char *out, *prefix;
	int quiet, force;
};

/* Parse the command line into a. Returns -1 to go on, else the exit
 * status (--help, a bad option; a bad value exits 2 at once). */
static int parse_args(struct sim_args *a, int argc, char **argv)
{
	static const struct option opts[] = {
		{ "nodes", required_argument, NULL, 'n' },
		{ "communities", required_argument, NULL, 'k' },
		{ "sizes", required_argument, NULL, OPT_SIZES },
		{ "size-exponent", required_argument, NULL, OPT_SIZE_EXPONENT },
		{ "overlap", required_argument, NULL, OPT_OVERLAP },
		{ "max-memberships", required_argument, NULL, OPT_MAX_MEMBERSHIPS },
		{ "link-prob", required_argument, NULL, OPT_LINK_PROB },
		{ "mean-degree", required_argument, NULL, OPT_MEAN_DEGREE },
		{ "even-degrees", no_argument, NULL, OPT_EVEN_DEGREES },
		{ "epsilon", required_argument, NULL, CLI_OPT_EPSILON },
		{ "mixing", required_argument, NULL, OPT_MIXING },
		{ "weighted", no_argument, NULL, OPT_WEIGHTED },
		{ "directed", no_argument, NULL, OPT_DIRECTED },
		{ "two-mode", required_argument, NULL, OPT_TWO_MODE },
		{ "prefix", required_argument, NULL, OPT_PREFIX },
		{ "output", required_argument, NULL, 'o' },
		{ "force", no_argument, NULL, OPT_FORCE },
		{ "threads", required_argument, NULL, 'j' },
		{ "seed", required_argument, NULL, CLI_OPT_SEED },
		{ "quiet", no_argument, NULL, 'q' },
		{ "help", no_argument, NULL, 'h' },
		{ NULL, 0, NULL, 0 },
	};
	struct simulate_params *p = &a->p;
	simulate_params_default(p);
	long cores = sysconf(_SC_NPROCESSORS_ONLN);
	p->threads = cores > 0 ? (unsigned)(cores > 256 ? 256 : cores) : 1;
	a->prefix = "";
	int have_sizes = 0, have_link = 0, have_degree = 0, have_eps = 0;
	int c;
	cli_getopt_reset();
	while ((c = getopt_long(argc, argv, ":n:k:o:j:qh", opts, NULL)) != -1) {
		switch (c) {
		case 'n': p->n = cli_u32("-n", optarg, 2, SIMULATE_MAX_NODES); break;
		case 'k': p->k = cli_u32("-k", optarg, 1, SIMULATE_MAX_NODES); break;
		case OPT_SIZES:
			parse_sizes(optarg, &p->size_min, &p->size_max);
			have_sizes = 1;
			break;
		case OPT_SIZE_EXPONENT:
			p->size_exponent = cli_double("--size-exponent", optarg, 0.0, 100.0);
			break;
		case OPT_OVERLAP: p->overlap = cli_double("--overlap", optarg, 0.0, 1.0); break;
		case OPT_MAX_MEMBERSHIPS:
			p->max_memberships = cli_u32("--max-memberships", optarg, 2,
						     SIMULATE_MAX_MEMBERSHIPS);
			break;
		case OPT_LINK_PROB:
			parse_range_double("--link-prob", optarg, 0.0, 1.0, &p->p_lo, &p->p_hi);
			have_link = 1;
			break;
		case OPT_MEAN_DEGREE:
			p->mean_degree = cli_double("--mean-degree", optarg, 0.0, 2e9);
			have_degree = 1;
			break;
		case OPT_EVEN_DEGREES: p->even_degrees = 1; break;
		case CLI_OPT_EPSILON:
			p->epsilon = cli_double("--epsilon", optarg, 0.0, 0.999);
			have_eps = 1;
			break;
		case OPT_MIXING: p->mixing = cli_double("--mixing", optarg, 0.0, 0.999); break;
		case OPT_WEIGHTED: p->weighted = 1; break;
		case OPT_DIRECTED: p->directed = 1; break;
		case OPT_TWO_MODE:
			p->second = cli_u32("--two-mode", optarg, 1, SIMULATE_MAX_NODES);
			break;
		case OPT_PREFIX: a->prefix = optarg; break;
		case 'o': a->out = optarg; break;
		case OPT_FORCE: a->force = 1; break;
		case 'j': p->threads = cli_u32("-j", optarg, 1, 256); break;
		case CLI_OPT_SEED: p->seed = cli_u64("--seed", optarg); break;
		case 'q': a->quiet = 1; break;
		case 'h': simulate_usage(stdout); return 0;
		default: return cli_option_usage(c, argv, "simulate");
		}
	}
	if (optind < argc) {
		char buf[256];
		die(EXIT_USAGE, "simulate takes no file argument ('%s'); the output is -o DIR",
		    util_escape(argv[optind], buf, sizeof buf, 1));
	}
	if (!a->out)
		die(EXIT_USAGE, "simulate needs an output folder: -o DIR");
	/* --link-prob alone means the p_c as given; with --mean-degree, weights */
	if (have_link && !have_degree && !p->even_degrees)
		p->mean_degree = 0.0;
	if (p->mixing >= 0.0 && have_eps)
		die(EXIT_USAGE, "--mixing and --epsilon cannot both be given: --mixing solves epsilon");
	if (p->mixing >= 0.0 && !(p->mean_degree > 0.0))
		die(EXIT_USAGE, "--mixing needs a mean degree to share out (--mean-degree D, above 0)");
	if (!have_sizes) {
		uint64_t all = (uint64_t)p->n + p->second;
		if (p->size_max > all)
			p->size_max = (uint32_t)all;
		if (p->size_min > p->size_max)
			p->size_min = p->size_max;
	}
	if (simulate_prefix_check(a->prefix) || simulate_params_check(p))
		return EXIT_USAGE;
	return -1;
}

static void say_planted(const struct simulate *s, const struct simulate_params *p,
			const char *out, double seconds, double t_written)
{
	char buf[512], on[96];
	uint64_t written = s->m + s->mback; /* directed: both directions */
	if (s->n1)
		snprintf(on, sizeof on, "%u + %u nodes of two kinds", s->n1, s->n - s->n1);
	else
		snprintf(on, sizeof on, "%u nodes", s->n);
	notice("planted %u communities (%" PRIu64 " memberships, %" PRIu64
	       " nodes in two or more) on %s and drew %" PRIu64
	       " %s (expected %.1f, mean %s %.3g) in %.1f s; written to '%s' in %.1f s",
	       s->k, s->truth.off[s->k], s->overlapping, on, written,
	       s->back ? "arcs" : s->n1 ? "links" : "edges", s->expected_edges,
	       s->back ? "out-degree" : "degree", (s->back ? 1.0 : 2.0) * (double)written / s->n,
	       seconds, util_escape(out, buf, sizeof buf, 1), util_now() - t_written);
	if (p->mixing >= 0.0)
		notice("mixing %g: background epsilon %.6g; %.4f of the edges drawn by the "
		       "background alone (expected %.4f), %.4f join nodes sharing no community",
		       p->mixing, s->epsilon, written ? (double)s->background_only / written : 0.0,
		       s->expected_edges > 0.0 ? (s->expected_edges - s->expected_community_edges) /
						  s->expected_edges : 0.0,
		       written ? (double)s->outside_edges / written : 0.0);
	if (s->isolated)
		notice("%" PRIu64 " nodes have no edge and are absent from '%s'", s->isolated,
		       SIMULATE_EDGES);
}

int cmd_simulate(int argc, char **argv)
{
	struct sim_args a = { 0 };
	struct simulate s = { 0 };
	int rc = parse_args(&a, argc, argv);
	if (rc >= 0)
		return rc;
	rc = 1;
	util_set_quiet(a.quiet);
	if (!a.force && simulate_dir_taken(a.out)) {
		char buf[512];
		error("'%s' already holds a planted graph; use --force to replace it",
		      util_escape(a.out, buf, sizeof buf, 1));
		goto out;
	}
	if (result_prepare_dir(a.out))
		goto out;
	double t0 = util_now();
	if (simulate_run(&a.p, &s))
		goto out;
	double t1 = util_now();
	struct simulate_meta meta = { proc_command_line(), a.prefix, t1 - t0 };
	/* an interrupt while sampling ends the process (nothing is written yet);
	 * while writing it waits, so no temporary file is left behind */
	if (proc_signals_install() || simulate_write(a.out, &s, &a.p, &meta))
		goto out;
	if (!a.quiet)
		say_planted(&s, &a.p, a.out, t1 - t0, t1);
	rc = 0;
	if (proc_signal_caught()) {
		notice("interrupted; the planted graph was written first");
		rc = EXIT_INTERRUPTED;
	}
out:
	simulate_release(&s);
	return rc;
}
