/*
 * result_commit: a result folder's files replaced as one (see
 * result_commit.h).
 *
 * The idea: a journal of one record. Before the record is in place the
 * folder holds the previous result (the staged files are hidden names no
 * reader opens); once it is, the new result is decided, and each of its
 * files is the staged one until renamed, then the final one. Rolling
 * forward is idempotent (a staged file already renamed is skipped, a
 * dropped file already gone is fine), so a writer killed while rolling
 * forward is finished by the next one.
 *
 * Invariants: only a holder of the folder's lock stages, commits or rolls
 * forward, and it recovers first, so a staged file is either named by the
 * record in place or stale; a reader never renames (a reader acting on an
 * old record could otherwise rename a newer writer's uncommitted file).
 * The record is written whole (staged, fsync()ed) before its rename, so a
 * record that does not parse was not written by coterie: it is warned of
 * and ignored.
 *
 * The one thing a newcomer gets wrong: every name in a record is checked
 * (a plain file name, no slash, no leading dot) before it is joined to
 * the folder: the record is input like any other.
 */
#include "coterie/result_commit.h"

#include <dirent.h>
#include <errno.h>
#include <fcntl.h>
#include <inttypes.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include <unistd.h>

#include "coterie/util.h"

#define NAME_MAX_LEN 64
#define RECORD_MAX 4096
#define STAGED_SUFFIX ".staged"

enum entry_kind { PUT, DROP, KEEP };

struct entry {
	char name[NAME_MAX_LEN];
	enum entry_kind kind;
	uint64_t size, sum;
};

struct record {
	uint64_t run, fingerprint;
	size_t n;
	struct entry e[RESULT_COMMIT_MAX];
};

struct result_commit {
	char *dir;
	struct record r;
	int done;      /* committed: the staged files are the record's */
};

static const char *const kind_words[] = { "put", "drop", "keep" };

/* A name a record may hold: a plain file name. */
static int name_ok(const char *s)
{
	size_t len = strlen(s);
	return len > 0 && len < NAME_MAX_LEN && s[0] != '.' && !strchr(s, '/');
}

/* DIR/.NAME.staged (or another suffix); caller frees. */
static char *hidden_path(const char *dir, const char *name, const char *suffix)
{
	char buf[NAME_MAX_LEN + 16];
	snprintf(buf, sizeof buf, ".%s%s", name, suffix);
	return atomicfile_path(dir, buf);
}

/* ------------------------------------------------------------------ */
/* The record as text */

static int fill_record(struct atomicfile *w, const void *arg)
{
	const struct record *r = arg;
	atomicfile_printf(w, "coterie commit 1\nrun %016" PRIx64 "\ngraph %016" PRIx64 "\n", r->run,
			  r->fingerprint);
	for (size_t i = 0; i < r->n; i++) {
		const struct entry *e = &r->e[i];
		atomicfile_printf(w, "%s %s", kind_words[e->kind], e->name);
		if (e->kind == PUT)
			atomicfile_printf(w, " %" PRIu64 " %016" PRIx64, e->size, e->sum);
		atomicfile_str(w, "\n");
	}
	atomicfile_str(w, "end\n");
	return 0;
}

/* One line of a record after its head into r; 1 for "end", 0, or -1. */
static int parse_line(char *line, struct record *r)
{
	char verb[8], name[NAME_MAX_LEN + 1];
	if (!strcmp(line, "end"))
		return 1;
	int k = 0;
	if (sscanf(line, "%7s %64s%n", verb, name, &k) != 2 || !name_ok(name) || r->n == RESULT_COMMIT_MAX)
		return -1;
	struct entry *e = &r->e[r->n];
	memset(e, 0, sizeof *e);
	strcpy(e->name, name);
	if (!strcmp(verb, "put")) {
		int k2 = 0;
		e->kind = PUT;
		if (sscanf(line + k, " %" SCNu64 " %16" SCNx64 "%n", &e->size, &e->sum, &k2) != 2 ||
		    line[k + k2] != '\0')
			return -1;
	} else if (!strcmp(verb, "drop") || !strcmp(verb, "keep")) {
		e->kind = verb[0] == 'd' ? DROP : KEEP;
		if (line[k] != '\0')
			return -1;
	} else {
		return -1;
	}
	r->n++;
	return 0;
}

/* Read DIR/.coterie.commit: 1 and r filled, 0 when there is none, -1 when
 * it does not parse (warned of when warn). */
