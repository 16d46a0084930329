/*
 * tui/ui: the screen and the main loop.
 *
 * One pass of the loop: take the newest snapshot if the fit published one
 * (at most ten times a second), refresh the caches, redraw the dirty
 * windows, doupdate(), then poll() the keyboard, the fit's wake-up pipe,
 * the signal pipe, our message pipe and the pager's pipe, and handle
 * every key that came. Keys answer from cached analysis of an immutable
 * snapshot, so a key never waits for a sweep; the one costly analysis
 * (pages of the edge lists) runs on the pager's thread.
 *
 * COTERIE_TUI_TIMING=FILE appends, per key, the time from reading it to
 * doupdate(), and per page the time from asking to the answer.
 *
 * Messages from the core (error(), warning(), notice()) may come from the
 * fitting thread while curses owns the screen, so the sink only copies the
 * message into a locked inbox and writes a byte to a pipe; the UI thread
 * shows it in the footer. The inbox is file-level state because a sink
 * has no context argument; it is used by one explorer at a time.
 *
 * Leaving never loses work: quitting with 'y', Ctrl-C, SIGTERM, SIGHUP or
 * a vanished terminal stop the fit, write the result folder if the model
 * on screen has not been written, and only then end curses.
 */
#include "tui.h"

#include <errno.h>
#include <fcntl.h>
#include <poll.h>
#include <pthread.h>
#include <signal.h>
#include <stdatomic.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "../cli/cli.h"
#include "coterie/graph.h"
#include "coterie/outdir.h"
#include "coterie/util.h"

#define SNAP_INTERVAL 0.1 /* seconds between snapshots taken */
#define MSG_SECONDS 8.0   /* how long a notice stays in the footer */

/* ---- the message inbox ---- */

static struct {
	pthread_mutex_t lock;
	char msg[512];
	int level;
	int fresh;
	int fd[2];
} inbox = { PTHREAD_MUTEX_INITIALIZER, "", 0, 0, { -1, -1 } };

static void tui_sink(int level, const char *msg)
{
	pthread_mutex_lock(&inbox.lock);
	/* an unseen error is not pushed out by a notice */
	if (!inbox.fresh || level <= inbox.level) {
		snprintf(inbox.msg, sizeof inbox.msg, "%s", msg);
		inbox.level = level;
		inbox.fresh = 1;
	}
	pthread_mutex_unlock(&inbox.lock);
	if (inbox.fd[1] >= 0) {
		char b = 1;
		ssize_t w = write(inbox.fd[1], &b, 1);
		(void)w;
	}
}

static void inbox_take(struct view *v)
{
	char buf[256];
	ssize_t r;
	if (inbox.fd[0] >= 0)
		while ((r = read(inbox.fd[0], buf, sizeof buf)) > 0)
			;
	pthread_mutex_lock(&inbox.lock);
	if (inbox.fresh) {
		util_escape(inbox.msg, v->msg, sizeof v->msg, !v->utf8);
		v->msg_level = inbox.level;
		v->msg_time = util_now();
		v->dirty |= DIRTY_FOOTER;
		inbox.fresh = 0;
	}
	pthread_mutex_unlock(&inbox.lock);
}

static void tui_die_hook(void)
{
	if (!isendwin())
		endwin();
	util_set_sink(NULL);
}

/* ---- layout ---- */

static void free_windows(struct view *v)
{
	for (int p = 0; p < PANE_COUNT; p++) {
		if (v->win[p])
			delwin(v->win[p]);
		v->win[p] = NULL;
	}
	if (v->header)
		delwin(v->header);
	if (v->footer)
		delwin(v->footer);
	if (v->overlay)
		delwin(v->overlay);
	v->header = v->footer = v->overlay = NULL;
}

#define MIN_ROWS 16
#define MIN_COLS 60

