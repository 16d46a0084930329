/*
 * fit: the fitting thread, its public controls and its snapshots. The
 * pieces: sweep.c computes sweeps (the pool, blocks, the summed l(F));
 * starts.c runs several starts, their reseeding moves and keeps the best;
 * this file runs one start to its plateau (fit_run_start()) and owns
 * everything readers see. fit-internal.h holds what they share.
 *
 * Threads. fit_start() launches the fitting thread, which owns the working
 * model; it drives the sweep engine, whose pool has (threads - 1) workers
 * plus the fitting thread itself. Readers never touch the model: after
 * every sweep (and on pause, stop and at the end) the fitting thread
 * builds an immutable, reference-counted snapshot and swaps it in under
 * `lock`; fit_snapshot() takes a reference under the same lock, so
 * readers wait at most for a pointer swap. A byte written to a pipe wakes
 * a reader that poll()s fit_wake_fd().
 *
 * Determinism. Sweep s of start r visits the nodes in a permutation drawn
 * from (seed, r, s) (order_seed()); the sweep engine makes the bits
 * independent of the thread count (sweep.h).
 *
 * The likelihood. Each sweep adds the change the sweep engine summed
 * (the argument is at the top of sweep.c) to the trace's last value.
 * l(F) is computed afresh (fixed node ranges summed in a fixed order) for
 * the seeded model and after each reseeding move, and only there: a start
 * that levelled off or ran its sweeps keeps its summed value, because a
 * fit resumed from it (or extended past the plateau) must add on to the
 * very bits the uninterrupted fit added to.
 *
 * Control. pause/stop/extend are atomics read between blocks; a paused or
 * holding fit sleeps on a condition variable. A fit shared with other
 * processes (fit_share(), MPI) turns stop and interrupt into a wish that
 * the exchange of rows carries to every process; each fitting thread
 * then sets the request itself at the same block (fit_agree()), so all
 * processes check the same requests at the same points. The one thing a newcomer
 * gets wrong: the pool's threads are made on the fitting thread, whose
 * signals are all blocked, so that no worker takes a signal meant for the
 * command layer.
 */
#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <signal.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include <unistd.h>

#include "coterie/model_directed.h"
#include "coterie/order.h"
#include "coterie/util.h"
#include "fit-internal.h"

#define RATE_WINDOW 5u    /* sweeps per second over this many sweeps */
#define AGM_SHARE 19.0    /* rebuild a snapshot's AGM after 19x its (predicted) cost */

const char *fit_state_name(enum fit_state s)
{
	switch (s) {
	case FIT_READY: return "ready";
	case FIT_SEEDING: return "seeding";
	case FIT_FITTING: return "fitting";
	case FIT_PAUSED: return "paused";
	case FIT_LEVELLED: return "levelled";
	case FIT_STOPPED: return "stopped";
	case FIT_FINISHED: return "finished";
	case FIT_FAILED: return "failed";
	}
	return "unknown";
}

int fit_state_ended(enum fit_state s)
{
	return s == FIT_LEVELLED || s == FIT_STOPPED || s == FIT_FINISHED || s == FIT_FAILED;
}

void fit_params_default(struct fit_params *p)
{
	memset(p, 0, sizeof *p);
	p->k = 10;
	p->threads = 1;
	p->seed = 1;
	p->tol = 1e-4;
	p->patience = 3;
	p->max_sweeps = 500;
	p->epsilon = 0.0;
	p->starts = 3;
}

/* ---- snapshots ---- */

void snapshot_release(struct snapshot *s)
{
	if (!s)
		return;
	if (__atomic_sub_fetch(&s->refs_, 1, __ATOMIC_ACQ_REL) > 0)
		return;
	free(s->trace);
	fcsr_release(&s->F);
	agm_release(&s->agm);
	fit_savepoint_free(s->savepoint);
	free(s->awake);
	free(s->start_ends);
	free(s);
}

