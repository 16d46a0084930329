/*
 * follow: a fit watched and steered through its result folder by another
 * process (`coterie explore DIR` on the folder of a running fit, perhaps
 * from another machine that shares the folder).
 *
 * Two small files beside the result, neither part of it (no manifest
 * entry, never read by show, compare or export):
 *   DIR/.coterie.progress  written by the fit (the folder's one writer)
 *                          about once a second: who writes (pid, host),
 *                          the state, sweep, l(F) and the newest trace
 *                          points of the start in progress;
 *   DIR/.coterie.request   written by anyone (a follower, or a user with
 *                          echo): one word, stop, pause, continue or
 *                          save; the fit takes it between sweeps and
 *                          removes it.
 * The format of both is in coterie-files(5).
 *
 * No curses, no exit: errors are reported through error() and returned.
 */
#ifndef COTERIE_FOLLOW_H
#define COTERIE_FOLLOW_H

#include <stdint.h>

#include "fit.h"

#define FOLLOW_PROGRESS ".coterie.progress"
#define FOLLOW_REQUEST ".coterie.request"
/* The newest trace points a progress file carries; a follower keeps the
 * rest from what it read before. */
#define FOLLOW_TRACE_MAX 256
/* A request file longer than this is not one (hostile or a mistake). */
#define FOLLOW_REQUEST_MAX 64
/* Seconds between progress files while nothing changes: a follower that
 * sees none for FOLLOW_SILENT seconds takes the fit for gone. */
#define FOLLOW_HEARTBEAT 2.0
#define FOLLOW_SILENT 30.0

enum follow_request {
	FOLLOW_NONE = 0,
	FOLLOW_STOP,     /* end as after an interrupt: the sweep ends, saved, exit 130 */
	FOLLOW_PAUSE,
	FOLLOW_CONTINUE, /* take a paused fit up again */
	FOLLOW_SAVE,     /* write the checkpoint (checkpoint.partial.cot) now */
};

/* The word of a request ("stop", ...), "" for FOLLOW_NONE. */
const char *follow_request_name(enum follow_request r);

/* What a progress file says. */
struct follow_progress {
	uint64_t pid;
	char host[64];               /* gethostname(), printable ASCII only */
	double written;              /* the writer's wall clock (seconds since 1970) */
	enum fit_state state;
	uint32_t start, starts, best_start;
	uint32_t sweep, plateau_sweep, max_sweeps, k;
	double seconds, sweeps_per_sec;
	enum follow_request taken;   /* the last request the fit took */
	uint32_t ntrace;             /* <= FOLLOW_TRACE_MAX, the newest points */
	struct trace_point trace[FOLLOW_TRACE_MAX];
};

/* Fill p from snapshot s (borrowed) and this process (pid, host, clock). */
void follow_progress_of(struct follow_progress *p, const struct snapshot *s,
			const struct fit_params *params);

/* The state, start, sweep, plateau and time of p into snapshot s (both
 * borrowed), for a reader that shows the followed fit. */
void follow_progress_apply(const struct follow_progress *p, struct snapshot *s);

/* Write p as DIR/.coterie.progress: a temporary file renamed into place,
 * not fsync()ed (a follower's view, not a result: after a crash it may be
 * missing or empty, and is then ignored). Only for the folder's writer.
 * Returns 0 or -1 with a message. */
int follow_progress_write(const char *dir, const struct follow_progress *p);

/* Read DIR/.coterie.progress into p. Returns 1 when read, 0 when there is
 * none, -1 when it is not a progress file (no message: a half-written or
 * foreign file is skipped, the next one read). What reads keeps the rules
 * of struct follow_progress: a host of printable ASCII, finite times,
 * rates and log-likelihoods, trace sweeps increasing. */
int follow_progress_read(const char *dir, struct follow_progress *p);

/* 1 when the writer of p is surely gone: on this host, its pid is dead;
 * elsewhere, p was written more than FOLLOW_SILENT seconds ago by this
 * machine's clock. A live fit writes at least every FOLLOW_HEARTBEAT. */
int follow_progress_stale(const struct follow_progress *p);

/* Ask the fit writing DIR for r: DIR/.coterie.request written through a
 * temporary file and a rename (a fit never reads half a request). It
 * replaces an earlier request not yet taken. Returns 0 or -1 with a
 * message. */
int follow_request_send(const char *dir, enum follow_request r);

/* The fit's side: take DIR/.coterie.request if there is one, remove it,
 * and return what it asks (FOLLOW_NONE: none). A file that is not a
 * request (not a regular file, too long, not one of the words) is removed
 * with a warning and FOLLOW_NONE returned. Only for the folder's writer. */
enum follow_request follow_request_take(const char *dir);

struct outdir;

/* The fit's side of following, for its watching thread (cli/fit.c). */
struct follow_host;

/* For the fit writing dir (borrowed; must outlive it) with parameters p
 * (copied): removes what an earlier fit or a dead follower left
 * (follow_clean()). Returns NULL when out of memory (reported). */
struct follow_host *follow_host_new(const char *dir, const struct fit_params *p);
/* Call each time the watching thread wakes: takes a request (pause,
 * continue and save are done here, through f and od, both borrowed; od
 * may be NULL) and writes the progress file when the fit published a new
 * sweep or state, at most every second, else every FOLLOW_HEARTBEAT.
 * Returns 1 when the request was stop: the caller ends the fit as after
 * an interrupt. */
int follow_host_tick(struct follow_host *h, struct fit *f, struct outdir *od);
/* Removes the progress and request files (call after the final write),
 * then frees h. NULL is a no-op. */
void follow_host_free(struct follow_host *h);

/* The writer's cleaning, at its start and at its end: remove a request
 * and a progress file left by an earlier fit or a dead follower. Returns
 * the number of files removed. */
int follow_clean(const char *dir);

#endif
