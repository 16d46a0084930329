/*
 * select: choose k by held-out likelihood (see select.h).
 *
 * The search keeps up to `threads` single-threaded fits running, started
 * in grid order (a batch of fewer fits than threads shares the threads
 * among them), and poll()s their wake-up pipes. A finished fit is scored
 * at once; the scores are then taken in grid order (a point waits for all
 * those before it), which is where the best so far and the early stop are
 * decided, so the outcome is the same for any number of fits at once.
 * Fits started beyond the stopping point are stopped and discarded.
 *
 * The search by the shape is a series of such batches (the bracket, each
 * step of the walk, each refinement), each built from the points decided
 * before it, so it too is the same for any number of fits at once.
 *
 * The one thing a newcomer gets wrong: the held-out pairs must leave the
 * likelihood (fit_exclude()), not become non-edges; see holdout.c. And a
 * warm start may come only from a fit on the same split (with several
 * folds there is none: warm starts are for the one-fold search only).
 */
#include "coterie/select.h"

#include <errno.h>
#include <math.h>
#include <poll.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/fit.h"
#include "coterie/graph.h"
#include "coterie/holdout.h"
#include "coterie/memory.h"
#include "coterie/model.h"
#include "coterie/seed.h"
#include "coterie/sweep.h"
#include "coterie/util.h"
#include "select-internal.h"

/* The scoring fits of a search by the shape stop at a plateau of this
 * relative gain (the final fit keeps --tol): on planted graphs of 2x10^4
 * and 10^5 nodes (mixing 0.2) every k scored ranked the same and the
 * same k was chosen as at 1e-4, for 30-36% less CPU (DEVELOPERS.md). */
#define SELECT_SHAPE_TOL 1e-3

int select_params_default(struct select_params *sp, const struct graph *g, uint32_t *minima)
{
	memset(sp, 0, sizeof *sp);
	sp->kmin = 2;
	sp->share = 0.1;
	sp->step = 1.25;
	uint32_t L;
	/* a directed graph is seeded on its undirected view (model_directed.h),
	 * so its ego-nets are counted there; a two-mode graph on itself */
	struct graph *view = g->paired ? graph_undirected_view(g) : NULL;
	if ((g->paired && !view) || seed_count_minima(view ? view : g, &L)) {
		graph_free(view);
		return -1;
	}
	uint32_t n = view ? view->n : g->n; /* the nodes as given, not the copies */
	graph_free(view);
	if (minima)
		*minima = L;
	uint64_t top = 3 * (uint64_t)L;
	if (top < 10)
		top = 10;
	if (top > 500)
		top = 500;
	if (top > n / 4)
		top = n / 4;
	if (top < sp->kmin)
		top = sp->kmin;
	sp->kmax = (uint32_t)top;
	sp->start = L; /* kept within [kmin, kmax] by the search */
	sp->start_clusters = 1;
	return 0;
}

static int parse_k(const char *s, size_t len, uint32_t *out)
{
	uint64_t v = 0;
	if (len == 0 || len > 9)
		return -1;
	for (size_t i = 0; i < len; i++) {
		if (s[i] < '0' || s[i] > '9')
			return -1;
		v = v * 10 + (uint64_t)(s[i] - '0');
	}
	if (v < 1 || v > MODEL_MAX_K)
		return -1;
	*out = (uint32_t)v;
	return 0;
}

int select_grid_parse(const char *s, struct select_params *sp)
{
	char shown[96];
	util_escape(s, shown, sizeof shown, 1);
	if (strchr(s, ',') || !strchr(s, ':')) {
		uint32_t n = 0;
		const char *p = s;
		for (;;) {
			const char *e = strchr(p, ',');
			size_t len = e ? (size_t)(e - p) : strlen(p);
			if (n == SELECT_MAX_LIST)
				return error("--k-grid takes at most %d values, '%s' has more",
					     SELECT_MAX_LIST, shown);
			if (parse_k(p, len, &sp->list[n]))
				return error("--k-grid expects A:B, A:B:RATIO or a list like 4,8,16 "
					     "of whole numbers from 1 to %u, not '%s'", MODEL_MAX_K,
					     shown);
			n++;
			if (!e)
				break;
			p = e + 1;
		}
		qsort(sp->list, n, sizeof *sp->list, util_qsort_u32);
		uint32_t o = 0;
		for (uint32_t i = 0; i < n; i++)
			if (o == 0 || sp->list[i] != sp->list[o - 1])
				sp->list[o++] = sp->list[i];
		sp->nlist = o;
		return 0;
	}
	const char *c1 = strchr(s, ':'), *c2 = strchr(c1 + 1, ':');
	uint32_t a, b;
	double ratio = sp->step;
	if (parse_k(s, (size_t)(c1 - s), &a) ||
	    parse_k(c1 + 1, c2 ? (size_t)(c2 - c1 - 1) : strlen(c1 + 1), &b))
		return error("--k-grid expects A:B, A:B:RATIO or a list like 4,8,16 of whole "
			     "numbers from 1 to %u, not '%s'", MODEL_MAX_K, shown);
	if (b < a)
		return error("--k-grid '%s': the last k is below the first", shown);
	if (c2) {
		char *end;
		errno = 0;
		ratio = strtod(c2 + 1, &end);
		if (errno || end == c2 + 1 || *end || !(ratio >= 1.01 && ratio <= 100.0))
			return error("--k-grid '%s': the ratio must be a number from 1.01 to 100",
				     shown);
	}
	sp->kmin = a;
	sp->kmax = b;
	sp->step = ratio;
	sp->nlist = 0;
	return 0;
}

