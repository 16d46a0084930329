/*
 * tui/kscreen: the screen of `coterie explore GRAPH -k auto` while the
 * number of communities is being chosen.
 *
 * The search runs on its own thread (select_run_start(), select.c); this
 * screen poll()s the keyboard, the search's wake-up pipe and the signal
 * pipe, copies the points scored so far and redraws from them: the
 * held-out log-likelihood against k as a curve (the x axis spaced by grid
 * position, so a geometric grid reads as a log scale of k), and a table
 * of every point with its held-out link AUC, the best marked (a grid
 * longer than the screen shows a window of it that holds the best k and
 * the one being fitted, its range in the head; with folds, the spread
 * over them). Points are matched to the grid by k, since an extension
 * past the grid's edge adds k as they are scored (downwards too). Once
 * done, the search's caveats (caveat.h) are shown above the footer. It
 * ends when
 * the search ends (the explorer's normal view then opens on the final fit)
 * or when the user quits.
 *
 * Its own curses session (term.c), begun and ended here, so tui_run()
 * starts from a clean terminal. The one thing a newcomer gets wrong: the
 * search's thread reports through error(); while curses owns the terminal
 * those messages wait in term.c's inbox, and the last error is printed
 * after curses ended, never written over the screen.
 */
#include <errno.h>
#include <math.h>
#include <poll.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "coterie/caveat.h"
#include "coterie/graph.h"
#include "coterie/proc.h"
#include "coterie/select.h"
#include "coterie/util.h"
#include "panes.h"
#include "plot.h"
#include "term.h"
#include "tui.h"

struct kstate {
	const struct tui_kconfig *cfg;
	struct select_point pts[SELECT_MAX_GRID];
	uint32_t npts;
	uint32_t grid[SELECT_MAX_GRID];
	uint32_t ngrid;
	int done;
	int shape; /* a search by the curve's shape: the grid is the k tried */
	int utf8;
	double t0;
};

static void put(int y, int x, const char *s, int maxcols)
{
	if (y < 0 || y >= LINES || x >= COLS || maxcols <= 0)
		return;
	draw_text(stdscr, y, x, s, maxcols);
}

/* The point scored for grid position i, or NULL (not yet). Points come
 * in the order scored, the grid's then an extension's, so they are
 * matched by k. */
static const struct select_point *point_at(const struct kstate *k, uint32_t i)
{
	for (uint32_t j = 0; j < k->npts; j++)
		if (k->pts[j].k == k->grid[i])
			return &k->pts[j];
	return NULL;
}

/* The grid position of the best point (the highest mean held-out
 * log-likelihood; the first scored among equals), or ngrid when none. */
static uint32_t best_at(const struct kstate *k)
{
	uint32_t best = k->ngrid;
	for (uint32_t i = 0; i < k->ngrid; i++) {
		const struct select_point *p = point_at(k, i);
		if (p && (best == k->ngrid || p->heldout > point_at(k, best)->heldout))
			best = i;
	}
	return best;
}

/* The curve in the rectangle (y0, x0, h, w) of the screen. */
static void draw_curve(const struct kstate *k, int y0, int x0, int h, int w)
{
	if (h < 2 || w < 8 || k->ngrid == 0)
		return;
	double y[SELECT_MAX_GRID], lo = INFINITY, hi = -INFINITY;
	for (uint32_t i = 0; i < k->ngrid; i++)
		y[i] = NAN;
	for (uint32_t i = 0; i < k->ngrid; i++) {
		const struct select_point *p = point_at(k, i);
		if (!p)
			continue;
		y[i] = p->heldout;
		lo = y[i] < lo ? y[i] : lo;
		hi = y[i] > hi ? y[i] : hi;
	}
	char lab[32];
	int lw = 12;
	if (k->npts > 0) {
		snprintf(lab, sizeof lab, "%.6g", hi);
		put(y0, x0, lab, lw);
		snprintf(lab, sizeof lab, "%.6g", lo);
		put(y0 + h - 1, x0, lab, lw);
	}
	int px = x0 + lw + 1, pw = w - lw - 1;
	int cw = k->utf8 ? 2 : 1, ch = k->utf8 ? 4 : 3;
	int dw = pw * cw, dh = h * ch;
	unsigned char *grid = calloc((size_t)dw * (size_t)dh, 1);
	if (!grid)
		return;
	if (!(hi > lo)) {
		lo -= 1.0;
		hi += 1.0;
	}
	plot_raster(y, k->ngrid, lo, hi, dw, dh, grid);
	for (int cy = 0; cy < h; cy++)
		for (int cx = 0; cx < pw; cx++) {
			char cell[8];
			if (k->utf8) {
				if (plot_braille(grid, dw, dh, cx, cy, cell))
					mvaddstr(y0 + cy, px + cx, cell);
			} else {
				int c = plot_ascii(grid, dw, dh, cx, cy);
				if (c)
					mvaddch(y0 + cy, px + cx, (chtype)c);
			}
		}
	free(grid);
	/* the k of the first and last grid points under the curve */
	snprintf(lab, sizeof lab, "k %u", k->grid[0]);
	put(y0 + h, px, lab, pw);
	snprintf(lab, sizeof lab, "k %u", k->grid[k->ngrid - 1]);
	int l = (int)strlen(lab);
	put(y0 + h, px + pw - l, lab, l);
}

