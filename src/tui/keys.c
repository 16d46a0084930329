/*
 * tui/keys: the one key table. It drives dispatch (keys_dispatch), the
 * help screen (help.c) and `coterie explore --list-keys`, so the three
 * cannot drift apart.
 *
 * A binding is { key, pane, action, argument, help }. A key bound to a
 * pane works when that pane has the focus; PANE_ANY works everywhere. A
 * pane binding wins over an any-pane one for the same key (Enter means
 * something different in every list).
 *
 * Actions only change the view and mark panes dirty; they never draw.
 * The prompts (find, the quit question, the number asked by '+' and
 * 't') and the help screen take the keyboard while open: their keys are
 * shown on the prompt itself.
 */
#include "keys.h"

#ifndef NCURSES_WIDECHAR
#define NCURSES_WIDECHAR 1
#endif
#include <curses.h> /* the KEY_* codes only: nothing here draws */
#include <ctype.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/graph.h"
#include "coterie/util.h"
#include "follower.h"
#include "view.h"

/* ---- actions ---- */

static void act_focus_step(struct view *v, int arg)
{
	view_set_focus(v, (v->focus + arg + PANE_COUNT) % PANE_COUNT);
}

static void act_focus(struct view *v, int arg)
{
	view_set_focus(v, arg);
}

enum { MOVE_UP = -1, MOVE_DOWN = 1, MOVE_PGUP = -2, MOVE_PGDN = 2, MOVE_HOME = -3, MOVE_END = 3 };

static void act_move(struct view *v, int arg)
{
	long page = view_page_height(v, v->focus);
	switch (arg) {
	case MOVE_UP: view_move(v, -1); break;
	case MOVE_DOWN: view_move(v, 1); break;
	case MOVE_PGUP: view_move(v, -(page > 1 ? page - 1 : 1)); break;
	case MOVE_PGDN: view_move(v, page > 1 ? page - 1 : 1); break;
	case MOVE_HOME: view_move_to(v, 0); break;
	case MOVE_END: view_move_to(v, (size_t)-1); break;
	default: break;
	}
}

static void act_enter_comm(struct view *v, int arg)
{
	(void)arg;
	if (v->comm_index >= 0)
		view_set_focus(v, PANE_MEMBERS);
}

static void act_enter_member(struct view *v, int arg)
{
	(void)arg;
	if (v->node >= 0)
		view_set_focus(v, PANE_NODE);
}

static void act_enter_affil(struct view *v, int arg)
{
	(void)arg;
	if (!v->node_valid || v->affil.cur >= v->naffil_rows)
		return;
	const struct inspect_affil *a = &v->nodeview.affil[v->affil_rows[v->affil.cur]];
	if (inspect_find_community(&v->snap->agm, a->comm) < 0) {
		view_say(v, UTIL_WARNING, "community %u has no members by the membership rule", a->comm);
		return;
	}
	view_select_comm(v, a->comm);
	v->members_reset = 0; /* keep the members cursor on this node */
	view_set_focus(v, PANE_COMMS);
	view_say(v, UTIL_NOTICE, "community %u", a->comm);
}

static void act_enter_edge(struct view *v, int arg)
{
	(void)arg;
	if (!v->page_valid || v->edges.cur < v->page_off || v->edges.cur >= v->page_off + v->npage) {
		view_say(v, UTIL_NOTICE, "that row is still being fetched");
		return;
	}
	const struct page_row *row = &v->page[v->edges.cur - v->page_off];
	/* a directed graph's copies are one node (sides.h) */
	struct page_row one = { sides_user(v->g, row->u), sides_user(v->g, row->v), row->prob,
				row->outside };
	const struct page_row *p = &one;
	uint32_t pick;
	const char *why;
	if (v->page_mode == EDGES_WEAK && p->outside) {
		pick = p->v;
		why = "the end outside the community";
	} else {
		pick = v->node == (int64_t)p->v ? p->u : p->v;
		why = "the other end; Enter again for the first";
		if (v->node != (int64_t)p->u && v->node != (int64_t)p->v)
			why = "the second end; Enter again for the first";
	}
	view_select_node(v, pick, 0);
	char name[200];
	view_say(v, UTIL_NOTICE, "node %s: %s", view_node_name(v, pick, name, sizeof name), why);
}

