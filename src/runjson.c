/*
 * runjson: run.json, the record of a fit in its result folder (keys in
 * coterie-files(5)). Part of the result module (src/result-internal.h).
 *
 * The idea: one object per section (coterie, graph, parameters, fit,
 * k_selection, background, link_check, agm_refine, warnings, run), each built by its own
 * function from the borrowed parts it describes; values go through
 * jsonout.h, so a non-finite number is null, a count too large for JSON's
 * integers a decimal string, a non-UTF-8 path escaped.
 *
 * Invariant: keys are written in insertion order (jansson keeps it), which
 * is the order the manual lists; a failed constructor anywhere sets bad,
 * and then nothing is written rather than a run.json missing a key.
 */
#include "result-internal.h"

#include <inttypes.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>

#include <jansson.h>

#include "coterie/agm.h"
#include "coterie/background.h"
#include "coterie/caveat.h"
#include "coterie/graph.h"
#include "coterie/jsonout.h"
#include "coterie/refine.h"
#include "coterie/select.h"
#include "coterie/stability.h"
#include "coterie/util.h"

/* run.json's k_selection: the -k auto search. */
static json_t *j_selection(const struct select_result *sel)
{
	int bad = 0;
	json_t *o = json_object(), *grid = json_array(), *scores = json_array();
	if (!o || !grid || !scores) {
		json_decref(o);
		json_decref(grid);
		json_decref(scores);
		return NULL;
	}
	jsonout_set(o, "criterion", json_string("held-out log-likelihood"), &bad);
	jsonout_set(o, "chosen", jsonout_uint(sel->best), &bad);
	for (uint32_t i = 0; i < sel->ngrid; i++)
		jsonout_append(grid, jsonout_uint(sel->grid[i]), &bad);
	jsonout_set(o, "grid", grid, &bad);
	jsonout_set(o, "held_out_share", jsonout_real(sel->share), &bad);
	jsonout_set(o, "held_out_edges", jsonout_uint(sel->held_edges), &bad);
	jsonout_set(o, "held_out_non_edges", jsonout_uint(sel->held_non_edges), &bad);
	jsonout_set(o, "folds", jsonout_uint(sel->folds), &bad);
	jsonout_set(o, "rule", json_string(sel->folds > 1 ? "the smallest k within one standard "
					   "error of the highest mean over the folds" :
					   "the highest held-out score"), &bad);
	jsonout_set(o, "highest_mean_k", jsonout_uint(sel->best_mean), &bad);
	jsonout_set(o, "standard_error", sel->folds > 1 ? jsonout_real(sel->se) : json_null(),
		    &bad);
	jsonout_set(o, "extended", sel->extended ? json_string(sel->extended > 0 ? "up" : "down") :
		    json_null(), &bad);
	jsonout_set(o, "extension_bound", sel->extended > 0 ? jsonout_uint(sel->bound) :
		    json_null(), &bad);
	jsonout_set(o, "chosen_at_edge", json_boolean(sel->edge != 0), &bad);
	jsonout_set(o, "search", json_string(sel->shape ? "shape" : "grid"), &bad);
	jsonout_set(o, "start", sel->shape ? jsonout_uint(sel->start) : json_null(), &bad);
	for (uint32_t i = 0; i < sel->npts; i++) {
		const struct select_point *pt = &sel->pts[i];
		json_t *e = json_object();
		if (!e) {
			bad = 1;
			break;
		}
		jsonout_set(e, "k", jsonout_uint(pt->k), &bad);
		jsonout_set(e, "heldout_loglik", jsonout_real(pt->heldout), &bad);
		jsonout_set(e, "heldout_auc", jsonout_real(pt->auc), &bad);
		jsonout_set(e, "sweeps", jsonout_uint(pt->sweeps), &bad);
		jsonout_set(e, "seconds", jsonout_real(pt->seconds), &bad);
		jsonout_set(e, "heldout_loglik_sd", jsonout_real(pt->heldout_sd), &bad);
		jsonout_set(e, "folds", jsonout_uint(pt->folds), &bad);
		jsonout_set(e, "added", json_boolean(pt->added), &bad);
		jsonout_set(e, "order", jsonout_uint(pt->order), &bad);
		jsonout_set(e, "reason", json_string(pt->reason), &bad);
		jsonout_set(e, "warm_from", pt->warm_from ? jsonout_uint(pt->warm_from) : json_null(),
			    &bad);
		jsonout_append(scores, e, &bad);
	}
	jsonout_set(o, "scores", scores, &bad);
	if (bad) {
		json_decref(o);
		return NULL;
	}
	return o;
}

