/*
 * follow: the progress and request files of a followed fit (follow.h).
 *
 * The idea: the folder is the only channel, because the fit may run on
 * another machine (a batch job) that shares nothing else with the
 * follower. The fit stays the folder's one writer (it holds the lock,
 * dirlock.h); a follower writes only the request file, which is not part
 * of the result and which the fit removes once taken.
 *
 * Cost: the progress file is written by the fit's watching thread, never
 * by the fitting thread, from a snapshot the fit publishes anyway, at
 * most once a second (a few kB, no fsync): nothing is added to a sweep.
 * Requests are taken with one lstat() per wake of that thread.
 *
 * Invariants: the progress file and the request file are replaced by
 * rename(), so a reader sees a whole file or the previous one; neither is
 * fsync()ed, so after a crash one may be empty, and is then ignored.
 * Both are removed by the writer that takes the folder's lock (stale:
 * from an earlier fit or a follower that died) and at the fit's end.
 *
 * The one thing a newcomer gets wrong: the request file is hostile input
 * (anyone who can write the folder can put anything there, a FIFO or a
 * symbolic link too): it is opened with O_NOFOLLOW | O_NONBLOCK, checked
 * to be a small regular file, and read with a bound. And it must not go
 * through atomicfile.h: that one fsync()s and counts COTERIE_CRASH_AT
 * points, which the crash tests number.
 */
#include "coterie/follow.h"

#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

#include "coterie/atomicfile.h"
#include "coterie/outdir.h"
#include "coterie/util.h"

#define PROGRESS_MAX (64 * 1024) /* bytes read of a progress file, at most */

/* The counters a progress file shares with a snapshot (one list for both
 * directions). */
#define FOLLOW_COUNTERS(X) \
	X(state) X(start) X(starts) X(best_start) X(sweep) X(plateau_sweep) X(seconds) \
	X(sweeps_per_sec)

static const char *const request_words[] = { "", "stop", "pause", "continue", "save" };

const char *follow_request_name(enum follow_request r)
{
	return (unsigned)r < sizeof request_words / sizeof *request_words ? request_words[r] : "";
}

static double wall_now(void)
{
	struct timespec ts;
	clock_gettime(CLOCK_REALTIME, &ts);
	return (double)ts.tv_sec + (double)ts.tv_nsec * 1e-9;
}

/* This machine's name, printable ASCII only (it is shown on a screen). */
static void host_name(char *buf, size_t cap)
{
	if (gethostname(buf, cap) != 0)
		buf[0] = '\0';
	buf[cap - 1] = '\0';
	for (char *c = buf; *c; c++)
		if (*c <= ' ' || *c > '~')
			*c = '_';
	if (!buf[0])
		snprintf(buf, cap, "unknown");
}

void follow_progress_of(struct follow_progress *p, const struct snapshot *s,
			const struct fit_params *params)
{
	memset(p, 0, sizeof *p);
	p->pid = (uint64_t)getpid();
	host_name(p->host, sizeof p->host);
	p->written = wall_now();
#define TAKE(field) p->field = s->field;
	FOLLOW_COUNTERS(TAKE)
#undef TAKE
	p->max_sweeps = params->max_sweeps;
	p->k = params->k;
	uint32_t n = s->ntrace < FOLLOW_TRACE_MAX ? s->ntrace : FOLLOW_TRACE_MAX;
	p->ntrace = n;
	if (n)
		memcpy(p->trace, s->trace + (s->ntrace - n), n * sizeof *p->trace);
}

void follow_progress_apply(const struct follow_progress *p, struct snapshot *s)
{
#define GIVE(field) s->field = p->field;
	FOLLOW_COUNTERS(GIVE)
#undef GIVE
	s->plateau = p->plateau_sweep > 0;
}

/* ---- writing ---- */

/* buf[0..len) as DIR/name through DIR/.name.tmp-PID and rename(). */
static int replace_file(const char *dir, const char *name, const char *buf, size_t len)
{
	char *path = atomicfile_path(dir, name);
	char tmpname[64];
	snprintf(tmpname, sizeof tmpname, "%s.tmp-%ld", name, (long)getpid());
	char *tmp = atomicfile_path(dir, tmpname);
	int rc = -1, fd = -1;
	char esc[400];
	if (!path || !tmp)
		goto out;
	fd = open(tmp, O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC | O_NOFOLLOW, 0644);
	if (fd < 0)
		goto fail;
	for (size_t off = 0; off < len;) {
		ssize_t w = write(fd, buf + off, len - off);
		if (w < 0 && errno == EINTR)
			continue;
		if (w <= 0)
			goto fail;
		off += (size_t)w;
	}
	if (close(fd) != 0) {
		fd = -1;
		goto fail;
	}
	fd = -1;
	if (rename(tmp, path) != 0)
		goto fail;
	rc = 0;
	goto out;
fail:
	error("cannot write '%s': %s", util_escape(path ? path : dir, esc, sizeof esc, 1),
	      strerror(errno));
	if (fd >= 0)
		close(fd);
	if (tmp)
		unlink(tmp);
out:
	free(tmp);
	free(path);
	return rc;
}

