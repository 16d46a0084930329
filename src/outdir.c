/*
 * outdir: the result folder of a run (see outdir.h), shared by the batch
 * command and the explorer so that their checkpoints cannot drift apart.
 *
 * The idea: a periodic checkpoint is a request, not a picture. When one
 * is due, outdir_tick() asks the fit for a savepoint; the fitting thread
 * publishes one at the end of the next sweep, and the tick that finds it
 * (fit_take_savepoint()) writes that snapshot. So every checkpoint stands
 * at the end of a whole sweep with the state of the starts, as the one an
 * interrupt leaves.
 *
 * Periodic checkpoints go to checkpoint.partial.cot, never to the
 * result's checkpoint.cot: while a fit runs (or after it was killed) the
 * folder still holds the previous result whole, beside a resumable
 * checkpoint of the new fit that show does not take for the result. The
 * final write is one commit (result_commit.h): the new files, the files
 * of an earlier result this run did not write and the partial files
 * dropped, all at one commit point, so a kill at any moment leaves the
 * old result whole or the new one; outdir_read() continues from the
 * partial checkpoint only when it is newer than the result.
 *
 * Invariants: at most one periodic write at a time; a background write
 * holds its own snapshot reference (snapshots and the graph are
 * immutable), and is joined before the next one and before the final
 * write, since both use the same temporary file name (atomicfile.h).
 *
 * A folder holds one result: a run refuses a folder that holds the result
 * of another graph unless forced (outdir_check_graph(), by the graph
 * fingerprint of the checkpoint, else of run.json), and its final write
 * drops the files a result may have that this run did not write
 * (held-out-links.tsv, k-selection.tsv) in the commit of its own.
 *
 * One writer per folder: every write first takes the folder's lock
 * (config.lock, dirlock.h) if the caller has not, and lets go of the
 * lock's spare descriptors just for the write. A finished result is never
 * dropped: when the folder cannot take it, the final write goes to a
 * sibling folder, else to $TMPDIR, and says where (outdir_saved_in()).
 * A folder that holds the result this run continues is not written over
 * once another process rewrote it (the checkpoint's identity, dev, inode,
 * size and time, differs from the one this run last saw).
 *
 * The one thing a newcomer gets wrong: a fit continued as one start never
 * makes a savepoint, so asking it for one would wait for ever; such a run
 * (config.one_start) writes its newest snapshot instead.
 */
#include "coterie/outdir.h"

#include <errno.h>
#include <inttypes.h>
#include <jansson.h>
#include <pthread.h>
#include <signal.h>
#include <stdatomic.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "coterie/atomicfile.h"
#include "coterie/dirlock.h"
#include "coterie/graph.h"
#include "coterie/holdout.h"
#include "coterie/result_commit.h"
#include "coterie/result_cover.h"
#include "coterie/util.h"

/* Which file a path names, and which version of it. */
struct identity {
	int present;
	dev_t dev;
	ino_t ino;
	off_t size;
	struct timespec mtime;
};

static void identity_of(const char *path, struct identity *id)
{
	struct stat st;
	memset(id, 0, sizeof *id);
	if (stat(path, &st) != 0)
		return;
	*id = (struct identity){ 1, st.st_dev, st.st_ino, st.st_size, st.st_mtim };
}

static int identity_same(const struct identity *a, const struct identity *b)
{
	if (a->present != b->present)
		return 0;
	return !a->present || (a->dev == b->dev && a->ino == b->ino && a->size == b->size &&
			       a->mtime.tv_sec == b->mtime.tv_sec &&
			       a->mtime.tv_nsec == b->mtime.tv_nsec);
}

struct outdir {
	struct outdir_config cfg;
	char *ckpath;             /* DIR/checkpoint.cot, the result's */
	char *partpath;           /* DIR/checkpoint.partial.cot, the periodic ones */
	double last;              /* when the last periodic checkpoint was due */
	int want;                 /* a savepoint is asked for */
	/* the periodic write in progress on its thread */
	pthread_t thread;
	int running;
	atomic_int done;
	struct snapshot *s;       /* what it writes; a reference of its own */
	/* outdir_ask(): a savepoint the caller writes itself */
	int ask;
	struct snapshot *asked;
	struct identity seen;     /* the checkpoint as this run last saw it */
	int keep_selection;       /* k-selection.tsv is the continued fit's */
	char *selection_from;     /* the continued unfinished fit's search */
	char *elsewhere;          /* where the last failed final write went */
};

