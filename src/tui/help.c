/*
 * tui/help: the help screen, generated from keys_table so that what it
 * says is what the keys do. Bindings of the same pane, action and text are
 * one line ("Up, k  move up"). On a wide screen the keys that work
 * everywhere fill the left column and the pane keys the right one.
 */
#include <stdio.h>
#include <string.h>

#include "keys.h"
#include "panes.h"
#include "view.h"

struct help_line {
	char keys[64];
	const char *text; /* NULL for a heading (keys holds it) */
};

#define HELP_MAX 96

static const char *section_name(int pane)
{
	switch (pane) {
	case PANE_ANY: return "Everywhere";
	case PANE_TRACE: return "Likelihood pane";
	case PANE_COMMS: return "Communities pane";
	case PANE_MEMBERS: return "Members pane";
	case PANE_NODE: return "Node pane";
	case PANE_EDGES: return "Weak edges pane";
	default: return "?";
	}
}

/* Lines of one section; returns how many were added at out[n]. */
static size_t section(int pane, struct help_line *out, size_t n)
{
	size_t start = n;
	int any = 0;
	for (size_t i = 0; i < keys_count; i++) {
		const struct key_binding *b = &keys_table[i];
		if (b->pane != pane)
			continue;
		/* already listed with an earlier key of the same meaning? */
		int seen = 0;
		for (size_t j = 0; j < i; j++)
			if (keys_table[j].pane == pane && keys_table[j].act == b->act &&
			    !strcmp(keys_table[j].help, b->help))
				seen = 1;
		if (seen)
			continue;
		if (!any) {
			if (n + 1 >= HELP_MAX)
				break;
			snprintf(out[n].keys, sizeof out[n].keys, "%s", section_name(pane));
			out[n++].text = NULL;
			any = 1;
		}
		if (n >= HELP_MAX)
			break;
		struct help_line *l = &out[n++];
		l->keys[0] = '\0';
		l->text = b->help;
		for (size_t j = i; j < keys_count; j++) {
			const struct key_binding *c = &keys_table[j];
			if (c->pane != pane || c->act != b->act || strcmp(c->help, b->help))
				continue;
			char nb[32];
			size_t len = strlen(l->keys);
			snprintf(l->keys + len, sizeof l->keys - len, "%s%s", len ? ", " : "",
				 keys_name(c->key, nb, sizeof nb));
		}
	}
	return n - start;
}

static size_t build(struct help_line *out, size_t *nleft)
{
	size_t n = section(PANE_ANY, out, 0);
	*nleft = n;
	for (int p = 0; p < PANE_COUNT; p++)
		n += section(p, out, n);
	return n;
}

static const char *const notes[] = {
	"Find box: type part of a name, Up/Down choose, Enter goes there, Esc leaves.",
	"Quit question: y saves and quits, d quits without saving, n stays.",
	"Sweeps and tolerance questions: type a number, Enter goes on, Esc changes nothing.",
	"Ctrl-C, SIGTERM or a lost connection save first, then end (status 130).",
};
#define NNOTES (sizeof notes / sizeof notes[0])
#define NOTES_HEADING "Questions and signals"

/* Columns of the key names, and of a whole line, over lines [a, b). */
static int key_width(const struct help_line *l, size_t a, size_t b)
{
	int kw = 0;
	for (size_t i = a; i < b; i++)
		if (l[i].text && draw_width(l[i].keys) > kw)
			kw = draw_width(l[i].keys);
	return kw + 2;
}

static int line_width(const struct help_line *l, size_t a, size_t b, int kw)
{
	int lw = 0;
	for (size_t i = a; i < b; i++) {
		int x = l[i].text ? 2 + kw + draw_width(l[i].text) : draw_width(l[i].keys);
		if (x > lw)
			lw = x;
	}
	return lw;
}

/* The key lines, then the notes as lines without keys under a heading of
 * their own: what the one-column help scrolls through. */
