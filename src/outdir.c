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
 * Invariants: at most one periodic write at a time; a background write
 * holds its own snapshot reference (snapshots and the graph are
 * immutable), and is joined before the next one and before the final
 * write, since both use the same temporary file name (atomicfile.h).
 *
 * The one thing a newcomer gets wrong: a fit continued as one start never
 * makes a savepoint, so asking it for one would wait for ever; such a run
 * (config.one_start) writes its newest snapshot instead.
 */
#include "coterie/outdir.h"

#include <pthread.h>
#include <signal.h>
#include <stdatomic.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/atomicfile.h"
#include "coterie/holdout.h"
#include "coterie/util.h"

struct outdir {
	struct outdir_config cfg;
	char *ckpath;             /* DIR/checkpoint.cot */
	double last;              /* when the last periodic checkpoint was due */
	int want;                 /* a savepoint is asked for */
	/* the periodic write in progress on its thread */
	pthread_t thread;
	int running;
	atomic_int done;
	struct snapshot *s;       /* what it writes; a reference of its own */
};

int outdir_read(const char *dir, struct checkpoint *ck)
{
	char *path = atomicfile_path(dir, RESULT_CHECKPOINT);
	if (!path) {
		memset(ck, 0, sizeof *ck);
		return -1;
	}
	int rc = checkpoint_read(path, ck);
	free(path);
	return rc;
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

struct outdir *outdir_new(const struct outdir_config *cfg)
{
	struct outdir *od = util_calloc(1, sizeof *od);
	if (!od)
		return NULL;
	od->cfg = *cfg;
	od->ckpath = atomicfile_path(cfg->dir, RESULT_CHECKPOINT);
	if (!od->ckpath) {
		free(od);
		return NULL;
	}
	od->last = util_now();
	return od;
}

/* Write snapshot s as the checkpoint; 0 or -1 (reported). */
static int write_checkpoint(const struct outdir *od, const struct snapshot *s)
{
	struct result_model m;
	result_model_of(&m, s);
	if (result_prepare_dir(od->cfg.dir))
		return -1;
	return checkpoint_write(od->ckpath, od->cfg.g, &od->cfg.params, &m);
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

void outdir_tick(struct outdir *od, struct fit *f)
{
	if (od->running && atomic_load(&od->done))
		join(od);
	enum fit_state st = fit_get_state(f);
	if (od->running || st == FIT_READY || fit_state_ended(st))
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

int outdir_write(struct outdir *od, const struct result_model *m,
		 const struct result_meta *meta, const struct holdout *check)
{
	const char *dir = od->cfg.dir;
	join(od);
	if (result_prepare_dir(dir))
		return -1;
	if (meta && meta->selection && result_write_selection(dir, meta->selection))
		return -1;
	if (result_write(dir, od->cfg.g, &od->cfg.params, m, meta))
		return -1;
	if (check && result_write_links(dir, od->cfg.g, check, m->F, m->epsilon))
		return -1;
	return 0;
}

void outdir_free(struct outdir *od)
{
	if (!od)
		return;
	join(od);
	free(od->ckpath);
	free(od);
}
