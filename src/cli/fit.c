/*
 * cli/fit: `coterie fit GRAPH -k N -o DIR`.
 *
 * The main thread loads the graph, proves the output folder writable,
 * starts the fitting thread and then only watches: it poll()s the fit's
 * wake-up pipe and the signal pipe, prints progress, writes a checkpoint
 * now and then, and writes the result folder at the end. An interrupt
 * (Ctrl-C, SIGTERM, a lost terminal) lets the sweep in progress end,
 * saves, and exits 130; a second one stops inside the sweep. Both the
 * interrupted folder and the periodic checkpoints carry a savepoint
 * (fit.h, struct fit_savepoint), so --resume ends with the bytes the
 * uninterrupted fit would have written.
 */
#include <getopt.h>
#include <math.h>
#include <poll.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "cli.h"
#include "coterie/fit.h"
#include "coterie/graph.h"
#include "coterie/holdout.h"
#include "coterie/memory.h"
#include "coterie/refine.h"
#include "coterie/result.h"
#include "coterie/select.h"
#include "coterie/savepoint.h"

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
		"                        chooses it by held-out likelihood (see --k-grid)\n"
		"      --k-grid G        the k tried by -k auto: A:B (geometric, ratio 1.25),\n"
		"                        A:B:RATIO, or a list such as 4,8,16 (default: 2 up\n"
		"                        to a bound from the graph; see the manual)\n"
		"      --holdout X       share of edges -k auto holds out, with as many\n"
		"                        non-edges (default 0.1)\n"
		"      --check-links X   hold out X of the edges and as many non-edges from\n"
		"                        the final fit and report their link AUC and\n"
		"                        log-likelihood in run.json\n"
		"  -o, --output DIR      result folder (made if missing; required)\n"
		"  -j, --threads N       worker threads (default: every core)\n"
		"      --seed N          random seed (default 1); same seed, same result\n"
		"      --starts N        fit N times from different seeds and sweep orders and\n"
		"                        keep the most likely (default 3 below 100000 edges,\n"
		"                        else 1; the likelihood has local maxima)\n"
		"      --no-reseed       skip the moves that re-seed the weakest community\n"
		"                        after a plateau (faster, often less likely)\n"
		"      --tol X           plateau: relative gain per sweep below X ...\n"
		"      --patience N      ... for N sweeps in a row (defaults 1e-4, 3)\n"
		"      --max-sweeps N    at most N sweeps per start, reseeding and earlier\n"
		"                        runs of a resumed fit included (default 500)\n"
		"      --past-plateau    do not stop at a plateau; run to --max-sweeps\n"
		"      --refine          after the fit, improve the cover under the AGM by\n"
		"                        local moves; memberships.tsv holds the refined cover\n"
		"      --refine-rounds N at most N rounds of refinement (default 50)\n"
		"      --epsilon X       background link probability (default: the density)\n"
		"      --format F        edges, gml, graphml or pajek (default: by extension)\n"
		"      --resume DIR      continue the fit saved in DIR (same graph only)\n"
		"      --checkpoint-every SECONDS\n"
		"                        write a checkpoint to the result folder that often\n"
		"                        while fitting (default 120; --resume goes on from it)\n"
		"  -q, --quiet           no progress or notices\n"
		"  -h, --help            this text\n");
}

struct progress {
	int tty;
	int quiet;
	double last_print;
	uint32_t last_sweep;
	uint32_t last_start;
	int line_open;
};

