/*
 * tui/keys: the keyboard. The one key table that drives dispatch, the help
 * screen and `coterie explore --list-keys` (keys.c), and the two modes
 * that own the keyboard while open: the find prompt (find.c) and the help
 * screen (help.c). Keys are characters or curses KEY_* codes; handlers
 * only change the view and mark panes dirty.
 */
#ifndef COTERIE_TUI_KEYS_H
#define COTERIE_TUI_KEYS_H

#include <stddef.h>
#include <stdio.h>

struct view;

struct key_binding {
	int key;          /* a character or a KEY_* code */
	int pane;         /* PANE_ANY or the pane it works in */
	void (*act)(struct view *v, int arg);
	int arg;
	const char *help;
};

extern const struct key_binding keys_table[];
extern const size_t keys_count;

/* Dispatch a key in MODE_NORMAL; returns 1 if bound. */
int keys_dispatch(struct view *v, int key);
/* A key typed at the number prompt (MODE_ASK): digits and the like,
 * Backspace, Enter acts, Esc cancels. */
void keys_ask_key(struct view *v, int key, int is_char);
/* The answer to the quit question (y, d, n). */
void keys_quit_answer(struct view *v, int key);
/* A readable name ("Tab", "S-Tab", "Up", "Enter", "C-l", "q"): a constant
 * string, or buf (cap bytes) filled. */
const char *keys_name(int key, char *buf, size_t cap);
/* Print the table, one "NAME<TAB>PANE<TAB>HELP" line per key. */
void keys_list(FILE *out);
/* Name of a pane for help and the key list ("any" for PANE_ANY). */
const char *keys_pane_name(int pane);

/* ---- find.c: the find prompt ---- */
/* Open the prompt with an empty query (MODE_FIND). */
void find_open(struct view *v);
/* Compare up to FIND_SCAN_STEP more names; returns 1 while unfinished. */
int find_step(struct view *v);
/* A key typed at the prompt (is_char: a character, else a KEY_* code). */
void find_key(struct view *v, int key, int is_char);

/* ---- help.c: the help screen ---- */
/* A key while the help screen is open: scroll, or close it. */
void help_key(struct view *v, int key);

#endif
