/* cli/common: die(), option numbers and the options fit and explore share. */
#include "cli.h"

#include <errno.h>
#include <getopt.h>
#include <inttypes.h>
#include <locale.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>
#include <unistd.h>

#include <igraph.h>

#include "coterie/memory.h"

void die(int status, const char *fmt, ...)
{
	char msg[2048];
	va_list ap;
	proc_run_exit_hook();
	va_start(ap, fmt);
	vsnprintf(msg, sizeof msg, fmt, ap);
	va_end(ap);
	util_set_sink(NULL);
	error("%s", msg);
	exit(status);
}

uint32_t cli_u32(const char *opt, const char *s, uint32_t lo, uint32_t hi)
{
	char *end;
	errno = 0;
	unsigned long long v = strtoull(s, &end, 10);
	if (errno || end == s || *end || s[0] == '-' || v < lo || v > hi)
		die(EXIT_USAGE, "%s expects a whole number from %u to %u, not '%s'", opt, lo, hi, s);
	return (uint32_t)v;
}

uint64_t cli_u64(const char *opt, const char *s)
{
	char *end;
	errno = 0;
	unsigned long long v = strtoull(s, &end, 10);
	if (errno || end == s || *end || s[0] == '-')
		die(EXIT_USAGE, "%s expects a whole number, not '%s'", opt, s);
	return (uint64_t)v;
}

double cli_double(const char *opt, const char *s, double lo, double hi)
{
	char *end;
	errno = 0;
	double v = strtod(s, &end);
	if (errno || end == s || *end || !isfinite(v) || v < lo || v > hi)
		die(EXIT_USAGE, "%s expects a number from %g to %g, not '%s'", opt, lo, hi, s);
	return v;
}

void cli_option_error(int c, char **argv)
{
	char buf[256];
	if (c == ':')
		error("option '%s' needs a value", util_escape(argv[optind - 1], buf, sizeof buf, 1));
	else if (optopt && optopt != '?')
		error("unknown option '-%c'", (optopt > 32 && optopt < 127) ? optopt : '?');
	else
		error("unknown option '%s'", util_escape(argv[optind - 1], buf, sizeof buf, 1));
}

void cli_getopt_reset(void)
{
	optind = 1;
	opterr = 0;
}

int cli_option_usage(int c, char **argv, const char *cmd)
{
	cli_option_error(c, argv);
	fprintf(stderr, "try 'coterie %s --help'\n", cmd);
	return EXIT_USAGE;
}

int cli_graph_fittable(const struct graph *g, const char *path)
{
	if (g->m > 0)
		return 0;
	char shown[512];
	if (!strcmp(path, "-"))
		snprintf(shown, sizeof shown, "stdin");
	else
		util_escape(path, shown, sizeof shown, 1);
	const struct graph_report *r = &g->report;
	if (r->format != GRAPH_FORMAT_EDGES)
		return error("%s: expected at least one edge, found %" PRIu32 " node%s and none",
			     shown, g->n, g->n == 1 ? "" : "s");
	if (r->lines == 0)
		return error("%s:1: expected two node names, found an empty file", shown);
	if (r->self_loops)
		return error("%s:%" PRIu64 ": expected an edge between two different nodes, found "
			     "the end of the file after only self-loops", shown, r->lines + 1);
	return error("%s:%" PRIu64 ": expected two node names, found the end of the file after "
		     "%" PRIu64 " line%s of %s", shown, r->lines + 1, r->lines,
		     r->lines == 1 ? "" : "s",
		     r->skipped_lines ? "skipped lines, comments and blanks"
		     : r->header_line ? "header, comments and blanks" : "comments and blanks");
}

void cli_k_fits(uint32_t k, const struct graph *g)
{
	if (k > g->n)
		die(EXIT_USAGE, "-k %" PRIu32 " asks for more communities than the graph has nodes "
		    "(%" PRIu32 ")", k, g->n);
}

void cli_fit_opts_init(struct cli_fit_opts *o)
{
	memset(o, 0, sizeof *o);
	fit_params_default(&o->p);
	long cores = sysconf(_SC_NPROCESSORS_ONLN);
	o->p.threads = cores > 0 ? (unsigned)(cores > 256 ? 256 : cores) : 1;
	o->fmt = GRAPH_FORMAT_AUTO;
	o->sp.share = 0.1;
	o->sp.step = 1.25;
}