static size_t build_all(struct help_line *out, size_t *nleft)
{
	size_t n = build(out, nleft);
	if (n + 1 + NNOTES > HELP_MAX)
		return n;
	snprintf(out[n].keys, sizeof out[n].keys, "%s", NOTES_HEADING);
	out[n++].text = NULL;
	for (size_t i = 0; i < NNOTES; i++) {
		out[n].keys[0] = '\0';
		out[n++].text = notes[i];
	}
	return n;
}

/* Rows a line takes when its text is broken between words at tw columns. */
static int line_rows(const struct help_line *l, int tw)
{
	if (!l->text || tw < 1)
		return 1;
	int rows = 0;
	const char *s = l->text;
	size_t len;
	while (*(s = draw_wrap_next(s, tw, &len))) {
		rows++;
		s += len;
	}
	return rows ? rows : 1;
}

/* The one-column layout at a width: key column, text column, rows in all. */
static size_t one_column(const struct help_line *l, size_t n, int width, int *kw, int *tw)
{
	*kw = key_width(l, 0, n);
	*tw = width - 2 - 2 - *kw;
	if (*tw < 12) { /* too narrow for a key column: text under the keys */
		*kw = 0;
		*tw = width - 4;
	}
	size_t rows = 0;
	for (size_t i = 0; i < n; i++)
		rows += (size_t)line_rows(&l[i], *tw) + (*kw == 0 && l[i].text && l[i].keys[0]);
	return rows;
}

static size_t help_row_count(int width)
{
	struct help_line lines[HELP_MAX];
	size_t left;
	size_t n = build_all(lines, &left);
	int kw, tw;
	return one_column(lines, n, width, &kw, &tw);
}

static void put_heading(const struct view *v, WINDOW *w, int y, int x, int width, const char *t)
{
	wattron(w, draw_attr(v, CP_TITLE));
	draw_text(w, y, x, t, width);
	wattroff(w, draw_attr(v, CP_TITLE));
}

static void put_line(const struct view *v, WINDOW *w, int y, int x, int width, int kw,
		     const struct help_line *l)
{
	if (!l->text) {
		put_heading(v, w, y, x, width, l->keys);
		return;
	}
	wattron(w, A_BOLD);
	draw_text(w, y, x + 2, l->keys, kw - 1);
	wattroff(w, A_BOLD);
	draw_text(w, y, x + 2 + kw, l->text, width - 2 - kw);
}

/* The one-column help from display row top: every text whole, broken
 * between words. */
static void draw_rows(const struct view *v, WINDOW *w, const struct help_line *l, size_t n,
		      size_t top, int body, int width)
{
	int kw, tw;
	one_column(l, n, width, &kw, &tw);
	size_t row = 0;
	for (size_t i = 0; i < n; i++) {
		int keys_above = kw == 0 && l[i].text && l[i].keys[0];
		if (keys_above) {
			if (row >= top && row < top + (size_t)body) {
				wattron(w, A_BOLD);
				draw_text(w, 1 + (int)(row - top), 3, l[i].keys, width - 4);
				wattroff(w, A_BOLD);
			}
			row++;
		}
		if (!l[i].text) {
			if (row >= top && row < top + (size_t)body)
				put_heading(v, w, 1 + (int)(row - top), 1, width - 2, l[i].keys);
			row++;
			continue;
		}
		const char *s = l[i].text;
		size_t len;
		int first = 1;
		while (*(s = draw_wrap_next(s, tw, &len))) {
			if (row >= top && row < top + (size_t)body) {
				int y = 1 + (int)(row - top);
				if (first && kw > 0) {
					wattron(w, A_BOLD);
					draw_text(w, y, 3, l[i].keys, kw - 1);
					wattroff(w, A_BOLD);
				}
				char buf[256];
				size_t c = len < sizeof buf ? len : sizeof buf - 1;
				memcpy(buf, s, c);
				buf[c] = '\0';
				draw_text(w, y, 3 + kw, buf, tw);
			}
			first = 0;
			row++;
			s += len;
		}
	}
}

