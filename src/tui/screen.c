/*
 * tui/screen: the windows and one drawing pass.
 *
 * The body is five panes under a header row and over a footer row; the
 * rectangles come from view_layout() (view.c), so the geometry is state
 * that tests can check, and this file only makes windows of them. A pass
 * repaints the dirty windows with wnoutrefresh() and ends with one
 * doupdate(). The overlay (find box, help screen) is drawn last, over
 * the panes, whenever a pane under it was repainted.
 *
 * The header and footer are drawn here, not by a pane: the header says
 * where the result goes and whether it is saved, the footer carries the
 * newest message, the prompt of the mode, or the keys of the pane.
 */
#include "follower.h"
#include "screen.h"

#include <stdio.h>
#include <string.h>

#include "coterie/graph.h"
#include "coterie/util.h"
#include "panes.h"

void screen_release(struct screen *s)
{
	for (int p = 0; p < PANE_COUNT; p++) {
		if (s->win[p])
			delwin(s->win[p]);
		s->win[p] = NULL;
	}
	if (s->header)
		delwin(s->header);
	if (s->footer)
		delwin(s->footer);
	if (s->overlay)
		delwin(s->overlay);
	s->header = s->footer = s->overlay = NULL;
}

void screen_layout(struct screen *s, struct view *v)
{
	screen_release(s);
	int rows, cols;
	getmaxyx(stdscr, rows, cols);
	view_layout(v, rows, cols);
	if (v->too_small) {
		s->header = newwin(rows > 0 ? rows : 1, cols > 0 ? cols : 1, 0, 0);
	} else {
		for (int p = 0; p < PANE_COUNT; p++) {
			struct rect b = v->box[p];
			s->win[p] = newwin(b.h, b.w, b.y, b.x);
		}
		s->header = newwin(1, cols, 0, 0);
		s->footer = newwin(1, cols, rows - 1, 0);
	}
	clearok(curscr, TRUE); /* no leftovers of the old size */
}

/* The overlay for the mode: help covers the body, find is a box. */
static void place_overlay(struct screen *s, const struct view *v)
{
	int h, w, y, x;
	if (v->mode == MODE_HELP) {
		h = v->rows - 2;
		w = v->cols;
		y = 1;
		x = 0;
	} else {
		w = v->cols - 4 < 72 ? v->cols - 4 : 72;
		h = v->rows - 4 < 16 ? v->rows - 4 : 16;
		y = (v->rows - h) / 2;
		x = (v->cols - w) / 2;
	}
	if (s->overlay) {
		int oh, ow, oy, ox;
		getmaxyx(s->overlay, oh, ow);
		getbegyx(s->overlay, oy, ox);
		if (oh == h && ow == w && oy == y && ox == x)
			return;
		delwin(s->overlay);
	}
	s->overlay = newwin(h, w, y, x);
}

/* ---- header and footer ---- */

static void draw_header(const struct view *v, WINDOW *w)
{
	int width = getmaxx(w);
	werase(w);
	attr_t base = A_REVERSE;
	wattron(w, base);
	draw_fill(w, 0, 0, width);
	char label[300], dir[300], left[800], right[400];
	util_escape(v->graph_label, label, sizeof label, !v->utf8);
	util_escape(v->outdir, dir, sizeof dir, !v->utf8);
	char n[32], m[32];
	/* a two-sided graph: its nodes as given (not the copies), arcs or links */
	fmt_count(n, sizeof n, v->g->paired ? v->g->nsend : v->g->n);
	fmt_count(m, sizeof m, v->g->m);
	const char *edges = v->g->paired ? "arcs" : v->g->nsend ? "links" : "edges";
	const char *how = follower_live(v) ? "following its fit" :
			  v->write_failed ? "NOT WRITTEN" :
			  view_unsaved(v) ? "unsaved" :
			  v->saved ? "saved" : "nothing to save yet";
	/* the longest form that fits: the result folder and whether it is
	 * saved matter most, then the graph's name, then its figures */
	const char *slash = strrchr(label, '/');
	const char *shortl = slash && slash[1] ? slash + 1 : label;
	for (int form = 0; form < 6; form++) {
		snprintf(right, sizeof right, "%s%s%s (%s) ", form < 2 ? "result: " : "", dir,
			 v->outdir_is_default && form < 1 ? " (default)" : "", how);
		switch (form) {
		case 0:
		case 2:
			snprintf(left, sizeof left, " coterie explore  %s  %s nodes, %s %s, k %u",
				 label, n, m, edges, v->params.k);
			break;
		case 1:
		case 3:
			snprintf(left, sizeof left, " coterie explore  %s  %s nodes, %s %s, k %u",
				 shortl, n, m, edges, v->params.k);
			break;
		case 4:
			snprintf(left, sizeof left, " %s  %s nodes, %s %s", shortl, n, m, edges);
			break;
		default:
			snprintf(left, sizeof left, " %s", shortl);
			break;
		}
		if (draw_width(left) + draw_width(right) + 2 <= width)
			break;
	}
	int rw = draw_width(right);
	if (rw > width)
		rw = width;
	draw_text(w, 0, 0, left, width - rw - 1);
	draw_text(w, 0, width - rw, right, rw);
	wattroff(w, base);
}

