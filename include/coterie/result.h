/*
 * result: the result folder and the checkpoint.
 *
 * A folder holds memberships.tsv, communities.tsv, trace.tsv, run.json and
 * checkpoint.cot. Every file is written to a temporary name in the same
 * folder, flushed, fsync()ed and renamed into place, so a reader (or a
 * crash) sees the old file or the new one, never half of one.
 *
 * The checkpoint is self-contained: it holds the graph (names and edges),
 * the parameters, the trace and the strengths, so a result reopens and a
 * fit resumes without the original graph file. Layout (little-endian):
 *   magic "COTERIE\x1a", u32 version, u32 reserved, u64 graph fingerprint,
 *   then sections, then a u64 FNV-1a checksum of every byte before it.
 * Every size read from a checkpoint is checked against the bytes left
 * before anything is allocated.
 */
#ifndef COTERIE_RESULT_H
#define COTERIE_RESULT_H

#include <stdint.h>

#include "fit.h"

struct graph;

#define RESULT_CHECKPOINT "checkpoint.cot"
#define RESULT_CHECKPOINT_VERSION 2u
#define RESULT_SELECTION "k-selection.tsv"

struct refine_report;
struct select_result;

/* Write DIR/k-selection.tsv (k, held-out log-likelihood, held-out AUC,
 * sweeps, seconds, chosen) for a -k auto search (sel borrowed),
 * atomically. Returns 0 or -1. */
int result_write_selection(const char *dir, const struct select_result *sel);

#define RESULT_LINKS "held-out-links.tsv"

struct holdout;

/* Write DIR/held-out-links.tsv (node_a, node_b, edge 1/0, the model's
 * probability 1 - exp(-(F_a.F_b + qeps))) for every held-out pair of h,
 * edges first; g, h and F borrowed. Returns 0 or -1. */
int result_write_links(const char *dir, const struct graph *g, const struct holdout *h,
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
};

/* Create dir (and parents) if needed and prove it can be written by
 * creating and removing a probe file. Returns 0 or -1 with a message
 * naming the folder. Call before starting a long fit. */
int result_prepare_dir(const char *dir);

/* Write the whole folder from snapshot s of a fit of g with parameters p.
 * Returns 0 or -1; on failure no complete file is replaced by a partial one. */
int result_write(const char *dir, const struct graph *g, const struct fit_params *p,
		 const struct snapshot *s, const struct result_meta *meta);

/* Write only the checkpoint, atomically, to path. */
int result_write_checkpoint(const char *path, const struct graph *g,
			    const struct fit_params *p, const struct snapshot *s);

/* A checkpoint read back. */
struct checkpoint {
	uint64_t fingerprint;
	struct graph *graph;         /* rebuilt from the file; owned */
	struct fit_params params;
	uint32_t sweep;
	uint32_t plateau_sweep;
	enum fit_state state;
	double seconds;
	double epsilon;
	uint32_t ntrace;
	struct trace_point *trace;   /* owned */
	struct fcsr F;               /* owned */
	struct fit_savepoint *savepoint;   /* owned; NULL unless the fit was
				      * interrupted at the end of a sweep */
};

/* Read and validate a checkpoint (checksum, version, every size and index).
 * Returns 0 or -1 naming the file and what is wrong.
 * Release with checkpoint_release(). */
int result_read_checkpoint(const char *path, struct checkpoint *out);
void checkpoint_release(struct checkpoint *ck);

/* Fill a fit_origin that points into ck (borrowed). */
void checkpoint_origin(const struct checkpoint *ck, struct fit_origin *o);

#endif
