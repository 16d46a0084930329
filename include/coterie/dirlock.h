/*
 * dirlock: one writer per result folder. A process that may write a
 * folder (a fit, an explorer with a fit to save) takes an flock() on
 * DIR/.coterie.lock, which holds its pid and command line; a second writer
 * is refused with them. Readers (show, compare, an explorer that only
 * browses) take no lock and are never refused.
 *
 * The kernel drops an flock() when its process dies, however it dies
 * (kill -9 included), so a lock file left by a dead process is simply
 * taken over: no pid is ever tested for being alive.
 *
 * While it holds the lock the writer also keeps DIRLOCK_SPARE descriptors
 * in reserve, let go just for its writes (dirlock_spare()), so a run that
 * started cannot fail at its end for want of a descriptor; and taking the
 * lock removes the temporary files (.NAME.tmp-PID, atomicfile.h) that
 * other processes left in the folder: with the lock held, none is live.
 */
#ifndef COTERIE_DIRLOCK_H
#define COTERIE_DIRLOCK_H

/* The name of the lock file in a folder. */
#define DIRLOCK_NAME ".coterie.lock"
/* Descriptors a write needs, the lock's own one held: one at a time (the
 * file staged, the folder synced, the probe), and one more for the lock
 * of the folder a result goes to when its own cannot take it. */
#define DIRLOCK_SPARE 2

struct dirlock;

/* A lock of folder dir for the process described by who (its command
 * line), not taken yet. Both strings are copied. Returns NULL when out of
 * memory (reported). Free with dirlock_free(). */
struct dirlock *dirlock_new(const char *dir, const char *who);

/* Take the lock (the folder must exist); 0 at once when already held.
 * Returns -1 with a message: when another process holds it, naming its
 * pid and command; when too few descriptors are left, naming the limit
 * (ulimit -n). On success the stale temporary files of the folder are
 * removed. */
int dirlock_take(struct dirlock *l);

/* 1 when l (may be NULL) holds its lock. */
int dirlock_held(const struct dirlock *l);

/* Let go of the spare descriptors (give 0) before a write, take them back
 * (give 1) after it. Returns 0, or -1 (errno set, no message) when they
 * cannot be taken back: the next write may still succeed. NULL, or a lock
 * not held, is a no-op. */
int dirlock_spare(struct dirlock *l, int give);

/* Take the spare descriptors up front, after dirlock_take(), so that a
 * long run cannot fail at its end for want of one. Returns 0, or -1 with
 * a message naming the limit (ulimit -n). */
int dirlock_reserve(struct dirlock *l);

/* The folder l locks (borrowed from l). */
const char *dirlock_dir(const struct dirlock *l);

/* Release the lock (the lock file is removed) and free l. NULL is a no-op. */
void dirlock_free(struct dirlock *l);

/* Remove from folder dir the temporary files of atomicfile.h
 * (.NAME.tmp-PID) and the probes of result_prepare_dir() that are not
 * this process's. Only for a holder of the folder's lock. Returns the
 * number removed. */
int dirlock_clean_stale(const char *dir);

#endif
