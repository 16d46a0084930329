/*
 * starts: several starts of one fit, the reseeding moves after each, and
 * keeping the best (the fitting thread's outer loop; fit.c runs
 * one start to its plateau with fit_run_start()).
 *
 * Starts. The likelihood has many local maxima; each start seeds afresh
 * (seed.h, with the start's own draws) and climbs with its own sweep
 * orders, and the best start is kept (fit->best, a struct fit_part as a
 * savepoint holds it). Ties keep the earlier start. Best, for every
 * model, is the shortest code length of the cover the output reads from
 * the strengths
 * (agm_code_length_of(): the AGM log-likelihood less what it costs to name
 * every community's members; a two-sided cover read by side, as
 * memberships.tsv has it), not the largest l(F): on planted graphs of
 * 10^4 nodes the starts of larger l(F) were those with more memberships
 * than the truth and lower scores, and the code length put them in the
 * order of their scores (DEVELOPERS.md, "Starts and moves judged by code
 * length"). The weighted models too since session 15: judged by l(F) their
 * moves kept columns that split large communities (planted weighted 10^4
 * nodes, seeds 1-3: ONMI 0.838, 0.826, 0.879 by l(F), 0.912, 0.912, 0.913
 * by code; 10^5: 0.947 and 0.959), though the code reads links, not
 * weights.
 *
 * Reseeding moves. A start often levels off with one column spread over
 * two true communities and another wasted on a sliver of a third, or (where
 * communities leak links) with a large community cut into pieces and small
 * ones sharing a column. A move is a merge (fit_merge.c: join the pieces,
 * plant the freed columns where new columns would explain most) while
 * there are pieces to join, else a split: take the weakest column
 * (smallest column sum), empty it, and seed it again inside the largest
 * community (the ego-net of one of its members, restricted to that
 * community). Either way the start then fits to a plateau again, at the
 * looser FIT_MOVE_TOL (1e-3, or --tol if looser; a move that has not
 * paid by then climbs on to --tol), and the move is kept only if the
 * score that compares starts rose (the code length fell); otherwise the
 * model goes back (a failed merge halves the joins the next one may
 * make). After the last move the start climbs to its own plateau
 * (--tol), on full sweeps.
 * A move's climb is local (wake_moved()): quiet sweeps of the rows the
 * move changed and their neighbours, and of the rows that those wake as
 * they gain (sweep.h), never a full sweep, unless the move woke more
 * than half of the rows (small graphs), where it is the plain climb. A
 * move touches a few thousand rows of 2x10^5 and wakes a fifth of them;
 * with a full sweep after each move and each unpaid one, the moves cost
 * as much as the climb to the first plateau on the directed and two-mode
 * graphs of 10^5 nodes, whose moves mostly fail (DEVELOPERS.md, "Local
 * climbs after a move").
 * Moves stop after RESEED_FAILS failures in a row, RESEED_MAX moves, or
 * when they have used half as many sweeps as the climb to the first
 * plateau (at least RESEED_MIN_BUDGET).
 *
 * Savepoints. An exact resume must replay the same draws, so a savepoint
 * holds the start in progress (as it stands after a whole sweep while it
 * climbs, or as it levelled off while its moves run: the moves are drawn
 * again from the seed and the start) and the best earlier start.
 *
 * The one thing a newcomer gets wrong: l(F) after a move is recomputed
 * (the move rewrote a whole column), but the trace keeps the value before
 * it, against which the plateau rule measures. A kept move may end with
 * l(F) lower than before it, when its cover is the shorter description.
 */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/agm.h"
#include "coterie/model_directed.h"
#include "coterie/rng.h"
#include "coterie/seed.h"
#include "coterie/util.h"
#include "fit-internal.h"

#define RESEED_MAX 12u
#define RESEED_FAILS 3u
#define RESEED_MIN_BUDGET 10u
#define RESEED_BUDGET_DIV 2u /* the moves' sweeps: the climb's over this */
#define MERGE_BATCH_DIV 16u /* the first merge move joins at most k / 16 pairs */
#define MERGE_BATCH_MIN 8u
#define LOCAL_MAX_SHARE 0.5 /* a move's climb is local when it wakes at most this share of the rows */

