/* Shared test helpers: invariant checks for the core structs and paths to
 * test data. Include after <cmocka.h>'s prerequisites. */
#ifndef COTERIE_TEST_HELPERS_H
#define COTERIE_TEST_HELPERS_H

#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <stdint.h>
#include <cmocka.h>

struct graph;
struct model;
struct cover;
struct fcsr;
struct fit_params;
struct fit_origin;
struct snapshot;

void assert_graph_sane(const struct graph *g);
void assert_model_sane(const struct model *m);
void assert_cover_sane(const struct cover *c);
void assert_fcsr_sane(const struct fcsr *f);
/* a and b hold the same rows, entry by entry (struct fentry has padding
 * bytes, so the fields are compared, not the memory). */
void assert_same_strengths(const struct fcsr *a, const struct fcsr *b);

struct objective_ops;

/* Six sweeps of m (seeded by the caller) on g with ops and threads, each
 * checked: the summed log-likelihood equals recompute(m, g) within rel
 * (sweep.c's summing) and never falls; then m is exported into out and
 * released. Returns the last log-likelihood. */
double test_sweeps_sum_exactly(struct model *m, const struct graph *g,
			       const struct objective_ops *ops, unsigned threads,
			       double (*recompute)(const struct model *, const struct graph *),
			       double rel, struct fcsr *out);

/* A graph loaded from text written to a file called name (its extension
 * picks the format under GRAPH_FORMAT_AUTO) in a fresh temporary folder,
 * with the options o (borrowed; NULL: the defaults), checked with
 * assert_graph_sane(). Caller frees with graph_free(). */
struct graph_load_opts;
struct graph *test_load_text(const char *name, const char *text, const struct graph_load_opts *o);

/* The most columns the row helpers below take. */
#define TEST_ROW_MAX_K 16u
/* Fill every row of m (k <= TEST_ROW_MAX_K) from seed: each strength
 * present with probability 1/2, uniform in [0.05, 1.05). */
void test_random_rows(struct model *m, uint64_t seed);
/* ops's row gradient against central finite differences of its row
 * objective (one-sided at a zero strength; step 1e-6, agreement within
 * 1e-4 (1 + |g|)) for rows 0, 7, 14, ... of m; with recompute (else NULL),
 * also that moving a row changes the row objective as much as
 * recompute(m, g) (within 1e-9 (1 + |l|)), the row put back after.
 * Returns the number of derivatives checked. */
int test_check_row_gradient(struct model *m, const struct graph *g,
			    const struct objective_ops *ops,
			    double (*recompute)(const struct model *, const struct graph *));

/* Path of a file under tests/data (static buffer; copy if you keep it). */
const char *test_data(const char *rel);
/* A fresh empty temporary folder (static buffer), removed by nothing:
 * tests clean up with test_rmtree(). */
const char *test_tmpdir(void);
void test_rmtree(const char *dir);
/* Write a string to a file; returns the path (static buffer). */
const char *test_write_file(const char *dir, const char *name, const char *text);

/* A planted AGM (generator of the tests, not the simulate command): 8
 * communities of 60 nodes on a ring of 400, each overlapping the next by
 * 10 nodes (80 nodes in two); p_c 0.3 inside, background 0.002. The truth
 * goes to *truth (release with cover_release()). */
/* G(n, p), drawn pair by pair from r (checked with assert_graph_sane()). */
struct rng;
struct graph *test_random_graph(struct rng *r, uint32_t n, double p);
struct graph *test_planted_ring(struct cover *truth, uint64_t seed);
/* The same sampler with its sizes given: k communities of size nodes on a
 * ring of n, community c from node c * step; truth may be NULL. */
struct graph *test_planted_ring_of(struct cover *truth, uint32_t n, uint32_t k, uint32_t size,
				   uint32_t step, double pc, double eps, uint64_t seed);

/* A cover of n nodes from k member lists laid end to end: community i
 * holds the next sizes[i] ids of members. Release with cover_release(). */
void test_make_cover(struct cover *c, uint32_t n, uint32_t k, const uint32_t *sizes,
		     const uint32_t *members);

/* Fit g with p (from origin o, or NULL) on the engine's thread to its
 * end and return the final snapshot (caller releases); the state the fit
 * ended in goes to *state when state is not NULL. */
struct snapshot *test_fit_to_end(const struct graph *g, const struct fit_params *p,
				 const struct fit_origin *o, int *state);

/* Fit g with p to its end (test_fit_to_end()), write the checkpoint
 * (checkpoint_write()) in a temporary folder, removed after, and read it
 * back into *ck: the caller releases it with checkpoint_release(). */
struct checkpoint;
void test_checkpoint_round_trip(const struct graph *g, const struct fit_params *p,
				struct checkpoint *ck);

#endif