static void progress_show(struct progress *pr, const struct snapshot *s, int final)
{
	if (pr->quiet || s->ntrace == 0)
		return;
	double now = util_now();
	const struct trace_point *t = &s->trace[s->ntrace - 1];
	double gain = 0.0;
	if (s->ntrace >= 2) {
		double prev = s->trace[s->ntrace - 2].loglik;
		gain = (t->loglik - prev) / (fabs(prev) > 0 ? fabs(prev) : 1.0);
	}
	char line[256], start[32] = "";
	if (s->starts > 1)
		snprintf(start, sizeof start, "start %u/%u  ", s->start, s->starts);
	snprintf(line, sizeof line,
		 "%ssweep %u  loglik %.6g  gain %.2e  %.2f sweeps/s  %.1f s%s", start, s->sweep,
		 t->loglik, gain, s->sweeps_per_sec, s->seconds, s->plateau ? "  [levelled]" : "");
	if (pr->tty) {
		fprintf(stderr, "\r\033[K%s", line);
		pr->line_open = 1;
		if (final) {
			fputc('\n', stderr);
			pr->line_open = 0;
		}
	} else if (final || s->sweep != pr->last_sweep || s->start != pr->last_start) {
		if (final || now - pr->last_print >= 1.0 || s->sweep <= 1 ||
		    s->start != pr->last_start) { /* a line for every start */
			fprintf(stderr, "coterie: %s\n", line);
			pr->last_print = now;
		}
	}
	if (!pr->tty && s->start != pr->last_start && pr->last_start)
		pr->last_print = 0; /* show the first sweeps of each start */
	pr->last_sweep = s->sweep;
	pr->last_start = s->start;
	fflush(stderr);
}

static void progress_break(struct progress *pr)
{
	if (pr->line_open) {
		fputc('\n', stderr);
		pr->line_open = 0;
	}
}

static void on_scored(const struct select_point *pt, void *arg)
{
	const int *quiet = arg;
	if (!*quiet)
		notice("choosing k: k %u scores %.6g on the held-out pairs, link AUC %.4f "
		       "(%u sweeps, %.1f s)", pt->k, pt->heldout, pt->auc, pt->sweeps, pt->seconds);
}

static int stop_asked(void *arg)
{
	(void)arg;
	return proc_signal_caught() != 0;
}

/* -k auto: score a grid of k by held-out likelihood, write
 * k-selection.tsv, and set p->k to the winner; sp holds --k-grid and
 * --holdout (in o). Returns 0 or -1 (reported). */
static int choose_k(const struct graph *g, struct fit_params *p, const char *out,
		    struct cli_fit_opts *o, int quiet, struct select_result *res)
{
	uint32_t minima = 0;
	int have_grid = o->have_grid;
	if (cli_fit_opts_grid(o, g, &minima))
		return -1;
	struct select_params *sp = &o->sp;
	uint32_t grid[SELECT_MAX_GRID];
	uint32_t ng = select_grid(sp, grid);
	if (!quiet) {
		if (!have_grid)
			notice("choosing k from %u to %u (three times the %u distinct locally "
			       "minimal ego-nets, within 10 to 500 and at most n/4)", sp->kmin,
			       sp->kmax, minima);
		notice("choosing k among %u values from %u to %u by the likelihood of %.0f%% of "
		       "the edges and as many non-edges, held out; %u fits at a time", ng, grid[0],
		       grid[ng - 1], 100.0 * sp->share, p->threads < ng ? p->threads : ng);
	}
	/* one fit of the largest k of the grid (the parallel fits of smaller k
	 * are not added up) */
	struct fit_params big = *p;
	big.k = grid[ng - 1];
	big.threads = p->threads;
	if (memory_check_fit(g, &big))
		return -1;
	struct select_hooks hooks = { on_scored, stop_asked, &quiet };
	int rc = select_k(g, p, sp, &hooks, res);
	if (rc == -2) {
		error("interrupted while choosing k; no fit to save yet");
		return -1;
	}
	if (rc)
		return -1;
	if (result_write_selection(out, res))
		return -1;
	if (!quiet)
		notice("chose k = %u, the highest held-out log-likelihood; the scores are in "
		       "'%s/%s'", res->best, out, RESULT_SELECTION);
	if (res->npts == res->ngrid && res->best == res->grid[res->ngrid - 1] && res->ngrid > 1)
		warning("the chosen k is the largest tried; a grid reaching further (--k-grid) "
			"may find a better one");
	p->k = res->best;
	return 0;
}