/* Where the climb of the current start is kept while its moves run. */
enum climb_copy {
	CLIMB_NONE = 0, /* no copy: the start is not reseeding */
	CLIMB_SAVED,    /* borrowed from the savepoint an exact resume began at */
	CLIMB_OWNED,    /* made here from the levelled model; freed here */
};

/* ---- parts and savepoints ---- */

void fit_part_release(struct fit_part *p)
{
	fcsr_release(&p->F);
	free(p->trace);
	free(p->awake);
	memset(p, 0, sizeof *p);
}

void fit_savepoint_free(struct fit_savepoint *r)
{
	if (!r)
		return;
	fit_part_release(&r->cur);
	fit_part_release(&r->best);
	free(r);
}

/* A deep copy of part (strengths and trace); 0 or -1. */
static int part_dup(struct fit_part *dst, const struct fit_part *src)
{
	*dst = *src;
	memset(&dst->F, 0, sizeof dst->F);
	dst->awake = NULL;
	dst->trace = util_malloc(src->ntrace ? src->ntrace : 1, sizeof *dst->trace);
	if (!dst->trace)
		return -1;
	if (src->awake && !(dst->awake = util_memdup(src->awake, src->F.n))) {
		free(dst->trace);
		dst->trace = NULL;
		return -1;
	}
	if (src->ntrace)
		memcpy(dst->trace, src->trace, src->ntrace * sizeof *dst->trace);
	if (fcsr_copy(&dst->F, &src->F)) {
		free(dst->trace);
		free(dst->awake);
		dst->trace = NULL;
		dst->awake = NULL;
		return -1;
	}
	return 0;
}

struct fit_savepoint *fit_savepoint_dup(const struct fit_savepoint *src)
{
	struct fit_savepoint *r = util_calloc(1, sizeof *r);
	if (!r)
		return NULL;
	*r = *src;
	memset(&r->cur, 0, sizeof r->cur);
	memset(&r->best, 0, sizeof r->best);
	if (part_dup(&r->cur, &src->cur) ||
	    (src->best_start && part_dup(&r->best, &src->best))) {
		fit_savepoint_free(r);
		return NULL;
	}
	return r;
}

/* The fit's model and trace now, as a part; with_awake: and the sweep
 * engine's awake flags when they are the model's. */
static int part_of_model(struct fit *f, struct fit_part *p, int with_awake)
{
	memset(p, 0, sizeof *p);
	p->trace = util_malloc(f->ntrace ? f->ntrace : 1, sizeof *p->trace);
	if (!p->trace || model_export(&f->m, &p->F) ||
	    (with_awake && f->awake_ok && !(p->awake = fit_awake_copy(f)))) {
		fcsr_release(&p->F);
		free(p->trace);
		p->trace = NULL;
		return -1;
	}
	memcpy(p->trace, f->trace, f->ntrace * sizeof *p->trace);
	p->ntrace = f->ntrace;
	p->sweep = f->sweep;
	p->plateau_sweep = f->plateau_sweep;
	return 0;
}

/* Load a part as the current start's model and trace. The plateau streak
 * is counted again from the trace, with the arithmetic of fit_run_start(). */
static int part_load(struct fit *f, const struct fit_part *p)
{
	if (model_import(&f->m, &p->F))
		return -1;
	f->awake_ok = 0;
	f->ntrace = 0;
	for (uint32_t i = 0; i < p->ntrace; i++) {
		if (fit_trace_add(f, 0))
			return -1;
		f->trace[i] = p->trace[i];
	}
	f->sweep = p->sweep;
	f->plateau_sweep = p->plateau_sweep;
	f->streak = 0;
	for (uint32_t i = 1; i < p->ntrace; i++) {
		double prev = p->trace[i - 1].loglik, ll = p->trace[i].loglik;
		double gain = (ll - prev) / (fabs(prev) > 0 ? fabs(prev) : 1.0);
		f->streak = gain < f->p.tol ? f->streak + 1 : 0;
	}
	return 0;
}

