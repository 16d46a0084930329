/*
 * checkpoint: the binary file of a result folder (checkpoint.cot) that
 * holds everything a result needs to reopen and a fit to resume: the graph
 * (names and edges), the parameters, the trace, the strengths and, for a
 * fit stopped at the end of a sweep, its savepoint. The layout is in
 * coterie-files(5). Every size read from a checkpoint is checked against
 * the bytes left before anything is allocated.
 */
#ifndef COTERIE_CHECKPOINT_H
#define COTERIE_CHECKPOINT_H

#include <stdint.h>

#include "fit.h"

struct result_commit;
struct graph;
struct result_model;

#define CHECKPOINT_VERSION 4u

/* Write the checkpoint of model m of a fit of g with parameters p to
 * path, atomically (atomicfile.h). All borrowed. Returns 0 or -1 with a
 * message; what the reader would refuse is refused before writing, and a
 * savepoint it would refuse is left out with a warning. */
int checkpoint_write(const char *path, const struct graph *g, const struct fit_params *p,
		     const struct result_model *m);

/* The same, staged as name in commit c (result_commit.h), to be
 * committed with the folder's other files. Returns 0 or -1 with a
 * message. */
int checkpoint_stage(struct result_commit *c, const char *name, const struct graph *g,
		     const struct fit_params *p, const struct result_model *m);

/* A checkpoint read back. Rules: graph->n == F.n, F.k == params.k, the
 * trace ends at or before sweep, and savepoint (when present) fits the
 * graph and parameters (fit.h, struct fit_savepoint). */
struct checkpoint {
	uint64_t fingerprint;
	struct graph *graph;         /* rebuilt from the file; owned */
	struct fit_params params;    /* hold_at_plateau 0, renumber 0: not stored */
	uint32_t sweep;
	uint32_t plateau_sweep;
	enum fit_state state;
	double seconds;
	double epsilon;
	uint32_t ntrace;
	struct trace_point *trace;   /* owned */
	struct fcsr F;               /* owned */
	struct fit_savepoint *savepoint; /* owned; NULL unless the fit was
				      * saved at the end of a sweep with one */
	uint8_t *awake;              /* owned; graph->n flags or NULL (the
				      * optional AWAK section; fit_origin) */
};

/* Read and validate a checkpoint (checksum, version, every size and
 * index) into out. Returns 0, or -1 with a message naming the file and
 * what is wrong (out is then empty). Release with checkpoint_release(). */
int checkpoint_read(const char *path, struct checkpoint *out);
/* Only the fingerprint of the graph of the checkpoint at path (its
 * header; the rest is not read nor checked). Returns 0, or -1 without a
 * message (the caller says what it means) when the file cannot be read
 * or is not a checkpoint. */
int checkpoint_read_fingerprint(const char *path, uint64_t *fingerprint);
/* Free what ck owns and empty it; NULL and an empty one are no-ops. */
void checkpoint_release(struct checkpoint *ck);

/* Fill o with a fit origin that points into ck (borrowed: ck must
 * outlive the fit_new() call that copies it). */
void checkpoint_origin(const struct checkpoint *ck, struct fit_origin *o);

#endif