static void layout(struct view *v)
{
	free_windows(v);
	getmaxyx(stdscr, v->rows, v->cols);
	v->too_small = v->rows < MIN_ROWS || v->cols < MIN_COLS;
	memset(v->box, 0, sizeof v->box);
	if (v->too_small) {
		v->header = newwin(v->rows > 0 ? v->rows : 1, v->cols > 0 ? v->cols : 1, 0, 0);
	} else {
		int body = v->rows - 2;
		int th = body * 3 / 10;
		if (th < 6)
			th = 6;
		if (th > 13)
			th = 13;
		int grid = body - th;
		int gt = (grid + 1) / 2, gb = grid - gt;
		int lw = v->cols / 2, rw = v->cols - lw;
		v->box[PANE_TRACE] = (struct rect){ 1, 0, th, v->cols };
		v->box[PANE_COMMS] = (struct rect){ 1 + th, 0, gt, lw };
		v->box[PANE_MEMBERS] = (struct rect){ 1 + th + gt, 0, gb, lw };
		v->box[PANE_NODE] = (struct rect){ 1 + th, lw, gt, rw };
		v->box[PANE_EDGES] = (struct rect){ 1 + th + gt, lw, gb, rw };
		for (int p = 0; p < PANE_COUNT; p++) {
			struct rect b = v->box[p];
			v->win[p] = newwin(b.h, b.w, b.y, b.x);
		}
		v->header = newwin(1, v->cols, 0, 0);
		v->footer = newwin(1, v->cols, v->rows - 1, 0);
	}
	clearok(curscr, TRUE); /* no leftovers of the old size */
	v->dirty = DIRTY_ALL;
	/* lists keep their cursor visible in the new heights */
	v->order_gen = 0;
	v->node_gen = 0;
}

/* The overlay for the mode: help covers the body, find is a box. */
static void place_overlay(struct view *v)
{
	int h, w, y, x;
	if (v->mode == MODE_HELP) {
		h = v->rows - 2;
		w = v->cols;
		y = 1;
		x = 0;
	} else {
		w = v->cols - 4 < 72 ? v->cols - 4 : 72;
		h = v->rows - 4 < 16 ? v->rows - 4 : 16;
		y = (v->rows - h) / 2;
		x = (v->cols - w) / 2;
	}
	if (v->overlay) {
		int oh, ow, oy, ox;
		getmaxyx(v->overlay, oh, ow);
		getbegyx(v->overlay, oy, ox);
		if (oh == h && ow == w && oy == y && ox == x)
			return;
		delwin(v->overlay);
	}
	v->overlay = newwin(h, w, y, x);
}

/* ---- header and footer ---- */

static void draw_header(const struct view *v)
{
	WINDOW *w = v->header;
	int width = getmaxx(w);
	werase(w);
	attr_t base = A_REVERSE;
	wattron(w, base);
	draw_fill(w, 0, 0, width);
	char label[300], dir[300], left[800], right[400];
	util_escape(v->graph_label, label, sizeof label, !v->utf8);
	util_escape(v->outdir, dir, sizeof dir, !v->utf8);
	char n[32], m[32];
	fmt_count(n, sizeof n, v->g->n);
	fmt_count(m, sizeof m, v->g->m);
	const char *how = v->write_failed ? "NOT WRITTEN" :
			  view_unsaved(v) ? "unsaved" :
			  v->saved ? "saved" : "nothing to save yet";
	/* the longest form that fits: the result folder and whether it is
	 * saved matter most, then the graph's name, then its figures */
	const char *slash = strrchr(label, '/');
	const char *shortl = slash && slash[1] ? slash + 1 : label;
	for (int form = 0; form < 6; form++) {
		snprintf(right, sizeof right, "%s%s%s (%s) ", form < 2 ? "result: " : "", dir,
			 v->outdir_is_default && form < 1 ? " (default)" : "", how);
		switch (form) {
		case 0:
		case 2:
			snprintf(left, sizeof left, " coterie explore  %s  %s nodes, %s edges, k %u",
				 label, n, m, v->params.k);
			break;
		case 1:
		case 3:
			snprintf(left, sizeof left, " coterie explore  %s  %s nodes, %s edges, k %u",
				 shortl, n, m, v->params.k);
			break;
		case 4:
			snprintf(left, sizeof left, " %s  %s nodes, %s edges", shortl, n, m);
			break;
		default:
			snprintf(left, sizeof left, " %s", shortl);
			break;
		}
		if (draw_width(left) + draw_width(right) + 2 <= width)
			break;
	}
	int rw = draw_width(right);
	if (rw > width)
		rw = width;
	draw_text(w, 0, 0, left, width - rw - 1);
	draw_text(w, 0, width - rw, right, rw);
	wattroff(w, base);
}

