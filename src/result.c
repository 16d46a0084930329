/*
 * result: the result folder of a fit. Its files and their columns are
 * described once, in coterie-files(5) (man/coterie-files.5); keep the two
 * in step.
 *
 * The idea: result_stage() stages every file of a result into one commit
 * (result_commit.h: written, synced, closed under hidden names), and the
 * commit replaces them as one, so a full disk, a write error or a kill at
 * any moment leaves the old folder whole or the new one whole. The
 * checkpoint is checkpoint.c's, run.json runjson.c's; the TSV files are
 * here.
 *
 * The one thing a newcomer gets wrong: the TSV files are written from the
 * model's AGM (struct result_model.agm), which is not always the one read
 * from its strengths (fit --refine and --check-links replace it), while the
 * checkpoint always holds the strengths; and node names are escaped
 * (atomicfile_tsv_name()) so that a row is always one line.
 */
#include "result-internal.h"

#include <errno.h>
#include <fcntl.h>
#include <inttypes.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <sys/types.h>
#include <unistd.h>

#include "coterie/agm.h"
#include "coterie/atomicfile.h"
#include "coterie/checkpoint.h"
#include "coterie/graph.h"
#include "coterie/holdout.h"
#include "coterie/model.h"
#include "coterie/result_commit.h"
#include "coterie/result_weight.h"
#include "coterie/savepoint.h"
#include "coterie/select.h"
#include "coterie/stability.h"
#include "coterie/util.h"

void result_model_of(struct result_model *m, const struct snapshot *s)
{
	*m = (struct result_model){
		.F = &s->F,
		.agm = &s->agm,
		.trace = s->trace,
		.ntrace = s->ntrace,
		.sweep = s->sweep,
		.plateau_sweep = s->plateau_sweep,
		.state = s->state,
		.seconds = s->seconds,
		.epsilon = s->epsilon,
		.delta = s->delta,
		.best_start = s->best_start,
		.reseeds = s->reseeds,
		.starts = s->starts,
		.seeds = &s->seeds,
		.start_ends = s->start_ends,
		.savepoint = s->savepoint,
		/* a resume from the savepoint goes on with its start in
		 * progress: a climbing one's flags; one whose moves ran makes
		 * its moves again, and a move's first sweep visits every row */
		.awake = s->savepoint ? (s->savepoint->phase == FIT_PHASE_CLIMB
						 ? s->savepoint->cur.awake
						 : NULL)
				      : s->awake,
	};
}

/* ------------------------------------------------------------------ */
/* The folder */

/* mkdir -p with mode 0777 (the umask applies). */
static int make_dirs(const char *dir)
{
	struct stat st;
	if (!*dir)
		return error("the result folder name is empty");
	char *p = util_strdup(dir);
	if (!p)
		return -1;
	size_t len = strlen(p);
	for (size_t i = 1; i <= len; i++) {
		if (p[i] != '/' && p[i] != '\0')
			continue;
		if (p[i - 1] == '/')
			continue; /* repeated slash */
		char keep = p[i];
		p[i] = '\0';
		if (mkdir(p, 0777) != 0) {
			int e = errno;
			if (e != EEXIST) {
				error("cannot create folder '%s': %s", p, strerror(e));
				free(p);
				return -1;
			}
			if (stat(p, &st) != 0 || !S_ISDIR(st.st_mode)) {
				error("cannot create folder '%s': '%s' exists and is not a folder",
				      dir, p);
				free(p);
				return -1;
			}
		}
		p[i] = keep;
	}
	free(p);
	return 0;
}