uint32_t select_grid(const struct select_params *sp, uint32_t *ks)
{
	if (sp->nlist) {
		uint32_t n = sp->nlist < SELECT_MAX_LIST ? sp->nlist : SELECT_MAX_LIST;
		memcpy(ks, sp->list, n * sizeof *ks);
		return n;
	}
	uint32_t n = 0;
	double k = sp->kmin;
	while (n < SELECT_MAX_LIST && (uint32_t)llround(k) <= sp->kmax) {
		uint32_t ki = (uint32_t)llround(k);
		if (n == 0 || ki > ks[n - 1])
			ks[n++] = ki;
		k *= sp->step;
	}
	if (n < SELECT_MAX_LIST && (n == 0 || ks[n - 1] < sp->kmax))
		ks[n++] = sp->kmax;
	else if (n == SELECT_MAX_LIST && ks[n - 1] < sp->kmax)
		ks[n - 1] = sp->kmax; /* a very fine grid: still end at kmax */
	return n;
}

void select_result_release(struct select_result *r)
{
	if (!r)
		return;
	free(r->pts);
	memset(r, 0, sizeof *r);
}

uint32_t select_folds(uint64_t m, double share)
{
	double held = share * (double)m;
	if (!(held >= 1.0))
		held = 1.0;
	double f = ceil((double)SELECT_FOLD_EDGES / held);
	return f >= SELECT_MAX_FOLDS ? SELECT_MAX_FOLDS : f <= 1.0 ? 1 : (uint32_t)f;
}

/* A k to score, marked added when beyond the grid asked for, and why. */
struct want {
	uint32_t k;
	int added;
	uint32_t from; /* 0, or the k whose kept fit starts this one */
	int moves;     /* the reseeding moves run after the climb (search.moves) */
	char why[SELECT_REASON];
};

static struct want want_of(uint32_t k, int added, const char *why)
{
	struct want w = { k, added, 0, 0, { 0 } };
	snprintf(w.why, sizeof w.why, "%s", why);
	return w;
}

/* What every fit of a search shares: the folds' splits and parameters. */
struct search {
	const struct select_hooks *hooks;
	struct fit_params p; /* one thread, the whole graph's epsilon */
	struct holdout h[SELECT_MAX_FOLDS];
	uint32_t folds, nslots;
	uint32_t decided; /* points decided so far (select_point.order) */
	int keep;         /* keep each fit's strengths (one fold only) for
			   * warm starts: kept[0 .. nkept), released at
			   * the end (strengths are sparse: a few entries
			   * a node per fit) */
	struct fcsr kept[SELECT_MAX_GRID];
	uint32_t nkept;
	const struct sweep_group *grp; /* NULL: alone; else the fits are
					* spread over its processes */
	int moves; /* the shape search's start may make the reseeding moves
		    * (not asked off with --no-reseed) */
	int all_moves; /* and every other fit, warm ones too (below
			* SELECT_FINE_EDGES held-out edges) */
};

/* Release the kept fits except that of k (0: all). */
static void keep_only(struct search *s, uint32_t k)
{
	uint32_t o = 0;
	for (uint32_t i = 0; i < s->nkept; i++) {
		if (k && s->kept[i].k == k)
			s->kept[o++] = s->kept[i];
		else
			fcsr_release(&s->kept[i]);
	}
	for (uint32_t i = o; i < s->nkept; i++)
		memset(&s->kept[i], 0, sizeof s->kept[i]);
	s->nkept = o;
}

/* Fold f's seed, for its split and its fits: fold 0 is a one-fold
 * search's, so one fold scores exactly as a search without folds. */
static uint64_t fold_seed(uint64_t seed, uint32_t f)
{
	return seed + (uint64_t)f * 0x632be59bd9b4e019ULL;
}

/* One fit of the search: task t fits the pass's k number t / folds on
 * fold t % folds. */
struct slot {
	struct fit *f;
	uint32_t task;
};

/* A warm start for w from the kept fit of w->from, into *F (empty when
 * there is none: the fit then seeds). */
static void warm_of(const struct search *s, const struct want *w, const struct graph *train,
		    struct fcsr *F)
{
	memset(F, 0, sizeof *F);
	struct select_seeding sd = { s->p.seeding, fold_seed(s->p.seed, 0), s->p.epsilon };
	for (uint32_t i = 0; w->from && i < s->nkept; i++)
		if (s->kept[i].k == w->from && select_warm_start(&s->kept[i], train, w->k, &sd, F))
			memset(F, 0, sizeof *F);
}