/* Lines 1 and 2: what is being done, how far, and how to read it. */
static void draw_head(const struct kstate *k, uint32_t folds)
{
	char line[512];
	if (k->shape) {
		snprintf(line, sizeof line, "Choosing the number of communities by held-out "
			 "likelihood, following the curve: %u k tried%s  %.0f s", k->npts,
			 k->done ? ", done" : "", util_now() - k->t0);
		if (draw_width(line) > COLS)
			snprintf(line, sizeof line, "Choosing k by held-out likelihood: %u tried%s  "
				 "%.0f s", k->npts, k->done ? ", done" : "", util_now() - k->t0);
	} else {
		snprintf(line, sizeof line, "Choosing the number of communities by held-out "
			 "likelihood: %u of %u k scored%s  %.0f s", k->npts, k->ngrid,
			 k->done ? ", done" : "", util_now() - k->t0);
		if (draw_width(line) > COLS) /* the counts whole, the words shorter */
			snprintf(line, sizeof line, "Choosing k by held-out likelihood: %u of %u "
				 "scored%s  %.0f s", k->npts, k->ngrid, k->done ? ", done" : "",
				 util_now() - k->t0);
	}
	put(1, 0, line, COLS);
	if (k->shape)
		snprintf(line, sizeof line, "held-out log-likelihood against k (higher is better): "
			 "a bracket around its top, then closing in");
	else if (folds > 1)
		snprintf(line, sizeof line, "mean held-out log-likelihood of %u splits against k "
			 "(higher is better); the search stops after two k in a row below the best",
			 folds);
	else
		snprintf(line, sizeof line, "held-out log-likelihood against k (higher is better); "
			 "the search stops after two k in a row below the best");
	put(2, 0, line, COLS);
}

