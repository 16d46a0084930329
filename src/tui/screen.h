/*
 * tui/screen: the explorer's curses windows, laid out from the view
 * (view_layout() decides the rectangles; this makes the windows), and one
 * drawing pass over whatever the view marked dirty.
 */
#ifndef COTERIE_TUI_SCREEN_H
#define COTERIE_TUI_SCREEN_H

#ifndef NCURSES_WIDECHAR
#define NCURSES_WIDECHAR 1
#endif
#include <curses.h>

#include "view.h"

struct screen {
	WINDOW *win[PANE_COUNT];
	WINDOW *header, *footer, *overlay; /* overlay: the find box or help */
};

/* Lay the view out in the terminal's present size (view_layout()) and
 * make the windows for it, replacing any old ones. Call after
 * term_start() and on every KEY_RESIZE. */
void screen_layout(struct screen *s, struct view *v);
/* Delete the windows. */
void screen_release(struct screen *s);
/* Redraw what v->dirty marks, clear the marks and doupdate(). */
void screen_draw(struct screen *s, struct view *v);

#endif