struct snapshot *snapshot_copy(const struct snapshot *s)
{
	struct snapshot *c = util_malloc(1, sizeof *c);
	if (!c)
		return NULL;
	*c = *s;
	c->refs_ = 1;
	c->savepoint = NULL;
	c->awake = NULL;
	c->start_ends = NULL; /* (run.json's record only) */
	c->trace = util_malloc(s->ntrace ? s->ntrace : 1, sizeof *c->trace);
	memset(&c->F, 0, sizeof c->F);
	memset(&c->agm, 0, sizeof c->agm);
	if (c->trace && s->ntrace)
		memcpy(c->trace, s->trace, s->ntrace * sizeof *c->trace);
	if (!c->trace || fcsr_copy(&c->F, &s->F) || agm_copy(&c->agm, &s->agm)) {
		snapshot_release(c);
		return NULL;
	}
	return c;
}

static double rate_of(const struct trace_point *t, uint32_t n)
{
	if (n < 2)
		return 0.0;
	uint32_t back = n - 1 < RATE_WINDOW ? n - 1 : RATE_WINDOW;
	const struct trace_point *a = &t[n - 1 - back], *b = &t[n - 1];
	double dt = b->seconds - a->seconds;
	return dt > 0 ? (double)(b->sweep - a->sweep) / dt : 0.0;
}

static double elapsed(const struct fit *f)
{
	return f->seconds_base + (util_now() - f->t0);
}

/* A new snapshot of the fit's counters (no strengths, trace or AGM yet);
 * it takes f->res_out. NULL when out of memory. */
static struct snapshot *snapshot_of_counters(struct fit *f, enum fit_state state)
{
	struct snapshot *s = util_malloc(1, sizeof *s);
	if (!s)
		return NULL;
	*s = (struct snapshot){
		.refs_ = 1, .state = state, .sweep = f->sweep,
		.start = f->start, .starts = f->starts, .reseeds = f->reseeds,
		.best_start = f->best_start, .best_loglik = f->best_loglik,
		.plateau = f->plateau_sweep > 0, .plateau_sweep = f->plateau_sweep,
		.seconds = elapsed(f), .epsilon = f->m.epsilon, .delta = f->m.delta,
		.seeds = f->seeds, .savepoint = f->res_out, .stats = f->stats,
	};
	f->res_out = NULL;
	/* run.json's record of the starts: left out without memory */
	if (f->start_ends)
		s->start_ends = util_memdup(f->start_ends, f->starts * sizeof *f->start_ends);
	struct objective_counts c;
	sweep_counts(f->sw, &c);
	s->stats.rows = c.rows;
	s->stats.trials = c.trials;
	s->stats.visits = c.visits;
	s->stats.entries = c.entries;
	return s;
}

/* The snapshot's AGM: built afresh, or the last one copied while it is
 * recent. Building walks the nodes and edges and the strengths stored
 * (rows are densest after the first sweeps), so the last build's cost is
 * scaled by n + m + nnz, and a fitting snapshot rebuilds only once
 * AGM_SHARE times that prediction has passed: the AGM takes at most about
 * a twentieth of the fitting thread's time. An AGM of an empty model (the
 * one published before seeding) is never reused: scaled by the strengths
 * alone, its near-zero cost once predicted a rebuild only after minutes,
 * and the explorer showed no community until the fit ended. All this only
 * for a fit asked for live AGMs (fit_want_live_agm()); otherwise a fitting
 * snapshot copies the last one. A snapshot that ends or pauses a fit
 * always has a fresh one. 0 or -1. */
static int snapshot_agm(struct fit *f, struct snapshot *s, enum fit_state state)
{
	double now = util_now();
	uint64_t nnz = s->F.off[s->F.n];
	double fixed = (double)f->g->n + (double)f->g->m; /* the walk over nodes and edges */
	double predicted = f->agm_cost * (fixed + (double)nnz) / (fixed + (double)f->agm_nnz);
	int stale_ok = !f->live_agm || (f->agm_nnz > 0 && now - f->agm_time < AGM_SHARE * predicted);
	if (state != FIT_FITTING || !f->have_agm || !stale_ok) {
		if (agm_from_strengths_trimmed(&s->agm, f->g, &s->F, f->m.epsilon, f->m.delta,
					       AGM_MIN_LINKS))
			return -1;
		f->agm_time = util_now();
		f->agm_cost = f->agm_time - now;
		f->agm_nnz = nnz;
		agm_release(&f->agm);
		f->have_agm = agm_copy(&f->agm, &s->agm) == 0;
		f->agm_sweep = f->sweep;
	} else if (agm_copy(&s->agm, &f->agm) || agm_side_sums(f->g, &s->F)) {
		return -1; /* (a stale AGM: the per-entry readers of s->F still read by side) */
	}
	s->agm_sweep = f->agm_sweep;
	return 0;
}