static void draw_all(const struct kstate *k)
{
	erase();
	const struct graph *g = k->cfg->g;
	char line[512], name[256];
	util_escape(k->cfg->graph_label, name, sizeof name, !k->utf8);
	attron(A_BOLD);
	snprintf(line, sizeof line, "coterie  %s  %u nodes, %llu edges", name, g->n,
		 (unsigned long long)g->m);
	put(0, 0, line, COLS);
	attroff(A_BOLD);
	uint32_t best = best_at(k), pending = 0; /* grid positions; ngrid: none */
	while (pending < k->ngrid && point_at(k, pending))
		pending++;
	uint32_t folds = k->npts ? k->pts[0].folds : 0;
	uint32_t top = best; /* the highest mean; once done, best is the choice */
	if (k->done && best < k->ngrid && folds > 1) {
		double se;
		uint32_t chosen = select_one_se(k->pts, k->npts, k->grid[best], &se);
		for (uint32_t i = 0; i < k->ngrid; i++)
			if (k->grid[i] == chosen && point_at(k, i))
				best = i;
	}
	draw_head(k, folds);

	int rows = LINES - 4;      /* header 3, footer 1 */
	int table = (int)k->ngrid + 1;
	int curve_h = rows - table - 2;
	if (curve_h > 12)
		curve_h = 12;
	if (curve_h < 3) {
		curve_h = rows / 2 - 1;
		table = rows - curve_h - 2;
	}
	draw_curve(k, 4, 0, curve_h, COLS);
	int ty = 4 + curve_h + 2;
	/* the rows that fit: all, or a window that holds the best k and the
	 * one being fitted (the best alone when both do not fit), said in
	 * the head so a cut table never passes for the whole grid */
	int room = LINES - 1 - (ty + 1);
	uint32_t first = 0, last = k->ngrid;
	char head[160];
	int sd = folds > 1 && COLS >= 72; /* the spread, where it fits whole */
	int why = !sd && COLS >= 72; /* why each k was tried, cut to the width */
	snprintf(head, sizeof head, "       k   held-out loglik   link AUC   sweeps   seconds%s",
		 sd ? "        sd" : why ? "   why" : "");
	if (room >= 1 && (int)k->ngrid > room) {
		uint32_t want = pending < k->ngrid ? pending : k->ngrid - 1; /* the newest row */
		uint32_t lo = best < k->ngrid ? (best < want ? best : want) : 0;
		uint32_t hi = best < k->ngrid ? (best > want ? best : want) : 0;
		if (hi - lo + 1 > (uint32_t)room)
			lo = hi = best;
		first = hi + 1 > (uint32_t)room ? hi + 1 - (uint32_t)room : 0; /* hi shows */
		if (first > lo) /* and lo */
			first = lo;
		if (first + (uint32_t)room > k->ngrid)
			first = k->ngrid - (uint32_t)room;
		last = first + (uint32_t)room;
		char note[96];
		snprintf(note, sizeof note, "table: k %u-%u of %u, the best among them", k->grid[first],
			 k->grid[last - 1], k->ngrid);
		put(ty - 1, 2, note, COLS - 2);
	}
	attron(A_BOLD);
	put(ty, 2, head, COLS - 2);
	attroff(A_BOLD);
	for (uint32_t i = first; i < last && ty + 1 + (int)(i - first) < LINES - 1; i++) {
		const struct select_point *p = point_at(k, i);
		if (!p) {
			snprintf(line, sizeof line, "  %6u   %s", k->grid[i],
				 i == pending && !k->done ? "fitting..." : "");
		} else {
			char auc[16];
			if (isfinite(p->auc))
				snprintf(auc, sizeof auc, "%.4f", p->auc);
			else
				snprintf(auc, sizeof auc, "-");
			snprintf(line, sizeof line, "%s %6u   %15.6g   %8s   %6u   %7.1f",
				 i == best ? (k->utf8 ? "\u25b6" : ">") : " ", p->k, p->heldout, auc,
				 p->sweeps, p->seconds);
			size_t l = strlen(line);
			if (sd)
				snprintf(line + l, sizeof line - l, "   %7.3g", p->heldout_sd);
			else if (why)
				snprintf(line + l, sizeof line - l, "   %s%s", p->reason,
					 p->warm_from ? " (warm)" : "");
		}
		if (i == best)
			attron(A_BOLD);
		put(ty + 1 + (int)(i - first), 2, line, COLS - 2);
		if (i == best)
			attroff(A_BOLD);
	}
	if (k->done && best < k->ngrid && best != top)
		snprintf(line, sizeof line, "chose k = %u, within one standard error of k %u's "
			 "mean; the final fit starts now (any key: at once; q quits)", k->grid[best],
			 k->grid[top]);
	else if (k->done && best < k->ngrid)
		snprintf(line, sizeof line, "chose k = %u (the highest %sheld-out log-likelihood); "
			 "the final fit starts now (any key: at once; q quits)", k->grid[best],
			 folds > 1 ? "mean " : "");
	else
		snprintf(line, sizeof line, "q quits (nothing is saved before the final fit)");
	attron(A_REVERSE);
	put(LINES - 1, 0, line, COLS);
	attroff(A_REVERSE);
	refresh();
}

/* The search's caveats (caveat.h) above the footer, each broken
 * between words over up to three rows. Returns how many there are. */
