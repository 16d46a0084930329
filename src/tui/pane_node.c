/*
 * tui/pane_node: pane 4, the selected node (inspect_node): its name made
 * safe, degree, how many memberships and how many of its edges no
 * community explains; then one row per affiliation, strongest first, with
 * a bar, the strength, whether it is a membership (agm_is_member()), or
 * the community's stability in its place when the folder has one
 * (fit --repeats; a weak row still says "weak"), and how many
 * of the node's edges that community explains. Strengths below the
 * threshold are listed on request ('a'). A narrow pane takes shorter
 * forms of the figures and heads, then drops the "explains" column: a
 * line is never cut or wrapped.
 *
 * A two-sided graph (directed or two-mode; sides.h) draws its own body:
 * a directed node's sending and receiving strengths in two columns, each
 * with its bar, and the side(s) it is a member on; a two-mode node its
 * kind and its one side's strengths.
 */

#include <stdio.h>

#include "coterie/graph.h"

#include "panes.h"
#include "view.h"

/* What a full bar stands for: the node's strongest strength (or 1). */
static double top_strength(const struct inspect_node *nv)
{
	double top = nv->naffil ? nv->affil[0].strength : 1.0;
	return top > 0 ? top : 1.0;
}

/* The figures line of a two-sided node, the longest form that fits. */
static void sided_figures(const struct sides_node *sn, char *line, size_t cap, int cw)
{
	for (int form = 0; form < 3; form++) {
		if (sn->kind < 0 && form == 0)
			snprintf(line, cap, "%u arcs out, %u in; sends in %u, receives in %u",
				 sn->outdeg, sn->indeg, sn->nsend, sn->nrecv);
		else if (sn->kind < 0 && form == 1)
			snprintf(line, cap, "out %u, in %u; sends %u, receives %u", sn->outdeg,
				 sn->indeg, sn->nsend, sn->nrecv);
		else if (sn->kind < 0)
			snprintf(line, cap, "out %u, in %u", sn->outdeg, sn->indeg);
		else if (form == 0)
			snprintf(line, cap, "%s-column node, degree %u, in %u communit%s",
				 sn->kind ? "second" : "first", sn->outdeg, sn->nsend + sn->nrecv,
				 sn->nsend + sn->nrecv == 1 ? "y" : "ies");
		else if (form == 1)
			snprintf(line, cap, "%s kind, degree %u, %u comm.", sn->kind ? "2nd" : "1st",
				 sn->outdeg, sn->nsend + sn->nrecv);
		else
			snprintf(line, cap, "%s, deg %u", sn->kind ? "2nd" : "1st", sn->outdeg);
		if (draw_width(line) <= cw)
			return;
	}
}

/* One side's cell: a bar (bw > 0) and the strength, dim unless a
 * membership; "-" for no strength. */
static void side_cell(const struct view *v, WINDOW *w, int y, int x, int bw, int vw, double s,
		      double top, int member, attr_t at)
{
	char val[32];
	if (!(s > 0)) {
		draw_text(w, y, x + bw + (bw ? 1 : 0) + vw - 1, "-", 1);
		return;
	}
	snprintf(val, sizeof val, "%.3g", s);
	if (bw) {
		wattroff(w, at);
		draw_bar(v, w, y, x, bw, s / top);
		wattron(w, at);
		x += bw + 1;
	}
	attr_t dim = member ? 0 : draw_attr(v, CP_DIM);
	wattron(w, dim);
	draw_text(w, y, x + vw - draw_width(val), val, vw);
	wattroff(w, dim);
	wattron(w, at);
}

/* The body of a two-sided node (directed: two columns of strengths). */
static void draw_sided(const struct view *v, WINDOW *w, int x, int cw)
{
	const struct inspect_node *nv = &v->nodeview;
	const struct sides_node *sn = &v->sidenode;
	char line[200];
	sided_figures(sn, line, sizeof line, cw);
	draw_text(w, 2, x, line, cw);
	if (v->naffil_rows == 0) {
		draw_wrap(w, 4, x, nv->naffil ? "no membership; a shows the weak strengths"
					       : "no strength in any community", cw, getmaxy(w) - 4);
		return;
	}
	/* columns: id, then per side a bar and the strength, then the side */
	int two = sn->kind < 0, idw = 6, vw = 6, fw = two ? 4 : 6;
	int bw = (cw - idw - fw - 2 - (two ? 2 * (vw + 2) : vw + 2)) / (two ? 2 : 1);
	if (bw > (two ? 10 : 24))
		bw = two ? 10 : 24;
	if (bw < 3)
		bw = 0;
	int sw = bw + (bw ? 1 : 0) + vw; /* one side's cell */
	int xs = x + idw + 1, xr = xs + sw + 2, xf = (two ? xr + sw : xs + sw) + 2;
	wattron(w, A_BOLD);
	draw_text(w, 3, x, "comm", idw);
	const char *hs = two ? (sw >= 7 ? "sending" : "send") : sn->kind ? "receiving" : "sending";
	draw_text(w, 3, xs + sw - draw_width(hs), hs, sw);
	if (two)
		draw_text(w, 3, xr + sw - (sw >= 9 ? 9 : 4), sw >= 9 ? "receiving" : "recv", sw);
	draw_text(w, 3, xf, "side", fw);
	wattroff(w, A_BOLD);
	double top = top_strength(nv);
	size_t shown = view_rows_shown(v, PANE_NODE);
	for (size_t r = 0; r < shown; r++) {
		size_t i = v->affil.top + r;
		uint32_t k = v->affil_rows[i];
		const struct sides_row *row = &sn->row[k];
		int y = 4 + (int)r;
		char id[32];
		snprintf(id, sizeof id, "#%u", nv->affil[k].comm);
		attr_t at = draw_row(v, w, PANE_NODE, y, 1, i, row->member ? 0 : draw_attr(v, CP_DIM));
		draw_text(w, y, x, id, idw);
		const char *side = !row->member ? "weak" : !two ? "member" :
				   row->member == (SIDES_S | SIDES_R) ? "both" :
				   row->member == SIDES_S ? "send" : "recv";
		if (two) {
			side_cell(v, w, y, xs, bw, vw, row->s, top, row->member & SIDES_S, at);
			side_cell(v, w, y, xr, bw, vw, row->r, top, row->member & SIDES_R, at);
		} else {
			side_cell(v, w, y, xs, bw, vw, sn->kind ? row->r : row->s, top,
				  row->member != 0, at);
		}
		draw_text(w, y, xf, side, fw);
		wattroff(w, at);
	}
}