static void act_find(struct view *v, int arg)
{
	(void)arg;
	find_open(v);
}

static void act_help(struct view *v, int arg)
{
	(void)arg;
	v->mode = MODE_HELP;
	v->help_top = 0;
	v->dirty |= DIRTY_OVERLAY | DIRTY_FOOTER;
}

static void act_redraw(struct view *v, int arg)
{
	(void)arg;
	v->dirty |= DIRTY_ALL | DIRTY_CLEAR;
}

static void act_quit(struct view *v, int arg)
{
	(void)arg;
	if (view_running(v) || view_unsaved(v)) {
		v->mode = MODE_QUIT;
		v->dirty |= DIRTY_FOOTER;
		return;
	}
	v->quit = 1;
}

static void act_stop(struct view *v, int arg)
{
	if (follower_refuses(v))
		return;
	(void)arg;
	if (!v->started) {
		view_say(v, UTIL_NOTICE, "this saved fit is not running (e continues it)");
	} else if (fit_state_ended(v->state) && !(v->state == FIT_LEVELLED && !v->stop_asked)) {
		view_say(v, UTIL_NOTICE, "the fit has already ended (%s)", view_state_label(v->state));
	} else {
		int levelled = v->state == FIT_LEVELLED;
		fit_stop(v->fit);
		v->stop_asked = 1;
		if (!levelled)
			v->pause_asked = 0;
		view_say(v, UTIL_NOTICE, "%s", levelled ? "the fit ends here, levelled off; w writes it"
					: "stopping after the current block; the model is kept");
	}
	v->dirty |= DIRTY_HEADER | DIRTY_PANE(PANE_TRACE);
}

static void act_pause(struct view *v, int arg)
{
	if (follower_refuses(v))
		return;
	(void)arg;
	if (!v->started) {
		view_say(v, UTIL_NOTICE, "this saved fit is not running (e continues it)");
		return;
	}
	if (fit_state_ended(v->state)) {
		view_say(v, UTIL_NOTICE, "the fit has ended (%s); e runs it on",
			 view_state_label(v->state));
		return;
	}
	int paused = v->state == FIT_PAUSED || v->pause_asked;
	if (paused)
		fit_unpause(v->fit);
	else
		fit_pause(v->fit);
	v->pause_asked = !paused;
	view_say(v, UTIL_NOTICE, "%s", paused ? "resumed" : "pausing after the current block; p resumes");
	v->dirty |= DIRTY_HEADER | DIRTY_PANE(PANE_TRACE);
}

/* A new fit that continues from the snapshot on screen. */
static int restart_fit(struct view *v, uint32_t max_sweeps)
{
	const struct snapshot *s = v->snap;
	struct fit_params p = v->params;
	p.max_sweeps = max_sweeps;
	p.hold_at_plateau = 1;
	struct fit_origin o = {
		.F = &s->F,
		.trace = s->trace,
		.ntrace = s->ntrace,
		.sweep = s->sweep,
		.seconds = s->seconds,
		.plateau_sweep = s->plateau_sweep,
	};
	struct fit *f = fit_new(v->g, &p, &o);
	if (!f)
		return -1;
	fit_want_live_agm(f);
	if (fit_start(f)) {
		fit_free(f);
		return -1;
	}
	fit_free(v->fit); /* ended: joins at once */
	v->fit = f;
	v->params = p;
	v->started = 1;
	v->stop_asked = v->pause_asked = v->extend_asked = 0;
	v->state = FIT_FITTING;
	v->dirty |= DIRTY_ALL;
	return 0;
}

enum { GO_ON_UNTIL_STOP = -1, GO_ON_TO_PLATEAU = 0 };