static int slot_launch(struct slot *sl, const struct search *s, const struct want *w,
		       uint32_t task, unsigned threads, struct fold_score *sc)
{
	uint32_t fold = task % s->folds;
	struct fit_params q = s->p;
	q.k = w->k;
	q.threads = threads;
	q.seed = fold_seed(s->p.seed, fold);
	if (s->moves && (w->moves || s->all_moves))
		q.no_reseed = 0;
	sl->task = task;
	struct fcsr warm;
	warm_of(s, w, s->h[fold].train, &warm);
	struct fit_origin o = { .F = &warm, .moves = s->all_moves };
	sl->f = fit_new(s->h[fold].train, &q, warm.e ? &o : NULL);
	sc->warm_from = warm.e ? w->from : 0;
	fcsr_release(&warm);
	if (!sl->f)
		return -1;
	fit_exclude(sl->f, s->h[fold].held);
	if (fit_start(sl->f)) {
		fit_free(sl->f);
		sl->f = NULL;
		return -1;
	}
	return 0;
}

/* Score a fit (of the model kind) that ended on its fold's pairs; frees
 * it. Returns 0 or -1. */
static int slot_score(struct slot *sl, const struct holdout *h, enum model_kind kind,
		      struct fold_score *sc, int keep)
{
	enum fit_state st = fit_wait(sl->f);
	struct snapshot *s = fit_snapshot(sl->f);
	int rc = -1;
	if (st != FIT_FAILED) {
		rc = holdout_score(h, &s->F, s->epsilon, kind, &sc->ll, &sc->auc);
		sc->sweeps = s->sweep;
		sc->seconds = s->seconds;
		if (rc == 0 && keep)
			rc = fcsr_copy(&sc->F, &s->F);
	}
	snapshot_release(s);
	fit_free(sl->f);
	sl->f = NULL;
	return rc;
}

/* The point of k from its folds' scores: means, the spread of the
 * log-likelihood (sample standard deviation), the time summed. With one
 * fold every figure is that fold's, bit for bit. */
static struct select_point point_of(uint32_t k, const struct fold_score *sc, uint32_t folds,
				    int added)
{
	double ll = 0, auc = 0, sweeps = 0, secs = 0, ss = 0;
	for (uint32_t f = 0; f < folds; f++) { /* the scores */
		ll += sc[f].ll;
		auc += sc[f].auc;
	}
	for (uint32_t f = 0; f < folds; f++) { /* the cost */
		sweeps += sc[f].sweeps;
		secs += sc[f].seconds;
	}
	ll /= folds;
	for (uint32_t f = 0; f < folds && folds > 1; f++)
		ss += (sc[f].ll - ll) * (sc[f].ll - ll);
	return (struct select_point){
		.k = k, .heldout = ll, .heldout_sd = folds > 1 ? sqrt(ss / (folds - 1)) : 0.0,
		.auc = auc / folds, .sweeps = (uint32_t)llround(sweeps / folds), .seconds = secs,
		.folds = folds, .added = added,
	};
}

/* The best so far: its k (0: none yet) and mean held-out score. */
struct best {
	uint32_t k;
	double heldout;
};

static void stop_all(struct slot *sl, uint32_t nslots)
{
	for (uint32_t i = 0; sl && i < nslots; i++)
		if (sl[i].f) {
			fit_stop(sl[i].f);
			fit_free(sl[i].f);
			sl[i].f = NULL;
		}
}

/* The first task at or after t that is this process's (t % P == me). */
static uint32_t own_from(uint32_t t, uint32_t P, uint32_t me)
{
	return t + (me + P - t % P) % P;
}

/* The points decided in list order from the scores in: once all folds
 * of a k are in, its point, the kept fit, the hook, the best and the
 * early stop. Sets *halt once the pass is over. */
static void decide(struct search *s, const struct want *w, uint32_t nk, int early,
		   struct fold_score *sc, const unsigned char *done, struct select_point *pts,
		   uint32_t *consumed, uint32_t *worse, int *halt, struct best *b)
{
	uint32_t F = s->folds;
	while (!*halt && *consumed < nk && !memchr(done + *consumed * F, 0, F)) {
		uint32_t c = *consumed;
		pts[c] = point_of(w[c].k, sc + c * F, F, w[c].added);
		pts[c].order = ++s->decided;
		pts[c].warm_from = sc[c * F].warm_from;
		if (s->keep && s->nkept < SELECT_MAX_GRID && sc[c * F].F.e) {
			s->kept[s->nkept++] = sc[c * F].F; /* moves; its k is w's */
			memset(&sc[c * F].F, 0, sizeof sc->F);
		}
		memcpy(pts[c].reason, w[c].why, SELECT_REASON);
		if (s->hooks && s->hooks->scored)
			s->hooks->scored(&pts[c], s->hooks->arg);
		if (b->k == 0 || pts[c].heldout > b->heldout) {
			*b = (struct best){ pts[c].k, pts[c].heldout };
			*worse = 0;
		} else if (++*worse >= 2 && early) {
			*halt = 1;
		}
		(*consumed)++;
	}
	if (*consumed == nk)
		*halt = 1;
}

