/*
 * tui: the explorer, a curses program over the fitting engine.
 *
 * Not a core module: it sits beside src/cli/ and only the explore command
 * calls into it. The shape follows STYLE.md section 4:
 *   - struct view is the whole state of the screen: what is selected,
 *     scrolled, toggled and the snapshot being shown;
 *   - key handlers (keys.c, one table) only change that state and mark
 *     panes dirty;
 *   - view_prepare() (view.c) refreshes the cached analysis the panes show
 *     (inspect_* on the snapshot) when the snapshot or a selection changed;
 *   - each pane's draw(const struct view *) repaints its window from the
 *     state alone; ui.c runs one pass: resize, prepare, draw dirty panes,
 *     doupdate().
 * The fitting thread never calls curses: the UI thread polls the keyboard,
 * the fit's wake-up pipe and the signal pipe, and takes the newest
 * snapshot with fit_snapshot().
 */
#ifndef COTERIE_TUI_H
#define COTERIE_TUI_H

#ifndef NCURSES_WIDECHAR
#define NCURSES_WIDECHAR 1
#endif
#include <curses.h>
#include <pthread.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>

#include "coterie/fit.h"
#include "coterie/inspect.h"
#include "coterie/util.h"

struct graph;

/* ---- what the explore command hands over ---- */

struct tui_config {
	const struct graph *g;        /* borrowed; outlives the explorer */
	struct fit *fit;              /* takes ownership; started or not */
	struct fit_params params;     /* as used for the fit (result files) */
	const char *graph_label;      /* shown in the header (borrowed) */
	const char *graph_path;       /* recorded in run.json (borrowed) */
	const char *outdir;           /* where 'w' and quitting write (borrowed) */
	int outdir_is_default;        /* chosen by us: say so on screen */
	int reopened;                 /* a saved result is shown */
	int outdir_holds_result;      /* outdir already holds this model */
	uint32_t saved_sweep;         /* its sweep, when it does */
	double saved_loglik;          /* and its last log-likelihood */
	enum fit_state saved_state;   /* the state recorded in the checkpoint */
	int start;                    /* start the fitting thread */
	double t_begin;               /* when the command started (run.json) */
	const struct select_result *selection; /* -k auto's search (borrowed), or NULL */
	double checkpoint_every;      /* seconds between autosaves; 0: default */
	int one_start;                /* the fit goes on as one start (reopened
				       * without a savepoint): outdir.h */
};

struct select_run;
struct select_result;

/* What the explore command hands over for -k auto (kscreen.c). */
struct tui_kconfig {
	const struct graph *g;        /* borrowed */
	const char *graph_label;      /* shown in the header (borrowed) */
	struct select_run *run;       /* takes ownership; started */
};

/* Show the search for k as its points arrive, until it ends or the user
 * quits. Returns -1 when a k was chosen (*res filled; release with
 * select_result_release()): go on to the fit; otherwise the exit status
 * (0 the user quit, 1 failure, 130 a signal). Frees cfg->run. */
int tui_choose_k(const struct tui_kconfig *cfg, struct select_result *res);

/* Run the explorer until the user quits or a signal arrives. Writes the
 * result folder first when a fit would be lost. Frees cfg->fit. Returns
 * the exit status (0, 1, or 130 after a signal). */
int tui_run(struct tui_config *cfg);

/* ---- panes ---- */

enum pane_id {
	PANE_TRACE = 0, /* the likelihood */
	PANE_COMMS,
	PANE_MEMBERS,
	PANE_NODE,
	PANE_EDGES,
	PANE_COUNT,
	PANE_ANY = -1,
};

/* Dirty bits: one per pane, plus the header, the footer and overlays. */
#define DIRTY_PANE(p) (1u << (p))
#define DIRTY_HEADER (1u << PANE_COUNT)
#define DIRTY_FOOTER (1u << (PANE_COUNT + 1))
#define DIRTY_OVERLAY (1u << (PANE_COUNT + 2))
#define DIRTY_ALL 0xffffu

struct rect {
	int y, x, h, w;
};

/* A list's cursor and the first row shown. */
struct listpos {
	size_t cur, top;
};

enum edges_mode { EDGES_WEAK = 0, EDGES_MISSING };

/* From this height on, pane 5's last row details the selected pair. */
#define EDGES_DETAIL_MIN_H 7