/* The items taken, one space apart, two before the first pane key (from
 * index npane on). */
static void join_hints(char *buf, size_t cap, const char *const *item, const int *take, int n,
		       int npane)
{
	size_t o = 0;
	buf[0] = '\0';
	int pane_started = 0;
	for (int i = 0; i < n && o < cap; i++) {
		if (!take[i])
			continue;
		const char *sep = o == 0 ? "" : i >= npane && !pane_started ? "  " : " ";
		pane_started |= i >= npane;
		o += (size_t)snprintf(buf + o, cap - o, "%s%s", sep, item[i]);
	}
}

/* The keys of the footer: whole "key:what" items only, those that do
 * not fit left out (help and quit first, then the focused pane's, then
 * the rest), shown in their usual order. */
static void hints(const struct view *v, char *buf, size_t cap, int width)
{
	static const char *const own[] = { "?:help", "/:find", "Tab:pane", "s:stop", "p:pause",
					   "e:run on", "w:write", "q:quit" };
	/* a followed fit: its keys, X given room first */
	static const char *const followed[] = { "?:help", "X:stop it", "P:pause it", "W:checkpoint",
						"/:find", "Tab:pane", "", "q:quit" };
	const char *const *common = follower_live(v) ? followed : own;
	const char *pane[3] = { NULL, NULL, NULL };
	switch (v->focus) {
	case PANE_COMMS: pane[0] = "o:sort"; pane[1] = "r:reverse"; pane[2] = "Enter:members"; break;
	case PANE_MEMBERS: pane[0] = "Enter:node"; break;
	case PANE_NODE: pane[0] = "a:weak strengths"; pane[1] = "Enter:community"; break;
	case PANE_EDGES: pane[0] = "m:missing links"; pane[1] = "Enter:node"; break;
	default: break;
	}
	enum { NC = sizeof own / sizeof own[0], NI = NC + 3 };
	const char *item[NI];
	for (int i = 0; i < NC; i++)
		item[i] = common[i];
	for (int i = 0; i < 3; i++)
		item[NC + i] = pane[i];
	/* the order items are given room in */
	static const int prio[NI] = { 0, 7, NC, NC + 1, NC + 2, 1, 6, 5, 4, 3, 2 };
	int take[NI] = { 0 };
	for (int p = 0; p < NI; p++) {
		if (!item[prio[p]] || !item[prio[p]][0])
			continue;
		take[prio[p]] = 1;
		join_hints(buf, cap, item, take, NI, NC);
		if (draw_width(buf) > width)
			take[prio[p]] = 0;
	}
	join_hints(buf, cap, item, take, NI, NC);
}