struct fit_savepoint *fit_make_savepoint(struct fit *f)
{
	struct fit_savepoint *r = util_calloc(1, sizeof *r);
	if (!r)
		return NULL;
	r->start = f->start;
	r->phase = f->climb ? FIT_PHASE_RESEED : FIT_PHASE_CLIMB;
	int rc = f->climb ? part_dup(&r->cur, f->climb) : part_of_model(f, &r->cur, 1);
	if (rc == 0 && f->best_start) {
		r->best_start = f->best_start;
		r->best_reseeds = f->best_reseeds;
		r->best_state = f->best_state;
		r->best_loglik = f->best_loglik;
		rc = part_dup(&r->best, &f->best);
	}
	if (rc) {
		fit_savepoint_free(r);
		return NULL;
	}
	return r;
}

/* After an interrupt that let the sweep end (not a hard stop): keep the
 * savepoint for the last snapshot. */
static void keep_savepoint(struct fit *f)
{
	if (atomic_load(&f->stop_req) || !atomic_load(&f->interrupt_req))
		return;
	struct fit_savepoint *r = fit_make_savepoint(f);
	if (r) {
		fit_savepoint_free(f->res_out);
		f->res_out = r;
	}
}

/* ---- the best start ---- */

/* The score by which starts and moves are compared, higher better: minus
 * the code length of the cover read from F as the output reads it, but
 * with every column kept (agm_from_strengths_every_column(), which sets
 * F's thresholds and, on a two-sided graph, its side sums; on the graph
 * the model is fitted to). 0, or -1 (no memory). */
static int cover_score(const struct fit *f, struct fcsr *F, double *score)
{
	struct agm a;
	memset(&a, 0, sizeof a);
	if (agm_from_strengths_every_column(&a, f->gw, F, f->m.epsilon, f->m.delta,
					    AGM_MIN_LINKS))
		return -1;
	*score = -agm_code_length_of(&a.cover, a.loglik, f->gw);
	agm_release(&a);
	return 0;
}

/* The score of the model as it stands (its strengths exported once), or
 * of a saved part (copied: a savepoint's strengths are not changed): 0 or
 * -1. */
static int model_score(struct fit *f, double *score)
{
	struct fcsr F;
	memset(&F, 0, sizeof F);
	int rc = model_export(&f->m, &F) ? -1 : cover_score(f, &F, score);
	fcsr_release(&F);
	return rc;
}

static int part_score(const struct fit *f, const struct fit_part *p, double *score)
{
	struct fcsr F;
	memset(&F, 0, sizeof F);
	int rc = fcsr_copy(&F, &p->F) ? -1 : cover_score(f, &F, score);
	fcsr_release(&F);
	return rc;
}

static int keep_best(struct fit *f, enum fit_state st)
{
	double ll = f->trace[f->ntrace - 1].loglik, score = ll;
	if (f->starts > 1) { /* one start is kept whatever its score */
		if (f->best_start && isnan(f->best_score) &&
		    part_score(f, &f->best, &f->best_score))
			return -1; /* (the best start of a savepoint: scored once) */
		if (model_score(f, &score))
			return -1;
	}
	if (f->start_ends) /* run.json's record (fit_new(): several starts) */
		f->start_ends[f->start - 1] =
			(struct start_end){ ll, -score };
	if (f->best_start && !(score > f->best_score))
		return 0;
	fit_part_release(&f->best);
	if (part_of_model(f, &f->best, 0))
		return -1;
	f->best_reseeds = f->reseeds;
	f->best_state = st;
	f->best_start = f->start;
	f->best_loglik = ll;
	f->best_score = score;
	return 0;
}