/* Let the fit go on: until s or the sweep limit (how < 0), to the next
 * plateau (how == 0) or for how more sweeps. An ended or reopened fit is
 * fitted again from the model on screen first. */
static void go_on(struct view *v, long how)
{
	uint32_t sweep = v->snap ? v->snap->sweep : 0;
	enum fit_state st = view_state(v);
	int ended = !v->started || (fit_state_ended(st) && (st != FIT_LEVELLED || v->stop_asked));
	if (ended) {
		if (!v->snap || v->snap->ntrace == 0) {
			view_say(v, UTIL_NOTICE, "there is no model to go on from");
			return;
		}
		if (st == FIT_FAILED) {
			view_say(v, UTIL_ERROR, "the fit failed; it cannot go on");
			return;
		}
		uint64_t more = v->params.max_sweeps > 100 ? v->params.max_sweeps : 100;
		if (how > 0)
			more = (uint64_t)how;
		uint64_t max = v->params.max_sweeps;
		if (sweep >= max || (how > 0 && sweep + more > max))
			max = sweep + more > UINT32_MAX ? UINT32_MAX : sweep + more;
		if (restart_fit(v, (uint32_t)max))
			return;
	}
	if (how < 0)
		fit_extend(v->fit);
	else
		fit_extend_by(v->fit, (uint32_t)how);
	v->extend_asked = how < 0;
	char lim[64] = "";
	if (how > 0 && sweep + (uint64_t)how > v->params.max_sweeps)
		snprintf(lim, sizeof lim, " (to the sweep limit, %u)", v->params.max_sweeps);
	if (how > 0)
		view_say(v, UTIL_NOTICE, "%ld more sweeps from sweep %u%s, then it waits; s stops", how,
			 sweep, lim);
	else if (how == 0)
		view_say(v, UTIL_NOTICE, "fitting on to the next plateau (relative gain below %.3g "
			 "for %u sweeps); s stops", v->params.tol, v->params.patience);
	else if (ended)
		view_say(v, UTIL_NOTICE, "fitting again from sweep %u until s (limit %u sweeps)", sweep,
			 v->params.max_sweeps);
	else if (st == FIT_LEVELLED)
		view_say(v, UTIL_NOTICE, "running on past the plateau; s stops it");
	else
		view_say(v, UTIL_NOTICE, "this fit will not wait at a plateau; it runs until s or "
			 "the sweep limit");
	v->dirty |= DIRTY_HEADER | DIRTY_PANE(PANE_TRACE);
}

static void act_extend(struct view *v, int arg)
{
	if (follower_refuses(v))
		return;
	(void)arg;
	go_on(v, GO_ON_UNTIL_STOP);
}

static void act_ask(struct view *v, int arg)
{
	if (follower_refuses(v))
		return;
	v->mode = MODE_ASK;
	v->ask = (enum ask_kind)arg;
	v->ask_len = 0;
	v->ask_buf[0] = '\0';
	if (v->ask == ASK_TOL)
		v->ask_len = (size_t)snprintf(v->ask_buf, sizeof v->ask_buf, "%.3g", v->params.tol / 10);
	v->dirty |= DIRTY_FOOTER;
}

/* Enter at the number prompt: check the number, then act on it. */
static void ask_done(struct view *v)
{
	char *end;
	if (v->ask == ASK_SWEEPS) {
		unsigned long n = strtoul(v->ask_buf, &end, 10);
		if (end == v->ask_buf || *end || n < 1 || n > 100000000ul) {
			view_say(v, UTIL_WARNING, "'%s' is no number of sweeps (1 to 100000000)", v->ask_buf);
			return;
		}
		go_on(v, (long)n);
		return;
	}
	double tol = strtod(v->ask_buf, &end);
	if (end == v->ask_buf || *end || !(tol > 0) || !(tol < 1)) {
		view_say(v, UTIL_WARNING, "'%s' is no tolerance (a number above 0 and below 1, e.g. 1e-6)",
			 v->ask_buf);
		return;
	}
	v->params.tol = tol; /* recorded with the result, and kept by a fit made again */
	v->params_changed = 1;
	enum fit_state st = view_state(v);
	if (v->started && !fit_state_ended(st)) {
		fit_set_tol(v->fit, tol);
		view_say(v, UTIL_NOTICE, "the plateau tolerance is now %.3g: the fit waits at the first "
			 "plateau at it", tol);
		v->dirty |= DIRTY_PANE(PANE_TRACE);
		return;
	}
	if (v->started && st == FIT_LEVELLED && !v->stop_asked)
		fit_set_tol(v->fit, tol);
	go_on(v, GO_ON_TO_PLATEAU);
}