/* run.json's warnings: the caveats of the search, the link check and the
 * cover, in that order (the order fit prints them). */
static json_t *j_warnings(const struct graph *g, const struct result_model *m,
			  const struct result_meta *meta, int *bad)
{
	struct caveats cv;
	caveats_init(&cv);
	if (meta && meta->selection)
		caveats_of_selection(&cv, meta->selection, g->n);
	if (meta && meta->links)
		caveats_of_links(&cv, meta->links->held_edges);
	uint32_t covered, overlapping, nodes;
	if (!agm_coverage_as_given(m->agm, g, &covered, &overlapping, &nodes))
		caveats_of_cover(&cv, covered, nodes);
	json_t *a = json_array();
	for (uint32_t i = 0; a && i < cv.n; i++) {
		json_t *e = json_object();
		jsonout_set(e, "code", json_string(cv.c[i].code), bad);
		jsonout_set(e, "text", jsonout_str(cv.c[i].text), bad);
		jsonout_append(a, e, bad);
	}
	if (!a)
		*bad = 1;
	return a;
}

/* run.json's background: how epsilon was chosen, and the candidates the
 * search fitted (background.h). */
static json_t *j_background(const struct background_choice *b)
{
	int bad = 0;
	json_t *o = json_object(), *a = json_array();
	if (!o || !a) {
		json_decref(o);
		json_decref(a);
		return NULL;
	}
	jsonout_set(o, "rule", json_string(background_rule_name(b->rule)), &bad);
	jsonout_set(o, "epsilon", jsonout_real(b->epsilon), &bad);
	jsonout_set(o, "density", jsonout_real(b->density), &bad);
	jsonout_set(o, "linked_nodes", jsonout_uint(b->linked), &bad);
	jsonout_set(o, "thin_share", jsonout_real(BACKGROUND_THIN), &bad);
	jsonout_set(o, "cover_share_wanted", jsonout_real(BACKGROUND_COVER), &bad);
	for (uint32_t i = 0; i < b->ncand; i++) {
		const struct background_candidate *c = &b->cand[i];
		json_t *e = json_object();
		jsonout_set(e, "multiple", jsonout_real(c->multiple), &bad);
		jsonout_set(e, "epsilon", jsonout_real(c->epsilon), &bad);
		jsonout_set(e, "covered", jsonout_uint(c->covered), &bad);
		jsonout_set(e, "loglik", jsonout_real(c->loglik), &bad);
		jsonout_set(e, "agm_loglik", jsonout_real(c->agm_loglik), &bad);
		jsonout_set(e, "sweeps", jsonout_uint(c->sweeps), &bad);
		jsonout_set(e, "seconds", jsonout_real(c->seconds), &bad);
		jsonout_set(e, "cover_background", jsonout_real(c->background), &bad);
		jsonout_set(e, "code_length", jsonout_real(c->code_length), &bad);
		jsonout_append(a, e, &bad);
	}
	jsonout_set(o, "candidates", a, &bad);
	if (bad) {
		json_decref(o);
		return NULL;
	}
	return o;
}

/* run.json's link_check: the held-out check of the final model. */
static json_t *j_links(const struct result_links *l)
{
	int bad = 0;
	json_t *o = json_object();
	if (!o)
		return NULL;
	jsonout_set(o, "held_out_share", jsonout_real(l->share), &bad);
	jsonout_set(o, "held_out_edges", jsonout_uint(l->held_edges), &bad);
	jsonout_set(o, "held_out_non_edges", jsonout_uint(l->held_non_edges), &bad);
	jsonout_set(o, "heldout_loglik", jsonout_real(l->heldout_loglik), &bad);
	jsonout_set(o, "heldout_auc", jsonout_real(l->auc), &bad);
	if (bad) {
		json_decref(o);
		return NULL;
	}
	return o;
}