enum {
	OPT_PAST_PLATEAU = CLI_OPT_OWN,
	OPT_RESUME,
	OPT_REFINE,
	OPT_REFINE_ROUNDS,
	OPT_CHECK_LINKS,
};

/* --refine: the AGM refinement of the final cover into *out (released by
 * the caller with agm_release()). Returns 0 or -1 (reported). */
static int refine_cover_of(const struct graph *g, const struct snapshot *s, unsigned rounds,
			   uint64_t seed, int quiet, struct agm *out, struct refine_report *rep)
{
	struct refine_params rp;
	refine_params_default(&rp);
	rp.max_rounds = rounds;
	rp.seed = seed;
	rp.stop = stop_asked;
	if (!quiet)
		notice("refining the cover under the AGM (at most %u rounds)", rounds);
	if (refine_agm(g, &s->agm, &s->F, &rp, out, rep))
		return -1;
	if (!quiet)
		notice("refinement %s after %u round%s in %.1f s: +%llu -%llu memberships, AGM "
		       "log-likelihood %.10g -> %.10g", rep->converged ? "converged" :
		       rep->stopped ? "was interrupted" : "reached the round limit", rep->rounds,
		       rep->rounds == 1 ? "" : "s", rep->seconds, (unsigned long long)rep->added,
		       (unsigned long long)rep->removed, rep->loglik_before, rep->loglik_after);
	return 0;
}

