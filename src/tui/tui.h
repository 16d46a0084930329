/*
 * tui: the explorer, a curses program over the fitting engine. This is
 * what the explore command (src/cli/explore.c) calls; the explorer's own
 * pieces have their own headers:
 *   view.h    the whole state of the screen and the caches the panes draw
 *             from (no curses: unit-tested in tests/unit/test_tui_view.c);
 *   keys.h    the one key table and the modes that own the keyboard;
 *   panes.h   drawing: the panes, the overlays and their helpers;
 *   screen.h  the curses windows laid out from the view;
 *   term.h    starting and ending curses, and the message inbox;
 *   pager.h   pages of the edge lists, fetched on a worker thread;
 *   plot.h    the likelihood curve as dots (no curses).
 * The fitting thread never calls curses: the UI thread polls the keyboard,
 * the fit's wake-up pipe and the signal pipe, and takes the newest
 * snapshot with fit_snapshot().
 */
#ifndef COTERIE_TUI_H
#define COTERIE_TUI_H

#include <stdint.h>

#include "coterie/fit.h"

struct graph;
struct select_result;
struct select_run;

/* What the explore command hands over for the explorer. */
struct tui_config {
	const struct graph *g;        /* borrowed; outlives the explorer */
	struct fit *fit;              /* takes ownership; started or not */
	struct fit_params params;     /* as used for the fit (result files) */
	const char *graph_label;      /* shown in the header (borrowed) */
	const char *graph_path;       /* recorded in run.json (borrowed) */
	const char *outdir;           /* where 'w' and quitting write (borrowed) */
	int outdir_is_default;        /* chosen by us: say so on screen */
	int outdir_created;           /* this command made outdir (the up-front
				       * write check): removed on leaving
				       * if still empty */
	int reopened;                 /* a saved result is shown */
	int outdir_holds_result;      /* outdir already holds this model */
	uint32_t saved_sweep;         /* its sweep, when it does */
	double saved_loglik;          /* and its last log-likelihood */
	enum fit_state saved_state;   /* the state recorded in the checkpoint */
	int start;                    /* start the fitting thread */
	double t_begin;               /* when the command started (run.json) */
	const struct select_result *selection; /* -k auto's search (borrowed), or NULL */
	double checkpoint_every;      /* seconds between autosaves; 0: default */
	int one_start;                /* the fit goes on as one start (reopened
				       * without a savepoint): outdir.h */
	const char *note;             /* said in the footer on opening (borrowed), or NULL */
	int follow;                   /* outdir's fit runs in another process:
				       * follow it (tui/follower.h), write nothing */
};

/* What the explore command hands over for -k auto (kscreen.c). */
struct tui_kconfig {
	const struct graph *g;        /* borrowed */
	const char *graph_label;      /* shown in the header (borrowed) */
	struct select_run *run;       /* takes ownership; started */
};

/* Show the search for k as its points arrive, until it ends or the user
 * quits. Returns -1 when a k was chosen (*res filled; release with
 * select_result_release()): go on to the fit; otherwise the exit status
 * (0 the user quit, 1 failure, 130 a signal). Frees cfg->run. */
int tui_choose_k(const struct tui_kconfig *cfg, struct select_result *res);

/* Run the explorer until the user quits or a signal arrives. Writes the
 * result folder first when a fit would be lost. Frees cfg->fit. Returns
 * the exit status (0, 1, or 130 after a signal). */
int tui_run(struct tui_config *cfg);

#endif
