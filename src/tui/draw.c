/*
 * tui/draw: the small drawing helpers every pane uses: colours (or plain
 * attributes under NO_COLOR), measured text, safe node names, bars, the
 * pane title row and short number forms.
 *
 * Text reaching the screen is either ours or has been through
 * util_escape(); draw_text() also refuses to print anything wcwidth()
 * calls unprintable, so a string that slipped through shows '?' and
 * never a control sequence.
 */
#include "panes.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <wchar.h>

#include "view.h"

void draw_init_colours(int colour)
{
	if (!colour)
		return;
	start_color();
	use_default_colors();
	init_pair(CP_TITLE, COLOR_CYAN, -1);
	init_pair(CP_FOCUS, COLOR_BLACK, COLOR_CYAN);
	init_pair(CP_BAR, COLOR_BLUE, -1);
	init_pair(CP_PLOT, COLOR_GREEN, -1);
	init_pair(CP_MARK, COLOR_YELLOW, -1);
	init_pair(CP_ERROR, COLOR_RED, -1);
	init_pair(CP_WARN, COLOR_YELLOW, -1);
	init_pair(CP_GOOD, COLOR_GREEN, -1);
	init_pair(CP_DIM, COLOR_WHITE, -1);
}

attr_t draw_attr(const struct view *v, int pair)
{
	if (v->colour) {
		switch (pair) {
		case CP_FOCUS: return COLOR_PAIR(CP_FOCUS) | A_BOLD;
		case CP_TITLE: return COLOR_PAIR(CP_TITLE) | A_BOLD;
		case CP_DIM: return A_DIM;
		case CP_ERROR: return COLOR_PAIR(CP_ERROR) | A_BOLD;
		default: return COLOR_PAIR((short)pair);
		}
	}
	switch (pair) {
	case CP_FOCUS: return A_REVERSE | A_BOLD;
	case CP_TITLE: return A_BOLD;
	case CP_MARK: return A_BOLD;
	case CP_ERROR: return A_BOLD;
	case CP_WARN: return A_BOLD;
	case CP_DIM: return A_DIM;
	default: return A_NORMAL;
	}
}

/* Decode one character of s; returns bytes used (0 at the end) and its
 * columns in *cols (a '?' stands in for anything unprintable). */
static size_t next_char(const char *s, wchar_t *wc, int *cols)
{
	mbstate_t st;
	memset(&st, 0, sizeof st);
	if (!*s)
		return 0;
	size_t len = mbrtowc(wc, s, MB_CUR_MAX, &st);
	if (len == (size_t)-1 || len == (size_t)-2 || len == 0) {
		*wc = L'?';
		*cols = 1;
		return 1;
	}
	int w = wcwidth(*wc);
	if (w < 0 || (*wc < 0x20) || (*wc >= 0x7f && *wc < 0xa0)) {
		*wc = L'?';
		w = 1;
	}
	*cols = w;
	return len;
}

int draw_width(const char *s)
{
	int total = 0;
	wchar_t wc;
	int cols;
	size_t len;
	while ((len = next_char(s, &wc, &cols)) > 0) {
		total += cols;
		s += len;
	}
	return total;
}

int draw_text(WINDOW *w, int y, int x, const char *s, int maxcols)
{
	if (maxcols <= 0 || !s)
		return 0;
	wchar_t buf[256];
	int n = 0, used = 0;
	wchar_t wc;
	int cols;
	size_t len;
	wmove(w, y, x);
	while ((len = next_char(s, &wc, &cols)) > 0) {
		if (used + cols > maxcols)
			break;
		if (cols == 0) { /* a combining mark: keep it with its base */
			if (n == 0) {
				s += len;
				continue;
			}
		}
		buf[n++] = wc;
		used += cols;
		s += len;
		if (n == (int)(sizeof buf / sizeof buf[0])) {
			waddnwstr(w, buf, n);
			n = 0;
		}
	}
	if (n)
		waddnwstr(w, buf, n);
	return used;
}

const char *draw_wrap_next(const char *s, int width, size_t *len)
{
	while (*s == ' ')
		s++;
	/* the longest run of whole words that fits */
	size_t fit = 0, i = 0;
	char line[512];
	while (s[i]) {
		size_t k = i;
		while (s[k] == ' ')
			k++;
		while (s[k] && s[k] != ' ')
			k++;
		if (k >= sizeof line)
			break;
		memcpy(line, s, k);
		line[k] = '\0';
		if (draw_width(line) > width)
			break;
		fit = i = k;
	}
	if (fit == 0) /* one word wider than the line: it is cut */
		while (s[fit] && s[fit] != ' ')
			fit++;
	*len = fit;
	return s;
}

int draw_wrap(WINDOW *w, int y, int x, const char *s, int width, int maxrows)
{
	int rows = 0;
	char line[512];
	size_t len;
	while (rows < maxrows && width > 0 && *(s = draw_wrap_next(s, width, &len))) {
		size_t c = len < sizeof line ? len : sizeof line - 1;
		memcpy(line, s, c);
		line[c] = '\0';
		draw_text(w, y + rows, x, line, width);
		rows++;
		s += len;
	}
	return rows;
}

