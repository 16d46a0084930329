/*
 * stability: which communities come back when the fit is made again.
 *
 * A community of the fit kept is scored by its best match (Jaccard index
 * of member sets, |a & b| / |a | b|) in each other run of the same graph,
 * averaged over those runs: 1 when every other run found exactly its
 * members, near 0 when no run found anything like it. The runs are fits
 * from other seeds (fit --repeats, stability_run.c) or result folders
 * (coterie agree). The premise is that of consensus clustering
 * (A. Lancichinetti and S. Fortunato, "Consensus clustering in complex
 * networks", Sci. Rep. 2, 336, 2012): run a stochastic method many times
 * and trust what the runs agree on. Their consensus matrix D_ij (the share
 * of runs putting i and j together) is about pairs of nodes; the score
 * here is about each community of one run, so a user can tell a solid
 * community from an accident of the seed without re-clustering anything.
 */
#ifndef COTERIE_STABILITY_H
#define COTERIE_STABILITY_H

#include <stdint.h>

#include "cover.h"
#include "fit.h"

struct graph;
struct holdout;

/*
 * For every community a of cover x, the best-match Jaccard index
 * max_b |a & b| / |a | b| over the communities b of cover y (0 when a
 * shares no node with any; NaN for an empty a). x and y must cover the
 * same node ids (x->n == y->n). best gets x->k values (borrowed). Returns
 * 0, or -1 with a message (different n, out of memory).
 */
int stability_best_jaccard(const struct cover *x, const struct cover *y, double *best);

/*
 * The Jaccard index of the communities rows[0 .. nrows) of x with every
 * community of y, into full (nrows x y->k, row-major; borrowed). Pairs
 * sharing no node are left as they were (the caller zeroes full). x and y
 * as for stability_best_jaccard(). Returns 0, or -1 with a message.
 */
int stability_jaccard_rows(const struct cover *x, const uint32_t *rows, uint32_t nrows,
			   const struct cover *y, double *full);

/*
 * The stability of every community a of kept: the mean over the covers
 * others[0 .. nothers) of a's best-match Jaccard in each, into score
 * (kept->k values; NaN for an empty community or when nothers is 0).
 * When each is not NULL it gets the best matches too (kept->k x nothers,
 * row-major). All borrowed; every cover of the same n. Returns 0 or -1.
 */
int stability_score(const struct cover *kept, const struct cover *others, uint32_t nothers,
		    double *score, double *each);

/*
 * stability_score() for the runs of a two-sided fit (directed, two-mode):
 * each run's per-side cover (model_directed_cover(): a node of a directed
 * graph counts once per side it is a member on, so a community whose
 * senders came back as receivers does not match), the run kept scored
 * against the others. g is the graph whose rows the runs' strengths are
 * (borrowed; the whole graph when links were held out, as the files are
 * written from it). score gets runs[kept]->F.k values indexed by column
 * = community id (NaN for one with no member). Returns 0 or -1.
 */
int stability_score_sided(const struct graph *g, struct snapshot *const *runs, uint32_t nruns,
			  uint32_t kept, double *score);

/* The record of fit --repeats, for communities.tsv and run.json. */
struct stability {
	uint32_t runs;      /* fits made, the kept one included (>= 2) */
	uint32_t kept;      /* which (0-based) is the result */
	uint64_t *seed;     /* runs seeds, in run order */
	double *loglik;     /* runs final log-likelihoods l(F) */
	double *code;       /* runs code lengths of their covers (agm_code_length(),
			     * what chose the kept one) */
	uint32_t k;         /* communities of the kept cover (its columns) */
	double *score;      /* k stabilities, in the kept cover's order; NaN
			     * for an empty community */
};

void stability_init(struct stability *st);
void stability_release(struct stability *st);

/* Mean of the stabilities that are numbers (NaN when none). */
double stability_mean(const struct stability *st);

/* Hooks of a run of repeats; both may be NULL. */
struct stability_hooks {
	void (*ended)(uint32_t run, uint64_t seed, double loglik, void *arg);
	int (*should_stop)(void *arg); /* nonzero: stop the fits, return -2 */
	void *arg;
};

/*
 * Fit g (borrowed) `runs` times with the parameters p (p->epsilon set;
 * p->threads the threads available), run r from seed p->seed + r, the
 * held-out pairs of held (NULL: none) left out of each: up to p->threads
 * single-threaded fits at once when runs >= p->threads, else the threads
 * shared among them. Runs first .. runs-1 are fitted (first >= 0: a caller
 * that fitted runs 0 .. first-1 itself passes their snapshots in snap).
 * snap[0 .. runs) receives each run's final snapshot (caller releases
 * with snapshot_release()). Returns 0, -1 (reported)
 * or -2 when should_stop asked; on failure the snapshots of runs >= first
 * are released and set to NULL.
 */
int stability_fit_runs(const struct graph *g, const struct fit_params *p,
		       const struct holdout *held, uint32_t first, uint32_t runs,
		       const struct stability_hooks *hooks, struct snapshot **snap);

/*
 * Check that the result folders dirs[0 .. n) are fits of one graph, by
 * the graph fingerprint of each one's run.json (else its manifest,
 * result_commit.h); a folder saying neither is let through. Returns 0, or
 * -1 with a message naming two folders of different graphs.
 */
int stability_same_graph(const char *const *dirs, uint32_t n);

struct names;

/*
 * The covers of the result folders dirs[0 .. n) of one graph
 * (stability_same_graph() first): each one's memberships.tsv, read through
 * result_file() into the name table nodes (borrowed), then every cover
 * widened to the table's count so that all share node ids. out gets n
 * covers (caller releases each with cover_release(); on failure they are
 * released here). Returns 0, or -1 with a message (another graph, not a
 * folder, no memberships.tsv, a bad line).
 */
int stability_read_folders(const char *const *dirs, uint32_t n, struct names *nodes,
			   struct cover *out);

/*
 * The stability run.json in dir records (its "stability" section, read
 * through result_file()), for a reader showing the result: *score gets
 * an array indexed by community id (*nid entries, NaN for an id not
 * scored; caller frees with free()), *sweep the sweep of the fit scored
 * (run.json's fit.sweeps), to tell whether a model shown is that one.
 * No section (a fit made once), or a run.json that cannot be read, gives
 * *score NULL and *nid 0 and returns 0 (nothing to show is not an error).
 * Returns -1 only when out of memory (reported).
 */
int stability_read(const char *dir, double **score, uint32_t *nid, uint32_t *sweep);

#endif
