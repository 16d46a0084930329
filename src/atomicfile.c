/*
 * atomicfile: replacing files so that a reader or a crash never sees half
 * of one (see atomicfile.h).
 *
 * The idea: stage, then commit. Staging writes DIR/.NAME.tmp-PID through a
 * buffer, flushes it, fsync()s and close()s it, checking every return
 * value (a full disk often shows only at close on network file systems);
 * committing is rename() onto NAME and an fsync() of the folder, so the
 * rename itself survives a crash. A set stages every file before renaming
 * any.
 *
 * Invariants: write errors are sticky (the first errno is kept, later
 * writes are skipped) and reported once, by the stager, naming the final
 * path, not the temporary one; a temporary file never outlives a failure.
 *
 * The one thing a newcomer gets wrong: two writers of the same path in one
 * process share the temporary name (it holds only the pid), so they must
 * not run at the same time; the explorer joins its autosave thread before
 * its final write for that reason.
 */
#include "coterie/atomicfile.h"

#include <errno.h>
#include <fcntl.h>
#include <stdatomic.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#define BUF_SIZE (1u << 22)
#define ROOM_MAX (1u << 16)

struct atomicfile {
	int fd;
	int err;        /* errno of the first failure, 0 if none */
	int summing;    /* sum is kept */
	uint64_t sum;   /* FNV-1a of every byte written since atomicfile_sum_start() */
	uint64_t whole; /* FNV-1a of every byte flushed to the file */
	uint64_t total; /* bytes flushed */
	size_t len;
	unsigned char *buf; /* BUF_SIZE bytes */
};

static void flush(struct atomicfile *w)
{
	size_t done = 0;
	if (!w->err) {
		w->whole = util_fnv1a(w->whole, w->buf, w->len);
		w->total += w->len;
	}
	while (!w->err && done < w->len) {
		ssize_t k = write(w->fd, w->buf + done, w->len - done);
		if (k < 0) {
			if (errno == EINTR)
				continue;
			w->err = errno;
		} else if (k == 0) {
			w->err = EIO;
		} else {
			done += (size_t)k;
		}
	}
	w->len = 0;
}

void atomicfile_write(struct atomicfile *w, const void *data, size_t n)
{
	const unsigned char *p = data;
	if (w->summing)
		w->sum = util_fnv1a(w->sum, p, n);
	while (n > 0 && !w->err) {
		size_t room = BUF_SIZE - w->len;
		size_t k = n < room ? n : room;
		memcpy(w->buf + w->len, p, k);
		w->len += k;
		p += k;
		n -= k;
		if (w->len == BUF_SIZE)
			flush(w);
	}
}

void atomicfile_str(struct atomicfile *w, const char *s)
{
	atomicfile_write(w, s, strlen(s));
}

void atomicfile_printf(struct atomicfile *w, const char *fmt, ...)
{
	char small[256];
	va_list ap;
	va_start(ap, fmt);
	int k = vsnprintf(small, sizeof small, fmt, ap);
	va_end(ap);
	if (k < 0) {
		if (!w->err)
			w->err = EINVAL;
		return;
	}
	if ((size_t)k < sizeof small) {
		atomicfile_write(w, small, (size_t)k);
		return;
	}
	char *big = malloc((size_t)k + 1);
	if (!big) {
		if (!w->err)
			w->err = ENOMEM;
		return;
	}
	va_start(ap, fmt);
	vsnprintf(big, (size_t)k + 1, fmt, ap);
	va_end(ap);
	atomicfile_write(w, big, (size_t)k);
	free(big);
}

void atomicfile_tsv_name(struct atomicfile *w, const char *s)
{
	const char *run = s;
	for (; *s; s++) {
		const char *esc = NULL;
		switch (*s) {
		case '\t': esc = "\\t"; break;
		case '\n': esc = "\\n"; break;
		case '\r': esc = "\\r"; break;
		case '\\': esc = "\\\\"; break;
		default: continue;
		}
		atomicfile_write(w, run, (size_t)(s - run));
		atomicfile_write(w, esc, 2);
		run = s + 1;
	}
	atomicfile_write(w, run, (size_t)(s - run));
}