static json_t *j_graph(const struct graph *g, const struct result_meta *meta, int *bad)
{
	const struct graph_report *r = &g->report;
	char hex[17];
	json_t *jg = json_object();
	snprintf(hex, sizeof hex, "%016" PRIx64, graph_fingerprint(g));
	jsonout_set(jg, "path", jsonout_str(meta && meta->graph_path ? meta->graph_path : g->source),
		    bad);
	jsonout_set(jg, "format", jsonout_str(graph_format_name(r->format)), bad);
	jsonout_set(jg, "nodes", jsonout_uint(g->n), bad);
	jsonout_set(jg, "edges", jsonout_uint(g->m), bad);
	jsonout_set(jg, "fingerprint", json_string(hex), bad);
	jsonout_set(jg, "lines", jsonout_uint(r->lines), bad);
	jsonout_set(jg, "self_loops", jsonout_uint(r->self_loops), bad);
	jsonout_set(jg, "duplicates", jsonout_uint(r->duplicates), bad);
	jsonout_set(jg, "extra_columns", jsonout_uint(r->extra_columns), bad);
	jsonout_set(jg, "isolated", jsonout_uint(r->isolated), bad);
	jsonout_set(jg, "directed_input", json_boolean(r->directed_input), bad);
	return jg;
}

static json_t *j_params(const struct fit_params *p, const struct result_model *m,
			const struct result_meta *meta, int *bad)
{
	json_t *jp = json_object();
	jsonout_set(jp, "model", jsonout_str(model_kind_name(p->model)), bad);
	jsonout_set(jp, "k", jsonout_uint(p->k), bad);
	jsonout_set(jp, "threads", jsonout_uint(p->threads), bad);
	jsonout_set(jp, "seed", jsonout_uint(p->seed), bad);
	jsonout_set(jp, "tol", jsonout_real(p->tol), bad);
	jsonout_set(jp, "patience", jsonout_uint(p->patience), bad);
	jsonout_set(jp, "max_sweeps", jsonout_uint(p->max_sweeps), bad);
	jsonout_set(jp, "epsilon", jsonout_real(m->epsilon), bad);
	jsonout_set(jp, "delta", jsonout_real(m->delta), bad);
	jsonout_set(jp, "min_links", jsonout_real(AGM_MIN_LINKS), bad);
	jsonout_set(jp, "past_plateau", json_boolean(p->past_plateau), bad);
	jsonout_set(jp, "starts", jsonout_uint(p->starts), bad);
	jsonout_set(jp, "reseed", json_boolean(!p->no_reseed), bad);
	jsonout_set(jp, "seeding", jsonout_str(seed_kind_name(p->seeding)), bad);
	jsonout_set(jp, "k_chosen_by",
		    jsonout_str(meta && meta->k_auto ? "held-out likelihood" : "given"), bad);
	return jp;
}

/* fit.seeds: how the last start seeded in this process began; null when
 * none was (a resume that went on with its start). */
static json_t *j_seeds(const struct result_model *m, int *bad)
{
	const struct seed_report *r = m->seeds;
	if (!r || (r->passes == 0 && r->used_minima + r->cover + r->random == 0))
		return json_null();
	json_t *js = json_object();
	jsonout_set(js, "start", jsonout_uint(m->starts), bad);
	jsonout_set(js, "propagation_passes", r->passes ? jsonout_uint(r->passes) : json_null(),
		    bad);
	jsonout_set(js, "clusters_found", r->passes ? jsonout_uint(r->clusters) : json_null(), bad);
	jsonout_set(js, "pieces_joined", r->passes ? jsonout_uint(r->joins) : json_null(), bad);
	jsonout_set(js, "from_clusters", jsonout_uint(r->used_clusters), bad);
	jsonout_set(js, "from_ego_nets", jsonout_uint(r->used_minima + r->cover + r->random), bad);
	return js ? js : json_null();
}

