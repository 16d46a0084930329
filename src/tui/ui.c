/*
 * tui/ui: the explorer's main loop.
 *
 * One pass of the loop: take the newest snapshot if the fit published one
 * (at most ten times a second), refresh the caches, redraw the dirty
 * windows, doupdate(), then poll() the keyboard, the fit's wake-up pipe,
 * the signal pipe, the message inbox (term.c) and the pager's pipe, and
 * handle every key that came. Keys answer from cached analysis of an
 * immutable snapshot, so a key never waits for a sweep; the one costly
 * analysis (pages of the edge lists) runs on the pager's thread.
 *
 * COTERIE_TUI_TIMING=FILE appends, per key, the time from reading it to
 * doupdate(), and per page the time from asking to the answer.
 *
 * Leaving never loses work: quitting with 'y', Ctrl-C, SIGTERM, SIGHUP or
 * a vanished terminal stop the fit, write the result folder if the model
 * on screen has not been written, and only then end curses. A signal or a
 * lost terminal lets the sweep in progress end (fit_interrupt()), so the
 * folder it saves resumes exactly, as `w` and the autosave do.
 *
 * One writer per folder (dirlock.h): a session whose fit runs takes the
 * result folder's lock as soon as the folder exists (at start, on 'e', or
 * at the first write); a session that only browses takes none. When
 * another process holds it, or rewrote the folder since it was opened,
 * the footer says so and the model is not called saved: its writes go to
 * a folder beside it (outdir.h). tui_run() has
 * one cleanup path: whatever start() got to is undone by teardown(), and
 * what must be said on the terminal is said after curses ended.
 */
#include <errno.h>
#include <fcntl.h>
#include <poll.h>
#include <pthread.h>
#include <signal.h>
#include <stdatomic.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/resource.h>
#include <unistd.h>

#include "coterie/dirlock.h"
#include "coterie/graph.h"
#include "coterie/proc.h"
#include "coterie/outdir.h"
#include "coterie/util.h"
#include "follower.h"
#include "keys.h"
#include "panes.h"
#include "screen.h"
#include "term.h"
#include "tui.h"
#include "view.h"

#define SNAP_INTERVAL 0.1 /* seconds between snapshots taken */
#define MSG_SECONDS 8.0   /* how long a notice stays in the footer */

/* Show the newest message of the core in the footer, if one came. */
static void inbox_take(struct view *v)
{
	char msg[sizeof v->msg];
	int level;
	if (!term_inbox_take(msg, sizeof msg, &level))
		return;
	util_escape(msg, v->msg, sizeof v->msg, !v->utf8);
	v->msg_level = level;
	v->msg_time = util_now();
	v->dirty |= DIRTY_FOOTER;
}

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
	case MODE_ASK:
		keys_ask_key(v, key, is_char);
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

/* What the loop keeps besides the view, and how the session ended. */
struct loop {
	const struct tui_config *cfg;
	struct screen screen;
	struct pager *pager;      /* NULL when its thread could not start */
	int pending;              /* the fit woke us: a snapshot is due */
	int hangup;               /* the terminal went away */
	double last_tick;         /* the trace pane's clock */
	/* COTERIE_TUI_TIMING: from reading a key to doupdate() */
	double t_key;
	int took_snap;
	char key_label[32];
	/* the end, said after curses */
	int sig;
	int wrote, write_failed;
	/* the result folder's writer lock (dirlock.h) */
	struct dirlock *lock;
	int lock_tried;
	char last_error[512];
};

/*
 * Autosave: while a fit runs, its checkpoint is written to the result
 * folder every AUTOSAVE_SECONDS, on a thread of its own (a large model
 * takes a while to write, and the screen must not wait), so a crash or a
 * killed machine loses at most that much work; `explore DIR` reopens it
 * and `fit --resume DIR` ends as the uninterrupted fit would (outdir.h).
 */
#define AUTOSAVE_SECONDS 120.0

