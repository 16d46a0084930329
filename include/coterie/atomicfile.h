/*
 * atomicfile: the one way the program replaces a file. A fill function
 * writes into a buffered struct atomicfile opened on DIR/.NAME.tmp-PID;
 * the file is flushed, fsync()ed and closed with every return value
 * checked ("staged"), then renamed onto DIR/NAME and the folder fsync()ed
 * ("committed"). A reader, or a crash, sees the old file or the new one,
 * never a part of one; any failure removes the temporary file.
 *
 * A struct atomicfile_set stages several files before any is renamed, so
 * a full disk leaves a folder whose files all belong together.
 */
#ifndef COTERIE_ATOMICFILE_H
#define COTERIE_ATOMICFILE_H

#include <stddef.h>
#include <stdint.h>

#include "util.h"

/* An open temporary file with its buffer. Write errors are collected (the
 * first errno) and reported when the file is staged, so fill functions
 * need not check every call; long loops may stop early on
 * atomicfile_failed(). */
struct atomicfile;

/* Writes the contents of a file through w; returns 0, or -1 after
 * reporting its own error (I/O errors are reported by the stager). */
typedef int (*atomicfile_fill_fn)(struct atomicfile *w, const void *arg);

void atomicfile_write(struct atomicfile *w, const void *data, size_t n);
void atomicfile_str(struct atomicfile *w, const char *s);
void atomicfile_printf(struct atomicfile *w, const char *fmt, ...) COTERIE_PRINTF(2, 3);
/* A node name as a TSV field: TAB, LF, CR and backslash as C escapes. */
void atomicfile_tsv_name(struct atomicfile *w, const char *s);

/* Direct access for hot loops: a pointer to at least want bytes of
 * buffer (want <= 64 KiB), then atomicfile_advance() by what was used. */
char *atomicfile_room(struct atomicfile *w, size_t want);
void atomicfile_advance(struct atomicfile *w, size_t n);

/* 1 once a write failed (the error is reported when staging ends). */
int atomicfile_failed(const struct atomicfile *w);

/* Start a running FNV-1a checksum of every byte written from now on
 * (util_fnv1a()), and read it. Off by default: a large text file does not
 * pay for it. */
void atomicfile_sum_start(struct atomicfile *w);
uint64_t atomicfile_sum(const struct atomicfile *w);

/* dir + "/" + name, without doubling a trailing slash. Caller frees with
 * free(); NULL when out of memory (reported). */
char *atomicfile_path(const char *dir, const char *name);

/* Replace path by what fill writes (arg passed on, borrowed): staged,
 * renamed, folder synced. Returns 0 or -1 with a message naming path. */
int atomicfile_replace(const char *path, atomicfile_fill_fn fill, const void *arg);

/* Write path itself (not a temporary name: path is already a staged
 * name, see result_commit.h) through fill (arg borrowed), flushed,
 * fsync()ed and closed; *size and *sum get its length and the FNV-1a of
 * all its bytes (util_fnv1a()). Messages name the file as name. Returns
 * 0, or -1 with a message and path removed. */
int atomicfile_stage_as(const char *path, const char *name, atomicfile_fill_fn fill,
			const void *arg, uint64_t *size, uint64_t *sum);

/* Files staged together, renamed together. */
#define ATOMICFILE_SET_MAX 8
struct atomicfile_set {
	size_t n;
	char *path[ATOMICFILE_SET_MAX];  /* owned */
	char *tmp[ATOMICFILE_SET_MAX];   /* owned; staged, not yet renamed */
};

void atomicfile_set_init(struct atomicfile_set *set);
/* Stage DIR/name through fill (arg borrowed). Returns 0 or -1 with a
 * message; on failure nothing of this file is left. */
int atomicfile_set_stage(struct atomicfile_set *set, const char *dir, const char *name,
			 atomicfile_fill_fn fill, const void *arg);
/* Rename the staged files in the order they were staged, then sync dir.
 * Returns 0 or -1 (the first failure; the files not yet renamed are
 * removed). The set is empty afterwards. */
int atomicfile_set_commit(struct atomicfile_set *set, const char *dir);
/* A test hook, not for users: with COTERIE_CRASH_AT=N in the
 * environment, the N-th call in the process (counting every fsync of a
 * staged file, every rename and every folder sync made here, and the calls
 * of other writers of a result folder after a removal) ends the process
 * with _exit(137), as a kill -9 there would. Does nothing otherwise. */
void atomicfile_crash_point(void);
/* Remove whatever is staged and not committed, free the names. */
void atomicfile_set_release(struct atomicfile_set *set);

#endif