/* fit.starts_judged: one object a start (its final l(F) and the code
 * length of its cover, null where not known), null for one start. */
static json_t *j_starts(const struct result_model *m, int *bad)
{
	if (!m->start_ends || m->starts < 2)
		return json_null();
	json_t *js = json_array();
	for (uint32_t r = 0; js && r < m->starts; r++) {
		json_t *jr = json_object();
		double ll = m->start_ends[r].loglik, code = m->start_ends[r].code;
		jsonout_set(jr, "start", jsonout_uint(r + 1), bad);
		jsonout_set(jr, "loglik", isnan(ll) ? json_null() : jsonout_real(ll), bad);
		jsonout_set(jr, "code_length", isnan(code) ? json_null() : jsonout_real(code), bad);
		jsonout_append(js, jr, bad);
	}
	return js ? js : json_null();
}

static json_t *j_fit(const struct result_model *m, const struct result_meta *meta, int *bad)
{
	const struct agm *a = m->agm;
	uint32_t nonempty = 0;
	for (uint32_t i = 0; i < a->cover.k; i++)
		if (cover_size(&a->cover, i) > 0)
			nonempty++;
	json_t *jf = json_object();
	jsonout_set(jf, "status", jsonout_str(meta ? meta->status : NULL), bad);
	jsonout_set(jf, "state", jsonout_str(fit_state_name(m->state)), bad);
	jsonout_set(jf, "sweeps", jsonout_uint(m->sweep), bad);
	jsonout_set(jf, "plateau_sweep",
		    m->plateau_sweep ? jsonout_uint(m->plateau_sweep) : json_null(), bad);
	jsonout_set(jf, "seconds", jsonout_real(m->seconds), bad);
	jsonout_set(jf, "loglik",
		    m->ntrace ? jsonout_real(m->trace[m->ntrace - 1].loglik) : json_null(), bad);
	jsonout_set(jf, "agm_loglik", jsonout_real(a->loglik), bad);
	jsonout_set(jf, "communities", jsonout_uint(nonempty), bad);
	jsonout_set(jf, "covered_nodes", jsonout_uint(a->covered), bad);
	jsonout_set(jf, "overlapping_nodes", jsonout_uint(a->overlapping), bad);
	jsonout_set(jf, "communities_ended_sooner", jsonout_uint(a->ended_sooner), bad);
	jsonout_set(jf, "communities_left_out", jsonout_uint(a->dropped), bad);
	jsonout_set(jf, "start_kept", m->best_start ? jsonout_uint(m->best_start) : json_null(),
		    bad);
	jsonout_set(jf, "reseeds_kept", jsonout_uint(m->reseeds), bad);
	jsonout_set(jf, "seeds", j_seeds(m, bad), bad);
	jsonout_set(jf, "starts_judged", j_starts(m, bad), bad);
	jsonout_set(jf, "memberships_from",
		    jsonout_str(meta && meta->refine ? "agm refinement" : "strengths"), bad);
	return jf;
}

/* run.json's agm_refine: null without --refine. */
static json_t *j_refine(const struct result_meta *meta, int *bad)
{
	if (!meta || !meta->refine_rounds)
		return json_null();
	const struct refine_report *rr = meta->refine;
	json_t *ja = json_object();
	if (!ja)
		return json_null();
	jsonout_set(ja, "max_rounds", jsonout_uint(meta->refine_rounds), bad);
	jsonout_set(ja, "done", json_boolean(rr != NULL), bad);
	jsonout_set(ja, "loglik_before", rr ? jsonout_real(rr->loglik_before) : json_null(), bad);
	jsonout_set(ja, "loglik_after", rr ? jsonout_real(rr->loglik_after) : json_null(), bad);
	jsonout_set(ja, "moves_added", rr ? jsonout_uint(rr->added) : json_null(), bad);
	jsonout_set(ja, "moves_removed", rr ? jsonout_uint(rr->removed) : json_null(), bad);
	jsonout_set(ja, "rounds", rr ? jsonout_uint(rr->rounds) : json_null(), bad);
	jsonout_set(ja, "converged", rr ? json_boolean(rr->converged) : json_null(), bad);
	jsonout_set(ja, "seconds", rr ? jsonout_real(rr->seconds) : json_null(), bad);
	return ja;
}