static void draw_footer(const struct view *v, WINDOW *w)
{
	int width = getmaxx(w);
	werase(w);
	char line[1200];
	attr_t at = A_NORMAL;
	if (v->mode == MODE_QUIT) {
		char dir[300];
		util_escape(v->outdir, dir, sizeof dir, !v->utf8);
		const char *why = view_running(v) ? "the fit is still running" : "the result is not saved";
		const char *stop = view_running(v) ? "stop, " : "";
		/* the longest form that fits whole: every choice must show */
		for (int form = 0; form < 4; form++) {
			if (form == 0)
				snprintf(line, sizeof line, "Quit? %s.  y: %ssave to %s and quit   "
					 "d: quit without saving   n: stay", why, stop, dir);
			else if (form == 1)
				snprintf(line, sizeof line, "Quit? y: %ssave to %s and quit  d: quit "
					 "without saving  n: stay", stop, dir);
			else if (form == 2)
				snprintf(line, sizeof line, "Quit? y: save and quit  d: quit without "
					 "saving  n: stay");
			else
				snprintf(line, sizeof line, "Quit? y: save  d: don't save  n: stay");
			if (draw_width(line) <= width)
				break;
		}
		at = draw_attr(v, CP_FOCUS);
	} else if (v->mode == MODE_ASK) {
		snprintf(line, sizeof line, "%s %s_   (Enter %s, Esc cancels)",
			 v->ask == ASK_SWEEPS ? "Sweeps more:" : "Plateau tolerance:", v->ask_buf,
			 v->ask == ASK_SWEEPS ? "runs them" : "fits to the next plateau at it");
		if (draw_width(line) > width)
			snprintf(line, sizeof line, "%s %s_", v->ask == ASK_SWEEPS ? "sweeps:" : "tol:",
				 v->ask_buf);
		at = draw_attr(v, CP_FOCUS);
	} else if (v->mode == MODE_FIND) {
		snprintf(line, sizeof line, "find: type a name; Enter goes to it, Esc cancels");
	} else if (v->mode == MODE_HELP) {
		snprintf(line, sizeof line, "help: j/k scroll, any other key closes");
	} else if (v->msg[0]) {
		snprintf(line, sizeof line, "%s%s", v->msg_level == UTIL_ERROR ? "error: " :
						    v->msg_level == UTIL_WARNING ? "warning: " : "",
			 v->msg);
		at = v->msg_level == UTIL_ERROR ? draw_attr(v, CP_ERROR) :
		     v->msg_level == UTIL_WARNING ? draw_attr(v, CP_WARN) : A_BOLD;
	} else {
		hints(v, line, sizeof line, width);
		at = draw_attr(v, CP_DIM);
	}
	wattron(w, at);
	if (v->mode == MODE_QUIT || v->mode == MODE_ASK)
		draw_fill(w, 0, 0, width);
	draw_text(w, 0, 0, line, width);
	wattroff(w, at);
}

static void draw_too_small(const struct view *v, WINDOW *w)
{
	if (!w)
		return;
	werase(w);
	char line[160];
	snprintf(line, sizeof line, "coterie explore needs %dx%d; this terminal is %dx%d. "
		 "q quits.", VIEW_MIN_COLS, VIEW_MIN_ROWS, v->cols, v->rows);
	/* broken between words so the whole message shows */
	int y = draw_wrap(w, 0, 0, line, v->cols, v->rows);
	if (v->mode == MODE_QUIT && y < v->rows)
		draw_wrap(w, y, 0, "Quit? y: save and quit  d: quit without saving  n: stay", v->cols,
			  v->rows - y);
	wnoutrefresh(w);
}

static void (*const pane_draw[PANE_COUNT])(const struct view *, WINDOW *) = {
	pane_trace_draw, pane_comms_draw, pane_members_draw, pane_node_draw, pane_edges_draw,
};

/* The overlay of the mode, over the panes. */
static void draw_overlay(struct screen *s, const struct view *v)
{
	place_overlay(s, v);
	if (!s->overlay)
		return;
	werase(s->overlay);
	if (v->mode == MODE_FIND)
		find_draw(v, s->overlay);
	else
		help_draw(v, s->overlay);
	touchwin(s->overlay);
	wnoutrefresh(s->overlay);
}

void screen_draw(struct screen *s, struct view *v)
{
	if (v->dirty & DIRTY_CLEAR)
		clearok(curscr, TRUE);
	if (v->too_small) {
		if (v->dirty)
			draw_too_small(v, s->header);
		v->dirty = 0;
		doupdate();
		return;
	}
	int any = 0;
	if (v->dirty & DIRTY_HEADER) {
		draw_header(v, s->header);
		wnoutrefresh(s->header);
	}
	for (int p = 0; p < PANE_COUNT; p++)
		if ((v->dirty & DIRTY_PANE(p)) && s->win[p]) {
			werase(s->win[p]);
			pane_draw[p](v, s->win[p]);
			wnoutrefresh(s->win[p]);
			any = 1;
		}
	if (v->dirty & DIRTY_FOOTER) {
		draw_footer(v, s->footer);
		wnoutrefresh(s->footer);
	}
	if ((v->mode == MODE_FIND || v->mode == MODE_HELP) && (any || (v->dirty & DIRTY_OVERLAY)))
		draw_overlay(s, v);
	v->dirty = 0;
	doupdate();
}
