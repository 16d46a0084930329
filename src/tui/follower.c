/*
 * tui/follower: following a fit that runs in another process (follower.h).
 *
 * The idea: the view keeps working on a fit of its own that is never
 * started (v->fit, made from the newest checkpoint of the folder), and on
 * a snapshot the follower builds: the checkpoint's strengths and
 * communities, with the trace, sweep and state of the progress file laid
 * over them (snapshot_copy()). So the trace pane grows about once a
 * second while the other panes show the newest checkpoint (the fit's
 * periodic ones, --checkpoint-every, or one asked for with W); the state
 * line says both.
 *
 * Invariants: the follower writes nothing but the request file
 * (follow_request_send()); it takes no lock, so the fit stays the
 * folder's one writer, and the session's own fit is never started while
 * it follows, nor after (quitting and opening the folder again does that).
 *
 * The one thing a newcomer gets wrong: the end of the followed fit is
 * seen as its progress file going away, which the fit does only after its
 * final write: the result read then is the final one. A fit killed without
 * a final write leaves its progress file; the follower takes it for gone
 * when its pid is dead (same host) or the file has not changed for
 * FOLLOW_SILENT seconds, and shows the last checkpoint.
 */
#include "follower.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "coterie/atomicfile.h"
#include "coterie/follow.h"
#include "coterie/graph.h"
#include "coterie/outdir.h"
#include "coterie/result.h"
#include "coterie/result_commit.h"
#include "coterie/util.h"
#include "view.h"

#define LOOK_EVERY 0.5 /* seconds between looks at the folder */

struct file_id {
	int present;
	dev_t dev;
	ino_t ino;
	off_t size;
	struct timespec mtime;
};

struct follower {
	const char *dir;
	double next;                 /* util_now() of the next look */
	struct file_id prog, part, manifest;
	struct follow_progress p;    /* the last progress read */
	int have_p;
	double changed;              /* util_now() when the progress file last changed */
	int ended;
	struct trace_point *trace;   /* the trace shown: the checkpoint's, then the progress' */
	uint32_t ntrace, cap, start;
	struct snapshot *base;       /* the newest checkpoint's (a reference) */
	enum follow_request sent;    /* asked, not yet said taken */
};

static struct file_id id_of(const char *dir, const char *name)
{
	struct file_id id = { 0 };
	char *path = atomicfile_path(dir, name);
	struct stat st;
	if (path && stat(path, &st) == 0)
		id = (struct file_id){ 1, st.st_dev, st.st_ino, st.st_size, st.st_mtim };
	free(path);
	return id;
}

static int id_same(const struct file_id *a, const struct file_id *b)
{
	return a->present == b->present && a->dev == b->dev && a->ino == b->ino &&
	       a->size == b->size && a->mtime.tv_sec == b->mtime.tv_sec &&
	       a->mtime.tv_nsec == b->mtime.tv_nsec;
}

/* n points of t as the trace shown. 0 or -1. */
static int set_trace(struct follower *fo, const struct trace_point *t, uint32_t n)
{
	if (n > fo->cap) {
		struct trace_point *nt = util_realloc(fo->trace, n + 64, sizeof *nt);
		if (!nt)
			return -1;
		fo->trace = nt;
		fo->cap = n + 64;
	}
	if (n)
		memmove(fo->trace, t, n * sizeof *t);
	fo->ntrace = n;
	return 0;
}

/* The progress' points after the trace shown (a new start: its own). */
static void merge_trace(struct follower *fo)
{
	const struct follow_progress *p = &fo->p;
	if (!p->ntrace)
		return;
	uint32_t last = fo->ntrace ? fo->trace[fo->ntrace - 1].sweep : 0;
	if (p->start != fo->start || !fo->ntrace || p->trace[p->ntrace - 1].sweep < last) {
		set_trace(fo, p->trace, p->ntrace);
		fo->start = p->start;
		return;
	}
	for (uint32_t i = 0; i < p->ntrace; i++) {
		if (p->trace[i].sweep <= last)
			continue;
		if (fo->ntrace == fo->cap) {
			struct trace_point *nt = util_realloc(fo->trace, fo->cap * 2 + 64, sizeof *nt);
			if (!nt)
				return;
			fo->trace = nt;
			fo->cap = fo->cap * 2 + 64;
		}
		fo->trace[fo->ntrace++] = p->trace[i];
	}
}