/* ---- pager.c: pages of the edge lists, fetched on a worker thread ---- */

struct page_row {
	uint32_t u, v;  /* u the member; v its neighbour (or the other member) */
	double prob;
	int outside;    /* v is not a member (weak edges only) */
};

struct page_req {
	unsigned long id;
	struct snapshot *snap;   /* a reference the worker releases */
	const struct graph *g;   /* borrowed */
	uint32_t comm_id;
	enum edges_mode mode;
	size_t off, limit;
	unsigned long gen;       /* the view's snapshot generation at the time */
};

struct page_res {
	unsigned long id;
	struct page_row *rows;   /* n rows; the taker frees with free() */
	size_t n, total, off;
	uint32_t comm_id;
	enum edges_mode mode;
	unsigned long gen;
	int failed;
};

struct pager {
	pthread_t thread;
	int running;
	pthread_mutex_t lock;
	pthread_cond_t cond;
	int quit;
	int has_req;
	struct page_req req;
	int has_res;
	struct page_res res;
	int fd[2];
};

/* Start the worker. Returns 0 or -1. */
int pager_start(struct pager *p);
/* Stop and join it, releasing whatever is pending. */
void pager_stop(struct pager *p);
/* Ask for a page; takes ownership of rq->snap. Replaces a request that
 * has not started yet. */
void pager_submit(struct pager *p, const struct page_req *rq);
/* The newest answer, if one came (1); the caller owns out->rows. */
int pager_take(struct pager *p, struct page_res *out);
/* Readable when an answer is waiting. */
int pager_fd(const struct pager *p);
/* Answer a request on the calling thread (rq->snap borrowed). */
void pager_answer(const struct page_req *rq, struct page_res *res);

enum mode {
	MODE_NORMAL = 0,
	MODE_FIND,  /* the find prompt owns the keyboard */
	MODE_HELP,  /* the help screen is open */
	MODE_QUIT,  /* the quit question is asked */
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

	/* layout */
	int rows, cols;
	int too_small;
	struct rect box[PANE_COUNT];
	WINDOW *win[PANE_COUNT];
	WINDOW *header, *footer, *overlay;
	unsigned dirty;
	int focus;
	enum mode mode;

	/* communities: sorted order of indexes into snap->agm.comms */
	uint32_t *order;
	uint32_t norder;
	unsigned long order_gen;
	enum inspect_key sort_key;
	int ascending;
	struct listpos comms;
	int has_comm;
	uint32_t comm_id;         /* the selected community's id */
	int64_t comm_index;       /* its index in snap->agm.comms, -1 if gone */

	/* members of the selected community, strongest first */
	uint32_t *mem;
	double *mem_strength;
	uint32_t nmem, mem_cap;
	unsigned long mem_gen;
	int64_t mem_for;          /* comm_index the cache was made for */
	struct listpos members;
	int members_reset;        /* the community changed: cursor to the top */

