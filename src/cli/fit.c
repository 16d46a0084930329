/*
 * cli/fit: `coterie fit GRAPH -k N -o DIR`.
 *
 * The main thread loads the graph, proves the output folder writable,
 * starts the fitting thread and then only watches: it poll()s the fit's
 * wake-up pipe and the signal pipe, prints progress (one line, made to
 * fit the terminal's width, whose last state names the start kept:
 * cli/fit_progress.c), writes a checkpoint now and then, and writes the
 * result folder at the end; a folder holding another graph's result is
 * refused unless --force (outdir_check_graph()). An interrupt
 * (Ctrl-C, SIGTERM, a lost terminal) lets the sweep in progress end,
 * saves, and exits 130; a second one stops inside the sweep. Both the
 * interrupted folder and the periodic checkpoints carry a savepoint
 * (fit.h, struct fit_savepoint), so --resume ends with the bytes the
 * uninterrupted fit would have written.
 */
#include <math.h>
#include <errno.h>
#include <getopt.h>
#include <poll.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "cli.h"
#include "fit_progress.h"
#include "coterie/background.h"
#include "coterie/caveat.h"
#include "coterie/dirlock.h"
#include "coterie/fit.h"
#include "coterie/follow.h"
#include "coterie/graph.h"
#include "coterie/holdout.h"
#include "coterie/memory.h"
#include "coterie/model.h"
#include "coterie/outdir.h"
#include "coterie/seed.h"
#include "coterie/refine.h"
#include "coterie/result.h"
#include "coterie/savepoint.h"
#include "coterie/select.h"
#include "coterie/stability.h"

static void fit_usage(FILE *out)
{
	fprintf(out,
		"usage: coterie fit GRAPH -k N|auto -o DIR [options]\n"
		"       coterie fit [GRAPH] --resume DIR [-o DIR] [options]\n"
		"\n"
		"Fit N overlapping communities to GRAPH and write a result folder.\n"
		"GRAPH is an edge list (.gz too; - for standard input), GML, GraphML or Pajek.\n"
		"\n"
		"  -k, --communities N   number of communities to fit (required); 'auto'\n"
		"                        chooses it by held-out likelihood, the fitted\n"
		"                        model's own (weights, arcs; see --k-grid); over\n"
		"                        several splits on a small graph, the smallest k\n"
		"                        within one standard error of the best mean\n"
		"      --k-grid G        the k tried by -k auto: A:B (geometric, ratio 1.25),\n"
		"                        A:B:RATIO, or a list such as 4,8,16 (default: 2 up\n"
		"                        to a bound from the graph; see the manual)\n"
		"      --holdout X       share of edges -k auto holds out, with as many\n"
		"                        non-edges (default 0.1)\n"
		"      --check-links X   hold out X of the edges and as many non-edges from\n"
		"                        the final fit and report their link AUC and\n"
		"                        log-likelihood (the model's own) in run.json\n"
		"  -o, --output DIR      result folder (made if missing; required)\n"
		"      --force           replace a result of another graph in DIR (else fit\n"
		"                        refuses, exit 1); one of the same graph is always\n"
		"                        replaced, no file of the earlier run left behind\n"
		"  -j, --threads N       worker threads (default: every core)\n"
		"      --seed N          random seed (default 1); same seed, same result\n"
		"      --starts N        fit N times from different seeds and sweep orders and\n"
		"                        keep the best: the cover of the shortest code length\n"
		"                        (its AGM log-likelihood less the cost of naming its\n"
		"                        members; with --weighted too).\n"
		"                        Default 3 below 100000 edges, else 1 (the\n"
		"                        likelihood has local maxima)\n"
		"      --repeats N       fit N times in all, from seeds S, S+1, ... (several\n"
		"                        fits at once), keep the best (as --starts judges)\n"
		"                        and score each of its communities by how well the\n"
		"                        other fits find it again (communities.tsv's\n"
		"                        stability column; --directed, --two-mode: members\n"
		"                        on each side)\n"
		"      --no-reseed       skip the moves that join pieces of a community or\n"
		"                        re-seed the weakest one\n"
		"                        after a plateau (faster, often less likely); each\n"
		"                        climbs on the rows it changed, their neighbours\n"
		"                        and the rows those wake (on all rows where that\n"
		"                        is over half of them), to a plateau of 1e-3\n"
		"                        (then --tol if it has not paid), and is kept if\n"
		"                        it shortened the code length (as --starts); they\n"
		"                        stop after 3 unkept in a row, 12 moves, or half\n"
		"                        as many sweeps as the climb took (at least 10)\n"
		"      --seeding S       how a start's communities begin: clusters (label\n"
		"                        propagation's, pieces of one community joined;\n"
		"                        the likeliest k of them, ego-nets for the rest;\n"
		"                        the default) or ego-nets (locally minimal ego-nets\n"
		"                        only)\n"
		"      --tol X           plateau: relative gain per sweep below X ...\n"
		"      --patience N      ... for N sweeps in a row (defaults 1e-4, 3)\n"
		"      --max-sweeps N    at most N sweeps per start, reseeding and earlier\n"
		"                        runs of a resumed fit included (default 500)\n"
		"      --past-plateau    do not stop at a plateau; run to --max-sweeps\n"
		"      --refine          after the fit, improve the cover under the AGM by\n"
		"                        local moves; memberships.tsv holds the refined cover\n"
		"                        (not with --weighted, --directed, --two-mode)\n"
		"      --refine-rounds N at most N rounds of refinement (default 50)\n"
		"      --epsilon X       background link probability (default: the density;\n"
		"                        below 20000 edges, the multiple of it whose cover has\n"
		"                        the shortest code length among those holding half\n"
		"                        of the linked nodes, 90%% if the density's holds less)\n"
		"      --format F        edges, gml, graphml or pajek (default: by extension)\n"
		"      --skip-lines N    edge lists: skip the first N lines (then no header is guessed)\n"
		"      --no-header       edge lists: the first line is an edge, never a header\n"
		"      --weighted        fit the Poisson model of edge weights (Ball, Karrer &\n"
		"                        Newman 2011): an edge list's third column, the edge\n"
		"                        attribute 'weight' of GML/GraphML/Pajek; with\n"
		"                        --directed or --two-mode, arc weights Poisson(F_u.H_v)\n"
		"      --weight-attr NAME  the edge attribute holding the weights (implies\n"
		"                        --weighted)\n"
		"      --directed        lines are arcs (u -> v): fit sending and receiving\n"
		"                        strengths, P(u->v) = 1 - exp(-F_u.H_v); directed\n"
		"                        GML/GraphML are read as directed\n"
		"      --two-mode        the first column's names and the second's are two\n"
		"                        kinds of nodes (senders, receivers)\n"
		"      --resume DIR      continue the fit saved in DIR (same graph only)\n"
		"      --checkpoint-every SECONDS\n"
		"                        write a checkpoint to the result folder that often\n"
		"                        while fitting (default 120; --resume goes on from it)\n"
		"  -q, --quiet           no progress or notices\n"
		"  -h, --help            this text\n"
		"While it runs, DIR/.coterie.request holding stop, pause, continue or save\n"
		"steers it (coterie explore DIR does this; see coterie(1)).\n");
}