static uint32_t draw_caveats(const struct select_result *res, uint32_t n)
{
	struct caveats cv;
	caveats_init(&cv);
	caveats_of_selection(&cv, res, n);
	int y = LINES - 1 - 3 * (int)cv.n;
	for (uint32_t i = 0; i < cv.n && y >= 4; i++) {
		char text[520];
		snprintf(text, sizeof text, "warning: %s", cv.c[i].text);
		for (int r = 0; r < 3; r++) {
			move(y + r, 0);
			clrtoeol();
		}
		attron(A_BOLD);
		draw_wrap(stdscr, y, 0, text, COLS, 3);
		attroff(A_BOLD);
		y += 3;
	}
	refresh();
	return cv.n;
}

int tui_choose_k(const struct tui_kconfig *cfg, struct select_result *res)
{
	memset(res, 0, sizeof *res);
	struct term_caps caps;
	if (term_start("'coterie fit -k auto' works without one", &caps)) {
		select_run_free(cfg->run);
		return 1;
	}

	struct kstate k;
	memset(&k, 0, sizeof k);
	k.cfg = cfg;
	k.utf8 = caps.utf8;
	k.t0 = util_now();
	int quit = 0, sig = 0, hangup = 0;
	double last_draw = 0;
	for (;;) {
		k.npts = select_run_points(cfg->run, k.pts, k.grid, &k.ngrid, &k.done);
		k.shape = select_run_by_shape(cfg->run);
		double now = util_now();
		if (now - last_draw >= 0.2 || k.done) {
			draw_all(&k);
			last_draw = now;
		}
		if (k.done || quit)
			break;
		struct pollfd pfd[3] = {
			{ STDIN_FILENO, POLLIN, 0 },
			{ select_run_wake_fd(cfg->run), POLLIN, 0 },
			{ proc_signal_fd(), POLLIN, 0 },
		};
		int pr = poll(pfd, 3, 250);
		if (proc_signal_caught()) {
			sig = 1;
			break;
		}
		if (pr < 0 && errno != EINTR)
			break;
		if (pfd[1].revents & POLLIN)
			select_run_drain(cfg->run);
		if (pfd[0].revents & (POLLHUP | POLLERR | POLLNVAL)) {
			hangup = 1;
			break;
		}
		int c;
		while ((c = getch()) != ERR)
			if (c == 'q' || c == 'Q') {
				quit = 1;
				put(LINES - 1, 0, "stopping the search...", COLS);
				refresh();
			}
	}
	if (quit || sig || hangup)
		select_run_stop(cfg->run);
	int rc = select_run_finish(cfg->run, res);
	if (rc == 0 && !quit && !sig && !hangup) {
		/* let the choice be read for a moment (COTERIE_KSCREEN_WAIT
		 * seconds, default 1; the tests wait longer); a key goes on */
		const char *env = getenv("COTERIE_KSCREEN_WAIT");
		double wait = env && atof(env) > 0 ? atof(env) : 1.0;
		if (draw_caveats(res, cfg->g->n) > 0 && wait < 5.0)
			wait = 5.0; /* a caveat needs the time to be read */
		double until = util_now() + wait;
		while (util_now() < until && !proc_signal_caught()) {
			struct pollfd pfd[2] = { { STDIN_FILENO, POLLIN, 0 },
						 { proc_signal_fd(), POLLIN, 0 } };
			int c = poll(pfd, 2, 100) > 0 ? getch() : ERR;
			if (c == 'q' || c == 'Q')
				quit = 1; /* q still quits */
			if (c != ERR)
				break;
		}
		if (proc_signal_caught())
			sig = 1;
	}
	char last[512];
	int level;
	int have_last = term_inbox_take(last, sizeof last, &level) && level == UTIL_ERROR;
	term_stop();
	select_run_free(cfg->run);
	if (have_last)
		error("%s", last);
	if (sig || hangup) {
		select_result_release(res);
		if (sig)
			notice("interrupted by signal %d while choosing k; nothing to save yet",
			       proc_signal_caught());
		return EXIT_INTERRUPTED;
	}
	if (quit) {
		select_result_release(res);
		return 0;
	}
	if (rc == 0 && res->npts == 0) {
		error("no k was scored");
		return 1;
	}
	return rc == 0 ? -1 : 1; /* -1: go on to the fit */
}
