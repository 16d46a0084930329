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

static size_t help_line_count(void)
{
	struct help_line lines[HELP_MAX];
	size_t left;
	return build(lines, &left) + NNOTES + 1;
}

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

static void put_line(const struct view *v, WINDOW *w, int y, int x, int width, int kw,
		     const struct help_line *l)
{
	if (!l->text) {
		wattron(w, draw_attr(v, CP_TITLE));
		draw_text(w, y, x, l->keys, width);
		wattroff(w, draw_attr(v, CP_TITLE));
		return;
	}
	wattron(w, A_BOLD);
	draw_text(w, y, x + 2, l->keys, kw - 1);
	wattroff(w, A_BOLD);
	draw_text(w, y, x + 2 + kw, l->text, width - 2 - kw);
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
	int body = h - 1 - (int)NNOTES - 1;
	if (body < 1)
		body = 1;
	int kl = key_width(lines, 0, nleft), kr = key_width(lines, nleft, n);
	int wl = line_width(lines, 0, nleft, kl), wr = line_width(lines, nleft, n, kr);
	int kw = key_width(lines, 0, n);
	/* one column when it fits; two when that avoids scrolling and
	 * nothing is cut; else one column that scrolls */
	int two = n > (size_t)body && nleft <= (size_t)body && n - nleft <= (size_t)body &&
		  wl + wr + 4 <= width;
	if (two) {
		for (size_t i = 0; i < nleft; i++)
			put_line(v, w, 1 + (int)i, 1, wl + 1, kl, &lines[i]);
		for (size_t i = nleft; i < n; i++)
			put_line(v, w, 1 + (int)(i - nleft), wl + 4, width - wl - 5, kr, &lines[i]);
	} else {
		if (n > (size_t)body && body > 1)
			body--; /* a line for "lines a-b of n" */
		size_t top = v->help_top;
		if (n > (size_t)body && top > n - (size_t)body)
			top = n - (size_t)body;
		if (n <= (size_t)body)
			top = 0;
		for (int r = 0; r < body && top + (size_t)r < n; r++)
			put_line(v, w, 1 + r, 1, width - 2, kw, &lines[top + (size_t)r]);
		if (n > (size_t)body) {
			char more[64];
			snprintf(more, sizeof more, "lines %zu-%zu of %zu; j/k scroll", top + 1,
				 top + (size_t)body < n ? top + (size_t)body : n, n);
			wattron(w, draw_attr(v, CP_DIM));
			draw_text(w, 1 + body, width - 2 - draw_width(more), more, width - 2);
			wattroff(w, draw_attr(v, CP_DIM));
		}
	}
	wattron(w, draw_attr(v, CP_DIM));
	for (size_t i = 0; i < NNOTES; i++)
		draw_text(w, h - (int)NNOTES + (int)i, 1, notes[i], width - 2);
	wattroff(w, draw_attr(v, CP_DIM));
}

void help_key(struct view *v, int key)
{
	size_t n = help_line_count();
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