/* Swap s in as the latest snapshot (and as the savepoint's, if it has
 * one), wake readers, and let go of the ones it replaces. */
static void swap_in(struct fit *f, struct snapshot *s, enum fit_state state)
{
	struct snapshot *old_point = NULL;
	pthread_mutex_lock(&f->lock);
	if (s->savepoint) {
		old_point = f->point;
		f->point = s;
		__atomic_add_fetch(&s->refs_, 1, __ATOMIC_ACQ_REL);
	}
	struct snapshot *old = f->latest;
	f->latest = s;
	f->state = state;
	pthread_cond_broadcast(&f->cond);
	pthread_mutex_unlock(&f->lock);
	snapshot_release(old);
	snapshot_release(old_point);
	char byte = 1;
	ssize_t w = write(f->wake[1], &byte, 1); /* full pipe: a wake-up is pending anyway */
	(void)w;
}

int fit_publish(struct fit *f, enum fit_state state)
{
	struct snapshot *s = snapshot_of_counters(f, state);
	if (!s)
		return -1;
	double t_pub = util_now();
	s->ntrace = f->ntrace;
	s->trace = util_malloc(f->ntrace ? f->ntrace : 1, sizeof *s->trace);
	if (!s->trace)
		goto fail;
	if (f->ntrace)
		memcpy(s->trace, f->trace, f->ntrace * sizeof *s->trace);
	s->sweeps_per_sec = rate_of(f->trace, f->ntrace);
	/* a fitting snapshot that no live reader asked for and no checkpoint
	 * needs carries no strengths: its copy of them was the peak of a
	 * large fit (after the first sweep, rows hold several times their
	 * final entries, and the copy lived on through the second sweep) */
	int bare = state == FIT_FITTING && !f->live_agm && !s->savepoint;
	if ((bare ? fcsr_empty(&s->F) : model_export_order(&f->m, f->inner, &s->F)) ||
	    snapshot_agm(f, s, state))
		goto fail;
	/* where a resume of an ended fit goes on (a savepoint has its own) */
	if (fit_state_ended(state) && state != FIT_FAILED && !s->savepoint && f->awake_ok &&
	    !(s->awake = fit_awake_copy(f)))
		goto fail;
	f->stats.publish_seconds += util_now() - t_pub;
	swap_in(f, s, state);
	return 0;
fail:
	snapshot_release(s);
	return -1;
}

void fit_set_state(struct fit *f, enum fit_state st)
{
	pthread_mutex_lock(&f->lock);
	f->state = st;
	pthread_mutex_unlock(&f->lock);
}

/* CPU time of the calling thread (the fitting thread's share of a sweep;
 * unlike wall time, blind to other programs on the machine). */
static double thread_cpu(void)
{
	struct timespec ts;
	if (clock_gettime(CLOCK_THREAD_CPUTIME_ID, &ts))
		return 0.0;
	return (double)ts.tv_sec + ts.tv_nsec / 1e9;
}

int fit_trace_add(struct fit *f, double ll)
{
	if (f->ntrace == f->trace_cap) {
		uint32_t cap = f->trace_cap ? f->trace_cap * 2 : 64;
		struct trace_point *nt = util_realloc(f->trace, cap, sizeof *nt);
		if (!nt)
			return -1;
		f->trace = nt;
		f->trace_cap = cap;
	}
	f->trace[f->ntrace++] = (struct trace_point){ f->sweep, elapsed(f), ll };
	return 0;
}

double fit_tol(struct fit *f)
{
	uint64_t bits = atomic_load(&f->tol_bits);
	double tol;
	memcpy(&tol, &bits, sizeof tol);
	return tol;
}

/* Take a fit_extend_by() request (between sweeps, on the fitting
 * thread): set the sweep to hold at, or count the plateau afresh. */
