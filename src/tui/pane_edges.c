/*
 * tui/pane_edges: pane 5, for the selected community either the edges
 * touching its members that the model explains least (lowest
 * 1 - exp(-F_u.F_v) first) or, toggled with 'm', the pairs of members it
 * predicts most strongly that are not linked. Only the page on screen is
 * fetched (view.c); the title gives the rank range and the total. When
 * the pane is tall enough its last row details the selected pair: the
 * model's probability with the background (1 - exp(-(F_u.F_v + qeps)),
 * where the list shows the communities' part alone) and the communities
 * that make it, each with the probability it alone gives.
 *
 * A two-sided graph's rows are arcs (two-mode: links from the first kind
 * to the second) between a sending row u and a receiving row v, so the
 * same lists rank 1 - exp(-F_u.H_v), the model's own P(u -> v); the
 * middle column is the arc's direction seen from the member (an arrow),
 * in place of the outside mark, and names lose their side tag.
 *
 * A weighted graph's weak edges are ranked by P(W >= w), the chance the
 * Poisson model's expectation F_u.F_v gives a weight at least the edge's
 * (inspect_weight_tail()); the column is headed so.
 */

#include <stdio.h>
#include <string.h>

#include "coterie/graph.h"
#include "panes.h"
#include "view.h"

/* The detail row for pair (u, v), from the snapshot on screen. */
static void draw_detail(const struct view *v, WINDOW *w, int y, int x, int cw, uint32_t u,
			uint32_t nv)
{
	const struct snapshot *s = v->snap;
	struct inspect_edge e;
	if (!s || inspect_edge(&e, v->g, &s->F, &s->agm, s->epsilon, s->delta, AGM_MIN_LINKS, u,
			       nv))
		return;
	/* whole items only: the probability, what it includes, then the
	 * communities while they fit, "+N" for the rest */
	char line[256], item[64];
	int o = snprintf(line, sizeof line, "P %.3g incl. background%s", e.prob,
			 e.nshare ? ":" : ", no community shared");
	/* room for at least the first community, else the short form */
	if (e.nshare) {
		snprintf(item, sizeof item, " #%u %.2g%s", e.share[0].comm, e.share[0].alone,
			 e.nshare > 1 ? " +9" : "");
		if (draw_width(line) + draw_width(item) > cw)
			o = snprintf(line, sizeof line, "P %.3g:", e.prob);
	}
	if (draw_width(line) > cw)
		o = snprintf(line, sizeof line, "P %.3g%s", e.prob, e.nshare ? ":" : ", none shared");
	if (draw_width(line) > cw)
		o = snprintf(line, sizeof line, "P %.3g%s", e.prob, e.nshare ? ":" : "");
	for (uint32_t i = 0; i < e.nshare && i < 4; i++) {
		snprintf(item, sizeof item, " #%u %.2g", e.share[i].comm, e.share[i].alone);
		char rest[16] = "";
		if (i + 1 < e.nshare)
			snprintf(rest, sizeof rest, " +%u", e.nshare - i - 1);
		if (o + draw_width(item) + draw_width(rest) > cw || (size_t)o + strlen(item) >= sizeof line) {
			snprintf(line + o, sizeof line - (size_t)o, " +%u", e.nshare - i);
			break;
		}
		o += snprintf(line + o, sizeof line - (size_t)o, "%s", item);
		if (i == 3 && e.nshare > 4)
			snprintf(line + o, sizeof line - (size_t)o, " +%u", e.nshare - 4);
	}
	inspect_edge_release(&e);
	wattron(w, A_DIM);
	draw_text(w, y, x, line, cw);
	wattroff(w, A_DIM);
}