/*
 * Score w[0 .. nk) in that order, each on every fold, into pts; with
 * early, stop after two k in a row below the best (*b, updated). The
 * decisions are taken in list order whatever order the fits end in.
 * *npts receives the points scored. Returns 0, -1 (reported) or -2.
 *
 * Shared among P processes (s->grp): process me runs the tasks t with
 * t % P == me, in rounds; at the end of a round (all its tasks of the
 * round ended, or it halted or was asked to stop) the scores are
 * exchanged (select_share_round()) and decided as above. A pass without
 * an early stop is one round; one with it, rounds of P x slots tasks,
 * so that little is fitted past the stopping point.
 */
static int search_pass(struct search *s, const struct want *w, uint32_t nk, int early,
		       struct select_point *pts, uint32_t *npts, struct best *b)
{
	uint32_t F = s->folds, ntask = nk * F;
	uint32_t P = s->grp ? s->grp->size : 1, me = s->grp ? s->grp->rank : 0;
	uint32_t nslots = s->nslots < ntask ? s->nslots : ntask;
	/* fewer fits of this process than threads (the shape search's start,
	 * walk and refinements: one fit a batch): the threads go into the
	 * fits, which end the same for any number of threads (DESIGN.md) */
	uint32_t mine = (ntask + P - 1 - me) / P;
	unsigned threads = mine && mine < s->nslots ? s->nslots / mine : 1;
	uint32_t span = P == 1 || !early ? ntask : P * nslots;
	struct fold_score *sc = util_calloc(ntask, sizeof *sc);
	unsigned char *done = util_calloc(ntask, 1);
	struct slot *sl = util_calloc(nslots, sizeof *sl);
	struct pollfd *pfd = util_calloc(nslots, sizeof *pfd);
	int rc = sc && done && sl && pfd ? 0 : -1;
	uint32_t consumed = 0, worse = 0, t0 = 0, t1 = span < ntask ? span : ntask;
	uint32_t next = own_from(0, P, me);
	int halt = 0, stop = 0, exchanged = 0;
	while (rc == 0) {
		uint32_t active = 0;
		for (uint32_t i = 0; i < nslots && rc == 0; i++) {
			if (!sl[i].f && !halt && !stop && next < t1) {
				rc = slot_launch(&sl[i], s, &w[next / F], next, threads, &sc[next]);
				next += P;
			}
			active += sl[i].f != NULL;
		}
		if (rc || (active == 0 && P == 1))
			break;
		if (active == 0) { /* shared: the round is over here */
			exchanged = 1;
			if ((rc = select_share_round(s->grp, 0, &stop, t0, t1, sc, done, s->keep)))
				break;
			exchanged = 0;
			decide(s, w, nk, early, sc, done, pts, &consumed, &worse, &halt, b);
			if (stop)
				rc = -2;
			if (stop || halt || t1 == ntask)
				break;
			t0 = t1;
			t1 = ntask - t1 < span ? ntask : t1 + span;
			next = own_from(t0, P, me);
			continue;
		}
		for (uint32_t i = 0; i < nslots; i++)
			pfd[i] = (struct pollfd){ sl[i].f ? fit_wake_fd(sl[i].f) : -1, POLLIN, 0 };
		poll(pfd, nslots, 200);
		for (uint32_t i = 0; i < nslots && rc == 0; i++) {
			if (!sl[i].f)
				continue;
			fit_drain_wake(sl[i].f);
			if (!fit_state_ended(fit_get_state(sl[i].f)))
				continue;
			uint32_t t = sl[i].task;
			rc = slot_score(&sl[i], &s->h[t % F], s->p.model, &sc[t], s->keep);
			done[t] = 1;
		}
		if (rc == 0 && P == 1)
			decide(s, w, nk, early, sc, done, pts, &consumed, &worse, &halt, b);
		if (rc == 0 && s->hooks && s->hooks->should_stop &&
		    s->hooks->should_stop(s->hooks->arg)) {
			if (P == 1)
				rc = -2;
			stop = 1;
		}
		if (halt || stop) /* fits started past the stopping point are not needed */
			stop_all(sl, nslots);
	}
	stop_all(sl, nslots);
	if (rc == -1 && P > 1 && !exchanged) /* the others learn it at the round's end */
		select_share_round(s->grp, 1, &stop, t0, t0, sc, done, 0);
	for (uint32_t t = 0; sc && t < ntask; t++)
		fcsr_release(&sc[t].F);
	UTIL_FREE_ALL(sc, done, sl, pfd);
	*npts = consumed;
	return rc;
}

/* A fit of k with the search's threads fits in memory (or the limit is
 * not known). */
static int fits_memory(const struct search *s, uint32_t k, unsigned threads)
{
	uint64_t lim;
	const char *what;
	int virt;
	struct fit_params q = s->p;
	q.k = k;
	q.threads = threads;
	int ok = memory_limit(&lim, &what, &virt) || memory_fit_estimate(s->h[0].train, &q) <= lim;
	if (s->grp) /* the processes' limits may differ: the search must not */
		ok = select_share_all(s->grp, ok) == 1;
	return ok;
}

/* The k beyond an edge of a geometric grid, same ratio: up from `from`
 * to bound (ending there), or down to 2; at most room. Returns the count. */
