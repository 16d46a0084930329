/*
 * tui/panes: drawing. Each pane's draw function repaints its window from
 * the view alone (STYLE.md section 4); the overlays (find box, help
 * screen) likewise. The window is handed over already erased. draw.c
 * holds the helpers they share: colours, measured text, bars, titles,
 * short number forms.
 */
#ifndef COTERIE_TUI_PANES_H
#define COTERIE_TUI_PANES_H

#ifndef NCURSES_WIDECHAR
#define NCURSES_WIDECHAR 1
#endif
#include <curses.h>
#include <stddef.h>
#include <stdint.h>

struct view;

/* ---- the panes and overlays (w erased, borrowed) ---- */
void pane_trace_draw(const struct view *v, WINDOW *w);
void pane_comms_draw(const struct view *v, WINDOW *w);
void pane_members_draw(const struct view *v, WINDOW *w);
void pane_node_draw(const struct view *v, WINDOW *w);
void pane_edges_draw(const struct view *v, WINDOW *w);
void find_draw(const struct view *v, WINDOW *w);
void help_draw(const struct view *v, WINDOW *w);

/* ---- draw.c: helpers shared by the panes ---- */

enum {
	CP_TITLE = 1, /* pane titles */
	CP_FOCUS,     /* the focused pane's title */
	CP_BAR,
	CP_PLOT,
	CP_MARK,      /* the plateau mark */
	CP_ERROR,
	CP_WARN,
	CP_GOOD,
	CP_DIM,
};

/* Set up the colour pairs (nothing when colour is 0). */
void draw_init_colours(int colour);
/* The attributes of pair for this view (plain ones without colour). */
attr_t draw_attr(const struct view *v, int pair);
/* Put s (already safe: escaped or ours) at (y, x) in at most maxcols
 * columns; wide characters are measured. Returns the columns used. */
int draw_text(WINDOW *w, int y, int x, const char *s, int maxcols);
/* s at (y, x) broken between words into lines of at most width columns,
 * at most maxrows of them (a word wider than a line is cut); returns the
 * lines used. */
int draw_wrap(WINDOW *w, int y, int x, const char *s, int width, int maxrows);
/* Where the next row of s broken between words at width columns starts
 * (leading spaces skipped); *len is the row's length in bytes (a word wider
 * than the row is cut). An empty string at the returned place: no more. */
const char *draw_wrap_next(const char *s, int width, size_t *len);
/* n spaces from (y, x) in the window's current attributes. */
void draw_fill(WINDOW *w, int y, int x, int n);
/* Columns s takes on screen. */
int draw_width(const char *s);
/* A bar of width cells for fraction f (clamped to 0..1). */
void draw_bar(const struct view *v, WINDOW *w, int y, int x, int width, double f);
/* The pane's title row: "N Title" and a right-hand note. The note may
 * hold several forms, longest first, separated by '\n': the first that
 * fits whole is drawn, and none when none fits (a note is never cut). */
void draw_title(const struct view *v, WINDOW *w, int pane, const char *title, const char *note);
/* The separator column of a right-hand pane. */
void draw_separator(const struct view *v, WINDOW *w);
/* Start row `row` of the list of pane (a list pane, not the likelihood)
 * at line y: its attributes switched on (reverse when it is the cursor
 * row of the focused pane, bold underline when the cursor row of another,
 * plus extra) and, on the cursor row, the line filled from column x0.
 * Returns the attributes for the caller to switch off. */
attr_t draw_row(const struct view *v, WINDOW *w, int pane, int y, int x0, size_t row,
		attr_t extra);
/* Short number forms. */
void fmt_count(char *buf, size_t cap, uint64_t x);  /* 123, 12.3k, 4.5M */
void fmt_frac(char *buf, size_t cap, double x);     /* .123, 1.00, 1e-05 */
void fmt_duration(char *buf, size_t cap, double s); /* 12.3s, 4:05, 1:02:03 */

#endif