static void take_extend_by(struct fit *f)
{
	long long n = atomic_exchange(&f->extend_by_req, -1);
	if (n < 0)
		return;
	f->streak = 0;
	f->goal_sweep = 0;
	if (n > 0)
		f->goal_sweep = (uint64_t)f->sweep + (uint64_t)n > UINT32_MAX ? UINT32_MAX
									    : f->sweep + (uint32_t)n;
}

int fit_stopping(struct fit *f)
{
	return atomic_load(&f->stop_req) || atomic_load(&f->interrupt_req);
}

double fit_loglik(struct fit *f)
{
	double t = util_now();
	double ll = sweep_objective(f->sw);
	f->stats.loglik_seconds += util_now() - t;
	return ll;
}

/* Sleep while paused; returns 1 when asked to stop meanwhile. Runs
 * between blocks (a sweep_between_fn). */
static int wait_while_paused(void *arg)
{
	struct fit *f = arg;
	if (!atomic_load(&f->pause_req))
		return atomic_load(&f->stop_req);
	fit_publish(f, FIT_PAUSED);
	pthread_mutex_lock(&f->lock);
	while (atomic_load(&f->pause_req) && !atomic_load(&f->stop_req) &&
	       !atomic_load(&f->interrupt_req))
		pthread_cond_wait(&f->cond, &f->lock);
	f->state = FIT_FITTING;
	pthread_mutex_unlock(&f->lock);
	return atomic_load(&f->stop_req);
}

/* The seed of the sweep order of sweep f->sweep of start f->start. */
static uint64_t order_seed(const struct fit *f)
{
	uint64_t start = f->start > 1 ? f->start - 1 : 0;
	return f->p.seed * 0x9e3779b97f4a7c15ULL + f->sweep + (start << 32);
}

uint8_t *fit_awake_copy(const struct fit *f)
{
	if (!f->awake_ok)
		return NULL;
	uint32_t n = f->g->n;
	uint8_t *a = util_malloc(n ? n : 1, 1);
	if (!a)
		return NULL;
	const uint8_t *w = sweep_awake(f->sw);
	for (uint32_t u = 0; u < n; u++)
		a[u] = w[f->inner ? f->inner[u] : u];
	return a;
}

int fit_awake_set(struct fit *f, const uint8_t *awake)
{
	uint32_t n = f->g->n;
	if (!f->inner) {
		sweep_set_awake(f->sw, awake);
	} else {
		uint8_t *w = util_malloc(n ? n : 1, 1);
		if (!w)
			return -1;
		for (uint32_t u = 0; u < n; u++)
			w[f->inner[u]] = awake[u] ? 1 : 0;
		sweep_set_awake(f->sw, w);
		free(w);
	}
	f->awake_ok = 1;
	return 0;
}

/* The plateau tolerance tol in force for the climb under way: a
 * reseeding move's climb levels off at FIT_MOVE_TOL when tol is
 * tighter (starts.c climbs to tol once the moves are over). */
static double climb_tol(const struct fit *f, double tol)
{
	return f->moving && tol < FIT_MOVE_TOL ? FIT_MOVE_TOL : tol;
}

/* Is the next sweep quiet (sweep.h)? Not when the engine's awake flags
 * are not the model's (a start, a move, an import: awake_ok 0), not
 * every FIT_QUIET_EVERY-th sweep, and not when it could fire the plateau
 * rule (the patience - 1 sweeps before it gained less than the fit's own
 * tolerance): the rule fires on a full sweep. The fit's own p.tol, not
 * the one in force, so that the sweeps do not depend on fit_set_tol().
 * A reseeding move's climb (f->local) is quiet throughout: only the rows
 * the move changed, their neighbours, and the rows those wake (starts.c);
 * the plateau after the moves is judged on full sweeps again. */