static uint32_t beyond(uint32_t from, double step, int up, uint32_t bound, uint32_t *ks,
		       uint32_t room)
{
	uint32_t n = 0, last = from;
	double k = from;
	while (n < room) {
		k = up ? k * step : k / step;
		uint32_t ki = (uint32_t)llround(k);
		if (up && ki > bound)
			ki = bound;
		if (!up && ki < 2)
			ki = 2;
		if (up ? ki <= last : ki >= last) {
			if ((up && last >= bound) || (!up && last <= 2))
				break;
			continue; /* a fine ratio: the next rounded k */
		}
		ks[n++] = last = ki;
	}
	return n;
}

/*
 * The grid's edge: when the largest k of a geometric grid scored best,
 * score k beyond it while the scores rise (the early stop), up to n/4,
 * MODEL_MAX_K and memory; when its smallest above 2 did, down to 2.
 * Points go after pts[0 .. *np). Sets res->extended, bound and edge.
 */
static int extend(struct search *s, const struct graph *g, const struct select_params *sp,
		  struct select_result *res, struct select_point *pts, uint32_t *np, struct best *b,
		  unsigned threads)
{
	uint32_t top = res->grid[res->ngrid - 1], bottom = res->grid[0];
	uint32_t ks[SELECT_MAX_GRID], n = 0, got = 0;
	int up = b->k == top && *np == res->ngrid && !sp->nlist;
	int down = !up && b->k == bottom && bottom > 2 && !sp->nlist;
	uint64_t bound = g->n / 4 < MODEL_MAX_K ? g->n / 4 : MODEL_MAX_K;
	res->bound = (uint32_t)(bound > top ? bound : top);
	int rc = 0;
	if (up || down)
		n = beyond(up ? top : bottom, sp->step, up, res->bound, ks, SELECT_MAX_GRID - *np);
	if (up) /* no further than memory allows */
		for (uint32_t i = 0; i < n; i++)
			if (!fits_memory(s, ks[i], threads)) {
				n = i;
				res->bound = i ? ks[i - 1] : top;
				break;
			}
	if (n > 0) {
		res->extended = up ? 1 : -1;
		notice("choosing k: k %u, the %s of the grid, scored best; scoring k %s %u "
		       "beyond it while the scores rise", b->k, up ? "largest" : "smallest",
		       up ? "up to" : "down to", ks[n - 1]);
		struct want *w = util_calloc(n, sizeof *w);
		if (!w)
			return -1;
		for (uint32_t i = 0; i < n; i++)
			w[i] = want_of(ks[i], 1, "extend past edge");
		rc = search_pass(s, w, n, 1, pts + *np, &got, b);
		free(w);
		*np += got;
	}
	uint32_t lo = pts[0].k, hi = pts[0].k;
	for (uint32_t i = 1; i < *np; i++) {
		lo = pts[i].k < lo ? pts[i].k : lo;
		hi = pts[i].k > hi ? pts[i].k : hi;
	}
	if (*np > 1 && b->k == hi)
		res->edge = 1;
	else if (*np > 1 && b->k == lo && lo > 2)
		res->edge = -1;
	return rc;
}

/*
 * The one-standard-error rule of cross-validation (Breiman, Friedman,
 * Olshen & Stone, "Classification and Regression Trees", 1984, sec. 3.4.3;
 * Hastie, Tibshirani & Friedman, "The Elements of Statistical Learning",
 * 2nd ed., 2009, sec. 7.10): of the points scored on several folds, the
 * smallest k whose mean held-out score is within one standard error of
 * the highest mean (the best point's sd over its folds, / sqrt(folds)).
 * The folds' differences between neighbouring k are mostly noise on a
 * small graph (football: 12 and 15 differ by 1.7 where the error is 3.7),
 * and the smaller cover is the one the data do not refute (select.h).
 */
uint32_t select_one_se(const struct select_point *pts, uint32_t np, uint32_t best_k, double *se)
{
	*se = 0.0;
	double top = 0.0;
	for (uint32_t i = 0; i < np; i++)
		if (pts[i].k == best_k) {
			top = pts[i].heldout;
			if (pts[i].folds > 1)
				*se = pts[i].heldout_sd / sqrt((double)pts[i].folds);
		}
	uint32_t k = best_k;
	for (uint32_t i = 0; i < np; i++)
		if (pts[i].k < k && pts[i].heldout >= top - *se)
			k = pts[i].k;
	return k;
}

int select_by_shape(uint64_t m, const struct select_params *sp)
{
	uint32_t folds = sp->folds ? sp->folds : select_folds(m, sp->share);
	return !sp->nlist && !sp->full && folds == 1;
}

/* The k scored next to k among pts[0 .. np): the largest below (0: none)
 * and the smallest above (0: none). */
static void around(const struct select_point *pts, uint32_t np, uint32_t k, uint32_t *below,
		   uint32_t *above)
{
	*below = *above = 0;
	for (uint32_t i = 0; i < np; i++) {
		if (pts[i].k < k && pts[i].k > *below)
			*below = pts[i].k;
		if (pts[i].k > k && (*above == 0 || pts[i].k < *above))
			*above = pts[i].k;
	}
}

