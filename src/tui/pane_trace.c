/*
 * tui/pane_trace: pane 1, the likelihood. Figures on the left (state,
 * sweep, log-likelihood, gain of the last sweep, speed, elapsed time, the
 * plateau), the curve of log-likelihood against sweep on the right, with
 * a marked column and a caret where the plateau rule fired.
 */

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "follower.h"
#include "coterie/util.h"
#include "panes.h"
#include "plot.h"
#include "view.h"

/* x with one decimal while it is short; beyond, in full (%.6e from 1e9
 * on, for log-likelihoods) or in three digits (%.3g from 1e5 on). */
static void fmt_real(char *buf, size_t cap, double x, int full)
{
	if (!isfinite(x))
		snprintf(buf, cap, "-");
	else if (fabs(x) < (full ? 1e9 : 1e5))
		snprintf(buf, cap, "%.1f", x);
	else if (full)
		snprintf(buf, cap, "%.6e", x);
	else
		snprintf(buf, cap, "%.3g", x);
}

#define PLOT_MIN_COLS 16 /* the curve's least width */

static int state_pair(enum fit_state s)
{
	switch (s) {
	case FIT_FITTING:
	case FIT_SEEDING: return CP_GOOD;
	case FIT_LEVELLED: return CP_MARK;
	case FIT_PAUSED:
	case FIT_STOPPED: return CP_WARN;
	case FIT_FAILED: return CP_ERROR;
	default: return CP_TITLE;
	}
}

/* The state line in words, with what the user can do next. */
static void state_words(const struct view *v, char *buf, size_t cap)
{
	enum fit_state st = view_state(v);
	const char *label = view_state_label(st);
	if (v->follow)
		snprintf(buf, cap, "%.63s", v->follow_line);
	else if (!v->started && v->reopened)
		snprintf(buf, cap, "%s, as saved", label);
	else if (v->stop_asked && !fit_state_ended(st))
		snprintf(buf, cap, "stopping...");
	else if (v->pause_asked && st != FIT_PAUSED)
		snprintf(buf, cap, "pausing...");
	else if (st == FIT_LEVELLED && !v->stop_asked)
		snprintf(buf, cap, "levelled off: e runs on");
	else if (st == FIT_PAUSED)
		snprintf(buf, cap, "paused: p resumes");
	else if (st == FIT_FITTING && v->extend_asked)
		snprintf(buf, cap, "fitting past the plateau");
	else
		snprintf(buf, cap, "%s", label);
}

/* The figures' lines (at most 6) into line; returns how many. */
static int figure_lines(const struct view *v, char line[6][160])
{
	const struct snapshot *s = v->snap;
	int n = 0;
	char a[64], b[64];
	state_words(v, a, sizeof a);
	snprintf(line[n++], sizeof line[0], "state   %s", a);
	if (s->ntrace == 0) {
		snprintf(line[n++], sizeof line[0], "sweep   - (finding seeds)");
	} else {
		/* several starts: which one runs, or, once they are done, that
		 * the model shown is the most likely of them */
		int done = fit_state_ended(view_state(v)) || (!v->started && !follower_live(v));
		char st[48] = "";
		if (s->starts > 1 && !done)
			snprintf(st, sizeof st, ", start %u of %u", s->start, s->starts);
		else if (s->starts > 1 && s->best_start > 0)
			snprintf(st, sizeof st, ", best of %u starts", s->starts);
		snprintf(line[n++], sizeof line[0], "sweep   %u/%u%s", s->sweep, v->params.max_sweeps,
			 st);
		const struct trace_point *t = &s->trace[s->ntrace - 1];
		fmt_real(a, sizeof a, t->loglik, 1);
		if (s->starts > 1 && !done && s->best_start > 0 && s->best_start != s->start) {
			fmt_real(b, sizeof b, s->best_loglik, 1);
			snprintf(line[n++], sizeof line[0], "loglik  %s (start %u: %s)", a,
				 s->best_start, b);
		} else {
			snprintf(line[n++], sizeof line[0], "loglik  %s", a);
		}
		if (s->ntrace >= 2) {
			double prev = s->trace[s->ntrace - 2].loglik;
			double gain = t->loglik - prev;
			double rel = gain / (fabs(prev) > 0 ? fabs(prev) : 1.0);
			snprintf(line[n++], sizeof line[0], "gain    %+.4g (rel %.1e)", gain, rel);
		} else {
			snprintf(line[n++], sizeof line[0], "gain    - (one point so far)");
		}
	}
	/* the time of the last sweep; while fitting the clock runs on
	 * between sweeps (a fit waiting at a plateau is not fitting) */
	double secs = s->ntrace ? s->trace[s->ntrace - 1].seconds : s->seconds;
	if ((v->started || (v->follow && v->snap_taken > 0)) &&
	    (view_state(v) == FIT_FITTING || view_state(v) == FIT_SEEDING) && v->snap_taken > 0)
		secs = s->seconds + (util_now() - v->snap_taken);
	fmt_duration(b, sizeof b, secs);
	if (s->ntrace >= 2)
		snprintf(line[n++], sizeof line[0], "speed   %.3g sweeps/s, %s", s->sweeps_per_sec, b);
	else
		snprintf(line[n++], sizeof line[0], "time    %s", b);
	if (s->plateau_sweep > 0)
		snprintf(line[n++], sizeof line[0], "plateau at sweep %u", s->plateau_sweep);
	else
		snprintf(line[n++], sizeof line[0], "plateau: rel gain < %.0e x%u", v->params.tol,
			 v->params.patience);
	return n;
}

