/*
 * tui/pane_comms: pane 2, the communities, one row each with id, size,
 * internal edges, density, conductance and p (the AGM link probability),
 * in the order view.c sorted them (inspect_sort_communities). The sorted
 * column carries an arrow; the selected row drives panes 3 to 5.
 */

#include <stdio.h>
#include <string.h>

#include "panes.h"
#include "view.h"

static const struct {
	enum inspect_key key;
	const char *narrow, *wide;
	int wn, ww;
} cols[] = {
	{ INSPECT_BY_ID, "id", "id", 5, 6 },
	{ INSPECT_BY_SIZE, "size", "size", 6, 8 },
	{ INSPECT_BY_EDGES, "edges", "edges", 7, 9 },
	{ INSPECT_BY_DENSITY, "dens", "density", 5, 8 },
	{ INSPECT_BY_CONDUCTANCE, "cond", "conductance", 5, 12 },
	{ INSPECT_BY_P, "p", "p", 5, 8 },
};
#define NCOLS (sizeof cols / sizeof cols[0])

static int wide_enough(int width)
{
	int need = 0;
	for (size_t i = 0; i < NCOLS; i++)
		need += cols[i].ww + 1;
	return width - 2 >= need;
}

static void put_cells(WINDOW *w, int y, int x, int wide, char cell[NCOLS][32])
{
	int at = x;
	for (size_t i = 0; i < NCOLS; i++) {
		int cw = wide ? cols[i].ww : cols[i].wn;
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
	if (s)
		snprintf(note, sizeof note, "%u with members", s->agm.cover.k);
	draw_title(v, w, PANE_COMMS, "Communities", note);
	if (!s)
		return;
	if (s->ntrace == 0) {
		draw_text(w, 2, 1, "none yet: the fit is seeding", width - 2);
		return;
	}
	if (v->norder == 0) {
		draw_text(w, 2, 1, "no community has a member above the threshold", width - 2);
		return;
	}
	int wide = wide_enough(width);
	char cell[NCOLS][32];
	for (size_t i = 0; i < NCOLS; i++) {
		const char *name = wide ? cols[i].wide : cols[i].narrow;
		if (cols[i].key == v->sort_key)
			snprintf(cell[i], sizeof cell[i], "%s%s",
				 v->utf8 ? (v->ascending ? "\u2191" : "\u2193") : (v->ascending ? "^" : "v"),
				 name);
		else
			snprintf(cell[i], sizeof cell[i], "%s", name);
	}
	wattron(w, A_BOLD);
	put_cells(w, 1, 1, wide, cell);
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
		attr_t at = draw_row(v, w, PANE_COMMS, y, 0, i, 0);
		put_cells(w, y, 1, wide, cell);
		wattroff(w, at);
	}
}