static struct outdir *autosave_open(const struct view *v, const struct loop *l,
				    const struct tui_config *cfg)
{
	/* COTERIE_AUTOSAVE_SECONDS: a shorter interval, for the tests */
	const char *as_env = getenv("COTERIE_AUTOSAVE_SECONDS");
	struct outdir_config oc = {
		.dir = v->outdir, .g = v->g, .params = v->params,
		.every = as_env && atof(as_env) > 0 ? atof(as_env) : AUTOSAVE_SECONDS,
		.one_start = cfg->one_start, .background = 1,
		.continues = cfg->reopened && cfg->outdir_holds_result,
		.lock = l->lock,
	};
	if (cfg->checkpoint_every > 0)
		oc.every = cfg->checkpoint_every;
	return outdir_new(&oc);
}


/* At least need descriptors are free (need <= FDS_MAX), else say so with
 * the real cause: curses would blame the terminal type, a write would
 * fail only at the end. Returns 0 or -1. */
#define FDS_MAX 8
static int fds_free(int need)
{
	int fd[FDS_MAX], got = 0, e = 0;
	while (got < need && (fd[got] = fcntl(STDERR_FILENO, F_DUPFD_CLOEXEC, 0)) >= 0)
		got++;
	if (got < need)
		e = errno;
	while (got > 0)
		close(fd[--got]);
	if (!e)
		return 0;
	struct rlimit rl;
	if (e == EMFILE && getrlimit(RLIMIT_NOFILE, &rl) == 0 && rl.rlim_cur != RLIM_INFINITY)
		return error("too few file descriptors for the explorer: the limit (ulimit -n) is "
			     "%llu; raise it", (unsigned long long)rl.rlim_cur);
	return error("cannot start the explorer: %s", strerror(e));
}

/* Take the terminal and start what runs beside the loop: the pager, the
 * fit (cfg->start), the autosave clock. Returns 0, or -1 with a message. */
static int start(struct view *v, struct loop *l, const struct tui_config *cfg)
{
	struct term_caps caps;
	/* what the session opens: the terminal's description (curses), the
	 * pager's pipe, the folder's lock and its spares for the writes */
	if (fds_free(4 + DIRLOCK_SPARE) || term_start("'coterie fit' works without one", &caps))
		return -1;
	const char *tpath = getenv("COTERIE_TUI_TIMING");
	if (tpath && *tpath)
		v->timing = fopen(tpath, "a");
	v->utf8 = caps.utf8;
	v->colour = caps.colour;
	draw_init_colours(v->colour);
	refresh();
	screen_layout(&l->screen, v);

	l->pager = util_calloc(1, sizeof *l->pager);
	if (l->pager && pager_start(l->pager) == 0)
		v->pager = l->pager; /* else pages are fetched on this thread */
	if (cfg->start) {
		fit_want_live_agm(v->fit);
		if (fit_start(v->fit) == 0)
			v->started = 1;
	}
	view_take_snapshot(v);
	view_prepare(v);
	if (v->outdir_is_default)
		view_say(v, UTIL_NOTICE, "w writes the result to the folder shown top right "
			 "(-o chooses another); ? lists the keys");

	l->last_tick = util_now();
	if (cfg->follow) /* the fit elsewhere is the folder's writer */
		return follower_start(v, cfg->outdir);
	l->lock = dirlock_new(v->outdir, proc_command_line());
	v->od = autosave_open(v, l, cfg);
	return 0;
}

/*
 * The folder's lock, once the fit runs and the folder exists (a default
 * folder not made yet is locked by its first write); and the truth about
 * "saved": a folder another process rewrote no longer holds this model.
 */
static void guard_folder(struct view *v, struct loop *l)
{
	char esc[300];
	if (v->started && !l->lock_tried && l->lock && access(v->outdir, F_OK) == 0) {
		l->lock_tried = 1;
		if (dirlock_take(l->lock) == 0) {
			dirlock_reserve(l->lock); /* a failure is in the inbox */
		} else {
			v->saved = 0;
			view_say(v, UTIL_WARNING, "another process writes '%s': this session "
				 "saves beside it", util_escape(v->outdir, esc, sizeof esc, !v->utf8));
		}
	}
	if (v->saved && v->od && outdir_changed(v->od)) {
		v->saved = 0;
		v->dirty |= DIRTY_HEADER;
		view_say(v, UTIL_WARNING, "'%s' was rewritten by another process: this model is "
			 "not saved there", util_escape(v->outdir, esc, sizeof esc, !v->utf8));
	}
}