/* The columns the figures need: their widest line. */
static int figures_width(const struct view *v)
{
	char line[6][160];
	int n = figure_lines(v, line), fw = 0;
	for (int i = 0; i < n; i++)
		if (draw_width(line[i]) > fw)
			fw = draw_width(line[i]);
	return fw;
}

static void figures(const struct view *v, WINDOW *w, int x, int width, int rows)
{
	const struct snapshot *s = v->snap;
	char line[6][160];
	int n = figure_lines(v, line);
	/* too few rows: the plateau line replaces the speed line, which goes first */
	int order[6] = { 0, 1, 2, 3, 4, 5 };
	if (rows < n && s->plateau_sweep > 0 && n == 6) {
		order[4] = 5;
		order[5] = 4;
	}
	for (int r = 0; r < rows && r < n; r++) {
		int i = order[r];
		attr_t at = A_NORMAL;
		if (i == 0)
			at = draw_attr(v, state_pair(view_state(v))) | A_BOLD;
		if (i == 5 && s->plateau_sweep > 0)
			at = draw_attr(v, CP_MARK) | A_BOLD;
		wattron(w, at);
		draw_text(w, 1 + r, x, line[i], width);
		wattroff(w, at);
	}
}

static void plot(const struct view *v, WINDOW *w, int x0, int pw, int rows)
{
	const struct snapshot *s = v->snap;
	if (pw < 4 || rows < 1)
		return;
	int axis = rows >= 4;
	int ph = rows - axis;
	if (s->ntrace == 0) {
		draw_text(w, 1 + ph / 2, x0 + 1, "(the curve starts after seeding)", pw - 1);
		return;
	}
	int cw = v->utf8 ? 2 : 1, chh = v->utf8 ? 4 : 3;
	int dw = pw * cw, dh = ph * chh;
	double *y = malloc(s->ntrace * sizeof *y);
	unsigned char *grid = malloc((size_t)dw * (size_t)dh);
	if (!y || !grid) {
		free(y);
		free(grid);
		return;
	}
	double lo = INFINITY, hi = -INFINITY;
	for (uint32_t i = 0; i < s->ntrace; i++) {
		y[i] = s->trace[i].loglik;
		if (isfinite(y[i])) {
			lo = y[i] < lo ? y[i] : lo;
			hi = y[i] > hi ? y[i] : hi;
		}
	}
	plot_raster(y, s->ntrace, lo, hi, dw, dh, grid);

	/* the plateau column */
	int mark = -1;
	if (s->plateau_sweep > 0)
		for (uint32_t i = 0; i < s->ntrace; i++)
			if (s->trace[i].sweep == s->plateau_sweep) {
				mark = plot_column(i, s->ntrace, dw) / cw;
				break;
			}
	attr_t pa = draw_attr(v, CP_PLOT), ma = draw_attr(v, CP_MARK) | A_BOLD;
	for (int cy = 0; cy < ph; cy++) {
		for (int cx = 0; cx < pw; cx++) {
			char cell[8];
			int on;
			if (v->utf8) {
				on = plot_braille(grid, dw, dh, cx, cy, cell);
			} else {
				int c = plot_ascii(grid, dw, dh, cx, cy);
				on = c != 0;
				cell[0] = (char)c;
				cell[1] = '\0';
			}
			if (on) {
				attr_t at = cx == mark ? ma : pa;
				wattron(w, at);
				mvwaddstr(w, 1 + cy, x0 + cx, cell);
				wattroff(w, at);
			} else if (cx == mark) {
				wattron(w, ma);
				mvwaddstr(w, 1 + cy, x0 + cx, v->utf8 ? "\u250a" : ":");
				wattroff(w, ma);
			}
		}
	}
	if (axis) {
		int ay = 1 + ph;
		char l[64], r[64], mid[96];
		snprintf(l, sizeof l, "%u", s->trace[0].sweep);
		snprintf(r, sizeof r, "sweep %u", s->trace[s->ntrace - 1].sweep);
		char a[32], b[32];
		fmt_real(a, sizeof a, lo, 0);
		fmt_real(b, sizeof b, hi, 0);
		snprintf(mid, sizeof mid, "loglik %s .. %s", a, b);
		/* the axis row: first sweep at the left, last at the right, the
		 * plateau label under its column, the value range where it fits
		 * without covering any of them */
		int lw = draw_width(l), rw = draw_width(r), mw = draw_width(mid);
		int px0 = -1, px1 = -1; /* the plateau label's columns */
		char lab[64];
		if (mark >= 0) {
			snprintf(lab, sizeof lab, "%s plateau %u", v->utf8 ? "\u25b2" : "^",
				 s->plateau_sweep);
			int lw2 = draw_width(lab);
			px0 = mark;
			if (px0 + lw2 > pw - rw - 1)
				px0 = pw - rw - 1 - lw2;
			if (px0 < lw + 1)
				px0 = lw + 1;
			px1 = px0 + lw2;
		}
		wattron(w, draw_attr(v, CP_DIM));
		draw_text(w, ay, x0, l, pw);
		draw_text(w, ay, x0 + pw - rw, r, rw);
		int mx = lw + 2;
		if (px0 >= 0 && mx + mw + 1 > px0)
			mx = px1 + 2; /* after the plateau label instead */
		if (mx + mw + 1 <= pw - rw && (px0 < 0 || mx + mw + 1 <= px0 || mx >= px1 + 1))
			draw_text(w, ay, x0 + mx, mid, mw);
		wattroff(w, draw_attr(v, CP_DIM));
		if (px0 >= 0 && px1 <= pw - rw) {
			wattron(w, ma);
			draw_text(w, ay, x0 + px0, lab, px1 - px0);
			wattroff(w, ma);
		}
	}
	free(y);
	free(grid);
}

void pane_trace_draw(const struct view *v, WINDOW *w)
{
	int h = getmaxy(w), width = getmaxx(w);
	char note[96];
	snprintf(note, sizeof note, "k %u, seed %llu, %u thread%s", v->params.k,
		 (unsigned long long)v->params.seed, v->params.threads,
		 v->params.threads == 1 ? "" : "s");
	draw_title(v, w, PANE_TRACE, "Likelihood", note);
	if (!v->snap)
		return;
	int rows = h - 1;
	/* the figures whole (at least 38 columns when there is room, so the
	 * curve does not jump as they change), the curve in the rest */
	int fw = figures_width(v) + 2;
	if (fw < 38 && width >= 38 * 100 / 45)
		fw = 38;
	if (fw > width - PLOT_MIN_COLS - 2)
		fw = width - PLOT_MIN_COLS - 2;
	figures(v, w, 1, fw - 1, rows);
	plot(v, w, fw + 1, width - fw - 2, rows);
}
