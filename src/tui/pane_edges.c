/*
 * tui/pane_edges: pane 5, for the selected community either the edges
 * touching its members that the model explains least (lowest
 * 1 - exp(-F_u.F_v) first) or, toggled with 'm', the pairs of members it
 * predicts most strongly that are not linked. Only the page on screen is
 * fetched (view.c); the title gives the rank range and the total.
 */
#include "tui.h"

#include <stdio.h>

void pane_edges_draw(const struct view *v)
{
	WINDOW *w = v->win[PANE_EDGES];
	if (!w)
		return;
	werase(w);
	draw_separator(v, w);
	int width = getmaxx(w);
	int weak = v->edges_mode == EDGES_WEAK;
	char title[64], note[96] = "";
	if (v->has_comm && v->comm_index >= 0)
		snprintf(title, sizeof title, "%s #%u", weak ? "Weak edges of" : "Missing links in",
			 v->comm_id);
	else
		snprintf(title, sizeof title, "%s", weak ? "Weak edges" : "Missing links");
	int rows = view_page_height(v, PANE_EDGES);
	if (v->page_valid && v->total > 0) {
		size_t last = v->edges.top + (size_t)rows;
		if (last > v->total)
			last = v->total;
		char t[32];
		fmt_count(t, sizeof t, v->total);
		snprintf(note, sizeof note, "%zu-%zu of %s%s", v->edges.top + 1, last, t,
			 v->req_open ? "..." : "");
	} else if (v->req_open) {
		snprintf(note, sizeof note, "fetching...");
	}
	draw_title(v, w, PANE_EDGES, title, note);
	int x = 2, cw = width - 3;
	if (v->comm_index < 0) {
		draw_text(w, 2, x, "select a community in pane 2", cw);
		return;
	}
	if (!v->page_valid) {
		if (v->req_open)
			draw_text(w, 2, x, "fetching...", cw);
		return;
	}
	if (v->total == 0) {
		draw_text(w, 2, x, weak ? "no edge touches this community"
					: "every pair of its members is linked", cw);
		return;
	}
	int pw = 7, mw = 1;
	int nw = (cw - pw - mw - 3) / 2;
	int xv = x + nw + 1 + mw + 1, xp = x + cw - pw;
	wattron(w, A_BOLD);
	draw_text(w, 1, x, "member", nw);
	draw_text(w, 1, xv, !weak ? "member" : nw >= 21 ? "neighbour (> outside)" : "neighbour",
		  nw);
	draw_text(w, 1, xp + pw - 4, "prob", 4);
	wattroff(w, A_BOLD);
	int focused = v->focus == PANE_EDGES;
	for (int r = 0; r < rows; r++) {
		size_t rank = v->edges.top + (size_t)r;
		if (rank >= v->total)
			break;
		int y = 2 + r;
		int sel = rank == v->edges.cur;
		attr_t at = sel ? (focused ? A_REVERSE : A_BOLD | A_UNDERLINE) : A_NORMAL;
		wattron(w, at);
		if (sel)
			draw_fill(w, y, 1, width - 1);
		if (rank < v->page_off || rank >= v->page_off + v->npage) {
			draw_text(w, y, x, "...", cw); /* on its way from the pager */
			wattroff(w, at);
			continue;
		}
		const struct page_row *p = &v->page[rank - v->page_off];
		char a[512], b[512], pr[32];
		draw_name(v, p->u, a, sizeof a);
		draw_name(v, p->v, b, sizeof b);
		draw_text(w, y, x, a, nw);
		if (p->outside)
			draw_text(w, y, x + nw + 1, ">", 1);
		else
			draw_text(w, y, x + nw + 1, v->utf8 ? "\u00b7" : "-", 1);
		draw_text(w, y, xv, b, nw);
		snprintf(pr, sizeof pr, "%.3g", p->prob);
		int prw = draw_width(pr);
		draw_text(w, y, xp + pw - prw, pr, pw);
		wattroff(w, at);
	}
}