/* The mean held-out score of k among pts[0 .. np) (k scored). */
static double score_of(const struct select_point *pts, uint32_t np, uint32_t k)
{
	for (uint32_t i = 0; i < np; i++)
		if (pts[i].k == k)
			return pts[i].heldout;
	return -INFINITY;
}

/*
 * Which gap around the best k b to refine first: 0 the one below (to
 * a), 1 the one above (to c). With both neighbours, the side of the
 * vertex of the parabola through the three scores in ln k (successive
 * parabolic interpolation, as in Brent, Algorithms for Minimization
 * without Derivatives, 1973, ch. 5), when it opens downwards; else the
 * better neighbour's side.
 */
static int toward(const struct select_point *pts, uint32_t np, uint32_t a, uint32_t b, uint32_t c)
{
	if (!a || !c)
		return !a;
	double xa = log(a), xb = log(b), xc = log(c);
	double ya = score_of(pts, np, a), yb = score_of(pts, np, b), yc = score_of(pts, np, c);
	double den = (xa - xb) * (xa - xc) * (xb - xc);
	double A = (xc * (yb - ya) + xb * (ya - yc) + xa * (yc - yb)) / den;
	double B = (xc * xc * (ya - yb) + xb * xb * (yc - ya) + xa * xa * (yb - yc)) / den;
	if (A < 0 && isfinite(B / A))
		return -B / (2 * A) > xb;
	return yc > ya;
}

/* Score the wants w[0 .. n) not scored yet, after pts[0 .. *np), as one
 * batch (in parallel, decided in the order of w). 0, -1 or -2. */
static int shape_batch(struct search *s, struct want *w, uint32_t n, struct select_point *pts,
		       uint32_t *np, struct best *b)
{
	uint32_t o = 0;
	for (uint32_t i = 0; i < n; i++) {
		int seen = 0;
		for (uint32_t j = 0; j < *np && !seen; j++)
			seen = pts[j].k == w[i].k;
		for (uint32_t j = 0; j < o && !seen; j++)
			seen = w[j].k == w[i].k;
		if (!seen)
			w[o++] = w[i];
	}
	if (o == 0 || *np + o > SELECT_MAX_GRID)
		return 0;
	for (uint32_t i = 0; i < o; i++) { /* warm: from the nearest k above, */
		uint32_t below, above; /* or below when none is */
		around(pts, *np, w[i].k, &below, &above);
		w[i].from = above ? above : below;
	}
	uint32_t got = 0;
	int rc = search_pass(s, w, o, 0, pts + *np, &got, b);
	*np += got;
	return rc;
}

/* The clusters that the seeding of the search's fits finds on the
 * (first) training split with k unbounded: where the search begins. On a
 * directed graph they are counted on its undirected view, as the fits
 * seed there. */
static int count_clusters(const struct search *s, uint32_t *count, double *held_share)
{
	const struct graph *train = s->h[0].train;
	struct graph *view = train->paired ? graph_undirected_view(train) : NULL;
	if (train->paired && !view)
		return -1;
	uint32_t held = 0, n = (view ? view : train)->n;
	int rc = seed_count_clusters(view ? view : train, fold_seed(s->p.seed, 0), 0, s->p.epsilon,
				     count, &held);
	*held_share = n ? (double)held / n : 0.0;
	graph_free(view);
	return rc;
}

static uint32_t clamp_k(double k, uint32_t lo, uint32_t hi)
{
	uint32_t r = k < 1.0 ? 1 : (uint32_t)llround(k);
	return r < lo ? lo : r > hi ? hi : r;
}

/*
 * The search by the curve's shape (select.h): k0 from seeds (the clusters
 * that seeding finds on the training split, count_clusters(); else
 * sp->start), then k0 / fine and k0 fine warm-started from it, fine the
 * refinement's last step (below); while the best is the largest
 * (smallest) k scored, a walk multiplying (dividing) it by
 * r (r = step^2, two grid steps), past the grid's edge up to n/4,
 * MODEL_MAX_K and memory (down
 * to 2); then, one gap a round, the gap around the best on the side of the
 * parabola's vertex (toward()) is halved in log k until both gaps are
 * within one grid step, or half of one (ratio sqrt(step)) on a split of
 * SELECT_FINE_EDGES held-out edges or more. A fit below a k already
 * tried starts from the fit of the nearest k above it (the only split),
 * its weakest columns dropped; one above every k tried from the fit of
 * the nearest k below, the columns its seeding adds added (select_warm.c).
 * Why the bracket at the last step: from the clusters, k0 is near the
 * top (2x10^5 nodes: 2366 of 2374 planted; 10^5: 1131 of 1142), and a
 * bracket already at the last step needs no halving: 3 fits where a
 * bracket of one grid step took 5, 35.8 -> 25.1 s at 2x10^5, the same
 * choice (DEVELOPERS.md, "Pieces joined before seeding"). Points go after
 * pts[0 .. *np). Sets res->start, extended, bound and edge.
 */