int result_prepare_dir(const char *dir)
{
	struct stat st;
	if (!dir || !*dir)
		return error("the result folder name is empty");
	if (stat(dir, &st) == 0) {
		if (!S_ISDIR(st.st_mode))
			return error("cannot use '%s' as the result folder: it exists and is not a folder",
				     dir);
	} else if (make_dirs(dir) != 0) {
		return -1;
	}
	char name[64];
	snprintf(name, sizeof name, ".coterie-probe-%ld", (long)getpid());
	char *probe = atomicfile_path(dir, name);
	if (!probe)
		return -1;
	int fd = open(probe, O_WRONLY | O_CREAT | O_EXCL | O_CLOEXEC | O_NOFOLLOW, 0666);
	if (fd < 0 && errno == EEXIST) {
		unlink(probe); /* left by a crashed process with our pid */
		fd = open(probe, O_WRONLY | O_CREAT | O_EXCL | O_CLOEXEC | O_NOFOLLOW, 0666);
	}
	if (fd < 0) {
		int e = errno;
		free(probe);
		return error("cannot write to '%s': %s", dir, strerror(e));
	}
	close(fd);
	int rc = 0;
	if (unlink(probe) != 0)
		rc = error("cannot remove '%s': %s", probe, strerror(errno));
	free(probe);
	return rc;
}

/* ------------------------------------------------------------------ */
/* Text files */

struct tsv_args {
	const struct graph *g;
	const struct result_model *m;
	const struct stability *st; /* NULL: not scored */
	double *wobs, *wexp; /* a weighted graph's weight figures by community
				(result_weight.h), else NULL */
};

struct ranked {
	double strength;
	uint32_t node;
};

static int cmp_ranked(const void *a, const void *b)
{
	const struct ranked *x = a, *y = b;
	int c = util_cmp_double(y->strength, x->strength); /* the strongest first */
	return c ? c : util_cmp_uint(x->node, y->node);
}

static int fill_memberships(struct atomicfile *w, const void *arg)
{
	const struct tsv_args *a = arg;
	const struct agm *agm = a->m->agm;
	const struct cover *cv = &agm->cover;
	uint32_t most = 0;
	for (uint32_t i = 0; i < cv->k; i++)
		if (cover_size(cv, i) > most)
			most = cover_size(cv, i);
	struct ranked *r = util_malloc(most, sizeof *r);
	if (!r)
		return -1;
	atomicfile_str(w, "node\tcommunity\tstrength\n");
	for (uint32_t i = 0; i < cv->k && !atomicfile_failed(w); i++) {
		uint32_t size = cover_size(cv, i);
		for (uint32_t j = 0; j < size; j++) {
			uint64_t at = cv->off[i] + j;
			r[j].node = cv->mem[at];
			r[j].strength = agm->strength ? agm->strength[at] : 1.0;
		}
		qsort(r, size, sizeof *r, cmp_ranked);
		for (uint32_t j = 0; j < size; j++) {
			atomicfile_tsv_name(w, graph_name(a->g, r[j].node));
			atomicfile_printf(w, "\t%" PRIu32 "\t%.6g\n", agm->comms[i].id, r[j].strength);
		}
	}
	free(r);
	return 0;
}

static int fill_communities(struct atomicfile *w, const void *arg)
{
	const struct tsv_args *a = arg;
	const struct agm *agm = a->m->agm;
	/* stability last, so readers of the first eight columns go on working */
	atomicfile_str(w, "community\tsize\tinternal_edges\tdensity\tconductance\tp\tvolume\tcut"
		       "\tstability");
	/* a weighted fit's two weight columns after it (an unweighted file
	 * keeps its bytes) */
	atomicfile_str(w, a->wobs ? "\tweight_inside\texpected_weight_inside\n" : "\n");
	const double *score = a->st && a->st->k == agm->cover.k ? a->st->score : NULL;
	for (uint32_t i = 0; i < agm->cover.k && !atomicfile_failed(w); i++) {
		const struct agm_community *c = &agm->comms[i];
		atomicfile_printf(w, "%" PRIu32 "\t%" PRIu32 "\t%" PRIu64 "\t%.6g\t%.6g\t%.9g\t%" PRIu64
			  "\t%" PRIu64 "\t", c->id, c->size, c->internal_edges, c->density,
			  c->conductance, c->p, c->volume, c->cut);
		if (score && !isnan(score[i]))
			atomicfile_printf(w, "%.4f", score[i]);
		else
			atomicfile_str(w, "NA");
		if (a->wobs)
			atomicfile_printf(w, "\t%.9g\t%.9g", a->wobs[i], a->wexp[i]);
		atomicfile_str(w, "\n");
	}
	return 0;
}

/* The weight figures of a weighted one-mode fit into ta (NULL arrays
 * otherwise). Returns 0 or -1. */