int cli_fit_getopt(struct cli_fit_opts *o, int argc, char **argv, const char *shortopts,
		   const struct option *opts)
{
	int c;
	while ((c = getopt_long(argc, argv, shortopts, opts, NULL)) != -1)
		if (!cli_fit_opts_take(o, c, optarg))
			break;
	return c;
}

int cli_fit_opts_take(struct cli_fit_opts *o, int c, const char *arg)
{
	struct fit_params *p = &o->p;
	switch (c) {
	case 'o': o->out = arg; return 1;
	case 'k':
		if (!strcmp(arg, "auto"))
			o->k_auto = 1;
		else
			p->k = cli_u32("-k", arg, 1, MODEL_MAX_K);
		o->have_k = 1;
		return 1;
	case CLI_OPT_K_GRID:
		if (select_grid_parse(arg, &o->sp))
			exit(EXIT_USAGE); /* select_grid_parse() said why */
		o->have_grid = 1;
		return 1;
	case CLI_OPT_HOLDOUT: o->sp.share = cli_double("--holdout", arg, 0.01, 0.5); return 1;
	case CLI_OPT_CHECKPOINT_EVERY:
		o->checkpoint_every = cli_double("--checkpoint-every", arg, 0.1, 1e9);
		return 1;
	case 'j': p->threads = cli_u32("-j", arg, 1, 256); return 1;
	case CLI_OPT_SEED: p->seed = cli_u64("--seed", arg); o->have_seed = 1; return 1;
	case CLI_OPT_TOL: p->tol = cli_double("--tol", arg, 0.0, 1.0); o->have_tol = 1; return 1;
	case CLI_OPT_PATIENCE:
		p->patience = cli_u32("--patience", arg, 1, 1000);
		o->have_pat = 1;
		return 1;
	case CLI_OPT_MAX_SWEEPS:
		p->max_sweeps = cli_u32("--max-sweeps", arg, 0, 100000000);
		o->have_max = 1;
		return 1;
	case CLI_OPT_EPSILON:
		p->epsilon = cli_double("--epsilon", arg, 1e-300, 0.5);
		o->have_eps = 1;
		return 1;
	case CLI_OPT_FORMAT:
		if (graph_format_parse(arg, &o->fmt))
			exit(EXIT_USAGE); /* graph_format_parse() said why */
		return 1;
	case CLI_OPT_STARTS:
		p->starts = cli_u32("--starts", arg, 1, 1000);
		o->have_starts = 1;
		return 1;
	case CLI_OPT_NO_RESEED: p->no_reseed = 1; return 1;
	case CLI_OPT_SEEDING:
		if (seed_kind_parse(arg, &p->seeding))
			exit(EXIT_USAGE); /* seed_kind_parse() said why */
		o->have_seeding = 1;
		return 1;
	case CLI_OPT_SKIP_LINES:
		o->skip_lines = cli_u64("--skip-lines", arg);
		o->no_header = 1; /* the user said where the edges start */
		return 1;
	case CLI_OPT_NO_HEADER: o->no_header = 1; return 1;
	case CLI_OPT_WEIGHT_ATTR:
	case CLI_OPT_WEIGHTED:
		if (c == CLI_OPT_WEIGHT_ATTR) /* naming the attribute asks for the weights */
			o->weight_attr = arg;
		o->weighted = 1;
		p->model = model_kind_with_weights(p->model); /* Poisson, one- or two-sided */
		return 1;
	case CLI_OPT_DIRECTED:
	case CLI_OPT_TWO_MODE: {
		enum model_kind want = c == CLI_OPT_DIRECTED ? MODEL_DIRECTED : MODEL_TWO_MODE;
		if (o->weighted)
			want = model_kind_with_weights(want);
		if (o->sided && p->model != want)
			die(EXIT_USAGE, "--directed and --two-mode exclude each other");
		o->sided = 1;
		p->model = want;
		return 1;
	}
	default: return 0;
	}
}