void keys_ask_key(struct view *v, int key, int is_char)
{
	v->dirty |= DIRTY_FOOTER;
	if (key == 27 || (!is_char && key == KEY_CANCEL)) {
		v->mode = MODE_NORMAL;
		view_say(v, UTIL_NOTICE, "nothing changed");
	} else if (key == '\r' || key == '\n' || (!is_char && key == KEY_ENTER)) {
		v->mode = MODE_NORMAL;
		ask_done(v);
	} else if (key == KEY_BACKSPACE || key == 127 || key == 8) {
		if (v->ask_len > 0)
			v->ask_buf[--v->ask_len] = '\0';
	} else if (is_char && v->ask_len + 1 < sizeof v->ask_buf &&
		   (isdigit(key) || (v->ask == ASK_TOL && strchr(".eE-+", key)))) {
		v->ask_buf[v->ask_len++] = (char)key;
		v->ask_buf[v->ask_len] = '\0';
	}
}

static void act_write(struct view *v, int arg)
{
	if (follower_refuses(v))
		return;
	(void)arg;
	if (v->saved && !view_unsaved(v)) {
		char esc[300];
		view_say(v, UTIL_NOTICE, "nothing new to write: '%s' is up to date",
			 util_escape(v->outdir, esc, sizeof esc, !v->utf8));
		return;
	}
	view_write(v, NULL);
}

static void say_sort(struct view *v)
{
	view_say(v, UTIL_NOTICE, "communities by %s, %s first", view_sort_name(v),
		 v->ascending ? "lowest" : "highest");
}

static void act_sort_next(struct view *v, int arg)
{
	(void)arg;
	view_sort_next(v);
	say_sort(v);
}

static void act_sort_flip(struct view *v, int arg)
{
	(void)arg;
	view_sort_flip(v);
	say_sort(v);
}

static void act_sort_stability(struct view *v, int arg)
{
	(void)arg;
	if (view_sort_stability(v))
		view_say(v, UTIL_NOTICE, "no stability to sort by: it comes from a folder "
			 "written by fit --repeats, while its model is shown");
	else
		say_sort(v);
}

static void act_weak(struct view *v, int arg)
{
	(void)arg;
	view_toggle_weak(v);
	view_say(v, UTIL_NOTICE, v->show_weak ? "showing every strength, also those that are no membership"
					      : "showing memberships only");
}

static void act_side(struct view *v, int arg)
{
	(void)arg;
	if (view_next_side(v)) {
		view_say(v, UTIL_NOTICE, "every member has one side: the graph is neither directed "
			 "nor two-mode");
		return;
	}
	static const char *const say[2][3] = {
		{ "all members, each with its side", "the sending members", "the receiving members" },
		{ "all members, each with its kind", "the members of the first kind (first column)",
		  "the members of the second kind (second column)" } };
	view_say(v, UTIL_NOTICE, "listing %s", say[!v->g->paired][v->side_filter]);
}

static void act_edges_mode(struct view *v, int arg)
{
	(void)arg;
	view_toggle_edges_mode(v);
}

/* ---- the table ---- */

#define CTRL(c) ((c) & 0x1f)