static int quiet_next(const struct fit *f)
{
	if (f->p.full_sweeps || !f->awake_ok)
		return 0;
	if (f->local)
		return 1;
	if (f->sweep % FIT_QUIET_EVERY == 0)
		return 0;
	/* the sweeps that gained little, last first (at most patience - 1):
	 * when the next one could fire the plateau rule, it is full */
	unsigned low = 0;
	for (uint32_t i = f->ntrace; i >= 2 && low + 1 < f->p.patience; i--) {
		double prev = f->trace[i - 2].loglik, ll = f->trace[i - 1].loglik;
		if ((ll - prev) / (fabs(prev) > 0 ? fabs(prev) : 1.0) >= climb_tol(f, f->p.tol))
			break;
		low++;
	}
	return low + 1 < f->p.patience;
}

/* One sweep with its timing; returns as sweep_run(). *ll goes from the
 * value before the sweep to the value after it. */
static int one_sweep(struct fit *f, double *ll)
{
	double t = util_now(), c = thread_cpu(), dl = 0.0;
	/* a row wakes its neighbours when its update gained FIT_QUIET_WAKE
	 * times the gain per row that the plateau rule calls little */
	sweep_set_quiet(f->sw, quiet_next(f),
			FIT_QUIET_WAKE * f->p.tol * fabs(*ll) / (double)(f->gw->n ? f->gw->n : 1));
	int rc = sweep_run(f->sw, order_seed(f), wait_while_paused, f, &dl);
	f->awake_ok = rc == 0;
	f->stats.rows_skipped = sweep_skipped(f->sw);
	if (rc < 0)
		return rc;
	f->sweep++;
	f->stats.sweep_seconds += util_now() - t;
	f->stats.sweep_cpu_seconds += thread_cpu() - c;
	f->stats.sweeps++;
	/* (recomputed when the gains are not l(F)'s change: an --epsilon
	 * below 1e-12, see model_gain_exact()) */
	*ll = f->ops->gain_exact(&f->m) ? *ll + dl : fit_loglik(f);
	return rc;
}

enum fit_state fit_run_start(struct fit *f, int extend)
{
	/* l(F) of the model as the start (re)enters here: the trace's last
	 * point, or the exact value after a reseeding move. A resumed fit
	 * starts from the saved trace (stored bit for bit), so it adds up
	 * exactly as the uninterrupted fit did. */
	double ll = f->ll_moved ? f->ll_moved_value
		  : f->ntrace ? f->trace[f->ntrace - 1].loglik
			      : fit_loglik(f);
	f->ll_moved = 0;
	while (f->sweep < f->p.max_sweeps) {
		if (fit_stopping(f))
			return FIT_STOPPED;
		if (extend)
			take_extend_by(f);
		int rc = one_sweep(f, &ll);
		if (rc < 0)
			return FIT_FAILED;
		double prev = f->ntrace ? f->trace[f->ntrace - 1].loglik : ll;
		if (fit_trace_add(f, ll))
			return FIT_FAILED;
		if (rc == 1)
			return FIT_STOPPED;
		double gain = (ll - prev) / (fabs(prev) > 0 ? fabs(prev) : 1.0);
		f->streak = gain < climb_tol(f, fit_tol(f)) ? f->streak + 1 : 0;
		int fired = f->streak >= f->p.patience;
		if (fired && f->plateau_sweep == 0)
			f->plateau_sweep = f->sweep;
		int run_on = extend && atomic_load(&f->extend_req);
		if (extend && f->goal_sweep && !run_on) {
			/* fit_extend_by(n): past plateaus up to the goal, then hold */
			if (f->sweep >= f->goal_sweep) {
				f->goal_sweep = 0;
				return FIT_LEVELLED;
			}
		} else if (fired && !f->p.past_plateau && !run_on) {
			return FIT_LEVELLED;
		}
		if (f->in_starts && atomic_exchange(&f->point_req, 0)) {
			fit_savepoint_free(f->res_out);
			f->res_out = fit_make_savepoint(f);
		}
		fit_publish(f, FIT_FITTING);
	}
	return FIT_FINISHED;
}

/* A levelled fit that should hold: publish, wait for fit_extend(),
 * fit_extend_by() or fit_stop(); on extend go on fitting past plateaus,
 * on extend by go on as asked and hold again. */