/* The first half of a pass: bring the state up to date and draw it. */
static void update_and_draw(struct view *v, struct loop *l)
{
	double now = util_now();
	if (l->pending && now - v->snap_taken >= SNAP_INTERVAL) {
		l->took_snap |= view_take_snapshot(v);
		l->pending = 0;
	} else if (v->started) {
		enum fit_state st = fit_get_state(v->fit);
		if (st != v->state) {
			/* a change of state is shown at once */
			l->took_snap |= view_take_snapshot(v);
			l->pending = 0;
		}
	}
	if (v->started && (v->state == FIT_FITTING || v->state == FIT_SEEDING) &&
	    now - l->last_tick >= 1.0) {
		v->dirty |= DIRTY_PANE(PANE_TRACE); /* the clock */
		l->last_tick = now;
	}
	if (v->msg[0] && v->msg_level != UTIL_ERROR && now - v->msg_time > MSG_SECONDS &&
	    v->mode == MODE_NORMAL) {
		v->msg[0] = '\0';
		v->dirty |= DIRTY_FOOTER;
	}
	if (v->params_changed) {
		/* the checkpoints and the result record the parameters in force */
		outdir_free(v->od);
		v->od = autosave_open(v, l, l->cfg);
		v->params_changed = 0;
	}
	guard_folder(v, l);
	follower_poll(v);
	if (v->started && v->od)
		outdir_tick(v->od, v->fit);
	if (v->write_asked)
		view_write_asked(v);
	view_prepare(v);
	if (v->dirty)
		screen_draw(&l->screen, v);
	if (l->t_key > 0 && v->timing) {
		fprintf(v->timing, "key %s %.3f ms%s\n", l->key_label, (util_now() - l->t_key) * 1e3,
			l->took_snap ? " (with a new snapshot)" : "");
		fflush(v->timing);
	}
	l->t_key = 0;
}

/* Every key waiting (after EINTR too: a resize arrives as a key). */
static void read_keys(struct view *v, struct loop *l)
{
	wint_t wc;
	int r;
	while ((r = get_wch(&wc)) != ERR) {
		if (r == KEY_CODE_YES && wc == KEY_RESIZE) {
			screen_layout(&l->screen, v);
			continue;
		}
		if (l->t_key == 0) {
			char nb[32];
			l->t_key = util_now();
			snprintf(l->key_label, sizeof l->key_label, "%s",
				 r == OK && wc >= 0x80 ? "char" : keys_name((int)wc, nb, sizeof nb));
			l->took_snap = 0;
		}
		handle_key(v, (int)wc, r == OK);
		view_prepare(v);
		if (v->quit)
			break;
	}
}

/* The second half of a pass: wait for something to happen and take it in.
 * Returns 1 when the loop must end at once (a signal, a lost terminal). */
static int wait_and_read(struct view *v, struct loop *l)
{
	int scanning = v->mode == MODE_FIND && v->scan_next < v->g->n;
	int timeout = 1000;
	if (v->started && !fit_state_ended(v->state))
		timeout = 250;
	if (l->pending) {
		int ms = (int)((SNAP_INTERVAL - (util_now() - v->snap_taken)) * 1e3) + 1;
		timeout = ms < 0 ? 0 : ms < timeout ? ms : timeout;
	}
	if (v->follow && follower_timeout_ms(v) < timeout)
		timeout = follower_timeout_ms(v);
	if (scanning)
		timeout = 0;
	struct pollfd pfd[5] = {
		{ STDIN_FILENO, POLLIN, 0 },
		{ fit_wake_fd(v->fit), POLLIN, 0 },
		{ proc_signal_fd(), POLLIN, 0 },
		{ term_inbox_fd(), POLLIN, 0 },
		{ v->pager ? pager_fd(v->pager) : -1, POLLIN, 0 },
	};
	int pr = poll(pfd, 5, timeout);
	if (proc_signal_caught())
		return 1;
	if (pr < 0 && errno != EINTR)
		return 1;
	if (pfd[1].revents & POLLIN) {
		fit_drain_wake(v->fit);
		l->pending = !v->follow; /* a followed fit's snapshots are the follower's */
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
		l->hangup = 1;
		return 1;
	}
	read_keys(v, l);
	return 0;
}

/* After the loop, with curses still up: stop the fit and write what would
 * be lost. Returns the exit status so far. */