static int read_record(const char *dir, struct record *r, int warn)
{
	char *path = atomicfile_path(dir, RESULT_COMMIT_RECORD);
	int fd = path ? open(path, O_RDONLY | O_CLOEXEC | O_NOFOLLOW) : -1;
	free(path);
	if (fd < 0)
		return 0;
	char buf[RECORD_MAX + 1];
	ssize_t len = read(fd, buf, RECORD_MAX);
	close(fd);
	memset(r, 0, sizeof *r);
	int rc = -1;
	if (len > 0 && len < RECORD_MAX) {
		buf[len] = '\0';
		char *save = NULL, *line = strtok_r(buf, "\n", &save);
		if (line && !strcmp(line, "coterie commit 1") &&
		    (line = strtok_r(NULL, "\n", &save)) &&
		    sscanf(line, "run %16" SCNx64, &r->run) == 1 &&
		    (line = strtok_r(NULL, "\n", &save)) &&
		    sscanf(line, "graph %16" SCNx64, &r->fingerprint) == 1) {
			int st = 0;
			while (st == 0 && (line = strtok_r(NULL, "\n", &save)))
				st = parse_line(line, r);
			if (st == 1 && !strtok_r(NULL, "\n", &save))
				rc = 1;
		}
	}
	if (rc < 0 && warn) {
		char esc[300];
		warning("'%s' holds a commit record (%s) that is not coterie's; it is ignored",
			util_escape(dir, esc, sizeof esc, 1), RESULT_COMMIT_RECORD);
	}
	return rc;
}

/* ------------------------------------------------------------------ */
/* Readers */

char *result_file(const char *dir, const char *name)
{
	struct record r;
	if (read_record(dir, &r, 0) == 1) {
		for (size_t i = 0; i < r.n; i++) {
			if (strcmp(r.e[i].name, name) != 0)
				continue;
			if (r.e[i].kind == DROP)
				return hidden_path(dir, name, ".dropped");
			if (r.e[i].kind != PUT)
				break;
			char *staged = hidden_path(dir, name, STAGED_SUFFIX);
			if (!staged || access(staged, F_OK) == 0)
				return staged;
			free(staged); /* renamed already */
			break;
		}
	}
	return atomicfile_path(dir, name);
}

int result_commit_pending(const char *dir)
{
	struct record r;
	return read_record(dir, &r, 0) == 1;
}

/* ------------------------------------------------------------------ */
/* Writers */

struct result_commit *result_commit_new(const char *dir, uint64_t fp)
{
	struct result_commit *c = util_calloc(1, sizeof *c);
	if (!c)
		return NULL;
	if (!(c->dir = util_strdup(dir))) {
		free(c);
		return NULL;
	}
	struct timespec ts;
	clock_gettime(CLOCK_REALTIME, &ts);
	uint64_t seed[4] = { (uint64_t)ts.tv_sec, (uint64_t)ts.tv_nsec, (uint64_t)getpid(), fp };
	c->r.run = util_fnv1a(UTIL_FNV_INIT, seed, sizeof seed);
	c->r.fingerprint = fp;
	return c;
}

/* Remove every staged file of r in dir. */
static void unstage(const char *dir, const struct record *r)
{
	for (size_t i = 0; i < r->n; i++) {
		if (r->e[i].kind != PUT)
			continue;
		char *p = hidden_path(dir, r->e[i].name, STAGED_SUFFIX);
		if (p)
			unlink(p);
		free(p);
	}
}

void result_commit_free(struct result_commit *c)
{
	if (!c)
		return;
	if (!c->done)
		unstage(c->dir, &c->r);
	free(c->dir);
	free(c);
}

/* The entry of name in c, made when missing. */
static struct entry *entry_of(struct result_commit *c, const char *name)
{
	for (size_t i = 0; i < c->r.n; i++)
		if (!strcmp(c->r.e[i].name, name))
			return &c->r.e[i];
	if (c->r.n == RESULT_COMMIT_MAX || !name_ok(name))
		BUG("result_commit: cannot add '%s'", name);
	struct entry *e = &c->r.e[c->r.n++];
	memset(e, 0, sizeof *e);
	strcpy(e->name, name);
	e->kind = DROP; /* until staged or kept */
	return e;
}

int result_commit_stage(struct result_commit *c, const char *name, atomicfile_fill_fn fill,
			const void *arg)
{
	char *path = hidden_path(c->dir, name, STAGED_SUFFIX);
	char *final = atomicfile_path(c->dir, name);
	uint64_t size, sum;
	int rc = path && final ? atomicfile_stage_as(path, final, fill, arg, &size, &sum) : -1;
	if (rc == 0) {
		struct entry *e = entry_of(c, name);
		e->kind = PUT;
		e->size = size;
		e->sum = sum;
	}
	free(path);
	free(final);
	return rc;
}