/* s (owned) onto the screen in place of the snapshot there. */
static void adopt(struct view *v, struct snapshot *s)
{
	snapshot_release(v->snap);
	v->snap = s;
	v->snap_gen++;
	v->snap_taken = util_now();
	v->dirty |= DIRTY_ALL;
}

/* The state line's words, and the snapshot shown: the checkpoint's
 * strengths under the progress' trace. */
static void show(struct view *v)
{
	struct follower *fo = v->follow;
	const struct follow_progress *p = &fo->p;
	char host[20];
	snprintf(host, sizeof host, "%.19s", p->host);
	if (fo->ended) {
		snprintf(v->follow_line, sizeof v->follow_line, "%s: followed fit ended",
			 view_state_label(v->saved_state));
	} else if (fo->sent && fo->have_p && p->taken != fo->sent) {
		snprintf(v->follow_line, sizeof v->follow_line, "%s, asked to %s",
			 view_state_label(p->state), follow_request_name(fo->sent));
	} else {
		snprintf(v->follow_line, sizeof v->follow_line, "%s, followed (pid %llu@%s)",
			 view_state_label(fo->have_p ? p->state : v->saved_state),
			 (unsigned long long)p->pid, host);
	}
	if (fo->sent && fo->have_p && p->taken == fo->sent)
		fo->sent = FOLLOW_NONE;
	if (fo->ended || !fo->base)
		return;
	struct snapshot *s = snapshot_copy(fo->base);
	if (!s)
		return;
	if (fo->have_p) {
		v->saved_state = p->state;
		follow_progress_apply(p, s);
	}
	struct trace_point *t = util_malloc(fo->ntrace ? fo->ntrace : 1, sizeof *t);
	if (t) {
		if (fo->ntrace)
			memcpy(t, fo->trace, fo->ntrace * sizeof *t);
		free(s->trace);
		s->trace = t;
		s->ntrace = fo->ntrace;
	}
	adopt(v, s);
}

/* The newest checkpoint of the folder as v->fit (never started) and the
 * base of the snapshots shown. 0 or -1 (reported). */
static int reload(struct view *v)
{
	struct follower *fo = v->follow;
	struct checkpoint ck;
	memset(&ck, 0, sizeof ck);
	int quiet = util_quiet();
	util_set_quiet(1); /* its notice of the unfinished fit, at every reload */
	int rc = outdir_read(fo->dir, &ck);
	util_set_quiet(quiet);
	if (rc)
		return -1;
	if (ck.fingerprint != graph_fingerprint(v->g) || ck.F.n != v->g->n) {
		checkpoint_release(&ck);
		return error("the folder now holds a fit of another graph; still showing the old one");
	}
	struct fit_params p = ck.params;
	p.threads = v->params.threads;
	p.hold_at_plateau = 1;
	struct fit_origin origin;
	/* as one start from the strengths saved: a fit made from a savepoint
	 * shows nothing until it runs, and this one never runs */
	struct fit_savepoint *sp = ck.savepoint;
	ck.savepoint = NULL;
	outdir_resume(&ck, &p, &origin);
	ck.savepoint = sp;
	struct fit *f = fit_new(v->g, &p, &origin);
	enum fit_state st = ck.state;
	uint32_t sweep = ck.sweep;
	double ll = ck.ntrace ? ck.trace[ck.ntrace - 1].loglik : 0;
	checkpoint_release(&ck);
	if (!f)
		return -1;
	fit_free(v->fit);
	v->fit = f;
	v->params = p;
	snapshot_release(fo->base);
	fo->base = fit_snapshot(f);
	const struct snapshot *b = fo->base;
	if (!fo->ntrace || b->ntrace == 0 || fo->trace[fo->ntrace - 1].sweep < b->trace[b->ntrace - 1].sweep)
		set_trace(fo, b->trace, b->ntrace);
	if (fo->ended) {
		v->saved_state = st;
		v->saved = 1;
		v->saved_sweep = sweep;
		v->saved_loglik = ll;
		v->saved_as = st;
		adopt(v, fit_snapshot(f));
	}
	return 0;
}

int follower_start(struct view *v, const char *dir)
{
	struct follower *fo = util_calloc(1, sizeof *fo);
	if (!fo)
		return -1;
	fo->dir = dir;
	fo->changed = util_now();
	v->follow = fo;
	fo->part = id_of(dir, RESULT_PARTIAL);
	fo->manifest = id_of(dir, RESULT_MANIFEST);
	if (reload(v))
		return -1;
	fo->start = fo->base->start;
	follower_poll(v);
	return 0;
}