int follow_progress_write(const char *dir, const struct follow_progress *p)
{
	size_t cap = 1024 + (size_t)p->ntrace * 80, len = 0;
	char *buf = util_malloc(cap, 1);
	if (!buf)
		return -1;
#define PUT(...) \
	len += (size_t)snprintf(buf + len, len < cap ? cap - len : 0, __VA_ARGS__)
	PUT("coterie progress 1\npid %llu\nhost %s\nwritten %.3f\nstate %s\n",
	    (unsigned long long)p->pid, p->host, p->written, fit_state_name(p->state));
	PUT("start %u %u %u\nsweep %u %u %u\nk %u\nseconds %.3f\nrate %.6g\ntaken %s\n",
	    p->start, p->starts, p->best_start, p->sweep, p->plateau_sweep, p->max_sweeps, p->k,
	    p->seconds, p->sweeps_per_sec, p->taken ? follow_request_name(p->taken) : "-");
	PUT("trace %u\n", p->ntrace);
	for (uint32_t i = 0; i < p->ntrace; i++)
		PUT("%u\t%.3f\t%.17g\n", p->trace[i].sweep, p->trace[i].seconds, p->trace[i].loglik);
	PUT("end\n");
#undef PUT
	int rc = len < cap ? replace_file(dir, FOLLOW_PROGRESS, buf, len) : error("progress too long");
	free(buf);
	return rc;
}

/* ---- reading (hostile input) ---- */

/* At most cap - 1 bytes of DIR/name, a regular file, NUL-terminated into
 * buf. Returns the length, -2 when absent, -1 when not a small regular
 * file. */
static long slurp(const char *dir, const char *name, char *buf, size_t cap)
{
	char *path = atomicfile_path(dir, name);
	if (!path)
		return -1;
	int fd = open(path, O_RDONLY | O_CLOEXEC | O_NOFOLLOW | O_NONBLOCK);
	int absent = fd < 0 && errno == ENOENT;
	free(path);
	if (fd < 0)
		return absent ? -2 : -1;
	struct stat st;
	long got = -1;
	if (fstat(fd, &st) == 0 && S_ISREG(st.st_mode) && (size_t)st.st_size < cap) {
		size_t n = 0;
		ssize_t r;
		while (n < cap - 1 && (r = read(fd, buf + n, cap - 1 - n)) != 0) {
			if (r < 0 && errno == EINTR)
				continue;
			if (r < 0)
				break;
			n += (size_t)r;
		}
		buf[n] = '\0';
		got = n < cap - 1 && strlen(buf) == n ? (long)n : -1; /* no NUL byte inside */
	}
	close(fd);
	return got;
}

/* Whether s is printable ASCII with no blank, as host_name() writes it:
 * the host is shown on a screen as it is. */
static int printable(const char *s)
{
	for (; *s; s++)
		if (*s <= ' ' || *s > '~')
			return 0;
	return 1;
}

static enum fit_state state_named(const char *w, int *ok)
{
	for (int s = FIT_READY; s <= FIT_FAILED; s++)
		if (!strcmp(w, fit_state_name((enum fit_state)s)))
			return (enum fit_state)s;
	*ok = 0;
	return FIT_READY;
}

/* One "key values" line of a progress file into p; 0 or -1. */
static int progress_line(struct follow_progress *p, const char *line)
{
	char w[64];
	unsigned long long pid;
	int ok = 1;
	if (sscanf(line, "pid %llu", &pid) == 1)
		p->pid = pid;
	else if (sscanf(line, "host %63s", p->host) == 1)
		;
	else if (sscanf(line, "written %lf", &p->written) == 1)
		;
	else if (sscanf(line, "state %63s", w) == 1)
		p->state = state_named(w, &ok);
	else if (sscanf(line, "start %u %u %u", &p->start, &p->starts, &p->best_start) == 3)
		;
	else if (sscanf(line, "sweep %u %u %u", &p->sweep, &p->plateau_sweep, &p->max_sweeps) == 3)
		;
	else if (sscanf(line, "k %u", &p->k) == 1)
		;
	else if (sscanf(line, "seconds %lf", &p->seconds) == 1)
		;
	else if (sscanf(line, "rate %lf", &p->sweeps_per_sec) == 1)
		;
	else if (sscanf(line, "taken %63s", w) == 1)
		for (int r = FOLLOW_STOP; r <= FOLLOW_SAVE; r++)
			if (!strcmp(w, request_words[r]))
				p->taken = (enum follow_request)r;
	return ok ? 0 : -1;
}

