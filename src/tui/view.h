/*
 * tui/view: the whole state of the explorer's screen, with no curses in
 * it: what is selected, scrolled and toggled, the snapshot on screen and
 * the analysis cached from it (view.c). Key handlers change it and mark
 * panes dirty; the panes draw from it (panes.h); struct screen
 * (screen.h) holds the windows laid out from view->box.
 */
#ifndef COTERIE_TUI_VIEW_H
#define COTERIE_TUI_VIEW_H

#include <stddef.h>
#include <stdint.h>
#include <stdio.h>

#include "coterie/fit.h"
#include "coterie/inspect.h"
#include "coterie/util.h"
#include "pager.h"
#include "sides.h"
#include "tui.h"

struct follower;

enum pane_id {
	PANE_TRACE = 0, /* the likelihood */
	PANE_COMMS,
	PANE_MEMBERS,
	PANE_NODE,
	PANE_EDGES,
	PANE_COUNT,
	PANE_ANY = -1,
};

/* Dirty bits: one per pane, plus the header, the footer and overlays.
 * DIRTY_CLEAR (outside DIRTY_ALL) asks the screen to repaint every cell
 * (C-l, a new size). */
#define DIRTY_PANE(p) (1u << (p))
#define DIRTY_HEADER (1u << PANE_COUNT)
#define DIRTY_FOOTER (1u << (PANE_COUNT + 1))
#define DIRTY_OVERLAY (1u << (PANE_COUNT + 2))
#define DIRTY_ALL 0xffffu
#define DIRTY_CLEAR (1u << 16)

/* The smallest terminal the panes are laid out in. */
#define VIEW_MIN_ROWS 16
#define VIEW_MIN_COLS 60

struct rect {
	int y, x, h, w;
};

/* A list's cursor and the first row shown. */
struct listpos {
	size_t cur, top;
};

/* From this height on, pane 5's last row details the selected pair. */
#define EDGES_DETAIL_MIN_H 7

enum mode {
	MODE_NORMAL = 0,
	MODE_FIND,  /* the find prompt owns the keyboard */
	MODE_HELP,  /* the help screen is open */
	MODE_QUIT,  /* the quit question is asked */
	MODE_ASK,   /* a number is asked: sweeps more, or the tolerance */
};

enum ask_kind {
	ASK_SWEEPS = 0, /* how many more sweeps ('+') */
	ASK_TOL,        /* the plateau tolerance ('t') */
};

#define FIND_QUERY_MAX 128
#define FIND_KEEP 200          /* matches kept for display */
#define FIND_SCAN_STEP 65536u  /* names compared per loop pass */

struct find_match {
	uint32_t node;
	int rank; /* 0 exact, 1 prefix, 2 substring (case-insensitive) */
};

struct view {
	/* fixed for the session */
	const struct graph *g;
	struct fit *fit;
	struct fit_params params;
	const char *graph_label, *graph_path, *outdir;
	int outdir_is_default;
	int reopened;
	enum fit_state saved_state;
	int started;   /* the fitting thread was started in this session */
	int utf8, colour;
	double t_begin;
	const struct select_result *selection; /* -k auto's search, or NULL */
	struct outdir *od;    /* the result folder (outdir.h); owned by tui_run() */
	int params_changed;   /* params changed ('t'): ui.c reopens od with them */
	/* a fit running in another process, followed through the folder
	 * (tui/follow.h; owned by tui_run()), or NULL; once it ended the
	 * session only browses its result */
	struct follower *follow;
	char follow_line[64];     /* what the state line says of it */

	/* the snapshot on screen */
	struct snapshot *snap;
	unsigned long snap_gen;   /* bumps when snap changes */
	enum fit_state state;     /* live state (fit_get_state) */
	double snap_taken;        /* util_now() when snap was adopted */
	int pause_asked, stop_asked, extend_asked;

	/* saving */
	int saved;                /* something was written (or reopened) */
	uint32_t saved_sweep;     /* the model written: its sweep and last */
	double saved_loglik;      /* log-likelihood (a new start may reach the
				   * same sweep with another model) */
	enum fit_state saved_as;
	int write_failed;
	int write_asked;          /* w waits for the savepoint at the end of
				   * the sweep in progress (outdir_ask()) */