static int leave(struct view *v, struct loop *l)
{
	l->sig = proc_signal_caught();
	int status = 0;
	if (l->sig || l->hangup) {
		status = EXIT_INTERRUPTED;
		v->want_write = 1;
		v->stop_on_quit = 1;
	}
	if (v->stop_on_quit) {
		if (!l->hangup && !v->too_small) {
			v->mode = MODE_NORMAL;
			view_say(v, UTIL_NOTICE, "stopping the fit%s...",
				 v->want_write && (view_running(v) || view_unsaved(v)) ? " and saving" : "");
			screen_draw(&l->screen, v);
		}
		if (v->want_write && v->started && !v->stop_asked) {
			/* the sweep in progress ends, so that the save resumes exactly */
			fit_interrupt(v->fit);
			fit_wait(v->fit);
			view_take_snapshot(v);
		} else {
			stop_and_wait(v);
		}
	}
	v->write_asked = 0;
	if (v->want_write && view_unsaved(v)) {
		if (view_write(v, l->sig || l->hangup ? "interrupted" : NULL) == 0)
			l->wrote = 1;
		else
			l->write_failed = 1;
	}
	/* the core's last word, if it was an error, is repeated after curses */
	inbox_take(v);
	if (l->write_failed && v->msg_level == UTIL_ERROR)
		snprintf(l->last_error, sizeof l->last_error, "%s", v->msg);
	return status;
}

/* Undo whatever start() got to: the pager, the windows, curses. */
static void teardown(struct view *v, struct loop *l)
{
	if (v->pager)
		pager_stop(v->pager);
	free(l->pager);
	v->pager = l->pager = NULL;
	screen_release(&l->screen);
	term_stop();
	if (v->timing)
		fclose(v->timing);
	v->timing = NULL;
}

/* Say on the terminal how it ended; returns the final exit status. */
static int report(const struct view *v, const struct loop *l, int status)
{
	char dir[300];
	util_escape(v->outdir, dir, sizeof dir, 1);
	if (l->write_failed) {
		char alt[300];
		const char *in = v->od ? outdir_saved_in(v->od) : NULL;
		if (l->last_error[0])
			error("%s", l->last_error);
		if (in)
			error("the result could not be written to '%s'; it is saved in '%s'", dir,
			      util_escape(in, alt, sizeof alt, 1));
		else
			error("the result could not be written to '%s'", dir);
		status = 1;
	} else if (l->wrote) {
		notice("the result at sweep %u is in '%s'", v->saved_sweep, dir);
	}
	if (l->sig)
		notice("interrupted by signal %d", l->sig);
	return status;
}

/*
 * A session that made the result folder and leaves without writing
 * anything into it takes the empty folder away again. rmdir() removes
 * only an empty folder, so nothing written (by 'w', an autosave or
 * another program) is ever lost; a folder that was there before is
 * never touched.
 */
static void forget_empty_outdir(const char *dir, int created)
{
	if (created && dir && rmdir(dir) != 0 && errno != ENOTEMPTY && errno != EEXIST &&
	    errno != ENOENT)
		warning("cannot remove the empty folder '%s': %s", dir, strerror(errno));
}

int tui_run(struct tui_config *cfg)
{
	struct view view, *v = &view;
	struct loop *l = util_calloc(1, sizeof *l);
	/* the default folder is made only when something is written */
	int created = cfg->outdir_created || (cfg->outdir && access(cfg->outdir, F_OK) != 0);
	view_init(v, cfg);
	if (cfg->note)
		view_say(v, UTIL_WARNING, "%s", cfg->note);
	int status = 1;
	if (l)
		l->cfg = cfg;
	if (l && start(v, l, cfg) == 0) {
		while (!v->quit) {
			update_and_draw(v, l);
			if (wait_and_read(v, l))
				break;
		}
		status = leave(v, l);
		teardown(v, l);
		status = report(v, l, status);
	}
	outdir_free(v->od); /* joins the autosave thread */
	follower_free(v);
	if (l)
		dirlock_free(l->lock); /* before the folder is checked for emptiness */
	free(l);
	forget_empty_outdir(v->outdir, created);
	fit_free(v->fit);
	view_release(v);
	return status;
}
