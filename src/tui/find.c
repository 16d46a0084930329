/*
 * tui/find: find a node by name, incrementally.
 *
 * Every key typed restarts the search, but the names are compared a slice
 * at a time (FIND_SCAN_STEP per loop pass), so typing on a graph of
 * millions of nodes stays responsive: the loop polls with no wait while a
 * scan is unfinished and the count of matches grows on screen. Matching
 * is a substring test with ASCII letters folded (bytes beyond ASCII match
 * exactly). Only FIND_KEEP matches are kept, best first: a name equal to
 * the query, then names starting with it, then the rest, each by node id.
 */
#include <limits.h>
#include <stdio.h>
#include <string.h>
#include <wchar.h>

#include "coterie/graph.h"
#include "coterie/util.h"
#include "keys.h"
#include "panes.h"
#include "view.h"

static unsigned char fold(unsigned char c)
{
	return (c >= 'A' && c <= 'Z') ? (unsigned char)(c + 32) : c;
}

/* 0 exact, 1 prefix, 2 inside, -1 no match (query non-empty). */
static int match_rank(const char *name, const char *q, size_t qlen)
{
	const unsigned char *s = (const unsigned char *)name;
	const unsigned char *p = (const unsigned char *)q;
	for (size_t i = 0; s[i]; i++) {
		size_t j = 0;
		while (j < qlen && s[i + j] && fold(s[i + j]) == fold(p[j]))
			j++;
		if (j == qlen) {
			if (i > 0)
				return 2;
			return s[qlen] ? 1 : 0;
		}
	}
	return -1;
}

/* The rows find scans: a directed graph's sending copies only (each
 * stands for its node), else every row. */
static uint32_t find_rows(const struct view *v)
{
	return v->g->paired ? v->g->nsend : v->g->n;
}

/* Node u's rank for the query; a two-sided graph's name without its tag. */
static int rank_of(const struct view *v, uint32_t u)
{
	if (!v->g->nsend)
		return match_rank(graph_name(v->g, u), v->query, v->qlen);
	size_t len;
	const char *s = graph_side_name(v->g, u, &len);
	char buf[1024];
	if (len >= sizeof buf) /* a very long name is matched on its start */
		len = sizeof buf - 1;
	memcpy(buf, s, len);
	buf[len] = '\0';
	return match_rank(buf, v->query, v->qlen);
}

static void restart(struct view *v)
{
	v->nfound = 0;
	v->nkept = 0;
	v->find_cur = 0;
	v->scan_next = v->qlen ? 0 : find_rows(v);
	v->dirty |= DIRTY_OVERLAY;
}

void find_open(struct view *v)
{
	v->mode = MODE_FIND;
	v->qlen = 0;
	v->query[0] = '\0';
	restart(v);
	v->dirty |= DIRTY_FOOTER;
}

static void keep(struct view *v, uint32_t node, int rank)
{
	struct find_match m = { node, rank };
	size_t n = v->nkept;
	if (n == FIND_KEEP) {
		const struct find_match *last = &v->found[n - 1];
		if (last->rank < rank || (last->rank == rank && last->node < node))
			return;
		n--; /* the last one drops out */
	}
	size_t i = n;
	while (i > 0 && (v->found[i - 1].rank > rank ||
			 (v->found[i - 1].rank == rank && v->found[i - 1].node > node))) {
		v->found[i] = v->found[i - 1];
		i--;
	}
	v->found[i] = m;
	v->nkept = n + 1;
}

int find_step(struct view *v)
{
	uint32_t rows = find_rows(v);
	if (v->mode != MODE_FIND || v->scan_next >= rows)
		return 0;
	uint32_t end = rows - v->scan_next > FIND_SCAN_STEP ? v->scan_next + FIND_SCAN_STEP : rows;
	for (uint32_t u = v->scan_next; u < end; u++) {
		int r = rank_of(v, u);
		if (r >= 0) {
			v->nfound++;
			keep(v, u, r);
		}
	}
	v->scan_next = end;
	v->dirty |= DIRTY_OVERLAY;
	return v->scan_next < rows;
}

static void close_find(struct view *v)
{
	v->mode = MODE_NORMAL;
	v->dirty |= DIRTY_ALL; /* the panes under the box */
}