char *atomicfile_room(struct atomicfile *w, size_t want)
{
	if (want > ROOM_MAX)
		BUG("atomicfile_room(%zu) asks for more than %u bytes", want, ROOM_MAX);
	if (BUF_SIZE - w->len < want)
		flush(w);
	return (char *)w->buf + w->len;
}

void atomicfile_advance(struct atomicfile *w, size_t n)
{
	if (w->summing)
		w->sum = util_fnv1a(w->sum, w->buf + w->len, n);
	w->len += n;
}

int atomicfile_failed(const struct atomicfile *w)
{
	return w->err != 0;
}

void atomicfile_sum_start(struct atomicfile *w)
{
	w->summing = 1;
	w->sum = UTIL_FNV_INIT;
}

uint64_t atomicfile_sum(const struct atomicfile *w)
{
	return w->sum;
}

/* ------------------------------------------------------------------ */
/* Paths */

char *atomicfile_path(const char *dir, const char *name)
{
	size_t dl = strlen(dir), nl = strlen(name);
	int slash = dl > 0 && dir[dl - 1] != '/';
	char *p = util_malloc(dl + (size_t)slash + nl + 1, 1);
	if (!p)
		return NULL;
	memcpy(p, dir, dl);
	if (slash)
		p[dl] = '/';
	memcpy(p + dl + (size_t)slash, name, nl + 1);
	return p;
}

/* Split path into its folder (".", when it has none) and its last part.
 * Both newly allocated; returns 0 or -1. */
static int path_split(const char *path, char **dir, char **base)
{
	const char *slash = strrchr(path, '/');
	*dir = *base = NULL;
	if (!slash) {
		*dir = util_strdup(".");
		*base = util_strdup(path);
	} else {
		size_t dl = (size_t)(slash - path);
		*dir = util_malloc(dl ? dl + 1 : 2, 1);
		if (*dir) {
			if (dl) {
				memcpy(*dir, path, dl);
				(*dir)[dl] = '\0';
			} else {
				strcpy(*dir, "/");
			}
		}
		*base = util_strdup(slash + 1);
	}
	if (!*dir || !*base || !**base) {
		if (*dir && *base)
			error("'%s' names a folder, not a file", path);
		free(*dir);
		free(*base);
		*dir = *base = NULL;
		return -1;
	}
	return 0;
}

/* ------------------------------------------------------------------ */
/* Staging and committing */

/* The test hook: COTERIE_CRASH_AT=N ends the process (_exit(137), as a
 * kill -9 would) right after the N-th fsync, rename or removal that
 * replaces a result, so a test can stop a writer at each step. */
static atomic_int crash_count;

void atomicfile_crash_point(void)
{
	static atomic_int at = -1;
	int n = atomic_load(&at);
	if (n < 0) {
		const char *e = getenv("COTERIE_CRASH_AT");
		n = e && *e ? atoi(e) : 0;
		atomic_store(&at, n);
	}
	if (n > 0 && atomic_fetch_add(&crash_count, 1) + 1 == n)
		_exit(137);
}

/* Flush, sync and close w's file; 0 or -1 with a message naming path. */
static int finish(struct atomicfile *w, const char *path)
{
	flush(w);
	if (w->err)
		return error("cannot write '%s': %s", path, strerror(w->err));
	if (fsync(w->fd) != 0)
		return error("cannot write '%s': %s", path, strerror(errno));
	atomicfile_crash_point();
	int fd = w->fd;
	w->fd = -1;
	if (close(fd) != 0)
		return error("cannot write '%s': %s", path, strerror(errno));
	return 0;
}

/*
 * Stage path: write it through fill to DIR/.NAME.tmp-PID, flushed,
 * fsync()ed and closed. On success *tmp_out is that temporary name (caller
 * frees), ready for rename(); on failure it is removed and *tmp_out is NULL.
 */