static void hints(const struct view *v, char *buf, size_t cap)
{
	const char *pane = "";
	switch (v->focus) {
	case PANE_COMMS: pane = "  o:sort r:reverse Enter:members"; break;
	case PANE_MEMBERS: pane = "  Enter:node"; break;
	case PANE_NODE: pane = "  a:weak strengths Enter:community"; break;
	case PANE_EDGES: pane = "  m:missing links Enter:node"; break;
	default: break;
	}
	snprintf(buf, cap, "?:help /:find Tab:pane s:stop p:pause e:run on w:write q:quit%s", pane);
}

static void draw_footer(const struct view *v)
{
	WINDOW *w = v->footer;
	int width = getmaxx(w);
	werase(w);
	char line[1200];
	attr_t at = A_NORMAL;
	if (v->mode == MODE_QUIT) {
		char dir[300];
		util_escape(v->outdir, dir, sizeof dir, !v->utf8);
		const char *why = view_running(v) ? "the fit is still running" : "the result is not saved";
		snprintf(line, sizeof line, "Quit? %s.  y: %ssave to %s and quit   d: quit without "
			 "saving   n: stay", why, view_running(v) ? "stop, " : "", dir);
		at = draw_attr(v, CP_FOCUS);
	} else if (v->mode == MODE_FIND) {
		snprintf(line, sizeof line, "find: type a name; Enter goes to it, Esc cancels");
	} else if (v->mode == MODE_HELP) {
		snprintf(line, sizeof line, "help: j/k scroll, any other key closes");
	} else if (v->msg[0]) {
		snprintf(line, sizeof line, "%s%s", v->msg_level == UTIL_ERROR ? "error: " :
						    v->msg_level == UTIL_WARNING ? "warning: " : "",
			 v->msg);
		at = v->msg_level == UTIL_ERROR ? draw_attr(v, CP_ERROR) :
		     v->msg_level == UTIL_WARNING ? draw_attr(v, CP_WARN) : A_BOLD;
	} else {
		hints(v, line, sizeof line);
		at = draw_attr(v, CP_DIM);
	}
	wattron(w, at);
	if (v->mode == MODE_QUIT)
		draw_fill(w, 0, 0, width);
	draw_text(w, 0, 0, line, width);
	wattroff(w, at);
}

static void draw_too_small(const struct view *v)
{
	WINDOW *w = v->header;
	if (!w)
		return;
	werase(w);
	char line[160];
	snprintf(line, sizeof line, "coterie explore needs %dx%d; this terminal is %dx%d (q quits)",
		 MIN_COLS, MIN_ROWS, v->cols, v->rows);
	draw_text(w, 0, 0, line, v->cols);
	if (v->mode == MODE_QUIT && v->rows > 1)
		draw_text(w, 1, 0, "Quit? y: save and quit  d: quit without saving  n: stay", v->cols);
	wnoutrefresh(w);
}

static void (*const pane_draw[PANE_COUNT])(const struct view *) = {
	pane_trace_draw, pane_comms_draw, pane_members_draw, pane_node_draw, pane_edges_draw,
};