static int restore_best(struct fit *f)
{
	const struct fit_part *b = &f->best;
	if (model_import(&f->m, &b->F))
		return -1;
	f->awake_ok = 0;
	memcpy(f->trace, b->trace, b->ntrace * sizeof *b->trace);
	f->ntrace = b->ntrace;
	f->sweep = b->sweep;
	f->plateau_sweep = b->plateau_sweep;
	f->reseeds = f->best_reseeds;
	return 0;
}

/* The best earlier start of the savepoint an exact resume begins at. */
static int best_of_savepoint(struct fit *f, const struct fit_savepoint *ri)
{
	if (!ri->best_start)
		return 0;
	if (part_dup(&f->best, &ri->best))
		return -1;
	f->best_reseeds = ri->best_reseeds;
	f->best_state = ri->best_state;
	f->best_start = ri->best_start;
	f->best_loglik = ri->best_loglik;
	f->best_score = NAN; /* scored when the next start ends (keep_best()) */
	return 0;
}

/* ---- reseeding ---- */

/* The community with the most members (strength at least delta) and
 * the column with the smallest sum among the others; *size_host gets
 * the host's size. 0 or -1. */
static int pick_columns(const struct model *m, uint32_t *host_out, uint32_t *victim_out,
			uint32_t *size_host)
{
	uint32_t k = m->k;
	uint32_t *size = util_calloc(k, sizeof *size);
	if (!size)
		return -1;
	for (uint32_t u = 0; u < m->n; u++)
		for (uint32_t i = 0; i < m->rows[u].nnz; i++)
			if (m->rows[u].e[i].v >= m->delta)
				size[m->rows[u].e[i].c]++;
	uint32_t host = 0;
	for (uint32_t c = 1; c < k; c++)
		if (size[c] > size[host])
			host = c;
	uint32_t victim = host == 0 ? 1 : 0;
	for (uint32_t c = 0; c < k; c++)
		if (c != host && m->colsum[c] < m->colsum[victim])
			victim = c;
	*host_out = host;
	*victim_out = victim;
	*size_host = size[host];
	free(size);
	return 0;
}

/* Empty column victim and seed it on centre and its neighbours inside
 * the host (buf: k + 1 entries of scratch). 0 or -1. */
static int replant_column(struct fit *f, uint32_t host, uint32_t victim, uint32_t centre,
			  struct fentry *buf)
{
	struct model *m = &f->m;
	for (uint32_t u = 0; u < m->n; u++) {
		const struct frow *row = &m->rows[u];
		uint32_t o = 0, had = 0;
		for (uint32_t i = 0; i < row->nnz; i++) {
			if (row->e[i].c == victim)
				had = 1;
			else
				buf[o++] = row->e[i];
		}
		if (had && model_set_row(m, u, buf, o))
			return -1;
	}
	for (uint64_t j = f->gw->off[centre]; j <= f->gw->off[centre + 1]; j++) {
		uint32_t u = j < f->gw->off[centre + 1] ? f->gw->adj[j] : centre;
		const struct frow *row = &m->rows[u];
		int in_host = u == centre;
		for (uint32_t i = 0; i < row->nnz; i++)
			if (row->e[i].c == host && row->e[i].v >= m->delta)
				in_host = 1;
		if (!in_host)
			continue;
		uint32_t o = 0, put = 0;
		for (uint32_t i = 0; i < row->nnz; i++) {
			if (!put && row->e[i].c > victim) {
				buf[o++] = (struct fentry){ victim, 1.0 };
				put = 1;
			}
			buf[o++] = row->e[i];
		}
		if (!put)
			buf[o++] = (struct fentry){ victim, 1.0 };
		if (model_set_row(m, u, buf, o))
			return -1;
	}
	model_recount(m);
	return 0;
}