static void on_scored(const struct select_point *pt, void *arg)
{
	const int *quiet = arg;
	if (!*quiet)
		notice("choosing k: k %u (%s) scores %.6g on the held-out pairs, link AUC %.4f "
		       "(%u sweeps, %.1f s)", pt->k, pt->reason, pt->heldout, pt->auc, pt->sweeps,
		       pt->seconds);
}

static int stop_asked(void *arg)
{
	(void)arg;
	return proc_signal_caught() != 0;
}

/* -k auto: score a grid of k by held-out likelihood, write
 * k-selection.tsv (the writer only), and set p->k to the winner; sp
 * holds --k-grid and --holdout (in o); grp (NULL: alone) spreads the
 * fits over processes. Returns 0, -1 (reported) or -2 (interrupted). */
static int choose_k(const struct graph *g, struct fit_params *p, const char *out,
		    struct cli_fit_opts *o, int quiet, struct select_result *res,
		    const struct cli_group *grp)
{
	uint32_t minima = 0;
	int have_grid = o->have_grid;
	if (cli_fit_opts_grid(o, g, &minima))
		return -1;
	struct select_params *sp = &o->sp;
	uint32_t grid[SELECT_MAX_GRID];
	uint32_t ng = select_grid(sp, grid);
	unsigned at_once = p->threads * (grp ? grp->size : 1); /* fits at a time */
	if (!quiet && select_by_shape(g->m, sp) && sp->start) {
		char first[200];
		if (sp->start_clusters && p->seeding == SEED_CLUSTERS)
			snprintf(first, sizeof first,
				 "the clusters that label propagation finds on the other edges "
				 "(pieces of one community joined; the %u distinct locally minimal "
				 "ego-nets where they hold fewer than half of the nodes)", minima);
		else
			snprintf(first, sizeof first,
				 "%u (the %u distinct locally minimal ego-nets)", sp->start, minima);
		notice("choosing k by the likelihood of %.0f%% of the edges and as many "
		       "non-edges, held out: first k %s, then k on either side, walking on while "
		       "the best is at an end (up to n/4), then halving the gaps around the best",
		       100.0 * sp->share, first);
	} else if (!quiet) {
		if (!have_grid)
			notice("choosing k from %u to %u (three times the %u distinct locally "
			       "minimal ego-nets, within 10 to 500 and at most n/4)", sp->kmin,
			       sp->kmax, minima);
		notice("choosing k among %u values from %u to %u by the likelihood of %.0f%% of "
		       "the edges and as many non-edges, held out; %u fits at a time", ng, grid[0],
		       grid[ng - 1], 100.0 * sp->share, at_once < ng ? at_once : ng);
	}
	/* one fit of the largest k of the grid (the parallel fits of smaller k
	 * are not added up); a search by the curve's shape needs its first k
	 * to fit and checks every k it walks to itself (select.c) */
	struct fit_params big = *p;
	big.k = select_by_shape(g->m, sp) && sp->start ? sp->start : grid[ng - 1];
	big.threads = p->threads;
	if (memory_check_fit(g, &big))
		return -1;
	struct select_hooks hooks = { on_scored, stop_asked, &quiet, grp ? grp->gather : NULL };
	int writer = !grp || grp->rank == 0;
	int rc = select_k(g, p, sp, &hooks, res);
	if (rc == -2) {
		if (writer)
			error("interrupted while choosing k; no fit to save yet");
		return -2;
	}
	if (rc)
		return -1;
	if (writer && result_write_selection(out, res))
		return -1;
	if (!quiet && res->folds > 1 && res->best != res->best_mean)
		notice("chose k = %u, the smallest k within one standard error (%.3g) of the "
		       "highest mean held-out log-likelihood (k %u) over %u splits; the scores "
		       "are in '%s/%s'", res->best, res->se, res->best_mean, res->folds, out,
		       RESULT_SELECTION);
	else if (!quiet)
		notice("chose k = %u, the highest %sheld-out log-likelihood%s; the scores are in "
		       "'%s/%s'", res->best, res->folds > 1 ? "mean " : "",
		       res->folds > 1 ? " over the splits" : "", out, RESULT_SELECTION);
	struct caveats cv; /* a thin choice: said now, before the long fit */
	caveats_init(&cv);
	caveats_of_selection(&cv, res, g->n);
	caveats_print(&cv);
	p->k = res->best;
	return 0;
}