void pane_node_draw(const struct view *v, WINDOW *w)
{
	draw_separator(v, w);
	int width = getmaxx(w);
	const struct inspect_node *nv = &v->nodeview;
	char note[64] = "";
	uint32_t hidden = v->node_valid ? nv->naffil - nv->nmember : 0;
	if (v->node_valid && v->show_weak)
		snprintf(note, sizeof note, "all strengths (a)");
	else if (hidden)
		snprintf(note, sizeof note, "+%u weak (a)", hidden);
	draw_title(v, w, PANE_NODE, "Node", note);
	int x = 2, cw = width - 3;
	if (v->node < 0 || !v->node_valid) {
		draw_wrap(w, 2, x, "no node selected: pick one in pane 3, or / to find", cw,
			  getmaxy(w) - 2);
		return;
	}
	char name[512];
	view_node_name(v, nv->node, name, sizeof name);
	wattron(w, A_BOLD);
	draw_text(w, 1, x, name, cw);
	wattroff(w, A_BOLD);
	if (v->g->nsend) {
		draw_sided(v, w, x, cw);
		return;
	}
	/* the figures in the longest form that fits whole */
	char line[200];
	for (int form = 0; form < 4; form++) {
		if (form == 0)
			snprintf(line, sizeof line, "degree %u, in %u communit%s, %u edge%s unexplained",
				 nv->degree, nv->nmember, nv->nmember == 1 ? "y" : "ies",
				 nv->unexplained, nv->unexplained == 1 ? "" : "s");
		else if (form == 1)
			snprintf(line, sizeof line, "degree %u, %u comm., %u unexplained", nv->degree,
				 nv->nmember, nv->unexplained);
		else if (form == 2)
			snprintf(line, sizeof line, "deg %u, %u comm., %u unexpl.", nv->degree,
				 nv->nmember, nv->unexplained);
		else
			snprintf(line, sizeof line, "deg %u, %u comm.", nv->degree, nv->nmember);
		if (draw_width(line) <= cw)
			break;
	}
	draw_text(w, 2, x, line, cw);
	if (v->naffil_rows == 0) {
		draw_wrap(w, 4, x, hidden ? "no membership; a shows the weak strengths"
					  : "no strength in any community", cw, getmaxy(w) - 4);
		return;
	}
	/* columns: id, bar, strength, flag, explains; a narrow pane heads
	 * the last "expl", and one narrower still leaves it out */
	int idw = 6, vw = 6, fw = 6, ew = 8;
	const char *ehead = "explains";
	if (cw - idw - vw - fw - ew - 4 < 3) {
		ew = 5;
		ehead = "expl";
	}
	if (cw - idw - vw - fw - ew - 4 < 3)
		ew = 0;
	int bw = cw - idw - vw - fw - ew - (ew ? 4 : 3);
	if (bw > 24)
		bw = 24;
	if (bw < 3)
		bw = 3;
	int xb = x + idw + 1, xv = xb + bw + 1, xf = xv + vw + 1, xe = xf + fw + 1;
	int stab = view_has_stability(v);
	wattron(w, A_BOLD);
	draw_text(w, 3, x, "comm", idw);
	draw_text(w, 3, xb, "strength", bw + vw + 1);
	if (stab)
		draw_text(w, 3, xf, "stab", fw);
	if (ew)
		draw_text(w, 3, xe + ew - draw_width(ehead), ehead, ew);
	wattroff(w, A_BOLD);
	double top = top_strength(nv);
	size_t shown = view_rows_shown(v, PANE_NODE);
	for (size_t r = 0; r < shown; r++) {
		size_t i = v->affil.top + r;
		const struct inspect_affil *a = &nv->affil[v->affil_rows[i]];
		int y = 4 + (int)r;
		char id[32], val[32], ex[32], flag[32] = "member";
		snprintf(id, sizeof id, "#%u", a->comm);
		snprintf(val, sizeof val, "%.3g", a->strength);
		snprintf(ex, sizeof ex, "%*u", ew, a->explained);
		attr_t at = draw_row(v, w, PANE_NODE, y, 1, i, a->member ? 0 : draw_attr(v, CP_DIM));
		draw_text(w, y, x, id, idw);
		wattroff(w, at);
		draw_bar(v, w, y, xb, bw, a->strength / top);
		wattron(w, at);
		draw_text(w, y, xv, val, vw);
		if (stab)
			fmt_frac(flag, sizeof flag, view_stability(v, a->comm));
		draw_text(w, y, xf, a->member ? flag : "weak", fw);
		if (ew)
			draw_text(w, y, xe, ex, ew);
		wattroff(w, at);
	}
}