/* 1 when file a was last written after file b (both present). */
static int modified_after(const struct identity *a, const struct identity *b)
{
	return a->mtime.tv_sec > b->mtime.tv_sec ||
	       (a->mtime.tv_sec == b->mtime.tv_sec && a->mtime.tv_nsec > b->mtime.tv_nsec);
}

/* 1 when DIR/checkpoint.partial.cot is there and newer than the result's
 * checkpoint (or the folder has none): the unfinished fit a run continues.
 * A partial checkpoint older than the result is one the final write was
 * stopped before removing. */
static int partial_newer(const char *ckpath, const char *partpath)
{
	struct identity ck, part;
	identity_of(ckpath, &ck);
	identity_of(partpath, &part);
	if (!part.present)
		return 0;
	return !ck.present || modified_after(&part, &ck);
}

int outdir_read(const char *dir, struct checkpoint *ck)
{
	char *path = result_file(dir, RESULT_CHECKPOINT);
	char *part = result_file(dir, RESULT_PARTIAL);
	int rc = -1;
	memset(ck, 0, sizeof *ck);
	if (path && part && partial_newer(path, part)) {
		char esc[300];
		util_escape(dir, esc, sizeof esc, 1);
		if (checkpoint_read(part, ck) == 0) {
			notice("'%s' holds an unfinished fit (%s, %" PRIu32 " sweeps), newer than "
			       "its result%s: it is the one continued", esc, RESULT_PARTIAL, ck->sweep,
			       access(path, F_OK) == 0 ? "" : " (there is none yet)");
			rc = 0;
		} else {
			warning("the unfinished fit in '%s' (%s) cannot be read; its result is "
				"read instead", esc, RESULT_PARTIAL);
		}
	}
	if (rc != 0 && path) {
		rc = checkpoint_read(path, ck);
		if (rc == 0)
			result_cover_check_folder(dir, ck, NULL); /* warn of a mix of files */
	}
	free(part);
	free(path);
	return rc;
}

int outdir_has_partial(const char *dir)
{
	char *part = result_file(dir, RESULT_PARTIAL);
	int there = part && access(part, F_OK) == 0;
	free(part);
	return there;
}

/* What run.json says of the graph of the result in dir. */
struct described {
	int read;                 /* run.json was there and readable */
	uint64_t fingerprint;
	char what[600];           /* "'PATH', N nodes, M edges" (escaped) */
};

static void describe(const char *dir, struct described *d)
{
	memset(d, 0, sizeof *d);
	char *path = result_file(dir, "run.json");
	json_t *root = path ? json_load_file(path, 0, NULL) : NULL;
	free(path);
	json_t *g = json_object_get(root, "graph");
	const char *hex = json_string_value(json_object_get(g, "fingerprint"));
	const char *src = json_string_value(json_object_get(g, "path"));
	char *end;
	if (hex && *hex) {
		unsigned long long fp = strtoull(hex, &end, 16);
		if (!*end) {
			char esc[400];
			d->read = 1;
			d->fingerprint = fp;
			snprintf(d->what, sizeof d->what, "'%s', %" JSON_INTEGER_FORMAT " nodes, %"
				 JSON_INTEGER_FORMAT " edges", util_escape(src ? src : "?", esc,
				 sizeof esc, 1), json_integer_value(json_object_get(g, "nodes")),
				 json_integer_value(json_object_get(g, "edges")));
		}
	}
	json_decref(root);
}

/* 1 when DIR/checkpoint.partial.cot is a fit of the graph of fingerprint fp. */
static int partial_of(const char *dir, uint64_t fp)
{
	char *part = result_file(dir, RESULT_PARTIAL);
	uint64_t have;
	int yes = part && access(part, F_OK) == 0 && checkpoint_read_fingerprint(part, &have) == 0 &&
		  have == fp;
	free(part);
	return yes;
}