static void draw_dirty(struct view *v)
{
	if (v->too_small) {
		if (v->dirty)
			draw_too_small(v);
		v->dirty = 0;
		doupdate();
		return;
	}
	int any = 0;
	if (v->dirty & DIRTY_HEADER) {
		draw_header(v);
		wnoutrefresh(v->header);
	}
	for (int p = 0; p < PANE_COUNT; p++)
		if (v->dirty & DIRTY_PANE(p)) {
			pane_draw[p](v);
			wnoutrefresh(v->win[p]);
			any = 1;
		}
	if (v->dirty & DIRTY_FOOTER) {
		draw_footer(v);
		wnoutrefresh(v->footer);
	}
	if ((v->mode == MODE_FIND || v->mode == MODE_HELP) && (any || (v->dirty & DIRTY_OVERLAY))) {
		place_overlay(v);
		if (v->overlay) {
			if (v->mode == MODE_FIND)
				find_draw(v);
			else
				help_draw(v);
			touchwin(v->overlay);
			wnoutrefresh(v->overlay);
		}
	}
	v->dirty = 0;
	doupdate();
}

/* ---- keys ---- */

static void handle_key(struct view *v, int key, int is_char)
{
	switch (v->mode) {
	case MODE_FIND:
		find_key(v, key, is_char);
		return;
	case MODE_HELP:
		help_key(v, key);
		return;
	case MODE_QUIT:
		if (is_char)
			keys_quit_answer(v, key);
		return;
	case MODE_NORMAL:
		break;
	}
	if (v->too_small && !(is_char && key == 'q')) {
		return;
	}
	if (is_char && key >= 0x80)
		return; /* the table binds ASCII only */
	if (!keys_dispatch(v, key)) {
		char nb[32];
		view_say(v, UTIL_NOTICE, "%s does nothing here; ? lists the keys",
			 keys_name(key, nb, sizeof nb));
	}
}

/* ---- start and end ---- */

static int setup_inbox(void)
{
	if (inbox.fd[0] >= 0)
		return 0;
	if (pipe(inbox.fd))
		return error("cannot make a pipe: %s", strerror(errno));
	for (int i = 0; i < 2; i++) {
		fcntl(inbox.fd[i], F_SETFL, fcntl(inbox.fd[i], F_GETFL) | O_NONBLOCK);
		fcntl(inbox.fd[i], F_SETFD, FD_CLOEXEC);
	}
	return 0;
}

static void close_inbox(void)
{
	for (int i = 0; i < 2; i++) {
		if (inbox.fd[i] >= 0)
			close(inbox.fd[i]);
		inbox.fd[i] = -1;
	}
}

/* Stop the fit if it runs and wait for its last snapshot. */
static void stop_and_wait(struct view *v)
{
	if (!v->started)
		return;
	if (!fit_state_ended(fit_get_state(v->fit)) ||
	    (fit_get_state(v->fit) == FIT_LEVELLED && !v->stop_asked)) {
		fit_stop(v->fit);
		v->stop_asked = 1;
	}
	fit_wait(v->fit);
	view_take_snapshot(v);
}

/*
 * Autosave: while a fit runs, its checkpoint is written to the result
 * folder every AUTOSAVE_SECONDS, on a thread of its own (a large model
 * takes a while to write, and the screen must not wait), so a crash or a
 * killed machine loses at most that much work; `explore DIR` reopens it
 * and `fit --resume DIR` ends as the uninterrupted fit would (outdir.h).
 */
#define AUTOSAVE_SECONDS 120.0

static struct outdir *autosave_open(const struct view *v, const struct tui_config *cfg)
{
	/* COTERIE_AUTOSAVE_SECONDS: a shorter interval, for the tests */
	const char *as_env = getenv("COTERIE_AUTOSAVE_SECONDS");
	struct outdir_config oc = {
		.dir = v->outdir, .g = v->g, .params = v->params,
		.every = as_env && atof(as_env) > 0 ? atof(as_env) : AUTOSAVE_SECONDS,
		.one_start = cfg->one_start, .background = 1,
	};
	if (cfg->checkpoint_every > 0)
		oc.every = cfg->checkpoint_every;
	return outdir_new(&oc);
}