const struct key_binding keys_table[] = {
	{ '\t', PANE_ANY, act_focus_step, 1, "move to the next pane" },
	{ KEY_BTAB, PANE_ANY, act_focus_step, -1, "move to the previous pane" },
	{ '1', PANE_ANY, act_focus, PANE_TRACE, "jump to pane 1 to 5 (the numbers are in the pane titles)" },
	{ '2', PANE_ANY, act_focus, PANE_COMMS, "jump to pane 1 to 5 (the numbers are in the pane titles)" },
	{ '3', PANE_ANY, act_focus, PANE_MEMBERS, "jump to pane 1 to 5 (the numbers are in the pane titles)" },
	{ '4', PANE_ANY, act_focus, PANE_NODE, "jump to pane 1 to 5 (the numbers are in the pane titles)" },
	{ '5', PANE_ANY, act_focus, PANE_EDGES, "jump to pane 1 to 5 (the numbers are in the pane titles)" },
	{ KEY_UP, PANE_ANY, act_move, MOVE_UP, "move the cursor up a row" },
	{ 'k', PANE_ANY, act_move, MOVE_UP, "move the cursor up a row" },
	{ KEY_DOWN, PANE_ANY, act_move, MOVE_DOWN, "move the cursor down a row" },
	{ 'j', PANE_ANY, act_move, MOVE_DOWN, "move the cursor down a row" },
	{ KEY_PPAGE, PANE_ANY, act_move, MOVE_PGUP, "move the cursor up a page" },
	{ KEY_NPAGE, PANE_ANY, act_move, MOVE_PGDN, "move the cursor down a page" },
	{ KEY_HOME, PANE_ANY, act_move, MOVE_HOME, "jump to the first row" },
	{ 'g', PANE_ANY, act_move, MOVE_HOME, "jump to the first row" },
	{ KEY_END, PANE_ANY, act_move, MOVE_END, "jump to the last row" },
	{ 'G', PANE_ANY, act_move, MOVE_END, "jump to the last row" },
	{ '/', PANE_ANY, act_find, 0, "find a node: type any part of its name, in any case" },
	/* the fit and the result */
	{ 's', PANE_ANY, act_stop, 0, "stop the fit and keep the model as it is now" },
	{ 'p', PANE_ANY, act_pause, 0, "pause the fit, or resume it" },
	{ 'e', PANE_ANY, act_extend, 0, "keep fitting past the plateau until you stop it (or go on with an ended fit)" },
	{ '+', PANE_ANY, act_ask, ASK_SWEEPS, "fit a number of sweeps more, then wait (asks how many)" },
	{ 't', PANE_ANY, act_ask, ASK_TOL, "set the plateau tolerance, then fit on to the next plateau at it" },
	{ 'w', PANE_ANY, act_write, 0, "save the result (memberships, communities, run.json) to the folder top right" },
	/* a fit followed in another process (explore DIR while it runs) */
	{ 'X', PANE_ANY, follower_act_stop, 0, "followed fit: ask it to stop; it saves and ends as after an interrupt" },
	{ 'P', PANE_ANY, follower_act_pause, 0, "followed fit: ask it to pause, or to continue" },
	{ 'W', PANE_ANY, follower_act_save, 0, "followed fit: ask it to write its checkpoint now (the panes show it)" },
	/* the screen */
	{ '?', PANE_ANY, act_help, 0, "show this list of keys" },
	{ CTRL('l'), PANE_ANY, act_redraw, 0, "redraw the screen if it looks garbled" },
	{ 'q', PANE_ANY, act_quit, 0, "quit; asks first while the fit runs or the result is unsaved" },
	/* keys of one pane */
	{ '\r', PANE_COMMS, act_enter_comm, 0, "list the members of this community in pane 3" },
	{ 'o', PANE_COMMS, act_sort_next, 0, "sort the communities by the next column" },
	{ 'r', PANE_COMMS, act_sort_flip, 0, "reverse the sort order" },
	{ 'S', PANE_COMMS, act_sort_stability, 0, "sort by stability (fit --repeats), or back to the column" },
	{ '\r', PANE_MEMBERS, act_enter_member, 0, "show this node in pane 4" },
	{ 'd', PANE_MEMBERS, act_side, 0, "directed or two-mode: list all members, the sending ones or the receiving ones" },
	{ '\r', PANE_NODE, act_enter_affil, 0, "select this community in pane 2" },
	{ 'a', PANE_NODE, act_weak, 0, "show or hide this node's weak strengths (below membership)" },
	{ '\r', PANE_EDGES, act_enter_edge, 0, "show a node of this pair in pane 4 (the outside one first)" },
	{ 'm', PANE_EDGES, act_edges_mode, 0, "switch between weak edges and likely missing links" },
};
const size_t keys_count = sizeof keys_table / sizeof keys_table[0];