/* The fit is gone: its final result (or last checkpoint) is shown. */
static void follow_ended(struct view *v, const char *why)
{
	struct follower *fo = v->follow;
	fo->ended = 1;
	fo->sent = FOLLOW_NONE;
	if (reload(v) == 0)
		view_say(v, UTIL_NOTICE, "%s; its result in the folder is shown (quit and open "
			 "the folder again to go on with it)", why);
	show(v);
	v->dirty |= DIRTY_ALL;
}

void follower_poll(struct view *v)
{
	struct follower *fo = v->follow;
	double now = util_now();
	if (!fo || fo->ended || now < fo->next)
		return;
	fo->next = now + LOOK_EVERY;
	struct file_id prog = id_of(fo->dir, FOLLOW_PROGRESS);
	if (!prog.present && fo->have_p) {
		follow_ended(v, "the followed fit ended");
		return;
	}
	int news = 0;
	if (prog.present && !id_same(&prog, &fo->prog)) {
		struct follow_progress *p = util_malloc(1, sizeof *p);
		if (p && follow_progress_read(fo->dir, p) == 1) {
			fo->p = *p;
			fo->have_p = 1;
			fo->changed = now;
			merge_trace(fo);
			news = 1;
		}
		free(p);
		fo->prog = prog;
	}
	if (fo->have_p && (follow_progress_stale(&fo->p) || now - fo->changed > FOLLOW_SILENT)) {
		follow_ended(v, "the followed fit is gone without a final write");
		return;
	}
	struct file_id part = id_of(fo->dir, RESULT_PARTIAL);
	struct file_id man = id_of(fo->dir, RESULT_MANIFEST);
	if (!id_same(&part, &fo->part) || !id_same(&man, &fo->manifest)) {
		fo->part = part;
		fo->manifest = man;
		if (part.present && reload(v) == 0)
			news = 1; /* the panes now show the newest checkpoint */
	}
	if (news)
		show(v);
}

int follower_live(const struct view *v)
{
	return v->follow && !v->follow->ended;
}

int follower_timeout_ms(const struct view *v)
{
	if (!follower_live(v))
		return 1000;
	int ms = (int)((v->follow->next - util_now()) * 1e3) + 1;
	return ms < 0 ? 0 : ms;
}

int follower_refuses(struct view *v)
{
	if (!v->follow)
		return 0;
	if (v->follow->ended)
		view_say(v, UTIL_NOTICE, "the followed fit ended; quit and open the folder again "
			 "to go on with it");
	else
		view_say(v, UTIL_NOTICE, "the fit runs in another process: X stops it, P pauses "
			 "or continues it, W has it write a checkpoint");
	return 1;
}

void follower_free(struct view *v)
{
	struct follower *fo = v->follow;
	if (!fo)
		return;
	snapshot_release(fo->base);
	free(fo->trace);
	free(fo);
	v->follow = NULL;
}

/* ---- keys ---- */

static void ask(struct view *v, enum follow_request r, const char *what)
{
	if (!follower_live(v)) {
		view_say(v, UTIL_NOTICE, "%s", v->follow ? "the followed fit has ended" :
			 "no fit is followed here (explore DIR follows the fit writing DIR)");
		return;
	}
	if (follow_request_send(v->follow->dir, r) == 0) {
		v->follow->sent = r;
		view_say(v, UTIL_NOTICE, "asked the followed fit to %s", what);
		show(v);
	}
	v->dirty |= DIRTY_HEADER | DIRTY_PANE(PANE_TRACE);
}

void follower_act_stop(struct view *v, int arg)
{
	(void)arg;
	ask(v, FOLLOW_STOP, "stop (it saves, as after an interrupt)");
}

void follower_act_pause(struct view *v, int arg)
{
	(void)arg;
	int paused = v->follow && v->follow->have_p && v->follow->p.state == FIT_PAUSED;
	ask(v, paused ? FOLLOW_CONTINUE : FOLLOW_PAUSE, paused ? "continue" : "pause");
}

void follower_act_save(struct view *v, int arg)
{
	(void)arg;
	ask(v, FOLLOW_SAVE, "write its checkpoint; the panes follow it");
}