void help_draw(const struct view *v, WINDOW *w)
{
	int h = getmaxy(w), width = getmaxx(w);
	struct help_line lines[HELP_MAX];
	size_t nleft;
	size_t n = build(lines, &nleft);
	attr_t ta = draw_attr(v, CP_FOCUS);
	wattron(w, ta);
	draw_fill(w, 0, 0, width);
	draw_text(w, 0, 1, "Keys: what each one does (any other key closes this)",
		  width - 2);
	wattroff(w, ta);
	int notes_fit = 1;
	for (size_t i = 0; i < NNOTES; i++)
		notes_fit &= draw_width(notes[i]) <= width - 2;
	int body = h - 1 - (int)NNOTES - 1;
	int kl = key_width(lines, 0, nleft), kr = key_width(lines, nleft, n);
	int wl = line_width(lines, 0, nleft, kl), wr = line_width(lines, nleft, n, kr);
	/* two columns, the notes below, when that avoids scrolling and nothing
	 * is cut; else one column, every text broken between words, the notes
	 * at the end, scrolling when it must */
	int two = body >= 1 && n > (size_t)body && nleft <= (size_t)body &&
		  n - nleft <= (size_t)body && wl + wr + 4 <= width && notes_fit;
	if (two) {
		for (size_t i = 0; i < nleft; i++)
			put_line(v, w, 1 + (int)i, 1, wl + 1, kl, &lines[i]);
		for (size_t i = nleft; i < n; i++)
			put_line(v, w, 1 + (int)(i - nleft), wl + 4, width - wl - 5, kr, &lines[i]);
		wattron(w, draw_attr(v, CP_DIM));
		for (size_t i = 0; i < NNOTES; i++)
			draw_text(w, h - (int)NNOTES + (int)i, 1, notes[i], width - 2);
		wattroff(w, draw_attr(v, CP_DIM));
		return;
	}
	/* one column with the notes below when it all fits; else the notes
	 * join the scrolling body */
	int kw, tw;
	if (notes_fit && body >= 1 && one_column(lines, n, width, &kw, &tw) <= (size_t)body) {
		draw_rows(v, w, lines, n, 0, body, width);
		wattron(w, draw_attr(v, CP_DIM));
		for (size_t i = 0; i < NNOTES; i++)
			draw_text(w, h - (int)NNOTES + (int)i, 1, notes[i], width - 2);
		wattroff(w, draw_attr(v, CP_DIM));
		return;
	}
	n = build_all(lines, &nleft);
	body = h - 1;
	size_t rows = help_row_count(width);
	if (rows > (size_t)body && body > 1)
		body--; /* a line for "rows a-b of n" */
	size_t top = v->help_top;
	if (rows > (size_t)body && top > rows - (size_t)body)
		top = rows - (size_t)body;
	if (rows <= (size_t)body)
		top = 0;
	draw_rows(v, w, lines, n, top, body, width);
	if (rows > (size_t)body) {
		char more[64];
		snprintf(more, sizeof more, "lines %zu-%zu of %zu; j/k scroll", top + 1,
			 top + (size_t)body < rows ? top + (size_t)body : rows, rows);
		wattron(w, draw_attr(v, CP_DIM));
		draw_text(w, 1 + body, width - 2 - draw_width(more), more, width - 2);
		wattroff(w, draw_attr(v, CP_DIM));
	}
}

void help_key(struct view *v, int key)
{
	size_t n = help_row_count(v->cols);
	switch (key) {
	case KEY_DOWN:
	case 'j':
		if (v->help_top + 1 < n)
			v->help_top++;
		break;
	case KEY_UP:
	case 'k':
		if (v->help_top > 0)
			v->help_top--;
		break;
	case KEY_NPAGE:
	case ' ':
		v->help_top = v->help_top + 10 < n ? v->help_top + 10 : n - 1;
		break;
	case KEY_PPAGE:
		v->help_top = v->help_top > 10 ? v->help_top - 10 : 0;
		break;
	default:
		v->mode = MODE_NORMAL;
		v->dirty |= DIRTY_ALL;
		return;
	}
	v->dirty |= DIRTY_OVERLAY;
}