enum {
	OPT_PAST_PLATEAU = CLI_OPT_OWN,
	OPT_RESUME,
	OPT_REFINE,
	OPT_REFINE_ROUNDS,
	OPT_CHECK_LINKS,
	OPT_FORCE,
	OPT_REPEATS,
};

/* --refine: the AGM refinement of the final cover into *out (released by
 * the caller with agm_release()). Returns 0 or -1 (reported). */
static int refine_cover_of(const struct graph *g, const struct agm *agm, const struct fcsr *F,
			   unsigned rounds, uint64_t seed, int quiet, struct agm *out,
			   struct refine_report *rep)
{
	struct refine_params rp;
	refine_params_default(&rp);
	rp.max_rounds = rounds;
	rp.seed = seed;
	rp.stop = stop_asked;
	if (!quiet)
		notice("refining the cover under the AGM (at most %u rounds)", rounds);
	if (refine_agm(g, agm, F, &rp, out, rep))
		return -1;
	if (!quiet)
		notice("refinement %s after %u round%s in %.1f s: +%llu -%llu memberships, AGM "
		       "log-likelihood %.10g -> %.10g", rep->converged ? "converged" :
		       rep->stopped ? "was interrupted" : "reached the round limit", rep->rounds,
		       rep->rounds == 1 ? "" : "s", rep->seconds, (unsigned long long)rep->added,
		       (unsigned long long)rep->removed, rep->loglik_before, rep->loglik_after);
	return 0;
}

/* Everything one `coterie fit` owns; released once, by run_release(). */
struct run {
	struct cli_fit_opts o;
	struct fit_params p;
	const char *resume, *gpath;
	int quiet, refine, force;
	int made_dir;                /* the folder did not exist before this run */
	unsigned refine_rounds;
	double check_links;
	double t_begin;
	struct checkpoint ck;        /* --resume: the saved fit, with its graph */
	struct graph *g;             /* the graph loaded (NULL: ck's) */
	const struct graph *graph;   /* the one fitted and written */
	struct select_result sel;    /* -k auto */
	struct background_choice bg; /* how epsilon was chosen (new fits) */
	int have_bg;
	struct holdout check;        /* --check-links */
	struct fit_origin origin;
	int have_origin;
	struct fit *f;
	struct outdir *od;
	struct dirlock *lock;        /* the output folder's, held from the start */
	int interrupted;             /* 1: once, 2: twice */
	struct outdir_config oc;     /* r->od's */
	struct follow_host *follow;  /* the progress and request files (follow.h) */
	uint32_t repeats;            /* --repeats (0: one fit) */
	struct snapshot **runs;      /* --repeats: every run's final snapshot */
	struct stability stab;       /* --repeats: the record written */
	const struct cli_group *grp; /* coterie-mpi: the processes fitting together */
	int writer;                  /* this process takes the folder and prints */
	unsigned agreed;             /* grp->agree() calls made (two before the fit) */
};

/* grp->agree(ok), or ok alone. */
static int agreed(struct run *r, int ok)
{
	if (!r->grp)
		return ok;
	r->agreed++;
	return r->grp->agree(r->grp->arg, ok);
}