int tui_run(struct tui_config *cfg)
{
	struct view view, *v = &view;
	view_init(v, cfg);
	if (!isatty(STDIN_FILENO) || !isatty(STDOUT_FILENO)) {
		error("explore needs a terminal; 'coterie fit' works without one");
		fit_free(cfg->fit);
		return 1;
	}
	const char *tpath = getenv("COTERIE_TUI_TIMING");
	if (tpath && *tpath)
		v->timing = fopen(tpath, "a");
	if (setup_inbox()) {
		fit_free(cfg->fit);
		return 1;
	}
	SCREEN *scr = newterm(NULL, stdout, stdin);
	if (!scr) {
		error("cannot start the screen (TERM='%s')", getenv("TERM") ? getenv("TERM") : "");
		fit_free(cfg->fit);
		close_inbox();
		return 1;
	}
	set_term(scr);
	cli_set_die_hook(tui_die_hook);
	util_set_sink(tui_sink);
	cbreak();
	noecho();
	nonl();
	intrflush(stdscr, FALSE);
	keypad(stdscr, TRUE);
	nodelay(stdscr, TRUE);
	set_escdelay(25);
	curs_set(0);
	v->utf8 = cli_utf8();
	v->colour = has_colors() && getenv("NO_COLOR") == NULL;
	draw_init_colours(v->colour);
	refresh();
	layout(v);

	struct pager *pager = util_calloc(1, sizeof *pager);
	if (pager && pager_start(pager) == 0)
		v->pager = pager; /* else pages are fetched on this thread */
	if (cfg->start) {
		if (fit_start(v->fit) == 0)
			v->started = 1;
	}
	view_take_snapshot(v);
	view_prepare(v);
	if (v->outdir_is_default)
		view_say(v, UTIL_NOTICE, "w writes the result to the folder shown top right "
			 "(-o chooses another); ? lists the keys");

	int pending = 0, hangup = 0;
	double last_tick = util_now();
	v->od = autosave_open(v, cfg);
	/* COTERIE_TUI_TIMING: from reading a key to doupdate() */
	double t_key = 0;
	int took_snap = 0;
	char key_label[32] = "";
	while (!v->quit) {
		double now = util_now();
		if (pending && now - v->snap_taken >= SNAP_INTERVAL) {
			took_snap |= view_take_snapshot(v);
			pending = 0;
		} else if (v->started) {
			enum fit_state st = fit_get_state(v->fit);
			if (st != v->state) {
				/* a change of state is shown at once */
				took_snap |= view_take_snapshot(v);
				pending = 0;
			}
		}
		if (v->started && (v->state == FIT_FITTING || v->state == FIT_SEEDING) &&
		    now - last_tick >= 1.0) {
			v->dirty |= DIRTY_PANE(PANE_TRACE); /* the clock */
			last_tick = now;
		}
		if (v->msg[0] && v->msg_level != UTIL_ERROR && now - v->msg_time > MSG_SECONDS &&
		    v->mode == MODE_NORMAL) {
			v->msg[0] = '\0';
			v->dirty |= DIRTY_FOOTER;
		}
		if (v->started && v->od)
			outdir_tick(v->od, v->fit);
		view_prepare(v);
		if (v->dirty)
			draw_dirty(v);
		if (t_key > 0 && v->timing) {
			fprintf(v->timing, "key %s %.3f ms%s\n", key_label, (util_now() - t_key) * 1e3,
				took_snap ? " (with a new snapshot)" : "");
			fflush(v->timing);
		}
		t_key = 0;

		int scanning = v->mode == MODE_FIND && v->scan_next < v->g->n;
		int timeout = 1000;
		if (v->started && !fit_state_ended(v->state))
			timeout = 250;
		if (pending) {
			int ms = (int)((SNAP_INTERVAL - (util_now() - v->snap_taken)) * 1e3) + 1;
			timeout = ms < 0 ? 0 : ms < timeout ? ms : timeout;
		}
		if (scanning)
			timeout = 0;
		struct pollfd pfd[5] = {
			{ STDIN_FILENO, POLLIN, 0 },
			{ fit_wake_fd(v->fit), POLLIN, 0 },
			{ cli_signal_fd(), POLLIN, 0 },
			{ inbox.fd[0], POLLIN, 0 },
			{ v->pager ? pager_fd(v->pager) : -1, POLLIN, 0 },
		};
		int pr = poll(pfd, 5, timeout);
		if (cli_signal_caught())
			break;
		if (pr < 0 && errno != EINTR)
			break;
		if (pfd[1].revents & POLLIN) {
			fit_drain_wake(v->fit);
			pending = 1;
		}
		if (pfd[3].revents & POLLIN)
			inbox_take(v);
		if (pfd[4].revents & POLLIN) {
			struct page_res res;
			if (pager_take(v->pager, &res))
				view_page_answer(v, &res);
		}
		if (scanning)
			find_step(v);
		if (pfd[0].revents & (POLLHUP | POLLERR | POLLNVAL)) {
			hangup = 1;
			break;
		}
		/* keys (after EINTR too: a resize arrives as a key) */
		wint_t wc;
		int r;
		while ((r = get_wch(&wc)) != ERR) {
			if (r == KEY_CODE_YES && wc == KEY_RESIZE) {
				layout(v);
				continue;
			}
			if (t_key == 0) {
				char nb[32];
				t_key = util_now();
				snprintf(key_label, sizeof key_label, "%s",
					 r == OK && wc >= 0x80 ? "char" : keys_name((int)wc, nb, sizeof nb));
				took_snap = 0;
			}
			handle_key(v, (int)wc, r == OK);
			view_prepare(v);
			if (v->quit)
				break;
		}
	}

	int sig = cli_signal_caught();
	int status = 0;
	if (sig || hangup) {
		status = EXIT_INTERRUPTED;
		v->want_write = 1;
		v->stop_on_quit = 1;
	}
	if (v->stop_on_quit) {
		if (!hangup && !v->too_small) {
			v->mode = MODE_NORMAL;
			view_say(v, UTIL_NOTICE, "stopping the fit%s...",
				 v->want_write && (view_running(v) || view_unsaved(v)) ? " and saving" : "");
			draw_dirty(v);
		}
		stop_and_wait(v);
	}
	int wrote = 0, write_failed = 0;
	if (v->want_write && view_unsaved(v)) {
		if (view_write(v, sig || hangup ? "interrupted" : NULL) == 0)
			wrote = 1;
		else
			write_failed = 1;
	}
	/* the core's last word, if it was an error, is repeated after curses */
	inbox_take(v);
	char last_error[512] = "";
	if (write_failed && v->msg_level == UTIL_ERROR)
		snprintf(last_error, sizeof last_error, "%s", v->msg);

	if (v->pager)
		pager_stop(v->pager);
	free(pager);
	v->pager = NULL;
	free_windows(v);
	endwin();
	delscreen(scr);
	util_set_sink(NULL);
	cli_set_die_hook(NULL);
	close_inbox();
	if (v->timing)
		fclose(v->timing);

	char dir[300];
	util_escape(v->outdir, dir, sizeof dir, 1);
	if (write_failed) {
		if (last_error[0])
			error("%s", last_error);
		error("the result could not be written to '%s'", dir);
		status = 1;
	} else if (wrote) {
		notice("the result at sweep %u is in '%s'", v->saved_sweep, dir);
	}
	if (sig)
		notice("interrupted by signal %d", sig);
	outdir_free(v->od);
	fit_free(v->fit);
	view_release(v);
	return status;
}
