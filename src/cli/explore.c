/*
 * cli/explore: `coterie explore GRAPH -k N` and `coterie explore DIR`.
 *
 * Reads the command line, loads the graph (or the checkpoint of a result
 * folder, which holds the graph), makes the fit and hands everything to
 * the explorer (src/tui). A graph is fitted in the background with
 * hold_at_plateau set, so the fit waits at a plateau for the user to run
 * it on or end it. A result folder is shown as saved, without refitting;
 * --resume (or 'e' in the explorer) continues its fit.
 *
 * Where results go: -o DIR; else for a folder, the folder itself; else
 * ./NAME.coterie in the current folder (NAME from the graph file, or its
 * folder for names like edges.tsv, with a -2, -3, ... suffix when that
 * folder exists and is not empty). Nothing is
 * written until the user asks, quits with unsaved work, or a signal comes.
 * As with `coterie fit`, a folder that holds the result of another graph
 * is refused at start, before any fitting, unless --force.
 */
#include <dirent.h>
#include <getopt.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "../tui/keys.h"
#include "../tui/tui.h"
#include "cli.h"
#include "coterie/background.h"
#include "coterie/atomicfile.h"
#include "coterie/fit.h"
#include "coterie/follow.h"
#include "coterie/graph.h"
#include "coterie/memory.h"
#include "coterie/outdir.h"
#include "coterie/result.h"
#include "coterie/result_commit.h"
#include "coterie/result_cover.h"
#include "coterie/select.h"

static void explore_usage(FILE *out)
{
	fprintf(out,
		"usage: coterie explore GRAPH -k N|auto [options]\n"
		"       coterie explore DIR [--resume] [options]\n"
		"\n"
		"Fit N overlapping communities to GRAPH in the background and browse them\n"
		"while the likelihood climbs; or browse the result saved in DIR.\n"
		"\n"
		"  -k, --communities N   number of communities to fit (required for a graph);\n"
		"                        'auto' chooses it by held-out likelihood first,\n"
		"                        showing each k's score as it comes (see --k-grid)\n"
		"      --k-grid G        the k tried by -k auto: A:B, A:B:RATIO or a list\n"
		"                        such as 4,8,16 (default: 2 up to a bound from the graph)\n"
		"      --holdout X       share of edges -k auto holds out (default 0.1)\n"
		"  -o, --output DIR      where w, quitting and signals write the result\n"
		"                        (default: DIR itself, or ./NAME.coterie for a graph)\n"
		"      --force           let the result replace one of another graph in the\n"
		"                        -o folder (without it, explore refuses at start)\n"
		"  -j, --threads N       worker threads (default: every core)\n"
		"      --seed N          random seed (default 1)\n"
		"      --starts N        fit N times and keep the best, as fit does (default 3\n"
		"                        below 100000 edges, else 1)\n"
		"      --no-reseed       skip the moves that join pieces of a community or\n"
		"                        re-seed the weakest one\n"
		"      --seeding S       clusters (the default) or ego-nets (see coterie fit)\n"
		"      --tol X           plateau: relative gain per sweep below X ...\n"
		"      --patience N      ... for N sweeps in a row (defaults 1e-4, 3)\n"
		"      --max-sweeps N    stop after N sweeps in all (default 500)\n"
		"      --epsilon X       background link probability (default: as fit chooses it)\n"
		"      --format F        edges, gml, graphml or pajek (default: by extension)\n"
		"      --skip-lines N    edge lists: skip the first N lines (then no header is guessed)\n"
		"      --no-header       edge lists: the first line is an edge, never a header\n"
		"      --weighted        fit the Poisson model of edge weights (see coterie fit)\n"
		"      --directed        lines are arcs: fit sending and receiving strengths\n"
		"                        (see coterie fit); pane 4 shows both side by side\n"
		"      --two-mode        the two columns are two kinds of nodes (see coterie fit)\n"
		"      --weight-attr NAME  the edge attribute holding the weights\n"
		"      --resume          with DIR: continue the saved fit at once\n"
		"      --checkpoint-every SECONDS\n"
		"                        write the checkpoint that often while fitting\n"
		"                        (default 120)\n"
		"  -h, --help            this text\n"
		"\n"
		"In the explorer, ? lists the keys. The fit waits when it levels off:\n"
		"e runs it on, s ends it, w writes the result, q quits (asking first).\n"
		"For a directed or two-mode fit, d in the members pane lists all members,\n"
		"the sending ones or the receiving ones.\n"
		"A DIR whose fit runs in another process is followed, not reopened: X, P\n"
		"and W ask that fit to stop, to pause or continue, to write its checkpoint.\n");
}