void find_key(struct view *v, int key, int is_char)
{
	/* keys typed ahead act on the whole search, not on a partial one */
	if (!is_char || key == '\r' || key == '\n')
		while (find_step(v))
			;
	if (!is_char) {
		switch (key) {
		case KEY_UP:
			if (v->find_cur > 0)
				v->find_cur--;
			break;
		case KEY_DOWN:
			if (v->find_cur + 1 < v->nkept)
				v->find_cur++;
			break;
		case KEY_BACKSPACE:
			goto backspace;
		case KEY_ENTER:
			goto enter;
		default:
			break;
		}
		v->dirty |= DIRTY_OVERLAY;
		return;
	}
	switch (key) {
	case 27: /* Esc */
		close_find(v);
		return;
	case '\r':
	case '\n':
	enter:
		if (v->nkept == 0) {
			view_say(v, UTIL_NOTICE, "no node name holds that; Esc leaves the search");
			return;
		}
		{
			uint32_t u = v->found[v->find_cur].node;
			close_find(v);
			view_select_node(v, u, 1);
			view_set_focus(v, PANE_NODE);
			char name[200];
			view_say(v, UTIL_NOTICE, "found %s", view_node_name(v, u, name, sizeof name));
		}
		return;
	case 127:
	case 8:
	backspace:
		while (v->qlen > 0) { /* drop one UTF-8 character */
			unsigned char c = (unsigned char)v->query[--v->qlen];
			if ((c & 0xc0) != 0x80)
				break;
		}
		v->query[v->qlen] = '\0';
		restart(v);
		return;
	case 0x15: /* C-u */
		v->qlen = 0;
		v->query[0] = '\0';
		restart(v);
		return;
	default:
		break;
	}
	if (key < 0x20 || key == 0x7f)
		return;
	char mb[MB_LEN_MAX];
	mbstate_t st;
	memset(&st, 0, sizeof st);
	size_t len = wcrtomb(mb, (wchar_t)key, &st);
	if (len == (size_t)-1 || v->qlen + len + 1 > sizeof v->query)
		return;
	memcpy(v->query + v->qlen, mb, len);
	v->qlen += len;
	v->query[v->qlen] = '\0';
	restart(v);
}

void find_draw(const struct view *v, WINDOW *w)
{
	int h = getmaxy(w), width = getmaxx(w);
	if (v->utf8)
		box(w, 0, 0);
	else
		wborder(w, '|', '|', '-', '-', '+', '+', '+', '+');
	attr_t ta = draw_attr(v, CP_FOCUS);
	wattron(w, ta);
	draw_text(w, 0, 2, " Find a node ", width - 4);
	wattroff(w, ta);
	char q[FIND_QUERY_MAX * 4 + 8];
	util_escape(v->query, q, sizeof q, !v->utf8);
	mvwaddstr(w, 1, 2, "name: ");
	int qw = draw_width(q);
	int room = width - 10;
	/* show the end of a long query, where the typing happens */
	const char *shown = q;
	while (qw > room && *shown) {
		shown++;
		qw = draw_width(shown);
	}
	wattron(w, A_BOLD);
	int used = draw_text(w, 1, 8, shown, room);
	wattroff(w, A_BOLD);
	mvwaddstr(w, 1, 8 + used, v->utf8 ? "\u258f" : "_");

	char line[200];
	if (v->qlen == 0) {
		snprintf(line, sizeof line, "type any part of a name; case does not matter");
	} else if (v->scan_next < find_rows(v)) {
		snprintf(line, sizeof line, "%zu found so far (searched %u%%)", v->nfound,
			 (unsigned)((uint64_t)v->scan_next * 100 / (find_rows(v) ? find_rows(v) : 1)));
	} else {
		snprintf(line, sizeof line, "%zu node%s match%s%s", v->nfound,
			 v->nfound == 1 ? "" : "s", v->nfound == 1 ? "es" : "",
			 v->nfound > v->nkept ? " (the best are listed)" : "");
	}
	wattron(w, draw_attr(v, CP_DIM));
	draw_text(w, 2, 2, line, width - 4);
	wattroff(w, draw_attr(v, CP_DIM));

	int rows = h - 5;
	size_t top = 0;
	if (rows > 0 && v->find_cur >= (size_t)rows)
		top = v->find_cur - (size_t)rows + 1;
	for (int r = 0; r < rows && top + (size_t)r < v->nkept; r++) {
		size_t i = top + (size_t)r;
		uint32_t u = v->found[i].node;
		char name[512];
		view_node_name(v, u, name, sizeof name);
		char deg[48];
		if (v->g->paired) /* a directed node: its arcs out and in */
			snprintf(deg, sizeof deg, "arcs %u", graph_degree(v->g, u) +
							     graph_degree(v->g, v->g->nsend + u));
		else
			snprintf(deg, sizeof deg, "degree %u", graph_degree(v->g, u));
		int sel = i == v->find_cur;
		if (sel)
			wattron(w, A_REVERSE);
		draw_fill(w, 3 + r, 1, width - 2);
		int dw = draw_width(deg);
		draw_text(w, 3 + r, 2, name, width - 6 - dw);
		draw_text(w, 3 + r, width - 2 - dw, deg, dw);
		if (sel)
			wattroff(w, A_REVERSE);
	}
	wattron(w, draw_attr(v, CP_DIM));
	draw_text(w, h - 2, 2, "Enter: go to it  Up/Down: choose  Esc: cancel", width - 4);
	wattroff(w, draw_attr(v, CP_DIM));
}