/* One move's change of the model: 1 made, 0 nothing to do, -1 error. */
static int reseed_column(struct fit *f, struct rng *r)
{
	struct model *m = &f->m;
	if (m->k < 2)
		return 0;
	uint32_t host, victim, size_host;
	if (pick_columns(m, &host, &victim, &size_host))
		return -1;
	if (size_host < 2)
		return 0;
	/* a random member of the host */
	uint32_t pick = (uint32_t)rng_below(r, size_host), centre = 0;
	for (uint32_t u = 0, seen = 0; u < m->n; u++)
		for (uint32_t i = 0; i < m->rows[u].nnz; i++)
			if (m->rows[u].e[i].c == host && m->rows[u].e[i].v >= m->delta) {
				if (seen++ == pick)
					centre = u;
			}
	struct fentry *buf = util_malloc((size_t)m->k + 1, sizeof *buf);
	if (!buf)
		return -1;
	int rc = replant_column(f, host, victim, centre, buf) ? -1 : 1;
	free(buf);
	return rc;
}

/* Wake the rows a move changed (against saved, the model before it) and
 * their neighbours, and no other row: the move's climb (f->local) sweeps
 * those and the rows they wake in turn. Rows elsewhere see the same
 * gradient as before the move but for the column sums of the columns the
 * move rewrote, and every row holding one of those was changed. When
 * more than LOCAL_MAX_SHARE of the rows would wake (small graphs: on
 * the 297 neurons of C. elegans a move wakes 250), the climb is the
 * plain one, a full sweep first, which costs no more there. 1 (local),
 * 0 (plain: the engine's flags are not the model's) or -1. */
static int wake_moved(struct fit *f, const struct fcsr *saved)
{
	const struct model *m = &f->m; /* the sweep engine's rows are the model's */
	uint8_t *changed = util_calloc(m->n ? m->n : 1, 1);
	if (!changed) {
		f->awake_ok = 0;
		return -1;
	}
	for (uint32_t u = 0; u < m->n; u++) {
		const struct frow *r = &m->rows[u];
		uint64_t was = saved->off[u + 1] - saved->off[u];
		changed[u] = r->nnz != was ||
			     (was && memcmp(r->e, saved->e + saved->off[u], was * sizeof *r->e) != 0);
	}
	/* (set either way: a plain climb's full first sweep ignores them) */
	int local = (double)sweep_wake(f->sw, changed) <= LOCAL_MAX_SHARE * m->n;
	f->awake_ok = local;
	free(changed);
	return local;
}

/* Climb on from where a move's climb levelled off at FIT_MOVE_TOL to
 * the fit's own plateau (--tol). */
static enum fit_state climb_on(struct fit *f)
{
	f->streak = 0;
	return fit_run_start(f, 0);
}

/* Reseed a levelled start; returns how the fit ended (LEVELLED when the
 * moves ran out, or STOPPED/FINISHED/FAILED when something else ended it). */
