/*
 * tui/pane_comms: pane 2, the communities, one row each with id, size,
 * internal edges, density, conductance and p (the AGM link probability),
 * or for a two-sided fit (directed, two-mode) communities.tsv's figures
 * (size in nodes, senders, receivers, arcs inside, density, one-way
 * share; sides.c), and the stability when the folder shown was written by
 * fit --repeats, in the order view.c sorted them (inspect_sort_communities,
 * sides_sort_communities, or by stability). The sorted column carries an arrow; the selected row drives
 * panes 3 to 5, and the title says the selected one's stability.
 *
 * Every width lays out cleanly: the columns take their wide forms when
 * all fit, else their narrow ones, and a pane too narrow even for those
 * drops whole columns (the edges first, the id, the size and the sorted
 * column never), so a row never runs past the pane and wraps.
 */

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "coterie/graph.h"
#include "panes.h"
#include "view.h"

struct col {
	enum inspect_key key; /* what sorts by it (none when nokey or stab) */
	const char *narrow, *wide;
	int wn, ww;
	int stab, nokey;
	unsigned fits; /* ONE: of a one-mode fit (the AGM's figures), TWO: of a
			* two-sided one (communities.tsv's, sides_figures(),
			* keyed as sides_sort_communities() reads them) */
	int keep[2];   /* rank (one-mode, two-sided): the lower, the longer it
			* stays when the pane narrows */
};
#define ONE 1u
#define TWO 2u

static const struct col cols[] = {
	{ INSPECT_BY_ID, "id", "id", 5, 6, 0, 0, ONE | TWO, { 0, 0 } },
	{ INSPECT_BY_SIZE, "size", "size", 6, 8, 0, 0, ONE | TWO, { 1, 1 } },
	{ INSPECT_BY_EDGES, "edges", "edges", 7, 9, 0, 0, ONE, { 6, 0 } },
	{ INSPECT_BY_P, "send", "senders", 6, 8, 0, 0, TWO, { 0, 3 } },
	{ INSPECT_BY_ID, "recv", "receivers", 6, 10, 0, 1, TWO, { 0, 4 } },
	{ INSPECT_BY_EDGES, "arcs", "arcs in", 7, 8, 0, 0, TWO, { 0, 6 } },
	{ INSPECT_BY_DENSITY, "dens", "density", 5, 8, 0, 0, ONE | TWO, { 5, 5 } },
	{ INSPECT_BY_CONDUCTANCE, "cond", "conductance", 5, 12, 0, 0, ONE, { 4, 0 } },
	{ INSPECT_BY_P, "p", "p", 5, 8, 0, 0, ONE, { 3, 0 } },
	{ INSPECT_BY_CONDUCTANCE, "1-way", "one-way", 6, 8, 0, 0, TWO, { 0, 7 } },
	{ INSPECT_BY_ID, "stab", "stability", 5, 9, 1, 0, ONE | TWO, { 2, 2 } },
};
#define NCOLS (sizeof cols / sizeof cols[0])

/* Column c is the one the rows are sorted by. */
static int sorted_col(const struct view *v, const struct col *c)
{
	return c->stab ? v->by_stability : !v->by_stability && !c->nokey && c->key == v->sort_key;
}

/* Which columns to draw in width columns (from x = 1), and in which form;
 * returns 1 for the wide forms. */
static int choose_cols(const struct view *v, int width, int shown[NCOLS])
{
	int need = 0, stab = view_has_stability(v), two = v->g->nsend > 0;
	for (size_t i = 0; i < NCOLS; i++) {
		shown[i] = (cols[i].fits & (two ? TWO : ONE)) && (!cols[i].stab || stab);
		need += shown[i] ? cols[i].ww + 1 : 0;
	}
	if (width - 2 >= need)
		return 1;
	need = 0;
	for (size_t i = 0; i < NCOLS; i++)
		need += shown[i] ? cols[i].wn + 1 : 0;
	for (int rank = (int)NCOLS - 1; rank > 1 && width - 1 < need; rank--)
		for (size_t i = 0; i < NCOLS; i++)
			if (cols[i].keep[two] == rank && shown[i] && !sorted_col(v, &cols[i])) {
				shown[i] = 0;
				need -= cols[i].wn + 1;
			}
	return 0;
}