int outdir_check_graph(const char *dir, const struct graph *g, int force)
{
	char *ckpath = result_file(dir, RESULT_CHECKPOINT);
	if (!ckpath)
		return -1;
	struct described d;
	describe(dir, &d);
	uint64_t fp = 0;
	int have = 0, unreadable = 0;
	if (access(ckpath, F_OK) == 0) {
		if (checkpoint_read_fingerprint(ckpath, &fp) == 0)
			have = 1;
		else
			unreadable = 1;
	}
	free(ckpath);
	if (!have && d.read) {
		fp = d.fingerprint;
		have = 1;
		unreadable = 0;
	}
	if (!have && !unreadable)
		return 0; /* no result there */
	uint64_t mine = graph_fingerprint(g);
	if (have && fp == mine)
		return 0;
	char esc[300];
	util_escape(dir, esc, sizeof esc, 1);
	if (partial_of(dir, mine)) {
		notice("the result in '%s' is of another graph; the unfinished fit there (%s), "
		       "of this graph, was started to replace it", esc, RESULT_PARTIAL);
		return 0;
	}
	if (force) {
		notice("replacing the result in '%s', which is of another graph (--force)", esc);
		return 0;
	}
	if (!have)
		return error("'%s' holds a %s that cannot be read, so its graph is unknown; use "
			     "--force to replace it, or -o to write elsewhere", esc, RESULT_CHECKPOINT);
	if (d.read && d.fingerprint == fp)
		return error("'%s' holds the result of a fit of another graph (%s); use --force to "
			     "replace it, or -o to write elsewhere", esc, d.what);
	return error("'%s' holds the result of a fit of another graph (fingerprint %016" PRIx64
		     ", this graph's %016" PRIx64 "); use --force to replace it, or -o to write "
		     "elsewhere", esc, fp, mine);
}

void outdir_resume(const struct checkpoint *ck, struct fit_params *p, struct fit_origin *origin)
{
	if (!ck->savepoint) {
		/* what fit.h says such a fit does: one start, no moves */
		p->starts = 1;
		p->no_reseed = 1;
	}
	checkpoint_origin(ck, origin);
}

/* The search of the fit continued, when the run continues the result in
 * its own folder: the result's k-selection.tsv is kept (od->keep_selection);
 * or, when it continues the unfinished fit beside the result
 * (outdir_read()), that fit's k-selection.partial.tsv, if any, is put in
 * place as k-selection.tsv (od->selection_from). */
static void selection_continued(const char *dir, struct outdir *od)
{
	char *ck = result_file(dir, RESULT_CHECKPOINT);
	char *part = result_file(dir, RESULT_PARTIAL);
	if (ck && part && partial_newer(ck, part)) {
		char *sel = result_file(dir, RESULT_SELECTION_PARTIAL);
		if (sel && access(sel, F_OK) == 0)
			od->selection_from = sel;
		else
			free(sel);
	} else {
		od->keep_selection = 1;
	}
	free(ck);
	free(part);
}

struct outdir *outdir_new(const struct outdir_config *cfg)
{
	struct outdir *od = util_calloc(1, sizeof *od);
	if (!od)
		return NULL;
	od->cfg = *cfg;
	od->ckpath = atomicfile_path(cfg->dir, RESULT_CHECKPOINT);
	od->partpath = atomicfile_path(cfg->dir, RESULT_PARTIAL);
	if (!od->ckpath || !od->partpath) {
		UTIL_FREE_ALL(od->ckpath, od->partpath, od);
		return NULL;
	}
	od->last = util_now();
	identity_of(od->ckpath, &od->seen);
	if (cfg->continues)
		selection_continued(cfg->dir, od);
	return od;
}

int outdir_changed(const struct outdir *od)
{
	if (!od->cfg.continues || od->running)
		return 0; /* (a write on its thread updates seen) */
	struct identity now;
	identity_of(od->ckpath, &now);
	return !identity_same(&now, &od->seen);
}

/* Make the folder and take its lock; refuse a folder rewritten by
 * another process since this run saw it. 0 or -1 (reported). */
static int claim(struct outdir *od)
{
	if (result_prepare_dir(od->cfg.dir))
		return -1;
	if (od->cfg.lock && dirlock_take(od->cfg.lock))
		return -1;
	if (outdir_changed(od)) {
		char esc[300];
		return error("'%s' was rewritten by another process since this run read it; it "
			     "is not written over", util_escape(od->cfg.dir, esc, sizeof esc, 1));
	}
	return 0;
}