static int dir_is_empty(const char *path)
{
	DIR *d = opendir(path);
	if (!d)
		return 0;
	struct dirent *e;
	int empty = 1;
	while ((e = readdir(d)) != NULL)
		if (strcmp(e->d_name, ".") && strcmp(e->d_name, "..")) {
			empty = 0;
			break;
		}
	closedir(d);
	return empty;
}

/* A file name that says nothing about the graph ("edges.tsv"). */
static int generic_stem(const char *s)
{
	static const char *const names[] = { "edges", "edge", "graph", "network", "net", "links" };
	for (size_t i = 0; i < sizeof names / sizeof names[0]; i++)
		if (!strcmp(s, names[i]))
			return 1;
	return 0;
}

/* ./NAME.coterie for graph file path, avoiding folders already in use.
 * NAME is the file's name without extensions, or the name of its folder
 * when the file's is generic (samples/town/edges.tsv gives town). */
static void default_outdir(const char *path, char *out, size_t cap)
{
	char copy[4096];
	snprintf(copy, sizeof copy, "%s", path);
	char *slash = strrchr(copy, '/');
	const char *base = slash ? slash + 1 : copy;
	char name[256];
	snprintf(name, sizeof name, "%.200s", base);
	size_t len = strlen(name);
	if (len > 3 && !strcmp(name + len - 3, ".gz"))
		name[len - 3] = '\0';
	char *dot = strrchr(name, '.');
	if (dot && dot != name)
		*dot = '\0';
	if (generic_stem(name) && slash) {
		*slash = '\0';
		while (slash > copy && slash[-1] == '/')
			*--slash = '\0';
		const char *parent = strrchr(copy, '/');
		parent = parent ? parent + 1 : copy;
		if (*parent && strcmp(parent, ".") && strcmp(parent, ".."))
			snprintf(name, sizeof name, "%.200s", parent);
	}
	if (!name[0] || !strcmp(name, ".") || !strcmp(name, ".."))
		snprintf(name, sizeof name, "explore");
	/* a name from a file may hold anything; keep the folder name plain */
	for (char *c = name; *c; c++)
		if ((unsigned char)*c < 0x20 || *c == 0x7f || *c == '/')
			*c = '_';
	for (int i = 1; i < 100; i++) {
		if (i == 1)
			snprintf(out, cap, "./%s.coterie", name);
		else
			snprintf(out, cap, "./%s-%d.coterie", name, i);
		struct stat st;
		if (stat(out, &st) != 0 || (S_ISDIR(st.st_mode) && dir_is_empty(out)))
			return;
	}
	snprintf(out, cap, "./%s.coterie", name); /* all taken: use the first */
}

/* -k auto: the search on its thread, shown by tui_choose_k(); sets p->k.
 * Returns -1 to go on to the fit, else the exit status. */
static int choose_k(const struct graph *g, const char *label, struct fit_params *p,
		    struct cli_fit_opts *o, struct select_result *sel)
{
	if (cli_fit_opts_grid(o, g, NULL))
		return 1;
	struct select_run *run = select_run_start(g, p, &o->sp);
	if (!run)
		return 1;
	struct tui_kconfig kc = { g, label, run };
	int st = tui_choose_k(&kc, sel);
	if (st < 0)
		p->k = sel->best;
	return st;
}

enum {
	OPT_RESUME = CLI_OPT_OWN,
	OPT_LIST_KEYS,
	OPT_FORCE,
};

/* Everything one `coterie explore` owns; released once at the end. */
struct run {
	struct cli_fit_opts o;
	struct fit_params p;
	const char *arg;
	int resume, is_dir, force;
	struct checkpoint ck;        /* a result folder's saved fit, with its graph */
	struct graph *g;             /* a graph loaded */
	struct select_result sel;    /* -k auto */
	char outbuf[4096];
};