static enum fit_state hold(struct fit *f)
{
	for (;;) {
		fit_publish(f, FIT_LEVELLED);
		pthread_mutex_lock(&f->lock);
		while (!atomic_load(&f->extend_req) && atomic_load(&f->extend_by_req) < 0 &&
		       !atomic_load(&f->stop_req) && !atomic_load(&f->interrupt_req))
			pthread_cond_wait(&f->cond, &f->lock);
		pthread_mutex_unlock(&f->lock);
		if (!atomic_load(&f->extend_req) && atomic_load(&f->extend_by_req) < 0)
			return FIT_LEVELLED;
		fit_set_state(f, FIT_FITTING);
		fit_publish(f, FIT_FITTING);
		enum fit_state st = fit_run_start(f, 1);
		if (st != FIT_LEVELLED)
			return st;
	}
}

static void *fit_main(void *arg)
{
	struct fit *f = arg;
	enum fit_state final;
	f->t0 = util_now();
	sweep_pool_start(f->sw);
	if (f->resumed) {
		/* a fit continued as one start, without savepoints */
		fit_publish(f, FIT_FITTING);
		final = fit_run_start(f, 1);
		if (final == FIT_LEVELLED && f->warm_moves && !f->p.no_reseed)
			final = fit_run_moves(f); /* a warm start of -k auto's search */
	} else {
		final = fit_run_starts(f);
		fit_part_release(&f->best);
		if (final == FIT_LEVELLED)
			f->streak = 0;
	}
	if (final == FIT_LEVELLED && f->p.hold_at_plateau)
		final = hold(f);
	sweep_pool_stop(f->sw);
	if (fit_publish(f, final)) {
		fit_set_state(f, FIT_FAILED);
		char byte = 1;
		ssize_t w = write(f->wake[1], &byte, 1);
		(void)w;
	}
	return NULL;
}

/* ---- the public face ---- */

/* The wake-up pipe, both ends non-blocking: 0 or -1. */
static int open_wake_pipe(int wake[2])
{
	if (pipe(wake)) {
		wake[0] = wake[1] = -1;
		return error("cannot make a pipe: %s", strerror(errno));
	}
	for (int i = 0; i < 2; i++) {
		fcntl(wake[i], F_SETFL, fcntl(wake[i], F_GETFL) | O_NONBLOCK);
		fcntl(wake[i], F_SETFD, FD_CLOEXEC);
	}
	return 0;
}

/* Take up where origin left off: an exact resume from its savepoint, or
 * its model as one start. 0 or -1. */
static int load_origin(struct fit *f, const struct fit_origin *origin)
{
	const struct graph *g = f->g;
	uint32_t k = f->p.k;
	if (origin->savepoint) {
		const struct fit_savepoint *ri = origin->savepoint;
		if (ri->start < 1 || ri->start > f->starts || ri->best_start >= ri->start ||
		    ri->cur.F.n != g->n || ri->cur.F.k != k ||
		    (ri->best_start && (ri->best.F.n != g->n || ri->best.F.k != k ||
					ri->best.ntrace == 0)))
			return error("the saved fit does not match the graph and its parameters");
		if (!(f->res_in = fit_savepoint_dup(ri)))
			return -1;
		f->start = ri->start;
		/* a checkpoint keeps a climbing start's flags beside it */
		if (origin->awake && ri->phase == FIT_PHASE_CLIMB && !f->res_in->cur.awake &&
		    !(f->res_in->cur.awake = util_memdup(origin->awake, g->n)))
			return -1;
		return 0;
	}
	if (origin->F->n != g->n || origin->F->k != k)
		return error("the saved fit is %u x %u but the graph and -k ask for %u x %u",
			     origin->F->n, origin->F->k, g->n, k);
	if (model_import_order(&f->m, origin->F, f->inner))
		return -1;
	f->resumed = 1;
	f->warm_moves = origin->moves;
	if (origin->awake && fit_awake_set(f, origin->awake))
		return -1;
	f->sweep = origin->sweep;
	f->seconds_base = origin->seconds;
	f->plateau_sweep = origin->plateau_sweep;
	for (uint32_t i = 0; i < origin->ntrace; i++) {
		if (fit_trace_add(f, 0))
			return -1;
		f->trace[i] = origin->trace[i];
	}
	return 0;
}