/* Write snapshot s as the periodic checkpoint, beside the result, which
 * it leaves as it is; 0 or -1 (reported). */
static int write_checkpoint(struct outdir *od, const struct snapshot *s)
{
	struct result_model m;
	result_model_of(&m, s);
	dirlock_spare(od->cfg.lock, 0);
	int rc = claim(od) ? -1 : checkpoint_write(od->partpath, od->cfg.g, &od->cfg.params, &m);
	dirlock_spare(od->cfg.lock, 1);
	return rc;
}

static void *write_main(void *arg)
{
	struct outdir *od = arg;
	write_checkpoint(od, od->s);
	atomic_store(&od->done, 1);
	return NULL;
}

static void join(struct outdir *od)
{
	if (!od->running)
		return;
	pthread_join(od->thread, NULL);
	snapshot_release(od->s);
	od->s = NULL;
	od->running = 0;
}

/* Write s (takes the reference), on a thread when so configured. */
static void write_periodic(struct outdir *od, struct snapshot *s)
{
	if (!od->cfg.background) {
		write_checkpoint(od, s); /* a failure is reported; the next is tried later */
		snapshot_release(s);
		return;
	}
	od->s = s;
	atomic_store(&od->done, 0);
	/* the thread takes no signal: they are the main thread's to handle */
	sigset_t all, old;
	sigfillset(&all);
	pthread_sigmask(SIG_BLOCK, &all, &old);
	int rc = pthread_create(&od->thread, NULL, write_main, od);
	pthread_sigmask(SIG_SETMASK, &old, NULL);
	if (rc) {
		/* no thread: write here rather than not at all */
		write_checkpoint(od, s);
		snapshot_release(s);
		od->s = NULL;
		return;
	}
	od->running = 1;
}

int outdir_ask(struct outdir *od, struct fit *f)
{
	if (od->cfg.one_start)
		return -1;
	fit_want_savepoint(f);
	od->want = 1;
	od->ask = 1;
	return 0;
}

struct snapshot *outdir_take_asked(struct outdir *od)
{
	struct snapshot *s = od->asked;
	od->asked = NULL;
	return s;
}

void outdir_due_now(struct outdir *od)
{
	od->last = -1e300;
}

void outdir_tick(struct outdir *od, struct fit *f)
{
	if (od->running && atomic_load(&od->done))
		join(od);
	enum fit_state st = fit_get_state(f);
	if (st == FIT_READY || fit_state_ended(st))
		return;
	if (od->ask) {
		/* the caller's savepoint first; the periodic one waits a period */
		struct snapshot *s = fit_take_savepoint(f);
		if (s) {
			snapshot_release(od->asked);
			od->asked = s;
			od->ask = od->want = 0;
			od->last = util_now();
		}
		return;
	}
	if (od->running)
		return;
	double now = util_now();
	int due = now - od->last >= od->cfg.every;
	struct snapshot *s = NULL;
	if (od->cfg.one_start) {
		if (!due)
			return;
		s = fit_snapshot(f);
		if (s->ntrace == 0) {
			snapshot_release(s);
			return;
		}
	} else {
		if (due && !od->want) {
			fit_want_savepoint(f);
			od->want = 1;
		}
		if (!od->want || !(s = fit_take_savepoint(f)))
			return;
		od->want = 0;
	}
	od->last = util_now();
	write_periodic(od, s);
}

/* Every file of the result into dir (made, locked by the caller), as one
 * commit (result_commit.h): the folder holds this run's files only, so
 * the files of an earlier result this run did not write are dropped in
 * the same commit (a continued result keeps the search that chose its k),
 * and so are the partial files of the unfinished fit. */