/* The command line into r. Returns -1 to go on, else the exit status. */
static int parse_args(struct run *r, int argc, char **argv)
{
	static const struct option opts[] = {
		CLI_FIT_OPTIONS,
		{ "resume", no_argument, NULL, OPT_RESUME },
		{ "force", no_argument, NULL, OPT_FORCE },
		{ "list-keys", no_argument, NULL, OPT_LIST_KEYS }, /* for the tests */
		{ NULL, 0, NULL, 0 },
	};
	struct cli_fit_opts *o = &r->o;
	int c;
	cli_getopt_reset();
	while ((c = cli_fit_getopt(o, argc, argv, ":k:o:j:h", opts)) != -1) {
		switch (c) {
		case OPT_RESUME: r->resume = 1; break;
		case OPT_FORCE: r->force = 1; break;
		case OPT_LIST_KEYS: keys_list(stdout); return 0;
		case 'h': explore_usage(stdout); return 0;
		default: return cli_option_usage(c, argv, "explore");
		}
	}
	r->p = o->p;
	if (argc - optind != 1) {
		explore_usage(stderr);
		die(EXIT_USAGE, "explore takes one graph file or result folder, not %d", argc - optind);
	}
	r->arg = argv[optind];
	if (!strcmp(r->arg, "-"))
		die(EXIT_USAGE, "explore reads keys from the terminal, so the graph cannot come from "
		    "standard input; use 'coterie fit -' or a file");
	struct stat st;
	r->is_dir = stat(r->arg, &st) == 0 && S_ISDIR(st.st_mode);
	if (r->resume && !r->is_dir)
		die(EXIT_USAGE, "--resume continues a result folder; '%s' is not one", r->arg);
	if (!r->is_dir && !o->have_k)
		die(EXIT_USAGE, "explore needs the number of communities: -k N or -k auto");
	if (r->is_dir && o->k_auto)
		die(EXIT_USAGE, "-k auto is for a graph; a result folder already has its k");
	if (o->have_grid && !o->k_auto)
		die(EXIT_USAGE, "--k-grid is for -k auto");
	return -1;
}

/* 1 when the folder has no checkpoint to read, 0 when it has, -1 on
 * failure (reported). */
static int no_checkpoint(const char *dir)
{
	char *path = result_file(dir, RESULT_CHECKPOINT);
	if (!path)
		return -1;
	int missing = access(path, F_OK) != 0 && !outdir_has_partial(dir);
	free(path);
	return missing;
}

/*
 * A fit runs in the folder (its progress file is fresh, follow.h): follow
 * it. --resume would make a second writer, and is refused; a fit that has
 * not written a checkpoint yet is asked for one (the panes need its
 * strengths), and waited for. Returns 1 when following, 0 when no fit
 * runs there, -1 on failure (reported).
 */
static int want_follow(struct run *r)
{
	struct follow_progress *p = util_malloc(1, sizeof *p);
	if (!p)
		return -1;
	int live = follow_progress_read(r->arg, p) == 1 && !follow_progress_stale(p);
	char esc[512], host[200];
	util_escape(r->arg, esc, sizeof esc, 1);
	util_escape(p->host, host, sizeof host, 1);
	unsigned long long pid = p->pid;
	free(p);
	if (!live)
		return 0;
	if (r->resume)
		die(1, "a fit runs in '%s' (pid %llu on %s): explore follows it without --resume",
		    esc, pid, host);
	if (r->o.out)
		die(EXIT_USAGE, "a fit runs in '%s' (pid %llu on %s): explore follows it and writes "
		    "nothing, so -o is not for it", esc, pid, host);
	int missing = no_checkpoint(r->arg);
	if (missing == 1) {
		notice("a fit runs in '%s' (pid %llu on %s) and has written no checkpoint yet: "
		       "asking it for one", esc, pid, host);
		if (follow_request_send(r->arg, FOLLOW_SAVE))
			return -1;
		for (int i = 0; i < 600 && missing == 1; i++) { /* a minute at most */
			if (proc_signal_caught())
				return -1;
			usleep(100000);
			missing = no_checkpoint(r->arg);
		}
	}
	return missing < 0 ? -1 : 1;
}

/* A result folder: its checkpoint, shown as saved, its fit ready to go
 * on; or, when its fit runs elsewhere, followed. Returns 0 or -1
 * (reported). */