	/* layout (view_layout(); the windows are in struct screen) */
	int rows, cols;
	int too_small;
	struct rect box[PANE_COUNT];
	unsigned dirty;
	int focus;
	enum mode mode;

	/* communities: sorted order of indexes into snap->agm.comms */
	uint32_t *order;
	uint32_t norder;
	unsigned long order_gen;
	enum inspect_key sort_key;
	int ascending;
	int by_stability;         /* sorted by stability ('S'), sort_key breaks ties */
	/* fit --repeats: the folder's stability by community id (NULL: none),
	 * true of the model of sweep stab_sweep only (view_stability()) */
	double *stab;
	uint32_t nstab, stab_sweep;
	struct listpos comms;
	int has_comm;
	uint32_t comm_id;         /* the selected community's id */
	int64_t comm_index;       /* its index in snap->agm.comms, -1 if gone */

	/* members of the selected community, strongest first */
	uint32_t *mem;
	double *mem_strength;
	uint8_t *mem_side;        /* two-sided graphs: SIDES_S | SIDES_R of each */
	uint32_t nmem, mem_cap;
	enum sides_filter side_filter; /* two-sided graphs: which members ('d') */
	unsigned long mem_gen;
	int64_t mem_for;          /* comm_index the cache was made for */
	struct listpos members;
	int members_reset;        /* the community changed: cursor to the top */

	/* the selected node */
	int64_t node;             /* -1: none */
	int node_pinned;          /* chosen by find or an edge, not the members list */
	struct inspect_node nodeview;
	struct sides_node sidenode;  /* two-sided graphs: nodeview's rows by side */
	double *side_sums;        /* two-sided graphs: per-side column sums ... */
	struct model_directed_figures *side_figs; /* ... pane 2's figures by id ... */
	unsigned long sums_gen;   /* ... of this snapshot generation (0: none) */
	int node_valid;
	unsigned long node_gen;
	int64_t node_for;
	int show_weak;            /* list strengths below the threshold too */
	struct listpos affil;
	uint32_t *affil_rows;     /* indexes into nodeview.affil shown */
	uint32_t naffil_rows;

	/* weak edges or missing links of the selected community: the page
	 * shown, and the one asked of the pager */
	enum edges_mode edges_mode;
	struct listpos edges;     /* ranks into the whole list */
	struct page_row *page;
	size_t npage, page_off, total;
	int page_valid;           /* page holds rows of (page_for, page_mode) */
	unsigned long page_gen;
	uint32_t page_for;        /* community id */
	enum edges_mode page_mode;
	struct pager *pager;      /* NULL: fetch on the UI thread */
	unsigned long req_id;     /* the newest request */
	int req_open;             /* ... not answered yet */
	uint32_t req_for;
	enum edges_mode req_mode;
	size_t req_off;
	unsigned long req_gen;
	double req_time;          /* when it was asked (for COTERIE_TUI_TIMING) */

	/* find */
	char query[FIND_QUERY_MAX];
	size_t qlen;
	uint32_t scan_next;       /* next node to compare; == n when done */
	size_t nfound;            /* matches so far (all, not only kept) */
	struct find_match found[FIND_KEEP];
	size_t nkept;
	size_t find_cur;

	/* help */
	size_t help_top;

	/* the number prompt (MODE_ASK) */
	enum ask_kind ask;
	char ask_buf[24];
	size_t ask_len;

	/* the footer: a message from us or the core */
	char msg[512];
	int msg_level;
	double msg_time;

	int quit;           /* leave the loop */
	int exit_status;
	int want_write;     /* write before leaving */
	int stop_on_quit;   /* stop the fit before leaving */
	FILE *timing;       /* COTERIE_TUI_TIMING: key-to-screen times */
};

/* Fill v from cfg (borrowed; cfg->fit is borrowed by v too, and freed by
 * tui_run()). Release with view_release(). */
void view_init(struct view *v, const struct tui_config *cfg);
void view_release(struct view *v);
/* Lay the panes out in a terminal of rows x cols (v->box, v->too_small)
 * and mark everything dirty; the lists keep their cursors visible in the
 * new heights. */