/* run.json's stability (fit --repeats): each run's seed and
 * log-likelihood, the one kept, and each community's score; null when the
 * fit was made once. */
static json_t *j_stability(const struct graph *g, const struct result_model *m,
			  const struct stability *st, int *bad)
{
	const struct agm *a = m->agm;
	/* a two-sided fit is scored by column (stability_score_sided()) */
	if (!st || st->k != (g->nsend ? m->F->k : a->cover.k))
		return json_null();
	json_t *js = json_object(), *runs = json_array(), *comms = json_array();
	for (uint32_t r = 0; r < st->runs; r++) {
		json_t *jr = json_object();
		jsonout_set(jr, "seed", jsonout_uint(st->seed[r]), bad);
		jsonout_set(jr, "loglik", jsonout_real(st->loglik[r]), bad);
		jsonout_set(jr, "code_length", st->code ? jsonout_real(st->code[r]) : json_null(),
			    bad);
		jsonout_set(jr, "kept", json_boolean(r == st->kept), bad);
		jsonout_append(runs, jr, bad);
	}
	for (uint32_t i = 0; i < st->k; i++) {
		if (g->nsend ? isnan(st->score[i]) : cover_size(&a->cover, i) == 0)
			continue; /* no member (a two-sided column's score is NaN) */
		json_t *jc = json_object();
		jsonout_set(jc, "community", jsonout_uint(g->nsend ? i : a->comms[i].id), bad);
		jsonout_set(jc, "stability", jsonout_real(st->score[i]), bad);
		jsonout_append(comms, jc, bad);
	}
	jsonout_set(js, "score", jsonout_str("mean best-match Jaccard in the other runs"), bad);
	jsonout_set(js, "runs", runs, bad);
	jsonout_set(js, "run_kept", jsonout_uint(st->kept + 1), bad);
	jsonout_set(js, "mean", jsonout_real(stability_mean(st)), bad);
	jsonout_set(js, "communities", comms, bad);
	return js;
}

char *result_run_json(const struct graph *g, const struct fit_params *p,
		      const struct result_model *m, const struct result_meta *meta)
{
	int bad = 0;
	json_t *root = json_object();
	if (!root) {
		error("out of memory building run.json");
		return NULL;
	}
	json_t *jc = json_object();
	jsonout_set(jc, "format", json_integer(1), &bad);
	jsonout_set(root, "coterie", jc, &bad);
	jsonout_set(root, "command", jsonout_str(meta ? meta->command_line : NULL), &bad);
	jsonout_set(root, "graph", j_graph(g, meta, &bad), &bad);
	jsonout_set(root, "parameters", j_params(p, m, meta, &bad), &bad);
	jsonout_set(root, "fit", j_fit(m, meta, &bad), &bad);
	jsonout_set(root, "k_selection", meta && meta->selection ? j_selection(meta->selection) :
		    json_null(), &bad);
	jsonout_set(root, "background", meta && meta->background ?
		    j_background(meta->background) : json_null(), &bad);
	jsonout_set(root, "link_check", meta && meta->links ? j_links(meta->links) : json_null(),
		    &bad);
	jsonout_set(root, "agm_refine", j_refine(meta, &bad), &bad);
	jsonout_set(root, "stability", j_stability(g, m, meta ? meta->stability : NULL, &bad),
		    &bad);
	jsonout_set(root, "warnings", j_warnings(g, m, meta, &bad), &bad);

	json_t *jr = json_object();
	jsonout_set(jr, "wall_seconds", meta ? jsonout_real(meta->wall_seconds) : json_null(), &bad);
	jsonout_set(jr, "peak_rss_kb",
		    meta && meta->peak_rss_kb ? jsonout_uint(meta->peak_rss_kb) : json_null(), &bad);
	jsonout_set(root, "run", jr, &bad);

	char *text = bad ? NULL : json_dumps(root, JSON_INDENT(2));
	json_decref(root);
	if (!text)
		error("out of memory building run.json");
	return text;
}
