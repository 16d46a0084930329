/*
 * tui/term: the one curses session of the explorer's screens (the -k auto
 * screen, kscreen.c, and the explorer, ui.c): start and end curses, and
 * the inbox that takes the core's messages while curses owns the
 * terminal. One session at a time in a process.
 */
#ifndef COTERIE_TUI_TERM_H
#define COTERIE_TUI_TERM_H

#include <stddef.h>

/* What term_start() found out about the terminal. */
struct term_caps {
	int utf8;   /* the locale speaks UTF-8 */
	int colour; /* colours wanted: the terminal has them and NO_COLOR is unset */
};

/*
 * Take the terminal: check that stdin and stdout are terminals (else the
 * error "explore needs a terminal; HINT"), start curses in raw-ish mode
 * (cbreak, no echo, keypad, non-blocking reads, no cursor), route the
 * core's messages to the inbox and make die() end curses first. Colours
 * are not set up here (draw_init_colours()). Returns 0 (caps filled), or
 * -1 with a message and the terminal untouched. End with term_stop().
 */
int term_start(const char *no_tty_hint, struct term_caps *caps);
/* End curses, put the message sink and the exit hook back and close the
 * inbox. Messages still in it are dropped: take them first. */
void term_stop(void);

/* Readable when a message is waiting in the inbox (-1 when none is open). */
int term_inbox_fd(void);
/* The newest message not yet taken (an unseen error is not replaced by a
 * lesser one): copied into buf (cap bytes) with its level (UTIL_*);
 * returns 1, or 0 when there is none. Drains term_inbox_fd(). */
int term_inbox_take(char *buf, size_t cap, int *level);

#endif