void pane_edges_draw(const struct view *v, WINDOW *w)
{
	draw_separator(v, w);
	int width = getmaxx(w);
	int weak = v->edges_mode == EDGES_WEAK;
	char title[64], note[128] = "";
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
		/* the total whole, or no note (draw_title never cuts one) */
		const char *more = v->req_open ? "..." : "";
		snprintf(note, sizeof note, "%zu-%zu of %s%s\nof %s%s\n%s", v->edges.top + 1, last, t,
			 more, t, more, t);
	} else if (v->req_open) {
		snprintf(note, sizeof note, "fetching...");
	}
	draw_title(v, w, PANE_EDGES, title, note);
	int x = 2, cw = width - 3;
	if (v->comm_index < 0) {
		draw_wrap(w, 2, x, "select a community in pane 2", cw, getmaxy(w) - 2);
		return;
	}
	if (!v->page_valid) {
		if (v->req_open)
			draw_text(w, 2, x, "fetching...", cw);
		return;
	}
	if (v->total == 0) {
		draw_wrap(w, 2, x, weak ? "no edge touches this community"
					: "every pair of its members is linked", cw, getmaxy(w) - 2);
		return;
	}
	int sided = v->g->nsend != 0;
	int pw = 7, mw = sided ? 2 : 1;
	int nw = (cw - pw - mw - 3) / 2;
	int xv = x + nw + 1 + mw + 1, xp = x + cw - pw;
	wattron(w, A_BOLD);
	draw_text(w, 1, x, "member", nw);
	draw_text(w, 1, xv, !weak ? "member" : sided ? (nw >= 9 ? "neighbour" : "neighb.") :
			    nw >= 21 ? "neighbour (> outside)" :
			    nw >= 9 ? "neighbour" : "neighb.", nw);
	/* a weighted graph's weak edges: P(W >= w) under the model (inspect.h) */
	const char *ph = weak && v->g->wt ? (v->utf8 ? "P(\u2265w)" : "P>=w") : "prob";
	draw_text(w, 1, xp + pw - draw_width(ph), ph, pw);
	wattroff(w, A_BOLD);
	size_t shown = view_rows_shown(v, PANE_EDGES);
	for (size_t r = 0; r < shown; r++) {
		size_t rank = v->edges.top + r;
		int y = 2 + (int)r;
		attr_t at = draw_row(v, w, PANE_EDGES, y, 1, rank, 0);
		if (rank < v->page_off || rank >= v->page_off + v->npage) {
			draw_text(w, y, x, "...", cw); /* on its way from the pager */
			wattroff(w, at);
			continue;
		}
		const struct page_row *p = &v->page[rank - v->page_off];
		char a[512], b[512], pr[32];
		view_node_name(v, p->u, a, sizeof a);
		view_node_name(v, p->v, b, sizeof b);
		draw_text(w, y, x, a, nw);
		if (sided) /* the member sends (u -> v) or receives (u <- v) */
			draw_text(w, y, x + nw + 1, p->u < v->g->nsend ? (v->utf8 ? "\u2192" : "->")
								     : (v->utf8 ? "\u2190" : "<-"), 2);
		else if (p->outside)
			draw_text(w, y, x + nw + 1, ">", 1);
		else
			draw_text(w, y, x + nw + 1, v->utf8 ? "\u00b7" : "-", 1);
		draw_text(w, y, xv, b, nw);
		/* fewer digits rather than a number cut short by the column */
		snprintf(pr, sizeof pr, "%.3g", p->prob);
		if (draw_width(pr) > pw)
			snprintf(pr, sizeof pr, "%.2g", p->prob);
		if (draw_width(pr) > pw)
			snprintf(pr, sizeof pr, "%.0e", p->prob);
		int prw = draw_width(pr);
		draw_text(w, y, xp + pw - prw, pr, pw);
		wattroff(w, at);
	}
	size_t cur = v->edges.cur;
	if (getmaxy(w) >= EDGES_DETAIL_MIN_H && cur >= v->page_off && cur < v->page_off + v->npage &&
	    cur < v->total)
		draw_detail(v, w, getmaxy(w) - 1, x, cw, v->page[cur - v->page_off].u,
			    v->page[cur - v->page_off].v);
}