void view_layout(struct view *v, int rows, int cols);
/* Take the newest snapshot from the fit if it differs; returns 1 if it did. */
int view_take_snapshot(struct view *v);
/* Recompute what the panes show (order, members, node) when stale, and
 * ask the pager for the edge page the view needs. */
void view_prepare(struct view *v);
/* Install an answer of the pager (frees it when it is not the newest). */
void view_page_answer(struct view *v, struct page_res *res);
/* Rows the content of pane p has (for cursor moves). */
size_t view_rows(const struct view *v, int pane);
/* Visible content rows of pane p, at least 1 (what a page moves the
 * cursor by). */
int view_page_height(const struct view *v, int pane);
/* The cursor of pane p's list (NULL for the likelihood pane). */
const struct listpos *view_pos(const struct view *v, int pane);
/* How many rows of pane p's list are on screen: the rows its window has
 * for them (0 in a pane with room only for its heads), or fewer at the
 * end of the list. */
size_t view_rows_shown(const struct view *v, int pane);
/* Move the cursor of the focused pane by delta rows (clamped). */
void view_move(struct view *v, long delta);
void view_move_to(struct view *v, size_t row);
/* Select community by id (keeps the cursor on it), or a node. */
void view_select_comm(struct view *v, uint32_t id);
void view_select_node(struct view *v, uint32_t node, int with_comm);
void view_set_focus(struct view *v, int pane);
/* Sort the communities by the next column (in its natural direction), or
 * reverse the order; the selected community keeps the cursor. */
void view_sort_next(struct view *v);
void view_sort_flip(struct view *v);
/* Sort the communities by stability, the most stable first, or go back
 * to the column sort; returns 0, or -1 when no stability is known (the
 * order is unchanged). */
int view_sort_stability(struct view *v);
/* The stability of community id in the model shown (stability.h): a number
 * in [0, 1] when the folder opened records one and the model shown is the
 * one it scored, else NaN. */
double view_stability(const struct view *v, uint32_t id);
/* 1 when some community of the model shown has a stability. */
int view_has_stability(const struct view *v);
/* The name of the sort column, as in "communities by NAME". */
const char *view_sort_name(const struct view *v);
/* Show or hide the node's strengths that are no membership. */
void view_toggle_weak(struct view *v);
/* Two-sided graphs: list all members, the sending ones, or the
 * receiving ones (two-mode: of the first kind, the second). Returns 0,
 * or -1 for a one-mode graph (nothing changes). */
int view_next_side(struct view *v);
/* Switch pane 5 between weak edges and missing links. */
void view_toggle_edges_mode(struct view *v);
/* A node name made safe (util_escape; ASCII only when not UTF-8) into
 * buf; "?" for a node not in the graph. Returns buf. */
const char *view_node_name(const struct view *v, uint32_t node, char *buf, size_t cap);
/* A message for the footer (level as in util.h). */
void view_say(struct view *v, int level, const char *fmt, ...) COTERIE_PRINTF(3, 4);
/* 1 when there is a model that has not been written since it changed. */
int view_unsaved(const struct view *v);
/* 1 when the fitting thread is still working (not ended, not unstarted). */
int view_running(const struct view *v);
/* Write the result folder; status for run.json. A fit that is fitting
 * (and makes savepoints) is asked for one at the end of the sweep in
 * progress and the write waits for it (write_asked, view_write_asked()),
 * so every saved fit resumes exactly; else the newest snapshot is
 * written at once. Returns 0 (written, or asked) or -1 (the reason is in
 * the footer; a result the folder could not take is saved elsewhere and
 * the footer names where). */
int view_write(struct view *v, const char *status);
/* Write the savepoint view_write() asked for once it came (takes it from
 * v->od); the fit ended or paused meanwhile, its newest snapshot. Call
 * every pass while write_asked. Returns as view_write(), 1 while waiting. */
int view_write_asked(struct view *v);
/* Display state: the live one, or the saved one for a reopened result. */
enum fit_state view_state(const struct view *v);
const char *view_state_label(enum fit_state s);

#endif