	/* the selected node */
	int64_t node;             /* -1: none */
	int node_pinned;          /* chosen by find or an edge, not the members list */
	struct inspect_node nodeview;
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

/* ---- view.c: state changes and caches ---- */

void view_init(struct view *v, const struct tui_config *cfg);
void view_release(struct view *v);
/* Take the newest snapshot from the fit if it differs; returns 1 if it did. */
int view_take_snapshot(struct view *v);
/* Recompute what the panes show (order, members, node) when stale, and
 * ask the pager for the edge page the view needs. */
void view_prepare(struct view *v);
/* Install an answer of the pager (frees it when it is not the newest). */
void view_page_answer(struct view *v, struct page_res *res);
/* Rows the content of pane p has (for cursor moves). */
size_t view_rows(const struct view *v, int pane);
/* Visible content rows of pane p. */
int view_page_height(const struct view *v, int pane);
/* Move the cursor of the focused pane by delta rows (clamped). */
void view_move(struct view *v, long delta);
void view_move_to(struct view *v, size_t row);
/* Select community by id (keeps the cursor on it), or a node. */
void view_select_comm(struct view *v, uint32_t id);
void view_select_node(struct view *v, uint32_t node, int with_comm);
void view_set_focus(struct view *v, int pane);
/* A message for the footer (level as in util.h). */
void view_say(struct view *v, int level, const char *fmt, ...) COTERIE_PRINTF(3, 4);
/* 1 when there is a model that has not been written since it changed. */
int view_unsaved(const struct view *v);
/* 1 when the fitting thread is still working (not ended, not unstarted). */
int view_running(const struct view *v);
/* Write the result folder from the newest snapshot; status for run.json.
 * Returns 0 or -1 (the reason is in the footer). */
int view_write(struct view *v, const char *status);
/* Display state: the live one, or the saved one for a reopened result. */
enum fit_state view_state(const struct view *v);
const char *view_state_label(enum fit_state s);

/* ---- find.c ---- */
void find_open(struct view *v);
/* Compare up to FIND_SCAN_STEP more names; returns 1 while unfinished. */
int find_step(struct view *v);
void find_key(struct view *v, int key, int is_char);
void find_draw(const struct view *v);

/* ---- keys.c: the one key table ---- */

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
/* The answer to the quit question (y, d, n). */
void keys_quit_answer(struct view *v, int key);
/* A readable name ("Tab", "S-Tab", "Up", "Enter", "C-l", "q"). */
const char *keys_name(int key, char *buf, size_t cap);
/* Print the table, one "NAME<TAB>PANE<TAB>HELP" line per key. */
void keys_list(FILE *out);
/* Name of a pane for help and the key list ("any" for PANE_ANY). */
const char *keys_pane_name(int pane);

/* ---- help.c ---- */
/* Lines of the help screen (generated from keys_table). */
size_t help_line_count(void);
void help_draw(const struct view *v);
void help_key(struct view *v, int key);

/* ---- panes ---- */
void pane_trace_draw(const struct view *v);
void pane_comms_draw(const struct view *v);
void pane_members_draw(const struct view *v);
void pane_node_draw(const struct view *v);
void pane_edges_draw(const struct view *v);
const char *pane_title(int pane);

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

void draw_init_colours(int colour);
attr_t draw_attr(const struct view *v, int pair);
/* Put s (already safe: escaped or ours) at (y, x) in at most maxcols
 * columns; wide characters are measured. Returns the columns used. */
int draw_text(WINDOW *w, int y, int x, const char *s, int maxcols);
/* n spaces from (y, x) in the window's current attributes. */
void draw_fill(WINDOW *w, int y, int x, int n);
/* Columns s takes on screen. */
int draw_width(const char *s);
/* A node name made safe (util_escape; ASCII only when not UTF-8) into buf. */
const char *draw_name(const struct view *v, uint32_t node, char *buf, size_t cap);
/* A bar of width cells for fraction f (clamped to 0..1). */
void draw_bar(const struct view *v, WINDOW *w, int y, int x, int width, double f);
/* The pane's title row: "N Title" and a right-hand note. */
void draw_title(const struct view *v, WINDOW *w, int pane, const char *title, const char *note);
/* The separator column of a right-hand pane. */
void draw_separator(const struct view *v, WINDOW *w);
/* Short number forms. */
void fmt_count(char *buf, size_t cap, uint64_t x);  /* 123, 12.3k, 4.5M */
void fmt_frac(char *buf, size_t cap, double x);     /* .123, 1.00, 1e-05 */
void fmt_duration(char *buf, size_t cap, double s); /* 12.3s, 4:05, 1:02:03 */

/* ---- plot.c: the likelihood curve on a grid of dots ---- */

/* Rasterise n values (x evenly by index) into a grid of dw x dh dots
 * (row 0 at the top), joining consecutive points with vertical runs.
 * grid has dw * dh bytes, set to 0/1. lo/hi give the value range
 * (lo < hi; a flat series is drawn in the middle). Returns 0, or -1 when
 * the grid is empty. */
int plot_raster(const double *y, size_t n, double lo, double hi, int dw, int dh,
		unsigned char *grid);
/* The dot column of point i of n on a grid dw dots wide. */
int plot_column(size_t i, size_t n, int dw);
/* Encode the 2 x 4 dots at cell (cx, cy) as a braille character (UTF-8
 * into out, 4 bytes max + NUL); returns 0 when the cell is empty. */
int plot_braille(const unsigned char *grid, int dw, int dh, int cx, int cy, char *out);
/* The ASCII fallback: one column and three levels per cell: returns
 * '\'', '-', '.', '|' (several levels) or 0 for empty. */
int plot_ascii(const unsigned char *grid, int dw, int dh, int cx, int cy);

#endif