attr_t draw_row(const struct view *v, WINDOW *w, int pane, int y, int x0, size_t row,
		attr_t extra)
{
	int selected = row == view_pos(v, pane)->cur, focused = v->focus == pane;
	attr_t at = selected ? (focused ? A_REVERSE : A_BOLD | A_UNDERLINE) : A_NORMAL;
	at |= extra;
	wattron(w, at);
	if (selected)
		draw_fill(w, y, x0, getmaxx(w) - x0);
	return at;
}

void draw_bar(const struct view *v, WINDOW *w, int y, int x, int width, double f)
{
	if (width <= 0)
		return;
	if (!(f > 0))
		f = 0;
	if (f > 1)
		f = 1;
	static const char *const eighths[] = { "", "\u258f", "\u258e", "\u258d", "\u258c",
					       "\u258b", "\u258a", "\u2589" };
	attr_t a = draw_attr(v, CP_BAR);
	wattron(w, a);
	wmove(w, y, x);
	if (v->utf8) {
		int units = (int)lround(f * width * 8);
		int full = units / 8, part = units % 8;
		if (f > 0 && units == 0)
			part = 1; /* a positive value never looks like nothing */
		for (int i = 0; i < full; i++)
			waddstr(w, "\u2588");
		if (part && full < width)
			waddstr(w, eighths[part]);
	} else {
		int full = (int)lround(f * width);
		if (f > 0 && full == 0)
			full = 1;
		for (int i = 0; i < full; i++)
			waddch(w, '#');
	}
	wattroff(w, a);
}

void draw_title(const struct view *v, WINDOW *w, int pane, const char *title, const char *note)
{
	int width = getmaxx(w);
	int x0 = (pane == PANE_NODE || pane == PANE_EDGES) ? 1 : 0;
	int focused = v->focus == pane && v->mode == MODE_NORMAL;
	attr_t line = draw_attr(v, CP_TITLE);
	wattron(w, line);
	wmove(w, 0, x0);
	for (int x = x0; x < width; x++)
		waddstr(w, v->utf8 ? "\u2500" : "-");
	wattroff(w, line);
	char head[160];
	snprintf(head, sizeof head, " %d %s ", pane + 1, title);
	attr_t ta = focused ? draw_attr(v, CP_FOCUS) : draw_attr(v, CP_TITLE);
	wattron(w, ta);
	int used = draw_text(w, 0, x0 + 1, head, width - x0 - 2);
	wattroff(w, ta);
	/* the note whole or not at all: a cut count ("1-5 of 124" for
	 * 12456) misleads; its forms are tried longest first */
	int room = width - (x0 + 1 + used) - 2;
	while (note && *note) {
		const char *end = strchr(note, '\n');
		int len = end ? (int)(end - note) : (int)strlen(note);
		char nb[200];
		snprintf(nb, sizeof nb, " %.*s ", len, note);
		int nw = draw_width(nb);
		if (nw <= room) {
			draw_text(w, 0, width - 1 - nw, nb, nw);
			break;
		}
		note = end ? end + 1 : NULL;
	}
}

void draw_separator(const struct view *v, WINDOW *w)
{
	int h = getmaxy(w);
	attr_t a = draw_attr(v, CP_TITLE);
	wattron(w, a);
	for (int y = 0; y < h; y++)
		mvwaddstr(w, y, 0, v->utf8 ? (y == 0 ? "\u252c" : "\u2502") : (y == 0 ? "+" : "|"));
	wattroff(w, a);
}

void fmt_count(char *buf, size_t cap, uint64_t x)
{
	if (x < 100000)
		snprintf(buf, cap, "%llu", (unsigned long long)x);
	else if (x < 10000000)
		snprintf(buf, cap, "%.1fk", (double)x / 1e3);
	else if (x < 10000000000ULL)
		snprintf(buf, cap, "%.1fM", (double)x / 1e6);
	else
		snprintf(buf, cap, "%.1fG", (double)x / 1e9);
}

void fmt_frac(char *buf, size_t cap, double x)
{
	if (!isfinite(x)) {
		snprintf(buf, cap, "-");
	} else if (x >= 0.9995) {
		snprintf(buf, cap, "%.2f", x);
	} else if (x >= 0.0005 || x == 0) {
		char t[32];
		snprintf(t, sizeof t, "%.3f", x); /* "0.123" -> ".123" */
		snprintf(buf, cap, "%s", t[0] == '0' ? t + 1 : t);
	} else {
		snprintf(buf, cap, "%.0e", x);
	}
}

void fmt_duration(char *buf, size_t cap, double s)
{
	if (!(s >= 0))
		s = 0;
	if (s < 60) {
		snprintf(buf, cap, "%.1fs", s);
		return;
	}
	unsigned long t = (unsigned long)s;
	if (t < 3600)
		snprintf(buf, cap, "%lu:%02lu", t / 60, t % 60);
	else
		snprintf(buf, cap, "%lu:%02lu:%02lu", t / 3600, (t / 60) % 60, t % 60);
}

void draw_fill(WINDOW *w, int y, int x, int n)
{
	wmove(w, y, x);
	for (int i = 0; i < n; i++)
		waddch(w, ' ');
}
