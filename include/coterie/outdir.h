/*
 * outdir: the result folder of a run, over the run's life, for both
 * `coterie fit` and the explorer: reading the checkpoint a run continues
 * from, the periodic checkpoints while the fit runs, and the final write.
 *
 * Periodic checkpoints carry a savepoint (fit.h, struct fit_savepoint):
 * outdir_tick() asks the fit for one (fit_want_savepoint()) when a
 * checkpoint is due and writes the snapshot that brings it, so a fit
 * resumed from any checkpoint (after a kill -9, say) ends with the bytes
 * the uninterrupted fit would have written. A fit continued as one start
 * makes no savepoints; its snapshot is written as it is.
 *
 * No curses, no exit: errors are reported through error() and returned.
 */
#ifndef COTERIE_OUTDIR_H
#define COTERIE_OUTDIR_H

#include "checkpoint.h"
#include "fit.h"
#include "result.h"

struct dirlock;
struct graph;
struct holdout;

/* Read the fit DIR holds into ck (released by the caller with
 * checkpoint_release()), to continue it: DIR/checkpoint.partial.cot, the
 * unfinished fit, when it is there and newer than DIR/checkpoint.cot (a
 * notice says so), else DIR/checkpoint.cot. Returns 0 or -1 with a
 * message. */
int outdir_read(const char *dir, struct checkpoint *ck);

/* 1 when DIR holds checkpoint.partial.cot (a fit running, or stopped
 * before its final write), else 0. */
int outdir_has_partial(const char *dir);

/* Refuse to replace the result of another graph: when DIR holds a result
 * (checkpoint.cot, else run.json) whose graph fingerprint is not g's
 * (borrowed), or one that cannot be read, return -1 with a message saying
 * what is there and how to go on (--force, -o), unless force, which only
 * says that it will be replaced. Returns 0 when DIR holds no result, one
 * of g, an unfinished fit of g (checkpoint.partial.cot: a run already
 * allowed to replace it; a notice says so), or force is set. */
int outdir_check_graph(const char *dir, const struct graph *g, int force);

/* Continue the fit saved in ck: make p (the saved parameters, already
 * merged with the command line by the caller) what fit.h says such a fit
 * runs with (one start and no reseeding when ck has no savepoint), and
 * fill origin, which points into ck (borrowed). */
void outdir_resume(const struct checkpoint *ck, struct fit_params *p, struct fit_origin *origin);

struct outdir_config {
	const char *dir;            /* the folder (borrowed; made when first written) */
	const struct graph *g;      /* the graph written (borrowed; outlives the outdir) */
	struct fit_params params;   /* as written to the checkpoint and run.json */
	double every;               /* seconds between periodic checkpoints; > 0 */
	int one_start;              /* the fit goes on as one start (resumed from a
				     * checkpoint without savepoint): no savepoints */
	int background;             /* write periodic checkpoints on a thread of
				     * their own (the explorer's screen must not wait) */
	int continues;              /* dir holds the result this run continues
				     * (resumed in place): its k-selection.tsv,
				     * the search that chose k, is kept; and it is
				     * not written over once another process
				     * rewrote it (outdir_changed()) */
	struct dirlock *lock;       /* the writer's lock of dir (borrowed; NULL:
				     * none); taken before the first write if
				     * not held yet (dirlock.h) */
};

struct outdir;

/* Returns NULL when out of memory (reported). Free with outdir_free(). */
struct outdir *outdir_new(const struct outdir_config *cfg);
/* Waits for a periodic write in progress. outdir_free(NULL) is a no-op. */
void outdir_free(struct outdir *od);

/* Call often while fit f (borrowed) runs: asks for a savepoint when a
 * checkpoint is due and writes it, as DIR/checkpoint.partial.cot (the
 * result in DIR is left whole), when the fit brings it. A failed write
 * is reported and the next one tried a period later. Does nothing once
 * the fit has ended. */
void outdir_tick(struct outdir *od, struct fit *f);

/* Make the next periodic checkpoint due now (a follower's save request,
 * follow.h); outdir_tick() then writes it as usual. */
void outdir_due_now(struct outdir *od);

/* The final write: waits for a periodic write, makes the folder, takes
 * its lock, and replaces the result there as one (result_commit.h) by
 * k-selection.tsv (when meta->selection; else, when the run continues the
 * unfinished fit, that fit's k-selection.partial.tsv), the whole folder
 * from model m, and held-out-links.tsv when check is not NULL (its pairs
 * scored with m->F and m->epsilon); the same commit drops the files of an
 * earlier run that this one did not write: held-out-links.tsv, and
 * k-selection.tsv unless config.continues the result in its folder, and
 * the partial files (checkpoint.partial.cot, k-selection.partial.tsv).
 * All borrowed. Returns 0 or -1 with a message. A result that cannot be
 * written to the folder (locked by another writer, rewritten since it was
 * opened, read-only, full, no descriptor) is written elsewhere before -1
 * is returned: to the sibling folder DIR.saved-PID, else to
 * $TMPDIR/NAME.saved-PID (/tmp without TMPDIR); outdir_saved_in() names
 * it and the message says so. */
int outdir_write(struct outdir *od, const struct result_model *m,
		 const struct result_meta *meta, const struct holdout *check);

/* The folder the last outdir_write() that failed saved the result in
 * instead, or NULL (borrowed from od). */
const char *outdir_saved_in(const struct outdir *od);

/* 1 when config.continues and another process has rewritten the folder's
 * checkpoint since od was made or last wrote it: the folder no longer
 * holds the result this run continues, and od does not write over it.
 * 0 while a periodic write runs on its thread. */
int outdir_changed(const struct outdir *od);

/* Ask fit f (borrowed) for a savepoint at the end of its sweep in
 * progress, for a write the caller makes itself (the explorer's w): the
 * snapshot that brings it is kept for outdir_take_asked() instead of
 * being written as a periodic checkpoint. Returns 0, or -1 when the fit
 * makes no savepoints (config.one_start): write its snapshot now. */
int outdir_ask(struct outdir *od, struct fit *f);
/* The snapshot asked for by outdir_ask(), once outdir_tick() found it;
 * else NULL. Caller releases with snapshot_release(). */
struct snapshot *outdir_take_asked(struct outdir *od);

#endif