static int write_files(const struct outdir *od, const char *dir, const struct result_model *m,
		       const struct result_meta *meta, const struct holdout *check)
{
	struct result_commit *c = result_commit_new(dir, graph_fingerprint(od->cfg.g));
	int rc = c ? result_stage(c, od->cfg.g, &od->cfg.params, m, meta) : -1;
	if (rc == 0 && check)
		rc = result_stage_links(c, od->cfg.g, check, m->F, m->epsilon);
	if (rc == 0 && !check)
		result_commit_drop(c, RESULT_LINKS);
	if (rc == 0 && !(meta && meta->selection)) {
		if (od->selection_from)
			rc = result_commit_stage_copy(c, RESULT_SELECTION, od->selection_from);
		else if (od->keep_selection)
			result_commit_keep(c, RESULT_SELECTION);
		else
			result_commit_drop(c, RESULT_SELECTION);
	}
	return result_finish(c, rc);
}

/* The folders a result goes to when its own cannot take it: DIR.saved-PID
 * beside it, then NAME.saved-PID in $TMPDIR (or /tmp). Fills alt[i]
 * (caller frees); returns how many. */
static int elsewhere_names(const char *dir, char *alt[2])
{
	char *d = util_strdup(dir);
	if (!d)
		return 0;
	size_t len = strlen(d);
	while (len > 1 && d[len - 1] == '/')
		d[--len] = '\0';
	const char *slash = strrchr(d, '/');
	const char *base = slash && slash[1] ? slash + 1 : d;
	const char *tmpdir = getenv("TMPDIR");
	if (!tmpdir || !*tmpdir)
		tmpdir = "/tmp";
	long pid = (long)getpid();
	int n = 0;
	size_t cap = len + strlen(tmpdir) + 64;
	for (int i = 0; i < 2; i++) {
		if (!(alt[n] = util_malloc(cap, 1)))
			break;
		if (i == 0)
			snprintf(alt[n], cap, "%s.saved-%ld", d, pid);
		else
			snprintf(alt[n], cap, "%s/%s.saved-%ld", tmpdir, base, pid);
		n++;
	}
	free(d);
	return n;
}

/* The result into a folder of its own elsewhere; 0 and od->elsewhere set,
 * or -1 (each failure reported). */
static int write_elsewhere(struct outdir *od, const struct result_model *m,
			   const struct result_meta *meta, const struct holdout *check)
{
	char *alt[2];
	int n = elsewhere_names(od->cfg.dir, alt), rc = -1;
	for (int i = 0; i < n; i++) {
		struct dirlock *l = rc ? dirlock_new(alt[i], "coterie (a result saved elsewhere)") : NULL;
		int made = l && access(alt[i], F_OK) != 0;
		if (l && result_prepare_dir(alt[i]) == 0 && dirlock_take(l) == 0) {
			dirlock_spare(l, 0);
			if (write_files(od, alt[i], m, meta, check) == 0) {
				rc = 0;
				od->elsewhere = alt[i];
				alt[i] = NULL;
			}
		}
		dirlock_free(l);
		if (alt[i] && made)
			rmdir(alt[i]); /* a folder made for nothing; never one with files */
		free(alt[i]);
	}
	char esc[300], aesc[300];
	util_escape(od->cfg.dir, esc, sizeof esc, 1);
	if (rc == 0)
		error("the result could not be written to '%s'; it is saved in '%s' instead", esc,
		      util_escape(od->elsewhere, aesc, sizeof aesc, 1));
	else
		error("the result could not be written to '%s', nor anywhere else", esc);
	return rc;
}

int outdir_write(struct outdir *od, const struct result_model *m,
		 const struct result_meta *meta, const struct holdout *check)
{
	const char *dir = od->cfg.dir;
	join(od);
	free(od->elsewhere);
	od->elsewhere = NULL;
	dirlock_spare(od->cfg.lock, 0);
	int rc = claim(od) ? -1 : write_files(od, dir, m, meta, check);
	if (rc) {
		write_elsewhere(od, m, meta, check);
		dirlock_spare(od->cfg.lock, 1);
		return -1;
	}
	dirlock_spare(od->cfg.lock, 1);
	identity_of(od->ckpath, &od->seen);
	return 0;
}

const char *outdir_saved_in(const struct outdir *od)
{
	return od->elsewhere;
}

void outdir_free(struct outdir *od)
{
	if (od) {
		join(od); /* the periodic write, then what it and the caller leave */
		snapshot_release(od->asked);
		UTIL_FREE_ALL(od->elsewhere, od->selection_from, od->ckpath, od->partpath, od);
	}
}