int cmd_fit(int argc, char **argv)
{
	static const struct option opts[] = {
		{ "communities", required_argument, NULL, 'k' },
		{ "output", required_argument, NULL, 'o' },
		{ "threads", required_argument, NULL, 'j' },
		{ "seed", required_argument, NULL, CLI_OPT_SEED },
		{ "tol", required_argument, NULL, CLI_OPT_TOL },
		{ "patience", required_argument, NULL, CLI_OPT_PATIENCE },
		{ "max-sweeps", required_argument, NULL, CLI_OPT_MAX_SWEEPS },
		{ "past-plateau", no_argument, NULL, OPT_PAST_PLATEAU },
		{ "epsilon", required_argument, NULL, CLI_OPT_EPSILON },
		{ "format", required_argument, NULL, CLI_OPT_FORMAT },
		{ "resume", required_argument, NULL, OPT_RESUME },
		{ "checkpoint-every", required_argument, NULL, CLI_OPT_CHECKPOINT_EVERY },
		{ "starts", required_argument, NULL, CLI_OPT_STARTS },
		{ "no-reseed", no_argument, NULL, CLI_OPT_NO_RESEED },
		{ "refine", no_argument, NULL, OPT_REFINE },
		{ "refine-rounds", required_argument, NULL, OPT_REFINE_ROUNDS },
		{ "k-grid", required_argument, NULL, CLI_OPT_K_GRID },
		{ "holdout", required_argument, NULL, CLI_OPT_HOLDOUT },
		{ "check-links", required_argument, NULL, OPT_CHECK_LINKS },
		{ "quiet", no_argument, NULL, 'q' },
		{ "help", no_argument, NULL, 'h' },
		{ NULL, 0, NULL, 0 },
	};
	struct cli_fit_opts o;
	cli_fit_opts_init(&o);
	int quiet = 0, refine = 0;
	unsigned refine_rounds = 50;
	double check_links = 0.0;
	const char *out = NULL, *resume = NULL;
	int c;
	optind = 1;
	opterr = 0;
	while ((c = getopt_long(argc, argv, ":k:o:j:qh", opts, NULL)) != -1) {
		if (cli_fit_opts_take(&o, c, optarg))
			continue;
		switch (c) {
		case OPT_CHECK_LINKS:
			check_links = cli_double("--check-links", optarg, 0.001, 0.5);
			break;
		case 'o': out = optarg; break;
		case OPT_PAST_PLATEAU: o.p.past_plateau = 1; break;
		case OPT_RESUME: resume = optarg; break;
		case OPT_REFINE: refine = 1; break;
		case OPT_REFINE_ROUNDS:
			refine_rounds = cli_u32("--refine-rounds", optarg, 1, 1000000);
			refine = 1;
			break;
		case 'q': quiet = 1; break;
		case 'h': fit_usage(stdout); return 0;
		default:
			cli_option_error(c, argv);
			fprintf(stderr, "try 'coterie fit --help'\n");
			return EXIT_USAGE;
		}
	}
	if (argc - optind > 1)
		die(EXIT_USAGE, "fit takes one graph, not %d", argc - optind);
	const char *gpath = optind < argc ? argv[optind] : NULL;
	if (!gpath && !resume) {
		fit_usage(stderr);
		die(EXIT_USAGE, "fit needs a graph file (or - for standard input)");
	}
	struct fit_params p = o.p;
	if (!resume && !o.have_k)
		die(EXIT_USAGE, "fit needs the number of communities: -k N");
	if (o.have_grid && !o.k_auto)
		die(EXIT_USAGE, "--k-grid is for -k auto");
	double save_every = o.checkpoint_every > 0 ? o.checkpoint_every : 120.0;
	if (!out)
		out = resume;
	if (!out)
		die(EXIT_USAGE, "fit needs an output folder: -o DIR");
	util_set_quiet(quiet);

	/* refuse early: a long fit whose result cannot be written is lost work */
	if (result_prepare_dir(out))
		return 1;
	if (proc_signals_install())
		return 1;

	double t_begin = util_now();
	struct select_result sel;
	memset(&sel, 0, sizeof sel);
	struct holdout check;
	memset(&check, 0, sizeof check);
	struct checkpoint ck;
	memset(&ck, 0, sizeof ck);
	struct graph *g = NULL;
	struct fit_origin origin, *orig = NULL;
	if (resume) {
		char path[4096];
		snprintf(path, sizeof path, "%s/%s", resume, RESULT_CHECKPOINT);
		if (result_read_checkpoint(path, &ck))
			return 1;
		if (gpath) {
			g = graph_load(gpath, o.fmt);
			if (!g) {
				checkpoint_release(&ck);
				return 1;
			}
			if (graph_fingerprint(g) != ck.fingerprint) {
				error("'%s' is not the graph the fit in '%s' was made on; refusing to resume",
				      gpath, resume);
				graph_free(g);
				checkpoint_release(&ck);
				return 1;
			}
		}
		if (o.k_auto)
			die(EXIT_USAGE, "-k auto cannot be used when resuming");
		if (check_links > 0)
			die(EXIT_USAGE, "--check-links cannot be used when resuming");
		cli_fit_opts_resume(&o, &ck.params, "when resuming", &p);
		p.hold_at_plateau = 0;
		if (!ck.savepoint) {
			/* what fit.h says such a fit does: one start, no moves */
			p.starts = 1;
			p.no_reseed = 1;
		}
		if (ck.savepoint)
			notice("the saved fit was interrupted in start %u of %u; it goes on from there",
			       ck.savepoint->start, p.starts);
		else if (ck.state == FIT_LEVELLED && !p.past_plateau)
			notice("the saved fit had levelled off; it goes on until it levels off again");
		checkpoint_origin(&ck, &origin);
		orig = &origin;
	} else {
		g = graph_load(gpath, o.fmt);
		if (!g)
			return 1;
		if (cli_graph_fittable(g, gpath)) {
			graph_free(g);
			return 1;
		}
		if (!o.k_auto)
			cli_k_fits(p.k, g);
		cli_fit_opts_starts(&o, g->m);
		p.starts = o.p.starts;
		if (o.k_auto && choose_k(g, &p, out, &o, quiet, &sel)) {
			graph_free(g);
			return proc_signal_caught() ? EXIT_INTERRUPTED : 1;
		}
		if (check_links > 0) {
			/* the seed is offset so these pairs are not those -k auto held out */
			if (holdout_split(&check, g, check_links, p.seed + 0x9e3779b97f4a7c15ULL)) {
				graph_free(g);
				select_result_release(&sel);
				return 1;
			}
			if (!(p.epsilon > 0.0))
				p.epsilon = model_default_epsilon(g); /* the whole graph's */
			if (!quiet)
				notice("checking links: %llu edges and %llu non-edges are held out of the "
				       "fit", (unsigned long long)check.nedges,
				       (unsigned long long)check.nnon);
		}
	}
	const struct graph *graph = g ? g : ck.graph;
	if (memory_check_fit(graph, &p)) {
		graph_free(g);
		checkpoint_release(&ck);
		return 1;
	}

	struct fit *f = fit_new(check.train ? check.train : graph, &p, orig);
	if (!f) {
		graph_free(g);
		checkpoint_release(&ck);
		holdout_release(&check);
		select_result_release(&sel);
		return 1;
	}
	if (check.held)
		fit_exclude(f, check.held);
	if (!quiet)
		notice("fitting %u communities on %u nodes and %llu edges with %u thread%s",
		       p.k, graph->n, (unsigned long long)graph->m, p.threads,
		       p.threads == 1 ? "" : "s");
	if (fit_start(f)) {
		fit_free(f);
		graph_free(g);
		checkpoint_release(&ck);
		holdout_release(&check);
		select_result_release(&sel);
		return 1;
	}

	struct progress pr = { isatty(2), quiet, 0, 0, 0, 0 };
	double last_save = util_now();
	int want_point = 0, one_start = resume && !ck.savepoint;
	int interrupted = 0;
	char ckpath[4096];
	snprintf(ckpath, sizeof ckpath, "%s/%s", out, RESULT_CHECKPOINT);
	for (;;) {
		struct pollfd pfd[2] = {
			{ fit_wake_fd(f), POLLIN, 0 },
			{ proc_signal_fd(), POLLIN, 0 },
		};
		poll(pfd, 2, 500);
		fit_drain_wake(f);
		if (proc_signal_caught() && !interrupted) {
			/* the sweep in progress ends first, so that --resume
			 * continues exactly; a second signal stops at once */
			interrupted = 1;
			progress_break(&pr);
			notice("interrupted: ending the sweep in progress and saving to '%s' "
			       "(interrupt again to stop at once)", out);
			fit_interrupt(f);
		}
		if (proc_signal_count() >= 2 && interrupted == 1) {
			interrupted = 2;
			progress_break(&pr);
			notice("interrupted again: stopping inside the sweep; a resumed fit goes on "
			       "from the model as it is");
			fit_stop(f);
		}
		enum fit_state st = fit_get_state(f);
		struct snapshot *s = fit_snapshot(f);
		if (fit_state_ended(st) && s->state == st) {
			snapshot_release(s);
			break;
		}
		progress_show(&pr, s, 0);
		/* a periodic checkpoint carries a savepoint, so that after a
		 * kill -9 --resume continues exactly; the fit makes one at the end
		 * of the next sweep when asked (a fit continued as one start
		 * makes none, and saves its snapshot as it is) */
		if (!want_point && util_now() - last_save >= save_every && !one_start) {
			fit_want_savepoint(f);
			want_point = 1;
		}
		struct snapshot *ps = want_point ? fit_take_savepoint(f) : NULL;
		if (ps || (one_start && s->ntrace > 0 && util_now() - last_save >= save_every)) {
			/* a failure is reported, and the next one tried later */
			result_write_checkpoint(ckpath, graph, &p, ps ? ps : s);
			last_save = util_now();
			want_point = 0;
		}
		snapshot_release(ps);
		snapshot_release(s);
	}
	enum fit_state st = fit_wait(f);
	struct snapshot *s = fit_snapshot(f);
	progress_show(&pr, s, 1);

	/* --check-links: score the held-out pairs, and read the AGM figures
	 * (internal edges, conductance, p_c) from the whole graph, not from
	 * the training one the fit saw */
	struct result_links links;
	struct snapshot whole;
	const struct snapshot *ws = s;
	int have_whole = 0;
	if (check.held && s->ntrace > 0 && st != FIT_FAILED) {
		links = (struct result_links){ check_links, check.nedges, check.nnon, 0, 0 };
		whole = *s;
		if (holdout_score(&check, &s->F, s->epsilon, &links.heldout_loglik, &links.auc) == 0 &&
		    agm_from_strengths(&whole.agm, graph, &s->F, s->epsilon, s->delta,
				       AGM_MIN_LINKS) == 0) {
			have_whole = 1;
			ws = &whole;
			if (!quiet)
				notice("held-out links: AUC %.4f, log-likelihood %.6g over %llu edges "
				       "and %llu non-edges", links.auc, links.heldout_loglik,
				       (unsigned long long)links.held_edges,
				       (unsigned long long)links.held_non_edges);
		}
	}
	/* the refined cover replaces the thresholded one in what is written */
	struct snapshot written = *ws;
	struct agm refined;
	struct refine_report rrep;
	int have_refined = 0, refine_failed = 0;
	memset(&refined, 0, sizeof refined);
	if (refine && interrupted && !quiet)
		notice("interrupted: the cover is not refined");
	if (refine && !interrupted && st != FIT_FAILED && s->ntrace > 0) {
		if (refine_cover_of(graph, ws, refine_rounds, p.seed, quiet, &refined, &rrep)) {
			refine_failed = 1; /* reported; the unrefined result is still written */
		} else {
			have_refined = 1;
			written.agm = refined;
			if (rrep.stopped)
				interrupted = 1;
		}
	}

	const char *status = interrupted ? "interrupted" : fit_state_name(st);
	struct result_meta meta = {
		.k_auto = o.k_auto,
		.command_line = proc_command_line(),
		.graph_path = gpath ? gpath : (ck.graph ? ck.graph->source : ""),
		.wall_seconds = util_now() - t_begin,
		.peak_rss_kb = proc_peak_rss_kb(),
		.status = status,
		.refine = have_refined ? &rrep : NULL,
		.refine_rounds = refine ? refine_rounds : 0,
		.selection = o.k_auto ? &sel : NULL,
		.links = have_whole ? &links : NULL,
	};
	int rc = 0;
	if (st == FIT_FAILED || s->ntrace == 0) {
		error("the fit failed; nothing written to '%s'", out);
		rc = 1;
	} else if (check.held && !have_whole) {
		error("cannot score the held-out links; nothing written to '%s'", out);
		rc = 1;
	} else if (result_write(out, graph, &p, &written, &meta) ||
		   (have_whole && result_write_links(out, graph, &check, &s->F, s->epsilon))) {
		rc = 1;
	} else if (!quiet) {
		const char *how = st == FIT_LEVELLED ? "levelled off" :
				  st == FIT_FINISHED ? "reached the sweep limit" :
				  interrupted ? "was interrupted" : "was stopped";
		char best[64] = "";
		if (s->starts > 1)
			snprintf(best, sizeof best, " (start %u of %u, the most likely)",
				 s->best_start, s->starts);
		notice("the fit %s after %u sweeps%s in %.1f s: %u communities, %u of %u nodes "
		       "in at least one, %u in two or more; results in '%s'",
		       how, s->sweep, best, s->seconds, written.agm.cover.k, written.agm.covered,
		       graph->n, written.agm.overlapping, out);
	}
	agm_release(&refined);
	if (refine_failed)
		rc = 1;
	if (have_whole)
		agm_release(&whole.agm);
	snapshot_release(s);
	fit_free(f);
	holdout_release(&check);
	select_result_release(&sel);
	graph_free(g);
	checkpoint_release(&ck);
	if (rc)
		return rc;
	return interrupted ? EXIT_INTERRUPTED : 0;
}