int cli_fit_opts_grid(struct cli_fit_opts *o, const struct graph *g, uint32_t *minima)
{
	struct select_params dflt;
	if (select_params_default(&dflt, g, minima))
		return -1;
	if (!o->have_grid) {
		o->sp.kmin = dflt.kmin;
		o->sp.kmax = dflt.kmax;
		o->sp.step = dflt.step;
		o->sp.nlist = 0;
	}
	if (!o->have_grid) { /* where a search by the shape begins; else mid-grid */
		o->sp.start = dflt.start;
		o->sp.start_clusters = dflt.start_clusters;
	}
	return 0;
}

struct graph *cli_graph_load(const struct cli_fit_opts *o, const char *path)
{
	struct graph_load_opts lo = { .fmt = o->fmt, .skip_lines = o->skip_lines,
				      .no_header = o->no_header, .weighted = o->weighted,
				      .weight_attr = o->weight_attr,
				      .directed = model_kind_directed(o->p.model),
				      .two_mode = model_kind_sided(o->p.model) &&
						  !model_kind_directed(o->p.model) };
	return graph_load_with(path, &lo);
}

void cli_fit_opts_starts(struct cli_fit_opts *o, uint64_t m)
{
	if (!o->have_starts)
		o->p.starts = m < CLI_MANY_STARTS_BELOW ? 3 : 1;
}

void cli_fit_opts_resume(const struct cli_fit_opts *o, const struct fit_params *saved,
			 const char *when, struct fit_params *out)
{
	if (o->have_k && o->p.k != saved->k)
		die(EXIT_USAGE, "the saved fit has %u communities; -k %u cannot change that",
		    saved->k, o->p.k);
	if (o->have_eps && o->p.epsilon != saved->epsilon)
		die(EXIT_USAGE, "--epsilon cannot change %s", when);
	if (o->have_seeding && o->p.seeding != saved->seeding)
		die(EXIT_USAGE, "the saved fit seeds by %s; --seeding cannot change that %s",
		    seed_kind_name(saved->seeding), when);
	if (o->weighted && !model_kind_weighted(saved->model))
		die(EXIT_USAGE, "the saved fit is of the %s model; --weighted cannot change that %s",
		    model_kind_name(saved->model), when);
	if (o->sided && (!model_kind_sided(saved->model) ||
			 model_kind_directed(saved->model) != model_kind_directed(o->p.model)))
		die(EXIT_USAGE, "the saved fit is of the %s model; --%s cannot change that %s",
		    model_kind_name(saved->model),
		    model_kind_directed(o->p.model) ? "directed" : "two-mode", when);
	if (o->have_seed && o->p.seed != saved->seed)
		warning("--seed is ignored %s; the fit keeps seed %llu", when,
			(unsigned long long)saved->seed);
	*out = *saved;
	out->threads = o->p.threads; /* this machine's choice, not the saved one */
	out->no_reseed = saved->no_reseed || o->p.no_reseed;
	out->past_plateau = saved->past_plateau || o->p.past_plateau;
	if (o->have_tol)
		out->tol = o->p.tol;
	if (o->have_pat)
		out->patience = o->p.patience;
	if (o->have_max)
		out->max_sweeps = o->p.max_sweeps;
}

void cli_model_can(const struct fit_params *p, int refine)
{
	if (p->model != MODEL_BIGCLAM && refine)
		die(EXIT_USAGE, "--refine is for the unweighted, undirected model only: its moves "
				"are those of the AGM, whose links have no weight and no direction "
				"(the %s model's do)", model_kind_name(p->model));
}

int cli_main_begin(int argc, char **argv, const char *program, void (*usage)(FILE *out))
{
	setlocale(LC_ALL, "");
	memory_limit_arenas();
	igraph_set_error_handler(igraph_error_handler_printignore);
	igraph_set_warning_handler(igraph_warning_handler_ignore);
	proc_set_command_line(argc, argv);
	if (argc < 2) {
		usage(stderr);
		return EXIT_USAGE;
	}
	if (!strcmp(argv[1], "--help") || !strcmp(argv[1], "-h") || !strcmp(argv[1], "help")) {
		usage(stdout);
		return 0;
	}
	if (!strcmp(argv[1], "--version") || !strcmp(argv[1], "-V")) {
		printf("%s %s\n", program, COTERIE_VERSION);
		return 0;
	}
	return -1;
}