static int shape_search(struct search *s, const struct graph *g, const struct select_params *sp,
			struct select_result *res, struct select_point *pts, uint32_t *np,
			struct best *b, unsigned threads)
{
	uint32_t kmin = sp->kmin, kmax = sp->kmax, lo = kmin > 2 ? 2 : kmin;
	uint64_t bound = g->n / 4 < MODEL_MAX_K ? g->n / 4 : MODEL_MAX_K;
	uint32_t hi = bound > kmax ? (uint32_t)bound : kmax;
	/* the start: sp->start up to the bound (the default grid's cap of 500
	 * bounds the cost of a full grid, not where the curve's top is), or
	 * the grid's geometric middle; the bracket within the same range */
	uint32_t top = kmax;
	while (sp->start && top < hi && fits_memory(s, top < hi / 2 ? 2 * top : hi, threads))
		top = top < hi / 2 ? 2 * top : hi; /* memory checked in steps of 2 */
	double mid = sp->start ? sp->start : sqrt((double)kmin * (double)kmax);
	if (sp->start && sp->start_clusters && s->p.seeding == SEED_CLUSTERS) {
		uint32_t c = 0;
		double held = 0.0;
		if (count_clusters(s, &c, &held))
			return -1;
		/* clusters that hold under half of the nodes: propagation
		 * merged communities into blobs too sparse to keep (a planted
		 * graph of 5,000 nodes with 30% of them in two communities:
		 * 78-80 clusters holding every node at most seeds, but at two
		 * of fourteen 2 clusters holding 34 nodes, the rest in halves
		 * of the graph), and the count says nothing; the search
		 * starts at the ego-nets' L as before. The rule was "fewer
		 * than L / 2 clusters", which also sent sparse graphs to L,
		 * where the ego-nets are many more than the communities (LFR,
		 * mean degree 10, 109 communities: 118 clusters holding every
		 * node, L 466; DEVELOPERS.md) */
		if (c >= 2 && held >= 0.5)
			mid = c;
	}
	uint32_t k0 = clamp_k(mid, kmin, top);
	res->start = k0;
	struct want w[3];
	w[0] = want_of(k0, 0, "start");
	/* the start makes the reseeding moves, as the final fit does: every
	 * fit below it starts from it, so the k below are scored on covers
	 * whose pieces were joined, not on the climb's pieces (leaky planted
	 * graphs: 2x10^4 nodes, 231 planted, 295 chosen without, 236 with;
	 * 2x10^5, 2,374 planted, 1589 without, 2221 with; 10^6 8129 both
	 * ways; DEVELOPERS.md, "-k auto on large graphs", session 9). Below
	 * SELECT_FINE_EDGES held-out edges every fit makes them, warm ones
	 * too (all_moves): 10^4 nodes, 97 planted, 124 chosen (ONMI 0.65)
	 * without, 88 (0.89-0.91) with; at 2x10^4 they cost 2.4x the search's
	 * time for 211 instead of 236 and ONMI 0.820 against 0.815 (session
	 * 11) */
	w[0].moves = 1;
	double r = sp->step * sp->step; /* the walk's factor: two grid steps */
	/* the refinement ends at half a grid step (1.118 for 1.25) on a
	 * split of SELECT_FINE_EDGES held-out edges or more, else at one
	 * (select.h): on large graphs the curve's top is sharp and one step
	 * stopped 15% short of it */
	double fine = s->h[0].nedges >= SELECT_FINE_EDGES ? sqrt(sp->step) : sp->step;
	w[1] = want_of(clamp_k(k0 / fine, kmin, top), 0, "bracket");
	w[2] = want_of(clamp_k(k0 * fine, kmin, top), 0, "bracket");
	for (int i = 0; i < 3; i++)
		if ((w[i].added = w[i].k > kmax))
			res->extended = 1;
	/* k0 alone from seeds, then every other fit from the best one so far */
	int rc = shape_batch(s, w, 1, pts, np, b);
	if (rc == 0)
		rc = shape_batch(s, w + 1, 2, pts, np, b);
	uint32_t below, above;
	while (rc == 0) { /* the walk: the best at an end moves that way */
		around(pts, *np, b->k, &below, &above);
		int up = !above && b->k < hi;
		if (!up && (below || b->k <= lo))
			break;
		uint32_t next = up ? clamp_k(b->k * r, b->k, hi) : clamp_k(b->k / r, lo, b->k);
		if (up && next > kmax && !fits_memory(s, next, threads)) {
			hi = b->k;
			break;
		}
		int past = next > kmax || next < kmin;
		if (past)
			res->extended = up ? 1 : -1;
		w[0] = want_of(next, past, past ? "extend past edge" : up ? "walk up" : "walk down");
		uint32_t before = *np;
		rc = shape_batch(s, w, 1, pts, np, b);
		if (*np == before)
			break;
	}
	res->bound = hi;
	while (rc == 0) { /* the refinement: halve the wide gaps around the best */
		around(pts, *np, b->k, &below, &above);
		uint32_t n = 0, side[2] = { below, above };
		double ratio[2];
		for (int i = 0; i < 2; i++)
			ratio[i] = !side[i] ? 0.0 : side[i] > b->k ? (double)side[i] / b->k
							     : (double)b->k / side[i];
		int better = toward(pts, *np, below, b->k, above);
		for (int j = 0; j < 2; j++) {
			int i = j == 0 ? better : !better;
			uint32_t nb = side[i];
			/* a gap of one step between rounded k is up to 1 / k
			 * wider than the step (94 and 118 = round(94 x
			 * 1.25): 1.2553); halving it would only chase noise */
			uint32_t lo_k = nb < b->k ? nb : b->k;
			if (!nb || !(ratio[i] > fine * (1.0 + 1.0 / (double)lo_k)))
				continue;
			uint32_t m = (uint32_t)llround(sqrt((double)nb * (double)b->k));
			if (m == nb || m == b->k)
				continue;
			w[n] = want_of(m, m > kmax || m < kmin, "");
			snprintf(w[n].why, sizeof w[n].why, "refine between %u and %u",
				 nb < b->k ? nb : b->k, nb < b->k ? b->k : nb);
			n++;
			break; /* one gap a round: the next round sees its score */
		}
		uint32_t before = *np;
		if (n == 0 || (rc = shape_batch(s, w, n, pts, np, b)) || *np == before)
			break;
	}
	around(pts, *np, b->k, &below, &above);
	res->edge = !above && *np > 1 ? 1 : !below && *np > 1 && b->k > 2 ? -1 : 0;
	return rc;
}

