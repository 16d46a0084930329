/*
 * result: the result folder of a fit (memberships.tsv, communities.tsv,
 * trace.tsv, run.json and checkpoint.cot; formats in coterie-files(5)).
 * Every file is replaced atomically (atomicfile.h), and result_write()
 * stages them all before renaming any. The checkpoint itself is
 * checkpoint.h's; a run's folder over time (resume, periodic checkpoints,
 * the final write) is outdir.h's.
 */
#ifndef COTERIE_RESULT_H
#define COTERIE_RESULT_H

#include <stdint.h>

#include "fit.h"

struct graph;

#define RESULT_CHECKPOINT "checkpoint.cot"
/* The periodic checkpoint of a fit still running (or killed), beside the
 * previous result, which stays whole; removed by the final write once the
 * new result is in place. Readers of the result (show) ignore it; those
 * that continue a fit (fit --resume, explore DIR) take it when it is
 * newer than RESULT_CHECKPOINT (outdir_read()). */
#define RESULT_PARTIAL "checkpoint.partial.cot"
#define RESULT_SELECTION "k-selection.tsv"
/* The search of a -k auto fit still running (or killed): written before
 * the fit, beside the previous result; the fit's final write puts it in
 * place as RESULT_SELECTION (outdir.h). */
#define RESULT_SELECTION_PARTIAL "k-selection.partial.tsv"

struct refine_report;
struct select_result;
struct background_choice;
struct stability;

/* Write DIR/k-selection.partial.tsv (the columns of k-selection.tsv: k,
 * held-out log-likelihood, held-out AUC, sweeps, seconds, chosen, folds,
 * the log-likelihood's standard deviation over the folds, asked/added)
 * for a -k auto search (sel borrowed), atomically, before the fit: the
 * previous result in DIR stays whole. Returns 0 or -1. */
int result_write_selection(const char *dir, const struct select_result *sel);

#define RESULT_LINKS "held-out-links.tsv"

struct holdout;

struct result_commit;

/* Stage DIR/held-out-links.tsv (node_a, node_b, edge 1/0, the model's
 * probability 1 - exp(-(F_a.F_b + qeps))) for every held-out pair of h,
 * edges first, into commit c; g, h and F borrowed. Returns 0 or -1. */
int result_stage_links(struct result_commit *c, const struct graph *g, const struct holdout *h,
		       const struct fcsr *F, double epsilon);

/* The held-out check of the final model (fit --check-links). */
struct result_links {
	double share;              /* of the edges held out */
	uint64_t held_edges, held_non_edges;
	double heldout_loglik;     /* as in holdout_score() */
	double auc;                /* NAN when undefined */
};

/* What run.json records beyond the snapshot. All borrowed. */
struct result_meta {
	const char *command_line;   /* as typed, for the record */
	const char *graph_path;
	double wall_seconds;        /* of this invocation */
	uint64_t peak_rss_kb;       /* 0 if unknown */
	const char *status;         /* e.g. "levelled", "stopped", "interrupted" */
	int k_auto;                 /* k was chosen by held-out likelihood */
	const struct refine_report *refine; /* the snapshot's AGM was refined
					     * by refine_agm() (NULL: not) */
	unsigned refine_rounds;     /* --refine-rounds (0: --refine not asked) */
	const struct select_result *selection; /* the -k auto search, or NULL */
	const struct result_links *links;      /* the link check, or NULL */
	const struct background_choice *background; /* how epsilon was chosen,
						     * or NULL (not recorded) */
	const struct stability *stability; /* fit --repeats: the runs and the
					    * score of each community of agm
					    * (same order, same k), or NULL:
					    * the column says NA */
};

/* Create dir (and parents) if needed and prove it can be written by
 * creating and removing a probe file. Returns 0 or -1 with a message
 * naming the folder. Call before starting a long fit. */
int result_prepare_dir(const char *dir);

/*
 * The model a folder or a checkpoint is written from: the parts of a
 * snapshot that a writer reads, all borrowed. A caller that writes
 * something else than the snapshot says (the refined cover, the AGM read
 * on the whole graph, the state a reopened result was saved in) replaces
 * that one field; the snapshot itself is never copied.
 * Rules: F is n x k for the graph written; agm's members are nodes of it;
 * trace has ntrace points ending at or before sweep.
 */
struct result_model {
	const struct fcsr *F;              /* the strengths (the checkpoint's) */
	const struct agm *agm;             /* what the TSV files and run.json list */
	const struct trace_point *trace;
	uint32_t ntrace;
	uint32_t sweep, plateau_sweep;
	enum fit_state state;
	double seconds, epsilon, delta;
	uint32_t best_start, reseeds;      /* for run.json */
	uint32_t starts;                   /* and each start's end: */
	const struct start_end *start_ends; /* NULL, or starts entries */
	const struct fit_savepoint *savepoint; /* NULL: the checkpoint has none */
	const uint8_t *awake;              /* NULL, or g->n flags: where a resume's
					    * first sweep goes on (fit_origin) */
	const struct seed_report *seeds;   /* NULL, or how the last start seeded
					    * in this process began (run.json) */
};

/* Point every field of m into snapshot s (borrowed: s must outlive m). */
void result_model_of(struct result_model *m, const struct snapshot *s);

/* Stage every file of the result of model m of a fit of g with
 * parameters p into commit c (result_commit.h): k-selection.tsv when
 * meta->selection, checkpoint.cot, memberships.tsv, communities.tsv,
 * trace.tsv, run.json. All borrowed; meta may be NULL. 0 or -1. */
int result_stage(struct result_commit *c, const struct graph *g, const struct fit_params *p,
		 const struct result_model *m, const struct result_meta *meta);

/* Write the whole folder from model m (result_stage()), replacing the
 * result there as one, partial files dropped (all borrowed; meta may be
 * NULL). Returns 0 or -1 with a message; on failure no file is replaced. */
int result_write(const char *dir, const struct graph *g, const struct fit_params *p,
		 const struct result_model *m, const struct result_meta *meta);

/* End commit c (takes ownership; NULL allowed when rc is -1): when rc is
 * 0 (all staged), drop the partial files (checkpoint.partial.cot,
 * k-selection.partial.tsv) and commit (result_commit_finish()); then free
 * c. Returns 0 once committed, else -1. */
int result_finish(struct result_commit *c, int rc);

#endif