static void run_release(struct run *r)
{
	for (uint32_t i = 0; r->runs && i < r->repeats; i++)
		snapshot_release(r->runs[i]);
	free(r->runs);
	stability_release(&r->stab);
	outdir_free(r->od);
	follow_host_free(r->follow); /* after the final write, before the lock goes */
	dirlock_free(r->lock);
	fit_free(r->f);
	holdout_release(&r->check);
	select_result_release(&r->sel);
	graph_free(r->g);
	checkpoint_release(&r->ck);
}

/* The command line into r. Returns -1 to go on, else the exit status. */
static int parse_args(struct run *r, int argc, char **argv)
{
	static const struct option opts[] = {
		CLI_FIT_OPTIONS,
		{ "past-plateau", no_argument, NULL, OPT_PAST_PLATEAU },
		{ "resume", required_argument, NULL, OPT_RESUME },
		{ "refine", no_argument, NULL, OPT_REFINE },
		{ "refine-rounds", required_argument, NULL, OPT_REFINE_ROUNDS },
		{ "check-links", required_argument, NULL, OPT_CHECK_LINKS },
		{ "force", no_argument, NULL, OPT_FORCE },
		{ "repeats", required_argument, NULL, OPT_REPEATS },
		{ "quiet", no_argument, NULL, 'q' },
		{ NULL, 0, NULL, 0 },
	};
	struct cli_fit_opts *o = &r->o;
	int c;
	cli_getopt_reset();
	while ((c = cli_fit_getopt(o, argc, argv, ":k:o:j:qh", opts)) != -1) {
		switch (c) {
		case OPT_CHECK_LINKS:
			r->check_links = cli_double("--check-links", optarg, 0.001, 0.5);
			break;
		case OPT_PAST_PLATEAU: o->p.past_plateau = 1; break;
		case OPT_RESUME: r->resume = optarg; break;
		case OPT_FORCE: r->force = 1; break;
		case OPT_REPEATS: r->repeats = cli_u32("--repeats", optarg, 1, 1000); break;
		case OPT_REFINE: r->refine = 1; break;
		case OPT_REFINE_ROUNDS:
			r->refine_rounds = cli_u32("--refine-rounds", optarg, 1, 1000000);
			r->refine = 1;
			break;
		case 'q': r->quiet = 1; break;
		case 'h': fit_usage(stdout); return 0;
		default: return cli_option_usage(c, argv, "fit");
		}
	}
	if (argc - optind > 1)
		die(EXIT_USAGE, "fit takes one graph, not %d", argc - optind);
	r->gpath = optind < argc ? argv[optind] : NULL;
	if (!r->gpath && !r->resume) {
		fit_usage(stderr);
		die(EXIT_USAGE, "fit needs a graph file (or - for standard input)");
	}
	r->p = o->p;
	if (!r->resume && !o->have_k)
		die(EXIT_USAGE, "fit needs the number of communities: -k N");
	if (o->have_grid && !o->k_auto)
		die(EXIT_USAGE, "--k-grid is for -k auto");
	if (r->repeats > 1 && r->resume)
		die(EXIT_USAGE, "--repeats cannot be used when resuming (it makes new fits)");
	if (r->repeats > 1 && r->grp)
		die(EXIT_USAGE, "--repeats is not yet available across processes");
	if (r->repeats <= 1)
		r->repeats = 0;
	cli_model_can(&o->p, r->refine);
	if (!r->o.out)
		r->o.out = r->resume;
	if (!r->o.out)
		die(EXIT_USAGE, "fit needs an output folder: -o DIR");
	return -1;
}

/* --resume: the saved fit (and the graph given, which must be its own).
 * Returns 0 or -1 (reported). */
static int load_resume(struct run *r)
{
	if (outdir_read(r->resume, &r->ck))
		return -1;
	if (r->gpath) {
		if (!(r->g = cli_graph_load(&r->o, r->gpath)))
			return -1;
		if (graph_fingerprint(r->g) != r->ck.fingerprint)
			return error("'%s' is not the graph the fit in '%s' was made on; refusing "
				     "to resume", r->gpath, r->resume);
	}
	if (r->o.k_auto)
		die(EXIT_USAGE, "-k auto cannot be used when resuming");
	if (r->check_links > 0)
		die(EXIT_USAGE, "--check-links cannot be used when resuming");
	if (outdir_check_graph(r->o.out, r->ck.graph, r->force))
		return -1;
	cli_fit_opts_resume(&r->o, &r->ck.params, "when resuming", &r->p);
	cli_model_can(&r->p, r->refine);
	r->p.hold_at_plateau = 0;
	outdir_resume(&r->ck, &r->p, &r->origin);
	r->have_origin = 1;
	if (r->ck.savepoint)
		notice("the saved fit was interrupted in start %u of %u; it goes on from there",
		       r->ck.savepoint->start, r->p.starts);
	else if (r->ck.state == FIT_LEVELLED && !r->p.past_plateau)
		notice("the saved fit had levelled off; it goes on until it levels off again");
	return 0;
}

/* The background of a new fit (background.h): given, the density, or
 * chosen by the search on a small graph. Returns 0 or -1. */