static enum fit_state reseed(struct fit *f)
{
	struct rng r;
	rng_init(&r, f->p.seed ^ 0x7ef1e5ULL ^ ((uint64_t)f->start << 48));
	struct fcsr saved;
	memset(&saved, 0, sizeof saved);
	enum fit_state st = FIT_LEVELLED;
	unsigned fails = 0;
	/* a merge batch perturbs many columns at once: on a graph of 10^6
	 * nodes (k 11765) an uncapped first batch failed, its climb cost a
	 * start's and its fill raised the peak from 3.37 to 4.82 GB; the
	 * batch is capped (at least 8) and halved on a failure. k / 16 since
	 * the move reads the cover by the membership rule (session 9): at 10^5
	 * nodes (k 1142, seeds 1-3) ONMI 0.815 on average at k / 32, 0.850 at
	 * k / 16, 0.842 at k / 8, in the same time (DEVELOPERS.md, "Larger
	 * merge batches") */
	uint32_t merge_limit = f->m.k / MERGE_BATCH_DIV > MERGE_BATCH_MIN ? f->m.k / MERGE_BATCH_DIV
									  : MERGE_BATCH_MIN;
	/* the moves may spend at most half as many sweeps as the climb did
	 * (and at least RESEED_MIN_BUDGET), counted as sweeps whether
	 * local or not. From clusters
	 * the moves kept came first: at 10^5 and 2x10^5 nodes (mixing 0.2)
	 * the moves of a budget of a whole climb (30 sweeps at least) and
	 * those of half of one (10 at least) kept the same model, in 12.5
	 * and 27.0 s against 6.0 and 13.5 s (DEVELOPERS.md, "Seeds from
	 * clusters") */
	uint32_t budget = f->sweep / RESEED_BUDGET_DIV > RESEED_MIN_BUDGET
				  ? f->sweep / RESEED_BUDGET_DIV
				  : RESEED_MIN_BUDGET;
	uint32_t spent = 0;
	double now = 0.0;
	int have_now = 0;
	for (unsigned move = 0; move < RESEED_MAX && fails < RESEED_FAILS && spent < budget;
	     move++) {
		if (fit_stopping(f)) {
			st = FIT_STOPPED;
			break;
		}
		/* the score before the move (model_score(): built again only
		 * when a kept move changed the model) */
		if (!have_now && model_score(f, &now)) {
			st = FIT_FAILED;
			break;
		}
		have_now = 1;
		double before = now, after = 0.0;
		int paid = 0;
		uint32_t ntrace = f->ntrace, sweep = f->sweep, plateau = f->plateau_sweep;
		fcsr_release(&saved);
		if (model_export(&f->m, &saved))
			return FIT_FAILED;
		uint32_t made = 0;
		int rc = f->p.model == MODEL_BIGCLAM || f->p.model == MODEL_DIRECTED ||
				 f->p.model == MODEL_TWO_MODE
				 ? fit_merge_move(f, &r, merge_limit, &made)
				 : 0;
		if (rc == 0)
			rc = reseed_column(f, &r);
		if (rc <= 0) {
			st = rc < 0 ? FIT_FAILED : FIT_LEVELLED;
			break;
		}
		f->ll_moved_value = fit_loglik(f);
		f->ll_moved = 1;
		int local = wake_moved(f, &saved);
		if (local < 0) {
			st = FIT_FAILED;
			break;
		}
		if (local)
			f->stats.moves_local++;
		else
			f->stats.moves_plain++;
		f->streak = 0;
		f->moving = 1;
		f->local = local; /* until the move is judged, its climb_on() too */
		st = fit_run_start(f, 0);
		f->moving = 0;
		/* a move that has not paid at FIT_MOVE_TOL climbs on to --tol
		 * before it is refused: the short climb understates a move, and
		 * on two-sided models it refused every move (DEVELOPERS.md) */
		if (st == FIT_LEVELLED) {
			if (model_score(f, &after)) {
				st = FIT_FAILED;
				break;
			}
			paid = after > before;
			if (!paid)
				st = climb_on(f);
		}
		f->local = 0;
		spent += f->sweep - sweep;
		if (st == FIT_FAILED)
			break;
		if (!paid && model_score(f, &after)) {
			st = FIT_FAILED;
			break;
		}
		if (after > before) {
			fails = 0;
			f->reseeds++;
			now = after;
		} else {
			if (model_import(&f->m, &saved)) {
				st = FIT_FAILED;
				break;
			}
			f->awake_ok = 0;
			f->ntrace = ntrace;
			f->sweep = sweep;
			f->plateau_sweep = plateau;
			fails++;
			if (made)
				merge_limit = made / 2;
		}
		if (st != FIT_LEVELLED)
			break;
	}
	fcsr_release(&saved);
	/* the moves' climbs levelled off at FIT_MOVE_TOL: the kept model
	 * climbs on to the fit's own plateau */
	if (st == FIT_LEVELLED && f->reseeds > 0)
		st = climb_on(f);
	return st;
}

enum fit_state fit_run_moves(struct fit *f)
{
	return reseed(f);
}

/* ---- the starts ---- */