struct fit *fit_new(const struct graph *g, const struct fit_params *p,
		    const struct fit_origin *origin)
{
	if (p->k == 0 || p->k > MODEL_MAX_K) {
		error("the number of communities must be between 1 and %u", MODEL_MAX_K);
		return NULL;
	}
	if (g->n < 2) {
		error("a graph of %u node%s has no communities to find", g->n, g->n == 1 ? "" : "s");
		return NULL;
	}
	struct fit *f = util_calloc(1, sizeof *f);
	if (!f)
		return NULL;
	f->g = g;
	f->gw = g;
	f->p = *p;
	if (!(f->ops = model_objective_of(p->model))) {
		error("unknown model %d", (int)p->model);
		free(f);
		return NULL;
	}
	f->wake[0] = f->wake[1] = -1;
	if (f->p.threads < 1)
		f->p.threads = 1;
	if (f->p.patience < 1)
		f->p.patience = 1;
	if (f->p.starts < 1)
		f->p.starts = 1;
	f->starts = origin && !origin->savepoint ? 1 : f->p.starts;
	f->start = 1;
	if (f->starts > 1) {
		if (!(f->start_ends = util_malloc(f->starts, sizeof *f->start_ends)))
			goto fail;
		for (uint32_t r = 0; r < f->starts; r++)
			f->start_ends[r] = (struct start_end){ NAN, NAN };
	}
	fit_set_tol(f, f->p.tol);
	atomic_init(&f->extend_by_req, -1);
	double eps = p->epsilon > 0 ? p->epsilon : model_default_epsilon(g);
	f->p.epsilon = eps;
	pthread_mutex_init(&f->lock, NULL);
	pthread_cond_init(&f->cond, NULL);
	if (model_init(&f->m, g->n, p->k, eps))
		goto fail;
	if (model_kind_sided(p->model) && model_directed_prepare(g, &f->m, &f->self_pairs, &f->view))
		goto fail;
	if (p->renumber && !g->nsend) { /* a two-sided model keeps its sides in order */
		f->inner = util_malloc(g->n, sizeof *f->inner);
		if (!f->inner || order_bfs(g, f->inner) || order_graph(g, f->inner, &f->gi))
			goto fail;
		f->gw = &f->gi;
	}
	if (open_wake_pipe(f->wake))
		goto fail;
	if (!(f->sw = sweep_new(&f->m, f->gw, f->ops, f->p.threads)))
		goto fail;
	if (origin && load_origin(f, origin))
		goto fail;
	/* the first snapshot: the resumed model, or an empty one before seeding */
	f->t0 = util_now();
	if (fit_publish(f, FIT_READY))
		goto fail;
	return f;
fail:
	fit_free(f);
	return NULL;
}

void fit_exclude(struct fit *f, const struct graph *excl)
{
	f->excl = excl;
}

void fit_want_live_agm(struct fit *f)
{
	f->live_agm = 1;
}

int fit_start(struct fit *f)
{
	if (f->started)
		return error("the fit is already running");
	f->m.excl = f->excl ? f->excl : f->self_pairs;
	if (f->excl && f->inner) {
		order_graph_release(&f->excl_i);
		if (order_graph(f->excl, f->inner, &f->excl_i))
			return -1;
		f->m.excl = &f->excl_i;
	}
	/* the fitting thread and its workers take no signals: the command
	 * layer handles them on its own thread */
	sigset_t all, old;
	sigfillset(&all);
	pthread_sigmask(SIG_BLOCK, &all, &old);
	int rc = pthread_create(&f->thread, NULL, fit_main, f);
	pthread_sigmask(SIG_SETMASK, &old, NULL);
	if (rc)
		return error("cannot start the fitting thread: %s", strerror(rc));
	f->started = 1;
	return 0;
}

static void poke(struct fit *f)
{
	pthread_mutex_lock(&f->lock);
	pthread_cond_broadcast(&f->cond);
	pthread_mutex_unlock(&f->lock);
}

void fit_pause(struct fit *f)
{
	atomic_store(&f->pause_req, 1);
	poke(f);
}

void fit_unpause(struct fit *f)
{
	atomic_store(&f->pause_req, 0);
	poke(f);
}

