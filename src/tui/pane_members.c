/*
 * tui/pane_members: pane 3, the members of the selected community,
 * strongest first (inspect_members), each with a bar scaled to the
 * strongest member and the strength itself. For a two-sided graph the
 * list is by the per-side rule (sides.h): all members with their side
 * (both, send, recv; two-mode 1st or 2nd, the kind), or ('d') only the
 * sending or only the receiving ones, said in the title's note.
 */

#include <stdio.h>

#include "coterie/graph.h"

#include "panes.h"
#include "view.h"

void pane_members_draw(const struct view *v, WINDOW *w)
{
	int width = getmaxx(w);
	char title[64], note[256] = "";
	if (v->comm_index >= 0 && v->has_comm) {
		snprintf(title, sizeof title, "Members of #%u", v->comm_id);
		char n[32];
		fmt_count(n, sizeof n, v->nmem);
		static const char *const what[2][3] = {
			{ "", " sending", " receiving" }, { "", " of 1st kind", " of 2nd kind" } };
		const char *side = v->g->nsend ? what[!v->g->paired][v->side_filter] : "";
		snprintf(note, sizeof note, "%s%s by strength (d)\n%s%s by strength\n%s%s\n%s", n,
			 side, n, side, n, side, n);
		if (!v->g->nsend)
			snprintf(note, sizeof note, "%s by strength\n%s", n, n);
	} else {
		snprintf(title, sizeof title, "Members");
	}
	draw_title(v, w, PANE_MEMBERS, title, note);
	if (v->comm_index < 0 || v->nmem == 0) {
		draw_wrap(w, 2, 1, "select a community in pane 2", width - 2, getmaxy(w) - 2);
		return;
	}
	int vw = 7;
	int sw = v->g->nsend ? 5 : 0; /* the side column, paid for by the bar */
	int bw = width / 3 - (sw ? 4 : 0);
	if (bw > 24)
		bw = 24;
	if (bw < 4)
		bw = 4;
	int nw = width - 2 - bw - vw - 2 - sw;
	double top = v->mem_strength[0] > 0 ? v->mem_strength[0] : 1.0;
	size_t shown = view_rows_shown(v, PANE_MEMBERS);
	for (size_t r = 0; r < shown; r++) {
		size_t i = v->members.top + r;
		int y = 1 + (int)r;
		attr_t at = draw_row(v, w, PANE_MEMBERS, y, 0, i, 0);
		char name[512];
		view_node_name(v, v->mem[i], name, sizeof name);
		draw_text(w, y, 1, name, nw);
		wattroff(w, at);
		draw_bar(v, w, y, 1 + nw + 1, bw, v->mem_strength[i] / top);
		char val[32];
		snprintf(val, sizeof val, "%.3g", v->mem_strength[i]);
		wattron(w, at);
		draw_text(w, y, width - vw, val, vw);
		if (sw) {
			static const char *const side[2][4] = { { "", "send", "recv", "both" },
								{ "", "1st", "2nd", "1st" } };
			draw_text(w, y, 1 + nw + 1 + bw + 1, side[!v->g->paired][v->mem_side[i] & 3],
				  sw - 1);
		}
		wattroff(w, at);
	}
}