const char *keys_pane_name(int pane)
{
	switch (pane) {
	case PANE_ANY: return "any";
	case PANE_TRACE: return "likelihood";
	case PANE_COMMS: return "communities";
	case PANE_MEMBERS: return "members";
	case PANE_NODE: return "node";
	case PANE_EDGES: return "edges";
	default: return "?";
	}
}

const char *keys_name(int key, char *buf, size_t cap)
{
	switch (key) {
	case '\t': return "Tab";
	case KEY_BTAB: return "S-Tab";
	case KEY_UP: return "Up";
	case KEY_DOWN: return "Down";
	case KEY_LEFT: return "Left";
	case KEY_RIGHT: return "Right";
	case KEY_PPAGE: return "PgUp";
	case KEY_NPAGE: return "PgDn";
	case KEY_HOME: return "Home";
	case KEY_END: return "End";
	case '\r': return "Enter";
	case 27: return "Esc";
	case ' ': return "Space";
	default: break;
	}
	if (key > 0 && key < 0x20)
		snprintf(buf, cap, "C-%c", key + 'a' - 1);
	else if (key >= 0x21 && key < 0x7f)
		snprintf(buf, cap, "%c", key);
	else
		snprintf(buf, cap, "key-%d", key);
	return buf;
}

void keys_list(FILE *out)
{
	for (size_t i = 0; i < keys_count; i++) {
		char nb[32];
		fprintf(out, "%s\t%s\t%s\n", keys_name(keys_table[i].key, nb, sizeof nb),
			keys_pane_name(keys_table[i].pane), keys_table[i].help);
	}
}

int keys_dispatch(struct view *v, int key)
{
	if (key == '\n' || key == KEY_ENTER)
		key = '\r';
	const struct key_binding *any = NULL, *mine = NULL, *elsewhere = NULL;
	for (size_t i = 0; i < keys_count; i++) {
		const struct key_binding *b = &keys_table[i];
		if (b->key != key)
			continue;
		if (b->pane == v->focus && !mine)
			mine = b;
		else if (b->pane == PANE_ANY && !any)
			any = b;
		else if (!elsewhere)
			elsewhere = b;
	}
	const struct key_binding *b = mine ? mine : any;
	if (b) {
		b->act(v, b->arg);
		return 1;
	}
	if (elsewhere) {
		char nb[32];
		view_say(v, UTIL_NOTICE, "%s works in the %s pane (%d)", keys_name(key, nb, sizeof nb),
			 keys_pane_name(elsewhere->pane), elsewhere->pane + 1);
		return 1;
	}
	return 0;
}

void keys_quit_answer(struct view *v, int key)
{
	switch (key) {
	case 'y': /* save and quit */
	case 'Y':
	case 'd': /* quit without saving */
	case 'D':
		v->stop_on_quit = 1;
		v->want_write = key == 'y' || key == 'Y';
		v->quit = 1;
		break;
	case 'n':
	case 'N':
	case 27:
	case 'q':
		v->mode = MODE_NORMAL;
		view_say(v, UTIL_NOTICE, "carrying on");
		break;
	default:
		break; /* the question stays until answered */
	}
	v->dirty |= DIRTY_FOOTER;
}