/* Start r (0-based) from a fresh seeding: 0 or -1. */
static int begin_start(struct fit *f, uint32_t r)
{
	if (r > 0) {
		for (uint32_t u = 0; u < f->gw->n; u++)
			model_set_row(&f->m, u, NULL, 0);
		model_recount(&f->m);
		f->ntrace = 0;
		f->sweep = 0;
		f->reseeds = 0;
		f->streak = 0;
		f->plateau_sweep = 0;
	}
	fit_set_state(f, FIT_SEEDING);
	f->awake_ok = 0;
	double t = util_now();
	int seeded = f->m.nsend ? model_directed_seed(f->gw, f->view, &f->m, f->p.seeding,
						      f->p.seed, r, &f->seeds)
				: seed_start(f->gw, &f->m, f->p.seeding, f->p.seed, r, &f->seeds);
	f->stats.seed_seconds += util_now() - t;
	if (seeded || fit_trace_add(f, fit_loglik(f)))
		return -1;
	fit_publish(f, FIT_FITTING);
	return 0;
}

/* Start r to its first plateau (or its end): a fresh seeding, or at
 * r == r0 the start where the savepoint ri left it. *climb is set to
 * the levelled start when ri says its moves were running. */
static enum fit_state climb_start(struct fit *f, uint32_t r, const struct fit_savepoint *ri,
				  struct fit_part *climb, enum climb_copy *copy)
{
	*copy = CLIMB_NONE;
	if (!ri) {
		if (begin_start(f, r))
			return FIT_FAILED;
		return fit_run_start(f, 0);
	}
	/* an exact resume: the start where the interrupt left it */
	f->reseeds = 0;
	if (part_load(f, &ri->cur) || (ri->cur.awake && fit_awake_set(f, ri->cur.awake)))
		return FIT_FAILED;
	fit_publish(f, FIT_FITTING);
	if (ri->phase == FIT_PHASE_CLIMB)
		return fit_run_start(f, 0);
	*climb = ri->cur;
	*copy = CLIMB_SAVED;
	return FIT_LEVELLED;
}

/* One start: its climb, its moves, and whether it is the best. */
static enum fit_state one_start(struct fit *f, uint32_t r, const struct fit_savepoint *ri)
{
	struct fit_part climb;
	enum climb_copy copy;
	f->start = r + 1;
	enum fit_state st = climb_start(f, r, ri, &climb, &copy);
	if (st == FIT_LEVELLED && !f->p.no_reseed) {
		/* kept for an interrupt during the moves (see keep_savepoint) */
		if (copy == CLIMB_NONE) {
			if (part_of_model(f, &climb, 0))
				return FIT_FAILED;
			copy = CLIMB_OWNED;
		}
		f->climb = &climb;
		st = reseed(f);
	} else if (copy != CLIMB_NONE) {
		copy = CLIMB_NONE; /* reseeding is off: the climb is not needed */
	}
	if (st == FIT_STOPPED)
		keep_savepoint(f);
	f->climb = NULL;
	if (copy == CLIMB_OWNED)
		fit_part_release(&climb);
	if (st == FIT_FAILED || keep_best(f, st))
		return FIT_FAILED;
	return st;
}

enum fit_state fit_run_starts(struct fit *f)
{
	enum fit_state final = FIT_FAILED;
	uint32_t r0 = 0;
	const struct fit_savepoint *ri = f->res_in;
	if (ri) {
		r0 = ri->start - 1;
		if (best_of_savepoint(f, ri))
			return FIT_FAILED;
	}
	f->in_starts = 1;
	for (uint32_t r = r0; r < f->starts; r++) {
		final = one_start(f, r, r == r0 ? ri : NULL);
		if (final == FIT_FAILED || final == FIT_STOPPED)
			break;
	}
	f->in_starts = 0;
	if (final != FIT_FAILED && f->best_start && f->best_start != f->start) {
		enum fit_state keep = final == FIT_STOPPED ? FIT_STOPPED : f->best_state;
		final = restore_best(f) ? FIT_FAILED : keep;
	}
	return final;
}