static int weight_figures(const struct graph *g, const struct result_model *m,
			  struct tsv_args *ta)
{
	if (!g->wt || g->nsend)
		return 0;
	const struct cover *cv = &m->agm->cover;
	ta->wobs = util_malloc(2 * (size_t)cv->k + 1, sizeof *ta->wobs);
	if (!ta->wobs)
		return -1;
	ta->wexp = ta->wobs + cv->k;
	if (result_weight_figures(g, m->F, cv, model_qeps(m->epsilon), ta->wobs, ta->wexp)) {
		free(ta->wobs);
		ta->wobs = ta->wexp = NULL;
		return -1;
	}
	return 0;
}

static int fill_trace(struct atomicfile *w, const void *arg)
{
	const struct tsv_args *a = arg;
	atomicfile_str(w, "sweep\tseconds\tloglik\n");
	for (uint32_t i = 0; i < a->m->ntrace && !atomicfile_failed(w); i++) {
		const struct trace_point *t = &a->m->trace[i];
		atomicfile_printf(w, "%" PRIu32 "\t%.3f\t%.17g\n", t->sweep, t->seconds, t->loglik);
	}
	return 0;
}

static int fill_selection(struct atomicfile *w, const void *arg)
{
	const struct select_result *a = arg;
	atomicfile_str(w, "k\theldout_loglik\theldout_auc\tsweeps\tseconds\tchosen\tfolds\t"
		       "heldout_loglik_sd\tgrid\torder\treason\twarm_from\n");
	for (uint32_t i = 0; i < a->npts && !atomicfile_failed(w); i++) {
		const struct select_point *pt = &a->pts[i];
		atomicfile_printf(w, "%" PRIu32 "\t%.17g\t", pt->k, pt->heldout);
		if (isfinite(pt->auc))
			atomicfile_printf(w, "%.9f", pt->auc);
		else
			atomicfile_str(w, "NA");
		atomicfile_printf(w, "\t%" PRIu32 "\t%.3f\t%s", pt->sweeps, pt->seconds,
			  pt->k == a->best ? "yes" : "no");
		atomicfile_printf(w, "\t%" PRIu32 "\t%.17g\t%s", pt->folds, pt->heldout_sd,
				  pt->added ? "added" : "asked");
		atomicfile_printf(w, "\t%" PRIu32 "\t%s\t%" PRIu32 "\n", pt->order, pt->reason,
				  pt->warm_from);
	}
	return 0;
}

int result_write_selection(const char *dir, const struct select_result *sel)
{
	if (make_dirs(dir))
		return -1;
	char *path = atomicfile_path(dir, RESULT_SELECTION_PARTIAL);
	if (!path)
		return -1;
	int rc = atomicfile_replace(path, fill_selection, sel);
	free(path);
	return rc;
}

struct links_args {
	const struct graph *g;
	const struct holdout *h;
	const struct fcsr *F;
	double qeps;
};

/* A node of a held-out pair as a TSV field: a two-sided graph's copies
 * by the name as given (the pair's order says which sends). */
static void link_name(struct atomicfile *w, const struct graph *g, uint32_t u)
{
	if (g->nsend)
		result_side_name(w, g, u);
	else
		atomicfile_tsv_name(w, graph_name(g, u));
}

static void fill_link_rows(struct atomicfile *w, const struct links_args *a, const uint32_t *pairs,
			   const double *wts, uint64_t n, int edge)
{
	const struct fcsr *F = a->F;
	for (uint64_t i = 0; i < n && !atomicfile_failed(w); i++) {
		uint32_t u = pairs[2 * i], v = pairs[2 * i + 1];
		double x = model_dot(F->e + F->off[u], (uint32_t)(F->off[u + 1] - F->off[u]),
				     F->e + F->off[v], (uint32_t)(F->off[v + 1] - F->off[v]));
		link_name(w, a->g, u);
		atomicfile_str(w, "\t");
		link_name(w, a->g, v);
		atomicfile_printf(w, "\t%d\t%.17g", edge, -expm1(-(x + a->qeps)));
		if (a->h->wedges) /* a weighted fit: the weight and its Poisson mean */
			atomicfile_printf(w, "\t%.17g\t%.17g", edge ? wts[i] : 0.0, x + a->qeps);
		atomicfile_str(w, "\n");
	}
}

