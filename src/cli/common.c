/* cli/common: die(), option numbers, signals and small process facts. */
#include "cli.h"

#include <errno.h>
#include <fcntl.h>
#include <getopt.h>
#include <langinfo.h>
#include <math.h>
#include <signal.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>
#include <sys/resource.h>
#include <unistd.h>

static void (*die_hook)(void);

void cli_set_die_hook(void (*hook)(void))
{
	die_hook = hook;
}

void die(int status, const char *fmt, ...)
{
	char msg[2048];
	va_list ap;
	if (die_hook) {
		void (*h)(void) = die_hook;
		die_hook = NULL;
		h();
	}
	va_start(ap, fmt);
	vsnprintf(msg, sizeof msg, fmt, ap);
	va_end(ap);
	util_set_sink(NULL);
	error("%s", msg);
	exit(status);
}

uint32_t cli_u32(const char *opt, const char *s, uint32_t lo, uint32_t hi)
{
	char *end;
	errno = 0;
	unsigned long long v = strtoull(s, &end, 10);
	if (errno || end == s || *end || s[0] == '-' || v < lo || v > hi)
		die(EXIT_USAGE, "%s expects a whole number from %u to %u, not '%s'", opt, lo, hi, s);
	return (uint32_t)v;
}

uint64_t cli_u64(const char *opt, const char *s)
{
	char *end;
	errno = 0;
	unsigned long long v = strtoull(s, &end, 10);
	if (errno || end == s || *end || s[0] == '-')
		die(EXIT_USAGE, "%s expects a whole number, not '%s'", opt, s);
	return (uint64_t)v;
}

double cli_double(const char *opt, const char *s, double lo, double hi)
{
	char *end;
	errno = 0;
	double v = strtod(s, &end);
	if (errno || end == s || *end || !isfinite(v) || v < lo || v > hi)
		die(EXIT_USAGE, "%s expects a number from %g to %g, not '%s'", opt, lo, hi, s);
	return v;
}

void cli_option_error(int c, char **argv)
{
	char buf[256];
	if (c == ':')
		error("option '%s' needs a value", util_escape(argv[optind - 1], buf, sizeof buf, 1));
	else if (optopt && optopt != '?')
		error("unknown option '-%c'", (optopt > 32 && optopt < 127) ? optopt : '?');
	else
		error("unknown option '%s'", util_escape(argv[optind - 1], buf, sizeof buf, 1));
}

static volatile sig_atomic_t caught;
static int sigpipe_fd[2] = { -1, -1 };

static void on_signal(int sig)
{
	int saved = errno;
	caught = sig;
	if (sigpipe_fd[1] >= 0) {
		char b = 1;
		ssize_t w = write(sigpipe_fd[1], &b, 1);
		(void)w;
	}
	errno = saved;
}

int cli_signals_install(void)
{
	if (sigpipe_fd[0] < 0) {
		if (pipe(sigpipe_fd))
			return error("cannot make a pipe: %s", strerror(errno));
		for (int i = 0; i < 2; i++) {
			fcntl(sigpipe_fd[i], F_SETFL, fcntl(sigpipe_fd[i], F_GETFL) | O_NONBLOCK);
			fcntl(sigpipe_fd[i], F_SETFD, FD_CLOEXEC);
		}
	}
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

int cli_signal_fd(void)
{
	return sigpipe_fd[0];
}

int cli_signal_caught(void)
{
	return caught;
}

uint64_t cli_peak_rss_kb(void)
{
	struct rusage ru;
	if (getrusage(RUSAGE_SELF, &ru))
		return 0;
	return (uint64_t)ru.ru_maxrss;
}

static char cmdline[4096];

void cli_set_command_line(int argc, char **argv)
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

const char *cli_command_line(void)
{
	return cmdline;
}

int cli_utf8(void)
{
	const char *cs = nl_langinfo(CODESET);
	return cs && (strcasecmp(cs, "UTF-8") == 0 || strcasecmp(cs, "utf8") == 0);
}