int follow_progress_read(const char *dir, struct follow_progress *p)
{
	char *buf = util_malloc(PROGRESS_MAX, 1);
	if (!buf)
		return -1;
	memset(p, 0, sizeof *p);
	long n = slurp(dir, FOLLOW_PROGRESS, buf, PROGRESS_MAX);
	int rc = n == -2 ? 0 : -1, in_trace = 0, ended = 0;
	uint32_t want = 0;
	if (n < 0 || strncmp(buf, "coterie progress 1\n", 19))
		goto out;
	char *save = NULL;
	for (char *line = strtok_r(buf + 19, "\n", &save); line; line = strtok_r(NULL, "\n", &save)) {
		if (!strcmp(line, "end")) {
			ended = 1;
			break;
		}
		if (in_trace && p->ntrace < want) {
			struct trace_point *t = &p->trace[p->ntrace];
			if (sscanf(line, "%u\t%lf\t%lf", &t->sweep, &t->seconds, &t->loglik) != 3 ||
			    (p->ntrace && t->sweep <= t[-1].sweep) || !isfinite(t->seconds) ||
			    !isfinite(t->loglik))
				goto out;
			p->ntrace++;
		} else if (sscanf(line, "trace %u", &want) == 1) {
			if (want > FOLLOW_TRACE_MAX)
				goto out;
			in_trace = 1;
		} else if (progress_line(p, line)) {
			goto out;
		}
	}
	if (ended && p->ntrace == want && p->pid > 0 && p->host[0] && p->starts > 0 &&
	    p->start <= p->starts && printable(p->host) && isfinite(p->written) &&
	    isfinite(p->seconds) && isfinite(p->sweeps_per_sec))
		rc = 1;
out:
	free(buf);
	if (rc != 1)
		memset(p, 0, sizeof *p);
	return rc;
}

int follow_progress_stale(const struct follow_progress *p)
{
	char host[64];
	host_name(host, sizeof host);
	if (!strcmp(host, p->host) && p->pid <= (uint64_t)INT32_MAX)
		return kill((pid_t)p->pid, 0) != 0 && errno == ESRCH;
	return wall_now() - p->written > FOLLOW_SILENT;
}

/* ---- requests ---- */

int follow_request_send(const char *dir, enum follow_request r)
{
	char line[32];
	if (r == FOLLOW_NONE)
		return error("no request to send");
	int n = snprintf(line, sizeof line, "%s\n", follow_request_name(r));
	/* its temporary file is .coterie.request.tmp-PID: a fit taking the
	 * lock at that instant may remove it, and the rename then fails
	 * with a message; nothing half-written is ever read */
	return replace_file(dir, FOLLOW_REQUEST, line, (size_t)n);
}

/* Remove DIR/name; 1 when removed. */
static int remove_in(const char *dir, const char *name)
{
	char *path = atomicfile_path(dir, name);
	int rc = path && unlink(path) == 0;
	free(path);
	return rc;
}

/* Whether the empty request file has been empty for REQUEST_EMPTY_GRACE
 * seconds (by its modification time; 1 when it cannot be told). A shell's
 * `echo stop > FILE` creates the file empty and writes it a moment later:
 * taken in between, the request would be lost and the writer not told. */
#define REQUEST_EMPTY_GRACE 5.0
static int empty_for_long(const char *dir)
{
	char *path = atomicfile_path(dir, FOLLOW_REQUEST);
	struct stat st;
	int rc = !path || lstat(path, &st) != 0 ||
		 wall_now() - ((double)st.st_mtim.tv_sec + 1e-9 * (double)st.st_mtim.tv_nsec) >=
			 REQUEST_EMPTY_GRACE;
	free(path);
	return rc;
}