/* A shared fit's wish rises to w (never falls): 1 when recorded. */
static int wish(struct fit *f, int w)
{
	if (!f->shared)
		return 0;
	int old = atomic_load(&f->wish);
	while (old < w && !atomic_compare_exchange_weak(&f->wish, &old, w))
		;
	return 1;
}

void fit_stop(struct fit *f)
{
	if (wish(f, 2))
		return;
	atomic_store(&f->stop_req, 1);
	poke(f);
}

void fit_interrupt(struct fit *f)
{
	if (wish(f, 1))
		return;
	atomic_store(&f->interrupt_req, 1);
	atomic_store(&f->pause_req, 0);
	poke(f);
}

void fit_share(struct fit *f, const struct sweep_group *grp)
{
	sweep_set_group(f->sw, grp);
	f->shared = grp != NULL;
}

int fit_wish(struct fit *f)
{
	return atomic_load(&f->wish);
}

void fit_agree(struct fit *f, int w)
{
	if (w >= 2)
		atomic_store(&f->stop_req, 1);
	if (w >= 1) {
		atomic_store(&f->interrupt_req, 1);
		atomic_store(&f->pause_req, 0);
	}
}

void fit_want_savepoint(struct fit *f)
{
	atomic_store(&f->point_req, 1);
}

struct snapshot *fit_take_savepoint(struct fit *f)
{
	pthread_mutex_lock(&f->lock);
	struct snapshot *s = f->point;
	f->point = NULL;
	pthread_mutex_unlock(&f->lock);
	return s;
}

void fit_extend(struct fit *f)
{
	atomic_store(&f->extend_by_req, -1);
	atomic_store(&f->extend_req, 1);
	poke(f);
}

void fit_extend_by(struct fit *f, uint32_t n)
{
	atomic_store(&f->extend_req, 0);
	atomic_store(&f->extend_by_req, (long long)n);
	poke(f);
}

void fit_set_tol(struct fit *f, double tol)
{
	uint64_t bits;
	memcpy(&bits, &tol, sizeof bits);
	atomic_store(&f->tol_bits, bits);
}

double fit_get_tol(struct fit *f)
{
	return fit_tol(f);
}

enum fit_state fit_wait(struct fit *f)
{
	if (f->started && !f->joined) {
		pthread_join(f->thread, NULL);
		f->joined = 1;
	}
	return fit_get_state(f);
}

enum fit_state fit_get_state(struct fit *f)
{
	pthread_mutex_lock(&f->lock);
	enum fit_state s = f->state;
	pthread_mutex_unlock(&f->lock);
	return s;
}

struct snapshot *fit_snapshot(struct fit *f)
{
	pthread_mutex_lock(&f->lock);
	struct snapshot *s = f->latest;
	if (s)
		__atomic_add_fetch(&s->refs_, 1, __ATOMIC_ACQ_REL);
	pthread_mutex_unlock(&f->lock);
	return s;
}

int fit_wake_fd(struct fit *f)
{
	return f->wake[0];
}

void fit_drain_wake(struct fit *f)
{
	char buf[256];
	while (read(f->wake[0], buf, sizeof buf) > 0)
		;
}

const struct fit_params *fit_get_params(const struct fit *f)
{
	return &f->p;
}

void fit_free(struct fit *f)
{
	if (!f)
		return;
	if (f->started && !f->joined) {
		fit_stop(f);
		fit_wait(f);
	}
	snapshot_release(f->latest);
	snapshot_release(f->point);
	fit_savepoint_free(f->res_in);
	fit_savepoint_free(f->res_out);
	fit_part_release(&f->best);
	free(f->start_ends);
	agm_release(&f->agm);
	sweep_free(f->sw);
	model_release(&f->m);
	order_graph_release(&f->gi);
	order_graph_release(&f->excl_i);
	graph_free(f->self_pairs);
	graph_free(f->view);
	free(f->inner);
	free(f->trace);
	for (int i = 0; i < 2; i++)
		if (f->wake[i] >= 0)
			close(f->wake[i]);
	pthread_mutex_destroy(&f->lock);
	pthread_cond_destroy(&f->cond);
	free(f);
}