static int cmp_point_k(const void *a, const void *b)
{
	return util_cmp_uint(((const struct select_point *)a)->k,
			     ((const struct select_point *)b)->k);
}

int select_k(const struct graph *g, const struct fit_params *base, const struct select_params *sp,
	     const struct select_hooks *hooks, struct select_result *res)
{
	memset(res, 0, sizeof *res);
	if (!(sp->share > 0.0 && sp->share <= 0.5) || (!sp->nlist && (!(sp->step > 1.0) ||
	    sp->kmin < 1 || sp->kmax < sp->kmin)))
		return error("choosing k needs 1 <= kmin <= kmax, a held-out share in (0, 0.5] "
			     "and a grid step above 1");
	if (g->m < 10)
		return error("a graph of %llu edges is too small to choose k by held-out "
			     "likelihood", (unsigned long long)g->m);
	uint32_t nk = select_grid(sp, res->grid);
	res->ngrid = nk;
	res->share = sp->share;
	res->list = sp->nlist > 0;
	struct search *s = util_calloc(1, sizeof *s);
	struct select_point *pts = util_calloc(SELECT_MAX_GRID, sizeof *pts);
	if (!s || !pts) {
		UTIL_FREE_ALL(s, pts);
		return -1;
	}
	s->hooks = hooks;
	if (hooks && hooks->group && hooks->group->size > 1)
		s->grp = hooks->group;
	s->folds = sp->folds ? sp->folds : select_folds(g->m, sp->share);
	if (s->folds > SELECT_MAX_FOLDS)
		s->folds = SELECT_MAX_FOLDS;
	res->folds = s->folds;
	int rc = 0;
	for (uint32_t f = 0; f < s->folds && rc == 0; f++)
		rc = holdout_split(&s->h[f], g, sp->share, fold_seed(base->seed, f));
	s->p = *base;
	if (!(s->p.epsilon > 0.0))
		s->p.epsilon = model_default_epsilon(g); /* the whole graph's, for every k */
	s->p.hold_at_plateau = 0;
	s->p.past_plateau = 0;
	s->p.threads = 1;
	s->nslots = base->threads > 1 ? base->threads : 1;
	struct best b = { 0, 0.0 };
	uint32_t np = 0;
	if (rc == 0) {
		res->held_edges = s->h[0].nedges;
		res->held_non_edges = s->h[0].nnon;
		res->shape = select_by_shape(g->m, sp);
		if (res->shape) {
			s->keep = 1;
			s->moves = !base->no_reseed;
			s->all_moves = s->moves && s->h[0].nedges < SELECT_FINE_EDGES;
			s->p.no_reseed = 1;
			if (s->p.tol < SELECT_SHAPE_TOL)
				s->p.tol = SELECT_SHAPE_TOL;
			rc = shape_search(s, g, sp, res, pts, &np, &b, base->threads);
			keep_only(s, 0);
		}
	}
	if (rc == 0 && !res->shape) {
		struct want *w = util_calloc(nk, sizeof *w);
		for (uint32_t i = 0; w && i < nk; i++)
			w[i] = want_of(res->grid[i], 0, "grid");
		rc = w ? search_pass(s, w, nk, !sp->nlist, pts, &np, &b) : -1;
		free(w);
		if (rc == 0 && np > 0)
			rc = extend(s, g, sp, res, pts, &np, &b, base->threads);
	}
	for (uint32_t f = 0; f < s->folds; f++)
		holdout_release(&s->h[f]);
	free(s);
	if (rc || np == 0) {
		free(pts);
		return rc ? rc : -1;
	}
	qsort(pts, np, sizeof *pts, cmp_point_k);
	res->best = res->best_mean = b.k;
	if (res->folds > 1) {
		res->best = select_one_se(pts, np, b.k, &res->se);
		if (res->best != b.k && res->edge > 0)
			res->edge = 0; /* a smaller k than the largest scored */
	}
	res->pts = pts;
	res->npts = np;
	return 0;
}