static int choose_background(struct run *r)
{
	struct fit_params *p = &r->p;
	int searches = !(p->epsilon > 0.0) && r->g->m < BACKGROUND_MAX_EDGES;
	if (searches && !r->quiet && p->model == MODEL_BIGCLAM)
		notice("choosing the background epsilon: fits at the density (%.4g) and below it; "
		       "the cover of the shortest code at its own background is kept among those "
		       "holding %.0f%% of the linked nodes (%.0f%% if the density's holds fewer; "
		       "see --epsilon)", model_default_epsilon(r->g), 100.0 * BACKGROUND_THIN,
		       100.0 * BACKGROUND_COVER);
	else if (searches && !r->quiet)
		notice("choosing the background epsilon: the density (%.4g) unless it leaves "
		       "%.0f%% of the linked nodes out, then the largest multiple of it whose "
		       "cover holds %.0f%% (see --epsilon)", model_default_epsilon(r->g),
		       100.0 * (1.0 - BACKGROUND_THIN), 100.0 * BACKGROUND_COVER);
	int rc = background_choose(r->g, p, stop_asked, &r->quiet, &r->bg);
	if (rc == -2)
		error("interrupted while choosing the background; no fit to save yet");
	if (rc)
		return -1;
	r->have_bg = 1;
	if (r->bg.rule == BACKGROUND_COVERAGE || r->bg.rule == BACKGROUND_CODE) {
		p->epsilon = r->bg.epsilon;
		if (!r->quiet) {
			const struct background_candidate *c = &r->bg.cand[r->bg.chosen];
			notice("epsilon %.4g (%g x the density, %s): %u of %u linked nodes covered "
			       "after %u trial fit%s; the trials are in run.json", c->epsilon,
			       c->multiple, r->bg.rule == BACKGROUND_CODE ? "the shortest code" :
			       "the coverage guard", c->covered, r->bg.linked, r->bg.ncand,
			       r->bg.ncand == 1 ? "" : "s");
		}
	}
	return 0;
}

/* A new fit: the graph, -k auto and --check-links. Returns 0, -1, -2
 * when -k auto failed, or -3 when every process was interrupted in it. */
static int load_graph(struct run *r)
{
	struct fit_params *p = &r->p;
	if (!(r->g = cli_graph_load(&r->o, r->gpath)) || cli_graph_fittable(r->g, r->gpath) ||
	    outdir_check_graph(r->o.out, r->g, r->force))
		return -1;
	if (!r->o.k_auto)
		cli_k_fits(p->k, r->g);
	cli_fit_opts_starts(&r->o, r->g->m);
	p->starts = r->o.p.starts;
	int rc = r->o.k_auto ? choose_k(r->g, p, r->o.out, &r->o, r->quiet, &r->sel, r->grp) : 0;
	if (rc)
		return rc == -2 && r->grp ? -3 : -2;
	if (choose_background(r))
		return -2;
	if (r->check_links > 0) {
		/* the seed is offset so these pairs are not those -k auto held out */
		if (holdout_split(&r->check, r->g, r->check_links, p->seed + 0x9e3779b97f4a7c15ULL))
			return -1;
		if (!(p->epsilon > 0.0))
			p->epsilon = model_default_epsilon(r->g); /* the whole graph's */
		if (!r->quiet)
			notice("checking links: %llu edges and %llu non-edges are held out of the "
			       "fit", (unsigned long long)r->check.nedges,
			       (unsigned long long)r->check.nnon);
	}
	return 0;
}

/* Watch the fit until it ends: progress, periodic checkpoints (through
 * outdir.h), and the interrupts. */
static void watch(struct run *r, struct fit_progress *pr)
{
	for (;;) {
		struct pollfd pfd[2] = {
			{ fit_wake_fd(r->f), POLLIN, 0 },
			{ proc_signal_fd(), POLLIN, 0 },
		};
		poll(pfd, 2, 500);
		fit_drain_wake(r->f);
		int asked = r->follow && follow_host_tick(r->follow, r->f, r->od);
		if ((proc_signal_caught() || asked) && !r->interrupted) {
			/* the sweep in progress ends first, so that --resume
			 * continues exactly; a second signal stops at once */
			r->interrupted = 1;
			fit_progress_break(pr);
			notice("%s: ending the sweep in progress and saving to '%s' (interrupt "
			       "again to stop at once)", asked ? "asked to stop" : "interrupted",
			       r->o.out);
			fit_interrupt(r->f);
		}
		if (proc_signal_count() >= 2 && r->interrupted == 1) {
			r->interrupted = 2;
			fit_progress_break(pr);
			notice("interrupted again: stopping inside the sweep; a resumed fit goes on "
			       "from the model as it is");
			fit_stop(r->f);
		}
		enum fit_state st = fit_get_state(r->f);
		struct snapshot *s = fit_snapshot(r->f);
		/* a failed fit may have had no memory left to publish its end:
		 * its last snapshot still says fitting */
		int ended = fit_state_ended(st) && (s->state == st || st == FIT_FAILED);
		if (!ended)
			fit_progress_show(pr, s, 0);
		snapshot_release(s);
		if (ended)
			break;
		if (r->od)
			outdir_tick(r->od, r->f);
	}
}

