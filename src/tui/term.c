/*
 * tui/term: curses setup and the message inbox, once for both screens.
 *
 * While curses owns the terminal nothing may write to stderr, but the core
 * reports through error(), warning() and notice(), possibly from the
 * fitting thread. So term_start() installs a sink that only copies the
 * message into a locked inbox and writes a byte to a pipe; the UI thread
 * polls that pipe and shows the message (the explorer's footer), or takes
 * the last one after curses ended (the -k auto screen prints an error
 * then). The inbox is file-level state because a sink has no context
 * argument: one session at a time.
 *
 * The one thing a newcomer gets wrong: die() may run on any path while the
 * screen is up, so the exit hook ends curses and restores the default sink
 * before die() prints; term_stop() undoes both on the normal path.
 */
#include "term.h"

#ifndef NCURSES_WIDECHAR
#define NCURSES_WIDECHAR 1
#endif
#include <curses.h>
#include <pthread.h>
#include <stdio.h>
#include <stdlib.h>
#include <unistd.h>

#include "coterie/proc.h"
#include "coterie/util.h"

static struct {
	pthread_mutex_t lock;
	char msg[512];
	int level;
	int fresh;
	int fd[2];
} inbox = { PTHREAD_MUTEX_INITIALIZER, "", 0, 0, { -1, -1 } };

static SCREEN *screen;

static void inbox_sink(int level, const char *msg)
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

static void close_inbox(void)
{
	for (int i = 0; i < 2; i++) {
		if (inbox.fd[i] >= 0)
			close(inbox.fd[i]);
		inbox.fd[i] = -1;
	}
}

static void exit_hook(void)
{
	if (!isendwin())
		endwin();
	util_set_sink(NULL);
}

int term_start(const char *no_tty_hint, struct term_caps *caps)
{
	if (!isatty(STDIN_FILENO) || !isatty(STDOUT_FILENO))
		return error("explore needs a terminal; %s", no_tty_hint);
	if (inbox.fd[0] < 0 && proc_pipe(inbox.fd))
		return -1;
	screen = newterm(NULL, stdout, stdin);
	if (!screen) {
		close_inbox();
		return error("cannot start the screen (TERM='%s')",
			     getenv("TERM") ? getenv("TERM") : "");
	}
	set_term(screen);
	proc_set_exit_hook(exit_hook);
	pthread_mutex_lock(&inbox.lock);
	inbox.fresh = 0;
	pthread_mutex_unlock(&inbox.lock);
	util_set_sink(inbox_sink);
	cbreak();
	noecho();
	nonl();
	intrflush(stdscr, FALSE);
	keypad(stdscr, TRUE);
	nodelay(stdscr, TRUE);
	set_escdelay(25);
	curs_set(0);
	caps->utf8 = proc_utf8();
	caps->colour = has_colors() && getenv("NO_COLOR") == NULL;
	return 0;
}

void term_stop(void)
{
	if (!screen)
		return;
	endwin();
	delscreen(screen);
	screen = NULL;
	util_set_sink(NULL);
	proc_set_exit_hook(NULL);
	close_inbox();
}

int term_inbox_fd(void)
{
	return inbox.fd[0];
}

int term_inbox_take(char *buf, size_t cap, int *level)
{
	char drain[256];
	if (inbox.fd[0] >= 0)
		while (read(inbox.fd[0], drain, sizeof drain) > 0)
			;
	pthread_mutex_lock(&inbox.lock);
	int fresh = inbox.fresh;
	if (fresh) {
		snprintf(buf, cap, "%s", inbox.msg);
		*level = inbox.level;
		inbox.fresh = 0;
	}
	pthread_mutex_unlock(&inbox.lock);
	return fresh;
}
