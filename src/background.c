/*
 * background: the search that chooses epsilon on small graphs (the two
 * rules, the code length and the coverage guard: background.h).
 *
 * Each candidate is a whole fit (same k, seed, starts and threads as the
 * fit that follows, but stopped at the default plateau at the latest and
 * at TRIAL_MAX_SWEEPS whatever --max-sweeps says: --tol 0 or
 * --past-plateau are for the fit the user keeps, and would make every
 * trial run to the limit). Candidates go from the density
 * down; the coverage guard stops at the first that covers enough, the
 * code length fits them all. The share is of the nodes with a link,
 * since an isolated node is in no community whatever epsilon is.
 *
 * The one thing a newcomer gets wrong: the candidates are multiples of the
 * density, never absolute values; the density is the whole graph's, the
 * same number fit.c would take as the default.
 */
#include "coterie/background.h"

#include <math.h>
#include <string.h>
#include <time.h>

#include "coterie/agm.h"
#include "coterie/fit.h"
#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/util.h"

/* Trials stop at the default plateau at the latest, whatever --tol and
 * --past-plateau ask of the fit that follows. */
#define TRIAL_TOL 1e-4
#define TRIAL_MAX_SWEEPS 500u

static const double multiples[BACKGROUND_MAX_CAND] = { 1.0, 0.7, 0.5, 0.3, 0.2,
							0.1, 0.05, 0.03, 0.01, 0.001 };

const char *background_rule_name(enum background_rule r)
{
	switch (r) {
	case BACKGROUND_GIVEN:
		return "given";
	case BACKGROUND_DENSITY:
		return "density";
	case BACKGROUND_COVERAGE:
		return "coverage";
	case BACKGROUND_CODE:
		return "code";
	}
	return "?";
}

/* Fit at epsilon and fill in c; with code, also the cover's own background
 * and code length. Returns 0, -1 (reported) or -2 (stopped). */
static int fit_candidate(const struct graph *g, const struct fit_params *p, double multiple,
			 double density, int code, int (*stop)(void *), void *arg,
			 struct background_candidate *c)
{
	struct fit_params q = *p;
	q.epsilon = density * multiple;
	q.hold_at_plateau = 0;
	/* a trial needs the cover at a plateau, not a fit run past it */
	q.past_plateau = 0;
	if (q.tol < TRIAL_TOL)
		q.tol = TRIAL_TOL;
	/* whatever --max-sweeps asks of the fit that follows: the choice must
	 * not depend on how long that fit runs (a fit of 5 sweeps resumed to
	 * 10 must equal a fit of 10) */
	q.max_sweeps = TRIAL_MAX_SWEEPS;
	struct fit *f = fit_new(g, &q, NULL);
	if (!f)
		return -1;
	if (fit_start(f)) {
		fit_free(f);
		return -1;
	}
	/* wait, stopping the trial when asked (polled: a trial is short) */
	int stopped = 0;
	while (!fit_state_ended(fit_get_state(f))) {
		if (!stopped && stop && stop(arg)) {
			fit_stop(f);
			stopped = 1;
		}
		struct timespec ts = { 0, 20 * 1000 * 1000 };
		nanosleep(&ts, NULL);
	}
	enum fit_state st = fit_wait(f);
	if (stopped)
		st = FIT_STOPPED;
	struct snapshot *s = fit_snapshot(f);
	int rc = -1;
	if (st == FIT_FAILED)
		rc = -1;
	else if (st == FIT_STOPPED)
		rc = -2;
	else {
		*c = (struct background_candidate){
			.multiple = multiple,
			.epsilon = q.epsilon,
			.covered = s->agm.covered,
			.loglik = s->ntrace ? s->trace[s->ntrace - 1].loglik : 0.0,
			.agm_loglik = s->agm.loglik,
			.sweeps = s->sweep,
			.seconds = s->seconds,
			.background = NAN,
			.code_length = NAN,
		};
		rc = 0;
		double eps = q.epsilon, ll;
		if (code && agm_fit_background(g, &s->agm.cover, &eps, &ll) == 0) {
			c->background = eps;
			c->code_length = agm_code_length_of(&s->agm.cover, ll, g);
		} else if (code) {
			rc = -1;
		}
	}
	snapshot_release(s);
	fit_free(f);
	return rc;
}

int background_choose(const struct graph *g, const struct fit_params *p, int (*stop)(void *),
		      void *arg, struct background_choice *out)
{
	memset(out, 0, sizeof *out);
	out->density = model_default_epsilon(g);
	for (uint32_t u = 0; u < g->n; u++)
		if (graph_degree(g, u) > 0)
			out->linked++;
	if (p->epsilon > 0.0) {
		out->rule = BACKGROUND_GIVEN;
		out->epsilon = p->epsilon;
		return 0;
	}
	out->rule = BACKGROUND_DENSITY;
	out->epsilon = out->density;
	if (g->m >= BACKGROUND_MAX_EDGES || out->linked == 0)
		return 0;
	double need = BACKGROUND_COVER * out->linked, enough = BACKGROUND_THIN * out->linked;
	int code = p->model == MODEL_BIGCLAM; /* BigCLAM only (background.h) */
	out->rule = code ? BACKGROUND_CODE : BACKGROUND_COVERAGE;
	uint32_t best = 0;
	int admitted = 0; /* rule code: a candidate that is not thin was seen */
	for (uint32_t i = 0; i < BACKGROUND_MAX_CAND; i++) {
		if (stop && stop(arg))
			return -2;
		int rc = fit_candidate(g, p, multiples[i], out->density, code, stop, arg,
				       &out->cand[i]);
		if (rc)
			return rc;
		out->ncand = i + 1;
		const struct background_candidate *c = &out->cand[i], *b = &out->cand[best];
		if (code) {
			/* the shortest code among the covers holding the share
			 * wanted: half of the linked nodes, or BACKGROUND_COVER
			 * when the density's cover is thin; while none does, the
			 * one that covers most */
			if (i == 0 && c->covered < enough)
				enough = need;
			if (c->covered >= enough) {
				if (!admitted || c->code_length < b->code_length)
					best = i;
				admitted = 1;
			} else if (!admitted && c->covered > b->covered) {
				best = i;
			}
			continue;
		}
		if (i == 0 && c->covered >= enough)
			break; /* not thin: the density */
		if (c->covered > b->covered)
			best = i;
		if (c->covered >= need) {
			best = i;
			break;
		}
	}
	out->chosen = best;
	out->epsilon = out->cand[best].epsilon;
	return 0;
}
