/*
 * dirlock: one writer per result folder (see dirlock.h).
 *
 * The idea: flock(LOCK_EX | LOCK_NB) on DIR/.coterie.lock. The lock lives
 * in the kernel and dies with its process, so a dead holder (kill -9, a
 * crash) leaves at most a file that the next writer locks at once. The
 * file's contents (pid, command line) are only for the message a refused
 * writer prints; they are never trusted for the decision.
 *
 * Invariants: the lock file is removed only by its holder, while it still
 * holds the lock; so a taker that opened the file just before it was
 * removed finds, once it holds the lock, that the path names another file
 * (or none), and starts again. A process holds the lock of a folder at
 * most once (flock() locks belong to the open file, not to the process).
 *
 * The one thing a newcomer gets wrong: with the lock held, every
 * .NAME.tmp-PID in the folder that is not this process's belongs to a
 * writer that died (a live one would hold the lock), whatever its PID
 * says: PIDs are reused, so none is looked up.
 */
#include "coterie/dirlock.h"

#include <dirent.h>
#include <errno.h>
#include <fcntl.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/file.h>
#include <sys/resource.h>
#include <sys/stat.h>
#include <unistd.h>

#include "coterie/atomicfile.h"
#include "coterie/result_commit.h"
#include "coterie/util.h"

struct dirlock {
	char *dir;
	char *path;      /* DIR/.coterie.lock */
	char *who;
	int fd;          /* the locked file, -1 when not held */
	int spare[DIRLOCK_SPARE];
};

struct dirlock *dirlock_new(const char *dir, const char *who)
{
	struct dirlock *l = util_calloc(1, sizeof *l);
	if (!l)
		return NULL;
	l->fd = -1;
	for (int i = 0; i < DIRLOCK_SPARE; i++)
		l->spare[i] = -1;
	l->dir = util_strdup(dir);
	l->who = util_strdup(who ? who : "coterie");
	l->path = l->dir ? atomicfile_path(dir, DIRLOCK_NAME) : NULL;
	if (!l->dir || !l->who || !l->path) {
		dirlock_free(l);
		return NULL;
	}
	return l;
}

int dirlock_held(const struct dirlock *l)
{
	return l && l->fd >= 0;
}

const char *dirlock_dir(const struct dirlock *l)
{
	return l->dir;
}

/* The message for a descriptor that could not be had. */
static int say_no_fd(const struct dirlock *l, int e)
{
	char esc[400];
	util_escape(l->dir, esc, sizeof esc, 1);
	if (e != EMFILE && e != ENFILE)
		return error("cannot lock '%s': %s", esc, strerror(e));
	struct rlimit rl;
	if (e == EMFILE && getrlimit(RLIMIT_NOFILE, &rl) == 0 && rl.rlim_cur != RLIM_INFINITY)
		return error("too few file descriptors to write '%s': the limit (ulimit -n) is %llu "
			     "and this run needs a few more; raise it", esc,
			     (unsigned long long)rl.rlim_cur);
	return error("too few file descriptors to write '%s' (%s)", esc, strerror(e));
}

/* Say who holds the lock of l, from the lock file fd's contents. */
static int say_held(const struct dirlock *l, int fd)
{
	char buf[600], dir[300], cmd[400];
	ssize_t k = pread(fd, buf, sizeof buf - 1, 0);
	buf[k > 0 ? k : 0] = '\0';
	util_escape(l->dir, dir, sizeof dir, 1);
	char *nl = strchr(buf, '\n');
	long pid = strtol(buf, NULL, 10);
	if (!nl || pid <= 0)
		return error("'%s' is being written by another process (its lock, %s, is held); "
			     "wait for it to end, or use -o to write elsewhere", dir, DIRLOCK_NAME);
	char *end = strchr(nl + 1, '\n');
	if (end)
		*end = '\0';
	util_escape(nl + 1, cmd, sizeof cmd, 1);
	return error("'%s' is being written by another process (pid %ld: %s); wait for it to "
		     "end, or use -o to write elsewhere", dir, pid, cmd);
}

int dirlock_take(struct dirlock *l)
{
	if (l->fd >= 0)
		return 0;
	for (int tries = 0; tries < 100; tries++) {
		int fd = open(l->path, O_RDWR | O_CREAT | O_CLOEXEC | O_NOFOLLOW, 0666);
		if (fd < 0)
			return say_no_fd(l, errno);
		if (flock(fd, LOCK_EX | LOCK_NB) != 0) {
			int e = errno;
			int rc = e == EWOULDBLOCK ? say_held(l, fd) : say_no_fd(l, e);
			close(fd);
			return rc;
		}
		struct stat a, b;
		if (fstat(fd, &a) != 0 || stat(l->path, &b) != 0 || a.st_dev != b.st_dev ||
		    a.st_ino != b.st_ino) {
			close(fd); /* removed by the holder we waited for: again */
			continue;
		}
		l->fd = fd;
		char line[64];
		int n = snprintf(line, sizeof line, "%ld\n", (long)getpid());
		if (ftruncate(fd, 0) != 0 || pwrite(fd, line, (size_t)n, 0) != n ||
		    pwrite(fd, l->who, strlen(l->who), n) < 0 ||
		    pwrite(fd, "\n", 1, n + (off_t)strlen(l->who)) != 1)
			warning("cannot record this process in '%s': %s", l->path, strerror(errno));
		dirlock_clean_stale(l->dir);
		/* a commit a dead writer left is finished before anything else */
		result_commit_recover(l->dir);
		return 0;
	}
	return error("cannot lock '%s': its lock file keeps changing", l->path);
}

int dirlock_spare(struct dirlock *l, int give)
{
	if (!l || l->fd < 0)
		return 0;
	for (int i = 0; i < DIRLOCK_SPARE; i++) {
		if (!give) {
			if (l->spare[i] >= 0)
				close(l->spare[i]);
			l->spare[i] = -1;
		} else if (l->spare[i] < 0 && (l->spare[i] = fcntl(l->fd, F_DUPFD_CLOEXEC, 0)) < 0) {
			return -1;
		}
	}
	return 0;
}

int dirlock_reserve(struct dirlock *l)
{
	return dirlock_spare(l, 1) ? say_no_fd(l, errno) : 0;
}

void dirlock_free(struct dirlock *l)
{
	if (!l)
		return;
	if (l->fd >= 0) {
		dirlock_spare(l, 0);
		unlink(l->path); /* while still held: see the invariants */
		close(l->fd);
	}
	free(l->dir);
	free(l->path);
	free(l->who);
	free(l);
}

/* 1 when name is ".X.tmp-PID" or ".coterie-probe-PID" of a pid not ours. */
static int stale_name(const char *name)
{
	const char *tail = NULL;
	if (!strncmp(name, ".coterie-probe-", 15))
		tail = name + 15;
	else if (name[0] == '.' && (tail = strstr(name, ".tmp-")) != NULL && tail > name + 1)
		tail += 5;
	if (!tail || !*tail)
		return 0;
	for (const char *c = tail; *c; c++)
		if (*c < '0' || *c > '9')
			return 0;
	return strtol(tail, NULL, 10) != (long)getpid();
}

int dirlock_clean_stale(const char *dir)
{
	DIR *d = opendir(dir);
	if (!d)
		return 0;
	int removed = 0;
	struct dirent *e;
	while ((e = readdir(d)) != NULL) {
		if (!stale_name(e->d_name))
			continue;
		if (unlinkat(dirfd(d), e->d_name, 0) == 0)
			removed++;
	}
	closedir(d);
	return removed;
}