/* --check-links: score the held-out pairs, and read the AGM figures
 * (internal edges, conductance, p_c) from the whole graph, not from the
 * training one the fit saw, into *whole. Returns 1 when done. */
static int score_links(struct run *r, const struct snapshot *s, struct result_links *links,
		       struct agm *whole)
{
	*links = (struct result_links){ r->check_links, r->check.nedges, r->check.nnon, 0, 0 };
	struct fcsr F; /* the thresholds of the whole graph's reading, not the training one's */
	if (holdout_score(&r->check, &s->F, s->epsilon, r->p.model, &links->heldout_loglik,
			  &links->auc) ||
	    fcsr_copy(&F, &s->F))
		return 0;
	int rc = agm_from_strengths_trimmed(whole, r->graph, &F, s->epsilon, s->delta,
					    AGM_MIN_LINKS);
	fcsr_release(&F);
	if (rc)
		return 0;
	if (!r->quiet)
		notice("held-out links: AUC %.4f, log-likelihood %.6g over %llu edges and %llu "
		       "non-edges", links->auc, links->heldout_loglik,
		       (unsigned long long)links->held_edges,
		       (unsigned long long)links->held_non_edges);
	return 1;
}

static void on_run_ended(uint32_t run, uint64_t seed, double loglik, void *arg)
{
	const struct run *r = arg;
	if (!r->quiet)
		notice("repeat %u of %u (seed %llu) ended: loglik %.6g", run + 1, r->repeats,
		       (unsigned long long)seed, loglik);
}

/*
 * --repeats: fit runs 2 .. N from seeds S+1 .. S+N-1 (the fit just made
 * from S is run 1, its final snapshot main), keep the best as --starts
 * does (the first of equals) and record the runs in r->stab. Returns the snapshot
 * to write (main, or one of r->runs: borrowed) and its state in *st. An
 * interrupt or a failure leaves main alone to be written, unscored.
 */
static const struct snapshot *repeat_fits(struct run *r, const struct snapshot *main,
					  enum fit_state *st)
{
	uint32_t n = r->repeats;
	struct fit_params q = r->p;
	q.hold_at_plateau = 0;
	if (!(r->runs = util_calloc(n, sizeof *r->runs)))
		return main;
	r->runs[0] = fit_snapshot(r->f); /* main again, a reference of our own */
	if (!r->quiet)
		notice("fitting %u more times (seeds %llu to %llu, %u at a time) to score how "
		       "stable each community is", n - 1, (unsigned long long)q.seed + 1,
		       (unsigned long long)(q.seed + n - 1), q.threads < n - 1 ? q.threads : n - 1);
	struct stability_hooks hooks = { on_run_ended, stop_asked, r };
	int rc = stability_fit_runs(r->graph, &q, r->check.held ? &r->check : NULL, 1, n, &hooks,
				    r->runs);
	if (rc) {
		if (rc == -2)
			r->interrupted = 1;
		error("%s: the communities are not scored; the first fit is written",
		      rc == -2 ? "interrupted while fitting again" : "a repeated fit failed");
		return main;
	}
	struct stability *sb = &r->stab;
	sb->seed = util_calloc(n, sizeof *sb->seed);
	sb->loglik = util_calloc(n, sizeof *sb->loglik);
	if (!sb->seed || !sb->loglik)
		return main;
	sb->runs = n;
	/* the best as --starts has it: the shortest code length of the
	 * cover */
	if (!(sb->code = util_calloc(n, sizeof *sb->code)))
		return main;
	double best = 0.0;
	for (uint32_t i = 0; i < n; i++) {
		const struct snapshot *x = r->runs[i];
		sb->seed[i] = q.seed + i;
		sb->loglik[i] = x->trace[x->ntrace - 1].loglik;
		sb->code[i] = agm_code_length_of(&x->agm.cover, x->agm.loglik, r->graph);
		double score = -sb->code[i];
		if (i == 0 || score > best) {
			best = score;
			sb->kept = i;
		}
	}
	if (sb->kept == 0)
		return main;
	/* the checkpoint and run.json say the seed of the fit kept, so that
	 * --resume and a fit from that seed alone go on from the same bits */
	r->p.seed = sb->seed[sb->kept];
	r->oc.params = r->p;
	outdir_free(r->od);
	r->od = outdir_new(&r->oc);
	*st = r->runs[sb->kept]->state;
	return r->od ? r->runs[sb->kept] : NULL;
}

/* --repeats: the stability of every community of the cover written
 * (a: the refined or whole-graph one when asked) against the other runs'
 * strengths' covers. Returns 0 or -1 (reported). */