static int fill_copy(struct atomicfile *w, const void *arg)
{
	const char *from = arg;
	int fd = open(from, O_RDONLY | O_CLOEXEC);
	if (fd < 0)
		return error("cannot read '%s': %s", from, strerror(errno));
	char buf[1 << 16];
	ssize_t k;
	while ((k = read(fd, buf, sizeof buf)) > 0)
		atomicfile_write(w, buf, (size_t)k);
	int e = errno;
	close(fd);
	return k < 0 ? error("cannot read '%s': %s", from, strerror(e)) : 0;
}

int result_commit_stage_copy(struct result_commit *c, const char *name, const char *from)
{
	return result_commit_stage(c, name, fill_copy, from);
}

void result_commit_drop(struct result_commit *c, const char *name)
{
	struct entry *e = entry_of(c, name);
	if (e->kind == PUT)
		BUG("result_commit: '%s' both staged and dropped", name);
	e->kind = DROP;
}

void result_commit_keep(struct result_commit *c, const char *name)
{
	entry_of(c, name)->kind = KEEP;
}

/* Every step after the commit point; idempotent. 0, or -1 when a step
 * failed (warned of). */
static int roll_forward(const char *dir, const struct record *r)
{
	int rc = 0;
	char esc[300];
	util_escape(dir, esc, sizeof esc, 1);
	for (size_t i = 0; i < r->n; i++) {
		const struct entry *e = &r->e[i];
		if (e->kind == KEEP)
			continue;
		char *final = atomicfile_path(dir, e->name);
		char *staged = hidden_path(dir, e->name, STAGED_SUFFIX);
		if (!final || !staged) {
			rc = -1;
		} else if (e->kind == PUT) {
			if (rename(staged, final) == 0) {
				atomicfile_crash_point();
			} else if (errno != ENOENT || access(final, F_OK) != 0) {
				warning("cannot put '%s' in place in '%s': %s", e->name, esc,
					strerror(errno));
				rc = -1;
			}
		} else if (unlink(final) == 0) {
			atomicfile_crash_point();
		} else if (errno != ENOENT) {
			warning("cannot remove '%s' from '%s': %s", e->name, esc, strerror(errno));
			rc = -1;
		}
		free(final);
		free(staged);
	}
	if (rc)
		return rc;
	/* the staged files are in place before the record becomes the manifest */
	util_sync_dir(dir);
	atomicfile_crash_point();
	char *rec = atomicfile_path(dir, RESULT_COMMIT_RECORD);
	char *man = atomicfile_path(dir, RESULT_MANIFEST);
	if (!rec || !man || rename(rec, man) != 0) {
		warning("cannot finish the commit in '%s': %s", esc, strerror(errno));
		rc = -1;
	} else {
		atomicfile_crash_point();
		util_sync_dir(dir);
		atomicfile_crash_point();
	}
	free(rec);
	free(man);
	return rc;
}

int result_commit_finish(struct result_commit *c)
{
	char *rec = atomicfile_path(c->dir, RESULT_COMMIT_RECORD);
	if (!rec || atomicfile_replace(rec, fill_record, &c->r) != 0) {
		free(rec);
		return -1; /* not committed: result_commit_free() unstages */
	}
	free(rec);
	c->done = 1;
	roll_forward(c->dir, &c->r);
	return 0;
}

/* 1 when name is ".X.staged". */
static int staged_name(const char *name)
{
	size_t len = strlen(name), sl = strlen(STAGED_SUFFIX);
	return name[0] == '.' && len > sl + 1 && !strcmp(name + len - sl, STAGED_SUFFIX);
}

int result_commit_recover(const char *dir)
{
	struct record r;
	int have = read_record(dir, &r, 1), rc = 0;
	if (have == 1) {
		char esc[300];
		notice("finishing the result a writer of '%s' committed before it stopped",
		       util_escape(dir, esc, sizeof esc, 1));
		rc = roll_forward(dir, &r);
	} else if (have < 0) {
		char *rec = atomicfile_path(dir, RESULT_COMMIT_RECORD);
		if (rec)
			unlink(rec);
		free(rec);
	}
	if (rc)
		return error("cannot finish the result committed in '%s'", dir);
	DIR *d = opendir(dir);
	if (!d)
		return 0;
	struct dirent *e;
	while ((e = readdir(d)) != NULL)
		if (staged_name(e->d_name))
			unlinkat(dirfd(d), e->d_name, 0);
	closedir(d);
	return 0;
}