static int fill_links(struct atomicfile *w, const void *arg)
{
	const struct links_args *a = arg;
	atomicfile_str(w, a->h->wedges ? "node_a\tnode_b\tedge\tprobability\tweight\texpected\n"
				       : "node_a\tnode_b\tedge\tprobability\n");
	fill_link_rows(w, a, a->h->edges, a->h->wedges, a->h->nedges, 1);
	fill_link_rows(w, a, a->h->non, NULL, a->h->nnon, 0);
	return 0;
}

int result_stage_links(struct result_commit *c, const struct graph *g, const struct holdout *h,
		       const struct fcsr *F, double epsilon)
{
	if (F->n != g->n)
		return error("cannot write held-out links: %u rows for %u nodes", F->n, g->n);
	struct links_args a = { g, h, F, model_qeps(epsilon) };
	return result_commit_stage(c, RESULT_LINKS, fill_links, &a);
}

static int fill_text(struct atomicfile *w, const void *arg)
{
	atomicfile_str(w, arg);
	atomicfile_str(w, "\n");
	return 0;
}

/* ------------------------------------------------------------------ */

/* The model's memberships must fit the graph before names are read. */
static int check_agm(const struct graph *g, const struct result_model *s)
{
	const struct agm *a = s->agm;
	if (a->cover.k > 0 && (!a->comms || !a->cover.off ||
			       (a->cover.off[a->cover.k] > 0 && !a->cover.mem)))
		return error("cannot write results: the communities are missing");
	for (uint32_t i = 0; i < a->cover.k; i++) {
		if (a->cover.off[i + 1] < a->cover.off[i])
			return error("cannot write results: community %" PRIu32 " is malformed", i);
		for (uint64_t j = a->cover.off[i]; j < a->cover.off[i + 1]; j++)
			if (a->cover.mem[j] >= g->n)
				return error("cannot write results: community %" PRIu32
					     " holds node %" PRIu32 " of %" PRIu32, a->comms[i].id,
					     a->cover.mem[j], g->n);
	}
	if (s->ntrace > 0 && !s->trace)
		return error("cannot write results: the trace is missing");
	return 0;
}

int result_stage(struct result_commit *c, const struct graph *g, const struct fit_params *p,
		 const struct result_model *m, const struct result_meta *meta)
{
	struct tsv_args ta = { g, m, meta ? meta->stability : NULL, NULL, NULL };
	if (check_agm(g, m))
		return -1;
	if (meta && meta->selection &&
	    result_commit_stage(c, RESULT_SELECTION, fill_selection, meta->selection))
		return -1;
	if (checkpoint_stage(c, RESULT_CHECKPOINT, g, p, m))
		return -1;
	if (g->nsend ? result_directed_stage(c, g, m, ta.st)
		     : weight_figures(g, m, &ta) ||
			       result_commit_stage(c, "memberships.tsv", fill_memberships, &ta) ||
			       result_commit_stage(c, "communities.tsv", fill_communities, &ta)) {
		free(ta.wobs);
		return -1;
	}
	free(ta.wobs);
	if (
	    result_commit_stage(c, "trace.tsv", fill_trace, &ta))
		return -1;
	char *text = result_run_json(g, p, m, meta);
	int rc = text ? result_commit_stage(c, "run.json", fill_text, text) : -1;
	free(text);
	return rc;
}

int result_write(const char *dir, const struct graph *g, const struct fit_params *p,
		 const struct result_model *m, const struct result_meta *meta)
{
	if (check_agm(g, m) || make_dirs(dir))
		return -1;
	struct result_commit *c = result_commit_new(dir, graph_fingerprint(g));
	return result_finish(c, c ? result_stage(c, g, p, m, meta) : -1);
}

int result_finish(struct result_commit *c, int rc)
{
	if (rc == 0) {
		/* the folder holds this result only: no unfinished fit beside it */
		result_commit_drop(c, RESULT_PARTIAL);
		result_commit_drop(c, RESULT_SELECTION_PARTIAL);
		rc = result_commit_finish(c);
	}
	result_commit_free(c);
	return rc;
}