static int score_stability(struct run *r, const struct agm *a)
{
	struct stability *sb = &r->stab;
	/* a two-sided fit: one score per column, on the per-side covers */
	uint32_t k = r->graph->nsend ? r->runs[sb->kept]->F.k : a->cover.k, no = 0;
	struct cover *others = util_calloc(sb->runs, sizeof *others);
	sb->score = util_malloc(k ? k : 1, sizeof *sb->score);
	if (!others || !sb->score) {
		free(others);
		return -1;
	}
	for (uint32_t i = 0; i < sb->runs; i++)
		if (i != sb->kept)
			others[no++] = r->runs[i]->agm.cover; /* shallow: r->runs owns it */
	int rc = r->graph->nsend
			 ? stability_score_sided(r->graph, r->runs, sb->runs, sb->kept, sb->score)
			 : stability_score(&a->cover, others, no, sb->score, NULL);
	free(others);
	if (rc)
		return -1;
	sb->k = k;
	if (!r->quiet)
		notice("kept repeat %u of %u (seed %llu), %s; mean stability of its "
		       "communities %.3f (the best-match Jaccard in the %u other fits)",
		       sb->kept + 1, sb->runs, (unsigned long long)sb->seed[sb->kept],
		       "the shortest code",
		       stability_mean(sb), no);
	return 0;
}

static void say_written(const struct run *r, const struct snapshot *s, enum fit_state st,
			const struct agm *a)
{
	const char *how = st == FIT_LEVELLED ? "levelled off" :
			  st == FIT_FINISHED ? "reached the sweep limit" :
			  r->interrupted ? "was interrupted" : "was stopped";
	char best[64] = "";
	if (s->starts > 1)
		snprintf(best, sizeof best, " (start %u of %u, the shortest code)", s->best_start,
			 s->starts);
	uint32_t covered, overlapping, nodes;
	if (agm_coverage_as_given(a, r->graph, &covered, &overlapping, &nodes))
		return;
	char out[96] = ""; /* the columns that did not pay for their names */
	if (a->dropped)
		snprintf(out, sizeof out, " (%u of the %u left out: too weak to pay for naming "
			 "their members)", a->dropped, r->p.k);
	notice("the fit %s after %u sweeps%s in %.1f s: %u communities%s, %u of %u nodes in at "
	       "least one, %u in two or more; results in '%s'", how, s->sweep, best, s->seconds,
	       a->cover.k, out, covered, nodes, overlapping, r->o.out);
}

/* The end of the fit: --check-links, --refine, the folder. Returns the
 * exit status. */
static int finish(struct run *r, enum fit_state st, const struct snapshot *s)
{
	struct result_links links;
	struct agm whole, refined;
	struct refine_report rrep;
	int have_whole = 0, have_refined = 0, rc = 0;
	memset(&whole, 0, sizeof whole);
	memset(&refined, 0, sizeof refined);
	struct result_model m;
	result_model_of(&m, s);
	if (r->check.held && s->ntrace > 0 && st != FIT_FAILED &&
	    (have_whole = score_links(r, s, &links, &whole)))
		m.agm = &whole;
	/* the refined cover replaces the thresholded one in what is written */
	if (r->refine && r->interrupted && !r->quiet)
		notice("interrupted: the cover is not refined");
	if (r->refine && !r->interrupted && st != FIT_FAILED && s->ntrace > 0) {
		if (refine_cover_of(r->graph, m.agm, &s->F, r->refine_rounds, r->p.seed, r->quiet,
				    &refined, &rrep)) {
			rc = 1; /* reported; the unrefined result is still written */
		} else {
			have_refined = 1;
			m.agm = &refined;
			if (rrep.stopped)
				r->interrupted = 1;
		}
	}
	struct result_meta meta = {
		.k_auto = r->o.k_auto,
		.command_line = proc_command_line(),
		.graph_path = r->gpath ? r->gpath : (r->ck.graph ? r->ck.graph->source : ""),
		.wall_seconds = util_now() - r->t_begin,
		.peak_rss_kb = proc_peak_rss_kb(),
		.status = r->interrupted ? "interrupted" : fit_state_name(st),
		.refine = have_refined ? &rrep : NULL,
		.refine_rounds = r->refine ? r->refine_rounds : 0,
		.selection = r->o.k_auto ? &r->sel : NULL,
		.links = have_whole ? &links : NULL,
		.background = r->have_bg ? &r->bg : NULL,
	};
	if (r->stab.runs && st != FIT_FAILED && s->ntrace > 0 && score_stability(r, m.agm) == 0)
		meta.stability = &r->stab;
	if (st == FIT_FAILED || s->ntrace == 0) {
		error("the fit failed; nothing written to '%s'", r->o.out);
		rc = 1;
	} else if (r->check.held && !have_whole) {
		error("cannot score the held-out links; nothing written to '%s'", r->o.out);
		rc = 1;
	} else if (outdir_write(r->od, &m, &meta, have_whole ? &r->check : NULL)) {
		rc = 1;
	} else {
		if (!r->quiet)
			say_written(r, s, st, m.agm);
		struct caveats cv; /* a thin answer, said even with -q */
		caveats_init(&cv);
		if (have_whole)
			caveats_of_links(&cv, links.held_edges);
		uint32_t covered, overlapping, nodes;
		if (!agm_coverage_as_given(m.agm, r->graph, &covered, &overlapping, &nodes))
			caveats_of_cover(&cv, covered, nodes);
		caveats_print(&cv);
	}
	agm_release(&refined);
	agm_release(&whole);
	if (rc)
		return rc;
	return r->interrupted ? EXIT_INTERRUPTED : 0;
}