enum follow_request follow_request_take(const char *dir)
{
	char buf[FOLLOW_REQUEST_MAX + 1], esc[FOLLOW_REQUEST_MAX * 4 + 8];
	long n = slurp(dir, FOLLOW_REQUEST, buf, sizeof buf);
	if (n == -2)
		return FOLLOW_NONE;
	if (n == 0 && !empty_for_long(dir))
		return FOLLOW_NONE; /* `echo stop > FILE` between its open and its write */
	remove_in(dir, FOLLOW_REQUEST); /* taken, or not a request: either way gone */
	if (n >= 0) {
		/* one word, optionally with a line end (echo) and blanks */
		char *b = buf, *e = buf + n;
		while (b < e && (*b == ' ' || *b == '\t'))
			b++;
		while (e > b && (e[-1] == '\n' || e[-1] == '\r' || e[-1] == ' ' || e[-1] == '\t'))
			e--;
		*e = '\0';
		for (int r = FOLLOW_STOP; r <= FOLLOW_SAVE; r++)
			if (!strcmp(b, request_words[r]))
				return (enum follow_request)r;
		warning("ignored '%s' in the result folder: '%s' is no request (stop, pause, "
			"continue or save)", FOLLOW_REQUEST, util_escape(b, esc, sizeof esc, 1));
	} else {
		warning("ignored '%s' in the result folder: not a small regular file",
			FOLLOW_REQUEST);
	}
	return FOLLOW_NONE;
}

int follow_clean(const char *dir)
{
	return remove_in(dir, FOLLOW_REQUEST) + remove_in(dir, FOLLOW_PROGRESS);
}

/* ---- the fit's side ---- */

#define PROGRESS_EVERY 1.0 /* seconds between progress files, at least */

struct follow_host {
	const char *dir;
	struct fit_params params;
	double last;             /* util_now() of the last progress file */
	uint32_t sweep, start;   /* what it said */
	enum fit_state state;
	enum follow_request taken;
	int failed;              /* a write failed: said once */
};

struct follow_host *follow_host_new(const char *dir, const struct fit_params *p)
{
	struct follow_host *h = util_calloc(1, sizeof *h);
	if (!h)
		return NULL;
	h->dir = dir;
	h->params = *p;
	h->last = -1e300;
	if (follow_clean(dir))
		notice("removed a request or progress file an earlier fit left in '%s'", dir);
	return h;
}

/* Act on request r (not stop). */
static void obey(struct follow_host *h, enum follow_request r, struct fit *f, struct outdir *od)
{
	char esc[400];
	util_escape(h->dir, esc, sizeof esc, 1);
	switch (r) {
	case FOLLOW_PAUSE:
		fit_pause(f);
		notice("paused, as asked through '%s/%s' (continue takes it up again)", esc,
		       FOLLOW_REQUEST);
		break;
	case FOLLOW_CONTINUE:
		fit_unpause(f);
		notice("going on, as asked through '%s/%s'", esc, FOLLOW_REQUEST);
		break;
	case FOLLOW_SAVE:
		if (od) {
			outdir_due_now(od);
			notice("writing a checkpoint at the end of this sweep, as asked through "
			       "'%s/%s'", esc, FOLLOW_REQUEST);
		}
		break;
	default:
		break;
	}
	h->taken = r;
	h->last = -1e300; /* say it at once */
}

int follow_host_tick(struct follow_host *h, struct fit *f, struct outdir *od)
{
	enum follow_request r = follow_request_take(h->dir);
	if (r == FOLLOW_STOP) {
		h->taken = r;
		h->last = -1e300;
	} else if (r != FOLLOW_NONE) {
		obey(h, r, f, od);
	}
	double now = util_now();
	struct snapshot *s = fit_snapshot(f);
	enum fit_state st = fit_get_state(f);
	int news = s->sweep != h->sweep || s->start != h->start || st != h->state;
	if (!h->failed && now - h->last >= (news ? PROGRESS_EVERY : FOLLOW_HEARTBEAT)) {
		struct follow_progress *p = util_malloc(1, sizeof *p);
		if (p) {
			follow_progress_of(p, s, &h->params);
			p->state = st; /* the state now (a pause is not a snapshot's) */
			p->taken = h->taken;
			/* said once by error(); the fit goes on, unfollowed */
			h->failed = follow_progress_write(h->dir, p) != 0;
			free(p);
		}
		h->last = now;
		h->sweep = s->sweep;
		h->start = s->start;
		h->state = st;
	}
	snapshot_release(s);
	return r == FOLLOW_STOP;
}

void follow_host_free(struct follow_host *h)
{
	if (!h)
		return;
	follow_clean(h->dir);
	free(h);
}
