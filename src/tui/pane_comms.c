/*
 * tui/pane_comms: pane 2, the communities, one row each with id, size,
 * internal edges, density, conductance and p (the AGM link probability),
 * and the stability when the folder shown was written by fit --repeats,
 * in the order view.c sorted them (inspect_sort_communities, or by
 * stability). The sorted column carries an arrow; the selected row drives
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

#include "panes.h"
#include "view.h"

static const struct {
	enum inspect_key key; /* for the stability column: none (stab is 1) */
	const char *narrow, *wide;
	int wn, ww;
	int stab;
} cols[] = {
	{ INSPECT_BY_ID, "id", "id", 5, 6, 0 },
	{ INSPECT_BY_SIZE, "size", "size", 6, 8, 0 },
	{ INSPECT_BY_EDGES, "edges", "edges", 7, 9, 0 },
	{ INSPECT_BY_DENSITY, "dens", "density", 5, 8, 0 },
	{ INSPECT_BY_CONDUCTANCE, "cond", "conductance", 5, 12, 0 },
	{ INSPECT_BY_P, "p", "p", 5, 8, 0 },
	{ INSPECT_BY_ID, "stab", "stability", 5, 9, 1 },
};
#define NCOLS (sizeof cols / sizeof cols[0])

/* The lower a column's rank, the longer it stays when the pane narrows. */
static const int keep_rank[NCOLS] = { 0, 1, 6, 5, 4, 3, 2 };

/* Column i is the one the rows are sorted by. */
static int sorted_col(const struct view *v, size_t i)
{
	return cols[i].stab ? v->by_stability : !v->by_stability && cols[i].key == v->sort_key;
}

/* Which columns to draw in width columns (from x = 1), and in which form;
 * returns 1 for the wide forms. */
static int choose_cols(const struct view *v, int width, int shown[NCOLS])
{
	int need = 0, stab = view_has_stability(v);
	for (size_t i = 0; i < NCOLS; i++) {
		shown[i] = !cols[i].stab || stab;
		need += shown[i] ? cols[i].ww + 1 : 0;
	}
	if (width - 2 >= need)
		return 1;
	need = 0;
	for (size_t i = 0; i < NCOLS; i++)
		need += shown[i] ? cols[i].wn + 1 : 0;
	for (int rank = (int)NCOLS - 1; rank > 1 && width - 1 < need; rank--)
		for (size_t i = 0; i < NCOLS; i++)
			if (keep_rank[i] == rank && shown[i] && !sorted_col(v, i)) {
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

void pane_comms_draw(const struct view *v, WINDOW *w)
{
	int width = getmaxx(w);
	char note[96] = "";
	const struct snapshot *s = v->snap;
	double sel = v->comm_index >= 0 && s && v->comm_index < s->agm.cover.k ?
		     view_stability(v, s->agm.comms[v->comm_index].id) : NAN;
	if (s && !isnan(sel))
		snprintf(note, sizeof note, "#%u stability %.2f, %u with members\n#%u stability "
			 "%.2f\n%u", s->agm.comms[v->comm_index].id, sel, s->agm.cover.k,
			 s->agm.comms[v->comm_index].id, sel, s->agm.cover.k);
	else if (s)
		snprintf(note, sizeof note, "%u with members\n%u", s->agm.cover.k, s->agm.cover.k);
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
		if (sorted_col(v, i))
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
		const struct agm_community *c = &s->agm.comms[v->order[i]];
		snprintf(cell[0], sizeof cell[0], "#%u", c->id);
		fmt_count(cell[1], sizeof cell[1], c->size);
		fmt_count(cell[2], sizeof cell[2], c->internal_edges);
		fmt_frac(cell[3], sizeof cell[3], c->density);
		fmt_frac(cell[4], sizeof cell[4], c->conductance);
		fmt_frac(cell[5], sizeof cell[5], c->p);
		fmt_frac(cell[6], sizeof cell[6], view_stability(v, c->id));
		attr_t at = draw_row(v, w, PANE_COMMS, y, 0, i, 0);
		put_cells(w, y, 1, wide, shown_col, cell);
		wattroff(w, at);
	}
}