/* a and b name the same folder. */
static int same_folder(const char *a, const char *b)
{
	struct stat sa, sb;
	if (!strcmp(a, b))
		return 1;
	return stat(a, &sa) == 0 && stat(b, &sb) == 0 && sa.st_dev == sb.st_dev &&
	       sa.st_ino == sb.st_ino;
}

int cmd_fit(int argc, char **argv)
{
	return cli_fit_in_group(argc, argv, NULL);
}

int cli_fit_in_group(int argc, char **argv, const struct cli_group *grp)
{
	struct run run = { .refine_rounds = 50, .grp = grp }, *r = &run;
	r->writer = !grp || grp->rank == 0;
	cli_fit_opts_init(&r->o);
	int rc = parse_args(r, argc, argv);
	if (rc >= 0)
		return rc;
	rc = 1;
	util_set_quiet(r->quiet || !r->writer);
	struct stat before;
	r->made_dir = r->writer && stat(r->o.out, &before) != 0 && errno == ENOENT;
	/* refuse early: a long fit whose result cannot be written is lost
	 * work, and so is one a second writer of the folder would replace */
	if (proc_signals_install() ||
	    !agreed(r, !r->writer ||
			   (!result_prepare_dir(r->o.out) &&
			    (r->lock = dirlock_new(r->o.out, proc_command_line())) &&
			    !dirlock_take(r->lock) && !dirlock_reserve(r->lock))))
		goto out;
	r->t_begin = util_now();
	int loaded = r->resume ? load_resume(r) : load_graph(r);
	if (loaded) {
		if (loaded == -3 || (loaded == -2 && proc_signal_caught()))
			rc = EXIT_INTERRUPTED;
		goto out;
	}
	r->graph = r->g ? r->g : r->ck.graph;
	if (memory_check_fit(r->graph, &r->p))
		goto out;
	r->f = fit_new(r->check.train ? r->check.train : r->graph, &r->p,
		       r->have_origin ? &r->origin : NULL);
	r->oc = (struct outdir_config){
		.dir = r->o.out, .g = r->graph, .params = r->p,
		.every = r->o.checkpoint_every > 0 ? r->o.checkpoint_every : 120.0,
		.one_start = r->resume && !r->ck.savepoint,
		.continues = r->resume && same_folder(r->resume, r->o.out),
		.lock = r->lock,
	};
	if (!r->f || (r->writer && (!(r->od = outdir_new(&r->oc)) ||
				    !(r->follow = follow_host_new(r->o.out, &r->p)))))
		goto out;
	if (r->check.held)
		fit_exclude(r->f, r->check.held);
	if (!r->quiet && r->graph->nsend) { /* the nodes and arcs given, not the copies */
		char size[160];
		graph_describe(r->graph, size, sizeof size);
		notice("fitting %u communities on %s with %u thread%s", r->p.k, size, r->p.threads,
		       r->p.threads == 1 ? "" : "s");
	} else if (!r->quiet) {
		notice("fitting %u communities on %u nodes and %llu edges with %u thread%s",
		       r->p.k, r->graph->n, (unsigned long long)r->graph->m, r->p.threads,
		       r->p.threads == 1 ? "" : "s");
	}
	if (grp)
		grp->share(grp->arg, r->f);
	if (!agreed(r, 1) || fit_start(r->f))
		goto out;
	struct fit_progress pr = { isatty(2), r->quiet || !r->writer, 0, 0, 0, 0 };
	watch(r, &pr);
	enum fit_state st = fit_wait(r->f);
	struct snapshot *own = fit_snapshot(r->f);
	const struct snapshot *s = own;
	fit_progress_show(&pr, own, 1);
	if (grp && st == FIT_STOPPED && !r->interrupted)
		r->interrupted = 1; /* another process was interrupted */
	if (r->repeats && !r->interrupted && st != FIT_FAILED && own->ntrace > 0)
		s = repeat_fits(r, own, &st);
	rc = !s ? 1 : r->writer ? finish(r, st, s) : 0;
	snapshot_release(own);
	if (grp)
		rc = grp->end(grp->arg, rc);
out:
	while (grp && r->agreed < 2)
		agreed(r, 0); /* the others learn that this process failed */
	run_release(r);
	/* a folder this run made and left empty (the graph did not load, the
	 * fit was refused) goes again, as if the command had not run; rmdir
	 * leaves a folder holding anything */
	if (rc && r->made_dir)
		rmdir(r->o.out);
	return rc;
}
