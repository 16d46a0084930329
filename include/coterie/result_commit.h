/*
 * result_commit: replacing a result folder's files as one, so that at
 * every instant the folder holds the whole previous result or the whole
 * new one, whatever the moment a writer is killed.
 *
 * A writer stages every new file under a hidden name (DIR/.NAME.staged,
 * flushed, fsync()ed), then writes the commit record DIR/.coterie.commit
 * (the run's identity, the graph's fingerprint, each staged file with its
 * size and FNV-1a, the files the result drops) and renames it into place:
 * that rename is the commit point. Then it rolls forward: renames the
 * staged files onto their names, removes the dropped ones, and renames
 * the record onto DIR/.coterie.manifest, which lists the files of the
 * result now in place. A writer that finds a record (result_commit_recover(),
 * run when the folder's lock is taken) rolls it forward; without a record,
 * staged files are stale and removed. A reader never writes: it reads
 * through the record (result_file()). The record's format is in
 * coterie-files(5).
 *
 * No curses, no exit: errors through error() and -1.
 */
#ifndef COTERIE_RESULT_COMMIT_H
#define COTERIE_RESULT_COMMIT_H

#include <stdint.h>

#include "atomicfile.h"

#define RESULT_COMMIT_RECORD ".coterie.commit"
#define RESULT_MANIFEST ".coterie.manifest"
#define RESULT_COMMIT_MAX 16

struct result_commit;

/* A commit of a new result into dir (borrowed; must exist), for a graph
 * of fingerprint fp; its run identity is drawn here. NULL when out of
 * memory (reported). Free with result_commit_free(). */
struct result_commit *result_commit_new(const char *dir, uint64_t fp);
/* Remove the staged files of a commit not finished, free c. NULL: no-op. */
void result_commit_free(struct result_commit *c);

/* Stage DIR/name through fill (arg borrowed) as DIR/.name.staged.
 * Returns 0 or -1 with a message (nothing of this file left). */
int result_commit_stage(struct result_commit *c, const char *name, atomicfile_fill_fn fill,
			const void *arg);
/* Stage DIR/name as a copy of the file from (borrowed). 0 or -1. */
int result_commit_stage_copy(struct result_commit *c, const char *name, const char *from);
/* The new result has no DIR/name: removed when the commit rolls forward. */
void result_commit_drop(struct result_commit *c, const char *name);
/* DIR/name, already there, stays and belongs to the new result too. */
void result_commit_keep(struct result_commit *c, const char *name);

/* The commit point and what follows it: the record renamed into place,
 * the staged files onto their names, the dropped ones removed, the record
 * onto the manifest. Returns 0 once committed (a failure while rolling
 * forward is a warning: the next writer finishes it, readers read
 * through), or -1 with a message when nothing was replaced. The caller
 * holds the folder's lock (dirlock.h). */
int result_commit_finish(struct result_commit *c);

/* For a writer that has just taken dir's lock: roll forward a commit
 * record left by a writer that died after its commit point, then remove
 * staged files no record names. Returns 0, or -1 when a record could not
 * be rolled forward (reported). */
int result_commit_recover(const char *dir);

/* The path a reader opens for the result file DIR/name: the staged file
 * when a commit record names it and it is not renamed yet, a path that
 * names no file when the record drops name, else DIR/name. Never writes.
 * Caller frees with free(); NULL when out of memory (reported). */
char *result_file(const char *dir, const char *name);

/* 1 when dir holds a commit record (a commit not rolled forward yet). */
int result_commit_pending(const char *dir);

#endif
