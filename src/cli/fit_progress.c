/*
 * cli/fit_progress: the progress line of `coterie fit` on stderr.
 *
 * On a terminal one line is redrawn in place ("\r\033[K"); elsewhere (a
 * log, a pipe) a line is printed at most once a second, and always for the
 * first sweeps of each start and for the last. Either way the line is
 * made to fit the width (the terminal's, $COLUMNS, or 80) by dropping its
 * least useful fields first, so it never wraps. The one thing a newcomer
 * gets wrong: a line left open on the terminal must be ended
 * (fit_progress_break()) before any other message is printed, or that
 * message lands after the progress on the same line.
 */
#include "fit_progress.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/ioctl.h>
#include <unistd.h>

#include "coterie/util.h"

/* The width the progress line must fit: the terminal's (stderr's), else
 * $COLUMNS, else 80. */
static unsigned progress_width(int tty)
{
	struct winsize ws;
	if (tty && ioctl(STDERR_FILENO, TIOCGWINSZ, &ws) == 0 && ws.ws_col > 0)
		return ws.ws_col;
	const char *env = getenv("COLUMNS");
	char *end;
	unsigned long c = env ? strtoul(env, &end, 10) : 0;
	if (env && *env && !*end && c > 0 && c < 10000)
		return (unsigned)c;
	return 80;
}

/* The fields of a progress line, in the order shown. */
enum { PF_HEAD, PF_SWEEP, PF_LOGLIK, PF_GAIN, PF_RATE, PF_SECONDS, PF_STATE, PF_N };

/* Join the fields of f not yet dropped into line (cap bytes); their width. */
static size_t progress_join(char *line, size_t cap, char f[PF_N][64], const int *drop)
{
	size_t len = 0;
	line[0] = '\0';
	for (int i = 0; i < PF_N; i++) {
		if (drop[i] || !f[i][0])
			continue;
		const char *sep = !len ? "" : i == PF_SWEEP && f[PF_HEAD][0] &&
				  f[PF_HEAD][strlen(f[PF_HEAD]) - 1] == ':' ? " " : "  ";
		int w = snprintf(line + len, cap - len, "%s%s", sep, f[i]);
		if (w < 0 || (size_t)w >= cap - len)
			break;
		len += (size_t)w;
	}
	return len;
}

/*
 * The progress line, made to fit width columns (less room, the "coterie: "
 * of a line that is not redrawn): the least useful fields give way first
 * (the speed, the gain, ...), then the start is said more briefly, and at
 * last the line is cut, so that it never wraps. The final line of a fit of
 * several starts names the start it kept (the model written), which is
 * not the last one run when an earlier start was better (shorter code
 * length, or more likely: starts.c).
 */
static void progress_format(const struct snapshot *s, int final, unsigned width, char *line,
			    size_t cap)
{
	const struct trace_point *t = &s->trace[s->ntrace - 1];
	double gain = 0.0;
	if (s->ntrace >= 2) {
		double prev = s->trace[s->ntrace - 2].loglik;
		gain = (t->loglik - prev) / (fabs(prev) > 0 ? fabs(prev) : 1.0);
	}
	char f[PF_N][64], brief[64] = "";
	int kept = final && s->starts > 1 && s->best_start > 0;
	f[PF_HEAD][0] = '\0';
	if (kept) {
		snprintf(f[PF_HEAD], sizeof f[0], "kept start %u of %u (%s):", s->best_start,
			 s->starts, "the shortest code");
		snprintf(brief, sizeof brief, "kept start %u of %u:", s->best_start, s->starts);
	} else if (s->starts > 1) {
		snprintf(f[PF_HEAD], sizeof f[0], "start %u/%u", s->start, s->starts);
		snprintf(brief, sizeof brief, "%u/%u", s->start, s->starts);
	}
	snprintf(f[PF_SWEEP], sizeof f[0], "sweep %u", s->sweep);
	snprintf(f[PF_LOGLIK], sizeof f[0], "loglik %.6g", t->loglik);
	snprintf(f[PF_GAIN], sizeof f[0], "gain %.2e", gain);
	snprintf(f[PF_RATE], sizeof f[0], "%.2f sweeps/s", s->sweeps_per_sec);
	snprintf(f[PF_SECONDS], sizeof f[0], "%.1f s", s->seconds);
	snprintf(f[PF_STATE], sizeof f[0], "%s", s->plateau ? "[levelled]" : "");
	/* what gives way, in turn; -1: the brief start */
	static const int fitting[] = { PF_RATE, PF_GAIN, PF_SECONDS, PF_STATE, -1 };
	static const int ending[] = { PF_RATE, PF_GAIN, PF_STATE, -1, PF_SECONDS };
	const int *order = final ? ending : fitting;
	size_t norder = final ? sizeof ending / sizeof *ending : sizeof fitting / sizeof *fitting;
	int drop[PF_N] = { 0 };
	/* one column spare: a line that fills the last column wraps on some terminals */
	size_t room = width > 1 ? width - 1 : 1;
	size_t len = progress_join(line, cap, f, drop);
	for (size_t i = 0; i < norder && len > room; i++) {
		if (order[i] < 0)
			snprintf(f[PF_HEAD], sizeof f[0], "%s", brief);
		else
			drop[order[i]] = 1;
		len = progress_join(line, cap, f, drop);
	}
	if (len > room && room < cap)
		line[room] = '\0';
}

void fit_progress_show(struct fit_progress *pr, const struct snapshot *s, int final)
{
	if (pr->quiet || s->ntrace == 0)
		return;
	double now = util_now();
	char line[512];
	unsigned width = progress_width(pr->tty);
	const unsigned prefix = sizeof "coterie: " - 1;
	if (!pr->tty)
		width = width > prefix + 20 ? width - prefix : 20;
	progress_format(s, final, width, line, sizeof line);
	if (pr->tty) {
		fprintf(stderr, "\r\033[K%s", line);
		pr->line_open = 1;
		if (final) {
			fputc('\n', stderr);
			pr->line_open = 0;
		}
	} else if (final || s->sweep != pr->last_sweep || s->start != pr->last_start) {
		if (final || now - pr->last_print >= 1.0 || s->sweep <= 1 ||
		    s->start != pr->last_start) { /* a line for every start */
			fprintf(stderr, "coterie: %s\n", line);
			pr->last_print = now;
		}
	}
	if (!pr->tty && s->start != pr->last_start && pr->last_start)
		pr->last_print = 0; /* show the first sweeps of each start */
	pr->last_sweep = s->sweep;
	pr->last_start = s->start;
	fflush(stderr);
}

void fit_progress_break(struct fit_progress *pr)
{
	if (pr->line_open) {
		fputc('\n', stderr);
		pr->line_open = 0;
	}
}