static void put_cells(WINDOW *w, int y, int x, int wide, const int shown[NCOLS],
		      char cell[NCOLS][32])
{
	int at = x, right = getmaxx(w);
	for (size_t i = 0; i < NCOLS; i++) {
		if (!shown[i])
			continue;
		int cw = wide ? cols[i].ww : cols[i].wn;
		if (at + cw > right)
			break; /* never past the pane's edge */
		int tw = draw_width(cell[i]);
		if (tw > cw)
			tw = cw;
		draw_text(w, y, at + cw - tw, cell[i], cw);
		at += cw + 1;
	}
}

/* The cells of a row (by cols[] index; those of the other kind of fit
 * are left as they are): the AGM's community c, or communities.tsv's
 * figures of it for a two-sided fit. */
static void row_cells(const struct view *v, const struct agm_community *c, char cell[NCOLS][32])
{
	snprintf(cell[0], sizeof cell[0], "#%u", c->id);
	fmt_frac(cell[10], sizeof cell[10], view_stability(v, c->id));
	if (v->g->nsend && v->side_figs && c->id < v->snap->F.k) {
		const struct model_directed_figures *f = &v->side_figs[c->id];
		fmt_count(cell[1], sizeof cell[1], f->size);
		fmt_count(cell[3], sizeof cell[3], f->senders);
		fmt_count(cell[4], sizeof cell[4], f->receivers);
		fmt_count(cell[5], sizeof cell[5], f->arcs);
		fmt_frac(cell[6], sizeof cell[6], f->density);
		fmt_frac(cell[9], sizeof cell[9], f->one_way_share);
		return;
	}
	fmt_count(cell[1], sizeof cell[1], c->size);
	fmt_count(cell[2], sizeof cell[2], c->internal_edges);
	fmt_frac(cell[6], sizeof cell[6], c->density);
	fmt_frac(cell[7], sizeof cell[7], c->conductance);
	fmt_frac(cell[8], sizeof cell[8], c->p);
}

void pane_comms_draw(const struct view *v, WINDOW *w)
{
	int width = getmaxx(w);
	char note[96] = "";
	const struct snapshot *s = v->snap;
	double sel = v->comm_index >= 0 && s && v->comm_index < s->agm.cover.k ?
		     view_stability(v, s->agm.comms[v->comm_index].id) : NAN;
	/* a two-sided fit lists those with a member by side (communities.tsv's) */
	uint32_t with = s && v->g->nsend ? v->norder : s ? s->agm.cover.k : 0;
	if (s && !isnan(sel))
		snprintf(note, sizeof note, "#%u stability %.2f, %u with members\n#%u stability "
			 "%.2f\n%u", s->agm.comms[v->comm_index].id, sel, with,
			 s->agm.comms[v->comm_index].id, sel, with);
	else if (s && s->agm.dropped) /* columns too weak to pay for their names */
		snprintf(note, sizeof note, "%u with members, %u left out\n%u with members\n%u",
			 with, s->agm.dropped, with, with);
	else if (s)
		snprintf(note, sizeof note, "%u with members\n%u", with, with);
	draw_title(v, w, PANE_COMMS, "Communities", note);
	if (!s)
		return;
	if (s->ntrace == 0) {
		draw_wrap(w, 2, 1, "none yet: the fit is seeding", width - 2, getmaxy(w) - 2);
		return;
	}
	if (v->norder == 0) {
		draw_wrap(w, 2, 1, "no community has a member above the threshold", width - 2,
			  getmaxy(w) - 2);
		return;
	}
	int shown_col[NCOLS];
	int wide = choose_cols(v, width, shown_col);
	char cell[NCOLS][32];
	for (size_t i = 0; i < NCOLS; i++) {
		const char *name = wide ? cols[i].wide : cols[i].narrow;
		if (sorted_col(v, &cols[i]))
			snprintf(cell[i], sizeof cell[i], "%s%s",
				 v->utf8 ? (v->ascending ? "\u2191" : "\u2193") : (v->ascending ? "^" : "v"),
				 name);
		else
			snprintf(cell[i], sizeof cell[i], "%s", name);
	}
	wattron(w, A_BOLD);
	put_cells(w, 1, 1, wide, shown_col, cell);
	wattroff(w, A_BOLD);

	size_t shown = view_rows_shown(v, PANE_COMMS);
	for (size_t r = 0; r < shown; r++) {
		size_t i = v->comms.top + r;
		int y = 2 + (int)r;
		row_cells(v, &s->agm.comms[v->order[i]], cell);
		attr_t at = draw_row(v, w, PANE_COMMS, y, 0, i, 0);
		put_cells(w, y, 1, wide, shown_col, cell);
		wattroff(w, at);
	}
}
