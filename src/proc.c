/*
 * proc: the process-wide facts and hooks that the command layer and the
 * explorer share (see proc.h).
 *
 * The signal handler only stores the signal number, counts and writes one
 * byte to a non-blocking pipe (async-signal-safe calls only); whoever
 * waits in poll() on proc_signal_fd() decides what to do. The one thing a
 * newcomer gets wrong: the count and number are read without a lock, so
 * they are sig_atomic_t and nothing else may be added to the handler.
 */
#include "coterie/proc.h"

#include <errno.h>
#include <fcntl.h>
#include <langinfo.h>
#include <signal.h>
#include <stdio.h>
#include <string.h>
#include <strings.h>
#include <sys/resource.h>
#include <unistd.h>

#include "coterie/util.h"

static char cmdline[4096];

void proc_set_command_line(int argc, char **argv)
{
	size_t o = 0;
	cmdline[0] = '\0';
	for (int i = 0; i < argc && o + 2 < sizeof cmdline; i++) {
		int w = snprintf(cmdline + o, sizeof cmdline - o, "%s%s", i ? " " : "", argv[i]);
		if (w < 0)
			break;
		o += (size_t)w;
	}
	if (o >= sizeof cmdline)
		cmdline[sizeof cmdline - 1] = '\0';
}

const char *proc_command_line(void)
{
	return cmdline;
}

uint64_t proc_peak_rss_kb(void)
{
	struct rusage ru;
	if (getrusage(RUSAGE_SELF, &ru))
		return 0;
	return (uint64_t)ru.ru_maxrss;
}

int proc_utf8(void)
{
	const char *cs = nl_langinfo(CODESET);
	return cs && (strcasecmp(cs, "UTF-8") == 0 || strcasecmp(cs, "utf8") == 0);
}

int proc_pipe(int fd[2])
{
	int p[2];
	if (pipe(p))
		return error("cannot make a pipe: %s", strerror(errno));
	for (int i = 0; i < 2; i++) {
		fcntl(p[i], F_SETFL, fcntl(p[i], F_GETFL) | O_NONBLOCK);
		fcntl(p[i], F_SETFD, FD_CLOEXEC);
		fd[i] = p[i];
	}
	return 0;
}

int proc_thread_start(pthread_t *t, void *(*fn)(void *), void *arg)
{
	sigset_t all, old;
	sigfillset(&all);
	pthread_sigmask(SIG_BLOCK, &all, &old);
	int rc = pthread_create(t, NULL, fn, arg);
	pthread_sigmask(SIG_SETMASK, &old, NULL);
	return rc;
}

static volatile sig_atomic_t caught, ncaught;
static int sigpipe_fd[2] = { -1, -1 };

static void on_signal(int sig)
{
	int saved = errno;
	caught = sig;
	if (ncaught < 1000)
		ncaught++;
	if (sigpipe_fd[1] >= 0) {
		char b = 1;
		ssize_t w = write(sigpipe_fd[1], &b, 1);
		(void)w;
	}
	errno = saved;
}

int proc_signals_install(void)
{
	if (sigpipe_fd[0] < 0 && proc_pipe(sigpipe_fd))
		return -1;
	struct sigaction sa;
	memset(&sa, 0, sizeof sa);
	sa.sa_handler = on_signal;
	sigemptyset(&sa.sa_mask);
	sigaction(SIGINT, &sa, NULL);
	sigaction(SIGTERM, &sa, NULL);
	sigaction(SIGHUP, &sa, NULL);
	signal(SIGPIPE, SIG_IGN);
	return 0;
}

int proc_signal_fd(void)
{
	return sigpipe_fd[0];
}

int proc_signal_caught(void)
{
	return caught;
}

int proc_signal_count(void)
{
	return ncaught;
}

static void (*exit_hook)(void);

void proc_set_exit_hook(void (*hook)(void))
{
	exit_hook = hook;
}

void proc_run_exit_hook(void)
{
	void (*h)(void) = exit_hook;
	exit_hook = NULL;
	if (h)
		h();
}