static int open_folder(struct run *r, struct tui_config *cfg)
{
	int follow = want_follow(r);
	if (follow < 0)
		return -1;
	int missing = no_checkpoint(r->arg);
	if (missing < 0)
		return -1;
	if (missing) {
		char esc[512];
		die(1, "'%s' holds no %s: not a result folder", util_escape(r->arg, esc, sizeof esc, 1),
		    RESULT_CHECKPOINT);
	}
	if (outdir_read(r->arg, &r->ck))
		return -1;
	const struct checkpoint *ck = &r->ck;
	if (r->o.out && outdir_check_graph(r->o.out, ck->graph, r->force))
		return -1;
	cli_fit_opts_resume(&r->o, &ck->params, "for a saved fit", &r->p);
	r->p.hold_at_plateau = 1;
	struct fit_origin origin;
	outdir_resume(ck, &r->p, &origin);
	if (!(cfg->fit = fit_new(ck->graph, &r->p, &origin)))
		return -1;
	cfg->g = ck->graph;
	cfg->reopened = 1;
	cfg->one_start = !ck->savepoint;
	cfg->saved_state = ck->state;
	cfg->saved_sweep = ck->sweep;
	cfg->saved_loglik = ck->ntrace ? ck->trace[ck->ntrace - 1].loglik : 0;
	cfg->start = r->resume;
	cfg->outdir = r->o.out ? r->o.out : r->arg;
	cfg->outdir_holds_result = r->o.out == NULL || !strcmp(r->o.out, r->arg);
	cfg->graph_label = r->arg;
	cfg->graph_path = ck->graph->source ? ck->graph->source : r->arg;
	cfg->follow = follow;
	if (follow)
		cfg->start = 0;
	/* the panes read the cover from the strengths; after fit --refine
	 * memberships.tsv holds another one (result_cover.h): say so */
	if (result_cover_is_refined(r->arg))
		cfg->note = "cover from the strengths; memberships.tsv holds the refined one";
	return 0;
}

/* A graph: loaded, k chosen (-k auto), the fit made. Returns -1 to go
 * on, else the exit status. */
static int open_graph(struct run *r, struct tui_config *cfg)
{
	if (r->o.out) {
		/* refuse early: a long fit whose result cannot be written is lost work */
		cfg->outdir_created = access(r->o.out, F_OK) != 0;
		if (result_prepare_dir(r->o.out))
			return 1;
		cfg->outdir = r->o.out;
	} else {
		default_outdir(r->arg, r->outbuf, sizeof r->outbuf);
		cfg->outdir = r->outbuf;
		cfg->outdir_is_default = 1;
	}
	if (!(r->g = cli_graph_load(&r->o, r->arg)) || cli_graph_fittable(r->g, r->arg) ||
	    outdir_check_graph(cfg->outdir, r->g, r->force))
		return 1;
	cli_k_fits(r->p.k, r->g);
	cli_fit_opts_starts(&r->o, r->g->m);
	r->p.starts = r->o.p.starts;
	if (r->o.k_auto) {
		int ks = choose_k(r->g, r->arg, &r->p, &r->o, &r->sel);
		if (ks >= 0)
			return ks;
		cfg->selection = &r->sel;
	}
	if (!(r->p.epsilon > 0.0) && r->g->m < BACKGROUND_MAX_EDGES) {
		/* the same background as fit would choose (background.h) */
		struct background_choice bg;
		notice("choosing the background epsilon (see --epsilon) ...");
		if (background_choose(r->g, &r->p, NULL, NULL, &bg))
			return 1;
		r->p.epsilon = bg.epsilon;
	}
	r->p.hold_at_plateau = 1;
	if (!(cfg->fit = fit_new(r->g, &r->p, NULL)))
		return 1;
	cfg->g = r->g;
	cfg->start = 1;
	cfg->graph_label = r->arg;
	cfg->graph_path = r->arg;
	return -1;
}

int cmd_explore(int argc, char **argv)
{
	struct run *r = util_calloc(1, sizeof *r);
	struct tui_config cfg;
	memset(&cfg, 0, sizeof cfg);
	if (!r)
		return 1;
	cli_fit_opts_init(&r->o);
	int rc = parse_args(r, argc, argv);
	if (rc >= 0)
		goto out;
	rc = 1;
	if (proc_signals_install())
		goto out;
	cfg.t_begin = util_now();
	if (r->is_dir) {
		if (open_folder(r, &cfg))
			goto out;
	} else if ((rc = open_graph(r, &cfg)) >= 0) {
		goto out;
	}
	rc = 1;
	if (memory_check_fit(cfg.g, &r->p))
		goto out;
	if (r->resume && r->o.out) {
		cfg.outdir_created = access(r->o.out, F_OK) != 0;
		if (result_prepare_dir(r->o.out))
			goto out;
	}
	cfg.params = r->p;
	cfg.checkpoint_every = r->o.checkpoint_every;
	rc = tui_run(&cfg); /* frees the fit */
	cfg.fit = NULL;
out:
	if (cfg.outdir_created)
		rmdir(cfg.outdir); /* made here, and still empty (quit while choosing k) */
	fit_free(cfg.fit);
	select_result_release(&r->sel);
	graph_free(r->g);
	checkpoint_release(&r->ck);
	free(r);
	return rc;
}