static int stage(const char *path, atomicfile_fill_fn fill, const void *arg, char **tmp_out)
{
	char *dir, *base;
	*tmp_out = NULL;
	if (path_split(path, &dir, &base) != 0)
		return -1;
	size_t cap = strlen(base) + 32;
	char *tmpname = util_malloc(cap, 1);
	char *tmp = NULL;
	struct atomicfile w = { .fd = -1, .whole = UTIL_FNV_INIT };
	int rc = -1, made = 0;
	if (!tmpname)
		goto out;
	snprintf(tmpname, cap, ".%s.tmp-%ld", base, (long)getpid());
	tmp = atomicfile_path(dir, tmpname);
	w.buf = util_malloc(BUF_SIZE, 1);
	if (!tmp || !w.buf)
		goto out;
	w.fd = open(tmp, O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC | O_NOFOLLOW, 0666);
	if (w.fd < 0) {
		error("cannot write '%s': %s", path, strerror(errno));
		goto out;
	}
	made = 1;
	if (fill(&w, arg) != 0 || finish(&w, path) != 0)
		goto out;
	made = 0;
	*tmp_out = tmp;
	tmp = NULL;
	rc = 0;
out:
	if (w.fd >= 0)
		close(w.fd);
	if (made)
		unlink(tmp);
	free(w.buf);
	free(tmp);
	free(tmpname);
	free(dir);
	free(base);
	return rc;
}

/* Rename a staged file onto path; on failure the staged file is removed.
 * Frees tmp. */
static int commit(char *tmp, const char *path)
{
	int rc = 0;
	if (rename(tmp, path) != 0) {
		rc = error("cannot replace '%s': %s", path, strerror(errno));
		unlink(tmp);
	}
	free(tmp);
	if (rc == 0)
		atomicfile_crash_point();
	return rc;
}

int atomicfile_replace(const char *path, atomicfile_fill_fn fill, const void *arg)
{
	char *tmp, *dir, *base;
	if (stage(path, fill, arg, &tmp) || commit(tmp, path))
		return -1;
	if (path_split(path, &dir, &base) != 0)
		return -1;
	int rc = util_sync_dir(dir);
	atomicfile_crash_point();
	free(dir);
	free(base);
	return rc;
}

int atomicfile_stage_as(const char *path, const char *name, atomicfile_fill_fn fill,
			const void *arg, uint64_t *size, uint64_t *sum)
{
	struct atomicfile w = { .fd = -1, .whole = UTIL_FNV_INIT };
	int rc = -1, made;
	w.buf = util_malloc(BUF_SIZE, 1);
	if (!w.buf)
		return -1;
	w.fd = open(path, O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC | O_NOFOLLOW, 0666);
	made = w.fd >= 0;
	if (w.fd < 0) {
		error("cannot write '%s': %s", name, strerror(errno));
	} else if (fill(&w, arg) == 0 && finish(&w, name) == 0) {
		*size = w.total;
		*sum = w.whole;
		rc = 0;
	}
	if (w.fd >= 0)
		close(w.fd);
	if (rc && made)
		unlink(path);
	free(w.buf);
	return rc;
}

void atomicfile_set_init(struct atomicfile_set *set)
{
	memset(set, 0, sizeof *set);
}

int atomicfile_set_stage(struct atomicfile_set *set, const char *dir, const char *name,
			 atomicfile_fill_fn fill, const void *arg)
{
	if (set->n == ATOMICFILE_SET_MAX)
		BUG("more than %d files staged together", ATOMICFILE_SET_MAX);
	char *path = atomicfile_path(dir, name);
	if (!path)
		return -1;
	char *tmp;
	if (stage(path, fill, arg, &tmp)) {
		free(path);
		return -1;
	}
	set->path[set->n] = path;
	set->tmp[set->n] = tmp;
	set->n++;
	return 0;
}

int atomicfile_set_commit(struct atomicfile_set *set, const char *dir)
{
	int rc = 0;
	for (size_t i = 0; i < set->n; i++) {
		if (rc == 0) {
			rc = commit(set->tmp[i], set->path[i]);
		} else {
			unlink(set->tmp[i]);
			free(set->tmp[i]);
		}
		set->tmp[i] = NULL;
	}
	if (rc == 0) {
		rc = util_sync_dir(dir);
		atomicfile_crash_point();
	}
	atomicfile_set_release(set);
	return rc;
}

void atomicfile_set_release(struct atomicfile_set *set)
{
	for (size_t i = 0; i < set->n; i++) {
		if (set->tmp[i]) {
			unlink(set->tmp[i]);
			free(set->tmp[i]);
		}
		free(set->path[i]);
	}
	set->n = 0;
}
